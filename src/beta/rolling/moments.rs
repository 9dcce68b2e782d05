//! Moment sums of a sliding regression window, updated as rows enter and leave, and the beta
//! and standard error of every estimator read from them.
//!
//! Row t of a regression with k coefficients is w_t = (1, x_t1, …, x_t(k−1), y_t); q_t holds
//! the products w_ti·w_ta (i ≤ a). The window keeps Σq_t, which holds XᵀX, Xᵀy and yᵀy, and,
//! for the robust standard errors, Σ q_t·q_(t−l)ᵀ for lags l = 0..L over pairs of rows both
//! inside it: the estimator's influence u_t = (gᵀz_t)·e_t is linear in q_t once the
//! coefficients are known, so Σu_t² and Σu_t·u_(t−l) are quadratic forms in those sums. Each
//! row enters once and leaves once, so a peer costs O(T·(L + 1)·p²) with p = (k + 1)(k + 2)/2,
//! whatever the number of windows.
//!
//! The coefficients solve the normal equations through a Cholesky factor of the equilibrated
//! XᵀX (never an inverse). That squares the design's condition number, which QR (the solver of
//! every full-sample fit) avoids; returns shifted by their full-sample means keep a window's
//! design well conditioned, a window whose factor shows near-collinearity (a diagonal ratio
//! below 1e-6) is skipped, and the tests hold every window to a fresh QR fit.

use nalgebra::{DMatrix, DVector};

use crate::stats::least_squares::StdErrors;

/// A window's answer from the moment sums.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum WindowFit {
    /// The beta and its standard error.
    Estimate(f64, f64),
    /// No estimate (too few observations, a divisor below its bound).
    Skip,
    /// The sums cannot be trusted for this window: its design is nearly collinear, or its
    /// residual sum of squares, a difference of two sums, is below 1e-8 of the returns' own
    /// sum of squares, where the subtraction has lost more than half the digits (found by
    /// review: a window fitting to 1e-10 reported a standard error of exactly 0). The caller
    /// refits the window's rows by QR.
    Refit,
}

/// How a window's beta is read from its coefficients.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Combination {
    /// β = the sum of every slope (OLS: the one slope; Dimson: the aggregated coefficients).
    SumOfSlopes,
    /// Scholes–Williams: (b₋₁ + b₀ + b₊₁)/(1 + 2ρ) from simple regressions; the columns of the
    /// previous, same and next period's market return.
    ScholesWilliams {
        lag: usize,
        current: usize,
        lead: usize,
    },
}

/// The sums of the rows in the window `[first, end)`.
pub(crate) struct Moments {
    /// k + 1: the coefficients' columns and the response.
    dimension: usize,
    /// Position in q of the product w_i·w_a, for every (i, a).
    pair: Vec<usize>,
    pairs: usize,
    /// q_t of every row, row after row.
    products: Vec<f64>,
    sum: Vec<f64>,
    /// Σ q_t q_(t−l)ᵀ for l = 0..lagged.len(), each p × p, row-major.
    lagged: Vec<Vec<f64>>,
    first: usize,
    end: usize,
}

impl Moments {
    /// Sums over `regressors` (columns without the intercept, equally long) and `response`,
    /// with cross sums for lags 0..=`max_lag` when robust standard errors need them.
    pub(crate) fn new(regressors: &[Vec<f64>], response: &[f64], max_lag: Option<usize>) -> Self {
        let dimension = regressors.len() + 2;
        let mut pair = vec![0; dimension * dimension];
        let mut pairs = 0;
        for i in 0..dimension {
            for a in i..dimension {
                pair[i * dimension + a] = pairs;
                pair[a * dimension + i] = pairs;
                pairs += 1;
            }
        }
        let mut products = Vec::with_capacity(response.len() * pairs);
        let mut w = vec![0.0; dimension];
        for t in 0..response.len() {
            w[0] = 1.0;
            for (j, column) in regressors.iter().enumerate() {
                w[j + 1] = column[t];
            }
            w[dimension - 1] = response[t];
            for i in 0..dimension {
                for a in i..dimension {
                    products.push(w[i] * w[a]);
                }
            }
        }
        let lags = max_lag.map_or(0, |l| l + 1);
        Moments {
            dimension,
            pair,
            pairs,
            products,
            sum: vec![0.0; pairs],
            lagged: vec![vec![0.0; pairs * pairs]; lags],
            first: 0,
            end: 0,
        }
    }

    /// Rows in the window.
    pub(crate) fn count(&self) -> usize {
        self.end - self.first
    }

    /// The position one past the window's last row.
    pub(crate) fn end(&self) -> usize {
        self.end
    }

    /// The window's first row.
    pub(crate) fn first(&self) -> usize {
        self.first
    }

    /// Adds the next row (`end`) to the window.
    pub(crate) fn push(&mut self) {
        let t = self.end;
        self.update(t, 1.0);
        self.end += 1;
    }

    /// Removes the window's first row.
    pub(crate) fn pop(&mut self) {
        let s = self.first;
        self.update(s, -1.0);
        self.first += 1;
    }

    /// Adds (sign 1, row t = end) or removes (sign −1, row t = first) row t and its pairs with
    /// the other rows of the window.
    fn update(&mut self, t: usize, sign: f64) {
        let p = self.pairs;
        for (total, value) in self.sum.iter_mut().zip(&self.products[t * p..(t + 1) * p]) {
            *total += sign * value;
        }
        for lag in 0..self.lagged.len() {
            // Entering: the pair (t, t − lag); leaving: the pair (t + lag, t).
            let (later, earlier) = if sign > 0.0 {
                match t.checked_sub(lag).filter(|&e| e >= self.first) {
                    Some(e) => (t, e),
                    None => continue,
                }
            } else if t + lag < self.end {
                (t + lag, t)
            } else {
                continue;
            };
            let sums = &mut self.lagged[lag];
            let (a, b) = (
                &self.products[later * p..(later + 1) * p],
                &self.products[earlier * p..(earlier + 1) * p],
            );
            for (i, ai) in a.iter().enumerate() {
                let scaled = sign * ai;
                for (j, bj) in b.iter().enumerate() {
                    sums[i * p + j] += scaled * bj;
                }
            }
        }
    }

    /// Σ w_i·w_a over the window.
    fn second(&self, i: usize, a: usize) -> f64 {
        self.sum[self.pair[i * self.dimension + a]]
    }

    /// hᵀ (Σ q_t q_(t−lag)ᵀ) h.
    fn cross_form(&self, lag: usize, h: &[f64]) -> f64 {
        let p = self.pairs;
        let sums = &self.lagged[lag];
        (0..p)
            .map(|i| h[i] * (0..p).map(|j| sums[i * p + j] * h[j]).sum::<f64>())
            .sum()
    }

    /// The window's beta and its standard error of the kind asked (`newey_west_lags` for
    /// Newey–West, at most the `max_lag` given to [`Moments::new`]); [`WindowFit::Refit`] when
    /// the sums cannot give it to working precision, [`WindowFit::Skip`] when the window has no
    /// estimate.
    pub(crate) fn beta(
        &self,
        combination: Combination,
        kind: StdErrors,
        newey_west_lags: usize,
    ) -> WindowFit {
        let k = self.dimension - 1;
        if self.count() <= k {
            return WindowFit::Skip;
        }
        let xtx = DMatrix::from_fn(k, k, |i, j| self.second(i, j));
        let scale: Vec<f64> = (0..k).map(|i| xtx[(i, i)].sqrt()).collect();
        if scale.iter().any(|s| !(s.is_finite() && *s > 0.0)) {
            return WindowFit::Refit;
        }
        let equilibrated = DMatrix::from_fn(k, k, |i, j| xtx[(i, j)] / (scale[i] * scale[j]));
        let Some(factor) = equilibrated.cholesky() else {
            return WindowFit::Refit;
        };
        let diagonal = factor.l_dirty().diagonal();
        let (smallest, largest) = diagonal
            .iter()
            .fold((f64::INFINITY, 0.0_f64), |(lo, hi), d| {
                (lo.min(*d), hi.max(*d))
            });
        if smallest < 1e-6 * largest {
            return WindowFit::Refit;
        }
        self.solved(combination, kind, newey_west_lags, &xtx, &scale, &factor)
    }

    /// [`Moments::beta`] once the window's design has a well-conditioned factor.
    fn solved(
        &self,
        combination: Combination,
        kind: StdErrors,
        newey_west_lags: usize,
        xtx: &DMatrix<f64>,
        scale: &[f64],
        factor: &nalgebra::Cholesky<f64, nalgebra::Dyn>,
    ) -> WindowFit {
        let k = self.dimension - 1;
        let n = self.count() as f64;
        // Solves XᵀX·v = r through the equilibrated factor.
        let solve = |r: &[f64]| -> Vec<f64> {
            let scaled = DVector::from_fn(k, |i, _| r[i] / scale[i]);
            let v = factor.solve(&scaled);
            (0..k).map(|i| v[i] / scale[i]).collect()
        };
        let xty: Vec<f64> = (0..k).map(|i| self.second(i, k)).collect();
        let b = solve(&xty);
        let ssr = self.second(k, k) - b.iter().zip(&xty).map(|(c, v)| c * v).sum::<f64>();
        if ssr.is_nan() || ssr < 1e-8 * self.second(k, k) {
            return WindowFit::Refit;
        }
        let (beta, g) = match combination {
            Combination::SumOfSlopes => {
                let mut c = vec![1.0; k];
                c[0] = 0.0;
                (b[1..].iter().sum::<f64>(), solve(&c))
            }
            Combination::ScholesWilliams { lag, current, lead } => {
                match self.scholes_williams(lag, current, lead) {
                    Some(fit) => fit,
                    None => return WindowFit::Skip,
                }
            }
        };
        let variance = match kind {
            StdErrors::Classical => {
                let quadratic: f64 = (0..k)
                    .map(|i| g[i] * (0..k).map(|j| xtx[(i, j)] * g[j]).sum::<f64>())
                    .sum();
                ssr / (n - k as f64) * quadratic
            }
            StdErrors::Hc1 | StdErrors::NeweyWest => {
                let h = self.influence(&g, &b);
                let mut meat = self.cross_form(0, &h);
                if kind == StdErrors::Hc1 {
                    meat *= n / (n - k as f64);
                } else {
                    for lag in 1..=newey_west_lags.min(self.lagged.len().saturating_sub(1)) {
                        let weight = 1.0 - lag as f64 / (newey_west_lags as f64 + 1.0);
                        meat += 2.0 * weight * self.cross_form(lag, &h);
                    }
                }
                meat
            }
        };
        match beta.is_finite() && variance.is_finite() && variance >= 0.0 {
            true => WindowFit::Estimate(beta, variance.sqrt()),
            false => WindowFit::Skip,
        }
    }

    /// The Scholes–Williams beta and its weights g on (1, m₋₁, m₀, m₊₁): the estimator is
    /// Σ_t (gᵀz_t)·y_t with gⱼ = 1/(Sⱼⱼ(1 + 2ρ)) and g₀ = −Σ m̄ⱼ·gⱼ (see `beta::scholes_williams`).
    fn scholes_williams(&self, lag: usize, current: usize, lead: usize) -> Option<(f64, Vec<f64>)> {
        let k = self.dimension - 1;
        let n = self.count() as f64;
        // Centred sums of the window: S_ab = Σ w_a w_b − Σ w_a Σ w_b / n.
        let centred =
            |a: usize, b: usize| self.second(a, b) - self.second(0, a) * self.second(0, b) / n;
        let rho = centred(current, lag) / (centred(current, current) * centred(lag, lag)).sqrt();
        let scale = 1.0 + 2.0 * rho;
        // A window whose divisor is below the estimator's bound is skipped, as the whole
        // sample would be refused (`scholes_williams::MIN_DIVISOR`).
        if scale.is_nan() || scale < crate::beta::scholes_williams::MIN_DIVISOR {
            return None;
        }
        let mut g = vec![0.0; k];
        let mut beta = 0.0;
        for column in [lag, current, lead] {
            let sxx = centred(column, column);
            if sxx.is_nan() || sxx <= 0.0 {
                return None;
            }
            beta += centred(column, k) / sxx;
            g[column] = 1.0 / (sxx * scale);
            g[0] -= self.second(0, column) / n * g[column];
        }
        Some((beta / scale, g))
    }

    /// h with hᵀq_t = (gᵀz_t)·e_t, e_t = y_t − bᵀz_t: the coefficient of each product w_i·w_a.
    fn influence(&self, g: &[f64], b: &[f64]) -> Vec<f64> {
        let d = self.dimension;
        let padded = |i: usize| if i < d - 1 { g[i] } else { 0.0 };
        let residual = |a: usize| if a < d - 1 { -b[a] } else { 1.0 };
        let mut h = vec![0.0; self.pairs];
        for i in 0..d {
            for a in 0..d {
                h[self.pair[i * d + a]] += padded(i) * residual(a);
            }
        }
        h
    }
}
