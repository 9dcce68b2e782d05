//! The notes a run writes on the capital side, for the reviewer: excluded peers, settings the
//! case gives but does not use, an explicit target without a basis, and "Check:" notes on
//! figures outside their usual bounds or order, which the memo's cautions repeat.

use crate::capital::chain::Chain;
use crate::capital::cost::CountryMethod;
use crate::capital::leverage::Formula;
use crate::case::{CaseFile, DebtBetaSource, DebtSource, TargetSource};

use super::records::{Cautions, CostOfCapital, PeerResult, UnstatedInput};

mod inputs;
use inputs::{net_debt_beta_note, size_premium_note};

/// Notes on the capital side: excluded peers and keys the case gives but does not use.
pub(super) fn capital_notes(settings: &CaseFile, exclusions: &[Option<String>]) -> Vec<String> {
    let mut notes = Vec::new();
    for (peer, reason) in settings.peers.iter().zip(exclusions) {
        if let Some(reason) = reason {
            notes.push(excluded_note(&peer.name, reason));
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
    notes.extend(coverage_note(settings));
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
    let premiums = &settings.premiums;
    if premiums.country_method != CountryMethod::Exposure && premiums.country_exposure != 1.0 {
        notes.push(format!(
            "premiums.country_exposure = {} is not used: premiums.country_method is \"{}\"; \
             only \"exposure\" scales the country premium by it.",
            crate::error::compact(premiums.country_exposure),
            match premiums.country_method {
                CountryMethod::BetaScaled => "beta-scaled",
                _ => "flat",
            }
        ));
    }
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
            "Check: the peers' equity values run from {} to {}, a factor of more than \
             10,000: are they all in the same units (millions, say)? Each D/E and the \
             market-cap weights read them as given.",
            // In exponent form beyond 1e15 and below 1e-6 (found by review: 5e-324 was written
            // with 324 digits).
            crate::error::compact(least),
            crate::error::compact(most)
        ));
    }
    notes.extend(net_debt_beta_note(settings));
    notes.extend(size_premium_note(settings, exclusions));
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

/// A peer left out of the aggregation, with its reason as a sentence, ended as one (found by
/// review: "… aggregation: pending merger").
fn excluded_note(name: &str, reason: &str) -> String {
    let reason = reason.trim_end();
    let stop = match reason.ends_with(['.', '!', '?']) {
        true => "",
        false => ".",
    };
    format!("{name} is estimated and shown but left out of the aggregation: {reason}{stop}")
}

/// An explicit target structure given without a basis (`target.justification`), set beside
/// the aggregated peers' median D/E and the subject's own, which a reviewer compares it with.
pub(super) fn target_note(settings: &CaseFile, chain: &Chain) -> Option<String> {
    if settings.target.source != TargetSource::Explicit || !settings.target.justification.is_empty()
    {
        return None;
    }
    let ratio = |x: f64| crate::error::rounded(x, 3);
    // A ratio too large to compute is left out, one beyond a million written in exponent form
    // (found by review: 1e308 over 1e-300 wrote "inf" into the memo).
    let own = (settings.subject_debt_to_equity())
        .filter(|de| de.is_finite())
        .map(|de| match de.abs() < 1e6 {
            true => format!(" and the subject's own, {}", ratio(de)),
            false => format!(" and the subject's own, {}", crate::error::compact(de)),
        })
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
pub(super) fn plausibility_notes(cost: &CostOfCapital) -> Vec<String> {
    plausibility(&Figures {
        risk_free_rate: cost.risk_free_rate,
        equity_risk_premium: cost.equity_risk_premium,
        premiums: cost.premiums.total,
        cost_of_debt_pre_tax: cost.cost_of_debt_pre_tax,
        cost_of_equity: cost.cost_of_equity,
        tax_rate: cost.target.tax_rate,
        wacc: cost.wacc,
    })
}

/// A "Check:" note on an interest coverage (`debt.source = "coverage"`) so high or so low that
/// EBIT and the interest expense are likelier in different units (thousands and millions) than
/// the firm's (found by review: a coverage of 4,375 took the top class without a word). The
/// bounds, 500 and 1/50, are hurdle's judgement: far beyond any coverage table's top and bottom
/// classes, and a factor of 1,000 moves a usual coverage of 2 to 20 across one of them.
fn coverage_note(settings: &CaseFile) -> Option<String> {
    let (Some(ebit), Some(interest)) = (settings.debt.ebit, settings.debt.interest_expense) else {
        return None;
    };
    let coverage = ebit / interest;
    (settings.debt.source == DebtSource::Coverage
        && coverage.is_finite()
        && (coverage > 500.0 || (coverage > 0.0 && coverage < 0.02)))
        .then(|| {
            format!(
                "Check: the interest coverage debt.ebit / debt.interest_expense is {} ({} / {}), \
             far {} any rating's: check that both figures are in the same units (thousands or \
             millions).",
                crate::case::sanity::significant(coverage),
                crate::error::compact(ebit),
                crate::error::compact(interest),
                if coverage > 500.0 { "above" } else { "below" }
            )
        })
}

/// "Check:" notes on a currency conversion (found by review: an inflation typed as a percentage
/// of the wrong size, 0.2 for 2%, printed a converted WACC of −8% without a word): an expected
/// inflation above [`crate::case::sanity::USUAL_MAX_INFLATION`], and a converted or real WACC not
/// above zero.
pub(super) fn conversion_notes(c: &super::records::CurrencyConversion) -> Vec<String> {
    use crate::case::sanity::USUAL_MAX_INFLATION;
    let percent = |x: f64| format!("{}%", crate::error::rounded(x * 100.0, 2));
    let mut notes = Vec::new();
    for (currency, inflation) in [(&c.from, c.inflation_from), (&c.to, c.inflation_to)] {
        if inflation > USUAL_MAX_INFLATION {
            notes.push(format!(
                "Check: the expected inflation of {} in {currency} (conversion), far above what \
                 it usually is; rates are decimals (0.02 is 2%), and the converted rates move \
                 with it almost one for one.",
                percent(inflation)
            ));
        }
    }
    for (what, rate) in [
        (format!("the WACC in {}", c.to), c.wacc),
        ("the real WACC".to_string(), c.wacc_real),
    ] {
        if rate <= 0.0 {
            notes.push(format!(
                "Check: {what} is {}, not above zero: check the conversion's inflation rates \
                 (rates are decimals, 0.02 is 2%).",
                percent(rate)
            ));
        }
    }
    notes
}

/// The figures the plausibility checks read: a case's, or a claimed build-up's (which a bank or
/// adviser typed, as open to a percentage typed for a decimal as a case).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Figures {
    pub risk_free_rate: f64,
    pub equity_risk_premium: f64,
    /// The sum of the additional equity premiums.
    pub premiums: f64,
    pub cost_of_debt_pre_tax: f64,
    pub cost_of_equity: f64,
    pub tax_rate: f64,
    pub wacc: f64,
}

/// [`plausibility_notes`] over plain figures: each note begins "Check: ".
pub fn plausibility(cost: &Figures) -> Vec<String> {
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
            cost.premiums > USUAL_MAX_PREMIUM,
            "the additional equity premiums sum to",
            cost.premiums,
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
    notes.extend(out_of_order_notes(cost));
    notes
}

/// Notes on figures out of their usual order: an ERP or a WACC not above zero, a cost of equity
/// or of debt below the risk-free rate, a cost of debt above the cost of equity, and a tax rate
/// above one half.
fn out_of_order_notes(cost: &Figures) -> Vec<String> {
    let percent = |x: f64| format!("{}%", crate::error::rounded(x * 100.0, 2));
    let mut notes = Vec::new();
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
    if cost.tax_rate > 0.5 {
        notes.push(format!(
            "Check: the target tax rate is {}, above any usual corporate rate: check the \
             figure.",
            percent(cost.tax_rate)
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
pub(super) fn net_cash_note(peer: &PeerResult) -> Option<String> {
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

/// Fewer aggregated peers than this raise the `few_peers` caution.
pub const FEW_PEERS: usize = 5;

/// The inputs `settings` gives no source or reason for. A target taken from the peers' median
/// or the subject's current structure states its own basis; a premium that adds nothing to
/// the cost of equity (zero, or a country premium at an exposure of zero) needs none.
fn unstated_inputs(settings: &CaseFile, cost: &CostOfCapital) -> Vec<UnstatedInput> {
    let p = &cost.premiums;
    let target_stated = matches!(
        settings.target.source,
        TargetSource::PeerMedian | TargetSource::Subject
    ) || !settings.target.justification.is_empty();
    [
        (
            settings.market.risk_free_rate_justification.is_empty(),
            "the risk-free rate",
            "market.risk_free_rate_justification",
        ),
        (
            settings.market.equity_risk_premium_justification.is_empty(),
            "the equity risk premium",
            "market.equity_risk_premium_justification",
        ),
        (
            !target_stated,
            "the target structure",
            "target.justification",
        ),
        (
            settings.debt.justification.is_empty(),
            "the cost of debt",
            "debt.justification",
        ),
        (
            settings.case.peer_selection.is_empty(),
            "the choice of peers",
            "case.peer_selection",
        ),
        (
            p.size != 0.0 && p.size_justification.is_empty(),
            "the size premium",
            "premiums.size_justification",
        ),
        (
            p.country_applied != 0.0 && p.country_justification.is_empty(),
            "the country risk premium",
            "premiums.country_justification",
        ),
        (
            p.company_specific != 0.0 && p.company_specific_justification.is_empty(),
            "the company-specific premium",
            "premiums.company_specific_justification",
        ),
        // Since 0.16.0 (found by review: an emerging-market case's inflation rates moved its
        // WACC by six points with no basis asked).
        (
            settings.preferred.weight > 0.0 && settings.preferred.justification.is_empty(),
            "the preferred equity's weight and cost",
            "preferred.justification",
        ),
        (
            settings.leases.weight > 0.0 && settings.leases.justification.is_empty(),
            "the lease liabilities' weight and cost",
            "leases.justification",
        ),
        (
            (settings.conversion.as_ref()).is_some_and(|c| c.justification.is_empty()),
            "the expected inflation of the currency conversion",
            "conversion.justification",
        ),
    ]
    .into_iter()
    .filter(|(missing, _, _)| *missing)
    .map(|(_, input, key)| UnstatedInput { input, key })
    .collect()
}

/// The facts behind the memo's conditional cautions (see [`Cautions`]), over the peers that
/// enter the aggregate.
pub(super) fn cautions(
    settings: &CaseFile,
    peers: &[PeerResult],
    cost: &CostOfCapital,
) -> Cautions {
    let aggregated: Vec<&PeerResult> = peers
        .iter()
        .filter(|p| p.excluded_reason.is_none())
        .collect();
    // In name order, so a case listing its peers in another order records the same lists.
    let names = |pick: &dyn Fn(&PeerResult) -> bool| -> Vec<String> {
        let mut names: Vec<String> = (aggregated.iter())
            .filter(|p| pick(p))
            .map(|p| p.name.clone())
            .collect();
        names.sort();
        names
    };
    let ratios = aggregated.iter().map(|p| p.debt_to_equity);
    let (low, high) = ratios.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), r| {
        (lo.min(r), hi.max(r))
    });
    let flagged = names(&|p| !p.flags.is_empty());
    Cautions {
        leverage_beyond_peers: (!aggregated.is_empty() && cost.target.debt_to_equity > high)
            .then_some([low, high]),
        betas_near_zero: names(&|p| p.estimate.beta_ci_low <= 0.0),
        turned_positive_by_adjustment: names(&|p| p.estimate.beta < 0.0 && p.beta_used > 0.0),
        every_peer_flagged: match !flagged.is_empty() && flagged.len() == aggregated.len() {
            true => flagged.clone(),
            false => Vec::new(),
        },
        flagged_in_aggregate: match flagged.len() < aggregated.len() {
            true => flagged,
            false => Vec::new(),
        },
        few_peers: aggregated.len() < FEW_PEERS,
        unstated_inputs: unstated_inputs(settings, cost),
        riskless_debt_above_risk_free: settings.leverage.debt_beta_source
            == crate::capital::leverage::DebtBetaSource::None
            && cost.cost_of_debt_pre_tax > cost.risk_free_rate,
    }
}

/// Why a peer could not be estimated, with the file and the window.
pub(super) fn failure_message(
    failure: &crate::estimate::EstimateError,
    spec: &crate::estimate::EstimationSpec,
    window: &crate::estimate::Window,
    file: &crate::io::series::DataFile,
    index: &crate::io::series::DataFile,
) -> String {
    use crate::estimate::EstimateError;
    match failure {
        EstimateError::TooFewReturns { usable, dropped: d } => {
            // The stale prices among the missing ones, and the shifted index returns, named
            // (found by review: periods dropped for a stale price read as missing prices).
            let stale = |n: usize| match n {
                0 => String::new(),
                n => format!(", {n} of them for a price older than beta.max_stale_days"),
            };
            let shifted = match d.shifted_market_missing {
                0 => String::new(),
                n => format!(", lagged or led index return missing {n}"),
            };
            format!(
                "{usable} usable returns in the window of {} periods from {} to {} (dropped {}: \
             peer price missing {}{}, index price missing {}{}, risk-free missing {}{shifted}; \
             a period can count under several reasons); beta.min_observations = {}. Prices in {} run \
             from {} to {}.",
                window.period_ends().len(),
                window.start(),
                window.end(),
                d.total,
                d.asset_missing,
                stale(d.asset_stale),
                d.market_missing,
                stale(d.market_stale),
                d.risk_free_missing,
                spec.min_observations,
                file.path,
                file.first_date,
                file.last_date
            ) + &crate::case::sanity::window::sparse_prices_hint(
                file,
                index,
                window,
                spec.frequency,
            )
        }
        EstimateError::FlatIndex { periods } => format!(
            "the market index returns ({}) have zero variance over the {periods} periods aligned \
             with this peer, so no beta can be estimated",
            index.path
        ),
        EstimateError::Estimator(message) => message.clone(),
        EstimateError::Settings(problem) => crate::case::wording::estimator_failure(problem),
    }
}
