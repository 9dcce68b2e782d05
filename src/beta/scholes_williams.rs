//! The Scholes–Williams beta for non-synchronous trading.
//!
//! Scholes and Williams (1977), "Estimating betas from nonsynchronous data", J. Financial
//! Economics 5(3): β = (b₋₁ + b₀ + b₊₁) / (1 + 2ρ), where b₋₁, b₀ and b₊₁ are the slopes of
//! simple regressions of the asset's return on the market's return of the previous, the same
//! and the next period, and ρ is the market return's first-order autocorrelation.

use nalgebra::DMatrix;

use super::BetaMethod;
use crate::error::{Error, Result};
use crate::market::sampling::ShiftedMarket;
use crate::stats::least_squares::{
    design_with_intercept, linear_estimator_covariance, ols, StdErrors,
};

use super::{finish, BetaEstimate, MarketCoefficient, Parts};

/// The least 1 + 2ρ the estimator divides by: below it (an index autocorrelation ρ under
/// −0.4) the beta is not computed. As ρ nears −1/2 the divisor vanishes and the beta grows
/// without bound (found by review: ρ = −0.5014 gave a beta of 68.6 with a p-value of 2e-4, and
/// ρ = −0.5015 a beta of −19). Non-synchronous trading, which the method corrects, makes an
/// index's returns positively autocorrelated (Lo and MacKinlay 1990, J. Econometrics 45, from
/// memory), so an index this strongly negatively autocorrelated is outside what the method is
/// for: the sample, or a rolling window, is refused, not corrected.
pub const MIN_DIVISOR: f64 = 0.2;

/// The Scholes–Williams beta on the sample where the previous and the next market returns are
/// known (`shifted` must hold offsets −1 and +1). ρ is the Pearson correlation of m(t) and
/// m(t − 1) over that sample.
///
/// The estimator is linear in the asset's returns given the market, β = aᵀr with
/// a = (w₋₁ + w₀ + w₊₁)/(1 + 2ρ), wⱼ = (mⱼ − m̄ⱼ)/Σ(mⱼ − m̄ⱼ)², and α = r̄ − β·m̄₀ likewise.
/// Their standard errors are the chosen estimator of Var(aᵀr) (classical, HC1 or Newey–West)
/// applied to the residuals of the regression of r on [1, m₋₁, m₀, m₊₁], the model under which
/// the three slopes sum to the true beta; ρ is treated as known. R² and the residual SE are
/// those of that regression. This standard error is the project's construction (the 1977 paper
/// gives the estimator's asymptotic properties, not this formula); it treats ρ as known, so
/// ρ̂'s own sampling error is not in it (b₋₁ and b₊₁ move with the sample's autocorrelation
/// too, which may offset much of it; how much it matters is not established here).
pub fn scholes_williams_beta(
    asset: &[f64],
    market: &[f64],
    shifted: &[ShiftedMarket],
    kind: StdErrors,
    newey_west_lags: usize,
) -> Result<BetaEstimate> {
    scholes_williams_fit(asset, market, shifted, (kind, newey_west_lags), true)
}

/// [`scholes_williams_beta`], the influence terms only when `influence`.
pub(crate) fn scholes_williams_fit(
    asset: &[f64],
    market: &[f64],
    shifted: &[ShiftedMarket],
    (kind, newey_west_lags): (StdErrors, usize),
    influence: bool,
) -> Result<BetaEstimate> {
    let column = |offset: i32| {
        shifted
            .iter()
            .find(|s| s.offset == offset)
            .map(|s| s.returns.as_slice())
            .ok_or_else(|| {
                Error::Regression(format!(
                    "the Scholes-Williams beta needs the market return at offset {offset}"
                ))
            })
    };
    let (lag, lead) = (column(-1)?, column(1)?);
    let n = asset.len();
    let fit = ols(&design_with_intercept(&[lag, market, lead]), asset, true)?;
    let slope_weights = |x: &[f64]| -> Vec<f64> {
        let mean = x.iter().sum::<f64>() / n as f64;
        let sxx: f64 = x.iter().map(|v| (v - mean) * (v - mean)).sum();
        x.iter().map(|v| (v - mean) / sxx).collect()
    };
    let weights: Vec<Vec<f64>> = [lag, market, lead]
        .iter()
        .map(|x| slope_weights(x))
        .collect();
    let slopes: Vec<f64> = weights
        .iter()
        .map(|w| w.iter().zip(asset).map(|(a, r)| a * r).sum())
        .collect();
    let rho = correlation(market, lag);
    let scale = divisor(rho, n)?;
    let beta_weights: Vec<f64> = (0..n)
        .map(|t| (weights[0][t] + weights[1][t] + weights[2][t]) / scale)
        .collect();
    let beta = slopes.iter().sum::<f64>() / scale;
    let market_mean = market.iter().sum::<f64>() / n as f64;
    let alpha = asset.iter().sum::<f64>() / n as f64 - beta * market_mean;
    // Rows: alpha, beta, then the three slopes, each a linear function of the asset returns.
    let mut rows = vec![
        (0..n)
            .map(|t| 1.0 / n as f64 - market_mean * beta_weights[t])
            .collect::<Vec<f64>>(),
        beta_weights,
    ];
    rows.extend(weights);
    let a = DMatrix::from_fn(rows.len(), n, |i, t| rows[i][t]);
    let parameters = fit.coefficients.len();
    let cov = linear_estimator_covariance(&a, &fit.residuals, parameters, kind, newey_west_lags);
    let se = |i: usize| cov[(i, i)].sqrt();
    let market_coefficients = [-1, 0, 1]
        .iter()
        .enumerate()
        .map(|(i, &offset)| MarketCoefficient {
            offset,
            estimate: slopes[i],
            std_error: se(i + 2),
        })
        .collect();
    let beta_influence = match influence {
        true => (0..n).map(|t| a[(1, t)] * fit.residuals[t]).collect(),
        false => Vec::new(),
    };
    Ok(finish(
        BetaMethod::ScholesWilliams,
        &fit,
        Parts {
            alpha: (alpha, se(0)),
            beta: (beta, se(1)),
            alpha_beta_covariance: cov[(0, 1)],
            errors: (kind, newey_west_lags),
            market_coefficients,
            market_autocorrelation: Some(rho),
            beta_influence,
        },
    ))
}

/// The divisor 1 + 2ρ, refused below [`MIN_DIVISOR`] with ρ and the divisor named.
fn divisor(rho: f64, n: usize) -> Result<f64> {
    let scale = 1.0 + 2.0 * rho;
    if scale.is_nan() || scale < MIN_DIVISOR {
        return Err(Error::Estimator(
            crate::error::EstimatorProblem::ScholesWilliamsDivisor {
                rho,
                divisor: scale,
                floor: MIN_DIVISOR,
                observations: n,
            },
        ));
    }
    Ok(scale)
}

/// Pearson correlation of two equally long series.
fn correlation(x: &[f64], y: &[f64]) -> f64 {
    let n = x.len() as f64;
    let (mx, my) = (x.iter().sum::<f64>() / n, y.iter().sum::<f64>() / n);
    let sxy: f64 = x.iter().zip(y).map(|(a, b)| (a - mx) * (b - my)).sum();
    let sxx: f64 = x.iter().map(|a| (a - mx) * (a - mx)).sum();
    let syy: f64 = y.iter().map(|b| (b - my) * (b - my)).sum();
    sxy / (sxx * syy).sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;

    // An index that alternates up and down is refused, the autocorrelation, the divisor and the
    // bound named. numpy (np.corrcoef of the 40 index returns with the 40 before them, run by
    // hand) gives ρ = −0.999725728197424, so 1 + 2ρ = −0.999451456394848; to the three
    // decimals the message prints (neither near a rounding tie) −1.000 and −0.999.
    #[test]
    fn a_strongly_negatively_autocorrelated_index_is_refused() {
        let n = 40;
        let all: Vec<f64> = (0..n + 2)
            .map(|t| if t % 2 == 0 { 0.04 } else { -0.03 } + 0.001 * (t % 3) as f64)
            .collect();
        let market = all[1..=n].to_vec();
        let asset: Vec<f64> = market.iter().map(|m| 1.1 * m + 0.002).collect();
        let shifted = vec![
            ShiftedMarket {
                offset: -1,
                returns: all[0..n].to_vec(),
            },
            ShiftedMarket {
                offset: 1,
                returns: all[2..n + 2].to_vec(),
            },
        ];
        let refused = scholes_williams_beta(&asset, &market, &shifted, StdErrors::Classical, 0);
        let message = refused.unwrap_err().to_string();
        let expected = "the index's first-order autocorrelation over these 40 returns is \
                        -1.000, so the Scholes-Williams divisor 1 + 2ρ is -0.999, below 0.2: \
                        the beta divides the slopes by it and would be unbounded";
        assert!(message.contains(expected), "{message}");
    }
}
