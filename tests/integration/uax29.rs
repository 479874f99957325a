//! The pure UAX #29 sentence layer against Unicode's conformance file.
//!
//! Source: Unicode SentenceBreakTest.txt, as shipped by Debian's
//! `unicode-data` 15.0.0-1 package (tests/data/unicode/SentenceBreakTest.txt,
//! header line `# SentenceBreakTest-15.0.0.txt`, licence header intact).
//! The versions differ: the `unicode-segmentation` crate in Cargo.lock
//! (1.13.3) implements Unicode 17.0.0 (its `UNICODE_VERSION`), while this
//! file is 15.0.0 (15.1 and 16.0 came between); Debian bookworm ships no
//! newer unicode-data.  No case
//! fails because of it: all 502 cases of the 15.0.0 file pass.  (Checked when
//! vendoring: the crate's own embedded 17.0.0 sentence cases that also occur
//! in this file — 274 strings — expect exactly the same segments here; the
//! 15.0.0 file only uses code points assigned by 15.0.)  Should a later
//! Cargo.lock bring tables in which a code point used here changed its
//! Sentence_Break value, the failure names the line, and the comment of that
//! line in the file gives the property the 15.0.0 data assigned.

use std::ops::Range;

use plumbline::text::sentences::uax29;

use crate::common::{Mismatches, read_data};

struct Case {
    line: usize,
    text: String,
    segments: Vec<Range<usize>>,
    source: String,
}

/// Parses `÷ 0001 × 0308 ÷ # comment` lines into strings and the byte ranges
/// between consecutive `÷` marks.
fn cases() -> Vec<Case> {
    let data = read_data("unicode/SentenceBreakTest.txt");
    let mut out = Vec::new();
    for (i, raw) in data.lines().enumerate() {
        let body = raw.split('#').next().unwrap().trim();
        if body.is_empty() {
            continue;
        }
        let mut text = String::new();
        let mut breaks = Vec::new();
        for tok in body.split_whitespace() {
            match tok {
                "÷" => breaks.push(text.len()),
                "×" => {}
                hex => {
                    let cp = u32::from_str_radix(hex, 16)
                        .unwrap_or_else(|e| panic!("line {}: {hex}: {e}", i + 1));
                    text.push(
                        char::from_u32(cp)
                            .unwrap_or_else(|| panic!("line {}: bad scalar {hex}", i + 1)),
                    );
                }
            }
        }
        let segments = breaks.windows(2).map(|w| w[0]..w[1]).collect();
        out.push(Case { line: i + 1, text, segments, source: body.to_owned() });
    }
    out
}

#[test]
fn every_sentence_break_test_case_passes() {
    let cases = cases();
    // Source: the 15.0.0 file has 502 test lines (counted when vendored).
    assert_eq!(cases.len(), 502, "unexpected number of cases in SentenceBreakTest.txt");
    let mut m = Mismatches::default();
    for c in &cases {
        let ours = uax29(&c.text);
        m.check(ours == c.segments, || {
            format!(
                "line {} [{}] {:?}: ours {:?} theirs {:?}",
                c.line, c.source, c.text, ours, c.segments
            )
        });
    }
    m.finish("uax29 vs SentenceBreakTest-15.0.0");
}

/// The pure layer partitions its input: ranges are contiguous, non-empty,
/// start at 0 and end at the length (a property of UAX #29 segmentation:
/// SB1/SB2 put breaks at both ends and every other position is either a
/// break or not). Checked on every conformance string and some plain text.
#[test]
fn uax29_partitions_the_input() {
    let mut texts: Vec<String> = cases().into_iter().map(|c| c.text).collect();
    texts.push("One. Two? Three! \"Four.\" Five...\nSix\r\n\u{2029}Seven".to_owned());
    texts.push("Mr. Quill is here. e.g. this. 3.14 is pi. 文。中文！".to_owned());
    for t in &texts {
        let r = uax29(t);
        let mut pos = 0;
        for seg in &r {
            assert_eq!(seg.start, pos, "gap or overlap in {t:?}: {r:?}");
            assert!(seg.end > seg.start, "empty segment in {t:?}: {r:?}");
            pos = seg.end;
        }
        assert_eq!(pos, t.len(), "does not cover {t:?}: {r:?}");
    }
    assert!(
        uax29("").is_empty(),
        "empty text must give no segments (SB1/SB2 apply only to non-empty text)"
    );
}
