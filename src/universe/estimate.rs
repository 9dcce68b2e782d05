//! The universe's use of the estimate layer: the window and the index's returns built once, then
//! one call of [`crate::estimate::estimate_security`] per security — the call a case makes for a
//! peer, with the spec a case with the same `[beta]` would build — so a security's figures equal
//! that case's.
//!
//! What the universe keeps of each estimate is small: the regression, its diagnostics and the
//! dropped periods; the aligned returns are dropped at once (5,000 securities' returns would
//! otherwise hold hundreds of megabytes), and the rolling betas are computed only when asked for.
//! A security the case would refuse (too few usable returns, a flat index over its periods, an
//! estimator that cannot be fitted) is not an error here: it is listed with the reason.

use chrono::NaiveDate;
use serde::Serialize;

use crate::beta::diagnostics::{LagResponse, PeerFlag};
use crate::beta::rolling::{RollingPoint, Stability};
use crate::beta::BetaEstimate;
use crate::case::sanity::{implausible_move, significant, JUMP_FACTOR};
use crate::estimate::{
    self, EstimateError, EstimationSpec, MarketReturns, Window, INDEX_COPY_R_SQUARED,
};
use crate::io::series::{iso_date, Series, SeriesView};
use crate::market::sampling::{self, DroppedPeriods};
use crate::panel::Panel;

/// Why a security has no estimate.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum NotEstimated {
    /// Fewer usable returns than `beta.min_observations`.
    TooFewObservations,
    /// The index returns do not vary over the periods aligned with the security.
    FlatIndex,
    /// A price moves by more than the case's plausibility bound (a factor of 3 up or down)
    /// between two consecutive rows in the window: an unadjusted split or a bad price, whose
    /// return would swamp the regression (the rule a case applies to a price file).
    PriceJump,
    /// The security's own returns do not vary: a price that never moves over the window (a
    /// suspended or stale line), whose beta of 0 would pull its industry towards zero.
    FlatPrices,
    /// The index explains the security's returns almost wholly (R² above
    /// [`INDEX_COPY_R_SQUARED`]), or its prices are the index's on every date both have
    /// ([`estimate::same_prices_as_index`]): the index itself or a fund tracking it, not a firm;
    /// its beta of 1 would pull its industry towards the market's (the rules a case applies to
    /// a peer).
    CopiesIndex,
    /// The estimator could not be fitted (e.g. too many lags for the observations).
    EstimatorFailed,
}

impl NotEstimated {
    pub const ALL: [NotEstimated; 6] = [
        NotEstimated::TooFewObservations,
        NotEstimated::FlatIndex,
        NotEstimated::PriceJump,
        NotEstimated::FlatPrices,
        NotEstimated::CopiesIndex,
        NotEstimated::EstimatorFailed,
    ];

    /// The reason's name in outputs.
    pub fn name(self) -> &'static str {
        match self {
            NotEstimated::TooFewObservations => "too_few_observations",
            NotEstimated::FlatIndex => "flat_index",
            NotEstimated::PriceJump => "price_jump",
            NotEstimated::FlatPrices => "flat_prices",
            NotEstimated::CopiesIndex => "copies_index",
            NotEstimated::EstimatorFailed => "estimator_failed",
        }
    }
}

/// A security's regression and its diagnostics.
#[derive(Debug, Clone)]
pub struct Estimated {
    pub estimate: BetaEstimate,
    pub periods_in_window: usize,
    pub stale_share: f64,
    pub zero_return_share: f64,
    /// The slope on the index's previous-period return (OLS only).
    pub lag_response: Option<LagResponse>,
    pub flags: Vec<PeerFlag>,
    /// The flags `beta.exclude_flags` names: the security stays out of the aggregates.
    pub excluding_flags: Vec<PeerFlag>,
    pub stability: Option<Stability>,
}

/// What estimating one security gave.
#[derive(Debug, Clone)]
pub struct SecurityEstimate {
    pub periods_dropped: Option<DroppedPeriods>,
    /// The usable returns in the window, also for a security not estimated (too few of them,
    /// a flat index over them, or a regression whose result is set aside); `None` when the
    /// returns were never counted (a price jump, an estimator that failed).
    pub observations: Option<usize>,
    pub outcome: Result<Estimated, (NotEstimated, String)>,
    /// Rolling OLS betas, when asked for.
    pub rolling: Vec<RollingPoint>,
}

/// The first move beyond the case's plausibility bound between two consecutive prices, the
/// later dated inside the window (after its first sample point, up to its last), in words.
fn first_jump(prices: SeriesView<'_>, start: NaiveDate, end: NaiveDate) -> Option<String> {
    let (dates, values) = (prices.dates, prices.values);
    let from = dates.partition_point(|&d| d <= start).max(1);
    let to = dates.partition_point(|&d| d <= end);
    let i = (from..to).find(|&i| implausible_move(values[i - 1], values[i]))?;
    let show = crate::error::compact;
    Some(format!(
        "its price moves from {} on {} to {} on {}, by a factor of {}, beyond the plausibility \
         bound of {JUMP_FACTOR} up or down between two rows: an unadjusted split or a bad price \
         (a case refuses such a file unless the move is accepted)",
        show(values[i - 1]),
        dates[i - 1],
        show(values[i]),
        dates[i],
        significant(values[i] / values[i - 1])
    ))
}

/// The spec, the window and the index's returns, shared by every security of a run.
#[derive(Debug, Clone)]
pub struct Estimation {
    spec: EstimationSpec,
    window: Window,
    market: MarketReturns,
    /// The index's prices inside the window, to tell a copy of them.
    index: Series,
}

impl Estimation {
    /// Builds the window of `spec` and samples the index (and the risk-free series) once.
    /// Rolling betas are computed only with `rolling`; the case's extras (influence terms,
    /// fitted line) are always off.
    pub fn new(
        mut spec: EstimationSpec,
        index: SeriesView<'_>,
        risk_free: Option<SeriesView<'_>>,
        rolling: bool,
    ) -> Estimation {
        spec.rolling_betas = rolling;
        // Influence terms and the fitted line serve a case's Monte Carlo and charts only.
        spec.case_extras = false;
        let window = Window::new(&spec);
        let market = MarketReturns::new(&spec, &window, index, risk_free);
        let from = index.dates.partition_point(|&d| d < window.start());
        let to = index.dates.partition_point(|&d| d <= window.end());
        let index = Series {
            dates: index.dates[from..to].to_vec(),
            values: index.values[from..to].to_vec(),
        };
        Estimation {
            spec,
            window,
            market,
            index,
        }
    }

    pub fn window(&self) -> &Window {
        &self.window
    }

    /// The index's return in each period of the window (`None` where a price is missing).
    pub fn index_window_returns(&self) -> &[Option<f64>] {
        self.market.window_returns(&self.window)
    }

    /// Why a security is not estimated at all, from its prices alone: an implausible move in
    /// the window, or the index's prices on every date both have.
    fn refused_before_estimating(&self, prices: SeriesView<'_>) -> Option<(NotEstimated, String)> {
        let bounds = (self.window.start(), self.window.end());
        if let Some(detail) = first_jump(prices, bounds.0, bounds.1) {
            return Some((NotEstimated::PriceJump, detail));
        }
        let shared = estimate::same_prices_as_index(prices, self.index.view(), bounds)?;
        Some((
            NotEstimated::CopiesIndex,
            format!(
                "its prices equal the index's on all {shared} dates in the window that both \
                 have: a copy of the index's prices, not a firm"
            ),
        ))
    }

    /// One security, as a case estimates a peer.
    pub fn security(&self, prices: SeriesView<'_>) -> SecurityEstimate {
        if let Some(refused) = self.refused_before_estimating(prices) {
            return SecurityEstimate {
                periods_dropped: None,
                observations: None,
                outcome: Err(refused),
                rolling: Vec::new(),
            };
        }
        let estimated = estimate::estimate_security(&self.spec, &self.window, &self.market, prices);
        let unfit = estimated
            .as_ref()
            .ok()
            .and_then(|e| match e.constant_price() {
                Some(reason) => Some((NotEstimated::FlatPrices, reason)),
                None => e.copies_index().then(|| {
                    let r_squared = crate::error::compact(e.estimate.r_squared);
                    let reason = format!(
                        "the index explains its returns with R² = {r_squared} (above \
                     {INDEX_COPY_R_SQUARED}): the index itself or a fund tracking it, not a firm"
                    );
                    (NotEstimated::CopiesIndex, reason)
                }),
            });
        match (estimated, unfit) {
            (Ok(e), Some(unfit)) => SecurityEstimate {
                periods_dropped: Some(e.dropped),
                observations: Some(e.estimate.observations),
                outcome: Err(unfit),
                rolling: Vec::new(),
            },
            (Ok(e), None) => SecurityEstimate {
                periods_dropped: Some(e.dropped),
                observations: Some(e.estimate.observations),
                outcome: Ok(Estimated {
                    estimate: e.estimate,
                    periods_in_window: e.periods_in_window,
                    stale_share: e.stale_share,
                    zero_return_share: e.zero_return_share,
                    lag_response: e.lag_response,
                    flags: e.flags,
                    excluding_flags: e.excluding_flags,
                    stability: e.stability,
                }),
                rolling: e.rolling,
            },
            (Err(EstimateError::TooFewReturns { usable, dropped }), _) => SecurityEstimate {
                periods_dropped: Some(dropped),
                observations: Some(usable),
                outcome: Err((
                    NotEstimated::TooFewObservations,
                    self.too_few(usable, &dropped),
                )),
                rolling: Vec::new(),
            },
            (Err(EstimateError::FlatIndex { periods }), _) => SecurityEstimate {
                periods_dropped: None,
                observations: Some(periods),
                outcome: Err((
                    NotEstimated::FlatIndex,
                    format!(
                        "the index returns have zero variance over the {periods} periods aligned"
                    ),
                )),
                rolling: Vec::new(),
            },
            (Err(EstimateError::Estimator(message)), _) => estimator_failed(message),
            (Err(EstimateError::Settings(problem)), _) => {
                estimator_failed(crate::case::wording::estimator_failure(&problem))
            }
        }
    }

    /// Why a security with `usable` returns is not estimated, in words.
    fn too_few(&self, usable: usize, dropped: &DroppedPeriods) -> String {
        format!(
            "{usable} usable returns in the window of {} periods (dropped {}: price missing {}, \
             index price missing {}, risk-free missing {}); beta.min_observations = {}",
            self.window.period_ends().len(),
            dropped.total,
            dropped.asset_missing,
            dropped.market_missing,
            dropped.risk_free_missing,
            self.spec.min_observations,
        )
    }

    /// The window as the receipt records it.
    pub fn record(&self) -> WindowRecord {
        WindowRecord {
            frequency: self.spec.frequency,
            lookback: self.spec.lookback,
            periods: self.window.period_ends().len(),
            min_observations: self.spec.min_observations,
            window_start: self.window.start(),
            window_end: self.window.end(),
            excess_returns: self.market.excess(),
            sampling_rule: sampling::rule_text(self.spec.frequency),
            rolling_window: self.spec.rolling_betas.then_some(self.spec.rolling.window),
            rolling_min_observations: self
                .spec
                .rolling_betas
                .then_some(self.spec.rolling.min_observations),
        }
    }
}

/// A security estimated while the panel was read: its id, its number of prices, its estimate.
pub type EarlyEstimate = (String, usize, SecurityEstimate);

/// Securities estimated while the panel was still being read (handed out by the reader as
/// their rows were complete), with the spec they were estimated under.
#[derive(Debug, Clone, Default)]
pub struct EarlyEstimates {
    spec: Option<(EstimationSpec, bool)>,
    found: Vec<EarlyEstimate>,
}

impl EarlyEstimates {
    pub fn new(spec: EstimationSpec, rolling: bool, found: Vec<EarlyEstimate>) -> Self {
        EarlyEstimates {
            spec: Some((spec, rolling)),
            found,
        }
    }

    /// One entry per security of `panel`: its early estimate where it holds — the panel's rows
    /// came in whole runs (so each hand-out was a security's whole series), the spec is the
    /// one asked for, and the count of prices agrees — else `None`, to be estimated now.
    pub fn for_panel(
        &self,
        panel: &Panel,
        spec: &EstimationSpec,
        rolling: bool,
    ) -> Vec<Option<SecurityEstimate>> {
        let mut out = vec![None; panel.len()];
        let same_spec = self
            .spec
            .as_ref()
            .is_some_and(|(s, r)| s == spec && *r == rolling);
        if !(same_spec && panel.whole_runs()) {
            return out;
        }
        for (security, prices, estimate) in &self.found {
            if let Some(i) = panel.position(security) {
                if panel.series(i).values.len() == *prices {
                    out[i] = Some(estimate.clone());
                }
            }
        }
        out
    }
}

/// The window as the receipt records it.
#[derive(Debug, Clone, Serialize)]
pub struct WindowRecord {
    pub frequency: sampling::Frequency,
    pub lookback: u32,
    /// Return periods in the window.
    pub periods: usize,
    pub min_observations: u32,
    /// The first sample point (the base price of the first return).
    #[serde(serialize_with = "iso_date")]
    pub window_start: NaiveDate,
    /// The last sample point.
    #[serde(serialize_with = "iso_date")]
    pub window_end: NaiveDate,
    pub excess_returns: bool,
    pub sampling_rule: &'static str,
    /// Return periods per rolling window, as resolved (`beta.rolling_window`, else half the
    /// window's periods, at least 3); `null` without `universe.rolling`.
    pub rolling_window: Option<u32>,
    /// Fewest observations in a rolling window, as resolved; `null` without `universe.rolling`.
    pub rolling_min_observations: Option<u32>,
}

/// A security the estimator refused, with why.
fn estimator_failed(message: String) -> SecurityEstimate {
    SecurityEstimate {
        periods_dropped: None,
        observations: None,
        outcome: Err((NotEstimated::EstimatorFailed, message)),
        rolling: Vec::new(),
    }
}

/// Why the universe cannot be estimated over this index, naming it, as a case refuses it: too
/// few index returns in the window for any security to pass (found by review: quarterly returns
/// over a short index ran with none of 48 securities estimated, exit 0), or returns all the same
/// (found by review: every security was left unestimated, and under Vasicek the prior was
/// blamed); only enough returns can be called flat (found by review: one was "all the same").
pub(super) fn index_refusal(
    estimation: &Estimation,
    least: u32,
    index: &crate::io::series::DataFile,
) -> Option<String> {
    let returns = estimation.index_window_returns();
    let present: Vec<f64> = returns.iter().flatten().copied().collect();
    if present.len() < least as usize {
        let window = estimation.window();
        return Some(format!(
            "{} of the window's {} periods ({} to {}) have an index return, fewer than \
             beta.min_observations = {least}, so no security could pass; its prices run from {} \
             to {}: move universe.valuation_date, or shorten the window (beta.lookback or \
             beta.window_start), so that it lies inside them, or take a lower beta.frequency \
             for prices too sparse for these returns",
            present.len(),
            returns.len(),
            window.start(),
            window.end(),
            index.first_date,
            index.last_date
        ));
    }
    crate::valuation::sanity::flat_index_message(&present)
}
