//! The fitted line α + β·x of a peer's regression and the 95% confidence band of its mean
//! response, tabulated over the range of the index returns used.
//!
//! The band is the textbook interval of the mean response (e.g. Weisberg 2005, *Applied Linear
//! Regression*, 3rd ed.): ŷ(x) ± t(0.975, df)·√(Var α̂ + 2x·Cov(α̂, β̂) + x²·Var β̂), with the
//! covariance of the estimate's own kind (classical, HC1 or Newey–West). It is computed here, in
//! the library, so a chart only draws the stored points; for Dimson and Scholes–Williams β is
//! the summed beta, so the line is the summed beta's line against the same-period index return.

use serde::Serialize;

use super::BetaEstimate;
use crate::stats;

/// How many points tabulate the line and its band (enough for a smooth curve at print size).
pub const POINTS: usize = 25;

/// The fitted line and its band at [`POINTS`] evenly spaced index returns.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct FittedLine {
    /// The confidence level of the band (0.95).
    pub level: f64,
    /// Student t quantile t(0.975, degrees of freedom) the band uses, as the beta's CI does.
    pub t_critical: f64,
    /// From the lowest to the highest index (excess) return used, in ascending order.
    pub points: Vec<LinePoint>,
}

/// One point of the fitted line with the band around it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct LinePoint {
    /// Index (excess) return.
    pub x: f64,
    /// α + β·x.
    pub fitted: f64,
    /// Lower and upper end of the 95% band of the mean response at x.
    pub low: f64,
    pub high: f64,
}

/// The fitted line of `estimate` over `[x_min, x_max]` (the index returns used).
pub fn fitted_line(estimate: &BetaEstimate, x_min: f64, x_max: f64) -> FittedLine {
    let t_critical = stats::student_t_quantile(0.975, estimate.degrees_of_freedom as f64);
    let (alpha, beta) = (estimate.alpha, estimate.beta);
    let var_alpha = estimate.alpha_std_error * estimate.alpha_std_error;
    let var_beta = estimate.beta_std_error * estimate.beta_std_error;
    let points = (0..POINTS)
        .map(|i| {
            // The last point is x_max exactly, not x_min plus rounded steps.
            let x = if i + 1 == POINTS {
                x_max
            } else {
                x_min + (x_max - x_min) * i as f64 / (POINTS - 1) as f64
            };
            let fitted = alpha + beta * x;
            // A variance is never negative; rounding could take a near-zero one below.
            let variance =
                (var_alpha + 2.0 * x * estimate.alpha_beta_covariance + x * x * var_beta).max(0.0);
            let half = t_critical * variance.sqrt();
            LinePoint {
                x,
                fitted,
                low: fitted - half,
                high: fitted + half,
            }
        })
        .collect();
    FittedLine {
        level: 0.95,
        t_critical,
        points,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // The textbook mean-response interval in closed form (e.g. Weisberg 2005, Applied Linear
    // Regression, 3rd ed.; any regression text): Var(ŷ(x)) = s²·(1/n + (x − x̄)²/Sxx), written
    // out here by hand on the hand-worked example of least_squares.rs, not taken from the fit:
    // x = 1..5, y = 2,4,5,4,5; x̄ = 3, ȳ = 4, Sxx = 10, Sxy = 6, so β = 0.6, α = 2.2, the
    // residuals −0.8, 0.6, 1.0, −0.6, −0.2, SSE = 2.4 and s² = 2.4/3 = 0.8. The program builds
    // the band the other way, from α's and β's variances and their covariance.
    #[test]
    fn band_is_the_mean_response_interval() {
        let x = [1.0, 2.0, 3.0, 4.0, 5.0];
        let y = [2.0, 4.0, 5.0, 4.0, 5.0];
        let estimate = super::super::ols_beta(&y, &x).unwrap();
        let line = fitted_line(&estimate, 1.0, 5.0);
        assert_eq!(line.points.len(), POINTS);
        assert_eq!((line.points[0].x, line.points[POINTS - 1].x), (1.0, 5.0));
        // scipy.stats.t.ppf(0.975, 3) = 3.1824463052837078 (scipy 1.17.1, run by hand; the
        // printed t tables' 3.182). 4e-15: a few units in the last place of a number near 3
        // (one ulp is 4.4e-16), the rounding two careful evaluations of one quantile differ by.
        let t_scipy = 3.1824463052837078;
        assert!(
            (line.t_critical - t_scipy).abs() < 4e-15,
            "{}",
            line.t_critical
        );
        let (n, x_bar, sxx, s2) = (5.0, 3.0, 10.0, 0.8);
        for p in &line.points {
            let variance = s2 * (1.0 / n + (p.x - x_bar) * (p.x - x_bar) / sxx);
            let half = t_scipy * variance.sqrt();
            // 1e-13: the program's variance is Var α̂ + 2x·Cov + x²·Var β̂ = 0.88 − 0.48x + 0.08x²,
            // terms up to 2.4 that cancel to as little as 0.16, each from a QR fit good to a few
            // ulps; with t's own 4e-15 the half-width carries well under 1e-14 of rounding.
            assert!((p.high - p.fitted - half).abs() < 1e-13, "{p:?}");
            assert!((p.fitted - p.low - half).abs() < 1e-13, "{p:?}");
            assert!((p.fitted - (2.2 + 0.6 * p.x)).abs() < 1e-13);
        }
        // The band is narrowest at x̄ = 3, the 13th of the 25 points (1 + 12·4/24), where
        // Var(ŷ) = s²/n = 0.16.
        let middle = &line.points[(POINTS - 1) / 2];
        assert!((middle.x - 3.0).abs() < 1e-15);
        let at_mean = t_scipy * 0.16_f64.sqrt();
        assert!((middle.high - middle.fitted - at_mean).abs() < 1e-13);
    }
}
