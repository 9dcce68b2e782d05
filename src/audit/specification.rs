//! The specification range: the case's WACC under the usual alternative return specifications —
//! daily, weekly and monthly returns over 2-, 3- and 5-year windows — so a reader sees how much
//! the choice of method moves the answer beside the statistical error of one method.
//!
//! Each row is the case rerun with `--set` overrides (frequency, a calendar-span lookback, and the
//! minimum observations scaled to the window as `betas --compare-frequencies` scales them), so a
//! row equals `hurdle run` with the same `--set` values. A row the data or settings cannot
//! support says why instead of failing the run.

use crate::case::{label, Case, Variants};
use crate::error::Result;
use crate::market::sampling::Frequency;
use crate::valuation::analyses::{Specification, Uncertainty};
use crate::valuation::{cost_of_capital, estimate_peers_for_wacc, Inputs, PeerEstimates};

/// The frequencies and window lengths (years) of the range.
const FREQUENCIES: [Frequency; 3] = [Frequency::Daily, Frequency::Weekly, Frequency::Monthly];
const WINDOW_YEARS: [u32; 3] = [2, 3, 5];

/// Every row of the range, the case's own choice marked (added as a row of its own when it is
/// not one of the nine).
pub fn range(inputs: &Inputs, estimates: &PeerEstimates, point: f64) -> Result<Vec<Specification>> {
    let case = &inputs.case;
    let variants = Variants::new(case)?;
    let mut rows = Vec::with_capacity(FREQUENCIES.len() * WINDOW_YEARS.len() + 1);
    for frequency in FREQUENCIES {
        for years in WINDOW_YEARS {
            rows.push(row(inputs, &variants, estimates, (frequency, years)));
        }
    }
    if !rows.iter().any(|r| r.case_choice) {
        let beta = &case.settings.beta;
        rows.push(Specification {
            frequency: beta.frequency,
            window: match (beta.window_start, beta.lookback) {
                (Some(start), _) => format!("from {start}"),
                // A count of periods in the rows' unit, years, beside it (60 weekly returns
                // are about 1.2 years, not the 5 of 60 months).
                (None, crate::case::Lookback::Periods(n)) => format!(
                    "{n} {} (about {}y)",
                    match beta.frequency {
                        crate::market::sampling::Frequency::Daily => "days",
                        crate::market::sampling::Frequency::Weekly => "weeks",
                        crate::market::sampling::Frequency::Monthly => "months",
                        crate::market::sampling::Frequency::Quarterly => "quarters",
                    },
                    crate::error::rounded(f64::from(n) / beta.frequency.periods_per_year(), 1)
                ),
                (None, span) => span.to_string().trim_matches('"').to_string(),
            },
            overrides: Vec::new(),
            case_choice: true,
            wacc: Some(point),
            reason: None,
        });
    }
    Ok(rows)
}

/// One row: the overrides, then the WACC or the reason there is none.
fn row(
    inputs: &Inputs,
    variants: &Variants<'_>,
    estimates: &PeerEstimates,
    (frequency, years): (Frequency, u32),
) -> Specification {
    let case = &inputs.case;
    let mut overrides = vec![
        format!("beta.frequency={}", label(&frequency)),
        format!("beta.lookback={years}y"),
    ];
    let outcome = (|| -> std::result::Result<(f64, bool), String> {
        if let Some(start) = case.settings.beta.window_start {
            return Err(format!(
                "the case fixes beta.window_start = {start}, which a lookback does not replace"
            ));
        }
        let beta = &case.settings.beta;
        overrides.push(format!(
            "beta.min_observations={}",
            scaled(case, beta.min_observations, frequency, years)
        ));
        // A rolling window the case sets that the row's window cannot hold (30 periods in a
        // 2-year monthly row) is scaled as the minimum observations are; one that fits is left
        // as it is (the defaults follow the window by themselves).
        let periods = row_periods(case, frequency, years);
        if let Some(window) = beta.rolling_window.filter(|&w| w > periods) {
            let window = scaled(case, window, frequency, years);
            overrides.push(format!("beta.rolling_window={window}"));
            if let Some(min) = beta.rolling_min_observations {
                let min = scaled(case, min, frequency, years).min(window);
                overrides.push(format!("beta.rolling_min_observations={min}"));
            }
        }
        let variant = variants.with(&overrides).map_err(|e| e.to_string())?;
        // Only the WACC is read, so a re-estimation skips what only the charts and intervals read.
        let estimated = if estimates.fit(&variant) {
            std::borrow::Cow::Borrowed(estimates)
        } else {
            std::borrow::Cow::Owned(
                estimate_peers_for_wacc(&variant, inputs).map_err(|e| e.to_string())?,
            )
        };
        let cost = cost_of_capital(&variant, inputs, &estimated).map_err(|e| e.to_string())?;
        Ok((cost.wacc, estimates.fit(&variant)))
    })();
    let (wacc, case_choice, reason) = match outcome {
        Ok((wacc, same)) => (Some(wacc), same, None),
        Err(reason) => (None, false, Some(reason)),
    };
    Specification {
        frequency,
        window: format!("{years}y"),
        overrides,
        case_choice,
        wacc,
        reason,
    }
}

/// A count of the case's periods (its minimum observations, a rolling window) scaled to a
/// window of `years` at `frequency`: ceil(count · periods / the case's periods), at least 3 and
/// at most the window's periods.
fn scaled(case: &Case, count: u32, frequency: Frequency, years: u32) -> u32 {
    let date = case.settings.case.valuation_date.0;
    let base = f64::from(case.settings.beta.lookback_periods(date));
    let periods = row_periods(case, frequency, years);
    let scaled = (f64::from(count) * f64::from(periods) / base).ceil();
    (scaled as u32).clamp(3, periods.max(3))
}

/// The return periods of a window of `years` at `frequency`, ending where the case's does.
fn row_periods(case: &Case, frequency: Frequency, years: u32) -> u32 {
    let variant = crate::case::BetaSettings {
        frequency,
        lookback: crate::case::Lookback::Span {
            count: years,
            unit: crate::case::SpanUnit::Years,
        },
        ..case.settings.beta.clone()
    };
    variant.lookback_periods(case.settings.case.valuation_date.0)
}

/// A note when the specification range tells a reader something the intervals do not: the
/// case's own choice gives the lowest or the highest WACC of the rows (with at least three
/// others), or rows lie outside the estimation-error interval, which covers the statistical
/// error of one specification and not the choice among them. `None` otherwise.
pub fn note(u: &Uncertainty) -> Option<String> {
    let own = u.specifications.iter().find(|r| r.case_choice)?.wacc?;
    let others: Vec<f64> = (u.specifications.iter())
        .filter(|r| !r.case_choice)
        .filter_map(|r| r.wacc)
        .collect();
    let (low, high) = others
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &w| {
            (l.min(w), h.max(w))
        });
    let outside = others.iter().filter(|&&w| w < u.p05 || w > u.p95).count();
    let percent = |x: f64| format!("{}%", crate::error::rounded(x * 100.0, 2));
    let extreme = match others.len() >= 3 {
        true if own < low => Some("lowest"),
        true if own > high => Some("highest"),
        _ => None,
    };
    if extreme.is_none() && outside == 0 {
        return None;
    }
    let mut text = format!(
        "Specification range: the case's own frequency and window give {}",
        percent(own)
    );
    if let Some(which) = extreme {
        text.push_str(&format!(
            ", the {which} WACC of the {} rows (the others {} to {})",
            others.len() + 1,
            percent(low),
            percent(high)
        ));
    }
    if outside > 0 {
        text.push_str(&format!(
            "; {outside} of the other {} {} outside the 90% interval of the first Monte Carlo \
             ({} to {}), which does not cover the choice of frequency and window",
            others.len(),
            if outside == 1 { "lies" } else { "lie" },
            percent(u.p05),
            percent(u.p95)
        ));
    }
    text.push('.');
    Some(text)
}
