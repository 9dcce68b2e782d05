//! Sensitivity grid: a figure of the valuation over two `--set` key paths.
//!
//! Each cell is the valuation rerun on a copy of the case with the two values applied as
//! overrides ([`crate::case::with_overrides`]), so a cell is exactly what `hurdle run --set
//! ROW=… --set COLUMN=…` computes; the peers are re-estimated only when a key changes how betas
//! are estimated. An axis is written `key=low..high:step`. A cell whose values the valuation
//! refuses (a debt beta above a peer's equity beta, a window too short to estimate) is left
//! empty with the reason; a value outside what its key accepts is an error of the axis, and so
//! is a grid whose every cell is refused.

use super::case_error;
use crate::case::Metric;
use crate::case::{Case, TargetSource, Variants};
use crate::error::{Error, Result};
pub use crate::valuation::analyses::{Axis, Grid, RefusedCell};
use crate::valuation::{
    cost_of_capital, estimate_peers, CostOfCapital, Inputs, PeerEstimates, Valuation,
};

/// The figure `metric` names.
fn read(metric: Metric, cost: &CostOfCapital) -> f64 {
    match metric {
        Metric::Wacc => cost.wacc,
        Metric::CostOfEquity => cost.cost_of_equity,
    }
}

/// The most cells one axis may have; a larger grid is a typo more often than a wish.
const MAX_POINTS: usize = 101;

/// Parses `key=low..high:step` (inclusive of `high` when the steps land on it). `origin` names
/// where the axis was given (`--rows`, `sensitivity.columns`, …) for messages.
pub fn parse_axis(origin: &str, spec: &str) -> Result<Axis> {
    let fail = |message: String| {
        Error::Argument {
        option: format!("{origin} {spec}"),
        message: format!("{message}; an axis is written KEY=LOW..HIGH:STEP, e.g. market.equity_risk_premium=0.04..0.07:0.005"),
    }
    };
    let (key, range) = spec
        .split_once('=')
        .ok_or_else(|| fail("no `=` between the key and the range".into()))?;
    let (bounds, step) = range
        .split_once(':')
        .ok_or_else(|| fail("no `:STEP` after the range".into()))?;
    let (low, high) = bounds
        .split_once("..")
        .ok_or_else(|| fail(format!("`{bounds}` is not LOW..HIGH")))?;
    let number = |text: &str, what: &str| {
        text.trim()
            .parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .ok_or_else(|| fail(format!("{what} `{text}` is not a number")))
    };
    let (low, high, step) = (
        number(low, "low")?,
        number(high, "high")?,
        number(step, "step")?,
    );
    if high < low {
        return Err(fail(format!("high {high} is below low {low}")));
    }
    if step <= 0.0 {
        return Err(fail(format!("step {step} must be positive")));
    }
    // The tolerance lets 0.04..0.07:0.005 end at 0.07 despite decimal rounding in the step.
    // Counted in floating point: a tiny step must not overflow the integer count.
    let steps = ((high - low) / step + 1e-9).floor();
    // NaN cannot arise (both bounds and the step are finite), so `>=` also refuses infinity.
    if steps >= MAX_POINTS as f64 {
        // A step too small for the span to count in a double (5e-324 over 0.02) has more
        // points than can be written (found by review: "inf points").
        let count = match (steps + 1.0).is_finite() {
            true => format!("{} points", crate::error::compact(steps + 1.0)),
            false => "more points than a number holds".to_string(),
        };
        return Err(fail(format!("{count}; at most {MAX_POINTS} per axis")));
    }
    let count = steps as usize + 1;
    // Rounded to 15 significant digits of the axis's largest value, so that 0.04 + 3 × 0.005 is
    // written 0.055 and −0.01 + 2 × 0.005 is 0, as a user would type them; a value typed with
    // more decimals than 12 keeps them, and a value of 1e297 does not overflow (found by review:
    // rounding to 12 decimals by multiplying by 1e12 made it infinite and 1e-13 steps 0).
    // The value is taken to a whole number m of units 10^(e − 14), e the largest value's decimal
    // exponent (|m| < 10^15, exact in an f64), and read back from the decimal text `me(e − 14)`,
    // which Rust's parser rounds correctly.
    let exponent = low.abs().max(high.abs()).log10().floor().max(-330.0) as i32 - 14;
    let values = (0..count)
        .map(|i| match i {
            0 => low,
            _ => {
                let value = low + i as f64 * step;
                let units = (value / 10f64.powi(exponent)).round();
                // + 0.0: a rounded −0 is written 0.
                format!("{units}e{exponent}")
                    .parse::<f64>()
                    .ok()
                    .filter(|v| v.is_finite())
                    .map_or(value, |rounded| rounded + 0.0)
            }
        })
        .collect();
    Ok(Axis {
        key: key.trim().to_string(),
        values,
    })
}

/// The memo's default axes: the equity risk premium ±1 point in half points (rows), against the
/// target ratio the case gives from 0 to twice its value in quarters (0 to 1 for a D/E of 0;
/// a D/E at most the case's limit, a debt-to-capital at most 0.9, with the case's own ratio
/// added when that cap cuts the span). A target taken from the peers
/// or the subject has no ratio to vary, so the columns are then the risk-free rate ±1 point.
/// A step the case would refuse (an ERP of 0.995 + 0.01, or below the 0.001 a credit-spread
/// debt beta needs) is left off its axis, so a case the valuation accepts always has its grid
/// (found by review: a case with an ERP of 0.008 and credit-spread debt betas was refused by
/// `run` for the grid's row at −0.002, which the user never asked for).
pub fn default_axes(valuation: &Valuation, variants: &Variants) -> (Axis, Axis) {
    // The steps are rounded to 12 decimals (0.0567, not 0.056700000000000004); the case's own
    // value is kept exactly, so its cell is the case itself.
    let round = |v: f64| (v * 1e12).round() / 1e12;
    let around = |key: &str, centre: f64| Axis {
        key: key.into(),
        values: (-2..=2)
            .map(|i| match i {
                0 => centre,
                _ => round(centre + 0.005 * f64::from(i)),
            })
            .filter(|&v| crate::valuation::sanity::accepts(key, v))
            .collect(),
    };
    // From 0 to `span` in quarters; the middle step is `own` when the span is twice it, and
    // `own` is put in its place among them when the span was capped below that, so the case's
    // own cell is always on the grid.
    let from_zero = |key: &str, span: f64, own: f64| {
        let mut values: Vec<f64> = (0..=4)
            .map(|i| match i {
                2 if span == 2.0 * own => own,
                _ => round(span * f64::from(i) / 4.0),
            })
            .collect();
        if !values.contains(&own) {
            let at = values.partition_point(|&v| v < own);
            values.insert(at, own);
        }
        Axis {
            key: key.into(),
            values,
        }
    };
    let rows = around(
        "market.equity_risk_premium",
        valuation.cost.equity_risk_premium,
    );
    let target = &valuation.settings.target;
    let columns = match (target.source, target.debt_to_equity, target.debt_to_capital) {
        (TargetSource::Explicit, Some(de), _) => from_zero(
            "target.debt_to_equity",
            if de > 0.0 {
                (2.0 * de).min(crate::case::sanity::MAX_DEBT_TO_EQUITY)
            } else {
                1.0
            },
            de,
        ),
        (TargetSource::Explicit, None, Some(dc)) => from_zero(
            "target.debt_to_capital",
            if dc > 0.0 { (2.0 * dc).min(0.9) } else { 0.8 },
            dc,
        ),
        _ => around("market.risk_free_rate", valuation.cost.risk_free_rate),
    };
    (accepted(rows, variants), accepted(columns, variants))
}

/// The axis without the values the case refuses on their own (its checks across keys).
fn accepted(mut axis: Axis, variants: &Variants) -> Axis {
    let key = axis.key.clone();
    axis.values
        .retain(|value| variants.with(&[format!("{key}={value}")]).is_ok());
    axis
}

/// Each `--set` of `case` whose value an axis replaces in every cell, with that axis's key: the
/// same key, one key spelled two ways (a peer by index and by name), or the other target ratio
/// (a cell's ratio replaces it). A grid over a key is a what-if over its values, so the `--set`
/// of it counts for nothing, and the caller says so (found by review: it was dropped without a
/// word).
pub fn replaced_overrides(case: &Case, axis_keys: [&str; 2]) -> Result<Vec<(String, String)>> {
    let variants = Variants::new(case)?;
    // The key as written, for the override parser (a peer's name may hold ". "), and with the
    // spaces around its segments dropped, for comparing with an axis's key.
    let written = |assignment: &str| -> String {
        let key = assignment.split_once('=').map_or(assignment, |(k, _)| k);
        key.trim().to_string()
    };
    let trimmed = |key: &str| key.split('.').map(str::trim).collect::<Vec<_>>().join(".");
    let ratio = |k: &str| k == "target.debt_to_equity" || k == "target.debt_to_capital";
    let replaces = |axis: &str, set: &str| {
        axis == trimmed(set)
            || (ratio(axis) && ratio(&trimmed(set)))
            || crate::case::overrides::same_value(variants.own(), axis, set)
    };
    Ok((case.overrides.iter())
        .filter_map(|set| {
            let axis = axis_keys
                .iter()
                .find(|axis| replaces(axis, &written(set)))?;
            Some((set.clone(), axis.to_string()))
        })
        .collect())
}

/// Computes the grid over `rows × columns`.
pub fn grid(
    inputs: &Inputs,
    estimates: &PeerEstimates,
    rows: &Axis,
    columns: &Axis,
    metric: Metric,
) -> Result<Grid> {
    let variants = Variants::new(&inputs.case)?;
    crate::valuation::sanity::check_axes(&rows.key, &columns.key, variants.own())?;
    let total = rows.values.len() * columns.values.len();
    let mut progress = crate::progress::Progress::new("grid cells", total as u64);
    let mut cells = Vec::with_capacity(rows.values.len());
    // A cell is the case's own when its overrides leave the resolved case unchanged.
    let own = toml::Value::Table(variants.own().clone());
    let mut base_cell = None;
    let mut refused = Vec::new();
    // The first refusal is the error of a grid whose every cell is refused.
    let mut first_refusal = None;
    let shared = Shared {
        inputs,
        estimates,
        variants: &variants,
        own: &own,
        axes: [rows, columns],
        estimated: std::cell::RefCell::new(std::collections::VecDeque::new()),
        made: std::cell::Cell::new(0),
        reused: std::cell::Cell::new(false),
    };
    for r in 0..rows.values.len() {
        let mut line = Vec::with_capacity(columns.values.len());
        for c in 0..columns.values.len() {
            progress.step()?;
            let assignments = [rows.assignment(r), columns.assignment(c)];
            line.push(
                match shared.cell(&assignments, metric, base_cell.is_none())? {
                    Ok((value, own_case)) => {
                        if own_case && base_cell.is_none() {
                            base_cell = Some([r, c]);
                        }
                        Some(value)
                    }
                    Err(error) => {
                        refused.push(RefusedCell {
                            row: r,
                            column: c,
                            reason: super::reason(&error),
                        });
                        first_refusal.get_or_insert(in_cell(&assignments, error));
                        None
                    }
                },
            );
        }
        cells.push(line);
    }
    if refused.len() == total {
        if let Some(error) = first_refusal {
            return Err(error);
        }
    }
    Ok(Grid {
        metric,
        rows: rows.clone(),
        columns: columns.clone(),
        cells,
        base_cell,
        refused,
    })
}

/// An error of one cell, named by the cell rather than by a `--set` the user never gave.
fn in_cell(assignments: &[String; 2], error: Error) -> Error {
    Error::Argument {
        option: format!("grid cell {}, {}", assignments[0], assignments[1]),
        message: match error {
            Error::Override { message, .. } => message,
            other => other.to_string(),
        },
    }
}

/// What every cell of one grid shares.
struct Shared<'a> {
    inputs: &'a Inputs,
    estimates: &'a PeerEstimates,
    variants: &'a Variants<'a>,
    /// The case's own resolved settings, to recognise its cell.
    own: &'a toml::Value,
    axes: [&'a Axis; 2],
    /// The latest estimates made for cells whose keys move a beta, one per distinct estimation,
    /// at most one row's worth ([`Shared::cost`]; the cells are computed one after the other).
    estimated: std::cell::RefCell<std::collections::VecDeque<PeerEstimates>>,
    /// Estimations made for cells, and whether a cell has reused one.
    made: std::cell::Cell<usize>,
    reused: std::cell::Cell<bool>,
}

impl Shared<'_> {
    /// The cost of capital of a cell's case. A key that cannot move a beta (rates, premiums,
    /// structure) reuses the run's estimates; one that does is estimated once per distinct
    /// estimation and kept for the grid's other cells with the same one (found by review: a
    /// 7 × 7 grid over `beta.min_observations` estimated each row's peers seven times). Only the
    /// latest row's worth is kept (as many as the grid has columns): the cells run row by row,
    /// so that is all a column axis that moves a beta can reuse, and when both axes move one no
    /// two cells share an estimation at all (found by review: keeping every one took 6 GB for a
    /// 101 × 101 grid of daily betas).
    fn cost(&self, case: &crate::case::Case) -> Result<CostOfCapital> {
        if self.estimates.fit(case) {
            return cost_of_capital(case, self.inputs, self.estimates);
        }
        // Every cell reads the case's files (`same_data`, checked by `cell`), so the
        // estimation spec alone tells estimates apart.
        let spec = crate::case::specs::estimation(&case.settings);
        let mut known = self.estimated.borrow_mut();
        if let Some(estimates) = known.iter().find(|estimates| estimates.spec == spec) {
            self.reused.set(true);
            return cost_of_capital(case, self.inputs, estimates);
        }
        let estimates = estimate_peers(case, self.inputs)?;
        let cost = cost_of_capital(case, self.inputs, &estimates);
        // Kept while a row's worth of cells may still reuse it: not once a whole row and more
        // has gone by without a reuse (both axes move the estimation).
        let columns = self.axes[1].values.len().max(1);
        self.made.set(self.made.get() + 1);
        if self.reused.get() || self.made.get() <= columns + 1 {
            if known.len() == columns {
                known.pop_front();
            }
            known.push_back(estimates);
        }
        cost
    }

    /// The cell of `assignments`: `Ok(Ok((figure, whether it is the case's own, looked at
    /// only when `find_own`)))`,
    /// `Ok(Err(why the valuation refuses those values))`, or an error of the whole grid (an
    /// assignment that cannot be applied, a value outside what its key accepts, an axis that
    /// changes the data files read, a figure that is not finite).
    fn cell(
        &self,
        assignments: &[String; 2],
        metric: Metric,
        find_own: bool,
    ) -> Result<std::result::Result<(f64, bool), Error>> {
        // A value outside what the case's key accepts is an error of the axis the user wrote;
        // only the valuation's own refusals (below) leave a cell empty.
        let case = self
            .variants
            .with(assignments)
            .map_err(|error| in_cell(assignments, error))?;
        if !crate::case::sources::same_data(&case.settings, &self.inputs.case.settings) {
            return Err(case_error(
                self.inputs,
                format!(
                    "grid axes `{}` and `{}` may not change which data files are read",
                    self.axes[0].key, self.axes[1].key
                ),
            ));
        }
        let own_case =
            find_own && toml::Value::try_from(&case.settings).ok().as_ref() == Some(self.own);
        let cell = match self.cost(&case) {
            Ok(cost) => read(metric, &cost),
            Err(error) => return Ok(Err(error)),
        };
        if !cell.is_finite() {
            let path = format!("grid cell {}, {}", assignments[0], assignments[1]);
            return Err(Error::NonFinite { path, value: cell });
        }
        Ok(Ok((cell, own_case)))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn axes_parse_inclusively() {
        let axis = parse_axis("--rows", "market.equity_risk_premium=0.04..0.07:0.005").unwrap();
        assert_eq!(
            axis.values,
            vec![0.04, 0.045, 0.05, 0.055, 0.06, 0.065, 0.07]
        );
        assert_eq!(axis.assignment(3), "market.equity_risk_premium=0.055");
        let single = parse_axis("--cols", "target.debt_to_equity=0.5..0.5:0.1").unwrap();
        assert_eq!(single.values, vec![0.5]);
        // Decimal steps as typed, through 0 without a sign (−0.01 + 2 × 0.005 is −1.7e-18 in
        // binary floating point); values beyond 1e296 and below 1e-12 kept, not made infinite
        // or 0 (found by review).
        let through_zero = parse_axis("--rows", "k=-0.01..0.01:0.005").unwrap();
        assert_eq!(through_zero.values, vec![-0.01, -0.005, 0.0, 0.005, 0.01]);
        assert!(through_zero.values[2].is_sign_positive());
        let huge = parse_axis("--rows", "k=1e297..3e297:1e297").unwrap();
        assert_eq!(huge.values, vec![1e297, 2e297, 3e297]);
        let tiny = parse_axis("--rows", "k=0..4e-13:1e-13").unwrap();
        assert_eq!(tiny.values, vec![0.0, 1e-13, 2e-13, 3e-13, 4e-13]);
        let typed = parse_axis(
            "--rows",
            "k=0.2500000000004..0.2500000000104:0.000000000005",
        )
        .unwrap();
        assert_eq!(
            typed.values,
            vec![0.2500000000004, 0.2500000000054, 0.2500000000104]
        );
    }

    #[test]
    fn malformed_axes_say_what_is_wrong() {
        for (spec, expected) in [
            ("market.equity_risk_premium", "no `=`"),
            ("k=0.04..0.07", "no `:STEP`"),
            ("k=0.04-0.07:0.01", "not LOW..HIGH"),
            ("k=0.07..0.04:0.01", "below low"),
            ("k=0.04..0.07:0", "must be positive"),
            ("k=a..0.07:0.01", "`a` is not a number"),
            ("k=0..10:0.01", "at most"),
            // A step so small that the count overflowed an integer once gave an empty axis.
            ("k=0.04..0.07:1e-300", "at most"),
        ] {
            let message = parse_axis("--rows", spec).unwrap_err().to_string();
            assert!(message.contains(expected), "{spec}: {message}");
        }
    }
}
