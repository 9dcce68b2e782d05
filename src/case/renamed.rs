//! Case keys and option values renamed in schema 2, each refused with its new name.
//!
//! Without this a case written for schema 1 would fail on the parser's "unknown field", which
//! names the old key but not the new one. Here every renamed key or value is looked up before the
//! case is typed, and the message says what to write instead. README's Changelog lists the same
//! renames; keep the two in step.

/// A renamed key: `(section, old key, new key)`.
const KEYS: [(&str, &str, &str); 2] = [
    ("leverage", "cash_correction", "operations_beta"),
    ("premiums", "country_lambda", "country_exposure"),
];

/// A renamed option value: `(section, key, old value, new value)`.
const VALUES: [(&str, &str, &str, &str); 3] = [
    ("premiums", "country_method", "added", "flat"),
    ("premiums", "country_method", "lambda", "exposure"),
    ("premiums", "country_method", "beta", "beta-scaled"),
];

/// The first renamed key or value in a parsed case table, as a message naming the new one.
pub fn check(table: &toml::Table) -> std::result::Result<(), String> {
    let section = |name: &str| table.get(name).and_then(toml::Value::as_table);
    for (name, old, new) in KEYS {
        if let Some(value) = section(name).and_then(|s| s.get(old)) {
            return Err(format!(
                "{name}.{old} = {value} was renamed to {name}.{new} in hurdle's schema 2 (README, \
                 Changelog); write {name}.{new} = {value}"
            ));
        }
    }
    for (name, key, old, new) in VALUES {
        let written = section(name)
            .and_then(|s| s.get(key))
            .and_then(toml::Value::as_str);
        if written == Some(old) {
            return Err(format!(
                "{name}.{key} = \"{old}\" was renamed to \"{new}\" in hurdle's schema 2 (README, \
                 Changelog); write {name}.{key} = \"{new}\""
            ));
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn table(text: &str) -> toml::Table {
        toml::from_str(text).unwrap()
    }

    #[test]
    fn an_old_key_is_refused_with_its_new_name() {
        let message = check(&table("[leverage]\ncash_correction = true\n")).unwrap_err();
        assert!(
            message.contains("leverage.cash_correction = true was renamed to")
                && message.contains("leverage.operations_beta = true"),
            "{message}"
        );
        let message = check(&table("[premiums]\ncountry_lambda = 0.5\n")).unwrap_err();
        assert!(
            message.contains("premiums.country_exposure = 0.5"),
            "{message}"
        );
    }

    #[test]
    fn an_old_option_value_is_refused_with_its_new_name() {
        let message = check(&table("[premiums]\ncountry_method = \"lambda\"\n")).unwrap_err();
        assert!(message.contains("\"exposure\""), "{message}");
        let message = check(&table("[premiums]\ncountry_method = \"beta\"\n")).unwrap_err();
        assert!(message.contains("\"beta-scaled\""), "{message}");
    }

    #[test]
    fn current_names_pass() {
        let text = "[leverage]\noperations_beta = true\n[premiums]\ncountry_method = \
                    \"exposure\"\ncountry_exposure = 0.5\n";
        assert_eq!(check(&table(text)), Ok(()));
    }
}
