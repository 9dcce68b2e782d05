#!/usr/bin/env bash
# Times `hurdle betas` and `hurdle run` on the demo case in one session and prints the ratio.
# A full run (grid, 10,000 Monte Carlo draws, bridge, every output) should cost at most about
# twice the betas-only listing, because the peers are estimated once per run.
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

# Median wall time in milliseconds of `repeats` runs of the command.
median_ms() {
  local times=()
  for _ in $(seq "$repeats"); do
    local start end
    start=$(date +%s%N)
    "$@" >/dev/null 2>&1
    end=$(date +%s%N)
    times+=($(( (end - start) / 1000 )))
  done
  printf '%s\n' "${times[@]}" | sort -n | awk '{a[NR]=$1} END {m=(NR%2)?a[(NR+1)/2]:(a[NR/2]+a[NR/2+1])/2; printf "%.2f", m/1000}'
}

"$bin" run "$case_file" --out "$work/out" >/dev/null  # warm the file cache
betas=$(median_ms "$bin" betas "$case_file")
run=$(median_ms "$bin" run "$case_file" --out "$work/out")
echo "hurdle betas (demo): ${betas} ms (median of $repeats)"
echo "hurdle run   (demo): ${run} ms (median of $repeats)"
awk -v r="$run" -v b="$betas" 'BEGIN { printf "run / betas: %.2f\n", r / b }'
