#!/usr/bin/env python3
"""Reference values for src/stats/ (paired t-test p-values and t quantiles).

Writes tests/fixtures/stats/scipy_stats.json, read by the unit tests in
src/stats/t_test.rs and src/stats/power.rs, and by tests/it/score.rs, which
feeds the case "score_fixture_mrr" through `postassay score`.

Usage (from the crate root):
    pip install scipy numpy
    python3 scripts/scipy_stats.py

Every random input value is rounded to 4 decimals so that it parses to the
same double in Rust as here (a 4-digit decimal is correctly rounded by any
parser), and the generator is seeded, so the output is reproducible. The
last case is not random: its values are the per-query reciprocal ranks (MRR,
Voorhees 1999) of the runs in tests/fixtures/score/scipy/, computed here
from those files (1 / position of the first relevant post; 0 when a run
returns nothing relevant), written as the shortest repr that round-trips.
"""

import csv
import json
import math
import os

import numpy as np
import scipy
from scipy import stats

SEED = 20240601
ALPHA = 0.05
POWER = 0.8
FIXTURES = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "tests", "fixtures")
OUT = os.path.join(FIXTURES, "stats", "scipy_stats.json")
# The `postassay score` fixture whose per-query MRR values make the last case.
SCORE_FIXTURE = os.path.join(FIXTURES, "score", "scipy")


def reciprocal_ranks(run_path, relevant):
    """Per evaluated query (byte order of ids), 1 / position of the first
    relevant post in the run (rank ascending, ties by doc_id), else 0."""
    ranked = {}
    with open(run_path, newline="", encoding="utf-8") as f:
        for row in csv.DictReader(f):
            ranked.setdefault(row["query_id"], []).append((int(row["rank"]), row["doc_id"]))
    out = []
    for q in sorted(relevant, key=lambda x: x.encode("utf-8")):
        docs = [d for _, d in sorted(ranked.get(q, []), key=lambda x: (x[0], x[1].encode("utf-8")))]
        out.append(next((1.0 / i for i, d in enumerate(docs, 1) if d in relevant[q]), 0.0))
    return out


def score_fixture_case():
    """MRR per query of tests/fixtures/score/scipy/{system,base}.csv."""
    relevant = {}
    with open(os.path.join(SCORE_FIXTURE, "qrels.csv"), newline="", encoding="utf-8") as f:
        for row in csv.DictReader(f):
            if int(row["grade"]) >= 1:
                relevant.setdefault(row["query_id"], set()).add(row["doc_id"])
    system = reciprocal_ranks(os.path.join(SCORE_FIXTURE, "system.csv"), relevant)
    baseline = reciprocal_ranks(os.path.join(SCORE_FIXTURE, "base.csv"), relevant)
    return ("score_fixture_mrr", system, baseline)


def metric_like(rng, n, lo=0.0, hi=1.0):
    """Per-query metric values in [lo, hi], 4 decimals."""
    return np.round(rng.uniform(lo, hi, n), 4)


def make_cases(rng):
    cases = []

    def add(name, system, baseline):
        cases.append((name, [float(x) for x in system], [float(x) for x in baseline]))

    # Plain random pairs over a range of query counts.
    for n in [2, 3, 4, 5, 7, 10, 16, 17, 25, 40, 60]:
        base = metric_like(rng, n)
        sys_ = np.clip(np.round(base + rng.normal(0.03, 0.15, n), 4), 0.0, 1.0)
        add(f"random_n{n}", sys_, base)

    # Many tied queries (difference exactly 0) mixed with a few changes.
    for n in [6, 20, 50]:
        base = metric_like(rng, n)
        sys_ = base.copy()
        changed = rng.choice(n, size=max(2, n // 5), replace=False)
        sys_[changed] = np.round(rng.uniform(0.0, 1.0, len(changed)), 4)
        add(f"mostly_ties_n{n}", sys_, base)

    # Many zero scores on both sides (queries a chain finds nothing for).
    for n in [12, 30]:
        base = metric_like(rng, n)
        sys_ = metric_like(rng, n)
        base[rng.random(n) < 0.4] = 0.0
        sys_[rng.random(n) < 0.4] = 0.0
        add(f"many_zeros_n{n}", sys_, base)

    # A large, consistent improvement (small p, tests the tail).
    n = 45
    base = metric_like(rng, n, 0.0, 0.5)
    sys_ = np.round(base + rng.uniform(0.1, 0.3, n), 4)
    add("strong_effect_n45", sys_, base)

    # Nearly identical systems (p close to 1).
    n = 33
    base = metric_like(rng, n)
    sys_ = base.copy()
    sys_[0] = round(sys_[0] + 0.0001, 4)
    sys_[1] = round(sys_[1] - 0.0001, 4)
    sys_[2] = round(sys_[2] + 0.0002, 4)
    add("nearly_equal_n33", sys_, base)

    # Only two queries with opposite differences.
    add("two_opposite", [0.5, 0.25], [0.25, 0.5])

    # Per-query MRR of a `postassay score` fixture (uses no random numbers,
    # so the cases above are unchanged by it).
    add(*score_fixture_case())
    return cases


def main():
    rng = np.random.default_rng(SEED)
    out_cases = []
    for name, system, baseline in make_cases(rng):
        n = len(system)
        d = np.asarray(system) - np.asarray(baseline)
        p = float(stats.ttest_rel(system, baseline).pvalue)
        t_alpha = float(stats.t.ppf(1.0 - ALPHA / 2.0, n - 1))
        t_power = float(stats.t.ppf(POWER, n - 1))
        sd = float(np.std(d, ddof=1))
        mdd = (t_alpha + t_power) * sd / math.sqrt(n)
        assert math.isfinite(p), name
        out_cases.append(
            {
                "name": name,
                "system": system,
                "baseline": baseline,
                "p_ttest_rel": p,
                "t_quantile_1_minus_alpha_over_2": t_alpha,
                "t_quantile_power": t_power,
                "sd_diff": sd,
                "min_detectable_difference": mdd,
            }
        )
    doc = {
        "generator": "scripts/scipy_stats.py",
        "scipy_version": scipy.__version__,
        "numpy_version": np.__version__,
        "seed": SEED,
        "alpha": ALPHA,
        "power": POWER,
        "p_ttest_rel": "scipy.stats.ttest_rel(system, baseline).pvalue (two-sided)",
        "t_quantile_1_minus_alpha_over_2": "scipy.stats.t.ppf(1 - alpha/2, n - 1)",
        "t_quantile_power": "scipy.stats.t.ppf(power, n - 1)",
        "sd_diff": "numpy.std(system - baseline, ddof=1)",
        "min_detectable_difference": "(t_quantile_1_minus_alpha_over_2 + t_quantile_power) * sd_diff / sqrt(n)",
        "cases": out_cases,
    }
    with open(OUT, "w", encoding="utf-8") as f:
        json.dump(doc, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
