#!/usr/bin/env bash
# Runs the fuzz targets of tests/fuzz.rs for a fixed time and adds up their executions.
#
#   fuzz/run.sh [SECONDS]        default 600; rounds of FUZZ_CASES (default 2000) inputs per
#                                target, each round with a fresh random seed
#
# The time is checked between rounds, so a run ends up to one round (about half a minute on
# one core) after SECONDS. The first failure stops it and prints proptest's minimal input; the
# last line is the figure README quotes ("N executions, 0 failures").
set -euo pipefail
cd "$(dirname "$0")/.."
budget="${1:-600}"
cases="${FUZZ_CASES:-2000}"
export CARGO_TARGET_DIR="${CARGO_TARGET_DIR:-$HOME/.cache/hurdle-target}"
cargo test --release --test fuzz --no-run --quiet
log=$(mktemp)
all=$(mktemp)
trap 'rm -f "$log" "$all"' EXIT
start=$(date +%s)
rounds=0
while [ $(( $(date +%s) - start )) -lt "$budget" ]; do
    if ! PROPTEST_CASES="$cases" cargo test --release --quiet --test fuzz -- --nocapture \
        --test-threads 1 >"$log" 2>&1; then
        cat "$log"
        echo "fuzz: FAILED in round $((rounds + 1))"
        exit 1
    fi
    grep -o 'fuzz [^:]*: [0-9]* executions, [0-9]* through' "$log" >>"$all" || true
    rounds=$((rounds + 1))
done
seconds=$(( $(date +%s) - start ))
# Lines read "fuzz <target>: <N> executions, <M> through".
awk -F': ' '{ split($2, n, " "); runs[$1] += n[1]; through[$1] += n[3]; total += n[1] }
    END { for (t in runs) printf "%s: %d executions, %d through\n", t, runs[t], through[t];
          printf "total: %d executions, 0 failures\n", total }' "$all" | sort
echo "($rounds rounds of $cases inputs per target in $seconds s)"
