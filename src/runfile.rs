//! Reading a findings document back from disk, for `merge` and `compare`.
//!
//! The document is read into the typed [`Report`], so that a file of the wrong shape is
//! refused with the file, the position and the field at fault (`serde_path_to_error`),
//! never half-read. Unknown fields are allowed: the findings format only grows (SPEC.md),
//! and a newer patch release may have added some. A document written by a plumbline whose
//! findings may hold what this one cannot read (a newer major version, or a newer minor
//! version while the major is 0, as Semantic Versioning allows breaking changes there) is
//! refused by name and version.

use std::path::Path;

use sha2::{Digest, Sha256};

use crate::findings::{InputFile, Report, Tool};

/// A findings document read from a file, with the file's record.
#[derive(Debug, Clone)]
pub struct RunFile {
    /// The document.
    pub report: Report,
    /// The file: path as given, size and SHA-256.
    pub file: InputFile,
}

/// Reads and checks the findings document at `path`. Errors name the file and, where one
/// is at fault, the field; they are meant for a user (exit code 2).
pub fn read(path: &Path) -> Result<RunFile, String> {
    let shown = path.display();
    let bytes = std::fs::read(path).map_err(|e| format!("cannot read {shown}: {e}"))?;
    let file = InputFile {
        path: shown.to_string(),
        size: bytes.len() as u64,
        sha256: crate::run::hex(&Sha256::digest(&bytes)),
    };
    let report = parse(&bytes).map_err(|e| format!("{shown}: {e}"))?;
    Ok(RunFile { report, file })
}

/// Parses findings JSON; the error names the line, column and field.
pub fn parse(bytes: &[u8]) -> Result<Report, String> {
    let mut de = serde_json::Deserializer::from_slice(bytes);
    let typed: Result<Report, _> = serde_path_to_error::deserialize(&mut de);
    let report = match typed {
        Ok(r) => r,
        // Not a findings document of this shape: say what it is, if it is something else
        // we know, else where and which field.
        Err(e) => return Err(explain(bytes).unwrap_or_else(|| located(&e))),
    };
    de.end().map_err(|e| {
        format!("line {}, column {}: not JSON: {}", e.line(), e.column(), message(&e))
    })?;
    if report.tool.name != "plumbline" {
        return Err(format!("tool.name: written by {:?}, not by plumbline", report.tool.name));
    }
    check_version(&report.tool.version)?;
    Ok(report)
}

fn located(e: &serde_path_to_error::Error<serde_json::Error>) -> String {
    let inner = e.inner();
    let field = e.path().to_string();
    let at = format!("line {}, column {}", inner.line(), inner.column());
    let what = message(inner);
    if inner.is_syntax() || inner.is_eof() {
        format!("{at}: not JSON: {what}")
    } else if field == "." {
        format!("{at}: {what}")
    } else {
        format!("{at}: {field}: {what}")
    }
}

/// A JSON error's message without the position serde_json appends (it is given first).
fn message(e: &serde_json::Error) -> String {
    let text = e.to_string();
    let suffix = format!(" at line {} column {}", e.line(), e.column());
    text.strip_suffix(&suffix).map_or_else(|| text.clone(), str::to_owned)
}

/// Why a document that is not a findings document of this shape is something else: not an
/// object, a SARIF log, a comparison, a document without `tool`, another tool's, or a
/// newer plumbline's. `None` when it looks like findings (the field error then speaks).
fn explain(bytes: &[u8]) -> Option<String> {
    let value: serde_json::Value = serde_json::from_slice(bytes).ok()?;
    let Some(obj) = value.as_object() else {
        return Some("not a plumbline findings document: expected a JSON object".into());
    };
    if obj.contains_key("runs") && obj.contains_key("version") {
        return Some("this is a SARIF log, not a findings document: give the file written by `check --json` or `merge --json`".into());
    }
    if obj.contains_key("comparison") {
        return Some("this is a `compare --json` result, not a findings document: give the file written by `check --json` or `merge --json`".into());
    }
    let Some(tool) = obj.get("tool") else {
        return Some("not a plumbline findings document (no `tool` field): give the file written by `check --json` or `merge --json`".into());
    };
    match serde_json::from_value::<Tool>(tool.clone()) {
        Err(e) => Some(format!("tool: {e}; not a plumbline findings document?")),
        Ok(t) if t.name != "plumbline" => {
            Some(format!("tool.name: written by {:?}, not by plumbline", t.name))
        }
        Ok(t) => check_version(&t.version).err(),
    }
}

/// `major.minor.patch` of a version string (pre-release and build parts ignored).
fn parse_version(v: &str) -> Option<(u64, u64, u64)> {
    let core = v.split(['-', '+']).next()?;
    let mut it = core.split('.').map(|p| p.parse::<u64>().ok());
    let (a, b, c) = (it.next()??, it.next()??, it.next()??);
    it.next().is_none().then_some((a, b, c))
}

fn check_version(version: &str) -> Result<(), String> {
    let ours = env!("CARGO_PKG_VERSION");
    let (Some(theirs), Some(mine)) = (parse_version(version), parse_version(ours)) else {
        return Err(format!("tool.version: {version:?} is not a version of the form 1.2.3"));
    };
    // The part of the version that, by Semantic Versioning, changes on breaking changes.
    let line = |v: (u64, u64, u64)| if v.0 == 0 { (0, v.1) } else { (v.0, 0) };
    if line(theirs) > line(mine) {
        return Err(format!(
            "tool.version: written by plumbline {version}, newer than this plumbline ({ours}), \
             whose findings format it may not read: use plumbline {}.{} or later",
            theirs.0, theirs.1
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn versions() {
        assert_eq!(parse_version("0.1.0"), Some((0, 1, 0)));
        assert_eq!(parse_version("1.2.3-rc.1+build"), Some((1, 2, 3)));
        assert_eq!(parse_version("1.2"), None);
        assert!(check_version(env!("CARGO_PKG_VERSION")).is_ok());
        assert!(check_version("0.0.9").is_ok());
        let e = check_version("99.0.0").unwrap_err();
        assert!(e.starts_with("tool.version: written by plumbline 99.0.0, newer"), "{e}");
        assert!(check_version("banana").unwrap_err().contains("not a version"));
    }

    #[test]
    fn wrong_shapes_name_the_field() {
        let e = parse(b"{").unwrap_err();
        assert!(e.starts_with("line 1, column 1: not JSON"), "{e}");
        assert!(parse(b"[]").unwrap_err().contains("expected a JSON object"));
        assert!(parse(br#"{"version": "2.1.0", "runs": []}"#).unwrap_err().contains("SARIF log"));
        assert!(parse(br#"{"answers": []}"#).unwrap_err().contains("no `tool` field"));
        let v = env!("CARGO_PKG_VERSION");
        let other = format!(r#"{{"tool": {{"name": "other", "version": "{v}"}}}}"#);
        assert!(parse(other.as_bytes()).unwrap_err().starts_with("tool.name"));
        let partial = format!(
            r#"{{"tool": {{"name": "plumbline", "version": "{v}"}}, "generated_at": "x", "command": [], "inputs": {{"answers": {{"path": "a", "size": "big", "sha256": "0"}}}}}}"#
        );
        let top = format!(r#"{{"tool": {{"name": "plumbline", "version": "{v}"}}}}"#);
        let e = parse(top.as_bytes()).unwrap_err();
        assert!(e.ends_with("missing field `generated_at`") && !e.contains("not JSON"), "{e}");
        let e = parse(partial.as_bytes()).unwrap_err();
        assert!(e.starts_with("line 1, column "), "{e}");
        assert!(e.contains(": inputs.answers.size: invalid type: string"), "{e}");
    }
}
