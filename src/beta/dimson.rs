//! Dimson's aggregated-coefficients beta for thinly traded shares.
//!
//! Dimson (1979), "Risk measurement when shares are subject to infrequent trading", J. Financial
//! Economics 7(2): regress the asset's return on the market's return of the same period and of
//! k earlier (and optionally some later) periods, and take the sum of the slopes as beta. A
//! share whose price reacts to market news a period late loads on the lagged market return, so
//! the contemporaneous OLS slope alone understates its beta.

use super::BetaMethod;
use crate::error::{Error, Result};
use crate::market::sampling::ShiftedMarket;
use crate::stats::least_squares::{ols, with_std_errors, StdErrors};

use super::{from_fit, BetaEstimate};

/// The Dimson beta: OLS of `asset` on [1, m(t + o) for every offset o, in ascending order,
/// including 0], beta = Σ slopes, SE(beta) = √(1ᵀV1) from the slopes' covariance block V (of
/// the chosen kind). `shifted` holds the lagged and led columns.
pub fn dimson_beta(
    asset: &[f64],
    market: &[f64],
    shifted: &[ShiftedMarket],
    kind: StdErrors,
    newey_west_lags: usize,
) -> Result<BetaEstimate> {
    dimson_fit(asset, market, shifted, kind, newey_west_lags, true)
}

/// [`dimson_beta`], the influence terms only when `influence`.
pub(crate) fn dimson_fit(
    asset: &[f64],
    market: &[f64],
    shifted: &[ShiftedMarket],
    kind: StdErrors,
    newey_west_lags: usize,
    influence: bool,
) -> Result<BetaEstimate> {
    let mut columns: Vec<(i32, &[f64])> = shifted
        .iter()
        .map(|s| (s.offset, s.returns.as_slice()))
        .collect();
    columns.push((0, market));
    columns.sort_by_key(|(offset, _)| *offset);
    if columns.len() < 2 {
        return Err(Error::Regression(
            "the Dimson beta needs at least one lagged or led market return".into(),
        ));
    }
    let slices: Vec<&[f64]> = columns.iter().map(|(_, c)| *c).collect();
    let offsets: Vec<i32> = columns.iter().map(|(o, _)| *o).collect();
    let design = crate::stats::least_squares::design_with_intercept(&slices);
    let fit = with_std_errors(ols(&design, asset, true)?, &design, kind, newey_west_lags);
    let mut combination = vec![1.0; offsets.len() + 1];
    combination[0] = 0.0;
    Ok(from_fit(
        BetaMethod::Dimson,
        &fit,
        &design,
        &combination,
        &offsets,
        (kind, newey_west_lags),
        influence,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::beta::EstimatorSpec;

    // Hand-built data where the asset is exactly 0.5·m(t) + 0.7·m(t − 1): the Dimson
    // coefficients must be 0.5 and 0.7 and beta their sum 1.2 (an exact fit; the definition in
    // Dimson 1979). Eight observations with one shifted column pass the N/4 rule (4 < 8);
    // with four observations the estimator refuses (4·1 ≥ 4).
    #[test]
    fn exact_lagged_response_gives_the_summed_slopes() {
        let m = [0.02, -0.01, 0.03, 0.00, -0.02, 0.04, 0.01, -0.03, 0.02];
        let market = &m[1..];
        let lag: Vec<f64> = m[..8].to_vec();
        let asset: Vec<f64> = (0..8).map(|t| 0.5 * market[t] + 0.7 * lag[t]).collect();
        let shifted = [ShiftedMarket {
            offset: -1,
            returns: lag.clone(),
        }];
        let e = dimson_beta(&asset, market, &shifted, StdErrors::Classical, 0).unwrap();
        // 1e-12: an exact fit solved by QR leaves rounding only.
        assert!((e.beta - 1.2).abs() < 1e-12, "{e:?}");
        assert!((e.market_coefficients[0].estimate - 0.7).abs() < 1e-12);
        assert!((e.market_coefficients[1].estimate - 0.5).abs() < 1e-12);
        let settings = EstimatorSpec {
            method: BetaMethod::Dimson,
            std_errors: StdErrors::Classical,
            newey_west_lags: None,
            dimson_lags: 1,
            dimson_leads: 0,
        };
        let short = [ShiftedMarket {
            offset: -1,
            returns: lag[..4].to_vec(),
        }];
        let err =
            super::super::estimate_with(&settings, &asset[..4], &market[..4], &short).unwrap_err();
        assert!(err.to_string().contains("N/4"), "{err}");
    }
}
