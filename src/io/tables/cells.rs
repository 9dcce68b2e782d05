//! One cell of a price table, as found, and the rules that turn it into a date or a price.
//!
//! Spreadsheets hold dates as real date cells, as serial numbers or as ISO text, and numbers as
//! numbers or as text; an empty cell is a missing price (or yield). Everything else — a word in a price
//! column, an error value such as `#N/A`, a date where a price belongs — is an error whose
//! message shows the value, so the analyst can find and fix the cell.

use chrono::{Days, NaiveDate, NaiveTime};

use crate::io::series::ValueKind;

/// A cell's content before it is read as a date or a number.
#[derive(Debug, Clone, PartialEq)]
pub enum Cell {
    Empty,
    Number(f64),
    Text(String),
    Date(NaiveDate),
    Bool(bool),
    /// A spreadsheet error value such as `#N/A`.
    Error(String),
}

/// The last serial number a spreadsheet date can have (9999-12-31 in the 1900 date system).
const LAST_SERIAL: f64 = 2_958_465.0;

impl Cell {
    /// Empty, or text of spaces only.
    pub fn is_empty(&self) -> bool {
        match self {
            Cell::Empty => true,
            Cell::Text(text) => text.trim().is_empty(),
            _ => false,
        }
    }

    /// The content as a message shows it.
    pub fn shown(&self) -> String {
        match self {
            Cell::Empty => "nothing".to_string(),
            // Huge and tiny numbers (a damaged file) in the shortest exact scientific form,
            // not hundreds of digits.
            Cell::Number(x) if x.abs() >= 1e15 || (*x != 0.0 && x.abs() < 1e-6) => {
                format!("the number {x:e}")
            }
            Cell::Number(x) => format!("the number {x}"),
            Cell::Text(text) => format!("the text \"{}\"", text.trim()),
            Cell::Date(d) => format!("the date {d}"),
            Cell::Bool(b) => format!("the logical value {}", if *b { "TRUE" } else { "FALSE" }),
            Cell::Error(e) => format!("the error value {e}"),
        }
    }

    /// The cell as a date: a date cell, ISO 8601 text (`2026-09-30`, optionally with a time of
    /// day and a zone, which are dropped: see [`iso_date`]), or a serial number of the 1900 date system (its fraction, the
    /// time of day, is dropped).
    pub fn date(&self) -> Result<NaiveDate, String> {
        self.date_in(false)
    }

    /// [`Cell::date`] in a workbook's date system: with `system_1904`, a serial number counts
    /// days from 1904-01-01 (serial 0), which is serial 1462 of the 1900 system (ECMA-376 Part
    /// 1, §18.17.4.1, from memory; the 1,461 days of 1900–1903 and the 1900 system's day 0 of
    /// 1899-12-30).
    pub fn date_in(&self, system_1904: bool) -> Result<NaiveDate, String> {
        let offset = if system_1904 { 1462.0 } else { 0.0 };
        let serial = |x: f64| serial_to_date(x + offset);
        let not_a_date = || {
            format!(
                "{} is not a date; give a date cell, an ISO 8601 date such as 2026-09-30, or a \
                 spreadsheet serial number",
                self.shown()
            )
        };
        match self {
            Cell::Date(d) => Ok(*d),
            Cell::Number(x) => serial(*x).ok_or_else(not_a_date),
            Cell::Text(text) => {
                let text = text.trim();
                iso_date(text)
                    .or_else(|| text.parse::<f64>().ok().and_then(serial))
                    .ok_or_else(not_a_date)
            }
            _ => Err(not_a_date()),
        }
    }

    /// The cell as a number of `kind`, `None` when empty (a missing price or yield). Numbers
    /// stored as text are read as numbers.
    pub fn number(&self, kind: ValueKind) -> Result<Option<f64>, String> {
        let refused = || {
            format!(
                "{} is not a number; write the number, or clear the cell for a missing {}",
                self.shown(),
                kind.noun()
            )
        };
        match self {
            _ if self.is_empty() => Ok(None),
            Cell::Number(x) => Ok(Some(*x)),
            Cell::Text(text) => match text.trim().parse::<f64>() {
                Ok(x) if x.is_finite() => Ok(Some(x)),
                _ => Err(refused()),
            },
            _ => Err(refused()),
        }
    }

    /// A date cell, or text that reads as an ISO 8601 date: what a column of dates holds,
    /// told apart from numbers, which may be prices as well as date serials.
    pub fn is_written_date(&self) -> bool {
        match self {
            Cell::Date(_) => true,
            Cell::Text(text) => iso_date(text.trim()).is_some(),
            _ => false,
        }
    }

    /// A number, or text that reads as one.
    pub fn is_numeric(&self) -> bool {
        match self {
            Cell::Number(_) => true,
            Cell::Text(text) => text.trim().parse::<f64>().is_ok_and(f64::is_finite),
            _ => false,
        }
    }
}

/// The range rule of a price (finite and positive) or a yield (finite and above −100%).
pub fn check_range(value: f64, kind: ValueKind) -> Result<(), String> {
    match kind.broken_rule(value) {
        Some(rule) => Err(format!("{value} is not a {}: {rule}", kind.noun())),
        None => Ok(()),
    }
}

/// ISO 8601 date text: `YYYY-MM-DD`, or that date followed by a time of day, `THH:MM`,
/// `THH:MM:SS` or `THH:MM:SS.fff` with an optional zone `Z` or `±HH:MM`
/// (`2024-01-31T16:30:00+01:00`), or by a space and `HH:MM[:SS[.fff]]`. The time and the zone
/// are checked for their form and then ignored: the date as written is the trading day, so a
/// close stamped `2024-01-31T23:00:00-05:00` stays 31 January, not 1 February in UTC.
pub(crate) fn iso_date(text: &str) -> Option<NaiveDate> {
    let day = |date: &str| NaiveDate::parse_from_str(date, "%Y-%m-%d").ok();
    if let Some(date) = day(text) {
        return Some(date);
    }
    let (date, time) = text.split_once(['T', ' '])?;
    is_time_of_day(time).then(|| day(date)).flatten()
}

/// `HH:MM`, `HH:MM:SS` or `HH:MM:SS.fff`, optionally followed by `Z` or `±HH:MM`.
fn is_time_of_day(time: &str) -> bool {
    let (clock, zone) = time.split_at(time.find(['Z', 'z', '+', '-']).unwrap_or(time.len()));
    let zone_ok = match zone.as_bytes() {
        [] | [b'Z' | b'z'] => true,
        [b'+' | b'-', offset @ ..] => {
            offset.len() == 5 && NaiveTime::parse_from_str(&zone[1..], "%H:%M").is_ok()
        }
        _ => false,
    };
    let clock_ok = match clock.len() {
        5 => NaiveTime::parse_from_str(clock, "%H:%M").is_ok(),
        _ => clock.len() >= 8 && NaiveTime::parse_from_str(clock, "%H:%M:%S%.f").is_ok(),
    };
    zone_ok && clock_ok
}

/// A serial date of the 1900 date system: day 1 is 1900-01-01 and day 61 is 1900-03-01 (the
/// system counts a 29 February 1900 that never was, so serials from 61 on count from
/// 1899-12-30). Serials before 61 and beyond 9999-12-31 are refused: no price table reaches
/// there, and a number that small in a date column is more likely a misplaced price. The
/// serial is taken to the nearest millisecond before its day is read, as calamine reads a
/// date-formatted cell and a spreadsheet shows one (found by review: 45293 less 1e-9, which a
/// spreadsheet shows as 45293 and as 2024-01-02, was read as 2024-01-01 in a cell formatted as
/// a number while the same value formatted as a date gave 2024-01-02).
pub fn serial_to_date(serial: f64) -> Option<NaiveDate> {
    const MS_PER_DAY: f64 = 86_400_000.0;
    if !(61.0..LAST_SERIAL + 1.0).contains(&serial) {
        return None;
    }
    let epoch = NaiveDate::from_ymd_opt(1899, 12, 30).expect("valid date");
    let days = ((serial * MS_PER_DAY).round() / MS_PER_DAY).floor();
    epoch.checked_add_days(Days::new(days as u64))
}

/// Where a table's cells sit in its file, for messages.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Place {
    pub kind: PlaceKind,
    /// The 1-based line (CSV), row (Parquet) or sheet row of data row 0.
    pub first_row: usize,
    /// The 0-based sheet column of the header's first column (0 outside workbooks).
    pub first_column: usize,
    /// The header's names, for the column part of a CSV or Parquet reference.
    pub header: Vec<String>,
    /// The 1-based line each data row starts on, when rows and lines part (a CSV record whose
    /// quoted field holds a line break: found by review, every later line was named one
    /// early); empty when data row `r` is on `first_row + r`.
    pub lines: Vec<usize>,
}

/// The kind of file a [`Place`] refers to.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum PlaceKind {
    Csv,
    Parquet,
    Sheet(String),
}

impl Place {
    /// The line or row number of data row `row`.
    fn at(&self, row: usize) -> usize {
        self.lines.get(row).copied().unwrap_or(self.first_row + row)
    }

    /// The cell of data row `row` in header column `column`: `sheet "Prices", cell C17`,
    /// `line 17, column `X``, `row 16, column `X``.
    pub fn cell(&self, row: usize, column: usize) -> String {
        let name = self.header.get(column).map(String::as_str).unwrap_or("");
        match &self.kind {
            PlaceKind::Sheet(sheet) => format!(
                "sheet \"{sheet}\", cell {}{}",
                column_letters(self.first_column + column),
                self.at(row)
            ),
            PlaceKind::Csv => format!("line {}, column `{name}`", self.at(row)),
            PlaceKind::Parquet => format!("row {}, column `{name}`", self.at(row)),
        }
    }

    /// The header cell of column `column`.
    pub fn header_cell(&self, column: usize) -> String {
        match &self.kind {
            PlaceKind::Sheet(sheet) => format!(
                "sheet \"{sheet}\", cell {}{}",
                column_letters(self.first_column + column),
                self.first_row.saturating_sub(1).max(1)
            ),
            PlaceKind::Csv => format!("the header (line 1), column {}", column + 1),
            PlaceKind::Parquet => format!("the schema, column {}", column + 1),
        }
    }

    /// Whether [`Place::cell`] names the column itself (a CSV line or a Parquet row does; a
    /// sheet's cell reference does not), so that a message does not name it twice.
    pub fn names_column(&self) -> bool {
        !matches!(self.kind, PlaceKind::Sheet(_))
    }

    /// The row of data row `row` as a person finds it: `row 17` of a sheet or a Parquet file,
    /// `line 17` of a CSV file.
    pub fn row(&self, row: usize) -> String {
        match self.kind {
            PlaceKind::Csv => format!("line {}", self.at(row)),
            _ => format!("row {}", self.at(row)),
        }
    }

    /// The header's row: `row 3` of a sheet (the first with anything in it), `line 1` of a CSV.
    pub fn header_row(&self) -> String {
        match self.kind {
            PlaceKind::Csv => "line 1".to_string(),
            PlaceKind::Parquet => "the schema".to_string(),
            PlaceKind::Sheet(_) => format!("row {}", self.first_row.saturating_sub(1).max(1)),
        }
    }

    /// The cells of column `column` from data row `first` to data row `last`: `D2 to D40` of a
    /// sheet, `lines 2 to 40` of a CSV file, `rows 1 to 39` of a Parquet file.
    pub fn span(&self, column: usize, first: usize, last: usize) -> String {
        let (a, b) = (self.at(first), self.at(last));
        match self.kind {
            PlaceKind::Sheet(_) => {
                let letters = column_letters(self.first_column + column);
                format!("{letters}{a} to {letters}{b}")
            }
            PlaceKind::Csv => format!("lines {a} to {b}"),
            PlaceKind::Parquet => format!("rows {a} to {b}"),
        }
    }

    /// `sheet "Prices": ` for a workbook, nothing otherwise.
    pub fn sheet_prefix(&self) -> String {
        match &self.kind {
            PlaceKind::Sheet(sheet) => format!("sheet \"{sheet}\": "),
            _ => String::new(),
        }
    }
}

/// Spreadsheet column letters of a 0-based column: 0 → `A`, 25 → `Z`, 26 → `AA`.
pub fn column_letters(column: usize) -> String {
    let mut n = column + 1;
    let mut letters = Vec::new();
    while n > 0 {
        let rem = (n - 1) % 26;
        letters.push(b'A' + rem as u8);
        n = (n - 1) / 26;
    }
    letters.reverse();
    String::from_utf8(letters).expect("ASCII letters")
}

#[cfg(test)]
mod tests {
    use super::*;

    // The 1900 date system as spreadsheets define it (ECMA-376 Part 1, §18.17.4.1, and the
    // published serials: 61 = 1900-03-01, 36526 = 2000-01-01, 45565 = 2024-09-30).
    #[test]
    fn serial_numbers_follow_the_1900_date_system() {
        let day = |y, m, d| NaiveDate::from_ymd_opt(y, m, d).unwrap();
        assert_eq!(serial_to_date(61.0), Some(day(1900, 3, 1)));
        assert_eq!(serial_to_date(36_526.0), Some(day(2000, 1, 1)));
        assert_eq!(serial_to_date(45_565.75), Some(day(2024, 9, 30)));
        // To the nearest millisecond first, as calamine 0.38's `ExcelDateTime::as_datetime`
        // reads a date cell: a serial a nanosecond short of midnight is the next day, and one
        // 23:59:59.9 into a day (a tenth of a second short, 1.16e-6) is still that day.
        assert_eq!(serial_to_date(45_293.0 - 1e-9), Some(day(2024, 1, 2)));
        assert_eq!(
            serial_to_date(45_293.0 - 0.1 / 86_400.0),
            Some(day(2024, 1, 1))
        );
        assert_eq!(serial_to_date(LAST_SERIAL), Some(day(9999, 12, 31)));
        assert_eq!(serial_to_date(60.0), None);
        assert_eq!(serial_to_date(LAST_SERIAL + 1.0), None);
    }

    #[test]
    fn dates_come_from_date_cells_iso_text_and_serials() {
        let day = NaiveDate::from_ymd_opt(2026, 9, 30).unwrap();
        assert_eq!(Cell::Date(day).date(), Ok(day));
        assert_eq!(Cell::Text(" 2026-09-30 ".into()).date(), Ok(day));
        assert_eq!(Cell::Text("2026-09-30T16:30:00".into()).date(), Ok(day));
        assert_eq!(Cell::Number(46_295.0).date(), Ok(day));
        // The 1904 date system: serial 0 is 1904-01-01, so 2026-09-30 is 46,295 − 1,462.
        assert_eq!(Cell::Number(44_833.0).date_in(true), Ok(day));
        assert_eq!(
            Cell::Number(0.0).date_in(true),
            Ok(NaiveDate::from_ymd_opt(1904, 1, 1).unwrap())
        );
        assert_eq!(Cell::Text("46295".into()).date(), Ok(day));
        let refused = Cell::Text("30/09/2026".into()).date().unwrap_err();
        assert!(
            refused.contains("\"30/09/2026\" is not a date"),
            "{refused}"
        );
    }

    #[test]
    fn numbers_may_be_stored_as_text_and_empty_cells_are_missing() {
        let price = ValueKind::Price;
        assert_eq!(Cell::Text(" 12.5 ".into()).number(price), Ok(Some(12.5)));
        assert_eq!(Cell::Number(3.0).number(price), Ok(Some(3.0)));
        assert_eq!(Cell::Empty.number(price), Ok(None));
        assert_eq!(Cell::Text("  ".into()).number(price), Ok(None));
        let text = Cell::Text("n/a".into()).number(price).unwrap_err();
        assert!(
            text.contains("the text \"n/a\" is not a number")
                && text.ends_with("clear the cell for a missing price"),
            "{text}"
        );
        let error = Cell::Error("#N/A".into()).number(price).unwrap_err();
        assert!(error.contains("the error value #N/A"), "{error}");
        assert!(Cell::Text("inf".into()).number(price).is_err());
        // A yield column's empty cell is a missing yield, not a missing price.
        let text = Cell::Text("n/a".into())
            .number(ValueKind::Yield)
            .unwrap_err();
        assert!(
            text.ends_with("clear the cell for a missing yield"),
            "{text}"
        );
    }

    // ISO 8601 date-times as exports write them: the date as written is the trading day,
    // whatever the time and the zone (a close at 23:00 five hours west of UTC stays that day).
    #[test]
    fn iso_date_times_are_read_by_their_date() {
        let day = NaiveDate::from_ymd_opt(2024, 1, 31).unwrap();
        for text in [
            "2024-01-31T16:30",
            "2024-01-31T16:30:05",
            "2024-01-31T16:30:05.125",
            "2024-01-31T16:30Z",
            "2024-01-31T16:30:05Z",
            "2024-01-31T16:30:05.125Z",
            "2024-01-31T23:00:00-05:00",
            "2024-01-31T00:30:00+01:00",
            "2024-01-31T16:30+01:00",
            "2024-01-31 16:30",
            "2024-01-31 16:30:05",
        ] {
            assert_eq!(Cell::Text(text.into()).date(), Ok(day), "{text}");
        }
        for text in [
            "2024-01-31T",
            "2024-01-31T16",
            "2024-01-31T25:00",
            "2024-01-31T16:30+1",
            "2024-01-31T16:30+01:00:00",
            "2024-01-31T16:30Q",
            "2024-01-31 noon",
            "2024-02-30T16:30",
        ] {
            let refused = Cell::Text(text.into()).date().unwrap_err();
            assert!(refused.contains("is not a date"), "{text}: {refused}");
        }
    }

    #[test]
    fn column_letters_run_like_a_spreadsheet() {
        assert_eq!(column_letters(0), "A");
        assert_eq!(column_letters(25), "Z");
        assert_eq!(column_letters(26), "AA");
        assert_eq!(column_letters(701), "ZZ");
        assert_eq!(column_letters(702), "AAA");
    }
}
