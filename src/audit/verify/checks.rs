//! The checks of a receipt's shape before it is rerun: its `kind` against the section naming
//! the file it reruns, and its schema version against this hurdle's; and a rerun's refusal of
//! an input worded with the receipt's version. Apart from `verify.rs`, which reruns and
//! compares.

use serde_json::Value;

use crate::error::Error;
use crate::valuation::SCHEMA_VERSION;

/// A receipt's `kind` against the section naming the file it reruns: one this hurdle writes
/// (`case` or `universe`), and the one that section belongs to. A disagreement means an edit,
/// named as such, not read as the other kind (found by reviews: a case receipt marked as a
/// universe's was refused for its schema version, a kind of "banana" became a mismatch).
pub(super) fn check_kind(recorded: &Value) -> std::result::Result<(), String> {
    let sections = (
        recorded["case"].is_object(),
        recorded["universe"].is_object(),
    );
    // Found by review: a number for the kind became a mismatch, exit 1. Only in hurdle's own
    // receipt: another program's JSON is asked whether it is one (by its schema version).
    if recorded["tool"]["name"] == env!("CARGO_PKG_NAME") {
        if !(recorded["kind"].is_string() || recorded["kind"].is_null()) {
            return Err(format!(
                "kind = {} is not text (\"case\" or \"universe\"): it was edited; restore it or \
                 verify the receipt the run wrote",
                recorded["kind"]
            ));
        }
        check_tool_version(recorded)?;
        let written = recorded["tool"]["version"].as_str().unwrap_or_default();
        if let Some((key, added)) = super::versions::key_after_version(recorded, written) {
            return Err(format!(
                "tool.version = \"{written}\", but the receipt holds `{key}`, which hurdle first \
                 wrote in {added}: its version was edited; restore it or verify the receipt the \
                 run wrote"
            ));
        }
    }
    let kind = recorded["kind"].as_str();
    if let Some(other) = kind.filter(|k| !["case", "universe"].contains(k)) {
        return Err(format!(
            "kind = \"{other}\" is no kind of receipt hurdle writes (\"case\" or \"universe\"): \
             it was edited; restore it or verify the receipt the run wrote"
        ));
    }
    if let (Some("universe"), (true, false)) | (Some("case") | None, (false, true)) =
        (kind, sections)
    {
        let said = kind.map_or("has no kind".to_string(), |k| {
            format!("says kind = \"{k}\"")
        });
        return Err(format!(
            "{said} but records the file it reruns under `{}`: a receipt whose kind was edited \
             or removed; restore its kind or verify the receipt the run wrote",
            if sections.0 { "case" } else { "universe" }
        ));
    }
    Ok(())
}

/// The version that wrote the receipt, `tool.version`: three whole numbers as hurdle writes
/// them (a pre-release or build suffix after `-` or `+` allowed), else an edit (found by review:
/// "banana" let a deleted note pass as another version's wording). Absent, it is the unknown
/// version the comparison already treats strictly.
fn check_tool_version(recorded: &Value) -> std::result::Result<(), String> {
    let written = &recorded["tool"]["version"];
    let well_formed = (written.as_str())
        .and_then(super::versions::version)
        .is_some_and(|parts| parts.len() == 3);
    match written.is_null() || well_formed {
        true => Ok(()),
        false => Err(format!(
            "tool.version = {written} is no version hurdle writes (three whole numbers, such as \
             {}): it was edited; restore it or verify the receipt the run wrote",
            env!("CARGO_PKG_VERSION")
        )),
    }
}

/// A receipt's `schema_version`, `None` when it has none; one that is not a whole number was
/// edited (found by review: "2" was said to be missing).
pub(super) fn schema_version(recorded: &Value) -> std::result::Result<Option<u64>, String> {
    match &recorded["schema_version"] {
        Value::Null => Ok(None),
        field => field.as_u64().map(Some).ok_or_else(|| {
            format!(
                "schema_version = {field} is not a whole number: it was edited; restore it or \
                 verify the receipt the run wrote"
            )
        }),
    }
}

/// A case receipt's list of input files: each entry an object naming its role and path as
/// text, else an edit named by its place (found by review: `files[0] = 5` printed a check
/// naming no file).
pub(super) fn check_file_entries(recorded: &Value) -> std::result::Result<(), String> {
    let Some(list) = recorded["files"].as_array() else {
        return Ok(());
    };
    for (i, entry) in list.iter().enumerate() {
        if !(entry["role"].is_string() && entry["path"].is_string()) {
            let shown = match entry.to_string() {
                text if text.chars().count() > 80 => "an entry".to_string(),
                text => text,
            };
            return Err(format!(
                "files[{i}] = {shown} is no file entry (an object with its `role` and `path` as \
                 text): it was edited; restore it or verify the receipt the run wrote"
            ));
        }
    }
    Ok(())
}

/// A case receipt's schema version: this hurdle's, else refused with what to do.
pub(super) fn check_schema(recorded: &Value) -> std::result::Result<(), String> {
    let version =
        schema_version(recorded)?.ok_or("has no schema_version; is it a hurdle result.json?")?;
    if version > u64::from(SCHEMA_VERSION) {
        return Err(format!(
            "schema_version {version} is newer than this hurdle reads ({SCHEMA_VERSION}); verify with the version that wrote it ({})",
            recorded["tool"]["version"].as_str().unwrap_or("unknown")
        ));
    }
    if version < u64::from(SCHEMA_VERSION) {
        return Err(older_schema(
            version,
            recorded["tool"]["version"].as_str().unwrap_or("unknown"),
        ));
    }
    Ok(())
}

/// Why a receipt of an older schema cannot be verified by this hurdle, and what to do instead.
/// Schema 2 renamed fields and case keys (README, Changelog), so a rerun cannot match a
/// version-1 receipt figure by figure, and its case may use keys this version refuses.
fn older_schema(version: u64, written_by: &str) -> String {
    format!(
        "schema_version {version} is older than this hurdle's ({SCHEMA_VERSION}): schema 2 renamed \
         fields and case keys (for example cash_corrected_unlevered_beta is now operations_beta, \
         adjusted_beta is shrunk_beta, leverage.cash_correction is leverage.operations_beta; \
         README, Changelog lists every one), so its figures cannot be compared name by name. \
         Verify it with the version that wrote it ({written_by}), or rename the keys in its case \
         file and rerun to write a new receipt"
    )
}

/// A rerun's refusal of an input file, with the versions when the receipt's is another: an
/// earlier version may have read a file this one refuses (found by review: a 0.9.0 receipt
/// whose price file holds a value under an unnamed column stopped with the input's error
/// alone, as if the receipt could never have been written).
pub(super) fn refused_since(error: Error, recorded: &Value) -> Error {
    let version = recorded.pointer("/tool/version").and_then(Value::as_str);
    let this = env!("CARGO_PKG_VERSION");
    let Some(version) = version.filter(|v| *v != this) else {
        return error;
    };
    let why = format!(
        " (the receipt was written by hurdle {version}, which read this input; {this} refuses \
         it, and README's Changelog says why)"
    );
    match error {
        Error::DataRow {
            file,
            line,
            message,
        } => Error::DataRow {
            file,
            line,
            message: message + &why,
        },
        Error::DataFile { file, message } => Error::DataFile {
            file,
            message: message + &why,
        },
        Error::MissingColumn {
            file,
            column,
            message,
        } => Error::MissingColumn {
            file,
            column,
            message: message + &why,
        },
        Error::Case { file, message } => Error::Case {
            file,
            message: message + &why,
        },
        other => other,
    }
}

/// A failure of the overrides a receipt records, named as the receipt's, not as a `--set` the
/// user gave (found by review: an edited `case.overrides` read as the user's own `--set`).
pub(crate) fn recorded_overrides(receipt: &std::path::Path, error: Error) -> Error {
    match error {
        Error::Override {
            assignment,
            message,
        } => Error::DataFile {
            file: receipt.to_path_buf(),
            message: format!(
                "the override {assignment} the receipt records does not apply: {message}"
            ),
        },
        Error::AfterOverrides {
            file,
            overrides,
            message,
        } => Error::DataFile {
            file: receipt.to_path_buf(),
            message: format!(
                "{} with the overrides the receipt records ({}): {message}",
                file.display(),
                overrides.join(", ")
            ),
        },
        other => other,
    }
}
