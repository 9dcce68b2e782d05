//! The peers through unlevering and no further, for a beta listing: no target, cost of equity or
//! WACC, so nothing only those need can stop a listing. The subject's cost of debt enters only
//! where an unlevered beta reads it (Miles–Ezzell, a debt beta from the credit spread), so a
//! listing whose case takes it from a spread table needs the table only then.

use super::{
    adjust, debt, debt_beta_from_spread, operations_betas, peer_terms, terms_with, unlevered_betas,
    Buffers, CapitalSpec, ChainError, PeerCapital, PeerTerms,
};
use crate::beta::AdjustedBeta;
use crate::capital::leverage::{DebtBetaSource, Formula};

/// Each peer's figures through unlevering under the spec's formula.
#[derive(Debug, Clone)]
pub struct UnleveredPeers {
    pub adjusted: Vec<AdjustedBeta>,
    pub terms: Vec<PeerTerms>,
    pub unlevered: Vec<f64>,
    /// The betas of the operations (cash taken out).
    pub operations: Vec<f64>,
}

/// What a beta listing shows of each peer: the adjusted beta, the capital-structure terms and the
/// unlevered betas under the spec's formula — no target, cost of equity or WACC, so nothing those
/// need can break a listing.
pub fn unlevered_only(
    spec: &CapitalSpec<'_>,
    peers: &[PeerCapital],
) -> Result<UnleveredPeers, ChainError> {
    let mut buffers = Buffers::default();
    adjust(spec, peers, &mut buffers)?;
    let adjusted = buffers.adjusted;
    // The subject's cost of debt when the spec can give it: a given yield, or a spread table the
    // caller read because an unlevered beta needs it ([`unlevering_needs_subject_cost_of_debt`]).
    let kd = match matches!(spec.debt, debt::DebtSpec::Given(_)) || spec.debt_table.is_some() {
        true => Some(
            debt::pre_tax_cost_of_debt(&spec.debt, spec.debt_table, spec.risk_free_rate)
                .map_err(ChainError::CostOfDebt)?,
        ),
        false => None,
    };
    let terms = peers
        .iter()
        .map(|p| listed_peer_terms(spec, p, kd))
        .collect::<Result<Vec<_>, _>>()?;
    let unlevered = unlevered_betas(spec.formula, peers, &adjusted, &terms);
    let operations = operations_betas(spec, spec.formula, peers, &adjusted, &terms, &unlevered);
    Ok(UnleveredPeers {
        adjusted,
        terms,
        unlevered,
        operations,
    })
}

/// Whether a peer's unlevered beta reads the subject's cost of debt: Miles–Ezzell discounts the
/// tax shield at the cost of debt, and a debt beta from the credit spread is read off it, for a
/// peer without a cost of debt (or, for the spread, a debt beta) of its own. `own` holds each
/// peer's own cost of debt and debt beta.
pub fn unlevering_needs_subject_cost_of_debt(
    formula: Formula,
    debt_beta_source: DebtBetaSource,
    own: impl IntoIterator<Item = (Option<f64>, Option<f64>)>,
) -> bool {
    own.into_iter().any(|(cost_of_debt, debt_beta)| {
        cost_of_debt.is_none()
            && (formula.uses_cost_of_debt()
                || (debt_beta_source == DebtBetaSource::CreditSpread && debt_beta.is_none()))
    })
}

/// [`peer_terms`] for a listing, which may not have the subject's cost of debt: then each peer
/// must do with its own figures, and a step that needs the subject's is refused.
fn listed_peer_terms(
    spec: &CapitalSpec<'_>,
    peer: &PeerCapital,
    subject_cost_of_debt: Option<f64>,
) -> Result<PeerTerms, ChainError> {
    if let Some(kd) = subject_cost_of_debt {
        return Ok(peer_terms(spec, peer, kd));
    }
    let own_cost_of_debt = peer.own_cost_of_debt;
    let debt_beta = match spec.debt_beta_source {
        DebtBetaSource::None => Some(0.0),
        DebtBetaSource::Given => Some(peer.own_debt_beta.unwrap_or(spec.debt_beta)),
        DebtBetaSource::CreditSpread => peer
            .own_debt_beta
            .or_else(|| own_cost_of_debt.map(|kd| debt_beta_from_spread(spec, kd))),
    };
    match debt_beta {
        Some(debt_beta) if !(spec.formula.uses_cost_of_debt() && own_cost_of_debt.is_none()) => {
            Ok(terms_with(spec, peer, debt_beta, own_cost_of_debt))
        }
        _ => Err(ChainError::CostOfDebt(
            super::super::debt::DebtProblem::TableNotRead,
        )),
    }
}
