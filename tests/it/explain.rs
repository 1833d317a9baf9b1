//! `postassay explain` on a fixture where stemming makes the difference
//! (tests/fixtures/stemming/): the query "ferry delay" and the post "All
//! ferries delayed this morning" share no surface word.

use crate::util::{fixture, postassay, root, texts};

#[test]
fn explain_shows_stemming_matches() {
    let (c, q, j) = (
        fixture("stemming/posts.jsonl"),
        fixture("stemming/queries.csv"),
        fixture("stemming/qrels.csv"),
    );
    let res = postassay(
        &root(),
        &[
            "explain",
            "--query",
            "q1",
            "--doc",
            "p1",
            "--corpus",
            c.to_str().unwrap(),
            "--queries",
            q.to_str().unwrap(),
            "--judgments",
            j.to_str().unwrap(),
            "--chains",
            "standard,stemmed",
            "--format",
            "json",
        ],
    );
    let (stdout, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
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
    assert!(stemmed["explanation"].is_object());
}

#[test]
fn explain_unknown_query_is_exit_2() {
    let res = postassay(&root(), &["explain", "--query", "nope", "--doc", "p00001"]);
    assert_eq!(res.status.code(), Some(2));
    assert!(texts(&res).1.contains("--query nope"));
}
