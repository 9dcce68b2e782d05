//! The range `implied` searches and the intervals it is scanned in: a range as given, or the
//! target's default widened to hold the case's own value at the default's spacing; checked
//! against what the key accepts and, for a case solved in debt to capital, mapped to it.

use super::Target;
use crate::error::{Error, Result};

/// The range to scan and its intervals: `requested` as given (`given`), else the default
/// widened to hold the case's value `base` of `key` ([`holding_case_value`]), whose intervals
/// keep the default's spacing: more intervals, not wider ones (found by review: widening to
/// twice the span made the scan twice as coarse).
pub(super) fn plan_intervals(
    requested: (f64, f64),
    given: bool,
    key: &str,
    by_capital: bool,
    base: f64,
) -> ((f64, f64), usize) {
    let widened = match given {
        true => requested,
        false => holding_case_value(requested, key, by_capital, base),
    };
    let spans = (requested.1 - requested.0, widened.1 - widened.0);
    (widened, scan_intervals(spans))
}

/// The search range checked against what the key accepts and, for a debt-to-capital case,
/// which is solved in debt-to-capital, the D/E range mapped to it.
pub(super) fn in_key_units(
    (low, high): (f64, f64),
    key: &str,
    by_capital: bool,
) -> Result<(f64, f64)> {
    let checked = if by_capital {
        "target.debt_to_equity"
    } else {
        key
    };
    crate::valuation::sanity::check_search_range(checked, low, high)?;
    let dc = crate::capital::cost::debt_to_capital_from_equity;
    Ok(match by_capital {
        true => (dc(low), dc(high)),
        false => (low, high),
    })
}

/// The default range widened to hold the case's own value `base` (in the key's units; a
/// debt-to-capital case's is turned into D/E, the range's unit), reaching as far again beyond
/// it as the range reached on its other side, within what the key accepts (found by review: a
/// case at an ERP of 25% was told that no ERP in [0%, 20%] meets a claim near its own WACC).
fn holding_case_value(
    (low, high): (f64, f64),
    key: &str,
    by_capital: bool,
    base: f64,
) -> (f64, f64) {
    let (key, base) = match by_capital {
        true => (
            "target.debt_to_equity",
            crate::capital::cost::debt_to_equity_from_capital(base),
        ),
        false => (key, base),
    };
    let (least, most, most_included) = crate::valuation::sanity::accepted_range(key);
    let most = match most_included {
        true => most,
        false => most.next_down(),
    };
    match base {
        b if !b.is_finite() => (low, high),
        b if b > high => (low, (b + (b - low)).min(most)),
        b if b < low => ((b - (high - b)).max(least), high),
        _ => (low, high),
    }
}

/// Intervals of the scan: 64 over a range as given or a default one, and as many more as keep
/// the default's spacing over a default range widened to hold the case's value (`spans`: the
/// default's and the widened one's), at most [`MOST_INTERVALS`].
fn scan_intervals((default_span, span): (f64, f64)) -> usize {
    let widened = (INTERVALS as f64 * span / default_span).ceil();
    match widened.is_finite() && widened > INTERVALS as f64 {
        true => (widened as usize).min(MOST_INTERVALS),
        false => INTERVALS,
    }
}

/// The scan's intervals over a range (65 values).
pub(super) const INTERVALS: usize = 64;
/// The most intervals a widened default range is scanned in.
const MOST_INTERVALS: usize = 256;

/// The range to search: the given one, else the target's default. Every default range passes,
/// so a failing range is the user's; the command line names it.
pub(super) fn search_range(range: Option<(f64, f64)>, target: Target) -> Result<(f64, f64)> {
    let (low, high) = range.unwrap_or_else(|| target.default_range());
    if low.is_finite() && high.is_finite() && low < high {
        return Ok((low, high));
    }
    Err(Error::Argument {
        option: format!(
            "search range {}..{}",
            crate::error::compact(low),
            crate::error::compact(high)
        ),
        message: "the range must be LOW..HIGH with finite LOW < HIGH".into(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    // The default's spacing kept over a widened range (arithmetic): 0–20% widened to 0–50% is
    // 2.5 spans, 160 intervals; an unwidened or a given range 64; never above 256.
    #[test]
    fn a_widened_range_keeps_the_default_spacing() {
        assert_eq!(scan_intervals((0.20, 0.50)), 160);
        assert_eq!(scan_intervals((0.20, 0.20)), 64);
        assert_eq!(scan_intervals((0.20, 0.10)), 64);
        assert_eq!(scan_intervals((0.20, 20.0)), 256);
    }
}
