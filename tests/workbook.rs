//! `workbook.xlsx` checked by an independent spreadsheet engine.
//!
//! LibreOffice recalculates the workbook of a demo run headless (with recalculation on load
//! forced; see tests/reference/check_workbook.py for why that matters) and every formula cell is
//! compared with `result.json` to 1e-9 relative; the ERP and target D/E input cells are changed
//! with openpyxl and the recomputed WACC is compared with `hurdle run --set` of the same values;
//! and the check is shown to catch a deliberately wrong cached value and a wrong formula.
//! Needs `soffice` (Debian's libreoffice-calc-nogui) and the Python package openpyxl; `.ci/run`
//! installs both. Other configurations (Dimson, Scholes–Williams, Vasicek, robust standard
//! errors, credit-spread debt betas, Miles–Ezzell) are recalculated in the same LibreOffice start
//! to keep the number of starts small.

use std::path::Path;
use std::process::Command;

mod common;

use common::{hurdle, DEMO_CASE};

/// The figure map of the run of `case` with `overrides`, written as JSON to `path`.
fn write_map(case: &str, overrides: &[&str], path: &Path) {
    let overrides: Vec<String> = overrides.iter().map(|s| s.to_string()).collect();
    let case = hurdle::case::read_case(Path::new(case), &overrides).expect("the case reads");
    let inputs = hurdle::valuation::load_inputs(case).expect("the data read");
    let valuation = hurdle::audit::evaluate(&inputs, "2026-01-01T00:00:00Z").expect("it values");
    let map = hurdle::report::workbook::figure_map(&valuation).expect("the layout is built");
    std::fs::write(path, serde_json::to_vec_pretty(&map).unwrap()).unwrap();
}

/// Runs `hurdle run` on `case` with overrides into `out`.
fn run(case: &str, overrides: &[&str], out: &Path) {
    let mut args = vec!["run", case, "--out", out.to_str().unwrap()];
    for o in overrides {
        args.extend(["--set", o]);
    }
    let output = hurdle(&args);
    assert!(
        output.status.success(),
        "hurdle run failed: {}",
        String::from_utf8_lossy(&output.stderr)
    );
}

/// Option sets that between them take every branch of the workbook's layout: each estimator,
/// kind of standard error, adjustment, leverage formula, debt-beta source, cost-of-debt source,
/// aggregation, country-premium method and target source, cash correction, net debt, preferred
/// equity and leases, a currency conversion, an excluded peer, and raw (not excess) returns.
const CONFIGURATIONS: [(&str, &[&str]); 4] = [
    (
        "dimson",
        &[
            "beta.method=dimson",
            "beta.dimson_leads=1",
            "beta.std_errors=hc1",
            "beta.adjustment=vasicek",
            "leverage.formula=miles-ezzell",
            "leverage.debt_beta_source=credit-spread",
            "leverage.aggregation=trimmed-mean",
            "leverage.trim_fraction=0.125",
            "debt.source=rating",
            "premiums.country=0.01",
            "premiums.country_method=exposure",
            "premiums.country_exposure=0.8",
            "conversion.currency=USD",
            "conversion.inflation_case=0.02",
            "conversion.inflation_output=0.03",
        ],
    ),
    (
        "scholes-williams",
        &[
            "beta.method=scholes-williams",
            "beta.std_errors=newey-west",
            "beta.adjustment=vasicek",
            "beta.vasicek_prior_mean=1.0",
            "beta.vasicek_prior_variance=0.09",
            "leverage.formula=harris-pringle",
            "leverage.debt_beta_source=given",
            "leverage.debt_beta=0.1",
            "leverage.aggregation=market-cap-weighted",
            "leverage.operations_beta=true",
            "peer.0.debt_beta=0.2",
            "peer.0.cost_of_debt=0.05",
            "peer.2.exclude=a test of a peer left out",
            "debt.source=coverage",
            "premiums.country=0.01",
            "premiums.country_method=beta-scaled",
            "preferred.weight=0.05",
            "preferred.cost=0.07",
            "leases.weight=0.04",
            "leases.cost_pre_tax=0.06",
        ],
    ),
    (
        "ols-robust",
        &[
            "beta.std_errors=newey-west",
            "beta.adjustment=none",
            "beta.frequency=weekly",
            "beta.lookback=104",
            "beta.min_observations=52",
            "leverage.formula=conine",
            "leverage.debt_beta_source=given",
            "leverage.debt_beta=0.05",
            "target.source=subject",
            "leases.weight=0.03",
        ],
    ),
    (
        "dimson-raw-returns",
        &[
            "beta.method=dimson",
            "beta.dimson_lags=2",
            "leverage.debt_measure=net",
            "leverage.aggregation=mean",
            "target.source=peer-median",
            // A peer left out, so the target's MEDIAN reads the aggregated peers only.
            "peer.2.exclude=\"a peer left out of the median\"",
        ],
    ),
];

// LibreOffice Calc recomputes every formula of the demo's workbook, and of the workbooks of
// every configuration above, to result.json's figures (1e-9 relative, reasoned in
// check_workbook.py); on the demo the what-if matches `hurdle run --set`, and both tampered
// copies are caught. One LibreOffice start converts every file.
#[test]
fn libreoffice_recomputes_every_workbook_layout() {
    let dir = tempfile::tempdir().unwrap();
    let (erp, de) = (0.065, 0.6);
    let demo_out = dir.path().join("demo");
    run(DEMO_CASE, &[], &demo_out);
    let whatif = dir.path().join("whatif");
    let whatif_sets = [
        format!("market.equity_risk_premium={erp}"),
        format!("target.debt_to_equity={de}"),
    ];
    run(DEMO_CASE, &[&whatif_sets[0], &whatif_sets[1]], &whatif);
    write_map(DEMO_CASE, &[], &dir.path().join("demo.json"));
    let mut runs = vec![serde_json::json!({
        "label": "demo",
        "dir": demo_out,
        "map": dir.path().join("demo.json"),
        "whatif": {
            "EquityRiskPremium": erp,
            "TargetDebtToEquity": de,
            "result": whatif.join("result.json"),
        },
    })];
    // Raw returns: the demo without its risk-free series.
    let raw_case = dir.path().join("raw/case.toml");
    common::copy_demo_case(raw_case.parent().unwrap());
    let text = std::fs::read_to_string(&raw_case).unwrap();
    let text = text.replace(
        "[market.risk_free_series]\nyields = \"data/risk_free.csv\"\n",
        "",
    );
    assert!(!text.contains("risk_free_series"));
    std::fs::write(&raw_case, text).unwrap();
    for (label, overrides) in CONFIGURATIONS {
        let case = if label.ends_with("raw-returns") {
            raw_case.to_str().unwrap()
        } else {
            DEMO_CASE
        };
        let out = dir.path().join(label);
        run(case, overrides, &out);
        let map = dir.path().join(format!("{label}.json"));
        write_map(case, overrides, &map);
        runs.push(serde_json::json!({"label": label, "dir": out, "map": map}));
    }
    let plan = dir.path().join("plan.json");
    std::fs::write(
        &plan,
        serde_json::to_vec(&serde_json::json!({"runs": runs})).unwrap(),
    )
    .unwrap();
    let script = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/reference/check_workbook.py"
    );
    let output = Command::new("python3")
        .arg(script)
        .arg(&plan)
        .output()
        .expect("python3 runs");
    let stdout = String::from_utf8_lossy(&output.stdout);
    assert!(
        output.status.success() && stdout.contains(" 0 failed"),
        "workbook check failed (needs soffice from libreoffice-calc-nogui and openpyxl):\n{stdout}\n{}",
        String::from_utf8_lossy(&output.stderr)
    );
    assert!(stdout.contains("tampered cache: caught at"), "{stdout}");
    assert!(stdout.contains("tampered formula: caught at"), "{stdout}");
    println!("{stdout}");
}

// A long peer name widens the sheets' name column, up to 60 characters (found by review: a
// 60-character name was cut off in a 26-wide column), as openpyxl reads the widths back.
#[test]
fn long_peer_names_widen_the_name_column() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    // 50 characters.
    let name = "Brenvale Fluid Systems Holdings and Partners Group";
    assert_eq!(name.chars().count(), 50);
    let renamed = format!("peer.0.name={name}");
    run(DEMO_CASE, &[renamed.as_str()], &out);
    let script = "import sys, openpyxl\n\
                  book = openpyxl.load_workbook(sys.argv[1])\n\
                  print(' '.join(str(book[s].column_dimensions['A'].width) for s in sys.argv[2:]))";
    let output = Command::new("python3")
        .args(["-c", script])
        .arg(out.join("workbook.xlsx"))
        .args(["Betas", "Returns", "Unlevering"])
        .output()
        .expect("python3 runs");
    let widths = String::from_utf8_lossy(&output.stdout);
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    // The name's 50 characters and 2 of margin; openpyxl reads rust_xlsxwriter's stored width,
    // which adds Excel's padding of about 0.71 characters to the width asked for.
    for width in widths.split_whitespace() {
        let width: f64 = width.parse().unwrap();
        assert!((52.0..53.0).contains(&width), "{widths}");
    }
}
