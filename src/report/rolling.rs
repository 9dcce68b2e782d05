//! `rolling.csv`: each peer's rolling beta under the case's estimator and standard errors, one
//! row per peer and window end, written by `hurdle run` (from the run's result, so it always
//! matches the receipt beside it) and by `hurdle rolling`. Numbers in full (shortest round-trip
//! form), like the other CSV files.

use std::fmt::Write as _;

use super::format::Full;
use super::Render;
use crate::beta::rolling::RollingPoint;
use crate::error::Result;
use crate::valuation::Valuation;

/// Long form: `peer, window_end, beta, std_error, observations`.
pub struct RollingCsv;

impl Render for RollingCsv {
    fn file_name(&self) -> &str {
        "rolling.csv"
    }

    fn render(&self, valuation: &Valuation) -> Result<Vec<u8>> {
        let names: Vec<&str> = valuation.peers.iter().map(|p| p.name.as_str()).collect();
        Ok(rolling_csv(&names, &valuation.rolling))
    }
}

/// `rolling.csv`: one row per peer and rolling window.
pub fn rolling_csv(names: &[&str], rolling: &[Vec<RollingPoint>]) -> Vec<u8> {
    let mut out = String::from("peer,window_end,beta,std_error,observations\n");
    for (peer, points) in names.iter().zip(rolling) {
        let name = super::csv::field(peer);
        for p in points {
            writeln!(
                out,
                "{name},{},{},{},{}",
                p.window_end,
                Full(p.beta),
                Full(p.std_error),
                p.observations
            )
            .expect("writing to a String cannot fail");
        }
    }
    out.into_bytes()
}
