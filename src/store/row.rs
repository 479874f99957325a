//! A row of a chunk export or a database table, and how it becomes a [`Document`].
//!
//! Every row form shares these fields: `id` and `text` (required), and `doc`, `access`,
//! `title`, `sha256`, `format` and `chunks` (optional). A row is one document of the
//! store: its id is the row's `id`, its text the row's `text`, and offsets of a citation
//! count bytes of that text. `doc` names the document the row was cut from, so that a
//! citation may name that document and the chunk (`{"doc": DOC, "chunk": ID}`); `access`
//! and `title` are as in the manifest; `format` (`text`, the default, `markdown` or
//! `html`) says whether the text is reduced to its visible text first; `chunks` names
//! byte ranges of the text, as the manifest's `chunks` do (a row that holds a whole
//! document with named passages, as `plumbline export` writes them). `sha256`, when
//! given, must be the SHA-256 of the text's UTF-8 bytes; a row whose digest does not
//! match is still read, and reported, since the digest then describes some other text.

use super::extract::{ExtractOptions, Format};
use super::{Chunk, Document, StoreProblem, hex};

use sha2::{Digest, Sha256};

/// One row, validated.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct Row {
    /// Its id.
    pub id: String,
    /// Its text.
    pub text: String,
    /// The document it was cut from.
    pub doc: Option<String>,
    /// The groups that may read it.
    pub access: Option<Vec<String>>,
    /// Title.
    pub title: Option<String>,
    /// Claimed SHA-256 of the text.
    pub sha256: Option<String>,
    /// How the text is read.
    pub format: Option<Format>,
    /// Named byte ranges of the text.
    pub chunks: Vec<Chunk>,
}

impl Row {
    /// The document this row is, and a problem when its claimed digest is wrong. `at`
    /// names the row in problems (`chunks.jsonl:12`, `row id "c-4"`).
    pub fn into_document(
        self,
        at: &str,
        options: &ExtractOptions,
    ) -> (Document, Option<StoreProblem>) {
        let format = self.format.unwrap_or(Format::Text);
        let mut problem = None;
        if let Some(claimed) = &self.sha256 {
            let actual = hex(&Sha256::digest(self.text.as_bytes()));
            if !claimed.eq_ignore_ascii_case(&actual) {
                problem = Some(StoreProblem {
                    path: at.to_owned(),
                    field: Some("sha256".into()),
                    message: format!(
                        "is {claimed}, but the SHA-256 of the text is {actual}; the text is read and the digest ignored"
                    ),
                });
            }
        }
        let mut d = Document::from_text(self.id, self.text, format, options);
        d.title = self.title;
        d.access = self.access;
        d.group = self.doc;
        d.chunks = self.chunks;
        (d, problem)
    }
}

/// Parses an `access` value given as text: a JSON array of strings (`["hr", "ops"]`), or
/// else a comma-separated list (`hr, ops`); an empty text is no groups at all.
pub fn parse_access_text(text: &str) -> Result<Vec<String>, String> {
    let t = text.trim();
    if t.starts_with('[') {
        let v: Vec<String> =
            serde_json::from_str(t).map_err(|e| format!("is not a JSON array of strings ({e})"))?;
        return Ok(v);
    }
    Ok(t.split(',').map(str::trim).filter(|g| !g.is_empty()).map(str::to_owned).collect())
}

/// Parses a `chunks` value given as JSON text: `[{"id", "start", "end"}, …]`.
pub fn parse_chunks_json(text: &str) -> Result<Vec<Chunk>, String> {
    #[derive(serde::Deserialize)]
    #[serde(deny_unknown_fields)]
    struct C {
        id: String,
        start: usize,
        end: usize,
    }
    let v: Vec<C> = serde_json::from_str(text)
        .map_err(|e| format!("is not a JSON array of {{id, start, end}} ({e})"))?;
    check_chunks(v.into_iter().map(|c| Chunk { id: c.id, start: c.start, end: c.end }).collect())
}

/// Checks named ranges: non-empty unique ids, `start <= end`.
pub fn check_chunks(chunks: Vec<Chunk>) -> Result<Vec<Chunk>, String> {
    for (i, c) in chunks.iter().enumerate() {
        if c.id.trim().is_empty() {
            return Err(format!("[{i}].id is empty"));
        }
        if c.start > c.end {
            return Err(format!("[{i}] starts at {} after it ends at {}", c.start, c.end));
        }
        if chunks[..i].iter().any(|p| p.id == c.id) {
            return Err(format!("[{i}].id {:?} is repeated", c.id));
        }
    }
    Ok(chunks)
}

/// Parses a `format` name.
pub fn parse_format(name: &str) -> Result<Format, String> {
    Format::from_name(name.trim())
        .ok_or_else(|| format!("is {name:?}; expected \"text\", \"markdown\" or \"html\""))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn access_text_forms() {
        assert_eq!(parse_access_text(r#"["hr", "ops"]"#).unwrap(), ["hr", "ops"]);
        assert_eq!(parse_access_text("hr, ops ,").unwrap(), ["hr", "ops"]);
        assert!(parse_access_text("").unwrap().is_empty());
        assert!(parse_access_text("[1]").is_err());
    }

    #[test]
    fn chunks_json_is_checked() {
        assert_eq!(parse_chunks_json(r#"[{"id": "c1", "start": 0, "end": 4}]"#).unwrap().len(), 1);
        assert!(parse_chunks_json(r#"[{"id": "c1", "start": 5, "end": 4}]"#).is_err());
        assert!(
            parse_chunks_json(
                r#"[{"id": "c1", "start": 0, "end": 4}, {"id": "c1", "start": 0, "end": 1}]"#
            )
            .is_err()
        );
    }

    #[test]
    fn a_wrong_digest_is_reported_and_the_text_kept() {
        let row = Row {
            id: "c-1".into(),
            text: "abc".into(),
            // SHA-256("abc") from FIPS 180-2, appendix B.1 (from memory), upper case.
            sha256: Some("BA7816BF8F01CFEA414140DE5DAE2223B00361A396177A9CB410FF61F20015AD".into()),
            ..Row::default()
        };
        let (d, p) = row.clone().into_document("x:1", &ExtractOptions::default());
        assert!(p.is_none());
        assert_eq!(d.raw(), "abc");
        let bad = Row { sha256: Some("00".into()), ..row };
        let (d, p) = bad.into_document("x:1", &ExtractOptions::default());
        assert_eq!(p.unwrap().field.as_deref(), Some("sha256"));
        assert_eq!(d.sha256, "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
    }
}
