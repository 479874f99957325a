//! Saved indexes: `plumbline index` then `check --index` gives the findings of a run that
//! reads the store, and a saved index is refused (exit 2, saying why) when the store
//! changed, when it holds another form of store, or when the file is not one.

use serde_json::json;

use super::{check, found, project, run, write_jsonl};

#[test]
fn a_saved_index_gives_the_same_findings_and_is_refused_once_the_store_changes() {
    let dir = tempfile::tempdir().expect("temp");
    // A copy of the demo store, to change it afterwards.
    let store = dir.path().join("store");
    copy_dir(&project().join("demo/store"), &store);
    let idx = dir.path().join("store.idx");
    let (code, err) =
        run(&["index", "--store", store.to_str().expect("p"), "--out", idx.to_str().expect("p")]);
    assert_eq!(code, 0, "{err}");
    assert!(err.contains("15 documents"), "{err}");
    let demo = project().join("demo");
    let answers = demo.join("answers.jsonl");
    let principals = demo.join("principals.json");
    let args = |with_index: bool| {
        let mut v = vec![
            "--store".to_owned(),
            store.display().to_string(),
            "--answers".into(),
            answers.display().to_string(),
            "--principals".into(),
            principals.display().to_string(),
        ];
        if with_index {
            v.extend(["--index".to_owned(), idx.display().to_string()]);
        }
        v
    };
    let read = check(dir.path(), &strs(&args(false)));
    let saved = check(dir.path(), &strs(&args(true)));
    assert_eq!(saved.code, read.code, "{}", saved.stderr);
    assert_eq!(found(&saved.findings), found(&read.findings));
    assert_eq!(
        saved.findings["inputs"]["store"]["digest"],
        read.findings["inputs"]["store"]["digest"]
    );
    assert_eq!(
        saved.findings["inputs"]["store"]["problems"],
        read.findings["inputs"]["store"]["problems"]
    );
    assert_eq!(saved.findings["inputs"]["store"]["index"]["path"], idx.display().to_string());

    // One changed byte in one document: refused, and the message says what to do.
    let doc = store.join("hr/annual-leave.md");
    let mut text = std::fs::read_to_string(&doc).expect("doc");
    text = text.replacen("27 days", "28 days", 1);
    std::fs::write(&doc, text).expect("write");
    let stale = check(dir.path(), &strs(&args(true)));
    assert_eq!(stale.code, 2, "{}", stale.stderr);
    assert!(stale.stderr.contains("changed since the index was saved"), "{}", stale.stderr);
    assert!(stale.stderr.contains("plumbline index --store"), "{}", stale.stderr);
    assert!(stale.findings.is_null(), "no findings are written from a stale index");

    // A changed manifest (access groups are not in the store digest) is a change too.
    let (code, _) =
        run(&["index", "--store", store.to_str().expect("p"), "--out", idx.to_str().expect("p")]);
    assert_eq!(code, 0);
    let m = store.join("manifest.json");
    let manifest =
        std::fs::read_to_string(&m).expect("manifest").replacen("finance-board", "all-staff", 1);
    std::fs::write(&m, manifest).expect("write");
    let stale = check(dir.path(), &strs(&args(true)));
    assert_eq!(stale.code, 2, "{}", stale.stderr);
}

#[test]
fn a_saved_index_of_another_form_or_no_index_at_all_is_refused() {
    let dir = tempfile::tempdir().expect("temp");
    let chunks = dir.path().join("kb.jsonl");
    write_jsonl(&chunks, &[json!({"id": "c1", "text": "Refunds take 14 days."})]);
    let idx = dir.path().join("kb.idx");
    let (code, err) =
        run(&["index", "--store", chunks.to_str().expect("p"), "--out", idx.to_str().expect("p")]);
    assert_eq!(code, 0, "{err}");
    let answers = dir.path().join("a.jsonl");
    write_jsonl(
        &answers,
        &[
            json!({"id": "a", "groups": ["x"], "answer": "Refunds take 14 days [1].", "citations": [{"ref": "1", "doc": "c1"}]}),
        ],
    );
    let a = answers.to_str().expect("p");
    let ok = check(
        dir.path(),
        &[
            "--store",
            chunks.to_str().expect("p"),
            "--answers",
            a,
            "--index",
            idx.to_str().expect("p"),
        ],
    );
    assert_eq!(ok.code, 0, "{}", ok.stderr);
    assert_eq!(ok.sentence("a", 0).0, "supported");

    let folder = project().join("demo/store");
    let other = check(
        dir.path(),
        &[
            "--store",
            folder.to_str().expect("p"),
            "--answers",
            a,
            "--index",
            idx.to_str().expect("p"),
        ],
    );
    assert_eq!(other.code, 2);
    assert!(other.stderr.contains("holds a chunks store"), "{}", other.stderr);

    let not_index =
        check(dir.path(), &["--store", chunks.to_str().expect("p"), "--answers", a, "--index", a]);
    assert_eq!(not_index.code, 2);
    assert!(not_index.stderr.contains("is not a plumbline index"), "{}", not_index.stderr);
}

fn strs(v: &[String]) -> Vec<&str> {
    v.iter().map(String::as_str).collect()
}

fn copy_dir(from: &std::path::Path, to: &std::path::Path) {
    for entry in walk(from) {
        let rel = entry.strip_prefix(from).expect("prefix");
        let dest = to.join(rel);
        std::fs::create_dir_all(dest.parent().expect("parent")).expect("dir");
        std::fs::copy(&entry, &dest).expect("copy");
    }
}

fn walk(dir: &std::path::Path) -> Vec<std::path::PathBuf> {
    let mut out = Vec::new();
    for e in std::fs::read_dir(dir).expect("read dir") {
        let p = e.expect("entry").path();
        if p.is_dir() {
            out.extend(walk(&p));
        } else {
            out.push(p);
        }
    }
    out
}

#[test]
fn a_touched_file_is_no_change_and_an_edit_with_its_old_time_put_back_is_one() {
    let dir = tempfile::tempdir().expect("temp");
    let store = dir.path().join("store");
    std::fs::create_dir_all(&store).expect("store");
    let doc = store.join("policy.txt");
    std::fs::write(&doc, "Refunds take 14 days.\n").expect("doc");
    std::fs::write(dir.path().join("old-time"), "").expect("reference");
    // Files written within two seconds of the save are always read again; wait, so that
    // the check below relies on the file-system stamps.
    std::thread::sleep(std::time::Duration::from_secs(3));
    let idx = dir.path().join("s.idx");
    let (code, err) =
        run(&["index", "--store", store.to_str().expect("p"), "--out", idx.to_str().expect("p")]);
    assert_eq!(code, 0, "{err}");
    let answers = dir.path().join("a.jsonl");
    write_jsonl(
        &answers,
        &[
            json!({"id": "a", "answer": "Refunds take 14 days [1].", "citations": [{"ref": "1", "doc": "policy.txt"}]}),
        ],
    );
    let args = [
        "--store",
        store.to_str().expect("p"),
        "--answers",
        answers.to_str().expect("p"),
        "--index",
        idx.to_str().expect("p"),
    ];
    // Touched: new times, same bytes. Not a change.
    let touched = std::process::Command::new("touch").arg(&doc).status().expect("touch");
    assert!(touched.success());
    let out = check(dir.path(), &args);
    assert_ne!(out.code, 2, "{}", out.stderr);
    // The same number of bytes, other words, and the old modification time put back
    // (`touch -r`): the status-change time still moves, so the file is read and refused.
    std::fs::write(&doc, "Refunds take 41 days.\n").expect("edit");
    let reset = std::process::Command::new("touch")
        .arg("-r")
        .arg(dir.path().join("old-time"))
        .arg(&doc)
        .status()
        .expect("touch -r");
    assert!(reset.success());
    let out = check(dir.path(), &args);
    assert_eq!(out.code, 2, "{}", out.stderr);
    assert!(out.stderr.contains("policy.txt (changed)"), "{}", out.stderr);
}
