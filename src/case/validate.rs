//! Range checks a type cannot express: tax rates in [0, 1), positive equity, exactly one target
//! ratio, window lengths the data can fill, … Each section of the case has its own function;
//! every message names the key and the offending value.

mod capital;

use super::lookback::{beyond_most_years, years_of_periods, MOST_YEARS};
use super::sanity::{plain_label, MIN_SPREAD_PREMIUM};
use super::schema::*;

/// `key = value` must be finite and in [low, high).
pub(super) fn rate(key: &str, value: f64, low: f64, high: f64) -> std::result::Result<(), String> {
    if value.is_finite() && value >= low && value < high {
        Ok(())
    } else {
        // A rate typed as a percentage is the likeliest reason for a value of 1 or more.
        // Rounded to 12 decimals so that 5.8 reads 0.058, not 0.057999999999999996.
        let decimal = |scale: f64| crate::error::compact((value / scale * 1e12).round() / 1e12);
        let hint = if value >= 1.0 && high <= 1.0 && value / 100.0 < high {
            format!(
                "; rates are decimals ({})",
                crate::error::decimal_example(value)
            )
        } else if value >= 1.0 && high <= 1.0 && value / 10_000.0 < high {
            // Out of range even as a percentage: basis points (found by review: 517 was
            // advised to be 5.17, itself out of range); not for a value beyond those too
            // (1e308 read "inf for 1e308 basis points").
            format!(
                "; rates are decimals ({} for {} basis points, {}%)",
                decimal(10_000.0),
                crate::error::compact(value),
                decimal(100.0),
            )
        } else {
            String::new()
        };
        let value = crate::error::compact(value);
        Err(format!("{key} = {value} is outside [{low}, {high}){hint}"))
    }
}

/// Range checks of the estimator options in `[beta]`, against the window length `lookback`
/// (the most observations a peer can have).
fn validate_beta_options(beta: &BetaSettings, lookback: u32) -> std::result::Result<(), String> {
    let (lags, leads) = beta.market_lags_and_leads();
    // Each shifted market column costs a coefficient and an end period. N/4 is hurdle's own
    // bound, not a published rule: it leaves more than four observations for each shifted column,
    // so the slopes and their standard errors are not fitted to a handful of points. Leads never
    // pass the window's end, so its last `leads` periods give no return: N is at most
    // lookback − leads (the estimator applies the same bound to the N it has).
    let usable = lookback.saturating_sub(leads);
    if 4 * (lags + leads) >= usable {
        // Scholes–Williams always takes one lag and one lead; only Dimson's are keys to lower.
        let columns = match beta.method {
            BetaMethod::ScholesWilliams => "beta.method = \"scholes-williams\" uses one lagged \
                 and one led market return (2 shifted columns), which"
                .to_string(),
            _ => format!("beta.dimson_lags + beta.dimson_leads = {}", lags + leads),
        };
        let quarter = f64::from(usable) / 4.0;
        let periods = match leads {
            0 => format!("{lookback} periods"),
            _ => format!(
                "{usable} usable periods ({lookback} less the last {leads}, which a lead \
                 would take past the window's end)"
            ),
        };
        // The quarter named as what it is (found by review: a bare "(1)" after the periods).
        return Err(format!(
            "{columns} is at least a quarter of the window's {periods} (a quarter is \
             {quarter}): too many shifted market columns; lengthen the window"
        ));
    }
    if beta.method == BetaMethod::Dimson && lags + leads == 0 {
        return Err(
            "beta.method = \"dimson\" with beta.dimson_lags = 0 and beta.dimson_leads = 0 is \
             plain OLS; use beta.method = \"ols\" or give at least one lag"
                .into(),
        );
    }
    let w = beta.blume_weight;
    if !(w.is_finite() && w > 0.0 && w <= 1.0) {
        return Err(format!(
            "beta.blume_weight = {w} is outside (0, 1]: it is the weight on the raw beta in \
             Blume's w·β + (1 − w); 1 leaves the beta raw"
        ));
    }
    // Only when the standard errors use them: an unused setting (noted by the run) must not
    // refuse a window, say a shorter one of the specification range.
    let newey_west = beta.std_errors == crate::stats::least_squares::StdErrors::NeweyWest;
    if let Some(l) = beta.newey_west_lags.filter(|_| newey_west) {
        if 4 * l >= lookback {
            return Err(format!(
                "beta.newey_west_lags = {l} is at least a quarter of the window's {lookback} \
                 periods (a quarter is {})",
                f64::from(lookback) / 4.0
            ));
        }
    }
    match (beta.vasicek_prior_mean, beta.vasicek_prior_variance) {
        (Some(m), Some(v)) => {
            // The prior is a mean of equity betas; hurdle's bound [−1, 5) holds any industry's
            // (common practice: industry betas lie roughly between 0.3 and 2) and refuses a typo
            // (found by review: 1e10 ran to a WACC of 1.4e8).
            rate("beta.vasicek_prior_mean", m, -1.0, 5.0)?;
            if !(v.is_finite() && v > 0.0) {
                return Err(format!(
                    "beta.vasicek_prior_variance = {v} must be a positive number"
                ));
            }
        }
        (None, None) => {}
        _ => {
            return Err(
                "give both beta.vasicek_prior_mean and beta.vasicek_prior_variance, or neither \
                 (then the cross-section of the peers is the prior)"
                    .into(),
            )
        }
    }
    Ok(())
}

/// Range checks a type cannot express, section by section. The message names the key and the
/// offending value.
pub fn validate(case: &CaseFile) -> std::result::Result<(), String> {
    // Before the check that writes the case as TOML, which cannot hold a larger seed (a case's
    // text is checked for it with its line; this is for settings made otherwise).
    let seed = case.uncertainty.seed;
    if seed > super::sanity::MAX_SEED {
        return Err(super::sanity::seed_out_of_range(&seed.to_string(), false));
    }
    super::sanity::check_finite(case)?;
    validate_finite(case)
}

/// [`validate`] for settings whose numbers the caller has already found finite (a what-if
/// checks the table it deserialises, which saves serialising the case once more).
pub fn validate_finite(case: &CaseFile) -> std::result::Result<(), String> {
    super::sanity::check_case(case)?;
    validate_case_and_market(case)?;
    validate_window(case)?;
    capital::validate_target(case)?;
    capital::validate_debt(case)?;
    capital::validate_components(case)?;
    capital::validate_conversion(case)?;
    capital::validate_premiums(case)?;
    validate_uncertainty(case)?;
    validate_peers(case)
}

/// The free text a case gives (the peer selection, the justifications), which the memo and the
/// workbook show, within what a workbook cell holds (32,767 characters, Excel's specification
/// limits, from memory; found by review: a longer one failed only when the workbook was
/// written, naming no key).
fn free_text_lengths(case: &CaseFile) -> std::result::Result<(), String> {
    const MOST: usize = 30_000;
    static EMPTY: String = String::new();
    let texts = [
        ("case.peer_selection", &case.case.peer_selection),
        (
            "market.risk_free_rate_justification",
            &case.market.risk_free_rate_justification,
        ),
        (
            "market.equity_risk_premium_justification",
            &case.market.equity_risk_premium_justification,
        ),
        ("target.justification", &case.target.justification),
        ("debt.justification", &case.debt.justification),
        (
            "premiums.size_justification",
            &case.premiums.size_justification,
        ),
        (
            "premiums.country_justification",
            &case.premiums.country_justification,
        ),
        (
            "premiums.company_specific_justification",
            &case.premiums.company_specific_justification,
        ),
        ("preferred.justification", &case.preferred.justification),
        ("leases.justification", &case.leases.justification),
        (
            "conversion.justification",
            case.conversion
                .as_ref()
                .map_or(&EMPTY, |c| &c.justification),
        ),
    ];
    for (key, text) in texts {
        // In UTF-16 units, as a workbook cell counts them (an emoji is two; found by review).
        let length = text.encode_utf16().count();
        if length > MOST {
            return Err(format!(
                "{key} is {length} characters long; a justification or selection is at most \
                 {MOST} (a workbook cell holds 32,767)"
            ));
        }
    }
    Ok(())
}

/// `[case]` and the rates of `[market]`.
fn validate_case_and_market(case: &CaseFile) -> std::result::Result<(), String> {
    if case.case.title.trim().is_empty() {
        return Err("case.title is empty".into());
    }
    // Found by review: accepted, and shown as an empty cell in the memo's inputs.
    if case.case.currency.trim().is_empty() {
        return Err(
            "case.currency is empty: name the currency the case's rates are in (EUR, say)".into(),
        );
    }
    let labels = [
        ("case.title", &case.case.title),
        ("case.subject", &case.case.subject),
        ("case.currency", &case.case.currency),
        ("market.index.name", &case.market.index.name),
    ];
    let conversion = case
        .conversion
        .as_ref()
        .map(|c| ("conversion.currency", &c.currency));
    for (key, text) in labels.into_iter().chain(conversion) {
        plain_label(key, text)?;
    }
    free_text_lengths(case)?;
    super::sources::validate(case)?;
    rate(
        "market.risk_free_rate",
        case.market.risk_free_rate,
        -0.5,
        1.0,
    )?;
    if case.leverage.debt_beta_source == DebtBetaSource::CreditSpread
        && case.market.equity_risk_premium < MIN_SPREAD_PREMIUM
    {
        return Err(format!(
            "market.equity_risk_premium = {} with leverage.debt_beta_source = \"credit-spread\": \
             the debt beta (Kd - rf) / ERP needs an equity risk premium of at least \
             {MIN_SPREAD_PREMIUM}",
            crate::error::compact(case.market.equity_risk_premium)
        ));
    }
    rate(
        "market.equity_risk_premium",
        case.market.equity_risk_premium,
        -0.5,
        1.0,
    )?;
    Ok(())
}

/// The return window of `[beta]`: its length against the data, the estimator options, the
/// rolling windows and the flag thresholds.
fn validate_window(case: &CaseFile) -> std::result::Result<(), String> {
    let beta = &case.beta;
    if beta.min_observations < 3 {
        return Err(format!(
            "beta.min_observations = {} is below 3: a regression with an intercept needs at \
             least one degree of freedom left",
            beta.min_observations
        ));
    }
    let valuation_date = case.case.valuation_date.0;
    if let Some(end) = beta.window_end {
        if end.0 > valuation_date {
            return Err(format!(
                "beta.window_end = {end} is after case.valuation_date = {valuation_date}: no \
                 data later than the valuation date may be used"
            ));
        }
    }
    if let Lookback::Periods(n) = beta.lookback {
        lookback_count_within_bound(beta, n, valuation_date)?;
    }
    if let (Some(start), end) = (beta.window_start, beta.window_end_date(valuation_date)) {
        if start.0 >= end {
            return Err(format!(
                "beta.window_start = {start} is not before the window end {end}"
            ));
        }
    }
    let lookback = beta.lookback_periods(valuation_date);
    if lookback < beta.min_observations {
        let given = match beta.window_start {
            Some(start) => format!("beta.window_start = {start}"),
            None => format!("beta.lookback = {}", beta.lookback),
        };
        return Err(format!(
            "{given} gives {lookback} {} return periods, fewer than beta.min_observations = \
             {}: no peer could pass",
            super::label(&beta.frequency),
            beta.min_observations
        ));
    }
    if let Some(0) = beta.max_stale_days {
        if beta.frequency != Frequency::Daily {
            return Err(
                "beta.max_stale_days = 0 would drop every period whose sample is not dated on \
                 its sample point; give at least 1"
                    .into(),
            );
        }
    }
    validate_beta_options(beta, lookback)?;
    validate_rolling_and_flags(beta, lookback)
}

/// A count of periods held to the two centuries a span is held to ([`MOST_YEARS`]), more than
/// any price history holds; the window's date arithmetic stays inside the calendar. Checked
/// whether or not `beta.window_start` sets the window instead, as the span's bound is.
fn lookback_count_within_bound(
    beta: &BetaSettings,
    n: u32,
    valuation_date: chrono::NaiveDate,
) -> std::result::Result<(), String> {
    let end = beta.window_end_date(valuation_date);
    let Some(most) = beyond_most_years(n, beta.frequency, beta.weekday, end) else {
        return Ok(());
    };
    let years = years_of_periods(n, beta.frequency);
    let span = match years {
        y if y >= 1000.0 => format!("about {y:.0} years"),
        y if y < MOST_YEARS as f64 + 0.05 => format!("just over {MOST_YEARS} years"),
        y => format!("about {y:.1} years"),
    };
    let frequency = super::label(&beta.frequency);
    Err(format!(
        "beta.lookback = {n} {frequency} return periods reach back {span}, more than any price \
         history holds; a window reaches back at most {MOST_YEARS} years: at most {most} \
         {frequency} periods, or a span such as \"{MOST_YEARS}y\""
    ))
}

/// The rolling windows against the window's `lookback` periods, and the flag thresholds.
fn validate_rolling_and_flags(
    beta: &BetaSettings,
    lookback: u32,
) -> std::result::Result<(), String> {
    let (window, min) = beta.rolling(lookback);
    if window > lookback || window < 3 {
        return Err(format!(
            "beta.rolling_window = {window} must lie between 3 and the window's {lookback} periods"
        ));
    }
    if min < 3 || min > window {
        return Err(format!(
            "beta.rolling_min_observations = {min} must lie between 3 and beta.rolling_window = \
             {window}"
        ));
    }
    if beta.rolling_step == 0 {
        return Err("beta.rolling_step = 0: give at least 1 period".into());
    }
    for (key, value) in [
        ("beta.flag_observations_share", beta.flag_observations_share),
        ("beta.flag_r_squared_floor", beta.flag_r_squared_floor),
        ("beta.flag_stale_share", beta.flag_stale_share),
        ("beta.flag_zero_return_share", beta.flag_zero_return_share),
        ("beta.flag_lag_p_value", beta.flag_lag_p_value),
    ] {
        if !(value.is_finite() && (0.0..=1.0).contains(&value)) {
            return Err(format!("{key} = {value} is outside [0, 1]"));
        }
    }
    Ok(())
}

/// `[uncertainty]`: enough draws for percentiles, and ranges that are ranges.
fn validate_uncertainty(case: &CaseFile) -> std::result::Result<(), String> {
    let u = &case.uncertainty;
    // At most 1, a move of 100 percentage points (found by review: 1e308 wrote "inf bp" into
    // the memo).
    if !(u.influence_threshold > 0.0 && u.influence_threshold <= 1.0) {
        return Err(format!(
            "uncertainty.influence_threshold = {} must be a positive decimal at most 1 (0.0025 \
             is 25 bp)",
            u.influence_threshold
        ));
    }
    if u.draws < 100 {
        return Err(format!(
            "uncertainty.draws = {} is too few for percentiles; use at least 100",
            u.draws
        ));
    }
    for (key, range) in [
        ("uncertainty.equity_risk_premium", u.equity_risk_premium),
        ("uncertainty.risk_free_rate", u.risk_free_rate),
    ] {
        if let Some([low, high]) = range {
            if !(low.is_finite() && high.is_finite() && low <= high) {
                return Err(format!(
                    "{key} = [{low}, {high}] is not a range [low, high] with low <= high"
                ));
            }
            // Each end is a rate the case itself would accept (a percentage typed for a decimal
            // is refused here, not after 10,000 draws).
            for (end, value) in [("low", low), ("high", high)] {
                rate(key, value, -0.5, 1.0)
                    .map_err(|message| format!("{message} (the range's {end} end)"))?;
            }
        }
    }
    let credit_spread = case.leverage.debt_beta_source == DebtBetaSource::CreditSpread;
    if let (true, Some([low, high])) = (credit_spread, u.equity_risk_premium) {
        if low < MIN_SPREAD_PREMIUM {
            let (low, high) = (crate::error::compact(low), crate::error::compact(high));
            return Err(format!(
                "uncertainty.equity_risk_premium = [{low}, {high}] with \
                 leverage.debt_beta_source = \"credit-spread\": every draw's debt beta \
                 (Kd - rf) / ERP needs an equity risk premium of at least {MIN_SPREAD_PREMIUM}"
            ));
        }
    }
    Ok(())
}

/// `[[peer]]`: names unique, figures in range, keys consistent with `[leverage]`.
fn validate_peers(case: &CaseFile) -> std::result::Result<(), String> {
    if case.peers.is_empty() {
        return Err("the case has no [[peer]] tables".into());
    }
    for (i, peer) in case.peers.iter().enumerate() {
        let key = |field: &str| format!("peer.{i}.{field} (peer \"{}\")", peer.name);
        if peer.name.trim().is_empty() {
            return Err(format!("peer.{i}.name is empty"));
        }
        plain_label(&format!("peer.{i}.name"), &peer.name)?;
        super::sanity::not_a_formula(&format!("peer.{i}.name"), &peer.name)?;
        if let Some(reason) = &peer.exclude {
            plain_label(&key("exclude"), reason)?;
            super::sanity::not_a_formula(&format!("peer.{i}.exclude"), reason)?;
        }
        super::sanity::path_not_a_formula(&key("prices"), &peer.prices)?;
        let earlier = case.peers[..i].iter().map(|p| p.name.as_str());
        super::sanity::distinct_name(i, &peer.name, earlier)?;
        if !(peer.equity_value.is_finite() && peer.equity_value > 0.0) {
            return Err(format!(
                "{} = {} must be positive",
                key("equity_value"),
                peer.equity_value
            ));
        }
        for (field, value) in [("debt", peer.debt), ("cash", peer.cash)] {
            if !(value.is_finite() && value >= 0.0) {
                return Err(format!("{} = {value} is negative", key(field)));
            }
        }
        for (field, value) in [
            ("equity_value", peer.equity_value),
            ("debt", peer.debt),
            ("cash", peer.cash),
        ] {
            amount_within_bounds(&key(field), value)?;
        }
        rate(&key("tax_rate"), peer.tax_rate, 0.0, 1.0)?;
        if let Some(kd) = peer.cost_of_debt {
            rate(&key("cost_of_debt"), kd, 0.0, 1.0)?;
        }
        if let Some(debt_beta) = peer.debt_beta {
            if case.leverage.debt_beta_source == DebtBetaSource::None {
                return Err(format!(
                    "{} = {debt_beta} is given but leverage.debt_beta_source = \"none\" \
                     (riskless debt); set it to \"given\" or drop the peer's debt_beta",
                    key("debt_beta")
                ));
            }
            rate(&key("debt_beta"), debt_beta, -1.0, 3.0)?;
        }
        if peer.exclude.as_deref().is_some_and(|r| r.trim().is_empty()) {
            return Err(format!(
                "{} is empty: state the reason the peer is excluded",
                key("exclude")
            ));
        }
    }
    if case.peers.iter().all(|p| p.exclude.is_some()) {
        return Err("every [[peer]] has `exclude` set: no peer is left to aggregate".into());
    }
    Ok(())
}

/// A balance-sheet amount (equity value, debt, cash) must be 0 or lie between 1e-100 and 1e100,
/// the bounds of a price: sums and products of amounts near the largest double overflow in a
/// spreadsheet's recalculation of the workbook (found by review: 1.7e308 gave #NUM! in 19 cells
/// of a run the case accepted), and no currency unit makes a firm's figures so large or small.
pub(crate) fn amount_within_bounds(key: &str, value: f64) -> std::result::Result<(), String> {
    use crate::io::sanity::{amount_out_of_range, AMOUNT_OUT_OF_RANGE};
    match amount_out_of_range(value) {
        false => Ok(()),
        true => Err(format!(
            "{key} = {} {AMOUNT_OUT_OF_RANGE}",
            crate::error::compact(value)
        )),
    }
}
