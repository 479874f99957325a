//! Citations: resolving each one against the store and giving it its status.
//!
//! [`resolve`] turns one citation of an answer into a passage (a visible-text range and
//! the file-byte range it comes from) and exactly one status, checked in this order:
//! `dead` (no such document, or a path outside the store, or a document that could not
//! be read — decided by
//! [`crate::store::Store::resolve_position`], which never touches the filesystem),
//! `bad_locator` (offsets out of range, off a character boundary, reversed, markup only;
//! or an unknown chunk or page), `forbidden`, `principal_unknown`, `access_unknown` (the
//! entitlement of the asking user, [`crate::access::decide`]), `stale` (the document's
//! SHA-256 differs from the one the assistant saw), `quote_mismatch` (the quote's words do
//! not occur, in order, among the passage's words: white space, punctuation, case and
//! look-alike characters are ignored). The checker later turns `ok` into `unused` for a
//! citation that supports no sentence. Entitlement comes before content problems because
//! a breach matters most to the people reading the report.

use std::ops::Range;

use crate::access::{self, Entitlement};
use crate::answers::{Citation, Locator};
use crate::findings::CitationStatus;
use crate::store::{DeadReason, Document, Store};
use crate::text::tokens::unicode_words;

/// A citation resolved against the store.
pub struct Resolved<'a> {
    /// Position of the document in the store.
    pub doc: Option<usize>,
    /// The document, when resolved.
    pub document: Option<&'a Document>,
    /// Visible-text range of the passage.
    pub passage: Option<Range<usize>>,
    /// File-byte range of the passage.
    pub file: Option<Range<usize>>,
    /// The status decided so far.
    pub status: CitationStatus,
    /// A readable reason.
    pub detail: Option<String>,
    /// The user's entitlement to the document.
    pub entitlement: Entitlement,
}

/// `9120` → `9,120`, for readable byte offsets.
pub fn thousands(n: usize) -> String {
    let s = n.to_string();
    let mut out = String::new();
    for (i, c) in s.chars().enumerate() {
        if i > 0 && (s.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// Words of a text after normalisation: what quote comparison looks at, so that white
/// space, punctuation, case and look-alike characters do not matter.
fn quote_words(text: &str) -> Vec<String> {
    unicode_words(text)
}

fn contains_run(hay: &[String], needle: &[String]) -> bool {
    needle.is_empty() || hay.windows(needle.len()).any(|w| w == needle)
}

/// The chunk a citation of a chunk group (`doc` names the document the chunks were cut
/// from) means: the one its `chunk` names, or the only one; otherwise why not.
fn group_member<'a>(
    store: &'a Store,
    group: &str,
    locator: &Locator,
) -> Result<(usize, &'a Document), String> {
    let members = store.group(group).unwrap_or(&[]);
    let names = || {
        let ids: Vec<&str> = members.iter().map(|&i| store.documents[i].id.as_str()).collect();
        let shown = ids.iter().take(8).copied().collect::<Vec<_>>().join(", ");
        if ids.len() > 8 { format!("{shown}, … ({} in all)", ids.len()) } else { shown }
    };
    match locator {
        Locator::Chunk(id) => members
            .iter()
            .find(|&&i| store.documents[i].id == *id)
            .map(|&i| (i, &store.documents[i]))
            .ok_or_else(|| format!("no chunk \"{id}\" of \"{group}\"; its chunks are {}", names())),
        Locator::Whole if members.len() == 1 => Ok((members[0], &store.documents[members[0]])),
        _ => Err(format!(
            "\"{group}\" is stored as {} chunks ({}); offsets and pages count within one chunk, so cite the chunk: its id as doc, or chunk with this doc",
            members.len(),
            names()
        )),
    }
}

/// The byte range of page `n` of a PDF document.
fn page_range(doc: &Document, n: u64) -> Result<Range<usize>, String> {
    if doc.pages.is_empty() {
        return Err(format!("names page {n}, but the document is not a PDF and has no pages"));
    }
    let i = usize::try_from(n).unwrap_or(usize::MAX).saturating_sub(1);
    match doc.pages.get(i) {
        None => Err(format!("names page {n}; the document has {} pages", doc.pages.len())),
        Some(p) if p.is_empty() => {
            Err(format!("page {n} has no text layer (an image); nothing on it can be checked"))
        }
        Some(p) => Ok(p.clone()),
    }
}

/// Resolves one citation for a user with `groups` (see the module documentation).
pub fn resolve<'a>(store: &'a Store, c: &Citation, groups: Option<&[String]>) -> Resolved<'a> {
    let mut r = Resolved {
        doc: None,
        document: None,
        passage: None,
        file: None,
        status: CitationStatus::Ok,
        detail: None,
        entitlement: Entitlement::AccessUnknown,
    };
    let (pos, doc, locator) = match store.resolve_position(&c.doc) {
        Ok((pos, doc)) => (pos, doc, &c.locator),
        Err(DeadReason::NotFound) if store.group(&c.doc).is_some() => {
            match group_member(store, &c.doc, &c.locator) {
                Ok((pos, doc)) => (pos, doc, &Locator::Whole),
                Err(detail) => {
                    r.status = CitationStatus::BadLocator;
                    r.detail = Some(detail);
                    return r;
                }
            }
        }
        Err(reason) => {
            r.status = CitationStatus::Dead;
            r.detail = Some(reason.to_string());
            return r;
        }
    };
    r.doc = Some(pos);
    r.document = Some(doc);
    let raw = doc.raw();
    let size = raw.len();
    let range = match locator {
        Locator::Whole => Ok(0..size),
        Locator::Page(n) => page_range(doc, *n),
        Locator::Range { start, end } => {
            let (s, e) = (
                usize::try_from(*start).unwrap_or(usize::MAX),
                usize::try_from(*end).unwrap_or(usize::MAX),
            );
            if s > e {
                Err(format!(
                    "starts at byte {} after it ends at byte {}",
                    thousands(s),
                    thousands(e)
                ))
            } else if e > size {
                Err(format!("ends at byte {}, the document has {}", thousands(e), thousands(size)))
            } else if !raw.is_char_boundary(s) {
                Err(format!("starts at byte {} inside a multi-byte character", thousands(s)))
            } else if !raw.is_char_boundary(e) {
                Err(format!("ends at byte {} inside a multi-byte character", thousands(e)))
            } else {
                Ok(s..e)
            }
        }
        Locator::Chunk(id) => match doc.chunks.iter().find(|k| &k.id == id) {
            None if doc.chunks.is_empty() => {
                Err(format!("no chunk \"{id}\": the document defines no chunks"))
            }
            None => {
                let known: Vec<&str> = doc.chunks.iter().map(|k| k.id.as_str()).collect();
                Err(format!("no chunk \"{id}\"; the document has {}", known.join(", ")))
            }
            Some(k) if k.end > size || k.start > k.end => Err(format!(
                "chunk \"{id}\" ends at byte {}, the document has {}",
                thousands(k.end),
                thousands(size)
            )),
            Some(k) if !raw.is_char_boundary(k.start) || !raw.is_char_boundary(k.end) => {
                Err(format!("chunk \"{id}\" does not lie on character boundaries"))
            }
            Some(k) => Ok(k.start..k.end),
        },
    };
    let file = match range {
        Ok(f) => f,
        Err(detail) => {
            r.status = CitationStatus::BadLocator;
            r.detail = Some(detail);
            return r;
        }
    };
    let visible = doc.visible_range(file.start, file.end);
    if visible.is_empty() && !file.is_empty() {
        r.status = CitationStatus::BadLocator;
        r.detail = Some(format!(
            "bytes {}–{} hold no visible text (markup only)",
            thousands(file.start),
            thousands(file.end)
        ));
        return r;
    }
    r.passage = Some(visible.clone());
    r.file = Some(file);
    r.entitlement = access::decide(groups, doc.effective_access(store.default_access.as_deref()));
    match r.entitlement {
        Entitlement::Allowed => {}
        Entitlement::Forbidden => {
            r.status = CitationStatus::Forbidden;
            let access = doc
                .effective_access(store.default_access.as_deref())
                .map(|a| a.join(", "))
                .unwrap_or_default();
            r.detail = Some(format!(
                "readable by [{access}]; the user's groups are [{}]",
                groups.map(|g| g.join(", ")).unwrap_or_default()
            ));
            return r;
        }
        Entitlement::PrincipalUnknown => {
            r.status = CitationStatus::PrincipalUnknown;
            r.detail = Some(
                "the user's groups are not known (no groups in the record, no principals entry)"
                    .into(),
            );
            return r;
        }
        Entitlement::AccessUnknown => {
            r.status = CitationStatus::AccessUnknown;
            r.detail =
                Some("the document has no access list and the store has no default_access".into());
            return r;
        }
    }
    if let Some(claimed) = &c.sha256 {
        if !claimed.eq_ignore_ascii_case(&doc.sha256) {
            r.status = CitationStatus::Stale;
            r.detail =
                Some(format!("the assistant saw sha256 {claimed}; the store has {}", doc.sha256));
            return r;
        }
    }
    if let Some(q) = &c.quote {
        let words = quote_words(q);
        let passage_words = quote_words(&doc.visible_text()[visible]);
        if words.is_empty() || !contains_run(&passage_words, &words) {
            r.status = CitationStatus::QuoteMismatch;
            r.detail = Some(if words.is_empty() {
                "the quote has no words".into()
            } else {
                "the quote does not occur in the cited passage (white space, punctuation and case ignored)".into()
            });
        }
    }
    r
}
