//! Wide price tables and `hurdle init`.
//!
//! The demo shipped as one table (CSV and workbook) must give the receipt of the file-per-series
//! demo, figure for figure, apart from the input paths and hashes: two independent readers
//! (io/series.rs per file, io/tables/ per column) of the same prices. Workbook fixtures written by
//! openpyxl and converted by LibreOffice (tests/data/tables/make_fixtures.py) check every form
//! a cell takes; a Parquet file is written by polars. `hurdle init` on the wide demo, with its
//! placeholders filled from the demo's own figures, must give the demo's WACC. Each bad input
//! exits with status 2, names the file, sheet, cell or column and the value, and writes nothing.

use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use chrono::NaiveDate;
use hurdle::case::sources::SOURCE_KEYS;
use hurdle::demo_wide::{INDEX_COLUMN, RISK_FREE_COLUMN};
use hurdle::io::series::ValueKind;
use hurdle::io::tables::{PriceTable, TableRequest};
use serde_json::Value;

mod common;

/// A case source's request for `sheet` (the date column the first).
fn request(sheet: Option<&str>) -> TableRequest<'_> {
    TableRequest {
        sheet,
        date_column: None,
        words: &SOURCE_KEYS,
    }
}

use common::{copy_wide_case, hurdle, DEMO_CASE, WIDE_DIR};

const FIXTURES: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/data/tables");

fn ok(output: &Output) -> String {
    assert!(
        output.status.success(),
        "failed: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8_lossy(&output.stdout).into_owned()
}

fn run_case(case: &Path, out: &Path, extra: &[&str]) -> Output {
    let mut args = vec![
        "run",
        case.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ];
    args.extend(extra);
    hurdle(&args)
}

fn receipt(out: &Path) -> Value {
    serde_json::from_str(&fs::read_to_string(out.join("result.json")).unwrap()).unwrap()
}

/// Every leaf of a JSON value by its path (`files[2].sha256`).
fn leaves(value: &Value, path: String, into: &mut Vec<(String, Value)>) {
    match value {
        Value::Object(map) => map
            .iter()
            .for_each(|(k, v)| leaves(v, format!("{path}.{k}"), into)),
        Value::Array(items) => items
            .iter()
            .enumerate()
            .for_each(|(i, v)| leaves(v, format!("{path}[{i}]"), into)),
        other => into.push((path, other.clone())),
    }
}

/// Where the two forms of a case may differ: where the prices were read from.
fn is_input_location(path: &str) -> bool {
    let allowed = [
        ".case.file",
        ".case.sha256",
        // The bridge's starting side records the case file it ran (since 0.17.0).
        ".reconciliation.from.source",
        ".reconciliation.from.sha256",
        ".generated_at",
        ".settings.sources.",
        ".settings.market.index.prices",
        ".settings.market.index.source",
        ".settings.market.index.column",
        ".settings.market.risk_free_series.yields",
        ".settings.market.risk_free_series.source",
        ".settings.market.risk_free_series.column",
    ];
    let per_item = [
        (".files[", &[".path", ".sha256", ".sheet", ".column"][..]),
        (".peers[", &[".prices_file"][..]),
        (".settings.peer[", &[".prices", ".source", ".column"][..]),
    ];
    allowed.iter().any(|a| path.starts_with(a))
        || per_item
            .iter()
            .any(|(start, ends)| path.starts_with(start) && ends.iter().any(|e| path.ends_with(e)))
}

// Source of truth: the same demo prices read one file per series by io/series.rs. Every figure of
// result.json must be identical (the same decimal text becomes the same double in both
// readers, so no tolerance is needed); only input locations may differ.
#[test]
fn wide_tables_give_the_receipt_of_the_file_per_series_demo() {
    let dir = tempfile::tempdir().unwrap();
    let per_file = dir.path().join("per-file");
    ok(&run_case(Path::new(DEMO_CASE), &per_file, &[]));
    let mut reference = Vec::new();
    leaves(&receipt(&per_file), String::new(), &mut reference);
    for (case, sheet) in [("case.toml", None), ("case_workbook.toml", Some("Prices"))] {
        let out = dir.path().join(case);
        ok(&run_case(&Path::new(WIDE_DIR).join(case), &out, &[]));
        let wide = receipt(&out);
        let mut leaves_wide = Vec::new();
        leaves(&wide, String::new(), &mut leaves_wide);
        let keep = |l: &Vec<(String, Value)>| -> Vec<(String, Value)> {
            l.iter()
                .filter(|(p, _)| !is_input_location(p))
                .cloned()
                .collect()
        };
        let (a, b) = (keep(&reference), keep(&leaves_wide));
        // A guard against comparing two nearly empty receipts: the demo's has about 900 leaves.
        assert!(a.len() > 800, "too few figures compared: {}", a.len());
        for ((pa, va), (pb, vb)) in a.iter().zip(&b) {
            assert_eq!((pa, va), (pb, vb), "{case}");
        }
        assert_eq!(a.len(), b.len(), "{case}");
        // The receipt records the table, its sheet and each series' column.
        let files = wide["files"].as_array().unwrap();
        assert_eq!(files[0]["column"], INDEX_COLUMN);
        assert_eq!(files[1]["column"], RISK_FREE_COLUMN);
        assert_eq!(files[2]["column"], "Brenvale Fluid Systems");
        for file in files {
            assert_eq!(file["sheet"].as_str(), sheet, "{case}");
            assert_eq!(file["sha256"], files[0]["sha256"]);
        }
    }
}

// `hurdle verify` reruns a wide-table receipt, and sees an edited price in the table.
#[test]
fn verify_reproduces_a_wide_receipt_and_sees_an_edited_table() {
    let dir = tempfile::tempdir().unwrap();
    let case_dir = dir.path().join("case");
    copy_wide_case(&case_dir);
    let out = case_dir.join("output");
    ok(&run_case(&case_dir.join("case.toml"), &out, &[]));
    let receipt_path = out.join("result.json");
    let verified = hurdle(&["verify", receipt_path.to_str().unwrap()]);
    assert_eq!(verified.status.code(), Some(0), "{}", ok(&verified));
    let table = case_dir.join("data/prices.csv");
    let text = fs::read_to_string(&table).unwrap();
    let line = text.lines().nth(1000).unwrap().to_string();
    let mut cells: Vec<String> = line.split(',').map(String::from).collect();
    let price: f64 = cells[4].parse().unwrap();
    cells[4] = format!("{:.4}", price * 1.5);
    fs::write(&table, text.replacen(&line, &cells.join(","), 1)).unwrap();
    let verified = hurdle(&["verify", receipt_path.to_str().unwrap()]);
    let stdout = String::from_utf8_lossy(&verified.stdout);
    assert_eq!(verified.status.code(), Some(1), "{stdout}");
    assert!(
        stdout.contains("data/prices.csv") && stdout.contains("CHANGED"),
        "{stdout}"
    );
}

fn day(y: i32, m: u32, d: u32) -> NaiveDate {
    NaiveDate::from_ymd_opt(y, m, d).unwrap()
}

// The fixture as make_fixtures.py writes it: a real date, a serial number (45351), ISO text and
// a date with a time of day; numbers, numbers stored as text (" 23 " with spaces), an empty cell.
fn expected_fixture() -> Vec<(&'static str, Vec<(NaiveDate, f64)>)> {
    let dates = [
        day(2024, 1, 31),
        day(2024, 2, 29),
        day(2024, 3, 28),
        day(2024, 4, 30),
    ];
    vec![
        (
            "Alder",
            vec![(dates[0], 10.5), (dates[1], 11.0), (dates[3], 12.25)],
        ),
        (
            "Birch",
            dates
                .iter()
                .copied()
                .zip([20.25, 21.0, 22.5, 23.0])
                .collect(),
        ),
        (
            "Cedar index",
            dates
                .iter()
                .copied()
                .zip([100.0, 101.0, 102.5, 103.0])
                .collect(),
        ),
    ]
}

fn check_table(table: &PriceTable, label: &str) {
    assert_eq!(table.date_column, "date", "{label}");
    for (column, expected) in expected_fixture() {
        let file = table.series("peer", column, ValueKind::Price).unwrap();
        let got: Vec<(NaiveDate, f64)> = file
            .series
            .dates
            .iter()
            .copied()
            .zip(file.series.values.iter().copied())
            .collect();
        assert_eq!(got, expected, "{label}, column {column}");
    }
}

// Workbooks written by openpyxl (.xlsx) and converted by LibreOffice (.ods, .xls).
#[test]
fn every_cell_form_of_a_workbook_is_read() {
    for name in ["mixed.xlsx", "mixed.ods", "mixed.xls"] {
        let path = Path::new(FIXTURES).join(name);
        let table = PriceTable::read(name, &path, request(Some("Prices"))).unwrap();
        assert_eq!(table.sheet.as_deref(), Some("Prices"));
        check_table(&table, name);
        let bytes = fs::read(&path).unwrap();
        assert_eq!(table.sha256, hurdle::io::series::sha256_hex(&bytes));
    }
}

// A Parquet file written by polars: a typed date column, float prices with a null, and a text
// column of numbers.
#[test]
fn parquet_tables_are_read() {
    use polars::prelude::*;
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("prices.parquet");
    let epoch = day(1970, 1, 1);
    let days: Vec<i32> = expected_fixture()[1]
        .1
        .iter()
        .map(|(d, _)| (*d - epoch).num_days() as i32)
        .collect();
    let dates = Series::new("date".into(), days)
        .cast(&DataType::Date)
        .unwrap();
    let alder = Series::new("Alder".into(), [Some(10.5), Some(11.0), None, Some(12.25)]);
    let birch = Series::new("Birch".into(), ["20.25", "21", "22.5", " 23 "]);
    let cedar = Series::new("Cedar index".into(), [100.0, 101.0, 102.5, 103.0]);
    let mut frame =
        DataFrame::new_infer_height(vec![dates.into(), alder.into(), birch.into(), cedar.into()])
            .unwrap();
    let file = fs::File::create(&path).unwrap();
    ParquetWriter::new(file).finish(&mut frame).unwrap();
    let table = PriceTable::read("prices.parquet", &path, request(None)).unwrap();
    check_table(&table, "parquet");
}

// Prices stored as 32-bit floats read as the decimals written (10.1, not 10.100000381469727),
// as a universe's Parquet panel reads them, so a case and a universe reading one file agree
// (found by review). Every price here has at most six significant digits, which a 32-bit
// float keeps (IEEE 754 binary32, FLT_DIG = 6).
#[test]
fn parquet_32_bit_prices_read_as_their_decimals() {
    use polars::prelude::*;
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("single.parquet");
    let dates = Series::new("date".into(), [19_000_i32, 19_001, 19_002])
        .cast(&DataType::Date)
        .unwrap();
    let prices = Series::new("Alder".into(), [10.1_f32, 11.3, 1043.83]);
    let mut frame = DataFrame::new_infer_height(vec![dates.into(), prices.into()]).unwrap();
    ParquetWriter::new(fs::File::create(&path).unwrap())
        .finish(&mut frame)
        .unwrap();
    let table = PriceTable::read("single.parquet", &path, request(None)).unwrap();
    let file = table.series("peer", "Alder", ValueKind::Price).unwrap();
    assert_eq!(file.series.values, [10.1, 11.3, 1043.83]);
}

/// A copy of the wide demo in `<tmp>/case`, and its output folder `<tmp>/out`.
struct WideCopy {
    root: tempfile::TempDir,
}

impl WideCopy {
    fn new() -> WideCopy {
        let root = tempfile::tempdir().unwrap();
        copy_wide_case(&root.path().join("case"));
        WideCopy { root }
    }

    fn path(&self, relative: &str) -> PathBuf {
        self.root.path().join("case").join(relative)
    }

    fn edit(&self, relative: &str, from: &str, to: &str) {
        let text = fs::read_to_string(self.path(relative)).unwrap();
        assert_eq!(text.matches(from).count(), 1, "`{from}` once in {relative}");
        fs::write(self.path(relative), text.replacen(from, to, 1)).unwrap();
    }

    /// Rewrites one cell of the wide CSV table (`line` counted from 1, the header being line 1;
    /// `column` from 0) with `edit` of its text.
    fn edit_csv_cell(&self, line: usize, column: usize, edit: impl Fn(&str) -> String) {
        let path = self.path("data/prices.csv");
        let csv = fs::read_to_string(&path).unwrap();
        let old = csv.lines().nth(line - 1).unwrap().to_string();
        let mut cells: Vec<String> = old.split(',').map(str::to_string).collect();
        cells[column] = edit(&cells[column]);
        fs::write(&path, csv.replacen(&old, &cells.join(","), 1)).unwrap();
    }

    /// Runs `case`, asserts exit 2 with no output and returns stderr.
    fn fail(&self, case: &str) -> String {
        let out = self.root.path().join("out");
        let output = run_case(&self.path(case), &out, &[]);
        let stderr = String::from_utf8_lossy(&output.stderr).into_owned();
        assert_eq!(output.status.code(), Some(2), "{stderr}");
        assert!(!stderr.contains("panicked"), "{stderr}");
        assert!(!out.exists(), "output written; {stderr}");
        stderr
    }

    /// Rewrites data/prices.xlsx from data/prices.csv (dates as date cells, prices as numbers),
    /// with a text cell instead at (row, column) of the table, or beside it when outside.
    fn workbook_with_text_cell(&self, row: u32, col: u16, text: &str) {
        use rust_xlsxwriter::{ExcelDateTime, Workbook};
        let csv = fs::read_to_string(self.path("data/prices.csv")).unwrap();
        let mut book = Workbook::new();
        book.add_worksheet().set_name("About").unwrap();
        let sheet = book.add_worksheet();
        sheet.set_name("Prices").unwrap();
        for (r, line) in csv.lines().enumerate() {
            for (c, cell) in line.split(',').enumerate() {
                let (r, c) = (r as u32, c as u16);
                if (r, c) == (row, col) {
                    sheet.write_string(r, c, text).unwrap();
                } else if r == 0 {
                    sheet.write_string(r, c, cell).unwrap();
                } else if c == 0 {
                    let d = NaiveDate::parse_from_str(cell, "%Y-%m-%d").unwrap();
                    let cell = ExcelDateTime::parse_from_str(&d.to_string()).unwrap();
                    sheet.write_datetime(r, c, &cell).unwrap();
                } else if !cell.is_empty() {
                    sheet
                        .write_number(r, c, cell.parse::<f64>().unwrap())
                        .unwrap();
                }
            }
        }
        let (rows, columns) = (
            csv.lines().count(),
            csv.lines().next().unwrap().split(',').count(),
        );
        if row as usize >= rows || col as usize >= columns {
            sheet.write_string(row, col, text).unwrap();
        }
        book.save(self.path("data/prices.xlsx")).unwrap();
    }
}

// A yield of 1 or more in a wide table's yield column is a percentage typed for a decimal,
// refused as in a yield file of its own (README, sanity rules): 2.576 is 257.6% a year.
#[test]
fn a_percent_yield_in_a_wide_table_is_named() {
    let copy = WideCopy::new();
    copy.edit_csv_cell(10, 2, |_| "2.576".into());
    let stderr = copy.fail("case.toml");
    assert!(
        stderr.contains("line 10, column `Risk-free yield`"),
        "{stderr}"
    );
    assert!(stderr.contains("257.6% a year"), "{stderr}");
}

// A decimal comma in a wide CSV table is named by its line, as in a price file of its own
// (the same shape check), not left to the CSV reader's schema message.
#[test]
fn a_decimal_comma_in_a_wide_csv_is_named_by_line() {
    let copy = WideCopy::new();
    copy.edit_csv_cell(10, 3, |price| price.replacen('.', ",", 1));
    let stderr = copy.fail("case.toml");
    assert!(stderr.contains("prices.csv: line 10: `"), "{stderr}");
    assert!(stderr.contains("fields but the header has"), "{stderr}");
}

// A wide CSV table saved as UTF-16 is named as such, after its file name alone (found by review:
// an empty slot read `prices.csv: : the file is …`); a decimal comma under a header ending in a
// comma (its digits in the unnamed column) says so.
#[test]
fn a_utf16_table_and_a_decimal_comma_under_an_unnamed_column_are_named() {
    let copy = WideCopy::new();
    let path = copy.path("data/prices.csv");
    let csv = fs::read_to_string(&path).unwrap();
    let utf16: Vec<u8> = [0xFF, 0xFE]
        .into_iter()
        .chain(csv.encode_utf16().flat_map(u16::to_le_bytes))
        .collect();
    fs::write(&path, utf16).unwrap();
    let stderr = copy.fail("case.toml");
    assert!(
        stderr.contains("prices.csv: the file is text saved as UTF-16"),
        "{stderr}"
    );
    let copy = WideCopy::new();
    let path = copy.path("data/prices.csv");
    let mut lines: Vec<String> = csv.lines().map(String::from).collect();
    lines[0].push(',');
    // The last column's price, 26.0000 say, written 26,0000.
    let last = lines[9].rfind('.').unwrap();
    lines[9].replace_range(last..=last, ",");
    fs::write(&path, lines.join("\n") + "\n").unwrap();
    let stderr = copy.fail("case.toml");
    assert!(stderr.contains("line 10"), "{stderr}");
    assert!(
        stderr.contains("a number written with a decimal comma"),
        "{stderr}"
    );
}

// A row cut short in a wide CSV table would read its last peers' prices as gaps (an empty cell
// is a gap): it is refused naming its line, not accepted with two peers missing a day (found by
// review).
#[test]
fn a_row_cut_short_in_a_wide_csv_is_named_by_line() {
    let copy = WideCopy::new();
    let path = copy.path("data/prices.csv");
    let csv = fs::read_to_string(&path).unwrap();
    let old = csv.lines().nth(499).unwrap().to_string();
    let cells: Vec<&str> = old.split(',').collect();
    let short = cells[..cells.len() - 2].join(",");
    fs::write(&path, csv.replacen(&old, &short, 1)).unwrap();
    let stderr = copy.fail("case.toml");
    assert!(stderr.contains("prices.csv: line 500: `"), "{stderr}");
    assert!(
        stderr.contains("a row needs a field for every column"),
        "{stderr}"
    );
    // A header alone ending in a comma leaves a last column unnamed, which rows may omit.
    let copy = WideCopy::new();
    let path = copy.path("data/prices.csv");
    let csv = fs::read_to_string(&path).unwrap();
    let header = csv.lines().next().unwrap().to_string();
    fs::write(&path, csv.replacen(&header, &format!("{header},"), 1)).unwrap();
    ok(&run_case(
        &copy.path("case.toml"),
        &copy.root.path().join("out"),
        &[],
    ));
}

// An implausible jump in a wide table's column is named by its own line and column (and the
// previous value's), not by its position in the series: the table's empty cells and its other
// columns make the two differ.
#[test]
fn a_jump_in_a_wide_table_names_its_cell() {
    let copy = WideCopy::new();
    // Estwold's column (the seventh) is empty in the first rows (a late listing), so its values
    // are not on the lines their positions would give. Multiply its price on line 600 by ten.
    copy.edit_csv_cell(600, 6, |price| {
        format!("{:.4}", price.parse::<f64>().unwrap() * 10.0)
    });
    let stderr = copy.fail("case.toml");
    assert!(
        stderr.contains("prices.csv: line 600, column `Estwold Flow Controls`: price"),
        "{stderr}"
    );
    assert!(
        stderr.contains("(line 599, column `Estwold Flow Controls`)"),
        "{stderr}"
    );
}

// Two peers reading one column of a wide table are named by the key that chose the column
// (`peer.1.column`), not by a `peer.1.prices` the case never sets.
#[test]
fn two_peers_on_one_column_are_named_by_their_column_keys() {
    let copy = WideCopy::new();
    let out = copy.root.path().join("out");
    let output = run_case(
        &copy.path("case.toml"),
        &out,
        &["--set", "peer.1.column=Brenvale Fluid Systems"],
    );
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains("peer.1.column = \"Brenvale Fluid Systems\" of data/prices.csv")
            && stderr.contains("peer.0's (peer.0.column = \"Brenvale Fluid Systems\""),
        "{stderr}"
    );
    assert!(!out.exists());
    // The risk-free yields read as a peer too (found by review): refused as the index is.
    let output = run_case(
        &copy.path("case.toml"),
        &out,
        &["--set", "peer.0.column=Risk-free yield"],
    );
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains("as the risk-free series' (market.risk_free_series.column"),
        "{stderr}"
    );
}

// A formula saved without its calculated value (as openpyxl writes one) has no value to read;
// it is refused naming its cell, not read as a missing price. openpyxl stores a formula it
// writes without a cached result (its documented behaviour: it never evaluates formulas).
#[test]
fn a_formula_without_a_saved_value_is_named() {
    let copy = WideCopy::new();
    let book = copy.path("data/prices.xlsx");
    let script = "import sys, openpyxl\n\
                  book = openpyxl.load_workbook(sys.argv[1])\n\
                  sheet = book['Prices']\n\
                  sheet['D8'] = '=41.25'\n\
                  book.save(sys.argv[1])\n";
    let python = std::process::Command::new("python3")
        .args(["-c", script, book.to_str().unwrap()])
        .output()
        .expect("python3 with openpyxl (python3 -m pip install openpyxl)");
    assert!(
        python.status.success(),
        "{}",
        String::from_utf8_lossy(&python.stderr)
    );
    let stderr = copy.fail("case_workbook.toml");
    assert!(
        stderr.contains("sheet \"Prices\", cell D8 holds the formula `=41.25` with no saved value"),
        "{stderr}"
    );
}

#[test]
fn a_sheet_that_is_not_there_lists_the_sheets() {
    let copy = WideCopy::new();
    copy.edit(
        "case_workbook.toml",
        "sheet = \"Prices\"",
        "sheet = \"Prize\"",
    );
    let stderr = copy.fail("case_workbook.toml");
    assert!(stderr.contains("data/prices.xlsx"), "{stderr}");
    assert!(
        stderr.contains("no sheet named \"Prize\"; its sheets are: \"About\", \"Prices\""),
        "{stderr}"
    );
}

// A workbook of several sheets without a sheet named: the case is told its `sheet` key, init its
// `--sheet` option (the library words it for the case; the command line for init).
#[test]
fn a_workbook_of_several_sheets_asks_for_one_in_the_callers_terms() {
    let copy = WideCopy::new();
    copy.edit("case_workbook.toml", "sheet = \"Prices\"", "");
    let stderr = copy.fail("case_workbook.toml");
    assert!(
        stderr.contains(
            "data/prices.xlsx: has 2 sheets; name the one with the prices (`sheet` in the case's \
             source): \"About\", \"Prices\""
        ),
        "{stderr}"
    );
    let out = copy.root.path().join("started.toml");
    let output = init(&[
        copy.path("data/prices.xlsx").to_str().unwrap(),
        "--index",
        "Index",
        "--out",
        out.to_str().unwrap(),
    ]);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains("has 2 sheets; name the one with the prices with --sheet: \"About\""),
        "{stderr}"
    );
    assert!(!out.exists());
}

#[test]
fn a_column_that_is_not_there_lists_the_columns() {
    let copy = WideCopy::new();
    for case in ["case.toml", "case_workbook.toml"] {
        copy.edit(
            case,
            "column = \"Corrowick Valves\"",
            "column = \"Corrowick\"",
        );
        let stderr = copy.fail(case);
        assert!(stderr.contains("no column named `Corrowick`"), "{stderr}");
        assert!(
            stderr.contains("`Corrowick Valves`, `Dunmere Hydraulics`"),
            "{stderr}"
        );
        assert!(
            // The key, then whose it is, as every peer key is named (found by review: the
            // label stood inside the key, `peer.1 (peer "…").column`).
            stderr.contains("asked for by peer.1.column (peer \"Corrowick Valves\")"),
            "{stderr}"
        );
    }
}

#[test]
fn a_date_cell_that_is_not_a_date_is_named() {
    let copy = WideCopy::new();
    copy.workbook_with_text_cell(5, 0, "31/01/2020");
    let stderr = copy.fail("case_workbook.toml");
    assert!(stderr.contains("sheet \"Prices\", cell A6"), "{stderr}");
    assert!(
        stderr.contains("the text \"31/01/2020\" is not a date"),
        "{stderr}"
    );
}

#[test]
fn text_in_a_price_cell_is_named() {
    let copy = WideCopy::new();
    copy.workbook_with_text_cell(7, 3, "n/a");
    let stderr = copy.fail("case_workbook.toml");
    assert!(stderr.contains("sheet \"Prices\", cell D8"), "{stderr}");
    assert!(
        stderr.contains("column `Brenvale Fluid Systems`"),
        "{stderr}"
    );
    assert!(
        stderr.contains("the text \"n/a\" is not a number"),
        "{stderr}"
    );
    // The CSV form names the line.
    copy.edit_csv_cell(10, 4, |_| "#N/A".into());
    let stderr = copy.fail("case.toml");
    assert!(
        stderr.contains("line 10, column `Corrowick Valves`"),
        "{stderr}"
    );
    assert!(stderr.contains("\"#N/A\" is not a number"), "{stderr}");
}

#[test]
fn duplicate_dates_are_named_with_both_rows() {
    let copy = WideCopy::new();
    let csv = fs::read_to_string(copy.path("data/prices.csv")).unwrap();
    let lines: Vec<&str> = csv.lines().collect();
    let mut edited: Vec<&str> = lines.clone();
    edited.insert(12, lines[11]);
    fs::write(copy.path("data/prices.csv"), edited.join("\n") + "\n").unwrap();
    let stderr = copy.fail("case.toml");
    let date = lines[11].split(',').next().unwrap();
    assert!(
        stderr.contains(&format!(
            "line 13, column `date`: duplicate date {date} (also in line 12"
        )),
        "{stderr}"
    );
}

// Single bytes of the workbook fixtures changed (found by corrupting their bytes at random):
// calamine panicked on the first (an `.xls` stream offset past the end) and its date conversion
// on the second (a date serial of -1.2e308), both ending `hurdle` with a panic and exit 101; the
// third's message quoted the damaged XML with its line break, over two lines. Each is refused
// by name now, with one line on stderr and no case file written.
#[test]
fn a_damaged_workbook_is_refused_without_a_panic() {
    let dir = tempfile::tempdir().unwrap();
    let damaged = [
        (
            "mixed.xls",
            3102,
            b'A',
            "g.xls: is a damaged .xls workbook: the decoder stopped on corrupt data (",
        ),
        (
            "mixed.xls",
            4416,
            0xFF,
            "g.xls: sheet \"Prices\", cell A5 (date column `date`): the number \
             -1.245697618140524e308 is not a date",
        ),
        (
            "mixed.ods",
            4257,
            0x7F,
            "g.ods: is a damaged or unreadable .ods workbook: Xml error: ill-formed document:",
        ),
    ];
    for (fixture, at, byte, expected) in damaged {
        let mut bytes = fs::read(Path::new(FIXTURES).join(fixture)).unwrap();
        bytes[at] = byte;
        let extension = Path::new(fixture).extension().unwrap().to_str().unwrap();
        let table = dir.path().join(format!("g.{extension}"));
        fs::write(&table, bytes).unwrap();
        let case = dir.path().join("case.toml");
        let output = hurdle(&[
            "init",
            table.to_str().unwrap(),
            "--index",
            "Alder",
            "--sheet",
            "Prices",
            "--out",
            case.to_str().unwrap(),
        ]);
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(
            output.status.code(),
            Some(2),
            "{fixture} byte {at}: {stderr}"
        );
        assert!(
            stderr.contains(expected) && stderr.lines().count() == 1,
            "{fixture} byte {at}: {stderr}"
        );
        assert!(
            !case.exists(),
            "{fixture} byte {at}: a case file was written"
        );
    }
}

#[test]
fn an_encrypted_workbook_or_a_file_that_is_none_is_refused() {
    let copy = WideCopy::new();
    fs::copy(
        Path::new(FIXTURES).join("encrypted.xlsx"),
        copy.path("data/prices.xlsx"),
    )
    .unwrap();
    let stderr = copy.fail("case_workbook.toml");
    assert!(
        stderr.contains("data/prices.xlsx: is encrypted (password-protected)"),
        "{stderr}"
    );
    fs::write(copy.path("data/prices.xlsx"), "date,price\n2024-01-31,10\n").unwrap();
    let stderr = copy.fail("case_workbook.toml");
    assert!(
        stderr.contains("data/prices.xlsx: is not a .xlsx workbook"),
        "{stderr}"
    );
}

#[test]
fn a_series_with_both_a_file_and_a_source_is_refused() {
    let copy = WideCopy::new();
    copy.edit(
        "case.toml",
        "source = \"prices\"\ncolumn = \"Dunmere Hydraulics\"",
        "source = \"prices\"\ncolumn = \"Dunmere Hydraulics\"\nprices = \"data/dunmere.csv\"",
    );
    let stderr = copy.fail("case.toml");
    assert!(
        stderr.contains("peer.2 (peer \"Dunmere Hydraulics\") has both `prices`"),
        "{stderr}"
    );
    let copy = WideCopy::new();
    copy.edit("case.toml", "[sources.prices]", "[sources.table]");
    let stderr = copy.fail("case.toml");
    assert!(stderr.contains("market.index.source = \"prices\" is not a table under [sources]; the file declares \"table\""), "{stderr}");
}

// A Parquet date or date-time beyond the calendar's years (a day count of i32::MAX, a
// date-time of i64::MAX microseconds: a placeholder or another unit) is named by its row and
// stored value, exit 2; polars 0.55 panicked writing such a date as text (found by review).
#[test]
fn parquet_dates_beyond_the_calendar_are_named() {
    use polars::prelude::*;
    let dir = tempfile::tempdir().unwrap();
    let days = Series::new("date".into(), [19_000_i32, i32::MAX, 19_002])
        .cast(&DataType::Date)
        .unwrap();
    let times = Series::new(
        "date".into(),
        [
            19_000_i64 * 86_400_000_000,
            19_001 * 86_400_000_000,
            i64::MAX,
        ],
    )
    .cast(&DataType::Datetime(TimeUnit::Microseconds, None))
    .unwrap();
    for (dates, row, stored) in [
        (
            days,
            "row 2",
            "2147483647 days from 1970-01-01, beyond the calendar",
        ),
        (
            times,
            "row 3",
            "9223372036854775807 microseconds from 1970-01-01, beyond the calendar",
        ),
    ] {
        let path = dir.path().join("far.parquet");
        let index = Series::new("Index".into(), [100.0, 101.0, 102.0]);
        let peer = Series::new("Alder".into(), [10.0, 11.0, 12.0]);
        let mut frame =
            DataFrame::new_infer_height(vec![dates.into(), index.into(), peer.into()]).unwrap();
        ParquetWriter::new(fs::File::create(&path).unwrap())
            .finish(&mut frame)
            .unwrap();
        let output = init(&[path.to_str().unwrap(), "--index", "Index"]);
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(2), "{stderr}");
        assert!(
            stderr.contains(&format!("far.parquet: {row}, column `date`"))
                && stderr.contains(&format!("\"{stored}\" is not a date")),
            "{stderr}"
        );
    }
}

fn init(args: &[&str]) -> Output {
    let mut all = vec!["init"];
    all.extend(args);
    hurdle(&all)
}

// Two headers that read alike on one line (a wrapped "A" line break "B" and "A B") give two
// peers whose names must differ (case validation refuses a repeated name): the header that is
// already a plain name keeps it, the cleaned one is numbered (so no peer carries the name of a
// column it does not read), each `column` keeps its header as written, and the case parses.
#[test]
fn init_names_peers_apart_when_their_headers_read_alike() {
    let dir = tempfile::tempdir().unwrap();
    let table = dir.path().join("alike.csv");
    fs::write(
        &table,
        "date,Index,\"A\nB\",A B\n2024-01-31,100,10,20\n2024-02-29,101,11,21\n",
    )
    .unwrap();
    let out = dir.path().join("case.toml");
    let output = init(&[
        table.to_str().unwrap(),
        "--index",
        "Index",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let written = fs::read_to_string(&out).unwrap();
    let case: toml::Table = toml::from_str(&written).unwrap();
    let peers = case["peer"].as_array().unwrap();
    let field = |i: usize, key: &str| peers[i][key].as_str().unwrap().to_string();
    assert_eq!(
        (field(0, "name"), field(0, "column")),
        ("A B (2)".into(), "A\nB".into())
    );
    assert_eq!(
        (field(1, "name"), field(1, "column")),
        ("A B".into(), "A B".into())
    );
}

#[test]
fn init_refuses_a_table_without_peers_or_dates() {
    let dir = tempfile::tempdir().unwrap();
    let one = dir.path().join("one.csv");
    fs::write(&one, "date,Index\n2024-01-31,100\n2024-02-29,101\n").unwrap();
    let out = dir.path().join("case.toml");
    let output = init(&[
        one.to_str().unwrap(),
        "--index",
        "Index",
        "--out",
        out.to_str().unwrap(),
    ]);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains("one.csv: the table has 1 price column(s) (`Index`)"),
        "{stderr}"
    );
    assert!(!out.exists());
    let names = dir.path().join("names.csv");
    fs::write(
        &names,
        "security,Index,Alder\nfirst,100,10\nsecond,101,11\n",
    )
    .unwrap();
    let output = init(&[
        names.to_str().unwrap(),
        "--index",
        "Index",
        "--out",
        out.to_str().unwrap(),
    ]);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains(
            "line 2, column `security` (the date column): the text \"first\" is not a date"
        ),
        "{stderr}"
    );
    assert!(
        stderr.contains(
            "the first column, `security`, is taken as the dates unless --date-column names \
             another (it holds no dates); no column holds date cells or ISO dates"
        ),
        "{stderr}"
    );
    let output = init(&[
        names.to_str().unwrap(),
        "--index",
        "Index",
        "--date-column",
        "Date",
        "--out",
        out.to_str().unwrap(),
    ]);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(2), "{stderr}");
    assert!(
        stderr
            .contains("no date column named `Date`; the header has: `security`, `Index`, `Alder`"),
        "{stderr}"
    );
    assert!(!out.exists());
}

#[test]
fn init_never_overwrites_and_its_placeholders_stop_a_run() {
    let dir = tempfile::tempdir().unwrap();
    let table = dir.path().join("prices.xlsx");
    fs::copy(Path::new(WIDE_DIR).join("data/prices.xlsx"), &table).unwrap();
    let case = dir.path().join("case.toml");
    let args = [
        table.to_str().unwrap(),
        "--sheet",
        "Prices",
        "--index",
        INDEX_COLUMN,
    ];
    ok(&init(&args));
    let written = fs::read_to_string(&case).unwrap();
    assert!(written.contains("file = \"prices.xlsx\""), "{written}");
    let again = init(&args);
    assert_eq!(again.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&again.stderr).contains("init never overwrites"));
    assert_eq!(fs::read_to_string(&case).unwrap(), written);
    let out = dir.path().join("out");
    let output = run_case(&case, &out, &[]);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(2), "{stderr}");
    assert!(!out.exists());
    // Every placeholder is listed with its line: 3 in [case], 2 in [market], 2 in [target],
    // 1 in [debt], 3 in [premiums] and 4 per peer (9 peers: the risk-free column is one here).
    assert!(
        stderr.contains("47 placeholders are still to fill in"),
        "{stderr}"
    );
    let line = written
        .lines()
        .position(|l| l.starts_with("equity_risk_premium"))
        .unwrap()
        + 1;
    assert!(
        stderr.contains(&format!(
            "line {line}: market.equity_risk_premium = \"<FILL IN"
        )),
        "{stderr}"
    );
    assert!(
        stderr.contains("peer.8 (\"Ivelbrook Instruments\").tax_rate"),
        "{stderr}"
    );
}

/// The demo's figure for a placeholder key, as cases/quillmarsh/case.toml and src/demo.rs
/// state them.
fn demo_figure(section: &str, key: &str, peer: Option<usize>) -> String {
    if let Some(i) = peer {
        let p = &hurdle::demo::PEERS[i];
        let value = match key {
            "equity_value" => p.equity_value,
            "debt" => p.debt,
            "cash" => p.cash,
            "tax_rate" => p.tax_rate,
            _ => panic!("peer key {key}"),
        };
        // Debug keeps the decimal point, so TOML reads a float.
        return format!("{value:?}");
    }
    let demo: toml::Table = toml::from_str(&fs::read_to_string(DEMO_CASE).unwrap()).unwrap();
    demo[section][key].to_string()
}

// `hurdle init` on the demo's wide table, with every placeholder filled from the demo's own
// figures (and the one setting the demo changes from its default, beta.adjustment = "blume"),
// must give the WACC of the demo case: the same prices and inputs through the same arithmetic,
// so the two doubles are equal.
#[test]
fn init_with_the_demo_figures_filled_in_reproduces_the_demo_wacc() {
    let dir = tempfile::tempdir().unwrap();
    let table = Path::new(WIDE_DIR).join("data/prices.xlsx");
    let case = dir.path().join("started.toml");
    ok(&init(&[
        table.to_str().unwrap(),
        "--sheet",
        "Prices",
        "--index",
        INDEX_COLUMN,
        "--risk-free",
        RISK_FREE_COLUMN,
        "--out",
        case.to_str().unwrap(),
    ]));
    let text = fs::read_to_string(&case).unwrap();
    let (mut section, mut peer) = (String::new(), None::<usize>);
    let mut filled = Vec::new();
    for line in text.lines() {
        if line == "[[peer]]" {
            peer = Some(peer.map_or(0, |p| p + 1));
        } else if line.starts_with('[') {
            section = line.trim_matches(['[', ']']).to_string();
        }
        match line.split_once(" = \"<FILL IN") {
            Some((key, _)) => {
                let value = demo_figure(&section, key, peer);
                filled.push(format!("{key} = {value}"));
            }
            None => filled.push(line.to_string()),
        }
    }
    fs::write(&case, filled.join("\n")).unwrap();
    let started = dir.path().join("started");
    ok(&run_case(
        &case,
        &started,
        &["--set", "beta.adjustment=blume"],
    ));
    let demo = dir.path().join("demo");
    ok(&run_case(Path::new(DEMO_CASE), &demo, &[]));
    let (a, b) = (receipt(&started), receipt(&demo));
    assert_eq!(a["wacc"].as_f64(), b["wacc"].as_f64());
    assert_eq!(a["beta"]["unlevered"], b["beta"]["unlevered"]);
    assert!(a["wacc"].as_f64().unwrap() > 0.0);
}

/// The figures of a receipt, without input locations and hashes.
fn figures(receipt: &Value) -> Vec<(String, Value)> {
    let mut all = Vec::new();
    leaves(receipt, String::new(), &mut all);
    all.into_iter()
        .filter(|(p, _)| !is_input_location(p))
        .collect()
}

// A workbook in the 1904 date system (older Mac spreadsheets count serials from 1904-01-01)
// whose dates are plain numbers: read in the workbook's own system, so the figures equal the
// CSV table's. openpyxl writes it (`wb.epoch = CALENDAR_MAC_1904`, its documented switch, and
// the serials computed here from 1904-01-01); before, the dates read four years and a day
// early (found by review).
#[test]
fn a_1904_workbook_with_serial_dates_reads_in_its_own_date_system() {
    let copy = WideCopy::new();
    let script = r#"
import csv, datetime, sys, openpyxl
from openpyxl.utils.datetime import CALENDAR_MAC_1904
source, target = sys.argv[1], sys.argv[2]
wb = openpyxl.Workbook()
wb.epoch = CALENDAR_MAC_1904
sheet = wb.active
sheet.title = "Prices"
with open(source, newline="") as f:
    for k, row in enumerate(csv.reader(f)):
        if k == 0:
            sheet.append(row)
            continue
        day = datetime.date.fromisoformat(row[0])
        serial = (day - datetime.date(1904, 1, 1)).days
        sheet.append([serial] + [float(c) if c else None for c in row[1:]])
wb.save(target)
"#;
    let made = Command::new("python3")
        .args(["-c", script])
        .arg(copy.path("data/prices.csv"))
        .arg(copy.path("data/prices.xlsx"))
        .output()
        .expect("python3 with openpyxl (python3 -m pip install openpyxl)");
    assert!(
        made.status.success(),
        "{}",
        String::from_utf8_lossy(&made.stderr)
    );
    let out = copy.root.path().join("out-1904");
    ok(&run_case(&copy.path("case_workbook.toml"), &out, &[]));
    let csv_out = copy.root.path().join("out-csv");
    ok(&run_case(&copy.path("case.toml"), &csv_out, &[]));
    let (a, b) = (figures(&receipt(&csv_out)), figures(&receipt(&out)));
    assert!(a.len() > 800, "too few figures compared: {}", a.len());
    assert_eq!(a, b);
}

// One stray entry far from the table (a space typed at XFD1048576) would make the sheet a
// rectangle of 17 billion cells: refused naming the cell, exit 2, instead of an abort on a
// failed allocation (found by review).
#[test]
fn a_stray_cell_far_from_the_table_is_named() {
    let copy = WideCopy::new();
    copy.workbook_with_text_cell(1_048_575, 16_383, " ");
    let stderr = copy.fail("case_workbook.toml");
    assert!(
        stderr.contains("because of XFD1048576 (the text \" \"), far from the rest"),
        "{stderr}"
    );
    // A stray only far to the right (a note in the header row, column WQK, 0-based 16,000):
    // that cell alone is named, not the table's last price, whose row is no stray.
    let copy = WideCopy::new();
    copy.workbook_with_text_cell(0, 16_000, "note");
    let stderr = copy.fail("case_workbook.toml");
    assert!(
        stderr.contains("because of WQK1 (the text \"note\"), far from"),
        "{stderr}"
    );
}

// A case reading a hidden sheet says so in its own notes (result.json and the memo), not only
// `init` on the terminal (found by review: read without a note). openpyxl, an independent
// writer, hides the wide demo's "Prices" sheet (`sheet_state`, its documented attribute; the
// "About" sheet stays visible, as a workbook needs one); the figures are the workbook case's.
#[test]
fn a_case_reading_a_hidden_sheet_notes_it() {
    let copy = WideCopy::new();
    let book = copy.path("data/prices.xlsx");
    let script = "import sys, openpyxl\n\
                  book = openpyxl.load_workbook(sys.argv[1])\n\
                  book['Prices'].sheet_state = 'hidden'\n\
                  book.save(sys.argv[1])";
    let output = Command::new("python3")
        .args(["-c", script])
        .arg(&book)
        .output()
        .expect("python3 with openpyxl (python3 -m pip install openpyxl)");
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let out = copy.root.path().join("out");
    let run = run_case(&copy.path("case_workbook.toml"), &out, &[]);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let notes = receipt(&out)["notes"].to_string();
    assert!(
        notes.contains(
            "data/prices.xlsx: sheet \\\"Prices\\\" is hidden in the workbook (its spreadsheet \
             program does not show it)"
        ),
        "{notes}"
    );
    let memo = fs::read_to_string(out.join("memo.md")).unwrap();
    assert!(memo.contains("sheet \"Prices\" is hidden"), "{memo}");
}

/// `hurdle init TABLE --index Index` into a fresh folder: the output.
fn init_table(dir: &Path, name: &str, bytes: &[u8]) -> Output {
    let table = dir.join(name);
    fs::write(&table, bytes).unwrap();
    let out = dir.join(format!("{name}.toml"));
    hurdle(&[
        "init",
        table.to_str().unwrap(),
        "--index",
        "Index",
        "--out",
        out.to_str().unwrap(),
    ])
}

/// Twenty rows of `date,Index,Peer A` from 2024-01-01 (weekdays), as a spreadsheet exports.
fn small_table_rows() -> Vec<String> {
    let mut day = day(2024, 1, 1);
    let mut rows = Vec::new();
    while rows.len() < 20 {
        use chrono::Datelike;
        if day.weekday().number_from_monday() <= 5 {
            let k = rows.len() as f64;
            rows.push(format!("{day},{:.2},{:.2}", 100.0 + k, 10.0 + 0.3 * k));
        }
        day = day.succ_opt().unwrap();
    }
    rows
}

// Wide tables as spreadsheet programs export them (found by review): lines ending in a carriage
// return alone are named as such (not a panic's exit 101); a header cell wrapped onto a second
// line inside quotes does not shift the line a later message names; a `sep=,` line above the
// header is named as a spreadsheet's separator note; a dataframe's unnamed row-index column is
// left out, as price files leave it; a latest row pasted above an ascending table is itself
// named out of order.
#[test]
fn spreadsheet_exports_of_a_wide_table_are_read_or_named() {
    let dir = tempfile::tempdir().unwrap();
    let rows = small_table_rows();
    let stderr = |output: &Output| String::from_utf8_lossy(&output.stderr).to_string();
    let with_header = |header: &str, rows: &[String], end: &str| -> String {
        std::iter::once(header.to_string())
            .chain(rows.iter().cloned())
            .collect::<Vec<_>>()
            .join(end)
            + end
    };
    let cr = init_table(
        dir.path(),
        "cr.csv",
        with_header("date,Index,Peer A", &rows, "\r").as_bytes(),
    );
    assert_eq!(cr.status.code(), Some(2), "{}", stderr(&cr));
    assert!(
        stderr(&cr).contains("the file's lines end with CR alone"),
        "{}",
        stderr(&cr)
    );
    // The header's last name wrapped onto a second line: the 12th data row is on line 14.
    let mut bad = rows.clone();
    bad[11] = bad[11].rsplit_once(',').unwrap().0.to_string() + ",#N/A";
    let wrapped = init_table(
        dir.path(),
        "wrapped.csv",
        with_header("date,Index,\"Peer\nA\"", &bad, "\n").as_bytes(),
    );
    assert_eq!(wrapped.status.code(), Some(2), "{}", stderr(&wrapped));
    assert!(
        stderr(&wrapped).contains("line 14, column `Peer\\nA`"),
        "{}",
        stderr(&wrapped)
    );
    let sep = init_table(
        dir.path(),
        "sep.csv",
        with_header("sep=,\ndate,Index,Peer A", &rows, "\n").as_bytes(),
    );
    assert_eq!(sep.status.code(), Some(2), "{}", stderr(&sep));
    assert!(
        stderr(&sep).contains("line 1: `sep=,` is a spreadsheet's note of the separator"),
        "{}",
        stderr(&sep)
    );
    let indexed: Vec<String> = (rows.iter().enumerate())
        .map(|(i, r)| format!("{i},{r}"))
        .collect();
    let index = init_table(
        dir.path(),
        "indexed.csv",
        with_header(",date,Index,Peer A", &indexed, "\n").as_bytes(),
    );
    assert!(index.status.success(), "{}", stderr(&index));
    assert!(ok(&index).contains("1 peer(s)"), "{}", ok(&index));
    // 2024-01-26 (the last row) pasted above the rest: line 2 is named, not line 3.
    let mut order = rows.clone();
    let latest = order.pop().unwrap();
    order.insert(0, latest);
    // Serial dates under a blank header are no row index (they do not count 0, 1, 2, …): the
    // unnamed column is named, as before (found by review: they were dropped as an index).
    let serials: Vec<String> = (rows.iter().enumerate())
        .map(|(i, r)| format!("{},{}", 45292 + i, r.split_once(',').unwrap().1))
        .collect();
    let serial = init_table(
        dir.path(),
        "serials.csv",
        with_header(",Index,Peer A", &serials, "\n").as_bytes(),
    );
    assert_eq!(serial.status.code(), Some(2), "{}", stderr(&serial));
    assert!(
        stderr(&serial).contains("has no header"),
        "{}",
        stderr(&serial)
    );
    // A descending table with a repeated date is named by its repeat, not called ascending
    // (found by review: equal neighbours counted as rising).
    let repeat = init_table(
        dir.path(),
        "repeat.csv",
        b"date,Index,Peer A\n2024-01-12,101,10.1\n2024-01-11,100,10\n2024-01-11,100,10\n",
    );
    assert!(
        stderr(&repeat).contains("line 4, column `date`: duplicate date 2024-01-11"),
        "{}",
        stderr(&repeat)
    );
    let moved = init_table(
        dir.path(),
        "order.csv",
        with_header("date,Index,Peer A", &order, "\n").as_bytes(),
    );
    assert_eq!(moved.status.code(), Some(2), "{}", stderr(&moved));
    assert!(
        stderr(&moved).contains("line 2, column `date`: date 2024-01-26 is out of the order of the rows below it, which run ascending"),
        "{}",
        stderr(&moved)
    );
}

/// A minimal OpenDocument spreadsheet (mimetype, manifest, content) whose sheet "Prices" holds
/// `rows` of (date serial, index, peer) under a header, with the null date `null_date`.
fn ods_with_serial_dates(null_date_attribute: &str, rows: &[(f64, f64, f64)]) -> Vec<u8> {
    use std::io::Write;
    let cell = |v: f64| {
        format!(
            "<table:table-cell office:value-type=\"float\" office:value=\"{v}\"><text:p>{v}</text:p></table:table-cell>"
        )
    };
    let text = |t: &str| {
        format!("<table:table-cell office:value-type=\"string\"><text:p>{t}</text:p></table:table-cell>")
    };
    let mut body = format!(
        "<table:table-row>{}{}{}</table:table-row>",
        text("date"),
        text("Index"),
        text("Peer A")
    );
    for (d, i, p) in rows {
        body.push_str(&format!(
            "<table:table-row>{}{}{}</table:table-row>",
            cell(*d),
            cell(*i),
            cell(*p)
        ));
    }
    let content = format!(
        "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\
         <office:document-content xmlns:office=\"urn:oasis:names:tc:opendocument:xmlns:office:1.0\" \
         xmlns:table=\"urn:oasis:names:tc:opendocument:xmlns:table:1.0\" \
         xmlns:text=\"urn:oasis:names:tc:opendocument:xmlns:text:1.0\" office:version=\"1.2\">\
         <office:body><office:spreadsheet><table:calculation-settings>\
         <table:null-date {null_date_attribute}/></table:calculation-settings>\
         <table:table table:name=\"Prices\">{body}</table:table></office:spreadsheet></office:body>\
         </office:document-content>"
    );
    let manifest = "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\
        <manifest:manifest xmlns:manifest=\"urn:oasis:names:tc:opendocument:xmlns:manifest:1.0\">\
        <manifest:file-entry manifest:full-path=\"/\" manifest:media-type=\"application/vnd.oasis.opendocument.spreadsheet\"/>\
        </manifest:manifest>";
    let mut zip = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
    let stored =
        zip::write::SimpleFileOptions::default().compression_method(zip::CompressionMethod::Stored);
    for (name, data) in [
        ("mimetype", "application/vnd.oasis.opendocument.spreadsheet"),
        ("META-INF/manifest.xml", manifest),
        ("content.xml", content.as_str()),
    ] {
        zip.start_file(name, stored).unwrap();
        zip.write_all(data.as_bytes()).unwrap();
    }
    zip.finish().unwrap().into_inner()
}

// An OpenDocument workbook in the 1904 date system (its null date 1904-01-01, as a workbook
// converted from one in that system keeps) reads its serial dates from 1904: serial 43831 is
// 2020-01-01 from 1899-12-30 and 2024-01-02 from 1904-01-01 (Python: date(1899,12,30) +
// timedelta(43831), date(1904,1,1) + timedelta(43831)). Found by review: they were read 1,462
// days early. Another null date is refused by name.
#[test]
fn an_opendocument_workbook_in_the_1904_system_reads_its_dates_from_1904() {
    let dir = tempfile::tempdir().unwrap();
    let rows: Vec<(f64, f64, f64)> = (0..20)
        .map(|k| (43831.0 + k as f64, 100.0 + k as f64, 10.0 + 0.3 * k as f64))
        .collect();
    let book = |attribute: &str| ods_with_serial_dates(attribute, &rows);
    let usual = init_table(
        dir.path(),
        "usual.ods",
        &book("table:date-value=\"1899-12-30\""),
    );
    assert!(
        ok(&usual).contains("(20 dates, 2020-01-01 to 2020-01-20)"),
        "{}",
        ok(&usual)
    );
    // XML allows either quote and white space around `=` (found by review: missed).
    for (k, attribute) in [
        "table:date-value=\"1904-01-01\"",
        "table:date-value='1904-01-01'",
        "table:date-value = \"1904-01-01\"",
    ]
    .iter()
    .enumerate()
    {
        let mac = init_table(dir.path(), &format!("mac{k}.ods"), &book(attribute));
        assert!(
            ok(&mac).contains("(20 dates, 2024-01-02 to 2024-01-21)"),
            "{}",
            ok(&mac)
        );
    }
    let old = init_table(
        dir.path(),
        "old.ods",
        &book("table:date-value=\"1900-01-01\""),
    );
    assert_eq!(old.status.code(), Some(2));
    assert!(
        String::from_utf8_lossy(&old.stderr).contains("counts its dates from 1900-01-01"),
        "{}",
        String::from_utf8_lossy(&old.stderr)
    );
}

// A workbook whose writer stored each formula's result as a placeholder 0 and asked to be
// recalculated when opened (fullCalcOnLoad, as rust_xlsxwriter and other writing libraries do)
// is refused naming the formula, not read as prices or yields of 0 (found by review: a yield
// column of such formulas was read as rates of 0 without a word). The same formulas saved with
// their results are read.
#[test]
fn formulas_saved_with_placeholder_results_are_named() {
    let dir = tempfile::tempdir().unwrap();
    let write = |results: bool| -> Vec<u8> {
        let mut book = rust_xlsxwriter::Workbook::new();
        let sheet = book.add_worksheet().set_name("Prices").unwrap();
        let date_format = rust_xlsxwriter::Format::new().set_num_format("yyyy-mm-dd");
        for (j, name) in ["date", "Index", "Peer A"].iter().enumerate() {
            sheet.write_string(0, j as u16, *name).unwrap();
        }
        for k in 0..20u32 {
            let day = rust_xlsxwriter::ExcelDateTime::from_ymd(2024, 1, 1 + k as u8).unwrap();
            sheet
                .write_datetime_with_format(k + 1, 0, &day, &date_format)
                .unwrap();
            sheet.write_number(k + 1, 1, 100.0 + f64::from(k)).unwrap();
            let value = 10.0 + 0.5 * f64::from(k);
            let mut formula = rust_xlsxwriter::Formula::new(format!("={value}*1"));
            if results {
                formula = formula.set_result(value.to_string());
            }
            sheet.write_formula(k + 1, 2, formula).unwrap();
        }
        book.save_to_buffer().unwrap()
    };
    let placeholder = init_table(dir.path(), "placeholder.xlsx", &write(false));
    let stderr = String::from_utf8_lossy(&placeholder.stderr);
    assert_eq!(placeholder.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains("sheet \"Prices\", cell C2 holds the formula `=10*1` whose saved result")
            && stderr.contains("a placeholder"),
        "{stderr}"
    );
    let calculated = init_table(dir.path(), "calculated.xlsx", &write(true));
    assert!(
        ok(&calculated).contains("(20 dates, 2024-01-01 to 2024-01-20)"),
        "{}",
        ok(&calculated)
    );
}

// A cell stored as a number whose text the workbook reader cannot take (`0x10`, written into
// the sheet's XML of a workbook rust_xlsxwriter made) is placed by the cell read before it and
// explained, exit 2 (found by review: "Parse float error" named no cell).
#[test]
fn an_xlsx_number_cell_the_reader_cannot_take_is_placed() {
    use std::io::{Read, Write};
    let dir = tempfile::tempdir().unwrap();
    let written = dir.path().join("written.xlsx");
    let mut book = rust_xlsxwriter::Workbook::new();
    let sheet = book.add_worksheet().set_name("Prices").unwrap();
    for (col, header) in ["date", "Index", "Alder"].iter().enumerate() {
        sheet.write_string(0, col as u16, *header).unwrap();
    }
    for row in 1..6u32 {
        sheet
            .write_string(row, 0, format!("2024-01-{:02}", row + 1))
            .unwrap();
        sheet.write_number(row, 1, 100.0 + f64::from(row)).unwrap();
        sheet.write_number(row, 2, 40.0 + f64::from(row)).unwrap();
    }
    book.save(&written).unwrap();
    // C4 holds 43; its value becomes the text 0x10, typed as a number (`t="n"`: without the
    // attribute calamine reads the cell as text, which the table check names by its cell).
    let mut archive = zip::ZipArchive::new(fs::File::open(&written).unwrap()).unwrap();
    let mut out = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
    for i in 0..archive.len() {
        let mut entry = archive.by_index(i).unwrap();
        let name = entry.name().unwrap().to_string();
        let mut data = String::new();
        entry.read_to_string(&mut data).unwrap();
        if name == "xl/worksheets/sheet1.xml" {
            assert!(data.contains("<c r=\"C4\"><v>43</v></c>"), "{data}");
            data = data.replace(
                "<c r=\"C4\"><v>43</v></c>",
                "<c r=\"C4\" t=\"n\"><v>0x10</v></c>",
            );
        }
        out.start_file(name, zip::write::SimpleFileOptions::default())
            .unwrap();
        out.write_all(data.as_bytes()).unwrap();
    }
    let patched = dir.path().join("patched.xlsx");
    fs::write(&patched, out.finish().unwrap().into_inner()).unwrap();
    let output = init(&[patched.to_str().unwrap(), "--index", "Index"]);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains("patched.xlsx: sheet \"Prices\" cannot be read at the first cell after B4 that holds a value")
            && stderr.contains("retype it, or save the sheet as CSV"),
        "{stderr}"
    );
}
