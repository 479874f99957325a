//! Snowball English ("Porter2") stemming, via the `rust-stemmers` crate.
//!
//! Stems let "closes", "closed" and "closing" meet. The algorithm is Snowball's English
//! stemmer as of Snowball 2 (the version `rust-stemmers` implements), checked word by
//! word against the `snowballstemmer` PyPI package 2.2.0; Snowball 3 revised a few
//! hundred rare words ("added" → "add"), which plumbline does not follow yet. Note that
//! the `rouge-score` package stems with NLTK's Porter stemmer instead, so stemmed ROUGE
//! from plumbline differs from it by design.

use std::sync::LazyLock;

use rust_stemmers::{Algorithm, Stemmer};

static ENGLISH: LazyLock<Stemmer> = LazyLock::new(|| Stemmer::create(Algorithm::English));

/// The Snowball English stem of a lower-case word.
pub fn stem(word: &str) -> String {
    ENGLISH.stem(word).into_owned()
}

/// Stems only words longer than three characters — the rule `score --stem` applies, as
/// `rouge-score` does, so that short function words stay as they are.
pub fn stem_if_long(word: &str) -> String {
    if word.chars().count() > 3 { stem(word) } else { word.to_owned() }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn snowball_examples() {
        // Source: Snowball English stemmer sample vocabulary (values from memory).
        assert_eq!(stem("closing"), "close");
        assert_eq!(stem("generously"), "generous");
        assert_eq!(stem("consolingly"), "consol");
        assert_eq!(stem_if_long("was"), "was");
    }
}
