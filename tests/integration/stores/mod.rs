//! The store forms beyond a folder (chunk exports, SQLite, PostgreSQL), PDF documents,
//! saved indexes and field maps for answer logs of other shapes, each run through the
//! real executable.

mod cache;
mod chunks;
mod mapping;
mod pdf;
mod postgres;
mod sqlite;

use std::path::{Path, PathBuf};
use std::process::Command;

use serde_json::Value;

pub const BIN: &str = env!("CARGO_BIN_EXE_plumbline");

/// The project's folder.
pub fn project() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// What one run of `plumbline check` left.
pub struct Out {
    pub code: i32,
    pub findings: Value,
    pub json: String,
    pub html: String,
    pub stderr: String,
}

impl Out {
    pub fn answer(&self, id: &str) -> &Value {
        self.findings["answers"]
            .as_array()
            .and_then(|a| a.iter().find(|x| x["id"] == id))
            .unwrap_or_else(|| panic!("no answer {id}; stderr: {}", self.stderr))
    }

    /// `(status, detail)` of citation `r` of answer `id`.
    pub fn citation(&self, id: &str, r: &str) -> (String, String) {
        let c = self.answer(id)["citations"]
            .as_array()
            .and_then(|a| a.iter().find(|c| c["ref"] == r))
            .unwrap_or_else(|| panic!("no citation {r} of {id}"));
        (
            c["status"].as_str().unwrap_or("?").to_owned(),
            c["detail"].as_str().unwrap_or("").to_owned(),
        )
    }

    /// `(verdict, flags)` of sentence `i` of answer `id`.
    pub fn sentence(&self, id: &str, i: usize) -> (String, Vec<String>) {
        let s = &self.answer(id)["sentences"][i];
        let flags = s["flags"]
            .as_array()
            .map(|a| a.iter().filter_map(|f| f.as_str().map(str::to_owned)).collect())
            .unwrap_or_default();
        (s["verdict"].as_str().unwrap_or("?").to_owned(), flags)
    }
}

/// Runs `plumbline check` with `args`, writing the findings and report in `dir`.
pub fn check(dir: &Path, args: &[&str]) -> Out {
    check_env(dir, args, &[])
}

/// [`check`] with environment variables set.
pub fn check_env(dir: &Path, args: &[&str], env: &[(&str, &str)]) -> Out {
    let json = dir.join("findings.json");
    let html = dir.join("report.html");
    let _ = std::fs::remove_file(&json);
    let _ = std::fs::remove_file(&html);
    let mut cmd = Command::new(BIN);
    cmd.arg("check").args(args).arg("--json").arg(&json).arg("--html").arg(&html);
    for (k, v) in env {
        cmd.env(k, v);
    }
    let output = cmd.output().expect("run plumbline");
    let text = std::fs::read_to_string(&json).unwrap_or_default();
    Out {
        code: output.status.code().unwrap_or(-1),
        findings: serde_json::from_str(&text).unwrap_or(Value::Null),
        json: text,
        html: std::fs::read_to_string(&html).unwrap_or_default(),
        stderr: String::from_utf8_lossy(&output.stderr).into_owned(),
    }
}

/// Runs another subcommand; returns its exit code and stderr.
pub fn run(args: &[&str]) -> (i32, String) {
    let output = Command::new(BIN).args(args).output().expect("run plumbline");
    (output.status.code().unwrap_or(-1), String::from_utf8_lossy(&output.stderr).into_owned())
}

/// The parts of a findings document that say what was found (everything but the run
/// record: time, command, inputs).
pub fn found(v: &Value) -> Value {
    serde_json::json!({
        "answers": v["answers"], "summary": v["summary"], "rejected": v["rejected"],
        "decisions": v["decisions"], "config": v["config"],
    })
}

/// Writes lines of JSON values as a JSON Lines file.
pub fn write_jsonl(path: &Path, lines: &[Value]) {
    let text: String = lines.iter().map(|l| format!("{l}\n")).collect();
    std::fs::write(path, text).expect("write JSON Lines");
}

/// Whether a test that needs an external tool should run; without it, fails where
/// `PLUMBLINE_REQUIRE_TOOLS` is set (CI), else prints a notice and skips.
pub fn have_tool(available: bool, what: &str) -> bool {
    if available {
        return true;
    }
    assert!(
        std::env::var_os("PLUMBLINE_REQUIRE_TOOLS").is_none(),
        "{what} is required (PLUMBLINE_REQUIRE_TOOLS is set) but not available"
    );
    eprintln!("notice: skipping a test that needs {what}");
    false
}
