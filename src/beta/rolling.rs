//! Rolling betas: the stability of each peer's beta through the estimation window.
//!
//! Each window spans `window` consecutive return periods of the grid and ends at every
//! `step`-th period end; its beta is the case's own estimator (OLS, Dimson or Scholes–Williams)
//! with the case's standard errors (classical, HC1 or Newey–West), fitted on the aligned
//! observations inside it — a thinly traded peer's rolling beta is then as free of the lag bias
//! as its full-window one. The regression's moment sums are updated as observations enter and
//! leave ([`moments`]; each observation enters once and leaves once), so a peer costs O(T)
//! however many windows there are, instead of refitting each window. To keep the updated sums
//! from cancelling, every column is first shifted by its full-sample mean (slopes, residuals and
//! standard errors do not change under a shift).

mod moments;

use chrono::NaiveDate;
use serde::Serialize;

use crate::beta::BetaMethod;
use crate::error::Result;
use crate::io::series::iso_date;
use crate::market::sampling::ShiftedMarket;
use crate::stats::least_squares::{design_with_intercept, newey_west_default_lags, ols, StdErrors};
use moments::{Combination, Moments, WindowFit};

/// One window's estimate.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RollingPoint {
    #[serde(serialize_with = "iso_date")]
    pub window_end: NaiveDate,
    pub beta: f64,
    pub std_error: f64,
    pub observations: usize,
    /// β ∓ t(0.975, df)·SE with the window's residual degrees of freedom (N less the
    /// coefficients): the 95% interval the case's tables give for the whole window, and the
    /// band the stability chart draws.
    pub band_low: f64,
    pub band_high: f64,
    /// The window's residual degrees of freedom (N less the coefficients), which set its band
    /// and the first-to-last test's critical value; not written out (N is).
    #[serde(skip)]
    pub degrees_of_freedom: usize,
}

/// Range and trend of a peer's rolling betas.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Stability {
    /// The windows with a beta.
    pub windows: usize,
    /// The windows laid through the estimation window, one ending every `step` periods from
    /// the first full one: `windows` and those skipped (too few observations for the settings
    /// or the estimator, an index or a security that does not move in it, a Scholes–Williams
    /// index autocorrelation below −0.4). Found by review: the memo said every window was in
    /// rolling.csv while some were skipped unsaid.
    pub windows_laid: usize,
    /// The ends of the windows laid but skipped, ascending (empty when none was), so a reader
    /// and the chart see where the line has no beta.
    #[serde(serialize_with = "crate::io::series::iso_dates")]
    pub skipped_window_ends: Vec<NaiveDate>,
    pub window_periods: u32,
    pub min: f64,
    pub max: f64,
    pub first: f64,
    pub last: f64,
    /// OLS slope of the rolling betas on time, per year (window ends in years of 365.25 days).
    pub trend_per_year: f64,
}

/// Why a security has no line of rolling betas (fewer than two windows), so a reader is told
/// the cause rather than left to work it out from the settings.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum NoStability {
    /// The windows laid through the estimation window are fewer than two (the rolling window
    /// spans it, or the step between window ends leaves room for one only): no line over time.
    OneWindow,
    /// Newey–West lags stated in the settings need more than four times as many observations
    /// in a window (the lags below N/4) than a window has periods.
    NeweyWestLags,
    /// Fewer than two windows with enough observations whose returns vary.
    TooFewWindows,
    /// A window, even with an observation in every period, is too short for the estimator:
    /// the Newey–West lags of the lag rule, or the shifted index columns of Dimson or
    /// Scholes–Williams, must stay below a quarter of its observations (found by review: such
    /// a case was told its windows had too few observations).
    ShortForEstimator,
}

impl NoStability {
    /// The cause for a security without a line, whose estimation window has `periods` periods
    /// and whose estimator uses `shifted` lagged and led index columns.
    pub fn of(spec: &RollingSpec, periods: usize, shifted: usize) -> NoStability {
        let stated_lags = match spec.std_errors {
            StdErrors::NeweyWest => spec.newey_west_lags,
            _ => None,
        };
        // The most observations a window holds, and the lags the rule gives them; the rule's
        // lags grow with N more slowly than N/4, so a full window is the estimator's best case.
        let full = spec.window;
        let lags = match spec.std_errors {
            StdErrors::NeweyWest => stated_lags.unwrap_or_else(|| newey_west_default_lags(full)),
            _ => 0,
        };
        // Window ends at periods window − 1, window − 1 + step, … up to the last period.
        let laid = match periods.checked_sub(spec.window) {
            Some(room) => room / spec.step.max(1) + 1,
            None => 0,
        };
        if laid < 2 {
            NoStability::OneWindow
        } else if stated_lags.is_some_and(|lags| 4 * lags >= spec.window) {
            NoStability::NeweyWestLags
        } else if 4 * lags >= full || 4 * shifted >= full {
            NoStability::ShortForEstimator
        } else {
            NoStability::TooFewWindows
        }
    }
}

/// How the rolling windows are laid and estimated.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RollingSpec {
    pub method: BetaMethod,
    pub std_errors: StdErrors,
    /// Newey–West lags as the case gives them; `None` means the Newey–West (1994) rule on each
    /// window's own number of observations.
    pub newey_west_lags: Option<usize>,
    /// Return periods per window.
    pub window: usize,
    /// Periods between consecutive window ends.
    pub step: usize,
    /// Windows with fewer aligned observations are skipped.
    pub min_observations: usize,
}

/// The returns one security's rolling betas rest on, all over the same aligned periods.
#[derive(Debug, Clone, Copy)]
pub struct RollingSeries<'a> {
    /// The security's returns, in excess of the rate when there is one.
    pub asset: &'a [f64],
    /// The index's returns, in excess of the rate when there is one.
    pub market: &'a [f64],
    /// The security's and the index's own returns, before any rate.
    pub asset_raw: &'a [f64],
    pub market_raw: &'a [f64],
    /// The lagged and led market columns Dimson and Scholes–Williams use, as
    /// `sampling::align_with_shifts` builds them.
    pub shifted: &'a [ShiftedMarket],
}

impl RollingSeries<'_> {
    /// Whether the index's or the security's own returns over the observations `inside` are
    /// all the same to rounding (found by review: only the excess returns were checked, and
    /// only when the moment sums had lost their precision, so a flat index under a moving rate
    /// was fitted to the rate; and a security flat in the window got a beta of 0 with a
    /// standard error of 0).
    fn flat_in(&self, inside: std::ops::Range<usize>) -> bool {
        let flat = crate::market::sampling::constant_up_to_rounding;
        flat(&self.market_raw[inside.clone()]) || flat(&self.asset_raw[inside])
    }
}

/// Rolling betas of `series.asset` on `series.market` observed at `observed` (ascending dates,
/// a subset of `period_ends`, the grid's return period ends). Windows with fewer than
/// `spec.min_observations` observations, or too few for the estimator (as the full-window
/// estimate requires: more than the coefficients, Newey–West lags and shifted columns each
/// below N/4), are skipped, and so are windows whose index returns, raw or in excess of the
/// rate, or whose security's own returns are all the same to rounding, as the full window's
/// estimate refuses a flat index or a flat security (a flat index under a moving rate leaves
/// the rate's variation alone; a security whose price never moves in a window, carried back
/// before a listing or through a suspension, got a beta of 0 with a standard error of 0).
pub fn rolling_betas(
    period_ends: &[NaiveDate],
    observed: &[NaiveDate],
    series: RollingSeries<'_>,
    spec: &RollingSpec,
) -> Vec<RollingPoint> {
    let (asset, market, shifted) = (series.asset, series.market, series.shifted);
    let n_all = asset.len();
    let window = spec.window;
    if n_all == 0 || window == 0 || window > period_ends.len() {
        return Vec::new();
    }
    let Some((regressors, combination)) = design_columns(spec.method, market, shifted) else {
        return Vec::new();
    };
    let centre = |v: &[f64]| {
        let mean = v.iter().sum::<f64>() / v.len() as f64;
        v.iter().map(|x| x - mean).collect::<Vec<f64>>()
    };
    let regressors: Vec<Vec<f64>> = regressors.iter().map(|c| centre(c)).collect();
    let lags_for = |n: usize| match spec.std_errors {
        StdErrors::NeweyWest => spec
            .newey_west_lags
            .unwrap_or_else(|| newey_west_default_lags(n)),
        _ => 0,
    };
    let max_lag = match spec.std_errors {
        StdErrors::Classical => None,
        // The lag rule grows with N, so the longest window needs the most lags.
        _ => Some(lags_for(window.min(n_all))),
    };
    let mut sums = Moments::new(&regressors, &centre(asset), max_lag);
    let mut points = Vec::new();
    for end_index in (window - 1..period_ends.len()).step_by(spec.step.max(1)) {
        let end = period_ends[end_index];
        // The window holds periods end_index + 1 − window ..= end_index.
        let start_exclusive = end_index
            .checked_sub(window)
            .map(|before| period_ends[before]);
        while sums.end() < n_all && observed[sums.end()] <= end {
            sums.push();
        }
        while sums.first() < sums.end()
            && start_exclusive.is_some_and(|s| observed[sums.first()] <= s)
        {
            sums.pop();
        }
        let n = sums.count();
        let lags = lags_for(n);
        if n < spec.min_observations.max(3) || 4 * lags >= n || 4 * shifted.len() >= n {
            continue;
        }
        if series.flat_in(sums.first()..sums.end()) {
            continue;
        }
        let fit = match sums.beta(combination, spec.std_errors, lags) {
            WindowFit::Estimate(beta, std_error) => Some((beta, std_error)),
            WindowFit::Skip => None,
            WindowFit::Refit => refit(spec, lags, (sums.first(), sums.end()), &series),
        };
        if let Some((beta, std_error)) = fit {
            let df = n - regressors.len() - 1;
            let (band_low, band_high) = crate::stats::interval_95(beta, std_error, df as f64);
            points.push(RollingPoint {
                window_end: end,
                beta,
                std_error,
                observations: n,
                band_low,
                band_high,
                degrees_of_freedom: df,
            });
        }
    }
    points
}

/// One window's beta and standard error by the full estimator (QR), for a window whose moment
/// sums have lost their precision ([`WindowFit::Refit`]); `None` when the estimator refuses it,
/// or when the window's index returns are all the same to rounding, which the full window's
/// estimate refuses as a flat index before it fits (found by review: such a window, nearly
/// collinear with the intercept, passed the QR's rank rule with a beta of order 1e13).
fn refit(
    spec: &RollingSpec,
    lags: usize,
    (first, end): (usize, usize),
    series: &RollingSeries<'_>,
) -> Option<(f64, f64)> {
    let (asset, market, shifted) = (series.asset, series.market, series.shifted);
    if crate::market::sampling::constant_up_to_rounding(&market[first..end]) {
        return None;
    }
    let count = |sign: i32| shifted.iter().filter(|s| s.offset.signum() == sign).count() as u32;
    let settings = crate::beta::EstimatorSpec {
        method: spec.method,
        std_errors: spec.std_errors,
        newey_west_lags: u32::try_from(lags).ok(),
        dimson_lags: count(-1),
        dimson_leads: count(1),
    };
    let window: Vec<ShiftedMarket> = shifted
        .iter()
        .map(|s| ShiftedMarket {
            offset: s.offset,
            returns: s.returns[first..end].to_vec(),
        })
        .collect();
    let estimate = crate::beta::estimate_with_influence(
        &settings,
        &asset[first..end],
        &market[first..end],
        &window,
        false,
    )
    .ok()?;
    (estimate.beta.is_finite() && estimate.beta_std_error.is_finite())
        .then_some((estimate.beta, estimate.beta_std_error))
}

/// The regressors of `method` (without the intercept) and how its beta combines them: OLS the
/// market alone; Dimson every shifted column and the market in ascending offset; Scholes–Williams
/// the previous, same and next period's market. `None` when a column the method needs is absent.
fn design_columns(
    method: BetaMethod,
    market: &[f64],
    shifted: &[ShiftedMarket],
) -> Option<(Vec<Vec<f64>>, Combination)> {
    match method {
        BetaMethod::Ols => Some((vec![market.to_vec()], Combination::SumOfSlopes)),
        BetaMethod::Dimson => {
            let mut columns: Vec<(i32, Vec<f64>)> = shifted
                .iter()
                .map(|s| (s.offset, s.returns.clone()))
                .collect();
            columns.push((0, market.to_vec()));
            columns.sort_by_key(|(offset, _)| *offset);
            Some((
                columns.into_iter().map(|(_, c)| c).collect(),
                Combination::SumOfSlopes,
            ))
        }
        BetaMethod::ScholesWilliams => {
            let column = |offset: i32| {
                shifted
                    .iter()
                    .find(|s| s.offset == offset)
                    .map(|s| s.returns.clone())
            };
            Some((
                vec![column(-1)?, market.to_vec(), column(1)?],
                Combination::ScholesWilliams {
                    lag: 1,
                    current: 2,
                    lead: 3,
                },
            ))
        }
    }
}

/// The ends of the windows [`rolling_betas`] lays through the estimation window whose period
/// ends are `period_ends`: one ending at every `step`-th period from the first full window.
pub fn laid_window_ends(period_ends: &[NaiveDate], spec: &RollingSpec) -> Vec<NaiveDate> {
    match spec.window > 0 && period_ends.len() >= spec.window {
        true => (spec.window - 1..period_ends.len())
            .step_by(spec.step.max(1))
            .map(|i| period_ends[i])
            .collect(),
        false => Vec::new(),
    }
}

/// Range and trend of rolling betas, of the windows ending at `laid` (ascending; those
/// without a point are the skipped ones); `None` with fewer than two windows.
pub fn stability(
    points: &[RollingPoint],
    window_periods: u32,
    laid: &[NaiveDate],
) -> Result<Option<Stability>> {
    if points.len() < 2 {
        return Ok(None);
    }
    let origin = points[0].window_end;
    let years: Vec<f64> = points
        .iter()
        .map(|p| (p.window_end - origin).num_days() as f64 / 365.25)
        .collect();
    let betas: Vec<f64> = points.iter().map(|p| p.beta).collect();
    let trend_per_year = match (years.as_slice(), betas.as_slice()) {
        // The least-squares line through two points is the line through them (the regression
        // would have no residual degree of freedom, which `ols` refuses).
        ([t1, t2], [b1, b2]) => (b2 - b1) / (t2 - t1),
        _ => ols(&design_with_intercept(&[&years]), &betas, true)?.coefficients[1],
    };
    let mut fitted = points.iter().map(|p| p.window_end).peekable();
    let skipped_window_ends = (laid.iter().copied())
        .filter(|&end| {
            while fitted.next_if(|&f| f < end).is_some() {}
            fitted.next_if_eq(&end).is_none()
        })
        .collect();
    Ok(Some(Stability {
        windows: points.len(),
        windows_laid: laid.len(),
        skipped_window_ends,
        window_periods,
        min: betas.iter().copied().fold(f64::INFINITY, f64::min),
        max: betas.iter().copied().fold(f64::NEG_INFINITY, f64::max),
        first: betas[0],
        last: betas[betas.len() - 1],
        trend_per_year,
    }))
}

/// How far the last rolling window's beta lies from the first's, in standard errors of their
/// difference, the two estimates taken as independent: z = (β_last − β_first) /
/// √(SE_first² + SE_last²), the usual test for the equality of two regression coefficients
/// from separate samples (Paternoster, Brame, Mazerolle and Piquero 1998, Criminology 36(4);
/// from memory). Windows that overlap share returns, which makes the two estimates positively
/// correlated and this z smaller than the exact one: the test then errs towards calling a
/// change no change. `None` with fewer than two windows or a zero standard error.
pub fn first_to_last_z(points: &[RollingPoint]) -> Option<f64> {
    let (first, last) = (points.first()?, points.last()?);
    if points.len() < 2 {
        return None;
    }
    let spread = first.std_error.hypot(last.std_error);
    (spread > 0.0).then(|| (last.beta - first.beta) / spread)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::beta::EstimatorSpec;
    use crate::beta::{estimate_with, ols_beta};
    use crate::stats::random::Rng;

    fn ols_spec(window: usize, step: usize, min_observations: usize) -> RollingSpec {
        RollingSpec {
            method: BetaMethod::Ols,
            std_errors: StdErrors::Classical,
            newey_west_lags: None,
            window,
            step,
            min_observations,
        }
    }

    /// The series of a security and an index without a risk-free rate: raw and excess alike.
    fn plain<'a>(
        asset: &'a [f64],
        market: &'a [f64],
        shifted: &'a [ShiftedMarket],
    ) -> RollingSeries<'a> {
        RollingSeries {
            asset,
            market,
            asset_raw: asset,
            market_raw: market,
            shifted,
        }
    }

    fn month_ends(n: usize) -> Vec<NaiveDate> {
        let mut d = NaiveDate::from_ymd_opt(2020, 1, 31).unwrap();
        let mut out = Vec::new();
        for _ in 0..n {
            out.push(d);
            d = crate::market::sampling::month_end(d + chrono::Days::new(1));
        }
        out
    }

    // The updated sums must give what a fresh OLS fit (QR, src/stats/least_squares.rs) of each window
    // gives — the textbook simple-regression slope and SE — here on seeded random data with
    // two periods missing, so windows hold different counts.
    #[test]
    fn updated_sums_equal_a_fresh_fit_of_each_window() {
        let ends = month_ends(40);
        let mut rng = Rng::seeded(5);
        let keep: Vec<usize> = (0..40).filter(|&i| i != 7 && i != 20).collect();
        let observed: Vec<NaiveDate> = keep.iter().map(|&i| ends[i]).collect();
        let market: Vec<f64> = keep.iter().map(|_| 0.01 + 0.04 * rng.normal()).collect();
        let asset: Vec<f64> = market
            .iter()
            .map(|m| 1.2 * m + 0.05 * rng.normal())
            .collect();
        let points = rolling_betas(
            &ends,
            &observed,
            plain(&asset, &market, &[]),
            &ols_spec(12, 2, 10),
        );
        assert!(!points.is_empty());
        for p in &points {
            let end = ends.iter().position(|d| *d == p.window_end).unwrap();
            let first = end + 1 - 12;
            let inside: Vec<usize> = (0..observed.len())
                .filter(|&j| ends[first] <= observed[j] && observed[j] <= p.window_end)
                .collect();
            let a: Vec<f64> = inside.iter().map(|&j| asset[j]).collect();
            let m: Vec<f64> = inside.iter().map(|&j| market[j]).collect();
            let fresh = ols_beta(&a, &m).unwrap();
            assert_eq!(p.observations, a.len());
            // 1e-10 relative: the updated sums lose a few digits to cancellation that QR
            // avoids; returns of a few percent leave well over 10 digits.
            assert!(
                (p.beta - fresh.beta).abs() < 1e-10 * fresh.beta.abs(),
                "{p:?} {fresh:?}"
            );
            assert!((p.std_error - fresh.beta_std_error).abs() < 1e-10 * fresh.beta_std_error);
        }
    }

    // Windows whose residuals are 1e-10 of the returns (an asset that follows the index almost
    // exactly in the later periods): the moment sums' residual sum of squares, a difference of
    // two sums of order 1e-2, is lost to cancellation there, so those windows are refitted by
    // QR and must give a fresh fit's standard error (found by review: 941 such windows reported
    // a standard error of exactly 0 against a true 1.3e-9). 1e-6 relative: a QR fit of the same
    // rows in the same order; a cancelled SE misses by 40% or more.
    #[test]
    fn windows_that_fit_almost_exactly_are_refitted() {
        let n = 120;
        let ends = month_ends(n);
        let mut rng = Rng::seeded(11);
        let market: Vec<f64> = (0..n).map(|_| 0.01 + 0.04 * rng.normal()).collect();
        let asset: Vec<f64> = (0..n)
            .map(|t| {
                let noise = if t < 60 { 0.05 } else { 1e-10 };
                1.2 * market[t] + noise * rng.normal()
            })
            .collect();
        let points = rolling_betas(
            &ends,
            &ends,
            plain(&asset, &market, &[]),
            &ols_spec(24, 1, 20),
        );
        let mut exact = 0;
        for p in &points {
            let end = ends.iter().position(|d| *d == p.window_end).unwrap();
            let fresh = ols_beta(&asset[end + 1 - 24..=end], &market[end + 1 - 24..=end]).unwrap();
            assert!(
                (p.std_error / fresh.beta_std_error - 1.0).abs() < 1e-6,
                "{p:?} {fresh:?}"
            );
            exact += usize::from(end >= 84);
        }
        assert!(exact >= 30, "windows wholly in the exact part: {exact}");
    }

    // An index that grows by one fixed rate in the later windows (its returns differ only by
    // the rounding of p₁/p₀ − 1) gives those windows no slope to estimate: they are skipped,
    // as a flat index over the whole window is refused, not given a beta of order 1e13 (found
    // by review). The window that holds the one different return is estimated.
    #[test]
    fn windows_whose_index_is_flat_to_rounding_are_skipped() {
        let n = 60;
        let ends = month_ends(n);
        let prices: Vec<f64> = (0..=n).map(|t| 100.0 * 1.0004_f64.powi(t as i32)).collect();
        let mut market: Vec<f64> = prices.windows(2).map(|w| w[1] / w[0] - 1.0).collect();
        market[0] = 0.01;
        let mut rng = Rng::seeded(5);
        let asset: Vec<f64> = (0..n).map(|_| 0.01 + 0.05 * rng.normal()).collect();
        let points = rolling_betas(
            &ends,
            &ends,
            plain(&asset, &market, &[]),
            &ols_spec(20, 1, 10),
        );
        assert!(points.iter().all(|p| p.beta.abs() < 1e3), "{points:?}");
        assert_eq!(points.len(), 1, "{points:?}");
        assert_eq!(points[0].window_end, ends[19]);
    }

    // An index whose own returns are the same in the first 30 periods while the risk-free rate
    // moves: its excess returns there vary with the rate alone, so an estimate of those windows
    // would be the asset's slope on the rate. They are skipped, as the full window refuses a
    // flat index raw or in excess (found by review: only the excess returns were checked, and
    // only on a refit). Windows reaching into the moving part are estimated.
    #[test]
    fn windows_whose_raw_index_is_flat_are_skipped_under_a_moving_rate() {
        let n = 60;
        let ends = month_ends(n);
        let mut rng = Rng::seeded(9);
        let raw: Vec<f64> = (0..n)
            .map(|t| {
                if t < 30 {
                    0.004
                } else {
                    0.01 + 0.04 * rng.normal()
                }
            })
            .collect();
        let rate: Vec<f64> = (0..n).map(|t| 0.002 + 0.0005 * (t as f64).sin()).collect();
        let excess: Vec<f64> = raw.iter().zip(&rate).map(|(m, r)| m - r).collect();
        let asset: Vec<f64> = (0..n).map(|_| 0.01 + 0.05 * rng.normal()).collect();
        let spec = ols_spec(20, 1, 10);
        let points = rolling_betas(
            &ends,
            &ends,
            RollingSeries {
                market_raw: &raw,
                ..plain(&asset, &excess, &[])
            },
            &spec,
        );
        // Windows end at periods 19..=59; those ending at 29 or before lie in the flat part.
        assert_eq!(points.len(), 30, "{points:?}");
        assert!(points.iter().all(|p| p.window_end > ends[29]), "{points:?}");
        // Without the raw returns the flat windows would be fitted to the rate's variation.
        let unguarded = rolling_betas(&ends, &ends, plain(&asset, &excess, &[]), &spec);
        assert_eq!(unguarded.len(), 41);
    }

    // A security whose price does not move in the first 30 periods (carried back before its
    // listing, or through a suspension): those windows' returns are all 0, which the full
    // window refuses as a flat security, so they are skipped, not given a beta of 0 with a
    // standard error of 0 (found by review: a stability note was built on that error).
    #[test]
    fn windows_whose_security_is_flat_are_skipped() {
        let n = 60;
        let ends = month_ends(n);
        let mut rng = Rng::seeded(13);
        let market: Vec<f64> = (0..n).map(|_| 0.01 + 0.04 * rng.normal()).collect();
        let asset: Vec<f64> = (0..n)
            .map(|t| match t < 30 {
                true => 0.0,
                false => 1.1 * market[t] + 0.03 * rng.normal(),
            })
            .collect();
        let points = rolling_betas(
            &ends,
            &ends,
            plain(&asset, &market, &[]),
            &ols_spec(20, 1, 10),
        );
        // Windows end at periods 19..=59; those ending at 29 or before hold only the flat part.
        assert_eq!(points.len(), 30, "{points:?}");
        assert!(points.iter().all(|p| p.std_error > 0.0), "{points:?}");
    }

    /// The market column at an offset.
    type Shifter = Box<dyn Fn(i32) -> ShiftedMarket>;

    /// Seeded returns of an asset that answers the market partly a period late, one period
    /// missing: observation dates, asset, market, and the market shifted by an offset.
    #[allow(clippy::type_complexity)]
    fn thinly_traded(
        periods: usize,
    ) -> (
        Vec<NaiveDate>,
        Vec<f64>,
        Vec<f64>,
        impl Fn(i32) -> ShiftedMarket,
    ) {
        let ends = month_ends(periods);
        let mut rng = Rng::seeded(11);
        let m: Vec<f64> = (0..periods + 3)
            .map(|_| 0.008 + 0.045 * rng.normal())
            .collect();
        let keep: Vec<usize> = (0..periods).filter(|&i| i != 33).collect();
        let observed: Vec<NaiveDate> = keep.iter().map(|&i| ends[i]).collect();
        // m[i + 2] is period i's market return; m[i + 1] the previous, m[i + 3] the next.
        let market: Vec<f64> = keep.iter().map(|&i| m[i + 2]).collect();
        let asset: Vec<f64> = keep
            .iter()
            .map(|&i| {
                0.002
                    + 0.7 * m[i + 2]
                    + 0.4 * m[i + 1]
                    + 0.04 * rng.normal() * (1.0 + m[i + 2].abs() * 10.0)
            })
            .collect();
        let column: Shifter = Box::new(move |offset: i32| ShiftedMarket {
            offset,
            returns: keep
                .iter()
                .map(|&i| m[(i as i32 + 2 + offset) as usize])
                .collect(),
        });
        (observed, asset, market, column)
    }

    // Every estimator and every kind of standard error: the updated sums must give what the
    // full-sample estimator (`beta::estimate_with`, QR-based, itself checked against numpy and
    // scipy in tests/reference) gives on each window's observations alone. Seeded data where
    // the asset answers the market partly a period late (the thin-trading case), with a
    // missing period so windows hold different counts.
    #[test]
    fn every_method_and_standard_error_equals_a_fresh_fit_of_each_window() {
        let periods = 90;
        let ends = month_ends(periods);
        let (observed, asset, market, column) = thinly_traded(periods);
        let cases = [
            (BetaMethod::Ols, vec![]),
            (BetaMethod::Dimson, vec![column(-2), column(-1)]),
            (BetaMethod::Dimson, vec![column(-1), column(1)]),
            (BetaMethod::ScholesWilliams, vec![column(-1), column(1)]),
        ];
        let mut compared = 0;
        for (method, shifted) in &cases {
            for (std_errors, lags) in [
                (StdErrors::Classical, None),
                (StdErrors::Hc1, None),
                (StdErrors::NeweyWest, None),
                (StdErrors::NeweyWest, Some(2)),
            ] {
                let spec = RollingSpec {
                    method: *method,
                    std_errors,
                    newey_west_lags: lags,
                    window: 36,
                    step: 5,
                    min_observations: 30,
                };
                let settings = EstimatorSpec {
                    method: *method,
                    std_errors,
                    newey_west_lags: lags.map(|l| l as u32),
                    dimson_lags: 1,
                    dimson_leads: 0,
                };
                let points =
                    rolling_betas(&ends, &observed, plain(&asset, &market, shifted), &spec);
                assert_eq!(
                    points.len(),
                    (periods - 36) / 5 + 1,
                    "{method:?} {std_errors:?}"
                );
                for p in &points {
                    let end = ends.iter().position(|d| *d == p.window_end).unwrap();
                    let inside: Vec<usize> = (0..observed.len())
                        .filter(|&j| {
                            ends[end + 1 - 36] <= observed[j] && observed[j] <= p.window_end
                        })
                        .collect();
                    let pick = |v: &[f64]| inside.iter().map(|&j| v[j]).collect::<Vec<f64>>();
                    let window_shifted: Vec<ShiftedMarket> = shifted
                        .iter()
                        .map(|s| ShiftedMarket {
                            offset: s.offset,
                            returns: pick(&s.returns),
                        })
                        .collect();
                    let fresh =
                        estimate_with(&settings, &pick(&asset), &pick(&market), &window_shifted)
                            .unwrap();
                    assert_eq!(p.observations, inside.len());
                    // 1e-9 relative: the updated sums (normal equations, fourth moments for the
                    // robust errors) lose a few digits to cancellation that QR avoids; returns
                    // of a few percent leave more than 10.
                    let close = |a: f64, b: f64| (a - b).abs() < 1e-9 * b.abs();
                    assert!(
                        close(p.beta, fresh.beta),
                        "{method:?} {std_errors:?} {p:?} {}",
                        fresh.beta
                    );
                    assert!(
                        close(p.std_error, fresh.beta_std_error),
                        "{method:?} {std_errors:?} {p:?} {}",
                        fresh.beta_std_error
                    );
                    compared += 1;
                }
            }
        }
        assert!(compared > 100);
    }

    // A steadily rising beta (y = b(t)·x exactly, b rising 0.1 per window of one month) gives a
    // positive trend; the range is the first and last value (hand-checked construction).
    #[test]
    fn stability_reports_range_and_trend() {
        let points: Vec<RollingPoint> = month_ends(5)
            .into_iter()
            .enumerate()
            .map(|(i, d)| RollingPoint {
                window_end: d,
                beta: 1.0 + 0.1 * i as f64,
                std_error: 0.1,
                observations: 12,
                band_low: 0.0,
                band_high: 0.0,
                degrees_of_freedom: 10,
            })
            .collect();
        let ends: Vec<NaiveDate> = points.iter().map(|p| p.window_end).collect();
        let s = stability(&points, 12, &ends).unwrap().unwrap();
        assert!(s.skipped_window_ends.is_empty() && s.windows_laid == points.len());
        // A window laid between the first two, without a point, is a skipped one.
        let between = ends[0] + chrono::Days::new(1);
        let laid = [&ends[..1], &[between], &ends[1..]].concat();
        let with_gap = stability(&points, 12, &laid).unwrap().unwrap();
        assert_eq!(with_gap.skipped_window_ends, vec![between]);
        assert_eq!(with_gap.windows_laid, points.len() + 1);
        assert_eq!((s.min, s.max, s.windows), (1.0, 1.4, 5));
        // 0.1 per month is about 1.2 per year (months of unequal length: within 5%).
        assert!((s.trend_per_year - 1.2).abs() < 0.06, "{s:?}");
        // Two windows: the line through both points (algebra). 2020-01-31 to 2020-02-29 is 29
        // days, so the trend is 0.1 / (29 / 365.25) per year; one rounding step apart at most.
        let s = stability(&points[..2], 12, &ends[..2]).unwrap().unwrap();
        assert_eq!((s.windows, s.first, s.last), (2, 1.0, 1.1));
        let expected = (1.1 - 1.0) / (29.0 / 365.25);
        assert!((s.trend_per_year - expected).abs() < 1e-14, "{s:?}");
        assert!(stability(&points[..1], 12, &ends[..1]).unwrap().is_none());
    }

    // The first-to-last z by the two-sample formula (Paternoster et al. 1998), worked by hand:
    // (1.2 − 0.1) / √(0.3² + 0.28²) = 1.1 / 0.410366… = 2.680536 (checked in Python); its sign follows the move.
    // 1e-6: the hand value's digits.
    #[test]
    fn first_to_last_z_is_the_two_sample_statistic() {
        let point = |beta: f64, std_error: f64| RollingPoint {
            window_end: month_ends(1)[0],
            beta,
            std_error,
            observations: 30,
            band_low: 0.0,
            band_high: 0.0,
            degrees_of_freedom: 28,
        };
        let points = [point(0.1, 0.3), point(0.7, 0.2), point(1.2, 0.28)];
        let z = first_to_last_z(&points).unwrap();
        assert!((z - 2.680536).abs() < 1e-6, "{z}");
        let falling = [point(1.2, 0.28), point(0.1, 0.3)];
        assert!((first_to_last_z(&falling).unwrap() + 2.680536).abs() < 1e-6);
        assert!(first_to_last_z(&points[..1]).is_none());
        assert!(first_to_last_z(&[point(1.0, 0.0), point(1.0, 0.0)]).is_none());
    }
}
