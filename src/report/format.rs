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

/// A number in full, as the shortest text that reads back to the same double: plain decimals,
/// except below 1e-5 or from 1e16 in size, where the exponent form keeps it short (a p-value of
/// 4.2e-244 would otherwise take 245 digits), as `result.json` writes such numbers. Every
/// spreadsheet and CSV reader takes both forms.
pub struct Full(pub f64);

impl std::fmt::Display for Full {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let size = self.0.abs();
        if size != 0.0 && !(1e-5..1e16).contains(&size) {
            write!(f, "{:e}", self.0)
        } else {
            write!(f, "{}", self.0)
        }
    }
}

/// A number as a `--set` value is written: every digit it has and no more (0.0517, 2.5), so
/// values one step apart on a grid axis never print alike.
pub fn exact(value: f64) -> String {
    crate::error::compact(value)
}

/// A setting's rate in percent with every digit it has and no more (0.2 → `20%`, 0.125 →
/// `12.5%`, 0.2575 → `25.75%`), so a memo that names a key's value shows the value the case
/// holds, not a rounding of it. The decimal point of the rate's shortest text is moved, so no
/// `x·100` noise appears (0.07·100 is 7.000000000000001 in binary).
pub fn exact_percent(rate: f64) -> String {
    if !rate.is_finite() {
        return format!("{rate}%");
    }
    if rate == 0.0 {
        return "0%".to_string();
    }
    // Rust's exponent form holds the shortest digits that read back to the same double.
    let text = format!("{:e}", rate.abs());
    let (mantissa, exponent) = text.split_once('e').expect("exponent form");
    let digits = mantissa.replace('.', "");
    let exponent: i64 = exponent.parse().expect("an integer exponent");
    // Digits before the decimal point once multiplied by 100.
    let point = 1 + exponent + 2;
    let plain = if point <= 0 {
        format!("0.{}{digits}", "0".repeat((-point) as usize))
    } else if point as usize >= digits.len() {
        format!("{digits}{}", "0".repeat(point as usize - digits.len()))
    } else {
        let (whole, fraction) = digits.split_at(point as usize);
        format!("{whole}.{fraction}")
    };
    let sign = if rate < 0.0 { "-" } else { "" };
    format!("{sign}{plain}%")
}

/// Text for a Markdown table cell: a `|` in it (a peer's name, a file's path) escaped, so that
/// it does not split the row; one [`plain_text`] has escaped already is left as it is. (A code
/// span holding a backslash before a pipe, a path `a\|b.csv`, cannot be written in a GFM table
/// cell: the table reads `\\` as one escaped character, so `\\\|` would end the cell; it shows
/// `a|b.csv`, the row kept whole.)
pub fn table_cell(text: String) -> String {
    let mut out = String::with_capacity(text.len());
    let mut escaped = false;
    for c in text.chars() {
        if c == '|' && !escaped {
            out.push('\\');
        }
        escaped = c == '\\' && !escaped;
        out.push(c);
    }
    out
}

/// A user's free text (a justification, the peer selection, a claim's label, an override, a
/// name, a universe's industry label or security id) as Markdown that shows it as written, in a
/// table cell too: a backslash before each character that would open code, a link, an image,
/// raw HTML, emphasis, a strikethrough or a character reference, or end a table cell (`` ` ``,
/// `[`, `]`, `<`, `*`, `~`, `|`, and `_` and `&` where [`opens_mark`] says they would; an
/// image's `!` opens nothing without its bracket) and before a backslash, so `![x](http://…)`,
/// `<b>` or `_draft_` in a justification is text in the memo and loads or formats nothing in the
/// report (CommonMark 0.31, "Backslash escapes"; GFM "Tables"). Every `<` is escaped, not only
/// one that closes: two names joined in a sentence could otherwise make one tag, and a `<!--`
/// or `<script` opening a line hides the rest of the memo from a viewer (found by review).
/// Where the text begins a line or a list item (a peer's name in the stability list, a title
/// in the heading), a first character that would open a block (`#`, `>`, `-`, `+`, `=`, or the
/// `.` or `)` after leading digits) and a closing run of `#` after a space are escaped too
/// ([`BlockStart`]), so "# 2 Holdings" or "Case #" show as written. White space around the
/// text, which no reader sees but which would make an indented code block at a line's start,
/// is left out, and a line break inside it (a justification written over several lines) is
/// written as a space: a line of its own could open any block (found by review).
pub fn plain_text(text: String) -> String {
    let text = one_line(&text);
    let mut out = String::with_capacity(text.len());
    let block = BlockStart::of(&text);
    for (at, c) in text.char_indices() {
        if matches!(c, '\\' | '`' | '[' | ']' | '*' | '<' | '|')
            || opens_mark(&text, at, c)
            || block.opens_at(at, c)
        {
            out.push('\\');
        }
        out.push(c);
    }
    out
}

/// `text` on one line without white space around it: each line break (LF, CR, NEL, U+2028,
/// U+2029) and the white space beside it as one space.
fn one_line(text: &str) -> String {
    let breaks = ['\n', '\r', '\u{85}', '\u{2028}', '\u{2029}'];
    match text.contains(breaks) {
        false => text.trim().to_string(),
        true => (text.split(breaks))
            .map(str::trim)
            .filter(|line| !line.is_empty())
            .collect::<Vec<_>>()
            .join(" "),
    }
}

/// Where a text that begins a line would open a block (CommonMark 0.31, "ATX headings", "Block
/// quotes", "List items", "Setext headings", "Thematic breaks", from memory): its first
/// character when that is `#`, `>`, `-`, `+` or `=`, the `.` or `)` after leading digits, and
/// the first `#` of a closing run after a space.
struct BlockStart {
    digits: usize,
    closing: usize,
}

impl BlockStart {
    fn of(text: &str) -> BlockStart {
        let digits = text.len() - text.trim_start_matches(|c: char| c.is_ascii_digit()).len();
        let closing = text.trim_end_matches('#');
        let closing = match closing.ends_with([' ', '\t']) || closing.is_empty() {
            true => closing.len(),
            false => text.len(),
        };
        BlockStart { digits, closing }
    }

    fn opens_at(&self, at: usize, c: char) -> bool {
        (at == 0 && matches!(c, '#' | '>' | '-' | '+' | '='))
            || (at == self.digits && self.digits > 0 && matches!(c, '.' | ')'))
            || at == self.closing
    }
}

/// Text as a Markdown code span that holds it whole (a file's path, a column's header, an
/// override): between backticks, or, when the text holds backticks, between runs of one more
/// backtick than its longest run, a space inside each (CommonMark 0.31, "Code spans"), so a
/// path with a backtick in it does not end its span early (found by review).
pub fn code_span(text: String) -> String {
    let longest = text.split(|c| c != '`').map(str::len).max().unwrap_or(0);
    match longest {
        0 => format!("`{text}`"),
        n => {
            let fence = "`".repeat(n + 1);
            format!("{fence} {text} {fence}")
        }
    }
}

/// Whether `c` at byte `at` of `text` opens emphasis, a strikethrough or a character reference
/// in CommonMark with GitHub's strikethrough (from memory of CommonMark 0.31, "Emphasis and
/// strong emphasis" and "Entity and numeric character references", and the GFM
/// "Strikethrough" extension): an underscore at a word's edge (one between two letters or
/// digits, as in a key, neither opens nor closes), any tilde, and an ampersand that begins
/// `&name;`, `&#digits;` or `&#xhex;` (`R&D` and `A & B` read as written).
fn opens_mark(text: &str, at: usize, c: char) -> bool {
    match c {
        '_' => {
            let before = text[..at].chars().next_back();
            let after = text[at + 1..].chars().next();
            !(before.is_some_and(char::is_alphanumeric) && after.is_some_and(char::is_alphanumeric))
        }
        '~' => true,
        '&' => is_character_reference(&text[at + 1..]),
        _ => false,
    }
}

/// Whether `after`, the text after an `&`, completes a character reference: a name of letters and
/// digits beginning with a letter, `#` and 1–7 digits, or `#x` and 1–6 hexadecimal digits, then
/// `;` (any name, not only HTML's: escaping one more `&` shows the same text); or could complete
/// one with the text a template writes after it (`Foo&amp` before "; ", found by review): such
/// a name or number that runs to the end of the text.
fn is_character_reference(after: &str) -> bool {
    let body = match after.split_once(';') {
        Some((body, _)) => body,
        None if !after.contains(|c: char| !c.is_ascii_alphanumeric() && c != '#') => after,
        None => return false,
    };
    let all = |text: &str, range: std::ops::RangeInclusive<usize>, digit: fn(&char) -> bool| {
        range.contains(&text.len()) && text.chars().all(|c| digit(&c))
    };
    match body.strip_prefix('#') {
        Some(number) => match number.strip_prefix(['x', 'X']) {
            Some(hex) => all(hex, 1..=6, char::is_ascii_hexdigit),
            None => all(number, 1..=7, char::is_ascii_digit),
        },
        None => {
            body.starts_with(|c: char| c.is_ascii_alphabetic())
                && all(body, 1..=32, char::is_ascii_alphanumeric)
        }
    }
}

/// A run's note as Markdown that shows it as written: outside its own code spans (the notes
/// quote keys and values between backticks), a backslash before each character that would open
/// a link, an image, raw HTML, emphasis, a strikethrough or a character reference (`[` and `]` in
/// a note that holds `](` or `][`, every `<` as in [`plain_text`], `*`, `~`, and `_` and `&`
/// where [`opens_mark`] says so)
/// and before a backslash or a lone backtick, as
/// [`plain_text`] does for free text; a note names files, labels and values as the inputs give
/// them.
pub fn prose(text: String) -> String {
    // A bracket opens a link only before `(` or `[` (a one-line note holds no reference
    // definition), so a note that names `peers[]` or `[target]` is left as it reads.
    let links = text.contains("](") || text.contains("][");
    // A note that begins with a peer's name opens a list item (`- {{ note | prose }}`): its
    // first characters are escaped as a name's would be (found by review: "1. Brenvale: the
    // rolling beta moved…" made a list inside the list).
    let text = one_line(&text);
    let block = BlockStart::of(&text);
    let mut out = String::with_capacity(text.len());
    let mut in_code = false;
    for (at, c) in text.char_indices() {
        // A backtick without a partner after it opens no code span (CommonMark), so it does not
        // stop the escaping of what follows; it is escaped itself.
        let opens = c == '`' && !in_code && text[at + 1..].contains('`');
        if c == '`' && (in_code || opens) {
            in_code = !in_code;
        } else if !in_code
            && (matches!(c, '\\' | '*' | '`' | '<')
                || opens_mark(&text, at, c)
                || block.opens_at(at, c)
                || (links && matches!(c, '[' | ']')))
        {
            out.push('\\');
        }
        out.push(c);
    }
    out
}

/// A sensitivity axis's value as the chart and the workbook show it: a rate, premium, tax rate
/// or weight in percent with every digit it has (0.0417 → `4.17%`), any other key's value
/// (a D/E, a beta) as a plain number.
pub fn axis_value(value: f64, key: String) -> String {
    match key_is_rate(&key) {
        true => exact_percent(value),
        false => exact(value),
    }
}

/// A bridge group's name for people, from its key as `result.json` writes it
/// (`risk_free_rate` → `Risk-free rate`); any other text as it is.
pub fn group_title(key: String) -> String {
    use crate::valuation::analyses::Group;
    Group::ALL
        .iter()
        .find(|g| label(*g) == key)
        .map_or(key, |g| g.title().to_string())
}

/// A build-up's capital weights as the bridge shows them: equity and debt, then preferred
/// equity and leases when the side holds them (`E 64.3% · D 21.4% · P 14.3%`; found by review:
/// the equity weight alone hid a change of the preferred weight).
pub fn capital_weights(equity: f64, debt: f64, preferred: f64, leases: f64) -> String {
    let mut out = format!("E {} · D {}", percent(equity, 1), percent(debt, 1));
    for (letter, weight) in [("P", preferred), ("L", leases)] {
        if weight > 0.0 {
            out.push_str(&format!(" · {letter} {}", percent(weight, 1)));
        }
    }
    out
}

/// A number with a fixed number of decimals; `-0.000` is written `0.000`.
pub fn fixed(value: f64, decimals: usize) -> String {
    rounded(value, decimals)
}

/// Whether a case key holds an annual rate, a premium, a tax rate or a weight (a decimal shown
/// as a percentage), by its last segment: a grid axis over it is labelled in percent.
pub fn key_is_rate(key: &str) -> bool {
    matches!(
        key.rsplit('.').next().unwrap_or(key).trim(),
        "risk_free_rate"
            | "equity_risk_premium"
            | "size"
            | "country"
            | "company_specific"
            | "cost_pre_tax"
            | "tax_rate"
            | "cost"
            | "weight"
            | "inflation_case"
            | "inflation_output"
            | "debt_to_capital"
    )
}

/// Whether a case key holds a count (periods, lags, days) or an amount (a peer's equity value,
/// debt or cash): a grid axis over it is labelled as the number itself, with no decimals it
/// does not need.
pub fn key_is_count_or_amount(key: &str) -> bool {
    matches!(
        key.rsplit('.').next().unwrap_or(key).trim(),
        "lookback"
            | "min_observations"
            | "dimson_lags"
            | "dimson_leads"
            | "newey_west_lags"
            | "rolling_window"
            | "rolling_step"
            | "rolling_min_observations"
            | "max_stale_days"
            | "equity_value"
            | "debt"
            | "cash"
    )
}

pub use crate::case::label;
pub use crate::error::{compact, rounded};

#[cfg(test)]
mod tests {
    use super::*;

    // The bridge's weights by hand: one decimal of a percent each, preferred equity and leases
    // only when held (0.6429 → 64.3%, 0.15714 → 15.7%).
    #[test]
    fn capital_weights_list_the_components_held() {
        assert_eq!(
            capital_weights(0.6429, 0.2, 0.15714, 0.0),
            "E 64.3% · D 20.0% · P 15.7%"
        );
        assert_eq!(capital_weights(0.75, 0.25, 0.0, 0.0), "E 75.0% · D 25.0%");
        assert_eq!(
            capital_weights(0.6, 0.3, 0.0, 0.1),
            "E 60.0% · D 30.0% · L 10.0%"
        );
    }

    #[test]
    fn a_setting_in_percent_keeps_every_digit_it_has() {
        // Decimal arithmetic by hand: moving the point two places is exact.
        for (rate, text) in [
            (0.2, "20%"),
            (0.125, "12.5%"),
            (0.2575, "25.75%"),
            (0.07, "7%"),
            (0.005, "0.5%"),
            (0.0, "0%"),
            (1.0, "100%"),
            (1.5, "150%"),
            (-0.0125, "-1.25%"),
            (0.123456789, "12.3456789%"),
            // Below 1e-6, where the shortest text has an exponent (found by review: 1e-7 gave
            // 0.000009999999999999999%), and above 1.
            (1e-7, "0.00001%"),
            (5e-7, "0.00005%"),
            (123.456, "12345.6%"),
            (-0.0, "0%"),
            // The double nearest 0.1 + 0.2 is not the one nearest 0.3: its every digit shows.
            (0.1 + 0.2, "30.000000000000004%"),
        ] {
            assert_eq!(exact_percent(rate), text, "{rate}");
        }
    }

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

    // Excel's display rounding (half away from zero on 15 significant digits; from memory):
    // ties go up where Rust's exact binary formatting would go to even or down, and no negative
    // zero appears. LibreOffice Calc agrees on 0.04625 (4.63%) but shows 7.07% for 0.07075,
    // rounding the binary value's shortest decimal (measured in this project's review).
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
