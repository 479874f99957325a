//! Helpers shared by the integration tests: locating and reading the
//! committed test data, and float comparison.

use std::path::PathBuf;

use serde_json::Value;

/// Agreement demanded of every floating-point value against its reference.
pub const TOL: f64 = 1e-9;

/// How many disagreements a failing test prints in full.
pub const SHOW: usize = 25;

/// Path of a file under `tests/data/`.
pub fn data_path(rel: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests").join("data").join(rel)
}

/// Reads a file under `tests/data/` as UTF-8.
pub fn read_data(rel: &str) -> String {
    let p = data_path(rel);
    std::fs::read_to_string(&p).unwrap_or_else(|e| panic!("cannot read {}: {e}", p.display()))
}

/// Parses a JSON-lines file under `tests/data/`, one value per non-empty line.
pub fn read_jsonl(rel: &str) -> Vec<Value> {
    read_data(rel)
        .lines()
        .enumerate()
        .filter(|(_, l)| !l.trim().is_empty())
        .map(|(i, l)| serde_json::from_str(l).unwrap_or_else(|e| panic!("{rel}:{}: {e}", i + 1)))
        .collect()
}

/// `v` as f64 (JSON integers included).
pub fn f(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

/// `v` as usize.
pub fn u(v: &Value) -> usize {
    v.as_u64().unwrap_or_else(|| panic!("not an unsigned integer: {v}")) as usize
}

/// `v` as &str.
pub fn s(v: &Value) -> &str {
    v.as_str().unwrap_or_else(|| panic!("not a string: {v}"))
}

/// `v` as a list of strings.
pub fn strings(v: &Value) -> Vec<String> {
    v.as_array()
        .unwrap_or_else(|| panic!("not an array: {v}"))
        .iter()
        .map(|x| s(x).to_owned())
        .collect()
}

/// Whether `ours` is within [`TOL`] of `theirs`.
pub fn close(ours: f64, theirs: f64) -> bool {
    (ours - theirs).abs() <= TOL
}

/// Collects disagreements and fails once, listing the first [`SHOW`].
#[derive(Default)]
pub struct Mismatches {
    checked: usize,
    failed: Vec<String>,
}

impl Mismatches {
    /// Counts one checked case; records `msg` when `ok` is false.
    pub fn check(&mut self, ok: bool, msg: impl FnOnce() -> String) {
        self.checked += 1;
        if !ok {
            self.failed.push(msg());
        }
    }

    /// Panics with a report if anything disagreed; prints the agreement figure either way.
    pub fn finish(self, what: &str) {
        let n = self.failed.len();
        eprintln!("{what}: {}/{} agree", self.checked - n, self.checked);
        assert!(self.checked > 0, "{what}: nothing was checked");
        if n > 0 {
            let shown: Vec<&str> = self.failed.iter().take(SHOW).map(String::as_str).collect();
            panic!(
                "{what}: {n} of {} disagree (first {}):\n  {}",
                self.checked,
                shown.len(),
                shown.join("\n  ")
            );
        }
    }
}
