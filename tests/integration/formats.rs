//! The CI outputs against their published schemas and readers:
//!
//! * JUnit XML against the Jenkins `junit-4.xsd` (vendored in `tests/data/schemas/`, its
//!   source in the README there) with `xmllint --schema` from Debian's `libxml2-utils`,
//!   and read back with the `junit-parser` crate;
//! * SARIF against the OASIS SARIF 2.1.0 JSON schema (vendored beside it), with the
//!   `jsonschema` crate; plus the properties the issue asks of it: one rule per kind,
//!   results at the answers file's line and the sentence's columns, fingerprints that
//!   survive a reordered and regenerated log.
//!
//! Each validator is also shown a broken document, so that a validator that accepted
//! everything would fail these tests.

use std::collections::{BTreeSet, HashMap};
use std::io::Write as _;
use std::path::{Path, PathBuf};
use std::process::Command;

use serde_json::{Value, json};

use crate::common::data_path;

const BIN: &str = env!("CARGO_BIN_EXE_plumbline");

fn project(rel: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(rel)
}

/// Runs `check` on a scenario folder (`store/`, `answers.jsonl`, optional
/// `principals.json`, `decisions.jsonl`) writing JSON, JUnit and SARIF into `out`.
fn check_scenario(dir: &Path, out: &Path) -> i32 {
    let mut cmd = Command::new(BIN);
    cmd.arg("check")
        .arg("--quiet")
        .arg("--store")
        .arg(dir.join("store"))
        .arg("--answers")
        .arg(dir.join("answers.jsonl"));
    for (opt, name) in [("--principals", "principals.json"), ("--accept", "decisions.jsonl")] {
        if dir.join(name).is_file() {
            cmd.arg(opt).arg(dir.join(name));
        }
    }
    cmd.arg("--json")
        .arg(out.join("findings.json"))
        .arg("--junit")
        .arg(out.join("junit.xml"))
        .arg("--sarif")
        .arg(out.join("findings.sarif"));
    let o = cmd.output().expect("run plumbline");
    assert!(
        out.join("junit.xml").is_file(),
        "no JUnit written: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    o.status.code().unwrap_or(-1)
}

fn read_json(p: &Path) -> Value {
    let t = std::fs::read_to_string(p).unwrap_or_else(|e| panic!("{}: {e}", p.display()));
    serde_json::from_str(&t).unwrap_or_else(|e| panic!("{}: {e}", p.display()))
}

/// The demo scenario and the hostile fixture, checked into a temporary folder each.
fn scenarios() -> Vec<(&'static str, tempfile::TempDir)> {
    [("demo", project("demo")), ("hostile", data_path("report/hostile"))]
        .into_iter()
        .map(|(name, dir)| {
            let out = tempfile::tempdir().expect("temp dir");
            assert_eq!(check_scenario(&dir, out.path()), 1, "{name} fails its gate by design");
            (name, out)
        })
        .collect()
}

// ---------------------------------------------------------------------------------------
// JUnit

/// `xmllint --noout --schema junit-4.xsd FILE`: Ok, Err(its message), or None when
/// xmllint is not installed (a failure where `PLUMBLINE_REQUIRE_TOOLS=1`, as in CI).
fn xmllint(file: &Path) -> Option<Result<(), String>> {
    let schema = data_path("schemas/junit-4.xsd");
    match Command::new("xmllint").arg("--noout").arg("--schema").arg(&schema).arg(file).output() {
        Ok(o) if o.status.success() => Some(Ok(())),
        Ok(o) => Some(Err(String::from_utf8_lossy(&o.stderr).into_owned())),
        Err(e) => {
            assert!(
                std::env::var_os("PLUMBLINE_REQUIRE_TOOLS").is_none(),
                "xmllint is required (PLUMBLINE_REQUIRE_TOOLS is set) but cannot run: {e}"
            );
            eprintln!(
                "NOTICE: xmllint not found ({e}); install Debian's libxml2-utils to validate JUnit against junit-4.xsd. Skipped."
            );
            None
        }
    }
}

#[test]
fn junit_validates_against_the_jenkins_schema() {
    for (name, out) in scenarios() {
        match xmllint(&out.path().join("junit.xml")) {
            None => return,
            Some(r) => r.unwrap_or_else(|e| panic!("{name}: JUnit does not validate: {e}")),
        }
    }
    // Control: a document the schema forbids (a testcase without its required name, and a
    // failure before an error) is refused, so the check above can fail.
    let mut bad = tempfile::NamedTempFile::new().expect("temp file");
    write!(
        bad,
        "<?xml version=\"1.0\"?><testsuites><testsuite name=\"s\" tests=\"1\"><testcase classname=\"c\"><failure/><error/></testcase></testsuite></testsuites>"
    )
    .unwrap();
    let refused = xmllint(bad.path()).expect("xmllint ran above");
    assert!(refused.is_err(), "xmllint accepted an invalid JUnit document");
}

#[test]
fn junit_reads_back_with_a_junit_parser() {
    for (name, out) in scenarios() {
        let findings = read_json(&out.path().join("findings.json"));
        let xml = std::fs::read(out.path().join("junit.xml")).expect("junit");
        let suites = junit_parser::from_reader(std::io::Cursor::new(xml))
            .unwrap_or_else(|e| panic!("{name}: junit-parser cannot read it: {e}"));
        let answers = findings["answers"].as_array().expect("answers");
        let rejected = findings["rejected"].as_array().expect("rejected");
        assert_eq!(suites.suites.len(), 1, "{name}");
        let suite = &suites.suites[0];
        assert_eq!(
            suite.cases.len(),
            answers.len() + rejected.len(),
            "{name}: one case per answer and per rejected line"
        );
        assert_eq!(suites.tests as usize, answers.len() + rejected.len());
        assert_eq!(suites.errors as usize, rejected.len());
        let failing = answers.iter().filter(|a| a["passed"] == false).count();
        assert_eq!(suites.failures as usize, failing, "{name}");
        assert_eq!(suite.failures as usize, failing, "{name}");
        for (case, a) in suite.cases.iter().zip(answers) {
            // Names come back exactly, hostile ids included.
            assert_eq!(case.original_name, a["id"].as_str().unwrap(), "{name}");
            assert_eq!(case.classname.as_deref(), Some("answers"));
            let gate: Vec<&Value> =
                a["findings"].as_array().unwrap().iter().filter(|f| f["gate"] == true).collect();
            if gate.is_empty() {
                assert!(case.status.is_success(), "{name}: {} should pass", case.original_name);
            } else {
                assert!(case.status.is_failure(), "{name}: {} should fail", case.original_name);
                // junit-parser keeps the last failure of a testcase.
                let last = gate[gate.len() - 1];
                let fl = case.status.failure_as_ref();
                assert_eq!(fl.failure_type, last["kind"].as_str().unwrap());
                assert_eq!(fl.message, last["message"].as_str().unwrap());
                let line = format!("line {} of the answers file", a["line"]);
                assert!(fl.text.contains(&line), "{name}: {:?}", fl.text);
                if let Some(i) = last["sentence"].as_u64() {
                    let text = a["sentences"][i as usize]["text"].as_str().unwrap();
                    // A "]]>" in the text has to be split across two CDATA sections;
                    // junit-parser joins the two with a line break. (The exact text is
                    // checked with a general XML parser in `report_formats`.)
                    let read = fl.text.replace("]]\n>", "]]>");
                    assert!(
                        read.contains(text),
                        "{name}: the failure names its sentence {text:?}: {:?}",
                        fl.text
                    );
                }
            }
        }
        // One failure element per finding that fails the gate.
        let gate_findings = answers
            .iter()
            .flat_map(|a| a["findings"].as_array().unwrap())
            .filter(|f| f["gate"] == true)
            .count();
        let text = std::fs::read_to_string(out.path().join("junit.xml")).unwrap();
        assert_eq!(text.matches("<failure ").count(), gate_findings, "{name}");
        for (case, r) in suite.cases[answers.len()..].iter().zip(rejected) {
            assert!(case.status.is_error(), "{name}: a rejected line is an error case");
            assert_eq!(case.original_name, format!("line {}", r["line"]));
            assert_eq!(case.status.error_as_ref().message, r["error"].as_str().unwrap());
        }
    }
}

// ---------------------------------------------------------------------------------------
// SARIF

fn sarif_validator() -> jsonschema::Validator {
    let schema = read_json(&data_path("schemas/sarif-schema-2.1.0.json"));
    jsonschema::options()
        .with_draft(jsonschema::Draft::Draft4)
        .should_validate_formats(true)
        .build(&schema)
        .expect("the OASIS schema compiles")
}

fn schema_errors(v: &jsonschema::Validator, doc: &Value) -> Vec<String> {
    v.iter_errors(doc).map(|e| format!("{} at {}", e, e.instance_path())).collect()
}

#[test]
fn sarif_validates_against_the_oasis_schema() {
    let v = sarif_validator();
    for (name, out) in scenarios() {
        let doc = read_json(&out.path().join("findings.sarif"));
        let errors = schema_errors(&v, &doc);
        assert!(errors.is_empty(), "{name}: {errors:#?}");
        assert!(!doc["runs"][0]["results"].as_array().unwrap().is_empty());

        // Controls: the same document broken in three ways the schema forbids.
        let mut bad = doc.clone();
        bad["runs"][0]["results"][0]["level"] = json!("fatal");
        assert!(!schema_errors(&v, &bad).is_empty(), "an unknown level was accepted");
        let mut bad = doc.clone();
        bad["runs"][0]["results"][0].as_object_mut().unwrap().remove("message");
        assert!(!schema_errors(&v, &bad).is_empty(), "a result without message was accepted");
        let mut bad = doc.clone();
        bad["runs"][0]["results"][0]["locations"][0]["physicalLocation"]["region"]["startLine"] =
            json!(0);
        assert!(!schema_errors(&v, &bad).is_empty(), "line 0 was accepted");
    }
}

#[test]
fn sarif_rules_results_and_levels() {
    let (_, out) = scenarios().remove(0);
    let findings = read_json(&out.path().join("findings.json"));
    let doc = read_json(&out.path().join("findings.sarif"));
    let run = &doc["runs"][0];
    let rules = run["tool"]["driver"]["rules"].as_array().unwrap();
    let ids: Vec<&str> = rules.iter().map(|r| r["id"].as_str().unwrap()).collect();
    let unique: BTreeSet<&str> = ids.iter().copied().collect();
    assert_eq!(unique.len(), ids.len(), "one rule per kind");
    for kind in plumbline::config::FINDING_KINDS {
        assert!(unique.contains(kind), "no rule for {kind}");
    }
    for r in rules {
        for field in ["fullDescription", "help", "shortDescription"] {
            assert!(
                r[field]["text"].as_str().is_some_and(|t| t.len() > 20),
                "{}: {field}",
                r["id"]
            );
        }
    }
    // One result per finding and per rejected line, each pointing at its rule.
    let answers = findings["answers"].as_array().unwrap();
    let n_findings: usize = answers.iter().map(|a| a["findings"].as_array().unwrap().len()).sum();
    let results = run["results"].as_array().unwrap();
    assert_eq!(results.len(), n_findings + findings["rejected"].as_array().unwrap().len());
    let mut k = 0;
    for a in answers {
        for f in a["findings"].as_array().unwrap() {
            let r = &results[k];
            k += 1;
            assert_eq!(r["ruleId"], f["kind"]);
            assert_eq!(rules[r["ruleIndex"].as_u64().unwrap() as usize]["id"], f["kind"]);
            assert_eq!(r["level"], f["severity"], "level from the severity");
            assert_eq!(r["locations"][0]["physicalLocation"]["region"]["startLine"], a["line"]);
            assert_eq!(r["suppressions"].is_array(), f.get("accepted").is_some());
            assert!(
                r["message"]["text"]
                    .as_str()
                    .unwrap()
                    .contains(f["message"].as_str().unwrap().trim_end_matches('.'))
            );
        }
    }
}

/// The text at UTF-16 columns `[start, end)` (1-based) of a line.
fn columns(line: &str, start: usize, end: usize) -> String {
    let units: Vec<u16> = line.encode_utf16().collect();
    String::from_utf16(&units[start - 1..end - 1]).expect("whole characters")
}

#[test]
fn sarif_columns_cover_the_sentence_in_the_answers_file() {
    let (_, out) = scenarios().remove(0);
    let findings = read_json(&out.path().join("findings.json"));
    let doc = read_json(&out.path().join("findings.sarif"));
    let log = std::fs::read_to_string(project("demo/answers.jsonl")).unwrap();
    let lines: Vec<&str> = log.lines().collect();
    let results = doc["runs"][0]["results"].as_array().unwrap();
    let mut k = 0;
    let mut located = 0;
    for a in findings["answers"].as_array().unwrap() {
        for f in a["findings"].as_array().unwrap() {
            let region = &results[k]["locations"][0]["physicalLocation"]["region"];
            k += 1;
            let Some(i) = f["sentence"].as_u64() else {
                assert!(region.get("startColumn").is_none(), "only sentence findings have columns");
                continue;
            };
            let s = &a["sentences"][i as usize];
            let span = &a["answer"].as_str().unwrap()[s["span"]["start"].as_u64().unwrap() as usize
                ..s["span"]["end"].as_u64().unwrap() as usize];
            let line = lines[a["line"].as_u64().unwrap() as usize - 1];
            let (c0, c1) =
                (region["startColumn"].as_u64().unwrap(), region["endColumn"].as_u64().unwrap());
            let raw = columns(line, c0 as usize, c1 as usize);
            // The raw JSON of the sentence decodes to the sentence (escapes aside).
            let decoded: String =
                serde_json::from_str(&format!("\"{raw}\"")).expect("a JSON string piece");
            assert_eq!(decoded, span);
            located += 1;
        }
    }
    assert!(located > 20, "{located} sentence findings located");
}

#[test]
fn sarif_fingerprints_survive_a_reordered_regenerated_log() {
    let dir = tempfile::tempdir().unwrap();
    let store = dir.path().join("store");
    std::fs::create_dir(&store).unwrap();
    std::fs::write(
        store.join("warranty.md"),
        "Warranty claims stay open for 45 days from the date of purchase. After that they close automatically.\n",
    )
    .unwrap();
    let cite = json!([{"ref": "1", "doc": "warranty.md"}]);
    let a1 = json!({"id": "a-1", "answer": "Warranty claims stay open for 54 days [1]. Agents fly to the moon [1].", "citations": cite});
    let a2 = json!({"id": "a-2", "answer": "Claims are closed by hand [2].", "citations": [{"ref": "2", "doc": "missing.md"}]});
    // Run two: other order, a new answer first, a sentence added at the front of a-1 and
    // its spacing and case changed, a-2's citation renumbered.
    let a1b = json!({"id": "a-1", "answer": "Hello. WARRANTY claims stay  open for 54 days [1]. Agents fly to the moon [1].", "citations": cite});
    let a2b = json!({"id": "a-2", "answer": "Claims are closed by hand [7].", "citations": [{"ref": "7", "doc": "missing.md"}]});
    let a0 = json!({"id": "a-0", "answer": "Agents fly to the moon [1].", "citations": cite});
    let run = |name: &str, lines: &[&Value]| -> Vec<(String, String, String)> {
        let answers = dir.path().join(format!("{name}.jsonl"));
        let text: String = lines.iter().map(|l| format!("{l}\n")).collect();
        std::fs::write(&answers, text).unwrap();
        let sarif = dir.path().join(format!("{name}.sarif"));
        let o = Command::new(BIN)
            .args(["check", "--quiet", "--store"])
            .arg(&store)
            .arg("--answers")
            .arg(&answers)
            .arg("--sarif")
            .arg(&sarif)
            .output()
            .unwrap();
        assert_eq!(o.status.code(), Some(1), "{}", String::from_utf8_lossy(&o.stderr));
        read_json(&sarif)["runs"][0]["results"]
            .as_array()
            .unwrap()
            .iter()
            .map(|r| {
                (
                    r["ruleId"].as_str().unwrap().to_owned(),
                    r["message"]["text"].as_str().unwrap().to_owned(),
                    r["partialFingerprints"]["plumblineFinding/v1"].as_str().unwrap().to_owned(),
                )
            })
            .collect()
    };
    let first = run("one", &[&a1, &a2]);
    let second = run("two", &[&a0, &a2b, &a1b]);
    let prints = |rs: &[(String, String, String)]| -> HashMap<String, String> {
        rs.iter().map(|(k, m, p)| (p.clone(), format!("{k}: {m}"))).collect()
    };
    let (p1, p2) = (prints(&first), prints(&second));
    assert_eq!(p1.len(), first.len(), "fingerprints are unique within a run");
    // Every finding of run one is still there in run two, under the same fingerprint.
    for (p, what) in &p1 {
        assert!(p2.contains_key(p), "lost across runs: {what}");
    }
    // And a-0's finding on the same sentence text is a different result (another answer).
    assert!(second.iter().any(|(_, m, p)| m.starts_with("answer a-0") && !p1.contains_key(p)));
    assert!(
        first.iter().any(|(k, _, _)| k == "dead")
            && first.iter().any(|(k, _, _)| k == "number_mismatch")
    );
}
