//! One cell of a price table, as found, and the rules that turn it into a date or a price.
//!
//! Spreadsheets hold dates as real date cells, as serial numbers or as ISO text, and numbers as
//! numbers or as text; an empty cell is a missing price. Everything else — a word in a price
//! column, an error value such as `#N/A`, a date where a price belongs — is an error whose
//! message shows the value, so the analyst can find and fix the cell.

use chrono::{Days, NaiveDate, NaiveDateTime};

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
    /// day, which is dropped), or a serial number of the 1900 date system (its fraction, the
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

    /// The cell as a number, `None` when empty. Numbers stored as text are read as numbers.
    pub fn number(&self) -> Result<Option<f64>, String> {
        match self {
            _ if self.is_empty() => Ok(None),
            Cell::Number(x) => Ok(Some(*x)),
            Cell::Text(text) => match text.trim().parse::<f64>() {
                Ok(x) if x.is_finite() => Ok(Some(x)),
                _ => Err(format!(
                    "{} is not a number; write the number, or clear the cell for a missing price",
                    self.shown()
                )),
            },
            _ => Err(format!(
                "{} is not a number; write the number, or clear the cell for a missing price",
                self.shown()
            )),
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

/// ISO 8601 date text, with or without a time of day.
fn iso_date(text: &str) -> Option<NaiveDate> {
    NaiveDate::parse_from_str(text, "%Y-%m-%d")
        .ok()
        .or_else(|| {
            [
                "%Y-%m-%dT%H:%M:%S%.f",
                "%Y-%m-%d %H:%M:%S%.f",
                "%Y-%m-%dT%H:%M",
            ]
            .iter()
            .find_map(|format| NaiveDateTime::parse_from_str(text, format).ok())
            .map(|dt| dt.date())
        })
}

/// A serial date of the 1900 date system: day 1 is 1900-01-01 and day 61 is 1900-03-01 (the
/// system counts a 29 February 1900 that never was, so serials from 61 on count from
/// 1899-12-30). Serials before 61 and beyond 9999-12-31 are refused: no price table reaches
/// there, and a number that small in a date column is more likely a misplaced price.
pub fn serial_to_date(serial: f64) -> Option<NaiveDate> {
    if !(61.0..LAST_SERIAL + 1.0).contains(&serial) {
        return None;
    }
    let epoch = NaiveDate::from_ymd_opt(1899, 12, 30).expect("valid date");
    epoch.checked_add_days(Days::new(serial.floor() as u64))
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
}

/// The kind of file a [`Place`] refers to.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum PlaceKind {
    Csv,
    Parquet,
    Sheet(String),
}

impl Place {
    /// The cell of data row `row` in header column `column`: `sheet "Prices", cell C17`,
    /// `line 17, column `X``, `row 16, column `X``.
    pub fn cell(&self, row: usize, column: usize) -> String {
        let name = self.header.get(column).map(String::as_str).unwrap_or("");
        match &self.kind {
            PlaceKind::Sheet(sheet) => format!(
                "sheet \"{sheet}\", cell {}{}",
                column_letters(self.first_column + column),
                self.first_row + row
            ),
            PlaceKind::Csv => format!("line {}, column `{name}`", self.first_row + row),
            PlaceKind::Parquet => format!("row {}, column `{name}`", self.first_row + row),
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
        assert_eq!(Cell::Text(" 12.5 ".into()).number(), Ok(Some(12.5)));
        assert_eq!(Cell::Number(3.0).number(), Ok(Some(3.0)));
        assert_eq!(Cell::Empty.number(), Ok(None));
        assert_eq!(Cell::Text("  ".into()).number(), Ok(None));
        let text = Cell::Text("n/a".into()).number().unwrap_err();
        assert!(text.contains("the text \"n/a\" is not a number"), "{text}");
        let error = Cell::Error("#N/A".into()).number().unwrap_err();
        assert!(error.contains("the error value #N/A"), "{error}");
        assert!(Cell::Text("inf".into()).number().is_err());
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
