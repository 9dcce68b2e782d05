//! The header of a CSV panel or attributes file: its column names as the file writes them (the
//! first record alone, through polars), and the refusal of a name given to two columns. Apart
//! from the block reader (`csv.rs`) because the attributes reader asks both too.

use std::io::Cursor;

use polars::prelude::*;

use super::Source;
use crate::error::{Error, Result};

/// The header's column names as the file writes them, through polars: the first line read as
/// a row of text, so that a repeated or empty name is seen as it is (read as a header, polars
/// would rename it).
/// An error at line `line` of the file (the header's lines, before any data row).
fn line_error(source: &Source, line: usize, message: String) -> Error {
    Error::DataRow {
        file: source.file.clone(),
        line,
        message,
    }
}

pub(super) fn header(source: &Source, block: &[u8]) -> Result<Vec<String>> {
    // A workbook or text saved as UTF-16 given as CSV is named as what it is (found by review:
    // a UTF-16 panel was reported as lines ending in CR alone).
    if let Some(kind) = crate::io::encoding::binary_kind(block) {
        return Err(source.file_error(format!(
            "the file is {kind}, not CSV text: save it as CSV (comma-separated, UTF-8), or as \
             Parquet with the .parquet extension"
        )));
    }
    // A spreadsheet's note of the separator above the header (found by review: an attributes
    // file's was reported as rows with more fields than the header).
    if let Some(message) = crate::io::sanity::separator_line(block) {
        return Err(line_error(source, 1, message));
    }
    // The first record alone (its end: the first line end outside quotes), so that a later
    // line's field count is not the header's concern.
    let mut in_quotes = false;
    let end = block.iter().position(|&b| {
        in_quotes ^= b == b'"';
        b == b'\n' && !in_quotes
    });
    let block = &block[..end.map_or(block.len(), |end| end + 1)];
    if let Some((_, message)) = crate::io::encoding::first_non_utf8(block) {
        return Err(line_error(source, 1, message));
    }
    if let Some((line, column, stray)) = crate::io::sanity::first_lone_carriage_return(block) {
        let message = crate::io::sanity::lone_carriage_return(column, stray);
        return Err(line_error(source, line, message));
    }
    // A header whose quotes no reader takes as meant is named at its line, before polars
    // gives its own message (found by review).
    if let Some((_, message)) = crate::io::sanity::first_bad_record(block, usize::MAX, None) {
        return Err(Error::DataRow {
            file: source.file.clone(),
            line: 1,
            message,
        });
    }
    let frame = CsvReadOptions::default()
        .with_has_header(false)
        .with_infer_schema_length(Some(0))
        .with_n_rows(Some(1))
        .into_reader_with_file_handle(Cursor::new(block))
        .finish()
        .map_err(|e| {
            let message = crate::error::reader_message(&e);
            source.file_error(format!("not a readable CSV file: {message}"))
        })?;
    let names: Vec<String> = frame
        .columns()
        .iter()
        .map(|c| {
            c.str()
                .ok()
                .and_then(|s| s.get(0))
                .unwrap_or("")
                .to_string()
        })
        .collect();
    if let [only] = names.as_slice() {
        if let Some(separator) = crate::io::sanity::other_separator(only) {
            // A wide panel's header names thousands of securities: its start says enough.
            let shown: String = match only.chars().count() {
                n if n > 80 => format!("{}…", only.chars().take(79).collect::<String>()),
                _ => only.clone(),
            };
            return Err(crate::error::Error::DataRow {
                file: source.file.clone(),
                line: 1,
                message: format!(
                    "the header `{shown}` is separated by {separator}; hurdle reads \
                     comma-separated files with a decimal point"
                ),
            });
        }
    }
    Ok(names)
}

/// Refuses a header that gives one name to two columns, among the names in `among` (all names
/// when it is empty): which of the two would be read?
pub(super) fn check_repeated_names(
    source: &Source,
    header: &[String],
    among: &[&str],
) -> Result<()> {
    let names = header.iter().map(String::as_str);
    // Sorted first: a wide header names thousands of securities.
    let mut checked: Vec<&str> = names
        .clone()
        .filter(|n| !n.is_empty() && (among.is_empty() || among.contains(n)))
        .collect();
    checked.sort_unstable();
    match checked.windows(2).find(|w| w[0] == w[1]) {
        Some(pair) => crate::io::sanity::unique_column(names, pair[0])
            .map(|_| ())
            .map_err(|message| source.file_error(message)),
        None => Ok(()),
    }
}
