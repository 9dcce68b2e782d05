//! Which keys each version of hurdle began to write in its receipts, and the one reading of a
//! version: a receipt of an earlier version lacks those keys without having lost anything, and
//! one that holds a key its version never wrote was relabelled. Kept apart from
//! [`super::compare`], which compares the figures.

use serde_json::Value;

/// The keys each version began to write, as paths with list positions left out
/// (`peers[].zero_return_share`): a receipt of an earlier version lacks them without having
/// lost anything. Only keys listed here can be excused; any other absent key is a mismatch.
pub(super) const ADDED_IN: [(&str, &[&str]); 11] = [
    (
        "0.3.0",
        &[
            "peers[].zero_return_share",
            "settings.beta.flag_zero_return_share",
            "reconciliation.from.build_up.preferred_weight",
            "reconciliation.from.build_up.preferred_cost",
            "reconciliation.from.build_up.lease_weight",
            "reconciliation.from.build_up.lease_cost_pre_tax",
            "industries[].excluded.zero_returns",
        ],
    ),
    (
        "0.4.0",
        &[
            "industries[].not_estimated_total",
            "industries[].flagged",
            "industries[].flagged_total",
            "counts.estimated_without_industry",
            "counts.flagged",
            "counts.flagged_total",
            "counts.not_estimated_total",
            "reconciliation.waterfall[].change",
            "cautions",
            "uncertainty.point_outside_interval",
            "securities",
        ],
    ),
    (
        "0.6.0",
        &[
            "uncertainty.put_back",
            "reconciliation.to.currency",
            "cautions.flagged_in_aggregate",
        ],
    ),
    (
        "0.8.0",
        &[
            "counts.excluded_by_flag",
            "industries[].aggregate_debt_to_equity",
            "industries[].levered.median_interval",
            "industries[].shrunk.median_interval",
            "industries[].unlevered.median_interval",
            "industries[].operations.median_interval",
            "industries[].unlevered.value_weighted_mean",
            "industries[].operations.value_weighted_mean",
            "peer_set.figures.aggregate_debt_to_equity",
            "peer_set.figures.levered.median_interval",
            "peer_set.figures.shrunk.median_interval",
            "peer_set.figures.unlevered.median_interval",
            "peer_set.figures.operations.median_interval",
            "peer_set.figures.unlevered.value_weighted_mean",
            "peer_set.figures.operations.value_weighted_mean",
        ],
    ),
    (
        "0.9.0",
        &[
            "industries[].median_tax_rate",
            "industries[].levered.market_cap_weighted_count",
            "industries[].shrunk.market_cap_weighted_count",
            "industries[].unlevered.market_cap_weighted_count",
            "industries[].operations.market_cap_weighted_count",
            "peer_set.figures.median_tax_rate",
            "peer_set.figures.levered.market_cap_weighted_count",
            "peer_set.figures.shrunk.market_cap_weighted_count",
            "peer_set.figures.unlevered.market_cap_weighted_count",
            "peer_set.figures.operations.market_cap_weighted_count",
        ],
    ),
    (
        "0.11.0",
        &[
            "peers[].lag_response",
            "settings.beta.flag_lag_p_value",
            "industries[].excluded.lagged_response",
            "industries[].flagged.lagged_response",
            "counts.flagged.lagged_response",
            "counts.excluded_by_flag.lagged_response",
            "peer_set.figures.excluded.lagged_response",
            "peer_set.figures.flagged.lagged_response",
        ],
    ),
    (
        "0.13.0",
        &[
            "sampling.rolling_window",
            "sampling.rolling_min_observations",
            "peers[].cost_of_debt_used",
            "peers[].stability_missing",
            "cautions.few_peers",
            "cautions.unstated_inputs",
            "window.rolling_window",
            "window.rolling_min_observations",
        ],
    ),
    (
        "0.14.0",
        &[
            "securities[].equity_value",
            "securities[].debt",
            "securities[].cash",
            "securities[].tax_rate",
            "securities[].flags",
            "securities[].excluded_reason",
        ],
    ),
    (
        "0.15.0",
        &[
            "peers[].stability.windows_laid",
            "peers[].stability.skipped_window_ends",
            "reconciliation.stated_difference",
        ],
    ),
    (
        "0.16.0",
        &[
            "currency_conversion.cost_of_debt_pre_tax",
            "currency_conversion.wacc_borrowing_locally",
            "target.peer_median_debt_to_equity",
            "peer_set.home_members",
            "peer_set.share_of_home_below_range",
        ],
    ),
    (
        "0.17.0",
        &[
            "industries[].levered.market_cap_weighted_effective_count",
            "industries[].shrunk.market_cap_weighted_effective_count",
            "industries[].unlevered.market_cap_weighted_effective_count",
            "industries[].operations.market_cap_weighted_effective_count",
            "peer_set.figures.levered.market_cap_weighted_effective_count",
            "peer_set.figures.shrunk.market_cap_weighted_effective_count",
            "peer_set.figures.unlevered.market_cap_weighted_effective_count",
            "peer_set.figures.operations.market_cap_weighted_effective_count",
            "cautions.riskless_debt_above_risk_free",
            "reconciliation.to.stated_cost_of_equity",
        ],
    ),
];

/// The first key of `recorded` that a version later than `recorded_version` began to write
/// ([`ADDED_IN`]), with that version: a receipt of that version cannot hold it, so the version
/// was edited (found by review: a receipt relabelled as an older version passed a deleted note
/// off as that version's wording). `None` when the version is unknown or the keys fit it.
pub(super) fn key_after_version(
    recorded: &Value,
    recorded_version: &str,
) -> Option<(String, &'static str)> {
    let was = version(recorded_version)?;
    let mut paths = Vec::new();
    every_path(recorded, String::new(), &mut paths);
    ADDED_IN
        .iter()
        .filter(|(added, _)| version(added).is_some_and(|added| added > was))
        .find_map(|(added, keys)| {
            (paths.iter())
                .find(|p| keys.contains(&p.as_str()))
                .map(|p| (p.clone(), *added))
        })
}

/// The keys (paths with list positions left out) that versions after `recorded_version`
/// began to write: what a receipt of that version cannot hold.
pub fn keys_added_after(recorded_version: &str) -> Vec<&'static str> {
    let Some(was) = version(recorded_version) else {
        return Vec::new();
    };
    (ADDED_IN.iter())
        .filter(|(added, _)| version(added).is_some_and(|added| added > was))
        .flat_map(|(_, keys)| keys.iter().copied())
        .collect()
}

/// Every path of `value` (objects' and lists' own paths too), list positions left out.
fn every_path(value: &Value, at: String, out: &mut Vec<String>) {
    match value {
        Value::Object(map) => {
            for (key, child) in map {
                let path = match at.is_empty() {
                    true => key.clone(),
                    false => format!("{at}.{key}"),
                };
                out.push(path.clone());
                every_path(child, path, out);
            }
        }
        Value::Array(items) => {
            for item in items {
                every_path(item, format!("{at}[]"), out);
            }
        }
        _ => {}
    }
}

/// A version as numbers (`0.3.0` → [0, 3, 0], `0.18.0-rc.1` → [0, 18, 0]); `None` for anything
/// else. The one reading of a version: verify's checks and notes, and an earlier run's receipt.
pub fn version(text: &str) -> Option<Vec<u64>> {
    // A pre-release or build suffix (`0.18.0-rc.1`) is read as its version, as the shape check
    // accepts it (found by review: such a receipt got no known changes).
    let core = text.split(['-', '+']).next().unwrap_or_default();
    core.split('.').map(|part| part.parse().ok()).collect()
}

/// A path with its list positions left out: `peers[3].beta` → `peers[].beta`.
pub(super) fn without_positions(path: &str) -> String {
    let mut out = String::with_capacity(path.len());
    let mut inside = false;
    for c in path.chars() {
        match c {
            '[' => {
                inside = true;
                out.push(c);
            }
            ']' => {
                inside = false;
                out.push(c);
            }
            _ if inside => {}
            _ => out.push(c),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn positions_are_left_out_of_paths() {
        assert_eq!(
            without_positions("industries[12].excluded.zero_returns"),
            "industries[].excluded.zero_returns"
        );
        assert_eq!(version("0.10.2"), Some(vec![0, 10, 2]));
        assert_eq!(version("0.3"), Some(vec![0, 3]));
        // A pre-release or build suffix is read by its numbers, as the shape check accepts it.
        assert_eq!(version("0.3.0-dev"), Some(vec![0, 3, 0]));
        assert_eq!(version("0.18.0+local"), Some(vec![0, 18, 0]));
        assert!(version("").is_none() && version("banana").is_none());
    }
}
