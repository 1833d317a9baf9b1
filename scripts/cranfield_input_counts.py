"""Count what the input readers must find in the shared Cranfield files.

Reads ../shared/data/cranfield (relative to the crate root) with Python's own
csv and json modules, an implementation independent of the Rust readers, and
prints JSON that src/input/{corpus,queries,judgments}.rs tests compare with:

    python3 scripts/cranfield_input_counts.py > tests/fixtures/input/cranfield_counts.json
"""

import csv
import json
import os
from collections import Counter

root = os.path.join(os.path.dirname(__file__), "..", "..", "shared", "data", "cranfield")

with open(os.path.join(root, "qrels.csv"), newline="", encoding="utf-8") as f:
    qrels = list(csv.DictReader(f))
with open(os.path.join(root, "queries.csv"), newline="", encoding="utf-8") as f:
    queries = list(csv.DictReader(f))
with open(os.path.join(root, "docs.jsonl"), encoding="utf-8") as f:
    docs = [json.loads(line) for line in f if line.strip()]

grades = Counter(int(r["grade"]) for r in qrels)
print(json.dumps({
    "judged_pairs": len({(r["query_id"], r["doc_id"]) for r in qrels}),
    "judged_queries": len({r["query_id"] for r in qrels}),
    "max_grade": max(grades),
    "grade_counts": {str(g): grades[g] for g in sorted(grades)},
    "first_judgment": [qrels[0]["query_id"], qrels[0]["doc_id"], int(qrels[0]["grade"])],
    "queries": len(queries),
    "first_query": [queries[0]["query_id"], queries[0]["text"]],
    "last_query_id": queries[-1]["query_id"],
    "docs": len(docs),
    "empty_docs": sorted((str(d["id"]) for d in docs if not d["text"]), key=int),
    "docs_text_chars": sum(len(d["text"]) for d in docs),
}, indent=1, ensure_ascii=False))
