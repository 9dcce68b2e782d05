//! Monte Carlo interval of the WACC from the peers' beta sampling error.
//!
//! Each draw replaces every peer's raw beta by β + SE·z (z standard normal: the large-sample
//! sampling distribution of the estimate), optionally draws the equity risk premium and the
//! risk-free rate uniformly from user-given ranges, and reruns adjustment (a Vasicek prior from
//! the cross-section is re-estimated from each draw's betas), unlevering,
//! aggregation, relevering, cost of debt, CAPM and WACC through the same functions as the point
//! estimate ([`cost_of_capital`], which also applies the Blume or Vasicek adjustment). The draws are seeded, so the same case gives
//! the same percentiles everywhere. It measures the estimation error of the betas (and of the
//! given ranges) only, not the error in choosing peers, index, window or method.

use serde::Serialize;

use crate::case::Case;
use crate::error::Result;
use crate::random::Rng;
use crate::stats::quantile_sorted;
use crate::valuation::{cost_of_capital, Checks, CostOfCapital, Inputs, PeerResult};

/// Percentiles of the simulated WACC.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Uncertainty {
    pub draws: u32,
    pub seed: u64,
    pub beta_distribution: &'static str,
    pub equity_risk_premium_range: Option<[f64; 2]>,
    pub risk_free_rate_range: Option<[f64; 2]>,
    pub point_estimate: f64,
    pub mean: f64,
    pub p05: f64,
    pub p25: f64,
    pub p50: f64,
    pub p75: f64,
    pub p95: f64,
}

/// Simulates the WACC of `case` around the point estimates `peers` and `point`.
pub fn simulate(
    case: &Case,
    inputs: &Inputs,
    peers: &[PeerResult],
    point: &CostOfCapital,
) -> Result<Uncertainty> {
    let u = &case.settings.uncertainty;
    let mut rng = Rng::seeded(u.seed);
    let mut drawn_case = case.clone();
    let mut drawn_peers = peers.to_vec();
    let mut waccs = Vec::with_capacity(u.draws as usize);
    let mut notes = Vec::new();
    let uniform = |rng: &mut Rng, [low, high]: [f64; 2]| low + (high - low) * rng.uniform();
    let mut progress = crate::progress::Progress::new("Monte Carlo draws", u64::from(u.draws));
    for _ in 0..u.draws {
        progress.step()?;
        for (drawn, peer) in drawn_peers.iter_mut().zip(peers) {
            let raw = peer.estimate.beta + peer.estimate.beta_std_error * rng.normal();
            drawn.estimate.beta = raw;
        }
        let market = &mut drawn_case.settings.market;
        if let Some(range) = u.equity_risk_premium {
            market.equity_risk_premium = uniform(&mut rng, range);
        }
        if let Some(range) = u.risk_free_rate {
            market.risk_free_rate = uniform(&mut rng, range);
        }
        notes.clear();
        let cost = cost_of_capital(
            &drawn_case,
            inputs.debt_table.as_ref(),
            &mut drawn_peers,
            &mut notes,
            Checks::Skip,
        )?;
        waccs.push(cost.wacc);
    }
    waccs.sort_by(f64::total_cmp);
    let q = |p: f64| quantile_sorted(&waccs, p);
    Ok(Uncertainty {
        draws: u.draws,
        seed: u.seed,
        beta_distribution: "normal(beta, beta_std_error) for each peer, independent",
        equity_risk_premium_range: u.equity_risk_premium,
        risk_free_rate_range: u.risk_free_rate,
        point_estimate: point.wacc,
        mean: waccs.iter().sum::<f64>() / waccs.len() as f64,
        p05: q(0.05),
        p25: q(0.25),
        p50: q(0.50),
        p75: q(0.75),
        p95: q(0.95),
    })
}
