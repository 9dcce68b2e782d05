//! Industry beta tables from a whole market: every security of a price panel estimated as a
//! case would estimate a peer, unlevered with its own capital structure, and aggregated by
//! industry.
//!
//! [`load_inputs`] reads the universe file's data (index, risk-free series, panel, attributes);
//! [`evaluate`] is a function of what was read: the shared window once
//! ([`estimate::Estimation`]), every security in parallel through the estimate layer, the
//! adjustment over the cross-section, the rows ([`securities::security_row`]) and the industry
//! table ([`industries::industry_table`]), all in one [`UniverseResult`] that every output
//! renders.

pub mod estimate;
pub mod industries;
pub(crate) mod notes;
pub mod peer_set;
pub mod securities;
pub mod settings;

pub use notes::first_ids;

use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::Mutex;

use chrono::NaiveDate;
use rayon::prelude::*;
use serde::Serialize;

use crate::beta::diagnostics::PeerFlag;
use crate::beta::rolling::RollingPoint;
use crate::beta::{self, vasicek, AdjustedBeta, Adjustment};
use crate::error::{Error, Result};
use crate::io::series::{iso_date, read_series_file, DataFile, SeriesView, ValueKind};
use crate::panel::attributes::{read_attributes, Attributes, AttributesFile};
use crate::panel::{read_panel_handing_out, Panel, PanelFile, SecurityHook};
use estimate::{
    EarlyEstimate, EarlyEstimates, Estimation, NotEstimated, SecurityEstimate, WindowRecord,
};
use industries::IndustryResult;
use securities::{security_row, Missing, RowSettings, SecurityResult};
use settings::{Universe, UniverseFile};

/// Version of the universe `result.json` layout.
pub const SCHEMA_VERSION: u32 = 1;

/// A universe file with every table it names, read and checked.
#[derive(Debug, Clone)]
pub struct UniverseInputs {
    pub universe: Universe,
    pub index: DataFile,
    pub risk_free: Option<DataFile>,
    pub panel: Panel,
    pub attributes: Attributes,
    /// Securities estimated while the panel was read; [`evaluate`] uses those that hold.
    pub early: EarlyEstimates,
}

/// The index or the risk-free series: a file of its own (`prices` or `yields` with its value
/// column), or a column of a `[sources]` table (`source` and `column`), as a case reads it.
fn read_market_series(
    universe: &Universe,
    role: &str,
    (file, value_column): (&str, &str),
    (source, column, date_column): (&Option<String>, &Option<String>, &str),
    kind: ValueKind,
) -> Result<DataFile> {
    match (source, column) {
        (Some(source), Some(column)) => {
            let table = &universe.settings.sources[source];
            crate::io::tables::PriceTable::read(
                &table.file,
                &universe.resolve(&table.file),
                table.request(),
            )?
            .series(role, column, kind)
        }
        _ => {
            let (section, value_key) = match kind {
                ValueKind::Price => ("market.index", "price_column"),
                ValueKind::Yield => ("market.risk_free_series", "yield_column"),
            };
            read_series_file(
                role,
                file,
                &universe.resolve(file),
                date_column,
                value_column,
                kind,
            )
            .map_err(|e| {
                crate::case::sources::name_the_column_key(
                    e,
                    (section, ""),
                    (value_key, value_column),
                )
            })
        }
    }
}

/// Reads every table the universe file names, resolving paths against its folder. The
/// securities of a panel grouped by security are estimated while it is read (kept in
/// `early`, which [`evaluate`] uses where they hold).
pub fn load_inputs(universe: Universe) -> Result<UniverseInputs> {
    let settings = &universe.settings;
    let index_spec = &settings.market.index;
    let index = read_market_series(
        &universe,
        "index",
        (&index_spec.prices, &index_spec.price_column),
        (
            &index_spec.source,
            &index_spec.column,
            &index_spec.date_column,
        ),
        ValueKind::Price,
    )?;
    // One bad index price would move every beta: refused as a case refuses it, naming the
    // line, unless `market.index.accept_jumps` accepts the date.
    crate::valuation::sanity::check_jumps(
        &universe.resolve(&index.path),
        "market.index",
        &index,
        &index_spec.accept_jumps,
    )?;
    let risk_free = match &settings.market.risk_free_series {
        Some(spec) => Some(read_market_series(
            &universe,
            "risk_free",
            (&spec.yields, &spec.yield_column),
            (&spec.source, &spec.column, &spec.date_column),
            ValueKind::Yield,
        )?),
        None => None,
    };
    let attributes_spec = &settings.attributes;
    // The small table first: a bad attribute is reported before the panel's seconds of reading.
    let attributes = read_attributes(
        &attributes_spec.file,
        &universe.resolve(&attributes_spec.file),
        &attributes_spec.columns(),
    )?;
    let (spec, rolling) = (settings.estimation_spec(), settings.universe.rolling);
    let estimation = Estimation::new(
        spec.clone(),
        index.series.view(),
        risk_free.as_ref().map(|f| f.series.view()),
        rolling,
    );
    // A short or flat index is refused before the panel's seconds of reading, naming it.
    if let Some(message) =
        estimate::index_refusal(&estimation, settings.beta.min_observations, &index)
    {
        return Err(Error::DataFile {
            file: universe.resolve(&index.path),
            message,
        });
    }
    let (panel, found) = read_panel_estimating(&universe, &estimation)?;
    let listed = &universe.settings.universe.peer_set;
    // A peer set given by --set is blamed on it (found by review: on the file).
    peer_set::check(listed, panel.securities())
        .map_err(|message| crate::case::blamed(&universe.path, &universe.overrides, message))?;
    Ok(UniverseInputs {
        early: EarlyEstimates::new(spec, rolling, found),
        universe,
        index,
        risk_free,
        panel,
        attributes,
    })
}

/// Reads the panel; the securities of a file grouped by security are estimated while it is
/// read, and returned with their number of prices.
fn read_panel_estimating(
    universe: &Universe,
    estimation: &Estimation,
) -> Result<(Panel, Vec<EarlyEstimate>)> {
    let found = Mutex::new(Vec::new());
    let finished = AtomicUsize::new(0);
    // A file grouped by security hands each security over as soon as its rows are complete:
    // they are estimated on rayon's threads, one task per block, while polars parses the later
    // rows.
    let panel = rayon::in_place_scope(|scope| {
        let (found, finished) = (&found, &finished);
        let take = move |batch: &[(&str, SeriesView<'_>)]| {
            let owned: Vec<(String, Vec<NaiveDate>, Vec<f64>)> = (batch.iter())
                .map(|(id, s)| (id.to_string(), s.dates.to_vec(), s.values.to_vec()))
                .collect();
            scope.spawn(move |_| {
                let estimated: Vec<_> = owned
                    .into_iter()
                    .map(|(security, dates, prices)| {
                        let series = SeriesView {
                            dates: &dates,
                            values: &prices,
                        };
                        (security, prices.len(), estimation.security(series))
                    })
                    .collect();
                finished.fetch_add(estimated.len(), Ordering::Relaxed);
                let mut found = found.lock().unwrap_or_else(|e| e.into_inner());
                found.extend(estimated);
            });
        };
        read_panel_handing_out(
            &universe.settings.panel.prices,
            &universe.resolve(&universe.settings.panel.prices),
            &universe.settings.panel.columns(),
            Some(SecurityHook {
                take: &take,
                finished,
            }),
        )
    })?;
    Ok((panel, found.into_inner().unwrap_or_else(|e| e.into_inner())))
}

/// The tool that produced a result.
#[derive(Debug, Clone, Serialize)]
pub struct ToolInfo {
    pub name: &'static str,
    pub version: &'static str,
}

/// Where the universe file came from.
#[derive(Debug, Clone, Serialize)]
pub struct UniverseRecord {
    pub file: String,
    pub sha256: String,
    pub overrides: Vec<String>,
    pub title: String,
    #[serde(serialize_with = "iso_date")]
    pub valuation_date: NaiveDate,
}

/// The files read, with their hashes.
#[derive(Debug, Clone, Serialize)]
pub struct Files {
    pub index: DataFile,
    pub risk_free: Option<DataFile>,
    pub panel: PanelFile,
    pub attributes: AttributesFile,
}

/// How many securities went where.
#[derive(Debug, Clone, Serialize)]
pub struct Counts {
    /// Securities with at least one price in the panel.
    pub securities: usize,
    /// Estimated and not excluded.
    pub estimated: usize,
    /// Of those, the securities without an industry: they enter no industry's aggregates.
    pub estimated_without_industry: usize,
    /// Of the estimated and not excluded, those carrying each flag (they are aggregated).
    pub flagged: std::collections::BTreeMap<&'static str, usize>,
    /// Of the estimated and not excluded, those carrying any flag.
    pub flagged_total: usize,
    pub not_estimated: std::collections::BTreeMap<&'static str, usize>,
    /// Not estimated, whatever the reason.
    pub not_estimated_total: usize,
    /// Estimated but excluded by `beta.exclude_flags`.
    pub excluded: usize,
    /// Of those, the securities carrying each listed flag (a security can carry several).
    pub excluded_by_flag: std::collections::BTreeMap<&'static str, usize>,
    /// Securities lacking a figure, by figure (a security can lack several).
    pub missing: std::collections::BTreeMap<&'static str, usize>,
    /// Securities with an unlevered beta.
    pub unlevered: usize,
    /// Attribute rows whose security the panel does not hold.
    pub attributes_not_in_panel: usize,
}

/// Every figure of one universe run and every input that produced it.
#[derive(Debug, Clone, Serialize)]
pub struct UniverseResult {
    pub schema_version: u32,
    /// `universe`, so a reader of `result.json` can tell it from a case's.
    pub kind: &'static str,
    pub tool: ToolInfo,
    pub generated_at: String,
    pub universe: UniverseRecord,
    /// The resolved universe settings, every default written out.
    pub settings: UniverseFile,
    pub files: Files,
    pub window: WindowRecord,
    pub estimator: beta::EstimatorRecord,
    pub formula_source: &'static str,
    pub formula_expression: &'static str,
    pub vasicek_prior: Option<vasicek::Prior>,
    pub counts: Counts,
    /// Plain-language remarks a reviewer should see (attributes without prices, …).
    pub notes: Vec<String>,
    pub industries: Vec<IndustryResult>,
    /// The listed peer set beside its industry, when `universe.peer_set` lists one.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub peer_set: Option<peer_set::PeerSetResult>,
    /// One row per security, in id order: written whole to `securities.csv`; `result.json`
    /// records each one's id, industry, observations, beta, standard error, unlevered beta and
    /// why it was not estimated ([`security_figures`]), so `hurdle verify` names the
    /// securities whose figures moved.
    #[serde(serialize_with = "security_figures")]
    pub securities: Vec<SecurityResult>,
    /// Each security's rolling betas when `universe.rolling` (written to `rolling.csv`).
    #[serde(skip)]
    pub rolling: Vec<Vec<RollingPoint>>,
}

/// The figures of each security `result.json` records (see [`UniverseResult::securities`]).
fn security_figures<S: serde::Serializer>(
    securities: &[SecurityResult],
    serializer: S,
) -> std::result::Result<S::Ok, S::Error> {
    #[derive(Serialize)]
    struct Figures<'a> {
        security: &'a str,
        industry: Option<&'a str>,
        observations: Option<usize>,
        beta: Option<f64>,
        beta_std_error: Option<f64>,
        unlevered_beta: Option<f64>,
        not_estimated: Option<&'static str>,
        // The attributes the unlevering read and the flags, so `verify` names the security
        // whose figures moved (found by review: a changed cash figure showed only as moved
        // industry statistics). Since 0.14.0.
        equity_value: Option<f64>,
        debt: Option<f64>,
        cash: Option<f64>,
        tax_rate: Option<f64>,
        flags: Vec<&'static str>,
        excluded_reason: Option<&'a str>,
    }
    serializer.collect_seq(securities.iter().map(|s| Figures {
        security: &s.security,
        industry: s.industry.as_deref(),
        observations: s.observations,
        beta: s.estimate.as_ref().map(|e| e.beta),
        beta_std_error: s.estimate.as_ref().map(|e| e.beta_std_error),
        unlevered_beta: s.unlevered_beta,
        not_estimated: s.not_estimated.map(NotEstimated::name),
        equity_value: s.equity_value,
        debt: s.debt,
        cash: s.cash,
        tax_rate: s.tax_rate,
        flags: s.flags.iter().map(|f| f.name()).collect(),
        excluded_reason: s.excluded_reason.as_deref(),
    }))
}

/// Every security of the panel estimated, in parallel, in panel order, but for those `early`
/// holds already. A stop request (Ctrl-C) ends the run between two securities, with nothing
/// written.
fn estimate_all(
    panel: &Panel,
    estimation: &Estimation,
    early: Vec<Option<SecurityEstimate>>,
    progress: &(dyn Fn(usize) + Sync),
) -> Result<Vec<SecurityEstimate>> {
    let done = early.iter().filter(|e| e.is_some()).count();
    if done > 0 {
        progress(done);
    }
    early
        .into_par_iter()
        .enumerate()
        .map(|(i, early)| match early {
            Some(estimate) => Ok(estimate),
            None => {
                crate::progress::check_stop()?;
                let estimate = estimation.security(panel.series(i));
                progress(1);
                Ok(estimate)
            }
        })
        .collect()
}

/// Computes the universe's tables. `progress(n)` is called as securities are estimated (from
/// several threads); `generated_at` is stamped into the result as given.
pub fn evaluate(
    inputs: &UniverseInputs,
    generated_at: &str,
    progress: &(dyn Fn(usize) + Sync),
) -> Result<UniverseResult> {
    let settings = &inputs.universe.settings;
    let (spec, rolling) = (settings.estimation_spec(), settings.universe.rolling);
    let early = inputs.early.for_panel(&inputs.panel, &spec, rolling);
    let estimation = Estimation::new(
        spec,
        inputs.index.series.view(),
        inputs.risk_free.as_ref().map(|f| f.series.view()),
        rolling,
    );
    check_overlap(inputs, &estimation)?;
    check_attributes_match(inputs)?;
    let panel = &inputs.panel;
    let estimates = estimate_all(panel, &estimation, early, progress)?;
    let (adjusted, vasicek_prior) = adjust(&inputs.universe, &estimates)?;
    let row_settings = RowSettings {
        leverage: &settings.leverage,
        cash_column: settings.attributes.cash_column.is_some(),
        periods_in_window: estimation.window().period_ends().len(),
        window: (estimation.window().start(), estimation.window().end()),
    };
    let (securities, rolling) = rows(inputs, (estimates, adjusted), &row_settings);
    let adjusted_betas = settings.beta.adjustment != Adjustment::None;
    let industries = industries::industry_table(&securities, &settings.leverage, adjusted_betas);
    let peer_set = peer_set::peer_set(
        &settings.universe.peer_set,
        &securities,
        &industries,
        (&settings.leverage, adjusted_betas),
    );
    let (counts, notes) =
        notes::counts_and_notes(inputs, (&securities, &industries), estimation.window());
    Ok(UniverseResult {
        schema_version: SCHEMA_VERSION,
        kind: "universe",
        tool: ToolInfo {
            name: env!("CARGO_PKG_NAME"),
            version: env!("CARGO_PKG_VERSION"),
        },
        generated_at: generated_at.to_string(),
        universe: UniverseRecord {
            file: inputs.universe.path.display().to_string(),
            sha256: inputs.universe.sha256.clone(),
            overrides: inputs.universe.overrides.clone(),
            title: settings.universe.title.clone(),
            valuation_date: settings.universe.valuation_date.0,
        },
        settings: settings.clone(),
        files: Files {
            index: inputs.index.clone(),
            risk_free: inputs.risk_free.clone(),
            panel: panel.file.clone(),
            attributes: inputs.attributes.file.clone(),
        },
        window: estimation.record(),
        estimator: beta::describe(&settings.estimator_spec(), "security"),
        formula_source: settings.leverage.formula.citation(),
        formula_expression: settings.leverage.formula.expression(),
        vasicek_prior,
        counts,
        notes,
        industries,
        peer_set,
        securities,
        rolling,
    })
}

/// Each security's row and rolling betas, from its estimate and its adjusted beta, in
/// parallel (each row reads its prices again for their patterns: a serial 30–60 ms at the end
/// of the benchmark's run), in panel order.
fn rows(
    inputs: &UniverseInputs,
    (estimates, adjusted): (Vec<SecurityEstimate>, Vec<Option<AdjustedBeta>>),
    row_settings: &RowSettings<'_>,
) -> (Vec<SecurityResult>, Vec<Vec<RollingPoint>>) {
    let panel = &inputs.panel;
    estimates
        .into_par_iter()
        .zip(adjusted)
        .enumerate()
        .map(|(i, (estimate, adjusted))| {
            let id = &panel.securities()[i];
            let row = security_row(
                id,
                panel.series(i),
                &estimate,
                adjusted.as_ref(),
                inputs.attributes.get(id),
                row_settings,
            );
            (row, estimate.rolling)
        })
        .unzip()
}

/// A panel that shares no dates with the index inside the window is an input error, not a
/// table of securities without estimates.
fn check_overlap(inputs: &UniverseInputs, estimation: &Estimation) -> Result<()> {
    let panel = &inputs.panel.file;
    let index = &inputs.index;
    let window = estimation.window();
    let from = panel.first_date.max(index.first_date);
    let to = panel.last_date.min(index.last_date);
    if from < to && from <= window.end() && to >= window.start() {
        return Ok(());
    }
    Err(Error::DataFile {
        file: inputs.universe.resolve(&panel.path),
        message: format!(
            "the panel's prices ({} to {}) do not overlap the index's ({}, {} to {}) inside the \
             return window ({} to {}): no security can be estimated",
            panel.first_date,
            panel.last_date,
            index.path,
            index.first_date,
            index.last_date,
            window.start(),
            window.end()
        ),
    })
}

/// An attributes table none of whose ids is a panel security (or with no rows at all) leaves
/// every security without an industry: an input error, not an empty industry table (found by
/// review: such a run ended with exit 0 and a header-only industries.csv). The message names
/// both files' first ids and, where they match but for capitals, accents' encoding or leading
/// zeros, says so.
fn check_attributes_match(inputs: &UniverseInputs) -> Result<()> {
    let (attributes, panel) = (&inputs.attributes, inputs.panel.securities());
    if panel.iter().any(|id| attributes.get(id).is_some()) {
        return Ok(());
    }
    let ids: Vec<&str> = (attributes.records().iter())
        .map(|r| r.security.as_str())
        .collect();
    let message = match ids.len() {
        0 => "holds no rows below its header: a security enters an industry through its row \
              (industry, equity value, debt, tax rate)"
            .to_string(),
        n => format!(
            "none of its {n} security ids ({}) is a security of the panel {} ({}){}; the ids \
             are read from the column `{}`",
            notes::first_ids(&ids),
            inputs.universe.resolve(&inputs.panel.file.path).display(),
            notes::first_ids(&panel.iter().map(String::as_str).collect::<Vec<_>>()),
            notes::case_twins(&ids, panel),
            inputs.universe.settings.attributes.security_column
        ),
    };
    Err(Error::DataFile {
        file: inputs.universe.resolve(&attributes.file.path),
        message,
    })
}

/// `beta.adjustment` over every estimated security (Vasicek's prior from the cross-section of
/// those not excluded, the whole universe, unless stated): one entry per security, `None` for
/// those not estimated.
fn adjust(
    universe: &Universe,
    estimates: &[SecurityEstimate],
) -> Result<(Vec<Option<AdjustedBeta>>, Option<vasicek::Prior>)> {
    let settings = &universe.settings;
    let estimated: Vec<&estimate::Estimated> = estimates
        .iter()
        .filter_map(|e| e.outcome.as_ref().ok())
        .collect();
    let raw: Vec<(f64, f64)> = estimated
        .iter()
        .map(|e| (e.estimate.beta, e.estimate.beta_std_error))
        .collect();
    let included: Vec<bool> = estimated
        .iter()
        .map(|e| e.excluding_flags.is_empty())
        .collect();
    let beta = &settings.beta;
    let stated = beta.vasicek_prior_mean.zip(beta.vasicek_prior_variance);
    let (adjusted, prior) =
        beta::adjust_all(beta.adjustment, beta.blume_weight, stated, &raw, &included).map_err(
            // The universe's setting, blamed on the --set that gave it (found by review: it
            // was put down to a security named "(all securities)").
            |problem| {
                let message = crate::case::wording::prior_unavailable(problem, "securities");
                crate::case::blamed(&universe.path, &universe.overrides, message)
            },
        )?;
    let mut adjusted = adjusted.into_iter();
    let per_security = estimates
        .iter()
        .map(|e| {
            e.outcome
                .is_ok()
                .then(|| adjusted.next().expect("one per estimate"))
        })
        .collect();
    Ok((per_security, prior))
}

/// The flags a security can raise, in the order outputs list them.
pub const FLAGS: [PeerFlag; 5] = [
    PeerFlag::TooFewObservations,
    PeerFlag::LowRSquared,
    PeerFlag::StalePrices,
    PeerFlag::ZeroReturns,
    PeerFlag::LaggedResponse,
];

/// "1 security", "2 securities": a count of securities for a note or a summary line.
pub fn securities_count(n: usize) -> String {
    match n {
        1 => "1 security".to_string(),
        _ => format!("{n} securities"),
    }
}
