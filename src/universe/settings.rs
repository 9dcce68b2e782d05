//! The universe file: the TOML that drives `hurdle universe`, read, overridden and validated.
//!
//! It shares the case file's `[market.index]`, `[market.risk_free_series]`, `[beta]` and
//! `[leverage]` sections — the same types, keys, defaults and range checks, so a setting means
//! the same in both — and adds `[universe]`, `[panel]` and `[attributes]`. `--set` overrides use
//! the case's dotted-key rule. README's "Universe file reference" documents every key; the key
//! paths there are relied on by users' scripts.

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::beta::EstimatorSpec;
use crate::capital::leverage::Formula;
use crate::case::{
    self, BetaSettings, CaseDate, DebtBetaSource, IndexSpec, LeverageSettings, YieldSpec,
};
use crate::error::{Error, Result};
use crate::estimate::EstimationSpec;
use crate::panel::attributes::AttributeColumns;
use crate::panel::{PanelColumns, PanelLayout, TableFormat};

/// The whole universe file, as written (after overrides), with every default made explicit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UniverseFile {
    pub universe: UniverseInfo,
    /// Wide price tables the index or the risk-free series may name by `source` and `column`,
    /// as in a case (found by review: a case's `[market.index]` written that way was refused).
    #[serde(default, skip_serializing_if = "std::collections::BTreeMap::is_empty")]
    pub sources: case::sources::Sources,
    pub market: UniverseMarket,
    #[serde(default)]
    pub beta: BetaSettings,
    #[serde(default)]
    pub leverage: LeverageSettings,
    pub panel: PanelSpec,
    pub attributes: AttributesSpec,
}

/// `[universe]`: what the table is for and where its window ends.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UniverseInfo {
    #[serde(default)]
    pub title: String,
    /// The return window ends here (or at `beta.window_end`), as in a case.
    pub valuation_date: CaseDate,
    /// Also write every security's rolling betas (`rolling.csv`, `rolling.parquet`).
    #[serde(default)]
    pub rolling: bool,
    /// Security ids of a peer set to set beside its industry (an analyst's peers, for a
    /// reviewer): its figures by the industry table's rules, in `summary.md` and `result.json`.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub peer_set: Vec<String>,
}

/// `[market]` of a universe: the index and the optional risk-free series, as in a case. The
/// case's rates are not taken: a universe estimates betas, not a cost of capital.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UniverseMarket {
    pub index: IndexSpec,
    #[serde(default)]
    pub risk_free_series: Option<YieldSpec>,
}

/// `[panel]`: the file of every security's prices.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PanelSpec {
    /// CSV or Parquet, by extension.
    pub prices: String,
    #[serde(default = "default_layout")]
    pub layout: PanelLayout,
    #[serde(default = "default_date_column")]
    pub date_column: String,
    /// Long layout only.
    #[serde(default = "default_security_column")]
    pub security_column: String,
    /// Long layout only.
    #[serde(default = "default_price_column")]
    pub price_column: String,
}

/// `[attributes]`: one row per security with its industry and capital structure.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AttributesSpec {
    /// CSV or Parquet, by extension.
    pub file: String,
    #[serde(default = "default_security_column")]
    pub security_column: String,
    /// Any label; the table may hold several classifications, this one groups.
    #[serde(default = "default_industry_column")]
    pub industry_column: String,
    #[serde(default = "default_equity_value_column")]
    pub equity_value_column: String,
    #[serde(default = "default_debt_column")]
    pub debt_column: String,
    /// Optional: needed by `leverage.operations_beta` and `leverage.debt_measure = "net"`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cash_column: Option<String>,
    #[serde(default = "default_tax_rate_column")]
    pub tax_rate_column: String,
}

fn default_layout() -> PanelLayout {
    PanelLayout::Long
}
fn default_date_column() -> String {
    "date".into()
}
fn default_security_column() -> String {
    "security".into()
}
fn default_price_column() -> String {
    "price".into()
}
fn default_industry_column() -> String {
    "industry".into()
}
fn default_equity_value_column() -> String {
    "equity_value".into()
}
fn default_debt_column() -> String {
    "debt".into()
}
fn default_tax_rate_column() -> String {
    "tax_rate".into()
}

impl UniverseFile {
    /// The estimation spec a case with this file's `[beta]` and valuation date would build
    /// (through the case's own conversion, so the two cannot drift apart).
    pub fn estimation_spec(&self) -> EstimationSpec {
        case::specs::estimation(&stand_in_case(self))
    }

    /// The estimator of `[beta]`.
    pub fn estimator_spec(&self) -> EstimatorSpec {
        case::specs::estimator(&self.beta)
    }
}

impl PanelSpec {
    /// The panel reader's column spec.
    pub fn columns(&self) -> PanelColumns {
        PanelColumns {
            layout: self.layout,
            date_column: self.date_column.clone(),
            security_column: self.security_column.clone(),
            price_column: self.price_column.clone(),
        }
    }
}

impl AttributesSpec {
    /// The attributes reader's column spec.
    pub fn columns(&self) -> AttributeColumns {
        AttributeColumns {
            security: self.security_column.clone(),
            industry: self.industry_column.clone(),
            equity_value: self.equity_value_column.clone(),
            debt: self.debt_column.clone(),
            cash: self.cash_column.clone(),
            tax_rate: self.tax_rate_column.clone(),
        }
    }
}

/// A validated universe file and where it came from.
#[derive(Debug, Clone)]
pub struct Universe {
    pub settings: UniverseFile,
    /// The universe file's path as given.
    pub path: PathBuf,
    /// SHA-256 of the file's bytes (before overrides).
    pub sha256: String,
    /// The `--set` assignments applied, in order.
    pub overrides: Vec<String>,
}

impl Universe {
    /// Resolves a path written in the universe file against the file's folder.
    pub fn resolve(&self, written: &str) -> PathBuf {
        let dir = self.path.parent().unwrap_or_else(|| Path::new("."));
        dir.join(written)
    }

    /// Every file a run reads, with the key that names it, so no output can replace one.
    pub fn files_read(&self) -> Vec<case::FileRead> {
        let s = &self.settings;
        let mut files = vec![
            (self.path.clone(), "the universe file".to_string()),
            (self.resolve(&s.panel.prices), "panel.prices".into()),
            (self.resolve(&s.attributes.file), "attributes.file".into()),
        ];
        if !s.market.index.prices.is_empty() {
            files.push((
                self.resolve(&s.market.index.prices),
                "market.index.prices".into(),
            ));
        }
        if let Some(series) = s.market.risk_free_series.as_ref() {
            if !series.yields.is_empty() {
                files.push((
                    self.resolve(&series.yields),
                    "market.risk_free_series.yields".into(),
                ));
            }
        }
        for (name, table) in &s.sources {
            files.push((self.resolve(&table.file), format!("sources.{name}.file")));
        }
        files
    }
}

/// Reads, overrides and validates a universe file. `overrides` are `dotted.key=value` strings.
pub fn read_universe(path: &Path, overrides: &[String]) -> Result<Universe> {
    let bytes = std::fs::read(path).map_err(|source| Error::Io {
        path: path.to_path_buf(),
        action: "cannot read the universe file",
        source,
    })?;
    let sha256 = crate::io::series::sha256_hex(&bytes);
    let file_error = |message: String| Error::Case {
        file: path.to_path_buf(),
        message,
    };
    // As a case file is read: a byte that is not UTF-8 named with its line.
    let text = crate::case::sanity::toml_text(&bytes).map_err(file_error)?;
    // The case's checks on the text: NaN or infinity in any key, and a window given twice
    // (`window_start` and `lookback` both written), each named with its line.
    crate::case::sanity::case_or_universe(&text, true).map_err(file_error)?;
    crate::case::sanity::check_case_text(&text).map_err(file_error)?;
    // Parsing the text first keeps the parser's line and column in every message.
    let mut settings: UniverseFile =
        toml::from_str(&text).map_err(|e| file_error(crate::error::toml_error(&e, &text)))?;
    if !overrides.is_empty() {
        let mut table: toml::Table =
            toml::from_str(&text).map_err(|e| file_error(crate::error::toml_error(&e, &text)))?;
        for assignment in overrides {
            case::apply_override(&mut table, assignment)?;
        }
        settings = UniverseFile::deserialize(toml::Value::Table(table.clone())).map_err(|e| {
            Error::AfterOverrides {
                file: path.to_path_buf(),
                overrides: overrides.to_vec(),
                message: crate::error::toml_error_in_table::<UniverseFile>(
                    &table,
                    e.message().to_string(),
                ),
            }
        })?;
    }
    // A value a `--set` gave is blamed on that `--set`, a value of the file's own on the file
    // (found by review, twice), as a case's checks do.
    validate(&settings).map_err(|message| blamed(path, &text, overrides, message))?;
    Ok(Universe {
        settings,
        path: path.to_path_buf(),
        sha256,
        overrides: overrides.to_vec(),
    })
}

/// The refusal of a universe file with its overrides laid over it, blamed as a case's is: on
/// the `--set` whose key the message names, and on one without which the file passes, though
/// the message names another key (found by review: `--set beta.frequency=weekly` was refused
/// as the file's lookback); else on the file.
fn blamed(path: &Path, text: &str, overrides: &[String], message: String) -> Error {
    let needed: Vec<String> = (0..overrides.len())
        .filter(|&i| {
            parsed_with(text, &case::all_but(overrides, i)).is_some_and(|s| validate(&s).is_ok())
        })
        .map(|i| overrides[i].clone())
        .collect();
    match case::blamed(path, overrides, message) {
        Error::AfterOverrides {
            file,
            overrides: named,
            message,
        } => Error::AfterOverrides {
            file,
            overrides: (overrides.iter())
                .filter(|o| named.contains(o) || needed.contains(o))
                .cloned()
                .collect(),
            message,
        },
        Error::Case { file, message } if !needed.is_empty() => Error::AfterOverrides {
            file,
            overrides: needed,
            message,
        },
        other => other,
    }
}

/// The universe file's text with `overrides` laid over it, when they apply and it parses.
fn parsed_with(text: &str, overrides: &[String]) -> Option<UniverseFile> {
    let mut table: toml::Table = toml::from_str(text).ok()?;
    for assignment in overrides {
        case::apply_override(&mut table, assignment).ok()?;
    }
    UniverseFile::deserialize(toml::Value::Table(table)).ok()
}

/// Range checks a type cannot express; the message names the key and the value.
pub fn validate(universe: &UniverseFile) -> std::result::Result<(), String> {
    crate::case::sanity::plain_label("universe.title", &universe.universe.title)?;
    validate_shared(universe)?;
    let leverage = &universe.leverage;
    if leverage.debt_beta_source == DebtBetaSource::CreditSpread {
        return Err(
            "leverage.debt_beta_source = \"credit-spread\" needs each firm's cost of debt and \
             the equity risk premium, which a universe does not take; use \"none\" (riskless \
             debt) or \"given\" (leverage.debt_beta for every firm)"
                .into(),
        );
    }
    if leverage.formula.uses_cost_of_debt() {
        let mut usable: Vec<String> = (Formula::ALL.iter())
            .filter(|f| !f.uses_cost_of_debt())
            .map(|f| format!("\"{}\"", crate::case::label(f)))
            .collect();
        let last = usable.pop().unwrap_or_default();
        return Err(format!(
            "leverage.formula = \"{}\" needs each firm's cost of debt, which a universe does \
             not take; use {} or {last}",
            crate::case::label(&leverage.formula),
            usable.join(", ")
        ));
    }
    let needs_cash =
        leverage.operations_beta || leverage.debt_measure == crate::case::DebtMeasure::Net;
    if needs_cash && universe.attributes.cash_column.is_none() {
        return Err(format!(
            "{} needs each firm's cash: name its column in attributes.cash_column",
            if leverage.operations_beta {
                "leverage.operations_beta = true"
            } else {
                "leverage.debt_measure = \"net\""
            }
        ));
    }
    let panel = &universe.panel;
    check_table_path("panel.prices", &panel.prices)?;
    check_table_path("attributes.file", &universe.attributes.file)?;
    let mut names = vec![("panel.date_column", &panel.date_column)];
    if panel.layout == PanelLayout::Long {
        names.push(("panel.security_column", &panel.security_column));
        names.push(("panel.price_column", &panel.price_column));
    }
    check_distinct_names(&names)?;
    let a = &universe.attributes;
    let mut names = vec![
        ("attributes.security_column", &a.security_column),
        ("attributes.industry_column", &a.industry_column),
        ("attributes.equity_value_column", &a.equity_value_column),
        ("attributes.debt_column", &a.debt_column),
        ("attributes.tax_rate_column", &a.tax_rate_column),
    ];
    if let Some(cash) = &a.cash_column {
        names.push(("attributes.cash_column", cash));
    }
    check_distinct_names(&names)
}

/// A table path must be non-empty and end in .csv or .parquet.
fn check_table_path(key: &str, path: &str) -> std::result::Result<(), String> {
    if path.trim().is_empty() {
        return Err(format!("{key} is empty"));
    }
    TableFormat::from_path(Path::new(path), key)
        .map(|_| ())
        .map_err(|e| e.to_string())
}

/// Column names must be non-empty and each column used for one thing only.
fn check_distinct_names(names: &[(&str, &String)]) -> std::result::Result<(), String> {
    for (i, (key, name)) in names.iter().enumerate() {
        if name.trim().is_empty() {
            return Err(format!("{key} is empty"));
        }
        if let Some((other, _)) = names[..i].iter().find(|(_, n)| n == name) {
            return Err(format!(
                "{key} = \"{name}\" is also {other}; each column holds one thing"
            ));
        }
    }
    Ok(())
}

/// The checks of the sections shared with a case file, made by the case's own validation so
/// that a `[beta]` or `[leverage]` setting is accepted or refused exactly as in a case: a
/// stand-in case carries this file's sections and neutral values everywhere else (see
/// [`stand_in_case`]), and the case's key names are mapped to this file's.
fn validate_shared(universe: &UniverseFile) -> std::result::Result<(), String> {
    let stand_in = stand_in_case(universe);
    case::validate(&stand_in).map_err(|message| {
        message
            .replace("case.valuation_date", "universe.valuation_date")
            .replace("no peer could pass", "no security could pass")
    })
}

/// A case holding the universe's shared sections (`[market.index]`, `[market.risk_free_series]`,
/// `[beta]`, `[leverage]`, the valuation date), one neutral peer and neutral capital keys: the
/// value through which the case's validation and spec conversion serve the universe file. It is
/// parsed from a minimal case text, so keys a case gains later take their defaults.
fn stand_in_case(universe: &UniverseFile) -> case::CaseFile {
    let mut stand_in: case::CaseFile = toml::from_str(STAND_IN).expect("the stand-in case parses");
    stand_in.case.valuation_date = universe.universe.valuation_date;
    stand_in.sources = universe.sources.clone();
    stand_in.market.index = universe.market.index.clone();
    stand_in.market.risk_free_series = universe.market.risk_free_series.clone();
    stand_in.beta = universe.beta.clone();
    stand_in.leverage = universe.leverage.clone();
    stand_in
}

/// Neutral values for every case key a universe does not have.
const STAND_IN: &str = r#"
[case]
title = "universe"
valuation_date = 2026-09-30
currency = "none"
[market]
risk_free_rate = 0.0
equity_risk_premium = 0.05
[market.index]
prices = "index.csv"
[target]
debt_to_equity = 0.0
tax_rate = 0.0
[debt]
cost_pre_tax = 0.05
[[peer]]
name = "stand-in"
prices = "stand-in.csv"
equity_value = 1.0
debt = 0.0
tax_rate = 0.0
"#;

#[cfg(test)]
mod tests {
    use super::*;

    const MINIMAL: &str = r#"
[universe]
valuation_date = 2026-09-30
[market.index]
prices = "index.csv"
[panel]
prices = "panel.csv"
[attributes]
file = "attributes.parquet"
"#;

    fn parse(text: &str) -> UniverseFile {
        toml::from_str(text).unwrap()
    }

    #[test]
    fn defaults_match_the_case_file_and_readme() {
        let universe = parse(MINIMAL);
        assert!(validate(&universe).is_ok());
        // README "Case file reference", `[beta]` (which a universe file shares, "Industry betas
        // from a whole market"): each default as README's table writes it, not the program's
        // own `BetaSettings::default()`, which would compare the code with itself.
        let beta = &universe.beta;
        assert_eq!(beta.frequency, crate::market::sampling::Frequency::Monthly);
        assert_eq!(beta.lookback, crate::case::lookback::Lookback::Periods(60));
        assert_eq!(beta.min_observations, 36);
        assert_eq!(beta.method, crate::beta::BetaMethod::Ols);
        assert_eq!(beta.adjustment, crate::beta::Adjustment::None);
        assert_eq!(beta.blume_weight, 0.67);
        assert_eq!(
            beta.std_errors,
            crate::stats::least_squares::StdErrors::Classical
        );
        assert_eq!(beta.newey_west_lags, None); // "rule"
        assert_eq!(beta.dimson_lags, 1);
        assert_eq!(beta.dimson_leads, 0);
        assert_eq!(beta.vasicek_prior_mean, None); // "cross-section"
        assert_eq!(beta.vasicek_prior_variance, None); // "cross-section"
        assert_eq!(
            beta.weekday,
            crate::market::sampling::SampleWeekday::Wednesday
        );
        assert_eq!(beta.returns, crate::market::sampling::ReturnType::Simple);
        assert_eq!(beta.max_stale_days, None); // "none"
        assert_eq!(beta.window_start, None); // "none"
        assert_eq!(beta.window_end, None); // "case.valuation_date" (here universe's)
        assert_eq!(beta.flag_observations_share, 0.8);
        assert_eq!(beta.flag_r_squared_floor, 0.05);
        assert_eq!(beta.flag_stale_share, 0.1);
        assert_eq!(beta.flag_zero_return_share, 0.2);
        assert_eq!(beta.flag_lag_p_value, 0.05);
        assert!(beta.exclude_flags.is_empty()); // "[]"
        assert_eq!(beta.rolling_window, None); // "half the window"
        assert_eq!(beta.rolling_step, 1);
        // "80% of rolling_window, rounded up":
        assert_eq!(beta.rolling_min_observations, None);
        // The two derived defaults, on README's 60-period window: half of it, and 80% of that
        // rounded up (24).
        assert_eq!(beta.rolling(60), (30, 24));
        assert_eq!(universe.panel.layout, PanelLayout::Long);
        assert_eq!(universe.panel.price_column, "price");
        assert_eq!(universe.attributes.industry_column, "industry");
        assert_eq!(universe.attributes.cash_column, None);
    }

    #[test]
    fn shared_sections_are_checked_as_in_a_case() {
        let mut universe = parse(MINIMAL);
        universe.beta.min_observations = 2;
        assert!(validate(&universe)
            .unwrap_err()
            .contains("beta.min_observations = 2"));
        let mut universe = parse(MINIMAL);
        universe.beta.window_end = Some(CaseDate(
            chrono::NaiveDate::from_ymd_opt(2026, 10, 1).unwrap(),
        ));
        let message = validate(&universe).unwrap_err();
        assert!(message.contains("universe.valuation_date"), "{message}");
    }

    #[test]
    fn settings_a_universe_cannot_honour_are_refused() {
        let mut universe = parse(MINIMAL);
        universe.leverage.formula = Formula::MilesEzzell;
        assert!(validate(&universe).unwrap_err().contains("miles-ezzell"));
        let mut universe = parse(MINIMAL);
        universe.leverage.operations_beta = true;
        assert!(validate(&universe)
            .unwrap_err()
            .contains("attributes.cash_column"));
        let mut universe = parse(MINIMAL);
        universe.panel.prices = "panel.xlsx".into();
        assert!(validate(&universe).unwrap_err().contains("panel.prices"));
        let mut universe = parse(MINIMAL);
        universe.panel.price_column = "date".into();
        assert!(validate(&universe)
            .unwrap_err()
            .contains("panel.price_column"));
    }

    #[test]
    fn unknown_sections_are_refused_by_the_parser() {
        let text = format!("{MINIMAL}\n[target]\ndebt_to_equity = 0.3\n");
        assert!(toml::from_str::<UniverseFile>(&text).is_err());
    }
}
