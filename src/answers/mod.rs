//! The answers log: one JSON object per line, read as a stream and validated into typed
//! [`Answer`]s.
//!
//! Logs come from production systems and are large and imperfect, so the reader never
//! stops at a bad record: each non-blank line yields either an [`Answer`] or a
//! [`Rejected`] entry naming the line and the field at fault, and the counts always add up
//! (answers + rejected = [`AnswerReader::non_blank_lines`]), which is what lets a report
//! state that nothing was silently dropped. Memory stays bounded by
//! [`ReaderLimits::max_line_bytes`] whatever the input.
//!
//! # Record format
//!
//! SPEC.md, "The answers file", fixes the fields. The choices it leaves open:
//!
//! * Field paths in messages index arrays from 0, as JSON Pointer and JSONPath do:
//!   `citations[0]` is the first citation.
//! * An optional field given as `null` counts as absent.
//! * `ref` may be a string or an integer (`1` becomes `"1"`). A citation without `ref`
//!   takes its 1-based position in `citations` as its ref, which is what numbered markers
//!   `[1]`, `[2]` conventionally mean; if that collides with another citation's explicit
//!   ref the line is rejected as a duplicate ref.
//! * A locator is `start` and `end` together, or `chunk`, or `page` (a 1-based page of a
//!   PDF document; an addition to SPEC.md, see README), or neither (the whole document);
//!   `start > end` is accepted here and left to the citation checks to report as
//!   `bad_locator`, since it needs no other input to judge and rejecting the whole answer
//!   would hide its other findings.
//! * Identifiers (`id`, `user`, each group, `ref`, `doc`, `chunk`) are limited to
//!   [`ReaderLimits::max_id_bytes`].
//! * A repeated `id` rejects the second and later lines, naming the line of the first
//!   accepted one; a line that was itself rejected does not claim its id.
//! * A byte order mark is accepted at the start of the file only; on a later line it
//!   means files were concatenated, and the line is rejected saying so.
//! * Unknown fields are ignored.
//! * Records of another shape are read through a field map ([`mapping`]).

use std::collections::HashMap;
use std::fmt;
use std::io::{self, BufRead};
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};
use serde_json::Value;

use crate::config::Limits;

mod json;
pub(crate) mod lines;
pub mod mapping;
pub mod markers;

pub(crate) use json::{
    FieldError, Fields, found, parse_strict, quote as json_quote, syntax_message,
};
use lines::{BOM, LineKind, LineSource};

/// One answer of the log, validated.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Answer {
    /// The answer's id, unique within the file.
    pub id: String,
    /// 1-based line of the answers file the record was read from.
    pub line: usize,
    /// The asking user's id, if the log records it.
    pub user: Option<String>,
    /// The user's groups as the log records them; takes precedence over `--principals`.
    pub groups: Option<Vec<String>>,
    /// The question asked, if recorded.
    pub question: Option<String>,
    /// The answer text, markers included.
    pub answer: String,
    /// The citations, in the order given.
    pub citations: Vec<Citation>,
    /// A reviewed reference answer to compare against, if any.
    pub approved_answer: Option<String>,
}

/// One citation of an answer.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Citation {
    /// The ref that markers in the answer use for this citation.
    pub r#ref: String,
    /// The cited document's id (or store-relative path).
    pub doc: String,
    /// Which part of the document is cited.
    pub locator: Locator,
    /// The text the assistant says it took from the passage.
    pub quote: Option<String>,
    /// The hex SHA-256 of the document file the assistant saw, as given (not normalised;
    /// compare case-insensitively).
    pub sha256: Option<String>,
}

/// The cited part of a document.
#[derive(Debug, Clone, PartialEq, Eq, Hash)]
pub enum Locator {
    /// No locator: the whole document.
    Whole,
    /// A half-open byte range of the stored file. Not checked against the document here,
    /// nor for `start <= end`.
    Range {
        /// First byte.
        start: u64,
        /// One past the last byte.
        end: u64,
    },
    /// A chunk id from the store's manifest.
    Chunk(String),
    /// A 1-based page of a PDF document (`page`). Not checked against the document here.
    Page(u64),
}

/// An input line that could not be read as a record.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Rejected {
    /// 1-based line number in the input file.
    pub line: usize,
    /// Why, naming the field as a path where one is at fault.
    pub error: String,
}

/// Bounds on what one answers-file line may hold.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ReaderLimits {
    /// Longest line, in bytes without its newline; longer lines are rejected unread.
    pub max_line_bytes: usize,
    /// Most citations one answer may carry.
    pub max_citations: usize,
    /// Longest identifier (`id`, `user`, group, `ref`, `doc`, `chunk`), in bytes.
    pub max_id_bytes: usize,
}

impl Default for ReaderLimits {
    fn default() -> Self {
        ReaderLimits::from(&Limits::default())
    }
}

impl From<&Limits> for ReaderLimits {
    fn from(limits: &Limits) -> Self {
        ReaderLimits {
            max_line_bytes: limits.max_line_bytes,
            max_citations: limits.max_citations,
            max_id_bytes: limits.max_id_bytes,
        }
    }
}

/// A failure to read an input file as a whole (as opposed to one bad record in it).
///
/// Displayed as `path:line: field: message`, leaving out the parts that are unknown.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub struct InputError {
    /// The file.
    pub path: PathBuf,
    /// 1-based line, where one can be named.
    pub line: Option<usize>,
    /// Path of the field at fault, where one can be named.
    pub field: Option<String>,
    /// What went wrong.
    pub message: String,
}

impl fmt::Display for InputError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.path.display())?;
        if let Some(line) = self.line {
            write!(f, ":{line}")?;
        }
        if let Some(field) = &self.field {
            write!(f, ": {field}")?;
        }
        write!(f, ": {}", self.message)
    }
}

impl InputError {
    /// An error about the file as a whole.
    pub fn new(path: impl Into<PathBuf>, message: impl Into<String>) -> Self {
        InputError { path: path.into(), line: None, field: None, message: message.into() }
    }

    /// The file could not be opened or read.
    pub fn io(path: &Path, error: &io::Error) -> Self {
        InputError::new(path, format!("cannot read: {error}"))
    }

    /// Names the line.
    pub fn at_line(mut self, line: usize) -> Self {
        self.line = Some(line);
        self
    }

    /// Names the field.
    pub fn in_field(mut self, field: impl Into<String>) -> Self {
        self.field = Some(field.into());
        self
    }
}

/// Streams [`Answer`]s out of a JSON Lines source.
///
/// Yields one item per non-blank line, in order. Reading stops at the first I/O error,
/// which is kept for [`AnswerReader::io_error`]: a source that fails part-way cannot be
/// read at all in the sense of SPEC.md's exit code 2, and must not pass for a short log,
/// so a caller checks it once the iterator ends.
///
/// ```
/// use plumbline::answers::AnswerReader;
/// let log = "{\"id\": \"a-1\", \"answer\": \"Hi [1].\", \"citations\": [{\"ref\": 1, \"doc\": \"faq.md\"}]}\n\n{\"id\": 7}\n";
/// let mut reader = AnswerReader::new(log.as_bytes());
/// let items: Vec<_> = reader.by_ref().collect();
/// assert_eq!(items[0].as_ref().unwrap().citations[0].r#ref, "1");
/// assert_eq!(items[1].as_ref().unwrap_err().error, "id: expected a non-empty string, found 7");
/// assert_eq!(reader.non_blank_lines(), 2);
/// assert!(reader.io_error().is_none());
/// ```
pub struct AnswerReader<R> {
    source: LineSource<R>,
    limits: ReaderLimits,
    buf: Vec<u8>,
    /// Line of the first accepted answer with each id.
    seen: HashMap<String, usize>,
    non_blank: usize,
    io_error: Option<io::Error>,
    map: Option<std::sync::Arc<mapping::FieldMap>>,
}

impl<R: BufRead> AnswerReader<R> {
    /// A reader with the default limits.
    pub fn new(reader: R) -> Self {
        Self::with_limits(reader, ReaderLimits::default())
    }

    /// A reader with the given limits.
    pub fn with_limits(reader: R, limits: ReaderLimits) -> Self {
        AnswerReader {
            source: LineSource::new(reader, limits.max_line_bytes),
            limits,
            buf: Vec::new(),
            seen: HashMap::new(),
            non_blank: 0,
            io_error: None,
            map: None,
        }
    }

    /// Reads records through a field map ([`mapping`]); an empty map changes nothing.
    pub fn with_map(mut self, map: std::sync::Arc<mapping::FieldMap>) -> Self {
        self.map = if map.is_empty() { None } else { Some(map) };
        self
    }

    /// Non-blank lines read so far; equals answers yielded plus lines rejected.
    pub fn non_blank_lines(&self) -> usize {
        self.non_blank
    }

    /// Physical lines read so far, blank ones included.
    pub fn lines_read(&self) -> usize {
        self.source.lines_read()
    }

    /// The I/O error that ended the reading early, if one did.
    pub fn io_error(&self) -> Option<&io::Error> {
        self.io_error.as_ref()
    }

    /// Takes the I/O error that ended the reading early, if one did.
    pub fn take_io_error(&mut self) -> Option<io::Error> {
        self.io_error.take()
    }

    fn read_record(&mut self, line: usize, kind: LineKind) -> Result<Answer, Rejected> {
        let reject = |error: String| Rejected { line, error };
        if let LineKind::TooLong { bytes } = kind {
            return Err(reject(format!(
                "line is {bytes} bytes long, more than the limit of {} (limits.max_line_bytes); not read",
                self.limits.max_line_bytes
            )));
        }
        let text = decode_line(&self.buf).map_err(reject)?;
        let answer = match &self.map {
            None => parse_answer(text, line, &self.limits),
            Some(map) => parse_mapped(text, line, &self.limits, map),
        }
        .map_err(reject)?;
        if let Some(&first) = self.seen.get(&answer.id) {
            return Err(reject(format!(
                "id: duplicate id {}, first used on line {first}",
                json::quote(&answer.id)
            )));
        }
        self.seen.insert(answer.id.clone(), line);
        Ok(answer)
    }
}

impl<R: BufRead> Iterator for AnswerReader<R> {
    type Item = Result<Answer, Rejected>;

    fn next(&mut self) -> Option<Self::Item> {
        if self.io_error.is_some() {
            return None;
        }
        match self.source.next_line(&mut self.buf) {
            Ok(Some((line, kind))) => {
                self.non_blank += 1;
                Some(self.read_record(line, kind))
            }
            Ok(None) => None,
            Err(e) => {
                self.io_error = Some(e);
                None
            }
        }
    }
}

/// Checks that a line is UTF-8 and does not start with a stray byte order mark.
pub(crate) fn decode_line(bytes: &[u8]) -> Result<&str, String> {
    if bytes.starts_with(BOM) {
        return Err("byte order mark (U+FEFF) at the start of a line other than the first; \
                    were files concatenated?"
            .to_owned());
    }
    std::str::from_utf8(bytes)
        .map_err(|e| format!("invalid UTF-8 at byte {} of the line", e.valid_up_to() + 1))
}

/// Parses one line's text into an [`Answer`]; the error is the message for [`Rejected`].
///
/// Does not check that the id is unique; [`AnswerReader`] does that across the file.
pub fn parse_answer(text: &str, line: usize, limits: &ReaderLimits) -> Result<Answer, String> {
    let value = parse_strict(text).map_err(|e| {
        let (message, column) = syntax_message(&e);
        format!("invalid JSON at column {column}: {message}")
    })?;
    answer_from_value(&value, line, limits).map_err(|e| e.to_string())
}

/// [`parse_answer`] for a record of another shape, read through `map`; every message
/// names the pointer its field was read from.
pub fn parse_mapped(
    text: &str,
    line: usize,
    limits: &ReaderLimits,
    map: &mapping::FieldMap,
) -> Result<Answer, String> {
    let value = parse_strict(text).map_err(|e| {
        let (message, column) = syntax_message(&e);
        format!("invalid JSON at column {column}: {message}")
    })?;
    let rebuilt = map.apply(&value).map_err(|e| e.to_string())?;
    answer_from_value(&rebuilt, line, limits)
        .map_err(|e| FieldError::new(map.describe(&e.path), e.message).to_string())
}

fn answer_from_value(
    value: &Value,
    line: usize,
    limits: &ReaderLimits,
) -> Result<Answer, FieldError> {
    let fields = Fields::of(value, "")?;
    let max_id = limits.max_id_bytes;
    let id = fields.id("id", max_id)?;
    let answer = fields.string("answer")?;
    let citations = match value.get("citations") {
        None => return Err(FieldError::new("citations", "missing")),
        Some(Value::Array(items)) => read_citations(items, limits)?,
        Some(other) => {
            return Err(FieldError::new(
                "citations",
                format!("expected an array, found {}", found(other)),
            ));
        }
    };
    Ok(Answer {
        id,
        line,
        user: fields.opt_id("user", max_id)?,
        groups: fields.opt_id_array("groups", max_id)?,
        question: fields.opt_string("question")?,
        answer,
        citations,
        approved_answer: fields.opt_string("approved_answer")?,
    })
}

fn read_citations(items: &[Value], limits: &ReaderLimits) -> Result<Vec<Citation>, FieldError> {
    if items.len() > limits.max_citations {
        return Err(FieldError::new(
            "citations",
            format!(
                "{} citations, more than the limit of {} (limits.max_citations)",
                items.len(),
                limits.max_citations
            ),
        ));
    }
    let mut citations: Vec<Citation> = Vec::with_capacity(items.len());
    for (i, item) in items.iter().enumerate() {
        let path = format!("citations[{i}]");
        let citation = read_citation(item, &path, i + 1, limits.max_id_bytes)?;
        if let Some(j) = citations.iter().position(|c| c.r#ref == citation.r#ref) {
            let given = item.get("ref").is_some_and(|r| !r.is_null());
            let how = if given { "" } else { " (its position, as it gives no ref)" };
            return Err(FieldError::new(
                json::join(&path, "ref"),
                format!(
                    "duplicate ref {}{how}, already used by citations[{j}]",
                    json::quote(&citation.r#ref)
                ),
            ));
        }
        citations.push(citation);
    }
    Ok(citations)
}

fn read_citation(
    value: &Value,
    path: &str,
    position: usize,
    max_id: usize,
) -> Result<Citation, FieldError> {
    let fields = Fields::of(value, path)?;
    let r#ref = fields.opt_ref("ref", max_id)?.unwrap_or_else(|| position.to_string());
    let doc = fields.id("doc", max_id)?;
    let start = fields.opt_u64("start")?;
    let end = fields.opt_u64("end")?;
    let chunk = fields.opt_id("chunk", max_id)?;
    if let Some(page) = fields.opt_u64("page")? {
        if start.is_some() || end.is_some() || chunk.is_some() {
            return Err(FieldError::new(path, "give one locator: page, start/end or chunk"));
        }
        if page == 0 {
            return Err(FieldError::new(fields.path("page"), "pages count from 1, found 0"));
        }
        return Ok(Citation {
            r#ref,
            doc,
            locator: Locator::Page(page),
            quote: fields.opt_string("quote")?,
            sha256: fields.opt_string("sha256")?,
        });
    }
    let locator = match (start, end, chunk) {
        (Some(_), Some(_), Some(_)) | (Some(_), None, Some(_)) | (None, Some(_), Some(_)) => {
            return Err(FieldError::new(path, "give either start/end or chunk, not both"));
        }
        (Some(start), Some(end), None) => Locator::Range { start, end },
        (Some(_), None, None) => {
            return Err(FieldError::new(
                fields.path("end"),
                "missing; start and end must be given together",
            ));
        }
        (None, Some(_), None) => {
            return Err(FieldError::new(
                fields.path("start"),
                "missing; start and end must be given together",
            ));
        }
        (None, None, Some(chunk)) => Locator::Chunk(chunk),
        (None, None, None) => Locator::Whole,
    };
    Ok(Citation {
        r#ref,
        doc,
        locator,
        quote: fields.opt_string("quote")?,
        sha256: fields.opt_string("sha256")?,
    })
}

#[cfg(test)]
mod tests;
