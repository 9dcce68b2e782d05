//! One security's beta on the universe's window: the sampling, alignment, estimator and flags a
//! case applies to a peer, so a security's figures equal those of a case that lists it as a peer
//! with the same settings.
//!
//! The window — grid, index returns, risk-free rates — is built once in [`Window::new`] and
//! shared by every security; [`estimate_security`] is then a pure function of one series view,
//! called for thousands of securities in parallel. A security the case would refuse (too few
//! usable returns, a flat index over its periods, an estimator that cannot be fitted) is not an
//! error here: it is listed with the reason.

use chrono::NaiveDate;
use serde::Serialize;

use crate::beta::{self, BetaEstimate};
use crate::case::{BetaSettings, PeerFlag};
use crate::data::{iso_date, SeriesView};
use crate::rolling::{self, RollingPoint};
use crate::sampling::{self, DroppedPeriods, PeriodGrid};

/// The return window every security is estimated on.
#[derive(Debug, Clone)]
pub struct Window {
    pub settings: BetaSettings,
    pub grid: PeriodGrid,
    /// Lags of the market return the method needs: the grid starts this many periods early.
    pub first: usize,
    pub offsets: Vec<i32>,
    /// Return periods in the window.
    pub lookback: u32,
    pub market_returns: Vec<Option<f64>>,
    pub market_stale: Vec<bool>,
    pub risk_free: Option<Vec<Option<f64>>>,
    /// The first and last sample points of the window.
    pub start: NaiveDate,
    pub end: NaiveDate,
}

impl Window {
    /// The window of `settings` ending at the valuation date, with the index's returns and the
    /// risk-free rate of each period sampled once.
    pub fn new(
        settings: &BetaSettings,
        valuation_date: NaiveDate,
        index: SeriesView<'_>,
        risk_free: Option<SeriesView<'_>>,
    ) -> Window {
        let (lags, leads) = settings.market_lags_and_leads();
        let offsets: Vec<i32> = (1..=lags as i32)
            .map(|l| -l)
            .chain(1..=leads as i32)
            .collect();
        let lookback = settings.lookback_periods(valuation_date);
        let grid = PeriodGrid::ending_at_with(
            settings.frequency,
            settings.weekday,
            settings.window_end_date(valuation_date),
            lookback + lags,
        );
        let (samples, stale) =
            sampling::sample_with_staleness(&grid, index, settings.max_stale_days);
        let risk_free = risk_free.map(|series| {
            sampling::risk_free_for_returns(
                &sampling::sample(&grid, series),
                settings.frequency,
                settings.returns,
            )
        });
        let first = lags as usize;
        Window {
            start: grid.sample_points()[first],
            end: *grid.sample_points().last().expect("grid has sample points"),
            market_returns: sampling::period_returns(&samples, settings.returns),
            market_stale: sampling::stale_returns(&stale),
            settings: settings.clone(),
            grid,
            first,
            offsets,
            lookback,
            risk_free,
        }
    }

    /// The end dates of the window's return periods.
    pub fn period_ends(&self) -> &[NaiveDate] {
        &self.grid.return_period_ends()[self.first..]
    }
}

/// Why a security has no estimate.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum NotEstimated {
    /// Fewer usable returns than `beta.min_observations`.
    TooFewObservations,
    /// The index returns do not vary over the periods aligned with the security.
    FlatIndex,
    /// The estimator could not be fitted (e.g. too many lags for the observations).
    EstimatorFailed,
}

impl NotEstimated {
    pub const ALL: [NotEstimated; 3] = [
        NotEstimated::TooFewObservations,
        NotEstimated::FlatIndex,
        NotEstimated::EstimatorFailed,
    ];

    /// The reason's name in outputs.
    pub fn name(self) -> &'static str {
        match self {
            NotEstimated::TooFewObservations => "too_few_observations",
            NotEstimated::FlatIndex => "flat_index",
            NotEstimated::EstimatorFailed => "estimator_failed",
        }
    }
}

/// A security's regression and its diagnostics.
#[derive(Debug, Clone, Serialize)]
pub struct Estimated {
    pub estimate: BetaEstimate,
    pub stale_share: f64,
    pub flags: Vec<PeerFlag>,
}

/// What estimating one security gave.
#[derive(Debug, Clone, Serialize)]
pub struct SecurityEstimate {
    pub periods_dropped: DroppedPeriods,
    /// Usable returns (both prices, the index and the risk-free rate present).
    pub observations: usize,
    pub outcome: Result<Estimated, (NotEstimated, String)>,
    /// Rolling OLS betas, when asked for.
    #[serde(skip)]
    pub rolling: Vec<RollingPoint>,
}

/// One security through the case's peer steps: sample, align, estimate, flag.
pub fn estimate_security(
    window: &Window,
    series: SeriesView<'_>,
    with_rolling: bool,
) -> SecurityEstimate {
    let settings = &window.settings;
    let (samples, stale) =
        sampling::sample_with_staleness(&window.grid, series, settings.max_stale_days);
    let asset_returns = sampling::period_returns(&samples, settings.returns);
    let asset_stale = sampling::stale_returns(&stale);
    let first = window.first;
    let mut aligned = sampling::align_with_shifts(
        window.grid.return_period_ends(),
        &asset_returns,
        &window.market_returns,
        window.risk_free.as_deref(),
        &window.offsets,
        first,
    );
    aligned.dropped.asset_stale = asset_stale[first..].iter().filter(|&&s| s).count();
    aligned.dropped.market_stale = window.market_stale[first..].iter().filter(|&&s| s).count();
    let periods = window.period_ends().len();
    let n = aligned.asset.len();
    let not = |reason: NotEstimated, message: String| SecurityEstimate {
        periods_dropped: aligned.dropped,
        observations: n,
        outcome: Err((reason, message)),
        rolling: Vec::new(),
    };
    if n < settings.min_observations as usize {
        let d = aligned.dropped;
        return not(
            NotEstimated::TooFewObservations,
            format!(
                "{n} usable returns in the window of {periods} periods (dropped {}: price \
                 missing {}, index price missing {}, risk-free missing {}); \
                 beta.min_observations = {}",
                d.total,
                d.asset_missing,
                d.market_missing,
                d.risk_free_missing,
                settings.min_observations
            ),
        );
    }
    let market_excess = aligned.market_excess();
    let constant = |values: &[f64]| values.iter().all(|&m| m == values[0]);
    if constant(&aligned.market) || constant(&market_excess) {
        return not(
            NotEstimated::FlatIndex,
            format!("the index returns have zero variance over the {n} periods aligned"),
        );
    }
    let asset_excess = aligned.asset_excess();
    let estimate = match beta::estimate_with(
        settings,
        &asset_excess,
        &market_excess,
        &aligned.market_shifted,
    ) {
        Ok(estimate) => estimate,
        Err(e) => return not(NotEstimated::EstimatorFailed, e.to_string()),
    };
    let stale_share = aligned.dropped.asset_stale as f64 / periods as f64;
    let rolling = if with_rolling {
        let (window_length, min) = settings.rolling(window.lookback);
        rolling::rolling_betas(
            window.period_ends(),
            &aligned.period_ends,
            &asset_excess,
            &market_excess,
            window_length as usize,
            settings.rolling_step as usize,
            min as usize,
        )
    } else {
        Vec::new()
    };
    SecurityEstimate {
        periods_dropped: aligned.dropped,
        observations: n,
        outcome: Ok(Estimated {
            flags: flags(settings, &estimate, periods, stale_share),
            estimate,
            stale_share,
        }),
        rolling,
    }
}

/// The diagnostic flags of an estimate against the thresholds of `[beta]`, as a case sets them.
fn flags(
    settings: &BetaSettings,
    estimate: &BetaEstimate,
    periods_in_window: usize,
    stale_share: f64,
) -> Vec<PeerFlag> {
    let mut flags = Vec::new();
    if (estimate.observations as f64) < settings.flag_observations_share * periods_in_window as f64
    {
        flags.push(PeerFlag::TooFewObservations);
    }
    if estimate.r_squared < settings.flag_r_squared_floor {
        flags.push(PeerFlag::LowRSquared);
    }
    if stale_share > settings.flag_stale_share {
        flags.push(PeerFlag::StalePrices);
    }
    flags
}

/// The window as the receipt records it.
#[derive(Debug, Clone, Serialize)]
pub struct WindowRecord {
    pub frequency: sampling::Frequency,
    pub lookback: u32,
    pub min_observations: u32,
    #[serde(serialize_with = "iso_date")]
    pub window_start: NaiveDate,
    #[serde(serialize_with = "iso_date")]
    pub window_end: NaiveDate,
    pub excess_returns: bool,
    pub sampling_rule: &'static str,
}

impl Window {
    pub fn record(&self) -> WindowRecord {
        WindowRecord {
            frequency: self.settings.frequency,
            lookback: self.lookback,
            min_observations: self.settings.min_observations,
            window_start: self.start,
            window_end: self.end,
            excess_returns: self.risk_free.is_some(),
            sampling_rule: sampling::rule_text(self.settings.frequency),
        }
    }
}
