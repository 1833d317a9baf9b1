#!/usr/bin/env python3
"""Export the top N words of a language from the `wordfreq` package (PyPI,
version 3.1.1) as a `word<TAB>count` list for postassay's hashtag splitter.

Usage: python3 scripts/wordfreq_export.py [LANG] [N] [OUT]
Defaults: en, 30000, tests/fixtures/analysis/hashtag/wordfreq_LANG.tsv
The committed lists (de en es fr it nl pt, built into the binary) were made
with N = 30000: `for l in de en es fr it nl pt; do python3
scripts/wordfreq_export.py $l 30000; done`.

Counts are wordfreq's frequencies scaled to a corpus of 10^9 tokens and
rounded (only ratios matter to the splitter). Words that contain a digit or no
letter are skipped. A word with an apostrophe is split at it and its count is
added to each piece (`don't` -> `don`, `t`), the convention
`WordFreqs::learn` follows, because an apostrophe never survives in a hashtag.
Output is sorted by count (descending), then word, so reruns are identical.

The exported list is derived from wordfreq's data, which is licensed
CC BY-SA 4.0 (see the package's README: attribution to wordfreq, Robyn Speer,
and its sources, including SUBTLEX by Brysbaert et al., OpenSubtitles 2018,
Google Books Ngrams, Wikipedia, the Leeds Internet Corpus and ParaCrawl).
"""

import re
import sys
from collections import Counter

import wordfreq


def main() -> None:
    lang = sys.argv[1] if len(sys.argv) > 1 else "en"
    n = int(sys.argv[2]) if len(sys.argv) > 2 else 30000
    out = sys.argv[3] if len(sys.argv) > 3 else f"tests/fixtures/analysis/hashtag/wordfreq_{lang}.tsv"
    counts: Counter = Counter()
    for word in wordfreq.top_n_list(lang, n, wordlist="large"):
        if any(ch.isdigit() for ch in word) or not any(ch.isalpha() for ch in word):
            continue
        count = round(wordfreq.word_frequency(word, lang, wordlist="large") * 1e9)
        if count <= 0:
            continue
        for piece in re.split(r"['\u2019]", word.lower()):
            if any(ch.isalpha() for ch in piece):
                counts[piece] += count
    rows = sorted(counts.items(), key=lambda kv: (-kv[1], kv[0]))
    with open(out, "w", encoding="utf-8", newline="\n") as f:
        for word, count in rows:
            f.write(f"{word}\t{count}\n")
    print(f"{out}: {len(rows)} words ({lang}, top {n})")


if __name__ == "__main__":
    main()
