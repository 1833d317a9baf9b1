#!/bin/bash
# Record every output postassay writes or prints on the demo bench (and on
# ../shared/data when it is there), then compare two such records byte for
# byte, masking only wall-clock figures. Used to prove that a refactoring
# changed no output.
#
#   scripts/compare_outputs.sh record BINARY DIR     # run BINARY, keep its outputs in DIR
#   scripts/compare_outputs.sh compare BEFORE AFTER  # diff two records (exit 1 on a difference)
#
# Run from the repository root (the demo bench and chain files are read
# from there). The record covers: run (default chains, a chain file,
# --redact, --vet when ../shared/data exists), score on the run files (with
# and without --queries), gate (pass, regression, missing chain, refusal;
# Markdown on stdout and --junit), pool, vet (--out and stdout, one section
# with a chain file), tokens (text, --trace, json), explain (text, json),
# and each command's stdout, stderr and exit code.
set -u

record() {
    bin=$1
    final=$2
    # Always write under the same path, so paths inside the outputs match
    # between two records; moved to DIR at the end.
    dir=/tmp/compare_outputs.work
    rm -rf "$dir" "$final"
    mkdir -p "$dir"
    data=../shared/data
    # Each step: NAME then the arguments; stdout, stderr and the exit code
    # go to DIR/NAME.{out,err,rc}.
    step() {
        name=$1
        shift
        "$bin" "$@" >"$dir/$name.out" 2>"$dir/$name.err"
        echo $? >"$dir/$name.rc"
    }
    cat >"$dir/stemmed.toml" <<'EOF'
[[chain]]
name = "posts"
tokenizer = "words"
steps = [{ step = "lowercase" }, { step = "stem", language = "en" }]
EOF
    cat >"$dir/unstemmed.toml" <<'EOF'
[[chain]]
name = "posts"
tokenizer = "words"
steps = [{ step = "lowercase" }]
EOF
    step run run --out "$dir/run"
    step run-redact run --redact --out "$dir/run-redact"
    step run-example run --chain-file chains/example.toml --out "$dir/run-example"
    step run-two run --chains standard,stemmed --out "$dir/run-two"
    step run-stemmed run --chain-file "$dir/stemmed.toml" --out "$dir/run-stemmed"
    step run-unstemmed run --chain-file "$dir/unstemmed.toml" --out "$dir/run-unstemmed"
    if [ -d "$data" ]; then
        step run-vet run --vet --out "$dir/run-vet"
        step run-vet-redact run --vet --redact --chains standard,hashtag --out "$dir/run-vet-redact"
        step vet vet --chains standard,stemmed,hashtag,routed --out "$dir/vet"
        step vet-stdout vet --chains standard,stemmed --sections conflation,segmentation --langs de,en
        step vet-unspaced vet --chain-file chains/unspaced.toml \
            --chains standard,words_dictionary,words_model,words_bigrams --sections unspaced \
            --out "$dir/vet-unspaced"
    fi
    runs=""
    for f in "$dir"/run/runs/*.csv; do
        n=$(basename "$f" .csv)
        runs="$runs --run $n=$f"
    done
    # shellcheck disable=SC2086
    step score score --judgments judgments/demo/qrels.csv $runs \
        --queries judgments/demo/queries.csv --out "$dir/score"
    # shellcheck disable=SC2086
    step score-noq score --judgments judgments/demo/qrels.csv $runs --out "$dir/score-noq"
    step gate-pass gate --baseline "$dir/run" --current "$dir/run-redact" --junit "$dir/gate-pass.xml"
    step gate-regress gate --baseline "$dir/run-stemmed/report.json" --current "$dir/run-unstemmed" \
        --max-drop 'ndcg@10=0.01' --max-drop-relative 'map=2' --max-drop '*=0.02' \
        --junit "$dir/gate-regress.xml"
    step gate-signif gate --baseline "$dir/run-stemmed" --current "$dir/run-unstemmed" \
        --require-significance --junit "$dir/gate-signif.xml"
    step gate-missing gate --baseline "$dir/run" --current "$dir/run-two" --junit "$dir/gate-missing.xml"
    step gate-allow gate --baseline "$dir/run" --current "$dir/run-two" \
        --allow-missing hashtag,routed --junit "$dir/gate-allow.xml"
    step gate-refuse gate --baseline "$dir/run" --current "$dir/score"
    step pool pool --report "$dir/run" --depth 10 --out "$dir/pool.csv"
    step tokens tokens --chain standard,stemmed,hashtag,routed "Ferries late again #HarbourMarket" "Café crème à Paris 🚢"
    step tokens-trace tokens --chain hashtag --trace "Ferries late again #HarbourMarket"
    step tokens-json tokens --chain routed --trace --format json "Die Fähre ist spät #Hafenmarkt"
    q=$(sed -n 2p judgments/demo/qrels.csv | cut -d, -f1)
    d=$(sed -n 2p judgments/demo/qrels.csv | cut -d, -f2)
    step explain explain --query "$q" --doc "$d"
    step explain-json explain --query "$q" --doc "$d" --format json
    mkdir -p "$(dirname "$final")"
    mv "$dir" "$final"
}

# Wall-clock figures only (see scripts/mask_timing.py for the list).
mask() {
    python3 "$(dirname "$0")/mask_timing.py" "$1"
}

compare() {
    before=$1
    after=$2
    status=0
    files=$(cd "$before" && find . -type f | sort)
    extra=$(cd "$after" && find . -type f | sort)
    if [ "$files" != "$extra" ]; then
        echo "different file lists:"
        printf '%s\n' "$files" >/tmp/compare_outputs.before
        printf '%s\n' "$extra" >/tmp/compare_outputs.after
        diff /tmp/compare_outputs.before /tmp/compare_outputs.after
        status=1
    fi
    n=0
    for f in $files; do
        [ -f "$after/$f" ] || continue
        n=$((n + 1))
        if ! cmp -s "$before/$f" "$after/$f"; then
            if ! diff -q <(mask "$before/$f") <(mask "$after/$f") >/dev/null 2>&1; then
                echo "DIFFERS: $f"
                diff <(mask "$before/$f") <(mask "$after/$f") | head -20
                status=1
            fi
        fi
    done
    echo "compared $n files: $([ $status = 0 ] && echo identical || echo DIFFERENT)"
    return $status
}

case "${1:-}" in
record) record "$2" "$3" ;;
compare) compare "$2" "$3" ;;
*)
    echo "usage: $0 record BINARY DIR | compare BEFORE AFTER" >&2
    exit 2
    ;;
esac
