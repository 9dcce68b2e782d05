//! Capital structure and the cost of capital, over plain numbers: the leverage formulas that
//! unlever and relever betas, where the cost of debt comes from, CAPM, the WACC and the Fisher
//! currency conversion, and [`chain`] — unlever → aggregate → relever → cost of equity → WACC —
//! which the case pipeline, the sensitivity grid, `implied`, the bridge and the Monte Carlo all
//! call. Nothing here reads a file or a case.

pub mod chain;
pub mod cost;
pub mod currency;
pub mod debt;
pub mod leverage;
pub mod spec;
