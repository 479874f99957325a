//! PostgreSQL stores against a real server. `.ci/run` starts a throw-away cluster with
//! `tests/stores/pg.sh` (initdb and pg_ctl, a random password, 127.0.0.1 only), which
//! loads `tests/stores/fixtures.sql` and exports `PLUMBLINE_PG_URL`. Without it these
//! tests fail where `PLUMBLINE_REQUIRE_TOOLS` is set (CI) and are skipped with a notice
//! elsewhere; to run them by hand:
//!
//! ```sh
//! eval "$(bash tests/stores/pg.sh start)"
//! cargo test --test integration stores::postgres
//! bash tests/stores/pg.sh stop "$PLUMBLINE_PG_DIR"
//! ```

use serde_json::json;

use super::{check, check_env, have_tool, write_jsonl};

/// The server's connection string, and its password.
fn server() -> Option<(String, String)> {
    let url = std::env::var("PLUMBLINE_PG_URL").ok();
    if !have_tool(url.is_some(), "a PostgreSQL server (PLUMBLINE_PG_URL; see tests/stores/pg.sh)") {
        return None;
    }
    let url = url.expect("checked");
    let password = url
        .split_once("://")
        .and_then(|(_, rest)| rest.split_once('@'))
        .and_then(|(userinfo, _)| userinfo.split_once(':'))
        .map(|(_, p)| p.to_owned())
        .expect("PLUMBLINE_PG_URL carries a password");
    Some((url, password))
}

const QUERY: &str = "SELECT chunk_id AS id, body AS text, source_doc AS doc, groups AS access, heading AS title, embedding FROM kb_chunks";

fn answers(dir: &std::path::Path) -> std::path::PathBuf {
    let p = dir.join("answers.jsonl");
    write_jsonl(
        &p,
        &[
            json!({"id": "q1", "groups": ["all-staff"],
                   "answer": "Full-time staff receive 27 days of paid annual leave each year [1]. After five years it rises to 29 days [2].",
                   "citations": [{"ref": "1", "doc": "101"}, {"ref": "2", "doc": "handbook/leave", "chunk": "102"}]}),
            json!({"id": "q2", "groups": ["all-staff"], "answer": "The board approved a budget of 4.2 million for the new depot [1].",
                   "citations": [{"ref": "1", "doc": "201"}]}),
            json!({"id": "q3", "groups": ["all-staff"], "answer": "Visitor parking is in bays 40 to 48 [1].",
                   "citations": [{"ref": "1", "doc": "301"}]}),
            // Cites the parking chunk for a sentence that the leave chunk carries.
            json!({"id": "q4", "groups": ["all-staff"], "answer": "Unused leave does not carry over [1].",
                   "citations": [{"ref": "1", "doc": "301"}]}),
        ],
    );
    p
}

fn assert_no_password(out: &super::Out, password: &str) {
    assert!(!out.json.contains(password), "the findings hold the password");
    assert!(!out.html.contains(password), "the report holds the password");
    assert!(!out.stderr.contains(password), "the terminal output holds the password");
}

#[test]
fn a_table_with_integer_ids_arrays_and_an_embedding_column_whole_and_lazy() {
    let Some((url, password)) = server() else { return };
    let dir = tempfile::tempdir().expect("temp");
    let config = dir.path().join("plumbline.toml");
    std::fs::write(&config, format!("[store]\nquery = \"{QUERY}\"\n")).expect("config");
    let answers = answers(dir.path());
    let base = [
        "--store",
        url.as_str(),
        "--config",
        config.to_str().expect("p"),
        "--answers",
        answers.to_str().expect("p"),
    ];
    let full = check(dir.path(), &base);
    assert_eq!(full.code, 1, "{}", full.stderr);
    let rec = &full.findings["inputs"]["store"];
    assert_eq!(rec["form"], "postgres");
    assert_eq!(rec["documents"], 4);
    assert!(
        rec["path"].as_str().expect("path").starts_with("postgres://plumbline@127.0.0.1:"),
        "{rec}"
    );
    assert!(
        full.findings["command"]
            .as_array()
            .expect("command")
            .iter()
            .any(|a| a == rec["path"].as_str().expect("p"))
    );
    assert_no_password(&full, &password);
    assert_eq!(full.citation("q1", "1").0, "ok");
    assert_eq!(full.citation("q1", "2").0, "ok");
    assert_eq!(full.sentence("q1", 0).0, "supported");
    assert_eq!(full.citation("q2", "1").0, "forbidden");
    assert_eq!(full.citation("q3", "1").0, "access_unknown");
    assert!(
        full.sentence("q4", 0).1.contains(&"misattributed".to_owned()),
        "{:?}",
        full.sentence("q4", 0)
    );

    let mut lazy_args = base.to_vec();
    lazy_args.extend(["--store-mode", "lazy"]);
    let lazy = check(dir.path(), &lazy_args);
    assert_eq!(lazy.code, 1, "{}", lazy.stderr);
    let rec = &lazy.findings["inputs"]["store"];
    assert_eq!(rec["read"], "lazy");
    assert_eq!(rec["searched"], false);
    assert_eq!(rec["documents"], 4, "q1..q4 cite 101, 102 (by doc and chunk), 201 and 301");
    assert!(rec["problems"].as_array().expect("problems").is_empty(), "{rec}");
    assert_no_password(&lazy, &password);
    for (id, r) in [("q1", "1"), ("q1", "2"), ("q2", "1"), ("q3", "1")] {
        assert_eq!(lazy.citation(id, r), full.citation(id, r), "{id} [{r}]");
    }
    assert!(lazy.sentence("q4", 0).1.is_empty(), "a lazy run does not search");
}

#[test]
fn credentials_come_from_the_pg_environment_and_a_refusal_names_no_password() {
    let Some((url, password)) = server() else { return };
    let dir = tempfile::tempdir().expect("temp");
    let answers = dir.path().join("answers.jsonl");
    write_jsonl(
        &answers,
        &[
            json!({"id": "r", "groups": ["all-staff"], "answer": "Refunds are paid within 14 days of the returned item arriving [1].",
                 "citations": [{"ref": "1", "doc": "support/returns", "chunk": "c-1"}]}),
        ],
    );
    let without = url.replacen(&format!(":{password}@"), "@", 1);
    assert_ne!(without, url);
    // The default query (`SELECT * FROM chunks`), a jsonb access column, and the password
    // from PGPASSWORD.
    let ok = check_env(
        dir.path(),
        &["--store", &without, "--answers", answers.to_str().expect("p")],
        &[("PGPASSWORD", &password)],
    );
    assert_eq!(ok.code, 0, "{}", ok.stderr);
    assert_eq!(ok.findings["inputs"]["store"]["documents"], 2);
    assert_eq!(ok.sentence("r", 0).0, "supported");
    assert_no_password(&ok, &password);

    // A wrong password: exit 2, a clear message, neither password shown.
    let wrong = url.replacen(&format!(":{password}@"), ":not-the-password@", 1);
    let refused = check_env(
        dir.path(),
        &["--store", &wrong, "--answers", answers.to_str().expect("p")],
        &[("PGPASSWORD", "")],
    );
    assert_eq!(refused.code, 2, "{}", refused.stderr);
    assert!(
        refused.stderr.contains("cannot connect")
            && refused.stderr.contains("password authentication failed"),
        "{}",
        refused.stderr
    );
    assert!(
        !refused.stderr.contains("not-the-password") && !refused.stderr.contains(&password),
        "{}",
        refused.stderr
    );
}

#[test]
fn a_column_of_a_type_plumbline_does_not_read_is_named() {
    let Some((url, _)) = server() else { return };
    let dir = tempfile::tempdir().expect("temp");
    let config = dir.path().join("plumbline.toml");
    std::fs::write(&config, "[store]\nquery = \"SELECT chunk_id AS id, body AS text, embedding AS title FROM kb_chunks\"\n").expect("config");
    let answers = dir.path().join("answers.jsonl");
    std::fs::write(&answers, "{\"id\": \"a\", \"answer\": \"x\", \"citations\": []}\n")
        .expect("write");
    let out = check(
        dir.path(),
        &[
            "--store",
            &url,
            "--config",
            config.to_str().expect("p"),
            "--answers",
            answers.to_str().expect("p"),
        ],
    );
    assert_eq!(out.code, 2);
    assert!(out.stderr.contains("column \"title\" has type _float4"), "{}", out.stderr);
}
