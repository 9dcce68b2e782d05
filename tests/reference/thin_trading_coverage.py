#!/usr/bin/env python3
"""Coverage of the Scholes-Williams interval under thin trading, simulated by numpy alone.

Usage: thin_trading_coverage.py [REPETITIONS]

The model of tests/thin_trading.rs: the market return m(t) = 0.005 + 0.045 z, the asset
r(t) = 0.001 + 0.45 m(t) + 0.65 m(t-1) + 0.05 e, so the true beta is 1.1; 120 periods. For each
repetition numpy computes the Scholes and Williams (1977, J. Financial Economics 5(3)) beta
(b_-1 + b_0 + b_+1) / (1 + 2 rho), each b a simple-regression slope and rho the correlation of the
market with its own lag, and its standard error as README states it: Var(w'r) with w the sum of
the three slopes' weights over (1 + 2 rho), from the residuals of r on [1, m(t-1), m(t), m(t+1)]
(a batched QR), under classical errors (e'e / (n - 4)), HC1 (White 1980; MacKinnon and White
1985: n / (n - 4) sum w^2 e^2) and Newey-West with 4 lags (Newey and West 1987, Bartlett
weights, no small-sample factor). The interval is beta +/- t(0.975, n - 4) SE (scipy).

It prints one line per standard error, "name covered repetitions", the share of repetitions whose
interval holds 1.1. The repetitions are seeded (numpy's PCG64, seed 20261204), so the output is
fixed; its sampling error is what the Rust test allows for.
"""
import sys

import numpy as np
from scipy import stats

TRUE_BETA, IMMEDIATE, PERIODS, LAGS = 1.1, 0.45, 120, 4
BATCH = 2000


def batch_coverage(rng, size):
    n = PERIODS
    m = 0.005 + 0.045 * rng.standard_normal((size, n + 2))
    lag, cur, lead = m[:, 0:n], m[:, 1:n + 1], m[:, 2:n + 2]
    asset = 0.001 + IMMEDIATE * cur + (TRUE_BETA - IMMEDIATE) * lag + 0.05 * rng.standard_normal((size, n))
    centred = asset - asset.mean(axis=1, keepdims=True)
    weights = np.zeros((size, n))
    slopes = np.zeros(size)
    for x in (lag, cur, lead):
        xc = x - x.mean(axis=1, keepdims=True)
        w = xc / (xc * xc).sum(axis=1, keepdims=True)
        slopes += (w * centred).sum(axis=1)
        weights += w
    lc = lag - lag.mean(axis=1, keepdims=True)
    cc = cur - cur.mean(axis=1, keepdims=True)
    rho = (lc * cc).sum(axis=1) / np.sqrt((lc * lc).sum(axis=1) * (cc * cc).sum(axis=1))
    beta = slopes / (1 + 2 * rho)
    weights /= (1 + 2 * rho)[:, None]
    design = np.stack([np.ones((size, n)), lag, cur, lead], axis=2)
    q, _ = np.linalg.qr(design)
    residuals = asset - np.einsum("bij,bj->bi", q, np.einsum("bij,bi->bj", q, asset))
    u = weights * residuals
    variance = {
        "classical": (residuals ** 2).sum(axis=1) / (n - 4) * (weights ** 2).sum(axis=1),
        "hc1": n / (n - 4) * (u ** 2).sum(axis=1),
        "newey-west": (u ** 2).sum(axis=1)
        + 2 * sum((1 - l / (LAGS + 1)) * (u[:, l:] * u[:, :-l]).sum(axis=1) for l in range(1, LAGS + 1)),
    }
    t975 = stats.t.ppf(0.975, n - 4)
    return {k: int((np.abs(beta - TRUE_BETA) <= t975 * np.sqrt(v)).sum()) for k, v in variance.items()}


def main():
    repetitions = int(sys.argv[1]) if len(sys.argv) > 1 else 40000
    rng = np.random.default_rng(20261204)
    covered = {"classical": 0, "hc1": 0, "newey-west": 0}
    done = 0
    while done < repetitions:
        size = min(BATCH, repetitions - done)
        for k, v in batch_coverage(rng, size).items():
            covered[k] += v
        done += size
    for k, v in covered.items():
        print(k, v, repetitions)


if __name__ == "__main__":
    main()
