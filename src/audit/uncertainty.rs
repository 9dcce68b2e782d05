//! Monte Carlo interval of the WACC from the peers' beta sampling error.
//!
//! Each draw replaces every peer's raw beta by β + SE·z (z standard normal: the large-sample
//! sampling distribution of the estimate), optionally draws the equity risk premium and the
//! risk-free rate uniformly from user-given ranges, and reruns adjustment (a Vasicek prior from
//! the cross-section is re-estimated from each draw's betas), unlevering,
//! aggregation, relevering, cost of debt, CAPM and WACC through the same functions as the point
//! estimate ([`chain::wacc_only`], the case's formula alone). The draws are seeded, so the same
//! case gives the same percentiles everywhere. It measures the estimation error of the betas (and of the
//! given ranges) only, not the error in choosing peers, index, window or method.

use crate::capital::chain;
use crate::case::{specs, Case};
use crate::error::Result;
use crate::stats::quantile_sorted;
use crate::stats::random::Rng;
use crate::valuation::{chain_error, chain_peers, exclusions, Inputs, PeerEstimates};

pub use crate::valuation::analyses::Uncertainty;

/// Simulates the WACC of `case` around its peers' estimates; `point` is the case's WACC.
pub fn simulate(
    case: &Case,
    inputs: &Inputs,
    estimates: &PeerEstimates,
    point: f64,
) -> Result<Uncertainty> {
    let settings = &case.settings;
    let u = &settings.uncertainty;
    let mut rng = Rng::seeded(u.seed);
    let exclusions = exclusions(settings, estimates);
    let mut drawn_peers = chain_peers(settings, estimates, &exclusions);
    let base = specs::capital(settings, inputs.debt_table.as_ref());
    let mut waccs = Vec::with_capacity(u.draws as usize);
    let uniform = |rng: &mut Rng, [low, high]: [f64; 2]| low + (high - low) * rng.uniform();
    for _ in 0..u.draws {
        for (drawn, estimated) in drawn_peers.iter_mut().zip(&estimates.peers) {
            let e = &estimated.estimate;
            drawn.raw_beta = e.beta + e.beta_std_error * rng.normal();
        }
        let mut spec = base;
        if let Some(range) = u.equity_risk_premium {
            spec.equity_risk_premium = uniform(&mut rng, range);
        }
        if let Some(range) = u.risk_free_rate {
            spec.risk_free_rate = uniform(&mut rng, range);
        }
        waccs.push(chain::wacc_only(&spec, &drawn_peers).map_err(|e| chain_error(case, e))?);
    }
    waccs.sort_by(f64::total_cmp);
    let q = |p: f64| quantile_sorted(&waccs, p);
    Ok(Uncertainty {
        draws: u.draws,
        seed: u.seed,
        beta_distribution: "normal(beta, beta_std_error) for each peer, independent",
        equity_risk_premium_range: u.equity_risk_premium,
        risk_free_rate_range: u.risk_free_rate,
        point_estimate: point,
        mean: waccs.iter().sum::<f64>() / waccs.len() as f64,
        p05: q(0.05),
        p25: q(0.25),
        p50: q(0.50),
        p75: q(0.75),
        p95: q(0.95),
    })
}
