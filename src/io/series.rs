//! Data loading: price and yield files into typed, validated date series.
//!
//! Files are CSV with a header row; the csv crate splits them into records (a price file is a few
//! thousand short lines, for which polars' parallel reader costs more in setting up than in
//! reading), and each cell is then parsed here so that a bad value is reported with its file,
//! line and content. A series must be strictly ascending in date: a duplicate or an
//! out-of-order date is an error naming both lines, never silently sorted or de-duplicated. The bytes that are parsed are the bytes
//! that are hashed, so the receipt's SHA-256 describes exactly what was used.
//!
//! Sampling works on [`SeriesView`], a borrowed pair of date and value slices, so a long-format
//! panel of many securities can feed the same code by slicing, without copying.

use std::path::Path;

use chrono::NaiveDate;
use serde::Serialize;
use sha2::{Digest, Sha256};

use crate::error::{Error, Result};

pub use super::sanity::ValueKind;

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
    /// Where each value sits in a wide table (`sheet "Prices", cell G1500`, `line 1500, column
    /// `X``), for messages; empty for a file of its own, whose value i is on line i + 2.
    #[serde(skip)]
    pub places: Vec<String>,
}

/// Serialises a date as ISO 8601 text (`2026-09-30`), for `#[serde(serialize_with)]`.
pub fn iso_date<S: serde::Serializer>(
    date: &NaiveDate,
    serializer: S,
) -> std::result::Result<S::Ok, S::Error> {
    serializer.collect_str(&date.format("%Y-%m-%d"))
}

/// Serialises dates as a list of ISO 8601 texts, for `#[serde(serialize_with)]`.
pub fn iso_dates<S: serde::Serializer>(
    dates: &[NaiveDate],
    serializer: S,
) -> std::result::Result<S::Ok, S::Error> {
    serializer.collect_seq(dates.iter().map(|d| d.format("%Y-%m-%d").to_string()))
}

/// Lower-case hexadecimal SHA-256 of some bytes.
pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// Reads one series file. `written` is the path as the case names it; `resolved` is where it is.
/// A data file that cannot be read, named with what the case reads it as (`role`: `index`,
/// `risk_free`, `peer:NAME`) and, when the folder holds a file whose name differs only in
/// capitals, that name (file names are matched exactly on most systems).
fn unreadable(resolved: &Path, role: &str, source: &std::io::Error) -> Error {
    let what = match role.strip_prefix("peer:") {
        Some(name) => format!("the price file of peer \"{name}\""),
        None if role == "index" => "the index's price file (market.index)".to_string(),
        None => "the risk-free yields (market.risk_free_series)".to_string(),
    };
    let wanted = resolved
        .file_name()
        .map(|n| n.to_string_lossy().to_lowercase());
    let alike = resolved
        .parent()
        .and_then(|folder| std::fs::read_dir(folder).ok())
        .and_then(|entries| {
            entries
                .flatten()
                .map(|e| e.file_name().to_string_lossy().into_owned())
                .find(|n| {
                    Some(n.to_lowercase()) == wanted
                        && Some(n.as_str()) != resolved.file_name().and_then(|f| f.to_str())
                })
        });
    let hint = alike.map_or_else(String::new, |name| {
        format!("; the folder has `{name}`, which differs only in capitals")
    });
    Error::DataFile {
        file: resolved.to_path_buf(),
        message: format!("cannot read {what}: {source}{hint}"),
    }
}

pub fn read_series_file(
    role: &str,
    written: &str,
    resolved: &Path,
    date_column: &str,
    value_column: &str,
    kind: ValueKind,
) -> Result<DataFile> {
    let bytes = std::fs::read(resolved).map_err(|source| unreadable(resolved, role, &source))?;
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
        places: Vec::new(),
    })
}

/// A line of nothing but white space is refused as such, and a record longer than the header:
/// the shape check reads a quote anywhere as opening a field, while the csv crate reads a quote
/// inside a field as text, so a decimal comma after a stray quote reaches the reader.
fn check_record_length(
    file: &Path,
    line: usize,
    record: &csv::StringRecord,
    fields: usize,
) -> Result<()> {
    if record.len() == 1 && record[0].trim().is_empty() {
        // Found by review: such a line was reported as an empty date.
        return Err(Error::DataRow {
            file: file.to_path_buf(),
            line,
            message: "the line holds only white space, no fields: delete it".into(),
        });
    }
    if record.len() <= fields {
        return Ok(());
    }
    let text: Vec<&str> = record.iter().collect();
    Err(Error::DataRow {
        file: file.to_path_buf(),
        line,
        message: super::sanity::extra_fields_message(record.len(), fields, &text.join(",")),
    })
}

/// The line a record starts on, as an editor counts it: the csv crate's count, or, in a file
/// with CRLF line ends, the line feeds before the record's first byte (the crate's count runs
/// one short there; found by review).
struct LineCounter<'a> {
    bytes: &'a [u8],
    crlf: bool,
    /// `(byte, line)`: where the count has reached.
    counted: (usize, usize),
}

impl<'a> LineCounter<'a> {
    fn new(bytes: &'a [u8]) -> LineCounter<'a> {
        LineCounter {
            bytes,
            crlf: memchr::memchr(b'\r', bytes).is_some(),
            counted: (0, 1),
        }
    }

    /// The line of the record starting at `start` (records come in order).
    fn line(&mut self, start: &csv::Position) -> usize {
        if !self.crlf {
            return start.line() as usize;
        }
        // After a CRLF the reader's offset is the LF's, which ends the line before.
        let mut at = (start.byte() as usize).min(self.bytes.len());
        if self.bytes.get(at) == Some(&b'\n') {
            at += 1;
        }
        let more = memchr::memchr_iter(b'\n', &self.bytes[self.counted.0..at]).count();
        self.counted = (at, self.counted.1 + more);
        self.counted.1
    }
}

/// The columns the header leaves unnamed, which must stay empty (`unnamed_value_message`); not
/// a first one, where dataframe libraries write their row index (`,date,price`), which holds no
/// part of a number split by a decimal comma.
fn unnamed_columns(header: &csv::StringRecord) -> Vec<usize> {
    (1..header.len())
        .filter(|&i| header[i].trim().is_empty())
        .collect()
}

/// A record's cell in a column the header leaves unnamed (`unnamed`, by position) must be empty
/// (`sanity::unnamed_value_message`).
fn check_unnamed_cells(
    file: &Path,
    line: usize,
    (record, header): (&csv::StringRecord, &csv::StringRecord),
    unnamed: &[usize],
) -> Result<()> {
    let cell = |at: usize| record.get(at).unwrap_or("").trim();
    match unnamed.iter().find(|&&at| !cell(at).is_empty()) {
        Some(&at) => Err(Error::DataRow {
            file: file.to_path_buf(),
            line,
            message: super::sanity::unnamed_value_message(
                at + 1,
                cell(at),
                at.checked_sub(1).map(|l| (&header[l], cell(l))),
            ),
        }),
        None => Ok(()),
    }
}

/// "No column named `name`", with the header's names and a name that differs only by spaces.
fn missing_column(file: &Path, header: &csv::StringRecord, name: &str) -> Error {
    let names: Vec<&str> = header.iter().collect();
    let hint = super::sanity::column_name_hint(names.iter().copied(), name);
    Error::MissingColumn {
        file: file.to_path_buf(),
        column: name.to_string(),
        message: format!(
            "no column named `{name}`; the header has: {}{hint}",
            names.join(", ")
        ),
    }
}

/// Parses CSV bytes into a validated series; `file` is only used in messages. The shape is
/// checked first (`sanity::check_csv_shape`: UTF-8, separators, field counts); the csv crate
/// then hands over each record's cells as borrowed text, which are parsed here so that a bad
/// value is named with its line.
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
    // Empty lines after the last row are no rows (the file's hash is of every byte).
    let bytes = super::sanity::without_trailing_empty_records(bytes);
    let blank = super::sanity::check_csv_shape(file, bytes, false)?;
    // The reader skips blank lines; polars, and people, see a row with empty cells there.
    let blank_row = |blank: super::sanity::BlankLine| Error::DataRow {
        file: file.to_path_buf(),
        line: blank.line,
        message: format!("`{date_column}` = \"\" {}", date_problem("", date_column)),
    };
    let mut reader = csv::ReaderBuilder::new().flexible(true).from_reader(bytes);
    let unreadable = |e: csv::Error| file_error(format!("not a readable CSV file: {e}"));
    let header = reader.headers().map_err(unreadable)?.clone();
    let column = |name: &str| match super::sanity::unique_column(&header, name) {
        Ok(Some(at)) => Ok(at),
        Ok(None) => Err(missing_column(file, &header, name)),
        Err(message) => Err(file_error(message)),
    };
    let (date_at, value_at) = (column(date_column)?, column(value_column)?);
    let unnamed = unnamed_columns(&header);
    let rows = bytes.iter().filter(|&&b| b == b'\n').count();
    let mut dates = Vec::with_capacity(rows);
    let mut values = Vec::with_capacity(rows);
    let mut record = csv::StringRecord::new();
    let mut previous_line = 0;
    let mut lines = LineCounter::new(bytes);
    while reader.read_record(&mut record).map_err(unreadable)? {
        // read_record sets every record's position; the reader's own is the fallback.
        let start = record.position().unwrap_or(reader.position()).clone();
        // A record after a skipped blank line starts, for the reader, at the blank line.
        if let Some(blank) = blank.filter(|b| start.byte() as usize >= b.byte) {
            return Err(blank_row(blank));
        }
        let line = lines.line(&start);
        check_record_length(file, line, &record, header.len())?;
        check_unnamed_cells(file, line, (&record, &header), &unnamed)?;
        let cell = |at: usize| record.get(at).unwrap_or("").trim();
        let (date, value) = parse_row(
            cell(date_at),
            cell(value_at),
            date_column,
            value_column,
            kind,
        )
        .map_err(|message| Error::DataRow {
            file: file.to_path_buf(),
            line,
            message,
        })?;
        if let Some(&previous) = dates.last() {
            check_order(date, previous, previous_line).map_err(|message| Error::DataRow {
                file: file.to_path_buf(),
                line,
                message,
            })?;
        }
        dates.push(date);
        values.push(value);
        previous_line = line;
    }
    if let Some(blank) = blank {
        return Err(blank_row(blank));
    }
    if dates.is_empty() {
        return Err(file_error("has a header but no data rows".into()));
    }
    let series = Series { dates, values };
    super::sanity::check_series_values(file, value_column, (&series.dates, &series.values), kind)?;
    Ok(series)
}

/// A row's date against the row before it (on `previous_line`): strictly later.
fn check_order(
    date: NaiveDate,
    previous: NaiveDate,
    previous_line: usize,
) -> std::result::Result<(), String> {
    if date == previous {
        return Err(format!(
            "duplicate date {date} (also on line {previous_line}); each date may appear once"
        ));
    }
    if date < previous {
        return Err(format!(
            "date {date} comes after {previous} on line {previous_line}; rows must be sorted by \
             ascending date, oldest first (sort the file, also one saved newest first; it is \
             never reordered silently)"
        ));
    }
    Ok(())
}

/// One row's date and value cells, parsed and checked against the kind's range; the message
/// names the column and the cell.
fn parse_row(
    date_cell: &str,
    value_cell: &str,
    date_column: &str,
    value_column: &str,
    kind: ValueKind,
) -> std::result::Result<(NaiveDate, f64), String> {
    let date = parse_file_date(date_cell).ok_or_else(|| {
        format!(
            "`{date_column}` = \"{date_cell}\" {}",
            date_problem(date_cell, date_column)
        )
    })?;
    let value: f64 = value_cell.parse().map_err(|_| {
        format!(
            "`{value_column}` = \"{value_cell}\" is not a number: {}",
            number_problem(value_cell, kind.missing_advice())
        )
    })?;
    match kind.broken_rule(value) {
        Some(rule) => Err(format!("`{value_column}` = {value_cell} on {date}: {rule}")),
        None => Ok((date, value)),
    }
}

/// What is wrong with a date cell hurdle cannot read, and what to write: a spreadsheet's
/// day-first or month-first date, a serial number, a time of day, the header repeated, an
/// empty cell (a blank or total row).
fn date_problem(cell: &str, date_column: &str) -> String {
    format!(
        "is not a date hurdle reads: {}",
        date_hint(cell, date_column)
    )
}

/// What to write instead of a date cell hurdle cannot read ([`date_problem`] without its
/// opening words): also for a market panel's cells.
pub(crate) fn date_hint(cell: &str, date_column: &str) -> &'static str {
    let cell = cell.trim();
    let digits = |s: &str| !s.is_empty() && s.bytes().all(|b| b.is_ascii_digit());
    let parts: Vec<&str> = cell.split(['/', '.', '-']).collect();
    // The first ten characters in the form YYYY-MM-DD, whether or not they name a day.
    let head = cell.get(..10).filter(|h| {
        let b = h.as_bytes();
        b[4] == b'-' && b[7] == b'-' && digits(&h[..4]) && digits(&h[5..7]) && digits(&h[8..])
    });
    let hint = if cell.is_empty() {
        "the date is empty: delete the blank or total row"
    } else if cell == date_column {
        "the header row is repeated here: delete this line"
    } else if digits(cell) && cell.len() == 5 {
        "a spreadsheet's serial day number: format the date column as yyyy-mm-dd before saving"
    } else if head.is_some_and(|h| parse_iso_date(h).is_none()) {
        // Year first but no such day (found by review: 2024-02-30 was told to write dates
        // year first), with a time of day or without.
        "no such day: the month runs from 01 to 12 and the day within its month (29 February \
         only in a leap year)"
    } else if head.is_some() {
        // A real day followed by a time hurdle does not read (date-times are read by their
        // date; found by review: the advice was to keep the date alone).
        "the time of day after the date is not in ISO 8601 form: write it as THH:MM or \
         THH:MM:SS, with Z or an offset ±HH:MM if any (2023-03-31T16:30:00Z), or write the date \
         alone"
    } else if parts.len() == 3
        && parts.iter().all(|p| digits(p))
        && parts[0].len() == 4
        && parts[1..].iter().all(|p| p.len() <= 2)
    {
        // Year first with slashes or points, or a one-digit month or day.
        match (
            cell.as_bytes()[4],
            cell.as_bytes()[cell.len() - parts[2].len() - 1],
        ) {
            (b'-', b'-') => {
                "write the month and the day with two digits each, YYYY-MM-DD (2023-03-31)"
            }
            _ => "write the date with hyphens, YYYY-MM-DD (2023-03-31)",
        }
    } else if parts.len() == 3 && parts.iter().all(|p| digits(p)) && parts[0].len() <= 2 {
        "a day-first or month-first date: write dates year first (2023-03-31), for example by \
         formatting the date column as yyyy-mm-dd before saving"
    } else {
        GENERIC_DATE_HINT
    };
    hint
}

/// [`date_hint`] for a cell that looks like no particular mistake.
pub(crate) const GENERIC_DATE_HINT: &str = "write dates year first, YYYY-MM-DD (2023-03-31)";

/// What to write instead of a price, yield or attribute cell that is not a number.
pub(crate) fn number_problem(cell: &str, missing: &str) -> String {
    let cell = cell.trim();
    let placeholder = [
        "n/a", "na", "n.a.", "null", "none", "missing", "—", "–", "-",
    ];
    let digits_apart = |separator: char| {
        cell.split(separator).count() > 1
            && (cell.split(separator)).all(|part| part.chars().any(|c| c.is_ascii_digit()))
    };
    if cell.starts_with('#') || cell.is_empty() || placeholder.contains(&&*cell.to_lowercase()) {
        format!("a spreadsheet error or a placeholder for a missing value; {missing}")
    } else if cell.ends_with('%') {
        "write the number without a % sign (a yield or rate as a decimal, 0.0325 for 3.25%)".into()
    } else if cell.contains(',') || digits_apart(' ') || digits_apart('\'') {
        "write the number with a decimal point and no thousands separator (1043.83)".into()
    } else if cell.starts_with(['$', '€', '£', '¥']) {
        "write the number without a currency sign".into()
    } else {
        "write the number alone, with a decimal point".into()
    }
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

/// A date cell of a file of its own: [`parse_iso_date`], or an ISO 8601 date-time read by its
/// date as a wide table's cell is (`2024-09-30T16:30Z`: the time and zone are ignored).
fn parse_file_date(text: &str) -> Option<NaiveDate> {
    parse_iso_date(text).or_else(|| crate::io::tables::iso_date_time(text))
}

#[cfg(test)]
mod tests {
    use super::*;

    // A price is a positive finite number and a yield a finite one above −100% (common
    // practice: a price of zero has no return, a yield of −100% loses everything each year).
    #[test]
    fn prices_and_yields_break_their_own_rules() {
        let rule = |kind: ValueKind, v: f64| kind.broken_rule(v).unwrap_or("");
        assert_eq!(rule(ValueKind::Price, 12.5), "");
        assert!(rule(ValueKind::Price, 0.0).contains("positive"));
        assert!(rule(ValueKind::Price, -1.0).contains("positive"));
        assert!(rule(ValueKind::Price, f64::INFINITY).contains("finite"));
        assert!(rule(ValueKind::Price, f64::NAN).contains("finite"));
        assert_eq!(rule(ValueKind::Yield, -0.5), "");
        assert!(rule(ValueKind::Yield, -1.0).contains("above -1"));
        assert!(rule(ValueKind::Yield, f64::NEG_INFINITY).contains("finite"));
    }

    fn parsed(text: &[u8]) -> std::result::Result<Series, String> {
        parse_series(Path::new("p.csv"), text, "date", "price", ValueKind::Price)
            .map_err(|e| e.to_string())
    }

    // RFC 4180 (the CSV format's published description): quoted cells lose their quotes, a
    // quoted cell may hold a line break, CRLF ends a line like LF; a BOM before the header is
    // not part of the first column's name.
    #[test]
    fn series_cells_are_read_as_rfc_4180_has_them() {
        let series =
            parsed(b"\xEF\xBB\xBFdate,price\r\n2026-01-01,\"1.5\"\r\n2026-01-02, 2.5 \r\n")
                .unwrap();
        assert_eq!(series.values, [1.5, 2.5]);
        let quoted = parsed(b"date,note,price\n2026-01-01,\"a\nb\",1\n2026-01-01,c,2\n");
        // The second record starts on line 4, after the quoted line break; the first on line 2.
        assert!(
            quoted.as_ref().unwrap_err().contains("line 4"),
            "{quoted:?}"
        );
        assert!(quoted.unwrap_err().contains("also on line 2"));
    }

    // A year-first date that does not read gets advice for its own mistake: no such day (with a
    // time or without), slashes or points, one-digit parts, a time not in ISO 8601 form.
    #[test]
    fn year_first_dates_that_do_not_read_get_their_own_advice() {
        // The Gregorian calendar: 2023 is not a leap year, no month has 30 February.
        for cell in ["2023-02-29", "2024-02-30", "2024-13-01"] {
            assert!(date_hint(cell, "date").starts_with("no such day"), "{cell}");
        }
        assert!(date_hint("2024-02-30T16:30", "date").starts_with("no such day"));
        assert!(date_hint("2024/01/31", "date").contains("with hyphens"));
        assert!(date_hint("2020-01/02", "date").contains("with hyphens"));
        assert!(date_hint("2024-1-31", "date").contains("two digits each"));
        assert!(date_hint("2024-01-31T25:00", "date").contains("not in ISO 8601 form"));
        assert!(date_hint("2024-01-31 noon", "date").contains("not in ISO 8601 form"));
        assert!(date_hint("31/01/2024", "date").contains("day-first or month-first"));
    }

    // A blank line between rows is a row without a date, named at its own line, after any
    // fault above it; empty lines after the last row are none; a line of spaces is named so.
    #[test]
    fn a_blank_line_is_named_where_it_is() {
        let text = b"date,price\n2026-01-01,1\n\n2026-01-02,2\n";
        let error = parsed(text).unwrap_err();
        assert!(
            error.contains("line 3") && error.contains("`date` = \"\""),
            "{error}"
        );
        // Empty lines after the last row, as some writers and spreadsheets leave them, are none.
        for trailing in [
            &b"date,price\n2026-01-01,1\n\n"[..],
            b"date,price\n2026-01-01,1\n,\n,\n",
        ] {
            assert_eq!(parsed(trailing).unwrap().values, [1.0]);
        }
        let earlier = parsed(b"date,price\n2026-01-01,x\n\n").unwrap_err();
        assert!(
            earlier.contains("line 2") && earlier.contains("\"x\""),
            "{earlier}"
        );
        assert!(parsed(b"date,price\n2026-01-01,1\n").is_ok());
        let spaces = parsed(b"date,price\n2026-01-01,1\n   \n2026-01-02,2\n").unwrap_err();
        assert!(
            spaces.contains("line 3") && spaces.contains("only white space"),
            "{spaces}"
        );
    }

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
