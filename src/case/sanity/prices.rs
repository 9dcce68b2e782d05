//! Notes on patterns in a price file that pass every rule yet bend a beta without a word (found
//! by review): a move between two rows by exactly a usual split ratio (2, 3, 3/2 or 4, or their
//! inverses: an unadjusted split inside the factor-of-3 bound), and prices that stay unchanged
//! for the last month and more of the window (a series carried forward after trading stopped,
//! whose zero returns pull the beta toward zero). Notes, not errors: either can be real.

use chrono::NaiveDate;

use crate::io::series::DataFile;

/// The ratios of the usual splits and reverse splits, as the later price over the earlier, each
/// with how close a move must come to it, as a share of it: on a split's day the unadjusted
/// price also moves by the day's return (a few percent), while a genuine move of about −50%,
/// −67%, −75% or +100% between two rows is rare; a move of −33% less so, so 3-for-2 is held
/// closer (hurdle's judgement).
const SPLIT_RATIOS: [(f64, f64); 8] = [
    (0.5, 0.05),
    (1.0 / 3.0, 0.05),
    (0.25, 0.05),
    (2.0, 0.05),
    (3.0, 0.05),
    (4.0, 0.05),
    (2.0 / 3.0, 0.02),
    (1.5, 0.02),
];

/// Unchanged prices spanning more than this many calendar days at the window's end are noted: a
/// month with no trade at all is rare for a listed firm.
const FLAT_END_DAYS: i64 = 31;

/// The notes for each `(name, file)`: split-like moves whose later row falls in `window`, and
/// an unchanged run of prices reaching the file's last row inside the window.
pub fn price_pattern_notes(
    files: &[(&str, &DataFile)],
    window: (NaiveDate, NaiveDate),
) -> Vec<String> {
    let mut notes = Vec::new();
    for (name, file) in files {
        notes.extend(split_note(name, file, window));
        notes.extend(flat_end_note(name, file, window));
    }
    notes
}

/// Where the prices `(dates, values)` move between two rows by a usual split ratio, the later
/// row in `(start, end]`: the later row's index.
pub fn split_move(
    (dates, values): (&[NaiveDate], &[f64]),
    (start, end): (NaiveDate, NaiveDate),
) -> Option<usize> {
    let from = dates.partition_point(|&d| d <= start).max(1);
    let to = dates.partition_point(|&d| d <= end);
    (from..to).find(|&i| {
        let ratio = values[i] / values[i - 1];
        // Most moves are far inside every ratio's reach: one comparison sets them aside.
        !(0.7..1.4).contains(&ratio)
            && (SPLIT_RATIOS.iter()).any(|(split, within)| (ratio / split - 1.0).abs() <= *within)
    })
}

/// The patterns a note names in one security's prices, found once.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct PricePatterns {
    /// The date of the first move in the window by a usual split ratio.
    pub split: Option<NaiveDate>,
    /// The run of unchanged prices ending them.
    pub flat_end: Option<FlatEnd>,
    /// Calendar days per price inside the window, on average ([`mean_gap`]).
    pub gap: Option<f64>,
}

impl PricePatterns {
    pub fn of(series: (&[NaiveDate], &[f64]), window: (NaiveDate, NaiveDate)) -> PricePatterns {
        PricePatterns {
            split: split_move(series, window).map(|i| series.0[i]),
            flat_end: flat_end(series, window),
            gap: mean_gap(series.0, window),
        }
    }
}

/// The calendar days between the first and last of `dates` inside `[start, end]`, per interval
/// between them (about 1.45 for a market's trading days, 7 for weekly prices, 30.4 for
/// month-ends); `None` with fewer than three dates there.
pub fn mean_gap(dates: &[NaiveDate], (start, end): (NaiveDate, NaiveDate)) -> Option<f64> {
    let from = dates.partition_point(|&d| d < start);
    let to = dates.partition_point(|&d| d <= end);
    let inside = dates.get(from..to).filter(|d| d.len() >= 3)?;
    let span = (inside[inside.len() - 1] - inside[0]).num_days() as f64;
    Some(span / (inside.len() - 1) as f64)
}

/// The median of the calendar days between consecutive `dates` inside `[start, end]` (1 for
/// a market's trading days, 7 for weekly prices, about 30 for month-ends), which a late first
/// price or a long gap does not move; `None` with fewer than three dates there.
pub fn median_gap(dates: &[NaiveDate], (start, end): (NaiveDate, NaiveDate)) -> Option<f64> {
    let from = dates.partition_point(|&d| d < start);
    let to = dates.partition_point(|&d| d <= end);
    let inside = dates.get(from..to).filter(|d| d.len() >= 3)?;
    let mut gaps: Vec<i64> = inside
        .windows(2)
        .map(|w| (w[1] - w[0]).num_days())
        .collect();
    let middle = gaps.len() / 2;
    let (_, median, _) = gaps.select_nth_unstable(middle);
    Some(*median as f64)
}

/// The median of the calendar days by which the last of `dates` on or before each sample point
/// precedes it, over the points from the first date on (0 for prices on the sample points,
/// about 3 for Friday prices at month-ends); `None` when no point has a date before it.
pub fn median_staleness(dates: &[NaiveDate], points: &[NaiveDate]) -> Option<f64> {
    let mut days: Vec<i64> = (points.iter())
        .filter_map(|&point| {
            let at = dates.partition_point(|&d| d <= point);
            at.checked_sub(1)
                .map(|last| (point - dates[last]).num_days())
        })
        .collect();
    let middle = days.len() / 2;
    (!days.is_empty()).then(|| *days.select_nth_unstable(middle).1 as f64)
}

/// The run of unchanged prices that ends a series, counted from the window's start.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FlatEnd {
    pub from: NaiveDate,
    pub to: NaiveDate,
    pub rows: usize,
    pub days: i64,
}

/// The run of unchanged prices that ends `(dates, values)`, when it spans more than
/// [`FLAT_END_DAYS`] inside the window `(start, end)` (its last price at most a month past the
/// end) with three rows at least.
pub fn flat_end(
    (dates, values): (&[NaiveDate], &[f64]),
    (start, end): (NaiveDate, NaiveDate),
) -> Option<FlatEnd> {
    let last = *values.last()?;
    let first = values.iter().rposition(|&p| p != last).map_or(0, |k| k + 1);
    let (from, to) = (dates.get(first)?.max(&start).to_owned(), *dates.last()?);
    let days = (to - from).num_days();
    let rows = dates[first..].iter().filter(|d| **d >= from).count();
    let inside = to > start && to <= end + chrono::Duration::days(31);
    (inside && days > FLAT_END_DAYS && rows >= 3).then_some(FlatEnd {
        from,
        to,
        rows,
        days,
    })
}

/// Whether `b`'s prices are `a`'s times one factor (1 included) on every date both have (at
/// least 20 dates, and at least half of each series): the factor and the count of shared
/// dates. The factor may move by 1e-4 of itself between dates: prices rounded to four decimals
/// (at a price of 1 or more) move it by at most 1e-4, while two firms' returns differ by far
/// more on some day in twenty.
pub fn proportional(
    (a_dates, a_values): (&[NaiveDate], &[f64]),
    (b_dates, b_values): (&[NaiveDate], &[f64]),
) -> Option<(f64, usize)> {
    let (mut i, mut j) = (0, 0);
    let (mut factor, mut shared) = (None, 0);
    while i < a_dates.len() && j < b_dates.len() {
        match a_dates[i].cmp(&b_dates[j]) {
            std::cmp::Ordering::Less => i += 1,
            std::cmp::Ordering::Greater => j += 1,
            std::cmp::Ordering::Equal => {
                let ratio = b_values[j] / a_values[i];
                let first = *factor.get_or_insert(ratio);
                // Two firms' prices part at once, so most pairs stop at their second date.
                if (ratio / first - 1.0).abs() > 1e-4 {
                    return None;
                }
                shared += 1;
                i += 1;
                j += 1;
            }
        }
    }
    let enough = shared >= 20 && 2 * shared >= a_dates.len() && 2 * shared >= b_dates.len();
    factor.filter(|_| enough).map(|f| (f, shared))
}

/// The note on a move of `file` by a usual split ratio.
fn split_note(name: &str, file: &DataFile, window: (NaiveDate, NaiveDate)) -> Option<String> {
    let (dates, prices) = (&file.series.dates, &file.series.values);
    let i = split_move((dates, prices), window)?;
    let show = crate::error::compact;
    Some(format!(
        "{name}: its price ({}) moves from {} on {} to {} on {}, a factor of {}, as a split or \
         reverse split moves an unadjusted price: betas need prices adjusted for splits (a \
         real move of that size is rare; hurdle uses prices as given).",
        file.path,
        show(prices[i - 1]),
        dates[i - 1],
        show(prices[i]),
        dates[i],
        crate::case::sanity::significant(prices[i] / prices[i - 1])
    ))
}

/// The note on the run of unchanged prices that ends `file`.
fn flat_end_note(name: &str, file: &DataFile, window: (NaiveDate, NaiveDate)) -> Option<String> {
    let series = (&file.series.dates[..], &file.series.values[..]);
    let FlatEnd {
        from,
        to,
        rows,
        days,
    } = flat_end(series, window)?;
    Some(format!(
        "{name}: its price ({}) stays at {} from {from} to {to} ({rows} rows, {days} days), to \
         the file's end: prices carried forward after trading stopped? Their returns of zero \
         pull the beta toward zero; end the file where trading ended.",
        file.path,
        crate::error::compact(*file.series.values.last().expect("a flat run has a price"))
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::io::series::Series;

    fn file(prices: &[f64], step_days: i64) -> DataFile {
        let first = NaiveDate::from_ymd_opt(2024, 1, 1).unwrap();
        let dates: Vec<NaiveDate> = (0..prices.len())
            .map(|k| first + chrono::Duration::days(step_days * k as i64))
            .collect();
        DataFile {
            role: "peer:P".into(),
            path: "p.csv".into(),
            sha256: String::new(),
            rows: prices.len(),
            first_date: dates[0],
            last_date: *dates.last().unwrap(),
            sheet: None,
            column: "price".into(),
            series: Series {
                dates,
                values: prices.to_vec(),
            },
            places: Vec::new(),
        }
    }

    fn window() -> (NaiveDate, NaiveDate) {
        (
            NaiveDate::from_ymd_opt(2023, 12, 1).unwrap(),
            NaiveDate::from_ymd_opt(2025, 12, 31).unwrap(),
        )
    }

    // Worked by hand: 84.20 → 42.10 is a factor of 0.5 exactly (a 2-for-1 split); 84.20 → 45
    // is 0.534, 6.9% from one half, beyond its 5% tolerance.
    #[test]
    fn a_move_by_a_split_ratio_is_noted() {
        let notes = price_pattern_notes(&[("P", &file(&[80.0, 84.2, 42.1, 43.0], 7))], window());
        assert_eq!(notes.len(), 1, "{notes:?}");
        assert!(notes[0].contains("from 84.2 on 2024-01-08 to 42.1 on 2024-01-15, a factor of 0.5"));
        let notes = price_pattern_notes(&[("P", &file(&[80.0, 84.2, 45.0, 43.0], 7))], window());
        assert!(notes.is_empty(), "{notes:?}");
    }

    // Monthly steps of 30 days: four equal prices at the end span 90 days (noted); two span 30
    // (not); a file whose prices never stop moving gives no note.
    #[test]
    fn unchanged_prices_at_the_end_are_noted() {
        let notes = price_pattern_notes(
            &[("P", &file(&[10.0, 11.0, 12.0, 12.0, 12.0, 12.0], 30))],
            window(),
        );
        assert_eq!(notes.len(), 1, "{notes:?}");
        assert!(notes[0].contains("stays at 12 from 2024-03-01 to 2024-05-30 (4 rows, 90 days)"));
        let two = file(&[10.0, 11.0, 12.0, 12.0], 30);
        assert!(price_pattern_notes(&[("P", &two)], window()).is_empty());
        let moving = file(&[10.0, 11.0, 12.0, 13.0], 30);
        assert!(price_pattern_notes(&[("P", &moving)], window()).is_empty());
    }
}
