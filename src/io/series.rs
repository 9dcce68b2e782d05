//! Data loading: price and yield files into typed, validated date series.
//!
//! Files are CSV with a header row; polars reads them with every column as text, and each cell
//! is then parsed here so that a bad value is reported with its file, line and content. A series
//! must be strictly ascending in date: a duplicate or an out-of-order date is an error naming
//! both lines, never silently sorted or de-duplicated. The bytes that are parsed are the bytes
//! that are hashed, so the receipt's SHA-256 describes exactly what was used.
//!
//! Sampling works on [`SeriesView`], a borrowed pair of date and value slices, so a long-format
//! panel of many securities can feed the same code by slicing, without copying.

use std::io::Cursor;
use std::path::Path;

use chrono::NaiveDate;
use polars::prelude::*;
use serde::Serialize;
use sha2::{Digest, Sha256};

use crate::error::{Error, Result};

/// What the numbers in a file are, which decides the range they must lie in.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ValueKind {
    /// An adjusted (total-return) closing price: finite and positive.
    Price,
    /// An annualised yield in decimals: finite and above −100%.
    Yield,
}

/// A date-ordered series of one security's prices or one rate's yields.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    pub dates: Vec<NaiveDate>,
    pub values: Vec<f64>,
}

/// A borrowed view of a series (or of one security's rows in a panel).
#[derive(Debug, Clone, Copy)]
pub struct SeriesView<'a> {
    pub dates: &'a [NaiveDate],
    pub values: &'a [f64],
}

impl Series {
    pub fn view(&self) -> SeriesView<'_> {
        SeriesView {
            dates: &self.dates,
            values: &self.values,
        }
    }
}

/// A data file as loaded: its series plus the facts the receipt records about it.
#[derive(Debug, Clone, Serialize)]
pub struct DataFile {
    /// What the file is in the case: `index`, `risk_free`, or `peer:<name>`.
    pub role: String,
    /// The path as written in the case file (relative to the case file's folder).
    pub path: String,
    pub sha256: String,
    pub rows: usize,
    #[serde(serialize_with = "iso_date")]
    pub first_date: NaiveDate,
    #[serde(serialize_with = "iso_date")]
    pub last_date: NaiveDate,
    /// The workbook sheet the series was read from (`null` for CSV and Parquet files).
    pub sheet: Option<String>,
    /// The column the values were read from.
    pub column: String,
    #[serde(skip)]
    pub series: Series,
}

/// Serialises a date as ISO 8601 text (`2026-09-30`), for `#[serde(serialize_with)]`.
pub fn iso_date<S: serde::Serializer>(
    date: &NaiveDate,
    serializer: S,
) -> std::result::Result<S::Ok, S::Error> {
    serializer.collect_str(&date.format("%Y-%m-%d"))
}

/// Lower-case hexadecimal SHA-256 of some bytes.
pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// Reads one series file. `written` is the path as the case names it; `resolved` is where it is.
pub fn read_series_file(
    role: &str,
    written: &str,
    resolved: &Path,
    date_column: &str,
    value_column: &str,
    kind: ValueKind,
) -> Result<DataFile> {
    let bytes = std::fs::read(resolved).map_err(|source| Error::Io {
        path: resolved.to_path_buf(),
        action: "cannot read the data file",
        source,
    })?;
    let sha256 = sha256_hex(&bytes);
    let series = parse_series(resolved, &bytes, date_column, value_column, kind)?;
    Ok(DataFile {
        role: role.to_string(),
        path: written.to_string(),
        sha256,
        rows: series.dates.len(),
        first_date: series.dates[0],
        last_date: *series
            .dates
            .last()
            .expect("parse_series rejects empty files"),
        sheet: None,
        column: value_column.to_string(),
        series,
    })
}

/// Parses CSV bytes into a validated series; `file` is only used in messages.
pub fn parse_series(
    file: &Path,
    bytes: &[u8],
    date_column: &str,
    value_column: &str,
    kind: ValueKind,
) -> Result<Series> {
    let file_error = |message: String| Error::DataFile {
        file: file.to_path_buf(),
        message,
    };
    let (date_text, value_text) = text_columns(file, bytes, date_column, value_column)?;
    if date_text.is_empty() {
        return Err(file_error("has a header but no data rows".into()));
    }
    let mut dates = Vec::with_capacity(date_text.len());
    let mut values = Vec::with_capacity(date_text.len());
    for (row, (date, value)) in date_text.iter().zip(&value_text).enumerate() {
        let line = row + 2;
        let row_error = |message: String| Error::DataRow {
            file: file.to_path_buf(),
            line,
            message,
        };
        let date_cell = date.as_deref().unwrap_or("").trim();
        let date = parse_iso_date(date_cell).ok_or_else(|| {
            row_error(format!(
                "`{date_column}` = \"{date_cell}\" is not an ISO 8601 date (YYYY-MM-DD)"
            ))
        })?;
        let value_cell = value.as_deref().unwrap_or("").trim();
        let value: f64 = value_cell.parse().map_err(|_| {
            row_error(format!(
                "`{value_column}` = \"{value_cell}\" is not a number"
            ))
        })?;
        match kind {
            ValueKind::Price if !(value.is_finite() && value > 0.0) => {
                return Err(row_error(format!(
                    "`{value_column}` = {value_cell} on {date}: a price must be positive"
                )))
            }
            ValueKind::Yield if !(value.is_finite() && value > -1.0) => {
                return Err(row_error(format!(
                    "`{value_column}` = {value_cell} on {date}: a yield must be above -1 (−100%)"
                )))
            }
            _ => {}
        }
        if let Some(&previous) = dates.last() {
            if date == previous {
                return Err(row_error(format!(
                    "duplicate date {date} (also on line {}); each date may appear once",
                    line - 1
                )));
            }
            if date < previous {
                return Err(row_error(format!(
                    "date {date} comes after {previous} on line {}; rows must be sorted by \
                     ascending date (sort the file; it is never reordered silently)",
                    line - 1
                )));
            }
        }
        dates.push(date);
        values.push(value);
    }
    let series = Series { dates, values };
    super::sanity::check_series_values(file, value_column, &series, kind)?;
    Ok(series)
}

/// One column's cells as text (`None` for an empty cell).
type TextColumn = Vec<Option<String>>;

/// The date and value columns of a CSV file as text, through polars (every column read as text,
/// so parsing and its messages are hurdle's own), after the file's shape is checked.
fn text_columns(
    file: &Path,
    bytes: &[u8],
    date_column: &str,
    value_column: &str,
) -> Result<(TextColumn, TextColumn)> {
    let file_error = |message: String| Error::DataFile {
        file: file.to_path_buf(),
        message,
    };
    super::sanity::check_csv_shape(file, bytes)?;
    let frame = CsvReadOptions::default()
        .with_has_header(true)
        // Length 0 makes polars read every column as text, so parsing (and its messages) is ours.
        .with_infer_schema_length(Some(0))
        .into_reader_with_file_handle(Cursor::new(bytes))
        .finish()
        // The reader's first line only: the rest advises options the user cannot set.
        .map_err(|e| file_error(format!("not a readable CSV file: {}", first_line(&e))))?;
    let column = |name: &str| -> Result<TextColumn> {
        let found = frame.column(name).map_err(|_| {
            let names: Vec<String> = frame
                .get_column_names()
                .iter()
                .map(|n| n.to_string())
                .collect();
            file_error(format!(
                "no column named `{name}`; the header has: {}",
                names.join(", ")
            ))
        })?;
        let text = found
            .str()
            .map_err(|e| file_error(format!("column `{name}`: {e}")))?;
        Ok(text.iter().map(|v| v.map(str::to_string)).collect())
    };
    Ok((column(date_column)?, column(value_column)?))
}

/// A `YYYY-MM-DD` date: the plain ten-character form read directly (most of a price file's
/// parsing time otherwise goes to chrono's general format parser), anything else through chrono,
/// so every form chrono accepts is still accepted.
fn parse_iso_date(text: &str) -> Option<NaiveDate> {
    let b = text.as_bytes();
    let digits = |range: std::ops::Range<usize>| -> Option<u32> {
        b[range].iter().try_fold(0u32, |n, &c| {
            c.is_ascii_digit().then(|| n * 10 + u32::from(c - b'0'))
        })
    };
    if b.len() == 10 && b[4] == b'-' && b[7] == b'-' {
        if let (Some(y), Some(m), Some(d)) = (digits(0..4), digits(5..7), digits(8..10)) {
            return NaiveDate::from_ymd_opt(y as i32, m, d);
        }
    }
    NaiveDate::parse_from_str(text, "%Y-%m-%d").ok()
}

fn first_line(error: &impl std::fmt::Display) -> String {
    error.to_string().lines().next().unwrap_or("").to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    // The direct reading of `YYYY-MM-DD` must agree with chrono's own parser (the reference) on
    // every form, valid or not, including impossible days and out-of-range months.
    #[test]
    fn the_direct_date_reading_agrees_with_chrono() {
        for text in [
            "2026-09-30",
            "2024-02-29",
            "2023-02-29",
            "2023-02-30",
            "2023-13-01",
            "2023-00-10",
            "0001-01-01",
            "9999-12-31",
            "2023-1-05",
            "2023-01-5",
            "2023/01/05",
            "20230105",
            "2023-01-05 ",
            "+2023-01-05",
            "2023-0a-05",
            "",
            "abcd-ef-gh",
        ] {
            assert_eq!(
                parse_iso_date(text),
                NaiveDate::parse_from_str(text, "%Y-%m-%d").ok(),
                "{text:?}"
            );
        }
    }
}
