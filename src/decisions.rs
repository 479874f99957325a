//! Reviewer decisions (`--accept FILE`): findings a named reviewer has looked at and
//! waived, with the reason.
//!
//! A lexical checker raises findings a human can judge to be fine (a faithful paraphrase
//! scored as unsupported, say). Recording that judgement in a file, rather than loosening
//! the gate, keeps every waiver attributable and reviewable. The file is JSON Lines, one
//! decision per line:
//!
//! ```json
//! {"answer": "a-0007", "sentence": 1, "finding": "unsupported", "by": "rev-4", "note": "paraphrase of §2"}
//! ```
//!
//! * `answer` (required): the answer id.
//! * `finding` (required): a finding kind from [`FINDING_KINDS`]. `rejected_line` cannot
//!   be waived here, as a rejected line has no answer id; `gate.allow_rejected_lines` is
//!   the switch for those.
//! * `by` and `note` (required, non-empty): who decided and why. A waiver without either
//!   could not be audited, so such a line is rejected.
//! * `sentence` (optional): the 0-based sentence index, as in the findings document.
//! * `ref` (optional): the citation ref, a string or an integer as in the answers file.
//!
//! A decision without `sentence` matches findings of its kind in any sentence of the
//! answer, including findings tied to no sentence; one without `ref` matches any ref or
//! none. A decision that gives `sentence` (or `ref`) matches only findings with that same
//! value, never ones without it. A bad line is reported as [`Rejected`] and the others are
//! kept, as for the answers file; a line that repeats an earlier decision exactly (same
//! answer, finding, sentence and ref) is rejected too, as it would otherwise be reported
//! stale for no fault of the finding.

use std::collections::HashMap;
use std::io::{BufRead, BufReader};
use std::path::Path;

use serde::Serialize;

use crate::answers::lines::{LineKind, LineSource};
use crate::answers::{
    FieldError, Fields, InputError, ReaderLimits, Rejected, decode_line, parse_strict,
    syntax_message,
};
use crate::config::{FINDING_KINDS, is_finding_kind};

/// One reviewer decision.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Decision {
    /// 1-based line of the decisions file.
    pub line: usize,
    /// The answer id.
    pub answer: String,
    /// The 0-based sentence index, when the decision is about one sentence.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sentence: Option<usize>,
    /// The citation ref, when the decision is about one citation.
    #[serde(rename = "ref", skip_serializing_if = "Option::is_none")]
    pub r#ref: Option<String>,
    /// The finding kind waived.
    pub finding: String,
    /// Who decided.
    pub by: String,
    /// Why.
    pub note: String,
}

impl Decision {
    /// Whether this decision waives a finding of `kind` in answer `answer_id`, tied to
    /// `sentence` and `ref` (`None` where the finding has none). See the module
    /// documentation for how absent fields match.
    pub fn matches(
        &self,
        answer_id: &str,
        kind: &str,
        sentence: Option<usize>,
        r#ref: Option<&str>,
    ) -> bool {
        self.answer == answer_id
            && self.finding == kind
            && self.sentence.is_none_or(|s| sentence == Some(s))
            && self.r#ref.as_deref().is_none_or(|r| r#ref == Some(r))
    }
}

/// Reads a decisions file. Fails only when the file cannot be read; bad lines come back
/// as [`Rejected`] beside the decisions that were read.
pub fn load_decisions(
    path: impl AsRef<Path>,
) -> Result<(Vec<Decision>, Vec<Rejected>), InputError> {
    let path = path.as_ref();
    let file = std::fs::File::open(path).map_err(|e| InputError::io(path, &e))?;
    read_decisions(BufReader::new(file), path)
}

/// Reads decisions from any buffered source; `origin` names it in errors.
pub fn read_decisions<R: BufRead>(
    reader: R,
    origin: &Path,
) -> Result<(Vec<Decision>, Vec<Rejected>), InputError> {
    let limits = ReaderLimits::default();
    let mut source = LineSource::new(reader, limits.max_line_bytes);
    let mut buf = Vec::new();
    let mut decisions: Vec<Decision> = Vec::new();
    let mut rejected = Vec::new();
    // Line of the first decision with each (answer, finding, sentence, ref).
    let mut seen: HashMap<(String, String, Option<usize>, Option<String>), usize> = HashMap::new();
    loop {
        let next = source
            .next_line(&mut buf)
            .map_err(|e| InputError::io(origin, &e).at_line(source.lines_read() + 1))?;
        let Some((line, kind)) = next else { break };
        let decision = match kind {
            LineKind::TooLong { bytes } => Err(format!(
                "line is {bytes} bytes long, more than the limit of {}; not read",
                limits.max_line_bytes
            )),
            LineKind::Text => {
                decode_line(&buf).and_then(|text| parse_decision(text, line, &limits))
            }
        };
        let decision = decision.and_then(|d| {
            let key = (d.answer.clone(), d.finding.clone(), d.sentence, d.r#ref.clone());
            match seen.get(&key) {
                Some(first) => Err(format!("repeats the decision on line {first}")),
                None => {
                    seen.insert(key, line);
                    Ok(d)
                }
            }
        });
        match decision {
            Ok(d) => decisions.push(d),
            Err(error) => rejected.push(Rejected { line, error }),
        }
    }
    Ok((decisions, rejected))
}

/// Parses one decision line; the error is the message for [`Rejected`].
pub fn parse_decision(text: &str, line: usize, limits: &ReaderLimits) -> Result<Decision, String> {
    let value = parse_strict(text).map_err(|e| {
        let (message, column) = syntax_message(&e);
        format!("invalid JSON at column {column}: {message}")
    })?;
    decision_from_value(&value, line, limits).map_err(|e| e.to_string())
}

fn decision_from_value(
    value: &serde_json::Value,
    line: usize,
    limits: &ReaderLimits,
) -> Result<Decision, FieldError> {
    let fields = Fields::of(value, "")?;
    let max_id = limits.max_id_bytes;
    let answer = fields.id("answer", max_id)?;
    let sentence = match fields.opt_u64("sentence")? {
        None => None,
        Some(n) => Some(usize::try_from(n).map_err(|_| {
            FieldError::new("sentence", format!("{n} is beyond any sentence index"))
        })?),
    };
    let r#ref = fields.opt_ref("ref", max_id)?;
    let finding = fields.id("finding", max_id)?;
    if finding == "rejected_line" {
        return Err(FieldError::new(
            "finding",
            "a rejected line cannot be waived by a decision; set gate.allow_rejected_lines",
        ));
    }
    if !is_finding_kind(&finding) {
        return Err(FieldError::new(
            "finding",
            format!(
                "unknown finding kind {}; known kinds: {}",
                crate::answers::json_quote(&finding),
                FINDING_KINDS.join(", ")
            ),
        ));
    }
    let by = fields.id("by", max_id)?;
    let note = fields.string("note")?;
    if note.trim().is_empty() {
        return Err(FieldError::new("note", "must say why the finding is waived"));
    }
    Ok(Decision { line, answer, sentence, r#ref, finding, by, note })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str) -> (Vec<Decision>, Vec<Rejected>) {
        read_decisions(text.as_bytes(), Path::new("accept.jsonl")).unwrap()
    }

    fn reject(line: &str) -> String {
        let (decisions, rejected) = read(line);
        assert!(decisions.is_empty(), "{decisions:?}");
        rejected[0].error.clone()
    }

    const LINE: &str = r#"{"answer": "a-0007", "sentence": 1, "finding": "unsupported", "by": "rev-4", "note": "paraphrase"}"#;

    #[test]
    fn reads_decisions() {
        let text = format!(
            "{LINE}\n\n{}\r\n",
            r#"{"answer": "a-8", "ref": 2, "finding": "unused", "by": "rev-1", "note": "kept for context", "extra": true}"#
        );
        let (decisions, rejected) = read(&text);
        assert!(rejected.is_empty(), "{rejected:?}");
        assert_eq!(
            decisions[0],
            Decision {
                line: 1,
                answer: "a-0007".into(),
                sentence: Some(1),
                r#ref: None,
                finding: "unsupported".into(),
                by: "rev-4".into(),
                note: "paraphrase".into(),
            }
        );
        assert_eq!(decisions[1].line, 3);
        assert_eq!(decisions[1].r#ref.as_deref(), Some("2"));
    }

    #[test]
    fn bad_lines_are_rejected_and_the_rest_kept() {
        let text = format!("{LINE}\nnot json\n{}\n", LINE.replace("a-0007", "a-9"));
        let (decisions, rejected) = read(&text);
        assert_eq!(decisions.len(), 2);
        assert_eq!(
            rejected,
            vec![Rejected { line: 2, error: "invalid JSON at column 2: expected value".into() }]
        );
    }

    #[test]
    fn field_errors() {
        assert_eq!(reject(r#"{"finding": "unused", "by": "r", "note": "n"}"#), "answer: missing");
        assert_eq!(
            reject(
                r#"{"answer": "a", "sentence": "1", "finding": "unused", "by": "r", "note": "n"}"#
            ),
            r#"sentence: expected a non-negative integer, found "1""#
        );
        assert_eq!(
            reject(r#"{"answer": "a", "ref": [1], "finding": "unused", "by": "r", "note": "n"}"#),
            "ref: expected a non-empty string or an integer, found an array"
        );
        assert_eq!(reject(r#"{"answer": "a", "by": "r", "note": "n"}"#), "finding: missing");
        assert!(
            reject(r#"{"answer": "a", "finding": "unsuported", "by": "r", "note": "n"}"#)
                .starts_with(r#"finding: unknown finding kind "unsuported"; known kinds: dead, "#)
        );
        assert!(
            reject(r#"{"answer": "a", "finding": "rejected_line", "by": "r", "note": "n"}"#)
                .starts_with("finding: a rejected line cannot be waived")
        );
        assert_eq!(reject(r#"{"answer": "a", "finding": "unused", "note": "n"}"#), "by: missing");
        assert_eq!(
            reject(r#"{"answer": "a", "finding": "unused", "by": "", "note": "n"}"#),
            r#"by: expected a non-empty string, found """#
        );
        assert_eq!(reject(r#"{"answer": "a", "finding": "unused", "by": "r"}"#), "note: missing");
        assert_eq!(
            reject(r#"{"answer": "a", "finding": "unused", "by": "r", "note": " "}"#),
            "note: must say why the finding is waived"
        );
        assert_eq!(reject("[]"), "expected an object, found an array");
        let mut bad = LINE.as_bytes().to_vec();
        bad[2] = 0xFF;
        let (_, rejected) = read_decisions(&bad[..], Path::new("x")).unwrap();
        assert!(rejected[0].error.starts_with("invalid UTF-8"));
    }

    #[test]
    fn repeated_decisions_are_rejected() {
        let (decisions, rejected) = read(&format!("{LINE}\n{LINE}\n"));
        assert_eq!(decisions.len(), 1);
        assert_eq!(
            rejected[0],
            Rejected { line: 2, error: "repeats the decision on line 1".into() }
        );
    }

    fn decision(sentence: Option<usize>, r#ref: Option<&str>) -> Decision {
        Decision {
            line: 1,
            answer: "a-1".into(),
            sentence,
            r#ref: r#ref.map(str::to_owned),
            finding: "unsupported".into(),
            by: "rev".into(),
            note: "ok".into(),
        }
    }

    #[test]
    fn matching() {
        let any = decision(None, None);
        assert!(any.matches("a-1", "unsupported", Some(0), None));
        assert!(any.matches("a-1", "unsupported", Some(7), Some("2")));
        assert!(any.matches("a-1", "unsupported", None, None));
        assert!(!any.matches("a-2", "unsupported", Some(0), None));
        assert!(!any.matches("a-1", "partial", Some(0), None));

        let one = decision(Some(1), None);
        assert!(one.matches("a-1", "unsupported", Some(1), None));
        assert!(one.matches("a-1", "unsupported", Some(1), Some("3")));
        assert!(!one.matches("a-1", "unsupported", Some(2), None));
        assert!(!one.matches("a-1", "unsupported", None, None));

        let cited = decision(Some(1), Some("2"));
        assert!(cited.matches("a-1", "unsupported", Some(1), Some("2")));
        assert!(!cited.matches("a-1", "unsupported", Some(1), Some("3")));
        assert!(!cited.matches("a-1", "unsupported", Some(1), None));

        let by_ref = decision(None, Some("2"));
        assert!(by_ref.matches("a-1", "unsupported", None, Some("2")));
        assert!(by_ref.matches("a-1", "unsupported", Some(4), Some("2")));
        assert!(!by_ref.matches("a-1", "unsupported", None, None));
    }

    #[test]
    fn serialises_without_absent_fields() {
        let v = serde_json::to_value(decision(None, Some("2"))).unwrap();
        assert_eq!(v["ref"], "2");
        assert!(v.get("sentence").is_none());
    }

    #[test]
    fn load_names_the_file() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("accept.jsonl");
        std::fs::write(&path, format!("{LINE}\n")).unwrap();
        assert_eq!(load_decisions(&path).unwrap().0.len(), 1);
        let e = load_decisions(dir.path().join("gone.jsonl")).unwrap_err();
        assert!(e.to_string().contains("gone.jsonl: cannot read"), "{e}");
    }
}
