//! One case valued: a validated case and its data files in, one [`Valuation`] out.
//!
//! [`load_inputs`] does all the reading (and hashing). [`estimate_peers`] estimates every peer
//! once through `estimate`; [`value_with`] turns those estimates into the cost of capital through
//! `capital::chain` and builds the records. A what-if that does not change the estimation spec
//! (rates, premiums, structure, tax, cost of debt, formula, aggregation, adjustment) reuses the
//! estimates. Every output renders the one [`Valuation`] and computes nothing of its own.

pub mod analyses;
mod build;
pub mod listing;
pub mod records;

use std::path::PathBuf;

use chrono::NaiveDate;

pub use analyses::{Bridge, Grid, Uncertainty};
pub use build::{chain_error, chain_peers, cost_of_capital, exclusions, peer_results, value_with};
pub use records::*;

use crate::capital::debt::SpreadTable;
use crate::case::{specs, Case, DebtSource};
use crate::error::{Error, Result};
use crate::estimate::{
    self, EstimateError, EstimationSpec, MarketReturns, SecurityEstimate, Window,
};
use crate::io::series::{read_series_file, DataFile, ValueKind};
use crate::io::spread_table::read_spread_table;

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
    load(case, true)
}

/// Reads what estimating the peers needs: the price files and yields, no spread table.
pub fn load_price_inputs(case: Case) -> Result<Inputs> {
    load(case, false)
}

fn load(case: Case, with_debt_table: bool) -> Result<Inputs> {
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
        _ if !with_debt_table => None,
        DebtSource::Given => None,
        DebtSource::Rating | DebtSource::Coverage => {
            let (written, coverage) = match debt_settings.source {
                DebtSource::Rating => (&debt_settings.rating_table, false),
                _ => (&debt_settings.coverage_table, true),
            };
            let written = written.as_deref().expect("validate() requires the table");
            Some(read_spread_table(
                written,
                &case.resolve(written),
                coverage,
            )?)
        }
    };
    Ok(Inputs {
        case,
        index,
        risk_free,
        peers,
        debt_table,
    })
}

/// Every peer's estimate under one estimation spec, made once and shared by every what-if that
/// leaves the spec unchanged.
#[derive(Debug, Clone)]
pub struct PeerEstimates {
    pub spec: EstimationSpec,
    /// The first and last sample points of the window.
    pub window_start: NaiveDate,
    pub window_end: NaiveDate,
    /// Whether returns are in excess of the risk-free series.
    pub excess_returns: bool,
    /// In the order of the case's peers.
    pub peers: Vec<SecurityEstimate>,
    /// Remarks about the data (window end, dropped and stale periods), in peer order.
    pub notes: Vec<String>,
    /// The price files estimated, to tell whether a what-if reads other files.
    files: Vec<PathBuf>,
}

impl PeerEstimates {
    /// Whether these estimates are what `case` would estimate on `inputs`' files.
    pub fn fit(&self, case: &Case) -> bool {
        self.spec == specs::estimation(&case.settings) && self.files == price_files(case)
    }
}

/// The price files a case estimates from, resolved.
fn price_files(case: &Case) -> Vec<PathBuf> {
    let market = &case.settings.market;
    std::iter::once(&market.index.prices)
        .chain(market.risk_free_series.iter().map(|s| &s.yields))
        .chain(case.settings.peers.iter().map(|p| &p.prices))
        .map(|written| case.resolve(written))
        .collect()
}

/// Estimates every peer of `case` on the data files of `inputs`.
pub fn estimate_peers(case: &Case, inputs: &Inputs) -> Result<PeerEstimates> {
    let settings = &case.settings;
    let spec = specs::estimation(settings);
    let window = Window::new(&spec);
    let market = MarketReturns::new(
        &spec,
        &window,
        inputs.index.series.view(),
        inputs.risk_free.as_ref().map(|f| f.series.view()),
    );
    let valuation_date = settings.case.valuation_date.0;
    let mut notes = Vec::new();
    if window.end() != valuation_date {
        notes.push(format!(
            "The valuation date {valuation_date} is not a period end; the return window ends at \
             {}, the last period end before it.",
            window.end()
        ));
    }
    let mut peers = Vec::with_capacity(settings.peers.len());
    for (peer, file) in settings.peers.iter().zip(&inputs.peers) {
        let estimated = estimate::estimate_security(&spec, &window, &market, file.series.view())
            .map_err(|failure| Error::Estimation {
                peer: peer.name.clone(),
                message: failure_message(&failure, &spec, &window, file, &inputs.index),
            })?;
        notes.extend(data_notes(&peer.name, &estimated, &spec));
        peers.push(estimated);
    }
    Ok(PeerEstimates {
        window_start: window.start(),
        window_end: window.end(),
        excess_returns: market.excess(),
        spec,
        peers,
        notes,
        files: price_files(case),
    })
}

/// Why a peer could not be estimated, with the file and the window.
fn failure_message(
    failure: &EstimateError,
    spec: &EstimationSpec,
    window: &Window,
    file: &DataFile,
    index: &DataFile,
) -> String {
    match failure {
        EstimateError::TooFewReturns { usable, dropped: d } => format!(
            "{usable} usable returns in the window of {} periods from {} to {} (dropped {}: \
             peer price missing {}, index price missing {}, risk-free missing {}); \
             beta.min_observations = {}. Prices in {} run from {} to {}.",
            window.period_ends().len(),
            window.start(),
            window.end(),
            d.total,
            d.asset_missing,
            d.market_missing,
            d.risk_free_missing,
            spec.min_observations,
            file.path,
            file.first_date,
            file.last_date
        ),
        EstimateError::FlatIndex { periods } => format!(
            "the market index returns ({}) have zero variance over the {periods} periods aligned \
             with this peer, so no beta can be estimated",
            index.path
        ),
        EstimateError::Estimator(message) => message.clone(),
    }
}

/// The notes a reviewer should see about one peer's data: periods dropped and stale prices.
fn data_notes(name: &str, estimated: &SecurityEstimate, spec: &EstimationSpec) -> Vec<String> {
    let mut notes = Vec::new();
    let d = estimated.dropped;
    if d.total > 0 {
        notes.push(format!(
            "{name}: {} of {} periods dropped (peer price missing {}, index price missing {}, \
             risk-free missing {}).",
            d.total,
            estimated.periods_in_window,
            d.asset_missing,
            d.market_missing,
            d.risk_free_missing
        ));
    }
    if d.asset_stale + d.market_stale > 0 {
        notes.push(format!(
            "{name}: {} periods with a stale peer price and {} with a stale index price \
             (older than beta.max_stale_days = {}) were dropped.",
            d.asset_stale,
            d.market_stale,
            spec.max_stale_days.unwrap_or_default()
        ));
    }
    notes
}

/// Computes the valuation of the inputs' case. `generated_at` is stamped into the result as given.
pub fn value(inputs: &Inputs, generated_at: &str) -> Result<Valuation> {
    value_case(&inputs.case, inputs, generated_at)
}

/// Computes the valuation of `case` (the inputs' case, or a copy with overrides) on the data
/// files of `inputs`, estimating its peers.
pub fn value_case(case: &Case, inputs: &Inputs, generated_at: &str) -> Result<Valuation> {
    let estimates = estimate_peers(case, inputs)?;
    value_with(case, inputs, &estimates, generated_at)
}

/// The estimates `case` needs: `known` when they fit it, else estimated afresh.
pub fn estimates_for<'a>(
    case: &Case,
    inputs: &Inputs,
    known: &'a PeerEstimates,
) -> Result<std::borrow::Cow<'a, PeerEstimates>> {
    if known.fit(case) {
        Ok(std::borrow::Cow::Borrowed(known))
    } else {
        Ok(std::borrow::Cow::Owned(estimate_peers(case, inputs)?))
    }
}
