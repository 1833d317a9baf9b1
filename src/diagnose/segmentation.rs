//! Hashtag segmentation accuracy of a chain's `hashtags` step on gold sets:
//! exact-match accuracy and word-boundary precision, recall and F1.
//!
//! Place in the data flow: `diagnose`, fed by gold sets
//! ([`read_gold`](super::data::read_gold)), a chain's pipeline cut right
//! after its `hashtags` step, and a word-frequency table
//! ([`WordFreqs`](crate::analysis::hashtag::WordFreqs)).
//!
//! # What the step predicts
//!
//! Each tag is fed as `#tag` to the chain's tokenizer and its steps up to and
//! including `hashtags` (later steps only change case or drop terms, and the
//! comparison ignores case). The step emits the whole tag and then, when it
//! splits, each part at its own position; the prediction is the last term
//! at each position, i.e. the parts (or the whole tag when it is not split).
//!
//! # How it is scored
//!
//! Words are compared after normalisation: lower-cased, with every char
//! that is not a letter or digit removed, and words left empty dropped. The
//! gold sets restore apostrophes, hyphens and periods a tag cannot hold
//! (`cantafford` → `can't afford`), which no segmenter can output; so
//! `can't afford` and `cant afford` count as the same segmentation.
//!
//! - Exact match: the predicted words equal those of any accepted
//!   segmentation (the gold or an alternative).
//! - Boundaries: the char offsets, in the normalised concatenation, where a
//!   word ends and another begins. Per tag, the accepted segmentation whose
//!   concatenation equals the prediction's and that gives the best F1 is
//!   used (ties: the first listed). Precision = Σ correct / Σ predicted
//!   boundaries, recall = Σ correct / Σ gold boundaries, over all tags
//!   (micro-averaged); F1 is their harmonic mean. A tag none of whose
//!   accepted segmentations spells the same letters is counted as
//!   "unaligned" and left out of the boundary figures.

use std::collections::BTreeMap;

use tantivy::tokenizer::TextAnalyzer;

use super::data::GoldTag;

pub use crate::report::model::diagnostics::{SegmentationError, SegmentationFigures};

/// The scoring of one tag.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct TagScore {
    /// The prediction equals an accepted segmentation.
    pub exact: bool,
    /// Some accepted segmentation spells the same letters.
    pub aligned: bool,
    /// Boundaries predicted (0 when unaligned).
    pub predicted: usize,
    /// Boundaries of the chosen accepted segmentation (0 when unaligned).
    pub gold: usize,
    /// Boundaries in both.
    pub correct: usize,
}

/// Normalised words of a segmentation (see the module docs).
pub fn normalise<'a, I: IntoIterator<Item = &'a str>>(words: I) -> Vec<String> {
    words
        .into_iter()
        .map(|w| w.chars().filter(|c| c.is_alphanumeric()).flat_map(char::to_lowercase).collect())
        .filter(|w: &String| !w.is_empty())
        .collect()
}

/// Char offsets where one word ends and the next begins.
fn boundaries(words: &[String]) -> Vec<usize> {
    let mut at = 0;
    let mut out = Vec::with_capacity(words.len().saturating_sub(1));
    for w in words.iter().take(words.len().saturating_sub(1)) {
        at += w.chars().count();
        out.push(at);
    }
    out
}

fn f1_of(correct: usize, predicted: usize, gold: usize) -> f64 {
    if predicted + gold == 0 {
        1.0
    } else {
        2.0 * correct as f64 / (predicted + gold) as f64
    }
}

/// Score predicted parts against accepted segmentations (space-separated
/// words each).
pub fn score_tag(predicted: &[String], accepted: &[String]) -> TagScore {
    let pred = normalise(predicted.iter().map(String::as_str));
    let pred_concat = pred.concat();
    let pred_b = boundaries(&pred);
    let mut best: Option<(f64, TagScore)> = None;
    let mut exact = false;
    for segmentation in accepted {
        let gold = normalise(segmentation.split_whitespace());
        exact |= gold == pred;
        if gold.concat() != pred_concat {
            continue;
        }
        let gold_b = boundaries(&gold);
        let correct = pred_b.iter().filter(|b| gold_b.contains(b)).count();
        let f1 = f1_of(correct, pred_b.len(), gold_b.len());
        if best.as_ref().is_none_or(|(f, _)| f1 > *f) {
            let score = TagScore {
                exact: false,
                aligned: true,
                predicted: pred_b.len(),
                gold: gold_b.len(),
                correct,
            };
            best = Some((f1, score));
        }
    }
    let mut score = best.map(|(_, s)| s).unwrap_or_default();
    score.exact = exact;
    score
}

/// Micro-averaged precision (Σ correct / Σ predicted), recall (Σ correct /
/// Σ gold) and F1 (their harmonic mean) of boundary counts; `None` where a
/// denominator is 0.
pub fn precision_recall_f1(
    correct: usize,
    predicted: usize,
    gold: usize,
) -> (Option<f64>, Option<f64>, Option<f64>) {
    let ratio = |n: usize, d: usize| (d > 0).then(|| n as f64 / d as f64);
    let (precision, recall) = (ratio(correct, predicted), ratio(correct, gold));
    let f1 = match (precision, recall) {
        (Some(p), Some(r)) if p + r > 0.0 => Some(2.0 * p * r / (p + r)),
        (Some(_), Some(_)) => Some(0.0),
        _ => None,
    };
    (precision, recall, f1)
}

/// Add up tag scores; `examples` are the wrong tags to list.
pub fn total(scores: &[TagScore], errors: Vec<SegmentationError>) -> SegmentationFigures {
    let sum = |f: fn(&TagScore) -> usize| scores.iter().map(f).sum::<usize>();
    let exact = scores.iter().filter(|s| s.exact).count();
    let (predicted, gold, correct) = (sum(|s| s.predicted), sum(|s| s.gold), sum(|s| s.correct));
    let ratio = |n: usize, d: usize| (d > 0).then(|| n as f64 / d as f64);
    let (precision, recall, f1) = precision_recall_f1(correct, predicted, gold);
    SegmentationFigures {
        tags: scores.len(),
        exact,
        exact_accuracy: ratio(exact, scores.len()),
        unaligned: scores.iter().filter(|s| !s.aligned).count(),
        predicted_boundaries: predicted,
        gold_boundaries: gold,
        correct_boundaries: correct,
        precision,
        recall,
        f1,
        errors,
    }
}

/// The parts `analyzer` (a pipeline ending with its `hashtags` step) makes
/// of `tag`: the last term at each position.
pub fn predict(analyzer: &mut TextAnalyzer, tag: &str) -> Vec<String> {
    let text = format!("#{tag}");
    let mut stream = analyzer.token_stream(&text);
    let mut by_position: BTreeMap<usize, String> = BTreeMap::new();
    while let Some(token) = stream.next() {
        by_position.insert(token.position, token.text.clone());
    }
    by_position.into_values().collect()
}

/// Segment and score every tag of a gold set, keeping the first
/// `max_errors` wrong segmentations (in file order) as examples.
pub fn assess(
    analyzer: &mut TextAnalyzer,
    gold: &[GoldTag],
    max_errors: usize,
) -> SegmentationFigures {
    let mut scores = Vec::with_capacity(gold.len());
    let mut errors = Vec::new();
    for row in gold {
        let parts = predict(analyzer, &row.tag);
        let score = score_tag(&parts, &row.accepted);
        if !score.exact && errors.len() < max_errors {
            errors.push(SegmentationError {
                line: row.line,
                tag: row.tag.clone(),
                predicted: parts.join(" "),
                gold: row.accepted.first().cloned().unwrap_or_default(),
            });
        }
        scores.push(score);
    }
    total(&scores, errors)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::hashtag::{HashtagSplit, WordFreqs};
    use crate::analysis::WhitespaceTokenizer;
    use approx::assert_relative_eq;
    use std::sync::Arc;

    fn words(s: &str) -> Vec<String> {
        s.split(' ').map(String::from).collect()
    }

    fn accepted(list: &[&str]) -> Vec<String> {
        list.iter().map(|s| s.to_string()).collect()
    }

    #[test]
    fn tag_scores_by_hand() {
        // "what a dream" vs gold "what a dream": boundaries {4, 5} both right.
        let s = score_tag(&words("what a dream"), &accepted(&["what a dream"]));
        assert_eq!(s, TagScore { exact: true, aligned: true, predicted: 2, gold: 2, correct: 2 });
        // "whata dream" vs gold "what a dream": predicted {5}, gold {4, 5}: 1 right.
        let s = score_tag(&words("whata dream"), &accepted(&["what a dream"]));
        assert_eq!(s, TagScore { exact: false, aligned: true, predicted: 1, gold: 2, correct: 1 });
        // Case and the restored apostrophe are ignored: "Cant afford" = "can't afford".
        let s = score_tag(&words("Cant afford"), &accepted(&["can't afford"]));
        assert!(s.exact);
        // The alternative with the better F1 is chosen: prediction "catch 22"
        // has boundary {5}; gold "catch-22" has none (F1 0), "catch 22" matches (F1 1).
        let s = score_tag(&words("catch 22"), &accepted(&["catch-22", "catch 22"]));
        assert_eq!(s, TagScore { exact: true, aligned: true, predicted: 1, gold: 1, correct: 1 });
        // Different letters: unaligned, no boundary counted.
        let s = score_tag(&words("foo"), &accepted(&["bar"]));
        assert_eq!(s, TagScore::default());
    }

    #[test]
    fn totals_by_hand() {
        // Three tags: (pred 2, gold 2, correct 2, exact), (1, 2, 1), (0, 1, 0);
        // exact 1/3; P = 3/3 = 1; R = 3/5 = 0.6; F1 = 2·0.6/1.6 = 0.75.
        let scores = [
            TagScore { exact: true, aligned: true, predicted: 2, gold: 2, correct: 2 },
            TagScore { exact: false, aligned: true, predicted: 1, gold: 2, correct: 1 },
            TagScore { exact: false, aligned: true, predicted: 0, gold: 1, correct: 0 },
        ];
        let t = total(&scores, Vec::new());
        assert_relative_eq!(t.exact_accuracy.expect("tags"), 1.0 / 3.0);
        assert_relative_eq!(t.precision.expect("predicted"), 1.0);
        assert_relative_eq!(t.recall.expect("gold"), 0.6);
        assert_relative_eq!(t.f1.expect("both"), 0.75);
        assert_eq!(total(&[], Vec::new()).exact_accuracy, None);
    }

    #[test]
    fn prediction_takes_the_parts_the_step_emits() {
        let freqs = WordFreqs::from_counts([
            ("what".to_string(), 50),
            ("a".to_string(), 90),
            ("dream".to_string(), 20),
        ]);
        let mut analyzer = TextAnalyzer::builder(WhitespaceTokenizer::default())
            .filter(HashtagSplit::new(Some(Arc::new(freqs))))
            .build();
        assert_eq!(predict(&mut analyzer, "whatadream"), ["what", "a", "dream"]);
        assert_eq!(predict(&mut analyzer, "HarbourMarket"), ["Harbour", "Market"]);
        assert_eq!(predict(&mut analyzer, "dream"), ["dream"]);
        let gold = [
            GoldTag { line: 1, tag: "whatadream".into(), accepted: accepted(&["what a dream"]) },
            GoldTag { line: 2, tag: "dreamwhat".into(), accepted: accepted(&["dream what"]) },
            GoldTag { line: 3, tag: "xyzzy".into(), accepted: accepted(&["xy zzy"]) },
        ];
        let f = assess(&mut analyzer, &gold, 5);
        assert_eq!((f.tags, f.exact), (3, 2));
        assert_eq!(f.errors.len(), 1);
        assert_eq!(f.errors[0].tag, "xyzzy");
        assert_eq!(f.errors[0].predicted, "xyzzy");
        // No examples asked for: the figures stay, the list is empty.
        let f = assess(&mut analyzer, &gold, 0);
        assert_eq!((f.tags, f.exact, f.errors.len()), (3, 2, 0));
    }
}
