#!/bin/sh
# Seed each fuzz target's corpus (fuzz/corpus/TARGET, git-ignored) from the
# repository's fixtures. Run from anywhere; idempotent.
set -eu
root=$(cd "$(dirname "$0")/.." && pwd)
c="$root/fuzz/corpus"
mkdir -p "$c/corpus_jsonl" "$c/corpus_csv" "$c/queries" "$c/judgments_csv" \
  "$c/judgments_columns" "$c/runs" "$c/chain_file" "$c/judge_resume" "$c/analysis"
n=0
# seed TARGET FILE [STRIP]: copy FILE's first 64 lines (libFuzzer's inputs are
# small) into TARGET's corpus; STRIP drops the first STRIP bytes (the part
# the target puts back itself).
seed() {
  n=$((n + 1))
  head -n 64 "$2" | tail -c +"$(( ${3:-0} + 1 ))" > "$c/$1/seed-$n"
}
for f in "$root"/tests/fixtures/pool/corpus.jsonl "$root"/tests/fixtures/stemming/posts.jsonl \
  "$root"/tests/fixtures/html/bench/posts.jsonl "$root"/corpora/demo/posts.jsonl; do
  seed corpus_jsonl "$f" 1
  # The same posts one per line are also texts for the chains.
  i=0
  head -n 200 "$f" | sed -n 's/.*"text": *"\([^"]*\)".*/\1/p' | while IFS= read -r t; do
    i=$((i + 1)); printf '%s' "$t" > "$c/analysis/seed-$n-$i"
  done
done
printf 'd1,"Ferry delays, again",en\nd2,Fähre Verspätung,de\n"d 3","two\nlines",\n' > "$c/corpus_csv/seed-csv1"
printf '#id;text;lang\r\nd1;Hello world;en\r\n' > "$c/corpus_csv/seed-csv2"
for f in "$root"/tests/fixtures/*/queries.csv "$root"/tests/fixtures/html/bench/queries.csv \
  "$root"/judgments/demo/queries.csv; do
  seed queries "$f"
done
for f in "$root"/tests/fixtures/*/qrels.csv "$root"/tests/fixtures/html/bench/qrels.csv \
  "$root"/judgments/demo/qrels.csv; do
  seed judgments_csv "$f" 22
  seed judge_resume "$f"
  # The same pairs in the four-column layout.
  n=$((n + 1))
  head -n 64 "$f" | tail -n +2 | awk -F, '{print $1, 0, $2, $3}' > "$c/judgments_columns/seed-$n"
  cp "$c/judgments_columns/seed-$n" "$c/judge_resume/seed-$n"
done
printf 'query_id,doc_id,grade\nq1,d1,2\nq1,d2' > "$c/judge_resume/seed-torn"
printf 'query_id;doc_id;grade\r\n' > "$c/judge_resume/seed-header"
for f in "$root"/tests/fixtures/*/run_*.csv; do
  seed runs "$f"
done
for f in "$root"/chains/*.toml; do
  n=$((n + 1)); cp "$f" "$c/chain_file/seed-$n"
done
echo "seeded $(find "$c" -type f | wc -l) files under $c"
