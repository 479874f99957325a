//! The built binary's `score --pairs` against the committed reference vectors.
//!
//! Oracle: as in `oracle_metrics` — rouge-score 0.1.2, sacrebleu 2.6.0 and
//! rapidfuzz 3.14.6 (PyPI), values in tests/data/oracle/pairs.jsonl.

use std::io::Write;
use std::process::Command;

use serde_json::{Value, json};

use crate::common::{Mismatches, close, f, read_jsonl, s, u};

const BIN: &str = env!("CARGO_BIN_EXE_plumbline");

/// Writes `lines` to a temporary JSON-lines file and runs `score --pairs` on it.
fn score_pairs(lines: &[String]) -> (std::process::Output, Vec<Value>) {
    let mut file = tempfile::NamedTempFile::new().expect("temp file");
    for l in lines {
        writeln!(file, "{l}").unwrap();
    }
    file.flush().unwrap();
    let out = Command::new(BIN)
        .args(["score", "--pairs"])
        .arg(file.path())
        .args(["--tokenizer", "ascii-alnum"])
        .output()
        .expect("run plumbline");
    let stdout = String::from_utf8(out.stdout.clone()).expect("stdout is UTF-8");
    let parsed = stdout
        .lines()
        .filter(|l| !l.trim().is_empty())
        .map(|l| {
            serde_json::from_str(l).unwrap_or_else(|e| panic!("output line is not JSON ({e}): {l}"))
        })
        .collect();
    (out, parsed)
}

fn input_line(pair: &Value) -> String {
    json!({"id": pair["id"], "candidate": pair["candidate"], "reference": pair["reference"]})
        .to_string()
}

/// Differences between one output line and the reference values.
fn diffs(e: &Value, got: &Value) -> Vec<String> {
    let mut d = Vec::new();
    if let Some(err) = got.get("error") {
        return vec![format!("error line: {err}")];
    }
    for k in ["rouge1", "rouge2", "rougeL"] {
        for m in ["precision", "recall", "f"] {
            if !close(f(&got[k][m]), f(&e[k][m])) {
                d.push(format!("{k}.{m} ours {} theirs {}", got[k][m], e[k][m]));
            }
        }
    }
    let (gb, eb) = (&got["bleu"], &e["bleu"]);
    for m in ["score", "bp"] {
        if !close(f(&gb[m]), f(&eb[m])) {
            d.push(format!("bleu.{m} ours {} theirs {}", gb[m], eb[m]));
        }
    }
    for i in 0..4 {
        if !close(f(&gb["precisions"][i]), f(&eb["precisions"][i])) {
            d.push(format!(
                "bleu.precisions[{i}] ours {} theirs {}",
                gb["precisions"][i], eb["precisions"][i]
            ));
        }
    }
    for m in ["sys_len", "ref_len"] {
        if u(&gb[m]) != u(&eb[m]) {
            d.push(format!("bleu.{m} ours {} theirs {}", gb[m], eb[m]));
        }
    }
    if u(&got["levenshtein"]["distance"]) != u(&e["levenshtein"]) {
        d.push(format!(
            "levenshtein.distance ours {} theirs {}",
            got["levenshtein"]["distance"], e["levenshtein"]
        ));
    }
    if !close(f(&got["levenshtein"]["similarity"]), f(&e["levenshtein_similarity"])) {
        d.push(format!(
            "levenshtein.similarity ours {} theirs {}",
            got["levenshtein"]["similarity"], e["levenshtein_similarity"]
        ));
    }
    if !close(f(&got["jaro_winkler"]), f(&e["jaro_winkler"])) {
        d.push(format!("jaro_winkler ours {} theirs {}", got["jaro_winkler"], e["jaro_winkler"]));
    }
    d
}

#[test]
fn score_pairs_on_vector_file_equals_references() {
    let pairs = read_jsonl("oracle/pairs.jsonl");
    let lines: Vec<String> = pairs.iter().map(input_line).collect();
    let (out, got) = score_pairs(&lines);
    assert!(
        out.status.success(),
        "plumbline exited {:?}: {}",
        out.status,
        String::from_utf8_lossy(&out.stderr)
    );
    assert_eq!(got.len(), pairs.len(), "one output line per input line");
    let mut m = Mismatches::default();
    for (pair, g) in pairs.iter().zip(&got) {
        let id_ok = g["id"] == pair["id"];
        let d = if id_ok {
            diffs(&pair["expected"], g)
        } else {
            vec![format!("id {} in output order", g["id"])]
        };
        m.check(d.is_empty(), || {
            format!(
                "{} cand={:?} ref={:?}: {}",
                s(&pair["id"]),
                s(&pair["candidate"]),
                s(&pair["reference"]),
                d.join("; ")
            )
        });
    }
    m.finish("plumbline score --pairs vs references");
}

#[test]
fn a_bad_line_yields_an_error_line_and_the_rest_are_scored() {
    let pairs = read_jsonl("oracle/pairs.jsonl");
    let good: Vec<&Value> = pairs.iter().filter(|p| s(&p["id"]).contains("paper-lin")).collect();
    assert_eq!(good.len(), 2);
    let lines = vec![
        input_line(good[0]),
        "{ this is not JSON".to_owned(),
        json!({"id": "no-reference", "candidate": "a b c"}).to_string(),
        input_line(good[1]),
    ];
    let (out, got) = score_pairs(&lines);
    assert_eq!(
        got.len(),
        4,
        "one output line per input line: {got:?} (stderr: {})",
        String::from_utf8_lossy(&out.stderr)
    );

    // Lines 1 and 4 are scored as usual, and agree with the references.
    for (g, pair) in [(&got[0], good[0]), (&got[3], good[1])] {
        assert_eq!(g["id"], pair["id"]);
        let d = diffs(&pair["expected"], g);
        assert!(d.is_empty(), "{}: {}", s(&pair["id"]), d.join("; "));
    }
    // Line 2 is not JSON: an error naming line 2.
    assert_eq!(got[1]["line"], json!(2), "{}", got[1]);
    assert!(got[1]["error"].as_str().is_some_and(|e| !e.is_empty()), "{}", got[1]);
    // Line 3 is JSON but lacks the reference: an error naming line 3 (and its id, if given).
    assert_eq!(got[2]["line"], json!(3), "{}", got[2]);
    assert!(got[2]["error"].as_str().is_some_and(|e| !e.is_empty()), "{}", got[2]);
    if let Some(id) = got[2].get("id") {
        assert_eq!(id, &json!("no-reference"), "{}", got[2]);
    }
    assert!(got[2].get("rouge1").is_none(), "an error line carries no scores: {}", got[2]);
}
