//! The store-wide search index: which sentences of which documents share words with a
//! claim.
//!
//! Built once per run over the visible text of every document. Each document is split
//! into sentences ([`crate::text::sentences::split`]); each sentence contributes its
//! content terms — Snowball stems of non-stop words and the canonical values of figures —
//! hashed to 64 bits, to an inverted index from term to sentence ids. A query ranks
//! sentences by the summed inverse document frequency (IDF, in sentences) of the claim
//! terms they contain and returns the best few, which the support scorer then examines
//! with its full window score. Terms are hashed (SipHash-free FNV-1a, deterministic), so
//! the index holds no strings.
//!
//! The index is what lets plumbline say that a sentence is carried by a document other
//! than the one it cites (`misattributed`) or by one the user may not read
//! (`restricted_match`).

use std::collections::HashMap;
use std::ops::Range;

use rayon::prelude::*;
use unicode_segmentation::UnicodeSegmentation;

use crate::text::normalize::normalize;
use crate::text::numbers::find_figures;
use crate::text::sentences::split;
use crate::text::stem::stem;
use crate::text::stopwords::is_stop_word;

/// FNV-1a, 64-bit: a fixed, documented hash so that the index is the same on every run.
pub fn term_hash(term: &str) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in term.bytes() {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    h
}

/// The content terms of a text: stems of non-stop words and `#`-prefixed figure values,
/// hashed, deduplicated and sorted.
pub fn content_terms(text: &str) -> Vec<u64> {
    let norm = normalize(text);
    let mut terms: Vec<u64> = norm
        .text
        .unicode_words()
        .filter(|w| !is_stop_word(w) && !w.bytes().all(|b| b.is_ascii_digit()))
        .map(|w| term_hash(&stem(w)))
        .collect();
    if norm.text.bytes().any(|b| b.is_ascii_digit()) {
        terms.extend(find_figures(&norm.text).iter().map(|f| term_hash(&format!("#{}", f.value))));
    }
    terms.sort_unstable();
    terms.dedup();
    terms
}

/// Sentence ranges of one document and the content terms of each sentence.
type DocTerms = (Vec<Range<usize>>, Vec<Vec<u64>>);

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

/// Sentence ranges of every document and the inverted index over them.
#[derive(Debug, Default)]
pub struct Index {
    /// Per document, the byte ranges (visible text) of its sentences.
    pub sentences: Vec<Vec<Range<usize>>>,
    /// Global sentence id → (document, sentence).
    owners: Vec<(u32, u32)>,
    /// Term → sorted global sentence ids.
    postings: HashMap<u64, Vec<u32>>,
}

impl Index {
    /// Builds the index over the visible texts of the documents, in parallel.
    pub fn build(texts: &[&str]) -> Index {
        let per_doc: Vec<DocTerms> = texts
            .par_iter()
            .map(|text| {
                let ranges = split(text);
                let terms = ranges.iter().map(|r| content_terms(&text[r.clone()])).collect();
                (ranges, terms)
            })
            .collect();
        let mut index = Index::default();
        for (d, (ranges, terms)) in per_doc.into_iter().enumerate() {
            for (s, ts) in terms.into_iter().enumerate() {
                let id = index.owners.len() as u32;
                index.owners.push((d as u32, s as u32));
                for t in ts {
                    index.postings.entry(t).or_default().push(id);
                }
            }
            index.sentences.push(ranges);
        }
        index
    }

    /// Number of sentences indexed.
    pub fn sentence_count(&self) -> usize {
        self.owners.len()
    }

    /// The `limit` sentences sharing the most weight of `terms` (see [`content_terms`]),
    /// best first; ties broken by document and sentence order, so results are
    /// deterministic.
    pub fn query(&self, terms: &[u64], limit: usize) -> Vec<Hit> {
        let n = self.owners.len().max(1) as f64;
        let mut acc: HashMap<u32, f64> = HashMap::new();
        for t in terms {
            let Some(list) = self.postings.get(t) else { continue };
            // Smoothed IDF; terms in more than a quarter of all sentences say little and
            // would make the query slow on large stores.
            if list.len() as f64 > (n / 4.0).max(50.0) {
                continue;
            }
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
