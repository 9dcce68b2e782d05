#!/usr/bin/env python3
"""Coverage of hurdle's Monte Carlo interval when the peers' residuals are correlated.

Usage: coverage_simulation.py HURDLE_BINARY WORK_DIR

numpy generates REPLICATIONS independent markets (seeded): 60 monthly index returns and 8 peers
with known betas whose residuals share an industry shock the index does not carry, so every pair
of residuals has correlation RHO. For each market hurdle runs a case with mean aggregation and no
adjustment (the WACC is then linear in the betas, so normal theory is exact) twice: with the
betas drawn jointly (`uncertainty.beta_errors = "correlated"`, the default) and drawn
independently. The true WACC follows from the true betas by the textbook Hamada, CAPM and WACC
formulas. Expected: the correlated 90% interval [p05, p95] covers the truth in about 90% of the
markets; the independent one is too narrow and falls far short.

Bounds (binomial, REPLICATIONS = 120): the standard error of a 90% coverage estimate is
sqrt(0.9 * 0.1 / 120) = 0.027, so the correlated coverage must lie in [0.80, 0.97] (about four
standard errors below and 2.5 above; the estimated covariance adds a little under-coverage).
With equal residual variances and pairwise correlation RHO, the mean of 8 beta errors has
variance sigma^2 (1 + 7 RHO) / 8, against sigma^2 / 8 if they were independent: with RHO = 0.7
the independent draws are sqrt(5.9) = 2.4 times too narrow, and cover the truth with probability
about P(|Z| < 1.645 / 2.4) = 0.50. The independent coverage must be at least 0.15 below the
correlated one (the standard error of the difference is about 0.05).
"""
import os
import subprocess
import sys

import numpy as np

REPLICATIONS = 120
PERIODS = 60
RHO = 0.7
TRUE_BETAS = np.array([0.7, 0.85, 0.95, 1.0, 1.1, 1.2, 1.3, 1.45])
DEBT_TO_EQUITY = np.array([0.2, 0.5, 0.3, 0.6, 0.1, 0.4, 0.35, 0.25])
TAX = 0.25
TARGET = 0.4
RF, ERP, KD = 0.03, 0.05, 0.055


def month_ends(count):
    dates, year, month = [], 2021, 9
    for _ in range(count):
        month += 1
        if month > 12:
            year, month = year + 1, 1
        nxt = (year + (month == 12), month % 12 + 1)
        last = (np.datetime64(f"{nxt[0]}-{nxt[1]:02d}-01") - np.timedelta64(1, "D"))
        dates.append(str(last))
    return dates


def write_market(folder, rng):
    os.makedirs(folder, exist_ok=True)
    dates = month_ends(PERIODS + 1)
    market = rng.normal(0.006, 0.045, PERIODS)
    industry = rng.normal(0, 0.06 * np.sqrt(RHO), PERIODS)
    own = rng.normal(0, 0.06 * np.sqrt(1 - RHO), (len(TRUE_BETAS), PERIODS))
    def prices(returns):
        return 100 * np.concatenate([[1.0], np.cumprod(1 + returns)])
    def write(name, series):
        with open(f"{folder}/{name}.csv", "w") as f:
            f.write("date,price\n")
            for d, p in zip(dates, series):
                f.write(f"{d},{float(p)!r}\n")
    write("index", prices(market))
    for i, beta in enumerate(TRUE_BETAS):
        write(f"peer{i}", prices(0.001 + beta * market + industry + own[i]))
    peers = "".join(
        f'\n[[peer]]\nname = "P{i}"\nprices = "peer{i}.csv"\nequity_value = 1000.0\n'
        f"debt = {float(1000.0 * DEBT_TO_EQUITY[i])!r}\ntax_rate = {TAX}\n"
        for i in range(len(TRUE_BETAS))
    )
    with open(f"{folder}/case.toml", "w") as f:
        f.write(f"""[case]
title = "Coverage simulation (generated)"
valuation_date = {dates[-1]}
currency = "XXX"

[market]
risk_free_rate = {RF}
equity_risk_premium = {ERP}

[market.index]
prices = "index.csv"

[beta]
lookback = {PERIODS}
min_observations = {PERIODS}
adjustment = "none"

[leverage]
aggregation = "mean"

[target]
debt_to_equity = {TARGET}
tax_rate = {TAX}

[debt]
cost_pre_tax = {KD}

[uncertainty]
draws = 2000
specification_range = false
{peers}""")


def true_wacc():
    unlevered = np.mean(TRUE_BETAS / (1 + (1 - TAX) * DEBT_TO_EQUITY))
    relevered = unlevered * (1 + (1 - TAX) * TARGET)
    ke = RF + relevered * ERP
    return ke / (1 + TARGET) + TARGET / (1 + TARGET) * KD * (1 - TAX)


def interval(binary, folder, mode):
    import json
    out = f"{folder}/out-{mode}"
    subprocess.run(
        [binary, "run", f"{folder}/case.toml", "--out", out, "--set", f"uncertainty.beta_errors={mode}"],
        check=True, capture_output=True,
    )
    u = json.load(open(f"{out}/result.json"))["uncertainty"]
    return u["p05"], u["p95"]


def main(binary, work):
    rng = np.random.default_rng(1962)
    truth = true_wacc()
    covered = {"correlated": 0, "independent": 0}
    for k in range(REPLICATIONS):
        folder = f"{work}/market{k}"
        write_market(folder, rng)
        for mode in covered:
            low, high = interval(binary, folder, mode)
            covered[mode] += low <= truth <= high
    rate = {mode: count / REPLICATIONS for mode, count in covered.items()}
    print(f"coverage of the true WACC by the 90% interval over {REPLICATIONS} markets: {rate}")
    ok = 0.80 <= rate["correlated"] <= 0.97 and rate["independent"] <= rate["correlated"] - 0.15
    print("1 passed, 0 failed" if ok else "0 passed, 1 failed")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main(sys.argv[1], sys.argv[2]))
