//! The cautions and notes on a value `implied` found: a figure hard to defend, a structure or
//! a beta beyond the peers', a given cost of debt held at a solved structure.

use super::{Implied, Target};

impl Implied {
    /// Why the value found, though it reproduces the claim, is hard to defend: a negative
    /// premium, rate or beta, a figure far above the usual (the bounds the run's notes use), a
    /// pre-tax cost of debt below the risk-free rate or above the case's cost of equity (debt
    /// ranks ahead of equity), or a risk-free rate above the case's given cost of debt.
    /// `None` when nothing stands out.
    pub fn caution(&self) -> Option<String> {
        let value = self.value.filter(|_| !self.does_not_move)?;
        let percent = |x: f64| format!("{}%", crate::error::rounded(x * 100.0, 2));
        use crate::case::sanity::{USUAL_MAX_COST, USUAL_MAX_PREMIUM, USUAL_MAX_RISK_FREE};
        let too_high = match self.target {
            Target::Erp | Target::SizePremium => USUAL_MAX_PREMIUM,
            Target::RiskFree => USUAL_MAX_RISK_FREE,
            Target::CostOfDebt => USUAL_MAX_COST,
            Target::Beta => 3.0,
            Target::DebtToEquity => return self.structure_caution(value),
        };
        let what = match self.target {
            Target::Erp => "an equity risk premium",
            Target::SizePremium => "a size premium",
            Target::RiskFree => "a risk-free rate",
            Target::CostOfDebt => "a pre-tax cost of debt",
            Target::Beta => "a relevered beta",
            Target::DebtToEquity => unreachable!("returned above"),
        };
        if value < 0.0 && self.target == Target::RiskFree {
            // Negative yields have been quoted on some currencies' government bonds.
            Some(
                "a risk-free rate below zero: some markets have quoted such yields; check that \
                 the claim's currency and date had one"
                    .into(),
            )
        } else if value < 0.0 {
            Some(format!(
                "{what} below zero: the claim implies an input no market gives"
            ))
        } else if value > too_high {
            Some(format!("{what} far above what such a figure usually is"))
        } else if let Some(caution) = self.beta_outside_peers() {
            Some(caution)
        } else if self.target == Target::CostOfDebt && value < self.base_risk_free_rate {
            Some(format!(
                "a pre-tax cost of debt below the case's risk-free rate ({}): no lender takes \
                 less than the riskless rate",
                percent(self.base_risk_free_rate)
            ))
        } else if let Some(kd) = self
            .base_cost_of_debt
            .filter(|kd| self.target == Target::RiskFree && value > *kd)
        {
            Some(format!(
                "a risk-free rate above the case's pre-tax cost of debt ({}): the debt would pay \
                 less than the riskless rate",
                percent(kd)
            ))
        } else if self.target == Target::CostOfDebt && value > self.base_cost_of_equity {
            Some(format!(
                "a pre-tax cost of debt above the case's cost of equity ({}): debt ranks ahead \
                 of equity and should cost less",
                percent(self.base_cost_of_equity)
            ))
        } else {
            None
        }
    }

    /// For a solved structure under a given cost of debt: that cost stays as the case gives it
    /// at the structure found (found by review: only the memo said so of a leverage what-if).
    pub fn fixed_cost_of_debt(&self) -> Option<String> {
        let kd = self.base_cost_of_debt?;
        let moved = self.value.is_some_and(|v| v != self.base_value);
        (self.target == Target::DebtToEquity && moved).then(|| {
            format!(
                "the pre-tax cost of debt stays at the case's given {}% at this structure, though \
                 lenders ask more of a more indebted firm (debt.source = \"coverage\" or \
                 \"rating\" prices it by the structure's coverage or rating)",
                crate::error::rounded(kd * 100.0, 2)
            )
        })
    }

    /// The caution on a solved beta whose unlevered equivalent lies outside every aggregated
    /// peer's (found by review: an unlevered 1.195 against peers of 0.678 to 0.904 went
    /// without one, while a D/E beyond the peers' had one).
    fn beta_outside_peers(&self) -> Option<String> {
        let equivalent = self.unlevered_equivalent.as_ref()?;
        let (low, high) = self.peers_unlevered_range;
        let unlevered = equivalent.unlevered;
        let what = match equivalent.operations {
            true => "a beta of the operations",
            false => "an unlevered beta",
        };
        let r = |x: f64| crate::error::rounded(x, 3);
        (low.is_finite() && !(low..=high).contains(&unlevered)).then(|| {
            format!(
                "{what} of {} outside the aggregated peers' ({} to {}): the claimed WACC \
                 needs a beta none of these peers has",
                r(unlevered),
                r(low),
                r(high)
            )
        })
    }

    /// The caution on a solved target above every aggregated peer's D/E, as the run gives it
    /// for a case's target (found by review: a solved D/E of 6.1 against peers of 0.1 to 0.7
    /// went without it).
    fn structure_caution(&self, value: f64) -> Option<String> {
        let high = self.peers_highest_debt_to_equity;
        // A case that gives its target as debt to capital is solved in it.
        let de = match self.key.as_str() {
            "target.debt_to_capital" => crate::capital::cost::debt_to_equity_from_capital(value),
            _ => value,
        };
        // In the unit solved as well (found by review: a debt to capital of 0.433 read
        // against a D/E of 0.709 looked below it).
        let also = match self.key.as_str() {
            "target.debt_to_capital" => format!(
                ", {} as debt to capital",
                crate::error::rounded(crate::capital::cost::debt_to_capital_from_equity(high), 3)
            ),
            _ => String::new(),
        };
        (de > high).then(|| {
            format!(
                "a target D/E above every aggregated peer's (the highest is {}{also}): \
                 the relevered beta extrapolates the formula beyond the leverage the \
                 betas were measured at",
                crate::error::rounded(high, 3)
            )
        })
    }
}
