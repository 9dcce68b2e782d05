//! Where each price series of a case comes from: a file of its own, or a column of a wide table.
//!
//! A case names each series (the index, the risk-free yields, every peer) either by a file of
//! its own (`prices = "data/x.csv"`) or by a column of a wide table declared once under
//! `[sources.NAME]` (`source = "NAME"`, `column = "X"`). This module holds the `[sources]`
//! schema, the checks that tie the references together, and [`read_series`], which reads each
//! table once and hands out one validated series per reference for `valuation::load_inputs`.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use crate::case::{Case, CaseFile};
use crate::error::{Error, Result};
use crate::io::series::{read_series_file, DataFile, ValueKind};
use crate::io::tables::{ChoiceWords, PriceTable, TableRequest};

/// `[sources.NAME]`: a wide price table (a date column and one column per security).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TableSource {
    /// Path of the table (`.csv`, `.txt`, `.parquet`, `.pq`, `.xlsx`, `.xlsm`, `.xls`, `.ods`),
    /// relative to the case file's folder.
    pub file: String,
    /// The workbook sheet holding the table; may be left out when the workbook has one sheet.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sheet: Option<String>,
    /// The header of the date column; default the first column.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub date_column: Option<String>,
}

/// How a table's messages name a source's `sheet` and `date_column` keys.
pub const SOURCE_KEYS: ChoiceWords = ChoiceWords {
    name_the_sheet: "(`sheet` in the case's source)",
    name_the_date_column: "`date_column` in the case's source names another",
    sheet_given: "`sheet` = ",
    drop_the_sheet: "drop `sheet`",
};

impl TableSource {
    /// What the source asks of its table, in the source's own keys.
    pub fn request(&self) -> TableRequest<'_> {
        TableRequest {
            sheet: self.sheet.as_deref(),
            date_column: self.date_column.as_deref(),
            words: &SOURCE_KEYS,
        }
    }
}

/// The case table holding every named source.
pub type Sources = BTreeMap<String, TableSource>;

/// One series reference as the case writes it, in either form.
struct SeriesKeys<'a> {
    /// The case key of the reference, for messages (`market.index`, `peer.2`).
    key: String,
    /// Who the key is, after it in messages (` (peer "Alder")`; empty for the market's series).
    label: String,
    /// The receipt's role (`index`, `risk_free`, `peer:<name>`).
    role: String,
    kind: ValueKind,
    /// The own-file form: the path key's name and value, and the column keys.
    file_key: &'static str,
    file: &'a str,
    date_column: &'a str,
    value_key: &'static str,
    value_column: &'a str,
    default_value_column: &'static str,
    /// The wide-table form.
    source: Option<&'a str>,
    column: Option<&'a str>,
}

impl SeriesKeys<'_> {
    /// The key of `leaf` under this reference, with who it is (`peer.0.column (peer "Alder")`).
    fn key_of(&self, leaf: &str) -> String {
        format!("{}.{leaf}{}", self.key, self.label)
    }

    /// The own file's value key and the column it names.
    fn value_columns(&self) -> (&'static str, &str) {
        (self.value_key, self.value_column)
    }
}

/// Every series reference of a case: the index, the risk-free series when present, the peers.
fn series_keys(case: &CaseFile) -> Vec<SeriesKeys<'_>> {
    let index = &case.market.index;
    let mut keys = vec![SeriesKeys {
        key: "market.index".into(),
        label: String::new(),
        role: "index".into(),
        kind: ValueKind::Price,
        file_key: "prices",
        file: &index.prices,
        date_column: &index.date_column,
        value_key: "price_column",
        value_column: &index.price_column,
        default_value_column: "price",
        source: index.source.as_deref(),
        column: index.column.as_deref(),
    }];
    if let Some(rf) = &case.market.risk_free_series {
        keys.push(SeriesKeys {
            key: "market.risk_free_series".into(),
            label: String::new(),
            role: "risk_free".into(),
            kind: ValueKind::Yield,
            file_key: "yields",
            file: &rf.yields,
            date_column: &rf.date_column,
            value_key: "yield_column",
            value_column: &rf.yield_column,
            default_value_column: "yield",
            source: rf.source.as_deref(),
            column: rf.column.as_deref(),
        });
    }
    keys.extend(case.peers.iter().enumerate().map(|(i, peer)| SeriesKeys {
        key: format!("peer.{i}"),
        label: format!(" (peer \"{}\")", peer.name),
        role: format!("peer:{}", peer.name),
        kind: ValueKind::Price,
        file_key: "prices",
        file: &peer.prices,
        date_column: &peer.date_column,
        value_key: "price_column",
        value_column: &peer.price_column,
        default_value_column: "price",
        source: peer.source.as_deref(),
        column: peer.column.as_deref(),
    }));
    keys
}

/// Checks `[sources]` and that every series names exactly one place to read it from.
pub fn validate(case: &CaseFile) -> std::result::Result<(), String> {
    for (name, table) in &case.sources {
        if table.file.trim().is_empty() {
            return Err(format!("sources.{name}.file is empty"));
        }
        super::sanity::path_not_a_formula(&format!("sources.{name}.file"), &table.file)?;
        for (field, value) in [("sheet", &table.sheet), ("date_column", &table.date_column)] {
            if value.as_deref().is_some_and(|v| v.trim().is_empty()) {
                return Err(format!(
                    "sources.{name}.{field} is empty; name it or leave the key out"
                ));
            }
        }
    }
    series_keys(case)
        .iter()
        .try_for_each(|keys| check_reference(keys, &case.sources))
}

/// The `[sources]` tables no series names, which are neither read nor hashed: the run notes
/// them (found by review: an unused table, even one naming a missing file, passed unseen).
pub fn unused_source_notes(case: &CaseFile) -> Vec<String> {
    let keys = series_keys(case);
    (case.sources.iter())
        .filter(|(name, _)| !keys.iter().any(|k| k.source == Some(name.as_str())))
        .map(|(name, table)| {
            format!(
                "sources.{name} is not used: no series names it (source = \"{name}\"), so its \
                 file, {}, is neither read nor hashed.",
                table.file
            )
        })
        .collect()
}

/// One series reference: its own file, or a source and a column, and not a mix.
fn check_reference(keys: &SeriesKeys, sources: &Sources) -> std::result::Result<(), String> {
    let key = format!("{}{}", keys.key, keys.label);
    let sub = |leaf: &str| keys.key_of(leaf);
    let has_file = !keys.file.trim().is_empty();
    match (has_file, keys.source) {
        (true, Some(source)) => Err(format!(
            "{key} has both `{}` = \"{}\" and `source` = \"{source}\"; keep one: a file of its \
             own, or a column of a [sources] table",
            keys.file_key, keys.file
        )),
        (false, None) => Err(format!(
            "{key} names no prices: give `{}` (a file of its own) or `source` and `column` (a \
             column of a table under [sources])",
            keys.file_key
        )),
        (true, None) => match keys.column {
            Some(column) => Err(format!(
                "{} = \"{column}\" applies to a [sources] table; a file of its own \
                 names its column with `{}`",
                sub("column"),
                keys.value_key
            )),
            None => Ok(()),
        },
        (false, Some(source)) => {
            if !sources.contains_key(source) {
                let known: Vec<String> = sources.keys().map(|k| format!("\"{k}\"")).collect();
                return Err(format!(
                    "{} = \"{source}\" is not a table under [sources]; {}",
                    sub("source"),
                    if known.is_empty() {
                        "the file declares no [sources.NAME] table".to_string()
                    } else {
                        format!("the file declares {}", known.join(", "))
                    }
                ));
            }
            match keys.column {
                Some(column) if !column.trim().is_empty() => {}
                _ => {
                    return Err(format!(
                        "{} is missing or empty: name the column of sources.{source} that \
                         holds this series",
                        sub("column")
                    ))
                }
            }
            if keys.date_column != "date" || keys.value_column != keys.default_value_column {
                return Err(format!(
                    "{key}: `date_column` and `{}` apply to a file of its own; with `source` the \
                     date column is sources.{source}.date_column and the values are in `column`",
                    keys.value_key
                ));
            }
            Ok(())
        }
    }
}

/// Reads every series of a validated case: the index, the risk-free series (when the case has
/// one) and the peers in order. Each wide table is read (and hashed) once, however many series
/// it holds.
/// The series a case reads, and what reading its wide tables saw but does not act on.
pub struct SeriesRead {
    pub index: DataFile,
    pub risk_free: Option<DataFile>,
    /// In the order of the case's `[[peer]]` tables.
    pub peers: Vec<DataFile>,
    /// The wide tables' notes (a hidden sheet, a workbook's filter), in the order of
    /// `[sources]`, each naming its file.
    pub notes: Vec<String>,
}

pub fn read_series(case: &Case) -> Result<SeriesRead> {
    use rayon::prelude::*;
    let settings = &case.settings;
    let keys = series_keys(settings);
    let mut tables: BTreeMap<&str, PriceTable> = BTreeMap::new();
    for source in keys.iter().filter_map(|k| k.column.and(k.source)) {
        if !tables.contains_key(source) {
            let spec = &settings.sources[source];
            let table = PriceTable::read(&spec.file, &case.resolve(&spec.file), spec.request())?;
            tables.insert(source, table);
        }
    }
    // The files are read and parsed side by side; the first error in key order is reported,
    // whichever thread met it first.
    let files: Vec<Result<DataFile>> = keys
        .par_iter()
        .map(|keys| match (keys.source, keys.column) {
            (Some(source), Some(column)) => tables[source]
                .series(&keys.role, column, keys.kind)
                .map_err(|e| name_the_key(e, &keys.key_of("column"))),
            _ => read_series_file(
                &keys.role,
                keys.file,
                &case.resolve(keys.file),
                keys.date_column,
                keys.value_column,
                keys.kind,
            )
            .map_err(|e| name_the_column_key(e, (&keys.key, &keys.label), keys.value_columns())),
        })
        .collect();
    let mut files = files.into_iter().collect::<Result<Vec<_>>>()?.into_iter();
    let index = files.next().expect("a case always has an index");
    let risk_free = if settings.market.risk_free_series.is_some() {
        files.next()
    } else {
        None
    };
    let notes = (tables.iter())
        .flat_map(|(source, table)| {
            let file = &settings.sources[*source].file;
            table.notes.iter().map(move |n| format!("{file}: {n}"))
        })
        .collect();
    Ok(SeriesRead {
        index,
        risk_free,
        peers: files.collect(),
        notes,
    })
}

/// Adds the case key that asked for a column to a table's message.
fn name_the_key(error: Error, key: &str) -> Error {
    match error {
        Error::DataFile { file, message } => Error::DataFile {
            file,
            message: format!("{message} (asked for by {key})"),
        },
        other => other,
    }
}

/// Adds the key that named a missing column of a series' own file to its message: `section`'s
/// `value_key` when the column is `value_column`, else its `date_column`, followed by `label`
/// (` (peer "Alder")`) (found by review: `--set market.index.price_column=close` was told only
/// that the file lacks it).
pub fn name_the_column_key(
    error: Error,
    (section, label): (&str, &str),
    (value_key, value_column): (&str, &str),
) -> Error {
    match error {
        Error::MissingColumn {
            file,
            column,
            message,
        } => {
            let key = match column == value_column {
                true => value_key,
                false => "date_column",
            };
            Error::MissingColumn {
                file,
                message: format!("{message} (asked for by {section}.{key}{label})"),
                column,
            }
        }
        other => other,
    }
}

/// Whether two cases read the same data: the same files, tables, sheets and columns. A
/// what-if (a grid axis) may change any figure but not which prices are read.
pub fn same_data(a: &CaseFile, b: &CaseFile) -> bool {
    let places = |case: &CaseFile| -> Vec<String> {
        series_keys(case)
            .iter()
            .map(|k| {
                format!(
                    "{}|{}|{}|{:?}|{:?}",
                    k.file, k.date_column, k.value_column, k.source, k.column
                )
            })
            .collect()
    };
    places(a) == places(b) && a.sources == b.sources
}
