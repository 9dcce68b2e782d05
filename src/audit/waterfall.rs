//! The bridge between two WACCs as the bars of a waterfall chart, computed here so the chart
//! draws stored figures only.
//!
//! From this case's WACC, one bar per input group of the build-up moves the running total by
//! the group's Shapley value (order-independent, so the picture does not depend on which group
//! is drawn first); the groups' bars end at the claim's build-up WACC because Shapley values sum
//! to the whole difference. What a side's components do not explain comes as residue bars:
//! first the gap between the starting side's stated WACC and its components (0 for a case, whose
//! build-up holds preferred equity and leases too), last the same gap of the claim.

pub use crate::valuation::analyses::{BarKind, WaterfallBar};
use crate::valuation::analyses::{Side, Step};

/// The bars from `from`'s WACC to `to`'s, in drawing order.
pub fn waterfall(
    from: &Side,
    to: &Side,
    steps: &[Step],
    unexplained: Option<f64>,
    unexplained_from: Option<f64>,
) -> Vec<WaterfallBar> {
    // A step from `start` by `change`; a total from zero to its level.
    let step = |label: String, kind, start: f64, change: f64| WaterfallBar {
        label,
        kind,
        start,
        end: start + change,
        change: Some(change),
    };
    let total = |label: String, level: f64| WaterfallBar {
        label,
        kind: BarKind::Total,
        start: 0.0,
        end: level,
        change: None,
    };
    let first = from.headline_wacc();
    let mut bars = vec![total(from.label.clone(), first)];
    if let Some(residue) = unexplained_from.filter(|r| *r != 0.0) {
        bars.push(step(UNEXPLAINED.into(), BarKind::Residue, first, -residue));
    }
    let mut running = from.wacc;
    for s in steps {
        let name = s.group.title().to_string();
        bars.push(step(name, BarKind::Group, running, s.shapley));
        running += s.shapley;
    }
    if let Some(residue) = unexplained {
        bars.push(step(UNEXPLAINED.into(), BarKind::Residue, to.wacc, residue));
    }
    bars.push(total(to.label.clone(), to.headline_wacc()));
    bars
}

/// The label of a residue bar.
const UNEXPLAINED: &str = "unexplained (stated less components)";
