//! Number formatting for people: percentages, basis points, fixed decimals.
//!
//! The one home of presentation rules; the memo's template filters and the terminal tables both
//! call these, and nothing here changes a figure, it only writes it.

/// A decimal rate as a percentage: `percent(0.0912, 2)` is `"9.12%"`.
pub fn percent(rate: f64, decimals: usize) -> String {
    format!("{:.*}%", decimals, rate * 100.0)
}

/// A decimal rate in basis points: `basis_points(0.0125)` is `"125 bp"`.
pub fn basis_points(rate: f64) -> String {
    format!("{:.0} bp", rate * 10_000.0)
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
    let text = format!("{:.*}", decimals, value);
    if text.starts_with('-') && text[1..].chars().all(|c| c == '0' || c == '.') {
        text[1..].to_string()
    } else {
        text
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
}
