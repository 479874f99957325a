//! Where each sentence of an answer stands in the answers file, as line and columns, for
//! SARIF results (`region.startColumn` / `endColumn`).
//!
//! The findings give each sentence's byte span in the *decoded* answer text; in the file
//! that text is a JSON string, where `\"`, `\n` or `\u00e9` take more bytes than the
//! characters they stand for. [`locate`] reads the answers file once more, checks that it
//! is still the file the run read (same SHA-256), finds the top-level `"answer"` member
//! of each needed line, decodes it while keeping a map from decoded to raw offsets, and
//! converts the sentence's span into 1-based columns counted in UTF-16 code units (SARIF's
//! default `columnKind`). Anything unexpected — standard input, a changed or unreadable
//! file, a line whose decoded answer differs from the recorded one — leaves columns out
//! and the result keeps its line.

use std::collections::HashMap;
use std::fs::File;
use std::io::{BufRead, BufReader};
use std::path::Path;

use sha2::{Digest, Sha256};

use crate::findings::Report;

/// Columns `(start, end)` of each sentence, by answer index then sentence index; `end` is
/// the column just after the sentence, as SARIF's `endColumn` is.
pub type SentenceColumns = HashMap<usize, Vec<Option<(usize, usize)>>>;

/// Locates the sentences of every answer of `report` in its answers file; `None` when the
/// file cannot be used (see the module documentation).
pub fn locate(report: &Report) -> Option<SentenceColumns> {
    let path = &report.inputs.answers.path;
    if path == "-" || report.answers.is_empty() {
        return None;
    }
    let file = File::open(Path::new(path)).ok()?;
    let mut needed: HashMap<usize, Vec<usize>> = HashMap::new();
    for (i, a) in report.answers.iter().enumerate() {
        if !a.sentences.is_empty() {
            needed.entry(a.line).or_default().push(i);
        }
    }
    let mut reader = BufReader::with_capacity(1 << 16, file);
    let mut hasher = Sha256::new();
    let mut out = SentenceColumns::new();
    let mut buf = Vec::new();
    let mut line_no = 0usize;
    loop {
        buf.clear();
        let n = reader.read_until(b'\n', &mut buf).ok()?;
        if n == 0 {
            break;
        }
        hasher.update(&buf);
        line_no += 1;
        let Some(indices) = needed.get(&line_no) else { continue };
        let mut bytes: &[u8] = &buf;
        if line_no == 1 {
            bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
        }
        let bytes = bytes.strip_suffix(b"\n").unwrap_or(bytes);
        let bytes = bytes.strip_suffix(b"\r").unwrap_or(bytes);
        let Ok(line) = std::str::from_utf8(bytes) else { continue };
        let Some(decoded) = answer_member(line) else { continue };
        for &i in indices {
            let a = &report.answers[i];
            if decoded.text != a.answer {
                continue;
            }
            let cols = a
                .sentences
                .iter()
                .map(|s| {
                    let start = decoded.raw_offset(s.span.start)?;
                    let end = decoded.raw_offset(s.span.end)?;
                    (start < end).then(|| (utf16_column(line, start), utf16_column(line, end)))
                })
                .collect();
            out.insert(i, cols);
        }
    }
    let digest = crate::run::hex(&hasher.finalize());
    (digest == report.inputs.answers.sha256).then_some(out)
}

/// 1-based column of byte `offset` of `line`, in UTF-16 code units.
fn utf16_column(line: &str, offset: usize) -> usize {
    line[..offset].encode_utf16().count() + 1
}

/// A decoded JSON string with, at every character boundary of the decoded text, the raw
/// byte offset in the line.
#[derive(Debug)]
struct Decoded {
    text: String,
    /// `(decoded offset, raw offset)`, increasing in both; the last is the end.
    bounds: Vec<(usize, usize)>,
}

impl Decoded {
    fn raw_offset(&self, decoded: usize) -> Option<usize> {
        self.bounds.binary_search_by_key(&decoded, |b| b.0).ok().map(|i| self.bounds[i].1)
    }
}

/// The top-level `"answer"` member of a JSON object line, decoded.
fn answer_member(line: &str) -> Option<Decoded> {
    let b = line.as_bytes();
    let mut i = skip_ws(b, 0);
    if b.get(i) != Some(&b'{') {
        return None;
    }
    i += 1;
    loop {
        i = skip_ws(b, i);
        match b.get(i)? {
            b'}' => return None,
            b',' => {
                i += 1;
                continue;
            }
            b'"' => {}
            _ => return None,
        }
        let key = decode_string(line, i)?;
        i = key.1;
        i = skip_ws(b, i);
        if b.get(i) != Some(&b':') {
            return None;
        }
        i = skip_ws(b, i + 1);
        if key.0.text == "answer" && b.get(i) == Some(&b'"') {
            return Some(decode_string(line, i)?.0);
        }
        i = skip_value(line, i)?;
    }
}

fn skip_ws(b: &[u8], mut i: usize) -> usize {
    while matches!(b.get(i), Some(b' ' | b'\t' | b'\r' | b'\n')) {
        i += 1;
    }
    i
}

/// Skips one JSON value starting at `i`; returns the offset after it.
fn skip_value(line: &str, i: usize) -> Option<usize> {
    let b = line.as_bytes();
    match b.get(i)? {
        b'"' => Some(decode_string(line, i)?.1),
        b'{' | b'[' => {
            let mut depth = 0usize;
            let mut j = i;
            while j < b.len() {
                match b[j] {
                    b'"' => {
                        j = decode_string(line, j)?.1;
                        continue;
                    }
                    b'{' | b'[' => depth += 1,
                    b'}' | b']' => {
                        depth -= 1;
                        if depth == 0 {
                            return Some(j + 1);
                        }
                    }
                    _ => {}
                }
                j += 1;
            }
            None
        }
        _ => {
            let mut j = i;
            while j < b.len() && !matches!(b[j], b',' | b'}' | b']' | b' ' | b'\t' | b'\r' | b'\n')
            {
                j += 1;
            }
            Some(j)
        }
    }
}

/// Decodes the JSON string whose opening quote is at byte `start` of `line`; returns it
/// and the offset after the closing quote.
fn decode_string(line: &str, start: usize) -> Option<(Decoded, usize)> {
    let b = line.as_bytes();
    let mut text = String::new();
    let mut bounds = Vec::new();
    let mut i = start + 1;
    loop {
        bounds.push((text.len(), i));
        match *b.get(i)? {
            b'"' => return Some((Decoded { text, bounds }, i + 1)),
            b'\\' => {
                let c = match *b.get(i + 1)? {
                    b'"' => '"',
                    b'\\' => '\\',
                    b'/' => '/',
                    b'b' => '\u{8}',
                    b'f' => '\u{c}',
                    b'n' => '\n',
                    b'r' => '\r',
                    b't' => '\t',
                    b'u' => {
                        let hi = hex4(b, i + 2)?;
                        if (0xD800..0xDC00).contains(&hi)
                            && b.get(i + 6) == Some(&b'\\')
                            && b.get(i + 7) == Some(&b'u')
                        {
                            let lo = hex4(b, i + 8)?;
                            if (0xDC00..0xE000).contains(&lo) {
                                let c = char::from_u32(
                                    0x10000 + ((hi - 0xD800) << 10) + (lo - 0xDC00),
                                )?;
                                text.push(c);
                                i += 12;
                                continue;
                            }
                        }
                        // A lone surrogate cannot be a character: as serde_json, refuse.
                        let c = char::from_u32(hi)?;
                        text.push(c);
                        i += 6;
                        continue;
                    }
                    _ => return None,
                };
                text.push(c);
                i += 2;
            }
            _ => {
                let c = line[i..].chars().next()?;
                text.push(c);
                i += c.len_utf8();
            }
        }
    }
}

fn hex4(b: &[u8], i: usize) -> Option<u32> {
    let s = std::str::from_utf8(b.get(i..i + 4)?).ok()?;
    u32::from_str_radix(s, 16).ok()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_the_top_level_answer_past_nested_decoys() {
        let line = r#"{"id": "a", "meta": {"answer": "decoy", "x": ["}", "\""]}, "n": -1.5e3, "ok": true, "answer": "Caf\u00e9 \"x\" 😀\n[1].", "citations": []}"#;
        let d = answer_member(line).expect("answer");
        assert_eq!(d.text, "Café \"x\" 😀\n[1].");
        // Decoded offsets at character boundaries map back into the raw line.
        let raw = |decoded: usize| d.raw_offset(decoded).expect("boundary");
        let start = line.find(r#""Caf"#).unwrap() + 1;
        assert_eq!(raw(0), start);
        assert_eq!(&line[raw(3)..raw(5)], r"\u00e9");
        let q = d.text.find('"').unwrap();
        assert_eq!(&line[raw(q)..raw(q + 1)], "\\\"");
        assert_eq!(&line[raw(d.text.len())..raw(d.text.len()) + 1], "\"");
        // Not a boundary of the decoded text (inside é).
        assert_eq!(d.raw_offset(4), None);
    }

    #[test]
    fn surrogate_pairs_and_columns() {
        let line = r#"{"answer": "\ud83d\ude00 ok"}"#;
        let d = answer_member(line).unwrap();
        assert_eq!(d.text, "😀 ok");
        let ok = d.text.find("ok").unwrap();
        let r = d.raw_offset(ok).unwrap();
        assert_eq!(&line[r..r + 2], "ok");
        // Columns count UTF-16 code units: an emoji written as itself is two.
        assert_eq!(utf16_column("😀x", 4), 3);
        assert_eq!(utf16_column("abc", 0), 1);
    }

    #[test]
    fn broken_lines_give_nothing() {
        for line in
            ["", "[]", r#"{"answer": 3}"#, r#"{"answer": "open"#, r#"{"id": "x"}"#, r#"{"a" "b"}"#]
        {
            assert!(answer_member(line).is_none(), "{line}");
        }
    }
}
