#!/usr/bin/env python3
"""Reference percentile-bootstrap intervals for src/stats/bootstrap.rs.

Writes tests/fixtures/stats/scipy_bootstrap.json: for each case, the values,
the 95% percentile-bootstrap interval of their mean from
scipy.stats.bootstrap (method="percentile", 10,000 resamples, a seeded numpy
generator) and the bootstrap standard error of the mean
(sqrt(sum((x - mean)^2) / n) / sqrt(n), the spread of the resample means).
Our interval uses other random draws, so the test allows Monte Carlo error
(see the test for the bound).

Every value is rounded to 4 decimals so that it parses to the same double in
Rust as here, and the generator is seeded, so the output is reproducible.

Usage (from the crate root):
    pip install scipy numpy
    python3 scripts/scipy_bootstrap.py
"""

import json
import math
import os

import numpy as np
import scipy
from scipy import stats

SEED = 20261204
RESAMPLES = 10_000
OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "tests", "fixtures", "stats", "scipy_bootstrap.json")


def cases(rng):
    # Metric-like values in [0, 1]; a skewed one with many zeros (like MRR or
    # nDCG on hard queries); per-query differences in [-1, 1]; tiny and large n.
    yield "uniform_20", rng.uniform(0, 1, 20)
    yield "uniform_200", rng.uniform(0, 1, 200)
    yield "skewed_zeros_60", np.where(rng.uniform(0, 1, 60) < 0.55, 0.0, 1.0 / rng.integers(1, 11, 60))
    yield "differences_100", np.clip(rng.normal(0.03, 0.25, 100), -1, 1)
    yield "differences_1000", np.clip(rng.normal(-0.01, 0.3, 1000), -1, 1)
    yield "two_values_5", np.array([0.0, 1.0, 1.0, 0.0, 1.0])


def main():
    rng = np.random.default_rng(SEED)
    out = []
    for name, raw in cases(rng):
        values = [round(float(v), 4) for v in raw]
        x = np.array(values)
        res = stats.bootstrap(
            (x,),
            np.mean,
            n_resamples=RESAMPLES,
            confidence_level=0.95,
            method="percentile",
            rng=np.random.default_rng(SEED + len(values)),
        )
        se = math.sqrt(float(np.sum((x - x.mean()) ** 2)) / len(x)) / math.sqrt(len(x))
        out.append(
            {
                "name": name,
                "values": values,
                "low": float(res.confidence_interval.low),
                "high": float(res.confidence_interval.high),
                "bootstrap_se": se,
            }
        )
    with open(OUT, "w", encoding="utf-8", newline="\n") as f:
        json.dump({"scipy": scipy.__version__, "resamples": RESAMPLES, "cases": out}, f, indent=1)
        f.write("\n")
    print(f"scipy {scipy.__version__}: wrote {len(out)} cases to {os.path.normpath(OUT)}")


if __name__ == "__main__":
    main()
