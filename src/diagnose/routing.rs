//! Routing accuracy of a language-routed chain on sentences of known
//! language: the share sent to that language's field, a confusion row, and
//! the accuracy by text length.
//!
//! Place in the data flow: `diagnose`, fed by sentence files
//! ([`read_sentences`](super::data::read_sentences)) and a routed chain's
//! [`Analyzer`]. A sentence is routed as a post without a declared language
//! would be: the chain's detector (with the route's languages, its
//! confidence floor and the rule for other languages, see
//! [`detect`](crate::analysis::detect)) and then
//! [`Analyzer::field_for_post`].
//!
//! A sentence is routed correctly when it lands in the field of its own
//! language; the fallback field counts as wrong. A language outside the
//! route's list can never be routed correctly: it is reported as not
//! routable (its accuracy is 0 by construction and its confusion row shows
//! where its sentences go), not left out. Its right place is the fallback
//! field, so the share sent there is counted overall and per length bucket.
//!
//! The cost of detection is measured in the same pass: the CPU time the
//! detecting threads spent per sentence ([`LangDetector::detect_all_timed`]).
//!
//! Lengths are counted in Unicode scalar values and bucketed by
//! [`length_bucket`] (≤ 20, 21–60, 61–140, > 140).

use std::collections::BTreeMap;

use crate::analysis::detect::{length_bucket, LangDetector};
use crate::analysis::Analyzer;
use crate::input::LangCode;

pub use crate::report::model::diagnostics::{
    buckets, BucketFigures, RoutingFigures, FALLBACK_LABEL,
};

fn share(num: usize, den: usize) -> Option<f64> {
    (den > 0).then(|| num as f64 / den as f64)
}

/// Tally routing decisions of sentences of `language`: each item is a
/// sentence's length in chars and the language of the field it went to
/// (`None` = the fallback).
pub fn tally(
    language: LangCode,
    routable: bool,
    routed: &[(usize, Option<LangCode>)],
) -> RoutingFigures {
    let labels = buckets();
    let mut per_bucket = [(0usize, 0usize, 0usize); 4];
    let mut confusion: BTreeMap<String, usize> = BTreeMap::new();
    let (mut correct, mut to_fallback) = (0, 0);
    for &(chars, field) in routed {
        let ok = routable && field == Some(language);
        correct += usize::from(ok);
        to_fallback += usize::from(field.is_none());
        let label = field.map_or(FALLBACK_LABEL.to_string(), |l| l.to_string());
        *confusion.entry(label).or_insert(0) += 1;
        let bucket = length_bucket(chars);
        if let Some(i) = labels.iter().position(|b| *b == bucket) {
            if let Some(cell) = per_bucket.get_mut(i) {
                cell.0 += 1;
                cell.1 += usize::from(ok);
                cell.2 += usize::from(field.is_none());
            }
        }
    }
    let by_length = labels
        .iter()
        .zip(per_bucket)
        .map(|(bucket, (n, ok, fallback))| BucketFigures {
            bucket: bucket.to_string(),
            sentences: n,
            correct: ok,
            accuracy: share(ok, n),
            to_fallback: fallback,
        })
        .collect();
    RoutingFigures {
        routable,
        sentences: routed.len(),
        correct,
        accuracy: share(correct, routed.len()),
        to_fallback,
        by_length,
        confusion,
        micros_per_sentence: None,
    }
}

/// Route `texts` of `language` with a routed chain and tally the result,
/// with the detector's CPU time per sentence; `None` for a plain chain (it
/// has no route).
pub fn route_sentences(
    analyzer: &Analyzer,
    language: LangCode,
    texts: &[&str],
) -> Option<RoutingFigures> {
    let detector: &LangDetector = analyzer.detector()?;
    let route = analyzer.spec().route()?;
    let routable = route.languages.contains(&language);
    let (detections, seconds) = detector.detect_all_timed(texts);
    let routed: Vec<(usize, Option<LangCode>)> = texts
        .iter()
        .zip(&detections)
        .map(|(text, detection)| {
            let field = analyzer.field_for_post(None, detection.as_ref());
            (text.chars().count(), analyzer.fields().get(field).and_then(|f| f.language))
        })
        .collect();
    let mut figures = tally(language, routable, &routed);
    figures.micros_per_sentence = (!texts.is_empty()).then(|| 1e6 * seconds / texts.len() as f64);
    Some(figures)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::{builtin_chains, AnalysisContext};
    use approx::assert_relative_eq;

    fn code(s: &str) -> LangCode {
        LangCode::parse(s).expect("valid code in test")
    }

    #[test]
    fn tally_on_hand_made_decisions() {
        // Hand-made: six German sentences.
        //   len 10 → de ✓   len 20 → other ✗      (bucket ≤20: 1/2)
        //   len 21 → nl ✗   len 60 → de ✓         (bucket 21–60: 1/2)
        //   len 61 → de ✓                         (bucket 61–140: 1/1)
        //   len 141 → de ✓                        (bucket >140: 1/1)
        // accuracy 4/6; fallback 1; confusion de 4, nl 1, other 1.
        let (de, nl) = (code("de"), code("nl"));
        let routed = [
            (10, Some(de)),
            (20, None),
            (21, Some(nl)),
            (60, Some(de)),
            (61, Some(de)),
            (141, Some(de)),
        ];
        let f = tally(de, true, &routed);
        assert_eq!((f.sentences, f.correct, f.to_fallback), (6, 4, 1));
        assert_relative_eq!(f.accuracy.expect("sentences"), 4.0 / 6.0);
        let buckets: Vec<(&str, usize, usize, usize)> = f
            .by_length
            .iter()
            .map(|b| (b.bucket.as_str(), b.sentences, b.correct, b.to_fallback))
            .collect();
        assert_eq!(
            buckets,
            [("<=20", 2, 1, 1), ("21-60", 2, 1, 0), ("61-140", 1, 1, 0), (">140", 1, 1, 0)]
        );
        assert_eq!(f.micros_per_sentence, None, "tally measures no time");
        let confusion: Vec<(&str, usize)> =
            f.confusion.iter().map(|(k, v)| (k.as_str(), *v)).collect();
        assert_eq!(confusion, [("de", 4), ("nl", 1), ("other", 1)]);
    }

    #[test]
    fn an_unroutable_language_is_never_correct_and_empty_buckets_have_no_accuracy() {
        let sv = code("sv");
        let f = tally(sv, false, &[(30, Some(code("nl"))), (30, None)]);
        assert!(!f.routable);
        assert_eq!((f.correct, f.accuracy), (0, Some(0.0)));
        // Its right place, the fallback, is counted per bucket.
        assert_eq!((f.to_fallback, f.by_length[1].to_fallback), (1, 1));
        assert_eq!(f.by_length[0].accuracy, None);
        assert_eq!(tally(sv, false, &[]).accuracy, None);
    }

    #[test]
    fn the_builtin_routed_chain_routes_clear_sentences() {
        // Hand-written sentences, long enough for any trigram detector.
        let chains = builtin_chains(code("en")).expect("built-ins parse");
        let routed = chains.iter().find(|c| c.route().is_some()).expect("a routed built-in");
        let analyzer = Analyzer::build(routed, &AnalysisContext::default()).expect("builds");
        let de = [
            "Der Hafen von Kiel ist im Sommer voller Schiffe und die Fischer verkaufen ihren Fang.",
            "Morgen früh fahren wir mit dem Zug nach München und besuchen unsere Großeltern dort.",
        ];
        let f = route_sentences(&analyzer, code("de"), &de).expect("a routed chain");
        assert_eq!((f.sentences, f.correct), (2, 2));
        assert!(f.micros_per_sentence.is_some_and(|m| m > 0.0));
        // Russian and Swedish are not among the routed languages: not
        // routable, and sent to the fallback.
        let ru = ["Мы поехали на вокзал рано утром, чтобы успеть на первый поезд в Москву."];
        let f = route_sentences(&analyzer, code("ru"), &ru).expect("a routed chain");
        assert!(!f.routable);
        assert_eq!((f.correct, f.to_fallback), (0, 1));
        let sv = ["Igår kväll promenerade vi länge genom staden och pratade om livet."];
        let f = route_sentences(&analyzer, code("sv"), &sv).expect("a routed chain");
        assert_eq!((f.correct, f.to_fallback), (0, 1));
        let plain = chains.iter().find(|c| c.route().is_none()).expect("a plain built-in");
        let plain = Analyzer::build(plain, &AnalysisContext::default()).expect("builds");
        assert!(route_sentences(&plain, code("de"), &de).is_none());
    }
}
