//! A listed peer set (`universe.peer_set`) set beside the whole market it is drawn from, for a
//! reviewer who tests an analyst's peers against their industry: the set's figures by the
//! industry table's own rules (so a set equal to an industry's securities has that industry's
//! figures), the industries its members carry, and where its unlevered beta lies among its home
//! industry's. Apart from `industries.rs`, whose row it reuses.

use std::collections::BTreeMap;

use serde::Serialize;

use super::industries::{industry_row, IndustryResult};
use super::securities::SecurityResult;
use crate::case::LeverageSettings;

/// The label of the peer set's own row.
pub const PEER_SET_LABEL: &str = "peer set";

/// The peer set beside its industry.
#[derive(Debug, Clone, Serialize)]
pub struct PeerSetResult {
    /// The ids listed, as written.
    pub securities: Vec<String>,
    /// The set's figures, computed as an industry's are.
    pub figures: IndustryResult,
    /// How many of the set carry each industry label.
    pub industries: BTreeMap<String, usize>,
    /// How many of the set have no industry label.
    pub without_industry: usize,
    /// The listed securities that enter none of the set's figures: not estimated, or left out
    /// by `beta.exclude_flags`.
    pub left_out: Vec<String>,
    /// The label most of the set carry (the first in byte order on a tie); `None` when none has
    /// one.
    pub home_industry: Option<String>,
    /// The other labels as many of the set carry as the home industry's, when there is a tie.
    pub tied_with: Vec<String>,
    /// The home industry's figure a case would relever.
    pub home_unlevered_beta: Option<f64>,
    /// Of the home industry's securities aggregated with the figure its industry beta is taken
    /// from (the unlevered beta, or the beta of the operations), the share below the set's own
    /// figure, ties counted half (its percentile rank); `None` without both figures.
    pub share_of_home_below: Option<f64>,
    /// How many home-industry figures that share is over.
    pub home_count: usize,
    /// How many of those figures are the set's own members' (added in 0.16.0).
    pub home_members: usize,
    /// Under the median, when every figure of the set is one of its home industry's, the least
    /// and most `share_of_home_below` can be: half of the set's m figures lie below its median
    /// and half above (ties counted half), so the share lies within m/(2n) and 1 − m/(2n)
    /// whatever the set (found by review: "one at either end" could never show); `None`
    /// otherwise (added in 0.16.0).
    pub share_of_home_below_range: Option<[f64; 2]>,
}

/// Refuses a listed id the panel does not hold, or one listed twice; the message names it.
pub fn check(peer_set: &[String], panel_ids: &[String]) -> Result<(), String> {
    let mut seen = std::collections::HashSet::new();
    for id in peer_set {
        if !seen.insert(id.as_str()) {
            return Err(format!("universe.peer_set lists \"{id}\" twice"));
        }
        if panel_ids.binary_search(id).is_err() {
            let twin = (panel_ids.iter()).find(|p| p.trim().eq_ignore_ascii_case(id.trim()));
            let hint = twin.map_or(String::new(), |t| {
                format!(" (the panel holds \"{t}\": ids are matched as written)")
            });
            return Err(format!(
                "universe.peer_set lists \"{id}\", which the panel does not hold{hint}"
            ));
        }
    }
    Ok(())
}

/// The peer set's result, or `None` when no set is listed.
pub fn peer_set(
    listed: &[String],
    securities: &[SecurityResult],
    industries: &[IndustryResult],
    (leverage, adjusted): (&LeverageSettings, bool),
) -> Option<PeerSetResult> {
    if listed.is_empty() {
        return None;
    }
    let members: Vec<&SecurityResult> = (securities.iter())
        .filter(|s| listed.contains(&s.security))
        .collect();
    let figures = industry_row(PEER_SET_LABEL, &members, leverage, adjusted);
    let mut by_industry: BTreeMap<String, usize> = BTreeMap::new();
    for label in members.iter().filter_map(|s| s.industry.as_ref()) {
        *by_industry.entry(label.clone()).or_default() += 1;
    }
    let most = by_industry.values().copied().max().unwrap_or(0);
    let mut tops = (by_industry.iter())
        .filter(|(_, &n)| n == most)
        .map(|(l, _)| l.clone());
    let home = tops.next();
    let tied_with: Vec<String> = tops.collect();
    let home_row = (industries.iter()).find(|i| Some(&i.industry) == home.as_ref());
    let figure = |s: &SecurityResult| match leverage.operations_beta {
        true => s.operations_beta,
        false => s.unlevered_beta,
    };
    let in_home =
        |s: &&SecurityResult| s.aggregated() && s.industry.is_some() && s.industry == home;
    let home_figures: Vec<f64> = (securities.iter())
        .filter(in_home)
        .filter_map(figure)
        .collect();
    let home_members = (members.iter())
        .copied()
        .filter(in_home)
        .filter(|s| figure(s).is_some())
        .count();
    // The bound holds when every figure of the set is one of the home industry's.
    let set_figures = (members.iter())
        .filter(|s| s.aggregated() && figure(s).is_some())
        .count();
    let n = home_figures.len() as f64;
    let range = (leverage.aggregation == crate::stats::Aggregation::Median
        && n > 0.0
        && set_figures == home_members)
        .then(|| home_members as f64 / (2.0 * n))
        .map(|least| [least, 1.0 - least]);
    let share = figures
        .unlevered_beta
        .filter(|_| !home_figures.is_empty())
        .map(|x| {
            let below = home_figures.iter().filter(|&&v| v < x).count() as f64;
            let equal = home_figures.iter().filter(|&&v| v == x).count() as f64;
            (below + equal / 2.0) / home_figures.len() as f64
        });
    Some(PeerSetResult {
        securities: listed.to_vec(),
        figures,
        without_industry: members.iter().filter(|s| s.industry.is_none()).count(),
        left_out: (members.iter())
            .filter(|s| !s.aggregated())
            .map(|s| s.security.clone())
            .collect(),
        industries: by_industry,
        tied_with,
        home_unlevered_beta: home_row.and_then(|i| i.unlevered_beta),
        home_industry: home,
        share_of_home_below_range: range.filter(|_| share.is_some()),
        share_of_home_below: share,
        home_count: home_figures.len(),
        home_members,
    })
}
