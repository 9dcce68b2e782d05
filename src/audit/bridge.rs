//! Bridge between two WACCs: which inputs explain the gap.
//!
//! Both sides are reduced to the components of the textbook build-up (risk-free rate, equity
//! risk premium, relevered beta, premiums, pre-tax cost of debt, tax rate, weights) — a side is
//! either a case (run through the valuation) or a claimed build-up given as a small TOML file.
//! The sequential bridge replaces one group at a time, in the order of [`Group::ALL`]; its steps
//! telescope to the whole difference, but each step depends on the order. The Shapley value
//! (Shapley 1953, "A value for n-person games", Contributions to the Theory of Games II) averages
//! each group's contribution over all 7! orders, computed exactly from the 2⁷ subsets: it is
//! order-independent, sums to the whole difference (efficiency) and gives equal shares to groups
//! that act alike (symmetry).

use std::path::Path;

use serde::{Deserialize, Serialize};

use crate::case::read_case;
use crate::cost;
use crate::data::sha256_hex;
use crate::error::{Error, Result};
use crate::valuation::{load_inputs, value, Valuation};

/// The components of a WACC build-up.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct BuildUp {
    pub risk_free_rate: f64,
    pub equity_risk_premium: f64,
    /// Relevered (equity) beta.
    pub beta: f64,
    /// Sum of the additional equity premiums.
    pub premiums: f64,
    pub cost_of_debt_pre_tax: f64,
    pub tax_rate: f64,
    pub equity_weight: f64,
    pub debt_weight: f64,
}

impl BuildUp {
    pub fn cost_of_equity(&self) -> f64 {
        cost::capm_cost_of_equity(
            self.risk_free_rate,
            self.beta,
            self.equity_risk_premium,
            self.premiums,
        )
    }

    pub fn wacc(&self) -> f64 {
        cost::wacc(
            self.equity_weight,
            self.cost_of_equity(),
            self.debt_weight,
            cost::after_tax_cost_of_debt(self.cost_of_debt_pre_tax, self.tax_rate),
        )
    }
}

/// The input groups of the bridge, in the order the sequential bridge replaces them.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Group {
    RiskFreeRate,
    EquityRiskPremium,
    Beta,
    Premiums,
    CostOfDebt,
    TaxRate,
    Weights,
}

impl Group {
    pub const ALL: [Group; 7] = [
        Group::RiskFreeRate,
        Group::EquityRiskPremium,
        Group::Beta,
        Group::Premiums,
        Group::CostOfDebt,
        Group::TaxRate,
        Group::Weights,
    ];

    /// Copies this group's components from `from` into `into`.
    fn take(self, from: &BuildUp, into: &mut BuildUp) {
        match self {
            Group::RiskFreeRate => into.risk_free_rate = from.risk_free_rate,
            Group::EquityRiskPremium => into.equity_risk_premium = from.equity_risk_premium,
            Group::Beta => into.beta = from.beta,
            Group::Premiums => into.premiums = from.premiums,
            Group::CostOfDebt => into.cost_of_debt_pre_tax = from.cost_of_debt_pre_tax,
            Group::TaxRate => into.tax_rate = from.tax_rate,
            Group::Weights => {
                into.equity_weight = from.equity_weight;
                into.debt_weight = from.debt_weight;
            }
        }
    }
}

/// One side of a comparison.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Side {
    pub label: String,
    /// The file it came from, as given, and its SHA-256 (empty for the case being run).
    pub source: String,
    pub sha256: String,
    pub build_up: BuildUp,
    /// The WACC of the build-up's components.
    pub wacc: f64,
    /// The WACC the claim states, when it states one.
    pub stated_wacc: Option<f64>,
}

impl Side {
    /// The build-up of a computed valuation.
    pub fn from_valuation(label: &str, valuation: &Valuation) -> Side {
        let c = &valuation.cost;
        let build_up = BuildUp {
            risk_free_rate: c.risk_free_rate,
            equity_risk_premium: c.equity_risk_premium,
            beta: c.beta.relevered,
            premiums: c.premiums.total,
            cost_of_debt_pre_tax: c.cost_of_debt_pre_tax,
            tax_rate: c.target.tax_rate,
            equity_weight: c.weights.equity,
            debt_weight: c.weights.debt,
        };
        Side {
            label: label.to_string(),
            source: String::new(),
            sha256: String::new(),
            wacc: build_up.wacc(),
            stated_wacc: Some(c.wacc),
            build_up,
        }
    }
}

/// `[claimed]`: a build-up handed over by someone else.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct ClaimedFile {
    claimed: Claimed,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct Claimed {
    #[serde(default = "default_claim_label")]
    label: String,
    #[serde(default)]
    wacc: Option<f64>,
    risk_free_rate: f64,
    equity_risk_premium: f64,
    beta: f64,
    #[serde(default)]
    premiums: f64,
    cost_of_debt_pre_tax: f64,
    tax_rate: f64,
    #[serde(default)]
    debt_to_equity: Option<f64>,
    #[serde(default)]
    debt_to_capital: Option<f64>,
}

fn default_claim_label() -> String {
    "claimed".to_string()
}

/// Reads one side: a TOML file with a `[claimed]` table, or else a case file (which is run).
pub fn read_side(path: &Path, written: &str) -> Result<Side> {
    let fail = |message: String| Error::Case {
        file: path.to_path_buf(),
        message,
    };
    let bytes = std::fs::read(path).map_err(|source| Error::Io {
        path: path.to_path_buf(),
        action: "cannot read",
        source,
    })?;
    let text = String::from_utf8_lossy(&bytes);
    let table: toml::Table = toml::from_str(&text).map_err(|e| fail(e.to_string()))?;
    if !table.contains_key("claimed") {
        let case = read_case(path, &[])?;
        let valuation = value(&load_inputs(case)?, "")?;
        let mut side = Side::from_valuation(&valuation.case.title, &valuation);
        side.source = written.to_string();
        side.sha256 = valuation.case.sha256;
        return Ok(side);
    }
    crate::sanity::check_claimed_text(&text).map_err(fail)?;
    let claimed = toml::from_str::<ClaimedFile>(&text)
        .map_err(|e| fail(e.to_string()))?
        .claimed;
    let debt_to_equity = match (claimed.debt_to_equity, claimed.debt_to_capital) {
        (Some(de), None) if de >= 0.0 => de,
        (None, Some(dc)) if (0.0..1.0).contains(&dc) => dc / (1.0 - dc),
        (Some(_), Some(_)) => {
            return Err(fail(
                "[claimed] gives both debt_to_equity and debt_to_capital; keep one".into(),
            ))
        }
        (None, None) => {
            return Err(fail(
                "[claimed] needs debt_to_equity or debt_to_capital".into(),
            ))
        }
        (Some(v), None) => return Err(fail(format!("claimed.debt_to_equity = {v} is negative"))),
        (None, Some(v)) => {
            return Err(fail(format!(
                "claimed.debt_to_capital = {v} is outside [0, 1)"
            )))
        }
    };
    if !(0.0..1.0).contains(&claimed.tax_rate) {
        return Err(fail(format!(
            "claimed.tax_rate = {} is outside [0, 1)",
            claimed.tax_rate
        )));
    }
    let (equity_weight, debt_weight) = cost::weights_from_debt_to_equity(debt_to_equity);
    let build_up = BuildUp {
        risk_free_rate: claimed.risk_free_rate,
        equity_risk_premium: claimed.equity_risk_premium,
        beta: claimed.beta,
        premiums: claimed.premiums,
        cost_of_debt_pre_tax: claimed.cost_of_debt_pre_tax,
        tax_rate: claimed.tax_rate,
        equity_weight,
        debt_weight,
    };
    Ok(Side {
        label: claimed.label,
        source: written.to_string(),
        sha256: sha256_hex(&bytes),
        wacc: build_up.wacc(),
        stated_wacc: claimed.wacc,
        build_up,
    })
}

/// One step of the sequential bridge.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Step {
    pub group: Group,
    pub wacc_before: f64,
    pub wacc_after: f64,
    pub contribution: f64,
    /// The group's Shapley value: its order-independent share of the difference.
    pub shapley: f64,
}

/// The bridge from one WACC to another.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Bridge {
    pub from: Side,
    pub to: Side,
    /// `to.wacc − from.wacc`, the difference the steps explain.
    pub difference: f64,
    pub steps: Vec<Step>,
    /// `to.stated_wacc − to.wacc`: what the claim's own components do not explain.
    pub unexplained: Option<f64>,
    /// `from.stated_wacc − from.wacc`: for a case with preferred equity or leases, their share
    /// of its WACC, which the build-up leaves out.
    pub unexplained_from: Option<f64>,
}

/// Bridges `from` to `to`.
pub fn bridge(from: &Side, to: &Side) -> Bridge {
    let shapley = shapley_values(&from.build_up, &to.build_up);
    let mut current = from.build_up;
    let mut steps = Vec::with_capacity(Group::ALL.len());
    for (k, group) in Group::ALL.into_iter().enumerate() {
        let before = current.wacc();
        group.take(&to.build_up, &mut current);
        let after = current.wacc();
        steps.push(Step {
            group,
            wacc_before: before,
            wacc_after: after,
            contribution: after - before,
            shapley: shapley[k],
        });
    }
    Bridge {
        from: from.clone(),
        to: to.clone(),
        difference: to.wacc - from.wacc,
        steps,
        unexplained: to.stated_wacc.map(|stated| stated - to.wacc),
        unexplained_from: from.stated_wacc.map(|stated| stated - from.wacc),
    }
}

/// Exact Shapley values of the groups for the game v(S) = WACC with the groups in S taken from
/// `to` and the rest from `from`, minus v(∅).
pub fn shapley_values(from: &BuildUp, to: &BuildUp) -> Vec<f64> {
    let n = Group::ALL.len();
    let worth: Vec<f64> = (0..1usize << n)
        .map(|mask| {
            let mut mixed = *from;
            for (k, group) in Group::ALL.into_iter().enumerate() {
                if mask & (1 << k) != 0 {
                    group.take(to, &mut mixed);
                }
            }
            mixed.wacc()
        })
        .collect();
    let factorial = |m: usize| (1..=m).map(|v| v as f64).product::<f64>();
    (0..n)
        .map(|k| {
            (0..1usize << n)
                .filter(|mask| mask & (1 << k) == 0)
                .map(|mask| {
                    let s = mask.count_ones() as usize;
                    let weight = factorial(s) * factorial(n - s - 1) / factorial(n);
                    weight * (worth[mask | (1 << k)] - worth[mask])
                })
                .sum()
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn base() -> BuildUp {
        BuildUp {
            risk_free_rate: 0.035,
            equity_risk_premium: 0.055,
            beta: 1.05,
            premiums: 0.01,
            cost_of_debt_pre_tax: 0.058,
            tax_rate: 0.25,
            equity_weight: 1.0 / 1.4,
            debt_weight: 0.4 / 1.4,
        }
    }

    fn side(build_up: BuildUp) -> Side {
        Side {
            label: "x".into(),
            source: String::new(),
            sha256: String::new(),
            wacc: build_up.wacc(),
            stated_wacc: None,
            build_up,
        }
    }

    // Telescoping: the sequential steps sum to the whole difference. Shapley efficiency
    // (Shapley 1953): the values sum to v(N) − v(∅) too. 1e-15: seven additions of numbers
    // below 0.1 leave a few ulps.
    #[test]
    fn steps_and_shapley_values_sum_to_the_difference() {
        let a = base();
        let b = BuildUp {
            risk_free_rate: 0.042,
            equity_risk_premium: 0.06,
            beta: 1.2,
            premiums: 0.0,
            cost_of_debt_pre_tax: 0.065,
            tax_rate: 0.3,
            equity_weight: 0.6,
            debt_weight: 0.4,
        };
        let bridge = bridge(&side(a), &side(b));
        let steps: f64 = bridge.steps.iter().map(|s| s.contribution).sum();
        let shapley: f64 = bridge.steps.iter().map(|s| s.shapley).sum();
        assert!((steps - bridge.difference).abs() < 1e-15);
        assert!((shapley - bridge.difference).abs() < 1e-15);
        assert!((bridge.difference - (b.wacc() - a.wacc())).abs() < 1e-15);
    }

    // Symmetry (Shapley 1953): rf and ERP enter Ke as rf + β·ERP; with β = 1 in both sides and
    // equal changes in rf and ERP, the two groups are interchangeable players and must get
    // equal values. Dummy player: a group that does not change gets 0.
    #[test]
    fn shapley_values_are_symmetric_and_zero_for_dummies() {
        let a = BuildUp {
            beta: 1.0,
            ..base()
        };
        let b = BuildUp {
            risk_free_rate: a.risk_free_rate + 0.01,
            equity_risk_premium: a.equity_risk_premium + 0.01,
            ..a
        };
        let values = shapley_values(&a, &b);
        assert!((values[0] - values[1]).abs() < 1e-16);
        assert!(values[2..].iter().all(|v| v.abs() < 1e-16), "{values:?}");
        // Additive game: each value is the group's own effect, wE·0.01 (textbook: Shapley
        // values of an additive game are the stand-alone effects).
        assert!((values[0] - a.equity_weight * 0.01).abs() < 1e-15);
    }
}
