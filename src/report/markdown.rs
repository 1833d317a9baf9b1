//! `report.md`: the comparison a person reads in a pull request. Renders the
//! report model only; every number shown was computed by the bench. Numbers
//! are shown with three decimals, p-values with two significant digits.

use std::fmt::Write;

use crate::bench::compare::{BreakdownCell, ComparisonRow};
use crate::report::model::Report;

/// Format a metric value for reading (three decimals).
pub fn fixed(x: f64) -> String {
    format!("{x:.3}")
}

/// Format a signed difference (`+0.021`, `−0.004` with a true minus sign).
pub fn signed(x: f64) -> String {
    if x < 0.0 {
        format!("−{:.3}", -x)
    } else {
        format!("+{x:.3}")
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

fn interval(lo: Option<f64>, hi: Option<f64>) -> String {
    match (lo, hi) {
        (Some(l), Some(h)) => format!("[{}, {}]", fixed(l).replace('-', "−"), fixed(h).replace('-', "−")),
        _ => "n/a".to_string(),
    }
}

fn bytes(b: u64) -> String {
    if b >= 1 << 20 {
        format!("{:.1} MiB", b as f64 / f64::from(1 << 20))
    } else {
        format!("{:.1} KiB", b as f64 / 1024.0)
    }
}

/// Render the whole Markdown report.
pub fn render(r: &Report) -> String {
    let mut s = String::new();
    let headline = r.settings.metrics.first().cloned().unwrap_or_default();
    let _ = writeln!(s, "# postassay report\n");
    let _ = writeln!(
        s,
        "{} {} compared on {} evaluated queries ({} skipped for having no relevant post), \
         {} judgments{}. Baseline: `{}`. Significance: two-sided paired randomization test, \
         Holm-adjusted across systems, α = {}.\n",
        r.systems.len(),
        if r.command == "run" { "analysis chains" } else { "runs" },
        r.counts.queries_evaluated,
        r.counts.queries_skipped,
        r.counts.judgments,
        r.counts.posts.map(|p| format!(", {p} posts")).unwrap_or_default(),
        r.settings.baseline,
        r.settings.alpha,
    );
    verdict(&mut s, r, &headline);
    scores(&mut s, r);
    against_baseline(&mut s, r, &headline);
    breakdowns(&mut s, r, &headline);
    cost(&mut s, r);
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
    timing(&mut s, r);
    s
}

fn verdict(s: &mut String, r: &Report, headline: &str) {
    let _ = writeln!(s, "## Verdict\n");
    let mut best: Option<&ComparisonRow> = None;
    for c in r.comparisons.iter().filter(|c| c.metric == headline && c.significant && c.delta > 0.0)
    {
        if best.is_none_or(|b| c.delta > b.delta) {
            best = Some(c);
        }
    }
    match best {
        Some(c) => {
            let _ = writeln!(
                s,
                "**Choose `{}`.** It beats `{}` on {} by {} (95% CI of the difference {}, \
                 {} after Holm; {} queries won, {} lost, {} tied).\n",
                c.system,
                c.baseline,
                headline,
                signed(c.delta),
                interval(c.delta_ci_low, c.delta_ci_high),
                p_equals(c.p_holm),
                c.wins,
                c.losses,
                c.ties
            );
        }
        None => {
            let _ = writeln!(
                s,
                "**No chain is detectably better than `{}` on {}** at α = {} with these {} \
                 queries.\n",
                r.settings.baseline, headline, r.settings.alpha, r.counts.queries_evaluated
            );
        }
    }
    if let Some(ui) = r.metric_index("unjudged@10") {
        let worst = r
            .summary
            .iter()
            .filter_map(|sys| sys.metrics.get(ui).map(|m| (sys.system.clone(), m.mean)))
            .max_by(|a, b| a.1.total_cmp(&b.1));
        if let Some((name, u)) = worst {
            let _ = writeln!(
                s,
                "Judging holes: up to {:.0}% of the top 10 results are unjudged (`{}`); \
                 unjudged posts count as not relevant, so a chain that surfaces new posts \
                 may be under-rated.\n",
                u * 100.0,
                name
            );
        }
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

fn sentence(r: &Report, c: &ComparisonRow, headline: &str) -> String {
    let overall = if c.significant {
        format!(
            "scores {} than `{}` on {} overall ({}, {} after Holm)",
            if c.delta > 0.0 { "higher" } else { "lower" },
            c.baseline,
            headline,
            signed(c.delta),
            p_equals(c.p_holm)
        )
    } else {
        format!(
            "shows no detectable difference from `{}` on {} overall ({}, {} after Holm{})",
            c.baseline,
            headline,
            signed(c.delta),
            p_equals(c.p_holm),
            c.min_detectable
                .map(|m| format!("; this query set detects differences of about {} or more", fixed(m)))
                .unwrap_or_default()
        )
    };
    let mut better = Vec::new();
    let mut worse = Vec::new();
    for cell in &r.breakdowns {
        if let Some(cc) =
            cell.comparisons.iter().find(|x| x.system == c.system && x.metric == headline)
        {
            if cc.significant {
                let text = format!(
                    "{} `{}` ({}, {})",
                    cell.dimension,
                    cell.value,
                    signed(cc.delta),
                    p_equals(cc.p_holm)
                );
                if cc.delta > 0.0 {
                    better.push(text);
                } else {
                    worse.push(text);
                }
            }
        }
    }
    let mut out = format!("`{}` {}", c.system, overall);
    if !better.is_empty() {
        let _ = write!(out, "; better for {}", better.join(", "));
    }
    if !worse.is_empty() {
        let _ = write!(out, "; worse for {}", worse.join(", "));
    }
    if better.is_empty() && worse.is_empty() && !r.breakdowns.is_empty() {
        out.push_str("; no query language or tag group differs detectably");
    }
    out.push('.');
    out
}

fn against_baseline(s: &mut String, r: &Report, headline: &str) {
    if r.comparisons.is_empty() {
        return;
    }
    let _ = writeln!(s, "## Against the baseline\n");
    for c in r.comparisons.iter().filter(|c| c.metric == headline) {
        let _ = writeln!(s, "- {}", sentence(r, c, headline));
    }
    s.push('\n');
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
             significant after Holm at α = {}. Groups under 5 queries are not tested.\n",
            r.settings.alpha
        );
        breakdown_table(s, r, &cells, headline);
    }
}

fn cost(s: &mut String, r: &Report) {
    if r.systems.iter().all(|sys| sys.cost.is_none()) {
        return;
    }
    let _ = writeln!(s, "## Cost\n");
    let _ = writeln!(
        s,
        "| chain | index size | distinct terms | tokens per post | posts per field |\n\
         |---|---|---|---|---|"
    );
    for sys in &r.systems {
        if let Some(c) = &sys.cost {
            let fields: Vec<String> =
                c.posts_per_field.iter().map(|(k, v)| format!("{k}: {v}")).collect();
            let _ = writeln!(
                s,
                "| `{}` | {} | {} | {:.1} | {} |",
                sys.name,
                bytes(c.index_bytes),
                c.distinct_terms,
                c.mean_tokens_per_post,
                fields.join(", ")
            );
        }
    }
    s.push('\n');
}

fn timing(s: &mut String, r: &Report) {
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
    let _ = writeln!(
        s,
        "| chain | index build (s) | query latency mean (ms) | query latency p95 (ms) |\n\
         |---|---|---|---|"
    );
    for t in &r.timing.chains {
        let _ = writeln!(
            s,
            "| `{}` | {:.3} | {:.3} | {:.3} |",
            t.name, t.build_seconds, t.query_ms_mean, t.query_ms_p95
        );
    }
    s.push('\n');
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formats() {
        assert_eq!(signed(-0.0041), "−0.004");
        assert_eq!(signed(0.21), "+0.210");
        assert_eq!(pvalue(Some(0.0004)), "< 0.001");
        assert_eq!(pvalue(Some(0.0123)), "0.012");
        assert_eq!(pvalue(Some(0.5)), "0.50");
        assert_eq!(pvalue(None), "n/a");
    }
}
