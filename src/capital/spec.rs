//! What the capital chain takes: the spec of a case's leverage, target, rates, premiums, other
//! capital components and cost-of-debt source ([`CapitalSpec`]), and each peer's figures
//! ([`PeerCapital`]), as plain values. `case::specs` builds them from a case; a universe or a
//! test can build them directly.

use super::cost::CountryMethod;
use super::debt::{DebtSpec, SpreadTable};
use super::leverage::{DebtBetaSource, DebtMeasure, Formula};
use crate::beta::Adjustment;
use crate::stats::Aggregation;

/// Everything the chain needs besides the peers: what a case's `[leverage]`, `[target]`,
/// `[market]` rates, `[premiums]`, `[debt]`, `[preferred]` and `[leases]` say, as plain values.
#[derive(Debug, Clone, Copy)]
pub struct CapitalSpec<'a> {
    pub adjustment: Adjustment,
    /// The weight on the raw beta in Blume's shrinkage (`Adjustment::Blume`).
    pub blume_weight: f64,
    /// A stated Vasicek prior (mean, variance); `None` takes it from the cross-section.
    pub vasicek_prior: Option<(f64, f64)>,
    pub formula: Formula,
    pub aggregation: Aggregation,
    pub trim_fraction: f64,
    /// Aggregate the betas of the operations (the unlevered betas with cash, at beta zero, taken
    /// out) instead of the unlevered betas.
    pub operations_beta: bool,
    pub debt_measure: DebtMeasure,
    pub debt_beta_source: DebtBetaSource,
    /// The debt beta of the subject and of every peer without its own (source `given`).
    pub debt_beta: f64,
    pub target: TargetSpec,
    pub tax_rate: f64,
    pub risk_free_rate: f64,
    pub equity_risk_premium: f64,
    pub premiums: PremiumSpec,
    pub preferred: Component,
    pub leases: Component,
    pub debt: DebtSpec<'a>,
    /// The spread table the cost-of-debt source needs, already read.
    pub debt_table: Option<&'a SpreadTable>,
}

/// Where the target D/E comes from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum TargetSpec {
    /// A ratio known in advance (given, or the subject's own).
    DebtToEquity(f64),
    /// The median D/E of the peers that enter the aggregation.
    PeerMedian,
}

/// The premiums added to the CAPM cost of equity.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PremiumSpec {
    pub size: f64,
    pub country: f64,
    pub company_specific: f64,
    pub country_method: CountryMethod,
    /// The subject's exposure to the country's risk (`CountryMethod::Exposure`).
    pub country_exposure: f64,
}

impl PremiumSpec {
    /// The country premium as it enters the cost of equity with relevered beta `beta`: CRP,
    /// exposure·CRP, or βL·CRP.
    pub fn country_applied(&self, beta: f64) -> f64 {
        match self.country_method {
            CountryMethod::Flat => self.country,
            CountryMethod::Exposure => self.country_exposure * self.country,
            CountryMethod::BetaScaled => beta * self.country,
        }
    }

    /// The country premium's multiplier: 1, the exposure or βL.
    pub fn country_scale(&self, beta: f64) -> f64 {
        match self.country_method {
            CountryMethod::Flat => 1.0,
            CountryMethod::Exposure => self.country_exposure,
            CountryMethod::BetaScaled => beta,
        }
    }

    /// Size + country as applied + company-specific.
    pub fn total_applied(&self, beta: f64) -> f64 {
        self.size + self.country_applied(beta) + self.company_specific
    }
}

/// A capital component beside equity and debt (preferred equity, leases): its share of capital
/// and its cost (`None`: preferred has none; leases cost the pre-tax cost of debt).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Component {
    pub weight: f64,
    pub cost: Option<f64>,
}

/// One peer's figures that the chain takes.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PeerCapital {
    pub raw_beta: f64,
    pub beta_std_error: f64,
    pub equity_value: f64,
    pub debt: f64,
    pub cash: f64,
    pub tax_rate: f64,
    /// The peer's own debt beta and pre-tax cost of debt, when the case gives them.
    pub own_debt_beta: Option<f64>,
    pub own_cost_of_debt: Option<f64>,
    /// Whether the peer enters the aggregates (excluded peers are still shown).
    pub included: bool,
}

/// Whether a peer's unlevered beta reads a cost of debt (Miles–Ezzell's discount rate of the tax
/// shield, or the credit spread that gives a debt beta to a formula that takes one), and whose.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum CostOfDebtUse {
    /// The peer's own `cost_of_debt`.
    Own,
    /// The subject's cost of debt, the peer having none of its own.
    Subject,
    /// Not read: the formula does not discount at it, and the debt beta is given, the peer's
    /// own, none, or one the formula ignores (Hamada).
    NotUsed,
}

impl CostOfDebtUse {
    /// Whether `peer`'s unlevered beta under `spec` reads a cost of debt, and whose.
    pub fn of(spec: &CapitalSpec<'_>, peer: &PeerCapital) -> CostOfDebtUse {
        use super::leverage::{DebtBetaSource, Formula};
        let reads_spread = spec.debt_beta_source == DebtBetaSource::CreditSpread
            && peer.own_debt_beta.is_none()
            && spec.formula != Formula::Hamada;
        match (
            spec.formula.uses_cost_of_debt() || reads_spread,
            peer.own_cost_of_debt,
        ) {
            (false, _) => CostOfDebtUse::NotUsed,
            (true, Some(_)) => CostOfDebtUse::Own,
            (true, None) => CostOfDebtUse::Subject,
        }
    }
}
