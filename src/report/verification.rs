//! `verification.md`: the verification status of a receipt, for the reviewer's file.
//!
//! Rendered from the [`Verification`] that `hurdle verify` computes; it restates the verdict,
//! each input file's hash check and every mismatched figure, and computes nothing.

use std::fmt::Write as _;

use crate::audit::verify::Verification;

/// The verification report as Markdown.
pub fn markdown(r: &Verification) -> String {
    let mut out = String::new();
    let verdict = if r.reproduced {
        "REPRODUCED"
    } else {
        "NOT REPRODUCED"
    };
    let w = &mut out;
    // Writing to a String cannot fail; the results are ignored below for that reason.
    let _ = writeln!(w, "# Verification of `{}`\n", r.receipt);
    let _ = writeln!(
        w,
        "**{verdict}**: {} figures compared at a relative tolerance of {:e}, {} mismatched.\n",
        r.compared,
        r.tolerance,
        r.mismatches.len()
    );
    let _ = writeln!(
        w,
        "The {} file `{}`: {}. Receipt written by hurdle {}, verified with hurdle {}.\n",
        r.kind,
        r.case_file,
        if r.case_unchanged {
            "unchanged"
        } else {
            "changed since the receipt"
        },
        r.recorded_tool_version,
        r.current_tool_version
    );
    let _ = writeln!(
        w,
        "| Role | File | Status | Recorded SHA-256 | Current SHA-256 |"
    );
    let _ = writeln!(w, "|---|---|---|---|---|");
    for f in &r.files {
        let status = if f.unchanged {
            "unchanged"
        } else {
            "**changed**"
        };
        let _ = writeln!(
            w,
            "| {} | `{}` | {status} | `{}` | `{}` |",
            f.role, f.path, f.recorded_sha256, f.current_sha256
        );
    }
    if !r.mismatches.is_empty() {
        let _ = writeln!(w, "\n| Figure | Recorded | Recomputed |");
        let _ = writeln!(w, "|---|---|---|");
        for m in &r.mismatches {
            let _ = writeln!(w, "| `{}` | {} | {} |", m.path, m.recorded, m.recomputed);
        }
    }
    let _ = writeln!(w, "\nNot compared: {}.", r.not_compared);
    let _ = writeln!(
        w,
        "\nA match shows that the same inputs give the same figures; it does not show that the \
         inputs or the methods are right. Verify the inputs against their sources and defer to \
         the applicable valuation standards and qualified professionals."
    );
    out
}
