//! Sanity rules on a data file as read: the shape of a CSV before the reader sees it (so a
//! ragged row, semicolons or decimal commas get a line number, not the reader's own advice), and
//! values no market series holds (prices that are not positive, yields typed as percentages).
//! The thresholds and their reasons are in README's "Error handling" section.

use std::path::Path;

use crate::error::{compact as show, Error, Result};

mod bounds;
mod hints;
pub use bounds::{amount_out_of_range, AMOUNT_OUT_OF_RANGE, PRICE_RANGE};
pub use hints::{
    column_name_hint, decimal_comma_hint, extra_fields_message, separator_line,
    unnamed_value_message,
};

/// What the numbers in a file are, which decides the range they must lie in.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ValueKind {
    /// An adjusted (total-return) closing price: finite and positive.
    Price,
    /// An annualised yield in decimals: finite and above −100%.
    Yield,
}

impl ValueKind {
    /// What to do for a day without a value of this kind, for a message about a placeholder
    /// such as `#N/A` or `n/a` in its place.
    pub fn missing_advice(self) -> &'static str {
        match self {
            ValueKind::Price => {
                "delete the row of a day without a price (a missing day is skipped, never filled)"
            }
            ValueKind::Yield => {
                "delete the row of a day without a yield (a missing day is skipped, never filled)"
            }
        }
    }

    /// The rule `value` breaks, in words, or `None` when it lies in the kind's range: one rule
    /// for price and yield files, wide tables and panels.
    pub fn broken_rule(self, value: f64) -> Option<&'static str> {
        match self {
            _ if !value.is_finite() => Some(match self {
                ValueKind::Price => "a price must be a finite number",
                ValueKind::Yield => "a yield must be a finite number",
            }),
            ValueKind::Price if value <= 0.0 => Some("a price must be positive"),
            // hurdle's bound: the ratio of any two prices in it is a finite number, so no return
            // overflows (found by review: a move from 7e-201 to 7e199, accepted as a jump, made
            // an infinite return and a message that named no file); every traded price lies in it.
            ValueKind::Price if !(PRICE_RANGE.0..=PRICE_RANGE.1).contains(&value) => {
                Some("a price must lie between 1e-100 and 1e100")
            }
            ValueKind::Yield if value <= -1.0 => Some("a yield must be above -1 (−100%)"),
            _ => None,
        }
    }

    /// The kind's noun: "price" or "yield".
    pub fn noun(self) -> &'static str {
        match self {
            ValueKind::Price => "price",
            ValueKind::Yield => "yield",
        }
    }
}

/// The position of the one column of `header` named `name` (`None` when none is), or, when the
/// header gives that name to several columns, the message saying so: which of them would be
/// read? One rule for price and yield files, spread tables, panels and attributes.
pub fn unique_column<'a>(
    header: impl IntoIterator<Item = &'a str>,
    name: &str,
) -> std::result::Result<Option<usize>, String> {
    let at: Vec<usize> = header
        .into_iter()
        .enumerate()
        .filter(|(_, n)| *n == name)
        .map(|(i, _)| i)
        .collect();
    match at.as_slice() {
        [] => Ok(None),
        [one] => Ok(Some(*one)),
        many => {
            let at: Vec<String> = many.iter().map(|i| (i + 1).to_string()).collect();
            Err(format!(
                "the header names `{name}` in columns {}: each column needs a name of its own",
                at.join(" and ")
            ))
        }
    }
}

/// The fewest fields a record of a table may have: the header's count, or one fewer when the
/// header alone ends in a separator (a last column it leaves unnamed, which rows may omit).
pub fn fewest_fields(header: &[String]) -> usize {
    match header.last() {
        Some(last) if last.is_empty() => header.len() - 1,
        _ => header.len(),
    }
}

/// One record of a CSV file as RFC 4180 splits it: a quote opens a quoted field only as the
/// field's first character (as polars reads it: `a, "b, c"` is three fields, the quote after
/// the space being text), inside one `""` is a quote, and the field ends at its closing quote.
struct Record {
    /// Its number among the records (0-based: the header is record 0).
    index: usize,
    /// Its first line (0-based) and byte range.
    line: usize,
    range: std::ops::Range<usize>,
    fields: usize,
    /// What is wrong with its quotes, if anything.
    quoting: Option<Quoting>,
}

/// A record's quotes that no reader takes as the writer meant.
#[derive(Clone, Copy, PartialEq)]
enum Quoting {
    /// Text after a quoted field's closing quote (`"a, b" c`).
    AfterClosingQuote,
    /// A quote inside an unquoted field, after spaces only (`, "X06"`): text, not a quoted
    /// field, so the quotes become part of the value.
    AfterSpace,
    /// A quote inside an unquoted field elsewhere (`5"0`).
    InsideField,
    /// A quoted field still open at the end of the bytes.
    NeverClosed,
}

/// Calls `visit` with each record of `bytes` (an empty line is a record of one empty field)
/// until it returns true; the record it stopped at.
fn find_record(bytes: &[u8], mut visit: impl FnMut(&Record) -> bool) -> Option<Record> {
    #[derive(PartialEq)]
    enum State {
        FieldStart,
        Unquoted,
        Quoted,
        QuoteInQuoted,
    }
    let mut state = State::FieldStart;
    let fresh = |index, line, start| Record {
        index,
        line,
        range: start..start,
        fields: 1,
        quoting: None,
    };
    // A UTF-8 byte-order mark before the first record is not part of its first field (found
    // by review: it made a quoted first header name read as a quote inside a field).
    let first = if bytes.starts_with(b"\xEF\xBB\xBF") {
        3
    } else {
        0
    };
    let mut record = fresh(0, 0, 0);
    let (mut line, mut field_start) = (0, first);
    let flag = |record: &mut Record, what| {
        record.quoting.get_or_insert(what);
    };
    for (i, &b) in bytes.iter().enumerate().skip(first) {
        state = match (state, b) {
            (State::Quoted, b'"') => State::QuoteInQuoted,
            (State::Quoted, _) => State::Quoted,
            (State::FieldStart, b'"') | (State::QuoteInQuoted, b'"') => State::Quoted,
            (_, b',') => {
                record.fields += 1;
                field_start = i + 1;
                State::FieldStart
            }
            (State::QuoteInQuoted, b'\r' | b'\n') => State::Unquoted,
            (State::QuoteInQuoted, _) => {
                flag(&mut record, Quoting::AfterClosingQuote);
                State::Unquoted
            }
            (State::Unquoted, b'"') => {
                let spaces = bytes[field_start..i]
                    .iter()
                    .all(|&c| c == b' ' || c == b'\t');
                let what = match spaces {
                    true => Quoting::AfterSpace,
                    false => Quoting::InsideField,
                };
                flag(&mut record, what);
                State::Unquoted
            }
            _ => State::Unquoted,
        };
        if b == b'\n' {
            line += 1;
            if state != State::Quoted {
                record.range.end = i;
                if visit(&record) {
                    return Some(record);
                }
                record = fresh(record.index + 1, line, i + 1);
                (state, field_start) = (State::FieldStart, i + 1);
            }
        }
    }
    record.range.end = bytes.len();
    if state == State::Quoted {
        flag(&mut record, Quoting::NeverClosed);
    }
    (record.range.start < bytes.len() && visit(&record)).then_some(record)
}

/// The text of a record, without its line's carriage return, cut to 80 characters.
fn record_text(bytes: &[u8], record: &Record) -> String {
    let end = record.range.end.min(record.range.start + 400);
    let text = String::from_utf8_lossy(&bytes[record.range.start..end]);
    text.trim_end_matches('\r')
        .trim()
        .chars()
        .take(80)
        .collect()
}

/// The line (1-based) on which record `index` of CSV `bytes` starts (0: the header), counting
/// the line breaks inside quoted fields before it; `None` past the last record. A reader
/// counts records, a person lines: they differ after a quoted field holding a line break.
pub fn record_line(bytes: &[u8], index: usize) -> Option<usize> {
    if memchr::memchr(b'"', bytes).is_none() {
        return Some(index + 1);
    }
    find_record(bytes, |r| r.index == index).map(|r| r.line + 1)
}

/// The first record of CSV `bytes` whose quotes no reader takes as meant ([`Quoting`]), or with
/// more fields than `expected` (the header's count), or with fewer than `fewest` when it is
/// given (an empty line is not a record): its number among the records (0: the first) and
/// the message, quoting its text. Fields are split as RFC 4180 and polars split them ([`Record`]). What the panel
/// and attributes readers use to name the line polars' own messages do not give, and a short
/// record polars would fill with empty cells (its cells would then shift into the wrong
/// columns unseen).
pub fn first_bad_record(
    bytes: &[u8],
    expected: usize,
    fewest: Option<usize>,
) -> Option<(usize, String)> {
    let found = find_record(bytes, |r| {
        let raw = &bytes[r.range.clone()];
        let blank = raw.is_empty() || raw == b"\r";
        let short = fewest.is_some_and(|fewest| r.fields < fewest) && !blank;
        r.quoting.is_some() || r.fields > expected || short
    })?;
    let text = record_text(bytes, &found);
    // Quoted fields separated by semicolons or tabs (`"date";"security"`): another separator,
    // not a quoting slip (found by review).
    let separator = [("\";", "semicolons"), ("\"\t", "tabs")]
        .into_iter()
        .find(|(pair, _)| text.contains(pair));
    let message = match found.quoting {
        Some(Quoting::AfterClosingQuote) if separator.is_some() => format!(
            "`{text}` is separated by {}, not commas: hurdle reads comma-separated files with \
             a decimal point; save the file comma-separated",
            separator.map_or("", |(_, which)| which)
        ),
        Some(Quoting::AfterClosingQuote) => format!(
            "`{text}` has text after a quoted field's closing quote; a quote inside quoted text \
             is written twice (\"\"), and a field holding a comma is quoted whole, its quote \
             right after the comma"
        ),
        Some(Quoting::AfterSpace) => format!(
            "`{text}` has a quote after a space, which makes the quote part of the value, not \
             the start of a quoted field: write the quote right after the comma (`,\"…\"`), or \
             no quotes at all"
        ),
        Some(Quoting::InsideField) => format!(
            "`{text}` has a quote inside a field that is not quoted; quote the whole field and \
             write the quote inside it twice (\"5\"\"0\"), or remove it"
        ),
        Some(Quoting::NeverClosed) => format!(
            "`{text}` opens a quoted field that is never closed (the file ends inside it): \
             close the quote, or remove it"
        ),
        None => extra_fields_message(found.fields, expected, &text),
    };
    Some((found.index, message))
}

/// `bytes` without the empty records at its end: blank lines and lines of nothing but commas
/// and white space, which spreadsheets and some writers leave after the last row (found by
/// review: one extra line end after the last row stopped a run). The last record keeps its line
/// end; a file of nothing else becomes empty. Such lines between rows are still refused where
/// they stand (`check_csv_shape`, the panel's and attributes' cell checks): a gap inside a table
/// may be a file pasted together.
pub fn without_trailing_empty_records(bytes: &[u8]) -> &[u8] {
    let filler = |b: &u8| matches!(b, b'\n' | b'\r' | b',' | b' ' | b'\t');
    let Some(last) = bytes.iter().rposition(|b| !filler(b)) else {
        return &bytes[..0];
    };
    match memchr::memchr(b'\n', &bytes[last..]) {
        Some(k) => &bytes[..last + k + 1],
        None => bytes,
    }
}

/// The shape of a CSV file before the reader sees it: UTF-8 text on every line, a comma as the
/// separator, and no row with more fields than the header (a decimal comma, an unquoted comma in
/// text), nor with fewer when `short_rows` (a wide table, where a row cut short would read its
/// last columns as gaps; in a price file the cell parser names the empty cell, after the header's
/// own checks). Quoted fields may hold commas and line breaks. Returns the first blank line after the header
/// (outside quotes; not the end after the last line break), which the cell parser reports as a
/// row with empty cells once the rows before it are read.
pub fn check_csv_shape(file: &Path, bytes: &[u8], short_rows: bool) -> Result<Option<BlankLine>> {
    let row_error = |line: usize, message: String| Error::DataRow {
        file: file.to_path_buf(),
        line,
        message,
    };
    refuse_binary(file, bytes)?;
    let whole = bytes.len();
    let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
    let bom = whole - bytes.len();
    let mut blank = None;
    refuse_empty(file, bytes)?;
    // Checked for the whole file at once, then named at its line; the lines before it are
    // checked first, as if line by line.
    let valid_up_to = std::str::from_utf8(bytes).map_or_else(|e| e.valid_up_to(), |_| bytes.len());
    let mut header_fields = None;
    let mut fewest = 0;
    let (mut fields, mut in_quotes, mut record_line) = (1, false, 1);
    let mut line_start = 0;
    for (i, raw) in bytes.split(|&b| b == b'\n').enumerate() {
        let line = i + 1;
        let start = line_start;
        line_start += raw.len() + 1;
        let crlf = raw.ends_with(b"\r");
        let raw = raw.strip_suffix(b"\r").unwrap_or(raw);
        if valid_up_to < start + raw.len() {
            let message = super::encoding::not_utf8(valid_up_to - start + 1, bytes[valid_up_to]);
            return Err(row_error(line, message));
        }
        if !in_quotes {
            (fields, record_line) = (1, line);
        }
        // Quotes and commas are single bytes that UTF-8 never uses inside another character.
        for (at, &b) in raw.iter().enumerate() {
            match b {
                b'"' => in_quotes = !in_quotes,
                b',' if !in_quotes => fields += 1,
                b'\r' if !in_quotes => {
                    let stray = crlf && at + 1 == raw.len();
                    return Err(row_error(line, lone_carriage_return(at + 1, stray)));
                }
                _ => {}
            }
        }
        if in_quotes {
            continue; // The record goes on over the next line.
        }
        let ends_in_a_break = start + raw.len() < bytes.len();
        if raw.is_empty() && header_fields.is_some() && blank.is_none() && ends_in_a_break {
            blank = Some(BlankLine {
                line,
                byte: bom + start,
            });
        }
        match header_fields {
            None => {
                check_header(&String::from_utf8_lossy(raw))
                    .map_err(|message| row_error(line, message))?;
                header_fields = Some(fields);
                // A header alone ending in a comma leaves its last column unnamed: rows may
                // omit that field.
                fewest = fields - usize::from(raw.last() == Some(&b','));
            }
            // An empty line is the cell parser's to name.
            Some(expected)
                if fields > expected || (short_rows && fields < fewest && !raw.is_empty()) =>
            {
                let shown = String::from_utf8_lossy(raw);
                return Err(row_error(
                    record_line,
                    extra_fields_message(fields, expected, &shown),
                ));
            }
            Some(_) => {}
        }
    }
    match never_closed(bytes, record_line, in_quotes) {
        Some(message) => Err(row_error(record_line, message)),
        None => Ok(blank),
    }
}

/// The message for a quote left open (`open`) at the end of `bytes`, from the record starting on
/// line `line` (from 1), when the quote that stayed open opens a field (RFC 4180; a quote inside a
/// field's text is the shape check's to name): the rest of the file would read as one cell
/// (found by review: its message quoted 35 kB of the file as the cell's value).
fn never_closed(bytes: &[u8], line: usize, open: bool) -> Option<String> {
    if !open {
        return None;
    }
    let start: usize = (bytes.split(|&b| b == b'\n').take(line - 1))
        .map(|l| l.len() + 1)
        .sum();
    let (mut open, mut opens_a_field) = (false, false);
    for (at, &b) in bytes.iter().enumerate().skip(start) {
        if b == b'"' {
            open = !open;
            opens_a_field = open && (at == start || matches!(bytes[at - 1], b',' | b'\n'));
        }
    }
    let opened = bytes[start.min(bytes.len())..]
        .split(|&b| b == b'\n')
        .next()?;
    let shown: String = (String::from_utf8_lossy(opened)
        .trim_end_matches('\r')
        .chars())
    .take(80)
    .collect();
    (open && opens_a_field).then(|| {
        format!(
            "a quote opened on this line (`{shown}`) is never closed, so every line after it \
             would read as part of one cell: close the quote or remove it"
        )
    })
}

/// A file of white space alone, named as empty.
fn refuse_empty(file: &Path, bytes: &[u8]) -> Result<()> {
    match bytes.iter().all(u8::is_ascii_whitespace) {
        true => Err(Error::DataFile {
            file: file.to_path_buf(),
            message: "the file is empty: a header row (date,price) and one row per date are \
                      expected"
                .into(),
        }),
        false => Ok(()),
    }
}

/// A workbook, Parquet or UTF-16 file given where CSV text belongs, named as what it is.
fn refuse_binary(file: &Path, bytes: &[u8]) -> Result<()> {
    match super::encoding::binary_kind(bytes) {
        Some(kind) => Err(Error::DataFile {
            file: file.to_path_buf(),
            message: format!(
                "the file is {kind}, not CSV text: save it as CSV (comma-separated, UTF-8), \
                 or, where hurdle reads workbooks or Parquet (a [sources.NAME] table, a \
                 universe's panel), name the file with its own extension"
            ),
        }),
        None => Ok(()),
    }
}

/// The message for a carriage return that does not end a line, at its 1-based byte in the line:
/// lines ended by CR alone (classic Mac OS), which every other reader here takes as one line.
/// The first carriage return in `bytes` followed by something other than a line feed, as
/// (line, byte within the line), both counted from 1, and whether it stands just before a CRLF
/// (a line ended by CR CR LF): where a file whose lines end in CR alone is named. A CR that
/// ends the bytes (a last line without its LF) is not one.
pub fn first_lone_carriage_return(bytes: &[u8]) -> Option<(usize, usize, bool)> {
    let lone = |i: usize| bytes[i] == b'\r' && bytes.get(i + 1).is_some_and(|&b| b != b'\n');
    let at = (0..bytes.len()).find(|&i| lone(i))?;
    let stray = bytes[at + 1..].starts_with(b"\r\n");
    let before = &bytes[..at];
    let line_start = before
        .iter()
        .rposition(|&b| b == b'\n')
        .map_or(0, |i| i + 1);
    let line = before.iter().filter(|&&b| b == b'\n').count() + 1;
    Some((line, at - line_start + 1, stray))
}

/// The message for a carriage return inside a line at byte `column`; `stray` when it stands
/// just before the line's own CRLF (found by review: a file of CR CR LF line ends, as a CRLF
/// file converted once more gives, was said to end its lines with CR alone).
pub fn lone_carriage_return(column: usize, stray: bool) -> String {
    match stray {
        true => format!(
            "byte {column} is a second carriage return before the line's CRLF (the line ends \
             with CR CR LF, as a file with CRLF line ends converted once more gives); save it \
             with LF or CRLF line ends"
        ),
        false => format!(
            "byte {column} is a carriage return inside the line: the file's lines end with CR \
             alone; save it with LF or CRLF line ends"
        ),
    }
}

/// A line with nothing on it (or only a carriage return) inside a CSV file's rows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct BlankLine {
    /// 1-based.
    pub line: usize,
    /// The offset of its first byte in the file.
    pub byte: usize,
}

/// The header must be separated by commas: a single field holding `;` or a tab is another
/// separator, which would otherwise surface as "no column named `date`".
fn check_header(header: &str) -> std::result::Result<(), String> {
    match other_separator(header) {
        Some(name) => Err(format!(
            "the header `{header}` is separated by {name}; hurdle reads comma-separated files \
             with a decimal point (date,price then 2026-09-30,43.7678)"
        )),
        None => Ok(()),
    }
}

/// The separator a header line uses instead of commas, by name ("semicolons" or "tabs"), when
/// it has no comma but holds `;` or a tab: spreadsheets export such files where the decimal
/// mark is a comma. One rule for price and yield files, panels and attributes.
pub fn other_separator(header: &str) -> Option<&'static str> {
    if header.contains(',') {
        return None;
    }
    [(';', "semicolons"), ('\t', "tabs")]
        .into_iter()
        .find(|(separator, _)| header.contains(*separator))
        .map(|(_, name)| name)
}

/// Yields written as percentages: any yield of 1 (100% a year) or more. Called by
/// `data::parse_series` on every series it reads; `value_column` names the column.
pub fn check_series_values(
    file: &Path,
    value_column: &str,
    (dates, values): (&[chrono::NaiveDate], &[f64]),
    kind: ValueKind,
) -> Result<()> {
    if kind != ValueKind::Yield {
        return Ok(());
    }
    match values.iter().position(|&y| y >= 1.0) {
        Some(i) => Err(Error::DataRow {
            file: file.to_path_buf(),
            line: i + 2,
            message: format!(
                "`{value_column}` = {} on {} {}",
                show(values[i]),
                dates[i],
                percent_yield(values[i]).unwrap_or_default()
            ),
        }),
        None => Ok(()),
    }
}

/// Why a yield of 1 (100% a year) or more is refused: it is a percentage typed for a decimal.
/// `None` for a yield below 1. One rule for yield files and wide tables' yield columns.
pub fn percent_yield(value: f64) -> Option<String> {
    // Up to 100 it reads as a percentage (3.8 for 3.8%); beyond, as basis points (286.1 for
    // 2.861%) up to 10,000, and beyond that as prices or an index level, not yields at all.
    let advice = if value < 100.0 {
        "this looks like a percentage; divide the column by 100"
    } else if value < 10_000.0 {
        "this looks like basis points or prices; basis points are divided by 10,000, and a \
         price column is not a yield series (check the yield column the case names)"
    } else {
        "this looks like prices or an index level, not yields; check the yield column the case \
         names"
    };
    (value >= 1.0).then(|| {
        format!(
            "is {}% a year: yields are decimals (0.038 for 3.8%), and {advice}",
            // Rounded to 10 decimals so that 2.2861 reads 228.61, not 228.60999999999999.
            show((value * 100.0 * 1e10).round() / 1e10)
        )
    })
}

/// Whether a name, id or label is one line of text: no line break or other control character
/// (a quoted CSV cell, a wrapped spreadsheet header or `"A\nB"` in TOML can hold one, and it
/// would split the memo's and the summary's tables). Panels, attributes and case files ask it.
pub fn is_one_line(text: &str) -> bool {
    !text.chars().any(char::is_control)
}

/// An explicit direction embedding, override or isolate, a line or paragraph separator, an
/// invisible character that is no part of a script's writing (zero-width space U+200B, word
/// joiner U+2060, byte-order mark U+FEFF; the joiners U+200C and U+200D, which Persian and emoji
/// need, and the soft hyphen U+00AD of names copied from web pages, are kept), or a Unicode noncharacter (Unicode 15, §23.2 "Layout
/// Controls" for U+202A–U+202E and U+2066–U+2069, §5.8 for U+2028 and U+2029, §23.7
/// "Noncharacters" for U+FDD0–U+FDEF and the last two code points of each plane; from
/// memory).
pub(crate) fn unseen_or_unwritable(c: char) -> bool {
    matches!(c,
        '\u{2028}' | '\u{2029}' | '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}'
        | '\u{fdd0}'..='\u{fdef}' | '\u{200b}' | '\u{2060}' | '\u{feff}')
        || (c as u32 & 0xfffe) == 0xfffe
}

#[cfg(test)]
mod tests {
    use super::*;

    // 2.2861·100 is 228.60999999999999 in binary (Python's repr of 2.2861*100 shows it); the
    // message writes the percentage the user typed, 228.61 (found by review).
    #[test]
    fn a_percent_yield_is_written_as_typed() {
        let why = percent_yield(2.2861).unwrap();
        assert!(why.starts_with("is 228.61% a year"), "{why}");
        assert_eq!(percent_yield(0.99), None);
    }

    // RFC 4180 §2, rules 5-7: a quoted field may hold commas, line breaks (LF or CRLF) and
    // doubled quotes; a quote is a field's quote only as its first character. Counted by hand.
    #[test]
    fn records_are_split_as_rfc_4180_splits_them() {
        let good = b"a,b,c\n\"x, \"\"y\"\"\r\nz\",2,3\n\nq,\"r\",4\r\n";
        assert_eq!(first_bad_record(good, 3, Some(3)), None);
        let bad = |text: &[u8]| first_bad_record(text, 3, Some(3)).unwrap();
        let text = b"a,b,c\n\"x,\ny\",2,3\nq, \"r, s\",4\n";
        let (record, message) = bad(text);
        // Record 2 (the header is record 0) starts on line 4: the quoted break moves it.
        assert_eq!(record, 2);
        assert_eq!(record_line(text, record), Some(4));
        assert_eq!(record_line(b"a\nb\nc\n", 2), Some(3));
        assert!(
            message.starts_with("`q, \"r, s\",4` has a quote after a space"),
            "{message}"
        );
        let (line, message) = bad(b"a,b,c\n1,\"t\"u,6\n");
        assert_eq!(line, 1);
        assert!(
            message.contains("text after a quoted field's closing quote"),
            "{message}"
        );
        assert!(bad(b"a,b,c\n1,5\"0,6\n")
            .1
            .contains("a quote inside a field"));
        let (line, message) = bad(b"a,b,c\n1,2,3\n4,\"5,6\n7,8,9\n");
        assert_eq!(line, 2);
        assert!(message.contains("never closed"), "{message}");
        let (line, message) = bad(b"a,b,c\n1,2\r\n");
        assert_eq!(line, 1);
        assert!(
            message.starts_with("`1,2` has 2 fields but the header has 3"),
            "{message}"
        );
        assert_eq!(bad(b"a,b,c\n1,2,3,4\n").0, 1);
        let (line, message) = bad(b"a,b,c\n1,2,3\n   \n");
        assert_eq!(line, 2);
        assert!(
            message.starts_with("the line holds only white space"),
            "{message}"
        );
        // A byte-order mark before a quoted first name is no quote inside a field.
        assert_eq!(
            first_bad_record(b"\xEF\xBB\xBF\"a\",b,c\n1,2,3\n", 3, Some(3)),
            None
        );
    }

    #[test]
    fn a_lone_carriage_return_is_found_at_its_line_and_byte() {
        assert_eq!(
            first_lone_carriage_return(b"date,price\r2024"),
            Some((1, 11, false))
        );
        assert_eq!(
            first_lone_carriage_return(b"a\r\nbc\rd"),
            Some((2, 3, false))
        );
        // CR CR LF: the first CR is the stray one, before the line's CRLF.
        assert_eq!(
            first_lone_carriage_return(b"date,price\r\r\n1,2\r\r\n"),
            Some((1, 11, true))
        );
        assert!(lone_carriage_return(11, true).contains("CR CR LF"));
        assert_eq!(first_lone_carriage_return(b"a\r\nb\r"), None);
        assert_eq!(first_lone_carriage_return(b"a\nb"), None);
    }

    // Columns are counted from 1 in the message, as a spreadsheet's user counts them.
    #[test]
    fn a_column_name_is_found_once_or_named_as_repeated() {
        let header = ["date", "price", "volume", "price"];
        assert_eq!(unique_column(header, "date"), Ok(Some(0)));
        assert_eq!(unique_column(header, "close"), Ok(None));
        let repeated = unique_column(header, "price").unwrap_err();
        assert!(
            repeated.contains("`price` in columns 2 and 4"),
            "{repeated}"
        );
    }

    fn shape(text: &[u8]) -> String {
        match check_csv_shape(Path::new("p.csv"), text, false) {
            Ok(None) => "ok".into(),
            Ok(Some(blank)) => format!("blank line {} at byte {}", blank.line, blank.byte),
            Err(e) => e.to_string(),
        }
    }

    #[test]
    fn csv_shape_names_the_line() {
        assert_eq!(shape(b"date,price\n2026-01-01,1.5\n"), "ok");
        assert_eq!(shape(b"\xEF\xBB\xBFdate,price\r\n2026-01-01,1.5\r\n"), "ok");
        assert_eq!(shape(b"date,name\n2026-01-01,\"a, b\"\n"), "ok");
        assert_eq!(
            shape(b"date,name\n2026-01-01,\"a\nb\"\n2026-01-02,c\n"),
            "ok"
        );
        assert!(shape(b"date,price\n2026-01-01,1,5\n").contains("line 2"));
        assert!(shape(b"date;price\n2026-01-01;1,5\n").contains("semicolons"));
        let bad = shape(b"date,price\n2026-01-01,1.5\n2026-01-02,\xff\n");
        assert!(bad.contains("line 3") && bad.contains("0xFF"), "{bad}");
        // The byte's column within its line (here after a two-byte é), and a CRLF file.
        let bad = shape(b"date,price\r\n2026-01-01,1.5\r\n\xc3\xa9,\xfe\r\n");
        assert!(
            bad.contains("line 3") && bad.contains("byte 4 (0xFE)"),
            "{bad}"
        );
        // Lines ended by a carriage return alone are refused at the first one; a carriage return
        // inside a quoted cell is text.
        let mac = shape(b"date,price\r2026-01-01,1.5\r2026-01-02,1.6\r");
        assert!(mac.contains("line 1") && mac.contains("byte 11"), "{mac}");
        assert_eq!(shape(b"date,name\n2026-01-01,\"a\rb\"\n"), "ok");
        // Lines are judged in order: a line with too many fields before the bad byte is named.
        let first = shape(b"date,price\n2026-01-01,1,5\n2026-01-02,\xff\n");
        assert!(
            first.contains("line 2") && first.contains("3 fields"),
            "{first}"
        );
    }

    // Empty lines after the last row (blank, or only commas and white space, LF or CRLF) are
    // cut, the last row keeping its line end; those between rows, and a quoted field, stay.
    #[test]
    fn trailing_empty_records_are_cut_and_inner_ones_kept() {
        let cut = |text: &[u8]| String::from_utf8(without_trailing_empty_records(text).to_vec());
        assert_eq!(cut(b"a,b\n1,2\n\n\n").unwrap(), "a,b\n1,2\n");
        assert_eq!(
            cut(b"a,b\r\n1,2\r\n,\r\n , \r\n").unwrap(),
            "a,b\r\n1,2\r\n"
        );
        assert_eq!(cut(b"a,b,c\n1,,\n,,\n").unwrap(), "a,b,c\n1,,\n");
        assert_eq!(cut(b"a,b\n\n1,2").unwrap(), "a,b\n\n1,2");
        assert_eq!(cut(b"a,b\n1,\"x\"\n\n").unwrap(), "a,b\n1,\"x\"\n");
        assert_eq!(cut(b"\n,\n").unwrap(), "");
    }

    // A blank line is found by its line and first byte (after a BOM, in a CRLF file, after a
    // quoted line break); the end of the file after its last line break is not one.
    #[test]
    fn csv_shape_finds_the_first_blank_line() {
        assert_eq!(shape(b"date,price\n2026-01-01,1.5\n"), "ok");
        assert_eq!(shape(b"date,price\n2026-01-01,1.5"), "ok");
        assert_eq!(
            shape(b"date,price\n2026-01-01,1.5\n\n2026-01-02,2\n\n"),
            "blank line 3 at byte 26"
        );
        assert_eq!(
            shape(b"\xEF\xBB\xBFdate,price\r\n2026-01-01,1.5\r\n\r\n"),
            "blank line 3 at byte 31"
        );
        assert_eq!(
            shape(b"date,name\n2026-01-01,\"a\n\nb\"\n2026-01-02,c\n\n"),
            "blank line 6 at byte 41"
        );
    }
}
