//! What hurdle reads from a Parquet file. polars is built with the features hurdle needs only
//! (`Cargo.toml`: no decimals, no 8- or 16-bit integers, no times of day, no nested types), and
//! a column of another type stops its decoder: a decimal column panics in polars 0.55 ("activate
//! 'dtype-decimal' feature"), an 8-bit integer fails with "cannot create series from UInt8".
//! Database exports often store amounts as decimals, so each Parquet reader checks the columns
//! it is about to decode against the file's schema first and names the column and its type.

use polars::prelude::{ArrowDataType, ArrowSchema, DataType};

/// The first of `names` whose Parquet type hurdle does not read, as a message naming it and
/// saying what to store instead; names not in `schema` are left to the caller.
pub fn unreadable_column<'a>(
    schema: &ArrowSchema,
    names: impl IntoIterator<Item = &'a str>,
) -> Option<String> {
    names.into_iter().find_map(|name| {
        let field = schema.get(name)?;
        let kind = unreadable_kind(&field.dtype)?;
        Some(format!(
            "column `{name}` is stored as {kind}, which hurdle does not read from Parquet; store \
             text as strings, numbers as 32- or 64-bit floats or integers, and dates as 32-bit \
             dates (days since 1970) or as text YYYY-MM-DD"
        ))
    })
}

/// A column's type in words, for a message saying what a column holds instead of what it
/// should (found by review: polars' own names, `cat`, `f64`, `bool`, read as jargon).
pub fn type_in_words(dtype: &DataType) -> String {
    match dtype {
        DataType::String => "text".into(),
        DataType::Boolean => "true/false values".into(),
        DataType::Float32 | DataType::Float64 => "numbers with a fraction (floats)".into(),
        d if d.is_integer() => "whole numbers (integers)".into(),
        d if d.is_categorical() || d.is_enum() => "categories (text stored by code)".into(),
        DataType::Date => "dates".into(),
        DataType::Datetime(_, _) => "date-times".into(),
        DataType::Null => "nothing (every cell empty)".into(),
        other => format!("values of type {other}"),
    }
}

/// How a type hurdle does not read is described, or `None` for a type it reads.
fn unreadable_kind(dtype: &ArrowDataType) -> Option<String> {
    use ArrowDataType as T;
    let kind = match dtype {
        T::Null
        | T::Boolean
        | T::Int32
        | T::Int64
        | T::UInt32
        | T::UInt64
        | T::Float32
        | T::Float64
        | T::Timestamp(_, None)
        | T::Date32
        | T::Binary
        | T::LargeBinary
        | T::BinaryView
        | T::Utf8
        | T::LargeUtf8
        | T::Utf8View => return None,
        // Categorical and enum columns: read by their labels.
        T::Dictionary(_, values, _) => return unreadable_kind(values),
        T::Extension(extension) => return unreadable_kind(&extension.inner),
        T::Decimal(precision, scale)
        | T::Decimal32(precision, scale)
        | T::Decimal64(precision, scale)
        | T::Decimal256(precision, scale) => {
            format!("a decimal (precision {precision}, scale {scale})")
        }
        T::Int8 | T::UInt8 => "an 8-bit integer".to_string(),
        T::Int16 | T::UInt16 => "a 16-bit integer".to_string(),
        T::Int128 | T::UInt128 => "a 128-bit integer".to_string(),
        T::Float16 => "a 16-bit float".to_string(),
        T::Date64 => "a 64-bit date (milliseconds since 1970)".to_string(),
        // Its calendar date depends on the zone's rules (a close stamped at local midnight in
        // Tokyo falls on the previous day in UTC), which hurdle's polars build does not carry:
        // taking the UTC date would shift such a series by a day without a word.
        // UTC's date is the date the instant carries.
        T::Timestamp(_, Some(zone))
            if ["UTC", "Etc/UTC", "GMT", "Etc/GMT", "+00:00", "Z"].contains(&zone.as_str()) =>
        {
            return None
        }
        T::Timestamp(_, Some(zone)) => format!(
            "a date-time with the time zone {zone} (its local date needs the zone's rules; store \
             the local dates as dates, or date-times without a zone)"
        ),
        T::Time32(_) | T::Time64(_) => "a time of day".to_string(),
        T::Duration(_) | T::Interval(_) => "a duration".to_string(),
        T::List(_) | T::LargeList(_) | T::FixedSizeList(..) => "a list".to_string(),
        T::Struct(_) | T::Map(..) | T::Union(_) => "a nested record".to_string(),
        other => format!("{other:?}"),
    };
    Some(kind)
}

/// A 32-bit float as the decimal it was written from: its shortest decimal (600.1, where the
/// float's exact value is 600.0999755859375), so a figure a writer stored as a 32-bit float
/// reads as the same figure in CSV does (found by review). Formatted on the stack: a panel of
/// 32-bit prices converts millions of them.
pub fn f32_as_written(value: f32) -> f64 {
    use std::fmt::Write as _;
    struct Digits {
        bytes: [u8; 48],
        len: usize,
    }
    impl std::fmt::Write for Digits {
        fn write_str(&mut self, s: &str) -> std::fmt::Result {
            let end = self.len + s.len();
            self.bytes
                .get_mut(self.len..end)
                .ok_or(std::fmt::Error)?
                .copy_from_slice(s.as_bytes());
            self.len = end;
            Ok(())
        }
    }
    let mut digits = Digits {
        bytes: [0; 48],
        len: 0,
    };
    let written = write!(digits, "{value}").is_ok();
    let text = std::str::from_utf8(&digits.bytes[..digits.len]).unwrap_or("");
    match (written, text.parse::<f64>()) {
        (true, Ok(decimal)) => decimal,
        _ => f64::from(value),
    }
}

/// The dates of a Parquet date or date-time column (a date-time by its date, in the zone it is
/// stored in), each `Err` holding the stored value in words when it lies beyond the dates the
/// calendar holds (found by review: polars 0.55 panicked writing such a date as text, and a
/// date-time beyond them became an empty cell).
pub fn calendar_dates(
    column: &polars::prelude::Column,
) -> polars::prelude::PolarsResult<Vec<Option<Result<chrono::NaiveDate, String>>>> {
    use chrono::NaiveDate;
    use polars::prelude::{DataType, TimeUnit};
    match column.dtype() {
        DataType::Datetime(unit, _) => {
            let (per_day, unit): (i64, &str) = match unit {
                TimeUnit::Nanoseconds => (86_400_000_000_000, "nanoseconds"),
                TimeUnit::Microseconds => (86_400_000_000, "microseconds"),
                TimeUnit::Milliseconds => (86_400_000, "milliseconds"),
            };
            Ok((column.datetime()?.physical().iter())
                .map(|v| {
                    v.map(|v| {
                        i32::try_from(v.div_euclid(per_day))
                            .ok()
                            .and_then(NaiveDate::from_epoch_days)
                            .ok_or_else(|| format!("{v} {unit} from 1970-01-01"))
                    })
                })
                .collect())
        }
        _ => Ok((column.date()?.physical().iter())
            .map(|d| {
                d.map(|d| {
                    NaiveDate::from_epoch_days(d).ok_or_else(|| format!("{d} days from 1970-01-01"))
                })
            })
            .collect()),
    }
}

/// Words for a stored date or date-time beyond the calendar's dates (`calendar_dates`' `Err`).
pub fn beyond_calendar(stored: &str) -> String {
    format!(
        "holds {stored}, a date beyond the calendar's years (−262143 to 262142): a column of \
         another unit or a placeholder value?"
    )
}

#[cfg(test)]
mod tests {
    // IEEE 754 binary32 keeps every decimal of up to six significant digits (FLT_DIG = 6):
    // the shortest decimal of each is that decimal; the extremes round-trip.
    #[test]
    fn a_32_bit_float_reads_as_its_shortest_decimal() {
        assert_eq!(f32_as_written(600.1), 600.1);
        assert_eq!(f32_as_written(0.21), 0.21);
        assert_eq!(f32_as_written(123_456.0), 123_456.0);
        assert_eq!(f32_as_written(1e-40), 1e-40);
        assert_eq!(f32_as_written(f32::MAX), 3.4028235e38);
        assert!(f32_as_written(f32::NAN).is_nan());
        assert_eq!(f32_as_written(f32::INFINITY), f64::INFINITY);
    }

    use super::*;
    use polars::prelude::ArrowField;

    fn schema(fields: &[(&str, ArrowDataType)]) -> ArrowSchema {
        fields
            .iter()
            .map(|(name, dtype)| {
                let field = ArrowField::new((*name).into(), dtype.clone(), true);
                ((*name).into(), field)
            })
            .collect()
    }

    #[test]
    fn names_the_first_unreadable_column_among_those_read() {
        let s = schema(&[
            ("security", ArrowDataType::Utf8View),
            ("notes", ArrowDataType::Decimal(38, 2)),
            ("market_cap", ArrowDataType::Decimal(20, 4)),
            ("industry", ArrowDataType::LargeUtf8),
            ("tax_rate", ArrowDataType::UInt8),
        ]);
        // `notes` is not read, so its type does not matter.
        assert_eq!(
            unreadable_column(&s, ["security", "industry", "market_cap", "tax_rate"]),
            Some(
                "column `market_cap` is stored as a decimal (precision 20, scale 4), which \
                 hurdle does not read from Parquet; store text as strings, numbers as 32- or \
                 64-bit floats or integers, and dates as 32-bit dates (days since 1970) or as \
                 text YYYY-MM-DD"
                    .to_string()
            )
        );
        assert_eq!(
            unreadable_column(&s, ["security", "industry", "absent"]),
            None
        );
        assert!(unreadable_column(&s, ["tax_rate"])
            .is_some_and(|m| m.contains("`tax_rate` is stored as an 8-bit integer")));
    }

    // A date-time without a zone is read (its date is the date written); one with a zone is
    // named, since its local date needs the zone's rules (Asia/Tokyo is nine hours ahead of UTC
    // all year: local midnight is 15:00 UTC the day before).
    #[test]
    fn a_date_time_with_a_time_zone_is_named() {
        use polars::prelude::ArrowTimeUnit as TimeUnit;
        let s = schema(&[
            (
                "plain",
                ArrowDataType::Timestamp(TimeUnit::Microsecond, None),
            ),
            (
                "zoned",
                ArrowDataType::Timestamp(TimeUnit::Nanosecond, Some("Asia/Tokyo".into())),
            ),
        ]);
        assert_eq!(unreadable_column(&s, ["plain"]), None);
        let utc = schema(&[(
            "utc",
            ArrowDataType::Timestamp(TimeUnit::Millisecond, Some("UTC".into())),
        )]);
        assert_eq!(unreadable_column(&utc, ["utc"]), None);
        assert!(unreadable_column(&s, ["zoned"]).is_some_and(
            |m| m.contains("`zoned` is stored as a date-time with the time zone Asia/Tokyo")
        ));
    }
}
