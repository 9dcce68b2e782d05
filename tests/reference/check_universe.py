#!/usr/bin/env python3
"""Independent check of `hurdle universe` outputs with numpy and scipy.

Usage: check_universe.py UNIVERSE.toml OUT_DIR [--set key=value]...

Reads the universe file and its input tables (long CSV panel, index CSV, attributes CSV) and
recomputes, without any of hurdle's code:
  - the sampling rule (README "Sampling"): sample points are the weekdays (daily) or the chosen
    weekday of each week (weekly) from the first on or after beta.window_start to the last on or
    before the valuation date; each sample is the last price dated after the previous point and
    on or before its own; a return needs both samples, and the index's return for the period;
  - each security's OLS market model with scipy.stats.linregress (slope, intercept, their
    standard errors, R^2, the two-sided p-value) and the 95% interval with scipy.stats.t.ppf;
    Durbin-Watson from numpy; the too_few_observations and low_r_squared flags;
  - Hamada (1972) unlevering beta_U = beta / (1 + (1 - t) D/E) with gross or net debt (none for
    a D/E above 10 or at or below -1), and the beta of the operations
    beta_U(gross D/E) / (1 - cash / (equity + debt)) under either debt measure (a net-debt
    beta_U has already netted the cash against the debt);
  - per industry: counts, numpy.median / mean / percentile (linear, numpy's default) / min / max /
    std (ddof = 1), numpy.average weighted by market value, scipy.stats.trim_mean(0.1), median D/E,
    and the aggregate the universe file picks.
Compares every figure with hurdle's securities.csv and industries.csv and prints
"<n> checks, <m> failed". Tolerance: 1e-9 relative to max(1, |value|) -- the issue's agreement
bound; hurdle's QR and scipy's sums of squares differ by rounding only (about 1e-13 here).
"""

import csv
import datetime as dt
import sys
import tomllib

import numpy as np
from scipy import stats

TOLERANCE = 1e-9
WEEKDAYS = {"monday": 0, "tuesday": 1, "wednesday": 2, "thursday": 3, "friday": 4}


def parse_args(argv):
    universe, out, sets = argv[1], argv[2], []
    rest = argv[3:]
    while rest:
        flag, value, *rest = rest
        assert flag == "--set"
        sets.append(value)
    return universe, out, sets


def apply_sets(config, sets):
    for assignment in sets:
        key, value = assignment.split("=", 1)
        *parents, last = key.split(".")
        table = config
        for p in parents:
            table = table.setdefault(p, {})
        table[last] = {"true": True, "false": False}.get(value, value)


def read_series(path, date_column, value_column):
    with open(path, newline="") as handle:
        rows = [(dt.date.fromisoformat(r[date_column]), float(r[value_column]))
                for r in csv.DictReader(handle)]
    rows.sort()
    return rows


def sample_points(beta, valuation_date):
    """The window's sample points, and the point before the first (which opens its period)."""
    start = beta["window_start"]
    if beta.get("frequency", "monthly") == "daily":
        keep = lambda d: d.weekday() < 5
    else:
        weekday = WEEKDAYS[beta.get("weekday", "wednesday")]
        keep = lambda d: d.weekday() == weekday
    day, points = start, []
    while day <= valuation_date:
        if keep(day):
            points.append(day)
        day += dt.timedelta(days=1)
    before = start - dt.timedelta(days=1)
    while not keep(before):
        before -= dt.timedelta(days=1)
    return before, points


def samples(series, before, points):
    """The last price in (previous point, point] for each point, or None."""
    out, i = [], 0
    while i < len(series) and series[i][0] <= before:
        i += 1
    for point in points:
        last = None
        while i < len(series) and series[i][0] <= point:
            last = series[i][1]
            i += 1
        out.append(last)
    return out


def returns(values):
    return [b / a - 1.0 if a is not None and b is not None else None
            for a, b in zip(values[:-1], values[1:])]


def regression(asset, market):
    fit = stats.linregress(market, asset)
    n = len(asset)
    residuals = np.asarray(asset) - (fit.intercept + fit.slope * np.asarray(market))
    t = stats.t.ppf(0.975, n - 2)
    return {
        "observations": n,
        "beta": fit.slope,
        "beta_std_error": fit.stderr,
        "alpha": fit.intercept,
        "alpha_std_error": fit.intercept_stderr,
        "r_squared": fit.rvalue ** 2,
        "beta_p_value": fit.pvalue,
        "beta_ci_low": fit.slope - t * fit.stderr,
        "beta_ci_high": fit.slope + t * fit.stderr,
        "durbin_watson": float(np.sum(np.diff(residuals) ** 2) / np.sum(residuals ** 2)),
    }


def number(text):
    return float(text) if text not in ("", None) else None


def securities(config, folder):
    beta, panel, attrs = config["beta"], config["panel"], config["attributes"]
    valuation_date = config["universe"]["valuation_date"]
    index = read_series(folder + "/" + config["market"]["index"]["prices"], "date", "price")
    before, points = sample_points(beta, valuation_date)
    market = returns(samples(index, before, points))
    periods = len(points) - 1
    by_security = {}
    with open(folder + "/" + panel["prices"], newline="") as handle:
        for r in csv.DictReader(handle):
            by_security.setdefault(r[panel.get("security_column", "security")], []).append(
                (dt.date.fromisoformat(r[panel.get("date_column", "date")]),
                 float(r[panel.get("price_column", "price")])))
    with open(folder + "/" + attrs["file"], newline="") as handle:
        attributes = {r[attrs.get("security_column", "security")]: r for r in csv.DictReader(handle)}
    leverage = config.get("leverage", {})
    net = leverage.get("debt_measure", "gross") == "net"
    result = {}
    for security, series in by_security.items():
        series.sort()
        asset = returns(samples(series, before, points))
        pairs = [(a, m) for a, m in zip(asset, market) if a is not None and m is not None]
        row = {"industry": None}
        # A move beyond a factor of 3 between two rows, the later after the first sample point
        # and up to the last, leaves the security unestimated (an unadjusted split, a bad price).
        jump = any(points[0] < d <= points[-1] and not (1 / 3 <= p / q <= 3)
                   for (_, q), (d, p) in zip(series, series[1:]))
        if len(pairs) >= beta.get("min_observations", 36) and not jump:
            row.update(regression([a for a, _ in pairs], [m for _, m in pairs]))
        elif not jump:
            # Too few usable returns: not estimated, but the count is reported (a price jump
            # stops the security before its returns are counted).
            row["observations"] = len(pairs)
        a = attributes.get(security)
        if a is not None:
            row["industry"] = a[attrs.get("industry_column", "industry")] or None
            equity = number(a[attrs.get("equity_value_column", "equity_value")])
            debt = number(a[attrs.get("debt_column", "debt")])
            cash = number(a[attrs["cash_column"]]) if "cash_column" in attrs else None
            tax = number(a[attrs.get("tax_rate_column", "tax_rate")])
            row["equity"] = equity
            if equity is not None and debt is not None and (cash is not None or not net):
                row["debt_to_equity"] = ((debt - cash) if net else debt) / equity
            # No leverage formula holds for a D/E above 10 or a net D/E at or below -1: no
            # unlevered beta (the limits a case puts on a peer; README, securities.csv).
            de = row.get("debt_to_equity")
            if "beta" in row and de is not None and -1.0 < de <= 10.0 and tax is not None:
                row["unlevered_beta"] = row["beta"] / (1.0 + (1.0 - tax) * row["debt_to_equity"])
                if cash is not None:
                    gross = row["beta"] / (1.0 + (1.0 - tax) * debt / equity)
                    row["operations_beta"] = gross / (1.0 - cash / (equity + debt))
        if "beta" in row:
            row["too_few"] = row["observations"] < 0.8 * periods
        result[security] = row
    return result


def summary(values, weights, prefix):
    out = {f"{prefix}_count": len(values)}
    if not values:
        return out
    v = np.asarray(values)
    out.update({
        f"median_{prefix}": np.median(v),
        f"mean_{prefix}": np.mean(v),
        f"lower_quartile_{prefix}": np.percentile(v, 25),
        f"upper_quartile_{prefix}": np.percentile(v, 75),
        f"min_{prefix}": np.min(v),
        f"max_{prefix}": np.max(v),
        # A sample standard deviation of one value is undefined (numpy: nan); an empty cell.
        f"std_dev_{prefix}": np.std(v, ddof=1) if len(v) > 1 else None,
        f"trimmed_mean_{prefix}": stats.trim_mean(v, 0.1),
    })
    if weights:
        wv, ww = zip(*weights)
        out[f"market_cap_weighted_{prefix}"] = np.average(wv, weights=ww)
    return out


def industries(config, rows):
    leverage = config.get("leverage", {})
    table = {}
    for security, row in rows.items():
        if row["industry"] is not None:
            table.setdefault(row["industry"], []).append(row)
    out = {}
    for industry, members in table.items():
        estimated = [r for r in members if "beta" in r]
        figures = {"securities": len(members), "estimated": len(estimated),
                   "not_estimated_too_few_observations": len(members) - len(estimated)}
        for key, prefix in (("beta", "beta"), ("unlevered_beta", "unlevered_beta"),
                            ("operations_beta", "operations_beta")):
            have = [r for r in estimated if key in r]
            figures.update(summary([r[key] for r in have],
                                   [(r[key], r["equity"]) for r in have if r.get("equity")],
                                   prefix))
        ratios = [r["debt_to_equity"] for r in estimated if "debt_to_equity" in r]
        if ratios:
            figures["median_debt_to_equity"] = np.median(ratios)
        stem = "operations_beta" if leverage.get("operations_beta") else "unlevered_beta"
        pick = {"median": "median", "mean": "mean", "trimmed-mean": "trimmed_mean",
                "market-cap-weighted": "market_cap_weighted"}[leverage.get("aggregation", "median")]
        if f"{pick}_{stem}" in figures:
            figures["unlevered_beta"] = figures[f"{pick}_{stem}"]
        out[industry] = figures
    return out


class Checker:
    def __init__(self):
        self.checks, self.failures = 0, []

    def same(self, where, expected, got):
        self.checks += 1
        if expected is None or got is None:
            if (expected is None) != (got is None):
                self.failures.append(f"{where}: expected {expected}, hurdle {got}")
            return
        if abs(float(expected) - float(got)) > TOLERANCE * max(1.0, abs(float(expected))):
            self.failures.append(f"{where}: expected {expected!r}, hurdle {got!r}")


def main():
    universe, out, sets = parse_args(sys.argv)
    with open(universe, "rb") as handle:
        config = tomllib.load(handle)
    apply_sets(config, sets)
    folder = universe.rsplit("/", 1)[0]
    rows = securities(config, folder)
    check = Checker()
    with open(out + "/securities.csv", newline="") as handle:
        listed = {r["security"]: r for r in csv.DictReader(handle)}
    check.same("securities listed", len(rows), len(listed))
    for security, row in rows.items():
        got = listed[security]
        for key in ("observations", "beta", "beta_std_error", "alpha", "alpha_std_error",
                    "r_squared", "beta_p_value", "beta_ci_low", "beta_ci_high", "durbin_watson",
                    "debt_to_equity", "unlevered_beta", "operations_beta"):
            check.same(f"{security} {key}", row.get(key), number(got[key]))
        if "beta" in row:
            flagged = "too_few_observations" in got["flags"].split(";")
            check.same(f"{security} too_few_observations flag", row["too_few"], flagged)
    with open(out + "/industries.csv", newline="") as handle:
        tabled = {r["industry"]: r for r in csv.DictReader(handle)}
    expected = industries(config, rows)
    check.same("industries", len(expected), len(tabled))
    for industry, figures in expected.items():
        for key, value in figures.items():
            check.same(f"{industry} {key}", value, number(tabled[industry][key]))
    for failure in check.failures:
        print("MISMATCH", failure)
    print(f"{check.checks} checks, {len(check.failures)} failed")


if __name__ == "__main__":
    main()
