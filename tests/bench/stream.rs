//! Benchmark of memory and throughput on a large answers log: the release binary checks a
//! seeded ~1 GiB log against a small store, with peak resident memory, against a log 64
//! times smaller checked in the same run. Run with
//!
//! ```sh
//! cargo bench --bench stream                               # 1 GiB log
//! PLUMBLINE_STREAM_MIB=128 cargo bench --bench stream      # a quicker 128 MiB one
//! ```
//!
//! The log is written to a temporary folder under the target directory and deleted
//! afterwards. Its lines look like a retrieval assistant's log: 2–4 sentences with
//! markers and 1–3 citations (a third with byte offsets), some altered so that they are
//! not supported, a user and groups, the question, and an unknown `context` field of
//! 2–14 KB holding the retrieved passages (kept and ignored, as SPEC.md says). One line in
//! 20,000 is a 9 MiB line over `limits.max_line_bytes`, and one in 5,000 is not JSON.
//!
//! Peak memory is the largest resident set of the child processes (`getrusage`,
//! `RUSAGE_CHILDREN`, Linux reports KiB), read after each run; the small run goes first,
//! so the second reading is the large run's. The run also sets the debug-only switch
//! `PLUMBLINE_DEBUG_PANIC_ON_ID` to an id of the log, to show a release binary has no such
//! switch (the findings must count no internal error).
//!
//! A second part times single answers of 1 and 4 MiB made of short marked sentences, the
//! shape that used to take quadratic time, and prints the ratio (4 is linear).

use std::io::{BufWriter, Write};
use std::path::Path;
use std::process::Command;
use std::time::Instant;

use nix::sys::resource::{UsageWho, getrusage};

const BIN: &str = env!("CARGO_BIN_EXE_plumbline");

/// splitmix64: small, seeded, reproducible.
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
        (self.next() % n as u64) as usize
    }
}

const WORDS: &[&str] = &[
    "claims",
    "stay",
    "open",
    "days",
    "purchase",
    "refund",
    "agents",
    "window",
    "closed",
    "warranty",
    "parcel",
    "depot",
    "rota",
    "shift",
    "leave",
    "allowance",
    "manager",
    "approve",
    "request",
    "form",
    "ticket",
    "customer",
    "supplier",
    "invoice",
    "payment",
    "month",
    "week",
    "north",
    "south",
    "store",
    "stock",
    "order",
    "return",
    "label",
    "courier",
    "weekend",
];

fn sentence(rng: &mut Rng) -> String {
    let n = 7 + rng.below(10);
    let mut s: Vec<String> = (0..n).map(|_| WORDS[rng.below(WORDS.len())].to_owned()).collect();
    if rng.below(3) == 0 {
        let i = rng.below(n);
        s[i] = (1 + rng.below(90)).to_string();
    }
    let mut out = s.join(" ");
    out[..1].make_ascii_uppercase();
    out.push('.');
    out
}

/// A store of `docs` documents of 30 sentences; returns each document's sentences.
fn write_store(dir: &Path, rng: &mut Rng, docs: usize) -> Vec<Vec<String>> {
    std::fs::create_dir_all(dir).expect("store dir");
    let mut all = Vec::new();
    for d in 0..docs {
        let sents: Vec<String> = (0..30).map(|_| sentence(rng)).collect();
        std::fs::write(dir.join(format!("doc-{d:02}.md")), sents.join(" ") + "\n").expect("doc");
        all.push(sents);
    }
    std::fs::write(dir.join("manifest.json"), r#"{"default_access": ["staff"]}"#)
        .expect("manifest");
    all
}

/// JSON string literal.
fn q(s: &str) -> String {
    serde_json::to_string(s).expect("string")
}

/// Writes a log of about `target` bytes; returns (bytes, lines).
fn write_log(path: &Path, rng: &mut Rng, docs: &[Vec<String>], target: u64) -> (u64, u64) {
    let mut out = BufWriter::with_capacity(1 << 20, std::fs::File::create(path).expect("log"));
    let (mut bytes, mut lines) = (0u64, 0u64);
    let context_pool: Vec<String> =
        (0..64).map(|_| (0..40).map(|_| sentence(rng)).collect::<Vec<_>>().join(" ")).collect();
    while bytes < target {
        lines += 1;
        let line = if lines % 20_000 == 0 {
            format!(
                r#"{{"id": "huge-{lines}", "answer": "{}", "citations": []}}"#,
                "x".repeat(9 << 20)
            )
        } else if lines % 5_000 == 0 {
            "{\"id\": \"broken\", \"answer\": ".to_owned()
        } else {
            let ncite = 1 + rng.below(3);
            let mut cites = Vec::new();
            let mut text = Vec::new();
            for c in 0..ncite {
                let d = rng.below(docs.len());
                if rng.below(3) == 0 {
                    let off: usize = docs[d][..10].iter().map(|s| s.len() + 1).sum();
                    cites.push(format!(
                        r#"{{"ref": "{}", "doc": "doc-{d:02}.md", "start": {off}, "end": {}}}"#,
                        c + 1,
                        off + 400
                    ));
                } else {
                    cites.push(format!(r#"{{"ref": "{}", "doc": "doc-{d:02}.md"}}"#, c + 1));
                }
                let s =
                    if rng.below(4) == 0 { sentence(rng) } else { docs[d][rng.below(30)].clone() };
                text.push(format!("{} [{}]", s.trim_end_matches('.'), c + 1) + ".");
            }
            if rng.below(2) == 0 {
                text.push("Is there anything else I can help with?".into());
            }
            let context: String = (0..1 + rng.below(7))
                .map(|_| context_pool[rng.below(64)].as_str())
                .collect::<Vec<_>>()
                .join("\n\n");
            format!(
                r#"{{"id": "a-{lines}", "user": "u-{}", "groups": ["staff"], "question": {}, "answer": {}, "citations": [{}], "context": {}}}"#,
                rng.below(500),
                q(&sentence(rng).replace('.', "?")),
                q(&text.join(" ")),
                cites.join(", "),
                q(&context)
            )
        };
        out.write_all(line.as_bytes()).expect("write");
        out.write_all(b"\n").expect("write");
        bytes += line.len() as u64 + 1;
    }
    out.flush().expect("flush");
    (bytes, lines)
}

struct Measured {
    seconds: f64,
    max_rss_mib: f64,
    stderr: String,
}

fn run(store: &Path, answers: &Path, json: &Path, panic_on: &str) -> Measured {
    let t = Instant::now();
    let out = Command::new(BIN)
        .arg("check")
        .arg("--store")
        .arg(store)
        .arg("--answers")
        .arg(answers)
        .arg("--json")
        .arg(json)
        .env("PLUMBLINE_DEBUG_PANIC_ON_ID", panic_on)
        .output()
        .expect("run plumbline");
    let seconds = t.elapsed().as_secs_f64();
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    assert!(matches!(out.status.code(), Some(0 | 1)), "exit {:?}: {stderr}", out.status.code());
    let usage = getrusage(UsageWho::RUSAGE_CHILDREN).expect("getrusage");
    Measured { seconds, max_rss_mib: usage.max_rss() as f64 / 1024.0, stderr }
}

/// The counts of the summary line on stderr:
/// `plumbline: N answers checked, M lines rejected (K non-blank lines read); ...`.
fn counts(stderr: &str) -> (u64, u64, u64) {
    let line = stderr.lines().find(|l| l.starts_with("plumbline: ")).expect("summary line");
    let nums: Vec<u64> = line
        .split(|c: char| !c.is_ascii_digit())
        .filter(|s| !s.is_empty())
        .take(3)
        .map(|s| s.parse().expect("number"))
        .collect();
    (nums[0], nums[1], nums[2])
}

fn main() {
    let mib: u64 =
        std::env::var("PLUMBLINE_STREAM_MIB").ok().and_then(|v| v.parse().ok()).unwrap_or(1024);
    let tmp = tempfile::tempdir_in(env!("CARGO_TARGET_TMPDIR")).expect("temp dir");
    let mut rng = Rng(0x5EED_2026);
    let store = tmp.path().join("store");
    let docs = write_store(&store, &mut rng, 24);
    let json = tmp.path().join("findings.json");
    println!("stream benchmark: {} (release binary), store of {} documents", BIN, docs.len());

    let mut results = Vec::new();
    for size in [(mib << 20) / 64, mib << 20] {
        let log = tmp.path().join("answers.jsonl");
        let t = Instant::now();
        let (bytes, lines) = write_log(&log, &mut rng, &docs, size);
        let gen_s = t.elapsed().as_secs_f64();
        let m = run(&store, &log, &json, "a-7");
        let (checked, rejected, read) = counts(&m.stderr);
        assert_eq!(checked + rejected, read, "counts add up");
        let findings_mib =
            std::fs::metadata(&json).map(|m| m.len()).unwrap_or(0) as f64 / 1048576.0;
        let head = std::fs::read_to_string(&json)
            .map(|t| t.chars().take(200_000).collect::<String>())
            .unwrap_or_default();
        assert!(
            head.contains("\"internal_errors\": 0"),
            "the release binary has no failure switch"
        );
        println!(
            "log {:>7.1} MiB, {lines:>7} lines (written in {gen_s:.1} s): {checked} answers checked, {rejected} rejected, \
             {:.1} s, {:.1} MiB/s, {:.0} answers/s, peak RSS {:.0} MiB, findings {:.0} MiB",
            bytes as f64 / 1048576.0,
            m.seconds,
            bytes as f64 / 1048576.0 / m.seconds,
            checked as f64 / m.seconds,
            m.max_rss_mib,
            findings_mib
        );
        results.push((bytes, m.max_rss_mib));
        std::fs::remove_file(&log).expect("remove log");
    }
    let (small, large) = (results[0], results[1]);
    println!(
        "peak RSS: {:.0} MiB for {:.0} MiB of log vs {:.0} MiB for {:.0} MiB: {:.2}x the memory for {:.0}x the log",
        large.1,
        large.0 as f64 / 1048576.0,
        small.1,
        small.0 as f64 / 1048576.0,
        large.1 / small.1,
        large.0 as f64 / small.0 as f64
    );

    // One long answer of short marked sentences, 1 and 4 MiB.
    let mut times = Vec::new();
    for mib in [1usize, 4] {
        let n = (mib << 20) / 22;
        let answer = "Claims stay open [1]. ".repeat(n);
        let log = tmp.path().join("long.jsonl");
        std::fs::write(
            &log,
            format!(r#"{{"id": "long", "groups": ["staff"], "answer": {}, "citations": [{{"ref": "1", "doc": "doc-00.md"}}]}}"#, q(&answer)) + "\n",
        )
        .expect("long answer");
        let m = run(&store, &log, &json, "");
        println!("one answer of {mib} MiB ({n} sentences): {:.2} s", m.seconds);
        times.push(m.seconds);
    }
    println!("4 MiB / 1 MiB time: {:.1}x (4 is linear)", times[1] / times[0]);
}
