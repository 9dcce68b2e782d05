//! The rows of a long or wide panel as they are read, and their grouping by security.
//!
//! [`Rows`] takes one (id, date, price) entry per price in file order, with the ids given by a
//! [`Dictionary`] in order of first appearance, and watches the order as rows arrive so that
//! [`Rows::group`] can skip whole passes when the file came grouped by security with rising
//! dates. Grouping is a counting sort on the ids (O(rows)), then a sort by date within a
//! security only where the file was not already in order; a repeated date is a [`Duplicate`].
//! Kept apart from `mod.rs` (the panel and its reading) because the readers for CSV and Parquet
//! and the hand-outs of finished securities all push here.

use std::collections::HashMap;

use chrono::NaiveDate;

use super::{cells, runs, SecurityHook};

/// Security ids in order of first appearance, with a cheap guess before any hashing: rows
/// grouped by security repeat the last id, and rows sorted by date cycle through the ids in the
/// same order, so the next id is tried too. Only a miss on both costs a hash lookup.
#[derive(Debug, Default)]
pub(crate) struct Dictionary {
    names: Vec<String>,
    index: HashMap<String, u32>,
    last: usize,
}

impl Dictionary {
    /// The index of `name`, adding it when new.
    pub fn id(&mut self, name: &str) -> u32 {
        let n = self.names.len();
        if n > 0 {
            let next = if self.last + 1 == n { 0 } else { self.last + 1 };
            for guess in [self.last, next] {
                if self.names[guess] == name {
                    self.last = guess;
                    return guess as u32;
                }
            }
        }
        let id = match self.index.get(name) {
            Some(&id) => id,
            None => {
                let id = n as u32;
                self.names.push(name.to_string());
                self.index.insert(name.to_string(), id);
                id
            }
        };
        self.last = id as usize;
        id
    }
}

/// Rows as read, before grouping: one entry per price, in file order.
#[derive(Debug, Default)]
pub(crate) struct Rows {
    pub dictionary: Dictionary,
    pub ids: Vec<u32>,
    pub dates: Vec<NaiveDate>,
    pub prices: Vec<f64>,
    pub date_cache: cells::DateCache,
    order: Order,
    pub runs: runs::Runs,
}

/// What the rows' order shows so far, watched as they arrive so that grouping can skip whole
/// passes: ids that never go back (each security's rows together, in order of first appearance)
/// and dates rising within each security.
#[derive(Debug)]
struct Order {
    last: Option<(u32, NaiveDate)>,
    grouped: bool,
    ascending: bool,
}

impl Default for Order {
    fn default() -> Self {
        Order {
            last: None,
            grouped: true,
            ascending: true,
        }
    }
}

/// A (security, date) pair found twice.
#[derive(Debug, Clone)]
pub(crate) struct Duplicate {
    pub security: String,
    pub date: NaiveDate,
    /// The two prices, in file order.
    pub prices: [f64; 2],
}

impl Duplicate {
    /// The two prices in words, for a message: "prices 12.5 and 12.75", or "the same price
    /// 12.5 twice: delete one of the rows".
    pub(crate) fn prices_text(&self) -> String {
        match self.prices {
            [a, b] if a == b => format!("the same price {a} twice: delete one of the rows"),
            [a, b] => format!("prices {a} and {b}"),
        }
    }
}

/// The rows grouped by security: what [`Panel`] holds.
#[derive(Debug)]
pub(super) struct Grouped {
    pub securities: Vec<String>,
    pub offsets: Vec<usize>,
    pub dates: Vec<NaiveDate>,
    pub prices: Vec<f64>,
    pub whole_runs: bool,
}

impl Rows {
    /// Makes room for `rows` more rows.
    pub fn reserve(&mut self, rows: usize) {
        self.ids.reserve(rows);
        self.dates.reserve(rows);
        self.prices.reserve(rows);
    }

    /// Hands the runs finished so far to `hook`, if any (after a block is wholly pushed).
    pub fn hand_out(&mut self, hook: Option<SecurityHook<'_>>) {
        if let Some(hook) = hook {
            let names = &self.dictionary.names;
            self.runs.hand_out(names, &self.dates, &self.prices, hook);
        }
    }

    pub fn push(&mut self, id: u32, date: NaiveDate, price: f64) {
        self.push_id_and_date(id, date);
        self.prices.push(price);
    }

    /// A row's id and date; its price is pushed by the caller.
    #[inline]
    pub fn push_id_and_date(&mut self, id: u32, date: NaiveDate) {
        let order = &mut self.order;
        if let Some((last_id, last_date)) = order.last {
            if id == last_id {
                order.ascending &= date > last_date;
            } else {
                order.grouped &= id > last_id;
                let in_order = order.grouped && order.ascending;
                self.runs.changed(last_id, self.ids.len(), in_order);
            }
        }
        order.last = Some((id, date));
        self.ids.push(id);
        self.dates.push(date);
    }

    /// Groups the rows by security id in byte order with a counting sort (O(rows)), then sorts
    /// each security's rows by date where the file did not already. A date repeated within a
    /// security is returned as the first [`Duplicate`].
    pub(super) fn group(self) -> std::result::Result<Grouped, Duplicate> {
        let Rows {
            dictionary,
            ids,
            dates,
            prices,
            order: seen,
            ..
        } = self;
        let whole_runs = seen.grouped;
        let names = dictionary.names;
        let counts = runs::count_rows(&ids, names.len(), whole_runs);
        // A wide file's column without a single price holds no security.
        let mut order: Vec<u32> = (0..names.len() as u32)
            .filter(|&id| counts[id as usize] > 0)
            .collect();
        order.sort_unstable_by(|&a, &b| names[a as usize].cmp(&names[b as usize]));
        let mut rank = vec![u32::MAX; names.len()];
        let mut offsets = vec![0_usize; order.len() + 1];
        for (r, &id) in order.iter().enumerate() {
            rank[id as usize] = r as u32;
            offsets[r + 1] = offsets[r] + counts[id as usize];
        }
        // Rows already grouped in id order (a file sorted by security) are kept as they are;
        // when the ids never went back, it is enough that first appearance is byte order.
        let in_order = if seen.grouped {
            order.windows(2).all(|w| w[0] < w[1])
        } else {
            ids.windows(2)
                .all(|w| rank[w[0] as usize] <= rank[w[1] as usize])
        };
        let (mut dates, mut prices) = if in_order {
            (dates, prices)
        } else {
            scatter(&ids, &rank, &offsets, &dates, &prices)
        };
        drop(ids);
        // Grouped rows whose dates always rose need no check per security.
        if !(seen.grouped && seen.ascending) {
            let mut scratch = Vec::new();
            for (r, &id) in order.iter().enumerate() {
                let rows = offsets[r]..offsets[r + 1];
                let (d, p) = (&mut dates[rows.clone()], &mut prices[rows]);
                if !d.windows(2).all(|w| w[0] < w[1]) {
                    sort_by_date(d, p, &mut scratch);
                    if let Some(k) = d.windows(2).position(|w| w[0] == w[1]) {
                        return Err(Duplicate {
                            security: names[id as usize].clone(),
                            date: d[k],
                            prices: [p[k], p[k + 1]],
                        });
                    }
                }
            }
        }
        let mut names = names;
        let securities = order
            .iter()
            .map(|&id| std::mem::take(&mut names[id as usize]))
            .collect();
        Ok(Grouped {
            securities,
            offsets,
            dates,
            prices,
            whole_runs,
        })
    }
}

/// Moves each row to its security's block (rank order), keeping file order within a block.
fn scatter(
    ids: &[u32],
    rank: &[u32],
    offsets: &[usize],
    dates: &[NaiveDate],
    prices: &[f64],
) -> (Vec<NaiveDate>, Vec<f64>) {
    let mut cursor = offsets[..offsets.len() - 1].to_vec();
    let mut grouped_dates = vec![NaiveDate::MIN; ids.len()];
    let mut grouped_prices = vec![0.0; ids.len()];
    for (k, &id) in ids.iter().enumerate() {
        let slot = &mut cursor[rank[id as usize] as usize];
        grouped_dates[*slot] = dates[k];
        grouped_prices[*slot] = prices[k];
        *slot += 1;
    }
    (grouped_dates, grouped_prices)
}

/// Sorts one security's rows by date (stable, so a duplicate keeps file order).
fn sort_by_date(dates: &mut [NaiveDate], prices: &mut [f64], scratch: &mut Vec<(NaiveDate, f64)>) {
    scratch.clear();
    scratch.extend(dates.iter().copied().zip(prices.iter().copied()));
    scratch.sort_by_key(|&(d, _)| d);
    for (k, &(d, p)) in scratch.iter().enumerate() {
        dates[k] = d;
        prices[k] = p;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn date(text: &str) -> NaiveDate {
        NaiveDate::parse_from_str(text, "%Y-%m-%d").unwrap()
    }

    // Rows in any order: grouping must give each security its rows sorted by date, ids in byte
    // order, whichever order the rows came in (checked against a sort of the same rows).
    #[test]
    fn grouping_sorts_by_security_then_date_from_any_order() {
        let rows_in = [
            ("B", "2026-01-02", 2.0),
            ("A", "2026-01-05", 5.0),
            ("B", "2026-01-01", 1.0),
            ("A", "2026-01-02", 4.0),
            ("C", "2026-01-01", 7.0),
        ];
        let mut rows = Rows::default();
        for (s, d, p) in rows_in {
            let id = rows.dictionary.id(s);
            rows.push(id, date(d), p);
        }
        let grouped = rows.group().unwrap();
        assert_eq!(grouped.securities, ["A", "B", "C"]);
        assert_eq!(grouped.offsets, [0, 2, 4, 5]);
        assert_eq!(grouped.prices, [4.0, 5.0, 1.0, 2.0, 7.0]);
        let mut expected: Vec<_> = rows_in.iter().map(|&(s, d, _)| (s, date(d))).collect();
        expected.sort();
        let got: Vec<_> = (0..3)
            .flat_map(|i| {
                let s = grouped.securities[i].clone();
                grouped.dates[grouped.offsets[i]..grouped.offsets[i + 1]]
                    .iter()
                    .map(move |&d| (s.clone(), d))
            })
            .collect();
        let expected: Vec<_> = expected
            .into_iter()
            .map(|(s, d)| (s.to_string(), d))
            .collect();
        assert_eq!(got, expected);
    }

    #[test]
    fn a_repeated_date_within_a_security_is_a_duplicate() {
        let mut rows = Rows::default();
        for (s, d) in [
            ("A", "2026-01-02"),
            ("B", "2026-01-02"),
            ("A", "2026-01-02"),
        ] {
            let id = rows.dictionary.id(s);
            rows.push(id, date(d), 1.0);
        }
        let duplicate = rows.group().unwrap_err();
        assert_eq!(duplicate.security, "A");
        assert_eq!(duplicate.date, date("2026-01-02"));
    }

    // Rows already grouped by security skip the scans; the outcome must be the same as for any
    // order: ids out of byte order are still sorted, and a repeated date is still found.
    #[test]
    fn grouped_rows_take_the_short_path_to_the_same_result() {
        let mut rows = Rows::default();
        for (s, d) in [
            ("B", "2026-01-01"),
            ("B", "2026-01-02"),
            ("A", "2026-01-01"),
        ] {
            let id = rows.dictionary.id(s);
            rows.push(id, date(d), 1.0);
        }
        assert!(rows.order.grouped && rows.order.ascending);
        let grouped = rows.group().unwrap();
        assert_eq!(grouped.securities, ["A", "B"]);
        assert_eq!(grouped.offsets, [0, 1, 3]);
        let mut rows = Rows::default();
        for (s, d) in [
            ("A", "2026-01-01"),
            ("A", "2026-01-01"),
            ("B", "2026-01-01"),
        ] {
            let id = rows.dictionary.id(s);
            rows.push(id, date(d), 1.0);
        }
        assert!(rows.order.grouped && !rows.order.ascending);
        assert_eq!(rows.group().unwrap_err().security, "A");
    }

    // The dictionary's guesses must never change which id a name gets.
    #[test]
    fn dictionary_ids_follow_first_appearance() {
        let mut dictionary = Dictionary::default();
        let names = ["X", "Y", "Z", "X", "Y", "Z", "Z", "Y", "W", "X"];
        let ids: Vec<u32> = names.iter().map(|n| dictionary.id(n)).collect();
        assert_eq!(ids, [0, 1, 2, 0, 1, 2, 2, 1, 3, 0]);
        assert_eq!(dictionary.names.len(), 4);
    }
}
