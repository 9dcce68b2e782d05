//! `hurdle init TABLE --index COLUMN [--risk-free COLUMN] [--sheet NAME] [--date-column NAME]
//! [--out CASE.toml]`
//!
//! Reads a wide price table (CSV, Parquet, or a workbook's sheet) and writes a starting case
//! file: the table as `[sources.prices]`, the index column, the risk-free yield column when
//! named, one `[[peer]]` per other column, every setting at its default with a comment, and
//! every figure hurdle cannot know as a placeholder. CASE.toml defaults to `case.toml` beside
//! the table; an existing file is never overwritten.

use std::path::{Path, PathBuf};

use hurdle::case::scaffold::{relative_path, starting_case, write_new, StartOptions};
use hurdle::io::tables::{PriceTable, NAME_THE_SHEET};

#[derive(Debug, clap::Args)]
pub struct Args {
    /// The price table: .csv, .parquet, .xlsx, .xlsm, .xls or .ods.
    pub table: PathBuf,
    /// The column holding the market index; every other column becomes a peer.
    #[arg(long, value_name = "COLUMN")]
    pub index: String,
    /// A column of annualised risk-free yields (decimals), for excess returns.
    #[arg(long = "risk-free", value_name = "COLUMN")]
    pub risk_free: Option<String>,
    /// The workbook's sheet (may be left out when the workbook has one sheet).
    #[arg(long, value_name = "NAME")]
    pub sheet: Option<String>,
    /// The date column's header (default: the first column).
    #[arg(long = "date-column", value_name = "NAME")]
    pub date_column: Option<String>,
    /// Where to write the case file (default: `case.toml` beside the table).
    #[arg(long, value_name = "CASE.toml")]
    pub out: Option<PathBuf>,
}

pub fn run(args: &Args) -> hurdle::Result<()> {
    let out = args.out.clone().unwrap_or_else(|| {
        args.table
            .parent()
            .unwrap_or(Path::new(""))
            .join("case.toml")
    });
    if out.exists() {
        return Err(hurdle::Error::Argument {
            option: "--out".into(),
            message: format!(
                "{} exists already; init never overwrites a file, so give another --out",
                out.display()
            ),
        });
    }
    let case_dir = out.parent().unwrap_or(Path::new(""));
    let written = relative_path(case_dir, &args.table);
    let written = written.to_string_lossy().replace('\\', "/");
    let table = PriceTable::read(
        &written,
        &args.table,
        args.sheet.as_deref(),
        args.date_column.as_deref(),
    )
    .map_err(|e| in_init_terms(e, args.date_column.is_none()))?;
    let text = starting_case(
        &table,
        &StartOptions {
            table_path: &written,
            index: &args.index,
            risk_free: args.risk_free.as_deref(),
        },
    )?;
    write_new(&out, &text)?;
    let placeholders = hurdle::case::placeholders::find(&text).len();
    println!(
        "wrote {} with {} peer(s) from {} ({} dates, {} to {})",
        out.display(),
        text.matches("[[peer]]").count(),
        args.table.display(),
        table.dates().len(),
        table.dates()[0],
        table.dates()[table.dates().len() - 1]
    );
    println!(
        "  {placeholders} placeholders (\"{}: …>\") are figures only you can supply: fill each in \
         before `hurdle run`",
        hurdle::case::placeholders::MARK
    );
    Ok(())
}

/// A table's error in init's words: when the first column was taken as the dates and is not,
/// says how to name another; a workbook of several sheets is told which option names one.
fn in_init_terms(error: hurdle::Error, guessed: bool) -> hurdle::Error {
    match error {
        hurdle::Error::DataFile { file, message } if message.contains(NAME_THE_SHEET) => {
            hurdle::Error::DataFile {
                file,
                message: message.replacen(
                    NAME_THE_SHEET,
                    "name the one with the prices with --sheet",
                    1,
                ),
            }
        }
        hurdle::Error::DataFile { file, message }
            if guessed && message.contains("is not a date") =>
        {
            hurdle::Error::DataFile {
                file,
                message: format!(
                    "{message} (init takes the first column as the dates; name the date column \
                     with --date-column)"
                ),
            }
        }
        other => other,
    }
}
