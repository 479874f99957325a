//! The store never reads outside itself: links, traversal and odd ids on a real
//! filesystem (SPEC.md, "The document store": a path or id that leads outside the store
//! is never read; the citation is `dead`).

use std::os::unix::fs::symlink;

use plumbline::store::{DeadReason, Store, StoreLimits};
use serde_json::json;

use crate::harness::Fixture;

fn outside_secret() -> (tempfile::TempDir, std::path::PathBuf) {
    let dir = tempfile::tempdir().expect("temp");
    let p = dir.path().join("secret.md");
    std::fs::write(&p, "The vault code is 4417 and only finance may know it.\n").expect("write");
    (dir, p)
}

#[test]
fn links_out_of_the_store_are_not_read() {
    let (out, secret) = outside_secret();
    let fx = Fixture::new().doc("ok.md", "Plain document.\n");
    symlink(&secret, fx.store().join("link.md")).expect("file link");
    symlink(out.path(), fx.store().join("linked-dir")).expect("dir link");
    std::fs::hard_link(&secret, fx.store().join("hard.md")).expect("hard link");
    let store = Store::load(&fx.store(), &StoreLimits::default()).expect("load");
    let ids: Vec<&str> = store.documents.iter().map(|d| d.id.as_str()).collect();
    assert_eq!(ids, ["ok.md"]);
    let skipped: Vec<&str> = store.problems.iter().map(|p| p.path.as_str()).collect();
    assert!(
        skipped.contains(&"link.md")
            && skipped.contains(&"linked-dir")
            && skipped.contains(&"hard.md"),
        "{skipped:?}"
    );
    assert!(store.documents.iter().all(|d| !d.raw().contains("vault")));
}

#[test]
fn a_store_that_is_itself_a_link_is_refused() {
    let fx = Fixture::new().doc("ok.md", "Plain.\n");
    let link = fx.dir.path().join("store-link");
    symlink(fx.store(), &link).expect("link");
    let err = Store::load(&link, &StoreLimits::default()).expect_err("refused");
    assert!(err.to_string().contains("symbolic link"), "{err}");
}

#[test]
fn traversal_and_odd_references_are_dead_and_read_nothing() {
    let fx = Fixture::new().doc("hr/policy.md", "Leave is 25 days.\n");
    let store = Store::load(&fx.store(), &StoreLimits::default()).expect("load");
    let long = "a".repeat(10_000);
    for (reference, escapes) in [
        ("../secret.md", true),
        ("hr/../../secret.md", true),
        ("/etc/passwd", true),
        ("C:\\Windows\\win.ini", true),
        ("\\\\server\\share\\x.md", true),
        ("%2e%2e/secret.md", true),
        ("hr/policy.md\0.txt", true),
        (long.as_str(), false),
        ("hr/missing.md", false),
    ] {
        let r = store.resolve(reference);
        assert!(r.is_err(), "{reference:?} must be dead");
        if escapes {
            assert!(matches!(r, Err(DeadReason::Escapes(_))), "{reference:?}: {r:?}");
        }
    }
    assert!(matches!(store.resolve(&long), Err(DeadReason::TooLong(10_000))));
    assert!(store.resolve("hr/policy.md").is_ok());
}

#[test]
fn dead_citations_in_a_run_name_their_reason() {
    let (_out, secret) = outside_secret();
    let fx = Fixture::new().doc("ok.md", "Plain document.\n");
    symlink(&secret, fx.store().join("link.md")).expect("link");
    let run = fx
        .answer(json!({"id": "a", "groups": ["x"], "answer": "The vault code is 4417 [1][2].",
            "citations": [{"ref": "1", "doc": "link.md"}, {"ref": "2", "doc": secret.display().to_string()}]}))
        .check(&[]);
    assert_eq!(run.status("a", "1"), "dead");
    assert_eq!(run.status("a", "2"), "dead");
    assert!(!run.findings.to_string().contains("only finance may know"));
}

#[test]
fn unreadable_documents_are_reported_not_silently_empty() {
    let fx = Fixture::new().doc("ok.md", "Plain.\n");
    std::fs::write(fx.store().join("latin1.txt"), b"caf\xe9\n").expect("write");
    let big = StoreLimits { max_document_bytes: 4, ..StoreLimits::default() };
    let store = Store::load(&fx.store(), &StoreLimits::default()).expect("load");
    assert!(store.problems.iter().any(|p| p.path == "latin1.txt" && p.message.contains("UTF-8")));
    let small = Store::load(&fx.store(), &big).expect("load");
    assert!(
        small
            .problems
            .iter()
            .any(|p| p.path == "ok.md" && p.message.contains("max_document_bytes"))
    );
}

#[test]
fn digest_is_stable_and_follows_content() {
    let fx = Fixture::new().doc("a.md", "One.\n").doc("b/c.txt", "Two.\n");
    let d1 = Store::load(&fx.store(), &StoreLimits::default()).expect("load").digest;
    let d2 = Store::load(&fx.store(), &StoreLimits::default()).expect("load").digest;
    assert_eq!(d1, d2);
    std::fs::write(fx.store().join("a.md"), "One!\n").expect("write");
    let d3 = Store::load(&fx.store(), &StoreLimits::default()).expect("load").digest;
    assert_ne!(d1, d3);
}

#[test]
fn manifest_ids_aliases_and_bad_entries() {
    let fx = Fixture::new().doc("hr/leave.md", "Leave is 25 days.\n").doc(
        "manifest.json",
        &json!({"default_access": ["staff"], "documents": [
            {"id": "hr/leave", "path": "hr/leave.md", "access": ["hr"]},
            {"path": "../escape.md"}
        ]})
        .to_string(),
    );
    let store = Store::load(&fx.store(), &StoreLimits::default()).expect("load");
    assert_eq!(store.resolve("hr/leave").map(|d| d.id.as_str()), Ok("hr/leave"));
    assert_eq!(store.resolve("hr/leave.md").map(|d| d.id.as_str()), Ok("hr/leave"));
    assert!(
        store
            .problems
            .iter()
            .any(|p| p.path.contains("documents[1]") && p.field.as_deref() == Some("path"))
    );
    assert_eq!(store.default_access.as_deref(), Some(&["staff".to_owned()][..]));
}

/// Every form of a reference that could lead out of the store, in a real run: each
/// citation is dead and says why, and nothing of the file outside reaches the findings.
/// The forms are those SPEC.md names (`..`, absolute paths, links) and the encodings
/// that reach the same places on other systems or through URL decoding (Windows drive
/// and UNC paths, RFC 3986 percent-encoding, NUL).
#[test]
fn every_escape_form_is_dead_in_a_run() {
    let (out, secret) = outside_secret();
    let name = secret.file_name().and_then(|n| n.to_str()).expect("name").to_owned();
    let fx = Fixture::new().doc("ok.md", "Plain document.\n");
    // Enough `..` to climb from the store to the root, then down to the secret.
    let depth = fx.store().components().count();
    let dotdot = format!("{}{}", "../".repeat(depth), &secret.display().to_string()[1..]);
    std::os::unix::fs::symlink(&secret, fx.store().join("link.md")).expect("link");
    std::fs::hard_link(&secret, fx.store().join("hard.md")).expect("hard link");
    let forms: Vec<(String, &str)> = vec![
        (dotdot, "`..`"),
        (format!("ok/../../{name}"), "`..`"),
        (secret.display().to_string(), "absolute"),
        (format!("C:\\{name}"), "Windows drive"),
        (format!("c:{name}"), "Windows drive"),
        (format!("\\\\server\\share\\{name}"), "UNC"),
        (format!("//server/share/{name}"), "UNC"),
        (format!("\\\\?\\C:\\{name}"), "UNC"),
        (format!("%2e%2e/%2e%2e/{name}"), "percent-encodes"),
        (format!("%2E%2E%2F{name}"), "percent-encodes"),
        (format!("%252e%252e/{name}"), "percent-encodes"),
        (format!("..%5c{name}"), "percent-encodes"),
        (format!("ok.md\0/../../{name}"), "NUL"),
        (format!("ok.md%00{name}"), "percent-encodes"),
        (format!("file://{}", secret.display()), "URL"),
        (format!("~/{name}"), "home directory"),
        ("link.md".into(), "symbolic link"),
        ("hard.md".into(), "hard links"),
    ];
    let citations: Vec<serde_json::Value> = forms
        .iter()
        .enumerate()
        .map(|(i, (doc, _))| json!({"ref": (i + 1).to_string(), "doc": doc}))
        .collect();
    let run = fx
        .answer(json!({"id": "a", "groups": ["x"], "answer": "The vault code is 4417.",
            "citations": citations}))
        .check(&[]);
    for (i, (doc, why)) in forms.iter().enumerate() {
        let c = &run.answer("a")["citations"][i];
        assert_eq!(c["status"], "dead", "{doc:?}: {c}");
        let detail = c["detail"].as_str().unwrap_or_default();
        assert!(detail.contains(why), "{doc:?}: {detail:?} does not say {why}");
    }
    let all = run.findings.to_string();
    assert!(!all.contains("only finance may know"), "text from outside the store");
    drop(out);
}

/// An id longer than `limits.max_id_bytes` is refused when the answer is read: the line is
/// rejected naming the field and the limit, so the id is never looked up.
#[test]
fn an_overlong_document_id_rejects_its_answer() {
    let long = "a/".repeat(600) + "x.md";
    let run = Fixture::new()
        .doc("ok.md", "Plain.\n")
        .answer(json!({"id": "a", "answer": "Plain.", "citations": [{"doc": long}]}))
        .check(&[]);
    assert_eq!(
        run.findings["rejected"][0]["error"],
        "citations[0].doc: 1204 bytes long, more than the limit of 1024 (limits.max_id_bytes)"
    );
}

/// A manifest that is a link is not followed: the store reads as if it had none, and
/// says so.
#[test]
fn a_linked_manifest_is_not_read() {
    let dir = tempfile::tempdir().expect("temp");
    let elsewhere = dir.path().join("manifest.json");
    std::fs::write(&elsewhere, r#"{"default_access": ["*"]}"#).expect("write");
    let fx = Fixture::new().doc("ok.md", "Plain document.\n");
    symlink(&elsewhere, fx.store().join("manifest.json")).expect("link");
    let store = Store::load(&fx.store(), &StoreLimits::default()).expect("load");
    assert_eq!(store.default_access, None);
    assert!(
        store.problems.iter().any(|p| p.path == "manifest.json" && p.message.contains("link")),
        "{:?}",
        store.problems
    );
}

/// Through the binary: a store given as a link is refused with exit 2 and a message.
#[test]
fn a_linked_store_root_is_a_usage_error() {
    let fx = Fixture::new().doc("ok.md", "Plain.\n");
    let link = fx.dir.path().join("store-link");
    symlink(fx.store(), &link).expect("link");
    std::fs::write(fx.dir.path().join("a.jsonl"), "").expect("answers");
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_plumbline"))
        .args(["check", "--quiet", "--store"])
        .arg(&link)
        .arg("--answers")
        .arg(fx.dir.path().join("a.jsonl"))
        .output()
        .expect("run");
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("symbolic link"));
}
