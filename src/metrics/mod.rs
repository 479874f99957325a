//! Similarity metrics over token sequences and strings.
//!
//! Each metric is a small, documented function so that it can be checked on its own
//! against the paper that defines it and against a reference implementation:
//!
//! * [`rouge`] — ROUGE-N and ROUGE-L (Lin 2004), checked against the `rouge-score` package;
//! * [`bleu`] — sentence BLEU (Papineni et al. 2002) with the `13a` tokenisation, `exp`
//!   smoothing and effective order, checked against `sacrebleu`'s `sentence_bleu`;
//! * [`fuzzy`] — Levenshtein distance and similarity, Jaro and Jaro-Winkler (Winkler
//!   1990) and the token-level fuzzy match the support scorer uses.

pub mod bleu;
pub mod fuzzy;
pub mod rouge;

/// Harmonic mean of precision and recall, 0 when both are 0.
///
/// Written as `2pr / (p + r)`, the same expression and order of operations as
/// `rouge-score`'s `scoring.fmeasure`, so results agree to the last bit.
pub fn fmeasure(precision: f64, recall: f64) -> f64 {
    if precision + recall > 0.0 { 2.0 * precision * recall / (precision + recall) } else { 0.0 }
}
