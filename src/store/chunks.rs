//! A chunk export as a store: JSON Lines, one chunk per line.
//!
//! ```json
//! {"id": "leave-3", "doc": "hr/leave-policy", "text": "Staff may carry over five days.", "access": ["all-staff"], "title": "Leave policy"}
//! ```
//!
//! The fields are those of [`super::row`]: `id` and `text` are required; `doc`,
//! `access`, `title`, `sha256`, `format` and `chunks` are optional; `id` and `doc` may be
//! strings or integers (`17` is the id `"17"`). Other fields (an embedding beside the
//! text, scores) are ignored. The file is read as a stream, line by line, with each line
//! bounded by `limits.max_document_bytes` plus 64 KiB for its other fields. A line that
//! cannot be read as a chunk is reported as a store problem naming the file, the line
//! and the field, and skipped; the other lines are still read. A repeated id is reported
//! and the later line skipped.

use std::fs::File;
use std::io::BufReader;
use std::path::Path;

use serde_json::Value;

use super::extract::ExtractOptions;
use super::row::{Row, check_chunks, parse_format};
use super::{Chunk, Document, Parts, StoreError, StoreForm, StoreLimits, StoreProblem};
use crate::answers::lines::{LineKind, LineSource};
use crate::answers::{FieldError, Fields, found, parse_strict, syntax_message};

/// Reads the chunk export at `path` into the parts of a store.
pub fn load(path: &Path, limits: &StoreLimits) -> Result<Parts, StoreError> {
    let file = File::open(path).map_err(|e| StoreError::Root {
        path: path.to_path_buf(),
        message: format!("cannot read: {e}"),
    })?;
    let name = path
        .file_name()
        .map_or_else(|| path.display().to_string(), |n| n.to_string_lossy().into_owned());
    let max_line =
        usize::try_from(limits.max_document_bytes).unwrap_or(usize::MAX).saturating_add(64 << 10);
    let mut source = LineSource::new(BufReader::with_capacity(1 << 16, file), max_line);
    let options = ExtractOptions { max_html_depth: limits.max_html_depth };
    let mut buf = Vec::new();
    let mut rows: Vec<(usize, Row)> = Vec::new();
    let mut problems = Vec::new();
    loop {
        let (line, kind) = match source.next_line(&mut buf) {
            Ok(Some(x)) => x,
            Ok(None) => break,
            Err(e) => {
                return Err(StoreError::Root {
                    path: path.to_path_buf(),
                    message: format!("cannot read: {e}"),
                });
            }
        };
        let at = format!("{name}:{line}");
        let problem = |field: Option<String>, message: String| StoreProblem {
            path: at.clone(),
            field,
            message,
        };
        if let LineKind::TooLong { bytes } = kind {
            problems.push(problem(
                None,
                format!(
                    "line is {bytes} bytes long, over limits.max_document_bytes plus 64 KiB; not read"
                ),
            ));
            continue;
        }
        let text = match crate::answers::decode_line(&buf) {
            Ok(t) => t,
            Err(e) => {
                problems.push(problem(None, e));
                continue;
            }
        };
        match parse_row(text, limits.max_id_bytes) {
            Ok(row) => rows.push((line, row)),
            Err(RowError::Syntax(m)) => problems.push(problem(None, m)),
            Err(RowError::Field(f)) => problems.push(problem(Some(f.path), f.message)),
        }
    }
    // Extraction in parallel, in line order.
    use rayon::prelude::*;
    let docs: Vec<(usize, Document, Option<StoreProblem>)> = rows
        .into_par_iter()
        .map(|(line, row)| {
            let (d, p) = row.into_document(&format!("{name}:{line}"), &options);
            (line, d, p)
        })
        .collect();
    let mut documents = Vec::with_capacity(docs.len());
    let mut seen = std::collections::HashMap::new();
    for (line, d, p) in docs {
        problems.extend(p);
        if let Some(first) = seen.get(&d.id) {
            problems.push(StoreProblem {
                path: format!("{name}:{line}"),
                field: Some("id".into()),
                message: format!("id {:?} is already the id of line {first}; skipped", d.id),
            });
            continue;
        }
        seen.insert(d.id.clone(), line);
        documents.push(d);
    }
    Ok(Parts {
        form: StoreForm::Chunks,
        root: path.to_path_buf(),
        documents,
        default_access: None,
        problems,
        unreadable: Vec::new(),
        max_id_bytes: limits.max_id_bytes,
    })
}

enum RowError {
    Syntax(String),
    Field(FieldError),
}

/// An id given as a string or an integer.
fn id_value(
    fields: &Fields<'_>,
    key: &str,
    max: usize,
    required: bool,
) -> Result<Option<String>, FieldError> {
    match fields.present(key) {
        Some(Value::Number(n)) if n.is_u64() || n.is_i64() => Ok(Some(n.to_string())),
        Some(_) => fields.opt_id(key, max),
        None if required => fields.id(key, max).map(Some),
        None => Ok(None),
    }
}

fn parse_row(text: &str, max_id: usize) -> Result<Row, RowError> {
    let value = parse_strict(text).map_err(|e| {
        let (message, column) = syntax_message(&e);
        RowError::Syntax(format!("invalid JSON at column {column}: {message}"))
    })?;
    row_from_value(&value, max_id).map_err(RowError::Field)
}

/// Reads one chunk object.
pub(crate) fn row_from_value(value: &Value, max_id: usize) -> Result<Row, FieldError> {
    let fields = Fields::of(value, "")?;
    let id = id_value(&fields, "id", max_id, true)?.unwrap_or_default();
    let text = fields.string("text")?;
    let doc = id_value(&fields, "doc", max_id, false)?;
    let access = fields.opt_id_array("access", max_id)?;
    let format = match fields.opt_string("format")? {
        None => None,
        Some(f) => Some(parse_format(&f).map_err(|m| FieldError::new("format", m))?),
    };
    let chunks = match fields.present("chunks") {
        None => Vec::new(),
        Some(Value::Array(items)) => {
            let mut out = Vec::with_capacity(items.len());
            for (i, item) in items.iter().enumerate() {
                let path = format!("chunks[{i}]");
                let f = Fields::of(item, &path)?;
                let start = f
                    .opt_u64("start")?
                    .ok_or_else(|| FieldError::new(f.path("start"), "missing"))?;
                let end =
                    f.opt_u64("end")?.ok_or_else(|| FieldError::new(f.path("end"), "missing"))?;
                out.push(Chunk {
                    id: f.id("id", max_id)?,
                    start: usize::try_from(start).unwrap_or(usize::MAX),
                    end: usize::try_from(end).unwrap_or(usize::MAX),
                });
            }
            check_chunks(out).map_err(|m| FieldError::new("chunks", m))?
        }
        Some(other) => {
            return Err(FieldError::new(
                "chunks",
                format!("expected an array, found {}", found(other)),
            ));
        }
    };
    Ok(Row {
        id,
        text,
        doc,
        access,
        title: fields.opt_string("title")?,
        sha256: fields.opt_string("sha256")?,
        format,
        chunks,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn load_text(text: &str) -> Parts {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("chunks.jsonl");
        std::fs::write(&p, text).unwrap();
        load(&p, &StoreLimits::default()).unwrap()
    }

    #[test]
    fn reads_rows_and_reports_bad_lines_by_line_and_field() {
        let parts = load_text(concat!(
            r#"{"id": "c1", "doc": "hr/leave", "text": "Staff get 27 days.", "access": ["all"], "embedding": [0.1, 0.2]}"#,
            "\n\n",
            r#"{"id": 7, "text": "Seven."}"#,
            "\n",
            r#"{"id": "c3"}"#,
            "\n",
            r#"{"id": "c4", "text": 5}"#,
            "\n",
            "not json\n",
            r#"{"id": "c1", "text": "again"}"#,
            "\n",
            r#"{"id": "c5", "text": "x", "access": "hr"}"#,
            "\n"
        ));
        let ids: Vec<&str> = parts.documents.iter().map(|d| d.id.as_str()).collect();
        assert_eq!(ids, ["c1", "7"]);
        assert_eq!(parts.documents[0].group.as_deref(), Some("hr/leave"));
        assert_eq!(parts.documents[0].access.as_deref(), Some(&["all".to_owned()][..]));
        let mut got: Vec<(String, Option<String>)> =
            parts.problems.iter().map(|p| (p.path.clone(), p.field.clone())).collect();
        got.sort();
        assert_eq!(
            got,
            [
                ("chunks.jsonl:4".to_owned(), Some("text".to_owned())),
                ("chunks.jsonl:5".to_owned(), Some("text".to_owned())),
                ("chunks.jsonl:6".to_owned(), None),
                ("chunks.jsonl:7".to_owned(), Some("id".to_owned())),
                ("chunks.jsonl:8".to_owned(), Some("access".to_owned())),
            ]
        );
        assert!(parts.problems[0].message.contains("missing"));
    }

    #[test]
    fn markdown_rows_are_reduced_to_visible_text() {
        let parts = load_text(
            "{\"id\": \"m\", \"format\": \"markdown\", \"text\": \"# Title\\n\\nSome *text*.\"}\n",
        );
        assert_eq!(parts.documents[0].visible_text(), "Title\n\nSome text.");
        let bad = load_text("{\"id\": \"m\", \"format\": \"pdf\", \"text\": \"x\"}\n");
        assert_eq!(bad.problems[0].field.as_deref(), Some("format"));
    }
}
