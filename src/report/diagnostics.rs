//! Renderings of a [`Diagnostics`] report: `diagnostics.md` (for a person),
//! `diagnostics.json` (the model itself) and one CSV per table. Nothing here
//! computes a figure; shares are only formatted.
//!
//! Place in the data flow: `report`, rendering the model `diagnose` fills
//! ([`crate::report::model::diagnostics`]). Files are all rendered before
//! any is written, then swapped in as a whole directory
//! ([`crate::report::write_diagnostics`]). CSV numbers are the shortest text that parses back to the same
//! f64 ([`format_shortest`]); an absent value is an empty field. Markdown
//! uses fixed precision: 4 decimals for UI, 3 significant digits in
//! scientific notation for OI and SW (their values are small: pairs across
//! concepts vastly outnumber pairs within), one decimal for percentages.
//!
//! The three main tables are built once as a [`Table`] of plain-text cells
//! ([`conflation_table`], [`routing_table`], [`segmentation_table`],
//! [`unspaced_table`]), so
//! `diagnostics.md` and the Diagnostics section of `postassay run --vet`'s
//! `report.md` and `report.html` show the same figures in the same words.

use std::fmt::Write as _;

use crate::analysis::detect::DetectorKind;
use crate::error::{Error, Result};
use crate::ids::ChainName;
use crate::input::format_shortest;
pub use crate::output::out_dir::diagnostics::{
    CONFLATION_CSV, CONFUSION_CSV, FILES, JSON_FILE, MARKDOWN_FILE, ROUTING_CSV, SEGMENTATION_CSV,
    UNSPACED_CSV,
};
use crate::report::model::diagnostics::{
    buckets, ConflationFigures, ConflationResult, Diagnostics, RoutingResult, SegmentationResult,
    UnspacedResult, FALLBACK_LABEL,
};

/// Every output file, rendered: `(file name, bytes)`.
pub fn render_all(d: &Diagnostics) -> Result<Vec<(&'static str, Vec<u8>)>> {
    Ok(vec![
        (MARKDOWN_FILE, markdown(d).into_bytes()),
        (JSON_FILE, json(d)?.into_bytes()),
        (CONFLATION_CSV, conflation_csv(d)?.into_bytes()),
        (ROUTING_CSV, routing_csv(d)?.into_bytes()),
        (CONFUSION_CSV, confusion_csv(d)?.into_bytes()),
        (SEGMENTATION_CSV, segmentation_csv(d)?.into_bytes()),
        (UNSPACED_CSV, unspaced_csv(d)?.into_bytes()),
    ])
}

/// `diagnostics.json`: the model, pretty-printed, with a final newline.
pub fn json(d: &Diagnostics) -> Result<String> {
    serde_json::to_string_pretty(d)
        .map(|s| s + "\n")
        .map_err(|e| Error::usage(format!("serialising diagnostics.json: {e}")))
}

fn csv_text(write: impl FnOnce(&mut csv::Writer<Vec<u8>>) -> csv::Result<()>) -> Result<String> {
    let fail = |e: String| Error::usage(format!("writing CSV: {e}"));
    let mut w =
        csv::WriterBuilder::new().terminator(csv::Terminator::Any(b'\n')).from_writer(Vec::new());
    write(&mut w).map_err(|e| fail(e.to_string()))?;
    let bytes = w.into_inner().map_err(|e| fail(e.to_string()))?;
    String::from_utf8(bytes).map_err(|e| fail(e.to_string()))
}

fn num(x: Option<f64>) -> String {
    x.map(format_shortest).unwrap_or_default()
}

/// `diagnostics-conflation.csv`, one row per chain and lemma list.
pub fn conflation_csv(d: &Diagnostics) -> Result<String> {
    csv_text(|w| {
        w.write_record([
            "chain",
            "set",
            "language",
            "analysis",
            "words",
            "groups",
            "multi_word_groups",
            "ambiguous_forms",
            "without_lemma",
            "words_without_terms",
            "gdmt",
            "gumt",
            "gdnt",
            "gwmt",
            "ui",
            "oi",
            "sw",
            "fully_conflated",
            "mean_stems_per_group",
            "note",
        ])?;
        for r in &d.conflation {
            let f = r.figures.as_ref();
            let c = f.map(|f| f.counts);
            let count = |x: Option<u64>| x.map(|v| v.to_string()).unwrap_or_default();
            w.write_record([
                r.chain.as_str(),
                &r.set,
                r.language.as_str(),
                &r.analysis,
                &r.words.to_string(),
                &r.groups.to_string(),
                &f.map(|f| f.multi_word_groups.to_string()).unwrap_or_default(),
                &r.ambiguous_forms.to_string(),
                &r.without_lemma.to_string(),
                &f.map(|f| f.words_without_terms.to_string()).unwrap_or_default(),
                &count(c.map(|c| c.gdmt)),
                &count(c.map(|c| c.gumt)),
                &count(c.map(|c| c.gdnt)),
                &count(c.map(|c| c.gwmt)),
                &num(f.and_then(|f| f.understemming)),
                &num(f.and_then(|f| f.overstemming)),
                &num(f.and_then(|f| f.stemming_weight)),
                &num(f.and_then(|f| f.fully_conflated)),
                &num(f.and_then(|f| f.mean_stems_per_group)),
                r.note.as_deref().unwrap_or_default(),
            ])?;
        }
        Ok(())
    })
}

/// The columns that name a routing result in the routing CSVs.
const ROUTING_KEYS: [&str; 5] = ["chain", "detector", "collection", "set", "language"];

/// The values of [`ROUTING_KEYS`] for one result.
fn routing_keys(r: &RoutingResult) -> [&str; 5] {
    [r.chain.as_str(), r.detector.as_str(), &r.collection, &r.set, r.language.as_str()]
}

/// `diagnostics-routing.csv`: per chain, detector and set, a row `all` (with
/// the detector's CPU microseconds per sentence) then one per length
/// bucket.
pub fn routing_csv(d: &Diagnostics) -> Result<String> {
    csv_text(|w| {
        let figures = [
            "routable",
            "bucket",
            "sentences",
            "correct",
            "accuracy",
            "to_fallback",
            "micros_per_sentence",
        ];
        w.write_record(ROUTING_KEYS.iter().chain(&figures))?;
        for r in &d.routing {
            let f = &r.figures;
            let head = routing_keys(r);
            let routable = if f.routable { "yes" } else { "no" };
            let all = [
                routable.to_string(),
                "all".to_string(),
                f.sentences.to_string(),
                f.correct.to_string(),
                num(f.accuracy),
                f.to_fallback.to_string(),
                num(f.micros_per_sentence),
            ];
            w.write_record(head.iter().copied().chain(all.iter().map(String::as_str)))?;
            for b in &f.by_length {
                let row = [
                    routable.to_string(),
                    b.bucket.clone(),
                    b.sentences.to_string(),
                    b.correct.to_string(),
                    num(b.accuracy),
                    b.to_fallback.to_string(),
                    String::new(),
                ];
                w.write_record(head.iter().copied().chain(row.iter().map(String::as_str)))?;
            }
        }
        Ok(())
    })
}

/// `diagnostics-confusion.csv`: where each set's sentences were routed.
pub fn confusion_csv(d: &Diagnostics) -> Result<String> {
    csv_text(|w| {
        w.write_record(ROUTING_KEYS.iter().chain(&["routed_to", "sentences"]))?;
        for r in &d.routing {
            for (label, n) in &r.figures.confusion {
                let count = n.to_string();
                w.write_record(routing_keys(r).iter().chain(&[label.as_str(), &count]))?;
            }
        }
        Ok(())
    })
}

/// `diagnostics-segmentation.csv`, one row per chain, gold set and source.
pub fn segmentation_csv(d: &Diagnostics) -> Result<String> {
    csv_text(|w| {
        w.write_record([
            "chain",
            "gold",
            "source",
            "source_words",
            "tags",
            "exact",
            "exact_accuracy",
            "unaligned",
            "predicted_boundaries",
            "gold_boundaries",
            "correct_boundaries",
            "precision",
            "recall",
            "f1",
        ])?;
        for r in &d.segmentation {
            let f = &r.figures;
            w.write_record([
                r.chain.as_str(),
                &r.gold,
                &r.source,
                &r.source_words.to_string(),
                &f.tags.to_string(),
                &f.exact.to_string(),
                &num(f.exact_accuracy),
                &f.unaligned.to_string(),
                &f.predicted_boundaries.to_string(),
                &f.gold_boundaries.to_string(),
                &f.correct_boundaries.to_string(),
                &num(f.precision),
                &num(f.recall),
                &num(f.f1),
            ])?;
        }
        Ok(())
    })
}

/// `diagnostics-unspaced.csv`, one row per gold set and setting.
pub fn unspaced_csv(d: &Diagnostics) -> Result<String> {
    csv_text(|w| {
        w.write_record([
            "set",
            "language",
            "setting",
            "chains",
            "sentences",
            "unaligned",
            "tokens",
            "predicted_boundaries",
            "gold_boundaries",
            "correct_boundaries",
            "precision",
            "recall",
            "f1",
            "gold_words",
            "words_found",
            "word_recall",
        ])?;
        for r in &d.unspaced {
            let f = &r.figures;
            let chains: Vec<&str> = r.chains.iter().map(ChainName::as_str).collect();
            w.write_record([
                r.set.as_str(),
                r.language.as_str(),
                r.setting.as_str(),
                &chains.join(" "),
                &f.sentences.to_string(),
                &f.unaligned.to_string(),
                &f.tokens.to_string(),
                &f.predicted_boundaries.to_string(),
                &f.gold_boundaries.to_string(),
                &f.correct_boundaries.to_string(),
                &num(f.precision),
                &num(f.recall),
                &num(f.f1),
                &f.gold_words.to_string(),
                &f.words_found.to_string(),
                &num(f.word_recall),
            ])?;
        }
        Ok(())
    })
}

fn fixed(x: Option<f64>, decimals: usize) -> String {
    x.map_or("–".to_string(), |v| format!("{v:.decimals$}"))
}

fn scientific(x: Option<f64>) -> String {
    match x {
        None => "–".to_string(),
        Some(0.0) => "0".to_string(),
        Some(v) => format!("{v:.2e}"),
    }
}

fn percent(x: Option<f64>) -> String {
    x.map_or("–".to_string(), |v| format!("{:.1}%", 100.0 * v))
}

/// Escape text for a Markdown table cell or inline code.
fn cell(text: &str) -> String {
    text.replace('|', "\\|").replace('`', "'").replace('\n', " ")
}

/// One cell of a [`Table`]: plain text (each rendering escapes it) and,
/// for a share the model holds (routing accuracy), that share, which a
/// graphical rendering may draw as a bar.
#[derive(Debug, Clone, PartialEq)]
pub struct Cell {
    /// The text shown.
    pub text: String,
    /// The share in [0, 1] the text shows, when it is one.
    pub share: Option<f64>,
}

impl Cell {
    fn text(text: impl Into<String>) -> Cell {
        Cell { text: text.into(), share: None }
    }
}

/// A table of diagnostics, built once and rendered as Markdown
/// ([`Table::markdown`]) or HTML (by `report::html`).
#[derive(Debug, Clone, PartialEq)]
pub struct Table {
    /// Column headings.
    pub header: Vec<String>,
    /// Whether each column holds numbers (right-aligned).
    pub numeric: Vec<bool>,
    /// Rows, one cell per column.
    pub rows: Vec<Vec<Cell>>,
}

impl Table {
    /// A Markdown table (cells escaped), ending with a newline.
    pub fn markdown(&self) -> String {
        let mut s = String::new();
        let _ = writeln!(
            s,
            "| {} |",
            self.header.iter().map(|h| cell(h)).collect::<Vec<_>>().join(" | ")
        );
        s.push('|');
        for numeric in &self.numeric {
            s.push_str(if *numeric { "--:|" } else { "---|" });
        }
        s.push('\n');
        for row in &self.rows {
            let cells: Vec<String> = row.iter().map(|c| cell(&c.text)).collect();
            let _ = writeln!(s, "| {} |", cells.join(" | "));
        }
        s
    }
}

/// The conflation table: one row per lemma list and chain, in the order of
/// `results`.
pub fn conflation_table(results: &[ConflationResult]) -> Table {
    let header =
        ["set", "chain", "analysis", "words", "groups 2+", "UI", "OI", "SW", "whole", "terms"];
    let rows = results
        .iter()
        .map(|r| {
            let head = [r.set.clone(), r.chain.to_string()];
            let rest: Vec<String> = match &r.figures {
                Some(f) => vec![
                    r.analysis.clone(),
                    r.words.to_string(),
                    f.multi_word_groups.to_string(),
                    fixed(f.understemming, 4),
                    scientific(f.overstemming),
                    scientific(f.stemming_weight),
                    percent(f.fully_conflated),
                    fixed(f.mean_stems_per_group, 2),
                ],
                None => {
                    let why = r.note.as_deref().unwrap_or("not measured");
                    let mut rest = vec![why.to_string(), r.words.to_string()];
                    rest.extend(std::iter::repeat_n("–".to_string(), 6));
                    rest
                }
            };
            head.into_iter().chain(rest).map(Cell::text).collect()
        })
        .collect();
    Table {
        header: header.map(String::from).to_vec(),
        numeric: header.iter().enumerate().map(|(i, _)| i >= 3).collect(),
        rows,
    }
}

/// Routing results of one chain with one detector.
#[derive(Debug, Clone, PartialEq)]
pub struct RoutingGroup<'a> {
    /// The chain.
    pub chain: &'a ChainName,
    /// The detector it ran with.
    pub detector: DetectorKind,
    /// Its results, in report order.
    pub rows: Vec<&'a RoutingResult>,
}

impl RoutingGroup<'_> {
    /// A heading for the group: the chain and its detector, Markdown code
    /// spans around the names.
    pub fn title(&self) -> String {
        format!("`{}`, detector `{}`", cell(self.chain.as_str()), self.detector)
    }

    /// Mean CPU microseconds of detection per sentence over the group's
    /// sets, weighted by their sentences (`None` when nothing was timed).
    pub fn micros_per_sentence(&self) -> Option<f64> {
        let timed: Vec<(f64, usize)> = self
            .rows
            .iter()
            .filter_map(|r| r.figures.micros_per_sentence.map(|m| (m, r.figures.sentences)))
            .collect();
        let n: usize = timed.iter().map(|t| t.1).sum();
        // Display arithmetic: the model's per-set means, pooled.
        (n > 0).then(|| timed.iter().map(|(m, k)| m * *k as f64).sum::<f64>() / n as f64)
    }
}

/// Routing results grouped by chain and detector, in report order.
pub fn routing_by_chain(results: &[RoutingResult]) -> Vec<RoutingGroup<'_>> {
    let mut out: Vec<RoutingGroup<'_>> = Vec::new();
    for r in results {
        match out.iter_mut().find(|g| *g.chain == r.chain && g.detector == r.detector) {
            Some(group) => group.rows.push(r),
            None => out.push(RoutingGroup { chain: &r.chain, detector: r.detector, rows: vec![r] }),
        }
    }
    out
}

/// One routed chain's table with one detector: per sentence set, overall
/// accuracy, accuracy (sentences) per length bucket, the share sent to the
/// fallback field and the detector's CPU time per sentence. For a language
/// the route does not list, whose right place is the fallback, the cells
/// show the share sent there, marked `↪`.
pub fn routing_table(rows: &[&RoutingResult]) -> Table {
    let labels = buckets();
    let mut header: Vec<String> =
        ["data", "set", "sentences", "accuracy"].map(String::from).to_vec();
    header.extend(labels.iter().map(|b| b.replace("<=", "≤ ")));
    header.push("to fallback".to_string());
    header.push("µs / sentence".to_string());
    let numeric = header.iter().enumerate().map(|(i, _)| i >= 2).collect();
    let rows = rows
        .iter()
        .map(|r| {
            let f = &r.figures;
            // Display arithmetic only: shares of two model counts.
            let fallback = |n: usize, of: usize| (of > 0).then(|| n as f64 / of as f64);
            let mut row = vec![
                Cell::text(r.collection.clone()),
                Cell::text(r.set.clone()),
                Cell::text(f.sentences.to_string()),
                if f.routable {
                    Cell { text: percent(f.accuracy), share: f.accuracy }
                } else {
                    Cell::text("not routed")
                },
            ];
            for b in &f.by_length {
                row.push(if b.sentences == 0 {
                    Cell::text("–")
                } else if f.routable {
                    Cell {
                        text: format!("{} ({})", percent(b.accuracy), b.sentences),
                        share: b.accuracy,
                    }
                } else {
                    let share = fallback(b.to_fallback, b.sentences);
                    Cell { text: format!("↪ {} ({})", percent(share), b.sentences), share }
                });
            }
            row.push(Cell::text(percent(fallback(f.to_fallback, f.sentences))));
            row.push(Cell::text(
                f.micros_per_sentence.map_or("–".to_string(), |m| format!("{m:.0}")),
            ));
            row
        })
        .collect();
    Table { header, numeric, rows }
}

/// The segmentation table: one row per chain, gold set and frequency
/// source, in the order of `results`.
pub fn segmentation_table(results: &[SegmentationResult]) -> Table {
    let header =
        ["chain", "gold set", "frequencies", "words", "tags", "exact", "P", "R", "F1", "unaligned"];
    let rows = results
        .iter()
        .map(|r| {
            let f = &r.figures;
            [
                r.chain.to_string(),
                r.gold.clone(),
                r.source.clone(),
                r.source_words.to_string(),
                f.tags.to_string(),
                percent(f.exact_accuracy),
                fixed(f.precision, 3),
                fixed(f.recall, 3),
                fixed(f.f1, 3),
                f.unaligned.to_string(),
            ]
            .into_iter()
            .map(Cell::text)
            .collect()
        })
        .collect();
    Table {
        header: header.map(String::from).to_vec(),
        numeric: header.iter().enumerate().map(|(i, _)| i >= 3).collect(),
        rows,
    }
}

/// The word segmentation table: one row per gold set and `unspaced`
/// setting, in the order of `results`.
pub fn unspaced_table(results: &[UnspacedResult]) -> Table {
    let header =
        ["set", "unspaced", "chains", "sentences", "tokens", "P", "R", "F1", "words found"];
    let rows = results
        .iter()
        .map(|r| {
            let f = &r.figures;
            let chains: Vec<&str> = r.chains.iter().map(ChainName::as_str).collect();
            [
                r.set.clone(),
                r.setting.as_str().to_string(),
                if chains.is_empty() { "–".to_string() } else { chains.join(", ") },
                f.sentences.to_string(),
                f.tokens.to_string(),
                fixed(f.precision, 3),
                fixed(f.recall, 3),
                fixed(f.f1, 3),
                percent(f.word_recall),
            ]
            .into_iter()
            .map(Cell::text)
            .collect()
        })
        .collect();
    Table {
        header: header.map(String::from).to_vec(),
        numeric: header.iter().enumerate().map(|(i, _)| i >= 3).collect(),
        rows,
    }
}

/// What the word segmentation table shows, for every rendering.
pub const UNSPACED_LEGEND: &str = "Gold word segmentations of Universal Dependencies \
     treebanks (Thai PUD, Chinese GSD, Japanese GSD) through the `words` tokenizer with \
     each `unspaced` setting. P, R, F1 = word-boundary precision, recall and F1 at the \
     places between two non-space characters next to a letter, digit or mark; *words \
     found* = share of gold words (with a letter or digit) that are a token of the same \
     span. Treebank conventions differ (Japanese GSD splits inflections and auxiliaries), \
     so compare settings within a set. `bigrams` emits a pair at every character, so its \
     boundaries are those of single characters; its words found counts the pairs that are \
     gold words.";

/// `diagnostics.md`.
pub fn markdown(d: &Diagnostics) -> String {
    let mut s = String::new();
    let chains: Vec<String> = d.chains.iter().map(|c| format!("`{c}`")).collect();
    let _ = writeln!(s, "# Chain diagnostics\n");
    let _ = writeln!(
        s,
        "Chains: {}. Every data file read is listed with its SHA-256 under Inputs.\n",
        chains.join(", ")
    );
    if d.sections.conflation && !d.conflation.is_empty() {
        conflation_md(&mut s, d);
    }
    if d.sections.routing && !d.routing.is_empty() {
        routing_md(&mut s, d);
    }
    if d.sections.segmentation && !d.segmentation.is_empty() {
        segmentation_md(&mut s, d);
    }
    if d.sections.unspaced && !d.unspaced.is_empty() {
        unspaced_md(&mut s, d);
    }
    if !d.notes.is_empty() {
        let _ = writeln!(s, "## Notes\n");
        for n in &d.notes {
            let _ = writeln!(s, "- {}", n.replace('\n', " "));
        }
        s.push('\n');
    }
    let _ = writeln!(s, "## Inputs\n");
    let _ = writeln!(s, "| role | file | SHA-256 |\n|---|---|---|");
    for i in &d.inputs {
        let _ = writeln!(s, "| {} | `{}` | `{}` |", cell(&i.role), cell(&i.path), i.sha256);
    }
    s
}

fn conflation_md(s: &mut String, d: &Diagnostics) {
    let _ = writeln!(s, "## Conflation against lemma classes\n");
    let _ = writeln!(
        s,
        "Words are the distinct forms of each lemma list; words sharing a lemma form a \
         concept group (forms with two lemmas are left out). Paice (SIGIR 1994): UI = share \
         of desired merges (pairs of words with one lemma) the chain misses, OI = share of \
         desired non-merges (pairs with different lemmas) it merges, SW = OI / UI. Over \
         groups of 2+ words: *whole* = share conflated to one term sequence, *terms* = mean \
         distinct term sequences per group.\n"
    );
    s.push_str(&conflation_table(&d.conflation).markdown());
    s.push('\n');
    let with_examples: Vec<_> = d
        .conflation
        .iter()
        .filter_map(|r| r.figures.as_ref().map(|f| (r, f)))
        .filter(|(_, f)| !f.worst_splits.is_empty() || !f.worst_merges.is_empty())
        .collect();
    if with_examples.is_empty() {
        return;
    }
    let _ = writeln!(s, "### Worst offenders\n");
    let _ = writeln!(
        s,
        "*split*: lemma groups spread over most terms (term → forms); *merged*: terms \
         that join most unrelated lemmas (lemma: forms). `∅` = the chain outputs nothing.\n"
    );
    let mut shown: Vec<(&str, &str, &ConflationFigures)> = Vec::new();
    for (r, f) in with_examples {
        // A chain that conflates exactly like one already shown on this set
        // (a routed chain's branch and the stemmed chain, say) is named, not repeated.
        if let Some((_, same, _)) = shown.iter().find(|(set, _, g)| *set == r.set && *g == f) {
            let _ = writeln!(s, "**{} · {}**: same as {}.\n", r.set, cell(&r.analysis), cell(same));
            continue;
        }
        shown.push((&r.set, &r.analysis, f));
        let _ = writeln!(s, "**{} · {}**\n", r.set, cell(&r.analysis));
        for g in &f.worst_splits {
            let parts: Vec<String> = g
                .stems
                .iter()
                .map(|t| format!("`{}` {}", stem_label(&t.stem), forms(&t.forms, t.count)))
                .collect();
            let _ = writeln!(
                s,
                "- split `{}` ({} words, {} terms): {}",
                cell(&g.lemma),
                g.words,
                g.stems.len(),
                parts.join("; ")
            );
        }
        for m in &f.worst_merges {
            let parts: Vec<String> = m
                .lemmas
                .iter()
                .map(|l| format!("{}: {}", cell(&l.stem), forms(&l.forms, l.count)))
                .collect();
            let _ = writeln!(
                s,
                "- merged `{}` ({} lemmas): {}",
                cell(&m.stem),
                m.lemmas.len(),
                parts.join("; ")
            );
        }
        s.push('\n');
    }
}

fn stem_label(stem: &str) -> String {
    if stem.is_empty() {
        "∅".to_string()
    } else {
        cell(stem)
    }
}

fn forms(shown: &[String], count: usize) -> String {
    let mut text = shown.iter().map(|f| cell(f)).collect::<Vec<_>>().join(", ");
    if count > shown.len() {
        let _ = write!(text, ", … ({count})");
    }
    text
}

fn routing_md(s: &mut String, d: &Diagnostics) {
    let _ = writeln!(s, "## Routing by language\n");
    let _ = writeln!(
        s,
        "Each sentence is routed like a post without a declared language (the chain's \
         detector, then its field); each routed chain runs with its own detector and with \
         the other one. Correct = the field of the sentence's own language; \
         `{FALLBACK_LABEL}` (the fallback field) is wrong. A language the route does not \
         list cannot be routed correctly and is marked *not routed*; its right place is \
         the fallback, and its cells (↪) show the share sent there. Length buckets in \
         characters; cells show accuracy (sentences). µs / sentence: CPU time of detection \
         per sentence, measured in this pass (it varies from run to run).\n"
    );
    for group in routing_by_chain(&d.routing) {
        let _ = writeln!(s, "### {}\n", group.title());
        if let Some(m) = group.micros_per_sentence() {
            let _ = writeln!(s, "Detection: {m:.0} µs of CPU time per sentence.\n");
        }
        s.push_str(&routing_table(&group.rows).markdown());
        s.push('\n');
        confusion_md(s, &group.rows);
    }
}

/// One confusion matrix per collection: rows the sets, columns the fields.
fn confusion_md(s: &mut String, rows: &[&RoutingResult]) {
    let mut collections: Vec<&str> = rows.iter().map(|r| r.collection.as_str()).collect();
    collections.dedup();
    for collection in collections {
        let part: Vec<&&RoutingResult> =
            rows.iter().filter(|r| r.collection == collection).collect();
        let mut labels: Vec<&str> = part
            .iter()
            .flat_map(|r| r.figures.confusion.keys().map(String::as_str))
            .filter(|l| *l != FALLBACK_LABEL)
            .collect();
        labels.sort_unstable();
        labels.dedup();
        labels.push(FALLBACK_LABEL);
        let _ = writeln!(s, "Routed to (rows: {collection} sets; columns: fields):\n");
        let _ = write!(s, "| set |");
        for l in &labels {
            let _ = write!(s, " {l} |");
        }
        let _ = write!(s, "\n|---|");
        for _ in &labels {
            let _ = write!(s, "--:|");
        }
        s.push('\n');
        for r in part {
            let _ = write!(s, "| {} |", r.set);
            for l in &labels {
                let n = r.figures.confusion.get(*l).copied().unwrap_or(0);
                if n == 0 {
                    let _ = write!(s, " · |");
                } else if Some(*l) == Some(r.language.as_str()) {
                    let _ = write!(s, " **{n}** |");
                } else {
                    let _ = write!(s, " {n} |");
                }
            }
            s.push('\n');
        }
        s.push('\n');
    }
}

fn segmentation_md(s: &mut String, d: &Diagnostics) {
    let _ = writeln!(s, "## Hashtag segmentation\n");
    let _ = writeln!(
        s,
        "Each tag is fed as `#tag` through the chain up to its `hashtags` step. Words are \
         compared lower-cased with non-alphanumerics removed (gold sets restore apostrophes \
         a tag cannot hold). *exact* = the words equal the gold or an accepted alternative; \
         P/R/F1 = micro-averaged word-boundary precision, recall and F1 against the best \
         accepted segmentation; *unaligned* = tags whose gold spells other letters (left \
         out of P/R).\n"
    );
    s.push_str(&segmentation_table(&d.segmentation).markdown());
    s.push('\n');
    let misses: Vec<_> = d.segmentation.iter().filter(|r| !r.figures.errors.is_empty()).collect();
    if misses.is_empty() {
        return;
    }
    let _ = writeln!(s, "### First misses\n");
    for r in misses {
        let examples: Vec<String> = r
            .figures
            .errors
            .iter()
            .map(|e| {
                format!("`{}` → {} (gold: {})", cell(&e.tag), cell(&e.predicted), cell(&e.gold))
            })
            .collect();
        let _ = writeln!(
            s,
            "- {} · {} · {}: {}",
            r.chain,
            cell(&r.gold),
            cell(&r.source),
            examples.join("; ")
        );
    }
    s.push('\n');
}

fn unspaced_md(s: &mut String, d: &Diagnostics) {
    let _ = writeln!(s, "## Scripts written without spaces\n");
    let _ = writeln!(s, "{UNSPACED_LEGEND}\n");
    s.push_str(&unspaced_table(&d.unspaced).markdown());
    s.push('\n');
    let misses: Vec<_> = d
        .unspaced
        .iter()
        .filter(|r| r.setting != crate::analysis::Unspaced::Bigrams && !r.figures.misses.is_empty())
        .collect();
    if misses.is_empty() {
        return;
    }
    let _ = writeln!(s, "### First sentences segmented otherwise than the gold\n");
    for r in misses {
        let _ = writeln!(s, "- {} · {}:", cell(&r.set), r.setting.as_str());
        for m in &r.figures.misses {
            let _ = writeln!(
                s,
                "  - {}: {} (gold: {})",
                cell(&m.id),
                cell(&m.predicted),
                cell(&m.gold)
            );
        }
    }
    s.push('\n');
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tables_escape_cells_and_align_numbers() {
        let t = Table {
            header: vec!["a|b".into(), "n".into()],
            numeric: vec![false, true],
            rows: vec![vec![Cell::text("x`y"), Cell::text("3")]],
        };
        assert_eq!(t.markdown(), "| a\\|b | n |\n|---|--:|\n| x'y | 3 |\n");
    }
}
