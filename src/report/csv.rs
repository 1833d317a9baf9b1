//! The CSV outputs of formats.md: `summary.csv`, `per-query.csv` and
//! `comparisons.csv`, with exactly the headers the contract names. Numbers are
//! written in the shortest form that parses back to the same f64; an absent
//! value (no interval, no test) is an empty field.

use crate::error::Result;
use crate::input::format_shortest;
use crate::report::model::Report;

/// Shortest form of an f64 that parses back to the same value (the same
/// writer as `runs/NAME.csv`: [`format_shortest`]).
pub fn number(x: f64) -> String {
    format_shortest(x)
}

fn opt(x: Option<f64>) -> String {
    x.map(number).unwrap_or_default()
}

fn to_string(write: impl FnOnce(&mut csv::Writer<Vec<u8>>) -> csv::Result<()>) -> Result<String> {
    let mut w =
        csv::WriterBuilder::new().terminator(csv::Terminator::Any(b'\n')).from_writer(Vec::new());
    write(&mut w).map_err(|e| crate::error::Error::usage(format!("writing CSV: {e}")))?;
    let bytes =
        w.into_inner().map_err(|e| crate::error::Error::usage(format!("writing CSV: {e}")))?;
    String::from_utf8(bytes).map_err(|e| crate::error::Error::usage(format!("writing CSV: {e}")))
}

/// `summary.csv`: `system,metric,mean,ci_low,ci_high,queries`.
pub fn summary_csv(report: &Report) -> Result<String> {
    to_string(|w| {
        w.write_record(["system", "metric", "mean", "ci_low", "ci_high", "queries"])?;
        for s in &report.summary {
            for m in &s.metrics {
                w.write_record([
                    s.system.as_str(),
                    &m.metric,
                    &number(m.mean),
                    &opt(m.ci_low),
                    &opt(m.ci_high),
                    &s.queries.to_string(),
                ])?;
            }
        }
        Ok(())
    })
}

/// `per-query.csv`: `system,query_id,metric,value`.
pub fn per_query_csv(report: &Report) -> Result<String> {
    to_string(|w| {
        w.write_record(["system", "query_id", "metric", "value"])?;
        for s in &report.per_query {
            for q in &s.queries {
                for (metric, value) in report.settings.metrics.iter().zip(&q.values) {
                    w.write_record([
                        s.system.as_str(),
                        q.query_id.as_str(),
                        metric,
                        &number(*value),
                    ])?;
                }
            }
        }
        Ok(())
    })
}

/// `comparisons.csv`:
/// `baseline,system,metric,delta,p_ttest,p_randomization,p_holm,wins,losses,ties`.
pub fn comparisons_csv(report: &Report) -> Result<String> {
    to_string(|w| {
        w.write_record([
            "baseline",
            "system",
            "metric",
            "delta",
            "p_ttest",
            "p_randomization",
            "p_holm",
            "wins",
            "losses",
            "ties",
        ])?;
        for c in &report.comparisons {
            w.write_record([
                c.baseline.as_str(),
                c.system.as_str(),
                &c.metric,
                &number(c.delta),
                &opt(c.p_ttest),
                &opt(c.p_randomization),
                &opt(c.p_holm),
                &c.wins.to_string(),
                &c.losses.to_string(),
                &c.ties.to_string(),
            ])?;
        }
        Ok(())
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_round_trip_in_shortest_form() {
        // Shortest round-trip representation (formats.md).
        for x in [0.1, 1.0 / 3.0, 0.0, 1.0, 2.5e-10, 0.6309297535714575, 1e-300] {
            let s = number(x);
            assert_eq!(s.parse::<f64>().unwrap(), x);
        }
        assert_eq!(number(0.1), "0.1");
        assert_eq!(number(1.0), "1");
        assert_eq!(number(0.6309297535714575), "0.6309297535714575");
        assert_eq!(number(2.5e-10), "2.5e-10");
    }
}
