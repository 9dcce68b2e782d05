#!/usr/bin/env python3
"""Independent check of hurdle's uncertainty figures with numpy.

Usage: check_uncertainty.py OUTPUT_DIR

Reads OUTPUT_DIR/result.json of a `hurdle run` of a case with OLS betas, classical standard
errors, Hamada unlevering at gross debt, median aggregation, an explicit target and a given cost of
debt (asserted below), finds the case file it ran (with the recorded SHA-256) and takes every rate,
premium, target, tax rate, peer figure and exclusion from that case and its recorded overrides,
with README's defaults, through check_regressions.py (`load_case`, `setting`, `peer_spec`), never
from hurdle's echo; rebuilds the returns from the case's own price and yield files
(check_regressions.py's `rebuild_returns`, which also checks them against returns.csv); then
recomputes:

1. The correlation of the peers' beta errors: each peer's OLS beta is a'y with
   a' = [R^-1 Q']_beta from numpy's QR of the design X = QR (the rows of (X'X)^-1 X', without
   forming X'X); its influence
   terms are a_t e_t; the correlation of two peers' errors is the sum of u_it u_jt over the
   periods both have, over the square roots of each peer's own sum of squares (the seemingly
   unrelated regressions sandwich, Zellner 1962). Agreement to 1e-9: the same closed form in
   double precision on the same numbers.
2. The leave-one-out WACCs, by the textbook Blume, Hamada, median, CAPM and WACC formulas. 1e-9.
3. Both Monte Carlo intervals, by numpy's own random generator and its own draws (betas from
   Student's t with each peer's N - 2 degrees of freedom, correlated through a joint normal; for the peer-set interval, the peers' estimates resampled with replacement, Efron's
   bootstrap over peers, without drawing the betas again): hurdle's 5th, 50th and
   95th percentiles must sit at those probabilities of numpy's distribution, within five standard
   errors of the two samples' binomial noise, 5 * sqrt(p(1 - p)(1/n_hurdle + 1/n_numpy)).
Exits non-zero on any mismatch.
"""
import csv
import json
import sys
from collections import defaultdict

import os

import numpy as np
import scipy.linalg

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import check_regressions as case_file  # noqa: E402  (the case as written, the returns rebuilt)

failures = []
checks = 0


def check(label, ours, reference, tolerance=1e-9):
    """Relative 1e-9 (the project's bar: the same closed forms in double precision, whose honest
    differences are rounding near 1e-13), with an absolute floor of 1e-15 so that a reference of
    exactly 0 (an off-diagonal correlation of peers with no period in common) accepts rounding
    residue of that size."""
    global checks
    checks += 1
    if not abs(ours - reference) <= tolerance * max(abs(reference), 1e-300) + 1e-15:
        failures.append(f"{label}: hurdle {ours!r} vs reference {reference!r}")


def check_quantiles(label, hurdle_interval, draws, hurdle_draws):
    """hurdle's percentile q must sit at probability p of numpy's distribution: P(X < q) <= p <=
    P(X <= q) within the binomial bound. Both sides are kept apart so that a distribution with
    atoms (the bootstrap of a median of eight peers takes a few dozen values) is judged fairly,
    and q is widened by 1e-12 relative because the two compute a set's WACC in another order
    and may differ in the last bits."""
    global checks
    draws = np.sort(draws)
    for p in (0.05, 0.5, 0.95):
        key = {0.05: "p05", 0.5: "p50", 0.95: "p95"}[p]
        q = hurdle_interval[key]
        tol = 1e-12 * abs(q)
        below = np.searchsorted(draws, q - tol, side="left") / len(draws)
        at_most = np.searchsorted(draws, q + tol, side="right") / len(draws)
        bound = 5 * np.sqrt(p * (1 - p) * (1 / hurdle_draws + 1 / len(draws)))
        checks += 1
        if not (below - bound <= p <= at_most + bound):
            failures.append(f"{label} {key}: hurdle {q} sits between {below:.4f} and {at_most:.4f} of numpy's draws, not at {p} +- {bound:.4f}")


def main(out_dir):
    result = json.load(open(f"{out_dir}/result.json"))
    case_path = case_file.load_case(out_dir, result, None)
    setting = case_file.setting
    assert setting("beta", "method") == "ols" and setting("beta", "std_errors") == "classical"
    assert setting("leverage", "formula") == "hamada" and setting("leverage", "aggregation") == "median"
    assert setting("leverage", "debt_measure") == "gross" and not setting("leverage", "operations_beta")
    assert setting("leverage", "debt_beta_source") == "none"
    assert setting("target", "source") == "explicit" and setting("debt", "source") == "given"
    assert setting("premiums", "country") == 0 and not setting("beta", "exclude_flags")
    assert setting("beta", "adjustment") in ("blume", "none")
    u = result["uncertainty"]
    assert u["beta_errors"] == "correlated"

    rebuilt, _, _, _ = case_file.rebuild_returns(case_path, result)
    failures.extend(case_file.failures)
    rows = defaultdict(list)
    for row in rebuilt:
        rows[row["peer"]].append(row)
    names = [p["name"] for p in result["peers"]]
    assert names == [p["name"] for p in case_file.CASE["peer"]], "peers in the case's order"
    betas, ses, influence, dfs = [], [], [], []
    for name in names:
        data = rows[name]
        rf = np.array([float(r.get("risk_free") or 0) for r in data])
        y = np.array([float(r["asset_return"]) for r in data]) - rf
        x = np.array([float(r["market_return"]) for r in data]) - rf
        X = np.column_stack([np.ones_like(x), x])
        Q, Rx = np.linalg.qr(X)
        A = scipy.linalg.solve_triangular(Rx, Q.T)
        coef = A @ y
        e = y - X @ coef
        s2 = e @ e / (len(y) - 2)
        betas.append(coef[1])
        dfs.append(len(y) - 2)
        ses.append(np.sqrt(s2 * (A[1] @ A[1])))
        influence.append(({r["period_end"]: k for k, r in enumerate(data)}, A[1] * e))
    n = len(names)
    R = np.eye(n)
    for i in range(n):
        for j in range(n):
            if i != j:
                (di, ui), (dj, uj) = influence[i], influence[j]
                shared = [d for d in di if d in dj]
                cross = sum(ui[di[d]] * uj[dj[d]] for d in shared)
                R[i, j] = cross / np.sqrt((ui @ ui) * (uj @ uj))
            check(f"correlation {i},{j}", u["beta_error_correlation"][i][j], R[i, j])
    betas, ses = np.array(betas), np.array(ses)

    specs = [case_file.peer_spec(name) for name in names]
    de = np.array([p["debt"] / p["equity_value"] for p in specs])
    tax = np.array([p["tax_rate"] for p in specs])
    # README "[[peer]]", exclude: a peer with a stated reason is shown but not aggregated (the
    # case lists no exclude_flags, asserted above).
    included = np.array([p["exclude"] is None for p in specs])
    weight = setting("beta", "blume_weight") if setting("beta", "adjustment") == "blume" else None
    rf_rate, erp = setting("market", "risk_free_rate"), setting("market", "equity_risk_premium")
    t = setting("target", "tax_rate")
    target = setting("target", "debt_to_equity")
    kd = setting("debt", "cost_pre_tax")
    premiums = setting("premiums", "size") + setting("premiums", "company_specific")
    we, wd = 1 / (1 + target), target / (1 + target)

    def wacc(raw, members, rf=rf_rate, erp=erp):
        """Textbook chain on raw betas (rows of draws) over the peers in `members` (columns),
        at one risk-free rate and ERP or one of each per draw."""
        used = raw if weight is None else weight * raw + (1 - weight)
        unlevered = used / (1 + (1 - tax[members]) * de[members])
        relevered = np.median(unlevered, axis=-1) * (1 + (1 - t) * target)
        ke = rf + relevered * erp + premiums
        return we * ke + wd * kd * (1 - t)

    members = np.flatnonzero(included)
    check("point WACC", result["wacc"], float(wacc(betas[members], members)))
    # README, result.json schema: one leave_one_out row per aggregated peer (the excluded ones
    # are put back instead); the rows' peers must be exactly the case's included peers, each
    # once, so that a missing or an empty list cannot pass the loop below unchecked.
    global checks
    listed = [row["peer"] for row in u["leave_one_out"]]
    expected_peers = sorted(names[i] for i in members)
    checks += 1
    if sorted(listed) != expected_peers:
        failures.append(f"leave_one_out peers: hurdle {sorted(listed)} vs the case's included peers {expected_peers}")
    for row in u["leave_one_out"]:
        i = names.index(row["peer"])
        rest = members[members != i]
        check(f"leave out {row['peer']}", row["wacc"], float(wacc(betas[rest], rest)))

    rng = np.random.default_rng(20261202)
    # At least as many draws as hurdle's, so that a run with many draws (the short-window test,
    # where Student's t and the normal clearly part) is judged at its own precision.
    draws = max(40000, u["draws"])
    cov = np.diag(ses) @ R @ np.diag(ses)
    # README, Monte Carlo: each beta from Student's t with its own N - 2 degrees of freedom,
    # correlated through the normal part: beta + (L z)_i * sqrt(nu_i / w_i), w_i chi-square.
    normal = rng.multivariate_normal(np.zeros(n), cov, size=draws)
    dfs = np.array(dfs, dtype=float)
    joint = betas + normal * np.sqrt(dfs / rng.chisquare(dfs, size=(draws, n)))
    # README "[uncertainty]": with `equity_risk_premium` or `risk_free_rate` ranges, each draw
    # also takes the ERP or the rate uniformly from its range (the given cost of debt stays).
    ranges = case_file.CASE.get("uncertainty", {})
    drawn = {}
    for key, value in (("erp", erp), ("rf", rf_rate)):
        span = ranges.get({"erp": "equity_risk_premium", "rf": "risk_free_rate"}[key])
        drawn[key] = value if span is None else rng.uniform(span[0], span[1], size=draws)
    for key in ("equity_risk_premium", "risk_free_rate"):
        checks += 1
        if u[f"{key}_range"] != ranges.get(key):
            failures.append(f"{key}_range: hurdle {u[f'{key}_range']} vs the case's {ranges.get(key)}")
    check_quantiles("estimation-error interval", u, wacc(joint[:, members], members, **drawn), u["draws"])
    # The peer-set interval: the aggregated peers' estimates resampled with replacement, the
    # betas not drawn again (their spread across peers already holds each one's error).
    picks = members[rng.integers(0, len(members), size=(draws, len(members)))]
    boot = wacc(betas[picks], picks)
    check_quantiles("peer-set interval", u["peer_set"], boot, u["peer_set"]["draws"])

    print(f"{checks} checks, {len(failures)} failed")
    for failure in failures:
        print("  " + failure)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1]))
