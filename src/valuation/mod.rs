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
mod notes;
pub mod records;
pub mod sanity;

use chrono::NaiveDate;

pub use analyses::{Bridge, Grid, RefusedCell, Uncertainty};
pub use build::{chain_error, chain_peers, cost_of_capital, exclusions, peer_results, value_with};
pub use notes::{plausibility, Figures};
pub use records::*;

use crate::beta::diagnostics::LagResponse;
use crate::capital::debt::SpreadTable;
use crate::case::{specs, Case, DebtSource};
use crate::error::{Error, Result};
use crate::estimate::{self, EstimationSpec, MarketReturns, SecurityEstimate, Window};
use crate::io::series::DataFile;
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
    /// What reading the case's wide tables saw but does not act on (a hidden sheet, a filter).
    pub table_notes: Vec<String>,
    /// The risk-free series' median yield, which every what-if's rate is checked against
    /// (`sanity::check_rate_against_yields`): computed once, not for each grid cell.
    pub risk_free_median: Option<f64>,
}

/// Reads every data file a case names, resolving paths against the case file's folder.
pub fn load_inputs(case: Case) -> Result<Inputs> {
    load(case, true)
}

/// Reads what estimating the peers needs: the price files and yields, no spread table.
pub fn load_price_inputs(case: Case) -> Result<Inputs> {
    load(case, false)
}

/// Reads what a beta listing needs: the price files and yields, and the spread table only when an
/// unlevered beta reads the subject's cost of debt from it (Miles–Ezzell, or a debt beta from the
/// credit spread, for a peer without its own figure).
pub fn load_listing_inputs(case: Case) -> Result<Inputs> {
    let settings = &case.settings;
    let needs = crate::capital::chain::unlevering_needs_subject_cost_of_debt(
        settings.leverage.formula,
        settings.leverage.debt_beta_source,
        settings.peers.iter().map(|p| (p.cost_of_debt, p.debt_beta)),
    );
    load(case, needs)
}

fn load(case: Case, with_debt_table: bool) -> Result<Inputs> {
    let settings = &case.settings;
    // Own files or columns of wide tables (`[sources]`); each table is read once.
    let crate::case::sources::SeriesRead {
        index,
        risk_free,
        peers,
        notes: table_notes,
    } = crate::case::sources::read_series(&case)?;
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
    let risk_free_median =
        (risk_free.as_ref()).map(|yields| crate::stats::dispersion(&yields.series.values).median);
    let inputs = Inputs {
        case,
        index,
        risk_free,
        risk_free_median,
        peers,
        debt_table,
        table_notes,
    };
    sanity::check_inputs(&inputs)?;
    Ok(inputs)
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
    /// The settings the estimates were made under, to tell whether a what-if reads other data.
    settings: crate::case::CaseFile,
}

impl PeerEstimates {
    /// Whether these estimates are what `case` would estimate on `inputs`' files.
    pub fn fit(&self, case: &Case) -> bool {
        self.spec == specs::estimation(&case.settings)
            && crate::case::sources::same_data(&self.settings, &case.settings)
    }
}

/// Estimates every peer of `case` on the data files of `inputs`.
pub fn estimate_peers(case: &Case, inputs: &Inputs) -> Result<PeerEstimates> {
    estimate_peers_under(case, inputs, specs::estimation(&case.settings))
}

/// As [`estimate_peers`], with only what the WACC needs: for a what-if that reads nothing else
/// (the specification range). No rolling betas (the windows would cost more than the
/// regression itself), no influence terms and no fitted line, and no regression on the previous
/// period's index return unless `beta.exclude_flags` lists its flag; every statistic the chain
/// reads is the same.
pub fn estimate_peers_for_wacc(case: &Case, inputs: &Inputs) -> Result<PeerEstimates> {
    let mut spec = specs::estimation(&case.settings);
    spec.rolling_betas = false;
    spec.case_extras = false;
    let lagged = crate::beta::diagnostics::PeerFlag::LaggedResponse;
    spec.lag_response = spec.flags.exclude.contains(&lagged);
    estimate_peers_under(case, inputs, spec)
}

fn estimate_peers_under(
    case: &Case,
    inputs: &Inputs,
    spec: EstimationSpec,
) -> Result<PeerEstimates> {
    let settings = &case.settings;
    let window = Window::new(&spec);
    let market = MarketReturns::new(
        &spec,
        &window,
        inputs.index.series.view(),
        inputs.risk_free.as_ref().map(|f| f.series.view()),
    );
    let bounds = (window.start(), window.end());
    sanity::check_index_returns(case, &inputs.index, market.window_returns(&window), bounds)?;
    let mut notes = window_notes(case, inputs, &window);
    let mut peers = Vec::with_capacity(settings.peers.len());
    for (peer, file) in settings.peers.iter().zip(&inputs.peers) {
        let estimated = estimate::estimate_security(&spec, &window, &market, file.series.view())
            .map_err(|failure| Error::Estimation {
                peer: peer.name.clone(),
                message: notes::failure_message(&failure, &spec, &window, file, &inputs.index),
            })?;
        let index = inputs.index.series.view();
        let same = estimate::same_prices_as_index(file.series.view(), index, bounds);
        let copy = estimated.copies_index() || same.is_some();
        match sanity::check_peer_fit(&estimated, (&inputs.index.path, same), &file.path) {
            // A copy of the index the case already leaves out is listed, not refused: its
            // figures are finite, and it enters no aggregate.
            Err(message) if copy && peer.exclude.is_some() => {
                notes.push(format!(
                    "{}: {message}; it is listed but left out, as the case says.",
                    peer.name
                ));
            }
            Err(message) => {
                let remedy = match copy {
                    true => {
                        "; remove the peer, or give it `exclude = \"…\"` to list it without \
                             aggregating it"
                    }
                    false => "",
                };
                return Err(Error::Estimation {
                    peer: peer.name.clone(),
                    message: format!("{message}{remedy}"),
                });
            }
            Ok(()) => {}
        }
        let explained = notes.iter().any(|n| n.contains(TWO_RETURNS));
        notes.extend(data_notes(&peer.name, &estimated, &spec, explained));
        peers.push(estimated);
    }
    let names: Vec<&str> = settings.peers.iter().map(|p| p.name.as_str()).collect();
    notes.extend(rolling_shift_notes(
        &names,
        &peers,
        spec.estimator.std_errors,
    ));
    notes.extend(lagged_response_notes(&names, &peers, &spec));
    Ok(PeerEstimates {
        window_start: window.start(),
        window_end: window.end(),
        excess_returns: market.excess(),
        spec,
        peers,
        notes,
        settings: case.settings.clone(),
    })
}

/// The notes on the window and the files before any peer's own: the settings that set or do
/// not touch the window, the index's coverage, where the window ends against the valuation
/// date, and files left behind.
fn window_notes(case: &Case, inputs: &Inputs, window: &Window) -> Vec<String> {
    let settings = &case.settings;
    let valuation_date = settings.case.valuation_date.0;
    let mut notes: Vec<String> = crate::case::sanity::window_note(&settings.beta)
        .into_iter()
        .chain(crate::case::sanity::unused_beta_notes(&settings.beta))
        .chain(crate::case::sources::unused_source_notes(settings))
        .chain(inputs.table_notes.iter().cloned())
        .collect();
    notes.extend(crate::case::sanity::index_coverage_note(
        &inputs.index,
        window,
        "peer",
        "periods_dropped.market_missing",
    ));
    let bounds = (window.start(), window.end());
    let mut gaps: Vec<f64> = (inputs.peers.iter())
        .filter_map(|p| crate::case::sanity::prices::mean_gap(&p.series.dates, bounds))
        .collect();
    gaps.sort_by(f64::total_cmp);
    let median_peer = gaps.get(gaps.len() / 2).copied();
    notes.extend(crate::case::sanity::index_cadence_note(
        &inputs.index,
        window,
        (median_peer, "median peer"),
    ));
    notes.extend(crate::case::sanity::short_window_note(
        (window.start(), window.end()),
        window.period_ends().len(),
        &settings.beta,
    ));
    notes.extend(crate::case::sanity::window_end_note(
        &settings.beta,
        valuation_date,
        window.end(),
    ));
    let peer_files: Vec<(&str, &DataFile)> = (settings.peers.iter())
        .zip(&inputs.peers)
        .map(|(peer, file)| (peer.name.as_str(), file))
        .collect();
    let frequency = settings.beta.frequency;
    let cadence =
        crate::case::sanity::peer_cadence_note(&peer_files, &inputs.index, window, frequency);
    notes.extend(cadence);
    notes.extend(crate::case::sanity::file_end_notes(
        &inputs.index,
        inputs.risk_free.as_ref(),
        &peer_files,
        window.period_ends(),
        (valuation_date, settings.beta.max_stale_days),
    ));
    let index_file = [("The index", &inputs.index)];
    notes.extend(crate::case::sanity::price_pattern_notes(
        &[&index_file[..], &peer_files].concat(),
        (window.start(), window.end()),
    ));
    notes
}

/// Why a missing price costs two returns: said once, in the first note that needs it.
const TWO_RETURNS: &str = " A return needs a price at both ends of its period: a price missing \
                           inside the window costs two returns, one missing before the data \
                           start or after they end one each.";

/// The periods a peer lost, by reason, when it lost any.
fn dropped_note(name: &str, estimated: &SecurityEstimate, explained: bool) -> Option<String> {
    let d = estimated.dropped;
    (d.total > 0).then(|| {
        // Dimson and Scholes–Williams also drop a period whose lagged or led index return is
        // missing; named only then, so the reasons add up to the total.
        let shifted = match d.shifted_market_missing {
            0 => String::new(),
            n => format!(", lagged or led index return missing {n}"),
        };
        // A missing price inside the window loses two returns: the one into its period and
        // the one out of it.
        let why = match (d.asset_missing + d.market_missing, explained) {
            (0, _) | (_, true) => "",
            _ => TWO_RETURNS,
        };
        // A stale sample is dropped as missing; said beside its count, so the reader does not
        // look for a gap in a file that has a price on every day (found by review).
        let of_which = |missing: usize, stale: usize| match stale {
            0 => missing.to_string(),
            n => format!("{missing}, {n} of them for a stale price"),
        };
        // A period missing from several files counts under each (found by review: "1 of 60
        // periods dropped (peer price missing 1, index price missing 1, risk-free missing 1)").
        let reasons =
            d.asset_missing + d.market_missing + d.risk_free_missing + d.shifted_market_missing;
        let overlap = match reasons > d.total {
            true => "; a period can count under several reasons",
            false => "",
        };
        format!(
            "{name}: {} of {} periods dropped (peer price missing {}, index price missing {}, \
             risk-free missing {}{shifted}{overlap}).{why}",
            d.total,
            estimated.periods_in_window,
            of_which(d.asset_missing, d.asset_stale),
            of_which(d.market_missing, d.market_stale),
            d.risk_free_missing
        )
    })
}

/// A note for each peer whose first and last rolling betas differ by more than their errors
/// allow: the two-sample t of [`crate::beta::rolling::first_to_last_z`] at the smaller window's
/// degrees of freedom, its two-sided p-value adjusted for the number of peers tested by Holm's
/// step-down method (Holm 1979, "A simple sequentially rejective multiple test procedure",
/// Scand. J. Statistics 6(2)), noted below 5% (found by review: each peer tested at 5% on its
/// own gave a note in about a third of eight-peer cases where no beta changed, 1 − 0.95⁸).
///
/// Under HC1 or Newey–West standard errors the test rejects more often than its size in short
/// windows, whose robust errors run small (a review's simulation, eight peers of constant
/// beta: a note in 7.5% of cases under HC1 and 15% under Newey–West with 3 lags at 30 returns,
/// against 5%; not part of the tests), and the note says so.
fn rolling_shift_notes(
    names: &[&str],
    peers: &[SecurityEstimate],
    std_errors: crate::stats::least_squares::StdErrors,
) -> Vec<String> {
    use crate::stats::least_squares::StdErrors;
    let robust = match std_errors {
        StdErrors::Classical => "",
        StdErrors::Hc1 | StdErrors::NeweyWest => {
            " With HC1 or Newey–West standard errors over short windows this test calls a change \
             more often than its 5% (their errors run small in few returns): read it as a \
             prompt to look, not as a finding."
        }
    };
    let tests: Vec<(usize, f64, usize)> = (peers.iter().enumerate())
        .filter_map(|(i, p)| {
            let z = crate::beta::rolling::first_to_last_z(&p.rolling)?;
            let (first, last) = (p.rolling.first()?, p.rolling.last()?);
            let df = first.degrees_of_freedom.min(last.degrees_of_freedom);
            (df > 0).then_some((i, z, df))
        })
        .collect();
    let raw: Vec<f64> = (tests.iter())
        .map(|&(_, z, df)| crate::stats::student_t_two_sided_p(z, df as f64))
        .collect();
    let adjusted = crate::stats::holm_adjusted(&raw);
    let m = tests.len();
    (tests.iter().zip(raw.iter().zip(&adjusted)))
        .filter(|(_, (_, &adjusted))| adjusted < 0.05)
        .map(|(&(i, z, df), (&p, &adjusted))| {
            let estimated = &peers[i];
            let (first, last) = (
                &estimated.rolling[0],
                &estimated.rolling[estimated.rolling.len() - 1],
            );
            let fixed = |x: f64| crate::error::rounded(x, 2);
            let holm = match m {
                1 => String::new(),
                _ => format!(
                    ", p {} after Holm's adjustment for the {m} peers tested",
                    p_text(adjusted)
                ),
            };
            format!(
                "{}: the rolling beta moved from {} (window ending {}) to {} (ending {}), {} \
                 standard errors of the difference (two independent estimates; p {} at \
                 Student's t with {df} degrees of freedom, the shorter window's{holm}, below \
                 5%): the full-window beta of {} averages over it; see its rolling betas \
                 (peers[].stability, and the stability chart where charts are drawn), and find \
                 out why before choosing another window: a later or shorter one is a choice to \
                 justify, not a way to fit the figure.{robust}",
                names[i],
                fixed(first.beta),
                first.window_end,
                fixed(last.beta),
                last.window_end,
                crate::error::rounded(z.abs(), 1),
                p_text(p),
                fixed(estimated.estimate.beta)
            )
        })
        .collect()
}

/// The notes a reviewer should see about one peer's data: periods dropped and stale prices (a
/// rolling beta that moved by more than its error: [`rolling_shift_notes`]).
fn data_notes(
    name: &str,
    estimated: &SecurityEstimate,
    spec: &EstimationSpec,
    explained: bool,
) -> Vec<String> {
    let mut notes: Vec<String> = dropped_note(name, estimated, explained)
        .into_iter()
        .collect();
    let d = estimated.dropped;
    if d.asset_stale + d.market_stale > 0 {
        notes.push(format!(
            "{name}: {} periods with a stale peer price and {} with a stale index price \
             (older than beta.max_stale_days = {}) were dropped.",
            d.asset_stale,
            d.market_stale,
            spec.max_stale_days.unwrap_or_default()
        ));
    }
    if estimated
        .flags
        .contains(&crate::beta::diagnostics::PeerFlag::ZeroReturns)
    {
        notes.push(zero_returns_note(name, estimated.zero_return_share, spec));
    }
    notes
}

/// A p-value as a note writes it: `= 0.012`, or `< 0.001`.
fn p_text(p: f64) -> String {
    match p < 0.001 {
        true => "< 0.001".to_string(),
        false => format!("= {}", crate::error::rounded(p, 3)),
    }
}

/// The notes of the late-response check (OLS): one for each flagged peer, with its p-value
/// also adjusted for the number of peers tested by Holm's step-down method (found by review:
/// each peer tested at 5% flags at least one of eight peers whose prices do not lag in about
/// 18% of cases, 1 − 0.975⁸, only a positive slope counting), and one naming the peers the
/// check could not be run for.
fn lagged_response_notes(
    names: &[&str],
    peers: &[SecurityEstimate],
    spec: &EstimationSpec,
) -> Vec<String> {
    if spec.estimator.method != crate::beta::BetaMethod::Ols || !spec.lag_response {
        return Vec::new();
    }
    let tested: Vec<(usize, LagResponse)> = (peers.iter().enumerate())
        .filter_map(|(i, p)| p.lag_response.map(|l| (i, l)))
        .collect();
    let raw: Vec<f64> = tested.iter().map(|(_, l)| l.p_value).collect();
    let adjusted = crate::stats::holm_adjusted(&raw);
    let flagged = crate::beta::diagnostics::PeerFlag::LaggedResponse;
    let mut notes: Vec<String> = (tested.iter().zip(&adjusted))
        .filter(|((i, _), _)| peers[*i].flags.contains(&flagged))
        .map(|(&(i, lag), &adjusted)| {
            let holm = (tested.len() > 1).then_some((adjusted, tested.len()));
            lagged_response_note(names[i], &lag, peers[i].estimate.beta, spec, holm)
        })
        .collect();
    let untested: Vec<&str> = (peers.iter().zip(names))
        .filter(|(p, _)| p.lag_response.is_none())
        .map(|(_, name)| *name)
        .collect();
    if !untested.is_empty() {
        notes.push(format!(
            "{}: the regression on the index's current and previous-period returns could not be \
             fitted (four periods or fewer with a previous index return, Newey–West lags of a \
             quarter of them or more, or an exact or rank-deficient fit), so lagged_response \
             was not tested.",
            untested.join(", ")
        ));
    }
    notes
}

/// A peer whose returns follow the index's previous-period return: its price takes in the
/// market's news a period late, so the OLS slope on the same period's index return alone is
/// biased toward zero (Dimson 1979; Scholes and Williams 1977). `holm`: the p-value adjusted
/// for the peers tested, and how many.
fn lagged_response_note(
    name: &str,
    lag: &LagResponse,
    beta: f64,
    spec: &EstimationSpec,
    holm: Option<(f64, usize)>,
) -> String {
    let show = |x: f64| crate::error::rounded(x, 2);
    let threshold = spec.flags.lag_p_value;
    let holm = match holm {
        None => String::new(),
        Some((p, m)) if p < threshold => {
            format!(
                "; p {} after Holm's adjustment for the {m} peers tested",
                p_text(p)
            )
        }
        Some((p, m)) => format!(
            "; p {} after Holm's adjustment for the {m} peers tested, so across the peer set \
             a slope this large could be chance: weigh it with how the share trades",
            p_text(p)
        ),
    };
    format!(
        "{name}: its returns move with the index's return of the period before (slope {}, t = \
         {}, p {}; flagged lagged_response below beta.flag_lag_p_value = {}{holm}): a price \
         that takes in the market's news late, as thin or non-synchronous trading makes it, \
         biases an OLS beta toward zero (Dimson 1979); with one lag the summed beta over the \
         periods with a previous index return is {} against the OLS beta's {}; consider beta.method = \
         \"dimson\" or \"scholes-williams\", or a longer frequency.",
        show(lag.slope),
        show(lag.t_stat),
        p_text(lag.p_value),
        crate::error::compact(threshold),
        show(lag.summed_beta),
        show(beta),
    )
}

/// A peer many of whose returns are exactly zero: prices repeated from one period to the next,
/// as a vendor fills days without a trade, which a staleness limit cannot see (the file has a
/// price on every day). Its index co-movement shows up late, so the beta is biased toward zero
/// (Scholes and Williams 1977; Dimson 1979).
fn zero_returns_note(name: &str, share: f64, spec: &EstimationSpec) -> String {
    let remedy = match spec.estimator.method {
        crate::beta::BetaMethod::Ols => {
            "; consider beta.method = \"dimson\" or \"scholes-williams\", or a longer \
             frequency"
        }
        _ => {
            "; the case's estimator takes the index's lagged returns into account, which \
             allows for a price that reacts late, but a price repeated for many periods is no \
             trade at all: weigh whether the share trades enough to stand as a peer"
        }
    };
    format!(
        "{name}: {}% of its returns are exactly zero (the same price at both ends of the \
         period, as when a data vendor repeats the last price on days without a trade; flagged \
         zero_returns above beta.flag_zero_return_share = {}): a thinly traded share's beta is \
         biased toward zero (Scholes and Williams 1977; Dimson 1979){remedy}.",
        crate::error::rounded(share * 100.0, 1),
        crate::error::compact(spec.flags.zero_return_share)
    )
}

/// Computes the valuation of the inputs' case. `generated_at` is stamped into the result as given.
pub fn value(inputs: &Inputs, generated_at: &str) -> Result<Valuation> {
    let valuation = value_case(&inputs.case, inputs, generated_at)?;
    sanity::check_finite_figures(&valuation)?;
    Ok(valuation)
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
