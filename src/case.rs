//! The case file: every input of one cost-of-capital estimate, in TOML.
//!
//! A case is read in three steps: parse the TOML into typed values (unknown keys and wrong types
//! are reported with their line by the TOML parser), apply any `--set dotted.key=value`
//! overrides to the parsed table, then check every range that a type cannot express (tax rates in
//! [0, 1), positive equity, exactly one target ratio, …). The result is a [`Case`]: the validated
//! settings plus where they came from, so the receipt can name the file, its hash and the
//! overrides. README's "Case file reference" documents every key; keep the two in step.

use std::fmt;
use std::path::{Path, PathBuf};

use chrono::NaiveDate;
use serde::{Deserialize, Deserializer, Serialize, Serializer};

use crate::error::{Error, Result};
use crate::leverage::Formula;
use crate::regression::StdErrors;
use crate::sampling::{Frequency, ReturnType, SampleWeekday};
use crate::stats::Aggregation;

/// The whole case file, as written (after overrides), with every default made explicit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CaseFile {
    pub case: CaseInfo,
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
    pub metric: crate::audit::grid::Metric,
}

/// `[uncertainty]`: the Monte Carlo of the WACC.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct UncertaintySettings {
    pub draws: u32,
    pub seed: u64,
    /// Draw the equity risk premium uniformly from `[low, high]` as well.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub equity_risk_premium: Option<[f64; 2]>,
    /// Draw the risk-free rate uniformly from `[low, high]` as well.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub risk_free_rate: Option<[f64; 2]>,
}

impl Default for UncertaintySettings {
    fn default() -> Self {
        UncertaintySettings {
            draws: 10_000,
            seed: 1,
            equity_risk_premium: None,
            risk_free_rate: None,
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
}

/// `[market]`: the rates of the CAPM and the index the betas are measured against.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Market {
    /// Annual risk-free rate used in the cost of equity (decimal).
    pub risk_free_rate: f64,
    /// Annual equity risk premium over that rate (decimal).
    pub equity_risk_premium: f64,
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
    pub prices: String,
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
    pub yields: String,
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

/// A diagnostic warning on a peer's estimate.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PeerFlag {
    TooFewObservations,
    LowRSquared,
    StalePrices,
}

impl PeerFlag {
    /// The flag's name as the case file and `result.json` write it.
    pub fn name(self) -> &'static str {
        match self {
            PeerFlag::TooFewObservations => "too_few_observations",
            PeerFlag::LowRSquared => "low_r_squared",
            PeerFlag::StalePrices => "stale_prices",
        }
    }
}

/// `beta.lookback`: a count of return periods or a calendar span (`5y`, `18m`, `104w`, `250d`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Lookback {
    Periods(u32),
    Span { count: u32, unit: SpanUnit },
}

/// The unit of a lookback span.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SpanUnit {
    Years,
    Months,
    Weeks,
    Days,
}

impl fmt::Display for Lookback {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Lookback::Periods(n) => write!(f, "{n}"),
            Lookback::Span { count, unit } => {
                let u = match unit {
                    SpanUnit::Years => 'y',
                    SpanUnit::Months => 'm',
                    SpanUnit::Weeks => 'w',
                    SpanUnit::Days => 'd',
                };
                write!(f, "\"{count}{u}\"")
            }
        }
    }
}

impl Lookback {
    /// Parses a span such as `5y`, `104w`, `250d`, `18m`.
    pub fn parse_span(text: &str) -> std::result::Result<Lookback, String> {
        let text = text.trim();
        let bad = || {
            format!(
                "beta.lookback = \"{text}\" is not a count of periods or a span such as \"5y\", \
                 \"18m\", \"104w\" or \"250d\""
            )
        };
        let unit = match text.chars().last().ok_or_else(bad)? {
            'y' => SpanUnit::Years,
            'm' => SpanUnit::Months,
            'w' => SpanUnit::Weeks,
            'd' => SpanUnit::Days,
            _ => return Err(bad()),
        };
        let count: u32 = text[..text.len() - 1].parse().map_err(|_| bad())?;
        if count == 0 {
            return Err(bad());
        }
        // Two centuries of history is more than any price file holds; the bound keeps the date
        // arithmetic inside the calendar.
        let most = match unit {
            SpanUnit::Years => 200,
            SpanUnit::Months => 2_400,
            SpanUnit::Weeks => 10_400,
            SpanUnit::Days => 73_000,
        };
        if count > most {
            return Err(format!(
                "beta.lookback = \"{text}\" reaches back more than two centuries; at most {most}{}",
                &text[text.len() - 1..]
            ));
        }
        Ok(Lookback::Span { count, unit })
    }

    /// The calendar date `self` before `end` (a span), or `None` for a count of periods.
    /// Years and months keep the day of the month, clamped to the month's last day.
    pub fn span_start(&self, end: NaiveDate) -> Option<NaiveDate> {
        let Lookback::Span { count, unit } = *self else {
            return None;
        };
        Some(match unit {
            SpanUnit::Years => end
                .checked_sub_months(chrono::Months::new(12 * count))
                .expect("inside chrono's range"),
            SpanUnit::Months => end
                .checked_sub_months(chrono::Months::new(count))
                .expect("inside chrono's range"),
            SpanUnit::Weeks => end - chrono::Days::new(7 * u64::from(count)),
            SpanUnit::Days => end - chrono::Days::new(u64::from(count)),
        })
    }
}

impl Serialize for Lookback {
    fn serialize<S: Serializer>(&self, serializer: S) -> std::result::Result<S::Ok, S::Error> {
        match self {
            Lookback::Periods(n) => serializer.serialize_u32(*n),
            span => serializer.collect_str(&span.to_string().trim_matches('"')),
        }
    }
}

impl<'de> Deserialize<'de> for Lookback {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> std::result::Result<Self, D::Error> {
        use serde::de::Error as _;
        match toml::Value::deserialize(deserializer)? {
            toml::Value::Integer(n) => u32::try_from(n).map(Lookback::Periods).map_err(|_| {
                D::Error::custom(format!("beta.lookback = {n} is not a positive count"))
            }),
            toml::Value::String(s) => Lookback::parse_span(&s).map_err(D::Error::custom),
            other => Err(D::Error::custom(format!(
                "beta.lookback: expected a count such as 60 or a span such as \"5y\", found {other}"
            ))),
        }
    }
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
            crate::sampling::last_point_on_or_before(self.frequency, self.weekday, end);
        let start = self
            .window_start
            .map(|d| d.0)
            .or_else(|| self.lookback.span_start(last_point));
        match (start, self.lookback) {
            (Some(start), _) => {
                crate::sampling::periods_between(self.frequency, self.weekday, start, end)
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
            exclude_flags: Vec::new(),
            rolling_window: None,
            rolling_step: 1,
            rolling_min_observations: None,
        }
    }
}

/// The regression behind each raw beta.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum BetaMethod {
    /// Ordinary least squares of the asset's on the market's (excess) returns, with intercept.
    Ols,
    /// Dimson (1979) aggregated coefficients: the sum of the slopes on lagged, current and led
    /// market returns.
    Dimson,
    /// Scholes and Williams (1977): lag, current and lead slopes over 1 + 2ρ(market).
    ScholesWilliams,
}

/// An adjustment applied to the raw beta before unlevering.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Adjustment {
    None,
    /// Blume (1971, 1975): 0.67 · raw + 0.33.
    Blume,
    /// Vasicek (1973): Bayesian shrinkage toward a prior by each peer's sampling variance.
    Vasicek,
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
    /// Aggregate the cash-corrected unlevered betas βU / (1 − cash / (equity + debt)).
    pub cash_correction: bool,
    /// Gross debt, or debt net of cash, in every D/E (peers and the subject's own structure).
    pub debt_measure: DebtMeasure,
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

impl Default for LeverageSettings {
    fn default() -> Self {
        LeverageSettings {
            formula: Formula::Hamada,
            aggregation: Aggregation::Median,
            debt_beta_source: DebtBetaSource::None,
            debt_beta: 0.0,
            trim_fraction: 0.1,
            cash_correction: false,
            debt_measure: DebtMeasure::Gross,
        }
    }
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
}

/// `target.tax_rate_basis`: which tax rate the shield is computed with.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum TaxRateBasis {
    /// The statutory rate on the next unit of taxable income (common practice for the shield).
    #[default]
    Marginal,
    /// Taxes paid over pre-tax income.
    Effective,
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
}

/// `debt.source`: where the pre-tax cost of debt comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum DebtSource {
    /// `debt.cost_pre_tax`, e.g. a yield to maturity.
    #[default]
    Given,
    /// rf + the spread of `debt.rating` in `debt.rating_table`.
    Rating,
    /// rf + the spread of the synthetic rating from EBIT / interest expense in
    /// `debt.coverage_table`.
    Coverage,
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
    /// The subject's exposure λ to country risk, for `country_method = "lambda"`.
    pub country_lambda: f64,
    /// Free-text reasons for each premium, printed in the memo.
    pub size_justification: String,
    pub country_justification: String,
    pub company_specific_justification: String,
}

/// `premiums.country_method`: how the country risk premium (CRP) enters the cost of equity.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum CountryMethod {
    /// + CRP.
    #[default]
    Added,
    /// + λ·CRP, λ the subject's exposure (`country_lambda`).
    Lambda,
    /// + βL·CRP, scaled by the relevered beta.
    Beta,
}

impl Default for Premiums {
    fn default() -> Self {
        Premiums {
            size: 0.0,
            country: 0.0,
            company_specific: 0.0,
            country_method: CountryMethod::Added,
            country_lambda: 1.0,
            size_justification: String::new(),
            country_justification: String::new(),
            company_specific_justification: String::new(),
        }
    }
}

impl Premiums {
    /// The premiums as written, summed (the country premium unscaled).
    pub fn total(&self) -> f64 {
        self.size + self.country + self.company_specific
    }

    /// The country premium as it enters the cost of equity with relevered beta `beta`: CRP,
    /// λ·CRP, or βL·CRP.
    pub fn country_applied(&self, beta: f64) -> f64 {
        match self.country_method {
            CountryMethod::Added => self.country,
            CountryMethod::Lambda => self.country_lambda * self.country,
            CountryMethod::Beta => beta * self.country,
        }
    }

    /// The premiums added to the CAPM cost of equity: size + country as applied +
    /// company-specific.
    pub fn total_applied(&self, beta: f64) -> f64 {
        self.size + self.country_applied(beta) + self.company_specific
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
}

/// One `[[peer]]` table: a comparable listed firm.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PeerSpec {
    pub name: String,
    pub prices: String,
    #[serde(default = "default_date_column")]
    pub date_column: String,
    #[serde(default = "default_price_column")]
    pub price_column: String,
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
    /// Dates whose move from the previous row beyond `sanity::JUMP_FACTOR` is real.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub accept_jumps: Vec<CaseDate>,
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

/// A validated case and where it came from.
#[derive(Debug, Clone)]
pub struct Case {
    pub settings: CaseFile,
    /// The case file's path as given.
    pub path: PathBuf,
    /// SHA-256 of the case file's bytes (before overrides).
    pub sha256: String,
    /// The `--set` assignments applied, in order.
    pub overrides: Vec<String>,
}

impl Case {
    /// Resolves a path written in the case file against the case file's folder.
    pub fn resolve(&self, written: &str) -> PathBuf {
        let dir = self.path.parent().unwrap_or_else(|| Path::new("."));
        dir.join(written)
    }
}

impl CaseFile {
    /// The target debt-to-equity ratio, whichever of the two ratios the case gives, or from
    /// `target.source`. For `peer-median` this is the median over every peer in the case file;
    /// the valuation takes it over the peers it aggregates (`valuation::aggregate_over_peers`).
    pub fn target_debt_to_equity(&self) -> f64 {
        let target = &self.target;
        let measure = self.leverage.debt_measure;
        match target.source {
            TargetSource::Explicit => {}
            TargetSource::PeerMedian => {
                let ratios: Vec<f64> = self
                    .peers
                    .iter()
                    .map(|p| measure.debt(p.debt, p.cash) / p.equity_value)
                    .collect();
                return crate::stats::dispersion(&ratios).median;
            }
            TargetSource::Subject => {
                let debt = measure.debt(
                    target.subject_debt.unwrap_or(0.0),
                    target.subject_cash.unwrap_or(0.0),
                );
                return debt / target.subject_equity_value.expect("validated");
            }
        }
        match (target.debt_to_equity, target.debt_to_capital) {
            (Some(de), _) => de,
            (None, Some(dc)) => dc / (1.0 - dc),
            (None, None) => unreachable!("validate() requires one target ratio"),
        }
    }
}

/// A copy of `case` with more `dotted.key=value` overrides applied to its settings, validated
/// like a case read from disk. The sensitivity grid builds each cell this way, so a cell is the
/// same computation as a run with the same `--set` values.
pub fn with_overrides(case: &Case, extra: &[String]) -> Result<Case> {
    let case_error = |message: String| Error::Case {
        file: case.path.clone(),
        message,
    };
    let toml::Value::Table(mut table) = toml::Value::try_from(&case.settings)
        .map_err(|e| case_error(format!("cannot re-serialise the case: {e}")))?
    else {
        unreachable!("a struct serialises to a table");
    };
    for assignment in extra {
        apply_override(&mut table, assignment)?;
    }
    let settings = CaseFile::deserialize(toml::Value::Table(table))
        .map_err(|e| case_error(format!("with {}: {}", extra.join(", "), e.message())))?;
    validate(&settings).map_err(case_error)?;
    let mut overrides = case.overrides.clone();
    overrides.extend(extra.iter().cloned());
    Ok(Case {
        settings,
        path: case.path.clone(),
        sha256: case.sha256.clone(),
        overrides,
    })
}

/// Reads, overrides and validates a case file. `overrides` are `dotted.key=value` strings.
pub fn read_case(path: &Path, overrides: &[String]) -> Result<Case> {
    let bytes = std::fs::read(path).map_err(|source| Error::Io {
        path: path.to_path_buf(),
        action: "cannot read the case file",
        source,
    })?;
    let sha256 = crate::data::sha256_hex(&bytes);
    let text = String::from_utf8(bytes).map_err(|e| {
        let valid = &e.as_bytes()[..e.utf8_error().valid_up_to()];
        let line = valid.iter().filter(|&&b| b == b'\n').count() + 1;
        Error::Case {
            file: path.to_path_buf(),
            message: format!("line {line}: not UTF-8 text; save the case file as UTF-8"),
        }
    })?;
    crate::sanity::check_case_text(&text).map_err(|message| Error::Case {
        file: path.to_path_buf(),
        message,
    })?;
    let settings = parse_case(path, &text, overrides)?;
    validate(&settings).map_err(|message| Error::Case {
        file: path.to_path_buf(),
        message,
    })?;
    Ok(Case {
        settings,
        path: path.to_path_buf(),
        sha256,
        overrides: overrides.to_vec(),
    })
}

fn parse_case(path: &Path, text: &str, overrides: &[String]) -> Result<CaseFile> {
    let case_error = |message: String| Error::Case {
        file: path.to_path_buf(),
        message,
    };
    // Parsing straight from text first keeps the parser's line and column in every message.
    let parsed: CaseFile = toml::from_str(text).map_err(|e| case_error(e.to_string()))?;
    if overrides.is_empty() {
        return Ok(parsed);
    }
    let mut table: toml::Table = toml::from_str(text).map_err(|e| case_error(e.to_string()))?;
    for assignment in overrides {
        apply_override(&mut table, assignment)?;
    }
    CaseFile::deserialize(toml::Value::Table(table)).map_err(|e| {
        case_error(format!(
            "after applying --set {}: {}",
            overrides.join(", --set "),
            e.message()
        ))
    })
}

/// Applies one `dotted.key=value` assignment to a parsed case table.
///
/// The value is read as a TOML value (`0.05`, `true`, `2026-06-30`, `"text"`); anything that is
/// not valid TOML is taken as a plain string, so `--set beta.adjustment=blume` works unquoted.
/// Inside an array of tables (`peer`), a segment is either a 0-based index or a peer's `name`.
pub fn apply_override(table: &mut toml::Table, assignment: &str) -> Result<()> {
    let fail = |message: String| Error::Override {
        assignment: assignment.to_string(),
        message,
    };
    let (key, raw) = assignment
        .split_once('=')
        .ok_or_else(|| fail("expected KEY=VALUE, e.g. market.equity_risk_premium=0.05".into()))?;
    let key = key.trim();
    let segments: Vec<&str> = key.split('.').map(str::trim).collect();
    if segments.iter().any(|s| s.is_empty()) {
        return Err(fail(format!("`{key}` is not a dotted key path")));
    }
    let value = parse_override_value(raw.trim());
    let (last, parents) = segments
        .split_last()
        .expect("split yields at least one segment");
    let mut current = table;
    for (depth, segment) in parents.iter().enumerate() {
        let here = segments[..=depth].join(".");
        let entry = current
            .entry(segment.to_string())
            .or_insert_with(|| toml::Value::Table(toml::Table::new()));
        current = match entry {
            toml::Value::Table(t) => t,
            toml::Value::Array(items) => {
                return descend_array(items, &segments[depth + 1..], value, &here).map_err(fail);
            }
            other => {
                return Err(fail(format!(
                    "`{here}` holds the value {other}, not a table of keys"
                )))
            }
        };
    }
    current.insert(last.to_string(), value);
    Ok(())
}

/// Continues an override inside an array of tables: the first segment picks the element.
fn descend_array(
    items: &mut [toml::Value],
    rest: &[&str],
    value: toml::Value,
    array_key: &str,
) -> std::result::Result<(), String> {
    let (selector, keys) = rest
        .split_first()
        .ok_or_else(|| format!("`{array_key}` is a list; name an element and a key"))?;
    let position = match selector.parse::<usize>() {
        Ok(i) if i < items.len() => i,
        Ok(i) => {
            return Err(format!(
                "`{array_key}` has {} entries (0 to {}); there is no entry {i}",
                items.len(),
                items.len().saturating_sub(1)
            ))
        }
        Err(_) => items
            .iter()
            .position(|item| item.get("name").and_then(|n| n.as_str()) == Some(*selector))
            .ok_or_else(|| format!("no `{array_key}` entry has name = \"{selector}\""))?,
    };
    let toml::Value::Table(element) = &mut items[position] else {
        return Err(format!("`{array_key}` entry {position} is not a table"));
    };
    let (last, parents) = keys
        .split_last()
        .ok_or_else(|| format!("name a key inside `{array_key}.{selector}`"))?;
    let mut current = element;
    for segment in parents {
        current = match current
            .entry(segment.to_string())
            .or_insert_with(|| toml::Value::Table(toml::Table::new()))
        {
            toml::Value::Table(t) => t,
            other => return Err(format!("`{segment}` holds {other}, not a table of keys")),
        };
    }
    current.insert(last.to_string(), value);
    Ok(())
}

fn parse_override_value(raw: &str) -> toml::Value {
    toml::from_str::<toml::Table>(&format!("v = {raw}"))
        .ok()
        .and_then(|mut t| t.remove("v"))
        .unwrap_or_else(|| toml::Value::String(raw.to_string()))
}

/// `key = value` must be finite and in [low, high).
fn rate(key: &str, value: f64, low: f64, high: f64) -> std::result::Result<(), String> {
    if value.is_finite() && value >= low && value < high {
        Ok(())
    } else {
        // A rate typed as a percentage is the likeliest reason for a value of 1 or more.
        let hint = if value >= 1.0 && high <= 1.0 {
            format!(
                "; rates are decimals ({} for {}%)",
                // Rounded to 12 decimals so that 5.8 reads 0.058, not 0.057999999999999996.
                crate::format::compact((value / 100.0 * 1e12).round() / 1e12),
                crate::format::compact(value)
            )
        } else {
            String::new()
        };
        let value = crate::format::compact(value);
        Err(format!("{key} = {value} is outside [{low}, {high}){hint}"))
    }
}

/// Range checks of the estimator options in `[beta]`, against the window length `lookback`
/// (the most observations a peer can have).
fn validate_beta_options(beta: &BetaSettings, lookback: u32) -> std::result::Result<(), String> {
    let (lags, leads) = beta.market_lags_and_leads();
    // Each shifted market column costs a coefficient and an end period; beyond N/4 of them the
    // regression has too little left to estimate anything (a common practice bound).
    if 4 * (lags + leads) >= lookback {
        return Err(format!(
            "beta.dimson_lags + beta.dimson_leads = {} is at least beta.lookback / 4 = {}: too \
             many shifted market columns for {} periods",
            lags + leads,
            f64::from(lookback) / 4.0,
            lookback
        ));
    }
    if beta.method == BetaMethod::Dimson && lags + leads == 0 {
        return Err(
            "beta.method = \"dimson\" with beta.dimson_lags = 0 and beta.dimson_leads = 0 is \
             plain OLS; use beta.method = \"ols\" or give at least one lag"
                .into(),
        );
    }
    if let Some(l) = beta.newey_west_lags {
        if 4 * l >= lookback {
            return Err(format!(
                "beta.newey_west_lags = {l} is at least beta.lookback / 4 = {}",
                f64::from(lookback) / 4.0
            ));
        }
    }
    match (beta.vasicek_prior_mean, beta.vasicek_prior_variance) {
        (Some(m), Some(v)) => {
            if !m.is_finite() {
                return Err(format!("beta.vasicek_prior_mean = {m} is not a number"));
            }
            if !(v.is_finite() && v > 0.0) {
                return Err(format!(
                    "beta.vasicek_prior_variance = {v} must be a positive number"
                ));
            }
        }
        (None, None) => {}
        _ => {
            return Err(
                "give both beta.vasicek_prior_mean and beta.vasicek_prior_variance, or neither \
                 (then the cross-section of the peers is the prior)"
                    .into(),
            )
        }
    }
    Ok(())
}

/// Range checks a type cannot express. The message names the key and the offending value.
pub fn validate(case: &CaseFile) -> std::result::Result<(), String> {
    crate::sanity::check_case(case)?;
    if case.case.title.trim().is_empty() {
        return Err("case.title is empty".into());
    }
    rate(
        "market.risk_free_rate",
        case.market.risk_free_rate,
        -0.5,
        1.0,
    )?;
    if case.leverage.debt_beta_source == DebtBetaSource::CreditSpread
        && case.market.equity_risk_premium <= 0.0
    {
        return Err(format!(
            "market.equity_risk_premium = {} with leverage.debt_beta_source = \"credit-spread\": \
             the debt beta (Kd - rf) / ERP needs a positive equity risk premium",
            case.market.equity_risk_premium
        ));
    }
    rate(
        "market.equity_risk_premium",
        case.market.equity_risk_premium,
        -0.5,
        1.0,
    )?;
    let beta = &case.beta;
    if beta.min_observations < 3 {
        return Err(format!(
            "beta.min_observations = {} is below 3: a regression with an intercept needs at \
             least one degree of freedom left",
            beta.min_observations
        ));
    }
    let valuation_date = case.case.valuation_date.0;
    if let Some(end) = beta.window_end {
        if end.0 > valuation_date {
            return Err(format!(
                "beta.window_end = {end} is after case.valuation_date = {valuation_date}: no \
                 data later than the valuation date may be used"
            ));
        }
    }
    if let Lookback::Periods(n) = beta.lookback {
        // 100 000 periods is four centuries of daily data; beyond it the calendar overflows.
        if n > 100_000 {
            return Err(format!(
                "beta.lookback = {n} periods is more than any price history holds; at most 100000"
            ));
        }
    }
    if let (Some(start), end) = (beta.window_start, beta.window_end_date(valuation_date)) {
        if start.0 >= end {
            return Err(format!(
                "beta.window_start = {start} is not before the window end {end}"
            ));
        }
    }
    let lookback = beta.lookback_periods(valuation_date);
    if lookback < beta.min_observations {
        let given = match beta.window_start {
            Some(start) => format!("beta.window_start = {start}"),
            None => format!("beta.lookback = {}", beta.lookback),
        };
        return Err(format!(
            "{given} gives {lookback} {} return periods, fewer than beta.min_observations = \
             {}: no peer could pass",
            crate::format::label(&beta.frequency),
            beta.min_observations
        ));
    }
    if let Some(0) = beta.max_stale_days {
        if beta.frequency != Frequency::Daily {
            return Err(
                "beta.max_stale_days = 0 would drop every period whose sample is not dated on \
                 its sample point; give at least 1"
                    .into(),
            );
        }
    }
    validate_beta_options(beta, lookback)?;
    let (window, min) = beta.rolling(lookback);
    if window > lookback || window < 3 {
        return Err(format!(
            "beta.rolling_window = {window} must lie between 3 and the window's {lookback} periods"
        ));
    }
    if min < 3 || min > window {
        return Err(format!(
            "beta.rolling_min_observations = {min} must lie between 3 and beta.rolling_window = \
             {window}"
        ));
    }
    if beta.rolling_step == 0 {
        return Err("beta.rolling_step = 0: give at least 1 period".into());
    }
    for (key, value) in [
        ("beta.flag_observations_share", beta.flag_observations_share),
        ("beta.flag_r_squared_floor", beta.flag_r_squared_floor),
        ("beta.flag_stale_share", beta.flag_stale_share),
    ] {
        if !(value.is_finite() && (0.0..=1.0).contains(&value)) {
            return Err(format!("{key} = {value} is outside [0, 1]"));
        }
    }
    let target = &case.target;
    validate_structure(case)?;
    match (target.debt_to_equity, target.debt_to_capital) {
        (None, None) if target.source != TargetSource::Explicit => {}
        (Some(_), Some(_)) => {
            return Err(
                "target.debt_to_equity and target.debt_to_capital are both given; keep one".into(),
            )
        }
        (None, None) => {
            return Err("[target] needs debt_to_equity or debt_to_capital".into());
        }
        (Some(de), None) => {
            if !(de.is_finite() && de >= 0.0) {
                return Err(format!(
                    "target.debt_to_equity = {de} is negative or not a number"
                ));
            }
        }
        (None, Some(dc)) => rate("target.debt_to_capital", dc, 0.0, 1.0)?,
    }
    rate("target.tax_rate", target.tax_rate, 0.0, 1.0)?;
    validate_debt(case)?;
    validate_components(case)?;
    if let Some(conversion) = &case.conversion {
        for (key, value) in [
            ("conversion.inflation_case", conversion.inflation_case),
            ("conversion.inflation_output", conversion.inflation_output),
        ] {
            if !(value.is_finite() && value > -1.0) {
                return Err(format!(
                    "{key} = {value} is at or below -100% (or not a number); the Fisher relation \
                     divides by 1 + inflation, which must be positive"
                ));
            }
            rate(key, value, -1.0, 10.0)?;
        }
        if conversion.currency.trim().is_empty() {
            return Err("conversion.currency is empty".into());
        }
    }
    for (key, value) in [
        ("premiums.size", case.premiums.size),
        ("premiums.country", case.premiums.country),
        ("premiums.company_specific", case.premiums.company_specific),
    ] {
        rate(key, value, -0.5, 1.0)?;
    }
    let u = &case.uncertainty;
    if u.draws < 100 {
        return Err(format!(
            "uncertainty.draws = {} is too few for percentiles; use at least 100",
            u.draws
        ));
    }
    for (key, range) in [
        ("uncertainty.equity_risk_premium", u.equity_risk_premium),
        ("uncertainty.risk_free_rate", u.risk_free_rate),
    ] {
        if let Some([low, high]) = range {
            if !(low.is_finite() && high.is_finite() && low <= high) {
                return Err(format!(
                    "{key} = [{low}, {high}] is not a range [low, high] with low <= high"
                ));
            }
        }
    }
    rate(
        "premiums.country_lambda",
        case.premiums.country_lambda,
        0.0,
        5.0,
    )?;
    if case.peers.is_empty() {
        return Err("the case has no [[peer]] tables".into());
    }
    for (i, peer) in case.peers.iter().enumerate() {
        let key = |field: &str| format!("peer.{i}.{field} (peer \"{}\")", peer.name);
        if peer.name.trim().is_empty() {
            return Err(format!("peer.{i}.name is empty"));
        }
        if let Some(j) = case.peers[..i].iter().position(|p| p.name == peer.name) {
            return Err(format!(
                "peer.{i}.name = \"{}\" repeats peer.{j}.name; peer names must be unique",
                peer.name
            ));
        }
        if !(peer.equity_value.is_finite() && peer.equity_value > 0.0) {
            return Err(format!(
                "{} = {} must be positive",
                key("equity_value"),
                peer.equity_value
            ));
        }
        for (field, value) in [("debt", peer.debt), ("cash", peer.cash)] {
            if !(value.is_finite() && value >= 0.0) {
                return Err(format!("{} = {value} is negative", key(field)));
            }
        }
        rate(&key("tax_rate"), peer.tax_rate, 0.0, 1.0)?;
        if let Some(kd) = peer.cost_of_debt {
            rate(&key("cost_of_debt"), kd, 0.0, 1.0)?;
        }
        if let Some(debt_beta) = peer.debt_beta {
            if case.leverage.debt_beta_source == DebtBetaSource::None {
                return Err(format!(
                    "{} = {debt_beta} is given but leverage.debt_beta_source = \"none\" \
                     (riskless debt); set it to \"given\" or drop the peer's debt_beta",
                    key("debt_beta")
                ));
            }
            rate(&key("debt_beta"), debt_beta, -1.0, 3.0)?;
        }
        if peer.exclude.as_deref().is_some_and(|r| r.trim().is_empty()) {
            return Err(format!(
                "{} is empty: state the reason the peer is excluded",
                key("exclude")
            ));
        }
    }
    if case.peers.iter().all(|p| p.exclude.is_some()) {
        return Err("every [[peer]] has `exclude` set: no peer is left to aggregate".into());
    }
    Ok(())
}

/// `[preferred]` and `[leases]`: weights in [0, 1) that leave room for equity and debt, and a cost
/// for preferred equity that has a weight.
fn validate_components(case: &CaseFile) -> std::result::Result<(), String> {
    let (preferred, leases) = (&case.preferred, &case.leases);
    rate("preferred.weight", preferred.weight, 0.0, 1.0)?;
    rate("leases.weight", leases.weight, 0.0, 1.0)?;
    let other = preferred.weight + leases.weight;
    if other >= 1.0 {
        return Err(format!(
            "preferred.weight + leases.weight = {other} leaves no room for equity and debt; the \
             two must sum to less than 1"
        ));
    }
    match preferred.cost {
        Some(cost) => rate("preferred.cost", cost, 0.0, 1.0)?,
        None if preferred.weight > 0.0 => {
            return Err(format!(
                "preferred.cost is missing: preferred equity with preferred.weight = {} needs its \
                 own cost (e.g. its dividend / price)",
                preferred.weight
            ))
        }
        None => {}
    }
    if let Some(cost) = leases.cost_pre_tax {
        rate("leases.cost_pre_tax", cost, 0.0, 1.0)?;
    }
    Ok(())
}

/// `[leverage]` aggregation and cash keys, and the keys of the target sources.
fn validate_structure(case: &CaseFile) -> std::result::Result<(), String> {
    let leverage = &case.leverage;
    rate("leverage.trim_fraction", leverage.trim_fraction, 0.0, 0.5)?;
    if leverage.cash_correction && leverage.debt_measure == DebtMeasure::Net {
        return Err(
            "leverage.cash_correction = true with leverage.debt_measure = \"net\" would \
                    count cash twice; use one of them"
                .into(),
        );
    }
    let target = &case.target;
    if target.source == TargetSource::Subject {
        match target.subject_equity_value {
            Some(e) if e.is_finite() && e > 0.0 => {}
            other => {
                return Err(format!(
                    "target.subject_equity_value = {} must be given and positive when \
                     target.source = \"subject\"",
                    other.map_or("(missing)".to_string(), |e| e.to_string())
                ))
            }
        }
        for (key, value) in [
            ("target.subject_debt", target.subject_debt),
            ("target.subject_cash", target.subject_cash),
        ] {
            if let Some(v) = value {
                if !(v.is_finite() && v >= 0.0) {
                    return Err(format!("{key} = {v} is negative"));
                }
            }
        }
        if target.subject_debt.is_none() {
            return Err("target.subject_debt is required when target.source = \"subject\"".into());
        }
    }
    for (i, peer) in case.peers.iter().enumerate() {
        let net = DebtMeasure::Net.debt(peer.debt, peer.cash);
        if leverage.debt_measure == DebtMeasure::Net && net <= -peer.equity_value {
            return Err(format!(
                "peer.{i} (peer \"{}\"): net debt {net} (debt − cash) is at or below minus its \
                 equity_value {}, a net D/E at or below −1 that no leverage formula can unlever",
                peer.name, peer.equity_value
            ));
        }
        if leverage.cash_correction && peer.cash >= peer.equity_value + peer.debt {
            return Err(format!(
                "peer.{i}.cash = {} (peer \"{}\") is not below equity_value + debt = {}, so the \
                 cash correction 1 / (1 − cash / (equity + debt)) is undefined",
                peer.cash,
                peer.name,
                peer.equity_value + peer.debt
            ));
        }
    }
    Ok(())
}

/// The `[debt]` keys each cost-of-debt source needs, and the leverage keys that go with them.
fn validate_debt(case: &CaseFile) -> std::result::Result<(), String> {
    let debt = &case.debt;
    let need = |key: &str, present: bool| {
        if present {
            Ok(())
        } else {
            Err(format!(
                "debt.{key} is required when debt.source = \"{}\"",
                match debt.source {
                    DebtSource::Given => "given",
                    DebtSource::Rating => "rating",
                    DebtSource::Coverage => "coverage",
                }
            ))
        }
    };
    if let Some(kd) = debt.cost_pre_tax {
        rate("debt.cost_pre_tax", kd, 0.0, 1.0)?;
    }
    match debt.source {
        DebtSource::Given => need("cost_pre_tax", debt.cost_pre_tax.is_some())?,
        DebtSource::Rating => {
            need("rating", debt.rating.is_some())?;
            need("rating_table", debt.rating_table.is_some())?;
        }
        DebtSource::Coverage => {
            need("ebit", debt.ebit.is_some())?;
            need("interest_expense", debt.interest_expense.is_some())?;
            need("coverage_table", debt.coverage_table.is_some())?;
            let (ebit, interest) = (
                debt.ebit.unwrap_or(0.0),
                debt.interest_expense.unwrap_or(0.0),
            );
            if !(interest.is_finite() && interest > 0.0) {
                return Err(format!(
                    "debt.interest_expense = {interest} must be positive to compute interest \
                     coverage (EBIT / interest expense)"
                ));
            }
            if !ebit.is_finite() || ebit < 0.0 {
                return Err(format!(
                    "debt.ebit = {ebit} gives a negative interest coverage {} (EBIT / interest \
                     expense); a synthetic rating from coverage is not meaningful for a loss, so \
                     give the cost of debt (debt.source = \"given\") or a rating",
                    ebit / interest
                ));
            }
        }
    }
    let leverage = &case.leverage;
    if leverage.debt_beta_source == DebtBetaSource::Given {
        rate("leverage.debt_beta", leverage.debt_beta, -1.0, 3.0)?;
    } else if leverage.debt_beta != 0.0 {
        return Err(format!(
            "leverage.debt_beta = {} is given but leverage.debt_beta_source = {}; set \
             leverage.debt_beta_source = \"given\" for it to be used",
            leverage.debt_beta,
            if leverage.debt_beta_source == DebtBetaSource::None {
                "\"none\" (riskless debt)"
            } else {
                "\"credit-spread\""
            }
        ));
    }
    Ok(())
}
