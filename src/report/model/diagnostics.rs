//! The diagnostics part of the report model: everything `vet` (and `run
//! --vet`) measured, as plain data. `diagnostics.json` is [`Diagnostics`]
//! serialised, and the Diagnostics section of a report renders the same
//! value. `diagnose` fills it (the constructors and arithmetic of these
//! types, such as `PaiceCounts::from_assignments`, stay there); `report`
//! renders it.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use super::{InputFile, ToolInfo};
use crate::analysis::detect::{length_bucket, DetectorKind};
use crate::analysis::Unspaced;
use crate::ids::ChainName;
use crate::input::LangCode;

/// Version of the `diagnostics.json` layout.
pub const SCHEMA_VERSION: u32 = 1;

/// Which sections to compute.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct Sections {
    /// Conflation against lemma classes.
    pub conflation: bool,
    /// Routing accuracy.
    pub routing: bool,
    /// Hashtag segmentation.
    pub segmentation: bool,
    /// Word segmentation of scripts written without spaces.
    #[serde(default)]
    pub unspaced: bool,
}

/// One chain on one lemma list.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ConflationResult {
    /// The chain.
    pub chain: ChainName,
    /// The list's name (`en`, `it-pud`).
    pub set: String,
    /// Its language.
    pub language: LangCode,
    /// What ran: the chain, or for a routed chain the field used.
    pub analysis: String,
    /// Distinct words measured.
    pub words: usize,
    /// Concept groups.
    pub groups: usize,
    /// Forms left out for having several lemmas.
    pub ambiguous_forms: usize,
    /// Rows without a lemma (`_`).
    pub without_lemma: usize,
    /// The figures (`None` when the chain cannot serve the language).
    pub figures: Option<ConflationFigures>,
    /// Why there are no figures.
    pub note: Option<String>,
}

/// One routed chain on one sentence set.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RoutingResult {
    /// The chain.
    pub chain: ChainName,
    /// The detector it ran with: its own, or the other one on the same route
    /// (so that both detectors' accuracy and cost are shown).
    pub detector: DetectorKind,
    /// `ud` or `ud_pud`.
    pub collection: String,
    /// The set's name.
    pub set: String,
    /// Its language.
    pub language: LangCode,
    /// The figures.
    pub figures: RoutingFigures,
}

/// One chain's `hashtags` step on one gold set with one frequency source.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SegmentationResult {
    /// The chain.
    pub chain: ChainName,
    /// The gold set's name.
    pub gold: String,
    /// The frequency source's label (`corpus:PATH`, `list:PATH`, `lists:LANG`
    /// for a built-in list, `lists:all` for the merged one, `SOURCE+lists:LANG`
    /// for a `corpus+lists` step, or `none`).
    pub source: String,
    /// Distinct words in its table.
    pub source_words: usize,
    /// The figures.
    pub figures: SegmentationFigures,
}

/// One `unspaced` setting on one gold word segmentation.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct UnspacedResult {
    /// The gold set's name (`th`, `zh`, `ja`).
    pub set: String,
    /// Its language.
    pub language: LangCode,
    /// The setting of the `words` tokenizer.
    pub setting: Unspaced,
    /// The chains under test whose `words` or `posts` tokenizer uses it.
    pub chains: Vec<ChainName>,
    /// The figures.
    pub figures: WordFigures,
}

/// A whole diagnostics report (`diagnostics.json` is this, serialised).
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Diagnostics {
    /// Layout version.
    pub schema_version: u32,
    /// The program.
    pub tool: ToolInfo,
    /// Always `vet`.
    pub command: String,
    /// Every file read, with its SHA-256.
    pub inputs: Vec<InputFile>,
    /// Chains in report order.
    pub chains: Vec<ChainName>,
    /// Chain definitions as data.
    pub chain_specs: Vec<serde_json::Value>,
    /// Sections computed.
    pub sections: Sections,
    /// Conflation results: by set, then chain order.
    pub conflation: Vec<ConflationResult>,
    /// Routing results: by chain, then detector (the chain's own first),
    /// then collection, then set.
    pub routing: Vec<RoutingResult>,
    /// Segmentation results: by chain, then gold set, then source.
    pub segmentation: Vec<SegmentationResult>,
    /// Word segmentation results: by gold set, then setting.
    #[serde(default)]
    pub unspaced: Vec<UnspacedResult>,
    /// What could not be measured, and why.
    pub notes: Vec<String>,
}

// Conflation (filled by `diagnose::conflation`).

/// Paice's pair counts for one chain on one word list.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct PaiceCounts {
    /// Words `W`.
    pub words: u64,
    /// Desired merge total (pairs of words sharing a concept).
    pub gdmt: u64,
    /// Global unachieved merge total.
    pub gumt: u64,
    /// Desired non-merge total (pairs of words of different concepts).
    pub gdnt: u64,
    /// Global wrongly-merged total.
    pub gwmt: u64,
}

/// A concept group split over several stem classes.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SplitGroup {
    /// The lemma.
    pub lemma: String,
    /// Words in the group.
    pub words: usize,
    /// Each stem class the group's words fell into, largest first.
    pub stems: Vec<StemForms>,
}

/// The words of one stem class (within a group or overall).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StemForms {
    /// The stem (empty for a word the chain drops entirely).
    pub stem: String,
    /// Its forms, in byte order (at most `diagnose::conflation::EXAMPLE_FORMS`).
    pub forms: Vec<String>,
    /// How many forms in all.
    pub count: usize,
}

/// A stem class that merges words of several concept groups.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MergedStem {
    /// The stem.
    pub stem: String,
    /// Words in the class.
    pub words: usize,
    /// Each concept in the class, largest first (`stem` holds the lemma).
    pub lemmas: Vec<StemForms>,
}

/// Everything measured for one chain on one word list.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ConflationFigures {
    /// Paice's counts.
    pub counts: PaiceCounts,
    /// UI.
    pub understemming: Option<f64>,
    /// OI.
    pub overstemming: Option<f64>,
    /// SW = OI / UI.
    pub stemming_weight: Option<f64>,
    /// Concept groups of two words or more.
    pub multi_word_groups: usize,
    /// Share of those whose words all share one stem.
    pub fully_conflated: Option<f64>,
    /// Mean number of stem classes per group of two words or more.
    pub mean_stems_per_group: Option<f64>,
    /// Words the chain outputs no term for.
    pub words_without_terms: usize,
    /// The groups split into most stems (then largest, then lemma order).
    pub worst_splits: Vec<SplitGroup>,
    /// The stems merging most concepts (then largest, then stem order).
    pub worst_merges: Vec<MergedStem>,
}

// Routing (filled by `diagnose::routing`).

/// Label of the fallback field in confusion rows.
pub const FALLBACK_LABEL: &str = "other";

/// The length buckets in increasing order (labels of [`length_bucket`]).
pub fn buckets() -> [&'static str; 4] {
    [length_bucket(0), length_bucket(21), length_bucket(61), length_bucket(141)]
}

/// Accuracy on the sentences of one length bucket.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BucketFigures {
    /// The bucket's label.
    pub bucket: String,
    /// Sentences in it.
    pub sentences: usize,
    /// Routed to their language's field.
    pub correct: usize,
    /// `correct / sentences` (`None` for an empty bucket).
    pub accuracy: Option<f64>,
    /// Sent to the fallback field.
    pub to_fallback: usize,
}

/// Routing of one set of sentences of one language.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RoutingFigures {
    /// Whether the route has a field for the language.
    pub routable: bool,
    /// Sentences.
    pub sentences: usize,
    /// Routed to their language's field.
    pub correct: usize,
    /// `correct / sentences` (`None` without sentences).
    pub accuracy: Option<f64>,
    /// Sentences sent to the fallback field.
    pub to_fallback: usize,
    /// Per length bucket, in [`buckets`] order (every bucket listed).
    pub by_length: Vec<BucketFigures>,
    /// Field label (a language code or [`FALLBACK_LABEL`]) → sentences.
    pub confusion: BTreeMap<String, usize>,
    /// Mean CPU time of language detection per sentence, in microseconds
    /// (a measurement, so it varies from run to run; `None` when not
    /// measured).
    pub micros_per_sentence: Option<f64>,
}

// Hashtag segmentation (filled by `diagnose::segmentation`).

/// One wrong segmentation, as an example.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct SegmentationError {
    /// Line in the gold file.
    pub line: u64,
    /// The tag.
    pub tag: String,
    /// The predicted parts, space-separated.
    pub predicted: String,
    /// The gold segmentation.
    pub gold: String,
}

/// Totals over a gold set.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SegmentationFigures {
    /// Tags scored.
    pub tags: usize,
    /// Exactly matched tags.
    pub exact: usize,
    /// `exact / tags`.
    pub exact_accuracy: Option<f64>,
    /// Tags left out of the boundary figures (see the module docs).
    pub unaligned: usize,
    /// Boundaries predicted.
    pub predicted_boundaries: usize,
    /// Gold boundaries.
    pub gold_boundaries: usize,
    /// Boundaries in both.
    pub correct_boundaries: usize,
    /// Micro-averaged boundary precision.
    pub precision: Option<f64>,
    /// Micro-averaged boundary recall.
    pub recall: Option<f64>,
    /// Harmonic mean of precision and recall.
    pub f1: Option<f64>,
    /// The first wrong segmentations in file order (as many as asked for,
    /// see `diagnose::segmentation::assess`).
    pub errors: Vec<SegmentationError>,
}

// Word segmentation of unspaced scripts (filled by `diagnose::unspaced`).

/// A sentence where the prediction differs from the gold.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct SentenceMiss {
    /// The sentence id.
    pub id: String,
    /// The tokens, separated by spaces.
    pub predicted: String,
    /// The gold words, separated by spaces.
    pub gold: String,
}

/// The figures of one setting on one gold set.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct WordFigures {
    /// Sentences scored.
    pub sentences: usize,
    /// Sentences whose gold words do not spell the text (not scored).
    pub unaligned: usize,
    /// Tokens produced on the scored sentences.
    pub tokens: usize,
    /// Predicted boundaries (places where a token starts or ends).
    pub predicted_boundaries: usize,
    /// Gold boundaries.
    pub gold_boundaries: usize,
    /// Places in both.
    pub correct_boundaries: usize,
    /// Σ correct / Σ predicted.
    pub precision: Option<f64>,
    /// Σ correct / Σ gold.
    pub recall: Option<f64>,
    /// Harmonic mean of precision and recall.
    pub f1: Option<f64>,
    /// Gold words with a letter or digit.
    pub gold_words: usize,
    /// Of those, found as a token with the same span.
    pub words_found: usize,
    /// `words_found / gold_words`.
    pub word_recall: Option<f64>,
    /// The first sentences (file order) where the boundaries differ.
    pub misses: Vec<SentenceMiss>,
}
