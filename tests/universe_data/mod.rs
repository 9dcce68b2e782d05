//! A small seeded universe for the `hurdle universe` tests, written into a temporary folder:
//! twenty invented securities in five industries over 470 weekdays with market-wide
//! holidays, scattered missing days, a late listing, a thin trader that can still be estimated,
//! one too thin to estimate, a security without attributes, attributes with missing fields and
//! a row for a security the panel does not hold. The same prices are written as a long CSV (rows
//! shuffled), a wide CSV, long and wide Parquet, and one CSV per security for a case file.
//! Nothing here is market data.

#![allow(dead_code)]

use std::fmt::Write as _;
use std::fs;
use std::path::{Path, PathBuf};

use chrono::{Datelike, NaiveDate, Weekday};
use hurdle::stats::random::Rng;
use polars::prelude::*;

/// Invented holidays: weekdays on which nothing trades, the index included.
const HOLIDAYS: [&str; 8] = [
    "2025-01-01",
    "2025-04-18",
    "2025-05-26",
    "2025-08-25",
    "2025-12-25",
    "2026-01-01",
    "2026-04-03",
    "2026-05-25",
];

/// One invented security: id, industry (None: no attributes row), true beta and how it trades.
struct Spec {
    id: &'static str,
    industry: Option<&'static str>,
    beta: f64,
    /// Share of days with a trade.
    trades: f64,
    /// First trading day as a share of the calendar.
    listed_from: f64,
}

const SECURITIES: [Spec; 20] = [
    spec("S01", Some("Industry A"), 0.8, 0.98, 0.0),
    spec("S02", Some("Industry A"), 1.1, 0.98, 0.0),
    spec("S03", Some("Industry A"), 0.9, 0.98, 0.0),
    spec("S04", Some("Industry B"), 1.3, 0.98, 0.0),
    spec("S05", Some("Industry B"), 1.5, 0.98, 0.0),
    spec("S06", Some("Industry B"), 1.2, 0.98, 0.0),
    spec("S07", Some("Industry C"), 0.6, 0.98, 0.0),
    spec("S08", Some("Industry C"), 0.7, 0.98, 0.0),
    spec("S09", Some("Industry C"), 0.9, 0.98, 0.4),
    spec("S10", Some("Industry D"), 1.0, 0.4, 0.0),
    spec("S11", Some("Industry D"), 1.0, 0.08, 0.0),
    spec("S12", None, 1.0, 0.98, 0.0),
    // Eight more in one industry, so that its medians have a 95% interval (six values at least)
    // whose order statistics differ from a 90% interval's (they coincide for six or seven).
    spec("S13", Some("Industry E"), 0.7, 0.98, 0.0),
    spec("S14", Some("Industry E"), 0.85, 0.98, 0.0),
    spec("S15", Some("Industry E"), 1.0, 0.98, 0.0),
    spec("S16", Some("Industry E"), 1.15, 0.98, 0.0),
    spec("S17", Some("Industry E"), 1.3, 0.98, 0.0),
    spec("S18", Some("Industry E"), 1.45, 0.98, 0.0),
    spec("S19", Some("Industry E"), 0.95, 0.98, 0.0),
    spec("S20", Some("Industry E"), 1.05, 0.98, 0.0),
];

const fn spec(
    id: &'static str,
    industry: Option<&'static str>,
    beta: f64,
    trades: f64,
    listed_from: f64,
) -> Spec {
    Spec {
        id,
        industry,
        beta,
        trades,
        listed_from,
    }
}

/// The generated files.
pub struct Universe {
    pub dir: PathBuf,
    pub dates: Vec<NaiveDate>,
    /// Per security (in `SECURITIES` order): its (date, price) rows.
    pub prices: Vec<(String, Vec<(NaiveDate, f64)>)>,
}

pub fn date(text: &str) -> NaiveDate {
    NaiveDate::parse_from_str(text, "%Y-%m-%d").unwrap()
}

/// The trading calendar: weekdays from 2024-12-02 to 2026-09-30 less the holidays.
fn calendar() -> Vec<NaiveDate> {
    let holidays: Vec<NaiveDate> = HOLIDAYS.iter().map(|d| date(d)).collect();
    let mut day = date("2024-12-02");
    let mut out = Vec::new();
    while day <= date("2026-09-30") {
        if !matches!(day.weekday(), Weekday::Sat | Weekday::Sun) && !holidays.contains(&day) {
            out.push(day);
        }
        day = day.succ_opt().unwrap();
    }
    out
}

/// Writes the universe into `dir` with prices from `seed`.
pub fn generate(dir: &Path, seed: u64) -> Universe {
    fs::create_dir_all(dir.join("peers")).unwrap();
    let mut rng = Rng::seeded(seed);
    let dates = calendar();
    let market: Vec<f64> = dates.iter().map(|_| 0.0003 + 0.01 * rng.normal()).collect();
    let mut index = String::from("date,price\n");
    let mut level = 1000.0;
    for (d, r) in dates.iter().zip(&market) {
        level *= 1.0 + r;
        let _ = writeln!(index, "{d},{:.4}", level);
    }
    fs::write(dir.join("index.csv"), index).unwrap();
    let mut prices = Vec::new();
    for s in &SECURITIES {
        let mut price = 20.0 + 80.0 * rng.uniform();
        let mut rows = Vec::new();
        for (k, (d, m)) in dates.iter().zip(&market).enumerate() {
            price *= 1.0 + s.beta * m + 0.015 * rng.normal();
            let listed = k as f64 >= s.listed_from * dates.len() as f64;
            if listed && rng.uniform() < s.trades {
                // Four decimals, so text and doubles agree exactly in every format.
                rows.push((*d, (price * 1e4).round() / 1e4));
            }
        }
        prices.push((s.id.to_string(), rows));
    }
    let universe = Universe {
        dir: dir.to_path_buf(),
        dates,
        prices,
    };
    universe.write_long_csv(&mut rng);
    universe.write_wide_csv();
    universe.write_parquet();
    universe.write_peer_files();
    write_attributes(dir);
    write_yields(dir, &universe.dates);
    fs::write(dir.join("universe.toml"), UNIVERSE_TOML).unwrap();
    universe
}

impl Universe {
    /// Long CSV with the rows in a seeded random order ("rows in any order").
    fn write_long_csv(&self, rng: &mut Rng) {
        let mut rows: Vec<String> = self
            .prices
            .iter()
            .flat_map(|(id, rows)| rows.iter().map(move |(d, p)| format!("{d},{id},{p}\n")))
            .collect();
        for i in (1..rows.len()).rev() {
            let j = (rng.uniform() * (i + 1) as f64) as usize;
            rows.swap(i, j);
        }
        let text: String = std::iter::once("date,security,close\n".to_string())
            .chain(rows)
            .collect();
        fs::write(self.dir.join("prices-long.csv"), text).unwrap();
    }

    fn write_wide_csv(&self) {
        let mut text = String::from("date");
        for (id, _) in &self.prices {
            let _ = write!(text, ",{id}");
        }
        text.push('\n');
        for d in &self.dates {
            text.push_str(&d.to_string());
            for (_, rows) in &self.prices {
                text.push(',');
                if let Ok(i) = rows.binary_search_by_key(d, |(d, _)| *d) {
                    text.push_str(&rows[i].1.to_string());
                }
            }
            text.push('\n');
        }
        fs::write(self.dir.join("prices-wide.csv"), text).unwrap();
    }

    /// The long and wide panels as Parquet, through polars (dates as a Date column).
    fn write_parquet(&self) {
        let long = |name: &str| {
            let path = self.dir.join("prices-long.csv");
            let mut frame = CsvReadOptions::default()
                .with_has_header(true)
                .with_schema(Some(Arc::new(
                    [
                        Field::new("date".into(), DataType::Date),
                        Field::new("security".into(), DataType::String),
                        Field::new("close".into(), DataType::Float64),
                    ]
                    .into_iter()
                    .collect(),
                )))
                .try_into_reader_with_file_path(Some(path))
                .unwrap()
                .finish()
                .unwrap();
            let file = fs::File::create(self.dir.join(name)).unwrap();
            ParquetWriter::new(file).finish(&mut frame).unwrap();
        };
        long("prices-long.parquet");
        let mut columns = vec![Column::new("date".into(), self.dates.clone())];
        for (id, rows) in &self.prices {
            let cells: Vec<Option<f64>> = self
                .dates
                .iter()
                .map(|d| {
                    rows.binary_search_by_key(d, |(d, _)| *d)
                        .ok()
                        .map(|i| rows[i].1)
                })
                .collect();
            columns.push(Column::new(id.as_str().into(), cells));
        }
        let mut frame = DataFrame::new(self.dates.len(), columns).unwrap();
        let file = fs::File::create(self.dir.join("prices-wide.parquet")).unwrap();
        ParquetWriter::new(file).finish(&mut frame).unwrap();
    }

    /// One `date,price` file per security, for a case file that lists it as a peer.
    fn write_peer_files(&self) {
        for (id, rows) in &self.prices {
            let mut text = String::from("date,price\n");
            for (d, p) in rows {
                let _ = writeln!(text, "{d},{p}");
            }
            fs::write(self.dir.join(format!("peers/{id}.csv")), text).unwrap();
        }
    }
}

/// `yields.csv`: an invented annual risk-free yield on each trading day but every 23rd (from
/// the sixth), whose periods then have no rate. A formula, not the generator, so that the
/// prices stay those of every earlier version of this universe.
fn write_yields(dir: &Path, dates: &[NaiveDate]) {
    let mut text = String::from("date,yield\n");
    for (k, d) in dates.iter().enumerate() {
        if k % 23 != 5 {
            let t = k as f64;
            let y = 0.025 + 0.01 * (t / 40.0).sin() + 0.002 * (t / 7.0).cos();
            let _ = writeln!(text, "{d},{y:.6}");
        }
    }
    fs::write(dir.join("yields.csv"), text).unwrap();
}

/// Security `i`'s market value of equity, debt, cash and tax rate (before the gaps below).
pub fn figures(i: usize) -> (f64, f64, f64, f64) {
    let i = i as f64;
    (
        500.0 + 250.0 * i,
        40.0 + 35.0 * i,
        10.0 + 5.0 * i,
        0.2 + 0.01 * i,
    )
}

/// Attributes: S05 lacks its debt, S06 its tax rate, S12 has no row, S99 has no prices.
fn write_attributes(dir: &Path) {
    let mut text = String::from("security,industry,sector,market_cap,debt,cash,tax_rate\n");
    for (i, s) in SECURITIES.iter().enumerate() {
        let Some(industry) = s.industry else { continue };
        let (cap, debt, cash, tax) = figures(i);
        let debt = if s.id == "S05" {
            String::new()
        } else {
            debt.to_string()
        };
        let tax = if s.id == "S06" {
            String::new()
        } else {
            tax.to_string()
        };
        let _ = writeln!(
            text,
            "{},{industry},Sector {},{cap},{debt},{cash},{tax}",
            s.id,
            i % 2 + 1
        );
    }
    text.push_str("S99,Industry A,Sector 1,900,100,10,0.25\n");
    fs::write(dir.join("attributes.csv"), text).unwrap();
}

pub const UNIVERSE_TOML: &str = r#"# Invented test universe; not market data.
[universe]
title = "Test universe"
valuation_date = 2026-09-30

[market.index]
prices = "index.csv"

[beta]
frequency = "daily"
window_start = 2025-01-02
min_observations = 40

[leverage]
formula = "hamada"

[panel]
prices = "prices-long.csv"
layout = "long"
price_column = "close"

[attributes]
file = "attributes.csv"
equity_value_column = "market_cap"
cash_column = "cash"
"#;
