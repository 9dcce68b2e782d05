//! Beta estimators: from aligned returns to a raw equity beta with its statistics.
//!
//! Each estimator is a function over return slices; [`estimate_with_influence`] (behind
//! [`estimate_with`]) dispatches on a [`BetaMethod`] (the layer's own type, which a case's `beta.method` is read into). Adjustments (Blume, Vasicek) shrink the raw estimate afterwards, so `beta` in
//! every output is always the estimator's own figure and `shrunk_beta` the adjusted one.

pub mod diagnostics;
pub mod dimson;
pub mod fitted_line;
pub mod rolling;
pub mod scholes_williams;
pub mod spec;
pub mod vasicek;

use nalgebra::DMatrix;
use serde::Serialize;

use crate::error::{Error, EstimatorProblem, Result};
use crate::market::sampling::ShiftedMarket;
use crate::stats;
use crate::stats::least_squares::{
    design_with_intercept, newey_west_default_lags, ols, with_std_errors, OlsFit, StdErrors,
};
pub use spec::{Adjustment, BetaMethod, EstimatorSpec};

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
    /// Which standard errors the SE, t, p-value and CI above are.
    pub std_errors: StdErrors,
    /// Newey–West lags used (`null` unless `std_errors` is `newey-west`).
    pub newey_west_lags: Option<usize>,
    /// Every slope on the market: offset 0 is the current period, −l the market l periods
    /// earlier, +l later. One entry for OLS; Dimson's coefficients; Scholes–Williams' three
    /// simple-regression slopes.
    pub market_coefficients: Vec<MarketCoefficient>,
    /// Scholes–Williams only: the market's first-order autocorrelation on the sample.
    pub market_autocorrelation: Option<f64>,
    /// Durbin–Watson statistic of the regression's residuals (in period order).
    pub durbin_watson: f64,
    /// How many observations have an internally studentised residual above 3 in absolute value.
    pub large_studentised_residuals: usize,
    /// The beta's influence terms aₜ·eₜ, one per observation in period order: the estimator's
    /// weight on the observation's return times its residual. Their cross-products between two
    /// peers on shared periods give the covariance of the two betas' errors (a seemingly unrelated
    /// regressions sandwich; see `audit::uncertainty`). Not written to `result.json`.
    #[serde(skip)]
    pub beta_influence: Vec<f64>,
    /// Where those observations are: 0-based positions in period order (the peer's rows of
    /// `returns.csv`, in order).
    pub large_studentised_residual_rows: Vec<usize>,
    /// Covariance of the α and β estimates, of the same kind as their standard errors; with
    /// them it gives the confidence band of the fitted line α + β·x (see [`fitted_line`]).
    pub alpha_beta_covariance: f64,
}

/// One slope on a (possibly lagged or led) market return.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MarketCoefficient {
    pub offset: i32,
    pub estimate: f64,
    pub std_error: f64,
}

/// The Newey–West lag count for `n` observations: the case's, else the Newey–West (1994) rule.
pub fn newey_west_lags(settings: &EstimatorSpec, n: usize) -> Option<usize> {
    (settings.std_errors == StdErrors::NeweyWest).then(|| {
        settings
            .newey_west_lags
            .map_or_else(|| newey_west_default_lags(n), |l| l as usize)
    })
}

/// Estimates beta of `asset` on `market` (and the shifted market columns the method needs, as
/// built by `sampling::align_with_shifts`) with the case's method and standard errors.
pub fn estimate_with(
    settings: &EstimatorSpec,
    asset: &[f64],
    market: &[f64],
    shifted: &[ShiftedMarket],
) -> Result<BetaEstimate> {
    estimate_with_influence(settings, asset, market, shifted, true)
}

/// [`estimate_with`]; without `influence` the estimate's `beta_influence` stays empty (it
/// serves only a case's joint Monte Carlo, and costs a pass over the design).
pub fn estimate_with_influence(
    settings: &EstimatorSpec,
    asset: &[f64],
    market: &[f64],
    shifted: &[ShiftedMarket],
    influence: bool,
) -> Result<BetaEstimate> {
    let n = asset.len();
    let lags = newey_west_lags(settings, n);
    if let Some(l) = lags {
        if 4 * l >= n {
            return Err(Error::Estimator(EstimatorProblem::NeweyWestLags {
                lags: l,
                observations: n,
                given: settings.newey_west_lags.is_some(),
            }));
        }
    }
    if settings.method != BetaMethod::Ols && 4 * shifted.len() >= n {
        return Err(Error::Estimator(EstimatorProblem::ShiftedColumns {
            columns: shifted.len(),
            observations: n,
            scholes_williams: settings.method == BetaMethod::ScholesWilliams,
        }));
    }
    let (kind, l) = (settings.std_errors, lags.unwrap_or(0));
    Ok(match settings.method {
        BetaMethod::Ols => ols_fit(asset, market, kind, l, influence)?,
        BetaMethod::Dimson => dimson::dimson_fit(asset, market, shifted, kind, l, influence)?,
        BetaMethod::ScholesWilliams => {
            scholes_williams::scholes_williams_fit(asset, market, shifted, (kind, l), influence)?
        }
    })
}

/// A [`BetaEstimate`] whose beta is the linear combination `combination · coefficients` of a
/// fit's coefficients (coefficient 0 the intercept), with its SE from the covariance matrix:
/// √(cᵀVc). OLS takes c = (0, 1); Dimson sums the market slopes. The influence terms are
/// computed only when `influence`.
pub(crate) fn from_fit(
    method: BetaMethod,
    fit: &OlsFit,
    design: &DMatrix<f64>,
    combination: &[f64],
    offsets: &[i32],
    (kind, newey_west_lags): (StdErrors, usize),
    influence: bool,
) -> BetaEstimate {
    let c = DMatrix::from_column_slice(combination.len(), 1, combination);
    // The beta as a linear function of the returns: weights cᵀ(XᵀX)⁻¹Xᵀ (from R⁻¹, not an inverse).
    let influence = if influence {
        let weights = c.transpose() * &fit.bread * design.transpose();
        weights
            .iter()
            .zip(&fit.residuals)
            .map(|(w, e)| w * e)
            .collect()
    } else {
        Vec::new()
    };
    let beta = combination
        .iter()
        .zip(&fit.coefficients)
        .map(|(w, b)| w * b)
        .sum::<f64>();
    let beta_std_error = (c.transpose() * &fit.covariance * &c)[(0, 0)].sqrt();
    // Cov(α, cᵀb) = Σⱼ cⱼ·Cov(b₀, bⱼ): row 0 of the covariance against the combination.
    let alpha_beta_covariance = (fit.covariance.row(0) * &c)[(0, 0)];
    let market_coefficients = offsets
        .iter()
        .enumerate()
        .map(|(i, &offset)| MarketCoefficient {
            offset,
            estimate: fit.coefficients[i + 1],
            std_error: fit.std_errors[i + 1],
        })
        .collect();
    finish(
        method,
        fit,
        Parts {
            alpha: (fit.coefficients[0], fit.std_errors[0]),
            beta: (beta, beta_std_error),
            alpha_beta_covariance,
            errors: (kind, newey_west_lags),
            market_coefficients,
            market_autocorrelation: None,
            beta_influence: influence,
        },
    )
}

/// What an estimator computed beside its fit, for [`finish`] to build the estimate whole.
pub(crate) struct Parts {
    /// Estimate and standard error.
    pub alpha: (f64, f64),
    pub beta: (f64, f64),
    pub alpha_beta_covariance: f64,
    /// The standard errors and the Newey–West lags they used (recorded only for Newey–West).
    pub errors: (StdErrors, usize),
    pub market_coefficients: Vec<MarketCoefficient>,
    /// ρ of Scholes–Williams; `None` for the other estimators.
    pub market_autocorrelation: Option<f64>,
    /// Empty when not asked for.
    pub beta_influence: Vec<f64>,
}

/// Fills the t, p and 95% CI of alpha and beta from their estimates and standard errors, with
/// Student t on the fit's degrees of freedom (the CI and p follow the chosen standard errors),
/// and the diagnostics of the fit's residuals.
pub(crate) fn finish(method: BetaMethod, fit: &OlsFit, parts: Parts) -> BetaEstimate {
    let Parts {
        alpha: (alpha, alpha_std_error),
        beta: (beta, beta_std_error),
        alpha_beta_covariance,
        errors: (kind, lags),
        market_coefficients,
        market_autocorrelation,
        beta_influence,
    } = parts;
    let df = fit.degrees_of_freedom as f64;
    let large_studentised_residual_rows: Vec<usize> = fit
        .studentised_residuals()
        .iter()
        .enumerate()
        .filter(|(_, r)| r.abs() > 3.0)
        .map(|(row, _)| row)
        .collect();
    let (beta_ci_low, beta_ci_high) = stats::interval_95(beta, beta_std_error, df);
    let alpha_t_stat = alpha / alpha_std_error;
    let beta_t_stat = beta / beta_std_error;
    BetaEstimate {
        method,
        observations: fit.observations,
        degrees_of_freedom: fit.degrees_of_freedom,
        alpha,
        alpha_std_error,
        alpha_t_stat,
        alpha_p_value: stats::student_t_two_sided_p(alpha_t_stat, df),
        beta,
        beta_std_error,
        beta_t_stat,
        beta_p_value: stats::student_t_two_sided_p(beta_t_stat, df),
        beta_ci_low,
        beta_ci_high,
        r_squared: fit.r_squared,
        adjusted_r_squared: fit.adjusted_r_squared,
        residual_std_error: fit.residual_std_error,
        std_errors: kind,
        newey_west_lags: (kind == StdErrors::NeweyWest).then_some(lags),
        market_coefficients,
        market_autocorrelation,
        durbin_watson: fit.durbin_watson(),
        large_studentised_residuals: large_studentised_residual_rows.len(),
        large_studentised_residual_rows,
        alpha_beta_covariance,
        beta_influence,
    }
}

/// Estimates beta of `asset` on `market` (both already excess returns when a risk-free rate is
/// used) with the case's method and classical standard errors; methods that need lagged market
/// returns go through [`estimate_with`].
pub fn estimate(method: BetaMethod, asset: &[f64], market: &[f64]) -> Result<BetaEstimate> {
    estimate_with(
        &EstimatorSpec {
            method,
            std_errors: StdErrors::Classical,
            newey_west_lags: None,
            dimson_lags: 1,
            dimson_leads: 0,
        },
        asset,
        market,
        &[],
    )
}

/// OLS market-model beta: r_asset = α + β·r_market + ε, with classical standard errors.
/// Sharpe (1963), "A simplified model for portfolio analysis", Management Science 9(2).
pub fn ols_beta(asset: &[f64], market: &[f64]) -> Result<BetaEstimate> {
    ols_beta_with(asset, market, StdErrors::Classical, 0)
}

/// [`ols_beta`] with the chosen standard errors.
pub fn ols_beta_with(
    asset: &[f64],
    market: &[f64],
    kind: StdErrors,
    newey_west_lags: usize,
) -> Result<BetaEstimate> {
    ols_fit(asset, market, kind, newey_west_lags, true)
}

/// [`ols_beta_with`], the influence terms only when `influence`.
fn ols_fit(
    asset: &[f64],
    market: &[f64],
    kind: StdErrors,
    newey_west_lags: usize,
    influence: bool,
) -> Result<BetaEstimate> {
    let design = design_with_intercept(&[market]);
    let fit = with_std_errors(ols(&design, asset, true)?, &design, kind, newey_west_lags);
    Ok(from_fit(
        BetaMethod::Ols,
        &fit,
        &design,
        &[0.0, 1.0],
        &[0],
        (kind, newey_west_lags),
        influence,
    ))
}

/// The estimator and standard errors of a case, in words with their sources, for the memo.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EstimatorRecord {
    pub method: BetaMethod,
    pub method_description: String,
    pub std_errors: StdErrors,
    pub std_errors_description: String,
}

/// Describes an estimator and its standard errors, citing each source; `subject` names what is
/// regressed on the index ("peer" in a case, "security" in a universe).
pub fn describe(settings: &EstimatorSpec, subject: &str) -> EstimatorRecord {
    let method_description = match settings.method {
        BetaMethod::Ols => format!(
            "ordinary least squares of the {subject}'s return on the index's return, the market \
             model of Sharpe (1963, Management Science 9(2))"
        ),
        BetaMethod::Dimson => {
            // In words (found by review: "1 earlier and 0 later period(s)").
            let periods = |n: u32, which: &str| match n {
                0 => format!("no {which} period"),
                1 => format!("one {which} period"),
                n => format!("{n} {which} periods"),
            };
            format!(
                "Dimson (1979, J. Financial Economics 7(2)) aggregated coefficients: OLS of the \
                 {subject}'s return on the index's return of the same period, {} and {}; beta \
                 is the sum of the slopes, its SE from their covariance matrix",
                periods(settings.dimson_lags, "earlier"),
                periods(settings.dimson_leads, "later")
            )
        }
        BetaMethod::ScholesWilliams => "Scholes and Williams (1977, J. Financial Economics \
                                        5(3)): (b(-1) + b(0) + b(+1)) / (1 + 2ρ) from simple \
                                        regressions on the previous, same and next period's \
                                        index return, ρ the index's first-order autocorrelation"
            .to_string(),
    };
    let std_errors_description = match settings.std_errors {
        StdErrors::Classical => "classical (homoskedastic, serially uncorrelated errors)".into(),
        StdErrors::Hc1 => "White (1980, Econometrica 48(4)) heteroskedasticity-robust, HC1 \
                           scaling n/(n - k)"
            .into(),
        StdErrors::NeweyWest => format!(
            "Newey and West (1987, Econometrica 55(3)) HAC with Bartlett weights; lags {}",
            match settings.newey_west_lags {
                Some(l) => format!("{l} as the case states"),
                None => "floor(4(N/100)^(2/9)) per peer (Newey and West 1994, Rev. Econ. \
                         Studies 61(4))"
                    .into(),
            }
        ),
    };
    EstimatorRecord {
        method: settings.method,
        method_description,
        std_errors: settings.std_errors,
        std_errors_description,
    }
}

/// Blume's shrinkage toward the cross-sectional mean of 1: w·β + (1 − w), with `weight` w on the
/// raw beta (the case's `beta.blume_weight`, default 0.67 and 0.33 on 1 — not 2/3 and 1/3).
/// Blume (1971), "On the assessment of risk", J. Finance 26(1), regressed later betas on earlier
/// ones; from memory his estimate was β_t ≈ 0.343 + 0.677·β_{t−1}, whose intercept and slope sum
/// to about 1, hence the form w·β + (1 − w). Blume (1975), "Betas and their regression
/// tendencies", J. Finance 30(3).
pub fn blume(raw: f64, weight: f64) -> f64 {
    weight * raw + (1.0 - weight)
}

/// The shrunk beta for a case's `beta.adjustment`, or `None` when there is none. Vasicek needs
/// the whole cross-section and its prior, so it is applied by the caller with
/// [`vasicek::shrink`]; here it returns `None`.
pub fn adjust(adjustment: Adjustment, blume_weight: f64, raw: f64) -> Option<f64> {
    match adjustment {
        Adjustment::None | Adjustment::Vasicek => None,
        Adjustment::Blume => Some(blume(raw, blume_weight)),
    }
}

/// A raw beta after the adjustment: the shrunk figure (`None` without an adjustment), the beta
/// that is unlevered, and Vasicek's record when it is the adjustment.
#[derive(Debug, Clone, PartialEq)]
pub struct AdjustedBeta {
    pub shrunk: Option<f64>,
    pub used: f64,
    pub vasicek: Option<vasicek::Shrunk>,
}

/// Applies `adjustment` to every raw beta (`(beta, standard error)` pairs): Blume one by one with
/// `blume_weight`, Vasicek against the stated prior or one from the cross-section of the
/// `included` betas. Returns the adjusted betas and the Vasicek prior used, if any.
pub fn adjust_all(
    adjustment: Adjustment,
    blume_weight: f64,
    stated_prior: Option<(f64, f64)>,
    raw: &[(f64, f64)],
    included: &[bool],
) -> std::result::Result<(Vec<AdjustedBeta>, Option<vasicek::Prior>), vasicek::PriorUnavailable> {
    let mut adjusted = Vec::with_capacity(raw.len());
    let prior = adjust_all_into(
        adjustment,
        blume_weight,
        stated_prior,
        raw,
        included,
        &mut adjusted,
    )?;
    Ok((adjusted, prior))
}

/// [`adjust_all`] into a vector the caller reuses (cleared first), so that a run of Monte Carlo
/// draws does not allocate one per draw.
pub fn adjust_all_into(
    adjustment: Adjustment,
    blume_weight: f64,
    stated_prior: Option<(f64, f64)>,
    raw: &[(f64, f64)],
    included: &[bool],
    adjusted: &mut Vec<AdjustedBeta>,
) -> std::result::Result<Option<vasicek::Prior>, vasicek::PriorUnavailable> {
    adjusted.clear();
    if adjustment != Adjustment::Vasicek {
        adjusted.extend(raw.iter().map(|&(beta, _)| {
            let shrunk = adjust(adjustment, blume_weight, beta);
            AdjustedBeta {
                shrunk,
                used: shrunk.unwrap_or(beta),
                vasicek: None,
            }
        }));
        return Ok(None);
    }
    let prior = match stated_prior {
        Some((mean, variance)) => vasicek::Prior {
            mean,
            variance,
            source: "stated",
        },
        None => {
            let betas: Vec<f64> = raw
                .iter()
                .zip(included)
                .filter(|(_, &inside)| inside)
                .map(|(&(beta, _), _)| beta)
                .collect();
            vasicek::cross_sectional_prior(&betas).ok_or(vasicek::PriorUnavailable {
                included: betas.len(),
            })?
        }
    };
    adjusted.extend(raw.iter().map(|&(beta, std_error)| {
        let shrunk = vasicek::shrink(beta, std_error, &prior);
        AdjustedBeta {
            shrunk: Some(shrunk.beta),
            used: shrunk.beta,
            vasicek: Some(shrunk),
        }
    }));
    Ok(Some(prior))
}

#[cfg(test)]
mod tests {
    use super::*;

    // Blume's form w·β + (1 − w), worked by hand: with w = 0.67 a beta moves 0.33 of the way
    // to 1; w = 1 leaves it raw.
    #[test]
    fn blume_moves_a_beta_toward_one_by_one_minus_the_weight() {
        assert_eq!(blume(1.0, 0.67), 1.0);
        // 0.67·1.6 + 0.33 = 1.072 + 0.33 = 1.402; 1e-15 for decimal rounding.
        assert!((blume(1.6, 0.67) - 1.402).abs() < 1e-15);
        assert!((blume(0.4, 0.67) - 0.598).abs() < 1e-15);
        // 0.5·1.6 + 0.5 = 1.3.
        assert!((blume(1.6, 0.5) - 1.3).abs() < 1e-15);
        assert_eq!(blume(1.6, 1.0), 1.6);
        assert_eq!(adjust(Adjustment::None, 0.67, 1.6), None);
    }
}
