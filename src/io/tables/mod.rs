//! Wide price tables: one file with a date column and one column per security.
//!
//! Prices often arrive as a single table exported from a data terminal — CSV, Parquet or a
//! spreadsheet workbook — rather than one file per security. This module reads such a table
//! once (CSV and Parquet through polars, `.xlsx`/`.xls`/`.ods` through calamine), keeps every
//! cell as it was found, and turns one column at a time into the same [`DataFile`] and
//! [`Series`] that a one-file-per-peer case produces, so sampling, the receipt and `verify`
//! work unchanged. Each bad cell is reported with its file, sheet, cell (or line) and value.

mod cells;
/// An ISO 8601 date, or a date-time read by its date (for files of their own, as for tables).
pub(crate) use cells::iso_date as iso_date_time;
mod delimited;
mod header;
mod workbook;

use std::path::{Path, PathBuf};

use chrono::NaiveDate;

use crate::error::{compact as show, Error, Result};
use crate::io::sanity::percent_yield;
use crate::io::series::{sha256_hex, DataFile, Series, ValueKind};

pub use cells::{column_letters, Cell, Place, PlaceKind};
pub use header::header_key;

/// How a table's messages name the two choices a reader of the table makes, in the terms of
/// whoever asked for the table (a case file's keys, a command's options): this layer knows
/// neither.
#[derive(Debug, Clone, Copy)]
pub struct ChoiceWords {
    /// How to name a workbook's sheet, after "name the one with the prices" (as in "(`sheet`
    /// in the case's source)").
    pub name_the_sheet: &'static str,
    /// Advice when the first column holds no dates, as in "`date_column` in the case's source
    /// names another".
    pub name_the_date_column: &'static str,
    /// A sheet given for a file without sheets, before its quoted name (as in "`sheet` = ").
    pub sheet_given: &'static str,
    /// Advice for that case, as in "drop `sheet`".
    pub drop_the_sheet: &'static str,
}

/// What the caller asks of a table: the sheet (optional when a workbook has one), the date
/// column's header (default: the first column), and the words its messages use for them.
#[derive(Debug, Clone, Copy)]
pub struct TableRequest<'a> {
    pub sheet: Option<&'a str>,
    pub date_column: Option<&'a str>,
    pub words: &'a ChoiceWords,
}

/// The file formats a wide table may come in, told apart by the file's extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TableFormat {
    Csv,
    Parquet,
    /// A spreadsheet workbook; the sheet is chosen by name.
    Workbook,
}

impl TableFormat {
    /// The format of `path` by its extension, or an error naming the extensions read.
    pub fn of(path: &Path) -> Result<TableFormat> {
        let extension = path
            .extension()
            .and_then(|e| e.to_str())
            .map(str::to_ascii_lowercase)
            .unwrap_or_default();
        match extension.as_str() {
            "csv" | "txt" => Ok(TableFormat::Csv),
            "parquet" | "pq" => Ok(TableFormat::Parquet),
            "xlsx" | "xlsm" | "xls" | "ods" => Ok(TableFormat::Workbook),
            _ => Err(Error::DataFile {
                file: path.to_path_buf(),
                message: format!(
                    "cannot tell the table's format from the extension `.{extension}`; price \
                     tables are .csv or .txt, .parquet or .pq, .xlsx, .xlsm, .xls or .ods"
                ),
            }),
        }
    }
}

/// What a reader found: the header and every cell below it, column by column.
#[derive(Debug, Clone)]
pub(crate) struct RawTable {
    /// The sheet read (workbooks only).
    pub sheet: Option<String>,
    pub header: Vec<String>,
    /// `columns[j][i]` is the cell of data row `i` under `header[j]`.
    pub columns: Vec<Vec<Cell>>,
    /// Where data row 0 and column 0 sit, for cell references in messages.
    pub place: Place,
    /// The workbook counts date serials from 1904-01-01 (the 1904 date system of older Mac
    /// workbooks) rather than from 1900: a date given as a plain number is read in it.
    pub date_system_1904: bool,
    /// What the reader saw but does not act on (a hidden sheet, a filter), each a sentence.
    pub notes: Vec<String>,
}

/// A wide table as read: its dates and every security column, not yet parsed as prices.
#[derive(Debug, Clone)]
pub struct PriceTable {
    /// The path as the case (or the command line) writes it.
    pub path: String,
    /// Where the file was read from.
    pub resolved: PathBuf,
    pub sha256: String,
    pub format: TableFormat,
    /// The sheet read (workbooks only).
    pub sheet: Option<String>,
    pub date_column: String,
    /// The other columns' names, in the table's order.
    pub columns: Vec<String>,
    /// One date per kept row, ascending.
    dates: Vec<NaiveDate>,
    /// The cells of each column in `columns`, one per date.
    cells: Vec<Vec<Cell>>,
    /// For each date, the data row it came from (for messages).
    rows: Vec<usize>,
    /// For each of `columns`, its position in the header (for messages).
    positions: Vec<usize>,
    place: Place,
    /// What reading saw but does not act on (a hidden sheet, a workbook's filter), each a
    /// sentence naming the sheet, for a front end to show.
    pub notes: Vec<String>,
}

impl PriceTable {
    /// Reads a wide table. `written` is the path as given; `resolved` is where it is; `request`
    /// picks the sheet and the date column.
    pub fn read(written: &str, resolved: &Path, request: TableRequest<'_>) -> Result<PriceTable> {
        let (sheet, words) = (request.sheet, request.words);
        let format = TableFormat::of(resolved)?;
        let bytes = std::fs::read(resolved).map_err(|source| Error::Io {
            path: resolved.to_path_buf(),
            action: "cannot read the price table",
            source,
        })?;
        let fail = |message: String| Error::DataFile {
            file: resolved.to_path_buf(),
            message,
        };
        if sheet.is_some() && format != TableFormat::Workbook {
            return Err(fail(format!(
                "{}\"{}\" is given, but a {} file has no sheets; {}",
                words.sheet_given,
                sheet.unwrap_or_default(),
                if format == TableFormat::Csv {
                    "CSV"
                } else {
                    "Parquet"
                },
                words.drop_the_sheet
            )));
        }
        let raw = match format {
            TableFormat::Csv => delimited::read_csv(&bytes).map_err(fail)?,
            TableFormat::Parquet => delimited::read_parquet(&bytes).map_err(fail)?,
            TableFormat::Workbook => {
                workbook::read_sheet(resolved, &bytes, sheet, words).map_err(fail)?
            }
        };
        let origin = Origin {
            path: written.to_string(),
            resolved: resolved.to_path_buf(),
            sha256: sha256_hex(&bytes),
            format,
        };
        arrange(raw, request, origin).map_err(fail)
    }

    /// The dates of the table, ascending.
    pub fn dates(&self) -> &[NaiveDate] {
        &self.dates
    }

    /// One column as a validated series, packaged as the receipt records it. Empty cells are
    /// missing prices (or yields); `role` is what the series is in the case (`index`,
    /// `peer:<name>`, …). `column` is matched as [`PriceTable::find_column`] matches it.
    pub fn series(&self, role: &str, column: &str, kind: ValueKind) -> Result<DataFile> {
        let fail = |message: String| Error::DataFile {
            file: self.resolved.clone(),
            message,
        };
        let j = self.column_index(column).map_err(fail)?;
        let (mut dates, mut values, mut places) = (Vec::new(), Vec::new(), Vec::new());
        for (i, cell) in self.cells[j].iter().enumerate() {
            let here = || self.place.cell(self.rows[i], self.positions[j]);
            // A CSV line or Parquet row names its column already.
            let at = || match self.place.names_column() {
                true => format!("{} (date {})", here(), self.dates[i]),
                false => format!("{} (column `{column}`, date {})", here(), self.dates[i]),
            };
            let Some(value) = cell
                .number(kind)
                .map_err(|m| fail(format!("{}: {m}", at())))?
            else {
                continue;
            };
            cells::check_range(value, kind).map_err(|m| fail(format!("{}: {m}", at())))?;
            if let Some(why) = (kind == ValueKind::Yield)
                .then(|| percent_yield(value))
                .flatten()
            {
                return Err(fail(format!("{}: {} {why}", at(), show(value))));
            }
            dates.push(self.dates[i]);
            values.push(value);
            places.push(here());
        }
        let (Some(&first_date), Some(&last_date)) = (dates.first(), dates.last()) else {
            return Err(fail(self.no_values(j, kind)));
        };
        Ok(DataFile {
            role: role.to_string(),
            path: self.path.clone(),
            sha256: self.sha256.clone(),
            rows: dates.len(),
            first_date,
            last_date,
            sheet: self.sheet.clone(),
            column: column.to_string(),
            series: Series { dates, values },
            places,
        })
    }

    /// `place` (one of a series' [`DataFile::places`]) with its column named, unless the place
    /// names it already (a CSV line or a Parquet row does; a sheet's cell does not).
    pub fn with_column(&self, place: &str, column: &str) -> String {
        match self.place.names_column() {
            true => place.to_string(),
            false => format!("{place} (column `{column}`)"),
        }
    }

    /// The message for column `j` with no value in any dated row, naming its cells.
    fn no_values(&self, j: usize, kind: ValueKind) -> String {
        let first = self.rows.iter().min().copied().unwrap_or(0);
        let last = self.rows.iter().max().copied().unwrap_or(0);
        format!(
            "{}column `{}` holds no {}s: its cells in {} are all empty",
            self.place.sheet_prefix(),
            self.columns[j],
            kind.noun(),
            self.place.span(self.positions[j], first, last)
        )
    }

    /// The header of the security column `name`: written exactly so, or the one header that
    /// reads the same with each run of whitespace (a wrapped cell's line break, a no-break
    /// space) as one space. The error lists the header.
    pub fn find_column(&self, name: &str) -> std::result::Result<&str, String> {
        self.column_index(name).map(|j| self.columns[j].as_str())
    }

    /// The position of `column` among the security columns, or a message listing them.
    fn column_index(&self, column: &str) -> std::result::Result<usize, String> {
        if header_key(column) == header_key(&self.date_column) {
            return Err(format!(
                "{}`{column}` is the date column, not a column of prices",
                self.place.sheet_prefix()
            ));
        }
        let found = header::find_header(&self.columns, column)
            .map_err(|m| format!("{}{m}", self.place.sheet_prefix()))?;
        found.ok_or_else(|| {
            format!(
                "{}no column named `{column}`; the header has: {}{}",
                self.place.sheet_prefix(),
                quoted_list(
                    std::iter::once(&self.date_column).chain(&self.columns),
                    self.columns.len() + 1
                ),
                crate::io::sanity::column_name_hint(
                    self.columns.iter().map(String::as_str),
                    column
                )
            )
        })
    }
}

/// Names in backticks, separated by commas.
fn quoted_list<'a>(names: impl Iterator<Item = &'a String>, count: usize) -> String {
    let mut list = Vec::with_capacity(count);
    list.extend(names.map(|n| format!("`{n}`")));
    list.join(", ")
}

/// Picks the date column, parses its dates, drops blank rows and puts the rows in ascending
/// date order (a table sorted newest first is reversed, never re-sorted otherwise).
/// Where a table came from, as [`PriceTable`] records it.
struct Origin {
    path: String,
    resolved: PathBuf,
    sha256: String,
    format: TableFormat,
}

fn arrange(
    raw: RawTable,
    request: TableRequest<'_>,
    origin: Origin,
) -> std::result::Result<PriceTable, String> {
    let date_column = request.date_column;
    // A refused header may be a title written above the table: then that is the message.
    let (date_index, others) =
        columns_of(&raw, date_column).map_err(|m| header::title_above(&raw).unwrap_or(m))?;
    let place = raw.place.clone();
    // When the first column was taken for the dates, a date error names the columns holding them.
    let hint = |message: String| {
        let hint = date_column
            .is_none()
            .then(|| header::date_column_hint(&raw, &others, request.words));
        match hint.flatten() {
            Some(hint) => format!("{message}; {hint}"),
            None => message,
        }
    };
    let date_name = raw.header[date_index].clone();
    let (mut dates, mut rows) = dated_rows(&raw, date_index, &others).map_err(&hint)?;
    if dates.is_empty() {
        return Err(hint(format!(
            "{}the date column `{date_name}` has no dates below the header",
            place.sheet_prefix()
        )));
    }
    check_order(&dates, &rows, &place, date_index).map_err(&hint)?;
    let descending = dates.len() > 1 && dates[1] < dates[0];
    let mut cells: Vec<Vec<Cell>> = others
        .iter()
        .map(|&j| rows.iter().map(|&i| raw.columns[j][i].clone()).collect())
        .collect();
    if descending {
        dates.reverse();
        rows.reverse();
        cells.iter_mut().for_each(|c| c.reverse());
    }
    Ok(PriceTable {
        path: origin.path,
        resolved: origin.resolved,
        sha256: origin.sha256,
        format: origin.format,
        sheet: raw.sheet,
        date_column: date_name,
        columns: others.iter().map(|&j| raw.header[j].clone()).collect(),
        dates,
        cells,
        rows,
        positions: others,
        place,
        notes: raw.notes,
    })
}

/// The date column's position (`date_column` matched as a security column is, or the first)
/// and the named columns beside it. Refuses an unnamed column holding data, a repeated name,
/// and a header of fewer than two names.
fn columns_of(
    raw: &RawTable,
    date_column: Option<&str>,
) -> std::result::Result<(usize, Vec<usize>), String> {
    let prefix = raw.place.sheet_prefix();
    check_header(raw)?;
    let date_index = match date_column {
        None => 0,
        Some(name) => header::find_header(&raw.header, name)
            .map_err(|m| format!("{prefix}{m}"))?
            .ok_or_else(|| {
                format!(
                    "{prefix}no date column named `{name}`; the header has: {}",
                    quoted_list(raw.header.iter(), raw.header.len())
                )
            })?,
    };
    let named = raw.header.iter().filter(|h| !h.is_empty()).count();
    if named < 2 {
        // A CSV file exported with another separator reads as one column.
        let separator = raw.header.iter().find_map(|h| {
            [';', '\t', '|']
                .into_iter()
                .find(|c| h.contains(*c))
                .map(|c| {
                    format!(" (is the file separated by {c:?}? CSV tables are read with commas)")
                })
        });
        return Err(format!(
            "{prefix}the header (the first row with anything in it) has {named} named column(s) \
             ({}); a price table needs a date column and at least one column of prices{}",
            quoted_list(raw.header.iter().filter(|h| !h.is_empty()), named),
            separator.unwrap_or_default()
        ));
    }
    // Trailing columns with neither a name nor data are a spreadsheet's used range, not data.
    let others = (0..raw.header.len())
        .filter(|&j| j != date_index && !raw.header[j].is_empty())
        .collect();
    Ok((date_index, others))
}

/// The date of every row that has one, with the row; a blank row is skipped, and a row with
/// prices but no date is an error.
fn dated_rows(
    raw: &RawTable,
    date_index: usize,
    others: &[usize],
) -> std::result::Result<(Vec<NaiveDate>, Vec<usize>), String> {
    let place = &raw.place;
    let date_name = &raw.header[date_index];
    let (mut dates, mut rows) = (Vec::new(), Vec::new());
    for (i, cell) in raw.columns[date_index].iter().enumerate() {
        if cell.is_empty() {
            if let Some(&j) = others.iter().find(|&&j| !raw.columns[j][i].is_empty()) {
                return Err(format!(
                    "{}: the date cell is empty but {} holds {}; every row with prices needs a \
                     date",
                    place.cell(i, date_index),
                    place.cell(i, j),
                    raw.columns[j][i].shown()
                ));
            }
            continue;
        }
        let date = cell.date_in(raw.date_system_1904).map_err(|m| {
            let here = place.cell(i, date_index);
            // A CSV line or Parquet row names its column already.
            match place.names_column() {
                true => format!("{here} (the date column): {m}"),
                false => format!("{here} (date column `{date_name}`): {m}"),
            }
        })?;
        dates.push(date);
        rows.push(i);
    }
    Ok((dates, rows))
}

/// Every column with data has a name, and no name repeats.
fn check_header(raw: &RawTable) -> std::result::Result<(), String> {
    let place = &raw.place;
    for (j, name) in raw.header.iter().enumerate() {
        if name.is_empty() {
            if let Some(i) = raw.columns[j].iter().position(|c| !c.is_empty()) {
                // A CSV's decimal comma splits a price in two (`42,0000`): said when the cells
                // read so (found by review), in a CSV file only; a workbook's or Parquet file's
                // cells are never split at a comma (found by review: a workbook was told so).
                let csv = matches!(place.kind, cells::PlaceKind::Csv);
                let plain = |c: &Cell| match c {
                    Cell::Text(text) => Some(text.trim().to_string()),
                    Cell::Number(x) if x.fract() == 0.0 && x.abs() < 1e15 => Some(format!("{x}")),
                    _ => None,
                };
                let comma = (j.checked_sub(1).filter(|_| csv))
                    .and_then(|l| {
                        let (left, here) = (plain(&raw.columns[l][i])?, plain(&raw.columns[j][i])?);
                        crate::io::sanity::decimal_comma_hint(&raw.header[l], &left, &here)
                    })
                    .unwrap_or_default();
                return Err(format!(
                    "{} has no header, but {} below it holds {}{comma}; name the column, or \
                     leave it empty",
                    place.header_cell(j),
                    place.cell(i, j),
                    raw.columns[j][i].shown()
                ));
            }
        }
        if let Some(k) = raw.header[..j]
            .iter()
            .position(|h| h == name && !h.is_empty())
        {
            return Err(format!(
                "{} repeats the header `{name}` of {}; each column needs its own name",
                place.header_cell(j),
                place.header_cell(k)
            ));
        }
    }
    Ok(())
}

/// The dates run strictly one way (ascending, or descending as many exports are), with no
/// repeat; the first break is reported with both of its rows. The way is the one most
/// neighbouring rows take (found by review: it was taken from the first two rows, so a latest
/// row pasted on top of an ascending table blamed the correct row below it); a break between
/// the first two rows names the first row as out of place.
fn check_order(
    dates: &[NaiveDate],
    rows: &[usize],
    place: &Place,
    date_index: usize,
) -> std::result::Result<(), String> {
    // Equal neighbours (a repeated date) take no side (found by review: they counted as
    // rising, so a short descending table with a repeat was called ascending).
    let falling = dates.windows(2).filter(|w| w[1] < w[0]).count();
    let rising = dates.windows(2).filter(|w| w[1] > w[0]).count();
    let descending = falling > rising;
    let way = if descending {
        "descending"
    } else {
        "ascending"
    };
    for k in 1..dates.len() {
        let (before, here) = (dates[k - 1], dates[k]);
        let this = place.cell(rows[k], date_index);
        let that = place.cell(rows[k - 1], date_index);
        if here == before {
            return Err(format!(
                "{this}: duplicate date {here} (also in {that}); each date may appear once"
            ));
        }
        if (here < before) != descending && k == 1 && dates.len() > 2 {
            return Err(format!(
                "{that}: date {before} is out of the order of the rows below it, which run \
                 {way} from {here} ({this}); rows must run in ascending (or descending) date \
                 order throughout — the table is never re-sorted silently"
            ));
        }
        if (here < before) != descending {
            return Err(format!(
                "{this}: date {here} breaks the order of the dates above it ({before} in {that}); \
                 rows must run in ascending (or descending) date order throughout — the table is \
                 never re-sorted silently"
            ));
        }
    }
    Ok(())
}
