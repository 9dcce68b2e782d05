#!/usr/bin/env bash
# Runs two hurdle binaries on the demo case under many option combinations and reports any output
# file that differs, the run's timestamp aside. Used to prove that a refactoring changed no figure:
#   scripts/compare-outputs.sh OLD_BINARY NEW_BINARY
# Build OLD_BINARY from the revision before the change (e.g. in a `git worktree`), NEW_BINARY from
# the working tree. Exits 1 when any file differs. A workbook is compared cell by cell as openpyxl
# reads it (so neither its compression nor how a format is attached counts; needs
# `pip install openpyxl`), the charts under figures/ file by file.
set -euo pipefail
old=$1 new=$2
root=$(cd "$(dirname "$0")/.." && pwd)
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
cp -r "$root/cases/quillmarsh" "$work/case"
combos=(
  ""
  "beta.frequency=weekly"
  "beta.frequency=daily beta.lookback=750"
  "beta.frequency=quarterly beta.min_observations=12 beta.lookback=30"
  "beta.method=dimson beta.dimson_lags=2"
  "beta.method=dimson beta.dimson_leads=1"
  "beta.method=scholes-williams"
  "beta.std_errors=hc1"
  "beta.std_errors=newey-west"
  "beta.adjustment=none"
  "beta.adjustment=vasicek"
  "beta.adjustment=vasicek beta.vasicek_prior_mean=1.0 beta.vasicek_prior_variance=0.04"
  "beta.blume_weight=0.5"
  "beta.returns=log"
  "beta.max_stale_days=3"
  "beta.window_start=2022-09-30"
  "leverage.formula=harris-pringle"
  "leverage.formula=miles-ezzell leverage.debt_beta_source=credit-spread"
  "leverage.formula=conine leverage.debt_beta_source=given leverage.debt_beta=0.15"
  "leverage.aggregation=mean"
  "leverage.aggregation=market-cap-weighted"
  "leverage.aggregation=trimmed-mean leverage.trim_fraction=0.2"
  "leverage.operations_beta=true"
  "leverage.debt_measure=net"
  "target.source=peer-median"
  "target.source=subject"
  "debt.source=rating"
  "debt.source=coverage"
  "premiums.country=0.02 premiums.country_method=exposure premiums.country_exposure=0.5"
  "premiums.country=0.02 premiums.country_method=beta-scaled"
  "preferred.weight=0.05 preferred.cost=0.07 leases.weight=0.05 leases.cost_pre_tax=0.06"
  "conversion.currency=USD conversion.inflation_case=0.02 conversion.inflation_output=0.035"
  "uncertainty.equity_risk_premium=[0.045,0.065] uncertainty.risk_free_rate=[0.03,0.045]"
)
# The file's text with the run's timestamp and hurdle's version replaced (a release that changes
# no figure still changes its number: `hurdle 0.7.0`, `"version": "0.7.0"`); a workbook as what a reader sees of each
# cell (value or formula, number format, font, fill, note), read back with openpyxl.
normalised() {
  if [[ $1 == *.xlsx ]]; then
    python3 -c 'import sys, openpyxl
book = openpyxl.load_workbook(sys.argv[1])
print(sorted(book.defined_names.keys()))
for sheet in book.worksheets:
    print("sheet", sheet.title)
    for row in sheet.iter_rows():
        for c in row:
            if c.value is None and c.comment is None:
                continue
            print(c.coordinate, repr(c.value), c.number_format, c.font.b, c.font.color and
                  c.font.color.rgb, c.fill.fgColor.rgb, c.comment and c.comment.text)' "$1"
  else
    cat "$1"
  fi | sed -E -e 's/[0-9]{4}-[0-9]{2}-[0-9]{2}T[0-9:]{8}Z?/TIMESTAMP/g' \
    -e 's/(hurdle |"version": ")[0-9]+\.[0-9]+\.[0-9]+/\1VERSION/g'
}
status=0
for combo in "${combos[@]}"; do
  sets=()
  for assignment in $combo; do sets+=(--set "$assignment"); done
  for side in old new; do
    bin=$old; [ "$side" = new ] && bin=$new
    rm -rf "$work/$side"
    "$bin" run "$work/case/case.toml" --out "$work/$side" "${sets[@]}" >/dev/null 2>"$work/$side.err" || true
    "$bin" betas "$work/case/case.toml" "${sets[@]}" >"$work/$side.betas" 2>&1 || true
  done
  for file in "$work/old"/* "$work/old"/figures/* "$work/old.err" "$work/old.betas"; do
    name=${file#"$work"/old}; name=${name#/}
    other="$work/new/$name"; [ -e "$other" ] || other="$work/new${name}"
    [ -f "$file" ] || continue
    if ! diff -q <(normalised "$file") <(normalised "$other") >/dev/null 2>&1; then
      echo "DIFFERS [${combo:-demo}]: $name"; status=1
    fi
  done
done
[ $status -eq 0 ] && echo "all outputs identical over ${#combos[@]} option sets"
exit $status
