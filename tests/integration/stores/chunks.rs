//! A chunk export (JSON Lines) as the store: citations by chunk id, by a document id with
//! a chunk, and by byte offsets into a chunk's text; entitlements as for a folder; bad
//! lines reported by line and field.

use serde_json::json;

use super::{check, write_jsonl};

#[test]
fn chunk_ids_groups_offsets_and_access_resolve_as_documented() {
    let dir = tempfile::tempdir().expect("temp");
    let store = dir.path().join("kb.jsonl");
    // "Café" puts a two-byte character before the cited sentence, so offsets must count
    // bytes of the chunk's text, not characters.
    let c1 = "Café rules. Staff receive 27 days of paid leave each year.";
    let start = c1.find("Staff").expect("sentence");
    assert_eq!(start, 13, "bytes, not characters");
    write_jsonl(
        &store,
        &[
            json!({"id": "leave-1", "doc": "hr/leave", "text": c1, "access": ["all-staff"], "embedding": [0.1, -0.2]}),
            json!({"id": "leave-2", "doc": "hr/leave", "text": "Unused leave does not carry over into the next year.", "access": ["all-staff"]}),
            json!({"id": "board-1", "doc": "finance/board", "text": "The board approved a budget of 4.2 million for the depot.", "access": ["finance-board"]}),
            json!({"id": "parking-1", "text": "Visitor parking is in bays 40 to 48."}),
            json!({"id": "broken", "doc": "x"}),
        ],
    );
    let answers = dir.path().join("answers.jsonl");
    write_jsonl(
        &answers,
        &[
            json!({"id": "a1", "groups": ["all-staff"], "answer": "Staff receive 27 days of paid leave each year [1].",
                   "citations": [{"ref": "1", "doc": "leave-1", "start": start, "end": c1.len()}]}),
            json!({"id": "a2", "groups": ["all-staff"], "answer": "Unused leave does not carry over [1].",
                   "citations": [{"ref": "1", "doc": "hr/leave", "chunk": "leave-2"}]}),
            json!({"id": "a3", "groups": ["all-staff"], "answer": "Leave does not carry over [1].",
                   "citations": [{"ref": "1", "doc": "hr/leave"}]}),
            json!({"id": "a4", "groups": ["all-staff"], "answer": "The board approved 4.2 million for the depot [1].",
                   "citations": [{"ref": "1", "doc": "board-1"}]}),
            json!({"id": "a5", "groups": ["all-staff"], "answer": "Parking is in bays 40 to 48 [1]. Nothing else [2].",
                   "citations": [{"ref": "1", "doc": "parking-1"}, {"ref": "2", "doc": "no-such-chunk"}]}),
            json!({"id": "a6", "groups": ["all-staff"], "answer": "Staff receive 27 days [1].",
                   "citations": [{"ref": "1", "doc": "leave-1", "start": 4, "end": 40}]}),
            json!({"id": "a7", "groups": ["all-staff"], "answer": "Unused leave does not carry over [1].",
                   "citations": [{"ref": "1", "doc": "hr/leave", "chunk": "leave-9"}]}),
        ],
    );
    let out = check(
        dir.path(),
        &["--store", store.to_str().expect("path"), "--answers", answers.to_str().expect("path")],
    );
    assert_eq!(out.code, 1, "{}", out.stderr);
    let rec = &out.findings["inputs"]["store"];
    assert_eq!(rec["form"], "chunks");
    assert_eq!(rec["documents"], 4);
    assert_eq!(rec["problems"][0]["path"], "kb.jsonl:5");
    assert_eq!(rec["problems"][0]["field"], "text");

    assert_eq!(out.citation("a1", "1").0, "ok");
    assert_eq!(out.sentence("a1", 0).0, "supported");
    let ev = &out.answer("a1")["sentences"][0]["evidence"];
    assert_eq!(ev["doc"], "leave-1");
    assert_eq!(ev["start"], start, "evidence offsets count bytes of the chunk text");

    assert_eq!(out.citation("a2", "1").0, "ok");
    assert_eq!(out.answer("a2")["citations"][0]["doc"], "leave-2");
    assert_eq!(out.sentence("a2", 0).0, "supported");

    let (status, detail) = out.citation("a3", "1");
    assert_eq!(status, "bad_locator");
    assert!(detail.contains("stored as 2 chunks (leave-1, leave-2)"), "{detail}");

    assert_eq!(out.citation("a4", "1").0, "forbidden");
    assert_eq!(out.citation("a5", "1").0, "access_unknown");
    assert_eq!(out.citation("a5", "2").0, "dead");
    let (status, detail) = out.citation("a6", "1");
    assert_eq!(status, "bad_locator");
    assert!(detail.contains("inside a multi-byte character"), "{detail}");
    let (status, detail) = out.citation("a7", "1");
    assert_eq!(status, "bad_locator");
    assert!(detail.contains("no chunk \"leave-9\""), "{detail}");
}

#[test]
fn a_chunk_export_that_cannot_be_read_is_exit_2() {
    let dir = tempfile::tempdir().expect("temp");
    let answers = dir.path().join("a.jsonl");
    std::fs::write(&answers, "{\"id\": \"a\", \"answer\": \"x\", \"citations\": []}\n")
        .expect("write");
    let missing = dir.path().join("missing.jsonl");
    let out = check(
        dir.path(),
        &[
            "--store",
            &format!("chunks:{}", missing.display()),
            "--answers",
            answers.to_str().expect("path"),
        ],
    );
    assert_eq!(out.code, 2);
    assert!(
        out.stderr.contains("missing.jsonl") && out.stderr.contains("cannot read"),
        "{}",
        out.stderr
    );
}
