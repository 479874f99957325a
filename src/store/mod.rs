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
//! # Other forms
//!
//! The same [`Store`] is also loaded from a chunk export ([`chunks`], one JSON object a
//! line), a SQLite file or a PostgreSQL table ([`sql`]), or a saved index ([`cache`]);
//! [`source`] decides which from the shape of the `--store` argument. In those forms a
//! row (a *chunk*) is a document whose text is the row's text; rows that name the same
//! `doc` form a group, so that a citation may name the group's id with a `chunk`. PDF
//! files of a folder store are read through [`pdf`].
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
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

pub mod cache;
pub mod chunks;
pub mod confine;
pub mod extract;
mod html;
pub mod index;
pub mod manifest;
mod markdown;
pub mod pdf;
pub mod row;
pub mod source;
pub mod sql;

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
    /// A saved index that cannot be used (`check --index`).
    #[error("saved index {path}: {message}")]
    SavedIndex {
        /// The file.
        path: PathBuf,
        /// Why it cannot be used.
        message: String,
    },
}

/// A named byte range of a document.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Chunk {
    /// Chunk id.
    pub id: String,
    /// Start byte in the file.
    pub start: usize,
    /// End byte in the file (exclusive).
    pub end: usize,
}

/// Something skipped while loading, and why.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct StoreProblem {
    /// The file or manifest entry concerned (relative to the root).
    pub path: String,
    /// The manifest field, where the problem is in one.
    pub field: Option<String>,
    /// What is wrong.
    pub message: String,
}

/// One document of the store.
#[derive(Debug, Clone, Serialize, Deserialize)]
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
    /// For a PDF, the byte range of each page in [`Document::raw`] (page `i + 1` at `i`;
    /// empty for a page without text); empty for other documents.
    pub pages: Vec<Range<usize>>,
    /// For a chunk of a chunk export or database, the id of the document it was cut from.
    pub group: Option<String>,
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

    /// A document made from text held in a row (a chunk export or database): `id` is also
    /// its path, `sha256` and `size` are those of the text's UTF-8 bytes.
    pub fn from_text(id: String, text: String, format: Format, options: &ExtractOptions) -> Self {
        let sha256 = hex(&Sha256::digest(text.as_bytes()));
        let visible = extract::extract_with(format, &text, options);
        Document {
            path: id.clone(),
            id,
            format,
            title: None,
            access: None,
            chunks: Vec::new(),
            sha256,
            size: text.len() as u64,
            pages: Vec::new(),
            group: None,
            raw: text,
            visible,
        }
    }

    /// The 1-based page holding file byte `offset`, for a PDF.
    pub fn page_of(&self, offset: usize) -> Option<u32> {
        pdf::page_of(&self.pages, offset)
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
    /// The document exists but could not be read (a PDF without a text layer, say).
    Unreadable(String),
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
            DeadReason::Unreadable(why) => {
                write!(f, "the document is in the store but could not be read: it {why}")
            }
        }
    }
}

/// Where a store was read from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum StoreForm {
    /// A directory of files.
    Folder,
    /// A chunk export (JSON Lines).
    Chunks,
    /// A SQLite database.
    Sqlite,
    /// A PostgreSQL database.
    Postgres,
}

impl StoreForm {
    /// `folder`, `chunks`, `sqlite` or `postgres`.
    pub fn as_str(self) -> &'static str {
        match self {
            StoreForm::Folder => "folder",
            StoreForm::Chunks => "chunks",
            StoreForm::Sqlite => "sqlite",
            StoreForm::Postgres => "postgres",
        }
    }
}

/// What a loader hands to [`Store::assemble`].
#[derive(Debug, Clone)]
pub struct Parts {
    /// Where it came from.
    pub form: StoreForm,
    /// The root directory or file (empty for a database server).
    pub root: PathBuf,
    /// The documents, in any order.
    pub documents: Vec<Document>,
    /// The store's default access.
    pub default_access: Option<Vec<String>>,
    /// What was skipped.
    pub problems: Vec<StoreProblem>,
    /// Documents that exist but could not be read, by id and path, with the reason.
    pub unreadable: Vec<(String, String)>,
    /// Longest reference accepted.
    pub max_id_bytes: usize,
}

/// The loaded store.
#[derive(Debug, Clone)]
pub struct Store {
    /// Where it was read from.
    pub form: StoreForm,
    /// The root directory (the file, for a chunk export or SQLite; empty for PostgreSQL).
    pub root: PathBuf,
    /// Documents, sorted by id.
    pub documents: Vec<Document>,
    /// `default_access` from the manifest.
    pub default_access: Option<Vec<String>>,
    /// What was skipped, and why.
    pub problems: Vec<StoreProblem>,
    /// SHA-256 over the sorted `id \0 sha256 \n` lines.
    pub digest: String,
    /// Whether the whole store is here, so that the store-wide search can run. False for a
    /// database read lazily ([`sql`]), which holds only the documents the answers cite.
    pub searchable: bool,
    by_key: HashMap<String, usize>,
    /// Chunk groups: a `doc` id of rows to the positions of its chunks, in id order.
    groups: HashMap<String, Vec<usize>>,
    /// Documents that could not be read, by id and path, with the reason.
    unreadable: HashMap<String, String>,
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
        let read: Vec<Result<(Document, Vec<StoreProblem>), Skipped>> =
            found.par_iter().map(|f| read_document(f, limits, &options)).collect();
        let mut documents = Vec::new();
        // Files that exist but cannot be read as documents, by path: a citation of one is
        // dead with the reason. Only PDFs are listed, so that the messages for other files
        // stay as they were.
        let mut unreadable: Vec<(String, String)> = Vec::new();
        for r in read {
            match r {
                Ok((d, notes)) => {
                    documents.push(d);
                    problems.extend(notes);
                }
                Err(Skipped { problem, unreadable: why }) => {
                    if let Some(why) = why {
                        unreadable.push((problem.path.clone(), why));
                    }
                    problems.push(problem);
                }
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
                    if let (Some(id), Some(why)) = (
                        &e.id,
                        unreadable.iter().find(|(p, _)| *p == e.path).map(|(_, w)| w.clone()),
                    ) {
                        unreadable.push((id.clone(), why));
                    }
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

        Ok(Store::assemble(Parts {
            form: StoreForm::Folder,
            root: root.to_path_buf(),
            documents,
            default_access,
            problems,
            unreadable,
            max_id_bytes: limits.max_id_bytes,
        }))
    }

    /// Builds a store from loaded documents: sorts them by id, skips (and reports) a
    /// repeated id, indexes ids, paths and chunk groups, and computes the digest.
    pub fn assemble(parts: Parts) -> Store {
        let Parts {
            form,
            root,
            mut documents,
            default_access,
            mut problems,
            unreadable,
            max_id_bytes,
        } = parts;
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
        let mut groups: HashMap<String, Vec<usize>> = HashMap::new();
        for (i, d) in keep.iter().enumerate() {
            if let Some(g) = &d.group {
                groups.entry(g.clone()).or_default().push(i);
            }
        }
        let mut h = Sha256::new();
        for d in &keep {
            h.update(d.id.as_bytes());
            h.update([0]);
            h.update(d.sha256.as_bytes());
            h.update(b"\n");
        }
        problems.sort_by(|a, b| problem_order(&a.path).cmp(&problem_order(&b.path)));
        Store {
            form,
            root,
            documents: keep,
            default_access,
            problems,
            digest: hex(&h.finalize()),
            searchable: true,
            by_key,
            groups,
            unreadable: unreadable.into_iter().collect(),
            max_id_bytes,
        }
    }

    /// The documents that could not be read, by id or path, with the reason, sorted.
    pub fn unreadable_list(&self) -> Vec<(String, String)> {
        let mut v: Vec<(String, String)> =
            self.unreadable.iter().map(|(k, v)| (k.clone(), v.clone())).collect();
        v.sort();
        v
    }

    /// The chunks of the group `doc` (rows of a chunk export or database that name it as
    /// their `doc`), as store positions in id order; `None` when no row names it.
    pub fn group(&self, doc: &str) -> Option<&[usize]> {
        self.groups.get(doc).map(Vec::as_slice)
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
            if let Some(why) = self.unreadable.get(key) {
                return Err(DeadReason::Unreadable(why.clone()));
            }
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

/// Problems are listed by path, a trailing `:LINE` (chunk exports) counted as a number so
/// that line 10 comes after line 9.
fn problem_order(path: &str) -> (&str, u64, &str) {
    match path.rsplit_once(':') {
        Some((head, n)) if !n.is_empty() && n.bytes().all(|b| b.is_ascii_digit()) => {
            (head, n.parse().unwrap_or(u64::MAX), "")
        }
        _ => (path, 0, path),
    }
}

fn rel_path(root: &Path, p: &Path) -> String {
    let rel = p.strip_prefix(root).unwrap_or(p);
    rel.components()
        .map(|c| c.as_os_str().to_string_lossy().into_owned())
        .collect::<Vec<_>>()
        .join("/")
}

/// A file the walk found but did not read.
struct Skipped {
    problem: StoreProblem,
    /// Why, when the file is a document that exists but cannot be read (a PDF).
    unreadable: Option<String>,
}

fn read_document(
    f: &Found,
    limits: &StoreLimits,
    options: &ExtractOptions,
) -> Result<(Document, Vec<StoreProblem>), Skipped> {
    let problem = |message: String| Skipped {
        problem: StoreProblem { path: f.rel.clone(), field: None, message },
        unreadable: None,
    };
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
    let mut notes = Vec::new();
    // Extraction runs behind a panic boundary, like the check of an answer: a defect the
    // document's markup triggers costs that document, not the run.
    let extracted = catch_unwind(AssertUnwindSafe(|| {
        let (raw, pages) = if f.format == Format::Pdf {
            match pdf::extract(&bytes) {
                Ok(t) => {
                    for n in &t.empty_pages {
                        notes.push(StoreProblem {
                            path: f.rel.clone(),
                            field: Some(format!("page {n}")),
                            message: "has no text layer (an image); its text is empty, and a citation of this page is a bad_locator".into(),
                        });
                    }
                    (t.text, t.pages)
                }
                Err(e) => {
                    let why = e.to_string();
                    return Err(Skipped {
                        problem: StoreProblem {
                            path: f.rel.clone(),
                            field: None,
                            message: why.clone(),
                        },
                        unreadable: Some(why),
                    });
                }
            }
        } else {
            let raw = String::from_utf8(bytes).map_err(|e| {
                problem(format!(
                    "is not UTF-8 (invalid byte at offset {}); not read",
                    e.utf8_error().valid_up_to()
                ))
            })?;
            (raw, Vec::new())
        };
        let visible = extract::extract_with(f.format, &raw, options);
        Ok((raw, pages, visible))
    }));
    let (raw, pages, visible) = extracted.unwrap_or_else(|p| {
        let cause = p
            .downcast_ref::<&str>()
            .map(|s| (*s).to_owned())
            .or_else(|| p.downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "unknown cause".into());
        Err(problem(format!(
            "internal error while extracting its text (a defect of plumbline): {cause}; not read"
        )))
    })?;
    let document = Document {
        id: f.rel.clone(),
        path: f.rel.clone(),
        format: f.format,
        title: None,
        access: None,
        chunks: Vec::new(),
        sha256,
        size,
        pages,
        group: None,
        raw,
        visible,
    };
    Ok((document, notes))
}
