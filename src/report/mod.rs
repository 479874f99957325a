//! Writers: they only read a finished [`crate::findings::Report`] and never reach back
//! into the checks.
//!
//! Every output is first written in full to a temporary file beside its destination
//! ([`stage`]) and only then renamed into place ([`Staged::commit`]), so an interrupted or
//! failing run never leaves a half-written report: the destination holds either its old
//! content or the complete new one. A staged file that is dropped without being committed
//! is removed. `-` (stdout) is not staged; it is written when the outputs are committed.

use std::fs::Permissions;
use std::io::{self, BufWriter, Write};
use std::os::unix::fs::PermissionsExt;
use std::path::{Path, PathBuf};

use tempfile::NamedTempFile;

pub mod compare_html;
pub mod html;
pub mod json;
pub mod junit;
pub mod locate;
pub mod sarif;
pub mod spool;

/// An output written in full to a temporary file beside its destination, not yet in place.
#[derive(Debug)]
pub struct Staged {
    file: NamedTempFile,
    path: PathBuf,
}

impl Staged {
    /// Renames the temporary file over the destination (atomic within one filesystem).
    pub fn commit(self) -> io::Result<()> {
        self.file.persist(&self.path).map(drop).map_err(|e| e.error)
    }

    /// The destination.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// The temporary file the output is staged in.
    pub fn temporary_path(&self) -> &Path {
        self.file.path()
    }
}

/// Writes an output to a temporary file in `path`'s directory (named `.NAME.XXXXXX.tmp`),
/// flushed and synced to disk, ready to be committed.
///
/// The file is created with the mode an ordinary new file gets (0666 less the umask),
/// not the 0600 of a private temporary file, since it becomes the output itself.
pub fn stage(
    path: &Path,
    write: impl FnOnce(&mut dyn Write) -> io::Result<()>,
) -> io::Result<Staged> {
    let dir = path.parent().filter(|p| !p.as_os_str().is_empty()).unwrap_or(Path::new("."));
    let name = path.file_name().map(|n| n.to_string_lossy().into_owned());
    let prefix = format!(".{}.", name.as_deref().unwrap_or("output"));
    let file = tempfile::Builder::new()
        .prefix(&prefix)
        .suffix(".tmp")
        .permissions(Permissions::from_mode(0o666))
        .tempfile_in(dir)?;
    {
        let mut out = BufWriter::with_capacity(1 << 16, file.as_file());
        write(&mut out)?;
        out.flush()?;
    }
    file.as_file().sync_all()?;
    Ok(Staged { file, path: path.to_path_buf() })
}

/// Writes `bytes` to `path` through a staged temporary file and a rename; `-` writes to
/// stdout.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> io::Result<()> {
    if path.as_os_str() == "-" {
        let mut out = io::stdout().lock();
        out.write_all(bytes)?;
        return out.flush();
    }
    stage(path, |w| w.write_all(bytes))?.commit()
}

/// Whether `path` names stdout.
pub fn is_stdout(path: &Path) -> bool {
    path.as_os_str() == "-"
}

#[cfg(test)]
mod tests {
    use super::*;

    fn leftovers(dir: &Path) -> Vec<String> {
        std::fs::read_dir(dir)
            .expect("read dir")
            .filter_map(|e| e.ok().map(|e| e.file_name().to_string_lossy().into_owned()))
            .filter(|n| n.ends_with(".tmp"))
            .collect()
    }

    #[test]
    fn a_staged_output_appears_only_when_committed() {
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join("findings.json");
        std::fs::write(&path, "old").expect("write");
        let staged = stage(&path, |w| w.write_all(b"new")).expect("stage");
        assert_eq!(std::fs::read_to_string(&path).expect("read"), "old");
        assert!(staged.temporary_path().starts_with(dir.path()));
        staged.commit().expect("commit");
        assert_eq!(std::fs::read_to_string(&path).expect("read"), "new");
        assert!(leftovers(dir.path()).is_empty());
    }

    #[test]
    fn a_dropped_or_failed_output_leaves_nothing_and_keeps_the_old_file() {
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join("report.html");
        std::fs::write(&path, "old").expect("write");
        drop(stage(&path, |w| w.write_all(b"half")).expect("stage"));
        let failed = stage(&path, |w| {
            w.write_all(b"half")?;
            Err(io::Error::other("writer failed half-way"))
        });
        assert!(failed.is_err());
        assert_eq!(std::fs::read_to_string(&path).expect("read"), "old");
        assert!(leftovers(dir.path()).is_empty(), "{:?}", leftovers(dir.path()));
    }

    #[test]
    fn outputs_get_the_mode_of_an_ordinary_new_file() {
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join("out.json");
        write_atomic(&path, b"{}").expect("write");
        let plain = dir.path().join("plain");
        std::fs::write(&plain, b"{}").expect("write");
        let mode = |p: &Path| std::fs::metadata(p).expect("meta").permissions().mode() & 0o777;
        assert_eq!(mode(&path), mode(&plain));
    }

    #[test]
    fn a_missing_directory_is_an_error() {
        let dir = tempfile::tempdir().expect("temp dir");
        assert!(write_atomic(&dir.path().join("no/such/out.json"), b"{}").is_err());
    }
}
