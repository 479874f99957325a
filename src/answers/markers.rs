//! Citation markers in answer text: finding them and removing them before scoring.
//!
//! An answer ties a sentence to its citations with bracket groups: `[1]`, `[1, 2]`,
//! `[1; 2]` or adjacent groups `[1][2]`. Answers are often Markdown, and brackets also
//! appear in links (`[text](url)`, `[text][label]`), reference definitions (`[1]: url`),
//! task boxes (`- [x] done`), escaped text (`\[1\]`) and plain prose (`[sic]`, `[12:30]`).
//! Reading those as markers would flag phantom `unknown_ref`s, so a group counts as a marker
//! only when it is none of those and each item in it is a ref the answer's citations carry
//! or has the shape of one (see [`looks_like_ref`]). Items of that shape that no citation
//! carries are still returned, because a marker naming a missing citation is exactly what
//! the `unknown_ref` flag exists to catch.
//!
//! Offsets are byte offsets into the answer, as everywhere else in plumbline.

/// One bracket group read as a citation marker.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Marker {
    /// Byte offset of the opening `[`.
    pub start: usize,
    /// Byte offset just past the closing `]`.
    pub end: usize,
    /// The refs named, in the order written, each trimmed of surrounding spaces.
    pub refs: Vec<String>,
}

/// Longest bracket content, in bytes, considered at all. Real marker groups are short;
/// the cap keeps the scan linear in the answer's length.
const MAX_GROUP_BYTES: usize = 512;

/// Longest ref, in bytes, that [`looks_like_ref`] accepts.
pub const MAX_REF_LIKE_BYTES: usize = 32;

/// Longest all-digit ref that [`looks_like_ref`] accepts without a citation carrying it.
/// Three digits is more than any answer cites (the default `limits.max_citations` is
/// 256), while a bracketed year such as `[2023]` in prose stays prose.
const MAX_DIGIT_REF: usize = 3;

/// Longest letter prefix of a ref such as `S1`, `doc-2` or `ref_3`.
const MAX_REF_PREFIX: usize = 8;

/// Whether `item` has the shape of a citation ref even though no citation carries it:
/// one to three digits (`7`, `12`), or one to eight ASCII letters, an optional `-` or `_`,
/// and one or more digits (`S1`, `doc-2`, `ref_3`), at most [`MAX_REF_LIKE_BYTES`] long.
pub fn looks_like_ref(item: &str) -> bool {
    let b = item.as_bytes();
    if b.is_empty() || b.len() > MAX_REF_LIKE_BYTES {
        return false;
    }
    if b.iter().all(u8::is_ascii_digit) {
        return b.len() <= MAX_DIGIT_REF;
    }
    let letters = b.iter().take_while(|c| c.is_ascii_alphabetic()).count();
    if letters == 0 || letters > MAX_REF_PREFIX {
        return false;
    }
    let rest = &b[letters..];
    let digits = match rest.first() {
        Some(b'-' | b'_') => &rest[1..],
        _ => rest,
    };
    !digits.is_empty() && digits.iter().all(u8::is_ascii_digit)
}

/// Finds every citation marker in `answer`, in order.
///
/// `known_refs` are the refs the answer's citations carry; an item equal to one of them is
/// a ref whatever its shape. A bracket group `[…]` (innermost, on one line) is a marker when
/// every item, split at `,` or `;` and trimmed of spaces and tabs, is known or
/// [looks like a ref](looks_like_ref), and the group is not:
///
/// * followed by `(` — a Markdown inline link `[text](url)`;
/// * at the start of a line and followed by `:` — a reference definition `[1]: url`
///   (a marker followed by a colon inside a sentence, `two options [1]: …`, stays a marker);
/// * right after the `]` of a group that is not a marker — the label of a reference link
///   `[text][1]`;
/// * preceded by a backslash — escaped text;
/// * a task box `[ ]`, `[x]` or `[X]` after a list bullet.
///
/// Adjacent groups `[1][2]` are returned as separate markers; [`merge_adjacent`] joins them.
/// A known ref that itself contains `,`, `;`, brackets or a newline cannot be named by a
/// marker, since those characters delimit the group and its items.
pub fn find_markers(answer: &str, known_refs: &[&str]) -> Vec<Marker> {
    let b = answer.as_bytes();
    let mut markers = Vec::new();
    // The `]` of the last bracket group that was not a marker, to spot `[text][label]`.
    let mut prose_close: Option<usize> = None;
    // Where the line of the current group starts, found by scanning each byte once (a
    // search back from every group would make one long line quadratic).
    let (mut scanned, mut line_start) = (0, 0);
    let mut i = 0;
    while i < b.len() {
        if b[i] != b'[' {
            i += 1;
            continue;
        }
        let limit = b.len().min(i + 1 + MAX_GROUP_BYTES + 1);
        let Some(offset) = b[i + 1..limit].iter().position(|&c| matches!(c, b'[' | b']' | b'\n'))
        else {
            // No closing bracket within reach; nothing between here and `limit` opens a
            // group, so the scan resumes there.
            i = limit;
            continue;
        };
        let j = i + 1 + offset;
        match b[j] {
            // An inner `[`: the innermost group is the candidate.
            b'[' => {
                i = j;
                continue;
            }
            b'\n' => {
                i = j + 1;
                continue;
            }
            _ => {}
        }
        // `[` and `]` are ASCII, so both ends are character boundaries.
        let content = &answer[i + 1..j];
        if let Some(p) = b[scanned..i].iter().rposition(|&c| c == b'\n') {
            line_start = scanned + p + 1;
        }
        scanned = i;
        match marker_refs(answer, line_start, i, j, content, known_refs, prose_close) {
            Some(refs) => markers.push(Marker { start: i, end: j + 1, refs }),
            None => prose_close = Some(j),
        }
        i = j + 1;
    }
    markers
}

/// The refs of the group `answer[open..=close]`, on the line starting at `line_start`, if
/// it is a marker, else `None`.
fn marker_refs(
    answer: &str,
    line_start: usize,
    open: usize,
    close: usize,
    content: &str,
    known_refs: &[&str],
    prose_close: Option<usize>,
) -> Option<Vec<String>> {
    let b = answer.as_bytes();
    let next = b.get(close + 1).copied();
    let before = &answer[line_start..open];
    if next == Some(b'(') {
        return None;
    }
    if next == Some(b':') && before.trim().is_empty() {
        return None;
    }
    if open > 0 && prose_close == Some(open - 1) {
        return None;
    }
    if open > 0 && b[open - 1] == b'\\' {
        return None;
    }
    if matches!(content, " " | "x" | "X") && is_list_bullet(before) {
        return None;
    }
    let mut refs = Vec::new();
    for item in content.split([',', ';']) {
        let item = item.trim_matches([' ', '\t']);
        if item.is_empty() || !(known_refs.contains(&item) || looks_like_ref(item)) {
            return None;
        }
        refs.push(item.to_owned());
    }
    Some(refs)
}

/// Whether `prefix` (the text of a line before a bracket) is a list bullet: optional
/// indentation, then `-`, `*`, `+`, or a number followed by `.` or `)`, then whitespace.
fn is_list_bullet(prefix: &str) -> bool {
    let p = prefix.trim_start();
    let Some(rest) = p.strip_suffix([' ', '\t']) else { return false };
    let bullet = rest.trim_end();
    match bullet {
        "-" | "*" | "+" => true,
        _ => bullet
            .strip_suffix(['.', ')'])
            .is_some_and(|n| !n.is_empty() && n.bytes().all(|c| c.is_ascii_digit())),
    }
}

/// Joins markers separated only by spaces or tabs (`[1][2]`, `[1] [2]`) into one marker
/// covering the whole run, with the refs of all of them (each once, in order of first
/// appearance). `markers` must be in order, as [`find_markers`] returns them.
pub fn merge_adjacent(answer: &str, markers: &[Marker]) -> Vec<Marker> {
    let mut out: Vec<Marker> = Vec::with_capacity(markers.len());
    for m in markers {
        if let Some(last) = out.last_mut() {
            let joined = last.end <= m.start
                && answer
                    .get(last.end..m.start)
                    .is_some_and(|gap| gap.bytes().all(|c| c == b' ' || c == b'\t'));
            if joined {
                last.end = m.end;
                for r in &m.refs {
                    if !last.refs.contains(r) {
                        last.refs.push(r.clone());
                    }
                }
                continue;
            }
        }
        out.push(m.clone());
    }
    out
}

/// Removes `markers` from `answer` for scoring and display.
///
/// Returns the stripped text and, for every byte of it, that byte's offset in `answer`,
/// followed by one final entry equal to `answer.len()`; a byte range `a..b` of the stripped
/// text therefore maps back to `map[a]..map[b - 1] + 1` in the answer (or `map[a]..map[b]`
/// when nothing was removed in between).
///
/// The spaces or tabs just before a marker go with it when the marker is followed by the
/// end of the text, whitespace or punctuation, so `45 days [1].` becomes `45 days.` rather
/// than `45 days .`; a marker at the start of a line keeps the indentation before it.
/// Markers that overlap an earlier one, run past the end of the text or do not fall on
/// character boundaries are ignored rather than trusted.
pub fn strip_markers(answer: &str, markers: &[Marker]) -> (String, Vec<usize>) {
    let b = answer.as_bytes();
    let mut ordered: Vec<&Marker> = markers.iter().collect();
    ordered.sort_by_key(|m| (m.start, m.end));

    let mut text = String::with_capacity(answer.len());
    let mut map = Vec::with_capacity(answer.len() + 1);
    let mut copied = 0; // everything before this offset has been copied or removed
    for m in ordered {
        let valid = m.start >= copied
            && m.start <= m.end
            && m.end <= answer.len()
            && answer.is_char_boundary(m.start)
            && answer.is_char_boundary(m.end);
        if !valid {
            continue;
        }
        let mut cut = m.start;
        let followed_by_word = answer[m.end..].chars().next().is_some_and(char::is_alphanumeric);
        if !followed_by_word {
            while cut > copied && matches!(b[cut - 1], b' ' | b'\t') {
                cut -= 1;
            }
            // Whitespace that runs back to the start of the line is indentation.
            if cut == 0 || b[cut - 1] == b'\n' {
                cut = m.start;
            }
        }
        push_span(answer, copied, cut, &mut text, &mut map);
        copied = m.end;
    }
    push_span(answer, copied, answer.len(), &mut text, &mut map);
    map.push(answer.len());
    (text, map)
}

fn push_span(answer: &str, from: usize, to: usize, text: &mut String, map: &mut Vec<usize>) {
    text.push_str(&answer[from..to]);
    map.extend(from..to);
}

#[cfg(test)]
mod tests {
    use super::*;

    fn refs(answer: &str, known: &[&str]) -> Vec<Vec<String>> {
        find_markers(answer, known).into_iter().map(|m| m.refs).collect()
    }

    fn strs(v: &[&str]) -> Vec<String> {
        v.iter().map(|s| s.to_string()).collect()
    }

    fn stripped(answer: &str, known: &[&str]) -> String {
        strip_markers(answer, &find_markers(answer, known)).0
    }

    #[test]
    fn marker_at_sentence_end() {
        let a = "Claims stay open for 45 days [1].";
        let m = find_markers(a, &["1"]);
        assert_eq!(m, vec![Marker { start: 29, end: 32, refs: strs(&["1"]) }]);
        assert_eq!(&a[m[0].start..m[0].end], "[1]");
        assert_eq!(stripped(a, &["1"]), "Claims stay open for 45 days.");
    }

    #[test]
    fn lists_with_commas_and_semicolons() {
        assert_eq!(
            refs("x [1, 2] y [3;4] z [5 ;  6]", &[]),
            vec![strs(&["1", "2"]), strs(&["3", "4"]), strs(&["5", "6"])]
        );
    }

    #[test]
    fn adjacent_groups_are_separate_until_merged() {
        let a = "They close [1][2] and [3] [4].";
        let m = find_markers(a, &[]);
        assert_eq!(m.len(), 4);
        let merged = merge_adjacent(a, &m);
        assert_eq!(merged.len(), 2);
        assert_eq!(&a[merged[0].start..merged[0].end], "[1][2]");
        assert_eq!(merged[0].refs, strs(&["1", "2"]));
        assert_eq!(&a[merged[1].start..merged[1].end], "[3] [4]");
        assert_eq!(stripped(a, &[]), "They close and.");
    }

    #[test]
    fn merging_keeps_each_ref_once() {
        let a = "x [1, 2][2]";
        assert_eq!(merge_adjacent(a, &find_markers(a, &[]))[0].refs, strs(&["1", "2"]));
    }

    #[test]
    fn markdown_links_are_not_markers() {
        assert!(find_markers("see [the manual](x)", &[]).is_empty());
        assert!(find_markers("see [1](https://example.org/1)", &["1"]).is_empty());
        // A reference link: the label after a prose group is not a marker.
        assert!(find_markers("see [the manual][1] for more", &["1"]).is_empty());
        // A reference definition at the start of a line.
        assert!(find_markers("text\n[1]: https://example.org", &["1"]).is_empty());
        // A colon after a marker inside a sentence is prose punctuation.
        assert_eq!(refs("There are two options [1]: A and B.", &["1"]), vec![strs(&["1"])]);
    }

    #[test]
    fn task_boxes_are_not_markers() {
        assert!(find_markers("- [x] done\n- [ ] open\n* [X] also\n1. [x] four", &["x"]).is_empty());
        // Outside a list, a known ref `x` is a marker.
        assert_eq!(refs("as noted [x].", &["x"]), vec![strs(&["x"])]);
    }

    #[test]
    fn prose_in_brackets_is_not_a_marker() {
        for a in
            ["at [12:30] sharp", "a [note] here", "the [sic] text", "in [2023] we", "[]", "[ ]"]
        {
            assert!(find_markers(a, &[]).is_empty(), "{a}");
        }
        // A group with one prose item is prose, even if another item is a ref.
        assert!(find_markers("[1, see above]", &["1"]).is_empty());
        assert!(find_markers("[1,]", &["1"]).is_empty());
        assert!(find_markers("[1,,2]", &[]).is_empty());
    }

    #[test]
    fn known_refs_of_any_shape_are_markers() {
        assert_eq!(
            refs("per the policy [hr-policy-2024-rev].", &["hr-policy-2024-rev"]),
            vec![strs(&["hr-policy-2024-rev"])]
        );
        assert_eq!(refs("in [2023]", &["2023"]), vec![strs(&["2023"])]);
    }

    #[test]
    fn ref_like_items_are_returned_even_when_unknown() {
        assert_eq!(
            refs("x [S1] y [doc-2] z [ref_3] w [9]", &["1"]),
            vec![strs(&["S1"]), strs(&["doc-2"]), strs(&["ref_3"]), strs(&["9"])]
        );
    }

    #[test]
    fn looks_like_ref_shapes() {
        for yes in ["1", "12", "123", "S1", "doc-2", "ref_3", "abcdefgh99"] {
            assert!(looks_like_ref(yes), "{yes}");
        }
        for no in
            ["", "1234", "x", "note", "abcdefghi1", "doc-", "-1", "1a", "S1.2", "doc--2", "é1"]
        {
            assert!(!looks_like_ref(no), "{no}");
        }
    }

    #[test]
    fn nested_brackets_use_the_innermost_group() {
        let a = "as said [see [1]] here";
        let m = find_markers(a, &[]);
        assert_eq!(m.len(), 1);
        assert_eq!(&a[m[0].start..m[0].end], "[1]");
        assert_eq!(refs("[[1]]", &[]), vec![strs(&["1"])]);
    }

    #[test]
    fn escaped_and_unclosed_brackets() {
        assert!(find_markers(r"a \[1\] b", &["1"]).is_empty());
        assert!(find_markers("open [1 and never closed", &[]).is_empty());
        assert!(find_markers("[1\n]", &[]).is_empty());
        assert_eq!(refs("[[[[2]", &[]), vec![strs(&["2"])]);
    }

    #[test]
    fn unicode_around_markers() {
        let a = "Die Frist beträgt 45 Tage [1]。Ünd weiter «[2]» — ok [3]";
        let m = find_markers(a, &[]);
        assert_eq!(m.len(), 3);
        for marker in &m {
            assert!(a.is_char_boundary(marker.start) && a.is_char_boundary(marker.end));
        }
        let (text, map) = strip_markers(a, &m);
        assert_eq!(text, "Die Frist beträgt 45 Tage。Ünd weiter «» — ok");
        assert_eq!(map.len(), text.len() + 1);
    }

    #[test]
    fn offset_map_points_back_into_the_answer() {
        let a = "One [1]. Two [2] more.";
        let (text, map) = strip_markers(a, &find_markers(a, &[]));
        assert_eq!(text, "One. Two more.");
        assert_eq!(map.len(), text.len() + 1);
        assert_eq!(*map.last().unwrap(), a.len());
        for (i, &o) in map[..text.len()].iter().enumerate() {
            assert_eq!(text.as_bytes()[i], a.as_bytes()[o]);
        }
        // "Two more." in the stripped text maps back to "Two [2] more." in the answer.
        let s = text.find("Two").unwrap();
        let e = text.len();
        assert_eq!(&a[map[s]..map[e - 1] + 1], "Two [2] more.");
    }

    #[test]
    fn marker_before_a_word_keeps_the_space() {
        assert_eq!(stripped("see [1] here", &[]), "see here");
        assert_eq!(stripped("see [1]here", &[]), "see here");
        assert_eq!(stripped("[1] At the start", &[]), " At the start");
        assert_eq!(stripped("line\n  [1]\nnext", &[]), "line\n  \nnext");
    }

    #[test]
    fn strip_ignores_bad_markers() {
        let a = "é [1]";
        let bad = [
            Marker { start: 1, end: 2, refs: vec![] },   // inside `é`
            Marker { start: 3, end: 100, refs: vec![] }, // past the end
            Marker { start: 4, end: 3, refs: vec![] },   // reversed
        ];
        let (text, map) = strip_markers(a, &bad);
        assert_eq!(text, a);
        assert_eq!(map, (0..=a.len()).collect::<Vec<_>>());
        // Overlapping markers: the later one is ignored.
        let overlapping =
            [Marker { start: 3, end: 6, refs: vec![] }, Marker { start: 4, end: 6, refs: vec![] }];
        assert_eq!(strip_markers(a, &overlapping).0, "é");
    }

    #[test]
    fn no_markers_leaves_text_and_identity_map() {
        let (text, map) = strip_markers("plain", &[]);
        assert_eq!(text, "plain");
        assert_eq!(map, vec![0, 1, 2, 3, 4, 5]);
    }
}
