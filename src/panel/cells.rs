//! From one block of parsed cells (a polars frame of a CSV block or a Parquet row group) to
//! checked rows. Shared by both formats so a bad date, an empty id or a non-positive price gets
//! the same message whichever file it came from; only the place (line or row) differs.

use chrono::NaiveDate;
use polars::prelude::*;

use super::{check_label, check_price, parse_iso_date, PanelColumns, PanelLayout, Rows, Source};
use crate::error::Result;
use crate::io::series::{date_hint, GENERIC_DATE_HINT};

/// A block's date cells: ISO text (CSV, or a Parquet string column) or days since 1970-01-01
/// (a Parquet date column).
pub(crate) enum DateCells<'a> {
    Text(&'a StringChunked),
    Days(&'a Int32Chunked),
}

/// What to write instead of a price cell that is not a number, after "is not a number": a
/// case's price-file advice in a long panel; in a wide one, a spreadsheet error or dash is a
/// day without a price (left empty), a formatted number gets the same advice, and a word
/// suggests the file is long.
pub(crate) fn number_hint(cell: &str, column: &str, columns: &PanelColumns) -> String {
    // The header again in the middle of the file (two exports pasted together; found by review:
    // named as a price that is not a number, with a wide file's advice to read it as long).
    if cell == column {
        return ": the header row is repeated here; remove the repeated header".into();
    }
    let words = ["n/a", "na", "n.a.", "null", "none", "missing"];
    let placeholder = cell.starts_with('#')
        || cell.trim_matches(['-', '—', '–']).is_empty()
        || words.contains(&&*cell.to_lowercase());
    // A number as a spreadsheet formats it: a separator, a % or currency sign.
    let formatted = cell.contains([',', '%']) || cell.starts_with(['$', '€', '£', '¥']);
    match columns.layout {
        PanelLayout::Wide if placeholder => ": a spreadsheet error or a placeholder; leave the \
            cell empty for a day without a price (it is skipped, never filled)"
            .to_string(),
        PanelLayout::Wide if !formatted => format!(
            " (a wide panel holds only prices beside `{}`; if this file has one row per date and \
             security, set panel.layout = \"long\")",
            columns.date_column
        ),
        _ => format!(
            ": {}",
            crate::io::series::number_problem(
                cell,
                crate::io::sanity::ValueKind::Price.missing_advice()
            )
        ),
    }
}

/// Parses every date of a block; the first bad one is an error naming its row.
pub(crate) fn block_dates(
    cells: &DateCells<'_>,
    first_row: usize,
    source: &Source,
    column: &str,
) -> Result<Vec<NaiveDate>> {
    let mut out = Vec::with_capacity(match cells {
        DateCells::Text(c) => c.len(),
        DateCells::Days(c) => c.len(),
    });
    let bad = |k: usize, value: Option<String>| {
        source.row_error(
            first_row + k,
            match value {
                None => format!(
                    "`{column}` is empty: every row needs a date ({})",
                    date_hint("", column)
                ),
                Some(v) => match date_hint(&v, column) {
                    GENERIC_DATE_HINT => {
                        format!("`{column}` = \"{v}\" is not an ISO 8601 date (YYYY-MM-DD)")
                    }
                    hint => {
                        format!("`{column}` = \"{v}\" is not an ISO 8601 date (YYYY-MM-DD): {hint}")
                    }
                },
            },
        )
    };
    match cells {
        DateCells::Text(text) => {
            // Files sorted by date repeat each date for every security: parse each once.
            let mut last: Option<(&str, NaiveDate)> = None;
            for (k, cell) in text.iter().enumerate() {
                let cell = cell.ok_or_else(|| bad(k, None))?;
                let date = match last {
                    Some((previous, date)) if previous == cell => date,
                    _ => parse_iso_date(cell).ok_or_else(|| bad(k, Some(cell.to_string())))?,
                };
                last = Some((cell, date));
                out.push(date);
            }
        }
        DateCells::Days(days) => {
            for (k, cell) in days.iter().enumerate() {
                let day = cell.ok_or_else(|| bad(k, None))?;
                out.push(NaiveDate::from_epoch_days(day).ok_or_else(|| {
                    source.row_error(
                        first_row + k,
                        format!(
                            "`{column}` {}",
                            crate::io::parquet_types::beyond_calendar(&format!(
                                "{day} days from 1970-01-01"
                            ))
                        ),
                    )
                })?);
            }
        }
    }
    Ok(out)
}

/// A price cell that breaks the price rule, as a CSV file writes it: polars reads `1e400` as
/// infinity and `1e-400` as zero, which a message must not quote in their place (found by
/// review). A Parquet file's doubles have no text; their messages quote the double.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct WrittenPrice {
    /// The price column (a wide panel's security column).
    pub column: String,
    /// The row within its block.
    pub row: usize,
    pub text: String,
}

/// The first row of a block in its file, with the bad price cells of the block as written.
pub(crate) type BlockStart<'a> = (usize, &'a [WrittenPrice]);

/// How `column`'s price in row `k` of a block is written, when the block's text was kept for it.
fn written<'a>(cells: &'a [WrittenPrice], column: &str, k: usize) -> Option<&'a str> {
    (cells.iter())
        .find(|w| w.row == k && w.column == column)
        .map(|w| w.text.as_str())
}

/// Adds a long block's rows: every row needs a date, a security id and a positive price.
pub(crate) fn push_long(
    rows: &mut Rows,
    dates: &DateCells<'_>,
    securities: &StringChunked,
    prices: &Float64Chunked,
    start: BlockStart<'_>,
    source: &Source,
    columns: &PanelColumns,
) -> Result<()> {
    let n = securities.len();
    let before = rows.prices.len();
    rows.reserve(n);
    // The fast path reads cells without nulls and stops at the first bad value; the checked
    // path then reads the block again to name it (nulls are errors too, named there).
    let nulls = securities.null_count()
        + prices.null_count()
        + match dates {
            DateCells::Text(c) => c.null_count(),
            DateCells::Days(c) => c.null_count(),
        };
    if nulls == 0 {
        if push_long_fast(rows, dates, securities, prices) {
            return Ok(());
        }
        rows.ids.truncate(before);
        rows.dates.truncate(before);
        rows.prices.truncate(before);
    }
    // Rows pushed twice could end a run twice: no more hand-outs.
    rows.runs.stop();
    push_long_checked(rows, dates, securities, prices, start, source, columns)
}

/// Pushes a block's rows; `false` at the first bad date, bad price or id that is empty, padded
/// with spaces or holds a control character (the checked path then names it, or trims the id),
/// or when the columns' chunks do not line up.
fn push_long_fast(
    rows: &mut Rows,
    dates: &DateCells<'_>,
    securities: &StringChunked,
    prices: &Float64Chunked,
) -> bool {
    let pairs = securities.downcast_iter().zip(prices.downcast_iter());
    let mut pushed = 0;
    match dates {
        DateCells::Text(text) => {
            for (cells, (ids, values)) in text.downcast_iter().zip(pairs) {
                let views = cells.views();
                let at = |rows: &mut Rows, i: usize| {
                    let view = views[i];
                    match view.length <= INLINE {
                        true => rows
                            .date_cache
                            .date_of_view(view.as_u128(), || cells.value(i)),
                        false => parse_iso_date(cells.value(i)),
                    }
                };
                if cells.len() != ids.len() || !push_chunk(rows, at, ids, values.values()) {
                    return false;
                }
                pushed += ids.len();
            }
        }
        DateCells::Days(days) => {
            for (cells, (ids, values)) in days.downcast_iter().zip(pairs) {
                let at = |rows: &mut Rows, i: usize| rows.date_cache.date_of_days(cells.value(i));
                if cells.len() != ids.len() || !push_chunk(rows, at, ids, values.values()) {
                    return false;
                }
                pushed += ids.len();
            }
        }
    }
    pushed == securities.len()
}

/// One chunk of [`push_long_fast`]; `date_at(rows, i)` gives row `i`'s date.
fn push_chunk(
    rows: &mut Rows,
    mut date_at: impl FnMut(&mut Rows, usize) -> Option<NaiveDate>,
    ids: &<StringType as PolarsDataType>::Array,
    prices: &[f64],
) -> bool {
    // Prices first, in one pass the compiler can vectorise; then they are copied whole. A price
    // outside the plausible range goes to the checked path, which refuses it with its row as a
    // wide panel does (found by review: a subnormal price passed here and bent the beta).
    let (low, high) = crate::io::sanity::PRICE_RANGE;
    if ids.len() != prices.len() || !prices.iter().all(|&p| (low..=high).contains(&p)) {
        return false;
    }
    // A repeated id is found by comparing its 16-byte view with the previous row's: an id of up
    // to 12 bytes is stored inside its view, so equal views are equal ids.
    let views = ids.views();
    let (mut previous_view, mut previous_id) = (0_u128, 0);
    for i in 0..prices.len() {
        let Some(date) = date_at(rows, i) else {
            return false;
        };
        let view = views[i];
        let id = if view.length <= INLINE && view.as_u128() == previous_view {
            previous_id
        } else {
            let security = ids.value(i);
            if id_needs_checking(security) {
                return false;
            }
            let id = rows.dictionary.id(security);
            if view.length <= INLINE {
                (previous_view, previous_id) = (view.as_u128(), id);
            }
            id
        };
        rows.push_id_and_date(id, date);
    }
    rows.prices.extend_from_slice(prices);
    true
}

/// Whether an id must go to the checked path, which trims or names it: empty, padded as
/// `str::trim` (the checked path's, the attributes' and a wide header's) sees it (any Unicode
/// white space, a no-break space too), read by a spreadsheet as a formula, more than one line,
/// or holding a character no one would see or a file cannot hold.
fn id_needs_checking(security: &str) -> bool {
    let padded = |c: Option<char>| c.is_none_or(char::is_whitespace);
    let (first, last) = (security.chars().next(), security.chars().next_back());
    let formula = matches!(first, Some('=' | '+' | '@' | '-'));
    padded(first)
        || padded(last)
        || formula
        || !crate::io::sanity::is_one_line(security)
        || security
            .chars()
            .any(crate::io::sanity::unseen_or_unwritable)
}

/// The longest string polars keeps inside its 16-byte view.
const INLINE: u32 = 12;

/// Direct-mapped caches of parsed dates: a panel repeats each date once per security, so
/// nearly every lookup is a hit and the calendar arithmetic runs once per distinct date.
#[derive(Debug, Clone)]
pub(crate) struct DateCache {
    /// Keyed by the 16-byte view of a date's text (length and the text itself).
    text: Vec<(u128, NaiveDate)>,
    days: Vec<(i32, NaiveDate)>,
}

/// Slots per cache: consecutive days never collide in the day cache for 11 years.
const CACHE_SLOTS: usize = 4096;

impl Default for DateCache {
    fn default() -> Self {
        // No inline view has u32::MAX as its length and i32::MIN is no date, so no empty slot
        // matches a key.
        DateCache {
            text: vec![(u128::MAX, NaiveDate::MIN); CACHE_SLOTS],
            days: vec![(i32::MIN, NaiveDate::MIN); CACHE_SLOTS],
        }
    }
}

impl DateCache {
    /// [`parse_iso_date`] of the text whose inline view is `key`, cached. The slot is
    /// yy·372 + mm·31 + dd of the text (wrapped to the table), so any eleven years of dates
    /// have slots of their own; other text lands anywhere and is parsed (and refused) as usual.
    pub fn date_of_view<'a>(
        &mut self,
        key: u128,
        text: impl FnOnce() -> &'a str,
    ) -> Option<NaiveDate> {
        let b = key.to_le_bytes();
        let digit = |i: usize| u32::from(b[4 + i].wrapping_sub(b'0'));
        let (year, month, day) = (
            digit(2) * 10 + digit(3),
            digit(5) * 10 + digit(6),
            digit(8) * 10 + digit(9),
        );
        let slot = (year
            .wrapping_mul(372)
            .wrapping_add(month * 31)
            .wrapping_add(day)) as usize
            % CACHE_SLOTS;
        if self.text[slot].0 == key {
            return Some(self.text[slot].1);
        }
        let date = parse_iso_date(text())?;
        self.text[slot] = (key, date);
        Some(date)
    }

    /// Days since 1970-01-01 as a date, cached.
    pub fn date_of_days(&mut self, days: i32) -> Option<NaiveDate> {
        let slot = days.rem_euclid(CACHE_SLOTS as i32) as usize;
        if self.days[slot].0 == days && days != i32::MIN {
            return Some(self.days[slot].1);
        }
        let date = NaiveDate::from_epoch_days(days)?;
        self.days[slot] = (days, date);
        Some(date)
    }
}

/// The checked path: every cell on its own, the first bad one an error naming its row.
fn push_long_checked(
    rows: &mut Rows,
    dates: &DateCells<'_>,
    securities: &StringChunked,
    prices: &Float64Chunked,
    (first_row, written_prices): BlockStart<'_>,
    source: &Source,
    columns: &PanelColumns,
) -> Result<()> {
    let dates = block_dates(dates, first_row, source, &columns.date_column)?;
    let (security_column, price_column) = (&columns.security_column, &columns.price_column);
    for (k, ((security, price), &date)) in
        securities.iter().zip(prices.iter()).zip(&dates).enumerate()
    {
        let security = match security.map(str::trim) {
            Some(s) if !s.is_empty() => s,
            _ => {
                return Err(source.row_error(
                    first_row + k,
                    format!("`{security_column}` is empty: every row needs a security id"),
                ))
            }
        };
        check_label(security, || format!("`{security_column}`"))
            .map_err(|message| source.row_error(first_row + k, message))?;
        let price = price.ok_or_else(|| {
            source.row_error(
                first_row + k,
                format!(
                    "`{price_column}` is empty for {security} on {date}: a long panel has a \
                     row only where there is a price"
                ),
            )
        })?;
        let as_written = written(written_prices, price_column, k);
        check_price((price, as_written), || {
            format!("`{price_column}` for {security} on {date}")
        })
        .map_err(|message| source.row_error(first_row + k, message))?;
        let id = rows.dictionary.id(security);
        rows.push(id, date, price);
    }
    Ok(())
}

/// Adds a wide block's prices, column by column: an empty cell is a gap, any price present must
/// be positive. `securities` pairs each column's id with its cells and name.
pub(crate) fn push_wide(
    rows: &mut Rows,
    dates: &[NaiveDate],
    securities: &[(u32, &Float64Chunked, &str)],
    (first_row, written_prices): BlockStart<'_>,
    source: &Source,
) -> Result<()> {
    for &(id, cells, name) in securities {
        for (k, cell) in cells.iter().enumerate() {
            if let Some(price) = cell {
                let as_written = written(written_prices, name, k);
                check_price((price, as_written), || format!("`{name}` on {}", dates[k]))
                    .map_err(|message| source.row_error(first_row + k, message))?;
                rows.push(id, dates[k], price);
            }
        }
    }
    Ok(())
}
