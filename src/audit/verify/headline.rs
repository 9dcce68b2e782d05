//! The headline figures of a verification in words: whether the WACC, cost of equity and
//! after-tax cost of debt reproduced, and for one that did not, both rates and their gap.

use serde_json::Value;

use super::{mismatch, Verification};

impl Verification {
    /// The headline figures in words: `WACC reproduced; cost of equity DIFFERS; …`.
    pub fn headline_summary(&self) -> String {
        self.headline
            .iter()
            .map(|(key, same)| {
                let name = key.replace('_', " ").replace("wacc", "WACC");
                if *same {
                    return format!("{name} reproduced");
                }
                // The two rates and their gap in basis points, as a reviewer reads a rate.
                let figure = self.mismatches.iter().find(|m| m.path == *key);
                let values =
                    figure.and_then(|m| Some((m.recorded.as_f64()?, m.recomputed.as_f64()?)));
                match values {
                    Some((was, now)) => {
                        // Enough decimals to tell the two rates apart, up to 12 (found by
                        // review: a gap under a tolerance narrowed to 1e-7 read "7.378%,
                        // 7.378%, 0.0 bp"), and a gap below 0.05 bp in exponent form.
                        let decimals = (3..=12)
                            .find(|&d| {
                                crate::error::rounded(was * 100.0, d)
                                    != crate::error::rounded(now * 100.0, d)
                            })
                            .unwrap_or(12);
                        let pct = |x: f64| percent(x, decimals);
                        let gap = (now - was) * 1e4;
                        let bp = match gap.abs() {
                            g if g < 0.05 => format!("{gap:.1e} bp"),
                            g if g < 1e15 => format!("{} bp", crate::error::rounded(gap, 1)),
                            // A receipt edited to 1e308 (found by review: "-inf bp").
                            _ => format!("{} as a decimal", crate::error::compact(now - was)),
                        };
                        let sign = if now > was { "+" } else { "" };
                        format!(
                            "{name} DIFFERS (recorded {}, recomputed {}, {sign}{bp})",
                            pct(was),
                            pct(now)
                        )
                    }
                    // A rate the receipt lacks, with the rerun's (found by review: "DIFFERS"
                    // alone).
                    None => {
                        let rate = |v: &Value| v.as_f64().map(|x| percent(x, 3));
                        let absent = |side| figure.is_some_and(|m| m.absent_from == Some(side));
                        match figure {
                            Some(m) => match (rate(&m.recorded), rate(&m.recomputed)) {
                                (None, Some(now)) => format!(
                                    "{name} DIFFERS ({} the receipt; recomputed {now})",
                                    match absent(mismatch::Absent::Receipt) {
                                        true => "absent from",
                                        false => "not a rate in",
                                    }
                                ),
                                (Some(was), None) => format!(
                                    "{name} DIFFERS (recorded {was}; {} by the rerun)",
                                    match absent(mismatch::Absent::Rerun) {
                                        true => "not written",
                                        false => "no rate given",
                                    }
                                ),
                                _ => format!("{name} DIFFERS"),
                            },
                            None => format!("{name} DIFFERS"),
                        }
                    }
                }
            })
            .collect::<Vec<_>>()
            .join("; ")
    }
}

/// A recorded or recomputed rate in percent with `decimals`, or, when it is too large to write
/// so (a receipt edited to 1e308, whose percent overflows), the decimal itself in exponent form
/// (found by review: "inf%").
pub(crate) fn percent(rate: f64, decimals: usize) -> String {
    match (rate * 100.0).abs() < 1e15 {
        true => format!("{}%", crate::error::rounded(rate * 100.0, decimals)),
        false => format!("{} as a decimal", crate::error::compact(rate)),
    }
}
