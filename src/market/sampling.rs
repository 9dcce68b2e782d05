//! Period sampling and returns: from dated prices to aligned per-period returns.
//!
//! The rule (README, "Sampling"): a frequency defines a grid of period ends; each sample point
//! takes the last observation dated inside its period, that is after the previous period end and
//! on or before its own. A period with no observation is missing, never filled from an earlier
//! period (a carried-forward price would invent a zero return). A return needs the samples at
//! both of its ends. The asset, the index and the risk-free series are aligned on the periods
//! where all of them have a value, and each dropped period is counted by reason.

use chrono::{Datelike, NaiveDate, Weekday};
use serde::{Deserialize, Serialize};

use crate::io::series::SeriesView;

mod align;
pub use align::{
    align, align_with_shifts, constant_up_to_rounding, AlignedReturns, DroppedPeriods,
    ShiftedMarket, StalePeriods,
};

/// Sampling frequency of returns.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Frequency {
    /// Every weekday (Monday to Friday).
    Daily,
    /// One chosen weekday each week (`beta.weekday`, default Wednesday).
    Weekly,
    /// Calendar month-ends.
    Monthly,
    /// Calendar quarter-ends (March 31, June 30, September 30, December 31).
    Quarterly,
}

impl Frequency {
    /// Periods per year for the risk-free conversion: 252 trading days (common practice), 52
    /// weeks, 12 months, 4 quarters.
    pub fn periods_per_year(self) -> f64 {
        match self {
            Frequency::Daily => 252.0,
            Frequency::Weekly => 52.0,
            Frequency::Monthly => 12.0,
            Frequency::Quarterly => 4.0,
        }
    }
}

/// The weekday of weekly sampling.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum SampleWeekday {
    Monday,
    Tuesday,
    Wednesday,
    Thursday,
    Friday,
}

impl SampleWeekday {
    fn chrono(self) -> Weekday {
        match self {
            SampleWeekday::Monday => Weekday::Mon,
            SampleWeekday::Tuesday => Weekday::Tue,
            SampleWeekday::Wednesday => Weekday::Wed,
            SampleWeekday::Thursday => Weekday::Thu,
            SampleWeekday::Friday => Weekday::Fri,
        }
    }
}

/// Simple or continuously compounded (log) returns.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum ReturnType {
    /// p(t)/p(t − 1) − 1.
    Simple,
    /// ln(p(t)/p(t − 1)).
    Log,
}

impl ReturnType {
    /// The return from price `previous` to price `current`.
    pub fn between(self, previous: f64, current: f64) -> f64 {
        match self {
            ReturnType::Simple => current / previous - 1.0,
            ReturnType::Log => (current / previous).ln(),
        }
    }
}

/// The sampling rule of a frequency, in words (README "Sampling", the memo).
pub fn rule_text(frequency: Frequency) -> &'static str {
    match frequency {
        Frequency::Daily => {
            "daily: one sample per weekday (Monday to Friday), the last price dated after the \
             previous weekday and on or before this one (a Monday sample may be a weekend \
             price); a weekday without a price (a holiday) is missing, so the returns into and \
             out of it are dropped"
        }
        Frequency::Weekly => {
            "weekly: one sample per week on the chosen weekday, the last price dated after the \
             previous week's weekday and on or before this one (a holiday on the weekday takes \
             the last earlier price of the same week); a week without a price is missing"
        }
        Frequency::Monthly => {
            "monthly: one sample per calendar month, the last price dated inside the month; a \
             month without a price is missing"
        }
        Frequency::Quarterly => {
            "quarterly: one sample per calendar quarter (ending March 31, June 30, September \
             30, December 31), the last price dated inside the quarter; a quarter without a \
             price is missing"
        }
    }
}

/// The last sample point of `frequency` on or before `date`.
pub fn last_point_on_or_before(
    frequency: Frequency,
    weekday: SampleWeekday,
    date: NaiveDate,
) -> NaiveDate {
    match frequency {
        Frequency::Daily => {
            let mut d = date;
            while matches!(d.weekday(), Weekday::Sat | Weekday::Sun) {
                d = d.pred_opt().expect("dates stay inside chrono's range");
            }
            d
        }
        Frequency::Weekly => {
            let back = (7 + date.weekday().num_days_from_monday()
                - weekday.chrono().num_days_from_monday())
                % 7;
            date - chrono::Days::new(u64::from(back))
        }
        Frequency::Monthly => last_month_end_on_or_before(date),
        Frequency::Quarterly => {
            let mut end = last_month_end_on_or_before(date);
            while !end.month().is_multiple_of(3) {
                end = last_month_end_on_or_before(end.with_day(1).expect("day 1 exists"));
            }
            end
        }
    }
}

/// The sample point before `point` (itself a sample point).
fn previous_point(frequency: Frequency, weekday: SampleWeekday, point: NaiveDate) -> NaiveDate {
    let day_before = point.pred_opt().expect("dates stay inside chrono's range");
    match frequency {
        Frequency::Weekly => point - chrono::Days::new(7),
        _ => last_point_on_or_before(frequency, weekday, day_before),
    }
}

impl PeriodGrid {
    /// As [`PeriodGrid::ending_at`], for any frequency and weekday: `lookback` returns ending at
    /// the last sample point on or before `as_of`.
    pub fn ending_at_with(
        frequency: Frequency,
        weekday: SampleWeekday,
        as_of: NaiveDate,
        lookback: u32,
    ) -> PeriodGrid {
        let mut boundaries = Vec::with_capacity(lookback as usize + 2);
        let mut point = last_point_on_or_before(frequency, weekday, as_of);
        boundaries.push(point);
        for _ in 0..=lookback {
            point = previous_point(frequency, weekday, point);
            boundaries.push(point);
        }
        boundaries.reverse();
        PeriodGrid {
            frequency,
            boundaries,
        }
    }
}

/// The number of return periods whose both ends lie in [`start`, the last sample point on or
/// before `end`]: the sample points from the first one on or after `start` to the last one.
pub fn periods_between(
    frequency: Frequency,
    weekday: SampleWeekday,
    start: NaiveDate,
    end: NaiveDate,
) -> u32 {
    let mut point = last_point_on_or_before(frequency, weekday, end);
    let mut count = 0;
    loop {
        let before = previous_point(frequency, weekday, point);
        if before < start {
            return count;
        }
        count += 1;
        point = before;
    }
}

/// Returns between consecutive samples of the chosen type; `None` where either is missing.
pub fn period_returns(samples: &[Option<f64>], return_type: ReturnType) -> Vec<Option<f64>> {
    samples
        .windows(2)
        .map(|pair| match (pair[0], pair[1]) {
            (Some(previous), Some(current)) => Some(return_type.between(previous, current)),
            _ => None,
        })
        .collect()
}

/// As [`sample`] (one pass, O(rows + periods)), but a sample whose last price is dated more than `max_stale_days` calendar
/// days before its sample point is stale: it is `None`, and its flag in the second vector is set.
pub fn sample_with_staleness(
    grid: &PeriodGrid,
    series: SeriesView<'_>,
    max_stale_days: Option<u32>,
) -> (Vec<Option<f64>>, Vec<bool>) {
    let mut samples = Vec::with_capacity(grid.boundaries.len() - 1);
    let mut stale = Vec::with_capacity(grid.boundaries.len() - 1);
    for_each_sample(grid, series, max_stale_days, |sample, is_stale| {
        samples.push(sample);
        stale.push(is_stale);
    });
    (samples, stale)
}

/// The period returns of [`period_returns`] over the samples of [`sample_with_staleness`], and
/// per return whether either of its two samples was stale, in the same pass as
/// the sampling: the same figures without the two vectors of samples in between (a whole
/// market samples millions of periods).
pub fn sampled_returns(
    grid: &PeriodGrid,
    series: SeriesView<'_>,
    max_stale_days: Option<u32>,
    return_type: ReturnType,
) -> (Vec<Option<f64>>, Vec<bool>) {
    let periods = grid.boundaries.len().saturating_sub(2);
    let mut returns = Vec::with_capacity(periods);
    let mut stale = Vec::with_capacity(periods);
    let mut previous: Option<(Option<f64>, bool)> = None;
    for_each_sample(grid, series, max_stale_days, |sample, is_stale| {
        if let Some((before, was_stale)) = previous {
            returns.push(match (before, sample) {
                (Some(before), Some(now)) => Some(return_type.between(before, now)),
                _ => None,
            });
            stale.push(was_stale || is_stale);
        }
        previous = Some((sample, is_stale));
    });
    (returns, stale)
}

/// Calls `each(sample, stale)` for every sample point of `grid` in order: the last value dated
/// inside the point's period (`None` when there is none, or when it is older than
/// `max_stale_days`, which also sets `stale`).
fn for_each_sample(
    grid: &PeriodGrid,
    series: SeriesView<'_>,
    max_stale_days: Option<u32>,
    mut each: impl FnMut(Option<f64>, bool),
) {
    let mut i = 0;
    let dates = series.dates;
    while i < dates.len() && dates[i] <= grid.boundaries[0] {
        i += 1;
    }
    for &end in grid.sample_points() {
        let mut last = None;
        while i < dates.len() && dates[i] <= end {
            last = Some((dates[i], series.values[i]));
            i += 1;
        }
        let too_old = |date: NaiveDate| {
            max_stale_days.is_some_and(|limit| (end - date).num_days() > i64::from(limit))
        };
        match last {
            Some((date, _)) if too_old(date) => each(None, true),
            other => each(other.map(|(_, v)| v), false),
        }
    }
}

/// The risk-free rate of each return period for the return type: for simple returns
/// [`risk_free_per_period`]; for log returns the continuously compounded ln(1 + y)/periods per
/// year, of the yield at the period's start.
pub fn risk_free_for_returns(
    samples: &[Option<f64>],
    frequency: Frequency,
    return_type: ReturnType,
) -> Vec<Option<f64>> {
    match return_type {
        ReturnType::Simple => risk_free_per_period(samples, frequency),
        ReturnType::Log => samples[..samples.len().saturating_sub(1)]
            .iter()
            .map(|y| y.map(|y| (1.0 + y).ln() / frequency.periods_per_year()))
            .collect(),
    }
}

/// Ascending period boundaries. Sample point `j` (for `j ≥ 1`) is `boundaries[j]`, and its
/// period is `(boundaries[j - 1], boundaries[j]]`; `boundaries[0]` only opens the first period.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PeriodGrid {
    pub frequency: Frequency,
    pub boundaries: Vec<NaiveDate>,
}

/// The last calendar day of the month that contains `date`.
pub fn month_end(date: NaiveDate) -> NaiveDate {
    let (year, month) = if date.month() == 12 {
        (date.year() + 1, 1)
    } else {
        (date.year(), date.month() + 1)
    };
    NaiveDate::from_ymd_opt(year, month, 1)
        .and_then(|first| first.pred_opt())
        .expect("month arithmetic stays inside chrono's range")
}

/// The last month-end on or before `date`.
pub fn last_month_end_on_or_before(date: NaiveDate) -> NaiveDate {
    let end = month_end(date);
    if end == date {
        end
    } else {
        date.with_day(1)
            .and_then(|first| first.pred_opt())
            .expect("a date after year 1 has a previous day")
    }
}

impl PeriodGrid {
    /// The dates on which samples are taken (all boundaries but the first).
    pub fn sample_points(&self) -> &[NaiveDate] {
        &self.boundaries[1..]
    }

    /// The end date of each return period (all sample points but the first).
    pub fn return_period_ends(&self) -> &[NaiveDate] {
        &self.boundaries[2..]
    }
}

/// For each sample point, the last value dated inside its period, or `None`.
/// One pass over the series: O(rows + periods).
pub fn sample(grid: &PeriodGrid, series: SeriesView<'_>) -> Vec<Option<f64>> {
    sample_with_staleness(grid, series, None).0
}

/// Converts an annualised yield to the rate of one period by compounding:
/// (1 + y)^(1 / periods_per_year) − 1.
pub fn period_rate(annual_yield: f64, periods_per_year: f64) -> f64 {
    (1.0 + annual_yield).powf(1.0 / periods_per_year) - 1.0
}

/// The risk-free rate of each return period: the yield sampled at the period's start (the
/// previous sample point, the rate known when the period begins), converted by [`period_rate`].
pub fn risk_free_per_period(samples: &[Option<f64>], frequency: Frequency) -> Vec<Option<f64>> {
    let per_year = frequency.periods_per_year();
    samples[..samples.len().saturating_sub(1)]
        .iter()
        .map(|y| y.map(|y| period_rate(y, per_year)))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    // Prices flat at 15 significant digits (500 or 500.000000000001, each one unit in the 15th
    // digit apart) give returns of −2e-15, 0 and +2e-15 in any order: constant whichever comes
    // first (found by review: a first return of −2e-15 made +2e-15 count as a move). A move of
    // one unit in the 12th digit (2e-12) is not rounding.
    #[test]
    fn prices_flat_at_fifteen_digits_are_constant_in_any_order() {
        let prices = |ks: &[u8]| -> Vec<f64> {
            (ks.iter())
                .map(|&k| format!("{}", 500.0 + f64::from(k) * 1e-12).parse().unwrap())
                .collect()
        };
        let returns =
            |p: Vec<f64>| -> Vec<f64> { p.windows(2).map(|w| w[1] / w[0] - 1.0).collect() };
        for ks in [[1, 0, 1, 1, 0], [0, 1, 0, 0, 1], [1, 1, 0, 1, 0]] {
            let r = returns(prices(&ks));
            assert!(
                r.iter().any(|&x| x < 0.0) && r.iter().any(|&x| x > 0.0),
                "{r:?}"
            );
            assert!(constant_up_to_rounding(&r), "{r:?}");
        }
        let moved = returns(vec![500.0, 500.0, 500.000000001, 500.000000001]);
        assert!(!constant_up_to_rounding(&moved), "{moved:?}");
    }

    // A price growing by one fixed rate gives returns equal to that rate up to the rounding
    // of p₁/p₀ − 1 (IEEE 754: each operation within half an ulp), so they are constant; a
    // return that differs by a thousandth of a basis point (1e-7) is not.
    #[test]
    fn returns_of_a_fixed_growth_rate_are_constant() {
        let prices: Vec<f64> = (0..300).map(|n| 20.0 * 1.001_f64.powi(n)).collect();
        let returns: Vec<f64> = prices.windows(2).map(|w| w[1] / w[0] - 1.0).collect();
        assert!(returns.iter().any(|&r| r != returns[0]), "rounding shows");
        let aligned = |asset: Vec<f64>| AlignedReturns {
            period_ends: Vec::new(),
            market: vec![0.0; asset.len()],
            asset,
            risk_free: None,
            dropped: DroppedPeriods::default(),
            market_shifted: Vec::new(),
        };
        assert!(aligned(returns.clone()).asset_is_constant());
        let mut moved = returns;
        moved[150] += 1e-7;
        assert!(!aligned(moved).asset_is_constant());
        assert!(!aligned(Vec::new()).asset_is_constant());
    }

    /// Per return period: whether either of its two samples was stale (the two-step form the
    /// one-pass [`sampled_returns`] is checked against).
    fn stale_returns(stale_samples: &[bool]) -> Vec<bool> {
        stale_samples.windows(2).map(|p| p[0] || p[1]).collect()
    }

    fn date(text: &str) -> NaiveDate {
        NaiveDate::parse_from_str(text, "%Y-%m-%d").unwrap()
    }

    // The month-end rule, checked against the Gregorian calendar (leap years: divisible by 4,
    // except centuries not divisible by 400 — common knowledge of the calendar).
    #[test]
    fn month_ends_follow_the_calendar() {
        assert_eq!(month_end(date("2024-02-10")), date("2024-02-29"));
        assert_eq!(month_end(date("2023-02-10")), date("2023-02-28"));
        assert_eq!(month_end(date("2100-02-01")), date("2100-02-28"));
        assert_eq!(month_end(date("2000-02-01")), date("2000-02-29"));
        assert_eq!(month_end(date("2026-12-31")), date("2026-12-31"));
        assert_eq!(
            last_month_end_on_or_before(date("2026-09-30")),
            date("2026-09-30")
        );
        assert_eq!(
            last_month_end_on_or_before(date("2026-10-15")),
            date("2026-09-30")
        );
        assert_eq!(
            last_month_end_on_or_before(date("2026-01-01")),
            date("2025-12-31")
        );
    }

    #[test]
    fn grid_holds_lookback_plus_two_boundaries() {
        let grid = PeriodGrid::ending_at_with(
            Frequency::Monthly,
            SampleWeekday::Wednesday,
            date("2026-10-15"),
            3,
        );
        let expected: Vec<NaiveDate> = [
            "2026-05-31",
            "2026-06-30",
            "2026-07-31",
            "2026-08-31",
            "2026-09-30",
        ]
        .iter()
        .map(|d| date(d))
        .collect();
        assert_eq!(grid.boundaries, expected);
        assert_eq!(grid.return_period_ends().len(), 3);
    }

    // A hand-built calendar: trading stops on the 27th in one month (a month-end holiday and a
    // weekend), a whole month has no trade, and a price after the as-of date must be ignored.
    // Expected samples written out by hand from the rule in the module comment.
    #[test]
    fn samples_take_the_last_price_inside_each_month() {
        let dates: Vec<NaiveDate> = [
            "2026-05-29", // on or before May 31, the boundary that opens the first period
            "2026-06-15",
            "2026-06-27", // last June trade: June 28-30 closed
            "2026-08-03", // July has no trade at all
            "2026-08-31",
            "2026-09-30",
            "2026-10-01", // after the last period end: ignored
        ]
        .iter()
        .map(|d| date(d))
        .collect();
        let values = vec![10.0, 11.0, 12.0, 13.0, 14.0, 15.0, 99.0];
        let grid = PeriodGrid::ending_at_with(
            Frequency::Monthly,
            SampleWeekday::Wednesday,
            date("2026-09-30"),
            3,
        );
        // Sample points: Jun 30, Jul 31, Aug 31, Sep 30; May 29 lies before the first period.
        let samples = sample(
            &grid,
            SeriesView {
                dates: &dates,
                values: &values,
            },
        );
        assert_eq!(samples, vec![Some(12.0), None, Some(14.0), Some(15.0)]);
        let returns = period_returns(&samples, ReturnType::Simple);
        assert_eq!(returns, vec![None, None, Some(15.0 / 14.0 - 1.0)]);
    }

    // (1 + y)^(1/12) − 1 for y = 12.6825030131970%: (1.01)^12 = 1.12682503013197 (textbook
    // compounding, computed by hand), so the monthly rate must be 1% to rounding.
    #[test]
    fn annual_yield_compounds_down_to_the_period() {
        let annual = 1.01_f64.powi(12) - 1.0;
        // 1e-15: two roundings of numbers near 0.01 (powi, then powf) cost a few ulps.
        assert!((period_rate(annual, 12.0) - 0.01).abs() < 1e-15);
        assert_eq!(period_rate(0.0, 12.0), 0.0);
    }

    #[test]
    fn alignment_counts_each_reason() {
        let ends: Vec<NaiveDate> = ["2026-07-31", "2026-08-31", "2026-09-30"]
            .iter()
            .map(|d| date(d))
            .collect();
        let asset = [Some(0.01), None, Some(0.03)];
        let market = [Some(0.02), None, Some(0.01)];
        let rf = [Some(0.001), Some(0.001), None];
        let aligned = align(&ends, &asset, &market, Some(&rf));
        assert_eq!(aligned.period_ends, vec![ends[0]]);
        assert_eq!(
            aligned.dropped,
            DroppedPeriods {
                total: 2,
                asset_missing: 1,
                market_missing: 1,
                risk_free_missing: 1,
                ..DroppedPeriods::default()
            }
        );
        assert_eq!(aligned.asset_excess(), vec![0.01 - 0.001]);
    }

    // Shifts by hand: four periods, the window starts at period 1 (one lag before it), the
    // market has no value in period 2, and a lead of the last period would lie after the
    // window, so it is never available. Lag column of period 1 is market[0] = 0.01.
    #[test]
    fn shifted_market_columns_come_from_neighbouring_periods() {
        let ends: Vec<NaiveDate> = ["2026-06-30", "2026-07-31", "2026-08-31", "2026-09-30"]
            .iter()
            .map(|d| date(d))
            .collect();
        let asset = [Some(0.5), Some(0.1), Some(0.2), Some(0.3)];
        let market = [Some(0.01), Some(0.02), None, Some(0.04)];
        let none = StalePeriods::default();
        let lagged = align_with_shifts(&ends, &asset, &market, None, none, &[-1], 1);
        // Period 1: lag = 0.01. Period 2: market missing. Period 3: its lag (period 2) missing.
        assert_eq!(lagged.period_ends, vec![ends[1]]);
        assert_eq!(lagged.market_shifted[0].returns, vec![0.01]);
        assert_eq!(lagged.dropped.total, 2);
        assert_eq!(lagged.dropped.market_missing, 1);
        assert_eq!(lagged.dropped.shifted_market_missing, 1);
        let led = align_with_shifts(&ends, &asset, &market, None, none, &[1], 0);
        // Period 0 leads to 0.02; period 1's lead (period 2) is missing; period 2's lead exists
        // but its own market value does not; period 3 has no later period.
        assert_eq!(led.period_ends, vec![ends[0]]);
        assert_eq!(led.market_shifted[0].returns, vec![0.02]);
        assert_eq!(led.dropped.shifted_market_missing, 2);
        assert_eq!(led.dropped.total, 3);
    }

    fn dates(list: &[&str]) -> Vec<NaiveDate> {
        list.iter().map(|d| date(d)).collect()
    }

    // A hand-built weekly calendar (weekdays from the Gregorian calendar: 2026-09-30 is a
    // Wednesday). Weeks end on Wednesdays Sep 2, 9, 16, 23, 30; Aug 26 opens the first period.
    // - Sep 9 (Wednesday) is a holiday: the week's sample is Tuesday Sep 8's price.
    // - The week ending Sep 16 has no trade at all (a missing week): its sample is missing, and
    //   it is not filled from Sep 8.
    // - Sep 30's sample is that day's own price; a Thursday Oct 1 price is ignored.
    #[test]
    fn weekly_samples_take_the_last_price_on_or_before_the_weekday() {
        let grid = PeriodGrid::ending_at_with(
            Frequency::Weekly,
            SampleWeekday::Wednesday,
            date("2026-10-02"),
            4,
        );
        assert_eq!(
            grid.boundaries,
            dates(&[
                "2026-08-26",
                "2026-09-02",
                "2026-09-09",
                "2026-09-16",
                "2026-09-23",
                "2026-09-30"
            ])
        );
        let d = dates(&[
            "2026-08-31",
            "2026-09-02",
            "2026-09-08",
            "2026-09-21",
            "2026-09-23",
            "2026-09-30",
            "2026-10-01",
        ]);
        let v = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0];
        let view = SeriesView {
            dates: &d,
            values: &v,
        };
        let (samples, stale) = sample_with_staleness(&grid, view, None);
        assert_eq!(
            samples,
            vec![Some(2.0), Some(3.0), None, Some(5.0), Some(6.0)]
        );
        assert_eq!(stale, vec![false; 5]);
        // With a one-day staleness limit the holiday week's Tuesday price (1 day old) is kept;
        // with zero days it is stale: dropped and flagged, as are the returns on either side.
        let (_, stale) = sample_with_staleness(&grid, view, Some(1));
        assert_eq!(stale, vec![false; 5]);
        let (samples, stale) = sample_with_staleness(&grid, view, Some(0));
        assert_eq!(samples[1], None);
        assert_eq!(stale, vec![false, true, false, false, false]);
        assert_eq!(stale_returns(&stale), vec![true, true, false, false]);
        // The one-pass form the estimation uses gives the same returns and flags as sampling,
        // then taking returns, then flagging them (both return types, with and without a limit).
        for limit in [None, Some(0), Some(1)] {
            for kind in [ReturnType::Simple, ReturnType::Log] {
                let (samples, stale) = sample_with_staleness(&grid, view, limit);
                assert_eq!(
                    sampled_returns(&grid, view, limit, kind),
                    (period_returns(&samples, kind), stale_returns(&stale))
                );
            }
        }
        // Thursday sampling of the same data: the weekday is configurable.
        let thursday = PeriodGrid::ending_at_with(
            Frequency::Weekly,
            SampleWeekday::Thursday,
            date("2026-10-02"),
            1,
        );
        assert_eq!(
            thursday.sample_points(),
            &dates(&["2026-09-24", "2026-10-01"])[..]
        );
    }

    // Daily: weekdays only. Mon Sep 7 2026 is a holiday in this invented calendar: it is missing,
    // so the returns ending Sep 7 and Sep 8 are both dropped, never filled. A Saturday price
    // belongs to the following Monday's period.
    #[test]
    fn daily_samples_skip_weekends_and_leave_holidays_missing() {
        let grid = PeriodGrid::ending_at_with(
            Frequency::Daily,
            SampleWeekday::Wednesday,
            date("2026-09-13"), // a Sunday: the last weekday is Friday Sep 11
            5,
        );
        assert_eq!(
            grid.sample_points(),
            &dates(&[
                "2026-09-04",
                "2026-09-07",
                "2026-09-08",
                "2026-09-09",
                "2026-09-10",
                "2026-09-11"
            ])[..]
        );
        let d = dates(&[
            "2026-09-04",
            "2026-09-08",
            "2026-09-09",
            "2026-09-10",
            "2026-09-11",
        ]);
        let v = [10.0, 11.0, 12.0, 12.0, 13.0];
        let (samples, _) = sample_with_staleness(
            &grid,
            SeriesView {
                dates: &d,
                values: &v,
            },
            None,
        );
        let returns = period_returns(&samples, ReturnType::Simple);
        assert_eq!(returns[0], None);
        assert_eq!(returns[1], None);
        assert_eq!(returns[2], Some(12.0 / 11.0 - 1.0));
        // Log returns: ln(13/12) for the last day.
        let logs = period_returns(&samples, ReturnType::Log);
        assert_eq!(logs[4], Some((13.0_f64 / 12.0).ln()));
        // A weekend price (Saturday Sep 5) is Monday's sample, being the last price after Friday.
        let d = dates(&["2026-09-04", "2026-09-05"]);
        let v = [10.0, 10.5];
        let (samples, _) = sample_with_staleness(
            &grid,
            SeriesView {
                dates: &d,
                values: &v,
            },
            None,
        );
        assert_eq!(samples[..2], [Some(10.0), Some(10.5)]);
    }

    // Quarter-ends from the calendar; "5y" of quarters ending 2026-09-30 holds 20 returns
    // (2021-09-30 to 2026-09-30: 21 quarter-ends); "104w" of Wednesdays ending on the Wednesday
    // 2026-09-30 starts 728 days earlier on a Wednesday, so 104 returns; "250d" of weekdays.
    #[test]
    fn quarterly_grid_and_span_counts() {
        assert_eq!(
            last_point_on_or_before(
                Frequency::Quarterly,
                SampleWeekday::Wednesday,
                date("2026-08-15")
            ),
            date("2026-06-30")
        );
        let grid = PeriodGrid::ending_at_with(
            Frequency::Quarterly,
            SampleWeekday::Wednesday,
            date("2026-09-30"),
            2,
        );
        assert_eq!(
            grid.boundaries,
            dates(&["2025-12-31", "2026-03-31", "2026-06-30", "2026-09-30"])
        );
        let w = SampleWeekday::Wednesday;
        let end = date("2026-09-30");
        assert_eq!(
            periods_between(Frequency::Quarterly, w, date("2021-09-30"), end),
            20
        );
        assert_eq!(
            periods_between(Frequency::Weekly, w, date("2024-10-02"), end),
            104
        );
        assert_eq!(
            periods_between(Frequency::Monthly, w, date("2021-09-30"), end),
            60
        );
        // 250 calendar days before Wed 2026-09-30 is Fri 2026-01-23 (calendar arithmetic). The
        // sample points are the weekdays from then to Sep 30, counted here by walking the
        // calendar independently of the grid code; the returns are one fewer.
        let start = date("2026-01-23");
        let weekdays = (0..=(end - start).num_days())
            .map(|k| start + chrono::Days::new(k as u64))
            .filter(|d| !matches!(d.weekday(), Weekday::Sat | Weekday::Sun))
            .count() as u32;
        assert_eq!(
            periods_between(Frequency::Daily, w, start, end),
            weekdays - 1
        );
    }

    // ln(1 + y)/periods per year is the continuously compounded rate whose e-power over a year
    // gives 1 + y (textbook identity): exp(12 · r) = 1.05.
    #[test]
    fn log_risk_free_is_continuously_compounded() {
        let rf = risk_free_for_returns(
            &[Some(0.05), Some(0.05)],
            Frequency::Monthly,
            ReturnType::Log,
        );
        // 1e-15: one log, one exp of numbers near 1.
        assert!(((12.0 * rf[0].unwrap()).exp() - 1.05).abs() < 1e-15);
    }
}
