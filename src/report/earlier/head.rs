//! The members of an earlier receipt that [`super`] asks about, read without building the rest.
//!
//! A universe's receipt holds thousands of securities; reading it whole into a
//! `serde_json::Value`, four times in a run, was a serial 15–20 ms each at the end of the
//! benchmark universe's run. Here every other member is still read through serde_json's own
//! parser, and so checked exactly as a `Value` would be (its strings' UTF-8 and escapes, its
//! numbers' range, its nesting depth), but nothing of it is kept. A document the whole read
//! refuses is refused here too, a member given twice keeps its last value as a `Value` keeps
//! it, and a document that is no object answers as one without the members would: no receipt.
//! (Found by review: skipping the members unchecked took a receipt holding a lone surrogate or
//! 1e400 for hurdle's, whose whole read had refused it.)

use std::fmt;

use serde::de::{Deserialize, Deserializer, MapAccess, SeqAccess, Visitor};
use serde_json::{Map, Value};

/// The members kept.
const MEMBERS: [&str; 7] = ["tool", "kind", "case", "universe", "files", "wacc", "peers"];

/// The receipt's members named in [`MEMBERS`] as a JSON object (those it lacks absent), or
/// `None` when the bytes are no JSON object as `serde_json::from_slice::<Value>` reads them.
pub(super) fn receipt_head(bytes: &[u8]) -> Option<Value> {
    serde_json::from_slice::<Head>(bytes)
        .ok()
        .map(|head| head.0)
}

struct Head(Value);

impl<'de> Deserialize<'de> for Head {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        deserializer.deserialize_any(HeadVisitor).map(Head)
    }
}

struct HeadVisitor;

impl<'de> Visitor<'de> for HeadVisitor {
    type Value = Value;

    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("a JSON object")
    }

    fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<Value, A::Error> {
        let mut head = Map::new();
        while let Some(key) = map.next_key::<String>()? {
            if MEMBERS.contains(&key.as_str()) {
                head.insert(key, map.next_value::<Value>()?);
            } else {
                map.next_value::<Checked>()?;
            }
        }
        Ok(Value::Object(head))
    }
}

/// Any JSON value, read through the parser as a `Value` is (every string decoded, every
/// number converted, every level counted), then dropped.
struct Checked;

impl<'de> Deserialize<'de> for Checked {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        deserializer
            .deserialize_any(CheckedVisitor)
            .map(|()| Checked)
    }
}

struct CheckedVisitor;

impl<'de> Visitor<'de> for CheckedVisitor {
    type Value = ();

    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("any JSON value")
    }

    fn visit_bool<E>(self, _: bool) -> Result<(), E> {
        Ok(())
    }

    fn visit_i64<E>(self, _: i64) -> Result<(), E> {
        Ok(())
    }

    fn visit_u64<E>(self, _: u64) -> Result<(), E> {
        Ok(())
    }

    fn visit_f64<E>(self, _: f64) -> Result<(), E> {
        Ok(())
    }

    fn visit_str<E>(self, _: &str) -> Result<(), E> {
        Ok(())
    }

    fn visit_unit<E>(self) -> Result<(), E> {
        Ok(())
    }

    fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<(), A::Error> {
        while seq.next_element::<Checked>()?.is_some() {}
        Ok(())
    }

    fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<(), A::Error> {
        while map.next_key::<Checked>()?.is_some() {
            map.next_value::<Checked>()?;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // serde_json's own `Value` as the reference: a document is read here exactly when it reads
    // as a JSON object, and the members kept are the object's (the last of a repeated one).
    #[test]
    fn the_head_reads_as_the_whole_document_does() {
        let deep = format!("{}1{}", "[".repeat(200), "]".repeat(200));
        let documents: Vec<Vec<u8>> = [
            r#"{"tool":{"name":"hurdle"},"kind":"universe","securities":[{"a":1}]}"#.to_string(),
            r#"{"tool":{"name":"hurdle"},"zz":"\ud800"}"#.to_string(),
            r#"{"tool":{"name":"hurdle"},"zz":1e400}"#.to_string(),
            format!(r#"{{"tool":{{"name":"hurdle"}},"zz":{deep}}}"#),
            r#"[{"name":"hurdle","version":"0.18.0"},"universe"]"#.to_string(),
            r#"{"tool":{"name":"other"},"tool":{"name":"hurdle"},"wacc":0.07}"#.to_string(),
            r#"{"counts":1,"counts":2,"wacc":0.07,"peers":[{"name":"A"}]}"#.to_string(),
            r#"{"tool":{"name":"hurdle"},"zz":[1,2,{"x":null,"y":true}]}  "#.to_string(),
            r#"{"tool":{"name":"hurdle"}} trailing"#.to_string(),
            r#"{"tool":{"name":"hurdle"},"zz":"\u00e9\n"}"#.to_string(),
            r#"null"#.to_string(),
            r#"{"tool":{"name":"hurdle"},"zz":-12345678901234567890123}"#.to_string(),
        ]
        .into_iter()
        .map(String::into_bytes)
        .chain([b"{\"tool\":{\"name\":\"hurdle\"},\"zz\":\"\xff\xfe\"}".to_vec()])
        .collect();
        for document in &documents {
            let whole = serde_json::from_slice::<Value>(document).ok();
            let expected = whole.filter(Value::is_object).map(|whole| {
                let kept = MEMBERS
                    .iter()
                    .filter_map(|&m| Some((m.to_string(), whole.get(m)?.clone())));
                Value::Object(kept.collect())
            });
            let text = String::from_utf8_lossy(document);
            assert_eq!(receipt_head(document), expected, "{text}");
        }
    }
}
