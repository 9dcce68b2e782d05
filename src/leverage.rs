//! Unlevering and relevering betas for capital structure.
//!
//! An observed equity beta carries the firm's financial risk. To compare peers, each beta is
//! unlevered to an asset beta with its own debt-to-equity and tax rate, the asset betas are
//! aggregated, and the aggregate is relevered at the subject's target structure. Each formula
//! is a variant of [`Formula`] with its source; add a formula by adding a variant and its two
//! arms (and its identities to the tests below).

use serde::{Deserialize, Serialize};

/// The leverage facts one unlevering or relevering step needs.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CapitalStructure {
    /// Debt divided by equity, both at market value.
    pub debt_to_equity: f64,
    /// Marginal tax rate in decimals.
    pub tax_rate: f64,
}

/// A published relation between levered and unlevered beta.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Formula {
    /// βL = βU·(1 + (1 − t)·D/E), with riskless debt and a constant amount of debt.
    /// Hamada (1972), "The effect of the firm's capital structure on the systematic risk of
    /// common stocks", J. Finance 27(2).
    Hamada,
}

impl Formula {
    /// Asset (unlevered) beta from an equity beta.
    pub fn unlever(self, levered: f64, structure: CapitalStructure) -> f64 {
        match self {
            Formula::Hamada => levered / hamada_factor(structure),
        }
    }

    /// Equity (levered) beta from an asset beta.
    pub fn relever(self, unlevered: f64, structure: CapitalStructure) -> f64 {
        match self {
            Formula::Hamada => unlevered * hamada_factor(structure),
        }
    }

    /// The name and source printed in the memo.
    pub fn citation(self) -> &'static str {
        match self {
            Formula::Hamada => "Hamada (1972), Journal of Finance 27(2)",
        }
    }
}

fn hamada_factor(structure: CapitalStructure) -> f64 {
    1.0 + (1.0 - structure.tax_rate) * structure.debt_to_equity
}

#[cfg(test)]
mod tests {
    use super::*;

    const ALL: [Formula; 1] = [Formula::Hamada];

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
}
