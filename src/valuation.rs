//! The pipeline: a validated case and its data files in, one [`Valuation`] out.
//!
//! [`load_inputs`] does all the reading (and hashing); [`value`] is a pure function of what was
//! read. Every output — memo, `result.json`, the CSV files, the terminal summary — renders this
//! one value and computes nothing of its own, so the figures in all of them agree by
//! construction.

use chrono::NaiveDate;
use serde::Serialize;

use crate::beta::{self, BetaEstimate};
use crate::case::{Case, CaseFile};
use crate::cost;
use crate::data::{iso_date, read_series_file, DataFile, ValueKind};
use crate::error::{Error, Result};
use crate::leverage::CapitalStructure;
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
    Ok(Inputs {
        case,
        index,
        risk_free,
        peers,
    })
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
    pub aggregation: stats::Aggregation,
    /// The aggregate unlevered beta that is relevered.
    pub unlevered: f64,
    /// The peers' unlevered betas: count, quartiles, mean, standard deviation.
    pub unlevered_dispersion: Dispersion,
    /// The aggregate relevered at the target structure.
    pub relevered: f64,
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
}

/// A pair of figures for the equity and the debt of the capital structure.
#[derive(Debug, Clone, Serialize)]
pub struct Weights {
    pub equity: f64,
    pub debt: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct PremiumRecord {
    pub size: f64,
    pub country: f64,
    pub company_specific: f64,
    pub total: f64,
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
    /// Plain-language remarks about the data that a reviewer should see.
    pub notes: Vec<String>,
    /// Each peer's aligned returns, in peer order (written to `returns.csv`, not to JSON).
    #[serde(skip)]
    pub returns: Vec<AlignedReturns>,
    /// Each peer's rolling betas, in peer order (written to `rolling.csv`, not to JSON).
    #[serde(skip)]
    pub rolling: Vec<Vec<crate::rolling::RollingPoint>>,
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
    let case = &inputs.case;
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
    let risk_free = inputs.risk_free.as_ref().map(|file| {
        sampling::risk_free_for_returns(
            &sampling::sample(&grid, file.series.view()),
            beta_settings.frequency,
            return_type,
        )
    });

    let mut notes = Vec::new();
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
        let first = market_excess[0];
        if market_excess.iter().all(|&m| m == first) {
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
        let adjusted_beta = beta::adjust(beta_settings.adjustment, estimate.beta);
        let beta_used = adjusted_beta.unwrap_or(estimate.beta);
        let structure = CapitalStructure {
            debt_to_equity: spec.debt / spec.equity_value,
            tax_rate: spec.tax_rate,
        };
        peers.push(PeerResult {
            name: spec.name.clone(),
            prices_file: file.path.clone(),
            periods_in_window: period_ends.len(),
            periods_dropped: aligned.dropped,
            adjusted_beta,
            beta_used,
            equity_value: spec.equity_value,
            debt: spec.debt,
            cash: spec.cash,
            debt_to_equity: structure.debt_to_equity,
            tax_rate: spec.tax_rate,
            unlevered_beta: settings.leverage.formula.unlever(beta_used, structure),
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

    let vasicek_prior = match beta_settings.adjustment {
        crate::case::Adjustment::Vasicek => Some(vasicek_prior(beta_settings, &peers).map_err(
            |message| Error::Estimation {
                peer: "(all peers)".into(),
                message,
            },
        )?),
        _ => None,
    };
    if let Some(prior) = &vasicek_prior {
        for (peer, spec) in peers.iter_mut().zip(&settings.peers) {
            let shrunk =
                beta::vasicek::shrink(peer.estimate.beta, peer.estimate.beta_std_error, prior);
            peer.adjusted_beta = Some(shrunk.beta);
            peer.beta_used = shrunk.beta;
            peer.unlevered_beta = settings.leverage.formula.unlever(
                shrunk.beta,
                CapitalStructure {
                    debt_to_equity: peer.debt_to_equity,
                    tax_rate: spec.tax_rate,
                },
            );
            peer.vasicek = Some(shrunk);
        }
    }
    for peer in &peers {
        if let Some(reason) = &peer.excluded_reason {
            notes.push(format!(
                "{} is estimated and shown but left out of the aggregation: {reason}",
                peer.name
            ));
        }
    }

    let unlevered: Vec<f64> = peers
        .iter()
        .filter(|p| p.excluded_reason.is_none())
        .map(|p| p.unlevered_beta)
        .collect();
    let peers_included = unlevered.len();
    if peers_included == 0 {
        return Err(Error::Estimation {
            peer: "(all peers)".into(),
            message: format!(
                "every peer is excluded (beta.exclude_flags = {:?} or `exclude`): no peer is \
                 left to aggregate",
                beta_settings
                    .exclude_flags
                    .iter()
                    .map(|f| f.name().to_string())
                    .collect::<Vec<_>>()
            ),
        });
    }
    let unlevered_dispersion = stats::dispersion(&unlevered);
    let aggregate = settings.leverage.aggregation.pick(&unlevered_dispersion);
    let target_de = case.target_debt_to_equity();
    let tax_rate = settings.target.tax_rate;
    let relevered = settings.leverage.formula.relever(
        aggregate,
        CapitalStructure {
            debt_to_equity: target_de,
            tax_rate,
        },
    );
    let (equity_weight, debt_weight) = cost::weights_from_debt_to_equity(target_de);
    let market = &settings.market;
    let premiums = &settings.premiums;
    let cost_of_equity = cost::capm_cost_of_equity(
        market.risk_free_rate,
        relevered,
        market.equity_risk_premium,
        premiums.total(),
    );
    let cost_of_debt_pre_tax = settings.debt.cost_pre_tax;
    let cost_of_debt_after_tax = cost::after_tax_cost_of_debt(cost_of_debt_pre_tax, tax_rate);
    let wacc = cost::wacc(
        equity_weight,
        cost_of_equity,
        debt_weight,
        cost_of_debt_after_tax,
    );
    let wacc_contributions = Weights {
        equity: cost::wacc(equity_weight, cost_of_equity, 0.0, 0.0),
        debt: cost::wacc(0.0, 0.0, debt_weight, cost_of_debt_after_tax),
    };

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
        beta: BetaSummary {
            formula: settings.leverage.formula,
            formula_source: settings.leverage.formula.citation(),
            aggregation: settings.leverage.aggregation,
            unlevered: aggregate,
            unlevered_dispersion,
            relevered,
            vasicek_prior,
            peers_included,
        },
        target: TargetRecord {
            given: if settings.target.debt_to_equity.is_some() {
                "debt_to_equity"
            } else {
                "debt_to_capital"
            },
            debt_to_equity: target_de,
            debt_to_capital: debt_weight,
            tax_rate,
        },
        weights: Weights {
            equity: equity_weight,
            debt: debt_weight,
        },
        risk_free_rate: market.risk_free_rate,
        equity_risk_premium: market.equity_risk_premium,
        premiums: PremiumRecord {
            size: premiums.size,
            country: premiums.country,
            company_specific: premiums.company_specific,
            total: premiums.total(),
        },
        beta_times_equity_risk_premium: relevered * market.equity_risk_premium,
        cost_of_equity,
        cost_of_debt_pre_tax,
        cost_of_debt_after_tax,
        wacc,
        wacc_contributions,
        notes,
        returns,
        rolling,
    })
}
