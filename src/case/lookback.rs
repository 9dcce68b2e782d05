//! `beta.lookback`: the window's length as a count of return periods or as a calendar span
//! (`5y`, `18m`, `104w`, `250d`), with its TOML reading and writing.

use std::fmt;

use chrono::NaiveDate;
use serde::{Deserialize, Deserializer, Serialize, Serializer};

use crate::market::sampling::{self, Frequency, SampleWeekday};

/// hurdle's bound on how far a window reaches back, as a span (`"200y"`) or as a count of
/// periods: two centuries of history is more than any price file holds, and it keeps the date
/// arithmetic inside the calendar.
pub const MOST_YEARS: u32 = 200;

/// `beta.lookback`: a count of return periods or a calendar span (`5y`, `18m`, `104w`, `250d`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Lookback {
    Periods(u32),
    Span { count: u32, unit: SpanUnit },
}

/// The unit of a lookback span.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SpanUnit {
    Years,
    Months,
    Weeks,
    Days,
}

impl fmt::Display for Lookback {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Lookback::Periods(n) => write!(f, "{n}"),
            Lookback::Span { count, unit } => {
                let u = match unit {
                    SpanUnit::Years => 'y',
                    SpanUnit::Months => 'm',
                    SpanUnit::Weeks => 'w',
                    SpanUnit::Days => 'd',
                };
                write!(f, "\"{count}{u}\"")
            }
        }
    }
}

impl Lookback {
    /// Parses a span such as `5y`, `104w`, `250d`, `18m`.
    pub fn parse_span(text: &str) -> std::result::Result<Lookback, String> {
        let text = text.trim();
        let bad = || {
            format!(
                "beta.lookback = \"{text}\" is not a count of periods or a span such as \"5y\", \
                 \"18m\", \"104w\" or \"250d\""
            )
        };
        let unit = match text.chars().last().ok_or_else(bad)? {
            'y' => SpanUnit::Years,
            'm' => SpanUnit::Months,
            'w' => SpanUnit::Weeks,
            'd' => SpanUnit::Days,
            _ => return Err(bad()),
        };
        let count: u32 = text[..text.len() - 1].parse().map_err(|_| bad())?;
        if count == 0 {
            return Err(bad());
        }
        // [`MOST_YEARS`] in each unit.
        let most = match unit {
            SpanUnit::Years => MOST_YEARS,
            SpanUnit::Months => 12 * MOST_YEARS,
            SpanUnit::Weeks => 52 * MOST_YEARS,
            SpanUnit::Days => 365 * MOST_YEARS,
        };
        if count > most {
            return Err(format!(
                "beta.lookback = \"{text}\" reaches back more than two centuries; at most {most}{}",
                &text[text.len() - 1..]
            ));
        }
        Ok(Lookback::Span { count, unit })
    }

    /// The calendar date `self` before `end` (a span), or `None` for a count of periods.
    /// Years and months keep the day of the month, clamped to the month's last day.
    pub fn span_start(&self, end: NaiveDate) -> Option<NaiveDate> {
        let Lookback::Span { count, unit } = *self else {
            return None;
        };
        Some(match unit {
            SpanUnit::Years => end
                .checked_sub_months(chrono::Months::new(12 * count))
                .expect("inside chrono's range"),
            SpanUnit::Months => end
                .checked_sub_months(chrono::Months::new(count))
                .expect("inside chrono's range"),
            SpanUnit::Weeks => end - chrono::Days::new(7 * u64::from(count)),
            SpanUnit::Days => end - chrono::Days::new(u64::from(count)),
        })
    }
}

/// The years `periods` return periods of `frequency` span, about: a month is a twelfth of a
/// year, a week 7 of the Gregorian year's 365.2425 days, a weekday (a daily period) 7/5 of a day.
pub fn years_of_periods(periods: u32, frequency: Frequency) -> f64 {
    const DAYS_A_YEAR: f64 = 365.2425;
    let n = f64::from(periods);
    match frequency {
        Frequency::Daily => n * 7.0 / 5.0 / DAYS_A_YEAR,
        Frequency::Weekly => n * 7.0 / DAYS_A_YEAR,
        Frequency::Monthly => n / 12.0,
        Frequency::Quarterly => n / 4.0,
    }
}

/// `Some(most)` when `periods` return periods of `frequency`, ending at the last sample point
/// on or before `end`, reach back further than [`MOST_YEARS`]: `most` is as many as the span
/// `"200y"` holds there, so that a count is held to the same two centuries as a span (found by
/// review: `lookback = 100000` of monthly returns reached back to the year -6307). A monthly or
/// quarterly bound is exact; a weekly or daily one (10 435 and 52 177 back from 2026-09-30)
/// depends on the weekdays of the span, so it is counted on the calendar, only for a count near
/// it.
pub fn beyond_most_years(
    periods: u32,
    frequency: Frequency,
    weekday: SampleWeekday,
    end: NaiveDate,
) -> Option<u32> {
    // Fewer than any two centuries hold, at these frequencies.
    let surely_inside = match frequency {
        Frequency::Daily => 52_000,
        Frequency::Weekly => 10_400,
        Frequency::Monthly => 12 * MOST_YEARS,
        Frequency::Quarterly => 4 * MOST_YEARS,
    };
    if periods <= surely_inside {
        return None;
    }
    let most = match frequency {
        Frequency::Monthly | Frequency::Quarterly => surely_inside,
        Frequency::Daily | Frequency::Weekly => {
            let last = sampling::last_point_on_or_before(frequency, weekday, end);
            match last.checked_sub_months(chrono::Months::new(12 * MOST_YEARS)) {
                Some(start) => sampling::periods_between(frequency, weekday, start, end),
                None => surely_inside,
            }
        }
    };
    (periods > most).then_some(most)
}

impl Serialize for Lookback {
    fn serialize<S: Serializer>(&self, serializer: S) -> std::result::Result<S::Ok, S::Error> {
        match self {
            Lookback::Periods(n) => serializer.serialize_u32(*n),
            span => serializer.collect_str(&span.to_string().trim_matches('"')),
        }
    }
}

impl<'de> Deserialize<'de> for Lookback {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> std::result::Result<Self, D::Error> {
        use serde::de::Error as _;
        match toml::Value::deserialize(deserializer)? {
            toml::Value::Integer(n) => u32::try_from(n).map(Lookback::Periods).map_err(|_| {
                // Too large is not "not positive" (found by review).
                D::Error::custom(match n < 0 {
                    true => format!("beta.lookback = {n} is not a positive count"),
                    false => format!(
                        "beta.lookback = {n} periods reach back far more than any price history \
                         holds; a window reaches back at most 200 years (2400 monthly periods, or \
                         a span such as \"200y\")"
                    ),
                })
            }),
            toml::Value::String(s) => Lookback::parse_span(&s).map_err(D::Error::custom),
            other => Err(D::Error::custom(format!(
                "beta.lookback: expected a count such as 60 or a span such as \"5y\", found {other}"
            ))),
        }
    }
}
