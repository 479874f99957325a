//! Faults and load, on the real binary: an internal failure while checking one answer,
//! Ctrl-C in the middle of a run, inputs beyond every limit of the `[limits]` table,
//! outputs that cannot all be written, and the findings JSON streamed from the spool
//! against the one written from memory.

use std::io::Write;
use std::path::Path;
use std::process::{Command, Stdio};

use serde_json::{Value, json};

use crate::harness::Fixture;

const BIN: &str = env!("CARGO_BIN_EXE_plumbline");

const WARRANTY: &str = "Warranty claims stay open for 45 days from the date of purchase. \
After that they close automatically.\n";

fn store() -> Fixture {
    Fixture::new()
        .doc("w.md", WARRANTY)
        .doc("manifest.json", &json!({"default_access": ["staff"]}).to_string())
}

/// A supported answer citing the warranty document.
fn answer(id: &str) -> Value {
    json!({"id": id, "groups": ["staff"],
        "answer": "Warranty claims stay open for 45 days from the date of purchase [1].",
        "citations": [{"ref": "1", "doc": "w.md"}]})
}

fn ids(run: &crate::harness::Run) -> Vec<String> {
    run.findings["answers"]
        .as_array()
        .map(|a| a.iter().filter_map(|x| x["id"].as_str().map(str::to_owned)).collect())
        .unwrap_or_default()
}

/// Files in `dir` other than `keep`.
fn others(dir: &Path, keep: &[&str]) -> Vec<String> {
    std::fs::read_dir(dir)
        .expect("read dir")
        .filter_map(|e| e.ok().map(|e| e.file_name().to_string_lossy().into_owned()))
        .filter(|n| !keep.contains(&n.as_str()))
        .collect()
}

#[test]
fn the_control_run_passes() {
    let run = store().answer(answer("a-1")).answer(answer("a-2")).check(&[]);
    assert_eq!(run.code(), 0, "{}", run.stderr());
    assert_eq!(run.findings["summary"]["internal_errors"], 0);
}

/// A panic while checking one answer (made on purpose through a switch that only debug
/// builds have) rejects that answer, naming its id and the cause; the others are checked;
/// and the run fails the gate even where rejected lines are allowed.
#[test]
fn an_internal_failure_rejects_its_answer_and_always_fails_the_gate() {
    for allow in [false, true] {
        let run = store()
            .config(&format!("[gate]\nallow_rejected_lines = {allow}\n"))
            .answer(answer("a-1"))
            .answer(answer("a-2"))
            .answer(answer("a-3"))
            .env("PLUMBLINE_DEBUG_PANIC_ON_ID", "a-2")
            .check(&[]);
        assert_eq!(run.code(), 1, "allow_rejected_lines = {allow}: {}", run.stderr());
        assert_eq!(ids(&run), ["a-1", "a-3"]);
        let s = &run.findings["summary"];
        assert_eq!(
            (&s["lines_read"], &s["answers_checked"], &s["lines_rejected"], &s["internal_errors"]),
            (&json!(3), &json!(2), &json!(1), &json!(1))
        );
        let r = &run.findings["rejected"][0];
        assert_eq!(r["line"], 2);
        assert_eq!(r["internal_error_in"], "a-2");
        let error = r["error"].as_str().unwrap_or_default();
        assert!(
            error.starts_with("answer \"a-2\": internal error while checking: deliberate failure"),
            "{error}"
        );
        let reasons = s["gate"]["reasons"].to_string();
        assert!(reasons.contains("internal error"), "{reasons}");
        assert!(!run.findings["summary"]["gate"]["passed"].as_bool().unwrap_or(true));
    }
}

#[test]
fn an_internal_failure_reaches_junit_and_sarif() {
    let fx = store().answer(answer("a-1")).env("PLUMBLINE_DEBUG_PANIC_ON_ID", "a-1");
    let (junit, sarif) = (fx.path("junit.xml"), fx.path("out.sarif"));
    let run = fx.check(&["--junit", &junit.to_string_lossy(), "--sarif", &sarif.to_string_lossy()]);
    assert_eq!(run.code(), 1);
    let xml = std::fs::read_to_string(&junit).expect("junit");
    let doc = roxmltree::Document::parse(&xml).expect("JUnit XML parses");
    let error = doc.descendants().find(|n| n.has_tag_name("error")).expect("an error testcase");
    assert!(error.attribute("message").unwrap_or_default().contains("internal error"));
    let log: Value =
        serde_json::from_str(&std::fs::read_to_string(&sarif).expect("sarif")).expect("SARIF");
    let results = log["runs"][0]["results"].as_array().cloned().unwrap_or_default();
    assert!(results.iter().any(|r| r["ruleId"] == "rejected_line"
        && r["message"]["text"].as_str().unwrap_or_default().contains("internal error")));
}

/// Ctrl-C (SIGINT) in the middle of checking: the run stops, exits 130, prints one line,
/// writes no output (an earlier findings file stays as it was) and leaves no temporary
/// file beside the outputs.
///
/// The answers come through a pipe, so the test knows the run is under way: a write of
/// more than a pipe's buffer returns only once the binary has read most of it, which it
/// does after installing its handler and loading the store.
#[cfg(unix)]
#[test]
fn ctrl_c_stops_cleanly_and_writes_nothing() {
    let fx = store();
    let out = fx.path("out");
    std::fs::create_dir(&out).expect("out dir");
    std::fs::write(out.join("findings.json"), "previous run\n").expect("old findings");
    let mut child = Command::new(BIN)
        .arg("check")
        .arg("--store")
        .arg(fx.store())
        .args(["--answers", "-", "--quiet", "--json"])
        .arg(out.join("findings.json"))
        .arg("--html")
        .arg(out.join("report.html"))
        .stdin(Stdio::piped())
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start plumbline");
    let mut stdin = child.stdin.take().expect("stdin");
    let mut lines = String::new();
    for i in 0..3000 {
        lines.push_str(&answer(&format!("a-{i}")).to_string());
        lines.push('\n');
    }
    assert!(lines.len() > 4 * 65_536, "more than a pipe holds");
    stdin.write_all(lines.as_bytes()).expect("feed answers");
    let kill = Command::new("kill").args(["-INT", &child.id().to_string()]).status();
    assert!(kill.expect("kill").success());
    drop(stdin);
    let output = child.wait_with_output().expect("wait");
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(130), "stderr: {stderr}");
    let said: Vec<&str> = stderr.lines().filter(|l| l.contains("interrupted")).collect();
    assert_eq!(said, ["plumbline: interrupted; no output written"], "stderr: {stderr}");
    assert_eq!(
        std::fs::read_to_string(out.join("findings.json")).expect("findings"),
        "previous run\n"
    );
    assert!(others(&out, &["findings.json"]).is_empty(), "{:?}", others(&out, &["findings.json"]));
}

/// A line over `limits.max_line_bytes` is rejected without being held whole (the reader
/// keeps at most the limit; see `answers::lines`), naming its line, its length, the
/// limit and the key; the lines around it are checked.
#[test]
fn a_line_over_the_limit_is_rejected_and_the_rest_checked() {
    let huge = format!(
        r#"{{"id": "big", "answer": "{}", "citations": []}}"#,
        "Claims stay open. ".repeat(500_000)
    );
    assert!(huge.len() > 8 << 20);
    let run = store().answer(answer("a-1")).line(&huge).answer(answer("a-3")).check(&[]);
    assert_eq!(run.code(), 1, "{}", run.stderr());
    assert_eq!(ids(&run), ["a-1", "a-3"]);
    assert_eq!(
        run.findings["rejected"],
        json!([{"line": 2, "error": format!(
            "line is {} bytes long, more than the limit of 8388608 (limits.max_line_bytes); not read",
            huge.len()
        )}])
    );
    let small = store()
        .config("[limits]\nmax_line_bytes = 100\n")
        .answer(answer("a-1"))
        .line(r#"{"id": "ok", "answer": "Hi!", "citations": []}"#)
        .check(&[]);
    let r = &small.findings["rejected"][0];
    assert_eq!(r["line"], 1);
    assert!(r["error"].as_str().unwrap_or_default().contains("more than the limit of 100"));
    assert_eq!(ids(&small), ["ok"]);
}

#[test]
fn citations_over_the_limit_reject_the_answer() {
    let cites: Vec<Value> = (1..=3).map(|i| json!({"ref": i.to_string(), "doc": "w.md"})).collect();
    let run = store()
        .config("[limits]\nmax_citations = 2\n")
        .answer(json!({"id": "many", "answer": "Claims close [1][2][3].", "citations": cites}))
        .answer(answer("a-2"))
        .check(&[]);
    assert_eq!(
        run.findings["rejected"],
        json!([{"line": 1, "error": "citations: 3 citations, more than the limit of 2 (limits.max_citations)"}])
    );
    assert_eq!(ids(&run), ["a-2"]);
}

/// A document over `limits.max_document_bytes` is not read; the store lists it, and a
/// citation of it is dead with that reason.
#[test]
fn a_document_over_the_limit_is_skipped_and_its_citation_says_why() {
    let run = store()
        .doc("big.txt", &"All staff may park anywhere. ".repeat(100))
        .config("[limits]\nmax_document_bytes = 1000\n")
        .answer(
            json!({"id": "a", "groups": ["staff"], "answer": "All staff may park anywhere [1].",
            "citations": [{"ref": "1", "doc": "big.txt"}]}),
        )
        .check(&[]);
    let problems = run.findings["inputs"]["store"]["problems"].to_string();
    assert!(problems.contains("big.txt") && problems.contains("max_document_bytes"), "{problems}");
    assert_eq!(run.status("a", "1"), "dead");
    let detail = run.answer("a")["citations"][0]["detail"].as_str().unwrap_or_default().to_owned();
    assert!(detail.contains("max_document_bytes = 1000"), "{detail}");
}

/// Markup nested far deeper than `limits.max_html_depth` neither overflows the stack nor
/// loses the text: the elements past the limit are read as text only.
#[test]
fn html_nested_past_the_depth_limit_is_still_read() {
    let depth = 100_000;
    let page = format!(
        "<html><body>{}<p>Staff parking is free on weekdays.</p>{}</body></html>",
        "<div><span>".repeat(depth),
        "</span></div>".repeat(depth)
    );
    for config in ["", "[limits]\nmax_html_depth = 8\n"] {
        let run = store()
            .doc("deep.html", &page)
            .config(config)
            .answer(json!({"id": "d", "groups": ["staff"], "answer": "Staff parking is free on weekdays [1].",
                "citations": [{"ref": "1", "doc": "deep.html"}]}))
            .check(&[]);
        assert_eq!(run.code(), 0, "{config:?}: {}", run.stderr());
        assert_eq!(run.verdict("d", 0), "supported");
    }
}

/// Outputs are committed together: when one cannot be written, none is, and an earlier
/// findings file stays as it was; no temporary file is left behind.
#[test]
fn when_one_output_fails_none_is_written() {
    let fx = store().answer(answer("a-1"));
    let out = fx.path("out");
    std::fs::create_dir(&out).expect("out dir");
    std::fs::write(out.join("findings.json"), "previous run\n").expect("old findings");
    let answers = fx.path("answers.jsonl");
    std::fs::write(&answers, answer("a-1").to_string() + "\n").expect("answers");
    let status = Command::new(BIN)
        .arg("check")
        .arg("--store")
        .arg(fx.store())
        .arg("--answers")
        .arg(&answers)
        .arg("--quiet")
        .arg("--json")
        .arg(out.join("findings.json"))
        .arg("--junit")
        .arg(out.join("junit.xml"))
        .arg("--html")
        .arg(fx.path("no/such/dir/report.html"))
        .output()
        .expect("run");
    assert_eq!(status.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&status.stderr);
    assert!(stderr.contains("report.html"), "{stderr}");
    assert_eq!(
        std::fs::read_to_string(out.join("findings.json")).expect("findings"),
        "previous run\n"
    );
    assert!(others(&out, &["findings.json"]).is_empty(), "{:?}", others(&out, &["findings.json"]));
}

/// The findings JSON with the lines that differ between two runs of the same inputs
/// (the time, and the command line) left out.
fn without_time_and_command(text: &str) -> String {
    let mut out = Vec::new();
    let mut in_command = false;
    for line in text.lines() {
        if line.starts_with("  \"command\": [") {
            in_command = !line.ends_with("],");
            continue;
        }
        if in_command {
            in_command = line != "  ],";
            continue;
        }
        if !line.starts_with("  \"generated_at\": ") {
            out.push(line);
        }
    }
    out.join("\n")
}

/// The findings JSON streamed from the spool (`--json` alone) is byte for byte the one
/// written from memory (`--json` with `--junit`), and `--json -` writes it to stdout.
#[test]
fn streamed_findings_equal_the_findings_written_from_memory() {
    let fx = Fixture::new()
        .doc("w.md", WARRANTY)
        .answer(answer("a-1"))
        .line("{broken")
        .answer(json!({"id": "a-2", "user": "u-9", "answer": "Claims close after 30 days [1]. Hello! [2]",
            "citations": [{"ref": "1", "doc": "w.md", "start": 0, "end": 63}, {"ref": "2", "doc": "../x"}],
            "approved_answer": "Claims close after 45 days."}))
        .line(&answer("a-1").to_string());
    let read = || std::fs::read_to_string(fx.path("findings.json")).expect("findings");
    let streamed = fx.check(&[]);
    let streamed_text = read();
    let junit = fx.path("junit.xml");
    let in_memory = fx.check(&["--junit", &junit.to_string_lossy()]);
    assert_eq!(in_memory.code(), streamed.code());
    let in_memory_text = read();
    assert!(streamed_text.contains("\"approved\"") && streamed_text.contains("\"rejected\": [\n"));
    assert_eq!(without_time_and_command(&streamed_text), without_time_and_command(&in_memory_text));
    assert_eq!(streamed.findings["summary"]["lines_rejected"], 2);
    let out = Command::new(BIN)
        .arg("check")
        .arg("--store")
        .arg(fx.store())
        .arg("--answers")
        .arg(fx.path("answers.jsonl"))
        .args(["--quiet", "--json", "-"])
        .output()
        .expect("run");
    let stdout = String::from_utf8(out.stdout).expect("UTF-8");
    assert_eq!(without_time_and_command(&stdout), without_time_and_command(&streamed_text));
}

/// `--progress` draws the bar even when stderr is not a terminal (SPEC.md, `check`
/// options); it used to be hidden there.
#[test]
fn progress_is_drawn_when_asked_for_on_a_pipe() {
    let fx = store();
    let answers = fx.path("many.jsonl");
    let lines: Vec<String> = (0..2000).map(|i| answer(&format!("a-{i}")).to_string()).collect();
    std::fs::write(&answers, lines.join("\n")).expect("answers");
    let run = |extra: &[&str]| {
        let out = Command::new(BIN)
            .arg("check")
            .arg("--store")
            .arg(fx.store())
            .arg("--answers")
            .arg(&answers)
            .args(extra)
            .output()
            .expect("run");
        assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
        String::from_utf8_lossy(&out.stderr).into_owned()
    };
    assert!(run(&["--progress"]).contains("checking"), "no progress bar on stderr");
    assert!(!run(&[]).contains("checking"), "a bar on a pipe without --progress");
}
