//! Sanity rules on what was read and what was computed: price jumps a case has not accepted,
//! risk-free yields that look like percentages, a flat index or peer, a peer that is the index
//! (R² above 0.999), the last guard that no figure of the result is NaN or infinite, and the
//! bounds of the reviewer commands' arguments. Thresholds and reasons: README, "Error handling".

use chrono::NaiveDate;
use std::path::Path;

use super::{Inputs, Valuation};
use crate::case::sanity::prices::proportional;
use crate::case::sanity::significant;
use crate::case::sanity::{
    implausible_move, text, JUMP_FACTOR, MAX_DEBT_TO_EQUITY, MAX_R_SQUARED, MAX_TOLERANCE,
    YIELD_RATIO,
};
use crate::case::{Case, CaseDate};
use crate::error::{compact as show, Error, Result};
use crate::estimate::SecurityEstimate;
use crate::io::series::DataFile;

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
        check_copied_peer(inputs, i)?;
    }
    if let Some(yields) = &inputs.risk_free {
        // The more specific finding first: a switch of units partway also moves the median.
        check_yield_switch(&inputs.case.resolve(&yields.path), yields)?;
    }
    check_rate_against_yields(&inputs.case, inputs)
}

/// Refuses peer `i` when its series is the index's, the risk-free series', or an earlier
/// peer's, or an earlier peer's times one factor on every date both have (a copy rescaled: a
/// listing at a fixed rate, pence for pounds; found by review), naming both files.
fn check_copied_peer(inputs: &Inputs, i: usize) -> Result<()> {
    let settings = &inputs.case.settings;
    let (peer, file) = (&settings.peers[i], &inputs.peers[i]);
    let key = format!("peer.{i}");
    let same_as = |other: &DataFile| other.series == file.series;
    let duplicate = if same_as(&inputs.index) {
        Some(format!(
            "the index's ({})",
            named("market.index", &inputs.index)
        ))
    } else if let Some(yields) = inputs.risk_free.as_ref().filter(|y| same_as(y)) {
        // The risk-free yields taken for a peer (a wide table's yield column left among
        // the peers): its "beta" would be that of a yield.
        Some(format!(
            "the risk-free series' ({})",
            named_as("market.risk_free_series", "yields", yields)
        ))
    } else {
        inputs.peers[..i].iter().position(same_as).map(|j| {
            format!(
                "peer.{j}'s ({}, peer \"{}\")",
                named(&format!("peer.{j}"), &inputs.peers[j]),
                settings.peers[j].name
            )
        })
    };
    if let Some(other) = duplicate {
        return Err(Error::Case {
            file: inputs.case.path.clone(),
            message: format!(
                "{} (peer \"{}\") holds the same dates and prices as {other}: a peer's \
                 series must be the peer's own",
                named(&key, file),
                peer.name
            ),
        });
    }
    // A copy rescaled (another listing at a fixed rate, pence for pounds): the same returns,
    // so one firm counted twice (found by review).
    let scaled = (inputs.peers[..i].iter().enumerate()).find_map(|(j, other)| {
        let (a, b) = (&other.series, &file.series);
        let found = proportional((&a.dates, &a.values), (&b.dates, &b.values))?;
        Some((j, found))
    });
    if let Some((j, (factor, shared))) = scaled {
        return Err(Error::Case {
            file: inputs.case.path.clone(),
            message: format!(
                "{} (peer \"{}\") holds peer.{j}'s prices ({}, peer \"{}\"){} on every \
                 one of the {shared} dates both have: the same returns, so the same firm \
                 counted twice; a peer's series must be the peer's own (another listing of \
                 one firm, in another currency or unit, is one peer)",
                named(&key, file),
                peer.name,
                named(&format!("peer.{j}"), &inputs.peers[j]),
                settings.peers[j].name,
                match (factor - 1.0).abs() <= 1e-4 {
                    true => String::new(),
                    false => format!(" times {}", significant(factor)),
                }
            ),
        });
    }
    Ok(())
}

/// A series in a message: a wide table's by its column, a file of its own by its path.
fn named(key: &str, f: &DataFile) -> String {
    named_as(key, "prices", f)
}

/// [`named`] for a key whose file is given under `field` (the risk-free series' `yields`;
/// found by review: it was named `.prices`, a key that does not exist).
fn named_as(key: &str, field: &str, f: &DataFile) -> String {
    match f.places.is_empty() {
        true => format!("{key}.{field} = \"{}\"", f.path),
        false => format!("{key}.column = \"{}\" of {}", f.column, f.path),
    }
}

/// Refuses a risk-free series whose median is more than [`YIELD_RATIO`] times `case`'s
/// `market.risk_free_rate` (percentages read as decimals). Checked when the inputs are loaded
/// and again for every what-if (a grid cell, an `implied` step), whose rate may differ from the
/// case's: found by review, a grid cell and an implied step gave a figure for a rate that
/// `hurdle run --set` refuses.
pub fn check_rate_against_yields(case: &Case, inputs: &Inputs) -> Result<()> {
    let (Some(yields), Some(median)) = (&inputs.risk_free, inputs.risk_free_median) else {
        return Ok(());
    };
    let rate = case.settings.market.risk_free_rate;
    if median > YIELD_RATIO * rate.abs().max(0.01) {
        return Err(Error::DataFile {
            file: inputs.case.resolve(&yields.path),
            message: format!(
                "the median yield {} is more than {YIELD_RATIO} times \
                 market.risk_free_rate = {}: either the file holds percentages (0.5 for 0.5%; \
                 yields are decimals, 0.005) or the rate is far below the series",
                show(median),
                show(rate)
            ),
        });
    }
    Ok(())
}

/// A yield that moves by more than this factor between two rows, and by more than
/// [`YIELD_SWITCH_POINTS`], has changed units, not level.
const YIELD_SWITCH_FACTOR: f64 = 10.0;
/// Ten percentage points in one row: with a tenfold move, from at most 1.1% to at least 11%
/// (or back), which no government yield has done from one period to the next outside a
/// currency's collapse; a series written in decimals that goes on in percentages below 1 (0.031,
/// then 0.5 for 0.5%) does it. hurdle's bound, not a published one.
const YIELD_SWITCH_POINTS: f64 = 0.10;

/// A yield series that switches units partway (decimals, then percentages that stay below 1,
/// which the 100% bound cannot see), named at the first row of the switch.
fn check_yield_switch(path: &Path, file: &DataFile) -> Result<()> {
    let (dates, values) = (&file.series.dates, &file.series.values);
    let switch = (1..values.len()).find(|&i| {
        let (before, now) = (values[i - 1], values[i]);
        let (low, high) = (before.abs().min(now.abs()), before.abs().max(now.abs()));
        (now - before).abs() > YIELD_SWITCH_POINTS && high > YIELD_SWITCH_FACTOR * low
    });
    let Some(i) = switch else {
        return Ok(());
    };
    let message = format!(
        "yield {} on {} after {} on {} moves by {} percentage points in one row, more than \
         tenfold: the series looks like decimals and percentages mixed (0.5 for 0.5% after \
         0.031 for 3.1%); yields are decimals throughout",
        show(values[i]),
        dates[i],
        show(values[i - 1]),
        dates[i - 1],
        crate::error::rounded((values[i] - values[i - 1]).abs() * 100.0, 2)
    );
    Err(at_value(path, file, i, message))
}

/// An error at value `i` of `file`: its cell in a wide table, or its line in a file of its own
/// (value i on line i + 2).
fn at_value(path: &Path, file: &DataFile, i: usize, message: String) -> Error {
    match file.places.get(i) {
        Some(place) => Error::DataFile {
            file: path.to_path_buf(),
            message: format!("{place}: {message}"),
        },
        None => Error::DataRow {
            file: path.to_path_buf(),
            line: i + 2,
            message,
        },
    }
}

/// A move by more than [`JUMP_FACTOR`] between consecutive rows, unless its date is accepted.
pub(crate) fn check_jumps(
    path: &Path,
    key: &str,
    file: &DataFile,
    accepted: &[CaseDate],
) -> Result<()> {
    let (dates, prices) = (&file.series.dates, &file.series.values);
    for i in 1..prices.len() {
        let ratio = prices[i] / prices[i - 1];
        let plausible = !implausible_move(prices[i - 1], prices[i]);
        if plausible || accepted.iter().any(|d| d.0 == dates[i]) {
            continue;
        }
        // A file of its own has value i on line i + 2; a wide table names each value's cell.
        let previous = match file.places.get(i - 1) {
            Some(place) => place.clone(),
            None => format!("line {}", i + 1),
        };
        // A fall is said as a share of the price before it (a quarter: an unadjusted split).
        let moved = if ratio < 1.0 {
            format!(
                "falls to {}% of it (a factor of {}; an unadjusted split or a misplaced decimal \
                 point?)",
                significant(ratio * 100.0),
                significant(ratio)
            )
        } else {
            format!("moves by a factor of {}", significant(ratio))
        };
        let message = format!(
            "price {} on {} after {} on {} ({previous}) {moved}, beyond the plausibility bound \
             of {JUMP_FACTOR} up or down between two rows; fix the price (use prices adjusted \
             for splits), or if the move is real accept it with {key}.accept_jumps = [\"{}\"]",
            show(prices[i]),
            dates[i],
            show(prices[i - 1]),
            dates[i - 1],
            dates[i]
        );
        return Err(at_value(path, file, i, message));
    }
    Ok(())
}

/// The index must have at least `min_observations` returns in the window, and they must vary;
/// called by `valuation::value_case` before any peer, so a short or flat index is blamed on the
/// index file, not on the first peer.
pub fn check_index_returns(
    case: &Case,
    index: &DataFile,
    returns: &[Option<f64>],
    (start, end): (NaiveDate, NaiveDate),
) -> Result<()> {
    let min_observations = case.settings.beta.min_observations;
    let fail = |message: String| {
        Err(Error::DataFile {
            file: case.resolve(&index.path),
            message,
        })
    };
    let present: Vec<f64> = returns.iter().flatten().copied().collect();
    // As a peer's (`check_peer_fit`), named by the index's file (found by review: an accepted
    // index jump left "regressor column 1 is all zeros or not finite").
    let largest = present
        .iter()
        .copied()
        .max_by(|a, b| a.abs().total_cmp(&b.abs()));
    if let Some(r) = largest.filter(|r| r.abs() > MAX_RETURN) {
        return fail(format!(
            "its return of {} in the window is too large for a regression to square and sum in \
             double precision (above {}); check the prices around a jump accepted with \
             market.index.accept_jumps",
            show(r),
            show(MAX_RETURN)
        ));
    }
    if present.len() < min_observations as usize {
        // The keys that set the window's ends, as the case gives them (found by review: a
        // window set by beta.window_end was put down to the valuation date).
        let beta = &case.settings.beta;
        let end_key = match beta.window_end {
            Some(_) => "beta.window_end",
            None => "case.valuation_date",
        };
        let start_key = match beta.window_start {
            Some(_) => "beta.window_start",
            None => "the window's length (beta.lookback)",
        };
        // Prices around the whole window but too few returns: too sparse for the frequency.
        let what_to_do = match index.first_date <= start && index.last_date >= end {
            true => "the prices cover the window but too sparsely for these returns: a lower \
                     beta.frequency fits them"
                .to_string(),
            false => format!(
                "move {end_key}, or {}, so that the window lies inside them",
                match beta.window_start {
                    Some(_) => "move beta.window_start",
                    None => "shorten beta.lookback",
                }
            ),
        };
        return fail(format!(
            "{} of the window's {} periods ({start} to {end}, set by {end_key} and \
             {start_key}) have an index return, fewer than beta.min_observations = \
             {min_observations}; its prices run from {} to {}: {what_to_do}",
            present.len(),
            returns.len(),
            index.first_date,
            index.last_date
        ));
    }
    match flat_index_message(&present) {
        Some(message) => fail(message),
        None => Ok(()),
    }
}

/// Why an index whose returns in the window (`present`, the ones it has) are all the same to
/// rounding measures no beta; `None` when they vary. A case's and a universe's words.
pub fn flat_index_message(present: &[f64]) -> Option<String> {
    crate::market::sampling::constant_up_to_rounding(present).then(|| {
        format!(
            "the index's {} returns in the window are all {} (to the rounding of computing \
             them): an index with zero variance measures no beta",
            present.len(),
            // Rounded to 12 decimals, and 0 rather than −0.
            show((present[0] * 1e12).round() / 1e12 + 0.0)
        )
    })
}

/// One peer's estimate: its own returns must vary, its prices must not be the index's on every
/// date both have (`same_prices`, from [`crate::estimate::same_prices_as_index`]), the index must
/// not explain them almost perfectly (a copy of the index), and every statistic must be finite.
pub fn check_peer_fit(
    estimated: &SecurityEstimate,
    (index_path, same_prices): (&str, Option<usize>),
    peer_path: &str,
) -> std::result::Result<(), String> {
    if let Some(reason) = estimated.constant_price() {
        return Err(reason);
    }
    if let Some(shared) = same_prices {
        return Err(format!(
            "its prices equal the index's ({index_path}) on all {shared} dates in the window \
             that both have: the price file is the index or a copy of it"
        ));
    }
    let estimate = &estimated.estimate;
    if estimated.copies_index() {
        return Err(format!(
            "the index ({index_path}) explains its returns with R² = {} (above {MAX_R_SQUARED}): \
             the price file is the index or a copy of it",
            show(estimate.r_squared)
        ));
    }
    // A return beyond MAX_RETURN leaves the sums of squares a fit takes near or past the
    // largest double (IEEE 754: about 1.8e308), so its statistics are lost or infinite: name the
    // largest, so the price to check is found (found by review: two returns of 9.5e153 gave an
    // infinite Durbin–Watson and a message naming no file).
    let returns = &estimated.returns;
    let largest = (returns.asset.iter().zip(&returns.period_ends))
        .max_by(|a, b| a.0.abs().total_cmp(&b.0.abs()));
    if let Some((r, date)) = largest.filter(|(r, _)| r.abs() > MAX_RETURN) {
        return Err(format!(
            "its return of {} for the period ending {date} is too large for a regression to \
             square and sum in double precision (above {}); check the prices in {peer_path} up \
             to that date",
            show(*r),
            show(MAX_RETURN)
        ));
    }
    let figures = [
        ("alpha", estimate.alpha),
        ("beta", estimate.beta),
        ("beta_std_error", estimate.beta_std_error),
        ("beta_t_stat", estimate.beta_t_stat),
        ("beta_p_value", estimate.beta_p_value),
        ("r_squared", estimate.r_squared),
        ("residual_std_error", estimate.residual_std_error),
        ("durbin_watson", estimate.durbin_watson),
    ];
    match figures.iter().find(|(_, v)| !v.is_finite()) {
        Some((name, value)) => Err(format!("the regression gives {name} = {}", show(*value))),
        None => Ok(()),
    }
}

/// The largest return a fit takes: its square, 1e300, summed over even a hundred million
/// periods stays finite.
const MAX_RETURN: f64 = 1e150;

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
pub fn check_axes(rows_key: &str, columns_key: &str, case: &toml::Table) -> Result<()> {
    // Also two spellings of one key (a peer by index and by name).
    if rows_key == columns_key || crate::case::overrides::same_value(case, rows_key, columns_key) {
        // Found by review: D/E against debt to capital was called "the same key".
        let what = match rows_key == columns_key {
            true => "the same key on both axes",
            false => {
                "two keys for one setting on both axes (a peer by index and by name, or the \
                      target's D/E and its debt to capital)"
            }
        };
        return Err(Error::Argument {
            option: format!("grid axes {rows_key} and {columns_key}"),
            message: format!(
                "{what}: the column value would replace the row value in every cell; give two \
                 different settings"
            ),
        });
    }
    Ok(())
}

/// The values the case accepts for a key `implied` solves for or the grid varies by default:
/// `(least, most, most_included)`. Rates are decimals in [−0.5, 1) and a pre-tax cost of debt
/// in [0, 1), as the case's validation takes them; a D/E up to [`MAX_DEBT_TO_EQUITY`]; the
/// relevered beta in [−5, 10].
pub fn accepted_range(key: &str) -> (f64, f64, bool) {
    match key {
        "debt.cost_pre_tax" => (0.0, 1.0, false),
        "target.debt_to_equity" => (0.0, MAX_DEBT_TO_EQUITY, true),
        "target.debt_to_capital" => (
            0.0,
            crate::capital::cost::debt_to_capital_from_equity(MAX_DEBT_TO_EQUITY),
            true,
        ),
        "relevered beta" => (-5.0, 10.0, true),
        _ => (-0.5, 1.0, false),
    }
}

/// Whether the case accepts `value` for `key` (see [`accepted_range`]).
pub fn accepts(key: &str, value: f64) -> bool {
    let (least, most, most_included) = accepted_range(key);
    value >= least && (value < most || (most_included && value == most))
}

/// The range `implied` searches for the case key `key` must lie inside the values the case
/// accepts for that key, so that every value searched is a case the valuation could take.
pub fn check_search_range(key: &str, low: f64, high: f64) -> Result<()> {
    if !(accepts(key, low) && accepts(key, high)) {
        let (least, most, most_included) = accepted_range(key);
        let close = if most_included { "]" } else { ")" };
        return Err(Error::Argument {
            option: format!("search range {}..{}", show(low), show(high)),
            message: format!("{key} can only lie in [{least}, {most}{close}; search inside it"),
        });
    }
    Ok(())
}

/// A claimed WACC (or any rate given on the command line) must be a finite decimal in
/// [−0.5, 1); 9.1 is taken for a percentage.
pub fn check_rate_argument(text: &str) -> std::result::Result<f64, String> {
    let value: f64 = text.trim().parse().map_err(|_| {
        // `8.9%` typed (found by review: it had no hint).
        let percent = text
            .trim()
            .strip_suffix('%')
            .and_then(|t| t.trim().parse::<f64>().ok());
        match percent {
            Some(typed) => format!(
                "`{text}` is not a number: rates are decimals, without the % sign ({})",
                crate::error::decimal_example_in(typed, (-0.5, 1.0))
            ),
            None => format!("`{text}` is not a number"),
        }
    })?;
    if !value.is_finite() {
        return Err(format!("{value} is not a finite number"));
    }
    if !(-0.5..1.0).contains(&value) {
        return Err(format!(
            "{} is outside [-0.5, 1): rates are decimals ({})",
            show(value),
            crate::error::decimal_example_in(value, (-0.5, 1.0))
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
    // `-0` is 0 (found by review: printed as "relative tolerance -0").
    Ok(value.abs())
}
