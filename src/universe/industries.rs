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
    let trim = leverage.trim_fraction;
    let summary = |figure: &dyn Fn(&SecurityResult) -> Option<f64>| {
        // Market-cap weights need an equity value: the weighted mean covers those that have one.
        let (values, weighted): (Vec<f64>, Vec<(f64, f64)>) = aggregated
            .iter()
            .filter_map(|s| figure(s).map(|v| (v, s.equity_value.map(|e| (v, e)))))
            .fold(
                (Vec::new(), Vec::new()),
                |(mut values, mut weighted), (v, w)| {
                    values.push(v);
                    weighted.extend(w);
                    (values, weighted)
                },
            );
        summarise(&values, &weighted, trim)
    };
    let unlevered = summary(&|s| s.unlevered_beta);
    let operations = summary(&|s| s.operations_beta);
    let chosen = if leverage.operations_beta {
        &operations
    } else {
        &unlevered
    };
    let ratios: Vec<f64> = aggregated.iter().filter_map(|s| s.debt_to_equity).collect();
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
        levered: summary(&|s| s.estimate.as_ref().map(|e| e.beta)),
        shrunk: if adjusted {
            summary(&|s| s.shrunk_beta)
        } else {
            None
        },
        median_debt_to_equity: (!ratios.is_empty()).then(|| stats::dispersion(&ratios).median),
        unlevered_beta: chosen.as_ref().and_then(|s| s.select(leverage.aggregation)),
        unlevered,
        operations,
    }
}

/// Dispersion and locations of `values`; the market-cap-weighted mean over `weighted`
/// (value, equity value) pairs. `None` for no values.
fn summarise(values: &[f64], weighted: &[(f64, f64)], trim: f64) -> Option<Summary> {
    if values.is_empty() {
        return None;
    }
    let (trimmed_mean, trimmed_each_end) = stats::trimmed_mean(values, trim);
    let (v, w): (Vec<f64>, Vec<f64>) = weighted.iter().copied().unzip();
    Some(Summary {
        dispersion: stats::dispersion(values),
        trimmed_mean,
        trimmed_each_end,
        market_cap_weighted_mean: (!w.is_empty()).then(|| stats::weighted_mean(&v, &w)),
    })
}
