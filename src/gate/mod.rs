//! The regression gate: compares a current report with a baseline report and
//! decides, per system and metric, whether retrieval quality dropped more
//! than allowed. It sits after `report` in the data flow (input → analysis →
//! index → search → eval → stats → report → **gate**): it reads two
//! `report.json` documents, recomputes the paired tests from their per-query
//! values with [`crate::stats`], and fills a [`GateOutcome`] (the gate part
//! of the report model), which [`crate::report::gate_markdown`] and
//! [`crate::report::gate_junit`] render. The CLI maps a failed gate to exit 1.
//!
//! # The rule
//!
//! Every system present in both reports is checked on every metric present
//! in both (or on the metrics the caller lists). With drop = baseline mean −
//! current mean:
//!
//! - a metric with no limit of its own (and no `*` limit) may not drop at
//!   all: any drop larger than [`DROP_TOLERANCE`] fails. The bench is
//!   deterministic, so an unchanged chain on unchanged inputs gives the same
//!   numbers bit for bit, and a drop is a real change in ranking; a
//!   demanding CI user grants tolerance explicitly, metric by metric;
//! - an absolute limit (`ndcg@10=0.02`) allows a drop up to that amount; a
//!   relative limit (`map=5`, in percent of the baseline mean) allows a drop
//!   up to that share; when both are given, exceeding either fails;
//! - with `require_significance`, a drop that exceeds its limit fails only
//!   when the paired randomization test of the two reports' per-query values
//!   (queries matched by id, the current report's seed and number of
//!   permutations) gives p < α. The paired t-test is computed and shown too,
//!   for information; the decision uses the randomization test, as the
//!   reports' own significance marks do. No multiple-comparison adjustment
//!   is applied: adjusting would make the gate more lenient;
//! - a system of the baseline that the current report lacks fails the gate
//!   (a guarded chain that disappears is not a pass), unless the caller
//!   allows it by name (`allow_missing`); a system only the current report
//!   has is a warning, so adding a chain never breaks the build;
//! - `unjudged@k` is a diagnostic of the judgments, not of ranking quality:
//!   it is shown but never gated (and a rise is named in a warning, since it
//!   means the current chains retrieve posts nobody judged: pool and judge
//!   them).
//!
//! A chain whose definition differs between the reports (a step, a
//! stemming language, a routing setting) is named with what changed: that
//! is often the point of the change under review, so it is shown, not
//! refused.
//!
//! Reports resting on different judgments or queries, or scored with a
//! different relevance threshold, gain or highest grade, measure different
//! things: the gate refuses them unless `allow_different_inputs` is set, in
//! which case the differences become warnings. Judgments and queries are
//! compared by what they say (the reports' `basis`), not by the bytes of
//! their files, and a refusal says what changed (pairs added, grades
//! changed, queries added …).

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

use serde::Deserialize;

use crate::error::{Error, Result};
use crate::eval::Metric;
use crate::ids::{ChainName, PostId, QueryId};
use crate::report::gate_markdown as markdown;
use crate::report::model::{Report, SCHEMA_VERSION};
use crate::report::text::{chain_definition, definition_parts};
use crate::stats;

pub use crate::report::gate_junit::render_junit;
pub use crate::report::gate_markdown::render_markdown;
pub use crate::report::model::gate::{
    Check, DefinitionChange, GateOutcome, Limit, MissingSystem, Verdict,
};

/// A drop no larger than this is no drop: it absorbs float rounding, like the
/// 1e-12 tolerance metrics.md uses for ties.
pub const DROP_TOLERANCE: f64 = 1e-12;

/// Significance level used when none is given.
pub const DEFAULT_ALPHA: f64 = 0.05;

/// The metric key of a limit that applies to every metric without a limit
/// of its own (`--max-drop '*=0.01'`).
pub const ANY_METRIC: &str = "*";

/// The roles of `report.json` `inputs` that must be identical in both
/// reports (formats.md: a report records each input's SHA-256).
const SAME_INPUT_ROLES: [&str; 2] = ["judgments", "queries"];

impl Limit {
    /// True when neither an absolute nor a relative limit is set.
    pub fn is_zero_tolerance(&self) -> bool {
        self.absolute.is_none() && self.relative_percent.is_none()
    }

    /// Whether a drop from `baseline` to `current` exceeds this limit.
    pub fn is_exceeded(&self, baseline: f64, current: f64) -> bool {
        let drop = baseline - current;
        if self.is_zero_tolerance() {
            return drop > DROP_TOLERANCE;
        }
        let over_absolute = self.absolute.is_some_and(|a| drop > a + DROP_TOLERANCE);
        // Written as an absolute allowance so a baseline mean of 0 needs no
        // division (no drop below 0 is possible there anyway).
        let over_relative = self
            .relative_percent
            .is_some_and(|p| drop > baseline.abs() * p / 100.0 + DROP_TOLERANCE);
        over_absolute || over_relative
    }
}

/// Drop limits by metric key, as given by `--max-drop` and
/// `--max-drop-relative`. Default: none (every metric at zero tolerance).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Thresholds {
    absolute: BTreeMap<String, f64>,
    relative_percent: BTreeMap<String, f64>,
}

impl Thresholds {
    /// Add an absolute limit from `METRIC=VALUE` (`ndcg@10=0.02`, or `*=0.02`
    /// for every metric without its own); VALUE is a finite number ≥ 0.
    pub fn add_absolute(&mut self, spec: &str) -> Result<()> {
        let (key, value) = parse_limit(spec, "--max-drop", false)?;
        insert_once(&mut self.absolute, key, value, "--max-drop")
    }

    /// Add a relative limit from `METRIC=PCT` (`map=5` or `map=5%`): the
    /// largest drop in percent of the baseline mean, a finite number ≥ 0.
    pub fn add_relative(&mut self, spec: &str) -> Result<()> {
        let (key, value) = parse_limit(spec, "--max-drop-relative", true)?;
        insert_once(&mut self.relative_percent, key, value, "--max-drop-relative")
    }

    /// The limit of one metric: its own, else the `*` one, for each kind.
    pub fn limit(&self, metric: &str) -> Limit {
        let pick = |m: &BTreeMap<String, f64>| m.get(metric).or_else(|| m.get(ANY_METRIC)).copied();
        Limit { absolute: pick(&self.absolute), relative_percent: pick(&self.relative_percent) }
    }

    /// Metric keys named by a limit (without `*`), in byte order.
    pub fn named_metrics(&self) -> BTreeSet<&str> {
        self.absolute
            .keys()
            .chain(self.relative_percent.keys())
            .map(String::as_str)
            .filter(|k| *k != ANY_METRIC)
            .collect()
    }
}

/// Parse `METRIC=VALUE`; the metric key is canonicalised (`p@05` → `p@5`).
fn parse_limit(spec: &str, flag: &str, percent: bool) -> Result<(String, f64)> {
    let what = if percent { "METRIC=PCT" } else { "METRIC=VALUE" };
    let (key, value) = spec
        .split_once('=')
        .ok_or_else(|| Error::usage(format!("{flag}: expected {what}, found {spec:?}")))?;
    let key = key.trim();
    let key = if key == ANY_METRIC {
        ANY_METRIC.to_string()
    } else {
        let metric: Metric =
            key.parse().map_err(|e: Error| Error::usage(format!("{flag} {spec:?}: {e}")))?;
        if metric.is_diagnostic() {
            return Err(Error::usage(format!(
                "{flag} {spec:?}: {metric} is a diagnostic of the judgments (the share of \
                 unjudged posts), not a quality measure, and is never gated; pool and judge \
                 the unjudged posts instead"
            )));
        }
        metric.key()
    };
    let raw = value.trim();
    let number = if percent { raw.strip_suffix('%').unwrap_or(raw).trim() } else { raw };
    let unit = if percent { "a percentage" } else { "a number" };
    let parsed: f64 = number.parse().map_err(|_| {
        Error::usage(format!("{flag} {spec:?}: expected {unit} ≥ 0 after '=', found {raw:?}"))
    })?;
    if !parsed.is_finite() || parsed < 0.0 {
        return Err(Error::usage(format!(
            "{flag} {spec:?}: expected {unit} ≥ 0 after '=', found {raw:?}"
        )));
    }
    Ok((key, parsed))
}

fn insert_once(map: &mut BTreeMap<String, f64>, key: String, value: f64, flag: &str) -> Result<()> {
    if map.contains_key(&key) {
        return Err(Error::usage(format!("{flag}: a limit for {key} is given twice")));
    }
    map.insert(key, value);
    Ok(())
}

/// What the gate is asked to do. `Default` is the demanding gate: every
/// common metric at zero tolerance, no significance required, α = 0.05,
/// different inputs refused.
#[derive(Debug, Clone, PartialEq)]
pub struct GateSettings {
    /// Drop limits per metric.
    pub thresholds: Thresholds,
    /// Fail only on drops whose paired randomization test has p < `alpha`.
    pub require_significance: bool,
    /// Significance level (0 < α < 1).
    pub alpha: f64,
    /// Compare reports built on different judgments, queries or scoring
    /// settings (the differences become warnings).
    pub allow_different_inputs: bool,
    /// Gate only these metric keys (canonical); `None`: every common metric.
    pub metrics: Option<Vec<String>>,
    /// Systems of the baseline that may be absent from the current report
    /// (`--allow-missing`); any other absent one fails the gate.
    pub allow_missing: Vec<ChainName>,
}

impl Default for GateSettings {
    fn default() -> GateSettings {
        GateSettings {
            thresholds: Thresholds::default(),
            require_significance: false,
            alpha: DEFAULT_ALPHA,
            allow_different_inputs: false,
            metrics: None,
            allow_missing: Vec::new(),
        }
    }
}

/// A report read from disk, with the path it was read from.
#[derive(Debug, Clone)]
pub struct LoadedReport {
    /// The `report.json` file read.
    pub path: PathBuf,
    /// Its content.
    pub report: Report,
}

/// The fields read first, to tell "not a report" and "a report of another
/// layout version" from a malformed report.
#[derive(Deserialize)]
struct Probe {
    schema_version: Option<u32>,
}

/// Read a report from a report directory (its `report.json`) or from a
/// `report.json` path. A report of another layout version is refused.
pub fn load_report(path: &Path) -> Result<LoadedReport> {
    let file = if path.is_dir() { path.join("report.json") } else { path.to_path_buf() };
    let text = std::fs::read_to_string(&file).map_err(|e| Error::io(&file, e))?;
    let json_error = |e: serde_json::Error, what: &str| {
        let line = u64::try_from(e.line()).unwrap_or(0).max(1);
        Error::at_line(&file, line, format!("expected {what}, found a problem: {e}"))
    };
    let probe: Probe =
        serde_json::from_str(&text).map_err(|e| json_error(e, "a postassay report.json"))?;
    match probe.schema_version {
        None => {
            return Err(Error::in_file(
                &file,
                "expected a postassay report.json with a \"schema_version\" field, found none",
            ))
        }
        Some(v) if v != SCHEMA_VERSION => {
            return Err(Error::in_file(
                &file,
                format!(
                    "expected report layout schema_version {SCHEMA_VERSION}, found {v}: \
                     rebuild the report with this version of postassay"
                ),
            ))
        }
        Some(_) => {}
    }
    let report: Report = serde_json::from_str(&text)
        .map_err(|e| json_error(e, &format!("a report of schema_version {SCHEMA_VERSION}")))?;
    Ok(LoadedReport { path: file, report })
}

/// One way two reports differ in what they were built on.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct InputDifference {
    /// What differs: an input role (`judgments`, `queries`) or a setting
    /// (`relevant_from`, `gain`, `max_grade`).
    pub what: String,
    /// How: for a setting `baseline 1; current 2`; for judgments and
    /// queries what was added, removed or changed, with the files.
    pub how: String,
}

/// The differences in judgments, queries and scoring settings between two
/// reports, in a fixed order (judgments, queries, then settings), and notes
/// on files whose bytes differ while what they say does not.
///
/// Judgments and queries are compared by what they say (each report's
/// [`Basis`](crate::report::model::Basis)), so the same judgments saved
/// with a BOM, CRLF line ends, in the four-column layout or with a line
/// repeated are the same inputs; reports without a basis (older versions)
/// are compared by file hash.
pub fn input_differences(
    baseline: &Report,
    current: &Report,
) -> (Vec<InputDifference>, Vec<String>) {
    let mut out = Vec::new();
    let mut notes = Vec::new();
    let files = |role: &str| {
        format!(
            "baseline {}; current {}",
            describe_files(baseline, role),
            describe_files(current, role)
        )
    };
    let same_bytes = |role: &str| input_hashes(baseline, role) == input_hashes(current, role);
    match (&baseline.basis, &current.basis) {
        (Some(b), Some(c)) => {
            if b.judgments_sha256 != c.judgments_sha256 {
                out.push(InputDifference {
                    what: "judgments".to_string(),
                    how: format!(
                        "{} ({})",
                        judgment_changes(&b.judgments, &c.judgments),
                        files("judgments")
                    ),
                });
            } else if !same_bytes("judgments") {
                notes.push(format!(
                    "the judgments files differ in bytes but hold the same judgments ({})",
                    files("judgments")
                ));
            }
            match (&b.queries_sha256, &c.queries_sha256) {
                (Some(bq), Some(cq)) if bq != cq => out.push(InputDifference {
                    what: "queries".to_string(),
                    how: format!(
                        "{} ({})",
                        query_changes(&b.queries, &c.queries),
                        files("queries")
                    ),
                }),
                (Some(_), Some(_)) if !same_bytes("queries") => notes.push(format!(
                    "the queries files differ in bytes but hold the same queries ({})",
                    files("queries")
                )),
                (Some(_), None) | (None, Some(_)) => {
                    out.push(InputDifference { what: "queries".to_string(), how: files("queries") })
                }
                _ => {}
            }
        }
        _ => {
            for role in SAME_INPUT_ROLES {
                if !same_bytes(role) {
                    out.push(InputDifference { what: role.to_string(), how: files(role) });
                }
            }
        }
    }
    let (b, c) = (&baseline.settings, &current.settings);
    let settings = [
        ("relevant_from", b.relevant_from.to_string(), c.relevant_from.to_string()),
        ("gain", b.gain.clone(), c.gain.clone()),
        ("max_grade", b.max_grade.to_string(), c.max_grade.to_string()),
    ];
    for (what, bv, cv) in settings {
        if bv != cv {
            out.push(InputDifference {
                what: what.to_string(),
                how: format!("baseline {bv}; current {cv}"),
            });
        }
    }
    (out, notes)
}

/// A report's files of one role: `sha256 0123456789ab (path)`, or `none`.
fn describe_files(r: &Report, role: &str) -> String {
    let found: Vec<String> = r
        .inputs
        .iter()
        .filter(|i| i.role == role)
        .map(|i| format!("sha256 {} ({})", short_hash(&i.sha256), i.path))
        .collect();
    if found.is_empty() {
        "none".to_string()
    } else {
        found.join(", ")
    }
}

/// How many examples of each kind of change a message names.
const EXAMPLES: usize = 3;

/// `items` counted, with the first few named: `2 added (q9 p1 = 2, q9 p4 = 0)`.
fn counted(what: &str, items: &[String]) -> Option<String> {
    if items.is_empty() {
        return None;
    }
    let mut named: Vec<&str> = items.iter().take(EXAMPLES).map(String::as_str).collect();
    if items.len() > EXAMPLES {
        named.push("…");
    }
    Some(format!("{} {what} ({})", items.len(), named.join(", ")))
}

/// How the judgments changed: pairs added, removed, grades changed.
fn judgment_changes(
    b: &BTreeMap<QueryId, BTreeMap<PostId, u32>>,
    c: &BTreeMap<QueryId, BTreeMap<PostId, u32>>,
) -> String {
    let flat = |m: &BTreeMap<QueryId, BTreeMap<PostId, u32>>| -> BTreeMap<(QueryId, PostId), u32> {
        m.iter()
            .flat_map(|(q, posts)| posts.iter().map(move |(p, g)| ((q.clone(), p.clone()), *g)))
            .collect()
    };
    let (b, c) = (flat(b), flat(c));
    let added: Vec<String> = c
        .iter()
        .filter(|(k, _)| !b.contains_key(k))
        .map(|((q, p), g)| format!("{q} {p} = {g}"))
        .collect();
    let removed: Vec<String> = b
        .iter()
        .filter(|(k, _)| !c.contains_key(k))
        .map(|((q, p), g)| format!("{q} {p} = {g}"))
        .collect();
    let changed: Vec<String> = b
        .iter()
        .filter_map(|(k, g)| {
            c.get(k).filter(|h| *h != g).map(|h| format!("{} {}: {g} → {h}", k.0, k.1))
        })
        .collect();
    let parts: Vec<String> = [
        counted(if added.len() == 1 { "pair added" } else { "pairs added" }, &added),
        counted(if removed.len() == 1 { "pair removed" } else { "pairs removed" }, &removed),
        counted(if changed.len() == 1 { "grade changed" } else { "grades changed" }, &changed),
    ]
    .into_iter()
    .flatten()
    .collect();
    parts.join(", ")
}

/// How the queries changed: added, removed, changed in text, language or tags.
fn query_changes(b: &BTreeMap<QueryId, String>, c: &BTreeMap<QueryId, String>) -> String {
    let ids = |keep: &dyn Fn(&QueryId, &String) -> bool,
               from: &BTreeMap<QueryId, String>|
     -> Vec<String> {
        from.iter().filter(|(q, h)| keep(q, h)).map(|(q, _)| q.to_string()).collect()
    };
    let added = ids(&|q, _| !b.contains_key(q), c);
    let removed = ids(&|q, _| !c.contains_key(q), b);
    let changed = ids(&|q, h| c.get(q).is_some_and(|x| x != h), b);
    let parts: Vec<String> = [
        counted("added", &added),
        counted("removed", &removed),
        counted("changed in text, language or tags", &changed),
    ]
    .into_iter()
    .flatten()
    .collect();
    parts.join(", ")
}

/// The SHA-256 of a report's inputs of one role, sorted.
fn input_hashes<'a>(r: &'a Report, role: &str) -> Vec<&'a str> {
    let mut h: Vec<&str> =
        r.inputs.iter().filter(|i| i.role == role).map(|i| i.sha256.as_str()).collect();
    h.sort_unstable();
    h
}

/// The first 12 hex digits of a SHA-256, enough to tell files apart in a
/// message.
fn short_hash(h: &str) -> &str {
    h.get(..12).unwrap_or(h)
}

impl Verdict {
    /// A short label for tables.
    pub fn label(self) -> &'static str {
        match self {
            Verdict::Pass => "pass",
            Verdict::WithinLimit => "pass (within limit)",
            Verdict::NotSignificant => "pass (not significant)",
            Verdict::Regression => "REGRESSION",
            Verdict::NotGated => "not gated (diagnostic)",
        }
    }
}

impl Check {
    /// current mean − baseline mean.
    pub fn delta(&self) -> f64 {
        self.current_mean - self.baseline_mean
    }
}

/// The chains of both reports whose definitions differ (descriptions
/// aside), in `systems` order. Reports of `score` record no definitions.
fn definition_changes(b: &Report, c: &Report, systems: &[ChainName]) -> Vec<DefinitionChange> {
    let without_description = |v: &serde_json::Value| {
        let mut v = v.clone();
        if let Some(map) = v.as_object_mut() {
            map.remove("description");
        }
        v
    };
    let mut out = Vec::new();
    for system in systems {
        let (Some(bd), Some(cd)) =
            (chain_definition(b, system.as_str()), chain_definition(c, system.as_str()))
        else {
            continue;
        };
        if without_description(bd) == without_description(cd) {
            continue;
        }
        let (bp, cp) = (definition_parts(bd), definition_parts(cd));
        let mut labels: Vec<&String> = bp.iter().map(|(l, _)| l).collect();
        labels.extend(cp.iter().map(|(l, _)| l).filter(|l| !bp.iter().any(|(x, _)| x == *l)));
        let text = |parts: &[(String, String)], label: &str| {
            parts.iter().find(|(l, _)| l == label).map_or("none".to_string(), |(_, t)| t.clone())
        };
        let parts = labels
            .into_iter()
            .filter(|l| l.as_str() != "description")
            .map(|l| (l.clone(), text(&bp, l), text(&cp, l)))
            .filter(|(_, x, y)| x != y)
            .collect();
        out.push(DefinitionChange { system: system.clone(), parts });
    }
    out
}

impl GateOutcome {
    /// The checks that failed.
    pub fn regressions(&self) -> impl Iterator<Item = &Check> {
        self.checks.iter().filter(|c| c.verdict == Verdict::Regression)
    }

    /// The systems whose absence fails the gate.
    pub fn missing_failures(&self) -> impl Iterator<Item = &MissingSystem> {
        self.missing.iter().filter(|m| !m.allowed)
    }

    /// True when no check failed and no guarded system is missing.
    pub fn passed(&self) -> bool {
        self.regressions().next().is_none() && self.missing_failures().next().is_none()
    }
}

/// Compare `current` with `baseline` under `settings`.
///
/// Errors (exit 2 in the CLI): reports on different inputs without
/// `allow_different_inputs` (the message lists every difference), a limit
/// or `--metrics` entry naming a metric neither report has, or nothing to
/// compare at all.
pub fn run_gate(
    baseline: &LoadedReport,
    current: &LoadedReport,
    settings: &GateSettings,
) -> Result<GateOutcome> {
    if !(settings.alpha > 0.0 && settings.alpha < 1.0) {
        return Err(Error::usage(format!(
            "--alpha: expected a number between 0 and 1, found {}",
            settings.alpha
        )));
    }
    let (b, c) = (&baseline.report, &current.report);
    let mut warnings = Vec::new();

    let (differences, notes) = input_differences(b, c);
    warnings.extend(notes);
    if !differences.is_empty() {
        let lines: Vec<String> =
            differences.iter().map(|d| format!("{}: {}", d.what, d.how)).collect();
        if !settings.allow_different_inputs {
            return Err(Error::usage(format!(
                "the reports were not built on the same inputs, so their numbers are not \
                 comparable (baseline {}, current {}):\n  {}\ngive --allow-different-inputs \
                 to compare them anyway",
                baseline.path.display(),
                current.path.display(),
                lines.join("\n  ")
            )));
        }
        warnings.extend(lines.into_iter().map(|l| format!("different inputs allowed: {l}")));
    }
    let (bc, cc) = (input_hashes(b, "corpus"), input_hashes(c, "corpus"));
    if bc != cc && !bc.is_empty() && !cc.is_empty() {
        warnings.push("the corpus differs between the reports".to_string());
    }
    let (seed, permutations) = (c.settings.seed, c.settings.permutations);
    if (b.settings.seed, b.settings.permutations) != (seed, permutations) {
        warnings.push(format!(
            "the reports use different test settings (baseline seed {} with {} permutations, \
             current seed {seed} with {permutations}); the gate uses the current report's",
            b.settings.seed, b.settings.permutations
        ));
    }

    let metrics = gated_metrics(b, c, settings, &mut warnings)?;
    let (systems, missing) = common_systems(b, c, &settings.allow_missing, &mut warnings)?;
    let mut checks = Vec::new();
    for system in &systems {
        for metric in &metrics {
            let (Some(bm), Some(cm)) =
                (summary_mean(b, system, metric), summary_mean(c, system, metric))
            else {
                warnings.push(format!(
                    "{system} {metric}: a report has no mean for it in its summary; not checked"
                ));
                continue;
            };
            let (base_values, cur_values) = paired_values(b, c, system, metric);
            let p_randomization =
                stats::randomization_test(&cur_values, &base_values, permutations, seed);
            let p_ttest = stats::paired_t_test(&cur_values, &base_values);
            let is_diagnostic = metric.parse::<Metric>().is_ok_and(|m| m.is_diagnostic());
            let limit = settings.thresholds.limit(metric);
            let verdict = if is_diagnostic {
                if cm > bm + DROP_TOLERANCE {
                    warnings.push(format!(
                        "{system}: {metric} rose from {} to {}: the current ranking retrieves \
                         more posts nobody judged, which its other metrics count as not \
                         relevant; pool and judge them (postassay pool, postassay judge)",
                        markdown::fixed(bm),
                        markdown::fixed(cm)
                    ));
                }
                Verdict::NotGated
            } else if !limit.is_exceeded(bm, cm) {
                if bm - cm > DROP_TOLERANCE {
                    Verdict::WithinLimit
                } else {
                    Verdict::Pass
                }
            } else if settings.require_significance
                && !p_randomization.is_some_and(|p| p < settings.alpha)
            {
                Verdict::NotSignificant
            } else {
                Verdict::Regression
            };
            checks.push(Check {
                system: system.clone(),
                metric: metric.clone(),
                baseline_mean: bm,
                current_mean: cm,
                limit,
                paired_queries: cur_values.len(),
                p_randomization,
                p_ttest,
                verdict,
            });
        }
    }
    if checks.is_empty() && missing.iter().all(|m| m.allowed) {
        return Err(Error::usage(format!(
            "nothing to compare: no system and metric appear in both {} and {}",
            baseline.path.display(),
            current.path.display()
        )));
    }
    if settings.require_significance
        && checks.iter().any(|c| c.verdict == Verdict::NotSignificant && c.paired_queries < 2)
    {
        warnings.push(
            "fewer than 2 queries are evaluated in both reports: no paired test can be run, so \
             with --require-significance no drop can fail the gate"
                .to_string(),
        );
    }
    Ok(GateOutcome {
        baseline_path: baseline.path.clone(),
        current_path: current.path.clone(),
        changed_definitions: definition_changes(b, c, &systems),
        checks,
        missing,
        warnings,
        require_significance: settings.require_significance,
        alpha: settings.alpha,
        seed,
        permutations,
    })
}

/// The metrics to check: those listed (or all of the current report's, in
/// its order) that both reports have; the others become warnings.
fn gated_metrics(
    b: &Report,
    c: &Report,
    settings: &GateSettings,
    warnings: &mut Vec<String>,
) -> Result<Vec<String>> {
    let in_b: BTreeSet<&str> = b.settings.metrics.iter().map(String::as_str).collect();
    let in_c: BTreeSet<&str> = c.settings.metrics.iter().map(String::as_str).collect();
    let known = |m: &str| in_b.contains(m) || in_c.contains(m);
    for m in settings.thresholds.named_metrics() {
        if !known(m) {
            return Err(Error::usage(format!(
                "a drop limit names {m}, which neither report has (baseline: {}; current: {})",
                b.settings.metrics.join(","),
                c.settings.metrics.join(",")
            )));
        }
    }
    let wanted: Vec<String> = match &settings.metrics {
        Some(list) => {
            for m in list {
                if !known(m) {
                    return Err(Error::usage(format!(
                        "--metrics names {m}, which neither report has (baseline: {}; \
                         current: {})",
                        b.settings.metrics.join(","),
                        c.settings.metrics.join(",")
                    )));
                }
            }
            list.clone()
        }
        None => {
            let mut all = c.settings.metrics.clone();
            all.extend(b.settings.metrics.iter().filter(|m| !in_c.contains(m.as_str())).cloned());
            all
        }
    };
    let mut out = Vec::new();
    for m in wanted {
        match (in_b.contains(m.as_str()), in_c.contains(m.as_str())) {
            (true, true) => out.push(m),
            (true, false) => warnings.push(format!("metric {m} is in the baseline report only")),
            (false, true) => warnings.push(format!("metric {m} is in the current report only")),
            (false, false) => {}
        }
    }
    Ok(out)
}

/// Systems of both reports, in the current report's order, and the systems
/// of the baseline the current report lacks (each allowed to go or not).
/// Systems only the current report has become warnings. An `allowed` name
/// that is no system of the baseline is a usage error (a typo would
/// otherwise allow nothing).
fn common_systems(
    b: &Report,
    c: &Report,
    allowed: &[ChainName],
    warnings: &mut Vec<String>,
) -> Result<(Vec<ChainName>, Vec<MissingSystem>)> {
    let names =
        |r: &Report| -> Vec<ChainName> { r.summary.iter().map(|s| s.system.clone()).collect() };
    let (in_b, in_c) = (names(b), names(c));
    if let Some(unknown) = allowed.iter().find(|a| !in_b.contains(a)) {
        let list: Vec<&str> = in_b.iter().map(ChainName::as_str).collect();
        return Err(Error::usage(format!(
            "--allow-missing {unknown}: the baseline has no system of that name (baseline: {})",
            list.join(", ")
        )));
    }
    let missing: Vec<MissingSystem> = in_b
        .iter()
        .filter(|s| !in_c.contains(s))
        .map(|s| MissingSystem { system: s.clone(), allowed: allowed.contains(s) })
        .collect();
    for m in missing.iter().filter(|m| m.allowed) {
        warnings.push(format!(
            "system {} of the baseline is not in the current report (allowed by --allow-missing)",
            m.system
        ));
    }
    for s in in_c.iter().filter(|s| !in_b.contains(s)) {
        warnings.push(format!("system {s} is in the current report only"));
    }
    Ok((in_c.into_iter().filter(|s| in_b.contains(s)).collect(), missing))
}

fn summary_mean(r: &Report, system: &ChainName, metric: &str) -> Option<f64> {
    r.summary
        .iter()
        .find(|s| &s.system == system)?
        .metrics
        .iter()
        .find(|m| m.metric == metric)
        .map(|m| m.mean)
}

/// Per-query values of `metric` for `system` in both reports, over the
/// queries both evaluated, in byte order of the query id.
fn paired_values(b: &Report, c: &Report, system: &ChainName, metric: &str) -> (Vec<f64>, Vec<f64>) {
    let values = |r: &Report| -> BTreeMap<QueryId, f64> {
        let Some(m) = r.metric_index(metric) else { return BTreeMap::new() };
        r.per_query
            .iter()
            .filter(|p| &p.system == system)
            .flat_map(|p| p.queries.iter())
            .filter_map(|q| q.values.get(m).map(|v| (q.query_id.clone(), *v)))
            .collect()
    };
    let (bv, cv) = (values(b), values(c));
    bv.iter().filter_map(|(q, b)| cv.get(q).map(|c| (*b, *c))).unzip()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn zero_tolerance_fails_any_drop_beyond_rounding() {
        let none = Limit::default();
        assert!(!none.is_exceeded(0.5, 0.5));
        assert!(!none.is_exceeded(0.5, 0.6));
        assert!(!none.is_exceeded(0.5, 0.5 - 1e-13));
        assert!(none.is_exceeded(0.5, 0.5 - 1e-9));
    }

    #[test]
    fn absolute_and_relative_limits() {
        let abs = Limit { absolute: Some(0.02), relative_percent: None };
        assert!(!abs.is_exceeded(0.50, 0.48), "a drop equal to the limit passes");
        assert!(abs.is_exceeded(0.50, 0.479));
        // 5% of 0.40 is 0.02.
        let rel = Limit { absolute: None, relative_percent: Some(5.0) };
        assert!(!rel.is_exceeded(0.40, 0.381));
        assert!(rel.is_exceeded(0.40, 0.379));
        // Both: exceeding either fails (0.015 ≤ 0.02 but > 5% of 0.2 = 0.01).
        let both = Limit { absolute: Some(0.02), relative_percent: Some(5.0) };
        assert!(both.is_exceeded(0.20, 0.185));
        assert!(!both.is_exceeded(0.20, 0.191));
        // A baseline of 0 cannot drop.
        assert!(!rel.is_exceeded(0.0, 0.0));
    }

    #[test]
    fn thresholds_parse_canonicalise_and_fall_back_to_star() {
        let mut t = Thresholds::default();
        t.add_absolute("p@05=0.1").unwrap();
        t.add_absolute("*=0.03").unwrap();
        t.add_relative("map=5%").unwrap();
        t.add_relative("ndcg@10 = 2.5").unwrap();
        assert_eq!(t.limit("p@5"), Limit { absolute: Some(0.1), relative_percent: None });
        assert_eq!(t.limit("map"), Limit { absolute: Some(0.03), relative_percent: Some(5.0) });
        assert_eq!(t.limit("ndcg@10"), Limit { absolute: Some(0.03), relative_percent: Some(2.5) });
        assert_eq!(t.named_metrics().into_iter().collect::<Vec<_>>(), ["map", "ndcg@10", "p@5"]);
        assert!(Thresholds::default().limit("mrr").is_zero_tolerance());
    }

    #[test]
    fn thresholds_reject_bad_specs() {
        let mut t = Thresholds::default();
        let err = |r: Result<()>| r.unwrap_err().to_string();
        assert!(err(t.add_absolute("ndcg@10")).contains("expected METRIC=VALUE"));
        assert!(err(t.add_absolute("ndcg@10=-1")).contains("expected a number ≥ 0"));
        assert!(err(t.add_absolute("ndcg@10=NaN")).contains("expected a number ≥ 0"));
        assert!(err(t.add_relative("map=x%")).contains("expected a percentage ≥ 0"));
        assert!(err(t.add_absolute("ndgc@10=0.1")).contains("unknown metric"));
        assert!(err(t.add_absolute("unjudged@10=0.1")).contains("never gated"));
        t.add_absolute("map=0.1").unwrap();
        assert!(err(t.add_absolute("map=0.2")).contains("given twice"));
    }
}
