//! Strict JSON reading and field checks shared by every JSON input (answers, reviewer
//! decisions, principals).
//!
//! `serde_json::Value` silently keeps the last of two equal keys, so `{"id": "a", "id": "b"}`
//! would be read as answer `b` with no warning. An input that says two things about one
//! field is ambiguous, and a checker must not pick one quietly, so every input goes through
//! [`parse_strict`], which rejects duplicate keys. The `Fields` helper turns a JSON object
//! into typed values and produces messages of one shape, `path: expected …, found …`, so
//! that a user can find the offending field in a long line.

use std::fmt;

use serde::Deserialize;
use serde::de::{self, Deserializer, MapAccess, SeqAccess, Visitor};
use serde_json::{Map, Number, Value};

/// Parses one JSON text, rejecting objects that repeat a key.
pub(crate) fn parse_strict(text: &str) -> Result<Value, serde_json::Error> {
    serde_json::from_str::<Strict>(text).map(|s| s.0)
}

/// A `Value` whose objects were checked for repeated keys while being read.
struct Strict(Value);

impl<'de> Deserialize<'de> for Strict {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        deserializer.deserialize_any(StrictVisitor).map(Strict)
    }
}

struct StrictVisitor;

impl<'de> Visitor<'de> for StrictVisitor {
    type Value = Value;

    fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str("any JSON value")
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
        // JSON text cannot spell NaN or infinity, so `from_f64` only fails on input that
        // serde_json would not have produced; null is a harmless stand-in.
        Ok(Number::from_f64(v).map_or(Value::Null, Value::Number))
    }

    fn visit_str<E>(self, v: &str) -> Result<Value, E> {
        Ok(Value::String(v.to_owned()))
    }

    fn visit_string<E>(self, v: String) -> Result<Value, E> {
        Ok(Value::String(v))
    }

    fn visit_unit<E>(self) -> Result<Value, E> {
        Ok(Value::Null)
    }

    fn visit_none<E>(self) -> Result<Value, E> {
        Ok(Value::Null)
    }

    fn visit_some<D: Deserializer<'de>>(self, deserializer: D) -> Result<Value, D::Error> {
        Strict::deserialize(deserializer).map(|s| s.0)
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
            if object.contains_key(&key) {
                return Err(de::Error::custom(format_args!("duplicate key {}", quote(&key))));
            }
            let Strict(value) = map.next_value()?;
            object.insert(key, value);
        }
        Ok(Value::Object(object))
    }
}

/// Splits a serde_json error into its message and the 1-based column it points at.
///
/// serde_json appends ` at line L column C` to its messages; every JSON Lines record is
/// one line, so the line part would only mislead, and the column is reported on its own.
/// The column counts bytes of the line (after a byte order mark, if any, was removed).
pub(crate) fn syntax_message(e: &serde_json::Error) -> (String, usize) {
    let full = e.to_string();
    let message = match full.rsplit_once(" at line ") {
        Some((head, _)) if e.line() != 0 => head,
        _ => full.as_str(),
    };
    // serde_json says "expected ident" when a bare word is not `true`, `false` or `null`;
    // that is its parser's vocabulary, not the user's.
    let message = if message == "expected ident" { "expected value" } else { message };
    (message.to_owned(), e.column())
}

/// Describes a JSON value for a "found …" clause: scalars verbatim (strings quoted and
/// shortened), containers by kind, since printing a whole nested object would drown the
/// message.
pub(crate) fn found(value: &Value) -> String {
    match value {
        Value::Null => "null".to_owned(),
        Value::Bool(b) => b.to_string(),
        Value::Number(n) => n.to_string(),
        Value::String(s) => quote(s),
        Value::Array(_) => "an array".to_owned(),
        Value::Object(_) => "an object".to_owned(),
    }
}

/// Longest text, in characters, that a message quotes from the input.
const QUOTE_CHARS: usize = 40;

/// Quotes a string as JSON would, cut to [`QUOTE_CHARS`] characters with an ellipsis.
pub(crate) fn quote(s: &str) -> String {
    let mut chars = s.char_indices();
    match chars.nth(QUOTE_CHARS) {
        Some((cut, _)) => format!("{}…", json_string(&s[..cut])),
        None => json_string(s),
    }
}

fn json_string(s: &str) -> String {
    // Serialising a &str cannot fail; the fallback only keeps this total.
    serde_json::to_string(s).unwrap_or_else(|_| format!("\"{s}\""))
}

/// A field that failed its check: where it is and what was wrong.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct FieldError {
    /// Path of the field from the record's root, e.g. `citations[1].start`; empty for the
    /// record itself.
    pub(crate) path: String,
    /// What was expected and what was found.
    pub(crate) message: String,
}

impl fmt::Display for FieldError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.path.is_empty() {
            f.write_str(&self.message)
        } else {
            write!(f, "{}: {}", self.path, self.message)
        }
    }
}

impl FieldError {
    pub(crate) fn new(path: impl Into<String>, message: impl Into<String>) -> Self {
        FieldError { path: path.into(), message: message.into() }
    }
}

/// Joins a parent path and a key: `citations[1]` + `start` → `citations[1].start`.
pub(crate) fn join(prefix: &str, key: &str) -> String {
    if prefix.is_empty() { key.to_owned() } else { format!("{prefix}.{key}") }
}

/// Typed access to the fields of one JSON object, each failure naming the field's path.
///
/// An optional field that is `null` counts as absent: many producers write `null` for
/// "no value", and treating it as an error would reject logs that mean nothing wrong.
pub(crate) struct Fields<'a> {
    object: &'a Map<String, Value>,
    prefix: String,
}

impl<'a> Fields<'a> {
    /// Checks that `value` is an object; `prefix` is its path (empty for the root).
    pub(crate) fn of(value: &'a Value, prefix: &str) -> Result<Self, FieldError> {
        match value {
            Value::Object(object) => Ok(Fields { object, prefix: prefix.to_owned() }),
            other => {
                Err(FieldError::new(prefix, format!("expected an object, found {}", found(other))))
            }
        }
    }

    pub(crate) fn path(&self, key: &str) -> String {
        join(&self.prefix, key)
    }

    /// The field's value unless it is missing or null.
    pub(crate) fn present(&self, key: &str) -> Option<&'a Value> {
        self.object.get(key).filter(|v| !v.is_null())
    }

    fn missing(&self, key: &str) -> FieldError {
        FieldError::new(self.path(key), "missing")
    }

    fn mismatch(&self, key: &str, expected: &str, value: &Value) -> FieldError {
        FieldError::new(self.path(key), format!("expected {expected}, found {}", found(value)))
    }

    /// A required string (may be empty).
    pub(crate) fn string(&self, key: &str) -> Result<String, FieldError> {
        match self.object.get(key) {
            None => Err(self.missing(key)),
            Some(Value::String(s)) => Ok(s.clone()),
            Some(other) => Err(self.mismatch(key, "a string", other)),
        }
    }

    /// A required identifier: a string that is not empty or only whitespace, and at most
    /// `max_bytes` long.
    pub(crate) fn id(&self, key: &str, max_bytes: usize) -> Result<String, FieldError> {
        match self.object.get(key) {
            None => Err(self.missing(key)),
            Some(value) => self.check_id(key, value, max_bytes),
        }
    }

    /// An optional identifier, as [`Fields::id`] when present.
    pub(crate) fn opt_id(&self, key: &str, max_bytes: usize) -> Result<Option<String>, FieldError> {
        self.present(key).map(|value| self.check_id(key, value, max_bytes)).transpose()
    }

    fn check_id(&self, key: &str, value: &Value, max_bytes: usize) -> Result<String, FieldError> {
        match value {
            Value::String(s) if s.trim().is_empty() => {
                Err(self.mismatch(key, "a non-empty string", value))
            }
            Value::String(s) => {
                check_id_len(&self.path(key), s, max_bytes)?;
                Ok(s.clone())
            }
            other => Err(self.mismatch(key, "a non-empty string", other)),
        }
    }

    /// An optional string (may be empty).
    pub(crate) fn opt_string(&self, key: &str) -> Result<Option<String>, FieldError> {
        match self.present(key) {
            None => Ok(None),
            Some(Value::String(s)) => Ok(Some(s.clone())),
            Some(other) => Err(self.mismatch(key, "a string", other)),
        }
    }

    /// An optional non-negative integer that fits in `u64`.
    pub(crate) fn opt_u64(&self, key: &str) -> Result<Option<u64>, FieldError> {
        match self.present(key) {
            None => Ok(None),
            Some(value) => match value.as_u64() {
                Some(n) => Ok(Some(n)),
                None => Err(self.mismatch(key, "a non-negative integer", value)),
            },
        }
    }

    /// An optional array of identifiers (`groups`).
    pub(crate) fn opt_id_array(
        &self,
        key: &str,
        max_bytes: usize,
    ) -> Result<Option<Vec<String>>, FieldError> {
        let Some(value) = self.present(key) else { return Ok(None) };
        let Value::Array(items) = value else {
            return Err(self.mismatch(key, "an array of strings", value));
        };
        let mut out = Vec::with_capacity(items.len());
        for (i, item) in items.iter().enumerate() {
            let path = format!("{}[{i}]", self.path(key));
            match item {
                Value::String(s) => {
                    check_id_len(&path, s, max_bytes)?;
                    out.push(s.clone());
                }
                other => {
                    return Err(FieldError::new(
                        path,
                        format!("expected a string, found {}", found(other)),
                    ));
                }
            }
        }
        Ok(Some(out))
    }

    /// An optional citation ref: a non-empty string, or an integer, which becomes its
    /// decimal spelling (`1` and `"1"` are the same ref, as a marker `[1]` cannot tell
    /// them apart).
    pub(crate) fn opt_ref(
        &self,
        key: &str,
        max_bytes: usize,
    ) -> Result<Option<String>, FieldError> {
        match self.present(key) {
            None => Ok(None),
            Some(Value::Number(n)) if n.is_i64() || n.is_u64() => Ok(Some(n.to_string())),
            Some(value @ Value::String(_)) => self.check_id(key, value, max_bytes).map(Some),
            Some(other) => Err(self.mismatch(key, "a non-empty string or an integer", other)),
        }
    }
}

fn check_id_len(path: &str, s: &str, max_bytes: usize) -> Result<(), FieldError> {
    if s.len() > max_bytes {
        Err(FieldError::new(
            path,
            format!(
                "{} bytes long, more than the limit of {max_bytes} (limits.max_id_bytes)",
                s.len()
            ),
        ))
    } else {
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn duplicate_keys_are_rejected_with_their_column() {
        let e = parse_strict(r#"{"id": "a", "id": "b"}"#).unwrap_err();
        let (message, column) = syntax_message(&e);
        assert_eq!(message, r#"duplicate key "id""#);
        assert!(column > 10, "column {column}");
    }

    #[test]
    fn nested_duplicate_keys_are_rejected() {
        assert!(parse_strict(r#"{"c": [{"doc": "x", "doc": "y"}]}"#).is_err());
        assert!(parse_strict(r#"{"c": [{"doc": "x"}, {"doc": "y"}]}"#).is_ok());
    }

    #[test]
    fn strict_parse_keeps_every_kind_of_value() {
        let text = r#"{"a": null, "b": true, "c": -3, "d": 18446744073709551615, "e": 1.5, "f": "s", "g": [1, {"h": []}]}"#;
        let strict = parse_strict(text).unwrap();
        let plain: Value = serde_json::from_str(text).unwrap();
        assert_eq!(strict, plain);
    }

    #[test]
    fn syntax_message_drops_the_line_part() {
        let e = parse_strict(r#"{"id": }"#).unwrap_err();
        let (message, column) = syntax_message(&e);
        assert_eq!(message, "expected value");
        assert_eq!(column, 8);
    }

    #[test]
    fn found_describes_values() {
        assert_eq!(found(&Value::Null), "null");
        assert_eq!(found(&serde_json::json!("12")), r#""12""#);
        assert_eq!(found(&serde_json::json!(1.5)), "1.5");
        assert_eq!(found(&serde_json::json!([1])), "an array");
        assert_eq!(found(&serde_json::json!({"a": 1})), "an object");
        let long = "é".repeat(100);
        let q = quote(&long);
        assert!(q.ends_with('…'));
        assert_eq!(q.chars().filter(|&c| c == 'é').count(), QUOTE_CHARS);
    }
}
