//! Field mapping: answer logs of another shape, read through JSON Pointers (RFC 6901).
//!
//! Assistants log their answers in their own shapes. The `[input]` table of the config
//! (or a file given with `--input-map`, holding the same table) says where each field of
//! the answers format lies in such a record, as a JSON Pointer; inside a citation, the
//! pointers of `[input.citation]` are relative to the citation object:
//!
//! ```toml
//! [input]
//! id        = "/request_id"
//! answer    = "/response/text"
//! citations = "/response/sources"
//! groups    = "/caller/groups"
//!
//! [input.citation]
//! doc   = "/source_id"
//! start = "/span/0"
//! end   = "/span/1"
//! ```
//!
//! A field that is not mapped is read from its own name (`/id`, `/answer`, `/citations`,
//! and `/ref`, `/doc`, … inside a citation), so a map names only what differs. The record
//! is rebuilt in the answers format and then read exactly as a record of that format is,
//! with the same checks. A required field (`id`, `answer`, `citations`, a citation's
//! `doc`) that its pointer does not find rejects the record, naming the pointer; an
//! optional one that is absent is absent. Every message about a mapped field names the
//! pointer it was read from, with the array index filled in (`citations[1].start (at
//! /response/sources/1/span/0): …`). Integers are accepted where the format has ids
//! (`id`, `user`, `doc`, `chunk`) and read as their decimal spelling, since many logs
//! number their records.

use serde::{Deserialize, Serialize};
use serde_json::{Map, Value};

use super::json::FieldError;

/// Pointers for the fields of an answer record.
#[derive(Debug, Clone, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct FieldMap {
    /// `id`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub id: Option<String>,
    /// `answer`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub answer: Option<String>,
    /// `citations` (an array).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub citations: Option<String>,
    /// `user`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub user: Option<String>,
    /// `groups`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub groups: Option<String>,
    /// `question`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub question: Option<String>,
    /// `approved_answer`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub approved_answer: Option<String>,
    /// Pointers inside each citation.
    #[serde(skip_serializing_if = "CitationMap::is_empty")]
    pub citation: CitationMap,
}

/// Pointers for the fields of a citation, relative to the citation object.
#[derive(Debug, Clone, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct CitationMap {
    /// `ref`.
    #[serde(rename = "ref", skip_serializing_if = "Option::is_none")]
    pub r#ref: Option<String>,
    /// `doc`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub doc: Option<String>,
    /// `start`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub start: Option<String>,
    /// `end`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub end: Option<String>,
    /// `chunk`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub chunk: Option<String>,
    /// `page`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub page: Option<String>,
    /// `quote`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub quote: Option<String>,
    /// `sha256`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sha256: Option<String>,
}

/// A pointer that is not a JSON Pointer.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct BadPointer {
    /// Dotted config key (`input.citation.start`).
    pub key: String,
    /// Why.
    pub message: String,
}

/// Top-level fields: name, whether required, whether an id (integers accepted).
const TOP: [(&str, bool, bool); 7] = [
    ("id", true, true),
    ("answer", true, false),
    ("citations", true, false),
    ("user", false, true),
    ("groups", false, false),
    ("question", false, false),
    ("approved_answer", false, false),
];

/// Citation fields: name, whether required, whether an id.
const CITATION: [(&str, bool, bool); 8] = [
    ("ref", false, false),
    ("doc", true, true),
    ("start", false, false),
    ("end", false, false),
    ("chunk", false, true),
    ("page", false, false),
    ("quote", false, false),
    ("sha256", false, false),
];

impl CitationMap {
    /// Whether nothing is mapped.
    pub fn is_empty(&self) -> bool {
        *self == CitationMap::default()
    }

    fn get(&self, name: &str) -> Option<&str> {
        match name {
            "ref" => self.r#ref.as_deref(),
            "doc" => self.doc.as_deref(),
            "start" => self.start.as_deref(),
            "end" => self.end.as_deref(),
            "chunk" => self.chunk.as_deref(),
            "page" => self.page.as_deref(),
            "quote" => self.quote.as_deref(),
            "sha256" => self.sha256.as_deref(),
            _ => None,
        }
    }

    /// Fills the fields this map leaves unset from `other`.
    fn or(self, other: CitationMap) -> CitationMap {
        CitationMap {
            r#ref: self.r#ref.or(other.r#ref),
            doc: self.doc.or(other.doc),
            start: self.start.or(other.start),
            end: self.end.or(other.end),
            chunk: self.chunk.or(other.chunk),
            page: self.page.or(other.page),
            quote: self.quote.or(other.quote),
            sha256: self.sha256.or(other.sha256),
        }
    }
}

impl FieldMap {
    /// Whether nothing is mapped (records are read in the answers format as they are).
    pub fn is_empty(&self) -> bool {
        *self == FieldMap::default()
    }

    fn get(&self, name: &str) -> Option<&str> {
        match name {
            "id" => self.id.as_deref(),
            "answer" => self.answer.as_deref(),
            "citations" => self.citations.as_deref(),
            "user" => self.user.as_deref(),
            "groups" => self.groups.as_deref(),
            "question" => self.question.as_deref(),
            "approved_answer" => self.approved_answer.as_deref(),
            _ => None,
        }
    }

    /// This map, with the fields it leaves unset taken from `base` (an `--input-map` file
    /// over the config's `[input]`, key by key).
    pub fn over(self, base: FieldMap) -> FieldMap {
        FieldMap {
            id: self.id.or(base.id),
            answer: self.answer.or(base.answer),
            citations: self.citations.or(base.citations),
            user: self.user.or(base.user),
            groups: self.groups.or(base.groups),
            question: self.question.or(base.question),
            approved_answer: self.approved_answer.or(base.approved_answer),
            citation: self.citation.or(base.citation),
        }
    }

    /// Checks that every pointer is a JSON Pointer to a member (RFC 6901 section 3: empty,
    /// or `/`-separated reference tokens in which `~` is only ever followed by `0` or
    /// `1`); the empty pointer, the whole record, is refused, since no field is the whole
    /// record.
    pub fn validate(&self) -> Result<(), BadPointer> {
        let check = |key: String, p: &str| -> Result<(), BadPointer> {
            let bad = |message: &str| Err(BadPointer { key: key.clone(), message: message.into() });
            if !p.starts_with('/') {
                return bad(
                    "must be a JSON Pointer starting with '/' (RFC 6901), e.g. \"/response/text\"",
                );
            }
            let b = p.as_bytes();
            for (i, c) in b.iter().enumerate() {
                if *c == b'~' && !matches!(b.get(i + 1), Some(b'0' | b'1')) {
                    return bad(
                        "has '~' not followed by 0 or 1 (RFC 6901 escapes '~' as ~0 and '/' as ~1)",
                    );
                }
            }
            Ok(())
        };
        for (name, _, _) in TOP {
            if let Some(p) = self.get(name) {
                check(format!("input.{name}"), p)?;
            }
        }
        for (name, _, _) in CITATION {
            if let Some(p) = self.citation.get(name) {
                check(format!("input.citation.{name}"), p)?;
            }
        }
        Ok(())
    }

    fn pointer(&self, name: &str) -> String {
        self.get(name).map_or_else(|| format!("/{name}"), str::to_owned)
    }

    fn citation_pointer(&self, name: &str) -> String {
        self.citation.get(name).map_or_else(|| format!("/{name}"), str::to_owned)
    }

    /// Rebuilds `record` in the answers format (see the module documentation).
    pub(crate) fn apply(&self, record: &Value) -> Result<Value, FieldError> {
        if !record.is_object() {
            return Err(FieldError::new(
                "",
                format!("expected an object, found {}", super::found(record)),
            ));
        }
        let mut out = Map::new();
        for (name, required, id) in TOP {
            let ptr = self.pointer(name);
            match record.pointer(&ptr).filter(|v| !v.is_null()) {
                None if required => {
                    return Err(FieldError::new(name, format!("missing: nothing at {ptr}")));
                }
                None => {}
                Some(v) if name == "citations" => {
                    let Value::Array(items) = v else {
                        return Err(FieldError::new(
                            format!("citations (at {ptr})"),
                            format!("expected an array, found {}", super::found(v)),
                        ));
                    };
                    let mut list = Vec::with_capacity(items.len());
                    for (i, item) in items.iter().enumerate() {
                        list.push(self.citation(item, i, &ptr)?);
                    }
                    out.insert(name.into(), Value::Array(list));
                }
                Some(v) => {
                    out.insert(name.into(), if id { id_value(v) } else { v.clone() });
                }
            }
        }
        Ok(Value::Object(out))
    }

    fn citation(&self, item: &Value, i: usize, list_ptr: &str) -> Result<Value, FieldError> {
        if !item.is_object() {
            return Err(FieldError::new(
                format!("citations[{i}] (at {list_ptr}/{i})"),
                format!("expected an object, found {}", super::found(item)),
            ));
        }
        let mut out = Map::new();
        for (name, required, id) in CITATION {
            let ptr = self.citation_pointer(name);
            match item.pointer(&ptr).filter(|v| !v.is_null()) {
                None if required => {
                    return Err(FieldError::new(
                        format!("citations[{i}].{name}"),
                        format!("missing: nothing at {list_ptr}/{i}{ptr}"),
                    ));
                }
                None => {}
                Some(v) => {
                    out.insert(name.into(), if id { id_value(v) } else { v.clone() });
                }
            }
        }
        Ok(Value::Object(out))
    }

    /// Names the source of a field path of the answers format (`citations[2].start`) by
    /// its pointer in the record: `citations[2].start (at /response/sources/2/span/0)`.
    pub fn describe(&self, path: &str) -> String {
        if path.is_empty() {
            return path.to_owned();
        }
        if let Some(rest) = path.strip_prefix("citations[") {
            let list = self.pointer("citations");
            let Some((index, tail)) = rest.split_once(']') else { return path.to_owned() };
            let tail = tail.strip_prefix('.').unwrap_or(tail);
            if tail.is_empty() {
                return format!("{path} (at {list}/{index})");
            }
            let field = tail.split(['.', '[']).next().unwrap_or(tail);
            let extra = &tail[field.len()..];
            return format!(
                "{path} (at {list}/{index}{}{})",
                self.citation_pointer(field),
                pointer_tail(extra)
            );
        }
        let field = path.split(['.', '[']).next().unwrap_or(path);
        let extra = &path[field.len()..];
        format!("{path} (at {}{})", self.pointer(field), pointer_tail(extra))
    }
}

/// `[3]` → `/3`, `.x` → `/x`: the rest of a field path as pointer tokens.
fn pointer_tail(extra: &str) -> String {
    extra.replace('[', "/").replace(']', "").replace('.', "/")
}

/// Integers where an id is expected become their decimal spelling.
fn id_value(v: &Value) -> Value {
    match v {
        Value::Number(n) if n.is_i64() || n.is_u64() => Value::String(n.to_string()),
        other => other.clone(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    fn map() -> FieldMap {
        toml::from_str(
            r#"
            id = "/request_id"
            answer = "/response/text"
            citations = "/response/sources"
            [citation]
            doc = "/source_id"
            start = "/span/0"
            end = "/span/1"
            "#,
        )
        .unwrap()
    }

    #[test]
    fn rebuilds_a_record_in_the_answers_format() {
        let rec = json!({"request_id": 42, "response": {"text": "Hi [1].", "sources": [
            {"source_id": "a.md", "span": [0, 10]}, {"source_id": 7}
        ]}, "answer": "ignored"});
        let v = map().apply(&rec).unwrap();
        assert_eq!(
            v,
            json!({"id": "42", "answer": "Hi [1].", "citations": [
                {"doc": "a.md", "start": 0, "end": 10}, {"doc": "7"}
            ]})
        );
    }

    #[test]
    fn a_missing_required_field_names_its_pointer() {
        let e = map().apply(&json!({"request_id": "x", "response": {"sources": []}})).unwrap_err();
        assert_eq!(e.to_string(), "answer: missing: nothing at /response/text");
        let e = map()
            .apply(&json!({"request_id": "x", "response": {"text": "t", "sources": [{"span": [1, 2]}]}}))
            .unwrap_err();
        assert_eq!(
            e.to_string(),
            "citations[0].doc: missing: nothing at /response/sources/0/source_id"
        );
    }

    #[test]
    fn describe_translates_paths_to_pointers() {
        let m = map();
        assert_eq!(
            m.describe("citations[2].start"),
            "citations[2].start (at /response/sources/2/span/0)"
        );
        assert_eq!(m.describe("groups[1]"), "groups[1] (at /groups/1)");
        assert_eq!(m.describe("answer"), "answer (at /response/text)");
    }

    #[test]
    fn pointers_are_checked_against_rfc_6901() {
        let mut m = map();
        assert!(m.validate().is_ok());
        m.citation.quote = Some("quote".into());
        assert_eq!(m.validate().unwrap_err().key, "input.citation.quote");
        m.citation.quote = Some("/a~2b".into());
        assert!(m.validate().is_err());
        // RFC 6901, section 5: "/a~1b" names the member "a/b", "/m~0n" the member "m~n".
        m.citation.quote = Some("/a~1b".into());
        assert!(m.validate().is_ok());
        let rec = json!({"a/b": 1, "m~n": 8});
        assert_eq!(rec.pointer("/a~1b"), Some(&json!(1)));
        assert_eq!(rec.pointer("/m~0n"), Some(&json!(8)));
    }

    #[test]
    fn a_file_map_overrides_the_config_key_by_key() {
        let file = FieldMap { answer: Some("/out".into()), ..FieldMap::default() };
        let merged = file.over(map());
        assert_eq!(merged.answer.as_deref(), Some("/out"));
        assert_eq!(merged.id.as_deref(), Some("/request_id"));
        assert_eq!(merged.citation.doc.as_deref(), Some("/source_id"));
    }
}
