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
    // Checked segment by segment below: inside a list a name may hold dots, even end in one
    // (`peer.Birch Inc..debt`).
    let not_a_path = || fail(format!("`{key}` is not a dotted key path"));
    let value = parse_override_value(raw.trim());
    let (last, parents) = segments
        .split_last()
        .expect("split yields at least one segment");
    let mut current = table;
    for (depth, segment) in parents.iter().enumerate() {
        if segment.is_empty() {
            return Err(not_a_path());
        }
        let here = segments[..=depth].join(".");
        let entry = current
            .entry(segment.to_string())
            .or_insert_with(|| toml::Value::Table(toml::Table::new()));
        current = match entry {
            toml::Value::Table(t) => t,
            toml::Value::Array(items) => {
                // The key's own text after this segment: a name may hold a dot.
                let rest = key.splitn(depth + 2, '.').last().unwrap_or_default();
                let rest =
                    named_entry(items, rest).unwrap_or_else(|| segments[depth + 1..].to_vec());
                if rest.iter().any(|s| s.is_empty()) {
                    return Err(fail(format!(
                        "`{key}` names no `{here}` entry: no entry's name begins what follows \
                         `{here}.`, and read as dotted segments one of them is empty"
                    )));
                }
                return descend_array(items, &rest, value, &here).map_err(fail);
            }
            other => {
                return Err(fail(format!(
                    "`{here}` holds the value {other}, not a table of keys"
                )))
            }
        };
    }
    if last.is_empty() {
        return Err(not_a_path());
    }
    // The target is one ratio written either way: a what-if that sets one replaces the other
    // the case file gives, instead of leaving both (which the case refuses).
    if parents == ["target"] {
        match *last {
            "debt_to_equity" => current.remove("debt_to_capital"),
            "debt_to_capital" => current.remove("debt_to_equity"),
            _ => None,
        };
    }
    current.insert(last.to_string(), value);
    Ok(())
}

/// The segments after an array's key when they begin with an entry's `name` that holds a dot
/// (`peer.Alder Co. Ltd.debt`): that name as one segment, then the keys. The longest such name
/// wins, so `Alder.Co` is not read as `Alder` and a key `Co`. `None` when no name with a dot
/// begins the text (then the dots split it as usual).
fn named_entry<'a>(items: &[toml::Value], rest: &'a str) -> Option<Vec<&'a str>> {
    let rest = rest.trim_start();
    // Spaces may stand around the dot after the name, as around any segment.
    let keys_after = |name: &str| {
        let after = rest.strip_prefix(name)?;
        let dot = after.len() - after.trim_start().len();
        after
            .trim_start()
            .starts_with('.')
            .then_some(name.len() + dot + 1)
    };
    let (length, keys) = items
        .iter()
        .filter_map(|item| item.get("name").and_then(|n| n.as_str()))
        .filter(|name| name.contains('.'))
        .filter_map(|name| keys_after(name).map(|keys| (name.len(), keys)))
        .max_by_key(|(length, _)| *length)?;
    let keys = rest[keys..].split('.').map(str::trim);
    Some(std::iter::once(&rest[..length]).chain(keys).collect())
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

/// Each `--set` that sets a value an earlier one already set in `table` (by position: the
/// later, and the latest earlier one it replaces): the same key, or one key spelled two ways
/// (a peer by index and by name). The later wins, as it always has (a grid cell is reproduced
/// by adding its values after the grid's own `--set`s); the caller says so (found by review:
/// it happened without a word). The two target ratios, which replace each other by design,
/// are left to the case's own refusal of both.
pub fn repeated(table: &toml::Table, overrides: &[String]) -> Vec<(usize, usize)> {
    let key = |assignment: &str| -> String {
        let key = assignment.split_once('=').map_or(assignment, |(k, _)| k);
        key.split('.').map(str::trim).collect::<Vec<_>>().join(".")
    };
    let keys: Vec<String> = overrides.iter().map(|a| key(a)).collect();
    let ratio = |k: &str| k == "target.debt_to_equity" || k == "target.debt_to_capital";
    let same = |a: &str, b: &str| a == b || (!(ratio(a) && ratio(b)) && same_value(table, a, b));
    (1..keys.len())
        .filter_map(|later| {
            (0..later)
                .rev()
                .find(|&earlier| same(&keys[earlier], &keys[later]))
                .map(|earlier| (earlier, later))
        })
        .collect()
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

    // A peer whose name holds dots, even ends in one, is addressed by that name; the longest
    // name that begins the key wins; a path with an empty segment elsewhere is still refused.
    #[test]
    fn a_name_with_dots_picks_its_peer() {
        let mut table: toml::Table = toml::from_str(
            "[[peer]]\nname = \"Alder\"\ndebt = 1.0\n\n[[peer]]\nname = \"Alder.Co\"\ndebt = 2.0\n\n\
             [[peer]]\nname = \"Birch Inc.\"\ndebt = 3.0\n",
        )
        .unwrap();
        apply_override(&mut table, "peer.Alder.Co.debt=20.0").unwrap();
        apply_override(&mut table, "peer.Alder.debt=10.0").unwrap();
        apply_override(&mut table, "peer.Birch Inc. . debt=30.0").unwrap();
        let debts: Vec<f64> = table["peer"]
            .as_array()
            .unwrap()
            .iter()
            .map(|p| p["debt"].as_float().unwrap())
            .collect();
        assert_eq!(debts, [10.0, 20.0, 30.0]);
        for bad in ["market..risk_free_rate=0.03", "market.=1"] {
            let error = apply_override(&mut table, bad).unwrap_err().to_string();
            assert!(error.contains("is not a dotted key path"), "{bad}: {error}");
        }
        // A misspelt name with a dot is named as no entry's, not as a malformed path.
        for bad in ["peer.0..debt=1", "peer.Birch Ltd..debt=1"] {
            let error = apply_override(&mut table, bad).unwrap_err().to_string();
            assert!(error.contains("names no `peer` entry"), "{bad}: {error}");
        }
    }
}
