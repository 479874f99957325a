//! `plumbline score --pairs` on bad input: every bad line becomes an error line naming
//! the file, the line and the field, the other lines are still scored, the counts add up,
//! an input that cannot be read at all is exit 2 with a message naming it, and nothing
//! panics.

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

use serde_json::Value;

const BIN: &str = env!("CARGO_BIN_EXE_plumbline");

/// The result of one `score --pairs` run.
struct Run {
    output: Output,
    lines: Vec<Value>,
}

impl Run {
    fn code(&self) -> i32 {
        self.output.status.code().unwrap_or(-1)
    }

    fn stderr(&self) -> String {
        String::from_utf8_lossy(&self.output.stderr).into_owned()
    }

    /// The output lines that report an error.
    fn errors(&self) -> Vec<&Value> {
        self.lines.iter().filter(|l| l.get("error").is_some()).collect()
    }

    /// Exit code 0 or 2 and no panic message, whatever the input.
    fn assert_no_panic(&self) {
        assert!(matches!(self.code(), 0 | 2), "exit {}: {}", self.code(), self.stderr());
        assert!(!self.stderr().contains("panicked"), "{}", self.stderr());
    }
}

fn run(args: &[&str], stdin: Option<&[u8]>) -> Run {
    let mut cmd = Command::new(BIN);
    cmd.arg("score").args(args);
    cmd.stdin(if stdin.is_some() { Stdio::piped() } else { Stdio::null() });
    cmd.stdout(Stdio::piped()).stderr(Stdio::piped());
    let mut child = cmd.spawn().expect("run plumbline");
    if let Some(bytes) = stdin {
        child.stdin.take().expect("stdin").write_all(bytes).expect("write stdin");
    }
    let output = child.wait_with_output().expect("wait for plumbline");
    let stdout = String::from_utf8(output.stdout.clone()).expect("stdout is UTF-8");
    let lines = stdout
        .lines()
        .map(|l| serde_json::from_str(l).unwrap_or_else(|e| panic!("not JSON ({e}): {l}")))
        .collect();
    Run { output, lines }
}

fn write_file(dir: &Path, name: &str, bytes: &[u8]) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, bytes).expect("write input");
    p
}

fn score_file(path: &Path, extra: &[&str]) -> Run {
    let mut args = vec!["--pairs", path.to_str().expect("UTF-8 path")];
    args.extend_from_slice(extra);
    run(&args, None)
}

/// Checks that `error` names `path`, `line` and (if given) the field.
fn assert_names(error: &Value, path: &Path, line: usize, field: Option<&str>, what: &str) {
    assert_eq!(error["line"], line, "{error}");
    let text = error["error"].as_str().unwrap_or_else(|| panic!("no error text: {error}"));
    let prefix = format!("{}:{line}: ", path.display());
    assert!(text.starts_with(&prefix), "{text:?} should start with {prefix:?}");
    if let Some(field) = field {
        assert!(text[prefix.len()..].starts_with(&format!("{field}: ")), "{text:?}");
    }
    assert!(text.contains(what), "{text:?} should say {what:?}");
    assert!(error.get("rouge1").is_none(), "an error line carries no scores: {error}");
}

#[test]
fn a_missing_file_is_exit_2_naming_it() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("no-such-pairs.jsonl");
    let r = score_file(&path, &[]);
    r.assert_no_panic();
    assert_eq!(r.code(), 2);
    assert!(r.lines.is_empty());
    assert!(r.stderr().contains(&path.display().to_string()), "{}", r.stderr());
}

#[test]
fn a_directory_is_exit_2_naming_it() {
    let dir = tempfile::tempdir().expect("temp dir");
    let r = score_file(dir.path(), &[]);
    r.assert_no_panic();
    assert_eq!(r.code(), 2);
    assert!(r.stderr().contains(&dir.path().display().to_string()), "{}", r.stderr());
}

#[test]
fn every_bad_line_is_reported_with_file_line_and_field_and_the_rest_are_scored() {
    let dir = tempfile::tempdir().expect("temp dir");
    let mut input = Vec::new();
    let lines: [&[u8]; 10] = [
        br#"{"id":"good-1","candidate":"the cat sat","reference":"the cat sat down"}"#,
        b"\xff\xfe not UTF-8",
        b"{not json",
        b"[1, 2]",
        br#"{"id":7,"candidate":12,"reference":"a"}"#,
        br#"{"id":"no-reference","candidate":"a"}"#,
        br#"{"id":"twice","candidate":"a","candidate":"b","reference":"c"}"#,
        br#"{"id":{"k":1},"candidate":"a","reference":null}"#,
        br#"{"reference":"a"}"#,
        br#"{"id":"good-2","candidate":"x","reference":"x"}"#,
    ];
    for l in lines {
        input.extend_from_slice(l);
        input.push(b'\n');
    }
    let path = write_file(dir.path(), "pairs.jsonl", &input);
    let r = score_file(&path, &[]);
    r.assert_no_panic();
    assert_eq!(r.code(), 0, "{}", r.stderr());
    // One output line per input line, in order: the counts add up.
    assert_eq!(r.lines.len(), lines.len(), "{:?}", r.lines);
    assert_eq!(r.lines[0]["id"], "good-1");
    assert!(r.lines[0]["rouge1"]["f"].as_f64().is_some());
    assert_eq!(r.lines[9]["id"], "good-2");
    assert_eq!(r.lines[9]["rougeL"]["f"], 1.0);
    let e = &r.lines;
    assert_names(&e[1], &path, 2, None, "invalid UTF-8");
    assert_names(&e[2], &path, 3, None, "invalid JSON at column");
    assert_names(&e[3], &path, 4, None, "expected an object, found an array");
    assert_names(&e[4], &path, 5, Some("candidate"), "expected a string, found 12");
    assert_eq!(e[4]["id"], 7, "the id is echoed when it could be read");
    assert_names(&e[5], &path, 6, Some("reference"), "missing");
    assert_eq!(e[5]["id"], "no-reference");
    assert_names(&e[6], &path, 7, None, "duplicate key \"candidate\"");
    assert_names(&e[7], &path, 8, Some("reference"), "expected a string, found null");
    assert_names(&e[8], &path, 9, Some("candidate"), "missing");
    assert_eq!(r.errors().len(), 8);
    assert!(r.stderr().contains("8 of 10 line(s)"), "{}", r.stderr());
}

#[test]
fn empty_and_blank_files_say_so_and_write_nothing() {
    let dir = tempfile::tempdir().expect("temp dir");
    for (name, bytes) in [("empty.jsonl", &b""[..]), ("blank.jsonl", &b"\n  \r\n\t\n"[..])] {
        let path = write_file(dir.path(), name, bytes);
        let r = score_file(&path, &[]);
        r.assert_no_panic();
        assert_eq!(r.code(), 0);
        assert!(r.lines.is_empty(), "{:?}", r.lines);
        let want = format!("{} holds no pairs", path.display());
        assert!(r.stderr().contains(&want), "{}", r.stderr());
    }
}

#[test]
fn a_huge_line_is_skipped_unread_and_the_limit_can_be_raised() {
    let dir = tempfile::tempdir().expect("temp dir");
    // A line just over the default limit (64 KiB), then a good one.
    let big = "word ".repeat(14_000);
    let huge = serde_json::json!({"id": "huge", "candidate": big, "reference": "word"});
    let good = serde_json::json!({"id": "after", "candidate": "a b", "reference": "a b"});
    let text = format!("{huge}\n{good}\n");
    assert!(text.len() > 65_536);
    let path = write_file(dir.path(), "huge.jsonl", text.as_bytes());

    let r = score_file(&path, &[]);
    r.assert_no_panic();
    assert_eq!(r.lines.len(), 2);
    let bytes = huge.to_string().len();
    assert_names(
        &r.lines[0],
        &path,
        1,
        None,
        &format!("line is {bytes} bytes long, more than the limit of 65536 (--max-line-bytes)"),
    );
    assert_eq!(r.lines[1]["id"], "after");
    assert_eq!(r.lines[1]["rouge1"]["f"], 1.0);

    let r = score_file(&path, &["--max-line-bytes", "100000"]);
    r.assert_no_panic();
    assert_eq!(r.errors().len(), 0, "{:?}", r.errors());
    assert_eq!(r.lines[0]["id"], "huge");
}

#[test]
fn stdin_errors_name_stdin_and_bom_and_crlf_are_accepted() {
    let input = b"\xEF\xBB\xBF{\"id\":\"bom\",\"candidate\":\"a\",\"reference\":\"a\"}\r\n\
                  {\"id\":\"crlf\",\"candidate\":\"b\",\"reference\":\"b\"}\r\n\
                  oops\n";
    let r = run(&["--pairs", "-"], Some(input));
    r.assert_no_panic();
    assert_eq!(r.code(), 0);
    assert_eq!(r.lines.len(), 3, "{:?}", r.lines);
    assert_eq!((&r.lines[0]["id"], &r.lines[1]["id"]), (&"bom".into(), &"crlf".into()));
    let error = r.lines[2]["error"].as_str().unwrap_or_default();
    assert!(error.starts_with("<stdin>:3: invalid JSON"), "{error}");
}

#[test]
fn a_byte_order_mark_after_line_one_is_reported() {
    // Two files joined together: the second one's mark is in the middle of the input.
    let dir = tempfile::tempdir().expect("temp dir");
    let path = write_file(
        dir.path(),
        "joined.jsonl",
        b"{\"candidate\":\"a\",\"reference\":\"a\"}\n\xEF\xBB\xBF{\"candidate\":\"b\",\"reference\":\"b\"}\n",
    );
    let r = score_file(&path, &[]);
    r.assert_no_panic();
    assert_eq!(r.lines.len(), 2);
    assert_names(&r.lines[1], &path, 2, None, "byte order mark");
}
