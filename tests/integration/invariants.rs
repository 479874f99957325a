//! Invariants of plumbline's parsers and text layers on arbitrary input: the checks the
//! fuzz targets in `tests/fuzz/` run on every input libFuzzer makes, and that the
//! integration binary runs on the committed seeds and regression inputs
//! (`fuzz_corpus.rs`). Each function takes raw bytes, derives its inputs from them, and
//! panics with a message when an invariant fails. They assert what the module
//! documentation promises, not merely that nothing crashes.
//!
//! This file is compiled twice: as a module of the integration-test binary and, through
//! `#[path]`, as a module of each fuzz target. It uses nothing but `plumbline` and std.

#![allow(dead_code)]

use std::io::BufReader;
use std::ops::Range;
use std::path::Path;

use plumbline::answers::markers::{find_markers, looks_like_ref, merge_adjacent, strip_markers};
use plumbline::answers::{AnswerReader, ReaderLimits};
use plumbline::metrics::{bleu, fuzzy, rouge};
use plumbline::store::confine;
use plumbline::store::extract::{ExtractOptions, Format, extract_with};
use plumbline::store::manifest;
use plumbline::support::{self, Params};
use plumbline::text::normalize::normalize;
use plumbline::text::sentences::{marker_runs, split, uax29};
use plumbline::text::tokens::{term_id, token_ids, tokenize, word_spans};

/// An invariant check: panics when the input breaks an invariant.
pub type Check = fn(&[u8]);

/// The fuzz targets, by name: each is one of the functions below.
pub const TARGETS: &[(&str, Check)] = &[
    ("answers_line", answers_line),
    ("markers", markers),
    ("sentences", sentences),
    ("tokens", tokens),
    ("extract_markdown", extract_markdown),
    ("extract_html", extract_html),
    ("manifest", manifest_json),
    ("confine", confine_reference),
    ("scores", scores),
];

fn text(data: &[u8]) -> String {
    String::from_utf8_lossy(data).into_owned()
}

/// Spans lie on char boundaries of `text`, are non-empty, in order and do not overlap.
pub fn ordered_spans(text: &str, spans: &[Range<usize>], what: &str) {
    let mut last = 0;
    for r in spans {
        assert!(r.start < r.end, "{what}: empty or reversed span {r:?}");
        assert!(r.end <= text.len(), "{what}: span {r:?} past the end ({})", text.len());
        assert!(
            text.is_char_boundary(r.start) && text.is_char_boundary(r.end),
            "{what}: span {r:?} not on char boundaries"
        );
        assert!(r.start >= last, "{what}: span {r:?} overlaps or precedes the one before");
        last = r.end;
    }
}

/// One answers log: every non-blank line yields one answer or one rejected entry, in line
/// order; accepted answers respect the limits; and the result does not depend on how the
/// bytes arrive (a 1-byte buffer reads the same as the whole slice).
///
/// The first three bytes set the limits, so that small inputs reach them.
pub fn answers_line(data: &[u8]) {
    let (limits, log) = match data {
        [a, b, c, rest @ ..] => (
            ReaderLimits {
                max_line_bytes: 8 + usize::from(*a) * 8,
                max_citations: 1 + usize::from(*b % 16),
                max_id_bytes: 1 + usize::from(*c % 64),
            },
            rest,
        ),
        _ => (ReaderLimits::default(), data),
    };
    let mut reader = AnswerReader::with_limits(log, limits);
    let items: Vec<_> = reader.by_ref().collect();
    assert!(reader.io_error().is_none(), "a slice cannot fail to read");
    assert_eq!(items.len(), reader.non_blank_lines(), "answers + rejected = non-blank lines");
    assert!(reader.non_blank_lines() <= reader.lines_read());
    let physical = if log.is_empty() {
        0
    } else {
        log.split(|&b| b == b'\n').count() - usize::from(log.ends_with(b"\n"))
    };
    assert_eq!(reader.lines_read(), physical, "physical lines counted");
    let mut last_line = 0;
    let mut ids = std::collections::HashSet::new();
    for item in &items {
        let line = match item {
            Ok(a) => {
                assert!(!a.id.is_empty() && a.id.len() <= limits.max_id_bytes, "id {:?}", a.id);
                assert!(ids.insert(a.id.clone()), "duplicate id {:?} accepted", a.id);
                assert!(a.citations.len() <= limits.max_citations);
                let mut refs = std::collections::HashSet::new();
                for c in &a.citations {
                    assert!(refs.insert(c.r#ref.as_str()), "duplicate ref {:?}", c.r#ref);
                    assert!(!c.doc.is_empty() && c.doc.len() <= limits.max_id_bytes);
                }
                a.line
            }
            Err(r) => {
                assert!(!r.error.is_empty(), "a rejected line says why");
                r.line
            }
        };
        assert!(line > last_line && line <= reader.lines_read(), "line {line} after {last_line}");
        last_line = line;
    }
    // The same bytes through a tiny buffer: chunk boundaries must not matter.
    let cap = 1 + data.first().map_or(0, |b| usize::from(b % 7));
    let again: Vec<_> =
        AnswerReader::with_limits(BufReader::with_capacity(cap, log), limits).collect();
    assert_eq!(items, again, "reading through a {cap}-byte buffer changed the result");
}

/// Citation markers: inside the text, on char boundaries, in order, each a bracket group
/// of refs that are known or look like refs; merging keeps every ref; stripping removes
/// exactly the markers (and the blanks before them) and maps every kept byte back to
/// itself.
///
/// The first line of the input lists the known refs, comma-separated; the rest is the
/// answer.
pub fn markers(data: &[u8]) {
    let all = text(data);
    let (head, answer) = all.split_once('\n').unwrap_or(("", all.as_str()));
    let known: Vec<&str> = head.split(',').filter(|r| !r.is_empty()).take(8).collect();
    let found = find_markers(answer, &known);
    let spans: Vec<Range<usize>> = found.iter().map(|m| m.start..m.end).collect();
    ordered_spans(answer, &spans, "markers");
    for m in &found {
        assert!(answer[m.start..].starts_with('[') && answer[..m.end].ends_with(']'), "{m:?}");
        assert!(!m.refs.is_empty(), "{m:?} names no ref");
        for r in &m.refs {
            assert!(known.contains(&r.as_str()) || looks_like_ref(r), "{r:?} is not a ref");
        }
    }
    let merged = merge_adjacent(answer, &found);
    let spans: Vec<Range<usize>> = merged.iter().map(|m| m.start..m.end).collect();
    ordered_spans(answer, &spans, "merged markers");
    assert!(merged.len() <= found.len());
    for m in &found {
        let host = merged.iter().find(|x| x.start <= m.start && m.end <= x.end);
        let host = host.unwrap_or_else(|| panic!("{m:?} is in no merged marker"));
        assert!(m.refs.iter().all(|r| host.refs.contains(r)), "{m:?} lost refs in {host:?}");
    }
    let (stripped, map) = strip_markers(answer, &merged);
    assert_eq!(map.len(), stripped.len() + 1, "one map entry per byte, plus the end");
    assert_eq!(map.last(), Some(&answer.len()));
    let b = answer.as_bytes();
    for (i, &at) in map[..stripped.len()].iter().enumerate() {
        assert!(i == 0 || map[i - 1] < at, "map not increasing at {i}");
        assert_eq!(stripped.as_bytes()[i], b[at], "byte {i} of the stripped text");
        assert!(!merged.iter().any(|m| m.start <= at && at < m.end), "byte {at} of a marker kept");
    }
    let runs = marker_runs(answer);
    ordered_spans(answer, &runs, "marker runs");
}

/// Sentences: UAX #29 segments tile the text; the chat-answer sentences are trimmed,
/// non-empty, in order, on char boundaries, and leave out nothing but white space.
pub fn sentences(data: &[u8]) {
    let text = text(data);
    let segments = uax29(&text);
    let mut at = 0;
    for r in &segments {
        assert_eq!(r.start, at, "UAX #29 segments leave a gap or overlap");
        assert!(r.end > r.start);
        at = r.end;
    }
    assert_eq!(at, text.len(), "UAX #29 segments cover the text");
    let spans = split(&text);
    ordered_spans(&text, &spans, "sentences");
    let mut last = 0;
    for r in spans.iter().chain([&(text.len()..text.len())]) {
        let gap = &text[last..r.start];
        assert!(gap.trim().is_empty(), "text {gap:?} left out between sentences");
        let s = &text[r.clone()];
        assert_eq!(s, s.trim(), "sentence {s:?} not trimmed");
        last = r.end;
    }
}

/// Tokens: original byte ranges in order, on char boundaries, not overlapping; ids are
/// the term ids of the stems; the lean [`token_ids`] agrees token for token; normalised
/// ranges map back onto char boundaries, monotonically; the ASCII word splitter agrees
/// with `unicode-segmentation`.
pub fn tokens(data: &[u8]) {
    let text = text(data);
    let toks = tokenize(&text);
    // Token ranges are non-empty, on char boundaries and in order. Two tokens may share
    // characters only where one character normalises into several that land in both
    // (U+3360 is NFKC "8点", two words; "½22" is "1⁄222", two figures): ranges are kept
    // at the granularity of the original's grapheme clusters.
    for (i, t) in toks.iter().enumerate() {
        ordered_spans(&text, std::slice::from_ref(&(t.start..t.end)), "token");
        let Some(prev) = i.checked_sub(1).map(|j| &toks[j]) else { continue };
        assert!(t.start >= prev.start && t.end >= prev.end, "tokens out of order at {i}");
        if t.start < prev.end {
            use unicode_segmentation::UnicodeSegmentation as _;
            let shared = &text[t.start..prev.end];
            assert!(
                shared.graphemes(true).count() == 1
                    && normalize(shared).text.chars().count() > shared.chars().count(),
                "tokens {i} and {} share {shared:?}, which does not expand under NFKC",
                i - 1
            );
        }
    }
    for t in &toks {
        assert!(!t.text.is_empty(), "empty token at {}..{}", t.start, t.end);
        assert_eq!(t.id, term_id(&t.stem), "id of {:?}", t.stem);
        if let Some(f) = &t.figure {
            assert_eq!((f.start, f.end), (t.start, t.end), "figure range of {:?}", t.text);
        }
    }
    let lean = token_ids(&text);
    let ids: Vec<u32> = toks.iter().map(|t| t.id).collect();
    assert_eq!(lean.ids, ids, "token_ids disagrees with tokenize");
    let content: Vec<bool> = toks.iter().map(|t| t.is_content()).collect();
    assert_eq!(lean.content, content, "content flags disagree");

    let norm = normalize(&text);
    let mut last = 0;
    for pos in 0..=norm.text.len() {
        let o = norm.original_pos(pos);
        assert!(o >= last && o <= text.len() && text.is_char_boundary(o), "normalised {pos}");
        last = o;
        let r = norm.original_range(pos, (pos + 5).min(norm.text.len()));
        assert!(r.start <= r.end && r.end <= text.len());
        assert!(text.is_char_boundary(r.start) && text.is_char_boundary(r.end));
    }
    if text.is_ascii() {
        use unicode_segmentation::UnicodeSegmentation as _;
        let reference: Vec<(usize, usize)> =
            text.unicode_word_indices().map(|(i, w)| (i, i + w.len())).collect();
        assert_eq!(word_spans(&text), reference, "ASCII word spans differ from UAX #29");
    }
}

/// Extraction: the map is monotone both ways and stays inside both texts; ranges mapped
/// from char boundaries land on char boundaries; every visible word maps back onto file
/// bytes that hold it; extraction is deterministic.
///
/// The first byte sets the HTML depth limit (1 to 64), so that small inputs reach it.
fn extract_format(format: Format, data: &[u8]) {
    let (depth, rest) = match data {
        [d, rest @ ..] => (1 + usize::from(d % 64), rest),
        [] => (8, data),
    };
    let raw = text(rest);
    let options = ExtractOptions { max_html_depth: depth };
    let ex = extract_with(format, &raw, &options);
    let vis = ex.visible(&raw);
    assert_eq!(ex.map.visible_len(), vis.len());
    assert_eq!(extract_with(format, &raw, &options), ex, "not deterministic");
    let (mut last, mut last_end) = (0, 0);
    for v in 0..=vis.len() {
        let (f, e) = (ex.map.to_file(v), ex.map.to_file_end(v));
        assert!(f >= last && e >= last_end, "map not monotone at visible {v}");
        assert!(f <= raw.len() && e <= raw.len(), "visible {v} maps past the file");
        (last, last_end) = (f, e);
    }
    let step = (raw.len() / 64).max(1);
    for fs in (0..=raw.len()).step_by(step) {
        for fe in [fs, fs + 1, fs + 7, fs + 40, raw.len()] {
            let fe = fe.min(raw.len());
            let r = ex.map.to_visible_range(fs, fe);
            assert!(r.start <= r.end && r.end <= vis.len(), "{fs}..{fe} -> {r:?}");
            if raw.is_char_boundary(fs) && raw.is_char_boundary(fe) {
                assert!(
                    vis.is_char_boundary(r.start) && vis.is_char_boundary(r.end),
                    "{fs}..{fe} -> {r:?} off char boundaries"
                );
            }
            let rr = ex.visible_range(&raw, fs, fe);
            assert!(rr.start <= rr.end && rr.end <= vis.len());
            assert!(vis.is_char_boundary(rr.start) && vis.is_char_boundary(rr.end));
        }
    }
    if format == Format::Text {
        assert_eq!(vis, raw.strip_prefix('\u{feff}').unwrap_or(&raw));
    }
    words_map_back(&raw, vis, &ex);
}

/// Every visible word (a run of ASCII letters and digits) maps back onto file bytes that
/// contain it once tags, backslash escapes and entities are undone, and that file range
/// maps back onto a visible range holding the word.
fn words_map_back(raw: &str, vis: &str, ex: &plumbline::store::extract::Extracted) {
    let b = vis.as_bytes();
    let mut i = 0;
    while i < b.len() {
        if !b[i].is_ascii_alphanumeric() {
            i += 1;
            continue;
        }
        let start = i;
        while i < b.len() && b[i].is_ascii_alphanumeric() {
            i += 1;
        }
        // A word glued to non-ASCII letters may be cut from a longer one; skip those.
        let glued = |c: Option<char>| c.is_some_and(char::is_alphanumeric);
        if glued(vis[..start].chars().next_back()) || glued(vis[i..].chars().next()) {
            continue;
        }
        let word = &vis[start..i];
        let (fs, fe) = (ex.map.to_file(start), ex.map.to_file_end(i));
        assert!(fs <= fe && fe <= raw.len(), "{word:?} maps to {fs}..{fe}");
        let src = raw.get(fs..fe).unwrap_or_else(|| panic!("{word:?}: {fs}..{fe} off boundaries"));
        if !src.contains(word) {
            // Undo markup: tags, backslash escapes, and the emphasis, strike-through and
            // code-span delimiters Markdown drops even inside a word (`ed*aH*`).
            let mut plain = String::new();
            let mut in_tag = false;
            for c in src.chars() {
                match c {
                    '<' => in_tag = true,
                    '>' if in_tag => in_tag = false,
                    '\\' | '*' | '_' | '~' | '`' => {}
                    c if !in_tag => plain.push(c),
                    _ => {}
                }
            }
            // Content a browser or renderer drops (`<noscript>`, a link's target) can lie
            // between the letters of a visible word, so the word need only be a
            // subsequence of what is left.
            let plain = decode_entities(&plain);
            let mut letters = plain.chars();
            assert!(
                word.chars().all(|c| letters.any(|p| p == c)),
                "visible word {word:?} maps to file bytes {src:?} ({fs}..{fe})"
            );
        }
        let back = ex.map.to_visible_range(fs, fe);
        assert!(back.start <= start && back.end >= i, "{word:?}: {back:?} vs {start}..{i}");
    }
}

/// Decodes character references as HTML does: numeric ones with or without the closing
/// `;` (`&#84`, `&#x54;`), and named ones through `html-escape`'s table.
fn decode_entities(s: &str) -> String {
    let mut out = String::new();
    let mut rest = s;
    while let Some(p) = rest.find("&#") {
        out.push_str(&rest[..p]);
        rest = &rest[p + 2..];
        let (hex, digits) = match rest.strip_prefix(['x', 'X']) {
            Some(h) => (true, h),
            None => (false, rest),
        };
        let n = digits
            .bytes()
            .take_while(|b| if hex { b.is_ascii_hexdigit() } else { b.is_ascii_digit() })
            .count();
        // Leading zeros do not count (`&#000081;` is `Q`); a value past U+10FFFF is U+FFFD.
        let significant = digits[..n].trim_start_matches('0');
        let value = if significant.len() > 8 {
            Some(u32::MAX)
        } else {
            u32::from_str_radix(significant, if hex { 16 } else { 10 }).ok().or(Some(0))
        };
        match value.filter(|_| n > 0) {
            Some(v) => {
                out.push(char::from_u32(v).filter(|&c| c != '\0').unwrap_or('\u{fffd}'));
                rest = &digits[n..];
                rest = rest.strip_prefix(';').unwrap_or(rest);
            }
            None => out.push_str("&#"),
        }
    }
    out.push_str(rest);
    html_escape::decode_html_entities(&out).into_owned()
}

/// Markdown extraction (see [`extract_format`]).
pub fn extract_markdown(data: &[u8]) {
    extract_format(Format::Markdown, data);
}

/// HTML extraction (see [`extract_format`]).
pub fn extract_html(data: &[u8]) {
    extract_format(Format::Html, data);
}

/// The manifest: a usable manifest accounts for every entry of `documents` exactly once,
/// as an entry or as a problem; every accepted path is canonical and confined; chunks
/// run forwards and have distinct ids.
pub fn manifest_json(data: &[u8]) {
    let text = text(data);
    let origin = Path::new("manifest.json");
    let m = match manifest::parse(&text, origin) {
        Ok(m) => m,
        Err(e) => {
            assert!(!e.message.is_empty());
            assert!(e.to_string().starts_with("manifest.json:"), "{e}");
            return;
        }
    };
    let value: serde_json::Value =
        serde_json::from_str(text.strip_prefix('\u{feff}').unwrap_or(&text))
            .expect("a usable manifest is JSON");
    let n = value.get("documents").and_then(|d| d.as_array()).map_or(0, Vec::len);
    let mut seen = vec![false; n];
    for i in m.entries.iter().map(|e| e.index).chain(m.problems.iter().map(|p| p.entry)) {
        assert!(i < n, "entry index {i} of {n}");
        assert!(!seen[i], "documents[{i}] accounted for twice");
        seen[i] = true;
    }
    assert!(seen.iter().all(|s| *s), "an entry of documents was dropped silently");
    for e in &m.entries {
        assert_eq!(confine::check(&e.path), Ok(()), "{:?} escapes", e.path);
        assert_eq!(confine::normalize(&e.path).as_deref(), Some(e.path.as_str()));
        if let Some(id) = &e.id {
            assert_eq!(confine::check(id), Ok(()), "id {id:?} escapes");
        }
        let mut ids = std::collections::HashSet::new();
        for c in &e.chunks {
            assert!(c.start <= c.end, "{c:?}");
            assert!(ids.insert(&c.id), "chunk id {:?} twice", c.id);
        }
    }
}

/// Percent-decodes once (`%XX`; anything else kept).
fn percent_decode(s: &str) -> String {
    let b = s.as_bytes();
    let hex = |c: u8| char::from(c).to_digit(16).map(|d| d as u8);
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        if b[i] == b'%' && i + 2 < b.len() {
            if let (Some(h), Some(l)) = (hex(b[i + 1]), hex(b[i + 2])) {
                out.push(h * 16 + l);
                i += 3;
                continue;
            }
        }
        out.push(b[i]);
        i += 1;
    }
    String::from_utf8_lossy(&out).into_owned()
}

/// What no reference that stays inside the store may look like (independently of
/// `confine`'s own code).
pub fn plainly_escapes(r: &str) -> bool {
    let b = r.as_bytes();
    r.contains('\0')
        || r.starts_with(['/', '\\'])
        || (b.len() >= 2 && b[0].is_ascii_alphabetic() && b[1] == b':')
        || r.split(['/', '\\']).any(|c| c == "..")
}

/// Confinement: a reference that passes is not plainly outside the store, neither as
/// written nor once or twice percent-decoded.
pub fn confine_reference(data: &[u8]) {
    let r = text(data);
    if confine::check(&r).is_ok() {
        let once = percent_decode(&r);
        let twice = percent_decode(&once);
        for form in [&r, &once, &twice] {
            assert!(!plainly_escapes(form), "{r:?} passed, but {form:?} escapes");
        }
    }
}

/// Scores: the support score of the best window lies in 0..1 and the verdict agrees with
/// the thresholds; matched ranges lie on char boundaries of the passage; ROUGE, BLEU and
/// the fuzzy similarities stay in their ranges, and a text compared with itself is a
/// perfect match.
///
/// The input is split at its first NUL into the claim and the passage.
pub fn scores(data: &[u8]) {
    let all = text(data);
    let (claim_text, passage) = all.split_once('\0').unwrap_or((all.as_str(), all.as_str()));
    let p = Params::default();
    let claim = support::claim(claim_text);
    let units = support::units(passage, &split(passage));
    if let Some(m) = support::best_window(&claim, &units, passage, &p) {
        assert!(m.score.is_finite() && (0.0..=1.0).contains(&m.score), "score {}", m.score);
        assert!((0.0..=1.0).contains(&m.coverage), "coverage {}", m.coverage);
        assert!(m.first <= m.last && m.last < units.len(), "window {}..={}", m.first, m.last);
        let mut matched = m.matched.clone();
        matched.sort_by_key(|r| r.start);
        matched.dedup();
        for r in &matched {
            assert!(r.start < r.end && r.end <= passage.len(), "matched {r:?}");
            assert!(passage.is_char_boundary(r.start) && passage.is_char_boundary(r.end));
        }
        let a = support::assess(&claim, Some(&m), &p);
        assert_eq!(a.score, m.score);
        use plumbline::findings::Verdict;
        match a.verdict {
            Verdict::Supported => assert!(m.score >= p.supported),
            Verdict::Partial => assert!(m.score >= p.partial),
            Verdict::Unsupported | Verdict::NoClaim => {}
        }
    }
    let (c, r) = (
        plumbline::text::tokens::unicode_words(claim_text),
        plumbline::text::tokens::unicode_words(passage),
    );
    for prf in [rouge::rouge_n(&c, &r, 1), rouge::rouge_n(&c, &r, 2), rouge::rouge_l(&c, &r)] {
        for x in [prf.precision, prf.recall, prf.f] {
            assert!(x.is_finite() && (0.0..=1.0).contains(&x), "ROUGE {prf:?}");
        }
    }
    if !c.is_empty() {
        let same = rouge::rouge_l(&c, &c);
        assert!((same.f - 1.0).abs() < 1e-12, "ROUGE-L of a text with itself: {same:?}");
    }
    // BLEU is computed as sacrebleu computes it, exp of a mean of logs of percentages, so
    // an identical pair scores exp(ln 100) = 100.00000000000004 (sacrebleu 2.6.0's
    // `sentence_score` gives the same, checked by hand): a few ulps over 100 are that
    // rounding, not a defect.
    let b = bleu::sentence_bleu(claim_text, &[passage]);
    assert!(b.score.is_finite() && (0.0..=100.0 + 1e-9).contains(&b.score), "BLEU {}", b.score);
    assert!((0.0..=1.0).contains(&b.bp), "brevity penalty {}", b.bp);
    let (x, y): (String, String) =
        (claim_text.chars().take(300).collect(), passage.chars().take(300).collect());
    for s in [
        fuzzy::levenshtein_similarity(&x, &y),
        fuzzy::jaro_winkler(&x, &y),
        fuzzy::jaro(&x, &y),
        fuzzy::token_similarity(&x, &y),
    ] {
        assert!(s.is_finite() && (0.0..=1.0).contains(&s), "similarity {s} of {x:?} / {y:?}");
    }
    assert_eq!(fuzzy::levenshtein(&x, &x), 0);
    assert_eq!(fuzzy::levenshtein_similarity(&x, &x), 1.0);
}
