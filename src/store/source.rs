//! The one place that decides how a `--store` argument is read.
//!
//! | argument | form |
//! |---|---|
//! | `postgres://…`, `postgresql://…` | PostgreSQL ([`super::sql`]) |
//! | `sqlite:PATH`, or a file that starts with SQLite's header | SQLite ([`super::sql`]) |
//! | `chunks:PATH`, or a file ending in `.jsonl` or `.ndjson` | chunk export ([`super::chunks`]) |
//! | anything else | a folder ([`super::Store::load`]) |
//!
//! [`open`] loads the store whole and builds its index — or takes both from a saved
//! index ([`super::cache`]) once it has checked that the store has not changed since —
//! or, for a database read lazily, returns a [`LazyStore`] that fetches the cited rows of
//! each batch of answers.

use std::collections::{BTreeMap, BTreeSet, HashMap};
use std::io::Read;
use std::path::{Path, PathBuf};

use sha2::{Digest, Sha256};

use super::cache::{self, CacheInfo};
use super::index::Index;
use super::sql::{SqlSource, redact_url};
use super::{
    Document, Parts, Store, StoreError, StoreForm, StoreLimits, StoreProblem, chunks, confine, hex,
};
use crate::answers::{Answer, Locator};
use crate::config::{StoreMode, StoreSettings};

/// A `--store` argument, understood.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum StoreSpec {
    /// A directory.
    Folder(PathBuf),
    /// A chunk export file.
    Chunks(PathBuf),
    /// A SQLite file.
    Sqlite(PathBuf),
    /// A PostgreSQL connection string (with its password, if it has one: never shown).
    Postgres(String),
}

/// SQLite's file header (its file format documentation, section 1.3.1).
const SQLITE_HEADER: &[u8; 16] = b"SQLite format 3\0";

impl StoreSpec {
    /// Reads the shape of a `--store` argument (see the module documentation).
    pub fn parse(arg: &Path) -> StoreSpec {
        if let Some(s) = arg.to_str() {
            if s.starts_with("postgres://") || s.starts_with("postgresql://") {
                return StoreSpec::Postgres(s.to_owned());
            }
            if let Some(p) = s.strip_prefix("sqlite:") {
                return StoreSpec::Sqlite(PathBuf::from(p));
            }
            if let Some(p) = s.strip_prefix("chunks:") {
                return StoreSpec::Chunks(PathBuf::from(p));
            }
        }
        if arg.is_file() {
            let mut head = [0u8; 16];
            let is_sqlite = std::fs::File::open(arg)
                .and_then(|mut f| f.read_exact(&mut head))
                .is_ok_and(|()| &head == SQLITE_HEADER);
            if is_sqlite {
                return StoreSpec::Sqlite(arg.to_path_buf());
            }
            let ext = arg.extension().and_then(|e| e.to_str()).unwrap_or("");
            if ext.eq_ignore_ascii_case("jsonl") || ext.eq_ignore_ascii_case("ndjson") {
                return StoreSpec::Chunks(arg.to_path_buf());
            }
        }
        StoreSpec::Folder(arg.to_path_buf())
    }

    /// What the run record and the report show: the path, or the connection string
    /// without its password.
    pub fn label(&self) -> String {
        match self {
            StoreSpec::Folder(p) | StoreSpec::Chunks(p) => p.display().to_string(),
            StoreSpec::Sqlite(p) => format!("sqlite:{}", p.display()),
            StoreSpec::Postgres(url) => redact_url(url),
        }
    }

    /// Its form.
    pub fn form(&self) -> StoreForm {
        match self {
            StoreSpec::Folder(_) => StoreForm::Folder,
            StoreSpec::Chunks(_) => StoreForm::Chunks,
            StoreSpec::Sqlite(_) => StoreForm::Sqlite,
            StoreSpec::Postgres(_) => StoreForm::Postgres,
        }
    }

    fn connect(&self, settings: &StoreSettings) -> Result<SqlSource, StoreError> {
        match self {
            StoreSpec::Sqlite(p) => SqlSource::sqlite(p, settings.query.as_deref()),
            StoreSpec::Postgres(url) => SqlSource::postgres(url, settings.query.as_deref()),
            _ => Err(StoreError::Root {
                path: PathBuf::from(self.label()),
                message: "is not a database".into(),
            }),
        }
    }
}

/// Replaces the password of any PostgreSQL connection string among command-line
/// arguments (`--store postgres://u:p@h/db` or `--store=postgres://…`), for the run record.
pub fn redact_args(args: &[String]) -> Vec<String> {
    args.iter()
        .map(|a| {
            for scheme in ["postgres://", "postgresql://"] {
                if let Some(i) = a.find(scheme) {
                    return format!("{}{}", &a[..i], redact_url(&a[i..]));
                }
            }
            a.clone()
        })
        .collect()
}

/// A store opened for a run (made once per run, so the size of its variants does not
/// matter).
#[allow(clippy::large_enum_variant)]
pub enum Opened {
    /// Loaded whole, with its index.
    Whole {
        /// The store.
        store: Store,
        /// Its index.
        index: Index,
        /// Where it came from, when from a saved index.
        cache: Option<CacheInfo>,
    },
    /// A database read batch by batch.
    Lazy(LazyStore),
}

/// Loads the store `spec` names (see the module documentation). `mode` overrides
/// `settings.mode`; `saved` is a saved index to use instead of reading the store.
pub fn open(
    spec: &StoreSpec,
    settings: &StoreSettings,
    mode: Option<StoreMode>,
    limits: &StoreLimits,
    saved: Option<&Path>,
) -> Result<Opened, StoreError> {
    if let Some(path) = saved {
        let (store, index, info) = cache::load(path, spec, limits, |header, stamps| match spec {
            StoreSpec::Folder(root) => {
                let changes = folder_changes(root, stamps, header.saved_at_epoch)?;
                Ok(if changes.is_empty() {
                    header.fingerprint.clone()
                } else {
                    format!("changed: {}", changes.join(", "))
                })
            }
            _ => fingerprint(spec, settings, limits),
        })?;
        return Ok(Opened::Whole { store, index, cache: Some(info) });
    }
    let store = match spec {
        StoreSpec::Folder(root) => Store::load(root, limits)?,
        StoreSpec::Chunks(path) => Store::assemble(chunks::load(path, limits)?),
        StoreSpec::Sqlite(_) | StoreSpec::Postgres(_) => {
            let mut source = spec.connect(settings)?;
            let mode = mode.unwrap_or(settings.mode);
            let lazy = match mode {
                StoreMode::Full => false,
                StoreMode::Lazy => true,
                StoreMode::Auto => source.count()? > settings.full_max_rows,
            };
            if lazy {
                source.begin_snapshot()?;
                return Ok(Opened::Lazy(LazyStore::new(source, settings, limits, mode)));
            }
            Store::assemble(source.load_all(limits)?)
        }
    };
    let index = build_index(&store);
    Ok(Opened::Whole { store, index, cache: None })
}

/// The search index over a store's documents.
pub fn build_index(store: &Store) -> Index {
    let texts: Vec<&str> = store.documents.iter().map(|d| d.visible_text()).collect();
    Index::build(&texts)
}

/// What identifies the content of a store, read without extracting anything, so that a
/// saved index can be checked against it quickly: for a folder the SHA-256 over every
/// candidate file's path and digest and the manifest's bytes; for a chunk export the
/// file's SHA-256; for a database the SHA-256 over the sorted rows (every column
/// plumbline reads). Equal fingerprints mean the same documents.
pub fn fingerprint(
    spec: &StoreSpec,
    settings: &StoreSettings,
    limits: &StoreLimits,
) -> Result<String, StoreError> {
    let root_err = |path: &Path, e: std::io::Error| StoreError::Root {
        path: path.to_path_buf(),
        message: format!("cannot read: {e}"),
    };
    match spec {
        StoreSpec::Folder(root) => Ok(stamps_fingerprint(&folder_stamps(root)?)),
        StoreSpec::Chunks(path) => {
            let mut f = std::fs::File::open(path).map_err(|e| root_err(path, e))?;
            let mut h = Sha256::new();
            let mut buf = vec![0u8; 1 << 16];
            loop {
                let n = f.read(&mut buf).map_err(|e| root_err(path, e))?;
                if n == 0 {
                    break;
                }
                h.update(&buf[..n]);
            }
            Ok(hex(&h.finalize()))
        }
        StoreSpec::Sqlite(_) | StoreSpec::Postgres(_) => {
            let mut source = spec.connect(settings)?;
            let parts = source.load_all_raw(limits)?;
            let mut lines: Vec<String> = parts
                .into_iter()
                .map(|r| {
                    let meta = serde_json::json!([
                        r.doc,
                        r.access,
                        r.title,
                        r.sha256,
                        r.format.map(|f| f.as_str()),
                        r.chunks
                            .iter()
                            .map(|c| (c.id.as_str(), c.start, c.end))
                            .collect::<Vec<_>>()
                    ]);
                    format!("{}\0{}\0{meta}", r.id, hex(&Sha256::digest(r.text.as_bytes())))
                })
                .collect();
            lines.sort();
            Ok(digest_lines(&lines))
        }
    }
}

/// A file of a folder store (a document or the manifest) as it was when an index was
/// saved: its digest, and the file-system facts that change whenever it is written.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct Stamp {
    /// Path relative to the root.
    pub rel: String,
    /// Size in bytes.
    pub size: u64,
    /// Modification time, seconds and nanoseconds.
    pub mtime: (i64, i64),
    /// Status-change time, seconds and nanoseconds: set by the system on every write
    /// or metadata change, and not settable by programs (unlike the modification time).
    pub ctime: (i64, i64),
    /// Inode number.
    pub ino: u64,
    /// SHA-256 of the content.
    pub sha256: String,
}

/// The candidate files of a folder store (what [`Store::load`] would consider, plus the
/// manifest), with their metadata, in walk order.
fn folder_files(root: &Path) -> Result<Vec<(String, PathBuf, std::fs::Metadata)>, StoreError> {
    if !root.is_dir() {
        return Err(StoreError::Root {
            path: root.to_path_buf(),
            message: "is not a directory".into(),
        });
    }
    let mut out = Vec::new();
    for entry in walkdir::WalkDir::new(root).follow_links(false).sort_by_file_name() {
        let Ok(entry) = entry else { continue };
        let rel = super::rel_path(root, entry.path());
        if entry.path_is_symlink() || !entry.file_type().is_file() {
            continue;
        }
        if super::extract::Format::from_path(entry.path()).is_none() && rel != "manifest.json" {
            continue;
        }
        let meta = std::fs::symlink_metadata(entry.path()).map_err(|e| StoreError::Root {
            path: entry.path().to_path_buf(),
            message: format!("cannot read: {e}"),
        })?;
        out.push((rel, entry.path().to_path_buf(), meta));
    }
    Ok(out)
}

fn stamp_of(rel: String, meta: &std::fs::Metadata, sha256: String) -> Stamp {
    use std::os::unix::fs::MetadataExt;
    Stamp {
        rel,
        size: meta.len(),
        mtime: (meta.mtime(), meta.mtime_nsec()),
        ctime: (meta.ctime(), meta.ctime_nsec()),
        ino: meta.ino(),
        sha256,
    }
}

fn hash_file(path: &Path) -> Result<String, StoreError> {
    let bytes = std::fs::read(path).map_err(|e| StoreError::Root {
        path: path.to_path_buf(),
        message: format!("cannot read: {e}"),
    })?;
    Ok(hex(&Sha256::digest(&bytes)))
}

/// Reads and digests every candidate file of a folder store, in parallel.
pub fn folder_stamps(root: &Path) -> Result<Vec<Stamp>, StoreError> {
    use rayon::prelude::*;
    folder_files(root)?
        .into_par_iter()
        .map(|(rel, path, meta)| Ok(stamp_of(rel, &meta, hash_file(&path)?)))
        .collect()
}

/// The fingerprint of a folder store: the SHA-256 over its files' paths, digests and
/// sizes (see [`fingerprint`]).
pub fn stamps_fingerprint(stamps: &[Stamp]) -> String {
    let lines: Vec<String> =
        stamps.iter().map(|s| format!("{}\0{}\0{}", s.rel, s.sha256, s.size)).collect();
    digest_lines(&lines)
}

/// What changed in a folder store since `saved` was taken at `saved_at` (seconds since
/// the epoch): files added, removed, or whose content differs. A file whose size, times
/// and inode are those saved, and whose times are at least two seconds older than the
/// save, is taken as unchanged without being read; every other file is read and its
/// digest compared (so a copied or touched store is not refused for nothing). This is
/// how git decides that a file is clean, racy timestamps included (`racy-git`).
pub fn folder_changes(
    root: &Path,
    saved: &[Stamp],
    saved_at: i64,
) -> Result<Vec<String>, StoreError> {
    use rayon::prelude::*;
    let by_rel: HashMap<&str, &Stamp> = saved.iter().map(|s| (s.rel.as_str(), s)).collect();
    let files = folder_files(root)?;
    let mut changes: Vec<String> = files
        .par_iter()
        .map(|(rel, path, meta)| -> Result<Option<String>, StoreError> {
            let Some(old) = by_rel.get(rel.as_str()) else {
                return Ok(Some(format!("{rel} (added)")));
            };
            let now = stamp_of(rel.clone(), meta, String::new());
            let racy = old.mtime.0 >= saved_at - 2 || old.ctime.0 >= saved_at - 2;
            if !racy
                && now.size == old.size
                && now.mtime == old.mtime
                && now.ctime == old.ctime
                && now.ino == old.ino
            {
                return Ok(None);
            }
            if now.size != old.size || hash_file(path)? != old.sha256 {
                return Ok(Some(format!("{rel} (changed)")));
            }
            Ok(None)
        })
        .collect::<Result<Vec<Option<String>>, StoreError>>()?
        .into_iter()
        .flatten()
        .collect();
    let present: std::collections::HashSet<&str> =
        files.iter().map(|(r, _, _)| r.as_str()).collect();
    changes.extend(
        saved
            .iter()
            .filter(|s| !present.contains(s.rel.as_str()))
            .map(|s| format!("{} (removed)", s.rel)),
    );
    changes.sort();
    Ok(changes)
}

fn digest_lines(lines: &[String]) -> String {
    let mut h = Sha256::new();
    for l in lines {
        h.update(l.as_bytes());
        h.update(b"\n");
    }
    hex(&h.finalize())
}

/// A database read batch by batch: only the rows the answers cite.
pub struct LazyStore {
    source: SqlSource,
    batch: usize,
    limits: StoreLimits,
    /// Every row fetched so far, by id.
    fetched: HashMap<String, Document>,
    /// Groups (`doc` values) already looked up.
    groups_looked_up: BTreeSet<String>,
    /// Ids already looked up.
    ids_looked_up: BTreeSet<String>,
    problems: Vec<StoreProblem>,
    /// How the mode was chosen, for the run record.
    pub mode: StoreMode,
}

impl LazyStore {
    fn new(
        source: SqlSource,
        settings: &StoreSettings,
        limits: &StoreLimits,
        mode: StoreMode,
    ) -> Self {
        LazyStore {
            source,
            batch: settings.batch,
            limits: limits.clone(),
            fetched: HashMap::new(),
            groups_looked_up: BTreeSet::new(),
            ids_looked_up: BTreeSet::new(),
            problems: Vec::new(),
            mode,
        }
    }

    /// What the run record shows for the store.
    pub fn label(&self) -> &str {
        &self.source.label
    }

    /// The form.
    pub fn form(&self) -> StoreForm {
        self.source.form()
    }

    /// A store of the rows `answers` cite (fetching those not fetched yet), and its index.
    /// It cannot be searched ([`Store::searchable`] is false).
    pub fn for_answers(&mut self, answers: &[Answer]) -> Result<(Store, Index), StoreError> {
        let mut refs: BTreeSet<String> = BTreeSet::new();
        let mut ids: BTreeSet<String> = BTreeSet::new();
        for c in answers.iter().flat_map(|a| a.citations.iter()) {
            let key = c.doc.strip_prefix("./").unwrap_or(&c.doc);
            if key.is_empty()
                || key.len() > self.limits.max_id_bytes
                || confine::check(key).is_err()
            {
                continue;
            }
            refs.insert(key.to_owned());
            ids.insert(key.to_owned());
            if let Locator::Chunk(k) = &c.locator {
                ids.insert(k.clone());
            }
        }
        let new_ids: Vec<String> =
            ids.iter().filter(|i| !self.ids_looked_up.contains(*i)).cloned().collect();
        // A reference that is no row's id may name a group of chunks.
        let new_groups: Vec<String> =
            refs.iter().filter(|r| !self.groups_looked_up.contains(*r)).cloned().collect();
        let (rows, problems) =
            self.source.fetch(&new_ids, &new_groups, self.batch, &self.limits)?;
        self.ids_looked_up.extend(new_ids);
        self.groups_looked_up.extend(new_groups);
        // A row found both by its id and by its group is the same row: keep one, and none
        // already fetched by an earlier batch.
        let mut rows = rows;
        rows.sort_by(|a, b| a.id.cmp(&b.id));
        rows.dedup_by(|a, b| a.id == b.id && a.text == b.text);
        rows.retain(|r| !self.fetched.contains_key(&r.id));
        let mut problems = problems;
        let docs = super::sql::rows_to_documents(rows, &mut problems, &self.limits);
        for p in problems {
            if !self.problems.contains(&p) {
                self.problems.push(p);
            }
        }
        for d in docs {
            self.fetched.entry(d.id.clone()).or_insert(d);
        }
        let documents: Vec<Document> = self
            .fetched
            .values()
            .filter(|d| ids.contains(&d.id) || d.group.as_ref().is_some_and(|g| refs.contains(g)))
            .cloned()
            .collect();
        let mut store = Store::assemble(Parts {
            form: self.source.form(),
            root: PathBuf::from(&self.source.label),
            documents,
            default_access: None,
            problems: Vec::new(),
            unreadable: Vec::new(),
            max_id_bytes: self.limits.max_id_bytes,
        });
        store.searchable = false;
        let index = build_index(&store);
        Ok((store, index))
    }

    /// The documents fetched over the run: how many, and the digest over them (as a
    /// store's digest is over all of its documents).
    pub fn fetched_digest(&self) -> (usize, String) {
        let sorted: BTreeMap<&str, &str> =
            self.fetched.values().map(|d| (d.id.as_str(), d.sha256.as_str())).collect();
        let mut h = Sha256::new();
        for (id, sha) in &sorted {
            h.update(id.as_bytes());
            h.update([0]);
            h.update(sha.as_bytes());
            h.update(b"\n");
        }
        (sorted.len(), hex(&h.finalize()))
    }

    /// Rows that could not be read.
    pub fn problems(&self) -> &[StoreProblem] {
        &self.problems
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_shape_of_the_argument_decides_the_form() {
        let dir = tempfile::tempdir().unwrap();
        let db = dir.path().join("kb.bin");
        rusqlite::Connection::open(&db).unwrap().execute_batch("CREATE TABLE t (x)").unwrap();
        let jsonl = dir.path().join("kb.JSONL");
        std::fs::write(&jsonl, "").unwrap();
        let other = dir.path().join("notes.txt");
        std::fs::write(&other, "").unwrap();
        assert_eq!(StoreSpec::parse(Path::new("postgres://u@h/db")).form(), StoreForm::Postgres);
        assert_eq!(StoreSpec::parse(Path::new("postgresql:///db")).form(), StoreForm::Postgres);
        assert_eq!(
            StoreSpec::parse(Path::new("sqlite:no/such.db")),
            StoreSpec::Sqlite("no/such.db".into())
        );
        assert_eq!(StoreSpec::parse(&db), StoreSpec::Sqlite(db.clone()), "by SQLite's header");
        assert_eq!(StoreSpec::parse(&jsonl), StoreSpec::Chunks(jsonl.clone()));
        assert_eq!(StoreSpec::parse(Path::new("chunks:x.txt")), StoreSpec::Chunks("x.txt".into()));
        assert_eq!(StoreSpec::parse(&other), StoreSpec::Folder(other.clone()));
        assert_eq!(StoreSpec::parse(dir.path()), StoreSpec::Folder(dir.path().to_path_buf()));
    }

    #[test]
    fn passwords_leave_the_recorded_command_line() {
        let args: Vec<String> = [
            "plumbline",
            "check",
            "--store",
            "postgres://a:pw@h/db",
            "--store=postgresql://b:pw2@h/db?password=x",
        ]
        .map(String::from)
        .to_vec();
        let out = redact_args(&args);
        assert_eq!(out[3], "postgres://a@h/db");
        assert_eq!(out[4], "--store=postgresql://b@h/db");
        assert_eq!(out[..3], args[..3]);
    }
}
