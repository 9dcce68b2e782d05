//! Spreadsheet workbooks (`.xlsx`, `.xlsm`, `.xls`, `.ods`) read through calamine, one sheet
//! chosen by name.
//!
//! The workbook is opened from the same bytes that are hashed. The first row of the sheet with
//! anything in it is the header; the rows below are data. A password-protected workbook, or a
//! file that is not a workbook at all, is refused with a message that says which. A hidden
//! sheet is marked so wherever sheets are listed, and noted when read; a filter on the sheet is
//! noted too, since calamine does not say which rows or columns a workbook hides.

use std::io::{Cursor, Read, Seek};
use std::path::Path;

use calamine::{open_workbook_from_rs, Data, DataRef, Ods, Range, Reader, SheetVisible, Xls, Xlsx};

use super::cells::{Cell, Place, PlaceKind};
use super::{ChoiceWords, RawTable};

/// The last date serial a workbook holds (9999-12-31 in the 1900 date system; ECMA-376 Part 1,
/// §18.17.4.1, from memory).
const MAX_SERIAL: f64 = 2_958_465.999_999;

/// The most cells a sheet's rectangle (from its first used cell to its last) may span: a sheet
/// is held as that whole rectangle, so one stray entry far from the table (a space typed at
/// XFD1048576) would ask for more memory than a machine has. 25 million cells is about 800 MB,
/// far beyond any price table (30,000 days × 400 series is 12 million).
const MAX_SHEET_CELLS: u64 = 25_000_000;

/// The first bytes of a ZIP package (`.xlsx`, `.xlsm`, `.ods`).
const ZIP_MAGIC: &[u8] = b"PK\x03\x04";
/// The first bytes of an OLE compound file (`.xls`, and an encrypted `.xlsx`).
const OLE_MAGIC: &[u8] = &[0xD0, 0xCF, 0x11, 0xE0, 0xA1, 0xB1, 0x1A, 0xE1];

/// Reads the sheet `sheet` (or the only sheet) of the workbook in `bytes`.
pub(crate) fn read_sheet(
    path: &Path,
    bytes: &[u8],
    sheet: Option<&str>,
    words: &ChoiceWords,
) -> Result<RawTable, String> {
    let extension = path
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase)
        .unwrap_or_default();
    // calamine panics on some damaged files (an offset past the end of an .xls stream, found
    // by corrupting single bytes of a fixture): the guard makes that a damaged-workbook error.
    let loaded = crate::io::guard::decoding(|| match extension.as_str() {
        "xls" => load::<Xls<_>>(bytes, (sheet, words), &extension),
        "ods" => load::<Ods<_>>(bytes, (sheet, words), &extension),
        _ => load::<Xlsx<_>>(bytes, (sheet, words), &extension),
    });
    let (name, range, system_1904, notes) = match loaded {
        Ok(loaded) => loaded?,
        Err(reason) => return Err(format!("is a damaged .{extension} workbook: {reason}")),
    };
    let date_system_1904 = match extension.as_str() {
        "ods" => ods_null_date(bytes)?,
        _ => system_1904,
    };
    from_range(name, range, date_system_1904, notes)
}

/// What hurdle asks of each kind of workbook beyond calamine's `Reader`: its date system, and a
/// sheet's cells.
trait Book<RS: Read + Seek>: Reader<RS> {
    /// Whether date serials count from 1904 (`.xlsx` and `.xls` say; OpenDocument stores dates
    /// as dates).
    fn system_1904(&self) -> bool;

    /// The sheet's cells as one rectangle.
    fn sheet_cells(&mut self, name: &str) -> Result<Range<Data>, String>
    where
        Self::Error: std::fmt::Display,
    {
        self.worksheet_range(name)
            .map_err(|e| format!("sheet \"{name}\" cannot be read: {e}"))
    }
}

impl<RS: Read + Seek> Book<RS> for Xls<RS> {
    fn system_1904(&self) -> bool {
        self.has_1904_epoch()
    }
}

impl<RS: Read + Seek> Book<RS> for Ods<RS> {
    /// Read from the package by [`ods_null_date`]: calamine does not say.
    fn system_1904(&self) -> bool {
        false
    }

    /// calamine holds an OpenDocument sheet as its whole rectangle once read (up to its own
    /// limit, which it reports as an error): a sheet over [`MAX_SHEET_CELLS`] is refused as an
    /// `.xlsx` sheet is, naming the cells that stretch it.
    fn sheet_cells(&mut self, name: &str) -> Result<Range<Data>, String> {
        let range = self.worksheet_range(name).map_err(|e| match e {
            calamine::OdsError::CellLimitExceeded { .. } => format!(
                "sheet \"{name}\" spans more cells than a workbook reader holds: a stray entry \
                 far from the table? delete what lies outside it, or save the table as CSV"
            ),
            other => format!("sheet \"{name}\" cannot be read: {other}"),
        })?;
        let (top, left) = range.start().unwrap_or((0, 0));
        let used = range
            .used_cells()
            .map(|(r, c, value)| ((top + r as u32, left + c as u32), value));
        check_span(name, used)?;
        Ok(range)
    }
}

impl<RS: Read + Seek> Book<RS> for Xlsx<RS> {
    fn system_1904(&self) -> bool {
        self.has_1904_epoch()
    }

    /// Read cell by cell, so that a rectangle too large to hold is refused before it is built,
    /// naming the cells that stretch it.
    fn sheet_cells(&mut self, name: &str) -> Result<Range<Data>, String> {
        let unreadable = |e: calamine::XlsxError| format!("sheet \"{name}\" cannot be read: {e}");
        let mut reader = self.worksheet_cells_reader(name).map_err(unreadable)?;
        let mut cells = Vec::new();
        // The cell read last, to place a cell the reader cannot take (found by review: "Parse
        // float error" named no cell); cells come row by row.
        let mut last: Option<(u32, u32)> = None;
        let unreadable_after = |e: calamine::XlsxError, last: Option<(u32, u32)>| {
            let place = match last {
                Some((row, column)) => format!(
                    "the first cell after {}{} that holds a value",
                    super::cells::column_letters(column as usize),
                    row + 1
                ),
                None => "its first cell that holds a value".to_string(),
            };
            let advice = match e {
                calamine::XlsxError::ParseFloat(_) | calamine::XlsxError::ParseInt(_) => {
                    " (a cell stored as a number holding text the reader cannot take as one, \
                     such as 0x10 or a number with spaces: retype it, or save the sheet as CSV)"
                }
                _ => "",
            };
            format!("sheet \"{name}\" cannot be read at {place}: {e}{advice}")
        };
        while let Some(cell) = reader.next_cell().map_err(|e| unreadable_after(e, last))? {
            last = Some(cell.get_position());
            if !matches!(cell.get_value(), DataRef::Empty) {
                let value = Data::from(cell.get_value().clone());
                cells.push(calamine::Cell::new(cell.get_position(), value));
            }
        }
        let each = cells.iter().map(|c| (c.get_position(), c.get_value()));
        check_span(name, each)?;
        Ok(Range::from_sparse(cells))
    }
}

/// Whether an OpenDocument workbook counts its date serials from 1904-01-01: its
/// `table:null-date` (OpenDocument 1.2, part 1, 9.4.2, from memory), which a workbook converted
/// from one in the 1904 system keeps (found by review: such a workbook's serial dates were read
/// 1,462 days early, without a word). Absent, or 1899-12-30, is the usual system. Another null
/// date (1900-01-01, an old option) is refused, since serials would be read days off. The
/// setting sits in `content.xml` before the first sheet, so only that much is read.
fn ods_null_date(bytes: &[u8]) -> Result<bool, String> {
    let damaged = |e: &dyn std::fmt::Display| format!("is a damaged .ods workbook: {e}");
    let mut package = zip::ZipArchive::new(Cursor::new(bytes)).map_err(|e| damaged(&e))?;
    let mut content = package.by_name("content.xml").map_err(|e| damaged(&e))?;
    let (mut seen, mut chunk) = (Vec::new(), vec![0u8; 1 << 16]);
    let setting = loop {
        let read = content.read(&mut chunk).map_err(|e| damaged(&e))?;
        seen.extend_from_slice(&chunk[..read]);
        let text = String::from_utf8_lossy(&seen);
        if let Some(at) = text.find("<table:null-date") {
            let element = &text[at..];
            if let Some(end) = element.find('>') {
                break attribute(&element[..end], "table:date-value")
                    .map(|v| v.get(..10).unwrap_or(v).to_string());
            }
        }
        if read == 0 || text.contains("<table:table ") {
            break None;
        }
    };
    match setting.as_deref() {
        None | Some("1899-12-30") => Ok(false),
        Some("1904-01-01") => Ok(true),
        Some(other) => Err(format!(
            "counts its dates from {other} (its null date, a setting of the workbook), which \
             hurdle does not read: set the workbook's null date to 1899-12-30 (the usual), or \
             save the table as .xlsx or CSV"
        )),
    }
}

/// The value of the XML attribute `name` in an element's text, quoted either way, with white
/// space allowed around its `=` (found by review: single quotes were missed).
fn attribute<'a>(element: &'a str, name: &str) -> Option<&'a str> {
    let mut rest = element;
    while let Some(at) = rest.find(name) {
        let after = rest[at + name.len()..].trim_start();
        // The whole name, not the end of another (`xtable:date-value`; found by review).
        let whole = rest[..at]
            .chars()
            .next_back()
            .is_none_or(char::is_whitespace);
        if let Some(value) = after.strip_prefix('=').filter(|_| whole) {
            let value = value.trim_start();
            let quote = value.chars().next().filter(|c| *c == '"' || *c == '\'')?;
            let value = &value[1..];
            return value.find(quote).map(|end| &value[..end]);
        }
        rest = &rest[at + name.len()..];
    }
    None
}

/// Refuses cells whose rectangle spans more than [`MAX_SHEET_CELLS`], naming the cells that
/// stretch it: the last row's when it lies more than half the height below the row before it,
/// the last column's likewise (the strays, as a rule), each with its value.
fn check_span<'a>(
    name: &str,
    cells: impl Iterator<Item = ((u32, u32), &'a Data)> + Clone,
) -> Result<(), String> {
    let rows = || cells.clone().map(|((row, _), _)| row);
    let columns = || cells.clone().map(|((_, column), _)| column);
    let (Some(top), Some(bottom), Some(left), Some(right)) =
        (rows().min(), rows().max(), columns().min(), columns().max())
    else {
        return Ok(());
    };
    let (height, width) = (u64::from(bottom - top) + 1, u64::from(right - left) + 1);
    if height * width <= MAX_SHEET_CELLS {
        return Ok(());
    }
    let at = |((row, column), value): ((u32, u32), &Data)| {
        let shown = match value {
            Data::String(text) => format!("the text {text:?}"),
            other => cell(other).shown(),
        };
        format!(
            "{}{} ({shown})",
            super::cells::column_letters(column as usize),
            row + 1
        )
    };
    let next_row = rows().filter(|&r| r < bottom).max().unwrap_or(top);
    let next_column = columns().filter(|&c| c < right).max().unwrap_or(left);
    let mut strays = Vec::new();
    if u64::from(bottom - next_row) * 2 > height {
        strays.extend(cells.clone().find(|((r, _), _)| *r == bottom).map(at));
    }
    if u64::from(right - next_column) * 2 > width {
        let found = cells.clone().find(|((_, c), _)| *c == right).map(at);
        strays.extend(found.filter(|f| !strays.contains(f)));
    }
    let because = match strays.is_empty() {
        true => "its used cells".to_string(),
        false => format!(
            "{}, far from the rest: delete what lies outside the table",
            strays.join(" and ")
        ),
    };
    Err(format!(
        "sheet \"{name}\" spans {height} rows by {width} columns ({} cells, more than the {} \
         hurdle holds) because of {because}, or save the table as CSV",
        height * width,
        MAX_SHEET_CELLS
    ))
}

/// A sheet as `load` found it: its name, its cells, whether the workbook counts dates from
/// 1904, and what was seen but not acted on (a hidden sheet, a filter).
type Loaded = (String, Range<Data>, bool, Vec<String>);

/// Opens the workbook with reader `R`, picks the sheet and returns its name and cells.
fn load<'a, R>(
    bytes: &'a [u8],
    (sheet, words): (Option<&str>, &ChoiceWords),
    extension: &str,
) -> Result<Loaded, String>
where
    R: Book<Cursor<&'a [u8]>>,
    R::Error: std::fmt::Display,
{
    let mut workbook: R = open_workbook_from_rs(Cursor::new(bytes))
        .map_err(|e: R::Error| open_error(bytes, extension, &e.to_string()))?;
    let sheets = workbook.sheets_metadata().to_vec();
    let name = pick_sheet(&sheets, sheet, words)?;
    let range = workbook.sheet_cells(&name)?;
    // A formula the workbook was saved without calculating has no stored value, and would read
    // as an empty cell, a missing price: refused instead. (Formulas that cannot be read are left
    // to their values.)
    // Not for OpenDocument: a formula whose result is empty text ("") is saved there without a
    // value type, which reads exactly like one never calculated.
    if extension != "ods" {
        if let Ok(formulas) = workbook.worksheet_formula(&name) {
            check_formulas(&name, &formulas, &range)?;
            if extension != "xls" && recalculates_on_load(bytes) {
                check_placeholder_results(&name, &formulas, &range)?;
            }
        }
    }
    let mut notes = Vec::new();
    if sheets
        .iter()
        .any(|s| s.name == name && s.visible != SheetVisible::Visible)
    {
        notes.push(format!(
            "sheet \"{name}\" is hidden in the workbook (its spreadsheet program does not show \
             it); check that it holds the table meant"
        ));
    }
    notes.extend(filter_note(&name, workbook.defined_names()));
    Ok((name, range, workbook.system_1904(), notes))
}

/// The sheet named `wanted`, or the only one; the messages list every sheet, a hidden one
/// marked so.
fn pick_sheet(
    sheets: &[calamine::Sheet],
    wanted: Option<&str>,
    words: &ChoiceWords,
) -> Result<String, String> {
    let listed = || {
        sheets
            .iter()
            .map(|s| match s.visible {
                SheetVisible::Visible => format!("\"{}\"", s.name),
                _ => format!("\"{}\" (hidden)", s.name),
            })
            .collect::<Vec<_>>()
            .join(", ")
    };
    match wanted {
        Some(wanted) => match sheets.iter().find(|s| s.name == wanted) {
            Some(found) => Ok(found.name.clone()),
            None => Err(format!(
                "has no sheet named \"{wanted}\"; its sheets are: {}",
                listed()
            )),
        },
        None if sheets.len() == 1 => Ok(sheets[0].name.clone()),
        None => Err(format!(
            "has {} sheets; name the one with the prices {}: {}",
            sheets.len(),
            words.name_the_sheet,
            listed()
        )),
    }
}

/// Refuses a formula saved without its value, naming its cell.
fn check_formulas(name: &str, formulas: &Range<String>, range: &Range<Data>) -> Result<(), String> {
    let (first_row, first_column) = formulas.start().unwrap_or((0, 0));
    let uncalculated = formulas.cells().find(|&(row, column, formula)| {
        let at = (first_row + row as u32, first_column + column as u32);
        !formula.is_empty() && matches!(range.get_value(at), None | Some(Data::Empty))
    });
    match uncalculated {
        Some((row, column, formula)) => Err(format!(
            "sheet \"{name}\", cell {}{} holds the formula `={}` with no saved value (the \
             workbook was saved without calculating it); open it in its spreadsheet program, let \
             it calculate, and save it again",
            super::cells::column_letters(first_column as usize + column),
            first_row as usize + row + 1,
            formula.trim_start_matches('=')
        )),
        None => Ok(()),
    }
}

/// Whether an `.xlsx` workbook asks to be recalculated when opened (`fullCalcOnLoad` on its
/// `calcPr`, ECMA-376 Part 1, 18.2.2, from memory): what a library that writes formulas without
/// calculating them sets, storing a placeholder result (0) for each.
fn recalculates_on_load(bytes: &[u8]) -> bool {
    let Ok(mut package) = zip::ZipArchive::new(Cursor::new(bytes)) else {
        return false;
    };
    let Ok(mut part) = package.by_name("xl/workbook.xml") else {
        return false;
    };
    let mut text = String::new();
    if part.read_to_string(&mut text).is_err() {
        return false;
    }
    text.find("<calcPr").is_some_and(|at| {
        let element = &text[at..];
        let element = &element[..element.find('>').unwrap_or(element.len())];
        // Either quote, white space around `=` (found by review: only `="1"` was seen).
        matches!(attribute(element, "fullCalcOnLoad"), Some("1" | "true"))
    })
}

/// Refuses formulas whose saved results are all 0 in a workbook that asks to be recalculated
/// when opened: placeholders its writer stored without calculating, not results (found by
/// review: a yield column of such formulas was read as rates of 0 without a word). A price of
/// 0 is refused anyway; this names the cause.
fn check_placeholder_results(
    name: &str,
    formulas: &Range<String>,
    range: &Range<Data>,
) -> Result<(), String> {
    let (first_row, first_column) = formulas.start().unwrap_or((0, 0));
    let with_results: Vec<(usize, usize, &String, Option<&Data>)> = formulas
        .cells()
        .filter(|(_, _, formula)| !formula.is_empty())
        .map(|(row, column, formula)| {
            let at = (first_row + row as u32, first_column + column as u32);
            (row, column, formula, range.get_value(at))
        })
        .collect();
    let zero = |value: Option<&Data>| match value {
        Some(Data::Float(v)) => *v == 0.0,
        Some(Data::Int(v)) => *v == 0,
        _ => false,
    };
    match with_results.first() {
        Some(&(row, column, formula, _)) if with_results.iter().all(|c| zero(c.3)) => Err(format!(
            "sheet \"{name}\", cell {}{} holds the formula `={}` whose saved result is 0, as \
             for every formula of the sheet, in a workbook that asks to be recalculated when \
             opened: a placeholder, as libraries that write formulas without calculating them \
             store it, which hurdle cannot tell from a result; open the workbook in its \
             spreadsheet program, let it calculate, and save it again (results that are truly \
             0 can be saved as values)",
            super::cells::column_letters(first_column as usize + column),
            first_row as usize + row + 1,
            formula.trim_start_matches('=')
        )),
        _ => Ok(()),
    }
}

/// A note when the workbook's filter (its `_xlnm._FilterDatabase` name, which a spreadsheet
/// program writes with a filter's range) lies on sheet `name`. calamine does not say which rows
/// or columns a filter or the user hid, so hidden rows are read like any other: the note says
/// so, naming the filter's range.
fn filter_note(name: &str, defined: &[(String, String)]) -> Option<String> {
    let quoted = format!("'{}'!", name.replace('\'', "''"));
    let plain = format!("{name}!");
    defined.iter().find_map(|(defined_name, formula)| {
        let range = formula
            .strip_prefix(&quoted)
            .or_else(|| formula.strip_prefix(&plain))?;
        // An .xls file stores the name as its built-in code, 0x0D (MS-XLS, the Lbl record).
        let filter = matches!(defined_name.as_str(), "_xlnm._FilterDatabase" | "\u{d}");
        filter.then(|| {
            format!(
                "sheet \"{name}\" has a filter over {}: rows a filter hides (and rows or columns \
                 hidden by hand) are read like any other, since the workbook reader does not \
                 say which are hidden; check that every row of the table is meant",
                range.replace('$', "")
            )
        })
    })
}

/// The message for a workbook calamine cannot open: encrypted, not a workbook, or damaged.
fn open_error(bytes: &[u8], extension: &str, detail: &str) -> String {
    if detail.contains("password protected") {
        return "is encrypted (password-protected), so its cells cannot be read; open it in its \
                spreadsheet program and save a copy without a password"
            .to_string();
    }
    let expected = if extension == "xls" {
        OLE_MAGIC
    } else {
        ZIP_MAGIC
    };
    if !bytes.starts_with(expected) {
        return format!(
            "is not a .{extension} workbook: its bytes do not start the way a .{extension} file \
             does (is it another kind of file renamed?)"
        );
    }
    // calamine reads every sheet of an OpenDocument file as it opens it, and stops at its own
    // cell limit: a sheet stretched by one stray entry, not a damaged file.
    if detail.starts_with("Cell limit exceeded") {
        return format!(
            "has a sheet that spans more cells than a workbook reader holds ({detail}): a stray \
             entry far from the table? delete what lies outside it, or save the table as CSV"
        );
    }
    format!("is a damaged or unreadable .{extension} workbook: {detail}")
}

/// The header (first non-empty row) and the cells below it.
fn from_range(
    sheet: String,
    range: Range<Data>,
    date_system_1904: bool,
    notes: Vec<String>,
) -> Result<RawTable, String> {
    let Some((start_row, start_column)) = range.start() else {
        return Err(format!("sheet \"{sheet}\" is empty"));
    };
    let rows: Vec<&[Data]> = range.rows().collect();
    let header_at = rows
        .iter()
        .position(|row| row.iter().any(|c| !matches!(c, Data::Empty)))
        .ok_or_else(|| format!("sheet \"{sheet}\" is empty"))?;
    let header: Vec<String> = rows[header_at].iter().map(header_name).collect();
    let mut columns: Vec<Vec<Cell>> = vec![Vec::new(); header.len()];
    for row in &rows[header_at + 1..] {
        for (j, value) in row.iter().enumerate() {
            columns[j].push(cell(value));
        }
    }
    Ok(RawTable {
        sheet: Some(sheet.clone()),
        place: Place {
            kind: PlaceKind::Sheet(sheet),
            // 1-based sheet row of the first data row: the header's row plus one.
            first_row: start_row as usize + header_at + 2,
            first_column: start_column as usize,
            header: header.clone(),
            lines: Vec::new(),
        },
        header,
        columns,
        date_system_1904,
        notes,
    })
}

/// A header cell as a column name (numbers and dates as they read).
fn header_name(value: &Data) -> String {
    match cell(value) {
        Cell::Empty => String::new(),
        Cell::Number(x) => x.to_string(),
        Cell::Text(text) => text.trim().to_string(),
        Cell::Date(d) => d.to_string(),
        Cell::Bool(b) => if b { "TRUE" } else { "FALSE" }.to_string(),
        Cell::Error(e) => e,
    }
}

/// A calamine value as a cell. Date cells become dates (the time of day is dropped); ISO text
/// from OpenDocument files stays text, which the date rules read.
fn cell(value: &Data) -> Cell {
    match value {
        Data::Empty => Cell::Empty,
        Data::Int(i) => Cell::Number(*i as f64),
        Data::Float(x) => Cell::Number(*x),
        Data::String(s) => Cell::Text(s.clone()),
        Data::Bool(b) => Cell::Bool(*b),
        // calamine's conversion panics far outside the serials a workbook can hold (a damaged
        // file); those stay numbers, which the date rules refuse by cell.
        Data::DateTime(dt) if dt.is_datetime() && (0.0..=MAX_SERIAL).contains(&dt.as_f64()) => {
            match dt.as_datetime() {
                Some(moment) => Cell::Date(moment.date()),
                None => Cell::Number(dt.as_f64()),
            }
        }
        Data::DateTime(dt) => Cell::Number(dt.as_f64()),
        Data::DateTimeIso(s) | Data::DurationIso(s) => Cell::Text(s.clone()),
        Data::Error(e) => Cell::Error(e.to_string()),
    }
}

#[cfg(test)]
mod tests {
    // XML attributes as the ODS null date may be written (XML 1.0, 3.1: either quote, white
    // space around `=`); a longer name ending in the same text is another attribute (found by
    // review: `xtable:date-value` was read as `table:date-value`).
    // `fullCalcOnLoad` on the package's `calcPr`, written with either quote and spaces around
    // `=` (found by review: only `="1"` was seen); 0 or absent asks for no recalculation.
    #[test]
    fn recalculation_on_load_is_read_however_the_attribute_is_quoted() {
        use std::io::Write;
        let package = |calc: &str| {
            let mut zip = zip::ZipWriter::new(Cursor::new(Vec::new()));
            zip.start_file("xl/workbook.xml", zip::write::SimpleFileOptions::default())
                .unwrap();
            let xml = format!("<workbook><sheets/><calcPr calcId=\"124519\" {calc}/></workbook>");
            zip.write_all(xml.as_bytes()).unwrap();
            zip.finish().unwrap().into_inner()
        };
        for calc in [
            "fullCalcOnLoad=\"1\"",
            "fullCalcOnLoad='1'",
            "fullCalcOnLoad = \"true\"",
        ] {
            assert!(recalculates_on_load(&package(calc)), "{calc}");
        }
        for calc in ["fullCalcOnLoad=\"0\"", ""] {
            assert!(!recalculates_on_load(&package(calc)), "{calc}");
        }
    }

    #[test]
    fn an_attribute_is_read_by_its_whole_name_either_quote() {
        let element =
            "<table:null-date xtable:date-value=\"1904-01-01\" table:date-value = '1899-12-30'";
        assert_eq!(attribute(element, "table:date-value"), Some("1899-12-30"));
        assert_eq!(attribute("<a b=\"1\"", "b"), Some("1"));
        assert_eq!(attribute("<a xb=\"1\"", "b"), None);
        assert_eq!(attribute("<a b=1", "b"), None);
    }

    use super::*;

    // A filter's range as calamine reports it: `_xlnm._FilterDatabase` with a quoted sheet name
    // from an .xlsx, the built-in code 0x0D with the sheet name unquoted from an .xls (a copy of
    // an .xlsx with a filter, converted by LibreOffice, read so); another sheet's filter and
    // other names are not this sheet's.
    #[test]
    fn a_filter_is_noted_on_its_own_sheet() {
        let names = |name: &str, formula: &str| vec![(name.to_string(), formula.to_string())];
        let xlsx = names("_xlnm._FilterDatabase", "'Old prices'!$A$1:$D$5");
        let note = filter_note("Old prices", &xlsx).unwrap();
        assert!(
            note.starts_with("sheet \"Old prices\" has a filter over A1:D5: rows a filter hides"),
            "{note}"
        );
        let xls = names("\u{d}", "Old prices!$A$1:$D$5");
        assert_eq!(filter_note("Old prices", &xls), Some(note));
        assert_eq!(filter_note("Prices", &xlsx), None);
        assert_eq!(
            filter_note("Old prices", &names("Rates", "'Old prices'!$A$1")),
            None
        );
    }
}
