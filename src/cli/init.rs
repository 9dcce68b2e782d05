//! `hurdle init TABLE --index COLUMN [--risk-free COLUMN] [--sheet NAME] [--date-column NAME]
//! [--out CASE.toml]`
//!
//! Reads a wide price table (CSV, Parquet, or a workbook's sheet) and writes a starting case
//! file: the table as `[sources.prices]`, the index column, the risk-free yield column when
//! named, one `[[peer]]` per other column, every setting at its default with a comment, and
//! every figure hurdle cannot know as a placeholder. CASE.toml defaults to `case.toml` beside
//! the table; an existing file is never overwritten. It prints the columns it chose; on standard
//! error, what reading the table noticed (a hidden sheet, a filter) and a warning for each peer
//! column whose values all lie between -1 and 1, naming `--risk-free`.

use std::path::{Path, PathBuf};

use hurdle::case::scaffold::{starting_case, written_path, StartOptions, StartingCase};
use hurdle::error::{compact, one_line};
use hurdle::io::tables::{header_key, ChoiceWords, PriceTable, TableRequest};
use hurdle::report::new_file::write_new;

#[derive(Debug, clap::Args)]
pub struct Args {
    /// The price table: .csv, .txt, .parquet, .pq, .xlsx, .xlsm, .xls or .ods.
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
        // A folder is not the case file's name (found by review: a folder was told "init
        // never overwrites a file").
        let what = match out.is_dir() {
            true => "is a folder; --out names the case file to write, such as DIR/case.toml",
            false => "exists already; init never overwrites a file, so give another --out",
        };
        return Err(hurdle::Error::Argument {
            option: "--out".into(),
            message: format!("{} {what}", out.display()),
        });
    }
    let case_dir = out.parent().unwrap_or(Path::new(""));
    let written = written_path(case_dir, &args.table);
    let request = TableRequest {
        sheet: args.sheet.as_deref(),
        date_column: args.date_column.as_deref(),
        words: &OPTIONS,
    };
    let table = PriceTable::read(&written, &args.table, request)?;
    let started = starting_case(
        &table,
        &StartOptions {
            table_path: &written,
            index: &args.index,
            risk_free: args.risk_free.as_deref(),
        },
    )?;
    write_new(&out, &started.text)?;
    report(args, &out, &table, &started);
    Ok(())
}

/// What init wrote and chose, on standard output; what the table's reading noticed and the
/// peers that look like yields, on standard error.
fn report(args: &Args, out: &Path, table: &PriceTable, started: &StartingCase) {
    let dates = table.dates();
    println!(
        "wrote {} with {} peer(s) from {} ({} dates, {} to {})",
        out.display(),
        started.peers.len(),
        args.table.display(),
        dates.len(),
        dates[0],
        dates[dates.len() - 1]
    );
    let shown = |header: &str| format!("`{}`", header_key(header));
    let risk_free = match &started.risk_free {
        Some(column) => shown(column),
        None => "none (--risk-free COLUMN names a column of yields)".to_string(),
    };
    println!(
        "  dates: {}; index: {}; risk-free yields: {risk_free}",
        shown(&table.date_column),
        shown(&started.index)
    );
    // A peer named otherwise than its header says which column it reads (found by review:
    // peers named "Alder" and "Alder (2)" read the columns `=Alder` and `Alder`, unsaid).
    let peers: Vec<String> = (started.peers.iter())
        .map(|p| match p.name == p.column {
            true => shown(&p.name),
            false => format!(
                "{} (column {})",
                shown(&p.name),
                header_as_written(&p.column)
            ),
        })
        .collect();
    println!("  peers: {}", peers.join(", "));
    println!(
        "  {} placeholders (\"{}: …>\") are figures only you can supply: fill each in before \
         `hurdle run`",
        hurdle::case::placeholders::find(&started.text).len(),
        hurdle::case::placeholders::MARK
    );
    for note in &table.notes {
        say!("note: {}: {}", args.table.display(), one_line(note));
    }
    for peer in &started.peers {
        let Some((low, high)) = peer.rate_like else {
            continue;
        };
        say!(
            "warning: {}: column {} became a peer, but every value in it lies between -1 and 1 \
             ({} to {}), as yields do and prices seldom do; if it holds the risk-free yields, \
             delete {} and run init again with --risk-free {}",
            args.table.display(),
            shown(&peer.column),
            compact(low),
            compact(high),
            out.display(),
            shell_word(&header_key(&peer.column))
        );
    }
}

/// A header in backticks as the table writes it, on one line: a line break, a tab, a no-break
/// space or another such character is written as its escape (`\n`, `\u{a0}`), so that two
/// headers that read alike once spaced alike (`A\nB` and `A B`) are told apart.
fn header_as_written(header: &str) -> String {
    let mut text = String::with_capacity(header.len());
    for c in header.chars() {
        match c.is_control() || (c.is_whitespace() && c != ' ') {
            true => text.extend(c.escape_default()),
            false => text.push(c),
        }
    }
    format!("`{text}`")
}

/// `text` as one shell word: quoted unless it is letters, digits and `-_.` only.
fn shell_word(text: &str) -> String {
    let plain = !text.is_empty()
        && text
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || "-_.".contains(c));
    match plain {
        true => text.to_string(),
        false => format!("'{}'", text.replace('\'', "'\\''")),
    }
}

/// A table's advice in init's options, not a case's keys (found by review: `init table.csv
/// --sheet X` was told to drop `sheet`).
const OPTIONS: ChoiceWords = ChoiceWords {
    name_the_sheet: "with --sheet",
    name_the_date_column: "--date-column names another",
    sheet_given: "--sheet ",
    drop_the_sheet: "drop --sheet",
};
