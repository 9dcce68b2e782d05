//! The case file's schema: every section and key of a case, as serde types with their defaults.
//!
//! Parsing is strict (`deny_unknown_fields`), so a misspelt key is reported with its line by the
//! TOML parser. Enumerations that belong to a computing layer (estimator, frequency, formula,
//! cost-of-debt source, …) are defined there and only embedded here, so those layers never learn
//! that a case file exists. README's "Case file reference" documents every key; keep the two in
//! step.

use std::fmt;

use chrono::NaiveDate;
use serde::{Deserialize, Deserializer, Serialize, Serializer};

pub use super::analyses::{
    BetaErrors, Metric, ReconcileSettings, SensitivitySettings, UncertaintySettings,
};
pub use super::lookback::{Lookback, SpanUnit};
pub use crate::beta::diagnostics::PeerFlag;
pub use crate::beta::spec::{Adjustment, BetaMethod};
pub use crate::capital::cost::{CountryMethod, TaxRateBasis};
pub use crate::capital::debt::DebtSource;
pub use crate::capital::leverage::{DebtBetaSource, DebtMeasure, Formula};
pub use crate::market::sampling::{Frequency, ReturnType, SampleWeekday};
pub use crate::stats::least_squares::StdErrors;
pub use crate::stats::Aggregation;

/// The whole case file, as written (after overrides), with every default made explicit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CaseFile {
    pub case: CaseInfo,
    /// Wide price tables that series refer to by `source` and `column`.
    #[serde(default, skip_serializing_if = "std::collections::BTreeMap::is_empty")]
    pub sources: super::sources::Sources,
    pub market: Market,
    #[serde(default)]
    pub beta: BetaSettings,
    #[serde(default)]
    pub leverage: LeverageSettings,
    pub target: TargetSettings,
    pub debt: DebtSettings,
    #[serde(default)]
    pub premiums: Premiums,
    #[serde(default)]
    pub sensitivity: SensitivitySettings,
    #[serde(default)]
    pub uncertainty: UncertaintySettings,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reconcile: Option<ReconcileSettings>,
    #[serde(default)]
    pub preferred: PreferredSettings,
    #[serde(default)]
    pub leases: LeaseSettings,
    /// Converts the results to another currency's nominal rates when present.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub conversion: Option<ConversionSettings>,
    #[serde(rename = "peer", default)]
    pub peers: Vec<PeerSpec>,
}

/// `[case]`: what the estimate is for.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CaseInfo {
    pub title: String,
    /// The firm whose cost of capital is estimated.
    #[serde(default)]
    pub subject: String,
    pub valuation_date: CaseDate,
    /// A label only; no conversion is made.
    pub currency: String,
    /// How the peers were chosen (criteria, candidates left aside), printed in the memo.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub peer_selection: String,
}

/// `[market]`: the rates of the CAPM and the index the betas are measured against.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Market {
    /// Annual risk-free rate used in the cost of equity (decimal).
    pub risk_free_rate: f64,
    /// Annual equity risk premium over that rate (decimal).
    pub equity_risk_premium: f64,
    /// Where the risk-free rate comes from (source, date, maturity), printed in the memo.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub risk_free_rate_justification: String,
    /// Where the equity risk premium comes from (source, method, date), printed in the memo.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub equity_risk_premium_justification: String,
    pub index: IndexSpec,
    /// Annualised yields used to turn returns into excess returns; raw returns when absent.
    #[serde(default)]
    pub risk_free_series: Option<YieldSpec>,
}

/// `[market.index]`: the market index price file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct IndexSpec {
    #[serde(default = "default_index_name")]
    pub name: String,
    /// A price file of its own; empty when `source` names a wide table instead.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub prices: String,
    /// A table under `[sources]`, and the column in it (instead of `prices`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub source: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub column: Option<String>,
    #[serde(default = "default_date_column")]
    pub date_column: String,
    #[serde(default = "default_price_column")]
    pub price_column: String,
    /// Dates whose move from the previous row beyond `sanity::JUMP_FACTOR` is real.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub accept_jumps: Vec<CaseDate>,
}

/// `[market.risk_free_series]`: a file of annualised risk-free yields.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct YieldSpec {
    /// A yield file of its own; empty when `source` names a wide table instead.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub yields: String,
    /// A table under `[sources]`, and the column in it (instead of `yields`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub source: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub column: Option<String>,
    #[serde(default = "default_date_column")]
    pub date_column: String,
    #[serde(default = "default_yield_column")]
    pub yield_column: String,
}

/// `[beta]`: how each peer's equity beta is estimated.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct BetaSettings {
    pub frequency: Frequency,
    /// Number of return periods in the window (60 monthly returns span 61 month-ends), or a
    /// calendar span such as `"5y"`, `"104w"`, `"250d"`.
    pub lookback: Lookback,
    /// A peer with fewer usable periods than this is an error, not a silent drop.
    pub min_observations: u32,
    pub method: BetaMethod,
    pub adjustment: Adjustment,
    /// The weight w on the raw beta in Blume's shrinkage w·β + (1 − w) (`adjustment = "blume"`),
    /// in (0, 1]. Default 0.67, near the slope of Blume (1971, J. Finance 26(1)), from memory
    /// β_t ≈ 0.343 + 0.677·β_{t−1}.
    pub blume_weight: f64,
    /// Standard errors behind every SE, t, p-value and confidence interval of beta.
    pub std_errors: StdErrors,
    /// Newey–West lags; absent means the rule floor(4·(N/100)^(2/9)).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub newey_west_lags: Option<u32>,
    /// Lags of the market return in the Dimson regression.
    pub dimson_lags: u32,
    /// Leads of the market return in the Dimson regression.
    pub dimson_leads: u32,
    /// Vasicek prior mean; absent means the cross-sectional mean of the included peers' betas.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub vasicek_prior_mean: Option<f64>,
    /// Vasicek prior variance; absent means the cross-sectional variance of those betas.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub vasicek_prior_variance: Option<f64>,
    /// The weekday of weekly sampling.
    pub weekday: SampleWeekday,
    /// Simple or log returns.
    pub returns: ReturnType,
    /// A sample whose last price is more than this many calendar days older than its sample
    /// point is dropped and counted as stale; absent means no limit beyond the period rule.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub max_stale_days: Option<u32>,
    /// Explicit first date of the window; replaces `lookback` when given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub window_start: Option<CaseDate>,
    /// Explicit last date of the window (on or before the valuation date); default the
    /// valuation date.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub window_end: Option<CaseDate>,
    /// Flag `too_few_observations` below this share of the window's periods.
    pub flag_observations_share: f64,
    /// Flag `low_r_squared` below this R².
    pub flag_r_squared_floor: f64,
    /// Flag `stale_prices` when more than this share of the window's periods had a stale peer
    /// price.
    pub flag_stale_share: f64,
    /// Flag `zero_returns` when more than this share of a peer's returns are exactly zero.
    pub flag_zero_return_share: f64,
    /// Flag `lagged_response` when an OLS beta's slope on the index's previous-period return
    /// is positive with a two-sided p-value below this (0 never flags).
    pub flag_lag_p_value: f64,
    /// Peers raising any of these flags are left out of the aggregation (still shown).
    pub exclude_flags: Vec<PeerFlag>,
    /// Return periods per rolling window; absent means half the window's periods.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rolling_window: Option<u32>,
    /// Periods between consecutive rolling window ends.
    pub rolling_step: u32,
    /// Fewest observations in a rolling window; absent means 80% of it, rounded up.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rolling_min_observations: Option<u32>,
}

impl BetaSettings {
    /// The rolling window length and its minimum observations, for a window of `lookback`.
    pub fn rolling(&self, lookback: u32) -> (u32, u32) {
        // Defaults never fall below the 3 observations a regression with an intercept needs.
        let window = self.rolling_window.unwrap_or((lookback / 2).max(3));
        let min = self
            .rolling_min_observations
            .unwrap_or_else(|| (window * 4).div_ceil(5).max(3));
        (window, min)
    }

    /// The last date of the window: `window_end` or the valuation date.
    pub fn window_end_date(&self, valuation_date: NaiveDate) -> NaiveDate {
        self.window_end.map_or(valuation_date, |d| d.0)
    }

    /// The number of return periods in the window: the count given, or the periods inside the
    /// span or between `window_start` and the window end.
    pub fn lookback_periods(&self, valuation_date: NaiveDate) -> u32 {
        let end = self.window_end_date(valuation_date);
        // A span counts back from the last sample point, not from a date between two of them.
        let last_point =
            crate::market::sampling::last_point_on_or_before(self.frequency, self.weekday, end);
        let start = self
            .window_start
            .map(|d| d.0)
            .or_else(|| self.lookback.span_start(last_point));
        match (start, self.lookback) {
            (Some(start), _) => {
                crate::market::sampling::periods_between(self.frequency, self.weekday, start, end)
            }
            (None, Lookback::Periods(n)) => n,
            (None, Lookback::Span { .. }) => unreachable!("a span always has a start"),
        }
    }

    /// How many lags and leads of the market return the method needs.
    pub fn market_lags_and_leads(&self) -> (u32, u32) {
        match self.method {
            BetaMethod::Ols => (0, 0),
            BetaMethod::Dimson => (self.dimson_lags, self.dimson_leads),
            BetaMethod::ScholesWilliams => (1, 1),
        }
    }
}

impl Default for BetaSettings {
    fn default() -> Self {
        BetaSettings {
            frequency: Frequency::Monthly,
            lookback: Lookback::Periods(60),
            min_observations: 36,
            method: BetaMethod::Ols,
            adjustment: Adjustment::None,
            blume_weight: 0.67,
            std_errors: StdErrors::Classical,
            newey_west_lags: None,
            dimson_lags: 1,
            dimson_leads: 0,
            vasicek_prior_mean: None,
            vasicek_prior_variance: None,
            weekday: SampleWeekday::Wednesday,
            returns: ReturnType::Simple,
            max_stale_days: None,
            window_start: None,
            window_end: None,
            flag_observations_share: 0.8,
            flag_r_squared_floor: 0.05,
            flag_stale_share: 0.1,
            // hurdle's choice: a fifth of the returns unchanged is far above a traded share's.
            flag_zero_return_share: 0.2,
            flag_lag_p_value: 0.05,
            exclude_flags: Vec::new(),
            rolling_window: None,
            rolling_step: 1,
            rolling_min_observations: None,
        }
    }
}

/// `[leverage]`: unlevering, aggregating and relevering.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct LeverageSettings {
    pub formula: Formula,
    /// Which statistic of the peers' unlevered betas is relevered.
    pub aggregation: Aggregation,
    /// Where the debt betas come from: none (riskless debt), given, or the credit spread.
    pub debt_beta_source: DebtBetaSource,
    /// The debt beta of the subject and of every peer without its own, when the source is
    /// `given`.
    pub debt_beta: f64,
    /// Fraction of the unlevered betas cut from each end by `aggregation = "trimmed-mean"`.
    pub trim_fraction: f64,
    /// Aggregate the betas of the operations, βU / (1 − cash / (equity + debt)), instead of the
    /// unlevered betas (cash taken out at a beta of zero).
    pub operations_beta: bool,
    /// Gross debt, or debt net of cash, in every D/E (peers and the subject's own structure).
    pub debt_measure: DebtMeasure,
}

impl Default for LeverageSettings {
    fn default() -> Self {
        LeverageSettings {
            formula: Formula::Hamada,
            aggregation: Aggregation::Median,
            debt_beta_source: DebtBetaSource::None,
            debt_beta: 0.0,
            trim_fraction: 0.1,
            operations_beta: false,
            debt_measure: DebtMeasure::Gross,
        }
    }
}

/// `[target]`: the capital structure the beta is relevered to and the WACC is weighted by.
/// Exactly one of the two ratios is given.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TargetSettings {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub debt_to_equity: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub debt_to_capital: Option<f64>,
    /// Marginal tax rate of the subject, used for relevering and the debt tax shield.
    pub tax_rate: f64,
    /// Whether `tax_rate` is the marginal or the effective rate; printed in the memo.
    #[serde(default)]
    pub tax_rate_basis: TaxRateBasis,
    /// Where the target structure comes from (default: the explicit ratio).
    #[serde(default)]
    pub source: TargetSource,
    /// The subject's current market value of equity (source `subject`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub subject_equity_value: Option<f64>,
    /// The subject's current debt, same unit (source `subject`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub subject_debt: Option<f64>,
    /// The subject's cash, same unit (source `subject` with net debt).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub subject_cash: Option<f64>,
    /// Why this structure is the one expected over the cash flows' horizon, printed in the memo.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub justification: String,
}

/// `target.source`: where the target D/E comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum TargetSource {
    /// `target.debt_to_equity` or `target.debt_to_capital`.
    #[default]
    Explicit,
    /// The median of the peers' D/E (with `leverage.debt_measure`).
    PeerMedian,
    /// The subject's own current structure, `subject_debt / subject_equity_value`.
    Subject,
}

/// `[premiums]`: additions to the CAPM cost of equity (annual, decimal).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct Premiums {
    pub size: f64,
    pub country: f64,
    pub company_specific: f64,
    /// How the country risk premium enters the cost of equity.
    pub country_method: CountryMethod,
    /// The subject's exposure to the country's risk (1 = as exposed as the average firm there),
    /// for `country_method = "exposure"`.
    pub country_exposure: f64,
    /// Free-text reasons for each premium, printed in the memo.
    pub size_justification: String,
    pub country_justification: String,
    pub company_specific_justification: String,
}

impl Default for Premiums {
    fn default() -> Self {
        Premiums {
            size: 0.0,
            country: 0.0,
            company_specific: 0.0,
            country_method: CountryMethod::Flat,
            country_exposure: 1.0,
            size_justification: String::new(),
            country_justification: String::new(),
            company_specific_justification: String::new(),
        }
    }
}

/// `[preferred]`: preferred equity as a capital component with its own cost and weight.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct PreferredSettings {
    /// Share of total capital (preferred / (equity + debt + preferred + leases)).
    pub weight: f64,
    /// Cost of preferred equity (annual, decimal), e.g. dividend / price; not tax-deductible.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cost: Option<f64>,
    /// Where the weight and the cost come from, printed in the memo (since 0.16.0).
    #[serde(skip_serializing_if = "String::is_empty")]
    pub justification: String,
}

/// `[leases]`: lease liabilities as a debt-like capital component.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct LeaseSettings {
    /// Share of total capital.
    pub weight: f64,
    /// Pre-tax cost of the lease liabilities (the incremental borrowing rate); the subject's
    /// pre-tax cost of debt when absent. Deductible at the target tax rate.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cost_pre_tax: Option<f64>,
    /// Where the weight and the cost come from, printed in the memo (since 0.16.0).
    #[serde(skip_serializing_if = "String::is_empty")]
    pub justification: String,
}

/// `[conversion]`: the output currency and the expected inflation of both currencies.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ConversionSettings {
    /// Label of the output currency.
    pub currency: String,
    /// Expected annual inflation of the case currency (`case.currency`).
    pub inflation_case: f64,
    /// Expected annual inflation of the output currency.
    pub inflation_output: f64,
    /// Where the two expected inflation rates come from, printed in the memo (since 0.16.0).
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub justification: String,
}

/// One `[[peer]]` table: a comparable listed firm.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PeerSpec {
    pub name: String,
    /// A price file of its own; empty when `source` names a wide table instead.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub prices: String,
    /// A table under `[sources]`, and the column in it (instead of `prices`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub source: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub column: Option<String>,
    #[serde(default = "default_date_column")]
    pub date_column: String,
    #[serde(default = "default_price_column")]
    pub price_column: String,
    /// Dates whose move from the previous row beyond `sanity::JUMP_FACTOR` is real.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub accept_jumps: Vec<CaseDate>,
    /// Market value of equity, in any unit shared by all peers.
    pub equity_value: f64,
    /// Total (gross) debt, same unit.
    pub debt: f64,
    #[serde(default)]
    pub cash: f64,
    /// Marginal tax rate (decimal).
    pub tax_rate: f64,
    /// The peer's own debt beta (with `leverage.debt_beta_source` `given` or `credit-spread`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub debt_beta: Option<f64>,
    /// The peer's own pre-tax cost of debt, for Miles–Ezzell and the credit-spread debt beta;
    /// the subject's is used when absent.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cost_of_debt: Option<f64>,
    /// Leaves the peer out of the aggregation (it is still estimated and shown), for the reason
    /// given here.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub exclude: Option<String>,
}

fn default_index_name() -> String {
    "market index".to_string()
}
fn default_date_column() -> String {
    "date".to_string()
}
fn default_price_column() -> String {
    "price".to_string()
}
fn default_yield_column() -> String {
    "yield".to_string()
}

/// A calendar date in a case file: a TOML local date (`2026-09-30`) or the same as a string.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub struct CaseDate(pub NaiveDate);

impl fmt::Display for CaseDate {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.0.format("%Y-%m-%d"))
    }
}

impl Serialize for CaseDate {
    fn serialize<S: Serializer>(&self, serializer: S) -> std::result::Result<S::Ok, S::Error> {
        serializer.collect_str(self)
    }
}

impl<'de> Deserialize<'de> for CaseDate {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> std::result::Result<Self, D::Error> {
        use serde::de::Error as _;
        let text = match toml::Value::deserialize(deserializer)? {
            toml::Value::String(s) => s,
            toml::Value::Datetime(d) => d.to_string(),
            other => {
                return Err(D::Error::custom(format!(
                    "expected a date such as 2026-09-30, found {other}"
                )))
            }
        };
        NaiveDate::parse_from_str(&text, "%Y-%m-%d")
            .map(CaseDate)
            .map_err(|_| D::Error::custom(format!("expected a date YYYY-MM-DD, found `{text}`")))
    }
}

/// `[debt]`: the subject's cost of debt.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DebtSettings {
    /// Where the pre-tax cost of debt comes from (default: given).
    #[serde(default)]
    pub source: DebtSource,
    /// Pre-tax cost of debt (annual, decimal), e.g. a yield to maturity; required when the
    /// source is `given`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cost_pre_tax: Option<f64>,
    /// The subject's credit rating, looked up in `rating_table` (source `rating`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rating: Option<String>,
    /// CSV or TOML table of `rating, spread` (source `rating`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rating_table: Option<String>,
    /// Earnings before interest and taxes (source `coverage`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ebit: Option<f64>,
    /// Interest expense, same unit as `ebit` (source `coverage`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub interest_expense: Option<f64>,
    /// CSV or TOML table of `min_coverage, rating, spread` (source `coverage`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub coverage_table: Option<String>,
    /// Where the cost of debt or its rating comes from, printed in the memo (a case's words;
    /// no computation reads it).
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub justification: String,
}
