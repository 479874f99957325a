//! SARIF 2.1.0 (`--sarif`, OASIS Static Analysis Results Interchange Format): one rule
//! per finding kind, one result per finding located at its line of the answers file, with
//! `partialFingerprints` that stay the same across runs for the same answer id, sentence
//! text (or citation ref) and kind.

use serde_json::{Value, json};
use sha2::{Digest, Sha256};

use crate::findings::{KIND_DESCRIPTIONS, Report, Severity};
use crate::run::hex;

/// Renders the SARIF log as pretty JSON.
pub fn render(report: &Report) -> serde_json::Result<Vec<u8>> {
    let rules: Vec<Value> = KIND_DESCRIPTIONS
        .iter()
        .map(|(kind, desc)| {
            let level = match crate::check::severity_of(kind) {
                Severity::Error => "error",
                Severity::Warning => "warning",
            };
            json!({
                "id": kind,
                "name": kind,
                "shortDescription": {"text": desc},
                "fullDescription": {"text": desc},
                "help": {"text": format!("{desc} A lexical check is evidence for a reviewer, not proof; open the HTML report for the evidence window.")},
                "defaultConfiguration": {"level": level}
            })
        })
        .collect();
    let index_of = |kind: &str| KIND_DESCRIPTIONS.iter().position(|(k, _)| *k == kind);
    let uri = report.inputs.answers.path.clone();
    let mut results = Vec::new();
    for a in &report.answers {
        for f in &a.findings {
            let subject = match (f.sentence.and_then(|i| a.sentences.get(i)), &f.r#ref) {
                (Some(s), _) => s.text.clone(),
                (None, Some(r)) => format!("ref:{r}"),
                (None, None) => String::new(),
            };
            let mut h = Sha256::new();
            h.update(a.id.as_bytes());
            h.update([0]);
            h.update(subject.as_bytes());
            h.update([0]);
            h.update(f.kind.as_bytes());
            let level = match f.severity {
                Severity::Error => "error",
                Severity::Warning => "warning",
            };
            let mut result = json!({
                "ruleId": f.kind,
                "level": if f.accepted.is_some() { "note" } else { level },
                "message": {"text": format!("answer {}: {}", a.id, f.message)},
                "locations": [{"physicalLocation": {"artifactLocation": {"uri": uri}, "region": {"startLine": a.line.max(1)}}}],
                "partialFingerprints": {"plumblineFinding/v1": hex(&h.finalize())}
            });
            if let (Some(i), Some(obj)) = (index_of(&f.kind), result.as_object_mut()) {
                obj.insert("ruleIndex".into(), json!(i));
            }
            if let (Some(acc), Some(obj)) = (&f.accepted, result.as_object_mut()) {
                obj.insert(
                    "suppressions".into(),
                    json!([{"kind": "external", "justification": format!("{}: {}", acc.by, acc.note)}]),
                );
            }
            results.push(result);
        }
    }
    for r in &report.rejected {
        results.push(json!({
            "ruleId": "rejected_line",
            "ruleIndex": index_of("rejected_line"),
            "level": "error",
            "message": {"text": r.error},
            "locations": [{"physicalLocation": {"artifactLocation": {"uri": uri}, "region": {"startLine": r.line.max(1)}}}]
        }));
    }
    let log = json!({
        "$schema": "https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json",
        "version": "2.1.0",
        "runs": [{
            "tool": {"driver": {"name": "plumbline", "version": report.tool.version, "rules": rules}},
            "results": results
        }]
    });
    let mut bytes = serde_json::to_vec_pretty(&log)?;
    bytes.push(b'\n');
    Ok(bytes)
}
