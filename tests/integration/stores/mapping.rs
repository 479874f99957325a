//! Field maps: answer logs in two invented shapes, read through JSON Pointers (from the
//! config's `[input]` table and from `--input-map`), give the findings of the same
//! answers written in the answers format; a record whose mapped field is missing is
//! rejected naming the pointer.

use serde_json::json;

use super::{check, write_jsonl};

const DOC: &str = "Refunds are paid within 14 days of the returned item arriving. Items must be unused and in their original packaging.";

/// The same three answers in the answers format.
fn plain() -> Vec<serde_json::Value> {
    let end = DOC.find(" Items").expect("split");
    vec![
        json!({"id": "7", "groups": ["staff"], "answer": "Refunds are paid within 14 days [1].",
               "citations": [{"ref": "1", "doc": "returns.txt", "start": 0, "end": end}]}),
        json!({"id": "8", "groups": ["staff"], "answer": "Items must be unused [1]. Refunds take 30 days [2].",
               "citations": [{"ref": "1", "doc": "returns.txt"}, {"ref": "2", "doc": "returns.txt", "quote": "within 14 days"}]}),
        json!({"id": "9", "user": "u-2", "answer": "Items must be in their original packaging [1].",
               "citations": [{"ref": "1", "doc": "returns.txt"}]}),
    ]
}

#[test]
fn two_log_shapes_read_through_field_maps_give_the_plain_findings() {
    let dir = tempfile::tempdir().expect("temp");
    let store = dir.path().join("store");
    std::fs::create_dir_all(&store).expect("store");
    std::fs::write(store.join("returns.txt"), DOC).expect("doc");
    std::fs::write(store.join("manifest.json"), r#"{"default_access": ["staff"]}"#)
        .expect("manifest");
    let principals = dir.path().join("principals.json");
    std::fs::write(&principals, r#"{"u-2": ["staff"]}"#).expect("principals");
    let end = DOC.find(" Items").expect("split");

    let plain_log = dir.path().join("plain.jsonl");
    write_jsonl(&plain_log, &plain());

    // Shape A: a chat service's trace, nested, with spans as two-element arrays and
    // integer request ids; mapped in the config.
    let a_log = dir.path().join("a.jsonl");
    write_jsonl(
        &a_log,
        &[
            json!({"request_id": 7, "caller": {"groups": ["staff"]}, "response": {"text": "Refunds are paid within 14 days [1].",
                   "sources": [{"n": 1, "source_id": "returns.txt", "span": [0, end]}]}}),
            json!({"request_id": 8, "caller": {"groups": ["staff"]}, "response": {"text": "Items must be unused [1]. Refunds take 30 days [2].",
                   "sources": [{"n": 1, "source_id": "returns.txt"}, {"n": 2, "source_id": "returns.txt", "excerpt": "within 14 days"}]}}),
            json!({"request_id": 9, "caller": {"user": "u-2"}, "response": {"text": "Items must be in their original packaging [1].",
                   "sources": [{"n": 1, "source_id": "returns.txt"}]}}),
        ],
    );
    let a_config = dir.path().join("a.toml");
    std::fs::write(
        &a_config,
        r#"[input]
id = "/request_id"
answer = "/response/text"
citations = "/response/sources"
user = "/caller/user"
groups = "/caller/groups"

[input.citation]
ref = "/n"
doc = "/source_id"
start = "/span/0"
end = "/span/1"
quote = "/excerpt"
"#,
    )
    .expect("config");

    // Shape B: flat event records whose keys hold '/' and '~', which JSON Pointer escapes
    // as ~1 and ~0 (RFC 6901, section 3); mapped with --input-map.
    let b_log = dir.path().join("b.jsonl");
    write_jsonl(
        &b_log,
        &[
            json!({"evt": {"uid": "7"}, "out/text": "Refunds are paid within 14 days [1].", "acl~groups": ["staff"],
                   "refs": [{"target": {"path": "returns.txt"}, "from": 0, "to": end, "label": "1"}]}),
            json!({"evt": {"uid": "8"}, "out/text": "Items must be unused [1]. Refunds take 30 days [2].", "acl~groups": ["staff"],
                   "refs": [{"target": {"path": "returns.txt"}, "label": "1"}, {"target": {"path": "returns.txt"}, "label": "2", "said": "within 14 days"}]}),
            json!({"evt": {"uid": "9"}, "who": "u-2", "out/text": "Items must be in their original packaging [1].",
                   "refs": [{"target": {"path": "returns.txt"}, "label": "1"}]}),
        ],
    );
    let b_map = dir.path().join("b-map.toml");
    std::fs::write(
        &b_map,
        r#"[input]
id = "/evt/uid"
answer = "/out~1text"
citations = "/refs"
user = "/who"
groups = "/acl~0groups"

[input.citation]
ref = "/label"
doc = "/target/path"
start = "/from"
end = "/to"
quote = "/said"
"#,
    )
    .expect("map");

    let s = store.to_str().expect("p");
    let p = principals.to_str().expect("p");
    let base = check(
        dir.path(),
        &["--store", s, "--principals", p, "--answers", plain_log.to_str().expect("p")],
    );
    assert_eq!(base.code, 1, "{}", base.stderr);
    assert_eq!(base.sentence("7", 0).0, "supported");
    assert_eq!(base.citation("8", "2").0, "ok");
    let a = check(
        dir.path(),
        &[
            "--store",
            s,
            "--principals",
            p,
            "--answers",
            a_log.to_str().expect("p"),
            "--config",
            a_config.to_str().expect("p"),
        ],
    );
    let b = check(
        dir.path(),
        &[
            "--store",
            s,
            "--principals",
            p,
            "--answers",
            b_log.to_str().expect("p"),
            "--input-map",
            b_map.to_str().expect("p"),
        ],
    );
    for (name, out) in [("A", &a), ("B", &b)] {
        assert_eq!(out.code, base.code, "{name}: {}", out.stderr);
        assert_eq!(out.findings["answers"], base.findings["answers"], "shape {name}");
        assert_eq!(out.findings["summary"], base.findings["summary"], "shape {name}");
    }
    // The map is part of the recorded settings, and the map file an input.
    assert_eq!(a.findings["config"]["input"]["citation"]["start"], "/span/0");
    assert_eq!(b.findings["config"]["input"]["answer"], "/out~1text");
    assert_eq!(b.findings["inputs"]["input_map"]["path"], b_map.display().to_string());
    assert!(b.html.contains("--input-map"), "the report lists the map file");
}

#[test]
fn a_record_without_its_mapped_field_is_rejected_naming_the_pointer() {
    let dir = tempfile::tempdir().expect("temp");
    let store = dir.path().join("store");
    std::fs::create_dir_all(&store).expect("store");
    std::fs::write(store.join("returns.txt"), DOC).expect("doc");
    let log = dir.path().join("log.jsonl");
    write_jsonl(
        &log,
        &[
            json!({"rid": "1", "reply": {"body": "Refunds take 14 days [1]."}, "cites": [{"d": "returns.txt"}]}),
            json!({"rid": "2", "reply": {}, "cites": []}),
            json!({"rid": "3", "reply": {"body": "x [1]."}, "cites": [{"doc": "returns.txt"}]}),
            json!({"rid": "4", "reply": {"body": "x [1]."}, "cites": [{"d": "returns.txt", "s": "0", "e": 4}]}),
        ],
    );
    let map = dir.path().join("map.toml");
    std::fs::write(
        &map,
        "[input]\nid = \"/rid\"\nanswer = \"/reply/body\"\ncitations = \"/cites\"\n[input.citation]\ndoc = \"/d\"\nstart = \"/s\"\nend = \"/e\"\n",
    )
    .expect("map");
    let out = check(
        dir.path(),
        &[
            "--store",
            store.to_str().expect("p"),
            "--answers",
            log.to_str().expect("p"),
            "--input-map",
            map.to_str().expect("p"),
        ],
    );
    assert_eq!(out.code, 1, "{}", out.stderr);
    assert_eq!(out.findings["summary"]["answers_checked"], 1);
    let rejected: Vec<(u64, String)> = out.findings["rejected"]
        .as_array()
        .expect("rejected")
        .iter()
        .map(|r| {
            (r["line"].as_u64().expect("line"), r["error"].as_str().expect("error").to_owned())
        })
        .collect();
    assert_eq!(
        rejected,
        [
            (2, "answer: missing: nothing at /reply/body".to_owned()),
            (3, "citations[0].doc: missing: nothing at /cites/0/d".to_owned()),
            (
                4,
                "citations[0].start (at /cites/0/s): expected a non-negative integer, found \"0\""
                    .to_owned()
            ),
        ]
    );

    // A pointer that is not one is a usage error naming the key.
    std::fs::write(&map, "[input]\nanswer = \"reply.body\"\n").expect("map");
    let bad = check(
        dir.path(),
        &[
            "--store",
            store.to_str().expect("p"),
            "--answers",
            log.to_str().expect("p"),
            "--input-map",
            map.to_str().expect("p"),
        ],
    );
    assert_eq!(bad.code, 2);
    assert!(
        bad.stderr.contains("input.answer") && bad.stderr.contains("RFC 6901"),
        "{}",
        bad.stderr
    );
}
