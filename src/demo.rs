//! The demo case: an invented industry, generated from a seeded one-factor model.
//!
//! Nothing here is market data. "Quillmarsh Pumps" and its eight peers are fictional; their
//! daily prices follow r_i − r_f = α_i + β_i·(r_m − r_f) + ε_i with stated true betas, so a user
//! can see how well the estimates recover them. Each peer's true equity beta is its true asset
//! beta relevered with Hamada at its own debt-to-equity, so the true asset betas are also the
//! answer the unlevering step should approach. One peer lists late and one has a month with no
//! trades, to show dropped periods. The risk-free yield wanders around an invented level, the
//! equity risk premium is an invented, off-round figure and the spread tables come from a stated
//! formula, so none of them follows real data or a published table. `hurdle-demo-data` writes the
//! files; a test checks that the files in `cases/quillmarsh/` are exactly what this generator
//! produces.

use std::fmt::Write as _;

use chrono::{Datelike, NaiveDate, Weekday};

use crate::capital::leverage::{CapitalStructure, Formula};
use crate::stats::random::Rng;

/// The seed of the shipped demo data.
pub const SEED: u64 = 20_261_202;

/// One invented peer and the parameters its prices are generated with.
#[derive(Debug, Clone, Copy)]
pub struct DemoPeer {
    pub name: &'static str,
    pub file_stem: &'static str,
    pub true_asset_beta: f64,
    /// Daily alpha over the risk-free rate.
    pub daily_alpha: f64,
    /// Daily standard deviation of the firm-specific return.
    pub daily_idiosyncratic_vol: f64,
    pub equity_value: f64,
    pub debt: f64,
    pub cash: f64,
    pub tax_rate: f64,
    pub starting_price: f64,
    /// First trading day, when the shares list after the generated history begins.
    pub listed_from: Option<(i32, u32, u32)>,
    /// A calendar month with no trades (a suspension).
    pub suspended_month: Option<(i32, u32)>,
}

impl DemoPeer {
    /// The true equity beta: the asset beta relevered with Hamada at the peer's own structure.
    pub fn true_equity_beta(&self) -> f64 {
        Formula::Hamada.relever(
            self.true_asset_beta,
            CapitalStructure {
                debt_to_equity: self.debt / self.equity_value,
                tax_rate: self.tax_rate,
            },
        )
    }
}

/// The eight invented peers.
pub const PEERS: [DemoPeer; 8] = [
    DemoPeer {
        name: "Brenvale Fluid Systems",
        file_stem: "brenvale",
        true_asset_beta: 0.80,
        daily_alpha: 0.00002,
        daily_idiosyncratic_vol: 0.013,
        equity_value: 2400.0,
        debt: 600.0,
        cash: 150.0,
        tax_rate: 0.25,
        starting_price: 42.0,
        listed_from: None,
        suspended_month: None,
    },
    DemoPeer {
        name: "Corrowick Valves",
        file_stem: "corrowick",
        true_asset_beta: 0.90,
        daily_alpha: -0.00001,
        daily_idiosyncratic_vol: 0.016,
        equity_value: 1150.0,
        debt: 520.0,
        cash: 60.0,
        tax_rate: 0.25,
        starting_price: 18.5,
        listed_from: None,
        suspended_month: None,
    },
    DemoPeer {
        name: "Dunmere Hydraulics",
        file_stem: "dunmere",
        true_asset_beta: 0.85,
        daily_alpha: 0.00003,
        daily_idiosyncratic_vol: 0.012,
        equity_value: 3800.0,
        debt: 400.0,
        cash: 300.0,
        tax_rate: 0.28,
        starting_price: 77.0,
        listed_from: None,
        suspended_month: None,
    },
    DemoPeer {
        name: "Estwold Flow Controls",
        file_stem: "estwold",
        true_asset_beta: 0.95,
        daily_alpha: 0.0,
        daily_idiosyncratic_vol: 0.018,
        equity_value: 860.0,
        debt: 610.0,
        cash: 40.0,
        tax_rate: 0.25,
        starting_price: 12.0,
        listed_from: Some((2022, 3, 1)),
        suspended_month: None,
    },
    DemoPeer {
        name: "Fenhallow Seals",
        file_stem: "fenhallow",
        true_asset_beta: 0.75,
        daily_alpha: 0.00001,
        daily_idiosyncratic_vol: 0.014,
        equity_value: 1720.0,
        debt: 250.0,
        cash: 90.0,
        tax_rate: 0.30,
        starting_price: 33.0,
        listed_from: None,
        suspended_month: None,
    },
    DemoPeer {
        name: "Glimmerby Pumpworks",
        file_stem: "glimmerby",
        true_asset_beta: 1.00,
        daily_alpha: -0.00002,
        daily_idiosyncratic_vol: 0.019,
        equity_value: 640.0,
        debt: 380.0,
        cash: 25.0,
        tax_rate: 0.22,
        starting_price: 9.4,
        listed_from: None,
        suspended_month: Some((2024, 7)),
    },
    DemoPeer {
        name: "Hollinsedge Industrial",
        file_stem: "hollinsedge",
        true_asset_beta: 0.80,
        daily_alpha: 0.00002,
        daily_idiosyncratic_vol: 0.011,
        equity_value: 5200.0,
        debt: 1900.0,
        cash: 410.0,
        tax_rate: 0.27,
        starting_price: 120.0,
        listed_from: None,
        suspended_month: None,
    },
    DemoPeer {
        name: "Ivelbrook Instruments",
        file_stem: "ivelbrook",
        true_asset_beta: 0.88,
        daily_alpha: 0.00001,
        daily_idiosyncratic_vol: 0.015,
        equity_value: 990.0,
        debt: 120.0,
        cash: 110.0,
        tax_rate: 0.25,
        starting_price: 26.0,
        listed_from: None,
        suspended_month: None,
    },
];

/// The case folder's relative path of each generated file, with its contents.
pub fn generate(seed: u64) -> Vec<(String, String)> {
    let mut rng = Rng::seeded(seed);
    let first = NaiveDate::from_ymd_opt(2020, 1, 2).expect("valid date");
    let last = NaiveDate::from_ymd_opt(2026, 9, 30).expect("valid date");
    let days: Vec<NaiveDate> = first
        .iter_days()
        .take_while(|d| *d <= last)
        .filter(|d| !matches!(d.weekday(), Weekday::Sat | Weekday::Sun))
        .collect();
    let n = days.len();

    // Risk-free yield: a seeded walk pulled back toward an invented level, with no trend, so it
    // tracks no history; daily steps of 0.03 points, a few tenths of a point wide over a year.
    let mut yields = Vec::with_capacity(n);
    let mut deviation = 0.0_f64;
    for _ in 0..n {
        deviation = 0.996 * deviation + 0.0003 * rng.normal();
        yields.push(((RISK_FREE_LEVEL + deviation) * 1e5).round() / 1e5);
    }
    let daily_rf: Vec<f64> = yields.iter().map(|y| y / 252.0).collect();
    let market_excess: Vec<f64> = (0..n).map(|_| 0.00028 + 0.0105 * rng.normal()).collect();

    let mut files = Vec::new();
    let mut index = String::from("date,price\n");
    let mut level = 1000.0_f64;
    for t in 0..n {
        if t > 0 {
            level *= 1.0 + daily_rf[t] + market_excess[t];
        }
        writeln!(index, "{},{:.2}", days[t], level).expect("String write");
    }
    files.push(("data/index.csv".to_string(), index));

    let mut rf_file = String::from("date,yield\n");
    for t in 0..n {
        writeln!(rf_file, "{},{:.5}", days[t], yields[t]).expect("String write");
    }
    files.push(("data/risk_free.csv".to_string(), rf_file));

    for peer in &PEERS {
        let beta = peer.true_equity_beta();
        let listed = peer
            .listed_from
            .map(|(y, m, d)| NaiveDate::from_ymd_opt(y, m, d).expect("valid listing date"));
        let mut text = String::from("date,price\n");
        let mut price = peer.starting_price;
        for t in 0..n {
            // Draw for every day so that one peer's listing or suspension leaves others' paths alone.
            let shock = rng.normal();
            if t > 0 {
                price *= 1.0
                    + daily_rf[t]
                    + peer.daily_alpha
                    + beta * market_excess[t]
                    + peer.daily_idiosyncratic_vol * shock;
            }
            let day = days[t];
            if listed.is_some_and(|l| day < l) {
                continue;
            }
            if peer.suspended_month == Some((day.year(), day.month())) {
                continue;
            }
            writeln!(text, "{day},{price:.4}").expect("String write");
        }
        files.push((format!("data/peers/{}.csv", peer.file_stem), text));
    }
    files.extend(spread_tables());
    // The case's spot rate is the yield series' last value, to the basis point.
    let spot = (yields[n - 1] * 1e4).round() / 1e4;
    files.push(("case.toml".to_string(), case_toml(spot)));
    files.push(("claimed.toml".to_string(), CLAIMED.to_string()));
    files
}

/// An invented adviser's build-up for the reconciliation example; not market data.
const CLAIMED: &str = r#"# An invented build-up, as an adviser might hand it over, for the demo's reconciliation.
# Fictional figures, not market data. `hurdle compare case.toml claimed.toml` bridges to it.

[claimed]
label = "Adviser's build-up (fictional)"
wacc = 0.0935
risk_free_rate = 0.040
equity_risk_premium = 0.060
beta = 1.10
premiums = 0.010
cost_of_debt_pre_tax = 0.062
tax_rate = 0.25
debt_to_equity = 0.50
"#;

/// The level the demo's risk-free yield wanders around: an invented figure.
pub const RISK_FREE_LEVEL: f64 = 0.0290;

/// The rating classes of the demo's spread tables, lowest first.
pub const DEMO_RATINGS: [&str; 8] = ["C", "CCC", "B", "BB", "BBB", "A", "AA", "AAA"];

/// The demo's invented coverage-to-rating-to-spread rows, lowest rating first: `(rating,
/// min_coverage, spread)`. Made by formula, so that they are plainly invented and sit on no
/// published grid: the k-th class above the lowest starts at coverage 0.9·1.47^k (rounded to two
/// decimals; the lowest class starts at 0), and the class n steps below the top pays a spread of
/// 0.45%·1.6^n (rounded to a basis point). Illustrative only, not market data.
pub fn demo_spreads() -> Vec<(&'static str, f64, f64)> {
    let top = DEMO_RATINGS.len() - 1;
    DEMO_RATINGS
        .iter()
        .enumerate()
        .map(|(k, &rating)| {
            let min_coverage = if k == 0 {
                0.0
            } else {
                (0.9 * 1.47_f64.powi(k as i32) * 100.0).round() / 100.0
            };
            let spread = (0.0045 * 1.6_f64.powi((top - k) as i32) * 1e4).round() / 1e4;
            (rating, min_coverage, spread)
        })
        .collect()
}

fn spread_tables() -> Vec<(String, String)> {
    let warning = "# ILLUSTRATIVE ONLY: invented for the demo case by hurdle-demo-data \
                   (src/demo.rs); not market data.\n# Made by formula, on no published grid: \
                   the class n steps below the top pays 0.45% * 1.6^n (to a basis point)";
    let mut rating = format!("{warning}.\nrating,spread\n");
    let mut coverage = format!(
        "{warning}; the k-th class above the lowest starts at coverage 0.9 * 1.47^k (to two \
         decimals).\n# A row applies from its min_coverage (EBIT / interest expense, inclusive) \
         up to the next row's.\nmin_coverage,rating,spread\n"
    );
    let rows = demo_spreads();
    for (name, _, spread) in rows.iter().rev() {
        writeln!(rating, "{name},{spread:.4}").expect("String write");
    }
    for (name, low, spread) in &rows {
        writeln!(coverage, "{low:.2},{name},{spread:.4}").expect("String write");
    }
    vec![
        ("data/rating_spreads_invented.csv".to_string(), rating),
        ("data/coverage_grid_invented.csv".to_string(), coverage),
    ]
}

/// The demo's case file, with `spot` (the yield series' last value) as the risk-free rate.
fn case_toml(spot: f64) -> String {
    let mut text = String::from(
        r#"# Demo case: an invented scenario. Every firm, figure and price here is fictional,
# generated by `hurdle-demo-data` (src/demo.rs) from a seeded one-factor model. Not market data.

[case]
title = "Quillmarsh Pumps: cost of capital for a fair-value measurement (demo)"
subject = "Quillmarsh Pumps (fictional)"
valuation_date = 2026-09-30
currency = "EUR"
peer_selection = "Illustrative: listed makers of industrial pumps, valves and seals with at least three years of prices (invented demo peers)."

[market]
risk_free_rate = RISK_FREE_SPOT  # illustrative: the demo yield series' last value
equity_risk_premium = 0.0517  # illustrative, invented
risk_free_rate_justification = "Illustrative: the last value of the demo's invented yield series, at the valuation date."
equity_risk_premium_justification = "Illustrative: an invented figure for the demo, not an estimate of any market's premium."

[market.index]
name = "Demo broad market index (fictional)"
prices = "data/index.csv"

[market.risk_free_series]
yields = "data/risk_free.csv"

[beta]
frequency = "monthly"
lookback = 60
min_observations = 36
method = "ols"
adjustment = "blume"

[leverage]
formula = "hamada"
aggregation = "median"

[target]
debt_to_equity = 0.40
tax_rate = 0.25
# For target.source = "subject" (the subject's own current structure); illustrative.
subject_equity_value = 1500.0
subject_debt = 450.0
subject_cash = 80.0
justification = "Illustrative: the structure the invented subject plans to hold, above its current 0.30 (invented demo figure)."

[debt]
source = "given"              # or "rating" or "coverage", e.g. --set debt.source=coverage
cost_pre_tax = 0.0463         # illustrative
rating = "BBB"                # illustrative; for source = "rating"
rating_table = "data/rating_spreads_invented.csv"  # illustrative, invented table
ebit = 210.0                  # illustrative; for source = "coverage" (coverage 4.375)
interest_expense = 48.0       # illustrative
coverage_table = "data/coverage_grid_invented.csv"  # illustrative, invented table
justification = "Illustrative: an invented yield on the subject's debt (demo figure)."

[premiums]
size = 0.010                  # illustrative
country = 0.0
company_specific = 0.0
country_method = "flat"       # or "exposure" (with country_exposure) or "beta-scaled"
size_justification = "Illustrative: an invented premium that exercises the premium line; the demo subject is mid-sized among its peers, so a real case would need its own ground."

[uncertainty]
draws = 10000
seed = 1

[reconcile]
claimed = "claimed.toml"      # the memo bridges this case's WACC to the claimed build-up
"#,
    )
    .replace("RISK_FREE_SPOT", &format!("{spot:.4}"));
    for peer in &PEERS {
        write!(
            text,
            "\n[[peer]]\nname = \"{}\"\nprices = \"data/peers/{}.csv\"\nequity_value = {:.1}\ndebt = {:.1}\ncash = {:.1}\ntax_rate = {:.2}\n",
            peer.name, peer.file_stem, peer.equity_value, peer.debt, peer.cash, peer.tax_rate
        )
        .expect("String write");
    }
    text
}
