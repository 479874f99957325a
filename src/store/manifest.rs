//! `manifest.json`: ids, titles, access groups and chunks for the documents of a store.
//!
//! ```json
//! {"default_access": ["all-staff"],
//!  "documents": [{"id": "hr/leave-policy", "path": "hr/leave-policy.md", "title": "Leave policy",
//!                 "access": ["hr"], "chunks": [{"id": "c1", "start": 0, "end": 812}]}]}
//! ```
//!
//! A manifest that is not JSON, or whose top level is not an object, cannot be used at all
//! and is an error naming the file, line and column. Everything else is checked entry by
//! entry: a bad entry (no `path`, a path or id that could lead outside the store, a
//! duplicate id, a chunk whose start is after its end, a field of the wrong type) is
//! reported as an [`EntryProblem`] and skipped, and the other entries still apply. Unknown
//! fields are ignored.

use std::io::Read;
use std::os::unix::fs::OpenOptionsExt;
use std::path::{Path, PathBuf};

use serde_json::Value;

use super::confine;

/// A manifest that cannot be used at all.
#[derive(Debug, thiserror::Error)]
#[error("{}:{line}:{column}: {message}", path.display())]
pub struct ManifestError {
    /// The manifest file.
    pub path: PathBuf,
    /// Line of the error (1-based; 0 when unknown).
    pub line: usize,
    /// Column of the error (1-based; 0 when unknown).
    pub column: usize,
    /// What is wrong.
    pub message: String,
}

/// A chunk as the manifest gives it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ChunkSpec {
    /// Chunk id.
    pub id: String,
    /// Start byte.
    pub start: usize,
    /// End byte (exclusive).
    pub end: usize,
}

/// One valid entry.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Entry {
    /// Position in `documents` (0-based).
    pub index: usize,
    /// The id, when it differs from the path.
    pub id: Option<String>,
    /// The path, canonical (`./a//b.md` is `a/b.md`).
    pub path: String,
    /// Title.
    pub title: Option<String>,
    /// Access groups.
    pub access: Option<Vec<String>>,
    /// Chunks.
    pub chunks: Vec<ChunkSpec>,
}

/// A skipped entry.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct EntryProblem {
    /// Position in `documents` (0-based).
    pub entry: usize,
    /// The field at fault.
    pub field: Option<String>,
    /// What is wrong.
    pub message: String,
}

/// The parsed manifest.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct Manifest {
    /// Groups for documents without their own `access`.
    pub default_access: Option<Vec<String>>,
    /// Valid entries.
    pub entries: Vec<Entry>,
    /// Skipped entries.
    pub problems: Vec<EntryProblem>,
}

/// Reads and checks the manifest at `path`, refusing one larger than `max_bytes` (the
/// store's `limits.max_document_bytes`) or one that is a symbolic link.
pub fn load(path: &Path, max_bytes: u64) -> Result<Manifest, ManifestError> {
    let fail =
        |message: String| ManifestError { path: path.to_path_buf(), line: 0, column: 0, message };
    let file = std::fs::OpenOptions::new()
        .read(true)
        .custom_flags(libc::O_NOFOLLOW | libc::O_NONBLOCK)
        .open(path)
        .map_err(|e| fail(format!("cannot read: {e}")))?;
    let mut bytes = Vec::new();
    file.take(max_bytes.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(|e| fail(format!("cannot read: {e}")))?;
    if bytes.len() as u64 > max_bytes {
        return Err(fail(format!("larger than limits.max_document_bytes = {max_bytes}; not read")));
    }
    let text = String::from_utf8(bytes).map_err(|e| {
        fail(format!("not UTF-8 (invalid byte at offset {})", e.utf8_error().valid_up_to()))
    })?;
    parse(&text, path)
}

fn string_list(v: &Value) -> Option<Vec<String>> {
    v.as_array()?.iter().map(|g| g.as_str().map(str::to_owned)).collect()
}

/// Parses manifest text; `origin` names the file in errors.
pub fn parse(text: &str, origin: &Path) -> Result<Manifest, ManifestError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let root: Value = serde_json::from_str(text).map_err(|e| ManifestError {
        path: origin.to_path_buf(),
        line: e.line(),
        column: e.column(),
        message: format!("invalid JSON: {e}"),
    })?;
    let top = |message: &str| ManifestError {
        path: origin.to_path_buf(),
        line: 1,
        column: 1,
        message: message.to_owned(),
    };
    let obj = root.as_object().ok_or_else(|| top("expected a JSON object at the top level"))?;
    let mut m = Manifest::default();
    match obj.get("default_access") {
        None | Some(Value::Null) => {}
        Some(v) => {
            m.default_access = Some(
                string_list(v)
                    .ok_or_else(|| top("default_access: expected a list of group names"))?,
            );
        }
    }
    let docs = match obj.get("documents") {
        None | Some(Value::Null) => return Ok(m),
        Some(Value::Array(a)) => a,
        Some(_) => return Err(top("documents: expected a list")),
    };
    let mut ids: std::collections::HashMap<String, usize> = std::collections::HashMap::new();
    for (index, d) in docs.iter().enumerate() {
        match entry(index, d) {
            Ok(e) => {
                let key = e.id.clone().unwrap_or_else(|| e.path.clone());
                if let Some(first) = ids.insert(key.clone(), index) {
                    m.problems.push(EntryProblem {
                        entry: index,
                        field: Some("id".into()),
                        message: format!("id {key:?} is already used by documents[{first}]"),
                    });
                    continue;
                }
                m.entries.push(e);
            }
            Err((field, message)) => {
                m.problems.push(EntryProblem { entry: index, field: Some(field), message })
            }
        }
    }
    Ok(m)
}

fn entry(index: usize, d: &Value) -> Result<Entry, (String, String)> {
    let obj = d.as_object().ok_or_else(|| (String::new(), "expected an object".to_owned()))?;
    let err = |f: &str, m: String| (f.to_owned(), m);
    let path = match obj.get("path") {
        Some(Value::String(p)) => p,
        Some(_) => return Err(err("path", "expected a string".into())),
        None => return Err(err("path", "missing".into())),
    };
    confine::check(path).map_err(|e| {
        err("path", format!("{path:?} {e}; the entry is skipped and the path never read"))
    })?;
    let path = confine::normalize(path).ok_or_else(|| err("path", "empty path".into()))?;
    // Dropping `.` and empty components can make a new form (`./c:/x.md` is `c:/x.md`):
    // the canonical path must pass too.
    confine::check(&path).map_err(|e| {
        err("path", format!("{path:?} {e}; the entry is skipped and the path never read"))
    })?;
    let id = match obj.get("id") {
        None | Some(Value::Null) => None,
        Some(Value::String(s)) if s.is_empty() => return Err(err("id", "empty".into())),
        Some(Value::String(s)) => {
            confine::check(s).map_err(|e| err("id", format!("{s:?} {e}")))?;
            Some(s.clone())
        }
        Some(_) => return Err(err("id", "expected a string".into())),
    };
    let title = match obj.get("title") {
        None | Some(Value::Null) => None,
        Some(Value::String(s)) => Some(s.clone()),
        Some(_) => return Err(err("title", "expected a string".into())),
    };
    let access = match obj.get("access") {
        None | Some(Value::Null) => None,
        Some(v) => Some(
            string_list(v).ok_or_else(|| err("access", "expected a list of group names".into()))?,
        ),
    };
    let mut chunks = Vec::new();
    match obj.get("chunks") {
        None | Some(Value::Null) => {}
        Some(Value::Array(list)) => {
            for (k, c) in list.iter().enumerate() {
                let field = format!("chunks[{k}]");
                let c = c.as_object().ok_or_else(|| err(&field, "expected an object".into()))?;
                let cid = c
                    .get("id")
                    .and_then(Value::as_str)
                    .ok_or_else(|| err(&format!("{field}.id"), "expected a string".into()))?;
                let num = |name: &str| {
                    c.get(name)
                        .and_then(Value::as_u64)
                        .and_then(|n| usize::try_from(n).ok())
                        .ok_or_else(|| {
                            err(
                                &format!("{field}.{name}"),
                                "expected a non-negative integer".into(),
                            )
                        })
                };
                let (start, end) = (num("start")?, num("end")?);
                if start > end {
                    return Err(err(&field, format!("start {start} is after end {end}")));
                }
                if chunks.iter().any(|x: &ChunkSpec| x.id == cid) {
                    return Err(err(
                        &format!("{field}.id"),
                        format!("chunk id {cid:?} is used twice"),
                    ));
                }
                chunks.push(ChunkSpec { id: cid.to_owned(), start, end });
            }
        }
        Some(_) => return Err(err("chunks", "expected a list".into())),
    }
    Ok(Entry { index, id: id.filter(|i| *i != path), path, title, access, chunks })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p(text: &str) -> Manifest {
        parse(text, Path::new("manifest.json")).expect("manifest parses")
    }

    #[test]
    fn good_entries_and_default_access() {
        let m = p(r#"{"default_access": ["all-staff"], "documents": [
            {"id": "hr/leave", "path": "./hr//leave.md", "title": "Leave", "access": ["hr"],
             "chunks": [{"id": "c1", "start": 0, "end": 10}], "extra": true}]}"#);
        assert_eq!(m.default_access, Some(vec!["all-staff".to_owned()]));
        assert_eq!(m.entries[0].path, "hr/leave.md");
        assert_eq!(m.entries[0].id.as_deref(), Some("hr/leave"));
        assert_eq!(m.entries[0].chunks, [ChunkSpec { id: "c1".into(), start: 0, end: 10 }]);
        assert!(m.problems.is_empty());
    }

    /// Regression (found by the `manifest` fuzz target): `./x:/y.md` passed the check,
    /// and its canonical form `x:/y.md` is a drive path that a citation may not name.
    #[test]
    fn the_canonical_path_is_checked_too() {
        let m = p(r#"{"documents": [{"path": "./x:/y.md"}, {"path": ".//c:x.md"},
            {"path": "./ok.md"}]}"#);
        assert_eq!(m.entries.iter().map(|e| e.path.as_str()).collect::<Vec<_>>(), ["ok.md"]);
        assert_eq!(m.problems.iter().map(|p| p.entry).collect::<Vec<_>>(), [0, 1]);
    }

    #[test]
    fn bad_entries_are_reported_and_skipped() {
        let m = p(r#"{"documents": [
            {"path": "../secret.md"},
            {"title": "no path"},
            {"path": "a.md", "access": "hr"},
            {"path": "b.md", "chunks": [{"id": "c", "start": 9, "end": 2}]},
            {"path": "c.md", "id": "x"},
            {"path": "d.md", "id": "x"},
            {"path": "C:\\evil.md"},
            {"path": "%2e%2e/evil.md"},
            "not an object",
            {"path": "ok.md"}]}"#);
        assert_eq!(
            m.entries.iter().map(|e| e.path.as_str()).collect::<Vec<_>>(),
            ["c.md", "ok.md"]
        );
        let fields: Vec<(usize, Option<&str>)> =
            m.problems.iter().map(|p| (p.entry, p.field.as_deref())).collect();
        assert_eq!(
            fields,
            [
                (0, Some("path")),
                (1, Some("path")),
                (2, Some("access")),
                (3, Some("chunks[0]")),
                (5, Some("id")),
                (6, Some("path")),
                (7, Some("path")),
                (8, Some(""))
            ]
        );
    }

    #[test]
    fn unusable_manifest_names_line_and_column() {
        let e = parse("{\n  \"documents\": [,]\n}", Path::new("m.json")).expect_err("invalid");
        assert_eq!((e.line, e.column > 0), (2, true));
        assert!(e.to_string().starts_with("m.json:2:"));
        assert!(parse("[1]", Path::new("m.json")).is_err());
    }
}
