//! `report.html`: one self-contained page (inline CSS and inline SVG, no
//! script, no external resource of any kind) that a stakeholder reads to
//! decide whether to reindex. Last stage of the data flow; it renders the
//! report model only. The page follows `report.md` section by section and
//! adds charts: means with intervals, per-query differences against the
//! baseline, a heat-map of the breakdowns and quality against cost.
//!
//! This file also holds the reindex case ([`reindex_case`]), the opening
//! section of both `report.md` and `report.html`: which chain to reindex
//! with (only on a significant gain), by how much, at what cost, on how many
//! queries and judgments, and which judging holes could change the answer.
//! It is built once as [`Span`](super::text::Span)s so both renderings say the same words.
//!
//! Everything is deterministic except the Timing section, which sits last
//! between [`TIMING_BEGIN`] and [`TIMING_END`] so a comparison can cut it.
//! Arithmetic here is rendering only: scaling to pixels, ratios and
//! differences of two model numbers for display; means, deltas, intervals,
//! p-values and significance come from the model.

use std::collections::BTreeMap;
use std::fmt::Write;

use crate::plural::counted;
use crate::report::diagnostics::{
    conflation_table, routing_by_chain, routing_table, segmentation_table, unspaced_table, Table,
    UNSPACED_LEGEND,
};
use crate::report::model::{BreakdownCell, ComparisonRow, Report, MIN_BREAKDOWN_QUERIES};
use crate::report::svg::{self, esc, Bar, Estimate, Panel, Point, Series};
use crate::report::text::{
    breakdown_caveat, build_time, cost_table, coverage_lines, definitions_table, fixed, headline,
    improves, interval, lower_is_better, moved_tables, names_groups, p_equals, pvalue,
    reindex_case, route_table, sentence, settings_sentence, signed, spans_html, systems_compared,
    CACHED_NOTE, CHAINS_INTRO, ROUTING_NOTE,
};

/// Marks the start of the Timing section, the only part of the page that
/// changes between identical runs.
pub const TIMING_BEGIN: &str = "<!-- timing: begin -->";
/// Marks the end of the Timing section.
pub const TIMING_END: &str = "<!-- timing: end -->";

/// Render the whole page.
pub fn render(r: &Report) -> String {
    let headline = headline(r);
    let mut s = String::new();
    let _ = write!(
        s,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
         <title>postassay report</title>\n<style>{CSS}</style>\n</head>\n<body>\n"
    );
    header(&mut s, r, &headline);
    let _ = writeln!(s, "<section id=\"recommendation\" class=\"case\">\n<h2>Recommendation</h2>");
    for p in reindex_case(r, &headline) {
        let _ = writeln!(s, "<p>{}</p>", spans_html(&p));
    }
    s.push_str("</section>\n");
    scores(&mut s, r);
    against_baseline(&mut s, r, &headline);
    moved(&mut s, r);
    breakdowns(&mut s, r, &headline);
    cost(&mut s, r, &headline);
    chains(&mut s, r);
    diagnostics(&mut s, r);
    if !r.skipped_queries.is_empty() {
        let ids: Vec<String> =
            r.skipped_queries.iter().map(|q| format!("<code>{}</code>", esc(q.as_str()))).collect();
        let _ = writeln!(
            s,
            "<section id=\"skipped\">\n<h2>Skipped queries</h2>\n<p>Judged but with no relevant \
             post: {}.</p>\n</section>",
            ids.join(", ")
        );
    }
    if !r.warnings.is_empty() {
        s.push_str("<section id=\"warnings\">\n<h2>Warnings</h2>\n<ul>\n");
        for w in &r.warnings {
            let _ = writeln!(s, "<li>{}</li>", esc(w));
        }
        s.push_str("</ul>\n</section>\n");
    }
    inputs(&mut s, r);
    timing(&mut s, r, &headline);
    s.push_str("</body>\n</html>\n");
    s
}

fn header(s: &mut String, r: &Report, headline: &str) {
    let _ = writeln!(
        s,
        "<header>\n<h1>postassay report</h1>\n<p class=\"lede\">{} compared on {} ({} skipped \
         for having no relevant post), {}{}. Baseline: <code>{}</code>. Headline metric: \
         <code>{}</code>. Significance: two-sided paired randomization test, Holm-adjusted \
         across systems, α = {}.</p>",
        systems_compared(r),
        counted(r.counts.queries_evaluated, "evaluated query", "evaluated queries"),
        r.counts.queries_skipped,
        counted(r.counts.judgments, "judgment", "judgments"),
        r.counts.posts.map(|p| format!(", {}", counted(p, "post", "posts"))).unwrap_or_default(),
        esc(r.settings.baseline.as_str()),
        esc(headline),
        r.settings.alpha
    );
    s.push_str("<p class=\"legend\" aria-label=\"Colour of each system in the charts\">");
    for (i, sys) in r.summary.iter().enumerate() {
        let is_base = sys.system == r.settings.baseline;
        let _ = write!(
            s,
            "<span class=\"key\"><span class=\"dot{}\" style=\"--c:{}\"></span><code>{}</code>{}</span> ",
            if is_base { " hollow" } else { "" },
            svg::series_colour(i),
            esc(sys.system.as_str()),
            if is_base { " (baseline)" } else { "" }
        );
    }
    s.push_str(
        "</p>\n<nav aria-label=\"Sections\"><a href=\"#recommendation\">Recommendation</a> · \
                <a href=\"#scores\">Scores</a>",
    );
    if !r.comparisons.is_empty() {
        s.push_str(" · <a href=\"#against-baseline\">Against the baseline</a>");
    }
    if !r.moved.is_empty() {
        s.push_str(" · <a href=\"#moved\">Queries that moved most</a>");
    }
    if r.breakdowns.iter().any(|c| c.dimension == "lang") {
        s.push_str(" · <a href=\"#by-language\">By query language</a>");
    }
    if r.breakdowns.iter().any(|c| c.dimension == "tag") {
        s.push_str(" · <a href=\"#by-tag\">By query tag</a>");
    }
    if r.systems.iter().any(|x| x.cost.is_some()) {
        s.push_str(" · <a href=\"#cost\">Cost</a>");
    }
    if !r.settings.chains.is_empty() {
        s.push_str(" · <a href=\"#chains\">Chains</a>");
    }
    if r.diagnostics.is_some() {
        s.push_str(" · <a href=\"#diagnostics\">Diagnostics</a>");
    }
    s.push_str(
        " · <a href=\"#inputs\">Inputs</a> · <a href=\"#timing\">Timing</a></nav>\n</header>\n",
    );
}

/// Each system's chart style: colour by report order, the baseline hollow.
fn series(r: &Report) -> Vec<Series> {
    r.summary
        .iter()
        .enumerate()
        .map(|(i, sys)| Series {
            label: sys.system.as_str().to_string(),
            colour: svg::series_colour(i),
            hollow: sys.system == r.settings.baseline,
        })
        .collect()
}

fn figure(s: &mut String, chart: &str, caption: &str) {
    let _ = writeln!(s, "<figure>\n<div class=\"scroll\">{chart}</div>\n<figcaption>{caption}</figcaption>\n</figure>");
}

fn scores(s: &mut String, r: &Report) {
    s.push_str("<section id=\"scores\">\n<h2>Scores</h2>\n");
    let shown: Vec<&String> = r.settings.metrics.iter().take(3).collect();
    let panels: Vec<Panel> = shown
        .iter()
        .enumerate()
        .map(|(mi, m)| Panel {
            title: if lower_is_better(m) { format!("{m} (lower is better)") } else { (*m).clone() },
            estimates: r
                .summary
                .iter()
                .map(|sys| {
                    let ms = sys.metrics.get(mi);
                    Estimate {
                        mean: ms.map_or(0.0, |x| x.mean),
                        low: ms.and_then(|x| x.ci_low),
                        high: ms.and_then(|x| x.ci_high),
                    }
                })
                .collect(),
        })
        .collect();
    if !panels.is_empty() && !r.summary.is_empty() {
        let names: Vec<&str> = shown.iter().map(|m| m.as_str()).collect();
        let chart = svg::dot_whisker(
            "chart-means",
            &format!("Mean {} per system with 95% intervals", names.join(", ")),
            &format!(
                "For each system, the mean over {} evaluated queries as a dot and its 95% \
                 percentile-bootstrap interval as a whisker; the baseline {} is drawn hollow.",
                r.counts.queries_evaluated, r.settings.baseline
            ),
            &series(r),
            &panels,
            "mean over queries",
        );
        figure(
            s,
            &chart,
            &format!(
                "Mean of each system over the {} evaluated queries (dot) and its 95% bootstrap \
                 interval (whiskers); hollow dot: the baseline. Overlapping whiskers do not \
                 settle a comparison: the paired tests under “Against the baseline” do.",
                r.counts.queries_evaluated
            ),
        );
    }
    s.push_str(
        "<p>Mean over evaluated queries with its 95% bootstrap interval; best mean per metric in \
         bold (for <code>unjudged@k</code>, lower is better).</p>\n<div class=\"scroll\"><table>\n\
         <thead><tr><th scope=\"col\">system</th>",
    );
    for m in &r.settings.metrics {
        let _ = write!(s, "<th scope=\"col\">{}</th>", breakable_metric(m));
    }
    s.push_str("</tr></thead>\n<tbody>\n");
    let best: Vec<Option<String>> = r
        .settings
        .metrics
        .iter()
        .enumerate()
        .map(|(i, m)| {
            let vals = r.summary.iter().filter_map(|sys| sys.metrics.get(i).map(|x| x.mean));
            let b = if lower_is_better(m) {
                vals.min_by(f64::total_cmp)
            } else {
                vals.max_by(f64::total_cmp)
            };
            b.map(fixed)
        })
        .collect();
    for sys in &r.summary {
        let _ = write!(s, "<tr><th scope=\"row\"><code>{}</code></th>", esc(sys.system.as_str()));
        for (i, m) in sys.metrics.iter().enumerate() {
            let v = fixed(m.mean);
            let v = if best.get(i).and_then(|b| b.as_ref()) == Some(&v) {
                format!("<strong>{v}</strong>")
            } else {
                v
            };
            let _ = write!(
                s,
                "<td class=\"num\">{v}<br><span class=\"ci\">{}</span></td>",
                interval(m.ci_low, m.ci_high)
            );
        }
        s.push_str("</tr>\n");
    }
    s.push_str("</tbody>\n</table></div>\n</section>\n");
}

/// The queries that moved most, one table per chain, with example posts.
fn moved(s: &mut String, r: &Report) {
    if r.moved.is_empty() {
        return;
    }
    let headline = &super::text::headline(r);
    let base = esc(r.settings.baseline.as_str());
    let _ = writeln!(
        s,
        "<section id=\"moved\">\n<h2>Queries that moved most</h2>\n<p>Per chain, the queries \
         whose {} gained or lost most against <code>{base}</code>, each with a relevant post \
         whose rank moved the same way{}. <code>postassay explain --query Q --doc D</code> \
         shows the full detail.</p>",
        esc(headline),
        if r.settings.redact { " (post texts redacted)" } else { "" }
    );
    for (system, table) in moved_tables(r, headline) {
        let _ = writeln!(s, "<h3><code>{}</code></h3>\n{}", esc(&system), table.html());
    }
    s.push_str("</section>\n");
}

/// Per-query differences of `system` against the baseline on metric `mi`,
/// sorted from the largest gain to the largest loss (ties by query id).
fn query_differences(r: &Report, system: &str, mi: usize) -> Option<Vec<Bar>> {
    let base: BTreeMap<&str, f64> = r
        .per_query
        .iter()
        .find(|p| p.system == r.settings.baseline)?
        .queries
        .iter()
        .filter_map(|q| q.values.get(mi).map(|v| (q.query_id.as_str(), *v)))
        .collect();
    let sys = r.per_query.iter().find(|p| p.system.as_str() == system)?;
    let mut bars: Vec<Bar> = sys
        .queries
        .iter()
        .filter_map(|q| {
            let v = q.values.get(mi)?;
            let b = base.get(q.query_id.as_str())?;
            Some(Bar { label: q.query_id.as_str().to_string(), value: v - b })
        })
        .collect();
    // Stable: equal differences keep the byte order of query ids.
    bars.sort_by(|a, b| b.value.total_cmp(&a.value));
    Some(bars)
}

fn against_baseline(s: &mut String, r: &Report, headline: &str) {
    if r.comparisons.is_empty() {
        return;
    }
    s.push_str("<section id=\"against-baseline\">\n<h2>Against the baseline</h2>\n<ul>\n");
    for c in r.comparisons.iter().filter(|c| c.metric == headline) {
        let _ = writeln!(s, "<li>{}</li>", spans_html(&sentence(r, c, headline)));
    }
    s.push_str("</ul>\n");
    if let Some(caveat) = breakdown_caveat(r).filter(|_| names_groups(r, headline)) {
        let _ = writeln!(s, "<p>{}</p>", esc(&caveat));
    }
    if let Some(mi) = r.metric_index(headline) {
        // One value scale for every per-query chart of the page, so equal
        // bars mean equal differences from chart to chart.
        let extent = r
            .comparisons
            .iter()
            .filter(|c| c.metric == headline)
            .filter_map(|c| query_differences(r, c.system.as_str(), mi))
            .map(|bars| svg::bar_extent(&bars))
            .fold(0.0, f64::max);
        for (n, c) in r.comparisons.iter().filter(|c| c.metric == headline).enumerate() {
            let Some(bars) = query_differences(r, c.system.as_str(), mi) else { continue };
            if bars.is_empty() {
                continue;
            }
            let name = c.system.as_str();
            let base = c.baseline.as_str();
            let chart = svg::difference_bars(
                &format!("chart-diff-{}", n + 1),
                &format!("{headline} of {name} minus {base}, per query"),
                &format!(
                    "One bar per evaluated query, sorted from the largest gain to the largest \
                     loss: {} queries above zero ({name} better), {} below ({name} worse), {} \
                     tied.",
                    c.wins, c.losses, c.ties
                ),
                &bars,
                extent,
                &format!("Δ {headline} ({name} − {base})"),
                &format!("{} evaluated queries, sorted by difference", bars.len()),
            );
            let top: Vec<String> = bars
                .iter()
                .filter(|b| b.value > 1e-12)
                .take(3)
                .map(|b| format!("<code>{}</code>", esc(&b.label)))
                .collect();
            let bottom: Vec<String> = bars
                .iter()
                .rev()
                .filter(|b| b.value < -1e-12)
                .take(3)
                .map(|b| format!("<code>{}</code>", esc(&b.label)))
                .collect();
            let _ = writeln!(
                s,
                "<h3><code>{}</code> against <code>{}</code></h3>",
                esc(name),
                esc(base)
            );
            figure(
                s,
                &chart,
                &format!(
                    "Where it wins and where it loses: each bar is one query’s {} of <code>{}</code> \
                     minus that of <code>{}</code>. <span class=\"swatch\" style=\"--c:{}\"></span>▲ \
                     above zero, better: {} queries; <span class=\"swatch\" style=\"--c:{}\"></span>▼ \
                     below zero, worse: {}; grey, tied: {}. Largest gains: {}. Largest losses: {}. \
                     Every per-query chart of this report has the same scale. Hover a bar for its \
                     query id and difference.",
                    esc(headline),
                    esc(name),
                    esc(base),
                    svg::BETTER,
                    c.wins,
                    svg::WORSE,
                    c.losses,
                    c.ties,
                    if top.is_empty() { "none".to_string() } else { top.join(", ") },
                    if bottom.is_empty() { "none".to_string() } else { bottom.join(", ") },
                ),
            );
        }
    }
    s.push_str(
        "<h3>Every metric</h3>\n<div class=\"scroll\"><table>\n<thead><tr><th scope=\"col\">system</th>\
         <th scope=\"col\">metric</th><th scope=\"col\">Δ mean</th><th scope=\"col\">95% CI of Δ</th>\
         <th scope=\"col\">p (t-test)</th><th scope=\"col\">p (random&shy;ization)</th>\
         <th scope=\"col\">p (Holm)</th><th scope=\"col\">significant</th>\
         <th scope=\"col\">won / lost / tied</th><th scope=\"col\">detectable Δ</th></tr></thead>\n<tbody>\n",
    );
    for c in &r.comparisons {
        let _ = writeln!(
            s,
            "<tr{}><th scope=\"row\"><code>{}</code></th><td>{}</td><td class=\"num\">{}</td>\
             <td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td>\
             <td class=\"num\">{}</td><td>{}</td><td class=\"num\">{} / {} / {}</td><td class=\"num\">{}</td></tr>",
            if c.significant { " class=\"sig\"" } else { "" },
            esc(c.system.as_str()),
            breakable_metric(&c.metric),
            signed(c.delta),
            interval(c.delta_ci_low, c.delta_ci_high),
            esc(&pvalue(c.p_ttest)),
            esc(&pvalue(c.p_randomization)),
            esc(&pvalue(c.p_holm)),
            if c.significant { "yes ✱" } else { "no" },
            c.wins,
            c.losses,
            c.ties,
            c.min_detectable.map(fixed).unwrap_or_else(|| "n/a".into())
        );
    }
    s.push_str("</tbody>\n</table></div>\n</section>\n");
}

/// A metric key, escaped, that a narrow table may wrap after its `@`
/// (`recall@` / `100`) rather than overflow.
fn breakable_metric(key: &str) -> String {
    esc(key).replace('@', "@<wbr>")
}

/// Mix `hex` (`#rrggbb`) with white: `share` 0 is white, 1 the colour.
fn tint(hex: &str, share: f64) -> String {
    let channel =
        |i: usize| u8::from_str_radix(hex.get(i..i + 2).unwrap_or("ff"), 16).unwrap_or(255);
    let mix = |c: u8| (255.0 - (255.0 - f64::from(c)) * share.clamp(0.0, 1.0)).round() as u8;
    format!("#{:02x}{:02x}{:02x}", mix(channel(1)), mix(channel(3)), mix(channel(5)))
}

/// Strongest tint of a heat-map cell: keeps dark text above 4.5:1 contrast.
const MAX_TINT: f64 = 0.6;

fn heat_colour(c: &ComparisonRow, scale: f64) -> String {
    let share = MAX_TINT * (c.delta.abs() / scale).min(1.0);
    if c.delta.abs() <= 1e-12 {
        "#ffffff".to_string()
    } else if improves(c) {
        tint(svg::BETTER, share)
    } else {
        tint(svg::WORSE, share)
    }
}

fn breakdowns(s: &mut String, r: &Report, headline: &str) {
    let Some(mi) = r.metric_index(headline) else { return };
    // One colour scale for both tables: the largest tested difference.
    let scale = r
        .breakdowns
        .iter()
        .flat_map(|cell| cell.comparisons.iter().filter(|c| c.metric == headline))
        .map(|c| c.delta.abs())
        .fold(0.0, f64::max);
    let scale = if scale > 1e-12 { scale } else { 1.0 };
    for (dimension, id, title) in
        [("lang", "by-language", "By query language"), ("tag", "by-tag", "By query tag")]
    {
        let cells: Vec<&BreakdownCell> =
            r.breakdowns.iter().filter(|c| c.dimension == dimension).collect();
        if cells.is_empty() {
            continue;
        }
        let _ = writeln!(
            s,
            "<section id=\"{id}\">\n<h2>{title}</h2>\n<p>Mean {} per group; under it the difference \
             from the baseline, ✱ when significant after Holm at α = {}. Cells are tinted by that \
             difference: blue when the chain is better, orange when worse, stronger for larger \
             differences. Groups under {} queries are not tested (hatched).{}</p>",
            esc(headline),
            r.settings.alpha,
            MIN_BREAKDOWN_QUERIES,
            breakdown_caveat(r).map(|c| format!(" {}", esc(&c))).unwrap_or_default()
        );
        heat_legend(s, scale);
        let _ = write!(
            s,
            "<div class=\"scroll\"><table class=\"heat\" aria-label=\"{} by {}\">\n<thead><tr>\
             <th scope=\"col\">group</th><th scope=\"col\">queries</th>",
            esc(headline),
            if dimension == "lang" { "query language" } else { "query tag" }
        );
        for sys in &r.summary {
            let _ = write!(
                s,
                "<th scope=\"col\"><code>{}</code>{}</th>",
                esc(sys.system.as_str()),
                if sys.system == r.settings.baseline { " (baseline)" } else { "" }
            );
        }
        s.push_str("</tr></thead>\n<tbody>\n");
        for cell in cells {
            let _ = write!(
                s,
                "<tr><th scope=\"row\"><code>{}</code></th><td class=\"num\">{}{}</td>",
                esc(&cell.value),
                cell.queries,
                if cell.too_small { "<br><span class=\"note\">too few to test</span>" } else { "" }
            );
            for sys in &cell.systems {
                let mean = sys.metrics.get(mi).map_or(0.0, |m| m.mean);
                let cmp = cell
                    .comparisons
                    .iter()
                    .find(|c| c.system == sys.system && c.metric == headline);
                match cmp {
                    Some(c) => {
                        let _ = write!(
                            s,
                            "<td class=\"num\" style=\"background:{}\" title=\"Δ {}, {} after Holm\">{}<br>\
                             <span class=\"delta\">{}{}</span></td>",
                            heat_colour(c, scale),
                            signed(c.delta),
                            esc(&p_equals(c.p_holm)),
                            fixed(mean),
                            signed(c.delta),
                            if c.significant { " ✱" } else { "" }
                        );
                    }
                    None if sys.system == r.settings.baseline => {
                        let _ = write!(s, "<td class=\"num base\">{}</td>", fixed(mean));
                    }
                    None => {
                        let _ = write!(
                            s,
                            "<td class=\"num untested\" title=\"too few queries to test\">{}<br>\
                             <span class=\"delta\">not tested</span></td>",
                            fixed(mean)
                        );
                    }
                }
            }
            s.push_str("</tr>\n");
        }
        s.push_str("</tbody>\n</table></div>\n</section>\n");
    }
}

fn heat_legend(s: &mut String, scale: f64) {
    s.push_str("<p class=\"legend\" aria-label=\"Heat-map colours\">");
    for share in [-1.0, -0.5, 0.0, 0.5, 1.0] {
        let colour = if share < 0.0 {
            tint(svg::WORSE, -share * MAX_TINT)
        } else if share > 0.0 {
            tint(svg::BETTER, share * MAX_TINT)
        } else {
            "#ffffff".to_string()
        };
        let label = if share < 0.0 {
            format!("worse by {}", fixed(-share * scale))
        } else if share > 0.0 {
            format!("better by {}", fixed(share * scale))
        } else {
            "no difference".to_string()
        };
        let _ = write!(s, "<span class=\"key\"><span class=\"box\" style=\"background:{colour}\"></span>{label}</span> ");
    }
    s.push_str(
        "<span class=\"key\">✱ significant</span> <span class=\"key\"><span class=\"box untested\">\
         </span>too few to test</span></p>\n",
    );
}

fn cost(s: &mut String, r: &Report, headline: &str) {
    if r.systems.iter().all(|x| x.cost.is_none()) {
        return;
    }
    s.push_str("<section id=\"cost\">\n<h2>Cost</h2>\n");
    let mi = r.metric_index(headline);
    let colours = series(r);
    let mut size_points = Vec::new();
    let mut term_points = Vec::new();
    let max_bytes =
        r.systems.iter().filter_map(|x| x.cost.as_ref().map(|c| c.index_bytes)).max().unwrap_or(0);
    let (unit, divisor) =
        if max_bytes >= 1 << 20 { ("MiB", f64::from(1 << 20)) } else { ("KiB", 1024.0) };
    for sys in &r.systems {
        let (Some(c), Some(mi)) = (&sys.cost, mi) else { continue };
        let Some((i, summary)) = r.summary.iter().enumerate().find(|(_, x)| x.system == sys.name)
        else {
            continue;
        };
        let Some(m) = summary.metrics.get(mi) else { continue };
        let Some(style) = colours.get(i) else { continue };
        let point = |x: f64| Point {
            series: style.clone(),
            x,
            y: m.mean,
            y_low: m.ci_low,
            y_high: m.ci_high,
        };
        size_points.push(point(c.index_bytes as f64 / divisor));
        term_points.push(point(c.distinct_terms as f64));
    }
    if !size_points.is_empty() {
        let chart = svg::scatter(
            "chart-cost-size",
            &format!("{headline} against index size"),
            &format!("Each chain's mean {headline} with its 95% interval, against the size of its index on disk in {unit}."),
            &size_points,
            (&format!("index size on disk ({unit})"), 1),
            &format!("mean {headline}"),
        );
        figure(
            s,
            &chart,
            &format!(
                "Quality against index size: up and to the left is better and cheaper. Dot: mean \
                 {} over queries; whisker: its 95% interval; hollow: the baseline.",
                esc(headline)
            ),
        );
        let chart = svg::scatter(
            "chart-cost-terms",
            &format!("{headline} against distinct terms"),
            &format!("Each chain's mean {headline} with its 95% interval, against the number of distinct terms in its index."),
            &term_points,
            ("distinct terms in the index (count)", 0),
            &format!("mean {headline}"),
        );
        figure(
            s,
            &chart,
            &format!(
                "Quality against vocabulary: a larger vocabulary means a larger term dictionary \
                 to keep in memory. Dot: mean {} over queries; whisker: its 95% interval; hollow: \
                 the baseline.",
                esc(headline)
            ),
        );
    }
    if let Some(table) = cost_table(r) {
        s.push_str(&table.html());
    }
    if let Some(table) = route_table(r) {
        s.push_str(&format!("<h3>Routing</h3>\n<p>{}</p>\n{}", esc(ROUTING_NOTE), table.html()));
    }
    s.push_str("</section>\n");
}

/// The chains' diagnostics on open data (`run --vet`), the same tables as
/// `report.md`'s. Routing accuracies carry a bar across their cell (0 to
/// 100% of its width), so the climb with sentence length shows at a glance
/// on one common scale, with the number beside it.
fn diagnostics(s: &mut String, r: &Report) {
    let Some(d) = &r.diagnostics else { return };
    s.push_str(
        "<section id=\"diagnostics\">\n<h2>Diagnostics</h2>\n<p>The chains of this run, exactly \
         as indexed, on open linguistic data (<code>--vet</code>). <code>postassay vet</code> \
         shows the worst offenders and where sentences were routed.</p>\n",
    );
    if !d.conflation.is_empty() {
        s.push_str(
            "<h3>Conflation against lemma classes</h3>\n<p>Paice (SIGIR 1994): UI = share of \
             pairs of forms of one lemma the chain leaves apart, OI = share of pairs of \
             different lemmas it merges (both: lower is better), SW = OI / UI. Over lemmas with \
             2+ forms: <em>whole</em> = share conflated to one term sequence, <em>terms</em> = \
             mean distinct term sequences.</p>\n",
        );
        diagnostics_table(s, &conflation_table(&d.conflation));
    }
    for group in routing_by_chain(&d.routing) {
        let _ = writeln!(
            s,
            "<h3>Routing by length: <code>{}</code>, detector <code>{}</code></h3>\n<p>Sentences \
             of known language routed like posts without a declared language; correct = the \
             field of their own language. Accuracy (sentences) per length in characters, with \
             a <span class=\"box\" style=\"background:{}\"></span>bar across the cell from 0 \
             to 100%; <em>not routed</em>: a language the route does not list, whose cells (↪) \
             show the share sent to the fallback, its right place. µs / sentence: CPU time of \
             detection, measured in this run.</p>",
            esc(group.chain.as_str()),
            esc(group.detector.as_str()),
            tint(svg::BETTER, BAR_TINT)
        );
        diagnostics_table(s, &routing_table(&group.rows));
    }
    if !d.segmentation.is_empty() {
        s.push_str(
            "<h3>Hashtag segmentation</h3>\n<p>Gold hashtags through each chain up to its \
             <code>hashtags</code> step. <em>exact</em> = share of tags split as the gold; P, R, \
             F1 = word-boundary precision, recall and F1; <em>frequencies</em> = where the \
             segmenter's word frequencies come from.</p>\n",
        );
        diagnostics_table(s, &segmentation_table(&d.segmentation));
    }
    if !d.unspaced.is_empty() {
        let _ = writeln!(
            s,
            "<h3>Scripts written without spaces</h3>\n<p>{}</p>",
            esc(&UNSPACED_LEGEND.replace(['`', '*'], ""))
        );
        diagnostics_table(s, &unspaced_table(&d.unspaced));
    }
    if !d.notes.is_empty() {
        s.push_str("<p>Notes:</p>\n<ul>\n");
        for n in &d.notes {
            let _ = writeln!(s, "<li>{}</li>", esc(n));
        }
        s.push_str("</ul>\n");
    }
    s.push_str(
        "<p>Data files read:</p>\n<div class=\"scroll\"><table>\n<thead><tr><th scope=\"col\">role</th>\
         <th scope=\"col\">path</th><th scope=\"col\">SHA-256</th></tr></thead>\n<tbody>\n",
    );
    for f in &d.inputs {
        let _ = writeln!(
            s,
            "<tr><td>{}</td><td><code>{}</code></td><td><code class=\"hash\">{}</code></td></tr>",
            esc(&f.role),
            esc(&f.path),
            esc(&f.sha256)
        );
    }
    s.push_str("</tbody>\n</table></div>\n</section>\n");
}

/// How strongly accuracy bars are tinted (light enough for black text).
const BAR_TINT: f64 = 0.3;

/// One diagnostics table; a cell holding a share gets a bar of that width.
fn diagnostics_table(s: &mut String, t: &Table) {
    s.push_str("<div class=\"scroll\"><table>\n<thead><tr>");
    for h in &t.header {
        let _ = write!(s, "<th scope=\"col\">{}</th>", esc(h));
    }
    s.push_str("</tr></thead>\n<tbody>\n");
    let bar = tint(svg::BETTER, BAR_TINT);
    for row in &t.rows {
        s.push_str("<tr>");
        for (i, cell) in row.iter().enumerate() {
            let class =
                if t.numeric.get(i).copied().unwrap_or(false) { " class=\"num\"" } else { "" };
            match cell.share.filter(|v| v.is_finite()) {
                Some(share) => {
                    // Pixel scaling only: the share as a percentage of the cell's width.
                    let width = format!("{:.1}%", 100.0 * share.clamp(0.0, 1.0));
                    let _ = write!(
                        s,
                        "<td{class} style=\"background:linear-gradient(90deg, {bar} {width}, \
                         transparent {width})\">{}</td>",
                        esc(&cell.text)
                    );
                }
                None => {
                    let _ = write!(s, "<td{class}>{}</td>", esc(&cell.text));
                }
            }
        }
        s.push_str("</tr>\n");
    }
    s.push_str("</tbody>\n</table></div>\n");
}

/// Every chain's definition, exactly as run (`run` only).
fn chains(s: &mut String, r: &Report) {
    let Some(table) = definitions_table(r) else { return };
    let _ = writeln!(
        s,
        "<section id=\"chains\">\n<h2>Chains</h2>\n<p>{CHAINS_INTRO}</p>\n{}</section>",
        table.html()
    );
}

fn inputs(s: &mut String, r: &Report) {
    let st = &r.settings;
    let _ = writeln!(
        s,
        "<section id=\"inputs\">\n<h2>Inputs and settings</h2>\n<p>{}</p>",
        spans_html(&settings_sentence(r))
    );
    s.push_str("<ul class=\"coverage\">\n");
    for line in coverage_lines(r) {
        let _ = writeln!(s, "<li>{}</li>", esc(&line));
    }
    s.push_str("</ul>\n");
    s.push_str(
        "<div class=\"scroll\"><table>\n<thead><tr><th scope=\"col\">role</th><th scope=\"col\">path</th>\
         <th scope=\"col\">SHA-256</th></tr></thead>\n<tbody>\n",
    );
    for f in &r.inputs {
        let _ = writeln!(
            s,
            "<tr><td>{}</td><td><code>{}</code></td><td><code class=\"hash\">{}</code></td></tr>",
            esc(&f.role),
            esc(&f.path),
            esc(&f.sha256)
        );
    }
    s.push_str("</tbody>\n</table></div>\n");
    if !st.chains.is_empty() {
        let json = serde_json::to_string_pretty(&st.chains).unwrap_or_default();
        let _ = writeln!(
            s,
            "<details><summary>Chain definitions</summary><pre>{}</pre></details>",
            esc(&json)
        );
    }
    s.push_str("</section>\n");
}

fn timing(s: &mut String, r: &Report, headline: &str) {
    let _ = writeln!(
        s,
        "{TIMING_BEGIN}\n<section id=\"timing\" class=\"timing\">\n<h2>Timing</h2>\n<p>Wall-clock \
         figures; the only part of this report that changes between identical runs. Whole \
         command: {:.2} s.</p>",
        r.timing.total_seconds
    );
    if !r.timing.chains.is_empty() {
        if let Some(line) = build_time(r, headline) {
            let _ = writeln!(s, "<p>{}</p>", spans_html(&line));
        }
        let mi = r.metric_index(headline);
        let colours = series(r);
        let points: Vec<Point> = r
            .timing
            .chains
            .iter()
            .filter_map(|t| {
                let (i, summary) =
                    r.summary.iter().enumerate().find(|(_, x)| x.system == t.name)?;
                let m = summary.metrics.get(mi?)?;
                Some(Point {
                    series: colours.get(i)?.clone(),
                    x: t.build_seconds,
                    y: m.mean,
                    y_low: m.ci_low,
                    y_high: m.ci_high,
                })
            })
            .collect();
        if !points.is_empty() {
            let chart = svg::scatter(
                "chart-cost-build",
                &format!("{headline} against index build time"),
                &format!("Each chain's mean {headline} with its 95% interval, against the wall-clock seconds its index took to build."),
                &points,
                ("index build time (s, wall-clock)", 3),
                &format!("mean {headline}"),
            );
            figure(
                s,
                &chart,
                &format!(
                    "Quality against build time (wall-clock on this machine, varies between runs). \
                     Dot: mean {} over queries; whisker: its 95% interval; hollow: the baseline.",
                    esc(headline)
                ),
            );
        }
        s.push_str(
            "<div class=\"scroll\"><table>\n<thead><tr><th scope=\"col\">chain</th>\
             <th scope=\"col\">index build (s)</th><th scope=\"col\">query latency mean (ms)</th>\
             <th scope=\"col\">query latency p95 (ms)</th></tr></thead>\n<tbody>\n",
        );
        for t in &r.timing.chains {
            let _ = writeln!(
                s,
                "<tr><th scope=\"row\"><code>{}</code></th><td class=\"num\">{:.3}{}</td>\
                 <td class=\"num\">{:.3}</td><td class=\"num\">{:.3}</td></tr>",
                esc(t.name.as_str()),
                t.build_seconds,
                if t.from_cache { " (cached)" } else { "" },
                t.query_ms_mean,
                t.query_ms_p95
            );
        }
        s.push_str("</tbody>\n</table></div>\n");
        if r.timing.chains.iter().any(|t| t.from_cache) {
            let _ = writeln!(s, "<p>{}</p>", esc(CACHED_NOTE));
        }
    }
    let _ = writeln!(s, "</section>\n{TIMING_END}");
}

/// The page's style sheet: system fonts only (nothing to fetch), sizes of
/// 12 px and more, and a print layout that lets charts shrink to the page.
const CSS: &str = "
:root { color-scheme: light; }
body { font-family: system-ui, -apple-system, \"Segoe UI\", Roboto, \"Helvetica Neue\", Arial, sans-serif;
  font-size: 15px; line-height: 1.5; color: #1a1a1a; background: #ffffff; max-width: 1120px;
  margin: 0 auto; padding: 24px 28px 48px; }
h1 { font-size: 28px; margin: 0 0 8px; }
h2 { font-size: 21px; margin: 36px 0 10px; padding-top: 8px; border-top: 1px solid #cccccc; }
h3 { font-size: 16px; margin: 22px 0 6px; }
code { font-family: ui-monospace, \"SFMono-Regular\", Menlo, Consolas, \"Liberation Mono\", monospace;
  font-size: 0.92em; background: #f2f2f2; padding: 0 3px; border-radius: 3px; }
code.hash { font-size: 12px; word-break: break-all; }
nav { font-size: 14px; margin: 8px 0 0; }
nav a { color: #005a8c; }
.lede { font-size: 16px; }
.case { background: #eef5fb; border-left: 6px solid #0072B2; padding: 4px 20px 8px; margin-top: 20px; }
.case h2 { border-top: none; margin-top: 10px; }
.case p { margin: 8px 0; }
figure { margin: 16px 0 24px; }
figcaption { font-size: 14px; color: #333333; max-width: 900px; }
.scroll { overflow-x: auto; }
svg.chart { display: block; max-width: 100%; height: auto; }
table { border-collapse: collapse; margin: 8px 0 16px; font-size: 14px; }
th, td { border: 1px solid #cccccc; padding: 4px 8px; text-align: left; vertical-align: top; }
thead th { background: #f2f2f2; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
.ci { color: #555555; font-size: 13px; }
tr.sig th, tr.sig td { font-weight: 600; }
table.heat td { min-width: 84px; }
.delta { font-size: 13px; }
.note { font-size: 12px; color: #555555; }
td.base { background: #ffffff; }
.untested { background: repeating-linear-gradient(45deg, #f4f4f4, #f4f4f4 5px, #e2e2e2 5px, #e2e2e2 7px); }
.legend { font-size: 14px; }
.key { display: inline-block; margin-right: 14px; white-space: nowrap; }
.dot { display: inline-block; width: 11px; height: 11px; border-radius: 50%; background: var(--c);
  border: 2px solid var(--c); margin-right: 5px; vertical-align: -1px; }
.dot.hollow { background: #ffffff; }
.box, .swatch { display: inline-block; width: 16px; height: 12px; border: 1px solid #999999;
  margin-right: 5px; vertical-align: -1px; }
.swatch { background: var(--c); border-color: var(--c); }
.timing { margin-top: 40px; border-top: 3px double #999999; }
.timing h2 { border-top: none; }
details { margin: 8px 0; }
pre { font-size: 12px; background: #f7f7f7; padding: 8px; overflow-x: auto; white-space: pre-wrap;
  overflow-wrap: anywhere; }
@media (max-width: 760px) {
  body { padding: 12px 12px 32px; font-size: 14px; }
  h1 { font-size: 24px; }
  table { font-size: 12px; }
  th, td { padding: 3px; }
  .ci { font-size: 12px; }
  td.num { white-space: normal; }
  table.heat td { min-width: 0; }
  .case { padding: 4px 12px 8px; }
}
@media print {
  body { max-width: none; padding: 0; font-size: 10.5pt; }
  nav { display: none; }
  .scroll { overflow: visible; }
  figure, table, .case, h2, h3 { break-inside: avoid; }
  h2, h3, h2 + p, h3 + p, p.legend { break-after: avoid; }
  h2 + p, h3 + p, p.legend { break-inside: avoid; }
  details::details-content { content-visibility: visible; display: block; }
  details > summary { list-style: none; font-weight: 600; }
  .timing { break-before: page; }
  .dot, .box, .swatch, td, .untested { print-color-adjust: exact; -webkit-print-color-adjust: exact; }
}
";

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::diagnostics::Cell;

    #[test]
    fn diagnostics_tables_escape_and_draw_shares_as_bars() {
        let t = Table {
            header: vec!["set".into(), "accuracy".into()],
            numeric: vec![false, true],
            rows: vec![vec![
                Cell { text: "<en>".into(), share: None },
                Cell { text: "25.0%".into(), share: Some(0.25) },
            ]],
        };
        let mut s = String::new();
        diagnostics_table(&mut s, &t);
        // #0072B2 at 30%: 255 − 255·0.3 = 178.5 → b3; 255 − 141·0.3 = 212.7 → d5;
        // 255 − 77·0.3 = 231.9 → e8.
        assert!(s.contains(
            "<tr><td>&lt;en&gt;</td><td class=\"num\" style=\"background:linear-gradient(90deg, \
             #b3d5e8 25.0%, transparent 25.0%)\">25.0%</td></tr>"
        ), "{s}");
        assert!(s.contains("<th scope=\"col\">accuracy</th>"));
    }

    #[test]
    fn tints_mix_with_white() {
        assert_eq!(tint("#0072B2", 0.0), "#ffffff");
        assert_eq!(tint("#0072B2", 1.0), "#0072b2");
        // 255 − (255 − 0)·0.6 = 102; 255 − 141·0.6 = 170.4; 255 − 77·0.6 = 208.8.
        assert_eq!(tint("#0072B2", 0.6), "#66aad1");
    }
}
