//! A wide table's header as a person sees it: matching a column's name as it is typed, and
//! saying what went wrong when the header is not where the reader looked for it.
//!
//! A spreadsheet header may wrap over two lines or hold a no-break space, which nobody types on
//! a command line or in a case file, so names are matched with every run of whitespace read as
//! one space. The reader takes the first row with anything in it as the header and the first
//! column as the dates; a title written above the table, or a first column that holds no dates,
//! breaks those guesses, and the messages here name the row or the columns that would have been
//! right instead of advice that does not fit.

use super::cells::Cell;
use super::{ChoiceWords, RawTable};

/// How many rows below the header are searched for the header a title pushed down.
pub(crate) const TITLE_SEARCH_ROWS: usize = 20;

/// A header as it is matched: each run of whitespace (a wrapped cell's line break, a no-break
/// space, a tab) one space, and the ends trimmed.
pub fn header_key(name: &str) -> String {
    name.split(char::is_whitespace)
        .filter(|part| !part.is_empty())
        .collect::<Vec<_>>()
        .join(" ")
}

/// The position of the header `wanted` among `names`: the header written exactly so, else the
/// one that reads the same by [`header_key`]. `Ok(None)` when none does; an error naming them
/// when several read alike and none is written exactly so.
pub fn find_header(names: &[String], wanted: &str) -> Result<Option<usize>, String> {
    if let Some(exact) = names.iter().position(|n| n == wanted) {
        return Ok(Some(exact));
    }
    let key = header_key(wanted);
    let alike: Vec<usize> = (0..names.len())
        .filter(|&j| header_key(&names[j]) == key)
        .collect();
    match alike[..] {
        [] => Ok(None),
        [one] => Ok(Some(one)),
        _ => Err(format!(
            "`{wanted}` reads like {} headers once line breaks and spaces are alike ({}); write \
             the header exactly as the table has it",
            alike.len(),
            quoted(alike.iter().map(|&j| names[j].as_str()))
        )),
    }
}

/// Names in backticks, separated by commas.
fn quoted<'a>(names: impl Iterator<Item = &'a str>) -> String {
    names
        .map(|n| format!("`{n}`"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// A title written above the table (a report's name, an export's date), taken for the header
/// because it is the first row with anything in it: found when a row among the next
/// [`TITLE_SEARCH_ROWS`] holds more labels than the header (text that is neither a number nor a
/// date, two at least). The message names the title's row and the row the header appears to
/// start on. Asked only once the header has been refused, so a table whose header is right
/// never meets it.
pub(crate) fn title_above(raw: &RawTable) -> Option<String> {
    let titles: Vec<&str> = raw
        .header
        .iter()
        .filter(|h| !h.is_empty())
        .map(String::as_str)
        .collect();
    let height = raw.columns.iter().map(Vec::len).max().unwrap_or(0);
    let (row, labels) = (0..height.min(TITLE_SEARCH_ROWS)).find_map(|i| {
        let cells = raw.columns.iter().filter_map(|column| column.get(i));
        let filled: Vec<&Cell> = cells.filter(|c| !c.is_empty()).collect();
        let labels: Option<Vec<&str>> = filled.iter().map(|c| label(c)).collect();
        labels
            .filter(|l| l.len() >= 2 && l.len() > titles.len())
            .map(|l| (i, l))
    })?;
    let shown: Vec<String> = titles.iter().map(|t| format!("\"{t}\"")).collect();
    let shown = match shown.is_empty() {
        true => "empty cells".to_string(),
        false => shown.join(", "),
    };
    let more = if labels.len() > 4 { ", …" } else { "" };
    Some(format!(
        "{}{} holds only {}, and the table's header appears to start at {} ({}{more}): the \
         first row with anything in it is read as the header, so a title above the table is \
         taken for one. Delete the rows above the header (there is no setting that skips rows), \
         or save the table from its header down",
        raw.place.sheet_prefix(),
        raw.place.header_row(),
        shown,
        raw.place.row(row),
        quoted(labels.into_iter().take(4))
    ))
}

/// The text of a cell that reads as a column's name: text, neither a number nor a date.
fn label(cell: &Cell) -> Option<&str> {
    match cell {
        Cell::Text(text) if !cell.is_numeric() && !cell.is_written_date() => Some(text.trim()),
        _ => None,
    }
}

/// When the first column was taken as the dates (none was named) and does not hold them: what
/// it holds and which of the columns `others` do (date cells or ISO dates in most of their
/// filled cells). `None` when the first column holds dates (the error is its own cells'), or
/// numbers while no other column holds dates (serial dates, most likely).
pub(crate) fn date_column_hint(
    raw: &RawTable,
    others: &[usize],
    words: &ChoiceWords,
) -> Option<String> {
    // (filled cells, date cells or ISO dates, numbers) of column j.
    let counts = |j: usize| {
        let filled = raw.columns[j].iter().filter(|c| !c.is_empty());
        filled.fold((0, 0, 0), |(n, dates, numbers), cell| {
            let (date, number) = (cell.is_written_date(), cell.is_numeric());
            (
                n + 1,
                dates + usize::from(date),
                numbers + usize::from(number),
            )
        })
    };
    let (filled, dates, numbers) = counts(0);
    if dates * 2 > filled {
        return None;
    }
    let holding: Vec<&str> = others
        .iter()
        .filter(|&&j| {
            let (filled, dates, _) = counts(j);
            dates * 2 > filled
        })
        .map(|&j| raw.header[j].as_str())
        .collect();
    let numbers_first = numbers * 2 > filled;
    if numbers_first && holding.is_empty() {
        return None;
    }
    let holds = match numbers_first {
        true => "its numbers read as date serials",
        false => "it holds no dates",
    };
    let found = match holding.is_empty() {
        true => "no column holds date cells or ISO dates".to_string(),
        false => format!("the dates appear to be in {}", quoted(holding.into_iter())),
    };
    Some(format!(
        "the first column, `{}`, is taken as the dates unless {} ({holds}); {found}",
        raw.header[0], words.name_the_date_column
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    // A wrapped spreadsheet header (a line break, a no-break space) matches the name as typed;
    // an exact header wins over one that only reads alike, and two that read alike are named.
    #[test]
    fn headers_match_with_whitespace_runs_alike() {
        let names: Vec<String> = ["date", "Market\nIndex", "Alder\u{a0}Tree", "A B", "A\nB"]
            .map(String::from)
            .to_vec();
        assert_eq!(find_header(&names, "Market Index"), Ok(Some(1)));
        assert_eq!(find_header(&names, " Alder  Tree "), Ok(Some(2)));
        assert_eq!(find_header(&names, "A B"), Ok(Some(3)));
        assert_eq!(find_header(&names, "A\nB"), Ok(Some(4)));
        assert_eq!(find_header(&names, "Birch"), Ok(None));
        let names: Vec<String> = ["A\nB", "A\tB"].map(String::from).to_vec();
        let both = find_header(&names, "A B").unwrap_err();
        assert!(
            both.contains("`A B` reads like 2 headers") && both.contains("`A\nB`, `A\tB`"),
            "{both}"
        );
    }
}
