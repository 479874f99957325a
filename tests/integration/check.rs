//! End-to-end tests of `plumbline check`, one small fixture per verdict, flag, citation
//! status, rejected-line cause and exit code (SPEC.md is the source of every expected
//! value here).

use serde_json::json;

use crate::harness::Fixture;

const WARRANTY: &str = "# Warranty\n\nWarranty claims stay open for 45 days from the date of purchase. \
After that they close automatically.\n\nThe minimum refund is £12.40. Claims must not be reopened by agents.\n";

const PARKING: &str =
    "Staff parking is free on weekdays. Visitors pay £3 per hour at the north gate.\n";

fn base() -> Fixture {
    Fixture::new()
        .doc("support/warranty.md", WARRANTY)
        .doc("facilities/parking.txt", PARKING)
        .principals(json!({
            "u-1": ["all-staff"]
        }))
}

fn cite(r: &str, doc: &str) -> serde_json::Value {
    json!({"ref": r, "doc": doc})
}

#[test]
fn supported_answer_passes_with_exit_0() {
    let run = base()
        .config("[thresholds]\nsupported = 0.75\n")
        .answer(json!({"id": "a1", "user": "u-1", "groups": ["all-staff"],
            "answer": "Warranty claims stay open for 45 days from the date of purchase [1].",
            "citations": [cite("1", "support/warranty.md")]}))
        .check(&[]);
    assert_eq!(run.verdict("a1", 0), "supported", "{}", run.stderr());
    assert_eq!(run.status("a1", "1"), "access_unknown");
}

fn staff_store() -> Fixture {
    Fixture::new()
        .doc("support/warranty.md", WARRANTY)
        .doc("facilities/parking.txt", PARKING)
        .doc(
            "finance/board.md",
            "Board minutes. The board approved a bonus pool of £2.4 million for the northern depots.\n",
        )
        .doc(
            "manifest.json",
            &json!({"default_access": ["all-staff"], "documents": [
                {"id": "finance/board", "path": "finance/board.md", "access": ["board"]}
            ]})
            .to_string(),
        )
        .principals(json!({"u-1": ["all-staff"], "u-9": ["all-staff", "board"]}))
}

#[test]
fn every_verdict() {
    let run = staff_store()
        .answer(json!({"id": "v", "user": "u-1",
            "answer": "Hello! After that they close automatically [1]. Warranty claims stay open for 45 days [1] and agents can extend them by phone. Staff get free lunches every Friday [1]. Would you like the form?",
            "citations": [cite("1", "support/warranty.md")]}))
        .check(&[]);
    assert_eq!(run.verdict("v", 0), "no_claim");
    assert_eq!(run.verdict("v", 1), "supported");
    assert_eq!(run.verdict("v", 2), "partial");
    assert_eq!(run.verdict("v", 3), "unsupported");
    assert_eq!(run.verdict("v", 4), "no_claim");
    assert_eq!(run.code(), 1, "an unsupported sentence fails the gate (max_unsupported = 0)");
}

#[test]
fn flags_number_negation_changed_term() {
    let run = staff_store()
        .answer(json!({"id": "f", "user": "u-1",
            "answer": "Warranty claims stay open for 54 days from the date of purchase [1]. Claims must be reopened by agents [1]. The maximum refund is £12.40 [1].",
            "citations": [cite("1", "support/warranty.md")]}))
        .check(&[]);
    assert!(run.flags("f", 0).contains(&"number_mismatch".to_owned()));
    assert_eq!(run.verdict("f", 0), "unsupported");
    assert!(run.flags("f", 1).contains(&"negation_mismatch".to_owned()));
    assert!(
        run.flags("f", 2).contains(&"changed_term".to_owned()),
        "{:?}",
        run.answer("f")["sentences"][2]
    );
    assert_ne!(run.verdict("f", 2), "supported");
}

#[test]
fn flags_unknown_ref_and_uncited() {
    let run = staff_store()
        .answer(json!({"id": "u", "user": "u-1",
            "answer": "After that they close automatically [1]. Staff parking is free on weekdays. The minimum refund is £12.40 [3].",
            "citations": [cite("1", "support/warranty.md")]}))
        .check(&[]);
    assert!(run.flags("u", 1).contains(&"uncited".to_owned()));
    assert!(run.flags("u", 2).contains(&"unknown_ref".to_owned()));
}

#[test]
fn flags_misattributed_and_restricted_match() {
    let run = staff_store()
        .answer(json!({"id": "m", "user": "u-1",
            "answer": "Visitors pay £3 per hour at the north gate [1]. The board approved a bonus pool of £2.4 million for the northern depots [1].",
            "citations": [cite("1", "support/warranty.md")]}))
        .check(&[]);
    assert!(
        run.flags("m", 0).contains(&"misattributed".to_owned()),
        "{:?}",
        run.answer("m")["sentences"][0]
    );
    assert_eq!(run.answer("m")["sentences"][0]["evidence"]["doc"], "facilities/parking.txt");
    assert!(
        run.flags("m", 1).contains(&"restricted_match".to_owned()),
        "{:?}",
        run.answer("m")["sentences"][1]
    );
}

#[test]
fn redact_restricted_withholds_restricted_text() {
    let run = staff_store()
        .answer(json!({"id": "m", "user": "u-1",
            "answer": "The board approved a bonus pool of £2.4 million for the northern depots [1].",
            "citations": [cite("1", "finance/board")]}))
        .check(&["--redact-restricted"]);
    assert_eq!(run.status("m", "1"), "forbidden");
    let text =
        run.answer("m")["sentences"][0]["evidence"]["text"].as_str().unwrap_or("").to_owned();
    assert!(!text.contains("bonus pool"), "{text}");
    assert!(text.contains("finance/board"), "{text}");
}

#[test]
fn every_citation_status() {
    let sha_ok = {
        use sha2::Digest;
        let d = sha2::Sha256::digest(PARKING.as_bytes());
        d.iter().map(|b| format!("{b:02x}")).collect::<String>()
    };
    let pound = WARRANTY.find('£').expect("pound sign");
    let run = staff_store()
        .doc("notes/loose.txt", "Loose note without access.\n")
        .doc(
            "manifest.json",
            &json!({"documents": [
                {"id": "support/warranty.md", "path": "support/warranty.md", "access": ["all-staff"], "chunks": [{"id": "c1", "start": 0, "end": 10}]},
                {"id": "facilities/parking.txt", "path": "facilities/parking.txt", "access": ["*"]},
                {"id": "finance/board", "path": "finance/board.md", "access": ["board"]}
            ]})
            .to_string(),
        )
        .answer(json!({"id": "s", "user": "u-1",
            "answer": "Staff parking is free on weekdays [1]. After that they close automatically [2]. X [3]. Y [4]. Z [5]. W [6]. V [7]. The board approved a bonus pool [8]. Loose note without access [9].",
            "citations": [
                {"ref": "1", "doc": "facilities/parking.txt", "sha256": sha_ok},
                {"ref": "2", "doc": "support/warranty.md", "quote": "they close automatically"},
                {"ref": "3", "doc": "no/such.md"},
                {"ref": "4", "doc": "../outside.md"},
                {"ref": "5", "doc": "support/warranty.md", "start": 0, "end": 999_999},
                {"ref": "6", "doc": "support/warranty.md", "chunk": "c9"},
                {"ref": "7", "doc": "support/warranty.md", "start": pound + 1, "end": pound + 10},
                {"ref": "8", "doc": "finance/board"},
                {"ref": "9", "doc": "notes/loose.txt"},
                {"ref": "10", "doc": "facilities/parking.txt", "sha256": "00"},
                {"ref": "11", "doc": "support/warranty.md", "quote": "claims close after ninety days"},
                {"ref": "12", "doc": "facilities/parking.txt"}
            ]}))
        .answer(json!({"id": "p", "user": "u-unknown", "answer": "Warranty claims stay open for 45 days [1].",
            "citations": [cite("1", "support/warranty.md")]}))
        .check(&[]);
    for (r, want) in [
        ("1", "ok"),
        ("2", "ok"),
        ("3", "dead"),
        ("4", "dead"),
        ("5", "bad_locator"),
        ("6", "bad_locator"),
        ("7", "bad_locator"),
        ("8", "forbidden"),
        ("9", "access_unknown"),
        ("10", "stale"),
        ("11", "quote_mismatch"),
        ("12", "unused"),
    ] {
        assert_eq!(run.status("s", r), want, "citation {r}: {:?}", run.answer("s")["citations"]);
    }
    assert_eq!(run.status("p", "1"), "principal_unknown");
    let detail = run.answer("s")["citations"][4]["detail"].as_str().unwrap_or("").to_owned();
    assert!(detail.contains("999,999") && detail.contains(&WARRANTY.len().to_string()), "{detail}");
}

#[test]
fn rejected_lines_are_counted_and_fail_the_gate() {
    let run = staff_store()
        .line("{not json")
        .line("")
        .line(r#"{"id": "r1", "citations": []}"#)
        .line(r#"{"id": "r2", "answer": "Hi!", "citations": []}"#)
        .line(r#"{"id": "r2", "answer": "Hi again!", "citations": []}"#)
        .line(r#"[1, 2]"#)
        .check(&[]);
    let s = &run.findings["summary"];
    assert_eq!(s["lines_read"], 5);
    assert_eq!(s["answers_checked"], 1);
    assert_eq!(s["lines_rejected"], 4);
    let rejected = run.findings["rejected"].as_array().expect("rejected").clone();
    assert_eq!(
        rejected.iter().map(|r| r["line"].as_u64().unwrap_or(0)).collect::<Vec<_>>(),
        [1, 3, 5, 6]
    );
    assert!(rejected[1]["error"].as_str().unwrap_or("").contains("answer"));
    assert_eq!(run.code(), 1);
    let allowed = staff_store()
        .config("[gate]\nallow_rejected_lines = true\n")
        .line("{bad")
        .line(r#"{"id": "ok", "answer": "Hello!", "citations": []}"#)
        .check(&[]);
    assert_eq!(allowed.code(), 0, "{}", allowed.stderr());
}

#[test]
fn reviewer_decisions_waive_findings_and_stale_ones_are_listed() {
    let run = staff_store()
        .answer(json!({"id": "d", "user": "u-1", "answer": "Staff get free lunches every Friday [1].",
            "citations": [cite("1", "support/warranty.md"), cite("2", "facilities/parking.txt")]}))
        .accept(&[
            json!({"answer": "d", "sentence": 0, "finding": "unsupported", "by": "rev-7", "note": "canteen policy, agreed"}),
            json!({"answer": "d", "ref": "2", "finding": "unused", "by": "rev-7", "note": "fine"}),
            json!({"answer": "zz", "finding": "dead", "by": "rev-7", "note": "old"}),
        ])
        .check(&[]);
    let f = run.answer("d")["findings"].as_array().expect("findings").clone();
    let unsupported = f.iter().find(|x| x["kind"] == "unsupported").expect("unsupported finding");
    assert_eq!(unsupported["accepted"]["by"], "rev-7");
    assert_eq!(unsupported["gate"], false);
    assert_eq!(run.findings["decisions"]["stale"].as_array().map(Vec::len), Some(1));
    assert_eq!(run.code(), 0, "{}", run.stderr());
}

#[test]
fn usage_errors_exit_2() {
    let f = Fixture::new();
    let missing = f.dir.path().join("nope");
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_plumbline"))
        .args(["check", "--store"])
        .arg(&missing)
        .args(["--answers", "-", "--quiet"])
        .output()
        .expect("run");
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("nope"));
    let bad_config = base()
        .config("[thresholds]\nsupportd = 0.5\n")
        .line(r#"{"id":"a","answer":"Hi","citations":[]}"#)
        .check(&[]);
    assert_eq!(bad_config.code(), 2);
    assert!(bad_config.stderr().contains("supportd"), "{}", bad_config.stderr());
}

#[test]
fn output_is_deterministic_apart_from_the_timestamp() {
    let fx = staff_store().answer(json!({"id": "a", "user": "u-1", "answer": "After that they close automatically [1]. Staff get free lunches [1].",
        "citations": [cite("1", "support/warranty.md")]}));
    let strip = |mut v: serde_json::Value| {
        v["generated_at"] = json!("");
        v.to_string()
    };
    let a = strip(fx.check(&[]).findings);
    let b = strip(fx.check(&[]).findings);
    assert_eq!(a, b);
}

const MFA: &str = "# Accounts\n\nMulti-factor authentication is required for every account. \
Use the authenticator app on your work phone.\n";

const ONBOARDING: &str = "# First day\n\nThe new starter must change their temporary password at \
first login and set up multi-factor authentication the same day.\n";

#[test]
fn a_cited_passage_that_does_not_carry_its_sentence_is_ok_and_an_unnamed_one_is_unused() {
    // SPEC.md: `unused` is "resolved, but supports no sentence of the answer". A citation
    // that a marker names is tied to its sentence, whose verdict carries the problem;
    // one that no marker names and that supports nothing is `unused`.
    let run = staff_store()
        .answer(json!({"id": "u", "user": "u-1",
            "answer": "Staff parking is free on weekdays [1]. Agents may extend warranty claims by phone [2].",
            "citations": [cite("1", "facilities/parking.txt"), cite("2", "facilities/parking.txt"),
                          cite("3", "support/warranty.md")]}))
        .check(&[]);
    assert_eq!(run.status("u", "1"), "ok");
    assert_eq!(run.verdict("u", 1), "unsupported");
    assert_eq!(run.status("u", "2"), "ok", "named by the marker of sentence 2");
    assert_eq!(run.status("u", "3"), "unused", "named by no marker");
}

#[test]
fn an_uncited_sentence_is_checked_against_every_citation() {
    let run = staff_store()
        .answer(json!({"id": "n", "user": "u-1",
            "answer": "Warranty claims stay open for 45 days from the date of purchase [1]. After that they close automatically.",
            "citations": [cite("1", "support/warranty.md")]}))
        .check(&[]);
    assert_eq!(run.flags("n", 1), ["uncited"]);
    assert_eq!(run.verdict("n", 1), "supported");
    let used = &run.answer("n")["citations"][0]["used_by"];
    assert_eq!(used, &json!([0, 1]));
}

#[test]
fn a_sentence_citing_two_passages_may_take_a_part_from_each() {
    let run = Fixture::new()
        .doc("hr/onboarding.md", ONBOARDING)
        .doc("security/mfa.md", MFA)
        .doc("manifest.json", &json!({"default_access": ["*"]}).to_string())
        .answer(json!({"id": "j", "groups": ["staff"],
            "answer": "The new starter must change their temporary password at first login and set up multi-factor authentication the same day, using the authenticator app on their work phone [1, 2].",
            "citations": [cite("1", "hr/onboarding.md"), cite("2", "security/mfa.md")]}))
        .check(&[]);
    let s = &run.answer("j")["sentences"][0];
    assert_eq!(run.verdict("j", 0), "supported", "{s}");
    assert_eq!(s["evidence"]["doc"], "hr/onboarding.md");
    assert_eq!(s["also_evidence"][0]["doc"], "security/mfa.md");
    assert!(s["also_evidence"][0]["text"].as_str().unwrap().contains("work phone"));
    assert_eq!(run.status("j", "1"), "ok");
    assert_eq!(run.status("j", "2"), "ok");
    // Each alone carries only a part of it.
    for (r, doc) in [("1", "hr/onboarding.md"), ("2", "security/mfa.md")] {
        let one = Fixture::new()
            .doc("hr/onboarding.md", ONBOARDING)
            .doc("security/mfa.md", MFA)
            .doc("manifest.json", &json!({"default_access": ["*"]}).to_string())
            .answer(json!({"id": "j", "groups": ["staff"],
                "answer": "The new starter must change their temporary password at first login and set up multi-factor authentication the same day, using the authenticator app on their work phone [1].",
                "citations": [cite("1", doc)]}))
            .check(&[]);
        assert_ne!(one.verdict("j", 0), "supported", "citation {r} alone");
    }
}

#[test]
fn accepting_a_figure_finding_accepts_the_unsupported_verdict_it_caused() {
    let run = staff_store()
        .answer(json!({"id": "d", "user": "u-1",
            "answer": "Warranty claims stay open for 54 days from the date of purchase [1].",
            "citations": [cite("1", "support/warranty.md")]}))
        .accept(&[json!({"answer": "d", "sentence": 0, "finding": "number_mismatch",
            "by": "qa-1", "note": "agreed with the product owner"})])
        .check(&[]);
    assert_eq!(run.verdict("d", 0), "unsupported");
    let findings = run.answer("d")["findings"].as_array().unwrap().clone();
    let unsupported = findings.iter().find(|f| f["kind"] == "unsupported").unwrap();
    assert_eq!(unsupported["accepted"]["by"], "qa-1");
    assert!(unsupported["accepted"]["note"].as_str().unwrap().contains("number_mismatch"));
    assert_eq!(run.code(), 0, "{}", run.stderr());
    // An unsupported verdict the words themselves earn is not waived that way.
    let run = staff_store()
        .answer(json!({"id": "d", "user": "u-1",
            "answer": "Staff get 12 free lunches every Friday [1].",
            "citations": [cite("1", "support/warranty.md")]}))
        .accept(&[json!({"answer": "d", "sentence": 0, "finding": "number_mismatch",
            "by": "qa-1", "note": "n/a"})])
        .check(&[]);
    assert_eq!(run.code(), 1);
}
