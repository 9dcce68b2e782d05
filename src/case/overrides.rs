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

fn parse_override_value(raw: &str) -> toml::Value {
    toml::from_str::<toml::Table>(&format!("v = {raw}"))
        .ok()
        .and_then(|mut t| t.remove("v"))
        .unwrap_or_else(|| toml::Value::String(raw.to_string()))
}
