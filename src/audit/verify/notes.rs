//! The verification's notes on versions: the figures a later version adds, named once each,
//! and which version wrote the receipt beside the one verifying it. Apart from `verify.rs`,
//! which compares.

use serde_json::Value;

use super::{versions, Mismatch, Verification};

impl Verification {
    /// The figures this version adds, in words (empty when there are none): not in the
    /// receipt another version wrote, so not compared.
    pub fn added_note(&self) -> String {
        if self.added_by_this_version.is_empty() {
            return String::new();
        }
        // One line per key a version added, however many list entries hold it (found by
        // review: a list cut after eight entries hid the additions that mattered).
        let mut groups: Vec<(String, usize)> = Vec::new();
        for entry in &self.added_by_this_version {
            let key = versions::without_positions(entry.split(" (").next().unwrap_or(entry));
            match groups.iter_mut().find(|(k, _)| *k == key) {
                Some((_, n)) => *n += 1,
                None => groups.push((key, 1)),
            }
        }
        let shown: Vec<String> = (groups.iter())
            .map(|(key, n)| match n {
                1 => key.clone(),
                n => format!("{key} ({n} entries)"),
            })
            .collect();
        let securities = match groups.iter().any(|(key, _)| key == "securities") {
            true => {
                " The receipt holds no figure of any single security, so no security's beta \
                 was verified; its counts and industry table were."
            }
            false => "",
        };
        let list = &self.added_by_this_version;
        format!(
            "{} figure{} that hurdle {} writes and the receipt, written by hurdle {}, does not \
             have (not compared; they do not count against the verification): {}.{securities}",
            list.len(),
            if list.len() == 1 { "" } else { "s" },
            self.current_tool_version,
            self.recorded_tool_version,
            shown.join(", ")
        )
    }

    /// Which version wrote the receipt, beside this one, when they differ: "written by hurdle
    /// 0.3.0, verified with 0.4.0"; for a receipt newer than this verifier, that the figures its
    /// version added show as mismatches here; empty for the same version.
    pub fn versions_note(&self) -> String {
        let (recorded, current) = (&self.recorded_tool_version, &self.current_tool_version);
        if recorded == current {
            return String::new();
        }
        if recorded.is_empty() {
            return format!(
                "written by a version of hurdle the receipt does not name, verified with {current}"
            );
        }
        let newer = versions::version(recorded)
            .zip(versions::version(current))
            .is_some_and(|(r, c)| r > c);
        match newer {
            true => format!(
                "written by hurdle {recorded}, newer than this hurdle {current}: figures that \
                 version added show here as mismatches recomputed as null; verify with hurdle \
                 {recorded} or later"
            ),
            false => format!("written by hurdle {recorded}, verified with {current}"),
        }
    }
}

/// A change of figures a version made on purpose (README, Changelog, under the entry
/// named), which a receipt of an earlier version written under the settings it touches cannot
/// reproduce: named beside the mismatches so that the reader finds why (found by review: a
/// 0.3.0 universe under Harris–Pringle failed with nothing pointing to the change).
struct KnownChange {
    /// The version that made the change.
    version: &'static str,
    /// The receipt's `kind` (`case` or `universe`).
    kind: &'static str,
    /// Mismatches under these paths are the ones the change can explain.
    paths: &'static [&'static str],
    /// The change in words, when the receipt's settings are ones it touches (given the
    /// receipt and the rerun, so that it can name what moved), else `None`.
    explain: fn(&Value, &Value) -> Option<String>,
}

/// 0.6.0's null for the standard deviation of one value, in words (a case's aggregate of one
/// peer, a universe's industry of one security).
const ONE_VALUE_SPREAD: &str = "hurdle 0.6.0 writes the standard deviation of a single value \
    as null, where an earlier version wrote 0 (one value has no spread to estimate; 0 read as a \
    spread measured to be nil) (README, Changelog, \"Findings of a practitioner's, a spreadsheet \
    user's and a chart reader's reviews\")";

/// The figures of the estimation-error draws, which a change of how they are drawn moves.
const ESTIMATION_ERROR_DRAWS: [&str; 8] = [
    "uncertainty.mean",
    "uncertainty.p05",
    "uncertainty.p25",
    "uncertainty.p50",
    "uncertainty.p75",
    "uncertainty.p95",
    "uncertainty.histogram",
    "uncertainty.point_outside_interval",
];

const KNOWN_CHANGES: [KnownChange; 18] =
    [
        // Found by review: a mean of draws without a finite variance moved from −16% to 11%
        // with the seed.
        KnownChange {
            version: "0.18.0",
            kind: "case",
            paths: &["uncertainty.mean"],
            explain: |_, rerun| {
                rerun["uncertainty"]["mean"].is_null().then(|| {
                    "hurdle 0.18.0 gives no mean of the estimation-error draws when an aggregated \
                     peer's beta has 2 or fewer degrees of freedom: its Student's t draws then \
                     have no finite variance, and their mean does not settle (README, Changelog)"
                        .to_string()
                })
            },
        },
        // Found by review: the fallback factor V·Λ^½ depended on the eigenvectors' signs.
        KnownChange {
            version: "0.18.0",
            kind: "case",
            paths: &ESTIMATION_ERROR_DRAWS,
            // The sandwich covariance has rank at most a peer's degrees of freedom (residuals
            // orthogonal to the regressors), so it is singular when they are fewer than the
            // peers (found by review: 9 returns, 8 peers took the fallback).
            explain: |receipt, _| {
                let peers = receipt["peers"].as_array().map_or(0, Vec::len);
                let fewest = (receipt["peers"].as_array().into_iter().flatten())
                    .filter_map(|p| p["degrees_of_freedom"].as_u64())
                    .min()
                    .unwrap_or(u64::MAX);
                ((fewest as usize) < peers).then(|| {
                    "hurdle 0.18.0 factors a beta-error covariance that is not positive definite \
                     (peers with fewer degrees of freedom than there are peers, or two with the \
                     same residuals) by its symmetric square root, which does not depend on the \
                     signs an eigen-solver gives: the estimation-error draws of such a case move \
                     (README, Changelog)"
                        .to_string()
                })
            },
        },
        // Found by review: an emerging-market case's inflation rates, and its preferred equity
        // and leases, moved its WACC with no basis asked.
        KnownChange {
            version: "0.16.0",
            kind: "case",
            paths: &["cautions.unstated_inputs"],
            explain: |receipt, _| {
                let s = &receipt["settings"];
                let weighted = |k: &str| s[k]["weight"].as_f64().is_some_and(|w| w > 0.0);
                let converted = s["conversion"].is_object();
                (weighted("preferred") || weighted("leases") || converted).then(|| {
                    "hurdle 0.16.0 also asks for a stated basis of preferred equity, lease \
                     liabilities and a currency conversion's expected inflation (their \
                     `justification` keys): without one they join the inputs without a stated \
                     basis (README, Changelog)"
                        .to_string()
                })
            },
        },
        // Found by review: normal draws made the estimation-error interval too narrow for
        // short windows.
        KnownChange {
            version: "0.15.0",
            kind: "case",
            paths: &ESTIMATION_ERROR_DRAWS,
            explain: |_, _| {
                Some(
                    "hurdle 0.15.0 draws each peer's beta from Student's t with its own degrees \
                     of freedom, the distribution of its confidence interval, where an earlier \
                     version drew it from the normal: the estimation-error interval is a little \
                     wider, most for short windows (README, Changelog)"
                        .to_string(),
                )
            },
        },
        // Found by review: a case whose rolling windows were too short for Dimson's or
        // Scholes–Williams' shifted columns, or for the Newey–West lag rule, was told its
        // windows had too few observations.
        KnownChange {
            version: "0.14.0",
            kind: "case",
            paths: &["peers[].stability_missing"],
            // Only where a peer's cause went from the one to the other (found by review: the
            // line was claimed for any edited cause).
            explain: |receipt, rerun| {
                let causes = |v: &Value| {
                    (v["peers"].as_array().into_iter().flatten())
                        .map(|p| p["stability_missing"].clone())
                        .collect::<Vec<_>>()
                };
                let moved = (causes(receipt).iter().zip(&causes(rerun)))
                    .any(|(was, now)| was == "too-few-windows" && now == "short-for-estimator");
                moved.then(|| {
                    "hurdle 0.14.0 records `short-for-estimator` where a rolling window, even \
                     with an observation in every period, is too short for the estimator (its \
                     shifted index columns or the Newey–West lag rule's lags must stay below a \
                     quarter of its observations); 0.13.0 recorded `too-few-windows` (README, \
                     Changelog)"
                        .to_string()
                })
            },
        },
        // Found by review: a receipt of 0.11.0 whose index was flat for a stretch failed on
        // its peers' stability with nothing pointing to the change.
        KnownChange {
            version: "0.12.0",
            kind: "case",
            paths: &["peers[].stability"],
            explain: |_, _| {
                Some(
                    "hurdle 0.12.0 skips a rolling window whose index returns (before the \
                     risk-free rate) or whose peer's own returns are the same to rounding, as \
                     the full window is refused; an earlier version fitted such a window (to \
                     the rate's variation, or to rounding, or a beta of 0 with a standard error \
                     of 0), so a peer's rolling stability figures move where the index or the \
                     peer was flat for a window's length (README, Changelog, \"Inputs as \
                     analysts export them\")"
                        .to_string(),
                )
            },
        },
        KnownChange {
            version: "0.11.0",
            kind: "case",
            // Only the figures the flag moves (found by review: an edited standard error was
            // put down to it).
            paths: &[
                "peers[].flags",
                "cautions.flagged_in_aggregate",
                "cautions.every_peer_flagged",
            ],
            explain: |_, rerun| {
                let peers = rerun["peers"].as_array().into_iter().flatten();
                let late: Vec<&str> = peers
                    .filter(|p| {
                        (p["flags"].as_array().into_iter().flatten()).any(|f| f == LAGGED_RESPONSE)
                    })
                    .filter_map(|p| p["name"].as_str())
                    .collect();
                (!late.is_empty()).then(|| lagged_response_change(&late))
            },
        },
        KnownChange {
            version: "0.11.0",
            kind: "universe",
            paths: &[
                "counts.flagged",
                "industries[].flagged",
                "peer_set.figures.flagged",
            ],
            explain: |_, rerun| {
                let flagged = rerun["counts"]["flagged"][LAGGED_RESPONSE].as_u64();
                flagged
                    .is_some_and(|n| n > 0)
                    .then(|| lagged_response_change(&[]))
            },
        },
        KnownChange {
            version: "0.9.0",
            kind: "case",
            paths: &[
                "peers",
                "beta",
                "cost_of_equity",
                "wacc",
                "uncertainty",
                "sensitivity",
                "sampling",
            ],
            explain: |receipt, _| {
                let files = receipt["files"].as_array().into_iter().flatten();
                files.clone().any(parquet_file).then(|| {
                    "hurdle 0.9.0 reads a Parquet price table's 32-bit floats by their shortest \
                 decimal (600.1, where an earlier version read the float's exact value, \
                 600.0999755859375): with such columns the betas and every figure built on them \
                 move from about the seventh significant digit (README, Changelog, \"A demo \
                 market, and the universe's inputs as exports write them\")"
                        .to_string()
                })
            },
        },
        KnownChange {
            version: "0.9.0",
            kind: "universe",
            paths: &["industries", "securities", "peer_set"],
            explain: |receipt, _| {
                let files = ["attributes", "panel", "index", "risk_free"];
                files.iter().any(|f| parquet_file(&receipt["files"][f])).then(|| {
                "hurdle 0.9.0 reads a Parquet price or attributes figure stored as a 32-bit \
                 float by its shortest decimal (600.1, where an earlier version read the float's \
                 exact value, 600.0999755859375): with such columns the betas, D/E, unlevered \
                 betas and weighted means move from about the seventh significant digit \
                 (README, Changelog, \"A demo market, and the universe's inputs as exports \
                 write them\")"
                    .to_string()
            })
            },
        },
        KnownChange {
            version: "0.7.0",
            kind: "case",
            paths: &["notes"],
            explain: |receipt, rerun| {
                let shift = |v: &Value| {
                    (v["notes"].as_array().into_iter().flatten()).any(|n| {
                        n.as_str()
                            .is_some_and(|n| n.contains("the rolling beta moved from"))
                    })
                };
                (shift(receipt) || shift(rerun)).then(|| {
                    "hurdle 0.7.0 adjusts the peers' first-to-last rolling-beta tests for testing \
                 them together (Holm's step-down method) and gives their p-values, where an \
                 earlier version tested each peer at 5% on its own: such notes are worded \
                 otherwise and fewer (README, Changelog, \"Findings of a numerical, a \
                 test-suite and a statistician's review\")"
                        .to_string()
                })
            },
        },
        KnownChange {
            version: "0.7.0",
            kind: "case",
            paths: &["uncertainty.peer_set"],
            explain: |_, _| {
                Some(
                "hurdle 0.7.0 resamples the peers' estimates for the peer-set interval without \
                 drawing their betas again: the spread between the peers' estimates already \
                 holds each one's estimation error, which an earlier version counted twice, so \
                 its interval was wider (README, Changelog, \"Findings of a numerical, a \
                 test-suite and a statistician's review\")"
                    .to_string(),
            )
            },
        },
        KnownChange {
            version: "0.6.0",
            kind: "case",
            paths: &["uncertainty.specifications"],
            explain: |_, rerun| {
                let rows = rerun["uncertainty"]["specifications"].as_array();
                let own = (rows.into_iter().flatten())
                    .find(|r| r["case_choice"] == true)
                    .and_then(|r| r["window"].as_str())
                    .filter(|w| w.contains(" (about "));
                own.map(|window| {
                    format!(
                    "hurdle 0.6.0 writes the specification range's row for the case's own window \
                     with its unit and years (\"{window}\"), where an earlier version wrote the \
                     count alone (README, Changelog, \"Findings of a practitioner's, a \
                     spreadsheet user's and a chart reader's reviews\")"
                )
                })
            },
        },
        KnownChange {
            version: "0.6.0",
            kind: "case",
            paths: &["uncertainty.histogram"],
            // Only a histogram at the new floor: wider bins are computed as before.
            explain: |_, rerun| {
                let width = rerun["uncertainty"]["histogram"]["bin_width"].as_f64();
                width
                .is_some_and(|w| w <= crate::audit::histogram::MIN_BIN_WIDTH)
                .then(|| {
                    "hurdle 0.6.0 draws the Monte Carlo histogram with bins of at least 0.01 bp, \
                     where an earlier version's narrower bins lost draws to edges that rounding \
                     made equal (README, Changelog, \"Findings of a practitioner's, a \
                     spreadsheet user's and a chart reader's reviews\")"
                        .to_string()
                })
            },
        },
        KnownChange {
            version: "0.6.0",
            kind: "case",
            paths: &["beta.unlevered_dispersion.std_dev"],
            explain: |_, rerun| {
                rerun["beta"]["unlevered_dispersion"]["std_dev"]
                    .is_null()
                    .then(|| ONE_VALUE_SPREAD.to_string())
            },
        },
        KnownChange {
            version: "0.6.0",
            kind: "universe",
            paths: &["industries"],
            explain: |_, rerun| {
                let singles = (rerun["industries"].as_array().into_iter().flatten())
                    .flat_map(|i| [&i["levered"], &i["shrunk"], &i["unlevered"]])
                    .any(|s| s["dispersion"]["count"] == 1);
                singles.then(|| ONE_VALUE_SPREAD.to_string())
            },
        },
        KnownChange {
            version: "0.2.0",
            kind: "case",
            paths: &["cost_of_debt"],
            // Only a coverage on its row's threshold (found by review: named for any coverage).
            explain: |receipt, rerun| {
                let cost = &rerun["cost_of_debt"];
                let on_threshold = (cost["interest_coverage"].as_f64())
                    .zip(cost["row"]["min_coverage"].as_f64())
                    .is_some_and(|(coverage, low)| coverage <= low);
                (receipt["cost_of_debt"]["source"] == "coverage" && on_threshold).then(|| {
                    "hurdle 0.2.0 gives an interest coverage equal to a coverage table's threshold \
                 that threshold's row (its double lies an ulp below the threshold, and an \
                 earlier version gave it the next worse rating and spread): a coverage on a \
                 threshold moves the cost of debt and the WACC (README, Changelog, \"Reviews \
                 of an auditor's, a reviewer's and a practitioner's use\")"
                        .to_string()
                })
            },
        },
        KnownChange {
            version: "0.4.0",
            kind: "universe",
            paths: &["counts", "industries", "notes", "securities"],
            explain: |receipt, rerun| {
                let leverage = &receipt["settings"]["leverage"];
                let formula = match leverage["formula"].as_str() {
                    Some("harris-pringle") => "Harris–Pringle",
                    Some("conine") => "Conine",
                    _ => return None,
                };
                let applies = leverage["debt_beta_source"] == "none";
                // The securities it concerns: those unlevered now from a negative beta (the raw
                // or the adjusted one, whichever is unlevered; unlevering keeps the sign), none of
                // which an earlier version unlevered (found by review: named by the raw beta, and
                // also when no security was negative).
                let negative: Vec<&str> = (rerun["securities"].as_array().into_iter().flatten())
                    .filter(|s| s["unlevered_beta"].as_f64().is_some_and(|b| b < 0.0))
                    .filter_map(|s| s["security"].as_str())
                    .collect();
                (applies && !negative.is_empty()).then(|| {
                    let which = format!(
                        "; here {} securit{} unlevered from a negative beta: {}",
                        negative.len(),
                        if negative.len() == 1 {
                            "y is"
                        } else {
                            "ies are"
                        },
                        crate::universe::notes::first_ids(&negative)
                    );
                    format!(
                        "hurdle 0.4.0 unlevers a negative equity beta under {formula} without a \
                     given debt beta, as a case does, where an earlier version left such a \
                     security out of its industry under a note that blamed a given debt beta: \
                     its industry's counts and figures move (README, Changelog, \"Loose ends \
                     of the reviews\"){which}"
                    )
                })
            },
        },
    ];

/// The flag 0.11.0 added, as outputs name it.
const LAGGED_RESPONSE: &str = "lagged_response";

/// 0.11.0's flag in words, naming the case's peers it raises (none named for a universe,
/// whose counts say how many).
fn lagged_response_change(peers: &[&str]) -> String {
    let which = match peers {
        [] => String::new(),
        names => format!("; here {}", crate::universe::notes::first_ids(names)),
    };
    format!(
        "hurdle 0.11.0 flags lagged_response on an OLS beta whose returns follow the index's \
         return of the period before (beta.flag_lag_p_value), which an earlier version did not \
         test: the flags, the counts of flagged securities and the cautions that name flagged \
         peers move; no beta or rate does unless beta.exclude_flags lists the flag (README, \
         Changelog, \"Prices that react late\"){which}"
    )
}

/// Whether a receipt's file entry names a Parquet file (by its extension).
fn parquet_file(file: &Value) -> bool {
    let path = file["path"].as_str().unwrap_or("").to_ascii_lowercase();
    path.ends_with(".parquet") || path.ends_with(".pq")
}

/// The changes of figures ([`KNOWN_CHANGES`]) that a version later than the receipt's
/// (`versions`: the receipt's, this one's), and no later than this one, made under the
/// receipt's settings, in words; only when a difference lies where the change moves figures.
pub(super) fn known_changes(
    kind: &str,
    (recorded, current): (&str, &str),
    differences: &[&Mismatch],
    (receipt, rerun): (&Value, &Value),
) -> Vec<String> {
    let (was, now) = (versions::version(recorded), versions::version(current));
    (KNOWN_CHANGES.iter())
        .filter(|change| change.kind == kind)
        .filter(|change| {
            let made = versions::version(change.version);
            was.is_some() && was < made && made <= now
        })
        .filter(|change| {
            // Paths with their list positions left out (`peers[].flags`), so a change can name
            // a figure of every entry.
            (differences.iter()).any(|m| {
                let path = versions::without_positions(&m.path);
                change.paths.iter().any(|p| path.starts_with(p))
            })
        })
        .filter_map(|change| (change.explain)(receipt, rerun))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    fn mismatch(path: &str) -> Mismatch {
        Mismatch {
            path: path.into(),
            item: None,
            recorded: json!(1),
            recomputed: json!(2),
            absent_from: None,
        }
    }

    // 0.18.0's two changes to the estimation-error draws: the missing mean only where the rerun
    // gives none; the symmetric root only for a receipt with no more returns than peers.
    #[test]
    fn the_draws_changes_of_0_18_are_named_where_they_apply() {
        let moved = mismatch("uncertainty.mean");
        let versions = ("0.17.0", "0.18.0");
        let peers =
            |n: u64| json!({"peers": [{"degrees_of_freedom": n}, {"degrees_of_freedom": 60}]});
        let named = |receipt: &Value, rerun: &Value| {
            known_changes("case", versions, &[&moved], (receipt, rerun))
        };
        let null_mean = json!({"uncertainty": {"mean": null}});
        let both = named(&peers(1), &null_mean);
        assert_eq!(both.len(), 2, "{both:?}");
        assert!(both[0].starts_with("hurdle 0.18.0 gives no mean"));
        assert!(both[1].starts_with("hurdle 0.18.0 factors a beta-error covariance"));
        let none = named(&peers(60), &json!({"uncertainty": {"mean": 0.07}}));
        assert!(none.is_empty(), "{none:?}");
    }

    // 0.9.0's reading of 32-bit floats is named for a universe receipt of an earlier version
    // whose attributes file (or panel) is Parquet and whose security figures differ; not for
    // CSV files, a receipt of 0.9.0 or differences elsewhere.
    #[test]
    fn the_32_bit_float_change_is_named_for_parquet_attributes() {
        let receipt = |path: &str| json!({"files": {"attributes": {"path": path}, "panel": {"path": "p.csv"}}});
        let moved = mismatch("securities.debt_to_equity");
        let found = |versions, path: &str, m: &Mismatch| {
            known_changes("universe", versions, &[m], (&receipt(path), &json!({})))
        };
        let named = found(("0.8.0", "0.9.0"), "data/attributes.PARQUET", &moved);
        assert_eq!(named.len(), 1);
        assert!(named[0].starts_with("hurdle 0.9.0 reads a Parquet price or attributes figure"));
        assert!(found(("0.8.0", "0.9.0"), "data/attributes.csv", &moved).is_empty());
        assert!(found(("0.9.0", "0.9.0"), "a.parquet", &moved).is_empty());
        assert!(found(("0.8.0", "0.9.0"), "a.pq", &mismatch("window.start")).is_empty());
        // A case receipt reading a Parquet table, whose peers' figures moved.
        let case = |path: &str| json!({"files": [{"role": "index", "path": path}]});
        let beta = mismatch("peers.beta");
        let named = known_changes(
            "case",
            ("0.8.0", "0.9.0"),
            &[&beta],
            (&case("t.parquet"), &json!({})),
        );
        assert_eq!(named.len(), 1);
        assert!(named[0].starts_with("hurdle 0.9.0 reads a Parquet price table's 32-bit floats"));
        let csv = known_changes(
            "case",
            ("0.8.0", "0.9.0"),
            &[&beta],
            (&case("t.csv"), &json!({})),
        );
        assert!(csv.is_empty());
    }

    // The change 0.4.0 made (README, Changelog, "Loose ends of the reviews") is named for a
    // universe receipt of an earlier version under Harris–Pringle or Conine without a given
    // debt beta whose industry figures differ, with the securities of negative beta; not for
    // a receipt of 0.4.0, another formula, a given debt beta, or differences elsewhere.
    #[test]
    fn a_known_change_is_named_only_where_it_moves_figures() {
        let receipt = |formula: &str, source: &str| json!({"settings": {"leverage": {"formula": formula, "debt_beta_source": source}}});
        let rerun = json!({"securities": [
            {"security": "X05", "beta": -0.2, "unlevered_beta": -0.18},
            {"security": "X06", "beta": 0.4, "unlevered_beta": 0.35},
            {"security": "X08", "beta": -0.01, "unlevered_beta": -0.009},
            {"security": "X09", "beta": null, "unlevered_beta": null},
        ]});
        let counts = mismatch("counts.unlevered");
        let found = |versions, receipt: &Value, differences: &[&Mismatch]| {
            known_changes("universe", versions, differences, (receipt, &rerun))
        };
        let hp = receipt("harris-pringle", "none");
        let named = found(("0.3.0", "0.4.0"), &hp, &[&counts]);
        assert_eq!(named.len(), 1);
        assert!(named[0]
            .starts_with("hurdle 0.4.0 unlevers a negative equity beta under Harris–Pringle"));
        assert!(
            named[0].ends_with("here 2 securities are unlevered from a negative beta: X05, X08")
        );
        let positive = json!({"securities": [{"security": "X06", "unlevered_beta": 0.35}]});
        let versions = ("0.3.0", "0.4.0");
        assert!(known_changes("universe", versions, &[&counts], (&hp, &positive)).is_empty());
        assert!(found(("0.4.0", "0.4.0"), &hp, &[&counts]).is_empty());
        assert!(found(("0.3.0", "0.4.0"), &receipt("hamada", "none"), &[&counts]).is_empty());
        assert!(found(("0.3.0", "0.4.0"), &receipt("conine", "given"), &[&counts]).is_empty());
        assert!(found(("0.3.0", "0.4.0"), &hp, &[&mismatch("window.start")]).is_empty());
        assert_eq!(
            found(("0.3.0", "0.4.0"), &receipt("conine", "none"), &[&counts]).len(),
            1
        );
        // 0.2.0's coverage on a table's threshold, for a case whose cost of debt came from a
        // coverage table and moved.
        let coverage = json!({"cost_of_debt": {"source": "coverage"}});
        let moved = mismatch("cost_of_debt.pre_tax");
        let on = json!({"cost_of_debt": {"interest_coverage": 4.2, "row": {"min_coverage": 4.2}}});
        let case = |versions, receipt: &Value| {
            known_changes("case", versions, &[&moved], (receipt, &on)).len()
        };
        let off = json!({"cost_of_debt": {"interest_coverage": 4.4, "row": {"min_coverage": 4.2}}});
        assert!(known_changes("case", ("0.1.0", "0.5.0"), &[&moved], (&coverage, &off)).is_empty());
        assert_eq!(case(("0.1.0", "0.5.0"), &coverage), 1);
        assert_eq!(case(("0.2.0", "0.5.0"), &coverage), 0);
        assert_eq!(
            case(
                ("0.1.0", "0.5.0"),
                &json!({"cost_of_debt": {"source": "given"}})
            ),
            0
        );
    }

    // 0.12.0's skipped flat rolling windows: named for a case receipt of 0.11.0 whose peers'
    // stability differs, not for another figure, nor for a receipt of 0.12.0.
    #[test]
    fn skipped_flat_rolling_windows_are_named_on_a_peers_stability() {
        let stability = mismatch("peers[2].stability.min");
        let beta = mismatch("peers[2].beta");
        let empty = json!({});
        let found =
            |versions, m: &Mismatch| known_changes("case", versions, &[m], (&empty, &empty));
        let named = found(("0.11.0", "0.12.0"), &stability);
        assert_eq!(named.len(), 1);
        assert!(named[0].starts_with("hurdle 0.12.0 skips a rolling window"));
        assert!(found(("0.11.0", "0.12.0"), &beta).is_empty());
        assert!(found(("0.12.0", "0.12.0"), &stability).is_empty());
    }

    // 0.11.0's lagged_response flag: named for a universe receipt of 0.10.0 whose counts
    // differ when the rerun flags securities by it, not when it flags none, nor for a
    // receipt of 0.11.0.
    #[test]
    fn the_lagged_response_flag_is_named_where_the_rerun_raises_it() {
        let counts = mismatch("counts.flagged_total");
        let rerun = |n: u64| json!({"counts": {"flagged": {"lagged_response": n}}});
        let found = |versions, rerun: &Value| {
            known_changes("universe", versions, &[&counts], (&json!({}), rerun))
        };
        let named = found(("0.10.0", "0.11.0"), &rerun(3));
        assert_eq!(named.len(), 1);
        assert!(named[0].starts_with("hurdle 0.11.0 flags lagged_response"));
        assert!(found(("0.10.0", "0.11.0"), &rerun(0)).is_empty());
        assert!(found(("0.11.0", "0.11.0"), &rerun(3)).is_empty());
        let elsewhere = mismatch("industries[4].levered.median");
        let versions = ("0.10.0", "0.11.0");
        let receipt = json!({});
        assert!(
            known_changes("universe", versions, &[&elsewhere], (&receipt, &rerun(3))).is_empty()
        );
        // A case: named for a peer's flags that moved, not for any other figure of the peers
        // (found by review: an edited standard error was put down to the flag).
        let flagged = json!({"peers": [{"name": "P", "flags": ["lagged_response"]}]});
        let case =
            |path: &str| known_changes("case", versions, &[&mismatch(path)], (&receipt, &flagged));
        assert_eq!(case("peers[0].flags").len(), 1);
        assert_eq!(case("cautions.flagged_in_aggregate").len(), 1);
        assert!(case("peers[2].beta_std_error").is_empty());
    }

    // 0.6.0's null spread of one value: named for an earlier case receipt whose aggregate's
    // std_dev differs and is now null, not for a receipt of 0.6.0 or a spread of eight peers;
    // for a universe receipt whose industries differ and hold an industry of one.
    #[test]
    fn the_null_spread_of_one_value_is_a_known_change() {
        let spread = mismatch("beta.unlevered_dispersion.std_dev");
        let one = json!({"beta": {"unlevered_dispersion": {"count": 1, "std_dev": null}}});
        let eight = json!({"beta": {"unlevered_dispersion": {"count": 8, "std_dev": 0.09}}});
        let named = |versions, rerun: &Value| {
            known_changes("case", versions, &[&spread], (&json!({}), rerun))
        };
        let found = named(("0.5.0", "0.6.0"), &one);
        assert_eq!(found.len(), 1);
        assert!(found[0].starts_with("hurdle 0.6.0 writes the standard deviation of a single"));
        assert!(named(("0.6.0", "0.6.0"), &one).is_empty());
        assert!(named(("0.5.0", "0.6.0"), &eight).is_empty());
        let industries = mismatch("industries[3].levered.dispersion.std_dev");
        let single = json!({"industries": [{"levered": {"dispersion": {"count": 1}}}]});
        let versions = ("0.5.0", "0.6.0");
        let universe = |rerun: &Value| {
            known_changes("universe", versions, &[&industries], (&json!({}), rerun)).len()
        };
        assert_eq!(universe(&single), 1);
        let pair = json!({"industries": [{"levered": {"dispersion": {"count": 2}}}]});
        assert_eq!(universe(&pair), 0);
        // The histogram's floor: named when the rerun's bins are at it, not for wider bins.
        let bins = mismatch("uncertainty.histogram.counts");
        let histogram = |width: f64| {
            let rerun = json!({"uncertainty": {"histogram": {"bin_width": width}}});
            known_changes("case", versions, &[&bins], (&json!({}), &rerun)).len()
        };
        assert_eq!(histogram(1e-6), 1);
        assert_eq!(histogram(5e-4), 0);
        // The specification row's window: named when the rerun's own row carries its years.
        let rows = mismatch("uncertainty.specifications[9].window");
        let specification = |window: &str| {
            let rerun = json!({"uncertainty": {"specifications": [
                {"case_choice": true, "window": window}]}});
            known_changes("case", versions, &[&rows], (&json!({}), &rerun)).len()
        };
        assert_eq!(specification("60 weeks (about 1.2y)"), 1);
        assert_eq!(specification("3y"), 0);
    }
}
