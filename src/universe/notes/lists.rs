//! How the universe's notes list securities: the ids a rule picks, the first ten of them, each
//! quoted when it holds a comma or a quote.

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

/// An id as a note shows it: between typographic quotes when it holds a comma or a quote, which
/// would blur a list; the id itself as written, with no escapes (found by review: `Q"1,x`
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
