//! The demo scenario against its reviewed snapshot.
//!
//! `tests/data/demo/snapshot.json` holds, for every answer of `demo/answers.jsonl`, what a
//! reviewer agreed the check should find: whether the answer passes the gate, each
//! sentence's verdict and flags, each citation's status, which findings a reviewer
//! decision accepts, and the summary counts. It is the answer key of `demo/README.md`
//! in machine-readable form (scores are left out: they may move when the method is
//! tuned; verdicts may not without a reviewer looking). After a deliberate change, run
//!
//! ```sh
//! PLUMBLINE_UPDATE_SNAPSHOT=1 cargo test --test integration demo::
//! ```
//!
//! and review the diff of the snapshot against the answer key before committing it.

use std::process::Command;

use serde_json::{Map, Value, json};

use crate::common::data_path;

const BIN: &str = env!("CARGO_BIN_EXE_plumbline");

/// The reviewed part of a findings document.
fn reduce(findings: &Value) -> Value {
    let mut answers = Map::new();
    for a in findings["answers"].as_array().expect("answers") {
        let sentences: Vec<Value> = a["sentences"]
            .as_array()
            .expect("sentences")
            .iter()
            .map(|s| {
                let mut v = vec![s["verdict"].clone()];
                v.extend(s["flags"].as_array().expect("flags").iter().cloned());
                Value::Array(v)
            })
            .collect();
        let citations: Map<String, Value> = a["citations"]
            .as_array()
            .expect("citations")
            .iter()
            .map(|c| (c["ref"].as_str().expect("ref").to_owned(), c["status"].clone()))
            .collect();
        let accepted: Vec<Value> = a["findings"]
            .as_array()
            .expect("findings")
            .iter()
            .filter(|f| !f["accepted"].is_null())
            .map(|f| json!([f["kind"], f["sentence"], f["ref"]]))
            .collect();
        answers.insert(
            a["id"].as_str().expect("id").to_owned(),
            json!({"passed": a["passed"], "sentences": sentences, "citations": citations,
                   "accepted": accepted}),
        );
    }
    let s = &findings["summary"];
    json!({
        "answers": answers,
        "rejected_lines": findings["rejected"].as_array().expect("rejected").iter().map(|r| r["line"].clone()).collect::<Vec<_>>(),
        "summary": {
            "lines_read": s["lines_read"], "answers_checked": s["answers_checked"],
            "lines_rejected": s["lines_rejected"], "answers_passed": s["answers_passed"],
            "answers_failed": s["answers_failed"], "verdicts": s["verdicts"], "flags": s["flags"],
            "citations": s["citations"], "accepted": s["accepted"], "gate_passed": s["gate"]["passed"],
        },
        "stale_decisions": findings["decisions"]["stale"].as_array().map_or(0, Vec::len),
    })
}

/// The snapshot as JSON with one answer per line, so that a diff reads answer by answer.
fn one_line_per_answer(v: &Value) -> String {
    let mut out = String::from("{\n  \"answers\": {\n");
    let answers = v["answers"].as_object().expect("answers");
    for (i, (id, a)) in answers.iter().enumerate() {
        let comma = if i + 1 < answers.len() { "," } else { "" };
        out.push_str(&format!("    {}: {a}{comma}\n", Value::String(id.clone())));
    }
    out.push_str("  },\n");
    for key in ["rejected_lines", "stale_decisions"] {
        out.push_str(&format!("  \"{key}\": {},\n", v[key]));
    }
    out.push_str(&format!("  \"summary\": {}\n}}\n", v["summary"]));
    out
}

#[test]
fn demo_findings_match_the_reviewed_snapshot() {
    let out = tempfile::tempdir().expect("temp dir");
    let project = env!("CARGO_MANIFEST_DIR");
    let run = Command::new(BIN)
        .current_dir(project)
        .args(["demo", "--out"])
        .arg(out.path())
        .output()
        .expect("run plumbline demo");
    assert_eq!(run.status.code(), Some(0), "{}", String::from_utf8_lossy(&run.stderr));
    let text = std::fs::read_to_string(out.path().join("findings.json")).expect("findings");
    let got = reduce(&serde_json::from_str(&text).expect("findings JSON"));
    let path = data_path("demo/snapshot.json");
    if std::env::var_os("PLUMBLINE_UPDATE_SNAPSHOT").is_some() {
        std::fs::write(&path, one_line_per_answer(&got)).expect("write snapshot");
        return;
    }
    let want: Value = serde_json::from_str(&std::fs::read_to_string(&path).expect("snapshot"))
        .expect("snapshot JSON");
    let mut diffs = Vec::new();
    for (id, w) in want["answers"].as_object().expect("answers") {
        let g = &got["answers"][id];
        if g != w {
            diffs.push(format!("{id}: expected {w}\n        found    {g}"));
        }
    }
    for id in got["answers"].as_object().expect("answers").keys() {
        if want["answers"].get(id).is_none() {
            diffs.push(format!("{id}: not in the snapshot"));
        }
    }
    for key in ["rejected_lines", "summary", "stale_decisions"] {
        if got[key] != want[key] {
            diffs.push(format!("{key}: expected {}\n        found    {}", want[key], got[key]));
        }
    }
    assert!(
        diffs.is_empty(),
        "the demo's findings differ from the reviewed snapshot:\n{}",
        diffs.join("\n")
    );
}
