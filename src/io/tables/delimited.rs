//! CSV and Parquet price tables, read through polars into cells.
//!
//! A CSV file is read without a header and with every field as text, so the header row is
//! checked here (empty or repeated names) and each field is parsed by the same cell rules as a
//! workbook's, with its line in every message. Parquet columns are typed: numbers stay numbers,
//! dates become ISO text, and nulls are empty cells.

use std::io::Cursor;

use polars::prelude::*;

use super::cells::{Cell, Place, PlaceKind};
use super::RawTable;
use crate::io::parquet_types::unreadable_column;

/// Reads CSV bytes: the first line is the header.
pub(crate) fn read_csv(bytes: &[u8]) -> Result<RawTable, String> {
    // A spreadsheet's note of the separator above the header, named as such, as price files,
    // panels and spread tables name it (found by review: it was called a title).
    if let Some(message) = crate::io::sanity::separator_line(bytes) {
        return Err(format!("line 1: {message}"));
    }
    // The shape first, as for a price file of its own: text that is not UTF-8, a row with more
    // fields than the header (a decimal comma) or fewer (a row cut short, whose last columns
    // would read as gaps) and lines ending in a carriage return alone are
    // named by line here, not left to polars' message. (An empty file keeps its own message.)
    if !bytes.iter().all(u8::is_ascii_whitespace) {
        match crate::io::sanity::check_csv_shape(std::path::Path::new(""), bytes, true) {
            Ok(_) => {}
            Err(crate::error::Error::DataRow { line, message, .. }) => {
                // A title line above the table has fewer fields than the header below it.
                return Err(title_line(bytes).unwrap_or(format!("line {line}: {message}")));
            }
            // The caller names the file (found by review: an empty name left `: :`).
            Err(crate::error::Error::DataFile { message, .. }) => return Err(message),
            Err(e) => return Err(e.to_string()),
        }
    }
    let frame = CsvReadOptions::default()
        .with_has_header(false)
        // Length 0 makes polars read every column as text, so parsing (and its messages) is ours.
        .with_infer_schema_length(Some(0))
        .into_reader_with_file_handle(Cursor::new(bytes))
        .finish()
        .map_err(|e| format!("not a readable CSV file: {e}"))?;
    if frame.height() == 0 {
        return Err("is empty: a price table needs a header row and rows of prices".into());
    }
    // A dataframe's row index written as an unnamed first column (`,date,A,B` over `0,…`,
    // `1,…`) is no security and is left out, as price files and wide panels leave it (found by
    // review: a wide table refused it). Only the counts 0, 1, 2, … (or 1, 2, 3, …) make an
    // index: serial dates under a blank header are named as an unnamed column, as before.
    let index_column = frame.width() > 1
        && frame.columns().first().is_some_and(|first| {
            first.str().ok().is_some_and(|t| {
                let counts: Vec<Option<u64>> = (t.iter().skip(1))
                    .map(|v| v.and_then(|v| v.trim().parse().ok()))
                    .collect();
                let from = counts.first().copied().flatten();
                t.get(0).is_none_or(|h| h.trim().is_empty())
                    && matches!(from, Some(0 | 1))
                    && (counts.iter().enumerate()).all(|(i, c)| *c == from.map(|f| f + i as u64))
            })
        });
    let kept = &frame.columns()[usize::from(index_column)..];
    let mut header = Vec::with_capacity(frame.width());
    let mut columns = Vec::with_capacity(frame.width());
    for column in kept {
        let text = column
            .str()
            .map_err(|e| format!("not a readable CSV file: {e}"))?;
        let mut cells = text.iter().map(|v| match v {
            None => Cell::Empty,
            Some(s) => Cell::Text(s.to_string()),
        });
        header.push(match cells.next() {
            Some(Cell::Text(name)) => name.trim().to_string(),
            _ => String::new(),
        });
        columns.push(cells.collect());
    }
    Ok(RawTable {
        sheet: None,
        place: Place {
            kind: PlaceKind::Csv,
            first_row: 2,
            first_column: 0,
            header: header.clone(),
            lines: record_lines(bytes),
        },
        header,
        columns,
        date_system_1904: false,
        notes: Vec::new(),
    })
}

/// The 1-based line each data record starts on, when a quoted field holds a line break (so
/// records and lines part); empty otherwise (record `r` is on line `r + 2`). Records end at a
/// line feed outside quotes, as polars reads them; a blank line is a record of its own.
fn record_lines(bytes: &[u8]) -> Vec<usize> {
    if memchr::memchr(b'"', bytes).is_none() {
        return Vec::new();
    }
    let (mut line, mut quoted, mut starts) = (1, false, Vec::new());
    for &b in bytes {
        match b {
            b'"' => quoted = !quoted,
            b'\n' => {
                line += 1;
                if !quoted {
                    starts.push(line);
                }
            }
            _ => {}
        }
    }
    // The first start is where the header's record ends: data record 0 begins there.
    starts
}

/// The message for a title written on the first lines, above the header, when the lines
/// below have more fields than it (the shape check's complaint): the first lines read field by
/// field, each on its own line, and asked as a table's header is.
fn title_line(bytes: &[u8]) -> Option<String> {
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .from_reader(bytes);
    let mut lines: Vec<(usize, Vec<String>)> = Vec::new();
    for record in reader.records().take(super::header::TITLE_SEARCH_ROWS + 1) {
        let record = record.ok()?;
        // The line a record starts on, counted from its byte offset: the reader skips blank
        // lines without counting them, and its offset is where the skipped lines begin.
        let mut byte = record.position().map_or(0, |p| p.byte() as usize);
        while matches!(bytes.get(byte), Some(b'\n' | b'\r')) {
            byte += 1;
        }
        let line = 1 + bytes[..byte.min(bytes.len())]
            .iter()
            .filter(|&&b| b == b'\n')
            .count();
        lines.push((line, record.iter().map(|f| f.trim().to_string()).collect()));
    }
    let (&(first, ref header), below) = lines.split_first()?;
    // Lines that do not follow one another (a file whose lines end in a carriage return alone
    // is one line by line feeds): no title to name, the shape check's message stands (found by
    // review: the subtraction below wrapped and panicked).
    if below.iter().any(|(line, _)| *line <= first) {
        return None;
    }
    let width = lines.iter().map(|(_, fields)| fields.len()).max()?;
    let height = lines.last().map_or(0, |(line, _)| line - first);
    let mut columns = vec![vec![Cell::Empty; height]; width];
    for (line, fields) in below {
        for (j, field) in fields.iter().enumerate() {
            columns[j][line - first - 1] = Cell::Text(field.clone());
        }
    }
    let mut header = header.clone();
    header.resize(width, String::new());
    let place = Place {
        kind: PlaceKind::Csv,
        first_row: first + 1,
        first_column: 0,
        header: header.clone(),
        lines: Vec::new(),
    };
    super::header::title_above(&RawTable {
        sheet: None,
        header,
        columns,
        place,
        date_system_1904: false,
        notes: Vec::new(),
    })
}

/// Reads Parquet bytes: the schema's names are the header.
pub(crate) fn read_parquet(bytes: &[u8]) -> Result<RawTable, String> {
    fn decode<T>(read: impl FnOnce() -> PolarsResult<T>) -> Result<T, String> {
        crate::io::guard::decoding(read)
            .and_then(|read| read.map_err(|e| e.to_string()))
            .map_err(|reason| format!("not a readable Parquet file: {reason}"))
    }
    // Every column is read, so every column must be of a type hurdle reads.
    let schema = decode(|| ParquetReader::new(Cursor::new(bytes)).schema())?;
    if let Some(message) = unreadable_column(&schema, schema.iter_names().map(|n| n.as_str())) {
        return Err(message);
    }
    let frame = decode(|| ParquetReader::new(Cursor::new(bytes)).finish())?;
    let mut header = Vec::with_capacity(frame.width());
    let mut columns = Vec::with_capacity(frame.width());
    for column in frame.columns() {
        header.push(column.name().trim().to_string());
        columns.push(parquet_cells(column).map_err(|e| {
            format!(
                "column `{}` of type {} cannot be read: {e}",
                column.name(),
                column.dtype()
            )
        })?);
    }
    Ok(RawTable {
        sheet: None,
        place: Place {
            kind: PlaceKind::Parquet,
            first_row: 1,
            first_column: 0,
            header: header.clone(),
            lines: Vec::new(),
        },
        header,
        columns,
        date_system_1904: false,
        notes: Vec::new(),
    })
}

/// A typed Parquet column as cells: numbers as numbers, logical values as such, everything
/// else (dates, datetimes, text) as text, which the cell rules read.
fn parquet_cells(column: &Column) -> PolarsResult<Vec<Cell>> {
    let dtype = column.dtype();
    if dtype == &DataType::Float32 {
        // By its shortest decimal, as a panel's and attributes' 32-bit floats are read.
        return Ok((column.f32()?.iter())
            .map(|v| {
                v.map_or(Cell::Empty, |v| {
                    Cell::Number(crate::io::parquet_types::f32_as_written(v))
                })
            })
            .collect());
    }
    if dtype.is_primitive_numeric() {
        let numbers = column.cast(&DataType::Float64)?;
        return Ok(numbers
            .f64()?
            .iter()
            .map(|v| v.map_or(Cell::Empty, Cell::Number))
            .collect());
    }
    if dtype == &DataType::Boolean {
        return Ok(column
            .bool()?
            .iter()
            .map(|v| v.map_or(Cell::Empty, Cell::Bool))
            .collect());
    }
    // A date (or a date-time, naive or in UTC: the only zone the schema check lets through, by
    // its date) as ISO text, which the table's date parsing reads; one beyond the calendar as
    // text that says so (the date check then names its cell).
    if matches!(dtype, DataType::Date | DataType::Datetime(..)) {
        return Ok(
            (crate::io::parquet_types::calendar_dates(column)?.into_iter())
                .map(|d| match d {
                    None => Cell::Empty,
                    Some(Ok(date)) => Cell::Text(date.format("%Y-%m-%d").to_string()),
                    Some(Err(stored)) => Cell::Text(format!("{stored}, beyond the calendar")),
                })
                .collect(),
        );
    }
    let text = column.cast(&DataType::String)?;
    Ok(text
        .str()?
        .iter()
        .map(|v| v.map_or(Cell::Empty, |s| Cell::Text(s.to_string())))
        .collect())
}
