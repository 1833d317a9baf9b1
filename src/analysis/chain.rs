//! Built chains: turns a validated [`ChainSpec`] into tantivy analyzers (one
//! per index field) and answers which field a post goes to and which fields
//! a query searches.
//!
//! Place in the data flow: `analysis` stage, called by the indexer. A plain
//! chain has one field, `text`. A routed chain has one field per routed
//! language (`text_en`, `text_de`, …, in the route's order) and a last
//! field for everything else, `text_other`. The orchestrator detects each
//! post's and query's language once (with [`Analyzer::detector`]) and passes
//! the result in; routing never detects again.
//!
//! Chains are assembled at run time with tantivy's `filter_dynamic`, which
//! boxes the stream after each step (tantivy's documented way of building a
//! chain from a list). The shapes of the built-in chains are composed
//! statically instead (one box for the whole chain; same filters, same
//! output, checked in the tests), which saves a dynamic call per step and
//! token.

use std::fmt;
use std::sync::Arc;

use tantivy::tokenizer::{TextAnalyzer, TextAnalyzerBuilder};

use super::detect::{Detection, LangDetector};
use super::drop_tokens::DropTokens;
use super::edge_ngrams::EdgeNgrams;
use super::elision::Elision;
use super::fold::Fold;
use super::hashtag::{HashtagSplit, WordFreqs};
use super::length_limit::LengthLimit;
use super::lowercase::Lowercase;
use super::post_tokenizer::PostTokenizer;
use super::spec::{
    ChainBody, ChainSpec, FallbackPosts, Pipeline, PostRouting, QueryRouting, QuerySearch,
    RouteSpec, StepSpec, TagVocabulary, TokenizerKind,
};
use super::stem::Stem;
use super::stop_words::StopWords;
use super::unspaced::Unspaced;
use super::whitespace_tokenizer::WhitespaceTokenizer;
use super::word_lists;
use super::word_tokenizer::WordTokenizer;
use crate::error::{Error, Result};
use crate::ids::ChainName;
use crate::input::LangCode;

/// What building a chain may need from the corpus.
#[derive(Clone, Debug, Default)]
pub struct AnalysisContext {
    /// Word frequencies for the `hashtags` step's segmentation of
    /// all-lowercase tags (see [`ChainSpec::needs_word_freqs`]). When a chain
    /// needs them and this is `None`, tags split only on case, digit and
    /// underscore boundaries.
    pub word_freqs: Option<Arc<WordFreqs>>,
}

/// One index field and the analyzer of its text.
#[derive(Clone)]
pub struct FieldAnalyzer {
    /// The field's name: `text` for a plain chain, `text_<lang>` or
    /// `text_other` for a routed one.
    pub key: String,
    /// The routed language of the field (`None` for `text` and `text_other`).
    pub language: Option<LangCode>,
    /// The analyzer (clone it for each thread).
    pub analyzer: TextAnalyzer,
}

impl fmt::Debug for FieldAnalyzer {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.debug_struct("FieldAnalyzer")
            .field("key", &self.key)
            .field("language", &self.language)
            .finish_non_exhaustive()
    }
}

/// A built chain: its fields' analyzers and, for a routed chain, its
/// detector and routing rules.
#[derive(Clone, Debug)]
pub struct Analyzer {
    spec: ChainSpec,
    fields: Vec<FieldAnalyzer>,
    detector: Option<LangDetector>,
}

/// Name of a plain chain's only field.
pub const PLAIN_FIELD: &str = "text";

/// Name of a routed chain's fallback field.
pub const FALLBACK_FIELD: &str = "text_other";

impl Analyzer {
    /// Build the analyzers of `spec`.
    ///
    /// ```
    /// use postassay::analysis::{builtin_chains, AnalysisContext, Analyzer};
    /// use postassay::input::LangCode;
    ///
    /// let chains = builtin_chains(LangCode::parse("en").unwrap()).unwrap();
    /// let stemmed = chains.iter().find(|c| c.name.as_str() == "stemmed").unwrap();
    /// let analyzer = Analyzer::build(stemmed, &AnalysisContext::default()).unwrap();
    /// let mut text = analyzer.fields()[0].analyzer.clone();
    /// let mut stream = text.token_stream("Running ponies");
    /// assert_eq!(stream.next().unwrap().text, "run");
    /// assert_eq!(stream.next().unwrap().text, "poni");
    /// ```
    pub fn build(spec: &ChainSpec, ctx: &AnalysisContext) -> Result<Analyzer> {
        let (fields, detector) = match &spec.body {
            ChainBody::Plain(pipeline) => {
                let field = FieldAnalyzer {
                    key: PLAIN_FIELD.to_string(),
                    language: None,
                    analyzer: build_pipeline(pipeline, ctx)?,
                };
                (vec![field], None)
            }
            ChainBody::Routed { route } => {
                let mut fields = Vec::with_capacity(route.branches.len() + 1);
                for branch in &route.branches {
                    fields.push(FieldAnalyzer {
                        key: format!("text_{}", branch.language),
                        language: Some(branch.language),
                        analyzer: build_pipeline(&branch.pipeline, ctx)?,
                    });
                }
                fields.push(FieldAnalyzer {
                    key: FALLBACK_FIELD.to_string(),
                    language: None,
                    analyzer: build_pipeline(&route.fallback, ctx)?,
                });
                let detector = LangDetector::new(
                    route.detector,
                    Some(route.languages.clone()),
                    route.min_confidence,
                )
                .map_err(|e| Error::chain(format!("chain {:?}: {e}", spec.name.as_str())))?;
                (fields, Some(detector))
            }
        };
        Ok(Analyzer { spec: spec.clone(), fields, detector })
    }

    /// The chain's name.
    pub fn name(&self) -> &ChainName {
        &self.spec.name
    }

    /// The specification the chain was built from.
    pub fn spec(&self) -> &ChainSpec {
        &self.spec
    }

    /// The fields: one for a plain chain; one per routed language and then
    /// the fallback for a routed chain.
    pub fn fields(&self) -> &[FieldAnalyzer] {
        &self.fields
    }

    /// The language detector of a routed chain (restricted to its languages,
    /// with its confidence floor); `None` for a plain chain.
    pub fn detector(&self) -> Option<&LangDetector> {
        self.detector.as_ref()
    }

    /// Whether routing needs the detected language of posts that declare
    /// one (`posts = "detected"`); otherwise only undeclared posts need it.
    pub fn detects_declared_posts(&self) -> bool {
        self.spec.route().is_some_and(|r| r.posts == PostRouting::Detected)
    }

    /// Whether routing needs the detected language of queries that declare
    /// one (`queries = "detected"`).
    pub fn detects_declared_queries(&self) -> bool {
        self.spec.route().is_some_and(|r| r.queries == QueryRouting::Detected)
    }

    /// The field a post is routed to, from its declared language and its
    /// detection (see [`PostRouting`]). Always 0 for a plain chain. With
    /// `fallback_posts = "all"` the post is also indexed in the fallback
    /// field ([`Analyzer::fields_for_post`]); this is its own field.
    pub fn field_for_post(
        &self,
        declared: Option<LangCode>,
        detected: Option<&Detection>,
    ) -> usize {
        let Some(route) = self.spec.route() else { return 0 };
        match (route.posts, declared) {
            (PostRouting::Declared, Some(lang)) => self.field_of(route, lang),
            _ => self.field_of_detection(route, detected),
        }
    }

    /// Every field a post is indexed in: its own field
    /// ([`Analyzer::field_for_post`]) and, with `fallback_posts = "all"`,
    /// the fallback field too (once, when it is the post's own).
    pub fn fields_for_post(
        &self,
        declared: Option<LangCode>,
        detected: Option<&Detection>,
    ) -> Vec<usize> {
        let own = self.field_for_post(declared, detected);
        match self.spec.route() {
            Some(route) if route.fallback_posts == FallbackPosts::All => {
                let fallback = route.branches.len();
                if own == fallback {
                    vec![own]
                } else {
                    vec![own, fallback]
                }
            }
            _ => vec![own],
        }
    }

    /// The field of a query's language, from its declared language and its
    /// detection (see [`QueryRouting`]): its branch, else the fallback.
    /// Always 0 for a plain chain.
    pub fn field_for_query(
        &self,
        declared: Option<LangCode>,
        detected: Option<&Detection>,
    ) -> usize {
        let Some(route) = self.spec.route() else { return 0 };
        match (route.queries, declared) {
            (QueryRouting::Declared, Some(lang)) => self.field_of(route, lang),
            _ => self.field_of_detection(route, detected),
        }
    }

    /// The fields a query searches, its own field first (see
    /// [`QuerySearch`]). Always `[0]` for a plain chain.
    pub fn fields_for_query(
        &self,
        declared: Option<LangCode>,
        detected: Option<&Detection>,
    ) -> Vec<usize> {
        let own = self.field_for_query(declared, detected);
        let Some(route) = self.spec.route() else { return vec![own] };
        let fallback = route.branches.len();
        match route.search {
            QuerySearch::Own => vec![own],
            QuerySearch::OwnAndFallback if own == fallback => vec![own],
            QuerySearch::OwnAndFallback => vec![own, fallback],
            QuerySearch::All => {
                std::iter::once(own).chain((0..self.fields.len()).filter(|&f| f != own)).collect()
            }
        }
    }

    /// The field of a language: its branch, else the fallback.
    fn field_of(&self, route: &RouteSpec, lang: LangCode) -> usize {
        route.branches.iter().position(|b| b.language == lang).unwrap_or(route.branches.len())
    }

    /// The field of a detection that is confident enough, else the fallback.
    fn field_of_detection(&self, route: &RouteSpec, detected: Option<&Detection>) -> usize {
        match detected {
            Some(d) if d.confidence >= route.min_confidence => self.field_of(route, d.lang),
            _ => route.branches.len(),
        }
    }
}

/// Build the analyzer of one pipeline.
pub fn build_pipeline(pipeline: &Pipeline, ctx: &AnalysisContext) -> Result<TextAnalyzer> {
    build_prefix(pipeline, pipeline.steps.len(), ctx)
}

/// Build the analyzer of a pipeline's tokenizer and its first `steps` steps.
pub(crate) fn build_prefix(
    pipeline: &Pipeline,
    steps: usize,
    ctx: &AnalysisContext,
) -> Result<TextAnalyzer> {
    let steps = pipeline.steps.get(..steps).unwrap_or(&pipeline.steps);
    if let Some(analyzer) = build_static(pipeline.tokenizer, pipeline.unspaced, steps, ctx)? {
        return Ok(analyzer);
    }
    build_dynamic(pipeline.tokenizer, pipeline.unspaced, steps, ctx)
}

/// Build a chain step by step with `filter_dynamic` (any tokenizer and
/// steps).
fn build_dynamic(
    tokenizer: TokenizerKind,
    unspaced: Unspaced,
    steps: &[StepSpec],
    ctx: &AnalysisContext,
) -> Result<TextAnalyzer> {
    let mut builder: TextAnalyzerBuilder = match tokenizer {
        TokenizerKind::Words => TextAnalyzer::builder(WordTokenizer::new(unspaced)).dynamic(),
        TokenizerKind::Posts => TextAnalyzer::builder(PostTokenizer::new(unspaced)).dynamic(),
        TokenizerKind::Whitespace => {
            TextAnalyzer::builder(WhitespaceTokenizer::default()).dynamic()
        }
    };
    for step in steps {
        builder = add_step(builder, step, ctx)?;
    }
    Ok(builder.build())
}

/// The chains of the built-in shapes composed statically: `words` with
/// `lowercase`, `words` with `lowercase` and `stem`, `posts` with `drop`,
/// `hashtags` and `lowercase`, and `words` or `posts` alone. Same filters,
/// but one box around the whole chain instead of one per step, so the
/// stream of each step calls the next directly (tantivy's documented faster
/// form). `None` for other shapes.
fn build_static(
    tokenizer: TokenizerKind,
    unspaced: Unspaced,
    steps: &[StepSpec],
    ctx: &AnalysisContext,
) -> Result<Option<TextAnalyzer>> {
    use TokenizerKind::{Posts, Words};
    let words = || TextAnalyzer::builder(WordTokenizer::new(unspaced));
    let posts = || TextAnalyzer::builder(PostTokenizer::new(unspaced));
    Ok(Some(match (tokenizer, steps) {
        (Words, []) => words().build(),
        (Posts, []) => posts().build(),
        (Words, [lower @ StepSpec::Lowercase { .. }]) => words().filter(lowercase(lower)?).build(),
        (Words, [lower @ StepSpec::Lowercase { .. }, stem @ StepSpec::Stem { .. }]) => {
            words().filter(lowercase(lower)?).filter(stemmer(stem)?).build()
        }
        (
            Posts,
            [drop @ StepSpec::Drop { .. }, tags @ StepSpec::Hashtags { .. }, lower @ StepSpec::Lowercase { .. }],
        ) => posts()
            .filter(drop_tokens(drop)?)
            .filter(hashtags(tags, ctx)?)
            .filter(lowercase(lower)?)
            .build(),
        _ => return Ok(None),
    }))
}

/// The error of a step whose settings cannot be built.
fn unsupported(step: &StepSpec, what: &str) -> Error {
    Error::chain(format!("step {}: {what}", step.label()))
}

/// The filter of a `lowercase` step.
fn lowercase(step: &StepSpec) -> Result<Lowercase> {
    match step {
        StepSpec::Lowercase { language } => {
            Ok(Lowercase { turkic: language.is_some_and(|l| matches!(l.as_str(), "tr" | "az")) })
        }
        _ => Err(unsupported(step, "not a lowercase step")),
    }
}

/// The filter of a `stem` step.
fn stemmer(step: &StepSpec) -> Result<Stem> {
    match step {
        StepSpec::Stem { language, generation } => {
            let lang = language.ok_or_else(|| unsupported(step, "needs a language"))?;
            Stem::new(lang, *generation)
                .ok_or_else(|| unsupported(step, "no stemmer for the language"))
        }
        _ => Err(unsupported(step, "not a stem step")),
    }
}

/// The filter of a `drop` step.
fn drop_tokens(step: &StepSpec) -> Result<DropTokens> {
    match step {
        StepSpec::Drop { kinds } => Ok(DropTokens::new(kinds)),
        _ => Err(unsupported(step, "not a drop step")),
    }
}

/// The filter of a `hashtags` step.
fn hashtags(step: &StepSpec, ctx: &AnalysisContext) -> Result<HashtagSplit> {
    Ok(HashtagSplit::new(tag_table(step, ctx)?))
}

/// The word-frequency table a `hashtags` step segments with (`None`: case,
/// digit and underscore boundaries only): the context's corpus table
/// (`corpus`), the step's built-in list (`lists`; see
/// [`word_lists::builtin_list`]), or both mixed with equal weight
/// (`corpus+lists`; the list alone without a corpus table), the mixture
/// exempting the list's one-letter words from the one-letter penalty.
pub fn tag_table(step: &StepSpec, ctx: &AnalysisContext) -> Result<Option<Arc<WordFreqs>>> {
    let StepSpec::Hashtags { vocabulary, language } = step else {
        return Err(unsupported(step, "not a hashtags step"));
    };
    let list = || {
        word_lists::builtin_list(*language)
            .ok_or_else(|| unsupported(step, "no built-in word list for the language"))
    };
    let freqs = match (vocabulary, &ctx.word_freqs) {
        (TagVocabulary::Corpus, corpus) => corpus.clone(),
        (TagVocabulary::Lists, _) | (TagVocabulary::CorpusAndLists, None) => Some(list()?),
        (TagVocabulary::CorpusAndLists, Some(corpus)) => Some(Arc::new(
            WordFreqs::mix(&[corpus.as_ref(), list()?.as_ref()])
                .with_free_letters(word_lists::free_letters(*language)),
        )),
        (TagVocabulary::None, _) => None,
    };
    Ok(freqs)
}

/// Append one step. Settings a validated spec cannot hold (a missing or
/// unsupported language) are reported as chain errors, not panics, since
/// specs can also be built in code.
fn add_step(
    builder: TextAnalyzerBuilder,
    step: &StepSpec,
    ctx: &AnalysisContext,
) -> Result<TextAnalyzerBuilder> {
    Ok(match step {
        StepSpec::Lowercase { .. } => builder.filter_dynamic(lowercase(step)?),
        StepSpec::Fold { form } => builder.filter_dynamic(Fold { form: *form }),
        StepSpec::Stop { language } => {
            let lang = language.ok_or_else(|| unsupported(step, "needs a language"))?;
            builder.filter_dynamic(
                StopWords::new(lang)
                    .ok_or_else(|| unsupported(step, "no stop list for the language"))?,
            )
        }
        StepSpec::Stem { .. } => builder.filter_dynamic(stemmer(step)?),
        StepSpec::StripElided { language } => builder.filter_dynamic(
            Elision::new(*language)
                .ok_or_else(|| unsupported(step, "no list of elided words for the language"))?,
        ),
        StepSpec::KeepSizes { shortest, longest } => {
            if *shortest == 0 || shortest > longest {
                return Err(unsupported(step, "needs 1 ≤ shortest ≤ longest"));
            }
            builder.filter_dynamic(LengthLimit { min: *shortest, max: *longest })
        }
        StepSpec::Prefixes { shortest, longest } => {
            if *shortest == 0 || shortest > longest {
                return Err(unsupported(step, "needs 1 ≤ shortest ≤ longest"));
            }
            builder.filter_dynamic(EdgeNgrams { min: *shortest, max: *longest })
        }
        StepSpec::Drop { .. } => builder.filter_dynamic(drop_tokens(step)?),
        StepSpec::Hashtags { .. } => builder.filter_dynamic(hashtags(step, ctx)?),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::spec::{builtin_chains, parse_chains};
    use crate::analysis::stem::StemGeneration;
    use crate::analysis::testutil::{assert_tokens, texts};

    fn lang(code: &str) -> LangCode {
        LangCode::parse(code).expect("code")
    }

    fn builtin(name: &str) -> Analyzer {
        let chains = builtin_chains(lang("en")).expect("built-ins");
        let spec = chains.iter().find(|c| c.name.as_str() == name).expect("known chain");
        Analyzer::build(spec, &AnalysisContext::default()).expect("builds")
    }

    /// The built-in `stemmed` chain, as `run --stem-lang CODE` builds it,
    /// gives the stems of PyPI snowballstemmer 3.1.1 for every word of the
    /// committed fixture (tests/fixtures/analysis/snowballstemmer.tsv,
    /// generated by scripts/snowball_fixture.py), in all 19 languages: the
    /// whole chain (tokenizer, lower-casing, stemmer), not just the stemmer.
    #[test]
    fn builtin_stemmed_chain_matches_pypi_snowballstemmer() {
        let text =
            std::fs::read_to_string(crate::analysis::testutil::fixture_path("snowballstemmer.tsv"))
                .expect("fixture is committed");
        let mut analyzers: std::collections::BTreeMap<String, TextAnalyzer> = Default::default();
        let mut checked = 0;
        for line in text.lines().filter(|l| !l.starts_with('#')) {
            let cols: Vec<&str> = line.split('\t').collect();
            let [code, word, stem] = cols[..] else { panic!("bad fixture line {line:?}") };
            let analyzer = analyzers.entry(code.to_string()).or_insert_with(|| {
                let chains = builtin_chains(lang(code)).expect("a stemmer for the language");
                let spec = chains.iter().find(|c| c.name.as_str() == "stemmed").expect("stemmed");
                let built = Analyzer::build(spec, &AnalysisContext::default()).expect("builds");
                built.fields()[0].analyzer.clone()
            });
            assert_eq!(texts(analyzer, word), [stem], "{code} {word}");
            checked += 1;
        }
        assert_eq!((checked, analyzers.len()), (84, 19));
    }

    #[test]
    fn every_builtin_builds_with_expected_fields() {
        let keys = |a: &Analyzer| a.fields().iter().map(|f| f.key.clone()).collect::<Vec<_>>();
        for name in ["standard", "stemmed", "hashtag"] {
            let a = builtin(name);
            assert_eq!(keys(&a), ["text"]);
            assert!(a.detector().is_none());
            assert_eq!(a.name().as_str(), name);
        }
        let routed = builtin("routed");
        assert_eq!(
            keys(&routed),
            [
                "text_en",
                "text_de",
                "text_fr",
                "text_es",
                "text_it",
                "text_pt",
                "text_nl",
                "text_other"
            ]
        );
        assert_eq!(routed.fields()[1].language, Some(lang("de")));
        assert!(routed.detector().is_some());
    }

    #[test]
    fn standard_chain() {
        let mut a = builtin("standard").fields()[0].analyzer.clone();
        assert_tokens(
            &mut a,
            "Grüße aus KÖLN, @Ana!",
            &[("grüße", 0, 0, 7), ("aus", 1, 8, 11), ("köln", 2, 12, 17), ("ana", 3, 20, 23)],
        );
    }

    /// Examples from Porter, "An algorithm for suffix stripping", Program
    /// 14(3), 1980 (from memory): caresses → caress, ponies → poni,
    /// relational → relat (after step 5), hopping → hop, motoring → motor,
    /// conditional → condit, happy → happi, sky → sky. Snowball's English
    /// ("Porter2") agrees on these; it differs from the 1980 algorithm on
    /// ties → tie (1980: ti) and agreed → agre (the values here are those
    /// of the Snowball English stemmer).
    #[test]
    fn stemmed_chain_porter_examples() {
        let mut a = builtin("stemmed").fields()[0].analyzer.clone();
        assert_eq!(
            texts(
                &mut a,
                "Caresses ponies relational HOPPING motoring conditional happy sky ties agreed"
            ),
            ["caress", "poni", "relat", "hop", "motor", "condit", "happi", "sky", "tie", "agre"]
        );
    }

    #[test]
    fn hashtag_chain_splits_tags_drops_urls_keeps_mentions_and_emoji() {
        let mut a = builtin("hashtag").fields()[0].analyzer.clone();
        assert_tokens(
            &mut a,
            "Fresh fish at #HarbourMarket https://x.example @Ana 🐟",
            &[
                ("fresh", 0, 0, 5),
                ("fish", 1, 6, 10),
                ("at", 2, 11, 13),
                ("harbourmarket", 3, 14, 28),
                ("harbour", 3, 15, 22),
                ("market", 4, 22, 28),
                ("@ana", 6, 47, 51),
                ("🐟", 7, 52, 56),
            ],
        );
    }

    #[test]
    fn hashtag_chain_uses_corpus_words_from_the_context() {
        let chains = builtin_chains(lang("en")).expect("built-ins");
        let spec = chains.iter().find(|c| c.name.as_str() == "hashtag").expect("known");
        let freqs = WordFreqs::learn(["the harbour market opens", "harbour and market news"]);
        let ctx = AnalysisContext { word_freqs: Some(Arc::new(freqs)) };
        let mut a = Analyzer::build(spec, &ctx).expect("builds").fields()[0].analyzer.clone();
        assert_eq!(texts(&mut a, "#harbourmarket"), ["harbourmarket", "harbour", "market"]);
        let mut plain =
            Analyzer::build(spec, &AnalysisContext::default()).expect("builds").fields()[0]
                .analyzer
                .clone();
        assert_eq!(texts(&mut plain, "#harbourmarket"), ["harbourmarket"]);
    }

    #[test]
    fn hashtags_step_uses_the_branch_list_and_the_merged_list_elsewhere() {
        let text = "[[chain]]\nname = \"tags\"\n[chain.route]\nlanguages = [\"en\", \"de\", \"ru\"]\n\
                    tokenizer = \"posts\"\nsteps = [{ step = \"hashtags\", vocabulary = \"lists\" }, \
                    { step = \"lowercase\" }]\nfallback = { tokenizer = \"posts\", steps = \
                    [{ step = \"hashtags\", vocabulary = \"lists\" }, { step = \"lowercase\" }] }\n";
        let spec = parse_chains(text, "tags.toml", &[]).expect("valid").remove(0);
        let built = Analyzer::build(&spec, &AnalysisContext::default()).expect("builds");
        let split = |field: usize, tag: &str| {
            let mut a = built.fields()[field].analyzer.clone();
            texts(&mut a, tag)
        };
        assert_eq!(split(0, "#harbourmarket"), ["harbourmarket", "harbour", "market"]);
        assert_eq!(
            split(1, "#wetterberichtberlin"),
            ["wetterberichtberlin", "wetterbericht", "berlin"]
        );
        // ru has no list and the fallback no language: the merged list.
        assert_eq!(split(3, "#rentréescolaire"), ["rentréescolaire", "rentrée", "scolaire"]);
        assert_eq!(split(2, "#gutenmorgen"), ["gutenmorgen", "guten", "morgen"]);
    }

    #[test]
    fn corpus_and_lists_mix_the_corpus_table_with_the_list() {
        let step = |vocabulary, language: &str| StepSpec::Hashtags {
            vocabulary,
            language: LangCode::parse(language),
        };
        let corpus = Arc::new(WordFreqs::learn(["zorble harbour zorble"]));
        let ctx = AnalysisContext { word_freqs: Some(Arc::clone(&corpus)) };
        let table = |s: &StepSpec, ctx: &AnalysisContext| {
            tag_table(s, ctx).expect("builds").expect("a table")
        };
        let mixed = table(&step(TagVocabulary::CorpusAndLists, "es"), &ctx);
        let es = word_lists::builtin_list(LangCode::parse("es")).expect("es");
        assert!(mixed.count("zorble") > 0 && mixed.count("amistad") > 0);
        // The mixture keeps the Spanish list's free one-letter words (`y`).
        let parts = crate::analysis::hashtag::split_tag("amoryamistad", Some(&mixed));
        assert_eq!(parts, ["amor", "y", "amistad"]);
        assert_eq!(
            mixed.len(),
            es.len() + usize::from(es.count("zorble") == 0) + usize::from(es.count("harbour") == 0)
        );
        // Without corpus frequencies, the list alone; `lists` ignores them.
        let alone = table(&step(TagVocabulary::CorpusAndLists, "es"), &AnalysisContext::default());
        assert!(Arc::ptr_eq(&alone, &es));
        assert!(Arc::ptr_eq(&table(&step(TagVocabulary::Lists, "es"), &ctx), &es));
        assert!(Arc::ptr_eq(&table(&step(TagVocabulary::Corpus, "es"), &ctx), &corpus));
        assert!(tag_table(&step(TagVocabulary::None, ""), &ctx).expect("builds").is_none());
        // A spec built in code with a language that has no list is an error.
        let e = tag_table(&step(TagVocabulary::Lists, "ru"), &ctx).expect_err("no ru list");
        assert!(e.to_string().contains("no built-in word list for the language"), "{e}");
    }

    #[test]
    fn routing_of_posts() {
        let a = builtin("routed");
        let other = a.fields().len() - 1;
        let det = |code: &str, confidence: f64| Detection { lang: lang(code), confidence };
        assert_eq!(a.field_for_post(Some(lang("de")), None), 1);
        // A declared language wins over detection; an unrouted one goes to the fallback.
        assert_eq!(a.field_for_post(Some(lang("de")), Some(&det("fr", 0.9))), 1);
        assert_eq!(a.field_for_post(Some(lang("sv")), Some(&det("fr", 0.9))), other);
        assert_eq!(a.field_for_post(None, Some(&det("fr", 0.9))), 2);
        assert_eq!(a.field_for_post(None, Some(&det("fr", 0.4))), other);
        assert_eq!(a.field_for_post(None, Some(&det("sv", 0.9))), other);
        assert_eq!(a.field_for_post(None, None), other);
        assert_eq!(builtin("standard").field_for_post(Some(lang("de")), None), 0);
    }

    #[test]
    fn routing_of_queries() {
        let a = builtin("routed");
        let det = Detection { lang: lang("nl"), confidence: 0.8 };
        // The built-in searches the query's own field and the fallback (7).
        assert_eq!(a.fields_for_query(Some(lang("es")), Some(&det)), [3, 7]);
        assert_eq!(a.fields_for_query(None, Some(&det)), [6, 7]);
        assert_eq!(a.fields_for_query(None, None), [7]);
        assert_eq!(a.field_for_query(Some(lang("es")), Some(&det)), 3);
        assert_eq!(builtin("stemmed").fields_for_query(None, None), [0]);
        let text = "[[chain]]\nname = \"e\"\n[chain.route]\nlanguages = [\"en\", \"de\"]\n\
                    search = \"all\"\nposts = \"detected\"\nfallback_posts = \"all\"\n";
        let spec = &parse_chains(text, "e.toml", &[]).expect("valid")[0];
        let every = Analyzer::build(spec, &AnalysisContext::default()).expect("builds");
        // The query's own field first, then the others in field order.
        assert_eq!(every.fields_for_query(Some(lang("de")), None), [1, 0, 2]);
        assert_eq!(every.fields_for_query(Some(lang("sv")), None), [2, 0, 1]);
        // With fallback_posts = "all" a post is also in the fallback, once.
        assert_eq!(
            every.fields_for_post(None, Some(&Detection { lang: lang("de"), confidence: 0.9 })),
            [1, 2]
        );
        assert_eq!(every.fields_for_post(None, None), [2]);
        assert_eq!(a.fields_for_post(Some(lang("de")), None), [1]);
        // posts = "detected" ignores the declared language, so such a chain
        // needs the detections of declared posts too; the built-in does not.
        assert_eq!(every.field_for_post(Some(lang("en")), None), 2);
        assert!(every.detects_declared_posts() && !every.detects_declared_queries());
        assert!(!a.detects_declared_posts() && !a.detects_declared_queries());
    }

    #[test]
    fn routed_detector_detects_once_for_the_orchestrator() {
        let a = builtin("routed");
        let detector = a.detector().expect("routed");
        let text = "Der schnelle braune Fuchs springt über den faulen Hund und läuft weiter";
        let detection = detector.detect(text).expect("confident German");
        assert_eq!(detection.lang, lang("de"));
        let field = a.field_for_post(None, Some(&detection));
        assert_eq!(a.fields()[field].key, "text_de");
        let mut analyzer = a.fields()[field].analyzer.clone();
        assert_eq!(texts(&mut analyzer, "Häuser springt")[..], ["haus", "springt"]);
    }

    /// A post-aware chain with dictionary words: tags, URLs and Latin words
    /// as before, the Japanese between them as words (UD Japanese-GSD
    /// test-s2 begins 幸福 の 科学, its gold words), offsets into the text.
    #[test]
    fn posts_with_unspaced_words() {
        let text = "[[chain]]\nname = \"ja\"\ntokenizer = \"posts\"\nunspaced = \"dictionary\"\n\
                    steps = [{ step = \"lowercase\" }]\n";
        let spec = &parse_chains(text, "ja.toml", &[]).expect("valid")[0];
        let mut a = Analyzer::build(spec, &AnalysisContext::default()).expect("builds").fields()[0]
            .analyzer
            .clone();
        assert_tokens(
            &mut a,
            "#幸福 幸福の科学 @Ana",
            &[
                ("#幸福", 0, 0, 7),
                ("幸福", 1, 8, 14),
                ("の", 2, 14, 17),
                ("科学", 3, 17, 23),
                ("@ana", 4, 24, 28),
            ],
        );
    }

    #[test]
    fn specs_built_in_code_fail_cleanly() {
        let spec = ChainSpec {
            name: ChainName::from("x"),
            description: None,
            body: ChainBody::Plain(Pipeline {
                tokenizer: TokenizerKind::Words,
                unspaced: Unspaced::Characters,
                steps: vec![StepSpec::Stem { language: None, generation: StemGeneration::Current }],
            }),
        };
        let e = Analyzer::build(&spec, &AnalysisContext::default()).expect_err("no language");
        assert_eq!(e.to_string(), "step stem(current): needs a language");
    }

    /// The statically composed built-in shapes give exactly the tokens of
    /// the same steps composed with `filter_dynamic`, on every pipeline of
    /// the built-in chains (routed branches included) and on mixed posts.
    #[test]
    fn static_shapes_equal_dynamic_chains() {
        let freqs = WordFreqs::learn(["the harbour market opens", "fish market news today"]);
        let ctx = AnalysisContext { word_freqs: Some(Arc::new(freqs)) };
        let texts = [
            "Fresh fish at #HarbourMarket https://x.example/a?b=1 @Ana 🐟 #harbourmarket",
            "Grüße aus KÖLN, İSTANBUL und ΟΔΟΣ! Running ponies, 3.14 can't #2024 #tag_2025",
            "東京駅 👨\u{200d}👩\u{200d}👧 www.example.org/x_(y) @ana@social.example café\u{301}",
            "#東京 東京駅で会おう https://x.example ภาษาไทยง่ายนิดเดียว 한국어 KÖLN",
            "",
        ];
        let mut pipelines = Vec::new();
        for spec in builtin_chains(lang("de")).expect("built-ins") {
            match &spec.body {
                ChainBody::Plain(p) => pipelines.push(p.clone()),
                ChainBody::Routed { route } => {
                    pipelines.extend(route.branches.iter().map(|b| b.pipeline.clone()));
                    pipelines.push(route.fallback.clone());
                }
            }
        }
        let turkish = Pipeline {
            tokenizer: TokenizerKind::Words,
            unspaced: Unspaced::Characters,
            steps: vec![
                StepSpec::Lowercase { language: Some(lang("tr")) },
                StepSpec::Stem { language: Some(lang("tr")), generation: StemGeneration::V2018 },
            ],
        };
        pipelines.push(turkish);
        pipelines.push(Pipeline {
            tokenizer: TokenizerKind::Posts,
            unspaced: Unspaced::Characters,
            steps: vec![],
        });
        // The same shapes with scripts without spaces cut into words or pairs.
        let cut: Vec<Pipeline> = pipelines
            .iter()
            .zip(Unspaced::ALL.into_iter().skip(1).cycle())
            .map(|(p, unspaced)| Pipeline { unspaced, ..p.clone() })
            .collect();
        pipelines.extend(cut);
        let mut static_shapes = 0;
        for pipeline in &pipelines {
            static_shapes += usize::from(
                build_static(pipeline.tokenizer, pipeline.unspaced, &pipeline.steps, &ctx)
                    .expect("builds")
                    .is_some(),
            );
            let mut fast = build_pipeline(pipeline, &ctx).expect("builds");
            let mut slow =
                build_dynamic(pipeline.tokenizer, pipeline.unspaced, &pipeline.steps, &ctx)
                    .expect("builds");
            for text in texts {
                let tokens = |a: &mut TextAnalyzer| {
                    crate::analysis::testutil::collect_tokens(a, text)
                        .into_iter()
                        .map(|t| (t.text, t.position, t.offset_from, t.offset_to))
                        .collect::<Vec<_>>()
                };
                assert_eq!(tokens(&mut fast), tokens(&mut slow), "{pipeline:?} on {text:?}");
            }
        }
        // Every pipeline above has a static shape (standard, stemmed,
        // hashtag, the routed branches and fallback, and the two extras).
        assert_eq!(static_shapes, pipelines.len());
    }
}
