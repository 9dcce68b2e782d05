//! Builds the valuation's records from the peers' estimates and the capital chain: every record
//! whole, in one place, from figures computed once.

use crate::capital::chain::{
    self, Chain, ChainError, Checks, PeerCapital, UnleveredPeers, Weights,
};
use crate::case::{specs, Case, CaseFile, TargetSource};
use crate::error::{Error, Result};
use crate::market::sampling;
use crate::valuation::records::convert_results;

use super::notes::{capital_notes, net_cash_note, plausibility_notes, target_note};
use super::records::*;
use super::{Inputs, PeerEstimates};

/// The valuation of `case` from estimates made for it ([`super::estimates_for`]).
pub fn value_with(
    case: &Case,
    inputs: &Inputs,
    estimates: &PeerEstimates,
    generated_at: &str,
) -> Result<Valuation> {
    let settings = &case.settings;
    let (chain, exclusions) = run_chain(case, inputs, estimates, Checks::Enforce)?;
    let mut notes = estimates.notes.clone();
    notes.extend(capital_notes(settings, &exclusions));
    notes.extend(target_note(settings, &chain));
    let peers = peer_results(settings, inputs, estimates, &unlevered(&chain), exclusions);
    let cost = cost_record(settings, &chain, &peers);
    let cautions = super::notes::cautions(settings, &peers, &cost);
    notes.extend(plausibility_notes(&cost));
    notes.extend(
        cost.currency_conversion
            .iter()
            .flat_map(super::notes::conversion_notes),
    );
    notes.extend(peers.iter().filter_map(net_cash_note));
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
            valuation_date: settings.case.valuation_date.0,
            currency: settings.case.currency.clone(),
        },
        settings: settings.clone(),
        files,
        sampling: sampling_record(estimates),
        estimator: crate::beta::describe(&estimates.spec.estimator, "peer"),
        peers,
        cost,
        sensitivity: None,
        uncertainty: None,
        reconciliation: None,
        notes,
        cautions,
        returns: estimates.peers.iter().map(|p| p.returns.clone()).collect(),
        rolling: estimates.peers.iter().map(|p| p.rolling.clone()).collect(),
    })
}

/// The cost of capital of `case` alone (the peers' figures are read into it, but no memo notes,
/// charts' data or analyses are built): what a grid cell or an `implied` step reads.
pub fn cost_of_capital(
    case: &Case,
    inputs: &Inputs,
    estimates: &PeerEstimates,
) -> Result<CostOfCapital> {
    let (chain, exclusions) = run_chain(case, inputs, estimates, Checks::Enforce)?;
    let peers = peer_results(
        &case.settings,
        inputs,
        estimates,
        &unlevered(&chain),
        exclusions,
    );
    Ok(cost_record(&case.settings, &chain, &peers))
}

/// Each peer's reason for staying out of the aggregates: the case's `exclude`, else the flags
/// the exclusion rule names.
pub fn exclusions(settings: &CaseFile, estimates: &PeerEstimates) -> Vec<Option<String>> {
    settings
        .peers
        .iter()
        .zip(&estimates.peers)
        .map(|(spec, estimated)| {
            spec.exclude.clone().or_else(|| {
                (!estimated.excluding_flags.is_empty()).then(|| {
                    let names: Vec<&str> =
                        estimated.excluding_flags.iter().map(|f| f.name()).collect();
                    format!("flag-based rule beta.exclude_flags: {}", names.join(", "))
                })
            })
        })
        .collect()
}

/// The chain's peer inputs: each peer's raw beta, structure and whether it is aggregated.
pub fn chain_peers(
    settings: &CaseFile,
    estimates: &PeerEstimates,
    exclusions: &[Option<String>],
) -> Vec<PeerCapital> {
    settings
        .peers
        .iter()
        .zip(&estimates.peers)
        .zip(exclusions)
        .map(|((spec, estimated), excluded)| {
            let e = &estimated.estimate;
            specs::peer_capital(spec, e.beta, e.beta_std_error, excluded.is_none())
        })
        .collect()
}

/// Runs the chain for `case`, turning its failures into messages naming the case or the peer.
fn run_chain(
    case: &Case,
    inputs: &Inputs,
    estimates: &PeerEstimates,
    checks: Checks,
) -> Result<(Chain, Vec<Option<String>>)> {
    super::sanity::check_rate_against_yields(case, inputs)?;
    let settings = &case.settings;
    let exclusions = exclusions(settings, estimates);
    let peers = chain_peers(settings, estimates, &exclusions);
    let spec = specs::capital(settings, inputs.debt_table.as_ref());
    let chain = chain::chain(&spec, &peers, checks).map_err(|e| match e {
        ChainError::NoPeerIncluded => no_peer_left(case, &exclusions),
        e => chain_error(case, e),
    })?;
    Ok((chain, exclusions))
}

/// Every peer excluded: the message names the case and each reason with the peers it leaves
/// out, so the case can be mended without a run that succeeds to read them from.
fn no_peer_left(case: &Case, exclusions: &[Option<String>]) -> Error {
    let mut by_reason: Vec<(&str, Vec<&str>)> = Vec::new();
    for (peer, reason) in case.settings.peers.iter().zip(exclusions) {
        let reason = reason.as_deref().unwrap_or("not excluded");
        match by_reason.iter_mut().find(|(r, _)| *r == reason) {
            Some((_, names)) => names.push(&peer.name),
            None => by_reason.push((reason, vec![&peer.name])),
        }
    }
    let each: Vec<String> = (by_reason.iter())
        .map(|(reason, names)| format!("{} ({reason})", names.join(", ")))
        .collect();
    let message = format!(
        "every peer is excluded, so no peer is left to aggregate: {}",
        each.join("; ")
    );
    // With overrides the exclusions may be theirs: the message says they were applied.
    match case.overrides.is_empty() {
        true => Error::Case {
            file: case.path.clone(),
            message,
        },
        false => Error::AfterOverrides {
            file: case.path.clone(),
            overrides: case.overrides.clone(),
            message,
        },
    }
}

/// A chain failure as the error a user sees, naming the key, the peer or the case.
pub fn chain_error(case: &Case, error: ChainError) -> Error {
    let settings = &case.settings;
    // A problem of the whole case, blamed on the --set values it names when there are any
    // (found by review: a refusal of values given by --set was put down to the file, and one
    // of every peer to a peer named "(all peers)").
    let case_error = |message: String| crate::case::blamed(&case.path, &case.overrides, message);
    match error {
        ChainError::Adjustment(problem) => {
            case_error(crate::case::wording::prior_unavailable(problem, "peers"))
        }
        ChainError::NoPeerIncluded => case_error(format!(
            "every peer is excluded (beta.exclude_flags = {:?} or `exclude`): no peer is left to \
             aggregate",
            settings
                .beta
                .exclude_flags
                .iter()
                .map(|f| f.name().to_string())
                .collect::<Vec<_>>()
        )),
        ChainError::CostOfDebt(problem) => case_error(crate::case::wording::debt_problem(&problem)),
        ChainError::Target(target_de) => case_error(target_message(settings, target_de)),
        ChainError::PeerDebtBeta(i, debt_beta, beta_used) => Error::Estimation {
            peer: settings.peers[i].name.clone(),
            message: peer_debt_beta_message(debt_beta, beta_used),
        },
        ChainError::SubjectDebtBeta(debt_beta, unlevered) => {
            case_error(subject_debt_beta_message(settings, debt_beta, unlevered))
        }
    }
}

/// Why a target D/E below 0 is refused, in the terms of its source: the subject's own figures
/// with their keys (so a --set of one is blamed on it), or the peers' median (found by review:
/// a negative peer median was put down to the subject's figures, which it does not use).
fn target_message(settings: &crate::case::CaseFile, target_de: f64) -> String {
    let t = &settings.target;
    let source = crate::case::label(&t.source);
    let measure = crate::case::label(&settings.leverage.debt_measure);
    let shown = crate::error::rounded(target_de, 3);
    let needs = "a target structure needs D/E >= 0";
    match t.source {
        crate::case::TargetSource::PeerMedian => {
            let net_cash: Vec<&str> = (settings.peers.iter())
                .filter(|p| p.cash > p.debt)
                .map(|p| p.name.as_str())
                .collect();
            format!(
                "target.source = {source}: the median D/E of the peers aggregated, with debt net \
                 of cash (leverage.debt_measure = {measure}), is {shown}, below 0: at least half \
                 of them hold more cash than debt ({}); {needs} (use leverage.debt_measure = \
                 \"gross\" or an explicit target)",
                net_cash.join(", ")
            )
        }
        _ => {
            let figure = |key: &str, value: Option<f64>| {
                value.map(|v| format!(", target.{key} = {}", crate::error::compact(v)))
            };
            let figures: String = [
                figure("subject_debt", t.subject_debt),
                figure("subject_cash", t.subject_cash),
                figure("subject_equity_value", t.subject_equity_value),
            ]
            .into_iter()
            .flatten()
            .collect();
            format!(
                "target.source = {source}: the target debt-to-equity works out at {shown}, below \
                 0 (net debt under leverage.debt_measure = {measure} is negative{figures}); \
                 {needs}"
            )
        }
    }
}

/// Two computed betas to compare in a message: four decimals, or every digit where four would
/// print them alike.
fn two_betas(a: f64, b: f64) -> (String, String) {
    let (x, y) = (format!("{a:.4}"), format!("{b:.4}"));
    match x == y {
        true => (crate::error::compact(a), crate::error::compact(b)),
        false => (x, y),
    }
}

fn peer_debt_beta_message(debt_beta: f64, beta_used: f64) -> String {
    let (debt_beta, beta_used) = two_betas(debt_beta, beta_used);
    format!(
        "debt beta {debt_beta} is above the equity beta used {beta_used}; debt ranks ahead of \
         equity and cannot carry more systematic risk (check leverage.debt_beta, the peer's \
         debt_beta or cost_of_debt)"
    )
}

fn subject_debt_beta_message(settings: &CaseFile, debt_beta: f64, unlevered: f64) -> String {
    let (debt_beta, unlevered) = two_betas(debt_beta, unlevered);
    format!(
        "the subject's debt beta {debt_beta} (leverage.debt_beta_source = {}) is above the \
         aggregate unlevered beta {unlevered}, so relevering would lower the equity beta below \
         the asset beta",
        serde_json::to_string(&settings.leverage.debt_beta_source).unwrap_or_default(),
    )
}

/// The leverage-formula comparison, each row with why the case would be refused under it.
fn compared_formulas(settings: &CaseFile, chain: &Chain) -> Vec<ComparedFormula> {
    chain
        .comparison
        .iter()
        .map(|outcome| ComparedFormula {
            outcome: outcome.clone(),
            refused: outcome
                .debt_beta_conflict
                .as_ref()
                .and_then(|conflict| conflict_reason(settings, conflict)),
        })
        .collect()
}

/// Why the case would be refused under a formula of the comparison, in the words of
/// [`chain_error`] without the case file's name.
fn conflict_reason(settings: &CaseFile, conflict: &ChainError) -> Option<String> {
    match *conflict {
        ChainError::PeerDebtBeta(i, debt_beta, beta_used) => Some(format!(
            "peer \"{}\": {}",
            settings.peers[i].name,
            peer_debt_beta_message(debt_beta, beta_used)
        )),
        ChainError::SubjectDebtBeta(debt_beta, unlevered) => {
            Some(subject_debt_beta_message(settings, debt_beta, unlevered))
        }
        _ => None,
    }
}

/// The chain's per-peer figures under the case's formula.
fn unlevered(chain: &Chain) -> UnleveredPeers {
    let chosen = chain.outcome();
    UnleveredPeers {
        adjusted: chain.adjusted.clone(),
        terms: chain.peers.clone(),
        unlevered: chosen.peer_unlevered_betas.clone(),
        operations: chosen.peer_operations_betas.clone(),
    }
}

/// Every peer's record, whole: its estimate, adjustment, structure and unlevered betas.
pub fn peer_results(
    settings: &CaseFile,
    inputs: &Inputs,
    estimates: &PeerEstimates,
    figures: &UnleveredPeers,
    exclusions: Vec<Option<String>>,
) -> Vec<PeerResult> {
    settings
        .peers
        .iter()
        .zip(&estimates.peers)
        .zip(exclusions)
        .enumerate()
        .map(|(i, ((spec, estimated), excluded_reason))| {
            let (adjusted, terms) = (&figures.adjusted[i], &figures.terms[i]);
            PeerResult {
                name: spec.name.clone(),
                prices_file: inputs.peers[i].path.clone(),
                periods_in_window: estimated.periods_in_window,
                periods_dropped: estimated.dropped,
                estimate: estimated.estimate.clone(),
                shrunk_beta: adjusted.shrunk,
                beta_used: adjusted.used,
                equity_value: spec.equity_value,
                debt: spec.debt,
                cash: spec.cash,
                debt_to_equity: terms.debt_to_equity,
                tax_rate: spec.tax_rate,
                unlevered_beta: figures.unlevered[i],
                debt_beta: terms.debt_beta,
                cost_of_debt: terms.cost_of_debt,
                cost_of_debt_used: terms.cost_of_debt_used,
                operating_share: terms.operating_share,
                operations_beta: figures.operations[i],
                excluded_reason,
                vasicek: adjusted.vasicek,
                stale_share: estimated.stale_share,
                zero_return_share: estimated.zero_return_share,
                lag_response: estimated.lag_response,
                flags: estimated.flags.clone(),
                stability: estimated.stability.clone(),
                stability_missing: estimated.no_stability,
                fitted_line: estimated.fitted_line.clone(),
            }
        })
        .collect()
}

/// The sampling actually applied.
fn sampling_record(estimates: &PeerEstimates) -> SamplingRecord {
    let spec = &estimates.spec;
    SamplingRecord {
        frequency: spec.frequency,
        periods_per_year: spec.frequency.periods_per_year(),
        lookback: spec.lookback,
        min_observations: spec.min_observations,
        rolling_window: spec.rolling.window,
        rolling_min_observations: spec.rolling.min_observations,
        window_start: estimates.window_start,
        window_end: estimates.window_end,
        return_type: match spec.returns {
            sampling::ReturnType::Simple => "simple",
            sampling::ReturnType::Log => "log",
        },
        weekday: (spec.frequency == sampling::Frequency::Weekly).then_some(spec.weekday),
        max_stale_days: spec.max_stale_days,
        sampling_rule: sampling::rule_text(spec.frequency),
        excess_returns: estimates.excess_returns,
        risk_free_convention: match spec.returns {
            sampling::ReturnType::Simple => {
                "annual yield sampled at the start of each period, compounded to the \
                 period: (1 + y)^(1/periods_per_year) - 1"
            }
            sampling::ReturnType::Log => {
                "annual yield sampled at the start of each period, continuously \
                 compounded to the period: ln(1 + y)/periods_per_year"
            }
        },
    }
}

/// The target structure: which ratio was given, both ratios, and the peers' median beside it.
fn target_record(settings: &CaseFile, chain: &Chain) -> TargetRecord {
    TargetRecord {
        given: match settings.target.source {
            TargetSource::PeerMedian => "peer_median",
            TargetSource::Subject => "subject_current",
            TargetSource::Explicit if settings.target.debt_to_equity.is_some() => "debt_to_equity",
            TargetSource::Explicit => "debt_to_capital",
        },
        debt_to_equity: chain.target_debt_to_equity,
        debt_to_capital: crate::capital::cost::weights_from_debt_to_equity(
            chain.target_debt_to_equity,
        )
        .1,
        tax_rate: settings.target.tax_rate,
        tax_rate_basis: settings.target.tax_rate_basis,
        peer_median_debt_to_equity: chain.peer_median_debt_to_equity,
    }
}

/// The cost-of-capital records from the chain: aggregation, target, premiums, WACC.
fn cost_record(settings: &CaseFile, chain: &Chain, peers: &[PeerResult]) -> CostOfCapital {
    let chosen = chain.outcome();
    let (market, premiums) = (&settings.market, &settings.premiums);
    let premium_spec = specs::capital(settings, None).premiums;
    let relevered = chosen.relevered;
    let weights = &chain.weights;
    let other = &chain.other;
    CostOfCapital {
        beta: BetaSummary {
            formula: settings.leverage.formula,
            formula_source: settings.leverage.formula.citation(),
            formula_expression: settings.leverage.formula.expression(),
            aggregation: settings.leverage.aggregation,
            unlevered: chosen.unlevered,
            unlevered_dispersion: chosen.unlevered_dispersion,
            relevered,
            uses_operations_beta: settings.leverage.operations_beta,
            aggregate_of_unlevered: chosen.aggregate_of_unlevered,
            aggregate_of_operations: chosen.aggregate_of_operations,
            unlevered_statistics: chosen.unlevered_statistics,
            debt_measure: settings.leverage.debt_measure,
            vasicek_prior: chain.vasicek_prior,
            peers_included: peers.iter().filter(|p| p.excluded_reason.is_none()).count(),
        },
        target: target_record(settings, chain),
        weights: weights.clone(),
        other_capital_costs: other.clone(),
        risk_free_rate: market.risk_free_rate,
        equity_risk_premium: market.equity_risk_premium,
        premiums: PremiumRecord {
            size: premiums.size,
            country: premiums.country,
            company_specific: premiums.company_specific,
            total: premium_spec.total_applied(relevered),
            country_method: premiums.country_method,
            country_scale: premium_spec.country_scale(relevered),
            country_applied: premium_spec.country_applied(relevered),
            size_justification: premiums.size_justification.clone(),
            country_justification: premiums.country_justification.clone(),
            company_specific_justification: premiums.company_specific_justification.clone(),
        },
        beta_times_equity_risk_premium: relevered * market.equity_risk_premium,
        subject_debt_beta: chain.subject_debt_beta,
        cost_of_debt: chain.cost_of_debt.clone(),
        leverage_comparison: compared_formulas(settings, chain),
        cost_of_equity: chosen.cost_of_equity,
        cost_of_debt_pre_tax: chain.cost_of_debt.pre_tax,
        cost_of_debt_after_tax: chain.cost_of_debt_after_tax,
        wacc: chosen.wacc,
        wacc_contributions: Weights {
            equity: weights.equity * chosen.cost_of_equity,
            debt: weights.debt * chain.cost_of_debt_after_tax,
            preferred: weights.preferred * other.preferred_cost,
            leases: weights.leases * other.lease_cost_after_tax,
        },
        currency_conversion: (settings.conversion.as_ref())
            .map(|c| convert_results(c, settings, chain)),
    }
}
