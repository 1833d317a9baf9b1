//! `postassay tokens`: tokens with positions and byte offsets, traces, stdin.

use std::io::Write;
use std::process::{Command, Stdio};

use crate::util::{postassay, root, texts, token_texts};

fn json(args: &[&str]) -> serde_json::Value {
    let res = postassay(&root(), args);
    let (stdout, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    serde_json::from_str(&stdout).unwrap()
}

#[test]
fn tokens_with_positions_and_byte_offsets() {
    // Snowball English (Porter 1980 rule examples, from memory): "ponies" →
    // "poni"; "Running" → "run". Offsets are bytes into the original text.
    let v = json(&["tokens", "--chain", "stemmed", "--format", "json", "Running", "ponies"]);
    let tokens = &v[0]["tokens"];
    assert_eq!(v[0]["text"], "Running ponies");
    assert_eq!(tokens[0]["token"], "run");
    assert_eq!(tokens[0]["at"], 0);
    assert_eq!((tokens[0]["start"].as_u64(), tokens[0]["end"].as_u64()), (Some(0), Some(7)));
    assert_eq!(tokens[1]["token"], "poni");
    assert_eq!(tokens[1]["at"], 1);
    assert_eq!((tokens[1]["start"].as_u64(), tokens[1]["end"].as_u64()), (Some(8), Some(14)));
    // Exactly our own four keys, none of the index library's.
    let keys: Vec<&String> = tokens[0].as_object().unwrap().keys().collect();
    assert_eq!(keys, ["at", "end", "start", "token"]);
}

#[test]
fn trace_shows_each_step() {
    let v = json(&[
        "tokens",
        "--chain",
        "hashtag",
        "--trace",
        "--format",
        "json",
        "Delays at #HarbourMarket",
    ]);
    let stages: Vec<&str> =
        v[0]["stages"].as_array().unwrap().iter().map(|s| s["stage"].as_str().unwrap()).collect();
    assert_eq!(stages, ["posts", "drop(urls)", "hashtags", "lowercase"]);
    let last: Vec<&str> = v[0]["stages"][3]["tokens"]
        .as_array()
        .unwrap()
        .iter()
        .map(|t| t["token"].as_str().unwrap())
        .collect();
    assert_eq!(last, ["delays", "at", "harbourmarket", "harbour", "market"]);
}

#[test]
fn routed_chain_uses_the_declared_language() {
    let v = json(&["tokens", "--chain", "routed", "--lang", "de", "--format", "json", "Fähren"]);
    assert_eq!(v[0]["field"], "text_de");
    // German Snowball: Fähren → fahr (umlaut removed, -en stripped); value
    // as produced by the current Snowball German algorithm (shared data
    // snowball/head/german.tsv holds the same rules).
    assert_eq!(v[0]["tokens"][0]["token"], "fahr");
}

#[test]
fn stdin_gives_one_text_per_line() {
    let mut child = Command::new(env!("CARGO_BIN_EXE_postassay"))
        .args(["tokens", "--chain", "standard", "--format", "json", "-"])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .spawn()
        .unwrap();
    child.stdin.take().unwrap().write_all(b"Tram A\n\nTRAM b\n").unwrap();
    let out = child.wait_with_output().unwrap();
    assert_eq!(out.status.code(), Some(0));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v.as_array().unwrap().len(), 2);
    assert_eq!(v[1]["tokens"][0]["token"], "tram");
}

#[test]
fn unknown_chain_and_bad_language_exit_2() {
    let res = postassay(&root(), &["tokens", "--chain", "nope", "x"]);
    assert_eq!(res.status.code(), Some(2));
    assert!(texts(&res).1.contains("standard"), "lists the available chains");
    let res = postassay(&root(), &["tokens", "--chain", "routed", "--lang", "german", "x"]);
    assert_eq!(res.status.code(), Some(2));
    assert!(texts(&res).1.contains("ISO 639-1"));
}

/// Without --corpus, a chain whose `hashtags` step learns words from the
/// corpus uses the demo corpus when it is there (as `run` does by default)
/// and says so; elsewhere it says tags split only at case, digit and
/// underscore boundaries. An all-lowercase tag shows the difference.
#[test]
fn hashtag_words_default_to_the_demo_corpus_and_say_so() {
    let words = |cwd: &std::path::Path| {
        token_texts(cwd, &["tokens", "--chain", "hashtag", "--format", "json", "#harbourmarketday"])
    };
    let (tokens, note) = words(&root());
    assert_eq!(tokens, ["harbourmarketday", "harbour", "market", "day"]);
    assert!(note.contains("hashtag words learned from the demo corpus"), "{note}");
    let elsewhere = tempfile::tempdir().unwrap();
    let (tokens, note) = words(elsewhere.path());
    assert_eq!(tokens, ["harbourmarketday"]);
    assert!(note.contains("no corpus to learn hashtag words from"), "{note}");
    // Chains without such a step say nothing.
    let res = postassay(elsewhere.path(), &["tokens", "--chain", "standard", "#harbourmarketday"]);
    assert_eq!(texts(&res).1, "");
}
