#!/usr/bin/env python3
"""Reference blocks of the Philox4x64-10 generator for src/stats/stream.rs.

Writes tests/fixtures/stats/philox.json: for each (counter, key), the four
64-bit words of the Philox4x64-10 block, as numpy's `Philox` bit generator
computes them (Salmon et al., SC 2011). numpy increments its counter before
each block, so the block of counter c is the first output of a generator
started at counter c - 1 (with borrow across the four words).

The first case, counter 0 and key 0, is also a known-answer vector of the
authors' Random123 library (16554d9eca36314c db20fe9d672d0fdc
d7e772cee186176b 7e68b68aec7ba23b; from memory, and numpy agrees).

Usage (from the crate root):
    pip install numpy
    python3 scripts/philox_fixture.py
"""

import json
import os

import numpy as np

MASK = 2**64 - 1
OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "tests", "fixtures", "stats", "philox.json")

CASES = [
    ([0, 0, 0, 0], [0, 0]),
    ([MASK, MASK, MASK, MASK], [MASK, MASK]),
    ([0x243F6A8885A308D3, 0x13198A2E03707344, 0xA4093822299F31D0, 0x082EFA98EC4E6C89], [0x452821E638D01377, 0xBE5466CF34E90C6C]),
    # The streams postassay draws: counter (block, number, 0, 0), key (seed, purpose).
    ([0, 0, 0, 0], [42, 1]),
    ([0, 9999, 0, 0], [42, 1]),
    ([3, 17, 0, 0], [42, 2]),
    ([12345, 2**32 + 5, 0, 0], [7, 2]),
]


def block(counter, key):
    as_int = sum(c << (64 * i) for i, c in enumerate(counter))
    before = (as_int - 1) % 2**256
    start = [(before >> (64 * i)) & MASK for i in range(4)]
    gen = np.random.Philox(counter=np.array(start, dtype=np.uint64), key=np.array(key, dtype=np.uint64))
    return [int(w) for w in gen.random_raw(4)]


def main():
    cases = [
        {
            "counter": [f"{c:016x}" for c in counter],
            "key": [f"{k:016x}" for k in key],
            "words": [f"{w:016x}" for w in block(counter, key)],
        }
        for counter, key in CASES
    ]
    with open(OUT, "w", encoding="utf-8", newline="\n") as f:
        json.dump(cases, f, indent=1)
        f.write("\n")
    print(f"numpy {np.__version__}: wrote {len(cases)} cases to {os.path.normpath(OUT)}")


if __name__ == "__main__":
    main()
