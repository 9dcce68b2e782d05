//! The records of the reviewer's analyses that a valuation carries: the sensitivity grid, the
//! Monte Carlo interval and the bridge to a claimed build-up. `audit` computes them; they live
//! here, below it, so the one result value can hold them without the valuation depending on the
//! audit layer.

use serde::Serialize;

use super::Valuation;
use crate::capital::cost;
use crate::case::Metric;

/// One axis: a case key path and its values.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Axis {
    pub key: String,
    pub values: Vec<f64>,
}

impl Axis {
    /// The `--set` assignment of value `i`.
    pub fn assignment(&self, i: usize) -> String {
        format!("{}={}", self.key, self.values[i])
    }
}

/// A computed grid; `cells[r][c]` is the metric at row value `r` and column value `c`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Grid {
    pub metric: Metric,
    pub rows: Axis,
    pub columns: Axis,
    pub cells: Vec<Vec<f64>>,
}

/// Percentiles of the simulated WACC.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Uncertainty {
    pub draws: u32,
    pub seed: u64,
    pub beta_distribution: &'static str,
    pub equity_risk_premium_range: Option<[f64; 2]>,
    pub risk_free_rate_range: Option<[f64; 2]>,
    pub point_estimate: f64,
    pub mean: f64,
    pub p05: f64,
    pub p25: f64,
    pub p50: f64,
    pub p75: f64,
    pub p95: f64,
}

/// The components of a WACC build-up.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize)]
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
    /// Preferred equity and lease liabilities (0 for a claimed build-up, which has neither): in
    /// the WACC so the bridge and `implied` use the case's own formula, and moved with the
    /// weights group. Not written to `result.json`.
    #[serde(skip)]
    pub preferred_weight: f64,
    #[serde(skip)]
    pub preferred_cost: f64,
    #[serde(skip)]
    pub lease_weight: f64,
    #[serde(skip)]
    pub lease_cost_pre_tax: f64,
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

    /// The WACC of these components, by the one WACC formula ([`cost::wacc`]).
    pub fn wacc(&self) -> f64 {
        cost::wacc(&cost::WaccTerms {
            equity_weight: self.equity_weight,
            cost_of_equity: self.cost_of_equity(),
            debt_weight: self.debt_weight,
            cost_of_debt_after_tax: cost::after_tax_cost_of_debt(
                self.cost_of_debt_pre_tax,
                self.tax_rate,
            ),
            preferred_weight: self.preferred_weight,
            preferred_cost: self.preferred_cost,
            lease_weight: self.lease_weight,
            lease_cost_after_tax: cost::after_tax_cost_of_debt(
                self.lease_cost_pre_tax,
                self.tax_rate,
            ),
        })
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
    pub fn take(self, from: &BuildUp, into: &mut BuildUp) {
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
                into.preferred_weight = from.preferred_weight;
                into.preferred_cost = from.preferred_cost;
                into.lease_weight = from.lease_weight;
                into.lease_cost_pre_tax = from.lease_cost_pre_tax;
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
            preferred_weight: c.weights.preferred,
            preferred_cost: c.other_capital_costs.preferred_cost,
            lease_weight: c.weights.leases,
            lease_cost_pre_tax: c.other_capital_costs.lease_cost_pre_tax,
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
