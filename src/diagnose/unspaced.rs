//! Word segmentation of scripts written without spaces, per `unspaced`
//! setting of the `words` tokenizer, against gold word segmentations
//! (`ud_nospace/LANG.words.tsv`: Universal Dependencies treebanks of Thai,
//! Chinese and Japanese): word-boundary precision, recall and F1, and the
//! share of gold words found as a token.
//!
//! Place in the data flow: `diagnose`, fed by gold sentences
//! ([`read_word_gold`](super::data::read_word_gold)) and the `words`
//! tokenizer with each [`Unspaced`] setting (no steps: the setting is a
//! property of the tokenizer, the steps after it do not move boundaries).
//!
//! # How it is scored
//!
//! The gold words are located in the sentence text in order (white space
//! between them skipped); a sentence whose gold words do not spell its text
//! is counted as *unaligned* and left out.
//!
//! A *place* is a byte offset inside the text between two characters that
//! are not white space, at least one of which is a letter, digit or mark
//! (so the place between two punctuation signs, where no setting emits a
//! token, is not scored). A place is a gold boundary when a gold word starts
//! or ends there, a predicted boundary when a token does. Precision =
//! Σ correct / Σ predicted, recall = Σ correct / Σ gold over all sentences
//! (micro-averaged), F1 their harmonic mean. Punctuation counts as a word
//! in the gold and is dropped by the tokenizer, but the tokens around it
//! still end and start at its edges, so it is scored fairly.
//!
//! *Words found* is the share of gold words that contain a letter or digit
//! and appear as a token with exactly their span. For `bigrams` the
//! boundary figures are those of single characters (every pair starts at
//! each character); words found shows what the pairs capture (every
//! two-character word).
//!
//! Treebanks follow different conventions: the Thai PUD treebank writes
//! some compounds as one word (`การเปลี่ยนผ่าน`), Chinese GSD splits
//! some suffixes (`企業 界`), Japanese GSD uses short units that split
//! inflections and auxiliaries (`まし た`). A segmenter trained on another
//! convention loses points where it is not wrong, so compare settings
//! within a language, not languages with each other.

use std::collections::BTreeSet;

use tantivy::tokenizer::{TextAnalyzer, Token};

use super::data::GoldSentence;
use super::segmentation::precision_recall_f1;

use crate::analysis::{Unspaced, WordTokenizer};
pub use crate::report::model::diagnostics::{SentenceMiss, WordFigures};

/// Byte spans of the gold words in `text`, or `None` when they do not
/// spell it (white space between words is skipped).
pub fn align(text: &str, words: &[String]) -> Option<Vec<(usize, usize)>> {
    let mut at = 0;
    let mut spans = Vec::with_capacity(words.len());
    for word in words {
        let rest = text.get(at..)?;
        at += rest.len() - rest.trim_start().len();
        if !text.get(at..)?.starts_with(word.as_str()) {
            return None;
        }
        spans.push((at, at + word.len()));
        at += word.len();
    }
    text.get(at..)?.trim().is_empty().then_some(spans)
}

fn is_wordish(c: char) -> bool {
    c.is_alphanumeric() || unicode_normalization::char::is_combining_mark(c)
}

/// The scored places of `text` (see the module docs).
fn places(text: &str) -> BTreeSet<usize> {
    let mut out = BTreeSet::new();
    let mut prev: Option<char> = None;
    for (i, c) in text.char_indices() {
        if let Some(p) = prev {
            if !p.is_whitespace() && !c.is_whitespace() && (is_wordish(p) || is_wordish(c)) {
                out.insert(i);
            }
        }
        prev = Some(c);
    }
    out
}

/// Starts and ends of `spans` that are scored places.
fn boundaries(spans: &[(usize, usize)], places: &BTreeSet<usize>) -> BTreeSet<usize> {
    spans.iter().flat_map(|&(a, b)| [a, b]).filter(|p| places.contains(p)).collect()
}

fn share(part: usize, whole: usize) -> Option<f64> {
    (whole > 0).then(|| part as f64 / whole as f64)
}

/// The `words` tokenizer with `setting`, alone.
pub fn tokenizer(setting: Unspaced) -> TextAnalyzer {
    TextAnalyzer::from(WordTokenizer::new(setting))
}

/// Score `analyzer`'s tokens on the gold sentences; `top` misses are kept.
pub fn assess(analyzer: &mut TextAnalyzer, gold: &[GoldSentence], top: usize) -> WordFigures {
    let mut f = WordFigures {
        sentences: 0,
        unaligned: 0,
        tokens: 0,
        predicted_boundaries: 0,
        gold_boundaries: 0,
        correct_boundaries: 0,
        precision: None,
        recall: None,
        f1: None,
        gold_words: 0,
        words_found: 0,
        word_recall: None,
        misses: Vec::new(),
    };
    for sentence in gold {
        let Some(gold_spans) = align(&sentence.text, &sentence.words) else {
            f.unaligned += 1;
            continue;
        };
        f.sentences += 1;
        let mut spans = Vec::new();
        analyzer
            .token_stream(&sentence.text)
            .process(&mut |t: &Token| spans.push((t.offset_from, t.offset_to)));
        f.tokens += spans.len();
        let places = places(&sentence.text);
        let gold_b = boundaries(&gold_spans, &places);
        let ours_b = boundaries(&spans, &places);
        f.gold_boundaries += gold_b.len();
        f.predicted_boundaries += ours_b.len();
        f.correct_boundaries += gold_b.intersection(&ours_b).count();
        let found: BTreeSet<&(usize, usize)> = spans.iter().collect();
        for (span, word) in gold_spans.iter().zip(&sentence.words) {
            if word.chars().any(char::is_alphanumeric) {
                f.gold_words += 1;
                f.words_found += usize::from(found.contains(span));
            }
        }
        if gold_b != ours_b && f.misses.len() < top {
            let text = |s: &(usize, usize)| sentence.text.get(s.0..s.1).unwrap_or_default();
            f.misses.push(SentenceMiss {
                id: sentence.id.clone(),
                predicted: spans.iter().map(text).collect::<Vec<_>>().join(" "),
                gold: sentence.words.join(" "),
            });
        }
    }
    (f.precision, f.recall, f.f1) =
        precision_recall_f1(f.correct_boundaries, f.predicted_boundaries, f.gold_boundaries);
    f.word_recall = share(f.words_found, f.gold_words);
    f
}

#[cfg(test)]
mod tests {
    use super::*;

    fn gold(id: &str, text: &str, words: &str) -> GoldSentence {
        GoldSentence {
            line: 1,
            id: id.into(),
            text: text.into(),
            words: words.split(' ').map(String::from).collect(),
        }
    }

    #[test]
    fn alignment_skips_spaces_and_refuses_other_letters() {
        assert_eq!(
            align("ab c", &["a".into(), "b".into(), "c".into()]),
            Some(vec![(0, 1), (1, 2), (3, 4)])
        );
        assert_eq!(align("ab", &["a".into(), "c".into()]), None);
        assert_eq!(align("abc", &["a".into(), "b".into()]), None);
    }

    /// UD Chinese-GSD test-s1 (text and gold words of
    /// `ud_nospace/zh.words.tsv`), hand-counted: the scored places are the
    /// 16 between its 17 characters (all next to an ideograph, `，` and
    /// `。` included); the gold's 11 words meet at 10 of them.
    #[test]
    fn chinese_sentence_by_hand() {
        let s = gold(
            "test-s1",
            "然而，這樣的處理也衍生了一些問題。",
            "然而 ， 這樣 的 處理 也 衍生 了 一些 問題 。",
        );
        // Single characters: every place is a token's start or end.
        let f = assess(&mut tokenizer(Unspaced::Characters), std::slice::from_ref(&s), 1);
        assert_eq!((f.sentences, f.gold_boundaries, f.predicted_boundaries), (1, 10, 16));
        assert_eq!(f.correct_boundaries, 10);
        assert_eq!(f.recall, Some(1.0));
        // Gold words with a letter: 9 (not the two punctuation signs);
        // single characters find the three one-character words 的 也 了.
        assert_eq!((f.gold_words, f.words_found), (9, 3));
        assert_eq!(f.misses[0].id, "test-s1");
        // Pairs find every two-character word (然而 這樣 處理 衍生 一些 問題).
        let f = assess(&mut tokenizer(Unspaced::Bigrams), std::slice::from_ref(&s), 0);
        assert_eq!(f.words_found, 6);
        assert!(f.misses.is_empty());
    }
}
