//! Entitlement is deny-by-default, end to end: every branch of the decision (SPEC.md,
//! "The answers file" — the record's `groups`, else the `--principals` entry, else
//! unknown; "The document store" — the document's `access`, else `default_access`, else
//! unknown; `*` means everyone) gives the citation status the contract names, and nothing
//! unknown is ever treated as entitled. `access_unknown` and `principal_unknown` are
//! warnings under SPEC.md's default `fail_on`, and fail the gate once listed there.

use serde_json::{Value, json};

use crate::harness::Fixture;

const TEXT: &str = "Staff parking is free on weekdays.\n";

/// A store with one document per kind of access rule.
fn store(default_access: Option<&[&str]>) -> Fixture {
    let mut manifest = json!({"documents": [
        {"path": "own.md", "access": ["hr"]},
        {"path": "everyone.md", "access": ["*"]},
        {"path": "nobody.md", "access": []}
    ]});
    if let Some(d) = default_access {
        manifest["default_access"] = json!(d);
    }
    Fixture::new()
        .doc("own.md", TEXT)
        .doc("everyone.md", TEXT)
        .doc("nobody.md", TEXT)
        .doc("plain.md", TEXT)
        .doc("manifest.json", &manifest.to_string())
        .principals(json!({"u-hr": ["hr"], "u-ops": ["ops"], "u-star": ["*"]}))
}

/// An answer by `user` (with the record's `groups` when given) citing `doc`.
fn cites(id: &str, user: Option<&str>, groups: Option<&[&str]>, doc: &str) -> Value {
    let mut a = json!({"id": id, "answer": "Staff parking is free on weekdays [1].",
        "citations": [{"ref": "1", "doc": doc}]});
    if let Some(u) = user {
        a["user"] = json!(u);
    }
    if let Some(g) = groups {
        a["groups"] = json!(g);
    }
    a
}

/// Answer id, user, the record's groups, cited document, expected status.
type Case<'a> = (&'a str, Option<&'a str>, Option<&'a [&'a str]>, &'a str, &'a str);

#[test]
fn every_branch_of_the_decision() {
    #[rustfmt::skip]
    let cases: &[Case<'_>] = &[
        // id        user            record groups        document       status
        // The document's own access list.
        ("own-rec",  None,           Some(&["hr"]),       "own.md",      "ok"),
        ("own-rec2", Some("u-hr"),   Some(&["ops"]),      "own.md",      "forbidden"),  // the record wins over principals
        ("own-prin", Some("u-hr"),   None,                "own.md",      "ok"),
        ("own-prn2", Some("u-ops"),  None,                "own.md",      "forbidden"),
        ("own-none", Some("u-who"),  None,                "own.md",      "principal_unknown"),
        ("own-anon", None,           None,                "own.md",      "principal_unknown"),
        ("own-emp",  None,           Some(&[]),           "own.md",      "forbidden"),  // known: in no group
        ("own-star", Some("u-star"), None,                "own.md",      "forbidden"),  // `*` of a user means nothing
        // `*`: everyone, known or not.
        ("all-anon", None,           None,                "everyone.md", "ok"),
        ("all-ops",  Some("u-ops"),  None,                "everyone.md", "ok"),
        // An empty access list: no one.
        ("no-hr",    Some("u-hr"),   None,                "nobody.md",   "forbidden"),
        ("no-anon",  None,           None,                "nobody.md",   "forbidden"),
        // No access list of its own: the store's default (below, `staff`).
        ("def-rec",  None,           Some(&["staff"]),    "plain.md",    "ok"),
        ("def-ops",  Some("u-ops"),  None,                "plain.md",    "forbidden"),
        ("def-anon", None,           None,                "plain.md",    "principal_unknown"),
    ];
    let mut fx = store(Some(&["staff"]));
    for (id, user, groups, doc, _) in cases {
        fx = fx.answer(cites(id, *user, *groups, doc));
    }
    let run = fx.check(&[]);
    for (id, user, groups, doc, want) in cases {
        assert_eq!(
            run.status(id, "1"),
            *want,
            "{id}: user {user:?}, groups {groups:?}, {doc}: {:?}",
            run.answer(id)["citations"]
        );
    }
    // The groups the check used are recorded: the record's, else the principals entry's,
    // else null.
    assert_eq!(run.answer("own-rec2")["groups"], json!(["ops"]));
    assert_eq!(run.answer("own-prin")["groups"], json!(["hr"]));
    assert_eq!(run.answer("own-none")["groups"], Value::Null);
}

#[test]
fn no_access_rule_and_no_default_is_access_unknown_whoever_asks() {
    let run = store(None)
        .answer(cites("known", Some("u-hr"), None, "plain.md"))
        .answer(cites("recorded", None, Some(&["hr"]), "plain.md"))
        .answer(cites("unknown", Some("u-who"), None, "plain.md"))
        .check(&[]);
    for id in ["known", "recorded", "unknown"] {
        assert_eq!(run.status(id, "1"), "access_unknown", "{id}");
    }
}

/// SPEC.md's default `fail_on` leaves the two unknowns out: they are warnings, which a
/// reviewer sees, and never a pass of the entitlement check (`ok`). Listing them makes
/// them fail the gate.
#[test]
fn unknowns_are_warnings_by_default_and_fail_the_gate_when_listed() {
    let fx = || {
        store(None).answer(cites("access", None, Some(&["hr"]), "plain.md")).answer(cites(
            "principal",
            Some("u-who"),
            None,
            "own.md",
        ))
    };
    let default = fx().check(&[]);
    assert_eq!(default.code(), 0, "{}", default.stderr());
    for (id, kind) in [("access", "access_unknown"), ("principal", "principal_unknown")] {
        let f = &default.answer(id)["findings"][0];
        assert_eq!((f["kind"].as_str(), f["severity"].as_str()), (Some(kind), Some("warning")));
        assert_eq!(f["gate"], false);
    }
    let fail_on = r#"fail_on = ["dead", "forbidden", "bad_locator", "quote_mismatch", "number_mismatch", "changed_term", "restricted_match""#;
    for (extra, failing) in [("access_unknown", "access"), ("principal_unknown", "principal")] {
        let run = fx().config(&format!("[gate]\n{fail_on}, \"{extra}\"]\n")).check(&[]);
        assert_eq!(run.code(), 1, "{extra}: {}", run.stderr());
        assert_eq!(run.answer(failing)["passed"], false, "{extra}");
        let other = if failing == "access" { "principal" } else { "access" };
        assert_eq!(run.answer(other)["passed"], true, "{extra}");
    }
}

/// A forbidden citation fails the gate under the default rules, and its text is left out
/// of every output under `--redact-restricted`.
#[test]
fn forbidden_fails_the_gate_and_redaction_withholds_the_text() {
    let secret = "The vault code is 4417 and only finance may know it.\n";
    let fx = Fixture::new()
        .doc("vault.md", secret)
        .doc(
            "manifest.json",
            &json!({"documents": [{"path": "vault.md", "access": ["finance"]}]}).to_string(),
        )
        .answer(json!({"id": "a", "groups": ["ops"], "answer": "The vault code is 4417 [1].",
            "citations": [{"ref": "1", "doc": "vault.md"}]}));
    let run = fx.check(&[]);
    assert_eq!(run.code(), 1);
    assert_eq!(run.status("a", "1"), "forbidden");
    let redacted = fx.check(&["--redact-restricted"]);
    assert_eq!(redacted.status("a", "1"), "forbidden");
    let json = redacted.findings["answers"].to_string();
    assert!(!json.contains("only finance may know"), "restricted text in the findings");
}
