//! SQLite stores: the demo in SQLite form gives the folder's findings, a configured query
//! renames columns, and a lazy read fetches only the cited rows and says that the
//! store-wide search did not run.

use serde_json::json;

use super::{check, found, project, run, write_jsonl};

fn demo_args<'a>(store: &'a str, demo: &'a str) -> Vec<String> {
    vec![
        "--store".into(),
        store.into(),
        "--answers".into(),
        format!("{demo}/answers.jsonl"),
        "--principals".into(),
        format!("{demo}/principals.json"),
        "--accept".into(),
        format!("{demo}/decisions.jsonl"),
    ]
}

#[test]
fn the_demo_in_sqlite_and_chunk_form_gives_the_folder_findings() {
    let dir = tempfile::tempdir().expect("temp");
    let demo = project().join("demo");
    let demo = demo.to_str().expect("path");
    let folder = format!("{demo}/store");
    let db = dir.path().join("demo.db");
    let jsonl = dir.path().join("demo.jsonl");
    for out in [db.to_str().expect("path"), jsonl.to_str().expect("path")] {
        let (code, err) = run(&["export", "--store", &folder, "--out", out]);
        assert_eq!(code, 0, "{err}");
    }
    let run_on = |store: &str| {
        let args = demo_args(store, demo);
        check(dir.path(), &args.iter().map(String::as_str).collect::<Vec<_>>())
    };
    let base = run_on(&folder);
    assert_eq!(base.code, 1, "{}", base.stderr);
    for store in [format!("sqlite:{}", db.display()), jsonl.display().to_string()] {
        let out = run_on(&store);
        assert_eq!(out.code, 1, "{}", out.stderr);
        assert_eq!(
            found(&out.findings),
            found(&base.findings),
            "{store}: findings differ from the folder's"
        );
        // Rows hold the files' bytes, so even the digest is the folder's.
        assert_eq!(
            out.findings["inputs"]["store"]["digest"],
            base.findings["inputs"]["store"]["digest"]
        );
        assert_eq!(out.findings["inputs"]["store"]["documents"], 15);
    }
}

fn kb(dir: &std::path::Path) -> std::path::PathBuf {
    let db = dir.join("kb.sqlite");
    let c = rusqlite::Connection::open(&db).expect("db");
    c.execute_batch(
        "CREATE TABLE passages (pid INTEGER PRIMARY KEY, body TEXT NOT NULL, src TEXT, acl TEXT, vec BLOB);
         INSERT INTO passages VALUES
           (1, 'Refunds are paid within 14 days of the returned item arriving.', 'returns', 'all-staff', x'0102'),
           (2, 'Items must be unused and in their original packaging.', 'returns', 'all-staff', x'0304'),
           (3, 'Night shifts are paid at one and a half times the day rate.', 'pay', 'all-staff', NULL),
           (4, 'The depot budget of 4.2 million was approved in February.', 'board', '[\"finance-board\"]', NULL);",
    )
    .expect("fixture");
    db
}

#[test]
fn a_configured_query_and_a_lazy_read_of_sqlite() {
    let dir = tempfile::tempdir().expect("temp");
    let db = kb(dir.path());
    let config = dir.path().join("plumbline.toml");
    std::fs::write(
        &config,
        "[store]\nquery = \"SELECT pid AS id, body AS text, src AS doc, acl AS access FROM passages\"\n",
    )
    .expect("config");
    let answers = dir.path().join("answers.jsonl");
    write_jsonl(
        &answers,
        &[
            json!({"id": "r1", "groups": ["all-staff"], "answer": "Refunds are paid within 14 days of the item arriving [1].",
                   "citations": [{"ref": "1", "doc": "1"}]}),
            // Cites the refund passage for a sentence that another row carries.
            json!({"id": "r2", "groups": ["all-staff"], "answer": "Night shifts are paid at one and a half times the day rate [1].",
                   "citations": [{"ref": "1", "doc": "returns", "chunk": "2"}]}),
        ],
    );
    let store = format!("sqlite:{}", db.display());
    let base = [
        "--store",
        store.as_str(),
        "--config",
        config.to_str().expect("path"),
        "--answers",
        answers.to_str().expect("path"),
    ];
    let full = check(dir.path(), &base);
    assert_eq!(full.findings["inputs"]["store"]["documents"], 4, "{}", full.stderr);
    assert_eq!(full.findings["inputs"]["store"]["form"], "sqlite");
    assert!(full.findings["inputs"]["store"]["searched"].is_null());
    assert_eq!(full.sentence("r1", 0).0, "supported");
    assert!(
        full.sentence("r2", 0).1.contains(&"misattributed".to_owned()),
        "{:?}",
        full.sentence("r2", 0)
    );

    let mut lazy_args = base.to_vec();
    lazy_args.extend(["--store-mode", "lazy"]);
    let lazy = check(dir.path(), &lazy_args);
    let rec = &lazy.findings["inputs"]["store"];
    assert_eq!(rec["read"], "lazy", "{}", lazy.stderr);
    assert_eq!(rec["searched"], false);
    assert_eq!(rec["documents"], 2, "only the cited rows are read");
    assert!(rec["notes"][1].as_str().expect("note").contains("store-wide search did not run"));
    assert!(lazy.stderr.contains("store-wide search did not run"), "{}", lazy.stderr);
    assert!(lazy.html.contains("store-wide search did not run"), "the report says so too");
    assert_eq!(lazy.sentence("r1", 0).0, "supported");
    let (verdict, flags) = lazy.sentence("r2", 0);
    assert_eq!(verdict, "unsupported");
    assert!(flags.is_empty(), "no search, so no misattribution: {flags:?}");

    // auto reads lazily above store.full_max_rows.
    std::fs::write(
        &config,
        "[store]\nquery = \"SELECT pid AS id, body AS text, src AS doc, acl AS access FROM passages\"\nfull_max_rows = 3\n",
    )
    .expect("config");
    let auto = check(dir.path(), &base);
    assert_eq!(auto.findings["inputs"]["store"]["read"], "lazy", "{}", auto.stderr);
    assert!(
        auto.findings["inputs"]["store"]["notes"][0]
            .as_str()
            .expect("note")
            .contains("more than store.full_max_rows = 3")
    );
}

#[test]
fn a_query_without_an_id_column_is_exit_2_naming_it() {
    let dir = tempfile::tempdir().expect("temp");
    let db = kb(dir.path());
    let answers = dir.path().join("answers.jsonl");
    std::fs::write(&answers, "{\"id\": \"a\", \"answer\": \"x\", \"citations\": []}\n")
        .expect("write");
    // The default query reads a table `chunks`, which this file does not have.
    let out = check(
        dir.path(),
        &[
            "--store",
            &format!("sqlite:{}", db.display()),
            "--answers",
            answers.to_str().expect("path"),
        ],
    );
    assert_eq!(out.code, 2);
    assert!(out.stderr.contains("no such table: chunks"), "{}", out.stderr);
}
