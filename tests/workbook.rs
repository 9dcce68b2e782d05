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

/// Runs the Python `script` (openpyxl, an independent reader) on `workbook` and parses the JSON
/// it prints.
fn openpyxl_json(script: &str, workbook: &Path) -> serde_json::Value {
    let output = Command::new("python3")
        .args(["-c", script])
        .arg(workbook)
        .output()
        .expect("python3 with openpyxl (python3 -m pip install openpyxl)");
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    serde_json::from_slice(&output.stdout).unwrap()
}

/// Option sets that between them take every branch of the workbook's layout: each estimator,
/// kind of standard error, adjustment, leverage formula, debt-beta source, cost-of-debt source,
/// aggregation, country-premium method and target source, cash correction, net debt, preferred
/// equity and leases, a currency conversion, an excluded peer, raw (not excess) returns, and
/// an aggregate of one peer (whose spread result.json leaves null and the sheet gives "n/a").
const CONFIGURATIONS: [(&str, &[&str]); 5] = [
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
            // The WACC of a subject borrowing in the output currency carries preferred equity
            // and leases too: their terms are recalculated only with weights above 0 (found by
            // review). An output inflation below the case's, so that rate lies above the WACC
            // carried whole.
            "conversion.currency=CHF",
            "conversion.inflation_case=0.03",
            "conversion.inflation_output=0.01",
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
    (
        "one-peer",
        &[
            "peer.1.exclude=left out",
            "peer.2.exclude=left out",
            "peer.3.exclude=left out",
            "peer.4.exclude=left out",
            "peer.5.exclude=left out",
            "peer.6.exclude=left out",
            "peer.7.exclude=left out",
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
    common::reference_check(&demo_out, "demo");
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
        // result.json's figures, which the workbook must reproduce, are themselves recomputed
        // by numpy, scipy and the textbook formulas from the case's own files.
        common::reference_check(&out, label);
        let map = dir.path().join(format!("{label}.json"));
        write_map(case, overrides, &map);
        let mut entry = serde_json::json!({"label": label, "dir": out, "map": map});
        // Under a peers' median target, a peer's Aggregated flag set to 0 in the workbook must
        // give the WACC of the case with that peer excluded: the flag moves the target's
        // median as it moves the beta's statistic (found by review: the median read a fixed
        // list of peers).
        if label == "dimson-raw-returns" {
            let excluded = dir.path().join(format!("{label}-excluded"));
            let mut with_exclusion = overrides.to_vec();
            with_exclusion.push("peer.0.exclude=left out in the what-if");
            run(case, &with_exclusion, &excluded);
            entry["whatif"] = serde_json::json!({
                "cells": {"Unlevering!B2": 0},
                "result": excluded.join("result.json"),
            });
        }
        runs.push(entry);
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

// The workbook carries the run's own notes and each peer's flags, as result.json gives them (a
// reader who opens only the workbook saw the general cautions and nothing the run found; found
// by review). A size premium of 0.5 (a percentage typed as a decimal) makes a "Check:" note;
// openpyxl, an independent reader of the file, reads the Cover's notes block and the Betas
// sheet's Flags column back.
#[test]
fn the_workbook_carries_the_runs_notes_and_flags() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    // A target D/E of 1.5, above every peer's, adds the run's leverage caution.
    run(
        DEMO_CASE,
        &["premiums.size=0.5", "target.debt_to_equity=1.5"],
        &out,
    );
    let script = "import sys, json, openpyxl\n\
                  book = openpyxl.load_workbook(sys.argv[1])\n\
                  cover = [[c.value for c in r] for r in book['Cover'].iter_rows(max_col=2)]\n\
                  at = [r[0] for r in cover].index('Notes on this run')\n\
                  notes = []\n\
                  for mark, text in cover[at + 1:]:\n    \
                      if mark is None: break\n    \
                      notes.append([mark, text])\n\
                  betas = book['Betas']\n\
                  head = [c.value for c in betas[1]]\n\
                  col = head.index('Flags')\n\
                  flags = {r[0].value: r[col].value for r in betas.iter_rows(min_row=2) if r[col].value}\n\
                  lag = head.index(\"Slope on the previous period's index return\")\n\
                  slopes = {r[0].value: [r[lag].value, r[lag + 1].value] for r in betas.iter_rows(min_row=2) if r[col].value}\n\
                  print(json.dumps({'notes': notes, 'flags': flags, 'slopes': slopes}))";
    let read = openpyxl_json(script, &out.join("workbook.xlsx"));
    let result: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("result.json")).unwrap()).unwrap();
    let notes: Vec<&str> = (result["notes"].as_array().unwrap().iter())
        .map(|n| n.as_str().unwrap())
        .collect();
    let mut expected: Vec<&str> = notes
        .iter()
        .copied()
        .filter(|n| n.starts_with("Check: "))
        .collect();
    assert!(!expected.is_empty(), "{notes:?}");
    expected.extend(notes.iter().filter(|n| !n.starts_with("Check: ")));
    let listed: Vec<(&str, &str)> = (read["notes"].as_array().unwrap().iter())
        .map(|pair| (pair[0].as_str().unwrap(), pair[1].as_str().unwrap()))
        .collect();
    // The run's caution first, in the memo's words, with result.json's range of the peers'
    // D/E (three decimals, as the memo prints them).
    let range = &result["cautions"]["leverage_beyond_peers"];
    let caution = format!(
        "Leverage beyond the peers': the target D/E of 1.500 is above every aggregated peer's \
         ({:.3} to {:.3})",
        range[0].as_f64().unwrap(),
        range[1].as_f64().unwrap()
    );
    assert_eq!(listed[0].0, "Caution", "{listed:?}");
    assert!(listed[0].1.starts_with(&caution), "{listed:?}");
    // The riskless-debt caution beside it when result.json records one (the demo's riskless
    // debt at a given cost above the rate; since 0.18.0).
    let cautions = listed
        .iter()
        .take_while(|(mark, _)| *mark == "Caution")
        .count();
    let riskless = result["cautions"]["riskless_debt_above_risk_free"] == true;
    assert_eq!(
        (listed[..cautions].iter())
            .any(|(_, n)| n.starts_with("Riskless debt at a cost above the risk-free rate")),
        riskless,
        "{listed:?}"
    );
    assert_eq!(cautions, 1 + usize::from(riskless), "{listed:?}");
    let listed = listed[cautions..].to_vec();
    assert_eq!(listed.iter().map(|(_, n)| *n).collect::<Vec<_>>(), expected);
    for (mark, note) in listed {
        assert_eq!(
            mark == "Check",
            note.starts_with("Check: "),
            "{mark}: {note}"
        );
    }
    for peer in result["peers"].as_array().unwrap() {
        let flags: Vec<&str> = (peer["flags"].as_array().unwrap().iter())
            .map(|f| f.as_str().unwrap())
            .collect();
        let shown = if flags.is_empty() {
            "none".to_string()
        } else {
            flags.join(", ")
        };
        let name = peer["name"].as_str().unwrap();
        assert_eq!(read["flags"][name], shown.as_str());
        // The previous-period slope and its p-value (OLS): result.json's doubles, as written.
        let lag = &peer["lag_response"];
        assert_eq!(read["slopes"][name][0], lag["slope"], "{name}");
        assert_eq!(read["slopes"][name][1], lag["p_value"], "{name}");
    }
}

// The workbook prints: every sheet landscape and one page wide, the table sheets with their
// header row on every page (found by review: the demo printed as 55 pages, column B of the
// Cover on pages of its own). openpyxl reads the page setup back (its documented attributes:
// `page_setup.orientation`, `page_setup.fitToWidth`, `sheet_properties.pageSetUpPr.fitToPage`,
// `print_title_rows`).
#[test]
fn every_sheet_prints_one_page_wide() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    run(DEMO_CASE, &[], &out);
    let script = "import sys, json, openpyxl\n\
                  book = openpyxl.load_workbook(sys.argv[1])\n\
                  print(json.dumps({ws.title: [ws.page_setup.orientation, \
                  ws.page_setup.fitToWidth, ws.sheet_properties.pageSetUpPr.fitToPage, \
                  ws.print_title_rows] for ws in book.worksheets}))";
    let setup = openpyxl_json(script, &out.join("workbook.xlsx"));
    let sheets = setup.as_object().unwrap();
    assert_eq!(sheets.len(), 7, "{setup}");
    for (name, s) in sheets {
        assert_eq!(s[0], "landscape", "{name}: {s}");
        // An absent fitToWidth is 1 page, the attribute's default in ECMA-376 (CT_PageSetup;
        // from memory), which openpyxl reads as None; fitToPage is what turns fitting on.
        assert!(s[1].is_null() || s[1] == 1, "{name}: {s}");
        assert_eq!(s[2], true, "{name}: {s}");
        let titled = ["Unlevering", "Betas", "Returns"].contains(&name.as_str());
        assert_eq!(s[3].as_str() == Some("$1:$1"), titled, "{name}: {s}");
    }
}

// The Inputs sheet's key column names a key that sets the row, or says none does (found by
// review: under a rating's spread the pre-tax cost of debt named debt.cost_pre_tax, which the
// run then notes as not used, README "[debt]"). openpyxl reads the column back.
#[test]
fn the_inputs_sheet_names_only_keys_that_set_a_row() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    run(DEMO_CASE, &["debt.source=rating"], &out);
    let script = "import sys, json, openpyxl\n\
                  ws = openpyxl.load_workbook(sys.argv[1])['Inputs']\n\
                  print(json.dumps({r[0].value: r[4].value for r in ws.iter_rows(min_row=3) \
                  if r[0].value}))";
    let keys = openpyxl_json(script, &out.join("workbook.xlsx"));
    assert_eq!(
        keys["Pre-tax cost of debt"], "(a formula; no case key sets it)",
        "{keys}"
    );
    assert_eq!(
        keys["Credit spread over the risk-free rate"], "debt.rating (a row of debt.rating_table)",
        "{keys}"
    );
    assert_eq!(
        keys["Equity risk premium"], "market.equity_risk_premium",
        "{keys}"
    );
}
