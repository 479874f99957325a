//! Tests of the answers reader: one per cause of a rejected line, plus the counting
//! guarantee and the bounded reading of over-long lines.

use std::io::{self, BufRead, BufReader, Read};

use super::*;

/// A valid record with one range citation, as a JSON string, with `extra` spliced in
/// before the closing brace.
fn record(id: &str, extra: &str) -> String {
    format!(
        r#"{{"id": "{id}", "answer": "Claims stay open for 45 days [1].", "citations": [{{"ref": "1", "doc": "support/warranty.md", "start": 0, "end": 10}}]{extra}}}"#
    )
}

fn read_all(input: &str) -> (Vec<Result<Answer, Rejected>>, usize) {
    let mut reader = AnswerReader::new(input.as_bytes());
    let items: Vec<_> = reader.by_ref().collect();
    assert!(reader.io_error().is_none());
    (items, reader.non_blank_lines())
}

/// The error message for a one-line input that must be rejected.
fn reject(line: &str) -> String {
    let (items, _) = read_all(line);
    assert_eq!(items.len(), 1, "{line}");
    match &items[0] {
        Err(r) => r.error.clone(),
        Ok(a) => panic!("accepted {a:?}"),
    }
}

fn accept(line: &str) -> Answer {
    let (items, _) = read_all(line);
    assert_eq!(items.len(), 1, "{line}");
    match &items[0] {
        Ok(a) => a.clone(),
        Err(r) => panic!("rejected: {}", r.error),
    }
}

/// A one-citation record whose citation is `citation`, placed second (index 1) after a
/// valid first citation, so that messages name `citations[1]`.
fn with_citation(citation: &str) -> String {
    format!(
        r#"{{"id": "a", "answer": "x", "citations": [{{"ref": "1", "doc": "d.md"}}, {citation}]}}"#
    )
}

#[test]
fn reads_every_field() {
    let line = r#"{"id": "a-0007", "user": "u-311", "groups": ["field-ops"], "question": "How long?", "answer": "Claims stay open for 45 days [1]. After that they close [1][2].", "citations": [{"ref": "1", "doc": "support/warranty.md", "start": 1200, "end": 1718}, {"ref": "2", "doc": "support/claims-faq", "chunk": "c4", "quote": "Open claims close.", "sha256": "9f2c"}, {"ref": 3, "doc": "x.md"}], "approved_answer": "Open for 45 days.", "model": "unknown fields are ignored"}"#;
    let a = accept(line);
    assert_eq!(
        a,
        Answer {
            id: "a-0007".into(),
            line: 1,
            user: Some("u-311".into()),
            groups: Some(vec!["field-ops".into()]),
            question: Some("How long?".into()),
            answer: "Claims stay open for 45 days [1]. After that they close [1][2].".into(),
            citations: vec![
                Citation {
                    r#ref: "1".into(),
                    doc: "support/warranty.md".into(),
                    locator: Locator::Range { start: 1200, end: 1718 },
                    quote: None,
                    sha256: None,
                },
                Citation {
                    r#ref: "2".into(),
                    doc: "support/claims-faq".into(),
                    locator: Locator::Chunk("c4".into()),
                    quote: Some("Open claims close.".into()),
                    sha256: Some("9f2c".into()),
                },
                Citation {
                    r#ref: "3".into(),
                    doc: "x.md".into(),
                    locator: Locator::Whole,
                    quote: None,
                    sha256: None,
                },
            ],
            approved_answer: Some("Open for 45 days.".into()),
        }
    );
}

#[test]
fn minimal_record_with_empty_citations() {
    let a = accept(r#"{"id": "a", "answer": "", "citations": []}"#);
    assert!(a.citations.is_empty());
    assert_eq!(a.user, None);
    assert_eq!(a.groups, None);
}

#[test]
fn null_optional_fields_are_absent() {
    let a = accept(
        r#"{"id": "a", "user": null, "groups": null, "question": null, "approved_answer": null, "answer": "x", "citations": [{"ref": null, "doc": "d", "start": null, "end": null, "chunk": null, "quote": null, "sha256": null}]}"#,
    );
    assert_eq!(a.user, None);
    assert_eq!(a.groups, None);
    assert_eq!(a.citations[0].locator, Locator::Whole);
    assert_eq!(a.citations[0].r#ref, "1");
}

#[test]
fn empty_groups_are_known_to_be_empty() {
    let a = accept(&record("a", r#", "groups": []"#));
    assert_eq!(a.groups, Some(vec![]));
}

#[test]
fn bom_on_the_first_line_is_skipped() {
    let input = format!("\u{feff}{}\n{}\n", record("a", ""), record("b", ""));
    let (items, n) = read_all(&input);
    assert_eq!(n, 2);
    assert_eq!(items[0].as_ref().unwrap().id, "a");
    assert_eq!(items[1].as_ref().unwrap().id, "b");
}

#[test]
fn bom_on_a_later_line_is_rejected() {
    let input = format!("{}\n\u{feff}{}\n", record("a", ""), record("b", ""));
    let (items, _) = read_all(&input);
    let r = items[1].as_ref().unwrap_err();
    assert_eq!(r.line, 2);
    assert!(r.error.contains("byte order mark"), "{}", r.error);
}

#[test]
fn crlf_line_endings() {
    let input = format!("{}\r\n\r\n{}\r\n", record("a", ""), record("b", ""));
    let (items, n) = read_all(&input);
    assert_eq!(n, 2);
    assert_eq!(items[0].as_ref().unwrap().line, 1);
    assert_eq!(items[1].as_ref().unwrap().line, 3);
}

#[test]
fn blank_lines_are_skipped_and_not_counted_but_numbered() {
    let input = format!("\n  \n{}\n\t\n\n{}\n   ", record("a", ""), record("b", ""));
    let mut reader = AnswerReader::new(input.as_bytes());
    let lines: Vec<usize> = reader.by_ref().map(|r| r.unwrap().line).collect();
    assert_eq!(lines, vec![3, 6]);
    assert_eq!(reader.non_blank_lines(), 2);
    assert_eq!(reader.lines_read(), 7);
}

#[test]
fn last_line_without_newline_is_read() {
    let (items, n) = read_all(&record("a", ""));
    assert_eq!(n, 1);
    assert!(items[0].is_ok());
}

#[test]
fn invalid_utf8() {
    let mut bytes = record("a", "").into_bytes();
    bytes[10] = 0xFF;
    bytes.push(b'\n');
    bytes.extend_from_slice(record("b", "").as_bytes());
    let mut reader = AnswerReader::new(&bytes[..]);
    let items: Vec<_> = reader.by_ref().collect();
    assert_eq!(items[0].as_ref().unwrap_err().error, "invalid UTF-8 at byte 11 of the line");
    assert_eq!(items[1].as_ref().unwrap().id, "b");
}

#[test]
fn invalid_json_names_the_column() {
    assert_eq!(reject(r#"{"id": "a", "answer": }"#), "invalid JSON at column 23: expected value");
    assert_eq!(reject(r#"{"id": "a""#), "invalid JSON at column 10: EOF while parsing an object");
    assert!(reject(&format!("{} trailing", record("a", ""))).starts_with("invalid JSON at column"));
}

#[test]
fn duplicate_json_keys() {
    let e = reject(r#"{"id": "a", "id": "b", "answer": "x", "citations": []}"#);
    assert!(
        e.starts_with(r#"invalid JSON at column "#) && e.ends_with(r#"duplicate key "id""#),
        "{e}"
    );
}

#[test]
fn not_an_object() {
    assert_eq!(reject("[1, 2]"), "expected an object, found an array");
    assert_eq!(reject(r#""a-1""#), r#"expected an object, found "a-1""#);
    assert_eq!(reject("42"), "expected an object, found 42");
    assert_eq!(reject("null"), "expected an object, found null");
}

#[test]
fn id_must_be_a_non_empty_string() {
    assert_eq!(reject(r#"{"answer": "x", "citations": []}"#), "id: missing");
    assert_eq!(
        reject(r#"{"id": 7, "answer": "x", "citations": []}"#),
        "id: expected a non-empty string, found 7"
    );
    assert_eq!(
        reject(r#"{"id": "", "answer": "x", "citations": []}"#),
        r#"id: expected a non-empty string, found """#
    );
    assert_eq!(
        reject(r#"{"id": "  ", "answer": "x", "citations": []}"#),
        r#"id: expected a non-empty string, found "  ""#
    );
    assert_eq!(
        reject(r#"{"id": null, "answer": "x", "citations": []}"#),
        "id: expected a non-empty string, found null"
    );
}

#[test]
fn id_longer_than_the_limit() {
    let limits = ReaderLimits { max_id_bytes: 4, ..ReaderLimits::default() };
    let line = r#"{"id": "abcde", "answer": "x", "citations": []}"#;
    let e = parse_answer(line, 1, &limits).unwrap_err();
    assert_eq!(e, "id: 5 bytes long, more than the limit of 4 (limits.max_id_bytes)");
    let line = r#"{"id": "a", "answer": "x", "citations": [{"doc": "abcde"}]}"#;
    let e = parse_answer(line, 1, &limits).unwrap_err();
    assert!(e.starts_with("citations[0].doc: 5 bytes long"), "{e}");
}

#[test]
fn answer_must_be_a_string() {
    assert_eq!(reject(r#"{"id": "a", "citations": []}"#), "answer: missing");
    assert_eq!(
        reject(r#"{"id": "a", "answer": ["x"], "citations": []}"#),
        "answer: expected a string, found an array"
    );
}

#[test]
fn citations_must_be_an_array_of_objects() {
    assert_eq!(reject(r#"{"id": "a", "answer": "x"}"#), "citations: missing");
    assert_eq!(
        reject(r#"{"id": "a", "answer": "x", "citations": {"ref": "1"}}"#),
        "citations: expected an array, found an object"
    );
    assert_eq!(
        reject(r#"{"id": "a", "answer": "x", "citations": null}"#),
        "citations: expected an array, found null"
    );
    assert_eq!(
        reject(&with_citation(r#""d.md""#)),
        r#"citations[1]: expected an object, found "d.md""#
    );
}

#[test]
fn too_many_citations() {
    let limits = ReaderLimits { max_citations: 1, ..ReaderLimits::default() };
    let e = parse_answer(&with_citation(r#"{"doc": "e.md"}"#), 1, &limits).unwrap_err();
    assert_eq!(e, "citations: 2 citations, more than the limit of 1 (limits.max_citations)");
}

#[test]
fn doc_is_required() {
    assert_eq!(reject(&with_citation(r#"{"ref": "2"}"#)), "citations[1].doc: missing");
    assert_eq!(
        reject(&with_citation(r#"{"ref": "2", "doc": 5}"#)),
        "citations[1].doc: expected a non-empty string, found 5"
    );
    assert_eq!(
        reject(&with_citation(r#"{"ref": "2", "doc": ""}"#)),
        r#"citations[1].doc: expected a non-empty string, found """#
    );
}

#[test]
fn ref_forms() {
    let a = accept(&with_citation(r#"{"ref": 2, "doc": "e.md"}"#));
    assert_eq!(a.citations[1].r#ref, "2");
    let a = accept(&with_citation(r#"{"doc": "e.md"}"#));
    assert_eq!(a.citations[1].r#ref, "2", "a missing ref takes the 1-based position");
    let a = accept(&with_citation(r#"{"ref": "S2", "doc": "e.md"}"#));
    assert_eq!(a.citations[1].r#ref, "S2");
    assert_eq!(
        reject(&with_citation(r#"{"ref": 2.5, "doc": "e.md"}"#)),
        "citations[1].ref: expected a non-empty string or an integer, found 2.5"
    );
    assert_eq!(
        reject(&with_citation(r#"{"ref": true, "doc": "e.md"}"#)),
        "citations[1].ref: expected a non-empty string or an integer, found true"
    );
    assert_eq!(
        reject(&with_citation(r#"{"ref": "", "doc": "e.md"}"#)),
        r#"citations[1].ref: expected a non-empty string, found """#
    );
}

#[test]
fn duplicate_refs() {
    assert_eq!(
        reject(&with_citation(r#"{"ref": "1", "doc": "e.md"}"#)),
        r#"citations[1].ref: duplicate ref "1", already used by citations[0]"#
    );
    // An integer ref and the same ref as a string are one ref.
    assert_eq!(
        reject(&with_citation(r#"{"ref": 1, "doc": "e.md"}"#)),
        r#"citations[1].ref: duplicate ref "1", already used by citations[0]"#
    );
    // A positional ref colliding with an explicit one.
    let line =
        r#"{"id": "a", "answer": "x", "citations": [{"ref": "2", "doc": "d"}, {"doc": "e"}]}"#;
    assert_eq!(
        reject(line),
        r#"citations[1].ref: duplicate ref "2" (its position, as it gives no ref), already used by citations[0]"#
    );
}

#[test]
fn start_and_end_must_be_non_negative_integers() {
    assert_eq!(
        reject(&with_citation(r#"{"doc": "e", "start": "12", "end": 20}"#)),
        r#"citations[1].start: expected a non-negative integer, found "12""#
    );
    assert_eq!(
        reject(&with_citation(r#"{"doc": "e", "start": -1, "end": 20}"#)),
        "citations[1].start: expected a non-negative integer, found -1"
    );
    assert_eq!(
        reject(&with_citation(r#"{"doc": "e", "start": 1, "end": 2.0}"#)),
        "citations[1].end: expected a non-negative integer, found 2.0"
    );
    assert_eq!(
        reject(&with_citation(r#"{"doc": "e", "start": 1, "end": 1e30}"#)),
        "citations[1].end: expected a non-negative integer, found 1e+30"
    );
    let a = accept(&with_citation(r#"{"doc": "e", "start": 0, "end": 18446744073709551615}"#));
    assert_eq!(a.citations[1].locator, Locator::Range { start: 0, end: u64::MAX });
}

#[test]
fn reversed_range_is_left_to_the_citation_checks() {
    let a = accept(&with_citation(r#"{"doc": "e", "start": 9, "end": 3}"#));
    assert_eq!(a.citations[1].locator, Locator::Range { start: 9, end: 3 });
}

#[test]
fn start_and_end_come_together() {
    assert_eq!(
        reject(&with_citation(r#"{"doc": "e", "start": 1}"#)),
        "citations[1].end: missing; start and end must be given together"
    );
    assert_eq!(
        reject(&with_citation(r#"{"doc": "e", "end": 1}"#)),
        "citations[1].start: missing; start and end must be given together"
    );
}

#[test]
fn at_most_one_locator() {
    for c in [
        r#"{"doc": "e", "start": 1, "end": 2, "chunk": "c1"}"#,
        r#"{"doc": "e", "start": 1, "chunk": "c1"}"#,
        r#"{"doc": "e", "end": 2, "chunk": "c1"}"#,
    ] {
        assert_eq!(
            reject(&with_citation(c)),
            "citations[1]: give either start/end or chunk, not both"
        );
    }
}

#[test]
fn chunk_quote_and_sha256_types() {
    assert_eq!(
        reject(&with_citation(r#"{"doc": "e", "chunk": 4}"#)),
        "citations[1].chunk: expected a non-empty string, found 4"
    );
    assert_eq!(
        reject(&with_citation(r#"{"doc": "e", "quote": ["q"]}"#)),
        "citations[1].quote: expected a string, found an array"
    );
    assert_eq!(
        reject(&with_citation(r#"{"doc": "e", "sha256": 12}"#)),
        "citations[1].sha256: expected a string, found 12"
    );
}

#[test]
fn optional_answer_fields_types() {
    assert_eq!(
        reject(&record("a", r#", "user": 311"#)),
        "user: expected a non-empty string, found 311"
    );
    assert_eq!(
        reject(&record("a", r#", "question": false"#)),
        "question: expected a string, found false"
    );
    assert_eq!(
        reject(&record("a", r#", "approved_answer": {"text": "x"}"#)),
        "approved_answer: expected a string, found an object"
    );
    assert_eq!(
        reject(&record("a", r#", "groups": "hr""#)),
        r#"groups: expected an array of strings, found "hr""#
    );
    assert_eq!(
        reject(&record("a", r#", "groups": ["hr", 3]"#)),
        "groups[1]: expected a string, found 3"
    );
}

#[test]
fn duplicate_ids_name_the_first_line() {
    let input = format!("{}\n\n{}\n{}\n", record("a", ""), record("b", ""), record("a", ""));
    let (items, n) = read_all(&input);
    assert_eq!(n, 3);
    let r = items[2].as_ref().unwrap_err();
    assert_eq!(r.line, 4);
    assert_eq!(r.error, r#"id: duplicate id "a", first used on line 1"#);
    // The third and later repeats name the same first line.
    let input = format!("{}\n{}\n{}\n", record("a", ""), record("a", ""), record("a", ""));
    let (items, _) = read_all(&input);
    assert_eq!(
        items[2].as_ref().unwrap_err().error,
        r#"id: duplicate id "a", first used on line 1"#
    );
}

#[test]
fn a_rejected_line_does_not_claim_its_id() {
    let bad = r#"{"id": "a", "answer": 1, "citations": []}"#;
    let input = format!("{bad}\n{}\n", record("a", ""));
    let (items, _) = read_all(&input);
    assert!(items[0].is_err());
    assert_eq!(items[1].as_ref().unwrap().line, 2);
}

#[test]
fn over_long_line_is_streamed_not_buffered() {
    const HUGE: u64 = 20 * 1024 * 1024;
    const LIMIT: usize = 4096;
    // Generated on the fly, so neither the test nor the reader holds the 20 MiB line.
    let input = io::repeat(b'a')
        .take(HUGE)
        .chain(&b"\n"[..])
        .chain(io::Cursor::new(format!("{}\n", record("next", ""))));
    let limits = ReaderLimits { max_line_bytes: LIMIT, ..ReaderLimits::default() };
    let mut reader = AnswerReader::with_limits(BufReader::with_capacity(8192, input), limits);

    let first = reader.next().unwrap().unwrap_err();
    assert_eq!(first.line, 1);
    assert_eq!(
        first.error,
        format!(
            "line is {HUGE} bytes long, more than the limit of {LIMIT} (limits.max_line_bytes); not read"
        )
    );
    assert!(reader.buf.capacity() <= 2 * LIMIT, "buffer grew to {}", reader.buf.capacity());

    let second = reader.next().unwrap().unwrap();
    assert_eq!((second.id.as_str(), second.line), ("next", 2));
    assert!(reader.next().is_none());
    assert_eq!(reader.non_blank_lines(), 2);
}

#[test]
fn line_of_exactly_the_limit_is_read() {
    let line = record("a", "");
    let limits = ReaderLimits { max_line_bytes: line.len(), ..ReaderLimits::default() };
    let mut reader = AnswerReader::with_limits(line.as_bytes(), limits);
    assert!(reader.next().unwrap().is_ok());
    let limits = ReaderLimits { max_line_bytes: line.len() - 1, ..ReaderLimits::default() };
    let mut reader = AnswerReader::with_limits(line.as_bytes(), limits);
    assert!(reader.next().unwrap().is_err());
}

#[test]
fn counts_add_up() {
    let mut bad_utf8 = b"{\"id\": \"\xFF\"}".to_vec();
    bad_utf8.push(b'\n');
    let mut input = Vec::new();
    for part in [
        format!("\u{feff}{}\n", record("a", "")),
        "\n\r\n".to_owned(),
        "not json\n".to_owned(),
        format!("{}\r\n", record("b", "")),
        "[]\n".to_owned(),
        format!("{}\n", record("a", "")),
        "   \n".to_owned(),
        format!("{}\n", "x".repeat(500)),
        with_citation(r#"{"doc": "e", "start": 1, "chunk": "c"}"#) + "\n",
    ] {
        input.extend_from_slice(part.as_bytes());
    }
    input.extend_from_slice(&bad_utf8);
    input.extend_from_slice(record("c", "").as_bytes());

    let limits = ReaderLimits { max_line_bytes: 300, ..ReaderLimits::default() };
    let mut reader = AnswerReader::with_limits(&input[..], limits);
    let (mut ok, mut rejected) = (0, 0);
    for item in reader.by_ref() {
        match item {
            Ok(_) => ok += 1,
            Err(_) => rejected += 1,
        }
    }
    assert_eq!((ok, rejected), (3, 6));
    assert_eq!(ok + rejected, reader.non_blank_lines());
    assert_eq!(reader.non_blank_lines(), 9);
}

/// A source that yields some bytes and then fails, as a broken pipe or disk would.
struct FailingAfter(Vec<u8>);

impl Read for FailingAfter {
    fn read(&mut self, out: &mut [u8]) -> io::Result<usize> {
        if self.0.is_empty() {
            return Err(io::Error::other("device gone"));
        }
        let n = out.len().min(self.0.len());
        out[..n].copy_from_slice(&self.0[..n]);
        self.0.drain(..n);
        Ok(n)
    }
}

#[test]
fn io_error_ends_reading_and_is_kept() {
    let data = format!("{}\n{}", record("a", ""), record("b", "")).into_bytes();
    let mut reader = AnswerReader::new(BufReader::new(FailingAfter(data)));
    assert!(reader.next().unwrap().is_ok());
    // The second line has no newline yet when the source fails: it is not yielded.
    assert!(reader.next().is_none());
    assert!(reader.next().is_none());
    assert_eq!(reader.io_error().map(|e| e.to_string()).as_deref(), Some("device gone"));
    assert_eq!(reader.non_blank_lines(), 1);
    assert!(reader.take_io_error().is_some());
}

/// `BufRead` over `&[u8]` reads in one chunk; a tiny buffer exercises lines that span
/// many `fill_buf` calls.
#[test]
fn lines_spanning_many_buffer_fills() {
    let input = format!("{}\r\n\n{}\n", record("a", ""), record("b", ""));
    let reader = BufReader::with_capacity(3, input.as_bytes());
    assert!(reader.buffer().is_empty());
    let mut answers = AnswerReader::new(reader);
    let ids: Vec<String> = answers.by_ref().map(|r| r.unwrap().id).collect();
    assert_eq!(ids, vec!["a", "b"]);
}

#[test]
fn input_error_display() {
    let e = InputError::new("answers.jsonl", "bad").at_line(3).in_field("groups[1]");
    assert_eq!(e.to_string(), "answers.jsonl:3: groups[1]: bad");
    assert_eq!(InputError::new("p.json", "bad").to_string(), "p.json: bad");
}

#[test]
fn reader_limits_default_from_config() {
    let l = ReaderLimits::default();
    assert_eq!((l.max_line_bytes, l.max_citations, l.max_id_bytes), (8 * 1024 * 1024, 256, 1024));
}

#[test]
fn reads_through_a_bufread_trait_object() {
    // As the CLI does for `--answers -`, where the source is a locked stdin.
    let input = record("a", "");
    let source: Box<dyn BufRead> = Box::new(input.as_bytes());
    assert_eq!(AnswerReader::new(source).count(), 1);
}

/// A small deterministic generator, so the randomised tests below repeat exactly.
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> usize {
        self.0 = self.0.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
        (self.0 >> 33) as usize
    }

    fn pick<'a>(&mut self, items: &[&'a str]) -> &'a str {
        items[self.next() % items.len()]
    }
}

#[test]
fn counts_add_up_on_generated_input() {
    const PIECES: &[&str] = &[
        "{",
        "}",
        "[",
        "]",
        "\"id\"",
        "\"answer\"",
        "\"citations\"",
        "\"doc\"",
        "\"start\"",
        "\"ref\"",
        ":",
        ",",
        " ",
        "\"a\"",
        "\"b\"",
        "1",
        "-1",
        "null",
        "\n",
        "\r\n",
        "\n\n",
        "\u{feff}",
        "é",
        "\t",
    ];
    let mut rng = Lcg(7);
    for round in 0..200 {
        let mut input = String::new();
        for _ in 0..rng.next() % 60 {
            input.push_str(rng.pick(PIECES));
            if rng.next() % 7 == 0 {
                input.push_str(&record(rng.pick(&["a", "b", "c"]), ""));
            }
        }
        let limits =
            ReaderLimits { max_line_bytes: 64 + rng.next() % 200, ..ReaderLimits::default() };
        let mut reader = AnswerReader::with_limits(input.as_bytes(), limits);
        let yielded = reader.by_ref().count();
        let non_blank = input
            .split('\n')
            .enumerate()
            .filter(|(i, l)| {
                let l = if *i == 0 { l.strip_prefix('\u{feff}').unwrap_or(l) } else { l };
                !l.bytes().all(|b| b.is_ascii_whitespace())
            })
            .count();
        assert_eq!(yielded, reader.non_blank_lines(), "round {round}: {input:?}");
        assert_eq!(yielded, non_blank, "round {round}: {input:?}");
    }
}

#[test]
fn marker_invariants_on_generated_text() {
    use super::markers::{find_markers, merge_adjacent, strip_markers};
    const PIECES: &[&str] = &[
        "[", "]", "1", "2", "S3", ",", ";", " ", "x", "(", ")", ":", "\n", "\\", "é", "。", "-",
        "note", ".", "\t", "doc-4",
    ];
    let mut rng = Lcg(11);
    for _ in 0..2000 {
        let text: String = (0..rng.next() % 40).map(|_| rng.pick(PIECES)).collect();
        let markers = find_markers(&text, &["note"]);
        let mut last_end = 0;
        for m in &markers {
            assert!(m.start >= last_end && m.start < m.end && m.end <= text.len(), "{text:?}");
            assert!(text.is_char_boundary(m.start) && text.is_char_boundary(m.end));
            assert!(text[m.start..].starts_with('[') && text[..m.end].ends_with(']'));
            assert!(!m.refs.is_empty());
            last_end = m.end;
        }
        for set in [markers.clone(), merge_adjacent(&text, &markers)] {
            let (stripped, map) = strip_markers(&text, &set);
            assert_eq!(map.len(), stripped.len() + 1);
            assert_eq!(map.last(), Some(&text.len()));
            assert!(map.windows(2).all(|w| w[0] < w[1]), "{text:?}");
            for (i, &o) in map[..stripped.len()].iter().enumerate() {
                assert_eq!(stripped.as_bytes()[i], text.as_bytes()[o]);
            }
        }
    }
}
