//! Sentence boundaries: UAX #29 as the base, then the rules a chat answer needs.
//!
//! [`uax29`] is the Unicode Standard Annex #29 sentence segmentation as the
//! `unicode-segmentation` crate implements it (checked against every case of Unicode's
//! `SentenceBreakTest.txt`). UAX #29 is deliberately simple and breaks where a chat answer
//! does not end a sentence, so [`split`] adjusts its boundaries:
//!
//! * no break after an abbreviation (`approx.`, `Dr.`, `No. 4`, `e.g.`, `i.e.`, `vs.` …)
//!   or a single capital initial (`J. R. Okafor`);
//! * no break where no white space follows the full stop (`example.Com/x`, `a.b@x.org`,
//!   `?q=1` in a URL);
//! * citation markers (`[1]`, `[1, 2]`, `[1][2]`) stay with the sentence they end, whether
//!   they come before or after its full stop;
//! * a line break inside a paragraph joins two lines when the first has no terminal
//!   punctuation and the second is not a list item or heading (hard-wrapped prose), while
//!   Markdown list items and headings stand as sentences of their own.
//!
//! Decimals and amounts (`3.5`, `£12.40`), times (`10.30 a.m.` before a lower-case word),
//! ellipses and quoted speech are already handled by UAX #29 itself. Every span returned
//! is trimmed of surrounding white space and lies on character boundaries.

use std::ops::Range;
use std::sync::LazyLock;

use regex::Regex;
use unicode_segmentation::UnicodeSegmentation;

/// Abbreviations after which a full stop does not end a sentence (lower-case, without
/// the final full stop). Common practice in sentence splitters; extend as needed.
const ABBREVIATIONS: &[&str] = &[
    "a.k.a", "al", "approx", "apr", "art", "assn", "aug", "ave", "bldg", "ca", "capt", "cf", "ch",
    "co", "col", "corp", "dec", "dept", "dr", "e.g", "ed", "eds", "esp", "est", "ext", "feb",
    "fig", "figs", "gen", "gov", "i.e", "inc", "jan", "jr", "jul", "jun", "lt", "ltd", "mar",
    "max", "min", "misc", "mr", "mrs", "ms", "mt", "no", "nos", "nov", "oct", "op", "p", "para",
    "pp", "prof", "pt", "ref", "rev", "sec", "sep", "sept", "sgt", "sr", "st", "tel", "v", "viz",
    "vol", "vols", "vs",
];

/// Pure UAX #29 sentence segments (not trimmed), covering `text` in order.
///
/// Pure ASCII text — most documents — takes a hand-written path that implements the rules
/// as they apply to ASCII; it is tested equal to `unicode-segmentation` on random ASCII
/// text. Other text goes to `unicode-segmentation`.
pub fn uax29(text: &str) -> Vec<Range<usize>> {
    if text.is_ascii() {
        return uax29_ascii(text.as_bytes());
    }
    text.split_sentence_bound_indices().map(|(i, s)| i..i + s.len()).collect()
}

/// UAX #29 sentence boundaries of ASCII text (rules SB1–SB11, table 4's classes as ASCII
/// characters take them: SB5 has nothing to skip, as no ASCII character is Extend or
/// Format, and none is Sep or OLetter).
///
/// A boundary can only follow a paragraph separator (SB4) or the run "SATerm Close* Sp*"
/// (SB11), so the text is walked from one `.` `!` `?` CR or LF to the next, and at each
/// terminator the rules that forbid a break there (SB6–SB10) are asked in turn. SB8
/// looks ahead to the next letter, separator or terminator; the answer is remembered, so
/// the walk stays linear however the text is built.
fn uax29_ascii(b: &[u8]) -> Vec<Range<usize>> {
    let n = b.len();
    let mut out = Vec::new();
    if n == 0 {
        return out;
    }
    let close = |c: u8| matches!(c, b'"' | b'\'' | b'(' | b')' | b'[' | b']' | b'{' | b'}');
    let sp = |c: u8| matches!(c, b'\t' | 0x0B | 0x0C | b' ');
    let para = |c: u8| c == b'\r' || c == b'\n';
    let saterm = |c: u8| matches!(c, b'.' | b'!' | b'?');
    // SB8's look-ahead: the first letter, separator or terminator at or after a position.
    let significant = |c: u8| c.is_ascii_alphabetic() || para(c) || saterm(c);
    let (mut sig_from, mut sig_at) = (0usize, 0usize);
    let mut first_significant = |q: usize| -> usize {
        if !(sig_from <= q && q <= sig_at) {
            sig_at = (q..n).find(|&k| significant(b[k])).unwrap_or(n);
        }
        sig_from = q;
        sig_at
    };
    let (mut start, mut i) = (0usize, 0usize);
    while i < n {
        let c = b[i];
        if para(c) {
            // SB3 keeps CR LF together; SB4 breaks after the separator.
            let end = if c == b'\r' && b.get(i + 1) == Some(&b'\n') { i + 2 } else { i + 1 };
            if end < n {
                out.push(start..end);
                start = end;
            }
            i = end;
            continue;
        }
        if !saterm(c) {
            i += 1;
            continue;
        }
        let aterm = c == b'.';
        let mut j = i + 1;
        while j < n && close(b[j]) {
            j += 1;
        }
        while j < n && sp(b[j]) {
            j += 1;
        }
        // SB9, SB10: no break before a separator; SB4 breaks after it.
        if j >= n || para(b[j]) {
            i = j;
            continue;
        }
        let next = b[j];
        let direct = j == i + 1;
        let keep = (aterm && direct && next.is_ascii_digit()) // SB6
            || (aterm
                && direct
                && next.is_ascii_uppercase()
                && i > 0
                && b[i - 1].is_ascii_alphabetic()) // SB7
            || (aterm && b.get(first_significant(j)).is_some_and(u8::is_ascii_lowercase)) // SB8
            || matches!(next, b',' | b'-' | b':' | b';' | b'.' | b'!' | b'?'); // SB8a
        if !keep {
            out.push(start..j); // SB11
            start = j;
        }
        i = j;
    }
    out.push(start..n);
    out
}

/// A run of citation markers: `[1]`, `[1, 2]`, `[S1][S2]`, spaces allowed between groups.
static MARKER_RUN: LazyLock<Regex> = LazyLock::new(|| {
    Regex::new(r"\[\s*[\w.:-]{1,32}(?:\s*[,;]\s*[\w.:-]{1,32})*\s*\](?:[ \t]*\[\s*[\w.:-]{1,32}(?:\s*[,;]\s*[\w.:-]{1,32})*\s*\])*")
        .unwrap_or_else(|e| panic!("marker pattern: {e}"))
});

static LIST_OR_HEADING: LazyLock<Regex> = LazyLock::new(|| {
    Regex::new(r"^[ \t]*(?:[-*+•][ \t]|\d{1,3}[.)][ \t]|#{1,6}[ \t]|>)")
        .unwrap_or_else(|e| panic!("list pattern: {e}"))
});

/// Byte ranges of citation-marker runs in `text` (not followed by `(`, which would make
/// them a Markdown link).
pub fn marker_runs(text: &str) -> Vec<Range<usize>> {
    MARKER_RUN
        .find_iter(text)
        .filter(|m| !text[m.end()..].starts_with('('))
        .map(|m| m.range())
        .collect()
}

fn trim_range(text: &str, r: Range<usize>) -> Range<usize> {
    let s = &text[r.clone()];
    let start = r.start + (s.len() - s.trim_start().len());
    let end = r.start + s.trim_end().len();
    if end <= start { start..start } else { start..end }
}

/// The last word of `s` before a final full stop, lower-cased, if `s` ends with one.
fn word_before_final_stop(s: &str) -> Option<String> {
    let body = s.trim_end().strip_suffix('.')?;
    let word = body.rsplit(|c: char| c.is_whitespace() || c == '(' || c == '"').next()?;
    Some(word.to_lowercase())
}

fn ends_with_terminal(s: &str) -> bool {
    let t = s.trim_end();
    let t = t.trim_end_matches(['"', '\'', ')', '”', '’', '*', '_']);
    t.ends_with(['.', '!', '?', ':', ';', '…', '。', '！', '？'])
}

/// Whether the segment boundary between `prev` (ending at `b`) and the text after it
/// should be removed.
fn should_join(text: &str, prev: Range<usize>, b: usize) -> bool {
    let before = &text[prev.clone()];
    let after = &text[b..];
    let trimmed = before.trim_end();
    // An abbreviation or an initial before the full stop.
    // A segment that is only a numbered-list marker ("1.") belongs to its item.
    let own = trimmed.rsplit('\n').next().unwrap_or(trimmed).trim();
    if own.len() <= 4
        && own.ends_with(['.', ')'])
        && own[..own.len() - 1].bytes().all(|b| b.is_ascii_digit())
        && !own[..own.len() - 1].is_empty()
    {
        return true;
    }
    if let Some(word) = word_before_final_stop(trimmed).filter(|_| !trimmed.ends_with("..")) {
        let w = word.trim_start_matches(['(', '[']);
        let is_initial = w.chars().count() == 1 && w.chars().all(char::is_uppercase)
            || trimmed.trim_end_matches('.').chars().last().is_some_and(char::is_uppercase)
                && w.chars().count() == 1;
        let next_starts_line = before.ends_with('\n');
        if !next_starts_line
            && (ABBREVIATIONS.binary_search(&w).is_ok()
                || is_initial
                || w.contains('.') && w.len() <= 6)
        {
            return true;
        }
    }
    // A full stop or question mark with no white space after it: a URL, e-mail address
    // or identifier, not the end of a sentence.
    if before.ends_with(['.', '?', '!']) && after.chars().next().is_some_and(|c| !c.is_whitespace())
    {
        return true;
    }
    // One line break inside a paragraph: hard-wrapped prose continues.
    let tail_ws = &before[trimmed.len()..];
    if tail_ws.matches('\n').count() == 1 && !tail_ws.contains("\n\n") {
        let last_line = trimmed.rsplit('\n').next().unwrap_or(trimmed);
        let next_line = after.split('\n').next().unwrap_or(after);
        return !trimmed.is_empty()
            && !ends_with_terminal(trimmed)
            && !LIST_OR_HEADING.is_match(last_line)
            && !LIST_OR_HEADING.is_match(next_line)
            && !next_line.trim().is_empty()
            && !last_line.trim_start().starts_with('|');
    }
    false
}

/// Chat-answer sentences of `text`: trimmed byte spans in order; see the module docs.
pub fn split(text: &str) -> Vec<Range<usize>> {
    let base = uax29(text);
    if base.is_empty() {
        return Vec::new();
    }
    let markers = marker_runs(text);
    // Boundaries between segments, adjusted and filtered.
    let mut bounds: Vec<usize> = base.iter().skip(1).map(|r| r.start).collect();
    // Marker runs are sorted and disjoint: the one that could hold or follow a position
    // is found by binary search.
    let run_at = |pos: usize| -> Option<&Range<usize>> {
        let i = markers.partition_point(|m| m.end <= pos);
        markers.get(i)
    };
    for b in &mut bounds {
        // A boundary inside a marker run moves to its end.
        if let Some(m) = run_at(*b).filter(|m| m.start < *b && *b < m.end) {
            *b = m.end;
        }
        // A segment that opens with a marker run gives it to the sentence before.
        let rest = &text[*b..];
        let lead = rest.len() - rest.trim_start_matches([' ', '\t']).len();
        if let Some(m) = run_at(*b + lead).filter(|m| m.start == *b + lead) {
            *b = m.end;
        }
    }
    bounds.dedup();
    let mut out: Vec<Range<usize>> = Vec::new();
    let mut start = 0usize;
    for &b in &bounds {
        if b <= start || b >= text.len() {
            continue;
        }
        if should_join(text, start..b, b) {
            continue;
        }
        out.push(start..b);
        start = b;
    }
    out.push(start..text.len());
    out.into_iter().map(|r| trim_range(text, r)).filter(|r| !r.is_empty()).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ascii_fast_path_equals_unicode_segmentation() {
        // Random ASCII text weighted towards the characters the rules look at.
        let alphabet: &[u8] = b"aaaabbcXYZ019..!?,;:-\"'()[]{}    \t\r\n\n#$%&*/_@\x0b\x0c";
        let mut state: u64 = 0x2545_F491_4F6C_DD1D;
        let mut next = || {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            state
        };
        for case in 0..20_000 {
            let len = (next() % 40) as usize;
            let bytes: Vec<u8> =
                (0..len).map(|_| alphabet[(next() % alphabet.len() as u64) as usize]).collect();
            let text = std::str::from_utf8(&bytes).expect("ASCII");
            let theirs: Vec<Range<usize>> =
                text.split_sentence_bound_indices().map(|(i, s)| i..i + s.len()).collect();
            assert_eq!(uax29_ascii(bytes.as_slice()), theirs, "case {case}: {text:?}");
        }
    }

    fn sents(text: &str) -> Vec<&str> {
        split(text).into_iter().map(|r| &text[r]).collect()
    }

    #[test]
    fn abbreviations_and_initials() {
        assert_eq!(
            sents("Ask Dr. Okafor about it. It costs approx. 40 euros."),
            ["Ask Dr. Okafor about it.", "It costs approx. 40 euros."]
        );
        assert_eq!(
            sents("See No. 4 Elm Road. Then e.g. Berth 2. Signed J. R. Amadi."),
            ["See No. 4 Elm Road.", "Then e.g. Berth 2.", "Signed J. R. Amadi."]
        );
    }

    #[test]
    fn decimals_amounts_times_urls() {
        assert_eq!(
            sents("It costs £12.40 at 10.30 a.m. daily. Version 3.5 is out."),
            ["It costs £12.40 at 10.30 a.m. daily.", "Version 3.5 is out."]
        );
        assert_eq!(
            sents("Visit docs.Example.org/Help?Q=1 now. Mail ops.Team@example.org."),
            ["Visit docs.Example.org/Help?Q=1 now.", "Mail ops.Team@example.org."]
        );
    }

    #[test]
    fn markers_stay_with_their_sentence() {
        assert_eq!(
            sents("Claims stay open for 45 days [1]. After that they close [1][2]."),
            ["Claims stay open for 45 days [1].", "After that they close [1][2]."]
        );
        assert_eq!(
            sents("Claims stay open for 45 days.[1] After that they close. [2, 3] Done."),
            ["Claims stay open for 45 days.[1]", "After that they close. [2, 3]", "Done."]
        );
    }

    #[test]
    fn markdown_lists_headings_and_wrapped_lines() {
        let text = "## Summary\nThe policy covers\nall staff.\n\n- Item one\n- Item two\n1. Step";
        assert_eq!(
            sents(text),
            ["## Summary", "The policy covers\nall staff.", "- Item one", "- Item two", "1. Step"]
        );
    }

    #[test]
    fn quoted_speech_and_ellipsis() {
        assert_eq!(
            sents("He said \"Stop.\" Then he left... Later, nothing."),
            ["He said \"Stop.\"", "Then he left...", "Later, nothing."]
        );
    }

    #[test]
    fn spans_are_trimmed_and_empty_text_has_none() {
        assert!(split("").is_empty());
        assert!(split("   \n ").is_empty());
        assert_eq!(sents("  Hello there.  "), ["Hello there."]);
    }
}
