//! `workbook.xlsx`: the valuation as a spreadsheet whose formulas recompute the chain.
//!
//! Reviewers trace a discount rate cell by cell in the tool they use. This writer lays the one
//! [`Valuation`] out over a few sheets — the returns, each peer's regression as spreadsheet
//! functions, unlevering, aggregation, relevering, the cost of equity, the cost of debt and the
//! WACC — where every step is a formula over the cells above it and the inputs are named cells.
//! Each formula is written with its cached value read from the valuation (never computed
//! here), so a viewer that does not recalculate still shows the figures, and a spreadsheet that
//! does recalculate reproduces them. [`figure_map`] lists every formula cell beside the
//! `result.json` field it must equal, which the LibreOffice check in the tests uses.

mod analyses;
mod betas;
mod capital;
mod cost;
mod cover;
mod inputs;
mod returns;
mod style;

pub(crate) use rust_xlsxwriter::Format;
use rust_xlsxwriter::Worksheet;
use rust_xlsxwriter::{DocProperties, ExcelDateTime, Formula, Note, Workbook as XlsxBook};
use serde::Serialize;
use serde_json::Value;

use crate::error::{Error, Result};
use crate::io::tables::column_letters;
use crate::report::Render;
use crate::valuation::Valuation;

pub use style::Styles;

/// The `workbook.xlsx` output of `hurdle run`.
pub struct Workbook;

impl Render for Workbook {
    fn file_name(&self) -> &str {
        "workbook.xlsx"
    }

    fn render(&self, valuation: &Valuation) -> Result<Vec<u8>> {
        Ok(build(valuation)?.0)
    }
}

/// One formula cell and the figure it must show after recalculation.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MappedCell {
    pub sheet: String,
    /// A1 reference, e.g. `C12`.
    pub cell: String,
    /// The `result.json` field (a JSON pointer such as `/peers/0/beta`), when the figure is one.
    pub json_pointer: Option<String>,
    /// The figure is the field times this (100 for a percent shown as a number, 10 000 for
    /// basis points); 1 otherwise.
    pub scale: f64,
    /// The figure itself when it is not a `result.json` field (an excess return).
    pub value: Option<f64>,
    /// The text the cell shows instead of a figure (a peer left out of an aggregate).
    pub text: Option<String>,
}

/// Every formula cell of the workbook of `valuation`, with the figure it must equal.
pub fn figure_map(valuation: &Valuation) -> Result<Vec<MappedCell>> {
    Ok(build(valuation)?.1)
}

/// What a formula cell must equal.
#[derive(Debug, Clone)]
pub(crate) enum Expect {
    /// A `result.json` field.
    Json(String),
    /// A `result.json` field times a display factor (basis points).
    Scaled(String, f64),
    /// A figure of the valuation that `result.json` does not hold (it is in `returns.csv`).
    Value(f64),
    /// Text instead of a figure.
    Text(&'static str),
}

/// The workbook under construction: the valuation, its JSON form (where cached values are read
/// from, so they equal `result.json` by construction), the styles and the map of formula cells.
pub(crate) struct Book<'v> {
    pub v: &'v Valuation,
    json: Value,
    pub styles: Styles,
    map: Vec<MappedCell>,
}

/// One worksheet and its name, for references from other sheets.
pub(crate) struct Sheet {
    pub name: &'static str,
    pub ws: Worksheet,
}

impl Sheet {
    pub fn new(name: &'static str) -> Result<Sheet> {
        let mut ws = Worksheet::new();
        ws.set_name(name).map_err(xlsx_error)?;
        Ok(Sheet { name, ws })
    }

    /// The sheet's name as a reference writes it (quoted when it holds a space).
    pub fn prefix(&self) -> String {
        if self.name.contains(' ') {
            format!("'{}'", self.name)
        } else {
            self.name.to_string()
        }
    }

    /// An absolute reference to one cell of this sheet from another, `Returns!$F$2`.
    pub fn abs(&self, row: u32, col: u16) -> String {
        format!("{}!{}", self.prefix(), absolute(row, col))
    }

    /// An absolute reference to a column range of this sheet, `Returns!$F$2:$F$61`.
    pub fn range(&self, first_row: u32, last_row: u32, col: u16) -> String {
        format!(
            "{}!{}:{}",
            self.prefix(),
            absolute(first_row, col),
            absolute(last_row, col)
        )
    }
}

/// The width of a column of peer names: the longest name, at least 26 characters (the width
/// the sheets had) and at most 60 (a longer name is cut off in its cell, whole in the bar).
pub(crate) fn name_column_width(valuation: &Valuation) -> f64 {
    let longest = (valuation.peers.iter())
        .map(|p| p.name.chars().count())
        .max()
        .unwrap_or(0);
    (longest as f64 + 2.0).clamp(26.0, 60.0)
}

/// `$C$5` for 0-based row 4, column 2.
pub(crate) fn absolute(row: u32, col: u16) -> String {
    format!("${}${}", column_letters(col as usize), row + 1)
}

/// `C5` for 0-based row 4, column 2.
pub(crate) fn relative(row: u32, col: u16) -> String {
    format!("{}{}", column_letters(col as usize), row + 1)
}

pub(crate) fn xlsx_error(e: rust_xlsxwriter::XlsxError) -> Error {
    Error::Render {
        file: "workbook.xlsx".into(),
        message: e.to_string(),
    }
}

impl<'v> Book<'v> {
    fn new(v: &'v Valuation) -> Book<'v> {
        Book {
            v,
            json: serde_json::to_value(v).expect("a valuation always serialises"),
            styles: Styles::new(),
            map: Vec::new(),
        }
    }

    /// Whether `result.json` holds null at `pointer` (a figure that has no value in this run).
    pub fn is_null(&self, pointer: &str) -> bool {
        self.json.pointer(pointer).is_some_and(Value::is_null)
    }

    /// A `result.json` number, read from the serialised valuation.
    pub fn figure(&self, pointer: &str) -> Result<f64> {
        self.json
            .pointer(pointer)
            .and_then(Value::as_f64)
            .ok_or_else(|| Error::Render {
                file: "workbook.xlsx".into(),
                message: format!("the valuation has no number at {pointer}"),
            })
    }

    /// Writes a formula with its cached value and records what it must equal.
    pub fn formula(
        &mut self,
        sheet: &mut Sheet,
        at: (u32, u16),
        formula: &str,
        expect: Expect,
        format: &Format,
    ) -> Result<()> {
        self.formula_cell(sheet, at, formula, expect, Some(format))
    }

    /// [`Book::formula`] in a column whose format was set once for the whole column (a sheet of
    /// thousands of rows: looking a cell's format up costs more than writing the cell).
    pub fn column_formula(
        &mut self,
        sheet: &mut Sheet,
        at: (u32, u16),
        formula: &str,
        expect: Expect,
    ) -> Result<()> {
        self.formula_cell(sheet, at, formula, expect, None)
    }

    fn formula_cell(
        &mut self,
        sheet: &mut Sheet,
        (row, col): (u32, u16),
        formula: &str,
        expect: Expect,
        format: Option<&Format>,
    ) -> Result<()> {
        let (cached, pointer, scale, value, text) = match &expect {
            Expect::Json(p) => (
                self.figure(p)?.to_string(),
                Some(p.clone()),
                1.0,
                None,
                None,
            ),
            Expect::Scaled(p, k) => {
                let cached = (self.figure(p)? * k).to_string();
                (cached, Some(p.clone()), *k, None, None)
            }
            Expect::Value(x) => (x.to_string(), None, 1.0, Some(*x), None),
            Expect::Text(t) => (t.to_string(), None, 1.0, None, Some(t.to_string())),
        };
        let cell = Formula::new(formula).set_result(cached);
        match format {
            Some(format) => sheet.ws.write_formula_with_format(row, col, cell, format),
            None => sheet.ws.write_formula(row, col, cell),
        }
        .map_err(xlsx_error)?;
        self.map.push(MappedCell {
            sheet: sheet.name.to_string(),
            cell: relative(row, col),
            json_pointer: pointer,
            scale,
            value,
            text,
        });
        Ok(())
    }

    /// Writes a figure hurdle computed that no spreadsheet function reproduces, styled apart
    /// and with a note saying where it came from.
    pub fn computed(
        &self,
        sheet: &mut Sheet,
        (row, col): (u32, u16),
        value: f64,
        why: &str,
        format: &Format,
    ) -> Result<()> {
        let format = self.styles.computed(format);
        sheet
            .ws
            .write_number_with_format(row, col, value, &format)
            .map_err(xlsx_error)?;
        let note = Note::new(format!("Computed by hurdle, not by a formula: {why}"))
            .set_author("hurdle")
            .add_author_prefix(false);
        sheet.ws.insert_note(row, col, &note).map_err(xlsx_error)?;
        Ok(())
    }

    /// A plain number (an input or a fact of the case).
    pub fn number(
        &self,
        sheet: &mut Sheet,
        (row, col): (u32, u16),
        value: f64,
        format: &Format,
    ) -> Result<()> {
        sheet
            .ws
            .write_number_with_format(row, col, value, format)
            .map_err(xlsx_error)?;
        Ok(())
    }

    /// Text.
    pub fn text(
        &self,
        sheet: &mut Sheet,
        (row, col): (u32, u16),
        text: &str,
        format: &Format,
    ) -> Result<()> {
        sheet
            .ws
            .write_string_with_format(row, col, within_a_cell(text).as_ref(), format)
            .map_err(xlsx_error)?;
        Ok(())
    }

    /// A calendar date as a date cell.
    pub fn date(
        &self,
        sheet: &mut Sheet,
        (row, col): (u32, u16),
        date: chrono::NaiveDate,
    ) -> Result<()> {
        write_date(&mut sheet.ws, (row, col), date, Some(&self.styles.date))
    }
}

/// A calendar date as a date cell (with `format`, else the column's), or as its ISO text
/// before 1900 or after 9999, which a spreadsheet's dates do not reach (found by review: a
/// price file dated 1850, before the window, stopped the run at the workbook).
pub(crate) fn write_date(
    ws: &mut Worksheet,
    (row, col): (u32, u16),
    date: chrono::NaiveDate,
    format: Option<&rust_xlsxwriter::Format>,
) -> Result<()> {
    use chrono::Datelike;
    if !(1900..=9999).contains(&date.year()) {
        let text = date.format("%Y-%m-%d").to_string();
        ws.write_string(row, col, text).map_err(xlsx_error)?;
        return Ok(());
    }
    let cell = ExcelDateTime::from_ymd(date.year() as u16, date.month() as u8, date.day() as u8)
        .map_err(xlsx_error)?;
    match format {
        Some(format) => ws.write_datetime_with_format(row, col, &cell, format),
        None => ws.write_datetime(row, col, &cell),
    }
    .map_err(xlsx_error)?;
    Ok(())
}

/// Lays the valuation out and returns the file's bytes with the map of its formula cells.
fn build(v: &Valuation) -> Result<(Vec<u8>, Vec<MappedCell>)> {
    let mut book = Book::new(v);
    let mut names = Vec::new();
    let inputs = inputs::sheet(&mut book, &mut names)?;
    let returns = returns::sheet(&mut book)?;
    let betas = betas::sheet(&mut book, &returns)?;
    let capital = capital::sheets(&mut book, &betas, &mut names)?;
    let cover = cover::sheet(&mut book)?;
    let mut workbook = XlsxBook::new();
    // The fastest deflate level: compressing at the default level was a third of the
    // workbook's time (callgrind on the demo case: 30 M instructions, 14 M at level 1); the
    // demo's file grows from 57 kB to 87 kB.
    workbook.set_zip_compression_level(1);
    // A fixed creation time keeps the bytes a function of the valuation alone.
    let created = ExcelDateTime::parse_from_str(&v.generated_at.replace('Z', ""))
        .or_else(|_| ExcelDateTime::from_ymd(2000, 1, 1))
        .map_err(xlsx_error)?;
    workbook.set_properties(
        &DocProperties::new()
            .set_title(&v.case.title)
            .set_subject("Cost of capital")
            .set_author("hurdle")
            .set_creation_datetime(&created),
    );
    for (name, target) in &names {
        workbook.define_name(name, target).map_err(xlsx_error)?;
    }
    let mut cover = cover;
    cover.ws.set_active(true);
    // Printed: landscape, one page wide, and the header row of each table sheet on every page.
    // (Unlevering, Betas and Returns have their header on the first row.)
    let tables = [false, false, false, true, true, true, false];
    for (mut sheet, table) in [
        cover,
        inputs,
        capital.cost,
        capital.unlevering,
        betas.sheet,
        returns.sheet,
        capital.analyses,
    ]
    .into_iter()
    .zip(tables)
    {
        sheet.ws.set_landscape().set_print_fit_to_pages(1, 0);
        if table {
            sheet.ws.set_repeat_rows(0, 0).map_err(xlsx_error)?;
        }
        workbook.push_worksheet(sheet.ws);
    }
    let bytes = workbook.save_to_buffer().map_err(xlsx_error)?;
    Ok((bytes, book.map))
}
/// Text within what one cell holds: 32,767 UTF-16 units (Excel's specification limits, from
/// memory), cut on a character's edge with a word that it is cut (found by review: the Cover's
/// joined overrides of two long justifications failed the whole workbook, naming no key).
/// `result.json` and the memo keep the whole text.
fn within_a_cell(text: &str) -> std::borrow::Cow<'_, str> {
    const MOST: usize = 32_767;
    const CUT: &str = " … (cut here: result.json holds the whole text)";
    if text.encode_utf16().count() <= MOST {
        return std::borrow::Cow::Borrowed(text);
    }
    let room = MOST - CUT.encode_utf16().count();
    let mut units = 0;
    let end = (text.char_indices())
        .find(|(_, c)| {
            units += c.len_utf16();
            units > room
        })
        .map_or(text.len(), |(at, _)| at);
    std::borrow::Cow::Owned(format!("{}{CUT}", &text[..end]))
}

#[cfg(test)]
mod tests {
    use super::within_a_cell;

    // Excel's limit of 32,767 characters a cell (its specification limits, from memory) counts
    // UTF-16 units: an emoji is two. A longer text is cut on a character's edge, with a word.
    #[test]
    fn text_is_cut_to_what_a_cell_holds() {
        assert_eq!(within_a_cell("short"), "short");
        let long = "\u{1F600}".repeat(20_000);
        let cut = within_a_cell(&long);
        assert!(cut.encode_utf16().count() <= 32_767);
        assert!(cut.ends_with("(cut here: result.json holds the whole text)"));
        assert!(cut.starts_with("\u{1F600}\u{1F600}"));
        let exact = "a".repeat(32_767);
        assert_eq!(within_a_cell(&exact), exact.as_str());
    }
}
