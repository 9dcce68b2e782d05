//! The peers' names `hurdle init` writes: a column's header made a name the case accepts, and
//! numbered where two would read alike.

use crate::io::tables::header_key;

/// A column header as a name for the memo: a header cell with a line break in it (a wrapped
/// spreadsheet header) becomes one line, its runs of whitespace one space; the `column` key keeps
/// the header as it is.
pub(super) fn display_name(header: &str) -> String {
    // What the case refuses in a name is left off it first, so a formula's first character
    // behind an invisible one is seen below (found by review: `init` wrote names `run` then
    // refused): direction controls, invisible characters and noncharacters.
    let visible: String = (header.chars())
        .filter(|&c| !crate::case::sanity::unseen_or_unwritable(c))
        .collect();
    let name = visible
        .split(|c: char| c.is_whitespace() || c.is_control())
        .filter(|part| !part.is_empty())
        .collect::<Vec<_>>()
        .join(" ");
    // A name a spreadsheet would read as a formula in a CSV output is refused by the case, so
    // the characters that start one are left off the name (`column` keeps the header).
    let kept = name.trim_start_matches(['=', '+', '-', '@', ' ']);
    // Backticks, square brackets and a `<…>` pair open code, links and HTML in the memo's
    // Markdown, which the case refuses in a name: a bracket becomes a parenthesis (a `<` only
    // when a `>` follows it, as the case refuses), a backtick an apostrophe.
    let mut kept = kept.replace('[', "(").replace(']', ")").replace('`', "'");
    while let Some(span) = crate::case::sanity::angle_bracketed(&kept) {
        let inner = span[1..span.len() - 1].to_string();
        kept = kept.replacen(span, &format!("({inner})"), 1);
    }
    // A name past the case's limit is cut with an ellipsis, leaving room for the number
    // `peer_names` may add (` (9999)`).
    let kept = kept.trim();
    let most = crate::case::sanity::MAX_LABEL_CHARACTERS - 8;
    let kept: String = match kept.chars().count() > most {
        true => {
            let cut: String = kept.chars().take(most - 1).collect();
            cut.trim_end().chars().chain(['…']).collect()
        }
        false => kept.to_string(),
    };
    match kept.is_empty() {
        true => "peer".to_string(),
        false => kept,
    }
}

/// The peers' names for the columns `columns` of a table whose headers (the date column's
/// among them) are `headers`. A header that is already a plain name ([`display_name`] leaves it
/// as it is) keeps it. Any other column's name is its [`display_name`], numbered (`A B (2)`)
/// when it reads like the header of another column or the name of another peer (capitals
/// aside, and each run of white space one space, as headers and names are matched), so that no
/// peer is named after a column it does not read (found by review: the column `=Alder` was named
/// "Alder" beside a column `Alder`, which became "Alder (2)"). Names never repeat, also when
/// capitals are ignored, as the case requires.
pub(super) fn peer_names(headers: &[&str], columns: &[&str]) -> Vec<String> {
    // As the case compares peer names (capitals, accents' encoding, soft hyphens aside).
    let fold = |text: &str| crate::case::sanity::names::name_fold(&header_key(text));
    let plain: Vec<String> = columns.iter().map(|c| display_name(c)).collect();
    let mut names: Vec<Option<String>> = vec![None; columns.len()];
    let mut taken: Vec<String> = Vec::with_capacity(columns.len());
    // A header taken as it is first, so that a cleaned name never takes it from its column.
    for (j, column) in columns.iter().enumerate() {
        if plain[j] == *column && !taken.contains(&fold(column)) {
            taken.push(fold(column));
            names[j] = Some(plain[j].clone());
        }
    }
    for (j, column) in columns.iter().enumerate() {
        if names[j].is_some() {
            continue;
        }
        let clashes = |name: &str| {
            let folded = fold(name);
            taken.contains(&folded) || (headers.iter()).any(|h| h != column && fold(h) == folded)
        };
        let mut name = plain[j].clone();
        let mut n = 1;
        while clashes(&name) {
            n += 1;
            name = format!("{} ({n})", plain[j]);
        }
        taken.push(fold(&name));
        names[j] = Some(name);
    }
    names.into_iter().flatten().collect()
}
