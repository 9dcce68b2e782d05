//! The case file's sections that drive the analyses around the WACC: `[sensitivity]` (the
//! grid), `[uncertainty]` (the Monte Carlo, leave-one-out and the specification range) and
//! `[reconcile]` (the bridge to a claimed build-up). Part of the schema (`schema.rs` re-exports
//! every type here, so callers name them as `case::schema::…`); kept apart so that the schema's
//! file holds the inputs of the cost of capital and this one the settings of its audit.

use serde::{Deserialize, Serialize};

/// `[sensitivity]`: the grid printed in the memo. Each axis is `key=low..high:step` over any
/// `--set` key path; when absent, the equity risk premium ±1 point (rows) against the target
/// debt-to-equity from 0 to twice the target (columns).
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct SensitivitySettings {
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rows: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub columns: Option<String>,
    /// `"wacc"` or `"cost_of_equity"`.
    pub metric: Metric,
}

/// `[uncertainty]`: the Monte Carlo of the WACC.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct UncertaintySettings {
    pub draws: u32,
    pub seed: u64,
    /// Draw the equity risk premium uniformly from `[low, high]` as well.
    #[serde(skip_serializing_if = "Option::is_none", deserialize_with = "range")]
    pub equity_risk_premium: Option<[f64; 2]>,
    /// Draw the risk-free rate uniformly from `[low, high]` as well.
    #[serde(skip_serializing_if = "Option::is_none", deserialize_with = "range")]
    pub risk_free_rate: Option<[f64; 2]>,
    /// Whether the peers' beta errors are drawn jointly, correlated as their residuals are
    /// (`"correlated"`), or each on its own (`"independent"`).
    pub beta_errors: BetaErrors,
    /// A peer whose leave-one-out WACC differs from the case's by more than this (decimal:
    /// 0.0025 is 25 bp) is named in the memo.
    pub influence_threshold: f64,
    /// The WACC under the usual alternative frequencies and windows, beside the case's own.
    pub specification_range: bool,
}

/// A range `[low, high]` of exactly two numbers. The TOML reader fills a two-element array from
/// the first two of a longer list without a word (found by review: `[0.04, 0.05, 0.06]` became
/// `[0.04, 0.05]` in the case file, while `--set` refused it), so the list is read whole and
/// its length checked.
fn range<'de, D: serde::Deserializer<'de>>(
    deserializer: D,
) -> std::result::Result<Option<[f64; 2]>, D::Error> {
    let values = Vec::<f64>::deserialize(deserializer)?;
    match values[..] {
        [low, high] => Ok(Some([low, high])),
        _ => Err(serde::de::Error::custom(format!(
            "a range is two numbers [low, high]; found a list of {}",
            values.len()
        ))),
    }
}

/// `uncertainty.beta_errors`: how the Monte Carlo draws the peers' betas.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum BetaErrors {
    /// Jointly normal, with the covariance of seemingly unrelated regressions (Zellner 1962).
    #[default]
    Correlated,
    /// Each peer's beta on its own, as if the peers' errors were unrelated.
    Independent,
}

impl Default for UncertaintySettings {
    fn default() -> Self {
        UncertaintySettings {
            draws: 10_000,
            seed: 1,
            equity_risk_premium: None,
            risk_free_rate: None,
            beta_errors: BetaErrors::Correlated,
            // hurdle's choice: a quarter point is a move a reviewer would ask an analyst to explain.
            influence_threshold: 0.0025,
            specification_range: true,
        }
    }
}

/// `[reconcile]`: a claimed build-up (see `hurdle compare`) the memo bridges to.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ReconcileSettings {
    /// Path of a TOML file with a `[claimed]` table.
    pub claimed: String,
}

/// The figure a grid shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Metric {
    #[default]
    Wacc,
    CostOfEquity,
}

impl std::str::FromStr for Metric {
    type Err = String;

    fn from_str(text: &str) -> std::result::Result<Self, Self::Err> {
        match text {
            "wacc" => Ok(Metric::Wacc),
            "cost_of_equity" => Ok(Metric::CostOfEquity),
            other => Err(format!(
                "`{other}` is not a metric; use wacc or cost_of_equity"
            )),
        }
    }
}
