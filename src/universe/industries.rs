//! The industry table: every statistic of the securities of one industry label.
//!
//! Levered betas are aggregated over the securities that are estimated and not excluded by
//! `beta.exclude_flags`; unlevered betas over those of them that have one (a D/E, and a tax
//! rate where the formula uses it; see [`super::securities`]) and, for the betas of the
//! operations, their cash. Every location statistic an aggregation
//! can pick is reported (median, mean, market-cap-weighted mean, trimmed mean), of the unlevered
//! betas and of the betas of the operations
//! step, beside the dispersion, so the reader sees how much the choice matters. The statistics
//! are the case's own ([`crate::stats`]).

use std::collections::BTreeMap;

use serde::Serialize;

use super::estimate::NotEstimated;
use super::securities::SecurityResult;
use crate::case::LeverageSettings;
use crate::stats::{self, Aggregation, Dispersion};

/// Location and spread of one figure over an industry's securities.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Summary {
    pub dispersion: Dispersion,
    pub trimmed_mean: f64,
    pub trimmed_each_end: usize,
    /// Weighted by equity value, over the securities that have one (`None` if none has).
    pub market_cap_weighted_mean: Option<f64>,
    /// How many securities the market-cap-weighted mean rests on: those with an equity value
    /// (fewer than the count of values when some levered betas lack one).
    pub market_cap_weighted_count: usize,
    /// How many equal weights the market-cap weights are worth ([`stats::effective_count`]):
    /// near 1 when one firm's value dominates, near the count when the values are alike.
    pub market_cap_weighted_effective_count: Option<f64>,
    /// Weighted by the value of what the beta measures (`None` for levered betas, or if no
    /// security has the weight): equity plus debt for unlevered betas (a portfolio of the
    /// firms' assets; less cash under net debt, whose unlevered beta has netted it), equity plus
    /// debt less cash for the betas of the operations.
    pub value_weighted_mean: Option<f64>,
    /// The median's distribution-free 95% confidence interval ([`stats::median_interval`]);
    /// `None` for fewer than six values.
    pub median_interval: Option<[f64; 2]>,
}

impl Summary {
    /// The statistic `aggregation` picks.
    pub fn select(&self, aggregation: Aggregation) -> Option<f64> {
        match aggregation {
            Aggregation::Median => Some(self.dispersion.median),
            Aggregation::Mean => Some(self.dispersion.mean),
            Aggregation::TrimmedMean => Some(self.trimmed_mean),
            Aggregation::MarketCapWeighted => self.market_cap_weighted_mean,
        }
    }
}

/// One row of the industry table.
#[derive(Debug, Clone, Serialize)]
pub struct IndustryResult {
    pub industry: String,
    /// Securities of the panel with this label.
    pub securities: usize,
    /// Estimated and not excluded: they enter the levered aggregates.
    pub estimated: usize,
    /// Not estimated, by reason.
    pub not_estimated: BTreeMap<&'static str, usize>,
    /// Estimated but left out by `beta.exclude_flags`, by flag (a security can carry several).
    pub excluded: BTreeMap<&'static str, usize>,
    pub excluded_total: usize,
    /// Not estimated, whatever the reason.
    pub not_estimated_total: usize,
    /// Estimated and not excluded, yet carrying each flag (they enter the aggregates; a flag
    /// listed in `beta.exclude_flags` would leave them out), by flag.
    pub flagged: BTreeMap<&'static str, usize>,
    /// Of the securities aggregated, those carrying any flag.
    pub flagged_total: usize,
    /// Raw levered betas (market-cap weights over those with an equity value).
    pub levered: Option<Summary>,
    /// The shrunk betas (Blume or Vasicek), when `beta.adjustment` asks for them.
    pub shrunk: Option<Summary>,
    pub median_debt_to_equity: Option<f64>,
    /// Σ debt / Σ equity value over the same securities as the median D/E (the D/E of the
    /// industry as one portfolio; computed as their D/E weighted by equity value).
    pub aggregate_debt_to_equity: Option<f64>,
    /// The median tax rate of the aggregated securities that have one: with the median D/E, the
    /// structure at which an industry's unlevered beta relevers to a levered beta typical of it.
    pub median_tax_rate: Option<f64>,
    /// Unlevered betas under `leverage.formula`.
    pub unlevered: Option<Summary>,
    /// The betas of the operations, βU / (1 − cash / (equity + debt)).
    pub operations: Option<Summary>,
    /// The figure a case would relever: `leverage.aggregation` of the unlevered betas, with the
    /// betas of the operations when `leverage.operations_beta` is set.
    pub unlevered_beta: Option<f64>,
}

/// The industry table, one row per label in byte order.
pub fn industry_table(
    securities: &[SecurityResult],
    leverage: &LeverageSettings,
    adjusted: bool,
) -> Vec<IndustryResult> {
    let mut by_label: BTreeMap<&str, Vec<&SecurityResult>> = BTreeMap::new();
    for s in securities {
        if let Some(label) = s.industry.as_deref() {
            by_label.entry(label).or_default().push(s);
        }
    }
    by_label
        .into_iter()
        .map(|(label, members)| industry_row(label, &members, leverage, adjusted))
        .collect()
}

pub(super) fn industry_row(
    label: &str,
    members: &[&SecurityResult],
    leverage: &LeverageSettings,
    adjusted: bool,
) -> IndustryResult {
    let aggregated: Vec<&SecurityResult> =
        members.iter().copied().filter(|s| s.aggregated()).collect();
    let summary = |figure: &dyn Fn(&SecurityResult) -> Option<f64>,
                   value: &dyn Fn(&SecurityResult) -> Option<f64>| {
        figure_summary(&aggregated, (figure, value), leverage.trim_fraction)
    };
    let none = |_: &SecurityResult| None;
    let unlevered = summary(&|s| s.unlevered_beta, &|s| unlevered_value(s, leverage));
    let operations = summary(&|s| s.operations_beta, &operations_value);
    let chosen = if leverage.operations_beta {
        &operations
    } else {
        &unlevered
    };
    let (median_debt_to_equity, aggregate_debt_to_equity) = debt_to_equity(&aggregated);
    let mut not_estimated = BTreeMap::new();
    for reason in NotEstimated::ALL {
        let n = members
            .iter()
            .filter(|s| s.not_estimated == Some(reason))
            .count();
        not_estimated.insert(reason.name(), n);
    }
    let excluded_members: Vec<&&SecurityResult> = members
        .iter()
        .filter(|s| s.estimate.is_some() && s.excluded_reason.is_some())
        .collect();
    let mut excluded = BTreeMap::new();
    for flag in super::FLAGS {
        let n = excluded_members
            .iter()
            .filter(|s| s.excluding_flags.contains(&flag))
            .count();
        excluded.insert(flag.name(), n);
    }
    let flagged = super::FLAGS
        .iter()
        .map(|flag| {
            let n = aggregated.iter().filter(|s| s.flags.contains(flag)).count();
            (flag.name(), n)
        })
        .collect();
    IndustryResult {
        industry: label.to_string(),
        securities: members.len(),
        estimated: aggregated.len(),
        not_estimated_total: not_estimated.values().sum(),
        not_estimated,
        excluded,
        excluded_total: excluded_members.len(),
        flagged,
        flagged_total: aggregated.iter().filter(|s| !s.flags.is_empty()).count(),
        levered: summary(&|s| s.estimate.as_ref().map(|e| e.beta), &none),
        shrunk: if adjusted {
            summary(&|s| s.shrunk_beta, &none)
        } else {
            None
        },
        median_debt_to_equity,
        aggregate_debt_to_equity,
        median_tax_rate: median(aggregated.iter().filter_map(|s| s.tax_rate)),
        unlevered_beta: chosen.as_ref().and_then(|s| s.select(leverage.aggregation)),
        unlevered,
        operations,
    }
}

/// The summary of one figure over the aggregated securities: each value with its equity value
/// (market-cap weights) and, where the figure is of a firm's assets or operations, the value of
/// those (value weights).
fn figure_summary(
    aggregated: &[&SecurityResult],
    (figure, value): (Figure<'_>, Figure<'_>),
    trim: f64,
) -> Option<Summary> {
    let mut values = Vec::new();
    let mut by_equity = Vec::new();
    let mut by_value = Vec::new();
    for s in aggregated {
        if let Some(v) = figure(s) {
            values.push(v);
            by_equity.extend(s.equity_value.map(|e| (v, e)));
            by_value.extend(value(s).map(|w| (v, w)));
        }
    }
    summarise(&values, (&by_equity, &by_value), trim)
}

/// Equity plus debt: the value a gross-debt unlevered beta is the beta of.
fn firm_value(s: &SecurityResult) -> Option<f64> {
    Some(s.equity_value? + s.debt?)
}

/// What an unlevered beta is the beta of: equity plus debt, or, under net debt, equity plus
/// debt less cash (the cash already netted; found by review: weighted by equity plus debt the
/// cash counted twice).
fn unlevered_value(s: &SecurityResult, leverage: &LeverageSettings) -> Option<f64> {
    match leverage.debt_measure {
        crate::capital::leverage::DebtMeasure::Gross => firm_value(s),
        crate::capital::leverage::DebtMeasure::Net => Some(firm_value(s)? - s.cash?),
    }
}

/// The value of the operations, equity plus debt less cash: what a beta of the operations is
/// the beta of.
fn operations_value(s: &SecurityResult) -> Option<f64> {
    Some(firm_value(s)? * s.operating_share?)
}

/// The median D/E of the aggregated securities that have one, and their D/E as one portfolio
/// (Σ debt / Σ equity value, as their D/E weighted by equity value).
fn debt_to_equity(aggregated: &[&SecurityResult]) -> (Option<f64>, Option<f64>) {
    let (weighted, equity): (Vec<f64>, Vec<f64>) = (aggregated.iter())
        .filter_map(|s| Some((s.debt_to_equity?, s.equity_value?)))
        .unzip();
    (
        median(aggregated.iter().filter_map(|s| s.debt_to_equity)),
        (!equity.is_empty()).then(|| stats::weighted_mean(&weighted, &equity)),
    )
}

/// The median of `values` (`None` for none), as every industry median is taken.
fn median(values: impl Iterator<Item = f64>) -> Option<f64> {
    let values: Vec<f64> = values.collect();
    (!values.is_empty()).then(|| stats::dispersion(&values).median)
}

/// A figure and its weight.
type Weighted = (f64, f64);

/// One figure of a security (a beta, a weight), when it has it.
type Figure<'a> = &'a dyn Fn(&SecurityResult) -> Option<f64>;

/// Dispersion and locations of `values`; the market-cap-weighted mean over the (value, equity
/// value) pairs and the value-weighted mean over the (value, weight) pairs. `None` for no values.
fn summarise(
    values: &[f64],
    (by_equity, by_value): (&[Weighted], &[Weighted]),
    trim: f64,
) -> Option<Summary> {
    if values.is_empty() {
        return None;
    }
    let (trimmed_mean, trimmed_each_end) = stats::trimmed_mean(values, trim);
    let weighted = |pairs: &[(f64, f64)]| {
        let (v, w): (Vec<f64>, Vec<f64>) = pairs.iter().copied().unzip();
        (!w.is_empty()).then(|| stats::weighted_mean(&v, &w))
    };
    let mut sorted = values.to_vec();
    sorted.sort_by(f64::total_cmp);
    Some(Summary {
        dispersion: stats::dispersion(values),
        trimmed_mean,
        trimmed_each_end,
        market_cap_weighted_mean: weighted(by_equity),
        market_cap_weighted_count: by_equity.len(),
        market_cap_weighted_effective_count: stats::effective_count(
            &by_equity.iter().map(|&(_, w)| w).collect::<Vec<f64>>(),
        ),
        value_weighted_mean: weighted(by_value),
        median_interval: stats::median_interval(&sorted, 0.95),
    })
}
