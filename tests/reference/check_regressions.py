#!/usr/bin/env python3
"""Independent check of a hurdle run with numpy and scipy.

Usage: check_regressions.py OUTPUT_DIR [--case CASE.toml]

Reads OUTPUT_DIR/result.json (written by `hurdle run`) and the case file it names (found as
`hurdle verify` finds it, or given with --case, and accepted only with the SHA-256 the receipt
records), applies the recorded --set overrides itself, and takes every setting, rate and peer
figure from that case with README's defaults, not from hurdle's echo under result["settings"]
(the echo is compared as an extra check); the pre-tax cost of debt is the case's, or rf plus the
spread its rating or coverage table gives. Then:
  - rebuilds every return from the case's own price and yield files: the window's sample points,
    each sample as the last price of its period, simple or log returns, the risk-free yield at the
    start of each period turned into the per-period rate, staleness, dropped periods by reason and
    the lagged and led index columns, all written here from README's "Methods and their sources"
    (Sampling, Risk-free conversion by frequency, Excess returns, Lagged and led index returns);
    reads the files' SHA-256 against the receipt's; compares the returns with OUTPUT_DIR/returns.csv
    to a relative 1e-12, and the window and dropped periods with result.json; and regresses on its
    own returns (a part it cannot rebuild, a wide table in Parquet, .xls or .ods, is reported as
    NOT RECOMPUTED and returns.csv is used for it: said in the output, never silent);
  - under OLS, refits each peer's return on the index's current and previous-period returns
    (Dimson 1979 with one lag) over the rebuilt periods whose previous index return is in the
    window, for the lag slope, its standard error (classical, HC1 or Newey-West, by `sandwich`),
    t, scipy's p-value and the flag lagged_response;
  - refits every peer's market-model regression with numpy's least squares and
    scipy.stats.linregress, and recomputes Blume's shrinkage (with the case's beta.blume_weight),
    Hamada unlevering, the beta of the operations, the median, relevering, the CAPM cost of equity
    and the WACC from their textbook formulas.
Every figure must agree with result.json to a relative 1e-9: both sides are double-precision
evaluations of the same closed forms on the same numbers, so honest differences are rounding
(about 1e-13); 1e-9 is the project's stated bar.
Exits non-zero on any mismatch.
"""
import calendar
import csv
import datetime as dt
import hashlib
import json
import math
import os
import re
import sys
import tomllib
from collections import defaultdict

import numpy as np
from scipy import stats

import least_squares  # QR, never an inverse of X'X
from set_values import set_path

TOLERANCE = 1e-9
# Rebuilt returns against returns.csv: the same IEEE operations (p1 / p0 - 1, ln(p1 / p0),
# (1 + y)^(1 / periods) - 1, ln(1 + y) / periods, a - rf) on the same doubles parsed from the same
# decimal text give the same double, up to the last bits of a libm pow or log (far below 1e-12
# relative; measured: bit-identical on every configuration tried); a wrong sample, period, yield
# date or convention moves a return by 1e-6 or more.
RETURNS_TOLERANCE = 1e-12
failures = []
checks = 0
not_recomputed = []


def check(label, ours, reference, tolerance=TOLERANCE, floor=1e-15):
    """Relative `tolerance`, with an absolute `floor` for figures at or near zero (1e-15: the
    rounding of sums of terms of order one). P-values pass floor=0: they can be 1e-20 and
    smaller, where any floor would pass everything; scipy and statrs agree on them to about
    1e-13 relative (a tail probability's relative error is about |t| times the t-statistic's
    absolute rounding)."""
    global checks
    checks += 1
    scale = max(abs(reference), 1e-300)
    if not (abs(ours - reference) <= tolerance * scale or abs(ours - reference) < floor):
        failures.append(f"{label}: hurdle {ours!r} vs reference {reference!r}")


def check_equal(label, ours, reference):
    """Counts, dates, names and choices: exact."""
    global checks
    checks += 1
    if ours != reference:
        failures.append(f"{label}: hurdle {ours!r} vs reference {reference!r}")


# --------------------------------------------------------------------------------------------
# The case as written: case.toml read with tomllib, the recorded --set overrides applied here.

# README "Case file reference": the default column of each table (None: no default, the key is
# optional; a key absent from this table and from the case is required and stops the check).
DEFAULTS = {
    "market": {},
    "beta": {"frequency": "monthly", "lookback": 60, "min_observations": 36, "method": "ols",
             "adjustment": "none", "blume_weight": 0.67, "std_errors": "classical",
             "newey_west_lags": None, "dimson_lags": 1, "dimson_leads": 0,
             "vasicek_prior_mean": None, "vasicek_prior_variance": None, "weekday": "wednesday",
             "returns": "simple", "max_stale_days": None, "window_start": None, "window_end": None,
             "flag_observations_share": 0.8, "flag_r_squared_floor": 0.05,
             "flag_stale_share": 0.1, "flag_zero_return_share": 0.2, "flag_lag_p_value": 0.05, "exclude_flags": [], "rolling_window": None,
             "rolling_step": 1, "rolling_min_observations": None},
    "leverage": {"formula": "hamada", "aggregation": "median", "trim_fraction": 0.1,
                 "operations_beta": False, "debt_measure": "gross", "debt_beta_source": "none",
                 "debt_beta": 0.0},
    "target": {"debt_to_equity": None, "debt_to_capital": None, "source": "explicit",
               "subject_equity_value": None, "subject_debt": None, "subject_cash": 0.0},
    "debt": {"source": "given", "cost_pre_tax": None},
    "premiums": {"size": 0.0, "country": 0.0, "company_specific": 0.0, "country_method": "flat",
                 "country_exposure": 1.0},
    "preferred": {"weight": 0.0, "cost": None},
    "leases": {"weight": 0.0, "cost_pre_tax": None},
}
# README "[[peer]]".
PEER_DEFAULTS = {"cash": 0.0, "debt_beta": None, "cost_of_debt": None, "exclude": None,
                 "date_column": "date", "price_column": "price"}
CASE = {}


def setting(section, key):
    """The case's value of section.key after the overrides, else README's default."""
    table = CASE.get(section, {})
    if key in table:
        return table[key]
    if key in DEFAULTS[section]:
        return DEFAULTS[section][key]
    raise KeyError(f"{section}.{key} is required (README) and the case does not give it")


def peer_spec(name):
    """The case's [[peer]] table of that name, with README's defaults."""
    spec = next(p for p in CASE["peer"] if p["name"] == name)
    return {**PEER_DEFAULTS, **spec}


def sha256(path):
    with open(path, "rb") as f:
        return hashlib.sha256(f.read()).hexdigest()


def find_case(out_dir, result, given):
    """The case file the receipt names, looked for as `hurdle verify` looks for it (README,
    Commands: --case, then CASE_DIR/output/result.json -> CASE_DIR/case.toml, then the recorded
    path, absolute or relative to the current folder); only the one with the recorded SHA-256
    counts, so the figures below are those of the case hurdle ran."""
    recorded = result["case"]["file"]
    candidates = [given] if given else []
    candidates += [os.path.join(os.path.dirname(os.path.abspath(out_dir)), "case.toml"), recorded]
    seen = []
    for path in candidates:
        if path and os.path.isfile(path):
            if sha256(path) == result["case"]["sha256"]:
                return path
            seen.append(f"{path} (another SHA-256)")
    print(f"MISMATCH case file: none with the recorded SHA-256 among {candidates} (seen: {seen}); "
          f"give it with --case")
    print("reference: 0 passed, 1 failed")
    sys.exit(1)


def apply_overrides(case, overrides):
    """README, Commands, `--set`: the dotted path of the case key, spaces around each segment
    ignored; inside [[peer]] the second segment picks the peer by 0-based position or by name,
    and a name may hold dots (the longest name that begins the rest is the one picked)."""
    for assignment in overrides:
        key, text = assignment.split("=", 1)
        key, text = key.strip(), text.strip()
        table, segments = case, [s.strip() for s in key.split(".")]
        if segments[0] == "peer":
            rest = key.split(".", 1)[1].lstrip()
            dotted = []
            for p in case["peer"]:
                name = p["name"]
                after = rest[len(name):].lstrip() if "." in name and rest.startswith(name) else ""
                if after.startswith("."):
                    dotted.append((len(name), p, after[1:]))
            if dotted:
                _, table, tail = max(dotted, key=lambda d: d[0])
                segments = [s.strip() for s in tail.split(".")]
            else:
                head = segments[1]
                if head.isdigit():
                    table = case["peer"][int(head)]
                else:
                    named = [p for p in case["peer"] if p["name"] == head]
                    assert named, f"override {assignment!r} names no peer of the case"
                    table = named[0]
                segments = segments[2:]
        set_path(table, segments, text)


def load_case(out_dir, result, given):
    path = find_case(out_dir, result, given)
    with open(path, "rb") as f:
        case = tomllib.load(f)
    apply_overrides(case, result["case"]["overrides"])
    CASE.clear()
    CASE.update(case)
    return path


def compare_with_echo(result):
    """Extra check: every setting used here against hurdle's echo of it (result["settings"])."""
    echo = result["settings"]
    for section, keys in DEFAULTS.items():
        for key in keys:
            if section == "beta" and key in ("lookback", "window_start", "window_end", "rolling_window"):
                continue  # resolved into result["sampling"] and checked there
            ours = setting(section, key)
            theirs = echo.get(section, {}).get(key)
            if isinstance(ours, (dt.date, dt.datetime)):
                ours = ours.isoformat()
            if isinstance(ours, (int, float)) and not isinstance(ours, bool) and theirs is not None:
                check(f"settings echo {section}.{key}", theirs, ours)
            else:
                check_equal(f"settings echo {section}.{key}", theirs, ours)
    for key in ("risk_free_rate", "equity_risk_premium"):
        check(f"settings echo market.{key}", echo["market"][key], setting("market", key))
    names = [p["name"] for p in CASE["peer"]]
    check_equal("peers, in the case's order", [p["name"] for p in result["peers"]], names)
    for name in names:
        spec, listed = peer_spec(name), next(p for p in echo["peer"] if p["name"] == name)
        for key in ("equity_value", "debt", "cash", "tax_rate", "debt_beta", "cost_of_debt", "exclude"):
            if spec[key] is None or isinstance(spec[key], str):
                check_equal(f"settings echo {name} {key}", listed.get(key), spec[key])
            else:
                check(f"settings echo {name} {key}", listed[key], spec[key])


def spread_table(path):
    """README "[debt]", spread tables: CSV with a header row (`#` lines are comments) or TOML with
    one [[row]] table per row; keys rating, spread, and min_coverage in a coverage table."""
    if path.endswith(".toml"):
        with open(path, "rb") as f:
            return tomllib.load(f)["row"]
    with open(path, newline="") as f:
        lines = [line for line in f if not line.lstrip().startswith("#")]
    rows = []
    for r in csv.DictReader(lines):
        row = {"rating": r["rating"].strip(), "spread": float(r["spread"])}
        if "min_coverage" in r:
            row["min_coverage"] = float(r["min_coverage"])
        rows.append(row)
    return rows


def case_cost_of_debt(folder):
    """README "[debt]": given; rf + the rating's spread; or rf + the spread of the row the
    coverage ebit / interest_expense falls in (from its min_coverage, inclusive, to the next's)."""
    source, rf = setting("debt", "source"), setting("market", "risk_free_rate")
    if source == "given":
        return setting("debt", "cost_pre_tax")
    if source == "rating":
        rows = spread_table(os.path.join(folder, setting("debt", "rating_table")))
        return rf + next(r["spread"] for r in rows if r["rating"] == setting("debt", "rating"))
    assert source == "coverage", source
    rows = spread_table(os.path.join(folder, setting("debt", "coverage_table")))
    coverage = setting("debt", "ebit") / setting("debt", "interest_expense")
    row = [r for r in rows if r["min_coverage"] <= coverage][-1]
    return rf + row["spread"]


# --------------------------------------------------------------------------------------------
# The returns, rebuilt from the case's files by README's rules ("Methods and their sources").

WEEKDAYS = {"monday": 0, "tuesday": 1, "wednesday": 2, "thursday": 3, "friday": 4}
# README "Risk-free conversion by frequency": periods per year.
PERIODS_PER_YEAR = {"daily": 252, "weekly": 52, "monthly": 12, "quarterly": 4}


class NotRecomputed(Exception):
    pass


def as_date(value):
    return value if isinstance(value, dt.date) else dt.date.fromisoformat(str(value))


def is_sample_point(day, frequency, weekday):
    """README "Sampling (monthly)" and "Sampling (other frequencies)": month-ends; weekdays
    Monday to Friday (daily); the chosen weekday (weekly); March 31, June 30, September 30 and
    December 31 (quarterly)."""
    month_end = (day + dt.timedelta(days=1)).day == 1
    if frequency == "monthly":
        return month_end
    if frequency == "quarterly":
        return month_end and day.month in (3, 6, 9, 12)
    if frequency == "weekly":
        return day.weekday() == weekday
    if frequency == "daily":
        return day.weekday() < 5
    raise NotRecomputed(f"frequency {frequency!r} has no sampling rule here")


def point_on_or_before(day, frequency, weekday):
    while not is_sample_point(day, frequency, weekday):
        day -= dt.timedelta(days=1)
    return day


def point_on_or_after(day, frequency, weekday):
    while not is_sample_point(day, frequency, weekday):
        day += dt.timedelta(days=1)
    return day


def span_start(end, span):
    """README "Sampling (other frequencies)": a span starts that much earlier by the calendar;
    years and months keep the day of the month, clamped to the month's end; weeks are 7 days
    (days: calendar days)."""
    match = re.fullmatch(r"(\d+)([ymwd])", span.strip())
    if not match:
        raise NotRecomputed(f"beta.lookback {span!r} is not a span this check reads")
    count, unit = int(match.group(1)), match.group(2)
    if unit in "ym":
        months = end.year * 12 + end.month - 1 - (count * 12 if unit == "y" else count)
        year, month = divmod(months, 12)
        month += 1
        return dt.date(year, month, min(end.day, calendar.monthrange(year, month)[1]))
    return end - dt.timedelta(days=count * (7 if unit == "w" else 1))


def window_grid(frequency, weekday, lags):
    """The sample points: `lags` points before the window (README "Lagged and led index
    returns": the grid starts that many periods early), then the window's points, the last on or
    before window_end (default the valuation date), the first `lookback` periods earlier, on or
    after the span's start, or on or after window_start (which replaces lookback); and the point
    before the first, which opens the first sample's period."""
    end_date = as_date(setting("beta", "window_end") or CASE["case"]["valuation_date"])
    end = point_on_or_before(end_date, frequency, weekday)
    start, lookback = setting("beta", "window_start"), setting("beta", "lookback")
    back = lambda d: point_on_or_before(d - dt.timedelta(days=1), frequency, weekday)
    if start is None and isinstance(lookback, int):
        points = [end]
        for _ in range(lookback):
            points.insert(0, back(points[0]))
    else:
        first = as_date(start) if start is not None else span_start(end, str(lookback))
        points, day = [], point_on_or_after(first, frequency, weekday)
        while day <= end:
            points.append(day)
            day = point_on_or_after(day + dt.timedelta(days=1), frequency, weekday)
    window_periods = len(points) - 1
    for _ in range(lags):
        points.insert(0, back(points[0]))
    return back(points[0]), points, window_periods


TABLES = {}


def wide_table(path, source, role):
    """The cells of a wide table (README "Wide price tables"): a CSV file, or one sheet of an
    .xlsx/.xlsm workbook read with openpyxl (the values the workbook saved); the header is the
    first row with anything in it. Other formats are not read here. Read once per table."""
    if path not in TABLES:
        TABLES[path] = read_wide_table(path, source, role)
    return TABLES[path]


def read_wide_table(path, source, role):
    lower = path.lower()
    if lower.endswith((".csv", ".txt")):
        with open(path, newline="", encoding="utf-8") as f:
            rows, epoch = [list(r) for r in csv.reader(f)], dt.date(1899, 12, 30)
    elif lower.endswith((".xlsx", ".xlsm")):
        import openpyxl
        book = openpyxl.load_workbook(path, read_only=True, data_only=True)
        sheet = book[source["sheet"]] if "sheet" in source else book.worksheets[0]
        rows = [list(r) for r in sheet.iter_rows(values_only=True)]
        # Serial numbers count from the workbook's own date system (1900 or 1904).
        epoch = dt.date(1899, 12, 30) if book.epoch.year == 1899 else dt.date(1904, 1, 1)
    else:
        raise NotRecomputed(f"{role} is read from the wide table {source['file']}, a format this check "
                            f"does not read (CSV, .xlsx and .xlsm only)")
    blank = lambda cell: cell is None or (isinstance(cell, str) and not cell.strip())
    while rows and all(blank(c) for c in rows[0]):
        rows.pop(0)
    return rows, epoch, blank


def read_series(folder, table, value_default, role):
    """A series of the case (README "Price files"): a CSV of its own, dates ascending, or a
    column of a wide table under [sources.NAME] (README "Wide price tables": date cells, serial
    numbers or ISO text, either order; an empty cell a missing price; numbers stored as text).
    Returns ([(date, value)] in date order, the file's path)."""
    if "source" in table:
        source = CASE["sources"][table["source"]]
        path = os.path.join(folder, source["file"])
        rows, epoch, blank = wide_table(path, source, role)
        header = [str(h).strip() if h is not None else "" for h in rows[0]]
        date_at = header.index(source["date_column"]) if "date_column" in source else 0
        value_at = header.index(table["column"])
        series = []
        for cells in rows[1:]:
            if all(blank(c) for c in cells) or value_at >= len(cells) or blank(cells[value_at]):
                continue
            day = cells[date_at]
            if isinstance(day, dt.datetime):
                day = day.date()
            elif isinstance(day, (int, float)) or re.fullmatch(r"\s*\d+(\.\d*)?\s*", str(day)):
                day = epoch + dt.timedelta(days=int(float(day)))  # a time of day is dropped
            elif not isinstance(day, dt.date):
                day = dt.date.fromisoformat(str(day).strip()[:10])
            series.append((day, float(cells[value_at])))
        return sorted(series), path
    path = os.path.join(folder, table[value_default[0]])
    date_column = table.get("date_column", "date")
    value_column = table.get(value_default[1], value_default[2])
    with open(path, newline="", encoding="utf-8") as f:
        rows = [(dt.date.fromisoformat(r[date_column].strip()), float(r[value_column]))
                for r in csv.DictReader(f)]
    return rows, path


def samples(series, opening, points, max_stale):
    """README "Sampling": each point's sample is the last value dated after the previous point
    and on or before this one, None when there is none (never carried forward); with
    max_stale_days, a sample dated more than that many days before its point is 'stale'."""
    out, i = [], 0
    while i < len(series) and series[i][0] <= opening:
        i += 1
    for point in points:
        last = None
        while i < len(series) and series[i][0] <= point:
            last = series[i]
            i += 1
        if last is None:
            out.append(None)
        elif max_stale is not None and (point - last[0]).days > max_stale:
            out.append("stale")
        else:
            out.append(last[1])
    return out


def period_returns(sampled, kind):
    """Return k (k = 1..) from samples k-1 and k: p(t)/p(t-1) - 1 or ln(p(t)/p(t-1)) (README
    "[beta]", returns), with the reasons it is missing: {"missing"} without a usable sample at
    either end, plus "stale" when either end's sample is stale. README "Sampling" says a stale
    sample "is dropped" and "the returns on both sides of it are counted as stale": a dropped
    sample leaves its periods without a sample at that end ("a return needs samples at both of its
    month-ends"), so such a period counts as a missing price and as stale (README, universe
    outputs: "a period can have several" reasons; hurdle's result.json counts it so too)."""
    out = [(None, set())]
    for a, b in zip(sampled[:-1], sampled[1:]):
        reasons = set()
        if not isinstance(a, float) or not isinstance(b, float):
            reasons.add("missing")
        if a == "stale" or b == "stale":
            reasons.add("stale")
        if reasons:
            out.append((None, reasons))
        else:
            out.append((b / a - 1.0 if kind == "simple" else math.log(b / a), reasons))
    return out


def risk_free_rates(sampled, kind, periods):
    """README "Excess returns" and "Risk-free conversion by frequency": period k's rate is the
    yield sampled at the period's start (point k-1), (1 + y)^(1/periods) - 1 for simple returns,
    ln(1 + y)/periods for log returns."""
    out = [None]
    for y in sampled[:-1]:
        if y is None or y == "stale":
            out.append("missing")
        else:
            out.append((1.0 + y) ** (1.0 / periods) - 1.0 if kind == "simple" else math.log(1.0 + y) / periods)
    return out


def rebuild_returns(case_path, result):
    """Every row returns.csv should hold, and each peer's window and dropped periods, from the
    case's own files. Raises NotRecomputed for a part this check cannot rebuild."""
    folder = os.path.dirname(os.path.abspath(case_path))
    frequency, kind = setting("beta", "frequency"), setting("beta", "returns")
    if frequency not in PERIODS_PER_YEAR:
        raise NotRecomputed(f"frequency {frequency!r}")
    if kind not in ("simple", "log"):
        raise NotRecomputed(f"return type {kind!r}")
    weekday = WEEKDAYS[setting("beta", "weekday")]
    method = setting("beta", "method")
    lags, leads = {"ols": (0, 0), "scholes-williams": (1, 1),
                   "dimson": (setting("beta", "dimson_lags"), setting("beta", "dimson_leads"))}[method]
    max_stale = setting("beta", "max_stale_days")
    opening, points, window_periods = window_grid(frequency, weekday, lags)
    sampling = result["sampling"]
    check_equal("sampling frequency", sampling["frequency"], frequency)
    check_equal("sampling return type", sampling["return_type"], kind)
    check_equal("sampling window start (first sample point)", sampling["window_start"], points[lags].isoformat())
    check_equal("sampling window end (last sample point)", sampling["window_end"], points[-1].isoformat())
    check_equal("sampling lookback (periods)", sampling["lookback"], window_periods)
    check("periods per year", sampling["periods_per_year"], PERIODS_PER_YEAR[frequency])
    hashes = {f["role"]: f["sha256"] for f in result["files"]}

    def series(role, table, value_default):
        rows, path = read_series(folder, table, value_default, role)
        check_equal(f"{role} file SHA-256 (the file read here is the one hurdle read)", hashes.get(role), sha256(path))
        return samples(rows, opening, points, max_stale)

    index = series("index", CASE["market"]["index"], ("prices", "price_column", "price"))
    market = period_returns(index, kind)
    excess = "risk_free_series" in CASE["market"]
    check_equal("excess returns (a risk-free series is given)", sampling["excess_returns"], excess)
    if excess:
        # The yield's sample is its own: a stale yield is not a rule README states, so a yield
        # sample is never dropped for age (max_stale_days applies to prices).
        values, path = read_series(folder, CASE["market"]["risk_free_series"], ("yields", "yield_column", "yield"), "risk_free")
        check_equal("risk_free file SHA-256 (the file read here is the one hurdle read)", hashes.get("risk_free"), sha256(path))
        yields = samples(values, opening, points, None)
        rf = risk_free_rates(yields, kind, PERIODS_PER_YEAR[frequency])
    else:
        rf = [None] + [0.0] * (len(points) - 1)
    # The index's (excess) return of each grid period, None when it or its rate is missing.
    market_excess = [None] + [m - r if m is not None and isinstance(r, float) else None
                              for (m, _), r in zip(market[1:], rf[1:])]
    last = len(points) - 1
    rows, drops = [], {}
    for p in CASE["peer"]:
        name = p["name"]
        asset = period_returns(series(f"peer:{name}", {**PEER_DEFAULTS, **p}, ("prices", "price_column", "price")), kind)
        dropped = defaultdict(int)
        for k in range(lags + 1, last + 1):
            reasons = {f"asset_{r}" for r in asset[k][1]} | {f"market_{r}" for r in market[k][1]}
            if rf[k] == "missing":
                reasons.add("risk_free_missing")
            shifted = {-l: k - l for l in range(1, lags + 1)} | {l: k + l for l in range(1, leads + 1)}
            # A lead past the window end is never taken (README): the last `leads` periods drop.
            if any(j > last or market_excess[j] is None for j in shifted.values()):
                reasons.add("shifted_market_missing")
            for reason in reasons:
                dropped[reason] += 1
            if reasons:
                dropped["total"] += 1
                continue
            row = {"peer": name, "period_end": points[k].isoformat(),
                   "asset_return": asset[k][0], "market_return": market[k][0]}
            if excess:
                row["risk_free"] = rf[k]
            for offset, j in sorted(shifted.items()):
                column = f"market_lag_{-offset}" if offset < 0 else f"market_lead_{offset}"
                row[column] = market_excess[j]
            rows.append(row)
            # README "Diagnostics": the lagged-response regression needs the previous period's
            # index return too, so the window's first period drops out of it.
            if method == "ols" and market_excess[k - 1] is not None:
                own = asset[k][0] - (rf[k] if excess else 0.0)
                LAGGED.setdefault(name, []).append((own, market_excess[k], market_excess[k - 1]))
        drops[name] = dropped
    grid = [points[k].isoformat() for k in range(lags + 1, last + 1)]
    return rows, drops, window_periods, grid


def compare_returns(out_dir, rebuilt, drops, window_periods, result):
    """returns.csv and the peers' window counts against the rebuilt ones."""
    global checks
    with open(f"{out_dir}/returns.csv", newline="") as f:
        reader = csv.DictReader(f)
        written = list(reader)
        header = reader.fieldnames
    expected_header = list(rebuilt[0].keys()) if rebuilt else header
    # The columns as a set: README names them but not the order of the lag and lead columns.
    check_equal("returns.csv columns", sorted(header), sorted(expected_header))
    check_equal("returns.csv rows", len(written), len(rebuilt))
    for got, want in zip(written, rebuilt):
        label = f"returns.csv {want['peer']} {want['period_end']}"
        check_equal(f"{label} (peer, period)", (got.get("peer"), got.get("period_end")), (want["peer"], want["period_end"]))
        for key, value in want.items():
            if key in ("peer", "period_end"):
                continue
            checks += 1
            theirs = float(got[key]) if got.get(key) not in (None, "") else None
            if theirs is None or not (theirs == value or abs(theirs - value) <= RETURNS_TOLERANCE * abs(value)):
                failures.append(f"{label} {key}: hurdle {got.get(key)!r} vs rebuilt {value!r}")
    for peer in result["peers"]:
        name = peer["name"]
        check_equal(f"{name} periods in the window", peer["periods_in_window"], window_periods)
        # README, result.json schema: periods_dropped by reason.
        for reason in ("total", "asset_missing", "market_missing", "risk_free_missing", "asset_stale",
                       "market_stale", "shifted_market_missing"):
            check_equal(f"{name} periods dropped ({reason})", peer["periods_dropped"].get(reason), drops[name].get(reason, 0))
        check(f"{name} stale share (periods with a stale peer price / window)", peer["stale_share"],
              drops[name].get("asset_stale", 0) / window_periods)


def tax_factor(formula, t, kd):
    """The factor s in beta_L = beta_U + (beta_U - beta_D) * s * D/E."""
    return {"hamada": 1 - t, "conine": 1 - t, "harris-pringle": 1.0, "miles-ezzell": 1 - t * kd / (1 + kd)}[formula]


def sandwich(weights, residuals, parameters, kind, lags):
    """Covariance of the linear estimator weights @ y from residuals e, written out from the
    published formulas: classical s^2 A A' with s^2 = e'e/(n-k); HC1 (White 1980, Econometrica
    48(4); MacKinnon and White 1985) n/(n-k) A diag(e^2) A'; Newey-West (1987, Econometrica
    55(3)) A S A' with S_ts = e_t e_s (1 - |t-s|/(L+1)) for |t-s| <= L, no small-sample factor.
    For OLS, A = (X'X)^-1 X' (least_squares.weights: R^-1 Q' from numpy's QR)."""
    n = len(residuals)
    if kind == "classical":
        return weights @ weights.T * (residuals @ residuals / (n - parameters))
    if kind == "hc1":
        return n / (n - parameters) * (weights * residuals**2) @ weights.T
    assert kind == "newey-west"
    omega = np.outer(residuals, residuals)
    distance = np.abs(np.subtract.outer(np.arange(n), np.arange(n)))
    kernel = np.where(distance <= lags, 1 - distance / (lags + 1), 0.0)
    return weights @ (omega * kernel) @ weights.T


def reference_beta(method, kind, lags, asset, market, shifted):
    """Beta, its SE, alpha, alpha's SE, Cov(alpha, beta) and the residual degrees of freedom of
    one estimator, from its published formula: OLS (Sharpe 1963) and Dimson (1979) by numpy
    least squares on [1, shifted and current market], beta the sum of the slopes; Scholes and
    Williams (1977) from scipy's simple-regression slopes and numpy's autocorrelation; standard
    errors by `sandwich` (classical, HC1, Newey-West)."""
    n = len(asset)
    if method in ("ols", "dimson"):
        offsets = sorted(list(shifted) + [0]) if method == "dimson" else [0]
        columns = [market if o == 0 else shifted[o] for o in offsets]
        design = np.column_stack([np.ones(n)] + columns)
        coef, _, rank, _ = np.linalg.lstsq(design, asset, rcond=None)
        assert rank == design.shape[1]
        residuals = asset - design @ coef
        k = design.shape[1]
        cov = sandwich(least_squares.weights(design), residuals, k, kind, lags)
        ones = np.r_[0.0, np.ones(k - 1)]
        return dict(beta=coef[1:].sum(), se=np.sqrt(ones @ cov @ ones), alpha=coef[0],
                    alpha_se=np.sqrt(cov[0, 0]), cov_ab=cov[0, 1:].sum(), df=n - k,
                    coef=coef, cov=cov, offsets=offsets, residuals=residuals)
    assert method == "scholes-williams"
    lag, lead = shifted[-1], shifted[1]
    slopes = [stats.linregress(x, asset).slope for x in (lag, market, lead)]
    rho = np.corrcoef(market, lag)[0, 1]
    beta = sum(slopes) / (1 + 2 * rho)
    design = np.column_stack([np.ones(n), lag, market, lead])
    coef, _, _, _ = np.linalg.lstsq(design, asset, rcond=None)
    residuals = asset - design @ coef
    w = sum((x - x.mean()) / ((x - x.mean()) ** 2).sum() for x in (lag, market, lead)) / (1 + 2 * rho)
    a = np.vstack([1 / n - market.mean() * w, w])
    cov = sandwich(a, residuals, 4, kind, lags)
    return dict(beta=beta, se=np.sqrt(cov[1, 1]), alpha=asset.mean() - beta * market.mean(),
                alpha_se=np.sqrt(cov[0, 0]), cov_ab=cov[0, 1], df=n - 4, slopes=slopes, rho=rho)


def newey_west_lags(n):
    """The case's lags, else Newey and West (1994), Rev. Econ. Studies 61(4): floor(4 (N/100)^(2/9)).
    A stated 0 is the case's (the plain White/HC0-type sum, no lagged terms), not the rule."""
    stated = setting("beta", "newey_west_lags")
    if stated is not None:
        return stated
    return int(np.floor(4 * (n / 100) ** (2 / 9)))


def check_fitted_line(name, peer, market):
    """The mean-response band (textbook): alpha + beta x +/- t(0.975, df) sqrt(Var a + 2x Cov + x^2 Var b),
    over the index returns used, with scipy's t quantile."""
    line = peer["fitted_line"]
    t975 = stats.t.ppf(0.975, peer["degrees_of_freedom"])
    check(f"{name} band t quantile (scipy)", line["t_critical"], t975)
    points = line["points"]
    check(f"{name} line starts at the lowest index return", points[0]["x"], market.min())
    check(f"{name} line ends at the highest index return", points[-1]["x"], market.max())
    for p in points:
        x = p["x"]
        fitted = peer["alpha"] + peer["beta"] * x
        half = t975 * np.sqrt(peer["alpha_std_error"] ** 2 + 2 * x * peer["alpha_beta_covariance"] + x * x * peer["beta_std_error"] ** 2)
        check(f"{name} line at {x:.4f}", p["fitted"], fitted)
        check(f"{name} band low at {x:.4f}", p["low"], fitted - half)
        check(f"{name} band high at {x:.4f}", p["high"], fitted + half)


def check_inference(name, peer, beta, se, alpha, alpha_se, df):
    t975 = stats.t.ppf(0.975, df)
    check(f"{name} beta", peer["beta"], beta)
    check(f"{name} beta SE", peer["beta_std_error"], se)
    check(f"{name} beta t", peer["beta_t_stat"], beta / se)
    check(f"{name} beta p-value (scipy t)", peer["beta_p_value"], 2 * stats.t.sf(abs(beta / se), df), floor=0.0)
    check(f"{name} CI low (scipy t)", peer["beta_ci_low"], beta - t975 * se)
    check(f"{name} CI high (scipy t)", peer["beta_ci_high"], beta + t975 * se)
    check(f"{name} alpha", peer["alpha"], alpha)
    check(f"{name} alpha SE", peer["alpha_std_error"], alpha_se)
    check(f"{name} degrees of freedom", peer["degrees_of_freedom"], df)


def check_estimator(name, peer, data, asset, market, result):
    """Dimson, Scholes-Williams, robust errors and Vasicek, each from its formula."""
    n = len(asset)
    kind = setting("beta", "std_errors")
    check_equal(f"{name} standard errors (the case's)", peer["std_errors"], kind)
    # Newey and West (1994), Rev. Econ. Studies 61(4): floor(4 (N/100)^(2/9)), unless the case
    # gives beta.newey_west_lags; null under other standard errors (README, result.json schema).
    lags = newey_west_lags(n) if kind == "newey-west" else None
    check_equal(f"{name} Newey-West lags", peer["newey_west_lags"], lags)
    shifted = shifted_columns(data)
    check_shifts_are_the_market_series(name, data, shifted, result)
    method = setting("beta", "method")
    check_equal(f"{name} method (the case's)", peer["method"], method)
    if method in ("ols", "dimson"):
        # Dimson (1979), J. Financial Economics 7(2): OLS on lagged/current/led market columns;
        # beta = sum of the market slopes, Var = 1' V 1 from their covariance block.
        offsets = sorted(list(shifted) + [0])
        columns = [market if o == 0 else shifted[o] for o in offsets]
        design = np.column_stack([np.ones(n)] + columns)
        coef, _, rank, _ = np.linalg.lstsq(design, asset, rcond=None)
        assert rank == design.shape[1]
        residuals = asset - design @ coef
        k = design.shape[1]
        weights = least_squares.weights(design)
        cov = sandwich(weights, residuals, k, kind, lags)
        ones = np.r_[0.0, np.ones(k - 1)]
        beta, se = coef[1:].sum(), np.sqrt(ones @ cov @ ones)
        check_inference(name, peer, beta, se, coef[0], np.sqrt(cov[0, 0]), n - k)
        check(f"{name} Cov(alpha, beta)", peer["alpha_beta_covariance"], cov[0, 1:].sum())
        check_equal(f"{name} market coefficients' offsets", [c["offset"] for c in peer["market_coefficients"]], offsets)
        for i, c in enumerate(peer["market_coefficients"]):
            check(f"{name} offset {c['offset']} slope", c["estimate"], coef[1 + offsets.index(c["offset"])])
            check(f"{name} offset {c['offset']} SE", c["std_error"], np.sqrt(cov[1 + i, 1 + i]))
        ss_total = ((asset - asset.mean()) ** 2).sum()
        check(f"{name} R2", peer["r_squared"], 1 - residuals @ residuals / ss_total)
    else:
        # Scholes and Williams (1977), J. Financial Economics 5(3):
        # beta = (b_-1 + b_0 + b_+1) / (1 + 2 rho), each b a simple regression slope (scipy).
        assert method == "scholes-williams"
        lag, lead = shifted[-1], shifted[1]
        slopes = [stats.linregress(x, asset).slope for x in (lag, market, lead)]
        rho = np.corrcoef(market, lag)[0, 1]
        check(f"{name} market autocorrelation (numpy)", peer["market_autocorrelation"], rho)
        beta = sum(slopes) / (1 + 2 * rho)
        # SE as README states: Var(a'r) with a = sum of slope weights / (1 + 2 rho), from the
        # residuals of r on [1, m_-1, m_0, m_+1].
        design = np.column_stack([np.ones(n), lag, market, lead])
        coef, _, _, _ = np.linalg.lstsq(design, asset, rcond=None)
        residuals = asset - design @ coef
        # Each simple-regression slope b_j = w_j'r with w_j = (m_j - mean m_j) / S_jj (textbook
        # least squares), so its standard error is the same sandwich (the case's kind) applied to
        # w_j with the residuals of r on [1, m_-1, m_0, m_+1], 4 parameters: the construction
        # hurdle's doc comment gives for beta, applied to each slope.
        slope_weights = [(x - x.mean()) / ((x - x.mean()) ** 2).sum() for x in (lag, market, lead)]
        slope_cov = sandwich(np.vstack(slope_weights), residuals, 4, kind, lags)
        coefficients = peer["market_coefficients"]
        check_equal(f"{name} SW market coefficients' offsets", [c["offset"] for c in coefficients], [-1, 0, 1])
        for i, (c, b) in enumerate(zip(coefficients, slopes)):
            check(f"{name} SW slope {c['offset']} (scipy linregress)", c["estimate"], b)
            check(f"{name} SW slope {c['offset']} SE ({kind})", c["std_error"], np.sqrt(slope_cov[i, i]))
        w = sum(slope_weights) / (1 + 2 * rho)
        a = np.vstack([1 / n - market.mean() * w, w])
        cov = sandwich(a, residuals, 4, kind, lags)
        alpha = asset.mean() - beta * market.mean()
        check_inference(name, peer, beta, np.sqrt(cov[1, 1]), alpha, np.sqrt(cov[0, 0]), n - 4)
        check(f"{name} Cov(alpha, beta)", peer["alpha_beta_covariance"], cov[0, 1])

    used = peer["beta"]
    adjustment = setting("beta", "adjustment")
    if adjustment == "blume":
        used = blume(peer["beta"], setting("beta", "blume_weight"))
        check(f"{name} shrunk beta (Blume)", peer["shrunk_beta"], used)
    elif adjustment == "vasicek":
        # Vasicek (1973), J. Finance 28(5): w = var_prior / (var_prior + SE^2).
        if setting("beta", "vasicek_prior_mean") is not None:
            mean, var = setting("beta", "vasicek_prior_mean"), setting("beta", "vasicek_prior_variance")
        else:
            # The peers that enter the aggregation, by the case's exclude and exclude_flags.
            raw = np.array([p["beta"] for p in result["peers"] if INCLUDED[p["name"]]])
            mean, var = raw.mean(), raw.var(ddof=1)
        check(f"{name} Vasicek prior mean", result["beta"]["vasicek_prior"]["mean"], mean)
        check(f"{name} Vasicek prior variance", result["beta"]["vasicek_prior"]["variance"], var)
        w = var / (var + peer["beta_std_error"] ** 2)
        used = w * peer["beta"] + (1 - w) * mean
        check(f"{name} Vasicek weight", peer["vasicek"]["weight_on_estimate"], w)
        check(f"{name} Vasicek SE", peer["vasicek"]["std_error"], np.sqrt(1 / (1 / var + 1 / peer["beta_std_error"] ** 2)))
        check(f"{name} shrunk beta (Vasicek)", peer["shrunk_beta"], used)
    else:
        assert peer["shrunk_beta"] is None
    check(f"{name} beta used", peer["beta_used"], used)
    check_unlevered(name, peer, used, result)


def blume(raw, weight):
    """Blume (1971), J. Finance 26(1): w * beta + (1 - w), the weight w read from the case file
    with its overrides (beta.blume_weight, default 0.67), so a non-default weight is checked too."""
    return weight * raw + (1 - weight)


def peer_debt_terms(spec):
    """A peer's pre-tax Kd and debt beta, from the case: the peer's own pre-tax Kd, else the
    subject's (README "[[peer]]", cost_of_debt); README "[leverage]", debt_beta_source: none;
    given (the peer's own, else leverage.debt_beta); credit-spread (the peer's own, else the CAPM
    solved for debt priced at Kd: (Kd - rf) / ERP)."""
    kd = spec["cost_of_debt"] if spec["cost_of_debt"] is not None else RATES["kd"]
    source = setting("leverage", "debt_beta_source")
    if source == "none":
        bd = 0.0
    elif spec["debt_beta"] is not None:
        bd = spec["debt_beta"]
    elif source == "given":
        bd = setting("leverage", "debt_beta")
    else:
        bd = (kd - RATES["rf"]) / RATES["erp"]
    return kd, bd


def unlever(formula, levered, de, t, kd, bd):
    """The asset beta from an equity beta: Hamada (1972, J. Finance 27(2)) beta_L / (1 + (1 - t) D/E),
    riskless debt (no debt beta); Harris-Pringle (1985, J. Financial Research 8(3)), Miles-Ezzell
    (1985, J. Finance 40(5)) and Conine (1980, J. Finance 35(4)) solved for beta_U from
    beta_L = beta_U + (beta_U - beta_D) s D/E, s by tax_factor."""
    if formula == "hamada":
        return levered / (1 + (1 - t) * de)
    s = tax_factor(formula, t, kd)
    return (levered + bd * s * de) / (1 + s * de)


def relever(formula, unlevered, de, t, kd, bd):
    """beta_L = beta_U + (beta_U - beta_D) s D/E, the debt beta 0 under Hamada (riskless debt)."""
    if formula == "hamada":
        bd = 0.0
    return unlevered + (unlevered - bd) * tax_factor(formula, t, kd) * de


def check_unlevered(name, peer, used, result):
    """D/E (gross or net of cash) and the unlevered beta by the case's formula: Hamada (1972);
    Harris-Pringle (1985), Miles-Ezzell (1985) and Conine (1980) solved for the asset beta."""
    spec = peer_spec(name)
    de = spec["debt"] / spec["equity_value"]
    if setting("leverage", "debt_measure") == "net":
        de = (spec["debt"] - spec["cash"]) / spec["equity_value"]
    check(f"{name} D/E", peer["debt_to_equity"], de)
    check(f"{name} tax rate (the case's)", peer["tax_rate"], spec["tax_rate"])
    kd, bd = peer_debt_terms(spec)
    check(f"{name} cost of debt", peer["cost_of_debt"], kd)
    check(f"{name} debt beta ({setting('leverage', 'debt_beta_source')})", peer["debt_beta"], bd)
    formula = setting("leverage", "formula")
    if formula == "hamada":
        check(f"{name} Hamada unlevered", peer["unlevered_beta"], used / (1 + (1 - spec["tax_rate"]) * de))
        return
    s = tax_factor(formula, spec["tax_rate"], kd)
    check(f"{name} unlevered ({formula})", peer["unlevered_beta"], (used + bd * s * de) / (1 + s * de))


def check_lag_response(name, peer):
    """README "Diagnostics": under OLS, the peer's return on [1, m(t), m(t - 1)] (Dimson 1979,
    one lag) by numpy least squares, the lag slope's standard error by `sandwich` (the case's
    kind), its t and scipy's two-sided p-value on N - 3 degrees of freedom; none under another
    estimator. Returns whether lagged_response is expected: a positive slope with p below
    beta.flag_lag_p_value."""
    global checks
    if setting("beta", "method") != "ols":
        check_equal(f"{name} lag_response (OLS only)", peer["lag_response"], None)
        return False
    if "periods" not in WINDOW:
        not_recomputed.append(f"{name} lag_response: the returns were not rebuilt, so the "
                              f"previous periods' index returns are not known here")
        return "lagged_response" in peer["flags"]
    rows = LAGGED.get(name, [])
    n = len(rows)
    kind = setting("beta", "std_errors")
    # README: the Newey-West lags are the peer's own (its estimate's N, not this regression's).
    lags = newey_west_lags(peer["observations"]) if kind == "newey-west" else 0
    if n <= 4 or (kind == "newey-west" and 4 * lags >= n):
        check_equal(f"{name} lag_response (too few periods)", peer["lag_response"], None)
        return False
    y = np.array([r[0] for r in rows])
    design = np.column_stack([np.ones(n), [r[1] for r in rows], [r[2] for r in rows]])
    coef, _, _, _ = np.linalg.lstsq(design, y, rcond=None)
    residuals = y - design @ coef
    cov = sandwich(least_squares.weights(design), residuals, 3, kind, lags)
    se = np.sqrt(cov[2, 2])
    t = coef[2] / se
    p = 2 * stats.t.sf(abs(t), n - 3)
    got = peer["lag_response"]
    flag = coef[2] > 0 and p < setting("beta", "flag_lag_p_value")
    if got is None:
        checks += 1
        failures.append(f"{name} lag_response: none in result.json, numpy fits {n} periods")
        return flag
    check_equal(f"{name} lag_response observations", got.get("observations"), n)
    check_equal(f"{name} lag_response Newey-West lags", got.get("newey_west_lags"),
                lags if kind == "newey-west" else None)
    check(f"{name} lag slope (numpy)", got.get("slope"), coef[2])
    check(f"{name} lag slope SE ({kind})", got.get("std_error"), se)
    check(f"{name} lag slope t", got.get("t_stat"), t)
    check(f"{name} lag slope p-value (scipy t)", got.get("p_value"), p, floor=0.0)
    check(f"{name} summed beta, one lag (numpy)", got.get("summed_beta"), coef[1] + coef[2])
    return flag


def shifted_columns(data):
    shifted = {}
    for key in data[0]:
        if key.startswith("market_lag_"):
            shifted[-int(key[len("market_lag_"):])] = np.array([float(r[key]) for r in data])
        elif key.startswith("market_lead_"):
            shifted[int(key[len("market_lead_"):])] = np.array([float(r[key]) for r in data])
    return shifted


def check_diagnostics(name, peer, data, asset, market, result):
    """Durbin-Watson (1950, Biometrika 37) sum((e_t - e_t-1)^2)/sum(e^2); internally studentised
    residuals e_i / (s sqrt(1 - h_ii)) with h the hat-matrix diagonal (textbook); the flags
    against the case's thresholds as README states them."""
    n = len(asset)
    shifted = shifted_columns(data)
    if setting("beta", "method") == "scholes-williams":
        columns = [shifted[-1], market, shifted[1]]
    else:
        offsets = sorted(list(shifted) + [0])
        columns = [market if o == 0 else shifted[o] for o in offsets]
    design = np.column_stack([np.ones(n)] + columns)
    coef, _, _, _ = np.linalg.lstsq(design, asset, rcond=None)
    e = asset - design @ coef
    check(f"{name} Durbin-Watson", peer["durbin_watson"], np.sum(np.diff(e) ** 2) / (e @ e))
    hat = least_squares.leverages(design)
    s = np.sqrt(e @ e / (n - design.shape[1]))
    studentised = e / (s * np.sqrt(1 - hat))
    check(f"{name} |studentised| > 3", peer["large_studentised_residuals"], int(np.sum(np.abs(studentised) > 3)))
    global checks
    checks += 1
    rows = [int(i) for i in np.flatnonzero(np.abs(studentised) > 3)]
    if peer["large_studentised_residual_rows"] != rows:
        failures.append(f"{name} flagged rows: hurdle {peer['large_studentised_residual_rows']} vs numpy {rows}")
    # R^2 of the estimating regression (README "Diagnostics per peer"; for Scholes-Williams of r
    # on [1, m-1, m0, m+1]), from these residuals, not hurdle's figure.
    r_squared = 1 - e @ e / ((asset - asset.mean()) @ (asset - asset.mean()))
    check(f"{name} R2 of the estimating regression", peer["r_squared"], r_squared)
    # The window's periods and the stale count as rebuilt from the case's files (hurdle's own
    # figures only where the returns could not be rebuilt, which the report says).
    window = WINDOW["periods"] if WINDOW else peer["periods_in_window"]
    stale = WINDOW["drops"][name].get("asset_stale", 0) if WINDOW else peer["periods_dropped"]["asset_stale"]
    expected = []
    if n < setting("beta", "flag_observations_share") * window:
        expected.append("too_few_observations")
    if r_squared < setting("beta", "flag_r_squared_floor"):
        expected.append("low_r_squared")
    if stale / window > setting("beta", "flag_stale_share"):
        expected.append("stale_prices")
    # README "[beta]", flag_zero_return_share: the share of the returns used (raw, before the
    # risk-free rate) that are exactly zero.
    raw = [float(r["asset_return"]) for r in data]
    zero_share = sum(1 for x in raw if x == 0.0) / len(raw) if raw else 0.0
    check(f"{name} zero_return_share", peer["zero_return_share"], zero_share)
    if zero_share > setting("beta", "flag_zero_return_share"):
        expected.append("zero_returns")
    if check_lag_response(name, peer):
        expected.append("lagged_response")
    checks += 1
    if peer["flags"] != expected:
        failures.append(f"{name} flags: hurdle {peer['flags']} vs reference {expected}")
    # README "[beta]", exclude_flags, and "[[peer]]", exclude: a peer's own reason takes
    # precedence; else the first listed flag it raises excludes it, the rule named as the reason.
    spec = peer_spec(name)
    by_rule = [f for f in expected if f in setting("beta", "exclude_flags")]
    INCLUDED[name] = spec["exclude"] is None and not by_rule
    checks += 1
    reason = peer["excluded_reason"]
    if spec["exclude"] is not None:
        ok = reason == spec["exclude"]
    elif by_rule:
        ok = reason is not None and by_rule[0] in reason and "beta.exclude_flags" in reason
    else:
        ok = reason is None
    if not ok:
        failures.append(f"{name} excluded_reason: hurdle {reason!r}, case: exclude {spec['exclude']!r}, flags by rule {by_rule}")


def check_shifts_are_the_market_series(name, data, shifted, result):
    """Each lag/lead column must be the market's excess return of the period that many steps
    away on the window's grid (built here from every peer's rows of returns.csv). Only when the
    returns were not rebuilt: rebuilt rows take each shifted value from the sampled grid itself
    (holidays included, which a grid pieced together from returns.csv rows would skip), and
    compare_returns has compared returns.csv's columns with them."""
    if not shifted or WINDOW:
        return
    market_by_period = {}
    for rows in ROWS.values():
        for r in rows:
            m = float(r["market_return"]) - float(r.get("risk_free") or 0.0)
            market_by_period[r["period_end"]] = m
    periods = sorted(market_by_period)
    position = {p: i for i, p in enumerate(periods)}
    compared = 0
    for j, r in enumerate(data):
        for offset, values in shifted.items():
            i = position[r["period_end"]] + offset
            if 0 <= i < len(periods):
                check(f"{name} {r['period_end']} market at offset {offset}", values[j], market_by_period[periods[i]])
                compared += 1
    assert compared > 0, "no shifted market value could be compared"


def flat_to_rounding(values):
    """README (0.12.0 notes): returns count as flat when they all lie within
    64 eps (1 + |r|) of one another, eps the double's machine epsilon."""
    if not values:
        return False
    low, high = min(values), max(values)
    return high - low <= 64 * np.finfo(float).eps * (1 + max(abs(low), abs(high)))


def check_rolling_schedule(windows, periods, result):
    """README "Rolling beta" and "[beta]": every (peer, window end) rolling.csv should hold, laid
    out here on the rebuilt grid and compared as a set with the file's rows. Windows of
    rolling_window periods (default half the window's periods, at least 3) end at every
    rolling_step-th period end counted from the first full window; a window is skipped when it
    holds fewer than rolling_min_observations observations (default ceil(4/5 of the window), at
    least 3), or too few for the estimator (more observations than coefficients, Newey-West lags
    and the shifted index columns each below N/4), or when the index's returns, raw or in excess
    of the rate, or the peer's own raw returns in it are flat to rounding (`flat_to_rounding`)."""
    global checks
    length = setting("beta", "rolling_window")
    if length is None:
        length = max(3, WINDOW["periods"] // 2)
    least = setting("beta", "rolling_min_observations")
    if least is None:
        least = max(3, math.ceil(length * 4 / 5))
    least = max(least, 3)
    step = setting("beta", "rolling_step")
    method, kind = setting("beta", "method"), setting("beta", "std_errors")
    shifts = {"ols": 0, "scholes-williams": 2,
              "dimson": setting("beta", "dimson_lags") + setting("beta", "dimson_leads")}[method]
    coefficients = 4 if method == "scholes-williams" else 2 + shifts
    expected = set()
    for peer in result["peers"]:
        name = peer["name"]
        if peer["stability"]:
            check_equal(f"{name} rolling window length (README's rule)", peer["stability"]["window_periods"], length)
        rows = ROWS.get(name, [])
        for end in range(length - 1, len(periods), step):
            inside = set(periods[end - length + 1: end + 1])
            used = [r for r in rows if r["period_end"] in inside]
            n = len(used)
            lags = newey_west_lags(n) if kind == "newey-west" else 0
            if n < least or n <= coefficients or 4 * lags >= n or 4 * shifts >= n:
                continue
            asset_raw = [float(r["asset_return"]) for r in used]
            market_raw = [float(r["market_return"]) for r in used]
            market_excess = [m - float(r.get("risk_free") or 0.0) for m, r in zip(market_raw, used)]
            if flat_to_rounding(asset_raw) or flat_to_rounding(market_raw) or flat_to_rounding(market_excess):
                continue
            expected.add((name, periods[end]))
    written = [(w["peer"], w["window_end"]) for w in windows]
    checks += 1
    if len(written) != len(set(written)):
        failures.append(f"rolling.csv lists a window twice: {len(written)} rows, {len(set(written))} distinct")
    checks += 1
    if set(written) != expected:
        missing, extra = sorted(expected - set(written)), sorted(set(written) - expected)
        failures.append(f"rolling.csv windows: {len(missing)} expected but not written {missing[:5]}, "
                        f"{len(extra)} written but not expected {extra[:5]}")
    check_equal("rolling windows expected (a check that an empty grid would pass is no check)", len(expected) > 0, True)


def check_rolling(out_dir, result):
    """rolling.csv (written by `hurdle rolling`), when present: every window refitted from
    scratch on the returns.csv rows inside it (the window's `window_periods` grid periods ending
    at window_end) with the case's own estimator and standard errors (`reference_beta`; for
    classical OLS also scipy.stats.linregress), Newey-West lags by the rule on the window's own
    N unless the case fixes them; slope and SE to 1e-9 relative."""
    path = f"{out_dir}/rolling.csv"
    if not os.path.exists(path):
        # README: `hurdle run` and `hurdle rolling` write rolling.csv beside any peer's
        # stability record; a folder without it may only hold peers without one.
        check_equal("rolling.csv written for the peers' stability records",
                    [p["name"] for p in result["peers"] if p["stability"]], [])
        return
    with open(path, newline="") as f:
        windows = list(csv.DictReader(f))
    assert windows, "rolling.csv has no rows"
    # The grid's periods: the rebuilt window's period ends; else (returns not rebuilt) those with
    # a return of some peer, and every window's end (with a led index return, the last period has
    # no usable return but still ends windows).
    if WINDOW:
        periods = WINDOW["grid"]
    else:
        periods = sorted({r["period_end"] for rows in ROWS.values() for r in rows} | {w["window_end"] for w in windows})
    position = {p: i for i, p in enumerate(periods)}
    method, kind = setting("beta", "method"), setting("beta", "std_errors")
    step = setting("beta", "rolling_step")
    points = defaultdict(list)
    if WINDOW:
        check_rolling_schedule(windows, periods, result)
    else:
        not_recomputed.append("rolling.csv's set of windows: the returns were not rebuilt, so the "
                              "grid the windows are laid on is not known here")
    for w in windows:
        peer = next(p for p in result["peers"] if p["name"] == w["peer"])
        length = peer["stability"]["window_periods"]
        if setting("beta", "rolling_window") is not None:
            check(f"{w['peer']} rolling window length (the case's)", length, setting("beta", "rolling_window"))
        end = position[w["window_end"]]
        if WINDOW:
            # README "Rolling beta": windows end at every rolling_step-th period end of the
            # estimation window, counted from its first full window.
            check_equal(f"{w['peer']} rolling window {w['window_end']} ends on the schedule",
                        end >= length - 1 and (end - (length - 1)) % step == 0, True)
        inside = set(periods[max(0, end - length + 1): end + 1])
        rows = [r for r in ROWS[w["peer"]] if r["period_end"] in inside]
        y = np.array([float(r["asset_return"]) - float(r.get("risk_free") or 0.0) for r in rows])
        x = np.array([float(r["market_return"]) - float(r.get("risk_free") or 0.0) for r in rows])
        label = f"{w['peer']} rolling {w['window_end']}"
        check(f"{label} observations", int(w["observations"]), len(rows))
        # README "[beta]": rolling_min_observations, default 80% of rolling_window, rounded up.
        least = setting("beta", "rolling_min_observations") or math.ceil(0.8 * length)
        check_equal(f"{label} has at least rolling_min_observations", len(rows) >= least, True)
        lags = newey_west_lags(len(rows)) if kind == "newey-west" else 0
        ref = reference_beta(method, kind, lags, y, x, shifted_columns(rows))
        check(f"{label} beta ({method})", float(w["beta"]), ref["beta"])
        # The range and trend below are checked on these refitted betas, not rolling.csv's.
        points[w["peer"]].append((dt.date.fromisoformat(w["window_end"]), ref["beta"]))
        check(f"{label} SE ({kind})", float(w["std_error"]), ref["se"])
        if method == "ols" and kind == "classical":
            fit = stats.linregress(x, y)
            check(f"{label} beta (scipy)", float(w["beta"]), fit.slope)
            check(f"{label} SE (scipy)", float(w["std_error"]), fit.stderr)
    for peer in result["peers"]:
        s, name = peer["stability"], peer["name"]
        if not s:
            continue
        ends, betas = zip(*sorted(points[name]))
        check_equal(f"{name} rolling windows", s["windows"], len(betas))
        check(f"{name} rolling min", s["min"], min(betas))
        check(f"{name} rolling max", s["max"], max(betas))
        check(f"{name} rolling first (earliest window)", s["first"], betas[0])
        check(f"{name} rolling last (latest window)", s["last"], betas[-1])
        # README, `stability.trend_per_year`: the least-squares slope per year of 365.25 days of
        # the rolling betas on their windows' ends (with two windows, the line through them,
        # which linregress also gives); scipy's linregress on the refitted betas above.
        years = np.array([(end - ends[0]).days for end in ends]) / 365.25
        check(f"{name} rolling trend per year (scipy.stats.linregress)", s["trend_per_year"],
              stats.linregress(years, betas).slope)


def check_histogram(result):
    """The Monte Carlo histogram: counts add up to the draws, the edges are equally spaced by the
    bin width, and each stored percentile lies in a bin whose cumulative count brackets it (the
    empirical distribution function, counted from the histogram alone)."""
    u = result.get("uncertainty")
    # README, result.json: every run records its Monte Carlo (`uncertainty`); a receipt
    # without one would skip the checks below unseen.
    check_equal("result.json has an uncertainty section", bool(u), True)
    if not u:
        return
    h = u["histogram"]
    edges, counts = np.array(h["edges"]), np.array(h["counts"])
    check("histogram counts sum to the draws", int(counts.sum()), u["draws"])
    check("histogram bins", len(edges), len(counts) + 1)
    # 1e-9 relative (the project's bar): edges near 0.07 carry ulps of about 1.4e-17, which is
    # 1.4e-11 of the narrowest bin hurdle draws (1e-6, 0.01 bp).
    for width in np.diff(edges):
        check("histogram bin width", width, h["bin_width"], 1e-9)
    cumulative = np.concatenate([[0], np.cumsum(counts)]) / counts.sum()
    for key, q in (("p05", 0.05), ("p25", 0.25), ("p50", 0.5), ("p75", 0.75), ("p95", 0.95)):
        i = int(np.searchsorted(edges, u[key], side="right")) - 1
        global checks
        checks += 1
        # The bin holding the percentile must hold the q-th draw: cumulative share before it at
        # most q, after it at least q (one draw of slack for the interpolation between draws).
        slack = 1 / counts.sum()
        if not (0 <= i < len(counts) and cumulative[i] <= q + slack and cumulative[i + 1] >= q - slack):
            failures.append(f"{key} {u[key]} is not in the bin the histogram's counts put it")


ROWS = {}
LAGGED = {}  # per peer, under OLS: (asset, index, previous index) excess returns, rebuilt
WINDOW = {}  # the rebuilt window: its period count and ends, each peer's dropped periods by reason
INCLUDED = {}  # peer name -> aggregated, by the case's exclude and exclude_flags
RATES = {}  # rf, ERP and the pre-tax Kd as the case states them


def main(out_dir, given_case=None):
    with open(f"{out_dir}/result.json") as f:
        result = json.load(f)
    case_path = load_case(out_dir, result, given_case)
    print(f"case: {case_path} (SHA-256 as recorded), overrides {result['case']['overrides']}")
    compare_with_echo(result)
    RATES.update(rf=setting("market", "risk_free_rate"), erp=setting("market", "equity_risk_premium"),
                 kd=case_cost_of_debt(os.path.dirname(os.path.abspath(case_path))))

    rows = defaultdict(list)
    with open(f"{out_dir}/returns.csv", newline="") as f:
        reader = csv.DictReader(f)
        excess = "risk_free" in reader.fieldnames
        for row in reader:
            rows[row["peer"]].append(row)
    try:
        rebuilt, drops, window_periods, grid = rebuild_returns(case_path, result)
    except NotRecomputed as reason:
        not_recomputed.append(f"returns.csv not recomputed: {reason}; the regressions below use "
                              f"hurdle's returns.csv as written")
    else:
        compare_returns(out_dir, rebuilt, drops, window_periods, result)
        WINDOW.update(periods=window_periods, drops=drops, grid=grid)
        excess = "risk_free_series" in CASE["market"]
        rows = defaultdict(list)
        for row in rebuilt:
            rows[row["peer"]].append(row)
        print(f"returns: {len(rebuilt)} rows rebuilt from the case's files "
              f"({setting('beta', 'frequency')} {setting('beta', 'returns')} returns, "
              f"{'excess of the risk-free series' if excess else 'no risk-free series'}, "
              f"max_stale_days {setting('beta', 'max_stale_days')}); the regressions use them")
    ROWS.update(rows)

    series = {}
    for peer in result["peers"]:
        name = peer["name"]
        data = rows[name]
        asset = np.array([float(r["asset_return"]) for r in data])
        market = np.array([float(r["market_return"]) for r in data])
        if excess:
            rf = np.array([float(r["risk_free"]) for r in data])
            asset, market = asset - rf, market - rf
        series[name] = data, asset, market
        check(f"{name} observations", peer["observations"], len(asset))
        check_diagnostics(name, peer, data, asset, market, result)
    for peer in result["peers"]:
        name = peer["name"]
        data, asset, market = series[name]
        n = len(asset)
        check_fitted_line(name, peer, market)
        if (setting("beta", "method") != "ols" or setting("beta", "std_errors") != "classical"
                or setting("beta", "adjustment") == "vasicek"):
            check_estimator(name, peer, data, asset, market, result)
            continue

        # numpy: least squares on [1, x].
        design = np.column_stack([np.ones(n), market])
        coef, _, rank, _ = np.linalg.lstsq(design, asset, rcond=None)
        assert rank == 2
        residuals = asset - design @ coef
        s2 = residuals @ residuals / (n - 2)
        cov = s2 * least_squares.bread(design)
        check(f"{name} alpha (numpy)", peer["alpha"], coef[0])
        check(f"{name} beta (numpy)", peer["beta"], coef[1])
        check(f"{name} alpha SE (numpy)", peer["alpha_std_error"], np.sqrt(cov[0, 0]))
        check(f"{name} residual SE (numpy)", peer["residual_std_error"], np.sqrt(s2))
        check(f"{name} Cov(alpha, beta) (numpy)", peer["alpha_beta_covariance"], cov[0, 1])

        # scipy: linregress gives slope, intercept, their SEs, r and the slope's p-value.
        fit = stats.linregress(market, asset)
        check(f"{name} beta (scipy)", peer["beta"], fit.slope)
        check(f"{name} alpha (scipy)", peer["alpha"], fit.intercept)
        check(f"{name} beta SE (scipy)", peer["beta_std_error"], fit.stderr)
        check(f"{name} alpha SE (scipy)", peer["alpha_std_error"], fit.intercept_stderr)
        check(f"{name} R2 (scipy)", peer["r_squared"], fit.rvalue**2)
        check(f"{name} beta p-value (scipy)", peer["beta_p_value"], fit.pvalue, floor=0.0)
        check(f"{name} beta t (scipy)", peer["beta_t_stat"], fit.slope / fit.stderr)
        alpha_t = fit.intercept / fit.intercept_stderr
        check(f"{name} alpha p-value (scipy)", peer["alpha_p_value"], 2 * stats.t.sf(abs(alpha_t), n - 2), floor=0.0)
        adjusted = 1 - (1 - fit.rvalue**2) * (n - 1) / (n - 2)
        check(f"{name} adjusted R2", peer["adjusted_r_squared"], adjusted)
        t975 = stats.t.ppf(0.975, n - 2)
        check(f"{name} CI low (scipy t)", peer["beta_ci_low"], fit.slope - t975 * fit.stderr)
        check(f"{name} CI high (scipy t)", peer["beta_ci_high"], fit.slope + t975 * fit.stderr)

        # Blume (1971, 1975) and Hamada (1972), written out here.
        check_equal(f"{name} method (the case's)", (peer["method"], peer["std_errors"]), ("ols", "classical"))
        adjustment = setting("beta", "adjustment")
        weight = setting("beta", "blume_weight")
        used = blume(fit.slope, weight) if adjustment == "blume" else fit.slope
        if adjustment == "blume":
            check(f"{name} shrunk beta (Blume, weight {weight})", peer["shrunk_beta"], used)
        else:
            assert peer["shrunk_beta"] is None
        check(f"{name} beta used", peer["beta_used"], used)
        check_unlevered(name, peer, used, result)

    # Excluded peers are estimated and shown but not aggregated (which peers: the case's exclude
    # reasons and exclude_flags, decided in check_diagnostics).
    check_equal("peers included", result["beta"]["peers_included"], sum(INCLUDED.values()))
    included = [p for p in result["peers"] if INCLUDED[p["name"]]]
    unlevered = np.array([p["unlevered_beta"] for p in included])
    specs = {p["name"]: peer_spec(p["name"]) for p in result["peers"]}
    formula, how = setting("leverage", "formula"), setting("leverage", "aggregation")
    check_equal("leverage formula (the case's)", result["beta"]["formula"], formula)
    check_equal("aggregation (the case's)", result["beta"]["aggregation"], how)
    net = setting("leverage", "debt_measure") == "net"
    # The beta of the operations: beta_U / (1 - cash / (equity + debt)), gross debt, cash at beta 0;
    # beta_U at gross debt under either debt measure (under net debt the unlevered beta has already
    # netted the cash), by the same textbook relations as check_unlevered.
    share = np.array([
        1 - specs[p["name"]]["cash"] / (specs[p["name"]]["equity_value"] + specs[p["name"]]["debt"])
        for p in result["peers"]
    ])
    def gross_unlevered(p):
        if not net:
            return p["unlevered_beta"]
        spec = specs[p["name"]]
        de = spec["debt"] / spec["equity_value"]
        if formula == "hamada":
            return p["beta_used"] / (1 + (1 - spec["tax_rate"]) * de)
        s = tax_factor(formula, spec["tax_rate"], p["cost_of_debt"])
        return (p["beta_used"] + p["debt_beta"] * s * de) / (1 + s * de)
    operations = np.array([gross_unlevered(p) for p in result["peers"]]) / share
    for p, w, c in zip(result["peers"], share, operations):
        check(f"{p['name']} operating share", p["operating_share"], w)
        check(f"{p['name']} beta of the operations", p["operations_beta"], c)
    in_use = next(f for f in result["leverage_comparison"] if f["in_use"])
    check_equal("leverage comparison: the entry in use is the case's formula", in_use["formula"], formula)
    for p, c, listed in zip(result["peers"], operations, in_use["peer_operations_betas"]):
        check(f"{p['name']} beta of the operations (formula comparison)", listed, c)
    plain = unlevered
    ops_included = np.array([c for p, c in zip(result["peers"], operations) if INCLUDED[p["name"]]])
    if setting("leverage", "operations_beta"):
        unlevered = ops_included
    caps = np.array([specs[p["name"]]["equity_value"] for p in included])

    def locations_of(values):
        return {
            "median": np.median(values),
            "mean": np.mean(values),
            "market-cap-weighted": np.average(values, weights=caps),
            "trimmed-mean": stats.trim_mean(values, setting("leverage", "trim_fraction")),
        }

    statistics = locations_of(unlevered)
    locations = result["beta"]["unlevered_statistics"]
    check("mean (numpy)", locations["mean"], statistics["mean"])
    check("market-cap-weighted mean (numpy average)", locations["market_cap_weighted_mean"], statistics["market-cap-weighted"])
    check("trimmed mean (scipy trim_mean)", locations["trimmed_mean"], statistics["trimmed-mean"])
    aggregate = statistics[how]
    check("aggregate unlevered beta", result["beta"]["unlevered"], aggregate)
    check("operations beta flag", float(result["beta"]["uses_operations_beta"]), float(setting("leverage", "operations_beta")))
    check(f"{how} of the unlevered betas", result["beta"]["aggregate_of_unlevered"], locations_of(plain)[how])
    check(f"{how} of the betas of the operations", result["beta"]["aggregate_of_operations"], locations_of(ops_included)[how])
    d = result["beta"]["unlevered_dispersion"]
    check("lower quartile (numpy)", d["lower_quartile"], np.percentile(unlevered, 25))
    check("upper quartile (numpy)", d["upper_quartile"], np.percentile(unlevered, 75))
    if len(unlevered) > 1:
        check("std dev (numpy, ddof=1)", d["std_dev"], np.std(unlevered, ddof=1))
    else:
        # One value has no sample spread: numpy's std(ddof=1) is nan (with a warning); README's
        # result.json schema writes it as null.
        check_equal("std dev of one value (null)", d["std_dev"], None)

    # The rates and the target as the case states them (the case file and its overrides, read
    # above), not as hurdle echoes them; every later figure is built on the case's values.
    rf, erp, kd_pre = RATES["rf"], RATES["erp"], RATES["kd"]
    check("risk-free rate from the case", result["risk_free_rate"], rf)
    check("ERP from the case", result["equity_risk_premium"], erp)
    check(f"pre-tax Kd from the case (debt.source = {setting('debt', 'source')})", result["cost_of_debt_pre_tax"], kd_pre)
    t = setting("target", "tax_rate")
    check("tax rate from the case", result["target"]["tax_rate"], t)
    source = setting("target", "source")
    if source == "explicit":
        de = setting("target", "debt_to_equity")
        if de is None:
            de = setting("target", "debt_to_capital") / (1 - setting("target", "debt_to_capital"))
    elif source == "peer-median":
        de = np.median([(specs[p["name"]]["debt"] - (specs[p["name"]]["cash"] if net else 0)) / specs[p["name"]]["equity_value"]
                        for p in included])
    else:
        assert source == "subject", source
        debt = setting("target", "subject_debt") - (setting("target", "subject_cash") if net else 0)
        de = debt / setting("target", "subject_equity_value")
    check(f"target D/E ({source})", result["target"]["debt_to_equity"], de)
    # The subject's debt beta: none, given, or (Kd - rf) / ERP from its own cost of debt.
    bd = {
        "none": 0.0,
        "given": setting("leverage", "debt_beta"),
        "credit-spread": (kd_pre - rf) / erp,
    }[setting("leverage", "debt_beta_source")]
    check("subject debt beta", result["subject_debt_beta"], bd)
    subject_bd = bd
    if formula == "hamada":
        bd = 0.0
    s = tax_factor(formula, t, kd_pre)
    relevered = aggregate + (aggregate - bd) * s * de
    check("relevered beta", result["beta"]["relevered"], relevered)
    p = result["premiums"]
    size, crp, specific = (setting("premiums", k) for k in ("size", "country", "company_specific"))
    # Country risk premium: a flat addition, times the subject's exposure, or times the relevered beta.
    country = {"flat": crp, "exposure": setting("premiums", "country_exposure") * crp,
               "beta-scaled": relevered * crp}[setting("premiums", "country_method")]
    check("country premium applied", p["country_applied"], country)
    ke = rf + relevered * erp + size + country + specific
    check("cost of equity (CAPM)", result["cost_of_equity"], ke)
    kd = kd_pre * (1 - t)
    check("after-tax cost of debt", result["cost_of_debt_after_tax"], kd)
    wp, wl = setting("preferred", "weight"), setting("leases", "weight")
    other = wp + wl
    we, wd = (1 - other) / (1 + de), (1 - other) * de / (1 + de)
    check("equity weight", result["weights"]["equity"], we)
    check("debt weight", result["weights"]["debt"], wd)
    # Preferred equity at its own cost (not deductible); leases after tax at the target rate.
    lease_cost = setting("leases", "cost_pre_tax")
    kl = (kd_pre if lease_cost is None else lease_cost) * (1 - t)
    kp = setting("preferred", "cost") if wp > 0 else 0.0
    check("WACC", result["wacc"], we * ke + wd * kd + wp * kp + wl * kl)

    # README "Risky debt": result.json's leverage_comparison holds the same case under all four
    # formulas. Every row is rebuilt here from the case's peers and target (not from the row in
    # use): each peer unlevered by `unlever` at its D/E (the case's debt measure) and, for the
    # beta of the operations, at gross D/E over the operating share; the case's aggregation over
    # the included peers; relevered at the target by `relever`; then CAPM and the WACC as above.
    def country_premium(beta_l):
        return {"flat": crp, "exposure": setting("premiums", "country_exposure") * crp,
                "beta-scaled": beta_l * crp}[setting("premiums", "country_method")]

    rows = {row["formula"]: row for row in result["leverage_comparison"]}
    compared = ["hamada", "harris-pringle", "miles-ezzell", "conine"]
    check_equal("leverage comparison: the four formulas, in README's order",
                [row["formula"] for row in result["leverage_comparison"]], compared)
    check_equal("leverage comparison: the formula in use",
                [row["formula"] for row in result["leverage_comparison"] if row["in_use"]], [formula])
    for f in compared:
        row = rows.get(f)
        if row is None:
            continue
        peer_u, peer_ops = [], []
        for peer in result["peers"]:
            spec = specs[peer["name"]]
            kd_peer, bd_peer = peer_debt_terms(spec)
            gross = spec["debt"] / spec["equity_value"]
            own = (spec["debt"] - spec["cash"]) / spec["equity_value"] if net else gross
            peer_u.append(unlever(f, peer["beta_used"], own, spec["tax_rate"], kd_peer, bd_peer))
            operating = 1 - spec["cash"] / (spec["equity_value"] + spec["debt"])
            peer_ops.append(unlever(f, peer["beta_used"], gross, spec["tax_rate"], kd_peer, bd_peer) / operating)
        check_equal(f"{f} comparison: one unlevered beta per peer", len(row["peer_unlevered_betas"]), len(peer_u))
        check_equal(f"{f} comparison: one beta of the operations per peer", len(row["peer_operations_betas"]), len(peer_ops))
        for peer, listed, ref in zip(result["peers"], row["peer_unlevered_betas"], peer_u):
            check(f"{f} comparison: {peer['name']} unlevered", listed, ref)
        for peer, listed, ref in zip(result["peers"], row["peer_operations_betas"], peer_ops):
            check(f"{f} comparison: {peer['name']} beta of the operations", listed, ref)
        chosen = peer_ops if setting("leverage", "operations_beta") else peer_u
        agg = locations_of(np.array([v for peer, v in zip(result["peers"], chosen) if INCLUDED[peer["name"]]]))[how]
        check(f"{f} comparison: {how} unlevered beta", row["unlevered"], agg)
        beta_l = relever(f, agg, de, t, kd_pre, subject_bd)
        check(f"{f} comparison: relevered beta", row["relevered"], beta_l)
        ke_f = rf + beta_l * erp + size + country_premium(beta_l) + specific
        check(f"{f} comparison: cost of equity (CAPM)", row["cost_of_equity"], ke_f)
        check(f"{f} comparison: WACC", row["wacc"], we * ke_f + wd * kd + wp * kp + wl * kl)

    check_rolling(out_dir, result)
    check_histogram(result)

    for line in not_recomputed:
        print("NOT RECOMPUTED", line)
    for line in failures:
        print("MISMATCH", line)
    print(f"reference: {checks - len(failures)} passed, {len(failures)} failed")
    return 1 if failures else 0


if __name__ == "__main__":
    arguments = sys.argv[1:]
    case_given = None
    if "--case" in arguments:
        at = arguments.index("--case")
        case_given = arguments[at + 1]
        del arguments[at:at + 2]
    assert len(arguments) == 1, "usage: check_regressions.py OUTPUT_DIR [--case CASE.toml]"
    sys.exit(main(arguments[0], case_given))
