//! Comparing a receipt with its rerun, leaf by leaf: numbers within a relative tolerance,
//! everything else exactly; lists of named entries (peers, input files, leave-one-out rows)
//! matched by name; a reworded description of a setting kept apart from the mismatches.

use serde_json::Value;

use super::{Absent, Mismatch, WORDING_KEYS};

/// Numbers agree when |a − b| ≤ tolerance·max(|a|, |b|) (or both are zero).
pub fn numbers_agree(a: f64, b: f64, tolerance: f64) -> bool {
    a == b || (a - b).abs() <= tolerance * a.abs().max(b.abs())
}

/// What comparing a receipt with its rerun found.
#[derive(Debug, Default)]
pub(crate) struct Comparison {
    /// How many leaves were compared.
    pub compared: usize,
    pub mismatches: Vec<Mismatch>,
    /// Leaves under [`WORDING_KEYS`] whose text differs.
    pub wording: Vec<Mismatch>,
    /// Keys the rerun writes and the receipt does not have at all (not `null`: absent), held
    /// apart until [`Comparison::settle_added`] knows the receipt's version.
    pub added: Vec<Mismatch>,
}

/// The keys each version began to write, as paths with list positions left out
/// (`peers[].zero_return_share`): a receipt of an earlier version lacks them without having
/// lost anything. Only keys listed here can be excused; any other absent key is a mismatch.
const ADDED_IN: [(&str, &[&str]); 11] = [
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

impl Comparison {
    /// Settles the keys only the rerun has. A key that a version later than the receipt's
    /// (and no later than this one) began to write ([`ADDED_IN`]) is a figure this version
    /// adds, returned by path and not compared; any other (a receipt of this version, of an
    /// unknown or a newer version, or a key no version added) is a mismatch: the receipt was
    /// edited or its figures lost.
    pub fn settle_added(&mut self, recorded: &str, current: &str) -> Vec<String> {
        let (was, now) = (version(recorded), version(current));
        let excused = |path: &str| {
            let path = without_positions(path);
            ADDED_IN.iter().any(|(added, keys)| {
                let added = version(added);
                was.is_some() && was < added && added <= now && keys.contains(&path.as_str())
            })
        };
        let (excused, lost): (Vec<Mismatch>, Vec<Mismatch>) = std::mem::take(&mut self.added)
            .into_iter()
            .partition(|m| excused(&m.path));
        self.compared += lost.len();
        self.mismatches.extend(lost);
        excused.into_iter().map(|m| m.place()).collect()
    }
}

impl Comparison {
    /// The changes of figures a later version made on purpose that may explain the
    /// differences found ([`super::notes::known_changes`]).
    pub fn known_changes(
        &self,
        kind: &str,
        recorded_version: &str,
        (receipt, rerun): (&Value, &Value),
    ) -> Vec<String> {
        let differences: Vec<&Mismatch> = self.mismatches.iter().chain(&self.wording).collect();
        let versions = (recorded_version, env!("CARGO_PKG_VERSION"));
        super::notes::known_changes(kind, versions, &differences, (receipt, rerun))
    }

    /// The wording differences of a receipt this very version wrote from the same inputs
    /// (`same_source`) are edits, moved among the mismatches; otherwise they stay apart.
    /// Returns `same_source`: whether sentences now count as figures.
    pub fn settle_wording(&mut self, same_source: bool) -> bool {
        if same_source {
            self.mismatches.append(&mut self.wording);
        }
        same_source
    }
}

/// Compares every leaf of `recorded` with `recomputed`: numbers within `tolerance`
/// ([`numbers_agree`]), everything else exactly, a key on one side only as absent from the
/// other ([`Absent`]), the run's notes as sets of sentences.
pub(crate) fn compare(recorded: &Value, recomputed: &Value, tolerance: f64) -> Comparison {
    let mut found = Comparison::default();
    let at = Place {
        path: String::new(),
        key: "",
        item: None,
    };
    compare_at(recorded, recomputed, at, tolerance, &mut found);
    found
}

/// When it ran, where the case was found from (also as the bridge's starting side records it)
/// and which version wrote it are not figures (the hashes are compared, and the report names
/// both versions when they differ); nor is
/// the line a spread table's row sits on (the table's hash and the row's rating and spread
/// are compared; a TOML table's row once recorded its position there, now its line).
const PLACES: [&str; 6] = [
    "generated_at",
    "case.file",
    "reconciliation.from.source",
    "universe.file",
    "tool.version",
    "cost_of_debt.row.line",
];

/// Where a leaf is: its JSON path, its own key, and the name of the list entry it is in.
struct Place<'a> {
    path: String,
    key: &'a str,
    item: Option<String>,
}

/// The name a list entry records for itself (a peer's `name`, a leave-one-out row's `peer`, an
/// input file's `role`, a universe's industry row's `industry`).
fn entry_name(entry: &Value) -> Option<String> {
    ["name", "peer", "security", "industry", "role"]
        .iter()
        .find_map(|k| entry.get(k).and_then(Value::as_str))
        .map(str::to_string)
}

fn compare_at(
    recorded: &Value,
    recomputed: &Value,
    at: Place<'_>,
    tolerance: f64,
    found: &mut Comparison,
) {
    let Place { path, key, item } = at;
    // An input's hash is compared file by file (the verification's file list), not again as a
    // figure: a file whose bytes changed (line ends, a comment) while every figure stayed is
    // reported once, as a changed input.
    if PLACES.contains(&path.as_str()) || key == "sha256" {
        return;
    }
    let child = |key: &str| {
        if path.is_empty() {
            key.to_string()
        } else {
            format!("{path}.{key}")
        }
    };
    let agree = match (recorded, recomputed) {
        (Value::Object(a), Value::Object(b)) => {
            let place = |key| Place {
                path: child(key),
                key,
                item: item.clone(),
            };
            for (key, value) in a {
                match b.get(key) {
                    Some(next) => compare_at(value, next, place(key), tolerance, found),
                    None => only_in_receipt(value, place(key), found),
                }
            }
            for key in b.keys().filter(|k| !a.contains_key(*k)) {
                only_in_rerun(&b[key], place(key), tolerance, found);
            }
            return;
        }
        (Value::Array(a), Value::Array(b)) if key == "notes" && all_text(a) && all_text(b) => {
            compare_notes(a, b, &path, found);
            return;
        }
        (Value::Array(a), Value::Array(b)) if named_differently(a, b) => {
            compare_by_name(a, b, (&path, key), tolerance, found);
            return;
        }
        (Value::Array(a), Value::Array(b)) if a.len() == b.len() => {
            for (i, (x, y)) in a.iter().zip(b).enumerate() {
                let at = Place {
                    path: format!("{path}[{i}]"),
                    key,
                    item: entry_name(x).or_else(|| item.clone()),
                };
                compare_at(x, y, at, tolerance, found);
            }
            return;
        }
        (Value::Number(a), Value::Number(b)) => numbers_agree(
            a.as_f64().unwrap_or(f64::NAN),
            b.as_f64().unwrap_or(f64::NAN),
            tolerance,
        ),
        (a, b) => a == b,
    };
    found.compared += 1;
    if !agree {
        let difference = Mismatch {
            path,
            item,
            recorded: recorded.clone(),
            recomputed: recomputed.clone(),
            absent_from: None,
        };
        found.record(difference, key);
    }
}

/// Whether every entry of a list is a text.
fn all_text(list: &[Value]) -> bool {
    list.iter().all(Value::is_string)
}

/// The run's notes as a set of sentences: each recorded note the rerun does not write, and
/// each note the rerun writes that the receipt does not have, is one wording difference on its
/// side (found by review: two lists of one length were paired by position, an unrelated new
/// note shown as the rewording of an old one, and lists of two lengths shown whole).
fn compare_notes(recorded: &[Value], rerun: &[Value], path: &str, found: &mut Comparison) {
    let mut unmatched: Vec<&Value> = rerun.iter().collect();
    let mut dropped = Vec::new();
    for note in recorded {
        match unmatched.iter().position(|n| *n == note) {
            Some(i) => {
                unmatched.remove(i);
            }
            None => dropped.push(note),
        }
    }
    found.compared += recorded.len() + unmatched.len();
    let one_side = |value: &Value, absent_from| Mismatch {
        path: path.to_string(),
        item: None,
        recorded: if absent_from == Absent::Rerun {
            value.clone()
        } else {
            Value::Null
        },
        recomputed: if absent_from == Absent::Receipt {
            value.clone()
        } else {
            Value::Null
        },
        absent_from: Some(absent_from),
    };
    let differences = (dropped.into_iter().map(|n| one_side(n, Absent::Rerun)))
        .chain(unmatched.into_iter().map(|n| one_side(n, Absent::Receipt)));
    found.wording.extend(differences);
}

/// A key only the receipt has: compared as a leaf against nothing, unless it is `null` (a
/// figure the rerun leaves out when it has none), a place or a hash.
fn only_in_receipt(value: &Value, at: Place<'_>, found: &mut Comparison) {
    if PLACES.contains(&at.path.as_str()) || at.key == "sha256" {
        return;
    }
    found.compared += 1;
    if value.is_null() {
        return;
    }
    let difference = Mismatch {
        path: at.path,
        item: at.item,
        recorded: value.clone(),
        recomputed: Value::Null,
        absent_from: Some(Absent::Rerun),
    };
    found.record(difference, at.key);
}

/// A key only the rerun writes: held apart as possibly added by a later version
/// ([`Comparison::settle_added`]), unless it is `null`, a place or a hash, which compare as
/// any other leaf.
fn only_in_rerun(value: &Value, at: Place<'_>, tolerance: f64, found: &mut Comparison) {
    let ignored = PLACES.contains(&at.path.as_str()) || at.key == "sha256";
    if value.is_null() || ignored {
        compare_at(&Value::Null, value, at, tolerance, found);
        return;
    }
    found.added.push(Mismatch {
        path: at.path,
        item: at.item,
        recorded: Value::Null,
        recomputed: value.clone(),
        absent_from: Some(Absent::Receipt),
    });
}

/// Whether two lists hold named entries (peers, leave-one-out rows) in another order or of
/// another set: every entry named, each name once on each side, the two sequences of names not
/// the same. Such lists are compared entry by entry by name, so a case whose peers were
/// reordered, or one that dropped a peer, shows which peers' figures differ instead of every
/// position's (or of the whole list as one value).
fn named_differently(a: &[Value], b: &[Value]) -> bool {
    let names = |list: &[Value]| -> Option<Vec<String>> {
        let names: Vec<String> = list.iter().map(entry_name).collect::<Option<_>>()?;
        let distinct: std::collections::HashSet<&String> = names.iter().collect();
        (!names.is_empty() && distinct.len() == names.len()).then_some(names)
    };
    match (names(a), names(b)) {
        (Some(x), Some(y)) => x != y,
        _ => false,
    }
}

/// Each recorded entry against the rerun's entry of the same name (its path keeps the
/// receipt's position); an entry on one side only is one mismatch, named.
fn compare_by_name(
    a: &[Value],
    b: &[Value],
    (path, key): (&str, &str),
    tolerance: f64,
    found: &mut Comparison,
) {
    let position: std::collections::HashMap<String, usize> = (b.iter().enumerate())
        .filter_map(|(j, y)| entry_name(y).map(|name| (name, j)))
        .collect();
    let mut matched = vec![false; b.len()];
    // An input file on one side only is reported by the file checks ("no longer in the case"),
    // once, as every changed input is.
    let report_alone = path != "files";
    for (i, x) in a.iter().enumerate() {
        let name = entry_name(x);
        let at = Place {
            path: format!("{path}[{i}]"),
            key,
            item: name.clone(),
        };
        match name.as_ref().and_then(|n| position.get(n)) {
            Some(&j) => {
                matched[j] = true;
                compare_at(x, &b[j], at, tolerance, found);
            }
            None if report_alone => {
                found.compared += 1;
                found.mismatches.push(Mismatch {
                    path: at.path,
                    item: at.item,
                    recorded: x.clone(),
                    recomputed: Value::Null,
                    absent_from: Some(Absent::Rerun),
                });
            }
            None => {}
        }
    }
    let unmatched = b.iter().enumerate().filter(|(j, _)| !matched[*j]);
    for (j, y) in unmatched.filter(|_| report_alone) {
        found.compared += 1;
        found.mismatches.push(Mismatch {
            path: format!("{path}[{j}] (rerun)"),
            item: entry_name(y),
            recorded: Value::Null,
            recomputed: y.clone(),
            absent_from: Some(Absent::Receipt),
        });
    }
}

impl Comparison {
    /// A leaf that differs: a mismatch, or a wording difference when it is sentences under one
    /// of [`WORDING_KEYS`].
    fn record(&mut self, difference: Mismatch, key: &str) {
        let (recorded, recomputed) = (&difference.recorded, &difference.recomputed);
        // A list of sentences (the notes) that another version words differently, or to which
        // it adds one, is wording too: the figures the notes quote are compared where they are
        // kept.
        let sentences = |v: &Value| {
            v.is_string()
                || v.as_array()
                    .is_some_and(|items| items.iter().all(Value::is_string))
        };
        let wording = sentences(recorded) && sentences(recomputed) && WORDING_KEYS.contains(&key);
        if wording {
            self.wording.push(difference);
        } else {
            self.mismatches.push(difference);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The comparison of a receipt of `recorded` version whose `drop` keys were removed.
    fn settled(recorded: &str, receipt: &Value, drop: &[&str]) -> (Comparison, Vec<String>) {
        let mut old = receipt.clone();
        for pointer in drop {
            let (parent, key) = pointer.rsplit_once('/').unwrap();
            old.pointer_mut(parent)
                .and_then(Value::as_object_mut)
                .unwrap()
                .remove(key);
        }
        let mut found = compare(&old, receipt, 0.0);
        let added = found.settle_added(recorded, "0.3.0");
        (found, added)
    }

    // A key 0.3.0 began to write is excused only in a receipt of an earlier version; a figure
    // no version added (the WACC) is a mismatch whatever the version, and so is every absent
    // key in a receipt of this version, of a newer one, or of none (found by review: a WACC
    // deleted from a receipt marked 0.2.0 passed).
    #[test]
    fn only_keys_a_later_version_added_are_excused() {
        let receipt = serde_json::json!({
            "wacc": 0.07,
            "peers": [{"name": "A", "beta": 1.0, "zero_return_share": 0.0}],
        });
        let share = ["/peers/0/zero_return_share"];
        let (found, added) = settled("0.2.0", &receipt, &share);
        assert_eq!(added, ["peers[0].zero_return_share (\"A\")"]);
        assert!(found.mismatches.is_empty());
        for version in ["0.3.0", "0.4.0", "", "unknown"] {
            let (found, added) = settled(version, &receipt, &share);
            assert!(added.is_empty(), "{version}");
            assert_eq!(found.mismatches.len(), 1, "{version}");
        }
        let (found, added) = settled("0.2.0", &receipt, &["/wacc", "/peers/0/beta"]);
        assert!(added.is_empty());
        assert_eq!(found.mismatches.len(), 2);
    }

    // Notes are sentences compared as a set: a note replaced in a list of the same length is
    // one note on each side, not a pair of one rewording (found by review: an unrelated new
    // note was shown as the rewording of an old one); a note moved in the list is no
    // difference; an absent figure is marked absent, not shown as null.
    #[test]
    fn notes_are_compared_as_a_set_of_sentences_and_an_absent_figure_is_marked() {
        let recorded = serde_json::json!({"notes": ["a", "b", "c"], "wacc": 0.07});
        let rerun = serde_json::json!({"notes": ["c", "a", "d"]});
        let found = compare(&recorded, &rerun, 0.0);
        let sides: Vec<(Option<Absent>, String)> = (found.wording.iter())
            .map(|m| (m.absent_from, m.describe()))
            .collect();
        assert_eq!(
            sides,
            [
                (
                    Some(Absent::Rerun),
                    r#"notes: only in the receipt: "b""#.to_string()
                ),
                (
                    Some(Absent::Receipt),
                    r#"notes: only in the rerun: "d""#.to_string()
                ),
            ]
        );
        assert_eq!(found.mismatches.len(), 1);
        assert_eq!(
            found.mismatches[0].describe(),
            "wacc: recorded 0.07; not written by the rerun"
        );
        // Three recorded notes, one only in the rerun, and the WACC.
        assert_eq!(found.compared, 5);
    }

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
