//! The HTML report: every section present, counts equal to the findings JSON of the same
//! run, well-formed HTML5 (no parse errors, unique ids, internal links that resolve),
//! nothing loaded from outside, hostile text inert, and a 10,000-answer report within
//! its size budget.
//!
//! Runs use the real binary on the demo scenario and on the hostile fixture
//! (`tests/data/report/hostile`); the size test builds a synthetic findings document in
//! memory and renders it through the library.

use std::collections::{BTreeMap, HashSet};
use std::path::{Path, PathBuf};
use std::process::Command;

use plumbline::findings::{
    Acceptance, AnswerFindings, CitationFindings, CitationStatus, Decisions, Evidence, Finding,
    Flag, GateResult, InputFile, Inputs, Report, SentenceFindings, Severity, Span, StoreRecord,
    Summary, Tool, Verdict,
};
use scraper::{ElementRef, Html, Selector};
use serde_json::Value;

use crate::common::data_path;

/// The page's own script, which must be the only one.
const SCRIPT: &str = include_str!("../../templates/report.js");

const SECTIONS: [&str; 7] =
    ["run-record", "summary", "answers", "entitlements", "unread", "cautions", "sign-off"];

struct Rendered {
    html: String,
    findings: Value,
    code: i32,
}

fn project(rel: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(rel)
}

/// Runs `plumbline check` with `args` plus `--json` and `--html` into a temporary folder.
fn check(args: &[&Path]) -> Rendered {
    let dir = tempfile::tempdir().expect("temp dir");
    let (json, html) = (dir.path().join("findings.json"), dir.path().join("report.html"));
    let names = ["--store", "--answers", "--principals", "--accept"];
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_plumbline"));
    cmd.arg("check").arg("--quiet").arg("--json").arg(&json).arg("--html").arg(&html);
    for (name, path) in names.iter().zip(args) {
        cmd.arg(name).arg(path);
    }
    let out = cmd.output().expect("run plumbline");
    let read = |p: &Path| {
        std::fs::read_to_string(p).unwrap_or_else(|e| {
            panic!("{}: {e}; stderr: {}", p.display(), String::from_utf8_lossy(&out.stderr))
        })
    };
    Rendered {
        html: read(&html),
        findings: serde_json::from_str(&read(&json)).expect("findings JSON"),
        code: out.status.code().unwrap_or(-1),
    }
}

fn demo() -> Rendered {
    let d = project("demo");
    check(&[
        &d.join("store"),
        &d.join("answers.jsonl"),
        &d.join("principals.json"),
        &d.join("decisions.jsonl"),
    ])
}

fn hostile() -> Rendered {
    let d = data_path("report/hostile");
    check(&[
        &d.join("store"),
        &d.join("answers.jsonl"),
        &d.join("principals.json"),
        &d.join("decisions.jsonl"),
    ])
}

fn sel(s: &str) -> Selector {
    Selector::parse(s).unwrap_or_else(|e| panic!("selector {s}: {e:?}"))
}

fn text(e: ElementRef<'_>) -> String {
    e.text().collect()
}

/// HTML5 parse errors, duplicate ids, and `#…` references without a target.
fn structure_problems(page: &Html) -> Vec<String> {
    let mut problems: Vec<String> =
        page.errors.iter().map(|e| format!("parse error: {e}")).collect();
    let mut ids = HashSet::new();
    for e in page.select(&sel("[id]")) {
        let id = e.value().attr("id").unwrap_or_default();
        if !ids.insert(id.to_owned()) {
            problems.push(format!("duplicate id {id:?}"));
        }
    }
    for a in page.select(&sel("a[href]")) {
        let href = a.value().attr("href").unwrap_or_default();
        match href.strip_prefix('#') {
            Some(target) if ids.contains(target) => {}
            Some(target) => problems.push(format!("link to missing #{target}")),
            None => problems.push(format!("link leaves the page: {href:?}")),
        }
    }
    for e in page.select(&sel("[aria-labelledby]")) {
        for id in e.value().attr("aria-labelledby").unwrap_or_default().split_whitespace() {
            if !ids.contains(id) {
                problems.push(format!("aria-labelledby names missing {id:?}"));
            }
        }
    }
    problems
}

/// Anything that would load from outside the file, run script other than the page's own,
/// or carry an injected element.
fn safety_problems(page: &Html) -> Vec<String> {
    let mut problems = Vec::new();
    let scripts: Vec<ElementRef<'_>> = page.select(&sel("script")).collect();
    if scripts.len() != 1 || text(scripts[0]) != SCRIPT {
        problems.push(format!("{} script elements, or not the page's own", scripts.len()));
    }
    if page.select(&sel("style")).count() != 1 {
        problems.push("more than one style element".into());
    }
    for tag in ["img", "iframe", "object", "embed", "link", "textarea", "base", "form[action]"] {
        let n = page.select(&sel(tag)).count();
        if n > 0 {
            problems.push(format!("{n} {tag} element(s)"));
        }
    }
    for e in page.select(&sel("*")) {
        for (name, value) in e.value().attrs() {
            if name.starts_with("on") || name == "style" || name == "srcdoc" {
                problems.push(format!("<{}> has attribute {name}", e.value().name()));
            }
            if matches!(name, "href" | "src" | "action" | "xlink:href" | "formaction")
                && !value.starts_with('#')
            {
                problems.push(format!("<{}> {name}={value:?}", e.value().name()));
            }
        }
    }
    let csp = page
        .select(&sel("meta[http-equiv=\"Content-Security-Policy\"]"))
        .next()
        .and_then(|m| m.value().attr("content").map(str::to_owned));
    match csp {
        Some(c) if c.starts_with("default-src 'none';") && c.contains("script-src 'sha256-") => {
            if c.contains("unsafe-inline") || c.contains("unsafe-eval") || c.contains("http") {
                problems.push(format!("policy too open: {c}"));
            }
        }
        other => problems.push(format!("no strict Content-Security-Policy meta: {other:?}")),
    }
    problems
}

fn summary_count(findings: &Value, key: &str) -> u64 {
    let mut v = &findings["summary"];
    for part in key.split('.') {
        v = &v[part];
    }
    v.as_u64().unwrap_or_else(|| panic!("summary.{key} is not a count: {v}"))
}

#[test]
fn demo_report_has_every_section_and_the_summary_counts() {
    let r = demo();
    assert_eq!(r.code, 1, "the demo scenario fails its gate by design");
    let page = Html::parse_document(&r.html);
    for id in SECTIONS {
        let section = page.select(&sel(&format!("section#{id}"))).next();
        assert!(section.is_some_and(|s| s.select(&sel("h2")).next().is_some()), "section #{id}");
    }
    // Every count cell equals the findings JSON; and every count the summary has is shown.
    let mut shown = BTreeMap::new();
    for cell in page.select(&sel("[data-count]")) {
        let key = cell.value().attr("data-count").unwrap_or_default();
        let n: u64 = text(cell).trim().parse().unwrap_or_else(|_| panic!("{key}: {}", text(cell)));
        assert_eq!(n, summary_count(&r.findings, key), "count {key}");
        shown.insert(key.to_owned(), n);
    }
    let s = &r.findings["summary"];
    for map in ["verdicts", "flags", "citations"] {
        for k in s[map].as_object().expect("map").keys() {
            assert!(shown.contains_key(&format!("{map}.{k}")), "{map}.{k} not shown");
        }
    }
    for k in [
        "lines_read",
        "answers_checked",
        "lines_rejected",
        "answers_passed",
        "answers_failed",
        "entitlement_breaches",
        "accepted",
        "errors",
        "warnings",
        "gate_failures",
    ] {
        assert!(shown.contains_key(k), "{k} not shown");
    }

    // One article per answer, one item per finding, one row per breach and rejected line.
    let answers = r.findings["answers"].as_array().expect("answers");
    assert_eq!(page.select(&sel("article.ans")).count(), answers.len());
    let findings: usize =
        answers.iter().map(|a| a["findings"].as_array().map_or(0, Vec::len)).sum();
    assert_eq!(page.select(&sel("li.finding")).count(), findings);
    assert_eq!(
        page.select(&sel("#entitlements tbody tr")).count() as u64,
        summary_count(&r.findings, "entitlement_breaches")
    );
    assert_eq!(
        page.select(&sel("#rejected + table tbody tr")).count() as u64,
        summary_count(&r.findings, "lines_rejected")
    );
    assert_eq!(
        page.select(&sel("li.finding[data-accepted]")).count() as u64,
        summary_count(&r.findings, "accepted")
    );

    // Worst first: failing answers before passing ones, most gate findings first.
    let order: Vec<(bool, usize)> = page
        .select(&sel("article.ans"))
        .map(|a| {
            (a.value().attr("data-pass") == Some("1"), a.select(&sel("li.finding.gate")).count())
        })
        .collect();
    let mut sorted = order.clone();
    sorted.sort_by(|x, y| x.0.cmp(&y.0).then(y.1.cmp(&x.1)));
    assert_eq!(order, sorted, "answers are not worst first");

    // Every sentence carries its verdict in words, not only in colour.
    for s in page.select(&sel("li.s")) {
        let tag = s.select(&sel(".vt")).next().map(text).unwrap_or_default();
        assert!(
            ["supported", "partial", "unsupported", "no claim"].iter().any(|v| tag.contains(v)),
            "sentence without a verdict label: {tag:?}"
        );
    }
    // Matched words are marked, and each mark is a piece of some evidence text.
    let evidence: Vec<String> = answers
        .iter()
        .flat_map(|a| a["sentences"].as_array().cloned().unwrap_or_default())
        .flat_map(|s| {
            let also = s["also_evidence"].as_array().cloned().unwrap_or_default();
            [s["evidence"]["text"].clone(), s["cited_evidence"]["text"].clone()]
                .into_iter()
                .chain(also.into_iter().map(|e| e["text"].clone()))
                .collect::<Vec<_>>()
        })
        .filter_map(|t| t.as_str().map(str::to_owned))
        .collect();
    let marks: Vec<String> = page.select(&sel("blockquote mark")).map(text).collect();
    assert!(!marks.is_empty());
    for m in &marks {
        assert!(evidence.iter().any(|e| e.contains(m.as_str())), "mark {m:?} is no evidence text");
    }
    // The thresholds are drawn on the histogram.
    assert_eq!(page.select(&sel("#fig-scores line.thr")).count(), 2);
    assert!(r.html.contains("A lexical check is evidence for a reviewer, not proof"));

    let problems = structure_problems(&page);
    assert!(problems.is_empty(), "{problems:#?}");
    let problems = safety_problems(&page);
    assert!(problems.is_empty(), "{problems:#?}");
}

#[test]
fn hostile_text_is_shown_as_text_and_runs_nothing() {
    let r = hostile();
    assert_eq!(r.code, 1);
    let page = Html::parse_document(&r.html);
    let problems = safety_problems(&page);
    assert!(problems.is_empty(), "{problems:#?}");
    let problems = structure_problems(&page);
    assert!(problems.is_empty(), "{problems:#?}");
    assert_eq!(page.select(&sel("svg")).count(), 4, "an injected svg element");
    assert_eq!(page.select(&sel("title")).count(), 1 + 20, "page title plus the histogram's");

    // The hostile strings reach the reader as text: in the answer, the question, the
    // evidence, the user, the ids, the decisions, the citation's ref and document.
    let body = page.select(&sel("main")).next().map(text).unwrap_or_default();
    for needle in [
        "<script>document.title='INJECTED'",
        "</textarea><script>",
        "--></style><script>",
        "<img src=x onerror=\"document.body.setAttribute('data-injected','user')\">",
        "h-2\"><img src=x onerror=",
        "javascript:alert(document.domain)",
        "x\"><svg onload=alert(1)>",
        "<script>document.body.setAttribute('data-injected','by')</script>",
        "<script>alert(1)</script>",
        "</style><style>body{display:none}</style>",
        "background:url(javascript:document.body.setAttribute('data-injected','css-url'))",
        "data:text/html;base64,PHNjcmlwdD5hbGVydCgxKTwvc2NyaXB0Pg==",
        "{{ 7*7 }} and {% if true %}yes{% endif %} and ${7*7} and <%= 7*7 %>",
        "h-7{{ 7*7 }}</div></td></table><plaintext>",
        "CDATA[ x ]]> and &lt;escaped&gt; &amp;amp;",
        "<iframe srcdoc=",
    ] {
        assert!(body.contains(needle), "{needle:?} is not shown as text");
    }
    // Attribute values come back exactly: the script reads the answer id from them.
    let ids: Vec<&str> =
        page.select(&sel("article.ans")).filter_map(|a| a.value().attr("data-id")).collect();
    assert!(ids.contains(
        &"h-2\"><img src=x onerror=\"document.body.setAttribute('data-injected','id')\">"
    ));
    // The restricted match and the forbidden citation are both listed, with their access.
    let rows: Vec<String> = page.select(&sel("#entitlements tbody tr")).map(text).collect();
    assert_eq!(rows.len(), 2, "{rows:?}");
    assert!(rows.iter().all(|r| r.contains("notes/board-only") && r.contains("board")), "{rows:?}");
}

#[test]
fn report_without_answers_renders() {
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::create_dir(dir.path().join("store")).expect("store");
    std::fs::write(dir.path().join("store/a.txt"), "Nothing here.\n").expect("doc");
    std::fs::write(dir.path().join("answers.jsonl"), "\n").expect("answers");
    let r = check(&[&dir.path().join("store"), &dir.path().join("answers.jsonl")]);
    assert_eq!(r.code, 0);
    let page = Html::parse_document(&r.html);
    assert!(structure_problems(&page).is_empty(), "{:#?}", structure_problems(&page));
    assert!(r.html.contains("No answer was checked."));
}

fn span(start: usize, end: usize) -> Span {
    Span { start, end }
}

/// A plausible answer of three sentences, two citations and four findings, with
/// evidence windows of about 250 bytes.
fn synthetic_answer(i: usize) -> AnswerFindings {
    let ev_text = format!(
        "Claims stay open for {} days from the date of purchase. After that they close \
         automatically and the customer is told by email. Agents may extend a claim once, \
         by at most 10 days, when the customer asks before it closes.",
        30 + i % 40
    );
    let evidence = |score: f64| Evidence {
        doc: format!("support/policy-{:03}.md", i % 200),
        start: 1200,
        end: 1200 + ev_text.len(),
        text: ev_text.clone(),
        score,
        matched: vec![span(0, 6), span(7, 11), span(12, 16), span(21, 23), span(24, 28)],
        access: Some(vec!["all-staff".into()]),
        page: None,
        page_end: None,
    };
    let answer = format!(
        "Claims stay open for {} days [1]. After that they close automatically [1]. \
         Agents can extend them twice by phone [2].",
        30 + i % 40
    );
    let sentence = |index: usize, start: usize, end: usize, verdict, score, flags: Vec<Flag>| {
        SentenceFindings {
            index,
            text: answer[start..end].replace(" [1]", "").replace(" [2]", ""),
            span: span(start, end),
            refs: vec![if index == 2 { "2" } else { "1" }.into()],
            verdict,
            score,
            flags,
            evidence: Some(evidence(score)),
            also_evidence: Vec::new(),
            cited_evidence: None,
            figures: Vec::new(),
            changed_terms: Vec::new(),
        }
    };
    let first = answer.find('.').unwrap_or(0) + 1;
    let second = first + answer[first..].find('.').unwrap_or(0) + 1;
    let finding = |kind: &str, sentence, gate| Finding {
        kind: kind.into(),
        sentence,
        r#ref: None,
        severity: Severity::Error,
        message: format!("sentence {} has a {kind} finding", sentence.map_or(0, |s| s + 1)),
        gate,
        accepted: None,
    };
    AnswerFindings {
        id: format!("a-{i:05}"),
        line: i + 1,
        user: Some(format!("u-{}", i % 300)),
        groups: Some(vec!["all-staff".into(), "support".into()]),
        question: Some("How long does a warranty claim stay open, and can it be extended?".into()),
        passed: i % 3 != 0,
        answer: answer.clone(),
        sentences: vec![
            sentence(0, 0, first, Verdict::Supported, 0.93, vec![]),
            sentence(1, first + 1, second, Verdict::Partial, 0.61, vec![]),
            sentence(
                2,
                second + 1,
                answer.len(),
                Verdict::Unsupported,
                0.31,
                vec![Flag::NumberMismatch],
            ),
        ],
        citations: vec![
            CitationFindings {
                r#ref: "1".into(),
                doc: format!("support/policy-{:03}.md", i % 200),
                status: CitationStatus::Ok,
                detail: None,
                passage: Some(span(1100, 1800)),
                used_by: vec![0, 1],
                access: Some(vec!["all-staff".into()]),
            },
            CitationFindings {
                r#ref: "2".into(),
                doc: "support/phone-desk.md".into(),
                status: CitationStatus::Unused,
                detail: Some("no sentence of the answer is supported by it".into()),
                passage: Some(span(0, 2400)),
                used_by: vec![],
                access: Some(vec!["all-staff".into()]),
            },
        ],
        findings: vec![
            finding("partial", Some(1), false),
            finding("unsupported", Some(2), i % 3 == 0),
            finding("number_mismatch", Some(2), i % 3 == 0),
            Finding {
                accepted: (i % 7 == 0)
                    .then(|| Acceptance { by: "rev-1".into(), note: "reviewed".into() }),
                ..finding("unused", None, false)
            },
        ],
        approved: None,
    }
}

fn synthetic_report(n: usize) -> Report {
    let answers: Vec<AnswerFindings> = (0..n).map(synthetic_answer).collect();
    let mut summary = Summary {
        lines_read: n,
        answers_checked: n,
        answers_failed: answers.iter().filter(|a| !a.passed).count(),
        ..Summary::default()
    };
    summary.answers_passed = n - summary.answers_failed;
    summary.gate = GateResult { passed: false, reasons: vec!["synthetic".into()] };
    let file = |path: &str| InputFile { path: path.into(), size: 1, sha256: "0".repeat(64) };
    Report {
        tool: Tool::default(),
        generated_at: "2026-01-01T00:00:00Z".into(),
        command: vec!["plumbline".into(), "check".into()],
        shard: None,
        merged_from: Vec::new(),
        redact_restricted: false,
        inputs: Inputs {
            answers: file("answers.jsonl"),
            principals: None,
            config: None,
            accept: None,
            store: StoreRecord {
                path: "store".into(),
                documents: 201,
                digest: "0".repeat(64),
                problems: Vec::new(),
                ..StoreRecord::default()
            },
            input_map: None,
        },
        config: serde_json::to_value(plumbline::config::Config::default()).expect("config"),
        summary,
        answers,
        rejected: Vec::new(),
        decisions: Decisions::default(),
    }
}

#[test]
fn ten_thousand_answers_stay_under_40_mb() {
    let report = synthetic_report(10_000);
    let started = std::time::Instant::now();
    let html = plumbline::report::html::render(&report).expect("render");
    let took = started.elapsed();
    let mb = html.len() as f64 / 1e6;
    eprintln!("10,000 answers: {mb:.1} MB in {:.2}s (this build's profile)", took.as_secs_f64());
    assert!(html.len() < 40_000_000, "{mb:.1} MB");
    assert_eq!(html.matches("<article class=\"ans ").count(), 10_000);
}

#[test]
fn bad_spans_in_evidence_do_not_break_the_page() {
    let mut report = synthetic_report(3);
    let s = &mut report.answers[0].sentences[0];
    let e = s.evidence.as_mut().expect("evidence");
    e.text = "£12.40 — déjà vu".into();
    // Inside multi-byte characters, reversed, past the end.
    e.matched = vec![span(1, 3), span(9, 4), span(10, 400), span(500, 600)];
    s.span = span(3, 900);
    let html = plumbline::report::html::render(&report).expect("render");
    let page = Html::parse_document(&html);
    assert!(structure_problems(&page).is_empty(), "{:#?}", structure_problems(&page));
    let quote = page.select(&sel("#a0-s0 blockquote")).next().map(text).unwrap_or_default();
    assert_eq!(quote, "£12.40 — déjà vu");
}

#[test]
fn demo_answers_repeated_to_ten_thousand_stay_under_40_mb() {
    let mut report: Report = serde_json::from_value(demo().findings).expect("findings as a Report");
    let one = std::mem::take(&mut report.answers);
    report.answers = (0..10_000)
        .map(|i| {
            let mut a = one[i % one.len()].clone();
            a.id = format!("{}-{i:05}", a.id);
            a
        })
        .collect();
    let html = plumbline::report::html::render(&report).expect("render");
    eprintln!("demo answers ×{}: {:.1} MB", 10_000 / one.len(), html.len() as f64 / 1e6);
    assert!(html.len() < 40_000_000, "{:.1} MB", html.len() as f64 / 1e6);
}

#[test]
fn the_page_checks_find_what_they_look_for() {
    // Controls for the checks above: each problem they look for is found when present.
    let bad = Html::parse_document(
        "<!DOCTYPE html><html><head><title>t</title></head><body>\
         <p id=a>1</p><p id=a>2</p><a href=\"#nowhere\">x</a><a href=\"https://example.org\">y</a>\
         <table><tr><td>1</td></tr><div>misplaced</div></table>\
         <img src=x onerror=alert(1)><span style=\"color:red\">z</span></body></html>",
    );
    let p = structure_problems(&bad);
    for want in ["parse error", "duplicate id \"a\"", "missing #nowhere", "leaves the page"] {
        assert!(p.iter().any(|x| x.contains(want)), "{want:?} not found in {p:#?}");
    }
    let p = safety_problems(&bad);
    for want in ["script elements", "img element", "has attribute onerror", "has attribute style"] {
        assert!(p.iter().any(|x| x.contains(want)), "{want:?} not found in {p:#?}");
    }
    assert!(p.iter().any(|x| x.contains("no strict Content-Security-Policy")), "{p:#?}");
}

#[test]
fn long_evidence_scrolls_on_screen_and_prints_whole() {
    let mut report = synthetic_report(2);
    let long = "Warranty claims stay open for 45 days. ".repeat(40);
    let e = report.answers[0].sentences[0].evidence.as_mut().expect("evidence");
    e.text = long.clone();
    e.matched = vec![span(0, 8), span(9, 15)];
    let html = plumbline::report::html::render(&report).expect("render");
    let page = Html::parse_document(&html);
    // Not folded away (a folded <details> prints folded when scripts are off): the whole
    // text is in a scrolling box that the print stylesheet lets grow.
    let quote = page.select(&sel("#a0-s0 blockquote.long")).next().expect("long evidence");
    assert_eq!(text(quote), long);
    assert_eq!(quote.select(&sel("mark")).map(text).collect::<Vec<_>>(), ["Warranty claims"]);
    assert!(page.select(&sel("#a0-s0 details")).next().is_none());
    let css = include_str!("../../templates/report.css");
    let print = &css[css.find("@media print").expect("print styles")..];
    assert!(print.contains("blockquote.long { max-height: none; overflow: visible; }"));
    // Short evidence is a plain quote.
    assert!(page.select(&sel("#a0-s1 blockquote.long")).next().is_none());
    assert!(page.select(&sel("#a0-s1 blockquote")).next().is_some());
}
