//! Sentence BLEU (Papineni, Roukos, Ward & Zhu 2002, "BLEU: a Method for Automatic
//! Evaluation of Machine Translation").
//!
//! BLEU is the geometric mean of the modified (clipped) n-gram precisions for n = 1..4,
//! times a brevity penalty. For a single sentence several precisions are often zero, so
//! the score needs smoothing; plumbline follows the defaults of the `sacrebleu` package's
//! `sentence_bleu` exactly, so that its numbers can be compared with published ones:
//!
//! * tokenisation `13a` (the mteval-v13a rules, [`tokenize_13a`]), case-sensitive;
//! * `exp` smoothing: the k-th n-gram order with no match gets precision `1 / (2^k · total)`;
//! * effective order: orders for which the hypothesis has no n-grams at all are left out of
//!   the mean instead of forcing the score to zero;
//! * the reference length is the one closest to the hypothesis length (ties: shorter).
//!
//! Scores are on sacrebleu's 0–100 scale.

use std::collections::HashMap;

use serde::Serialize;

use rustc_hash::FxHashMap;

use super::{NgramTable, NonAlnum, StrIds};

/// Highest n-gram order.
pub const MAX_ORDER: usize = 4;

/// The result of [`sentence_bleu`], with the statistics a reader needs to check it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Bleu {
    /// BLEU on a 0–100 scale.
    pub score: f64,
    /// Modified n-gram precisions for n = 1..4, in percent, after smoothing.
    pub precisions: [f64; MAX_ORDER],
    /// Brevity penalty.
    pub bp: f64,
    /// Hypothesis length in tokens.
    pub sys_len: usize,
    /// Effective reference length in tokens.
    pub ref_len: usize,
}

/// Python's `str.split()` whitespace: Unicode White_Space plus the four information
/// separators U+001C..U+001F, which Python also treats as spaces.
fn is_python_space(c: char) -> bool {
    c.is_whitespace() || ('\u{1c}'..='\u{1f}').contains(&c)
}

/// Class of an ASCII byte for the 13a scanner: [`SPACE`], [`SPECIAL`] (a symbol of
/// rule 1, or a full stop, comma or hyphen of rules 2-4) or 0.
static ASCII_CLASS: [u8; 128] = {
    let mut t = [0u8; 128];
    let mut b = 0;
    while b < 128 {
        let c = b as u8;
        t[b] = if matches!(c, b'\t' | b'\n' | 0x0b | 0x0c | b'\r' | 0x1c..=0x1f | b' ') {
            SPACE
        } else if is_13a_symbol(c) || c == b'.' || c == b',' || c == b'-' {
            SPECIAL
        } else {
            0
        };
        b += 1;
    }
    t
};
const SPACE: u8 = 1;
const SPECIAL: u8 = 2;

/// The characters of mteval-v13a's first rule, `[\{-~\[-` -&\(-\+:-@/]`: ASCII
/// punctuation and symbols that always become tokens of their own (apostrophe, comma,
/// hyphen, full stop, letters and digits are not among them).
const fn is_13a_symbol(b: u8) -> bool {
    matches!(b, b' '..=b'&' | b'('..=b'+' | b'/' | b':'..=b'@' | b'['..=b'`' | b'{'..=b'~')
}

/// Tokenises a line with the `13a` rules (mteval-v13a, as sacrebleu implements them),
/// after removing trailing white space as sacrebleu does to every segment first (so a
/// final `-\n` is kept as a hyphen, not joined away).
pub fn tokenize_13a(line: &str) -> Vec<String> {
    let mut tokens = Tokens13a::default();
    tokens.tokenize(line);
    tokens.iter().map(str::to_owned).collect()
}

/// The tokens of one line under the `13a` rules, in one reusable buffer.
///
/// sacrebleu applies the rules as four regular-expression substitutions over the whole
/// line, then splits at white space:
///
/// 1. `([\{-~\[-` -&\(-\+:-@/])` → ` $1 ` (symbols stand alone);
/// 2. `([^0-9])([\.,])` → `$1 $2 ` (full stop or comma after a non-digit);
/// 3. `([\.,])([^0-9])` → ` $1 $2` (full stop or comma before a non-digit);
/// 4. `([0-9])(-)` → `$1 $2 ` (hyphen after a digit).
///
/// Each pattern is one or two characters long and matches white space only as a
/// non-digit, so the substitutions never join or split across white space: every
/// white-space-separated chunk of the line can be tokenised on its own, with one space of
/// context on either side. Within a chunk, rule 1 cuts at the symbols, which then stand
/// alone between spaces and take part in no other match; the pieces between them are
/// again independent. Where no two full stops or commas touch, rules 2-4 then reduce to
/// one test per character with its two neighbours (see `Tokens13a::scan`), so
/// [`Tokens13a::tokenize`] only visits the bytes that are not ASCII letters or digits;
/// a chunk with touching stops is tokenised again by running the three substitutions
/// literally (leftmost, non-overlapping, as the regex engine does). It is tested equal to
/// the four substitutions on random lines and equal to sacrebleu on the committed
/// reference vectors.
#[derive(Debug, Default, Clone)]
pub struct Tokens13a {
    /// The line after sacrebleu's preprocessing. The rules only insert spaces, so every
    /// token is a stretch of it.
    text: String,
    /// Byte range of each token in `text`.
    spans: Vec<(usize, usize)>,
    /// Scratch space of the literal substitutions: characters with their byte offset in
    /// `text`, [`INSERTED`] for the spaces the rules put in.
    chars: Vec<(char, usize)>,
    swap: Vec<(char, usize)>,
}

/// Offset of a space that a rule inserted.
const INSERTED: usize = usize::MAX;

impl Tokens13a {
    /// Replaces the tokens with those of `line`.
    pub fn tokenize(&mut self, line: &str) {
        self.tokenize_with(line, None);
    }

    /// [`Tokens13a::tokenize`], given the positions of `line`'s bytes that are not ASCII
    /// letters or digits (from [`NonAlnum`], with its final `line.len()`) if the caller
    /// has them already.
    pub(crate) fn tokenize_with(&mut self, line: &str, events: Option<&[u32]>) {
        self.text.clear();
        self.spans.clear();
        let line = line.trim_end_matches(is_python_space);
        // sacrebleu's preprocessing, in its order; each step is skipped only when it
        // would change nothing.
        let mut owned: Option<String> = None;
        let rare = memchr::memchr3(b'<', b'\n', b'&', line.as_bytes()).is_some();
        if rare && line.contains("<skipped>") {
            owned = Some(line.replace("<skipped>", ""));
        }
        if rare && owned.as_deref().unwrap_or(line).contains('\n') {
            let s = owned.as_deref().unwrap_or(line);
            owned = Some(s.replace("-\n", "").replace('\n', " "));
        }
        if rare && owned.as_deref().unwrap_or(line).contains('&') {
            let s = owned.as_deref().unwrap_or(line);
            owned = Some(
                s.replace("&quot;", "\"")
                    .replace("&amp;", "&")
                    .replace("&lt;", "<")
                    .replace("&gt;", ">"),
            );
        }
        let mut text = std::mem::take(&mut self.text);
        text.push_str(owned.as_deref().unwrap_or(line));
        // Chunks between white space, cut into tokens at the characters the rules set
        // apart. Only the bytes that are not ASCII letters or digits need a look: where no
        // two full stops or commas ("stops") touch, the rules reduce to one test per such
        // character with its two neighbours — a symbol of rule 1 stands alone; a stop
        // stands alone unless it has a digit on both sides (rule 2 parts it when the left
        // one is not a digit, rule 3 when the right one is not); a hyphen stands alone
        // after a digit (rule 4). White space and the ends of the line are not digits.
        // Touching stops make rule 2's matches depend on one another, so such a chunk is
        // tokenised again the literal way.
        // The given positions fit the text unless sacrebleu's preprocessing changed it;
        // trailing white space was cut, so only those before the new end, and the end.
        let end = text.len();
        match events.filter(|_| owned.is_none()) {
            Some(events) => {
                let before_end = events.iter().map(|&p| p as usize).take_while(|&p| p < end);
                self.scan(&text, before_end.chain(std::iter::once(end)));
            }
            None => self.scan(&text, NonAlnum::new(text.as_bytes())),
        }
        // Zeros after the text, so that every token's key is one 16-byte load.
        text.push_str("\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0");
        self.text = text;
    }

    /// Cuts `text` into tokens, visiting the positions `events` of its bytes that are not
    /// ASCII letters or digits, in order, and then its length.
    fn scan(&mut self, text: &str, events: impl Iterator<Item = usize>) {
        let b = text.as_bytes();
        let digit = |i: Option<usize>| i.and_then(|i| b.get(i)).is_some_and(u8::is_ascii_digit);
        let mut chunk_start = 0;
        let mut token_start = 0;
        let mut chunk_first_span = self.spans.len();
        let mut last_stop = None;
        let mut literal = false;
        let mut skip_to = 0;
        for p in events {
            let me = &mut *self;
            if p < skip_to {
                continue; // inside a non-ASCII character already seen
            }
            let c = b.get(p).copied().unwrap_or(b' ');
            let space_len = match c {
                0x80.. if c >= 0xC0 => {
                    let ch = text[p..].chars().next().unwrap_or('a');
                    skip_to = p + ch.len_utf8();
                    if is_python_space(ch) { ch.len_utf8() } else { 0 }
                }
                0x80.. => 0,
                _ if ASCII_CLASS[c as usize] == SPACE => 1,
                _ => {
                    let alone = match c {
                        b'.' | b',' => {
                            literal |= last_stop == p.checked_sub(1);
                            last_stop = Some(p);
                            !(digit(p.checked_sub(1)) && digit(Some(p + 1)))
                        }
                        b'-' => digit(p.checked_sub(1)),
                        _ => is_13a_symbol(c),
                    };
                    if alone {
                        if token_start < p {
                            me.push(token_start, p);
                        }
                        me.push(p, p + 1);
                        token_start = p + 1;
                    }
                    0
                }
            };
            if space_len > 0 || p == b.len() {
                if literal {
                    me.spans.truncate(chunk_first_span);
                    me.by_pieces(text, chunk_start, p);
                } else if token_start < p {
                    me.push(token_start, p);
                }
                chunk_start = p + space_len;
                token_start = chunk_start;
                chunk_first_span = me.spans.len();
                literal = false;
            }
        }
    }

    /// The tokens in order, each with its [`StrIds::key`].
    fn keyed(&self) -> impl Iterator<Item = (&str, Option<u128>)> + '_ {
        let padded = self.text.as_bytes();
        self.spans
            .iter()
            .map(move |&(s, e)| (&self.text[s..e], StrIds::key_in_padded(padded, s, e - s)))
    }

    /// Number of tokens.
    pub fn len(&self) -> usize {
        self.spans.len()
    }

    /// True when there are no tokens.
    pub fn is_empty(&self) -> bool {
        self.spans.is_empty()
    }

    /// The tokens in order.
    pub fn iter(&self) -> impl Iterator<Item = &str> + '_ {
        self.spans.iter().map(|&(s, e)| &self.text[s..e])
    }

    fn push(&mut self, start: usize, end: usize) {
        self.spans.push((start, end));
    }

    /// A chunk `text[start..end]` tokenised the literal way: rule 1's symbols are tokens and
    /// cut the chunk into independent pieces.
    fn by_pieces(&mut self, text: &str, start: usize, end: usize) {
        let mut from = start;
        for (i, &b) in text.as_bytes()[start..end].iter().enumerate() {
            if is_13a_symbol(b) {
                self.piece(text, from, start + i);
                self.push(start + i, start + i + 1);
                from = start + i + 1;
            }
        }
        self.piece(text, from, end);
    }

    /// A piece `text[start..end]` of a chunk between symbols (or its ends), with white
    /// space on both sides.
    fn piece(&mut self, text: &str, start: usize, end: usize) {
        let b = &text.as_bytes()[start..end];
        let Some(&last) = b.last() else { return };
        let body = &b[..b.len() - 1];
        if !body.iter().any(|&c| matches!(c, b'.' | b',' | b'-')) {
            if !matches!(last, b'.' | b',' | b'-') {
                // Rules 2-4 need a full stop, comma or hyphen.
                self.push(start, end);
                return;
            }
            if last != b'-' && !body.is_empty() && !body[body.len() - 1].is_ascii_digit() {
                // `word.`: rule 2 parts the stop from the word, rule 3 from the space.
                self.push(start, end - 1);
                self.push(end - 1, end);
                return;
            }
        }
        self.literal(text, start, end);
    }

    /// Rules 2-4 applied literally to ` piece `, then split at the spaces.
    fn literal(&mut self, text: &str, start: usize, end: usize) {
        let mut a = std::mem::take(&mut self.chars);
        let mut b = std::mem::take(&mut self.swap);
        a.clear();
        a.push((' ', INSERTED));
        a.extend(text[start..end].char_indices().map(|(i, c)| (c, start + i)));
        a.push((' ', INSERTED));
        let stop = |c: char| c == '.' || c == ',';
        let digit = |c: char| c.is_ascii_digit();
        let space = (' ', INSERTED);
        substitute(
            &a,
            &mut b,
            |x, y| !digit(x) && stop(y),
            |x, y, out| {
                out.extend([x, space, y, space]);
            },
        );
        substitute(
            &b,
            &mut a,
            |x, y| stop(x) && !digit(y),
            |x, y, out| {
                out.extend([space, x, space, y]);
            },
        );
        substitute(
            &a,
            &mut b,
            |x, y| digit(x) && y == '-',
            |x, y, out| {
                out.extend([x, space, y, space]);
            },
        );
        // Tokens are the runs between inserted spaces; a run keeps the order and
        // adjacency of the piece's characters, so it is one stretch of `text`.
        let mut token: Option<(usize, usize)> = None;
        for &(c, at) in &b {
            if at == INSERTED {
                if let Some((s, e)) = token.take() {
                    self.push(s, e);
                }
            } else {
                let next = at + c.len_utf8();
                token = Some(token.map_or((at, next), |(s, _)| (s, next)));
            }
        }
        if let Some((s, e)) = token {
            self.push(s, e);
        }
        self.chars = a;
        self.swap = b;
    }
}

/// One substitution of a two-character pattern, as a regex engine's `replace_all` does
/// it: scanning from the left, each match replaced and skipped over whole.
fn substitute(
    src: &[(char, usize)],
    dst: &mut Vec<(char, usize)>,
    matches: impl Fn(char, char) -> bool,
    replace: impl Fn((char, usize), (char, usize), &mut Vec<(char, usize)>),
) {
    dst.clear();
    let mut i = 0;
    while i < src.len() {
        if i + 1 < src.len() && matches(src[i].0, src[i + 1].0) {
            replace(src[i], src[i + 1], dst);
            i += 2;
        } else {
            dst.push(src[i]);
            i += 1;
        }
    }
}

/// Modified n-gram precision of Papineni et al. 2002 §2.1: each candidate n-gram counts at
/// most as often as it occurs in any single reference. Returns `(clipped matches, total
/// candidate n-grams)`.
pub fn modified_precision<S: AsRef<str>>(
    candidate: &[S],
    references: &[Vec<S>],
    n: usize,
) -> (usize, usize) {
    let cand: Vec<&str> = candidate.iter().map(AsRef::as_ref).collect();
    let mut max_ref: HashMap<&[&str], usize> = HashMap::new();
    let refs: Vec<Vec<&str>> =
        references.iter().map(|r| r.iter().map(AsRef::as_ref).collect()).collect();
    for r in &refs {
        for (gram, c) in counts(r, n) {
            let e = max_ref.entry(gram).or_insert(0);
            *e = (*e).max(c);
        }
    }
    let mut matched = 0;
    let mut total = 0;
    for (gram, c) in counts(&cand, n) {
        total += c;
        matched += c.min(max_ref.get(gram).copied().unwrap_or(0));
    }
    (matched, total)
}

fn counts<'a, 'b>(tokens: &'a [&'b str], n: usize) -> HashMap<&'a [&'b str], usize> {
    let mut m = HashMap::new();
    if n > 0 && tokens.len() >= n {
        for g in tokens.windows(n) {
            *m.entry(g).or_insert(0) += 1;
        }
    }
    m
}

/// The clipped n-gram counts of BLEU for one hypothesis, computed over small integer ids:
/// the hypothesis's distinct tokens are `0..k`, and a reference token absent from the
/// hypothesis is [`ABSENT`]. Only the hypothesis's n-grams are counted in a table; a
/// reference n-gram is looked up only when both (n−1)-grams inside it were found, since
/// an n-gram of the hypothesis contains two (n−1)-grams of the hypothesis, so most are
/// never looked up. Equal to [`modified_precision`] for every order (tested).
#[derive(Debug, Default, Clone)]
pub struct NgramCounter {
    /// Hypothesis n-gram, n ≥ 2 (ids + 1 packed 32 bits apiece, so that orders differ and
    /// no key is 0) → slot. Unigrams use their id as slot.
    slots: NgramTable,
    /// First slot of each order; the last entry ends the slots.
    first_slot: [usize; MAX_ORDER + 1],
    hyp_counts: Vec<u32>,
    ref_counts: Vec<u32>,
    max_ref: Vec<u32>,
    /// End positions in the reference of the (n−1)-grams that are the hypothesis's.
    found: Vec<usize>,
    found_next: Vec<usize>,
    /// For [`NgramCounter::count`]: token → id, and the ids of the texts.
    ids: FxHashMap<String, u32>,
    hyp_ids: Vec<u32>,
    ref_ids: Vec<Vec<u32>>,
}

/// Id of a reference token that the hypothesis does not hold.
pub const ABSENT: u32 = u32::MAX;

/// The table key of an n-gram of ids, n ≥ 2.
fn ngram_key(gram: &[u32]) -> u128 {
    gram.iter().fold(0u128, |k, &id| (k << 32) | u128::from(id + 1))
}

impl NgramCounter {
    /// `(clipped matches, total hypothesis n-grams)` for n = 1..=4 of the tokens `hyp`
    /// against every reference in `refs` (a hypothesis n-gram counts at most as often as
    /// in the reference that holds it most).
    pub fn count<'a, R>(
        &mut self,
        hyp: impl IntoIterator<Item = &'a str>,
        refs: impl IntoIterator<Item = R>,
    ) -> ([usize; MAX_ORDER], [usize; MAX_ORDER])
    where
        R: IntoIterator<Item = &'a str>,
    {
        let mut ids = std::mem::take(&mut self.ids);
        let mut hyp_ids = std::mem::take(&mut self.hyp_ids);
        let mut ref_ids = std::mem::take(&mut self.ref_ids);
        ids.clear();
        hyp_ids.clear();
        for t in hyp {
            let next = ids.len() as u32;
            hyp_ids.push(*ids.entry(t.to_owned()).or_insert(next));
        }
        let mut n_refs = 0;
        for r in refs {
            if ref_ids.len() == n_refs {
                ref_ids.push(Vec::new());
            }
            ref_ids[n_refs].clear();
            ref_ids[n_refs].extend(r.into_iter().map(|t| ids.get(t).copied().unwrap_or(ABSENT)));
            n_refs += 1;
        }
        let refs: Vec<&[u32]> = ref_ids[..n_refs].iter().map(Vec::as_slice).collect();
        let counts = self.count_ids(&hyp_ids, ids.len(), &refs);
        self.ids = ids;
        self.hyp_ids = hyp_ids;
        self.ref_ids = ref_ids;
        counts
    }

    /// [`NgramCounter::count`] over ids: `hyp` holds ids below `k`, each reference ids
    /// below `k` or [`ABSENT`].
    pub fn count_ids(
        &mut self,
        hyp: &[u32],
        k: usize,
        refs: &[&[u32]],
    ) -> ([usize; MAX_ORDER], [usize; MAX_ORDER]) {
        self.hypothesis_slots(hyp, k);
        self.max_ref.clear();
        self.max_ref.resize(self.hyp_counts.len(), 0);
        for r in refs {
            self.reference(r);
        }
        let mut correct = [0; MAX_ORDER];
        let mut total = [0; MAX_ORDER];
        for n in 1..=MAX_ORDER {
            let slots = self.first_slot[n - 1]..self.first_slot[n];
            correct[n - 1] = self.hyp_counts[slots.clone()]
                .iter()
                .zip(&self.max_ref[slots])
                .map(|(&h, &r)| h.min(r) as usize)
                .sum();
            total[n - 1] = hyp.len().saturating_sub(n - 1);
        }
        (correct, total)
    }

    /// Counts the hypothesis's n-grams into slots, order by order.
    fn hypothesis_slots(&mut self, hyp: &[u32], k: usize) {
        self.slots.reset(hyp.len() * (MAX_ORDER - 1));
        self.hyp_counts.clear();
        self.hyp_counts.resize(k, 0);
        for &id in hyp {
            self.hyp_counts[id as usize] += 1;
        }
        self.first_slot[0] = 0;
        self.first_slot[1] = k;
        for n in 2..=MAX_ORDER {
            for gram in hyp.windows(n) {
                let next = self.hyp_counts.len() as u32;
                let slot = self.slots.get_or_insert(ngram_key(gram), next);
                if slot == next {
                    self.hyp_counts.push(0);
                }
                self.hyp_counts[slot as usize] += 1;
            }
            self.first_slot[n] = self.hyp_counts.len();
        }
    }

    /// Counts one reference's n-grams that are the hypothesis's, and raises the maxima.
    fn reference(&mut self, r: &[u32]) {
        // Unigram slots are the ids; one slot more, after all the others, counts the
        // absent tokens, so that the loop needs no branch.
        let absent_slot = self.hyp_counts.len();
        self.ref_counts.clear();
        self.ref_counts.resize(absent_slot + 1, 0);
        // End positions of the unigrams found: written at every position, kept where
        // the token is present.
        self.found.clear();
        self.found.resize(r.len(), 0);
        let mut found = 0;
        for (end, &id) in r.iter().enumerate() {
            let present = id != ABSENT;
            self.ref_counts[if present { id as usize } else { absent_slot }] += 1;
            self.found[found] = end;
            found += usize::from(present);
        }
        self.found.truncate(found);
        for n in 2..=MAX_ORDER {
            self.found_next.clear();
            // The n-gram ending at `end` holds the (n−1)-grams ending at `end − 1` and at
            // `end`: two found ends in a row.
            for pair in self.found.windows(2) {
                let end = pair[1];
                if pair[0] + 1 == end {
                    if let Some(slot) = self.slots.get(ngram_key(&r[end + 1 - n..=end])) {
                        self.ref_counts[slot as usize] += 1;
                        self.found_next.push(end);
                    }
                }
            }
            std::mem::swap(&mut self.found, &mut self.found_next);
        }
        for (m, &c) in self.max_ref.iter_mut().zip(&self.ref_counts) {
            *m = (*m).max(c);
        }
    }
}

/// Sentence BLEU of `hypothesis` against one or more `references`, as sacrebleu 2.x's
/// `sentence_bleu(hypothesis, references)` computes it with its defaults.
pub fn sentence_bleu(hypothesis: &str, references: &[&str]) -> Bleu {
    let mut hyp = Tokens13a::default();
    hyp.tokenize(hypothesis);
    let refs: Vec<Tokens13a> = references
        .iter()
        .map(|r| {
            let mut t = Tokens13a::default();
            t.tokenize(r);
            t
        })
        .collect();
    let (correct, total) = NgramCounter::default().count(hyp.iter(), refs.iter().map(|r| r.iter()));
    compute(correct, total, hyp.len(), closest_ref_len(hyp.len(), refs.iter().map(|r| r.len())))
}

/// [`sentence_bleu`] against a single reference, keeping its buffers from one pair to the
/// next: for scoring many pairs. The hypothesis's distinct tokens get ids in a
/// direct-mapped table sized for it, where each reference token is looked up.
#[derive(Debug, Default, Clone)]
pub struct SentenceBleu {
    hyp: Tokens13a,
    reference: Tokens13a,
    ids: HypothesisIds,
    hyp_ids: Vec<u32>,
    ref_ids: Vec<u32>,
    counter: NgramCounter,
}

impl SentenceBleu {
    /// Equal to `sentence_bleu(hypothesis, &[reference])`.
    pub fn score(&mut self, hypothesis: &str, reference: &str) -> Bleu {
        self.score_with(hypothesis, reference, None)
    }

    /// [`SentenceBleu::score`], given the reference's [`NonAlnum`] positions if the
    /// caller has them already.
    pub(crate) fn score_with(
        &mut self,
        hypothesis: &str,
        reference: &str,
        reference_events: Option<&[u32]>,
    ) -> Bleu {
        self.hyp.tokenize(hypothesis);
        self.reference.tokenize_with(reference, reference_events);
        self.ids.reset(self.hyp.len());
        self.hyp_ids.clear();
        for (t, key) in self.hyp.keyed() {
            self.hyp_ids.push(self.ids.get_or_insert(t, key));
        }
        self.ref_ids.clear();
        let ids = &self.ids;
        let reference = &self.reference;
        let padded = reference.text.as_bytes();
        self.ref_ids.extend(reference.spans.iter().map(|&(s, e)| {
            let found = match StrIds::key_in_padded(padded, s, e - s).filter(|&k| k != 0) {
                Some(key) => ids.get_short(key),
                None => ids.long.get(&reference.text[s..e]),
            };
            found.unwrap_or(ABSENT)
        }));
        let k = self.ids.len as usize;
        let (correct, total) = self.counter.count_ids(&self.hyp_ids, k, &[&self.ref_ids]);
        compute(correct, total, self.hyp.len(), self.reference.len())
    }
}

/// Ids of the hypothesis's distinct tokens, 0, 1, … in order of first occurrence.
///
/// Every reference token is looked up here, and about two in three are not there, so the
/// lookup is built to need no branch the processor could mispredict: tokens of up to 15
/// bytes sit by their [`StrIds::key`] in a direct-mapped table with at least eight slots
/// per token, and a lookup is one load and a comparison. A token whose slot another took
/// first (rare, so the processor predicts the test) goes to `spilled`, and its slot is
/// marked so that lookups there ask `spilled`; longer tokens go to `long`.
#[derive(Debug, Default, Clone)]
struct HypothesisIds {
    keys: Vec<u128>,
    values: Vec<u32>,
    /// Per slot: another token wanted it.
    crowded: Vec<bool>,
    used: Vec<usize>,
    shift: u32,
    spilled: rustc_hash::FxHashMap<u128, u32>,
    long: StrIds,
    len: u32,
}

impl HypothesisIds {
    fn reset(&mut self, tokens: usize) {
        // Kept between pairs up to a size, so that texts of varying length do not make it
        // reallocate.
        let cap = super::kept_capacity((8 * tokens).next_power_of_two().max(64), self.keys.len());
        if cap == self.keys.len() {
            for &i in &self.used {
                self.keys[i] = 0;
                self.crowded[i] = false;
            }
        } else {
            self.keys.clear();
            self.keys.resize(cap, 0);
            self.values.resize(cap, 0);
            self.crowded.clear();
            self.crowded.resize(cap, false);
        }
        self.used.clear();
        self.shift = 64 - cap.trailing_zeros();
        self.spilled.clear();
        self.long.clear();
        self.len = 0;
    }

    fn slot(&self, key: u128) -> usize {
        let mixed = (key as u64 ^ (key >> 64) as u64).wrapping_mul(0x9E37_79B9_7F4A_7C15);
        (mixed >> self.shift) as usize
    }

    /// The id of `t`, whose key is `key`, given on first sight.
    fn get_or_insert(&mut self, t: &str, key: Option<u128>) -> u32 {
        if let Some(id) = self.get(t, key) {
            return id;
        }
        let id = self.len;
        self.len += 1;
        match key.filter(|&k| k != 0) {
            None => self.long.insert(t, id),
            Some(key) => {
                let i = self.slot(key);
                if self.keys[i] == 0 && !self.crowded[i] {
                    self.keys[i] = key;
                    self.values[i] = id;
                } else {
                    self.crowded[i] = true;
                    self.spilled.insert(key, id);
                }
                self.used.push(i);
            }
        }
        id
    }

    fn get(&self, t: &str, key: Option<u128>) -> Option<u32> {
        match key.filter(|&k| k != 0) {
            Some(key) => self.get_short(key),
            None => self.long.get(t),
        }
    }

    /// [`Self::get`] of a token of 1 to 15 bytes, by its key.
    #[inline]
    fn get_short(&self, key: u128) -> Option<u32> {
        let i = self.slot(key);
        if self.crowded[i] {
            if self.keys[i] == key {
                return Some(self.values[i]);
            }
            return self.spilled.get(&key).copied();
        }
        let value = self.values[i];
        if self.keys[i] == key { Some(value) } else { None }
    }
}

/// [`sentence_bleu`] on already tokenised text.
pub fn bleu_from_tokens<S: AsRef<str>>(hyp: &[S], refs: &[Vec<S>]) -> Bleu {
    let (correct, total) = NgramCounter::default()
        .count(hyp.iter().map(AsRef::as_ref), refs.iter().map(|r| r.iter().map(AsRef::as_ref)));
    compute(correct, total, hyp.len(), closest_ref_len(hyp.len(), refs.iter().map(Vec::len)))
}

/// The reference length closest to the hypothesis length; on a tie the shorter
/// (sacrebleu `_get_closest_ref_len`); 0 without references.
fn closest_ref_len(sys_len: usize, ref_lens: impl IntoIterator<Item = usize>) -> usize {
    let mut ref_len = 0usize;
    let mut best_diff = usize::MAX;
    for len in ref_lens {
        let diff = len.abs_diff(sys_len);
        if diff < best_diff || (diff == best_diff && len < ref_len) {
            best_diff = diff;
            ref_len = len;
        }
    }
    ref_len
}

/// sacrebleu's `BLEU.compute_bleu` with `smooth_method = "exp"` and `effective_order`.
fn compute(
    correct: [usize; MAX_ORDER],
    total: [usize; MAX_ORDER],
    sys_len: usize,
    ref_len: usize,
) -> Bleu {
    let bp = if sys_len < ref_len {
        if sys_len > 0 { (1.0 - ref_len as f64 / sys_len as f64).exp() } else { 0.0 }
    } else {
        1.0
    };
    let mut precisions = [0.0; MAX_ORDER];
    if correct.iter().all(|&c| c == 0) {
        return Bleu { score: 0.0, precisions, bp, sys_len, ref_len };
    }
    let mut smooth_mteval = 1.0f64;
    let mut eff_order = MAX_ORDER;
    for n in 1..=MAX_ORDER {
        if total[n - 1] == 0 {
            break;
        }
        eff_order = n;
        precisions[n - 1] = if correct[n - 1] == 0 {
            smooth_mteval *= 2.0;
            100.0 / (smooth_mteval * total[n - 1] as f64)
        } else {
            100.0 * correct[n - 1] as f64 / total[n - 1] as f64
        };
    }
    // sacrebleu's `my_log` maps 0 to -9999999999 rather than -inf.
    let log_sum: f64 = precisions[..eff_order]
        .iter()
        .map(|&p| if p == 0.0 { -9_999_999_999.0 } else { p.ln() })
        .sum();
    let score = bp * (log_sum / eff_order as f64).exp();
    Bleu { score, precisions, bp, sys_len, ref_len }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The 13a rules exactly as sacrebleu's `TokenizerRegexp` writes them, applied as four
    /// regular-expression substitutions: the reference [`Tokens13a`] is tested against.
    fn tokenize_13a_regex(line: &str) -> Vec<String> {
        use regex::Regex;
        static RULES: std::sync::LazyLock<[(Regex, &str); 4]> = std::sync::LazyLock::new(|| {
            [
                (Regex::new(r"([\{-~\[-` -&\(-\+:-@/])").unwrap(), " $1 "),
                (Regex::new(r"([^0-9])([\.,])").unwrap(), "$1 $2 "),
                (Regex::new(r"([\.,])([^0-9])").unwrap(), " $1 $2"),
                (Regex::new(r"([0-9])(-)").unwrap(), "$1 $2 "),
            ]
        });
        let line = line.trim_end_matches(is_python_space);
        let mut s = line.replace("<skipped>", "").replace("-\n", "").replace('\n', " ");
        s = s
            .replace("&quot;", "\"")
            .replace("&amp;", "&")
            .replace("&lt;", "<")
            .replace("&gt;", ">");
        let mut s = format!(" {s} ");
        for (re, rep) in RULES.iter() {
            s = re.replace_all(&s, *rep).into_owned();
        }
        s.split(is_python_space).filter(|t| !t.is_empty()).map(str::to_owned).collect()
    }

    /// xorshift64, so the tests need no crate.
    fn rng(seed: u64) -> impl FnMut() -> u64 {
        let mut x = seed;
        move || {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            x
        }
    }

    #[test]
    fn tokens_equal_the_four_substitutions_on_random_lines() {
        // Pieces chosen to meet every rule and its edges: digits beside stops, commas and
        // hyphens, runs of stops, symbols of rule 1, Python-only and Unicode white space,
        // entities, `<skipped>`, `-\n`, and non-ASCII letters and punctuation.
        let pieces = [
            "a",
            "Zq",
            "7",
            "0",
            "19",
            ".",
            ",",
            "-",
            "'",
            "..",
            ".,",
            "-.",
            "(",
            ")",
            "$",
            "%",
            "&",
            "/",
            ":",
            ";",
            "\"",
            "?",
            "!",
            "@",
            "[",
            "`",
            "{",
            "~",
            "_",
            "|",
            " ",
            "  ",
            "\t",
            "\n",
            "\r\n",
            "\u{1c}",
            "\u{1f}",
            "\u{a0}",
            "\u{2003}",
            "\u{85}",
            "é",
            "—",
            "’",
            "ß",
            "日本",
            "&amp;",
            "&lt;",
            "&quot;",
            "&gt;",
            "&amp;lt;",
            "<skipped>",
            "-\n",
            "word",
            "e.g.",
            "3.5",
            "1,000",
            "2026-03-04",
            "U.S.",
            "x-ray",
        ];
        let mut next = rng(0x1357_9BDF_2468_ACE0);
        for _ in 0..60_000 {
            let n = (next() % 14) as usize;
            let line: String =
                (0..n).map(|_| pieces[(next() % pieces.len() as u64) as usize]).collect();
            assert_eq!(tokenize_13a(&line), tokenize_13a_regex(&line), "{line:?}");
        }
    }

    #[test]
    fn ngram_counter_equals_modified_precision() {
        let mut next = rng(0x2468_1357_ACE0_BDF9);
        let mut counter = NgramCounter::default();
        for round in 0..3_000 {
            let alphabet = 1 + round % 6;
            let mut sentence = |max: u64| -> Vec<String> {
                let n = (next() % max) as usize;
                // Even symbols short, odd ones longer than 15 bytes (the two kinds of key).
                (0..n)
                    .map(|_| match next() % alphabet as u64 {
                        k if k % 2 == 0 => format!("w{k}"),
                        k => format!("a-token-longer-than-fifteen-bytes-{k}"),
                    })
                    .collect()
            };
            let hyp = sentence(30);
            let refs: Vec<Vec<String>> = (0..1 + round % 3).map(|_| sentence(40)).collect();
            let (correct, total) = counter.count(
                hyp.iter().map(String::as_str),
                refs.iter().map(|r| r.iter().map(String::as_str)),
            );
            for n in 1..=MAX_ORDER {
                let want = modified_precision(&hyp, &refs, n);
                assert_eq!((correct[n - 1], total[n - 1]), want, "n={n} {hyp:?} {refs:?}");
            }
        }
    }

    #[test]
    fn hypothesis_ids_keep_every_token_through_crowded_slots() {
        // Enough tokens that many slots are wanted twice; long ones too.
        let mut ids = HypothesisIds::default();
        for n in [1usize, 30, 3_000] {
            ids.reset(n);
            let tokens: Vec<String> =
                (0..n)
                    .map(|i| {
                        if i % 7 == 0 {
                            format!("long-token-number-{i:06}")
                        } else {
                            format!("t{i}")
                        }
                    })
                    .collect();
            let key = |t: &str| StrIds::key(t);
            for (i, t) in tokens.iter().enumerate() {
                assert_eq!(ids.get(t, key(t)), None, "{t}");
                assert_eq!(ids.get_or_insert(t, key(t)), i as u32);
                assert_eq!(ids.get_or_insert(t, key(t)), i as u32);
            }
            for (i, t) in tokens.iter().enumerate() {
                assert_eq!(ids.get(t, key(t)), Some(i as u32), "{t}");
            }
            for absent in ["", "x", "t-1", "long-token-number-999999"] {
                assert_eq!(ids.get(absent, key(absent)), None, "{absent}");
            }
            assert!(n < 3_000 || ids.crowded.iter().any(|&c| c), "no slot was crowded");
        }
    }

    #[test]
    fn reused_scorer_equals_sentence_bleu() {
        let mut scorer = SentenceBleu::default();
        for (h, r) in [
            ("The cat sat on the mat.", "The cat is on the mat."),
            ("", "a b"),
            ("x y z", ""),
            ("It costs $3.50, ok?", "It costs $3.50 - ok?"),
        ] {
            assert_eq!(scorer.score(h, r), sentence_bleu(h, &[r]), "{h:?} {r:?}");
        }
        // Random lines from few words, long ones among them, so that n-grams repeat; twice
        // over, so that the buffers are reused.
        let words = [
            "the",
            "cat",
            "sat",
            "on",
            "mat",
            ".",
            ",",
            "The",
            "Mat",
            "x-1",
            "an-unusually-long-token-of-more-than-sixteen-bytes",
            "3.5",
            "(",
            ")",
        ];
        let mut next = rng(0xABCD_EF01_2345_6789);
        let mut line = |max: u64| -> String {
            let n = next() % max;
            (0..n)
                .map(|_| words[(next() % words.len() as u64) as usize])
                .collect::<Vec<_>>()
                .join(" ")
        };
        let pairs: Vec<(String, String)> = (0..400).map(|_| (line(20), line(60))).collect();
        for round in 0..2 {
            for (h, r) in &pairs {
                assert_eq!(
                    scorer.score(h, r),
                    sentence_bleu(h, &[r]),
                    "round {round}: {h:?} {r:?}"
                );
            }
        }
    }

    #[test]
    fn papineni_2002_modified_unigram_precision() {
        // Source: Papineni et al. 2002, §2.1, Example 2: candidate "the the the the the
        // the the" against "The cat is on the mat" / "There is a cat on the mat" has
        // modified unigram precision 2/7 (compared case-insensitively in the paper).
        let cand = vec!["the"; 7];
        let r1: Vec<&str> = "the cat is on the mat".split(' ').collect();
        let r2: Vec<&str> = "there is a cat on the mat".split(' ').collect();
        assert_eq!(modified_precision(&cand, &[r1, r2], 1), (2, 7));
    }

    #[test]
    fn tokenize_13a_splits_punctuation_but_not_decimals() {
        assert_eq!(
            tokenize_13a("It costs $3.50, ok?"),
            ["It", "costs", "$", "3.50", ",", "ok", "?"]
        );
        assert_eq!(tokenize_13a("a-b 1-2"), ["a-b", "1", "-", "2"]);
        assert_eq!(tokenize_13a("&amp;&lt;"), ["&", "<"]);
    }

    #[test]
    fn identical_sentences_score_100() {
        let b = sentence_bleu("the cat sat on the mat", &["the cat sat on the mat"]);
        assert!((b.score - 100.0).abs() < 1e-9);
        assert_eq!(b.bp, 1.0);
    }

    #[test]
    fn no_match_scores_zero_and_empty_hypothesis_has_zero_bp() {
        assert_eq!(sentence_bleu("x y z", &["a b c"]).score, 0.0);
        let e = sentence_bleu("", &["a b"]);
        assert_eq!((e.score, e.bp, e.sys_len, e.ref_len), (0.0, 0.0, 0, 2));
    }
}
