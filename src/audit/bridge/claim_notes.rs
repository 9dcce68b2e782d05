//! The checks a claimed build-up gets beside the bridge: the plausibility checks of a case's
//! own figures, a stated cost of equity its components do not give, and how its
//! `debt_to_capital` is read beside preferred equity or leases.

use super::Side;

/// The plausibility checks a case's own figures get, run on a claimed build-up (a case hurdle
/// computed has its own notes): a bank's or adviser's file is as open to a percentage typed for
/// a decimal (0.6 for a 0.6% premium) as a case. Each note begins "Check: " and names the claim.
pub fn claim_notes(side: &Side) -> Vec<String> {
    if side.computed {
        return Vec::new();
    }
    let b = &side.build_up;
    let figures = crate::valuation::Figures {
        risk_free_rate: b.risk_free_rate,
        equity_risk_premium: b.equity_risk_premium,
        premiums: b.premiums,
        cost_of_debt_pre_tax: b.cost_of_debt_pre_tax,
        cost_of_equity: b.cost_of_equity(),
        tax_rate: b.tax_rate,
        wacc: side.wacc,
    };
    let stated = side
        .stated_wacc
        .filter(|&w| w > crate::case::sanity::USUAL_MAX_COST || w <= 0.0)
        .map(|w| {
            format!(
                "Check: the stated WACC is {}%, outside what a discount rate usually is; rates \
                 are decimals (0.055 is 5.5%).",
                crate::error::rounded(w * 100.0, 2)
            )
        });
    let of_capital = debt_to_capital_note(side);
    let equity = cost_of_equity_note(side);
    (crate::valuation::plausibility(&figures).into_iter())
        .chain(stated)
        .chain(equity)
        .chain(of_capital)
        .map(|note| {
            let rest = note.strip_prefix("Check: ").unwrap_or(&note);
            format!("Check: in the claimed build-up \"{}\", {rest}", side.label)
        })
        .collect()
}

/// How a claim's `debt_to_capital` is read beside preferred equity or leases, when both are
/// there: D/(D + E), with the `debt_to_equity` of the other reading.
fn debt_to_capital_note(side: &Side) -> Option<String> {
    let b = &side.build_up;
    // Found by review: a bank's "D/V 30%" beside 10% preferred means 30% of all capital, which
    // the claim's key reads as 30% of debt plus common equity.
    let other = b.preferred_weight + b.lease_weight;
    // No debt reads alike both ways.
    (side.debt_to_capital.filter(|&dc| other > 0.0 && dc > 0.0)).map(|dc| {
        let components = match (b.preferred_weight > 0.0, b.lease_weight > 0.0) {
            (true, true) => "preferred equity and leases",
            (true, false) => "preferred equity",
            _ => "leases",
        };
        // D/E when debt is dc of all capital: E = 1 − dc − other.
        let equity = 1.0 - dc - other;
        let de = dc / equity;
        let limit = crate::case::sanity::MAX_DEBT_TO_EQUITY;
        // Within rounding of none (0.7 + 0.3 leaves 5.6e-17; found by review: a D/E of 1.3e16).
        let instead = match equity > 1e-9 {
            true if de <= limit => format!(
                "write debt_to_equity = {} instead",
                crate::error::rounded(de, 4)
            ),
            true => format!(
                "its D/E would be {}, beyond the {limit} a build-up accepts",
                crate::error::rounded(de, 4)
            ),
            false => "that leaves no common equity".to_string(),
        };
        format!(
            "Check: debt_to_capital = {} is read as debt over debt and common equity, D/(D + E), \
             so with {components} at {}% of capital, debt is {}% of all capital; if the claim \
             means {}% of all capital, {instead}.",
            crate::error::compact(dc),
            crate::error::rounded(other * 100.0, 1),
            crate::error::rounded(b.debt_weight * 100.0, 1),
            crate::error::rounded(dc * 100.0, 1),
        )
    })
}

/// A stated cost of equity its components do not give, to a tenth of a basis point.
fn cost_of_equity_note(side: &Side) -> Option<String> {
    let b = &side.build_up;
    // A stated cost of equity its own components do not give, to half a basis point (found by
    // review: a one-pager's Ke of 12% beside rf + β·ERP + premiums of 11.1%).
    // The gap in basis points to one decimal, as shown, decides (found by review: a gap of
    // −0.5 bp was noted and +0.5 bp not).
    let components = b.cost_of_equity();
    (side.stated_cost_of_equity)
        .map(|ke| (ke, ((ke - components) * 1e5).round() / 10.0))
        .filter(|&(_, gap_bp)| gap_bp.abs() >= 0.5)
        .map(|(ke, gap_bp)| {
            format!(
                "Check: the stated cost of equity, {}%, is not what rf + β·ERP + premiums give, \
                 {}%: {} bp its components do not explain.",
                crate::error::rounded(ke * 100.0, 3),
                crate::error::rounded(components * 100.0, 3),
                crate::error::rounded(gap_bp, 1),
            )
        })
}
