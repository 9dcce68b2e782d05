//! The attributes table of a universe: one row per security with its industry and the figures
//! unlevering needs (market value of equity, debt, cash, tax rate).
//!
//! CSV or Parquet, by extension. An empty cell is kept as missing — the security is flagged and
//! left out of any aggregate that needs the figure, never given a guessed value. A value that is
//! present must make sense: a negative debt or cash, an equity value that is not positive or a
//! tax rate outside [0, 1) is an error naming the file, the row and the value, as is a security
//! listed twice or a column the universe file names that the table does not have.

use std::io::Cursor;
use std::path::Path;

use polars::prelude::*;
use serde::Serialize;

use super::{check_label, Source, TableFormat};
use crate::error::{Error, Result};
use crate::io::guard;
use crate::io::parquet_types::unreadable_column;
use crate::io::sanity::first_bad_record;

/// Which columns of the attributes table hold what.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct AttributeColumns {
    pub security: String,
    pub industry: String,
    pub equity_value: String,
    pub debt: String,
    /// Optional: without it, no security has a cash figure.
    pub cash: Option<String>,
    pub tax_rate: String,
}

/// One security's attributes as read; `None` is an empty cell.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AttributeRecord {
    pub security: String,
    pub industry: Option<String>,
    pub equity_value: Option<f64>,
    pub debt: Option<f64>,
    pub cash: Option<f64>,
    pub tax_rate: Option<f64>,
}

/// What the receipt records about the attributes file.
#[derive(Debug, Clone, Serialize)]
pub struct AttributesFile {
    pub path: String,
    pub sha256: String,
    pub format: TableFormat,
    pub rows: usize,
}

/// The attributes table, sorted by security id.
#[derive(Debug, Clone)]
pub struct Attributes {
    pub file: AttributesFile,
    records: Vec<AttributeRecord>,
}

impl Attributes {
    /// The attributes of `security`, if the table lists it.
    pub fn get(&self, security: &str) -> Option<&AttributeRecord> {
        self.records
            .binary_search_by(|r| r.security.as_str().cmp(security))
            .ok()
            .map(|i| &self.records[i])
    }

    /// Every record, in security order.
    pub fn records(&self) -> &[AttributeRecord] {
        &self.records
    }
}

/// Reads and checks an attributes table. `written` is the path as the universe file names it.
pub fn read_attributes(
    written: &str,
    resolved: &Path,
    columns: &AttributeColumns,
) -> Result<Attributes> {
    let format = TableFormat::from_path(resolved, "attributes.file")?;
    let source = Source {
        file: resolved.to_path_buf(),
        format,
    };
    let bytes = std::fs::read(resolved).map_err(|e| Error::Io {
        path: resolved.to_path_buf(),
        action: "cannot read the attributes file",
        source: e,
    })?;
    let mut used = vec![
        columns.security.as_str(),
        &columns.industry,
        &columns.equity_value,
        &columns.debt,
        &columns.tax_rate,
    ];
    used.extend(columns.cash.as_deref());
    let mut whole_header = None;
    let frame = match format {
        TableFormat::Csv => {
            let header = super::header::header(&source, &bytes)?;
            super::header::check_repeated_names(&source, &header, &used)?;
            let expected = header.len();
            let fewest = crate::io::sanity::fewest_fields(&header);
            if let Some((record, message)) = first_bad_record(&bytes, expected, Some(fewest)) {
                return Err(source.row_error(record.saturating_sub(1), message));
            }
            CsvReadOptions::default()
                .with_has_header(true)
                // All text, so each number is parsed (and reported) here.
                .with_infer_schema_length(Some(0))
                .into_reader_with_file_handle(Cursor::new(&bytes[..]))
                .finish()
        }
        TableFormat::Parquet => {
            let (frame, header) = read_parquet(&source, &bytes, &used)?;
            whole_header = Some(header);
            frame
        }
    }
    .map_err(|e| {
        let message = crate::error::reader_message(&e);
        source.file_error(format!("not a readable table: {message}"))
    })?;
    let records = records(&source, &frame, whole_header, columns)?;
    let mut order: Vec<usize> = (0..records.len()).collect();
    order.sort_by(|&a, &b| records[a].security.cmp(&records[b].security));
    if let Some(w) = order
        .windows(2)
        .find(|w| records[w[0]].security == records[w[1]].security)
    {
        let (first, second) = (w[0].min(w[1]), w[0].max(w[1]));
        return Err(source.row_error(
            second,
            format!(
                "security {} is listed again (first at {}); each security may have one row",
                records[second].security,
                source.place(first)
            ),
        ));
    }
    let mut records = records;
    records.sort_by(|a, b| a.security.cmp(&b.security));
    Ok(Attributes {
        file: AttributesFile {
            path: written.to_string(),
            sha256: crate::io::series::sha256_hex(&bytes),
            format,
            rows: records.len(),
        },
        records,
    })
}

/// The columns of a Parquet attributes file that `used` names, after checking that hurdle reads
/// their types, and the file's whole header (for [`records`] to name a column it lacks); the
/// other columns are not decoded, so a type hurdle does not read there does not matter.
fn read_parquet(
    source: &Source,
    bytes: &[u8],
    used: &[&str],
) -> Result<(PolarsResult<DataFrame>, Vec<String>)> {
    let unreadable = |reason: String| source.file_error(format!("not a readable table: {reason}"));
    let schema = guard::decoding(|| ParquetReader::new(Cursor::new(bytes)).schema())
        .map_err(unreadable)?
        .map_err(|e| unreadable(e.to_string()))?;
    if let Some(message) = unreadable_column(&schema, used.iter().copied()) {
        return Err(source.file_error(message));
    }
    let header: Vec<String> = schema.iter_names().map(|n| n.to_string()).collect();
    let mut read: Vec<String> = Vec::new();
    for name in &header {
        if used.contains(&name.as_str()) && !read.contains(name) {
            read.push(name.clone());
        }
    }
    let frame = guard::decoding(|| {
        ParquetReader::new(Cursor::new(bytes))
            .with_columns(Some(read))
            .finish()
    })
    .map_err(unreadable)?;
    Ok((frame, header))
}

/// Every row of the table, checked; a missing column is named with `whole_header` (the file's
/// header when only some columns were decoded).
fn records(
    source: &Source,
    frame: &DataFrame,
    whole_header: Option<Vec<String>>,
    columns: &AttributeColumns,
) -> Result<Vec<AttributeRecord>> {
    let header: Vec<String> = whole_header.unwrap_or_else(|| {
        frame
            .get_column_names()
            .iter()
            .map(|n| n.to_string())
            .collect()
    });
    let find = |name: &str, key: &str| -> Result<&Column> {
        frame.column(name).map_err(|_| {
            source.file_error(format!(
                "no column named `{name}` ({key}); the header has: {}{}",
                header.join(", "),
                crate::io::sanity::column_name_hint(header.iter().map(String::as_str), name)
            ))
        })
    };
    let security = text(
        source,
        find(&columns.security, "attributes.security_column")?,
    )?;
    let industry = text(
        source,
        find(&columns.industry, "attributes.industry_column")?,
    )?;
    let number = |name: &str, key: &str, rule: Rule| -> Result<Vec<Option<f64>>> {
        numbers(source, find(name, key)?, rule)
    };
    let equity = number(
        &columns.equity_value,
        "attributes.equity_value_column",
        Rule::Positive,
    )?;
    let debt = number(&columns.debt, "attributes.debt_column", Rule::NonNegative)?;
    let tax = number(&columns.tax_rate, "attributes.tax_rate_column", Rule::Rate)?;
    let cash = match &columns.cash {
        Some(name) => number(name, "attributes.cash_column", Rule::NonNegative)?,
        None => vec![None; frame.height()],
    };
    let mut records = Vec::with_capacity(frame.height());
    for (k, id) in security.into_iter().enumerate() {
        let Some(id) = id else {
            return Err(source.row_error(
                k,
                format!(
                    "`{}` is empty: every row needs a security id",
                    columns.security
                ),
            ));
        };
        records.push(AttributeRecord {
            security: id,
            industry: industry[k].clone(),
            equity_value: equity[k],
            debt: debt[k],
            cash: cash[k],
            tax_rate: tax[k],
        });
    }
    Ok(records)
}

/// A column as trimmed text; an empty cell is `None`. Integer columns are written as text,
/// categorical ones by their labels.
fn text(source: &Source, column: &Column) -> Result<Vec<Option<String>>> {
    let name = column.name().to_string();
    let labels = text_cells(source, column)?;
    for (k, label) in labels.iter().enumerate() {
        if let Some(label) = label {
            check_label(label, || format!("`{name}`"))
                .map_err(|message| source.row_error(k, message))?;
        }
    }
    Ok(labels)
}

/// [`text`] before the labels are checked.
fn text_cells(source: &Source, column: &Column) -> Result<Vec<Option<String>>> {
    let name = column.name().to_string();
    if !super::parquet::is_text_like(column.dtype()) {
        return Err(source.file_error(format!(
            "column `{name}` holds {}, not text labels",
            column.dtype()
        )));
    }
    let cast = column
        .cast(&DataType::String)
        .map_err(|e| source.file_error(format!("column `{name}`: {e}")))?;
    let cells = cast.str().expect("cast to text");
    Ok(cells
        .iter()
        .map(|c| {
            c.map(str::trim)
                .filter(|c| !c.is_empty())
                .map(str::to_string)
        })
        .collect())
}

/// The range a figure must lie in when it is present.
#[derive(Debug, Clone, Copy)]
enum Rule {
    Positive,
    NonNegative,
    /// [0, 1): a tax rate in decimals.
    Rate,
}

impl Rule {
    fn check(self, value: f64) -> std::result::Result<(), &'static str> {
        let fine = value.is_finite()
            && match self {
                Rule::Positive => value > 0.0,
                Rule::NonNegative => value >= 0.0,
                Rule::Rate => (0.0..1.0).contains(&value),
            };
        if fine {
            Ok(())
        } else if !value.is_finite() {
            Err("is not a finite number")
        } else {
            Err(match self {
                Rule::Positive => "must be positive",
                Rule::NonNegative => "must not be negative",
                Rule::Rate => "is outside [0, 1) (a tax rate in decimals, e.g. 0.25)",
            })
        }
    }
}

/// A numeric column (numbers or text that parses as numbers); an empty cell is `None`.
fn numbers(source: &Source, column: &Column, rule: Rule) -> Result<Vec<Option<f64>>> {
    let name = column.name().to_string();
    let values: Vec<(Option<f64>, Option<String>)> = if column.dtype().is_string() {
        let cells = column.str().expect("a text column");
        cells
            .iter()
            .enumerate()
            .map(
                |(k, cell)| match cell.map(str::trim).filter(|c| !c.is_empty()) {
                    None => Ok((None, None)),
                    Some(text) => text
                        .parse::<f64>()
                        .map(|v| (Some(v), Some(text.to_string())))
                        .map_err(|_| {
                            source.row_error(
                                k,
                                format!(
                                    "`{name}` = \"{text}\" is not a number: {}",
                                    crate::io::series::number_problem(text)
                                ),
                            )
                        }),
                },
            )
            .collect::<Result<_>>()?
    } else if column.dtype().is_primitive_numeric() {
        let cast = column
            .cast(&DataType::Float64)
            .map_err(|e| source.file_error(format!("column `{name}`: {e}")))?;
        cast.f64()
            .expect("cast")
            .iter()
            .map(|v| (v, None))
            .collect()
    } else {
        return Err(source.file_error(format!(
            "column `{name}` holds {}, not numbers",
            column.dtype()
        )));
    };
    values
        .into_iter()
        .enumerate()
        .map(|(k, (value, text))| {
            if let Some(v) = value {
                rule.check(v).map_err(|why| {
                    let shown = text.unwrap_or_else(|| v.to_string());
                    source.row_error(k, format!("`{name}` = {shown} {why}"))
                })?;
            }
            Ok(value)
        })
        .collect()
}
