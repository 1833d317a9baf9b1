//! Chain specifications: analysis chains as data, read from TOML chain files
//! (and from the built-in `chains/builtin.toml`), validated with errors that
//! name the file, the line and the accepted values.
//!
//! Place in the data flow: `analysis` stage. The CLI reads chain files into
//! [`ChainSpec`]s; [`Analyzer::build`](super::Analyzer::build) turns one into
//! tantivy analyzers; `report.json` records the specs (they serialize).
//!
//! # File layout
//!
//! ```toml
//! [[chain]]
//! name = "stemmed_de"                 # letters, digits, '_', '-', '.'
//! description = "German, stemmed"     # optional
//! tokenizer = "words"                 # words (default) | posts | whitespace
//! unspaced = "characters"             # characters (default) | dictionary | model | bigrams
//! steps = [
//!   { step = "lowercase" },
//!   { step = "stem", language = "de", generation = "current" },
//! ]
//!
//! [[chain]]
//! name = "by_language"
//! [chain.route]                       # a routed chain: one field per language
//! languages = ["en", "de"]
//! min_confidence = 0.5                # default 0.5
//! detector = "lingua"                 # lingua (default) | whatlang
//! posts = "declared"                  # declared (default) | detected
//! queries = "declared"                # declared (default) | detected
//! search = "own_and_fallback"         # own | own_and_fallback (default) | all
//! fusion = "normalised_score"         # normalised_score (default) | reciprocal_rank
//! fallback_posts = "unrouted"         # unrouted (default) | all
//! tokenizer = "words"                 # each language's chain (default words)
//! unspaced = "characters"             # branches' and fallback's (see below)
//! steps = [{ step = "lowercase" }, { step = "stem" }]   # (the default)
//! fallback = "standard"               # a plain chain's name, or an inline
//!                                     # { tokenizer = …, steps = […] }
//! [chain.route.language.de]           # optional per-language override
//! steps = [{ step = "lowercase" }, { step = "stem" }, { step = "fold" }]
//! ```
//!
//! `unspaced` says how the `words` and `posts` tokenizers cut Thai, Lao,
//! Khmer, Burmese, Chinese and Japanese, which are written without spaces
//! between words (see `unspaced.rs`): `characters` keeps UAX #29 (single
//! characters; the default), `dictionary` and `model` segment their runs
//! into words with ICU4X (dictionaries; or LSTM models for the Southeast
//! Asian scripts), `bigrams` indexes overlapping character pairs of Han,
//! kana and Hangul. The `whitespace` tokenizer refuses it. In a route, the
//! route's `unspaced` applies to every branch (a
//! `[chain.route.language.xx]` may set its own) and to the fallback unless
//! the fallback names a plain chain (which keeps its own) or is an inline
//! table that sets its own.
//!
//! In a route's `steps`, `stem` and `stop` without a `language` take each
//! branch's language, and so does `lowercase` (which only changes behaviour
//! for `tr` and `az`). So does `hashtags` with `vocabulary = "lists"` or
//! `"corpus+lists"` when the branch's language has a built-in list; other
//! branches, the fallback and plain chains use the merged list of all
//! built-in languages.
//!
//! # Steps and their options (defaults in brackets)
//!
//! | step | options |
//! |---|---|
//! | `lowercase` | `language` [none; `tr`/`az` use the Turkic i rules] |
//! | `fold` | `form` = `"canonical"` \| `"compatibility"` [canonical; compatibility also folds fullwidth letters, ligatures and case] |
//! | `stop` | `language` (required outside routes) |
//! | `stem` | `language` (required outside routes), `generation` = `"2018"` \| `"current"` [current] |
//! | `strip_elided` | `language` = `fr` \| `it` \| `ca` [all three] |
//! | `keep_sizes` | `shortest` [1], `longest` [40] (characters) |
//! | `prefixes` | `shortest` [2], `longest` [15] (characters) |
//! | `drop` | `kinds` = list of `mentions` `urls` `emoji` `numbers` `hashtags` |
//! | `hashtags` | `vocabulary` = `"corpus"` \| `"lists"` \| `"corpus+lists"` \| `"none"` [corpus]; `language` (a built-in list: de en es fr it nl pt; none = all merged) |
//!
//! `strip_elided` removes an elided article or pronoun glued to a word by an
//! apostrophe (`l'`, `d'`, `qu'` …); `keep_sizes` keeps the tokens whose
//! length in characters lies in `shortest..=longest`; `prefixes` replaces
//! each token with its leading prefixes, for search as you type.
//!
//! The names of the previous release (`elision`, `length`, `edge_ngrams`
//! with `min` and `max`) are still read, for this release only: each use
//! gives a deprecation note naming the new name ([`ChainFile::deprecations`]).
//!
//! # Orders that are rejected, and why
//!
//! - `stem` and `stop` need a `lowercase` step before them: Snowball's rules
//!   and the stop lists are lower case, so capitalised words would slip by.
//! - `stop` and `strip_elided` must come before `stem`: stop lists and elided
//!   prefixes are surface forms, which stemming changes.
//! - `fold` before `stem` is rejected except for English, German, Dutch and
//!   Russian: the other Snowball algorithms have accented letters in their
//!   suffix rules (`-ción`, `-ità`, `-ément` …), which folding would remove
//!   first. Measured on Snowball's own vocabularies, folding first changes
//!   the stem of 1.4% (Italian) to 19% (Turkish) of words, but at most 0.15%
//!   for the four allowed languages (German and Dutch stemmers drop their
//!   umlauts and accents themselves). `fold` before `stop` is rejected except
//!   for English, because the other stop lists hold accented words.
//! - `hashtags` must come before `lowercase` (it splits `#CamelCase` at case
//!   changes) and needs the `posts` or `whitespace` tokenizer (`words` drops
//!   the `#`). `drop` of mentions, URLs, emoji or hashtags also needs one of
//!   those tokenizers, and dropping hashtags after `hashtags` finds none.
//! - Nothing but `keep_sizes`, `lowercase`, `fold` and `drop` may follow
//!   `prefixes`: stemming, stop-listing or splitting prefixes is nonsense.
//! - `stem` and `hashtags` may appear once per chain.

use std::collections::{BTreeMap, BTreeSet};
use std::ops::Range;
use std::path::Path;

use serde::{Deserialize, Serialize};
use toml::Spanned;

use super::detect::DetectorKind;
use super::drop_tokens::DropKind;
use super::elision::ELISION_LANGUAGES;
use super::fold::FoldForm;
use super::stem::{stem_languages, StemGeneration};
use super::stop_words::stop_languages;
use super::unspaced::Unspaced;
use super::word_lists;
use crate::error::{Error, Result, MAX_LISTED_PROBLEMS};
use crate::ids::ChainName;
use crate::input::LangCode;

/// The built-in chains' file, embedded.
pub const BUILTIN_CHAINS_TOML: &str = include_str!("../../chains/builtin.toml");

/// The name under which the built-in chain file is reported in messages.
const BUILTIN_ORIGIN: &str = "chains/builtin.toml";

/// Default detection confidence floor of a route.
pub const DEFAULT_MIN_CONFIDENCE: f64 = 0.5;

/// Which tokenizer starts a chain.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum TokenizerKind {
    /// UAX #29 words with a letter or digit ([`WordTokenizer`](super::WordTokenizer)).
    Words,
    /// Post-aware: tags, mentions, URLs and emoji whole, the rest as words
    /// ([`PostTokenizer`](super::PostTokenizer)).
    Posts,
    /// Split on Unicode white space only ([`WhitespaceTokenizer`](super::WhitespaceTokenizer)).
    Whitespace,
}

impl TokenizerKind {
    /// The name used in chain files.
    pub fn as_str(self) -> &'static str {
        match self {
            TokenizerKind::Words => "words",
            TokenizerKind::Posts => "posts",
            TokenizerKind::Whitespace => "whitespace",
        }
    }
}

/// Where the `hashtags` step gets word frequencies for all-lowercase tags.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum TagVocabulary {
    /// Words learned from the corpus (given in the
    /// [`AnalysisContext`](super::AnalysisContext)); without them, splitting
    /// falls back to case, digit and underscore boundaries.
    #[default]
    Corpus,
    /// The built-in word-frequency list of the step's language (a route
    /// branch's language), or the merged list of all built-in languages
    /// when no language is known ([`word_lists`](super::word_lists)).
    Lists,
    /// The corpus's words and the built-in list mixed with equal weight
    /// ([`WordFreqs::mix`](super::hashtag::WordFreqs::mix)); the list alone
    /// when no corpus frequencies are given.
    #[serde(rename = "corpus+lists")]
    CorpusAndLists,
    /// Split on case, digit and underscore boundaries only.
    None,
}

impl TagVocabulary {
    /// The name used in chain files.
    pub fn as_str(self) -> &'static str {
        match self {
            TagVocabulary::Corpus => "corpus",
            TagVocabulary::Lists => "lists",
            TagVocabulary::CorpusAndLists => "corpus+lists",
            TagVocabulary::None => "none",
        }
    }

    /// True when the corpus's word frequencies are used.
    pub fn uses_corpus(self) -> bool {
        matches!(self, TagVocabulary::Corpus | TagVocabulary::CorpusAndLists)
    }

    /// True when a built-in list is used.
    pub fn uses_lists(self) -> bool {
        matches!(self, TagVocabulary::Lists | TagVocabulary::CorpusAndLists)
    }
}

fn default_generation() -> StemGeneration {
    StemGeneration::Current
}
fn default_size_shortest() -> usize {
    1
}
fn default_size_longest() -> usize {
    40
}
fn default_prefix_shortest() -> usize {
    2
}
fn default_prefix_longest() -> usize {
    15
}

/// One step of a chain (a token filter with its settings).
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(tag = "step", rename_all = "snake_case", deny_unknown_fields)]
pub enum StepSpec {
    /// Full Unicode lower-casing ([`Lowercase`](super::Lowercase)).
    Lowercase {
        /// `tr`/`az` select the Turkic dotted/dotless i rules. Without a
        /// language, a route branch's language or the chain's Turkish or
        /// Azeri `stem`/`stop` language is filled in.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        language: Option<LangCode>,
    },
    /// Diacritic removal ([`Fold`](super::Fold)).
    Fold {
        /// Canonical (accents only) or compatibility (also fullwidth
        /// letters, ligatures and case).
        #[serde(default, skip_serializing_if = "FoldForm::is_canonical")]
        form: FoldForm,
    },
    /// Stop-word removal ([`StopWords`](super::StopWords)).
    Stop {
        /// The list's language (taken from the branch in a route).
        #[serde(default)]
        language: Option<LangCode>,
    },
    /// Snowball stemming ([`Stem`](super::Stem)).
    Stem {
        /// The algorithm's language (taken from the branch in a route).
        #[serde(default)]
        language: Option<LangCode>,
        /// Which generation of the algorithms.
        #[serde(default = "default_generation")]
        generation: StemGeneration,
    },
    /// `strip_elided`: removal of elided articles and pronouns (`l'`, `d'`,
    /// `qu'` …) glued to a word ([`Elision`](super::Elision)).
    StripElided {
        /// `fr`, `it` or `ca`; all three when absent.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        language: Option<LangCode>,
    },
    /// `keep_sizes`: keeps the tokens whose length in characters is in
    /// `shortest..=longest` ([`LengthLimit`](super::LengthLimit)).
    KeepSizes {
        /// Fewest characters kept.
        #[serde(default = "default_size_shortest")]
        shortest: usize,
        /// Most characters kept.
        #[serde(default = "default_size_longest")]
        longest: usize,
    },
    /// `prefixes`: each token's leading prefixes of `shortest..=longest`
    /// characters, for search as you type ([`EdgeNgrams`](super::EdgeNgrams)).
    Prefixes {
        /// Shortest prefix.
        #[serde(default = "default_prefix_shortest")]
        shortest: usize,
        /// Longest prefix.
        #[serde(default = "default_prefix_longest")]
        longest: usize,
    },
    /// Removal of tokens by shape ([`DropTokens`](super::DropTokens)).
    Drop {
        /// The shapes to remove.
        kinds: Vec<DropKind>,
    },
    /// Hashtag splitting ([`HashtagSplit`](super::hashtag::HashtagSplit)).
    Hashtags {
        /// Where word frequencies come from.
        #[serde(default)]
        vocabulary: TagVocabulary,
        /// The built-in list's language (`lists`, `corpus+lists`): taken
        /// from the branch in a route when the branch's language has a
        /// list; without one, the merged list of all languages.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        language: Option<LangCode>,
    },
}

impl StepSpec {
    /// The step's name in chain files.
    pub fn name(&self) -> &'static str {
        match self {
            StepSpec::Lowercase { .. } => "lowercase",
            StepSpec::Fold { .. } => "fold",
            StepSpec::Stop { .. } => "stop",
            StepSpec::Stem { .. } => "stem",
            StepSpec::StripElided { .. } => "strip_elided",
            StepSpec::KeepSizes { .. } => "keep_sizes",
            StepSpec::Prefixes { .. } => "prefixes",
            StepSpec::Drop { .. } => "drop",
            StepSpec::Hashtags { .. } => "hashtags",
        }
    }

    /// A short human-readable label with the settings (`stem(de, current)`).
    pub fn label(&self) -> String {
        match self {
            StepSpec::Lowercase { language: Some(l) } => format!("lowercase({l})"),
            StepSpec::Stop { language: Some(l) } => format!("stop({l})"),
            StepSpec::Stem { language: Some(l), generation } => {
                format!("stem({l}, {})", generation.as_str())
            }
            StepSpec::Stem { language: None, generation } => {
                format!("stem({})", generation.as_str())
            }
            StepSpec::StripElided { language: Some(l) } => format!("strip_elided({l})"),
            StepSpec::KeepSizes { shortest, longest } => {
                format!("keep_sizes({shortest}..={longest})")
            }
            StepSpec::Prefixes { shortest, longest } => {
                format!("prefixes({shortest}..={longest})")
            }
            StepSpec::Fold { form: FoldForm::Compatibility } => "fold(compatibility)".into(),
            StepSpec::Drop { kinds } => {
                let kinds: Vec<&str> = kinds.iter().map(|k| k.as_str()).collect();
                format!("drop({})", kinds.join(", "))
            }
            StepSpec::Hashtags { vocabulary: TagVocabulary::None, .. } => "hashtags(none)".into(),
            StepSpec::Hashtags { vocabulary, language } if vocabulary.uses_lists() => format!(
                "hashtags({}:{})",
                vocabulary.as_str(),
                language.as_ref().map_or("all", LangCode::as_str)
            ),
            other => other.name().to_string(),
        }
    }
}

/// A tokenizer and its steps: one plain analysis chain.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Pipeline {
    /// The tokenizer.
    pub tokenizer: TokenizerKind,
    /// How the tokenizer cuts scripts written without spaces (not written
    /// to reports when it is the default, so their chains read as before).
    #[serde(skip_serializing_if = "Unspaced::is_default")]
    pub unspaced: Unspaced,
    /// The steps, applied in order.
    pub steps: Vec<StepSpec>,
}

impl Pipeline {
    /// True when a `hashtags` step wants corpus word frequencies.
    pub fn needs_word_freqs(&self) -> bool {
        self.steps
            .iter()
            .any(|s| matches!(s, StepSpec::Hashtags { vocabulary, .. } if vocabulary.uses_corpus()))
    }

    /// The tokenizer's label in traces: its name, with the `unspaced`
    /// setting when it is not the default (`words(unspaced = dictionary)`).
    pub fn tokenizer_label(&self) -> String {
        match self.unspaced {
            Unspaced::Characters => self.tokenizer.as_str().to_string(),
            other => format!("{}(unspaced = {})", self.tokenizer.as_str(), other.as_str()),
        }
    }

    /// `words + lowercase`.
    fn standard() -> Pipeline {
        Pipeline {
            tokenizer: TokenizerKind::Words,
            unspaced: Unspaced::Characters,
            steps: vec![StepSpec::Lowercase { language: None }],
        }
    }
}

/// How a routed chain picks the field of a post.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PostRouting {
    /// The post's declared `lang` when it has one (a routed language or else
    /// the fallback); detection only for posts without one.
    #[default]
    Declared,
    /// Detection only; declared languages are ignored.
    Detected,
}

impl PostRouting {
    /// The name used in chain files.
    pub fn as_str(self) -> &'static str {
        match self {
            PostRouting::Declared => "declared",
            PostRouting::Detected => "detected",
        }
    }
}

/// How a routed chain finds a query's language (its field).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum QueryRouting {
    /// The query's declared `lang`, else its detected language, else the
    /// fallback field.
    #[default]
    Declared,
    /// The detected language, else the fallback field.
    Detected,
}

impl QueryRouting {
    /// The name used in chain files.
    pub fn as_str(self) -> &'static str {
        match self {
            QueryRouting::Declared => "declared",
            QueryRouting::Detected => "detected",
        }
    }
}

/// Which fields a routed chain's query searches, once its language is known.
/// Where more than one field is searched, each field is searched on its own
/// (with that field's BM25 statistics) and the rankings are fused by
/// reciprocal rank fusion: raw BM25 scores of different fields are not
/// comparable.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum QuerySearch {
    /// The query's own field only (its language's, else the fallback): the
    /// same ranking as an index holding only that language's posts.
    Own,
    /// The query's own field and the fallback field, fused: posts whose
    /// language was not detected are still found.
    #[default]
    OwnAndFallback,
    /// Every field (each language and the fallback), fused.
    All,
}

impl QuerySearch {
    /// The name used in chain files.
    pub fn as_str(self) -> &'static str {
        match self {
            QuerySearch::Own => "own",
            QuerySearch::OwnAndFallback => "own_and_fallback",
            QuerySearch::All => "all",
        }
    }
}

/// How a routed chain combines the rankings of several searched fields.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Fusion {
    /// Reciprocal rank fusion (Cormack, Clarke & Büttcher, SIGIR 2009): a
    /// post scores the sum of `1 / (60 + rank)` over the fields' rankings.
    ReciprocalRank,
    /// Each field's BM25 score divided by the most that field could give
    /// the query (the sum of its terms' `rarity × (k1 + 1)`, a post holding
    /// every term infinitely often), so that every field's scores lie in
    /// [0, 1]; a post's fused score is the sum over fields (CombSUM, Fox &
    /// Shaw, TREC-2 1994).
    #[default]
    NormalisedScore,
}

impl Fusion {
    /// The name used in chain files.
    pub fn as_str(self) -> &'static str {
        match self {
            Fusion::ReciprocalRank => "reciprocal_rank",
            Fusion::NormalisedScore => "normalised_score",
        }
    }
}

/// Which posts a routed chain's fallback field holds.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum FallbackPosts {
    /// Only the posts routed to no language.
    #[default]
    Unrouted,
    /// Every post, as well as its language's field: a misrouted post is
    /// still found by a query that searches the fallback.
    All,
}

impl FallbackPosts {
    /// The name used in chain files.
    pub fn as_str(self) -> &'static str {
        match self {
            FallbackPosts::Unrouted => "unrouted",
            FallbackPosts::All => "all",
        }
    }
}

/// One language's chain inside a route.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Branch {
    /// The language.
    pub language: LangCode,
    /// Its chain.
    #[serde(flatten)]
    pub pipeline: Pipeline,
}

/// The routing of a language-routed chain.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct RouteSpec {
    /// The routed languages, in file order (a text detected in another
    /// language goes to the fallback: see [`detect`](super::detect)).
    pub languages: Vec<LangCode>,
    /// Detections below this confidence go to the fallback.
    pub min_confidence: f64,
    /// The language detector (what its confidence means differs: see
    /// [`detect`](super::detect)).
    pub detector: DetectorKind,
    /// How posts are routed.
    pub posts: PostRouting,
    /// How a query's language is found.
    pub queries: QueryRouting,
    /// Which fields a query searches.
    pub search: QuerySearch,
    /// How the rankings of several searched fields are combined.
    pub fusion: Fusion,
    /// Which posts the fallback field holds.
    pub fallback_posts: FallbackPosts,
    /// One chain per language, in the order of `languages`.
    pub branches: Vec<Branch>,
    /// The chain of everything else.
    pub fallback: Pipeline,
}

/// What a chain is: one pipeline, or a route over several.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(untagged)]
pub enum ChainBody {
    /// One field analysed by one pipeline.
    Plain(Pipeline),
    /// One field per language plus a fallback.
    Routed {
        /// The route.
        route: RouteSpec,
    },
}

/// A named, validated analysis chain.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ChainSpec {
    /// The chain's name (unique in a file).
    pub name: ChainName,
    /// Free text from the chain file.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub description: Option<String>,
    /// The chain itself.
    #[serde(flatten)]
    pub body: ChainBody,
}

impl ChainSpec {
    /// True when a `hashtags` step of the chain wants corpus word frequencies
    /// in the [`AnalysisContext`](super::AnalysisContext).
    pub fn needs_word_freqs(&self) -> bool {
        self.pipelines().any(Pipeline::needs_word_freqs)
    }

    /// The route of a routed chain.
    pub fn route(&self) -> Option<&RouteSpec> {
        match &self.body {
            ChainBody::Routed { route } => Some(route),
            ChainBody::Plain(_) => None,
        }
    }

    /// Every pipeline of the chain (one, or each branch and the fallback).
    pub fn pipelines(&self) -> impl Iterator<Item = &Pipeline> {
        let (plain, route) = match &self.body {
            ChainBody::Plain(p) => (Some(p), None),
            ChainBody::Routed { route } => (None, Some(route)),
        };
        plain.into_iter().chain(
            route
                .into_iter()
                .flat_map(|r| r.branches.iter().map(|b| &b.pipeline).chain([&r.fallback])),
        )
    }
}

/// A validated chain file: its chains, and a deprecation note for every
/// step or option written with a name of the previous release.
#[derive(Clone, Debug, PartialEq)]
pub struct ChainFile {
    /// The chains, in file order.
    pub chains: Vec<ChainSpec>,
    /// One `file:line: chain "x": …` note per use of an old name, saying
    /// the new one (the CLI prints them as warnings; they never fail a run).
    pub deprecations: Vec<String>,
}

/// Read and validate a chain file. Plain chains named as a route's
/// `fallback` are looked up in the file first, then among the built-ins. A
/// chain named like a built-in (`standard`, …) is refused: the name would
/// mean two different chains.
pub fn read_chain_file(path: &Path) -> Result<ChainFile> {
    let bytes = std::fs::read(path).map_err(|e| Error::io(path, e))?;
    let text = String::from_utf8(bytes)
        .map_err(|e| Error::chain(format!("{}: not UTF-8 ({})", path.display(), e.utf8_error())))?;
    let text = text.strip_prefix('\u{feff}').unwrap_or(&text);
    let builtins = builtin_chains(LangCode::parse("en").expect("en is ISO 639-1"))?;
    parse_chain_file(text, &path.display().to_string(), &builtins)
}

/// The built-in chains (`standard`, `stemmed`, `hashtag`, `routed`) from the
/// embedded `chains/builtin.toml`, with `stemmed` stemming `stem_lang`.
pub fn builtin_chains(stem_lang: LangCode) -> Result<Vec<ChainSpec>> {
    let mut chains = parse_chains(BUILTIN_CHAINS_TOML, BUILTIN_ORIGIN, &[])?;
    for chain in &mut chains {
        if chain.name.as_str() != "stemmed" {
            continue;
        }
        if let ChainBody::Plain(pipeline) = &mut chain.body {
            for step in &mut pipeline.steps {
                if let StepSpec::Stem { language, generation } = step {
                    if !stem_languages(*generation).contains(&stem_lang) {
                        return Err(Error::usage(format!(
                            "stem language {:?} for the built-in chain \"stemmed\": no Snowball \
                             stemmer ({} generation); accepted: {}",
                            stem_lang.as_str(),
                            generation.as_str(),
                            join_codes(&stem_languages(*generation))
                        )));
                    }
                    *language = Some(stem_lang);
                }
            }
        }
    }
    Ok(chains)
}

/// Pick chains by a comma-separated list of names, in the list's order.
/// Unknown or repeated names are errors that list the available names.
pub fn select_chains(available: &[ChainSpec], names: &str) -> Result<Vec<ChainSpec>> {
    let list = || available.iter().map(|c| c.name.as_str()).collect::<Vec<_>>().join(", ");
    let mut chosen: Vec<ChainSpec> = Vec::new();
    for name in names.split(',').map(str::trim).filter(|n| !n.is_empty()) {
        if chosen.iter().any(|c| c.name.as_str() == name) {
            return Err(Error::usage(format!("chain {name:?} is listed twice")));
        }
        match available.iter().find(|c| c.name.as_str() == name) {
            Some(chain) => chosen.push(chain.clone()),
            None => {
                return Err(Error::usage(format!("unknown chain {name:?}; available: {}", list())))
            }
        }
    }
    if chosen.is_empty() {
        return Err(Error::usage(format!("no chain named; available: {}", list())));
    }
    Ok(chosen)
}

/// Parse and validate chain-file text, keeping only the chains (any
/// deprecation notes are dropped: for the built-ins and texts in code; files
/// a user wrote go through [`parse_chain_file`]).
pub fn parse_chains(text: &str, origin: &str, pool: &[ChainSpec]) -> Result<Vec<ChainSpec>> {
    parse_chain_file(text, origin, pool).map(|file| file.chains)
}

/// Parse and validate chain-file text. `origin` names the file in messages;
/// `pool` holds the chains the file may not redefine (the built-ins, for a
/// user's chain file): their names are taken, and their plain chains may be
/// named as a route's `fallback`.
pub fn parse_chain_file(text: &str, origin: &str, pool: &[ChainSpec]) -> Result<ChainFile> {
    let raw: RawFile = toml::from_str(text).map_err(|e| {
        let line = e.span().map_or(1, |s| line_of(text, s.start));
        Error::chain(format!("{origin}:{line}: {}", toml_message(text, &e)))
    })?;
    let mut issues = Issues {
        origin,
        text,
        seen: BTreeSet::new(),
        listed: Vec::new(),
        more: 0,
        deprecations: Vec::new(),
    };
    if raw.chain.is_empty() {
        issues.push(0..0, "no [[chain]] table: a chain file defines at least one chain");
    }

    // Names first: format and uniqueness.
    let mut first_line: BTreeMap<&str, usize> = BTreeMap::new();
    for chain in &raw.chain {
        let name = chain.get_ref().name.get_ref().as_str();
        let span = chain.get_ref().name.span();
        if !valid_name(name) {
            issues.push(
                span.clone(),
                format!(
                    "chain name {name:?}: use 1 to 64 letters, digits, '_', '-' or '.', \
                     starting with a letter or digit"
                ),
            );
        }
        if pool.iter().any(|c| c.name.as_str() == name) {
            // A file chain that took a built-in's name would change what
            // that name means in reports and gates without a word.
            issues.push(
                span.clone(),
                format!(
                    "chain name {name:?} is the name of a built-in chain, which a chain file \
                     cannot replace; give yours a name of its own (for example \"{name}_custom\"); \
                     built-in: {}",
                    pool.iter().map(|c| c.name.as_str()).collect::<Vec<_>>().join(", ")
                ),
            );
        }
        match first_line.get(name) {
            Some(line) => {
                issues.push(span, format!("chain name {name:?} is already used at line {line}"))
            }
            None => {
                first_line.insert(name, line_of(text, span.start));
            }
        }
    }

    // Plain chains, then routed ones (whose fallback may name a plain chain).
    let mut plain: BTreeMap<String, Pipeline> = BTreeMap::new();
    let mut specs: Vec<Option<ChainSpec>> = Vec::new();
    for chain in &raw.chain {
        let c = chain.get_ref();
        let label = format!("chain {:?}", c.name.get_ref());
        let spec = if c.route.is_some() {
            if let Some(t) = &c.unspaced {
                issues.push(
                    t.span(),
                    format!(
                        "{label}: a routed chain sets unspaced inside [chain.route] (for every \
                         branch) or [chain.route.language.xx]"
                    ),
                );
            }
            if let Some(t) = &c.tokenizer {
                issues.push(
                    t.span(),
                    format!(
                        "{label}: a routed chain sets its tokenizer and steps inside [chain.route]"
                    ),
                );
            }
            if let Some(s) = c.steps.as_ref().and_then(|s| s.first()) {
                issues.push(
                    s.span(),
                    format!(
                        "{label}: a routed chain sets its tokenizer and steps inside [chain.route]"
                    ),
                );
            }
            None
        } else {
            let steps = typed_steps(&mut issues, &label, c.steps.as_deref().unwrap_or_default());
            let pipeline = check_pipeline(
                &mut issues,
                &label,
                (c.tokenizer.as_ref(), c.unspaced.as_ref()),
                &steps,
                None,
            );
            plain.insert(c.name.get_ref().clone(), pipeline.clone());
            Some(ChainSpec {
                name: ChainName::from(c.name.get_ref().as_str()),
                description: c.description.clone(),
                body: ChainBody::Plain(pipeline),
            })
        };
        specs.push(spec);
    }
    for (chain, slot) in raw.chain.iter().zip(specs.iter_mut()) {
        let c = chain.get_ref();
        let Some(route) = &c.route else { continue };
        let label = format!("chain {:?}", c.name.get_ref());
        let route = check_route(&mut issues, &label, route, &plain, pool);
        *slot = Some(ChainSpec {
            name: ChainName::from(c.name.get_ref().as_str()),
            description: c.description.clone(),
            body: ChainBody::Routed { route },
        });
    }

    if issues.listed.is_empty() {
        Ok(ChainFile {
            chains: specs.into_iter().flatten().collect(),
            deprecations: issues.deprecations,
        })
    } else {
        let mut message = issues.listed.join("\n");
        if issues.more > 0 {
            message.push_str(&format!("\n{origin}: … and {} more problems", issues.more));
        }
        Err(Error::chain(message))
    }
}

// ---------------------------------------------------------------------------
// Raw (as written) forms, with spans for messages.

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFile {
    #[serde(default)]
    chain: Vec<Spanned<RawChain>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawChain {
    name: Spanned<String>,
    description: Option<String>,
    tokenizer: Option<Spanned<TokenizerKind>>,
    unspaced: Option<Spanned<Unspaced>>,
    steps: Option<Vec<Spanned<toml::Value>>>,
    route: Option<Spanned<RawRoute>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRoute {
    languages: Spanned<Vec<Spanned<LangCode>>>,
    min_confidence: Option<Spanned<f64>>,
    #[serde(default)]
    detector: DetectorKind,
    #[serde(default)]
    posts: PostRouting,
    queries: Option<Spanned<String>>,
    #[serde(default)]
    search: QuerySearch,
    #[serde(default)]
    fusion: Fusion,
    #[serde(default)]
    fallback_posts: FallbackPosts,
    tokenizer: Option<Spanned<TokenizerKind>>,
    unspaced: Option<Spanned<Unspaced>>,
    steps: Option<Vec<Spanned<toml::Value>>>,
    fallback: Option<Spanned<toml::Value>>,
    #[serde(default)]
    language: BTreeMap<String, Spanned<RawPipeline>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPipeline {
    tokenizer: Option<Spanned<TokenizerKind>>,
    unspaced: Option<Spanned<Unspaced>>,
    steps: Option<Vec<Spanned<toml::Value>>>,
}

/// Deserialize each step on its own so that an error names the step's line
/// (serde's tagged enums lose the position of their content).
fn typed_steps(
    issues: &mut Issues<'_>,
    label: &str,
    raw: &[Spanned<toml::Value>],
) -> Vec<Spanned<StepSpec>> {
    let mut steps = Vec::with_capacity(raw.len());
    for value in raw {
        let mut value = Spanned::new(value.span(), value.get_ref().clone());
        let renamed = rename_old_step(value.get_mut());
        if !renamed.is_empty() {
            issues.deprecate(
                value.span(),
                format!(
                    "{label}: {}; the old name is read in this release only",
                    renamed.join(", ")
                ),
            );
        }
        match value.get_ref().clone().try_into::<StepSpec>() {
            Ok(step) => steps.push(Spanned::new(value.span(), step)),
            Err(e) => issues.push(value.span(), format!("{label}: {}", one_line(e.message()))),
        }
    }
    steps
}

/// Step names of the previous release and their replacements.
const RENAMED_STEPS: &[(&str, &str)] =
    &[("elision", "strip_elided"), ("length", "keep_sizes"), ("edge_ngrams", "prefixes")];

/// Option keys of `keep_sizes` and `prefixes` in the previous release and
/// their replacements.
const RENAMED_BOUNDS: &[(&str, &str)] = &[("min", "shortest"), ("max", "longest")];

/// Rewrite a step written with the previous release's names (see
/// [`RENAMED_STEPS`], [`RENAMED_BOUNDS`]) into today's, returning what was
/// renamed (`step = "length" is now step = "keep_sizes"`, `min is now
/// shortest`); nothing for a step in today's words. An old key beside its
/// new one is left alone, for serde to refuse as unknown.
fn rename_old_step(value: &mut toml::Value) -> Vec<String> {
    let mut renamed = Vec::new();
    let Some(table) = value.as_table_mut() else { return renamed };
    let old = table.get("step").and_then(toml::Value::as_str).unwrap_or_default();
    if let Some((old, new)) = RENAMED_STEPS.iter().find(|(o, _)| *o == old) {
        table.insert("step".into(), toml::Value::String((*new).into()));
        renamed.push(format!("step = {old:?} is now step = {new:?}"));
    }
    let step = table.get("step").and_then(toml::Value::as_str).unwrap_or_default();
    if matches!(step, "keep_sizes" | "prefixes") {
        for (old, new) in RENAMED_BOUNDS {
            if table.contains_key(*new) {
                continue;
            }
            if let Some(v) = table.remove(*old) {
                table.insert((*new).into(), v);
                renamed.push(format!("{old} is now {new}"));
            }
        }
    }
    renamed
}

/// The TOML parser's message on one line. The parser gives no message when
/// the file ends right after `key =` (its span is the end of the file), so
/// that case says what a value looks like.
fn toml_message(text: &str, e: &toml::de::Error) -> String {
    let message = one_line(e.message());
    if !message.is_empty() {
        return message;
    }
    let at = e.span().map_or(text.len(), |s| s.start);
    let before = text.get(..at).unwrap_or(text);
    let line = before.rsplit('\n').next().unwrap_or(before).trim();
    // The key is what precedes `=` after any `[`, `{` or `,` (an inline table's key).
    let key = line
        .strip_suffix('=')
        .and_then(|k| k.rsplit(['[', '{', ',']).next())
        .map(str::trim)
        .filter(|k| !k.is_empty());
    let after = key.map_or(String::new(), |k| format!(" after `{k} =`"));
    let rest = text.get(at..).unwrap_or("");
    let found = match rest.lines().next().map(str::trim) {
        Some(next) if !next.is_empty() => format!("found {next:?}"),
        _ if rest.trim().is_empty() => "found the end of the file".to_string(),
        _ => "found the end of the line".to_string(),
    };
    capped(&format!(
        "expected a value{after} (a quoted string such as \"words\", a number, true or \
         false, an array [...] or an inline table {{ ... }}), {found}"
    ))
}

/// A possibly multi-line message on one line.
fn one_line(message: &str) -> String {
    capped(&message.trim_end().lines().map(str::trim).collect::<Vec<_>>().join("; "))
}

/// The longest message about a chain file, in characters: a message quotes
/// the values it is about, and a value may be a megabyte long. Long enough
/// for every message that lists accepted values (the longest is a few
/// hundred characters).
const MAX_MESSAGE_CHARS: usize = 1_000;

/// `message` cut after [`MAX_MESSAGE_CHARS`] characters, saying so.
fn capped(message: &str) -> String {
    match message.char_indices().nth(MAX_MESSAGE_CHARS) {
        Some((cut, _)) => format!(
            "{}… (message cut: {} characters in all)",
            &message[..cut],
            message.chars().count()
        ),
        None => message.to_string(),
    }
}

/// Problems found while validating, as `origin:line: message` strings.
struct Issues<'a> {
    origin: &'a str,
    text: &'a str,
    seen: BTreeSet<String>,
    listed: Vec<String>,
    more: usize,
    /// Uses of old names, as `origin:line: message` (not errors).
    deprecations: Vec<String>,
}

impl Issues<'_> {
    /// Note a use of a previous release's name (a warning, not a problem).
    fn deprecate(&mut self, span: Range<usize>, message: impl AsRef<str>) {
        let entry = format!(
            "{}:{}: {}",
            self.origin,
            line_of(self.text, span.start),
            capped(message.as_ref())
        );
        if !self.deprecations.contains(&entry) {
            self.deprecations.push(entry);
        }
    }

    fn push(&mut self, span: Range<usize>, message: impl AsRef<str>) {
        let line = line_of(self.text, span.start);
        let entry = format!("{}:{}: {}", self.origin, line, capped(message.as_ref()));
        if !self.seen.insert(entry.clone()) {
            return;
        }
        if self.listed.len() < MAX_LISTED_PROBLEMS {
            self.listed.push(entry);
        } else {
            self.more += 1;
        }
    }
}

/// 1-based line of a byte offset.
fn line_of(text: &str, offset: usize) -> usize {
    let end = offset.min(text.len());
    text.as_bytes().get(..end).map_or(0, |b| b.iter().filter(|&&c| c == b'\n').count()) + 1
}

fn valid_name(name: &str) -> bool {
    let mut bytes = name.bytes();
    name.len() <= 64
        && bytes.next().is_some_and(|b| b.is_ascii_alphanumeric())
        && bytes.all(|b| b.is_ascii_alphanumeric() || matches!(b, b'_' | b'-' | b'.'))
}

fn join_codes(codes: &[LangCode]) -> String {
    codes.iter().map(LangCode::as_str).collect::<Vec<_>>().join(", ")
}

/// The languages whose stemmer gives (nearly) the same stems on folded,
/// accent-free input: measured on the snowball-data vocabularies (see the
/// stem filter's tests; ≥ 99.8% of words keep their stem, against ≤ 98.6%
/// for Italian, Swedish, Spanish, Portuguese, French and Turkish).
/// Unmeasured languages are not allowed.
pub(crate) const FOLD_BEFORE_STEM_OK: &[&str] = &["de", "en", "nl", "ru"];

/// Validate one pipeline (`branch` = the route language it serves, if any)
/// and return it with branch languages filled in.
fn check_pipeline(
    issues: &mut Issues<'_>,
    label: &str,
    (tokenizer, unspaced): TokenizerSettings<'_>,
    steps: &[Spanned<StepSpec>],
    branch: Option<LangCode>,
) -> Pipeline {
    let kind = tokenizer.map_or(TokenizerKind::Words, |t| *t.get_ref());
    let unspaced = check_unspaced(issues, label, kind, unspaced);
    let in_branch = branch.map_or(String::new(), |l| {
        format!(" (give {l} its own steps in [chain.route.language.{l}])")
    });
    // Lower-casing must follow the Turkish/Azeri dotted and dotless i rules
    // when the steps that read its output (stop, stem) are Turkish or
    // Azeri: a lowercase without a language takes theirs, as a route
    // branch's takes the branch's.
    let turkic = branch
        .or_else(|| {
            steps.iter().find_map(|s| match s.get_ref() {
                StepSpec::Stem { language: Some(l), .. } | StepSpec::Stop { language: Some(l) } => {
                    Some(*l)
                }
                _ => None,
            })
        })
        .filter(|l| matches!(l.as_str(), "tr" | "az"));
    let mut seen_lowercase = false;
    let mut seen_fold = false;
    let mut seen_stem = false;
    let mut seen_ngrams = false;
    let mut seen_hashtags = false;
    let mut resolved = Vec::with_capacity(steps.len());
    for spanned in steps {
        let span = spanned.span();
        let mut step = spanned.get_ref().clone();
        let mut err = |message: String| issues.push(span.clone(), format!("{label}: {message}"));
        let name = step.name();
        if seen_ngrams
            && !matches!(
                step,
                StepSpec::KeepSizes { .. }
                    | StepSpec::Lowercase { .. }
                    | StepSpec::Fold { .. }
                    | StepSpec::Drop { .. }
            )
        {
            err(format!(
                "{name} cannot follow prefixes (it would work on prefixes); \
                 only keep_sizes, lowercase, fold and drop may"
            ));
        }
        match &mut step {
            StepSpec::Lowercase { language } => {
                if language.is_none() {
                    *language = turkic;
                }
                seen_lowercase = true;
            }
            StepSpec::Fold { .. } => seen_fold = true,
            StepSpec::Stop { language } => {
                if language.is_none() {
                    *language = branch;
                }
                let accepted = stop_languages();
                match language {
                    None => err(format!(
                        "stop needs a language, e.g. language = \"en\"; accepted: {}",
                        join_codes(&accepted)
                    )),
                    Some(l) if !accepted.contains(l) => err(format!(
                        "stop: no stop list for language {:?}; accepted: {}{in_branch}",
                        l.as_str(),
                        join_codes(&accepted)
                    )),
                    Some(l) => {
                        if seen_fold && l.as_str() != "en" {
                            err("stop must come before fold: the stop list holds accented words"
                                .to_string());
                        }
                    }
                }
                if !seen_lowercase {
                    err("stop needs lower-case input: put a lowercase step before it".to_string());
                }
                if seen_stem {
                    err("stop must come before stem: stop lists hold unstemmed words".to_string());
                }
            }
            StepSpec::Stem { language, generation } => {
                if language.is_none() {
                    *language = branch;
                }
                let accepted = stem_languages(*generation);
                match language {
                    None => err(format!(
                        "stem needs a language, e.g. language = \"en\"; accepted: {}",
                        join_codes(&accepted)
                    )),
                    Some(l) if l.as_str() == "el" && *generation == StemGeneration::V2018 => {
                        err("stem: Greek is only offered with generation = \"current\" \
                             (the 2018 implementation can crash on Greek words)"
                            .to_string())
                    }
                    Some(l) if !accepted.contains(l) => err(format!(
                        "stem: no Snowball stemmer for language {:?} (generation {}); \
                         accepted: {}{in_branch}",
                        l.as_str(),
                        generation.as_str(),
                        join_codes(&accepted)
                    )),
                    Some(l) => {
                        if seen_fold && !FOLD_BEFORE_STEM_OK.contains(&l.as_str()) {
                            err(format!(
                                "fold before stem removes accents the {} stemmer's rules need: \
                                 put fold after stem (fold may precede stem only for {})",
                                l.as_str(),
                                FOLD_BEFORE_STEM_OK.join(", ")
                            ));
                        }
                    }
                }
                if !seen_lowercase {
                    err("stem needs lower-case input: put a lowercase step before it".to_string());
                }
                if seen_stem {
                    err("stem appears twice in one chain".to_string());
                }
                seen_stem = true;
            }
            StepSpec::StripElided { language } => {
                if let Some(l) = language {
                    if !ELISION_LANGUAGES.contains(&l.as_str()) {
                        err(format!(
                            "strip_elided: no list of elided words for language {:?}; \
                             accepted: {} (or no language for all three)",
                            l.as_str(),
                            ELISION_LANGUAGES.join(", ")
                        ));
                    }
                }
                if seen_stem {
                    err("strip_elided must come before stem".to_string());
                }
            }
            StepSpec::KeepSizes { shortest, longest }
            | StepSpec::Prefixes { shortest, longest } => {
                if *shortest == 0 || shortest > longest {
                    err(format!(
                        "{name}: need 1 ≤ shortest ≤ longest, found shortest = {shortest}, \
                         longest = {longest}"
                    ));
                }
                if name == "prefixes" {
                    seen_ngrams = true;
                }
            }
            StepSpec::Drop { kinds } => {
                if kinds.is_empty() {
                    err("drop needs kinds, e.g. kinds = [\"urls\"]; accepted: mentions, urls, \
                         emoji, numbers, hashtags"
                        .to_string());
                }
                for k in kinds.iter() {
                    let post_only = !matches!(k, DropKind::Numbers);
                    if post_only && kind == TokenizerKind::Words {
                        err(format!(
                            "drop {}: the words tokenizer never produces them; use tokenizer = \
                             \"posts\" (or \"whitespace\")",
                            k.as_str()
                        ));
                    }
                    if *k == DropKind::Hashtags && seen_hashtags {
                        err("drop hashtags after the hashtags step finds none (it strips the \
                             '#'): put drop first"
                            .to_string());
                    }
                }
            }
            StepSpec::Hashtags { vocabulary, language } => {
                let listed = word_lists::list_languages();
                match (vocabulary.uses_lists(), *language) {
                    (false, Some(l)) => err(format!(
                        "hashtags: language = {:?} picks a built-in list, which vocabulary = \
                         {:?} does not use; use vocabulary = \"lists\" or \"corpus+lists\"",
                        l.as_str(),
                        vocabulary.as_str()
                    )),
                    (true, Some(l)) if !listed.contains(&l) => err(format!(
                        "hashtags: no built-in word list for language {:?}; accepted: {} (or \
                         no language for the merged list of all of them)",
                        l.as_str(),
                        join_codes(&listed)
                    )),
                    (true, None) => *language = branch.filter(|b| listed.contains(b)),
                    _ => {}
                }
                if kind == TokenizerKind::Words {
                    err("hashtags needs tokenizer = \"posts\" (or \"whitespace\"): the words \
                         tokenizer drops the '#'"
                        .to_string());
                }
                if seen_lowercase {
                    err("hashtags must come before lowercase: it splits #CamelCase tags at \
                         case changes"
                        .to_string());
                }
                if seen_hashtags {
                    err("hashtags appears twice in one chain".to_string());
                }
                seen_hashtags = true;
            }
        }
        resolved.push(step);
    }
    Pipeline { tokenizer: kind, unspaced, steps: resolved }
}

/// A pipeline's tokenizer and `unspaced` setting, as written (with spans).
type TokenizerSettings<'a> = (Option<&'a Spanned<TokenizerKind>>, Option<&'a Spanned<Unspaced>>);

/// The `unspaced` setting of a pipeline: only the `words` and `posts`
/// tokenizers segment words, so `whitespace` refuses any but the default.
fn check_unspaced(
    issues: &mut Issues<'_>,
    label: &str,
    kind: TokenizerKind,
    unspaced: Option<&Spanned<Unspaced>>,
) -> Unspaced {
    let Some(setting) = unspaced else { return Unspaced::Characters };
    let value = *setting.get_ref();
    if kind == TokenizerKind::Whitespace && value != Unspaced::Characters {
        issues.push(
            setting.span(),
            format!(
                "{label}: unspaced = \"{}\" needs tokenizer = \"words\" or \"posts\" (the \
                 whitespace tokenizer does not segment words)",
                value.as_str()
            ),
        );
        return Unspaced::Characters;
    }
    value
}

/// The default steps of a route's branches: lowercase, then stem.
fn default_branch_steps() -> Vec<StepSpec> {
    vec![
        StepSpec::Lowercase { language: None },
        StepSpec::Stem { language: None, generation: default_generation() },
    ]
}

fn check_route(
    issues: &mut Issues<'_>,
    label: &str,
    route: &Spanned<RawRoute>,
    plain: &BTreeMap<String, Pipeline>,
    pool: &[ChainSpec],
) -> RouteSpec {
    let r = route.get_ref();
    let route_span = route.span();

    // Languages: non-empty, distinct, known to the detector.
    let detectable = r.detector.supported_codes();
    let mut languages: Vec<LangCode> = Vec::new();
    if r.languages.get_ref().is_empty() {
        issues.push(r.languages.span(), format!("{label}: route languages must not be empty"));
    }
    for l in r.languages.get_ref() {
        let code = *l.get_ref();
        if languages.contains(&code) {
            issues.push(l.span(), format!("{label}: language {:?} is listed twice", code.as_str()));
            continue;
        }
        if !detectable.contains(&code) {
            issues.push(
                l.span(),
                format!(
                    "{label}: the {} detector cannot recognise {:?}; accepted: {}",
                    r.detector,
                    code.as_str(),
                    join_codes(&detectable)
                ),
            );
        }
        languages.push(code);
    }

    let min_confidence = match &r.min_confidence {
        Some(m) if !(0.0..=1.0).contains(m.get_ref()) => {
            issues.push(
                m.span(),
                format!("{label}: min_confidence must be in [0, 1], found {}", m.get_ref()),
            );
            DEFAULT_MIN_CONFIDENCE
        }
        Some(m) => *m.get_ref(),
        None => DEFAULT_MIN_CONFIDENCE,
    };

    // Per-language overrides must name routed languages.
    let mut overrides: BTreeMap<LangCode, Override<'_>> = BTreeMap::new();
    for (key, pipeline) in &r.language {
        match LangCode::parse(key) {
            Some(code) if languages.contains(&code) => {
                let p = pipeline.get_ref();
                let steps = p.steps.as_ref().map(|s| typed_steps(issues, label, s));
                overrides.insert(code, (p.tokenizer.as_ref(), p.unspaced.as_ref(), steps));
            }
            _ => issues.push(
                pipeline.span(),
                format!(
                    "{label}: [chain.route.language.{}] names no routed language; routed: {}",
                    key,
                    join_codes(&languages)
                ),
            ),
        }
    }

    let template_steps: Vec<Spanned<StepSpec>> = match &r.steps {
        Some(steps) => typed_steps(issues, label, steps),
        None => default_branch_steps()
            .into_iter()
            .map(|s| Spanned::new(route_span.clone(), s))
            .collect(),
    };
    let mut branches = Vec::with_capacity(languages.len());
    for &language in &languages {
        let (tokenizer, unspaced, steps) = match overrides.get(&language) {
            Some((tokenizer, unspaced, steps)) => (
                tokenizer.or(r.tokenizer.as_ref()),
                unspaced.or(r.unspaced.as_ref()),
                steps.as_deref().unwrap_or(&template_steps),
            ),
            None => (r.tokenizer.as_ref(), r.unspaced.as_ref(), template_steps.as_slice()),
        };
        let pipeline = check_pipeline(issues, label, (tokenizer, unspaced), steps, Some(language));
        branches.push(Branch { language, pipeline });
    }

    let fallback = match &r.fallback {
        None => Pipeline {
            unspaced: r.unspaced.as_ref().map_or(Unspaced::Characters, |u| *u.get_ref()),
            ..Pipeline::standard()
        },
        Some(value) => match value.get_ref() {
            toml::Value::String(name) => {
                let found = plain.get(name).cloned().or_else(|| {
                    pool.iter().find(|c| c.name.as_str() == name).and_then(|c| match &c.body {
                        ChainBody::Plain(p) => Some(p.clone()),
                        ChainBody::Routed { .. } => None,
                    })
                });
                match found {
                    Some(p) => p,
                    None => {
                        let mut names: Vec<&str> = plain.keys().map(String::as_str).collect();
                        names.extend(
                            pool.iter().filter(|c| c.route().is_none()).map(|c| c.name.as_str()),
                        );
                        names.sort_unstable();
                        names.dedup();
                        if names.is_empty() {
                            names.push("(none)");
                        }
                        issues.push(
                            value.span(),
                            format!(
                                "{label}: fallback {name:?} is not a plain chain of this file or a \
                                 built-in one; available: {}",
                                names.join(", ")
                            ),
                        );
                        Pipeline::standard()
                    }
                }
            }
            toml::Value::Table(table) => {
                match toml::Value::Table(table.clone()).try_into::<RawPipelineOwned>() {
                    Ok(p) => {
                        let raw: Vec<Spanned<toml::Value>> =
                            p.steps.into_iter().map(|s| Spanned::new(value.span(), s)).collect();
                        let steps = typed_steps(issues, &format!("{label}: fallback"), &raw);
                        let tokenizer = p.tokenizer.map(|t| Spanned::new(value.span(), t));
                        let own = p.unspaced.map(|u| Spanned::new(value.span(), u));
                        let unspaced = own.as_ref().or(r.unspaced.as_ref());
                        check_pipeline(issues, label, (tokenizer.as_ref(), unspaced), &steps, None)
                    }
                    Err(e) => {
                        issues.push(
                            value.span(),
                            format!("{label}: fallback: {}", one_line(e.message())),
                        );
                        Pipeline::standard()
                    }
                }
            }
            _ => {
                issues.push(
                    value.span(),
                    format!(
                        "{label}: fallback must be a plain chain's name (\"standard\") or a table \
                         {{ tokenizer = …, steps = […] }}"
                    ),
                );
                Pipeline::standard()
            }
        },
    };

    let queries = match &r.queries {
        None => QueryRouting::default(),
        Some(q) => match q.get_ref().as_str() {
            "declared" => QueryRouting::Declared,
            "detected" => QueryRouting::Detected,
            "every" => {
                issues.push(
                    q.span(),
                    format!(
                        "{label}: queries = \"every\" is now written search = \"all\" (and \
                         fields' rankings are fused by reciprocal rank, not added)"
                    ),
                );
                QueryRouting::default()
            }
            other => {
                issues.push(
                    q.span(),
                    format!("{label}: queries = {other:?}: expected \"declared\" or \"detected\""),
                );
                QueryRouting::default()
            }
        },
    };

    RouteSpec {
        languages,
        min_confidence,
        detector: r.detector,
        posts: r.posts,
        queries,
        search: r.search,
        fusion: r.fusion,
        fallback_posts: r.fallback_posts,
        branches,
        fallback,
    }
}

/// A per-language override: its tokenizer, `unspaced` setting and steps,
/// when given.
type Override<'a> = (
    Option<&'a Spanned<TokenizerKind>>,
    Option<&'a Spanned<Unspaced>>,
    Option<Vec<Spanned<StepSpec>>>,
);

/// An inline fallback table (its values carry no spans of their own).
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPipelineOwned {
    tokenizer: Option<TokenizerKind>,
    unspaced: Option<Unspaced>,
    #[serde(default)]
    steps: Vec<toml::Value>,
}

#[cfg(test)]
mod tests {
    use super::*;

    fn en() -> LangCode {
        LangCode::parse("en").expect("code")
    }

    fn err(text: &str) -> String {
        let pool = builtin_chains(en()).expect("built-ins parse");
        match parse_chains(text, "my.toml", &pool) {
            Ok(chains) => panic!("expected an error, parsed {chains:?}"),
            Err(e) => e.to_string(),
        }
    }

    fn chain(steps: &str) -> String {
        format!("[[chain]]\nname = \"a\"\ntokenizer = \"posts\"\nsteps = [\n{steps}\n]\n")
    }

    #[test]
    fn messages_quoting_a_huge_value_are_capped() {
        // A 1 MB chain name (issue 17's hostile sizes): the message keeps its
        // start, is cut at MAX_MESSAGE_CHARS characters and says how long it
        // was (our own rule, no source).
        let long = "n".repeat(1 << 20);
        let text = format!("[[chain]]\nname = \"{long}\"\ntokenizer = \"words\"\nsteps = []\n");
        let e = parse_chains(&text, "big.toml", &[]).unwrap_err().to_string();
        assert!(e.starts_with("big.toml:2: chain name \"nnn"), "{e:.200}");
        let cut = e.rsplit_once("… (message cut: ").map(|(_, rest)| rest);
        let total: usize = cut
            .and_then(|r| r.strip_suffix(" characters in all)"))
            .and_then(|n| n.parse().ok())
            .unwrap_or(0);
        assert!(total > 1 << 20, "{e:.200}");
        assert!(e.chars().count() < MAX_MESSAGE_CHARS + 100);
        assert_eq!(capped("short"), "short");
    }

    #[test]
    fn builtins_are_the_four_documented_chains() {
        let chains = builtin_chains(en()).expect("parse");
        let names: Vec<&str> = chains.iter().map(|c| c.name.as_str()).collect();
        assert_eq!(names, ["standard", "stemmed", "hashtag", "routed"]);
        let route = chains[3].route().expect("routed");
        let langs: Vec<&str> = route.languages.iter().map(LangCode::as_str).collect();
        assert_eq!(langs, ["en", "de", "fr", "es", "it", "pt", "nl"]);
        assert_eq!(route.fallback, Pipeline::standard());
        assert_eq!(route.queries, QueryRouting::Declared);
        assert_eq!(
            route.branches[1].pipeline.steps,
            [
                StepSpec::Lowercase { language: None },
                StepSpec::Stem {
                    language: LangCode::parse("de"),
                    generation: StemGeneration::Current
                }
            ]
        );
        assert!(chains[2].needs_word_freqs());
        assert!(!chains[0].needs_word_freqs() && !chains[3].needs_word_freqs());
    }

    #[test]
    fn stem_lang_overrides_stemmed_only() {
        let chains = builtin_chains(LangCode::parse("de").expect("code")).expect("parse");
        let ChainBody::Plain(p) = &chains[1].body else { panic!("plain") };
        assert_eq!(
            p.steps[1],
            StepSpec::Stem { language: LangCode::parse("de"), generation: StemGeneration::Current }
        );
        let e = builtin_chains(LangCode::parse("ja").expect("code")).expect_err("no stemmer");
        assert!(e.to_string().contains("\"ja\""), "{e}");
        assert!(e.to_string().contains("accepted: ar, da, de, el, en"), "{e}");
    }

    #[test]
    fn spec_serializes_for_the_report() {
        let chains = builtin_chains(en()).expect("parse");
        let json = serde_json::to_value(&chains[1]).expect("serialize");
        assert_eq!(
            json,
            serde_json::json!({
                "name": "stemmed",
                "description": "standard + Snowball stemming (language from --stem-lang, default en)",
                "tokenizer": "words",
                "steps": [
                    {"step": "lowercase"},
                    {"step": "stem", "language": "en", "generation": "current"}
                ]
            })
        );
        let routed = serde_json::to_value(&chains[3]).expect("serialize");
        assert_eq!(routed["route"]["branches"][0]["language"], "en");
        assert_eq!(routed["route"]["fallback"]["tokenizer"], "words");
        // A serialized step reads back as the same step.
        let back: StepSpec = serde_json::from_value(json["steps"][1].clone()).expect("round trip");
        assert_eq!(
            back,
            StepSpec::Stem { language: Some(en()), generation: StemGeneration::Current }
        );
    }

    #[test]
    fn unknown_step_names_line_and_accepted_values() {
        let e = err(&chain("  { step = \"lowercase\" },\n  { step = \"stemm\" },"));
        assert_eq!(
            e,
            "my.toml:6: chain \"a\": unknown variant `stemm`, expected one of `lowercase`, \
             `fold`, `stop`, `stem`, `strip_elided`, `keep_sizes`, `prefixes`, `drop`, `hashtags`"
        );
    }

    #[test]
    fn bad_parameters() {
        let e = err(&chain("  { step = \"lowercase\" },\n  { step = \"stem\", lang = \"en\" },"));
        assert_eq!(
            e,
            "my.toml:6: chain \"a\": unknown field `lang`, expected `language` or `generation`"
        );
        let e = err(&chain("  { step = \"lowercase\" },\n  { step = \"stem\", language = \"en\", generation = \"2020\" },"));
        assert!(e.starts_with("my.toml:6: "), "{e}");
        assert!(e.contains("expected `2018` or `current`"), "{e}");
        let e = err(&chain("  { step = \"keep_sizes\", shortest = 5, longest = 2 },"));
        assert_eq!(
            e,
            "my.toml:5: chain \"a\": keep_sizes: need 1 ≤ shortest ≤ longest, found shortest = 5, \
             longest = 2"
        );
        let e = err(&chain("  { step = \"drop\", kinds = [] },"));
        assert!(e.contains("accepted: mentions, urls, emoji, numbers, hashtags"), "{e}");
        let e = err("[[chain]]\nname = \"a\"\ntokenizer = \"word\"\n");
        assert_eq!(
            e,
            "my.toml:3: unknown variant `word`, expected one of `words`, `posts`, `whitespace`"
        );
    }

    #[test]
    fn unsupported_languages() {
        let e =
            err(&chain("  { step = \"lowercase\" },\n  { step = \"stem\", language = \"ja\" },"));
        assert!(
            e.starts_with("my.toml:6: chain \"a\": stem: no Snowball stemmer for language \"ja\""),
            "{e}"
        );
        assert!(e.contains("accepted: ar, da, de, el, en, es, fi, fr, hu, it, nb, nl, no, pt, ro, ru, sv, ta, tr"), "{e}");
        let e = err(&chain("  { step = \"lowercase\" },\n  { step = \"stem\", language = \"el\", generation = \"2018\" },"));
        assert!(e.contains("Greek is only offered with generation = \"current\""), "{e}");
        let e =
            err(&chain("  { step = \"lowercase\" },\n  { step = \"stop\", language = \"tr\" },"));
        assert!(e.contains("no stop list for language \"tr\""), "{e}");
        let e = err(&chain("  { step = \"strip_elided\", language = \"de\" },"));
        assert!(e.contains("accepted: ca, fr, it"), "{e}");
        let e = err(&chain("  { step = \"stem\", language = \"xx\" },"));
        assert_eq!(e, "my.toml:5: chain \"a\": expected an ISO 639-1 code, found \"xx\"");
    }

    #[test]
    fn hashtags_vocabulary_and_list_language() {
        let tags = |opts: &str| chain(&format!("  {{ step = \"hashtags\"{opts} }},"));
        let step = |text: &str| {
            let chains = parse_chains(text, "ok.toml", &[]).expect("valid");
            let first = chains[0].pipelines().next().expect("one pipeline").steps[0].clone();
            first
        };
        // A plain chain knows no language: no language means the merged list.
        let merged = step(&tags(", vocabulary = \"lists\""));
        assert_eq!(merged, StepSpec::Hashtags { vocabulary: TagVocabulary::Lists, language: None });
        assert_eq!(merged.label(), "hashtags(lists:all)");
        let de = step(&tags(", vocabulary = \"corpus+lists\", language = \"de\""));
        assert_eq!(de.label(), "hashtags(corpus+lists:de)");
        assert_eq!(step(&tags("")).label(), "hashtags");
        // Bad values name the line and what is accepted.
        let e = err(&tags(", vocabulary = \"words\""));
        assert!(e.starts_with("my.toml:5: chain \"a\": unknown variant `words`"), "{e}");
        assert!(e.contains("`corpus`, `lists`, `corpus+lists`, `none`"), "{e}");
        let e = err(&tags(", vocabulary = \"lists\", language = \"ru\""));
        assert_eq!(
            e,
            "my.toml:5: chain \"a\": hashtags: no built-in word list for language \"ru\"; \
             accepted: de, en, es, fr, it, nl, pt (or no language for the merged list of all of \
             them)"
        );
        let e = err(&tags(", language = \"de\""));
        assert!(
            e.starts_with(
                "my.toml:5: chain \"a\": hashtags: language = \"de\" picks a built-in list, \
                 which vocabulary = \"corpus\" does not use"
            ),
            "{e}"
        );
        // In a route, a branch whose language has a list takes it; others
        // (ru) and the fallback use the merged list.
        let text = "[[chain]]\nname = \"r\"\n[chain.route]\nlanguages = [\"de\", \"ru\"]\n\
                    tokenizer = \"posts\"\nsteps = [{ step = \"hashtags\", vocabulary = \"lists\" }, \
                    { step = \"lowercase\" }]\nfallback = { tokenizer = \"posts\", steps = \
                    [{ step = \"hashtags\", vocabulary = \"lists\" }] }\n";
        let chains = parse_chains(text, "r.toml", &[]).expect("valid");
        let labels: Vec<String> = chains[0].pipelines().map(|p| p.steps[0].label()).collect();
        assert_eq!(labels, ["hashtags(lists:de)", "hashtags(lists:all)", "hashtags(lists:all)"]);
        // A corpus vocabulary takes no branch language.
        let text = text.replace("\"lists\"", "\"corpus\"");
        let chains = parse_chains(&text, "r.toml", &[]).expect("valid");
        assert!(chains[0].pipelines().all(|p| p.steps[0]
            == StepSpec::Hashtags { vocabulary: TagVocabulary::Corpus, language: None }));
        assert!(chains[0].needs_word_freqs());
    }

    #[test]
    fn fold_form_is_read_and_checked() {
        let text =
            chain("  { step = \"lowercase\" },\n  { step = \"fold\", form = \"compatibility\" },");
        let chains = parse_chains(&text, "my.toml", &[]).expect("valid");
        let steps = &chains[0].pipelines().next().expect("plain").steps;
        assert_eq!(steps.get(1), Some(&StepSpec::Fold { form: FoldForm::Compatibility }));
        assert_eq!(steps.get(1).map(StepSpec::label).as_deref(), Some("fold(compatibility)"));
        let e = err(&chain("  { step = \"fold\", form = \"nfkc\" },"));
        assert_eq!(
            e,
            "my.toml:5: chain \"a\": unknown variant `nfkc`, expected `canonical` or `compatibility`"
        );
    }

    #[test]
    fn impossible_orders() {
        let e =
            err(&chain("  { step = \"stem\", language = \"en\" },\n  { step = \"lowercase\" },"));
        assert_eq!(
            e,
            "my.toml:5: chain \"a\": stem needs lower-case input: put a lowercase step before it"
        );
        let e = err(&chain("  { step = \"lowercase\" },\n  { step = \"fold\" },\n  { step = \"stem\", language = \"fr\" },"));
        assert!(
            e.starts_with("my.toml:7: chain \"a\": fold before stem removes accents the fr"),
            "{e}"
        );
        // English tolerates folding first.
        let ok = chain("  { step = \"lowercase\" },\n  { step = \"fold\" },\n  { step = \"stem\", language = \"en\" },");
        assert!(parse_chains(&ok, "ok.toml", &[]).is_ok());
        let e = err(&chain("  { step = \"lowercase\" },\n  { step = \"stem\", language = \"en\" },\n  { step = \"stop\", language = \"en\" },"));
        assert!(e.contains("my.toml:7: chain \"a\": stop must come before stem"), "{e}");
        let e = err(&chain("  { step = \"lowercase\" },\n  { step = \"hashtags\" },"));
        assert!(e.contains("my.toml:6: chain \"a\": hashtags must come before lowercase"), "{e}");
        let e = err("[[chain]]\nname = \"a\"\nsteps = [{ step = \"hashtags\" }, { step = \"drop\", kinds = [\"urls\"] }]\n");
        assert!(e.contains("hashtags needs tokenizer = \"posts\""), "{e}");
        assert!(e.contains("drop urls: the words tokenizer never produces them"), "{e}");
        let e = err(&chain("  { step = \"prefixes\" },\n  { step = \"lowercase\" },\n  { step = \"stem\", language = \"en\" },"));
        assert!(e.contains("my.toml:7: chain \"a\": stem cannot follow prefixes"), "{e}");
    }

    #[test]
    fn every_problem_is_listed_with_its_line() {
        let text = "[[chain]]\nname = \"a\"\nsteps = [{ step = \"stem\", language = \"en\" }]\n\n\
                    [[chain]]\nname = \"a\"\n\n[[chain]]\nname = \"bad name\"\n";
        let e = err(text);
        let lines: Vec<&str> = e.lines().collect();
        assert_eq!(
            lines,
            [
                "my.toml:6: chain name \"a\" is already used at line 2",
                "my.toml:9: chain name \"bad name\": use 1 to 64 letters, digits, '_', '-' or '.', \
                 starting with a letter or digit",
                "my.toml:3: chain \"a\": stem needs lower-case input: put a lowercase step before it",
            ]
        );
    }

    #[test]
    fn syntax_errors_name_the_line() {
        let e = err("[[chain]]\nname = \"a\"\nsteps = [\n");
        assert!(e.starts_with("my.toml:4: "), "{e}");
        let e = err("");
        assert_eq!(e, "my.toml:1: no [[chain]] table: a chain file defines at least one chain");
    }

    #[test]
    fn routes() {
        let text = "[[chain]]\nname = \"mine\"\nsteps = [{ step = \"lowercase\" }, { step = \"fold\" }]\n\n\
                    [[chain]]\nname = \"r\"\n[chain.route]\nlanguages = [\"de\", \"ja\"]\nqueries = \"detected\"\n\
                    search = \"all\"\nfusion = \"normalised_score\"\nfallback_posts = \"all\"\n\
                    fallback = \"mine\"\n[chain.route.language.ja]\nsteps = [{ step = \"lowercase\" }]\n";
        let chains = parse_chains(text, "r.toml", &[]).expect("valid");
        let route = chains[1].route().expect("routed");
        assert_eq!(route.min_confidence, DEFAULT_MIN_CONFIDENCE);
        assert_eq!(route.queries, QueryRouting::Detected);
        assert_eq!(
            (route.search, route.fusion, route.fallback_posts),
            (QuerySearch::All, Fusion::NormalisedScore, FallbackPosts::All)
        );
        // Unknown values name the accepted ones.
        let e = err(
            "[[chain]]\nname = \"r\"\n[chain.route]\nlanguages = [\"de\"]\nsearch = \"both\"\n",
        );
        assert!(e.contains("own_and_fallback"), "{e}");
        assert_eq!(
            route.fallback.steps,
            [StepSpec::Lowercase { language: None }, StepSpec::Fold { form: FoldForm::Canonical }]
        );
        assert_eq!(route.branches[1].pipeline.steps, [StepSpec::Lowercase { language: None }]);
        assert_eq!(route.branches[0].pipeline.steps.len(), 2);
        // Without the override, Japanese has no stemmer: the message says how to fix it.
        let e = err("[[chain]]\nname = \"r\"\n[chain.route]\nlanguages = [\"de\", \"ja\"]\n");
        assert!(
            e.starts_with("my.toml:3: chain \"r\": stem: no Snowball stemmer for language \"ja\""),
            "{e}"
        );
        assert!(e.ends_with("(give ja its own steps in [chain.route.language.ja])"), "{e}");
        // Turkish branches lower-case with the Turkic rules.
        let chains = parse_chains(
            "[[chain]]\nname = \"t\"\n[chain.route]\nlanguages = [\"tr\"]\n",
            "t.toml",
            &[],
        )
        .expect("valid");
        let tr = LangCode::parse("tr");
        assert_eq!(
            chains[0].route().expect("routed").branches[0].pipeline.steps[0],
            StepSpec::Lowercase { language: tr }
        );
        // So do plain chains whose stemmer is Turkish: `İSTANBUL` lower-cases
        // to `istanbul` and `KIZLAR` to `kızlar` (Unicode SpecialCasing.txt,
        // tr rules), which the Turkish Snowball stemmer reduces to `kız`
        // (its plural suffix -lar; from memory of the algorithm).
        let chains = parse_chains(
            "[[chain]]\nname = \"t\"\nsteps = [{ step = \"lowercase\" }, \
             { step = \"stem\", language = \"tr\" }]\n",
            "t.toml",
            &[],
        )
        .expect("valid");
        let plain = chains[0].pipelines().next().expect("one pipeline");
        assert_eq!(plain.steps[0], StepSpec::Lowercase { language: tr });
        let built =
            crate::analysis::Analyzer::build(&chains[0], &Default::default()).expect("builds");
        let mut analyzer = built.fields()[0].analyzer.clone();
        assert_eq!(
            crate::analysis::testutil::texts(&mut analyzer, "İSTANBUL KIZLAR"),
            ["istanbul", "kız"]
        );
    }

    #[test]
    fn route_errors() {
        let e = err("[[chain]]\nname = \"r\"\n[chain.route]\nlanguages = [\"en\", \"en\"]\nmin_confidence = 1.5\nfallback = \"nope\"\n");
        let lines: Vec<&str> = e.lines().collect();
        assert_eq!(lines[0], "my.toml:4: chain \"r\": language \"en\" is listed twice");
        assert_eq!(lines[1], "my.toml:5: chain \"r\": min_confidence must be in [0, 1], found 1.5");
        assert_eq!(
            lines[2],
            "my.toml:6: chain \"r\": fallback \"nope\" is not a plain chain of this file or a \
             built-in one; available: hashtag, standard, stemmed"
        );
        let e = err("[[chain]]\nname = \"r\"\ntokenizer = \"words\"\n[chain.route]\nlanguages = [\"en\"]\n[chain.route.language.de]\n");
        assert!(e.contains("my.toml:3: chain \"r\": a routed chain sets its tokenizer"), "{e}");
        assert!(
            e.contains("[chain.route.language.de] names no routed language; routed: en"),
            "{e}"
        );
        let e = err("[[chain]]\nname = \"r\"\n[chain.route]\nlanguages = [\"en\"]\nfallback = { steps = [{ step = \"stem\" }] }\n");
        assert!(e.contains("my.toml:5: chain \"r\": stem needs a language"), "{e}");
    }

    /// `unspaced` beside `tokenizer` in plain chains, route-wide, per
    /// branch and in an inline fallback; a named fallback keeps its own.
    #[test]
    fn unspaced_settings_and_where_they_apply() {
        let text = "[[chain]]\nname = \"zh\"\nunspaced = \"bigrams\"\n\n\
                    [[chain]]\nname = \"r\"\n[chain.route]\nlanguages = [\"en\", \"de\"]\n\
                    unspaced = \"dictionary\"\n[chain.route.language.de]\nunspaced = \"model\"\n\n\
                    [[chain]]\nname = \"n\"\n[chain.route]\nlanguages = [\"en\"]\n\
                    unspaced = \"model\"\nfallback = \"zh\"\n\n\
                    [[chain]]\nname = \"i\"\n[chain.route]\nlanguages = [\"en\"]\n\
                    unspaced = \"model\"\nfallback = { unspaced = \"characters\" }\n";
        let chains = parse_chains(text, "u.toml", &[]).expect("valid");
        let settings = |c: &ChainSpec| c.pipelines().map(|p| p.unspaced).collect::<Vec<_>>();
        assert_eq!(settings(&chains[0]), [Unspaced::Bigrams]);
        assert_eq!(
            settings(&chains[1]),
            [Unspaced::Dictionary, Unspaced::Model, Unspaced::Dictionary],
            "en from the route, de its own, the default fallback from the route"
        );
        assert_eq!(settings(&chains[2]), [Unspaced::Model, Unspaced::Bigrams]);
        assert_eq!(settings(&chains[3]), [Unspaced::Model, Unspaced::Characters]);
        // Reports show the setting only where it is not the default.
        let json = serde_json::to_value(&chains[0]).expect("serialize");
        assert_eq!(json["unspaced"], "bigrams");
        let builtin = serde_json::to_value(&builtin_chains(en()).expect("parse")[0]).expect("ok");
        assert!(builtin.get("unspaced").is_none(), "{builtin}");
        // The tokenizer's label in traces says so too.
        assert_eq!(
            chains[0].pipelines().next().expect("one").tokenizer_label(),
            "words(unspaced = bigrams)"
        );
    }

    #[test]
    fn unspaced_errors_name_the_line_and_the_accepted_values() {
        let e = err("[[chain]]\nname = \"a\"\nunspaced = \"dict\"\n");
        assert_eq!(
            e,
            "my.toml:3: unknown variant `dict`, expected one of `characters`, `dictionary`, \
             `model`, `bigrams`"
        );
        let e =
            err("[[chain]]\nname = \"a\"\ntokenizer = \"whitespace\"\nunspaced = \"bigrams\"\n");
        assert_eq!(
            e,
            "my.toml:4: chain \"a\": unspaced = \"bigrams\" needs tokenizer = \"words\" or \
             \"posts\" (the whitespace tokenizer does not segment words)"
        );
        let e = err(
            "[[chain]]\nname = \"r\"\nunspaced = \"model\"\n[chain.route]\nlanguages = [\"en\"]\n",
        );
        assert!(
            e.starts_with("my.toml:3: chain \"r\": a routed chain sets unspaced inside"),
            "{e}"
        );
        let e = err("[[chain]]\nname = \"r\"\n[chain.route]\nlanguages = [\"en\"]\n\
                     [chain.route.language.en]\nunspaced = \"pairs\"\n");
        assert!(e.starts_with("my.toml:6: unknown variant `pairs`"), "{e}");
    }

    #[test]
    fn detector_key() {
        let route = |extra: &str| {
            format!("[[chain]]\nname = \"r\"\n[chain.route]\nlanguages = [\"en\", \"sv\"]\n{extra}")
        };
        for (line, want) in [
            ("", DetectorKind::Lingua),
            ("detector = \"lingua\"\n", DetectorKind::Lingua),
            ("detector = \"whatlang\"\n", DetectorKind::Whatlang),
        ] {
            let chains = parse_chains(&route(line), "r.toml", &[]).expect("valid");
            assert_eq!(chains[0].route().expect("routed").detector, want, "{line:?}");
        }
        // The built-in `routed` names its detector (chains/builtin.toml).
        let builtins = builtin_chains(en()).expect("built-ins parse");
        let routed = builtins.iter().find_map(ChainSpec::route).expect("a routed built-in");
        assert_eq!(routed.detector, DetectorKind::Lingua);
        // Reports record it with the route.
        let json = serde_json::to_value(&builtins[3]).expect("serialize");
        assert_eq!(json["route"]["detector"], "lingua");
        // A bad value names the line and the accepted values.
        let e = err(&route("min_confidence = 0.5\ndetector = \"cld\"\n"));
        assert!(e.starts_with("my.toml:6: "), "{e}");
        assert!(e.contains("unknown variant `cld`, expected `whatlang` or `lingua`"), "{e}");
        // A language the chosen detector cannot recognise: named with the
        // detector and the accepted codes (whatlang knows Welsh, lingua as
        // compiled here does not).
        let welsh = "[[chain]]\nname = \"r\"\n[chain.route]\nlanguages = [\"cy\"]\n\
                     steps = [{ step = \"lowercase\" }]\n";
        let e = err(welsh);
        assert!(
            e.starts_with(
                "my.toml:4: chain \"r\": the lingua detector cannot recognise \"cy\"; \
                 accepted: ar, bg, ca"
            ),
            "{e}"
        );
        let whatlang = welsh.replace("languages", "detector = \"whatlang\"\nlanguages");
        assert!(parse_chains(&whatlang, "r.toml", &[]).is_ok());
    }

    #[test]
    fn a_value_missing_at_the_end_says_what_was_expected() {
        // The TOML parser has no message for these (its span is the end of
        // the file); the texts come from `toml_message`.
        let what = "(a quoted string such as \"words\", a number, true or false, an array \
                    [...] or an inline table { ... })";
        assert_eq!(
            err("[[chain]]\nname="),
            format!("my.toml:2: expected a value after `name =` {what}, found the end of the file")
        );
        assert_eq!(
            err("[[chain]]\nname = \"a\"\nsteps = [{ step =   "),
            format!("my.toml:3: expected a value after `step =` {what}, found the end of the file")
        );
        // With a line end after `=` the parser's own (multi-line) message is
        // kept, on one line.
        assert_eq!(err("[[chain]]\nname=\n"), "my.toml:2: invalid string; expected `\"`, `'`");
    }

    #[test]
    fn select_by_name_in_given_order() {
        let chains = builtin_chains(en()).expect("parse");
        let chosen = select_chains(&chains, "routed, standard").expect("known");
        let names: Vec<&str> = chosen.iter().map(|c| c.name.as_str()).collect();
        assert_eq!(names, ["routed", "standard"]);
        let e = select_chains(&chains, "standard,nope").expect_err("unknown");
        assert_eq!(
            e.to_string(),
            "unknown chain \"nope\"; available: standard, stemmed, hashtag, routed"
        );
        assert!(select_chains(&chains, "standard,standard").is_err());
        assert!(select_chains(&chains, " , ").is_err());
    }

    #[test]
    fn chain_files_on_disk() {
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join("chains.toml");
        std::fs::write(&path, "\u{feff}[[chain]]\nname = \"x\"\nsteps = [{ step = \"fold\" }]\n")
            .expect("write");
        let file = read_chain_file(&path).expect("valid");
        assert_eq!(file.chains[0].name.as_str(), "x");
        assert!(file.deprecations.is_empty());
        std::fs::write(&path, "[[chain]]\nname = \"x\"\nsteps = [{ step = \"nope\" }]\n")
            .expect("write");
        let e = read_chain_file(&path).expect_err("bad step").to_string();
        assert!(e.starts_with(&format!("{}:3: ", path.display())), "{e}");
        let missing = read_chain_file(&dir.path().join("missing.toml")).expect_err("absent");
        assert!(missing.to_string().contains("missing.toml"));
    }

    /// The shipped example file is valid and defines five chains.
    #[test]
    fn example_file_is_valid() {
        let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("chains/example.toml");
        let file = read_chain_file(&path).expect("valid example");
        assert_eq!(file.chains.len(), 5);
        assert_eq!(file.deprecations, Vec::<String>::new(), "the example uses today's names");
    }

    /// The previous release's names read as today's steps, each use noted
    /// with its line and the new name; a step in today's words is not noted.
    #[test]
    fn old_step_names_are_read_with_a_note() {
        let old = chain(
            "  { step = \"elision\", language = \"it\" },\n  { step = \"lowercase\" },\n  \
             { step = \"length\", max = 20 },\n  { step = \"edge_ngrams\", min = 3 },",
        );
        let file = parse_chain_file(&old, "old.toml", &[]).expect("old names are read");
        let ChainBody::Plain(p) = &file.chains[0].body else { panic!("plain") };
        assert_eq!(
            p.steps,
            [
                StepSpec::StripElided { language: LangCode::parse("it") },
                StepSpec::Lowercase { language: None },
                StepSpec::KeepSizes { shortest: 1, longest: 20 },
                StepSpec::Prefixes { shortest: 3, longest: 15 },
            ]
        );
        assert_eq!(
            file.deprecations,
            [
                "old.toml:5: chain \"a\": step = \"elision\" is now step = \"strip_elided\"; \
                 the old name is read in this release only",
                "old.toml:7: chain \"a\": step = \"length\" is now step = \"keep_sizes\", max is \
                 now longest; the old name is read in this release only",
                "old.toml:8: chain \"a\": step = \"edge_ngrams\" is now step = \"prefixes\", min is \
                 now shortest; the old name is read in this release only",
            ]
        );
        // Today's step with yesterday's key.
        let file = parse_chain_file(&chain("  { step = \"keep_sizes\", max = 9 },"), "k.toml", &[])
            .expect("old key is read");
        assert_eq!(
            file.chains[0].pipelines().next().map(|p| p.steps.clone()),
            Some(vec![StepSpec::KeepSizes { shortest: 1, longest: 9 }])
        );
        assert_eq!(
            file.deprecations,
            ["k.toml:5: chain \"a\": max is now longest; the old name is read in this release only"]
        );
        // Reports record today's names.
        let json = serde_json::to_value(&file.chains[0]).expect("serializes");
        assert_eq!(
            json["steps"][0],
            serde_json::json!({"step": "keep_sizes", "shortest": 1, "longest": 9})
        );
        // An old key beside its new one is refused, not silently dropped.
        let e = err(&chain("  { step = \"prefixes\", min = 2, shortest = 3 },"));
        assert!(e.starts_with("my.toml:5: chain \"a\": unknown field `min`"), "{e}");
        // Routes and inline fallbacks read old names too.
        let routed = "[[chain]]\nname = \"r\"\n[chain.route]\nlanguages = [\"fr\"]\n\
                      steps = [{ step = \"elision\" }, { step = \"lowercase\" }, { step = \"stem\" }]\n\
                      fallback = { steps = [{ step = \"length\", min = 2 }] }\n";
        let file = parse_chain_file(routed, "r.toml", &[]).expect("old names are read");
        let route = file.chains[0].route().expect("routed");
        assert_eq!(route.branches[0].pipeline.steps[0], StepSpec::StripElided { language: None });
        assert_eq!(route.fallback.steps, [StepSpec::KeepSizes { shortest: 2, longest: 40 }]);
        assert_eq!(file.deprecations.len(), 2, "{:?}", file.deprecations);
        assert!(
            file.deprecations[1].starts_with("r.toml:6: chain \"r\": fallback: step = \"length\"")
        );
    }
}
