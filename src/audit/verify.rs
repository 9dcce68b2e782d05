//! Verification of a receipt: rerun the case a `result.json` names and compare every figure.
//!
//! The case file is looked for beside the receipt's folder, then in it, then at the path the
//! receipt records, then at that path from the receipt's folder and each folder above it, by
//! SHA-256 only there (`locate.rs`; or read where the reviewer gives it), and read with the
//! receipt's overrides; every input file's SHA-256 is compared with the recorded one; the full
//! run is repeated and every leaf of the recorded JSON is compared with the rerun's, numbers
//! within a relative tolerance and everything else exactly. `generated_at`, `case.file`,
//! `universe.file` and `reconciliation.from.source` (the paths the inputs were found at),
//! `tool.version` (which the report names) and `cost_of_debt.row.line` are skipped
//! (`compare.rs`). A sentence that describes a setting in words
//! ([`WORDING_KEYS`]) and reads differently is listed apart: a later version may word it better,
//! and the setting it describes is compared as a value of its own.

mod checks;
mod compare;
mod files;
mod headline;
mod locate;
mod mismatch;
mod notes;
mod universe;
mod versions;

use std::path::{Path, PathBuf};

use serde::Serialize;
use serde_json::Value;

use crate::case::read_case;
use crate::error::{Error, Result};
use crate::valuation::load_inputs;
use checks::{check_file_entries, check_kind, check_schema, recorded_overrides, refused_since};
pub use compare::numbers_agree;
pub(super) use compare::{compare, Comparison};
use files::file_checks;
pub(crate) use files::roles_in_words;
pub use files::{by_file, FileCheck, FileGroup};
use locate::{locate_case, RecordedFile};
pub use mismatch::{shown, Absent, Mismatch};
pub use versions::{keys_added_after, version as version_numbers};

/// Relative tolerance for numbers. Reruns on one build are bit-identical; 1e-12 leaves room for
/// another platform's `powf` and `ln` (used in the risk-free conversion), which may differ in
/// the last bit, while any change of input moves figures by far more.
pub const DEFAULT_TOLERANCE: f64 = 1e-12;

/// What a verification leaves out, and why: the derived outputs are drawn from the figures of
/// `result.json`, which are compared one by one.
pub const NOT_COMPARED: &str = "memo.md, figures/*.svg, report.html, peers.csv, workbook.xlsx, \
returns.csv and rolling.csv are not compared: they are drawn from the figures of result.json, \
which are (the returns and rolling betas from the price files, whose hashes are, under the \
settings result.json records); a rerun with hurdle run writes them anew for a comparison by \
eye";

/// Keys whose text only puts into words a setting that the receipt also records as a value of
/// its own (the method, the standard errors, the frequency, the risk-free convention, the
/// formula's source and its written form, the distribution of the draws), where that value is
/// compared; and the run's `notes`, sentences for the reader whose counts the receipt records
/// as figures (`periods_dropped` and its reasons, the flags), also when a version adds or
/// drops a note; and a `reason`, the words for why a figure beside it could not be computed
/// (a specification, a peer left out or put back, a grid cell), whose figure (null or a
/// number) is compared on its own (found by review: 0.12.0's longer words for a peer of too
/// few returns failed a 0.11.0 receipt). A later version may
/// word them better; a receipt written before still reproduces, with the differences listed as
/// wording. Any change of the setting itself still fails the verification through its value.
pub const WORDING_KEYS: &[&str] = &[
    "method_description",
    "std_errors_description",
    "sampling_rule",
    "risk_free_convention",
    "formula_source",
    "formula_expression",
    "expression",
    "beta_distribution",
    "notes",
    "label",
    "reason",
];

/// What sentences that differ mean when this very version wrote the receipt from the same
/// inputs: it words every sentence as its rerun does (a build of the same version number from
/// other sources aside), so they were edited, and they count as mismatches (found by review: a
/// receipt whose cautions were deleted by hand reproduced).
pub const SAME_VERSION_WORDING_NOTE: &str = "the receipt was written by this same version of \
hurdle from the same inputs, which words these sentences as its rerun does: unless it was built \
from other sources under the same version number, they were edited by hand (a note deleted, \
added or reworded), so they count as mismatches";

/// What a wording difference means when this version wrote the receipt and inputs changed: a
/// note quotes figures (a WACC, a count), which moved with the inputs.
pub const MOVED_WITH_INPUTS_NOTE: &str = "a sentence reads differently because the inputs \
changed and it quotes figures that moved with them; it is not a figure itself, and every \
figure is compared";

/// What a wording difference means when this version wrote the receipt and an input could not
/// be checked (the receipt names it without a hash).
pub const UNHASHED_WORDING_NOTE: &str = "a sentence reads differently and an input could not \
be checked (the receipt names it without its SHA-256): the sentence may have moved with that \
input, or been edited; it is not a figure, and every figure is compared";

/// What a listed wording difference means, for the reader of a verification.
pub const WORDING_NOTE: &str = "the version that wrote the receipt words some sentences \
otherwise or writes other notes: a description of a setting, whose value is compared as a \
figure of its own, or a note for the reader, whose counts are compared where the receipt keeps \
them; neither is a figure";

/// The verdict on a receipt.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Verification {
    pub receipt: String,
    /// What the receipt is of, as it records it: its title, valuation date and (a case's)
    /// WACC, so a reader who did not run the command can match the page to a memo (found by
    /// review: the page named only a relative path).
    pub of: String,
    /// The SHA-256 of the receipt's bytes: ties this verification to the receipt it checked
    /// (a later run writes another `result.json` under the same name).
    pub receipt_sha256: String,
    /// What the receipt reruns: `case` or `universe`.
    pub kind: &'static str,
    /// The file it reruns (the case or the universe file; the field keeps its first name).
    pub case_file: String,
    pub case_unchanged: bool,
    /// Whether the receipt records the case (or universe) file's SHA-256 at all: without it
    /// the file cannot be checked, which is said instead of blaming the file.
    pub case_hash_recorded: bool,
    /// The `--set` overrides the receipt records, reapplied to the rerun: the case file alone
    /// gives other figures when there are any.
    pub overrides: Vec<String>,
    pub files: Vec<FileCheck>,
    pub tolerance: f64,
    /// How many leaves were compared.
    pub compared: usize,
    pub mismatches: Vec<Mismatch>,
    /// Whether sentences that differ count as mismatches: this very version wrote the receipt
    /// from the same, checked inputs, so they were edited ([`Comparison::settle_wording`]).
    #[serde(skip)]
    pub sentences_are_figures: bool,
    /// Descriptions of settings ([`WORDING_KEYS`]) that read differently: not figures, and
    /// they do not make `reproduced` false.
    pub wording_differences: Vec<Mismatch>,
    /// Figures the verifying version writes and the receipt's (another version) never did, by
    /// path: not compared, and they do not make `reproduced` false.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub added_by_this_version: Vec<String>,
    /// Changes of figures that a version later than the receipt's made on purpose under its
    /// settings (README, Changelog), in words, when a difference lies where they move figures.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub known_changes: Vec<String>,
    pub recorded_tool_version: String,
    pub current_tool_version: String,
    /// True only when every file is unchanged and every figure matches.
    pub reproduced: bool,
    /// The headline figures (`wacc`, `cost_of_equity`, `cost_of_debt_after_tax` of a case),
    /// each with whether it reproduced: what a reader asks first.
    pub headline: Vec<(String, bool)>,
    /// What this kind of verification leaves out, and why.
    pub not_compared: &'static str,
    /// Every file the rerun read (not part of the report), so outputs never replace one.
    #[serde(skip)]
    pub files_read: Vec<crate::case::FileRead>,
}

impl Verification {
    /// The input files (the case or universe file among them) whose SHA-256 differs.
    pub fn changed_inputs(&self) -> usize {
        let files = files::by_file(&self.files);
        let case = !self.case_unchanged && self.case_hash_recorded;
        let changed = |g: &&FileGroup| !g.check.unchanged && g.check.status != "unrecorded";
        usize::from(case) + files.iter().filter(changed).count()
    }

    /// The input files the receipt names without a SHA-256 (the case or universe file among
    /// them): they cannot be checked, which is neither a change nor a match.
    pub fn unhashed_inputs(&self) -> usize {
        let files = files::by_file(&self.files);
        let unrecorded = files.iter().filter(|g| g.check.status == "unrecorded");
        usize::from(!self.case_hash_recorded) + unrecorded.count()
    }

    /// The case's settings that differ from the receipt's (paths below `settings.`), which
    /// are listed first among the mismatches: what changed in the case file.
    pub fn changed_settings(&self) -> Vec<&str> {
        (self.mismatches.iter())
            .filter_map(|m| m.path.strip_prefix("settings."))
            .collect()
    }

    /// The case or universe file's state in words, naming the settings that differ.
    pub fn case_state(&self) -> String {
        if self.case_unchanged {
            return "unchanged".into();
        }
        if !self.case_hash_recorded {
            return format!(
                "NOT HASHED in the receipt (it records no SHA-256 for the {} file, so the file \
                 cannot be checked)",
                self.kind
            );
        }
        match self.changed_settings().as_slice() {
            [] => "CHANGED since the receipt (no setting differs: a comment, spacing, or a \
                   value the receipt's overrides replace)"
                .into(),
            settings => format!(
                "CHANGED since the receipt; the settings that differ, listed first below: {}",
                settings.join(", ")
            ),
        }
    }

    /// The verdict's line: `REPRODUCED: …` or `NOT REPRODUCED: …`, saying apart whether input
    /// files changed and how many figures differ.
    pub fn verdict(&self) -> String {
        let mut changed = match self.changed_inputs() {
            0 => String::new(),
            1 => "1 input file changed; ".into(),
            n => format!("{n} input files changed; "),
        };
        match self.unhashed_inputs() {
            0 => {}
            1 => changed.push_str("1 input file not hashed in the receipt; "),
            n => changed.push_str(&format!("{n} input files not hashed in the receipt; ")),
        }
        // Files whose bytes changed while every figure matches: the data the run reads are,
        // for every figure, the receipt's (line ends rewritten, a workbook saved again); the
        // verdict stays, since the receipt's hashes are not met, but says so.
        // A file whose rows or dates moved (listed with it) changed its data outside what the
        // figures read, such as rows past the window's end (found by review: the verdict put
        // an extended file down to rewritten line ends).
        let moved = self.files.iter().any(|f| !f.changes.is_empty());
        let same_data = match (
            self.changed_inputs() > 0 && self.mismatches.is_empty(),
            moved,
        ) {
            (true, false) => {
                "; every figure matches, so the changed files' bytes differ but the data read \
                 from them give the receipt's figures (line ends rewritten, a workbook saved \
                 again, or a value before the window changed, do this): compare the files to \
                 settle it"
            }
            (true, true) => {
                "; every figure matches, so what changed in the files (their rows or dates, \
                 listed with each) lies outside the data the figures read, such as rows past \
                 the window's end: compare the files to settle it"
            }
            (false, _) => "",
        };
        format!(
            "{}: {changed}{} figures compared, {} mismatched (relative tolerance {}){}{same_data}",
            if self.reproduced {
                "REPRODUCED"
            } else {
                "NOT REPRODUCED"
            },
            self.compared,
            self.mismatches.len(),
            crate::error::compact(self.tolerance),
            self.wording_summary()
        )
    }

    /// What the wording differences mean: another version's words, or, with changed inputs,
    /// the figures the notes quote, which moved with them. (From this very version and the
    /// same inputs they are mismatches: [`Verification::edited_sentences`].)
    pub fn wording_note(&self) -> &'static str {
        match (
            self.recorded_tool_version == self.current_tool_version,
            self.changed_inputs() > 0,
        ) {
            (false, _) => WORDING_NOTE,
            (true, true) => MOVED_WITH_INPUTS_NOTE,
            (true, false) => UNHASHED_WORDING_NOTE,
        }
    }

    /// The mismatches that are sentences ([`WORDING_KEYS`]), which only a receipt of this very
    /// version from the same, checked inputs counts as mismatches: edited by hand.
    pub fn edited_sentences(&self) -> usize {
        match self.sentences_are_figures {
            true => self.mismatches.iter().filter(|m| m.is_sentence()).count(),
            false => 0,
        }
    }

    /// The wording differences for a verdict's line: empty without any, else how many
    /// descriptions read differently (the verdict does not count them).
    pub fn wording_summary(&self) -> String {
        let notes = (self.wording_differences.iter())
            .filter(|m| m.absent_from.is_some())
            .count();
        let reworded = self.wording_differences.len() - notes;
        let mut out = String::new();
        match reworded {
            0 => {}
            1 => out.push_str("; 1 description worded differently"),
            n => out.push_str(&format!("; {n} descriptions worded differently")),
        }
        match notes {
            0 => {}
            1 => out.push_str("; 1 note on one side only"),
            n => out.push_str(&format!("; {n} notes on one side only")),
        }
        out
    }
}

/// The receipt's JSON: a byte-order mark before it dropped (some editors write one), a case or
/// table given instead named ([`not_a_receipt`]), and a key named twice in an object refused
/// (readers disagree on which value counts).
fn parse_receipt(receipt: &str) -> std::result::Result<Value, String> {
    let receipt = receipt.strip_prefix('\u{feff}').unwrap_or(receipt);
    super::receipt::not_a_receipt(receipt)?;
    super::receipt::parse(receipt).map_err(|e| match e.is_data() {
        true => {
            format!("{e}: a receipt names each key once, so that every reader sees the same figure")
        }
        false => format!("not JSON: {e}; verify reads the result.json a run or a universe wrote"),
    })
}

/// Reads the receipt at `path` as text; a workbook or other binary file, or text that is not
/// UTF-8, given as the receipt is named as what it is.
pub fn read_receipt(path: &Path) -> Result<String> {
    let bytes = std::fs::read(path).map_err(|source| Error::Io {
        path: path.to_path_buf(),
        action: "cannot read the receipt",
        source,
    })?;
    let not_a_receipt = |what: &str| Error::DataFile {
        file: path.to_path_buf(),
        message: format!(
            "the file is {what}, not a receipt: verify reads the result.json that `hurdle run` \
             or `hurdle universe` wrote"
        ),
    };
    if let Some(kind) = crate::io::encoding::binary_kind(&bytes) {
        return Err(not_a_receipt(kind));
    }
    String::from_utf8(bytes).map_err(|_| not_a_receipt("not UTF-8 text"))
}

/// Verifies `receipt` (the text of a `result.json` at `receipt_path`). `case_path` overrides
/// where the case file is looked for.
pub fn verify(
    receipt_path: &Path,
    receipt: &str,
    case_path: Option<&Path>,
    tolerance: f64,
) -> Result<Verification> {
    let fail = |message: String| Error::DataFile {
        file: receipt_path.to_path_buf(),
        message,
    };
    let recorded = parse_receipt(receipt).map_err(fail)?;
    let receipt_sha256 = crate::io::series::sha256_hex(receipt.as_bytes());
    check_kind(&recorded).map_err(fail)?;
    if recorded["kind"] == "universe" {
        return universe::verify_universe(
            (receipt_path, receipt_sha256),
            &recorded,
            case_path,
            tolerance,
        );
    }
    check_schema(&recorded).map_err(fail)?;
    check_file_entries(&recorded).map_err(fail)?;
    let text = |pointer: &str| {
        recorded
            .pointer(pointer)
            .and_then(Value::as_str)
            .map(str::to_string)
    };
    let (case_file, overrides) = rerun_source(receipt_path, &recorded, "case", case_path)?;
    let case =
        read_case(&case_file, &overrides).map_err(|e| recorded_overrides(receipt_path, e))?;
    let case_unchanged = Some(&case.sha256) == text("/case/sha256").as_ref();
    let files_read = crate::case::files_read(&case);
    // Every failure under the receipt's overrides is named as theirs (found by review: a
    // refusal of the rerun still read "after applying --set").
    let as_recorded = |e| recorded_overrides(receipt_path, e);
    let inputs = load_inputs(case).map_err(|e| refused_since(as_recorded(e), &recorded))?;
    let rerun = super::evaluate(&inputs, recorded["generated_at"].as_str().unwrap_or(""))
        .map_err(as_recorded)?;
    let recomputed = serde_json::to_value(&rerun).expect("a valuation always serialises");

    let files = file_checks(&recorded, &rerun);
    let run = Rerun {
        kind: "case",
        receipt: (receipt_path, receipt_sha256),
        file: &case_file,
        overrides,
        unchanged: case_unchanged,
        files,
        files_read,
        not_compared: NOT_COMPARED,
    };
    let on_file =
        |path: &str, checks: &[FileCheck]| files::reported_with_its_file(path, &recorded, checks);
    Ok(settle(run, (&recorded, &recomputed), tolerance, &on_file))
}

/// What the case's and the universe's verification hand over once the rerun is done: the kind,
/// the receipt, the file rerun with its overrides and whether it is unchanged, each input
/// file's check, the files read and what the kind leaves out.
pub(super) struct Rerun<'a> {
    pub kind: &'static str,
    /// The receipt's path and the SHA-256 of its bytes.
    pub receipt: (&'a Path, String),
    pub file: &'a Path,
    pub overrides: Vec<String>,
    pub unchanged: bool,
    pub files: Vec<FileCheck>,
    pub files_read: Vec<crate::case::FileRead>,
    pub not_compared: &'static str,
}

/// The verification of a receipt against its rerun, one sequence for a case and a universe:
/// every leaf compared; keys a later version added settled by the receipt's version; a field
/// of a changed or moved data file left to its file check (`on_file`); sentences counted as
/// figures only for a receipt of this version from the same inputs; a case's mismatches
/// ranked and its headline figures judged; the known changes named.
pub(super) fn settle(
    run: Rerun<'_>,
    (recorded, recomputed): (&Value, &Value),
    tolerance: f64,
    on_file: &dyn Fn(&str, &[FileCheck]) -> bool,
) -> Verification {
    let current = env!("CARGO_PKG_VERSION");
    let text = |pointer: &str| recorded.pointer(pointer).and_then(Value::as_str);
    let mut found = compare(recorded, recomputed, tolerance);
    let recorded_version = text("/tool/version").unwrap_or_default().to_string();
    let added = found.settle_added(&recorded_version, current);
    // A changed or moved data file is reported once, by its file check.
    (found.mismatches).retain(|m| !on_file(&m.path, &run.files));
    let inputs_unchanged = run.unchanged && run.files.iter().all(|f| f.unchanged);
    let sentences_are_figures =
        found.settle_wording(inputs_unchanged && recorded_version == current);
    let case = run.kind == "case";
    match case {
        true => found.mismatches.sort_by_key(|m| m.rank()),
        false => found.mismatches.sort_by_key(|m| m.universe_rank()),
    }
    let known_changes = found.known_changes(run.kind, &recorded_version, (recorded, recomputed));
    let (receipt_path, receipt_sha256) = run.receipt;
    let of = {
        let title = match text(&format!("/{}/title", run.kind)) {
            Some(title) => format!("\"{title}\""),
            None => "a receipt without a title".to_string(),
        };
        let date = (text(&format!("/{}/valuation_date", run.kind)))
            .map(|d| format!(", valuation date {d}"))
            .unwrap_or_default();
        let wacc = (recorded.get("wacc").and_then(Value::as_f64))
            .map(|w| format!(", WACC {} as recorded", headline::percent(w, 3)))
            .unwrap_or_default();
        let place = std::fs::canonicalize(receipt_path).unwrap_or(receipt_path.to_path_buf());
        format!("{title}{date}{wacc}; the receipt at {}", place.display())
    };
    Verification {
        of,
        receipt: receipt_path.display().to_string(),
        receipt_sha256,
        kind: run.kind,
        case_file: run.file.display().to_string(),
        case_unchanged: run.unchanged,
        case_hash_recorded: text(&format!("/{}/sha256", run.kind)).is_some(),
        overrides: run.overrides,
        reproduced: inputs_unchanged && found.mismatches.is_empty(),
        files: run.files,
        tolerance,
        headline: if case { headline(&found) } else { Vec::new() },
        compared: found.compared,
        mismatches: found.mismatches,
        sentences_are_figures,
        wording_differences: found.wording,
        added_by_this_version: added,
        known_changes,
        recorded_tool_version: recorded_version,
        current_tool_version: current.to_string(),
        not_compared: run.not_compared,
        files_read: run.files_read,
    }
}

/// Whether each headline figure of a case reproduced, by whether it is among the mismatches.
fn headline(found: &Comparison) -> Vec<(String, bool)> {
    ["wacc", "cost_of_equity", "cost_of_debt_after_tax"]
        .iter()
        .map(|key| {
            (
                key.to_string(),
                !found.mismatches.iter().any(|m| m.path == *key),
            )
        })
        .collect()
}

/// The input file a receipt's `section` (`case` or `universe`) names, found as
/// [`locate_case`] finds it unless `given`, and the overrides it records.
pub(super) fn rerun_source(
    receipt_path: &Path,
    recorded: &Value,
    section: &str,
    given: Option<&Path>,
) -> Result<(PathBuf, Vec<String>)> {
    let fail = |message: String| Error::DataFile {
        file: receipt_path.to_path_buf(),
        message,
    };
    let file = match given {
        Some(path) => path.to_path_buf(),
        None => {
            let written = recorded[section]["file"]
                .as_str()
                .ok_or_else(|| fail(format!("has no {section}.file")))?;
            let recorded_file = RecordedFile {
                sha256: recorded[section]["sha256"].as_str(),
                title: recorded[section]["title"].as_str(),
            };
            locate_case(receipt_path, written, section, recorded_file)?
        }
    };
    // The receipt as its own input (found by review: told to rerun it with verify, which was
    // what was running).
    let same = |a: &Path, b: &Path| {
        std::fs::canonicalize(a).is_ok_and(|a| std::fs::canonicalize(b).is_ok_and(|b| a == b))
    };
    if same(&file, receipt_path) {
        return Err(Error::ReceiptAsInput {
            receipt: receipt_path.to_path_buf(),
            section: section.to_string(),
            given: given.is_some(),
        });
    }
    let overrides = recorded[section]["overrides"]
        .as_array()
        .map(|list| {
            list.iter()
                .filter_map(|v| v.as_str().map(str::to_string))
                .collect()
        })
        .unwrap_or_default();
    Ok((file, overrides))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_agree_relatively() {
        assert!(numbers_agree(0.0, 0.0, 1e-12));
        assert!(numbers_agree(
            0.0867704171664703,
            0.0867704171664703 * (1.0 + 1e-13),
            1e-12
        ));
        assert!(!numbers_agree(
            0.0867704171664703,
            0.0867704171664703 * (1.0 + 1e-11),
            1e-12
        ));
    }

    /// A described setting's sentence that reads differently is wording; the setting's value,
    /// a figure and a key that is not a description are mismatches.
    #[test]
    fn a_reworded_description_is_listed_apart_from_the_mismatches() {
        let recorded = serde_json::json!({
            "estimator": {"method": "ols", "method_description": "old words"},
            "leverage_comparison": [{"formula_source": "Hamada (1972)", "unlevered_beta": 0.8}],
            "case": {"title": "A"},
        });
        let mut rerun = recorded.clone();
        rerun["estimator"]["method_description"] = "new words".into();
        rerun["leverage_comparison"][0]["formula_source"] = "Hamada (1972), J. Finance".into();
        let found = compare(&recorded, &rerun, 1e-12);
        // Sorted: the walk follows serde_json's key order, which a feature of the crate can change.
        let paths = |list: &[Mismatch]| {
            let mut paths: Vec<String> = list.iter().map(|m| m.path.clone()).collect();
            paths.sort();
            paths
        };
        assert!(found.mismatches.is_empty(), "{:?}", found.mismatches);
        assert_eq!(
            paths(&found.wording),
            [
                "estimator.method_description",
                "leverage_comparison[0].formula_source"
            ]
        );
        assert_eq!(found.compared, 5);

        rerun["estimator"]["method"] = "dimson".into();
        rerun["leverage_comparison"][0]["unlevered_beta"] = 0.81.into();
        rerun["case"]["title"] = "B".into();
        let found = compare(&recorded, &rerun, 1e-12);
        assert_eq!(
            paths(&found.mismatches),
            [
                "case.title",
                "estimator.method",
                "leverage_comparison[0].unlevered_beta"
            ]
        );
        assert_eq!(found.wording.len(), 2);
    }

    /// Peers reordered, one dropped and one added: figures are compared by name, and each
    /// peer on one side only is one named mismatch.
    #[test]
    fn named_entries_are_matched_by_name() {
        let peer = |name: &str, beta: f64| serde_json::json!({"name": name, "beta": beta});
        let recorded =
            serde_json::json!({"peers": [peer("A", 1.0), peer("B", 0.8), peer("C", 1.2)]});
        let rerun = serde_json::json!({"peers": [peer("B", 0.8), peer("A", 1.1), peer("D", 0.9)]});
        let found = compare(&recorded, &rerun, 1e-12);
        let seen: Vec<(String, Option<String>)> = found
            .mismatches
            .iter()
            .map(|m| (m.path.clone(), m.item.clone()))
            .collect();
        let named = |path: &str, item: &str| (path.to_string(), Some(item.to_string()));
        assert_eq!(
            seen,
            [
                named("peers[0].beta", "A"),
                named("peers[2]", "C"),
                named("peers[2] (rerun)", "D"),
            ]
        );
        assert_eq!(
            found.mismatches[0].difference(),
            "; difference 1.0000e-1 (+10.0000% of the recorded figure)"
        );
        // A share four decimals would round to 0: 1e-9 of 1.2 is 8.33e-8 % (by hand).
        let tiny = Mismatch {
            recorded: serde_json::json!(1.2),
            recomputed: serde_json::json!(1.2 + 1e-9),
            ..found.mismatches[0].clone()
        };
        assert!(
            tiny.difference()
                .ends_with("(+8.33e-8% of the recorded figure)"),
            "{}",
            tiny.difference()
        );
        // In the same order the lists are compared by position, as before.
        let same = compare(&recorded, &recorded.clone(), 0.0);
        assert!(same.mismatches.is_empty());
        assert_eq!(same.compared, 6);
    }
}
