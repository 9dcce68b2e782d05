//! `verification.md`: the verification status of a receipt, for the reviewer's file.
//!
//! Rendered from the [`Verification`] that `hurdle verify` computes; it restates the verdict,
//! each input file's hash check, every mismatched figure and every description worded
//! differently, and computes nothing.

use std::fmt::Write as _;

use crate::audit::verify::{
    by_file, shown, Absent, Mismatch, Verification, SAME_VERSION_WORDING_NOTE,
};

/// A recorded or recomputed value as a Markdown table cell: as the terminal shows it (a long
/// section by its size), with `|` escaped so that a text holding one keeps the table's
/// columns; a side that lacks the figure says so.
fn cell(value: &serde_json::Value, absent: bool) -> String {
    match absent {
        true => "*absent*".to_string(),
        false => shown(value).replace('|', "\\|"),
    }
}

/// A table of `list` under `header`: the figure, both sides and, for figures, their
/// difference; nothing when the list is empty.
fn differences(w: &mut String, header: &[&str], list: &[Mismatch]) {
    if list.is_empty() {
        return;
    }
    let rule = vec!["---"; header.len()].join("|");
    let _ = writeln!(w, "\n| {} |\n|{rule}|", header.join(" | "));
    for m in list {
        let mut cells = vec![
            format!(
                "`{}`{}",
                m.path,
                (m.item.as_ref())
                    .map_or_else(String::new, |i| format!(" ({})", i.replace('|', "\\|")))
            ),
            cell(&m.recorded, m.absent_from == Some(Absent::Receipt)),
            cell(&m.recomputed, m.absent_from == Some(Absent::Rerun)),
        ];
        if header.len() == 4 {
            cells.push(
                m.difference()
                    .trim_start_matches("; difference ")
                    .to_string(),
            );
        }
        let _ = writeln!(w, "| {} |", cells.join(" | "));
    }
}

/// Each input file's hash check, one row per file (a wide table's roles on one row).
fn files_table(w: &mut String, r: &Verification) {
    let _ = writeln!(
        w,
        "| Role | File | Status | Recorded SHA-256 | Current SHA-256 |"
    );
    let _ = writeln!(w, "|---|---|---|---|---|");
    for group in by_file(&r.files) {
        let f = group.check;
        let status = match f.status {
            "unchanged" => "unchanged".to_string(),
            "changed" => "**changed**".to_string(),
            "dropped" => "**no longer read**".to_string(),
            "unrecorded" => "**no hash in the receipt**".to_string(),
            _ => "**not in the receipt**".to_string(),
        };
        let status = match &f.current_path {
            Some(now) => format!("{status}; read now from `{now}`"),
            None => status,
        };
        let hash = |h: &Option<String>| h.as_ref().map_or("—".to_string(), |h| format!("`{h}`"));
        let _ = writeln!(
            w,
            "| {} | `{}` | {status} | {} | {} |",
            group.roles,
            f.path,
            hash(&f.recorded_sha256),
            hash(&f.current_sha256)
        );
    }
}

/// The verification report as Markdown.
pub fn markdown(r: &Verification) -> String {
    let mut out = String::new();
    let w = &mut out;
    // Writing to a String cannot fail; the results are ignored below for that reason.
    let _ = writeln!(w, "# Verification of `{}`\n", r.receipt);
    let _ = writeln!(w, "{}.\n", crate::report::format::prose(r.of.clone()));
    let verdict = r.verdict();
    let (word, rest) = verdict.split_once(": ").unwrap_or((&verdict, ""));
    let _ = writeln!(w, "**{word}**: {rest}.\n");
    if !r.headline.is_empty() {
        let _ = writeln!(w, "{}.\n", r.headline_summary());
    }
    let _ = writeln!(
        w,
        "The {} file `{}`: {}. Receipt (SHA-256 `{}`) {}.\n",
        r.kind,
        r.case_file,
        r.case_state(),
        r.receipt_sha256,
        match r.versions_note() {
            note if note.is_empty() =>
                format!("written and verified by hurdle {}", r.current_tool_version),
            note => note,
        }
    );
    if !r.overrides.is_empty() {
        let list: Vec<String> = r.overrides.iter().map(|o| format!("`{o}`")).collect();
        let _ = writeln!(
            w,
            "The receipt's run applied these overrides, reapplied to the rerun (the {} \
             file alone gives other figures): {}.\n",
            r.kind,
            list.join(", ")
        );
    }
    files_table(w, r);
    differences(
        w,
        &["Figure", "Recorded", "Recomputed", "Difference"],
        &r.mismatches,
    );
    differences(
        w,
        &["Description", "Recorded", "Now"],
        &r.wording_differences,
    );
    if !r.wording_differences.is_empty() {
        let _ = writeln!(w, "\nWorded differently: {}.", r.wording_note());
    }
    if r.edited_sentences() > 0 {
        let _ = writeln!(w, "\nSentences that differ: {SAME_VERSION_WORDING_NOTE}.");
    }
    for change in &r.known_changes {
        let _ = writeln!(w, "\nKnown change: {change}.");
    }
    if !r.added_by_this_version.is_empty() {
        let _ = writeln!(w, "\nAdded since the receipt: {}.", r.added_note());
    }
    let _ = writeln!(w, "\n{}.", r.not_compared);
    let _ = writeln!(
        w,
        "\nA match shows that the same inputs give the same figures; it does not show that the \
         inputs or the methods are right. Verify the inputs against their sources and defer to \
         the applicable valuation standards and qualified professionals."
    );
    out
}
