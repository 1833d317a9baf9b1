//! Metric keys: parsing `--metrics` lists such as `ndcg@10,map,p@10` and the
//! canonical names every output uses (eval stage: input → analysis → index →
//! search → **eval** → stats → report).

use std::collections::BTreeSet;
use std::fmt;
use std::str::FromStr;

use crate::error::{Error, Result};

/// The metric list used when `--metrics` is not given (formats.md).
pub const DEFAULT_METRICS: &str = "ndcg@10,map,p@10,recall@100,mrr,err@10,bpref,unjudged@10";

/// The accepted metric keys, for help and error messages.
pub fn metrics_help() -> &'static str {
    "ndcg@k, map, p@k, recall@k, mrr, err@k, bpref, unjudged@k (k an integer >= 1)"
}

/// Which metric, with its cutoff k where it has one. Build a [`Metric`] from
/// it with [`Metric::new`], which checks k ≥ 1.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum MetricKind {
    /// `ndcg@k`: normalised discounted cumulative gain at k.
    Ndcg(usize),
    /// `map`: average precision (its mean over queries is MAP).
    Map,
    /// `p@k`: precision at k.
    Precision(usize),
    /// `recall@k`: recall at k.
    Recall(usize),
    /// `mrr`: reciprocal rank (its mean over queries is MRR).
    Mrr,
    /// `err@k`: expected reciprocal rank at k.
    Err(usize),
    /// `bpref`: binary preference.
    Bpref,
    /// `unjudged@k`: share of unjudged documents in the top k (a diagnostic).
    Unjudged(usize),
}

impl MetricKind {
    /// The cutoff k, for the metrics that have one.
    pub fn cutoff(self) -> Option<usize> {
        match self {
            MetricKind::Ndcg(k)
            | MetricKind::Precision(k)
            | MetricKind::Recall(k)
            | MetricKind::Err(k)
            | MetricKind::Unjudged(k) => Some(k),
            MetricKind::Map | MetricKind::Mrr | MetricKind::Bpref => None,
        }
    }

    /// The key without its cutoff: `ndcg`, `map`, `p`, `recall`, `mrr`,
    /// `err`, `bpref`, `unjudged`.
    pub fn name(self) -> &'static str {
        match self {
            MetricKind::Ndcg(_) => "ndcg",
            MetricKind::Map => "map",
            MetricKind::Precision(_) => "p",
            MetricKind::Recall(_) => "recall",
            MetricKind::Mrr => "mrr",
            MetricKind::Err(_) => "err",
            MetricKind::Bpref => "bpref",
            MetricKind::Unjudged(_) => "unjudged",
        }
    }
}

/// A validated metric: a [`MetricKind`] whose cutoff, if any, is at least 1.
///
/// Parses from and prints as its key (`"ndcg@10".parse::<Metric>()`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Metric {
    kind: MetricKind,
}

impl Metric {
    /// Check a kind: a cutoff of 0 is a usage error.
    pub fn new(kind: MetricKind) -> Result<Metric> {
        if kind.cutoff() == Some(0) {
            return Err(Error::usage(format!(
                "metric {}@0: the cutoff k must be an integer >= 1",
                kind.name()
            )));
        }
        Ok(Metric { kind })
    }

    /// Which metric this is.
    pub fn kind(&self) -> MetricKind {
        self.kind
    }

    /// The canonical key used in every output, e.g. `ndcg@10` or `map`.
    pub fn key(&self) -> String {
        self.to_string()
    }

    /// True for `unjudged@k`, which measures how complete the judgments are
    /// for a system rather than how well it ranks: neither higher nor lower
    /// is "better" for ranking quality.
    pub fn is_diagnostic(&self) -> bool {
        matches!(self.kind, MetricKind::Unjudged(_))
    }
}

impl fmt::Display for Metric {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.kind.cutoff() {
            Some(k) => write!(f, "{}@{}", self.kind.name(), k),
            None => f.write_str(self.kind.name()),
        }
    }
}

impl FromStr for Metric {
    type Err = Error;

    /// Parse one key. Keys are lower case; k is written in decimal digits
    /// (leading zeros allowed: `p@05` is `p@5`).
    fn from_str(s: &str) -> Result<Metric> {
        let unknown =
            || Error::usage(format!("unknown metric {s:?}: expected one of {}", metrics_help()));
        let (name, cutoff) = match s.split_once('@') {
            Some((name, digits)) => {
                if digits.is_empty() || !digits.bytes().all(|b| b.is_ascii_digit()) {
                    return Err(Error::usage(format!(
                        "metric {s:?}: the cutoff after '@' must be an integer >= 1, \
                         found {digits:?}"
                    )));
                }
                let k = digits.parse::<usize>().map_err(|_| {
                    Error::usage(format!("metric {s:?}: the cutoff {digits} is too large"))
                })?;
                (name, Some(k))
            }
            None => (s, None),
        };
        let kind = match (name, cutoff) {
            ("ndcg", Some(k)) => MetricKind::Ndcg(k),
            ("p", Some(k)) => MetricKind::Precision(k),
            ("recall", Some(k)) => MetricKind::Recall(k),
            ("err", Some(k)) => MetricKind::Err(k),
            ("unjudged", Some(k)) => MetricKind::Unjudged(k),
            ("map", None) => MetricKind::Map,
            ("mrr", None) => MetricKind::Mrr,
            ("bpref", None) => MetricKind::Bpref,
            ("ndcg" | "p" | "recall" | "err" | "unjudged", None) => {
                return Err(Error::usage(format!(
                    "metric {s:?} needs a cutoff: write {s}@k with k an integer >= 1, e.g. {s}@10"
                )))
            }
            ("map" | "mrr" | "bpref", Some(_)) => {
                return Err(Error::usage(format!(
                    "metric {s:?}: {name} takes no cutoff, write {name}"
                )))
            }
            _ => return Err(unknown()),
        };
        Metric::new(kind)
    }
}

/// Parse a comma-separated metric list (`--metrics`). Spaces around each key
/// are ignored. An empty list, an empty item or a metric given twice (after
/// canonicalisation: `p@05` repeats `p@5`) is a usage error. The order is
/// kept: it is the order of every output.
pub fn parse_metric_list(s: &str) -> Result<Vec<Metric>> {
    if s.trim().is_empty() {
        return Err(Error::usage(format!(
            "empty metric list: expected comma-separated keys among {}",
            metrics_help()
        )));
    }
    let mut metrics = Vec::new();
    let mut seen = BTreeSet::new();
    for item in s.split(',') {
        let item = item.trim();
        if item.is_empty() {
            return Err(Error::usage(format!("metric list {s:?} has an empty item")));
        }
        let metric: Metric = item.parse()?;
        if !seen.insert(metric) {
            return Err(Error::usage(format!("metric {metric} is listed twice in {s:?}")));
        }
        metrics.push(metric);
    }
    Ok(metrics)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn err(s: &str) -> String {
        match s.parse::<Metric>() {
            Ok(m) => panic!("{s:?} parsed as {m}"),
            Err(e) => e.to_string(),
        }
    }

    #[test]
    fn parses_every_key() {
        let cases = [
            ("ndcg@10", MetricKind::Ndcg(10)),
            ("map", MetricKind::Map),
            ("p@5", MetricKind::Precision(5)),
            ("recall@100", MetricKind::Recall(100)),
            ("mrr", MetricKind::Mrr),
            ("err@20", MetricKind::Err(20)),
            ("bpref", MetricKind::Bpref),
            ("unjudged@1", MetricKind::Unjudged(1)),
        ];
        for (key, kind) in cases {
            let m: Metric = key.parse().unwrap();
            assert_eq!(m.kind(), kind);
            assert_eq!(m.key(), key);
            assert_eq!(m.to_string(), key);
        }
        assert_eq!("p@007".parse::<Metric>().unwrap().key(), "p@7");
        assert!("unjudged@10".parse::<Metric>().unwrap().is_diagnostic());
        assert!(!"ndcg@10".parse::<Metric>().unwrap().is_diagnostic());
    }

    #[test]
    fn rejects_bad_keys_with_the_accepted_list() {
        let e = err("ndgc@10");
        assert!(e.contains("\"ndgc@10\"") && e.contains(metrics_help()), "{e}");
        assert!(err("NDCG@10").contains(metrics_help()));
        assert!(err("").contains(metrics_help()));
        assert!(err("p@0").contains(">= 1"));
        assert!(err("p@").contains(">= 1"));
        assert!(err("p@+5").contains("\"+5\""));
        assert!(err("p@-1").contains("\"-1\""));
        assert!(err("p@1.5").contains("\"1.5\""));
        assert!(err("p@99999999999999999999999").contains("too large"));
        assert!(err("ndcg").contains("ndcg@10"));
        assert!(err("map@10").contains("takes no cutoff"));
        assert!(Metric::new(MetricKind::Err(0)).is_err());
        assert_eq!(Metric::new(MetricKind::Err(3)).unwrap().key(), "err@3");
    }

    #[test]
    fn default_list_parses_in_order() {
        let keys: Vec<String> =
            parse_metric_list(DEFAULT_METRICS).unwrap().iter().map(Metric::key).collect();
        assert_eq!(keys.join(","), DEFAULT_METRICS);
        assert_eq!(keys.len(), 8);
    }

    #[test]
    fn list_trims_and_rejects_empty_and_duplicates() {
        let keys: Vec<String> =
            parse_metric_list(" map , p@3").unwrap().iter().map(Metric::key).collect();
        assert_eq!(keys, ["map", "p@3"]);
        assert!(parse_metric_list("").unwrap_err().to_string().contains("empty metric list"));
        assert!(parse_metric_list("  ").is_err());
        assert!(parse_metric_list("map,,mrr").unwrap_err().to_string().contains("empty item"));
        assert!(parse_metric_list("map,").is_err());
        let e = parse_metric_list("p@5,map,p@05").unwrap_err().to_string();
        assert!(e.contains("p@5 is listed twice"), "{e}");
        assert!(parse_metric_list("map,bogus").unwrap_err().to_string().contains("\"bogus\""));
    }
}
