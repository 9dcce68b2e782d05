//! Simulation checks of the beta estimator on data generated with a known beta.
//!
//! Textbook property of OLS with normal, homoskedastic errors: the 95% Student-t interval
//! covers the true slope in 95% of samples. With R repetitions the observed share has standard
//! error √(0.95·0.05/R); the bounds below are ±3.5 of those, so a correct estimator fails with
//! probability below 0.05% — and never, for the fixed seeds used — while an interval that is
//! 10% too narrow or too wide (coverage ≈ 92.5% or 96.9%) falls outside them.

use hurdle::beta::ols_beta;
use hurdle::stats::random::Rng;

fn coverage(seed: u64, repetitions: usize, n: usize, true_beta: f64, noise: f64) -> (f64, f64) {
    let mut rng = Rng::seeded(seed);
    let mut covered = 0;
    let mut sum_beta = 0.0;
    for _ in 0..repetitions {
        let market: Vec<f64> = (0..n).map(|_| 0.005 + 0.045 * rng.normal()).collect();
        let asset: Vec<f64> = market
            .iter()
            .map(|m| 0.001 + true_beta * m + noise * rng.normal())
            .collect();
        let estimate = ols_beta(&asset, &market).unwrap();
        sum_beta += estimate.beta;
        if estimate.beta_ci_low <= true_beta && true_beta <= estimate.beta_ci_high {
            covered += 1;
        }
    }
    (
        covered as f64 / repetitions as f64,
        sum_beta / repetitions as f64,
    )
}

#[test]
fn ci_covers_the_true_beta_about_95_percent_of_the_time() {
    let repetitions = 4000;
    let half_width = 3.5 * (0.95_f64 * 0.05 / repetitions as f64).sqrt();
    for (seed, n, true_beta, noise) in [
        (11, 60, 1.2, 0.06),
        (12, 36, 0.7, 0.09),
        (13, 250, 1.5, 0.02),
    ] {
        let (share, mean_beta) = coverage(seed, repetitions, n, true_beta, noise);
        assert!(
            (share - 0.95).abs() < half_width,
            "N = {n}: coverage {share} outside 0.95 ± {half_width}"
        );
        // Unbiasedness: one estimate's variance is noise²·E[1/Sxx] = noise²/(0.045²·(N − 3))
        // (Sxx/0.045² is χ² with N − 1 degrees of freedom, whose inverse has mean 1/(N − 3)),
        // so the mean of R estimates has standard error noise/(0.045·√(N − 3)·√R); the bound is
        // 4.5 of those (a correct estimator fails with probability below 1e-5).
        let bound = 4.5 * noise / (0.045 * ((n - 3) as f64).sqrt() * (repetitions as f64).sqrt());
        assert!(
            (mean_beta - true_beta).abs() < bound,
            "N = {n}: mean beta {mean_beta}, bound {bound}"
        );
    }
}
