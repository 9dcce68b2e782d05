//! The run's own cautions (`result.json` `cautions`) as sentences: what the memo's cautions
//! section says of this case beyond the general cautions, shortened, for the workbook's Cover
//! and the terminal's summary (found by review: a run whose every peer was flagged and whose
//! betas all reached zero said so only in the memo).

use crate::valuation::Valuation;

/// The cautions of `v` in words; `flags_column` says where a reader finds each peer's flags.
pub fn case_cautions(v: &Valuation, flags_column: &str) -> Vec<String> {
    let c = &v.cautions;
    let names = |list: &[String]| list.join(", ");
    let mut out = Vec::new();
    if let Some([low, high]) = c.leverage_beyond_peers {
        let ratio = |x: f64| crate::error::rounded(x, 3);
        let peers = match v.cost.beta.peers_included {
            1 => format!("the one peer's {}", ratio(low)),
            _ => format!("{} to {}", ratio(low), ratio(high)),
        };
        out.push(format!(
            "Leverage beyond the peers': the target D/E of {} is above every aggregated peer's \
             ({peers}); the relevered beta extrapolates the formula beyond the leverage the \
             betas were measured at.",
            ratio(v.cost.target.debt_to_equity),
        ));
    }
    // Found by review: recorded as a caution, said only in the memo's unlevering section.
    if c.riskless_debt_above_risk_free {
        out.push(format!(
            "Riskless debt at a cost above the risk-free rate: the debt betas are 0 while the \
             subject's cost of debt ({}) lies above the risk-free rate ({}); the debt's risk is \
             given to the equity in unlevering and relevering.",
            super::format::percent(v.cost.cost_of_debt_pre_tax, 2),
            super::format::percent(v.cost.risk_free_rate, 2)
        ));
    }
    if !c.betas_near_zero.is_empty() {
        out.push(format!(
            "Betas not clearly above zero: {}: the raw beta's 95% interval reaches zero or lies \
             below it, yet it enters the aggregate{}.",
            names(&c.betas_near_zero),
            match c.turned_positive_by_adjustment.is_empty() {
                true => String::new(),
                false => format!(
                    ", and the adjustment turns the negative raw beta of {} positive",
                    names(&c.turned_positive_by_adjustment)
                ),
            }
        ));
    }
    if !c.flagged_in_aggregate.is_empty() {
        // One peer in the singular, as the memo's caution words it.
        let (raise, are) = match c.flagged_in_aggregate.len() {
            1 => ("raises", "is"),
            _ => ("raise", "are"),
        };
        out.push(format!(
            "Flagged peers in the aggregate: {} {raise} a diagnostic flag ({flags_column}) and \
             {are} aggregated all the same.",
            names(&c.flagged_in_aggregate)
        ));
    }
    if !c.every_peer_flagged.is_empty() {
        out.push(format!(
            "Every aggregated peer is flagged ({}): the aggregate rests only on betas the \
             diagnostics question.",
            names(&c.every_peer_flagged)
        ));
    }
    if c.few_peers {
        let n = v.cost.beta.peers_included;
        out.push(format!(
            "Few peers: the aggregate rests on {n} peer{}, so one firm's beta error or \
             circumstances can move it a long way.",
            if n == 1 { "" } else { "s" }
        ));
    }
    if let Some(u) = v.uncertainty.as_ref().filter(|u| u.point_outside_interval) {
        out.push(format!(
            "Point estimate outside its interval: the WACC of {} lies outside the \
             estimation-error interval {} to {}.",
            super::format::percent(v.cost.wacc, 2),
            super::format::percent(u.p05, 2),
            super::format::percent(u.p95, 2)
        ));
    }
    out.extend(unstated_caution(&c.unstated_inputs));
    out
}

/// The inputs without a stated basis, listed "a, b and c" as the memo words them.
fn unstated_caution(unstated: &[crate::valuation::UnstatedInput]) -> Option<String> {
    let inputs: Vec<String> = (unstated.iter())
        .map(|u| format!("{} ({})", u.input, u.key))
        .collect();
    let listed = match inputs.split_last()? {
        (last, []) => last.clone(),
        (last, rest) => format!("{} and {last}", rest.join(", ")),
    };
    Some(format!(
        "Inputs without a stated basis: the case gives no source or reason for {listed}."
    ))
}
