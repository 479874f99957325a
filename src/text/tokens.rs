//! Tokens: words, stems, stop words and figures, each with its byte range in the
//! original text.
//!
//! [`tokenize`] is what the support scorer sees. It normalises the text
//! ([`super::normalize`]), finds figures ([`super::numbers`]) so that "1 200" or
//! "4 March 2026" become one typed token, splits the rest into words at Unicode word
//! boundaries (UAX #29, via `unicode-segmentation`), and stems each word (Snowball
//! English). Every token keeps the byte range of the ORIGINAL text it came from, which is
//! what the report highlights.
//!
//! [`unicode_words`] and [`ascii_alnum_words`] are the two tokenisers `plumbline score`
//! offers for ROUGE: the first is the Unicode-aware default ("café" stays one token), the
//! second reproduces the `rouge-score` package exactly (lower-case, every run of
//! characters outside `a-z0-9` separates).

use unicode_segmentation::UnicodeSegmentation;

use super::normalize::{Normalized, normalize};
use super::numbers::{Figure, find_figures};
use super::stem::stem;
use super::stopwords::is_stop_word;

/// One token of a text.
#[derive(Debug, Clone, PartialEq)]
pub struct Token {
    /// Normalised form (a figure's canonical value for figures).
    pub text: String,
    /// Snowball stem of `text` (equal to `text` for figures).
    pub stem: String,
    /// Byte range in the original text.
    pub start: usize,
    /// End of the byte range (exclusive).
    pub end: usize,
    /// The figure this token stands for, with its range in the original text.
    pub figure: Option<Figure>,
    /// Whether `text` is a stop word.
    pub stop: bool,
}

impl Token {
    /// A content token: a figure, or a word that is not a stop word.
    pub fn is_content(&self) -> bool {
        self.figure.is_some() || !self.stop
    }
}

/// Tokenises `original`; see the module documentation.
pub fn tokenize(original: &str) -> Vec<Token> {
    let norm = normalize(original);
    tokenize_normalized(&norm)
}

/// [`tokenize`] for text already normalised with [`normalize`].
pub fn tokenize_normalized(norm: &Normalized) -> Vec<Token> {
    let text = norm.text.as_str();
    let figures = if text.bytes().any(|b| b.is_ascii_alphanumeric()) {
        find_figures(text)
    } else {
        Vec::new()
    };
    let mut figures = figures.into_iter().peekable();
    let mut out = Vec::new();
    // End (normalised coordinates) of the last figure emitted: words inside it are skipped.
    let mut covered = 0usize;
    let emit_figure = |f: Figure, out: &mut Vec<Token>| {
        let r = norm.original_range(f.start, f.end);
        let value = f.value.clone();
        let figure = Figure { start: r.start, end: r.end, ..f };
        out.push(Token {
            stem: value.clone(),
            text: value,
            start: r.start,
            end: r.end,
            figure: Some(figure),
            stop: false,
        });
    };
    for (start, word) in text.unicode_word_indices() {
        let end = start + word.len();
        while let Some(f) = figures.next_if(|f| f.start < end) {
            covered = covered.max(f.end);
            emit_figure(f, &mut out);
        }
        if start < covered {
            continue;
        }
        let r = norm.original_range(start, end);
        out.push(Token {
            text: word.to_owned(),
            stem: stem(word),
            start: r.start,
            end: r.end,
            figure: None,
            stop: is_stop_word(word),
        });
    }
    for f in figures {
        emit_figure(f, &mut out);
    }
    out
}

/// The default tokeniser of `plumbline score`: NFKC, case-folded Unicode words.
pub fn unicode_words(s: &str) -> Vec<String> {
    normalize(s).text.unicode_words().map(str::to_owned).collect()
}

/// The `rouge-score` package's tokenisation without stemming: lower-case, every run of
/// characters outside `a-z0-9` is a separator (so "café" becomes "caf").
pub fn ascii_alnum_words(s: &str) -> Vec<String> {
    let lower = s.to_lowercase();
    lower
        .split(|c: char| !c.is_ascii_lowercase() && !c.is_ascii_digit())
        .filter(|t| !t.is_empty())
        .map(str::to_owned)
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tokens_keep_original_ranges() {
        let src = "Claims stay OPEN for forty-five days, from 4 March 2026.";
        let toks = tokenize(src);
        let texts: Vec<&str> = toks.iter().map(|t| t.text.as_str()).collect();
        assert_eq!(texts, ["claims", "stay", "open", "for", "45", "from", "2026-03-04"]);
        assert_eq!(&src[toks[2].start..toks[2].end], "OPEN");
        assert_eq!(&src[toks[4].start..toks[4].end], "forty-five days");
        assert_eq!(&src[toks[6].start..toks[6].end], "4 March 2026");
        assert_eq!(toks[0].stem, "claim");
        assert!(toks[3].stop && !toks[1].stop);
    }

    #[test]
    fn lookalikes_do_not_hide_words() {
        let toks = tokenize("ap\u{200B}proved ＡＰＩ");
        assert_eq!(toks.iter().map(|t| t.text.as_str()).collect::<Vec<_>>(), ["approved", "api"]);
        assert_eq!(toks[1].start, "ap\u{200B}proved ".len());
    }

    #[test]
    fn figures_at_start_and_end() {
        let t = tokenize("30% of 1 200");
        assert_eq!(t.iter().map(|t| t.text.as_str()).collect::<Vec<_>>(), ["30", "of", "1200"]);
        assert!(t[0].figure.is_some() && t[2].figure.is_some());
    }

    #[test]
    fn rouge_score_tokenisation() {
        assert_eq!(ascii_alnum_words("Café au-lait, 12.5%!"), ["caf", "au", "lait", "12", "5"]);
        assert_eq!(unicode_words("Café au-lait"), ["café", "au", "lait"]);
    }
}
