//! Shared wording of the reports: number formats, the one-line finding per
//! compared system and the reindex case, built once as [`Span`]s so that
//! `report.md` and `report.html` say the same words. Rendering only: every
//! number comes from the report model (ratios of two model numbers are
//! formatted for display, never stored).
//!
//! Split by what it does: number formats and [`Span`]s here; the reindex
//! case and the per-system findings in `case.rs`; chain definitions in words
//! in `definition.rs`; the tables both renderings draw alike in `tables.rs`.

mod case;
mod definition;
mod tables;

use crate::plural::counted;
use crate::report::model::{BreakdownCell, ComparisonRow, Cost, Report, MIN_BREAKDOWN_QUERIES};
use crate::report::svg::esc;

pub use case::*;
pub use definition::*;
pub use tables::*;

/// Format a metric value for reading (three decimals; never `-0.000`).
pub fn fixed(x: f64) -> String {
    let s = format!("{x:.3}");
    if s == "-0.000" {
        "0.000".to_string()
    } else {
        s
    }
}

/// Format a signed difference (`+0.021`, `−0.004` with a true minus sign).
pub fn signed(x: f64) -> String {
    if x < 0.0 && fixed(-x) != "0.000" {
        format!("−{}", fixed(-x))
    } else {
        format!("+{}", fixed(x.max(0.0)))
    }
}

/// `p = 0.012`, or `p < 0.001` for very small values.
pub fn p_equals(p: Option<f64>) -> String {
    let text = pvalue(p);
    if text.starts_with('<') {
        format!("p {text}")
    } else {
        format!("p = {text}")
    }
}

/// Format a p-value: `< 0.001` below a thousandth, else two significant digits.
pub fn pvalue(p: Option<f64>) -> String {
    match p {
        None => "n/a".to_string(),
        Some(p) if p < 0.001 => "< 0.001".to_string(),
        Some(p) if p >= 0.1 => format!("{p:.2}"),
        Some(p) => format!("{p:.3}"),
    }
}

/// Inline text of the reindex case, rendered alike by Markdown and HTML.
#[derive(Debug, Clone, PartialEq)]
pub enum Span {
    /// Plain text.
    Text(String),
    /// A name (chain, metric, command): code in both renderings.
    Code(String),
    /// Emphasised text.
    Strong(Vec<Span>),
    /// A link to a section of the same report, with its text.
    Link(Section, Vec<Span>),
}

/// A section of the report that the reindex case links to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Section {
    /// Queries that moved most (`run` only).
    Moved,
    /// Timing, the wall-clock part.
    Timing,
    /// Every chain's definition (`run` only).
    Chains,
}

impl Section {
    /// The `id` of the section in `report.html`.
    pub fn html_id(self) -> &'static str {
        match self {
            Section::Moved => "moved",
            Section::Timing => "timing",
            Section::Chains => "chains",
        }
    }

    /// The anchor a Markdown viewer gives the section's heading (lowercase,
    /// spaces as hyphens).
    pub fn markdown_anchor(self) -> &'static str {
        match self {
            Section::Moved => "queries-that-moved-most",
            Section::Timing => "timing",
            Section::Chains => "chains",
        }
    }
}

/// Plain text span.
pub fn t(s: impl Into<String>) -> Span {
    Span::Text(s.into())
}

/// Code span (a name).
pub fn code(s: impl Into<String>) -> Span {
    Span::Code(s.into())
}

/// Render spans as Markdown.
pub fn spans_markdown(spans: &[Span]) -> String {
    spans
        .iter()
        .map(|s| match s {
            Span::Text(x) => x.clone(),
            Span::Code(x) => format!("`{x}`"),
            Span::Strong(inner) => format!("**{}**", spans_markdown(inner)),
            Span::Link(to, inner) => {
                format!("[{}](#{})", spans_markdown(inner), to.markdown_anchor())
            }
        })
        .collect()
}

/// Render spans as HTML (escaped).
pub fn spans_html(spans: &[Span]) -> String {
    spans
        .iter()
        .map(|s| match s {
            Span::Text(x) => esc(x),
            Span::Code(x) => format!("<code>{}</code>", esc(x)),
            Span::Strong(inner) => format!("<strong>{}</strong>", spans_html(inner)),
            Span::Link(to, inner) => {
                format!("<a href=\"#{}\">{}</a>", to.html_id(), spans_html(inner))
            }
        })
        .collect()
}

/// `[0.123, 0.456]` with true minus signs, or `n/a`.
pub fn interval(lo: Option<f64>, hi: Option<f64>) -> String {
    match (lo, hi) {
        (Some(l), Some(h)) => {
            format!("[{}, {}]", fixed(l).replace('-', "−"), fixed(h).replace('-', "−"))
        }
        _ => "n/a".to_string(),
    }
}

/// Bytes for reading (KiB below one MiB).
pub fn bytes(b: u64) -> String {
    if b >= 1 << 20 {
        format!("{:.1} MiB", b as f64 / f64::from(1 << 20))
    } else {
        format!("{:.1} KiB", b as f64 / 1024.0)
    }
}

/// `a / b` as `0.98×` (a ratio of two model numbers, for display).
pub fn ratio(a: f64, b: f64) -> String {
    if b > 0.0 {
        format!("{:.2}×", a / b)
    } else {
        "n/a".to_string()
    }
}

fn percent(x: f64) -> String {
    format!("{:.1}%", x * 100.0)
}

#[cfg(test)]
mod tests {
    use super::case::{holes_metric, other_metrics};
    use super::*;
    use crate::ids::ChainName;
    use crate::report::model::{Counts, Settings, Timing, ToolInfo, SCHEMA_VERSION};

    /// A comparison row of `system` against `standard` on ndcg@10.
    fn row(
        system: &str,
        n: usize,
        delta: f64,
        ci: Option<(f64, f64)>,
        p: Option<f64>,
    ) -> ComparisonRow {
        ComparisonRow {
            baseline: ChainName::from("standard"),
            system: ChainName::from(system),
            metric: "ndcg@10".to_string(),
            queries: n,
            delta,
            delta_ci_low: ci.map(|c| c.0),
            delta_ci_high: ci.map(|c| c.1),
            p_ttest: p,
            p_randomization: p,
            p_holm: p,
            wins: 0,
            losses: 0,
            ties: 0,
            min_detectable: None,
            significant: p.is_some_and(|p| p < 0.05),
        }
    }

    /// A report holding only what the sentences read.
    fn report(comparisons: Vec<ComparisonRow>, breakdowns: Vec<BreakdownCell>) -> Report {
        Report {
            schema_version: SCHEMA_VERSION,
            tool: ToolInfo { name: "postassay".into(), version: "0".into() },
            command: "run".into(),
            inputs: Vec::new(),
            basis: None,
            settings: Settings {
                metrics: vec!["ndcg@10".into()],
                relevant_from: 1,
                gain: "exp".into(),
                max_grade: 1,
                baseline: ChainName::from("standard"),
                seed: 42,
                permutations: 10_000,
                bootstrap_resamples: 10_000,
                alpha: 0.05,
                depth: None,
                redact: false,
                chains: Vec::new(),
            },
            counts: Counts {
                posts: None,
                queries: None,
                queries_evaluated: 70,
                queries_skipped: 0,
                judgments: 0,
            },
            systems: Vec::new(),
            summary: Vec::new(),
            per_query: Vec::new(),
            comparisons,
            breakdowns,
            skipped_queries: Vec::new(),
            moved: Vec::new(),
            diagnostics: None,
            warnings: Vec::new(),
            timing: Timing::default(),
        }
    }

    fn cell(value: &str, rows: Vec<ComparisonRow>) -> BreakdownCell {
        BreakdownCell {
            dimension: "tag".into(),
            value: value.into(),
            queries: rows.first().map_or(2, |r| r.queries),
            too_small: rows.is_empty(),
            systems: Vec::new(),
            comparisons: rows,
        }
    }

    #[test]
    fn sentence_gives_the_interval_and_each_group_size() {
        // Numbers of the demo report's `stemmed` row (docs/sample-report/report.md).
        let overall = row("stemmed", 70, 0.092, Some((0.033, 0.154)), Some(0.012));
        let r = report(
            vec![overall.clone()],
            vec![
                cell("inflected", vec![row("stemmed", 12, 0.293, None, Some(0.0004))]),
                cell("overstem", vec![row("stemmed", 6, -0.2, None, Some(0.031))]),
                cell("short", vec![row("stemmed", 30, 0.01, None, Some(0.6))]),
            ],
        );
        assert_eq!(
            spans_markdown(&sentence(&r, &overall, "ndcg@10")),
            "`stemmed` scores higher than `standard` on ndcg@10 overall (+0.092, 95% CI \
             [0.033, 0.154], p = 0.012 after Holm); better for tag `inflected` (+0.293, n = 12, \
             p < 0.001); worse for tag `overstem` (−0.200, n = 6, p = 0.031)."
        );
        assert!(names_groups(&r, "ndcg@10"));
        // Three tested group rows (one system, one metric, three groups).
        assert!(
            breakdown_caveat(&r).is_some_and(|c| c.contains("not across the 3 breakdown tests"))
        );
    }

    #[test]
    fn sentence_without_a_test_says_so_and_why() {
        // metrics.md: with n < 2 no test is computed (p and interval empty).
        let untested = row("stemmed", 1, 0.632, None, None);
        let r = report(vec![untested.clone()], vec![cell("short", Vec::new())]);
        assert_eq!(
            spans_markdown(&sentence(&r, &untested, "ndcg@10")),
            "`stemmed` differs from `standard` by +0.632 on ndcg@10 overall, not tested: 1 \
             evaluated query (a paired test needs at least 2)."
        );
        assert!(!names_groups(&r, "ndcg@10"));
        assert_eq!(breakdown_caveat(&r), None, "no breakdown test, nothing to caveat");
    }

    #[test]
    fn untested_groups_are_not_read_as_no_difference() {
        let overall = row("stemmed", 8, 0.1, Some((0.0, 0.2)), Some(0.3));
        let r = report(vec![overall.clone()], vec![cell("short", Vec::new())]);
        let text = spans_markdown(&sentence(&r, &overall, "ndcg@10"));
        assert!(
            text.ends_with("; no query language or tag group has the 5 queries a test needs."),
            "{text}"
        );
    }

    #[test]
    fn spans_render_alike_with_escaping() {
        let p = vec![Span::Strong(vec![t("Reindex with "), code("a<b"), t(".")]), t(" p < 0.001")];
        assert_eq!(spans_markdown(&p), "**Reindex with `a<b`.** p < 0.001");
        assert_eq!(
            spans_html(&p),
            "<strong>Reindex with <code>a&lt;b</code>.</strong> p &lt; 0.001"
        );
    }

    #[test]
    fn tables_render_alike_and_escape() {
        let table = Table {
            header: vec![vec![t("a|b")], vec![t("n")]],
            numeric: vec![false, true],
            row_headers: true,
            rows: vec![vec![vec![code("x<y")], vec![t("1\n2")]]],
        };
        assert_eq!(table.markdown(), "| a\\|b | n |\n|---|---|\n| `x<y` | 1 2 |\n");
        assert_eq!(
            table.html(),
            "<div class=\"scroll\"><table>\n<thead><tr><th scope=\"col\">a|b</th>\
             <th scope=\"col\">n</th></tr></thead>\n<tbody>\n<tr><th scope=\"row\">\
             <code>x&lt;y</code></th><td class=\"num\">1\n2</td></tr>\n</tbody>\n</table></div>\n"
        );
    }

    #[test]
    fn holes_do_not_claim_a_direction() {
        // Hand-computed counterexample to "judging holes can only raise a
        // score": one relevant post at rank 1 and an unjudged post at rank
        // 10. nDCG@10 = 1 with R = 1; judged relevant, the post adds
        // 1/log2(11) = 0.289 to DCG but 1/log2(3) = 0.631 to the ideal DCG,
        // so nDCG@10 = 1.289/1.631 = 0.790, and MAP = (1 + 2/10)/2 = 0.6.
        let mut r = report(vec![row("stemmed", 70, 0.1, Some((0.0, 0.2)), Some(0.01))], vec![]);
        r.settings.metrics = vec!["ndcg@10".into(), "unjudged@10".into()];
        let case: String = reindex_case(&r, "ndcg@10").iter().map(|p| spans_markdown(p)).collect();
        assert!(!case.contains("only raise"), "{case}");
        assert!(!case.contains("understated") && !case.contains("narrow"), "{case}");
        assert!(case.contains("Judging them can move a score either way"), "{case}");
        assert!(case.contains("nDCG and MAP can fall as well as rise"), "{case}");
    }

    /// Issue 12, item 5: the demo report listed `unjudged@10` among the
    /// metrics `stemmed` is "detectably better" on (reports/report.md of
    /// main at 70662ce; its figures are used here).
    #[test]
    fn holes_are_never_counted_as_a_gain() {
        let mut map = row("stemmed", 70, 0.098, Some((0.047, 0.151)), Some(0.0009));
        map.metric = "map".into();
        let mut holes = row("stemmed", 70, -0.047, Some((-0.089, -0.011)), Some(0.045));
        holes.metric = "unjudged@10".into();
        let overall = row("stemmed", 70, 0.092, Some((0.033, 0.154)), Some(0.012));
        let mut r = report(vec![overall.clone(), map, holes], vec![]);
        r.settings.metrics = vec!["ndcg@10".into(), "map".into(), "unjudged@10".into()];
        let text = spans_markdown(&other_metrics(&r, &overall, "ndcg@10"));
        assert_eq!(
            text,
            "On the other metrics it is detectably better on map and detectably worse on none. \
             Its top 10 holds detectably fewer unjudged posts than `standard`'s (unjudged@10 \
             −0.047, p = 0.045 after Holm): a fact about the judging holes, not a quality gain \
             or loss, so it is not counted above (see the judging holes below)."
        );
    }

    /// Definitions are rendered from the data, so a setting the renderer
    /// does not know by name (here a route's `detector`, an invented
    /// future option) still appears, and so does every step parameter.
    #[test]
    fn definitions_show_every_setting_of_the_data() {
        let routed = serde_json::json!({
            "name": "r",
            "route": {
                "languages": ["en", "de"],
                "min_confidence": 0.5,
                "detector": "whatlang",
                "posts": "declared",
                "queries": "every",
                "branches": [
                    {"language": "en", "tokenizer": "words", "steps": [
                        {"step": "lowercase"},
                        {"step": "stem", "generation": "2018", "language": "en"}
                    ]},
                    {"language": "de", "tokenizer": "words", "steps": [{"step": "lowercase"}]}
                ],
                "fallback": {"tokenizer": "posts", "steps": [
                    {"step": "drop", "kinds": ["urls", "emoji"]},
                    {"step": "hashtags", "vocabulary": "corpus"}
                ]}
            }
        });
        let parts = definition_parts(&routed);
        let rows: Vec<String> = parts.iter().map(|(p, t)| format!("{p} = {t}")).collect();
        assert_eq!(
            rows,
            [
                "route = detector whatlang; languages en, de; min_confidence 0.5; posts declared; \
                 queries every",
                "route › branches › language en = tokenizer words; steps lowercase → stem \
                 (language en, generation 2018)",
                "route › branches › language de = tokenizer words; steps lowercase",
                "route › fallback = tokenizer posts; steps drop (kinds urls, emoji) → hashtags \
                 (vocabulary corpus)",
            ]
        );
        let plain = serde_json::json!({"name": "p", "description": "d", "tokenizer": "words",
            "steps": [{"step": "lowercase"}, {"step": "length", "min": 2, "max": 30}]});
        assert_eq!(
            definition_line(&plain),
            "tokenizer: words; steps: lowercase → length (min 2, max 30)"
        );
        assert_eq!(definition_parts(&plain)[0], ("description".to_string(), "d".to_string()));
    }

    #[test]
    fn headline_skips_unjudged_and_holes_follow_its_cutoff() {
        let mut r = report(Vec::new(), Vec::new());
        r.settings.metrics = vec!["unjudged@5".into(), "ndcg@5".into(), "unjudged@10".into()];
        assert_eq!(headline(&r), "ndcg@5");
        // unjudged@5 is at index 0: the hole at the headline's cutoff.
        assert_eq!(holes_metric(&r, "ndcg@5"), Some((0, "unjudged@5")));
        assert_eq!(holes_metric(&r, "map"), Some((2, "unjudged@10")));
        r.settings.metrics = vec!["unjudged@10".into()];
        assert_eq!(headline(&r), "");
    }

    #[test]
    fn formats() {
        assert_eq!(signed(-0.0041), "−0.004");
        assert_eq!(signed(-0.0001), "+0.000");
        assert_eq!(signed(0.21), "+0.210");
        assert_eq!(fixed(-0.0002), "0.000");
        assert_eq!(pvalue(Some(0.0004)), "< 0.001");
        assert_eq!(p_equals(Some(0.0004)), "p < 0.001");
        assert_eq!(pvalue(Some(0.0123)), "0.012");
        assert_eq!(p_equals(Some(0.5)), "p = 0.50");
        assert_eq!(pvalue(None), "n/a");
    }

    #[test]
    fn negative_zero_reads_as_zero() {
        assert_eq!(fixed(-0.0), "0.000");
        assert_eq!(fixed(-0.0004), "0.000");
        assert_eq!(fixed(-0.0005001), "-0.001");
    }

    #[test]
    fn ratios_and_percentages() {
        assert_eq!(ratio(166.0, 200.0), "0.83×");
        assert_eq!(ratio(1.0, 0.0), "n/a");
        assert_eq!(percent(0.1492), "14.9%");
        assert!(lower_is_better("unjudged@10") && !lower_is_better("ndcg@10"));
    }
}
