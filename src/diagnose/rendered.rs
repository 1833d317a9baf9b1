//! Diagnostics as rendered: figures computed by this module's arithmetic
//! (Paice counts, routing tallies), rendered by [`crate::report::diagnostics`]
//! into the CSVs, tables and Markdown of `vet`. The tests sit here, on the
//! side that fills the model, since `report` imports nothing above it.

use super::conflation::{figures, WordGroups};
use super::data::LemmaList;
use super::routing::{tally, RoutingFigures};
use crate::analysis::detect::DetectorKind;
use crate::ids::ChainName;
use crate::input::LangCode;
use crate::report::diagnostics::{
    conflation_csv, confusion_csv, json, markdown, routing_by_chain, routing_csv, routing_table,
};
use crate::report::model::diagnostics::{
    ConflationResult, Diagnostics, RoutingResult, Sections, SCHEMA_VERSION,
};
use crate::report::model::{InputFile, ToolInfo};

fn sample() -> Diagnostics {
    let en = LangCode::parse("en").expect("valid");
    let list = LemmaList {
        rows: [("runs", "run"), ("ran", "run"), ("cat", "cat")]
            .iter()
            .map(|(f, l)| (f.to_string(), l.to_string()))
            .collect(),
        without_lemma: 0,
    };
    let groups = WordGroups::from_list(&list);
    let stems = ["run", "ran", "cat"].map(String::from);
    Diagnostics {
        schema_version: SCHEMA_VERSION,
        tool: ToolInfo { name: "postassay".into(), version: "0".into() },
        command: "vet".into(),
        inputs: vec![InputFile {
            role: "lemmas:en".into(),
            path: "en.tsv".into(),
            sha256: "ab".into(),
        }],
        chains: vec![ChainName::from("stemmed")],
        chain_specs: Vec::new(),
        sections: Sections::all(),
        conflation: vec![ConflationResult {
            chain: ChainName::from("stemmed"),
            set: "en".into(),
            language: en,
            analysis: "stemmed (stem(en, current))".into(),
            words: 3,
            groups: 2,
            ambiguous_forms: 0,
            without_lemma: 0,
            figures: Some(figures(&groups, &stems, 3)),
            note: None,
        }],
        routing: vec![RoutingResult {
            chain: ChainName::from("routed"),
            detector: DetectorKind::Lingua,
            collection: "ud".into(),
            set: "en".into(),
            language: en,
            figures: RoutingFigures {
                micros_per_sentence: Some(250.0),
                ..tally(en, true, &[(10, Some(en)), (80, None)])
            },
        }],
        segmentation: Vec::new(),
        unspaced: Vec::new(),
        notes: vec!["segmentation: none of the chains has a hashtags step".into()],
    }
}

#[test]
fn csv_rows_carry_the_figures() {
    let d = sample();
    let conflation = conflation_csv(&d).expect("renders");
    let row = conflation.lines().nth(1).expect("one row");
    // 3 words; GDMT 1 (runs–ran), GUMT 1, GDNT 2, GWMT 0: UI 1, OI 0.
    assert_eq!(row, "stemmed,en,en,\"stemmed (stem(en, current))\",3,2,1,0,0,0,1,1,2,0,1,0,0,0,2,");
    let routing = routing_csv(&d).expect("renders");
    let lines: Vec<&str> = routing.lines().collect();
    assert_eq!(lines[1], "routed,lingua,ud,en,en,yes,all,2,1,0.5,1,250");
    assert_eq!(lines[2], "routed,lingua,ud,en,en,yes,<=20,1,1,1,0,");
    assert_eq!(lines[3], "routed,lingua,ud,en,en,yes,21-60,0,0,,0,");
    assert_eq!(lines[4], "routed,lingua,ud,en,en,yes,61-140,1,0,0,1,");
    let confusion = confusion_csv(&d).expect("renders");
    assert_eq!(
        confusion.lines().skip(1).collect::<Vec<_>>(),
        ["routed,lingua,ud,en,en,en,1", "routed,lingua,ud,en,en,other,1"]
    );
}

#[test]
fn routing_tables_carry_the_model_shares_per_chain() {
    let mut d = sample();
    let mut other = d.routing[0].clone();
    other.chain = ChainName::from("other");
    let mut second = d.routing[0].clone();
    second.set = "de".into();
    second.figures.micros_per_sentence = Some(1000.0);
    let mut whatlang = d.routing[0].clone();
    whatlang.detector = DetectorKind::Whatlang;
    // Swedish, not routed: one sentence of 80 chars sent to the fallback.
    let sv = LangCode::parse("sv").expect("valid");
    let mut unlisted = d.routing[0].clone();
    unlisted.set = "sv".into();
    unlisted.figures = tally(sv, false, &[(80, None)]);
    d.routing.extend([other, second, whatlang, unlisted]);
    let grouped = routing_by_chain(&d.routing);
    let names: Vec<(&str, &str, usize)> =
        grouped.iter().map(|g| (g.chain.as_str(), g.detector.as_str(), g.rows.len())).collect();
    assert_eq!(
        names,
        [("routed", "lingua", 3), ("other", "lingua", 1), ("routed", "whatlang", 1)],
        "report order, sets gathered per chain and detector"
    );
    assert_eq!(grouped[2].title(), "`routed`, detector `whatlang`");
    // Pooled over the timed sets: (250 · 2 + 1000 · 2) / 4 sentences.
    assert_eq!(grouped[0].micros_per_sentence(), Some(625.0));
    let table = routing_table(&grouped[0].rows);
    assert_eq!(table.header.len(), 10);
    assert_eq!(table.numeric, [false, false, true, true, true, true, true, true, true, true]);
    // Two sentences: 10 chars → en (right), 80 chars → fallback (wrong).
    let shares: Vec<Option<f64>> = table.rows[0].iter().map(|c| c.share).collect();
    assert_eq!(shares, [None, None, None, Some(0.5), Some(1.0), None, Some(0.0), None, None, None]);
    assert_eq!(table.rows[0][4].text, "100.0% (1)");
    assert_eq!(table.rows[0][9].text, "250");
    // The unlisted language: the cells show the share sent to the fallback.
    let texts: Vec<&str> = table.rows[2].iter().map(|c| c.text.as_str()).collect();
    assert_eq!(
        texts,
        ["ud", "sv", "1", "not routed", "–", "–", "↪ 100.0% (1)", "–", "100.0%", "–"]
    );
    assert_eq!(table.rows[2][6].share, Some(1.0));
}

#[test]
fn markdown_shows_tables_offenders_and_inputs() {
    let md = markdown(&sample());
    let row =
        "| en | stemmed | stemmed (stem(en, current)) | 3 | 1 | 1.0000 | 0 | 0 | 0.0% | 2.00 |";
    assert!(md.contains(row), "{md}");
    assert!(md.contains("- split `run` (2 words, 2 terms): `ran` ran; `run` runs"), "{md}");
    // Two sentences: 10 chars → en (right), 80 chars → fallback (wrong).
    let row = "| ud | en | 2 | 50.0% | 100.0% (1) | – | 0.0% (1) | – | 50.0% | 250 |";
    assert!(md.contains(row), "{md}");
    assert!(md.contains("### `routed`, detector `lingua`\n"), "{md}");
    assert!(md.contains("Detection: 250 µs of CPU time per sentence."), "{md}");
    assert!(md.contains("| en | **1** | 1 |"), "{md}");
    assert!(md.contains("| lemmas:en | `en.tsv` | `ab` |"), "{md}");
    assert!(md.contains("## Notes"));
    let json = json(&sample()).expect("serialises");
    let back: Diagnostics = serde_json::from_str(&json).expect("parses back");
    assert_eq!(back.conflation, sample().conflation);
}
