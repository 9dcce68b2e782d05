//! Reading a receipt's JSON strictly: an object that names one key twice is refused. JSON
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

#[cfg(test)]
mod tests {
    use super::*;

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
