//! The document store the benchmark checks against, and what the generator may draw from
//! it.
//!
//! The store is the PostgreSQL manual's HTML pages (`pg/`) and the Python documentation's
//! reST sources (`py/`), copied by `run.sh` from Debian's packages. This module writes the
//! store's `manifest.json` (access groups by folder, so that every entitlement status can
//! occur, and named chunks), loads the store and its index with the plumbline library, so
//! that the generator sees exactly the visible text and sentence ranges the checker sees,
//! and decides which sentences are claims an answer could restate.

use std::collections::{HashMap, HashSet};
use std::ops::Range;
use std::path::Path;
use std::sync::LazyLock;

use plumbline::store::index::Index;
use plumbline::store::{Store, StoreLimits};
use plumbline::text::tokens::tokenize;
use regex::Regex;

use crate::rng::{hash_str, mix};

/// The two halves of the store, by document: a document's sentences are all in one.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Split {
    /// Where the parameters are chosen.
    Tuning,
    /// Where the figures are reported.
    Test,
}

impl Split {
    pub fn as_str(self) -> &'static str {
        match self {
            Split::Tuning => "tuning",
            Split::Test => "test",
        }
    }
}

/// Which manual a document comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Collection {
    Pg,
    Py,
}

/// The access the manifest gives a document.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Access {
    /// Listed with these groups (`*` means everyone).
    Groups(Vec<String>),
    /// Not listed, and the store has no `default_access`: `access_unknown`.
    Unlisted,
}

/// Groups of the benchmark's manifest.
pub const STAFF: &str = "staff";
pub const DBA: &str = "dba";
pub const CORE: &str = "core-devs";

/// The access a document gets, by path: the C API part of the Python manual is for
/// `core-devs`, the PostgreSQL system catalogs for `dba`, the rest of the Python manual
/// for everyone and the rest of the PostgreSQL manual for `staff` and `dba`; one
/// document in 25 (by a hash of its path) is left out of the manifest.
pub fn access_for(path: &str) -> Access {
    if path.starts_with("py/c-api/") {
        Access::Groups(vec![CORE.into()])
    } else if path.starts_with("pg/catalog-") {
        Access::Groups(vec![DBA.into()])
    } else if hash_str(path) % 25 == 7 {
        Access::Unlisted
    } else if path.starts_with("py/") {
        Access::Groups(vec!["*".into()])
    } else {
        Access::Groups(vec![STAFF.into(), DBA.into()])
    }
}

/// Sentences per named chunk in the manifest.
pub const CHUNK_SENTENCES: usize = 8;

/// One document as the generator sees it.
#[derive(Debug)]
pub struct DocInfo {
    pub id: String,
    pub collection: Collection,
    pub split: Split,
    pub access: Access,
    /// Whether answers may draw their claims from it (release notes and "what's new"
    /// pages are left out: they change with every point release and repeat other pages).
    pub pool: bool,
    /// Indices of its claim-like sentences (see [`claim_like`]).
    pub candidates: Vec<usize>,
    /// Distinct token ids of the whole document, sorted (topic similarity).
    pub terms: Vec<u32>,
    /// Sentence index ranges of the manifest's chunks, in order (`c1`, `c2`, …).
    pub chunks: Vec<Range<usize>>,
}

/// The loaded store and what the generator knows of it.
pub struct Corpus {
    pub store: Store,
    pub index: Index,
    pub docs: Vec<DocInfo>,
    /// Number of documents each token id occurs in.
    pub df: HashMap<u32, u32>,
    /// Normalised sentence text hash → number of documents holding that sentence.
    pub sentence_docs: HashMap<u64, u32>,
    /// Seconds to load the store (read, digest, extract) and to build the index.
    pub load_seconds: f64,
    pub index_seconds: f64,
}

/// Writes `manifest.json` into the store (replacing any earlier one) and loads the store.
pub fn prepare(root: &Path, seed: u64) -> Result<Corpus, String> {
    let manifest = root.join("manifest.json");
    if manifest.exists() {
        std::fs::remove_file(&manifest).map_err(|e| format!("{}: {e}", manifest.display()))?;
    }
    let limits = StoreLimits::default();
    let bare = Store::load(root, &limits).map_err(|e| e.to_string())?;
    if bare.documents.is_empty() {
        return Err(format!("{}: the store holds no documents", root.display()));
    }
    if !bare.problems.is_empty() {
        return Err(format!(
            "{}: the store has problems: {:?}",
            root.display(),
            bare.problems.iter().take(3).collect::<Vec<_>>()
        ));
    }
    let texts: Vec<&str> = bare.documents.iter().map(|d| d.visible_text()).collect();
    let index = Index::build(&texts);
    let mut entries = Vec::new();
    for (d, doc) in bare.documents.iter().enumerate() {
        let Access::Groups(groups) = access_for(&doc.path) else { continue };
        let ranges = &index.docs[d].ranges;
        let chunks: Vec<serde_json::Value> = chunk_ranges(ranges.len())
            .into_iter()
            .enumerate()
            .map(|(k, r)| {
                let vis = ranges[r.start].start..ranges[r.end - 1].end;
                let file = doc.file_range(vis);
                serde_json::json!({"id": format!("c{}", k + 1), "start": file.start, "end": file.end})
            })
            .collect();
        entries.push(serde_json::json!({"path": doc.path, "access": groups, "chunks": chunks}));
    }
    let body = serde_json::json!({"documents": entries});
    std::fs::write(&manifest, serde_json::to_string(&body).map_err(|e| e.to_string())? + "\n")
        .map_err(|e| format!("{}: {e}", manifest.display()))?;
    drop(index);
    drop(bare);

    let t = std::time::Instant::now();
    let store = Store::load(root, &limits).map_err(|e| e.to_string())?;
    let load_seconds = t.elapsed().as_secs_f64();
    if !store.problems.is_empty() {
        return Err(format!(
            "manifest problems: {:?}",
            store.problems.iter().take(3).collect::<Vec<_>>()
        ));
    }
    let texts: Vec<&str> = store.documents.iter().map(|d| d.visible_text()).collect();
    let t = std::time::Instant::now();
    let index = Index::build(&texts);
    let index_seconds = t.elapsed().as_secs_f64();

    let mut docs = Vec::with_capacity(store.documents.len());
    let mut df: HashMap<u32, u32> = HashMap::new();
    let mut sentence_docs: HashMap<u64, u32> = HashMap::new();
    for (d, doc) in store.documents.iter().enumerate() {
        let ds = &index.docs[d];
        let text = doc.visible_text();
        let collection = if doc.path.starts_with("pg/") { Collection::Pg } else { Collection::Py };
        let mut terms: Vec<u32> = (0..ds.len()).flat_map(|i| ds.ids(i).iter().copied()).collect();
        terms.sort_unstable();
        terms.dedup();
        for t in &terms {
            *df.entry(*t).or_default() += 1;
        }
        let mut seen = HashSet::new();
        for r in &ds.ranges {
            let h = hash_str(&normalise(&text[r.clone()]));
            if seen.insert(h) {
                *sentence_docs.entry(h).or_default() += 1;
            }
        }
        let pool = !(doc.path.starts_with("pg/release")
            || doc.path.starts_with("py/whatsnew/")
            || doc.path.contains("changelog"));
        let candidates = if pool {
            (0..ds.len()).filter(|&i| claim_like(&text[ds.ranges[i].clone()], collection)).collect()
        } else {
            Vec::new()
        };
        let split = if mix(seed ^ 0x5917, hash_str(&doc.id)) % 2 == 0 {
            Split::Tuning
        } else {
            Split::Test
        };
        docs.push(DocInfo {
            id: doc.id.clone(),
            collection,
            split,
            access: access_for(&doc.path),
            pool,
            candidates,
            terms,
            chunks: chunk_ranges(ds.len()),
        });
    }
    Ok(Corpus { store, index, docs, df, sentence_docs, load_seconds, index_seconds })
}

/// Sentence index ranges of the chunks of a document with `n` sentences.
fn chunk_ranges(n: usize) -> Vec<Range<usize>> {
    (0..n).step_by(CHUNK_SENTENCES).map(|s| s..(s + CHUNK_SENTENCES).min(n)).collect()
}

/// Lower-case words joined by single spaces: what "the same sentence" means here.
pub fn normalise(s: &str) -> String {
    s.split(|c: char| !c.is_alphanumeric())
        .filter(|w| !w.is_empty())
        .map(str::to_lowercase)
        .collect::<Vec<_>>()
        .join(" ")
}

impl Corpus {
    /// Visible text of sentence `i` of document `d`.
    pub fn sentence(&self, d: usize, i: usize) -> &str {
        &self.store.documents[d].visible_text()[self.index.docs[d].ranges[i].clone()]
    }

    /// Visible byte range of sentences `r` of document `d`.
    pub fn span(&self, d: usize, r: Range<usize>) -> Range<usize> {
        let ranges = &self.index.docs[d].ranges;
        ranges[r.start].start..ranges[r.end - 1].end
    }

    /// Number of sentences of document `d`.
    pub fn len(&self, d: usize) -> usize {
        self.index.docs[d].len()
    }

    /// Pool documents of `split` with at least `min` candidate sentences.
    pub fn pool(&self, split: Split, min: usize) -> Vec<usize> {
        (0..self.docs.len())
            .filter(|&d| {
                let x = &self.docs[d];
                x.pool && x.split == split && x.candidates.len() >= min
            })
            .collect()
    }

    /// Inverse document frequency of a token id.
    pub fn idf(&self, t: u32) -> f64 {
        let n = self.docs.len() as f64;
        let df = f64::from(self.df.get(&t).copied().unwrap_or(0));
        ((n + 1.0) / (df + 1.0)).ln()
    }

    /// Distinct content stems of a text (plumbline's tokenizer: what a claim is made of).
    pub fn content_stems(text: &str) -> Vec<String> {
        let mut v: Vec<String> =
            tokenize(text).into_iter().filter(|t| t.is_content()).map(|t| t.stem).collect();
        v.sort();
        v.dedup();
        v
    }

    /// The largest share of `stems` found in any window of three consecutive sentences of
    /// document `d` (this module's own measure, not plumbline's score), and the sentence
    /// at its centre. Stems are compared by plumbline's term ids, which the index keeps
    /// for every sentence.
    pub fn best_window_cover(&self, d: usize, stems: &[String]) -> (f64, usize) {
        if stems.is_empty() {
            return (0.0, 0);
        }
        let ids: Vec<u32> = stems.iter().map(|s| plumbline::text::tokens::term_id(s)).collect();
        let ds = &self.index.docs[d];
        let n = ds.len();
        let has: Vec<Vec<bool>> =
            (0..n).map(|i| ids.iter().map(|t| ds.ids(i).contains(t)).collect()).collect();
        let mut best = (0.0, 0);
        for i in 0..n {
            let found = (0..ids.len())
                .filter(|&k| has[i.saturating_sub(1)..(i + 2).min(n)].iter().any(|h| h[k]))
                .count();
            let share = found as f64 / ids.len() as f64;
            if share > best.0 {
                best = (share, i);
            }
        }
        best
    }

    /// Documents holding a window that covers at least `min` of the sentence's content
    /// stems, among those whose vocabulary could.
    pub fn carriers(&self, text: &str, min: f64) -> Vec<usize> {
        let stems = Self::content_stems(text);
        let ids: Vec<u32> = stems.iter().map(|s| plumbline::text::tokens::term_id(s)).collect();
        (0..self.docs.len())
            .filter(|&d| {
                let t = &self.docs[d].terms;
                let have = ids.iter().filter(|i| t.binary_search(i).is_ok()).count();
                !ids.is_empty() && have as f64 / ids.len() as f64 >= min
            })
            .filter(|&d| self.best_window_cover(d, &stems).0 >= min)
            .collect()
    }

    /// Documents of `split` and `collection` whose vocabulary shares the most (by IDF) with
    /// the text, best first, without `exclude`.
    pub fn similar_docs(&self, text: &str, split: Split, exclude: usize, k: usize) -> Vec<usize> {
        let stems = Self::content_stems(text);
        let ids: Vec<u32> = stems.iter().map(|s| plumbline::text::tokens::term_id(s)).collect();
        let coll = self.docs[exclude].collection;
        let mut scored: Vec<(f64, usize)> = (0..self.docs.len())
            .filter(|&d| {
                d != exclude && self.docs[d].split == split && self.docs[d].collection == coll
            })
            .map(|d| {
                let t = &self.docs[d].terms;
                let s: f64 =
                    ids.iter().filter(|i| t.binary_search(i).is_ok()).map(|i| self.idf(*i)).sum();
                (s, d)
            })
            .collect();
        scored.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)));
        scored.into_iter().take(k).map(|(_, d)| d).collect()
    }
}

static RST_ROLE: LazyLock<Regex> = LazyLock::new(|| {
    Regex::new(r":(?:[a-z]+:)+`([^`]*)`").unwrap_or_else(|e| panic!("role pattern: {e}"))
});
static RST_TARGET: LazyLock<Regex> =
    LazyLock::new(|| Regex::new(r"^(.*?)\s*<[^>]*>$").unwrap_or_else(|e| panic!("target: {e}")));
static RST_LITERAL: LazyLock<Regex> =
    LazyLock::new(|| Regex::new(r"``([^`]+)``").unwrap_or_else(|e| panic!("literal: {e}")));
static RST_LINK: LazyLock<Regex> = LazyLock::new(|| {
    Regex::new(r"`([^`<]+?)(?:\s*<[^>]*>)?`__?").unwrap_or_else(|e| panic!("link: {e}"))
});
static RST_EMPHASIS: LazyLock<Regex> = LazyLock::new(|| {
    Regex::new(r"(^|[\s(])\*{1,2}([^*\s][^*]*?)\*{1,2}").unwrap_or_else(|e| panic!("emphasis: {e}"))
});

/// The sentence as a reader of the rendered manual sees it: reST inline markup of the
/// Python sources rendered (roles, literals, links, emphasis), white space collapsed and
/// no-break spaces made plain. This is how an answer restates a sentence.
pub fn render(s: &str) -> String {
    let s = RST_ROLE.replace_all(s, |c: &regex::Captures<'_>| {
        let whole = c.get(0).map_or("", |m| m.as_str());
        let inner = c[1].trim_start_matches(['~', '!']);
        if whole.starts_with(":rfc:") || whole.starts_with(":pep:") {
            let label = if whole.starts_with(":rfc:") { "RFC" } else { "PEP" };
            return format!("{label} {}", inner.split('#').next().unwrap_or(inner));
        }
        match RST_TARGET.captures(inner) {
            Some(t) if !t[1].is_empty() => t[1].to_owned(),
            _ => inner.trim_matches(['<', '>']).to_owned(),
        }
    });
    let s = RST_LITERAL.replace_all(&s, "$1");
    let s = RST_LINK.replace_all(&s, "$1");
    let s = RST_EMPHASIS.replace_all(&s, "$1$2");
    s.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// Whether a sentence of the store reads as a claim an answer could restate: prose of 8
/// to 40 words with at least four content words, ending in a full stop; not a heading,
/// code, a table row, a directive or a cross-reference stub.
pub fn claim_like(raw: &str, collection: Collection) -> bool {
    if collection == Collection::Pg && raw.contains('\n') {
        return false; // prose paragraphs are reflowed; a line break means a listing
    }
    const BAD: &[&str] = &[
        "..", "::", ">>>", "{", "}", "=", "<", ">", "|", "\\", "$", "[", "]", "@", "#", "`",
        "http", "^", "--", "~",
    ];
    let text = render(raw);
    if BAD.iter().any(|b| text.contains(b)) || text.contains('*') || text.contains('"') {
        return false;
    }
    let words: Vec<&str> = text.split_whitespace().collect();
    if !(8..=40).contains(&words.len()) {
        return false;
    }
    let first = text.chars().next().unwrap_or(' ');
    if !first.is_ascii_uppercase() || !text.ends_with('.') || text.ends_with("..") {
        return false;
    }
    // Two sentences the store's splitter kept together ("… spam.lib. Spam.dll …").
    static INNER_END: LazyLock<Regex> =
        LazyLock::new(|| Regex::new(r"[.!?] [A-Z]").unwrap_or_else(|e| panic!("inner end: {e}")));
    if INNER_END.is_match(&text[..text.len() - 1]) || text[..text.len() - 1].contains(['?', '!']) {
        return false;
    }
    let lower = text.to_lowercase();
    const OPENERS: &[&str] = &["see ", "note:", "for example:", "tip", "warning", "example"];
    if OPENERS.iter().any(|o| lower.starts_with(o)) {
        return false;
    }
    let prose = words
        .iter()
        .filter(|w| {
            let w = w.trim_end_matches([',', '.', ';', ')']).trim_start_matches('(');
            !w.is_empty() && w.chars().all(|c| c.is_ascii_lowercase() || c == '-' || c == '\'')
        })
        .count();
    if (prose as f64) < 0.6 * words.len() as f64 {
        return false;
    }
    let content = tokenize(&text)
        .iter()
        .filter(|t| t.is_content() && t.figure.is_none() && t.text.chars().all(char::is_alphabetic))
        .count();
    content >= 4
}
