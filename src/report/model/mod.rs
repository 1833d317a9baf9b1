//! The report model: every number and fact a report shows, computed before
//! any rendering. `report.json` is this model serialised; the Markdown, HTML
//! and CSV writers render the same value and compute nothing of their own.
//!
//! Plain data at the bottom of the house: it names only ids, language codes
//! and plain settings, never the modules that fill it (`bench` fills
//! [`Report`], with the scores of `scores.rs`; `diagnose` fills
//! [`diagnostics::Diagnostics`]; `gate` fills [`gate::GateOutcome`]).

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

pub mod diagnostics;
pub mod gate;
mod scores;

pub use scores::{
    BreakdownCell, ComparisonRow, MetricSummary, SystemSummary, MIN_BREAKDOWN_QUERIES,
};

use crate::ids::{ChainName, PostId, QueryId};

/// Version of the `report.json` layout; bumped on any incompatible change.
pub const SCHEMA_VERSION: u32 = 1;

/// A whole report.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Report {
    /// Layout version of this document.
    pub schema_version: u32,
    /// The program that wrote it.
    pub tool: ToolInfo,
    /// `run` or `score`.
    pub command: String,
    /// Every input file with its SHA-256, so two reports can be checked to
    /// rest on the same inputs.
    pub inputs: Vec<InputFile>,
    /// What the judgments and queries say, whatever the files' bytes: the
    /// gate compares this (absent from reports of older versions, which the
    /// gate compares by file hash).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub basis: Option<Basis>,
    /// Settings that shaped the numbers.
    pub settings: Settings,
    /// Sizes of the inputs.
    pub counts: Counts,
    /// Systems (chains or runs) in report order; the baseline is named in settings.
    pub systems: Vec<SystemInfo>,
    /// Mean and interval of each metric per system.
    pub summary: Vec<SystemSummary>,
    /// Every evaluated query's value per system and metric.
    pub per_query: Vec<PerQuery>,
    /// Each system against the baseline, per metric.
    pub comparisons: Vec<ComparisonRow>,
    /// The same per query language and per query tag.
    pub breakdowns: Vec<BreakdownCell>,
    /// Judged queries with no relevant post (not evaluated).
    pub skipped_queries: Vec<QueryId>,
    /// Per chain, the queries whose headline metric moved most against the
    /// baseline, each with an example post (`run` only).
    #[serde(default)]
    pub moved: Vec<MovedQuery>,
    /// Diagnostics of the chains on open linguistic data (`run --vet`
    /// only): conflation, routing and hashtag segmentation, with the SHA-256
    /// of every data file read. Absent from `report.json` without `--vet`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub diagnostics: Option<diagnostics::Diagnostics>,
    /// Warnings raised while reading and scoring.
    pub warnings: Vec<String>,
    /// Wall-clock figures; the only part that differs between identical runs.
    pub timing: Timing,
}

/// Name and version of the program.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct ToolInfo {
    /// Always `postassay`.
    pub name: String,
    /// The crate version.
    pub version: String,
}

/// One input file.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct InputFile {
    /// `corpus`, `queries`, `judgments`, `chains` or `run:NAME`.
    pub role: String,
    /// The path as given.
    pub path: String,
    /// Hex SHA-256 of the file's bytes.
    pub sha256: String,
}

/// The judgments and queries as parsed, independent of how their files
/// were written (BOM, CRLF line ends, CSV or four-column layout, line order,
/// a repeated line): two reports with the same basis measured the same
/// thing. The hashes are over a canonical text, one JSON array per line in
/// byte order of the ids: `[query, post, grade]` for judgments, `[query,
/// text, lang, tags]` (tags sorted) for queries.
#[derive(Debug, Clone, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct Basis {
    /// SHA-256 of the canonical judgments.
    pub judgments_sha256: String,
    /// SHA-256 of the canonical queries; `None` when no queries file was
    /// read (`score` without `--queries`).
    pub queries_sha256: Option<String>,
    /// Every judgment: query → post → grade, so that a changed basis can be
    /// described (pairs added, removed, grades changed).
    pub judgments: BTreeMap<QueryId, BTreeMap<PostId, u32>>,
    /// Per query, the first 16 hex digits of the SHA-256 of its canonical
    /// line, to name the queries whose text, language or tags changed.
    pub queries: BTreeMap<QueryId, String>,
}

/// Settings recorded in the report.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Settings {
    /// Metric keys in order.
    pub metrics: Vec<String>,
    /// Relevance threshold t.
    pub relevant_from: u32,
    /// `exp` or `linear`.
    pub gain: String,
    /// gmax used by ERR.
    pub max_grade: u32,
    /// The baseline system.
    pub baseline: ChainName,
    /// Seed of the randomization test and the bootstrap.
    pub seed: u64,
    /// Sampled sign assignments when n > 16.
    pub permutations: u32,
    /// Bootstrap resamples.
    pub bootstrap_resamples: u32,
    /// Significance level.
    pub alpha: f64,
    /// Results kept per query (`run` only).
    pub depth: Option<usize>,
    /// Whether post texts were left out of the report.
    #[serde(default)]
    pub redact: bool,
    /// Chain definitions (`run` only), as data.
    pub chains: Vec<serde_json::Value>,
}

/// Sizes of the inputs.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Counts {
    /// Posts in the corpus (`run` only).
    pub posts: Option<usize>,
    /// Queries in the query file, when one was read.
    pub queries: Option<usize>,
    /// Queries evaluated (judged, at least one relevant post).
    pub queries_evaluated: usize,
    /// Judged queries skipped for having no relevant post.
    pub queries_skipped: usize,
    /// Judged (query, post) pairs.
    pub judgments: usize,
}

/// Facts about one system beyond its scores.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct SystemInfo {
    /// System name.
    pub name: ChainName,
    /// Index cost of a chain (`run` only). Build time is under `timing`.
    pub cost: Option<Cost>,
    /// How a language-routed chain routed this run's posts and queries.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub routing: Option<RoutingInfo>,
    /// How many evaluated queries the system returned results for; the
    /// others score 0 on every metric.
    #[serde(default)]
    pub coverage: Coverage,
}

/// What a language-routed chain did with this run's posts and queries.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct RoutingInfo {
    /// The language detector and its settings, in words.
    pub detector: String,
    /// How a post's field is chosen (`declared` or `detected`).
    pub posts: String,
    /// How a query's language is found (`declared` or `detected`).
    pub queries: String,
    /// Which fields a query searches (`own`, `own_and_fallback`, `all`).
    pub search: String,
    /// How several fields' rankings are combined.
    pub fusion: String,
    /// Which posts the fallback field holds (`unrouted` or `all`).
    pub fallback_posts: String,
    /// Posts routed to each language, and to no language (`fallback`).
    pub posts_per_branch: std::collections::BTreeMap<String, u64>,
    /// Queries run.
    pub queries_run: usize,
    /// Queries whose language has no branch (they search the fallback).
    pub queries_without_branch: usize,
}

/// The evaluated queries a system answered (returned at least one post for).
#[derive(Debug, Clone, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct Coverage {
    /// Evaluated queries.
    pub evaluated: usize,
    /// Evaluated queries with at least one result.
    pub answered: usize,
    /// Evaluated queries with no result, in byte order of their ids.
    pub unanswered: Vec<QueryId>,
}

impl Coverage {
    /// The first unanswered ids named in [`Coverage::describe`].
    const NAMED: usize = 5;

    /// The coverage of `system` in words, for the warning and the reports'
    /// inputs section alike, or `None` when every evaluated query was
    /// answered. `kind` is `chain` or `run`.
    pub fn describe(&self, kind: &str, system: &str) -> Option<String> {
        if self.unanswered.is_empty() {
            return None;
        }
        let mut ids: Vec<&str> =
            self.unanswered.iter().take(Self::NAMED).map(QueryId::as_str).collect();
        if self.unanswered.len() > Self::NAMED {
            ids.push("…");
        }
        Some(format!(
            "{kind} {system} has no results for {} of the {} evaluated {} ({}); {} \
             0 on every metric",
            self.unanswered.len(),
            self.evaluated,
            if self.evaluated == 1 { "query" } else { "queries" },
            ids.join(", "),
            if self.unanswered.len() == 1 { "it scores" } else { "they score" }
        ))
    }
}

/// The deterministic part of what a chain costs.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Cost {
    /// Bytes on disk of the index.
    pub index_bytes: u64,
    /// Distinct terms over all fields.
    pub distinct_terms: u64,
    /// Mean tokens per post.
    pub mean_tokens_per_post: f64,
    /// Posts per index field (languages and fallback for routed chains).
    pub posts_per_field: BTreeMap<String, u64>,
}

/// One system's per-query values.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct PerQuery {
    /// System name.
    pub system: ChainName,
    /// Evaluated queries in byte order of their ids, values in metric order.
    pub queries: Vec<QueryValues>,
}

/// One query's metric values.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct QueryValues {
    /// Query id.
    pub query_id: QueryId,
    /// Values in `settings.metrics` order.
    pub values: Vec<f64>,
}

/// One query that moved, with an example post.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct MovedQuery {
    /// The compared chain.
    pub system: ChainName,
    /// The query.
    pub query_id: QueryId,
    /// The query text.
    pub query_text: String,
    /// Headline metric of the chain minus the baseline's on this query.
    pub delta: f64,
    /// A relevant post whose rank moved the same way, when there is one.
    pub post_id: Option<PostId>,
    /// Its text (absent when the report is redacted).
    pub post_text: Option<String>,
    /// Its grade.
    pub grade: Option<u32>,
    /// Its rank under the baseline (absent: not in the top `depth`).
    pub rank_baseline: Option<usize>,
    /// Its rank under the chain.
    pub rank_system: Option<usize>,
    /// Query terms the post matched under the baseline.
    pub matched_baseline: Vec<String>,
    /// Query terms the post matched under the chain.
    pub matched_system: Vec<String>,
}

/// Wall-clock figures (differ from run to run).
#[derive(Debug, Clone, Serialize, Deserialize, Default)]
pub struct Timing {
    /// Whole command, seconds.
    pub total_seconds: f64,
    /// Per chain (`run` only), in system order.
    pub chains: Vec<ChainTiming>,
}

/// Wall-clock cost of one chain.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct ChainTiming {
    /// Chain name.
    pub name: ChainName,
    /// Seconds to build the index (as measured when it was built, for an
    /// index read from the cache).
    pub build_seconds: f64,
    /// The index was read from the index cache, not built.
    #[serde(default)]
    pub from_cache: bool,
    /// Mean query latency in milliseconds.
    pub query_ms_mean: f64,
    /// 95th-percentile query latency in milliseconds (nearest rank).
    pub query_ms_p95: f64,
}

impl Report {
    /// Index of a metric key in `settings.metrics`.
    pub fn metric_index(&self, key: &str) -> Option<usize> {
        self.settings.metrics.iter().position(|m| m == key)
    }

    /// The comparison row of `system` on `metric`, if any.
    pub fn comparison(&self, system: &ChainName, metric: &str) -> Option<&ComparisonRow> {
        self.comparisons.iter().find(|r| &r.system == system && r.metric == metric)
    }
}
