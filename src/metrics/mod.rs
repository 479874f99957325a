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

/// The positions of the bytes of `b` that are not ASCII letters or digits, in order, and
/// then `b.len()` (so that a scanner sees the end of the text).
///
/// The tokenisers of [`pair`] and [`bleu`] only have decisions to make at such bytes
/// (white space, punctuation, the bytes of non-ASCII characters); the letters and digits
/// between them, most of a text, are skipped 32 at a time. For each eight bytes: with the
/// top bit of each byte cleared, adding `0x80 − k` to every byte sets its top bit exactly
/// when the byte is at least `k`, without carries between bytes, which gives the range
/// tests for `0-9` and, with bit 5 set, `a-z`; a multiplication then gathers the eight top
/// bits into one byte of a 32-bit mask. Large blocks mean fewer hard-to-predict loop exits.
/// Tested equal to the byte-by-byte loop.
pub(crate) struct NonAlnum<'a> {
    b: &'a [u8],
    /// Start of the 32 bytes `mask` describes.
    block: usize,
    /// Bit k set for each position `block + k` still to give.
    mask: u32,
    /// Start of the next 32 bytes to read.
    next: usize,
    done: bool,
}

impl<'a> NonAlnum<'a> {
    pub(crate) fn new(b: &'a [u8]) -> NonAlnum<'a> {
        NonAlnum { b, block: 0, mask: 0, next: 0, done: false }
    }

    /// Bit k set for each byte k of `chunk` (8 bytes) that is not an ASCII letter or digit.
    #[inline(always)]
    fn mask8(chunk: &[u8]) -> u32 {
        const ONES: u64 = 0x0101_0101_0101_0101;
        const TOP: u64 = 0x8080_8080_8080_8080;
        let at_least = |v: u64, k: u64| (v + (0x80 - k) * ONES) & TOP;
        let x = u64::from_le_bytes(chunk.try_into().unwrap_or([0; 8]));
        let ascii = !x & TOP;
        let low = x & !TOP;
        let folded = (x | (0x20 * ONES)) & !TOP;
        let letter = at_least(folded, 0x61) & !at_least(folded, 0x7B);
        let digit = at_least(low, 0x30) & !at_least(low, 0x3A);
        let others = !((letter | digit) & ascii) & TOP;
        // Gather the top bit of byte k into bit k: shift the top bits down to bit 0 of each
        // byte, then multiply so that they line up in the top byte.
        ((others >> 7).wrapping_mul(0x0102_0408_1020_4080) >> 56) as u32
    }
}

impl Iterator for NonAlnum<'_> {
    type Item = usize;

    #[inline(always)]
    fn next(&mut self) -> Option<usize> {
        loop {
            if self.mask != 0 {
                let p = self.block + self.mask.trailing_zeros() as usize;
                self.mask &= self.mask - 1;
                return Some(p);
            }
            if self.done {
                return None;
            }
            self.block = self.next;
            if let Some(chunk) = self.b.get(self.next..self.next + 32) {
                self.mask = Self::mask8(&chunk[0..8])
                    | Self::mask8(&chunk[8..16]) << 8
                    | Self::mask8(&chunk[16..24]) << 16
                    | Self::mask8(&chunk[24..32]) << 24;
                self.next += 32;
            } else {
                // The last bytes, fewer than 32, and the end itself.
                let tail = &self.b[self.next..];
                for (k, c) in tail.iter().enumerate() {
                    if !c.is_ascii_alphanumeric() {
                        self.mask |= 1 << k;
                    }
                }
                self.mask |= 1 << tail.len();
                self.done = true;
            }
        }
    }
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
    /// The packed key of a string of at most 15 bytes: its bytes in order from the low
    /// end, and its length in the top byte. Read with two overlapping fixed-size loads
    /// rather than a copy of variable length.
    pub(crate) fn key(s: &str) -> Option<u128> {
        let b = s.as_bytes();
        let n = b.len();
        let word = |at: usize| u64::from_le_bytes(b[at..at + 8].try_into().unwrap_or([0; 8]));
        let half = |at: usize| u32::from_le_bytes(b[at..at + 4].try_into().unwrap_or([0; 4]));
        let (lo, hi) = match n {
            0 => (0, 0),
            1..=3 => {
                let x = u64::from(b[0]) | u64::from(b[n / 2]) << 8 | u64::from(b[n - 1]) << 16;
                // Bytes 0, 1, 2 of the string: for n = 1 or 2 the top ones are cleared.
                (x & (u64::MAX >> (64 - 8 * n)), 0)
            }
            4..=7 => {
                // Bytes 4..n are the top n − 4 bytes of the last four.
                let tail = u64::from(half(n - 4)) >> (8 * (8 - n));
                (u64::from(half(0)) | tail << 32, 0)
            }
            8..=15 => (word(0), word(n - 8).checked_shr(8 * (16 - n) as u32).unwrap_or(0)),
            _ => return None,
        };
        Some(u128::from(lo) | u128::from(hi) << 64 | (n as u128) << 120)
    }

    /// [`StrIds::key`] of the `len` bytes at `start` in `buf`, which must hold at least
    /// 16 bytes from `start` (callers pad their buffers): one load and a mask, where
    /// [`StrIds::key`] must branch on the length.
    pub(crate) fn key_in_padded(buf: &[u8], start: usize, len: usize) -> Option<u128> {
        if len > 15 {
            return None;
        }
        let bytes: [u8; 16] = buf.get(start..start + 16)?.try_into().ok()?;
        let mask = (1u128 << (8 * len)) - 1;
        Some(u128::from_le_bytes(bytes) & mask | (len as u128) << 120)
    }

    pub(crate) fn get(&self, s: &str) -> Option<u32> {
        match Self::key(s) {
            Some(k) => self.short.get(&k).copied(),
            None => self.long.get(s).copied(),
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

/// A direct-mapped cache from [`StrIds::key`]s to `u32` values, in front of a larger map:
/// the frequent words of a text stay in it, close to the processor, while the map grows
/// with every rare word. One probe, no chain: a key found in its slot is a hit, anything
/// else a miss (and the caller asks the map and [`FrontCache::put`]s the answer).
#[derive(Debug, Clone)]
pub(crate) struct FrontCache {
    /// Per slot: the key's two halves and the value. A key is never all zeros (its top
    /// byte is the length), so an empty slot never matches.
    entries: Vec<[u64; 3]>,
    shift: u32,
}

impl FrontCache {
    /// A cache of `1 << bits` entries.
    pub(crate) fn new(bits: u32) -> FrontCache {
        FrontCache { entries: vec![[0; 3]; 1 << bits], shift: 64 - bits }
    }

    #[inline]
    fn slot(&self, key: u128) -> (usize, u64, u64) {
        let (lo, hi) = (key as u64, (key >> 64) as u64);
        let mix = lo.wrapping_mul(0x9E37_79B9_7F4A_7C15) ^ hi.wrapping_mul(0xC2B2_AE3D_27D4_EB4F);
        ((mix >> self.shift) as usize, lo, hi)
    }

    #[inline]
    pub(crate) fn get(&self, key: u128) -> Option<u32> {
        let (slot, lo, hi) = self.slot(key);
        let e = self.entries[slot];
        (e[0] == lo && e[1] == hi).then_some(e[2] as u32)
    }

    pub(crate) fn put(&mut self, key: u128, value: u32) {
        let (slot, lo, hi) = self.slot(key);
        self.entries[slot] = [lo, hi, u64::from(value)];
    }

    pub(crate) fn clear(&mut self) {
        self.entries.iter_mut().for_each(|e| *e = [0; 3]);
    }
}

/// Slots a per-pair table keeps between pairs rather than shrink to fit.
pub(crate) const KEEP_SLOTS: usize = 4096;

/// The capacity for a table that needs `needed` slots and has `current`: the current one
/// if it is larger but not above [`KEEP_SLOTS`].
pub(crate) fn kept_capacity(needed: usize, current: usize) -> usize {
    if current > needed && current <= KEEP_SLOTS { current } else { needed }
}

/// A small open-addressing table from nonzero `u128` keys to `u32` values, for the
/// n-grams of one hypothesis or candidate: sized once per pair to at least twice the most
/// keys it will hold, probed linearly, cleared by refilling with zeros. Cheaper than a
/// general map for a few dozen entries looked up a few hundred times.
#[derive(Debug, Default, Clone)]
pub(crate) struct NgramTable {
    keys: Vec<u128>,
    values: Vec<u32>,
    /// Slots filled since the last reset, emptied by the next one.
    used: Vec<usize>,
    shift: u32,
}

impl NgramTable {
    /// Empties the table, ready for up to `most` keys. Up to [`KEEP_SLOTS`] it does not
    /// shrink, so that texts of varying length do not make it reallocate back and forth.
    pub(crate) fn reset(&mut self, most: usize) {
        let cap = kept_capacity((2 * most).next_power_of_two().max(16), self.keys.len());
        if cap == self.keys.len() {
            for &i in &self.used {
                self.keys[i] = 0;
            }
        } else {
            self.keys.clear();
            self.keys.resize(cap, 0);
            self.values.resize(cap, 0);
        }
        self.used.clear();
        self.shift = 64 - cap.trailing_zeros();
    }

    fn first_slot(&self, key: u128) -> usize {
        let mixed = (key as u64 ^ (key >> 64) as u64 ^ (key >> 96) as u64)
            .wrapping_mul(0x9E37_79B9_7F4A_7C15);
        (mixed >> self.shift) as usize
    }

    pub(crate) fn get(&self, key: u128) -> Option<u32> {
        let mask = self.keys.len() - 1;
        let mut i = self.first_slot(key);
        loop {
            match self.keys[i] {
                k if k == key => return Some(self.values[i]),
                0 => return None,
                _ => i = (i + 1) & mask,
            }
        }
    }

    /// The value of `key`, inserting `value` if it has none. The caller keeps within the
    /// `most` keys of [`NgramTable::reset`].
    pub(crate) fn get_or_insert(&mut self, key: u128, value: u32) -> u32 {
        debug_assert!(key != 0);
        let mask = self.keys.len() - 1;
        let mut i = self.first_slot(key);
        loop {
            match self.keys[i] {
                k if k == key => return self.values[i],
                0 => {
                    self.keys[i] = key;
                    self.values[i] = value;
                    self.used.push(i);
                    return value;
                }
                _ => i = (i + 1) & mask,
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::StrIds;

    #[test]
    fn non_alnum_positions_equal_the_byte_loop() {
        let mut x: u64 = 0x2545_F491_4F6C_DD1D;
        let mut next = move || {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            x
        };
        for _ in 0..20_000 {
            let len = (next() % 100) as usize;
            // Mostly letters and digits, with every byte value sometimes.
            let b: Vec<u8> = (0..len)
                .map(|_| match next() % 4 {
                    0 => (next() % 256) as u8,
                    1 => b'0' + (next() % 10) as u8,
                    _ => b"aZmYz09AB@[`{/:_ \x80\xff\xc3"[(next() % 20) as usize],
                })
                .collect();
            let mut want: Vec<usize> =
                (0..len).filter(|&p| !b[p].is_ascii_alphanumeric()).collect();
            want.push(len);
            let got: Vec<usize> = super::NonAlnum::new(&b).collect();
            assert_eq!(got, want, "{b:?}");
        }
    }

    #[test]
    fn packed_key_is_the_bytes_and_the_length() {
        let mut x: u64 = 0x9E37_79B9_7F4A_7C15;
        for n in 0..=15usize {
            for _ in 0..200 {
                let s: String = (0..n)
                    .map(|_| {
                        x ^= x << 13;
                        x ^= x >> 7;
                        x ^= x << 17;
                        char::from(b' ' + (x % 95) as u8)
                    })
                    .collect();
                let mut want = [0u8; 16];
                want[..n].copy_from_slice(s.as_bytes());
                want[15] = n as u8;
                assert_eq!(StrIds::key(&s), Some(u128::from_le_bytes(want)), "{s:?}");
            }
        }
        assert_eq!(StrIds::key("sixteen bytes!!!"), None);
        // The padded form gives the same keys.
        let text = b"the cat's 1,200 unbelievably-long-word x";
        let mut padded = text.to_vec();
        padded.extend([0; 16]);
        for start in 0..text.len() {
            for len in 0..=text.len() - start {
                let s = std::str::from_utf8(&text[start..start + len]).unwrap();
                assert_eq!(StrIds::key_in_padded(&padded, start, len), StrIds::key(s), "{s:?}");
            }
        }
    }

    #[test]
    fn ngram_table_keeps_every_key() {
        let mut t = super::NgramTable::default();
        // Sizes that reuse the table and sizes that grow or shrink it.
        for most in [0usize, 1, 7, 7, 100, 100, 1000, 60, 60] {
            t.reset(most);
            // Keys that differ only in high or low bits, as packed ids do.
            let keys: Vec<u128> = (1..=most as u128)
                .map(|i| if i % 2 == 0 { i << 96 | 1 } else { i | (1 << 32) })
                .collect();
            for (v, &k) in keys.iter().enumerate() {
                assert_eq!(t.get(k), None);
                assert_eq!(t.get_or_insert(k, v as u32), v as u32);
                assert_eq!(t.get_or_insert(k, 9999), v as u32);
            }
            for (v, &k) in keys.iter().enumerate() {
                assert_eq!(t.get(k), Some(v as u32));
            }
            assert_eq!(t.get(u128::MAX), None);
        }
    }

    #[test]
    fn str_ids_tell_strings_apart_by_bytes_and_length() {
        let mut ids = StrIds::default();
        let words =
            ["", "a", "a\0", "\0", "ab", "abcdefghijklmno", "abcdefghijklmnop", "abcdefghijklmnoq"];
        for (i, w) in words.iter().enumerate() {
            assert_eq!(ids.get(w), None, "{w:?}");
            ids.insert(w, i as u32);
        }
        for (i, w) in words.iter().enumerate() {
            assert_eq!(ids.get(w), Some(i as u32), "{w:?}");
        }
        assert_eq!(ids.get("abcdefghijklmn"), None);
        assert_eq!(ids.len(), words.len());
        ids.clear();
        assert_eq!(ids.get("a"), None);
    }
}
