//! Parquet panels, read a few row groups at a time through polars' Parquet reader.
//!
//! Only the columns the layout needs are read, in slices of whole row groups, so memory holds
//! one slice beside the prices kept. Dates may be stored as dates, date-times at midnight or ISO
//! text; ids as text or integers; prices as any numeric type. Messages name the row counted from
//! 1, as a Parquet viewer shows it.

use std::fs::File;
use std::io::Read;
use std::sync::mpsc::sync_channel;

use polars::prelude::*;
use sha2::{Digest, Sha256};

use super::cells::{block_dates, push_long, push_wide, DateCells};
use super::{
    layout_hint, wide_ids, Duplicate, PanelColumns, PanelLayout, Rows, SecurityHook, Source,
};
use crate::error::{Error, Result};
use crate::io::guard;
use crate::io::parquet_types::unreadable_column;

/// Rows per slice: row groups are merged up to this size (one group may be larger).
const SLICE_ROWS: usize = 1 << 18;

/// Reads a Parquet panel into rows; returns them with the SHA-256 of the file's bytes. Three
/// stages overlap: one thread hashes the file, polars decodes a slice on its own threads, and
/// another thread moves the previous slice's cells into the rows (and hands complete securities
/// to `hook`, long layout).
pub(super) fn read(
    source: &Source,
    columns: &PanelColumns,
    hook: Option<SecurityHook<'_>>,
) -> Result<(Rows, String)> {
    let mut rows = Rows::default();
    rows.runs.watching = hook.is_some() && columns.layout == PanelLayout::Long;
    let names = column_names(source, columns)?;
    let file = open(source)?;
    let total = decode(source, || ParquetReader::new(file).num_rows()).unwrap_or(0);
    if columns.layout == PanelLayout::Long {
        // Room for every row at once, so the columns never grow by copying.
        rows.reserve(total);
    }
    let name = source
        .file
        .file_name()
        .unwrap_or_default()
        .to_string_lossy();
    let mut progress = crate::progress::Progress::of_rows(&format!("reading {name}"), total as u64);
    // A column without a name is no security: the first is a row index, as in a CSV panel;
    // any other must hold nothing (found by review: its prices were read as a security whose
    // id was empty).
    let unnamed: Vec<(usize, String)> = match columns.layout {
        PanelLayout::Long => Vec::new(),
        PanelLayout::Wide => (names.iter().enumerate())
            .filter(|(i, n)| *i > 0 && super::checks::unnamed(n))
            .map(|(i, n)| (i + 1, n.clone()))
            .collect(),
    };
    let wide: Vec<(String, u32)> = match columns.layout {
        PanelLayout::Long => Vec::new(),
        PanelLayout::Wide => {
            let named = names.iter().enumerate();
            let named = named.filter(|(_, n)| {
                **n != columns.date_column && !is_row_index(n) && !super::checks::unnamed(n)
            });
            wide_ids(named, &mut rows.dictionary).map_err(|message| source.file_error(message))?
        }
    };
    std::thread::scope(|scope| {
        let hasher = source.spawn(scope, || hash_file(source))?;
        let (frames, frames_in) = sync_channel::<(DataFrame, usize)>(1);
        let (wide, unnamed) = (&wide, &unnamed);
        let pusher = source.spawn(scope, move || {
            for (frame, first_row) in frames_in {
                check_unnamed(source, &frame, unnamed, first_row)?;
                push_frame(&mut rows, &frame, wide, first_row, source, columns)?;
                rows.hand_out(hook);
            }
            Ok(rows)
        })?;
        // A closed channel means the pusher stopped at a bad row; its error is returned below.
        let decoded = for_each_slice(source, &names, |frame, first_row| {
            if let Some(hook) = hook {
                progress.relabel(super::reading_label(&name, hook.finished));
            }
            progress.advance(frame.height() as u64)?;
            frames
                .send((frame, first_row))
                .map_err(|_| source.file_error("stopped".into()))
        });
        drop(frames);
        let pushed: Result<Rows> = pusher.join().expect("the row pusher does not panic");
        let sha256 = hasher.join().expect("the hasher does not panic");
        let rows = match (decoded, pushed) {
            // The pusher's error concerns rows before any slice the decoder refused.
            (_, Err(e)) | (Err(e), _) => return Err(e),
            (Ok(()), Ok(rows)) => rows,
        };
        Ok((rows, sha256?))
    })
}

/// Whether a Parquet column is a dataframe library's row index written beside the data
/// (`__index_level_0__`, the name such a library gives an index without a name; from memory),
/// not a security: a wide panel reads it as no security, as a CSV panel reads an unnamed first
/// column (found by review: its row numbers, 0 first, were refused as prices).
fn is_row_index(name: &str) -> bool {
    let level = name
        .strip_prefix("__index_level_")
        .and_then(|r| r.strip_suffix("__"));
    level.is_some_and(|d| !d.is_empty() && d.bytes().all(|b| b.is_ascii_digit()))
}

/// A value in a wide panel's column without a name (`unnamed`: each column's number from 1
/// and name) is an error naming its row and column: it would be read by no one.
fn check_unnamed(
    source: &Source,
    frame: &DataFrame,
    unnamed: &[(usize, String)],
    first_row: usize,
) -> Result<()> {
    for (number, name) in unnamed {
        let Ok(column) = frame.column(name) else {
            continue;
        };
        // Doubles and text as a CSV cell would show them; any other type as polars writes it.
        let cells = match column.dtype() {
            DataType::Float64 | DataType::String => super::checks::cell_texts(column),
            _ => super::checks::cell_texts(
                &(column.cast(&DataType::String))
                    .map_err(|e| source.file_error(format!("column {number}: {e}")))?,
            ),
        };
        if let Some((k, value)) =
            (cells.iter().enumerate()).find_map(|(k, v)| Some((k, v.as_ref()?)))
        {
            return Err(source.row_error(
                first_row + k,
                format!(
                    "column {number} has no name but holds \"{value}\": a value in a column \
                     without a name is read by no one; name the column after its security, or \
                     drop it"
                ),
            ));
        }
    }
    Ok(())
}

/// Moves one decoded slice into `rows`.
fn push_frame(
    rows: &mut Rows,
    frame: &DataFrame,
    wide: &[(String, u32)],
    first_row: usize,
    source: &Source,
    columns: &PanelColumns,
) -> Result<()> {
    let dates = date_column(source, frame, &columns.date_column, first_row)?;
    let dates = cells(&dates);
    match columns.layout {
        PanelLayout::Long => {
            let security = typed(
                source,
                frame,
                &columns.security_column,
                &DataType::String,
                (columns, first_row),
            )?;
            let price = typed(
                source,
                frame,
                &columns.price_column,
                &DataType::Float64,
                (columns, first_row),
            )?;
            push_long(
                rows,
                &dates,
                security.str().expect("cast to text"),
                price.f64().expect("cast to doubles"),
                (first_row, &[]),
                source,
                columns,
            )
        }
        PanelLayout::Wide => {
            let dates = block_dates(&dates, first_row, source, &columns.date_column)?;
            let prices = wide
                .iter()
                .map(|(name, _)| {
                    let at = (columns, first_row);
                    typed(source, frame, name, &DataType::Float64, at)
                })
                .collect::<Result<Vec<_>>>()?;
            let securities: Vec<_> = wide
                .iter()
                .zip(&prices)
                .map(|((name, id), c)| (*id, c.f64().expect("cast"), name.as_str()))
                .collect();
            push_wide(rows, &dates, &securities, (first_row, &[]), source)
        }
    }
}

/// The columns the layout reads, after checking that they exist.
fn column_names(source: &Source, columns: &PanelColumns) -> Result<Vec<String>> {
    let file = open(source)?;
    let schema = decode(source, || ParquetReader::new(file).schema())?;
    let header: Vec<String> = schema.iter_names().map(|n| n.to_string()).collect();
    let other = match columns.layout {
        PanelLayout::Long => PanelLayout::Wide,
        PanelLayout::Wide => PanelLayout::Long,
    };
    let require = |name: &str, key: &str| {
        if header.iter().any(|n| n == name) {
            return Ok(name.to_string());
        }
        let hint =
            layout_hint(&header, columns, other).map_or_else(String::new, |h| format!("; {h}"));
        Err(source.file_error(format!(
            "no column named `{name}` ({key}); the file has {} columns: {}{hint}",
            header.len(),
            header[..header.len().min(8)].join(", ")
        )))
    };
    let date = require(&columns.date_column, "panel.date_column")?;
    let names = match columns.layout {
        PanelLayout::Long => vec![
            date,
            require(&columns.security_column, "panel.security_column")?,
            require(&columns.price_column, "panel.price_column")?,
        ],
        PanelLayout::Wide => {
            if let Some(hint) = layout_hint(&header, columns, PanelLayout::Long) {
                return Err(source.file_error(format!("read as a wide panel, but {hint}")));
            }
            if header.len() < 2 {
                return Err(source.file_error(format!(
                    "has only the date column `{date}`: a wide panel needs one column per security"
                )));
            }
            header
        }
    };
    match unreadable_column(&schema, names.iter().map(String::as_str)) {
        Some(message) => Err(source.file_error(message)),
        None => Ok(names),
    }
}

/// Calls `each(frame, first_row)` on consecutive slices of whole row groups.
fn for_each_slice(
    source: &Source,
    names: &[String],
    mut each: impl FnMut(DataFrame, usize) -> Result<()>,
) -> Result<()> {
    let mut reader = ParquetReader::new(open(source)?);
    let metadata = decode(source, || reader.get_metadata().cloned())?;
    let mut start = 0;
    let mut length = 0;
    let groups: Vec<usize> = metadata.row_groups.iter().map(|g| g.num_rows()).collect();
    for (i, &group) in groups.iter().enumerate() {
        length += group;
        let last = i + 1 == groups.len();
        if length < SLICE_ROWS && !last {
            continue;
        }
        let mut slice = ParquetReader::new(open(source)?)
            .with_columns(Some(names.to_vec()))
            .with_slice(Some((start, length)));
        slice.set_metadata(metadata.clone());
        let frame = decode(source, || slice.finish())?;
        crate::progress::check_stop()?;
        each(frame, start)?;
        start += length;
        length = 0;
    }
    Ok(())
}

/// A call into polars' Parquet reader; its error, or a panic on corrupt data
/// ([`guard::decoding`]), becomes a message naming the file.
fn decode<T>(source: &Source, call: impl FnOnce() -> PolarsResult<T>) -> Result<T> {
    let unreadable =
        |reason: String| source.file_error(format!("not a readable Parquet file: {reason}"));
    match guard::decoding(call) {
        Ok(decoded) => decoded.map_err(|e| unreadable(e.to_string())),
        Err(reason) => Err(unreadable(reason)),
    }
}

fn open(source: &Source) -> Result<File> {
    File::open(&source.file).map_err(|e| Error::Io {
        path: source.file.clone(),
        action: "cannot open the panel file",
        source: e,
    })
}

/// SHA-256 of the file's bytes, read in blocks.
fn hash_file(source: &Source) -> Result<String> {
    let mut file = open(source)?;
    let mut hasher = Sha256::new();
    let mut buffer = vec![0_u8; 1 << 20];
    loop {
        let n = file.read(&mut buffer).map_err(|e| Error::Io {
            path: source.file.clone(),
            action: "cannot read the panel file",
            source: e,
        })?;
        if n == 0 {
            break;
        }
        hasher.update(&buffer[..n]);
    }
    Ok(super::hex(&hasher.finalize()))
}

/// The date column as days (a date or date-time column) or text (a string column).
fn date_column(source: &Source, frame: &DataFrame, name: &str, first_row: usize) -> Result<Column> {
    let column = frame
        .column(name)
        .map_err(|e| source.file_error(e.to_string()))?;
    match column.dtype() {
        DataType::Date | DataType::String => Ok(column.clone()),
        // Dates written as categories (text stored by code): read as their text (found by
        // review: refused).
        d if d.is_categorical() || d.is_enum() => column
            .cast(&DataType::String)
            .map_err(|e| source.file_error(format!("column `{name}`: {e}"))),
        DataType::Datetime(_, _) => {
            let dates = crate::io::parquet_types::calendar_dates(column)
                .map_err(|e| source.file_error(format!("column `{name}`: {e}")))?;
            if let Some((k, stored)) = (dates.into_iter().enumerate())
                .find_map(|(k, d)| d.and_then(Result::err).map(|stored| (k, stored)))
            {
                return Err(source.row_error(
                    first_row + k,
                    format!(
                        "`{name}` {}",
                        crate::io::parquet_types::beyond_calendar(&stored)
                    ),
                ));
            }
            column
                .cast(&DataType::Date)
                .map_err(|e| source.file_error(format!("column `{name}`: {e}")))
        }
        other => Err(source.file_error(format!(
            "column `{name}` holds {}, not dates: store it as dates or as text YYYY-MM-DD",
            crate::io::parquet_types::type_in_words(other)
        ))),
    }
}

fn cells(column: &Column) -> DateCells<'_> {
    match column.dtype() {
        DataType::String => DateCells::Text(column.str().expect("checked")),
        _ => DateCells::Days(column.date().expect("checked").physical()),
    }
}

/// Whether a Parquet column can be read as text labels: text, integers (written as text), or
/// categories (the categorical and enum columns data-frame libraries write: their labels).
pub(super) fn is_text_like(dtype: &DataType) -> bool {
    dtype.is_string() || dtype.is_integer() || dtype.is_categorical() || dtype.is_enum()
}

/// A column cast to `dtype`: ids to text, prices to doubles; anything else is an error.
fn typed(
    source: &Source,
    frame: &DataFrame,
    name: &str,
    dtype: &DataType,
    (columns, first_row): (&PanelColumns, usize),
) -> Result<Column> {
    let layout = columns.layout;
    let column = frame
        .column(name)
        .map_err(|e| source.file_error(e.to_string()))?;
    let fits = match dtype {
        DataType::String => is_text_like(column.dtype()),
        _ => column.dtype().is_primitive_numeric(),
    };
    // A column of nothing but empty cells (typed as null, or as text by a writer that saw no
    // value: nulls or empty strings) is all gaps, as the same column in CSV is (found by
    // review: it was refused as "numbers stored as text").
    let blank = |c: &Column| {
        c.null_count() == c.len()
            || c.str()
                .is_ok_and(|cells| cells.iter().flatten().all(|t| t.trim().is_empty()))
    };
    if !fits && blank(column) {
        return Ok(Column::full_null(name.into(), column.len(), dtype));
    }
    // Prices stored as text that all read as numbers (an empty cell a gap): a price column a
    // writer typed as text, as polars infers one whose first rows are empty (a late listing),
    // read as the same column in CSV is (found by review: it was refused, and a CSV panel
    // parses the same text).
    if !fits && dtype == &DataType::Float64 {
        if let Some(prices) = super::numbers_in_text(column) {
            return Ok(prices.with_name(name.into()).into_column());
        }
        if let Some((k, cell)) = stray_text(column) {
            let hint = super::cells::number_hint(cell.trim(), name, columns);
            return Err(source.row_error(
                first_row + k,
                format!("`{name}` = \"{cell}\" is not a number{hint}"),
            ));
        }
    }
    if !fits {
        return Err(source.file_error(not_of_type(name, column.dtype(), dtype, layout)));
    }
    if dtype == &DataType::Float64 && column.dtype() == &DataType::Float32 {
        // Prices stored as 32-bit floats, read as the decimals written (as attributes are).
        let prices: Float64Chunked = (column.f32().expect("a 32-bit float column").iter())
            .map(|v| v.map(crate::io::parquet_types::f32_as_written))
            .collect();
        return Ok(prices.with_name(name.into()).into_column());
    }
    column
        .cast(dtype)
        .map_err(|e| source.file_error(format!("column `{name}`: {e}")))
}

/// The refusal of column `name`, which holds `held` where ids (`wanted` text) or prices are
/// read, with what to store instead.
fn not_of_type(name: &str, held: &DataType, wanted: &DataType, layout: PanelLayout) -> String {
    let (what, hint) = match (wanted, layout) {
        (DataType::String, _) => (
            "security ids",
            ": store the ids as text (or integers) when writing the Parquet file",
        ),
        (_, PanelLayout::Wide) if held.is_string() => (
            "prices",
            " (a wide panel holds only prices beside the date column; if this file has one row \
             per date and security, set panel.layout = \"long\")",
        ),
        (_, PanelLayout::Long) if held.is_string() => (
            "prices",
            " (a Parquet panel stores its prices as numbers, not as text)",
        ),
        (_, PanelLayout::Wide) => (
            "prices",
            ": a wide panel holds only the date column and one column of prices per security; \
             drop this column when writing the Parquet file",
        ),
        (_, PanelLayout::Long) => (
            "prices",
            ": store the prices as numbers when writing the Parquet file",
        ),
    };
    let held = crate::io::parquet_types::type_in_words(held);
    format!("column `{name}` holds {held}, not {what}{hint}")
}

/// In a text column of prices, the first cell that is not a number (its position and text),
/// which the message names with the advice a CSV panel's cell gets (a placeholder, a formatted
/// number, or in a wide panel a column of another kind: the layout); `None` for another type.
fn stray_text(column: &Column) -> Option<(usize, &str)> {
    let cells = column.str().ok()?;
    let number = |t: &str| t.trim().parse::<f64>().is_ok();
    (cells.iter().enumerate()).find_map(|(k, c)| {
        c.filter(|t| !t.trim().is_empty() && !number(t))
            .map(|t| (k, t))
    })
}

/// The error for a repeated (date, security): a second pass finds the rows that hold it.
pub(super) fn duplicate_error(
    source: &Source,
    columns: &PanelColumns,
    duplicate: &Duplicate,
) -> Error {
    let mut found = Vec::new();
    let names: Vec<String> = match columns.layout {
        PanelLayout::Long => vec![columns.date_column.clone(), columns.security_column.clone()],
        PanelLayout::Wide => vec![columns.date_column.clone()],
    };
    let mut written = Vec::new();
    let scan = for_each_slice(source, &names, |frame, first_row| {
        let frame = &frame;
        // The dates as the file holds them (a date-time with its time), for the message.
        let raw = frame
            .column(&columns.date_column)
            .map_err(|e| source.file_error(e.to_string()))?;
        let dates = date_column(source, frame, &columns.date_column, first_row)?;
        let dates = block_dates(&cells(&dates), first_row, source, &columns.date_column)?;
        let securities = match columns.layout {
            PanelLayout::Long => Some(typed(
                source,
                frame,
                &columns.security_column,
                &DataType::String,
                (columns, first_row),
            )?),
            PanelLayout::Wide => None,
        };
        for (k, date) in dates.iter().enumerate() {
            let same_security = securities.as_ref().is_none_or(|s| {
                s.str().expect("cast").get(k).map(str::trim) == Some(duplicate.security.as_str())
            });
            if *date == duplicate.date && same_security {
                found.push((first_row + k + 1).to_string());
                let value = raw.get(k).map(|v| v.str_value().to_string());
                written.push(value.unwrap_or_default());
            }
        }
        Ok(())
    });
    if let Err(e) = scan {
        return e;
    }
    let rows = found.join(" and ");
    let written: Vec<&str> = written.iter().map(|w| w.trim()).collect();
    let at = (rows.as_str(), "rows");
    source.file_error(super::duplicate_message(
        columns.layout,
        duplicate,
        &written,
        at,
    ))
}
