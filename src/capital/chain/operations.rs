//! The beta of the operations: the unlevered beta with the cash (at a beta of zero) taken out,
//! always from the unlevered beta at gross debt. Apart from the chain because the listing
//! (`listing.rs`) and the full chain both report it.

use super::{unlever, AdjustedBeta, CapitalSpec, DebtMeasure, Formula, PeerCapital, PeerTerms};

/// One peer's beta of the operations, always from the unlevered beta at gross debt
/// (`unlevered` is the peer's unlevered beta under the spec's debt measure): under net debt the
/// unlevered beta has already netted the cash against the debt (as negative debt, at the
/// debt's beta, zero only for riskless debt), and dividing it by the operating share as well
/// would count the cash twice. The one rule for the
/// point estimate ([`operations_betas`]) and every draw (`wacc_with`).
pub(super) fn peer_operations_beta(
    spec: &CapitalSpec<'_>,
    formula: Formula,
    (peer, adjusted, terms): (&PeerCapital, &AdjustedBeta, &PeerTerms),
    unlevered: f64,
) -> f64 {
    let gross = match spec.debt_measure {
        DebtMeasure::Gross => unlevered,
        DebtMeasure::Net => {
            let gross_terms = PeerTerms {
                debt_to_equity: super::leverage::firm_debt_to_equity(
                    DebtMeasure::Gross,
                    peer.equity_value,
                    peer.debt,
                    peer.cash,
                ),
                ..*terms
            };
            unlever(formula, peer, adjusted, &gross_terms)
        }
    };
    super::leverage::operations_beta(gross, terms.operating_share)
}

/// [`peer_operations_beta`] for every peer.
pub(super) fn operations_betas(
    spec: &CapitalSpec<'_>,
    formula: Formula,
    peers: &[PeerCapital],
    adjusted: &[AdjustedBeta],
    terms: &[PeerTerms],
    unlevered: &[f64],
) -> Vec<f64> {
    let each = peers.iter().zip(adjusted).zip(terms);
    each.zip(unlevered)
        .map(|(((peer, adjusted), terms), &u)| {
            peer_operations_beta(spec, formula, (peer, adjusted, terms), u)
        })
        .collect()
}
