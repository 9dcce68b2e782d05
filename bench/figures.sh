#!/usr/bin/env bash
# What the charts and report.html add to `hurdle run` on the demo case: the median wall time of
# RUNS runs (default 15) with and without --no-figures, the difference in milliseconds and the
# ratio of the two. It prints and asserts nothing: speed is watched here, never in a test. The
# aim (issue 10) is a difference of at most 50 ms; it includes writing the 13 SVG files and the
# report (each written atomically, with an fsync).
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin="${CARGO_TARGET_DIR:-target}/release/hurdle"
runs="${RUNS:-15}"
out="$(mktemp -d)"
trap 'rm -rf "$out"' EXIT

median_ms() {
  local times=()
  for _ in $(seq "$runs"); do
    local start end
    start=$(date +%s%N)
    "$bin" run cases/quillmarsh/case.toml --out "$out" "$@" >/dev/null
    end=$(date +%s%N)
    times+=($(( (end - start) / 1000 )))
  done
  printf '%s\n' "${times[@]}" | sort -n | awk '{ a[NR] = $1 } END { printf "%.1f", a[int((NR + 1) / 2)] / 1000 }'
}

"$bin" run cases/quillmarsh/case.toml --out "$out" >/dev/null  # warm the page cache
text=$(median_ms --no-figures)
full=$(median_ms)
awk -v t="$text" -v f="$full" -v n="$runs" 'BEGIN {
  printf "hurdle run, demo case, median of %d runs\n", n
  printf "  text outputs only (--no-figures): %8.1f ms\n", t
  printf "  with charts and report.html:      %8.1f ms\n", f
  printf "  charts and report add:            %8.1f ms (ratio %.2f; aim: at most 50 ms)\n", f - t, f / t
}'
