//! Reproduction and reconciliation: the work of a reviewer rather than of the analyst.
//!
//! [`evaluate`] is the full run behind `hurdle run` and `hurdle verify`: the valuation plus its
//! sensitivity grid, its Monte Carlo interval and, when the case names one, the bridge to a
//! claimed build-up, all stored in the one [`Valuation`]. The other modules answer a reviewer's
//! questions: does the receipt reproduce ([`verify`]), which input value gives a claimed WACC
//! ([`implied`]), what explains the gap between two WACCs ([`bridge`]); [`grid`],
//! [`uncertainty`], [`specification`] and [`frequency_comparison`] hold the analyses a run
//! stores, [`histogram`] and [`waterfall`] what their charts draw.

pub mod bridge;
pub mod frequency_comparison;
pub mod grid;
pub mod histogram;
pub mod implied;
pub mod receipt;
pub mod specification;
pub mod uncertainty;
pub mod verify;
pub mod waterfall;

use crate::error::{Error, Result};
use crate::valuation::{estimate_peers, value_with, Inputs, Valuation};

/// The valuation with every analysis the memo shows: the valuation of the case alone, then its
/// analyses, which read it, and the whole record built from both (nothing patched in later).
pub fn evaluate(inputs: &Inputs, generated_at: &str) -> Result<Valuation> {
    // The peers are estimated once; the grid and the Monte Carlo reuse the estimates.
    let estimates = estimate_peers(&inputs.case, inputs)?;
    let base = value_with(&inputs.case, inputs, &estimates, generated_at)?;
    let sensitivity = &inputs.case.settings.sensitivity;
    let (rows, columns) = grid::default_axes(&base, &crate::case::Variants::new(&inputs.case)?);
    let rows = match &sensitivity.rows {
        Some(spec) => grid::parse_axis("sensitivity.rows", spec)?,
        None => rows,
    };
    let columns = match &sensitivity.columns {
        Some(spec) => grid::parse_axis("sensitivity.columns", spec)?,
        None => columns,
    };
    // The grid, the specification range and the Monte Carlo only read the estimates and the case,
    // so they run side by side (two cores halve the wall time); their errors are reported in this
    // fixed order, whichever finished first.
    let point = base.cost.wacc;
    let specifications = || {
        if inputs.case.settings.uncertainty.specification_range {
            specification::range(inputs, &estimates, point)
        } else {
            Ok(Vec::new())
        }
    };
    let (sensitivity, uncertainty) = rayon::join(
        || grid::grid(inputs, &estimates, &rows, &columns, sensitivity.metric),
        || uncertainty::simulate(&inputs.case, inputs, &estimates, point, specifications),
    );
    let (sensitivity, uncertainty) = (sensitivity?, uncertainty?);
    let mut notes = base.notes.clone();
    notes.extend(specification::note(&uncertainty));
    let reconciliation = match &inputs.case.settings.reconcile {
        Some(reconcile) => {
            let path = inputs.case.resolve(&reconcile.claimed);
            // Named as the case's claim (found by review: a bundle without its claim said only
            // "cannot read").
            let claimed = bridge::read_side(&path, &reconcile.claimed).map_err(|e| match e {
                // The claim file itself, not a file a claimed case reads.
                Error::Io {
                    path: failed,
                    source,
                    ..
                } if failed == path => Error::Io {
                    path: failed,
                    action: "cannot read the claimed build-up that the case's reconcile.claimed \
                             names",
                    source,
                },
                other => other,
            })?;
            notes.extend(bridge::notes_beside_case(&base, &claimed, false));
            let ours = bridge::Side::from_valuation("this case", &base);
            Some(bridge::bridge(&ours, &claimed))
        }
        None => None,
    };
    let valuation = Valuation {
        sensitivity: Some(sensitivity),
        uncertainty: Some(uncertainty),
        reconciliation,
        notes,
        ..base
    };
    crate::valuation::sanity::check_finite_figures(&valuation)?;
    Ok(valuation)
}

/// Why the case refuses a value an analysis tried, without the case file's name (the value is
/// the analysis's, not a line of the file).
fn reason(error: &Error) -> String {
    match error {
        Error::Case { message, .. } | Error::Override { message, .. } => message.clone(),
        other => other.to_string(),
    }
}

fn case_error(inputs: &Inputs, message: String) -> Error {
    Error::Case {
        file: inputs.case.path.clone(),
        message,
    }
}
