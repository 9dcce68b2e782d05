//! Builds the valuation's records from the peers' estimates and the capital chain: every record
//! whole, in one place, from figures computed once.

use crate::capital::chain::{
    self, Chain, ChainError, Checks, PeerCapital, UnleveredPeers, Weights,
};
use crate::capital::leverage::Formula;
use crate::case::{specs, Case, CaseFile, DebtBetaSource, DebtSource, TargetSource};
use crate::error::{Error, Result};
use crate::market::sampling;
use crate::valuation::records::convert_results;

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
    notes.extend(plausibility_notes(&cost));
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
        returns: estimates.peers.iter().map(|p| p.returns.clone()).collect(),
        rolling: estimates.peers.iter().map(|p| p.rolling.clone()).collect(),
    })
}

/// The cost of capital of `case` alone (no records of the peers): what a grid cell or an
/// `implied` step reads.
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
    let settings = &case.settings;
    let exclusions = exclusions(settings, estimates);
    let peers = chain_peers(settings, estimates, &exclusions);
    let spec = specs::capital(settings, inputs.debt_table.as_ref());
    let chain = chain::chain(&spec, &peers, checks).map_err(|e| chain_error(case, e))?;
    Ok((chain, exclusions))
}

/// A chain failure as the error a user sees, naming the key, the peer or the case.
pub fn chain_error(case: &Case, error: ChainError) -> Error {
    let settings = &case.settings;
    let case_error = |message: String| Error::Case {
        file: case.path.clone(),
        message,
    };
    let all_peers = |message: String| Error::Estimation {
        peer: "(all peers)".into(),
        message,
    };
    match error {
        ChainError::Adjustment(message) => all_peers(message),
        ChainError::NoPeerIncluded => all_peers(format!(
            "every peer is excluded (beta.exclude_flags = {:?} or `exclude`): no peer is left to \
             aggregate",
            settings
                .beta
                .exclude_flags
                .iter()
                .map(|f| f.name().to_string())
                .collect::<Vec<_>>()
        )),
        ChainError::CostOfDebt(message) => case_error(message),
        ChainError::Target(target_de) => case_error(format!(
            "target.source = {}: the target debt-to-equity works out at {target_de}, below 0 \
             (net debt under leverage.debt_measure = {} is negative); a target structure needs \
             D/E >= 0",
            crate::case::label(&settings.target.source),
            crate::case::label(&settings.leverage.debt_measure)
        )),
        ChainError::PeerDebtBeta(i, debt_beta, beta_used) => Error::Estimation {
            peer: settings.peers[i].name.clone(),
            message: peer_debt_beta_message(debt_beta, beta_used),
        },
        ChainError::SubjectDebtBeta(debt_beta, unlevered) => {
            case_error(subject_debt_beta_message(settings, debt_beta, unlevered))
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

/// Notes on the capital side: excluded peers and keys the case gives but does not use.
fn capital_notes(settings: &CaseFile, exclusions: &[Option<String>]) -> Vec<String> {
    let mut notes = Vec::new();
    for (peer, reason) in settings.peers.iter().zip(exclusions) {
        if let Some(reason) = reason {
            notes.push(format!(
                "{} is estimated and shown but left out of the aggregation: {reason}",
                peer.name
            ));
        }
    }
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
    notes.extend(unused_cost_notes(settings));
    for peer in settings.peers.iter().filter(|p| p.tax_rate > 0.5) {
        notes.push(format!(
            "Check: the tax rate of {} is {}%, above any usual corporate rate: check the \
             figure.",
            peer.name,
            crate::error::rounded(peer.tax_rate * 100.0, 2)
        ));
    }
    // Peers' equity values a factor of 10,000 apart: most often one given in units and the
    // others in millions (a judgement; peer sets rarely span so far in size).
    let equity = settings.peers.iter().map(|p| p.equity_value);
    let (least, most) = equity.fold((f64::INFINITY, 0.0_f64), |(l, m), e| (l.min(e), m.max(e)));
    if most > 10_000.0 * least {
        notes.push(format!(
            "Check: the peers' equity values run from {least} to {most}, a factor of more than \
             10,000: are they all in the same units (millions, say)? Each D/E and the \
             market-cap weights read them as given."
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
    notes
}

/// An explicit target structure given without a basis (`target.justification`), set beside
/// the aggregated peers' median D/E and the subject's own, which a reviewer compares it with.
fn target_note(settings: &CaseFile, chain: &Chain) -> Option<String> {
    if settings.target.source != TargetSource::Explicit || !settings.target.justification.is_empty()
    {
        return None;
    }
    let ratio = |x: f64| crate::error::rounded(x, 3);
    let own = settings
        .subject_debt_to_equity()
        .map(|de| format!(" and the subject's own, {}", ratio(de)))
        .unwrap_or_default();
    Some(format!(
        "The target D/E of {} has no stated basis (target.justification): the aggregated peers' \
         median is {}{own}; say why the structure expected over the cash flows' horizon is this \
         one.",
        ratio(chain.target_debt_to_equity),
        ratio(chain.peer_median_debt_to_equity)
    ))
}

/// Preferred or lease costs given with a weight of 0: the WACC gives them no weight, unless a
/// sensitivity axis moves that weight (then the grid's cells use the cost).
fn unused_cost_notes(settings: &CaseFile) -> Vec<String> {
    let mut notes = Vec::new();
    let costs_without_weight = [
        (
            "preferred",
            settings.preferred.weight,
            settings.preferred.cost,
            "cost",
        ),
        (
            "leases",
            settings.leases.weight,
            settings.leases.cost_pre_tax,
            "cost_pre_tax",
        ),
    ];
    // A sensitivity axis over the weight gives the cost weight in the grid's cells.
    let axes = [&settings.sensitivity.rows, &settings.sensitivity.columns];
    let on_an_axis = |section: &str| {
        let weight = format!("{section}.weight");
        axes.iter().any(|axis| {
            axis.as_deref()
                .is_some_and(|a| a.trim_start().starts_with(&weight))
        })
    };
    for (section, _, cost, key) in costs_without_weight.iter().filter(|c| c.1 == 0.0) {
        if let Some(cost) = cost.filter(|_| !on_an_axis(section)) {
            notes.push(format!(
                "{section}.{key} = {cost} is not used: {section}.weight is 0, so the WACC gives \
                 it no weight."
            ));
        }
    }
    notes
}

/// Notes on figures far outside what a discount rate's parts usually are: the range checks take
/// any rate below 1, so a percentage typed for a decimal below 1 (0.5 for a 0.5% size premium)
/// goes through as 50%. The bounds are generous judgements, not rules of any standard: they
/// flag, they do not refuse.
fn plausibility_notes(cost: &CostOfCapital) -> Vec<String> {
    use crate::case::sanity::{USUAL_MAX_COST, USUAL_MAX_PREMIUM, USUAL_MAX_RISK_FREE};
    // Written as the memo writes a rate, rounded as everywhere else.
    let percent = |x: f64| format!("{}%", crate::error::rounded(x * 100.0, 2));
    let checks = [
        (
            cost.risk_free_rate > USUAL_MAX_RISK_FREE,
            "the risk-free rate is",
            cost.risk_free_rate,
        ),
        (
            cost.equity_risk_premium > USUAL_MAX_PREMIUM,
            "the equity risk premium is",
            cost.equity_risk_premium,
        ),
        (
            cost.premiums.total > USUAL_MAX_PREMIUM,
            "the additional equity premiums sum to",
            cost.premiums.total,
        ),
        (
            cost.cost_of_debt_pre_tax > USUAL_MAX_COST,
            "the pre-tax cost of debt is",
            cost.cost_of_debt_pre_tax,
        ),
        (cost.wacc > USUAL_MAX_COST, "the WACC is", cost.wacc),
    ];
    let mut notes: Vec<String> = checks
        .iter()
        .filter(|(far, ..)| *far)
        .map(|(_, what, x)| {
            format!(
                "Check: {what} {}, far above what such a figure usually is; rates are \
                 decimals (0.055 is 5.5%), so a percentage typed for one reads 100 times too \
                 large.",
                percent(*x)
            )
        })
        .collect();
    let below = |what: &str, x: f64, why: &str| format!("Check: {what}, {}, {why}", percent(x));
    if cost.equity_risk_premium <= 0.0 {
        notes.push(below(
            "the equity risk premium",
            cost.equity_risk_premium,
            "is not above zero: equities would be expected to earn no more than the riskless \
             asset.",
        ));
    }
    if cost.cost_of_equity < cost.risk_free_rate {
        notes.push(format!(
            "Check: the cost of equity, {}, is below the risk-free rate, {}: an equity investor \
             would accept less than the riskless rate (a negative premium or beta).",
            percent(cost.cost_of_equity),
            percent(cost.risk_free_rate)
        ));
    }
    if cost.cost_of_debt_pre_tax < cost.risk_free_rate {
        notes.push(format!(
            "Check: the pre-tax cost of debt, {}, is below the risk-free rate, {}: no lender \
             takes less than the riskless rate of the same currency and term; look at the spread \
             or the given yield.",
            percent(cost.cost_of_debt_pre_tax),
            percent(cost.risk_free_rate)
        ));
    }
    // Statutory corporate rates lie well below one half (a fact of the trade, common practice);
    // a rate above it is most often a typing slip.
    if cost.target.tax_rate > 0.5 {
        notes.push(format!(
            "Check: the target tax rate is {}, above any usual corporate rate: check the \
             figure.",
            percent(cost.target.tax_rate)
        ));
    }
    if cost.wacc <= 0.0 {
        notes.push(below(
            "the WACC",
            cost.wacc,
            "is not above zero: it cannot serve as a discount rate.",
        ));
    }
    if cost.cost_of_debt_pre_tax > cost.cost_of_equity {
        notes.push(format!(
            "Check: the pre-tax cost of debt, {}, is above the cost of equity, {}: debt ranks \
             ahead of equity and should cost less; look at the spread or the rates.",
            percent(cost.cost_of_debt_pre_tax),
            percent(cost.cost_of_equity)
        ));
    }
    notes
}

/// A peer whose net cash leaves the unlevering denominator 1 + s·D/E near zero: its unlevered
/// beta is then a multiple of its equity beta that says nothing about its operations (three
/// times, hurdle's judgement: net cash of about two thirds of the equity value at a 0% tax).
fn net_cash_note(peer: &PeerResult) -> Option<String> {
    let (levered, unlevered) = (peer.beta_used, peer.unlevered_beta);
    let aggregated = peer.excluded_reason.is_none();
    let blown_up = peer.debt_to_equity < 0.0 && unlevered.abs() > 3.0 * levered.abs();
    (aggregated && blown_up).then(|| {
        format!(
            "Check: {} has a net D/E of {}, which makes its unlevered beta {} against an equity \
             beta of {}: net cash near the equity value leaves the formula's denominator near \
             zero; consider leverage.debt_measure = \"gross\" or leaving the peer out.",
            peer.name,
            // Three decimals as every D/E, more where three would read as −1.
            match (peer.debt_to_equity + 1.0).abs() < 0.0005 {
                true => crate::error::rounded(peer.debt_to_equity, 6),
                false => crate::error::rounded(peer.debt_to_equity, 3),
            },
            crate::error::rounded(unlevered, 3),
            crate::error::rounded(levered, 3)
        )
    })
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
                operating_share: terms.operating_share,
                operations_beta: figures.operations[i],
                excluded_reason,
                vasicek: adjusted.vasicek,
                stale_share: estimated.stale_share,
                flags: estimated.flags.clone(),
                stability: estimated.stability.clone(),
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
        target: TargetRecord {
            given: match settings.target.source {
                TargetSource::PeerMedian => "peer_median",
                TargetSource::Subject => "subject_current",
                TargetSource::Explicit if settings.target.debt_to_equity.is_some() => {
                    "debt_to_equity"
                }
                TargetSource::Explicit => "debt_to_capital",
            },
            debt_to_equity: chain.target_debt_to_equity,
            debt_to_capital: crate::capital::cost::weights_from_debt_to_equity(
                chain.target_debt_to_equity,
            )
            .1,
            tax_rate: settings.target.tax_rate,
            tax_rate_basis: settings.target.tax_rate_basis,
        },
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
        currency_conversion: settings.conversion.as_ref().map(|c| {
            convert_results(
                c,
                &settings.case.currency,
                chosen.cost_of_equity,
                chosen.wacc,
            )
        }),
    }
}
