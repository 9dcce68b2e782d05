//! The time axis of the rolling-beta panels: ticks at the ends of months, quarters or
//! half-years, each labelled with the month it ends ("2025-06"), or at the starts of years,
//! labelled with the year they begin ("2025" on 1 January 2025), as many as the panel's width
//! holds with no two labels touching.
//!
//! A year's tick stands where the year begins, as a reader takes a year on a time axis (found
//! by review: a tick "2022" on 31 December 2022 placed every move of a beta a year early to
//! the eye, and the last year of a window ending in September had no tick).
//! Ticks stand where the windows end: a monthly window ends on the last day of its month, so
//! the tick labelled "2025-06" stands on the window ending in June 2025 (a tick at a month's
//! start stood beside the month before's window, which read a month off on a short span).
//! Weekly and daily windows end inside months; their ticks mark where each month ends. The
//! spacing is the finest whose labels, at their estimated width, stand apart on the panel:
//! a weekly or daily span of a few months on a half-width panel gets quarters, not months.

use chrono::{Datelike, Months, NaiveDate};

use super::super::frame::CHAR_EM;
use super::super::style;

/// The date as a fractional year (2024-07-01 is about 2024.5), the x coordinate of the panels.
pub fn year(date: NaiveDate) -> f64 {
    let days = if date.leap_year() { 366.0 } else { 365.0 };
    f64::from(date.year()) + f64::from(date.ordinal0()) / days
}

/// Months between ticks, finest first: months, quarters, half-years, then every 1, 2, 5, 10,
/// 20, 50 and 100 years (a window may span up to 200 years).
const SPACINGS: [u32; 10] = [1, 3, 6, 12, 24, 60, 120, 240, 600, 1200];

/// Clear space between two neighbouring labels, in pixels, beyond their estimated widths
/// (about a space at the labels' size; the widths are estimated generously, see frame.rs).
const LABEL_GAP: f64 = 3.0;

/// The estimated width of a tick label in pixels (the panels' ticks are `style::SMALL`).
fn label_width(label: &str) -> f64 {
    label.chars().count() as f64 * style::SMALL * CHAR_EM
}

/// The ticks inside `[first, last]` (fractional years) at the finest of [`SPACINGS`] whose
/// neighbouring labels, centred on their ticks at `pixels_per_year`, stand at least
/// [`LABEL_GAP`] apart; the coarsest spacing when none does (one tick, or none, on a very long
/// span on a narrow panel).
pub fn ticks(first: f64, last: f64, pixels_per_year: f64) -> Vec<(f64, String)> {
    if !(first.is_finite() && last.is_finite() && first <= last) {
        return Vec::new();
    }
    let clear = |ticks: &[(f64, String)]| {
        ticks.windows(2).all(|pair| {
            let room = (pair[1].0 - pair[0].0) * pixels_per_year;
            room >= (label_width(&pair[0].1) + label_width(&pair[1].1)) / 2.0 + LABEL_GAP
        })
    };
    let at = |months: u32| period_ends(first, last, months);
    SPACINGS
        .into_iter()
        .map(at)
        .find(|ticks| clear(ticks))
        .unwrap_or_else(|| at(SPACINGS[SPACINGS.len() - 1]))
}

/// The ends of every `months`-th month (months, quarters, half-years: those ending a calendar
/// quarter or half), labelled by the month they end, or, from 12 on, the starts of every
/// `months / 12`-th year, labelled by the year they begin, inside `[first, last]`.
fn period_ends(first: f64, last: f64, months: u32) -> Vec<(f64, String)> {
    let (from, to) = (first.floor() as i32, last.ceil() as i32);
    let ends: Vec<NaiveDate> = match months {
        m if m < 12 => (from..=to)
            .flat_map(|y| (m..=12).step_by(m as usize).map(move |month| (y, month)))
            .filter_map(|(y, month)| month_end(y, month))
            .collect(),
        m => (from..=to)
            .filter(|y| y.rem_euclid((m / 12) as i32) == 0)
            .filter_map(|y| NaiveDate::from_ymd_opt(y, 1, 1))
            .collect(),
    };
    let format = if months < 12 { "%Y-%m" } else { "%Y" };
    ends.into_iter()
        .map(|date| (year(date), date))
        .filter(|(x, _)| (first..=last).contains(x))
        .map(|(x, date)| (x, date.format(format).to_string()))
        .collect()
}

/// The last day of `month` (1 to 12) of `year`.
fn month_end(year: i32, month: u32) -> Option<NaiveDate> {
    NaiveDate::from_ymd_opt(year, month, 1)?
        .checked_add_months(Months::new(1))?
        .pred_opt()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn at(y: i32, m: u32, d: u32) -> f64 {
        year(NaiveDate::from_ymd_opt(y, m, d).unwrap())
    }

    fn labels(first: f64, last: f64, pixels_per_year: f64) -> Vec<String> {
        ticks(first, last, pixels_per_year)
            .into_iter()
            .map(|(_, l)| l)
            .collect()
    }

    // The ends of months and quarters from the calendar: 30 June, 31 December, 29 February in
    // a leap year; a year's tick on its first day.
    #[test]
    fn ticks_stand_on_the_last_day_of_their_month() {
        assert_eq!(month_end(2024, 2), NaiveDate::from_ymd_opt(2024, 2, 29));
        assert_eq!(month_end(2025, 12), NaiveDate::from_ymd_opt(2025, 12, 31));
        let ticks = ticks(at(2026, 4, 30), at(2026, 9, 30), 2000.0);
        let expected = [(2026, 4, 30), (2026, 5, 31), (2026, 6, 30), (2026, 7, 31)];
        for ((x, _), (y, m, d)) in ticks.iter().zip(expected) {
            assert_eq!(*x, at(y, m, d));
        }
        let drawn: Vec<&str> = ticks.iter().map(|(_, l)| l.as_str()).collect();
        assert_eq!(
            drawn,
            ["2026-04", "2026-05", "2026-06", "2026-07", "2026-08", "2026-09"]
        );
        let years = super::ticks(at(2021, 9, 30), at(2026, 9, 30), 40.0);
        assert_eq!(years[0], (at(2022, 1, 1), "2022".to_string()));
        assert_eq!(years.last(), Some(&(at(2026, 1, 1), "2026".to_string())));
    }

    // A label "2024-06" is 7 characters of 11 px at 0.6 em: 46.2 px, so neighbours need 49.2 px
    // between their ticks. Two and a half years at 102 px a year: a half-year (181 to 184 days)
    // is 50.5 px or more, so half-years; at 80 px a year (39.7 px) years. Five months at 600 px
    // a year: a month (28 to 31 days) is 46 px or more, too close, so quarters; at 700 px a year
    // (53.7 px for February) months.
    #[test]
    fn the_spacing_is_the_finest_whose_labels_stand_apart() {
        let (first, last) = (at(2024, 3, 31), at(2026, 9, 30));
        assert_eq!(
            labels(first, last, 102.0),
            ["2024-06", "2024-12", "2025-06", "2025-12", "2026-06"]
        );
        // Years begin on 1 January (before 0.17.0 they stood on 31 December, "2024", "2025").
        assert_eq!(labels(first, last, 80.0), ["2025", "2026"]);
        let (first, last) = (at(2026, 1, 7), at(2026, 6, 3));
        assert_eq!(labels(first, last, 600.0), ["2026-03"]);
        assert_eq!(
            labels(first, last, 700.0),
            ["2026-01", "2026-02", "2026-03", "2026-04", "2026-05"]
        );
        // Thirty-five years on a panel of 265 px: labels of 4 characters (26.4 px) need 29.4 px,
        // 5-year ticks get 37.9 px.
        assert_eq!(
            labels(at(1991, 9, 30), at(2026, 9, 30), 265.0 / 35.0),
            ["1995", "2000", "2005", "2010", "2015", "2020", "2025"]
        );
    }

    #[test]
    fn fractional_years() {
        assert_eq!(year(NaiveDate::from_ymd_opt(2024, 1, 1).unwrap()), 2024.0);
        // 2024 is a leap year: 1 July is day 182 of 366 counted from 0.
        let july = year(NaiveDate::from_ymd_opt(2024, 7, 1).unwrap());
        // 1e-12: one division and one addition on numbers near 2024 (ulp 4.5e-13).
        assert!((july - (2024.0 + 182.0 / 366.0)).abs() < 1e-12);
    }
}
