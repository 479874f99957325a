//! Property tests (proptest) of a whole check, through the library: random stores and
//! answer logs (copied, altered and invented sentences; markers; whole-document and
//! byte-range citations, some broken; users known and unknown; malformed lines), and four
//! properties:
//!
//! * determinism: the same inputs give the same findings bytes, on one thread or two;
//! * order: permuting the lines of the log permutes the answers and nothing else;
//! * counts add up, everywhere the summary counts something;
//! * an unrelated document added to the store never changes a supported sentence.
//!
//! Case counts are kept small (the suite runs on two cores); each case is a full run.

use std::path::Path;

use plumbline::findings::Report;
use plumbline::run::{self, RunInputs, Verbosity};
use proptest::prelude::*;
use serde_json::{Value, json};

/// splitmix64, for building a scenario from the seed proptest draws.
struct Rng(u64);
impl Rng {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n.max(1) as u64) as usize
    }
}

const VOCAB: &[&str] = &[
    "warranty",
    "claims",
    "stay",
    "open",
    "days",
    "purchase",
    "refund",
    "minimum",
    "maximum",
    "agents",
    "must",
    "not",
    "reopen",
    "parking",
    "free",
    "weekdays",
    "visitors",
    "pay",
    "hour",
    "gate",
    "north",
    "leave",
    "staff",
    "annual",
    "request",
    "manager",
    "approve",
    "before",
    "after",
    "every",
    "some",
    "all",
    "form",
    "ticket",
    "close",
    "automatically",
];

/// Words no document of a scenario uses: the unrelated document is made of these.
const OTHER: &[&str] = &[
    "glacier", "violin", "orbit", "saffron", "lantern", "meadow", "quartz", "harbour", "falcon",
    "velvet", "canyon", "mosaic",
];

fn sentence(rng: &mut Rng, words: &[&str]) -> String {
    let n = 4 + rng.below(8);
    let mut w: Vec<String> = (0..n).map(|_| words[rng.below(words.len())].to_owned()).collect();
    if rng.below(3) == 0 {
        let i = rng.below(n);
        w[i] = (1 + rng.below(60)).to_string();
    }
    let mut s = w.join(" ");
    s[..1].make_ascii_uppercase();
    s.push('.');
    s
}

/// A store and an answers log built from `seed`.
struct Scenario {
    docs: Vec<(String, String)>,
    lines: Vec<String>,
}

fn scenario(seed: u64, answers: usize) -> Scenario {
    let mut rng = Rng(seed);
    let ndocs = 2 + rng.below(3);
    let docs: Vec<(String, Vec<String>)> = (0..ndocs)
        .map(|d| {
            let sents = (0..4 + rng.below(8)).map(|_| sentence(&mut rng, VOCAB)).collect();
            (format!("d{d}.md"), sents)
        })
        .collect();
    let mut lines = Vec::new();
    for a in 0..answers {
        if rng.below(10) == 0 {
            lines.push(["{not json", "[1, 2]", r#"{"id": 5}"#][rng.below(3)].to_owned());
            continue;
        }
        let ncite = 1 + rng.below(3);
        let mut cites = Vec::new();
        for c in 0..ncite {
            let d = rng.below(ndocs + 1); // ndocs: a document that does not exist
            let name = docs.get(d).map_or("missing.md".to_owned(), |x| x.0.clone());
            let mut cite = json!({"ref": (c + 1).to_string(), "doc": name});
            if let (Some(doc), 0) = (docs.get(d), rng.below(3)) {
                let len: usize = doc.1.iter().map(|s| s.len() + 1).sum();
                let start = rng.below(len);
                cite["start"] = json!(start);
                cite["end"] = json!(start + rng.below(len));
            }
            cites.push(cite);
        }
        let mut text = Vec::new();
        for _ in 0..1 + rng.below(4) {
            let c = rng.below(ncite);
            let d = cites[c]["doc"].as_str().and_then(|n| docs.iter().find(|x| x.0 == n));
            let mut s = match (d, rng.below(4)) {
                (Some(doc), 0 | 1) => doc.1[rng.below(doc.1.len())].clone(),
                (Some(doc), 2) => {
                    let orig = &doc.1[rng.below(doc.1.len())];
                    orig.replacen(' ', &format!(" {} ", VOCAB[rng.below(VOCAB.len())]), 1)
                }
                _ => sentence(&mut rng, VOCAB),
            };
            if rng.below(5) > 0 {
                s = format!("{} [{}].", s.trim_end_matches('.'), c + 1);
            }
            text.push(s);
        }
        let mut answer =
            json!({"id": format!("a-{a}"), "answer": text.join(" "), "citations": cites});
        match rng.below(3) {
            0 => answer["groups"] = json!(["staff"]),
            1 => answer["user"] = json!(format!("u-{}", rng.below(3))),
            _ => {}
        }
        lines.push(answer.to_string());
    }
    let docs = docs.into_iter().map(|(n, s)| (n, s.join(" ") + "\n")).collect();
    Scenario { docs, lines }
}

/// Writes the scenario (plus `extra` documents) under `dir` and checks it in a pool of
/// `threads` threads.
fn check(
    dir: &Path,
    s: &Scenario,
    lines: &[String],
    extra: &[(String, String)],
    threads: usize,
) -> Report {
    let store = dir.join("store");
    let _ = std::fs::remove_dir_all(&store);
    std::fs::create_dir_all(&store).expect("store");
    for (name, text) in s.docs.iter().chain(extra) {
        std::fs::write(store.join(name), text).expect("doc");
    }
    std::fs::write(store.join("manifest.json"), r#"{"default_access": ["staff"]}"#)
        .expect("manifest");
    std::fs::write(dir.join("principals.json"), r#"{"u-0": ["staff"], "u-1": ["ops"]}"#)
        .expect("principals");
    let answers = dir.join("answers.jsonl");
    std::fs::write(&answers, lines.join("\n") + "\n").expect("answers");
    let inputs = RunInputs {
        store,
        answers,
        principals: Some(dir.join("principals.json")),
        config: None,
        accept: None,
        shard: None,
        redact_restricted: false,
        command: vec!["plumbline".into()],
    };
    let pool = rayon::ThreadPoolBuilder::new().num_threads(threads).build().expect("pool");
    pool.install(|| {
        let loaded = run::load(&inputs).expect("load");
        let ctx = loaded.context(false);
        let (mut report, _) =
            run::check_answers(&inputs, &ctx, &loaded, Verbosity::Quiet).expect("check");
        report.generated_at = String::new();
        report
    })
}

fn bytes(r: &Report) -> Vec<u8> {
    plumbline::report::json::to_bytes(r).expect("json")
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 24, failure_persistence: None, ..ProptestConfig::default() })]

    /// Same inputs, same bytes: twice on one thread, and on two threads.
    #[test]
    fn same_inputs_same_findings_bytes(seed in any::<u64>(), n in 1usize..14) {
        let dir = tempfile::tempdir().expect("temp");
        let s = scenario(seed, n);
        let one = bytes(&check(dir.path(), &s, &s.lines, &[], 1));
        prop_assert_eq!(&one, &bytes(&check(dir.path(), &s, &s.lines, &[], 1)));
        prop_assert_eq!(&one, &bytes(&check(dir.path(), &s, &s.lines, &[], 2)));
    }

    /// Permuting the log's lines permutes the answers (and the rejected lines) and changes
    /// nothing else: each answer's findings, the summary and the gate stay as they were.
    #[test]
    fn permuting_answers_permutes_the_output_only(
        seed in any::<u64>(),
        n in 2usize..14,
        order in any::<u64>(),
    ) {
        let dir = tempfile::tempdir().expect("temp");
        let s = scenario(seed, n);
        let mut shuffled = s.lines.clone();
        let mut rng = Rng(order);
        for i in (1..shuffled.len()).rev() {
            shuffled.swap(i, rng.below(i + 1));
        }
        let a = serde_json::to_value(check(dir.path(), &s, &s.lines, &[], 2)).expect("json");
        let b = serde_json::to_value(check(dir.path(), &s, &shuffled, &[], 2)).expect("json");
        let by_id = |r: &Value| {
            let mut v: Vec<Value> = r["answers"].as_array().cloned().unwrap_or_default();
            for x in &mut v { x["line"] = json!(0); }
            v.sort_by_key(|x| x["id"].to_string());
            v
        };
        prop_assert_eq!(by_id(&a), by_id(&b));
        let errors = |r: &Value| {
            let mut v: Vec<String> = r["rejected"].as_array().into_iter().flatten()
                .map(|x| x["error"].to_string()).collect();
            v.sort();
            v
        };
        prop_assert_eq!(errors(&a), errors(&b));
        prop_assert_eq!(&a["summary"], &b["summary"]);
        let rest = |r: &Value| {
            let mut r = r.clone();
            for k in ["answers", "rejected"] { r[k] = json!(null); }
            r["inputs"]["answers"]["sha256"] = json!(null);
            r
        };
        prop_assert_eq!(rest(&a), rest(&b));
        // And the order itself is the input order.
        let ids = |r: &Value, lines: &[String]| {
            let got: Vec<String> = r["answers"].as_array().into_iter().flatten()
                .map(|x| x["id"].as_str().unwrap_or("").to_owned()).collect();
            let want: Vec<String> = lines.iter()
                .filter_map(|l| serde_json::from_str::<Value>(l).ok())
                .filter(|v| v["answer"].is_string())
                .map(|v| v["id"].as_str().unwrap_or("").to_owned()).collect();
            (got, want)
        };
        let (got, want) = ids(&b, &shuffled);
        prop_assert_eq!(got, want);
    }

    /// Every count of the summary adds up with what the findings list.
    #[test]
    fn counts_add_up(seed in any::<u64>(), n in 1usize..14) {
        let dir = tempfile::tempdir().expect("temp");
        let s = scenario(seed, n);
        let r = check(dir.path(), &s, &s.lines, &[], 2);
        let m = &r.summary;
        let non_blank = s.lines.iter().filter(|l| !l.trim().is_empty()).count();
        prop_assert_eq!(m.lines_read, non_blank);
        prop_assert_eq!(m.answers_checked + m.lines_rejected, m.lines_read);
        prop_assert_eq!(m.answers_checked, r.answers.len());
        prop_assert_eq!(m.lines_rejected, r.rejected.len());
        prop_assert_eq!(m.answers_passed + m.answers_failed, m.answers_checked);
        prop_assert_eq!(m.answers_passed, r.answers.iter().filter(|a| a.passed).count());
        let sentences: usize = r.answers.iter().map(|a| a.sentences.len()).sum();
        prop_assert_eq!(m.verdicts.values().sum::<usize>(), sentences);
        let citations: usize = r.answers.iter().map(|a| a.citations.len()).sum();
        prop_assert_eq!(m.citations.values().sum::<usize>(), citations);
        let flags: usize = r.answers.iter().flat_map(|a| &a.sentences).map(|x| x.flags.len()).sum();
        prop_assert_eq!(m.flags.values().sum::<usize>(), flags);
        let findings: Vec<_> = r.answers.iter().flat_map(|a| &a.findings).collect();
        prop_assert_eq!(m.errors + m.warnings, findings.len());
        prop_assert_eq!(m.gate_failures, findings.iter().filter(|f| f.gate).count());
        for a in &r.answers {
            prop_assert_eq!(a.passed, !a.findings.iter().any(|f| f.gate));
            for x in &a.sentences {
                prop_assert!((0.0..=1.0).contains(&x.score), "score {}", x.score);
            }
        }
        prop_assert_eq!(m.gate.passed, m.answers_failed == 0 && m.lines_rejected == 0);
    }

    /// An unrelated document added to the store leaves every supported sentence supported,
    /// with the same score and evidence.
    #[test]
    fn an_unrelated_document_never_changes_a_supported_verdict(seed in any::<u64>(), n in 1usize..14) {
        let dir = tempfile::tempdir().expect("temp");
        let s = scenario(seed, n);
        let before = check(dir.path(), &s, &s.lines, &[], 2);
        let mut rng = Rng(seed ^ 0xA5A5);
        let unrelated: Vec<String> = (0..12).map(|_| sentence(&mut rng, OTHER)).collect();
        let extra = [("zz-unrelated.md".to_owned(), unrelated.join(" ") + "\n")];
        let after = check(dir.path(), &s, &s.lines, &extra, 2);
        prop_assert_eq!(after.inputs.store.documents, before.inputs.store.documents + 1);
        let mut supported = 0;
        for (a, b) in before.answers.iter().zip(&after.answers) {
            for (x, y) in a.sentences.iter().zip(&b.sentences) {
                if x.verdict == plumbline::findings::Verdict::Supported {
                    supported += 1;
                    prop_assert_eq!(y.verdict, x.verdict, "{}: {:?}", a.id, x.text);
                    prop_assert_eq!(y.score, x.score);
                    prop_assert_eq!(&y.evidence, &x.evidence);
                }
            }
        }
        let _ = supported;
    }
}

/// The scenarios exercise what the properties are about: supported sentences (for the
/// unrelated-document property), rejected lines and failing answers (for the counts).
#[test]
fn the_scenarios_cover_the_cases() {
    let dir = tempfile::tempdir().expect("temp");
    let (mut supported, mut rejected, mut failed) = (0, 0, 0);
    for seed in 0..12 {
        let s = scenario(seed, 10);
        let r = check(dir.path(), &s, &s.lines, &[], 2);
        supported += r.summary.verdicts["supported"];
        rejected += r.summary.lines_rejected;
        failed += r.summary.answers_failed;
    }
    assert!(supported >= 20 && rejected >= 3 && failed >= 10, "{supported} {rejected} {failed}");
}
