//! Beta estimators: from aligned returns to a raw equity beta with its statistics.
//!
//! Each estimator is a function over return slices; [`estimate`] dispatches on the case's
//! `beta.method`. Adjustments (Blume) act on the raw estimate afterwards, so `beta` in every
//! output is always the estimator's own, unadjusted figure.

use serde::Serialize;

use crate::case::{Adjustment, BetaMethod};
use crate::error::Result;
use crate::regression::{design_with_intercept, ols};

/// A raw beta and the regression statistics a reviewer asks for.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BetaEstimate {
    pub method: BetaMethod,
    pub observations: usize,
    pub degrees_of_freedom: usize,
    pub alpha: f64,
    pub alpha_std_error: f64,
    pub alpha_t_stat: f64,
    pub alpha_p_value: f64,
    pub beta: f64,
    pub beta_std_error: f64,
    pub beta_t_stat: f64,
    /// Two-sided p-value of the hypothesis beta = 0.
    pub beta_p_value: f64,
    /// 95% confidence interval from Student t with N − 2 degrees of freedom.
    pub beta_ci_low: f64,
    pub beta_ci_high: f64,
    pub r_squared: f64,
    pub adjusted_r_squared: f64,
    pub residual_std_error: f64,
}

/// Estimates beta of `asset` on `market` (both already excess returns when a risk-free rate is
/// used) with the case's method.
pub fn estimate(method: BetaMethod, asset: &[f64], market: &[f64]) -> Result<BetaEstimate> {
    match method {
        BetaMethod::Ols => ols_beta(asset, market),
    }
}

/// OLS market-model beta: r_asset = α + β·r_market + ε, with classical standard errors.
/// Sharpe (1963), "A simplified model for portfolio analysis", Management Science 9(2).
pub fn ols_beta(asset: &[f64], market: &[f64]) -> Result<BetaEstimate> {
    let fit = ols(&design_with_intercept(&[market]), asset, true)?;
    let (beta_ci_low, beta_ci_high) = fit.confidence_interval(1, 0.95);
    Ok(BetaEstimate {
        method: BetaMethod::Ols,
        observations: fit.observations,
        degrees_of_freedom: fit.degrees_of_freedom,
        alpha: fit.coefficients[0],
        alpha_std_error: fit.std_errors[0],
        alpha_t_stat: fit.t_stats[0],
        alpha_p_value: fit.p_values[0],
        beta: fit.coefficients[1],
        beta_std_error: fit.std_errors[1],
        beta_t_stat: fit.t_stats[1],
        beta_p_value: fit.p_values[1],
        beta_ci_low,
        beta_ci_high,
        r_squared: fit.r_squared,
        adjusted_r_squared: fit.adjusted_r_squared,
        residual_std_error: fit.residual_std_error,
    })
}

/// Blume's adjustment toward the cross-sectional mean of 1: 0.67·β + 0.33.
/// Blume (1971), "On the assessment of risk", J. Finance 26(1); Blume (1975), "Betas and their
/// regression tendencies", J. Finance 30(3). The rounded 2/3, 1/3 weights are common practice.
pub fn blume(raw: f64) -> f64 {
    0.67 * raw + 0.33
}

/// The adjusted beta for a case's `beta.adjustment`, or `None` when there is none.
pub fn adjust(adjustment: Adjustment, raw: f64) -> Option<f64> {
    match adjustment {
        Adjustment::None => None,
        Adjustment::Blume => Some(blume(raw)),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Common practice: the Blume weights move a beta one third of the way to 1.
    #[test]
    fn blume_moves_a_third_of_the_way_to_one() {
        assert_eq!(blume(1.0), 1.0);
        // 0.67·1.6 + 0.33 = 1.072 + 0.33 = 1.402; 1e-15 for decimal rounding.
        assert!((blume(1.6) - 1.402).abs() < 1e-15);
        assert!((blume(0.4) - 0.598).abs() < 1e-15);
        assert_eq!(adjust(Adjustment::None, 1.6), None);
    }
}
