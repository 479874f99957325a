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

use std::collections::HashMap;
use std::ops::Range;

use rayon::prelude::*;

use crate::text::numbers::Figure;
use crate::text::sentences::split;
use crate::text::tokens::{TokenIds, token_ids};

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
#[derive(Debug, Default, Clone)]
pub struct DocSentences {
    /// Byte ranges (visible text) of the sentences.
    pub ranges: Vec<Range<usize>>,
    /// Token ids of all sentences, concatenated.
    ids: Vec<u32>,
    /// Sentence `i` owns `ids[bounds[i]..bounds[i + 1]]`.
    bounds: Vec<u32>,
    /// Figures, with the sentence they belong to.
    figures: Vec<(u32, Figure)>,
}

impl DocSentences {
    /// Token ids of sentence `i`.
    pub fn ids(&self, i: usize) -> &[u32] {
        let (s, e) = (self.bounds[i] as usize, self.bounds[i + 1] as usize);
        &self.ids[s..e]
    }

    /// Figures of sentence `i`.
    pub fn figures(&self, i: usize) -> impl Iterator<Item = &Figure> {
        let i = i as u32;
        let from = self.figures.partition_point(|(s, _)| *s < i);
        self.figures[from..].iter().take_while(move |(s, _)| *s == i).map(|(_, f)| f)
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
#[derive(Debug, Default)]
pub struct Index {
    /// Per document, its sentences.
    pub docs: Vec<DocSentences>,
    /// Global sentence id → (document, sentence).
    owners: Vec<(u32, u32)>,
    /// Term → sorted global sentence ids.
    postings: HashMap<u32, Vec<u32>>,
}

fn analyse(text: &str) -> (DocSentences, Vec<Vec<u32>>) {
    let ranges = split(text);
    let mut d = DocSentences { bounds: vec![0], ..DocSentences::default() };
    let mut terms = Vec::with_capacity(ranges.len());
    for (i, r) in ranges.iter().enumerate() {
        let TokenIds { ids, content, figures } = token_ids(&text[r.clone()]);
        let mut t: Vec<u32> =
            ids.iter().zip(&content).filter(|(_, c)| **c).map(|(x, _)| *x).collect();
        t.sort_unstable();
        t.dedup();
        terms.push(t);
        d.ids.extend_from_slice(&ids);
        d.bounds.push(d.ids.len() as u32);
        d.figures.extend(figures.into_iter().map(|f| (i as u32, f)));
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
    /// [`QUERY_TERMS`]), and terms found in more than a quarter of all sentences are
    /// skipped: they say little and would make queries slow on large stores.
    pub fn query(&self, terms: &[u32], limit: usize) -> Vec<Hit> {
        let n = self.owners.len().max(1) as f64;
        let mut lists: Vec<&Vec<u32>> = terms
            .iter()
            .filter_map(|t| self.postings.get(t))
            .filter(|l| l.len() as f64 <= (n / 4.0).max(50.0))
            .collect();
        lists.sort_by_key(|l| l.len());
        lists.truncate(QUERY_TERMS);
        let mut acc: HashMap<u32, f64> = HashMap::new();
        for list in lists {
            let idf = (1.0 + n / list.len() as f64).ln();
            for &id in list {
                *acc.entry(id).or_insert(0.0) += idf;
            }
        }
        let mut hits: Vec<Hit> = acc
            .into_iter()
            .map(|(id, weight)| {
                let (doc, sentence) = self.owners[id as usize];
                Hit { doc: doc as usize, sentence: sentence as usize, weight }
            })
            .collect();
        hits.sort_by(|a, b| {
            b.weight.total_cmp(&a.weight).then(a.doc.cmp(&b.doc)).then(a.sentence.cmp(&b.sentence))
        });
        hits.truncate(limit);
        hits
    }
}

/// Most claim terms a query looks up (the rarest ones).
pub const QUERY_TERMS: usize = 12;

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
        assert_eq!(idx.docs[1].figures(0).map(|f| f.value.as_str()).collect::<Vec<_>>(), ["45"]);
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
