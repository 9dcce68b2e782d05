//! `rolling.csv`: each peer's rolling beta (the case's estimator and standard errors), one row
//! per peer and window end, written by `hurdle rolling`. Numbers in full (shortest round-trip
//! form), like the other CSV files.

use std::fmt::Write as _;

use super::Render;
use crate::error::Result;
use crate::valuation::Valuation;

/// Long form: `peer, window_end, beta, std_error, observations`.
pub struct RollingCsv;

impl Render for RollingCsv {
    fn file_name(&self) -> &str {
        "rolling.csv"
    }

    fn render(&self, valuation: &Valuation) -> Result<Vec<u8>> {
        let mut out = String::from("peer,window_end,beta,std_error,observations\n");
        for (peer, points) in valuation.peers.iter().zip(&valuation.rolling) {
            let name = super::csv::field(&peer.name);
            for p in points {
                writeln!(
                    out,
                    "{name},{},{},{},{}",
                    p.window_end, p.beta, p.std_error, p.observations
                )
                .expect("writing to a String cannot fail");
            }
        }
        Ok(out.into_bytes())
    }
}
