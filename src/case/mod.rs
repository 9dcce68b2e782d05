//! The case file: every input of one cost-of-capital estimate, in TOML.
//!
//! A case is read in three steps: parse the TOML into typed values ([`schema`]; unknown keys and
//! wrong types are reported with their line by the TOML parser), apply any `--set
//! dotted.key=value` overrides to the parsed table ([`overrides`]), then check every range that a
//! type cannot express ([`validate`]). The result is a [`Case`]: the validated settings plus where
//! they came from, so the receipt can name the file, its hash and the overrides. [`specs`] is the
//! one place a case becomes the spec types of the computing layers.

pub mod analyses;
pub mod lookback;
pub mod overrides;
pub mod placeholders;
pub mod renamed;
pub mod sanity;
pub mod scaffold;
pub mod schema;
pub mod sources;
pub mod specs;
pub mod validate;
pub mod wording;

use std::path::{Path, PathBuf};

use serde::Deserialize;

use crate::error::{Error, Result};
pub use overrides::apply_override;
pub use schema::*;
pub use validate::validate;

/// A validated case and where it came from.
#[derive(Debug, Clone)]
pub struct Case {
    pub settings: CaseFile,
    /// The case file's path as given.
    pub path: PathBuf,
    /// SHA-256 of the case file's bytes (before overrides).
    pub sha256: String,
    /// The `--set` assignments applied, in order.
    pub overrides: Vec<String>,
}

impl Case {
    /// Resolves a path written in the case file against the case file's folder.
    pub fn resolve(&self, written: &str) -> PathBuf {
        let dir = self.path.parent().unwrap_or_else(|| Path::new("."));
        dir.join(written)
    }
}

impl CaseFile {
    /// The target debt-to-equity ratio a case states: the ratio given, or the subject's own
    /// current structure. `None` for `target.source = "peer-median"`, which only the valuation
    /// can work out (over the peers it aggregates, in `capital::chain`).
    pub fn stated_target_debt_to_equity(&self) -> Option<f64> {
        let target = &self.target;
        match target.source {
            TargetSource::Explicit => Some(match (target.debt_to_equity, target.debt_to_capital) {
                (Some(de), _) => de,
                (None, Some(dc)) => crate::capital::cost::debt_to_equity_from_capital(dc),
                (None, None) => unreachable!("validate() requires one target ratio"),
            }),
            TargetSource::PeerMedian => None,
            TargetSource::Subject => Some(
                self.subject_debt_to_equity()
                    .expect("validate() requires the subject's equity value"),
            ),
        }
    }

    /// The subject's own current D/E (with the case's debt measure) when the case gives its
    /// equity value: the target of `target.source = "subject"`, and what another target is set
    /// beside.
    pub fn subject_debt_to_equity(&self) -> Option<f64> {
        let target = &self.target;
        let equity = target.subject_equity_value.filter(|&e| e > 0.0)?;
        let debt = self.leverage.debt_measure.debt(
            target.subject_debt.unwrap_or(0.0),
            target.subject_cash.unwrap_or(0.0),
        );
        Some(debt / equity)
    }
}

/// Two overrides that set the target both ways (`target.debt_to_equity` and
/// `target.debt_to_capital`): one would silently replace the other, since an override of one
/// ratio removes the other.
fn refuse_both_target_ratios(overrides: &[String]) -> Result<()> {
    // Spaces around each segment are dropped, as `apply_override` drops them (found by review:
    // `target. debt_to_capital` escaped the check).
    let key = |o: &String| {
        o.split_once('=')
            .map(|(k, _)| k.split('.').map(str::trim).collect::<Vec<_>>().join("."))
    };
    let ratio = |name: &str| overrides.iter().find(|o| key(o).as_deref() == Some(name));
    match (
        ratio("target.debt_to_equity"),
        ratio("target.debt_to_capital"),
    ) {
        (Some(_), Some(second)) => Err(Error::Override {
            assignment: second.clone(),
            message: "another override sets target.debt_to_equity; the target is one ratio, \
                      written either way: keep one"
                .into(),
        }),
        _ => Ok(()),
    }
}

/// A file the run read and what it is, for messages ("peer.1.prices (peer \"X\")").
pub type FileRead = (PathBuf, String);

/// Every file a case names, which no output may replace: the case file, the price and yield
/// files, the spread tables (both, whichever the cost-of-debt source reads) and the claimed
/// build-up it reconciles to.
pub fn files_read(case: &Case) -> Vec<FileRead> {
    let settings = &case.settings;
    let mut files = vec![(case.path.clone(), "the case file".to_string())];
    let mut add = |written: &str, role: String| files.push((case.resolve(written), role));
    if !settings.market.index.prices.is_empty() {
        add(&settings.market.index.prices, "market.index.prices".into());
    }
    if let Some(series) = settings
        .market
        .risk_free_series
        .as_ref()
        .filter(|s| !s.yields.is_empty())
    {
        add(&series.yields, "market.risk_free_series.yields".into());
    }
    for (i, peer) in settings
        .peers
        .iter()
        .enumerate()
        .filter(|(_, p)| !p.prices.is_empty())
    {
        add(
            &peer.prices,
            format!("peer.{i}.prices (peer \"{}\")", peer.name),
        );
    }
    for (name, table) in &settings.sources {
        add(&table.file, format!("sources.{name}.file"));
    }
    // Both spread tables the case names, whichever the cost of debt reads now: a `--set
    // debt.source` may read the other, and an output must never replace either.
    let debt = &settings.debt;
    for (table, key) in [
        (&debt.rating_table, "debt.rating_table"),
        (&debt.coverage_table, "debt.coverage_table"),
    ] {
        if let Some(written) = table {
            add(written, key.to_string());
        }
    }
    if let Some(reconcile) = &settings.reconcile {
        add(&reconcile.claimed, "reconcile.claimed".into());
    }
    files
}

/// The name a setting has in case files and JSON (`"median"`, `"wacc"`), for messages and
/// summaries.
pub fn label<T: serde::Serialize>(value: &T) -> String {
    match serde_json::to_value(value) {
        Ok(serde_json::Value::String(name)) => name,
        Ok(other) => other.to_string(),
        Err(_) => String::new(),
    }
}

/// A copy of `case` with more `dotted.key=value` overrides applied to its settings, validated
/// like a case read from disk. The sensitivity grid builds each cell this way, so a cell is the
/// same computation as a run with the same `--set` values.
pub fn with_overrides(case: &Case, extra: &[String]) -> Result<Case> {
    Variants::new(case)?.with(extra)
}

/// A case's settings serialised once, for many sets of overrides (the grid's cells, the
/// specification range's rows): [`Variants::with`] is [`with_overrides`] without serialising
/// the case again for each set.
pub struct Variants<'a> {
    case: &'a Case,
    table: toml::Table,
}

impl<'a> Variants<'a> {
    pub fn new(case: &'a Case) -> Result<Variants<'a>> {
        let toml::Value::Table(table) = toml::Value::try_from(&case.settings)
            .map_err(|e| case_error(case, format!("cannot re-serialise the case: {e}")))?
        else {
            unreachable!("a struct serialises to a table");
        };
        Ok(Variants { case, table })
    }

    /// The case's own settings as a TOML table.
    pub fn own(&self) -> &toml::Table {
        &self.table
    }

    /// The case with `extra` applied, validated like a case read from disk.
    pub fn with(&self, extra: &[String]) -> Result<Case> {
        let case = self.case;
        let mut table = self.table.clone();
        for assignment in extra {
            apply_override(&mut table, assignment)?;
        }
        renamed::check(&table).map_err(|m| case_error(case, m))?;
        let table = toml::Value::Table(table);
        // The table is what the settings serialise to, so its numbers are theirs; the check's
        // error is reported after the parser's, as `validate` would.
        let finite = sanity::check_finite_table(&table);
        let settings = CaseFile::deserialize(table).map_err(|e| {
            // Only on failure: the table again, so the message can quote the line at fault.
            let mut table = self.table.clone();
            for assignment in extra {
                // Applied once already above, so it applies again.
                let _ = apply_override(&mut table, assignment);
            }
            let located = crate::error::toml_error_in_table::<CaseFile>(&table, e.message().into());
            case_error(case, format!("with {}: {located}", extra.join(", ")))
        })?;
        finite
            .and_then(|()| validate::validate_finite(&settings))
            .map_err(|m| case_error(case, m))?;
        let mut overrides = case.overrides.clone();
        overrides.extend(extra.iter().cloned());
        Ok(Case {
            settings,
            path: case.path.clone(),
            sha256: case.sha256.clone(),
            overrides,
        })
    }
}

fn case_error(case: &Case, message: String) -> Error {
    Error::Case {
        file: case.path.clone(),
        message,
    }
}

/// Reads, overrides and validates a case file. `overrides` are `dotted.key=value` strings.
pub fn read_case(path: &Path, overrides: &[String]) -> Result<Case> {
    let bytes = std::fs::read(path).map_err(|source| Error::Io {
        path: path.to_path_buf(),
        action: "cannot read the case file",
        source,
    })?;
    let sha256 = crate::io::series::sha256_hex(&bytes);
    // Read as a claimed build-up is (`compare` takes either), with the byte named.
    let text = sanity::toml_text(&bytes).map_err(|message| Error::Case {
        file: path.to_path_buf(),
        message,
    })?;
    (sanity::case_or_universe(&text, false))
        .and_then(|()| sanity::check_case_text(&text))
        .map_err(|message| Error::Case {
            file: path.to_path_buf(),
            message,
        })?;
    placeholders::reject(path, &text, overrides)?;
    let settings = parse_case(path, &text, overrides)?;
    validate(&settings)
        .map_err(|message| blamed_in_case(path, &text, &settings, overrides, message))?;
    Ok(Case {
        settings,
        path: path.to_path_buf(),
        sha256,
        overrides: overrides.to_vec(),
    })
}

/// `overrides` without the `i`-th: what the file gives without that one `--set`, for telling
/// whether the refusal is that override's.
pub(crate) fn all_but(overrides: &[String], i: usize) -> Vec<String> {
    (overrides.iter().enumerate())
        .filter(|&(j, _)| j != i)
        .map(|(_, o)| o.clone())
        .collect()
}

/// A check's refusal of a case or universe file: blamed on the overrides whose keys the message
/// names (a value an override gave), else on the file (a value of its own).
pub fn blamed(path: &Path, overrides: &[String], message: String) -> Error {
    // The key as the parser reads it (spaces around each segment dropped), found in the
    // message as a whole key: `peer.1.debt` is not named by `peer.1.debt_beta`.
    let key = |o: &String| -> String {
        let key = o.split_once('=').map_or(o.as_str(), |(k, _)| k);
        key.split('.').map(str::trim).collect::<Vec<_>>().join(".")
    };
    let part_of_key = |c: char| c.is_alphanumeric() || c == '_' || c == '.';
    let names = |key: &str| {
        !key.is_empty()
            && message.match_indices(key).any(|(at, _)| {
                let before = message[..at].chars().next_back();
                let after = message[at + key.len()..].chars().next();
                !before.is_some_and(part_of_key)
                    && !after.is_some_and(|c| c.is_alphanumeric() || c == '_')
            })
    };
    let given: Vec<String> = (overrides.iter())
        .filter(|o| names(&key(o)))
        .cloned()
        .collect();
    match given.is_empty() {
        true => Error::Case {
            file: path.to_path_buf(),
            message,
        },
        false => Error::AfterOverrides {
            file: path.to_path_buf(),
            overrides: given,
            message,
        },
    }
}

/// [`blamed`] for a case file's own checks, which can tell a file's value from one a `--set`
/// gave whatever the message's words (found by review: `peer.0.debt=1e12` was put down to the
/// file, whose message reads "peer.0 (peer …): debt = …", and a peer set by name never
/// matched). A `--set` is blamed when the case passes without it, or when the message names its
/// key, or its peer's position and its field (a peer set by name taken to its position); a
/// refusal in other words without it proves nothing (it may only reword the file's own fault),
/// nor does a `--set` without which the file cannot be read (one that fills a placeholder).
fn blamed_in_case(
    path: &Path,
    text: &str,
    settings: &CaseFile,
    overrides: &[String],
    message: String,
) -> Error {
    let passes_without = |i: usize| {
        parse_case(path, text, &all_but(overrides, i)).is_ok_and(|s| validate(&s).is_ok())
    };
    let key = |o: &str| -> String {
        let key = o.split_once('=').map_or(o, |(k, _)| k);
        key.split('.').map(str::trim).collect::<Vec<_>>().join(".")
    };
    // `peer.<index or name>.<field>` as the position the messages name and the field; a name
    // may hold ". ", so it is the text between `peer.` and the last dot, as written.
    let peer_field = |o: &str| -> Option<(usize, String)> {
        let written = o.split_once('=').map_or(o, |(k, _)| k).trim();
        let (peer, field) = written.strip_prefix("peer.")?.rsplit_once('.')?;
        let (peer, field) = (peer.trim(), field.trim());
        let index = (peer.parse::<usize>().ok())
            .or_else(|| settings.peers.iter().position(|p| p.name == peer))?;
        Some((index, field.to_string()))
    };
    let whole = |word: &str| {
        message.match_indices(word).any(|(at, _)| {
            let after = message[at + word.len()..].chars().next();
            !after.is_some_and(|c| c.is_alphanumeric() || c == '_')
        })
    };
    let names = |o: &String| {
        whole(&key(o))
            || peer_field(o).is_some_and(|(i, field)| {
                whole(&format!("peer.{i}.{field}"))
                    || (message.contains(&format!("peer.{i} (")) && whole(&field))
            })
    };
    let given: Vec<String> = (0..overrides.len())
        .filter(|&i| names(&overrides[i]) || passes_without(i))
        .map(|i| overrides[i].clone())
        .collect();
    match given.is_empty() {
        true => blamed(path, &[], message),
        false => Error::AfterOverrides {
            file: path.to_path_buf(),
            overrides: given,
            message,
        },
    }
}

fn parse_case(path: &Path, text: &str, overrides: &[String]) -> Result<CaseFile> {
    let case_error = |message: String| Error::Case {
        file: path.to_path_buf(),
        message,
    };
    // A key renamed in schema 2 is named with its new name before the parser calls it unknown.
    if let Ok(table) = toml::from_str::<toml::Table>(text) {
        renamed::check(&table).map_err(case_error)?;
    }
    // Parsing straight from text first keeps the parser's line and column in every message.
    let parsed = toml::from_str::<CaseFile>(text)
        .map_err(|e| case_error(crate::error::toml_error(&e, text)));
    if overrides.is_empty() {
        return parsed;
    }
    let mut table: toml::Table =
        toml::from_str(text).map_err(|e| case_error(crate::error::toml_error(&e, text)))?;
    refuse_both_target_ratios(overrides)?;
    for assignment in overrides {
        apply_override(&mut table, assignment)?;
    }
    renamed::check(&table).map_err(case_error)?;
    match CaseFile::deserialize(toml::Value::Table(table.clone())) {
        Ok(case) => Ok(case),
        // The file's own fault (a wrong type no `--set` touched), named at its line. A file
        // with placeholders fails alone by design; every one was replaced by a `--set` (the
        // placeholder check comes first), so what fails now is a `--set` or another key, which
        // the message after the overrides names.
        Err(_) if parsed.is_err() && placeholders::find(text).is_empty() => parsed,
        Err(e) => Err(Error::AfterOverrides {
            file: path.to_path_buf(),
            overrides: overrides.to_vec(),
            message: crate::error::toml_error_in_table::<CaseFile>(&table, e.message().to_string()),
        }),
    }
}
