//! A CSV block polars refused, read again as text: its prices trimmed of white space when that
//! is their only flaw ([`trimmed_prices`]), or the cell and line to name ([`diagnose`]). Kept
//! apart from [`super::csv`], whose blocks come here only on this rare path.

use std::io::Cursor;
use std::sync::Arc;

use polars::prelude::*;

use super::cells::WrittenPrice;
use super::checks::unnamed_error;
use super::csv::{schema_names, Plan};
use super::{PanelColumns, PanelLayout, Source};
use crate::error::Error;
use crate::io::sanity::first_bad_record;

/// The price columns: a long panel's one, or every security column of a wide one.
fn price_columns<'a>(plan: &'a Plan, columns: &'a PanelColumns) -> Vec<&'a str> {
    match columns.layout {
        PanelLayout::Long => vec![columns.price_column.as_str()],
        PanelLayout::Wide => plan.wide.iter().map(|(n, _)| n.as_str()).collect(),
    }
}

/// The block with every column as text (for what polars refused as a number).
fn read_as_text(block: &[u8], plan: &Plan, has_header: bool) -> PolarsResult<DataFrame> {
    let text_schema: Schema = schema_names(&plan.header)
        .iter()
        .map(|name| Field::new(name.as_str().into(), DataType::String))
        .collect();
    CsvReadOptions::default()
        .with_has_header(has_header)
        .with_schema(Some(Arc::new(text_schema)))
        .into_reader_with_file_handle(Cursor::new(block))
        .finish()
}

/// A block polars refused, read again when its only flaw is white space around prices
/// (`89.0677 ` or a tab before a price; polars reads a leading space but not a trailing one):
/// every price cell is read without its surrounding white space, as dates, ids, attribute
/// figures and a price file's cells are (found by review: a trailing space was refused and a
/// leading one read). `None` when anything else is wrong (a cell that is no number once
/// trimmed, a record of the wrong length, text that is not UTF-8), which [`diagnose`] names.
pub(super) fn trimmed_prices(block: &[u8], plan: &Plan, has_header: bool) -> Option<DataFrame> {
    if crate::io::encoding::first_non_utf8(block).is_some()
        || first_bad_record(block, plan.header.len(), None).is_some()
    {
        return None;
    }
    let mut frame = read_as_text(block, plan, has_header).ok()?;
    // Every column the plan reads as numbers: the prices, and a wide panel's columns the header
    // leaves unnamed (which must stay empty, `check_unnamed`).
    let numeric: Vec<String> = (plan.schema.iter())
        .filter(|(_, dtype)| dtype.is_float())
        .map(|(name, _)| name.to_string())
        .collect();
    for name in &numeric {
        let name = name.as_str();
        let prices = super::numbers_in_text(frame.column(name).ok()?)?;
        frame
            .with_column(prices.with_name(name.into()).into_column())
            .ok()?;
    }
    Some(frame)
}

/// The price cells of a parsed block that break the price rule, each column's first, as the
/// file writes them: the block is read again as text only when there is one (rare: the run then
/// stops at the first), so that the message quotes `1e400` rather than the infinity polars read.
pub(super) fn written_prices(
    block: &[u8],
    has_header: bool,
    plan: &Plan,
    columns: &PanelColumns,
    frame: &DataFrame,
) -> Vec<WrittenPrice> {
    let first_bad = |name: &str| -> Option<usize> {
        let prices = frame.column(name).ok()?.f64().ok()?;
        let mut offset = 0;
        for chunk in prices.downcast_iter() {
            let values = chunk.values().as_slice();
            let found = match chunk.validity() {
                None => values.iter().position(|&p| super::bad_price(p)),
                Some(valid) => (values.iter().zip(valid.iter()))
                    .position(|(&p, valid)| valid && super::bad_price(p)),
            };
            if let Some(k) = found {
                return Some(offset + k);
            }
            offset += values.len();
        }
        None
    };
    let bad: Vec<(&str, usize)> = (price_columns(plan, columns).into_iter())
        .filter_map(|name| Some((name, first_bad(name)?)))
        .collect();
    if bad.is_empty() {
        return Vec::new();
    }
    let Ok(text) = read_as_text(block, plan, has_header) else {
        return Vec::new();
    };
    (bad.into_iter())
        .filter_map(|(name, row)| {
            let cell = text.column(name).ok()?.str().ok()?.get(row)?;
            Some(WrittenPrice {
                column: name.to_string(),
                row,
                text: cell.trim().to_string(),
            })
        })
        .collect()
}

/// Names the cell polars could not parse: the block is read again as text and the first price
/// that is not a number is reported with its line; failing that, polars' own message.
pub(super) fn diagnose(
    source: &Source,
    block: &[u8],
    has_header: bool,
    first_row: usize,
    plan: &Plan,
    columns: &PanelColumns,
    error: &PolarsError,
) -> Error {
    if let Some((line, message)) = crate::io::encoding::first_non_utf8(block) {
        let row = (first_row + line).saturating_sub(usize::from(has_header));
        return source.row_error(row, message);
    }
    let expected = plan.header.len();
    if let Some((record, message)) = first_bad_record(block, expected, None) {
        let row = (first_row + record).saturating_sub(usize::from(has_header));
        return source.row_error(row, message);
    }
    if let Ok(text) = read_as_text(block, plan, has_header) {
        for (number, name) in &plan.unnamed {
            let Some(cells) = text.column(name).ok().map(super::checks::cell_texts) else {
                continue;
            };
            let first = (cells.iter().enumerate()).find_map(|(k, c)| Some((k, c.as_ref()?)));
            if let Some((k, cell)) = first {
                let left = super::checks::left_cell(plan, &text, *number, k);
                let left = left.as_ref().map(|(n, c)| (n.as_str(), c.as_str()));
                return unnamed_error(source, (*number, first_row + k), cell, left);
            }
        }
        for name in price_columns(plan, columns) {
            let Ok(cells) = text.column(name).and_then(|c| c.str().cloned()) else {
                continue;
            };
            for (k, cell) in cells.iter().enumerate() {
                let Some(cell) = cell else { continue };
                let trimmed = cell.trim();
                if !trimmed.is_empty() && trimmed.parse::<f64>().is_err() {
                    let hint = super::cells::number_hint(trimmed, name, columns);
                    return source.row_error(
                        first_row + k,
                        format!("`{name}` = \"{cell}\" is not a number{hint}"),
                    );
                }
            }
        }
    }
    source.file_error(format!(
        "cannot be read as CSV in the rows from {}: {}",
        source.place(first_row),
        crate::error::reader_message(error)
    ))
}
