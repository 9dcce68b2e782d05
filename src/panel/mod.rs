//! Price panels: a whole market's closing prices in one file, read into compact columns.
//!
//! A universe run reads millions of (date, security, price) rows, so the panel is kept as three
//! flat arrays grouped by security — dates, prices, and the offsets where each security's rows
//! start — and each security is handed to sampling as a borrowed [`SeriesView`], never copied.
//! Files are CSV or Parquet (by extension) in a long layout (one row per date and security, any
//! order) or a wide one (a date column and one column per security); polars reads them block by
//! block, so memory holds the prices once plus one block. Rows are grouped by a counting sort on
//! a dictionary index of the security ids, which avoids hashing a string per row whenever rows
//! come grouped by security or cycle through the securities date by date. Every bad value is
//! reported with its file, line (CSV) or row (Parquet) and the value; nothing is guessed.

pub mod attributes;
mod blocks;
mod cells;
mod checks;
mod csv;
mod header;
mod parquet;
mod refused;
mod rows;
mod runs;

pub(crate) use rows::{Duplicate, Rows};
pub use runs::SecurityHook;

use std::path::{Path, PathBuf};

use chrono::NaiveDate;
use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};
use crate::io::series::{iso_date, SeriesView, ValueKind};

/// How the prices are laid out in the file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum PanelLayout {
    /// One row per (date, security) with its price, rows in any order, gaps allowed.
    Long,
    /// A date column and one column of prices per security; an empty cell is a gap.
    Wide,
}

/// A file format hurdle reads tables from, chosen by the file's extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum TableFormat {
    Csv,
    Parquet,
}

impl TableFormat {
    /// `.csv` (or `.txt`) is CSV, `.parquet` (or `.pq`) is Parquet; `key` names the setting in
    /// the message for anything else.
    pub fn from_path(path: &Path, key: &str) -> Result<TableFormat> {
        let extension = path
            .extension()
            .and_then(|e| e.to_str())
            .map(str::to_ascii_lowercase);
        match extension.as_deref() {
            Some("csv" | "txt") => Ok(TableFormat::Csv),
            Some("parquet" | "pq") => Ok(TableFormat::Parquet),
            _ => Err(Error::Argument {
                option: key.to_string(),
                message: format!(
                    "\"{}\" is neither a .csv nor a .parquet file (the format is chosen by the \
                     extension)",
                    path.display()
                ),
            }),
        }
    }
}

/// Which columns of a panel file hold what: the reader's own small spec.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PanelColumns {
    pub layout: PanelLayout,
    pub date_column: String,
    /// Long layout only.
    pub security_column: String,
    /// Long layout only.
    pub price_column: String,
}

/// What the receipt records about a panel file.
#[derive(Debug, Clone, Serialize)]
pub struct PanelFile {
    /// The path as the universe file writes it.
    pub path: String,
    pub sha256: String,
    pub format: TableFormat,
    pub layout: PanelLayout,
    /// Prices read (non-empty cells of a wide file).
    pub observations: usize,
    pub securities: usize,
    #[serde(serialize_with = "iso_date")]
    pub first_date: NaiveDate,
    #[serde(serialize_with = "iso_date")]
    pub last_date: NaiveDate,
}

/// Every security's prices, grouped by security (ids in byte order) and sorted by date.
#[derive(Debug, Clone)]
pub struct Panel {
    pub file: PanelFile,
    securities: Vec<String>,
    /// Security `i` owns rows `offsets[i]..offsets[i + 1]`.
    offsets: Vec<usize>,
    dates: Vec<NaiveDate>,
    prices: Vec<f64>,
    whole_runs: bool,
}

impl Panel {
    /// The number of securities.
    pub fn len(&self) -> usize {
        self.securities.len()
    }

    pub fn is_empty(&self) -> bool {
        self.securities.is_empty()
    }

    /// The security ids, in byte order.
    pub fn securities(&self) -> &[String] {
        &self.securities
    }

    /// The position of a security id, if the panel holds it.
    pub fn position(&self, security: &str) -> Option<usize> {
        self.securities
            .binary_search_by(|s| s.as_str().cmp(security))
            .ok()
    }

    /// Whether each security's rows formed one run in the file (no security came back after
    /// another), so that what a [`SecurityHook`] was handed is each security's whole series.
    pub fn whole_runs(&self) -> bool {
        self.whole_runs
    }

    /// Security `i`'s prices as a borrowed series, ascending in date.
    pub fn series(&self, i: usize) -> SeriesView<'_> {
        let rows = self.offsets[i]..self.offsets[i + 1];
        SeriesView {
            dates: &self.dates[rows.clone()],
            values: &self.prices[rows],
        }
    }
}

/// Reads a panel file. `written` is the path as the universe file names it (for the receipt),
/// `resolved` where it is.
pub fn read_panel(written: &str, resolved: &Path, columns: &PanelColumns) -> Result<Panel> {
    read_panel_handing_out(written, resolved, columns, None)
}

/// [`read_panel`], handing each security of a long file grouped by security with rising dates
/// to `hook` as soon as its rows are complete (see [`runs`]); valid if the panel read says
/// [`Panel::whole_runs`].
pub fn read_panel_handing_out(
    written: &str,
    resolved: &Path,
    columns: &PanelColumns,
    hook: Option<SecurityHook<'_>>,
) -> Result<Panel> {
    let format = TableFormat::from_path(resolved, "panel.prices")?;
    let source = Source {
        file: resolved.to_path_buf(),
        format,
    };
    let (rows, sha256) = match format {
        TableFormat::Csv => csv::read(&source, columns, hook)?,
        TableFormat::Parquet => parquet::read(&source, columns, hook)?,
    };
    if rows.prices.is_empty() {
        return Err(source.file_error("holds no prices: the panel is empty".into()));
    }
    let grouped = rows.group().map_err(|duplicate| match format {
        TableFormat::Csv => csv::duplicate_error(&source, columns, &duplicate),
        TableFormat::Parquet => parquet::duplicate_error(&source, columns, &duplicate),
    })?;
    // Each security's rows are sorted by date: its first and last rows bound it.
    let bounds = grouped.offsets.windows(2).filter(|w| w[0] < w[1]);
    let first_date = bounds.clone().map(|w| grouped.dates[w[0]]).min();
    let last_date = bounds.map(|w| grouped.dates[w[1] - 1]).max();
    let (first_date, last_date) = (
        first_date.expect("not empty"),
        last_date.expect("not empty"),
    );
    Ok(Panel {
        file: PanelFile {
            path: written.to_string(),
            sha256,
            format,
            layout: columns.layout,
            observations: grouped.prices.len(),
            securities: grouped.securities.len(),
            first_date,
            last_date,
        },
        securities: grouped.securities,
        offsets: grouped.offsets,
        dates: grouped.dates,
        prices: grouped.prices,
        whole_runs: grouped.whole_runs,
    })
}

/// The file being read, for messages.
#[derive(Debug, Clone)]
pub(crate) struct Source {
    pub file: PathBuf,
    pub format: TableFormat,
}

impl Source {
    /// Starts `work` on a thread of `scope`: a thread the system will not start is an error
    /// about reading this file, not a panic.
    pub(crate) fn spawn<'scope, T: Send + 'scope>(
        &self,
        scope: &'scope std::thread::Scope<'scope, '_>,
        work: impl FnOnce() -> T + Send + 'scope,
    ) -> Result<std::thread::ScopedJoinHandle<'scope, T>> {
        std::thread::Builder::new()
            .spawn_scoped(scope, work)
            .map_err(|e| self.file_error(format!("cannot start a thread to read it: {e}")))
    }

    /// An error about the file as a whole.
    pub fn file_error(&self, message: String) -> Error {
        Error::DataFile {
            file: self.file.clone(),
            message,
        }
    }

    /// An error about data row `row` (0-based, header not counted): CSV names the line an editor
    /// shows (the header is line 1), Parquet the row counted from 1.
    pub fn row_error(&self, row: usize, message: String) -> Error {
        match self.format {
            TableFormat::Csv => Error::DataRow {
                file: self.file.clone(),
                line: self.line(row),
                message,
            },
            TableFormat::Parquet => Error::DataFile {
                file: self.file.clone(),
                message: format!("row {}: {message}", row + 1),
            },
        }
    }

    /// The line of a CSV file on which data row `row` starts: row + 2 (after the header),
    /// unless a quoted field holding a line break comes before it, which the file is read
    /// again to count (found by review: the line given was one short per such break; an
    /// error path only).
    fn line(&self, row: usize) -> usize {
        std::fs::read(&self.file)
            .ok()
            .and_then(|bytes| crate::io::sanity::record_line(&bytes, row + 1))
            .unwrap_or(row + 2)
    }

    /// Where data row `row` is, in words: "line 12" or "row 11".
    pub fn place(&self, row: usize) -> String {
        match self.format {
            TableFormat::Csv => format!("line {}", self.line(row)),
            TableFormat::Parquet => format!("row {}", row + 1),
        }
    }
}

/// Parses an ISO 8601 calendar date `YYYY-MM-DD` (surrounding spaces allowed), or a date-time
/// read by its date as a price file's cell is (`2024-09-30T16:30Z`, `2024-09-30 16:30:00`: the
/// time and zone are checked for their form and ignored, the date as written is the trading day).
pub(crate) fn parse_iso_date(text: &str) -> Option<NaiveDate> {
    let bytes = text.as_bytes();
    if bytes.len() != 10 {
        let trimmed = text.trim();
        return match trimmed.len() {
            10 => parse_iso_date(trimmed),
            11.. => {
                let date = parse_iso_date(trimmed.get(..10)?)?;
                // The usual forms checked by hand (chrono's general parser, for every row of a
                // panel, made reading one three times as slow; found by review), any other
                // through it.
                let checked = plain_time_of_day(&trimmed.as_bytes()[10..])
                    || crate::io::tables::iso_date_time(trimmed).is_some();
                checked.then_some(date)
            }
            _ => None,
        };
    }
    let digits = |range: std::ops::Range<usize>| {
        bytes[range].iter().try_fold(0_u32, |value, &b| {
            b.is_ascii_digit().then(|| value * 10 + u32::from(b - b'0'))
        })
    };
    if bytes[4] != b'-' || bytes[7] != b'-' {
        return None;
    }
    let year = i32::try_from(digits(0..4)?).ok()?;
    NaiveDate::from_ymd_opt(year, digits(5..7)?, digits(8..10)?)
}

/// `THH:MM`, `THH:MM:SS` or `THH:MM:SS.fff` (one to nine decimals; a space for the `T`), then
/// nothing, `Z` or an offset `±HH:MM`, with hours below 24 and minutes and seconds below 60:
/// forms every ISO 8601 date-time reader takes, checked without a general parser.
fn plain_time_of_day(text: &[u8]) -> bool {
    let two = |at: usize, below: u8| {
        text.get(at..at + 2).is_some_and(|d| {
            d.iter().all(u8::is_ascii_digit) && (d[0] - b'0') * 10 + (d[1] - b'0') < below
        })
    };
    let clock = |at: usize| two(at, 24) && text.get(at + 2) == Some(&b':') && two(at + 3, 60);
    if !matches!(text.first(), Some(b'T' | b' ')) || !clock(1) {
        return false;
    }
    let mut at = 6;
    if text.get(at) == Some(&b':') {
        if !two(at + 1, 60) {
            return false;
        }
        at += 3;
        if text.get(at) == Some(&b'.') {
            let decimals = text[at + 1..]
                .iter()
                .take_while(|b| b.is_ascii_digit())
                .count();
            if !(1..=9).contains(&decimals) {
                return false;
            }
            at += 1 + decimals;
        }
    }
    match text.get(at) {
        None => true,
        Some(b'Z') => at + 1 == text.len(),
        Some(b'+' | b'-') => clock(at) && at + 6 == text.len(),
        Some(_) => false,
    }
}

/// A text column's cells as numbers (without surrounding white space; an empty cell `None`),
/// or `None` when the column is not text or a cell is not a number.
pub(crate) fn numbers_in_text(
    column: &polars::prelude::Column,
) -> Option<polars::prelude::Float64Chunked> {
    (column.str().ok()?.iter())
        .map(|cell| match cell.map(str::trim) {
            None | Some("") => Some(None),
            Some(text) => text.parse::<f64>().ok().map(Some),
        })
        .collect::<Option<Vec<Option<f64>>>>()
        .map(|values| values.into_iter().collect())
}

/// The message for a repeated (date, security) of a long panel, or a repeated date of a wide
/// one, found at `places` (`unit`: lines or rows) with its date `written` as each row has it.
/// Two times of one day are one date, which the message says (found by review: intraday rows
/// were called duplicates without saying why); a wide file's repeated date is otherwise most
/// often a long file read as wide.
pub(crate) fn duplicate_message(
    layout: PanelLayout,
    duplicate: &Duplicate,
    written: &[&str],
    (places, unit): (&str, &str),
) -> String {
    let times = match written.windows(2).any(|w| w[0] != w[1]) {
        true => format!(
            " (written {}: dates are read without their time of day; keep one price a day, the \
             close)",
            written.join(" and ")
        ),
        false => String::new(),
    };
    match layout {
        PanelLayout::Long => format!(
            "duplicate row for security {} on {}{times} ({unit} {places}: {}); each (date, \
             security) pair may appear once",
            duplicate.security,
            duplicate.date,
            duplicate.prices_text()
        ),
        PanelLayout::Wide => {
            let advice = match times.is_empty() {
                true => {
                    " (if this file has one row per date and security, set panel.layout = \
                     \"long\")"
                }
                false => "",
            };
            format!(
                "the date {}{times} appears on more than one row ({unit} {places}); a wide panel \
                 has one row per date{advice}",
                duplicate.date
            )
        }
    }
}

/// The reading bar's label while securities are handed out: the file and how many of them the
/// caller has finished so far (their total is known only once the file is read).
fn reading_label(file: &str, finished: &std::sync::atomic::AtomicUsize) -> String {
    match finished.load(std::sync::atomic::Ordering::Relaxed) {
        0 => format!("reading {file}"),
        1 => format!("reading {file} (1 security estimated)"),
        n => format!("reading {file} ({n} securities estimated)"),
    }
}

/// Lower-case hexadecimal of a digest.
pub(crate) fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// An id or a label must be one line of text: a line break or another control character (a
/// quoted cell may hold one) is refused, as it would split the summary's table and match no
/// other file's id. Nor may it begin as a spreadsheet formula ([`opens_a_formula`]): opened in
/// a spreadsheet, securities.csv or industries.csv would run it (found by review: an industry
/// `=1+1` was written as it came). `what` names the column (or says where the label stands).
pub(crate) fn check_label(
    label: &str,
    what: impl FnOnce() -> String,
) -> std::result::Result<(), String> {
    if !crate::io::sanity::is_one_line(label) {
        return Err(format!(
            "{} = \"{label}\" holds a line break or another control character: ids and labels \
             are one line of text",
            what()
        ));
    }
    // As a case's names (found by review: U+202E in an industry label reversed the rest of a
    // summary.md line).
    if let Some(c) = label
        .chars()
        .find(|&c| crate::io::sanity::unseen_or_unwritable(c))
    {
        return Err(format!(
            "{} = {label:?} holds U+{:04X}, a direction control, separator, invisible character \
             or noncharacter, which changes how the text shows without being seen or cannot be \
             written; write it without that character",
            what(),
            u32::from(c)
        ));
    }
    match opens_a_formula(label) {
        false => Ok(()),
        true => Err(format!(
            "{} = \"{label}\" begins with `{}`: a spreadsheet opening securities.csv or \
             industries.csv would run it as a formula; write it otherwise in the file",
            what(),
            label.chars().next().unwrap_or_default()
        )),
    }
}

/// Whether a cell would be read as a formula by a spreadsheet: it begins with `=`, `+` or `@`,
/// or with `-` and is not dashes alone (the characters OWASP's advice on CSV injection names; a
/// placeholder label `-` or `--` stays, and is noted as a placeholder).
pub(crate) fn opens_a_formula(text: &str) -> bool {
    match text.chars().next() {
        Some('=' | '+' | '@') => true,
        Some('-') => !text.chars().all(|c| c == '-'),
        _ => false,
    }
}

/// A wide panel's security columns as (column name, dictionary id): the id is the name without
/// surrounding spaces, as a long panel's and the attributes' ids are read, so ` S01` in a header
/// written `date, S01` is the security `S01`. Two columns that name one security (`S01` and
/// ` S01`) are refused with their column numbers; an empty name is left to the caller.
pub(crate) fn wide_ids<'a>(
    names: impl Iterator<Item = (usize, &'a String)>,
    dictionary: &mut rows::Dictionary,
) -> std::result::Result<Vec<(String, u32)>, String> {
    let mut ids: Vec<(String, u32)> = Vec::new();
    let mut seen: std::collections::HashMap<u32, usize> = std::collections::HashMap::new();
    for (column, name) in names {
        // The id as read (trimmed) is what the check must see (found by review: ` =1+1` in a
        // header passed and reached securities.csv as `=1+1`).
        check_label(name.trim(), || "the header's column name".to_string())?;
        let id = dictionary.id(name.trim());
        if let Some(first) = seen.insert(id, column) {
            return Err(format!(
                "the header names security `{}` in columns {} and {}: each column needs a \
                 security of its own (ids are read without surrounding spaces)",
                name.trim(),
                first + 1,
                column + 1
            ));
        }
        ids.push((name.clone(), id));
    }
    Ok(ids)
}

/// A price must be a finite positive number; `what` names the column (and the security) and
/// is only called for a bad price, which the message quotes as written when its text is given
/// (a CSV cell), else as read (a Parquet double).
pub(crate) fn check_price(
    (price, written): (f64, Option<&str>),
    what: impl FnOnce() -> String,
) -> std::result::Result<(), String> {
    match ValueKind::Price.broken_rule(price) {
        Some(rule) => Err(format!(
            "{} = {}: {rule}",
            what(),
            written.map_or_else(|| crate::error::compact(price), str::to_string)
        )),
        None => Ok(()),
    }
}

/// Whether a price read breaks the price rule (see [`check_price`]).
pub(crate) fn bad_price(price: f64) -> bool {
    ValueKind::Price.broken_rule(price).is_some()
}

/// What a header with `names` looks like, for a message about a layout that does not fit:
/// `None` when it gives no hint.
pub(crate) fn layout_hint(
    names: &[String],
    columns: &PanelColumns,
    other_layout: PanelLayout,
) -> Option<String> {
    // Names padded with spaces count: the hint is about the layout, and the padding is named
    // when the file is read in the layout it suggests.
    let has = |name: &str| names.iter().any(|n| n.trim() == name);
    match other_layout {
        // A header with the long layout's security or price column is a long file with one
        // column named otherwise: name the one column left over, if there is exactly one.
        PanelLayout::Wide if has(&columns.security_column) || has(&columns.price_column) => {
            let keys = [
                ("panel.date_column", &columns.date_column),
                ("panel.security_column", &columns.security_column),
                ("panel.price_column", &columns.price_column),
            ];
            let missing: Vec<&str> = keys
                .iter()
                .filter(|(_, name)| !has(name))
                .map(|(key, _)| *key)
                .collect();
            let unclaimed: Vec<&String> = names
                .iter()
                .filter(|n| keys.iter().all(|(_, name)| n != name))
                .collect();
            match (missing.as_slice(), unclaimed.as_slice()) {
                ([key], [column]) => Some(format!(
                    "if `{column}` is that column, set {key} = \"{column}\""
                )),
                _ => None,
            }
        }
        PanelLayout::Wide => {
            let others: Vec<&str> = names
                .iter()
                .filter(|n| **n != columns.date_column)
                .map(String::as_str)
                .collect();
            (has(&columns.date_column) && others.len() >= 2).then(|| {
                format!(
                    "this looks like a wide file (a `{}` column and {} other columns such as \
                     {}); set panel.layout = \"wide\"",
                    columns.date_column,
                    others.len(),
                    others[..others.len().min(3)].join(", ")
                )
            })
        }
        PanelLayout::Long => {
            (has(&columns.security_column) && has(&columns.price_column)).then(|| {
                format!(
                    "this looks like a long file (it has the columns `{}` and `{}`); set \
                     panel.layout = \"long\"",
                    columns.security_column, columns.price_column
                )
            })
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn date(text: &str) -> NaiveDate {
        NaiveDate::parse_from_str(text, "%Y-%m-%d").unwrap()
    }

    // ISO 8601 calendar dates: the Gregorian calendar decides which days exist.
    #[test]
    fn iso_dates_parse_and_impossible_ones_do_not() {
        assert_eq!(parse_iso_date("2024-02-29"), Some(date("2024-02-29")));
        assert_eq!(parse_iso_date(" 2026-09-30 "), Some(date("2026-09-30")));
        // ISO 8601 date-times by their date, as a price file of its own reads them.
        for time in [
            "2026-09-30T16:30Z",
            "2026-09-30 16:30:05",
            "2026-09-30T23:00:00-05:00",
        ] {
            assert_eq!(parse_iso_date(time), Some(date("2026-09-30")), "{time}");
        }
        // The hand check accepts only what the general reader (`io::tables::iso_date_time`,
        // chrono) accepts, and each form here one of the two accepts is read the same.
        for text in [
            "2026-09-30T16:30",
            "2026-09-30T16:30:05.123456789",
            "2026-09-30T16:30:05.1234567890",
            "2026-09-30 00:00:00",
            "2026-09-30T23:59:59Z",
            "2026-09-30T24:00",
            "2026-09-30T16:60",
            "2026-09-30T16:30:5",
            "2026-09-30T16:30+01",
            "2026-09-30T16:30+01:00",
            "2026-09-30T16:30:00-24:00",
            "2026-09-30T16:30:00Zz",
            "2026-09-30T16:30.5",
            "2026-09-30t16:30",
        ] {
            let by_hand = plain_time_of_day(&text.as_bytes()[10..]);
            let general = crate::io::tables::iso_date_time(text).is_some();
            assert!(!by_hand || general, "{text}: the hand check is wider");
            assert_eq!(parse_iso_date(text).is_some(), general, "{text}");
        }
        for bad in [
            "2023-02-29T16:30",
            "2026-09-30T25:00",
            "2026-9-30T16:30:00",
            "2026-09-30 noon",
            "2023-02-29",
            "2026-13-01",
            "2026/09/30",
            "30-09-2026",
            "2026-9-30",
            "",
        ] {
            assert_eq!(parse_iso_date(bad), None, "{bad}");
        }
    }
}
