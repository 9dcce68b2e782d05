//! Number formatting for people: percentages, basis points, fixed decimals.
//!
//! The one home of presentation rules; the memo's template filters and the terminal tables both
//! call these, and nothing here changes a figure, it only writes it.

/// A decimal rate as a percentage: `percent(0.0912, 2)` is `"9.12%"`.
pub fn percent(rate: f64, decimals: usize) -> String {
    format!("{}%", rounded(rate * 100.0, decimals))
}

/// A decimal rate in basis points: `basis_points(0.0125)` is `"125 bp"`.
pub fn basis_points(rate: f64) -> String {
    format!("{} bp", rounded(rate * 10_000.0, 0))
}

/// A number as a `--set` value is written: every digit it has and no more (0.0517, 2.5), so
/// values one step apart on a grid axis never print alike.
pub fn exact(value: f64) -> String {
    crate::error::compact(value)
}

/// Text for a Markdown table cell: a `|` in it (a peer's name, a file's path) escaped, so that
/// it does not split the row.
pub fn table_cell(text: String) -> String {
    text.replace('|', "\\|")
}

/// A number with a fixed number of decimals; `-0.000` is written `0.000`.
pub fn fixed(value: f64, decimals: usize) -> String {
    rounded(value, decimals)
}

/// `value` to `decimals` places as a spreadsheet shows it, so the memo, the charts and the
/// terminal agree with the workbook's cells to the last digit shown: the value first taken to
/// 15 significant digits (which removes the noise of `x·100`: 0.07025·100 is 7.0249999…96),
/// then rounded half away from zero on those digits (0.04625 is 4.63%, where Rust's own
/// formatting, exact on the binary value, gives 4.62%). A result of zero has no sign.
fn rounded(value: f64, decimals: usize) -> String {
    if !value.is_finite() {
        return value.to_string();
    }
    let text = format!("{:.14e}", value.abs());
    let (mantissa, exponent) = text.split_once('e').unwrap_or((&text, "0"));
    let exponent: i64 = exponent.parse().unwrap_or(0);
    let digits: Vec<u8> = mantissa.bytes().filter(u8::is_ascii_digit).collect();
    // The 15 digits d₁…d₁₅ are |value| = 0.d₁…d₁₅ · 10^(exponent + 1); the leading `keep` of
    // them are the integer |value| · 10^decimals, the next one decides the rounding.
    let keep = exponent + 1 + decimals as i64;
    let mut kept: Vec<u8> = (0..keep.max(0))
        .map(|i| *digits.get(i as usize).unwrap_or(&b'0'))
        .collect();
    let next = usize::try_from(keep).ok().and_then(|k| digits.get(k));
    if next.is_some_and(|&d| d >= b'5') {
        let mut carry = true;
        for digit in kept.iter_mut().rev() {
            if *digit == b'9' {
                *digit = b'0';
            } else {
                *digit += 1;
                carry = false;
                break;
            }
        }
        if carry {
            kept.insert(0, b'1');
        }
    }
    // At least one digit before the point.
    while kept.len() <= decimals {
        kept.insert(0, b'0');
    }
    let point = kept.len() - decimals;
    let whole = std::str::from_utf8(&kept[..point]).unwrap_or("0");
    let fraction = std::str::from_utf8(&kept[point..]).unwrap_or("");
    let zero = kept.iter().all(|&d| d == b'0');
    let sign = if value < 0.0 && !zero { "-" } else { "" };
    if decimals == 0 {
        format!("{sign}{whole}")
    } else {
        format!("{sign}{whole}.{fraction}")
    }
}

pub use crate::case::label;
pub use crate::error::compact;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formats() {
        assert_eq!(percent(0.0912, 2), "9.12%");
        assert_eq!(percent(0.1, 1), "10.0%");
        assert_eq!(basis_points(0.0125), "125 bp");
        assert_eq!(fixed(1.23456, 3), "1.235");
        assert_eq!(fixed(-0.0001, 3), "0.000");
        assert_eq!(fixed(-0.5, 2), "-0.50");
        assert_eq!(compact(43.7678), "43.7678");
        assert_eq!(compact(1e308), "1e308");
        assert_eq!(compact(-2.5e-200), "-2.5e-200");
        assert_eq!(compact(0.0), "0");
    }

    // Spreadsheet display rounding (half away from zero on 15 significant digits, as Excel and
    // LibreOffice Calc show a cell; LibreOffice checked on 4.63% for 0.04625 in this project's
    // workbook review): ties go up where Rust's exact binary formatting would go to even or
    // down, and no negative zero appears.
    #[test]
    fn rounds_as_a_spreadsheet_shows() {
        assert_eq!(percent(0.04625, 2), "4.63%");
        assert_eq!(format!("{:.2}", 0.04625 * 100.0), "4.62");
        assert_eq!(percent(0.07025, 2), "7.03%");
        assert_eq!(percent(0.07075, 2), "7.08%");
        assert_eq!(fixed(0.4125, 3), "0.413");
        assert_eq!(fixed(0.20625, 4), "0.2063");
        assert_eq!(fixed(-0.4125, 3), "-0.413");
        assert_eq!(fixed(2.5, 0), "3");
        assert_eq!(fixed(0.5, 0), "1");
        assert_eq!(fixed(0.49, 0), "0");
        assert_eq!(fixed(9.9996, 3), "10.000");
        assert_eq!(fixed(999.5, 0), "1000");
        assert_eq!(fixed(0.0004, 3), "0.000");
        assert_eq!(fixed(0.0005, 3), "0.001");
        assert_eq!(fixed(0.00004, 3), "0.000");
        assert_eq!(fixed(123456.789, 2), "123456.79");
        assert_eq!(fixed(1e20, 1), "100000000000000000000.0");
        assert_eq!(percent(-4.3e-6, 2), "0.00%");
        assert_eq!(basis_points(-1.77e-6), "0 bp");
        assert_eq!(basis_points(-0.0125), "-125 bp");
        assert_eq!(fixed(0.0, 2), "0.00");
    }
}
