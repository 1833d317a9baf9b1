//! The gate's JUnit XML, for CI systems that show test results: one test
//! suite, one test case per system × metric (class `postassay.gate.SYSTEM`,
//! name the metric key), a `failure` element with the message for each
//! regression, `skipped` for diagnostic metrics, one case named `present`
//! per baseline system missing from the current report (a `failure`, or
//! `skipped` when allowed), and in `system-out` the chains whose definition
//! changed and the warnings. It renders a [`GateOutcome`] and decides nothing.
//!
//! The layout is the de-facto JUnit XML one most CI systems read
//! (`testsuites` › `testsuite` › `testcase` › `failure`/`skipped`; common
//! practice, no single source).

use std::fmt::Write;

use crate::report::gate_markdown::{definition_change_lines, fixed, limit_text, signed};
use crate::report::model::gate::{Check, GateOutcome, Verdict};

/// Render the JUnit XML document.
pub fn render_junit(outcome: &GateOutcome) -> String {
    let tests = outcome.checks.len() + outcome.missing.len();
    let failures = outcome.regressions().count() + outcome.missing_failures().count();
    let skipped = outcome.checks.iter().filter(|c| c.verdict == Verdict::NotGated).count()
        + outcome.missing.iter().filter(|m| m.allowed).count();
    let counts = format!(r#"tests="{tests}" failures="{failures}" errors="0" skipped="{skipped}""#);
    let mut s = String::new();
    // `write!` into a String cannot fail.
    let _ = writeln!(s, r#"<?xml version="1.0" encoding="UTF-8"?>"#);
    let _ = writeln!(s, r#"<testsuites name="postassay gate" {counts}>"#);
    let _ = writeln!(s, r#"  <testsuite name="postassay gate" {counts}>"#);
    let _ = writeln!(s, "    <properties>");
    for (name, value) in [
        ("baseline", outcome.baseline_path.display().to_string()),
        ("current", outcome.current_path.display().to_string()),
        ("require_significance", outcome.require_significance.to_string()),
        ("alpha", outcome.alpha.to_string()),
    ] {
        let _ = writeln!(s, r#"      <property name="{name}" value="{}"/>"#, escape(&value));
    }
    let _ = writeln!(s, "    </properties>");
    for c in &outcome.checks {
        let _ = write!(
            s,
            r#"    <testcase classname="postassay.gate.{}" name="{}" time="0""#,
            escape(c.system.as_str()),
            escape(&c.metric)
        );
        match c.verdict {
            Verdict::Regression => {
                let message = failure_message(c);
                let _ = writeln!(s, ">");
                let _ = writeln!(
                    s,
                    r#"      <failure type="regression" message="{}">{}</failure>"#,
                    escape(&message),
                    escape_text(&details(c))
                );
                let _ = writeln!(s, "    </testcase>");
            }
            Verdict::NotGated => {
                let _ = writeln!(s, ">");
                let _ = writeln!(
                    s,
                    r#"      <skipped message="diagnostic of the judgments, not gated"/>"#
                );
                let _ = writeln!(s, "    </testcase>");
            }
            _ => {
                let _ = writeln!(s, "/>");
            }
        }
    }
    // A missing system is one test case of its own, named `present`.
    for m in &outcome.missing {
        let _ = writeln!(
            s,
            r#"    <testcase classname="postassay.gate.{}" name="present" time="0">"#,
            escape(m.system.as_str())
        );
        let _ = if m.allowed {
            writeln!(s, r#"      <skipped message="missing from the current report, allowed"/>"#)
        } else {
            writeln!(
                s,
                r#"      <failure type="missing" message="{} is in the baseline but missing from the current report"/>"#,
                escape(m.system.as_str())
            )
        };
        let _ = writeln!(s, "    </testcase>");
    }
    let mut notes: Vec<String> = definition_change_lines(outcome)
        .into_iter()
        .map(|l| format!("definition changed: {}", l.replace('`', "")))
        .collect();
    notes.extend(outcome.warnings.iter().map(|w| format!("warning: {w}")));
    if !notes.is_empty() {
        let text = notes;
        let _ = writeln!(s, "    <system-out>{}</system-out>", escape_text(&text.join("\n")));
    }
    let _ = writeln!(s, "  </testsuite>");
    let _ = writeln!(s, "</testsuites>");
    s
}

/// One line saying what dropped and by how much.
fn failure_message(c: &Check) -> String {
    format!(
        "{} {} dropped from {} to {} ({}), beyond the limit ({})",
        c.system,
        c.metric,
        fixed(c.baseline_mean),
        fixed(c.current_mean),
        signed(c.delta()),
        limit_text(&c.limit)
    )
}

/// The failure's body: the message plus the tests.
fn details(c: &Check) -> String {
    let p = |p: Option<f64>| p.map_or_else(|| "not computed".to_string(), |p| format!("{p:.4}"));
    format!(
        "{}\npaired queries: {}\np (randomization): {}\np (t-test): {}",
        failure_message(c),
        c.paired_queries,
        p(c.p_randomization),
        p(c.p_ttest)
    )
}

/// Escape element content: as [`escape`], but line ends stay literal (only
/// attribute values need them as references).
fn escape_text(text: &str) -> String {
    escape(text).replace("&#10;", "\n")
}

/// Escape text for an XML attribute or element. Characters XML 1.0 does not
/// allow at all (most C0 controls) become U+FFFD, since even a character
/// reference to them is ill-formed.
fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for ch in text.chars() {
        match ch {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            '\n' => out.push_str("&#10;"),
            '\t' | '\r' => out.push(ch),
            c if (c as u32) < 0x20 || c == '\u{FFFE}' || c == '\u{FFFF}' => out.push('\u{FFFD}'),
            c => out.push(c),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_markup_and_forbidden_characters() {
        // XML 1.0 (W3C Recommendation, 5th ed.), §2.2 Char and §2.4: '<' and
        // '&' must be escaped; C0 controls other than tab, LF, CR are not
        // allowed at all.
        assert_eq!(escape(r#"a<b&"c'>"#), "a&lt;b&amp;&quot;c&apos;&gt;");
        assert_eq!(escape("x\u{1}y\tz"), "x\u{FFFD}y\tz");
        assert_eq!(escape("l1\nl2"), "l1&#10;l2");
        assert_eq!(escape_text("l1\n<l2>"), "l1\n&lt;l2&gt;");
    }
}
