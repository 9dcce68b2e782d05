//! The notes on patterns in the securities' prices that pass every rule yet bend a beta, as a
//! case notes them for a peer (`case::sanity::prices`): a move between two rows in the window
//! by a usual split ratio (an unadjusted split inside the factor-of-3 bound), and prices
//! unchanged for more than a month to their end in the window (carried forward after trading
//! stopped); and two securities with the same returns (one's prices another's, or their
//! multiple, on every date both have: a second listing or share class, one firm counted twice).

use super::{first_ids, ids_where};
use crate::universe::securities::SecurityResult;
use crate::universe::securities_count;

/// Moves of more than this share between two rows make a security's fingerprint: a copy at
/// another scale, rounded to four decimals, moves by the same shares on the same dates.
const BIG_MOVE: f64 = 0.03;
/// How many such moves a fingerprint holds, and the fewest that make one (fewer would group
/// securities that barely move, which the check of whole series would then tell apart one
/// pair at a time).
const FINGERPRINT_MOVES: (usize, usize) = (16, 4);

/// Pairs of securities in `panel` with the same returns: one's prices another's, or their
/// multiple by one factor, on every date both have (`case::sanity::prices::proportional`, the
/// case's rule for two peers). Candidates are found by the dates and directions of their first
/// big moves, so the whole series are compared only within a group of equal fingerprints.
pub(super) fn same_returns_note(panel: &crate::panel::Panel) -> Option<String> {
    use rayon::prelude::*;
    use std::collections::HashMap;
    // Side by side: a market of thousands of securities scans each until its moves are found.
    let fingerprints: Vec<Vec<(chrono::NaiveDate, bool)>> = (0..panel.len())
        .into_par_iter()
        .map(|i| {
            let s = panel.series(i);
            (1..s.values.len())
                .map(|k| (s.dates[k], s.values[k] / s.values[k - 1] - 1.0))
                .filter(|(_, r)| r.abs() > BIG_MOVE)
                .map(|(d, r)| (d, r > 0.0))
                .take(FINGERPRINT_MOVES.0)
                .collect()
        })
        .collect();
    let mut groups: HashMap<&[(chrono::NaiveDate, bool)], Vec<usize>> = HashMap::new();
    for (i, moves) in fingerprints.iter().enumerate() {
        if moves.len() >= FINGERPRINT_MOVES.1 {
            groups.entry(moves).or_default().push(i);
        }
    }
    let ids = panel.securities();
    let mut pairs: Vec<String> = Vec::new();
    for members in groups.values().filter(|m| m.len() > 1) {
        for (k, &a) in members.iter().enumerate() {
            for &b in &members[k + 1..] {
                let (x, y) = (panel.series(a), panel.series(b));
                let Some((factor, _)) = crate::case::sanity::prices::proportional(
                    (x.dates, x.values),
                    (y.dates, y.values),
                ) else {
                    continue;
                };
                pairs.push(match (factor - 1.0).abs() <= 1e-4 {
                    true => format!("{} and {}", ids[a], ids[b]),
                    false => format!(
                        "{} and {} (× {})",
                        ids[a],
                        ids[b],
                        crate::case::sanity::significant(factor)
                    ),
                });
            }
        }
    }
    pairs.sort();
    let shown: Vec<&str> = pairs.iter().map(String::as_str).collect();
    (!pairs.is_empty()).then(|| {
        format!(
            "Check: {} of securities with the same returns, one's prices the other's (or their \
             multiple) on every date both have: a second listing, another share class or a \
             copied file, one firm counted twice in its industry's figures: {}",
            match pairs.len() {
                1 => "1 pair".to_string(),
                n => format!("{n} pairs"),
            },
            first_ids(&shown)
        )
    })
}

/// The two notes, each naming the securities it finds.
pub(super) fn pattern_notes(securities: &[SecurityResult]) -> Vec<String> {
    let split = ids_where(securities, |s| s.price_patterns.0.is_some());
    // One price every four calendar days or more on average over its span: weekly prices in a
    // panel of daily ones, or a security that trades about once a week (found by review: the
    // only words were "listed late, delisted early, or thinly traded").
    let sparse = ids_where(securities, |s| {
        s.price_dates.is_some_and(|(first, last)| {
            s.prices >= 3 && (last - first).num_days() as f64 >= 4.0 * (s.prices - 1) as f64
        })
    });
    let flat = ids_where(securities, |s| s.price_patterns.1.is_some());
    let mut notes = Vec::new();
    if !split.is_empty() {
        notes.push(format!(
            "{} with a price moving between two rows in the window by a usual split's ratio \
             (1/2, 2, 1/3, 3, 1/4 or 4 within 5%, 2/3 or 3/2 within 2%), as a split moves a \
             price not adjusted for it: betas need prices adjusted for splits (a real move of \
             that size is rare): {}",
            securities_count(split.len()),
            first_ids(&split)
        ));
    }
    if !sparse.is_empty() {
        notes.push(format!(
            "{} with one price every four calendar days or more on average: weekly prices in a \
             panel of daily ones, or a security that seldom trades? A period's price may then be \
             days older than the index's, which misaligns its returns (beta.max_stale_days drops \
             such periods): {}",
            securities_count(sparse.len()),
            first_ids(&sparse)
        ));
    }
    if !flat.is_empty() {
        notes.push(format!(
            "{} with prices unchanged for more than a month, three rows at least, up to their \
             last in the window: carried forward after trading stopped? Their returns of zero \
             pull a beta toward zero: {}",
            securities_count(flat.len()),
            first_ids(&flat)
        ));
    }
    notes
}
