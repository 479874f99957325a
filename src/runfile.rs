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
    let value: serde_json::Value = serde_json::from_slice(bytes)
        .map_err(|e| format!("line {}, column {}: not JSON: {e}", e.line(), e.column()))?;
    let Some(obj) = value.as_object() else {
        return Err("not a plumbline findings document: expected a JSON object".into());
    };
    if obj.contains_key("runs") && obj.contains_key("version") {
        return Err("this is a SARIF log, not a findings document: give the file written by `check --json` or `merge --json`".into());
    }
    if obj.contains_key("comparison") {
        return Err("this is a `compare --json` result, not a findings document: give the file written by `check --json` or `merge --json`".into());
    }
    let tool: Tool = match obj.get("tool") {
        Some(t) => serde_json::from_value(t.clone())
            .map_err(|e| format!("tool: {e}; not a plumbline findings document?"))?,
        None => {
            return Err("not a plumbline findings document (no `tool` field): give the file written by `check --json` or `merge --json`".into());
        }
    };
    if tool.name != "plumbline" {
        return Err(format!("tool.name: written by {:?}, not by plumbline", tool.name));
    }
    check_version(&tool.version)?;
    serde_path_to_error::deserialize(value).map_err(|e| {
        let field = e.path().to_string();
        format!("{field}: {}", e.inner())
    })
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
        assert!(parse(b"{").unwrap_err().starts_with("line 1, column 1: not JSON"));
        assert!(parse(b"[]").unwrap_err().contains("expected a JSON object"));
        assert!(parse(br#"{"version": "2.1.0", "runs": []}"#).unwrap_err().contains("SARIF log"));
        assert!(parse(br#"{"answers": []}"#).unwrap_err().contains("no `tool` field"));
        let v = env!("CARGO_PKG_VERSION");
        let other = format!(r#"{{"tool": {{"name": "other", "version": "{v}"}}}}"#);
        assert!(parse(other.as_bytes()).unwrap_err().starts_with("tool.name"));
        let partial = format!(
            r#"{{"tool": {{"name": "plumbline", "version": "{v}"}}, "generated_at": "x", "command": [], "inputs": {{"answers": {{"path": "a", "size": "big", "sha256": "0"}}}}}}"#
        );
        let e = parse(partial.as_bytes()).unwrap_err();
        assert!(e.starts_with("inputs.answers.size: invalid type: string"), "{e}");
    }
}
