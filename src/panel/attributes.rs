//! The attributes table of a universe: one row per security with its industry and the figures
//! unlevering needs (market value of equity, debt, cash, tax rate).
//!
//! CSV or Parquet, by extension. An empty cell is kept as missing — the security is flagged and
//! left out of any aggregate that needs the figure, never given a guessed value. A value that is
//! present must make sense: a negative debt or cash, an equity value that is not positive or a
//! tax rate outside [0, 1) is an error naming the file, the row and the value, as is a security
//! listed twice or a column the universe file names that the table does not have.

use std::io::Cursor;
use std::path::Path;

use polars::prelude::*;
use serde::Serialize;

use super::{check_label, Source, TableFormat};
use crate::error::{Error, Result};
use crate::io::guard;
use crate::io::parquet_types::unreadable_column;
use crate::io::sanity::first_bad_record;

/// Which columns of the attributes table hold what.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct AttributeColumns {
    pub security: String,
    pub industry: String,
    pub equity_value: String,
    pub debt: String,
    /// Optional: without it, no security has a cash figure.
    pub cash: Option<String>,
    pub tax_rate: String,
}

/// One security's attributes as read; `None` is an empty cell.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AttributeRecord {
    pub security: String,
    pub industry: Option<String>,
    pub equity_value: Option<f64>,
    pub debt: Option<f64>,
    pub cash: Option<f64>,
    pub tax_rate: Option<f64>,
}

/// What the receipt records about the attributes file.
#[derive(Debug, Clone, Serialize)]
pub struct AttributesFile {
    pub path: String,
    pub sha256: String,
    pub format: TableFormat,
    pub rows: usize,
}

/// The attributes table, sorted by security id.
#[derive(Debug, Clone)]
pub struct Attributes {
    pub file: AttributesFile,
    records: Vec<AttributeRecord>,
    /// The figure columns whose points look like thousands separators ([`thousands_points`]).
    pub thousands_points: Vec<ThousandsPoints>,
}

/// A column of figures whose every point is followed by exactly three digits beside figures
/// without a point: written by a spreadsheet that separates thousands with a point (66.471 for
/// 66,471), its figures of a thousand and more are read as a thousandth of their value while
/// the smaller ones are read as they are.
#[derive(Debug, Clone, PartialEq)]
pub struct ThousandsPoints {
    pub column: String,
    /// Up to two figures with a point, and one without, as written.
    pub with_point: Vec<String>,
    pub without_point: String,
    /// The other figure column `without_point` is from, when every figure of `column` has a
    /// point while that column has none: each is then scaled alike within its column, but the
    /// D/E divides one by the other.
    pub beside: Option<String>,
}

impl Attributes {
    /// The attributes of `security`, if the table lists it.
    pub fn get(&self, security: &str) -> Option<&AttributeRecord> {
        self.records
            .binary_search_by(|r| r.security.as_str().cmp(security))
            .ok()
            .map(|i| &self.records[i])
    }

    /// Every record, in security order.
    pub fn records(&self) -> &[AttributeRecord] {
        &self.records
    }
}

/// Reads and checks an attributes table. `written` is the path as the universe file names it.
pub fn read_attributes(
    written: &str,
    resolved: &Path,
    columns: &AttributeColumns,
) -> Result<Attributes> {
    let format = TableFormat::from_path(resolved, "attributes.file")?;
    let source = Source {
        file: resolved.to_path_buf(),
        format,
    };
    let bytes = std::fs::read(resolved).map_err(|e| Error::Io {
        path: resolved.to_path_buf(),
        action: "cannot read the attributes file",
        source: e,
    })?;
    let mut used = vec![
        columns.security.as_str(),
        &columns.industry,
        &columns.equity_value,
        &columns.debt,
        &columns.tax_rate,
    ];
    used.extend(columns.cash.as_deref());
    let mut whole_header = None;
    let mut csv_header = None;
    let frame = match format {
        TableFormat::Csv => {
            // Empty lines after the last row are no rows (the hash below is of every byte).
            let bytes = crate::io::sanity::without_trailing_empty_records(&bytes);
            let header = super::header::header(&source, bytes)?;
            if let Some((line, message)) = crate::io::encoding::first_non_utf8(bytes) {
                return Err(source.row_error(line.saturating_sub(1), message));
            }
            super::header::check_repeated_names(&source, &header, &used)?;
            let expected = header.len();
            let fewest = crate::io::sanity::fewest_fields(&header);
            if let Some((record, message)) = first_bad_record(bytes, expected, Some(fewest)) {
                return Err(source.row_error(record.saturating_sub(1), message));
            }
            csv_header = Some(header);
            CsvReadOptions::default()
                .with_has_header(true)
                // All text, so each number is parsed (and reported) here.
                .with_infer_schema_length(Some(0))
                .into_reader_with_file_handle(Cursor::new(bytes))
                .finish()
        }
        TableFormat::Parquet => {
            let (frame, header) = read_parquet(&source, &bytes, &used)?;
            whole_header = Some(header);
            frame
        }
    }
    .map_err(|e| {
        let message = crate::error::reader_message(&e);
        source.file_error(format!("not a readable table: {message}"))
    })?;
    if let Some(header) = &csv_header {
        check_unnamed(&source, header, &frame)?;
    }
    let records = records(&source, &frame, whole_header, columns)?;
    let thousands_points = thousands_points_in(&frame, columns);
    check_listed_once(&source, &records)?;
    let mut records = records;
    records.sort_by(|a, b| a.security.cmp(&b.security));
    Ok(Attributes {
        file: AttributesFile {
            path: written.to_string(),
            sha256: crate::io::series::sha256_hex(&bytes),
            format,
            rows: records.len(),
        },
        records,
        thousands_points,
    })
}

/// The figure columns (equity value, debt, cash) of a CSV table read as text whose points look
/// like thousands separators ([`thousands_points`], [`points_against_whole`]).
fn thousands_points_in(frame: &DataFrame, columns: &AttributeColumns) -> Vec<ThousandsPoints> {
    let figures = [
        Some(&columns.equity_value),
        Some(&columns.debt),
        columns.cash.as_ref(),
    ];
    let texts: Vec<(&str, Vec<&str>)> = (figures.into_iter().flatten())
        .filter_map(|name| {
            let cells = frame.column(name).ok()?.str().ok()?;
            let texts = cells.iter().flatten().map(str::trim);
            Some((name.as_str(), texts.filter(|t| !t.is_empty()).collect()))
        })
        .collect();
    (texts.iter())
        .filter_map(|(name, cells)| {
            (thousands_points(name, cells.iter().copied()))
                .or_else(|| points_against_whole(name, cells, &texts))
        })
        .collect()
}

/// A CSV attributes column the header leaves unnamed may not hold a value (found by review: a
/// decimal comma, `0,25` under a header ending `tax_rate,`, was read as a tax rate of 0 with
/// the 25 left unread); `frame` holds every column as text, in the header's order.
fn check_unnamed(source: &Source, header: &[String], frame: &DataFrame) -> Result<()> {
    let columns = frame.columns();
    // A first column is where dataframe libraries write their row index, and holds no part of
    // a split number.
    let unnamed = |(i, name): &(usize, &String)| *i > 0 && super::checks::unnamed(name);
    for (i, _) in header.iter().enumerate().filter(unnamed) {
        let Some(cells) = columns.get(i).map(super::checks::cell_texts) else {
            continue;
        };
        if let Some((k, value)) =
            (cells.iter().enumerate()).find_map(|(k, v)| Some((k, v.as_ref()?)))
        {
            let left = (i.checked_sub(1)).and_then(|l| {
                let cell = super::checks::cell_texts(columns.get(l)?).get(k)?.clone()?;
                Some((header[l].clone(), cell))
            });
            let left = left.as_ref().map(|(n, c)| (n.as_str(), c.as_str()));
            return Err(source.row_error(
                k,
                crate::io::sanity::unnamed_value_message(i + 1, value, left),
            ));
        }
    }
    Ok(())
}

/// Whether the texts of column `name` look like [`ThousandsPoints`]: at least two hold one point
/// with one to three digits before it (the first not 0) and exactly three after, no text holds
/// a point any other way, and at least one holds none (a figure under a thousand, which a
/// separator leaves alone). Data in units whose every figure has three decimals and none is
/// whole do not qualify; those with whole figures beside them may, which is why this is a note
/// and not a refusal.
pub fn thousands_points<'a>(
    name: &str,
    texts: impl Iterator<Item = &'a str>,
) -> Option<ThousandsPoints> {
    let (with_point, count, without_point) = grouped_points(texts)?;
    let without_point = without_point?;
    (count >= 2).then(|| ThousandsPoints {
        column: name.to_string(),
        with_point,
        without_point,
        beside: None,
    })
}

/// A figure column all of whose figures (two at least) have a point as a thousands separator
/// would put one, beside another figure column none of whose figures has a point (found by
/// review: market values written `24.000` beside debt written `600` were read as 24 and 600,
/// a D/E a thousand times too high, with no word but the D/E limit's).
fn points_against_whole(
    name: &str,
    cells: &[&str],
    columns: &[(&str, Vec<&str>)],
) -> Option<ThousandsPoints> {
    let (with_point, count, without_point) = grouped_points(cells.iter().copied())?;
    if count < 2 || without_point.is_some() {
        return None;
    }
    let (other, whole) = (columns.iter()).find(|(other, figures)| {
        other != &name && !figures.is_empty() && figures.iter().all(|f| !f.contains('.'))
    })?;
    Some(ThousandsPoints {
        column: name.to_string(),
        with_point,
        without_point: whole[0].to_string(),
        beside: Some(other.to_string()),
    })
}

/// Up to two figures with a point placed as a thousands separator would place it, how many
/// there are, and a figure without a point; `None` when a figure holds a point another way.
fn grouped_points<'a>(
    texts: impl Iterator<Item = &'a str>,
) -> Option<(Vec<String>, usize, Option<String>)> {
    let grouped = |t: &str| {
        t.split_once('.').is_some_and(|(head, tail)| {
            (1..=3).contains(&head.len())
                && !head.starts_with('0')
                && head.bytes().all(|b| b.is_ascii_digit())
                && tail.len() == 3
                && tail.bytes().all(|b| b.is_ascii_digit())
        })
    };
    let (mut with_point, mut count, mut without_point) = (Vec::new(), 0, None);
    for text in texts.filter(|t| !t.is_empty()) {
        match text.contains('.') {
            true if grouped(text) => {
                count += 1;
                if with_point.len() < 2 {
                    with_point.push(text.to_string());
                }
            }
            true => return None,
            false => {
                without_point.get_or_insert_with(|| text.to_string());
            }
        }
    }
    Some((with_point, count, without_point))
}

/// Refuses a security listed twice, naming both rows.
fn check_listed_once(source: &Source, records: &[AttributeRecord]) -> Result<()> {
    let mut order: Vec<usize> = (0..records.len()).collect();
    order.sort_by(|&a, &b| records[a].security.cmp(&records[b].security));
    match (order.windows(2)).find(|w| records[w[0]].security == records[w[1]].security) {
        Some(w) => {
            let (first, second) = (w[0].min(w[1]), w[0].max(w[1]));
            Err(source.row_error(
                second,
                format!(
                    "security {} is listed again (first at {}); each security may have one row",
                    records[second].security,
                    source.place(first)
                ),
            ))
        }
        None => Ok(()),
    }
}

/// The columns of a Parquet attributes file that `used` names, after checking that hurdle reads
/// their types, and the file's whole header (for [`records`] to name a column it lacks); the
/// other columns are not decoded, so a type hurdle does not read there does not matter.
fn read_parquet(
    source: &Source,
    bytes: &[u8],
    used: &[&str],
) -> Result<(PolarsResult<DataFrame>, Vec<String>)> {
    let unreadable = |reason: String| source.file_error(format!("not a readable table: {reason}"));
    let schema = guard::decoding(|| ParquetReader::new(Cursor::new(bytes)).schema())
        .map_err(unreadable)?
        .map_err(|e| unreadable(e.to_string()))?;
    if let Some(message) = unreadable_column(&schema, used.iter().copied()) {
        return Err(source.file_error(message));
    }
    let header: Vec<String> = schema.iter_names().map(|n| n.to_string()).collect();
    let mut read: Vec<String> = Vec::new();
    for name in &header {
        if used.contains(&name.as_str()) && !read.contains(name) {
            read.push(name.clone());
        }
    }
    let frame = guard::decoding(|| {
        ParquetReader::new(Cursor::new(bytes))
            .with_columns(Some(read))
            .finish()
    })
    .map_err(unreadable)?;
    Ok((frame, header))
}

/// Every row of the table, checked; a missing column is named with `whole_header` (the file's
/// header when only some columns were decoded).
fn records(
    source: &Source,
    frame: &DataFrame,
    whole_header: Option<Vec<String>>,
    columns: &AttributeColumns,
) -> Result<Vec<AttributeRecord>> {
    let header: Vec<String> = whole_header.unwrap_or_else(|| {
        frame
            .get_column_names()
            .iter()
            .map(|n| n.to_string())
            .collect()
    });
    let find = |name: &str, key: &str| -> Result<&Column> {
        frame.column(name).map_err(|_| {
            source.file_error(format!(
                "no column named `{name}` ({key}); the header has: {}{}",
                header.join(", "),
                crate::io::sanity::column_name_hint(header.iter().map(String::as_str), name)
            ))
        })
    };
    let security = text(
        source,
        find(&columns.security, "attributes.security_column")?,
    )?;
    let industry = text(
        source,
        find(&columns.industry, "attributes.industry_column")?,
    )?;
    let number = |name: &str, key: &str, rule: Rule| -> Result<Vec<Option<f64>>> {
        numbers(source, find(name, key)?, rule)
    };
    let equity = number(
        &columns.equity_value,
        "attributes.equity_value_column",
        Rule::Positive,
    )?;
    let debt = number(&columns.debt, "attributes.debt_column", Rule::NonNegative)?;
    let tax = number(&columns.tax_rate, "attributes.tax_rate_column", Rule::Rate)?;
    let cash = match &columns.cash {
        Some(name) => number(name, "attributes.cash_column", Rule::NonNegative)?,
        None => vec![None; frame.height()],
    };
    let mut records = Vec::with_capacity(frame.height());
    for (k, id) in security.into_iter().enumerate() {
        let Some(id) = id else {
            return Err(source.row_error(
                k,
                format!(
                    "`{}` is empty: every row needs a security id",
                    columns.security
                ),
            ));
        };
        records.push(AttributeRecord {
            security: id,
            industry: industry[k].clone(),
            equity_value: equity[k],
            debt: debt[k],
            cash: cash[k],
            tax_rate: tax[k],
        });
    }
    Ok(records)
}

/// A column as trimmed text; an empty cell is `None`. Integer columns are written as text,
/// categorical ones by their labels.
fn text(source: &Source, column: &Column) -> Result<Vec<Option<String>>> {
    let name = column.name().to_string();
    let labels = text_cells(source, column)?;
    for (k, label) in labels.iter().enumerate() {
        if let Some(label) = label {
            check_label(label, || format!("`{name}`"))
                .map_err(|message| source.row_error(k, message))?;
        }
    }
    Ok(labels)
}

/// [`text`] before the labels are checked.
fn text_cells(source: &Source, column: &Column) -> Result<Vec<Option<String>>> {
    let name = column.name().to_string();
    if !super::parquet::is_text_like(column.dtype()) && !column.dtype().is_null() {
        return Err(source.file_error(format!(
            "column `{name}` holds {}, not text labels: store it as text (ids may also be \
             integers; a column of whole-number codes with an empty cell is often written as \
             floats: write it as text or integers) when writing the Parquet file",
            crate::io::parquet_types::type_in_words(column.dtype())
        )));
    }
    let cast = column
        .cast(&DataType::String)
        .map_err(|e| source.file_error(format!("column `{name}`: {e}")))?;
    let cells = cast.str().expect("cast to text");
    Ok(cells
        .iter()
        .map(|c| {
            c.map(str::trim)
                .filter(|c| !c.is_empty())
                .map(str::to_string)
        })
        .collect())
}

/// The range a figure must lie in when it is present.
#[derive(Debug, Clone, Copy)]
enum Rule {
    Positive,
    NonNegative,
    /// [0, 1): a tax rate in decimals.
    Rate,
}

impl Rule {
    fn check(self, value: f64) -> std::result::Result<(), &'static str> {
        // An amount's bounds are a case's.
        let amount = matches!(self, Rule::Positive | Rule::NonNegative);
        // A negative one is refused for its sign below (found by review: -1e200 was called
        // out of range, then -5 negative).
        let positive = value.is_finite() && value > 0.0;
        if amount && positive && crate::io::sanity::amount_out_of_range(value) {
            return Err(crate::io::sanity::AMOUNT_OUT_OF_RANGE);
        }
        let fine = value.is_finite()
            && match self {
                Rule::Positive => value > 0.0,
                Rule::NonNegative => value >= 0.0,
                Rule::Rate => (0.0..1.0).contains(&value),
            };
        if fine {
            Ok(())
        } else if !value.is_finite() {
            Err("is not a finite number")
        } else {
            Err(match self {
                Rule::Positive => "must be positive",
                Rule::NonNegative => "must not be negative",
                Rule::Rate => "is outside [0, 1) (a tax rate in decimals, e.g. 0.25)",
            })
        }
    }
}

/// A numeric column (numbers or text that parses as numbers); an empty cell is `None`.
fn numbers(source: &Source, column: &Column, rule: Rule) -> Result<Vec<Option<f64>>> {
    let name = column.name().to_string();
    let values: Vec<(Option<f64>, Option<String>)> = if column.dtype().is_string() {
        let cells = column.str().expect("a text column");
        cells
            .iter()
            .enumerate()
            .map(
                |(k, cell)| match cell.map(str::trim).filter(|c| !c.is_empty()) {
                    None => Ok((None, None)),
                    // The header again inside the file (two exports pasted together).
                    Some(text) if text == name => Err(source.row_error(
                        k,
                        format!(
                            "`{name}` = \"{text}\": the header row is repeated here; remove the \
                             repeated header"
                        ),
                    )),
                    Some(text) => text
                        .parse::<f64>()
                        .map(|v| (Some(v), Some(text.to_string())))
                        .map_err(|_| {
                            source.row_error(
                                k,
                                format!(
                                    "`{name}` = \"{text}\" is not a number: {}",
                                    crate::io::series::number_problem(
                                        text,
                                        "clear the cell: a figure left empty is flagged \
                                         (missing_…) and the security kept out of every \
                                         aggregate that needs it, never filled in"
                                    )
                                ),
                            )
                        }),
                },
            )
            .collect::<Result<_>>()?
    } else if column.dtype().is_primitive_numeric() || column.dtype().is_null() {
        // A column of nothing but empty cells, which a writer may type as null, is all missing,
        // as the same column in CSV is (found by review: it was refused as "null").
        // A 32-bit float is read by its shortest decimal (600.1, not the 600.0999755859375 its
        // exact value is; found by review), as the figure was written.
        match column.dtype() {
            DataType::Float32 => (column.f32().expect("a 32-bit float column").iter())
                .map(|v| (v.map(crate::io::parquet_types::f32_as_written), None))
                .collect(),
            _ => {
                let cast = column
                    .cast(&DataType::Float64)
                    .map_err(|e| source.file_error(format!("column `{name}`: {e}")))?;
                cast.f64()
                    .expect("cast")
                    .iter()
                    .map(|v| (v, None))
                    .collect()
            }
        }
    } else {
        return Err(source.file_error(format!(
            "column `{name}` holds {}, not numbers: store the figures as numbers when writing \
             the Parquet file",
            crate::io::parquet_types::type_in_words(column.dtype())
        )));
    };
    values
        .into_iter()
        .enumerate()
        .map(|(k, (value, text))| {
            if let Some(v) = value {
                rule.check(v).map_err(|why| {
                    let shown = text.unwrap_or_else(|| v.to_string());
                    source.row_error(k, format!("`{name}` = {shown} {why}"))
                })?;
            }
            // `-0` + 0 is 0 (IEEE 754), any other figure itself: no -0.0 in the outputs (review).
            Ok(value.map(|v| v + 0.0))
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    // Worked by hand: 66.471 and 9.402 are grouped figures (one to three digits, a point, three
    // digits) and 512 has no point, so the column qualifies; 0.512 (a leading zero), 12.5 (one
    // decimal) or 1.2345 (four) are decimals, and a column without a figure free of points
    // (every one scaled alike, so no ratio or weight moves) does not qualify.
    #[test]
    fn thousands_points_needs_grouped_points_beside_whole_figures() {
        let found = thousands_points("cap", ["66.471", "512", "9.402", "1.250"].into_iter());
        assert_eq!(
            found,
            Some(ThousandsPoints {
                column: "cap".into(),
                with_point: vec!["66.471".into(), "9.402".into()],
                without_point: "512".into(),
                beside: None,
            })
        );
        for texts in [
            &["66.471", "512"][..],
            &["66.471", "9.402", "12.5", "512"],
            &["66.471", "9.402", "0.512", "512"],
            &["66.471", "9.402", "1.2345", "512"],
            &["66.471", "9.402", "6.664"],
        ] {
            assert_eq!(
                thousands_points("cap", texts.iter().copied()),
                None,
                "{texts:?}"
            );
        }
    }

    // IEEE 754: -0 compares equal to 0 but prints as -0; an attribute written `-0` (as text, or
    // as a double) is read as 0, so the tables and the receipt show no signed zero.
    #[test]
    fn a_signed_zero_is_read_as_zero() {
        let source = Source {
            file: "attributes.csv".into(),
            format: crate::panel::TableFormat::Csv,
        };
        let text = Column::new("debt".into(), ["-0", "5", ""]);
        let doubles = Column::new("debt".into(), [Some(-0.0), Some(5.0), None]);
        for column in [text, doubles] {
            let read = numbers(&source, &column, Rule::NonNegative).unwrap();
            assert_eq!(read, vec![Some(0.0), Some(5.0), None]);
            assert!(read[0].unwrap().is_sign_positive(), "{:?}", column.dtype());
        }
    }

    // Worked by hand: every equity value grouped (24.000, 11.500) beside debt without points
    // (600) qualifies against the debt column; beside debt with a decimal point (600.5) no
    // column is known to be whole, and one grouped figure alone is not a pattern.
    #[test]
    fn grouped_figures_beside_a_whole_column_are_found() {
        let cap = vec!["24.000", "11.500"];
        let columns = vec![("cap", cap.clone()), ("debt", vec!["600", "0"])];
        assert_eq!(
            points_against_whole("cap", &cap, &columns),
            Some(ThousandsPoints {
                column: "cap".into(),
                with_point: vec!["24.000".into(), "11.500".into()],
                without_point: "600".into(),
                beside: Some("debt".into()),
            })
        );
        let columns = vec![("cap", cap.clone()), ("debt", vec!["600.5", "0"])];
        assert_eq!(points_against_whole("cap", &cap, &columns), None);
        let one = vec!["24.000"];
        let columns = vec![("cap", one.clone()), ("debt", vec!["600"])];
        assert_eq!(points_against_whole("cap", &one, &columns), None);
    }
}
