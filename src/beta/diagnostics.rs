//! Diagnostic flags on a beta estimate: warnings a reviewer should see before trusting a peer's
//! beta, and the rule that leaves flagged peers out of an aggregate.

use serde::{Deserialize, Serialize};

use super::BetaEstimate;

/// A diagnostic warning on a peer's estimate.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PeerFlag {
    TooFewObservations,
    LowRSquared,
    StalePrices,
    ZeroReturns,
    LaggedResponse,
}

impl PeerFlag {
    /// The flag's name as the case file and `result.json` write it.
    pub fn name(self) -> &'static str {
        match self {
            PeerFlag::TooFewObservations => "too_few_observations",
            PeerFlag::LowRSquared => "low_r_squared",
            PeerFlag::StalePrices => "stale_prices",
            PeerFlag::ZeroReturns => "zero_returns",
            PeerFlag::LaggedResponse => "lagged_response",
        }
    }
}

/// The thresholds behind the flags, and which flags leave a security out of an aggregate.
#[derive(Debug, Clone, PartialEq)]
pub struct FlagRule {
    /// Flag `too_few_observations` below this share of the window's periods.
    pub observations_share: f64,
    /// Flag `low_r_squared` below this R².
    pub r_squared_floor: f64,
    /// Flag `stale_prices` when more than this share of the window's periods had a stale price.
    pub stale_share: f64,
    /// Flag `zero_returns` when more than this share of the returns used are exactly zero: a
    /// price repeated from one period to the next, as a data vendor fills days without a
    /// trade (the share of zero returns as a measure of illiquidity: Lesmond, Ogden and
    /// Trzcinka 1999, Review of Financial Studies 12(5)).
    pub zero_return_share: f64,
    /// Flag `lagged_response` when the slope on the index's previous-period return
    /// ([`LagResponse`]) is positive with a two-sided p-value below this (0 never flags).
    pub lag_p_value: f64,
    /// Securities raising any of these flags stay out of aggregates (they are still shown).
    pub exclude: Vec<PeerFlag>,
}

impl FlagRule {
    /// The flags an estimate raises against these thresholds.
    pub fn flags(
        &self,
        estimate: &BetaEstimate,
        periods_in_window: usize,
        (stale_share, zero_return_share): (f64, f64),
        lag: Option<&LagResponse>,
    ) -> Vec<PeerFlag> {
        let mut flags = Vec::new();
        if (estimate.observations as f64) < self.observations_share * periods_in_window as f64 {
            flags.push(PeerFlag::TooFewObservations);
        }
        if estimate.r_squared < self.r_squared_floor {
            flags.push(PeerFlag::LowRSquared);
        }
        if stale_share > self.stale_share {
            flags.push(PeerFlag::StalePrices);
        }
        if zero_return_share > self.zero_return_share {
            flags.push(PeerFlag::ZeroReturns);
        }
        if lag.is_some_and(|l| l.slope > 0.0 && l.p_value < self.lag_p_value) {
            flags.push(PeerFlag::LaggedResponse);
        }
        flags
    }

    /// Those of `flags` that the exclusion rule names, in the order raised.
    pub fn excluding(&self, flags: &[PeerFlag]) -> Vec<PeerFlag> {
        flags
            .iter()
            .copied()
            .filter(|f| self.exclude.contains(f))
            .collect()
    }
}

/// The index's previous-period return as a second regressor beside its current one, for an OLS
/// beta: r = α + β₀·m(t) + β₁·m(t − 1) + e, the regression of Dimson (1979, "Risk measurement
/// when shares are subject to infrequent trading", J. Financial Economics 7(2)) with one lag. A
/// share whose price takes in the index's news a period late (thin or non-synchronous trading,
/// quotes that lag) loads on m(t − 1), and its OLS beta, the slope on m(t) alone, is biased
/// toward zero. Taken over the window's periods that have the previous period's index return
/// inside the window, with the estimate's kind of standard errors.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct LagResponse {
    /// β₁, the slope on the index's previous-period (excess) return.
    pub slope: f64,
    pub std_error: f64,
    pub t_stat: f64,
    /// Two-sided, Student t with N − 3 degrees of freedom.
    pub p_value: f64,
    /// β₀ + β₁: Dimson's beta with one lag over the same periods.
    pub summed_beta: f64,
    /// The periods the regression used.
    pub observations: usize,
    /// The Newey–West lags of its standard errors: the estimate's own (`null` unless the
    /// standard errors are Newey–West).
    pub newey_west_lags: Option<usize>,
}
