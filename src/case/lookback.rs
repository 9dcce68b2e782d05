//! `beta.lookback`: the window's length as a count of return periods or as a calendar span
//! (`5y`, `18m`, `104w`, `250d`), with its TOML reading and writing.

use std::fmt;

use chrono::NaiveDate;
use serde::{Deserialize, Deserializer, Serialize, Serializer};

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
        // hurdle's bound: two centuries of history is more than any price file holds, and it
        // keeps the date arithmetic inside the calendar.
        let most = match unit {
            SpanUnit::Years => 200,
            SpanUnit::Months => 2_400,
            SpanUnit::Weeks => 10_400,
            SpanUnit::Days => 73_000,
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
                D::Error::custom(format!("beta.lookback = {n} is not a positive count"))
            }),
            toml::Value::String(s) => Lookback::parse_span(&s).map_err(D::Error::custom),
            other => Err(D::Error::custom(format!(
                "beta.lookback: expected a count such as 60 or a span such as \"5y\", found {other}"
            ))),
        }
    }
}
