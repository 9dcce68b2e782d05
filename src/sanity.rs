//! Sanity rules: the checks a reviewer applies before trusting a figure, applied by the program.
//!
//! A file can parse and every key lie in its range and the result still be nonsense: yields
//! typed as percentages, a price with a few digits too many, a peer that is the index itself, a
//! balance sheet that makes D/E infinite, NaN in a key nobody reads. Each rule here refuses such
//! input with a message naming the file and line or the key, and the value, or bounds work that
//! would otherwise run for hours. The thresholds are the constants below, stated with their
//! reasons in README's "Error handling" section. The functions take plain values, the case or
//! the inputs, and each is called from one place in the reading or valuation code; the text
//! checks (CSV shape, TOML values with their lines) are in [`text`].

pub mod text;

use std::path::Path;

use crate::beta::BetaEstimate;
use crate::case::{Case, CaseDate, CaseFile, DebtSource, TargetSource};
use crate::data::{DataFile, Series, ValueKind};
use crate::error::{Error, Result};
use crate::format::compact as show;
use crate::valuation::{Inputs, Valuation};

pub use text::{check_case_text, check_claimed_text, check_csv_shape};

/// Most Monte Carlo draws: about five seconds on one core. On the demo case the median's own
/// sampling error (1.2533·σ/√n, the asymptotic SE of a sample median) is 0.1 bp of WACC at a
/// tenth of this and 0.03 bp at it; more draws only cost time.
pub const MAX_DRAWS: u32 = 1_000_000;
/// Most return periods, lags or window lengths: four centuries of daily data.
pub const MAX_PERIODS: u32 = 100_000;
/// Highest D/E of a peer, the target or the subject: debt above 10/11 of capital, where equity
/// is an option on distressed assets and no leverage formula's assumptions hold.
pub const MAX_DEBT_TO_EQUITY: f64 = 10.0;
/// Highest weight of preferred equity or of leases: above half of capital they are the main
/// financing, not an addition to a structure of equity and debt.
pub const MAX_COMPONENT_WEIGHT: f64 = 0.5;
/// A price that moves by more than this factor between two consecutive rows (up, or down to
/// less than its inverse) is an error unless the case accepts the date: a simple return above
/// +200% or below −66.7%, the same log move either way.
pub const JUMP_FACTOR: f64 = 3.0;
/// A peer whose returns the index explains to more than this R² is the index (or a copy).
pub const MAX_R_SQUARED: f64 = 0.999;
/// A risk-free series whose median yield exceeds this multiple of `market.risk_free_rate`
/// (at least 1%) is taken for percentages.
pub const YIELD_RATIO: f64 = 10.0;
/// Years a case date may lie in: the calendar arithmetic is exercised there, and no market
/// data is older.
pub const YEARS: (i32, i32) = (1800, 2199);
/// Largest relative tolerance of `verify`: looser, it stops being a reproduction check.
pub const MAX_TOLERANCE: f64 = 1e-6;

/// Range checks on a whole case (after overrides) that its keys' own ranges do not cover.
/// Called first by `case::validate`, so a non-finite value is named before any arithmetic.
pub fn check_case(case: &CaseFile) -> std::result::Result<(), String> {
    let table = toml::Value::try_from(case).map_err(|e| e.to_string())?;
    if let Some((key, value)) = text::first_non_finite(&table, String::new()) {
        return Err(format!("{key} = {value}: {}", text::NOT_A_NUMBER));
    }
    check_paths(case)?;
    check_dates(case)?;
    check_counts(case)?;
    check_structure(case)?;
    for (key, weight) in [
        ("preferred.weight", case.preferred.weight),
        ("leases.weight", case.leases.weight),
    ] {
        if weight > MAX_COMPONENT_WEIGHT {
            let weight = show(weight);
            return Err(format!(
                "{key} = {weight} is above {MAX_COMPONENT_WEIGHT}: a component that large is the \
                 main financing; model it as debt or equity"
            ));
        }
    }
    Ok(())
}

fn check_paths(case: &CaseFile) -> std::result::Result<(), String> {
    let mut paths = vec![("market.index.prices".to_string(), &case.market.index.prices)];
    if let Some(series) = &case.market.risk_free_series {
        paths.push(("market.risk_free_series.yields".into(), &series.yields));
    }
    for (i, peer) in case.peers.iter().enumerate() {
        paths.push((
            format!("peer.{i}.prices (peer \"{}\")", peer.name),
            &peer.prices,
        ));
    }
    match case.debt.source {
        DebtSource::Given => {}
        DebtSource::Rating => paths.extend(
            case.debt
                .rating_table
                .iter()
                .map(|t| ("debt.rating_table".to_string(), t)),
        ),
        DebtSource::Coverage => paths.extend(
            case.debt
                .coverage_table
                .iter()
                .map(|t| ("debt.coverage_table".to_string(), t)),
        ),
    }
    if let Some(reconcile) = &case.reconcile {
        paths.push(("reconcile.claimed".into(), &reconcile.claimed));
    }
    match paths.iter().find(|(_, path)| path.trim().is_empty()) {
        Some((key, _)) => Err(format!("{key} = \"\" is empty: give the path of the file")),
        None => Ok(()),
    }
}

fn check_dates(case: &CaseFile) -> std::result::Result<(), String> {
    use chrono::Datelike;
    let beta = &case.beta;
    let dates = [
        ("case.valuation_date", Some(case.case.valuation_date)),
        ("beta.window_start", beta.window_start),
        ("beta.window_end", beta.window_end),
    ];
    for (key, date) in dates {
        if let Some(CaseDate(date)) = date {
            if !(YEARS.0..=YEARS.1).contains(&date.year()) {
                return Err(format!(
                    "{key} = {date} is outside the years {} to {}",
                    YEARS.0, YEARS.1
                ));
            }
        }
    }
    Ok(())
}

fn check_counts(case: &CaseFile) -> std::result::Result<(), String> {
    let beta = &case.beta;
    let counts = [
        ("beta.min_observations", Some(beta.min_observations)),
        ("beta.dimson_lags", Some(beta.dimson_lags)),
        ("beta.dimson_leads", Some(beta.dimson_leads)),
        ("beta.newey_west_lags", beta.newey_west_lags),
        ("beta.rolling_window", beta.rolling_window),
        ("beta.rolling_step", Some(beta.rolling_step)),
        (
            "beta.rolling_min_observations",
            beta.rolling_min_observations,
        ),
    ];
    for (key, count) in counts {
        if let Some(n) = count.filter(|&n| n > MAX_PERIODS) {
            return Err(format!(
                "{key} = {n} is more than any price history holds; at most {MAX_PERIODS}"
            ));
        }
    }
    if let Some(start) = beta.window_start {
        let periods = beta.lookback_periods(case.case.valuation_date.0);
        if periods > MAX_PERIODS {
            return Err(format!(
                "beta.window_start = {start} gives {periods} return periods; at most {MAX_PERIODS}"
            ));
        }
    }
    let draws = case.uncertainty.draws;
    if draws > MAX_DRAWS {
        return Err(format!(
            "uncertainty.draws = {draws} is above {MAX_DRAWS}: that many draws would run for \
             minutes to hours without changing the percentiles it reports"
        ));
    }
    Ok(())
}

/// D/E of the target, the subject and every peer at most [`MAX_DEBT_TO_EQUITY`]; a peer's cash
/// below its equity plus debt.
fn check_structure(case: &CaseFile) -> std::result::Result<(), String> {
    let too_high = |what: String, de: f64| {
        let de = significant(de);
        format!(
            "{what} gives D/E = {de}, above {MAX_DEBT_TO_EQUITY} (debt over 10/11 of capital): \
             no leverage formula holds there; check the figures and their units"
        )
    };
    let target = &case.target;
    if let Some(de) = target.debt_to_equity.filter(|&de| de > MAX_DEBT_TO_EQUITY) {
        return Err(too_high(
            format!("target.debt_to_equity = {}", show(de)),
            de,
        ));
    }
    if let Some(dc) = target
        .debt_to_capital
        .filter(|&dc| (0.0..1.0).contains(&dc))
    {
        let de = dc / (1.0 - dc);
        if de > MAX_DEBT_TO_EQUITY {
            return Err(too_high(
                format!("target.debt_to_capital = {}", show(dc)),
                de,
            ));
        }
    }
    let measure = case.leverage.debt_measure;
    if let (TargetSource::Subject, Some(equity), Some(debt)) = (
        target.source,
        target.subject_equity_value.filter(|&e| e > 0.0),
        target.subject_debt,
    ) {
        let de = measure.debt(debt, target.subject_cash.unwrap_or(0.0)) / equity;
        if de > MAX_DEBT_TO_EQUITY {
            return Err(too_high(
                format!(
                    "target.subject_debt = {} over target.subject_equity_value = {}",
                    show(debt),
                    show(equity)
                ),
                de,
            ));
        }
    }
    for (i, peer) in case.peers.iter().enumerate() {
        if peer.equity_value <= 0.0 || peer.debt < 0.0 || peer.cash < 0.0 {
            continue; // `validate` names these with its own message.
        }
        let de = measure.debt(peer.debt, peer.cash) / peer.equity_value;
        if de > MAX_DEBT_TO_EQUITY {
            return Err(too_high(
                format!(
                    "peer.{i} (peer \"{}\"): debt = {} over equity_value = {}",
                    peer.name,
                    show(peer.debt),
                    show(peer.equity_value)
                ),
                de,
            ));
        }
        if peer.cash >= peer.equity_value + peer.debt {
            return Err(format!(
                "peer.{i}.cash = {} (peer \"{}\") is not below equity_value + debt = {}: the firm \
                 is valued at less than its cash, so its beta says nothing about operating assets",
                show(peer.cash),
                peer.name,
                show(peer.equity_value + peer.debt)
            ));
        }
    }
    Ok(())
}

/// When `beta.window_start` is given it sets the window and `beta.lookback` is not used; the
/// run says so (a case file that writes both is refused by [`check_case_text`]).
pub fn window_note(beta: &crate::case::BetaSettings) -> Option<String> {
    beta.window_start.map(|start| {
        format!(
            "beta.window_start = {start} sets the start of the window; beta.lookback ({}) is not \
             used.",
            beta.lookback
        )
    })
}

/// Yields written as percentages: any yield of 1 (100% a year) or more. Called by
/// `data::parse_series` on every series it reads; `value_column` names the column.
pub fn check_series_values(
    file: &Path,
    value_column: &str,
    series: &Series,
    kind: ValueKind,
) -> Result<()> {
    if kind != ValueKind::Yield {
        return Ok(());
    }
    match series.values.iter().position(|&y| y >= 1.0) {
        Some(i) => Err(Error::DataRow {
            file: file.to_path_buf(),
            line: i + 2,
            message: format!(
                "`{value_column}` = {} on {} is {}% a year: yields are decimals (0.038 for 3.8%), \
                 and this looks like a percentage; divide the column by 100",
                show(series.values[i]),
                series.dates[i],
                show(series.values[i] * 100.0)
            ),
        }),
        None => Ok(()),
    }
}

/// Checks across the files a case read: price jumps (unless accepted), a peer whose data are
/// the index's or another peer's, and a yield file far above the case's own rate. Called at the
/// end of `valuation::load_inputs`.
pub fn check_inputs(inputs: &Inputs) -> Result<()> {
    let settings = &inputs.case.settings;
    let index_file = inputs.case.resolve(&inputs.index.path);
    check_jumps(
        &index_file,
        "market.index",
        &inputs.index,
        &settings.market.index.accept_jumps,
    )?;
    for (i, (peer, file)) in settings.peers.iter().zip(&inputs.peers).enumerate() {
        let key = format!("peer.{i}");
        check_jumps(
            &inputs.case.resolve(&file.path),
            &key,
            file,
            &peer.accept_jumps,
        )?;
        let same_as = |other: &DataFile| other.series == file.series;
        let duplicate = if same_as(&inputs.index) {
            Some(format!("the index's ({})", inputs.index.path))
        } else {
            inputs.peers[..i].iter().position(same_as).map(|j| {
                format!(
                    "peer.{j}'s ({}, peer \"{}\")",
                    inputs.peers[j].path, settings.peers[j].name
                )
            })
        };
        if let Some(other) = duplicate {
            return Err(Error::Case {
                file: inputs.case.path.clone(),
                message: format!(
                    "{key}.prices = \"{}\" (peer \"{}\") holds the same dates and prices as \
                     {other}: a peer's price file must be the peer's own",
                    file.path, peer.name
                ),
            });
        }
    }
    if let Some(yields) = &inputs.risk_free {
        let median = crate::stats::dispersion(&yields.series.values).median;
        let rate = settings.market.risk_free_rate;
        if median > YIELD_RATIO * rate.abs().max(0.01) {
            return Err(Error::DataFile {
                file: inputs.case.resolve(&yields.path),
                message: format!(
                    "the median yield {} is more than {YIELD_RATIO} times \
                     market.risk_free_rate = {}: the file looks like percentages (0.5 for \
                     0.5%); yields are decimals (0.005)",
                    show(median),
                    show(rate)
                ),
            });
        }
    }
    Ok(())
}

/// A move by more than [`JUMP_FACTOR`] between consecutive rows, unless its date is accepted.
fn check_jumps(path: &Path, key: &str, file: &DataFile, accepted: &[CaseDate]) -> Result<()> {
    let (dates, prices) = (&file.series.dates, &file.series.values);
    for i in 1..prices.len() {
        let ratio = prices[i] / prices[i - 1];
        let plausible = (1.0 / JUMP_FACTOR..=JUMP_FACTOR).contains(&ratio);
        if plausible || accepted.iter().any(|d| d.0 == dates[i]) {
            continue;
        }
        return Err(Error::DataRow {
            file: path.to_path_buf(),
            line: i + 2,
            message: format!(
                "price {} on {} after {} on {} (line {}) moves by a factor of {}, beyond the \
                 plausibility bound of {JUMP_FACTOR} up or down between two rows; fix the price, \
                 or if the move is real accept it with {key}.accept_jumps = [\"{}\"]",
                show(prices[i]),
                dates[i],
                show(prices[i - 1]),
                dates[i - 1],
                i + 1,
                significant(ratio),
                dates[i]
            ),
        });
    }
    Ok(())
}

/// The index must have at least `min_observations` returns in the window, and they must vary;
/// called by `valuation::value_case` before any peer, so a short or flat index is blamed on the
/// index file, not on the first peer.
pub fn check_index_returns(case: &Case, index: &DataFile, returns: &[Option<f64>]) -> Result<()> {
    let min_observations = case.settings.beta.min_observations;
    let fail = |message: String| {
        Err(Error::DataFile {
            file: case.resolve(&index.path),
            message,
        })
    };
    let present: Vec<f64> = returns.iter().flatten().copied().collect();
    if present.len() < min_observations as usize {
        return fail(format!(
            "{} of the window's {} periods have an index return, fewer than \
             beta.min_observations = {min_observations}; its prices run from {} to {}",
            present.len(),
            returns.len(),
            index.first_date,
            index.last_date
        ));
    }
    if present.iter().all(|&r| r == present[0]) {
        return fail(format!(
            "the index's {} returns in the window are all {}: an index with zero variance \
             measures no beta",
            present.len(),
            show(present[0])
        ));
    }
    Ok(())
}

/// One peer's estimate: its own returns must vary, the index must not explain them almost
/// perfectly (a copy of the index), and every statistic must be finite.
pub fn check_peer_fit(
    asset_returns: &[f64],
    estimate: &BetaEstimate,
    index_path: &str,
) -> std::result::Result<(), String> {
    if asset_returns.iter().all(|&r| r == asset_returns[0]) {
        return Err(format!(
            "its {} returns in the window are all {}: a price that never moves has zero \
             variance, and its beta of 0 carries no information",
            asset_returns.len(),
            show(asset_returns[0])
        ));
    }
    if estimate.r_squared > MAX_R_SQUARED {
        return Err(format!(
            "the index ({index_path}) explains its returns with R² = {} (above {MAX_R_SQUARED}): \
             the price file is the index or a copy of it",
            show(estimate.r_squared)
        ));
    }
    let figures = [
        ("alpha", estimate.alpha),
        ("beta", estimate.beta),
        ("beta_std_error", estimate.beta_std_error),
        ("beta_t_stat", estimate.beta_t_stat),
        ("beta_p_value", estimate.beta_p_value),
        ("r_squared", estimate.r_squared),
    ];
    match figures.iter().find(|(_, v)| !v.is_finite()) {
        Some((name, value)) => Err(format!("the regression gives {name} = {}", show(*value))),
        None => Ok(()),
    }
}

/// No output may hold a non-finite number: the last guard, called on every result before it
/// is rendered (by `valuation::value` and `audit::evaluate`).
pub fn check_finite_figures(valuation: &Valuation) -> Result<()> {
    let tree = minijinja::Value::from(minijinja::value::Serde(valuation));
    if let Some((path, value)) = text::first_non_finite_in(&tree, String::new()) {
        return Err(Error::NonFinite { path, value });
    }
    for (i, aligned) in valuation.returns.iter().enumerate() {
        let columns = [&aligned.asset, &aligned.market];
        if let Some(value) = columns
            .iter()
            .flat_map(|c| c.iter())
            .find(|v| !v.is_finite())
        {
            return Err(Error::NonFinite {
                path: format!("returns of peers[{i}]"),
                value: *value,
            });
        }
    }
    for (i, points) in valuation.rolling.iter().enumerate() {
        if let Some(p) = points
            .iter()
            .find(|p| !(p.beta.is_finite() && p.std_error.is_finite()))
        {
            return Err(Error::NonFinite {
                path: format!("rolling beta of peers[{i}] ending {}", p.window_end),
                value: if p.beta.is_finite() {
                    p.std_error
                } else {
                    p.beta
                },
            });
        }
    }
    Ok(())
}

/// A grid may not put the same key on both axes: one of them would be silently overridden.
pub fn check_axes(rows_key: &str, columns_key: &str) -> Result<()> {
    if rows_key == columns_key {
        return Err(Error::Argument {
            option: format!("grid axes {rows_key} and {columns_key}"),
            message: "the same key on both axes: the column value would replace the row value in \
                      every cell; give two different keys"
                .into(),
        });
    }
    Ok(())
}

/// The range `implied` searches for the case key `key` must lie inside the values the case
/// accepts for that key (for the relevered beta, [−5, 10]).
pub fn check_search_range(key: &str, low: f64, high: f64) -> Result<()> {
    let (least, most) = match key {
        "debt.cost_pre_tax" => (0.0, 1.0),
        "target.debt_to_equity" => (0.0, MAX_DEBT_TO_EQUITY),
        "target.debt_to_capital" => (0.0, MAX_DEBT_TO_EQUITY / (1.0 + MAX_DEBT_TO_EQUITY)),
        "relevered beta" => (-5.0, 10.0),
        _ => (-0.5, 1.0),
    };
    if low < least || high > most {
        return Err(Error::Argument {
            option: format!("--range {}..{}", show(low), show(high)),
            message: format!("{key} can only lie in [{least}, {most}]; search inside it"),
        });
    }
    Ok(())
}

/// A claimed WACC (or any rate given on the command line) must be a finite decimal in
/// [−0.5, 1); 9.1 is taken for a percentage.
pub fn check_rate_argument(text: &str) -> std::result::Result<f64, String> {
    let value: f64 = text
        .trim()
        .parse()
        .map_err(|_| format!("`{text}` is not a number"))?;
    if !value.is_finite() {
        return Err(format!("{value} is not a finite number"));
    }
    if !(-0.5..1.0).contains(&value) {
        return Err(format!(
            "{} is outside [-0.5, 1): rates are decimals (0.091 for 9.1%)",
            show(value)
        ));
    }
    Ok(value)
}

/// `verify --tolerance`: a finite relative tolerance in [0, [`MAX_TOLERANCE`]].
pub fn check_tolerance(text: &str) -> std::result::Result<f64, String> {
    let value: f64 = text
        .trim()
        .parse()
        .map_err(|_| format!("`{text}` is not a number"))?;
    if !(value.is_finite() && (0.0..=MAX_TOLERANCE).contains(&value)) {
        return Err(format!(
            "{} is not a relative tolerance in [0, {MAX_TOLERANCE:e}]: a reproduction \
             agrees to the last digit (0) or to rounding on another platform (the default 1e-12)",
            show(value)
        ));
    }
    Ok(value)
}

/// A derived ratio to four significant digits (exponent form when very large or small): the
/// message needs its size, not its last bits.
fn significant(value: f64) -> String {
    let magnitude = value.abs();
    if magnitude == 0.0 || !magnitude.is_finite() || (1e-3..1e6).contains(&magnitude) {
        format!("{}", (value * 1e4).round() / 1e4)
    } else {
        format!("{value:.3e}")
    }
}
