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

/// Similarity of two word tokens for fuzzy credit: the larger of Jaro-Winkler and the
/// normalised Levenshtein similarity, but 0 for tokens shorter than four characters
/// unless equal, since for short words one edit changes the word ("can"/"cat").
pub fn token_similarity(a: &str, b: &str) -> f64 {
    if a == b {
        return 1.0;
    }
    if a.chars().count() < 4 || b.chars().count() < 4 {
        return 0.0;
    }
    jaro_winkler(a, b).max(levenshtein_similarity(a, b))
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
}
