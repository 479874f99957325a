//! Normalisation that keeps a map back to the original text.
//!
//! Claims and sources are compared after this pass so that look-alike text can neither
//! fake nor hide support: full-width digits, ligatures and compatibility forms fold to
//! their plain forms (Unicode NFKC, UAX #15), letters are case-folded, curly quotes and the
//! many dashes become `'`, `"` and `-`, and zero-width and bidirectional control characters
//! (which can hide or reorder text on screen) are dropped.
//!
//! The work is done one grapheme cluster at a time (UAX #29), so that a letter and its
//! combining marks compose together, and every byte of the output remembers the cluster of
//! the input it came from. ASCII runs — most of real text — take a fast path.

use unicode_normalization::UnicodeNormalization;
use unicode_segmentation::UnicodeSegmentation;

/// Normalised text and, for each of its bytes, the original byte range it came from.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Normalized {
    /// The normalised text.
    pub text: String,
    /// For byte `i` of `text`, the start in the original of the cluster it came from.
    starts: Vec<u32>,
    /// For byte `i` of `text`, the end in the original of the cluster it came from.
    ends: Vec<u32>,
    original_len: usize,
}

impl Normalized {
    /// Maps a byte range of the normalised text to the original text's byte range.
    ///
    /// The result lies on character boundaries of the original; an empty range maps to an
    /// empty range at the corresponding position.
    pub fn original_range(&self, start: usize, end: usize) -> std::ops::Range<usize> {
        let s = self.original_pos(start);
        if end <= start {
            return s..s;
        }
        let e = self.ends.get(end - 1).map_or(self.original_len, |&e| e as usize);
        s..e.max(s)
    }

    /// The original byte at which normalised byte `pos` begins (the original length for
    /// the end of the text).
    pub fn original_pos(&self, pos: usize) -> usize {
        self.starts.get(pos).map_or(self.original_len, |&s| s as usize)
    }
}

/// True for characters dropped outright: zero-width spaces and joiners, the soft hyphen,
/// the byte-order mark, word joiner and invisible operators, and the bidirectional
/// embedding, override and isolate controls (Unicode TR #9).
pub fn is_invisible(c: char) -> bool {
    matches!(c,
        '\u{00AD}' | '\u{034F}' | '\u{061C}' | '\u{115F}' | '\u{1160}' | '\u{180E}'
        | '\u{200B}'..='\u{200F}' | '\u{202A}'..='\u{202E}' | '\u{2060}'..='\u{2064}'
        | '\u{2066}'..='\u{206F}' | '\u{FEFF}' | '\u{FE00}'..='\u{FE0F}')
}

/// Unifies look-alike quotes and dashes to ASCII before NFKC.
fn unify(c: char) -> char {
    match c {
        '\u{2018}' | '\u{2019}' | '\u{201A}' | '\u{201B}' | '\u{2032}' | '\u{2035}'
        | '\u{02BC}' | '\u{FF07}' | '`' | '\u{00B4}' => '\'',
        '\u{201C}' | '\u{201D}' | '\u{201E}' | '\u{201F}' | '\u{2033}' | '\u{2036}'
        | '\u{00AB}' | '\u{00BB}' | '\u{FF02}' => '"',
        '\u{2010}'..='\u{2015}'
        | '\u{2212}'
        | '\u{FE58}'
        | '\u{FE63}'
        | '\u{FF0D}'
        | '\u{2043}' => '-',
        '\u{00A0}' | '\u{2000}'..='\u{200A}' | '\u{202F}' | '\u{205F}' | '\u{3000}' => ' ',
        _ => c,
    }
}

/// Case folding as plumbline applies it: Unicode lower-casing, plus the full folds that
/// differ from it in common text (`ß` → `ss`, final sigma → `σ`), as in CaseFolding.txt.
fn fold_into(out: &mut String, s: &str) {
    for c in s.chars() {
        match c {
            'ß' | 'ẞ' => out.push_str("ss"),
            'ς' => out.push('σ'),
            c if c.is_ascii() => out.push(c.to_ascii_lowercase()),
            c => out.extend(c.to_lowercase()),
        }
    }
}

/// Normalises `original`; see the module documentation.
pub fn normalize(original: &str) -> Normalized {
    let mut out = Normalized {
        text: String::with_capacity(original.len()),
        starts: Vec::with_capacity(original.len()),
        ends: Vec::with_capacity(original.len()),
        original_len: original.len(),
    };
    let bytes = original.as_bytes();
    let mut i = 0;
    let mut scratch = String::new();
    let mut folded = String::new();
    while i < bytes.len() {
        // ASCII fast path: a byte followed by another ASCII byte (or the end) is a cluster
        // of its own and needs no normalisation beyond lower-casing.
        if bytes[i].is_ascii() && bytes.get(i + 1).is_none_or(u8::is_ascii) {
            let b = bytes[i];
            out.text.push(if b == b'`' { '\'' } else { b.to_ascii_lowercase() as char });
            out.starts.push(i as u32);
            out.ends.push((i + 1) as u32);
            i += 1;
            continue;
        }
        // Slow path: the run from here up to the next ASCII byte that follows a non-ASCII
        // one, cluster by cluster.
        let mut j = i + 1;
        while j < bytes.len() && !bytes[j].is_ascii() {
            j += 1;
        }
        let run = &original[i..j];
        for (off, cluster) in run.grapheme_indices(true) {
            let (cs, ce) = (i + off, i + off + cluster.len());
            scratch.clear();
            scratch.extend(cluster.chars().filter(|&c| !is_invisible(c)).map(unify));
            if scratch.is_empty() {
                continue;
            }
            folded.clear();
            let composed: String = scratch.nfkc().collect();
            fold_into(&mut folded, &composed);
            // Folding can decompose again (e.g. İ → i + U+0307); recompose.
            let final_text: String =
                if folded.is_ascii() { folded.clone() } else { folded.nfkc().collect() };
            out.text.push_str(&final_text);
            out.starts.extend(std::iter::repeat_n(cs as u32, final_text.len()));
            out.ends.extend(std::iter::repeat_n(ce as u32, final_text.len()));
        }
        i = j;
    }
    out
}

/// The text of [`normalize`] without the offset map: borrowed-free and fast for ASCII
/// (lower-casing, and the backtick unified to an apostrophe), the full pass otherwise.
pub fn fold(original: &str) -> std::borrow::Cow<'_, str> {
    if original.is_ascii() {
        if !original.bytes().any(|b| b.is_ascii_uppercase() || b == b'`') {
            return std::borrow::Cow::Borrowed(original);
        }
        let bytes: Vec<u8> = original
            .bytes()
            .map(|b| if b == b'`' { b'\'' } else { b.to_ascii_lowercase() })
            .collect();
        // Only ASCII bytes were mapped to ASCII bytes.
        return std::borrow::Cow::Owned(String::from_utf8(bytes).unwrap_or_default());
    }
    std::borrow::Cow::Owned(normalize(original).text)
}

#[cfg(test)]
mod tests {
    #[test]
    fn fold_equals_normalize_text() {
        for s in ["Plain ASCII `quoted`", "ÜNÏCÖDÉ ＡＢＣ", "", "mixed é and ASCII"] {
            assert_eq!(super::fold(s), super::normalize(s).text, "{s}");
        }
    }

    use super::*;

    #[test]
    fn folds_case_width_ligatures_and_quotes() {
        let n = normalize("Ｆｕｌｌ ﬁle “Quoted” – Straße");
        assert_eq!(n.text, "full file \"quoted\" - strasse");
    }

    #[test]
    fn drops_zero_width_and_bidi_controls() {
        let n = normalize("ap\u{200B}prov\u{202E}ed");
        assert_eq!(n.text, "approved");
        // The normalised word maps back over the whole original, hidden characters included.
        assert_eq!(n.original_range(0, n.text.len()), 0.."ap\u{200B}prov\u{202E}ed".len());
    }

    #[test]
    fn composes_combining_marks() {
        let n = normalize("Cafe\u{301} ok");
        assert_eq!(n.text, "café ok");
        let r = n.original_range(0, "café".len());
        assert_eq!(&"Cafe\u{301} ok"[r], "Cafe\u{301}");
    }

    #[test]
    fn ranges_map_back_on_char_boundaries() {
        let src = "Ünïcödé ＡＢＣ x";
        let n = normalize(src);
        for (s, _) in n.text.char_indices() {
            let r = n.original_range(s, s + 1);
            assert!(src.is_char_boundary(r.start) && src.is_char_boundary(r.end));
        }
        assert_eq!(n.original_pos(n.text.len()), src.len());
    }
}
