//! Rolling betas: the stability of each peer's beta through the estimation window.
//!
//! Each window spans `window` consecutive return periods of the grid and ends at every
//! `step`-th period end; its beta is the OLS market-model slope (Sharpe 1963) with the classical
//! standard error, fitted on the aligned observations inside it. The sums Σx, Σy, Σx², Σxy, Σy²
//! are updated as observations enter and leave (each observation enters once and leaves once),
//! so a peer costs O(T) however many windows there are, instead of refitting each window. To
//! keep the updated sums from cancelling, x and y are first shifted by their full-sample means
//! (a slope and its SE do not change under a shift). The rolling beta is always this OLS beta,
//! whatever `beta.method` says.

use chrono::NaiveDate;
use serde::Serialize;

use crate::error::Result;
use crate::io::series::iso_date;
use crate::stats::least_squares::{design_with_intercept, ols};

/// One window's estimate.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RollingPoint {
    #[serde(serialize_with = "iso_date")]
    pub window_end: NaiveDate,
    pub beta: f64,
    pub std_error: f64,
    pub observations: usize,
}

/// Range and trend of a peer's rolling betas.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Stability {
    pub windows: usize,
    pub window_periods: u32,
    pub min: f64,
    pub max: f64,
    pub first: f64,
    pub last: f64,
    /// OLS slope of the rolling betas on time, per year (window ends in years of 365.25 days).
    pub trend_per_year: f64,
}

/// Rolling OLS betas of `asset` on `market` observed at `observed` (ascending dates, a subset
/// of `period_ends`, the grid's return period ends). Windows with fewer than `min_observations`
/// observations are skipped.
pub fn rolling_betas(
    period_ends: &[NaiveDate],
    observed: &[NaiveDate],
    asset: &[f64],
    market: &[f64],
    window: usize,
    step: usize,
    min_observations: usize,
) -> Vec<RollingPoint> {
    let n_all = asset.len();
    if n_all == 0 || window == 0 || window > period_ends.len() {
        return Vec::new();
    }
    let mean = |v: &[f64]| v.iter().sum::<f64>() / v.len() as f64;
    let (mx, my) = (mean(market), mean(asset));
    let mut sums = Sums::default();
    let (mut enter, mut leave) = (0, 0);
    let mut points = Vec::new();
    for end_index in (window - 1..period_ends.len()).step_by(step.max(1)) {
        let end = period_ends[end_index];
        // The window holds periods end_index + 1 − window ..= end_index.
        let start_exclusive = end_index
            .checked_sub(window)
            .map(|before| period_ends[before]);
        while enter < n_all && observed[enter] <= end {
            sums.add(market[enter] - mx, asset[enter] - my, 1.0);
            enter += 1;
        }
        while leave < enter && start_exclusive.is_some_and(|s| observed[leave] <= s) {
            sums.add(market[leave] - mx, asset[leave] - my, -1.0);
            leave += 1;
        }
        let n = enter - leave;
        if n < min_observations.max(3) {
            continue;
        }
        if let Some((beta, std_error)) = sums.slope() {
            points.push(RollingPoint {
                window_end: end,
                beta,
                std_error,
                observations: n,
            });
        }
    }
    points
}

#[derive(Debug, Default)]
struct Sums {
    n: f64,
    x: f64,
    y: f64,
    xx: f64,
    xy: f64,
    yy: f64,
}

impl Sums {
    fn add(&mut self, x: f64, y: f64, sign: f64) {
        self.n += sign;
        self.x += sign * x;
        self.y += sign * y;
        self.xx += sign * x * x;
        self.xy += sign * x * y;
        self.yy += sign * y * y;
    }

    /// Slope and classical SE: b = Sxy/Sxx, SE = √(SSR/(n − 2)/Sxx) with centred sums and
    /// SSR = Syy − b·Sxy (textbook simple regression).
    fn slope(&self) -> Option<(f64, f64)> {
        let sxx = self.xx - self.x * self.x / self.n;
        let sxy = self.xy - self.x * self.y / self.n;
        let syy = self.yy - self.y * self.y / self.n;
        if sxx <= 0.0 {
            return None;
        }
        let beta = sxy / sxx;
        let ssr = (syy - beta * sxy).max(0.0);
        Some((beta, (ssr / (self.n - 2.0) / sxx).sqrt()))
    }
}

/// Range and trend of rolling betas; `None` with fewer than two windows.
pub fn stability(points: &[RollingPoint], window_periods: u32) -> Result<Option<Stability>> {
    if points.len() < 2 {
        return Ok(None);
    }
    let origin = points[0].window_end;
    let years: Vec<f64> = points
        .iter()
        .map(|p| (p.window_end - origin).num_days() as f64 / 365.25)
        .collect();
    let betas: Vec<f64> = points.iter().map(|p| p.beta).collect();
    let fit = ols(&design_with_intercept(&[&years]), &betas, true)?;
    Ok(Some(Stability {
        windows: points.len(),
        window_periods,
        min: betas.iter().copied().fold(f64::INFINITY, f64::min),
        max: betas.iter().copied().fold(f64::NEG_INFINITY, f64::max),
        first: betas[0],
        last: betas[betas.len() - 1],
        trend_per_year: fit.coefficients[1],
    }))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::beta::ols_beta;
    use crate::stats::random::Rng;

    fn month_ends(n: usize) -> Vec<NaiveDate> {
        let mut d = NaiveDate::from_ymd_opt(2020, 1, 31).unwrap();
        let mut out = Vec::new();
        for _ in 0..n {
            out.push(d);
            d = crate::market::sampling::month_end(d + chrono::Days::new(1));
        }
        out
    }

    // The updated sums must give what a fresh OLS fit (QR, src/regression.rs) of each window
    // gives — the textbook simple-regression slope and SE — here on seeded random data with
    // two periods missing, so windows hold different counts.
    #[test]
    fn updated_sums_equal_a_fresh_fit_of_each_window() {
        let ends = month_ends(40);
        let mut rng = Rng::seeded(5);
        let keep: Vec<usize> = (0..40).filter(|&i| i != 7 && i != 20).collect();
        let observed: Vec<NaiveDate> = keep.iter().map(|&i| ends[i]).collect();
        let market: Vec<f64> = keep.iter().map(|_| 0.01 + 0.04 * rng.normal()).collect();
        let asset: Vec<f64> = market
            .iter()
            .map(|m| 1.2 * m + 0.05 * rng.normal())
            .collect();
        let points = rolling_betas(&ends, &observed, &asset, &market, 12, 2, 10);
        assert!(!points.is_empty());
        for p in &points {
            let end = ends.iter().position(|d| *d == p.window_end).unwrap();
            let first = end + 1 - 12;
            let inside: Vec<usize> = (0..observed.len())
                .filter(|&j| ends[first] <= observed[j] && observed[j] <= p.window_end)
                .collect();
            let a: Vec<f64> = inside.iter().map(|&j| asset[j]).collect();
            let m: Vec<f64> = inside.iter().map(|&j| market[j]).collect();
            let fresh = ols_beta(&a, &m).unwrap();
            assert_eq!(p.observations, a.len());
            // 1e-10 relative: the updated sums lose a few digits to cancellation that QR
            // avoids; returns of a few percent leave well over 10 digits.
            assert!(
                (p.beta - fresh.beta).abs() < 1e-10 * fresh.beta.abs(),
                "{p:?} {fresh:?}"
            );
            assert!((p.std_error - fresh.beta_std_error).abs() < 1e-10 * fresh.beta_std_error);
        }
    }

    // A steadily rising beta (y = b(t)·x exactly, b rising 0.1 per window of one month) gives a
    // positive trend; the range is the first and last value (hand-checked construction).
    #[test]
    fn stability_reports_range_and_trend() {
        let points: Vec<RollingPoint> = month_ends(5)
            .into_iter()
            .enumerate()
            .map(|(i, d)| RollingPoint {
                window_end: d,
                beta: 1.0 + 0.1 * i as f64,
                std_error: 0.1,
                observations: 12,
            })
            .collect();
        let s = stability(&points, 12).unwrap().unwrap();
        assert_eq!((s.min, s.max, s.windows), (1.0, 1.4, 5));
        // 0.1 per month is about 1.2 per year (months of unequal length: within 5%).
        assert!((s.trend_per_year - 1.2).abs() < 0.06, "{s:?}");
    }
}
