//! Text-level sanity checks of a TOML or JSON file's values with their lines (a CSV file's shape
//! is `io::sanity::check_csv_shape`'s).
//!
//! They run on the text before (or beside) the typed parsers, because only the text still knows
//! where a value was written: NaN or infinity in a case, a universe file or a claimed build-up
//! is named with its key and line, even in a key the case does not use.

use std::borrow::Cow;

use toml::de::{DeTable, DeValue};
use toml::Spanned;

/// Why a NaN or an infinity is refused wherever it is written.
pub(crate) const NOT_A_NUMBER: &str =
    "NaN and infinity are refused in every key, used or not: no figure can be built on them";

/// A non-finite number found in a tree: its key path and value.
type Found<T> = Option<(String, T)>;

fn join(path: &str, key: &str) -> String {
    if path.is_empty() {
        key.to_string()
    } else {
        format!("{path}.{key}")
    }
}

/// The 1-based line of byte `offset` in `text`.
fn line_of(text: &str, offset: usize) -> usize {
    text.as_bytes()[..offset.min(text.len())]
        .iter()
        .filter(|&&b| b == b'\n')
        .count()
        + 1
}

/// The first float in a TOML value tree that is NaN or infinite, with its dotted key path
/// (array-of-table entries by index, `peer.0.debt`, as `--set` writes them).
pub(crate) fn first_non_finite(value: &toml::Value, path: String) -> Found<f64> {
    // The common case, every number finite, is answered without building a path per value.
    if all_finite(value) {
        return None;
    }
    first_non_finite_at(value, path)
}

fn all_finite(value: &toml::Value) -> bool {
    match value {
        toml::Value::Float(x) => x.is_finite(),
        toml::Value::Array(items) => items.iter().all(all_finite),
        toml::Value::Table(table) => table.values().all(all_finite),
        _ => true,
    }
}

fn first_non_finite_at(value: &toml::Value, path: String) -> Found<f64> {
    match value {
        toml::Value::Float(x) if !x.is_finite() => Some((path, *x)),
        toml::Value::Array(items) => items.iter().enumerate().find_map(|(i, item)| {
            let child = match item {
                toml::Value::Table(_) => format!("{path}.{i}"),
                _ => format!("{path}[{i}]"),
            };
            first_non_finite_at(item, child)
        }),
        toml::Value::Table(table) => table
            .iter()
            .find_map(|(key, item)| first_non_finite_at(item, join(&path, key))),
        _ => None,
    }
}

/// The same over a serialised result (a minijinja value tree, which keeps NaN and infinity
/// where JSON would write `null`).
pub fn first_non_finite_in(value: &minijinja::Value, path: String) -> Found<f64> {
    if all_finite_in(value) {
        return None;
    }
    first_non_finite_within(value, path)
}

fn all_finite_in(value: &minijinja::Value) -> bool {
    use minijinja::value::ValueKind;
    match value.kind() {
        ValueKind::Number => f64::try_from(value.clone()).map_or(true, f64::is_finite),
        ValueKind::Seq | ValueKind::Map => value.try_iter().map_or(true, |mut items| {
            if value.kind() == ValueKind::Seq {
                items.all(|item| all_finite_in(&item))
            } else {
                items.all(|key| {
                    value
                        .get_item(&key)
                        .map_or(true, |item| all_finite_in(&item))
                })
            }
        }),
        _ => true,
    }
}

fn first_non_finite_within(value: &minijinja::Value, path: String) -> Found<f64> {
    use minijinja::value::ValueKind;
    match value.kind() {
        ValueKind::Number => {
            let x = f64::try_from(value.clone()).ok()?;
            (!x.is_finite()).then_some((path, x))
        }
        ValueKind::Seq => value
            .try_iter()
            .ok()?
            .enumerate()
            .find_map(|(i, item)| first_non_finite_within(&item, format!("{path}[{i}]"))),
        ValueKind::Map => value.try_iter().ok()?.find_map(|key| {
            let item = value.get_item(&key).ok()?;
            first_non_finite_within(&item, join(&path, &key.to_string()))
        }),
        _ => None,
    }
}

/// A value of a parsed TOML document with its key path and line.
struct Located<'a, 'i> {
    path: String,
    value: &'a Spanned<DeValue<'i>>,
}

/// Every scalar of a TOML document, with its key path, in document order of the tables.
fn scalars<'a, 'i>(table: &'a DeTable<'i>, path: &str, out: &mut Vec<Located<'a, 'i>>) {
    for (key, value) in table.iter() {
        let child = join(path, key.get_ref());
        collect(value, child, out);
    }
}

fn collect<'a, 'i>(value: &'a Spanned<DeValue<'i>>, path: String, out: &mut Vec<Located<'a, 'i>>) {
    match value.get_ref() {
        DeValue::Table(table) => scalars(table, &path, out),
        DeValue::Array(items) => {
            for (i, item) in items.iter().enumerate() {
                let child = match item.get_ref() {
                    DeValue::Table(_) => format!("{path}.{i}"),
                    _ => format!("{path}[{i}]"),
                };
                collect(item, child, out);
            }
        }
        _ => out.push(Located { path, value }),
    }
}

/// The number a scalar holds (integers as floats), with its text as written.
fn number<'v>(value: &'v DeValue<'_>) -> Option<(f64, Cow<'v, str>)> {
    match value {
        DeValue::Float(f) => {
            let raw = f.as_str();
            Some((raw.replace('_', "").parse().unwrap_or(f64::NAN), raw.into()))
        }
        DeValue::Integer(i) => {
            let raw = i.as_str();
            let parsed = i64::from_str_radix(&raw.replace('_', ""), i.radix()).ok()?;
            Some((parsed as f64, raw.into()))
        }
        _ => None,
    }
}

/// The first NaN or infinity in a TOML document: "line L: key = value".
fn non_finite_in_document(text: &str, scalars: &[Located<'_, '_>]) -> Option<String> {
    scalars.iter().find_map(|s| {
        let (x, raw) = number(s.value.get_ref())?;
        (!x.is_finite()).then(|| {
            format!(
                "line {}: {} = {raw}: {NOT_A_NUMBER}",
                line_of(text, s.value.span().start),
                s.path
            )
        })
    })
}

/// A file given where a case belongs that is plainly something else: an empty file, a CSV
/// table (a header of comma-separated names and no `key = value` line), or a claimed build-up
/// (a `[claimed]` table and no `[case]`). Each is named as what it is, with the command that
/// takes it, instead of as a case that lacks every key.
fn other_kind_of_file(text: &str) -> std::result::Result<(), String> {
    empty_or_csv(text)?;
    let lines: Vec<&str> = (text.lines().map(str::trim))
        .filter(|l| !l.is_empty() && !l.starts_with('#'))
        .collect();
    let tables: Vec<&str> = (lines.iter())
        .filter_map(|l| l.strip_prefix('[')?.split(']').next())
        .map(str::trim)
        .collect();
    if tables.contains(&"claimed") && !tables.contains(&"case") {
        return Err(
            "this is a claimed build-up ([claimed]), not a case: bridge it to a case \
                    with `hurdle compare CASE.toml CLAIM.toml`, or name it in a case's \
                    [reconcile] claimed"
                .into(),
        );
    }
    Ok(())
}

/// The names of a TOML text's top-level tables (`[case]`, `[universe]`), as written.
fn top_tables(text: &str) -> Vec<&str> {
    (text.lines().map(str::trim))
        .filter(|l| l.starts_with('[') && !l.starts_with("[["))
        .filter_map(|l| l.strip_prefix('[')?.split(']').next())
        .map(str::trim)
        .filter(|name| !name.contains('.'))
        .collect()
}

/// A universe file (`[universe]` or `[panel]` and no `[case]`) given where a case belongs, or a
/// case (`[case]` and no `[universe]`) where a universe file belongs; named as such, with the
/// command that takes it. `universe` says which the reader wanted.
pub fn case_or_universe(text: &str, universe: bool) -> std::result::Result<(), String> {
    let tables = top_tables(text);
    let is_universe = tables.contains(&"universe") || tables.contains(&"panel");
    let is_case = tables.contains(&"case");
    match (universe, is_case, is_universe) {
        (false, false, true) => Err("this is a universe file ([universe], [panel]), not a \
             case: run it with `hurdle universe UNIVERSE.toml`"
            .into()),
        (true, true, false) => Err("this is a case file ([case]), not a universe file: run it \
             with `hurdle run CASE.toml`; a universe receipt reruns the universe file it names"
            .into()),
        _ => Ok(()),
    }
}

/// The message for a JSON document given where a case or a claim belongs: a receipt names the
/// file it records (`case.file`, or `universe.file` for a universe's receipt), so the message
/// can say which file to run.
fn json_given(text: &str) -> String {
    let recorded = serde_json::from_str::<serde_json::Value>(text.trim_start_matches('\u{feff}'))
        .ok()
        .and_then(|value| {
            ["case", "universe"].into_iter().find_map(|section| {
                let file = value[section]["file"].as_str()?;
                Some((section, file.to_string()))
            })
        });
    match recorded {
        Some(("universe", file)) => format!(
            "this is the receipt (result.json) of the universe file `{file}` (the path as the \
             run that wrote it was given it), not a case or claim: run that file with `hurdle \
             universe`, or rerun the receipt with `hurdle verify`"
        ),
        Some((_, file)) => format!(
            "this is the receipt (result.json) of the case file `{file}` (the path as the run \
             that wrote it was given it), not a case or claim: run that case, or rerun the \
             receipt with `hurdle verify`"
        ),
        None => "this is a JSON file (a result.json receipt?), not a case or claim: a receipt \
                 is rerun by `hurdle verify RECEIPT.json`, and a case is the TOML file it names \
                 (README, Case file reference)"
            .into(),
    }
}

/// A case, universe or claim file's bytes as text: a binary or UTF-16 file named as what it is,
/// a byte that is not UTF-8 named with its line and place, not read with replacement characters
/// (found by review: a Latin-1 label of a claim reached the memo as "Adv�r", a binary claim was
/// called a CSV table).
pub fn toml_text(bytes: &[u8]) -> std::result::Result<std::borrow::Cow<'_, str>, String> {
    if let Some(kind) = crate::io::encoding::binary_kind(bytes) {
        return Err(format!(
            "the file is {kind}, not TOML text: save it as UTF-8 text"
        ));
    }
    if let Some((line, message)) = crate::io::encoding::first_non_utf8(bytes) {
        return Err(format!("line {}: {message}", line + 1));
    }
    Ok(String::from_utf8_lossy(bytes))
}

/// An empty file, a JSON document (a receipt), or a CSV table (a header of comma-separated
/// names and no `key = value` line), given where a case or a claimed build-up belongs.
pub fn empty_or_csv(text: &str) -> std::result::Result<(), String> {
    let lines: Vec<&str> = (text.lines().map(str::trim))
        .filter(|l| !l.is_empty() && !l.starts_with('#'))
        .collect();
    let Some(first) = lines.first() else {
        return Err(
            "the file is empty: a case is a TOML file (`hurdle init` starts one from a price \
             table; README, Starting a case from a price table)"
                .into(),
        );
    };
    // A receipt or another JSON document opens with a brace (a BOM before it aside).
    if first.trim_start_matches('\u{feff}').starts_with('{') {
        return Err(json_given(text));
    }
    if first.contains(',') && !lines.iter().any(|l| l.contains('=') || l.starts_with('[')) {
        return Err(format!(
            "this is a CSV table (its first line is `{}`), not a case or claim: a case is a \
             TOML file that names its price files (README, Case file reference); `hurdle init` \
             starts one from a price table",
            first.chars().take(40).collect::<String>()
        ));
    }
    Ok(())
}

/// Checks on a case file's text before it is parsed into settings: `[peer]` written for
/// `[[peer]]`, NaN or infinity anywhere (with the line), and `beta.window_start` written
/// together with `beta.lookback` (refused: both would set the window's start). Syntax errors are
/// left to the TOML parser, whose messages already carry the line.
pub fn check_case_text(text: &str) -> std::result::Result<(), String> {
    other_kind_of_file(text)?;
    for (i, line) in text.lines().enumerate() {
        let header = line.trim();
        let single = header.starts_with('[') && !header.starts_with("[[");
        let name = header
            .trim_start_matches('[')
            .split(']')
            .next()
            .unwrap_or("");
        if single && name.trim() == "peer" {
            return Err(format!(
                "line {}: `{header}` opens a single table; each peer is an entry of a list, \
                 written [[peer]] (two brackets)",
                i + 1
            ));
        }
    }
    let Ok(document) = DeTable::parse(text) else {
        return Ok(());
    };
    let mut found = Vec::new();
    scalars(document.get_ref(), "", &mut found);
    if let Some(message) = non_finite_in_document(text, &found) {
        return Err(message);
    }
    let line = |key: &str| {
        found
            .iter()
            .find(|s| s.path == key)
            .map(|s| line_of(text, s.value.span().start))
    };
    let date_keys = ["beta.window_start", "beta.lookback"];
    if let [Some(start), Some(lookback)] = date_keys.map(line) {
        return Err(format!(
            "line {start}: beta.window_start and line {lookback}: beta.lookback both set where the \
             window starts; keep one (the window is beta.window_start to beta.window_end, or \
             beta.lookback periods back from it)"
        ));
    }
    Ok(())
}

/// Checks on a claimed build-up's text: NaN or infinity anywhere, and each figure inside the
/// bounds a case would accept for it (rates in [−0.5, 1), a cost of debt and a tax rate in
/// [0, 1), a beta in [−5, 10], D/E at most 10), each named with its line.
pub fn check_claimed_text(text: &str) -> std::result::Result<(), String> {
    let Ok(document) = DeTable::parse(text) else {
        return Ok(());
    };
    let mut found = Vec::new();
    scalars(document.get_ref(), "", &mut found);
    if let Some(message) = non_finite_in_document(text, &found) {
        return Err(message);
    }
    let most_de = super::MAX_DEBT_TO_EQUITY;
    let bounds: [(&str, f64, f64, bool); 14] = [
        ("claimed.risk_free_rate", -0.5, 1.0, false),
        ("claimed.cost_of_equity", -0.5, 1.0, false),
        ("claimed.preferred_weight", 0.0, 1.0, false),
        ("claimed.lease_weight", 0.0, 1.0, false),
        ("claimed.preferred_cost", 0.0, 1.0, false),
        ("claimed.lease_cost_pre_tax", 0.0, 1.0, false),
        ("claimed.tax_rate", 0.0, 1.0, false),
        ("claimed.equity_risk_premium", -0.5, 1.0, false),
        ("claimed.premiums", -0.5, 1.0, false),
        ("claimed.wacc", -0.5, 1.0, false),
        ("claimed.cost_of_debt_pre_tax", 0.0, 1.0, false),
        ("claimed.beta", -5.0, 10.0, true),
        ("claimed.debt_to_equity", 0.0, most_de, true),
        (
            "claimed.debt_to_capital",
            0.0,
            crate::capital::cost::debt_to_capital_from_equity(most_de),
            true,
        ),
    ];
    for s in &found {
        let Some(&(key, low, high, closed)) = bounds.iter().find(|b| b.0 == s.path) else {
            continue;
        };
        let Some((x, raw)) = number(s.value.get_ref()) else {
            continue; // A wrong type is reported by the typed parser.
        };
        let inside = x >= low && if closed { x <= high } else { x < high };
        if !inside {
            // The closed bounds are a beta's and a ratio's; the open ones are rates', and a
            // rate of 1 or more is most often a percentage typed for a decimal.
            // A weight of exactly 1 is all of capital, not 1%: it gets no percentage reading.
            let weight = key.ends_with("_weight");
            let hint = if closed || x < 1.0 {
                String::new()
            } else if weight && x < 2.0 {
                "a weight is a share of total capital below 1 (0.1 for 10%), and ".to_string()
            } else {
                format!(
                    "{} are decimals ({} for {}%), and ",
                    if weight { "weights" } else { "rates" },
                    crate::error::compact(x / 100.0),
                    raw
                )
            };
            return Err(format!(
                "line {}: {key} = {raw} is outside [{low}, {high}{}: {hint}a figure outside these \
                 bounds is no build-up a case could give",
                line_of(text, s.value.span().start),
                if closed { "]" } else { ")" }
            ));
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn case_text_names_non_finite_values_and_their_lines() {
        let message = check_case_text("[a]\nx = 1.0\n\n[[peer]]\ndebt = nan\n").unwrap_err();
        assert!(
            message.contains("line 5") && message.contains("peer.0.debt"),
            "{message}"
        );
        let message = check_case_text("[b]\ny = [0.1, -inf]\n").unwrap_err();
        assert!(
            message.contains("b.y[1]") && message.contains("-inf"),
            "{message}"
        );
        assert!(check_case_text("[b]\ny = 1e400\n")
            .unwrap_err()
            .contains("1e400"));
        assert!(check_case_text("[peer]\nname = \"x\"\n")
            .unwrap_err()
            .contains("line 1"));
        let both = "[beta]\nlookback = 60\nwindow_start = 2020-01-01\n";
        let message = check_case_text(both).unwrap_err();
        assert!(
            message.contains("line 3") && message.contains("line 2"),
            "{message}"
        );
        assert!(check_case_text("[beta]\nlookback = 60\n").is_ok());
    }

    #[test]
    fn claimed_text_bounds() {
        let ok = "[claimed]\nbeta = 1.1\nrisk_free_rate = 0.04\ndebt_to_equity = 0.5\n";
        assert!(check_claimed_text(ok).is_ok());
        let message = check_claimed_text("[claimed]\nwacc = 0.09\nbeta = 1e308\n").unwrap_err();
        assert!(
            message.contains("line 3") && message.contains("1e308"),
            "{message}"
        );
        assert!(check_claimed_text("[claimed]\nrisk_free_rate = 4\n").is_err());
    }
}
