//! PDF documents: the text layer of every page, with the byte range each page takes in
//! the document's text.
//!
//! A `.pdf` file of a folder store is read with `pdf-extract` (on `lopdf`), one page at a
//! time: the characters a page draws are written out in the order its content stream
//! draws them, with a line break where the baseline moves and a space where the pen jumps
//! right. Pages are joined by a blank line, so that no sentence runs from one page onto
//! the next, and the document's text is that joined text: its offsets (`start`/`end`,
//! manifest chunks) count bytes of the extracted text, not of the PDF file, whose bytes
//! are compressed streams no reader could count in. The SHA-256 and size are still the
//! PDF file's.
//!
//! What extraction cannot do, and how plumbline says so:
//!
//! * A page with no text layer (a scanned image) yields no text. A document none of
//!   whose pages has text is **unreadable**: it is reported in the store problems and a
//!   citation of it is `dead` with that reason, never an empty document that scores every
//!   sentence `unsupported` in silence. A document with some empty pages keeps them (the
//!   page numbers stay those of the file); each such page is reported, and a citation of
//!   such a page is a `bad_locator` that says so.
//! * Text in columns comes out column after column when the file draws it that way,
//!   which is how typesetting and word-processing programs write columns; a file that
//!   draws a two-column page line across line would come out interleaved. The two-column
//!   tests hold the first case on PDFs made by Ghostscript and by `lopdf`.
//! * An encrypted file is tried with the empty password (files that only restrict
//!   printing or copying open so); otherwise it is unreadable.
//! * `pdf-extract` can panic on malformed files; the panic is caught here and the file
//!   reported unreadable, so one bad file never stops a run.

use std::ops::Range;
use std::panic::{AssertUnwindSafe, catch_unwind};

/// The text of a PDF and where each page lies in it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PdfText {
    /// Pages' texts joined by `"\n\n"`.
    pub text: String,
    /// Byte range of page `i + 1` in `text` (empty for a page with no text).
    pub pages: Vec<Range<usize>>,
    /// 1-based numbers of the pages that have no text.
    pub empty_pages: Vec<u32>,
}

/// Why a PDF could not be read.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum PdfError {
    /// The file is not a PDF `lopdf` can parse.
    #[error("is not a readable PDF ({0})")]
    Parse(String),
    /// Encrypted with a password.
    #[error("is an encrypted PDF that needs a password; not read")]
    Encrypted,
    /// No page has a text layer.
    #[error(
        "has no text layer on any of its {0} page(s) (an image-only or scanned PDF); not read — add a text layer (OCR) to check citations of it"
    )]
    NoText(usize),
    /// No pages at all.
    #[error("has no pages; not read")]
    NoPages,
}

/// Extracts the text of every page of `bytes` (see the module documentation).
pub fn extract(bytes: &[u8]) -> Result<PdfText, PdfError> {
    match catch_unwind(AssertUnwindSafe(|| extract_inner(bytes))) {
        Ok(r) => r,
        Err(_) => Err(PdfError::Parse("the PDF reader failed on this file".into())),
    }
}

fn extract_inner(bytes: &[u8]) -> Result<PdfText, PdfError> {
    let mut doc =
        pdf_extract::Document::load_mem(bytes).map_err(|e| PdfError::Parse(e.to_string()))?;
    if doc.is_encrypted() && doc.decrypt("").is_err() {
        return Err(PdfError::Encrypted);
    }
    let pages_by_number = doc.get_pages();
    let numbers: Vec<u32> = pages_by_number.keys().copied().collect();
    if numbers.is_empty() {
        return Err(PdfError::NoPages);
    }
    for page_id in pages_by_number.values() {
        spell_out_quote_operators(&mut doc, *page_id);
    }
    let mut text = String::new();
    let mut pages = Vec::with_capacity(numbers.len());
    let mut empty_pages = Vec::new();
    for n in &numbers {
        let mut page = String::new();
        {
            let mut out = pdf_extract::PlainTextOutput::new(&mut page);
            // A page whose content cannot be interpreted counts as a page without text:
            // it is reported, and the other pages are still read.
            if pdf_extract::output_doc_page(&doc, &mut out, *n).is_err() {
                page.clear();
            }
        }
        let page = tidy(&page);
        if page.is_empty() {
            empty_pages.push(*n);
            pages.push(text.len()..text.len());
            continue;
        }
        if !text.is_empty() {
            text.push_str("\n\n");
        }
        let start = text.len();
        text.push_str(&page);
        pages.push(start..text.len());
    }
    if text.is_empty() {
        return Err(PdfError::NoText(numbers.len()));
    }
    Ok(PdfText { text, pages, empty_pages })
}

/// Rewrites the text operators `'` and `"` of a page's content as the operators they
/// abbreviate (ISO 32000-1, table 109: `string '` is `T* string Tj`, and `aw ac string "`
/// is `aw Tw ac Tc string '`), because the extractor does not know them and would drop
/// their text; Ghostscript, among others, writes every line after a text object's first
/// with `'`. Content that cannot be decoded is left as it is.
fn spell_out_quote_operators(doc: &mut pdf_extract::Document, page_id: pdf_extract::ObjectId) {
    use pdf_extract::content::{Content, Operation};
    let Ok(content) = doc.get_and_decode_page_content(page_id) else { return };
    if !content.operations.iter().any(|op| op.operator == "'" || op.operator == "\"") {
        return;
    }
    let mut ops = Vec::with_capacity(content.operations.len() + 8);
    for op in content.operations {
        match (op.operator.as_str(), op.operands.len()) {
            ("'", 1) => {
                ops.push(Operation::new("T*", Vec::new()));
                ops.push(Operation::new("Tj", op.operands));
            }
            ("\"", 3) => {
                let mut operands = op.operands.into_iter();
                let (aw, ac, text) = (operands.next(), operands.next(), operands.next());
                if let (Some(aw), Some(ac), Some(text)) = (aw, ac, text) {
                    ops.push(Operation::new("Tw", vec![aw]));
                    ops.push(Operation::new("Tc", vec![ac]));
                    ops.push(Operation::new("T*", Vec::new()));
                    ops.push(Operation::new("Tj", vec![text]));
                }
            }
            _ => ops.push(op),
        }
    }
    if let Ok(bytes) = (Content { operations: ops }).encode() {
        let _ = doc.change_page_content(page_id, bytes);
    }
}

/// Trims a page's text: no white space at either end, no trailing spaces on lines, at
/// most one blank line in a row, no NUL or other C0 controls but tab and newline.
fn tidy(page: &str) -> String {
    let mut out = String::with_capacity(page.len());
    let mut blank_run = 0;
    for line in page.lines() {
        let line: String = line
            .chars()
            .map(|c| if c.is_control() && c != '\t' { ' ' } else { c })
            .collect::<String>()
            .trim_end()
            .to_owned();
        if line.trim().is_empty() {
            blank_run += 1;
            continue;
        }
        if !out.is_empty() {
            out.push_str(if blank_run > 0 { "\n\n" } else { "\n" });
        }
        blank_run = 0;
        out.push_str(&line);
    }
    out
}

/// The 1-based page of `pages` that holds byte `offset` (the last page starting at or
/// before it), or `None` for a document without pages.
pub fn page_of(pages: &[Range<usize>], offset: usize) -> Option<u32> {
    let mut best = None;
    for (i, p) in pages.iter().enumerate() {
        if p.is_empty() {
            continue;
        }
        if p.start <= offset {
            best = Some(i as u32 + 1);
        } else {
            break;
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tidy_keeps_lines_and_one_blank_line() {
        assert_eq!(
            tidy("\n\n  Hello world  \n\n\n\nSecond\u{0}line\n  \n"),
            "  Hello world\n\nSecond line"
        );
        assert_eq!(tidy(" \n \n"), "");
    }

    #[test]
    fn page_of_finds_the_page_holding_an_offset() {
        let pages = vec![0..10, 12..12, 12..30, 32..40];
        assert_eq!(page_of(&pages, 0), Some(1));
        assert_eq!(page_of(&pages, 11), Some(1));
        assert_eq!(page_of(&pages, 12), Some(3));
        assert_eq!(page_of(&pages, 35), Some(4));
        assert_eq!(page_of(&[], 3), None);
    }

    #[test]
    fn garbage_is_unreadable_not_a_panic() {
        assert!(matches!(extract(b"%PDF-1.4 nonsense"), Err(PdfError::Parse(_))));
        assert!(matches!(extract(b""), Err(PdfError::Parse(_))));
    }
}
