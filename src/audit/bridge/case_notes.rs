//! The notes on two cases bridged: what differs between them besides the figures the bridge
//! moves (their peer sets, settings and data), so a reader of `compare` knows what else the
//! lines carry.

use super::{Bridge, CaseFacts};

/// Each side's relevered beta taken back to an asset beta by Hamada at its own D/E and tax
/// rate, when the structures or the tax rates differ (the beta line then carries leverage) and
/// every case side unlevers by Hamada with riskless debt, so the figures are the ones the case
/// itself would give (found by review: under Harris–Pringle the note's 0.794 contradicted the
/// case's own 0.737). `None` otherwise.
pub fn asset_beta_note(b: &Bridge, facts: [Option<&CaseFacts>; 2]) -> Option<String> {
    let taxes_differ = b.from.build_up.tax_rate != b.to.build_up.tax_rate;
    let hamada = |f: &CaseFacts| {
        let leverage = &f.settings["leverage"];
        leverage["formula"] == "hamada" && leverage["debt_beta_source"] == "none"
    };
    if !(b.structures_differ() || taxes_differ) || !facts.iter().flatten().all(|f| hamada(f)) {
        return None;
    }
    let (from, to) = (b.from.asset_beta()?, b.to.asset_beta()?);
    Some(format!(
        "taken back to asset betas at each side's own D/E and tax rate (Hamada, riskless debt) \
         the relevered betas are {} and {}, which is what the beta line holds besides leverage \
         and tax",
        crate::error::rounded(from, 3),
        crate::error::rounded(to, 3)
    ))
}

/// A case side whose country premium is scaled by its relevered beta: the bridge carries the
/// premium, at that side's beta, in the premiums line, so the beta line does not move it
/// (found by review: `compare` and `implied` split it differently, unsaid).
pub fn scaled_premium_notes(b: &Bridge, facts: [Option<&CaseFacts>; 2]) -> Vec<String> {
    let sides = [&b.from, &b.to];
    (sides.iter().zip(facts))
        .filter_map(|(side, facts)| {
            let (applied, beta) = facts?.beta_scaled_country?;
            Some(format!(
                "the premiums of \"{}\" include a country premium scaled by its relevered beta, \
                 βL × CRP = {}% at βL {}: the bridge carries it in the premiums line, so the beta \
                 line does not move it (`hurdle implied`, solving for the beta, moves it with the \
                 beta)",
                side.label,
                crate::error::rounded(applied * 100.0, 2),
                crate::error::rounded(beta, 3),
            ))
        })
        .collect()
}

/// Notes for two cases: the peers in one aggregate and not the other (they move the beta line
/// through the unlevered beta), and a cost of debt built on the risk-free rate (a change in the
/// rate then moves the cost of debt line too).
pub fn case_notes(b: &Bridge, from: &CaseFacts, to: &CaseFacts) -> Vec<String> {
    let mut out = Vec::new();
    let only = |a: &CaseFacts, other: &CaseFacts| -> Vec<String> {
        (a.peers_included.iter())
            .filter(|p| !other.peers_included.contains(p))
            .cloned()
            .collect()
    };
    let (gone, new) = (only(from, to), only(to, from));
    if !gone.is_empty() || !new.is_empty() {
        let list = |names: &[String]| match names.is_empty() {
            true => "none".to_string(),
            false => names.join(", "),
        };
        out.push(format!(
            "the peer sets differ: aggregated only in {}: {}; only in {}: {} (each moves \
             the beta line through the unlevered beta, with the window and the data)",
            b.from.source,
            list(&gone),
            b.to.source,
            list(&new)
        ));
    }
    let (settings, files) = from.differences(to);
    if !settings.is_empty() {
        out.push(format!(
            "the case settings that differ ({} → {}): {}",
            b.from.source,
            b.to.source,
            settings.join("; ")
        ));
    }
    let (tables, data): (Vec<String>, Vec<String>) =
        files.into_iter().partition(|role| role == "spread table");
    if !data.is_empty() {
        out.push(format!(
            "data read for the same role whose bytes differ between the sides: {} (the \
             returns, and so the betas, may differ with them)",
            data.join(", ")
        ));
    }
    if !tables.is_empty() {
        out.push(
            "the spread tables' bytes differ between the sides (the cost of debt may \
             differ with them)"
                .to_string(),
        );
    }
    let rates_differ = b.from.build_up.risk_free_rate != b.to.build_up.risk_free_rate;
    if rates_differ && (from.debt_on_risk_free || to.debt_on_risk_free) {
        out.push(
            "a pre-tax cost of debt here is the risk-free rate plus a spread, so part of \
             the cost of debt line is the change in the risk-free rate"
                .to_string(),
        );
    }
    out
}
