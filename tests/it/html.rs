//! `report.html` and the reindex case: page structure, no external resource,
//! byte-identical output outside the Timing section, golden `report.md`
//! files, and a real render in headless Chromium.
//!
//! Fixtures (hand-made, no external source):
//! - `score/`: two runs on two evaluated queries; no gain is detectable.
//! - `html/gain/`: three runs on eight queries, each with one post of grade
//!   2 (`r`), one of grade 1 (`p`) and one of grade 0 (`n`). `base` ranks
//!   n, p, r everywhere; `better` ranks r first on q1–q7 (with an unjudged
//!   `u1` second on q1) and ties on q8, so it wins 7 of 8 and the exact
//!   sign-flip test gives 4/256, 0.031 after Holm over two systems;
//!   `mixed` wins four queries and loses four; `small` ranks r second on
//!   every query (n, r, p), a gain of 0.072 in nDCG@3 each.
//! - `html/bench/`: 14 posts and 7 queries for a small `run` (cost and
//!   timing charts); one query id, `q&<b>`, needs escaping.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use postassay::report::html::{TIMING_BEGIN, TIMING_END};

use crate::util::{fixture, postassay, texts};

/// `postassay score` in the fixture directory `dir` with relative paths (so
/// the report names no machine-specific path).
fn score_fixture(dir: &str, runs: &[&str], metrics: &str, out: &Path) {
    let out = out.to_str().expect("temp path is UTF-8");
    let mut args = vec!["score", "--quiet", "--judgments", "qrels.csv", "--queries", "queries.csv"];
    for run in runs {
        args.extend(["--run", run]);
    }
    args.extend(["--metrics", metrics, "--out", out]);
    let res = postassay(&fixture(dir), &args);
    assert_eq!(res.status.code(), Some(0), "stderr: {}", texts(&res).1);
}

/// `postassay score` on the `html/gain` fixture.
fn score_gain(out: &Path) {
    let runs = ["base=base.csv", "better=better.csv", "mixed=mixed.csv"];
    score_fixture("html/gain", &runs, "ndcg@3,map,p@2,mrr,unjudged@2", out);
}

/// `postassay score` on the `score` fixture, without `unjudged@k`.
fn score_no_gain(out: &Path) {
    score_fixture("score", &["a=run_a.csv", "b=run_b.csv"], "ndcg@3,map,p@2", out);
}

/// A small `run` of two chains on the `html/bench` fixture.
fn run_bench(out: &Path) {
    run_bench_chains(out, "standard,stemmed");
}

/// A small `run` of `chains` on the `html/bench` fixture.
fn run_bench_chains(out: &Path, chains: &str) {
    let dir = fixture("html/bench");
    let out = out.to_str().expect("temp path is UTF-8");
    let inputs =
        ["--corpus", "posts.jsonl", "--queries", "queries.csv", "--judgments", "qrels.csv"];
    let mut args = vec!["run", "--quiet"];
    args.extend(inputs);
    args.extend(["--chains", chains, "--out", out]);
    let res = postassay(&dir, &args);
    assert_eq!(res.status.code(), Some(0), "stderr: {}", texts(&res).1);
}

fn read(path: &Path) -> String {
    std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// The page without its Timing section (between the two markers).
fn without_timing(html: &str) -> String {
    let (Some(a), Some(b)) = (html.find(TIMING_BEGIN), html.find(TIMING_END)) else {
        panic!("timing markers missing");
    };
    format!("{}{}", &html[..a], &html[b + TIMING_END.len()..])
}

/// Checks every page must pass: self-contained, charts titled and closed.
fn assert_self_contained(html: &str) {
    for banned in ["http://", "https://", "src=", "<script", "url(", "@import", "<link", "<img"] {
        assert!(!html.contains(banned), "report.html must not contain {banned:?}");
    }
    assert!(html.starts_with("<!DOCTYPE html>"));
    assert!(html.trim_end().ends_with("</html>"));
    let opened = html.matches("<svg").count();
    assert_eq!(opened, html.matches("</svg>").count(), "every <svg> closed");
    assert_eq!(
        opened,
        html.matches("role=\"img\" aria-labelledby=").count(),
        "every chart labelled"
    );
    // Each chart's <title> is the first thing inside it.
    for part in html.split("<svg").skip(1) {
        let head = part.split('>').nth(1).unwrap_or_default();
        assert!(head.starts_with("<title id="), "chart without a leading <title>: {head}");
    }
    // Balanced blocks (well-formed enough for a browser and a reader).
    for tag in ["section", "figure", "table", "p", "ul", "header", "nav"] {
        let open =
            html.matches(&format!("<{tag}>")).count() + html.matches(&format!("<{tag} ")).count();
        assert_eq!(open, html.matches(&format!("</{tag}>")).count(), "<{tag}> balanced");
    }
    // No text under 12 px in the charts.
    for part in html.split("font-size=\"").skip(1) {
        let size: f64 = part.split('"').next().and_then(|v| v.parse().ok()).unwrap_or(0.0);
        assert!(size >= 12.0, "chart text of {size} px");
    }
}

#[test]
fn html_report_of_a_detectable_gain() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let out = tmp.path().join("out");
    score_gain(&out);
    let html = read(&out.join("report.html"));
    assert_self_contained(&html);
    for heading in [
        "<h2>Recommendation</h2>",
        "<h2>Scores</h2>",
        "<h2>Against the baseline</h2>",
        "<h2>By query language</h2>",
        "<h2>By query tag</h2>",
        "<h2>Inputs and settings</h2>",
        "<h2>Timing</h2>",
    ] {
        assert_eq!(html.matches(heading).count(), 1, "{heading}");
    }
    // `score` has no index: no cost section.
    assert!(!html.contains("<h2>Cost</h2>"));
    // One chart of means, one per-query chart per compared run.
    assert_eq!(html.matches("<svg").count(), 3);
    assert!(html.contains("id=\"chart-means\""));
    assert!(html.contains("id=\"chart-diff-1\"") && html.contains("id=\"chart-diff-2\""));
    // The recommendation opens the page, before the scores.
    let case = html.find("<h2>Recommendation</h2>").expect("case");
    assert!(case < html.find("<h2>Scores</h2>").expect("scores"));
    assert!(html.contains("<strong>Switch to <code>better</code>.</strong>"));
    assert!(
        html.contains("by +0.357 (95% CI of the difference [0.254, 0.413], p = 0.031 after Holm")
    );
    // `better` vs `base` per query: seven bars above zero, one tie (q8).
    let diff1 = html
        .split("id=\"chart-diff-1\"")
        .nth(1)
        .and_then(|p| p.split("</svg>").next())
        .expect("chart");
    assert_eq!(diff1.matches("fill=\"#0072B2\"").count(), 7);
    assert_eq!(diff1.matches("fill=\"#E69F00\"").count(), 0);
    // A tie has no sign in the tooltip (issue 12: never −0.000).
    assert!(diff1.contains("<title>q8: 0.000</title>"));
    // `mixed`: four wins and four losses.
    let diff2 = html
        .split("id=\"chart-diff-2\"")
        .nth(1)
        .and_then(|p| p.split("</svg>").next())
        .expect("chart");
    assert_eq!(diff2.matches("fill=\"#0072B2\"").count(), 4);
    assert_eq!(diff2.matches("fill=\"#E69F00\"").count(), 4);
    // Heat-map: `de` has two queries (not tested), `en` six (tested).
    assert!(html.contains("too few to test"));
    assert!(html.contains("+0.407"), "en delta of `better` from the breakdown");
}

#[test]
fn html_report_of_a_run_has_cost_charts_and_escapes_ids() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let out = tmp.path().join("out");
    run_bench(&out);
    let html = read(&out.join("report.html"));
    assert_self_contained(&html);
    assert_eq!(html.matches("<h2>Cost</h2>").count(), 1);
    // Means, one per-query chart, two cost scatters, one build-time scatter.
    assert_eq!(html.matches("<svg").count(), 5);
    for id in
        ["chart-means", "chart-diff-1", "chart-cost-size", "chart-cost-terms", "chart-cost-build"]
    {
        assert_eq!(html.matches(&format!("id=\"{id}\"")).count(), 1, "{id}");
    }
    // The build-time chart sits inside the Timing section, the others outside.
    let timing =
        &html[html.find(TIMING_BEGIN).expect("begin")..html.find(TIMING_END).expect("end")];
    assert!(timing.contains("id=\"chart-cost-build\""));
    assert!(!without_timing(&html).contains("chart-cost-build"));
    // Tooltips give counts without decimals (issue 12): distinct terms.
    let terms = html
        .split("id=\"chart-cost-terms\"")
        .nth(1)
        .and_then(|p| p.split("</svg>").next())
        .expect("chart");
    let counts: Vec<&str> = terms
        .split("distinct terms in the index (count) ")
        .skip(1)
        .filter_map(|p| p.split(',').next())
        .collect();
    assert_eq!(counts.len(), 2, "one tooltip per chain: {terms}");
    assert!(counts.iter().all(|c| c.parse::<u64>().is_ok()), "{counts:?}");
    // Query id `q&<b>` only ever appears escaped.
    assert!(!html.contains("q&<b>"));
    assert!(html.contains("q&amp;&lt;b&gt;"));
    // Cost of the reindex case is in both renderings.
    let md = read(&out.join("report.md"));
    assert!(md.contains("## Recommendation"));
    assert!(md.contains("Judging holes (unjudged@10):"));
}

#[test]
fn html_is_identical_between_runs_apart_from_timing() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let (a, b) = (tmp.path().join("a"), tmp.path().join("b"));
    run_bench(&a);
    run_bench(&b);
    let (ha, hb) = (read(&a.join("report.html")), read(&b.join("report.html")));
    assert_eq!(ha.matches(TIMING_BEGIN).count(), 1);
    assert_eq!(ha.matches(TIMING_END).count(), 1);
    // Timing is the last section.
    let tail = &ha[ha.find(TIMING_END).expect("end")..];
    assert!(!tail.contains("<section"), "nothing after the Timing section");
    assert_eq!(without_timing(&ha), without_timing(&hb));
}

/// `report.md` up to its Timing section (the only part that varies).
fn markdown_without_timing(md: &str) -> String {
    match md.find("\n## Timing") {
        Some(i) => md[..=i].to_string(),
        None => md.to_string(),
    }
}

/// Compare `actual` with the golden file, or rewrite it when
/// `UPDATE_GOLDEN=1`. A mismatch prints every differing line.
fn assert_golden(actual: &str, golden: &Path) {
    if std::env::var_os("UPDATE_GOLDEN").is_some_and(|v| v == "1") {
        std::fs::write(golden, actual).expect("golden written");
        return;
    }
    let expected = read(golden);
    if expected == actual {
        return;
    }
    let (e, a): (Vec<&str>, Vec<&str>) = (expected.lines().collect(), actual.lines().collect());
    let mut diff = String::new();
    for i in 0..e.len().max(a.len()) {
        let (x, y) = (e.get(i), a.get(i));
        if x != y {
            diff.push_str(&format!(
                "line {}:\n  - {}\n  + {}\n",
                i + 1,
                x.copied().unwrap_or("<none>"),
                y.copied().unwrap_or("<none>")
            ));
        }
    }
    panic!(
        "{} differs from the output (rerun with UPDATE_GOLDEN=1 to accept):\n{diff}",
        golden.display()
    );
}

#[test]
fn markdown_golden_with_a_recommendation() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let out = tmp.path().join("out");
    score_gain(&out);
    let md = markdown_without_timing(&read(&out.join("report.md")));
    assert_golden(&md, &fixture("html/gain.golden.md"));
}

#[test]
fn markdown_golden_without_a_recommendation() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let out = tmp.path().join("out");
    score_no_gain(&out);
    let md = markdown_without_timing(&read(&out.join("report.md")));
    assert!(md.contains("no `unjudged@k` is among the metrics"));
    assert_golden(&md, &fixture("html/no_gain.golden.md"));
}

/// The y-axis tick labels of the chart `id` of a page.
fn y_ticks(html: &str, id: &str) -> Vec<String> {
    let chart = html
        .split(&format!("id=\"{id}\""))
        .nth(1)
        .and_then(|p| p.split("</svg>").next())
        .unwrap_or_else(|| panic!("no chart {id}"));
    chart
        .split("text-anchor=\"end\" font-size=\"12\">")
        .skip(1)
        .filter_map(|p| p.split('<').next())
        .map(str::to_string)
        .collect()
}

/// Issue 12: the per-query charts of one report share one value scale, so
/// `small`'s +0.072 bars are drawn on `better`'s axis (up to +0.413) and
/// look as small as they are.
#[test]
fn per_query_charts_share_one_scale() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let out = tmp.path().join("out");
    score_fixture(
        "html/gain",
        &["base=base.csv", "better=better.csv", "small=small.csv"],
        "ndcg@3",
        &out,
    );
    let html = read(&out.join("report.html"));
    let axis = ["−0.6", "−0.4", "−0.2", "0.0", "0.2", "0.4", "0.6"];
    assert_eq!(y_ticks(&html, "chart-diff-1"), axis);
    assert_eq!(y_ticks(&html, "chart-diff-2"), axis, "the same axis for the small gains");
    assert!(html.contains("<title>q1: +0.072</title>"));
    assert!(html.contains("Every per-query chart of this report has the same scale."));
}

/// Issue 12: the print style sheet keeps headings and the paragraph under
/// them with what follows, and prints `<details>` (the chain definitions)
/// open. Checked here as rules of the page; how Chromium paginates them was
/// checked by hand (print to PDF of the demo report: no page ends with a
/// heading or an intro paragraph, the definitions print in full).
#[test]
fn print_rules_keep_headings_with_their_content_and_open_details() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let out = tmp.path().join("out");
    run_bench(&out);
    let html = read(&out.join("report.html"));
    let print = html.split("@media print {").nth(1).and_then(|p| p.split("\n}\n").next());
    let print = print.expect("a print style sheet");
    for rule in [
        "h2, h3, h2 + p, h3 + p, p.legend { break-after: avoid; }",
        "h2 + p, h3 + p, p.legend { break-inside: avoid; }",
        "details::details-content { content-visibility: visible; display: block; }",
    ] {
        assert!(print.contains(rule), "missing {rule:?} in {print}");
    }
    assert!(html.contains("<details><summary>Chain definitions</summary>"));
}

/// The first Chromium-like browser found; without one, the check of
/// `test` is skipped, saying so.
fn chromium(test: &str) -> Option<PathBuf> {
    let found = ["/usr/bin/chromium", "/usr/bin/chromium-browser"]
        .iter()
        .map(PathBuf::from)
        .find(|p| p.is_file());
    if found.is_none() {
        crate::util::skip(&format!(
            "{test}: no chromium at /usr/bin/chromium (apt-get install -y chromium)"
        ));
    }
    found
}

/// Run `cmd` (its stdout is the caller's to set), killing it after
/// `limit`; true when it exited successfully.
fn run_with_limit(cmd: &mut Command, limit: Duration) -> bool {
    let Ok(mut child) = cmd.stderr(Stdio::null()).spawn() else {
        return false;
    };
    let start = Instant::now();
    loop {
        match child.try_wait() {
            Ok(Some(status)) => return status.success(),
            Ok(None) if start.elapsed() < limit => std::thread::sleep(Duration::from_millis(100)),
            _ => {
                let _ = child.kill();
                let _ = child.wait();
                return false;
            }
        }
    }
}

/// Chromium in headless mode with a throw-away profile and no network
/// traffic of its own.
fn headless(browser: &Path, profile: &Path) -> Command {
    let mut cmd = Command::new(browser);
    cmd.args([
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
    ])
    .arg(format!("--user-data-dir={}", profile.display()));
    cmd
}

/// A script for a copy of the page (the report itself has none): once the
/// page is laid out, it records on `<body data-probe>` the window's width,
/// the page's, every scrolling box whose content is wider than the box, and
/// each chart's place and scale (drawn width ÷ its own width).
const PROBE: &str = "<script>window.addEventListener('load', () => {
  const root = document.documentElement;
  const out = { viewport: root.clientWidth, page: root.scrollWidth, clipped: [], charts: [] };
  for (const el of document.querySelectorAll('.scroll, pre')) {
    if (el.scrollWidth > el.clientWidth + 1) out.clipped.push(el.innerText.slice(0, 40));
  }
  for (const svg of document.querySelectorAll('svg.chart')) {
    const r = svg.getBoundingClientRect();
    out.charts.push([svg.id, r.left, r.right, r.width / svg.viewBox.baseVal.width]);
  }
  document.body.setAttribute('data-probe', JSON.stringify(out));
});</script>";

/// Issue 12: at 700 px (a window of that width, scroll bar included) the
/// whole `run` report is readable: no horizontal scrolling of the page or
/// of any table, every chart whole inside the window, and chart text (12 px
/// and up at the chart's own size) no smaller than 11 px on screen.
#[test]
fn page_fits_a_700_px_window() {
    let Some(browser) = chromium("page_fits_a_700_px_window") else { return };
    let tmp = tempfile::tempdir().expect("temp dir");
    let out = tmp.path().join("out");
    run_bench_chains(&out, "standard,stemmed,hashtag,routed");
    let html = read(&out.join("report.html"));
    let probe_page = tmp.path().join("probe.html");
    std::fs::write(&probe_page, html.replace("</body>", &format!("{PROBE}</body>")))
        .expect("probe page written");
    let dom_path = tmp.path().join("dom.html");
    let ok = run_with_limit(
        headless(&browser, &tmp.path().join("profile"))
            .arg("--window-size=700,2000")
            .arg("--dump-dom")
            .arg(format!("file://{}", probe_page.display()))
            .stdout(std::fs::File::create(&dom_path).expect("DOM file")),
        Duration::from_secs(90),
    );
    assert!(ok, "{} did not lay out the page", browser.display());
    let dom = read(&dom_path);
    let probe = dom
        .split("data-probe=\"")
        .nth(1)
        .and_then(|p| p.split('"').next())
        .unwrap_or_else(|| panic!("no probe in the DOM: {dom}"))
        .replace("&quot;", "\"")
        .replace("&amp;", "&");
    let probe: serde_json::Value = serde_json::from_str(&probe).expect("probe JSON");
    let viewport = probe["viewport"].as_f64().expect("viewport");
    assert!((680.0..=700.0).contains(&viewport), "a 700 px window: {probe}");
    assert_eq!(probe["page"].as_f64(), Some(viewport), "the page scrolls sideways: {probe}");
    assert_eq!(probe["clipped"], serde_json::json!([]), "tables wider than the page: {probe}");
    let charts = probe["charts"].as_array().expect("charts");
    assert_eq!(charts.len(), 7, "means, three per-query charts, three scatters: {probe}");
    for chart in charts {
        let (left, right, scale) = (chart[1].as_f64(), chart[2].as_f64(), chart[3].as_f64());
        let (Some(left), Some(right), Some(scale)) = (left, right, scale) else {
            panic!("{chart}")
        };
        assert!(left >= 0.0 && right <= viewport, "{chart} not whole in {viewport} px");
        assert!(12.0 * scale >= 11.0, "{chart}: 12 px text drawn at {:.1} px", 12.0 * scale);
    }
}

#[test]
fn chromium_renders_the_page() {
    let Some(browser) = chromium("chromium_renders_the_page") else { return };
    let tmp = tempfile::tempdir().expect("temp dir");
    let out = tmp.path().join("out");
    score_gain(&out);
    let page = out.join("report.html");
    let png_path = tmp.path().join("page.png");
    let profile = tmp.path().join("profile");
    let ok = run_with_limit(
        headless(&browser, &profile)
            .stdout(Stdio::null())
            .arg("--hide-scrollbars")
            .arg(format!("--screenshot={}", png_path.display()))
            .arg("--window-size=1280,2400")
            .arg(format!("file://{}", page.display())),
        Duration::from_secs(90),
    );
    assert!(ok && png_path.is_file(), "{} wrote no screenshot", browser.display());

    let file = std::fs::File::open(&png_path).expect("screenshot opens");
    let mut decoder = png::Decoder::new(file);
    decoder.set_transformations(png::Transformations::normalize_to_color8());
    let mut reader = decoder.read_info().expect("a PNG");
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).expect("a frame");
    assert_eq!((info.width, info.height), (1280, 2400), "window size");
    let channels = info.color_type.samples();
    assert!(channels >= 3, "colour screenshot");
    let pixels: Vec<[u8; 3]> =
        buf[..info.buffer_size()].chunks_exact(channels).map(|p| [p[0], p[1], p[2]]).collect();

    // Not blank: many distinct colours and a fair share of non-white ink.
    let mut distinct: Vec<[u8; 3]> = pixels.iter().step_by(7).copied().collect();
    distinct.sort_unstable();
    distinct.dedup();
    assert!(distinct.len() > 50, "only {} distinct colours: blank page?", distinct.len());
    let ink = pixels.iter().filter(|p| p.iter().any(|c| *c < 200)).count();
    assert!(ink * 100 > pixels.len(), "under 1% of the page is ink: {ink} pixels");
    // The SVG charts drew: the win bars are Okabe–Ito blue #0072B2.
    let near = |p: &[u8; 3], q: [u8; 3]| p.iter().zip(q).all(|(a, b)| a.abs_diff(b) <= 6);
    let blue = pixels.iter().filter(|p| near(p, [0x00, 0x72, 0xB2])).count();
    assert!(blue > 500, "only {blue} blue pixels: the charts did not render");
    // The recommendation box's light blue background is at the top.
    let top = &pixels[..1280 * 800];
    assert!(top.iter().any(|p| near(p, [0xee, 0xf5, 0xfb])), "recommendation box not drawn");
}
