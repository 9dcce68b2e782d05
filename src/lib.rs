//! hurdle: from market data and capital-structure facts to a cost of capital that can be
//! defended and reproduced.
//!
//! The modules follow the pipeline, and imports point one way, down it: [`io`] (reading and
//! hashing files) → [`panel`] (a whole market's prices and attributes, read into compact
//! columns) → [`market`] (calendars, sampling, period returns, alignment) → [`stats`]
//! (least squares, distributions, the seeded generator) → [`beta`] (estimators, adjustments,
//! rolling betas, diagnostics) → [`estimate`] (one security: a series and a spec in, a complete
//! estimate out) → [`capital`] (leverage formulas, cost of debt, cost of equity, WACC, the chain
//! from peer betas to the WACC) → [`case`] (the case file and the specs it becomes) →
//! [`valuation`] (one case valued: the one result value) → [`universe`] (every security of a
//! panel estimated, unlevered and tabulated by industry) → [`audit`] (sensitivity, Monte Carlo,
//! verify, implied, bridge) → [`report`] (memo, JSON, CSV, workbook, charts, HTML report, number
//! formatting). Wide price tables (CSV, Parquet, workbooks) are read in [`io::tables`] and named
//! in a case's `[sources]`. [`demo`] and [`demo_wide`] generate the invented demo case, [`demo_market`] an invented
//! market around its peers for `hurdle universe`. No module
//! imports one to its right.

pub mod audit;
pub mod beta;
pub mod capital;
pub mod case;
pub mod demo;
pub mod demo_market;
pub mod demo_wide;
pub mod error;
pub mod estimate;
pub mod io;
pub mod market;
pub mod panel;
pub mod progress;
pub mod report;
pub mod stats;
pub mod universe;
pub mod valuation;

pub use error::{Error, Result};
