//! `postassay vet` end to end: hand-computed figures on a tiny data
//! directory (`tests/fixtures/diagnose/data`), the usage and input errors,
//! the default frequency sources, the ten-language routed chain of
//! `chains/all_languages.toml`, and a full pass over the shared open data
//! when it is present (skipped otherwise, with the reason printed; the
//! figures it measured are printed too, see `report_line`).

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::time::Instant;

use crate::util::{fixture, postassay, report_line, root, skip, texts, write};

/// The English frequency list `vet` measures by default (src/cli/vet.rs).
const DEFAULT_FREQ_LIST: &str = "tests/fixtures/analysis/hashtag/wordfreq_en.tsv";

/// Rows of a CSV output as header → value maps.
fn rows(path: &Path) -> Vec<BTreeMap<String, String>> {
    let mut reader = csv::Reader::from_path(path).expect("output CSV exists");
    let header: Vec<String> = reader.headers().expect("header").iter().map(String::from).collect();
    reader
        .records()
        .map(|r| {
            let r = r.expect("valid CSV record");
            header.iter().cloned().zip(r.iter().map(String::from)).collect()
        })
        .collect()
}

fn find<'a>(
    rows: &'a [BTreeMap<String, String>],
    keys: &[(&str, &str)],
) -> &'a BTreeMap<String, String> {
    rows.iter()
        .find(|r| keys.iter().all(|(k, v)| r.get(*k).map(String::as_str) == Some(*v)))
        .unwrap_or_else(|| panic!("no row with {keys:?} in {rows:#?}"))
}

fn num(row: &BTreeMap<String, String>, key: &str) -> f64 {
    row[key].parse().unwrap_or_else(|_| panic!("{key} = {:?} is a number", row[key]))
}

fn tiny_run(extra: &[&str]) -> (tempfile::TempDir, PathBuf) {
    let tmp = tempfile::tempdir().expect("temp dir");
    let out = tmp.path().join("out");
    let data = fixture("diagnose/data");
    let freqs = fixture("diagnose/freqs.tsv");
    let mut args = vec![
        "vet",
        "--quiet",
        "--data",
        data.to_str().expect("UTF-8 path"),
        "--freq-list",
        freqs.to_str().expect("UTF-8 path"),
        "--out",
        out.to_str().expect("UTF-8 path"),
    ];
    args.extend_from_slice(extra);
    // Run in the temp dir: no demo corpus there, so the list is the only source.
    let res = postassay(tmp.path(), &args);
    let (stdout, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "stderr: {stderr}");
    assert!(stdout.is_empty(), "with --out nothing goes to stdout: {stdout}");
    (tmp, out)
}

#[test]
fn conflation_figures_on_a_tiny_lemma_list() {
    let (_tmp, out) = tiny_run(&["--sections", "conflation"]);
    let conflation = rows(&out.join("diagnostics-conflation.csv"));
    // tests/fixtures/diagnose/data/ud/en.lemmas.tsv, by hand: `saw` has two
    // lemmas (left out), `plenty` has lemma `_` (no lemma). Words W = 8:
    //   run: runs, running, ran, Run   cat: cats, cat
    //   relation: relations            relatively: relatively
    // GDMT = ½·4·3 + ½·2·1 = 7;  GDNT = ½(8² − (16 + 4 + 1 + 1)) = 21.
    let standard = find(&conflation, &[("chain", "standard")]);
    assert_eq!(standard["words"], "8");
    assert_eq!(standard["ambiguous_forms"], "1");
    assert_eq!(standard["without_lemma"], "1");
    // standard (lower-casing only): runs, running, ran, run, cats, cat are
    // six different terms: every desired merge is missed (GUMT = 6 + 1 = 7,
    // UI = 1), nothing is merged wrongly (OI = 0). Terms per group (4 + 2)/2 = 3.
    assert_eq!((standard["gdmt"].as_str(), standard["gumt"].as_str()), ("7", "7"));
    assert_eq!((standard["gdnt"].as_str(), standard["gwmt"].as_str()), ("21", "0"));
    assert_eq!(num(standard, "ui"), 1.0);
    assert_eq!(num(standard, "mean_stems_per_group"), 3.0);
    // stemmed, English Snowball: runs, running, Run → run and ran → ran
    // (steps 1a/1b of the English algorithm, from memory); cats, cat → cat;
    // relations → relat (../shared/data/snowball/head/english.tsv) and
    // relatively → relat (../shared/data/snowball/v2018/english.tsv).
    // GUMT: run {run: 3, ran: 1} → ½(16 − 10) = 3; UI = 3/7.
    // GWMT: relat {relation, relatively} → 1; OI = 1/21; SW = (1/21)/(3/7) = 1/9.
    let stemmed = find(&conflation, &[("chain", "stemmed")]);
    assert_eq!(stemmed["analysis"], "stemmed (stem(en, current))");
    assert_eq!((stemmed["gumt"].as_str(), stemmed["gwmt"].as_str()), ("3", "1"));
    approx::assert_relative_eq!(num(stemmed, "ui"), 3.0 / 7.0);
    approx::assert_relative_eq!(num(stemmed, "oi"), 1.0 / 21.0);
    approx::assert_relative_eq!(num(stemmed, "sw"), 1.0 / 9.0);
    approx::assert_relative_eq!(num(stemmed, "fully_conflated"), 0.5);
    // The routed chain's English branch stems like `stemmed`.
    let routed = find(&conflation, &[("chain", "routed")]);
    assert_eq!(routed["analysis"], "routed (text_en)");
    assert_eq!(routed["ui"], stemmed["ui"]);

    let md = std::fs::read_to_string(out.join("diagnostics.md")).expect("markdown written");
    assert!(
        md.contains("- merged `relat` (2 lemmas): relation: relations; relatively: relatively"),
        "{md}"
    );
    assert!(
        md.contains("- split `run` (4 words, 2 terms): `run` Run, running, runs; `ran` ran"),
        "{md}"
    );
    assert!(!md.contains("## Routing"), "only the conflation section was asked for");
}

#[test]
fn routing_and_segmentation_on_tiny_sets() {
    let (_tmp, out) = tiny_run(&[]);
    let routing = rows(&out.join("diagnostics-routing.csv"));
    // The built-in `routed` runs with its own detector, lingua, and with
    // whatlang: the same rows for each.
    for detector in ["lingua", "whatlang"] {
        // data/ud/en.sentences.tsv: 7, 40, 99 and 173 chars, one per bucket.
        for (bucket, n) in
            [("all", "4"), ("<=20", "1"), ("21-60", "1"), ("61-140", "1"), (">140", "1")]
        {
            let row = find(&routing, &[("detector", detector), ("set", "en"), ("bucket", bucket)]);
            assert_eq!(row["sentences"], n, "{detector} {bucket}");
        }
        // The three longer sentences are plain English and reach text_en
        // (measured with both detectors). "Thanks!" is too short to matter
        // here either way.
        for bucket in ["21-60", "61-140", ">140"] {
            let keys = [("detector", detector), ("set", "en"), ("bucket", bucket)];
            assert_eq!(find(&routing, &keys)["correct"], "1", "{detector} {bucket}");
        }
        // The detector's cost is measured once per set, on the `all` row.
        let all = find(&routing, &[("detector", detector), ("set", "en"), ("bucket", "all")]);
        assert!(num(all, "micros_per_sentence") > 0.0, "{detector}");
        let short = find(&routing, &[("detector", detector), ("set", "en"), ("bucket", "<=20")]);
        assert_eq!(short["micros_per_sentence"], "", "{detector}");
        // Russian is not among the routed chain's languages: not routable,
        // never correct, and (the rule for other languages) sent to the
        // fallback field.
        let ru = find(&routing, &[("detector", detector), ("set", "ru"), ("bucket", "all")]);
        assert_eq!((ru["collection"].as_str(), ru["routable"].as_str()), ("ud_pud", "no"));
        assert_eq!(
            (ru["sentences"].as_str(), ru["correct"].as_str(), ru["to_fallback"].as_str()),
            ("2", "0", "2")
        );
        let confusion = rows(&out.join("diagnostics-confusion.csv"));
        let ru_rows: Vec<(&str, &str)> = confusion
            .iter()
            .filter(|r| r["set"] == "ru" && r["detector"] == detector)
            .map(|r| (r["routed_to"].as_str(), r["sentences"].as_str()))
            .collect();
        assert_eq!(ru_rows, [("other", "2")], "{detector}");
    }

    let seg = rows(&out.join("diagnostics-segmentation.csv"));
    assert_eq!(seg.len(), 1, "one chain with a hashtags step, one gold set, one source");
    let row = &seg[0];
    assert_eq!((row["chain"].as_str(), row["gold"].as_str()), ("hashtag", "tiny"));
    assert!(row["source"].starts_with("list:") && row["source"].ends_with("freqs.tsv"));
    // Hand-computed with freqs.tsv (a, what, dream, harbour, market):
    //   whatadream → what a dream (2 boundaries, both right, exact)
    //   HarbourMarket → Harbour Market (case boundary, exact)
    //   runit → runit (unknown, kept whole; gold "run it": 1 boundary missed)
    // exact 2/3; P = 3/3; R = 3/4; F1 = 2·1·0.75/1.75 = 6/7.
    assert_eq!((row["tags"].as_str(), row["exact"].as_str()), ("3", "2"));
    approx::assert_relative_eq!(num(row, "exact_accuracy"), 2.0 / 3.0);
    approx::assert_relative_eq!(num(row, "precision"), 1.0);
    approx::assert_relative_eq!(num(row, "recall"), 0.75);
    approx::assert_relative_eq!(num(row, "f1"), 6.0 / 7.0);

    let json: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(out.join("diagnostics.json")).expect("json written"),
    )
    .expect("valid JSON");
    assert_eq!(json["command"], "vet");
    let roles: Vec<&str> = json["inputs"]
        .as_array()
        .expect("inputs")
        .iter()
        .filter_map(|i| i["role"].as_str())
        .collect();
    assert_eq!(
        roles,
        ["lemmas:en", "sentences:ud/en", "sentences:ud_pud/ru", "gold:tiny", "freq-list"]
    );
    for input in json["inputs"].as_array().expect("inputs") {
        assert_eq!(input["sha256"].as_str().map(str::len), Some(64));
    }
}

#[test]
fn markdown_goes_to_stdout_without_out() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let data = fixture("diagnose/data");
    let res = postassay(
        tmp.path(),
        &[
            "vet",
            "--data",
            data.to_str().expect("UTF-8"),
            "--chains",
            "standard",
            "--sections",
            "conflation",
        ],
    );
    let (stdout, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    assert!(stdout.starts_with("# Chain diagnostics"), "{stdout}");
    assert!(
        stdout.contains("| en | standard | standard | 8 | 2 | 1.0000 | 0 | 0 | 0.0% | 3.00 |"),
        "{stdout}"
    );
    assert!(stderr.contains("postassay: conflation: en"), "progress on stderr: {stderr}");
    assert_eq!(std::fs::read_dir(tmp.path()).expect("dir").count(), 0, "nothing written");
}

#[test]
fn without_data_it_says_what_it_needs() {
    // Run two levels down in a temp dir, so ../shared/data does not exist.
    let tmp = tempfile::tempdir().expect("temp dir");
    let cwd = tmp.path().join("a");
    std::fs::create_dir_all(&cwd).expect("dir");
    let res = postassay(&cwd, &["vet"]);
    let (stdout, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2));
    assert!(stdout.is_empty());
    assert!(stderr.contains("no open data: give --data DIR"), "{stderr}");
    assert!(stderr.contains("ud/LANG.lemmas.tsv"), "{stderr}");
    // A directory without any data file: exit 2, naming the expected layout.
    let res = postassay(&cwd, &["vet", "--data", "."]);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2));
    assert!(stderr.contains("nothing to diagnose in ."), "{stderr}");
    let res = postassay(&cwd, &["vet", "--data", ".", "--sections", "stems"]);
    assert_eq!(res.status.code(), Some(2));
    assert!(texts(&res).1.contains("unknown section \"stems\""));
}

#[test]
fn a_bad_gold_line_is_named_and_nothing_is_written() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let data = tmp.path().join("data");
    std::fs::create_dir_all(data.join("hashtags")).expect("dir");
    std::fs::write(data.join("hashtags/bad.tsv"), "runit\trun it\nnogold\n").expect("file");
    let out = tmp.path().join("out");
    let res = postassay(
        tmp.path(),
        &["vet", "--quiet", "--data", "data", "--out", out.to_str().expect("UTF-8")],
    );
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2));
    assert!(stderr.contains("bad.tsv:2: expected hashtag<TAB>gold"), "{stderr}");
    assert!(!out.exists(), "nothing written into --out on failure");
}

/// Seven gold tags none of which can be split without a word table (no case,
/// digit or underscore boundary), so each is a miss when no frequency source
/// is found (the run happens in a temp dir: no demo corpus, no English list).
const SEVEN_MISSES: &str = "abcd\tab cd\nefgh\tef gh\nijkl\tij kl\nmnop\tmn op\n\
                            qrst\tqr st\nuvwx\tuv wx\nyzab\tyz ab\n";

/// `vet` of the `hashtag` chain on a temp data dir holding one gold set.
fn vet_gold(gold: &str, extra: &[&str]) -> (tempfile::TempDir, std::process::Output) {
    let tmp = tempfile::tempdir().expect("temp dir");
    std::fs::create_dir_all(tmp.path().join("data/hashtags")).expect("dir");
    write(&tmp.path().join("data/hashtags"), "g.tsv", gold);
    let mut args = vec!["vet", "--data", "data", "--chains", "hashtag"];
    args.extend_from_slice(extra);
    let res = postassay(tmp.path(), &args);
    (tmp, res)
}

#[test]
fn top_governs_the_listed_misses_too() {
    for (top, listed) in [("10", 7), ("6", 6), ("0", 0)] {
        let (tmp, res) = vet_gold(SEVEN_MISSES, &["--quiet", "--top", top, "--out", "out"]);
        assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
        let json: serde_json::Value = serde_json::from_str(
            &std::fs::read_to_string(tmp.path().join("out/diagnostics.json")).expect("written"),
        )
        .expect("valid JSON");
        let seg = &json["segmentation"][0]["figures"];
        // Hand-counted: 7 tags, none split, so 7 misses; --top N lists min(N, 7).
        assert_eq!((seg["tags"].as_u64(), seg["exact"].as_u64()), (Some(7), Some(0)));
        let errors = seg["errors"].as_array().expect("errors");
        assert_eq!(errors.len(), listed, "--top {top}");
        if listed > 0 {
            assert_eq!(errors[0]["tag"], "abcd", "file order");
        }
    }
}

#[test]
fn an_empty_tag_is_refused_with_its_line() {
    let (tmp, res) = vet_gold("runit\trun it\n#\tx\n", &["--out", "out"]);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{stderr}");
    assert!(
        stderr
            .contains("g.tsv:2: column 1 (hashtag): expected a tag after the '#', found \"#\\tx\""),
        "{stderr}"
    );
    assert!(!tmp.path().join("out").exists(), "nothing written");
}

#[test]
fn langs_on_a_directory_without_language_data_says_what_it_expects() {
    let (_tmp, res) = vet_gold("runit\trun it\n", &["--langs", "en"]);
    let (stdout, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{stderr}");
    assert!(stdout.is_empty());
    assert!(
        stderr.contains(
            "--langs: no language data in data: expected data/ud/LANG.lemmas.tsv, \
             data/ud/LANG.sentences.tsv, data/ud_pud/LANG.sentences.tsv or \
             data/ud_nospace/LANG.words.tsv"
        ),
        "{stderr}"
    );
    assert!(!stderr.contains("available: \n"), "{stderr}");
}

#[test]
fn a_chain_file_ending_after_equals_says_what_was_expected() {
    let tmp = tempfile::tempdir().expect("temp dir");
    // No line end after `name=`: the TOML parser itself gives no message here.
    write(tmp.path(), "ch.toml", "[[chain]]\nname=");
    let res = postassay(tmp.path(), &["vet", "--data", ".", "--chain-file", "ch.toml"]);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains("ch.toml:2: expected a value after `name =` (a quoted string"),
        "{stderr}"
    );
    assert!(stderr.trim_end().ends_with("found the end of the file"), "{stderr}");
}

#[test]
fn the_english_list_is_a_default_source_from_the_repository_root() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let out = tmp.path().join("out");
    let data = fixture("diagnose/data");
    let res = postassay(
        &root(),
        &[
            "vet",
            "--quiet",
            "--data",
            data.to_str().expect("UTF-8"),
            "--chains",
            "hashtag",
            "--sections",
            "segmentation",
            "--out",
            out.to_str().expect("UTF-8"),
        ],
    );
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    let seg = rows(&out.join("diagnostics-segmentation.csv"));
    let sources: Vec<&str> = seg.iter().map(|r| r["source"].as_str()).collect();
    let list = format!("list:{DEFAULT_FREQ_LIST}");
    assert_eq!(sources, ["corpus:corpora/demo/posts.jsonl", list.as_str()]);
    // 29,244 distinct words: tests/fixtures/analysis/hashtag/README.md.
    assert_eq!(seg[1]["source_words"], "29244");
    let md = std::fs::read_to_string(out.join("diagnostics.md")).expect("written");
    assert!(!md.contains("was not measured"), "{md}");
}

#[test]
fn without_the_english_list_a_note_names_its_path() {
    // A temp dir: neither the demo corpus nor the English list is there.
    let (tmp, res) = vet_gold("runit\trun it\n", &["--out", "out"]);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    let note = format!(
        "segmentation: the English word-frequency list was not measured: {DEFAULT_FREQ_LIST} \
         is not here (run from the repository root, or give --freq-list FILE)"
    );
    assert!(stderr.contains(&format!("postassay: note: {note}")), "{stderr}");
    let md = std::fs::read_to_string(tmp.path().join("out/diagnostics.md")).expect("written");
    assert!(md.contains(&format!("- {note}")), "{md}");
    // An explicit --freq-list replaces the default: no note.
    write(tmp.path(), "f.tsv", "run\t5\nit\t3\n");
    let res = postassay(
        tmp.path(),
        &["vet", "--data", "data", "--chains", "hashtag", "--freq-list", "f.tsv"],
    );
    let (stdout, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    assert!(!stderr.contains("was not measured") && !stdout.contains("was not measured"));
}

#[test]
fn the_all_languages_chain_routes_russian() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let out = tmp.path().join("out");
    let data = fixture("diagnose/data");
    let res = postassay(
        &root(),
        &[
            "vet",
            "--quiet",
            "--chain-file",
            "chains/all_languages.toml",
            "--chains",
            "routed,routed_all",
            "--sections",
            "routing",
            "--data",
            data.to_str().expect("UTF-8"),
            "--out",
            out.to_str().expect("UTF-8"),
        ],
    );
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    let routing = rows(&out.join("diagnostics-routing.csv"));
    // chains/all_languages.toml lists ru; chains/builtin.toml's `routed` does not.
    let ru = |chain| {
        find(&routing, &[("chain", chain), ("set", "ru"), ("bucket", "all")])["routable"].clone()
    };
    assert_eq!((ru("routed_all"), ru("routed")), ("yes".to_string(), "no".to_string()));
    // Measured (whatlang decides): both Russian sentences of the fixture reach text_ru.
    let all = find(&routing, &[("chain", "routed_all"), ("set", "ru"), ("bucket", "all")]);
    assert_eq!((all["sentences"].as_str(), all["correct"].as_str()), ("2", "2"));
}

/// The shared open data, when present.
fn shared_data() -> Option<PathBuf> {
    let dir = root().join("../shared/data");
    dir.join("ud").is_dir().then_some(dir)
}

/// The README's Diagnostics command (run from the repository root): the
/// built-in chains (`routed` also runs with whatlang, the other detector);
/// the default English frequency list.
const README_VET: [&str; 3] = ["vet", "--chains", "standard,stemmed,hashtag,routed"];

#[test]
fn full_pass_over_the_shared_data() {
    let Some(data) = shared_data() else {
        skip("../shared/data (the shared open data) is not present");
        return;
    };
    if !root().join(DEFAULT_FREQ_LIST).is_file() {
        skip(&format!("{DEFAULT_FREQ_LIST} is not present"));
        return;
    }
    let tmp = tempfile::tempdir().expect("temp dir");
    let out = tmp.path().join("out");
    let mut args = README_VET.to_vec();
    args.extend(["--quiet", "--data", data.to_str().expect("UTF-8"), "--out"]);
    args.push(out.to_str().expect("UTF-8"));
    let started = Instant::now();
    let res = postassay(&root(), &args);
    let seconds = started.elapsed().as_secs_f64();
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    // Reported, not asserted: the speed target is measured by benches/vet.rs.
    report_line(&format!("vet over the shared data: {seconds:.1} s"));

    let conflation = rows(&out.join("diagnostics-conflation.csv"));
    let routing = rows(&out.join("diagnostics-routing.csv"));
    let routed = ["en", "de", "fr", "es", "it-pud", "pt", "nl"];
    for set in ["en", "de", "fr", "es", "it-pud", "pt", "nl", "sv", "ru", "tr"] {
        let standard = find(&conflation, &[("set", set), ("chain", "standard")]);
        let stemmed = find(&conflation, &[("set", set), ("chain", "stemmed")]);
        report_line(&format!(
            "{set:>6}: UI {:.4} → {:.4}, OI {:.2e} → {:.2e}",
            num(standard, "ui"),
            num(stemmed, "ui"),
            num(standard, "oi"),
            num(stemmed, "oi"),
        ));
        // Measured properties: each language's own stemmer conflates more
        // (lower UI) at the price of more wrong merges (higher OI).
        assert!(num(stemmed, "ui") < num(standard, "ui"), "{set}");
        assert!(num(stemmed, "oi") > num(standard, "oi"), "{set}");
        for detector in ["whatlang", "lingua"] {
            let keys = [("chain", "routed"), ("detector", detector), ("collection", "ud")];
            let row = |b: &str| {
                let mut k = keys.to_vec();
                k.extend([("set", set), ("bucket", b)]);
                find(&routing, &k)
            };
            let listed = routed.contains(&set);
            // Routed right: the own field for a routed language, the
            // fallback for the others.
            let right = |r: &BTreeMap<String, String>| {
                let n: f64 = num(r, "sentences");
                let k: f64 = num(r, if listed { "correct" } else { "to_fallback" });
                (k, n)
            };
            let cell = |b: &str| {
                let (k, n) = right(row(b));
                if n > 0.0 {
                    format!("{:.1}% ({n})", 100.0 * k / n)
                } else {
                    "– (0)".to_string()
                }
            };
            report_line(&format!(
                "        {detector:>8} {}: {} | {} | {} | {} | {} | {:.0} µs/sentence",
                if listed { "routed" } else { "to fallback" },
                cell("all"),
                cell("<=20"),
                cell("21-60"),
                cell("61-140"),
                cell(">140"),
                num(row("all"), "micros_per_sentence"),
            ));
            assert_eq!(row("all")["routable"], if listed { "yes" } else { "no" }, "{set}");
            if !listed {
                // Issue 11's floor: unrouted languages reach the fallback
                // ≥ 95% of the time above 60 characters.
                let (k1, n1) = right(row("61-140"));
                let (k2, n2) = right(row(">140"));
                let share = (k1 + k2) / (n1 + n2);
                assert!(share >= 0.95, "{detector} {set}: {share:.4}");
            }
        }
    }
    let seg = rows(&out.join("diagnostics-segmentation.csv"));
    for row in &seg {
        report_line(&format!(
            "{} · {}: exact {:.3}, F1 {:.3}",
            row["gold"],
            row["source"],
            num(row, "exact_accuracy"),
            num(row, "f1")
        ));
    }
    // Both default sources are measured on every gold set, and (measured)
    // the English frequency list beats the demo corpus on each.
    let list_label = format!("list:{DEFAULT_FREQ_LIST}");
    let with_list: Vec<_> = seg.iter().filter(|r| r["source"] == list_label).collect();
    assert_eq!(with_list.len(), 5, "five gold sets in ../shared/data/hashtags (its README)");
    for row in with_list {
        let corpus =
            find(&seg, &[("gold", &row["gold"]), ("source", "corpus:corpora/demo/posts.jsonl")]);
        assert!(num(row, "exact_accuracy") > num(corpus, "exact_accuracy"), "{}", row["gold"]);
    }
}

/// `--freq-builtin` measures the word lists built into the binary, each as
/// its own source (`lists:LANG`, `lists:all` for the merged one), once per
/// name; an unknown name exits 2 listing the accepted ones. Three invented
/// tags (English, French, German): the English list splits only the English
/// one, the French list only the French one, the merged list all three.
#[test]
fn built_in_lists_are_sources_of_their_own() {
    let gold = "rentréescolaire\trentrée scolaire\nharbourmarketday\tharbour market day\n\
                gutenmorgen\tguten morgen\n";
    let (tmp, res) = vet_gold(gold, &["--quiet", "--freq-builtin", "en,all,fr,en", "--out", "out"]);
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    let seg = rows(&tmp.path().join("out/diagnostics-segmentation.csv"));
    let got: Vec<(&str, &str, &str)> = seg
        .iter()
        .map(|r| (r["source"].as_str(), r["source_words"].as_str(), r["exact"].as_str()))
        .collect();
    // Word counts: the lists' distinct words (tests/fixtures/analysis/hashtag/README.md);
    // the merged list holds the union of the seven.
    assert_eq!(
        got,
        [("lists:en", "29244", "1"), ("lists:all", "156858", "3"), ("lists:fr", "29773", "1")]
    );
    let (_tmp, res) = vet_gold(gold, &["--freq-builtin", "en,sv"]);
    assert_eq!(res.status.code(), Some(2));
    assert!(
        texts(&res).1.contains(
            "--freq-builtin: no built-in word list \"sv\"; accepted: de, en, es, fr, it, nl, pt, all"
        ),
        "{}",
        texts(&res).1
    );
}

/// Word segmentation of Thai, Chinese and Japanese (`ud_nospace/`, UD
/// Thai-PUD, Chinese-GSD and Japanese-GSD test sets, read in place) per
/// `unspaced` setting: every sentence aligns with its gold words, and the
/// floors are the figures measured with icu_segmenter 2.4 (README,
/// Diagnostics), rounded down.
#[test]
fn unspaced_word_boundaries_on_the_shared_data() {
    let Some(data) = shared_data().filter(|d| d.join("ud_nospace").is_dir()) else {
        report_line("skipped: ../shared/data/ud_nospace (the shared open data) is not present");
        return;
    };
    let tmp = tempfile::tempdir().expect("temp dir");
    let out = tmp.path().join("out");
    let res = postassay(
        &root(),
        &[
            "vet",
            "--quiet",
            "--chain-file",
            "chains/unspaced.toml",
            "--chains",
            "standard,words_dictionary,words_bigrams",
            "--sections",
            "unspaced",
            "--data",
            data.to_str().expect("UTF-8"),
            "--out",
            out.to_str().expect("UTF-8"),
        ],
    );
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    let table = rows(&out.join("diagnostics-unspaced.csv"));
    assert_eq!(table.len(), 12, "three sets × four settings");
    for row in &table {
        report_line(&format!(
            "{} {:>10}: P {:.3} R {:.3} F1 {:.3}, words found {:.3}",
            row["set"],
            row["setting"],
            num(row, "precision"),
            num(row, "recall"),
            num(row, "f1"),
            num(row, "word_recall")
        ));
    }
    let get = |set: &str, setting: &str| find(&table, &[("set", set), ("setting", setting)]);
    // Sentences per file (its line count) and none unaligned.
    for (set, n) in [("th", "1000"), ("zh", "500"), ("ja", "543")] {
        assert_eq!(
            (
                get(set, "characters")["sentences"].as_str(),
                get(set, "characters")["unaligned"].as_str()
            ),
            (n, "0")
        );
    }
    // The chains using each setting are named.
    assert_eq!(get("zh", "dictionary")["chains"], "words_dictionary");
    assert_eq!(get("zh", "characters")["chains"], "standard");
    assert_eq!(get("zh", "model")["chains"], "");
    // Measured floors.
    assert!(num(get("th", "characters"), "f1") < 0.45);
    assert!(num(get("th", "dictionary"), "f1") >= 0.86);
    assert!(num(get("th", "model"), "f1") >= 0.91);
    assert!(num(get("zh", "dictionary"), "f1") >= 0.90);
    assert!(num(get("ja", "dictionary"), "f1") >= 0.89);
    // Pairs find more Chinese gold words than single characters do.
    assert!(num(get("zh", "bigrams"), "word_recall") >= 0.55);
    assert!(num(get("zh", "characters"), "word_recall") < 0.48);
    let md = std::fs::read_to_string(out.join("diagnostics.md")).expect("markdown written");
    assert!(md.contains("## Scripts written without spaces"), "{md}");
}
