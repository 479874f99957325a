//! The lexical metrics of one candidate/reference pair, computed together: ROUGE-1,
//! ROUGE-2 and ROUGE-L over words (optionally Snowball stems) and sentence BLEU.
//!
//! [`PairScorer`] gives exactly what the separate functions give —
//! [`unicode_words`](crate::text::tokens::unicode_words) or
//! [`ascii_alnum_words`], [`stem_if_long`], [`rouge_n`](super::rouge::rouge_n),
//! [`rouge_l`](super::rouge::rouge_l) and [`sentence_bleu`](super::bleu::sentence_bleu),
//! bit for bit (tested) — but is built to score many pairs: `plumbline score --pairs`
//! and the metrics benchmark run every pair through one scorer. Where the time goes, and
//! why it is spent this way (measured with `cargo bench --bench metrics`; see
//! DEVELOPERS.md, "Benchmarks"):
//!
//! * Tokenising is done at the bytes that are not ASCII letters or digits, found 32 at a
//!   time (`NonAlnum` in the parent module), once for the reference and shared by the word
//!   and the `13a` tokenisers. ASCII text takes a word scanner equal to
//!   [`word_spans`] on ASCII (tested); only the stretches around non-ASCII characters go
//!   through [`fold`] and [`word_spans`].
//! * Every distinct word is stemmed once: a cache maps a word to a small integer, the id
//!   of its unit (its stem when stemming, else the word), so that different words with
//!   the same stem share an id exactly (no hashing of stems into ids that could collide).
//!   Words of up to 15 bytes are keyed by their bytes packed in a `u128`, looked up first
//!   in a direct-mapped front cache that keeps the frequent words close to the processor.
//! * Per pair, the candidate's units get dense local ids and every reference unit absent
//!   from the candidate is marked absent, through an array indexed by unit id. ROUGE-1
//!   is then counting in arrays, ROUGE-2 counting in a dense `(k + 1)²` array for small
//!   candidates, ROUGE-L one 64-bit-block pass of the bit-parallel LCS per reference
//!   token. About two reference words in three are absent, unpredictably, so these loops
//!   are written without branches on it: a mispredicted branch costs more than the work.
//! * BLEU reuses its token buffers and counts n-grams over ids ([`SentenceBleu`]).
//!
//! The cache is emptied when it passes [`CACHE_WORDS`] words or [`CACHE_BYTES`] bytes, so
//! memory stays bounded however many distinct words the input holds. Its hash is FxHash,
//! not a keyed one: text crafted to collide could slow lookups down, never change a result.

use rustc_hash::FxHashMap;

use super::bleu::{Bleu, SentenceBleu};
use super::rouge::{LcsTable, Prf};
use super::{FrontCache, NgramTable, NonAlnum, StrIds};
use crate::text::normalize::fold;
use crate::text::stem::stem_if_long;
use crate::text::tokens::{ascii_alnum_words, word_spans};

/// Longest stretch of non-ASCII text whose units are kept, in bytes.
const MAX_STRETCH_BYTES: usize = 64;

/// Words the cache holds at most before it is emptied.
pub const CACHE_WORDS: usize = 1 << 20;

/// Bytes of words and units the cache holds at most before it is emptied.
pub const CACHE_BYTES: usize = 64 << 20;

/// Which words ROUGE compares (BLEU always uses the `13a` tokenisation).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum RougeTokens {
    /// [`unicode_words`](crate::text::tokens::unicode_words): NFKC, case-folded Unicode
    /// words.
    #[default]
    Unicode,
    /// [`ascii_alnum_words`]: lower-case, every run outside `a-z0-9` separates, as the
    /// `rouge-score` package tokenises.
    AsciiAlnum,
}

/// ROUGE-1, ROUGE-2, ROUGE-L and sentence BLEU of one pair.
#[derive(Debug, Clone, PartialEq)]
pub struct PairMetrics {
    /// ROUGE-1.
    pub rouge1: Prf,
    /// ROUGE-2.
    pub rouge2: Prf,
    /// ROUGE-L.
    pub rouge_l: Prf,
    /// Sentence BLEU (13a, `exp` smoothing, effective order).
    pub bleu: Bleu,
}

/// Entries of the front caches of [`PairScorer`]'s words: `1 << FRONT_BITS` (192 KiB).
pub(crate) const FRONT_BITS: u32 = 13;

/// Most distinct candidate units for which ROUGE-2 counts bigrams in a dense array
/// (`(k + 1)²` cells, 4 KiB per side at 32) rather than a table.
const DENSE_BIGRAMS: usize = 32;

/// Marks a reference unit that the candidate does not hold.
const ABSENT: u32 = u32::MAX;

/// Scores pairs; keep one for many pairs. See the module documentation.
#[derive(Debug, Clone)]
pub struct PairScorer {
    tokens: RougeTokens,
    stem: bool,
    /// Cache in front of `words` for the words of up to 15 bytes.
    front: FrontCache,
    /// Word → id of its unit.
    words: StrIds,
    /// Stretch of text with non-ASCII characters → its units ([`Self::stretch_units`]).
    stretches: FxHashMap<Box<str>, Box<[u32]>>,
    /// Unit → id, when stemming (without stemming a word is its own unit).
    units: StrIds,
    units_len: u32,
    cached_bytes: usize,
    /// The candidate's unit ids, in order.
    cand_units: Vec<u32>,
    /// Per unit id: its local id in the current pair's candidate, else [`ABSENT`].
    local: Vec<u32>,
    /// Local ids of the candidate's units, in order.
    cand: Vec<u32>,
    /// Local ids of the reference's units, in order, [`ABSENT`] for units not in the
    /// candidate.
    refr: Vec<u32>,
    /// The reference's [`NonAlnum`] positions.
    events: Vec<u32>,
    /// Lower-cased ASCII text, and its words.
    lower: String,
    spans: Vec<(usize, usize)>,
    cand_counts: Vec<u32>,
    ref_counts: Vec<u32>,
    /// The cells of the candidate's distinct bigrams in [`Self::rouge2_dense`].
    cand_cells: Vec<usize>,
    bigrams: NgramTable,
    lcs: LcsTable,
    bleu: SentenceBleu,
}

impl PairScorer {
    /// A scorer that compares `tokens` for ROUGE, stemmed with Snowball English (words of
    /// more than three characters) when `stem` is set.
    pub fn new(tokens: RougeTokens, stem: bool) -> PairScorer {
        PairScorer {
            tokens,
            stem,
            front: FrontCache::new(FRONT_BITS),
            words: StrIds::default(),
            stretches: FxHashMap::default(),
            units: StrIds::default(),
            units_len: 0,
            cached_bytes: 0,
            cand_units: Vec::new(),
            local: Vec::new(),
            cand: Vec::new(),
            refr: Vec::new(),
            events: Vec::new(),
            lower: String::new(),
            spans: Vec::new(),
            cand_counts: Vec::new(),
            ref_counts: Vec::new(),
            cand_cells: Vec::new(),
            bigrams: NgramTable::default(),
            lcs: LcsTable::new(&[], 0),
            bleu: SentenceBleu::default(),
        }
    }

    /// The metrics of `candidate` (the text judged) against `reference`.
    pub fn score(&mut self, candidate: &str, reference: &str) -> PairMetrics {
        if self.words.len() + self.stretches.len() > CACHE_WORDS || self.cached_bytes > CACHE_BYTES
        {
            self.stretches.clear();
            self.words.clear();
            self.units.clear();
            self.units_len = 0;
            self.local.clear();
            self.cached_bytes = 0;
            self.front.clear();
        }
        let mut cand_units = std::mem::take(&mut self.cand_units);
        let mut cand = std::mem::take(&mut self.cand);
        let mut refr = std::mem::take(&mut self.refr);
        cand_units.clear();
        refr.clear();
        // The reference is most of the text, and both tokenisers visit the same bytes of
        // it (those that are not ASCII letters or digits): find them once.
        let mut events = std::mem::take(&mut self.events);
        events.clear();
        events.extend(NonAlnum::new(reference.as_bytes()).map(|p| p as u32));
        self.units_of(candidate, &mut cand_units, None);
        self.units_of(reference, &mut refr, Some(&events));
        // Candidate units get local ids 0, 1, … in order of first occurrence, in `local`
        // (indexed by unit id, ABSENT elsewhere), which then maps the reference's units
        // without a branch; the candidate's entries are put back to ABSENT at the end.
        let mut local = std::mem::take(&mut self.local);
        local.resize(self.units_len as usize, ABSENT);
        let mut distinct = 0u32;
        cand.clear();
        for &unit in &cand_units {
            let l = &mut local[unit as usize];
            if *l == ABSENT {
                *l = distinct;
                distinct += 1;
            }
            cand.push(*l);
        }
        for unit in refr.iter_mut() {
            *unit = local[*unit as usize];
        }
        for &unit in &cand_units {
            local[unit as usize] = ABSENT;
        }
        self.local = local;
        self.cand_units = cand_units;
        let k = distinct as usize;
        let rouge1 = self.rouge1(&cand, &refr, k);
        let rouge2 = self.rouge2(&cand, &refr, k);
        let rouge_l = if cand.is_empty() || refr.is_empty() {
            Prf::default()
        } else {
            self.lcs.prepare(&cand, k);
            let lcs = self.lcs.len_with(refr.iter().copied());
            Prf::new(lcs as f64 / cand.len() as f64, lcs as f64 / refr.len() as f64)
        };
        self.cand = cand;
        self.refr = refr;
        let bleu = self.bleu.score_with(candidate, reference, Some(&events));
        self.events = events;
        PairMetrics { rouge1, rouge2, rouge_l, bleu }
    }

    /// ROUGE-1 over local ids: counts in arrays, the clipped overlap their minima.
    fn rouge1(&mut self, cand: &[u32], refr: &[u32], k: usize) -> Prf {
        self.cand_counts.clear();
        self.cand_counts.resize(k + 1, 0);
        self.ref_counts.clear();
        // Slot k counts the absent units, and the candidate has none there.
        self.ref_counts.resize(k + 1, 0);
        for &c in cand {
            self.cand_counts[c as usize] += 1;
        }
        for &r in refr {
            self.ref_counts[(r as usize).min(k)] += 1;
        }
        let overlap: usize =
            self.cand_counts.iter().zip(&self.ref_counts).map(|(&c, &r)| c.min(r) as usize).sum();
        overlap_prf(overlap, cand.len(), refr.len())
    }

    /// ROUGE-2: the candidate's bigrams in a table, the reference's looked up only when
    /// both of their units occur in the candidate.
    fn rouge2(&mut self, cand: &[u32], refr: &[u32], k: usize) -> Prf {
        if k <= DENSE_BIGRAMS {
            return self.rouge2_dense(cand, refr, k);
        }
        // Local ids + 1, so that no key is 0.
        let key = |a: u32, b: u32| u128::from(a + 1) << 32 | u128::from(b + 1);
        self.bigrams.reset(cand.len());
        self.cand_counts.clear();
        for w in cand.windows(2) {
            let next = self.cand_counts.len() as u32;
            let slot = self.bigrams.get_or_insert(key(w[0], w[1]), next);
            if slot == next {
                self.cand_counts.push(0);
            }
            self.cand_counts[slot as usize] += 1;
        }
        self.ref_counts.clear();
        self.ref_counts.resize(self.cand_counts.len(), 0);
        for w in refr.windows(2) {
            if w[0] != ABSENT && w[1] != ABSENT {
                if let Some(slot) = self.bigrams.get(key(w[0], w[1])) {
                    self.ref_counts[slot as usize] += 1;
                }
            }
        }
        let overlap: usize =
            self.cand_counts.iter().zip(&self.ref_counts).map(|(&c, &r)| c.min(r) as usize).sum();
        overlap_prf(overlap, cand.len().saturating_sub(1), refr.len().saturating_sub(1))
    }

    /// [`Self::rouge2`] for a candidate of at most [`DENSE_BIGRAMS`] distinct units: bigram
    /// counts in a `(k + 1)²` array, the last row and column for absent units, so that the
    /// reference's bigrams are counted without a branch or a search.
    fn rouge2_dense(&mut self, cand: &[u32], refr: &[u32], k: usize) -> Prf {
        let width = k + 1;
        let cell = |a: u32, b: u32| (a as usize).min(k) * width + (b as usize).min(k);
        self.cand_counts.clear();
        self.cand_counts.resize(width * width, 0);
        self.ref_counts.clear();
        self.ref_counts.resize(width * width, 0);
        self.cand_cells.clear();
        for w in cand.windows(2) {
            let c = cell(w[0], w[1]);
            if self.cand_counts[c] == 0 {
                self.cand_cells.push(c);
            }
            self.cand_counts[c] += 1;
        }
        for w in refr.windows(2) {
            self.ref_counts[cell(w[0], w[1])] += 1;
        }
        // Only the candidate's bigrams can overlap.
        let overlap: usize = self
            .cand_cells
            .iter()
            .map(|&c| self.cand_counts[c].min(self.ref_counts[c]) as usize)
            .sum();
        overlap_prf(overlap, cand.len().saturating_sub(1), refr.len().saturating_sub(1))
    }

    /// Appends the unit id of every ROUGE word of `text` to `out`, in order; `events` are
    /// `text`'s [`NonAlnum`] positions, if at hand.
    fn units_of(&mut self, text: &str, out: &mut Vec<u32>, events: Option<&[u32]>) {
        match self.tokens {
            RougeTokens::Unicode => {
                // Non-ASCII characters are rare in most text, and the Unicode path is dear,
                // so only the stretches around them take it. A stretch ends after a space
                // that an ASCII byte follows: a word boundary (UAX #29: no rule joins
                // across a space unless an extending or format character, never ASCII,
                // follows it), and a place where `normalize` starts afresh (it handles
                // each ASCII byte followed by an ASCII byte on its own).
                let b = text.as_bytes();
                let cut = |p: usize| b[p - 1] == b' ' && b[p].is_ascii();
                let mut pos = 0;
                while pos < b.len() {
                    let Some(off) = b[pos..].iter().position(|c| !c.is_ascii()) else {
                        // The given positions are the text's own when it starts here.
                        self.ascii_units(&text[pos..], out, events.filter(|_| pos == 0));
                        break;
                    };
                    let k = pos + off;
                    let start = (pos + 1..=k).rev().find(|&p| cut(p)).unwrap_or(pos);
                    let end = (k + 1..b.len()).find(|&p| cut(p)).unwrap_or(b.len());
                    self.ascii_units(&text[pos..start], out, None);
                    self.stretch_units(&text[start..end], out);
                    pos = end;
                }
            }
            RougeTokens::AsciiAlnum if text.is_ascii() => {
                let mut lower = std::mem::take(&mut self.lower);
                lower.clear();
                lower.push_str(text);
                lower.make_ascii_lowercase();
                let words = lower.split(|c: char| !c.is_ascii_lowercase() && !c.is_ascii_digit());
                for w in words.filter(|w| !w.is_empty()) {
                    out.push(self.unit(w));
                }
                self.lower = lower;
            }
            RougeTokens::AsciiAlnum => {
                for w in ascii_alnum_words(text) {
                    out.push(self.unit(&w));
                }
            }
        }
    }

    /// [`RougeTokens::Unicode`] units of a stretch of text with non-ASCII characters:
    /// [`fold`], then [`word_spans`]. The same stretches come back (a word with a curly
    /// apostrophe, a dash and the word before it), and folding is dear, so the units of
    /// short stretches are kept (and dropped with the word cache, whose ids they hold).
    fn stretch_units(&mut self, stretch: &str, out: &mut Vec<u32>) {
        if let Some(units) = self.stretches.get(stretch) {
            out.extend_from_slice(units);
            return;
        }
        let first = out.len();
        let folded = fold(stretch);
        for (s, e) in word_spans(&folded) {
            out.push(self.unit(&folded[s..e]));
        }
        if stretch.len() <= MAX_STRETCH_BYTES {
            self.cached_bytes += stretch.len() + 4 * (out.len() - first);
            self.stretches.insert(stretch.into(), out[first..].into());
        }
    }

    /// [`RougeTokens::Unicode`] units of ASCII text: [`fold`] is lower-casing (and the
    /// backtick made an apostrophe), done here into a buffer kept across pairs.
    fn ascii_units(&mut self, text: &str, out: &mut Vec<u32>, events: Option<&[u32]>) {
        if text.is_empty() {
            return;
        }
        let mut lower = std::mem::take(&mut self.lower);
        let mut spans = std::mem::take(&mut self.spans);
        lower.clear();
        lower.push_str(text);
        lower.make_ascii_lowercase();
        if memchr::memchr(b'`', lower.as_bytes()).is_some() {
            lower = lower.replace('`', "'");
        }
        spans.clear();
        // Lower-casing keeps letters letters: `text`'s positions are `lower`'s.
        match events {
            Some(events) => {
                ascii_word_spans(&lower, events.iter().map(|&p| p as usize), &mut spans)
            }
            None => ascii_word_spans(&lower, NonAlnum::new(lower.as_bytes()), &mut spans),
        }
        // Zeros after the text, so that every word's key is one 16-byte load.
        let len = lower.len();
        lower.push_str("\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0");
        let padded = lower.as_bytes();
        out.extend(spans.iter().map(|&(s, e)| {
            let key = StrIds::key_in_padded(padded, s, e - s);
            self.unit_with_key(&lower[s..e], key)
        }));
        lower.truncate(len);
        self.lower = lower;
        self.spans = spans;
    }

    /// The unit id of `word`, stemming and caching it on first sight.
    fn unit(&mut self, word: &str) -> u32 {
        self.unit_with_key(word, StrIds::key(word))
    }

    /// [`Self::unit`] with the word's [`StrIds::key`] at hand.
    fn unit_with_key(&mut self, word: &str, key: Option<u128>) -> u32 {
        let Some(key) = key else {
            return self.cached_unit(word);
        };
        if let Some(id) = self.front.get(key) {
            return id;
        }
        let id = self.cached_unit(word);
        self.front.put(key, id);
        id
    }

    /// [`Self::unit`] through the word cache proper.
    fn cached_unit(&mut self, word: &str) -> u32 {
        if let Some(id) = self.words.get(word) {
            return id;
        }
        let id = if self.stem {
            let stem = stem_if_long(word);
            match self.units.get(&stem) {
                Some(id) => id,
                None => {
                    let id = self.new_unit();
                    self.cached_bytes += stem.len();
                    self.units.insert(&stem, id);
                    id
                }
            }
        } else {
            self.new_unit()
        };
        self.cached_bytes += word.len();
        self.words.insert(word, id);
        id
    }

    fn new_unit(&mut self) -> u32 {
        let id = self.units_len;
        self.units_len += 1;
        id
    }
}

/// Byte classes of [`ascii_word_spans`].
const WORD: u8 = 1;
const LETTER: u8 = 2;
const DIGIT: u8 = 4;
/// Joins two letters (UAX #29 MidLetter, MidNumLet, Single_Quote).
const MID_LETTER: u8 = 8;
/// Joins two digits (UAX #29 MidNum, MidNumLet, Single_Quote).
const MID_NUM: u8 = 16;

static ASCII_WORD_CLASS: [u8; 256] = {
    let mut t = [0u8; 256];
    let mut i = 0;
    while i < 256 {
        let c = i as u8;
        t[i] = if c.is_ascii_alphabetic() {
            WORD | LETTER
        } else if c.is_ascii_digit() {
            WORD | DIGIT
        } else if c == b'_' {
            WORD
        } else {
            match c {
                b'\'' | b'.' => MID_LETTER | MID_NUM,
                b':' => MID_LETTER,
                b',' | b';' => MID_NUM,
                _ => 0,
            }
        };
        i += 1;
    }
    t
};

/// Appends the byte range of every word of ASCII `text` to `out`: the spans
/// [`word_spans`] gives for ASCII text (UAX #29 restricted to ASCII: letters, digits and
/// `_` join; `'` `.` `:` join two letters; `'` `.` `,` `;` join two digits; a word needs a
/// letter or digit), found in one pass with a class table and no list. Tested equal to
/// [`word_spans`].
fn ascii_word_spans(
    text: &str,
    events: impl Iterator<Item = usize>,
    out: &mut Vec<(usize, usize)>,
) {
    let b = text.as_bytes();
    let class = |i: usize| ASCII_WORD_CLASS[b[i] as usize];
    // The word being read: its start, and whether it has a letter or digit yet.
    let mut word: Option<(usize, bool)> = None;
    let mut last = None;
    for p in events {
        // Letters and digits between the previous such byte and this one.
        if p > last.map_or(0, |l| l + 1) {
            let run_start = last.map_or(0, |l| l + 1);
            word = Some((word.map_or(run_start, |w| w.0), true));
        }
        last = Some(p);
        if p == b.len() {
            continue;
        }
        let c = class(p);
        if c & WORD != 0 {
            // `_` continues a word or starts one.
            word = Some(word.unwrap_or((p, false)));
            continue;
        }
        if let Some((start, alnum)) = word {
            // One joining character between two letters or two digits.
            if p + 1 < b.len() {
                let (prev, next) = (class(p - 1), class(p + 1));
                // Bit tests without short-circuits: no branches to mispredict.
                let letters = (prev & next & LETTER != 0) & (c & MID_LETTER != 0);
                let digits = (prev & next & DIGIT != 0) & (c & MID_NUM != 0);
                if letters | digits {
                    continue;
                }
            }
            if alnum {
                out.push((start, p));
            }
            word = None;
        }
    }
    if let Some((start, true)) = word {
        out.push((start, b.len()));
    }
}

/// ROUGE-N's precision and recall from the clipped overlap and the two n-gram totals,
/// with `rouge-score`'s `max(total, 1)` guard, in the same operations as
/// [`rouge_n`](super::rouge::rouge_n).
fn overlap_prf(overlap: usize, cand_total: usize, ref_total: usize) -> Prf {
    Prf::new(overlap as f64 / cand_total.max(1) as f64, overlap as f64 / ref_total.max(1) as f64)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::metrics::bleu::sentence_bleu;
    use crate::metrics::rouge::{rouge_l, rouge_n};
    use crate::text::tokens::unicode_words;

    /// The metrics composed from the separate functions, as `plumbline score` composed
    /// them before [`PairScorer`] existed.
    fn composed(c: &str, r: &str, tokens: RougeTokens, stem: bool) -> PairMetrics {
        let tok = |s: &str| {
            let words = match tokens {
                RougeTokens::Unicode => unicode_words(s),
                RougeTokens::AsciiAlnum => ascii_alnum_words(s),
            };
            if stem { words.iter().map(|w| stem_if_long(w)).collect() } else { words }
        };
        let (cw, rw) = (tok(c), tok(r));
        PairMetrics {
            rouge1: rouge_n(&cw, &rw, 1),
            rouge2: rouge_n(&cw, &rw, 2),
            rouge_l: rouge_l(&cw, &rw),
            bleu: sentence_bleu(c, &[r]),
        }
    }

    fn texts() -> Vec<String> {
        // Words that stem together, short words, figures, punctuation, case, accents,
        // ligatures and full-width forms, curly quotes, `ß`, a Kelvin sign, CJK, an emoji;
        // and, for the stretches of non-ASCII text, characters that join what precedes
        // them (combining marks, joiners) or vanish (zero-width space, soft hyphen), so
        // that they also land right after a space, and non-ASCII spaces.
        let pieces = [
            "the",
            "a",
            "of",
            "closing",
            "closed",
            "closes",
            "close",
            "running",
            "runs",
            "was",
            "Report",
            "REPORTS",
            "reported",
            "3.5",
            "1,200",
            "2026-03-04",
            "12%",
            "$40",
            ",",
            ".",
            "(",
            ")",
            "-",
            "'",
            "`",
            "don't",
            "e.g.",
            "café",
            "Cafe\u{301}",
            "ﬁle",
            "ＡＰＩ",
            "“quoted”",
            "it’s",
            "Straße",
            "\u{212a}elvin",
            "İstel",
            "ǅ",
            "文档",
            "👍",
            "👩\u{200d}💻",
            "x_y",
            "well-known",
            "\u{301}",
            "\u{200d}",
            "\u{200b}",
            "\u{ad}",
            "\u{a0}",
            "\u{3000}",
            " ",
            " ",
            " ",
            "  ",
            "\n",
            "\r\n",
            "\t",
        ];
        let mut x: u64 = 0x0DDB_1A5E_5BAD_5EED;
        let mut next = move || {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            x
        };
        let mut out = vec![String::new(), " ".into(), "...".into()];
        for _ in 0..1_500 {
            let n = (next() % 40) as usize;
            let mut s = String::new();
            for _ in 0..n {
                s.push_str(pieces[(next() % pieces.len() as u64) as usize]);
                if next() % 3 != 0 {
                    s.push(' ');
                }
            }
            out.push(s);
        }
        out
    }

    #[test]
    fn scorer_equals_the_composed_functions_bit_for_bit() {
        let texts = texts();
        for tokens in [RougeTokens::Unicode, RougeTokens::AsciiAlnum] {
            for stem in [false, true] {
                // One scorer for all pairs, so the cache and the stamps are exercised.
                let mut scorer = PairScorer::new(tokens, stem);
                for (i, c) in texts.iter().enumerate() {
                    let r = &texts[(i * 7 + 3) % texts.len()];
                    for (c, r) in [(c, r), (c, c), (r, c)] {
                        let ours = scorer.score(c, r);
                        let want = composed(c, r, tokens, stem);
                        assert_eq!(ours, want, "{tokens:?} stem={stem} c={c:?} r={r:?}");
                    }
                }
            }
        }
    }

    #[test]
    fn bigram_counts_agree_on_both_sides_of_the_dense_limit() {
        // Candidates of DENSE_BIGRAMS distinct units and more, against references that
        // repeat their bigrams and mix in others.
        let mut scorer = PairScorer::new(RougeTokens::Unicode, false);
        for distinct in [DENSE_BIGRAMS - 1, DENSE_BIGRAMS, DENSE_BIGRAMS + 1, 3 * DENSE_BIGRAMS] {
            let words: Vec<String> = (0..distinct).map(|i| format!("w{i}")).collect();
            let c = words.join(" ");
            let r = format!("{c} x y {} {} z", words[..distinct / 2].join(" "), c);
            assert_eq!(scorer.score(&c, &r), composed(&c, &r, RougeTokens::Unicode, false));
            assert_eq!(scorer.score(&r, &c), composed(&r, &c, RougeTokens::Unicode, false));
        }
    }

    #[test]
    fn ascii_word_scan_equals_word_spans() {
        // Oracle: `word_spans` (itself tested equal to unicode-segmentation's UAX #29 word
        // boundaries on ASCII text), on random text of the characters with rules.
        let alphabet = b"ab Z09_'.:,;-\"\n\t(!x`";
        let mut x: u64 = 0x5851_F42D_4C95_7F2D;
        for _ in 0..50_000 {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            let len = (x % 24) as usize;
            let mut s = String::new();
            for _ in 0..len {
                x ^= x << 13;
                x ^= x >> 7;
                x ^= x << 17;
                s.push(alphabet[(x % alphabet.len() as u64) as usize] as char);
            }
            let mut ours = Vec::new();
            ascii_word_spans(&s, NonAlnum::new(s.as_bytes()), &mut ours);
            assert_eq!(ours, word_spans(&s), "{s:?}");
        }
    }

    #[test]
    fn cache_limit_empties_the_cache_without_changing_results() {
        let mut scorer = PairScorer::new(RougeTokens::Unicode, true);
        let texts = texts();
        let first: Vec<PairMetrics> =
            texts.windows(2).map(|w| scorer.score(&w[0], &w[1])).collect();
        // Force the limit: the next pair starts from an emptied cache...
        scorer.cached_bytes = CACHE_BYTES + 1;
        let (c, r) = ("closing closed", "Closes the report");
        let m = scorer.score(c, r);
        assert_eq!(scorer.words.len(), 5, "only this pair's words are cached");
        assert_eq!(m, composed(c, r, RougeTokens::Unicode, true));
        // ...and gives the same results as before.
        let again: Vec<PairMetrics> =
            texts.windows(2).map(|w| scorer.score(&w[0], &w[1])).collect();
        assert_eq!(first, again);
    }
}
