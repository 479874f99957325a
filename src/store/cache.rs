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
//! and file-system stamps ([`super::source::Stamp`]; empty for other forms); a `u64`
//! length and the documents; then the index (the two decode on two threads). Header and body are MessagePack (`rmp-serde`) encodings of
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
struct DocsRef<'a> {
    documents: &'a [Document],
    default_access: &'a Option<Vec<String>>,
    problems: &'a [StoreProblem],
    unreadable: &'a [(String, String)],
}

/// Decodes what [`DocsRef`] encodes.
#[derive(Deserialize)]
struct Docs {
    documents: Vec<Document>,
    default_access: Option<Vec<String>>,
    problems: Vec<StoreProblem>,
    unreadable: Vec<(String, String)>,
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
    let docs = DocsRef {
        documents: &store.documents,
        default_access: &store.default_access,
        problems: &store.problems,
        unreadable: &unreadable,
    };
    let head = rmp_serde::to_vec(&header).map_err(|e| bad(out, format!("cannot encode: {e}")))?;
    let stamps = rmp_serde::to_vec(stamps).map_err(|e| bad(out, format!("cannot encode: {e}")))?;
    let docs = rmp_serde::to_vec(&docs).map_err(|e| bad(out, format!("cannot encode: {e}")))?;
    let index = rmp_serde::to_vec(index).map_err(|e| bad(out, format!("cannot encode: {e}")))?;
    let tmp = out.with_extension("idx.partial");
    let write = || -> std::io::Result<()> {
        let mut f = std::io::BufWriter::new(std::fs::File::create(&tmp)?);
        f.write_all(MAGIC)?;
        f.write_all(&(head.len() as u64).to_le_bytes())?;
        f.write_all(&head)?;
        f.write_all(&(stamps.len() as u64).to_le_bytes())?;
        f.write_all(&stamps)?;
        f.write_all(&(docs.len() as u64).to_le_bytes())?;
        f.write_all(&docs)?;
        f.write_all(&index)?;
        f.into_inner().map_err(|e| e.into_error())?.sync_all()?;
        std::fs::rename(&tmp, out)
    };
    write().map_err(|e| {
        let _ = std::fs::remove_file(&tmp);
        bad(out, format!("cannot write: {e}"))
    })?;
    let size = (MAGIC.len() + 24 + head.len() + stamps.len() + docs.len() + index.len()) as u64;
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
    current: impl FnOnce(&Header, &[Stamp]) -> Result<String, StoreError> + Send,
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
    // The store is checked while the body is read and decoded; a mismatch discards it.
    let rebuild_ref = &rebuild;
    let (current, body) = rayon::join(
        || current(&header, &stamps),
        || -> Result<(Docs, Index), StoreError> {
            let bytes = std::fs::read(path).map_err(|e| bad(path, format!("cannot read: {e}")))?;
            let damaged =
                || bad(path, format!("is damaged (its body cannot be read): {rebuild_ref}"));
            let body = bytes.get(start..).ok_or_else(damaged)?;
            let docs_len = body
                .get(..8)
                .and_then(|b| <[u8; 8]>::try_from(b).ok())
                .map(u64::from_le_bytes)
                .and_then(|n| usize::try_from(n).ok())
                .filter(|&n| n <= body.len() - 8)
                .ok_or_else(damaged)?;
            let (docs_bytes, index_bytes) = body[8..].split_at(docs_len);
            // The two halves decode on two threads.
            let (docs, index) = rayon::join(
                || rmp_serde::from_slice::<Docs>(docs_bytes).ok(),
                || rmp_serde::from_slice::<Index>(index_bytes).ok(),
            );
            match (docs, index) {
                (Some(d), Some(i)) => Ok((d, i)),
                _ => Err(damaged()),
            }
        },
    );
    let current = current?;
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
    let (docs, index) = body?;
    let Docs { documents, default_access, problems, unreadable } = docs;
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

/// Serde helpers that write the index's integer arrays as raw little-endian bytes, so that
/// a saved index decodes with one copy per array instead of one call per number. The
/// index's fields name them with `#[serde(with = …)]`.
pub mod raw {
    use std::hash::BuildHasher;

    use serde::de::{Error, MapAccess, Visitor};
    use serde::ser::SerializeMap;
    use serde::{Deserializer, Serializer};

    fn to_bytes(v: &[u32]) -> Vec<u8> {
        let mut out = Vec::with_capacity(v.len() * 4);
        for x in v {
            out.extend_from_slice(&x.to_le_bytes());
        }
        out
    }

    fn from_bytes<E: Error>(b: &[u8]) -> Result<Vec<u32>, E> {
        if b.len() % 4 != 0 {
            return Err(E::custom("an array of u32 whose length is not a multiple of 4"));
        }
        Ok(b.chunks_exact(4).map(|c| u32::from_le_bytes([c[0], c[1], c[2], c[3]])).collect())
    }

    struct BytesVisitor;

    impl<'de> Visitor<'de> for BytesVisitor {
        type Value = Vec<u32>;
        fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
            f.write_str("bytes holding little-endian u32 values")
        }
        fn visit_bytes<E: Error>(self, v: &[u8]) -> Result<Vec<u32>, E> {
            from_bytes(v)
        }
        fn visit_borrowed_bytes<E: Error>(self, v: &'de [u8]) -> Result<Vec<u32>, E> {
            from_bytes(v)
        }
        fn visit_byte_buf<E: Error>(self, v: Vec<u8>) -> Result<Vec<u32>, E> {
            from_bytes(&v)
        }
    }

    /// `Vec<u32>` as bytes.
    pub mod u32s {
        use super::*;

        /// Writes the values as bytes.
        pub fn serialize<S: Serializer>(v: &[u32], s: S) -> Result<S::Ok, S::Error> {
            s.serialize_bytes(&to_bytes(v))
        }

        /// Reads them back.
        pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<Vec<u32>, D::Error> {
            d.deserialize_bytes(BytesVisitor)
        }
    }

    /// `Vec<(u32, u32)>` as bytes (each pair as two values).
    pub mod pairs {
        use super::*;

        /// Writes the pairs as bytes.
        pub fn serialize<S: Serializer>(v: &[(u32, u32)], s: S) -> Result<S::Ok, S::Error> {
            let flat: Vec<u32> = v.iter().flat_map(|(a, b)| [*a, *b]).collect();
            s.serialize_bytes(&to_bytes(&flat))
        }

        /// Reads them back.
        pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<Vec<(u32, u32)>, D::Error> {
            let flat = d.deserialize_bytes(BytesVisitor)?;
            if flat.len() % 2 != 0 {
                return Err(D::Error::custom("an odd number of values for pairs"));
            }
            Ok(flat.chunks_exact(2).map(|c| (c[0], c[1])).collect())
        }
    }

    /// A map from `u32` to `Vec<u32>`, each list as bytes.
    pub mod postings {
        use std::collections::HashMap;

        use super::*;

        struct Bytes<'a>(&'a [u32]);

        impl serde::Serialize for Bytes<'_> {
            fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
                s.serialize_bytes(&to_bytes(self.0))
            }
        }

        struct List(Vec<u32>);

        impl<'de> serde::Deserialize<'de> for List {
            fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
                d.deserialize_bytes(BytesVisitor).map(List)
            }
        }

        /// Writes the map, its lists as bytes.
        pub fn serialize<S: Serializer, H>(
            m: &HashMap<u32, Vec<u32>, H>,
            s: S,
        ) -> Result<S::Ok, S::Error> {
            let mut map = s.serialize_map(Some(m.len()))?;
            for (k, v) in m {
                map.serialize_entry(k, &Bytes(v))?;
            }
            map.end()
        }

        /// Reads it back.
        pub fn deserialize<'de, D: Deserializer<'de>, H: BuildHasher + Default>(
            d: D,
        ) -> Result<HashMap<u32, Vec<u32>, H>, D::Error> {
            struct V<H>(std::marker::PhantomData<H>);
            impl<'de, H: BuildHasher + Default> Visitor<'de> for V<H> {
                type Value = HashMap<u32, Vec<u32>, H>;
                fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                    f.write_str("a map of u32 to byte arrays")
                }
                fn visit_map<A: MapAccess<'de>>(self, mut a: A) -> Result<Self::Value, A::Error> {
                    let mut m =
                        HashMap::with_capacity_and_hasher(a.size_hint().unwrap_or(0), H::default());
                    while let Some((k, List(v))) = a.next_entry::<u32, List>()? {
                        m.insert(k, v);
                    }
                    Ok(m)
                }
            }
            d.deserialize_map(V(std::marker::PhantomData))
        }
    }

    /// Figures as plain tuples `(kind, currency, value, unit, start, end)`: their own
    /// serialisation (for the findings) flattens a tagged kind, which decodes slowly.
    pub mod figures {
        use serde::{Deserialize, Serialize};

        use crate::text::numbers::{Figure, FigureKind};

        type Row = (u8, Option<String>, String, Option<String>, u64, u64);

        fn row(f: &Figure) -> Row {
            let (k, cur) = match &f.kind {
                FigureKind::Number => (0, None),
                FigureKind::Money(c) => (1, Some(c.clone())),
                FigureKind::Percent => (2, None),
                FigureKind::Time => (3, None),
                FigureKind::Date => (4, None),
                FigureKind::Version => (5, None),
            };
            (k, cur, f.value.clone(), f.unit.clone(), f.start as u64, f.end as u64)
        }

        /// Writes the figures as tuples.
        pub fn serialize<S: serde::Serializer>(v: &[Figure], s: S) -> Result<S::Ok, S::Error> {
            v.iter().map(row).collect::<Vec<Row>>().serialize(s)
        }

        /// Reads them back.
        pub fn deserialize<'de, D: serde::Deserializer<'de>>(
            d: D,
        ) -> Result<Vec<Figure>, D::Error> {
            use serde::de::Error;
            let rows = Vec::<Row>::deserialize(d)?;
            rows.into_iter()
                .map(|(k, cur, value, unit, start, end)| {
                    let kind = match (k, cur) {
                        (0, _) => FigureKind::Number,
                        (1, Some(c)) => FigureKind::Money(c),
                        (2, _) => FigureKind::Percent,
                        (3, _) => FigureKind::Time,
                        (4, _) => FigureKind::Date,
                        (5, _) => FigureKind::Version,
                        _ => return Err(D::Error::custom("an unknown kind of figure")),
                    };
                    Ok(Figure { kind, value, unit, start: start as usize, end: end as usize })
                })
                .collect()
        }
    }

    #[cfg(test)]
    mod tests {
        #[test]
        fn figures_round_trip() {
            #[derive(serde::Serialize, serde::Deserialize, PartialEq, Debug)]
            struct T {
                #[serde(with = "super::figures")]
                f: Vec<crate::text::numbers::Figure>,
            }
            let t = T {
                f: crate::text::numbers::find_figures(
                    "£8.95 by 4 March 2026, 45 days, 12%, 09:30 and v15.4.2",
                ),
            };
            assert!(t.f.len() >= 5, "{:?}", t.f);
            let bytes = rmp_serde::to_vec(&t).unwrap();
            assert_eq!(rmp_serde::from_slice::<T>(&bytes).unwrap(), t);
        }

        #[test]
        fn arrays_round_trip_through_messagepack() {
            #[derive(serde::Serialize, serde::Deserialize, PartialEq, Debug)]
            struct T {
                #[serde(with = "super::u32s")]
                a: Vec<u32>,
                #[serde(with = "super::pairs")]
                p: Vec<(u32, u32)>,
                #[serde(with = "super::postings")]
                m: std::collections::HashMap<u32, Vec<u32>>,
            }
            let t = T {
                a: vec![0, 1, u32::MAX, 70_000],
                p: vec![(1, 2), (u32::MAX, 0)],
                m: [(5, vec![1, 2, 3]), (9, vec![])].into_iter().collect(),
            };
            let bytes = rmp_serde::to_vec(&t).unwrap();
            assert_eq!(rmp_serde::from_slice::<T>(&bytes).unwrap(), t);
        }
    }
}
