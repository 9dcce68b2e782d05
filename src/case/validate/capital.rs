//! The capital-side sections of a case: `[target]` and its structure keys, `[debt]`,
//! `[preferred]` and `[leases]`, `[conversion]` and `[premiums]`, each checked by one function
//! that [`super::validate_finite`] calls in the case's order.

use super::rate;
use crate::case::schema::*;

/// `[target]`: exactly one ratio (unless a source gives it), and the tax rate.
pub(super) fn validate_target(case: &CaseFile) -> std::result::Result<(), String> {
    let target = &case.target;
    validate_structure(case)?;
    match (target.debt_to_equity, target.debt_to_capital) {
        (None, None) if target.source != TargetSource::Explicit => {}
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
    Ok(())
}

/// `[conversion]`: inflation rates the Fisher relation can divide by.
pub(super) fn validate_conversion(case: &CaseFile) -> std::result::Result<(), String> {
    if let Some(conversion) = &case.conversion {
        for (key, value) in [
            ("conversion.inflation_case", conversion.inflation_case),
            ("conversion.inflation_output", conversion.inflation_output),
        ] {
            if !(value.is_finite() && value > -1.0) {
                return Err(format!(
                    "{key} = {value} is at or below -100% (or not a number); the Fisher relation \
                     divides by 1 + inflation, which must be positive"
                ));
            }
            // Below 100% a year is hurdle's bound, not a published one: it catches a
            // percentage typed for a decimal (2 for 2%), which turned a WACC of 7% into one of
            // −63% without a word (found by review); a currency inflating by 100% a year or
            // more is no place for a nominal discount rate built this way.
            rate(key, value, -1.0, 1.0)?;
        }
        if conversion.currency.trim().is_empty() {
            return Err("conversion.currency is empty".into());
        }
        // One currency has one expected inflation: "converting" EUR to EUR at two inflations
        // would print two different nominal EUR rates for the same cash flows.
        let same =
            conversion.currency.trim().to_lowercase() == case.case.currency.trim().to_lowercase();
        if same && conversion.inflation_case != conversion.inflation_output {
            return Err(format!(
                "conversion.currency = \"{}\" is the case's own currency (case.currency), yet \
                 conversion.inflation_case = {} differs from conversion.inflation_output = {}; one \
                 currency has one expected inflation: name the other currency, or leave out \
                 [conversion]",
                conversion.currency, conversion.inflation_case, conversion.inflation_output
            ));
        }
    }
    Ok(())
}

/// `[premiums]`: each premium and the country exposure in range.
pub(super) fn validate_premiums(case: &CaseFile) -> std::result::Result<(), String> {
    for (key, value) in [
        ("premiums.size", case.premiums.size),
        ("premiums.country", case.premiums.country),
        ("premiums.company_specific", case.premiums.company_specific),
    ] {
        rate(key, value, -0.5, 1.0)?;
    }
    // Below 5 is hurdle's bound, not a published one: an exposure five times the average
    // firm's is beyond any case we know of, and the bound catches a percentage typed as a number.
    rate(
        "premiums.country_exposure",
        case.premiums.country_exposure,
        0.0,
        5.0,
    )?;
    Ok(())
}

/// `[preferred]` and `[leases]`: weights in [0, 1) that leave room for equity and debt, and a cost
/// for preferred equity that has a weight.
pub(super) fn validate_components(case: &CaseFile) -> std::result::Result<(), String> {
    let (preferred, leases) = (&case.preferred, &case.leases);
    rate("preferred.weight", preferred.weight, 0.0, 1.0)?;
    rate("leases.weight", leases.weight, 0.0, 1.0)?;
    let other = preferred.weight + leases.weight;
    if other >= 1.0 {
        return Err(format!(
            "preferred.weight + leases.weight = {other} leaves no room for equity and debt; the \
             two must sum to less than 1"
        ));
    }
    match preferred.cost {
        Some(cost) => rate("preferred.cost", cost, 0.0, 1.0)?,
        None if preferred.weight > 0.0 => {
            return Err(format!(
                "preferred.cost is missing: preferred equity with preferred.weight = {} needs its \
                 own cost (e.g. its dividend / price)",
                preferred.weight
            ))
        }
        None => {}
    }
    if let Some(cost) = leases.cost_pre_tax {
        rate("leases.cost_pre_tax", cost, 0.0, 1.0)?;
    }
    Ok(())
}

/// `[leverage]` aggregation and cash keys, and the keys of the target sources.
pub(super) fn validate_structure(case: &CaseFile) -> std::result::Result<(), String> {
    let leverage = &case.leverage;
    rate("leverage.trim_fraction", leverage.trim_fraction, 0.0, 0.5)?;
    if leverage.operations_beta && leverage.debt_measure == DebtMeasure::Net {
        return Err(
            "leverage.operations_beta = true with leverage.debt_measure = \"net\" would \
                    count cash twice; use one of them"
                .into(),
        );
    }
    let target = &case.target;
    let amounts = [
        ("target.subject_equity_value", target.subject_equity_value),
        ("target.subject_debt", target.subject_debt),
        ("target.subject_cash", target.subject_cash),
    ];
    for (key, value) in amounts {
        if let Some(v) = value {
            super::amount_within_bounds(key, v)?;
        }
    }
    // The subject's figures are checked whenever given: an explicit target without a basis is
    // set beside the subject's own D/E in a note (found by review: a negative subject_debt
    // printed "the subject's own, -0.001").
    for (key, value) in [
        ("target.subject_debt", target.subject_debt),
        ("target.subject_cash", target.subject_cash),
    ] {
        if let Some(v) = value {
            if !(v.is_finite() && v >= 0.0) {
                return Err(format!("{key} = {v} is negative"));
            }
        }
    }
    if let Some(e) = target
        .subject_equity_value
        .filter(|e| !(e.is_finite() && *e > 0.0))
    {
        return Err(format!(
            "target.subject_equity_value = {e} must be positive: the subject's equity value \
             at market"
        ));
    }
    if target.source == TargetSource::Subject {
        if target.subject_equity_value.is_none() {
            return Err(
                "target.subject_equity_value = (missing) must be given and positive \
                        when target.source = \"subject\""
                    .into(),
            );
        }
        if target.subject_debt.is_none() {
            return Err("target.subject_debt is required when target.source = \"subject\"".into());
        }
    }
    for (i, peer) in case.peers.iter().enumerate() {
        let net = DebtMeasure::Net.debt(peer.debt, peer.cash);
        if leverage.debt_measure == DebtMeasure::Net && net <= -peer.equity_value {
            return Err(format!(
                "peer.{i} (peer \"{}\"): net debt {net} (debt − cash) is at or below minus its \
                 equity_value {}, a net D/E at or below −1 that no leverage formula can unlever",
                peer.name, peer.equity_value
            ));
        }
        if leverage.operations_beta && peer.cash >= peer.equity_value + peer.debt {
            return Err(format!(
                "peer.{i}.cash = {} (peer \"{}\") is not below equity_value + debt = {}, so the \
                 beta of the operations βU / (1 − cash / (equity + debt)) is undefined",
                peer.cash,
                peer.name,
                peer.equity_value + peer.debt
            ));
        }
    }
    Ok(())
}

/// The `[debt]` keys each cost-of-debt source needs, and the leverage keys that go with them.
pub(super) fn validate_debt(case: &CaseFile) -> std::result::Result<(), String> {
    let debt = &case.debt;
    let need = |key: &str, present: bool| {
        if present {
            Ok(())
        } else {
            Err(format!(
                "debt.{key} is required when debt.source = \"{}\"",
                match debt.source {
                    DebtSource::Given => "given",
                    DebtSource::Rating => "rating",
                    DebtSource::Coverage => "coverage",
                }
            ))
        }
    };
    if let Some(kd) = debt.cost_pre_tax {
        rate("debt.cost_pre_tax", kd, 0.0, 1.0)?;
    }
    match debt.source {
        DebtSource::Given => need("cost_pre_tax", debt.cost_pre_tax.is_some())?,
        DebtSource::Rating => {
            need("rating", debt.rating.is_some())?;
            need("rating_table", debt.rating_table.is_some())?;
        }
        DebtSource::Coverage => {
            need("ebit", debt.ebit.is_some())?;
            need("interest_expense", debt.interest_expense.is_some())?;
            need("coverage_table", debt.coverage_table.is_some())?;
            let (ebit, interest) = (
                debt.ebit.unwrap_or(0.0),
                debt.interest_expense.unwrap_or(0.0),
            );
            if !(interest.is_finite() && interest > 0.0) {
                return Err(format!(
                    "debt.interest_expense = {interest} must be positive to compute interest \
                     coverage (EBIT / interest expense)"
                ));
            }
            if !ebit.is_finite() || ebit < 0.0 {
                return Err(format!(
                    "debt.ebit = {ebit} gives a negative interest coverage {} (EBIT / interest \
                     expense); a synthetic rating from coverage is not meaningful for a loss, so \
                     give the cost of debt (debt.source = \"given\") or a rating",
                    ebit / interest
                ));
            }
            // An interest expense so small that the ratio overflows (a value in the wrong
            // units, or a denormal number) gives no rating either.
            if !(ebit / interest).is_finite() {
                let show = crate::error::compact;
                return Err(format!(
                    "debt.ebit = {} over debt.interest_expense = {} gives an interest coverage \
                     of {}: the interest expense is too small for a ratio; check its units",
                    show(ebit),
                    show(interest),
                    show(ebit / interest)
                ));
            }
        }
    }
    let leverage = &case.leverage;
    if leverage.debt_beta_source == DebtBetaSource::Given {
        rate("leverage.debt_beta", leverage.debt_beta, -1.0, 3.0)?;
    } else if leverage.debt_beta != 0.0 {
        return Err(format!(
            "leverage.debt_beta = {} is given but leverage.debt_beta_source = {}; set \
             leverage.debt_beta_source = \"given\" for it to be used",
            leverage.debt_beta,
            if leverage.debt_beta_source == DebtBetaSource::None {
                "\"none\" (riskless debt)"
            } else {
                "\"credit-spread\""
            }
        ));
    }
    Ok(())
}
