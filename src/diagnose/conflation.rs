//! Conflation quality of a chain against lemma classes: Paice's
//! understemming and overstemming indices (Paice, "An evaluation method for
//! stemming algorithms", SIGIR 1994), plus the plain shares a user reads
//! first and the worst offenders as concrete examples.
//!
//! Place in the data flow: `diagnose`, fed by a lemma list
//! ([`read_lemmas`](super::data::read_lemmas)) and an `analysis` chain.
//!
//! # Words, concepts and stems
//!
//! - A *word* is a distinct surface form of the list, case kept (`The` and
//!   `the` are two words). Forms are fed to the chain as they are written,
//!   not lower-cased first: lower-casing is the chain's job, and a chain
//!   without it should be seen not to conflate `The` with `the`.
//! - A word's *concept group* is its lemma, lower-cased, with underscores
//!   removed. Lower-cased, because UD writes a lemma's case by word class
//!   (proper nouns and German nouns capitalised): `Top`, `TOP` and `top`
//!   would otherwise be three concepts and mere case folding would count as
//!   overstemming. Underscores, because the Dutch list marks compound joints
//!   with `_` (`klooster_orde` is `kloosterorde`). Paice's method needs each
//!   word in exactly one group, so a form listed with two or more different
//!   lemmas (`saw`: see and saw) is left out and counted.
//! - A word's *stem* is the sequence of terms the chain outputs for it,
//!   joined by a space (`e-mail` → `e mail` under a words tokenizer). A word
//!   the chain drops entirely (a stop word, say) is a stem class of its own:
//!   it is merged with nothing, so it counts as unachieved merges inside its
//!   group and never as a wrong merge.
//!
//! # Formulas (Paice 1994, the "global" indices; pair counting as defined there)
//!
//! With `W` words, `n_g` the size of concept group `g`, `v_s` the size of
//! stem class `s` and `u_gs` the number of words of group `g` in class `s`:
//!
//! ```text
//! GDMT = Σ_g ½·n_g(n_g − 1)            desired merges (pairs inside a group)
//! GUMT = Σ_g ½·Σ_s u_gs(n_g − u_gs)    unachieved merges: pairs of a group in different classes
//!      = ½·(Σ_g n_g² − Σ_gs u_gs²)
//! UI   = GUMT / GDMT                    understemming index
//! GDNT = Σ_g ½·n_g(W − n_g)            desired non-merges (pairs across groups)
//!      = ½·(W² − Σ_g n_g²)
//! GWMT = Σ_s ½·Σ_g u_gs(v_s − u_gs)    wrong merges: pairs of a class from different groups
//!      = ½·(Σ_s v_s² − Σ_gs u_gs²)
//! OI   = GWMT / GDNT                    overstemming index
//! SW   = OI / UI                        stemming weight
//! ```
//!
//! Everything is computed from the counts `u_gs`, so the cost is linear in
//! the number of words. Paice's ERRT (distance to a truncation line) needs a
//! family of truncation stemmers and is not computed.
//!
//! Two plainer figures go with them, over the groups of two words or more
//! (a one-word group is conflated by any chain): the share of groups whose
//! words all end in one stem class, and the mean number of stem classes per
//! group.

use std::collections::{BTreeMap, HashMap};

use tantivy::tokenizer::TextAnalyzer;

use super::data::LemmaList;

pub use crate::report::model::diagnostics::{
    ConflationFigures, MergedStem, PaiceCounts, SplitGroup, StemForms,
};

impl PaiceCounts {
    /// Count from `(concept, stem class)` ids, one pair per word (see the
    /// module docs for the formulas).
    pub fn from_assignments(words: &[(usize, usize)]) -> PaiceCounts {
        let mut group: HashMap<usize, u64> = HashMap::new();
        let mut class: HashMap<usize, u64> = HashMap::new();
        let mut cell: HashMap<(usize, usize), u64> = HashMap::new();
        for &(g, s) in words {
            *group.entry(g).or_insert(0) += 1;
            *class.entry(s).or_insert(0) += 1;
            *cell.entry((g, s)).or_insert(0) += 1;
        }
        let (sum_n2, sum_v2, sum_u2) =
            (squares(group.values()), squares(class.values()), squares(cell.values()));
        let w = words.len() as u64;
        PaiceCounts {
            words: w,
            gdmt: (sum_n2 - w) / 2,
            gumt: (sum_n2 - sum_u2) / 2,
            gdnt: (w * w - sum_n2) / 2,
            gwmt: (sum_v2 - sum_u2) / 2,
        }
    }

    /// UI = GUMT / GDMT (`None` when no merge is desired).
    pub fn understemming(&self) -> Option<f64> {
        ratio(self.gumt, self.gdmt)
    }

    /// OI = GWMT / GDNT (`None` when no non-merge is desired).
    pub fn overstemming(&self) -> Option<f64> {
        ratio(self.gwmt, self.gdnt)
    }

    /// SW = OI / UI (`None` when either is undefined or UI is 0).
    pub fn stemming_weight(&self) -> Option<f64> {
        match (self.overstemming(), self.understemming()) {
            (Some(oi), Some(ui)) if ui > 0.0 => Some(oi / ui),
            _ => None,
        }
    }
}

fn squares<'a>(counts: impl Iterator<Item = &'a u64>) -> u64 {
    counts.map(|n| n * n).sum()
}

fn ratio(num: u64, den: u64) -> Option<f64> {
    (den > 0).then(|| num as f64 / den as f64)
}

/// Words grouped into concepts, ready to be stemmed by any chain.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct WordGroups {
    /// Distinct forms with their concept id, in first-seen order.
    pub words: Vec<(String, usize)>,
    /// Concept id → lemma (lower-cased, underscores removed).
    pub lemmas: Vec<String>,
    /// Forms left out for having two or more different lemmas.
    pub ambiguous_forms: usize,
    /// Rows of the list without a lemma (`_`).
    pub without_lemma: usize,
}

impl WordGroups {
    /// Group a lemma list's forms by lemma (see the module docs).
    pub fn from_list(list: &LemmaList) -> WordGroups {
        let mut lemma_of: HashMap<&str, Option<String>> = HashMap::new();
        let mut order: Vec<&str> = Vec::new();
        for (form, lemma) in &list.rows {
            let lemma: String =
                lemma.chars().filter(|&c| c != '_').collect::<String>().to_lowercase();
            match lemma_of.get_mut(form.as_str()) {
                None => {
                    order.push(form);
                    lemma_of.insert(form, Some(lemma));
                }
                Some(seen) => {
                    if seen.as_deref().is_some_and(|l| l != lemma) {
                        *seen = None;
                    }
                }
            }
        }
        let mut groups = WordGroups { without_lemma: list.without_lemma, ..WordGroups::default() };
        let mut concept_of: HashMap<String, usize> = HashMap::new();
        for form in order {
            match lemma_of.get(form).cloned().flatten() {
                Some(lemma) if !lemma.is_empty() => {
                    let next = groups.lemmas.len();
                    let id = *concept_of.entry(lemma.clone()).or_insert(next);
                    if id == next {
                        groups.lemmas.push(lemma);
                    }
                    groups.words.push((form.to_string(), id));
                }
                _ => groups.ambiguous_forms += 1,
            }
        }
        groups
    }
}

/// Forms shown per stem or lemma in the offender lists.
pub const EXAMPLE_FORMS: usize = 4;

/// The terms `analyzer` outputs for `form`, joined by a space.
pub fn stem_of(analyzer: &mut TextAnalyzer, form: &str) -> String {
    let mut stream = analyzer.token_stream(form);
    let mut terms: Vec<String> = Vec::new();
    while let Some(token) = stream.next() {
        terms.push(token.text.clone());
    }
    terms.join(" ")
}

/// Measure how `analyzer` conflates the words of `groups`, listing `top`
/// offenders of each kind.
pub fn assess(groups: &WordGroups, analyzer: &mut TextAnalyzer, top: usize) -> ConflationFigures {
    let stems: Vec<String> = groups.words.iter().map(|(form, _)| stem_of(analyzer, form)).collect();
    figures(groups, &stems, top)
}

/// The figures from each word's stem (`stems[i]` belongs to
/// `groups.words[i]`; an empty stem means the chain output nothing).
pub fn figures(groups: &WordGroups, stems: &[String], top: usize) -> ConflationFigures {
    // Stem class ids: one per distinct non-empty stem, one per dropped word.
    let mut class_of: HashMap<&str, usize> = HashMap::new();
    let mut assignments = Vec::with_capacity(groups.words.len());
    let mut without_terms = 0;
    for (i, ((_, concept), stem)) in groups.words.iter().zip(stems).enumerate() {
        let class = if stem.is_empty() {
            without_terms += 1;
            usize::MAX - i
        } else {
            let next = class_of.len();
            *class_of.entry(stem.as_str()).or_insert(next)
        };
        assignments.push((*concept, class));
    }
    let counts = PaiceCounts::from_assignments(&assignments);

    // Per concept: stem → forms; per stem: concept → forms (sorted maps for
    // deterministic offender lists).
    let mut by_concept: BTreeMap<usize, BTreeMap<&str, Vec<&str>>> = BTreeMap::new();
    let mut by_stem: BTreeMap<&str, BTreeMap<usize, Vec<&str>>> = BTreeMap::new();
    let mut dropped_in: BTreeMap<usize, Vec<&str>> = BTreeMap::new();
    for ((form, concept), stem) in groups.words.iter().zip(stems) {
        if stem.is_empty() {
            dropped_in.entry(*concept).or_default().push(form);
        } else {
            by_concept.entry(*concept).or_default().entry(stem).or_default().push(form);
            by_stem.entry(stem).or_default().entry(*concept).or_default().push(form);
        }
    }
    let mut sizes: BTreeMap<usize, usize> = BTreeMap::new();
    for (_, concept) in &groups.words {
        *sizes.entry(*concept).or_insert(0) += 1;
    }
    let classes_in = |c: &usize| {
        by_concept.get(c).map_or(0, BTreeMap::len) + dropped_in.get(c).map_or(0, Vec::len)
    };
    let multi: Vec<usize> = sizes.iter().filter(|(_, &n)| n >= 2).map(|(&c, _)| c).collect();
    let fully = multi.iter().filter(|c| classes_in(c) == 1).count();
    let total_classes: usize = multi.iter().map(classes_in).sum();
    let share = |num: usize| (!multi.is_empty()).then(|| num as f64 / multi.len() as f64);

    let lemma = |c: usize| groups.lemmas.get(c).cloned().unwrap_or_default();
    let mut splits: Vec<(usize, usize, String, usize)> = multi
        .iter()
        .filter(|c| classes_in(c) > 1)
        .map(|&c| (classes_in(&c), sizes.get(&c).copied().unwrap_or(0), lemma(c), c))
        .collect();
    splits.sort_by(|a, b| b.0.cmp(&a.0).then(b.1.cmp(&a.1)).then(a.2.cmp(&b.2)));
    let worst_splits = splits
        .into_iter()
        .take(top)
        .map(|(_, words, lemma, c)| {
            let mut stems: Vec<StemForms> = by_concept
                .get(&c)
                .into_iter()
                .flatten()
                .map(|(stem, forms)| example(stem, forms))
                .collect();
            if let Some(forms) = dropped_in.get(&c) {
                stems.push(example("", forms));
            }
            stems.sort_by(|a, b| b.count.cmp(&a.count).then(a.stem.cmp(&b.stem)));
            SplitGroup { lemma, words, stems }
        })
        .collect();

    let mut merges: Vec<(usize, usize, &str)> = by_stem
        .iter()
        .filter(|(_, concepts)| concepts.len() > 1)
        .map(|(stem, concepts)| (concepts.len(), concepts.values().map(Vec::len).sum(), *stem))
        .collect();
    merges.sort_by(|a, b| b.0.cmp(&a.0).then(b.1.cmp(&a.1)).then(a.2.cmp(b.2)));
    let worst_merges = merges
        .into_iter()
        .take(top)
        .map(|(_, words, stem)| {
            let mut lemmas: Vec<StemForms> = by_stem
                .get(stem)
                .into_iter()
                .flatten()
                .map(|(&c, forms)| example(&lemma(c), forms))
                .collect();
            lemmas.sort_by(|a, b| b.count.cmp(&a.count).then(a.stem.cmp(&b.stem)));
            MergedStem { stem: stem.to_string(), words, lemmas }
        })
        .collect();

    ConflationFigures {
        counts,
        understemming: counts.understemming(),
        overstemming: counts.overstemming(),
        stemming_weight: counts.stemming_weight(),
        multi_word_groups: multi.len(),
        fully_conflated: share(fully),
        mean_stems_per_group: share(total_classes),
        words_without_terms: without_terms,
        worst_splits,
        worst_merges,
    }
}

fn example(stem: &str, forms: &[&str]) -> StemForms {
    let mut sorted: Vec<String> = forms.iter().map(|f| f.to_string()).collect();
    sorted.sort();
    sorted.dedup();
    let count = sorted.len();
    sorted.truncate(EXAMPLE_FORMS);
    StemForms { stem: stem.to_string(), forms: sorted, count }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    /// Paice's pair counts by enumerating every pair of words: the
    /// definition itself, to check the count-based formulas against.
    fn by_pairs(words: &[(usize, usize)]) -> PaiceCounts {
        let mut c = PaiceCounts { words: words.len() as u64, ..PaiceCounts::default() };
        for (i, a) in words.iter().enumerate() {
            for b in words.iter().skip(i + 1) {
                match (a.0 == b.0, a.1 == b.1) {
                    (true, same_stem) => {
                        c.gdmt += 1;
                        c.gumt += u64::from(!same_stem);
                    }
                    (false, same_stem) => {
                        c.gdnt += 1;
                        c.gwmt += u64::from(same_stem);
                    }
                }
            }
        }
        c
    }

    #[test]
    fn paice_indices_on_a_hand_worked_example() {
        // Hand-worked from the definitions of UI and OI in Paice (SIGIR 1994).
        // (The paper's own worked example could not be reconstructed from memory.)
        // Concepts A = {a1, a2, a3}, B = {b1, b2}, C = {c1}; stems:
        //   a1 → x, a2 → x, a3 → y, b1 → y, b2 → z, c1 → x.   W = 6.
        // GDMT = ½(3·2) + ½(2·1) + 0 = 3 + 1 = 4
        // GUMT: A splits {x: 2, y: 1} → ½(2·1 + 1·2) = 2; B {y, z} → 1; C → 0. = 3
        // UI = 3/4 = 0.75
        // GDNT = ½(3·3 + 2·4 + 1·5) = ½·22 = 11   (and 4 + 11 = 15 = C(6,2))
        // GWMT: x = {a1, a2, c1} → ½(2·1 + 1·2) = 2; y = {a3, b1} → 1; z → 0. = 3
        // OI = 3/11; SW = (3/11)/(3/4) = 4/11
        let (a, b, c, x, y, z) = (0, 1, 2, 10, 11, 12);
        let words = [(a, x), (a, x), (a, y), (b, y), (b, z), (c, x)];
        let counts = PaiceCounts::from_assignments(&words);
        assert_eq!(counts, PaiceCounts { words: 6, gdmt: 4, gumt: 3, gdnt: 11, gwmt: 3 });
        assert_eq!(counts, by_pairs(&words));
        assert_relative_eq!(counts.understemming().expect("merges desired"), 0.75);
        assert_relative_eq!(counts.overstemming().expect("non-merges desired"), 3.0 / 11.0);
        assert_relative_eq!(counts.stemming_weight().expect("UI > 0"), 4.0 / 11.0);
    }

    #[test]
    fn extremes_of_the_indices() {
        // Every word its own stem: no merge achieved (UI = 1), none wrong (OI = 0).
        let words = [(0, 0), (0, 1), (1, 2), (1, 3)];
        let c = PaiceCounts::from_assignments(&words);
        assert_eq!((c.understemming(), c.overstemming()), (Some(1.0), Some(0.0)));
        // Everything one stem: UI = 0, OI = 1, SW undefined.
        let words = [(0, 7), (0, 7), (1, 7), (1, 7)];
        let c = PaiceCounts::from_assignments(&words);
        assert_eq!((c.understemming(), c.overstemming()), (Some(0.0), Some(1.0)));
        assert_eq!(c.stemming_weight(), None);
        // One concept only: no desired non-merge, OI undefined.
        let c = PaiceCounts::from_assignments(&[(0, 0), (0, 1)]);
        assert_eq!(c.overstemming(), None);
        assert_eq!(PaiceCounts::from_assignments(&[]).understemming(), None);
    }

    #[test]
    fn counts_match_pair_enumeration_on_random_assignments() {
        // The count formulas are algebraic rewrites of the pair definitions;
        // check them on random data against the pair enumeration.
        let mut rng = ChaCha8Rng::seed_from_u64(7);
        for _ in 0..50 {
            let n = rng.gen_range(0..60);
            let words: Vec<(usize, usize)> =
                (0..n).map(|_| (rng.gen_range(0..8), rng.gen_range(0..8))).collect();
            assert_eq!(PaiceCounts::from_assignments(&words), by_pairs(&words));
        }
    }

    fn list(rows: &[(&str, &str)]) -> LemmaList {
        LemmaList {
            rows: rows.iter().map(|(f, l)| (f.to_string(), l.to_string())).collect(),
            without_lemma: 0,
        }
    }

    #[test]
    fn groups_drop_ambiguous_forms_join_dutch_lemmas_and_ignore_lemma_case() {
        let groups = WordGroups::from_list(&list(&[
            ("Kloosterorden", "klooster_orde"),
            ("kloosterorde", "Kloosterorde"),
            ("saw", "see"),
            ("sees", "see"),
            ("saw", "saw"),
            ("sees", "see"),
        ]));
        assert_eq!(groups.lemmas, ["kloosterorde", "see"]);
        assert_eq!(
            groups.words,
            [
                ("Kloosterorden".to_string(), 0),
                ("kloosterorde".to_string(), 0),
                ("sees".to_string(), 1)
            ]
        );
        assert_eq!(groups.ambiguous_forms, 1);
    }

    #[test]
    fn figures_name_the_offenders() {
        // Hand-made: "run" is split in three (ran alone, Running dropped),
        // "univers" merges two concepts.
        let groups = WordGroups::from_list(&list(&[
            ("runs", "run"),
            ("run", "run"),
            ("ran", "run"),
            ("Running", "run"),
            ("university", "university"),
            ("universe", "universe"),
            ("cat", "cat"),
            ("cats", "cat"),
        ]));
        let stems: Vec<String> =
            ["run", "run", "ran", "", "univers", "univers", "cat", "cat"].map(String::from).into();
        let f = figures(&groups, &stems, 5);
        // Groups ≥ 2 words: run (4 words, 3 classes), cat (2 words, 1 class).
        assert_eq!(f.multi_word_groups, 2);
        assert_relative_eq!(f.fully_conflated.expect("groups"), 0.5);
        assert_relative_eq!(f.mean_stems_per_group.expect("groups"), 2.0);
        assert_eq!(f.words_without_terms, 1);
        // GUMT: run {run: 2, ran: 1, (dropped): 1} → ½(16 − 6) = 5; GDMT = 6 + 1 = 7.
        assert_eq!((f.counts.gumt, f.counts.gdmt), (5, 7));
        // GWMT: univers {university, universe} → 1.
        assert_eq!(f.counts.gwmt, 1);
        assert_eq!(f.worst_splits.len(), 1);
        let split = &f.worst_splits[0];
        assert_eq!((split.lemma.as_str(), split.words), ("run", 4));
        let stems: Vec<(&str, usize)> =
            split.stems.iter().map(|s| (s.stem.as_str(), s.count)).collect();
        assert_eq!(stems, [("run", 2), ("", 1), ("ran", 1)]);
        assert_eq!(f.worst_merges.len(), 1);
        assert_eq!(f.worst_merges[0].stem, "univers");
        let lemmas: Vec<&str> = f.worst_merges[0].lemmas.iter().map(|l| l.stem.as_str()).collect();
        assert_eq!(lemmas, ["universe", "university"]);
    }
}
