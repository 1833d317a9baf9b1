//! The gate's Markdown summary, printed on stdout to paste into a pull
//! request: a heading with the verdict, the rule applied, one table row per
//! system × metric, the warnings, and a one-line verdict at the end. It
//! renders a [`GateOutcome`] and decides nothing.

use std::fmt::Write;

use crate::report::model::gate::{Check, GateOutcome, Limit, Verdict};

/// Decimal places of means, deltas and limits in the table.
const PLACES: usize = 4;

/// Render the summary.
pub fn render_markdown(outcome: &GateOutcome) -> String {
    let mut s = String::new();
    let status = if outcome.passed() { "PASS" } else { "FAIL" };
    // `write!` into a String cannot fail.
    let _ = writeln!(s, "### postassay gate: {status}\n");
    let _ = writeln!(
        s,
        "Baseline {} vs current {}.",
        code(&outcome.baseline_path.display().to_string()),
        code(&outcome.current_path.display().to_string())
    );
    let rule = if outcome.require_significance {
        format!(
            "A drop beyond its limit fails only when the paired randomization test gives \
             p < {} (seed {}, {} permutations when more than 16 queries).",
            outcome.alpha, outcome.seed, outcome.permutations
        )
    } else {
        "A drop beyond its limit fails; a metric without a limit may not drop at all.".to_string()
    };
    let _ = writeln!(s, "{rule}\n");
    if !outcome.changed_definitions.is_empty() {
        let _ = writeln!(
            s,
            "Chains whose definition changed (their rows compare the baseline's chain with the \
             current one of the same name):\n"
        );
        for line in definition_change_lines(outcome) {
            let _ = writeln!(s, "- {line}");
        }
        s.push('\n');
    }
    let _ = writeln!(
        s,
        "| system | metric | baseline | current | Δ | threshold | p (randomization) | p (t-test) | verdict |"
    );
    let _ = writeln!(s, "|---|---|--:|--:|--:|---|--:|--:|---|");
    for c in &outcome.checks {
        let verdict = match c.verdict {
            Verdict::Regression => format!("**{}**", c.verdict.label()),
            v => v.label().to_string(),
        };
        let limit =
            if c.verdict == Verdict::NotGated { "–".to_string() } else { limit_text(&c.limit) };
        let _ = writeln!(
            s,
            "| {} | {} | {} | {} | {} | {} | {} | {} | {} |",
            cell(c.system.as_str()),
            cell(&c.metric),
            fixed(c.baseline_mean),
            fixed(c.current_mean),
            signed(c.delta()),
            limit,
            p_value(c.p_randomization),
            p_value(c.p_ttest),
            verdict
        );
    }
    if !outcome.missing.is_empty() {
        let _ = writeln!(s, "\nSystems of the baseline missing from the current report:\n");
        for m in &outcome.missing {
            let name = code(m.system.as_str());
            let _ = if m.allowed {
                writeln!(s, "- {name}: allowed by `--allow-missing`")
            } else {
                writeln!(
                    s,
                    "- {name}: **MISSING**, which fails the gate (a guarded system is gone); if \
                     removing it is intended, give `--allow-missing {}` and update the baseline",
                    m.system
                )
            };
        }
    }
    if !outcome.warnings.is_empty() {
        let _ = writeln!(s, "\nWarnings:\n");
        for w in &outcome.warnings {
            let _ = writeln!(s, "- {}", w.replace('\n', " "));
        }
    }
    let _ = writeln!(s, "\n{}", outcome.verdict_line());
    s
}

/// One line per changed part of a chain's definition: `` `stemmed` steps:
/// baseline `…`; current `…` ``.
pub(super) fn definition_change_lines(outcome: &GateOutcome) -> Vec<String> {
    outcome
        .changed_definitions
        .iter()
        .flat_map(|d| {
            d.parts.iter().map(move |(part, b, c)| {
                format!(
                    "{} {part}: baseline {}; current {}",
                    code(d.system.as_str()),
                    code(b),
                    code(c)
                )
            })
        })
        .collect()
}

/// A number with the table's fixed precision.
pub(crate) fn fixed(v: f64) -> String {
    format!("{v:.PLACES$}")
}

/// A difference with its sign always shown.
pub(super) fn signed(v: f64) -> String {
    format!("{v:+.PLACES$}")
}

/// A p-value, or a dash when no test could be run.
fn p_value(p: Option<f64>) -> String {
    p.map_or_else(|| "–".to_string(), |p| format!("{p:.4}"))
}

/// How a limit reads in the table: `drop ≤ 0.0200`, `drop ≤ 5%`, both, or
/// `no drop`.
pub(super) fn limit_text(limit: &Limit) -> String {
    let mut parts = Vec::new();
    if let Some(a) = limit.absolute {
        parts.push(format!("drop ≤ {}", fixed(a)));
    }
    if let Some(p) = limit.relative_percent {
        parts.push(format!("drop ≤ {p}%"));
    }
    if parts.is_empty() {
        "no drop".to_string()
    } else {
        parts.join(" and ")
    }
}

/// Text in a table cell: pipes escaped, line ends removed.
fn cell(text: &str) -> String {
    text.replace('|', "\\|").replace(['\n', '\r'], " ")
}

/// Text as inline code, with a fence long enough for any backticks inside.
pub(super) fn code(text: &str) -> String {
    let longest = text.split(|c| c != '`').map(str::len).max().unwrap_or(0);
    let fence = "`".repeat(longest + 1);
    let pad = if text.starts_with('`') || text.ends_with('`') { " " } else { "" };
    format!("{fence}{pad}{}{pad}{fence}", cell(text))
}

impl GateOutcome {
    /// The one-line verdict (Markdown), e.g. `**PASS**: no regression in 14
    /// checks.`
    pub fn verdict_line(&self) -> String {
        let gated = self.checks.iter().filter(|c| c.verdict != Verdict::NotGated).count();
        let checks = plural(gated, "check", "checks");
        let failed: Vec<&Check> = self.regressions().collect();
        let gone: Vec<String> = self.missing_failures().map(|m| code(m.system.as_str())).collect();
        let gone_text = (!gone.is_empty()).then(|| {
            format!(
                "{} of the baseline missing from the current report: {}",
                plural(gone.len(), "system", "systems"),
                gone.join(", ")
            )
        });
        if failed.is_empty() {
            return match gone_text {
                None => format!("**PASS**: no regression in {checks}."),
                Some(g) => format!("**FAIL**: {g}; no regression in {checks}."),
            };
        }
        const NAMED: usize = 5;
        let mut named: Vec<String> = failed
            .iter()
            .take(NAMED)
            .map(|c| {
                format!(
                    "{} {} {} ({})",
                    code(c.system.as_str()),
                    c.metric,
                    signed(c.delta()),
                    limit_text(&c.limit)
                )
            })
            .collect();
        if failed.len() > NAMED {
            named.push(format!("and {} more", failed.len() - NAMED));
        }
        format!(
            "**FAIL**: {}{} in {checks}: {}.",
            gone_text.map(|g| format!("{g}; ")).unwrap_or_default(),
            plural(failed.len(), "regression", "regressions"),
            named.join(", ")
        )
    }
}

fn plural(n: usize, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ids::ChainName;
    use std::path::PathBuf;

    fn check(system: &str, metric: &str, b: f64, c: f64, verdict: Verdict) -> Check {
        Check {
            system: ChainName::from(system),
            metric: metric.to_string(),
            baseline_mean: b,
            current_mean: c,
            limit: Limit { absolute: Some(0.01), relative_percent: None },
            paired_queries: 3,
            p_randomization: Some(0.25),
            p_ttest: None,
            verdict,
        }
    }

    fn outcome(checks: Vec<Check>, warnings: Vec<String>) -> GateOutcome {
        GateOutcome {
            baseline_path: PathBuf::from("base/report.json"),
            current_path: PathBuf::from("cur/report.json"),
            checks,
            missing: Vec::new(),
            changed_definitions: Vec::new(),
            warnings,
            require_significance: false,
            alpha: 0.05,
            seed: 42,
            permutations: 10_000,
        }
    }

    #[test]
    fn table_rows_and_verdict_line() {
        let o = outcome(
            vec![
                check("stemmed", "ndcg@10", 0.5, 0.48, Verdict::Regression),
                check("a|b", "map", 0.25, 0.25, Verdict::Pass),
            ],
            vec!["system x is in the baseline report only".to_string()],
        );
        let md = render_markdown(&o);
        assert!(md.starts_with("### postassay gate: FAIL\n"), "{md}");
        assert!(md.contains(
            "| stemmed | ndcg@10 | 0.5000 | 0.4800 | -0.0200 | drop ≤ 0.0100 | 0.2500 | – | **REGRESSION** |"
        ));
        assert!(md.contains("| a\\|b | map | 0.2500 | 0.2500 | +0.0000 |"), "{md}");
        assert!(md.contains("\n- system x is in the baseline report only\n"));
        let last = md.trim_end().lines().last().unwrap();
        assert_eq!(
            last,
            "**FAIL**: 1 regression in 2 checks: `stemmed` ndcg@10 -0.0200 (drop ≤ 0.0100)."
        );
    }

    #[test]
    fn passing_outcome_and_limits() {
        let o = outcome(vec![check("s", "map", 0.2, 0.3, Verdict::Pass)], vec![]);
        assert!(render_markdown(&o).trim_end().ends_with("**PASS**: no regression in 1 check."));
        assert_eq!(limit_text(&Limit::default()), "no drop");
        let both = Limit { absolute: Some(0.02), relative_percent: Some(2.5) };
        assert_eq!(limit_text(&both), "drop ≤ 0.0200 and drop ≤ 2.5%");
        assert_eq!(code("a`b"), "``a`b``");
    }
}
