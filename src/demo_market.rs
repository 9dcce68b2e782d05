//! An invented market for `hurdle universe`: the demo case's eight peers among forty more
//! invented securities in six industries, against the demo case's own index.
//!
//! Nothing here is market data. Every other security's daily prices follow the one-factor model
//! of [`crate::demo`], r − r_f = α + β·(r_m − r_f) + ε, with r_m the demo index's own returns and
//! a true asset beta drawn around its industry's level, relevered with Hamada at the security's
//! invented D/E. The peers' prices are the case's, cell for cell, and `universe.peer_set` lists
//! them, so the summary sets the case's peer set beside its whole industry; the universe file
//! takes the case's `[beta]` and `[leverage]` settings, so each peer's figures are the case's
//! own. A few securities show what the summary notes: a late listing with too few returns for
//! the window, a price series that stops months before the valuation date, an attributes row
//! without a tax rate and one with more cash than half its firm value. `hurdle-demo-data` writes
//! the files to `CASE_DIR-market`; they are not kept in the repository (about 2 MB), as anyone
//! can regenerate them.

use std::collections::BTreeMap;
use std::fmt::Write as _;

use chrono::NaiveDate;

use crate::capital::leverage::{CapitalStructure, Formula};
use crate::demo::{generate, PEERS};
use crate::demo_wide::cells as series;
use crate::stats::random::Rng;

/// The folder of the demo market, beside `cases/quillmarsh`.
pub const FOLDER: &str = "quillmarsh-market";

/// The industry label the demo case's peers carry.
pub const PEER_INDUSTRY: &str = "Pumps and flow control";

/// One invented industry: how many securities it has besides the case's peers, and the ranges
/// their true asset betas, D/E, cash (a share of equity value), tax rates and firm-specific
/// daily volatilities are drawn from (uniformly).
struct Industry {
    label: &'static str,
    sector: &'static str,
    securities: usize,
    asset_beta: (f64, f64),
    debt_to_equity: (f64, f64),
    cash_share: (f64, f64),
    tax_rate: (f64, f64),
    daily_vol: (f64, f64),
}

const INDUSTRIES: [Industry; 6] = [
    Industry {
        label: PEER_INDUSTRY,
        sector: "Industrials",
        securities: 6,
        asset_beta: (0.70, 1.05),
        debt_to_equity: (0.10, 0.70),
        cash_share: (0.02, 0.12),
        tax_rate: (0.22, 0.30),
        daily_vol: (0.011, 0.019),
    },
    Industry {
        label: "Specialty chemicals",
        sector: "Materials",
        securities: 7,
        asset_beta: (0.85, 1.25),
        debt_to_equity: (0.20, 0.80),
        cash_share: (0.03, 0.10),
        tax_rate: (0.20, 0.30),
        daily_vol: (0.012, 0.020),
    },
    Industry {
        label: "Water and power utilities",
        sector: "Utilities",
        securities: 7,
        asset_beta: (0.25, 0.45),
        debt_to_equity: (0.80, 1.60),
        cash_share: (0.01, 0.05),
        tax_rate: (0.20, 0.28),
        daily_vol: (0.008, 0.012),
    },
    Industry {
        label: "Software services",
        sector: "Technology",
        securities: 7,
        asset_beta: (1.05, 1.45),
        debt_to_equity: (0.00, 0.15),
        cash_share: (0.05, 0.25),
        tax_rate: (0.15, 0.28),
        daily_vol: (0.016, 0.026),
    },
    Industry {
        label: "Freight and logistics",
        sector: "Industrials",
        securities: 7,
        asset_beta: (0.80, 1.15),
        debt_to_equity: (0.30, 1.00),
        cash_share: (0.02, 0.10),
        tax_rate: (0.22, 0.30),
        daily_vol: (0.013, 0.021),
    },
    Industry {
        label: "Packaged foods",
        sector: "Consumer staples",
        securities: 6,
        asset_beta: (0.40, 0.70),
        debt_to_equity: (0.25, 0.75),
        cash_share: (0.02, 0.08),
        tax_rate: (0.22, 0.30),
        daily_vol: (0.009, 0.014),
    },
];

/// The securities that show what the summary notes, by their place in the generated list: the
/// first lists too late for the window's minimum of returns, the second stops trading months
/// before the valuation date, the third has no tax rate and the fourth holds more cash than
/// half its equity plus debt.
const LATE_LISTING: usize = 9;
const STOPS_EARLY: usize = 17;
const NO_TAX_RATE: usize = 24;
const CASH_HEAVY: usize = 27;

/// The demo market's files (path relative to its folder, bytes).
pub fn generate_market(seed: u64) -> Vec<(String, Vec<u8>)> {
    let case: BTreeMap<String, String> = generate(seed).into_iter().collect();
    let index = series(&case["data/index.csv"]);
    let yields: BTreeMap<NaiveDate, f64> = series(&case["data/risk_free.csv"])
        .into_iter()
        .map(|(date, text)| (date, number(&text)))
        .collect();
    // Each security's prices as text by date: the peers' from their files, the others generated.
    let mut prices: Vec<(String, BTreeMap<NaiveDate, String>)> = PEERS
        .iter()
        .map(|peer| {
            let file = &case[&format!("data/peers/{}.csv", peer.file_stem)];
            (peer.name.to_string(), series(file))
        })
        .collect();
    let mut attributes = String::from("security,industry,sector,market_cap,debt,cash,tax_rate\n");
    for peer in &PEERS {
        // The case's own figures, as the case file holds them.
        writeln!(
            attributes,
            "{},{PEER_INDUSTRY},Industrials,{},{},{},{}",
            peer.name, peer.equity_value, peer.debt, peer.cash, peer.tax_rate
        )
        .expect("String write");
    }
    let mut rng = Rng::seeded(seed ^ 0x6d61_726b_6574);
    let mut k = 0;
    for industry in &INDUSTRIES {
        for _ in 0..industry.securities {
            k += 1;
            let (id, row, model) = invented_security(k, industry, &mut rng);
            prices.push((id, model.prices(&index, &yields, &mut rng)));
            attributes.push_str(&row);
        }
    }
    let file = |path: &str, text: String| (path.to_string(), text.into_bytes());
    vec![
        file("universe.toml", universe_toml(&case["case.toml"])),
        file("data/panel.csv", panel(&index, &prices)),
        file("data/attributes.csv", attributes),
        file("data/index.csv", case["data/index.csv"].clone()),
        file("data/risk_free.csv", case["data/risk_free.csv"].clone()),
    ]
}

/// The `k`-th invented security of `industry`: its id, its attributes row and its price model
/// (the model's shocks are drawn afterwards, from the same generator).
fn invented_security(k: usize, industry: &Industry, rng: &mut Rng) -> (String, String, Model) {
    let mut draw = |(low, high): (f64, f64)| low + (high - low) * rng.uniform();
    let id = format!("DM-{k:03}");
    let equity = (10.0_f64.powf(draw((2.3, 3.9))) * 100.0).round() / 100.0;
    let debt_to_equity = draw(industry.debt_to_equity);
    let debt = (equity * debt_to_equity * 100.0).round() / 100.0;
    let cash_share = match k {
        CASH_HEAVY => 0.7,
        _ => draw(industry.cash_share),
    };
    let cash = (equity * cash_share * 100.0).round() / 100.0;
    let tax_rate = (draw(industry.tax_rate) * 100.0).round() / 100.0;
    let equity_beta = Formula::Hamada.relever(
        draw(industry.asset_beta),
        CapitalStructure {
            debt_to_equity: debt / equity,
            tax_rate,
        },
    );
    let model = Model {
        equity_beta,
        daily_alpha: draw((-0.00003, 0.00003)),
        daily_vol: draw(industry.daily_vol),
        starting_price: draw((5.0, 150.0)),
        listed_from: (k == LATE_LISTING).then(|| day(2024, 11, 4)),
        last_trade: (k == STOPS_EARLY).then(|| day(2026, 4, 30)),
    };
    let tax = match k {
        NO_TAX_RATE => String::new(),
        _ => format!("{tax_rate:.2}"),
    };
    let row = format!(
        "{id},{},{},{equity:.2},{debt:.2},{cash:.2},{tax}\n",
        industry.label, industry.sector
    );
    (id, row, model)
}

/// One invented security's price model.
struct Model {
    equity_beta: f64,
    daily_alpha: f64,
    daily_vol: f64,
    starting_price: f64,
    listed_from: Option<NaiveDate>,
    last_trade: Option<NaiveDate>,
}

impl Model {
    /// Prices on the index's dates (from the listing to the last trade), to four decimals.
    fn prices(
        &self,
        index: &BTreeMap<NaiveDate, String>,
        yields: &BTreeMap<NaiveDate, f64>,
        rng: &mut Rng,
    ) -> BTreeMap<NaiveDate, String> {
        let mut out = BTreeMap::new();
        let mut price = self.starting_price;
        let mut previous: Option<f64> = None;
        for (date, level) in index {
            let shock = rng.normal();
            let level = number(level);
            if let Some(before) = previous.replace(level) {
                let market = level / before - 1.0;
                let rf = yields.get(date).copied().unwrap_or(0.0) / 252.0;
                price *= 1.0
                    + rf
                    + self.daily_alpha
                    + self.equity_beta * (market - rf)
                    + self.daily_vol * shock;
            }
            let listed = self.listed_from.is_none_or(|first| *date >= first);
            let trading = self.last_trade.is_none_or(|last| *date <= last);
            if listed && trading {
                out.insert(*date, format!("{price:.4}"));
            }
        }
        out
    }
}

/// The long panel: one `date,security,close` row per price, by date and then by security.
fn panel(
    index: &BTreeMap<NaiveDate, String>,
    prices: &[(String, BTreeMap<NaiveDate, String>)],
) -> String {
    let mut text = String::from("date,security,close\n");
    for date in index.keys() {
        for (id, cells) in prices {
            if let Some(price) = cells.get(date) {
                writeln!(text, "{date},{id},{price}").expect("String write");
            }
        }
    }
    text
}

fn number(text: &str) -> f64 {
    text.parse().expect("generated numbers")
}

fn day(year: i32, month: u32, day: u32) -> NaiveDate {
    NaiveDate::from_ymd_opt(year, month, day).expect("valid date")
}

/// The universe file: the case's index and risk-free series, its `[beta]` and `[leverage]`
/// sections as the case file writes them (so each peer's figures are the case's), its peers as
/// the peer set.
fn universe_toml(case: &str) -> String {
    // A section of the case file: its header line to the line before the next header.
    let section = |header: &str| -> String {
        let start = case
            .find(&format!("\n{header}\n"))
            .expect("the demo case has it")
            + 1;
        let end = case[start + 1..]
            .find("\n[")
            .map_or(case.len(), |e| start + 2 + e);
        case[start..end].trim_end().to_string()
    };
    let peers: String = PEERS
        .iter()
        .map(|p| format!("    \"{}\",\n", p.name))
        .collect();
    format!(
        r#"# Demo market: an invented scenario. Every security, figure and price here is fictional,
# generated by `hurdle-demo-data` (src/demo_market.rs) from a seeded one-factor model against
# the demo case's index. Not market data. `hurdle universe universe.toml` writes the industry
# table to output/; the case's eight peers are listed as universe.peer_set, so summary.md sets
# the case's peer set beside its whole industry.

[universe]
title = "Demo market (invented): industry betas beside the Quillmarsh peer set"
valuation_date = 2026-09-30
peer_set = [
{peers}]

[market.index]
name = "Demo broad market index (fictional)"
prices = "data/index.csv"

[market.risk_free_series]
yields = "data/risk_free.csv"

# The demo case's own settings, so each peer's figures are the case's.
{}

{}

[panel]
prices = "data/panel.csv"
layout = "long"
date_column = "date"
security_column = "security"
price_column = "close"

[attributes]
file = "data/attributes.csv"
security_column = "security"
industry_column = "industry"
equity_value_column = "market_cap"
debt_column = "debt"
cash_column = "cash"
tax_rate_column = "tax_rate"
"#,
        section("[beta]"),
        section("[leverage]")
    )
}
