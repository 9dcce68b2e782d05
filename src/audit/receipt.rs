//! Reading a receipt's JSON strictly (and naming a file given instead that is plainly a case,
//! a Markdown file or a table): an object that names one key twice is refused. JSON
//! readers disagree on such an object (serde_json keeps the last value, a person reading the
//! file sees the first), so a receipt edited that way could verify while showing another
//! figure. Numbers are read exactly as `serde_json::Value` reads them (the same visitor calls).

use serde::de::{Deserialize, Deserializer, Error as _, MapAccess, SeqAccess, Visitor};
use serde_json::{Map, Value};

/// A JSON value whose objects have no repeated key.
struct Strict(Value);

impl<'de> Deserialize<'de> for Strict {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        deserializer.deserialize_any(StrictVisitor).map(Strict)
    }
}

struct StrictVisitor;

impl<'de> Visitor<'de> for StrictVisitor {
    type Value = Value;

    fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
        f.write_str("a JSON value")
    }

    fn visit_bool<E>(self, v: bool) -> Result<Value, E> {
        Ok(Value::Bool(v))
    }

    fn visit_i64<E>(self, v: i64) -> Result<Value, E> {
        Ok(Value::from(v))
    }

    fn visit_u64<E>(self, v: u64) -> Result<Value, E> {
        Ok(Value::from(v))
    }

    fn visit_f64<E>(self, v: f64) -> Result<Value, E> {
        Ok(serde_json::Number::from_f64(v).map_or(Value::Null, Value::Number))
    }

    fn visit_str<E>(self, v: &str) -> Result<Value, E> {
        Ok(Value::String(v.to_string()))
    }

    fn visit_string<E>(self, v: String) -> Result<Value, E> {
        Ok(Value::String(v))
    }

    fn visit_unit<E>(self) -> Result<Value, E> {
        Ok(Value::Null)
    }

    fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<Value, A::Error> {
        let mut items = Vec::new();
        while let Some(Strict(item)) = seq.next_element()? {
            items.push(item);
        }
        Ok(Value::Array(items))
    }

    fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<Value, A::Error> {
        let mut object = Map::new();
        while let Some(key) = map.next_key::<String>()? {
            let Strict(value) = map.next_value()?;
            if object.contains_key(&key) {
                return Err(A::Error::custom(format!(
                    "the key \"{key}\" appears twice in one object"
                )));
            }
            object.insert(key, value);
        }
        Ok(Value::Object(object))
    }
}

/// Parses `text` as JSON, refusing an object with a repeated key.
pub fn parse(text: &str) -> serde_json::Result<Value> {
    serde_json::from_str::<Strict>(text).map(|strict| strict.0)
}

/// A file given as a receipt that is plainly something else: a case file or a claimed build-up
/// (TOML tables and keys), or a CSV table (commas on its first line); named as such, with what
/// to give instead.
pub(crate) fn not_a_receipt(text: &str) -> std::result::Result<(), String> {
    let first = (text.lines().map(str::trim))
        .find(|l| !l.is_empty() && !l.starts_with('#'))
        .unwrap_or("");
    // JSON of any shape is left to the receipt's own checks ("has no schema_version").
    if first.starts_with('{') || first.is_empty() || serde_json::from_str::<Value>(text).is_ok() {
        return Ok(());
    }
    // TOML by its parser, Markdown by a heading or a table row opening it (found by review: a
    // summary.md holding " = " was called TOML).
    // A TOML table header (`[case]`, `[[peer]]`) marks a case even when the file opens with a
    // `# ` comment, as the demo's does, and does not parse (found by review).
    let table_header = text.lines().any(is_table_header);
    let opening = text.trim_start();
    if opening.starts_with("<!DOCTYPE") || opening.starts_with("<html") {
        return Err(format!(
            "an HTML page (report.html?), not a receipt: {GIVE_INSTEAD}"
        ));
    }
    let markdown = !table_header && (opening.starts_with("# ") || opening.starts_with('|'));
    let looks_like_toml = table_header || text.lines().any(|l| l.contains(" = "));
    let toml = toml::from_str::<toml::Table>(text).is_ok() || (looks_like_toml && !markdown);
    let what = match (toml, markdown, first.contains(',')) {
        (true, _, _) => "a TOML file (a case, universe or claimed build-up file?)",
        (false, true, _) => "a Markdown file (memo.md, summary.md or verification.md?)",
        (false, false, true) => "a CSV table, not JSON",
        // Anything else is left to the JSON parser, whose message gives the line.
        (false, false, false) => return Ok(()),
    };
    Err(format!("{what}, not a receipt: {GIVE_INSTEAD}"))
}

/// What to give `verify` instead of a file that is no receipt.
const GIVE_INSTEAD: &str = "verify reads the result.json that `hurdle run` or `hurdle universe` \
wrote (output/result.json beside the case), and finds the case from it";

/// Whether a line is a TOML table header: `[name]` or `[[name]]`, its name of letters, digits,
/// `_`, `-`, `.`, spaces and quoted keys, then nothing or a comment (`[ case ]`,
/// `[sources."wide prices"]`, `[beta]   # as in a case`; found by review).
fn is_table_header(line: &str) -> bool {
    let line = line.trim();
    let Some(close) = line.rfind(']') else {
        return false;
    };
    let after = line[close + 1..].trim_start();
    let name = line[..=close]
        .trim_start_matches('[')
        .trim_end_matches(']')
        .trim();
    line.starts_with('[')
        && (after.is_empty() || after.starts_with('#'))
        && !name.is_empty()
        && (name.chars()).all(|c| c.is_ascii_alphanumeric() || "_.-\" '".contains(c))
}

#[cfg(test)]
mod tests {
    use super::*;

    // Found by review: a universe's summary.md, whose settings line holds " = ", was called a
    // TOML file. A case (TOML), a summary (Markdown) and a table (CSV) are each named.
    #[test]
    fn a_file_given_instead_of_a_receipt_is_named_by_its_kind() {
        let case = "[case]\ntitle = \"A\"\n";
        assert!(not_a_receipt(case).unwrap_err().starts_with("a TOML file"));
        let broken_case = "[case]\ntitle = \n";
        assert!(not_a_receipt(broken_case)
            .unwrap_err()
            .starts_with("a TOML file"));
        for commented in [
            "# A case\n[case]\ntitle = \"x\n",
            "# A case\n[case]  # the case\ntitle = \"x\n",
            "# A case\n[ case ]\ntitle = \"x\n",
            "# A case\n[[ peer ]]\nname = \"x\n",
            "# A case\n[sources.\"wide prices\"]\nfile = \"x\n",
        ] {
            assert!(
                not_a_receipt(commented)
                    .unwrap_err()
                    .starts_with("a TOML file"),
                "{commented}"
            );
        }
        let page = "<!DOCTYPE html>\n<html lang=\"en\"><p>a = b</p></html>\n";
        assert!(not_a_receipt(page).unwrap_err().starts_with("an HTML page"));
        // A memo's table row of an interval is no header.
        assert!(!is_table_header("[1.364, 1.562]"));
        let summary = "# Industry betas\n\nReturn window with beta.lookback = 1y.\n";
        assert!(not_a_receipt(summary)
            .unwrap_err()
            .starts_with("a Markdown file"));
        let table = "peer,beta\nA,1.0\n";
        assert!(not_a_receipt(table).unwrap_err().starts_with("a CSV table"));
    }

    // The same value serde_json's own reader gives (RFC 8259 text, worked by hand), and a
    // repeated key refused with its name.
    #[test]
    fn reads_as_serde_json_does_and_refuses_a_repeated_key() {
        let text =
            r#"{"a": [1, -2, 0.1, 1e-300, "x", null, true], "b": {"c": 18446744073709551615}}"#;
        assert_eq!(
            parse(text).unwrap(),
            serde_json::from_str::<Value>(text).unwrap()
        );
        let repeated = parse(r#"{"wacc": 0.5, "wacc": 0.0738}"#)
            .unwrap_err()
            .to_string();
        assert!(repeated.contains("\"wacc\" appears twice"), "{repeated}");
        assert!(parse(r#"{"a": {"b": 1, "b": 2}}"#).is_err());
    }
}
