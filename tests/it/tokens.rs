//! `postassay tokens`: tokens with positions and byte offsets, traces, stdin.

use std::io::Write;
use std::process::{Command, Stdio};

use crate::util::{postassay, root, texts};

fn json(args: &[&str]) -> serde_json::Value {
    let res = postassay(&root(), args);
    let (stdout, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    serde_json::from_str(&stdout).unwrap()
}

/// Run `tokens` in `cwd` (exit 0 expected): the first text's JSON, the
/// texts of its tokens (none with `--trace`), and stderr.
fn first_text_tokens(
    cwd: &std::path::Path,
    args: &[&str],
) -> (serde_json::Value, Vec<String>, String) {
    let res = postassay(cwd, args);
    let (stdout, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    let v: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    (v[0].clone(), texts_of(&v[0]["tokens"]), stderr)
}

/// The text of each token of a JSON token list.
fn texts_of(tokens: &serde_json::Value) -> Vec<String> {
    let tokens = tokens.as_array().map(Vec::as_slice).unwrap_or_default();
    tokens.iter().map(|t| t["token"].as_str().unwrap().to_string()).collect()
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
        let (_, tokens, stderr) = first_text_tokens(
            cwd,
            &["tokens", "--chain", "hashtag", "--format", "json", "#harbourmarketday"],
        );
        (tokens, stderr)
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

/// `vocabulary = "lists"` (`tags_by_language` of chains/hashtag_lists.toml):
/// the built-in word lists split all-lowercase tags with no corpus at all; a
/// routed chain's branch uses its language's list and the fallback
/// (language unknown) the merged list of all seven.
/// Expected splits: the words as written apart (gold of
/// tests/fixtures/analysis/hashtag/invented_gold.tsv, invented).
#[test]
fn built_in_lists_split_tags_per_branch_language() {
    let tmp = tempfile::tempdir().unwrap();
    let chains = root().join("chains/hashtag_lists.toml");
    let chains = chains.to_str().unwrap();
    // Run outside the repository: no demo corpus, nothing read but the file.
    // The field, and the label and output of the hashtags step (before
    // lower-casing and stemming).
    let words = |lang: &str, text: &str| {
        let args =
            ["tokens", "--chain-file", chains, "--chain", "tags_by_language", "--lang", lang];
        let (v, _, _) = first_text_tokens(
            tmp.path(),
            &[&args[..], &["--trace", "--format", "json", text]].concat(),
        );
        let stage = &v["stages"][1];
        (
            v["field"].as_str().unwrap().to_string(),
            stage["stage"].as_str().unwrap().to_string(),
            texts_of(&stage["tokens"]),
        )
    };
    // The German list spells ß as ss (wordfreq case-folds); parts keep ß.
    let (field, step, tokens) = words("de", "#fußballistunserleben");
    assert_eq!((field.as_str(), step.as_str()), ("text_de", "hashtags(lists:de)"));
    assert_eq!(tokens, ["fußballistunserleben", "fußball", "ist", "unser", "leben"]);
    let (field, step, tokens) = words("fr", "#rentréescolaire");
    assert_eq!((field.as_str(), step.as_str()), ("text_fr", "hashtags(lists:fr)"));
    assert_eq!(tokens, ["rentréescolaire", "rentrée", "scolaire"]);
    // Spanish has no branch here: the fallback, with the merged list.
    let (field, step, tokens) = words("es", "#buenosdías");
    assert_eq!((field.as_str(), step.as_str()), ("text_other", "hashtags(lists:all)"));
    assert_eq!(tokens, ["buenosdías", "buenos", "días"]);
}

/// `chains/unspaced.toml`: the trace names the tokenizer's setting, and the
/// Chinese of UD Chinese-GSD test-s2 (gold: 自從 2004 年 提出 了 …) comes
/// out as its gold words with the dictionary, as overlapping pairs with
/// `bigrams`, with byte offsets into the text.
#[test]
fn trace_shows_unspaced_words_and_pairs() {
    let tokens = |chain: &str| {
        let v = json(&[
            "tokens",
            "--chain-file",
            "chains/unspaced.toml",
            "--chain",
            chain,
            "--trace",
            "--format",
            "json",
            "自從2004年提出了",
        ]);
        let first = &v[0]["stages"][0];
        let spans: Vec<(String, u64, u64)> = first["tokens"]
            .as_array()
            .unwrap()
            .iter()
            .map(|t| {
                let (from, to) = (t["start"].as_u64().unwrap(), t["end"].as_u64().unwrap());
                (t["token"].as_str().unwrap().to_string(), from, to)
            })
            .collect();
        (first["stage"].as_str().unwrap().to_string(), spans)
    };
    let (stage, words) = tokens("words_dictionary");
    assert_eq!(stage, "words(unspaced = dictionary)");
    let texts: Vec<&str> = words.iter().map(|(t, _, _)| t.as_str()).collect();
    assert_eq!(texts, ["自從", "2004", "年", "提出", "了"]);
    assert_eq!((words[0].1, words[0].2), (0, 6));
    let (stage, pairs) = tokens("words_bigrams");
    assert_eq!(stage, "words(unspaced = bigrams)");
    let texts: Vec<&str> = pairs.iter().map(|(t, _, _)| t.as_str()).collect();
    assert_eq!(texts, ["自從", "2004", "年提", "提出", "出了"]);
    // Pairs overlap: 年提 starts where 年 does, 提出 one character later.
    assert_eq!((pairs[2].1, pairs[3].1), (10, 13));
}

/// Issue 12: `--chain a,b` shows every chain, side by side in text and one
/// object per text and chain in JSON (before, only `a`).
#[test]
fn several_chains_side_by_side() {
    let res = postassay(&root(), &["tokens", "--chain", "standard,stemmed", "Running ponies"]);
    let (stdout, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    // Snowball English as in tokens_with_positions_and_byte_offsets.
    let expected = [
        "\"Running ponies\"",
        "standard → field text       │ stemmed → field text",
        " pos  bytes         token   │  pos  bytes         token",
        "   0      0..7      running │    0      0..7      run",
        "   1      8..14     ponies  │    1      8..14     poni",
    ];
    assert_eq!(stdout, expected.map(|l| format!("{l}\n")).concat());
    let v = json(&["tokens", "--chain", "standard,stemmed", "--format", "json", "Running ponies"]);
    let shown: Vec<(&str, &str)> = v
        .as_array()
        .unwrap()
        .iter()
        .map(|o| (o["chain"].as_str().unwrap(), o["tokens"][0]["token"].as_str().unwrap()))
        .collect();
    assert_eq!(shown, [("standard", "running"), ("stemmed", "run")]);
    // Traces follow one another under the text.
    let res = postassay(&root(), &["tokens", "--chain", "standard,stemmed", "--trace", "Running"]);
    let (stdout, _) = texts(&res);
    assert!(stdout.starts_with("\"Running\"\nstandard → field text\n  [text] words"), "{stdout}");
    assert!(stdout.contains("stemmed → field text\n"), "{stdout}");
}

/// Issue 12: invalid UTF-8 on standard input names its line.
#[test]
fn invalid_utf8_on_stdin_names_the_line() {
    let mut child = Command::new(env!("CARGO_BIN_EXE_postassay"))
        .args(["tokens", "--chain", "standard", "-"])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // `é` in Latin-1 (0xE9) on line 3, after a blank line 2.
    child.stdin.take().unwrap().write_all(b"ferry\n\ncaf\xE9\n").unwrap();
    let out = child.wait_with_output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(out.stdout.is_empty());
    assert_eq!(
        String::from_utf8_lossy(&out.stderr),
        "postassay: <stdin>:3: expected UTF-8 text, found an invalid byte sequence at byte 4 of \
         the line (a Latin-1 or Windows-1252 file? save it as UTF-8)\n"
    );
}

/// Issue 12: `fold` with `form = "compatibility"` folds fullwidth letters
/// (U+FF26 …) and ligatures (U+FB01) as NFKC does (UAX #15), and case; the
/// default canonical form leaves them (values as Python's unicodedata gives
/// them, see tests/fixtures/analysis/fold_compat.json).
#[test]
fn compatibility_fold_in_a_chain_file() {
    let tmp = tempfile::tempdir().unwrap();
    let chains = crate::util::write(
        tmp.path(),
        "fold.toml",
        "[[chain]]\nname = \"canonical\"\nsteps = [{ step = \"lowercase\" }, { step = \"fold\" }]\n\n\
         [[chain]]\nname = \"compatible\"\n\
         steps = [{ step = \"lowercase\" }, { step = \"fold\", form = \"compatibility\" }]\n",
    );
    let v = json(&[
        "tokens",
        "--chain-file",
        chains.to_str().unwrap(),
        "--chain",
        "canonical,compatible",
        "--format",
        "json",
        "ＦＵＬＬ ﬁle Café",
    ]);
    let words = |i: usize| -> Vec<String> {
        v[i]["tokens"]
            .as_array()
            .unwrap()
            .iter()
            .map(|t| t["token"].as_str().unwrap().into())
            .collect()
    };
    assert_eq!(words(0), ["ｆｕｌｌ", "ﬁle", "cafe"]);
    assert_eq!(words(1), ["full", "file", "cafe"]);
}
