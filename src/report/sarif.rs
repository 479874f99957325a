//! SARIF 2.1.0 (`--sarif`; OASIS Standard, "Static Analysis Results Interchange Format
//! Version 2.1.0", errata 01).
//!
//! * One rule (`reportingDescriptor`) per finding kind, in [`KIND_DESCRIPTIONS`] order;
//!   its `id` is the kind's name, which never changes (SPEC.md), with a full description
//!   and help text saying what a reviewer should do, and the kind's default level.
//! * One result per finding, `level` from its severity (`error` / `warning`), located at
//!   its line of the answers file and, for a sentence finding, at the sentence's columns
//!   ([`super::locate`]; UTF-16 code units, the SARIF default `columnKind`). A finding a
//!   reviewer accepted carries an `external` suppression with who and why.
//! * `partialFingerprints["plumblineFinding/v1"]`: SHA-256 of the answer id, the finding's
//!   subject (normalised sentence text, or cited document) and kind
//!   ([`crate::identity::fingerprint`]), so that a code-scanning service sees the same
//!   result across runs while the answer keeps that sentence, wherever its line moves.
//! * One `error` result per line of the answers file that could not be read.
//!
//! Validated against the OASIS schema in `tests/integration/formats.rs`.

use std::collections::HashMap;

use serde_json::{Value, json};

use super::locate::SentenceColumns;
use crate::findings::{KIND_DESCRIPTIONS, Report, Severity};
use crate::identity::{Subject, fingerprint};

/// What a reviewer should do about a finding of each kind (the rule's help text).
fn guidance(kind: &str) -> &'static str {
    match kind {
        "unsupported" => {
            "Read the evidence window in the HTML report. If the cited passage carries the sentence in other words, accept the finding with a reviewer decision; otherwise correct the answer or cite a passage that carries it."
        }
        "partial" => {
            "Find the part of the sentence the cited passage does not carry (unmarked words in the report's evidence) and check it against the source."
        }
        "number_mismatch" => {
            "Compare the figure in the sentence with the evidence: a changed amount, date, time or percentage is a factual error unless the source states it another way."
        }
        "changed_term" => {
            "Check the swapped word against the evidence: an opposite, another quantifier or another identifier changes what the sentence claims."
        }
        "negation_mismatch" => {
            "Check whether the sentence or its evidence is negated: the answer may say the opposite of its source."
        }
        "restricted_match" => {
            "The sentence closely matches a document the asking user may not read: treat it as a possible disclosure and review who may see the answer."
        }
        "misattributed" => {
            "Another document carries the sentence clearly better than the one cited: cite that document, or check why the cited one was used."
        }
        "unknown_ref" => {
            "A marker names a citation the answer does not carry: fix the marker or add the citation."
        }
        "uncited" => {
            "The sentence makes a claim without a citation marker while the answer uses markers elsewhere: add the citation or confirm the claim needs none."
        }
        "dead" => {
            "The cited document is not in the store (or the path leads outside it): fix the citation or add the document."
        }
        "bad_locator" => {
            "The citation's offsets or chunk do not resolve in the document: fix the locator."
        }
        "quote_mismatch" => {
            "The quoted text does not occur in the cited passage: the assistant may have misquoted its source."
        }
        "stale" => {
            "The document changed after the assistant saw it: check the answer against the current version."
        }
        "forbidden" => {
            "The asking user's groups may not read the cited document: an entitlement breach to review before release."
        }
        "access_unknown" => {
            "The cited document has no access list: give it one in the store's manifest so that entitlements can be decided."
        }
        "principal_unknown" => {
            "The asking user's groups are unknown: give them in the answer record or the principals file."
        }
        "unused" => {
            "The citation supports no sentence: remove it or tie it to the sentence it was meant for."
        }
        "below_approved_rouge_l" => {
            "ROUGE is recall-oriented: a low ROUGE-L says the answer leaves out or reorders much of the approved answer's wording. Compare the two answers; a faithful rewording can be accepted."
        }
        "below_approved_bleu" => {
            "BLEU is precision-oriented: a low BLEU says much of the answer's wording is not in the approved answer. Compare the two answers for added or changed claims."
        }
        "rejected_line" => {
            "The line could not be read as an answer; the reason names the field. Fix the assistant's log writer."
        }
        _ => "",
    }
}

/// The level of a finding kind when no other information is at hand. The regression kinds
/// are warnings ([`crate::regression`]); the others follow [`crate::check::severity_of`].
fn default_level(kind: &str) -> &'static str {
    if crate::regression::is_regression_kind(kind) {
        return "warning";
    }
    match crate::check::severity_of(kind) {
        Severity::Error => "error",
        Severity::Warning => "warning",
    }
}

/// Percent-encodes a path into a URI reference (RFC 3986): unreserved characters and `/`
/// stay, every other byte is `%XX`.
pub fn uri_reference(path: &str) -> String {
    let mut out = String::with_capacity(path.len());
    for &b in path.as_bytes() {
        if b.is_ascii_alphanumeric() || b"-._~/".contains(&b) {
            out.push(b as char);
        } else {
            out.push_str(&format!("%{b:02X}"));
        }
    }
    out
}

/// Renders the SARIF log as pretty JSON, without sentence columns.
pub fn render(report: &Report) -> serde_json::Result<Vec<u8>> {
    render_located(report, None)
}

/// Renders the SARIF log; `columns` (from [`super::locate::locate`]) adds each sentence
/// finding's column range.
pub fn render_located(
    report: &Report,
    columns: Option<&SentenceColumns>,
) -> serde_json::Result<Vec<u8>> {
    let rules: Vec<Value> = KIND_DESCRIPTIONS
        .iter()
        .map(|(kind, desc)| {
            json!({
                "id": kind,
                "name": kind,
                "shortDescription": {"text": desc},
                "fullDescription": {"text": desc},
                "help": {"text": format!("{} A lexical check is evidence for a reviewer, not proof: the HTML report shows the evidence, and the reviewer decides.", guidance(kind))},
                "defaultConfiguration": {"level": default_level(kind)}
            })
        })
        .collect();
    let index_of = |kind: &str| KIND_DESCRIPTIONS.iter().position(|(k, _)| *k == kind);
    let uri = uri_reference(&report.inputs.answers.path);
    let location = |line: usize, cols: Option<(usize, usize)>| {
        let mut region = json!({"startLine": line.max(1)});
        if let Some((start, end)) = cols {
            region["startColumn"] = json!(start);
            region["endColumn"] = json!(end);
        }
        json!([{"physicalLocation": {"artifactLocation": {"uri": uri, "index": 0}, "region": region}}])
    };
    let mut results = Vec::new();
    for (ai, a) in report.answers.iter().enumerate() {
        let mut repeats: HashMap<(String, String), usize> = HashMap::new();
        for f in &a.findings {
            let subject = Subject::of(a, f);
            let seen = repeats.entry((f.kind.clone(), subject.key())).or_default();
            *seen += 1;
            let sentence = f.sentence.and_then(|i| a.sentences.get(i));
            // The finding's own message, then the sentence in full where the message does
            // not already quote it.
            let mut text = format!("answer {}: {}.", a.id, f.message.trim_end_matches('.'));
            if let Some(s) = sentence {
                let head: String = s.text.chars().take(30).collect();
                if !f.message.contains(&head) {
                    text.push_str(&format!(" Sentence {}: \"{}\"", s.index + 1, s.text));
                }
            }
            let cols = f.sentence.and_then(|i| {
                columns.and_then(|c| c.get(&ai)).and_then(|v| v.get(i).copied().flatten())
            });
            let level = match f.severity {
                Severity::Error => "error",
                Severity::Warning => "warning",
            };
            let mut result = json!({
                "ruleId": f.kind,
                "level": level,
                "message": {"text": text},
                "locations": location(a.line, cols),
                "partialFingerprints": {
                    "plumblineFinding/v1": fingerprint(&a.id, &subject, &f.kind, *seen)
                }
            });
            if let Some(i) = index_of(&f.kind) {
                result["ruleIndex"] = json!(i);
            }
            if let Some(acc) = &f.accepted {
                result["suppressions"] = json!([{
                    "kind": "external",
                    "status": "accepted",
                    "justification": format!("accepted by {}: {}", acc.by, acc.note)
                }]);
            }
            results.push(result);
        }
    }
    for r in &report.rejected {
        let mut result = json!({
            "ruleId": "rejected_line",
            "level": "error",
            "message": {"text": format!("line {}: {}", r.line, r.error)},
            "locations": location(r.line, None)
        });
        if let Some(i) = index_of("rejected_line") {
            result["ruleIndex"] = json!(i);
        }
        results.push(result);
    }
    let log = json!({
        "$schema": "https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json",
        "version": "2.1.0",
        "runs": [{
            "tool": {"driver": {
                "name": "plumbline",
                "version": report.tool.version,
                "semanticVersion": report.tool.version,
                "rules": rules
            }},
            "invocations": [{
                "executionSuccessful": true,
                "arguments": report.command,
                "endTimeUtc": report.generated_at
            }],
            "artifacts": [{
                "location": {"uri": uri},
                "length": report.inputs.answers.size,
                "hashes": {"sha-256": report.inputs.answers.sha256},
                "roles": ["analysisTarget"],
                "mimeType": "application/jsonl"
            }],
            "columnKind": "utf16CodeUnits",
            "results": results
        }]
    });
    let mut bytes = serde_json::to_vec_pretty(&log)?;
    bytes.push(b'\n');
    Ok(bytes)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_kind_has_guidance_and_uris_are_references() {
        for (kind, _) in KIND_DESCRIPTIONS {
            assert!(!guidance(kind).is_empty(), "{kind}");
        }
        assert_eq!(uri_reference("logs/answers 1.jsonl"), "logs/answers%201.jsonl");
        assert_eq!(uri_reference("/tmp/é"), "/tmp/%C3%A9");
        assert_eq!(uri_reference("a#b?c"), "a%23b%3Fc");
    }
}
