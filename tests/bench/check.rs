//! Benchmark of the main job: store load + index, and answers checked per second on one
//! and two threads, with peak memory. Run with
//!
//! ```sh
//! cargo bench --bench check                      # 1,000 documents, 10,000 answers
//! PLUMBLINE_BENCH_SCALE=full cargo bench --bench check   # also 20,000 documents, 100,000 answers
//! PLUMBLINE_BENCH_ANSWERS=1000 cargo bench --bench check # a shorter log, e.g. under a profiler
//! ```
//!
//! The corpus is synthetic and seeded (see tests/bench/README.md): documents of 300–3,000
//! words drawn from an invented Zipf-distributed vocabulary with figures, and answers of
//! 3–6 sentences with 1–4 citations each, about a third of the sentences not supported
//! by what they cite (altered words or figures, or copied from another document), so the
//! store search runs. Three citations in four carry `start`/`end` offsets of an
//! eight-sentence passage, as retrieval chunks do; the rest cite whole documents.

use std::io::Write;
use std::path::Path;
use std::time::Instant;

use plumbline::answers::{AnswerReader, ReaderLimits};
use plumbline::check::{Context, check_answer};
use plumbline::config::Config;
use plumbline::findings::CitationStatus;
use plumbline::store::index::Index;
use plumbline::store::{Store, StoreLimits};

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

fn vocabulary(rng: &mut Rng, n: usize) -> Vec<String> {
    let syll = [
        "ka", "lo", "mer", "tin", "sa", "vo", "rel", "dun", "pe", "ar", "ist", "on", "ble", "gra",
        "ch", "es",
    ];
    (0..n)
        .map(|_| {
            let k = 1 + rng.below(3);
            (0..k).map(|_| syll[rng.below(syll.len())]).collect::<String>()
        })
        .collect()
}

/// A Zipf-like pick: index ~ 1/rank.
fn zipf(rng: &mut Rng, n: usize) -> usize {
    let u = (rng.next() >> 11) as f64 / (1u64 << 53) as f64;
    ((n as f64).powf(u) as usize).saturating_sub(1).min(n - 1)
}

fn sentence(rng: &mut Rng, vocab: &[String]) -> String {
    let len = 8 + rng.below(18);
    let mut words: Vec<String> = (0..len).map(|_| vocab[zipf(rng, vocab.len())].clone()).collect();
    if rng.below(3) == 0 {
        let i = rng.below(words.len());
        words[i] = format!("{}", 1 + rng.below(500));
    }
    let mut s = words.join(" ");
    if let Some(f) = s.get_mut(0..1) {
        f.make_ascii_uppercase();
    }
    s.push('.');
    s
}

fn write_store(dir: &Path, docs: usize, rng: &mut Rng, vocab: &[String]) -> Vec<Vec<String>> {
    let mut all = Vec::with_capacity(docs);
    for d in 0..docs {
        let words_target = 300 + rng.below(2_700);
        let mut sents = Vec::new();
        let mut words = 0;
        while words < words_target {
            let s = sentence(rng, vocab);
            words += s.split(' ').count();
            sents.push(s);
        }
        let sub = dir.join(format!("d{:03}", d % 100));
        std::fs::create_dir_all(&sub).expect("dir");
        let ext = if d % 5 == 0 { "md" } else { "txt" };
        std::fs::write(sub.join(format!("doc{d}.{ext}")), sents.join(" ") + "\n").expect("write");
        all.push(sents);
    }
    all
}

fn doc_id(d: usize) -> String {
    let ext = if d % 5 == 0 { "md" } else { "txt" };
    format!("d{:03}/doc{d}.{ext}", d % 100)
}

/// A citation of the synthetic log: a document, and for three in four of them a passage
/// of eight consecutive sentences (`start`/`end` byte offsets, as a retrieval chunk
/// would be); the rest cite the whole document.
struct Cite {
    doc: usize,
    sentences: std::ops::Range<usize>,
    bytes: Option<(usize, usize)>,
}

fn cite(rng: &mut Rng, docs: &[Vec<String>]) -> Cite {
    let doc = rng.below(docs.len());
    let n = docs[doc].len();
    if rng.below(4) == 0 || n <= 8 {
        return Cite { doc, sentences: 0..n, bytes: None };
    }
    let lo = rng.below(n - 8);
    // The file is the sentences joined by single spaces.
    let offset = |k: usize| docs[doc][..k].iter().map(|s| s.len() + 1).sum::<usize>();
    let (start, end) = (offset(lo), offset(lo + 8) - 1);
    Cite { doc, sentences: lo..lo + 8, bytes: Some((start, end)) }
}

fn write_answers(path: &Path, n: usize, rng: &mut Rng, docs: &[Vec<String>], vocab: &[String]) {
    let mut f = std::io::BufWriter::new(std::fs::File::create(path).expect("answers"));
    for a in 0..n {
        let ncit = 1 + rng.below(4);
        let cited: Vec<Cite> = (0..ncit).map(|_| cite(rng, docs)).collect();
        let nsent = 3 + rng.below(4);
        let mut parts = Vec::new();
        for _ in 0..nsent {
            let c = rng.below(ncit);
            let Cite { doc, sentences, .. } = &cited[c];
            let mut s = docs[*doc][sentences.start + rng.below(sentences.len())].clone();
            match rng.below(6) {
                0 => s = sentence(rng, vocab),                   // fabricated
                1 => s = docs[rng.below(docs.len())][0].clone(), // from another document
                _ => {}
            }
            let s = s.trim_end_matches('.').to_owned();
            parts.push(format!("{s} [{}].", c + 1));
        }
        let citations: Vec<serde_json::Value> = cited
            .iter()
            .enumerate()
            .map(|(i, c)| match c.bytes {
                Some((start, end)) => serde_json::json!({
                    "ref": (i + 1).to_string(), "doc": doc_id(c.doc), "start": start, "end": end
                }),
                None => serde_json::json!({"ref": (i + 1).to_string(), "doc": doc_id(c.doc)}),
            })
            .collect();
        let line = serde_json::json!({"id": format!("a-{a}"), "groups": ["all"], "answer": parts.join(" "), "citations": citations});
        writeln!(f, "{line}").expect("write");
    }
}

/// CPU seconds this process has used (user + system, all threads), from /proc: with
/// other work on the machine, wall-clock rates understate the code's speed, and answers
/// per CPU-second do not.
fn cpu_seconds() -> f64 {
    let Ok(stat) = std::fs::read_to_string("/proc/self/stat") else { return 0.0 };
    // Fields after the command name (which is in parentheses and may hold spaces).
    let rest = stat.rsplit_once(')').map_or("", |(_, r)| r);
    let f: Vec<&str> = rest.split_whitespace().collect();
    let ticks = |i: usize| f.get(i).and_then(|v| v.parse::<f64>().ok()).unwrap_or(0.0);
    // utime and stime are fields 14 and 15 of stat(5); here 11 and 12 after the name.
    (ticks(11) + ticks(12)) / 100.0
}

fn peak_rss_mib() -> f64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with("VmHWM:"))
                .and_then(|l| l.split_whitespace().nth(1)?.parse::<f64>().ok())
        })
        .map_or(0.0, |kb| kb / 1024.0)
}

fn run_scale(docs: usize, answers: usize) {
    let dir = tempfile::tempdir().expect("temp");
    let store_dir = dir.path().join("store");
    std::fs::create_dir_all(&store_dir).expect("store");
    let mut rng = Rng(0x5EED_0000 + docs as u64);
    let vocab = vocabulary(&mut rng, 20_000);
    let doc_sents = write_store(&store_dir, docs, &mut rng, &vocab);
    let answers_path = dir.path().join("answers.jsonl");
    write_answers(&answers_path, answers, &mut rng, &doc_sents, &vocab);
    drop(doc_sents);

    let config = Config::default();
    let t = Instant::now();
    let store = Store::load(&store_dir, &StoreLimits::default()).expect("load");
    let t_load = t.elapsed().as_secs_f64();
    let texts: Vec<&str> = store.documents.iter().map(|d| d.visible_text()).collect();
    let raw_bytes: usize = store.documents.iter().map(|d| d.raw().len()).sum();
    let t = Instant::now();
    let cpu0 = cpu_seconds();
    let index = Index::build(&texts);
    let t_index = t.elapsed().as_secs_f64();
    let cpu_index = cpu_seconds() - cpu0;
    let mb = raw_bytes as f64 / 1e6;
    println!(
        "store {docs} docs, {mb:.1} MB: load {:.2}s ({:.0} MB/s), index {:.2}s ({:.0} MB/s), load+index {:.0} MB/s, {} sentences",
        t_load,
        mb / t_load,
        t_index,
        mb / t_index,
        mb / (t_load + t_index),
        index.sentence_count()
    );
    println!("index: {cpu_index:.2} CPU-s, {:.0} MB per CPU-second", mb / cpu_index.max(1e-9));
    let reader = AnswerReader::with_limits(
        std::io::BufReader::new(std::fs::File::open(&answers_path).expect("open")),
        ReaderLimits::default(),
    );
    let list: Vec<_> = reader.filter_map(Result::ok).collect();
    let ctx = Context {
        store: &store,
        index: &index,
        config: &config,
        principals: None,
        decisions: &[],
        redact_restricted: false,
    };
    let mut base = 0.0;
    for threads in [1usize, 2] {
        let pool = rayon::ThreadPoolBuilder::new().num_threads(threads).build().expect("pool");
        let t = Instant::now();
        let cpu0 = cpu_seconds();
        let (sentences, not_supported, broken) = pool.install(|| {
            use rayon::prelude::*;
            list.par_iter()
                .map(|a| {
                    let c = check_answer(&ctx, a);
                    let n = c.findings.sentences.len();
                    let u = c
                        .findings
                        .sentences
                        .iter()
                        .filter(|s| s.verdict != plumbline::findings::Verdict::Supported)
                        .count();
                    let broken = c
                        .findings
                        .citations
                        .iter()
                        .filter(|c| {
                            matches!(c.status, CitationStatus::Dead | CitationStatus::BadLocator)
                        })
                        .count();
                    (n, u, broken)
                })
                .reduce(|| (0, 0, 0), |x, y| (x.0 + y.0, x.1 + y.1, x.2 + y.2))
        });
        // The generator's citations all resolve; a broken one would mean a broken bench.
        assert_eq!(broken, 0, "synthetic citations must resolve");
        let secs = t.elapsed().as_secs_f64();
        let cpu = cpu_seconds() - cpu0;
        let rate = list.len() as f64 / secs;
        if threads == 1 {
            base = rate;
        }
        println!(
            "check {} answers on {threads} thread(s): {secs:.2}s, {rate:.0} answers/s, {:.0} sentences/s ({:.0}% not supported), ×{:.2} vs 1 thread; {cpu:.2} CPU-s, {:.0} answers per CPU-second",
            list.len(),
            sentences as f64 / secs,
            100.0 * not_supported as f64 / sentences.max(1) as f64,
            rate / base,
            list.len() as f64 / cpu.max(1e-9)
        );
    }
    println!(
        "peak RSS so far: {:.0} MiB (store text {:.0} MiB)",
        peak_rss_mib(),
        raw_bytes as f64 / 1048576.0
    );
}

fn main() {
    let full = std::env::var("PLUMBLINE_BENCH_SCALE").is_ok_and(|v| v == "full");
    if std::env::args().any(|a| a == "--test" || a == "--list") {
        return; // `cargo test --benches` builds and lists benches; nothing to time there.
    }
    println!("machine: {} cores", std::thread::available_parallelism().map_or(1, |n| n.get()));
    // PLUMBLINE_BENCH_ANSWERS shortens the first scale's log (for profiling runs).
    let answers = std::env::var("PLUMBLINE_BENCH_ANSWERS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(10_000);
    run_scale(1_000, answers);
    if full {
        run_scale(20_000, 100_000);
    }
}
