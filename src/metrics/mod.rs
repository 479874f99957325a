//! Similarity metrics over token sequences and strings.
//!
//! Each metric is a small, documented function so that it can be checked on its own
//! against the paper that defines it and against a reference implementation:
//!
//! * [`rouge`] — ROUGE-N and ROUGE-L (Lin 2004), checked against the `rouge-score` package;
//! * [`bleu`] — sentence BLEU (Papineni et al. 2002) with the `13a` tokenisation, `exp`
//!   smoothing and effective order, checked against `sacrebleu`'s `sentence_bleu`;
//! * [`fuzzy`] — Levenshtein distance and similarity, Jaro and Jaro-Winkler (Winkler
//!   1990) and the token-level fuzzy match the support scorer uses;
//! * [`pair`] — ROUGE-1/2/L and BLEU of one candidate/reference pair together, with a
//!   word cache and buffers kept across pairs (what `plumbline score` runs).

pub mod bleu;
pub mod fuzzy;
pub mod pair;
pub mod rouge;

use rustc_hash::FxHashMap;

/// Harmonic mean of precision and recall, 0 when both are 0.
///
/// Written as `2pr / (p + r)`, the same expression and order of operations as
/// `rouge-score`'s `scoring.fmeasure`, so results agree to the last bit.
pub fn fmeasure(precision: f64, recall: f64) -> f64 {
    if precision + recall > 0.0 { 2.0 * precision * recall / (precision + recall) } else { 0.0 }
}

/// A map from strings to ids for the hot loops of [`pair`] and [`bleu`]: a string of up to
/// 15 bytes is its own key, packed with its length into a `u128`, so that a lookup hashes
/// two words and compares one integer instead of calling out to compare bytes; longer
/// strings go to an ordinary map. FxHash, not a keyed hash: text crafted to collide can
/// slow lookups down, never change a result.
#[derive(Debug, Default, Clone)]
pub(crate) struct StrIds {
    short: FxHashMap<u128, u32>,
    long: FxHashMap<Box<str>, u32>,
}

impl StrIds {
    /// The packed key of a string of at most 15 bytes.
    fn key(s: &str) -> Option<u128> {
        let b = s.as_bytes();
        if b.len() > 15 {
            return None;
        }
        let mut buf = [0u8; 16];
        buf[..b.len()].copy_from_slice(b);
        buf[15] = b.len() as u8;
        Some(u128::from_le_bytes(buf))
    }

    pub(crate) fn get(&self, s: &str) -> Option<u32> {
        match Self::key(s) {
            Some(k) => self.short.get(&k).copied(),
            None => self.long.get(s).copied(),
        }
    }

    /// The id of `s`, inserting `new()` if it has none.
    pub(crate) fn get_or_insert(&mut self, s: &str, new: impl FnOnce() -> u32) -> u32 {
        match Self::key(s) {
            Some(k) => *self.short.entry(k).or_insert_with(new),
            None => match self.long.get(s) {
                Some(&id) => id,
                None => {
                    let id = new();
                    self.long.insert(s.into(), id);
                    id
                }
            },
        }
    }

    pub(crate) fn insert(&mut self, s: &str, id: u32) {
        match Self::key(s) {
            Some(k) => self.short.insert(k, id),
            None => self.long.insert(s.into(), id),
        };
    }

    pub(crate) fn len(&self) -> usize {
        self.short.len() + self.long.len()
    }

    pub(crate) fn clear(&mut self) {
        self.short.clear();
        self.long.clear();
    }
}

#[cfg(test)]
mod tests {
    use super::StrIds;

    #[test]
    fn str_ids_tell_strings_apart_by_bytes_and_length() {
        let mut ids = StrIds::default();
        let words =
            ["", "a", "a\0", "\0", "ab", "abcdefghijklmno", "abcdefghijklmnop", "abcdefghijklmnoq"];
        for (i, w) in words.iter().enumerate() {
            assert_eq!(ids.get_or_insert(w, || i as u32), i as u32, "{w:?}");
        }
        for (i, w) in words.iter().enumerate() {
            assert_eq!(ids.get(w), Some(i as u32), "{w:?}");
            assert_eq!(ids.get_or_insert(w, || 99), i as u32);
        }
        assert_eq!(ids.get("abcdefghijklmn"), None);
        assert_eq!(ids.len(), words.len());
        ids.clear();
        assert_eq!(ids.get("a"), None);
    }
}
