//! What an estimator is asked to do: the method, the standard errors and the shifted index
//! columns it needs, and the adjustment applied to the raw beta afterwards. Spec types of the beta
//! layer's own, so a case file, a universe file or a test can all describe an estimate.

use serde::{Deserialize, Serialize};

use crate::stats::least_squares::StdErrors;

/// The regression behind each raw beta.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum BetaMethod {
    /// Ordinary least squares of the asset's on the market's (excess) returns, with intercept.
    Ols,
    /// Dimson (1979) aggregated coefficients: the sum of the slopes on lagged, current and led
    /// market returns.
    Dimson,
    /// Scholes and Williams (1977): lag, current and lead slopes over 1 + 2ρ(market).
    ScholesWilliams,
}

/// An adjustment applied to the raw beta before unlevering.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Adjustment {
    None,
    /// Blume (1971, 1975): w · raw + (1 − w), w the case's `beta.blume_weight`.
    Blume,
    /// Vasicek (1973): Bayesian shrinkage toward a prior by each peer's sampling variance.
    Vasicek,
}

/// The estimator of one raw beta.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct EstimatorSpec {
    pub method: BetaMethod,
    pub std_errors: StdErrors,
    /// Newey–West lags; `None` means the Newey–West (1994) rule for the sample size.
    pub newey_west_lags: Option<u32>,
    /// Lags and leads of the index return in the Dimson regression.
    pub dimson_lags: u32,
    pub dimson_leads: u32,
}

impl EstimatorSpec {
    /// How many lags and leads of the market return the method needs.
    pub fn market_lags_and_leads(&self) -> (u32, u32) {
        match self.method {
            BetaMethod::Ols => (0, 0),
            BetaMethod::Dimson => (self.dimson_lags, self.dimson_leads),
            BetaMethod::ScholesWilliams => (1, 1),
        }
    }
}
