//! Visible text of a document, and a compact map from it back to the bytes of the file.
//!
//! Citations count bytes of the file as stored (SPEC.md, "The document store"), while the
//! support checker reads and highlights *visible* text: what a reader sees once the markup
//! is rendered. [`extract`] produces both the visible text and an [`OffsetMap`] that turns
//! any visible position back into a file position and any file range into the visible
//! bytes it covers.
//!
//! # Formats
//!
//! * `.txt`: the file is its own visible text; the map is the identity (shifted past a UTF-8
//!   byte-order mark, if any) and the text is not copied ([`Extracted::text`] stays empty; read
//!   it with [`Extracted::visible`]).
//! * `.md`, `.markdown`: CommonMark with tables, footnotes, strikethrough, task lists,
//!   definition lists and front matter (`pulldown-cmark`). Text, inline code and code blocks
//!   are kept; link and image targets, task markers, footnote references and front matter are
//!   dropped; image alt text is kept (it is prose written in the file). Raw HTML blocks are
//!   reduced with the HTML rules below; inline HTML tags are dropped (`<br>` breaks a line).
//! * `.html`, `.htm`: tokenized as WHATWG HTML (`html5gum`); entities are decoded. The
//!   content of `script`, `style`, `template`, `noscript`, `iframe`, `noembed`, `noframes`
//!   and `datalist` is dropped (a browser with scripting enabled shows none of it; in
//!   particular `noscript` content is raw text to a scripting browser, so it is dropped, not
//!   kept), as are comments, doctypes and attribute values (`alt`, `title`, ...). `<title>`
//!   text is kept as the first block. Inside `<head>` nothing else carries text; stray text a
//!   browser would move into the body is kept, as the browser shows it. Whitespace collapses
//!   to one space as CSS `white-space: normal` renders it, except inside `pre`, `listing`,
//!   `textarea`, `xmp` and `plaintext`.
//!
//! Block boundaries (paragraphs, headings, list items, table rows and cells, code blocks,
//! `div`, `br`, ...) become `"\n"` or `"\n\n"` so that no sentence runs across two blocks:
//! `"\n\n"` after paragraph-level blocks (paragraphs, headings, lists, tables, block quotes,
//! code blocks, sections), `"\n"` after line-level ones (items, rows, cells, `div`, `br`).
//!
//! # The offset map
//!
//! The map is a sorted list of segments, 12 bytes each, that tile the visible text. A
//! *linear* segment maps visible bytes one to one onto a file range (the text was copied, or
//! only an ASCII byte changed: a collapsed space, CR to LF). A *lump* segment maps all its
//! visible bytes onto one whole file range (an entity such as `&amp;`, an escape such as
//! `\*`, a separator standing for the markup between two blocks): a start inside it maps to
//! the start of that range and an end inside it to the end of the range. File bytes that
//! carry no visible text (tags, markup, dropped elements) simply lie between segments. All
//! three lookups are monotone.
//!
//! HTML nesting is tracked with an explicit stack bounded by [`ExtractOptions::max_html_depth`];
//! deeper elements are still extracted as text but not tracked structurally (for example a
//! `<pre>` or `<template>` nested deeper than the bound is treated as ordinary markup). No part
//! of extraction recurses on the input's nesting.
//!
//! Inputs longer than 1 GiB are extracted from their first 1 GiB only, so that every
//! position fits the map's 32-bit fields; the store refuses such files long before that
//! (see [`crate::store::StoreLimits::max_document_bytes`]).

use std::fmt;
use std::ops::Range;
use std::path::Path;

use serde::{Deserialize, Serialize};

/// The default bound on tracked HTML nesting depth.
pub const DEFAULT_MAX_HTML_DEPTH: usize = 512;

/// Inputs are extracted from at most this many bytes (see the module docs).
pub const MAX_EXTRACT_BYTES: usize = 1 << 30;

/// A document's format, chosen by its file extension.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Format {
    /// Plain text (`.txt`): the file is its visible text.
    Text,
    /// CommonMark (`.md`, `.markdown`).
    Markdown,
    /// HTML (`.html`, `.htm`).
    Html,
    /// PDF (`.pdf`): the text layer, extracted page by page ([`crate::store::pdf`]). The
    /// document's text is that extracted text, so it is its own visible text, as for
    /// [`Format::Text`], and offsets count its bytes.
    Pdf,
}

impl Format {
    /// The format a path's extension names (ASCII case-insensitive), or `None` when the file
    /// is not a document.
    pub fn from_path(path: &Path) -> Option<Format> {
        Format::from_extension(path.extension()?.to_str()?)
    }

    /// The format an extension (without the dot, ASCII case-insensitive) names.
    pub fn from_extension(ext: &str) -> Option<Format> {
        if ext.eq_ignore_ascii_case("txt") {
            Some(Format::Text)
        } else if ext.eq_ignore_ascii_case("md") || ext.eq_ignore_ascii_case("markdown") {
            Some(Format::Markdown)
        } else if ext.eq_ignore_ascii_case("html") || ext.eq_ignore_ascii_case("htm") {
            Some(Format::Html)
        } else if ext.eq_ignore_ascii_case("pdf") {
            Some(Format::Pdf)
        } else {
            None
        }
    }

    /// A lower-case name: `text`, `markdown`, `html` or `pdf`.
    pub fn as_str(self) -> &'static str {
        match self {
            Format::Text => "text",
            Format::Markdown => "markdown",
            Format::Html => "html",
            Format::Pdf => "pdf",
        }
    }

    /// The format a lower-case name of [`Format::as_str`] names (for the `format` field of
    /// chunk exports and database rows; `pdf` is not one, since a row holds text).
    pub fn from_name(name: &str) -> Option<Format> {
        match name {
            "text" => Some(Format::Text),
            "markdown" => Some(Format::Markdown),
            "html" => Some(Format::Html),
            _ => None,
        }
    }
}

impl fmt::Display for Format {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

/// Settings for [`extract_with`].
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ExtractOptions {
    /// How many open HTML elements are tracked; deeper ones are extracted as text only.
    pub max_html_depth: usize,
}

impl Default for ExtractOptions {
    fn default() -> Self {
        ExtractOptions { max_html_depth: DEFAULT_MAX_HTML_DEPTH }
    }
}

/// A document's visible text and its map back to the file.
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct Extracted {
    /// The visible text. Empty when [`OffsetMap::is_verbatim`]: the visible text is then the
    /// file text itself (see [`Extracted::visible`]), kept once, not twice.
    pub text: String,
    /// Visible byte offsets to file byte offsets and back.
    pub map: OffsetMap,
}

impl Extracted {
    /// The visible text, given the file text it was extracted from.
    pub fn visible<'a>(&'a self, raw: &'a str) -> &'a str {
        match self.map.repr {
            Repr::Shift { offset, len } => raw.get(offset..offset + len).unwrap_or(""),
            Repr::Segments { .. } => &self.text,
        }
    }

    /// The visible bytes whose source lies inside the file range `file_start..file_end`,
    /// always on char boundaries of the visible text, even when the file offsets are not on
    /// char boundaries of `raw` (they are first moved inwards onto them).
    pub fn visible_range(&self, raw: &str, file_start: usize, file_end: usize) -> Range<usize> {
        let start = ceil_char_boundary(raw, file_start);
        let end = floor_char_boundary(raw, file_end).max(start);
        let r = self.map.to_visible_range(start, end);
        let text = self.visible(raw);
        let s = ceil_char_boundary(text, r.start);
        let e = floor_char_boundary(text, r.end).max(s);
        s..e
    }
}

/// Extracts the visible text of `raw` read as `format`, with default options.
pub fn extract(format: Format, raw: &str) -> Extracted {
    extract_with(format, raw, &ExtractOptions::default())
}

/// Extracts the visible text of `raw` read as `format`.
pub fn extract_with(format: Format, raw: &str, options: &ExtractOptions) -> Extracted {
    let bom = if raw.starts_with('\u{feff}') { 3 } else { 0 };
    let used = floor_char_boundary(raw, MAX_EXTRACT_BYTES);
    match format {
        Format::Text | Format::Pdf => Extracted {
            text: String::new(),
            map: OffsetMap { repr: Repr::Shift { offset: bom, len: used - bom } },
        },
        Format::Markdown => super::markdown::extract(raw, bom..used, options),
        Format::Html => super::html::extract(raw, bom..used, options),
    }
}

/// Maps visible byte offsets to file byte offsets and back (see the module docs).
///
/// All lookups clamp out-of-range arguments and are monotone: a later visible position
/// never maps to an earlier file position, and vice versa.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct OffsetMap {
    repr: Repr,
}

#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
enum Repr {
    /// Visible byte `v` is file byte `offset + v`; the visible text is `raw[offset..offset + len]`.
    Shift { offset: usize, len: usize },
    /// Segments sorted by `vis`, the first at 0, tiling `0..len`.
    Segments { segs: Box<[Seg]>, len: u32 },
}

/// One segment: visible bytes `vis..next.vis` come from file bytes `file..file + flen`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub(crate) struct Seg {
    vis: u32,
    file: u32,
    /// The file length; the top bit ([`LUMP`]) marks a lump segment.
    file_len: u32,
}

const LUMP: u32 = 1 << 31;

impl Seg {
    fn flen(self) -> usize {
        (self.file_len & !LUMP) as usize
    }
    fn is_lump(self) -> bool {
        self.file_len & LUMP != 0
    }
    fn file_end(self) -> usize {
        self.file as usize + self.flen()
    }
}

impl Default for OffsetMap {
    fn default() -> Self {
        OffsetMap { repr: Repr::Segments { segs: Box::new([]), len: 0 } }
    }
}

impl OffsetMap {
    /// The identity map over `len` bytes.
    pub fn identity(len: usize) -> OffsetMap {
        OffsetMap { repr: Repr::Shift { offset: 0, len } }
    }

    /// Whether the visible text is a verbatim slice of the file (text documents), in which
    /// case [`Extracted::text`] is left empty.
    pub fn is_verbatim(&self) -> bool {
        matches!(self.repr, Repr::Shift { .. })
    }

    /// The length of the visible text in bytes.
    pub fn visible_len(&self) -> usize {
        match self.repr {
            Repr::Shift { len, .. } => len,
            Repr::Segments { len, .. } => len as usize,
        }
    }

    /// How many segments the map holds (0 for a verbatim map).
    pub fn segment_count(&self) -> usize {
        match &self.repr {
            Repr::Shift { .. } => 0,
            Repr::Segments { segs, .. } => segs.len(),
        }
    }

    /// Heap memory the map uses, in bytes.
    pub fn heap_bytes(&self) -> usize {
        self.segment_count() * std::mem::size_of::<Seg>()
    }

    /// The file offset where the visible byte at `visible` comes from (a start position).
    /// `visible_len()` maps to the end of the last visible byte's source.
    pub fn to_file(&self, visible: usize) -> usize {
        match &self.repr {
            Repr::Shift { offset, len } => offset + visible.min(*len),
            Repr::Segments { segs, len } => {
                let Some(last) = segs.last() else { return 0 };
                if visible >= *len as usize {
                    return last.file_end();
                }
                let v = visible as u32;
                let seg = segs[segs.partition_point(|s| s.vis <= v) - 1];
                if seg.is_lump() { seg.file as usize } else { (seg.file + (v - seg.vis)) as usize }
            }
        }
    }

    /// The file offset that ends the source of the visible bytes before `visible_end` (an
    /// exclusive end position). An end inside a lump segment maps to the end of its source.
    pub fn to_file_end(&self, visible_end: usize) -> usize {
        match &self.repr {
            Repr::Shift { offset, len } => offset + visible_end.min(*len),
            Repr::Segments { segs, len } => {
                let Some(first) = segs.first() else { return 0 };
                if visible_end == 0 {
                    return first.file as usize;
                }
                let e = visible_end.min(*len as usize) as u32;
                let seg = segs[segs.partition_point(|s| s.vis < e) - 1];
                if seg.is_lump() { seg.file_end() } else { (seg.file + (e - seg.vis)) as usize }
            }
        }
    }

    /// The file range a visible range comes from: `to_file(start)..to_file_end(end)`.
    pub fn to_file_range(&self, visible: Range<usize>) -> Range<usize> {
        let start = self.to_file(visible.start);
        let end = self.to_file_end(visible.end.max(visible.start)).max(start);
        start..end
    }

    /// The visible bytes whose source lies inside the file range `file_start..file_end`:
    /// from the first visible byte whose source starts at or after `file_start` to the last
    /// one whose source ends at or before `file_end` (empty when there is none).
    ///
    /// When both file offsets lie on char boundaries of the file, so do the returned ones on
    /// the visible text: linear segments only ever differ from the file in ASCII bytes, and
    /// every segment starts on a char boundary. [`Extracted::visible_range`] also rounds
    /// offsets that are not.
    pub fn to_visible_range(&self, file_start: usize, file_end: usize) -> Range<usize> {
        let file_end = file_end.max(file_start);
        if let Repr::Shift { offset, len } = self.repr {
            let s = file_start.saturating_sub(offset).min(len);
            let e = file_end.saturating_sub(offset).min(len).max(s);
            return s..e;
        }
        let len = self.visible_len();
        // First v with to_file(v) >= file_start.
        let (mut lo, mut hi) = (0, len);
        while lo < hi {
            let mid = lo + (hi - lo) / 2;
            if self.to_file(mid) >= file_start { hi = mid } else { lo = mid + 1 }
        }
        let start = lo;
        // Last e with to_file_end(e) <= file_end.
        let (mut lo, mut hi) = (0, len);
        while lo < hi {
            let mid = lo + (hi - lo).div_ceil(2);
            if self.to_file_end(mid) <= file_end { lo = mid } else { hi = mid - 1 }
        }
        let end = if self.to_file_end(lo) <= file_end { lo } else { 0 };
        start..end.max(start)
    }
}

/// Builds the visible text and its segments. Knows the file text, so that it only records a
/// segment as linear when the visible bytes are the file bytes up to ASCII substitutions.
pub(crate) struct Builder<'r> {
    raw: &'r [u8],
    text: String,
    segs: Vec<Seg>,
    /// End of the source of the last visible byte: later segments never start before it.
    floor: usize,
    /// Newlines owed before the next visible text (0, 1 or 2).
    pending_breaks: u8,
    /// Collapsible whitespace seen since the last visible text, as a file range.
    pending_space: Option<(usize, usize)>,
}

impl<'r> Builder<'r> {
    pub(crate) fn new(raw: &'r str) -> Builder<'r> {
        Builder {
            raw: raw.as_bytes(),
            text: String::with_capacity(raw.len() / 2),
            segs: Vec::new(),
            floor: 0,
            pending_breaks: 0,
            pending_space: None,
        }
    }

    /// Inline text: runs of ASCII whitespace collapse to one space. `positional` says that
    /// `text` maps byte for byte onto `file_start..file_start + file_len`; otherwise every
    /// part of it maps onto that whole range.
    pub(crate) fn inline(
        &mut self,
        text: &str,
        file_start: usize,
        file_len: usize,
        positional: bool,
    ) {
        if !positional {
            return self.inline_lump(text, file_start, file_len);
        }
        let bytes = text.as_bytes();
        let mut i = 0;
        while i < bytes.len() {
            let ws = is_space(bytes[i]);
            let mut j = i + 1;
            while j < bytes.len() && is_space(bytes[j]) == ws {
                j += 1;
            }
            let (fs, fl) =
                if positional { (file_start + i, j - i) } else { (file_start, file_len) };
            if ws {
                self.space(fs, fs + fl);
            } else {
                self.flush(fs);
                self.push(&text[i..j], fs, fl);
            }
            i = j;
        }
    }

    /// Inline text that maps as a whole onto `file_start..file_start + file_len`: white
    /// space inside it collapses, and all of its visible bytes map onto the whole range.
    ///
    /// Pushing its words one by one would give the first word the whole range and leave
    /// the later ones an empty range at its end, since segments never move backwards (a
    /// code span whose CRLF became two spaces mapped its word onto nothing, found by the
    /// `extract_markdown` fuzz target).
    fn inline_lump(&mut self, text: &str, file_start: usize, file_len: usize) {
        let file_end = file_start + file_len;
        let inner = text.trim_start_matches(|c: char| c.is_ascii() && is_space(c as u8));
        if inner.len() < text.len() {
            self.space(file_start, file_start);
        }
        let trimmed = inner.trim_end_matches(|c: char| c.is_ascii() && is_space(c as u8));
        if !trimmed.is_empty() {
            let mut collapsed = String::with_capacity(trimmed.len());
            let mut in_space = false;
            for c in trimmed.chars() {
                if c.is_ascii() && is_space(c as u8) {
                    if !in_space {
                        collapsed.push(' ');
                    }
                    in_space = true;
                } else {
                    collapsed.push(c);
                    in_space = false;
                }
            }
            self.flush(file_start);
            self.push(&collapsed, file_start, file_len);
        }
        if trimmed.len() < inner.len() {
            self.space(file_end, file_end);
        }
    }

    /// Preformatted text, kept as it is.
    pub(crate) fn pre(&mut self, text: &str, file_start: usize, file_len: usize) {
        if text.is_empty() {
            return;
        }
        self.flush(file_start);
        self.push(text, file_start, file_len);
    }

    /// Collapsible whitespace at `file_start..file_end`.
    pub(crate) fn space(&mut self, file_start: usize, file_end: usize) {
        if self.text.is_empty() || self.pending_breaks > 0 {
            return;
        }
        self.pending_space = Some(match self.pending_space {
            Some((s, _)) => (s, file_end.max(s)),
            None => (file_start, file_end.max(file_start)),
        });
    }

    /// A block boundary owing `newlines` (1 or 2) before the next text.
    pub(crate) fn block(&mut self, newlines: u8) {
        if newlines == 0 {
            return;
        }
        self.pending_space = None;
        self.pending_breaks = self.pending_breaks.max(newlines.min(2));
    }

    /// A forced line break (`<br>`, a Markdown hard break): adds one newline, up to two.
    pub(crate) fn line_break(&mut self) {
        self.pending_space = None;
        self.pending_breaks = (self.pending_breaks + 1).min(2);
    }

    /// Writes what is owed before visible text whose source starts at `next`.
    fn flush(&mut self, next: usize) {
        if self.text.is_empty() {
            self.pending_breaks = 0;
            self.pending_space = None;
            return;
        }
        if self.pending_breaks > 0 {
            let have = self.text.bytes().rev().take(2).take_while(|&b| b == b'\n').count() as u8;
            let need = self.pending_breaks.saturating_sub(have);
            self.pending_breaks = 0;
            self.pending_space = None;
            if need > 0 {
                let from = self.floor;
                self.push(if need == 1 { "\n" } else { "\n\n" }, from, next.saturating_sub(from));
            }
        } else if let Some((s, e)) = self.pending_space.take() {
            if !self.text.as_bytes().last().is_some_and(|&b| is_space(b)) {
                self.push(" ", s, e - s);
            }
        }
    }

    /// Appends `text` with source `file_start..file_start + file_len`, clamped so that the
    /// segments stay monotone.
    fn push(&mut self, text: &str, file_start: usize, file_len: usize) {
        if text.is_empty() || self.text.len() + text.len() >= LUMP as usize {
            return;
        }
        let n = self.raw.len();
        let end = (file_start + file_len).min(n);
        let fs = file_start.max(self.floor).min(n);
        let fe = end.max(fs);
        let linear = text.len() == fe - fs && ascii_compatible(text.as_bytes(), &self.raw[fs..fe]);
        let vis = self.text.len() as u32;
        match self.segs.last_mut() {
            Some(last)
                if linear
                    && !last.is_lump()
                    && last.file_end() == fs
                    && (last.file_len as usize + text.len()) < LUMP as usize =>
            {
                last.file_len += text.len() as u32;
            }
            _ => self.segs.push(Seg {
                vis,
                file: fs as u32,
                file_len: (fe - fs) as u32 | if linear { 0 } else { LUMP },
            }),
        }
        self.text.push_str(text);
        self.floor = fe;
    }

    pub(crate) fn finish(self) -> Extracted {
        let len = self.text.len() as u32;
        Extracted {
            text: self.text,
            map: OffsetMap { repr: Repr::Segments { segs: self.segs.into_boxed_slice(), len } },
        }
    }
}

/// ASCII whitespace as HTML defines it (tab, LF, FF, CR, space).
pub(crate) fn is_space(b: u8) -> bool {
    matches!(b, b' ' | b'\t' | b'\n' | b'\r' | b'\x0c')
}

/// Equal bytes, or differing only where both sides are ASCII (so char boundaries agree).
fn ascii_compatible(a: &[u8], b: &[u8]) -> bool {
    a.len() == b.len()
        && (a == b || a.iter().zip(b).all(|(x, y)| x == y || (x.is_ascii() && y.is_ascii())))
}

/// Aligns decoded text `out` with its source bytes `src`, calling
/// `sink(part, src_offset, src_len, positional)` for consecutive parts of `out`, and returns
/// how many source bytes were accounted for.
///
/// Equal bytes align one to one; a line ending (`\r\n`, `\r` or `\n`) aligns with one `\n`
/// or space; NUL aligns with U+FFFD; a character reference (`&...`) and anything else that
/// differs becomes one lump covering the rest.
pub(crate) fn align(
    src: &[u8],
    out: &str,
    mut sink: impl FnMut(&str, usize, usize, bool),
) -> usize {
    let ob = out.as_bytes();
    if src == ob {
        sink(out, 0, src.len(), true);
        return src.len();
    }
    if src.first() == Some(&b'&') || src.is_empty() {
        sink(out, 0, src.len(), false);
        return src.len();
    }
    let (mut i, mut j) = (0, 0);
    let (mut run_i, mut run_j) = (0, 0);
    let flush = |sink: &mut dyn FnMut(&str, usize, usize, bool),
                 ri: usize,
                 rj: usize,
                 i: usize,
                 j: usize| {
        if j > rj {
            sink(&out[rj..j], ri, i - ri, true);
        }
    };
    while j < ob.len() {
        if i < src.len() && src[i] == ob[j] {
            i += 1;
            j += 1;
            continue;
        }
        if i < src.len() && src[i] == b'\r' && matches!(ob[j], b'\n' | b' ') {
            // CR, or the CR of CRLF, becomes the one LF or space; a following LF is skipped.
            i += 1;
            j += 1;
            if i < src.len() && src[i] == b'\n' {
                flush(&mut sink, run_i, run_j, i, j);
                i += 1;
                (run_i, run_j) = (i, j);
            }
            continue;
        }
        if i < src.len() && src[i] == b'\n' && ob[j] == b' ' {
            i += 1;
            j += 1;
            continue;
        }
        // Mismatch: back up onto a char boundary of `out` (equal bytes were copied one to one).
        while !out.is_char_boundary(j) {
            i -= 1;
            j -= 1;
        }
        if i < src.len() && matches!(src[i], b'\r' | b'\n') {
            // A CR the decoder dropped, or the LF of a CRLF whose CR an earlier piece of
            // text already stood for (the tokenizer can emit the CR's newline before it
            // reads the LF; found by the `extract_html` fuzz target).
            flush(&mut sink, run_i, run_j, i, j);
            i += 1;
            (run_i, run_j) = (i, j);
            continue;
        }
        flush(&mut sink, run_i, run_j, i, j);
        if i < src.len() && src[i] == 0 && out[j..].starts_with('\u{fffd}') {
            sink("\u{fffd}", i, 1, false);
            i += 1;
            j += 3;
            (run_i, run_j) = (i, j);
            continue;
        }
        sink(&out[j..], i, src.len() - i, false);
        return src.len();
    }
    flush(&mut sink, run_i, run_j, i, j);
    i
}

/// The largest char boundary of `s` at or below `i`.
pub(crate) fn floor_char_boundary(s: &str, i: usize) -> usize {
    if i >= s.len() {
        return s.len();
    }
    let mut i = i;
    while !s.is_char_boundary(i) {
        i -= 1;
    }
    i
}

/// The smallest char boundary of `s` at or above `i`.
pub(crate) fn ceil_char_boundary(s: &str, i: usize) -> usize {
    if i >= s.len() {
        return s.len();
    }
    let mut i = i;
    while !s.is_char_boundary(i) {
        i += 1;
    }
    i
}

#[cfg(test)]
mod tests {
    use super::testutil::*;
    use super::*;

    #[test]
    fn format_from_path() {
        assert_eq!(Format::from_path(Path::new("a/b.TXT")), Some(Format::Text));
        assert_eq!(Format::from_path(Path::new("b.Md")), Some(Format::Markdown));
        assert_eq!(Format::from_path(Path::new("b.markdown")), Some(Format::Markdown));
        assert_eq!(Format::from_path(Path::new("b.HTM")), Some(Format::Html));
        assert_eq!(Format::from_path(Path::new("b.html")), Some(Format::Html));
        assert_eq!(Format::from_path(Path::new("b.json")), None);
        assert_eq!(Format::from_path(Path::new("README")), None);
        assert_eq!(Format::from_path(Path::new(".md")), None);
    }

    #[test]
    fn text_is_identity_without_copy() {
        let raw = "Hello, wörld.\r\nSecond line.";
        let ex = extract(Format::Text, raw);
        assert!(ex.text.is_empty() && ex.map.is_verbatim());
        assert_eq!(ex.visible(raw), raw);
        for i in 0..=raw.len() {
            assert_eq!(ex.map.to_file(i), i);
            assert_eq!(ex.map.to_file_end(i), i);
        }
        assert_eq!(ex.map.to_visible_range(3, 9), 3..9);
        assert_eq!(ex.map.to_visible_range(9, 3), 9..9);
        assert_eq!(ex.map.to_visible_range(100, 200), raw.len()..raw.len());
    }

    #[test]
    fn text_with_bom_skips_it() {
        let raw = "\u{feff}Hello";
        let ex = extract(Format::Text, raw);
        assert_eq!(ex.visible(raw), "Hello");
        assert_eq!(ex.map.to_file(0), 3);
        assert_eq!(ex.map.to_visible_range(0, raw.len()), 0..5);
    }

    #[test]
    fn empty_inputs() {
        for f in [Format::Text, Format::Markdown, Format::Html] {
            let ex = extract(f, "");
            assert_eq!(ex.visible(""), "");
            assert_eq!(ex.map.to_file(0), 0);
            assert_eq!(ex.map.to_file_end(0), 0);
            assert_eq!(ex.map.to_visible_range(0, 0), 0..0);
            assert_eq!(ex.map.to_visible_range(0, 10), 0..0);
        }
    }

    #[test]
    fn builder_merges_linear_runs_and_lumps_entities() {
        let raw = "ab &amp; cd";
        let mut b = Builder::new(raw);
        b.inline("ab ", 0, 3, true);
        b.inline("&", 3, 5, false);
        b.inline(" cd", 8, 3, true);
        let ex = b.finish();
        assert_eq!(ex.text, "ab & cd");
        assert_eq!(ex.map.segment_count(), 3);
        assert_eq!(ex.map.to_file(3), 3);
        assert_eq!(ex.map.to_file_end(4), 8);
        assert_eq!(ex.map.to_visible_range(3, 8), 3..4);
        assert_eq!(ex.map.to_visible_range(4, 8), 4..4);
        assert_eq!(ex.map.to_file_range(0..7), 0..11);
        monotone(&ex, raw);
    }

    #[test]
    fn align_handles_line_endings_nul_and_references() {
        let mut parts = Vec::new();
        let n = align(b"a\r\nb", "a\nb", |p, o, l, pos| parts.push((p.to_string(), o, l, pos)));
        assert_eq!(n, 4);
        assert_eq!(parts, vec![("a\n".into(), 0, 2, true), ("b".into(), 3, 1, true)]);
        parts.clear();
        align(b"&amp;", "&", |p, o, l, pos| parts.push((p.to_string(), o, l, pos)));
        assert_eq!(parts, vec![("&".into(), 0, 5, false)]);
        parts.clear();
        align(b"x\0y", "x\u{fffd}y", |p, o, l, pos| parts.push((p.to_string(), o, l, pos)));
        assert_eq!(
            parts,
            vec![
                ("x".into(), 0, 1, true),
                ("\u{fffd}".into(), 1, 1, false),
                ("y".into(), 2, 1, true)
            ]
        );
        parts.clear();
        let n = align(b"</p", "</", |p, o, l, pos| parts.push((p.to_string(), o, l, pos)));
        assert_eq!(n, 2);
        parts.clear();
        align("é-x".as_bytes(), "è-x", |p, o, l, pos| parts.push((p.to_string(), o, l, pos)));
        assert_eq!(parts, vec![("è-x".into(), 0, 4, false)]);
    }
}

/// Checks shared by the extraction tests.
#[cfg(test)]
pub(crate) mod testutil {
    use super::Extracted;

    /// Every visible word maps back onto file bytes that contain it, once tags, escapes and
    /// entities are undone in those bytes, and the file range maps back onto the word.
    pub(crate) fn words_map_back(raw: &str, ex: &Extracted) {
        let text = ex.visible(raw);
        let mut words = Vec::new();
        let mut start = None;
        for (i, c) in text.char_indices().chain([(text.len(), ' ')]) {
            match (c.is_alphanumeric(), start) {
                (true, None) => start = Some(i),
                (false, Some(s)) => {
                    words.push(s..i);
                    start = None;
                }
                _ => {}
            }
        }
        assert!(!text.is_empty() || raw.trim().is_empty() || words.is_empty());
        for w in words {
            let word = &text[w.clone()];
            let fs = ex.map.to_file(w.start);
            let fe = ex.map.to_file_end(w.end);
            assert!(fs <= fe && fe <= raw.len(), "{word:?}: {fs}..{fe} in {raw:?}");
            let src = &raw[fs..fe];
            if !src.contains(word) {
                let mut plain = String::new();
                let mut in_tag = false;
                for c in src.chars() {
                    match c {
                        '<' => in_tag = true,
                        '>' if in_tag => in_tag = false,
                        '\\' => {}
                        c if !in_tag => plain.push(c),
                        _ => {}
                    }
                }
                let plain = html_escape::decode_html_entities(&plain);
                assert!(plain.contains(word), "{word:?} maps to {src:?} ({fs}..{fe})");
            }
            let back = ex.map.to_visible_range(fs, fe);
            assert!(back.start <= w.start && back.end >= w.end, "{word:?}: {back:?} vs {w:?}");
        }
    }

    pub(crate) fn monotone(ex: &Extracted, raw: &str) {
        let text = ex.visible(raw);
        let mut last = 0;
        let mut last_end = 0;
        for v in 0..=text.len() {
            let f = ex.map.to_file(v);
            let e = ex.map.to_file_end(v);
            assert!(f >= last && e >= last_end, "not monotone at {v}");
            assert!(f <= raw.len() && e <= raw.len());
            last = f;
            last_end = e;
        }
        for fs in 0..=raw.len() {
            for fe in fs..=raw.len().min(fs + 40) {
                let r = ex.map.to_visible_range(fs, fe);
                assert!(r.start <= r.end && r.end <= text.len());
                if raw.is_char_boundary(fs) && raw.is_char_boundary(fe) {
                    assert!(
                        text.is_char_boundary(r.start) && text.is_char_boundary(r.end),
                        "{fs}..{fe} -> {r:?}"
                    );
                }
                let rr = ex.visible_range(raw, fs, fe);
                assert!(text.is_char_boundary(rr.start) && text.is_char_boundary(rr.end));
            }
        }
    }
}
