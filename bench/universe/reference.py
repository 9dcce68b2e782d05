#!/usr/bin/env python3
"""Reference pipeline for the `hurdle universe` benchmark, in polars' lazy API.

What an analyst would write by hand to get industry betas from a long price panel: daily simple
returns per security, joined to the index's returns by date, beta = cov/var per security (no
other statistic), Hamada unlevering with each firm's own D/E and tax rate, industry medians. It
follows hurdle's daily sampling rule so the two can be compared: a return needs prices on two
consecutive weekdays, so a holiday or a missing day drops the returns into and out of it.

Usage: reference.py UNIVERSE.toml [--panel FILE] [--out industries.csv]
Prints the pipeline's time in seconds (after imports) on the last line: `seconds <t>`.
"""

import argparse
import pathlib
import time
import tomllib

import polars as pl


def weekday_returns(frame, by):
    """Simple returns between prices on consecutive weekdays, per group `by` (or overall)."""
    date = pl.col("date")
    previous_weekday = (
        pl.when(date.dt.weekday() == 1)
        .then(date - pl.duration(days=3))
        .otherwise(date - pl.duration(days=1))
    )
    keys = [by] if by else []
    frame = frame.sort(keys + ["date"])
    same = pl.col(by) == pl.col(by).shift(1) if by else pl.lit(True)
    return frame.with_columns(
        ret=pl.col("close") / pl.col("close").shift(1) - 1.0,
        ok=same & (date.shift(1) == previous_weekday),
    ).filter(pl.col("ok"))


def pipeline(config_path, panel_override=None):
    folder = config_path.parent
    config = tomllib.loads(config_path.read_text())
    beta = config["beta"]
    start, end = beta["window_start"], config["universe"]["valuation_date"]
    min_obs = beta["min_observations"]
    panel = config["panel"]
    attributes = config["attributes"]
    path = folder / (panel_override or panel["prices"])
    if path.suffix == ".parquet":
        prices = pl.scan_parquet(path)
    else:
        prices = pl.scan_csv(
            path, schema={"date": pl.Date, "security": pl.String, "close": pl.Float64}
        )
    prices = prices.rename(
        {panel["date_column"]: "date", panel["security_column"]: "security",
         panel["price_column"]: "close"}
    ).filter(pl.col("date").is_between(start, end))
    index = config["market"]["index"]
    market = (
        pl.scan_csv(folder / index["prices"], schema={"date": pl.Date, "close": pl.Float64})
        .filter(pl.col("date").is_between(start, end))
    )
    market = weekday_returns(market, None).select("date", pl.col("ret").alias("market"))
    returns = weekday_returns(prices, "security").select("security", "date", "ret")
    betas = (
        returns.join(market, on="date", how="inner")
        .group_by("security")
        .agg(
            observations=pl.len(),
            beta=pl.cov("ret", "market") / pl.col("market").var(),
        )
        .filter(pl.col("observations") >= min_obs)
    )
    table = pl.scan_csv(
        folder / attributes["file"], schema_overrides={attributes["security_column"]: pl.String}
    ).select(
        pl.col(attributes["security_column"]).alias("security"),
        pl.col(attributes["industry_column"]).alias("industry"),
        pl.col(attributes["equity_value_column"]).alias("equity"),
        pl.col(attributes["debt_column"]).alias("debt"),
        pl.col(attributes["tax_rate_column"]).alias("tax_rate"),
    )
    # Hamada; no unlevered beta above a D/E of 10, where no leverage formula holds (hurdle's rule).
    de = pl.col("debt") / pl.col("equity")
    unlevered = pl.when(de <= 10.0).then(pl.col("beta") / (1.0 + (1.0 - pl.col("tax_rate")) * de))
    return (
        betas.join(table, on="security", how="inner")
        .group_by("industry")
        .agg(
            estimated=pl.len(),
            median_beta=pl.col("beta").median(),
            median_unlevered_beta=unlevered.median(),
        )
        .sort("industry")
        .collect()
    )


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("universe", type=pathlib.Path)
    parser.add_argument("--panel", help="panel file instead of the one panel.prices names")
    parser.add_argument("--out", type=pathlib.Path, help="write the industry table here")
    args = parser.parse_args()
    started = time.perf_counter()
    result = pipeline(args.universe, args.panel)
    seconds = time.perf_counter() - started
    if args.out:
        result.write_csv(args.out)
    print(f"{len(result)} industries")
    print(f"seconds {seconds:.3f}")


if __name__ == "__main__":
    main()
