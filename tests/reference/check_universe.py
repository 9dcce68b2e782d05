#!/usr/bin/env python3
"""Independent check of `hurdle universe` outputs with numpy and scipy.

Usage: check_universe.py UNIVERSE.toml OUT_DIR [--set key=value]...

Reads the universe file (with the --set values applied here, each read as TOML as hurdle reads
them) and its input tables (long CSV panel, index CSV, attributes CSV) and recomputes, without
any of hurdle's code:
  - the sampling rule (README "Sampling (monthly)" and "Sampling (other frequencies)"): sample
    points are the weekdays (daily), the chosen weekday of each week (weekly), the month-ends
    (monthly) or the quarter-ends (quarterly), the last on or before the valuation date (or
    beta.window_end), the first on or after beta.window_start, or `lookback` periods (or a span)
    before the last; each sample is the last price dated after the previous point and on or
    before its own; a return (simple, or log with beta.returns = "log") needs both samples, and
    the index's return for the period;
  - with a risk-free series (README "Risk-free conversion by frequency", "Excess returns"): the
    yield sampled by the same rule at each period's start, (1 + y)^(1/P) - 1 for simple returns
    or ln(1 + y)/P for log returns (P = 252, 52, 12, 4), subtracted from both returns;
  - each security's OLS market model with scipy.stats.linregress (slope, intercept, R^2) and
    numpy least squares, its standard errors of the kind beta.std_errors names (README
    "Standard errors"): classical s^2 (X'X)^-1; HC1, White's sandwich times n/(n - k) (White
    1980, MacKinnon and White 1985); Newey-West (1987) with Bartlett weights 1 - l/(L + 1) over
    the observations in order, no small-sample factor, L = beta.newey_west_lags or
    floor(4 (N/100)^(2/9)) (Newey and West 1994); the two-sided p-value and the 95% interval
    from scipy's Student t on N - 2 degrees of freedom; Durbin-Watson from numpy; the
    regression on the index's current and previous-period returns (Dimson 1979 with one lag)
    by numpy least squares with the same kind of standard errors (Newey-West with the market
    model's own L), its lag slope's p-value on N - 3 degrees of freedom, over the periods whose
    previous index return (and its rate) is in the window; the flags too_few_observations (N
    below beta.flag_observations_share, default 0.8, of the window's periods), low_r_squared
    (R^2 below beta.flag_r_squared_floor, default 0.05), zero_returns (more than
    beta.flag_zero_return_share, default 0.2, of the returns used exactly zero) and
    lagged_response (a positive lag slope with p below beta.flag_lag_p_value, default 0.05),
    compared with securities.csv's flags;
  - Hamada (1972) unlevering beta_U = beta / (1 + (1 - t) D/E) with gross or net debt (none for
    a D/E above 10 or at or below -1), and the beta of the operations
    beta_U(gross D/E) / (1 - cash / (equity + debt)) under either debt measure (a net-debt
    beta_U has already netted the cash against the debt);
  - per industry: counts, numpy.median / mean / percentile (linear, numpy's default) / min / max /
    std (ddof = 1), numpy.average weighted by market value and (unlevered and operations betas)
    by firm value and value of operations, scipy.stats.trim_mean (leverage.trim_fraction,
    default 0.1), the median's 95% interval (scipy.stats.quantile_test), median and aggregate
    D/E, and the aggregate the universe file picks.
Settings it does not implement (another estimator or adjustment, a risk-free series from a
wide table, a staleness limit, a leverage formula other than Hamada, debt betas, exclusion
flags, rolling betas) are reported as NOT IMPLEMENTED and fail the check, never silently
passed.
Compares every figure with hurdle's securities.csv and industries.csv, prints
"<n> checks, <m> failed" and exits non-zero on any failure. Tolerance: 1e-9 relative -- the
issue's agreement bound; hurdle's QR and scipy's sums of squares differ by rounding only (about
1e-13 here) -- with an absolute floor of 1e-15 for figures near zero (the rounding of sums of
terms of order one), and no floor for p-values (see Checker.same).
"""

import calendar
import csv
import datetime as dt
import math
import sys
import tomllib

import numpy as np
from scipy import stats

import least_squares  # QR, never an inverse of X'X
from set_values import set_path

# Relative: both sides are double-precision evaluations of the same closed forms on the same
# doubles, so honest differences are rounding (about 1e-13 relative here); 1e-9 is the bar.
TOLERANCE = 1e-9
# Absolute floor for figures that can sit at or near zero (an alpha, a CI bound across zero): a
# difference below it is the rounding of sums of terms of order one, not a disagreement.
FLOOR = 1e-15
WEEKDAYS = {"monday": 0, "tuesday": 1, "wednesday": 2, "thursday": 3, "friday": 4}
# Settings this check implements, by key: anything else in the universe file (or a --set) is
# reported as NOT IMPLEMENTED and fails the run (README "Universe file reference" for the keys).
IMPLEMENTED = {
    ("beta", "method"): ("ols",),
    ("beta", "std_errors"): ("classical", "hc1", "newey-west"),
    ("beta", "adjustment"): ("none", "blume", "vasicek"),
    ("beta", "exclude_flags"): ([],),
    ("beta", "max_stale_days"): (None,),
    ("beta", "returns"): ("simple", "log"),
    ("beta", "frequency"): ("daily", "weekly", "monthly", "quarterly"),
    ("leverage", "formula"): ("hamada",),
    ("leverage", "debt_beta_source"): ("none",),
    ("universe", "rolling"): (False,),
}


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
        set_path(config, key.strip().split("."), value)


def not_implemented(config):
    """The settings this check would get wrong, in words (empty when it implements them all)."""
    out = []
    for (section, key), allowed in IMPLEMENTED.items():
        table = config.get(section, {})
        if key in table and table[key] not in allowed:
            out.append(f"{section}.{key} = {table[key]!r}")
    risk_free = config.get("market", {}).get("risk_free_series")
    if risk_free is not None and not str(risk_free.get("yields", "")).endswith((".csv", ".txt")):
        out.append("market.risk_free_series other than a CSV file of yields")
    if config.get("panel", {}).get("layout", "long") != "long" or not config["panel"]["prices"].endswith((".csv", ".txt")):
        out.append("a panel other than a long CSV")
    if not config["attributes"]["file"].endswith((".csv", ".txt")):
        out.append("an attributes file other than CSV")
    return out


def read_series(path, date_column, value_column):
    with open(path, newline="") as handle:
        rows = [(dt.date.fromisoformat(r[date_column]), float(r[value_column]))
                for r in csv.DictReader(handle)]
    rows.sort()
    return rows


def as_date(value):
    return value if isinstance(value, dt.date) else dt.date.fromisoformat(str(value))


def sample_points(beta, valuation_date):
    """The window's sample points, and the point before the first (which opens its period).
    README "Sampling (monthly)" and "Sampling (other frequencies)": the last point is the last
    on or before beta.window_end (default the valuation date); the first is the first on or
    after beta.window_start, else `lookback` periods before the last, or the first on or after
    the start of a `lookback` span (years and months keep the day of the month, clamped to the
    month's end; weeks 7 days; days calendar days)."""
    frequency = beta.get("frequency", "monthly")
    weekday = WEEKDAYS[beta.get("weekday", "wednesday")]

    def keep(d):
        month_end = (d + dt.timedelta(days=1)).day == 1
        if frequency == "daily":
            return d.weekday() < 5
        if frequency == "weekly":
            return d.weekday() == weekday
        if frequency == "monthly":
            return month_end
        if frequency == "quarterly":
            return month_end and d.month in (3, 6, 9, 12)
        # Never fall back to another grid: a frequency this check has no rule for stops it.
        raise SystemExit(f"NOT IMPLEMENTED: beta.frequency = {frequency!r}\n1 checks, 1 failed")

    end = as_date(beta.get("window_end", valuation_date))
    while not keep(end):
        end -= dt.timedelta(days=1)
    lookback = beta.get("lookback", 60)
    if "window_start" in beta:
        start = as_date(beta["window_start"])
    elif isinstance(lookback, int):
        start = end
        for _ in range(lookback):
            start -= dt.timedelta(days=1)
            while not keep(start):
                start -= dt.timedelta(days=1)
    else:
        count, unit = int(str(lookback)[:-1]), str(lookback)[-1]
        if unit in "ym":
            months = end.year * 12 + end.month - 1 - (count * 12 if unit == "y" else count)
            year, month = divmod(months, 12)
            last_day = calendar.monthrange(year, month + 1)[1]
            start = dt.date(year, month + 1, min(end.day, last_day))
        else:
            start = end - dt.timedelta(days=count * (7 if unit == "w" else 1))
    day, points = start, []
    while day <= end:
        if keep(day):
            points.append(day)
        day += dt.timedelta(days=1)
    before = points[0] - dt.timedelta(days=1)
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


def returns(values, kind="simple"):
    """Simple p(t)/p(t-1) - 1 or log ln(p(t)/p(t-1)) (README "[beta]", returns)."""
    ratio = (lambda a, b: b / a - 1.0) if kind == "simple" else (lambda a, b: math.log(b / a))
    return [ratio(a, b) if a is not None and b is not None else None
            for a, b in zip(values[:-1], values[1:])]


def newey_west_rule(n):
    """README "[beta]" newey_west_lags: floor(4 (N/100)^(2/9)) (Newey and West 1994)."""
    return math.floor(4.0 * (n / 100.0) ** (2.0 / 9.0))


def covariance(design, residuals, kind, lags):
    """The coefficients' covariance of the kind README "Standard errors" names, from the
    textbook sandwich forms ((X'X)^-1 from numpy's QR, least_squares.bread): classical
    s^2 (X'X)^-1; HC1 (X'X)^-1 X' diag(e^2) X (X'X)^-1 n/(n - k); Newey-West
    (X'X)^-1 S (X'X)^-1 with S = sum e_t^2 x_t x_t' + sum_l (1 - l/(L + 1))
    sum_t e_t e_(t-l) (x_t x_(t-l)' + x_(t-l) x_t'), t over the observations in order."""
    n, k = design.shape
    bread = least_squares.bread(design)
    if kind == "classical":
        return bread * (residuals @ residuals / (n - k))
    scores = design * residuals[:, None]
    meat = scores.T @ scores
    if kind == "hc1":
        return bread @ meat @ bread * (n / (n - k))
    for lag in range(1, lags + 1):
        cross = scores[lag:].T @ scores[:-lag]
        meat = meat + (1.0 - lag / (lags + 1.0)) * (cross + cross.T)
    return bread @ meat @ bread


def regression(asset, market, kind, lags_setting):
    """The market model: coefficients and R^2 by scipy.stats.linregress (with numpy least
    squares for the residuals), standard errors of `kind`."""
    fit = stats.linregress(market, asset)
    n = len(asset)
    design = np.column_stack([np.ones(n), market])
    residuals = np.asarray(asset) - (fit.intercept + fit.slope * np.asarray(market))
    lags = (lags_setting if lags_setting is not None else newey_west_rule(n)) \
        if kind == "newey-west" else None
    v = covariance(design, residuals, kind, lags or 0)
    se_alpha, se_beta = float(np.sqrt(v[0, 0])), float(np.sqrt(v[1, 1]))
    t = stats.t.ppf(0.975, n - 2)
    # README "Diagnostics per peer": the residual standard error on n - 2 degrees of freedom,
    # adjusted R^2 = 1 - (1 - R^2)(n - 1)/(n - 2), and the count of internally studentised
    # residuals e_i / (s·sqrt(1 - h_i)) above 3 in absolute value (h_i from the QR factor).
    s = float(np.sqrt(residuals @ residuals / (n - 2)))
    studentised = residuals / (s * np.sqrt(1.0 - least_squares.leverages(design)))
    return {
        "alpha_t_stat": fit.intercept / se_alpha,
        "alpha_p_value": 2 * stats.t.sf(abs(fit.intercept / se_alpha), n - 2),
        "beta_t_stat": fit.slope / se_beta,
        "adjusted_r_squared": 1.0 - (1.0 - fit.rvalue ** 2) * (n - 1) / (n - 2),
        "residual_std_error": s,
        "large_studentised_residuals": int(np.sum(np.abs(studentised) > 3.0)),
        "observations": n,
        "beta": fit.slope,
        "beta_std_error": se_beta,
        "alpha": fit.intercept,
        "alpha_std_error": se_alpha,
        "r_squared": fit.rvalue ** 2,
        "beta_p_value": 2 * stats.t.sf(abs(fit.slope / se_beta), n - 2),
        "beta_ci_low": fit.slope - t * se_beta,
        "beta_ci_high": fit.slope + t * se_beta,
        "durbin_watson": float(np.sum(np.diff(residuals) ** 2) / np.sum(residuals ** 2)),
        "newey_west_lags": lags,
    }


def lagged(asset, market, kind, lags):
    """README "Diagnostics": r(t) on [1, m(t), m(t - 1)] over the periods with all three
    (the window's first period has no previous index return inside the window); numpy least
    squares, the covariance of `kind` (Newey-West with the market model's lags `lags`)."""
    rows = [(asset[j], market[j], market[j - 1]) for j in range(1, len(asset))
            if asset[j] is not None and market[j] is not None and market[j - 1] is not None]
    n = len(rows)
    if n <= 4 or (lags is not None and 4 * lags >= n):
        return {}
    y = np.array([r[0] for r in rows])
    design = np.column_stack([np.ones(n), [r[1] for r in rows], [r[2] for r in rows]])
    coef, _, _, _ = np.linalg.lstsq(design, y, rcond=None)
    residuals = y - design @ coef
    covariance_matrix = covariance(design, residuals, kind, lags or 0)
    se = float(np.sqrt(covariance_matrix[2, 2]))
    t = coef[2] / se
    return {"lag_slope": coef[2], "lag_slope_std_error": se, "lag_slope_t_stat": t,
            "lag_slope_p_value": 2 * stats.t.sf(abs(t), n - 3),
            "lag_summed_beta": coef[1] + coef[2]}


def number(text):
    return float(text) if text not in ("", None) else None


PERIODS_PER_YEAR = {"daily": 252, "weekly": 52, "monthly": 12, "quarterly": 4}


def risk_free(config, folder, before, points, kind):
    """Each period's rate from the yield sampled at its start (README "Excess returns"), or
    None for every period without a risk-free series."""
    series = config.get("market", {}).get("risk_free_series")
    if series is None:
        return None
    yields = read_series(folder + "/" + series["yields"], series.get("date_column", "date"),
                         series.get("yield_column", "yield"))
    per_year = PERIODS_PER_YEAR[config["beta"].get("frequency", "monthly")]
    if kind == "simple":
        convert = lambda y: (1.0 + y) ** (1.0 / per_year) - 1.0
    else:
        convert = lambda y: math.log(1.0 + y) / per_year
    return [None if y is None else convert(y) for y in samples(yields, before, points)[:-1]]


def excess(values, rates):
    if rates is None:
        return values
    return [None if v is None or r is None else v - r for v, r in zip(values, rates)]


def securities(config, folder):
    beta, panel, attrs = config["beta"], config["panel"], config["attributes"]
    valuation_date = config["universe"]["valuation_date"]
    index = read_series(folder + "/" + config["market"]["index"]["prices"], "date", "price")
    before, points = sample_points(beta, valuation_date)
    kind = beta.get("returns", "simple")
    rates = risk_free(config, folder, before, points, kind)
    market = excess(returns(samples(index, before, points), kind), rates)
    errors = beta.get("std_errors", "classical")
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
        raw = returns(samples(series, before, points), kind)
        asset = excess(raw, rates)
        pairs = [(a, m) for a, m in zip(asset, market) if a is not None and m is not None]
        # The zero-return share counts the security's own returns, before the rate.
        used_raw = [r for r, a, m in zip(raw, asset, market) if a is not None and m is not None]
        row = {"industry": None}
        # A move beyond a factor of 3 between two rows, the later after the first sample point
        # and up to the last, leaves the security unestimated (an unadjusted split, a bad price).
        jump = any(points[0] < d <= points[-1] and not (1 / 3 <= p / q <= 3)
                   for (_, q), (d, p) in zip(series, series[1:]))
        if len(pairs) >= beta.get("min_observations", 36) and not jump:
            row.update(regression([a for a, _ in pairs], [m for _, m in pairs], errors,
                                  beta.get("newey_west_lags")))
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
            if tax is not None:
                row["tax_rate"] = tax
            # Value weights (README, industries.csv): equity plus gross debt for the unlevered
            # betas, less cash for the betas of the operations.
            if equity is not None and debt is not None:
                row["firm_value"] = equity + debt
                if cash is not None:
                    row["operations_value"] = equity + debt - cash
                # Under net debt the unlevered beta is of equity plus debt less cash.
                if net:
                    row.pop("firm_value")
                    if cash is not None:
                        row["firm_value"] = equity + debt - cash
            if equity is not None and debt is not None and (cash is not None or not net):
                row["debt_to_equity"] = ((debt - cash) if net else debt) / equity
            row["_structure"] = (equity, debt, cash, tax)
        if "beta" in row:
            # README "[beta]": flag too_few_observations when N is below flag_observations_share
            # (default 0.8) of the window's periods, low_r_squared when R^2 is below
            # flag_r_squared_floor (default 0.05).
            row["flags"] = set()
            if row["observations"] < beta.get("flag_observations_share", 0.8) * periods:
                row["flags"].add("too_few_observations")
            if row["r_squared"] < beta.get("flag_r_squared_floor", 0.05):
                row["flags"].add("low_r_squared")
            # zero_returns when more than flag_zero_return_share (default 0.2) of the returns
            # used are exactly zero.
            row["zero_return_share"] = sum(1 for r in used_raw if r == 0.0) / len(pairs)
            if row["zero_return_share"] > beta.get("flag_zero_return_share", 0.2):
                row["flags"].add("zero_returns")
            row.update(lagged(asset, market, errors, row["newey_west_lags"]))
            if (row.get("lag_slope", 0.0) > 0.0
                    and row["lag_slope_p_value"] < beta.get("flag_lag_p_value", 0.05)):
                row["flags"].add("lagged_response")
        result[security] = row
    adjust(result, beta)
    for row in result.values():
        equity, debt, cash, tax = row.pop("_structure", (None, None, None, None))
        # No leverage formula holds for a D/E above 10 or a net D/E at or below -1: no
        # unlevered beta (the limits a case puts on a peer; README, securities.csv). Hamada on
        # the beta used (README, securities.csv: the adjusted beta is the one unlevered).
        de = row.get("debt_to_equity")
        if "beta" in row and de is not None and -1.0 < de <= 10.0 and tax is not None:
            row["unlevered_beta"] = row["beta_used"] / (1.0 + (1.0 - tax) * de)
            if cash is not None:
                gross = row["beta_used"] / (1.0 + (1.0 - tax) * debt / equity)
                row["operations_beta"] = gross / (1.0 - cash / (equity + debt))
    return result


def adjust(rows, beta):
    """README "Vasicek shrinkage" and "Blume": the beta used of each estimated security.
    Blume: w·beta + (1 - w) with w = blume_weight (default 0.67). Vasicek: w·beta + (1 - w)·prior
    mean with w = prior variance / (prior variance + SE^2); the prior as stated, else (README,
    "Industry betas from a whole market") the mean and the sample variance (n - 1) of the raw
    betas of every estimated security (none is excluded here: exclude_flags is refused above)."""
    estimated = [r for r in rows.values() if "beta" in r]
    adjustment = beta.get("adjustment", "none")
    if adjustment == "vasicek":
        raw = np.array([r["beta"] for r in estimated])
        mean = beta.get("vasicek_prior_mean", float(np.mean(raw)))
        variance = beta.get("vasicek_prior_variance", float(np.var(raw, ddof=1)))
    for r in estimated:
        if adjustment == "blume":
            w = beta.get("blume_weight", 0.67)
            r["shrunk_beta"] = w * r["beta"] + (1 - w)
        elif adjustment == "vasicek":
            w = variance / (variance + r["beta_std_error"] ** 2)
            r["shrunk_beta"] = w * r["beta"] + (1 - w) * mean
        r["beta_used"] = r.get("shrunk_beta", r["beta"])


def summary(values, weights, prefix, trim, value_weights=None):
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
        f"trimmed_mean_{prefix}": stats.trim_mean(v, trim),
    })
    # README, industries.csv: the market-cap-weighted mean rests on the values with an equity value.
    out[f"market_cap_weighted_{prefix}_count"] = len(weights)
    if weights:
        wv, ww = zip(*weights)
        out[f"market_cap_weighted_{prefix}"] = np.average(wv, weights=ww)
        # Kish's effective sample size (Survey Sampling, 1965; from memory): (sum w)^2 / sum w^2.
        w = np.asarray(ww, dtype=float)
        out[f"market_cap_weighted_{prefix}_effective_count"] = w.sum() ** 2 / (w ** 2).sum()
    if value_weights:
        wv, ww = zip(*value_weights)
        out[f"value_weighted_{prefix}"] = np.average(wv, weights=ww)
    # The median's distribution-free 95% interval by order statistics (Conover 1999, 3.2):
    # scipy.stats.quantile_test's; NaN (an empty cell) below six values.
    low, high = median_interval(v)
    out[f"median_{prefix}_ci_low"] = None if np.isnan(low) else low
    out[f"median_{prefix}_ci_high"] = None if np.isnan(high) else high
    return out


def median_interval(v):
    """The 95% interval scipy.stats.quantile_test gives for the median (scipy 1.12 and later);
    with an older scipy, the same order statistics from scipy.stats.binom as that function
    picks them (its two-sided branch: low index binom.ppf(0.025) - 1, high index
    binom.isf(0.025), NaN outside the sample)."""
    if hasattr(stats, "quantile_test"):
        ci = stats.quantile_test(v, q=float(np.median(v)), p=0.5).confidence_interval(0.95)
        return ci.low, ci.high
    x, n = np.sort(v), len(v)
    binom = stats.binom(n, 0.5)
    low_index, high_index = int(binom.ppf(0.025)) - 1, int(binom.isf(0.025))
    return (x[low_index] if low_index >= 0 else np.nan,
            x[high_index] if high_index < n else np.nan)


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
                   "not_estimated": len(members) - len(estimated),
                   "not_estimated_too_few_observations": len(members) - len(estimated),
                   # README, industries.csv: the estimated (and, exclude_flags being empty,
                   # aggregated) securities carrying any flag, and each flag recomputed above.
                   "flagged": sum(1 for r in estimated if r["flags"])}
        for flag in ("too_few_observations", "low_r_squared", "zero_returns", "lagged_response"):
            figures[f"flagged_{flag}"] = sum(1 for r in estimated if flag in r["flags"])
        for key, prefix, value in (("beta", "beta", None),
                                   ("unlevered_beta", "unlevered_beta", "firm_value"),
                                   ("operations_beta", "operations_beta", "operations_value")):
            have = [r for r in estimated if key in r]
            figures.update(summary([r[key] for r in have],
                                   [(r[key], r["equity"]) for r in have if r.get("equity")],
                                   prefix, leverage.get("trim_fraction", 0.1),
                                   value and [(r[key], r[value]) for r in have if value in r]))
        ratios = [r["debt_to_equity"] for r in estimated if "debt_to_equity" in r]
        if ratios:
            figures["median_debt_to_equity"] = np.median(ratios)
            # The industry as one portfolio: sum of debt (net of cash under net debt) over sum
            # of equity values, over the same securities.
            debt = sum(r["debt_to_equity"] * r["equity"] for r in estimated if "debt_to_equity" in r)
            equity = sum(r["equity"] for r in estimated if "debt_to_equity" in r)
            figures["aggregate_debt_to_equity"] = debt / equity
        taxes = [r["tax_rate"] for r in estimated if "tax_rate" in r]
        if taxes:
            figures["median_tax_rate"] = np.median(taxes)
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

    def same(self, where, expected, got, floor=FLOOR):
        """Relative TOLERANCE with an absolute floor (FLOOR, or none for p-values)."""
        self.checks += 1
        if expected is None or got is None:
            if (expected is None) != (got is None):
                self.failures.append(f"{where}: expected {expected}, hurdle {got}")
            return
        difference = abs(float(expected) - float(got))
        if not (difference <= TOLERANCE * abs(float(expected)) or difference < floor):
            self.failures.append(f"{where}: expected {expected!r}, hurdle {got!r}")

    def equal(self, where, expected, got):
        self.checks += 1
        if expected != got:
            self.failures.append(f"{where}: expected {expected!r}, hurdle {got!r}")


def main():
    universe, out, sets = parse_args(sys.argv)
    with open(universe, "rb") as handle:
        config = tomllib.load(handle)
    apply_sets(config, sets)
    missing = not_implemented(config)
    if missing:
        for setting in missing:
            print("NOT IMPLEMENTED", setting)
        print(f"0 checks, {len(missing)} failed")
        sys.exit(1)
    folder = universe.rsplit("/", 1)[0]
    rows = securities(config, folder)
    check = Checker()
    with open(out + "/securities.csv", newline="") as handle:
        listed = {r["security"]: r for r in csv.DictReader(handle)}
    check.same("securities listed", len(rows), len(listed))
    for security, row in rows.items():
        got = listed[security]
        for key in ("observations", "beta", "beta_std_error", "alpha", "alpha_std_error",
                    "r_squared", "beta_ci_low", "beta_ci_high", "durbin_watson",
                    "debt_to_equity", "unlevered_beta", "operations_beta", "zero_return_share",
                    "lag_slope", "lag_slope_std_error", "lag_slope_t_stat", "lag_summed_beta",
                    "alpha_t_stat", "beta_t_stat", "adjusted_r_squared", "residual_std_error",
                    "large_studentised_residuals", "shrunk_beta", "beta_used"):
            check.same(f"{security} {key}", row.get(key), number(got[key]))
        # p-values relative only, without the floor (p-values of 1e-20 and below occur here and
        # would otherwise always pass). statrs and scipy agree far inside 1e-9 relative even in
        # the far tail: a two-sided p-value's relative error is the t-statistic's absolute
        # rounding times the density-to-tail ratio (about |t|), about 1e-13 here (measured: at
        # most 4e-13 relative, at p = 7e-21).
        check.same(f"{security} beta_p_value", row.get("beta_p_value"), number(got["beta_p_value"]), floor=0.0)
        check.same(f"{security} alpha_p_value", row.get("alpha_p_value"), number(got["alpha_p_value"]), floor=0.0)
        check.same(f"{security} lag_slope_p_value", row.get("lag_slope_p_value"),
                   number(got["lag_slope_p_value"]), floor=0.0)
        check.equal(f"{security} newey_west_lags", row.get("newey_west_lags"),
                    None if got["newey_west_lags"] == "" else int(got["newey_west_lags"]))
        if "beta" in row:
            # The flags this check recomputes, and no other flag (staleness and exclusions are
            # not implemented here and refused above).
            flagged = {f for f in got["flags"].split(";") if f}
            check.equal(f"{security} flags", sorted(row["flags"]), sorted(flagged))
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
    sys.exit(1 if check.failures else 0)


if __name__ == "__main__":
    main()
