//! `report.md`: the comparison a person reads in a pull request. Renders the
//! report model only; every number shown was computed by the bench. Numbers
//! are shown with three decimals, p-values with two significant digits.

use std::fmt::Write;

use crate::plural::counted;
use crate::report::diagnostics::{
    conflation_table, routing_by_chain, routing_table, segmentation_table, unspaced_table,
    UNSPACED_LEGEND,
};
use crate::report::model::{BreakdownCell, Report, MIN_BREAKDOWN_QUERIES};
use crate::report::text::{
    breakdown_caveat, build_time, cost_table, coverage_lines, definitions_table, fixed, headline,
    interval, moved_tables, names_groups, pvalue, reindex_case, route_table, sentence,
    settings_sentence, signed, spans_markdown, systems_compared, CACHED_NOTE, CHAINS_INTRO,
    ROUTING_NOTE,
};

/// Render the whole Markdown report.
pub fn render(r: &Report) -> String {
    let mut s = String::new();
    let headline = headline(r);
    let _ = writeln!(s, "# postassay report\n");
    let _ = writeln!(
        s,
        "{} compared on {} ({} skipped for having no relevant post), {}{}. Baseline: `{}`. \
         Significance: two-sided paired randomization test, Holm-adjusted across systems, \
         α = {}.\n",
        systems_compared(r),
        counted(r.counts.queries_evaluated, "evaluated query", "evaluated queries"),
        r.counts.queries_skipped,
        counted(r.counts.judgments, "judgment", "judgments"),
        r.counts.posts.map(|p| format!(", {}", counted(p, "post", "posts"))).unwrap_or_default(),
        r.settings.baseline,
        r.settings.alpha,
    );
    verdict(&mut s, r, &headline);
    scores(&mut s, r);
    against_baseline(&mut s, r, &headline);
    moved(&mut s, r);
    breakdowns(&mut s, r, &headline);
    cost(&mut s, r);
    chains(&mut s, r);
    diagnostics(&mut s, r);
    if !r.skipped_queries.is_empty() {
        let _ = writeln!(s, "## Skipped queries\n");
        let ids: Vec<String> = r.skipped_queries.iter().map(|q| format!("`{q}`")).collect();
        let _ = writeln!(s, "Judged but with no relevant post: {}.\n", ids.join(", "));
    }
    if !r.warnings.is_empty() {
        let _ = writeln!(s, "## Warnings\n");
        for w in &r.warnings {
            let _ = writeln!(s, "- {}", w.replace('\n', " "));
        }
        s.push('\n');
    }
    inputs(&mut s, r);
    timing(&mut s, r, &headline);
    s
}

/// What the numbers rest on: the settings, every input file with its
/// SHA-256, and how many evaluated queries each system answered.
fn inputs(s: &mut String, r: &Report) {
    let _ = writeln!(s, "## Inputs and settings\n");
    let _ = writeln!(s, "{}\n", spans_markdown(&settings_sentence(r)));
    for line in coverage_lines(r) {
        let _ = writeln!(s, "- {line}");
    }
    let _ = writeln!(s, "\n| role | path | SHA-256 |\n|---|---|---|");
    for i in &r.inputs {
        let path = cell(&i.path).replace('`', "'");
        let _ = writeln!(s, "| {} | `{path}` | `{}` |", cell(&i.role), i.sha256);
    }
    s.push('\n');
}

/// The reindex case (see [`crate::report::html::reindex_case`], shared with
/// `report.html` so both say the same words).
fn verdict(s: &mut String, r: &Report, headline: &str) {
    let _ = writeln!(s, "## Recommendation\n");
    for paragraph in reindex_case(r, headline) {
        let _ = writeln!(s, "{}\n", spans_markdown(&paragraph));
    }
}

fn scores(s: &mut String, r: &Report) {
    let _ = writeln!(s, "## Scores\n");
    let _ = writeln!(
        s,
        "Mean over evaluated queries with its 95% bootstrap interval; best mean per \
         metric in bold (for `unjudged@k`, lower is better).\n"
    );
    let _ = write!(s, "| system |");
    for m in &r.settings.metrics {
        let _ = write!(s, " {m} |");
    }
    let _ = write!(s, "\n|---|");
    for _ in &r.settings.metrics {
        let _ = write!(s, "---|");
    }
    s.push('\n');
    let best: Vec<Option<f64>> = (0..r.settings.metrics.len())
        .map(|i| {
            let lower_better = r.settings.metrics[i].starts_with("unjudged");
            let vals = r.summary.iter().filter_map(|sys| sys.metrics.get(i).map(|m| m.mean));
            if lower_better {
                vals.min_by(f64::total_cmp)
            } else {
                vals.max_by(f64::total_cmp)
            }
        })
        .collect();
    for sys in &r.summary {
        let _ = write!(s, "| `{}` |", sys.system);
        for (i, m) in sys.metrics.iter().enumerate() {
            let v = fixed(m.mean);
            let v = if best.get(i).copied().flatten().map(fixed) == Some(v.clone()) {
                format!("**{v}**")
            } else {
                v
            };
            let _ = write!(s, " {v} {} |", interval(m.ci_low, m.ci_high));
        }
        s.push('\n');
    }
    s.push('\n');
}

fn against_baseline(s: &mut String, r: &Report, headline: &str) {
    if r.comparisons.is_empty() {
        return;
    }
    let _ = writeln!(s, "## Against the baseline\n");
    for c in r.comparisons.iter().filter(|c| c.metric == headline) {
        let _ = writeln!(s, "- {}", spans_markdown(&sentence(r, c, headline)));
    }
    s.push('\n');
    if let Some(caveat) = breakdown_caveat(r).filter(|_| names_groups(r, headline)) {
        let _ = writeln!(s, "{caveat}\n");
    }
    let _ = writeln!(
        s,
        "| system | metric | Δ mean | 95% CI of Δ | p (t-test) | p (randomization) | \
         p (Holm) | significant | won / lost / tied | detectable Δ |\n\
         |---|---|---|---|---|---|---|---|---|---|"
    );
    for c in &r.comparisons {
        let _ = writeln!(
            s,
            "| `{}` | {} | {} | {} | {} | {} | {} | {} | {} / {} / {} | {} |",
            c.system,
            c.metric,
            signed(c.delta),
            interval(c.delta_ci_low, c.delta_ci_high),
            pvalue(c.p_ttest),
            pvalue(c.p_randomization),
            pvalue(c.p_holm),
            if c.significant { "yes" } else { "no" },
            c.wins,
            c.losses,
            c.ties,
            c.min_detectable.map(fixed).unwrap_or_else(|| "n/a".into())
        );
    }
    s.push('\n');
}

/// The queries that moved most, on the metric the bench picked them by
/// (the headline metric, [`super::text::headline`]).
fn moved(s: &mut String, r: &Report) {
    if r.moved.is_empty() {
        return;
    }
    let headline = &super::text::headline(r);
    let _ = writeln!(s, "## Queries that moved most\n");
    let _ = writeln!(
        s,
        "Per chain, the queries whose {headline} gained or lost most against `{}`, each with a \
         relevant post whose rank moved the same way{}. `postassay explain --query Q --doc D` \
         shows the full detail.\n",
        r.settings.baseline,
        if r.settings.redact { " (post texts redacted)" } else { "" }
    );
    for (system, table) in moved_tables(r, headline) {
        let _ = writeln!(s, "### `{system}`\n\n{}", table.markdown());
    }
}

fn breakdown_table(s: &mut String, r: &Report, cells: &[&BreakdownCell], headline: &str) {
    let Some(mi) = r.metric_index(headline) else { return };
    let _ = write!(s, "| group | queries |");
    for sys in &r.summary {
        let _ = write!(s, " `{}` |", sys.system);
    }
    let _ = write!(s, "\n|---|---|");
    for _ in &r.summary {
        let _ = write!(s, "---|");
    }
    s.push('\n');
    for cell in cells {
        let _ = write!(
            s,
            "| {} | {}{} |",
            cell.value,
            cell.queries,
            if cell.too_small { " (too few to test)" } else { "" }
        );
        for sys in &cell.systems {
            let mean = sys.metrics.get(mi).map(|m| m.mean).unwrap_or(0.0);
            let mark = cell
                .comparisons
                .iter()
                .find(|c| c.system == sys.system && c.metric == headline)
                .map(|c| {
                    if c.significant {
                        format!(" ({} ✱)", signed(c.delta))
                    } else {
                        format!(" ({})", signed(c.delta))
                    }
                })
                .unwrap_or_default();
            let _ = write!(s, " {}{} |", fixed(mean), mark);
        }
        s.push('\n');
    }
    s.push('\n');
}

fn breakdowns(s: &mut String, r: &Report, headline: &str) {
    for (dimension, title) in [("lang", "By query language"), ("tag", "By query tag")] {
        let cells: Vec<&BreakdownCell> =
            r.breakdowns.iter().filter(|c| c.dimension == dimension).collect();
        if cells.is_empty() {
            continue;
        }
        let _ = writeln!(s, "## {title}\n");
        let _ = writeln!(
            s,
            "Mean {headline} per group; in brackets the difference from the baseline, ✱ when \
             significant after Holm at α = {}. Groups under {MIN_BREAKDOWN_QUERIES} queries are \
             not tested.{}\n",
            r.settings.alpha,
            breakdown_caveat(r).map(|c| format!(" {c}")).unwrap_or_default()
        );
        breakdown_table(s, r, &cells, headline);
    }
}

fn cost(s: &mut String, r: &Report) {
    if let Some(table) = cost_table(r) {
        let _ = writeln!(s, "## Cost\n\n{}", table.markdown());
    }
    if let Some(table) = route_table(r) {
        let _ = writeln!(s, "### Routing\n\n{ROUTING_NOTE}\n\n{}", table.markdown());
    }
}

/// Every chain's definition, exactly as run (`run` only).
fn chains(s: &mut String, r: &Report) {
    if let Some(table) = definitions_table(r) {
        let _ = writeln!(s, "## Chains\n\n{CHAINS_INTRO}\n\n{}", table.markdown());
    }
}

/// The chains' diagnostics on open data (`run --vet`): compact tables of
/// conflation, routing by length and hashtag segmentation, shared with
/// `diagnostics.md` (the offenders and confusion matrices stay there).
fn diagnostics(s: &mut String, r: &Report) {
    let Some(d) = &r.diagnostics else { return };
    let _ = writeln!(s, "## Diagnostics\n");
    let _ = writeln!(
        s,
        "The chains of this run, exactly as indexed, on open linguistic data (`--vet`). \
         `postassay vet` shows the worst offenders and where sentences were routed.\n"
    );
    if !d.conflation.is_empty() {
        let _ = writeln!(s, "### Conflation against lemma classes\n");
        let _ = writeln!(
            s,
            "Paice (SIGIR 1994): UI = share of pairs of forms of one lemma the chain leaves \
             apart, OI = share of pairs of different lemmas it merges (both: lower is better), \
             SW = OI / UI. Over lemmas with 2+ forms: *whole* = share conflated to one term \
             sequence, *terms* = mean distinct term sequences.\n"
        );
        s.push_str(&conflation_table(&d.conflation).markdown());
        s.push('\n');
    }
    for group in routing_by_chain(&d.routing) {
        let _ = writeln!(s, "### Routing by length: {}\n", group.title());
        let _ = writeln!(
            s,
            "Sentences of known language routed like posts without a declared language; \
             correct = the field of their own language. Accuracy (sentences) per length in \
             characters; *not routed*: a language the route does not list, whose cells (↪) \
             show the share sent to the fallback, its right place. µs / sentence: CPU time \
             of detection, measured in this run.\n"
        );
        s.push_str(&routing_table(&group.rows).markdown());
        s.push('\n');
    }
    if !d.segmentation.is_empty() {
        let _ = writeln!(s, "### Hashtag segmentation\n");
        let _ = writeln!(
            s,
            "Gold hashtags through each chain up to its `hashtags` step. *exact* = share of \
             tags split as the gold; P, R, F1 = word-boundary precision, recall and F1; \
             *frequencies* = where the segmenter's word frequencies come from.\n"
        );
        s.push_str(&segmentation_table(&d.segmentation).markdown());
        s.push('\n');
    }
    if !d.unspaced.is_empty() {
        let _ = writeln!(s, "### Scripts written without spaces\n\n{UNSPACED_LEGEND}\n");
        s.push_str(&unspaced_table(&d.unspaced).markdown());
        s.push('\n');
    }
    if !d.notes.is_empty() {
        let _ = writeln!(s, "Notes:\n");
        for n in &d.notes {
            let _ = writeln!(s, "- {}", n.replace('\n', " "));
        }
        s.push('\n');
    }
    let _ = writeln!(s, "Data files read:\n\n| role | file | SHA-256 |\n|---|---|---|");
    for i in &d.inputs {
        let path = cell(&i.path).replace('`', "'");
        let _ = writeln!(s, "| {} | `{path}` | `{}` |", cell(&i.role), i.sha256);
    }
    s.push('\n');
}

fn timing(s: &mut String, r: &Report, headline: &str) {
    let _ = writeln!(s, "## Timing\n");
    let _ = writeln!(
        s,
        "Wall-clock figures; the only part of this report that changes between identical \
         runs. Whole command: {:.2} s.\n",
        r.timing.total_seconds
    );
    if r.timing.chains.is_empty() {
        return;
    }
    if let Some(line) = build_time(r, headline) {
        let _ = writeln!(s, "{}\n", spans_markdown(&line));
    }
    let _ = writeln!(
        s,
        "| chain | index build (s) | query latency mean (ms) | query latency p95 (ms) |\n\
         |---|---|---|---|"
    );
    for t in &r.timing.chains {
        let _ = writeln!(
            s,
            "| `{}` | {:.3}{} | {:.3} | {:.3} |",
            t.name,
            t.build_seconds,
            if t.from_cache { " (cached)" } else { "" },
            t.query_ms_mean,
            t.query_ms_p95
        );
    }
    s.push('\n');
    if r.timing.chains.iter().any(|t| t.from_cache) {
        let _ = writeln!(s, "{CACHED_NOTE}\n");
    }
}

/// Markdown table cells cannot hold `|` or line breaks.
fn cell(text: &str) -> String {
    text.replace('|', "\\|").replace(['\n', '\r'], " ")
}
