//! What a solve rests on besides the claim: the case's other inputs, each at the case's value
//! and, where it moved with the input solved for, at the answer's (a cost of debt from a spread
//! table moves with the rate, a beta-scaled country premium with the beta, the betas with the
//! ERP when debt betas come from the credit spread).

use serde::Serialize;

use super::Target;
use crate::valuation::{Inputs, Valuation};

/// One input besides the one solved for, as a reader lists them beside the answer: its
/// value in the case and, when it moved with the input solved for, its value at the answer.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Held {
    pub label: &'static str,
    pub value: f64,
    /// A rate, shown in percent; else a beta or a ratio.
    pub rate: bool,
    /// Its value at the answer, when that differs from the case's (a cost of debt from a spread
    /// table moves with the risk-free rate, a beta-scaled country premium with the beta, the
    /// betas with an ERP that sets the debt betas from the credit spread).
    pub moved_to: Option<f64>,
}

/// The figures a solve's inputs are read from, at the case's values or at an answer.
#[derive(Debug, Clone, Copy)]
pub(super) struct Figures {
    pub(super) wacc: f64,
    risk_free_rate: f64,
    equity_risk_premium: f64,
    relevered: f64,
    unlevered: f64,
    premiums: f64,
    country_applied: f64,
    company_specific: f64,
    cost_of_debt: f64,
    debt_to_equity: f64,
    debt_to_capital: f64,
    tax_rate: f64,
    preferred_weight: f64,
    preferred_cost: f64,
    lease_weight: f64,
    lease_cost: f64,
}

impl Figures {
    /// The case's figures with the relevered beta set to `beta` (solved through the build-up),
    /// its WACC and premiums there (a beta-scaled country premium moves with the beta).
    pub(super) fn at_beta(self, wacc: f64, beta: f64, premiums: f64) -> Figures {
        Figures {
            wacc,
            relevered: beta,
            premiums,
            ..self
        }
    }

    pub(super) fn of(c: &crate::valuation::CostOfCapital) -> Figures {
        Figures {
            wacc: c.wacc,
            risk_free_rate: c.risk_free_rate,
            equity_risk_premium: c.equity_risk_premium,
            relevered: c.beta.relevered,
            unlevered: c.beta.unlevered,
            premiums: c.premiums.total,
            country_applied: c.premiums.country_applied,
            company_specific: c.premiums.company_specific,
            cost_of_debt: c.cost_of_debt_pre_tax,
            debt_to_equity: c.target.debt_to_equity,
            debt_to_capital: c.target.debt_to_capital,
            tax_rate: c.target.tax_rate,
            preferred_weight: c.weights.preferred,
            preferred_cost: c.other_capital_costs.preferred_cost,
            lease_weight: c.weights.leases,
            lease_cost: c.other_capital_costs.lease_cost_pre_tax,
        }
    }
}

/// The case's inputs besides the one solved for (all of them for `None`, the starting point of
/// `--solve all`), in a build-up's order, at the case's values (found by review: a reviewer
/// could not file the answer without rerunning the case to learn what was held).
pub fn held_inputs(inputs: &Inputs, base: &Valuation, solved: Option<Target>) -> Vec<Held> {
    held_between(inputs, &Figures::of(&base.cost), None, solved)
}

/// [`held_inputs`], each with its value at the answer `at` when it moved there. Solving the
/// structure relevers the beta, so the aggregate unlevered beta is listed then; solving the
/// size premium lists the other premiums.
pub(super) fn held_between(
    inputs: &Inputs,
    base: &Figures,
    at: Option<&Figures>,
    solved: Option<Target>,
) -> Vec<Held> {
    let by_capital = inputs.case.settings.target.debt_to_capital.is_some();
    (listed(base, solved, at.is_some(), by_capital).into_iter())
        .filter(|(target, ..)| target.is_none() || *target != solved)
        .map(|(_, label, rate, pick)| Held {
            label,
            value: pick(base),
            rate,
            moved_to: at.map(pick).filter(|&x| x != pick(base)),
        })
        .collect()
}

/// One input as listed: the target that moves it when solved for (`None`: none does), its
/// label, whether it is a rate, and where [`Figures`] holds it.
type Listed = (Option<Target>, &'static str, bool, fn(&Figures) -> f64);

/// The inputs [`held_between`] lists, in a build-up's order, before the one solved for is left
/// out; `answered`: whether there is an answer to read moved figures at.
fn listed(base: &Figures, solved: Option<Target>, answered: bool, by_capital: bool) -> Vec<Listed> {
    let mut list: Vec<Listed> = vec![
        (Some(Target::RiskFree), "risk-free rate", true, |f| {
            f.risk_free_rate
        }),
        (Some(Target::Erp), "ERP", true, |f| f.equity_risk_premium),
    ];
    // The structure relevers the beta: the aggregate unlevered beta is what stays, and the
    // relevered beta is listed only where it moved to, at an answer (found by review: with no
    // answer it was listed as held).
    match solved {
        Some(Target::DebtToEquity) => {
            if answered {
                list.push((None, "relevered beta", false, |f| f.relevered));
            }
            list.push((None, "unlevered beta", false, |f| f.unlevered));
        }
        _ => list.push((Some(Target::Beta), "relevered beta", false, |f| f.relevered)),
    }
    // Solving the size premium holds the others, each named when the case has it.
    match solved {
        Some(Target::SizePremium) => list.extend(
            [
                (
                    None,
                    "country premium as applied",
                    true,
                    (|f| f.country_applied) as fn(&Figures) -> f64,
                ),
                (None, "company-specific premium", true, |f| {
                    f.company_specific
                }),
            ]
            .into_iter()
            .filter(|(.., pick)| pick(base) != 0.0),
        ),
        _ => list.push((Some(Target::SizePremium), "premiums in total", true, |f| {
            f.premiums
        })),
    }
    list.push((
        Some(Target::CostOfDebt),
        "pre-tax cost of debt",
        true,
        |f| f.cost_of_debt,
    ));
    list.push(match by_capital {
        true => (Some(Target::DebtToEquity), "debt to capital", false, |f| {
            f.debt_to_capital
        }),
        false => (Some(Target::DebtToEquity), "target D/E", false, |f| {
            f.debt_to_equity
        }),
    });
    list.push((None, "tax rate", true, |f| f.tax_rate));
    // Preferred equity and leases, when the case holds them (found by review: 30% of capital
    // was on neither line; a lease cost taken from the cost of debt moves with it).
    if base.preferred_weight > 0.0 {
        list.push((None, "preferred weight", true, |f| f.preferred_weight));
        list.push((None, "cost of preferred equity", true, |f| f.preferred_cost));
    }
    if base.lease_weight > 0.0 {
        list.push((None, "lease weight", true, |f| f.lease_weight));
        list.push((None, "pre-tax cost of leases", true, |f| f.lease_cost));
    }
    list
}
