//! The records of one valuation: what `result.json`, the memo and every other output show.
//!
//! Each record is built whole by the function that knows all its parts ([`super::value_with`]);
//! none is created with placeholders and patched later. Field order is the order of
//! `result.json`; README documents the schema.

use chrono::NaiveDate;
use serde::Serialize;

use super::analyses::{Bridge, Grid, Uncertainty};
use crate::beta::diagnostics::LagResponse;
use crate::beta::{self, rolling, BetaEstimate};
use crate::capital::chain::{FormulaOutcome, OtherComponents, Weights};
use crate::capital::debt::CostOfDebtRecord;
use crate::case::{CaseFile, PeerFlag};
use crate::io::series::{iso_date, DataFile};
use crate::market::sampling::{self, AlignedReturns, DroppedPeriods};
use crate::stats::{self, Dispersion};

/// Version of the `result.json` layout; raised whenever a field changes meaning or goes away.
pub const SCHEMA_VERSION: u32 = 2;

/// The tool that produced a result.
#[derive(Debug, Clone, Serialize)]
pub struct ToolInfo {
    pub name: &'static str,
    pub version: &'static str,
}

/// Where the case came from.
#[derive(Debug, Clone, Serialize)]
pub struct CaseRecord {
    pub file: String,
    pub sha256: String,
    pub overrides: Vec<String>,
    pub title: String,
    pub subject: String,
    #[serde(serialize_with = "iso_date")]
    pub valuation_date: NaiveDate,
    pub currency: String,
}

/// The sampling actually applied.
#[derive(Debug, Clone, Serialize)]
pub struct SamplingRecord {
    pub frequency: sampling::Frequency,
    pub periods_per_year: f64,
    /// Return periods in the window.
    pub lookback: u32,
    pub min_observations: u32,
    /// Return periods per rolling window, as resolved (`beta.rolling_window`, else half the
    /// window's periods, at least 3).
    pub rolling_window: u32,
    /// Fewest observations in a rolling window, as resolved (`beta.rolling_min_observations`,
    /// else 80% of the rolling window rounded up, at least 3).
    pub rolling_min_observations: u32,
    /// The first sample point (the base price of the first return).
    #[serde(serialize_with = "iso_date")]
    pub window_start: NaiveDate,
    /// The last sample point: the last period end on or before the valuation date.
    #[serde(serialize_with = "iso_date")]
    pub window_end: NaiveDate,
    pub return_type: &'static str,
    pub excess_returns: bool,
    pub risk_free_convention: &'static str,
    /// The weekday of weekly sampling (`null` for other frequencies).
    pub weekday: Option<sampling::SampleWeekday>,
    /// The staleness limit in calendar days (`null`: none beyond the period rule).
    pub max_stale_days: Option<u32>,
    /// The sampling rule of the frequency, in words.
    pub sampling_rule: &'static str,
}

/// One peer's estimate through unlevering.
#[derive(Debug, Clone, Serialize)]
pub struct PeerResult {
    pub name: String,
    pub prices_file: String,
    pub periods_in_window: usize,
    pub periods_dropped: DroppedPeriods,
    #[serde(flatten)]
    pub estimate: BetaEstimate,
    /// The raw beta shrunk toward a mean (Blume or Vasicek), or `null` when the case asks for no
    /// adjustment.
    pub shrunk_beta: Option<f64>,
    /// The beta that is unlevered: the shrunk one when there is one, else the raw one.
    pub beta_used: f64,
    pub equity_value: f64,
    pub debt: f64,
    pub cash: f64,
    pub debt_to_equity: f64,
    pub tax_rate: f64,
    pub unlevered_beta: f64,
    /// The debt beta used in unlevering (0 when none; Hamada never uses one).
    pub debt_beta: f64,
    /// The peer's pre-tax cost of debt used by Miles–Ezzell and the credit-spread debt beta:
    /// its own `cost_of_debt`, else the subject's. Always there in a valuation; a beta listing
    /// leaves it out when the subject's comes from a spread table that no unlevered beta needs
    /// (the table is then not read, so a fault in it cannot stop the listing).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cost_of_debt: Option<f64>,
    /// Whether the unlevered beta reads `cost_of_debt`: `own`, `subject` (the peer has none of
    /// its own) or `not-used`.
    pub cost_of_debt_used: crate::capital::chain::CostOfDebtUse,
    /// 1 − cash / (equity + debt), gross debt: the share of the firm's value in its operations.
    pub operating_share: f64,
    /// The beta of the operations, `unlevered_beta / operating_share` (cash at beta zero);
    /// aggregated instead of `unlevered_beta` when `leverage.operations_beta`.
    pub operations_beta: f64,
    /// Why the peer is left out of the aggregation, or `null` when it is included.
    pub excluded_reason: Option<String>,
    /// The Vasicek-shrunk beta beside the raw one (`null` unless `beta.adjustment = "vasicek"`).
    pub vasicek: Option<beta::vasicek::Shrunk>,
    /// Share of the window's periods dropped because the peer's price was stale.
    pub stale_share: f64,
    /// Share of the returns used that are exactly zero (flag `zero_returns`).
    pub zero_return_share: f64,
    /// The slope on the index's previous-period return beside the current one (flag
    /// `lagged_response`; `null` unless the beta is OLS).
    pub lag_response: Option<LagResponse>,
    /// Diagnostic warnings (see README, "Diagnostics").
    pub flags: Vec<PeerFlag>,
    /// Range and trend of the rolling OLS beta (`null` with fewer than two windows).
    pub stability: Option<rolling::Stability>,
    /// Why there is no `stability`: `one-window` (fewer than two windows laid through the
    /// estimation window), `newey-west-lags` (stated lags need more observations than a window has),
    /// `short-for-estimator` (the lag rule's lags or the shifted index columns need more than a
    /// window holds) or `too-few-windows`; `null` when there is a stability record.
    pub stability_missing: Option<rolling::NoStability>,
    /// The fitted line α + β·x over the index returns used, with its 95% band (for the chart).
    pub fitted_line: beta::fitted_line::FittedLine,
}

/// Aggregation and relevering.
#[derive(Debug, Clone, Serialize)]
pub struct BetaSummary {
    pub formula: crate::capital::leverage::Formula,
    pub formula_source: &'static str,
    /// The relevering relation, as printed in the memo.
    pub formula_expression: &'static str,
    pub aggregation: stats::Aggregation,
    /// The aggregate unlevered beta that is relevered.
    pub unlevered: f64,
    /// The peers' unlevered betas: count, quartiles, mean, standard deviation.
    pub unlevered_dispersion: Dispersion,
    /// The aggregate relevered at the target structure.
    pub relevered: f64,
    /// Whether the betas of the operations are the ones aggregated (`leverage.operations_beta`).
    pub uses_operations_beta: bool,
    /// The same statistic of the unlevered betas and of the betas of the operations; `unlevered`
    /// is one of the two.
    pub aggregate_of_unlevered: f64,
    pub aggregate_of_operations: f64,
    /// Median, mean, market-cap-weighted mean and trimmed mean of the betas aggregated.
    pub unlevered_statistics: stats::Locations,
    /// Gross debt or net of cash in every D/E.
    pub debt_measure: crate::capital::leverage::DebtMeasure,
    /// The prior of the Vasicek adjustment (`null` unless it is used).
    pub vasicek_prior: Option<beta::vasicek::Prior>,
    /// How many peers enter the aggregation (those without an exclusion reason).
    pub peers_included: usize,
}

/// The target capital structure, both ratios, whichever was given.
#[derive(Debug, Clone, Serialize)]
pub struct TargetRecord {
    pub given: &'static str,
    pub debt_to_equity: f64,
    pub debt_to_capital: f64,
    pub tax_rate: f64,
    /// Marginal or effective: the basis of `tax_rate`, used for relevering and the shield.
    pub tax_rate_basis: crate::capital::cost::TaxRateBasis,
    /// The aggregated peers' median D/E (by `leverage.debt_measure`), which a reviewer sets a
    /// target beside (a market participant's structure; added in 0.16.0).
    pub peer_median_debt_to_equity: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct PremiumRecord {
    pub size: f64,
    pub country: f64,
    pub company_specific: f64,
    /// The premiums added to the cost of equity: size + country as applied + company-specific.
    pub total: f64,
    pub country_method: crate::capital::cost::CountryMethod,
    /// The exposure for `country_method = "exposure"`, βL for `"beta-scaled"`, 1 for `"flat"`.
    pub country_scale: f64,
    /// The country premium as it enters the cost of equity.
    pub country_applied: f64,
    pub size_justification: String,
    pub country_justification: String,
    pub company_specific_justification: String,
}

/// Every figure of one cost-of-capital estimate, and every input that produced it.
#[derive(Debug, Clone, Serialize)]
pub struct Valuation {
    pub schema_version: u32,
    pub tool: ToolInfo,
    /// When the run happened (UTC, RFC 3339); the only field that differs between reruns.
    pub generated_at: String,
    pub case: CaseRecord,
    /// The resolved case settings, every default written out.
    pub settings: CaseFile,
    pub files: Vec<DataFile>,
    pub sampling: SamplingRecord,
    /// The beta estimator and standard errors, in words with their sources.
    pub estimator: beta::EstimatorRecord,
    pub peers: Vec<PeerResult>,
    /// Aggregation, relevering and the cost of capital (written at the top level of the JSON).
    #[serde(flatten)]
    pub cost: CostOfCapital,
    /// The memo's sensitivity grid (`null` from `value` alone; filled by `audit::evaluate`).
    pub sensitivity: Option<Grid>,
    /// Monte Carlo percentiles of the WACC (filled by `audit::evaluate`).
    pub uncertainty: Option<Uncertainty>,
    /// The bridge to a claimed build-up, when the case has `[reconcile]`.
    pub reconciliation: Option<Bridge>,
    /// Plain-language remarks about the data that a reviewer should see.
    pub notes: Vec<String>,
    /// What the memo's conditional cautions rest on, computed here so a template only reads.
    pub cautions: Cautions,
    /// Each peer's aligned returns, in peer order (written to `returns.csv`, not to JSON).
    #[serde(skip)]
    pub returns: Vec<AlignedReturns>,
    /// Each peer's rolling betas, in peer order (written to `rolling.csv`, not to JSON).
    #[serde(skip)]
    pub rolling: Vec<Vec<rolling::RollingPoint>>,
}

/// The facts behind the memo's conditional cautions, over the aggregated peers.
#[derive(Debug, Clone, Default, Serialize)]
pub struct Cautions {
    /// The aggregated peers' lowest and highest D/E, when the target D/E is above every one of
    /// them (the relevered beta extrapolates the formula); `null` otherwise.
    pub leverage_beyond_peers: Option<[f64; 2]>,
    /// Aggregated peers whose raw beta's 95% interval reaches zero or lies below it.
    pub betas_near_zero: Vec<String>,
    /// Aggregated peers whose negative raw beta the adjustment turns positive.
    pub turned_positive_by_adjustment: Vec<String>,
    /// Every aggregated peer, when each raises a diagnostic flag; empty otherwise.
    pub every_peer_flagged: Vec<String>,
    /// The aggregated peers that raise a diagnostic flag, when some but not all do (all of
    /// them are `every_peer_flagged`); empty otherwise.
    pub flagged_in_aggregate: Vec<String>,
    /// Whether the aggregate rests on fewer than five peers (`FEW_PEERS`): one firm's beta
    /// error can move it a long way, and the peer-set bootstrap draws few distinct sets.
    pub few_peers: bool,
    /// The inputs the case gives no source or reason for, in the memo's order.
    pub unstated_inputs: Vec<UnstatedInput>,
    /// Whether debt is taken as riskless (`leverage.debt_beta_source = "none"`) while the
    /// subject's pre-tax cost of debt lies above the risk-free rate: risky debt would bear
    /// some of the firms' risk (added in 0.17.0; the memo decided it itself before).
    pub riskless_debt_above_risk_free: bool,
}

/// An input without a stated basis: what it is, and the case key that would hold its source.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct UnstatedInput {
    pub input: &'static str,
    pub key: &'static str,
}

/// Everything after the peer regressions: aggregation, relevering, CAPM, cost of debt, WACC.
#[derive(Debug, Clone, Serialize)]
pub struct CostOfCapital {
    pub beta: BetaSummary,
    pub target: TargetRecord,
    pub weights: Weights,
    pub risk_free_rate: f64,
    pub equity_risk_premium: f64,
    pub premiums: PremiumRecord,
    /// The CAPM term of the cost of equity: relevered beta × equity risk premium.
    pub beta_times_equity_risk_premium: f64,
    pub cost_of_equity: f64,
    pub cost_of_debt_pre_tax: f64,
    pub cost_of_debt_after_tax: f64,
    pub wacc: f64,
    /// Each capital component's share of the WACC (weight × cost); they sum to `wacc`.
    pub wacc_contributions: Weights,
    /// The debt beta used in relevering at the target (0 when none).
    pub subject_debt_beta: f64,
    /// Costs of the optional capital components (0 weight when absent).
    pub other_capital_costs: OtherComponents,
    /// How the pre-tax cost of debt was arrived at: source, table and row used.
    pub cost_of_debt: CostOfDebtRecord,
    /// The relevered beta, cost of equity and WACC under every leverage formula, same inputs.
    pub leverage_comparison: Vec<ComparedFormula>,
    /// The results in the output currency by the Fisher relation, when `[conversion]` asks.
    pub currency_conversion: Option<CurrencyConversion>,
}

/// One row of the leverage-formula comparison: the formula's figures and, for another formula
/// than the case's, why the case would be refused under it (its figures are then shown for
/// comparison only).
#[derive(Debug, Clone, Serialize)]
pub struct ComparedFormula {
    #[serde(flatten)]
    pub outcome: FormulaOutcome,
    /// Absent when the case would run under this formula.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub refused: Option<String>,
}

/// The cost of equity and WACC carried into the output currency, and both in real terms.
#[derive(Debug, Clone, Serialize)]
pub struct CurrencyConversion {
    pub from: String,
    pub to: String,
    pub inflation_from: f64,
    pub inflation_to: f64,
    /// Nominal, in the output currency: (1 + r)·(1 + π_to)/(1 + π_from) − 1.
    pub cost_of_equity: f64,
    pub wacc: f64,
    /// Real (the same in both currencies): (1 + r)/(1 + π_from) − 1.
    pub cost_of_equity_real: f64,
    pub wacc_real: f64,
    /// The pre-tax cost of debt carried to the output currency by the same relation (added in
    /// 0.16.0).
    pub cost_of_debt_pre_tax: f64,
    /// The WACC of a subject that borrows and deducts interest in the output currency: each
    /// component carried on its own (the cost of equity, the pre-tax costs of debt, preferred
    /// equity and leases), the tax shield taken on the carried nominal interest, and weighted
    /// again; it differs from `wacc` by −(w_debt + w_leases)·t·((1 + π_to)/(1 + π_from) − 1),
    /// lower when the output currency's inflation is the higher
    /// (added in 0.16.0; found by review: the memo gave the formula without the figure).
    pub wacc_borrowing_locally: f64,
}

/// The results carried into the output currency; `chain` is the case's own.
pub(super) fn convert_results(
    conversion: &crate::case::ConversionSettings,
    settings: &crate::case::CaseFile,
    chain: &crate::capital::chain::Chain,
) -> CurrencyConversion {
    use crate::capital::cost::{after_tax_cost_of_debt, wacc, WaccTerms};
    use crate::capital::currency::{convert_nominal, nominal_to_real};
    let (from, to) = (conversion.inflation_case, conversion.inflation_output);
    let chosen = chain.outcome();
    let carried = |rate: f64| convert_nominal(rate, from, to);
    let (w, other, tax) = (&chain.weights, &chain.other, settings.target.tax_rate);
    let cost_of_equity = carried(chosen.cost_of_equity);
    let cost_of_debt_pre_tax = carried(chain.cost_of_debt.pre_tax);
    // The one WACC formula, over the carried costs (found by review: it was written out here).
    let wacc_borrowing_locally = wacc(&WaccTerms {
        equity_weight: w.equity,
        cost_of_equity,
        debt_weight: w.debt,
        cost_of_debt_after_tax: after_tax_cost_of_debt(cost_of_debt_pre_tax, tax),
        preferred_weight: w.preferred,
        preferred_cost: carried(other.preferred_cost),
        lease_weight: w.leases,
        lease_cost_after_tax: after_tax_cost_of_debt(carried(other.lease_cost_pre_tax), tax),
    });
    CurrencyConversion {
        from: settings.case.currency.clone(),
        to: conversion.currency.clone(),
        inflation_from: from,
        inflation_to: to,
        cost_of_equity,
        wacc: carried(chosen.wacc),
        cost_of_equity_real: nominal_to_real(chosen.cost_of_equity, from),
        wacc_real: nominal_to_real(chosen.wacc, from),
        cost_of_debt_pre_tax,
        wacc_borrowing_locally,
    }
}
