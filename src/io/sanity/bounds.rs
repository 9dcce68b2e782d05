//! The bounds every price and every balance-sheet amount is held to, whoever reads it (a
//! price file, a wide table, a panel, a case's amounts, a universe's attributes).

/// The least and the greatest price read: see [`super::ValueKind::broken_rule`].
pub const PRICE_RANGE: (f64, f64) = (1e-100, 1e100);

/// Why a balance-sheet amount (equity value, debt, cash; a case's or a universe's attribute)
/// is refused when it is neither 0 nor within [`PRICE_RANGE`] in size: sums and products of
/// amounts near the largest double overflow (found by review: 1.7e308 gave #NUM! in a
/// workbook's recalculation; 1e308 an operating share of -6.67e304), and no currency unit makes
/// a firm's figures so large or small.
pub const AMOUNT_OUT_OF_RANGE: &str =
    "lies outside 1e-100 to 1e100, the range of an amount in any unit";

/// Whether `value` is an amount [`AMOUNT_OUT_OF_RANGE`] refuses.
pub fn amount_out_of_range(value: f64) -> bool {
    let (low, high) = PRICE_RANGE;
    value != 0.0 && !(low..=high).contains(&value.abs())
}
