//! A small SVG writer and the four chart shapes of `report.html`: dots with
//! whiskers, sorted per-query difference bars and labelled scatters. Part of
//! the last stage of the data flow (report); it knows nothing of the report
//! model — `html.rs` hands it plain numbers that the bench computed, and this
//! file only scales them to pixels.
//!
//! Why our own writer rather than a charting crate: the charting crates we
//! looked at (plotters and the like) draw text by rendering glyphs, which
//! pulls a font-rendering stack and needs font files at build or run time —
//! the opposite of a page that must open offline with no external resource.
//! Our charts are a handful of rectangles, lines, circles and text elements;
//! writing them as SVG markup is a few hundred lines, leaves text as real
//! text (selectable, printable, scaled by the browser, read by screen
//! readers) and keeps the output byte-for-byte deterministic.
//!
//! Accessibility: every chart has a `<title>` and `<desc>` tied to the root
//! through `aria-labelledby`; colours come from the Okabe–Ito palette (Okabe
//! & Ito, "Color Universal Design", 2008), which stays distinguishable under
//! the common colour-vision deficiencies; "better" and "worse" are blue and
//! orange and also told apart by position (above or below zero) and by
//! signs in the text, never by colour alone. No text is smaller than 12 px
//! at the chart's own size. Charts are drawn about 700 px wide (the widest,
//! the per-query bars, 720 px) and the page lets them shrink to a narrower
//! window (`max-width: 100%`, the `viewBox` keeps the proportions), so a
//! 700 px window shows each chart whole with its text above 11 px; a wider
//! window shows them at their own size.
//!
//! Tooltips (`<title>`) print numbers as the tables do: three decimals, a
//! true minus sign, no sign on a difference that rounds to zero (never
//! `−0.000`), and counts without decimals.

use std::fmt::Write;

/// Okabe–Ito blue: "better than the baseline".
pub const BETTER: &str = "#0072B2";
/// Okabe–Ito orange: "worse than the baseline".
pub const WORSE: &str = "#E69F00";
/// Axis and text grey (contrast ratio above 7:1 on white).
pub const INK: &str = "#333333";
/// Light grid lines.
pub const GRID: &str = "#dddddd";

/// Colours of systems in report order: the Okabe–Ito palette without its
/// yellow (too pale on white) and with black last.
const SERIES: [&str; 7] =
    ["#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#000000"];

/// The colour of the system at `index` in report order (cycles after seven).
pub fn series_colour(index: usize) -> &'static str {
    SERIES[index % SERIES.len()]
}

/// Escape text for HTML and SVG (element content and quoted attributes).
pub fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

/// A pixel coordinate with two decimals (enough for any screen, and stable
/// text for byte-identical output).
fn px(x: f64) -> String {
    let s = format!("{x:.2}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".to_string()
    } else {
        s.to_string()
    }
}

/// Approximate width in pixels of `text` at `size` px in a sans-serif face
/// (0.6 em per character: generous, so labels never overrun their space).
fn text_width(text: &str, size: f64) -> f64 {
    text.chars().count() as f64 * size * 0.6
}

/// A linear map from a data interval to a pixel interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Scale {
    d0: f64,
    d1: f64,
    r0: f64,
    r1: f64,
}

impl Scale {
    /// Map `[d0, d1]` onto `[r0, r1]` (an empty data interval maps to the middle).
    pub fn new(d0: f64, d1: f64, r0: f64, r1: f64) -> Scale {
        Scale { d0, d1, r0, r1 }
    }

    /// The pixel position of `v`.
    pub fn at(&self, v: f64) -> f64 {
        let span = self.d1 - self.d0;
        if span.abs() < f64::EPSILON {
            return (self.r0 + self.r1) / 2.0;
        }
        self.r0 + (v - self.d0) / span * (self.r1 - self.r0)
    }
}

/// Round tick positions covering `[lo, hi]` with about `count` steps of 1, 2
/// or 5 × 10^k; the first and last tick enclose the data. Returns the ticks
/// and the number of decimals their labels need.
pub fn nice_ticks(lo: f64, hi: f64, count: usize) -> (Vec<f64>, usize) {
    let (lo, hi) =
        if lo.is_finite() && hi.is_finite() { (lo.min(hi), lo.max(hi)) } else { (0.0, 1.0) };
    let (lo, hi) = if hi - lo < 1e-9 {
        let pad = if lo.abs() < 1e-9 { 1.0 } else { lo.abs() * 0.1 };
        (lo - pad, hi + pad)
    } else {
        (lo, hi)
    };
    let raw = (hi - lo) / count.max(1) as f64;
    let magnitude = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * magnitude)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * magnitude);
    let first = (lo / step + 1e-9).floor() as i64;
    let last = (hi / step - 1e-9).ceil() as i64;
    let decimals = if step >= 1.0 { 0 } else { (-step.log10().floor()) as usize };
    // Rounded to the label precision so 3 × 0.2 is 0.6, not 0.6000000000000001.
    let unit = 10f64.powi(i32::try_from(decimals).unwrap_or(0));
    let ticks = (first..=last).map(|i| (i as f64 * step * unit).round() / unit).collect();
    (ticks, decimals)
}

/// Format a tick label with `decimals` decimals and a true minus sign.
pub fn tick_label(v: f64, decimals: usize) -> String {
    let s = format!("{:.*}", decimals, v);
    if let Some(rest) = s.strip_prefix('-') {
        if rest.chars().all(|c| c == '0' || c == '.') {
            rest.to_string()
        } else {
            format!("−{rest}")
        }
    } else {
        s
    }
}

/// An SVG document under construction.
struct Svg {
    buf: String,
}

impl Svg {
    /// Open a chart `width`×`height` px titled `title`, described by `desc`;
    /// `id` makes the `aria-labelledby` targets unique on the page.
    fn new(id: &str, width: f64, height: f64, title: &str, desc: &str) -> Svg {
        let mut buf = String::new();
        let _ = write!(
            buf,
            "<svg class=\"chart\" id=\"{id}\" width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\" \
             role=\"img\" aria-labelledby=\"{id}-title {id}-desc\" \
             font-family=\"system-ui, sans-serif\" font-size=\"13\" fill=\"{INK}\">\
             <title id=\"{id}-title\">{t}</title><desc id=\"{id}-desc\">{d}</desc>",
            id = esc(id),
            w = px(width),
            h = px(height),
            t = esc(title),
            d = esc(desc),
        );
        Svg { buf }
    }

    fn line(&mut self, x1: f64, y1: f64, x2: f64, y2: f64, stroke: &str, width: f64) {
        let _ = write!(
            self.buf,
            "<line x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke=\"{stroke}\" stroke-width=\"{}\"/>",
            px(x1),
            px(y1),
            px(x2),
            px(y2),
            px(width)
        );
    }

    /// A rectangle with an optional tooltip.
    fn rect(&mut self, x: f64, y: f64, w: f64, h: f64, fill: &str, tip: Option<&str>) {
        let _ = write!(
            self.buf,
            "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"{fill}\"",
            px(x),
            px(y),
            px(w.max(0.0)),
            px(h.max(0.0))
        );
        match tip {
            Some(t) => {
                let _ = write!(self.buf, "><title>{}</title></rect>", esc(t));
            }
            None => self.buf.push_str("/>"),
        }
    }

    /// A circle; `hollow` draws the outline only (the baseline's marker).
    fn circle(&mut self, cx: f64, cy: f64, r: f64, colour: &str, hollow: bool, tip: &str) {
        let fill = if hollow { "#ffffff" } else { colour };
        let _ = write!(
            self.buf,
            "<circle cx=\"{}\" cy=\"{}\" r=\"{}\" fill=\"{fill}\" stroke=\"{colour}\" \
             stroke-width=\"2\"><title>{}</title></circle>",
            px(cx),
            px(cy),
            px(r),
            esc(tip)
        );
    }

    /// Text at (x, y); `anchor` is `start`, `middle` or `end`.
    fn text(&mut self, x: f64, y: f64, anchor: &str, size: f64, body: &str) {
        let _ = write!(
            self.buf,
            "<text x=\"{}\" y=\"{}\" text-anchor=\"{anchor}\" font-size=\"{}\">{}</text>",
            px(x),
            px(y),
            px(size.max(12.0)),
            esc(body)
        );
    }

    /// A point label with a white halo, so it stays legible where it
    /// crosses a whisker or grid line.
    fn label(&mut self, x: f64, y: f64, anchor: &str, body: &str) {
        let _ = write!(
            self.buf,
            "<text x=\"{}\" y=\"{}\" text-anchor=\"{anchor}\" font-size=\"13\" \
             paint-order=\"stroke\" stroke=\"#ffffff\" stroke-width=\"4\" \
             stroke-linejoin=\"round\">{}</text>",
            px(x),
            px(y),
            esc(body)
        );
    }

    /// Bold text.
    fn heading(&mut self, x: f64, y: f64, anchor: &str, body: &str) {
        let _ = write!(
            self.buf,
            "<text x=\"{}\" y=\"{}\" text-anchor=\"{anchor}\" font-size=\"14\" \
             font-weight=\"bold\">{}</text>",
            px(x),
            px(y),
            esc(body)
        );
    }

    /// Text rotated a quarter turn anticlockwise about (x, y) (vertical axis titles).
    fn vertical_text(&mut self, x: f64, y: f64, body: &str) {
        let _ = write!(
            self.buf,
            "<text x=\"{x}\" y=\"{y}\" text-anchor=\"middle\" font-size=\"13\" \
             transform=\"rotate(-90 {x} {y})\">{}</text>",
            esc(body),
            x = px(x),
            y = px(y)
        );
    }

    fn finish(mut self) -> String {
        self.buf.push_str("</svg>");
        self.buf
    }
}

/// A horizontal value axis with ticks, grid lines down to `grid_to` and a title.
fn x_axis(
    svg: &mut Svg,
    scale: &Scale,
    ticks: &[f64],
    decimals: usize,
    y: f64,
    grid_to: f64,
    title: &str,
) {
    for t in ticks {
        let x = scale.at(*t);
        svg.line(x, grid_to, x, y, GRID, 1.0);
        svg.line(x, y, x, y + 5.0, INK, 1.0);
        svg.text(x, y + 19.0, "middle", 12.0, &tick_label(*t, decimals));
    }
    if let (Some(first), Some(last)) = (ticks.first(), ticks.last()) {
        svg.line(scale.at(*first), y, scale.at(*last), y, INK, 1.0);
        svg.text((scale.at(*first) + scale.at(*last)) / 2.0, y + 38.0, "middle", 13.0, title);
    }
}

/// A vertical value axis at `x` with ticks, grid lines across to `grid_to`
/// and a rotated title left of the labels.
fn y_axis(
    svg: &mut Svg,
    scale: &Scale,
    ticks: &[f64],
    decimals: usize,
    x: f64,
    grid_to: f64,
    title: &str,
) {
    for t in ticks {
        let y = scale.at(*t);
        svg.line(x, y, grid_to, y, GRID, 1.0);
        svg.line(x - 5.0, y, x, y, INK, 1.0);
        svg.text(x - 8.0, y + 4.0, "end", 12.0, &tick_label(*t, decimals));
    }
    if let (Some(first), Some(last)) = (ticks.first(), ticks.last()) {
        svg.line(x, scale.at(*first), x, scale.at(*last), INK, 1.0);
        svg.vertical_text(16.0, (scale.at(*first) + scale.at(*last)) / 2.0, title);
    }
}

/// One system's mean and interval in a dot-and-whisker panel.
#[derive(Debug, Clone, PartialEq)]
pub struct Estimate {
    /// Mean (the dot).
    pub mean: f64,
    /// Lower end of the interval (no whisker when absent).
    pub low: Option<f64>,
    /// Upper end of the interval.
    pub high: Option<f64>,
}

/// One panel of [`dot_whisker`]: a metric and one estimate per row.
#[derive(Debug, Clone, PartialEq)]
pub struct Panel {
    /// Panel heading (the metric key).
    pub title: String,
    /// One estimate per row label, in row order.
    pub estimates: Vec<Estimate>,
}

/// The row labels of a chart and how each row is marked.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    /// Label (system name).
    pub label: String,
    /// Colour of its marks.
    pub colour: &'static str,
    /// Drawn hollow (the baseline).
    pub hollow: bool,
}

/// Dots (means) with whiskers (intervals), one row per series and one panel
/// per metric side by side, each panel on its own value axis.
pub fn dot_whisker(
    id: &str,
    title: &str,
    desc: &str,
    rows: &[Series],
    panels: &[Panel],
    axis: &str,
) -> String {
    let label_w = rows.iter().map(|r| text_width(&r.label, 13.0)).fold(60.0, f64::max) + 16.0;
    let panel_w = 190.0_f64.max((700.0 - label_w) / panels.len().max(1) as f64);
    let width = label_w + panel_w * panels.len() as f64 + 20.0;
    let (top, row_h) = (34.0, 30.0);
    let axis_y = top + row_h * rows.len() as f64 + 6.0;
    let height = axis_y + 48.0;
    let mut svg = Svg::new(id, width, height, title, desc);
    for (i, row) in rows.iter().enumerate() {
        let y = top + row_h * (i as f64 + 0.5);
        svg.text(label_w - 10.0, y + 4.0, "end", 13.0, &row.label);
    }
    for (p, panel) in panels.iter().enumerate() {
        let x0 = label_w + panel_w * p as f64 + 22.0;
        let x1 = label_w + panel_w * (p as f64 + 1.0) - 22.0;
        let values = panel.estimates.iter().flat_map(|e| [Some(e.mean), e.low, e.high]).flatten();
        let (lo, hi) =
            values.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| (a.min(v), b.max(v)));
        let (ticks, decimals) = nice_ticks(lo, hi, 4);
        let scale = Scale::new(
            ticks.first().copied().unwrap_or(0.0),
            ticks.last().copied().unwrap_or(1.0),
            x0,
            x1,
        );
        svg.heading((x0 + x1) / 2.0, 20.0, "middle", &panel.title);
        // The panel's heading names the metric; the axis title says what
        // the values are, short enough for the narrowest panel.
        x_axis(&mut svg, &scale, &ticks, decimals, axis_y, top, axis);
        for (i, (row, e)) in rows.iter().zip(&panel.estimates).enumerate() {
            let y = top + row_h * (i as f64 + 0.5);
            if let (Some(l), Some(h)) = (e.low, e.high) {
                svg.line(scale.at(l), y, scale.at(h), y, row.colour, 2.0);
                svg.line(scale.at(l), y - 6.0, scale.at(l), y + 6.0, row.colour, 2.0);
                svg.line(scale.at(h), y - 6.0, scale.at(h), y + 6.0, row.colour, 2.0);
            }
            let tip = match (e.low, e.high) {
                (Some(l), Some(h)) => format!(
                    "{}: {} {}, 95% interval {} to {}",
                    row.label,
                    panel.title,
                    tick_label(e.mean, 3),
                    tick_label(l, 3),
                    tick_label(h, 3)
                ),
                _ => format!("{}: {} {}", row.label, panel.title, tick_label(e.mean, 3)),
            };
            svg.circle(scale.at(e.mean), y, 5.5, row.colour, row.hollow, &tip);
        }
    }
    svg.finish()
}

/// One bar of [`difference_bars`].
#[derive(Debug, Clone, PartialEq)]
pub struct Bar {
    /// What the bar stands for (a query id), shown on hover.
    pub label: String,
    /// Signed height in data units.
    pub value: f64,
}

/// The largest absolute value among `bars`: pass the largest over every
/// chart of a page as [`difference_bars`]'s `extent`, so that equal bars
/// mean equal differences across the charts.
pub fn bar_extent(bars: &[Bar]) -> f64 {
    bars.iter().map(|b| b.value.abs()).filter(|v| v.is_finite()).fold(0.0, f64::max)
}

/// Signed bars in the given order (the caller sorts them) around a zero
/// line: above zero in blue, below in orange, zero-height bars as a grey
/// tick. Above zero means "better than the baseline". The value axis runs
/// from −`extent` to +`extent` (rounded out to ticks; at least ±0.05),
/// whatever these bars span.
pub fn difference_bars(
    id: &str,
    title: &str,
    desc: &str,
    bars: &[Bar],
    extent: f64,
    y_title: &str,
    x_title: &str,
) -> String {
    let (left, right, top, plot_h) = (78.0, 20.0, 16.0, 220.0);
    let width = 720.0;
    let plot_w = width - left - right;
    let max =
        if extent.is_finite() { extent.abs().max(bar_extent(bars)) } else { bar_extent(bars) };
    let (ticks, decimals) = nice_ticks(-max.max(0.05), max.max(0.05), 6);
    let scale = Scale::new(
        ticks.first().copied().unwrap_or(-1.0),
        ticks.last().copied().unwrap_or(1.0),
        top + plot_h,
        top,
    );
    let height = top + plot_h + 46.0;
    let mut svg = Svg::new(id, width, height, title, desc);
    y_axis(&mut svg, &scale, &ticks, decimals, left, width - right, y_title);
    let slot = plot_w / bars.len().max(1) as f64;
    let gap = if slot > 4.0 { 1.0 } else { 0.0 };
    let zero = scale.at(0.0);
    for (i, b) in bars.iter().enumerate() {
        let x = left + slot * i as f64 + gap / 2.0;
        let y = scale.at(b.value);
        let tip = format!("{}: {}", b.label, signed_label(b.value));
        if b.value > 1e-12 {
            svg.rect(x, y, slot - gap, zero - y, BETTER, Some(&tip));
        } else if b.value < -1e-12 {
            svg.rect(x, zero, slot - gap, y - zero, WORSE, Some(&tip));
        } else {
            svg.rect(x, zero - 1.5, slot - gap, 3.0, "#999999", Some(&tip));
        }
    }
    svg.line(left, zero, width - right, zero, INK, 1.5);
    svg.text(left + plot_w / 2.0, top + plot_h + 20.0, "middle", 13.0, x_title);
    svg.finish()
}

/// `+0.123` / `−0.123` for tooltips; `0.000` without a sign when the value
/// rounds to zero.
fn signed_label(v: f64) -> String {
    let magnitude = format!("{:.3}", v.abs());
    if magnitude.bytes().all(|b| b == b'0' || b == b'.') {
        magnitude
    } else if v < 0.0 {
        format!("−{magnitude}")
    } else {
        format!("+{magnitude}")
    }
}

/// One labelled point of [`scatter`].
#[derive(Debug, Clone, PartialEq)]
pub struct Point {
    /// How the point is drawn and labelled.
    pub series: Series,
    /// Horizontal value.
    pub x: f64,
    /// Vertical value (the dot).
    pub y: f64,
    /// Vertical interval, drawn as a whisker when present.
    pub y_low: Option<f64>,
    /// Upper end of that interval.
    pub y_high: Option<f64>,
}

/// Labelled points with optional vertical whiskers. The x values arrive in
/// the unit `x_title` names (the caller converts bytes to KiB, say), and
/// tooltips give them with `x_decimals` decimals (0 for counts).
pub fn scatter(
    id: &str,
    title: &str,
    desc: &str,
    points: &[Point],
    (x_title, x_decimals): (&str, usize),
    y_title: &str,
) -> String {
    let (left, right, top, plot_w, plot_h) = (78.0, 150.0, 16.0, 452.0, 260.0);
    let width = left + plot_w + right;
    let height = top + plot_h + 52.0;
    let (xlo, xhi) = points
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| (a.min(p.x), b.max(p.x)));
    let pad = (xhi - xlo).abs() * 0.08;
    let (xticks, xdec) = nice_ticks(xlo - pad, xhi + pad, 6);
    let ys = points.iter().flat_map(|p| [Some(p.y), p.y_low, p.y_high]).flatten();
    let (ylo, yhi) = ys.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| (a.min(v), b.max(v)));
    let (yticks, ydec) = nice_ticks(ylo, yhi, 5);
    let xs = Scale::new(
        xticks.first().copied().unwrap_or(0.0),
        xticks.last().copied().unwrap_or(1.0),
        left,
        left + plot_w,
    );
    let ysc = Scale::new(
        yticks.first().copied().unwrap_or(0.0),
        yticks.last().copied().unwrap_or(1.0),
        top + plot_h,
        top,
    );
    let mut svg = Svg::new(id, width, height, title, desc);
    y_axis(&mut svg, &ysc, &yticks, ydec, left, left + plot_w, y_title);
    x_axis(&mut svg, &xs, &xticks, xdec, top + plot_h, top, x_title);
    // Labels right of their point; a label that would overlap the one placed
    // before it (in order of height) moves down by a line.
    let mut order: Vec<usize> = (0..points.len()).collect();
    order.sort_by(|a, b| {
        let (pa, pb) = (&points[*a], &points[*b]);
        pb.y.total_cmp(&pa.y).then(a.cmp(b))
    });
    let mut placed: Vec<(f64, f64, f64)> = Vec::new();
    for i in order {
        let p = &points[i];
        let (cx, cy) = (xs.at(p.x), ysc.at(p.y));
        if let (Some(l), Some(h)) = (p.y_low, p.y_high) {
            svg.line(cx, ysc.at(l), cx, ysc.at(h), p.series.colour, 2.0);
            svg.line(cx - 5.0, ysc.at(l), cx + 5.0, ysc.at(l), p.series.colour, 2.0);
            svg.line(cx - 5.0, ysc.at(h), cx + 5.0, ysc.at(h), p.series.colour, 2.0);
        }
        let tip = format!(
            "{}: {} {}, {} {}",
            p.series.label,
            x_title,
            tick_label(p.x, x_decimals),
            y_title,
            tick_label(p.y, 3)
        );
        svg.circle(cx, cy, 6.0, p.series.colour, p.series.hollow, &tip);
        let w = text_width(&p.series.label, 13.0);
        let (mut lx, anchor) =
            if cx + 10.0 + w <= width - 4.0 { (cx + 10.0, "start") } else { (cx - 10.0, "end") };
        let (x_from, x_to) = if anchor == "start" { (lx, lx + w) } else { (lx - w, lx) };
        let mut ly = cy + 4.0;
        for (a, b, y) in &placed {
            if x_from < *b && *a < x_to && (ly - y).abs() < 16.0 {
                ly = y + 16.0;
            }
        }
        if anchor == "end" {
            lx = lx.max(w);
        }
        placed.push((x_from, x_to, ly));
        svg.label(lx, ly, anchor, &p.series.label);
    }
    svg.finish()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_markup() {
        assert_eq!(esc(r#"<q&"a'>"#), "&lt;q&amp;&quot;a&#39;&gt;");
        assert_eq!(esc("Fähre #tag"), "Fähre #tag");
    }

    #[test]
    fn ticks_are_round_and_enclose_the_data() {
        // 1-2-5 steps: common practice, no source.
        let (t, d) = nice_ticks(0.612, 0.81, 4);
        assert_eq!(t, vec![0.6, 0.65, 0.7, 0.75, 0.8, 0.85]);
        assert_eq!(d, 2);
        let (t, d) = nice_ticks(-0.4, 0.4, 6);
        assert_eq!(t.first().copied(), Some(-0.4));
        assert_eq!(t.last().copied(), Some(0.4));
        assert_eq!(d, 1);
        let (t, d) = nice_ticks(160_000.0, 240_000.0, 5);
        assert_eq!(t, vec![160_000.0, 180_000.0, 200_000.0, 220_000.0, 240_000.0]);
        assert_eq!(d, 0);
        // A single value still gets an axis around it.
        let (t, _) = nice_ticks(0.5, 0.5, 4);
        assert!(t.first().is_some_and(|v| *v < 0.5) && t.last().is_some_and(|v| *v > 0.5));
    }

    #[test]
    fn tick_labels_use_a_true_minus_and_no_negative_zero() {
        assert_eq!(tick_label(-0.25, 2), "−0.25");
        assert_eq!(tick_label(-0.0000001, 2), "0.00");
        assert_eq!(tick_label(3.0, 0), "3");
    }

    #[test]
    fn bars_share_the_scale_they_are_given() {
        // Two charts of one page: a small difference drawn on the scale of
        // the larger one is as short as its value says.
        let small = vec![Bar { label: "q1".into(), value: 0.1 }];
        let alone = difference_bars("a", "t", "d", &small, 0.0, "Δ", "q");
        let shared = difference_bars("b", "t", "d", &small, 1.0, "Δ", "q");
        let height = |s: &str| -> f64 {
            let rect = s.split("<rect").nth(1).unwrap_or_default();
            rect.split("height=\"")
                .nth(1)
                .and_then(|h| h.split('"').next())
                .and_then(|h| h.parse().ok())
                .unwrap_or(0.0)
        };
        // 220 px of plot from −0.1 to 0.1 (ticks of 0.05): the bar is half
        // of it; from −1 to 1 (ticks of 0.5): a twentieth.
        assert_eq!(height(&alone), 110.0);
        assert_eq!(height(&shared), 11.0);
        assert!(shared.contains(">1.0</text>") && !alone.contains(">1.0</text>"));
    }

    #[test]
    fn scale_maps_ends_and_inverts() {
        let s = Scale::new(0.0, 1.0, 200.0, 0.0);
        assert_eq!(s.at(0.0), 200.0);
        assert_eq!(s.at(0.25), 150.0);
        assert_eq!(Scale::new(1.0, 1.0, 0.0, 10.0).at(1.0), 5.0);
    }

    #[test]
    fn bars_are_coloured_by_sign_and_text_is_escaped() {
        let bars = vec![
            Bar { label: "q<1>".into(), value: 0.5 },
            Bar { label: "q2".into(), value: 0.0 },
            Bar { label: "q3".into(), value: -0.25 },
        ];
        let s = difference_bars("c1", "a & b", "d", &bars, 0.0, "Δ", "queries");
        assert!(s.starts_with("<svg") && s.ends_with("</svg>"));
        assert_eq!(s.matches(&format!("fill=\"{BETTER}\"")).count(), 1);
        assert_eq!(s.matches(&format!("fill=\"{WORSE}\"")).count(), 1);
        assert!(s.contains("<title>q&lt;1&gt;: +0.500</title>"));
        assert!(s.contains("<title>q2: 0.000</title>"), "a tie has no sign");
        assert!(s.contains("<title>q3: −0.250</title>"));
        // A difference that rounds to zero is shown as 0.000, never −0.000.
        assert_eq!(signed_label(-0.0001), "0.000");
        assert_eq!(signed_label(0.0004), "0.000");
        assert_eq!(signed_label(-0.0005001), "−0.001");
        assert!(s.contains("<title id=\"c1-title\">a &amp; b</title>"));
        assert!(!s.contains("http"), "no namespace URL is needed inline in HTML");
    }

    #[test]
    fn no_text_below_twelve_pixels() {
        let rows =
            vec![Series { label: "standard".into(), colour: series_colour(0), hollow: true }];
        let panels = vec![Panel {
            title: "ndcg@10".into(),
            estimates: vec![Estimate { mean: 0.7, low: Some(0.6), high: Some(0.8) }],
        }];
        let s = dot_whisker("c2", "t", "d", &rows, &panels, "mean");
        for part in s.split("font-size=\"").skip(1) {
            let size: f64 = part.split('"').next().and_then(|v| v.parse().ok()).unwrap_or(0.0);
            assert!(size >= 12.0, "font size {size}");
        }
        assert_eq!(s.matches("<circle").count(), 1);
    }

    #[test]
    fn scatter_labels_every_point() {
        let pts: Vec<Point> = [("a", 0.0), ("b", 1.0), ("c", 100.0)]
            .iter()
            .enumerate()
            .map(|(i, (l, x))| Point {
                series: Series { label: (*l).into(), colour: series_colour(i), hollow: i == 0 },
                x: *x,
                y: 0.5,
                y_low: None,
                y_high: None,
            })
            .collect();
        let s = scatter("c3", "t", "d", &pts, ("terms", 0), "ndcg@10");
        // Counts without decimals in the tooltips.
        assert!(s.contains("<title>c: terms 100, ndcg@10 0.500</title>"), "{s}");
        let label_y = |name: &str| -> Option<f64> {
            let part = s.split("<text x=\"").find(|p| p.contains(&format!(">{name}</text>")))?;
            part.split("y=\"").nth(1)?.split('"').next()?.parse().ok()
        };
        let (a, b, c) = (label_y("a"), label_y("b"), label_y("c"));
        assert!(a.is_some() && b.is_some() && c.is_some(), "every point labelled");
        // Equal heights: a and b sit 1/100 of the axis apart, so b's label
        // moves down a line; c is far away and keeps its place.
        assert_eq!(b.zip(a).map(|(b, a)| b - a), Some(16.0));
        assert_eq!(c, a);
    }
}
