//! The uncertainty figures against independent computations: numpy's own regressions, textbook
//! formulas and random draws (tests/reference/check_uncertainty.py), a numpy simulation of peers
//! with correlated residuals (tests/reference/coverage_simulation.py), and the specification
//! range against separate `hurdle run --set` runs.

mod common;

use std::path::Path;
use std::process::Command;

use common::{copy_demo_case, hurdle, number};

fn run(case: &Path, out: &Path, extra: &[&str]) -> serde_json::Value {
    let mut arguments = vec![
        "run".to_string(),
        case.display().to_string(),
        "--out".into(),
        out.display().to_string(),
    ];
    arguments.extend(extra.iter().map(|s| s.to_string()));
    let arguments: Vec<&str> = arguments.iter().map(String::as_str).collect();
    let output = hurdle(&arguments);
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    serde_json::from_slice(&std::fs::read(out.join("result.json")).unwrap()).unwrap()
}

fn python(script: &str, arguments: &[&str]) {
    let path = format!("{}/tests/reference/{script}", env!("CARGO_MANIFEST_DIR"));
    let output = Command::new("python3")
        .arg(&path)
        .args(arguments)
        .output()
        .expect("python3 with numpy must be installed (python3 -m pip install numpy scipy)");
    let stdout = String::from_utf8_lossy(&output.stdout);
    assert!(
        output.status.success() && stdout.contains(" 0 failed"),
        "{script}\n{stdout}\n{}",
        String::from_utf8_lossy(&output.stderr)
    );
}

/// Two-sided p-values 2·P(T > |z|) of Student's t at df, each pair's, from scipy
/// (`2 * scipy.stats.t.sf(abs(z), df)`) in one python3 call; the z values go as JSON, whose
/// shortest round-trip decimals give python the same doubles.
fn scipy_two_sided_p(pairs: &[(f64, usize)]) -> Vec<f64> {
    common::python_json(
        "import json, sys; from scipy import stats; \
         print(json.dumps([float(2 * stats.t.sf(abs(z), df)) \
         for z, df in json.loads(sys.argv[1])]))",
        &[&serde_json::to_string(pairs).unwrap()],
    )
}

// numpy refits every peer from returns.csv and recomputes the beta-error correlation (1e-9), the
// leave-one-out WACCs (1e-9) and both intervals from its own draws (binomial bounds, in the
// script).
#[test]
fn numpy_recomputes_the_correlation_the_leave_one_out_table_and_both_intervals() {
    let dir = tempfile::tempdir().unwrap();
    copy_demo_case(&dir.path().join("case"));
    let out = dir.path().join("out");
    run(&dir.path().join("case/case.toml"), &out, &[]);
    python("check_uncertainty.py", &[out.to_str().unwrap()]);
}

// The same check where it can tell the draws' distribution apart. With 12 monthly returns each
// beta's t has 10 degrees of freedom (the demo's 52-58 make t and the normal differ by about a
// basis point, within the default 10,000 draws' noise): at 200,000 draws on both sides the
// binomial bound at the 5th percentile is 0.0034 in probability, and normal draws in place of
// Student's t sit at 0.042 and 0.963 (tried with a copy of the script). The second run draws the
// ERP and the risk-free rate from ranges (README "[uncertainty]"), which numpy draws uniformly
// too; leaving the rate's range out of numpy's draws puts hurdle's percentiles at 0.026 and
// 0.979 (tried likewise).
#[test]
fn numpy_tells_student_t_draws_and_drawn_rates_apart() {
    let dir = tempfile::tempdir().unwrap();
    copy_demo_case(&dir.path().join("case"));
    let case = dir.path().join("case/case.toml");
    let configurations: [&[&str]; 2] = [
        &[
            "beta.lookback=12",
            "beta.min_observations=12",
            "uncertainty.draws=200000",
        ],
        &[
            "uncertainty.equity_risk_premium=[0.04, 0.07]",
            "uncertainty.risk_free_rate=[0.02, 0.035]",
            "uncertainty.draws=100000",
        ],
    ];
    for (k, sets) in configurations.iter().enumerate() {
        let out = dir.path().join(format!("out{k}"));
        common::run_case_with(&case, &out, sets);
        python("check_uncertainty.py", &[out.to_str().unwrap()]);
    }
}

// Coverage of the true WACC on simulated peers with correlated residuals: near 90% with joint
// draws, far below with independent ones (bounds reasoned in the script).
#[test]
fn joint_draws_cover_the_true_wacc_where_independent_draws_do_not() {
    let dir = tempfile::tempdir().unwrap();
    python(
        "coverage_simulation.py",
        &[env!("CARGO_BIN_EXE_hurdle"), dir.path().to_str().unwrap()],
    );
}

// Each row of the specification range is `hurdle run` with the row's `--set` values: the same
// computation, so the WACC must be equal to the last bit.
#[test]
fn specification_rows_equal_separate_set_runs() {
    let dir = tempfile::tempdir().unwrap();
    copy_demo_case(&dir.path().join("case"));
    let case = dir.path().join("case/case.toml");
    let base = run(&case, &dir.path().join("base"), &[]);
    let rows = base["uncertainty"]["specifications"].as_array().unwrap();
    assert_eq!(rows.len(), 9, "three frequencies by three windows");
    assert_eq!(rows.iter().filter(|r| r["case_choice"] == true).count(), 1);
    // The demo's data cover every row (README's demo: prices from 2020 on), so all nine are
    // compared; a row the case refused would leave this test checking fewer.
    let mut compared = 0;
    for (k, row) in rows.iter().enumerate() {
        let Some(wacc) = row["wacc"].as_f64() else {
            assert!(row["reason"].is_string(), "{row}");
            continue;
        };
        compared += 1;
        let mut sets = Vec::new();
        for assignment in row["overrides"].as_array().unwrap() {
            sets.push("--set".to_string());
            sets.push(assignment.as_str().unwrap().to_string());
        }
        sets.extend([
            "--set".into(),
            "uncertainty.specification_range=false".into(),
        ]);
        let sets: Vec<&str> = sets.iter().map(String::as_str).collect();
        let rerun = run(&case, &dir.path().join(format!("row{k}")), &sets);
        assert_eq!(number(&rerun, "wacc"), wacc, "{row}");
    }
    assert_eq!(compared, 9);
}

// The specification range's note restates what the rows show beside the intervals: where the
// case's own row falls among the others and how many lie outside the 90% estimation interval.
// Recounted here from result.json's rows and percentiles (the note's two-decimal percentages):
// the rank, the count and the number outside come from the rows, not from an earlier output.
#[test]
fn the_specification_note_places_the_case_among_its_rows() {
    let dir = tempfile::tempdir().unwrap();
    copy_demo_case(&dir.path().join("case"));
    let case = dir.path().join("case/case.toml");
    let base = run(&case, &dir.path().join("base"), &["--no-figures"]);
    let u = &base["uncertainty"];
    let rows = u["specifications"].as_array().unwrap();
    let own = rows.iter().find(|r| r["case_choice"] == true).unwrap()["wacc"]
        .as_f64()
        .unwrap();
    let others: Vec<f64> = rows
        .iter()
        .filter(|r| r["case_choice"] != true)
        .filter_map(|r| r["wacc"].as_f64())
        .collect();
    let (p05, p95) = (
        number(&base, "uncertainty.p05"),
        number(&base, "uncertainty.p95"),
    );
    let outside = others.iter().filter(|&&w| w < p05 || w > p95).count();
    let low = others.iter().copied().fold(f64::INFINITY, f64::min);
    let high = others.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let which = match (own < low, own > high) {
        (true, _) => Some("lowest"),
        (_, true) => Some("highest"),
        _ => None,
    };
    // A guard, not a figure: the demo must take both parts of the note (its own row at an end
    // of the range, and some rows outside the interval), or this test checks less than it says.
    assert!(which.is_some() && outside > 0, "{rows:?}");
    let pct = |x: f64| format!("{:.2}%", x * 100.0);
    let expected = format!(
        "Specification range: the case's own frequency and window give {}, the {} WACC of \
         the {} rows (the others {} to {}); {outside} of the other {} {} outside the 90% \
         interval of the first Monte Carlo ({} to {})",
        pct(own),
        which.unwrap(),
        others.len() + 1,
        pct(low),
        pct(high),
        others.len(),
        if outside == 1 { "lies" } else { "lie" },
        pct(p05),
        pct(p95)
    );
    let notes = base["notes"].to_string();
    assert!(notes.contains(&expected), "{expected}\n{notes}");
    let memo = std::fs::read_to_string(dir.path().join("base/memo.md")).unwrap();
    assert!(memo.contains("\nThe case's own frequency and window give"));
}

// A first and a last rolling window whose betas differ by more than their errors allow are
// noted for that peer, and only for it: the two-sample z of Paternoster et al. 1998, computed
// here from `hurdle rolling`'s rolling.csv, its two-sided p-value from Student's t at the smaller
// window's residual degrees of freedom (N − 2 under OLS; scipy's `2·stats.t.sf(|z|, df)`, not
// the statrs library hurdle's own t rests on), adjusted for the peers tested by Holm's step-down
// method written out here from its definition (Holm 1979, Scand. J. Statistics 6(2)), noted
// below 5%. On the demo's first three peers (one of them, Dunmere, with a first-to-last z of
// 2.7), so that one is noted and the others are not; on all eight the same peer is not (its
// p of 0.011 is 0.09 after the adjustment).
#[test]
fn a_rolling_beta_that_moved_beyond_its_error_is_noted() {
    for peers in [3, 8] {
        let dir = tempfile::tempdir().unwrap();
        copy_demo_case(&dir.path().join("case"));
        let case = dir.path().join("case/case.toml");
        let text = std::fs::read_to_string(&case).unwrap();
        let blocks: Vec<usize> = text.match_indices("[[peer]]").map(|(i, _)| i).collect();
        let kept = blocks.get(peers).map_or(text.as_str(), |&end| &text[..end]);
        std::fs::write(&case, kept).unwrap();
        let base = run(&case, &dir.path().join("base"), &["--no-figures"]);
        let rolling_dir = dir.path().join("rolling");
        let output = hurdle(&[
            "rolling",
            case.to_str().unwrap(),
            "--out",
            rolling_dir.to_str().unwrap(),
        ]);
        assert!(output.status.success());
        let table = std::fs::read_to_string(rolling_dir.join("rolling.csv")).unwrap();
        let mut by_peer: std::collections::BTreeMap<String, Vec<(f64, f64, usize)>> =
            Default::default();
        for line in table.lines().skip(1) {
            let cells: Vec<&str> = line.split(',').collect();
            let (beta, se) = (cells[2].parse().unwrap(), cells[3].parse().unwrap());
            let observations: usize = cells[4].parse().unwrap();
            by_peer
                .entry(cells[0].to_string())
                .or_default()
                .push((beta, se, observations));
        }
        assert_eq!(by_peer.len(), peers);
        let firsts_and_lasts: Vec<(&String, f64, f64, usize)> = by_peer
            .iter()
            .map(|(peer, points)| {
                let ((b1, s1, n1), (b2, s2, n2)) = (points[0], points[points.len() - 1]);
                let z: f64 = (b2 - b1) / (s1 * s1 + s2 * s2).sqrt();
                (peer, b1, z, n1.min(n2) - 2)
            })
            .collect();
        let p_values = scipy_two_sided_p(
            &(firsts_and_lasts.iter())
                .map(|&(_, _, z, df)| (z, df))
                .collect::<Vec<_>>(),
        );
        let tests: Vec<(&String, f64, f64, f64)> = (firsts_and_lasts.iter())
            .zip(&p_values)
            .map(|(&(peer, b1, z, _), &p)| (peer, b1, z, p))
            .collect();
        // Holm: the k-th smallest p (from 0) times m − k, a running maximum, capped at 1.
        let mut order: Vec<usize> = (0..tests.len()).collect();
        order.sort_by(|&a, &b| tests[a].3.total_cmp(&tests[b].3));
        let mut adjusted = vec![0.0; tests.len()];
        let mut running = 0.0_f64;
        for (k, &i) in order.iter().enumerate() {
            running = running.max(((tests.len() - k) as f64 * tests[i].3).min(1.0));
            adjusted[i] = running;
        }
        let notes = base["notes"].to_string();
        let mut noted = 0;
        for ((peer, b1, z, _), adjusted) in tests.iter().zip(&adjusted) {
            // No adjusted p lies within 1e-6 of 5%, so the two computations cannot part there.
            assert!((adjusted - 0.05).abs() > 1e-6, "{peer} {adjusted}");
            let prefix = format!("{peer}: the rolling beta moved from");
            if *adjusted < 0.05 {
                noted += 1;
                assert!(
                    notes.contains(&format!("{prefix} {b1:.2}"))
                        && notes.contains(&format!("{:.1} standard errors", z.abs()))
                        && notes.contains(&format!(
                            "p = {adjusted:.3} after Holm's adjustment for the {peers} peers tested"
                        )),
                    "{peer} z {z}: {notes}"
                );
            } else {
                assert!(!notes.contains(&prefix), "{peer} z {z}: {notes}");
            }
        }
        // A guard, not a figure: three peers take both branches (a peer noted and a peer not).
        if peers == 3 {
            assert!(noted >= 1 && noted < peers, "{notes}");
        }
    }
}

// A cross-sectional Vasicek prior needs two peers with different betas (Vasicek 1973: the
// prior is the cross-section's mean and variance). With exactly two peers aggregated the case
// is valid, but leaving one out leaves one: that row has no WACC and says why, and the run
// goes on (it used to stop the whole run).
#[test]
fn leave_one_out_of_two_vasicek_peers_has_no_wacc_and_says_why() {
    let dir = tempfile::tempdir().unwrap();
    copy_demo_case(&dir.path().join("case"));
    let out = dir.path().join("out");
    let mut sets = vec!["--set".to_string(), "beta.adjustment=vasicek".to_string()];
    for peer in 2..8 {
        sets.extend(["--set".to_string(), format!("peer.{peer}.exclude=kept out")]);
    }
    let sets: Vec<&str> = sets.iter().map(String::as_str).collect();
    let result = run(&dir.path().join("case/case.toml"), &out, &sets);
    let rows = result["uncertainty"]["leave_one_out"].as_array().unwrap();
    assert_eq!(rows.len(), 2);
    // The peer-set draws that resample one peer twice (equal betas: a prior of variance 0, so
    // each beta shrinks to itself) count at that limit instead of being dropped: every draw
    // gives a WACC.
    let u = &result["uncertainty"];
    assert_eq!(u["peer_set"]["draws"], u["draws"]);
    for row in rows {
        assert!(row["wacc"].is_null(), "{row}");
        assert!(row["reason"]
            .as_str()
            .unwrap()
            .contains("Vasicek prior needs two"));
    }
    let memo = std::fs::read_to_string(out.join("memo.md")).unwrap();
    assert!(memo.contains("n/a (one peer left: a cross-sectional Vasicek prior needs two"));
    // One aggregated peer: leaving it out leaves none, said as such (and the run goes on).
    let mut sets = Vec::new();
    for peer in 1..8 {
        sets.extend(["--set".to_string(), format!("peer.{peer}.exclude=kept out")]);
    }
    let sets: Vec<&str> = sets.iter().map(String::as_str).collect();
    let one = dir.path().join("one");
    let result = run(&dir.path().join("case/case.toml"), &one, &sets);
    let rows = result["uncertainty"]["leave_one_out"].as_array().unwrap();
    assert!(rows.len() == 1 && rows[0]["wacc"].is_null() && rows[0].get("reason").is_none());
    let memo = std::fs::read_to_string(one.join("memo.md")).unwrap();
    assert!(memo.contains("n/a (no peer left)"), "{memo}");
    // The demo's own receipt has no `reason` in its rows (a WACC in each).
    let plain = run(
        &dir.path().join("case/case.toml"),
        &dir.path().join("plain"),
        &[],
    );
    for row in plain["uncertainty"]["leave_one_out"].as_array().unwrap() {
        assert!(
            row["wacc"].is_number() && row.get("reason").is_none(),
            "{row}"
        );
    }
}

// The same peers listed in another order draw the same intervals to the bit: the draws take
// the peers in the order of their names (found by review: reversing the [[peer]] blocks moved
// the percentiles, the seeded normals going to other peers). A test of the property itself,
// against the case's own run.
#[test]
fn reordering_the_peers_leaves_the_intervals_unchanged() {
    let dir = tempfile::tempdir().unwrap();
    copy_demo_case(&dir.path().join("case"));
    let case = dir.path().join("case/case.toml");
    let base = run(&case, &dir.path().join("base"), &["--no-figures"]);
    let text = std::fs::read_to_string(&case).unwrap();
    let first = text.find("[[peer]]").unwrap();
    let (head, peers) = text.split_at(first);
    let mut blocks: Vec<&str> = peers
        .split("[[peer]]")
        .filter(|b| !b.trim().is_empty())
        .collect();
    blocks.reverse();
    let reversed: String = blocks.iter().map(|b| format!("[[peer]]{b}\n")).collect();
    std::fs::write(&case, format!("{head}{reversed}")).unwrap();
    let other = run(&case, &dir.path().join("reversed"), &["--no-figures"]);
    assert_eq!(
        other["peers"][0]["name"], base["peers"][7]["name"],
        "the peers are reversed"
    );
    for key in [
        "p05",
        "p25",
        "p50",
        "p75",
        "p95",
        "mean",
        "peer_set",
        "histogram",
    ] {
        assert_eq!(other["uncertainty"][key], base["uncertainty"][key], "{key}");
    }
}

// What an exclusion is worth (found by review: the memo never showed it): with two peers
// excluded, putting one back gives the WACC of the case that excludes only the other, and
// putting both back the WACC of the case that excludes neither, bit for bit (the same chain
// over the same estimates).
#[test]
fn excluded_peers_put_back_give_the_runs_without_their_exclusion() {
    let dir = tempfile::tempdir().unwrap();
    copy_demo_case(&dir.path().join("case"));
    let case = dir.path().join("case/case.toml");
    let (dunmere, fenhallow) = ("peer.2.exclude=left out", "peer.4.exclude=left out");
    let both = run(
        &case,
        &dir.path().join("both"),
        &["--no-figures", "--set", dunmere, "--set", fenhallow],
    );
    let rows = both["uncertainty"]["put_back"].as_array().unwrap();
    let names: Vec<&str> = rows.iter().map(|r| r["peer"].as_str().unwrap()).collect();
    assert_eq!(
        names,
        [
            "Dunmere Hydraulics",
            "Fenhallow Seals",
            "all 2 excluded peers"
        ]
    );
    let only = |set: &str, name: &str| {
        let result = run(
            &case,
            &dir.path().join(name),
            &["--no-figures", "--set", set],
        );
        number(&result, "wacc")
    };
    assert_eq!(
        rows[0]["wacc"].as_f64().unwrap(),
        only(fenhallow, "fenhallow")
    );
    assert_eq!(rows[1]["wacc"].as_f64().unwrap(), only(dunmere, "dunmere"));
    let neither = run(&case, &dir.path().join("neither"), &["--no-figures"]);
    assert_eq!(rows[2]["wacc"].as_f64().unwrap(), number(&neither, "wacc"));
    assert!(neither["uncertainty"].get("put_back").is_none());
    let memo = std::fs::read_to_string(dir.path().join("both/memo.md")).unwrap();
    assert!(memo.contains("**Excluded peers put back.**"), "{memo}");
}

// A peer set the valuation refuses gets its row without a WACC and with the valuation's
// reason (found by review: the put-back row skipped the debt-beta checks and showed a WACC no
// run gives). Under Harris–Pringle with a given subject debt beta of 0.93, the four peers
// with a debt beta of 0 put back together lower the aggregate unlevered beta below 0.93, which
// the case refuses (README, "Sanity rules": a subject's debt beta above the asset beta).
#[test]
fn a_peer_set_the_valuation_refuses_has_no_put_back_wacc() {
    let dir = tempfile::tempdir().unwrap();
    copy_demo_case(&dir.path().join("case"));
    let case = dir.path().join("case/case.toml");
    let mut sets: Vec<String> = [
        "leverage.formula=harris-pringle",
        "leverage.debt_beta_source=given",
        "leverage.debt_beta=0.93",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    for i in [2, 4, 5, 7] {
        sets.push(format!("peer.{i}.debt_beta=0"));
        sets.push(format!("peer.{i}.exclude=low"));
    }
    let mut arguments = vec!["--no-figures".to_string()];
    for set in &sets {
        arguments.extend(["--set".to_string(), set.clone()]);
    }
    let arguments: Vec<&str> = arguments.iter().map(String::as_str).collect();
    let result = run(&case, &dir.path().join("out"), &arguments);
    let rows = result["uncertainty"]["put_back"].as_array().unwrap();
    let all = rows.last().unwrap();
    assert_eq!(all["peer"], "all 4 excluded peers");
    assert!(all["wacc"].is_null(), "{all}");
    assert!(
        all["reason"]
            .as_str()
            .unwrap()
            .contains("is above the aggregate unlevered beta"),
        "{all}"
    );
    // The same peers aggregated in a run of their own: refused with that reason.
    let mut rerun = vec!["run", case.to_str().unwrap(), "--no-figures", "--out"];
    let out = dir.path().join("rerun");
    rerun.push(out.to_str().unwrap());
    let kept: Vec<String> = sets
        .iter()
        .filter(|s| !s.contains("exclude"))
        .map(|s| s.to_string())
        .collect();
    for set in &kept {
        rerun.extend(["--set", set.as_str()]);
    }
    let output = hurdle(&rerun);
    assert_eq!(output.status.code(), Some(2));
    assert!(
        String::from_utf8_lossy(&output.stderr).contains("is above the aggregate unlevered beta")
    );
}

// Student's t has a finite variance only above 2 degrees of freedom (textbook): a peer listed
// for its last 85 trading days has 3 monthly returns, so its OLS beta has 1 and its draws no
// finite variance. Under the mean every draw reaches the WACC, so the draws' mean is not given
// (null; the memo says why) while the percentiles are; under the median of eight peers the one
// heavy-tailed draw is held between the others' (a middle order statistic of seven
// finite-variance draws bounds it), so the mean is given. (Found by review: five seeds gave
// means from −16% to 11% around a point estimate of 10%; then the median's mean, which settled
// to 0.6 bp, was withheld too.)
#[test]
fn no_mean_of_draws_without_a_finite_variance() {
    let dir = tempfile::tempdir().unwrap();
    copy_demo_case(&dir.path().join("case"));
    let case = dir.path().join("case/case.toml");
    let prices = dir.path().join("case/data/peers/ivelbrook.csv");
    let text = std::fs::read_to_string(&prices).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    let kept = [&lines[..1], &lines[lines.len() - 85..]].concat();
    std::fs::write(&prices, kept.join("\n") + "\n").unwrap();
    let fewer = ["--set", "beta.min_observations=3"];
    let median = run(&case, &dir.path().join("median"), &fewer);
    let fewest = (median["peers"].as_array().unwrap().iter())
        .map(|p| p["degrees_of_freedom"].as_u64().unwrap())
        .min()
        .unwrap();
    assert!(fewest <= 2, "{fewest}");
    assert!(median["uncertainty"]["mean"].is_f64());
    let mean_sets = [fewer[0], fewer[1], "--set", "leverage.aggregation=\"mean\""];
    let mean = run(&case, &dir.path().join("mean"), &mean_sets);
    assert!(mean["uncertainty"]["mean"].is_null());
    assert!(mean["uncertainty"]["p50"].is_f64());
    let memo = std::fs::read_to_string(dir.path().join("mean/memo.md")).unwrap();
    assert!(memo.contains("no mean is given: some aggregated peers' betas have 2 or fewer"));
}
