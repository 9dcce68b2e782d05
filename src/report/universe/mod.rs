//! The outputs of `hurdle universe`: `securities.csv`/`.parquet` (one row per security),
//! `industries.csv`/`.parquet` (one row per industry), `figures/industries.svg` (the industry
//! table as a chart, [`chart`]), `summary.md` (the industry table for people, the chart, the
//! settings and the cautions), `result.json` (the receipt) and, when asked for,
//! `rolling.csv`/`.parquet`.
//!
//! Each table is built once as a polars frame from the [`UniverseResult`] and written in both
//! formats from that frame, so the CSV and the Parquet file cannot differ. Nothing here computes a
//! figure; an empty cell is a figure the result does not have (never a non-finite number).

use std::io::Cursor;
use std::path::{Path, PathBuf};

use polars::prelude::*;
use rayon::prelude::*;

pub mod chart;
mod summary;
use crate::beta::diagnostics::LagResponse;
use crate::error::{Error, Result};
use crate::universe::industries::{IndustryResult, Summary};
use crate::universe::securities::SecurityResult;
use crate::universe::UniverseResult;
use summary::summary;

/// The files a run writes only when asked for (`universe.rolling`).
const OPTIONAL_OUTPUTS: [&str; 2] = ["rolling.csv", "rolling.parquet"];

/// Every file a universe run may write.
pub const OUTPUTS: [&str; 8] = [
    "securities.csv",
    "securities.parquet",
    "industries.csv",
    "industries.parquet",
    "summary.md",
    "result.json",
    "rolling.csv",
    "rolling.parquet",
];

/// Renders every output, then writes them all into `dir` as one group (never over a file in
/// `reads`, nothing written when anything fails; see `staging`). An earlier run's rolling
/// tables that this run does not write are taken away with the same commit, so the folder
/// holds one run's outputs. Returns the paths written and the names taken away.
pub fn write_outputs(
    dir: &Path,
    result: &UniverseResult,
    reads: &[super::staging::FileRead],
) -> Result<(Vec<PathBuf>, Vec<String>)> {
    // A case's outputs go too when the receipt replaced is a case's: they would sit beside the
    // universe's receipt as if it had written them.
    let mut optional: Vec<String> = OPTIONAL_OUTPUTS.iter().map(|n| n.to_string()).collect();
    if let Some(earlier) = super::earlier::earlier_receipt(dir).filter(|e| !e.universe) {
        optional.extend(super::case_run_outputs_in(dir, &earlier));
    }
    // `hurdle verify --out`'s status of the receipt this run replaces, which would otherwise
    // say REPRODUCED beside a receipt it never saw (found by review).
    if super::verifies_the_receipt_in(dir) {
        optional.extend(super::VERIFICATION.iter().map(|n| n.to_string()));
    }
    // An earlier run's chart parts this run may not draw again (fewer industries, fewer parts).
    if let Ok(entries) = std::fs::read_dir(dir.join(super::figures::FOLDER)) {
        optional.extend(
            (entries.flatten())
                .map(|e| {
                    format!(
                        "{}/{}",
                        super::figures::FOLDER,
                        e.file_name().to_string_lossy()
                    )
                })
                .filter(|name| chart::is_chart_name(name)),
        );
    }
    optional.sort();
    optional.dedup();
    let optional: Vec<&str> = optional.iter().map(String::as_str).collect();
    super::staging::write_outputs_replacing(dir, &render(result)?, reads, &optional)
}

/// Counts by name, those above zero, as `name n, name n` (empty when none is).
pub fn nonzero_counts(counts: &std::collections::BTreeMap<&'static str, usize>) -> String {
    counts
        .iter()
        .filter(|(_, &n)| n > 0)
        .map(|(k, n)| format!("{k} {n}"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// " (by flag: low_r_squared 10, too_few_observations 4)" after the count of securities excluded
/// by `beta.exclude_flags`, or nothing when none is (found by review: the summaries said how
/// many were excluded but not why). A security carrying two listed flags counts under both.
pub fn excluded_by_flag(counts: &crate::universe::Counts) -> String {
    match nonzero_counts(&counts.excluded_by_flag) {
        flags if flags.is_empty() => flags,
        flags => format!(" (by flag: {flags})"),
    }
}

/// "297 estimated and aggregated", or, when some of them have no industry and so enter no
/// industry's figures, "297 estimated and not excluded (2 of them in no industry, …)".
pub fn estimated_count(estimated: usize, without_industry: usize) -> String {
    match without_industry {
        0 => format!("{estimated} estimated and aggregated"),
        n => format!(
            "{estimated} estimated and not excluded ({n} of them in no industry, and so in no \
             industry's figures)"
        ),
    }
}

/// Every output file's name and bytes.
pub fn render(result: &UniverseResult) -> Result<Vec<(String, Vec<u8>)>> {
    let mut files = Vec::new();
    let rolling = result.settings.universe.rolling;
    let adjusted = result.settings.beta.adjustment != crate::beta::Adjustment::None;
    let mut tables = vec![
        ("securities", securities_frame(&result.securities, rolling)?),
        (
            "industries",
            industries_frame(&result.industries, adjusted)?,
        ),
    ];
    if rolling {
        tables.push(("rolling", rolling_frame(result)?));
    }
    // Each table's CSV and Parquet are serialised side by side (a frame's clone shares its
    // columns), and beside them the charts, the summary and the receipt; the files keep this
    // order.
    let jobs: Vec<(String, DataFrame, bool)> = tables
        .into_iter()
        .flat_map(|(stem, frame)| {
            [
                (format!("{stem}.csv"), frame.clone(), false),
                (format!("{stem}.parquet"), frame, true),
            ]
        })
        .collect();
    let tables = || {
        jobs.into_par_iter()
            .map(|(name, mut frame, parquet)| {
                let bytes = match parquet {
                    true => parquet_bytes(&mut frame)?,
                    false => csv_bytes(&mut frame)?,
                };
                Ok((name, bytes))
            })
            .collect::<Result<Vec<(String, Vec<u8>)>>>()
    };
    let others = || -> Result<Vec<(String, Vec<u8>)>> {
        let charts = chart::draw(result)?;
        let mut files = vec![("summary.md".into(), summary(result, &charts).into_bytes())];
        files.extend(
            charts
                .into_iter()
                .map(|c| (c.file_name, c.svg.into_bytes())),
        );
        let json = serde_json::to_vec_pretty(result)
            .map_err(|e| frame_error(format!("result.json: {e}")))?;
        files.push(("result.json".into(), json));
        Ok(files)
    };
    let (tables, others) = rayon::join(tables, others);
    files.extend(tables?);
    files.extend(others?);
    Ok(files)
}

fn frame_error(message: String) -> Error {
    Error::Argument {
        option: "output".into(),
        message,
    }
}

fn csv_bytes(frame: &mut DataFrame) -> Result<Vec<u8>> {
    let mut bytes = Vec::new();
    CsvWriter::new(&mut bytes)
        .finish(frame)
        .map_err(|e| frame_error(format!("cannot write a CSV table: {e}")))?;
    Ok(crate::report::csv::quote_semicolons(bytes))
}

/// A table as Parquet, its date columns (`first_price_date`, `last_price_date`, `window_end`:
/// ISO text in the CSV) stored as dates, so that a reader gets the type the CSV cannot carry
/// (found by review: they were text).
fn parquet_bytes(frame: &mut DataFrame) -> Result<Vec<u8>> {
    let dates: Vec<String> = (frame.get_column_names().into_iter())
        .filter(|name| name.ends_with("_date") || name.as_str() == "window_end")
        .map(|name| name.to_string())
        .collect();
    for name in dates {
        let column = frame
            .column(&name)
            .map_err(|e| frame_error(e.to_string()))?;
        if column.dtype() == &DataType::String {
            // Days since 1970-01-01 read by chrono and cast from integers (polars 0.55's cast
            // from text to dates prints a deprecation warning on stderr).
            let epoch = chrono::NaiveDate::from_ymd_opt(1970, 1, 1).expect("a valid date");
            let days: Vec<Option<i32>> = (column.str().map_err(|e| frame_error(e.to_string()))?)
                .iter()
                .map(|text| {
                    let date = chrono::NaiveDate::parse_from_str(text?, "%Y-%m-%d").ok()?;
                    i32::try_from((date - epoch).num_days()).ok()
                })
                .collect();
            let as_dates = Column::new(name.as_str().into(), days)
                .cast(&DataType::Date)
                .map_err(|e| frame_error(format!("{name}: {e}")))?;
            frame
                .with_column(as_dates)
                .map_err(|e| frame_error(e.to_string()))?;
        }
    }
    let mut bytes = Cursor::new(Vec::new());
    ParquetWriter::new(&mut bytes)
        .finish(frame)
        .map_err(|e| frame_error(format!("cannot write a Parquet table: {e}")))?;
    Ok(bytes.into_inner())
}

/// Columns of one table, added in order; non-finite numbers become empty cells.
struct Table {
    height: usize,
    columns: Vec<Column>,
}

impl Table {
    fn new(height: usize) -> Table {
        Table {
            height,
            columns: Vec::new(),
        }
    }

    fn number(&mut self, name: &str, values: impl Iterator<Item = Option<f64>>) {
        let values: Vec<Option<f64>> = values.map(|v| v.filter(|v| v.is_finite())).collect();
        self.columns.push(Column::new(name.into(), values));
    }

    fn count(&mut self, name: &str, values: impl Iterator<Item = Option<usize>>) {
        let values: Vec<Option<u64>> = values.map(|v| v.map(|n| n as u64)).collect();
        self.columns.push(Column::new(name.into(), values));
    }

    fn text(&mut self, name: &str, values: impl Iterator<Item = Option<String>>) {
        let values: Vec<Option<String>> = values.collect();
        self.columns.push(Column::new(name.into(), values));
    }

    fn finish(self) -> Result<DataFrame> {
        DataFrame::new(self.height, self.columns)
            .map_err(|e| frame_error(format!("cannot build a table: {e}")))
    }
}

/// Names joined by `;`, or an empty cell.
fn joined<'a>(names: impl Iterator<Item = &'a str>) -> Option<String> {
    let names: Vec<&str> = names.collect();
    (!names.is_empty()).then(|| names.join(";"))
}

/// `securities.csv`: every statistic a case reports for a peer, and the unlevering.
fn securities_frame(rows: &[SecurityResult], rolling: bool) -> Result<DataFrame> {
    let mut t = Table::new(rows.len());
    sample_columns(&mut t, rows);
    estimate_columns(&mut t, rows);
    capital_columns(&mut t, rows);
    if rolling {
        let s = |f: fn(&crate::beta::rolling::Stability) -> f64| {
            rows.iter().map(move |r| r.stability.as_ref().map(f))
        };
        t.count(
            "rolling_windows",
            rows.iter().map(|r| r.stability.as_ref().map(|s| s.windows)),
        );
        t.number("rolling_beta_min", s(|s| s.min));
        t.number("rolling_beta_max", s(|s| s.max));
        t.number("rolling_beta_trend_per_year", s(|s| s.trend_per_year));
    }
    lag_columns(&mut t, rows);
    t.finish()
}

/// The regression on the index's previous-period return (OLS), last: added in 0.11.0, after
/// every column an earlier version wrote, so none of those moves.
fn lag_columns(t: &mut Table, rows: &[SecurityResult]) {
    let lag = |f: fn(&LagResponse) -> f64| rows.iter().map(move |r| r.lag_response.map(|l| f(&l)));
    t.number("lag_slope", lag(|l| l.slope));
    t.number("lag_slope_std_error", lag(|l| l.std_error));
    t.number("lag_slope_t_stat", lag(|l| l.t_stat));
    t.number("lag_slope_p_value", lag(|l| l.p_value));
    t.number("lag_summed_beta", lag(|l| l.summed_beta));
}

/// The security, its industry and its sample: periods, observations, what was dropped and why.
fn sample_columns(t: &mut Table, rows: &[SecurityResult]) {
    let dropped = |f: fn(&crate::market::sampling::DroppedPeriods) -> usize| {
        rows.iter().map(move |r| r.periods_dropped.as_ref().map(f))
    };
    t.text("security", rows.iter().map(|r| Some(r.security.clone())));
    t.text("industry", rows.iter().map(|r| r.industry.clone()));
    t.count("prices", rows.iter().map(|r| Some(r.prices)));
    for (name, end) in [("first_price_date", 0), ("last_price_date", 1)] {
        t.text(
            name,
            rows.iter().map(move |r| {
                r.price_dates
                    .map(|dates| [dates.0, dates.1][end].to_string())
            }),
        );
    }
    t.count(
        "periods_in_window",
        rows.iter().map(|r| Some(r.periods_in_window)),
    );
    t.count("observations", rows.iter().map(|r| r.observations));
    t.count("periods_dropped", dropped(|d| d.total));
    t.count("dropped_price_missing", dropped(|d| d.asset_missing));
    t.count("dropped_index_missing", dropped(|d| d.market_missing));
    t.count(
        "dropped_risk_free_missing",
        dropped(|d| d.risk_free_missing),
    );
    t.count("dropped_price_stale", dropped(|d| d.asset_stale));
    t.count("dropped_index_stale", dropped(|d| d.market_stale));
    t.count(
        "dropped_shifted_index_missing",
        dropped(|d| d.shifted_market_missing),
    );
    t.text(
        "not_estimated",
        rows.iter()
            .map(|r| r.not_estimated.map(|n| n.name().to_string())),
    );
    t.text(
        "not_estimated_detail",
        rows.iter().map(|r| r.not_estimated_detail.clone()),
    );
}

/// The regression's statistics.
fn estimate_columns(t: &mut Table, rows: &[SecurityResult]) {
    let e = |f: fn(&crate::beta::BetaEstimate) -> f64| {
        rows.iter().map(move |r| r.estimate.as_ref().map(f))
    };
    t.number("alpha", e(|e| e.alpha));
    t.number("alpha_std_error", e(|e| e.alpha_std_error));
    t.number("alpha_t_stat", e(|e| e.alpha_t_stat));
    t.number("alpha_p_value", e(|e| e.alpha_p_value));
    t.number("beta", e(|e| e.beta));
    t.number("beta_std_error", e(|e| e.beta_std_error));
    t.number("beta_t_stat", e(|e| e.beta_t_stat));
    t.number("beta_p_value", e(|e| e.beta_p_value));
    t.number("beta_ci_low", e(|e| e.beta_ci_low));
    t.number("beta_ci_high", e(|e| e.beta_ci_high));
    t.number("r_squared", e(|e| e.r_squared));
    t.number("adjusted_r_squared", e(|e| e.adjusted_r_squared));
    t.number("residual_std_error", e(|e| e.residual_std_error));
    t.number("durbin_watson", e(|e| e.durbin_watson));
    t.count(
        "large_studentised_residuals",
        rows.iter()
            .map(|r| r.estimate.as_ref().map(|e| e.large_studentised_residuals)),
    );
    t.count(
        "newey_west_lags",
        rows.iter()
            .map(|r| r.estimate.as_ref().and_then(|e| e.newey_west_lags)),
    );
}

/// Flags, the adjustment, the firm's structure and the unlevered betas.
fn capital_columns(t: &mut Table, rows: &[SecurityResult]) {
    t.number("stale_share", rows.iter().map(|r| r.stale_share));
    t.number(
        "zero_return_share",
        rows.iter().map(|r| r.zero_return_share),
    );
    t.text(
        "flags",
        rows.iter()
            .map(|r| joined(r.flags.iter().map(|f| f.name()))),
    );
    t.text(
        "excluded_reason",
        rows.iter().map(|r| r.excluded_reason.clone()),
    );
    t.number("shrunk_beta", rows.iter().map(|r| r.shrunk_beta));
    t.number("beta_used", rows.iter().map(|r| r.beta_used));
    t.number("equity_value", rows.iter().map(|r| r.equity_value));
    t.number("debt", rows.iter().map(|r| r.debt));
    t.number("cash", rows.iter().map(|r| r.cash));
    t.number("tax_rate", rows.iter().map(|r| r.tax_rate));
    t.text(
        "missing",
        rows.iter()
            .map(|r| joined(r.missing.iter().map(|m| m.name()))),
    );
    t.number("debt_to_equity", rows.iter().map(|r| r.debt_to_equity));
    t.number("debt_beta", rows.iter().map(|r| Some(r.debt_beta)));
    t.number("unlevered_beta", rows.iter().map(|r| r.unlevered_beta));
    t.number("operating_share", rows.iter().map(|r| r.operating_share));
    t.number("operations_beta", rows.iter().map(|r| r.operations_beta));
    t.text(
        "unlevering_issue",
        rows.iter().map(|r| r.unlevering_issue.map(str::to_string)),
    );
}

/// The statistics of one summary under a column prefix (`beta`, `unlevered_beta`, …).
fn summary_columns(
    t: &mut Table,
    rows: &[IndustryResult],
    (stem, value_weighted): (&str, bool),
    pick: fn(&IndustryResult) -> Option<&Summary>,
) {
    let d = |f: fn(&Summary) -> f64| rows.iter().map(move |r| pick(r).map(f));
    t.count(
        &format!("{stem}_count"),
        rows.iter()
            .map(|r| Some(pick(r).map_or(0, |s| s.dispersion.count))),
    );
    t.number(&format!("median_{stem}"), d(|s| s.dispersion.median));
    // The median's distribution-free 95% interval: empty below six values.
    for (end, side) in [("low", 0), ("high", 1)] {
        t.number(
            &format!("median_{stem}_ci_{end}"),
            rows.iter()
                .map(move |r| pick(r).and_then(|s| s.median_interval.map(|i| i[side]))),
        );
    }
    t.number(&format!("mean_{stem}"), d(|s| s.dispersion.mean));
    t.number(
        &format!("market_cap_weighted_{stem}"),
        rows.iter()
            .map(|r| pick(r).and_then(|s| s.market_cap_weighted_mean)),
    );
    t.count(
        &format!("market_cap_weighted_{stem}_count"),
        rows.iter()
            .map(|r| Some(pick(r).map_or(0, |s| s.market_cap_weighted_count))),
    );
    t.number(
        &format!("market_cap_weighted_{stem}_effective_count"),
        rows.iter()
            .map(|r| pick(r).and_then(|s| s.market_cap_weighted_effective_count)),
    );
    if value_weighted {
        t.number(
            &format!("value_weighted_{stem}"),
            rows.iter()
                .map(|r| pick(r).and_then(|s| s.value_weighted_mean)),
        );
    }
    t.number(&format!("trimmed_mean_{stem}"), d(|s| s.trimmed_mean));
    t.number(
        &format!("lower_quartile_{stem}"),
        d(|s| s.dispersion.lower_quartile),
    );
    t.number(
        &format!("upper_quartile_{stem}"),
        d(|s| s.dispersion.upper_quartile),
    );
    t.number(&format!("min_{stem}"), d(|s| s.dispersion.min));
    t.number(&format!("max_{stem}"), d(|s| s.dispersion.max));
    // A sample standard deviation needs two values; with one, the cell is empty (as the
    // result's null).
    t.number(
        &format!("std_dev_{stem}"),
        rows.iter()
            .map(move |r| pick(r).and_then(|s| s.dispersion.std_dev)),
    );
}

/// `industries.csv`: counts, levered and unlevered betas by every statistic, the D/E.
fn industries_frame(rows: &[IndustryResult], adjusted: bool) -> Result<DataFrame> {
    let mut t = Table::new(rows.len());
    t.text("industry", rows.iter().map(|r| Some(r.industry.clone())));
    t.count("securities", rows.iter().map(|r| Some(r.securities)));
    t.count("estimated", rows.iter().map(|r| Some(r.estimated)));
    t.count("excluded", rows.iter().map(|r| Some(r.excluded_total)));
    for flag in crate::universe::FLAGS {
        t.count(
            &format!("excluded_{}", flag.name()),
            rows.iter().map(|r| r.excluded.get(flag.name()).copied()),
        );
    }
    t.count("flagged", rows.iter().map(|r| Some(r.flagged_total)));
    for flag in crate::universe::FLAGS {
        t.count(
            &format!("flagged_{}", flag.name()),
            rows.iter().map(|r| r.flagged.get(flag.name()).copied()),
        );
    }
    t.count(
        "not_estimated",
        rows.iter().map(|r| Some(r.not_estimated_total)),
    );
    for reason in crate::universe::estimate::NotEstimated::ALL {
        t.count(
            &format!("not_estimated_{}", reason.name()),
            rows.iter()
                .map(|r| r.not_estimated.get(reason.name()).copied()),
        );
    }
    summary_columns(&mut t, rows, ("beta", false), |r| r.levered.as_ref());
    if adjusted {
        summary_columns(&mut t, rows, ("shrunk_beta", false), |r| r.shrunk.as_ref());
    }
    t.number(
        "median_debt_to_equity",
        rows.iter().map(|r| r.median_debt_to_equity),
    );
    t.number(
        "aggregate_debt_to_equity",
        rows.iter().map(|r| r.aggregate_debt_to_equity),
    );
    t.number("median_tax_rate", rows.iter().map(|r| r.median_tax_rate));
    summary_columns(&mut t, rows, ("unlevered_beta", true), |r| {
        r.unlevered.as_ref()
    });
    summary_columns(&mut t, rows, ("operations_beta", true), |r| {
        r.operations.as_ref()
    });
    t.number("unlevered_beta", rows.iter().map(|r| r.unlevered_beta));
    t.finish()
}

/// `rolling.csv`: one row per security and rolling window.
fn rolling_frame(result: &UniverseResult) -> Result<DataFrame> {
    let points: Vec<(&str, &crate::beta::rolling::RollingPoint)> = result
        .securities
        .iter()
        .zip(&result.rolling)
        .flat_map(|(s, points)| points.iter().map(move |p| (s.security.as_str(), p)))
        .collect();
    let mut t = Table::new(points.len());
    t.text("security", points.iter().map(|(s, _)| Some(s.to_string())));
    t.text(
        "window_end",
        points.iter().map(|(_, p)| Some(p.window_end.to_string())),
    );
    t.number("beta", points.iter().map(|(_, p)| Some(p.beta)));
    t.number("std_error", points.iter().map(|(_, p)| Some(p.std_error)));
    t.count(
        "observations",
        points.iter().map(|(_, p)| Some(p.observations)),
    );
    t.finish()
}
