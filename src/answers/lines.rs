//! Bounded line reading for JSON Lines inputs.
//!
//! `BufRead::read_until` would keep a line in memory however long it is, so one runaway
//! record (a log line holding a whole document, or a file without newlines) could exhaust
//! memory before any check ran. [`LineSource`] reads through `fill_buf`/`consume`, keeps at
//! most the configured number of bytes of a line, and discards the rest up to the next
//! newline, so the memory held is bounded by the limit whatever the input. It also does
//! the line bookkeeping every JSON Lines reader needs: 1-based physical line numbers, CRLF
//! endings, a byte order mark on the first line, and skipping blank lines.

use std::io::{self, BufRead};

/// The UTF-8 encoding of U+FEFF, which some editors put at the start of a file.
pub(crate) const BOM: &[u8] = b"\xEF\xBB\xBF";

/// What [`LineSource::next_line`] found.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum LineKind {
    /// The line's bytes are in the caller's buffer, without the line ending (and without a
    /// byte order mark on line 1).
    Text,
    /// The line was longer than the limit; its bytes were discarded. `bytes` is its length
    /// without the newline.
    TooLong { bytes: u64 },
}

/// Reads non-blank lines of at most `max_bytes` bytes each.
pub(crate) struct LineSource<R> {
    inner: R,
    max_bytes: usize,
    /// Physical lines consumed so far, blank ones included.
    line: usize,
}

impl<R: BufRead> LineSource<R> {
    pub(crate) fn new(inner: R, max_bytes: usize) -> Self {
        LineSource { inner, max_bytes, line: 0 }
    }

    /// Physical lines consumed so far, blank lines included.
    pub(crate) fn lines_read(&self) -> usize {
        self.line
    }

    /// Reads up to the next non-blank line and returns its 1-based line number.
    ///
    /// A line is blank when it holds only ASCII whitespace (after the byte order mark on
    /// line 1); blank lines are consumed and not returned. A too-long line that turns out
    /// to be blank is skipped as well. Returns `Ok(None)` at end of input.
    pub(crate) fn next_line(&mut self, buf: &mut Vec<u8>) -> io::Result<Option<(usize, LineKind)>> {
        loop {
            buf.clear();
            let mut consumed_any = false;
            // Set once the line has outgrown the limit: bytes seen so far, and whether any
            // of them was not whitespace.
            let mut overflow: Option<(u64, bool)> = None;
            loop {
                let chunk = match self.inner.fill_buf() {
                    Ok(chunk) => chunk,
                    Err(e) if e.kind() == io::ErrorKind::Interrupted => continue,
                    Err(e) => return Err(e),
                };
                if chunk.is_empty() {
                    break;
                }
                consumed_any = true;
                let (piece, used, ended) = match chunk.iter().position(|&b| b == b'\n') {
                    Some(p) => (&chunk[..p], p + 1, true),
                    None => (chunk, chunk.len(), false),
                };
                match &mut overflow {
                    Some((bytes, non_blank)) => {
                        *bytes += piece.len() as u64;
                        *non_blank |= !is_blank(piece);
                    }
                    None if buf.len() + piece.len() > self.max_bytes => {
                        let non_blank = !is_blank(buf) || !is_blank(piece);
                        overflow = Some(((buf.len() + piece.len()) as u64, non_blank));
                        buf.clear();
                    }
                    None => buf.extend_from_slice(piece),
                }
                self.inner.consume(used);
                if ended {
                    break;
                }
            }
            if !consumed_any {
                return Ok(None);
            }
            self.line += 1;
            if let Some((bytes, non_blank)) = overflow {
                if non_blank {
                    return Ok(Some((self.line, LineKind::TooLong { bytes })));
                }
                continue;
            }
            if buf.last() == Some(&b'\r') {
                buf.pop();
            }
            if self.line == 1 && buf.starts_with(BOM) {
                buf.drain(..BOM.len());
            }
            if !is_blank(buf) {
                return Ok(Some((self.line, LineKind::Text)));
            }
        }
    }
}

fn is_blank(bytes: &[u8]) -> bool {
    bytes.iter().all(u8::is_ascii_whitespace)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn all_lines(input: &[u8], max: usize) -> Vec<(usize, LineKind, Vec<u8>)> {
        let mut source = LineSource::new(input, max);
        let mut buf = Vec::new();
        let mut out = Vec::new();
        while let Some((line, kind)) = source.next_line(&mut buf).unwrap() {
            out.push((line, kind, buf.clone()));
        }
        out
    }

    #[test]
    fn numbers_physical_lines_and_skips_blank_ones() {
        let got = all_lines(b"a\n\n  \t\nb\r\n\r\nc", 100);
        assert_eq!(
            got,
            vec![
                (1, LineKind::Text, b"a".to_vec()),
                (4, LineKind::Text, b"b".to_vec()),
                (6, LineKind::Text, b"c".to_vec()),
            ]
        );
    }

    #[test]
    fn strips_a_bom_on_the_first_line_only() {
        let got = all_lines(b"\xEF\xBB\xBFx\n\xEF\xBB\xBFy\n", 100);
        assert_eq!(got[0].2, b"x");
        assert_eq!(got[1].2, b"\xEF\xBB\xBFy");
    }

    #[test]
    fn a_bom_alone_is_a_blank_line() {
        assert!(all_lines(b"\xEF\xBB\xBF\n", 100).is_empty());
    }

    #[test]
    fn too_long_lines_are_reported_and_skipped_past() {
        let got = all_lines(b"12345\n123456\nok\n", 5);
        assert_eq!(got[0], (1, LineKind::Text, b"12345".to_vec()));
        assert_eq!(got[1], (2, LineKind::TooLong { bytes: 6 }, Vec::new()));
        assert_eq!(got[2], (3, LineKind::Text, b"ok".to_vec()));
    }

    #[test]
    fn a_too_long_blank_line_is_blank() {
        let got = all_lines(b"          \nok", 3);
        assert_eq!(got, vec![(2, LineKind::Text, b"ok".to_vec())]);
    }

    #[test]
    fn counts_lines_read() {
        let mut source = LineSource::new(&b"a\n\n"[..], 10);
        let mut buf = Vec::new();
        while source.next_line(&mut buf).unwrap().is_some() {}
        assert_eq!(source.lines_read(), 2);
    }
}
