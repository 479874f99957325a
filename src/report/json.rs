//! The findings document as JSON (`--json`). The format is documented once, beside its
//! types, in [`crate::findings`].
//!
//! Pretty-printed, keys in a fixed order, ending with a newline, so that two runs over the
//! same inputs differ only in `generated_at`. [`to_bytes`] serialises a report held in
//! memory; [`write_streamed`] writes the same bytes with the answers and rejected lines
//! taken from iterators (a [`super::spool`]), so that a large run need not hold them.

use std::cell::RefCell;
use std::io::{self, Write};

use serde::ser::{Error as _, SerializeSeq};
use serde::{Serialize, Serializer};
use serde_json::Value;

use crate::findings::{
    AnswerFindings, Decisions, Inputs, PartRecord, RejectedLine, Report, ShardRecord, Summary, Tool,
};

/// The findings document with its two long lists given separately. The fields and their
/// order are those of [`Report`]; [`parts`] takes a report apart without `..`, so a field
/// added to [`Report`] does not compile until it is added here too.
#[derive(Serialize)]
struct Document<'a, A: Serialize, R: Serialize> {
    tool: &'a Tool,
    generated_at: &'a str,
    command: &'a [String],
    #[serde(skip_serializing_if = "Option::is_none")]
    shard: &'a Option<ShardRecord>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    merged_from: &'a Vec<PartRecord>,
    #[serde(skip_serializing_if = "is_false")]
    redact_restricted: &'a bool,
    inputs: &'a Inputs,
    config: &'a Value,
    summary: &'a Summary,
    answers: A,
    rejected: R,
    decisions: &'a Decisions,
}

fn parts<A: Serialize, R: Serialize>(
    report: &Report,
    answers: A,
    rejected: R,
) -> Document<'_, A, R> {
    let Report {
        tool,
        generated_at,
        command,
        shard,
        merged_from,
        redact_restricted,
        inputs,
        config,
        summary,
        answers: _,
        rejected: _,
        decisions,
    } = report;
    Document {
        tool,
        generated_at,
        command,
        shard,
        merged_from,
        redact_restricted,
        inputs,
        config,
        summary,
        answers,
        rejected,
        decisions,
    }
}

fn is_false(b: &&bool) -> bool {
    !**b
}

/// A JSON array whose items come from an iterator, serialised once.
struct Stream<I>(RefCell<Option<I>>);

impl<T: Serialize, I: Iterator<Item = io::Result<T>>> Serialize for Stream<I> {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let items =
            self.0.borrow_mut().take().ok_or_else(|| S::Error::custom("serialised twice"))?;
        let mut seq = serializer.serialize_seq(None)?;
        for item in items {
            seq.serialize_element(&item.map_err(S::Error::custom)?)?;
        }
        seq.end()
    }
}

/// Serialises the findings document held in memory.
pub fn to_bytes(report: &Report) -> serde_json::Result<Vec<u8>> {
    let mut bytes = serde_json::to_vec_pretty(&parts(report, &report.answers, &report.rejected))?;
    bytes.push(b'\n');
    Ok(bytes)
}

/// Writes the findings document of `head` (whose own `answers` and `rejected` are
/// ignored) with the answers and rejected lines read from the iterators; the bytes are
/// those [`to_bytes`] gives for the whole report.
pub fn write_streamed(
    out: &mut dyn Write,
    head: &Report,
    answers: impl Iterator<Item = io::Result<AnswerFindings>>,
    rejected: impl Iterator<Item = io::Result<RejectedLine>>,
) -> io::Result<()> {
    let doc =
        parts(head, Stream(RefCell::new(Some(answers))), Stream(RefCell::new(Some(rejected))));
    serde_json::to_writer_pretty(&mut *out, &doc).map_err(io::Error::from)?;
    out.write_all(b"\n")
}
