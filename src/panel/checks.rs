//! The checks of a CSV panel's parsed block that name a row polars reads without complaint:
//! a record cut short or with quotes no reader takes as meant (read one by one, on the rare
//! blocks that can hold one), and a value in a column the header leaves unnamed. Apart from
//! `csv.rs`, which reads the blocks.

use polars::prelude::*;

use super::{PanelColumns, Source};
use crate::error::{Error, Result};
use crate::io::sanity::first_bad_record;

/// Whether a block holding quotes (`quoted`) has a quote after a space or a tab, the one quote
/// flaw polars reads without complaint (as text, quotes and all): only such blocks are read
/// record by record for it, not every block of a file whose writer quotes each id (found by
/// review: that cost about half again the CPU of a quoted panel).
pub(super) fn spaced_quote(block: &[u8], quoted: bool) -> bool {
    quoted
        && (memchr::memmem::find(block, b" \"").is_some()
            || memchr::memmem::find(block, b"\t\"").is_some())
}

/// Whether a long block's date, security or price column has an empty cell (polars counts
/// them as it parses).
pub(super) fn has_empty_cells(frame: &DataFrame, columns: &PanelColumns) -> bool {
    [
        &columns.date_column,
        &columns.security_column,
        &columns.price_column,
    ]
    .iter()
    .any(|name| frame.column(name).is_ok_and(|c| c.null_count() > 0))
}

/// The first record of a block with fewer (or more) fields than the header, or whose quotes
/// no reader takes as meant, as an error.
pub(super) fn check_records(
    source: &Source,
    block: &[u8],
    (has_header, first_row): (bool, usize),
    header: &[String],
) -> Result<()> {
    let (expected, fewest) = (header.len(), crate::io::sanity::fewest_fields(header));
    match first_bad_record(block, expected, Some(fewest)) {
        Some((record, message)) => {
            let row = (first_row + record).saturating_sub(usize::from(has_header));
            Err(source.row_error(row, message))
        }
        None => Ok(()),
    }
}

/// A wide panel's row with fewer fields than the header would leave its last securities' cells
/// empty, read as gaps: it is refused (a header alone ending in a comma lets rows omit that
/// last, unnamed field). The commas of a quote-free block of complete records number records ×
/// (fields − 1); a block where they do not, or with a quote (a quoted comma would make up for
/// a missing one), is read record by record.
pub(super) fn check_wide_fields(
    source: &Source,
    block: &[u8],
    (has_header, quoted): (bool, bool),
    (first_row, rows): (usize, usize),
    header: &[String],
) -> Result<()> {
    let (records, expected) = (rows + usize::from(has_header), header.len());
    if !quoted && memchr::memchr_iter(b',', block).count() == records * (expected - 1) {
        return Ok(());
    }
    check_records(source, block, (has_header, first_row), header)
}

/// A column that the header does not name may not hold a value: whose price would it be, and
/// who would read it? (A trailing comma on every line gives such a column, empty, and is
/// accepted.) The columns are a wide panel's (read as numbers) or a long panel's (read as text
/// only for this check).
pub(super) fn check_unnamed(
    source: &Source,
    plan: &super::csv::Plan,
    frame: &DataFrame,
    first_row: usize,
) -> Result<()> {
    for (number, name) in &plan.unnamed {
        let Some(cells) = frame.column(name).ok().map(cell_texts) else {
            continue;
        };
        if let Some((k, value)) =
            (cells.iter().enumerate()).find_map(|(k, v)| Some((k, v.as_ref()?)))
        {
            let left = left_cell(plan, frame, *number, k);
            let left = left.as_ref().map(|(n, c)| (n.as_str(), c.as_str()));
            return Err(unnamed_error(source, (*number, first_row + k), value, left));
        }
    }
    Ok(())
}

/// A column's cells as text, an empty or white-space cell as `None`.
pub(super) fn cell_texts(column: &Column) -> Vec<Option<String>> {
    match (column.f64(), column.str()) {
        (Ok(numbers), _) => numbers.iter().map(|v| v.map(|v| v.to_string())).collect(),
        (_, Ok(texts)) => (texts.iter())
            .map(|t| t.map(str::trim).filter(|t| !t.is_empty()).map(String::from))
            .collect(),
        _ => Vec::new(),
    }
}

/// The header's name of the column before column `number` (from 1) and its cell on row `k`
/// of `frame`, when the frame holds that column.
pub(super) fn left_cell(
    plan: &super::csv::Plan,
    frame: &DataFrame,
    number: usize,
    k: usize,
) -> Option<(String, String)> {
    let left = number.checked_sub(2)?;
    let name = plan.schema.get_at_index(left)?.0;
    let cell = cell_texts(frame.column(name).ok()?).get(k)?.clone()?;
    Some((plan.header[left].clone(), cell))
}

/// The error for a value in a column the header leaves unnamed, at (`number`, `row`).
pub(super) fn unnamed_error(
    source: &Source,
    (number, row): (usize, usize),
    value: &str,
    left: Option<(&str, &str)>,
) -> Error {
    source.row_error(
        row,
        crate::io::sanity::unnamed_value_message(number, value, left),
    )
}

/// Whether a header's name leaves its column unnamed: empty, or white space alone (found by
/// review: `close, ` escaped the check).
pub(super) fn unnamed(name: &str) -> bool {
    name.trim().is_empty()
}

/// A header's columns without a name that must stay empty, by number (from 1) and schema name:
/// all but a first column, which holds no part of a number split by a decimal comma and is
/// where dataframe libraries write their row index (`,date,price`; found by review: 0.9.0 read
/// such files).
pub(super) fn unnamed_columns(header: &[String]) -> Vec<(usize, String)> {
    let names = super::csv::schema_names(header).into_iter().enumerate();
    names
        .filter(|(i, _)| *i > 0 && unnamed(&header[*i]))
        .map(|(i, name)| (i + 1, name))
        .collect()
}
