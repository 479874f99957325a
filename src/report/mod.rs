//! Writers: they only read a finished [`crate::findings::Report`] and never reach back
//! into the checks.
//!
//! Every output is written to a temporary file beside its destination and renamed into
//! place ([`write_atomic`]), so an interrupted run never leaves a half-written report.

use std::fs;
use std::io::{self, Write};
use std::path::Path;

pub mod compare_html;
pub mod html;
pub mod json;
pub mod junit;
pub mod locate;
pub mod sarif;

/// Writes `bytes` to `path` through a temporary file in the same directory and a rename;
/// `-` writes to stdout.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> io::Result<()> {
    if path.as_os_str() == "-" {
        let mut out = io::stdout().lock();
        out.write_all(bytes)?;
        return out.flush();
    }
    let dir = path.parent().filter(|p| !p.as_os_str().is_empty()).unwrap_or(Path::new("."));
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".into());
    let tmp = dir.join(format!(".{name}.plumbline-{}.tmp", std::process::id()));
    let result = (|| {
        let mut f = fs::File::create(&tmp)?;
        f.write_all(bytes)?;
        f.sync_all()?;
        fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = fs::remove_file(&tmp);
    }
    result
}
