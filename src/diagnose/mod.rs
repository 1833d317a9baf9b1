//! Diagnostics of analysis chains on open linguistic data, before any query
//! is judged (`postassay vet`): how a chain conflates the forms of a word,
//! how well a routed chain sends sentences of known language to the right
//! field, and how well a chain's `hashtags` step segments gold hashtags.
//!
//! Place in the data flow: a side branch that uses `input` and `analysis`
//! (no index, no search) and returns data: it fills the diagnostics part of
//! the report model ([`crate::report::model::diagnostics`]), with the
//! SHA-256 of every file read, which [`crate::report::diagnostics`] renders
//! (Markdown, JSON and CSV).
//!
//! Sections (each can be turned off):
//! - `conflation`: Paice's understemming/overstemming indices against lemma
//!   classes ([`conflation`]), per lemma list and chain;
//! - `routing`: routing accuracy by length ([`routing`]) and the cost of
//!   detection per sentence, per sentence set, routed chain and detector
//!   (each routed chain also runs with the other detector);
//! - `segmentation`: hashtag segmentation accuracy ([`segmentation`]), per
//!   gold set, chain with a `hashtags` step, and word-frequency source;
//! - `unspaced`: word segmentation of Thai, Chinese and Japanese
//!   ([`unspaced`]), per gold set and `unspaced` setting of the tokenizer
//!   (every setting, with the chains that use it).
//!
//! ```no_run
//! use postassay::analysis::builtin_chains;
//! use postassay::diagnose::{self, ChainUnderTest, DiagnosePlan, Sections};
//! use postassay::input::LangCode;
//!
//! let chains = builtin_chains(LangCode::parse("en").unwrap()).unwrap();
//! let plan = DiagnosePlan {
//!     data: "../shared/data".into(),
//!     chains: diagnose::chains_under_test(chains).unwrap(),
//!     sections: Sections::all(),
//!     languages: None,
//!     freq_sources: Vec::new(),
//!     chain_file: None,
//!     top: 5,
//! };
//! let found = diagnose::run(&plan, &mut |line: &str| eprintln!("{line}")).unwrap();
//! print!("{}", postassay::report::diagnostics::markdown(&found));
//! ```

pub mod conflation;
pub mod data;
#[cfg(test)]
mod rendered;
pub mod routing;
pub mod segmentation;
pub mod unspaced;

use std::path::PathBuf;
use std::sync::Arc;

use crate::analysis::detect::DetectorKind;
use crate::analysis::hashtag::WordFreqs;
use crate::analysis::{
    build_pipeline, builtin_chains, tag_table, word_lists, AnalysisContext, Analyzer, ChainBody,
    ChainSpec, Pipeline, StepSpec, TagVocabulary, TokenizerKind, Unspaced,
};
use crate::error::{Error, Result};
use crate::ids::ChainName;
use crate::input::{read_corpus, LangCode};
use crate::report::model::{InputFile, ToolInfo};

pub use crate::report::model::diagnostics::{
    ConflationResult, Diagnostics, RoutingResult, Sections, SegmentationResult, UnspacedResult,
    SCHEMA_VERSION,
};

use conflation::WordGroups;
use data::DataSets;

/// Section names as given on the command line, in report order.
pub const SECTION_NAMES: [&str; 4] = ["conflation", "routing", "segmentation", "unspaced"];

impl Sections {
    /// Every section.
    pub fn all() -> Sections {
        Sections { conflation: true, routing: true, segmentation: true, unspaced: true }
    }

    /// No section.
    fn none() -> Sections {
        Sections { conflation: false, routing: false, segmentation: false, unspaced: false }
    }

    /// Parse a comma-separated list of [`SECTION_NAMES`].
    pub fn parse(list: &str) -> Result<Sections> {
        let mut s = Sections::none();
        for name in list.split(',').map(str::trim).filter(|n| !n.is_empty()) {
            match name {
                "conflation" => s.conflation = true,
                "routing" => s.routing = true,
                "segmentation" => s.segmentation = true,
                "unspaced" => s.unspaced = true,
                other => {
                    return Err(Error::usage(format!(
                        "--sections: unknown section {other:?}; accepted: {}",
                        SECTION_NAMES.join(", ")
                    )))
                }
            }
        }
        if s == Sections::none() {
            return Err(Error::usage(format!(
                "--sections: no section named; accepted: {}",
                SECTION_NAMES.join(", ")
            )));
        }
        Ok(s)
    }
}

/// A chain as the diagnostics run it.
#[derive(Debug, Clone, PartialEq)]
pub enum ChainUnderTest {
    /// Run as specified, whatever the language of the data.
    Fixed(ChainSpec),
    /// The built-in `stemmed` chain, whose stemming language is a setting:
    /// for each language, its `stem` steps take that language (each
    /// language's own Snowball stemmer).
    StemPerLanguage(ChainSpec),
}

impl ChainUnderTest {
    /// The chain's name.
    pub fn name(&self) -> &ChainName {
        match self {
            ChainUnderTest::Fixed(spec) | ChainUnderTest::StemPerLanguage(spec) => &spec.name,
        }
    }

    /// The chain's spec as given.
    pub fn spec(&self) -> &ChainSpec {
        match self {
            ChainUnderTest::Fixed(spec) | ChainUnderTest::StemPerLanguage(spec) => spec,
        }
    }

    /// The spec to run on data of `language`; `Err` with the reason when the
    /// chain cannot serve it (no Snowball stemmer for the language).
    pub fn for_language(&self, language: LangCode) -> std::result::Result<ChainSpec, String> {
        match self {
            ChainUnderTest::Fixed(spec) => Ok(spec.clone()),
            ChainUnderTest::StemPerLanguage(spec) => {
                let stemmed = builtin_chains(language).map_err(|e| e.to_string())?;
                let found = stemmed.into_iter().find(|c| c.name == spec.name);
                found.ok_or_else(|| format!("no built-in chain {:?}", spec.name.as_str()))
            }
        }
    }
}

/// Mark the built-in `stemmed` chain (unchanged) among `chosen` to stem in
/// each language's own stemmer; every other chain runs as specified.
pub fn chains_under_test(chosen: Vec<ChainSpec>) -> Result<Vec<ChainUnderTest>> {
    let en = LangCode::parse("en").expect("en is ISO 639-1");
    let builtin = builtin_chains(en)?;
    Ok(chosen
        .into_iter()
        .map(|spec| {
            let is_builtin_stemmed = spec.name.as_str() == "stemmed"
                && builtin.iter().any(|b| b.name == spec.name && *b == spec);
            if is_builtin_stemmed {
                ChainUnderTest::StemPerLanguage(spec)
            } else {
                ChainUnderTest::Fixed(spec)
            }
        })
        .collect())
}

/// Where a hashtag segmenter's word frequencies come from.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum FreqSource {
    /// Learned from a corpus of posts (JSON Lines or CSV, as `run` reads).
    Corpus(PathBuf),
    /// Read from a `word<TAB>count` list.
    List(PathBuf),
    /// A word list built into the binary: one language's, or the merged
    /// list of all of them for `None`
    /// ([`word_lists`](crate::analysis::word_lists)).
    Builtin(Option<LangCode>),
}

/// Everything a diagnostics run needs.
#[derive(Debug, Clone)]
pub struct DiagnosePlan {
    /// The data directory (see [`data`] for its layout).
    pub data: PathBuf,
    /// The chains, in report order.
    pub chains: Vec<ChainUnderTest>,
    /// Sections to compute.
    pub sections: Sections,
    /// Only data sets whose name or language is listed (`None` = all).
    pub languages: Option<Vec<String>>,
    /// Frequency sources for segmentation, in report order.
    pub freq_sources: Vec<FreqSource>,
    /// The chain file the chains came from, recorded with its hash.
    pub chain_file: Option<PathBuf>,
    /// Offenders and examples listed per result.
    pub top: usize,
}

/// Run the diagnostics of `plan`, reporting progress through `progress`.
/// Every input is read (and checked) before anything is computed.
pub fn run(plan: &DiagnosePlan, progress: &mut dyn FnMut(&str)) -> Result<Diagnostics> {
    let found = data::discover(&plan.data)?;
    let sets = filter_sets(found, plan.languages.as_deref(), &plan.data)?;
    let mut inputs: Vec<InputFile> = Vec::new();
    let mut notes: Vec<String> = Vec::new();
    if let Some(f) = &plan.chain_file {
        inputs.push(input_file("chains", f)?);
    }

    let mut out = Diagnostics {
        schema_version: SCHEMA_VERSION,
        tool: ToolInfo { name: "postassay".into(), version: env!("CARGO_PKG_VERSION").into() },
        command: "vet".into(),
        inputs: Vec::new(),
        chains: plan.chains.iter().map(|c| c.name().clone()).collect(),
        chain_specs: plan
            .chains
            .iter()
            .map(|c| serde_json::to_value(c.spec()).unwrap_or(serde_json::Value::Null))
            .collect(),
        sections: plan.sections,
        conflation: Vec::new(),
        routing: Vec::new(),
        segmentation: Vec::new(),
        unspaced: Vec::new(),
        notes: Vec::new(),
    };

    let mut wanted = 0;
    if plan.sections.conflation {
        if sets.lemma_lists.is_empty() {
            notes.push(format!(
                "conflation: no lemma lists ({}/{}/LANG.lemmas.tsv)",
                plan.data.display(),
                data::UD_DIR
            ));
        } else {
            wanted += 1;
            out.conflation = conflation_section(plan, &sets, &mut inputs, progress)?;
        }
    }
    if plan.sections.routing {
        let routed: Vec<&ChainUnderTest> =
            plan.chains.iter().filter(|c| c.spec().route().is_some()).collect();
        if sets.sentence_sets.is_empty() {
            notes.push(format!(
                "routing: no sentence sets ({0}/{1}/LANG.sentences.tsv, {0}/{2}/LANG.sentences.tsv)",
                plan.data.display(),
                data::UD_DIR,
                data::PUD_DIR
            ));
        } else if routed.is_empty() {
            notes.push("routing: none of the chains is language-routed".to_string());
        } else {
            wanted += 1;
            out.routing = routing_section(&routed, &sets, &mut inputs, &mut notes, progress)?;
        }
    }
    if plan.sections.segmentation {
        let tagged: Vec<(&ChainUnderTest, Pipeline, TagVocabulary)> = plan
            .chains
            .iter()
            .filter_map(|c| hashtag_prefix(c.spec()).map(|(p, v)| (c, p, v)))
            .collect();
        if sets.gold_sets.is_empty() {
            notes.push(format!(
                "segmentation: no hashtag gold sets ({}/{}/NAME.tsv)",
                plan.data.display(),
                data::HASHTAG_DIR
            ));
        } else if tagged.is_empty() {
            notes.push("segmentation: none of the chains has a hashtags step".to_string());
        } else {
            wanted += 1;
            out.segmentation =
                segmentation_section(plan, &tagged, &sets, &mut inputs, &mut notes, progress)?;
        }
    }
    if plan.sections.unspaced {
        if sets.word_sets.is_empty() {
            notes.push(format!(
                "unspaced: no gold word segmentations ({}/{}/LANG.words.tsv)",
                plan.data.display(),
                data::NOSPACE_DIR
            ));
        } else {
            wanted += 1;
            out.unspaced = unspaced_section(plan, &sets, &mut inputs, progress)?;
        }
    }
    if wanted == 0 {
        let mut message = format!(
            "nothing to diagnose in {}: it needs {}/LANG.lemmas.tsv (conflation), \
             {}/LANG.sentences.tsv or {}/LANG.sentences.tsv (routing, with a routed chain), \
             {}/NAME.tsv (segmentation, with a chain that has a hashtags step) and/or \
             {}/LANG.words.tsv (unspaced)",
            plan.data.display(),
            data::UD_DIR,
            data::UD_DIR,
            data::PUD_DIR,
            data::HASHTAG_DIR,
            data::NOSPACE_DIR
        );
        for n in &notes {
            message.push_str(&format!("\n  {n}"));
        }
        return Err(Error::usage(message));
    }
    notes.extend(same_content(&inputs));
    out.inputs = inputs;
    out.notes = notes;
    Ok(out)
}

/// Keep the sets whose name or language is in `languages`; every listed
/// value must match some set of the data directory `dir` (named in messages).
fn filter_sets(
    sets: DataSets,
    languages: Option<&[String]>,
    dir: &std::path::Path,
) -> Result<DataSets> {
    let Some(wanted) = languages else { return Ok(sets) };
    let keep = |f: &data::DataFile| {
        wanted.iter().any(|w| *w == f.name || f.language.is_some_and(|l| l.as_str() == w))
    };
    let language_sets =
        || sets.lemma_lists.iter().chain(&sets.sentence_sets).chain(&sets.word_sets);
    if language_sets().next().is_none() {
        return Err(Error::usage(format!(
            "--langs: no language data in {0}: expected {0}/{1}/LANG.lemmas.tsv, \
             {0}/{1}/LANG.sentences.tsv, {0}/{2}/LANG.sentences.tsv or \
             {0}/{3}/LANG.words.tsv (LANG an ISO 639-1 code, optionally followed by -NAME)",
            dir.display(),
            data::UD_DIR,
            data::PUD_DIR,
            data::NOSPACE_DIR
        )));
    }
    for w in wanted {
        let any =
            language_sets().any(|f| *w == f.name || f.language.is_some_and(|l| l.as_str() == w));
        if !any {
            let mut names: Vec<&str> = language_sets().map(|f| f.name.as_str()).collect();
            names.sort_unstable();
            names.dedup();
            return Err(Error::usage(format!(
                "--langs: no data set named or in language {w:?}; available: {}",
                names.join(", ")
            )));
        }
    }
    Ok(DataSets {
        lemma_lists: sets.lemma_lists.into_iter().filter(keep).collect(),
        sentence_sets: sets.sentence_sets.into_iter().filter(keep).collect(),
        gold_sets: sets.gold_sets,
        word_sets: sets.word_sets.into_iter().filter(keep).collect(),
    })
}

/// Notes naming data files with identical content (the same sentences
/// measured twice), so a reader does not take them for independent evidence.
fn same_content(inputs: &[InputFile]) -> Vec<String> {
    let mut by_hash: std::collections::BTreeMap<&str, Vec<&str>> =
        std::collections::BTreeMap::new();
    for i in inputs {
        by_hash.entry(i.sha256.as_str()).or_default().push(i.role.as_str());
    }
    let mut notes: Vec<String> = by_hash
        .values()
        .filter(|roles| roles.len() > 1)
        .map(|roles| format!("{} have identical content (same SHA-256)", roles.join(", ")))
        .collect();
    notes.sort();
    notes
}

fn input_file(role: &str, path: &std::path::Path) -> Result<InputFile> {
    Ok(InputFile {
        role: role.to_string(),
        path: path.display().to_string(),
        sha256: crate::input::sha256_of(path)?,
    })
}

/// The field of `analyzer` that serves `language`: the plain chain's only
/// field, a routed chain's branch for it, else its fallback.
fn field_for_language(analyzer: &Analyzer, language: LangCode) -> usize {
    let fields = analyzer.fields();
    fields
        .iter()
        .position(|f| f.language == Some(language))
        .unwrap_or(fields.len().saturating_sub(1))
}

fn conflation_section(
    plan: &DiagnosePlan,
    sets: &DataSets,
    inputs: &mut Vec<InputFile>,
    progress: &mut dyn FnMut(&str),
) -> Result<Vec<ConflationResult>> {
    let mut lists = Vec::with_capacity(sets.lemma_lists.len());
    for file in &sets.lemma_lists {
        let list = data::read_lemmas(&file.path)?;
        inputs.push(input_file(&format!("lemmas:{}", file.name), &file.path)?);
        lists.push((file, WordGroups::from_list(&list)));
    }
    let mut out = Vec::new();
    for (file, groups) in &lists {
        let Some(language) = file.language else { continue };
        progress(&format!("conflation: {} ({} words)", file.name, groups.words.len()));
        for chain in &plan.chains {
            let mut result = ConflationResult {
                chain: chain.name().clone(),
                set: file.name.clone(),
                language,
                analysis: chain.name().to_string(),
                words: groups.words.len(),
                groups: groups.lemmas.len(),
                ambiguous_forms: groups.ambiguous_forms,
                without_lemma: groups.without_lemma,
                figures: None,
                note: None,
            };
            match chain.for_language(language) {
                Err(why) => result.note = Some(why),
                Ok(spec) => {
                    let analyzer = Analyzer::build(&spec, &AnalysisContext::default())?;
                    let field = field_for_language(&analyzer, language);
                    let Some(f) = analyzer.fields().get(field) else { continue };
                    result.analysis = describe(&spec, &f.key);
                    let mut text = f.analyzer.clone();
                    result.figures = Some(conflation::assess(groups, &mut text, plan.top));
                }
            }
            out.push(result);
        }
    }
    Ok(out)
}

/// A short description of what ran: the stem language of a per-language
/// chain, or the field of a routed one.
fn describe(spec: &ChainSpec, field: &str) -> String {
    match &spec.body {
        ChainBody::Routed { .. } => format!("{} ({field})", spec.name),
        ChainBody::Plain(p) => {
            let stems: Vec<String> = p
                .steps
                .iter()
                .filter(|s| matches!(s, StepSpec::Stem { .. }))
                .map(StepSpec::label)
                .collect();
            if stems.is_empty() {
                spec.name.to_string()
            } else {
                format!("{} ({})", spec.name, stems.join(", "))
            }
        }
    }
}

/// Each routed chain with its own detector, then with each other detector
/// on the same route (a variant the chain's languages rule out is skipped
/// with a note).
fn routing_section(
    routed: &[&ChainUnderTest],
    sets: &DataSets,
    inputs: &mut Vec<InputFile>,
    notes: &mut Vec<String>,
    progress: &mut dyn FnMut(&str),
) -> Result<Vec<RoutingResult>> {
    let mut texts = Vec::with_capacity(sets.sentence_sets.len());
    for file in &sets.sentence_sets {
        let sentences = data::read_sentences(&file.path)?;
        inputs
            .push(input_file(&format!("sentences:{}/{}", file.collection, file.name), &file.path)?);
        texts.push((file, sentences));
    }
    let mut out = Vec::new();
    for chain in routed {
        let Some(own) = chain.spec().route().map(|r| r.detector) else { continue };
        let kinds = std::iter::once(own).chain(DetectorKind::ALL.into_iter().filter(|k| *k != own));
        for kind in kinds {
            let mut spec = chain.spec().clone();
            if let ChainBody::Routed { route } = &mut spec.body {
                route.detector = kind;
            }
            let analyzer = match Analyzer::build(&spec, &AnalysisContext::default()) {
                Ok(a) => a,
                Err(e) if kind != own => {
                    notes.push(format!("routing: {} with the {kind} detector: {e}", chain.name()));
                    continue;
                }
                Err(e) => return Err(e),
            };
            for (file, sentences) in &texts {
                let Some(language) = file.language else { continue };
                progress(&format!(
                    "routing: {} ({kind}) on {}/{} ({} sentences)",
                    chain.name(),
                    file.collection,
                    file.name,
                    sentences.len()
                ));
                let refs: Vec<&str> = sentences.iter().map(|s| s.text.as_str()).collect();
                let Some(figures) = routing::route_sentences(&analyzer, language, &refs) else {
                    continue;
                };
                out.push(RoutingResult {
                    chain: chain.name().clone(),
                    detector: kind,
                    collection: file.collection.clone(),
                    set: file.name.clone(),
                    language,
                    figures,
                });
            }
        }
    }
    Ok(out)
}

/// The pipeline of a chain cut right after its `hashtags` step, with the
/// step's vocabulary setting. A routed chain's English branch is preferred
/// (the gold sets are English), else its first pipeline with the step.
fn hashtag_prefix(spec: &ChainSpec) -> Option<(Pipeline, TagVocabulary)> {
    let cut = |p: &Pipeline| {
        let at = p.steps.iter().position(|s| matches!(s, StepSpec::Hashtags { .. }))?;
        let vocabulary = match p.steps.get(at) {
            Some(StepSpec::Hashtags { vocabulary, .. }) => *vocabulary,
            _ => return None,
        };
        Some((Pipeline { steps: p.steps.get(..=at)?.to_vec(), ..p.clone() }, vocabulary))
    };
    if let Some(route) = spec.route() {
        let english = route.branches.iter().find(|b| b.language.as_str() == "en");
        if let Some(found) = english.and_then(|b| cut(&b.pipeline)) {
            return Some(found);
        }
    }
    spec.pipelines().find_map(cut)
}

/// A loaded frequency source.
struct LoadedSource {
    label: String,
    freqs: Option<Arc<WordFreqs>>,
}

fn load_sources(
    plan: &DiagnosePlan,
    inputs: &mut Vec<InputFile>,
    progress: &mut dyn FnMut(&str),
) -> Result<Vec<LoadedSource>> {
    let mut loaded = Vec::with_capacity(plan.freq_sources.len());
    for source in &plan.freq_sources {
        let (label, freqs) = match source {
            FreqSource::Corpus(path) => {
                progress(&format!(
                    "segmentation: learning word frequencies from {}",
                    path.display()
                ));
                let posts = read_corpus(path)?;
                inputs.push(input_file("freq-corpus", path)?);
                (
                    format!("corpus:{}", path.display()),
                    Arc::new(WordFreqs::learn(posts.iter().map(|p| p.text.as_str()))),
                )
            }
            FreqSource::List(path) => {
                let freqs = WordFreqs::read_counts(path)?;
                inputs.push(input_file("freq-list", path)?);
                (format!("list:{}", path.display()), Arc::new(freqs))
            }
            FreqSource::Builtin(language) => {
                let freqs = word_lists::builtin_list(*language).ok_or_else(|| {
                    Error::usage(format!(
                        "no built-in word list for language {:?}; accepted: {}, all",
                        language.as_ref().map_or("", LangCode::as_str),
                        join_list_languages()
                    ))
                })?;
                (builtin_label(*language), freqs)
            }
        };
        loaded.push(LoadedSource { label, freqs: Some(freqs) });
    }
    Ok(loaded)
}

/// The languages of the built-in lists, comma-separated.
pub fn join_list_languages() -> String {
    word_lists::list_languages().iter().map(LangCode::as_str).collect::<Vec<_>>().join(", ")
}

/// The label of a built-in list: `lists:de`, or `lists:all` for the merged one.
fn builtin_label(language: Option<LangCode>) -> String {
    format!("lists:{}", language.as_ref().map_or("all", LangCode::as_str))
}

/// The label of the table a chain's `hashtags` step segments with, given
/// the measured source (`corpus`: the source itself; `lists`: the step's
/// list; `corpus+lists`: both, joined by `+`).
fn table_label(step: Option<&StepSpec>, source: &LoadedSource) -> String {
    match step {
        Some(StepSpec::Hashtags { vocabulary, language }) if vocabulary.uses_lists() => {
            let list = builtin_label(*language);
            match (vocabulary.uses_corpus(), &source.freqs) {
                (true, Some(_)) => format!("{}+{list}", source.label),
                _ => list,
            }
        }
        _ => source.label.clone(),
    }
}

fn segmentation_section(
    plan: &DiagnosePlan,
    tagged: &[(&ChainUnderTest, Pipeline, TagVocabulary)],
    sets: &DataSets,
    inputs: &mut Vec<InputFile>,
    notes: &mut Vec<String>,
    progress: &mut dyn FnMut(&str),
) -> Result<Vec<SegmentationResult>> {
    let mut golds = Vec::with_capacity(sets.gold_sets.len());
    for file in &sets.gold_sets {
        let gold = data::read_gold(&file.path)?;
        inputs.push(input_file(&format!("gold:{}", file.name), &file.path)?);
        golds.push((file, gold));
    }
    let needs_freqs = tagged.iter().any(|(_, _, v)| v.uses_corpus());
    let mut sources = if needs_freqs { load_sources(plan, inputs, progress)? } else { Vec::new() };
    if needs_freqs && sources.is_empty() {
        notes.push(
            "segmentation: no word-frequency source (--freq-corpus, --freq-list or \
             --freq-builtin): chains that learn from the corpus split tags on case, digit and \
             underscore boundaries only (with corpus+lists, on their built-in list alone)"
                .to_string(),
        );
        sources.push(LoadedSource { label: "none".into(), freqs: None });
    }
    let none = [LoadedSource { label: "none".into(), freqs: None }];
    let mut out = Vec::new();
    for (chain, pipeline, vocabulary) in tagged {
        let chain_sources: &[LoadedSource] =
            if vocabulary.uses_corpus() { &sources } else { &none };
        for source in chain_sources {
            let ctx = AnalysisContext { word_freqs: source.freqs.clone() };
            let step = pipeline.steps.last();
            let table = match step {
                Some(step) => tag_table(step, &ctx)?,
                None => None,
            };
            let label = table_label(step, source);
            let mut analyzer = build_pipeline(pipeline, &ctx)?;
            for (file, gold) in &golds {
                progress(&format!(
                    "segmentation: {} on {} with {} ({} tags)",
                    chain.name(),
                    file.name,
                    label,
                    gold.len()
                ));
                let figures = segmentation::assess(&mut analyzer, gold, plan.top);
                out.push(SegmentationResult {
                    chain: chain.name().clone(),
                    gold: file.name.clone(),
                    source: label.clone(),
                    source_words: table.as_ref().map_or(0, |f| f.len()),
                    figures,
                });
            }
        }
    }
    Ok(out)
}

/// The chains under test whose `words` or `posts` tokenizer (in any field)
/// cuts scripts without spaces with `setting`.
fn chains_with(chains: &[ChainUnderTest], setting: Unspaced) -> Vec<ChainName> {
    chains
        .iter()
        .filter(|c| {
            c.spec()
                .pipelines()
                .any(|p| p.tokenizer != TokenizerKind::Whitespace && p.unspaced == setting)
        })
        .map(|c| c.name().clone())
        .collect()
}

fn unspaced_section(
    plan: &DiagnosePlan,
    sets: &DataSets,
    inputs: &mut Vec<InputFile>,
    progress: &mut dyn FnMut(&str),
) -> Result<Vec<UnspacedResult>> {
    let mut golds = Vec::with_capacity(sets.word_sets.len());
    for file in &sets.word_sets {
        let gold = data::read_word_gold(&file.path)?;
        inputs.push(input_file(&format!("words:{}", file.name), &file.path)?);
        golds.push((file, gold));
    }
    let mut out = Vec::new();
    for (file, gold) in &golds {
        let Some(language) = file.language else { continue };
        for setting in Unspaced::ALL {
            progress(&format!(
                "unspaced: {} with {} ({} sentences)",
                file.name,
                setting.as_str(),
                gold.len()
            ));
            let mut analyzer = unspaced::tokenizer(setting);
            out.push(UnspacedResult {
                set: file.name.clone(),
                language,
                setting,
                chains: chains_with(&plan.chains, setting),
                figures: unspaced::assess(&mut analyzer, gold, plan.top),
            });
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn en() -> LangCode {
        LangCode::parse("en").expect("valid")
    }

    #[test]
    fn sections_parse_and_reject_unknown_names() {
        let s = Sections::parse("routing, conflation").expect("known names");
        assert_eq!(
            s,
            Sections { conflation: true, routing: true, segmentation: false, unspaced: false }
        );
        let err = Sections::parse("routing,stems").expect_err("unknown").to_string();
        assert!(
            err.contains("\"stems\"")
                && err.contains("conflation, routing, segmentation, unspaced")
        );
        assert!(Sections::parse(" , ").is_err());
    }

    #[test]
    fn only_the_builtin_stemmed_chain_follows_the_language() {
        let chains = chains_under_test(builtin_chains(en()).expect("built-ins")).expect("ok");
        let kinds: Vec<(&str, bool)> = chains
            .iter()
            .map(|c| (c.name().as_str(), matches!(c, ChainUnderTest::StemPerLanguage(_))))
            .collect();
        assert_eq!(
            kinds,
            [("standard", false), ("stemmed", true), ("hashtag", false), ("routed", false)]
        );
        let stemmed = &chains[1];
        let de = stemmed.for_language(LangCode::parse("de").expect("valid")).expect("German");
        assert_eq!(describe(&de, "text"), "stemmed (stem(de, current))");
        // A chain-file chain of the same name but other steps is run as written.
        let mut other = stemmed.spec().clone();
        other.description = Some("mine".into());
        let chains = chains_under_test(vec![other]).expect("ok");
        assert!(matches!(chains[0], ChainUnderTest::Fixed(_)));
    }

    #[test]
    fn a_word_listed_twice_counts_the_sum_of_its_lines() {
        let dir = tempfile::tempdir().expect("temp dir");
        let list = dir.path().join("f.tsv");
        std::fs::write(&list, "run\t5\nrun\t6\nRun\t1\nit\t3\n").expect("written");
        let plan = DiagnosePlan {
            data: dir.path().to_path_buf(),
            chains: Vec::new(),
            sections: Sections::all(),
            languages: None,
            freq_sources: vec![FreqSource::List(list)],
            chain_file: None,
            top: 3,
        };
        let mut inputs = Vec::new();
        let loaded = load_sources(&plan, &mut inputs, &mut |_: &str| {}).expect("a valid list");
        let freqs = loaded[0].freqs.as_ref().expect("a table");
        // Hand-computed: run = 5 + 6 + 1 (lower-cased, lines summed), it = 3;
        // two words, 15 in all.
        assert_eq!((freqs.count("run"), freqs.count("it")), (12, 3));
        assert_eq!((freqs.len(), freqs.total()), (2, 15));
        assert_eq!(inputs[0].role, "freq-list");
    }

    #[test]
    fn the_hashtag_prefix_ends_with_the_step() {
        let chains = builtin_chains(en()).expect("built-ins");
        let hashtag = chains.iter().find(|c| c.name.as_str() == "hashtag").expect("built-in");
        let (prefix, vocabulary) = hashtag_prefix(hashtag).expect("has the step");
        let names: Vec<&str> = prefix.steps.iter().map(StepSpec::name).collect();
        assert_eq!(names, ["drop", "hashtags"]);
        assert_eq!(vocabulary, TagVocabulary::Corpus);
        let standard = chains.iter().find(|c| c.name.as_str() == "standard").expect("built-in");
        assert!(hashtag_prefix(standard).is_none());
    }
}
