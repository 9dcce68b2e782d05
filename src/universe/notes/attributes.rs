//! The notes on the attributes' figures: points that look like thousands separators, the
//! securities lacking a figure, equity values too far apart to share one unit, and cash above
//! half a firm's value.

use std::collections::BTreeMap;

use super::{first_ids, ids_where};
use crate::universe::securities::SecurityResult;
use crate::universe::{securities_count, UniverseInputs};

/// The attributes' figure columns whose points look like thousands separators (found by review:
/// figures saved as a spreadsheet shows them where a point separates thousands, `66.471` for 66,471,
/// were read as 66.471 beside unseparated figures under a thousand, with no word said).
pub(super) fn thousands_notes(inputs: &UniverseInputs) -> Vec<String> {
    let attributes = &inputs.attributes;
    (attributes.thousands_points.iter())
        .map(|t| {
            let (which, others) = match &t.beside {
                None => (
                    "written with a point has exactly three digits after it",
                    format!("others have none ({})", t.without_point),
                ),
                Some(other) => (
                    "has a point with exactly three digits after it",
                    format!("no figure of `{other}` has one ({})", t.without_point),
                ),
            };
            format!(
                "every figure of `{}` in {} {which} ({}) while {others}: if the point separates \
                 thousands ({} for {}), those figures are read as a thousandth of their value \
                 and the D/E and weights built on them are wrong; write figures without \
                 thousands separators, a point only before decimals",
                t.column,
                attributes.file.path,
                t.with_point.join(", "),
                t.with_point[0],
                t.with_point[0].replace('.', ",")
            )
        })
        .collect()
}

/// The securities lacking an attribute figure, by figure and id (found by review: the counts
/// named no security).
pub(super) fn missing_note(securities: &[SecurityResult]) -> Option<String> {
    use super::securities::Missing;
    let parts: Vec<String> = (Missing::ALL.iter())
        .filter_map(|&m| {
            let ids = ids_where(securities, |s| s.missing.contains(&m));
            (!ids.is_empty()).then(|| format!("{} {} ({})", m.name(), ids.len(), first_ids(&ids)))
        })
        .collect();
    (!parts.is_empty()).then(|| {
        format!(
            "Securities lacking a figure (securities.csv's `missing`; left out of every \
             aggregate that needs it, never filled in): {}",
            parts.join("; ")
        )
    })
}

/// How far apart the equity values of one industry's securities may lie before their units are
/// in doubt: a factor of 100,000. A market's largest firms are rarely more than a few thousand
/// times its industry's smallest listed ones, while an equity value given in units among
/// figures in millions is a million times too large (a judgement; a case asks about peers
/// 10,000 apart, a peer set being narrower than an industry).
const UNITS_FACTOR: f64 = 1e5;

/// "Check:" notes on the attributes as a whole (found by a review of a market's plausible
/// mistakes): every tax rate given 0 (blanks filled with zeros: each firm is unlevered without
/// a tax shield, when a blank would have flagged it), and a median gross D/E below 1/100 over the
/// securities with debt (equity values in thousands beside debt in millions, every D/E a
/// thousandth of its value). Both bounds are hurdle's judgement: a whole market of firms
/// without tax, or whose median firm's debt is under 1% of its equity, is rare.
pub(super) fn whole_file_notes(securities: &[SecurityResult], file: &str) -> Vec<String> {
    let mut notes = Vec::new();
    let taxes: Vec<f64> = securities.iter().filter_map(|s| s.tax_rate).collect();
    if taxes.len() >= 2 && taxes.iter().all(|&t| t == 0.0) {
        notes.push(format!(
            "Check: every tax rate in {file} is 0 ({} securities): blanks filled with zeros? \
             Each firm is then unlevered without a tax shield; leave a rate unknown blank (the \
             security is flagged missing_tax_rate and kept out of the figures that need it).",
            taxes.len()
        ));
    }
    // Gross debt over equity, whatever `leverage.debt_measure`: net of cash, a cash-rich market's
    // D/E is below zero with its units right (found by review).
    let mut ratios: Vec<f64> = (securities.iter())
        .filter_map(|s| Some(s.debt.filter(|&d| d > 0.0)? / s.equity_value?))
        .collect();
    if ratios.len() >= 5 {
        let middle = ratios.len() / 2;
        let median = *ratios.select_nth_unstable_by(middle, f64::total_cmp).1;
        if median < 0.01 {
            notes.push(format!(
                "Check: the median gross D/E of the {} securities with debt is {}: equity values in \
                 {file} in smaller units than debt (thousands beside millions)? Every D/E, and \
                 so every unlevered beta, reads them as given.",
                ratios.len(),
                crate::case::sanity::significant(median)
            ));
        }
    }
    notes
}

/// The industries whose equity values span more than [`UNITS_FACTOR`], with their smallest and
/// largest securities: most often figures in other units, which the market-cap weights and the
/// D/E read as given (found by review: one given in units among figures in millions carried its
/// industry's weighted mean alone; measured against the median instead, half an industry in
/// other units named the wrong securities).
pub(super) fn units_note(securities: &[SecurityResult]) -> Option<String> {
    let mut by_industry: BTreeMap<&str, (&SecurityResult, &SecurityResult)> = BTreeMap::new();
    for s in securities {
        let (Some(industry), Some(equity)) = (&s.industry, s.equity_value) else {
            continue;
        };
        let ends = by_industry.entry(industry).or_insert((s, s));
        if equity < ends.0.equity_value.unwrap_or(f64::INFINITY) {
            ends.0 = s;
        }
        if equity > ends.1.equity_value.unwrap_or(0.0) {
            ends.1 = s;
        }
    }
    let wide: Vec<String> = (by_industry.iter())
        .filter_map(|(industry, (least, most))| {
            let (low, high) = (least.equity_value?, most.equity_value?);
            (high > UNITS_FACTOR * low).then(|| {
                format!(
                    "{industry} ({} {} to {} {})",
                    first_ids(&[&least.security]),
                    crate::error::compact(low),
                    first_ids(&[&most.security]),
                    crate::error::compact(high)
                )
            })
        })
        .collect();
    (!wide.is_empty()).then(|| {
        format!(
            "Check: equity values more than 100,000 times apart within an industry: are the \
             attributes all in the same units (millions, say)? The market-cap weights and each \
             D/E read them as given: {}",
            wide.join("; ")
        )
    })
}

/// Below this share of the firm's value in its operations (cash above half of equity plus
/// debt), a beta of the operations is more than twice the unlevered beta: taking the cash at a
/// beta of zero then decides the figure more than the firm's returns do.
const HEAVY_CASH_SHARE: f64 = 0.5;

/// The aggregated securities whose cash is more than half their equity plus debt, by id (found
/// by review: a firm with cash at 77% of its value had a beta of the operations of 4.2 and
/// moved its industry's mean with no word said).
pub(super) fn cash_heavy_note(securities: &[SecurityResult], net: bool) -> Option<String> {
    let heavy = ids_where(securities, |s| {
        s.aggregated()
            && s.operating_share
                .is_some_and(|share| share < HEAVY_CASH_SHARE)
            && s.operations_beta.is_some()
    });
    let (holds, its, is, beta, betas, rests) = match heavy.len() {
        1 => ("holds", "its", "is", "beta", "beta", "rests"),
        _ => ("hold", "their", "are", "betas", "betas", "rest"),
    };
    // Under net debt the unlevered beta has netted the cash already (found by review: the
    // note compared it with the beta of the operations, which it may equal).
    let what = match net {
        false => format!(
            "{its} {beta} of the operations {is} more than twice {its} unlevered {betas} and \
             {rests} on taking that cash at a beta of zero"
        ),
        true => format!(
            "{its} unlevered {betas}, net of that cash, {rests} largely on taking the cash at a \
             beta of zero (operating_share in securities.csv)"
        ),
    };
    (!heavy.is_empty()).then(|| {
        format!(
            "{} {holds} cash of more than half {its} equity plus debt, so {what} (an industry's \
             median is less moved by such figures than its means): {}",
            securities_count(heavy.len()),
            first_ids(&heavy)
        )
    })
}
