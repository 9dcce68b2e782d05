//! `result.json`: the receipt of a run, the [`Valuation`] serialised as it is.

use super::Render;
use crate::error::Result;
use crate::valuation::Valuation;

/// Pretty-printed JSON with a final newline. Floats are written in their shortest form that
/// reads back to the same bits, so the file reproduces every figure exactly.
pub struct Json;

impl Render for Json {
    fn file_name(&self) -> &str {
        "result.json"
    }

    fn render(&self, valuation: &Valuation) -> Result<Vec<u8>> {
        let mut bytes =
            serde_json::to_vec_pretty(valuation).expect("a valuation always serialises");
        bytes.push(b'\n');
        Ok(bytes)
    }
}
