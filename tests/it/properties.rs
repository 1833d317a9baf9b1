//! Properties of the metric and statistics core (issue 17), checked with
//! proptest on generated rankings, judgments and per-query values. Each
//! reference below is a naive implementation written here from the
//! definition it names (metrics.md of the spec, and the papers cited there),
//! not a copy of the library's code.

use postassay::eval::{
    average_precision, bpref, err_at, evaluate, ndcg_at, parse_metric_list, precision_at,
    query_population, recall_at, reciprocal_rank, unjudged_at, EvalSettings, Gain,
};
use postassay::ids::QueryId;
use postassay::input::{read_run, Judgments, RankedDoc, Run};
use postassay::stats::{
    bootstrap_ci, compare_with_baseline, holm, randomization_test, StatSettings,
};
use proptest::prelude::*;

/// A query's judged grades (0..=4) and a ranking of some of those posts
/// (in a generated order) mixed with unjudged posts (`None`).
fn judged_and_ranked() -> impl Strategy<Value = (Vec<u32>, Vec<Option<u32>>)> {
    prop::collection::vec(0u32..=4, 1..25).prop_flat_map(|judged| {
        let n = judged.len();
        (
            Just(judged),
            // Which judged posts the ranking holds, in which order, and
            // where unjudged posts go.
            Just((0..n).collect::<Vec<usize>>()).prop_shuffle(),
            0..=n,
            prop::collection::vec(any::<bool>(), 0..10),
        )
            .prop_map(|(judged, order, take, unjudged_after)| {
                let mut ranked: Vec<Option<u32>> =
                    order.iter().take(take).map(|&i| Some(judged[i])).collect();
                for (i, u) in unjudged_after.iter().enumerate() {
                    if *u {
                        ranked.insert(i.min(ranked.len()), None);
                    }
                }
                (judged, ranked)
            })
    })
}

/// Naive p@k (metrics.md; Manning, Raghavan & Schütze 2008, §8.3): the
/// relevant posts among the first k positions, over k.
fn naive_precision(ranked: &[Option<u32>], t: u32, k: usize) -> f64 {
    if k == 0 {
        return 0.0;
    }
    let mut hits = 0;
    for i in 0..k {
        if let Some(Some(g)) = ranked.get(i) {
            if *g >= t {
                hits += 1;
            }
        }
    }
    f64::from(hits) / k as f64
}

/// Naive AP (metrics.md; Manning et al. 2008, §8.4): the mean over the R
/// relevant posts of p@(its rank), a relevant post not retrieved adding 0.
fn naive_ap(ranked: &[Option<u32>], t: u32, r: usize) -> f64 {
    if r == 0 {
        return 0.0;
    }
    let mut sum = 0.0;
    for (i, g) in ranked.iter().enumerate() {
        if g.is_some_and(|g| g >= t) {
            sum += naive_precision(ranked, t, i + 1);
        }
    }
    sum / r as f64
}

/// R and N of a query for threshold t.
fn r_and_n(judged: &[u32], t: u32) -> (usize, usize) {
    let r = judged.iter().filter(|&&g| g >= t).count();
    (r, judged.len() - r)
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 512, ..ProptestConfig::default() })]

    /// Every metric lies in [0, 1] (metrics.md defines each as a share or
    /// a normalised gain).
    #[test]
    fn every_metric_is_within_its_range(
        (judged, ranked) in judged_and_ranked(),
        t in 1u32..=3,
        k in 0usize..30,
    ) {
        let (r, n) = r_and_n(&judged, t);
        let gmax = judged.iter().copied().max().unwrap_or(0).max(1);
        let values = [
            ("ndcg exp", ndcg_at(&ranked, &judged, k, Gain::Exponential)),
            ("ndcg linear", ndcg_at(&ranked, &judged, k, Gain::Linear)),
            ("ap", average_precision(&ranked, t, r)),
            ("p@k", precision_at(&ranked, t, k)),
            ("recall@k", recall_at(&ranked, t, k, r)),
            ("rr", reciprocal_rank(&ranked, t)),
            ("bpref", bpref(&ranked, t, r, n)),
            ("err", err_at(&ranked, k, gmax)),
            ("unjudged", unjudged_at(&ranked, k)),
        ];
        for (name, v) in values {
            prop_assert!((0.0..=1.0).contains(&v), "{name} = {v}");
        }
    }

    /// AP, p@k and recall@k equal the naive references above (the sums run
    /// in the same order, so equality is exact up to the last bit).
    #[test]
    fn ap_precision_recall_match_naive_references(
        (judged, ranked) in judged_and_ranked(),
        t in 1u32..=3,
        k in 0usize..30,
    ) {
        let (r, _) = r_and_n(&judged, t);
        prop_assert!((average_precision(&ranked, t, r) - naive_ap(&ranked, t, r)).abs() < 1e-12);
        prop_assert_eq!(precision_at(&ranked, t, k), naive_precision(&ranked, t, k));
        let hits = ranked.iter().take(k).filter(|g| g.is_some_and(|g| g >= t)).count();
        let recall = if r == 0 { 0.0 } else { hits as f64 / r as f64 };
        prop_assert_eq!(recall_at(&ranked, t, k, r), recall);
    }

    /// The ideal ranking (every judged post by grade descending) has
    /// nDCG@k = 1 for every k ≥ 1 and both gains (Järvelin & Kekäläinen
    /// 2002: nDCG is DCG over the ideal DCG).
    #[test]
    fn ndcg_of_the_ideal_ranking_is_one(
        mut judged in prop::collection::vec(0u32..=4, 1..25),
        k in 1usize..30,
    ) {
        prop_assume!(judged.iter().any(|&g| g > 0));
        let ideal: Vec<Option<u32>> = {
            judged.sort_unstable_by(|a, b| b.cmp(a));
            judged.iter().map(|&g| Some(g)).collect()
        };
        for gain in [Gain::Exponential, Gain::Linear] {
            prop_assert_eq!(ndcg_at(&ideal, &judged, k, gain), 1.0);
        }
    }

    /// Reordering posts of the same grade leaves nDCG unchanged, through
    /// `evaluate` on a run and judgments (the gain depends on grades only).
    #[test]
    fn ndcg_ignores_the_order_of_tied_grades(
        grades in prop::collection::vec(0u32..=3, 2..15),
        swaps in prop::collection::vec((0usize..15, 0usize..15), 0..10),
    ) {
        prop_assume!(grades.iter().any(|&g| g > 0));
        let judgments = Judgments::from_triples(
            grades.iter().enumerate().map(|(i, &g)| ("q", format!("d{i:02}"), g)),
        );
        let settings = EvalSettings::default();
        let population = query_population(&judgments, &settings);
        let metrics = parse_metric_list("ndcg@5,ndcg@10").expect("metric list");
        let score = |order: &[usize]| {
            let mut run = Run::default();
            run.by_query.insert(
                "q".into(),
                order
                    .iter()
                    .map(|i| RankedDoc { doc: format!("d{i:02}").into(), score: None })
                    .collect(),
            );
            evaluate(&run, &judgments, &population, &metrics, &settings)
                .expect("evaluates")
                .per_query
        };
        let order: Vec<usize> = (0..grades.len()).collect();
        let mut swapped = order.clone();
        for (a, b) in swaps {
            let (a, b) = (a % grades.len(), b % grades.len());
            if grades[swapped[a]] == grades[swapped[b]] {
                swapped.swap(a, b);
            }
        }
        prop_assert_eq!(score(&order), score(&swapped));
    }

    /// A run file lists a query's posts by rank ascending, equal ranks in
    /// doc id byte order, whatever the order of its lines (formats.md,
    /// "Runs").
    #[test]
    fn run_ties_are_broken_by_doc_id(
        rows in prop::collection::btree_map("[a-zA-Z0-9_]{1,6}", -3i64..4, 1..20)
            .prop_flat_map(|m| Just(m.into_iter().collect::<Vec<_>>()).prop_shuffle()),
    ) {
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join("run.csv");
        let mut text = String::from("query_id,doc_id,rank\n");
        for (doc, rank) in &rows {
            text.push_str(&format!("q,{doc},{rank}\n"));
        }
        std::fs::write(&path, text).expect("run written");
        let run = read_run(&path).expect("run reads");
        let read: Vec<String> =
            run.by_query[&QueryId::from("q")].iter().map(|d| d.doc.as_str().to_string()).collect();
        let mut expected = rows.clone();
        expected.sort_by(|a, b| a.1.cmp(&b.1).then_with(|| a.0.as_bytes().cmp(b.0.as_bytes())));
        let expected: Vec<String> = expected.into_iter().map(|(d, _)| d).collect();
        prop_assert_eq!(read, expected);
    }

    /// Holm-adjusted p-values (Holm 1979) are at least the raw ones, at most
    /// 1, in the same order as the raw ones, and equal the step-down formula
    /// computed naively here over every index.
    #[test]
    fn holm_is_monotone_and_not_below_raw(
        ps in prop::collection::vec(prop::option::weighted(0.9, 0.0f64..=1.0), 0..12),
    ) {
        let adjusted = holm(&ps);
        prop_assert_eq!(adjusted.len(), ps.len());
        let present: Vec<f64> = ps.iter().flatten().copied().collect();
        let m = present.len();
        for (i, (p, a)) in ps.iter().zip(&adjusted).enumerate() {
            prop_assert_eq!(p.is_some(), a.is_some());
            let (Some(p), Some(a)) = (p, a) else { continue };
            prop_assert!(*a >= *p && *a <= 1.0, "p {} adjusted {}", p, a);
            // Naive: max over every p_j ≤ p_i (ties count as before) of
            // (m − rank_j + 1) p_j, rank_j = 1 + the number of p's below p_j.
            let naive = present
                .iter()
                .filter(|&&q| q <= *p)
                .map(|&q| {
                    let below = present.iter().filter(|&&x| x < q).count();
                    ((m - below) as f64 * q).min(1.0)
                })
                .fold(0.0f64, f64::max);
            prop_assert_eq!(*a, naive, "index {}", i);
            for (q, b) in ps.iter().zip(&adjusted) {
                if let (Some(q), Some(b)) = (q, b) {
                    if p <= q {
                        prop_assert!(a <= b, "p {} ≤ {} but adjusted {} > {}", p, q, a, b);
                    }
                }
            }
        }
    }

    /// The exact randomization p-value (metrics.md: every one of the 2^n
    /// sign assignments, n ≤ 16) equals a brute-force enumeration written
    /// here, for n ≤ 12. Values are multiples of 1/16, as metric values
    /// often are, so every mean is exact and the comparison needs no
    /// tolerance argument.
    #[test]
    fn exact_randomization_matches_brute_force(
        pairs in prop::collection::vec((0u32..=16, 0u32..=16), 2..=12),
    ) {
        let system: Vec<f64> = pairs.iter().map(|p| f64::from(p.0) / 16.0).collect();
        let baseline: Vec<f64> = pairs.iter().map(|p| f64::from(p.1) / 16.0).collect();
        let d: Vec<f64> = system.iter().zip(&baseline).map(|(s, b)| s - b).collect();
        let n = d.len();
        let observed = (d.iter().sum::<f64>() / n as f64).abs();
        let mut count = 0u64;
        for mask in 0u64..(1 << n) {
            let sum: f64 = d
                .iter()
                .enumerate()
                .map(|(i, v)| if mask >> i & 1 == 1 { -v } else { *v })
                .sum();
            if (sum / n as f64).abs() >= observed - 1e-12 {
                count += 1;
            }
        }
        let brute = count as f64 / (1u64 << n) as f64;
        prop_assert_eq!(randomization_test(&system, &baseline, 0, 1), Some(brute));
    }

    /// The same inputs and seed give the same bytes: every statistic of a
    /// comparison (sampled randomization test for n > 16, bootstrap) printed
    /// twice is identical.
    #[test]
    fn same_inputs_and_seed_give_the_same_bytes(
        values in prop::collection::vec((0.0f64..=1.0, 0.0f64..=1.0), 17..40),
        seed in any::<u64>(),
    ) {
        let system: Vec<f64> = values.iter().map(|v| v.0).collect();
        let baseline: Vec<f64> = values.iter().map(|v| v.1).collect();
        let settings = StatSettings {
            seed,
            permutations: 500,
            bootstrap_resamples: 200,
            ..StatSettings::default()
        };
        let once = format!(
            "{:?} {:?}",
            compare_with_baseline(&baseline, &[&system, &baseline], &settings),
            bootstrap_ci(&system, settings.bootstrap_resamples, seed)
        );
        let twice = format!(
            "{:?} {:?}",
            compare_with_baseline(&baseline, &[&system, &baseline], &settings),
            bootstrap_ci(&system, settings.bootstrap_resamples, seed)
        );
        prop_assert_eq!(once, twice);
    }
}
