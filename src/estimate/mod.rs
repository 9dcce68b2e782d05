//! One security estimated: a price series and an [`EstimationSpec`] in, a complete
//! [`SecurityEstimate`] out — period returns aligned with the index, the beta with its statistics,
//! diagnostics and flags, and the rolling betas.
//!
//! Nothing here knows about case files: the case pipeline, a whole-market universe and the tests
//! all call [`estimate_security`]. The window and the index's returns depend only on the spec, so
//! they are computed once ([`Window::new`], [`MarketReturns::new`]) and shared by every security.

use chrono::NaiveDate;

use crate::beta::diagnostics::{FlagRule, LagResponse, PeerFlag};
use crate::beta::fitted_line::{self, FittedLine};
use crate::beta::rolling::{self, RollingPoint, Stability};
use crate::beta::{self, BetaEstimate, EstimatorSpec};
use crate::io::series::SeriesView;
use crate::market::sampling::{
    self, AlignedReturns, DroppedPeriods, Frequency, PeriodGrid, ReturnType, SampleWeekday,
};
use crate::stats::least_squares::one_slope;

/// Everything that decides an estimate, and nothing else: two equal specs on the same prices give
/// the same estimate, which is how a what-if knows it may reuse the estimates it has.
#[derive(Debug, Clone, PartialEq)]
pub struct EstimationSpec {
    pub frequency: Frequency,
    pub weekday: SampleWeekday,
    pub returns: ReturnType,
    /// Samples older than this many calendar days are dropped as stale.
    pub max_stale_days: Option<u32>,
    /// The last date of the window (its last sample point is on or before it).
    pub window_end: NaiveDate,
    /// Return periods in the window.
    pub lookback: u32,
    /// A security with fewer usable returns is an error, not a silent drop.
    pub min_observations: u32,
    pub estimator: EstimatorSpec,
    pub flags: FlagRule,
    pub rolling: RollingSpec,
    /// Whether each estimate carries its rolling betas (and so their range and trend): a case
    /// and `universe.rolling` ask for them; a what-if that reads only the WACC does not (the
    /// windows would cost more than the regression itself).
    pub rolling_betas: bool,
    /// Whether each estimate carries what only a case uses: every return's influence on the
    /// beta (the case's joint Monte Carlo) and the fitted line with its band (its charts). A
    /// whole-market table turns them off (the line is then empty); no statistic changes.
    pub case_extras: bool,
    /// Whether an OLS estimate carries its regression on the previous period's index return
    /// ([`LagResponse`], the `lagged_response` flag): outputs show it, so a case and a universe
    /// compute it; a what-if that reads only the WACC skips it unless the exclusion rule lists
    /// the flag (it can then move the aggregate).
    pub lag_response: bool,
}

/// Rolling betas: periods per window, periods between window ends, fewest observations.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct RollingSpec {
    pub window: u32,
    pub step: u32,
    pub min_observations: u32,
}

/// The return window of a spec: its period grid (widened by the estimator's lags) and the offsets
/// of the shifted index columns.
#[derive(Debug, Clone)]
pub struct Window {
    grid: PeriodGrid,
    /// Grid periods before the window, there only to feed lagged index returns.
    first: usize,
    offsets: Vec<i32>,
    all_period_ends: Vec<NaiveDate>,
}

impl Window {
    pub fn new(spec: &EstimationSpec) -> Window {
        let (lags, leads) = spec.estimator.market_lags_and_leads();
        let offsets = (1..=lags as i32)
            .map(|l| -l)
            .chain(1..=leads as i32)
            .collect();
        let grid = PeriodGrid::ending_at_with(
            spec.frequency,
            spec.weekday,
            spec.window_end,
            spec.lookback + lags,
        );
        let all_period_ends = grid.return_period_ends().to_vec();
        Window {
            grid,
            first: lags as usize,
            offsets,
            all_period_ends,
        }
    }

    /// The end dates of the window's return periods.
    pub fn period_ends(&self) -> &[NaiveDate] {
        &self.all_period_ends[self.first..]
    }

    /// The first sample point: the base price of the first return.
    pub fn start(&self) -> NaiveDate {
        self.grid.sample_points()[self.first]
    }

    /// The sample point before the last: the last period holds the prices dated after it and
    /// on or before [`Window::end`].
    pub fn last_period_opens(&self) -> NaiveDate {
        let points = self.grid.sample_points();
        points[points.len().saturating_sub(2)]
    }

    /// The last sample point.
    pub fn end(&self) -> NaiveDate {
        *self
            .grid
            .sample_points()
            .last()
            .expect("grid has sample points")
    }
}

/// The index's period returns (and the risk-free rate per period) over a window, computed once for
/// every security estimated against it.
#[derive(Debug, Clone)]
pub struct MarketReturns {
    returns: Vec<Option<f64>>,
    stale: Vec<bool>,
    risk_free: Option<Vec<Option<f64>>>,
    /// The index's excess return per grid period (its return without a risk-free series);
    /// `None` where the return or the rate is missing.
    excess: Vec<Option<f64>>,
}

impl MarketReturns {
    pub fn new(
        spec: &EstimationSpec,
        window: &Window,
        index: SeriesView<'_>,
        risk_free: Option<SeriesView<'_>>,
    ) -> MarketReturns {
        let (returns, stale) = sample_returns(spec, window, index);
        let risk_free = risk_free.map(|yields| {
            sampling::risk_free_for_returns(
                &sampling::sample(&window.grid, yields),
                spec.frequency,
                spec.returns,
            )
        });
        let excess = match &risk_free {
            Some(rates) => (returns.iter().zip(rates))
                .map(|(m, f)| m.zip(*f).map(|(m, f)| m - f))
                .collect(),
            None => returns.clone(),
        };
        MarketReturns {
            returns,
            stale,
            risk_free,
            excess,
        }
    }

    /// The index's period returns inside the window (`None` where a price is missing).
    pub fn window_returns(&self, window: &Window) -> &[Option<f64>] {
        &self.returns[window.first..]
    }

    /// Whether returns are in excess of a risk-free rate.
    pub fn excess(&self) -> bool {
        self.risk_free.is_some()
    }
}

/// One security's estimate, complete.
#[derive(Debug, Clone)]
pub struct SecurityEstimate {
    pub periods_in_window: usize,
    pub dropped: DroppedPeriods,
    pub estimate: BetaEstimate,
    /// Share of the window's periods dropped because the security's price was stale.
    pub stale_share: f64,
    /// The share of the returns used that are exactly zero (the same price at both ends of
    /// the period): flagged `zero_returns` above the rule's threshold.
    pub zero_return_share: f64,
    /// The slope on the index's previous-period return beside the current one (OLS only;
    /// `None` under Dimson or Scholes–Williams, which take it in, or when the periods with a
    /// previous index return are too few): flagged `lagged_response` when positive and
    /// significant.
    pub lag_response: Option<LagResponse>,
    pub flags: Vec<PeerFlag>,
    /// The flags that the spec's exclusion rule names: the security stays out of aggregates.
    pub excluding_flags: Vec<PeerFlag>,
    pub rolling: Vec<RollingPoint>,
    /// Range and trend of the rolling betas (`None` with fewer than two windows).
    pub stability: Option<Stability>,
    /// Why there is no `stability` (`None` when there is one).
    pub no_stability: Option<rolling::NoStability>,
    /// The fitted line α + β·x over the index returns used, with its 95% band.
    pub fitted_line: FittedLine,
    /// The aligned returns the estimate was made from.
    pub returns: AlignedReturns,
}

/// A security whose returns the index explains to more than this R² is the index, or a copy of
/// it such as a fund tracking it, not a firm: a case refuses it as a peer, a universe lists it
/// as not estimated. No listed firm's returns follow an index this closely.
pub const INDEX_COPY_R_SQUARED: f64 = 0.999;

/// How many dates from `start` to `end` (inclusive) `security` and `index` both have prices
/// for, when on every one of them the two prices are the same number (at least two such dates):
/// a copy of the index's price file with rows left out or added, which sampled on another day
/// can escape [`INDEX_COPY_R_SQUARED`]. `None` at the first date whose prices differ, so a
/// firm's series costs a comparison or two.
pub fn same_prices_as_index(
    security: SeriesView<'_>,
    index: SeriesView<'_>,
    (start, end): (NaiveDate, NaiveDate),
) -> Option<usize> {
    let from = security.dates.partition_point(|&d| d < start);
    let mut j = index.dates.partition_point(|&d| d < start);
    let mut shared = 0;
    for (date, price) in security.dates[from..].iter().zip(&security.values[from..]) {
        if *date > end {
            break;
        }
        while j < index.dates.len() && index.dates[j] < *date {
            j += 1;
        }
        if j < index.dates.len() && index.dates[j] == *date {
            if index.values[j] != *price {
                return None;
            }
            shared += 1;
        }
    }
    (shared >= 2).then_some(shared)
}

impl SecurityEstimate {
    /// Whether the index explains the returns to more than [`INDEX_COPY_R_SQUARED`].
    pub fn copies_index(&self) -> bool {
        self.estimate.r_squared > INDEX_COPY_R_SQUARED
    }

    /// Why the estimate says nothing when the security's returns (before any risk-free rate)
    /// are all the same over the aligned periods: a price that never moves, a suspended or
    /// stale line. Its beta of 0 and undefined R² carry no information; a case refuses such a
    /// peer and a universe lists such a security as not estimated.
    pub fn constant_price(&self) -> Option<String> {
        let asset = &self.returns.asset;
        self.returns.asset_is_constant().then(|| {
            format!(
                "its {} returns in the window are all {} (to the rounding of computing them): \
                 a price that never moves, or grows by one fixed rate, has zero variance in its \
                 returns, and its beta of 0 carries no information",
                asset.len(),
                crate::error::compact(asset[0])
            )
        })
    }
}

/// Why a security could not be estimated. The caller names the security and its file.
#[derive(Debug, Clone, PartialEq)]
pub enum EstimateError {
    /// Fewer usable returns than `min_observations`.
    TooFewReturns {
        usable: usize,
        dropped: DroppedPeriods,
    },
    /// The index's returns do not vary over the periods shared with the security.
    FlatIndex { periods: usize },
    /// The estimator refused the data (rank, …).
    Estimator(String),
    /// The estimator's settings that the observations cannot carry (too many lags, …): the
    /// caller words it with the setting to change.
    Settings(crate::error::EstimatorProblem),
}

impl From<crate::error::Error> for EstimateError {
    /// An estimator's refusal: its settings' problem kept in figures for the caller to word,
    /// anything else as its message.
    fn from(error: crate::error::Error) -> Self {
        match error {
            crate::error::Error::Estimator(problem) => EstimateError::Settings(problem),
            other => EstimateError::Estimator(other.to_string()),
        }
    }
}

/// Samples a price series onto the window's grid: period returns and which of them are stale.
fn sample_returns(
    spec: &EstimationSpec,
    window: &Window,
    prices: SeriesView<'_>,
) -> (Vec<Option<f64>>, Vec<bool>) {
    sampling::sampled_returns(&window.grid, prices, spec.max_stale_days, spec.returns)
}

/// The shares the flags read: of the window's periods with a stale price, and of the returns
/// used that are exactly zero (0 when there are none).
fn flag_shares(aligned: &sampling::AlignedReturns, periods_in_window: usize) -> (f64, f64) {
    let returns = &aligned.asset;
    let zero = match returns.len() {
        0 => 0.0,
        n => returns.iter().filter(|r| **r == 0.0).count() as f64 / n as f64,
    };
    let stale = aligned.dropped.asset_stale as f64 / periods_in_window as f64;
    (stale, zero)
}

/// The OLS regression on the index's current and previous-period returns ([`LagResponse`]),
/// for an OLS estimate, over the periods of `aligned` (the estimate's own) whose previous
/// period's index excess return is known: the window's first period (whose previous one lies
/// before the window) and any period after a missing index return or rate drop out. (A Dimson
/// estimate with one lag widens its grid by a period and keeps the first, so its beta can
/// differ from this regression's summed slopes.) `asset` and `current` are `aligned`'s excess
/// returns; `newey_west_lags` the estimate's.
fn lag_response(
    spec: &EstimationSpec,
    window: &Window,
    market: &MarketReturns,
    aligned: &AlignedReturns,
    (asset, current): (&[f64], &[f64]),
    newey_west_lags: Option<usize>,
) -> Option<LagResponse> {
    if spec.estimator.method != beta::BetaMethod::Ols || !spec.lag_response {
        return None;
    }
    let capacity = asset.len();
    let (mut y, mut x, mut previous) = (
        Vec::with_capacity(capacity),
        Vec::with_capacity(capacity),
        Vec::with_capacity(capacity),
    );
    // The aligned periods are a subsequence of the grid's: one pass over both finds each
    // one's place, carrying the index excess return of the grid period before it (none before
    // the grid's first period).
    let mut grid = window.all_period_ends.iter().zip(&market.excess);
    let mut last: Option<f64> = None;
    let rows = (aligned.period_ends.iter()).zip(asset.iter().zip(current));
    for (end, (&a, &m)) in rows {
        for (period, &excess) in grid.by_ref() {
            let before = std::mem::replace(&mut last, excess);
            if period == end {
                if let Some(before) = before {
                    y.push(a);
                    x.push(m);
                    previous.push(before);
                }
                break;
            }
        }
    }
    let n = y.len();
    // Dimson's own rule (beta::estimate_with): at least four observations per shifted column
    // beyond it, and Newey–West lags under a quarter of the observations. The lags are the
    // estimate's (found by review: the rule on one period fewer could give one lag less).
    if n <= 4 || newey_west_lags.is_some_and(|l| 4 * l >= n) {
        return None;
    }
    let errors = (spec.estimator.std_errors, newey_west_lags.unwrap_or(0));
    let fit = one_slope(&[&x, &previous], &y, 1, errors).ok()?;
    let response = LagResponse {
        slope: fit.estimate,
        std_error: fit.std_error,
        t_stat: fit.t_stat,
        p_value: fit.p_value,
        summed_beta: fit.slopes[0] + fit.estimate,
        observations: n,
        newey_west_lags,
    };
    // An exact fit leaves no error to test against: no statistic rather than an infinite t.
    let finite = [response.std_error, response.t_stat, response.p_value];
    (finite.iter().all(|v| v.is_finite()) && response.std_error > 0.0).then_some(response)
}

/// The fitted line and its band over the range of the index returns the regression saw.
fn line_over(estimate: &beta::BetaEstimate, market_excess: &[f64]) -> FittedLine {
    let (x_min, x_max) = market_excess
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(low, high), &x| {
            (low.min(x), high.max(x))
        });
    fitted_line::fitted_line(estimate, x_min, x_max)
}

/// Whether the index's returns over the aligned periods are all the same, raw or in excess of
/// the rate: with a risk-free series, a flat index would leave only the rate's own variation in
/// the excess returns. To rounding (found by review: 100·1.005ⁿ gave −7e13).
fn flat_index(raw: &[f64], excess: &[f64]) -> bool {
    let constant = crate::market::sampling::constant_up_to_rounding;
    constant(raw) || constant(excess)
}

/// The rolling betas over `aligned`'s periods, of the excess returns `(asset, market)`.
fn rolling_points(
    spec: &EstimationSpec,
    window: &Window,
    aligned: &AlignedReturns,
    (asset, market): (&[f64], &[f64]),
) -> Vec<rolling::RollingPoint> {
    let series = rolling::RollingSeries {
        asset,
        market,
        asset_raw: &aligned.asset,
        market_raw: &aligned.market,
        shifted: &aligned.market_shifted,
    };
    rolling::rolling_betas(
        window.period_ends(),
        &aligned.period_ends,
        series,
        &rolling_spec(spec),
    )
}

/// The rolling betas' spec: the estimator's method and standard errors, the spec's windows.
fn rolling_spec(spec: &EstimationSpec) -> rolling::RollingSpec {
    rolling::RollingSpec {
        method: spec.estimator.method,
        std_errors: spec.estimator.std_errors,
        newey_west_lags: spec.estimator.newey_west_lags.map(|l| l as usize),
        window: spec.rolling.window as usize,
        step: spec.rolling.step as usize,
        min_observations: spec.rolling.min_observations as usize,
    }
}

/// The security's sampled returns aligned with the index's (and the rate's) over the window,
/// with the periods dropped and why.
fn aligned_returns(
    spec: &EstimationSpec,
    window: &Window,
    market: &MarketReturns,
    prices: SeriesView<'_>,
) -> AlignedReturns {
    let (asset_returns, asset_stale) = sample_returns(spec, window, prices);
    let stale = sampling::StalePeriods {
        asset: &asset_stale,
        market: &market.stale,
    };
    sampling::align_with_shifts(
        &window.all_period_ends,
        &asset_returns,
        &market.returns,
        market.risk_free.as_deref(),
        stale,
        &window.offsets,
        window.first,
    )
}

/// A security's rolling betas, their range and trend, and why there is none.
type RollingPart = (
    Vec<rolling::RollingPoint>,
    Option<rolling::Stability>,
    Option<rolling::NoStability>,
);

/// The rolling betas over the aligned excess returns, their range and trend, and why there is
/// none when there is none; nothing when the spec asks for no rolling betas.
fn rolling_part(
    spec: &EstimationSpec,
    window: &Window,
    aligned: &AlignedReturns,
    excess: (&[f64], &[f64]),
) -> Result<RollingPart, EstimateError> {
    if !spec.rolling_betas {
        return Ok((Vec::new(), None, None));
    }
    let points = rolling_points(spec, window, aligned, excess);
    let laid = rolling::laid_window_ends(window.period_ends(), &rolling_spec(spec));
    let stability = rolling::stability(&points, spec.rolling.window, &laid)
        .map_err(|e| EstimateError::Estimator(e.to_string()))?;
    let no_stability = stability.is_none().then(|| {
        let periods = window.period_ends().len();
        let shifted = aligned.market_shifted.len();
        rolling::NoStability::of(&rolling_spec(spec), periods, shifted)
    });
    Ok((points, stability, no_stability))
}

/// Estimates one security against the index returns of `market`.
pub fn estimate_security(
    spec: &EstimationSpec,
    window: &Window,
    market: &MarketReturns,
    prices: SeriesView<'_>,
) -> Result<SecurityEstimate, EstimateError> {
    let aligned = aligned_returns(spec, window, market, prices);
    let n = aligned.asset.len();
    if n < spec.min_observations as usize {
        return Err(EstimateError::TooFewReturns {
            usable: n,
            dropped: aligned.dropped,
        });
    }
    let market_excess = aligned.market_excess();
    if flat_index(&aligned.market, &market_excess) {
        return Err(EstimateError::FlatIndex { periods: n });
    }
    let asset_excess = aligned.asset_excess();
    let estimate = beta::estimate_with_influence(
        &spec.estimator,
        &asset_excess,
        &market_excess,
        &aligned.market_shifted,
        spec.case_extras,
    )
    .map_err(EstimateError::from)?;
    let periods_in_window = window.period_ends().len();
    let (rolling_points, stability, no_stability) =
        rolling_part(spec, window, &aligned, (&asset_excess, &market_excess))?;
    let fitted_line = match spec.case_extras {
        true => line_over(&estimate, &market_excess),
        false => FittedLine::default(),
    };
    let shares = flag_shares(&aligned, periods_in_window);
    let lag_response = lag_response(
        spec,
        window,
        market,
        &aligned,
        (&asset_excess, &market_excess),
        estimate.newey_west_lags,
    );
    let flags = spec
        .flags
        .flags(&estimate, periods_in_window, shares, lag_response.as_ref());
    let excluding_flags = spec.flags.excluding(&flags);
    Ok(SecurityEstimate {
        periods_in_window,
        dropped: aligned.dropped,
        estimate,
        stale_share: shares.0,
        zero_return_share: shares.1,
        lag_response,
        flags,
        excluding_flags,
        rolling: rolling_points,
        stability,
        no_stability,
        fitted_line,
        returns: aligned,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn day(d: u32) -> NaiveDate {
        NaiveDate::from_ymd_opt(2026, 3, d).unwrap()
    }

    // By hand: the index's prices on 2–6 March; a copy missing 4 March shares 4 dates, all
    // equal; a firm differing on one date in the window is no copy; dates outside the window
    // are not looked at; a single shared date is not enough to call it a copy.
    #[test]
    fn a_copy_of_the_index_prices_is_told_by_every_shared_date() {
        let dates = [day(2), day(3), day(4), day(5), day(6)];
        let levels = [100.0, 101.0, 99.5, 102.0, 103.0];
        let index = SeriesView {
            dates: &dates,
            values: &levels,
        };
        let window = (day(2), day(6));
        let copy_dates = [day(2), day(3), day(5), day(6)];
        let copy = [100.0, 101.0, 102.0, 103.0];
        let security = SeriesView {
            dates: &copy_dates,
            values: &copy,
        };
        assert_eq!(same_prices_as_index(security, index, window), Some(4));
        let firm = [100.0, 101.0, 102.5, 103.0];
        let security = SeriesView {
            dates: &copy_dates,
            values: &firm,
        };
        assert_eq!(same_prices_as_index(security, index, window), None);
        // Outside the window the differing price is not looked at.
        assert_eq!(
            same_prices_as_index(security, index, (day(2), day(3))),
            Some(2)
        );
        assert_eq!(
            same_prices_as_index(security, index, (day(6), day(6))),
            None
        );
    }
}
