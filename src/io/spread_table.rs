//! Spread tables: a rating → spread table or a coverage → rating → spread table, as CSV with a
//! header row or as TOML with one `[[row]]` per line, each row remembered with its line so a memo
//! can cite it. Reading only; the lookups live with the cost of debt in `capital::debt`.

use std::path::Path;

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};

/// One row of a spread table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SpreadRow {
    /// Lowest interest coverage (EBIT / interest expense) of the row, inclusive; coverage
    /// tables only.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub min_coverage: Option<f64>,
    pub rating: String,
    /// Spread over the risk-free rate (annual, decimal).
    pub spread: f64,
    /// 1-based line of the row in its file (CSV: the record's line, the file's first line
    /// being 1; TOML: the line where the row's table starts).
    #[serde(skip_deserializing)]
    pub line: usize,
}

/// A rating → spread or coverage → rating → spread table, as read.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SpreadTable {
    /// The path as written in the case file.
    pub path: String,
    pub sha256: String,
    /// Number of rows read.
    pub row_count: usize,
    #[serde(skip)]
    pub rows: Vec<SpreadRow>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct TomlTable {
    row: Vec<toml::Spanned<SpreadRow>>,
}

/// Reads a spread table (`.toml`, else CSV). Coverage tables must give `min_coverage` on every
/// row, in strictly ascending order. Lines starting with `#` in a CSV are comments.
pub fn read_spread_table(written: &str, path: &Path, coverage: bool) -> Result<SpreadTable> {
    let bytes = std::fs::read(path).map_err(|source| Error::Io {
        path: path.to_path_buf(),
        action: "cannot read the spread table",
        source,
    })?;
    let sha256 = crate::io::series::sha256_hex(&bytes);
    let file_error = |message: String| Error::DataFile {
        file: path.to_path_buf(),
        message,
    };
    // A workbook or "Unicode text" given as the table is named as what it is, as price files
    // and panels name it (found by review: "line 1: not UTF-8 text" alone).
    if let Some(kind) = crate::io::encoding::binary_kind(&bytes) {
        return Err(file_error(format!(
            "the file is {kind}, not CSV text: save the table as CSV (comma-separated, UTF-8)"
        )));
    }
    let text = String::from_utf8(bytes).map_err(|e| {
        let valid = &e.as_bytes()[..e.utf8_error().valid_up_to()];
        let line = valid.iter().filter(|&&b| b == b'\n').count() + 1;
        file_error(format!(
            "line {line}: not UTF-8 text; save the table as UTF-8"
        ))
    })?;
    let rows = if path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("toml"))
    {
        parse_toml_table(&text, path, coverage)?
    } else {
        parse_csv_table(&text, path, coverage)?
    };
    if rows.is_empty() {
        return Err(file_error("the table has no rows".into()));
    }
    for (i, row) in rows.iter().enumerate() {
        let row_error = |message: String| Error::DataRow {
            file: path.to_path_buf(),
            line: row.line,
            message,
        };
        check_row(row).map_err(row_error)?;
        if coverage {
            let Some(low) = row.min_coverage else {
                return Err(row_error("min_coverage is missing".into()));
            };
            if !low.is_finite() {
                return Err(row_error(format!("min_coverage = {low} is not a number")));
            }
            if let Some(previous) = i.checked_sub(1).and_then(|j| rows[j].min_coverage) {
                if low.is_nan() || low <= previous {
                    return Err(row_error(format!(
                        "min_coverage = {low} is not above the previous row's {previous}; \
                         list the rows in ascending order of coverage"
                    )));
                }
            }
        }
        if let Some(j) = rows[..i].iter().position(|r| r.rating == row.rating) {
            if !coverage {
                return Err(row_error(format!(
                    "rating \"{}\" repeats line {}",
                    row.rating, rows[j].line
                )));
            }
        }
    }
    Ok(SpreadTable {
        path: written.to_string(),
        sha256,
        row_count: rows.len(),
        rows,
    })
}

/// A row's spread in range and its rating named (found by review: an empty rating was accepted,
/// shown as a blank cell in the memo and matched by `debt.rating = ""`).
fn check_row(row: &SpreadRow) -> std::result::Result<(), String> {
    check_spread(row.spread)?;
    match row.rating.trim().is_empty() {
        true => Err("the rating is empty: each row names its rating (BBB, say)".into()),
        false => Ok(()),
    }
}

/// A TOML spread table's rows, each with the line where its table (or inline table) starts.
/// Its errors name the key that gave the file (found by review: a case file given as the table
/// read as if the case itself were broken).
fn parse_toml_table(text: &str, path: &Path, coverage: bool) -> Result<Vec<SpreadRow>> {
    let table: TomlTable = toml::from_str(text).map_err(|e| Error::DataFile {
        file: path.to_path_buf(),
        message: format!(
            "read as the spread table of debt.{}_table: {}",
            if coverage { "coverage" } else { "rating" },
            crate::error::toml_error(&e, text)
        ),
    })?;
    Ok(table
        .row
        .into_iter()
        .map(|row| {
            let line = text[..row.span().start].matches('\n').count() + 1;
            SpreadRow {
                line,
                ..row.into_inner()
            }
        })
        .collect())
}

/// A CSV spread table's records with their lines, after a BOM; a line ending in a carriage
/// return alone is refused. Line by line (a spread table's cells hold no line breaks), so each
/// row keeps its line whatever comments and blank lines come before it; the csv crate splits
/// each line's cells (quoted cells, a trailing carriage return). Blank lines and lines starting
/// with `#` are skipped, and so are lines of nothing but commas after the last row.
fn csv_records(text: &str, path: &Path) -> Result<Vec<(usize, csv::StringRecord)>> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    // Lines of nothing but commas after the last row are no rows (cut at a line end, so the
    // text stays UTF-8).
    let kept = super::sanity::without_trailing_empty_records(text.as_bytes()).len();
    let text = &text[..kept];
    if let Some((line, column, stray)) = super::sanity::first_lone_carriage_return(text.as_bytes())
    {
        return Err(Error::DataRow {
            file: path.to_path_buf(),
            line,
            message: super::sanity::lone_carriage_return(column, stray),
        });
    }
    let lines = text
        .split('\n')
        .enumerate()
        .map(|(i, line)| (i + 1, line.trim()));
    lines
        .filter(|(_, line)| !line.is_empty() && !line.starts_with('#'))
        .map(|(line, text)| {
            let mut reader = csv::ReaderBuilder::new()
                .has_headers(false)
                .trim(csv::Trim::All)
                .from_reader(text.as_bytes());
            match reader.records().next() {
                Some(Ok(record)) => Ok((line, record)),
                Some(Err(e)) => Err(Error::DataRow {
                    file: path.to_path_buf(),
                    line,
                    message: format!("not a readable CSV row: {e}"),
                }),
                None => Ok((line, csv::StringRecord::new())),
            }
        })
        .collect()
}

fn parse_csv_table(text: &str, path: &Path, coverage: bool) -> Result<Vec<SpreadRow>> {
    let mut records = csv_records(text, path)?.into_iter();
    let (header_line, header) = records.next().ok_or_else(|| Error::DataFile {
        file: path.to_path_buf(),
        message: "the table is empty".into(),
    })?;
    let columns: Vec<&str> = header.iter().collect();
    let find = |name: &str| {
        let header_error = |message: String| Error::DataRow {
            file: path.to_path_buf(),
            line: header_line,
            message,
        };
        match super::sanity::unique_column(columns.iter().copied(), name) {
            Ok(Some(at)) => Ok(at),
            Ok(None) => Err(header_error(format!(
                "no `{name}` column (columns: {}){}",
                columns.join(", "),
                super::sanity::column_name_hint(columns.iter().copied(), name)
            ))),
            Err(message) => Err(header_error(message)),
        }
    };
    let rating = find("rating")?;
    let spread = find("spread")?;
    let min_coverage = if coverage {
        Some(find("min_coverage")?)
    } else {
        None
    };
    records
        .map(|(line, record)| {
            let row_error = |message: String| Error::DataRow {
                file: path.to_path_buf(),
                line,
                message,
            };
            if record.len() > columns.len() {
                let text: Vec<&str> = record.iter().collect();
                return Err(row_error(super::sanity::extra_fields_message(
                    record.len(),
                    columns.len(),
                    &text.join(","),
                )));
            }
            let cell = |i: usize| {
                record.get(i).ok_or_else(|| {
                    row_error(format!(
                        "{} cells, expected {}",
                        record.len(),
                        columns.len()
                    ))
                })
            };
            let number = |i: usize| {
                let raw = cell(i)?;
                raw.parse::<f64>()
                    .map_err(|_| row_error(format!("`{raw}` in `{}` is not a number", columns[i])))
            };
            Ok(SpreadRow {
                min_coverage: min_coverage.map(number).transpose()?,
                rating: cell(rating)?.to_string(),
                spread: number(spread)?,
                line,
            })
        })
        .collect()
}

/// A spread in (−0.5, 1); one written in percent (1.15 for 1.15%), the usual slip, gets the
/// decimals hint, and one of 20 or more the basis points hint (a spread of 20% or more is no
/// rating's; found by review: a table in basis points was advised to read 45 as 0.45).
fn check_spread(spread: f64) -> std::result::Result<(), String> {
    if spread.is_finite() && spread > -0.5 && spread < 1.0 {
        return Ok(());
    }
    let decimal = |scale: f64| crate::error::compact((spread / scale * 1e12).round() / 1e12);
    let hint = match spread {
        s if (1.0..20.0).contains(&s) => format!(
            ": spreads are decimals over the risk-free rate ({} for {}%)",
            decimal(100.0),
            crate::error::compact(spread)
        ),
        s if (20.0..10_000.0).contains(&s) => format!(
            ": spreads are decimals over the risk-free rate ({} for {} basis points, {}%)",
            decimal(10_000.0),
            crate::error::compact(spread),
            decimal(100.0)
        ),
        _ => String::new(),
    };
    Err(format!("spread = {spread} is outside (-0.5, 1){hint}"))
}
