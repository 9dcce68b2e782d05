//! Vasicek's Bayesian shrinkage of a beta toward a prior.
//!
//! Vasicek (1973), "A note on using cross-sectional information in Bayesian estimation of
//! security betas", J. Finance 28(5): with a normal prior of mean β̄ and variance σ²_prior and a
//! sampling variance σ²ᵢ = SE(βᵢ)², the posterior mean is
//! β*ᵢ = w·βᵢ + (1 − w)·β̄ with w = σ²_prior / (σ²_prior + σ²ᵢ), and the posterior variance is
//! 1 / (1/σ²_prior + 1/σ²ᵢ). The prior is the cross-section of the peers (the mean and the
//! sample variance, n − 1, of their raw betas), or a mean and variance the case states.

use serde::Serialize;

/// The prior a peer's beta is shrunk toward.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Prior {
    pub mean: f64,
    pub variance: f64,
    /// `cross-section` or `stated`.
    pub source: &'static str,
}

/// One peer's shrunk beta.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Shrunk {
    pub beta: f64,
    /// w, the weight on the peer's own estimate.
    pub weight_on_estimate: f64,
    /// √ of the posterior variance.
    pub std_error: f64,
}

/// The cross-sectional prior of a set of raw betas: their mean and sample variance. `None`
/// with fewer than two betas or no dispersion (no cross-section to learn from).
pub fn cross_sectional_prior(betas: &[f64]) -> Option<Prior> {
    if betas.len() < 2 {
        return None;
    }
    let summary = crate::stats::dispersion(betas);
    let variance = summary.std_dev.map_or(0.0, |s| s * s);
    (variance > 0.0).then_some(Prior {
        mean: summary.mean,
        variance,
        source: "cross-section",
    })
}

/// Shrinks `beta` (with standard error `std_error`) toward `prior`.
pub fn shrink(beta: f64, std_error: f64, prior: &Prior) -> Shrunk {
    let sampling_variance = std_error * std_error;
    let weight_on_estimate = prior.variance / (prior.variance + sampling_variance);
    Shrunk {
        beta: weight_on_estimate * beta + (1.0 - weight_on_estimate) * prior.mean,
        weight_on_estimate,
        std_error: (1.0 / (1.0 / prior.variance + 1.0 / sampling_variance)).sqrt(),
    }
}

/// A cross-sectional prior needs at least two included betas that differ: `included` were
/// given. The caller, which knows what it calls the betas (peers, securities) and the settings,
/// words it (`case::wording::prior_unavailable`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct PriorUnavailable {
    pub included: usize,
}

#[cfg(test)]
mod tests {
    use super::*;

    // Vasicek (1973), eq. for the posterior mean, worked by hand: prior mean 1.0, variance
    // 0.09; estimate 1.6 with SE 0.3 (variance 0.09). w = 0.09/(0.09 + 0.09) = 0.5, so
    // β* = 0.5·1.6 + 0.5·1.0 = 1.3 and the posterior variance is 1/(1/0.09 + 1/0.09) = 0.045.
    #[test]
    fn weight_is_the_published_formula() {
        let prior = Prior {
            mean: 1.0,
            variance: 0.09,
            source: "stated",
        };
        let s = shrink(1.6, 0.3, &prior);
        // 1e-15: a handful of roundings of numbers near 1.
        assert!((s.weight_on_estimate - 0.5).abs() < 1e-15);
        assert!((s.beta - 1.3).abs() < 1e-15);
        assert!((s.std_error - 0.045_f64.sqrt()).abs() < 1e-15);
        // Second example, weights 0.04/(0.04 + 0.01) = 0.8: β* = 0.8·0.5 + 0.2·1.0 = 0.6.
        let prior = Prior {
            mean: 1.0,
            variance: 0.04,
            source: "stated",
        };
        let s = shrink(0.5, 0.1, &prior);
        assert!((s.weight_on_estimate - 0.8).abs() < 1e-15);
        assert!((s.beta - 0.6).abs() < 1e-15);
    }

    // The limits the formula implies: an estimate with a huge sampling error carries no
    // information and lands on the prior; one with a tiny error keeps its own value.
    #[test]
    fn huge_error_moves_to_the_prior_tiny_error_stays() {
        let prior = Prior {
            mean: 0.9,
            variance: 0.05,
            source: "stated",
        };
        let noisy = shrink(2.5, 1e4, &prior);
        // w = 0.05 / (0.05 + 1e8) ≈ 5e-10, so β* = 0.9 + w·(2.5 − 0.9) is within 1.6·5e-10 =
        // 8e-10 of the prior.
        assert!((noisy.beta - 0.9).abs() < 1e-8, "{noisy:?}");
        let precise = shrink(2.5, 1e-5, &prior);
        // w = 0.05 / (0.05 + 1e-10) = 1 − 2e-9, so β* is within 1.6·2e-9 of the estimate.
        assert!((precise.beta - 2.5).abs() < 1e-8, "{precise:?}");
    }

    // Mean and n − 1 variance of 0.8, 1.0, 1.2: mean 1.0, variance (0.04 + 0 + 0.04)/2 = 0.04.
    #[test]
    fn cross_sectional_prior_is_mean_and_sample_variance() {
        let prior = cross_sectional_prior(&[0.8, 1.0, 1.2]).unwrap();
        assert!((prior.mean - 1.0).abs() < 1e-15);
        // 1e-15: squares of numbers near 0.2.
        assert!((prior.variance - 0.04).abs() < 1e-15);
        assert!(cross_sectional_prior(&[1.0]).is_none());
    }
}
