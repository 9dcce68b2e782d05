//! The binary end to end on the demo case: every output is written, the figures in them agree
//! with each other and with the textbook formulas, reruns are byte-identical apart from the
//! timestamp, and an independent numpy/scipy recomputation (tests/reference) agrees.

use std::path::Path;

mod common;

use common::{hurdle, number, reference_check, DEMO_CASE};

fn run_demo(out: &Path, extra: &[&str]) -> serde_json::Value {
    let mut args = vec!["run", DEMO_CASE, "--out", out.to_str().unwrap()];
    args.extend_from_slice(extra);
    let output = hurdle(&args);
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    serde_json::from_str(&std::fs::read_to_string(out.join("result.json")).unwrap()).unwrap()
}

#[test]
fn demo_run_writes_every_output_with_consistent_figures() {
    let dir = tempfile::tempdir().unwrap();
    let result = run_demo(dir.path(), &[]);
    for name in ["memo.md", "result.json", "peers.csv", "returns.csv"] {
        assert!(dir.path().join(name).is_file(), "{name} missing");
    }
    for field in [
        "wacc",
        "cost_of_equity",
        "cost_of_debt_pre_tax",
        "cost_of_debt_after_tax",
        "risk_free_rate",
        "equity_risk_premium",
        "beta.unlevered",
        "beta.relevered",
        "weights.equity",
        "weights.debt",
        "target.tax_rate",
    ] {
        number(&result, field);
    }
    let peers = result["peers"].as_array().unwrap();
    assert_eq!(peers.len(), 8);
    for peer in peers {
        for field in [
            "observations",
            "alpha",
            "beta",
            "beta_std_error",
            "beta_ci_low",
            "beta_ci_high",
            "r_squared",
            "beta_used",
            "debt_to_equity",
            "tax_rate",
            "unlevered_beta",
        ] {
            number(peer, field);
        }
        assert!(peer["name"].is_string() && peer["prices_file"].is_string());
        assert!(peer.get("shrunk_beta").is_some());
    }
    // Textbook WACC identity on the file's own components: wE·Ke + wD·Kd·(1 − t).
    // 4 ulps of the WACC (about 6e-17 at 7%): the same products summed in the same order, the
    // debt term perhaps associated the other way ((wD·Kd)·(1 − t) here), so each of its two
    // roundings can differ by half an ulp; measured: no difference at all on the demo.
    let recomputed = number(&result, "weights.equity") * number(&result, "cost_of_equity")
        + number(&result, "weights.debt")
            * number(&result, "cost_of_debt_pre_tax")
            * (1.0 - number(&result, "target.tax_rate"));
    let wacc = number(&result, "wacc");
    assert!(
        (recomputed - wacc).abs() <= 4.0 * f64::EPSILON * wacc,
        "{recomputed} {wacc}"
    );
    // The weights of a two-part capital structure sum to one (1e-15: one rounding each).
    assert!(
        (number(&result, "weights.equity") + number(&result, "weights.debt") - 1.0).abs() < 1e-15
    );

    // peers.csv has one row per peer; returns.csv one row per peer and period used.
    let peers_csv = std::fs::read_to_string(dir.path().join("peers.csv")).unwrap();
    assert_eq!(peers_csv.lines().count(), 1 + peers.len());
    // Its figures are result.json's, written in the shortest form that reads back to the same
    // double, so they compare exactly (no tolerance: one value feeds both files).
    let mut table = csv::Reader::from_reader(peers_csv.as_bytes());
    let header = table.headers().unwrap().clone();
    let column = |name: &str| header.iter().position(|h| h == name).unwrap();
    for (row, peer) in table.records().zip(peers) {
        let row = row.unwrap();
        assert_eq!(&row[column("name")], peer["name"].as_str().unwrap());
        for field in [
            "beta_used",
            "unlevered_beta",
            "stale_share",
            "zero_return_share",
        ] {
            let written: f64 = row[column(field)].parse().unwrap();
            assert_eq!(written, peer[field].as_f64().unwrap(), "{field}");
        }
    }
    let returns_csv = std::fs::read_to_string(dir.path().join("returns.csv")).unwrap();
    let used: u64 = peers
        .iter()
        .map(|p| p["observations"].as_u64().unwrap())
        .sum();
    assert_eq!(returns_csv.lines().count() as u64, 1 + used);
    assert!(returns_csv.starts_with("peer,period_end,asset_return,market_return,risk_free\n"));

    // The memo carries the WACC as formatted from result.json, and the cautions.
    let memo = std::fs::read_to_string(dir.path().join("memo.md")).unwrap();
    let wacc_text = hurdle::report::format::percent(number(&result, "wacc"), 2);
    assert!(memo.contains(&wacc_text), "memo lacks {wacc_text}");
    for caution in [
        "Statistical error",
        "Not advice",
        "Inputs to verify",
        "licensed professionals",
    ] {
        assert!(memo.contains(caution), "memo lacks the caution '{caution}'");
    }
}

#[test]
fn reruns_are_byte_identical_apart_from_the_timestamp() {
    let first = tempfile::tempdir().unwrap();
    let second = tempfile::tempdir().unwrap();
    run_demo(first.path(), &[]);
    run_demo(second.path(), &[]);
    let without_timestamp = |dir: &Path| -> String {
        let text = std::fs::read_to_string(dir.join("result.json")).unwrap();
        assert_eq!(text.matches("\"generated_at\"").count(), 1);
        text.lines()
            .filter(|line| !line.trim_start().starts_with("\"generated_at\""))
            .collect::<Vec<_>>()
            .join("\n")
    };
    assert_eq!(
        without_timestamp(first.path()),
        without_timestamp(second.path())
    );
    for name in ["peers.csv", "returns.csv"] {
        assert_eq!(
            std::fs::read(first.path().join(name)).unwrap(),
            std::fs::read(second.path().join(name)).unwrap()
        );
    }
}

#[test]
fn overrides_change_the_result_and_are_recorded() {
    let dir = tempfile::tempdir().unwrap();
    let base = run_demo(dir.path(), &[]);
    let what_if = run_demo(dir.path(), &["--set", "market.equity_risk_premium=0.0617"]);
    assert_eq!(
        what_if["case"]["overrides"][0],
        "market.equity_risk_premium=0.0617"
    );
    assert_eq!(number(&what_if, "equity_risk_premium"), 0.0617);
    // CAPM: one more percentage point of ERP than the demo's 5.17% raises Ke by βL × 1%.
    // 4 ulps of the larger Ke (about 6e-17 at 9%): each Ke carries the roundings of its
    // product and two sums (half an ulp each), and 0.0617 − 0.0517 is 0.01 only to the half
    // ulps of the two decimals in binary (times βL ≈ 1); measured: 1.7e-18.
    let ke = number(&what_if, "cost_of_equity");
    let delta = ke - number(&base, "cost_of_equity");
    assert!(
        (delta - 0.01 * number(&base, "beta.relevered")).abs() <= 4.0 * f64::EPSILON * ke,
        "{delta}"
    );
    // By peer name inside [[peer]]:
    let renamed = run_demo(
        dir.path(),
        &["--set", "peer.Dunmere Hydraulics.tax_rate=0.2"],
    );
    assert_eq!(renamed["peers"][2]["tax_rate"], 0.2);
}

#[test]
fn betas_command_prints_the_same_estimates_as_run() {
    let dir = tempfile::tempdir().unwrap();
    let result = run_demo(dir.path(), &[]);
    let output = hurdle(&["betas", DEMO_CASE, "--format", "json"]);
    assert!(output.status.success());
    let peers: serde_json::Value = serde_json::from_slice(&output.stdout).unwrap();
    assert_eq!(peers, result["peers"]);
    let table = hurdle(&["betas", DEMO_CASE]);
    assert!(String::from_utf8_lossy(&table.stdout).contains("Glimmerby Pumpworks"));
}

// A dataframe library writes its row index as an unnamed first column (`,date,price`): read as
// 0.9.0 read it (found by review, when values under unnamed columns began to be refused), since
// a first column holds no part of a number a decimal comma split.
#[test]
fn a_price_file_with_a_row_index_column_reads_as_without_it() {
    let dir = tempfile::tempdir().unwrap();
    let case_dir = dir.path().join("case");
    common::copy_demo_case(&case_dir);
    let path = case_dir.join("data/peers/brenvale.csv");
    let text = std::fs::read_to_string(&path).unwrap();
    let indexed: String = (text.lines().enumerate())
        .map(|(i, l)| match i {
            0 => format!(",{l}\n"),
            i => format!("{},{l}\n", i - 1),
        })
        .collect();
    std::fs::write(&path, indexed).unwrap();
    let case = case_dir.join("case.toml");
    let output = hurdle(&["betas", case.to_str().unwrap(), "--format", "json"]);
    assert!(output.status.success(), "{output:?}");
    let plain = hurdle(&["betas", DEMO_CASE, "--format", "json"]);
    let (a, b): (serde_json::Value, serde_json::Value) = (
        serde_json::from_slice(&output.stdout).unwrap(),
        serde_json::from_slice(&plain.stdout).unwrap(),
    );
    assert!(a[0]["beta"].as_f64().is_some(), "{a}");
    assert_eq!(a, b);
}

/// numpy and scipy recompute every regression and every later step from returns.csv
/// (tests/reference/check_regressions.py). `.ci/run` installs both; without them this fails.
#[test]
fn numpy_and_scipy_agree_with_every_figure() {
    let dir = tempfile::tempdir().unwrap();
    run_demo(dir.path(), &[]);
    reference_check(dir.path(), "demo case");
}

/// A printed axis value as the decimal it stands for: `4.17%` is 0.0417, its digits moved by
/// string (so no ·0.01 rounding enters), any other text parsed as it is.
fn decimal_of(text: &str) -> f64 {
    let Some(percent) = text.strip_suffix('%') else {
        return text.parse().unwrap();
    };
    let (sign, percent) = match percent.strip_prefix('-') {
        Some(rest) => ("-", rest),
        None => ("", percent),
    };
    let (whole, fraction) = percent.split_once('.').unwrap_or((percent, ""));
    let digits = format!("{:0>3}{fraction}", whole);
    let point = digits.len() - fraction.len() - 2;
    format!("{sign}{}.{}", &digits[..point], &digits[point..])
        .parse()
        .unwrap()
}

// The memo's words agree with result.json where the review found them apart:
// - each sensitivity-grid axis value is printed with every digit (shortest round trip; a rate
//   in percent, its digits moved two places), so a row reads back as the exact value
//   result.json records and no two rows alike;
// - a note on dropped periods lists reasons that add up to its total (arithmetic), including
//   a lagged or led index return missing under Scholes–Williams;
// - under Hamada with debt betas listed, the memo says Hamada uses none of them (Hamada 1972
//   assumes riskless debt: βU = βL / (1 + (1 − t)·D/E) has no debt-beta term).
#[test]
fn the_memo_words_agree_with_the_figures() {
    let dir = tempfile::tempdir().unwrap();
    let result = run_demo(dir.path(), &[]);
    let memo = std::fs::read_to_string(dir.path().join("memo.md")).unwrap();
    let grid = &result["sensitivity"];
    // The table's header row (the column values) and first column (the row values), as
    // printed: a rate in percent with every digit (the ERP rows), another key's value plain.
    let header = format!(
        "| {} \\ {} |",
        grid["rows"]["key"].as_str().unwrap(),
        grid["columns"]["key"].as_str().unwrap()
    );
    let lines: Vec<&str> = memo
        .lines()
        .skip_while(|l| !l.starts_with(&header))
        .collect();
    let cells = |line: &str| -> Vec<String> {
        line.trim_matches('|')
            .split('|')
            .map(|c| c.trim().to_string())
            .collect()
    };
    let columns: Vec<String> = cells(lines[0])[1..].to_vec();
    let rows: Vec<String> = (lines[2..].iter())
        .take_while(|l| l.starts_with('|'))
        .map(|l| cells(l)[0].clone())
        .collect();
    for (axis, printed) in [("rows", &rows), ("columns", &columns)] {
        let values: Vec<f64> = (grid[axis]["values"].as_array().unwrap().iter())
            .map(|v| v.as_f64().unwrap())
            .collect();
        let read: Vec<f64> = printed.iter().map(|t| decimal_of(t)).collect();
        assert_eq!(read, values, "{axis}: {printed:?}");
    }
    let mut distinct = rows.clone();
    distinct.dedup();
    assert_eq!(distinct.len(), rows.len(), "{rows:?}");

    let dir = tempfile::tempdir().unwrap();
    let result = run_demo(dir.path(), &["--set", "beta.method=scholes-williams"]);
    let notes: Vec<&str> = (result["notes"].as_array().unwrap().iter())
        .filter_map(|n| n.as_str())
        .filter(|n| n.contains("periods dropped ("))
        .collect();
    assert!(!notes.is_empty());
    for note in notes {
        let numbers: Vec<u64> = note
            .split(|c: char| !c.is_ascii_digit())
            .filter(|s| !s.is_empty())
            .map(|s| s.parse().unwrap())
            .collect();
        // "N of M periods dropped (a, b, c[, d])": the reasons add up to N.
        let (total, reasons) = (numbers[0], &numbers[2..]);
        assert_eq!(reasons.iter().sum::<u64>(), total, "{note}");
    }

    let dir = tempfile::tempdir().unwrap();
    run_demo(
        dir.path(),
        &[
            "--set",
            "leverage.debt_beta_source=given",
            "--set",
            "leverage.debt_beta=0.2",
        ],
    );
    let memo = std::fs::read_to_string(dir.path().join("memo.md")).unwrap();
    assert!(memo
        .contains("Hamada's formula assumes riskless debt, so it uses none of these debt betas"));

    // The demo (8 peers, none flagged, its WACC inside its interval) has none of the cautions
    // that depend on the case; two aggregated peers, all flagged (an R² floor of 0.45 above
    // both peers' R²), and an ERP range above the case's own ERP each bring theirs.
    let demo_dir = tempfile::tempdir().unwrap();
    run_demo(demo_dir.path(), &[]);
    let demo = std::fs::read_to_string(demo_dir.path().join("memo.md")).unwrap();
    let conditional = [
        "**Few peers.**",
        "**Every aggregated peer is flagged.**",
        "**Point estimate outside its interval.**",
    ];
    assert!(demo.contains("## 13. Cautions"));
    assert!(conditional.iter().all(|c| !demo.contains(c)));
    let dir = tempfile::tempdir().unwrap();
    let mut sets = vec![
        "--set".to_string(),
        "beta.flag_r_squared_floor=0.45".to_string(),
    ];
    for peer in 2..8 {
        sets.extend(["--set".to_string(), format!("peer.{peer}.exclude=kept out")]);
    }
    let sets: Vec<&str> = sets.iter().map(String::as_str).collect();
    run_demo(dir.path(), &sets);
    let memo = std::fs::read_to_string(dir.path().join("memo.md")).unwrap();
    assert!(
        memo.contains(conditional[0]) && memo.contains(conditional[1]),
        "{memo}"
    );
    let dir = tempfile::tempdir().unwrap();
    let result = run_demo(
        dir.path(),
        &["--set", "uncertainty.equity_risk_premium=[0.06,0.08]"],
    );
    assert!(number(&result, "wacc") < number(&result, "uncertainty.p05"));
    let memo = std::fs::read_to_string(dir.path().join("memo.md")).unwrap();
    assert!(memo.contains(conditional[2]), "{memo}");
    assert!(memo.contains("from the betas' estimation error and the stated rate ranges"));

    // With the betas of the operations aggregated, the betas chart's text names them, with
    // each peer's figure from result.json (to its three printed decimals).
    let dir = tempfile::tempdir().unwrap();
    let result = run_demo(dir.path(), &["--set", "leverage.operations_beta=true"]);
    let svg = std::fs::read_to_string(dir.path().join("figures/betas.svg")).unwrap();
    // Named β_ops, and the square the β of the operations, not the unlevered β (found by
    // review: the caption called the square both and the aggregate βU).
    assert!(svg.contains("included betas of the operations, β_ops = "));
    assert!(svg.contains("the β of the operations (cash at a beta of zero)"));
    assert!(!svg.contains("trimmed-mean") && svg.contains("Beta, equity or of the operations"));
    let first = &result["peers"][0];
    let operations = format!("operations {:.3}", number(first, "operations_beta"));
    assert!(svg.contains(&operations), "betas.svg lacks `{operations}`");
}

// A peer whose prices are the index's (scaled by a constant) is refused, naming the remedy;
// once the case excludes it, it is listed with a note and enters no aggregate (found by
// review: the exclusion did not help). The aggregate is then the seven other peers' median.
#[test]
fn a_copy_of_the_index_the_case_excludes_is_listed_not_refused() {
    let dir = tempfile::tempdir().unwrap();
    let case_dir = dir.path().join("case");
    common::copy_demo_case(&case_dir);
    let index = std::fs::read_to_string(case_dir.join("data/index.csv")).unwrap();
    let scaled = common::scaled_prices(&index, 1.0 / 20.0);
    std::fs::write(case_dir.join("data/peers/corrowick.csv"), scaled).unwrap();
    let case = case_dir.join("case.toml");
    let out = dir.path().join("out");
    let refused = hurdle(&[
        "run",
        case.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(refused.status.code(), Some(2));
    assert!(
        String::from_utf8_lossy(&refused.stderr).contains("give it `exclude = \"…\"`"),
        "{}",
        String::from_utf8_lossy(&refused.stderr)
    );
    let listed = hurdle(&[
        "run",
        case.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--no-figures",
        "--set",
        "peer.Corrowick Valves.exclude=tracks the index",
    ]);
    assert!(
        listed.status.success(),
        "{}",
        String::from_utf8_lossy(&listed.stderr)
    );
    let result: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("result.json")).unwrap()).unwrap();
    assert_eq!(result["beta"]["peers_included"], 7);
    assert!(result["notes"]
        .to_string()
        .contains("Corrowick Valves: the index (data/index.csv) explains its returns"));
    // The demo case aggregates by the median (its case.toml: aggregation = "median"), so the
    // aggregate must be the textbook median of the other seven peers' unlevered betas, taken
    // here from result.json's peer rows: sorted, the middle (4th) of seven values.
    assert_eq!(result["beta"]["aggregation"], "median");
    let mut others: Vec<f64> = result["peers"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|p| p["name"] != "Corrowick Valves")
        .map(|p| number(p, "unlevered_beta"))
        .collect();
    assert_eq!(others.len(), 7);
    let excluded = (result["peers"].as_array().unwrap().iter())
        .find(|p| p["name"] == "Corrowick Valves")
        .unwrap();
    assert_eq!(excluded["excluded_reason"], "tracks the index");
    others.sort_by(f64::total_cmp);
    // Exact: the median of an odd count is one of the values themselves, no arithmetic.
    assert_eq!(number(&result, "beta.unlevered"), others[3]);
}

/// The notes of a run of the demo case (a copy, with `edit` applied to its folder) under `set`.
fn notes_of_run(edit: impl Fn(&Path), set: &[&str]) -> Vec<String> {
    let dir = tempfile::tempdir().unwrap();
    let case_dir = dir.path().join("case");
    common::copy_demo_case(&case_dir);
    edit(&case_dir);
    let out = dir.path().join("out");
    let result = common::run_case_with(&case_dir.join("case.toml"), &out, set);
    (result["notes"].as_array().unwrap().iter())
        .map(|n| n.as_str().unwrap().to_string())
        .collect()
}

/// Rewrites each row of a price file dated on or after `from` (ISO dates compare as text) with
/// `price(old price, first price from that date)`.
fn prices_from(path: &Path, from: &str, price: impl Fn(f64, f64) -> f64) {
    let text = std::fs::read_to_string(path).unwrap();
    let mut first = None;
    let lines: Vec<String> = (text.lines().enumerate())
        .map(|(i, line)| match line.split_once(',') {
            Some((date, value)) if i > 0 && date >= from => {
                let value: f64 = value.parse().unwrap();
                let first = *first.get_or_insert(value);
                format!("{date},{:.4}", price(value, first))
            }
            _ => line.to_string(),
        })
        .collect();
    std::fs::write(path, lines.join("\n") + "\n").unwrap();
}

// Patterns that pass every rule yet bend a beta (found by review): a 2-for-1 split left in the
// prices (each price from a day on halved: a move by a factor near 1/2, which the factor-of-3
// bound lets through), and a year of prices carried forward after trading stopped (zero
// returns). Each is named in a note; the demo's own files give neither.
#[test]
fn an_unadjusted_split_and_prices_carried_forward_are_noted() {
    let has = |notes: &[String], text: &str| notes.iter().any(|n| n.contains(text));
    let plain = notes_of_run(|_| {}, &[]);
    assert!(
        !has(&plain, "as a split or reverse split moves"),
        "{plain:?}"
    );
    assert!(!has(&plain, "carried forward"), "{plain:?}");
    let edited = notes_of_run(
        |dir| {
            prices_from(
                &dir.join("data/peers/ivelbrook.csv"),
                "2025-03-14",
                |p, _| p / 2.0,
            );
            prices_from(&dir.join("data/peers/brenvale.csv"), "2025-09-30", |_, f| f);
        },
        &[],
    );
    // The factor the note should give: the edited file's price on 2025-03-14 over the one
    // before it, read from a copy edited the same way (the run's copy is gone with its folder),
    // to the two decimals the note prints (the ratio, near 0.4827, is no rounding tie).
    let copy = tempfile::tempdir().unwrap();
    let edited_file = copy.path().join("ivelbrook.csv");
    std::fs::copy(
        Path::new(common::DEMO_DIR).join("data/peers/ivelbrook.csv"),
        &edited_file,
    )
    .unwrap();
    prices_from(&edited_file, "2025-03-14", |p, _| p / 2.0);
    let text = std::fs::read_to_string(&edited_file).unwrap();
    let rows: Vec<(&str, f64)> = (text.lines().skip(1))
        .map(|l| {
            let (date, price) = l.split_once(',').unwrap();
            (date, price.parse().unwrap())
        })
        .collect();
    let at = rows.iter().position(|(d, _)| *d == "2025-03-14").unwrap();
    let factor = rows[at].1 / rows[at - 1].1;
    let factor_text = format!("on 2025-03-14, a factor of {factor:.2}");
    assert!(
        has(
            &edited,
            "Ivelbrook Instruments: its price (data/peers/ivelbrook.csv) moves from"
        ) && has(&edited, &factor_text),
        "{factor_text}: {edited:?}"
    );
    assert!(
        has(
            &edited,
            "Brenvale Fluid Systems: its price (data/peers/brenvale.csv) stays at"
        ) && has(&edited, "from 2025-09-30 to 2026-09-30"),
        "{edited:?}"
    );
}

// An index of weekly prices (Fridays alone) set against daily peer prices (found by review):
// under monthly returns each month's index price is up to six days older than the peers', and
// the note says the index's cadence beside the peers'. Calendar fact: consecutive Fridays are 7
// days apart.
#[test]
fn a_weekly_index_under_daily_peers_is_noted() {
    let has = |notes: &[String], text: &str| notes.iter().any(|n| n.contains(text));
    let text = "The index (data/index.csv) has a price every";
    assert!(!has(&notes_of_run(|_| {}, &[]), text));
    let weekly = notes_of_run(|dir| fridays_only(&dir.join("data/index.csv")), &[]);
    // Fridays are 7 days apart (a holiday Friday makes the mean a little more); the peers'
    // trading days about 1.4 (five of every seven days, and holidays).
    assert!(
        has(&weekly, &format!("{text} 7.")) && has(&weekly, "the median peer one every 1.4"),
        "{weekly:?}"
    );
}

/// Keeps the header and the rows of `path` dated on a Friday.
fn fridays_only(path: &Path) {
    use chrono::Datelike;
    let prices = std::fs::read_to_string(path).unwrap();
    let fridays: String = (prices.lines().enumerate())
        .filter(|(i, l)| {
            let date = chrono::NaiveDate::parse_from_str(&l[..10], "%Y-%m-%d");
            *i == 0 || date.is_ok_and(|d| d.weekday() == chrono::Weekday::Fri)
        })
        .map(|(_, l)| format!("{l}\n"))
        .collect();
    std::fs::write(path, fridays).unwrap();
}

// A peer given weekly prices (Fridays alone) in a case of daily ones (found by review): under
// monthly returns its month-end price is up to six days older than the index's, and a note
// names the peer with its cadence beside the index's; under daily returns no day has a return,
// and the refusal says why beside "peer price missing". Calendar fact: consecutive Fridays are
// 7 days apart, and five trading days a week with holidays make about 1.4 calendar days each.
#[test]
fn a_peer_of_weekly_prices_is_noted_and_its_refusal_says_why() {
    let has = |notes: &[String], text: &str| notes.iter().any(|n| n.contains(text));
    let text = "Calendar days between a peer's prices in the window (the median gap), against \
                1.4 on average for the index";
    assert!(!has(&notes_of_run(|_| {}, &[]), "Calendar days between"));
    let weekly = |dir: &Path| fridays_only(&dir.join("data/peers/ivelbrook.csv"));
    let notes = notes_of_run(weekly, &[]);
    assert!(
        has(&notes, text)
            && has(
                &notes,
                "Ivelbrook Instruments (data/peers/ivelbrook.csv) every 7."
            )
            && !has(&notes, "Brenvale"),
        "{notes:?}"
    );
    // Month-end prices under the case's monthly returns are sampled in full: no note (found
    // by review), though they are 30 days apart against the index's 1.4.
    let month_ends = |dir: &Path| {
        let path = dir.join("data/peers/ivelbrook.csv");
        let text = std::fs::read_to_string(&path).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        let kept: String = (lines.iter().enumerate())
            .filter(|(i, l)| {
                // A row is kept when the next row is in another month (or there is none).
                *i == 0 || lines.get(i + 1).is_none_or(|next| next[..7] != l[..7])
            })
            .map(|(_, l)| format!("{l}\n"))
            .collect();
        std::fs::write(&path, kept).unwrap();
    };
    let notes = notes_of_run(month_ends, &[]);
    assert!(!has(&notes, "Calendar days between"), "{notes:?}");
    let dir = tempfile::tempdir().unwrap();
    let case_dir = dir.path().join("case");
    common::copy_demo_case(&case_dir);
    weekly(&case_dir);
    let out = dir.path().join("out");
    let refused = hurdle(&[
        "run",
        case_dir.join("case.toml").to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--set",
        "beta.frequency=daily",
        "--set",
        "beta.lookback=500",
    ]);
    let stderr = String::from_utf8_lossy(&refused.stderr);
    assert_eq!(refused.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains("peer \"Ivelbrook Instruments\": 0 usable returns")
            && stderr.contains("Its prices in the window come every 7.")
            && stderr.contains("the index's every 1.4"),
        "{stderr}"
    );
    assert!(!out.exists());
}

// An index file holding gross returns (1 + r) instead of levels (found by review): every peer's
// R² collapses and their betas' intervals reach zero, which result.json's `cautions` record; the
// terminal's summary says so too, not only the memo.
#[test]
fn the_terminal_names_the_runs_cautions() {
    let dir = tempfile::tempdir().unwrap();
    let case_dir = dir.path().join("case");
    common::copy_demo_case(&case_dir);
    let path = case_dir.join("data/index.csv");
    let text = std::fs::read_to_string(&path).unwrap();
    let rows: Vec<(&str, f64)> = (text.lines().skip(1))
        .map(|l| l.split_once(',').unwrap())
        .map(|(d, v)| (d, v.parse().unwrap()))
        .collect();
    let gross: String = (rows.windows(2))
        .map(|w| format!("{},{:.6}\n", w[1].0, w[1].1 / w[0].1))
        .collect();
    std::fs::write(&path, format!("date,price\n{gross}")).unwrap();
    let out = dir.path().join("out");
    let case = case_dir.join("case.toml");
    let ran = common::hurdle(&[
        "run",
        case.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(ran.status.success(), "{ran:?}");
    let stdout = String::from_utf8_lossy(&ran.stdout);
    let result: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("result.json")).unwrap()).unwrap();
    assert_eq!(
        result["cautions"]["every_peer_flagged"]
            .as_array()
            .unwrap()
            .len(),
        8
    );
    assert!(
        stdout.contains("  caution: Every aggregated peer is flagged ("),
        "{stdout}"
    );
    assert!(
        stdout.contains("  caution: Betas not clearly above zero: "),
        "{stdout}"
    );
}

/// Keeps a CSV file's header and its rows dated on or before `last` (ISO dates compare as text).
fn cut_after(path: &Path, last: &str) {
    let text = std::fs::read_to_string(path).unwrap();
    let kept: Vec<&str> = (text.lines().enumerate())
        .filter(|(i, line)| *i == 0 || line[..10] <= *last)
        .map(|(_, line)| line)
        .collect();
    std::fs::write(path, kept.join("\n") + "\n").unwrap();
}

// The marks of a case rolled forward by a quarter with something left behind. Calendar facts
// (common knowledge): 2026-06-30 to 2026-09-30 is 31 + 31 + 30 = 92 days. The demo's files run
// to its valuation date, 2026-09-30, so the demo itself gets none of these notes.
#[test]
fn a_date_or_a_file_left_behind_is_noted() {
    let has = |notes: &[String], text: &str| notes.iter().any(|n| n.contains(text));
    let plain = notes_of_run(|_| {}, &[]);
    for text in [
        "days past the valuation date",
        "ends the return window",
        "before the window's last period",
    ] {
        assert!(!has(&plain, text), "{plain:?}");
    }
    // A valuation date not moved with the files: the index runs 92 days past it.
    let unmoved = notes_of_run(|_| {}, &["case.valuation_date=2026-06-30"]);
    assert!(
        has(&unmoved, "The index's prices (data/index.csv) run to 2026-09-30, 92 days past the valuation date 2026-06-30"),
        "{unmoved:?}"
    );
    // A window end kept from the quarter before.
    let kept_end = notes_of_run(|_| {}, &["beta.window_end=2026-06-30"]);
    assert!(
        has(&kept_end, "beta.window_end = 2026-06-30 ends the return window 92 days before the valuation date 2026-09-30."),
        "{kept_end:?}"
    );
    assert!(!has(&kept_end, "is not a period end"), "{kept_end:?}");
    // A peer's file and the risk-free series not extended to the new date: each is named, and
    // its missing returns counted where the note says (monthly periods: July, August and
    // September have no peer price at their end).
    let cut = notes_of_run(
        |dir| {
            cut_after(&dir.join("data/peers/corrowick.csv"), "2026-06-30");
            cut_after(&dir.join("data/risk_free.csv"), "2026-06-30");
        },
        &[],
    );
    assert!(
        has(&cut, "Corrowick Valves: its prices (data/peers/corrowick.csv) end at 2026-06-30, before the window's last period (to 2026-09-30)"),
        "{cut:?}"
    );
    assert!(
        has(&cut, "The risk-free series (data/risk_free.csv) ends at 2026-06-30, before the window's last period"),
        "{cut:?}"
    );
    assert!(
        has(
            &cut,
            "Corrowick Valves: 3 of 60 periods dropped (peer price missing 3"
        ),
        "{cut:?}"
    );
    // Quarterly, a file cut two months before the end still has a price inside the last
    // quarter, so no return is missing; its last return runs to a price 61 days old
    // (2026-07-31 to 2026-09-30: 31 + 30 days, calendar arithmetic), which the run names
    // (found by review: it was silent).
    let quarterly = [
        "beta.frequency=quarterly",
        "beta.lookback=20",
        "beta.min_observations=12",
    ];
    let stale = notes_of_run(
        |dir| cut_after(&dir.join("data/peers/corrowick.csv"), "2026-07-31"),
        &quarterly,
    );
    assert!(
        has(&stale, "Corrowick Valves: its prices (data/peers/corrowick.csv) end at 2026-07-31, 61 days before the window's end 2026-09-30: the last period's return runs to a price 61 days old"),
        "{stale:?}"
    );
    assert!(!has(
        &notes_of_run(|_| {}, &quarterly),
        "days before the window's end"
    ));
    // With a staleness limit below that age the return is dropped, and the note says so.
    let limited: Vec<&str> = quarterly
        .iter()
        .copied()
        .chain(["beta.max_stale_days=30"])
        .collect();
    let dropped = notes_of_run(
        |dir| cut_after(&dir.join("data/peers/corrowick.csv"), "2026-07-31"),
        &limited,
    );
    assert!(
        has(&dropped, "the last period's sample is 61 days old, beyond beta.max_stale_days = 30, so that return is dropped as stale"),
        "{dropped:?}"
    );
}

// A price file of its own whose dates carry a time and zone (ISO 8601 date-times, as a data
// export writes a close: `2023-03-31T16:30:00Z`, `2023-03-31 16:30`) is read by its dates, as a
// wide table's are: every figure equals the demo's exactly (the same dates and prices read).
// Found by review: a wide table accepted these forms and a file of its own refused them.
#[test]
fn date_times_in_a_price_file_are_read_by_their_date() {
    let dir = tempfile::tempdir().unwrap();
    let case_dir = dir.path().join("case");
    common::copy_demo_case(&case_dir);
    let file = case_dir.join("data/peers/corrowick.csv");
    let text = std::fs::read_to_string(&file).unwrap();
    let stamped: Vec<String> = (text.lines().enumerate())
        .map(|(i, line)| match (i, line.split_once(',')) {
            (0, _) | (_, None) => line.to_string(),
            (i, Some((date, price))) if i % 2 == 0 => format!("{date}T16:30:00Z,{price}"),
            (_, Some((date, price))) => format!("{date} 16:30,{price}"),
        })
        .collect();
    std::fs::write(&file, stamped.join("\n") + "\n").unwrap();
    let stamped = common::run_case_with(&case_dir.join("case.toml"), &dir.path().join("a"), &[]);
    let plain = run_demo(&dir.path().join("b"), &[]);
    for key in ["wacc", "cost_of_equity"] {
        assert_eq!(stamped[key], plain[key], "{key}");
    }
    assert_eq!(stamped["peers"][1]["beta"], plain["peers"][1]["beta"]);
    assert_eq!(stamped["files"][3]["rows"], plain["files"][3]["rows"]);
}

// Empty lines after the last row of a price, yield or spread-table file (a blank line, a
// spreadsheet's row of commas, a line of spaces) are no rows: the run's figures are those of the
// plain files (found by review: one extra line end stopped the run). README, "Price files".
#[test]
fn empty_lines_after_the_last_row_leave_every_figure_alone() {
    let sandbox = common::Sandbox::new();
    let plain_out = sandbox.root.path().join("plain");
    let sets = ["debt.source=rating"];
    let plain = common::run_case_with(&sandbox.path("case.toml"), &plain_out, &sets);
    for (file, tail) in [
        ("data/index.csv", "\n\n"),
        ("data/risk_free.csv", ",\n"),
        ("data/peers/brenvale.csv", "\r\n , \r\n"),
        ("data/rating_spreads_invented.csv", ",\n"),
    ] {
        let text = sandbox.read(file);
        sandbox.write(file, text + tail);
    }
    let padded_out = sandbox.root.path().join("padded");
    let padded = common::run_case_with(&sandbox.path("case.toml"), &padded_out, &sets);
    for figure in [
        "wacc",
        "cost_of_debt_pre_tax",
        "beta.unlevered",
        "peers.0.beta",
    ] {
        let at = |v: &serde_json::Value| {
            figure
                .split('.')
                .fold(v, |v, key| match key.parse::<usize>() {
                    Ok(i) => &v[i],
                    Err(_) => &v[key],
                })
                .as_f64()
                .unwrap()
        };
        assert_eq!(at(&padded), at(&plain), "{figure}");
    }
}

// Newey–West lags of 12 need windows of more than 48 observations (the lags below a quarter of
// them, README "[beta]"); the demo's rolling windows hold 30 (half its 60-period window), so the
// memo says why there is no rolling line, not "fewer than two rolling windows with enough
// observations" (found by review: that pointed at the observations).
#[test]
fn no_rolling_window_under_long_newey_west_lags_says_why() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    common::run_case_with(
        Path::new(DEMO_CASE),
        &out,
        &["beta.std_errors=newey-west", "beta.newey_west_lags=12"],
    );
    let memo = std::fs::read_to_string(out.join("memo.md")).unwrap();
    // The template states the rule (lags below N/4: 12 lags need N > 48) without computing the
    // threshold, which no output does.
    assert!(
        memo.contains(
            "no rolling window: beta.newey_west_lags = 12 needs more than four times 12 \
             observations in a window (the lags below a quarter of them), and a rolling window of \
             30 periods (beta.rolling_window) holds no more."
        ),
        "{memo}"
    );
}

// A premium of 0 without a stated basis is not applied, which the memo's table of bases says
// instead of asking for a basis (found by review: "(none given: …)" read as a missing input);
// a premium applied without one still asks (README, [premiums]: a premium that adds nothing
// needs no basis).
#[test]
fn a_premium_not_applied_needs_no_basis_in_the_memo() {
    let dir = tempfile::tempdir().unwrap();
    let result = run_demo(dir.path(), &["--set", "premiums.company_specific=0.01"]);
    assert_eq!(result["premiums"]["country"].as_f64(), Some(0.0));
    assert_eq!(result["premiums"]["country_justification"], "");
    let memo = std::fs::read_to_string(dir.path().join("memo.md")).unwrap();
    assert!(
        memo.contains("| Country risk premium | not applied (0%) |"),
        "{memo}"
    );
    assert!(
        memo.contains(
            "| Company-specific premium | (none given: premiums.company_specific_justification) |"
        ),
        "{memo}"
    );
}
