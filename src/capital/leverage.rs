//! Unlevering and relevering betas for capital structure.
//!
//! An observed equity beta carries the firm's financial risk. To compare peers, each beta is
//! unlevered to an asset beta with its own debt-to-equity and tax rate, the asset betas are
//! aggregated, and the aggregate is relevered at the subject's target structure. Each formula
//! is a variant of [`Formula`] with its source; DEVELOPERS.md's "Adding a method" lists every
//! place a new formula reaches (its arms here, the workbook, the memo, the reference checks).

use serde::{Deserialize, Serialize};

/// The leverage facts one unlevering or relevering step needs.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CapitalStructure {
    /// Debt divided by equity, both at market value.
    pub debt_to_equity: f64,
    /// Marginal tax rate in decimals.
    pub tax_rate: f64,
}

/// The risk and cost of debt that the formulas with risky debt need.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DebtTerms {
    /// Beta of the debt; 0 for riskless debt.
    pub debt_beta: f64,
    /// Pre-tax cost of debt per rebalancing period (annual, decimal); used by Miles–Ezzell only.
    pub cost_of_debt: f64,
}

impl DebtTerms {
    /// Riskless debt with no stated cost: what [`Formula::unlever`] and [`Formula::relever`]
    /// assume. Miles–Ezzell with a zero cost of debt reduces to Harris–Pringle.
    pub const RISKLESS: DebtTerms = DebtTerms {
        debt_beta: 0.0,
        cost_of_debt: 0.0,
    };
}

/// A published relation between levered and unlevered beta.
///
/// All four have the form βL = βU + (βU − βD)·s·D/E, with a tax factor s and a debt beta βD
/// that Hamada takes to be zero; [`Formula::tax_factor`] gives s.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Formula {
    /// βL = βU·(1 + (1 − t)·D/E), with riskless debt and a constant amount of debt.
    /// Hamada (1972), "The effect of the firm's capital structure on the systematic risk of
    /// common stocks", J. Finance 27(2). A debt beta is not used: riskless debt is the model's
    /// assumption (Conine is this formula with a debt beta).
    Hamada,
    /// βL = βU + (βU − βD)·D/E: debt rebalanced continuously to a constant D/V, so the tax
    /// shield is as risky as the firm and drops out. Harris and Pringle (1985), "Risk-adjusted
    /// discount rates — extensions from the average-risk case", J. Financial Research 8(3).
    HarrisPringle,
    /// βL = βU + (βU − βD)·D/E·(1 − t·Kd/(1 + Kd)): debt rebalanced to a constant D/V once a
    /// period, so the next period's shield is known and discounted at Kd. The beta relation is
    /// the unlevering procedure of Miles and Ezzell (1985), "Reformulating tax shield valuation:
    /// a note", J. Finance 40(5); the constant-leverage WACC it rests on is their 1980 paper,
    /// "The weighted average cost of capital, perfect capital markets, and project life: a
    /// clarification", J. Financial and Quantitative Analysis 15(3).
    MilesEzzell,
    /// βL = βU + (βU − βD)·(1 − t)·D/E: Hamada with risky debt. Conine (1980), "Corporate
    /// debt and corporate taxes: an extension", J. Finance 35(4).
    Conine,
}

impl Formula {
    /// Every formula, in the order of the memo's side-by-side table.
    pub const ALL: [Formula; 4] = [
        Formula::Hamada,
        Formula::HarrisPringle,
        Formula::MilesEzzell,
        Formula::Conine,
    ];

    /// Asset (unlevered) beta from an equity beta, with riskless debt ([`DebtTerms::RISKLESS`]).
    pub fn unlever(self, levered: f64, structure: CapitalStructure) -> f64 {
        self.unlever_with(levered, structure, DebtTerms::RISKLESS)
    }

    /// Equity (levered) beta from an asset beta, with riskless debt ([`DebtTerms::RISKLESS`]).
    pub fn relever(self, unlevered: f64, structure: CapitalStructure) -> f64 {
        self.relever_with(unlevered, structure, DebtTerms::RISKLESS)
    }

    /// Asset beta from an equity beta: βU = (βL + βD·s·D/E) / (1 + s·D/E).
    pub fn unlever_with(self, levered: f64, structure: CapitalStructure, debt: DebtTerms) -> f64 {
        let leverage = self.tax_factor(structure.tax_rate, debt) * structure.debt_to_equity;
        match self {
            Formula::Hamada => levered / (1.0 + leverage),
            _ => (levered + self.debt_beta(debt) * leverage) / (1.0 + leverage),
        }
    }

    /// Equity beta from an asset beta: βL = βU + (βU − βD)·s·D/E.
    pub fn relever_with(self, unlevered: f64, structure: CapitalStructure, debt: DebtTerms) -> f64 {
        let leverage = self.tax_factor(structure.tax_rate, debt) * structure.debt_to_equity;
        match self {
            Formula::Hamada => unlevered * (1.0 + leverage),
            _ => unlevered + (unlevered - self.debt_beta(debt)) * leverage,
        }
    }

    /// The tax factor s on D/E: 1 − t (Hamada, Conine), 1 (Harris–Pringle),
    /// 1 − t·Kd/(1 + Kd) (Miles–Ezzell).
    pub fn tax_factor(self, tax_rate: f64, debt: DebtTerms) -> f64 {
        match self {
            Formula::Hamada | Formula::Conine => 1.0 - tax_rate,
            Formula::HarrisPringle => 1.0,
            Formula::MilesEzzell => 1.0 - tax_rate * debt.cost_of_debt / (1.0 + debt.cost_of_debt),
        }
    }

    /// The debt beta the formula uses: 0 for Hamada (riskless debt by assumption).
    pub fn debt_beta(self, debt: DebtTerms) -> f64 {
        match self {
            Formula::Hamada => 0.0,
            Formula::HarrisPringle | Formula::MilesEzzell | Formula::Conine => debt.debt_beta,
        }
    }

    /// Whether the formula needs the cost of debt: Miles–Ezzell's tax factor holds it.
    pub fn uses_cost_of_debt(self) -> bool {
        match self {
            Formula::MilesEzzell => true,
            Formula::Hamada | Formula::HarrisPringle | Formula::Conine => false,
        }
    }

    /// Whether the formula needs the tax rate: all but Harris–Pringle, whose D/E has no tax
    /// factor.
    pub fn uses_tax_rate(self) -> bool {
        match self {
            Formula::HarrisPringle => false,
            Formula::Hamada | Formula::MilesEzzell | Formula::Conine => true,
        }
    }

    /// The name and source printed in the memo.
    pub fn citation(self) -> &'static str {
        match self {
            Formula::Hamada => "Hamada (1972), Journal of Finance 27(2)",
            Formula::HarrisPringle => {
                "Harris and Pringle (1985), Journal of Financial Research 8(3)"
            }
            Formula::MilesEzzell => {
                "Miles and Ezzell (1985), Journal of Finance 40(5), on their 1980 constant-leverage \
                 WACC"
            }
            Formula::Conine => "Conine (1980), Journal of Finance 35(4)",
        }
    }

    /// The relevering formula as printed in the memo.
    pub fn expression(self) -> &'static str {
        match self {
            Formula::Hamada => "βL = βU·(1 + (1 − t)·D/E)",
            Formula::HarrisPringle => "βL = βU + (βU − βD)·D/E",
            Formula::MilesEzzell => "βL = βU + (βU − βD)·D/E·(1 − t·Kd/(1 + Kd))",
            Formula::Conine => "βL = βU + (βU − βD)·(1 − t)·D/E",
        }
    }
}

/// Debt beta implied by the credit spread: βD ≈ (Kd − rf) / ERP.
///
/// An approximation, stated as such: it reads the whole spread as a systematic-risk premium,
/// whereas part of it pays for expected default loss and illiquidity, so it overstates βD.
/// It is the CAPM (Sharpe 1964, J. Finance 19(3)) solved for the beta of debt priced at Kd;
/// common practice.
pub fn debt_beta_from_spread(cost_of_debt: f64, risk_free: f64, equity_risk_premium: f64) -> f64 {
    (cost_of_debt - risk_free) / equity_risk_premium
}

/// `leverage.debt_measure`: the debt in D/E.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum DebtMeasure {
    Gross,
    /// Debt minus cash; may be negative for a firm holding more cash than debt.
    Net,
}

impl DebtMeasure {
    /// The debt counted in D/E.
    pub fn debt(self, debt: f64, cash: f64) -> f64 {
        match self {
            DebtMeasure::Gross => debt,
            DebtMeasure::Net => debt - cash,
        }
    }
}

/// A firm's D/E under `measure`: its debt (less its cash, for net debt) over its equity value.
/// The one rule for a case's peers and a universe's securities.
pub fn firm_debt_to_equity(measure: DebtMeasure, equity: f64, debt: f64, cash: f64) -> f64 {
    measure.debt(debt, cash) / equity
}

/// The share of a firm's value (equity plus gross debt) that is its operations: 1 − cash /
/// (equity + debt).
pub fn operating_share(equity: f64, debt: f64, cash: f64) -> f64 {
    1.0 - cash / (equity + debt)
}

/// The beta of the operations, βU / (1 − cash / (equity + debt)), from the unlevered beta at
/// gross debt: the firm's value is its operations plus its cash, and the unlevered beta their
/// value-weighted mix; with cash at a beta of zero, dividing by the operations' share leaves
/// their beta. (Under net debt the unlevered beta has already netted the cash against the
/// debt, and dividing it by the share as well would count the cash twice: the caller unlevers
/// at gross debt for this.)
pub fn operations_beta(gross_unlevered: f64, operating_share: f64) -> f64 {
    gross_unlevered / operating_share
}

/// Whether a firm's debt beta is above its equity beta, which the formula would have to take
/// as an input error: debt cannot be riskier than the equity it ranks ahead of. Not under
/// Hamada (no debt beta), riskless debt (`None`, or a debt beta of 0, the same model written
/// two ways), or a D/E of 0 (no debt for the debt beta to describe). The one rule for a case's
/// peers (which it refuses) and a universe's securities (left without an unlevered beta).
pub fn debt_beta_above_equity_beta(
    (formula, source): (Formula, DebtBetaSource),
    debt_to_equity: f64,
    debt_beta: f64,
    equity_beta: f64,
) -> bool {
    formula != Formula::Hamada
        && source != DebtBetaSource::None
        && debt_to_equity != 0.0
        && debt_beta != 0.0
        && debt_beta > equity_beta
}

/// `leverage.debt_beta_source`: how the beta of debt is set.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum DebtBetaSource {
    /// Riskless debt: every debt beta is 0.
    None,
    /// `leverage.debt_beta`, or a peer's own `debt_beta`.
    Given,
    /// (Kd − rf) / ERP, an approximation (see `leverage::debt_beta_from_spread`); a peer's own
    /// `cost_of_debt` when it has one, else the subject's.
    CreditSpread,
}

#[cfg(test)]
mod tests {
    use super::*;

    const ALL: [Formula; 4] = Formula::ALL;

    // Identity: relevering at the structure a beta was unlevered with returns the beta.
    #[test]
    fn relever_undoes_unlever() {
        for formula in ALL {
            for (beta, de, t) in [(1.3, 0.45, 0.25), (0.7, 2.0, 0.0), (1.0, 0.0, 0.3)] {
                let s = CapitalStructure {
                    debt_to_equity: de,
                    tax_rate: t,
                };
                let back = formula.relever(formula.unlever(beta, s), s);
                // 1e-15 relative: one multiply and one divide by the same factor.
                assert!(
                    (back / beta - 1.0).abs() < 1e-15,
                    "{formula:?} {beta} {de} {t}"
                );
            }
        }
    }

    // Identity: with no debt the equity beta is the asset beta.
    #[test]
    fn no_debt_leaves_beta_unchanged() {
        for formula in ALL {
            let s = CapitalStructure {
                debt_to_equity: 0.0,
                tax_rate: 0.35,
            };
            assert_eq!(formula.unlever(1.17, s), 1.17);
            assert_eq!(formula.relever(1.17, s), 1.17);
        }
    }

    // Hand-worked Hamada example: βL = 1.20, D/E = 0.50, t = 30%.
    // Factor 1 + (1 − 0.30)·0.50 = 1.35, so βU = 1.20 / 1.35 = 0.888…;
    // relevered at D/E = 0.25, t = 25%: factor 1 + 0.75·0.25 = 1.1875, βL* = 0.888…·1.1875
    // = 1.0555….
    #[test]
    fn hamada_hand_example() {
        let unlevered = Formula::Hamada.unlever(
            1.20,
            CapitalStructure {
                debt_to_equity: 0.50,
                tax_rate: 0.30,
            },
        );
        // 1e-15: the exact quotient 1.2/1.35 = 0.8888…, rounded once.
        assert!((unlevered - 1.20 / 1.35).abs() < 1e-15);
        assert!((unlevered - 0.888_888_888_888_889).abs() < 1e-15);
        let relevered = Formula::Hamada.relever(
            unlevered,
            CapitalStructure {
                debt_to_equity: 0.25,
                tax_rate: 0.25,
            },
        );
        assert!((relevered - 1.055_555_555_555_556).abs() < 1e-15);
    }

    fn structure(debt_to_equity: f64, tax_rate: f64) -> CapitalStructure {
        CapitalStructure {
            debt_to_equity,
            tax_rate,
        }
    }

    const RISKY: DebtTerms = DebtTerms {
        debt_beta: 0.1,
        cost_of_debt: 0.05,
    };

    // Identity: relever∘unlever is the identity for every formula, also with risky debt.
    #[test]
    fn relever_undoes_unlever_with_a_debt_beta() {
        for formula in ALL {
            for (beta, de, t) in [(1.3, 0.45, 0.25), (0.7, 2.0, 0.0), (1.0, 0.0, 0.3)] {
                let s = structure(de, t);
                let back = formula.relever_with(formula.unlever_with(beta, s, RISKY), s, RISKY);
                // 1e-14 relative: a handful of roundings in factors of order 1.
                assert!(
                    (back / beta - 1.0).abs() < 1e-14,
                    "{formula:?} {beta} {de} {t}"
                );
            }
        }
    }

    // Identity: at D = 0 every formula gives βL = βU, whatever the debt beta and tax.
    #[test]
    fn all_formulas_agree_without_debt() {
        for formula in ALL {
            let s = structure(0.0, 0.3);
            assert_eq!(formula.relever_with(0.9, s, RISKY), 0.9, "{formula:?}");
            assert_eq!(formula.unlever_with(0.9, s, RISKY), 0.9, "{formula:?}");
        }
    }

    // Harris–Pringle (1985) with βD = 0 is the no-tax form βL = βU·(1 + D/E) (Modigliani and
    // Miller 1958 without taxes). βU = 0.8, D/E = 0.5: 0.8·1.5 = 1.2, whatever the tax rate.
    #[test]
    fn harris_pringle_without_debt_beta_is_the_no_tax_form() {
        let relevered = Formula::HarrisPringle.relever(0.8, structure(0.5, 0.3));
        // 1e-15: 0.8 + 0.8·0.5 rounds once or twice.
        assert!((relevered - 0.8 * (1.0 + 0.5)).abs() < 1e-15);
        assert!((relevered - 1.2).abs() < 1e-15);
    }

    // Conine (1980) with βD = 0 is Hamada (1972): the debt-beta term vanishes.
    #[test]
    fn conine_without_debt_beta_is_hamada() {
        for (beta, de, t) in [(0.8, 0.5, 0.25), (1.4, 1.7, 0.35), (0.6, 0.1, 0.0)] {
            let s = structure(de, t);
            let conine = Formula::Conine.relever(beta, s);
            let hamada = Formula::Hamada.relever(beta, s);
            // 1e-15: βU + βU·x against βU·(1 + x), one rounding apart.
            assert!((conine - hamada).abs() < 1e-15, "{beta} {de} {t}");
        }
    }

    // Hand-worked, βU = 0.8, βD = 0.1, D/E = 0.5, t = 25%, Kd = 5%:
    // Harris–Pringle: 0.8 + (0.8 − 0.1)·0.5 = 0.8 + 0.35 = 1.15; back: (1.15 + 0.1·0.5)/1.5
    //   = 1.2/1.5 = 0.8.
    // Miles–Ezzell: s = 1 − 0.25·0.05/1.05 = 1 − 0.0125/1.05; 0.35·s = 0.35 − 0.004375/1.05
    //   = 0.35 − 1/240, so βL = 1.15 − 1/240 = 1.1458333….
    // Conine: 0.8 + 0.7·0.75·0.5 = 0.8 + 0.2625 = 1.0625.
    #[test]
    fn risky_debt_hand_examples() {
        let s = structure(0.5, 0.25);
        // 1e-15: each is a few roundings of numbers of order 1.
        let hp = Formula::HarrisPringle.relever_with(0.8, s, RISKY);
        assert!((hp - 1.15).abs() < 1e-15);
        assert!((Formula::HarrisPringle.unlever_with(1.15, s, RISKY) - 0.8).abs() < 1e-15);
        let me = Formula::MilesEzzell.relever_with(0.8, s, RISKY);
        assert!((me - (1.15 - 1.0 / 240.0)).abs() < 1e-15);
        assert!((me - 1.145_833_333_333_333_3).abs() < 1e-15);
        let conine = Formula::Conine.relever_with(0.8, s, RISKY);
        assert!((conine - 1.0625).abs() < 1e-15);
        // Hamada ignores the debt beta: 0.8·(1 + 0.75·0.5) = 0.8·1.375 = 1.1.
        assert!((Formula::Hamada.relever_with(0.8, s, RISKY) - 1.1).abs() < 1e-15);
    }

    // Published relation (Taggart 1991, Financial Management 20(3), from memory; also Harris
    // and Pringle 1985): Harris–Pringle is Miles–Ezzell rebalanced continuously. Rebalancing n
    // times a year at Kd/n per period, the Miles–Ezzell factor 1 − t·(Kd/n)/(1 + Kd/n) tends to
    // 1, so βL(ME) − βL(HP) = −(βU − βD)·D/E·t·(Kd/n)/(1 + Kd/n) → 0 like 1/n.
    #[test]
    fn miles_ezzell_tends_to_harris_pringle_with_continuous_rebalancing() {
        let s = structure(0.6, 0.3);
        let (unlevered, kd) = (0.9, 0.06);
        let hp = Formula::HarrisPringle.relever_with(unlevered, s, RISKY);
        let mut previous_gap = f64::INFINITY;
        for n in [1.0, 12.0, 365.0, 1e6] {
            let per_period = DebtTerms {
                debt_beta: RISKY.debt_beta,
                cost_of_debt: kd / n,
            };
            let me = Formula::MilesEzzell.relever_with(unlevered, s, per_period);
            let expected = (unlevered - 0.1) * 0.6 * 0.3 * (kd / n) / (1.0 + kd / n);
            // 1e-15: the gap is a difference of numbers of order 1.
            assert!(((hp - me) - expected).abs() < 1e-15, "n = {n}");
            assert!(hp - me < previous_gap, "n = {n}");
            previous_gap = hp - me;
        }
        // 1e-7: at n = 1e6 the gap is 0.8·0.6·0.3·6e-8 ≈ 8.6e-9.
        assert!(previous_gap < 1e-7);
    }

    // Spread approximation: Kd 5.8%, rf 3.8%, ERP 5.5%: 0.02/0.055 = 0.363636….
    #[test]
    fn debt_beta_from_the_credit_spread() {
        // 1e-15: a subtraction and a division of decimals.
        assert!((debt_beta_from_spread(0.058, 0.038, 0.055) - 4.0 / 11.0).abs() < 1e-15);
    }
}
