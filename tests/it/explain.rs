//! `postassay explain` on a fixture where stemming makes the difference
//! (tests/fixtures/stemming/): the query "ferry delay" and the post "All
//! ferries delayed this morning" share no surface word.

use crate::util::{fixture, postassay, root, texts};

/// `explain --query q1 --doc p1` on the stemming fixture with `extra`
/// flags; asserts exit 0 and returns stdout and stderr.
fn explain_q1_p1(extra: &[&str]) -> (String, String) {
    let input = |name: &str| fixture(&format!("stemming/{name}")).display().to_string();
    let (c, q, j) = (input("posts.jsonl"), input("queries.csv"), input("qrels.csv"));
    let mut args = vec!["explain", "--query", "q1", "--doc", "p1", "--corpus", &c, "--queries", &q];
    args.extend(["--judgments", j.as_str()]);
    args.extend(extra);
    let res = postassay(&root(), &args);
    let out = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{}", out.1);
    out
}

#[test]
fn explain_shows_stemming_matches() {
    let (stdout, _) = explain_q1_p1(&["--chains", "standard,stemmed", "--format", "json"]);
    let v: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    assert_eq!(v["grade"], 2);
    let standard = &v["chains"][0];
    assert_eq!(standard["chain"], "standard");
    assert_eq!(standard["matched_terms"], serde_json::json!([]));
    assert!(standard["rank"].is_null());
    let stemmed = &v["chains"][1];
    // English Snowball (Porter2): ferries → ferri, ferry → ferri,
    // delayed → delay (snowball English rules; checked against the
    // snowballstemmer package's output in the analysis fixtures).
    assert_eq!(stemmed["query_terms"], serde_json::json!(["text:delay", "text:ferri"]));
    assert_eq!(stemmed["matched_terms"], serde_json::json!(["delay", "ferri"]));
    assert_eq!(stemmed["rank"], 1);
    let field = &stemmed["fields"][0];
    assert_eq!(field["field"], "text");
    assert_eq!(field["rank"], 1);
    let shares: Vec<&str> =
        field["terms"].as_array().unwrap().iter().map(|t| t["term"].as_str().unwrap()).collect();
    // Equal shares are listed by term.
    assert_eq!(shares, ["delay", "ferri"]);
}

#[test]
fn explain_unknown_query_is_exit_2() {
    let res = postassay(&root(), &["explain", "--query", "nope", "--doc", "p00001"]);
    assert_eq!(res.status.code(), Some(2));
    assert!(texts(&res).1.contains("--query nope"));
}

/// The score taken apart: per matched term
/// `rarity × (k1 + 1) × tf / (tf + k1 × (1 − b + b × dl / avgdl))` with
/// `rarity = ln(1 + (N − n + 0.5) / (n + 0.5))`, k1 = 1.2, b = 0.75 (BM25 as
/// in Robertson & Zaragoza, "The Probabilistic Relevance Framework: BM25 and
/// Beyond", 2009, with the `(k1 + 1)` factor and the `1 +` inside the
/// logarithm of the variant tantivy implements; constants from tantivy's
/// documentation, from memory). Fixture under `stemmed`: N = 3 posts of 5,
/// 3 and 3 tokens (avgdl 11/3); p1 has `delay` and `ferri` once each (tf 1,
/// n 1, dl 5). Each share, their sum and the engine's score agree to 1e-4.
#[test]
fn explain_takes_the_bm25_score_apart() {
    let (n_docs, n, tf, dl, avgdl, k1, b) = (3.0, 1.0, 1.0, 5.0, 11.0 / 3.0, 1.2, 0.75);
    let rarity = f64::ln(1.0 + (n_docs - n + 0.5) / (n + 0.5));
    let per_term = rarity * (k1 + 1.0) * tf / (tf + k1 * (1.0 - b + b * dl / avgdl));

    let (stdout, _) = explain_q1_p1(&["--chains", "stemmed", "--format", "json"]);
    let v: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    let chain = &v["chains"][0];
    let engine = chain["score"].as_f64().unwrap();
    assert!((engine - 2.0 * per_term).abs() < 1e-4, "{engine} vs {}", 2.0 * per_term);
    let field = &chain["fields"][0];
    assert!((field["bm25"].as_f64().unwrap() - engine).abs() < 1e-12);
    let mut sum = 0.0;
    for t in field["terms"].as_array().unwrap() {
        assert!((t["share"].as_f64().unwrap() - per_term).abs() < 1e-4, "{t}");
        assert!((t["rarity"].as_f64().unwrap() - rarity).abs() < 1e-9, "{t}");
        assert_eq!((t["posts_with_term"].as_u64(), t["posts"].as_u64()), (Some(1), Some(3)));
        assert_eq!((t["occurrences"].as_u64(), t["length"].as_u64()), (Some(1), Some(5)));
        assert!((t["mean_length"].as_f64().unwrap() - avgdl).abs() < 1e-9, "{t}");
        sum += t["share"].as_f64().unwrap();
    }
    assert!((sum - engine).abs() < 1e-4, "shares add up to {sum}, engine {engine}");

    // The text view: one line per term, and the total.
    let (text, _) = explain_q1_p1(&["--chains", "stemmed"]);
    assert!(text.contains("  rank 1, BM25 score "), "{text}");
    assert!(text.contains("  in text: rank 1, BM25 "), "{text}");
    let header = text.lines().find(|l| l.trim_start().starts_with("term ")).expect("a header");
    assert!(header.contains("share") && header.contains("rarity"), "{header}");
    let line = format!("delay  {per_term:.4}  {rarity:.4} (1 of 3 posts)  1");
    assert!(text.contains(&line), "{line:?} in {text}");
    assert!(text.contains(&format!("shares add up to {:.4}", 2.0 * per_term)), "{text}");
}

/// Issue 12: texts print as written, not as Rust escapes (the demo post
/// p00001 ends with the ZWJ sequence man biking, dark skin tone: U+1F6B4
/// U+1F3FF U+200D U+2642 U+FE0F), and no internal term dump (`text:`
/// prefixes, `Term(field=…)`) reaches the text output.
#[test]
fn explain_text_prints_texts_as_written_without_term_dumps() {
    let res = postassay(
        &root(),
        &["explain", "--query", "q01", "--doc", "p00001", "--chains", "standard,routed"],
    );
    let (stdout, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    let first = stdout.lines().next().unwrap_or_default();
    assert_eq!(
        first,
        "query q01 (\"ferry delays\") · post p00001 (\"El barco de las 12:30 va con retraso. \
         Deseadme suerte. #QuillFerries \u{1F6B4}\u{1F3FF}\u{200D}\u{2642}\u{FE0F}\") · grade \
         unjudged"
    );
    assert!(!stdout.contains("\\u{"), "no escapes: {stdout}");
    assert!(!stdout.contains("Term("), "no term dump: {stdout}");
    // Query terms read like the post's terms: terms, then the field.
    assert!(stdout.contains("  query terms:   delays ferry (text)\n"), "{stdout}");
    assert!(
        stdout.contains("  query terms:   delay ferri (text_en); delays ferry (text_other)\n"),
        "{stdout}"
    );
}
