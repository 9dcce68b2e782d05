//! Securities handed out while a long panel is still being read, so their estimation overlaps
//! the reading of later rows.
//!
//! In a file grouped by security with dates rising (the common export order), a security's
//! rows are complete as soon as the next security's first row arrives. While the rows keep that
//! order, each finished run is handed to the caller's [`SecurityHook`] once its block has been
//! moved into the columns. Whether the hand-outs hold is only known at the end: they do when
//! no security came back after another ([`super::Panel::whole_runs`]); otherwise the caller
//! discards them and works from the grouped panel, as without a hook.
//!
//! The same runs count each security's rows when the panel is grouped ([`count_rows`]).

use std::ops::Range;
use std::sync::atomic::AtomicUsize;

use crate::io::series::SeriesView;

/// What takes a batch of complete securities.
pub type TakeSecurities<'a> = &'a (dyn Fn(&[(&str, SeriesView<'_>)]) + Sync);

/// Where securities go while the file is read.
#[derive(Clone, Copy)]
pub struct SecurityHook<'a> {
    /// Called with the securities whose rows a block completed: each id with all its rows,
    /// ascending in date. It runs on the thread that moves the cells, so it should hand heavy
    /// work on (one batch per block keeps such hand-offs few).
    pub take: TakeSecurities<'a>,
    /// How many of them the caller has finished with (estimated, in a universe): the reading's
    /// progress bar shows it beside the bytes or rows read, since the number of securities in
    /// a long file is only known once it has been read.
    pub finished: &'a AtomicUsize,
}

/// The runs of one security's rows that ended while the file was grouped and rising, not yet
/// handed out.
#[derive(Debug, Default)]
pub(crate) struct Runs {
    /// Off unless a hook waits for them, and off for good after any row took the checked path
    /// (whose pushes may repeat rows already seen).
    pub watching: bool,
    start: usize,
    finished: Vec<(u32, Range<usize>)>,
}

impl Runs {
    /// A new security's first row is row `row`; `previous` (the last security) ended there.
    /// `in_order` says whether the file is still grouped with rising dates. Once per security,
    /// so kept out of the per-row path.
    #[inline(never)]
    pub fn changed(&mut self, previous: u32, row: usize, in_order: bool) {
        if self.watching && in_order {
            self.finished.push((previous, self.start..row));
        }
        self.start = row;
    }

    /// Stops watching and forgets runs not yet handed out.
    pub fn stop(&mut self) {
        self.watching = false;
        self.finished.clear();
    }

    /// Hands every finished run to `hook` in one batch (names by dictionary index).
    pub fn hand_out(
        &mut self,
        names: &[String],
        dates: &[chrono::NaiveDate],
        prices: &[f64],
        hook: SecurityHook<'_>,
    ) {
        if self.finished.is_empty() {
            return;
        }
        let batch: Vec<(&str, SeriesView<'_>)> = self
            .finished
            .iter()
            .map(|(id, rows)| {
                let series = SeriesView {
                    dates: &dates[rows.clone()],
                    values: &prices[rows.clone()],
                };
                (names[*id as usize].as_str(), series)
            })
            .collect();
        (hook.take)(&batch);
        self.finished.clear();
    }
}

/// Each id's count of rows, by runs of one id (a counter bumped row by row would wait on its
/// own last store for each of millions of rows). When `rising` (the rows came grouped by
/// security, so the ids only rise, one run per security) each run's end is found by a galloping
/// search instead of a pass over every row.
pub(crate) fn count_rows(ids: &[u32], names: usize, rising: bool) -> Vec<usize> {
    let mut counts = vec![0_usize; names];
    let mut rest = ids;
    while let Some(&id) = rest.first() {
        let run = match rising {
            true => rising_run(rest),
            false => rest
                .iter()
                .position(|&other| other != id)
                .unwrap_or(rest.len()),
        };
        counts[id as usize] += run;
        rest = &rest[run..];
    }
    counts
}

/// The length of the run of `ids[0]` at the start of `ids`, whose values never fall: probes
/// 1, 2, 4, … rows ahead, then bisects the last step, so it reads O(log run) rows near the run
/// (a bisection over the whole rest would touch rows megabytes apart).
fn rising_run(ids: &[u32]) -> usize {
    let id = ids[0];
    let (mut inside, mut step) = (0, 1);
    while inside + step < ids.len() && ids[inside + step] == id {
        inside += step;
        step *= 2;
    }
    let end = (inside + step).min(ids.len());
    inside + 1 + ids[inside + 1..end].partition_point(|&other| other == id)
}

#[cfg(test)]
mod tests {
    use std::sync::Mutex;

    // Every run length of a never-falling sequence, against the length it was built with: runs
    // of 1 to 69 (across each power of two the search steps over), at the end of the slice and
    // followed by other ids.
    #[test]
    fn rising_runs_are_measured_whole() {
        for length in 1..70 {
            for after in [0, 1, 5] {
                let mut ids = vec![3_u32; length];
                ids.extend(std::iter::repeat_n(4, after));
                assert_eq!(rising_run(&ids), length, "run {length}, then {after}");
            }
        }
    }

    use chrono::NaiveDate;

    use super::super::Rows;
    use super::*;

    fn rows_of(order: &[(&str, u32)]) -> (Vec<(String, Vec<f64>)>, bool) {
        let handed = Mutex::new(Vec::new());
        let hook = |batch: &[(&str, SeriesView<'_>)]| {
            let mut handed = handed.lock().unwrap();
            for (security, series) in batch {
                handed.push((security.to_string(), series.values.to_vec()));
            }
        };
        let finished = std::sync::atomic::AtomicUsize::new(0);
        let hook = SecurityHook {
            take: &hook,
            finished: &finished,
        };
        let mut rows = Rows::default();
        rows.runs.watching = true;
        for (k, &(security, day)) in order.iter().enumerate() {
            let id = rows.dictionary.id(security);
            let date = NaiveDate::from_ymd_opt(2026, 1, day).unwrap();
            rows.push(id, date, k as f64 + 1.0);
            // Hand-outs after every row, as after every block.
            rows.hand_out(Some(hook));
        }
        let grouped = rows.group().unwrap();
        (handed.into_inner().unwrap(), grouped.whole_runs)
    }

    // A run is handed out only once the next security starts, with every row of it; the last
    // security is never handed out (the file might hold more of it).
    #[test]
    fn grouped_rising_rows_hand_out_each_finished_security_whole() {
        let (handed, whole) = rows_of(&[("B", 1), ("B", 2), ("C", 1), ("A", 1), ("A", 5)]);
        assert!(whole);
        assert_eq!(
            handed,
            [
                ("B".to_string(), vec![1.0, 2.0]),
                ("C".to_string(), vec![3.0])
            ]
        );
    }

    // A security coming back after another makes every hand-out void; a falling date stops
    // the hand-outs from there on, while the earlier ones hold.
    #[test]
    fn a_security_that_comes_back_voids_the_hand_outs() {
        let (_, whole) = rows_of(&[("A", 1), ("B", 1), ("A", 2)]);
        assert!(!whole);
        let (handed, whole) = rows_of(&[("A", 1), ("B", 2), ("B", 1), ("C", 1), ("D", 1)]);
        assert!(whole);
        assert_eq!(handed, [("A".to_string(), vec![1.0])]);
    }
}
