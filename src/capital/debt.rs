//! Where the pre-tax cost of debt comes from: a given yield, a rating's spread, or a synthetic
//! rating from interest coverage.
//!
//! The two table-based sources look up one row of a small user-supplied table (read by
//! [`crate::io::spread_table`]); the row used, with its line in the file, goes into the result so
//! the memo can show it. The lookups [`rating_row`] and [`coverage_row`] and [`cost_of_debt`] are
//! pure.

use serde::{Deserialize, Serialize};

pub use crate::io::spread_table::{SpreadRow, SpreadTable};

/// Why a cost of debt could not be read from its table, in figures: the caller words it with
/// its own names for the settings (`case::wording::debt_problem`).
#[derive(Debug, Clone, PartialEq)]
pub enum DebtProblem {
    /// The source reads a spread table the caller did not hand over.
    NoTable(DebtSource),
    /// A listing that needs no cost of debt did not read the table a debt beta needs.
    TableNotRead,
    /// The rating is not a row of the table (path as written; its ratings in order).
    RatingNotInTable {
        rating: String,
        table: String,
        ratings: Vec<String>,
    },
    /// The interest coverage is below the table's lowest threshold.
    CoverageBelowTable {
        coverage: f64,
        lowest: f64,
        table: String,
    },
}

/// The row of `rating` in a rating → spread table.
pub fn rating_row<'a>(
    table: &'a SpreadTable,
    rating: &str,
) -> std::result::Result<&'a SpreadRow, DebtProblem> {
    table
        .rows
        .iter()
        .find(|r| r.rating == rating)
        .ok_or_else(|| DebtProblem::RatingNotInTable {
            rating: rating.to_string(),
            table: table.path.clone(),
            ratings: table.rows.iter().map(|r| r.rating.clone()).collect(),
        })
}

/// How far below a threshold a coverage may fall in binary and still count as reaching it: a
/// ratio of two decimal figures that equals a threshold in decimal (37.8 / 9 = 4.2) can land an
/// ulp or two below the threshold's double (4.199999999999999), and would be given the worse
/// rating. 1e-12 relative lies far above that rounding (about 1e-16) and far below any two
/// thresholds a table could mean to tell apart (they are given to a few decimals).
const COVERAGE_ROUNDING: f64 = 1e-12;

/// Whether `coverage` reaches the threshold `low`, within [`COVERAGE_ROUNDING`].
fn reaches(coverage: f64, low: f64) -> bool {
    coverage >= low || low - coverage <= COVERAGE_ROUNDING * low.abs()
}

/// The row of a coverage → rating → spread table that `coverage` falls in: the last row whose
/// `min_coverage` is at or below it (thresholds are inclusive lower bounds; the top row is
/// open-ended). A coverage below the lowest threshold is not covered by the table.
pub fn coverage_row(
    table: &SpreadTable,
    coverage: f64,
) -> std::result::Result<&SpreadRow, DebtProblem> {
    table
        .rows
        .iter()
        .rev()
        .find(|r| r.min_coverage.is_some_and(|low| reaches(coverage, low)))
        .ok_or_else(|| DebtProblem::CoverageBelowTable {
            coverage,
            lowest: table.rows[0].min_coverage.unwrap_or(f64::NAN),
            table: table.path.clone(),
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
    debt: &DebtSpec<'_>,
    table: Option<&SpreadTable>,
    risk_free: f64,
) -> std::result::Result<CostOfDebtRecord, DebtProblem> {
    Ok(match spread_row(debt, table)? {
        Err(given) => CostOfDebtRecord {
            source: debt.source(),
            interest_coverage: None,
            table: None,
            row: None,
            risk_free_rate: None,
            pre_tax: given,
        },
        Ok((row, coverage)) => CostOfDebtRecord {
            interest_coverage: coverage,
            table: table.cloned(),
            row: Some(row.clone()),
            risk_free_rate: Some(risk_free),
            pre_tax: risk_free + row.spread,
            source: debt.source(),
        },
    })
}

/// The figure of [`cost_of_debt`] alone, by the same lookup and sum, without copying the table
/// into a record: what each Monte Carlo draw needs.
pub fn pre_tax_cost_of_debt(
    debt: &DebtSpec<'_>,
    table: Option<&SpreadTable>,
    risk_free: f64,
) -> std::result::Result<f64, DebtProblem> {
    Ok(match spread_row(debt, table)? {
        Err(given) => given,
        Ok((row, _)) => risk_free + row.spread,
    })
}

/// The table row the source reads, with the interest coverage it was found by; the yield
/// itself (`Err`) for a given one. A source that reads a table is handed it (the caller reads
/// the table the source names; a missing one is a message, not a panic).
fn spread_row<'a>(
    debt: &DebtSpec<'_>,
    table: Option<&'a SpreadTable>,
) -> std::result::Result<std::result::Result<(&'a SpreadRow, Option<f64>), f64>, DebtProblem> {
    let table = || table.ok_or(DebtProblem::NoTable(debt.source()));
    Ok(match debt {
        DebtSpec::Given(yield_) => Err(*yield_),
        DebtSpec::Rating(rating) => Ok((rating_row(table()?, rating)?, None)),
        DebtSpec::Coverage {
            ebit,
            interest_expense,
        } => {
            let coverage = ebit / interest_expense;
            Ok((coverage_row(table()?, coverage)?, Some(coverage)))
        }
    })
}

/// Where the subject's pre-tax cost of debt comes from, with what that source needs: this
/// layer's own spec, which a case's `[debt]` section is read into (`case::specs::capital`), so
/// nothing here depends on the case file's shape.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DebtSpec<'a> {
    /// A given yield, e.g. a yield to maturity.
    Given(f64),
    /// rf + the spread of this rating in the rating table.
    Rating(&'a str),
    /// rf + the spread of the synthetic rating from EBIT / interest expense in the coverage
    /// table.
    Coverage { ebit: f64, interest_expense: f64 },
}

impl DebtSpec<'_> {
    /// The source, as the case file and the result name it.
    pub fn source(&self) -> DebtSource {
        match self {
            DebtSpec::Given(_) => DebtSource::Given,
            DebtSpec::Rating(_) => DebtSource::Rating,
            DebtSpec::Coverage { .. } => DebtSource::Coverage,
        }
    }
}

/// `debt.source`: where the pre-tax cost of debt comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum DebtSource {
    /// `debt.cost_pre_tax`, e.g. a yield to maturity.
    #[default]
    Given,
    /// rf + the spread of `debt.rating` in `debt.rating_table`.
    Rating,
    /// rf + the spread of the synthetic rating from EBIT / interest expense in
    /// `debt.coverage_table`.
    Coverage,
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::io::spread_table::read_spread_table;

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
        let DebtProblem::CoverageBelowTable {
            coverage,
            lowest,
            table,
        } = below
        else {
            panic!("{below:?}");
        };
        assert_eq!((coverage, lowest), (-0.25, 0.0));
        assert!(table.ends_with("coverage.csv"), "{table}");
    }

    #[test]
    fn rating_lookup_names_the_missing_rating() {
        let table = coverage_table();
        assert_eq!(rating_row(&table, "B").unwrap().spread, 0.05);
        let missing = rating_row(&table, "BB+").unwrap_err();
        let DebtProblem::RatingNotInTable {
            rating, ratings, ..
        } = missing
        else {
            panic!("{missing:?}");
        };
        assert_eq!(rating, "BB+");
        assert_eq!(ratings, ["C", "B", "BBB", "AAA"]);
    }

    // rf 3.8% + BBB spread 2% = 5.8%; EBIT 120 / interest 40 = coverage 3.0, exactly on the
    // BBB threshold.
    #[test]
    fn cost_of_debt_from_coverage_is_rf_plus_spread() {
        let table = coverage_table();
        let settings = DebtSpec::Coverage {
            ebit: 120.0,
            interest_expense: 40.0,
        };
        let record = cost_of_debt(&settings, Some(&table), 0.038).unwrap();
        assert_eq!(record.interest_coverage, Some(3.0));
        assert_eq!(record.row.as_ref().unwrap().line, 4);
        // 1e-15: one addition of decimals.
        assert!((record.pre_tax - 0.058).abs() < 1e-15);
    }

    // A coverage equal to a threshold in decimal reaches it, although its double lies an ulp
    // below (37.8 / 9 is 4.199999999999999 in binary; 25.08 / 19 is 1.3199999999999998, both
    // checked in Python): the table's own rule, "at or below", taken in decimal (found by
    // review: both were given the next worse rating).
    #[test]
    fn a_coverage_on_a_threshold_gets_that_row() {
        let table = SpreadTable {
            rows: vec![
                SpreadRow {
                    min_coverage: Some(1.32),
                    rating: "CCC".into(),
                    spread: 0.07,
                    line: 2,
                },
                SpreadRow {
                    min_coverage: Some(4.2),
                    rating: "BBB".into(),
                    spread: 0.0184,
                    line: 3,
                },
            ],
            ..coverage_table()
        };
        let (on_bbb, on_ccc) = (
            std::hint::black_box(37.8) / 9.0,
            std::hint::black_box(25.08) / 19.0,
        );
        assert!(
            on_bbb < 4.2 && on_ccc < 1.32,
            "each an ulp below its threshold"
        );
        assert_eq!(coverage_row(&table, on_bbb).unwrap().rating, "BBB");
        assert_eq!(coverage_row(&table, on_ccc).unwrap().rating, "CCC");
        // A coverage truly below a threshold stays below it.
        assert_eq!(coverage_row(&table, 4.1999).unwrap().rating, "CCC");
        assert!(coverage_row(&table, 1.3199).is_err());
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
        // Each row's line is where its `[[row]]` starts: BBB's is the file's fifth line.
        assert_eq!((row.spread, row.line), (0.016, 5));
        std::fs::write(
            &path,
            "[[row]]\nrating = \"A\"\nspread = 0.011\n[[row]]\nrating = \"A\"\nspread = 0.02\n",
        )
        .unwrap();
        let err = read_spread_table("ratings.toml", &path, false)
            .unwrap_err()
            .to_string();
        assert!(err.contains("line 4: rating \"A\" repeats line 1"), "{err}");
    }
}
