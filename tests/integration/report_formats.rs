//! The hostile fixture (`tests/data/report/hostile`: script tags, event handlers,
//! `javascript:` and `data:` URLs, CSS injection, unbalanced tags, `</style>`, template
//! syntax, CDATA) through every machine-readable output: each parses with an independent
//! reader and gives every hostile string back exactly. The HTML report is checked by
//! `report.rs` (parsed with `scraper`) and in headless Chromium (`tests/browser`).
//!
//! Readers: `serde_json` for JSON and SARIF, `roxmltree` (a conforming XML 1.0 parser)
//! for JUnit XML. XML 1.0 (§2.2) cannot carry most C0 control characters at all, even
//! as character references; JUnit is the one output that leaves them out, and the test
//! says so.

use std::path::{Path, PathBuf};

use std::process::Command;

use serde_json::{Value, json};

use crate::common::data_path;
use crate::harness::Fixture;

struct Outputs {
    findings: Value,
    junit: String,
    sarif: Value,
    code: i32,
}

fn run(store: &Path, answers: &Path, principals: Option<&Path>) -> Outputs {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = |n: &str| dir.path().join(n);
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_plumbline"));
    cmd.arg("check")
        .arg("--quiet")
        .arg("--store")
        .arg(store)
        .arg("--answers")
        .arg(answers)
        .arg("--json")
        .arg(p("findings.json"))
        .arg("--junit")
        .arg(p("junit.xml"))
        .arg("--sarif")
        .arg(p("out.sarif"));
    if let Some(pr) = principals {
        cmd.arg("--principals").arg(pr);
    }
    let out = cmd.output().expect("run plumbline");
    let read = |n: &str| {
        std::fs::read_to_string(p(n)).unwrap_or_else(|e| {
            panic!("{n}: {e}; stderr: {}", String::from_utf8_lossy(&out.stderr))
        })
    };
    Outputs {
        findings: serde_json::from_str(&read("findings.json")).expect("findings JSON parses"),
        junit: read("junit.xml"),
        sarif: serde_json::from_str(&read("out.sarif")).expect("SARIF parses as JSON"),
        code: out.status.code().unwrap_or(-1),
    }
}

fn hostile() -> (Outputs, PathBuf) {
    let d = data_path("report/hostile");
    let answers = d.join("answers.jsonl");
    (run(&d.join("store"), &answers, Some(&d.join("principals.json"))), answers)
}

fn arr(v: &Value) -> Vec<Value> {
    v.as_array().cloned().unwrap_or_default()
}

/// Every answer of the input comes back in the findings JSON with its id, user, question
/// and answer text exactly as logged.
#[test]
fn json_gives_back_every_hostile_string_exactly() {
    let (out, answers) = hostile();
    assert_eq!(out.code, 1);
    let text = std::fs::read_to_string(answers).expect("answers");
    let mut compared = 0;
    for line in text.lines() {
        let Ok(input) = serde_json::from_str::<Value>(line) else { continue };
        if !input["answer"].is_string() {
            continue;
        }
        let got = arr(&out.findings["answers"])
            .into_iter()
            .find(|a| a["id"] == input["id"])
            .unwrap_or_else(|| panic!("{} missing from the findings", input["id"]));
        for field in ["id", "user", "question", "answer"] {
            assert_eq!(got[field], input[field], "{field} of {}", input["id"]);
        }
        compared += 1;
    }
    assert_eq!(compared, 6, "the hostile answers");
    assert_eq!(
        arr(&out.findings["rejected"]).len(),
        2,
        "the two hostile lines that are not answers"
    );
}

/// JUnit XML parses, with one testcase per answer named by its exact id, one failure per
/// gate finding carrying the finding's kind and message exactly, and one error testcase
/// per rejected line carrying its reason exactly.
#[test]
fn junit_parses_and_gives_back_every_string_exactly() {
    let (out, _) = hostile();
    let doc = roxmltree::Document::parse(&out.junit).expect("JUnit is well-formed XML");
    let cases: Vec<roxmltree::Node<'_, '_>> =
        doc.descendants().filter(|n| n.has_tag_name("testcase")).collect();
    let answers = arr(&out.findings["answers"]);
    let rejected = arr(&out.findings["rejected"]);
    assert_eq!(cases.len(), answers.len() + rejected.len());
    for (case, a) in cases.iter().zip(&answers) {
        assert_eq!(case.attribute("name"), a["id"].as_str(), "testcase name");
        let failures: Vec<(Option<&str>, Option<&str>)> = case
            .children()
            .filter(|n| n.has_tag_name("failure"))
            .map(|f| (f.attribute("type"), f.attribute("message")))
            .collect();
        let want: Vec<(Option<&str>, Option<&str>)> = a["findings"]
            .as_array()
            .into_iter()
            .flatten()
            .filter(|f| f["gate"] == true)
            .map(|f| (f["kind"].as_str(), f["message"].as_str()))
            .collect();
        assert_eq!(failures, want, "failures of {}", a["id"]);
        for f in case.children().filter(|n| n.has_tag_name("failure")) {
            let body = f.text().unwrap_or_default();
            if let Some(s) = body.strip_prefix("sentence ") {
                let (n, text) = s.split_once(": ").expect("sentence N: text");
                let i: usize = n.parse::<usize>().expect("sentence number") - 1;
                let sentence_text = &a["sentences"][i]["text"];
                assert!(
                    text.starts_with(sentence_text.as_str().unwrap_or("?")),
                    "{text:?} vs {sentence_text}"
                );
            }
        }
    }
    for (case, r) in cases[answers.len()..].iter().zip(&rejected) {
        let error = case.children().find(|n| n.has_tag_name("error")).expect("error element");
        assert_eq!(error.attribute("message"), r["error"].as_str());
    }
}

/// SARIF 2.1.0 parses; every result names a declared rule, says which answer, and carries
/// the finding's message exactly; rejected lines carry their reason exactly.
#[test]
fn sarif_parses_and_gives_back_every_string_exactly() {
    let (out, _) = hostile();
    let log = &out.sarif;
    assert_eq!(log["version"], "2.1.0");
    let rules: Vec<String> = arr(&log["runs"][0]["tool"]["driver"]["rules"])
        .iter()
        .filter_map(|r| r["id"].as_str().map(str::to_owned))
        .collect();
    let results = arr(&log["runs"][0]["results"]);
    let mut want: Vec<(String, String)> = Vec::new();
    for a in arr(&out.findings["answers"]) {
        for f in arr(&a["findings"]) {
            let (id, kind) = (a["id"].as_str().unwrap_or("?"), f["kind"].as_str().unwrap_or("?"));
            want.push((
                kind.to_owned(),
                format!("answer {id}: {}", f["message"].as_str().unwrap_or("?")),
            ));
        }
    }
    for r in arr(&out.findings["rejected"]) {
        want.push(("rejected_line".into(), r["error"].as_str().unwrap_or("?").to_owned()));
    }
    let got: Vec<(String, String)> = results
        .iter()
        .map(|r| {
            let rule = r["ruleId"].as_str().unwrap_or("?").to_owned();
            assert!(rules.contains(&rule), "result for undeclared rule {rule}");
            (rule, r["message"]["text"].as_str().unwrap_or("?").to_owned())
        })
        .collect();
    // Each result says its finding's message exactly (SARIF adds where, and for a
    // sentence the sentence itself, around it).
    assert_eq!(got.len(), want.len(), "{got:#?}");
    for ((rule, text), (kind, message)) in got.iter().zip(&want) {
        assert_eq!(rule, kind);
        assert!(text.contains(message.as_str()), "{text:?} should hold {message:?}");
    }
    assert!(
        got.iter().any(|(_, m)| m.contains("h-7{{ 7*7 }}</div></td></table><plaintext>")),
        "the hostile id reaches SARIF intact"
    );
}

/// Control characters, bidirectional overrides and a lone line separator in an answer:
/// JSON and SARIF keep every character; JUnit keeps all those XML 1.0 allows and leaves
/// out only the rest (§2.2), and still parses.
#[test]
fn control_characters_survive_where_the_format_allows() {
    let tricky =
        "Claims \u{1}stay\u{7} open\u{1b}[31m for \u{202e}45\u{202c} days\u{2028}now\u{b} [1].";
    let fx = Fixture::new()
        .doc("w.md", "Claims stay open for 45 days.\n")
        .answer(json!({"id": "c\u{1}1\u{fffe}", "groups": ["x"], "answer": tricky,
            "citations": [{"ref": "1", "doc": "../w.md"}]}));
    let out = run(&fx.store(), &fx.write_answers(), None);
    let a = &out.findings["answers"][0];
    assert_eq!(a["answer"], tricky);
    assert_eq!(a["id"], "c\u{1}1\u{fffe}");
    let doc = roxmltree::Document::parse(&out.junit).expect("JUnit stays well-formed");
    let case = doc.descendants().find(|n| n.has_tag_name("testcase")).expect("testcase");
    assert_eq!(case.attribute("name"), Some("c1"), "U+0001 and U+FFFE cannot be in XML 1.0");
    let failure = case.children().find(|n| n.has_tag_name("failure")).expect("failure");
    let want: String = a["findings"][0]["message"]
        .as_str()
        .unwrap_or_default()
        .chars()
        .filter(|&c| !matches!(c, '\u{0}'..='\u{8}' | '\u{b}' | '\u{c}' | '\u{e}'..='\u{1f}' | '\u{fffe}' | '\u{ffff}'))
        .collect();
    assert_eq!(failure.attribute("message"), Some(want.as_str()));
    let sarif_text = out.sarif["runs"][0]["results"][0]["message"]["text"].as_str().unwrap_or("");
    assert!(sarif_text.starts_with("answer c\u{1}1\u{fffe}: "), "{sarif_text:?}");
}
