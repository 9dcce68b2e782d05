//! Verification of a universe receipt: the `result.json` of `hurdle universe` names its universe
//! file, the overrides and every input's SHA-256; the run is repeated and every leaf of the
//! recorded JSON (settings, window, counts, notes, the whole industry table) is compared with the
//! rerun's, numbers within the tolerance, as [`super::verify`] (the parent module) does for a case.
//!
//! The receipt's `securities[]` records each security's id, industry, observations, beta,
//! standard error, unlevered beta and reason not estimated (since 0.4.0), and its equity value,
//! debt, cash, tax rate, flags and exclusion (since 0.14.0), each compared by security; the
//! other columns of `securities.csv` enter the comparison through the industry table's counts
//! and statistics, which a change to them moves.

use std::path::Path;

use serde_json::Value;

use super::{rerun_source, settle, FileCheck, Rerun, Verification};
use crate::error::{Error, Result};
use crate::universe::settings::read_universe;
use crate::universe::{evaluate, load_inputs, UniverseResult, SCHEMA_VERSION};

/// What a universe verification leaves out, and why.
pub const NOT_COMPARED: &str = "securities.csv, industries.csv, their Parquet copies, \
summary.md and figures/industries*.svg are not compared file by file: they are written from the \
same estimates as the receipt's counts, industry table and (from version 0.4.0) each security's \
figures, which are compared where the receipt holds them";

/// [`NOT_COMPARED`] for a receipt whose run wrote rolling betas (`universe.rolling = true`).
pub const NOT_COMPARED_WITH_ROLLING: &str = "securities.csv, industries.csv, their Parquet \
copies, summary.md and figures/industries*.svg are not compared file by file: they are written \
from the same estimates as the receipt's counts, industry table and (from version 0.4.0) each \
security's figures, which are compared where the receipt holds them; rolling.csv and \
rolling.parquet are not verified at all: the receipt holds no rolling beta, and those are \
regressions of their own, resting only on the input files, whose hashes are compared";

/// Verifies a parsed universe receipt found at `receipt_path`; `universe_path` overrides where
/// the universe file is looked for.
pub fn verify_universe(
    (receipt_path, receipt_sha256): (&Path, String),
    recorded: &Value,
    universe_path: Option<&Path>,
    tolerance: f64,
) -> Result<Verification> {
    let fail = |message: String| Error::DataFile {
        file: receipt_path.to_path_buf(),
        message,
    };
    let version = (super::checks::schema_version(recorded).map_err(fail)?).unwrap_or(0);
    if version > u64::from(SCHEMA_VERSION) {
        return Err(fail(format!(
            "universe schema_version {version} is newer than this hurdle reads \
             ({SCHEMA_VERSION})"
        )));
    }
    let text = |pointer: &str| recorded.pointer(pointer).and_then(Value::as_str);
    let (file, overrides) = rerun_source(receipt_path, recorded, "universe", universe_path)?;
    let universe =
        read_universe(&file, &overrides).map_err(|e| super::recorded_overrides(receipt_path, e))?;
    let files_read = universe.files_read();
    let unchanged = Some(universe.sha256.as_str()) == text("/universe/sha256");
    let as_recorded = |e| super::recorded_overrides(receipt_path, e);
    let inputs = load_inputs(universe)
        .map_err(|e| super::checks::refused_since(as_recorded(e), recorded))?;
    let rerun =
        evaluate(&inputs, text("/generated_at").unwrap_or(""), &|_| {}).map_err(as_recorded)?;
    let recomputed = serde_json::to_value(&rerun).expect("a universe result always serialises");
    let run = Rerun {
        kind: "universe",
        receipt: (receipt_path, receipt_sha256),
        file: &file,
        overrides,
        unchanged,
        files: file_checks(recorded, &rerun),
        files_read,
        not_compared: match recorded["settings"]["universe"]["rolling"].as_bool() {
            Some(true) => NOT_COMPARED_WITH_ROLLING,
            _ => NOT_COMPARED,
        },
    };
    Ok(settle(
        run,
        (recorded, &recomputed),
        tolerance,
        &reported_with_its_file,
    ))
}

/// The index, risk-free series, panel and attributes files: recorded and current SHA-256.
fn file_checks(recorded: &Value, rerun: &UniverseResult) -> Vec<FileCheck> {
    let f = &rerun.files;
    let read = |path: &str, sha256: &str| Some((path.to_string(), sha256.to_string()));
    let current = [
        ("index", read(&f.index.path, &f.index.sha256)),
        (
            "risk_free",
            (f.risk_free.as_ref()).and_then(|r| read(&r.path, &r.sha256)),
        ),
        ("panel", read(&f.panel.path, &f.panel.sha256)),
        ("attributes", read(&f.attributes.path, &f.attributes.sha256)),
    ];
    let files_now = serde_json::to_value(f).unwrap_or(Value::Null);
    current
        .iter()
        .filter_map(|(role, now)| {
            let file = &recorded["files"][role];
            // A file the receipt names without its hash (a null or missing `sha256`) is
            // unrecorded, as an empty hash is, not new (found by review).
            let was = file["path"].as_str().map(|path| {
                let sha256 = file["sha256"].as_str().unwrap_or_default();
                (path.to_string(), sha256.to_string())
            });
            let now = now.clone();
            let check = (was.is_some() || now.is_some())
                .then(|| FileCheck::new(role.to_string(), was, now))?;
            Some(match check.status == "changed" {
                true => check.with_changes(changes(file, &files_now[role])),
                false => check,
            })
        })
        .collect()
}

/// A changed file's other recorded facts (rows, dates, counts) against the rerun's, where they
/// differ: reported with its file check, not again as figures.
fn changes(recorded: &Value, now: &Value) -> Vec<String> {
    let shown = |v: &Value| match v {
        Value::String(text) => text.clone(),
        other => other.to_string(),
    };
    (recorded.as_object().into_iter().flatten())
        .filter(|(key, value)| !matches!(key.as_str(), "path" | "sha256") && now[key] != **value)
        .map(|(key, value)| {
            format!(
                "{} {} → {}",
                key.replace('_', " "),
                shown(value),
                shown(&now[key])
            )
        })
        .collect()
}

/// Whether the mismatch at `path` is a field of a recorded input file (`files.panel.rows`)
/// that its file check reports: any field of a changed file, the path of a moved one.
fn reported_with_its_file(path: &str, checks: &[FileCheck]) -> bool {
    let Some((role, field)) = path.strip_prefix("files.").and_then(|p| p.split_once('.')) else {
        return false;
    };
    (checks.iter().find(|c| c.role == role)).is_some_and(|check| match check.status {
        "changed" => true,
        _ => field == "path" && check.current_path.is_some(),
    })
}
