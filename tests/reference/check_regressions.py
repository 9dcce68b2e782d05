#!/usr/bin/env python3
"""Independent check of a hurdle run with numpy and scipy.

Usage: check_regressions.py OUTPUT_DIR

Reads OUTPUT_DIR/returns.csv and OUTPUT_DIR/result.json (written by `hurdle run`), refits every
peer's market-model regression with numpy's least squares and scipy.stats.linregress, and
recomputes the Blume adjustment, Hamada unlevering, the median, relevering, the CAPM cost of
equity and the WACC from their textbook formulas. Every figure must agree with result.json to a
relative 1e-9: both sides are double-precision evaluations of the same closed forms on the same
numbers, so honest differences are rounding (about 1e-13); 1e-9 is the project's stated bar.
Exits non-zero on any mismatch.
"""
import csv
import json
import sys
from collections import defaultdict

import numpy as np
from scipy import stats

TOLERANCE = 1e-9
failures = []
checks = 0


def check(label, ours, reference, tolerance=TOLERANCE):
    global checks
    checks += 1
    scale = max(abs(reference), 1e-300)
    if not (abs(ours - reference) <= tolerance * scale or abs(ours - reference) < 1e-15):
        failures.append(f"{label}: hurdle {ours!r} vs reference {reference!r}")


def tax_factor(formula, t, kd):
    """The factor s in beta_L = beta_U + (beta_U - beta_D) * s * D/E."""
    return {"hamada": 1 - t, "conine": 1 - t, "harris-pringle": 1.0, "miles-ezzell": 1 - t * kd / (1 + kd)}[formula]


def main(out_dir):
    with open(f"{out_dir}/result.json") as f:
        result = json.load(f)
    rows = defaultdict(list)
    with open(f"{out_dir}/returns.csv", newline="") as f:
        reader = csv.DictReader(f)
        excess = "risk_free" in reader.fieldnames
        for row in reader:
            rows[row["peer"]].append(row)

    for peer in result["peers"]:
        name = peer["name"]
        data = rows[name]
        asset = np.array([float(r["asset_return"]) for r in data])
        market = np.array([float(r["market_return"]) for r in data])
        if excess:
            rf = np.array([float(r["risk_free"]) for r in data])
            asset, market = asset - rf, market - rf
        n = len(asset)
        check(f"{name} observations", peer["observations"], n)

        # numpy: least squares on [1, x].
        design = np.column_stack([np.ones(n), market])
        coef, _, rank, _ = np.linalg.lstsq(design, asset, rcond=None)
        assert rank == 2
        residuals = asset - design @ coef
        s2 = residuals @ residuals / (n - 2)
        cov = s2 * np.linalg.inv(design.T @ design)
        check(f"{name} alpha (numpy)", peer["alpha"], coef[0])
        check(f"{name} beta (numpy)", peer["beta"], coef[1])
        check(f"{name} alpha SE (numpy)", peer["alpha_std_error"], np.sqrt(cov[0, 0]))
        check(f"{name} residual SE (numpy)", peer["residual_std_error"], np.sqrt(s2))

        # scipy: linregress gives slope, intercept, their SEs, r and the slope's p-value.
        fit = stats.linregress(market, asset)
        check(f"{name} beta (scipy)", peer["beta"], fit.slope)
        check(f"{name} alpha (scipy)", peer["alpha"], fit.intercept)
        check(f"{name} beta SE (scipy)", peer["beta_std_error"], fit.stderr)
        check(f"{name} alpha SE (scipy)", peer["alpha_std_error"], fit.intercept_stderr)
        check(f"{name} R2 (scipy)", peer["r_squared"], fit.rvalue**2)
        check(f"{name} beta p-value (scipy)", peer["beta_p_value"], fit.pvalue)
        check(f"{name} beta t (scipy)", peer["beta_t_stat"], fit.slope / fit.stderr)
        alpha_t = fit.intercept / fit.intercept_stderr
        check(f"{name} alpha p-value (scipy)", peer["alpha_p_value"], 2 * stats.t.sf(abs(alpha_t), n - 2))
        adjusted = 1 - (1 - fit.rvalue**2) * (n - 1) / (n - 2)
        check(f"{name} adjusted R2", peer["adjusted_r_squared"], adjusted)
        t975 = stats.t.ppf(0.975, n - 2)
        check(f"{name} CI low (scipy t)", peer["beta_ci_low"], fit.slope - t975 * fit.stderr)
        check(f"{name} CI high (scipy t)", peer["beta_ci_high"], fit.slope + t975 * fit.stderr)

        # Blume (1971, 1975) and Hamada (1972), written out here.
        adjustment = result["settings"]["beta"]["adjustment"]
        used = 0.67 * fit.slope + 0.33 if adjustment == "blume" else fit.slope
        if adjustment == "blume":
            check(f"{name} Blume beta", peer["adjusted_beta"], used)
        else:
            assert peer["adjusted_beta"] is None
        check(f"{name} beta used", peer["beta_used"], used)
        spec = next(p for p in result["settings"]["peer"] if p["name"] == name)
        de = spec["debt"] / spec["equity_value"]
        if result["settings"]["leverage"]["debt_measure"] == "net":
            de = (spec["debt"] - spec["cash"]) / spec["equity_value"]
        check(f"{name} D/E", peer["debt_to_equity"], de)
        if result["beta"]["formula"] == "hamada":
            check(f"{name} Hamada unlevered", peer["unlevered_beta"], used / (1 + (1 - spec["tax_rate"]) * de))
        else:
            # Harris-Pringle (1985), Miles-Ezzell (1980), Conine (1980), solved for the asset beta.
            bd = peer["debt_beta"]
            if result["settings"]["leverage"]["debt_beta_source"] == "credit-spread" and "debt_beta" not in spec:
                # The CAPM solved for the beta of debt priced at Kd: (Kd - rf) / ERP.
                kd = spec.get("cost_of_debt", result["cost_of_debt_pre_tax"])
                check(f"{name} debt beta from spread", bd, (kd - result["risk_free_rate"]) / result["equity_risk_premium"])
            s = tax_factor(result["beta"]["formula"], spec["tax_rate"], peer["cost_of_debt"])
            check(f"{name} unlevered ({result['beta']['formula']})", peer["unlevered_beta"], (used + bd * s * de) / (1 + s * de))

    unlevered = np.array([p["unlevered_beta"] for p in result["peers"]])
    leverage = result["settings"]["leverage"]
    specs = {p["name"]: p for p in result["settings"]["peer"]}
    # Cash-corrected unlevered beta: beta_U / (1 - cash / (equity + debt)), gross debt.
    corrected = np.array([
        p["unlevered_beta"] / (1 - specs[p["name"]]["cash"] / (specs[p["name"]]["equity_value"] + specs[p["name"]]["debt"]))
        for p in result["peers"]
    ])
    for p, c in zip(result["peers"], corrected):
        check(f"{p['name']} cash-corrected unlevered", p["cash_corrected_unlevered_beta"], c)
    if leverage["cash_correction"]:
        unlevered = corrected
    caps = np.array([specs[p["name"]]["equity_value"] for p in result["peers"]])
    statistics = {
        "median": np.median(unlevered),
        "mean": np.mean(unlevered),
        "market-cap-weighted": np.average(unlevered, weights=caps),
        "trimmed-mean": stats.trim_mean(unlevered, leverage["trim_fraction"]),
    }
    locations = result["beta"]["unlevered_statistics"]
    check("mean (numpy)", locations["mean"], statistics["mean"])
    check("market-cap-weighted mean (numpy average)", locations["market_cap_weighted_mean"], statistics["market-cap-weighted"])
    check("trimmed mean (scipy trim_mean)", locations["trimmed_mean"], statistics["trimmed-mean"])
    aggregate = statistics[result["beta"]["aggregation"]]
    check("aggregate unlevered beta", result["beta"]["unlevered"], aggregate)
    d = result["beta"]["unlevered_dispersion"]
    check("lower quartile (numpy)", d["lower_quartile"], np.percentile(unlevered, 25))
    check("upper quartile (numpy)", d["upper_quartile"], np.percentile(unlevered, 75))
    check("std dev (numpy, ddof=1)", d["std_dev"], np.std(unlevered, ddof=1))

    target = result["target"]
    de, t = target["debt_to_equity"], target["tax_rate"]
    tset = result["settings"]["target"]
    net = leverage["debt_measure"] == "net"
    if tset["source"] == "peer-median":
        ratios = [(p["debt"] - (p["cash"] if net else 0)) / p["equity_value"] for p in result["settings"]["peer"]]
        check("target D/E (peer median)", de, np.median(ratios))
    elif tset["source"] == "subject":
        debt = tset["subject_debt"] - (tset.get("subject_cash", 0) if net else 0)
        check("target D/E (subject)", de, debt / tset["subject_equity_value"])
    formula = result["beta"]["formula"]
    # The subject's debt beta: none, given, or (Kd - rf) / ERP from its own cost of debt.
    bd = {
        "none": 0.0,
        "given": leverage["debt_beta"],
        "credit-spread": (result["cost_of_debt_pre_tax"] - result["risk_free_rate"]) / result["equity_risk_premium"],
    }[leverage["debt_beta_source"]]
    check("subject debt beta", result["subject_debt_beta"], bd)
    if formula == "hamada":
        bd = 0.0
    s = tax_factor(formula, t, result["cost_of_debt_pre_tax"])
    relevered = aggregate + (aggregate - bd) * s * de
    check("relevered beta", result["beta"]["relevered"], relevered)
    p = result["premiums"]
    ps = result["settings"]["premiums"]
    # Country risk premium added directly, times the exposure lambda, or times the relevered beta.
    country = {"added": ps["country"], "lambda": ps["country_lambda"] * ps["country"], "beta": relevered * ps["country"]}[ps["country_method"]]
    check("country premium applied", p["country_applied"], country)
    ke = result["risk_free_rate"] + relevered * result["equity_risk_premium"] + ps["size"] + country + ps["company_specific"]
    check("cost of equity (CAPM)", result["cost_of_equity"], ke)
    kd = result["cost_of_debt_pre_tax"] * (1 - t)
    check("after-tax cost of debt", result["cost_of_debt_after_tax"], kd)
    pref, leases = result["settings"]["preferred"], result["settings"]["leases"]
    other = pref["weight"] + leases["weight"]
    we, wd = (1 - other) / (1 + de), (1 - other) * de / (1 + de)
    check("equity weight", result["weights"]["equity"], we)
    # Preferred equity at its own cost (not deductible); leases after tax at the target rate.
    kl = leases.get("cost_pre_tax", result["cost_of_debt_pre_tax"]) * (1 - t)
    check("WACC", result["wacc"], we * ke + wd * kd + pref["weight"] * pref.get("cost", 0.0) + leases["weight"] * kl)

    for line in failures:
        print("MISMATCH", line)
    print(f"reference: {checks - len(failures)} passed, {len(failures)} failed")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1]))
