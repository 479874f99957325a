//! HTML to visible text, on the `html5gum` WHATWG tokenizer.
//!
//! A tokenizer, not a tree builder: the few tree-construction rules that decide what is
//! visible are approximated here with an explicit, bounded stack of open elements (implied
//! end tags for `p`, `li`, `dt`/`dd`, table cells and rows, `option`; an end tag closes the
//! elements opened after its start tag). The tokenizer's state switches for raw-text elements
//! (`script`, `style`, `title`, `textarea`, ...) follow [`html5gum::naive_next_state`], which
//! is what a browser with scripting enabled does for those elements.
//!
//! Source positions: the tokenizer reports how far it has read; each piece of text it emits
//! is located by matching it against the bytes just read, falling back to the range since
//! the previous token when it was decoded (entities, CR, NUL).

use std::collections::HashMap;
use std::convert::Infallible;
use std::ops::Range;

use html5gum::{Emitter, Error, State, Tokenizer};

use super::extract::{Builder, ExtractOptions, Extracted, align};

/// Extracts `raw[range]` (the whole file minus a byte-order mark) as HTML.
pub(crate) fn extract(raw: &str, range: Range<usize>, options: &ExtractOptions) -> Extracted {
    let builder = Builder::new(raw);
    walk(&raw[range.clone()], Translate::Offset(range.start), builder, options).finish()
}

/// How positions in the tokenized text translate into file positions.
pub(crate) enum Translate<'a> {
    /// The tokenized text is the file from this offset on.
    Offset(usize),
    /// The tokenized text is these pieces of the file, concatenated (a Markdown HTML block).
    Pieces(&'a [Piece]),
}

/// `buf..buf + buf_len` of the tokenized text comes from `file..file + file_len`.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Piece {
    pub(crate) buf: usize,
    pub(crate) buf_len: usize,
    pub(crate) file: usize,
    pub(crate) file_len: usize,
}

impl Translate<'_> {
    fn range(&self, start: usize, end: usize) -> (usize, usize) {
        match self {
            Translate::Offset(o) => (o + start, o + end),
            Translate::Pieces(pieces) => {
                if pieces.is_empty() {
                    return (0, 0);
                }
                let at = |p: usize| pieces.partition_point(|x| x.buf <= p).max(1) - 1;
                let ps = pieces[at(start)];
                let fs = if ps.buf_len == ps.file_len {
                    ps.file + (start - ps.buf).min(ps.file_len)
                } else {
                    ps.file
                };
                if end <= start {
                    return (fs, fs);
                }
                let pe = pieces[at(end - 1)];
                let fe = if pe.buf_len == pe.file_len {
                    pe.file + (end - pe.buf).min(pe.file_len)
                } else {
                    pe.file + pe.file_len
                };
                (fs, fe.max(fs))
            }
        }
    }
}

/// Tokenizes `src` and writes its visible text into `builder`, which it returns.
pub(crate) fn walk<'r>(
    src: &str,
    translate: Translate<'_>,
    builder: Builder<'r>,
    options: &ExtractOptions,
) -> Builder<'r> {
    let mut st = Walker {
        src: src.as_bytes(),
        translate,
        b: builder,
        pos: 0,
        cursor: 0,
        name: Vec::new(),
        is_end: false,
        self_closing: false,
        last_start: Vec::new(),
        raw_mode: None,
        stack: Vec::new(),
        ids: HashMap::new(),
        names: Vec::new(),
        counts: Vec::new(),
        untracked: 0,
        drop_depth: 0,
        pre_depth: 0,
        skip_lf: false,
        pending: Vec::new(),
        max_depth: options.max_html_depth,
    };
    // The emitter never yields tokens, so the iteration cannot fail (`StringReader`'s error
    // type is `Infallible`).
    let _ = Tokenizer::new_with_emitter(src, Gum(&mut st)).finish();
    st.b
}

/// What the content of a raw-text element (one the tokenizer reads as text up to its end
/// tag) becomes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum RawMode {
    /// Visible, whitespace collapsed (`title`).
    Inline,
    /// Visible, preformatted (`textarea`, `xmp`, `plaintext`).
    Pre,
    /// Not visible (`script`, `style`, `noscript`, `iframe`, `noembed`).
    Drop,
}

#[derive(Clone, Copy, Debug)]
struct Open {
    id: u32,
    drop: bool,
    pre: bool,
}

struct Walker<'s, 't, 'r> {
    src: &'s [u8],
    translate: Translate<'t>,
    b: Builder<'r>,
    /// How far the tokenizer has read.
    pos: usize,
    /// End of the source accounted for by the last token.
    cursor: usize,
    name: Vec<u8>,
    is_end: bool,
    self_closing: bool,
    last_start: Vec<u8>,
    raw_mode: Option<RawMode>,
    stack: Vec<Open>,
    ids: HashMap<Vec<u8>, u32>,
    /// Interned names by id.
    names: Vec<Box<[u8]>>,
    /// Open elements per interned name.
    counts: Vec<u32>,
    /// Start tags beyond `max_depth` that were not tracked.
    untracked: usize,
    drop_depth: usize,
    pre_depth: usize,
    /// Drop a newline right after `<pre>`, `<listing>` or `<textarea>` (as the parser does).
    skip_lf: bool,
    /// The first bytes of a character whose rest the tokenizer has not emitted yet.
    pending: Vec<u8>,
    max_depth: usize,
}

impl Walker<'_, '_, '_> {
    fn dropping(&self) -> bool {
        self.drop_depth > 0 || self.raw_mode == Some(RawMode::Drop)
    }

    fn preformatted(&self) -> bool {
        self.pre_depth > 0 || self.raw_mode == Some(RawMode::Pre)
    }

    fn on_string(&mut self, s: &[u8]) {
        if s.is_empty() {
            return;
        }
        // The tokenizer works on bytes and can hand over a character in two pieces: after
        // a `<` that opens no tag, a following non-ASCII character arrives as its first
        // byte, then the rest. The bytes of an unfinished character wait for the rest, so
        // that the text is decoded, and located in the file, whole.
        let joined;
        let s = if self.pending.is_empty() {
            s
        } else {
            let mut j = std::mem::take(&mut self.pending);
            j.extend_from_slice(s);
            joined = j;
            &joined[..]
        };
        let s = match std::str::from_utf8(s) {
            Err(e) if e.error_len().is_none() => {
                self.pending = s[e.valid_up_to()..].to_vec();
                &s[..e.valid_up_to()]
            }
            _ => s,
        };
        if s.is_empty() {
            return;
        }
        let src = self.src;
        let p = self.pos.min(src.len()).saturating_sub(self.pending.len());
        let n = s.len();
        let start = if n <= p && p - n >= self.cursor && &src[p - n..p] == s {
            p - n
        } else {
            self.cursor.min(p)
        };
        let dropping = self.dropping();
        let Ok(text) = std::str::from_utf8(s) else {
            // Only escaped script data is emitted byte by byte; it is never visible. Keep
            // anything else as a lump.
            if !dropping {
                let lossy = String::from_utf8_lossy(s).into_owned();
                self.atom(&lossy, start, p - start, false);
            }
            self.cursor = p;
            return;
        };
        let consumed = if dropping {
            p - start
        } else {
            align(&src[start..p], text, |part, off, len, positional| {
                self.atom(part, start + off, len, positional)
            })
        };
        self.cursor = start + consumed;
    }

    fn atom(&mut self, mut part: &str, mut start: usize, mut len: usize, positional: bool) {
        if std::mem::take(&mut self.skip_lf) && part.starts_with('\n') {
            part = &part[1..];
            if positional {
                start += 1;
                len -= 1;
            }
            if part.is_empty() {
                return;
            }
        }
        // Text copied byte for byte from a Markdown HTML block may run across several of
        // its pieces, with file bytes between them that the block's text leaves out (the
        // CR of a CRLF line ending). Each piece is placed on its own, so that the text of
        // every piece keeps its own file range rather than all of it lumping onto one.
        if let (true, Translate::Pieces(pieces)) = (positional, &self.translate) {
            let pieces: &[Piece] = pieces;
            let end = start + len;
            let mut at = start;
            while at < end {
                let next = pieces.partition_point(|x| x.buf <= at);
                let cut = pieces.get(next).map_or(end, |n| n.buf).clamp(at + 1, end);
                if cut < end && !part.is_char_boundary(cut - start) {
                    // Pieces are whole strings, so this cannot happen; place the rest whole.
                    self.place(&part[at - start..], at, end - at, true);
                    return;
                }
                self.place(&part[at - start..cut - start], at, cut - at, true);
                at = cut;
            }
            return;
        }
        self.place(part, start, len, positional);
    }

    /// Writes `part`, from `start..start + len` of the tokenized text, into the builder.
    fn place(&mut self, part: &str, start: usize, len: usize, positional: bool) {
        let (fs, fe) = self.translate.range(start, start + len);
        if self.preformatted() {
            self.b.pre(part, fs, fe - fs);
        } else {
            self.b.inline(part, fs, fe - fs, positional && fe - fs == len);
        }
    }

    fn intern(&mut self, name: &[u8]) -> u32 {
        if let Some(&id) = self.ids.get(name) {
            return id;
        }
        let id = self.counts.len() as u32;
        self.ids.insert(name.to_vec(), id);
        self.names.push(name.into());
        self.counts.push(0);
        id
    }

    fn is_open(&self, name: &[u8]) -> bool {
        self.ids.get(name).is_some_and(|&id| self.counts[id as usize] > 0)
    }

    fn pop(&mut self) -> Option<Open> {
        let e = self.stack.pop()?;
        self.counts[e.id as usize] -= 1;
        self.drop_depth -= e.drop as usize;
        self.pre_depth -= e.pre as usize;
        Some(e)
    }

    fn pop_until(&mut self, id: u32) {
        while let Some(e) = self.pop() {
            if e.id == id {
                break;
            }
        }
    }

    /// Closes the nearest open element named in `targets`, searching at most 64 levels down
    /// and not past an element named in `stops` (the implied end tags of the HTML tree
    /// construction rules, approximated).
    fn close_implied(&mut self, targets: &[&[u8]], stops: &[&[u8]]) {
        if !targets.iter().any(|t| self.is_open(t)) {
            return;
        }
        let n = self.stack.len();
        for k in (n.saturating_sub(64)..n).rev() {
            let id = self.stack[k].id;
            let name = &self.names[id as usize][..];
            let (is_target, is_stop) = (targets.contains(&name), stops.contains(&name));
            if is_target {
                self.pop_until(id);
                return;
            }
            if is_stop {
                return;
            }
        }
    }

    fn start_tag(&mut self) {
        let name = std::mem::take(&mut self.name);
        self.skip_lf = false;
        if let Some(mode) = raw_mode(&name) {
            self.b.block(block_level(&name));
            self.raw_mode = Some(mode);
            self.skip_lf = name == b"textarea";
        } else if name == b"br" {
            self.b.line_break();
        } else {
            self.implied_end_tags(&name);
            self.b.block(block_level(&name));
            if !is_void(&name) && !self.self_closing {
                if self.stack.len() >= self.max_depth {
                    self.untracked += 1;
                } else {
                    let id = self.intern(&name);
                    let drop = matches!(&name[..], b"template" | b"noframes" | b"datalist");
                    let pre = matches!(&name[..], b"pre" | b"listing");
                    self.stack.push(Open { id, drop, pre });
                    self.counts[id as usize] += 1;
                    self.drop_depth += drop as usize;
                    self.pre_depth += pre as usize;
                    self.skip_lf = pre;
                }
            }
        }
        self.name = name;
    }

    fn implied_end_tags(&mut self, name: &[u8]) {
        const LIST_STOPS: &[&[u8]] = &[
            b"ul",
            b"ol",
            b"menu",
            b"dl",
            b"table",
            b"td",
            b"th",
            b"body",
            b"html",
            b"template",
            b"blockquote",
            b"section",
            b"article",
            b"aside",
            b"nav",
            b"main",
            b"header",
            b"footer",
            b"fieldset",
            b"figure",
            b"details",
            b"form",
        ];
        const P_SCOPE: &[&[u8]] = &[
            b"applet",
            b"caption",
            b"html",
            b"table",
            b"td",
            b"th",
            b"marquee",
            b"object",
            b"template",
            b"button",
        ];
        match name {
            b"li" => self.close_implied(&[b"li"], LIST_STOPS),
            b"dt" | b"dd" => self.close_implied(&[b"dt", b"dd"], LIST_STOPS),
            b"td" | b"th" => self.close_implied(&[b"td", b"th"], &[b"tr", b"table", b"template"]),
            b"tr" => {
                self.close_implied(&[b"tr"], &[b"table", b"thead", b"tbody", b"tfoot", b"template"])
            }
            b"thead" | b"tbody" | b"tfoot" => {
                self.close_implied(&[b"thead", b"tbody", b"tfoot"], &[b"table", b"template"])
            }
            b"option" => self.close_implied(&[b"option"], &[b"select", b"datalist", b"optgroup"]),
            b"optgroup" => self.close_implied(&[b"optgroup", b"option"], &[b"select"]),
            _ => {}
        }
        if closes_p(name) {
            self.close_implied(&[b"p"], P_SCOPE);
        }
        if is_heading(name) {
            if let Some(top) = self.stack.last().copied() {
                if is_heading(&self.names[top.id as usize]) {
                    self.pop();
                }
            }
        }
    }

    fn end_tag(&mut self) {
        let name = std::mem::take(&mut self.name);
        self.skip_lf = false;
        if let Some(mode) = self.raw_mode.take() {
            // In a raw-text state the tokenizer only ends the element with its own end tag.
            if mode != RawMode::Drop {
                self.b.block(block_level(&name));
            }
        } else if name == b"br" {
            // `</br>` is treated as `<br>` by browsers.
            self.b.line_break();
        } else {
            self.b.block(block_level(&name));
            if self.untracked > 0 {
                self.untracked -= 1;
            } else if let Some(&id) = self.ids.get(&name[..]) {
                if self.counts[id as usize] > 0 {
                    self.pop_until(id);
                }
            }
        }
        self.name = name;
    }
}

fn raw_mode(name: &[u8]) -> Option<RawMode> {
    html5gum::naive_next_state(name)?;
    Some(match name {
        b"title" => RawMode::Inline,
        b"textarea" | b"xmp" | b"plaintext" => RawMode::Pre,
        _ => RawMode::Drop,
    })
}

fn is_heading(name: &[u8]) -> bool {
    matches!(name, b"h1" | b"h2" | b"h3" | b"h4" | b"h5" | b"h6")
}

fn is_void(name: &[u8]) -> bool {
    matches!(
        name,
        b"area"
            | b"base"
            | b"basefont"
            | b"bgsound"
            | b"br"
            | b"col"
            | b"embed"
            | b"frame"
            | b"hr"
            | b"image"
            | b"img"
            | b"input"
            | b"keygen"
            | b"link"
            | b"meta"
            | b"param"
            | b"source"
            | b"track"
            | b"wbr"
    )
}

/// Start tags that close an open `p` (WHATWG "in body" insertion mode).
fn closes_p(name: &[u8]) -> bool {
    is_heading(name)
        || matches!(
            name,
            b"address"
                | b"article"
                | b"aside"
                | b"blockquote"
                | b"center"
                | b"details"
                | b"dialog"
                | b"dir"
                | b"div"
                | b"dl"
                | b"fieldset"
                | b"figcaption"
                | b"figure"
                | b"footer"
                | b"form"
                | b"header"
                | b"hgroup"
                | b"hr"
                | b"listing"
                | b"main"
                | b"menu"
                | b"nav"
                | b"ol"
                | b"p"
                | b"pre"
                | b"search"
                | b"section"
                | b"summary"
                | b"table"
                | b"ul"
                | b"li"
                | b"dd"
                | b"dt"
                | b"plaintext"
                | b"xmp"
        )
}

/// Newlines a start or end tag of this element puts between texts.
fn block_level(name: &[u8]) -> u8 {
    if is_heading(name) {
        return 2;
    }
    match name {
        b"p" | b"pre" | b"listing" | b"xmp" | b"plaintext" | b"blockquote" | b"table" | b"ul"
        | b"ol" | b"dl" | b"menu" | b"dir" | b"hr" | b"section" | b"article" | b"aside"
        | b"header" | b"footer" | b"main" | b"nav" | b"figure" | b"form" | b"fieldset"
        | b"address" | b"details" | b"hgroup" | b"search" | b"title" | b"head" | b"body"
        | b"html" | b"center" => 2,
        b"div" | b"li" | b"dt" | b"dd" | b"tr" | b"td" | b"th" | b"thead" | b"tbody" | b"tfoot"
        | b"caption" | b"figcaption" | b"summary" | b"legend" | b"option" | b"optgroup"
        | b"select" | b"textarea" | b"dialog" | b"frameset" | b"iframe" | b"video" | b"audio"
        | b"canvas" | b"object" => 1,
        _ => 0,
    }
}

/// The emitter: forwards the tokenizer's callbacks to the walker and yields no tokens.
struct Gum<'w, 's, 't, 'r>(&'w mut Walker<'s, 't, 'r>);

impl Emitter for Gum<'_, '_, '_, '_> {
    type Token = Infallible;

    fn set_last_start_tag(&mut self, last_start_tag: Option<&[u8]>) {
        self.0.last_start.clear();
        self.0.last_start.extend(last_start_tag.unwrap_or_default());
    }
    fn emit_eof(&mut self) {}
    fn emit_error(&mut self, _error: Error) {}
    fn should_emit_errors(&mut self) -> bool {
        false
    }
    fn pop_token(&mut self) -> Option<Infallible> {
        None
    }
    fn emit_string(&mut self, c: &[u8]) {
        self.0.on_string(c);
    }
    fn init_start_tag(&mut self) {
        self.0.name.clear();
        self.0.is_end = false;
        self.0.self_closing = false;
    }
    fn init_end_tag(&mut self) {
        self.0.name.clear();
        self.0.is_end = true;
        self.0.self_closing = false;
    }
    fn init_comment(&mut self) {}
    fn emit_current_tag(&mut self) -> Option<State> {
        let w = &mut *self.0;
        w.cursor = w.pos.min(w.src.len());
        if w.is_end {
            w.end_tag();
            w.last_start.clear();
            None
        } else {
            w.start_tag();
            w.last_start.clear();
            w.last_start.extend_from_slice(&w.name);
            html5gum::naive_next_state(&w.name)
        }
    }
    fn emit_current_comment(&mut self) {
        self.0.cursor = self.0.pos.min(self.0.src.len());
    }
    fn emit_current_doctype(&mut self) {
        self.0.cursor = self.0.pos.min(self.0.src.len());
    }
    fn set_self_closing(&mut self) {
        if !self.0.is_end {
            self.0.self_closing = true;
        }
    }
    fn set_force_quirks(&mut self) {}
    fn push_tag_name(&mut self, s: &[u8]) {
        self.0.name.extend_from_slice(s);
    }
    fn push_comment(&mut self, _s: &[u8]) {}
    fn push_doctype_name(&mut self, _s: &[u8]) {}
    fn init_doctype(&mut self) {}
    fn init_attribute(&mut self) {}
    fn push_attribute_name(&mut self, _s: &[u8]) {}
    fn push_attribute_value(&mut self, _s: &[u8]) {}
    fn set_doctype_public_identifier(&mut self, _value: &[u8]) {}
    fn set_doctype_system_identifier(&mut self, _value: &[u8]) {}
    fn push_doctype_public_identifier(&mut self, _s: &[u8]) {}
    fn push_doctype_system_identifier(&mut self, _s: &[u8]) {}
    fn current_is_appropriate_end_tag_token(&mut self) -> bool {
        let w = &*self.0;
        w.is_end && !w.last_start.is_empty() && w.last_start == w.name
    }
    fn move_position(&mut self, offset: isize) {
        self.0.pos = self.0.pos.saturating_add_signed(offset);
    }
}

#[cfg(test)]
mod tests {
    use crate::store::extract::{
        ExtractOptions, Format, extract, extract_with,
        testutil::{monotone, words_map_back},
    };

    fn text(raw: &str) -> String {
        extract(Format::Html, raw).text
    }

    #[test]
    fn paragraphs_entities_and_offsets() {
        let raw = "<html><head><title>Leave &amp; absence</title>\n<style>p{color:red}</style>\
                   <script>var x = \"<p>no</p>\";</script></head>\n<body>\n<h1>Annual   leave</h1>\n\
                   <p>Staff get <b>25&nbsp;days</b> &lt;script&gt; per year.</p><!-- hidden -->\n\
                   <p>Caf&eacute; time: 30&#8239;min.</p></body></html>";
        let ex = extract(Format::Html, raw);
        assert_eq!(
            ex.text,
            "Leave & absence\n\nAnnual leave\n\nStaff get 25\u{a0}days <script> per year.\n\n\
             Café time: 30\u{202f}min."
        );
        words_map_back(raw, &ex);
        monotone(&ex, raw);
        // The entity maps onto its whole source.
        let amp = ex.text.find('&').unwrap();
        assert_eq!(&raw[ex.map.to_file(amp)..ex.map.to_file_end(amp + 1)], "&amp;");
        let lt = ex.text.find("<script>").unwrap();
        assert_eq!(&raw[ex.map.to_file(lt)..ex.map.to_file_end(lt + 8)], "&lt;script&gt;");
        // A file range covering one paragraph gives exactly its visible text.
        let p = raw.find("<p>Caf").unwrap();
        let r = ex.map.to_visible_range(p, raw.len());
        assert_eq!(&ex.text[r], "Café time: 30\u{202f}min.");
    }

    /// Regression (found by the `extract_html` fuzz target): a `<` that opens no tag,
    /// followed by a non-ASCII character, came out as three U+FFFD and mapped onto a file
    /// range that split the character.
    #[test]
    fn lt_before_a_non_ascii_character() {
        for raw in ["a <é b", "price <€5 here", "<\u{fffd}\u{fffd}b> x", "x<日本語>y", "1 <— 2"]
        {
            let ex = extract(Format::Html, raw);
            assert!(!ex.text.contains('\u{fffd}') || raw.contains('\u{fffd}'), "{:?}", ex.text);
            assert_eq!(
                ex.text.matches('\u{fffd}').count(),
                raw.matches('\u{fffd}').count(),
                "{raw:?} -> {:?}",
                ex.text
            );
            words_map_back(raw, &ex);
            monotone(&ex, raw);
        }
        assert_eq!(text("price <€5 here"), "price <€5 here");
    }

    /// Regression (found by the `extract_html` fuzz target): in a title, the LF of a CRLF
    /// was left over after the CR's newline, and the text after it mapped onto the wrong
    /// bytes, its last word onto none.
    #[test]
    fn crlf_before_text_the_tokenizer_reads_ahead() {
        for raw in ["<title>\r\n</p", "<title>a\r\n</x b</title>", "<textarea>\r\n</t y"] {
            let ex = extract(Format::Html, raw);
            words_map_back(raw, &ex);
            monotone(&ex, raw);
            for word in ["p", "x", "b", "t", "y"] {
                if let Some(v) = ex.text.rfind(word) {
                    let (fs, fe) = (ex.map.to_file(v), ex.map.to_file_end(v + 1));
                    assert_eq!(&raw[fs..fe], word, "{raw:?}: {word:?} maps to {fs}..{fe}");
                }
            }
        }
    }

    #[test]
    fn scripts_styles_comments_templates_noscript_dropped() {
        let raw = "<p>a</p><script>if (a<b) { document.write('</p>x') }</script>\
                   <style>.x{}</style><!-- c --><template><p>t</p></template>\
                   <noscript><p>enable js</p></noscript><iframe>f</iframe><p>b</p>";
        assert_eq!(text(raw), "a\n\nb");
    }

    #[test]
    fn whitespace_collapses_but_not_in_pre() {
        let raw = "<div>\n   one\n\t two  <span> three </span>  </div><pre>\n  a  b\n c</pre>x";
        assert_eq!(text(raw), "one two three\n\n  a  b\n c\n\nx");
        let ex = extract(Format::Html, raw);
        words_map_back(raw, &ex);
        monotone(&ex, raw);
    }

    #[test]
    fn nested_inline_tags_and_blocks() {
        let raw = "<ul><li>one <em>two <strong>three</strong></em><li>four</ul><table><tr><td>a<td>b\
                   <tr><td>c</table>after<br>line<br/><br>gap";
        assert_eq!(text(raw), "one two three\nfour\n\na\nb\nc\n\nafter\nline\n\ngap");
    }

    #[test]
    fn unclosed_and_stray_tags() {
        assert_eq!(text("<p>one<p>two <b>bold <i>it"), "one\n\ntwo bold it");
        assert_eq!(text("</div></p>a</b> b<"), "a b<");
        assert_eq!(text("<div"), "");
        assert_eq!(text("a <!-- open comment"), "a");
        assert_eq!(text("<script>never closed <p>x"), "");
        assert_eq!(text("<title>t</title><textarea>\nkeep  this</textarea>"), "t\n\nkeep  this");
    }

    #[test]
    fn pre_closed_by_an_ancestor_end_tag() {
        assert_eq!(text("<div><pre>a  b</div>c   d"), "a  b\nc d");
    }

    #[test]
    fn crlf_input() {
        let raw = "<p>one\r\ntwo</p>\r\n<pre>\r\na\r\nb</pre>";
        let ex = extract(Format::Html, raw);
        assert_eq!(ex.text, "one two\n\na\nb");
        words_map_back(raw, &ex);
        monotone(&ex, raw);
    }

    #[test]
    fn nul_and_bom() {
        let raw = "\u{feff}<title>a\0b</title>c\0d";
        let ex = extract(Format::Html, raw);
        assert_eq!(ex.text, "a\u{fffd}b\n\nc\0d");
        monotone(&ex, raw);
    }

    #[test]
    fn deep_nesting_does_not_overflow() {
        let n = 10_000;
        let raw = format!("{}deep{}<p>after</p>", "<div>".repeat(n), "</div>".repeat(n));
        let ex = extract(Format::Html, &raw);
        assert_eq!(ex.text, "deep\n\nafter");
        let raw = format!("{}<b>x</b>", "<span>".repeat(n));
        assert_eq!(extract(Format::Html, &raw).text, "x");
        // Beyond the bound, a template is not tracked: its text is kept.
        let opts = ExtractOptions { max_html_depth: 2 };
        let raw = "<div><div><template>t</template></div></div><template>u</template>v";
        assert_eq!(extract_with(Format::Html, raw, &opts).text, "t\nv");
    }

    #[test]
    fn attributes_are_not_text() {
        assert_eq!(text("<img alt=\"pic &amp; x\" src=x><a href='u' title=t>link</a>"), "link");
    }

    #[test]
    fn segments_stay_compact() {
        let para = "<p>The quick brown fox jumps over the lazy dog, again and again.</p>\n";
        let raw = para.repeat(300);
        let ex = extract(Format::Html, &raw);
        // One segment for each paragraph's text and one for each separator.
        assert!(ex.map.segment_count() <= 2 * 300, "{}", ex.map.segment_count());
    }
}
