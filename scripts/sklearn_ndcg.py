#!/usr/bin/env python3
"""Reference nDCG@k values for src/eval/ndcg.rs from scikit-learn's ndcg_score.

Writes tests/fixtures/eval/sklearn_ndcg.json, read by the unit test
`matches_scikit_learn_ndcg_score` in src/eval/ndcg.rs.

Usage (from the crate root):
    pip install scikit-learn numpy
    python3 scripts/sklearn_ndcg.py

Each case is one query whose judged documents are all ranked (so
scikit-learn's ideal ranking, built from y_true, equals ours, built from all
judged documents). scikit-learn takes gains directly, so the exponential
gain is passed as 2^g - 1 and the linear gain as g. Scores are distinct
(a shuffled 0.5, 1.5, 2.5, ...: exact in binary), because scikit-learn
averages the gain over tied scores while the bench breaks ties by rank
order. The generator is seeded, so the output is reproducible.
"""

import json
import os

import numpy as np
import sklearn
from sklearn.metrics import ndcg_score

SEED = 20240607
CASES = 36
OUT = os.path.join(
    os.path.dirname(os.path.abspath(__file__)),
    "..",
    "tests",
    "fixtures",
    "eval",
    "sklearn_ndcg.json",
)


def main():
    rng = np.random.default_rng(SEED)
    cases = []
    for i in range(CASES):
        n_docs = int(rng.integers(2, 31))
        max_grade = int(rng.integers(1, 5))
        grades = rng.integers(0, max_grade + 1, size=n_docs)
        if grades.max() == 0:
            grades[int(rng.integers(0, n_docs))] = max_grade
        scores = rng.permutation(n_docs) + 0.5
        # k below, at and above the number of ranked documents.
        k = [1, 3, 5, 10, 20, n_docs, n_docs + 7][i % 7]
        gain = "exp" if i % 2 == 0 else "linear"
        y_true = (2.0**grades - 1.0) if gain == "exp" else grades.astype(float)
        expected = ndcg_score([y_true], [scores], k=k)
        cases.append(
            {
                "grades": [int(g) for g in grades],
                "scores": [float(s) for s in scores],
                "k": int(k),
                "gain": gain,
                "expected": float(expected),
            }
        )
    out = {
        "generator": "scripts/sklearn_ndcg.py",
        "library": f"scikit-learn {sklearn.__version__} sklearn.metrics.ndcg_score",
        "seed": SEED,
        "cases": cases,
    }
    os.makedirs(os.path.dirname(OUT), exist_ok=True)
    with open(OUT, "w", encoding="utf-8") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
