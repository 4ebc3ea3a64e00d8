//! `--set path=value` overrides, applied to the TOML tree before it is read.

use super::CaseError;

/// Splits a `--set` argument `path=value` into its two parts.
///
/// The path is dotted (`section.width`); the value is everything after the
/// first `=` and is later read as a TOML value, falling back to a string.
pub fn parse_set_argument(arg: &str) -> Result<(String, String), CaseError> {
    match arg.split_once('=') {
        Some((path, value)) if !path.trim().is_empty() => {
            Ok((path.trim().to_string(), value.trim().to_string()))
        }
        _ => Err(CaseError::new(
            arg,
            "a --set override needs the form path=value",
            "write e.g. --set section.width=2.5 or --set search.near_frequency=\"6.2 GHz\"",
        )),
    }
}

/// Reads an override value as a TOML value (number, bool, array, inline
/// table, quoted string); anything else is taken as a plain string, so
/// `--set body.kind=ring` and `--set search.near_frequency=6.2 GHz` work.
pub(crate) fn parse_value(text: &str) -> toml::Value {
    let wrapped = format!("value = {text}");
    match wrapped.parse::<toml::Table>() {
        Ok(mut t) => t
            .remove("value")
            .unwrap_or_else(|| toml::Value::String(text.to_string())),
        Err(_) => toml::Value::String(text.to_string()),
    }
}

/// Sets `path` (dotted) to `value` in `tree`, creating tables on the way.
pub(crate) fn apply(tree: &mut toml::Table, path: &str, value: &str) -> Result<(), CaseError> {
    let parts: Vec<&str> = path.split('.').map(str::trim).collect();
    if parts.iter().any(|p| p.is_empty()) {
        return Err(CaseError::new(
            path,
            "an override path has an empty part",
            "write the dotted key without spaces or doubled dots, e.g. section.width",
        ));
    }
    let (last, tables) = parts
        .split_last()
        .expect("split of a string is never empty");
    let mut node = tree;
    for (depth, part) in tables.iter().enumerate() {
        let entry = node
            .entry(part.to_string())
            .or_insert_with(|| toml::Value::Table(toml::Table::new()));
        node = match entry {
            toml::Value::Table(t) => t,
            _ => {
                let key = parts[..=depth].join(".");
                return Err(CaseError::new(
                    key.clone(),
                    format!(
                        "the override {path} goes through {key}, which is a value, not a table"
                    ),
                    format!("set {key} itself, or check the spelling of the path"),
                ));
            }
        };
    }
    node.insert(last.to_string(), parse_value(value));
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn values_parse_as_toml_or_string() {
        assert_eq!(parse_value("2.5"), toml::Value::Float(2.5));
        assert_eq!(parse_value("3"), toml::Value::Integer(3));
        assert_eq!(parse_value("true"), toml::Value::Boolean(true));
        assert_eq!(parse_value("ring"), toml::Value::String("ring".into()));
        assert_eq!(
            parse_value("6.2 GHz"),
            toml::Value::String("6.2 GHz".into())
        );
        assert_eq!(
            parse_value("\"6.2 GHz\""),
            toml::Value::String("6.2 GHz".into())
        );
        assert_eq!(
            parse_value("[1, 2]"),
            toml::Value::Array(vec![toml::Value::Integer(1), toml::Value::Integer(2)])
        );
    }

    #[test]
    fn set_argument_splits_at_first_equals() {
        assert_eq!(
            parse_set_argument("a.b=x=y").unwrap(),
            ("a.b".to_string(), "x=y".to_string())
        );
        assert!(parse_set_argument("=3").is_err());
        assert!(parse_set_argument("nothing").is_err());
    }

    #[test]
    fn apply_creates_tables_and_refuses_values_as_tables() {
        let mut t = toml::Table::new();
        apply(&mut t, "materials.glass.epsilon", "2.25").unwrap();
        assert_eq!(t["materials"]["glass"]["epsilon"], toml::Value::Float(2.25));
        apply(&mut t, "body.kind", "ring").unwrap();
        let e = apply(&mut t, "body.kind.x", "1").unwrap_err();
        assert_eq!(e.key, "body.kind");
        assert!(apply(&mut t, "a..b", "1").is_err());
    }
}
