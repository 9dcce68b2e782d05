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
        let window = self.rolling_window.unwrap_or(lookback / 2);
        let min = self
            .rolling_min_observations
            .unwrap_or_else(|| (window * 4).div_ceil(5));
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
        let start = self
            .window_start
            .map(|d| d.0)
            .or_else(|| self.lookback.span_start(end));
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
}

impl Default for LeverageSettings {
    fn default() -> Self {
        LeverageSettings {
            formula: Formula::Hamada,
            aggregation: Aggregation::Median,
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
}

/// `[debt]`: the subject's cost of debt.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DebtSettings {
    /// Pre-tax cost of debt (annual, decimal), e.g. a yield to maturity.
    pub cost_pre_tax: f64,
}

/// `[premiums]`: additions to the CAPM cost of equity (annual, decimal).
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct Premiums {
    pub size: f64,
    pub country: f64,
    pub company_specific: f64,
}

impl Premiums {
    pub fn total(&self) -> f64 {
        self.size + self.country + self.company_specific
    }
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

    /// The target debt-to-equity ratio, whichever of the two ratios the case gives.
    pub fn target_debt_to_equity(&self) -> f64 {
        let target = &self.settings.target;
        match (target.debt_to_equity, target.debt_to_capital) {
            (Some(de), _) => de,
            (None, Some(dc)) => dc / (1.0 - dc),
            (None, None) => unreachable!("validate() requires one target ratio"),
        }
    }
}

/// Reads, overrides and validates a case file. `overrides` are `dotted.key=value` strings.
pub fn read_case(path: &Path, overrides: &[String]) -> Result<Case> {
    let bytes = std::fs::read(path).map_err(|source| Error::Io {
        path: path.to_path_buf(),
        action: "cannot read the case file",
        source,
    })?;
    let sha256 = crate::data::sha256_hex(&bytes);
    let text = String::from_utf8(bytes).map_err(|e| Error::Case {
        file: path.to_path_buf(),
        message: format!("not UTF-8 text (byte {})", e.utf8_error().valid_up_to()),
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
    fn rate(key: &str, value: f64, low: f64, high: f64) -> std::result::Result<(), String> {
        if value.is_finite() && value >= low && value < high {
            Ok(())
        } else {
            Err(format!("{key} = {value} is outside [{low}, {high})"))
        }
    }
    if case.case.title.trim().is_empty() {
        return Err("case.title is empty".into());
    }
    rate(
        "market.risk_free_rate",
        case.market.risk_free_rate,
        -0.5,
        1.0,
    )?;
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
            "{given} gives {lookback} {:?} return periods, fewer than beta.min_observations = \
             {}: no peer could pass",
            beta.frequency, beta.min_observations
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
    match (target.debt_to_equity, target.debt_to_capital) {
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
    rate("debt.cost_pre_tax", case.debt.cost_pre_tax, 0.0, 1.0)?;
    for (key, value) in [
        ("premiums.size", case.premiums.size),
        ("premiums.country", case.premiums.country),
        ("premiums.company_specific", case.premiums.company_specific),
    ] {
        rate(key, value, -0.5, 1.0)?;
    }
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
