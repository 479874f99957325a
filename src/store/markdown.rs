//! Markdown to visible text, on `pulldown-cmark`'s offset iterator.
//!
//! Each text event carries its source range; where the event's text differs from those
//! bytes (escapes, entities, code-span delimiters, line endings) [`align`] splits it into
//! parts that map one to one and lumps that map onto their whole source.

use std::ops::Range;

use pulldown_cmark::{CowStr, Event, Options, Parser, Tag, TagEnd};

use super::extract::{Builder, ExtractOptions, Extracted, align};
use super::html::{self, Piece, Translate};

/// The CommonMark extensions read: GitHub tables, footnotes, strikethrough, task lists,
/// definition lists, block-quote tags and front matter. Smart punctuation is off, so that
/// quotes stay as written.
fn options() -> Options {
    Options::ENABLE_TABLES
        | Options::ENABLE_FOOTNOTES
        | Options::ENABLE_STRIKETHROUGH
        | Options::ENABLE_TASKLISTS
        | Options::ENABLE_YAML_STYLE_METADATA_BLOCKS
        | Options::ENABLE_PLUSES_DELIMITED_METADATA_BLOCKS
        | Options::ENABLE_DEFINITION_LIST
        | Options::ENABLE_GFM
}

/// Extracts `raw[range]` (the whole file minus a byte-order mark) as Markdown.
pub(crate) fn extract(raw: &str, range: Range<usize>, options_: &ExtractOptions) -> Extracted {
    let base = range.start;
    let src = &raw[range];
    let mut b = Builder::new(raw);
    let mut metadata = 0usize;
    let mut code = 0usize;
    // An HTML block being collected: its text and where each piece came from.
    let mut html: Option<(String, Vec<Piece>)> = None;

    for (event, r) in Parser::new_ext(src, options()).into_offset_iter() {
        let r = r.start + base..r.end + base;
        match event {
            Event::Start(tag) => match tag {
                Tag::MetadataBlock(_) => metadata += 1,
                Tag::HtmlBlock => {
                    b.block(2);
                    html = Some((String::new(), Vec::new()));
                }
                Tag::CodeBlock(_) => {
                    b.block(2);
                    code += 1;
                }
                other => b.block(level(other.to_end())),
            },
            Event::End(end) => match end {
                TagEnd::MetadataBlock(_) => metadata = metadata.saturating_sub(1),
                TagEnd::HtmlBlock => {
                    if let Some((buf, pieces)) = html.take() {
                        b = html::walk(&buf, Translate::Pieces(&pieces), b, options_);
                    }
                    b.block(2);
                }
                TagEnd::CodeBlock => {
                    code = code.saturating_sub(1);
                    b.block(2);
                }
                other => b.block(level(other)),
            },
            _ if metadata > 0 => {}
            Event::Text(t) | Event::InlineMath(t) | Event::DisplayMath(t) => {
                let pre = code > 0;
                text(&mut b, raw, r, &t, pre);
            }
            Event::Code(t) => {
                let inner = code_span_inner(raw, r);
                text(&mut b, raw, inner, &t, false);
            }
            Event::Html(t) => match &mut html {
                Some((buf, pieces)) => {
                    pieces.push(Piece {
                        buf: buf.len(),
                        buf_len: t.len(),
                        file: r.start,
                        file_len: r.len(),
                    });
                    buf.push_str(&t);
                }
                None => {
                    let pieces =
                        [Piece { buf: 0, buf_len: t.len(), file: r.start, file_len: r.len() }];
                    b = html::walk(&t, Translate::Pieces(&pieces), b, options_);
                }
            },
            Event::InlineHtml(t) => {
                if is_br(&t) {
                    b.line_break();
                }
            }
            Event::SoftBreak => b.space(r.start, r.end),
            Event::HardBreak => b.line_break(),
            Event::Rule => b.block(2),
            Event::FootnoteReference(_) | Event::TaskListMarker(_) => {}
        }
    }
    b.finish()
}

fn text(b: &mut Builder<'_>, raw: &str, r: Range<usize>, t: &CowStr<'_>, pre: bool) {
    let src = raw.as_bytes().get(r.clone()).unwrap_or_default();
    align(src, t, |part, off, len, positional| {
        if pre {
            b.pre(part, r.start + off, len);
        } else {
            b.inline(part, r.start + off, len, positional);
        }
    });
}

/// The source range of a code span's content: inside the backtick fences, less the one
/// space CommonMark strips from each side.
fn code_span_inner(raw: &str, r: Range<usize>) -> Range<usize> {
    let bytes = raw.as_bytes();
    let (mut s, mut e) = (r.start, r.end.min(bytes.len()));
    while s < e && bytes[s] == b'`' {
        s += 1;
    }
    while e > s && bytes[e - 1] == b'`' {
        e -= 1;
    }
    if e - s >= 2
        && bytes[s] == b' '
        && bytes[e - 1] == b' '
        && bytes[s..e].iter().any(|&c| c != b' ')
    {
        s += 1;
        e -= 1;
    }
    s..e
}

fn is_br(html: &str) -> bool {
    let t = html.trim_start_matches('<').trim_start_matches('/');
    t.len() >= 2
        && t[..2].eq_ignore_ascii_case("br")
        && t[2..].starts_with(|c: char| c == '>' || c == '/' || c.is_ascii_whitespace())
}

/// Newlines the start or end of a block puts between texts.
fn level(tag: TagEnd) -> u8 {
    match tag {
        TagEnd::Paragraph
        | TagEnd::Heading(_)
        | TagEnd::BlockQuote(_)
        | TagEnd::CodeBlock
        | TagEnd::HtmlBlock
        | TagEnd::FootnoteDefinition
        | TagEnd::DefinitionList
        | TagEnd::Table
        | TagEnd::MetadataBlock(_) => 2,
        // A list is set off by the paragraphs around it; a nested one only by a line.
        TagEnd::List(_)
        | TagEnd::Item
        | TagEnd::TableHead
        | TagEnd::TableRow
        | TagEnd::TableCell
        | TagEnd::DefinitionListTitle
        | TagEnd::DefinitionListDefinition => 1,
        TagEnd::Emphasis
        | TagEnd::Strong
        | TagEnd::Strikethrough
        | TagEnd::Superscript
        | TagEnd::Subscript
        | TagEnd::Link
        | TagEnd::Image => 0,
    }
}

#[cfg(test)]
mod tests {
    use crate::store::extract::{
        Format, extract,
        testutil::{monotone, words_map_back},
    };

    fn text(raw: &str) -> String {
        extract(Format::Markdown, raw).text
    }

    #[test]
    fn blocks_inline_and_offsets() {
        let raw = "# Leave policy\n\nStaff get *25 days* of `annual leave` per\nyear, \
                   see [the form](http://x/form).  \nSigned.\n\n- one\n- two\n  - nested\n\n\
                   ```\nfn x() {}\n```\n\n| a | b |\n|---|---|\n| 1 | 2 |\n";
        let ex = extract(Format::Markdown, raw);
        assert_eq!(
            ex.text,
            "Leave policy\n\nStaff get 25 days of annual leave per year, see the form.\nSigned.\n\n\
             one\ntwo\nnested\n\nfn x() {}\n\na\nb\n1\n2"
        );
        words_map_back(raw, &ex);
        monotone(&ex, raw);
        let i = ex.text.find("annual").unwrap();
        assert_eq!(&raw[ex.map.to_file(i)..ex.map.to_file_end(i + 12)], "annual leave");
    }

    #[test]
    fn escapes_and_entities_map_to_their_source() {
        let raw = "A \\*star\\* &amp; L&amp;F &lt;script&gt; &copy; 2024";
        let ex = extract(Format::Markdown, raw);
        assert_eq!(ex.text, "A *star* & L&F <script> © 2024");
        words_map_back(raw, &ex);
        monotone(&ex, raw);
        let i = ex.text.find("L&F").unwrap();
        assert_eq!(&raw[ex.map.to_file(i)..ex.map.to_file_end(i + 3)], "L&amp;F");
        let i = ex.text.find('*').unwrap();
        assert!(raw[ex.map.to_file(i)..ex.map.to_file_end(i + 1)].ends_with('*'));
    }

    #[test]
    fn front_matter_html_blocks_and_images() {
        let raw = "---\ntitle: secret\n---\n\nIntro ![a chart](c.png) text.\n\n<div class=\"x\">\n\
                   html <b>block</b> &amp; more\n<script>nope()</script>\n</div>\n\nend <span>in</span>line";
        let ex = extract(Format::Markdown, raw);
        assert_eq!(ex.text, "Intro a chart text.\n\nhtml block & more\n\nend inline");
        words_map_back(raw, &ex);
        monotone(&ex, raw);
    }

    #[test]
    fn crlf_and_empty() {
        let raw =
            "para one\r\nline two\r\n\r\n    code\r\n    more\r\n\r\n```\r\nfenced\r\n```\r\n";
        let ex = extract(Format::Markdown, raw);
        assert_eq!(ex.text, "para one line two\n\ncode\nmore\n\nfenced\n");
        words_map_back(raw, &ex);
        monotone(&ex, raw);
        assert_eq!(text(""), "");
        assert_eq!(text("\n\n  \n"), "");
    }

    /// Regression (found by the `extract_markdown` fuzz target): in an HTML block with
    /// CRLF line endings, the text after the first CR mapped onto an empty file range.
    #[test]
    fn crlf_inside_an_html_block() {
        for raw in [
            "<div>\ncode\r\nx\n\nafter",
            "<div>raw <b>htm`\ncode block\r\n```\n\nafter",
            "<div>\r\none\r\ntwo words\r\n</div>\r\n\r\nafter",
        ] {
            let ex = extract(Format::Markdown, raw);
            words_map_back(raw, &ex);
            monotone(&ex, raw);
            for word in ["code", "two", "words", "after"] {
                if let Some(v) = ex.text.find(word) {
                    let (fs, fe) = (ex.map.to_file(v), ex.map.to_file_end(v + word.len()));
                    assert_eq!(&raw[fs..fe], word, "{raw:?}: {word:?} maps to {fs}..{fe}");
                }
            }
        }
    }

    /// Regression (found by the `extract_markdown` fuzz target): pulldown-cmark turns
    /// the CRLF in a code span into two spaces; the word after it mapped onto an empty
    /// file range.
    #[test]
    fn crlf_inside_a_code_span() {
        for raw in ["a`\r\nb`", "\0`\r\nb`", "x `one\r\ntwo three` y"] {
            let ex = extract(Format::Markdown, raw);
            words_map_back(raw, &ex);
            monotone(&ex, raw);
            for word in ["b", "two", "three"] {
                if let Some(v) = ex.text.find(word) {
                    let (fs, fe) = (ex.map.to_file(v), ex.map.to_file_end(v + word.len()));
                    assert!(raw[fs..fe].contains(word), "{raw:?}: {word:?} maps to {fs}..{fe}");
                }
            }
        }
    }

    #[test]
    fn deep_nesting_does_not_overflow() {
        let raw = format!("{} deep\n", ">".repeat(10_000));
        assert!(text(&raw).contains("deep"));
        let raw = format!("{}x{}", "[".repeat(10_000), "]".repeat(10_000));
        assert!(text(&raw).contains('x'));
        let raw = format!("{}deep{}", "<div>".repeat(10_000), "</div>".repeat(10_000));
        assert_eq!(text(&raw), "deep");
    }

    #[test]
    fn footnotes_tasks_and_inline_code_with_spaces() {
        let raw = "- [x] done\n- [ ] todo\n\nSee note[^1] and `` `tick` ``.\n\n[^1]: The note.\n";
        assert_eq!(text(raw), "done\ntodo\n\nSee note and `tick`.\n\nThe note.");
    }
}
