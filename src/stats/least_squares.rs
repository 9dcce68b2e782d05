//! Ordinary least squares with k regressors, solved by Householder QR.
//!
//! The normal equations are never formed: XᵀX squares the condition number, and data such as
//! Longley's (NIST StRD) lose half their digits that way. Columns are first scaled to unit
//! length (equilibration), X·D⁻¹ = QR, the coefficients come from the triangular system
//! R·c = Qᵀy with b = D⁻¹c, and the coefficient covariance is s²·D⁻¹R⁻¹R⁻ᵀD⁻¹, with R⁻¹ from a
//! triangular solve. Rank is judged as numpy's `lstsq` does by default: a diagonal entry of R
//! below max(n, k)·ε·max|Rᵢᵢ| means the columns are (numerically) dependent.

use nalgebra::{DMatrix, DVector};
use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};
use crate::stats;

/// A fitted linear model y = Xb + e.
#[derive(Debug, Clone, PartialEq)]
pub struct OlsFit {
    pub coefficients: Vec<f64>,
    pub std_errors: Vec<f64>,
    pub t_stats: Vec<f64>,
    /// Two-sided p-values of the t-statistics, Student t with `degrees_of_freedom`.
    pub p_values: Vec<f64>,
    /// Covariance matrix of the coefficients, s²(XᵀX)⁻¹, computed from R.
    pub covariance: DMatrix<f64>,
    /// Centred R² when the model has an intercept, uncentred otherwise.
    pub r_squared: f64,
    pub adjusted_r_squared: f64,
    /// s = √(SSR / (n − k)).
    pub residual_std_error: f64,
    pub observations: usize,
    pub degrees_of_freedom: usize,
    pub residuals: Vec<f64>,
    /// (XᵀX)⁻¹, computed as D⁻¹R⁻¹R⁻ᵀD⁻¹ from the QR factor (never by inverting XᵀX); the
    /// "bread" of the sandwich covariance estimators.
    pub bread: DMatrix<f64>,
    /// Leverages hᵢᵢ, the diagonal of the hat matrix X(XᵀX)⁻¹Xᵀ, as row sums of squares of the
    /// thin Q factor.
    pub leverages: Vec<f64>,
}

impl OlsFit {
    /// Durbin–Watson statistic Σ(eₜ − eₜ₋₁)² / Σeₜ² of the residuals in observation order
    /// (Durbin and Watson 1950, "Testing for serial correlation in least squares regression
    /// I", Biometrika 37(3/4)); near 2 when they are serially uncorrelated.
    pub fn durbin_watson(&self) -> f64 {
        let e = &self.residuals;
        let num: f64 = e.windows(2).map(|w| (w[1] - w[0]) * (w[1] - w[0])).sum();
        num / e.iter().map(|v| v * v).sum::<f64>()
    }

    /// Internally studentised residuals eᵢ / (s·√(1 − hᵢᵢ)) (the textbook definition, e.g.
    /// Cook and Weisberg 1982, "Residuals and influence in regression").
    pub fn studentised_residuals(&self) -> Vec<f64> {
        let s = self.residual_std_error;
        self.residuals
            .iter()
            .zip(&self.leverages)
            .map(|(e, h)| e / (s * (1.0 - h).sqrt()))
            .collect()
    }
}

/// Checks the shapes and returns each regressor column's norm (the equilibration scale): as
/// many responses as rows, a degree of freedom left, no column all zeros or not finite.
fn column_norms(design: &DMatrix<f64>, responses: usize) -> Result<Vec<f64>> {
    let (n, k) = design.shape();
    if responses != n {
        return Err(Error::Regression(format!(
            "{responses} responses for {n} rows of regressors"
        )));
    }
    if n <= k {
        return Err(Error::Regression(format!(
            "{n} observations cannot fit {k} coefficients with any degree of freedom left"
        )));
    }
    let norms: Vec<f64> = design.column_iter().map(|c| c.norm()).collect();
    if let Some(j) = norms.iter().position(|&s| !(s.is_finite() && s > 0.0)) {
        return Err(Error::Regression(format!(
            "regressor column {j} is all zeros or not finite"
        )));
    }
    Ok(norms)
}

/// R² (against the mean with an intercept, against zero without) and adjusted R² on `df`
/// residual degrees of freedom.
fn r_squared(response: &[f64], ssr: f64, df: usize, has_intercept: bool) -> (f64, f64) {
    let n = response.len();
    let total = if has_intercept {
        let mean = response.iter().sum::<f64>() / n as f64;
        response
            .iter()
            .map(|v| (v - mean) * (v - mean))
            .sum::<f64>()
    } else {
        response.iter().map(|v| v * v).sum::<f64>()
    };
    let r_squared = 1.0 - ssr / total;
    let model_df = if has_intercept { n - 1 } else { n };
    (
        r_squared,
        1.0 - (1.0 - r_squared) * model_df as f64 / df as f64,
    )
}

/// Fits y on the columns of `design`. `has_intercept` says whether one column is a constant,
/// which decides the R² definition (centred or not).
pub fn ols(design: &DMatrix<f64>, response: &[f64], has_intercept: bool) -> Result<OlsFit> {
    let (n, k) = design.shape();
    let norms = column_norms(design, response.len())?;
    let mut scaled = design.clone();
    for (j, mut column) in scaled.column_iter_mut().enumerate() {
        column /= norms[j];
    }
    let y = DVector::from_column_slice(response);
    let qr = scaled.qr();
    let r = qr.r();
    rank_check(r.diagonal().as_slice(), n, 0)?;
    let leverages = leverages(&qr.q(), n);
    let mut qty = y.clone();
    qr.q_tr_mul(&mut qty);
    let qty = qty.rows(0, k).into_owned();
    let scaled_coefficients = r
        .solve_upper_triangular(&qty)
        .ok_or_else(|| Error::Regression("the triangular factor is singular".into()))?;
    let coefficients: Vec<f64> = (0..k).map(|j| scaled_coefficients[j] / norms[j]).collect();

    let fitted = design * DVector::from_column_slice(&coefficients);
    let residuals: Vec<f64> = response
        .iter()
        .zip(fitted.as_slice())
        .map(|(y, f)| y - f)
        .collect();
    let ssr: f64 = residuals.iter().map(|e| e * e).sum();
    let df = n - k;
    let sigma2 = ssr / df as f64;

    let r_inverse = r
        .solve_upper_triangular(&DMatrix::identity(k, k))
        .ok_or_else(|| Error::Regression("the triangular factor is singular".into()))?;
    let unscaled = &r_inverse * r_inverse.transpose();
    let bread = DMatrix::from_fn(k, k, |i, j| unscaled[(i, j)] / (norms[i] * norms[j]));
    let covariance = &bread * sigma2;
    let std_errors: Vec<f64> = (0..k).map(|j| covariance[(j, j)].sqrt()).collect();
    let t_stats: Vec<f64> = (0..k).map(|j| coefficients[j] / std_errors[j]).collect();
    let p_values: Vec<f64> = t_stats
        .iter()
        .map(|&t| stats::student_t_two_sided_p(t, df as f64))
        .collect();

    let (r_squared, adjusted_r_squared) = r_squared(response, ssr, df, has_intercept);
    Ok(OlsFit {
        coefficients,
        std_errors,
        t_stats,
        p_values,
        covariance,
        r_squared,
        adjusted_r_squared,
        residual_std_error: sigma2.sqrt(),
        observations: n,
        degrees_of_freedom: df,
        residuals,
        bread,
        leverages,
    })
}

/// The diagonal of the hat matrix: each row's sum of squares of the thin Q factor, added
/// column by column from zero as nalgebra's `norm_squared` of the row adds them (the same
/// figures), over the columns' contiguous storage.
fn leverages(q: &DMatrix<f64>, n: usize) -> Vec<f64> {
    let mut leverages = vec![0.0; n];
    for column in q.as_slice().chunks_exact(n) {
        for (h, v) in leverages.iter_mut().zip(column) {
            *h += v * v;
        }
    }
    leverages
}

/// Which estimator of the coefficient covariance (and so of standard errors, t, p and CIs).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum StdErrors {
    /// s²(XᵀX)⁻¹, valid for homoskedastic, serially uncorrelated errors.
    Classical,
    /// White's heteroskedasticity-consistent estimator with the n/(n − k) degrees-of-freedom
    /// scaling (HC1): White (1980), "A heteroskedasticity-consistent covariance matrix estimator
    /// and a direct test for heteroskedasticity", Econometrica 48(4); the HC1 name and scaling
    /// follow MacKinnon and White (1985), J. Econometrics 29(3).
    Hc1,
    /// Newey and West (1987), "A simple, positive semi-definite, heteroskedasticity and
    /// autocorrelation consistent covariance matrix", Econometrica 55(3): Bartlett weights
    /// 1 − l/(L + 1) for lags l = 1..L, no small-sample scaling.
    NeweyWest,
}

/// The Newey–West lag count when none is given: floor(4·(N/100)^(2/9)), the rule of Newey and
/// West (1994), "Automatic lag selection in covariance matrix estimation", Rev. Econ. Studies
/// 61(4): the preliminary bandwidth of their automatic procedure for the Bartlett kernel, used
/// on its own as a rule of thumb.
pub fn newey_west_default_lags(observations: usize) -> usize {
    (4.0 * (observations as f64 / 100.0).powf(2.0 / 9.0)).floor() as usize
}

/// The covariance of the linear estimator `weights · y` (one row of `weights` per estimate, one
/// column per observation) from the residuals `e` of a model with `parameters` coefficients:
/// classical s²·AAᵀ with s² = Σe²/(n − k); HC1 n/(n − k)·A diag(e²) Aᵀ; Newey–West
/// A Ω Aᵀ with Ω_ts = e_t e_s (1 − |t − s|/(L + 1)) for |t − s| ≤ L. For OLS, A = (XᵀX)⁻¹Xᵀ and
/// these are the textbook sandwich estimators.
pub fn linear_estimator_covariance(
    weights: &DMatrix<f64>,
    residuals: &[f64],
    parameters: usize,
    kind: StdErrors,
    newey_west_lags: usize,
) -> DMatrix<f64> {
    let n = residuals.len();
    let df = (n - parameters) as f64;
    match kind {
        StdErrors::Classical => {
            let s2 = residuals.iter().map(|e| e * e).sum::<f64>() / df;
            weights * weights.transpose() * s2
        }
        StdErrors::Hc1 => {
            let scaled =
                DMatrix::from_fn(weights.nrows(), n, |i, t| weights[(i, t)] * residuals[t]);
            &scaled * scaled.transpose() * (n as f64 / df)
        }
        StdErrors::NeweyWest => {
            // u_t = a_t·e_t per estimate; Ω-weighted sum of cross products, lag by lag.
            let u = DMatrix::from_fn(weights.nrows(), n, |i, t| weights[(i, t)] * residuals[t]);
            let mut meat = &u * u.transpose();
            for lag in 1..=newey_west_lags.min(n.saturating_sub(1)) {
                let w = 1.0 - lag as f64 / (newey_west_lags as f64 + 1.0);
                let later = u.columns(lag, n - lag);
                let earlier = u.columns(0, n - lag);
                let cross = later * earlier.transpose();
                meat += (&cross + cross.transpose()) * w;
            }
            meat
        }
    }
}

/// Replaces a fit's covariance, standard errors, t-statistics and p-values by those of the
/// chosen estimator. `design` must be the matrix the fit was computed from.
pub fn with_std_errors(
    mut fit: OlsFit,
    design: &DMatrix<f64>,
    kind: StdErrors,
    newey_west_lags: usize,
) -> OlsFit {
    if kind == StdErrors::Classical {
        return fit;
    }
    let k = fit.coefficients.len();
    let weights = &fit.bread * design.transpose();
    fit.covariance =
        linear_estimator_covariance(&weights, &fit.residuals, k, kind, newey_west_lags);
    fit.std_errors = (0..k).map(|j| fit.covariance[(j, j)].sqrt()).collect();
    fit.t_stats = (0..k)
        .map(|j| fit.coefficients[j] / fit.std_errors[j])
        .collect();
    let df = fit.degrees_of_freedom as f64;
    fit.p_values = fit
        .t_stats
        .iter()
        .map(|&t| stats::student_t_two_sided_p(t, df))
        .collect();
    fit
}

/// One slope of the least-squares fit of `response` on an intercept and `columns`, with its
/// standard error of the chosen kind, its t-statistic and two-sided p-value: for a fit read for
/// one coefficient over thousands of securities (a diagnostic), where [`ols`] would form the
/// thin Q factor, copy the design and the response and give every statistic. The columns and
/// the response are centred, which takes the intercept out (Frisch–Waugh–Lovell: the slopes,
/// their residuals and their linear weights are those of the fit with the intercept) and can
/// only improve the conditioning; then one Householder QR of the augmented matrix
/// [X̃·D⁻¹ | ỹ] (the columns equilibrated as in [`ols`]), Q never formed: above the diagonal,
/// R's last column holds Qᵀỹ over X̃'s columns, and its last diagonal entry is ±√SSR (least
/// squares by the QR factorisation of the augmented matrix; Golub and Van Loan, *Matrix
/// Computations*, chapter 5, from memory). `j` counts the slopes from 0; the degrees of freedom
/// are N − 1 − the number of columns. The rank rule is [`ols`]'s, on the centred columns.
pub fn one_slope(
    columns: &[&[f64]],
    response: &[f64],
    j: usize,
    (kind, newey_west_lags): (StdErrors, usize),
) -> Result<Slope> {
    let (n, k) = (response.len(), columns.len());
    if columns.iter().any(|c| c.len() != n) || n <= k + 1 {
        return Err(Error::Regression(format!(
            "{n} observations cannot fit {} coefficients with any degree of freedom left",
            k + 1
        )));
    }
    let (centred, norms) = centred_columns(columns, response)?;
    let (x, y) = centred.split_at(k);
    let rounding = (n.max(k + 1) as f64) * f64::EPSILON;
    let mut data = Vec::with_capacity(n * (k + 1));
    for (c, s) in x.iter().zip(&norms) {
        data.extend(c.iter().map(|v| v / s));
    }
    data.extend_from_slice(&y[0]);
    let r = DMatrix::from_vec(n, k + 1, data).qr().r();
    rank_check(&r.diagonal().as_slice()[..k], n, 1)?;
    // No residual error to test against (found by review: an exact fit gave t = 3.9e15).
    if r[(k, k)].abs() <= rounding * euclidean(&y[0]) {
        return Err(Error::Regression(
            "the response is fitted exactly: no residual error is left to test against".into(),
        ));
    }
    let singular = || Error::Regression("the triangular factor is singular".into());
    let factor = r.view((0, 0), (k, k)).into_owned();
    let scaled = (factor.solve_upper_triangular(&r.view((0, k), (k, 1)).into_owned()))
        .ok_or_else(singular)?;
    let slopes: Vec<f64> = (0..k).map(|i| scaled[i] / norms[i]).collect();
    let df = n - k - 1;
    // Row j of (X̃ᵀX̃)⁻¹ = D⁻¹R⁻¹R⁻ᵀD⁻¹, from R⁻¹ by a triangular solve (never X̃ᵀX̃ inverted).
    let r_inverse = factor
        .solve_upper_triangular(&DMatrix::identity(k, k))
        .ok_or_else(singular)?;
    let bread_row: Vec<f64> = (0..k)
        .map(|i| r_inverse.row(j).dot(&r_inverse.row(i)) / (norms[j] * norms[i]))
        .collect();
    let variance = match kind {
        StdErrors::Classical => bread_row[j] * r[(k, k)] * r[(k, k)] / df as f64,
        _ => sandwich_variance((x, &y[0]), (&bread_row, &slopes), kind, newey_west_lags),
    };
    let std_error = variance.sqrt();
    let t_stat = slopes[j] / std_error;
    Ok(Slope {
        estimate: slopes[j],
        std_error,
        t_stat,
        p_value: stats::student_t_two_sided_p(t_stat, df as f64),
        slopes,
        observations: n,
    })
}

/// The rank rule numpy's `lstsq` applies by default: a diagonal entry of R at or below
/// max(n, k)·ε·max|Rᵢᵢ| means its column is (numerically) a combination of the others. Columns
/// are named from `first` (0 when the intercept is column 0, 1 when it was centred away).
fn rank_check(diagonal: &[f64], n: usize, first: usize) -> Result<()> {
    let k = diagonal.len();
    let largest = diagonal.iter().fold(0.0_f64, |m, d| m.max(d.abs()));
    let tolerance = (n.max(k) as f64) * f64::EPSILON * largest;
    match diagonal.iter().position(|d| d.abs() <= tolerance) {
        Some(j) => Err(Error::Regression(format!(
            "regressor column {} is a linear combination of the others (rank-deficient design)",
            j + first
        ))),
        None => Ok(()),
    }
}

/// The columns and the response less their means (the response last), with the centred
/// columns' norms. A column constant to rounding centres to noise, which equilibration would
/// scale up to a full column: it is refused when its centred norm is within rounding of its
/// uncentred one, as `ols` judges the same column beside the intercept (found by review: a
/// constant 0.1 gave a slope with SE 1.7e12).
fn centred_columns(columns: &[&[f64]], response: &[f64]) -> Result<(Vec<Vec<f64>>, Vec<f64>)> {
    let (n, k) = (response.len(), columns.len());
    let mean = |c: &[f64]| c.iter().sum::<f64>() / n as f64;
    let centred: Vec<Vec<f64>> = (columns.iter().copied().chain([response]))
        .map(|c| {
            let m = mean(c);
            c.iter().map(|v| v - m).collect()
        })
        .collect();
    let norms: Vec<f64> = centred[..k].iter().map(|c| euclidean(c)).collect();
    let rounding = (n.max(k + 1) as f64) * f64::EPSILON;
    let constant =
        |j: usize| !(norms[j].is_finite() && norms[j] > rounding * euclidean(columns[j]));
    match (0..k).find(|&j| constant(j)) {
        Some(bad) => Err(Error::Regression(format!(
            "regressor column {} is constant or not finite",
            bad + 1
        ))),
        None => Ok((centred, norms)),
    }
}

/// The Euclidean norm of a slice.
fn euclidean(values: &[f64]) -> f64 {
    values.iter().map(|v| v * v).sum::<f64>().sqrt()
}

/// The sandwich variance of one slope of a centred fit ([`one_slope`]): the slope as a linear
/// estimator wᵀy, wₜ = Σᵢ (X̃ᵀX̃)⁻¹ⱼᵢ·x̃ₜᵢ (its weights in the fit with the intercept, from the
/// slope's row of (X̃ᵀX̃)⁻¹), with the residuals eₜ = ỹₜ − Σᵢ bᵢ·x̃ₜᵢ, through
/// [`linear_estimator_covariance`] with the intercept counted among the parameters.
fn sandwich_variance(
    (x, y): (&[Vec<f64>], &[f64]),
    (bread_row, slopes): (&[f64], &[f64]),
    kind: StdErrors,
    newey_west_lags: usize,
) -> f64 {
    let (n, k) = (y.len(), x.len());
    let weights = DMatrix::from_fn(1, n, |_, t| {
        (0..k).map(|i| bread_row[i] * x[i][t]).sum::<f64>()
    });
    let residuals: Vec<f64> = (0..n)
        .map(|t| y[t] - (0..k).map(|i| slopes[i] * x[i][t]).sum::<f64>())
        .collect();
    linear_estimator_covariance(&weights, &residuals, k + 1, kind, newey_west_lags)[(0, 0)]
}

/// One slope of a fit ([`one_slope`]), with every slope's estimate.
#[derive(Debug, Clone, PartialEq)]
pub struct Slope {
    pub estimate: f64,
    pub std_error: f64,
    pub t_stat: f64,
    /// Two-sided, Student t with N − 1 − (the number of slopes) degrees of freedom.
    pub p_value: f64,
    /// Every slope, in the order of the columns.
    pub slopes: Vec<f64>,
    pub observations: usize,
}

/// The design matrix [1, x₁, …, x_m] for regressor columns given as slices of equal length.
pub fn design_with_intercept(columns: &[&[f64]]) -> DMatrix<f64> {
    let n = columns.first().map_or(0, |c| c.len());
    // Column-major storage: the ones, then each column as given.
    let mut data = Vec::with_capacity(n * (columns.len() + 1));
    data.resize(n, 1.0);
    for column in columns {
        assert_eq!(column.len(), n, "regressor columns of equal length");
        data.extend_from_slice(column);
    }
    DMatrix::from_vec(n, columns.len() + 1, data)
}

#[cfg(test)]
mod tests {
    use super::*;

    // One slope from the QR of the centred, augmented matrix equals the full fit's figures for
    // it under each kind of standard errors: the same least squares (Frisch–Waugh–Lovell), by
    // other operations, so to rounding (1e-12 relative: a well-conditioned design of eight
    // rows, whose figures are of order one).
    #[test]
    fn one_slope_equals_the_full_fit() {
        let x = [0.3, -1.2, 0.8, 2.1, -0.4, 1.5, -2.2, 0.1];
        let lag = [0.5, 0.3, -1.2, 0.8, 2.1, -0.4, 1.5, -2.2];
        let y = [0.9, -1.5, 1.1, 2.9, -0.2, 1.4, -2.8, 0.6];
        let design = design_with_intercept(&[&x, &lag]);
        let close = |a: f64, b: f64| (a - b).abs() <= 1e-12 * b.abs().max(1e-300);
        for (kind, lags) in [
            (StdErrors::Classical, 0),
            (StdErrors::Hc1, 0),
            (StdErrors::NeweyWest, 2),
        ] {
            let full = with_std_errors(ols(&design, &y, true).unwrap(), &design, kind, lags);
            for j in 0..2 {
                let one = one_slope(&[&x, &lag], &y, j, (kind, lags)).unwrap();
                assert!(
                    close(one.estimate, full.coefficients[j + 1]),
                    "{kind:?} {j}"
                );
                assert!(close(one.std_error, full.std_errors[j + 1]), "{kind:?} {j}");
                assert!(close(one.t_stat, full.t_stats[j + 1]), "{kind:?} {j}");
                assert!(close(one.p_value, full.p_values[j + 1]), "{kind:?} {j}");
            }
        }
        let twice: Vec<f64> = x.iter().map(|v| 2.0 * v).collect();
        let err = one_slope(&[&x, &twice], &y, 1, (StdErrors::Classical, 0)).unwrap_err();
        assert!(err.to_string().contains("linear combination"), "{err}");
        // Constant to rounding (0.1 + 0.2 − 0.2 is 0.10000000000000003): numpy's lstsq gives the
        // design [1, x, 0.1…] rank 2 (found by review); `ols` refuses it as well.
        let constant: Vec<f64> = (0..8)
            .map(|t| if t % 2 == 0 { 0.1 } else { 0.1 + 0.2 - 0.2 })
            .collect();
        let err = one_slope(&[&x, &constant], &y, 1, (StdErrors::Classical, 0)).unwrap_err();
        assert!(err.to_string().contains("constant"), "{err}");
        assert!(ols(&design_with_intercept(&[&x, &constant]), &y, true).is_err());
        // An exact fit leaves no error: refused rather than a t of 1e15.
        let exact: Vec<f64> = (0..8).map(|t| 0.5 * x[t] + 0.5 * lag[t] + 1e-4).collect();
        let err = one_slope(&[&x, &lag], &exact, 1, (StdErrors::Classical, 0)).unwrap_err();
        assert!(err.to_string().contains("fitted exactly"), "{err}");
    }

    // Textbook fact: a perfectly collinear design has no unique least-squares solution.
    #[test]
    fn collinear_columns_are_rejected() {
        let x = [1.0, 2.0, 3.0, 4.0];
        let twice: Vec<f64> = x.iter().map(|v| 2.0 * v).collect();
        let design = design_with_intercept(&[&x, &twice]);
        let err = ols(&design, &[1.0, 3.0, 2.0, 5.0], true).unwrap_err();
        assert!(err.to_string().contains("linear combination"), "{err}");
    }

    // Hand-worked example (any statistics textbook's simple regression formulas):
    // x = 1,2,3,4,5; y = 2,4,5,4,5. x̄ = 3, ȳ = 4, Sxy = 6, Sxx = 10, so b = 0.6, a = 2.2;
    // residuals −0.8, 0.6, 1.0, −0.6, −0.2 give SSR = 2.4, s² = 0.8, SE(b) = √(0.8/10),
    // SST = 6, R² = 1 − 2.4/6 = 0.6.
    #[test]
    fn simple_regression_matches_the_hand_computation() {
        let x = [1.0, 2.0, 3.0, 4.0, 5.0];
        let y = [2.0, 4.0, 5.0, 4.0, 5.0];
        let fit = ols(&design_with_intercept(&[&x]), &y, true).unwrap();
        // 1e-14: five-point sums of small integers; QR adds a few ulps of rounding.
        let close = |a: f64, b: f64| (a - b).abs() < 1e-14;
        assert!(close(fit.coefficients[0], 2.2), "{:?}", fit.coefficients);
        assert!(close(fit.coefficients[1], 0.6));
        assert!(close(fit.std_errors[1], (0.8_f64 / 10.0).sqrt()));
        assert!(close(fit.r_squared, 0.6));
        assert_eq!(fit.degrees_of_freedom, 3);
    }

    // Newey and West (1994) rule floor(4·(N/100)^(2/9)), worked by hand: N = 60 gives
    // 4·0.6^(0.2222) = 4·0.8927 = 3.57 → 3; N = 100 gives 4; N = 250 gives 4·1.2258 = 4.90 → 4;
    // N = 1000 gives 4·1.6681 = 6.67 → 6.
    #[test]
    fn newey_west_lag_rule() {
        assert_eq!(newey_west_default_lags(60), 3);
        assert_eq!(newey_west_default_lags(100), 4);
        assert_eq!(newey_west_default_lags(250), 4);
        assert_eq!(newey_west_default_lags(1000), 6);
    }

    // Intercept-only model y = μ + e with y = 1, −1, 2, −2 (ȳ = 0, e = y), hand-worked:
    // A = (1/n)·1ᵀ. Classical: s²/n = (10/3)/4 = 5/6. HC1: n/(n − 1)·Σe²/n² = 4/3·10/16 = 5/6
    // (the textbook identity that HC1 equals classical for the mean). Newey–West with L = 1:
    // (Σe² + 2·½·Σe_t e_{t−1})/n² = (10 + (−1 − 2 − 4))/16 = 3/16.
    #[test]
    fn sandwich_estimators_match_the_hand_computation() {
        let e = [1.0, -1.0, 2.0, -2.0];
        let a = DMatrix::from_element(1, 4, 0.25);
        let classical = linear_estimator_covariance(&a, &e, 1, StdErrors::Classical, 0);
        let hc1 = linear_estimator_covariance(&a, &e, 1, StdErrors::Hc1, 0);
        let nw = linear_estimator_covariance(&a, &e, 1, StdErrors::NeweyWest, 1);
        // 1e-15: sums of a few small integers scaled by powers of two and 1/3.
        assert!((classical[(0, 0)] - 5.0 / 6.0).abs() < 1e-15);
        assert!((hc1[(0, 0)] - 5.0 / 6.0).abs() < 1e-15);
        assert!((nw[(0, 0)] - 3.0 / 16.0).abs() < 1e-15);
        // With L = 0 Newey–West is White's HC0 = Σe²/n² = 10/16.
        let hc0 = linear_estimator_covariance(&a, &e, 1, StdErrors::NeweyWest, 0);
        assert!((hc0[(0, 0)] - 10.0 / 16.0).abs() < 1e-15);
    }

    // The hand-worked example above: residuals −0.8, 0.6, 1.0, −0.6, −0.2 have successive
    // differences 1.4, 0.4, −1.6, 0.4, so DW = (1.96 + 0.16 + 2.56 + 0.16)/2.4 = 4.84/2.4.
    // Leverage of x = 1: 1/n + (x − x̄)²/Sxx = 0.2 + 4/10 = 0.6, so its studentised residual is
    // −0.8/(√0.8·√0.4) = −√2.
    #[test]
    fn durbin_watson_and_studentised_residuals_by_hand() {
        let x = [1.0, 2.0, 3.0, 4.0, 5.0];
        let y = [2.0, 4.0, 5.0, 4.0, 5.0];
        let fit = ols(&design_with_intercept(&[&x]), &y, true).unwrap();
        // 1e-14: sums of five small numbers, QR rounding.
        assert!((fit.durbin_watson() - 4.84 / 2.4).abs() < 1e-14);
        assert!((fit.leverages[0] - 0.6).abs() < 1e-14);
        assert!((fit.studentised_residuals()[0] + 2.0_f64.sqrt()).abs() < 1e-14);
        // The leverages sum to k = 2 (trace of the hat matrix, a textbook identity).
        assert!((fit.leverages.iter().sum::<f64>() - 2.0).abs() < 1e-14);
    }
}
