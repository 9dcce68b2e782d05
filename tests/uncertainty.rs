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

// A case that writes its rolling window (README's default written out: half the 60-period
// window, 30, and 24 observations) still gets every specification row: the rows scale the
// rolling keys as they scale the minimum observations, and record them, so the 2-year monthly
// row (24 periods) equals `hurdle run --set` with its recorded values.
#[test]
fn specification_rows_scale_a_rolling_window_the_case_sets() {
    let dir = tempfile::tempdir().unwrap();
    copy_demo_case(&dir.path().join("case"));
    let case = dir.path().join("case/case.toml");
    let written = [
        "--set",
        "beta.rolling_window=30",
        "--set",
        "beta.rolling_min_observations=24",
    ];
    let base = run(&case, &dir.path().join("base"), &written);
    let rows = base["uncertainty"]["specifications"].as_array().unwrap();
    assert!(rows.iter().all(|r| r["wacc"].is_number()), "{rows:?}");
    let monthly = rows
        .iter()
        .find(|r| r["frequency"] == "monthly" && r["window"] == "2y")
        .unwrap();
    let mut sets: Vec<String> = written.iter().map(|s| s.to_string()).collect();
    for assignment in monthly["overrides"].as_array().unwrap() {
        sets.extend([
            "--set".to_string(),
            assignment.as_str().unwrap().to_string(),
        ]);
    }
    assert!(
        sets.iter().any(|s| s.starts_with("beta.rolling_window=")),
        "{sets:?}"
    );
    let sets: Vec<&str> = sets.iter().map(String::as_str).collect();
    let rerun = run(&case, &dir.path().join("row"), &sets);
    assert_eq!(number(&rerun, "wacc"), monthly["wacc"].as_f64().unwrap());
    // A rolling window every row holds (12 periods) is left as the case writes it: no row
    // records a rolling override (so receipts written before the scaling still verify).
    let fits = run(
        &case,
        &dir.path().join("fits"),
        &["--set", "beta.rolling_window=12"],
    );
    for row in fits["uncertainty"]["specifications"].as_array().unwrap() {
        let overrides = row["overrides"].as_array().unwrap();
        assert!(
            overrides
                .iter()
                .all(|o| !o.as_str().unwrap().starts_with("beta.rolling")),
            "{row}"
        );
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
