//! The pipeline: a validated case and its data files in, one [`Valuation`] out.
//!
//! [`load_inputs`] does all the reading (and hashing); [`value`] is a pure function of what was
//! read. Every output — memo, `result.json`, the CSV files, the terminal summary — renders this
//! one value and computes nothing of its own, so the figures in all of them agree by
//! construction.

use chrono::NaiveDate;
use serde::Serialize;

use crate::beta::{self, BetaEstimate};
use crate::case::{Case, CaseFile, CountryMethod, DebtBetaSource, DebtSource, TargetSource};
use crate::cost;
use crate::currency;
use crate::data::{iso_date, read_series_file, DataFile, ValueKind};
use crate::debt::{self, CostOfDebtRecord, SpreadTable};
use crate::error::{Error, Result};
use crate::leverage::{self, CapitalStructure, DebtTerms, Formula};
use crate::sampling::{self, AlignedReturns, DroppedPeriods, PeriodGrid};
use crate::stats::{self, Dispersion};

/// Version of the `result.json` layout; raised whenever a field changes meaning or goes away.
pub const SCHEMA_VERSION: u32 = 1;

/// A case with every data file it names, read and validated.
#[derive(Debug, Clone)]
pub struct Inputs {
    pub case: Case,
    pub index: DataFile,
    pub risk_free: Option<DataFile>,
    /// In the order of the case's `[[peer]]` tables.
    pub peers: Vec<DataFile>,
    /// The rating or coverage spread table `[debt]` names, when its source needs one.
    pub debt_table: Option<SpreadTable>,
}

/// Reads every data file a case names, resolving paths against the case file's folder.
pub fn load_inputs(case: Case) -> Result<Inputs> {
    let settings = &case.settings;
    let index_spec = &settings.market.index;
    let index = read_series_file(
        "index",
        &index_spec.prices,
        &case.resolve(&index_spec.prices),
        &index_spec.date_column,
        &index_spec.price_column,
        ValueKind::Price,
    )?;
    let risk_free = match &settings.market.risk_free_series {
        Some(spec) => Some(read_series_file(
            "risk_free",
            &spec.yields,
            &case.resolve(&spec.yields),
            &spec.date_column,
            &spec.yield_column,
            ValueKind::Yield,
        )?),
        None => None,
    };
    let peers = settings
        .peers
        .iter()
        .map(|peer| {
            read_series_file(
                &format!("peer:{}", peer.name),
                &peer.prices,
                &case.resolve(&peer.prices),
                &peer.date_column,
                &peer.price_column,
                ValueKind::Price,
            )
        })
        .collect::<Result<Vec<_>>>()?;
    let debt_settings = &settings.debt;
    let debt_table = match debt_settings.source {
        DebtSource::Given => None,
        DebtSource::Rating | DebtSource::Coverage => {
            let (written, coverage) = match debt_settings.source {
                DebtSource::Rating => (&debt_settings.rating_table, false),
                _ => (&debt_settings.coverage_table, true),
            };
            let written = written.as_deref().expect("validate() requires the table");
            Some(debt::read_spread_table(
                written,
                &case.resolve(written),
                coverage,
            )?)
        }
    };
    let inputs = Inputs {
        case,
        index,
        risk_free,
        peers,
        debt_table,
    };
    crate::sanity::check_inputs(&inputs)?;
    Ok(inputs)
}

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
    /// The adjusted beta, or `null` when the case asks for no adjustment.
    pub adjusted_beta: Option<f64>,
    /// The beta that is unlevered: the adjusted one when there is one, else the raw one.
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
    /// its own `cost_of_debt`, else the subject's.
    pub cost_of_debt: f64,
    /// βU / (1 − cash / (equity + debt)), the unlevered beta of the operating assets alone
    /// (gross debt); aggregated instead of `unlevered_beta` when `leverage.cash_correction`.
    pub cash_corrected_unlevered_beta: f64,
    /// cash / (equity + debt), gross debt: the share of capital the cash correction removes.
    pub cash_share_of_capital: f64,
    /// Why the peer is left out of the aggregation, or `null` when it is included.
    pub excluded_reason: Option<String>,
    /// The Vasicek-shrunk beta beside the raw one (`null` unless `beta.adjustment = "vasicek"`).
    pub vasicek: Option<beta::vasicek::Shrunk>,
    /// Share of the window's periods dropped because the peer's price was stale.
    pub stale_share: f64,
    /// Diagnostic warnings (see README, "Diagnostics").
    pub flags: Vec<crate::case::PeerFlag>,
    /// Range and trend of the rolling OLS beta (`null` with fewer than two windows).
    pub stability: Option<crate::rolling::Stability>,
}

/// Aggregation and relevering.
#[derive(Debug, Clone, Serialize)]
pub struct BetaSummary {
    pub formula: crate::leverage::Formula,
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
    /// Whether the cash-corrected unlevered betas are the ones aggregated.
    pub cash_corrected: bool,
    /// The aggregate of the plain unlevered betas and of the cash-corrected ones (same statistic);
    /// `unlevered` is one of the two.
    pub unlevered_plain: f64,
    pub unlevered_cash_corrected: f64,
    /// Median, mean, market-cap-weighted mean and trimmed mean of the betas aggregated.
    pub unlevered_statistics: stats::Locations,
    /// Gross debt or net of cash in every D/E.
    pub debt_measure: crate::case::DebtMeasure,
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
    pub tax_rate_basis: crate::case::TaxRateBasis,
}

/// A pair of figures for the equity and the debt of the capital structure.
#[derive(Debug, Clone, Serialize)]
pub struct Weights {
    pub equity: f64,
    pub debt: f64,
    /// Preferred equity (`[preferred]`); 0 when the case has none.
    pub preferred: f64,
    /// Lease liabilities (`[leases]`); 0 when the case has none.
    pub leases: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct PremiumRecord {
    pub size: f64,
    pub country: f64,
    pub company_specific: f64,
    /// The premiums added to the cost of equity: size + country as applied + company-specific.
    pub total: f64,
    pub country_method: crate::case::CountryMethod,
    /// λ for `country_method = "lambda"`, βL for `"beta"`, 1 for `"added"`.
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
    pub sensitivity: Option<crate::audit::grid::Grid>,
    /// Monte Carlo percentiles of the WACC (filled by `audit::evaluate`).
    pub uncertainty: Option<crate::audit::uncertainty::Uncertainty>,
    /// The bridge to a claimed build-up, when the case has `[reconcile]`.
    pub reconciliation: Option<crate::audit::bridge::Bridge>,
    /// Plain-language remarks about the data that a reviewer should see.
    pub notes: Vec<String>,
    /// Each peer's aligned returns, in peer order (written to `returns.csv`, not to JSON).
    #[serde(skip)]
    pub returns: Vec<AlignedReturns>,
    /// Each peer's rolling betas, in peer order (written to `rolling.csv`, not to JSON).
    #[serde(skip)]
    pub rolling: Vec<Vec<crate::rolling::RollingPoint>>,
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
    pub leverage_comparison: Vec<FormulaOutcome>,
    /// The results in the output currency by the Fisher relation, when `[conversion]` asks.
    pub currency_conversion: Option<CurrencyConversion>,
}

/// Applies the case's `beta.adjustment` to every peer's raw beta, setting `adjusted_beta`,
/// `beta_used` and `vasicek`: Blume peer by peer, Vasicek against a prior from the whole
/// cross-section (or the stated one). The one place the adjustment is applied, for the
/// estimates and each Monte Carlo draw alike; returns the Vasicek prior when one is used.
pub fn apply_adjustment(
    settings: &CaseFile,
    peers: &mut [PeerResult],
) -> Result<Option<beta::vasicek::Prior>> {
    let beta_settings = &settings.beta;
    if beta_settings.adjustment != crate::case::Adjustment::Vasicek {
        for peer in peers.iter_mut() {
            let raw = peer.estimate.beta;
            peer.adjusted_beta = beta::adjust(beta_settings.adjustment, raw);
            peer.beta_used = peer.adjusted_beta.unwrap_or(raw);
            peer.vasicek = None;
        }
        return Ok(None);
    }
    let prior = vasicek_prior(beta_settings, peers).map_err(|message| Error::Estimation {
        peer: "(all peers)".into(),
        message,
    })?;
    for peer in peers.iter_mut() {
        let shrunk =
            beta::vasicek::shrink(peer.estimate.beta, peer.estimate.beta_std_error, &prior);
        peer.adjusted_beta = Some(shrunk.beta);
        peer.beta_used = shrunk.beta;
        peer.vasicek = Some(shrunk);
    }
    Ok(Some(prior))
}

/// The diagnostic flags of one peer's estimate against the case's thresholds.
fn peer_flags(
    settings: &crate::case::BetaSettings,
    estimate: &BetaEstimate,
    periods_in_window: usize,
    stale_share: f64,
) -> Vec<crate::case::PeerFlag> {
    use crate::case::PeerFlag;
    let mut flags = Vec::new();
    if (estimate.observations as f64) < settings.flag_observations_share * periods_in_window as f64
    {
        flags.push(PeerFlag::TooFewObservations);
    }
    if estimate.r_squared < settings.flag_r_squared_floor {
        flags.push(PeerFlag::LowRSquared);
    }
    if stale_share > settings.flag_stale_share {
        flags.push(PeerFlag::StalePrices);
    }
    flags
}

/// The Vasicek prior: the case's stated mean and variance, else the cross-section of the raw
/// betas of the peers that enter the aggregation.
fn vasicek_prior(
    settings: &crate::case::BetaSettings,
    peers: &[PeerResult],
) -> std::result::Result<beta::vasicek::Prior, String> {
    if let (Some(mean), Some(variance)) =
        (settings.vasicek_prior_mean, settings.vasicek_prior_variance)
    {
        return Ok(beta::vasicek::Prior {
            mean,
            variance,
            source: "stated",
        });
    }
    let raw: Vec<f64> = peers
        .iter()
        .filter(|p| p.excluded_reason.is_none())
        .map(|p| p.estimate.beta)
        .collect();
    beta::vasicek::cross_sectional_prior(&raw).ok_or_else(|| {
        format!(
            "beta.adjustment = \"vasicek\" needs at least two included peers with different \
             betas for a cross-sectional prior ({} included); state beta.vasicek_prior_mean \
             and beta.vasicek_prior_variance instead",
            raw.len()
        )
    })
}

/// Computes the valuation. `generated_at` is stamped into the result as given.
pub fn value(inputs: &Inputs, generated_at: &str) -> Result<Valuation> {
    let valuation = value_case(&inputs.case, inputs, generated_at)?;
    crate::sanity::check_finite_figures(&valuation)?;
    Ok(valuation)
}

/// Computes the valuation of `case` (the inputs' case, or a copy with overrides) on the data
/// files of `inputs`.
pub fn value_case(case: &Case, inputs: &Inputs, generated_at: &str) -> Result<Valuation> {
    let settings = &case.settings;
    let beta_settings = &settings.beta;
    let valuation_date = settings.case.valuation_date.0;
    // Lagged market returns need periods before the window: the grid starts `lags` earlier.
    let (lags, leads) = beta_settings.market_lags_and_leads();
    let offsets: Vec<i32> = (1..=lags as i32)
        .map(|l| -l)
        .chain(1..=leads as i32)
        .collect();
    let lookback = beta_settings.lookback_periods(valuation_date);
    let grid = PeriodGrid::ending_at_with(
        beta_settings.frequency,
        beta_settings.weekday,
        beta_settings.window_end_date(valuation_date),
        lookback + lags,
    );
    let return_type = beta_settings.returns;
    let stale_limit = beta_settings.max_stale_days;
    let sample_returns = |file: &DataFile| {
        let (samples, stale) =
            sampling::sample_with_staleness(&grid, file.series.view(), stale_limit);
        (
            sampling::period_returns(&samples, return_type),
            sampling::stale_returns(&stale),
        )
    };
    let first = lags as usize;
    let all_period_ends = grid.return_period_ends();
    let period_ends = &all_period_ends[first..];
    let window_start = grid.sample_points()[first];
    let (market_returns, market_stale) = sample_returns(&inputs.index);
    crate::sanity::check_index_returns(case, &inputs.index, &market_returns[first..])?;
    let risk_free = inputs.risk_free.as_ref().map(|file| {
        sampling::risk_free_for_returns(
            &sampling::sample(&grid, file.series.view()),
            beta_settings.frequency,
            return_type,
        )
    });

    let mut notes: Vec<String> = crate::sanity::window_note(beta_settings)
        .into_iter()
        .collect();
    let window_end = *grid.sample_points().last().expect("grid has sample points");
    if window_end != valuation_date {
        notes.push(format!(
            "The valuation date {valuation_date} is not a period end; the return window ends at \
             {window_end}, the last period end before it."
        ));
    }

    let mut peers = Vec::with_capacity(settings.peers.len());
    let mut returns = Vec::with_capacity(settings.peers.len());
    let mut rolling = Vec::with_capacity(settings.peers.len());
    let (rolling_window, rolling_min) = beta_settings.rolling(lookback);
    for (spec, file) in settings.peers.iter().zip(&inputs.peers) {
        let (asset_returns, asset_stale) = sample_returns(file);
        let mut aligned = sampling::align_with_shifts(
            all_period_ends,
            &asset_returns,
            &market_returns,
            risk_free.as_deref(),
            &offsets,
            first,
        );
        aligned.dropped.asset_stale = asset_stale[first..].iter().filter(|&&s| s).count();
        aligned.dropped.market_stale = market_stale[first..].iter().filter(|&&s| s).count();
        let estimation_error = |message: String| Error::Estimation {
            peer: spec.name.clone(),
            message,
        };
        let n = aligned.asset.len();
        if n < beta_settings.min_observations as usize {
            let d = aligned.dropped;
            return Err(estimation_error(format!(
                "{n} usable returns in the window of {} periods from {} to {} (dropped {}: \
                 peer price missing {}, index price missing {}, risk-free missing {}); \
                 beta.min_observations = {}. Prices in {} run from {} to {}.",
                period_ends.len(),
                window_start,
                window_end,
                d.total,
                d.asset_missing,
                d.market_missing,
                d.risk_free_missing,
                beta_settings.min_observations,
                file.path,
                file.first_date,
                file.last_date
            )));
        }
        let market_excess = aligned.market_excess();
        // Raw returns too: with a risk-free series, a flat index would leave only the rate's
        // own variation in the excess returns and the regression would measure nothing.
        let constant = |values: &[f64]| values.iter().all(|&m| m == values[0]);
        if constant(&aligned.market) || constant(&market_excess) {
            return Err(estimation_error(format!(
                "the market index returns ({}) have zero variance over the {n} periods aligned \
                 with this peer, so no beta can be estimated",
                inputs.index.path
            )));
        }
        let estimate = beta::estimate_with(
            beta_settings,
            &aligned.asset_excess(),
            &market_excess,
            &aligned.market_shifted,
        )
        .map_err(|e| estimation_error(e.to_string()))?;
        crate::sanity::check_peer_fit(&aligned.asset, &estimate, &inputs.index.path)
            .map_err(estimation_error)?;
        if aligned.dropped.total > 0 {
            notes.push(format!(
                "{}: {} of {} periods dropped (peer price missing {}, index price missing {}, \
                 risk-free missing {}).",
                spec.name,
                aligned.dropped.total,
                period_ends.len(),
                aligned.dropped.asset_missing,
                aligned.dropped.market_missing,
                aligned.dropped.risk_free_missing
            ));
        }
        let d = aligned.dropped;
        if d.asset_stale + d.market_stale > 0 {
            notes.push(format!(
                "{}: {} periods with a stale peer price and {} with a stale index price \
                 (older than beta.max_stale_days = {}) were dropped.",
                spec.name,
                d.asset_stale,
                d.market_stale,
                stale_limit.unwrap_or_default()
            ));
        }
        let points = crate::rolling::rolling_betas(
            period_ends,
            &aligned.period_ends,
            &aligned.asset_excess(),
            &market_excess,
            rolling_window as usize,
            beta_settings.rolling_step as usize,
            rolling_min as usize,
        );
        let stale_share = d.asset_stale as f64 / period_ends.len() as f64;
        let flags = peer_flags(beta_settings, &estimate, period_ends.len(), stale_share);
        let excluded_by_rule: Vec<String> = flags
            .iter()
            .filter(|f| beta_settings.exclude_flags.contains(f))
            .map(|f| f.name().to_string())
            .collect();
        let exclusion = spec.exclude.clone().or_else(|| {
            (!excluded_by_rule.is_empty()).then(|| {
                format!(
                    "flag-based rule beta.exclude_flags: {}",
                    excluded_by_rule.join(", ")
                )
            })
        });
        peers.push(PeerResult {
            name: spec.name.clone(),
            prices_file: file.path.clone(),
            periods_in_window: period_ends.len(),
            periods_dropped: aligned.dropped,
            // Set after the loop by `cost_of_capital`, which applies the adjustment.
            adjusted_beta: None,
            beta_used: f64::NAN,
            equity_value: spec.equity_value,
            debt: spec.debt,
            cash: spec.cash,
            debt_to_equity: spec.debt / spec.equity_value,
            tax_rate: spec.tax_rate,
            // Set after the loop by `capital_chain`, once the cost of debt is known.
            unlevered_beta: f64::NAN,
            debt_beta: 0.0,
            cost_of_debt: f64::NAN,
            cash_corrected_unlevered_beta: f64::NAN,
            cash_share_of_capital: spec.cash / (spec.equity_value + spec.debt),
            estimate,
            excluded_reason: exclusion,
            vasicek: None,
            stale_share,
            flags,
            stability: crate::rolling::stability(&points, rolling_window)
                .map_err(|e| estimation_error(e.to_string()))?,
        });
        rolling.push(points);
        returns.push(aligned);
    }

    let cost = cost_of_capital(
        case,
        inputs.debt_table.as_ref(),
        &mut peers,
        &mut notes,
        Checks::Enforce,
    )?;

    let mut files = vec![inputs.index.clone()];
    files.extend(inputs.risk_free.iter().cloned());
    files.extend(inputs.peers.iter().cloned());

    Ok(Valuation {
        schema_version: SCHEMA_VERSION,
        tool: ToolInfo {
            name: env!("CARGO_PKG_NAME"),
            version: env!("CARGO_PKG_VERSION"),
        },
        generated_at: generated_at.to_string(),
        case: CaseRecord {
            file: case.path.display().to_string(),
            sha256: case.sha256.clone(),
            overrides: case.overrides.clone(),
            title: settings.case.title.clone(),
            subject: settings.case.subject.clone(),
            valuation_date,
            currency: settings.case.currency.clone(),
        },
        settings: settings.clone(),
        files,
        sampling: SamplingRecord {
            frequency: beta_settings.frequency,
            periods_per_year: beta_settings.frequency.periods_per_year(),
            lookback,
            min_observations: beta_settings.min_observations,
            window_start,
            window_end,
            return_type: match return_type {
                sampling::ReturnType::Simple => "simple",
                sampling::ReturnType::Log => "log",
            },
            weekday: (beta_settings.frequency == sampling::Frequency::Weekly)
                .then_some(beta_settings.weekday),
            max_stale_days: stale_limit,
            sampling_rule: sampling::rule_text(beta_settings.frequency),
            excess_returns: risk_free.is_some(),
            risk_free_convention: match return_type {
                sampling::ReturnType::Simple => {
                    "annual yield sampled at the start of each period, compounded to the \
                     period: (1 + y)^(1/periods_per_year) - 1"
                }
                sampling::ReturnType::Log => {
                    "annual yield sampled at the start of each period, continuously \
                     compounded to the period: ln(1 + y)/periods_per_year"
                }
            },
        },
        estimator: beta::describe(beta_settings),
        peers,
        cost,
        sensitivity: None,
        uncertainty: None,
        reconciliation: None,
        notes,
        returns,
        rolling,
    })
}

/// Whether [`cost_of_capital`] rejects inconsistent debt betas (the point estimate does; a
/// Monte Carlo draw, whose betas are random, is not an input error).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Checks {
    Enforce,
    Skip,
}

/// Everything after the peer regressions: cost of debt, debt betas, unlevering, aggregation,
/// relevering, cost of equity and WACC, under every formula. Fills each peer's unlevered
/// figures and adds notes. The one place these steps are computed: [`value_case`], the
/// sensitivity grid and the Monte Carlo all come through here.
pub fn cost_of_capital(
    case: &Case,
    debt_table: Option<&SpreadTable>,
    peers: &mut [PeerResult],
    notes: &mut Vec<String>,
    checks: Checks,
) -> Result<CostOfCapital> {
    let settings = &case.settings;
    let vasicek_prior = apply_adjustment(settings, peers)?;
    let peers_included = peers.iter().filter(|p| p.excluded_reason.is_none()).count();
    if peers_included == 0 {
        return Err(Error::Estimation {
            peer: "(all peers)".into(),
            message: format!(
                "every peer is excluded (beta.exclude_flags = {:?} or `exclude`): no peer is \
                 left to aggregate",
                settings
                    .beta
                    .exclude_flags
                    .iter()
                    .map(|f| f.name().to_string())
                    .collect::<Vec<_>>()
            ),
        });
    }
    for peer in peers.iter() {
        if let Some(reason) = &peer.excluded_reason {
            notes.push(format!(
                "{} is estimated and shown but left out of the aggregation: {reason}",
                peer.name
            ));
        }
    }
    let market = &settings.market;
    let premiums = &settings.premiums;
    let cost_of_debt = debt::cost_of_debt(&settings.debt, debt_table, market.risk_free_rate)
        .map_err(|message| Error::Case {
            file: case.path.clone(),
            message,
        })?;
    let cost_of_debt_pre_tax = cost_of_debt.pre_tax;
    assign_debt_terms(peers, settings, cost_of_debt_pre_tax);
    let target_de = match settings.target.source {
        // Through the one aggregation point, so the peers it counts are the peers aggregated.
        TargetSource::PeerMedian => {
            let ratios: Vec<f64> = peers.iter().map(|p| p.debt_to_equity).collect();
            aggregate_over_peers(peers, &ratios, settings).0.median
        }
        _ => settings.target_debt_to_equity(),
    };
    if !(target_de.is_finite() && target_de >= 0.0) {
        return Err(Error::Case {
            file: case.path.clone(),
            message: format!(
                "target.source = {}: the target debt-to-equity works out at {target_de}, below 0 \
                 (net debt under leverage.debt_measure = {} is negative); a target structure \
                 needs D/E >= 0",
                crate::format::label(&settings.target.source),
                crate::format::label(&settings.leverage.debt_measure)
            ),
        });
    }
    let tax_rate = settings.target.tax_rate;
    let subject_debt = DebtTerms {
        debt_beta: subject_debt_beta(settings, cost_of_debt_pre_tax),
        cost_of_debt: cost_of_debt_pre_tax,
    };
    let (preferred, leases) = (&settings.preferred, &settings.leases);
    let (equity_weight, debt_weight) =
        cost::weights_with_other_components(target_de, preferred.weight + leases.weight);
    let cost_of_debt_after_tax = cost::after_tax_cost_of_debt(cost_of_debt_pre_tax, tax_rate);
    let lease_cost_pre_tax = leases.cost_pre_tax.unwrap_or(cost_of_debt_pre_tax);
    let other_components = OtherComponents {
        preferred_cost: preferred.cost.unwrap_or(0.0),
        lease_cost_pre_tax,
        lease_cost_after_tax: cost::after_tax_cost_of_debt(lease_cost_pre_tax, tax_rate),
    };
    let all_weights = Weights {
        equity: equity_weight,
        debt: debt_weight,
        preferred: preferred.weight,
        leases: leases.weight,
    };
    let chain_inputs = ChainInputs {
        target: CapitalStructure {
            debt_to_equity: target_de,
            tax_rate,
        },
        subject_debt,
        weights: all_weights.clone(),
        cost_of_debt_after_tax,
        other: other_components.clone(),
    };
    let leverage_comparison: Vec<FormulaOutcome> = Formula::ALL
        .iter()
        .map(|&formula| capital_chain(formula, peers, settings, &chain_inputs))
        .collect();
    let chosen = leverage_comparison
        .iter()
        .find(|outcome| outcome.formula == settings.leverage.formula)
        .expect("Formula::ALL holds every formula")
        .clone();
    for (i, peer) in peers.iter_mut().enumerate() {
        peer.unlevered_beta = chosen.peer_unlevered_betas[i];
        peer.cash_corrected_unlevered_beta = chosen.peer_cash_corrected_unlevered_betas[i];
    }
    if checks == Checks::Enforce {
        check_debt_betas(case, peers, &chosen, subject_debt.debt_beta)?;
    }
    let unlevered_dispersion = chosen.unlevered_dispersion;
    let aggregate = chosen.unlevered;
    let relevered = chosen.relevered;
    let cost_of_equity = chosen.cost_of_equity;
    let wacc = chosen.wacc;
    let wacc_contributions = Weights {
        equity: cost::wacc(equity_weight, cost_of_equity, 0.0, 0.0),
        debt: cost::wacc(0.0, 0.0, debt_weight, cost_of_debt_after_tax),
        preferred: preferred.weight * other_components.preferred_cost,
        leases: leases.weight * other_components.lease_cost_after_tax,
    };
    if settings.debt.source != DebtSource::Given && settings.debt.cost_pre_tax.is_some() {
        notes.push(format!(
            "debt.cost_pre_tax is not used: the cost of debt comes from the {} table.",
            if settings.debt.source == DebtSource::Rating {
                "rating"
            } else {
                "coverage"
            }
        ));
    }
    if settings.target.source != TargetSource::Explicit
        && (settings.target.debt_to_equity.is_some() || settings.target.debt_to_capital.is_some())
    {
        notes.push(format!(
            "target.source = {}: the target ratio written in [target] is not used.",
            match settings.target.source {
                TargetSource::PeerMedian => "peer-median",
                _ => "subject",
            }
        ));
    }
    if settings.leverage.formula == Formula::Hamada
        && settings.leverage.debt_beta_source != DebtBetaSource::None
    {
        notes.push(
            "Hamada (1972) assumes riskless debt, so the debt betas are not used in the \
             figures; Conine (1980) is Hamada with a debt beta (see the formula comparison)."
                .to_string(),
        );
    }

    Ok(CostOfCapital {
        beta: BetaSummary {
            formula: settings.leverage.formula,
            formula_source: settings.leverage.formula.citation(),
            formula_expression: settings.leverage.formula.expression(),
            aggregation: settings.leverage.aggregation,
            unlevered: aggregate,
            unlevered_dispersion,
            relevered,
            cash_corrected: settings.leverage.cash_correction,
            unlevered_plain: chosen.unlevered_plain,
            unlevered_cash_corrected: chosen.unlevered_cash_corrected,
            unlevered_statistics: chosen.unlevered_statistics,
            debt_measure: settings.leverage.debt_measure,
            vasicek_prior,
            peers_included,
        },
        target: TargetRecord {
            given: match settings.target.source {
                TargetSource::PeerMedian => "peer_median",
                TargetSource::Subject => "subject_current",
                TargetSource::Explicit if settings.target.debt_to_equity.is_some() => {
                    "debt_to_equity"
                }
                TargetSource::Explicit => "debt_to_capital",
            },
            debt_to_equity: target_de,
            debt_to_capital: cost::weights_from_debt_to_equity(target_de).1,
            tax_rate,
            tax_rate_basis: settings.target.tax_rate_basis,
        },
        weights: all_weights,
        other_capital_costs: other_components,
        risk_free_rate: market.risk_free_rate,
        equity_risk_premium: market.equity_risk_premium,
        premiums: PremiumRecord {
            size: premiums.size,
            country: premiums.country,
            company_specific: premiums.company_specific,
            total: premiums.total_applied(relevered),
            country_method: premiums.country_method,
            country_scale: match premiums.country_method {
                CountryMethod::Added => 1.0,
                CountryMethod::Lambda => premiums.country_lambda,
                CountryMethod::Beta => relevered,
            },
            country_applied: premiums.country_applied(relevered),
            size_justification: premiums.size_justification.clone(),
            country_justification: premiums.country_justification.clone(),
            company_specific_justification: premiums.company_specific_justification.clone(),
        },
        beta_times_equity_risk_premium: relevered * market.equity_risk_premium,
        subject_debt_beta: subject_debt.debt_beta,
        cost_of_debt,
        leverage_comparison,
        cost_of_equity,
        cost_of_debt_pre_tax,
        cost_of_debt_after_tax,
        wacc,
        wacc_contributions,
        currency_conversion: settings
            .conversion
            .as_ref()
            .map(|c| convert_results(c, &settings.case.currency, cost_of_equity, wacc)),
    })
}

/// The figures of one leverage formula, from the peers' betas to the WACC.
#[derive(Debug, Clone, Serialize)]
pub struct FormulaOutcome {
    pub formula: Formula,
    pub formula_source: &'static str,
    pub expression: &'static str,
    /// Whether this is the formula the case uses.
    pub in_use: bool,
    /// Each peer's unlevered beta under this formula, in peer order.
    pub peer_unlevered_betas: Vec<f64>,
    /// The same corrected for cash, βU / (1 − cash / (equity + debt)).
    pub peer_cash_corrected_unlevered_betas: Vec<f64>,
    #[serde(skip)]
    pub unlevered_dispersion: Dispersion,
    /// Every location statistic of the betas aggregated (cash-corrected or not, as the case says).
    #[serde(skip)]
    pub unlevered_statistics: stats::Locations,
    /// The aggregate of the plain and of the cash-corrected unlevered betas.
    #[serde(skip)]
    pub unlevered_plain: f64,
    #[serde(skip)]
    pub unlevered_cash_corrected: f64,
    pub unlevered: f64,
    pub relevered: f64,
    pub cost_of_equity: f64,
    pub wacc: f64,
}

/// The costs of preferred equity and lease liabilities.
#[derive(Debug, Clone, Serialize)]
pub struct OtherComponents {
    /// `preferred.cost` (0 when there is no preferred equity); not tax-deductible.
    pub preferred_cost: f64,
    /// `leases.cost_pre_tax`, else the pre-tax cost of debt.
    pub lease_cost_pre_tax: f64,
    /// The same after tax at the target tax rate.
    pub lease_cost_after_tax: f64,
}

/// What every formula's chain shares: the target, the subject's debt and the WACC weights.
struct ChainInputs {
    target: CapitalStructure,
    subject_debt: DebtTerms,
    weights: Weights,
    cost_of_debt_after_tax: f64,
    other: OtherComponents,
}

/// Unlevers every peer with `formula`, aggregates, relevers at the target and builds the cost
/// of equity and the WACC: the one path from peer betas to the WACC, for the case's formula and
/// for the comparison alike.
fn capital_chain(
    formula: Formula,
    peers: &[PeerResult],
    settings: &CaseFile,
    inputs: &ChainInputs,
) -> FormulaOutcome {
    let peer_unlevered_betas: Vec<f64> = peers
        .iter()
        .map(|peer| {
            formula.unlever_with(
                peer.beta_used,
                CapitalStructure {
                    debt_to_equity: peer.debt_to_equity,
                    tax_rate: peer.tax_rate,
                },
                DebtTerms {
                    debt_beta: peer.debt_beta,
                    cost_of_debt: peer.cost_of_debt,
                },
            )
        })
        .collect();
    let peer_cash_corrected_unlevered_betas: Vec<f64> = peers
        .iter()
        .zip(&peer_unlevered_betas)
        .map(|(peer, &unlevered)| cash_corrected(unlevered, peer))
        .collect();
    let (plain_dispersion, plain_statistics) =
        aggregate_over_peers(peers, &peer_unlevered_betas, settings);
    let (corrected_dispersion, corrected_statistics) =
        aggregate_over_peers(peers, &peer_cash_corrected_unlevered_betas, settings);
    let aggregation = settings.leverage.aggregation;
    let unlevered_plain = aggregation.select(&plain_statistics);
    let unlevered_cash_corrected = aggregation.select(&corrected_statistics);
    let (unlevered_dispersion, unlevered_statistics, unlevered) =
        if settings.leverage.cash_correction {
            (
                corrected_dispersion,
                corrected_statistics,
                unlevered_cash_corrected,
            )
        } else {
            (plain_dispersion, plain_statistics, unlevered_plain)
        };
    let relevered = formula.relever_with(unlevered, inputs.target, inputs.subject_debt);
    let market = &settings.market;
    let cost_of_equity = cost::capm_cost_of_equity(
        market.risk_free_rate,
        relevered,
        market.equity_risk_premium,
        settings.premiums.total_applied(relevered),
    );
    // Preferred and leases add wP·Kp + wL·KL·(1 − t); both terms are 0 without them.
    let wacc = cost::wacc(
        inputs.weights.equity,
        cost_of_equity,
        inputs.weights.debt,
        inputs.cost_of_debt_after_tax,
    ) + inputs.weights.preferred * inputs.other.preferred_cost
        + inputs.weights.leases * inputs.other.lease_cost_after_tax;
    FormulaOutcome {
        formula,
        formula_source: formula.citation(),
        expression: formula.expression(),
        in_use: formula == settings.leverage.formula,
        peer_unlevered_betas,
        peer_cash_corrected_unlevered_betas,
        unlevered_dispersion,
        unlevered_statistics,
        unlevered_plain,
        unlevered_cash_corrected,
        unlevered,
        relevered,
        cost_of_equity,
        wacc,
    }
}

/// The dispersion and every location statistic of one figure per peer (`unlevered`, in peer
/// order): the unlevered betas, or the D/E for a peer-median target. The one place the peers
/// are aggregated (a filter on the peers belongs here).
fn aggregate_over_peers(
    peers: &[PeerResult],
    unlevered: &[f64],
    settings: &CaseFile,
) -> (Dispersion, stats::Locations) {
    // Excluded peers are estimated and shown, never aggregated.
    let (values, market_caps): (Vec<f64>, Vec<f64>) = peers
        .iter()
        .zip(unlevered)
        .filter(|(peer, _)| peer.excluded_reason.is_none())
        .map(|(peer, &value)| (value, peer.equity_value))
        .unzip();
    (
        stats::dispersion(&values),
        stats::locations(&values, &market_caps, settings.leverage.trim_fraction),
    )
}

/// Cash-corrected unlevered beta, βU / (1 − cash / (equity + debt)): the unlevered beta is a
/// value-weighted mix of operating assets and cash with a beta of about zero, so dividing by the
/// non-cash share leaves the operating assets' beta (common practice in valuation textbooks).
/// Uses gross debt.
fn cash_corrected(unlevered: f64, peer: &PeerResult) -> f64 {
    unlevered / (1.0 - peer.cash_share_of_capital)
}

/// Sets each peer's D/E (gross or net debt), debt beta and cost of debt from `[leverage]` and
/// the peer's own keys.
fn assign_debt_terms(peers: &mut [PeerResult], settings: &CaseFile, subject_cost_of_debt: f64) {
    let leverage = &settings.leverage;
    let market = &settings.market;
    for (peer, spec) in peers.iter_mut().zip(&settings.peers) {
        peer.debt_to_equity = leverage.debt_measure.debt(spec.debt, spec.cash) / spec.equity_value;
        peer.cost_of_debt = spec.cost_of_debt.unwrap_or(subject_cost_of_debt);
        peer.debt_beta = match leverage.debt_beta_source {
            DebtBetaSource::None => 0.0,
            DebtBetaSource::Given => spec.debt_beta.unwrap_or(leverage.debt_beta),
            DebtBetaSource::CreditSpread => spec.debt_beta.unwrap_or_else(|| {
                leverage::debt_beta_from_spread(
                    peer.cost_of_debt,
                    market.risk_free_rate,
                    market.equity_risk_premium,
                )
            }),
        };
    }
}

/// The subject's debt beta at the target structure.
fn subject_debt_beta(settings: &CaseFile, cost_of_debt: f64) -> f64 {
    let leverage = &settings.leverage;
    let market = &settings.market;
    match leverage.debt_beta_source {
        DebtBetaSource::None => 0.0,
        DebtBetaSource::Given => leverage.debt_beta,
        DebtBetaSource::CreditSpread => leverage::debt_beta_from_spread(
            cost_of_debt,
            market.risk_free_rate,
            market.equity_risk_premium,
        ),
    }
}

/// Debt cannot be riskier than the equity it ranks ahead of: a debt beta above a peer's equity
/// beta (or above the aggregate asset beta the subject is relevered from) is an input error.
fn check_debt_betas(
    case: &Case,
    peers: &[PeerResult],
    chosen: &FormulaOutcome,
    subject_debt_beta: f64,
) -> Result<()> {
    if chosen.formula == Formula::Hamada
        || case.settings.leverage.debt_beta_source == DebtBetaSource::None
    {
        return Ok(());
    }
    for peer in peers {
        if peer.debt_beta > peer.beta_used {
            return Err(Error::Estimation {
                peer: peer.name.clone(),
                message: format!(
                    "debt beta {} is above the equity beta used {}; debt ranks ahead of equity \
                     and cannot carry more systematic risk (check leverage.debt_beta, the peer's \
                     debt_beta or cost_of_debt)",
                    peer.debt_beta, peer.beta_used
                ),
            });
        }
    }
    if subject_debt_beta > chosen.unlevered {
        return Err(Error::Case {
            file: case.path.clone(),
            message: format!(
                "the subject's debt beta {subject_debt_beta} (leverage.debt_beta_source = {}) \
                 is above the aggregate unlevered beta {}, so relevering would lower the equity \
                 beta below the asset beta",
                serde_json::to_string(&case.settings.leverage.debt_beta_source).unwrap_or_default(),
                chosen.unlevered
            ),
        });
    }
    Ok(())
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
}

fn convert_results(
    conversion: &crate::case::ConversionSettings,
    case_currency: &str,
    cost_of_equity: f64,
    wacc: f64,
) -> CurrencyConversion {
    let (from, to) = (conversion.inflation_case, conversion.inflation_output);
    CurrencyConversion {
        from: case_currency.to_string(),
        to: conversion.currency.clone(),
        inflation_from: from,
        inflation_to: to,
        cost_of_equity: currency::convert_nominal(cost_of_equity, from, to),
        wacc: currency::convert_nominal(wacc, from, to),
        cost_of_equity_real: currency::nominal_to_real(cost_of_equity, from),
        wacc_real: currency::nominal_to_real(wacc, from),
    }
}
