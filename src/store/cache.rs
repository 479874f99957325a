//! A saved index: a store's documents (their text, visible text and offset maps, pages,
//! metadata) and its search index in one file, so that later runs skip extraction and
//! indexing.
//!
//! `plumbline index --store S --out store.idx` writes it; `plumbline check --store S
//! --index store.idx` uses it after checking, without extracting anything, that S still
//! is what the file was built from ([`super::source::fingerprint`]). A file built from
//! another store, or from this one before it changed, or with other `[limits]`, or by
//! another version of plumbline, is refused with a message that says which (exit 2),
//! never used.
//!
//! # Format
//!
//! The 16 bytes `plumbline-index\n`; a little-endian `u64` length and a header of that
//! many bytes; a `u64` length and the list of a folder store's files with their digests
//! and file-system stamps ([`super::source::Stamp`]; empty for other forms); then the
//! body. Header and body are MessagePack (`rmp-serde`) encodings of
//! [`Header`] and of the documents and index (a self-describing format, because the
//! figures of the index are written with tagged and flattened fields). The header is read and checked first,
//! so a stale file is refused before its body is read. [`FORMAT`] changes whenever the
//! layout does. The header also holds the digest of the index of a fixed probe text made
//! by the running binary: an index saved by a build whose tokenizer or sentence splitter
//! differs is refused even when the version number is the same.

use std::io::{Read, Write};
use std::path::Path;

use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

use super::index::Index;
use super::source::{Stamp, StoreSpec};
use super::{Document, Parts, Store, StoreError, StoreForm, StoreLimits, StoreProblem, hex};

/// The file's first bytes.
pub const MAGIC: &[u8; 16] = b"plumbline-index\n";

/// Layout version of the file.
pub const FORMAT: u32 = 1;

/// What is checked before the body is read.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Header {
    /// [`FORMAT`].
    pub format: u32,
    /// plumbline's version.
    pub version: String,
    /// Digest of the probe index (see the module documentation).
    pub probe: String,
    /// The store's form.
    pub form: StoreForm,
    /// The store as the command line named it (password removed).
    pub label: String,
    /// [`super::source::fingerprint`] of the store when saved.
    pub fingerprint: String,
    /// The store's digest (over ids and document digests).
    pub digest: String,
    /// Documents saved.
    pub documents: usize,
    /// `[limits]` it was loaded with: document bytes, HTML depth, id bytes.
    pub limits: (u64, usize, usize),
    /// When it was saved (UTC, RFC 3339).
    pub saved_at: String,
    /// The same, in seconds since the Unix epoch.
    pub saved_at_epoch: i64,
}

#[derive(Serialize)]
struct BodyRef<'a> {
    documents: &'a [Document],
    default_access: &'a Option<Vec<String>>,
    problems: &'a [StoreProblem],
    unreadable: &'a [(String, String)],
    index: &'a Index,
}

/// Decodes what [`BodyRef`] encodes.
#[derive(Deserialize)]
struct Body {
    documents: Vec<Document>,
    default_access: Option<Vec<String>>,
    problems: Vec<StoreProblem>,
    unreadable: Vec<(String, String)>,
    index: Index,
}

/// What a run that used a saved index records of it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CacheInfo {
    /// The file.
    pub path: String,
    /// Its size in bytes.
    pub size: u64,
    /// Its header.
    pub header: Header,
}

/// A text that exercises sentence splitting, abbreviations, figures and stemming.
const PROBE: &str = "Dr. Okafor approved 27 days of leave on 4 March 2026. Claims stay open for \
45 days (about 6.5 weeks), then close automatically! Refunds of £8.95 take 3–5 working days; \
e.g. returns-policy.md v2.1 says so. Isn't that what the team's runbooks describe?";

/// Digest of the index of a fixed probe text as this binary builds it.
pub fn probe_digest() -> String {
    let index = Index::build(&[PROBE]);
    let bytes = rmp_serde::to_vec(&index).unwrap_or_default();
    hex(&Sha256::digest(&bytes))
}

fn limits_key(l: &StoreLimits) -> (u64, usize, usize) {
    (l.max_document_bytes, l.max_html_depth, l.max_id_bytes)
}

fn bad(path: &Path, message: impl Into<String>) -> StoreError {
    StoreError::SavedIndex { path: path.to_path_buf(), message: message.into() }
}

/// Writes `store` and `index` to `out`, with the store's `fingerprint`; returns the
/// header written and the file's size.
#[allow(clippy::too_many_arguments)]
pub fn save(
    out: &Path,
    store: &Store,
    index: &Index,
    label: &str,
    fingerprint: &str,
    stamps: &[Stamp],
    limits: &StoreLimits,
    saved_at: (&str, i64),
) -> Result<(Header, u64), StoreError> {
    let header = Header {
        format: FORMAT,
        version: env!("CARGO_PKG_VERSION").to_owned(),
        probe: probe_digest(),
        form: store.form,
        label: label.to_owned(),
        fingerprint: fingerprint.to_owned(),
        digest: store.digest.clone(),
        documents: store.documents.len(),
        limits: limits_key(limits),
        saved_at: saved_at.0.to_owned(),
        saved_at_epoch: saved_at.1,
    };
    let unreadable = store.unreadable_list();
    let body = BodyRef {
        documents: &store.documents,
        default_access: &store.default_access,
        problems: &store.problems,
        unreadable: &unreadable,
        index,
    };
    let head = rmp_serde::to_vec(&header).map_err(|e| bad(out, format!("cannot encode: {e}")))?;
    let stamps = rmp_serde::to_vec(stamps).map_err(|e| bad(out, format!("cannot encode: {e}")))?;
    let body = rmp_serde::to_vec(&body).map_err(|e| bad(out, format!("cannot encode: {e}")))?;
    let tmp = out.with_extension("idx.partial");
    let write = || -> std::io::Result<()> {
        let mut f = std::io::BufWriter::new(std::fs::File::create(&tmp)?);
        f.write_all(MAGIC)?;
        f.write_all(&(head.len() as u64).to_le_bytes())?;
        f.write_all(&head)?;
        f.write_all(&(stamps.len() as u64).to_le_bytes())?;
        f.write_all(&stamps)?;
        f.write_all(&body)?;
        f.into_inner().map_err(|e| e.into_error())?.sync_all()?;
        std::fs::rename(&tmp, out)
    };
    write().map_err(|e| {
        let _ = std::fs::remove_file(&tmp);
        bad(out, format!("cannot write: {e}"))
    })?;
    let size = (MAGIC.len() + 16 + head.len() + stamps.len() + body.len()) as u64;
    Ok((header, size))
}

/// Reads the header of a saved index, the stamps of its folder's files, and where its
/// body starts; not the body.
pub fn read_head(path: &Path) -> Result<(Header, Vec<Stamp>, u64, usize), StoreError> {
    let mut f = std::fs::File::open(path).map_err(|e| bad(path, format!("cannot read: {e}")))?;
    let size = f.metadata().map(|m| m.len()).unwrap_or(0);
    let mut magic = [0u8; 16];
    f.read_exact(&mut magic).map_err(|_| bad(path, "is not a plumbline index (too short)"))?;
    if &magic != MAGIC {
        return Err(bad(path, "is not a plumbline index (wrong first bytes)"));
    }
    let mut section = |limit: u64| -> Result<Vec<u8>, StoreError> {
        let mut len = [0u8; 8];
        f.read_exact(&mut len).map_err(|_| bad(path, "is a truncated plumbline index"))?;
        let len = u64::from_le_bytes(len);
        if len > limit || len > size {
            return Err(bad(path, "is a damaged plumbline index (a section length)"));
        }
        let mut bytes = vec![0u8; len as usize];
        f.read_exact(&mut bytes).map_err(|_| bad(path, "is a truncated plumbline index"))?;
        Ok(bytes)
    };
    let head = section(1 << 20)?;
    let header: Header = rmp_serde::from_slice(&head).map_err(|_| {
        bad(
            path,
            "was written in another format by another plumbline; rebuild it with `plumbline index`",
        )
    })?;
    let stamp_bytes = section(u64::MAX)?;
    let stamps: Vec<Stamp> = rmp_serde::from_slice(&stamp_bytes)
        .map_err(|_| bad(path, "is a damaged plumbline index (its file list)"))?;
    let start = MAGIC.len() + 16 + head.len() + stamp_bytes.len();
    Ok((header, stamps, size, start))
}

/// Loads a saved index after checking its header against this binary, the store `spec`
/// names and `limits`, and the store's current fingerprint, which `current` computes
/// (given the header and the saved file stamps) once the header has passed.
pub fn load(
    path: &Path,
    spec: &StoreSpec,
    limits: &StoreLimits,
    current: impl FnOnce(&Header, &[Stamp]) -> Result<String, StoreError>,
) -> Result<(Store, Index, CacheInfo), StoreError> {
    let (header, stamps, size, start) = read_head(path)?;
    let rebuild = format!(
        "rebuild it with `plumbline index --store {} --out {}`",
        spec.label(),
        path.display()
    );
    if header.format != FORMAT || header.version != env!("CARGO_PKG_VERSION") {
        return Err(bad(
            path,
            format!(
                "was saved by plumbline {} (index format {}); this is plumbline {} (format {FORMAT}): {rebuild}",
                header.version,
                header.format,
                env!("CARGO_PKG_VERSION")
            ),
        ));
    }
    if header.probe != probe_digest() {
        return Err(bad(
            path,
            format!(
                "was saved by a build of plumbline that splits or tokenizes text differently: {rebuild}"
            ),
        ));
    }
    if header.form != spec.form() {
        return Err(bad(
            path,
            format!(
                "holds a {} store ({}), not the {} store given: {rebuild}",
                header.form.as_str(),
                header.label,
                spec.form().as_str()
            ),
        ));
    }
    if header.limits != limits_key(limits) {
        return Err(bad(
            path,
            format!("was saved with other [limits] settings than this run's: {rebuild}"),
        ));
    }
    let current = current(&header, &stamps)?;
    if header.fingerprint != current {
        let what = match current.strip_prefix("changed: ") {
            Some(files) => {
                let list: Vec<&str> = files.split(", ").collect();
                let shown = list.iter().take(5).copied().collect::<Vec<_>>().join(", ");
                let more = if list.len() > 5 {
                    format!(" and {} more", list.len() - 5)
                } else {
                    String::new()
                };
                format!("{shown}{more}")
            }
            None => format!(
                "store fingerprint {} then, {} now",
                short(&header.fingerprint),
                short(&current)
            ),
        };
        return Err(bad(
            path,
            format!(
                "does not match the store: {} changed since the index was saved at {} ({what}): {rebuild}",
                spec.label(),
                header.saved_at,
            ),
        ));
    }
    let bytes = std::fs::read(path).map_err(|e| bad(path, format!("cannot read: {e}")))?;
    let body: Body = bytes
        .get(start..)
        .and_then(|b| rmp_serde::from_slice(b).ok())
        .ok_or_else(|| bad(path, format!("is damaged (its body cannot be read): {rebuild}")))?;
    drop(bytes);
    let Body { documents, default_access, problems, unreadable, index } = body;
    let store = Store::assemble(Parts {
        form: header.form,
        root: std::path::PathBuf::from(spec.label()),
        documents,
        default_access,
        problems,
        unreadable,
        max_id_bytes: limits.max_id_bytes,
    });
    if store.digest != header.digest || index.docs.len() != store.documents.len() {
        return Err(bad(
            path,
            format!("is damaged (its documents do not add up to the digest it records): {rebuild}"),
        ));
    }
    Ok((store, index, CacheInfo { path: path.display().to_string(), size, header }))
}

fn short(digest: &str) -> &str {
    digest.get(..12).unwrap_or(digest)
}
