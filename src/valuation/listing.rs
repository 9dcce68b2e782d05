//! The beta listing of `hurdle betas`: each peer's record — estimate, adjusted beta, D/E and
//! unlevered betas under the case's formula — from the estimates alone. No target, cost of equity
//! or WACC is computed, so an input only those need cannot break a plain listing.

use crate::capital::chain;
use crate::case::{specs, Case};
use crate::error::Result;

use super::{
    chain_error, chain_peers, exclusions, peer_results, Inputs, PeerEstimates, PeerResult,
};

/// Lists every peer of `case` from its estimates: the same records as `result.json`'s `peers`.
pub fn list_betas(
    case: &Case,
    inputs: &Inputs,
    estimates: &PeerEstimates,
) -> Result<Vec<PeerResult>> {
    let settings = &case.settings;
    let exclusions = exclusions(settings, estimates);
    let peers = chain_peers(settings, estimates, &exclusions);
    let spec = specs::capital(settings, inputs.debt_table.as_ref());
    let figures = chain::unlevered_only(&spec, &peers).map_err(|e| chain_error(case, e))?;
    Ok(peer_results(
        settings, inputs, estimates, &figures, exclusions,
    ))
}
