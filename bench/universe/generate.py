#!/usr/bin/env python3
"""Seeded synthetic universe for the `hurdle universe` benchmark.

Writes invented daily closes for N securities over a trading calendar with weekends and
holidays, a market index, an attributes table (40 industries; market cap, debt, cash, tax rate;
a few missing fields and a few securities without attributes) and a universe file. Nothing here
is market data: prices follow r = beta * r_market + e with seeded normal draws.

The panel is written in every layout hurdle reads, with identical values (prices rounded to 5
decimals, so CSV text and Parquet doubles agree exactly):
  prices-long.csv      date, security, close; sorted by security then date; gaps are absent rows
  prices-long.parquet  the same rows
  prices-wide.csv      date and one column per security; gaps are empty cells

Usage: generate.py [--out DIR] [--securities 5000] [--days 2520] [--seed 20260930]
                   [--csv-only]
"""

import argparse
import datetime as dt
import pathlib
import sys

import numpy as np
import polars as pl

INDUSTRIES = 40
SECTORS = 8
VALUATION_DATE = np.datetime64("2026-09-30")
# Thin traders: the share of days on which they trade. 0.5 keeps enough consecutive trading
# days for an estimate (flagged); 0.15 leaves too few for `beta.min_observations`.
THIN_SHARES = (0.5, 0.5, 0.5, 0.15, 0.15)
MIN_OBSERVATIONS = 120


def trading_calendar(days, rng):
    """The last `days` weekdays up to the valuation date, less invented holidays.

    Each year has its 1 January and 25 December (when they fall on a weekday) and seven more
    seeded weekdays closed, so every year has about nine market-wide holidays."""
    span = np.arange(VALUATION_DATE - int(days * 1.6), VALUATION_DATE + 1, dtype="datetime64[D]")
    weekdays = span[np.is_busday(span)]
    years = weekdays.astype("datetime64[Y]").astype(int) + 1970
    months = weekdays.astype("datetime64[M]")
    month = months.astype(int) % 12 + 1
    day = (weekdays - months).astype(int) + 1
    closed = ((month == 1) & (day == 1)) | ((month == 12) & (day == 25))
    for year in np.unique(years):
        inside = np.flatnonzero((years == year) & ~closed)
        closed[rng.choice(inside, size=min(7, len(inside)), replace=False)] = True
    calendar = weekdays[~closed]
    if len(calendar) < days:
        sys.exit("calendar too short; widen the span")
    return calendar[-days:]


def industry_labels():
    return [f"Industry {i + 1:02d}" for i in range(INDUSTRIES)]


def draw_parameters(n, rng):
    """Per security: industry, true beta, idiosyncratic volatility, first price, listing span,
    random missing-day rate and thin-trading share."""
    industry = rng.integers(0, INDUSTRIES, size=n)
    industry_beta = np.linspace(0.55, 1.55, INDUSTRIES)[rng.permutation(INDUSTRIES)]
    beta = industry_beta[industry] + rng.normal(0.0, 0.25, size=n)
    vol = rng.uniform(0.008, 0.03, size=n)
    first_price = np.exp(rng.uniform(np.log(5.0), np.log(500.0), size=n))
    # 10% list late (first trade in the first 70% of the calendar), 5% stop trading early.
    start = np.where(rng.random(n) < 0.10, rng.uniform(0.0, 0.7, size=n), 0.0)
    end = np.where(rng.random(n) < 0.05, rng.uniform(0.5, 0.95, size=n), 1.0)
    missing_rate = np.where(rng.random(n) < 0.3, rng.uniform(0.0, 0.02, size=n), 0.0)
    trade_share = np.ones(n)
    thin = rng.choice(n, size=min(len(THIN_SHARES), n), replace=False)
    trade_share[thin] = THIN_SHARES[: len(thin)]
    return industry, beta, vol, first_price, start, end, missing_rate, trade_share


def simulate_block(market, params, rows, rng):
    """Closes (NaN where the security did not trade) for the securities `rows`."""
    industry, beta, vol, first_price, start, end, missing_rate, trade_share = params
    t = len(market)
    k = len(rows)
    noise = rng.normal(0.0, 1.0, size=(k, t)) * vol[rows, None]
    returns = np.clip(beta[rows, None] * market[None, :] + noise, -0.5, 1.0)
    prices = first_price[rows, None] * np.cumprod(1.0 + returns, axis=1)
    prices = np.maximum(np.round(prices, 5), 0.00001)
    position = np.arange(t)[None, :] / t
    traded = (position >= start[rows, None]) & (position <= end[rows, None])
    traded &= rng.random((k, t)) >= missing_rate[rows, None]
    traded &= rng.random((k, t)) < trade_share[rows, None]
    return np.where(traded, prices, np.nan)


def security_ids(n):
    return [f"SEC{i + 1:05d}" for i in range(n)]


def attributes_frame(ids, params, rng):
    """market_cap, debt, cash, tax_rate per security, with gaps the reader must flag."""
    n = len(ids)
    industry = params[0]
    market_cap = np.round(np.exp(rng.uniform(np.log(50.0), np.log(200_000.0), size=n)), 2)
    debt_to_equity = np.where(rng.random(n) < 0.1, 0.0, np.exp(rng.normal(-1.0, 0.8, size=n)))
    debt = np.round(market_cap * debt_to_equity, 2)
    cash = np.round(market_cap * rng.uniform(0.0, 0.15, size=n), 2)
    tax_rate = np.round(rng.uniform(0.12, 0.35, size=n), 4)
    frame = pl.DataFrame(
        {
            "security": ids,
            "industry": [industry_labels()[i] for i in industry],
            "sector": [f"Sector {i % SECTORS + 1}" for i in industry],
            "market_cap": market_cap,
            "debt": debt,
            "cash": cash,
            "tax_rate": tax_rate,
        }
    )
    # 1% without debt, 0.5% without a tax rate (flagged, never guessed); 0.4% with no row at all.
    no_debt = rng.random(n) < 0.01
    no_tax = rng.random(n) < 0.005
    frame = frame.with_columns(
        pl.when(pl.Series(no_debt)).then(None).otherwise(pl.col("debt")).alias("debt"),
        pl.when(pl.Series(no_tax)).then(None).otherwise(pl.col("tax_rate")).alias("tax_rate"),
    )
    frame = frame.filter(pl.Series(rng.random(n) >= 0.004))
    # Three rows for securities the panel does not hold: a warning, not an error.
    extra = pl.DataFrame(
        {
            "security": ["SEC99997", "SEC99998", "SEC99999"],
            "industry": ["Industry 01"] * 3,
            "sector": ["Sector 1"] * 3,
            "market_cap": [100.0] * 3,
            "debt": [10.0] * 3,
            "cash": [1.0] * 3,
            "tax_rate": [0.25] * 3,
        }
    )
    return pl.concat([frame, extra])


def universe_toml(title, first_date, panel_file):
    return f"""# Written by bench/universe/generate.py: an invented universe, not market data.
[universe]
title = "{title}"
valuation_date = {VALUATION_DATE}

[market.index]
name = "synthetic market index"
prices = "index.csv"
price_column = "close"

[beta]
frequency = "daily"
window_start = {first_date}
min_observations = {MIN_OBSERVATIONS}

[leverage]
formula = "hamada"

[panel]
prices = "{panel_file}"
layout = "long"
date_column = "date"
security_column = "security"
price_column = "close"

[attributes]
file = "attributes.csv"
security_column = "security"
industry_column = "industry"
equity_value_column = "market_cap"
debt_column = "debt"
cash_column = "cash"
tax_rate_column = "tax_rate"
"""


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", default="/tmp/hurdle-universe")
    parser.add_argument("--securities", type=int, default=5000)
    parser.add_argument("--days", type=int, default=2520)
    parser.add_argument("--seed", type=int, default=20260930)
    parser.add_argument("--csv-only", action="store_true", help="long CSV only (the 4x run)")
    args = parser.parse_args()
    out = pathlib.Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(args.seed)

    calendar = trading_calendar(args.days, rng)
    market = rng.normal(0.0003, 0.01, size=len(calendar))
    index_close = np.round(1000.0 * np.cumprod(1.0 + market), 4)
    pl.DataFrame({"date": calendar, "close": index_close}).write_csv(out / "index.csv")

    n = args.securities
    ids = security_ids(n)
    params = draw_parameters(n, rng)
    long_csv = out / "prices-long.csv"
    parts = []
    wide = {"date": calendar}
    with open(long_csv, "wb") as handle:
        for first in range(0, n, 500):
            rows = np.arange(first, min(first + 500, n))
            closes = simulate_block(market, params, rows, rng)
            held = ~np.isnan(closes)
            counts = held.sum(axis=1)
            block = pl.DataFrame(
                {
                    "date": np.tile(calendar, len(rows))[held.ravel()],
                    "security": np.repeat(np.array(ids)[rows], counts),
                    "close": closes[held],
                }
            )
            block.write_csv(handle, include_header=(first == 0))
            if not args.csv_only:
                parts.append(block)
                for j, r in enumerate(rows):
                    wide[ids[r]] = closes[j]
    if not args.csv_only:
        long = pl.concat(parts)
        long.write_parquet(out / "prices-long.parquet")
        pl.DataFrame(wide).fill_nan(None).write_csv(out / "prices-wide.csv")
    attributes = attributes_frame(ids, params, rng)
    attributes.write_csv(out / "attributes.csv")
    attributes.write_parquet(out / "attributes.parquet")
    first_date = str(calendar[0])
    (out / "universe.toml").write_text(
        universe_toml(f"Synthetic universe of {n} securities", first_date, "prices-long.csv")
    )
    size = long_csv.stat().st_size / 2**20
    print(f"{out}: {n} securities x {len(calendar)} days, prices-long.csv {size:.0f} MiB")


if __name__ == "__main__":
    main()
