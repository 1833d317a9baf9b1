#!/usr/bin/env python3
"""Generate INVENTED inputs for timing and profiling the statistics.

Two shapes, both written outside the repository (into OUT_DIR):

  score  judgments.csv, queries.csv (lang, tags) and five run files
         run1.csv .. run5.csv for 10,000 queries (20 hits each), for
         `postassay score` at the size of issue 14's goal;
  run    posts.jsonl (13,014 posts), queries.csv (13,090 queries in eleven
         languages, one tag each) and qrels.csv (one relevant post per
         query), for `postassay run` at the size of a large multilingual
         bench (528 breakdown tests with the four built-in chains).

Every word is made up from syllables of the language's script; nothing here
is real text. Python 3 standard library only; one random.Random with a
fixed seed per shape, so two runs give byte-identical files.

Usage (from anywhere):
    python3 scripts/stats_bench_data.py score /tmp/stats-bench/score
    python3 scripts/stats_bench_data.py run /tmp/stats-bench/run [QUERIES]
then, for example,
    postassay score --judgments J --queries Q --run r1=run1.csv ... --out DIR
    postassay run --corpus posts.jsonl --queries queries.csv \
        --judgments qrels.csv --out DIR
"""

import json
import os
import random
import sys

LANGS = ["ar", "de", "el", "en", "es", "hi", "ru", "th", "tr", "vi", "zh"]
TAGS = ["who", "what", "when", "where", "why", "how", "which", "count", "name", "place", "other"]
# Syllables per script: enough to make distinct, pronounceable-looking words.
SYLLABLES = {
    "latin": ["ka", "lo", "mi", "ne", "sa", "tu", "ri", "po", "de", "ba", "gu", "fe", "ha", "zi", "wo"],
    "ar": ["با", "تي", "سو", "لا", "مي", "نو", "ري", "كا", "دو", "في"],
    "el": ["κα", "λο", "μι", "νε", "σα", "του", "ρι", "πο", "δε", "βα"],
    "hi": ["का", "लो", "मि", "ने", "सा", "तु", "रि", "पो", "दे", "बा"],
    "ru": ["ка", "ло", "ми", "не", "са", "ту", "ри", "по", "де", "ба"],
    "th": ["กา", "โล", "มิ", "เน", "สา", "ตู", "ริ", "โป", "เด", "บา"],
    "zh": ["山", "水", "人", "日", "月", "木", "火", "土", "金", "石", "天", "风"],
}


def script_of(lang):
    return lang if lang in SYLLABLES else "latin"


def vocabulary(rng, lang, size):
    """`size` distinct made-up words of the language's script."""
    syl = SYLLABLES[script_of(lang)]
    words = set()
    while len(words) < size:
        words.add("".join(rng.choice(syl) for _ in range(rng.randint(2, 4))))
    return sorted(words)


def zipf_pick(rng, words):
    """A word with probability roughly proportional to 1 / rank."""
    return words[min(int(len(words) ** rng.random()) - 1, len(words) - 1)]


def write_csv(path, header, rows):
    with open(path, "w", encoding="utf-8", newline="\n") as f:
        f.write(header + "\n")
        for row in rows:
            f.write(",".join(str(x) for x in row) + "\n")


def make_score(out, queries=10_000, systems=5, depth=20):
    rng = random.Random(20261204)
    qrels, query_rows = [], []
    runs = [[] for _ in range(systems)]
    for q in range(1, queries + 1):
        qid = f"q{q:05d}"
        lang = rng.choice(LANGS)
        tags = ";".join(sorted(rng.sample(TAGS, rng.randint(0, 2))))
        query_rows.append((qid, f"query {q}", lang, tags))
        relevant = [(f"d{q:05d}_{i}", rng.randint(1, 3)) for i in range(rng.randint(1, 4))]
        judged_bad = [f"d{q:05d}_n{i}" for i in range(rng.randint(0, 3))]
        qrels += [(qid, d, g) for d, g in relevant] + [(qid, d, 0) for d in judged_bad]
        for s, run in enumerate(runs):
            # System s finds each relevant post with probability 0.5 + 0.05 s,
            # at a random rank; the rest of the list is unjudged filler.
            hits = [d for d, _ in relevant if rng.random() < 0.5 + 0.05 * s]
            hits += judged_bad[: rng.randint(0, len(judged_bad))]
            hits += [f"u{q:05d}_{s}_{i}" for i in range(depth - len(hits))]
            rng.shuffle(hits)
            run += [(qid, d, r, depth - r) for r, d in enumerate(hits, 1)]
    os.makedirs(out, exist_ok=True)
    write_csv(os.path.join(out, "judgments.csv"), "query_id,doc_id,grade", qrels)
    write_csv(os.path.join(out, "queries.csv"), "query_id,text,lang,tags", query_rows)
    for s, run in enumerate(runs, 1):
        write_csv(os.path.join(out, f"run{s}.csv"), "query_id,doc_id,rank,score", run)


def make_run(out, queries=13_090, posts=13_014):
    rng = random.Random(20261205)
    vocab = {lang: vocabulary(rng, lang, 3000) for lang in LANGS}
    post_rows = []
    for p in range(posts):
        lang = LANGS[p % len(LANGS)]
        words = [zipf_pick(rng, vocab[lang]) for _ in range(rng.randint(12, 40))]
        row = {"id": f"p{p:05d}", "text": " ".join(words)}
        if rng.random() < 0.5:
            row["lang"] = lang
        post_rows.append((row, words, lang))
    query_rows, qrels = [], []
    for q in range(1, queries + 1):
        p = rng.randrange(posts)
        row, words, lang = post_rows[p]
        terms = rng.sample(words, min(len(words), rng.randint(2, 5)))
        terms.append(zipf_pick(rng, vocab[lang]))
        qid = f"q{q:05d}"
        query_rows.append((qid, " ".join(terms), lang, rng.choice(TAGS)))
        qrels.append((qid, row["id"], 1))
    os.makedirs(out, exist_ok=True)
    with open(os.path.join(out, "posts.jsonl"), "w", encoding="utf-8", newline="\n") as f:
        for row, _, _ in post_rows:
            f.write(json.dumps(row, ensure_ascii=False) + "\n")
    write_csv(os.path.join(out, "queries.csv"), "query_id,text,lang,tags", query_rows)
    write_csv(os.path.join(out, "qrels.csv"), "query_id,doc_id,grade", qrels)


def main():
    if len(sys.argv) < 3 or sys.argv[1] not in ("score", "run"):
        print(__doc__, file=sys.stderr)
        return 2
    if sys.argv[1] == "score":
        make_score(sys.argv[2], *(int(a) for a in sys.argv[3:4]))
    else:
        make_run(sys.argv[2], *(int(a) for a in sys.argv[3:4]))
    return 0


if __name__ == "__main__":
    sys.exit(main())
