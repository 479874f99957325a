//! The document store: a directory of documents read once, in memory, and never left.
//!
//! # What is read
//!
//! Every regular file below the root whose name ends in `.txt`, `.md`, `.markdown`,
//! `.html` or `.htm` (case-insensitive) is a document; everything else is ignored. The walk
//! (`walkdir`) never follows a symbolic link: a link, to a file or to a directory, is
//! skipped and reported, because it can point anywhere. A file with more than one hard
//! link is skipped and reported too, since one of its names may lie outside the store and
//! its content is then not the store's to vouch for. A store root given as a symbolic
//! link is refused (the caller can pass the real path). Files that are not UTF-8, or
//! larger than [`StoreLimits::max_document_bytes`], are skipped and reported — never read
//! half or silently as empty.
//!
//! # Ids and the manifest
//!
//! A document's id is its path relative to the root with `/` separators, unless the
//! optional `manifest.json` at the root gives another id; the relative path then stays an
//! alias. The manifest ([`manifest`]) also gives titles, access groups, named chunks and
//! `default_access`. A manifest path is resolved lexically ([`confine`]) and only ever
//! matched against files the walk already read; it is never opened itself. A bad entry
//! is reported and skipped.
//!
//! # Confinement
//!
//! [`Store::resolve_position`] looks a citation's document up in memory only. A reference
//! that could lead outside the store (`..`, absolute, drive or UNC paths, NUL bytes,
//! percent-encoded traversal, URLs, over-long ids) is `dead` with its reason, before any
//! lookup.
//!
//! # Digests
//!
//! Every file's bytes are digested with SHA-256 (lower-case hex); the store digest is the
//! SHA-256 of the lines `id \0 sha256 \n` sorted by id, so that two stores with the same
//! documents have the same digest whatever the order of the walk.

use std::collections::HashMap;
use std::fmt;
use std::io::Read;
use std::ops::Range;
use std::os::unix::fs::{MetadataExt, OpenOptionsExt};
use std::panic::{AssertUnwindSafe, catch_unwind};
use std::path::{Path, PathBuf};

use rayon::prelude::*;
use sha2::{Digest, Sha256};

pub mod confine;
pub mod extract;
mod html;
pub mod index;
pub mod manifest;
mod markdown;

use extract::{ExtractOptions, Extracted, Format};

/// Limits applied while loading a store (the `[limits]` config table).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct StoreLimits {
    /// Largest document file read, in bytes.
    pub max_document_bytes: u64,
    /// Deepest HTML nesting tracked structurally.
    pub max_html_depth: usize,
    /// Longest document id or reference accepted, in bytes.
    pub max_id_bytes: usize,
}

impl Default for StoreLimits {
    fn default() -> Self {
        StoreLimits {
            max_document_bytes: 64 * 1024 * 1024,
            max_html_depth: 512,
            max_id_bytes: 1024,
        }
    }
}

impl From<&crate::config::Limits> for StoreLimits {
    fn from(l: &crate::config::Limits) -> Self {
        StoreLimits {
            max_document_bytes: l.max_document_bytes,
            max_html_depth: l.max_html_depth,
            max_id_bytes: l.max_id_bytes,
        }
    }
}

/// A store that cannot be read at all (exit 2).
#[derive(Debug, thiserror::Error)]
pub enum StoreError {
    /// The root does not exist or is not a directory.
    #[error("store {path}: {message}")]
    Root {
        /// The root given.
        path: PathBuf,
        /// What is wrong.
        message: String,
    },
    /// The manifest exists but is not valid JSON of the right shape.
    #[error("{0}")]
    Manifest(#[from] manifest::ManifestError),
}

/// A named byte range of a document.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Chunk {
    /// Chunk id.
    pub id: String,
    /// Start byte in the file.
    pub start: usize,
    /// End byte in the file (exclusive).
    pub end: usize,
}

/// Something skipped while loading, and why.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct StoreProblem {
    /// The file or manifest entry concerned (relative to the root).
    pub path: String,
    /// The manifest field, where the problem is in one.
    pub field: Option<String>,
    /// What is wrong.
    pub message: String,
}

/// One document of the store.
#[derive(Debug, Clone)]
pub struct Document {
    /// Its id.
    pub id: String,
    /// Path relative to the root, `/` separators.
    pub path: String,
    /// How it was read.
    pub format: Format,
    /// Title from the manifest.
    pub title: Option<String>,
    /// Access groups from the manifest (`None`: take the store's default).
    pub access: Option<Vec<String>>,
    /// Named chunks from the manifest.
    pub chunks: Vec<Chunk>,
    /// SHA-256 of the file, lower-case hex.
    pub sha256: String,
    /// File size in bytes.
    pub size: u64,
    raw: String,
    visible: Extracted,
}

impl Document {
    /// The file's text as stored.
    pub fn raw(&self) -> &str {
        &self.raw
    }

    /// The visible text (markup removed).
    pub fn visible_text(&self) -> &str {
        self.visible.visible(&self.raw)
    }

    /// The visible range whose source lies in the file range `start..end`.
    pub fn visible_range(&self, start: usize, end: usize) -> Range<usize> {
        self.visible.visible_range(&self.raw, start, end)
    }

    /// The file range a visible range comes from.
    pub fn file_range(&self, visible: Range<usize>) -> Range<usize> {
        self.visible.map.to_file_range(visible)
    }

    /// The access that applies: the document's own, else the store's default.
    pub fn effective_access<'a>(&'a self, default: Option<&'a [String]>) -> Option<&'a [String]> {
        self.access.as_deref().or(default)
    }
}

/// Why a citation's document is dead.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum DeadReason {
    /// The reference could lead outside the store.
    Escapes(confine::Escape),
    /// Longer than the id limit.
    TooLong(usize),
    /// Empty.
    Empty,
    /// No document has this id or path.
    NotFound,
    /// The file at this path was seen but not read (a link, a file with several hard
    /// links, too large, not UTF-8); the reason the store gave.
    Skipped(String),
}

impl fmt::Display for DeadReason {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            DeadReason::Escapes(e) => write!(f, "the reference {e}; it is never read"),
            DeadReason::TooLong(n) => {
                write!(f, "the reference is {n} bytes long, over the id limit; it is never read")
            }
            DeadReason::Empty => f.write_str("the reference is empty"),
            DeadReason::NotFound => f.write_str("no document of the store has this id or path"),
            DeadReason::Skipped(why) => write!(f, "the store skipped this file, which {why}"),
        }
    }
}

/// The loaded store.
#[derive(Debug, Clone)]
pub struct Store {
    /// The root directory.
    pub root: PathBuf,
    /// Documents, sorted by id.
    pub documents: Vec<Document>,
    /// `default_access` from the manifest.
    pub default_access: Option<Vec<String>>,
    /// What was skipped, and why.
    pub problems: Vec<StoreProblem>,
    /// SHA-256 over the sorted `id \0 sha256 \n` lines.
    pub digest: String,
    by_key: HashMap<String, usize>,
    max_id_bytes: usize,
}

/// A file found by the walk, before the manifest is applied.
struct Found {
    rel: String,
    format: Format,
    path: PathBuf,
}

fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

impl Store {
    /// Loads the store at `root`; see the module documentation.
    pub fn load(root: &Path, limits: &StoreLimits) -> Result<Store, StoreError> {
        let meta = std::fs::symlink_metadata(root).map_err(|e| StoreError::Root {
            path: root.to_path_buf(),
            message: format!("cannot read: {e}"),
        })?;
        if meta.file_type().is_symlink() {
            return Err(StoreError::Root {
                path: root.to_path_buf(),
                message: "is a symbolic link; give the directory it points to".into(),
            });
        }
        if !meta.is_dir() {
            return Err(StoreError::Root {
                path: root.to_path_buf(),
                message: "is not a directory".into(),
            });
        }
        let mut problems = Vec::new();
        let mut found = Vec::new();
        for entry in walkdir::WalkDir::new(root).follow_links(false).sort_by_file_name() {
            let entry = match entry {
                Ok(e) => e,
                Err(e) => {
                    let path = e.path().map(|p| rel_path(root, p)).unwrap_or_default();
                    problems.push(StoreProblem {
                        path,
                        field: None,
                        message: format!("cannot read: {e}"),
                    });
                    continue;
                }
            };
            let rel = rel_path(root, entry.path());
            if entry.path_is_symlink() {
                if Format::from_path(entry.path()).is_some()
                    || entry.file_type().is_dir()
                    || entry.path().is_dir()
                {
                    problems.push(StoreProblem {
                        path: rel,
                        field: None,
                        message: "is a symbolic link: not followed".into(),
                    });
                }
                continue;
            }
            if !entry.file_type().is_file() {
                continue;
            }
            let Some(format) = Format::from_path(entry.path()) else { continue };
            found.push(Found { rel, format, path: entry.path().to_path_buf() });
        }

        // Read, digest and extract in parallel; results keep the walk's order.
        let options = ExtractOptions { max_html_depth: limits.max_html_depth };
        let read: Vec<Result<Document, StoreProblem>> =
            found.par_iter().map(|f| read_document(f, limits, &options)).collect();
        let mut documents = Vec::new();
        for r in read {
            match r {
                Ok(d) => documents.push(d),
                Err(p) => problems.push(p),
            }
        }

        // Apply the manifest.
        let mut default_access = None;
        let manifest_path = root.join("manifest.json");
        if manifest_path.is_symlink() {
            problems.push(StoreProblem {
                path: "manifest.json".into(),
                field: None,
                message: "symbolic link: not followed, so the store has no manifest".into(),
            });
        } else if manifest_path.is_file() {
            let m = manifest::load(&manifest_path, limits.max_document_bytes)?;
            default_access = m.default_access;
            problems.extend(m.problems.into_iter().map(|p| StoreProblem {
                path: format!("manifest.json: documents[{}]", p.entry),
                field: p.field,
                message: p.message,
            }));
            let by_path: HashMap<String, usize> =
                documents.iter().enumerate().map(|(i, d)| (d.path.clone(), i)).collect();
            let mut claimed: HashMap<String, usize> = HashMap::new();
            for e in m.entries {
                let Some(&i) = by_path.get(&e.path) else {
                    problems.push(StoreProblem {
                        path: format!("manifest.json: documents[{}]", e.index),
                        field: Some("path".into()),
                        message: format!("no readable document at {:?} in the store", e.path),
                    });
                    continue;
                };
                if let Some(prev) = claimed.insert(e.path.clone(), e.index) {
                    problems.push(StoreProblem {
                        path: format!("manifest.json: documents[{}]", e.index),
                        field: Some("path".into()),
                        message: format!("{:?} is already described by documents[{prev}]", e.path),
                    });
                    continue;
                }
                let d = &mut documents[i];
                if let Some(id) = e.id {
                    d.id = id;
                }
                d.title = e.title;
                d.access = e.access;
                d.chunks = e
                    .chunks
                    .into_iter()
                    .map(|c| Chunk { id: c.id, start: c.start, end: c.end })
                    .collect();
            }
        }

        documents.sort_by(|a, b| a.id.cmp(&b.id));
        // Ids must be unique: a manifest id may collide with another file's path.
        let mut by_key = HashMap::new();
        let mut keep = Vec::with_capacity(documents.len());
        for d in documents {
            if by_key.contains_key(&d.id) {
                problems.push(StoreProblem {
                    path: d.path.clone(),
                    field: Some("id".into()),
                    message: format!("id {:?} is used by another document; skipped", d.id),
                });
                continue;
            }
            by_key.insert(d.id.clone(), keep.len());
            keep.push(d);
        }
        for (i, d) in keep.iter().enumerate() {
            by_key.entry(d.path.clone()).or_insert(i);
        }
        let mut h = Sha256::new();
        for d in &keep {
            h.update(d.id.as_bytes());
            h.update([0]);
            h.update(d.sha256.as_bytes());
            h.update(b"\n");
        }
        problems.sort_by(|a, b| a.path.cmp(&b.path));
        Ok(Store {
            root: root.to_path_buf(),
            documents: keep,
            default_access,
            problems,
            digest: hex(&h.finalize()),
            by_key,
            max_id_bytes: limits.max_id_bytes,
        })
    }

    /// Looks a citation's `doc` up by id, or by relative path as an alias; in memory only.
    pub fn resolve_position(&self, reference: &str) -> Result<(usize, &Document), DeadReason> {
        if reference.is_empty() {
            return Err(DeadReason::Empty);
        }
        if reference.len() > self.max_id_bytes {
            return Err(DeadReason::TooLong(reference.len()));
        }
        confine::check(reference).map_err(DeadReason::Escapes)?;
        let key = reference.strip_prefix("./").unwrap_or(reference);
        let Some(&i) = self.by_key.get(key) else {
            let skipped = self.problems.iter().find(|p| p.field.is_none() && p.path == key);
            return Err(
                skipped.map_or(DeadReason::NotFound, |p| DeadReason::Skipped(p.message.clone()))
            );
        };
        Ok((i, &self.documents[i]))
    }

    /// [`Store::resolve_position`] without the position.
    pub fn resolve(&self, reference: &str) -> Result<&Document, DeadReason> {
        self.resolve_position(reference).map(|(_, d)| d)
    }

    /// Total bytes of visible text.
    pub fn visible_bytes(&self) -> usize {
        self.documents.iter().map(|d| d.visible_text().len()).sum()
    }
}

fn rel_path(root: &Path, p: &Path) -> String {
    let rel = p.strip_prefix(root).unwrap_or(p);
    rel.components()
        .map(|c| c.as_os_str().to_string_lossy().into_owned())
        .collect::<Vec<_>>()
        .join("/")
}

fn read_document(
    f: &Found,
    limits: &StoreLimits,
    options: &ExtractOptions,
) -> Result<Document, StoreProblem> {
    let problem = |message: String| StoreProblem { path: f.rel.clone(), field: None, message };
    // Opened without following a link in the last component, and checked on the open
    // handle: a file swapped for a link, or linked again, after the walk saw it is still
    // never read through the link.
    let file = std::fs::OpenOptions::new()
        .read(true)
        .custom_flags(libc::O_NOFOLLOW | libc::O_NONBLOCK)
        .open(&f.path)
        .map_err(|e| {
            if e.raw_os_error() == Some(libc::ELOOP) {
                problem("is a symbolic link: not followed".into())
            } else {
                problem(format!("cannot read: {e}"))
            }
        })?;
    let meta = file.metadata().map_err(|e| problem(format!("cannot read: {e}")))?;
    if !meta.is_file() {
        return Err(problem("is not a regular file; not read".into()));
    }
    if meta.nlink() > 1 {
        return Err(problem(format!(
            "has {} hard links; one may lie outside the store, so it is not read",
            meta.nlink()
        )));
    }
    let too_big = |size: u64| {
        problem(format!(
            "is {size} bytes, over limits.max_document_bytes = {}; not read",
            limits.max_document_bytes
        ))
    };
    if meta.len() > limits.max_document_bytes {
        return Err(too_big(meta.len()));
    }
    // Read at most one byte over the limit, so a file that grows after the check is still
    // refused rather than read whole.
    let mut bytes = Vec::with_capacity(meta.len() as usize);
    file.take(limits.max_document_bytes.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(|e| problem(format!("cannot read: {e}")))?;
    if bytes.len() as u64 > limits.max_document_bytes {
        return Err(too_big(bytes.len() as u64));
    }
    let sha256 = hex(&Sha256::digest(&bytes));
    let size = bytes.len() as u64;
    let raw = String::from_utf8(bytes).map_err(|e| {
        problem(format!(
            "is not UTF-8 (invalid byte at offset {}); not read",
            e.utf8_error().valid_up_to()
        ))
    })?;
    // Extraction runs behind a panic boundary, like the check of an answer: a defect the
    // document's markup triggers costs that document, not the run.
    let visible = catch_unwind(AssertUnwindSafe(|| extract::extract_with(f.format, &raw, options)))
        .map_err(|p| {
            let cause = p
                .downcast_ref::<&str>()
                .map(|s| (*s).to_owned())
                .or_else(|| p.downcast_ref::<String>().cloned())
                .unwrap_or_else(|| "unknown cause".into());
            problem(format!(
                "internal error while extracting its text (a defect of plumbline): {cause}; not read"
            ))
        })?;
    Ok(Document {
        id: f.rel.clone(),
        path: f.rel.clone(),
        format: f.format,
        title: None,
        access: None,
        chunks: Vec::new(),
        sha256,
        size,
        raw,
        visible,
    })
}
