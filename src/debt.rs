//! Where the pre-tax cost of debt comes from: a given yield, a rating's spread, or a synthetic
//! rating from interest coverage.
//!
//! The two table-based sources read a small user-supplied table from the case folder (CSV with a
//! header row, or TOML with one `[[row]]` per line of the table) and look up one row; the row
//! used, with its line in the file, goes into the result so the memo can show it. Reading is in
//! [`read_spread_table`]; the lookups [`rating_row`] and [`coverage_row`] and [`cost_of_debt`]
//! are pure.

use std::path::Path;

use serde::{Deserialize, Serialize};

use crate::case::{DebtSettings, DebtSource};
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
    /// 1-based line of the row in its file (CSV: counting the header as line 1; TOML: the
    /// row's position).
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
    row: Vec<SpreadRow>,
}

/// Reads a spread table (`.toml`, else CSV). Coverage tables must give `min_coverage` on every
/// row, in strictly ascending order. Lines starting with `#` in a CSV are comments.
pub fn read_spread_table(written: &str, path: &Path, coverage: bool) -> Result<SpreadTable> {
    let bytes = std::fs::read(path).map_err(|source| Error::Io {
        path: path.to_path_buf(),
        action: "cannot read the spread table",
        source,
    })?;
    let sha256 = crate::data::sha256_hex(&bytes);
    let file_error = |message: String| Error::DataFile {
        file: path.to_path_buf(),
        message,
    };
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
        let table: TomlTable = toml::from_str(&text).map_err(|e| file_error(e.to_string()))?;
        // TOML rows have no line of their own; number them in order.
        table
            .row
            .into_iter()
            .enumerate()
            .map(|(i, row)| SpreadRow { line: i + 1, ..row })
            .collect()
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
        if !(row.spread.is_finite() && row.spread > -0.5 && row.spread < 1.0) {
            return Err(row_error(format!(
                "spread = {} is outside (-0.5, 1)",
                row.spread
            )));
        }
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

fn parse_csv_table(text: &str, path: &Path, coverage: bool) -> Result<Vec<SpreadRow>> {
    let mut lines = text
        .lines()
        .enumerate()
        .map(|(i, line)| (i + 1, line.trim()))
        .filter(|(_, line)| !line.is_empty() && !line.starts_with('#'));
    let (header_line, header) = lines.next().ok_or_else(|| Error::DataFile {
        file: path.to_path_buf(),
        message: "the table is empty".into(),
    })?;
    let columns: Vec<&str> = header.split(',').map(str::trim).collect();
    let find = |name: &str| {
        columns
            .iter()
            .position(|c| *c == name)
            .ok_or_else(|| Error::DataRow {
                file: path.to_path_buf(),
                line: header_line,
                message: format!("no `{name}` column (columns: {})", columns.join(", ")),
            })
    };
    let rating = find("rating")?;
    let spread = find("spread")?;
    let min_coverage = if coverage {
        Some(find("min_coverage")?)
    } else {
        None
    };
    lines
        .map(|(line, text)| {
            let cells: Vec<&str> = text.split(',').map(str::trim).collect();
            let row_error = |message: String| Error::DataRow {
                file: path.to_path_buf(),
                line,
                message,
            };
            let cell = |i: usize| {
                cells.get(i).copied().ok_or_else(|| {
                    row_error(format!("{} cells, expected {}", cells.len(), columns.len()))
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

/// The row of `rating` in a rating → spread table.
pub fn rating_row<'a>(
    table: &'a SpreadTable,
    rating: &str,
) -> std::result::Result<&'a SpreadRow, String> {
    table
        .rows
        .iter()
        .find(|r| r.rating == rating)
        .ok_or_else(|| {
            let known: Vec<&str> = table.rows.iter().map(|r| r.rating.as_str()).collect();
            format!(
                "debt.rating = \"{rating}\" is not in the table {} (ratings: {})",
                table.path,
                known.join(", ")
            )
        })
}

/// The row of a coverage → rating → spread table that `coverage` falls in: the last row whose
/// `min_coverage` is at or below it (thresholds are inclusive lower bounds; the top row is
/// open-ended). A coverage below the lowest threshold is not covered by the table.
pub fn coverage_row(table: &SpreadTable, coverage: f64) -> std::result::Result<&SpreadRow, String> {
    table
        .rows
        .iter()
        .rev()
        .find(|r| r.min_coverage.is_some_and(|low| coverage >= low))
        .ok_or_else(|| {
            format!(
                "interest coverage {coverage} (debt.ebit / debt.interest_expense) is below the \
                 lowest min_coverage {} in the table {}",
                table.rows[0].min_coverage.unwrap_or(f64::NAN),
                table.path
            )
        })
}

/// How the pre-tax cost of debt was arrived at, for the receipt and the memo.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CostOfDebtRecord {
    pub source: DebtSource,
    /// EBIT / interest expense (source `coverage`).
    pub interest_coverage: Option<f64>,
    /// The table used (path as written, SHA-256), for the sources `rating` and `coverage`.
    pub table: Option<SpreadTable>,
    /// The row of the table used, with its line.
    pub row: Option<SpreadRow>,
    /// The risk-free rate the spread is added to.
    pub risk_free_rate: Option<f64>,
    pub pre_tax: f64,
}

/// The pre-tax cost of debt of the subject: a given yield, or rf + a table spread.
/// The table is the one `debt.rating_table` or `debt.coverage_table` names, already read.
/// Adding a rating spread to the risk-free rate, and rating a firm synthetically from its
/// interest coverage, are common practice in valuation textbooks.
pub fn cost_of_debt(
    debt: &DebtSettings,
    table: Option<&SpreadTable>,
    risk_free: f64,
) -> std::result::Result<CostOfDebtRecord, String> {
    let given = CostOfDebtRecord {
        source: debt.source,
        interest_coverage: None,
        table: None,
        row: None,
        risk_free_rate: None,
        pre_tax: debt.cost_pre_tax.unwrap_or(f64::NAN),
    };
    let (row, coverage) = match debt.source {
        DebtSource::Given => return Ok(given),
        DebtSource::Rating => {
            let table = table.expect("a rating table is read for source = rating");
            let rating = debt.rating.as_deref().expect("validated");
            (rating_row(table, rating)?, None)
        }
        DebtSource::Coverage => {
            let table = table.expect("a coverage table is read for source = coverage");
            let coverage =
                debt.ebit.expect("validated") / debt.interest_expense.expect("validated");
            (coverage_row(table, coverage)?, Some(coverage))
        }
    };
    Ok(CostOfDebtRecord {
        interest_coverage: coverage,
        table: table.cloned(),
        row: Some(row.clone()),
        risk_free_rate: Some(risk_free),
        pre_tax: risk_free + row.spread,
        ..given
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn coverage_table() -> SpreadTable {
        let row = |low: f64, rating: &str, spread: f64, line: usize| SpreadRow {
            min_coverage: Some(low),
            rating: rating.into(),
            spread,
            line,
        };
        SpreadTable {
            path: "coverage.csv".into(),
            sha256: String::new(),
            row_count: 4,
            rows: vec![
                row(0.0, "C", 0.10, 2),
                row(1.5, "B", 0.05, 3),
                row(3.0, "BBB", 0.02, 4),
                row(8.5, "AAA", 0.006, 5),
            ],
        }
    }

    // Boundaries of a coverage table with thresholds 0, 1.5, 3, 8.5 (inclusive lower bounds):
    // exactly on 3.0 → BBB; just below 3.0 → B; above the highest (100) → AAA; exactly the
    // lowest (0) → C; below the lowest → error naming the coverage.
    #[test]
    fn synthetic_rating_at_the_table_boundaries() {
        let table = coverage_table();
        assert_eq!(coverage_row(&table, 3.0).unwrap().rating, "BBB");
        assert_eq!(coverage_row(&table, 2.999_999).unwrap().rating, "B");
        assert_eq!(coverage_row(&table, 100.0).unwrap().rating, "AAA");
        assert_eq!(coverage_row(&table, 8.5).unwrap().rating, "AAA");
        assert_eq!(coverage_row(&table, 0.0).unwrap().rating, "C");
        let below = coverage_row(&table, -0.25).unwrap_err();
        assert!(
            below.contains("-0.25") && below.contains("coverage.csv"),
            "{below}"
        );
    }

    #[test]
    fn rating_lookup_names_the_missing_rating() {
        let table = coverage_table();
        assert_eq!(rating_row(&table, "B").unwrap().spread, 0.05);
        let missing = rating_row(&table, "BB+").unwrap_err();
        assert!(
            missing.contains("\"BB+\"") && missing.contains("BBB"),
            "{missing}"
        );
    }

    // rf 3.8% + BBB spread 2% = 5.8%; EBIT 120 / interest 40 = coverage 3.0, exactly on the
    // BBB threshold.
    #[test]
    fn cost_of_debt_from_coverage_is_rf_plus_spread() {
        let table = coverage_table();
        let settings = DebtSettings {
            source: DebtSource::Coverage,
            cost_pre_tax: None,
            rating: None,
            rating_table: None,
            ebit: Some(120.0),
            interest_expense: Some(40.0),
            coverage_table: Some("coverage.csv".into()),
        };
        let record = cost_of_debt(&settings, Some(&table), 0.038).unwrap();
        assert_eq!(record.interest_coverage, Some(3.0));
        assert_eq!(record.row.as_ref().unwrap().line, 4);
        // 1e-15: one addition of decimals.
        assert!((record.pre_tax - 0.058).abs() < 1e-15);
    }

    #[test]
    fn csv_tables_are_read_with_lines_and_comments() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("t.csv");
        std::fs::write(
            &path,
            "# illustrative\nmin_coverage,rating,spread\n0,C,0.1\n2,A,0.01\n",
        )
        .unwrap();
        let table = read_spread_table("t.csv", &path, true).unwrap();
        assert_eq!(table.rows.len(), 2);
        assert_eq!(table.rows[1].line, 4);
        std::fs::write(&path, "min_coverage,rating,spread\n2,C,0.1\n1,A,0.01\n").unwrap();
        let err = read_spread_table("t.csv", &path, true)
            .unwrap_err()
            .to_string();
        assert!(err.contains("line 3") && err.contains("ascending"), "{err}");
    }

    #[test]
    fn toml_tables_are_read_in_order() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("ratings.toml");
        std::fs::write(
            &path,
            "[[row]]\nrating = \"A\"\nspread = 0.011\n\n[[row]]\nrating = \"BBB\"\nspread = 0.016\n",
        )
        .unwrap();
        let table = read_spread_table("ratings.toml", &path, false).unwrap();
        let row = rating_row(&table, "BBB").unwrap();
        assert_eq!((row.spread, row.line), (0.016, 2));
        std::fs::write(
            &path,
            "[[row]]\nrating = \"A\"\nspread = 0.011\n[[row]]\nrating = \"A\"\nspread = 0.02\n",
        )
        .unwrap();
        let err = read_spread_table("ratings.toml", &path, false)
            .unwrap_err()
            .to_string();
        assert!(err.contains("repeats line 1"), "{err}");
    }
}
