//! Character-level string similarity and the token-level fuzzy match.
//!
//! Levenshtein distance and Jaro-Winkler similarity come from the `strsim` crate and
//! compare Unicode scalar values; this module fixes the conventions plumbline reports
//! (normalised similarity, empty strings) and builds on them the fuzzy token match the
//! support scorer uses: a token of a claim is credited when some token of the evidence is
//! similar enough, so "authorised"/"authorized" or a typo still count.

/// Levenshtein edit distance (insertions, deletions, substitutions) over Unicode scalar
/// values. `kitten` → `sitting` is 3.
pub fn levenshtein(a: &str, b: &str) -> usize {
    strsim::levenshtein(a, b)
}

/// `1 − distance / max(len)`, lengths in Unicode scalar values; 1.0 for two empty strings.
pub fn levenshtein_similarity(a: &str, b: &str) -> f64 {
    let longest = a.chars().count().max(b.chars().count());
    if longest == 0 { 1.0 } else { 1.0 - levenshtein(a, b) as f64 / longest as f64 }
}

/// Jaro similarity (Jaro 1989), in 0..1.
pub fn jaro(a: &str, b: &str) -> f64 {
    strsim::jaro(a, b)
}

/// Jaro-Winkler similarity (Winkler 1990): Jaro plus a bonus of 0.1 per shared leading
/// character (at most four) when Jaro exceeds 0.7.
pub fn jaro_winkler(a: &str, b: &str) -> f64 {
    strsim::jaro_winkler(a, b)
}

/// ASCII bytes as the sequence `strsim`'s generic functions compare.
struct Bytes<'a>(&'a [u8]);

impl<'a> IntoIterator for &Bytes<'a> {
    type Item = u8;
    type IntoIter = std::iter::Copied<std::slice::Iter<'a, u8>>;
    fn into_iter(self) -> Self::IntoIter {
        self.0.iter().copied()
    }
}

/// Similarity of two word tokens for fuzzy credit: the larger of Jaro-Winkler and the
/// normalised Levenshtein similarity, but 0 for tokens shorter than four characters
/// unless equal, since for short words one edit changes the word ("can"/"cat").
pub fn token_similarity(a: &str, b: &str) -> f64 {
    if a == b {
        return 1.0;
    }
    if a.is_ascii() && b.is_ascii() {
        // Bytes are characters: the same values without decoding UTF-8.
        let (x, y) = (a.as_bytes(), b.as_bytes());
        if x.len() < 4 || y.len() < 4 {
            return 0.0;
        }
        let (bx, by) = (Bytes(x), Bytes(y));
        let lev = 1.0 - strsim::generic_levenshtein(&bx, &by) as f64 / x.len().max(y.len()) as f64;
        return strsim::generic_jaro_winkler(&bx, &by).max(lev);
    }
    if a.chars().count() < 4 || b.chars().count() < 4 {
        return 0.0;
    }
    jaro_winkler(a, b).max(levenshtein_similarity(a, b))
}

/// [`token_similarity`] when it reaches `threshold`, else 0 — usually without computing
/// it: for ASCII words a cheap upper bound on both measures (from the characters the two
/// words share, counted as multisets, and their common prefix) rules most pairs out.
///
/// The bound: with `c` shared characters, Jaro is at most `(c/|a| + c/|b| + 1) / 3`,
/// Jaro-Winkler adds `0.1 · prefix · (1 − Jaro)`, and Levenshtein distance is at least
/// `max(|a|, |b|) − c`. Tested equal to filtering [`token_similarity`] directly.
pub fn similarity_at_least(a: &str, b: &str, threshold: f64) -> f64 {
    if a != b && a.is_ascii() && b.is_ascii() {
        let (x, y) = (a.as_bytes(), b.as_bytes());
        if x.len() < 4 || y.len() < 4 {
            return 0.0;
        }
        let mut counts = [0i16; 128];
        for &ch in x {
            counts[ch as usize] += 1;
        }
        let mut common = 0usize;
        for &ch in y {
            if counts[ch as usize] > 0 {
                counts[ch as usize] -= 1;
                common += 1;
            }
        }
        let (la, lb) = (x.len() as f64, y.len() as f64);
        let c = common as f64;
        let jaro_max = if common == 0 { 0.0 } else { (c / la + c / lb + 1.0) / 3.0 };
        let prefix = x.iter().zip(y).take(4).take_while(|(p, q)| p == q).count() as f64;
        let jw_max = jaro_max + 0.1 * prefix * (1.0 - jaro_max);
        let lev_max = c / la.max(lb);
        if jw_max.max(lev_max) + 1e-12 < threshold {
            return 0.0;
        }
    }
    let s = token_similarity(a, b);
    if s >= threshold { s } else { 0.0 }
}

/// The best fuzzy match for `token` among `candidates`: index and similarity, if any
/// reaches `threshold`.
pub fn best_match<S: AsRef<str>>(
    token: &str,
    candidates: &[S],
    threshold: f64,
) -> Option<(usize, f64)> {
    let mut best: Option<(usize, f64)> = None;
    for (i, c) in candidates.iter().enumerate() {
        let s = token_similarity(token, c.as_ref());
        if s >= threshold && best.is_none_or(|(_, b)| s > b) {
            best = Some((i, s));
            if s == 1.0 {
                break;
            }
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn kitten_sitting() {
        // Source: the standard textbook example of Levenshtein distance.
        assert_eq!(levenshtein("kitten", "sitting"), 3);
        assert!((levenshtein_similarity("kitten", "sitting") - (1.0 - 3.0 / 7.0)).abs() < 1e-15);
    }

    #[test]
    fn winkler_1990_examples() {
        // Source: Winkler 1990 (values from memory, rounded to three places as usually
        // quoted): MARTHA/MARHTA 0.961, DWAYNE/DUANE 0.840, DIXON/DICKSONX 0.813.
        assert!((jaro_winkler("MARTHA", "MARHTA") - 0.961).abs() < 5e-4);
        assert!((jaro_winkler("DWAYNE", "DUANE") - 0.840).abs() < 5e-4);
        assert!((jaro_winkler("DIXON", "DICKSONX") - 0.813).abs() < 5e-4);
    }

    #[test]
    fn empty_and_unicode() {
        assert_eq!(levenshtein_similarity("", ""), 1.0);
        assert_eq!(levenshtein("café", "cafe"), 1);
    }

    #[test]
    fn fuzzy_credit_for_spelling_variants_not_short_words() {
        assert!(token_similarity("authorised", "authorized") > 0.9);
        assert_eq!(token_similarity("can", "cat"), 0.0);
        assert_eq!(best_match("colour", &["color", "flavour"], 0.85).map(|m| m.0), Some(0));
    }

    #[test]
    fn ascii_path_and_bound_agree_with_the_general_measures() {
        // Random lower-case words over a small alphabet, so that near matches are common.
        let mut x: u64 = 0x2545_F491_4F6C_DD1D;
        let mut next = move || {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            x
        };
        let mut pair = || -> (String, String) {
            let mut w = || {
                let n = 3 + (next() % 8) as usize;
                (0..n).map(|_| (b'a' + (next() % 6) as u8) as char).collect::<String>()
            };
            (w(), w())
        };
        for _ in 0..3_000 {
            let (a, b) = pair();
            let general = if a == b {
                1.0
            } else if a.chars().count() < 4 || b.chars().count() < 4 {
                0.0
            } else {
                jaro_winkler(&a, &b).max(levenshtein_similarity(&a, &b))
            };
            assert!((token_similarity(&a, &b) - general).abs() < 1e-12, "{a} {b}");
            for t in [0.7, 0.85, 0.9] {
                let want = if general >= t { general } else { 0.0 };
                assert!((similarity_at_least(&a, &b, t) - want).abs() < 1e-12, "{a} {b} {t}");
            }
        }
    }
}
