//! Notes on capital inputs that the formulas take as given but a reviewer questions: a size
//! premium for a subject larger than some of its peers, cash netted at the debt's beta, and a
//! negative debt beta.

use crate::capital::leverage::Formula;
use crate::case::{CaseFile, DebtBetaSource};

/// A size premium for a subject that is not smaller than every peer: the premium's usual
/// ground is a subject smaller than the firms its beta comes from (found by review: the demo's
/// justification said "smaller than every peer" while its equity value was above four of
/// them). Equity values are compared as given, in the units the case shares.
pub(super) fn size_premium_note(
    settings: &CaseFile,
    exclusions: &[Option<String>],
) -> Option<String> {
    let subject = settings.target.subject_equity_value?;
    // The peers aggregated: the firms the beta comes from (found by review: excluded ones
    // were counted).
    let peers: Vec<f64> = (settings.peers.iter().zip(exclusions))
        .filter(|(_, excluded)| excluded.is_none())
        .map(|(p, _)| p.equity_value)
        .collect();
    let below = peers.iter().filter(|&&e| e < subject).count();
    (settings.premiums.size > 0.0 && below > 0).then(|| {
        let (least, most) = peers
            .iter()
            .fold((f64::INFINITY, 0.0_f64), |(l, m), &e| (l.min(e), m.max(e)));
        format!(
            "Check: a size premium of {}% is added, but the subject's equity value \
             (target.subject_equity_value = {}) is above that of {below} of the {} peers \
             aggregated ({} to {}): a size premium usually rests on the subject being smaller \
             than the firms its beta comes from; say why it applies \
             (premiums.size_justification).",
            crate::error::rounded(settings.premiums.size * 100.0, 2),
            crate::error::compact(subject),
            peers.len(),
            crate::error::compact(least),
            crate::error::compact(most)
        )
    })
}

/// Net debt under a formula that takes a debt beta, with debt betas that may differ from 0: the
/// cash netted against the debt then carries the debt's beta, not a beta of zero (found by
/// review: README and the code's comments said zero). A given debt beta below 0 is a "Check:"
/// note: debt ranks ahead of the equity on the same assets.
pub(super) fn net_debt_beta_note(settings: &CaseFile) -> Vec<String> {
    let leverage = &settings.leverage;
    let takes_debt_beta = leverage.formula != Formula::Hamada;
    let mut notes = Vec::new();
    let given = leverage.debt_beta_source == DebtBetaSource::Given;
    let risky = match leverage.debt_beta_source {
        DebtBetaSource::None => false,
        DebtBetaSource::Given => {
            leverage.debt_beta != 0.0
                || (settings.peers.iter()).any(|p| p.debt_beta.is_some_and(|b| b != 0.0))
        }
        DebtBetaSource::CreditSpread => true,
    };
    if takes_debt_beta
        && risky
        && leverage.debt_measure == crate::capital::leverage::DebtMeasure::Net
    {
        notes.push(
            "leverage.debt_measure = \"net\" with debt betas: each peer's cash is netted \
             against its debt as negative debt at the debt's beta, not at a beta of zero, so \
             its unlevered beta is that of the operations only if its cash is as risky as its \
             debt; the betas of the operations (cash at a beta of zero, from gross debt) are \
             beside them."
                .to_string(),
        );
    }
    // The case's own under "given"; a peer's own wins under either source that reads one.
    let used = takes_debt_beta && leverage.debt_beta_source != DebtBetaSource::None;
    let case_level =
        (used && given).then(|| ("leverage.debt_beta".to_string(), leverage.debt_beta));
    let own = (settings.peers.iter()).filter(|_| used).filter_map(|p| {
        p.debt_beta
            .map(|b| (format!("the debt beta of {}", p.name), b))
    });
    let negative = case_level
        .into_iter()
        .chain(own)
        .filter(|(_, beta)| *beta < 0.0);
    notes.extend(negative.map(|(what, beta)| {
        format!(
            "Check: {what} is {}, below 0: debt ranks ahead of the equity on the same assets and \
             rarely moves against the market; check the figure.",
            crate::error::compact(beta)
        )
    }));
    notes
}
