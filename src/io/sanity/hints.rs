//! The words of the CSV checks' messages that say what a file's shape most likely means and
//! what to do: a decimal comma, a trailing separator, a name that differs only by spaces or
//! capitals, another separator, a value under an unnamed column (apart from `sanity.rs`, which
//! finds what is wrong).

/// Why a value stands in column `number` (from 1), which the header leaves unnamed, and what to
/// do; `left` is the cell before it and its column's name, when known. A value there would be
/// read by no one (found by review: a European export's decimal comma, `42,0000` under a header
/// `date,price,`, was read as a price of 42 with the decimals dropped unseen), so it is refused;
/// when the two cells read together as a number with a decimal comma, the message says so.
pub fn unnamed_value_message(number: usize, value: &str, left: Option<(&str, &str)>) -> String {
    let value = value.trim();
    let comma =
        (left.and_then(|(name, cell)| decimal_comma_hint(name, cell, value))).unwrap_or_default();
    format!(
        "column {number} has no name in the header but holds \"{value}\"{comma}; a value in an \
         unnamed column is read by no one: name the column, or leave it empty (a comma at the \
         end of every line, which leaves it empty, is accepted)"
    )
}

/// When a whole number in column `name` (`cell`) and the digits after it in the next field
/// (`value`) read together as one number written with a decimal comma (`42` and `0000`: 42,0000),
/// the words that say so and what to write, opening with "; "; else `None`.
pub fn decimal_comma_hint(name: &str, cell: &str, value: &str) -> Option<String> {
    let (cell, value) = (cell.trim(), value.trim());
    let digits = cell.strip_prefix(['-', '+']).unwrap_or(cell);
    let whole = !digits.is_empty() && digits.bytes().all(|b| b.is_ascii_digit());
    (whole && !value.is_empty() && value.bytes().all(|b| b.is_ascii_digit())).then(|| {
        format!(
            "; with `{name}` = {cell} before it, this reads as {cell},{value}, a number written \
             with a decimal comma: write numbers with a decimal point ({cell}.{value}) and no \
             thousands separator"
        )
    })
}

/// The message for a file whose first line is a spreadsheet's note of its separator (`sep=,`),
/// which some spreadsheets write above the header; `None` otherwise.
pub fn separator_line(bytes: &[u8]) -> Option<String> {
    let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
    let end = memchr::memchr2(b'\n', b'\r', bytes).unwrap_or(bytes.len());
    let first = String::from_utf8_lossy(&bytes[..end]);
    let first = first.trim().trim_matches('"');
    first.starts_with("sep=").then(|| {
        format!(
            "`{first}` is a spreadsheet's note of the separator, not the header: delete that \
             line"
        )
    })
}

/// The part of a "no column named `name`" message that names a header column equal to `name`
/// but for white space around it (`" security"`), which is otherwise hard to see in the list
/// of names, or but for capitals (`Date` for `date`); empty when there is none. Column names
/// are matched exactly, as written.
pub fn column_name_hint<'a>(header: impl IntoIterator<Item = &'a str>, name: &str) -> String {
    let names: Vec<&str> = header.into_iter().collect();
    // A spreadsheet's separator line above the header (found by review).
    if names
        .first()
        .is_some_and(|first| first.trim().starts_with("sep="))
    {
        return "; the first line (`sep=…`) is a spreadsheet's note of the separator, not the \
                header: delete that line"
            .into();
    }
    // One column whose name holds the wanted name and a semicolon or tab: another separator.
    if let [only] = names.as_slice() {
        let separator = [(';', "semicolons"), ('\t', "tabs")]
            .into_iter()
            .find(|(c, _)| only.contains(*c) && only.contains(name.trim()));
        if let Some((_, which)) = separator {
            return format!(
                "; the header is one column, so the file is separated by {which}: save it \
                 comma-separated"
            );
        }
    }
    if let Some(padded) = names
        .iter()
        .find(|n| **n != name && n.trim() == name.trim())
    {
        return format!(
            "; the header's \"{padded}\" has spaces around the name, and names are matched as \
             written: remove the spaces from the file"
        );
    }
    if let Some(other) = names
        .iter()
        .find(|n| **n != name && crate::io::encoding::same_text(n.trim(), name.trim()))
    {
        return format!(
            "; the header's \"{}\" is the same text with its accented letters encoded another \
             way (Unicode normalisation: é as one character, or as e and an accent): names are \
             matched byte for byte, so write them alike in both files",
            other.trim()
        );
    }
    match names
        .iter()
        .find(|n| **n != name && n.trim().eq_ignore_ascii_case(name.trim()))
    {
        Some(other) => format!(
            "; names are matched as written, capitals too: write \"{}\" where the case or \
             universe file names this column",
            other.trim()
        ),
        None => String::new(),
    }
}

/// The message for a record with more fields than the header (its text shortened to 80
/// characters): one wording for price and yield files, wide tables, panels, attributes and
/// spread tables.
pub fn extra_fields_message(fields: usize, expected: usize, text: &str) -> String {
    let shown: String = text.trim().chars().take(80).collect();
    if shown.is_empty() {
        // Found by review: a line of spaces was shown as an empty pair of backticks.
        return format!(
            "the line holds only white space, no fields (the header has {expected}): delete it"
        );
    }
    if fields < expected {
        return format!(
            "`{shown}` has {fields} fields but the header has {expected}; a row needs a field \
             for every column (an empty cell is written as nothing between two commas), or its \
             cells are read into the wrong columns"
        );
    }
    // Empty fields at the end only: commas the header lacks at the line's end (found by review:
    // the advice on decimal commas fitted no cell of such a row).
    let extra = fields - expected;
    if text.trim_end().ends_with(&",".repeat(extra)) && !text.contains('"') {
        return format!(
            "`{shown}` has {fields} fields but the header has {expected}: the line ends in {} \
             the header lacks; remove {} from the ends of the lines, or end the header with a \
             comma too (a last column the header leaves unnamed may stay empty)",
            match extra {
                1 => "a comma (an empty last field)".to_string(),
                n => format!("{n} commas (empty last fields)"),
            },
            if extra == 1 { "it" } else { "them" },
        );
    }
    format!(
        "`{shown}` has {fields} fields but the header has {expected}; numbers take a decimal \
         point and no thousands separator (43.7678, not 43,7678), and text holding a comma must \
         be quoted"
    )
}
