//! Placeholders: the figures a starting case cannot know, and the check that none is left.
//!
//! `hurdle init` writes every figure it cannot know — equity values, debt, tax rates, the rates
//! and premiums, the target structure — as a text value beginning with [`MARK`]. A case still
//! holding one must never run: an invented number would flow into a discount rate without
//! anyone noticing. [`reject`] is called on the case file's text before it is parsed and lists
//! every placeholder left, with its key and line, so they can all be filled in one pass.

use std::path::Path;

use toml::de::{DeTable, DeValue};
use toml::Spanned;

use crate::error::{Error, Result};

/// How every placeholder value begins.
pub const MARK: &str = "<FILL IN";

/// A placeholder value as a TOML string: `"<FILL IN: what belongs here>"`.
pub fn placeholder(what: &str) -> String {
    format!("\"{MARK}: {}>\"", what.replace('"', "'"))
}

/// One placeholder left in a case file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Placeholder {
    /// The dotted key, with a peer's name when it is inside `[[peer]]`.
    pub key: String,
    /// 1-based line of the value.
    pub line: usize,
    /// The placeholder text, which says what belongs there.
    pub text: String,
    /// The key path, for looking the value up after `--set` overrides.
    path: Vec<Segment>,
}

#[derive(Debug, Clone, PartialEq, Eq)]
enum Segment {
    Key(String),
    Index(usize),
}

fn is_placeholder(text: &str) -> bool {
    text.trim_start().to_ascii_uppercase().starts_with(MARK)
}

/// Every placeholder in a case file's text, in file order. Text that is not valid TOML has
/// none here; the case reader reports the syntax error.
pub fn find(text: &str) -> Vec<Placeholder> {
    let Ok(document) = DeTable::parse(text) else {
        return Vec::new();
    };
    let mut found = Vec::new();
    walk_table(document.get_ref(), &mut Vec::new(), "", text, &mut found);
    found.sort_by_key(|p| p.line);
    found
}

fn walk_table(
    table: &DeTable<'_>,
    path: &mut Vec<Segment>,
    label: &str,
    text: &str,
    found: &mut Vec<Placeholder>,
) {
    for (key, value) in table.iter() {
        path.push(Segment::Key(key.get_ref().to_string()));
        let here = if label.is_empty() {
            key.get_ref().to_string()
        } else {
            format!("{label}.{}", key.get_ref())
        };
        walk_value(value, path, &here, text, found);
        path.pop();
    }
}

fn walk_value(
    value: &Spanned<DeValue<'_>>,
    path: &mut Vec<Segment>,
    label: &str,
    text: &str,
    found: &mut Vec<Placeholder>,
) {
    match value.get_ref() {
        DeValue::String(s) if is_placeholder(s) => found.push(Placeholder {
            key: label.to_string(),
            line: text[..value.span().start.min(text.len())]
                .matches('\n')
                .count()
                + 1,
            text: s.to_string(),
            path: path.clone(),
        }),
        DeValue::Table(table) => walk_table(table, path, label, text, found),
        DeValue::Array(items) => {
            for (i, item) in items.iter().enumerate() {
                // A peer is easier to find by its name than by its position.
                let name = match item.get_ref() {
                    DeValue::Table(t) => t
                        .get("name")
                        .and_then(|n| match n.get_ref() {
                            DeValue::String(s) if !is_placeholder(s) => Some(s.to_string()),
                            _ => None,
                        })
                        .map(|n| format!(" (\"{n}\")"))
                        .unwrap_or_default(),
                    _ => String::new(),
                };
                path.push(Segment::Index(i));
                walk_value(item, path, &format!("{label}.{i}{name}"), text, found);
                path.pop();
            }
        }
        _ => {}
    }
}

/// Whether the value at `path` in `table` is still a placeholder.
fn still_placeholder(table: &toml::Table, path: &[Segment]) -> bool {
    let mut current = None::<&toml::Value>;
    for segment in path {
        current = match (current, segment) {
            (None, Segment::Key(k)) => table.get(k),
            (Some(toml::Value::Table(t)), Segment::Key(k)) => t.get(k),
            (Some(toml::Value::Array(items)), Segment::Index(i)) => items.get(*i),
            _ => None,
        };
        if current.is_none() {
            return false;
        }
    }
    matches!(current, Some(toml::Value::String(s)) if is_placeholder(s))
}

/// Fails, listing every placeholder (key and line), when the case text still holds any after
/// the `--set` overrides are applied; an override may fill a placeholder.
pub fn reject(path: &Path, text: &str, overrides: &[String]) -> Result<()> {
    let mut left = find(text);
    if left.is_empty() {
        return Ok(());
    }
    if !overrides.is_empty() {
        let mut table: toml::Table = toml::from_str(text).map_err(|e| Error::Case {
            file: path.to_path_buf(),
            message: crate::error::toml_error(&e, text),
        })?;
        for assignment in overrides {
            crate::case::apply_override(&mut table, assignment)?;
        }
        left.retain(|p| still_placeholder(&table, &p.path));
        if left.is_empty() {
            return Ok(());
        }
    }
    Err(Error::Placeholders {
        file: path.to_path_buf(),
        items: left
            .iter()
            .map(|p| format!("line {}: {} = \"{}\"", p.line, p.key, p.text))
            .collect(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const CASE: &str = r#"[case]
title = "t"
valuation_date = "<FILL IN: valuation date, YYYY-MM-DD>"

[market]
risk_free_rate = "<FILL IN: risk-free rate>"
equity_risk_premium = 0.05

[[peer]]
name = "Alder"
equity_value = "<FILL IN: market value of equity>"

[[peer]]
name = "Birch"
equity_value = 10.0
debt = "<fill in: debt>"
"#;

    #[test]
    fn every_placeholder_is_found_with_its_key_and_line() {
        let found: Vec<(String, usize)> = find(CASE).into_iter().map(|p| (p.key, p.line)).collect();
        assert_eq!(
            found,
            vec![
                ("case.valuation_date".to_string(), 3),
                ("market.risk_free_rate".to_string(), 6),
                ("peer.0 (\"Alder\").equity_value".to_string(), 11),
                ("peer.1 (\"Birch\").debt".to_string(), 16),
            ]
        );
    }

    #[test]
    fn the_message_lists_every_placeholder_and_overrides_can_fill_them() {
        let path = Path::new("case.toml");
        let message = reject(path, CASE, &[]).unwrap_err().to_string();
        assert!(
            message.contains("4 placeholders are still to fill in"),
            "{message}"
        );
        assert!(
            message.contains("line 16: peer.1 (\"Birch\").debt"),
            "{message}"
        );
        let fills = [
            "case.valuation_date=2026-09-30",
            "market.risk_free_rate=0.03",
            "peer.Alder.equity_value=5",
        ]
        .map(String::from);
        let message = reject(path, CASE, &fills).unwrap_err().to_string();
        assert!(
            message.starts_with("case.toml: 1 placeholder is"),
            "{message}"
        );
        let mut all = fills.to_vec();
        all.push("peer.1.debt=2".into());
        assert!(reject(path, CASE, &all).is_ok());
        assert!(reject(path, "x = 1", &[]).is_ok());
    }
}
