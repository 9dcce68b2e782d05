//! The bridge between two WACCs as the bars of a waterfall chart, computed here so the chart
//! draws stored figures only.
//!
//! From this case's WACC, one bar per input group of the build-up moves the running total by
//! the group's Shapley value (order-independent, so the picture does not depend on which group
//! is drawn first); the groups' bars end at the claim's build-up WACC because Shapley values sum
//! to the whole difference. What a side's components do not explain comes as residue bars:
//! first the gap between the starting side's stated WACC and its components (0 for a case, whose
//! build-up holds preferred equity and leases too), last the same gap of the claim.

use super::bridge::{Side, Step};
pub use crate::valuation::analyses::{BarKind, WaterfallBar};

/// The bars from `from`'s WACC to `to`'s, in drawing order.
pub fn waterfall(
    from: &Side,
    to: &Side,
    steps: &[Step],
    unexplained: Option<f64>,
    unexplained_from: Option<f64>,
) -> Vec<WaterfallBar> {
    let bar = |label: String, kind, start, end| WaterfallBar {
        label,
        kind,
        start,
        end,
    };
    let first = from.stated_wacc.unwrap_or(from.wacc);
    let mut bars = vec![bar(from.label.clone(), BarKind::Total, 0.0, first)];
    if let Some(residue) = unexplained_from.filter(|r| *r != 0.0) {
        bars.push(bar(
            "unexplained (stated less components)".into(),
            BarKind::Residue,
            first,
            first - residue,
        ));
    }
    let mut running = from.wacc;
    for step in steps {
        let name = step.group.title().to_string();
        bars.push(bar(name, BarKind::Group, running, running + step.shapley));
        running += step.shapley;
    }
    if let Some(residue) = unexplained {
        bars.push(bar(
            "unexplained (stated less components)".into(),
            BarKind::Residue,
            to.wacc,
            to.wacc + residue,
        ));
    }
    bars.push(bar(
        to.label.clone(),
        BarKind::Total,
        0.0,
        to.stated_wacc.unwrap_or(to.wacc),
    ));
    bars
}
