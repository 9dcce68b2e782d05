//! The notes on patterns in the securities' prices that pass every rule yet bend a beta, as a
//! case notes them for a peer (`case::sanity::prices`): a move between two rows in the window
//! by a usual split ratio (an unadjusted split inside the factor-of-3 bound), and prices
//! unchanged for more than a month to their end in the window (carried forward after trading
//! stopped); and two securities with the same returns (one's prices another's, or their
//! multiple, on every date both have: a second listing or share class, one firm counted twice).

use super::{first_ids, ids_where};
use crate::beta::diagnostics::PeerFlag;
use crate::universe::securities::SecurityResult;
use crate::universe::securities_count;

/// Moves of more than this share between two rows make a security's fingerprint: a copy at
/// another scale, rounded to four decimals, moves by the same shares on the same dates.
const BIG_MOVE: f64 = 0.03;
/// How many such moves a fingerprint holds, and the fewest that make one (fewer would group
/// securities that barely move, which the check of whole series would then tell apart one
/// pair at a time).
const FINGERPRINT_MOVES: (usize, usize) = (16, 4);

/// A group of securities with the same returns in words: its first id and the next one, with
/// the factor between their prices when it is not 1. Each id is quoted on its own when it needs
/// it, not the composed group (found by review: a group was quoted whole, its ids' quotes
/// escaped).
fn group_text(ids: &[String], cluster: &[(usize, f64)]) -> String {
    let (first, others) = (cluster[0].0, &cluster[1..]);
    let id = |k: usize| super::shown_id(&ids[k]);
    let other = |(k, factor): &(usize, f64)| match (factor - 1.0).abs() <= 1e-4 {
        true => id(*k),
        false => format!(
            "{} (× {})",
            id(*k),
            crate::case::sanity::significant(*factor)
        ),
    };
    match others.len() {
        1 => format!("{} and {}", id(first), other(&others[0])),
        n => format!(
            "{} and {n} others ({} and more)",
            id(first),
            other(&others[0])
        ),
    }
}

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
    // Within a group, each security joins the first cluster whose first member its prices
    // follow (the relation is transitive), so a group of n copies costs n comparisons, not n².
    let mut clusters: Vec<Vec<(usize, f64)>> = Vec::new();
    for members in groups.values().filter(|m| m.len() > 1) {
        let start = clusters.len();
        for &b in members {
            let y = panel.series(b);
            let joined = (clusters[start..].iter_mut()).find_map(|cluster| {
                let x = panel.series(cluster[0].0);
                let (factor, _) = crate::case::sanity::prices::proportional(
                    (x.dates, x.values),
                    (y.dates, y.values),
                )?;
                Some((cluster, factor))
            });
            match joined {
                Some((cluster, factor)) => cluster.push((b, factor)),
                None => clusters.push(vec![(b, 1.0)]),
            }
        }
    }
    clusters.retain(|c| c.len() > 1);
    let ids = panel.securities();
    let mut shown: Vec<String> = (clusters.iter())
        .map(|cluster| group_text(ids, cluster))
        .collect();
    shown.sort();
    (!clusters.is_empty()).then(|| {
        format!(
            "Check: {} of securities with the same returns, one's prices the other's (or their \
             multiple) on every date both have: a second listing, another share class or a \
             copied file, which counts one firm twice wherever both enter the same industry's \
             figures: {}",
            match clusters.len() {
                1 => "1 group".to_string(),
                n => format!("{n} groups"),
            },
            super::first_of(&shown)
        )
    })
}

/// The median of the securities' calendar days per price in the window: the panel's own
/// cadence (about 1.45 for daily prices, 30.4 for month-ends).
pub(super) fn panel_gap(securities: &[SecurityResult]) -> Option<f64> {
    let mut gaps: Vec<f64> = securities
        .iter()
        .filter_map(|s| s.price_patterns.gap)
        .collect();
    let middle = gaps.len() / 2;
    (!gaps.is_empty()).then(|| *gaps.select_nth_unstable_by(middle, f64::total_cmp).1)
}

/// The notes, each naming the securities it finds.
pub(super) fn pattern_notes(securities: &[SecurityResult]) -> Vec<String> {
    let split = ids_where(securities, |s| s.price_patterns.split.is_some());
    // Four calendar days or more per price in the window, and 2.5 times the panel's own
    // cadence: weekly prices in a panel of daily ones, or a security that trades about once a
    // week (found by review: the only words were "listed late, delisted early, or thinly
    // traded"); a panel of month-ends, all alike, gives none.
    let typical = panel_gap(securities).unwrap_or(f64::INFINITY);
    let sparse = ids_where(securities, |s| {
        (s.price_patterns.gap).is_some_and(|g| g >= 4.0 && g >= 2.5 * typical)
    });
    let flat = ids_where(securities, |s| s.price_patterns.flat_end.is_some());
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
            "{} with one price every four calendar days or more in the window, on average, \
             while the panel's median security has one every {} days: weekly prices among \
             daily ones, or a security that seldom trades? A period's price may then be days \
             older than the index's, which misaligns its returns (beta.max_stale_days drops \
             such periods): {}",
            securities_count(sparse.len()),
            crate::error::rounded(typical, 1),
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

/// The securities aggregated although flagged `lagged_response`, with how many a panel whose
/// prices do not react late would flag by chance: each security is tested on its own, and a
/// positive slope with p below the threshold comes up in about half the threshold's share of
/// them (found by review: 133 of 4,990 invented securities without any lag, 2.7%, were named
/// as trading late).
pub(super) fn late_response_note(securities: &[SecurityResult], threshold: f64) -> Option<String> {
    let late = ids_where(securities, |s| {
        s.aggregated() && s.flags.contains(&PeerFlag::LaggedResponse)
    });
    // Flagged and tested among the same securities, the aggregated ones (found by review: an
    // exclusion by another flag pulled the share below the chance rate).
    let tested_p: Vec<f64> = (securities.iter())
        .filter(|s| s.aggregated())
        .filter_map(|s| s.lag_response.as_ref().map(|l| l.p_value))
        .collect();
    let tested = tested_p.len();
    if late.is_empty() || tested == 0 {
        return None;
    }
    let share = |n: usize| crate::error::rounded(100.0 * n as f64 / tested as f64, 1);
    // Half the threshold in percent, to six decimals without trailing zeros (2.5, 50, 0.0005).
    let chance = crate::error::compact((50.0 * threshold * 1e6).round() / 1e6);
    // How often chance alone flags as many, the securities taken as independent (found by
    // review: 3 of 47 at 2.5% read as a finding; chance gives 3 or more 11% of the time).
    let by_chance =
        crate::stats::binomial_at_least(late.len() as u64, tested as u64, threshold / 2.0);
    // The smallest p-value after Holm's adjustment for the securities tested together (Holm
    // 1979), which a flag resting on its own p-value alone does not have (found by review).
    let holm = crate::stats::holm_adjusted(&tested_p)
        .into_iter()
        .fold(f64::INFINITY, f64::min);
    Some(format!(
        "{} estimated and not excluded {} lagged_response, {}% of the {tested} such securities \
         tested: returns that move with the index's return of the period before, with a \
         p-value below beta.flag_lag_p_value = {}. Securities whose prices do not react late \
         are flagged so about {}% of the time (half the threshold: only a positive slope \
         counts), and chance alone flags {} or more of {tested} with probability {} (binomial, \
         the securities taken as independent; the smallest p-value after Holm's adjustment for \
         the {tested} tested is {}), so only a share well above that points to late trading in \
         the panel, and any one security's flag may be chance: {}; the lag_slope \
         columns of securities.csv give each one's slope and p-value, and beta.method = \
         \"dimson\" or \"scholes-williams\" takes the previous period's index return in.",
        securities_count(late.len()),
        if late.len() == 1 { "carries" } else { "carry" },
        share(late.len()),
        crate::error::compact(threshold),
        chance,
        late.len(),
        crate::error::rounded(by_chance, 3),
        crate::error::rounded(holm, 3),
        first_ids(&late)
    ))
}
