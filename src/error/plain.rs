//! The TOML reader's and serde's messages in a case file's own terms.
//!
//! An analyst who typed `2.67%`, `2,400.0`, `“EUR”` or `30/09/2026` into a case file, or gave a
//! list where text belongs, should read what to write instead, not the parser's grammar
//! (`invalid float, expected nothing`) or a program's type names (`expected u32`). Each rule
//! keeps the parser's own words after its explanation only where they add something.

/// `message` (from the TOML reader or serde) rewritten for a person; `line` is the text of the
/// line the error points at, when known, whose value suggests the likelier cause.
pub(super) fn plain_message(message: &str, line: Option<&str>) -> String {
    if let Some(plain) = type_message(message).or_else(|| key_message(message)) {
        return plain;
    }
    // The parser's word for a whole number beyond even 128 bits.
    if message == "integer number overflowed" {
        return format!(
            "the whole number is too large: hurdle's files hold whole numbers from {} to {}, \
             and each key that takes a count a smaller range (README, Case file reference); a \
             number with decimals is written with a decimal point or an exponent (1e42)",
            i64::MIN,
            i64::MAX
        );
    }
    match line.and_then(line_hint) {
        Some(hint) => format!("{hint} ({message})"),
        None if message == "duplicate key" => {
            "this key (or table) is given twice; keep one".to_string()
        }
        None if message == "wanted string or table" => "this key takes one of its named values, \
                                                         written in quotes (README, Case file \
                                                         reference, lists them)"
            .to_string(),
        None => match message.find("expected struct ") {
            Some(at) => format!("{}expected a table of keys", &message[..at]),
            None => message.to_string(),
        },
    }
}

/// What the value of a line that failed to parse most likely holds: typographic quotes, a
/// percent sign, a decimal comma or thousands separator, a day-first date, or nothing at all.
fn line_hint(line: &str) -> Option<String> {
    // The value without a comment after it (a `#` inside quotes is rare in a line that failed).
    let value = line.split_once('=').map_or("", |(_, v)| v);
    let value = value.split('#').next().unwrap_or_default().trim();
    // A value that opens with one (not a title quoting a word inside straight quotes).
    if value.starts_with(['“', '”', '‘', '’']) {
        return Some(
            "the line uses typographic quotes (“ ” or ‘ ’), as a word processor writes them; \
             write straight quotes (\")"
                .to_string(),
        );
    }
    if line.contains('=') && (value.is_empty() || value.starts_with('#')) {
        return Some("the key has no value".to_string());
    }
    let digits = |s: &str| !s.is_empty() && s.bytes().all(|b| b.is_ascii_digit());
    // The figure typed, as a decimal (found by review: `3.2%` was shown 0.0267). The sign is
    // taken off as a character: a byte cut once split a `€` and panicked (found by review).
    if let Some(typed) = value
        .strip_suffix('%')
        .and_then(|t| t.trim().parse::<f64>().ok())
    {
        return Some(format!(
            "{value} is not a number: write a rate as a decimal, without the % sign ({})",
            crate::error::decimal_example(typed)
        ));
    }
    let date_parts: Vec<&str> = value.split(['/', '.']).collect();
    if date_parts.len() == 3 && date_parts.iter().all(|p| digits(p)) {
        return Some(format!(
            "{value} is not a date hurdle reads: write dates year first, YYYY-MM-DD \
             (2026-09-30), without quotes"
        ));
    }
    if value.contains(',') && value.split(',').all(|p| p.trim().parse::<f64>().is_ok()) {
        return Some(format!(
            "{value} is not a number: numbers take a decimal point and no thousands separator \
             (2400.0, 0.0267)"
        ));
    }
    None
}

/// serde's "invalid type" and "invalid value" messages: what the key takes, in words.
/// A decimal where a whole number in `range` belongs; `100.0` is one written as a decimal (found
/// by review: "100.0 is not a whole number"), unless the whole number is out of the range too,
/// which is then said (found by review: `-3.0` was told to write `-3`, then refused).
fn not_whole(value: &str, (low, high): (i128, i128)) -> String {
    match value.parse::<f64>() {
        Ok(x) if x.is_finite() && x.fract() == 0.0 && !(low as f64..=high as f64).contains(&x) => {
            // `as` saturates beyond 128 bits, which is out of every range all the same.
            out_of_range_of(value, Some(x as i128), (low, high))
        }
        Ok(x) if x.is_finite() && x.fract() == 0.0 => format!(
            "{value} is written as a decimal: this key takes a whole number, written without a \
             decimal point{}",
            match x.abs() < 1e15 {
                true => format!(" ({x:.0})"),
                false => String::new(),
            }
        ),
        _ => format!("{value} is not a whole number: this key takes a whole number"),
    }
}

fn type_message(message: &str) -> Option<String> {
    let rest = message
        .strip_prefix("invalid type: ")
        .or_else(|| message.strip_prefix("invalid value: "))?;
    let (found, expected) = rest.split_once(", expected ")?;
    let range = whole_range(expected);
    let whole = range.is_some();
    let number = whole || expected == "f64";
    if let Some(text) = found
        .strip_prefix("string \"")
        .and_then(|t| t.strip_suffix('"'))
        .filter(|_| number)
    {
        return Some(text_for_a_number(text, expected, range));
    }
    if let Some(range) = range {
        // serde writes the value between backticks, a wide one followed by the type it was read
        // as ("integer `99999999999999999999` as i128"; found by review: a backtick and the type
        // name were left in the message).
        let value = match found {
            "map" => "a date or a table",
            "sequence" => "a list",
            _ => found.split('`').nth(1).unwrap_or(found),
        };
        return Some(if found.starts_with("floating point") {
            not_whole(value, range)
        } else if found.starts_with("integer") {
            out_of_range(value, range)
        } else {
            format!("{value} is not a number: this key takes a whole number")
        });
    }
    // serde names what it found by kind and value ("floating point `1.5`", "boolean `true`",
    // "string \"x\""), a TOML date or table as "map" and a list as "sequence" (found by review:
    // the kind was cut at its first space, leaving "point `1.5" and "map").
    let tick = |v: &str| v.trim_matches('`').to_string();
    // A whole number read as 128 bits ("integer `…` as i128") given to a number key.
    if let Some(v) = (found.strip_prefix("integer `")).and_then(|v| v.strip_suffix("` as i128")) {
        if expected == "f64" {
            return Some(too_wide_for_a_number(v));
        }
    }
    let shown = if let Some(v) =
        (found.strip_prefix("floating point ")).or_else(|| found.strip_prefix("integer "))
    {
        format!("the number {}", tick(v))
    } else if let Some(v) = found.strip_prefix("boolean ") {
        tick(v)
    } else if let Some(v) = found.strip_prefix("string ") {
        v.to_string()
    } else {
        match found {
            "map" => "a date or a table".to_string(),
            "sequence" => "a list".to_string(),
            other => tick(other),
        }
    };
    let what = match expected {
        "a sequence" => "a list, written in brackets: [\"2023-03-31\"] or [\"low_r_squared\"]",
        "a string" => "text, written in quotes (\"…\")",
        "a boolean" => "true or false",
        "f64" => "a number; a rate as a decimal (0.055 for 5.5%)",
        "a date" | "local date" => "a date, YYYY-MM-DD without quotes (2026-09-30)",
        e if e.starts_with("struct ") || e == "a table" => "a table of keys",
        _ => return None,
    };
    Some(format!(
        "{shown} is not what this key takes: it takes {what}"
    ))
}

/// Text given to a key of serde's type `expected` that takes a number (`range` for a whole
/// number), in words.
fn text_for_a_number(text: &str, expected: &str, range: Option<(i128, i128)>) -> String {
    // A whole number too large for the TOML reader reaches here as text (a `--set` of one is
    // kept as the text it cannot read): it is out of range, not in quotes (found by review:
    // `--set uncertainty.seed=99999999999999999999` was told to drop quotes).
    if let Some(((low, high), wide)) = range.zip(whole_number(text)) {
        if wide < low || wide > high {
            return out_of_range(text.trim(), (low, high));
        }
    }
    // A number key given a whole number too wide for the reader: not in quotes, too many
    // digits (found by review).
    let wide = |n: i128| n < i128::from(i64::MIN) || n > i128::from(i64::MAX);
    if expected == "f64" && whole_number(text).is_some_and(wide) {
        return too_wide_for_a_number(text.trim());
    }
    let percent = text.trim().strip_suffix('%').map(str::trim);
    let advice = if let Some(figure) = percent {
        let example = (figure.parse::<f64>().ok()).map_or("0.032 for 3.2%".to_string(), |x| {
            crate::error::decimal_example(x)
        });
        &format!("write a rate as a decimal, without the % sign ({example})")
    } else if text.contains(',') {
        "numbers take a decimal point and no thousands separator (2400.0, 0.0267)"
    } else if let Some(advice) = text.trim().parse::<f64>().ok().map(|value| {
        // Rust reads what TOML does not (found by review: `--set x=.5`, where no quotes were
        // typed, was told to drop its quotes).
        let t = text.trim();
        if !value.is_finite() {
            match t.chars().any(|c| c.is_ascii_digit()) {
                true => "beyond the largest number a file holds (about 1.8e308)",
                false => "NaN and infinity are refused",
            }
        } else if t.starts_with('.')
            || t.starts_with("-.")
            || t.starts_with("+.")
            || t.ends_with('.')
            || t.contains(".e")
            || t.contains(".E")
        {
            "write a digit on both sides of the decimal point (0.5, 5.0, 1.0e-2)"
        } else if (t.trim_start_matches(['-', '+']).as_bytes())
            .starts_with(b"0")
            .then(|| t.trim_start_matches(['-', '+']).as_bytes().get(1))
            .flatten()
            .is_some_and(u8::is_ascii_digit)
        {
            "write it without a leading zero (5, 0.5)"
        } else {
            "a number is written without quotes (0.0324, not \"0.0324\")"
        }
    }) {
        advice
    } else if range.is_some() {
        "this key takes a whole number"
    } else {
        "this key takes a number; a rate as a decimal (0.055 for 5.5%)"
    };
    format!("\"{text}\" is not a number: {advice}")
}

/// A whole number written with more digits than a file's whole numbers hold, given to a key
/// that takes a number with decimals: it reads when written with a decimal point or an exponent.
fn too_wide_for_a_number(value: &str) -> String {
    format!(
        "{value} has more digits than a whole number in the file can hold; write it with a \
         decimal point ({value}.0) or an exponent (as 2.5e20)"
    )
}

/// The whole numbers a key of serde's type `expected` holds, or `None` for a key that takes
/// something else. A 64-bit count stops at the largest whole number a TOML file holds, since
/// the case is written back as TOML (as `result.json`'s settings and a what-if are).
fn whole_range(expected: &str) -> Option<(i128, i128)> {
    match expected {
        "u32" => Some((0, u32::MAX.into())),
        "u64" | "usize" => Some((0, i64::MAX.into())),
        "i64" => Some((i64::MIN.into(), i64::MAX.into())),
        _ => None,
    }
}

/// `text` as a whole number when it is written as one (digits, a sign before them at most):
/// beyond 128 bits it is taken as the largest such number, which is out of every range.
fn whole_number(text: &str) -> Option<i128> {
    let text = text.trim();
    let digits = text.strip_prefix(['-', '+']).unwrap_or(text);
    if digits.is_empty() || !digits.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    Some(text.parse().unwrap_or(match text.starts_with('-') {
        true => i128::MIN,
        false => i128::MAX,
    }))
}

/// "`value` is out of range for this key", with the bounds of the type that holds it. A
/// 32-bit count's own range is narrower (a window's periods, draws, lags), so its type's bounds
/// are not given as the key's (found by review: 0 to 4294967295 read as the key's range); the
/// 64-bit seed's range is the type's.
fn out_of_range(value: &str, range: (i128, i128)) -> String {
    out_of_range_of(value, whole_number(value), range)
}

/// [`out_of_range`] for `value` read as the whole number `number`.
fn out_of_range_of(value: &str, number: Option<i128>, (low, high): (i128, i128)) -> String {
    let which = match number {
        Some(n) if n < low => format!("below {low}, "),
        Some(n) if n > high => format!("above {high}, "),
        _ => String::new(),
    };
    match high == i128::from(u32::MAX) {
        true => format!("{value} is {which}beyond any value this key takes"),
        false => format!(
            "{value} is {which}out of range for this key: it takes a whole number from {low} to \
             {high}"
        ),
    }
}

/// serde's "unknown field", "unknown variant" and "missing field": the key or value named,
/// with the likeliest intended one when a near spelling exists.
fn key_message(message: &str) -> Option<String> {
    if let Some(field) = message
        .strip_prefix("missing field `")
        .and_then(|r| r.strip_suffix('`'))
    {
        const TABLES: [&str; 12] = [
            "case",
            "market",
            "index",
            "beta",
            "leverage",
            "target",
            "premiums",
            "universe",
            "panel",
            "attributes",
            "claimed",
            "conversion",
        ];
        return Some(match field {
            "peer" => "there is no [[peer]] table: a case needs at least one peer".to_string(),
            // A peer's key and a table of the case share this name.
            "debt" => "`debt` is missing here: a peer's debt (`debt = …` in its [[peer]] \
                       table) or the case's [debt] table (README, Case file reference)"
                .to_string(),
            // A claim's keys that share a case table's name (found by review: a claim
            // without its beta was told "the table [beta] is missing").
            both @ ("beta" | "premiums") => format!(
                "`{both}` is missing here: the key `{both} = …` of a claim's [claimed] table, \
                 or the table [{both}] of a case (README, Case file reference)"
            ),
            // [reconcile]'s key names a claim file, whose own table is [claimed] (found by
            // review: an empty [reconcile] was told the table was missing).
            "claimed" => "`claimed` is missing here: the key `claimed = \"claim.toml\"` of \
                          [reconcile] (the claimed build-up's file), or the table [claimed] of \
                          a claim file (README, Case file reference)"
                .to_string(),
            table if TABLES.contains(&table) => {
                format!("the table [{table}] is missing (README, Case file reference)")
            }
            key => format!(
                "the key `{key}` is missing here: add `{key} = …` (README, Case file reference)"
            ),
        });
    }
    let (kind, rest) = if let Some(rest) = message.strip_prefix("unknown field `") {
        ("key", rest)
    } else {
        ("value", message.strip_prefix("unknown variant `")?)
    };
    let (given, choices) = rest.split_once("`, expected ")?;
    // serde lists three or more as "one of `a`, `b`, `c`" and two as "`a` or `b`".
    let choices: Vec<&str> = choices
        .trim_start_matches("one of ")
        .split(", ")
        .flat_map(|c| c.split(" or "))
        .map(|c| c.trim_matches('`'))
        .collect();
    let list = choices.join(", ");
    if let Some(lower) = choices.iter().find(|c| c.eq_ignore_ascii_case(given)) {
        return Some(format!(
            "unknown {kind} `{given}`: write it in lower case, `{lower}`"
        ));
    }
    let near = choices
        .iter()
        .map(|c| (edit_distance(given, c), *c))
        .filter(|(d, c)| *d <= 2.max(c.len() / 4))
        .min_by_key(|(d, _)| *d);
    Some(match near {
        Some((_, c)) => format!("unknown {kind} `{given}`: did you mean `{c}`?"),
        None => format!("unknown {kind} `{given}`; here: {list}"),
    })
}

/// Levenshtein distance of two short names, for "did you mean".
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut row: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut diagonal = row[0];
        row[0] = i + 1;
        for (j, cb) in b.iter().enumerate() {
            let above = row[j + 1];
            row[j + 1] = (above + 1)
                .min(row[j] + 1)
                .min(diagonal + usize::from(ca != *cb));
            diagonal = above;
        }
    }
    row[b.len()]
}

#[cfg(test)]
mod tests {
    use super::*;

    // Levenshtein distances worked by hand: kitten → sitting is 3 (the textbook example), one
    // dropped letter is 1.
    #[test]
    fn edit_distances() {
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("lookbak", "lookback"), 1);
        assert_eq!(edit_distance("", "abc"), 3);
    }

    // serde's wording (from memory, and as the universe's [market] gave it): three choices or
    // more are "one of `a`, `b`, `c`", two are "`a` or `b`"; both are listed plainly.
    #[test]
    fn an_unknown_key_lists_the_keys_of_its_table() {
        assert_eq!(
            key_message("unknown field `risk_free_rate`, expected `index` or `risk_free_series`")
                .unwrap(),
            "unknown key `risk_free_rate`; here: index, risk_free_series"
        );
        assert_eq!(
            key_message("unknown field `colour`, expected one of `a`, `bb`, `ccc`").unwrap(),
            "unknown key `colour`; here: a, bb, ccc"
        );
    }

    #[test]
    fn everyday_typing_is_explained() {
        let cases = [
            (
                "invalid float, expected nothing",
                "risk_free_rate = 2.67%",
                "without the % sign",
            ),
            (
                "invalid float, expected nothing",
                "risk_free_rate = 2.67%  # a comment",
                "2.67% is not",
            ),
            // Typographic quotes inside a straight-quoted title are text, not the error.
            (
                "duplicate key",
                "title = \"The “best” case\"",
                "given twice",
            ),
            (
                "wanted string or table",
                "frequency = 3",
                "named values, written in quotes",
            ),
            (
                "invalid float, expected nothing",
                "valuation_date = 30.09.2026",
                "YYYY-MM-DD",
            ),
            (
                "string values must be quoted, expected literal string",
                "valuation_date = 30/09/2026",
                "YYYY-MM-DD",
            ),
            (
                "unexpected key or value, expected newline, `#`",
                "risk_free_rate = 0,0267",
                "decimal point",
            ),
            (
                "string values must be quoted, expected literal string",
                "currency = “EUR”",
                "straight quotes",
            ),
            (
                "string values must be quoted, expected literal string",
                "equity_risk_premium = ",
                "no value",
            ),
            ("duplicate key", "", "given twice"),
            (
                "invalid type: string \"3.2%\", expected f64",
                "",
                "without the % sign",
            ),
            (
                "invalid type: string \"2,400\", expected f64",
                "",
                "thousands separator",
            ),
            (
                "invalid type: string \"0.05\", expected f64",
                "",
                "without quotes",
            ),
            (
                "invalid type: floating point `36.5`, expected u32",
                "",
                "36.5 is not a whole number",
            ),
            (
                "invalid type: floating point `100.0`, expected u32",
                "",
                "100.0 is written as a decimal: this key takes a whole number, written without \
                 a decimal point (100)",
            ),
            // A whole number out of range is said to be so, not to be written without its
            // point (found by review).
            (
                "invalid type: floating point `-3.0`, expected u32",
                "",
                "-3.0 is below 0, beyond any value this key takes",
            ),
            (
                "invalid value: integer `5000000000`, expected u32",
                "",
                "5000000000 is above 4294967295, beyond any value this key takes",
            ),
            // A number wider than 64 bits, named without serde's backtick or its type name
            // (found by review: "99999999999999999999` as i128 is out of range").
            (
                "invalid value: integer `99999999999999999999` as i128, expected u64",
                "seed = 99999999999999999999",
                "99999999999999999999 is above 9223372036854775807, out of range for this key: \
                 it takes a whole number from 0 to 9223372036854775807",
            ),
            (
                "invalid value: integer `-1`, expected u64",
                "",
                "-1 is below 0, out of range",
            ),
            // A number key given a whole number wider than 64 bits, in the file and by `--set`
            // (kept as text): too many digits, with the forms that read (found by review: a
            // stray backtick, and "written without quotes").
            (
                "invalid type: integer `99999999999999999999` as i128, expected f64",
                "debt = 99999999999999999999",
                "99999999999999999999 has more digits than a whole number in the file can hold; \
                 write it with a decimal point (99999999999999999999.0) or an exponent",
            ),
            (
                "invalid type: string \"99999999999999999999\", expected f64",
                "",
                "99999999999999999999 has more digits than a whole number",
            ),
            // A whole number that fits, in quotes (a placeholder filled inside its quotes): the
            // quotes are the fault (found by review: it was told it had too many digits).
            (
                "invalid type: string \"600\", expected f64",
                "debt = \"600\"",
                "\"600\" is not a number: a number is written without quotes",
            ),
            // A `--set` of a number too wide for the reader is kept as text: out of range, not
            // "written in quotes"; a number that fits, in quotes, is told to lose them.
            (
                "invalid type: string \"99999999999999999999\", expected u64",
                "seed = \"99999999999999999999\"",
                "99999999999999999999 is above 9223372036854775807, out of range",
            ),
            (
                "invalid type: string \"4294967296\", expected u32",
                "",
                "4294967296 is above 4294967295",
            ),
            (
                "invalid type: string \"7\", expected u64",
                "",
                "\"7\" is not a number: a number is written without quotes",
            ),
            (
                "integer number overflowed",
                "seed = 1000000000000000000000000000000000000000000",
                "the whole number is too large: hurdle's files hold whole numbers from \
                 -9223372036854775808 to 9223372036854775807",
            ),
            (
                "invalid type: string \"2023-03-31\", expected a sequence",
                "",
                "a list, written in brackets",
            ),
            (
                "invalid type: boolean `true`, expected a string",
                "",
                "true is not what this key takes: it takes text",
            ),
            // serde's words for a decimal, a TOML date (a "map" to serde) and a list given to
            // a key of another type (found by review: "point `1.5" and "map").
            (
                "invalid type: floating point `1.5`, expected a string",
                "",
                "the number 1.5 is not what this key takes: it takes text",
            ),
            (
                "invalid type: map, expected a boolean",
                "",
                "a date or a table is not what this key takes: it takes true or false",
            ),
            (
                "invalid type: sequence, expected f64",
                "",
                "a list is not what this key takes: it takes a number",
            ),
            (
                "invalid type: string \"x\", expected a boolean",
                "",
                "\"x\" is not what this key takes: it takes true or false",
            ),
            (
                "unknown field `lookbak`, expected one of `frequency`, `lookback`",
                "",
                "did you mean `lookback`?",
            ),
            (
                "unknown variant `Monthly`, expected one of `daily`, `monthly`",
                "",
                "lower case, `monthly`",
            ),
            (
                "unknown variant `average`, expected one of `median`, `mean`",
                "",
                "unknown value `average`; here: median, mean",
            ),
            ("missing field `debt`", "", "a peer's debt (`debt = …`"),
            (
                "missing field `tax_rate`",
                "",
                "the key `tax_rate` is missing here",
            ),
            ("missing field `case`", "", "the table [case] is missing"),
            (
                "missing field `beta`",
                "",
                "the key `beta = …` of a claim's [claimed] table, or the table [beta]",
            ),
            ("missing field `peer`", "", "no [[peer]] table"),
        ];
        for (message, line, expected) in cases {
            let plain = plain_message(message, Some(line).filter(|l| !l.is_empty()));
            assert!(plain.contains(expected), "{message} / {line}: {plain}");
        }
    }
}
