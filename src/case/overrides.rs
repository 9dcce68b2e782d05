//! `--set dotted.key=value` overrides: one assignment applied to a parsed case table.
//!
//! Overrides act on the TOML table before it is turned into typed settings, so an override is
//! checked exactly like a key written in the file. The sensitivity grid and `implied` use the
//! same path, which is why a grid cell equals a run with the same `--set` values.

use crate::error::{Error, Result};

/// Applies one `dotted.key=value` assignment to a parsed case table.
///
/// The value is read as a TOML value (`0.05`, `true`, `2026-06-30`, `"text"`); anything that is
/// not valid TOML is taken as a plain string, so `--set beta.adjustment=blume` works unquoted.
/// Inside an array of tables (`peer`), a segment is either a 0-based index or a peer's `name`.
pub fn apply_override(table: &mut toml::Table, assignment: &str) -> Result<()> {
    let fail = |message: String| Error::Override {
        assignment: assignment.to_string(),
        message,
    };
    let (key, raw) = assignment
        .split_once('=')
        .ok_or_else(|| fail("expected KEY=VALUE, e.g. market.equity_risk_premium=0.05".into()))?;
    let key = key.trim();
    let segments: Vec<&str> = key.split('.').map(str::trim).collect();
    if segments.iter().any(|s| s.is_empty()) {
        return Err(fail(format!("`{key}` is not a dotted key path")));
    }
    let value = parse_override_value(raw.trim());
    let (last, parents) = segments
        .split_last()
        .expect("split yields at least one segment");
    let mut current = table;
    for (depth, segment) in parents.iter().enumerate() {
        let here = segments[..=depth].join(".");
        let entry = current
            .entry(segment.to_string())
            .or_insert_with(|| toml::Value::Table(toml::Table::new()));
        current = match entry {
            toml::Value::Table(t) => t,
            toml::Value::Array(items) => {
                return descend_array(items, &segments[depth + 1..], value, &here).map_err(fail);
            }
            other => {
                return Err(fail(format!(
                    "`{here}` holds the value {other}, not a table of keys"
                )))
            }
        };
    }
    current.insert(last.to_string(), value);
    Ok(())
}

/// Continues an override inside an array of tables: the first segment picks the element.
fn descend_array(
    items: &mut [toml::Value],
    rest: &[&str],
    value: toml::Value,
    array_key: &str,
) -> std::result::Result<(), String> {
    let (selector, keys) = rest
        .split_first()
        .ok_or_else(|| format!("`{array_key}` is a list; name an element and a key"))?;
    let position = match selector.parse::<usize>() {
        Ok(i) if i < items.len() => i,
        Ok(i) => {
            return Err(format!(
                "`{array_key}` has {} entries (0 to {}); there is no entry {i}",
                items.len(),
                items.len().saturating_sub(1)
            ))
        }
        Err(_) => items
            .iter()
            .position(|item| item.get("name").and_then(|n| n.as_str()) == Some(*selector))
            .ok_or_else(|| format!("no `{array_key}` entry has name = \"{selector}\""))?,
    };
    let toml::Value::Table(element) = &mut items[position] else {
        return Err(format!("`{array_key}` entry {position} is not a table"));
    };
    let (last, parents) = keys
        .split_last()
        .ok_or_else(|| format!("name a key inside `{array_key}.{selector}`"))?;
    let mut current = element;
    for segment in parents {
        current = match current
            .entry(segment.to_string())
            .or_insert_with(|| toml::Value::Table(toml::Table::new()))
        {
            toml::Value::Table(t) => t,
            other => return Err(format!("`{segment}` holds {other}, not a table of keys")),
        };
    }
    current.insert(last.to_string(), value);
    Ok(())
}

/// Whether two key paths set the same value of `table` (`peer.0.debt` and
/// `peer.Alder.debt`, for a first peer named Alder): each replaces what the other set (a key
/// and the table holding it, `market` and `market.equity_risk_premium`, are not the same: the
/// key cannot be set inside the text the table became). A path that cannot be applied sets
/// nothing, so it shares no value.
pub fn same_value(table: &toml::Table, a: &str, b: &str) -> bool {
    // Printable (TOML strings hold no control characters) and unlike any case value.
    const MARKS: [&str; 3] = [
        "hurdle: first axis marker",
        "hurdle: second axis marker",
        "hurdle: third axis marker",
    ];
    let mut marked = table.clone();
    let mut set =
        |key: &str, text: &str| apply_override(&mut marked, &format!("{key}=\"{text}\"")).is_ok();
    if !(set(a, MARKS[0]) && set(b, MARKS[1])) {
        return false;
    }
    if holds(&marked, MARKS[0]) {
        return false;
    }
    apply_override(&mut marked, &format!("{a}=\"{}\"", MARKS[2])).is_ok()
        && !holds(&marked, MARKS[1])
}

/// Whether `text` is a string anywhere in `value`.
fn holds(table: &toml::Table, text: &str) -> bool {
    fn within(value: &toml::Value, text: &str) -> bool {
        match value {
            toml::Value::String(s) => s == text,
            toml::Value::Table(t) => t.values().any(|v| within(v, text)),
            toml::Value::Array(items) => items.iter().any(|v| within(v, text)),
            _ => false,
        }
    }
    table.values().any(|v| within(v, text))
}

fn parse_override_value(raw: &str) -> toml::Value {
    toml::from_str::<toml::Table>(&format!("v = {raw}"))
        .ok()
        .and_then(|mut t| t.remove("v"))
        .unwrap_or_else(|| toml::Value::String(raw.to_string()))
}

#[cfg(test)]
mod tests {
    use super::*;

    // Two spellings of one value (a peer by index and by name, spaces around a segment) share
    // it; two peers' values, or two keys, do not; a key path that cannot be applied shares none.
    #[test]
    fn two_spellings_of_one_key_share_its_value() {
        let table: toml::Table = toml::from_str(
            "[market]\nequity_risk_premium = 0.05\nrisk_free_rate = 0.03\n\n\
             [[peer]]\nname = \"Alder\"\ndebt = 1.0\n\n[[peer]]\nname = \"Birch\"\ndebt = 2.0\n",
        )
        .unwrap();
        assert!(same_value(&table, "peer.0.debt", "peer.Alder.debt"));
        assert!(same_value(&table, "peer.1.debt", "peer . Birch . debt"));
        assert!(!same_value(&table, "peer.0.debt", "peer.1.debt"));
        assert!(!same_value(
            &table,
            "market.equity_risk_premium",
            "market.risk_free_rate"
        ));
        assert!(!same_value(&table, "peer.7.debt", "peer.7.debt"));
        assert!(!same_value(&table, "market.equity_risk_premium", "market"));
    }
}
