//! The store-wide search index: which sentences of which documents share words with a
//! claim.
//!
//! Built once per run over the visible text of every document. Each document is split
//! into sentences ([`crate::text::sentences::split`]); each sentence contributes its
//! content terms — Snowball stems of non-stop words and the canonical values of figures —
//! hashed to 64 bits, to an inverted index from term to sentence ids. A query ranks
//! sentences by the summed inverse document frequency (IDF, in sentences) of the claim
//! terms they contain and returns the best few, which the support scorer then examines
//! with its full window score. Terms are 32-bit ids of stems
//! ([`crate::text::tokens::term_id`]), so the index holds no strings, and each
//! document's sentences keep their token ids, so that windows are scored without
//! tokenising documents again.
//!
//! The index is what lets plumbline say that a sentence is carried by a document other
//! than the one it cites (`misattributed`) or by one the user may not read
//! (`restricted_match`).

use std::ops::Range;

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::text::numbers::Figure;
use crate::text::sentences::split;
use crate::text::tokens::{IdMap, TokenIds, token_ids};

/// FNV-1a, 64-bit: a fixed, documented hash (used for shards and ids).
pub fn term_hash(term: &str) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in term.bytes() {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    h
}

/// The distinct content-token ids of a text, sorted: what a query looks up.
pub fn content_terms(text: &str) -> Vec<u32> {
    let t = token_ids(text);
    let mut terms: Vec<u32> =
        t.ids.iter().zip(&t.content).filter(|(_, c)| **c).map(|(i, _)| *i).collect();
    terms.sort_unstable();
    terms.dedup();
    terms
}

/// A sentence found by a query.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Hit {
    /// Index of the document (as passed to [`Index::build`]).
    pub doc: usize,
    /// Index of the sentence within the document.
    pub sentence: usize,
    /// Summed IDF of the shared terms.
    pub weight: f64,
}

/// The sentences of one document with their token ids.
#[derive(Debug, Default, Clone, Serialize, Deserialize)]
pub struct DocSentences {
    /// Byte ranges (visible text) of the sentences.
    pub ranges: Vec<Range<usize>>,
    /// Token ids of all sentences, concatenated.
    #[serde(with = "super::cache::raw::u32s")]
    ids: Vec<u32>,
    /// Sentence `i` owns `ids[bounds[i]..bounds[i + 1]]`.
    #[serde(with = "super::cache::raw::u32s")]
    bounds: Vec<u32>,
    /// Figures of all sentences, concatenated.
    #[serde(with = "super::cache::raw::figures")]
    figures: Vec<Figure>,
    /// Sentence `i` owns `figures[figure_bounds[i]..figure_bounds[i + 1]]`.
    #[serde(with = "super::cache::raw::u32s")]
    figure_bounds: Vec<u32>,
}

impl DocSentences {
    /// Token ids of sentence `i`.
    pub fn ids(&self, i: usize) -> &[u32] {
        let (s, e) = (self.bounds[i] as usize, self.bounds[i + 1] as usize);
        &self.ids[s..e]
    }

    /// Figures of sentence `i`.
    pub fn figures(&self, i: usize) -> &[Figure] {
        let (s, e) = (self.figure_bounds[i] as usize, self.figure_bounds[i + 1] as usize);
        &self.figures[s..e]
    }

    /// Number of sentences.
    pub fn len(&self) -> usize {
        self.ranges.len()
    }

    /// Whether there are none.
    pub fn is_empty(&self) -> bool {
        self.ranges.is_empty()
    }
}

/// Sentences of every document and the inverted index over them.
#[derive(Debug, Default, Serialize, Deserialize)]
pub struct Index {
    /// Per document, its sentences.
    pub docs: Vec<DocSentences>,
    /// Global sentence id → (document, sentence).
    #[serde(with = "super::cache::raw::pairs")]
    owners: Vec<(u32, u32)>,
    /// Term → sorted global sentence ids.
    #[serde(with = "super::cache::raw::postings")]
    postings: IdMap<u32, Vec<u32>>,
}

fn analyse(text: &str) -> (DocSentences, Vec<Vec<u32>>) {
    let ranges = split(text);
    let mut d = DocSentences { bounds: vec![0], figure_bounds: vec![0], ..DocSentences::default() };
    let mut terms = Vec::with_capacity(ranges.len());
    for r in &ranges {
        let TokenIds { ids, content, figures } = token_ids(&text[r.clone()]);
        let mut t: Vec<u32> =
            ids.iter().zip(&content).filter(|(_, c)| **c).map(|(x, _)| *x).collect();
        t.sort_unstable();
        t.dedup();
        terms.push(t);
        d.ids.extend_from_slice(&ids);
        d.bounds.push(d.ids.len() as u32);
        d.figures.extend(figures);
        d.figure_bounds.push(d.figures.len() as u32);
    }
    d.ranges = ranges;
    (d, terms)
}

impl Index {
    /// Builds the index over the visible texts of the documents, in parallel.
    pub fn build(texts: &[&str]) -> Index {
        let per_doc: Vec<(DocSentences, Vec<Vec<u32>>)> =
            texts.par_iter().map(|t| analyse(t)).collect();
        let mut index = Index::default();
        for (d, (doc, terms)) in per_doc.into_iter().enumerate() {
            for (s, ts) in terms.into_iter().enumerate() {
                let id = index.owners.len() as u32;
                index.owners.push((d as u32, s as u32));
                for t in ts {
                    index.postings.entry(t).or_default().push(id);
                }
            }
            index.docs.push(doc);
        }
        index
    }

    /// Number of sentences indexed.
    pub fn sentence_count(&self) -> usize {
        self.owners.len()
    }

    /// The `limit` sentences sharing the most weight of `terms` (see [`content_terms`]),
    /// best first; ties broken by document and sentence order, so results are
    /// deterministic. Only the claim's rarest terms are looked up (at most
    /// [`QUERY_TERMS`]), and terms more common than [`common_cap`] are skipped
    /// unless nothing rarer is left: they say little and would make queries slow on
    /// large stores.
    pub fn query(&self, terms: &[u32], limit: usize) -> Vec<Hit> {
        if limit == 0 {
            return Vec::new();
        }
        let n = self.owners.len().max(1);
        let mut lists: Vec<&Vec<u32>> = terms.iter().filter_map(|t| self.postings.get(t)).collect();
        lists.sort_by_key(|l| l.len());
        let cap = common_cap(n);
        let usable = lists.iter().take_while(|l| l.len() <= cap).count();
        // A claim made only of common words still looks up its two rarest.
        let keep = if usable == 0 { lists.len().min(2) } else { usable.min(QUERY_TERMS) };
        lists.truncate(keep);
        let mut acc: IdMap<u32, f64> = IdMap::default();
        acc.reserve(lists.iter().map(|l| l.len()).sum::<usize>().min(1 << 16));
        for list in lists {
            let idf = (1.0 + n as f64 / list.len() as f64).ln();
            for &id in list {
                *acc.entry(id).or_insert(0.0) += idf;
            }
        }
        let mut hits: Vec<(u32, f64)> = acc.into_iter().collect();
        // Best weight first, then sentence id (document order): a total order, so the
        // partial selection below is deterministic.
        let order = |a: &(u32, f64), b: &(u32, f64)| b.1.total_cmp(&a.1).then(a.0.cmp(&b.0));
        if hits.len() > limit {
            hits.select_nth_unstable_by(limit - 1, order);
            hits.truncate(limit);
        }
        hits.sort_unstable_by(order);
        hits.into_iter()
            .map(|(id, weight)| {
                let (doc, sentence) = self.owners[id as usize];
                Hit { doc: doc as usize, sentence: sentence as usize, weight }
            })
            .collect()
    }
}

/// Most claim terms a query looks up (the rarest ones).
pub const QUERY_TERMS: usize = 12;

/// Posting lists longer than this (for `n` sentences) are skipped by a query, unless a
/// claim has no rarer term: 1% of the sentences, but at least 200. A term in one
/// sentence of a hundred says little about which sentence carries a claim, and its list
/// would dominate query time on a large store.
pub fn common_cap(n: usize) -> usize {
    (n / 100).max(200)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_the_sentence_that_shares_rare_terms() {
        let docs = [
            "Parking is free for staff. The canteen opens at 08:00.",
            "Claims stay open for 45 days. Refunds take five working days.",
            "Passwords rotate every 90 days. Badges must be worn on site.",
        ];
        let idx = Index::build(&docs);
        assert_eq!(idx.sentence_count(), 6);
        assert_eq!(idx.docs[1].ids(0).len(), 5); // claims stay open for "45 days"
        assert_eq!(
            idx.docs[1].figures(0).iter().map(|f| f.value.as_str()).collect::<Vec<_>>(),
            ["45"]
        );
        let hits = idx.query(&content_terms("How long do claims stay open? 45 days."), 3);
        assert_eq!((hits[0].doc, hits[0].sentence), (1, 0));
        let hits = idx.query(&content_terms("badges worn"), 1);
        assert_eq!((hits[0].doc, hits[0].sentence), (2, 1));
        assert!(idx.query(&content_terms("zebra"), 5).is_empty());
    }

    #[test]
    fn hash_is_fixed() {
        // FNV-1a 64-bit test vectors: "" and "a" (from the FNV reference, from memory).
        assert_eq!(term_hash(""), 0xcbf2_9ce4_8422_2325);
        assert_eq!(term_hash("a"), 0xaf63_dc4c_8601_ec8c);
    }
}
