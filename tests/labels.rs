//! Schema 2's names on the demo case: every renamed field, column, case key and option value is
//! present under its new name and absent under its old one; an old case key or option value is
//! refused with a message naming the new one; a version-1 receipt is refused by `verify` with the
//! reason; a non-default Blume weight is applied (checked by hand and by the numpy/scipy reference
//! script, which reads the weight from result.json's settings). The list of renames checked here is
//! the one README's Changelog publishes, and the test checks that README carries each of them.

use std::path::Path;
use std::process::Output;

mod common;

use common::{copy_demo_case, hurdle, number, reference_check, DEMO_CASE};

/// Renamed `result.json` fields, `(path of the object holding it, old, new)`; `[]` is every
/// element of an array.
const JSON_RENAMES: [(&str, &str, &str); 8] = [
    ("peers[]", "adjusted_beta", "shrunk_beta"),
    (
        "peers[]",
        "cash_corrected_unlevered_beta",
        "operations_beta",
    ),
    ("peers[]", "cash_share_of_capital", "operating_share"),
    ("beta", "cash_corrected", "uses_operations_beta"),
    ("beta", "unlevered_plain", "aggregate_of_unlevered"),
    (
        "beta",
        "unlevered_cash_corrected",
        "aggregate_of_operations",
    ),
    (
        "leverage_comparison[]",
        "peer_cash_corrected_unlevered_betas",
        "peer_operations_betas",
    ),
    ("settings.leverage", "cash_correction", "operations_beta"),
];

/// Renamed `peers.csv` columns.
const CSV_RENAMES: [(&str, &str); 3] = [
    ("adjusted_beta", "shrunk_beta"),
    ("cash_corrected_unlevered_beta", "operations_beta"),
    ("cash_share_of_capital", "operating_share"),
];

/// Renamed case keys, as `--set` paths.
const KEY_RENAMES: [(&str, &str); 2] = [
    ("leverage.cash_correction", "leverage.operations_beta"),
    ("premiums.country_lambda", "premiums.country_exposure"),
];

/// Renamed values of `premiums.country_method`.
const OPTION_RENAMES: [(&str, &str); 3] = [
    ("added", "flat"),
    ("lambda", "exposure"),
    ("beta", "beta-scaled"),
];

fn text(output: &Output) -> String {
    format!(
        "{}{}",
        String::from_utf8_lossy(&output.stdout),
        String::from_utf8_lossy(&output.stderr)
    )
}

fn run_demo(out: &Path, sets: &[&str]) -> serde_json::Value {
    let mut args = vec!["run", DEMO_CASE, "--out", out.to_str().unwrap()];
    for set in sets {
        args.extend_from_slice(&["--set", set]);
    }
    let output = hurdle(&args);
    assert!(output.status.success(), "{sets:?}: {}", text(&output));
    serde_json::from_str(&std::fs::read_to_string(out.join("result.json")).unwrap()).unwrap()
}

/// Runs the demo with `sets`, expects exit 2 and no output, and returns the message.
fn refused(sets: &[&str]) -> String {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    let mut args = vec!["run", DEMO_CASE, "--out", out.to_str().unwrap()];
    for set in sets {
        args.extend_from_slice(&["--set", set]);
    }
    let output = hurdle(&args);
    assert_eq!(output.status.code(), Some(2), "{sets:?}: {}", text(&output));
    assert!(!out.exists(), "{sets:?}: output written on failure");
    text(&output)
}

/// The JSON objects at `path` (`a.b`, or `a[]` for each element of the array `a`).
fn objects<'a>(root: &'a serde_json::Value, path: &str) -> Vec<&'a serde_json::Value> {
    let (path, each) = match path.strip_suffix("[]") {
        Some(p) => (p, true),
        None => (path, false),
    };
    let value = path.split('.').fold(root, |v, key| &v[key]);
    if each {
        value.as_array().expect("an array").iter().collect()
    } else {
        vec![value]
    }
}

#[test]
fn renamed_fields_and_columns_are_present_and_the_old_ones_absent() {
    let dir = tempfile::tempdir().unwrap();
    let result = run_demo(dir.path(), &[]);
    assert_eq!(result["schema_version"], 2);
    for (path, old, new) in JSON_RENAMES {
        let found = objects(&result, path);
        assert!(!found.is_empty(), "{path} is empty");
        for object in found {
            assert!(object.get(new).is_some(), "{path}.{new} missing");
            assert!(object.get(old).is_none(), "{path}.{old} still written");
        }
    }
    let premiums = &result["settings"]["premiums"];
    assert!(premiums.get("country_exposure").is_some() && premiums.get("country_lambda").is_none());
    assert_eq!(premiums["country_method"], "flat");
    assert_eq!(result["premiums"]["country_method"], "flat");
    // The default weight of README's case-file reference.
    assert_eq!(result["settings"]["beta"]["blume_weight"], 0.67);
    // No old name survives anywhere in the receipt, even nested.
    let receipt = std::fs::read_to_string(dir.path().join("result.json")).unwrap();
    for (_, old, _) in JSON_RENAMES {
        assert!(
            !receipt.contains(&format!("\"{old}\"")),
            "{old} in result.json"
        );
    }
    assert!(!receipt.contains("\"country_lambda\""));

    let csv = std::fs::read_to_string(dir.path().join("peers.csv")).unwrap();
    let header: Vec<&str> = csv.lines().next().unwrap().split(',').collect();
    for (old, new) in CSV_RENAMES {
        assert!(header.contains(&new), "peers.csv lacks {new}");
        assert!(!header.contains(&old), "peers.csv still has {old}");
    }
    // Each row has as many cells as the header (no name in the demo has a comma).
    for line in csv.lines().skip(1) {
        assert_eq!(line.split(',').count(), header.len(), "{line}");
    }
}

#[test]
fn old_case_keys_and_option_values_are_refused_with_their_new_names() {
    for (old, new) in KEY_RENAMES {
        let value = if old.starts_with("leverage") {
            "true"
        } else {
            "0.5"
        };
        let message = refused(&[&format!("{old}={value}")]);
        assert!(
            message.contains(&format!("{old} = {value} was renamed to {new}")),
            "{message}"
        );
    }
    for (old, new) in OPTION_RENAMES {
        let message = refused(&[&format!("premiums.country_method={old}")]);
        assert!(
            message.contains(&format!("\"{old}\" was renamed to \"{new}\"")),
            "{message}"
        );
    }
    // The same key written in a case file (not by --set): the file is named, and the new key.
    let dir = tempfile::tempdir().unwrap();
    let case_dir = dir.path().join("case");
    copy_demo_case(&case_dir);
    let case = case_dir.join("case.toml");
    let written = std::fs::read_to_string(&case).unwrap().replace(
        "aggregation = \"median\"\n",
        "aggregation = \"median\"\ncash_correction = true\n",
    );
    assert!(written.contains("cash_correction = true"));
    std::fs::write(&case, written).unwrap();
    let output = hurdle(&["betas", case.to_str().unwrap()]);
    assert_eq!(output.status.code(), Some(2), "{}", text(&output));
    let message = text(&output);
    assert!(
        message.contains("case.toml")
            && message.contains("leverage.cash_correction = true was renamed to")
            && message.contains("leverage.operations_beta = true"),
        "{message}"
    );
    // And as a grid axis, which goes through the what-if path.
    let output = hurdle(&[
        "grid",
        DEMO_CASE,
        "--rows",
        "premiums.country_lambda=0..1:0.5",
        "--cols",
        "target.debt_to_equity=0..1:0.5",
        "--csv",
        dir.path().join("grid.csv").to_str().unwrap(),
    ]);
    assert_eq!(output.status.code(), Some(2), "{}", text(&output));
    assert!(
        text(&output).contains("premiums.country_exposure"),
        "{}",
        text(&output)
    );
}

// Blume's form w·β + (1 − w) (Blume 1971, J. Finance 26(1)) with w = 0.5, written out here from
// each peer's raw beta; the reference script recomputes it (and everything after it) with the
// weight it reads from case.toml and the recorded --set overrides.
#[test]
fn a_non_default_blume_weight_is_applied() {
    let dir = tempfile::tempdir().unwrap();
    let result = run_demo(dir.path(), &["beta.blume_weight=0.5"]);
    assert_eq!(result["settings"]["beta"]["blume_weight"], 0.5);
    for peer in result["peers"].as_array().unwrap() {
        let expected = 0.5 * number(peer, "beta") + 0.5;
        // 1e-15: one product and one sum.
        assert!((number(peer, "shrunk_beta") - expected).abs() < 1e-15);
        assert_eq!(peer["beta_used"], peer["shrunk_beta"]);
    }
    reference_check(dir.path(), "beta.blume_weight=0.5");
    let memo = std::fs::read_to_string(dir.path().join("memo.md")).unwrap();
    assert!(
        memo.contains("0.50 on the raw β (beta.blume_weight)"),
        "memo lacks the weight"
    );
    // Weight 1 leaves the raw beta.
    let raw = run_demo(dir.path(), &["beta.blume_weight=1"]);
    for peer in raw["peers"].as_array().unwrap() {
        assert_eq!(peer["shrunk_beta"], peer["beta"]);
    }
}

#[test]
fn a_blume_weight_outside_zero_to_one_is_refused() {
    for value in ["0", "1.5", "-0.2"] {
        let message = refused(&[&format!("beta.blume_weight={value}")]);
        assert!(
            message.contains(&format!("beta.blume_weight = {value}")) && message.contains("(0, 1]"),
            "{message}"
        );
    }
}

#[test]
fn verify_explains_why_a_version_1_receipt_cannot_be_verified() {
    let dir = tempfile::tempdir().unwrap();
    let case_dir = dir.path().join("case");
    copy_demo_case(&case_dir);
    let out = dir.path().join("out");
    let output = hurdle(&[
        "run",
        case_dir.join("case.toml").to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(output.status.success(), "{}", text(&output));
    // A receipt as schema 1 wrote it: the version, and an old field name.
    let mut result: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("result.json")).unwrap()).unwrap();
    result["schema_version"] = serde_json::json!(1);
    let peer = result["peers"][0].as_object_mut().unwrap();
    let shrunk = peer.remove("shrunk_beta").unwrap();
    peer.insert("adjusted_beta".into(), shrunk);
    let receipt = out.join("version1.json");
    std::fs::write(&receipt, serde_json::to_string(&result).unwrap()).unwrap();
    let output = hurdle(&["verify", receipt.to_str().unwrap()]);
    assert_eq!(output.status.code(), Some(2), "{}", text(&output));
    let message = text(&output);
    assert!(
        message.contains("schema_version 1 is older")
            && message.contains("renamed")
            && message.contains("Changelog"),
        "{message}"
    );
}

#[test]
fn readme_changelog_lists_every_rename() {
    let readme =
        std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/README.md")).unwrap();
    let changelog = &readme[readme.find("## Changelog").expect("README has a Changelog")..];
    // Line breaks inside a list item are spaces.
    let changelog = changelog.split_whitespace().collect::<Vec<_>>().join(" ");
    let mut pairs: Vec<(String, String)> = Vec::new();
    // result.json fields by their path (`peers[].shrunk_beta`); the settings echo the case keys,
    // listed below as keys.
    pairs.extend(
        JSON_RENAMES
            .iter()
            .filter(|(path, _, _)| !path.starts_with("settings"))
            .map(|(path, old, new)| (format!("{path}.{old}"), format!("{path}.{new}"))),
    );
    pairs.extend(
        CSV_RENAMES
            .iter()
            .map(|(o, n)| (o.to_string(), n.to_string())),
    );
    pairs.extend(
        KEY_RENAMES
            .iter()
            .map(|(o, n)| (o.to_string(), n.to_string())),
    );
    pairs.extend(
        OPTION_RENAMES
            .iter()
            .map(|(o, n)| (format!("\"{o}\""), format!("\"{n}\""))),
    );
    for (old, new) in pairs {
        assert!(
            changelog.contains(&format!("`{old}` → `{new}`")),
            "README's Changelog lacks `{old}` → `{new}`"
        );
    }
}

// The memo's wording that issue 13 asks for, phrase by phrase, and the beta of the operations as
// its own table (not columns trailing the unlevering table).
#[test]
fn the_memo_states_its_assumptions_and_the_operations_step_on_its_own() {
    let dir = tempfile::tempdir().unwrap();
    run_demo(dir.path(), &["debt.source=coverage"]);
    let memo = std::fs::read_to_string(dir.path().join("memo.md")).unwrap();
    let flat = memo.split_whitespace().collect::<Vec<_>>().join(" ");
    for phrase in [
        "That is an assumption this tool cannot check",
        "as supplied in the case",
        "the data cannot reject, at the 5% level, any beta inside the interval",
        "Size and company-specific premiums are judgement calls",
        "contested in the literature",
        "A synthetic rating is not an agency rating",
        "a flat addition, the same for every firm in the country",
        "### The beta of the operations",
    ] {
        assert!(flat.contains(phrase), "memo lacks \"{phrase}\"");
    }
    let unlevering_header = memo
        .lines()
        .find(|l| l.starts_with("| Peer | D/E |"))
        .expect("the unlevering table");
    assert!(!unlevering_header.contains("Cash"), "{unlevering_header}");
    let operations = &memo[memo.find("### The beta of the operations").unwrap()..];
    assert!(operations.contains("| β of the operations |"));
}

// The cautions a discount rate needs, from a methods review (common practice in valuation
// reports; the pre-tax point from IAS 36's requirement of a pre-tax rate, from memory): what
// kind of rate the WACC is, survivorship and leverage timing, Hamada's fixed debt against
// constant target weights (Arzac and Glosten 2005), and a target leverage beyond every peer's,
// whose range the test takes from result.json's peers.
#[test]
fn the_memo_cautions_follow_the_case() {
    let dir = tempfile::tempdir().unwrap();
    let result = run_demo(dir.path(), &["target.debt_to_equity=3"]);
    let memo = std::fs::read_to_string(dir.path().join("memo.md")).unwrap();
    let flat = memo.split_whitespace().collect::<Vec<_>>().join(" ");
    for phrase in [
        "The WACC is a post-tax rate in EUR",
        "It is not the pre-tax rate some standards ask for",
        "(survivorship)",
        "unlevered at the D/E supplied",
        "**Hamada and the target weights.**",
    ] {
        assert!(flat.contains(phrase), "memo lacks \"{phrase}\"");
    }
    let de: Vec<f64> = result["peers"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|p| p["excluded_reason"].is_null())
        .map(|p| p["debt_to_equity"].as_f64().unwrap())
        .collect();
    let (low, high) = de
        .iter()
        .fold((f64::MAX, f64::MIN), |(l, h), &x| (l.min(x), h.max(x)));
    let range = format!("peer's ({low:.3} to {high:.3})");
    assert!(
        flat.contains("**Leverage beyond the peers'.** The target D/E of 3.000"),
        "{flat}"
    );
    assert!(flat.contains(&range), "memo lacks \"{range}\"");
    // Under Harris–Pringle (debt rebalanced to the target ratio) the Hamada caution goes, and at
    // the case's own D/E (inside the peers' range) so does the leverage one.
    let other = tempfile::tempdir().unwrap();
    run_demo(other.path(), &["leverage.formula=harris-pringle"]);
    let memo = std::fs::read_to_string(other.path().join("memo.md")).unwrap();
    assert!(!memo.contains("Hamada and the target weights"));
    assert!(!memo.contains("Leverage beyond the peers'"));
}

// Figures a percentage typed for a decimal below 1 would give (0.5 for a 0.5% size premium) pass
// every range check; the run notes them (generous bounds, a judgement: common practice puts
// premiums and an ERP well under 15%). A valuation date after the data leaves a window the
// index does not cover; the run says so with the index's own dates (the demo's index ends
// 2026-09-30, its file's last row). Both found by review.
#[test]
fn implausible_figures_and_a_window_beyond_the_data_are_noted() {
    let dir = tempfile::tempdir().unwrap();
    let result = run_demo(dir.path(), &["premiums.size=0.5"]);
    let notes = result["notes"].to_string();
    assert!(
        notes.contains("Check: the additional equity premiums sum to 50.00%"),
        "{notes}"
    );
    // One peer's equity value in units while the others are in millions.
    let units = tempfile::tempdir().unwrap();
    let result = run_demo(units.path(), &["peer.0.equity_value=900000000"]);
    assert!(
        result["notes"]
            .to_string()
            .contains("a factor of more than 10,000"),
        "{}",
        result["notes"]
    );
    let other = tempfile::tempdir().unwrap();
    let result = run_demo(other.path(), &["case.valuation_date=2027-06-30"]);
    let notes = result["notes"].to_string();
    let index = &result["files"][0];
    let expected = format!(
        "has prices from {} to {}, less than the window's {} to 2027-06-30",
        index["first_date"].as_str().unwrap(),
        index["last_date"].as_str().unwrap(),
        result["sampling"]["window_start"].as_str().unwrap()
    );
    assert!(notes.contains(&expected), "{notes}");
    assert_eq!(index["last_date"], "2026-09-30");
    // An index that stops weeks before the window's end (the demo's index cut after
    // 2026-09-02) still gives the last month a return, on a price 28 days old (2026-09-02 to
    // 2026-09-30, calendar arithmetic): noted, with the days (found by review: no note).
    let stale = tempfile::tempdir().unwrap();
    let case_dir = stale.path().join("case");
    common::copy_demo_case(&case_dir);
    let index = case_dir.join("data/index.csv");
    let text = std::fs::read_to_string(&index).unwrap();
    let kept: Vec<&str> = (text.lines().enumerate())
        .filter(|(i, l)| *i == 0 || l[..10] <= *"2026-09-02")
        .map(|(_, l)| l)
        .collect();
    std::fs::write(&index, kept.join("\n") + "\n").unwrap();
    let result = common::run_case_with(&case_dir.join("case.toml"), &stale.path().join("out"), &[]);
    assert!(
        result["notes"].to_string().contains(
            "The index (data/index.csv) ends on 2026-09-02, 28 days before the window's end 2026-09-30"
        ),
        "{}",
        result["notes"]
    );
    // Weekly on Fridays to Friday 2026-10-02: the index's last price (Wednesday 2026-09-30) lies
    // inside the last week, after the Friday before (the sampling rule, README "Sampling"), so
    // every period has an index return and no coverage note is due (found by review: the note
    // compared the last price with the window's end date).
    let weekly = tempfile::tempdir().unwrap();
    let result = run_demo(
        weekly.path(),
        &[
            "beta.frequency=weekly",
            "beta.weekday=friday",
            "case.valuation_date=2026-10-02",
        ],
    );
    let notes = result["notes"].to_string();
    assert!(!notes.contains("has prices from"), "{notes}");
    assert_eq!(result["sampling"]["window_end"], "2026-10-02");
    for peer in result["peers"].as_array().unwrap() {
        assert_eq!(peer["periods_dropped"]["market_missing"], 0, "{peer}");
    }
}

// The memo as a committee member reads it (found by review): a premium without a stated basis
// is named among the inputs without one; peers that raise a flag and are still aggregated are
// named in a caution; a basis written for another source than an override chose is marked; the
// sensitivity axes of rates are in percent as the cells are; and a window under two years
// (60 weekly returns: 2025-08-06 to 2026-09-30 is 420 days, 1.15 years of 365.25 days) is
// noted. The demo (five years of months, every input with a basis) gets none of these.
#[test]
fn the_memo_names_what_a_reviewer_would_ask_about() {
    let plain = tempfile::tempdir().unwrap();
    run_demo(plain.path(), &[]);
    let memo = std::fs::read_to_string(plain.path().join("memo.md")).unwrap();
    for absent in [
        "Flagged peers in the aggregate",
        "company-specific premium (premiums.company_specific_justification)",
        "was set by an override",
        "spans",
    ] {
        assert!(!memo.contains(absent), "{absent}");
    }
    // The ERP axis in percent: 5.17% less one point is 4.17%.
    assert!(memo.contains("\n| 4.17% | "), "{memo}");
    let dir = tempfile::tempdir().unwrap();
    let result = run_demo(
        dir.path(),
        &[
            "premiums.company_specific=0.02",
            "beta.flag_r_squared_floor=0.15",
            "target.source=subject",
        ],
    );
    let memo = std::fs::read_to_string(dir.path().join("memo.md")).unwrap();
    let flat = memo.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(
        flat.contains("no source or reason for the company-specific premium (premiums.company_specific_justification)"),
        "{flat}"
    );
    let mut flagged: Vec<String> = (result["peers"].as_array().unwrap().iter())
        .filter(|p| !p["flags"].as_array().unwrap().is_empty() && p["excluded_reason"].is_null())
        .map(|p| p["name"].as_str().unwrap().to_string())
        .collect();
    flagged.sort();
    assert!(!flagged.is_empty());
    assert_eq!(
        result["cautions"]["flagged_in_aggregate"],
        serde_json::json!(flagged)
    );
    assert!(
        flat.contains(&format!(
            "**Flagged peers in the aggregate.** {}",
            flagged.join(", ")
        )),
        "{flat}"
    );
    assert!(
        flat.contains("(target.source was set by an override, target.source=subject: the case file's basis may describe another source.)"),
        "{flat}"
    );
    // The header names the command line's overrides (the receipt records them, README
    // "result.json"; the memo said so only in section 12).
    assert!(
        memo.contains("| Overrides | premiums.company_specific=0.02; beta.flag_r_squared_floor=0.15; target.source=subject (set on the command line, not in the case file) |"),
        "{memo}"
    );
    // The subject's target leaves the grid's columns to the risk-free rate (README,
    // [sensitivity]); the demo's cost of debt is given, so it stays put along that axis.
    assert!(
        flat.contains("along the risk-free axis the given cost of debt (4.63%) stays where it is"),
        "{flat}"
    );
    assert!(!flat.contains("along the D/E axis"), "{flat}");
    // Scholes–Williams's standard error treats ρ as known (README, Methods); a credit-spread
    // debt beta reads each peer's cost of debt, the subject's where a peer gives none (README,
    // [[peer]] `cost_of_debt`); a coverage rating is the subject's as it stands.
    let other = tempfile::tempdir().unwrap();
    run_demo(
        other.path(),
        &[
            "beta.method=scholes-williams",
            "leverage.debt_beta_source=credit-spread",
            "leverage.formula=harris-pringle",
            "debt.source=coverage",
        ],
    );
    let memo = std::fs::read_to_string(other.path().join("memo.md")).unwrap();
    let flat = memo.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(
        flat.contains("treats the index's autocorrelation ρ as known"),
        "{flat}"
    );
    assert_eq!(memo.matches(" (subject's) |").count(), 8, "{memo}");
    assert!(
        flat.contains("The coverage is the subject's as it stands"),
        "{flat}"
    );
    // Under [conversion] the header gives the converted WACC beside the case's, as result.json
    // records it (its currency_conversion.wacc and wacc_real, to two decimals as the memo's
    // rates are printed).
    let converted = tempfile::tempdir().unwrap();
    let result = run_demo(
        converted.path(),
        &[
            "conversion.currency=USD",
            "conversion.inflation_case=0.02",
            "conversion.inflation_output=0.03",
        ],
    );
    let memo = std::fs::read_to_string(converted.path().join("memo.md")).unwrap();
    let c = &result["currency_conversion"];
    let row = format!(
        "| WACC in USD | {:.2}% nominal, {:.2}% real",
        c["wacc"].as_f64().unwrap() * 100.0,
        c["wacc_real"].as_f64().unwrap() * 100.0
    );
    assert!(memo.contains(&row), "{row}\n{memo}");
    // With preferred equity and leases the target's ratio is D/(D + E) of equity and debt
    // alone, and the WACC's debt weight is smaller (wD = (1 − wP − wL)·D/(D + E), README
    // "[preferred]"): the memo names both, the weight as result.json gives it.
    let other_capital = tempfile::tempdir().unwrap();
    let result = run_demo(
        other_capital.path(),
        &[
            "preferred.weight=0.05",
            "preferred.cost=0.07",
            "leases.weight=0.1",
        ],
    );
    let memo = std::fs::read_to_string(other_capital.path().join("memo.md")).unwrap();
    let flat = memo.split_whitespace().collect::<Vec<_>>().join(" ");
    let weight = result["weights"]["debt"].as_f64().unwrap() * 100.0;
    assert!(
        flat.contains(&format!(
            "(D/(D + E) 28.6%, of equity and debt alone: with preferred equity or leases in the \
             capital, the WACC's debt weight is {weight:.1}%"
        )),
        "{flat}"
    );
    let weekly = tempfile::tempdir().unwrap();
    let result = run_demo(weekly.path(), &["beta.frequency=weekly"]);
    // The case's own row of the specification range says its window in weeks and in years
    // (60 / 52 weeks a year, README "Risk-free conversion by frequency", is 1.15: 1.2 to one
    // decimal), beside rows written in years.
    let own = (result["uncertainty"]["specifications"]
        .as_array()
        .unwrap()
        .iter())
    .find(|r| r["case_choice"] == true)
    .unwrap();
    assert_eq!(own["window"], "60 weeks (about 1.2y)", "{own}");
    // Two years of months is the usual minimum, not short (found by review: 24 months from
    // 2024-09-30 span 730 days, 1.9986 years of 365.25 days, and were noted).
    let two_years = tempfile::tempdir().unwrap();
    let two = run_demo(
        two_years.path(),
        &["beta.lookback=24", "beta.min_observations=20"],
    );
    assert!(
        !two["notes"].to_string().contains("spans"),
        "{}",
        two["notes"]
    );
    assert!(
        result["notes"].to_string().contains(
            "The return window, 60 weekly returns from 2025-08-06 to 2026-09-30, spans 1.15 years"
        ),
        "{}",
        result["notes"]
    );
}

// A user's free text is shown as written, never as Markdown: a justification holding an image
// and a link, a claim label with a link, and an override with a backtick put no image, link or
// code into the self-contained report (found by review: names were checked, free text was not).
// The report is read for any `src=` or `href=` that leaves the page.
#[test]
fn free_text_in_the_memo_opens_no_link_or_image() {
    let dir = tempfile::tempdir().unwrap();
    let case_dir = dir.path().join("case");
    copy_demo_case(&case_dir);
    let claimed = case_dir.join("claimed.toml");
    let text = std::fs::read_to_string(&claimed).unwrap();
    let edited = text.replace(
        "label = \"Adviser's build-up (fictional)\"",
        "label = \"Adviser [see](http://example.invalid/c)\"",
    );
    assert_ne!(edited, text);
    std::fs::write(&claimed, edited).unwrap();
    let out = dir.path().join("out");
    let justification =
        "debt.justification=see ![x](http://example.invalid/a.png) and [site](http://example.invalid)";
    common::run_case_with(&case_dir.join("case.toml"), &out, &[justification]);
    let report = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(
        !report.contains("example.invalid/a.png\""),
        "an image was linked"
    );
    assert!(!report.contains("href=\"http"), "a link left the page");
    assert!(!report.contains("src=\"http"), "an image was fetched");
    let memo = std::fs::read_to_string(out.join("memo.md")).unwrap();
    assert!(
        memo.contains(
            r"see !\[x\](http://example.invalid/a.png) and \[site\](http://example.invalid)"
        ),
        "{memo}"
    );
    assert!(
        report.contains("see ![x](http://example.invalid/a.png)"),
        "the text as written"
    );
}

// A rolling window as long as the estimation window (README: `rolling_window` at most the
// window's periods) leaves each peer one window; the memo says so rather than blaming too few
// observations (found by review), and with the coverage rating under the subject's own
// structure it does not speak of "another structure".
#[test]
fn the_memo_says_why_a_peer_has_no_rolling_line() {
    let dir = tempfile::tempdir().unwrap();
    run_demo(dir.path(), &["beta.rolling_window=60"]);
    let memo = std::fs::read_to_string(dir.path().join("memo.md")).unwrap();
    assert_eq!(
        memo.matches(
            "one rolling window only: beta.rolling_window = 60 periods fills the 60-period window"
        )
        .count(),
        8,
        "{memo}"
    );
    let subject = tempfile::tempdir().unwrap();
    run_demo(
        subject.path(),
        &["target.source=subject", "debt.source=coverage"],
    );
    let memo = std::fs::read_to_string(subject.path().join("memo.md")).unwrap();
    assert!(
        memo.contains("The coverage is the\nsubject's as it stands."),
        "{memo}"
    );
    assert!(!memo.contains("at another structure"), "{memo}");
}
