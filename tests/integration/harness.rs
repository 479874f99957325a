//! A small fluent harness for end-to-end tests of `plumbline check`: build a store and an
//! answers log in a temporary directory, run the real binary, and read its findings back
//! as JSON.

use std::path::PathBuf;
use std::process::{Command, Output};

use serde_json::Value;
use tempfile::TempDir;

/// A fixture: a store directory plus input files, in a temporary directory.
pub struct Fixture {
    pub dir: TempDir,
    answers: Vec<String>,
    principals: Option<String>,
    config: Option<String>,
    accept: Option<String>,
    env: Vec<(String, String)>,
}

/// The result of one run.
pub struct Run {
    pub output: Output,
    pub findings: Value,
}

impl Fixture {
    pub fn new() -> Fixture {
        let dir = tempfile::tempdir().expect("temp dir");
        std::fs::create_dir_all(dir.path().join("store")).expect("store dir");
        Fixture {
            dir,
            answers: Vec::new(),
            principals: None,
            config: None,
            accept: None,
            env: Vec::new(),
        }
    }

    pub fn store(&self) -> PathBuf {
        self.dir.path().join("store")
    }

    /// Adds a document to the store.
    pub fn doc(self, rel: &str, text: &str) -> Fixture {
        let p = self.store().join(rel);
        if let Some(parent) = p.parent() {
            std::fs::create_dir_all(parent).expect("doc dir");
        }
        std::fs::write(&p, text).expect("write doc");
        self
    }

    /// Adds one raw line to the answers log.
    pub fn line(mut self, line: &str) -> Fixture {
        self.answers.push(line.to_owned());
        self
    }

    /// Adds one answer (a JSON value) to the log.
    pub fn answer(self, v: Value) -> Fixture {
        let line = v.to_string();
        self.line(&line)
    }

    pub fn principals(mut self, v: Value) -> Fixture {
        self.principals = Some(v.to_string());
        self
    }

    pub fn config(mut self, toml: &str) -> Fixture {
        self.config = Some(toml.to_owned());
        self
    }

    /// Sets an environment variable for the run.
    pub fn env(mut self, key: &str, value: &str) -> Fixture {
        self.env.push((key.to_owned(), value.to_owned()));
        self
    }

    /// Path of a file in the fixture's folder.
    pub fn path(&self, name: &str) -> PathBuf {
        self.dir.path().join(name)
    }

    pub fn accept(mut self, lines: &[Value]) -> Fixture {
        self.accept = Some(lines.iter().map(Value::to_string).collect::<Vec<_>>().join("\n"));
        self
    }

    fn write(&self, name: &str, text: &str) -> PathBuf {
        let p = self.dir.path().join(name);
        std::fs::write(&p, text).expect("write input");
        p
    }

    /// Writes the answers log and returns its path.
    pub fn write_answers(&self) -> PathBuf {
        self.write("answers.jsonl", &(self.answers.join("\n") + "\n"))
    }

    /// Runs `plumbline check` with the fixture's inputs and `extra` arguments.
    pub fn check(&self, extra: &[&str]) -> Run {
        let answers = self.write_answers();
        let json = self.dir.path().join("findings.json");
        let mut cmd = Command::new(env!("CARGO_BIN_EXE_plumbline"));
        cmd.arg("check")
            .arg("--store")
            .arg(self.store())
            .arg("--answers")
            .arg(&answers)
            .arg("--json")
            .arg(&json)
            .arg("--quiet");
        if let Some(p) = &self.principals {
            cmd.arg("--principals").arg(self.write("principals.json", p));
        }
        if let Some(c) = &self.config {
            cmd.arg("--config").arg(self.write("plumbline.toml", c));
        }
        if let Some(a) = &self.accept {
            cmd.arg("--accept").arg(self.write("decisions.jsonl", a));
        }
        cmd.args(extra);
        cmd.envs(self.env.iter().map(|(k, v)| (k, v)));
        let output = cmd.output().expect("run plumbline");
        let findings = std::fs::read_to_string(&json)
            .ok()
            .and_then(|t| serde_json::from_str(&t).ok())
            .unwrap_or(Value::Null);
        Run { output, findings }
    }
}

impl Run {
    pub fn code(&self) -> i32 {
        self.output.status.code().unwrap_or(-1)
    }

    pub fn stderr(&self) -> String {
        String::from_utf8_lossy(&self.output.stderr).into_owned()
    }

    /// The findings of the answer with this id.
    pub fn answer(&self, id: &str) -> &Value {
        self.findings["answers"]
            .as_array()
            .and_then(|a| a.iter().find(|x| x["id"] == id))
            .unwrap_or_else(|| panic!("no answer {id} in findings; stderr: {}", self.stderr()))
    }

    /// Verdict of sentence `i` of answer `id`.
    pub fn verdict(&self, id: &str, i: usize) -> String {
        self.answer(id)["sentences"][i]["verdict"].as_str().unwrap_or("?").to_owned()
    }

    /// Flags of sentence `i` of answer `id`.
    pub fn flags(&self, id: &str, i: usize) -> Vec<String> {
        self.answer(id)["sentences"][i]["flags"]
            .as_array()
            .map(|a| a.iter().filter_map(|f| f.as_str().map(str::to_owned)).collect())
            .unwrap_or_default()
    }

    /// Status of citation `r` of answer `id`.
    pub fn status(&self, id: &str, r: &str) -> String {
        self.answer(id)["citations"]
            .as_array()
            .and_then(|a| a.iter().find(|c| c["ref"] == r))
            .and_then(|c| c["status"].as_str())
            .unwrap_or("?")
            .to_owned()
    }
}
