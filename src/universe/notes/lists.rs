//! How the universe's notes list securities: the ids a rule picks, the first ten of them, each
//! quoted when it holds a comma or a quote, and the panel's ids that an attribute id matches but
//! for capitals, accents' encoding, spaces or leading zeros.

use crate::universe::securities::SecurityResult;

/// The ids of the securities `pick` picks, in the rows' order.
pub(super) fn ids_where(
    securities: &[SecurityResult],
    pick: impl Fn(&SecurityResult) -> bool,
) -> Vec<&str> {
    securities
        .iter()
        .filter(|s| pick(s))
        .map(|s| s.security.as_str())
        .collect()
}

/// The first ten ids of a note's list, then "…" if there are more; an id holding a comma or a
/// quote is quoted, so the list reads as the ids it holds (found by review: `SEC,0031` read as
/// two ids).
pub fn first_ids(ids: &[&str]) -> String {
    let shown: Vec<String> = ids.iter().map(|id| shown_id(id)).collect();
    first_of(&shown)
}

/// An id (or an industry label) as a note shows it: between typographic quotes when it holds a
/// comma or a quote, which would blur a list (found by review: `Alpha, Inc-like (1), Gamma (2)`
/// read as three industries); the id itself as written, with no escapes (found by review: `Q"1,x`
/// showed as `"Q\"1,x"`), except white space other than a plain space, shown by its code point
/// (`KX<U+00A0>203`), so that two ids that print alike can be told apart (found by review).
pub fn shown_id(id: &str) -> String {
    let id = &(id.chars())
        .map(|c| match c.is_whitespace() && c != ' ' {
            true => format!("<U+{:04X}>", u32::from(c)),
            false => c.to_string(),
        })
        .collect::<String>();
    match (id.contains([',', '"']), id.contains(['“', '”'])) {
        (false, _) => id.to_string(),
        (true, false) => format!("“{id}”"),
        // An id holding typographic quotes itself is written with escapes, so the list still
        // reads as the ids it holds (found by review).
        (true, true) => format!("{id:?}"),
    }
}

/// The first ten of `texts` (already shown as a note shows them), with "…" after them when
/// there are more.
pub fn first_of(texts: &[String]) -> String {
    let more = if texts.len() > 10 { ", …" } else { "" };
    format!("{}{more}", texts[..texts.len().min(10)].join(", "))
}

/// ". The panel holds an id differing only in capitals (SEC0100 for sec0100): ids are matched
/// exactly, …" for attribute ids without prices that a panel id matches but for capitals, for
/// how accented letters are encoded, or for leading zeros (an export that changed capitals, or a
/// column of ids stored as numbers), else nothing.
pub fn case_twins(strays: &[&str], panel: &[String]) -> String {
    use unicode_normalization::UnicodeNormalization;
    // Leading zeros aside (a column of ids stored as numbers loses them: 000101 becomes 101;
    // found by review), capitals aside and accented letters composed (NFC, Unicode Standard
    // Annex #15): é as one character or as e and a combining accent.
    let unpadded = |id: &str| id.trim_start_matches('0').to_string();
    // Runs of white space as one space too (a spreadsheet's no-break space, or two spaces for
    // one; found by review: "KX 203" with a no-break space was listed beside the panel's
    // "KX 203" with no word of the difference).
    let key = |id: &str| {
        (unpadded(id)
            .split_whitespace()
            .collect::<Vec<_>>()
            .join(" "))
        .nfc()
        .collect::<String>()
        .to_lowercase()
    };
    let lower: std::collections::HashMap<String, &str> =
        panel.iter().map(|id| (key(id), id.as_str())).collect();
    let twins: Vec<(&str, &str)> = (strays.iter())
        .filter_map(|s| Some((*lower.get(&key(s))?, *s)))
        .collect();
    if twins.is_empty() {
        return String::new();
    }
    let pairs: Vec<String> = (twins.iter())
        .map(|(p, s)| format!("{p} for {s}"))
        .collect();
    // What separates each pair, over all pairs (found by review: a pair differing in capitals
    // and in encoding was said to differ in encoding only).
    let differs = |test: &dyn Fn(&str, &str) -> bool| {
        (twins.iter()).any(|(p, s)| test(&unpadded(p), &unpadded(s)))
    };
    let leading = |id: &str| id.len() - id.trim_start_matches('0').len();
    let zeros = (twins.iter()).any(|(p, s)| leading(p) != leading(s));
    let fold = |id: &str| id.split_whitespace().collect::<Vec<_>>().join(" ");
    let spaces = |p: &str, s: &str| {
        !(p.chars().filter(|c| c.is_whitespace())).eq(s.chars().filter(|c| c.is_whitespace()))
    };
    let kinds: Vec<&str> = [
        (
            differs(&spaces),
            "in spaces (shown <U+…> where not a plain space)",
        ),
        (
            differs(&|p, s| !fold(p).nfc().eq(fold(s).nfc())),
            "in capitals",
        ),
        (
            differs(&|p, s| fold(p).to_lowercase() != fold(s).to_lowercase()),
            "in how accented letters are encoded",
        ),
        (zeros, "in leading zeros"),
    ]
    .into_iter()
    .filter_map(|(found, kind)| found.then_some(kind))
    .collect();
    let how = match kinds.as_slice() {
        [one] => one.to_string(),
        [first, second] => format!("{first}, {second}, or in both"),
        _ => format!("{}, or in several", kinds.join(", ")),
    };
    let zeros_advice = match zeros {
        true => " (a column of ids stored as numbers loses its leading zeros: store ids as text)",
        false => "",
    };
    format!(
        ". The panel holds {} differing only {how} ({}): ids are matched exactly, so write them \
         alike in both files{zeros_advice}",
        if pairs.len() == 1 { "an id" } else { "ids" },
        first_ids(&pairs.iter().map(String::as_str).collect::<Vec<_>>())
    )
}
