#!/usr/bin/env bash
# Times `hurdle betas` and `hurdle run` on the demo case in one session and prints the ratio.
# A full run (grid, specification range, two intervals of 10,000 Monte Carlo draws, bridge, the
# memo, result.json, the CSVs, the workbook, the charts and report.html) is compared with the
# betas-only listing. Wall times are medians of REPEATS runs of each, interleaved so that a
# change in the machine's load touches both alike; with valgrind installed the instructions
# of one run of each are counted too (callgrind: the same on a loaded machine as on a quiet one).
#   bench/run-vs-betas.sh [HURDLE_BINARY] [REPEATS]
# Default binary: $CARGO_TARGET_DIR/release/hurdle, else target/release/hurdle. Build it first
# with `cargo build --release`.
set -euo pipefail
root=$(cd "$(dirname "$0")/.." && pwd)
bin=${1:-${CARGO_TARGET_DIR:-$root/target}/release/hurdle}
repeats=${2:-30}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
cp -r "$root/cases/quillmarsh" "$work/case"
case_file="$work/case/case.toml"

# Wall time of one command in microseconds, from bash's own clock ($EPOCHREALTIME, bash 5): a
# `date` process on each side would add its own start and exit, about 1.5 ms each here.
wall_us() {
  local start end
  start=${EPOCHREALTIME/./}
  "$@" >/dev/null 2>&1
  end=${EPOCHREALTIME/./}
  echo $(( end - start ))
}

# The median of the numbers on stdin, in milliseconds (input in microseconds).
median_ms() {
  sort -n | awk '{a[NR]=$1} END {m=(NR%2)?a[(NR+1)/2]:(a[NR/2]+a[NR/2+1])/2; printf "%.2f", m/1000}'
}

"$bin" run "$case_file" --out "$work/out" >/dev/null  # warm the file cache
betas_times=() run_times=()
for _ in $(seq "$repeats"); do
  betas_times+=("$(wall_us "$bin" betas "$case_file")")
  run_times+=("$(wall_us "$bin" run "$case_file" --out "$work/out")")
done
betas=$(printf '%s\n' "${betas_times[@]}" | median_ms)
run=$(printf '%s\n' "${run_times[@]}" | median_ms)
echo "hurdle betas (demo): ${betas} ms wall (median of $repeats)"
echo "hurdle run   (demo): ${run} ms wall (median of $repeats)"
awk -v r="$run" -v b="$betas" 'BEGIN { printf "run / betas, wall: %.2f\n", r / b }'
if command -v valgrind >/dev/null; then
  count() {
    valgrind --tool=callgrind --callgrind-out-file=/dev/null "$@" 2>&1 >/dev/null |
      awk '/Collected/ { print $NF }'
  }
  betas_ir=$(count "$bin" betas "$case_file")
  run_ir=$(count "$bin" run "$case_file" --out "$work/out")
  awk -v r="$run_ir" -v b="$betas_ir" 'BEGIN {
    printf "instructions: betas %.0f M, run %.0f M, run / betas %.2f\n", b / 1e6, r / 1e6, r / b }'
fi
echo "load average: $(cut -d' ' -f1-3 /proc/loadavg)"
