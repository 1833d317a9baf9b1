//! Test helpers shared by the analysis module's tests (compiled only for
//! tests): collect a chain's tokens and compare them with expectations, read
//! the committed fixtures under `tests/fixtures/analysis/`, and report why a
//! test that needs the shared open data skipped ([`skip`], shared by every
//! test of the library).

pub use crate::test_skips::{report_line, skip};

use tantivy::tokenizer::{TextAnalyzer, Token};

/// Every token `analyzer` produces for `input`.
pub fn collect_tokens(analyzer: &mut TextAnalyzer, input: &str) -> Vec<Token> {
    let mut tokens = Vec::new();
    let mut stream = analyzer.token_stream(input);
    stream.process(&mut |t: &Token| tokens.push(t.clone()));
    tokens
}

/// Assert that `analyzer` turns `input` into exactly `expected`, given as
/// `(text, position, offset_from, offset_to)`; also checks that every offset
/// range is a valid byte range of `input`.
#[track_caller]
pub fn assert_tokens(
    analyzer: &mut TextAnalyzer,
    input: &str,
    expected: &[(&str, usize, usize, usize)],
) {
    let tokens = collect_tokens(analyzer, input);
    let actual: Vec<(&str, usize, usize, usize)> =
        tokens.iter().map(|t| (t.text.as_str(), t.position, t.offset_from, t.offset_to)).collect();
    for t in &tokens {
        assert!(input.get(t.offset_from..t.offset_to).is_some(), "bad offsets in {t:?}");
    }
    assert_eq!(actual, expected, "tokens of {input:?}");
}

/// The texts of the tokens `analyzer` produces for `input`.
pub fn texts(analyzer: &mut TextAnalyzer, input: &str) -> Vec<String> {
    collect_tokens(analyzer, input).into_iter().map(|t| t.text).collect()
}

/// Path of a committed fixture under `tests/fixtures/analysis/`.
pub fn fixture_path(name: &str) -> std::path::PathBuf {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/analysis").join(name)
}

/// The lines of the committed WordBreakTest.txt excerpt, each as the text and
/// its expected segments.
pub fn word_break_test_lines() -> Vec<(String, Vec<String>)> {
    let text = std::fs::read_to_string(fixture_path("word_break_test_17.txt"))
        .expect("the WordBreakTest excerpt is committed");
    let mut lines = Vec::new();
    for line in text.lines() {
        if line.starts_with('#') || line.trim().is_empty() {
            continue;
        }
        let mut whole = String::new();
        let mut segments = Vec::new();
        let mut current = String::new();
        for item in line.split_whitespace() {
            match item {
                "÷" => {
                    if !current.is_empty() {
                        segments.push(std::mem::take(&mut current));
                    }
                }
                "×" => {}
                hex => {
                    let cp = u32::from_str_radix(hex, 16).expect("hex code point");
                    let c = char::from_u32(cp).expect("scalar value");
                    current.push(c);
                    whole.push(c);
                }
            }
        }
        lines.push((whole, segments));
    }
    lines
}

/// The Snowball vocabulary `word<TAB>stem` pairs of the open data set
/// `../shared/data/snowball/<generation>/<language>.tsv`, or `None` (with a
/// printed reason) when the data is absent.
pub fn snowball_vocabulary(generation: &str, language: &str) -> Option<Vec<(String, String)>> {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../shared/data/snowball")
        .join(generation)
        .join(format!("{language}.tsv"));
    let text = match std::fs::read_to_string(&path) {
        Ok(text) => text,
        Err(err) => {
            skip(&format!("{} unreadable ({err})", path.display()));
            return None;
        }
    };
    Some(
        text.lines()
            .filter_map(|l| l.split_once('\t'))
            .map(|(w, s)| (w.to_string(), s.to_string()))
            .collect(),
    )
}
