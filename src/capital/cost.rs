//! Cost of equity, cost of debt, capital weights and the WACC.
//!
//! Plain formulas over decimals. They are kept apart from the pipeline so that the memo's
//! build-up, the sensitivity checks and the tests all use exactly the same arithmetic.

use serde::{Deserialize, Serialize};

/// CAPM cost of equity plus additive premiums: rf + β·ERP + premiums.
/// Sharpe (1964), J. Finance 19(3); Lintner (1965), Rev. Econ. Statistics 47(1).
pub fn capm_cost_of_equity(
    risk_free: f64,
    beta: f64,
    equity_risk_premium: f64,
    premiums: f64,
) -> f64 {
    risk_free + beta * equity_risk_premium + premiums
}

/// After-tax cost of debt, Kd·(1 − t): interest is deductible at the marginal rate t.
pub fn after_tax_cost_of_debt(pre_tax: f64, tax_rate: f64) -> f64 {
    pre_tax * (1.0 - tax_rate)
}

/// Capital weights (equity, debt) from a debt-to-equity ratio: E/V = 1/(1 + D/E), D/V = D/E·E/V.
pub fn weights_from_debt_to_equity(debt_to_equity: f64) -> (f64, f64) {
    let equity = 1.0 / (1.0 + debt_to_equity);
    (equity, debt_to_equity * equity)
}

/// A debt-to-equity ratio from a debt-to-capital ratio: D/E = (D/(D+E)) / (1 − D/(D+E)).
pub fn debt_to_equity_from_capital(debt_to_capital: f64) -> f64 {
    debt_to_capital / (1.0 - debt_to_capital)
}

/// A debt-to-capital ratio from a debt-to-equity ratio: D/(D+E) = (D/E) / (1 + D/E).
pub fn debt_to_capital_from_equity(debt_to_equity: f64) -> f64 {
    debt_to_equity / (1.0 + debt_to_equity)
}

/// The terms of a WACC: each capital component's weight and cost (after tax where deductible).
/// Preferred equity and leases are 0 when a case has none.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct WaccTerms {
    pub equity_weight: f64,
    pub cost_of_equity: f64,
    pub debt_weight: f64,
    pub cost_of_debt_after_tax: f64,
    pub preferred_weight: f64,
    pub preferred_cost: f64,
    pub lease_weight: f64,
    pub lease_cost_after_tax: f64,
}

/// Weighted average cost of capital: wE·Ke + wD·Kd·(1 − t) + wP·Kp + wL·KL·(1 − t) (Modigliani
/// and Miller 1963, Am. Econ. Review 53(3), for the tax shield; the textbook WACC, with preferred
/// equity and leases as further components). The one WACC formula: the case, the bridge and
/// `implied` all call it.
pub fn wacc(terms: &WaccTerms) -> f64 {
    terms.equity_weight * terms.cost_of_equity
        + terms.debt_weight * terms.cost_of_debt_after_tax
        + terms.preferred_weight * terms.preferred_cost
        + terms.lease_weight * terms.lease_cost_after_tax
}

/// Scales two-part weights (equity, debt) to leave `other` (preferred + leases) of total capital:
/// wE = (1 − other)/(1 + D/E), wD = (1 − other)·(D/E)/(1 + D/E).
pub fn weights_with_other_components(debt_to_equity: f64, other: f64) -> (f64, f64) {
    let (equity, debt) = weights_from_debt_to_equity(debt_to_equity);
    (equity * (1.0 - other), debt * (1.0 - other))
}

/// `premiums.country_method`: how the country risk premium (CRP) enters the cost of equity.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum CountryMethod {
    /// A flat addition: + CRP, the same for every firm in the country.
    #[default]
    Flat,
    /// Scaled by the subject's exposure to the country: + exposure·CRP (`country_exposure`,
    /// 1 for a firm as exposed as the average one there).
    Exposure,
    /// Scaled by the relevered beta: + βL·CRP, as if country risk moved with market risk.
    BetaScaled,
}

/// `target.tax_rate_basis`: which tax rate the shield is computed with.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum TaxRateBasis {
    /// The statutory rate on the next unit of taxable income (common practice for the shield).
    #[default]
    Marginal,
    /// Taxes paid over pre-tax income.
    Effective,
}

#[cfg(test)]
mod tests {
    use super::*;

    // Hand-worked textbook example: rf 4%, β 1.2, ERP 5%, size premium 1%:
    // Ke = 0.04 + 1.2·0.05 + 0.01 = 0.11. Kd 6%, t 25%: 0.045 after tax.
    // D/E = 0.25 → E/V = 0.8, D/V = 0.2; WACC = 0.8·0.11 + 0.2·0.045 = 0.088 + 0.009 = 0.097.
    #[test]
    fn wacc_hand_example() {
        let ke = capm_cost_of_equity(0.04, 1.2, 0.05, 0.01);
        let kd = after_tax_cost_of_debt(0.06, 0.25);
        let (we, wd) = weights_from_debt_to_equity(0.25);
        // 1e-15: decimal inputs carry representation error of a few ulps.
        assert!((ke - 0.11).abs() < 1e-15);
        assert!((kd - 0.045).abs() < 1e-15);
        assert!((we - 0.8).abs() < 1e-15 && (wd - 0.2).abs() < 1e-15);
        let terms = WaccTerms {
            equity_weight: we,
            cost_of_equity: ke,
            debt_weight: wd,
            cost_of_debt_after_tax: kd,
            ..WaccTerms::default()
        };
        assert!((wacc(&terms) - 0.097).abs() < 1e-15);
    }

    // Identity: with no debt the WACC is the cost of equity.
    #[test]
    fn no_debt_wacc_is_cost_of_equity() {
        let (we, wd) = weights_from_debt_to_equity(0.0);
        assert_eq!((we, wd), (1.0, 0.0));
        let terms = WaccTerms {
            equity_weight: we,
            cost_of_equity: 0.093,
            debt_weight: wd,
            cost_of_debt_after_tax: 0.04,
            ..WaccTerms::default()
        };
        assert_eq!(wacc(&terms), 0.093);
    }

    // Hand-worked: preferred 10% and leases 5% of capital, D/E = 0.25: the rest 85% splits
    // 0.8/0.2, so wE = 0.68, wD = 0.17. Ke 11%, Kd after tax 4.5%, Kp 7%, leases 6% pre-tax at
    // t = 25% → 4.5%: WACC = 0.68·0.11 + 0.17·0.045 + 0.10·0.07 + 0.05·0.045
    // = 0.0748 + 0.00765 + 0.007 + 0.00225 = 0.0917.
    #[test]
    fn wacc_with_preferred_and_leases_hand_example() {
        let (we, wd) = weights_with_other_components(0.25, 0.15);
        // 1e-15: one or two roundings of decimals.
        assert!((we - 0.68).abs() < 1e-15 && (wd - 0.17).abs() < 1e-15);
        let lease_after_tax = after_tax_cost_of_debt(0.06, 0.25);
        let total = wacc(&WaccTerms {
            equity_weight: we,
            cost_of_equity: 0.11,
            debt_weight: wd,
            cost_of_debt_after_tax: 0.045,
            preferred_weight: 0.10,
            preferred_cost: 0.07,
            lease_weight: 0.05,
            lease_cost_after_tax: lease_after_tax,
        });
        assert!((total - 0.0917).abs() < 1e-15);
    }
}
