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

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};

use unicode_segmentation::UnicodeSegmentation;

use super::normalize::{Normalized, fold, normalize};
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
    /// [`term_id`] of `stem`: what windows are compared by.
    pub id: u32,
    /// Byte range in the original text.
    pub start: usize,
    /// End of the byte range (exclusive).
    pub end: usize,
    /// The figure this token stands for, with its range in the original text.
    pub figure: Option<Figure>,
    /// Whether `text` is a stop word.
    pub stop: bool,
    /// [`term_id`] of `text` itself (not of its stem): a cheap key for comparing the
    /// written forms of two words.
    pub text_id: u32,
}

impl Token {
    /// A content token: a figure, or a word that is not a stop word.
    pub fn is_content(&self) -> bool {
        self.figure.is_some() || !self.stop
    }
}

/// 32-bit id of a stem or figure value: the low half of its FNV-1a 64-bit hash.
///
/// Windows and the store index compare these ids instead of strings. Two different
/// stems share an id with probability about 2^-32 per pair, which at worst credits one
/// word of one claim wrongly; the exact stems are compared again when the best window is
/// inspected.
pub fn term_id(stem: &str) -> u32 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in stem.bytes() {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    h as u32
}

/// Hasher for keys that are already well spread (term ids are hashes; sentence ids
/// are counters): one multiplication by the 64-bit golden-ratio constant mixes them
/// into the high bits that the hash table probes with. Much cheaper than SipHash. Ids
/// derive from text, so crafted text could collide them; that slows a lookup down but
/// never changes a result.
#[derive(Debug, Default, Clone, Copy)]
pub struct IdHasher(u64);

impl Hasher for IdHasher {
    fn finish(&self) -> u64 {
        self.0
    }
    fn write(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.0 = (self.0.rotate_left(8) ^ u64::from(b)).wrapping_mul(0x9E37_79B9_7F4A_7C15);
        }
    }
    fn write_u32(&mut self, x: u32) {
        self.0 = (self.0 ^ u64::from(x)).wrapping_mul(0x9E37_79B9_7F4A_7C15);
    }
    fn write_u64(&mut self, x: u64) {
        self.0 = (self.0 ^ x).wrapping_mul(0x9E37_79B9_7F4A_7C15);
    }
    fn write_usize(&mut self, x: usize) {
        self.write_u64(x as u64);
    }
}

/// A hash map keyed by term or sentence ids, with [`IdHasher`].
pub type IdMap<K, V> = HashMap<K, V, BuildHasherDefault<IdHasher>>;

/// What tokenising needs to know of one word: its stem, the stem's id and whether the
/// word is a stop word.
#[derive(Debug, Clone)]
struct WordInfo {
    stem: String,
    id: u32,
    stop: bool,
}

/// Looks `word` up in this thread's cache of the words seen so far, adding it if new:
/// stemming is the dearest step of tokenising, and the vocabulary of a store repeats.
/// The cache is emptied when it passes a million words.
fn with_word<R>(word: &str, f: impl FnOnce(&WordInfo) -> R) -> R {
    thread_local! {
        static CACHE: std::cell::RefCell<HashMap<String, WordInfo, BuildHasherDefault<IdHasher>>> =
            std::cell::RefCell::new(HashMap::default());
    }
    CACHE.with(|c| {
        let mut c = c.borrow_mut();
        if let Some(info) = c.get(word) {
            return f(info);
        }
        if c.len() > 1 << 20 {
            c.clear();
        }
        let st = stem(word);
        let info = WordInfo { id: term_id(&st), stem: st, stop: is_stop_word(word) };
        let r = f(&info);
        c.insert(word.to_owned(), info);
        r
    })
}

/// Word spans of normalised `text` at Unicode word boundaries (UAX #29), keeping only
/// words with a letter or digit, as `unicode_word_indices` does.
///
/// Pure ASCII text takes a hand-written path that implements the UAX #29 rules that can
/// apply to ASCII (WB5–WB13b: letters and digits join, `'` `.` `:` join two letters, `'`
/// `.` `,` `;` join two digits, `_` joins anything word-like); it is tested equal to
/// `unicode-segmentation` on random ASCII text. Other text goes to `unicode-segmentation`.
pub fn word_spans(text: &str) -> Vec<(usize, usize)> {
    if !text.is_ascii() {
        return text.unicode_word_indices().map(|(i, w)| (i, i + w.len())).collect();
    }
    let b = text.as_bytes();
    let is_word = |c: u8| c.is_ascii_alphanumeric() || c == b'_';
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        if !is_word(b[i]) {
            i += 1;
            continue;
        }
        let start = i;
        loop {
            while i < b.len() && is_word(b[i]) {
                i += 1;
            }
            // A single middle character between two letters or two digits joins them.
            if i + 1 < b.len() && i > start {
                let (prev, mid, next) = (b[i - 1], b[i], b[i + 1]);
                let letters = prev.is_ascii_alphabetic()
                    && next.is_ascii_alphabetic()
                    && matches!(mid, b'\'' | b'.' | b':');
                let digits = prev.is_ascii_digit()
                    && next.is_ascii_digit()
                    && matches!(mid, b'\'' | b'.' | b',' | b';');
                if letters || digits {
                    i += 1;
                    continue;
                }
            }
            break;
        }
        if b[start..i].iter().any(u8::is_ascii_alphanumeric) {
            out.push((start, i));
        }
    }
    out
}

/// One item of a scanned text, in normalised coordinates.
enum Item<'a> {
    Word(usize, usize, &'a str),
    Figure(Figure),
}

/// Figures and words of normalised text, in order, words inside a figure skipped.
fn scan<'a>(text: &'a str, mut visit: impl FnMut(Item<'a>)) {
    let has_alnum = text.bytes().any(|b| b.is_ascii_alphanumeric());
    let figures = if has_alnum { find_figures(text) } else { Vec::new() };
    let mut figures = figures.into_iter().peekable();
    let mut covered = 0usize;
    for (start, end) in word_spans(text) {
        while let Some(f) = figures.next_if(|f| f.start < end) {
            covered = covered.max(f.end);
            visit(Item::Figure(f));
        }
        if start < covered || is_role_name(text, start, end) {
            continue;
        }
        visit(Item::Word(start, end, &text[start..end]));
    }
    for f in figures {
        visit(Item::Figure(f));
    }
}

/// Whether the word at `start..end` of `text` is the name of a reStructuredText role
/// (`func` in ":func:`open`", `c` and `func` in ":c:func:`malloc`"): markup of
/// documentation sources, not words of their text.
fn is_role_name(text: &str, start: usize, end: usize) -> bool {
    let b = text.as_bytes();
    if start == 0 || b[start - 1] != b':' || b.get(end) != Some(&b':') {
        return false;
    }
    // After the closing colon: more role parts ("func:") and then a backtick.
    let mut i = end + 1;
    loop {
        match b.get(i) {
            // Normalisation turns the backtick into an apostrophe.
            Some(b'`' | b'\'') => return true,
            Some(c) if c.is_ascii_lowercase() => {
                while b.get(i).is_some_and(u8::is_ascii_lowercase) {
                    i += 1;
                }
                if b.get(i) != Some(&b':') {
                    return false;
                }
                i += 1;
            }
            _ => return false,
        }
    }
}

/// Tokenises `original`; see the module documentation.
pub fn tokenize(original: &str) -> Vec<Token> {
    let norm = normalize(original);
    tokenize_normalized(&norm)
}

/// [`tokenize`] for text already normalised with [`normalize`].
pub fn tokenize_normalized(norm: &Normalized) -> Vec<Token> {
    let mut out = Vec::new();
    scan(&norm.text, |item| match item {
        Item::Figure(f) => {
            let r = norm.original_range(f.start, f.end);
            let value = f.value.clone();
            out.push(Token {
                id: term_id(&value),
                text_id: term_id(&value),
                stem: value.clone(),
                text: value,
                start: r.start,
                end: r.end,
                figure: Some(Figure { start: r.start, end: r.end, ..f }),
                stop: false,
            });
        }
        Item::Word(s, e, word) => {
            let r = norm.original_range(s, e);
            let (stem, id, stop) = with_word(word, |w| (w.stem.clone(), w.id, w.stop));
            out.push(Token {
                id,
                text_id: term_id(word),
                text: word.to_owned(),
                stem,
                start: r.start,
                end: r.end,
                figure: None,
                stop,
            });
        }
    });
    out
}

/// The lean form of a text's tokens: ids in order, which of them are content tokens,
/// and the figures (ranges in normalised coordinates). Equal, token for token, to the ids
/// of [`tokenize`] — the store index is built with it.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct TokenIds {
    /// [`Token::id`] of every token, in order.
    pub ids: Vec<u32>,
    /// [`Token::is_content`] of every token.
    pub content: Vec<bool>,
    /// The figures.
    pub figures: Vec<Figure>,
}

/// [`tokenize`] without offsets or strings: ids, content flags and figures.
pub fn token_ids(original: &str) -> TokenIds {
    let folded = fold(original);
    let mut out = TokenIds::default();
    scan(&folded, |item| match item {
        Item::Figure(f) => {
            out.ids.push(term_id(&f.value));
            out.content.push(true);
            out.figures.push(f);
        }
        Item::Word(_, _, word) => {
            let (id, stop) = word_id(word);
            out.ids.push(id);
            out.content.push(!stop);
        }
    });
    out
}

/// One slot of [`word_id`]'s table: a word of up to 24 bytes, zero-padded.
#[derive(Clone, Copy, Default)]
struct Slot {
    key: [u64; 3],
    len: u8,
    id: u32,
    stop: bool,
}

/// The stem id and stop-word flag of `word`, through a direct-mapped table of recent
/// short words in front of [`with_word`]'s cache: a store's text repeats a small
/// vocabulary, and comparing three machine words is cheaper than hashing and comparing
/// a string. Equal to `with_word(word, |w| (w.id, w.stop))` (a slot holds the whole word,
/// so a hit is exact).
fn word_id(word: &str) -> (u32, bool) {
    const BITS: u32 = 12;
    thread_local! {
        static TABLE: std::cell::RefCell<Vec<Slot>> =
            std::cell::RefCell::new(vec![Slot::default(); 1 << BITS]);
    }
    let bytes = word.as_bytes();
    if bytes.is_empty() || bytes.len() > 24 {
        return with_word(word, |w| (w.id, w.stop));
    }
    let mut padded = [0u8; 24];
    padded[..bytes.len()].copy_from_slice(bytes);
    let key = [0, 1, 2]
        .map(|i| u64::from_le_bytes(padded[i * 8..i * 8 + 8].try_into().unwrap_or([0; 8])));
    let h = (key[0] ^ key[1].rotate_left(21) ^ key[2].rotate_left(42) ^ bytes.len() as u64)
        .wrapping_mul(0x9E37_79B9_7F4A_7C15);
    let at = (h >> (64 - BITS)) as usize;
    TABLE.with(|t| {
        let mut t = t.borrow_mut();
        let slot = &mut t[at];
        if usize::from(slot.len) == bytes.len() && slot.key == key {
            return (slot.id, slot.stop);
        }
        let (id, stop) = with_word(word, |w| (w.id, w.stop));
        *slot = Slot { key, len: bytes.len() as u8, id, stop };
        (id, stop)
    })
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
    fn rest_role_names_are_markup() {
        let words: Vec<String> = tokenize("Use :func:`open` or :c:func:`malloc`; note: fine.")
            .into_iter()
            .map(|t| t.text)
            .collect();
        assert_eq!(words, ["use", "open", "or", "malloc", "note", "fine"]);
    }

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
    fn ascii_fast_path_equals_unicode_segmentation() {
        // Oracle: unicode-segmentation's UAX #29 word boundaries, on random ASCII text
        // built from the characters the fast path treats specially.
        let alphabet = b"ab Z09_'.:,;-\"\n\t(!x";
        let mut x: u64 = 0x2545_F491_4F6C_DD1D;
        for _ in 0..20_000 {
            let len = (x % 24) as usize;
            let mut s = String::new();
            for _ in 0..len {
                x ^= x << 13;
                x ^= x >> 7;
                x ^= x << 17;
                s.push(alphabet[(x % alphabet.len() as u64) as usize] as char);
            }
            x = x.wrapping_add(0x9E37_79B9);
            let ours = word_spans(&s);
            let theirs: Vec<(usize, usize)> =
                s.unicode_word_indices().map(|(i, w)| (i, i + w.len())).collect();
            assert_eq!(ours, theirs, "{s:?}");
        }
    }

    #[test]
    fn lean_ids_equal_full_tokens() {
        for text in [
            "Claims stay OPEN for forty-five days, from 4 March 2026.",
            "Café prices: £12.40 (30%)",
            "don't e.g. x_y 3.5",
        ] {
            let full: Vec<u32> = tokenize(text).iter().map(|t| t.id).collect();
            let content: Vec<bool> = tokenize(text).iter().map(Token::is_content).collect();
            let lean = token_ids(text);
            assert_eq!((lean.ids, lean.content), (full, content), "{text}");
        }
    }

    #[test]
    fn rouge_score_tokenisation() {
        assert_eq!(ascii_alnum_words("Café au-lait, 12.5%!"), ["caf", "au", "lait", "12", "5"]);
        assert_eq!(unicode_words("Café au-lait"), ["café", "au", "lait"]);
    }
}
