#!/usr/bin/env python3
"""Recalculates hurdle's workbook.xlsx in LibreOffice and compares every formula with result.json.

An independent spreadsheet engine is the check that the workbook's formulas are the method and
not decoration. LibreOffice (headless, `libreoffice-calc-nogui`) opens the workbook in a fresh
user profile whose setting OOXMLRecalcMode = 0 (under /org.openoffice.Office.Calc/Formula/Load)
forces every formula to be recalculated on load; by default LibreOffice keeps an .xlsx file's
cached values, so a workbook whose saved figures are right but whose formulas are wrong would pass.
`--convert-to xlsx` then writes the recomputed values, which openpyxl reads with data_only=True.

Checks, each counted as passed or failed:
  1. every formula cell of the workbook is listed in the figure map (nothing escapes the check);
  2. the cached values hurdle wrote equal the figure map's expected values to 1e-9 relative: a
     result.json field (times the map's scale), or, for the excess returns that result.json does
     not hold, the number the map itself carries (hurdle's own figure, the one returns.csv lists;
     the formulas' typed-in inputs, the returns, are compared with returns.csv, which
     tests/reference/check_regressions.py rebuilds from the case's price files for each
     configuration: check_returns_sheet);
  3. LibreOffice's recomputed values equal them to 1e-9 relative;
  4. a copy whose cached WACC is deliberately wrong is caught by check 2, and LibreOffice's
     recalculation replaces the wrong figure (proof that it recalculated);
  5. a copy whose WACC formula is deliberately wrong but whose cached value is right passes a
     check of cached values yet is caught after recalculation;
  6. after openpyxl sets the named cells EquityRiskPremium and TargetDebtToEquity, the recomputed
     WACC equals `hurdle run --set` with the same values.

Tolerance: LibreOffice writes numbers with 15 significant digits, a relative rounding of at most
5e-15, and its statistical functions (SLOPE, STEYX, T.DIST.2T, T.INV.2T, LINEST) use other
algorithms than hurdle's QR least squares and Newton-polished t quantiles, which agree to about
1e-13 relative on well-conditioned data. 1e-9 relative leaves four orders of magnitude for that
and is still far below any change a wrong formula makes (a wrong input or operator moves a figure
by 1e-4 or more).

Usage: check_workbook.py PLAN_JSON, where the plan is
  {"runs": [{"label": "demo", "dir": RUN_DIR, "map": MAP_JSON,
             "whatif": {"EquityRiskPremium": 0.065, "TargetDebtToEquity": 0.6,
                        "cells": {"Unlevering!B2": 0}, "result": WHATIF_RESULT_JSON}}, ...]}
(each of the what-if's named inputs and cells optional)
RUN_DIR holds workbook.xlsx and result.json of one `hurdle run`; MAP_JSON is the figure map
(hurdle::report::workbook::figure_map) of that run; WHATIF_RESULT_JSON is result.json of the same case
run with --set market.equity_risk_premium=... --set target.debt_to_equity=... (optional; the
tampered copies are made for runs with a what-if). All files go through one LibreOffice start.
"""

import csv
import datetime
import json
import os
import re
import shutil
import subprocess
import sys
import tempfile
import zipfile

import openpyxl

TOLERANCE = 1e-9

XCU = """<?xml version="1.0" encoding="UTF-8"?>
<oor:items xmlns:oor="http://openoffice.org/2001/registry"
           xmlns:xs="http://www.w3.org/2001/XMLSchema"
           xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance">
  <item oor:path="/org.openoffice.Office.Calc/Formula/Load">
    <prop oor:name="OOXMLRecalcMode" oor:op="fuse"><value>0</value></prop>
  </item>
</oor:items>
"""

passed = 0
failed = 0


def report(ok, message):
    global passed, failed
    if ok:
        passed += 1
    else:
        failed += 1
        print(f"FAIL {message}")


def agree(a, b):
    if a is None or b is None:
        return False
    return a == b or abs(a - b) <= TOLERANCE * max(abs(a), abs(b))


def pointer(document, path):
    value = document
    for part in path.strip("/").split("/"):
        value = value[int(part)] if isinstance(value, list) else value[part]
    return value


def expected_values(entries, result):
    """The figure each mapped cell must show: a result.json field (scaled), a value, or text."""
    out = {}
    for e in entries:
        key = (e["sheet"], e["cell"])
        if e["json_pointer"] is not None:
            out[key] = pointer(result, e["json_pointer"]) * e["scale"]
        elif e["value"] is not None:
            out[key] = e["value"]
        else:
            out[key] = e["text"]
    return out


def compare(book, expected, label, limit=5):
    """Compares the mapped cells of an openpyxl workbook (data_only) with the expected figures;
    returns the cells that differ."""
    wrong = []
    for (sheet, cell), want in expected.items():
        got = book[sheet][cell].value
        if isinstance(want, str):
            ok = got == want
        else:
            ok = isinstance(got, (int, float)) and agree(float(got), float(want))
        if not ok:
            wrong.append((sheet, cell, got, want))
    for sheet, cell, got, want in wrong[:limit]:
        print(f"  {label}: '{sheet}'!{cell} = {got!r}, expected {want!r}")
    return wrong


def sheet_xml_paths(path):
    """Sheet name -> its XML part inside the package."""
    with zipfile.ZipFile(path) as z:
        workbook = z.read("xl/workbook.xml").decode()
        rels = z.read("xl/_rels/workbook.xml.rels").decode()
    targets = dict(re.findall(r'Id="(rId\d+)"[^>]*Target="([^"]+)"', rels))
    targets.update({k: v for v, k in re.findall(r'Target="([^"]+)"[^>]*Id="(rId\d+)"', rels)})
    sheets = re.findall(r'<sheet [^>]*name="([^"]+)"[^>]*r:id="(rId\d+)"', workbook)
    return {name.replace("&amp;", "&"): "xl/" + targets[rid].lstrip("/").removeprefix("xl/") for name, rid in sheets}


def rewrite_cell(source, target, sheet, cell, edit):
    """Copies the package, applying `edit` to the XML of one formula cell `<c r="cell" ...>`."""
    part = sheet_xml_paths(source)[sheet]
    with zipfile.ZipFile(source) as zin, zipfile.ZipFile(target, "w", zipfile.ZIP_DEFLATED) as zout:
        for item in zin.infolist():
            data = zin.read(item.filename)
            if item.filename == part:
                text = data.decode()
                pattern = re.compile(r'<c r="%s"[^>]*>.*?</c>' % cell)
                match = pattern.search(text)
                assert match, f"{cell} not found in {part}"
                text = text[: match.start()] + edit(match.group(0)) + text[match.end():]
                data = text.encode()
            zout.writestr(item, data)


def recalculate(files, outdir):
    """One LibreOffice start for all files: load with recalculation forced, save as xlsx."""
    profile = tempfile.mkdtemp(prefix="hurdle-lo-profile-")
    os.makedirs(os.path.join(profile, "user"))
    with open(os.path.join(profile, "user", "registrymodifications.xcu"), "w") as f:
        f.write(XCU)
    command = [
        "soffice", "--headless", "--norestore", "--nologo", "--nodefault",
        f"-env:UserInstallation=file://{profile}",
        "--convert-to", "xlsx:Calc MS Excel 2007 XML", "--outdir", outdir,
    ] + files
    run = subprocess.run(command, capture_output=True, text=True, timeout=600)
    shutil.rmtree(profile, ignore_errors=True)
    if run.returncode != 0:
        print(run.stdout, run.stderr)
    for f in files:
        converted = os.path.join(outdir, os.path.basename(f))
        assert os.path.exists(converted), f"LibreOffice did not convert {f}: {run.stdout} {run.stderr}"


def named_cell(book, name):
    """(sheet, cell) of a defined name such as EquityRiskPremium."""
    definition = book.defined_names[name]
    (sheet, cell), = list(definition.destinations)
    return sheet, cell.replace("$", "")


def formula_cells(path):
    book = openpyxl.load_workbook(path, data_only=False)
    cells = set()
    for ws in book.worksheets:
        for row in ws.iter_rows():
            for c in row:
                if isinstance(c.value, str) and c.value.startswith("="):
                    cells.add((ws.title, c.coordinate))
    return book, cells


def check_analyses(sheet, result, label):
    """The Analyses sheet's values (hurdle's reruns, written as values) against result.json, found
    by their row labels: both Monte Carlo intervals, the leave-one-out WACCs and the bridge's end
    rows (what the claim's components give, the part no group explains, the claim as stated)."""
    rows = {}
    for row in sheet.iter_rows(min_col=1, max_col=4):
        name = row[0].value
        if isinstance(name, str) and name not in rows:
            rows[name] = [c.value for c in row[1:]]
    checked = 0
    u = result.get("uncertainty")
    if u:
        for name, key in [("5th percentile", "p05"), ("Median", "p50"), ("95th percentile", "p95")]:
            values = rows.get(name, [None, None])
            report(agree(values[0], u[key]), f"{label}: Analyses {name}: {values[0]} vs uncertainty.{key}")
            report(agree(values[1], u["peer_set"][key]),
                   f"{label}: Analyses {name} (peer set): {values[1]} vs uncertainty.peer_set.{key}")
            checked += 2
        # One leave-one-out row per aggregated peer (README, result.json schema: the excluded
        # peers are put back instead), each once: the peers whose excluded_reason is null. The
        # loop below then covers every such peer, and an empty list does not pass unchecked.
        included = sorted(p["name"] for p in result["peers"] if p["excluded_reason"] is None)
        listed = sorted(entry["peer"] for entry in u["leave_one_out"])
        report(listed == included, f"{label}: leave_one_out peers {listed} vs the included peers {included}")
        report(len(included) == result["beta"]["peers_included"],
               f"{label}: {len(included)} peers without an exclusion vs beta.peers_included "
               f"{result['beta']['peers_included']}")
        checked += 2
        for entry in u["leave_one_out"]:
            if entry["wacc"] is not None:
                got = rows.get(entry["peer"], [None])[0]
                report(agree(got, entry["wacc"]), f"{label}: Analyses leave-one-out {entry['peer']}: {got}")
                checked += 1
    bridge = result.get("reconciliation")
    if bridge:
        # WACCs in column C ("WACC after"), the unexplained difference in D ("Contribution").
        ends = [("The claim's components give", bridge["to"]["wacc"], 1),
                ("Not explained by any input group", bridge["unexplained"], 2),
                ("The claim's WACC as stated", bridge["to"]["stated_wacc"], 1)]
        for name, expected, col in ends:
            if expected is None:
                continue
            got = rows.get(name, [None, None, None])[col]
            report(agree(got, expected), f"{label}: Analyses {name}: {got} vs {expected}")
            checked += 1
    print(f"  compared {checked} Analyses values with result.json")


RETURNS_COLUMNS = {"Peer return": "asset_return", "Index return": "market_return",
                   "Risk-free (per period)": "risk_free"}


def returns_columns(listed_fields):
    """The Returns sheet's typed-in columns for the fields returns.csv has: the peer's and the
    index's returns, the rate when there is one, and each shifted index excess return of Dimson or
    Scholes-Williams (`market_lag_l` as "Index excess return, t-l", or "Index return, t-l"
    without a rate; `market_lead_l` as "t+l")."""
    wanted = {h: key for h, key in RETURNS_COLUMNS.items() if key in listed_fields}
    shifted = "Index excess return" if "risk_free" in listed_fields else "Index return"
    for field in listed_fields:
        for prefix, sign in (("market_lag_", "-"), ("market_lead_", "+")):
            if field.startswith(prefix):
                wanted[f"{shifted}, t{sign}{field[len(prefix):]}"] = field
    return wanted


def check_returns_sheet(sheet, run_dir, label):
    """The Returns sheet's typed-in returns (the inputs of its excess-return formulas, which the
    figure map can only check against hurdle's own numbers; under Dimson or Scholes-Williams
    also the shifted index excess returns) against returns.csv, which
    check_regressions.py rebuilds from the case's price files for every configuration of this
    test: the same rows, peer by peer and period by period, each return equal to the last bit
    (both are the shortest decimal of the same double, and openpyxl reads it back exactly)."""
    with open(os.path.join(run_dir, "returns.csv"), newline="") as f:
        reader = csv.DictReader(f)
        listed = {(r["peer"], r["period_end"]): r for r in reader}
        wanted = returns_columns(reader.fieldnames)
    rows = sheet.iter_rows(values_only=True)
    header = list(next(rows))
    # Every column returns.csv has must be in the sheet: a renamed header fails here rather than
    # leaving its column unchecked.
    missing = [h for h in wanted if h not in header]
    report(not missing, f"{label}: Returns sheet header {header} lacks {missing}")
    columns = {header.index(h): key for h, key in wanted.items() if h in header}
    seen, wrong = set(), []
    for row in rows:
        if row[0] is None:
            continue
        end = row[1].date() if isinstance(row[1], datetime.datetime) else row[1]
        key = (row[0], end.isoformat() if hasattr(end, "isoformat") else str(end))
        seen.add(key)
        reference = listed.get(key)
        for index, field in columns.items():
            want = None if reference is None or reference.get(field) in (None, "") else float(reference[field])
            if reference is not None and row[index] != want:
                wrong.append((key, field, row[index], want))
    report(not wrong, f"{label}: {len(wrong)} Returns-sheet cells differ from returns.csv: {wrong[:3]}")
    report(seen == set(listed), f"{label}: Returns sheet has {len(seen)} rows, returns.csv {len(listed)}; "
           f"only in the sheet {sorted(seen - set(listed))[:3]}, only in returns.csv {sorted(set(listed) - seen)[:3]}")
    print(f"  compared {len(seen)} Returns-sheet rows with returns.csv")


def check_run(run, work, outdir_of):
    """Prepares one run's files for LibreOffice; returns a function that checks the results."""
    label = run["label"]
    with open(os.path.join(run["dir"], "result.json")) as f:
        result = json.load(f)
    with open(run["map"]) as f:
        entries = json.load(f)
    expected = expected_values(entries, result)
    original = os.path.join(work, f"{label}.xlsx")
    shutil.copy(os.path.join(run["dir"], "workbook.xlsx"), original)
    book, formulas = formula_cells(original)
    wacc_sheet, wacc_cell = named_cell(book, "Wacc")
    files = [original]
    whatif = run.get("whatif")
    if whatif:
        wrong_cache = os.path.join(work, f"{label}-cached.xlsx")
        rewrite_cell(original, wrong_cache, wacc_sheet, wacc_cell,
                     lambda xml: re.sub(r"<v>[^<]*</v>", "<v>0.5</v>", xml))
        wrong_formula = os.path.join(work, f"{label}-formula.xlsx")
        rewrite_cell(original, wrong_formula, wacc_sheet, wacc_cell,
                     lambda xml: re.sub(r"<f>([^<]*)</f>", r"<f>1.01*(\1)</f>", xml))
        # openpyxl sets the named input cells the what-if gives, and any cell it gives by
        # address ("Unlevering!B2": a peer's Aggregated flag); it keeps the formulas and drops
        # the caches.
        edited = openpyxl.load_workbook(original)
        for name in ["EquityRiskPremium", "TargetDebtToEquity"]:
            if name in whatif:
                sheet, cell = named_cell(edited, name)
                edited[sheet][cell].value = whatif[name]
        for address, value in whatif.get("cells", {}).items():
            sheet, cell = address.split("!")
            edited[sheet][cell].value = value
        whatif_file = os.path.join(work, f"{label}-whatif.xlsx")
        edited.save(whatif_file)
        files += [wrong_cache, wrong_formula, whatif_file]

    def cached(path):
        return openpyxl.load_workbook(path, data_only=True)

    def recomputed(path):
        return openpyxl.load_workbook(outdir_of(path), data_only=True)

    def check():
        print(f"[{label}]")
        # 1. Completeness: every formula cell is in the map, and every map entry is a formula.
        report(formulas == set(expected), f"{label}: formula cells {len(formulas)} vs mapped "
               f"{len(expected)}: unmapped {sorted(formulas - set(expected))[:5]}, "
               f"not formulas {sorted(set(expected) - formulas)[:5]}")
        # 2 and 3: the workbook as written, and as LibreOffice recomputes it.
        wrong = compare(cached(original), expected, f"{label} cached")
        report(not wrong, f"{label}: {len(wrong)} of {len(expected)} cached values differ from result.json")
        wrong = compare(recomputed(original), expected, f"{label} recomputed")
        report(not wrong, f"{label}: {len(wrong)} of {len(expected)} recomputed values differ from result.json")
        print(f"  compared {len(expected)} formula cells, cached and recomputed, with result.json")
        # The Unlevering sheet's headers name the figures under them: the column that maps to
        # peers[].operating_share is the operating share (1 - cash / (equity + debt)), the one
        # mapped to peers[].operations_beta the beta of the operations.
        headers = cached(original)["Unlevering"]
        for field, words in [("operating_share", "Operating share"),
                             ("operations_beta", "operations")]:
            columns = {re.match(r"[A-Z]+", e["cell"]).group(0) for e in entries
                       if e["sheet"] == "Unlevering" and (e["json_pointer"] or "").endswith(f"/{field}")}
            # The first such column is the figure's own (a later one, "Aggregated figure",
            # repeats it when the case aggregates the betas of the operations).
            report(bool(columns), f"{label}: no Unlevering column maps to peers[].{field}")
            for column in sorted(columns, key=lambda c: (len(c), c))[:1]:
                header = headers[f"{column}1"].value or ""
                report(words in header, f"{label}: Unlevering!{column}1 = {header!r} heads "
                       f"peers[].{field}")
        check_analyses(cached(original)["Analyses"], result, label)
        check_returns_sheet(cached(original)["Returns"], run["dir"], label)
        if not whatif:
            return
        # 4. A wrong cached WACC: caught among the cached values, repaired by the recalculation.
        wrong = [(s, c) for s, c, _, _ in compare(cached(wrong_cache), expected, "", limit=0)]
        report(wrong == [(wacc_sheet, wacc_cell)], f"{label}: a wrong cached WACC is not caught: {wrong[:3]}")
        if wrong == [(wacc_sheet, wacc_cell)]:
            print(f"  tampered cache: caught at '{wacc_sheet}'!{wacc_cell}")
        repaired = recomputed(wrong_cache)[wacc_sheet][wacc_cell].value
        report(agree(repaired, result["wacc"]),
               f"{label}: LibreOffice kept the wrong cached WACC ({repaired}) instead of recalculating")
        # 5. A wrong WACC formula with the right cached value: passes a check of the cached
        # values, not the recalculation (the cells that repeat the WACC follow it).
        wrong = compare(cached(wrong_formula), expected, "", limit=0)
        report(not wrong, f"{label}: the tampered-formula copy should carry the right cached values")
        wrong = [(s, c) for s, c, _, _ in compare(recomputed(wrong_formula), expected, "", limit=0)]
        report((wacc_sheet, wacc_cell) in wrong, f"{label}: a wrong WACC formula is not caught after recalculation")
        if (wacc_sheet, wacc_cell) in wrong:
            print(f"  tampered formula: caught at '{wacc_sheet}'!{wacc_cell} after recalculation")
        # 6. The what-if WACC against hurdle run --set.
        with open(whatif["result"]) as f:
            expected_wacc = json.load(f)["wacc"]
        got = recomputed(whatif_file)[wacc_sheet][wacc_cell].value
        report(agree(got, expected_wacc), f"{label}: what-if WACC: workbook {got!r}, hurdle run --set {expected_wacc!r}")
        report(not agree(expected_wacc, result["wacc"]), f"{label}: the what-if did not move the WACC")
        # The Cover's headline says the edited WACC is no longer the run's (and, before the
        # edit, that it is: a mapped text cell, checked with the others).
        states = {row[0].value: row[3].value
                  for row in recomputed(whatif_file)["Cover"].iter_rows(max_col=4)}
        report(states.get("WACC") == "EDITED: not the run's figure",
               f"{label}: the Cover's WACC state after the what-if is {states.get('WACC')!r}")
        edits = {k: v for k, v in whatif.items() if k != "result"}
        print(f"  what-if {edits}: workbook WACC {got!r}, hurdle run --set {expected_wacc!r}")

    return files, check


def main():
    with open(sys.argv[1]) as f:
        plan = json.load(f)
    work = tempfile.mkdtemp(prefix="hurdle-workbook-check-")
    outdir = os.path.join(work, "recalculated")
    os.makedirs(outdir)
    outdir_of = lambda path: os.path.join(outdir, os.path.basename(path))
    files, checks = [], []
    for run in plan["runs"]:
        run_files, check = check_run(run, work, outdir_of)
        files += run_files
        checks.append(check)
    recalculate(files, outdir)
    for check in checks:
        check()
    shutil.rmtree(work, ignore_errors=True)
    print(f"workbook check: {passed} passed, {failed} failed")
    sys.exit(0 if failed == 0 else 1)


if __name__ == "__main__":
    main()
