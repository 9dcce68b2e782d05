//! hurdle: from market data and capital-structure facts to a cost of capital that can be
//! defended and reproduced.
//!
//! The modules follow the pipeline: [`case`] (the inputs) → [`data`] (reading price files) →
//! [`sampling`] (period returns) → [`regression`] (least squares) → [`beta`] (estimators) →
//! [`leverage`] (unlever, aggregate, relever) → [`debt`] (where the cost of debt comes from) →
//! [`cost`] (cost of equity, cost of debt, WACC) → [`currency`] (Fisher conversion) →
//! [`valuation`] (the one result value) → [`output`] (memo, JSON, CSV). [`stats`], [`format`]
//! and [`random`] are shared helpers; [`demo`] generates the invented demo case.

pub mod audit;
pub mod beta;
pub mod case;
pub mod cost;
pub mod currency;
pub mod data;
pub mod debt;
pub mod demo;
pub mod error;
pub mod format;
pub mod frequency_comparison;
pub mod leverage;
pub mod output;
pub mod panel;
pub mod random;
pub mod regression;
pub mod rolling;
pub mod sampling;
pub mod stats;
pub mod universe;
pub mod valuation;

pub use error::{Error, Result};
