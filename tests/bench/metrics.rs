//! Benchmark of the metric set `plumbline score --stem` computes for one pair: tokens
//! (NFKC, case-folded Unicode words), Snowball stems, ROUGE-1, ROUGE-2 and ROUGE-L on the
//! stems, and sentence BLEU with the 13a tokenisation. Run with
//!
//! ```sh
//! cargo bench --bench metrics
//! ```
//!
//! The corpus is synthetic and seeded (see tests/bench/README.md): 20,000 pairs of a
//! candidate of about 25 words and a reference passage of about 300 words, English-like
//! text with punctuation, figures and mixed case. On the same pairs and in the same run it
//! measures two baselines:
//!
//! * a plain Rust pass that lower-cases, splits on non-alphanumerics and hashes word
//!   bigrams (about the least any lexical metric must do with the text);
//! * the reference libraries, when a Python with them is at hand: `rouge-score` (ROUGE-1/2/L
//!   with its stemmer) and `sacrebleu`'s `sentence_bleu`, timed (best of three) by
//!   tests/bench/metrics_baseline.py on the first 2,000 pairs. The Python is
//!   `PLUMBLINE_BENCH_PYTHON` if set (`skip` skips this baseline), else a virtualenv the
//!   bench keeps in `target/bench-python` (made on first use, with the versions pinned in
//!   tests/oracle/oracle_lib.py), else the baseline is skipped with a notice.
//!
//! `PLUMBLINE_BENCH_PROFILE=N` runs only plumbline's pass, N times (5 if N is not a
//! number), for a profiler;
//! `PLUMBLINE_BENCH_PAIRS=N` makes N pairs instead of 20,000 (at least 2,000).

use std::hash::{BuildHasher, Hasher};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::Instant;

use plumbline::metrics::bleu::{Bleu, sentence_bleu};
use plumbline::metrics::pair::{PairMetrics, PairScorer, RougeTokens};
use plumbline::metrics::rouge::{rouge_l, rouge_n};
use plumbline::text::stem::stem_if_long;
use plumbline::text::tokens::unicode_words;

const PAIRS: usize = 20_000;
const PYTHON_PAIRS: usize = 2_000;
const SEED: u64 = 0x5EED_3E7B;
const RUNS: usize = 3;

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
    /// True with probability 1/n.
    fn one_in(&mut self, n: usize) -> bool {
        self.below(n) == 0
    }
    fn pick<'a, T>(&mut self, items: &'a [T]) -> &'a T {
        &items[self.below(items.len())]
    }
}

/// English function words: the glue of any English text, and what makes ROUGE-2 and BLEU
/// match by chance.
const FUNCTION_WORDS: &[&str] = &[
    "the", "the", "the", "a", "an", "of", "of", "to", "to", "in", "in", "on", "at", "by", "for",
    "with", "from", "and", "and", "or", "but", "not", "is", "are", "was", "were", "be", "been",
    "has", "have", "had", "it", "this", "that", "these", "those", "which", "who", "when", "where",
    "how", "all", "any", "each", "some", "no", "more", "most", "less", "than", "then", "so", "as",
    "if", "because", "while", "after", "before", "under", "over", "between", "into", "out", "up",
    "very", "also", "only", "can", "may", "must", "will", "would", "should", "could", "do", "does",
    "did", "its", "their", "our", "your", "they", "we", "you", "he", "she", "there", "here",
    "such", "other", "about", "per", "within", "without", "until",
];

/// Suffixes of English inflection and derivation, so that the stemmer has real work: a
/// stem appears as several word forms.
const SUFFIXES: &[&str] = &[
    "", "", "", "", "", "", "", "", "s", "s", "s", "ed", "ed", "ing", "er", "ly", "ation", "ment",
    "ness", "ity", "ive", "al", "able", "ies", "ize",
];

/// Invented content words: pronounceable stems of two or three syllables, each with a few
/// suffixed forms. Zipf-distributed when drawn.
fn vocabulary(rng: &mut Rng, stems: usize) -> Vec<String> {
    let onsets = [
        "b", "br", "c", "ch", "cl", "d", "dr", "f", "fl", "g", "gr", "h", "j", "k", "l", "m", "n",
        "p", "pl", "pr", "qu", "r", "s", "sh", "sl", "st", "t", "th", "tr", "v", "w", "z", "",
    ];
    let vowels = ["a", "e", "i", "o", "u", "a", "e", "i", "o", "ai", "ea", "ee", "ou", "y"];
    let codas = ["", "", "", "n", "r", "l", "s", "t", "nd", "rt", "st", "m", "ck", "ng", "x"];
    let mut out = Vec::with_capacity(stems * 3);
    for _ in 0..stems {
        // Mostly two syllables, as English content words are about 6-7 letters long.
        let syllables = match rng.below(20) {
            0..=6 => 1,
            7..=17 => 2,
            _ => 3,
        };
        let stem: String = (0..syllables)
            .map(|_| format!("{}{}{}", rng.pick(&onsets), rng.pick(&vowels), rng.pick(&codas)))
            .collect();
        for _ in 0..1 + rng.below(3) {
            out.push(format!("{stem}{}", rng.pick(SUFFIXES)));
        }
    }
    out
}

/// A Zipf-like pick: index ~ 1/rank.
fn zipf(rng: &mut Rng, n: usize) -> usize {
    let u = (rng.next() >> 11) as f64 / (1u64 << 53) as f64;
    ((n as f64).powf(u) as usize).saturating_sub(1).min(n - 1)
}

/// A figure as it appears in business text.
fn figure(rng: &mut Rng) -> String {
    match rng.below(8) {
        0 => format!("{}", 1 + rng.below(500)),
        1 => format!("{}.{:02}", rng.below(100), rng.below(100)),
        2 => format!("{}%", 1 + rng.below(99)),
        3 => format!("${},{:03}", 1 + rng.below(99), rng.below(1000)),
        4 => format!("2026-{:02}-{:02}", 1 + rng.below(12), 1 + rng.below(28)),
        5 => format!("{:02}:{:02}", rng.below(24), rng.below(60)),
        6 => format!("{}-{}", 1 + rng.below(10), 11 + rng.below(20)),
        _ => format!("{}", 1990 + rng.below(40)),
    }
}

/// One English-like sentence: function and content words, capitals, figures, commas,
/// brackets, quotes, hyphens, apostrophes; `typographic` ones use curly apostrophes and
/// dashes and the odd accented word, as text pasted from a word processor does.
fn sentence(rng: &mut Rng, vocab: &[String], typographic: bool) -> Vec<String> {
    let len = 8 + rng.below(21);
    let mut words: Vec<String> = Vec::with_capacity(len + 2);
    for _ in 0..len {
        let mut w = if rng.below(100) < 45 {
            (*rng.pick(FUNCTION_WORDS)).to_owned()
        } else {
            vocab[zipf(rng, vocab.len())].clone()
        };
        if rng.one_in(14) {
            capitalise(&mut w);
        } else if rng.one_in(80) {
            w.make_ascii_uppercase();
        }
        if rng.one_in(30) {
            w = format!("{w}-{}", vocab[zipf(rng, vocab.len())]);
        }
        if rng.one_in(40) {
            w.push_str(if typographic { "\u{2019}s" } else { "'s" });
        }
        words.push(w);
    }
    if rng.one_in(3) {
        let i = rng.below(words.len());
        words[i] = figure(rng);
    }
    if typographic && rng.one_in(4) {
        let i = 1 + rng.below(words.len() - 1);
        words.insert(i, "\u{2014}".to_owned());
    }
    if typographic && rng.one_in(6) {
        let i = rng.below(words.len());
        words[i] = (*rng.pick(&["café", "naïve", "résumé", "façade", "déjà"])).to_owned();
    }
    for w in words.iter_mut().take(len - 1) {
        if rng.one_in(9) {
            w.push(*rng.pick(&[',', ',', ',', ';', ':']));
        }
    }
    if rng.one_in(10) && words.len() > 4 {
        let i = rng.below(words.len() - 3);
        words[i].insert(0, '(');
        words[i + 2].push(')');
    }
    if rng.one_in(15) && words.len() > 4 {
        let (open, close) = if typographic { ('\u{201C}', '\u{201D}') } else { ('"', '"') };
        let i = rng.below(words.len() - 3);
        words[i].insert(0, open);
        words[i + 1 + rng.below(2)].push(close);
    }
    capitalise(&mut words[0]);
    let end = match rng.below(100) {
        0..=86 => ".",
        87..=94 => "?",
        95..=97 => "!",
        _ => "...",
    };
    if let Some(last) = words.last_mut() {
        last.push_str(end);
    }
    words
}

fn capitalise(w: &mut str) {
    if let Some(first) = w.get_mut(0..1) {
        first.make_ascii_uppercase();
    }
}

struct Pair {
    candidate: String,
    reference: String,
}

/// The pairs: a reference of sentences up to about 300 words, and a candidate of about
/// 25 words that copies a stretch of it with edits (half the pairs), draws its words from
/// it in order (a quarter), or is written independently (a quarter).
fn corpus(rng: &mut Rng, n: usize) -> Vec<Pair> {
    let vocab = vocabulary(rng, 4_000);
    (0..n)
        .map(|_| {
            let typographic = rng.one_in(10);
            let target = 264 + rng.below(31);
            let mut words: Vec<String> = Vec::with_capacity(target + 30);
            while words.len() < target {
                words.extend(sentence(rng, &vocab, typographic));
            }
            let want = 20 + rng.below(11);
            let mut cand: Vec<String> = match rng.below(4) {
                0 | 1 => {
                    let start = rng.below(words.len() - want);
                    let mut c = Vec::with_capacity(want + 4);
                    for w in &words[start..start + want] {
                        match rng.below(20) {
                            0 => {}
                            1 | 2 => c.push(vocab[zipf(rng, vocab.len())].clone()),
                            3 => {
                                c.push(w.clone());
                                c.push((*rng.pick(FUNCTION_WORDS)).to_owned());
                            }
                            _ => c.push(w.clone()),
                        }
                    }
                    c
                }
                2 => {
                    let mut picks: Vec<usize> = (0..want).map(|_| rng.below(words.len())).collect();
                    picks.sort_unstable();
                    picks.iter().map(|&i| words[i].clone()).collect()
                }
                _ => {
                    let mut c = Vec::new();
                    while c.len() < want {
                        c.extend(sentence(rng, &vocab, typographic));
                    }
                    c.truncate(want);
                    c
                }
            };
            capitalise(&mut cand[0]);
            let mut candidate = cand.join(" ");
            let trimmed = candidate.trim_end_matches(['.', ',', ';', ':', '?', '!']).len();
            candidate.truncate(trimmed);
            candidate.push('.');
            Pair { candidate, reference: words.join(" ") }
        })
        .collect()
}

/// What one pair yields, summed over the corpus so that nothing is optimised away and
/// the figures can be sanity-checked.
#[derive(Default, Clone, Copy, PartialEq, Debug)]
struct Sums {
    rouge1: f64,
    rouge2: f64,
    rouge_l: f64,
    bleu: f64,
    bleu_p1: f64,
}

impl Sums {
    fn add(&mut self, r1: f64, r2: f64, rl: f64, bleu: &Bleu) {
        self.rouge1 += r1;
        self.rouge2 += r2;
        self.rouge_l += rl;
        self.bleu += bleu.score;
        self.bleu_p1 += bleu.precisions[0];
    }
}

/// The metric set through the library's public API, as `plumbline score --stem` runs it:
/// one [`PairScorer`] for all pairs, made afresh for every timed run so that each run
/// starts with an empty word cache.
fn plumbline_pass(pairs: &[Pair]) -> Sums {
    let mut scorer = PairScorer::new(RougeTokens::Unicode, true);
    let mut sums = Sums::default();
    for p in pairs {
        let m = scorer.score(&p.candidate, &p.reference);
        sums.add(m.rouge1.f, m.rouge2.f, m.rouge_l.f, &m.bleu);
    }
    sums
}

/// The same metrics composed from the separate functions (words, stems, `rouge_n`,
/// `rouge_l`, `sentence_bleu`), untimed: the bench refuses to report a speed for results
/// that differ from them.
fn assert_same_as_composed(pairs: &[Pair]) {
    let mut scorer = PairScorer::new(RougeTokens::Unicode, true);
    for p in pairs {
        let tok =
            |s: &str| -> Vec<String> { unicode_words(s).iter().map(|w| stem_if_long(w)).collect() };
        let (c, r) = (tok(&p.candidate), tok(&p.reference));
        let want = PairMetrics {
            rouge1: rouge_n(&c, &r, 1),
            rouge2: rouge_n(&c, &r, 2),
            rouge_l: rouge_l(&c, &r),
            bleu: sentence_bleu(&p.candidate, &[&p.reference]),
        };
        assert_eq!(
            scorer.score(&p.candidate, &p.reference),
            want,
            "{} / {}",
            p.candidate,
            p.reference
        );
    }
}

/// The baseline: lower-case, split on anything not alphanumeric (ASCII letters and
/// digits, and every non-ASCII byte, so that UTF-8 words stay whole), hash each word and
/// each bigram of words, and count the reference bigrams found among the candidate's.
/// No normalisation, stemming, n-gram clipping, LCS or second tokenisation.
fn plain_pass(pairs: &[Pair]) -> usize {
    let build = std::hash::BuildHasherDefault::<Fnv>::default();
    let mut cand_bigrams: Vec<u64> = Vec::new();
    let mut matches = 0usize;
    for p in pairs {
        cand_bigrams.clear();
        let mut prev = None;
        word_hashes(p.candidate.as_bytes(), &build, |h| {
            if let Some(q) = prev {
                cand_bigrams.push(bigram(q, h));
            }
            prev = Some(h);
        });
        cand_bigrams.sort_unstable();
        let mut prev = None;
        word_hashes(p.reference.as_bytes(), &build, |h| {
            if let Some(q) = prev {
                matches += usize::from(cand_bigrams.binary_search(&bigram(q, h)).is_ok());
            }
            prev = Some(h);
        });
    }
    matches
}

fn bigram(a: u64, b: u64) -> u64 {
    a.rotate_left(17) ^ b.wrapping_mul(0x9E37_79B9_7F4A_7C15)
}

/// Calls `f` with the hash of every lower-cased word of `text`.
fn word_hashes(text: &[u8], build: &impl BuildHasher<Hasher = Fnv>, mut f: impl FnMut(u64)) {
    let mut h: Option<Fnv> = None;
    for &b in text {
        if b.is_ascii_alphanumeric() || b >= 0x80 {
            h.get_or_insert_with(|| build.build_hasher()).write_u8(b.to_ascii_lowercase());
        } else if let Some(done) = h.take() {
            f(done.finish());
        }
    }
    if let Some(done) = h {
        f(done.finish());
    }
}

/// FNV-1a, 64-bit.
struct Fnv(u64);
impl Default for Fnv {
    fn default() -> Self {
        Fnv(0xcbf2_9ce4_8422_2325)
    }
}
impl Hasher for Fnv {
    fn finish(&self) -> u64 {
        self.0
    }
    fn write(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.0 = (self.0 ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3);
        }
    }
}

/// Time this thread has spent running on a processor, in seconds: the first field of
/// /proc/thread-self/schedstat (nanoseconds). `None` where the kernel does not give it.
fn thread_cpu_seconds() -> Option<f64> {
    let s = std::fs::read_to_string("/proc/thread-self/schedstat").ok()?;
    Some(s.split_whitespace().next()?.parse::<f64>().ok()? / 1e9)
}

/// The best (least) of `RUNS` timings: wall-clock, and time on a processor. The machine
/// is shared, so the two can differ by the time the thread waited for a processor; the
/// second is what the code itself costs.
#[derive(Clone, Copy)]
struct Timing {
    wall: f64,
    cpu: Option<f64>,
}

impl Timing {
    fn rates(&self, pairs: f64, mb: f64) -> String {
        let mut s = format!(
            "{:.3}s wall ({:.0} pairs/s, {:.1} MB/s)",
            self.wall,
            pairs / self.wall,
            mb / self.wall
        );
        if let Some(cpu) = self.cpu {
            s += &format!("; {cpu:.3}s on CPU ({:.0} pairs/s, {:.1} MB/s)", pairs / cpu, mb / cpu);
        }
        s
    }
}

/// Best of `RUNS` timings of `f`, with its last result.
fn best_of<T>(mut f: impl FnMut() -> T) -> (Timing, T) {
    let mut best = Timing { wall: f64::INFINITY, cpu: None };
    let mut last = None;
    for _ in 0..RUNS {
        let cpu = thread_cpu_seconds();
        let t = Instant::now();
        let r = std::hint::black_box(f());
        best.wall = best.wall.min(t.elapsed().as_secs_f64());
        if let (Some(before), Some(after)) = (cpu, thread_cpu_seconds()) {
            best.cpu = Some(best.cpu.map_or(after - before, |c: f64| c.min(after - before)));
        }
        last = Some(r);
    }
    (best, last.expect("RUNS > 0"))
}

/// What the Python baseline measured.
struct PythonFigures {
    python: String,
    rouge_version: String,
    rouge: Timing,
    bleu_version: String,
    bleu: Timing,
    pairs: usize,
    runs: usize,
}

fn target_dir() -> PathBuf {
    std::env::var_os("CARGO_TARGET_DIR")
        .map(PathBuf::from)
        .unwrap_or_else(|| Path::new(env!("CARGO_MANIFEST_DIR")).join("target"))
}

/// True when `python` runs and imports both reference libraries.
fn has_references(python: &Path) -> bool {
    Command::new(python)
        .args(["-c", "import rouge_score, sacrebleu"])
        .output()
        .is_ok_and(|o| o.status.success())
}

/// Finds (or makes) a Python that has the reference libraries; `Err` says why not.
fn reference_python() -> Result<PathBuf, String> {
    if let Some(p) = std::env::var_os("PLUMBLINE_BENCH_PYTHON") {
        if p == "skip" {
            return Err("PLUMBLINE_BENCH_PYTHON=skip".into());
        }
        let p = PathBuf::from(p);
        return if has_references(&p) {
            Ok(p)
        } else {
            Err(format!(
                "PLUMBLINE_BENCH_PYTHON={} cannot import rouge_score and sacrebleu",
                p.display()
            ))
        };
    }
    let venv = target_dir().join("bench-python");
    let python = venv.join("bin").join("python");
    if has_references(&python) {
        return Ok(python);
    }
    // Make the virtualenv, as tests/oracle/run.sh does, with the pinned versions.
    let oracle = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests").join("oracle");
    println!("reference libraries: making a virtualenv in {} (once)", venv.display());
    let run = |cmd: &mut Command| -> Result<String, String> {
        let out = cmd.output().map_err(|e| format!("{cmd:?}: {e}"))?;
        if out.status.success() {
            Ok(String::from_utf8_lossy(&out.stdout).trim().to_owned())
        } else {
            let err = String::from_utf8_lossy(&out.stderr);
            Err(format!("{cmd:?} failed: {}", err.lines().last().unwrap_or("").trim()))
        }
    };
    run(Command::new("python3").args(["-m", "venv"]).arg(&venv))?;
    let pins = run(Command::new(&python).arg("-c").arg(format!(
        "import sys; sys.path.insert(0, {:?}); import oracle_lib as o; \
         print(' '.join(f'{{k}}=={{v}}' for k, v in o.PINS.items() if k in ('rouge-score', 'sacrebleu')))",
        oracle.display().to_string()
    )))?;
    let mut pip = Command::new(&python);
    pip.args(["-m", "pip", "install", "--quiet", "--disable-pip-version-check"]);
    pip.args(["--timeout", "30", "--retries", "2"]).args(pins.split_whitespace());
    run(&mut pip)?;
    if has_references(&python) {
        Ok(python)
    } else {
        Err(format!("{} still cannot import the references", python.display()))
    }
}

/// Runs tests/bench/metrics_baseline.py on the first `PYTHON_PAIRS` pairs.
fn python_baseline(pairs: &[Pair]) -> Result<PythonFigures, String> {
    let python = reference_python()?;
    let dir = tempfile::tempdir().map_err(|e| e.to_string())?;
    let input = dir.path().join("pairs.jsonl");
    let mut f = std::io::BufWriter::new(std::fs::File::create(&input).map_err(|e| e.to_string())?);
    for (i, p) in pairs.iter().take(PYTHON_PAIRS).enumerate() {
        let line = serde_json::json!({"id": i, "candidate": p.candidate, "reference": p.reference});
        writeln!(f, "{line}").map_err(|e| e.to_string())?;
    }
    f.flush().map_err(|e| e.to_string())?;
    drop(f);
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/bench/metrics_baseline.py");
    let out = Command::new(&python)
        .arg(&script)
        .arg(&input)
        .output()
        .map_err(|e| format!("{}: {e}", python.display()))?;
    if !out.status.success() {
        return Err(format!(
            "{} exited {}: {}",
            script.display(),
            out.status,
            String::from_utf8_lossy(&out.stderr).trim()
        ));
    }
    let v: serde_json::Value = serde_json::from_slice(&out.stdout)
        .map_err(|e| format!("{} printed no JSON ({e})", script.display()))?;
    let num = |k: &str, f: &str| v[k][f].as_f64().ok_or(format!("no {k}.{f} in {v}"));
    let text = |k: &str, f: &str| v[k][f].as_str().unwrap_or("?").to_owned();
    let timing = |k: &str| -> Result<Timing, String> {
        Ok(Timing { wall: num(k, "seconds")?, cpu: num(k, "cpu_seconds").ok() })
    };
    let n = num("rouge_score", "pairs")? as usize;
    if num("sacrebleu", "pairs")? as usize != n {
        return Err(format!("{} timed the two libraries on different pairs", script.display()));
    }
    Ok(PythonFigures {
        python: v["python"].as_str().unwrap_or("?").to_owned(),
        rouge_version: text("rouge_score", "version"),
        rouge: timing("rouge_score")?,
        bleu_version: text("sacrebleu", "version"),
        bleu: timing("sacrebleu")?,
        pairs: n,
        runs: v["runs"].as_u64().unwrap_or(1) as usize,
    })
}

fn main() {
    if std::env::args().any(|a| a == "--test" || a == "--list") {
        return; // `cargo test --benches` builds and lists benches; nothing to time there.
    }
    println!("machine: {} cores", std::thread::available_parallelism().map_or(1, |n| n.get()));
    let t = Instant::now();
    let count = std::env::var("PLUMBLINE_BENCH_PAIRS").ok().and_then(|v| v.parse().ok());
    let pairs = corpus(&mut Rng(SEED), count.unwrap_or(PAIRS).max(PYTHON_PAIRS));
    if let Ok(passes) = std::env::var("PLUMBLINE_BENCH_PROFILE") {
        // For a profiler: only plumbline's pass, five times over (or as many as given).
        for _ in 0..passes.parse().unwrap_or(5) {
            std::hint::black_box(plumbline_pass(&pairs));
        }
        return;
    }
    let bytes: usize = pairs.iter().map(|p| p.candidate.len() + p.reference.len()).sum();
    let mb = bytes as f64 / 1e6;
    let words = |f: fn(&Pair) -> &str| {
        pairs.iter().map(|p| unicode_words(f(p)).len()).sum::<usize>() as f64 / pairs.len() as f64
    };
    let non_ascii = pairs.iter().filter(|p| !(p.candidate.is_ascii() && p.reference.is_ascii()));
    println!(
        "corpus: {} pairs (seed {SEED:#x}, made in {:.1}s), {mb:.1} MB of pair text; candidate {:.1} words, reference {:.1} words on average; {:.1}% of pairs with non-ASCII typography",
        pairs.len(),
        t.elapsed().as_secs_f64(),
        words(|p| &p.candidate),
        words(|p| &p.reference),
        100.0 * non_ascii.count() as f64 / pairs.len() as f64
    );

    assert_same_as_composed(&pairs[..PYTHON_PAIRS]);
    let n = pairs.len() as f64;
    let (ours, sums) = best_of(|| plumbline_pass(&pairs));
    println!(
        "plumbline, words + Snowball stems + ROUGE-1/2/L + sentence BLEU (13a), 1 thread, best of {RUNS}: {}",
        ours.rates(n, mb)
    );
    println!(
        "  (mean F: ROUGE-1 {:.3}, ROUGE-2 {:.3}, ROUGE-L {:.3}; mean BLEU {:.4}, low because the brevity penalty of a 25-word candidate against a 300-word reference is about e^-11; mean 1-gram precision {:.1})",
        sums.rouge1 / n,
        sums.rouge2 / n,
        sums.rouge_l / n,
        sums.bleu / n,
        sums.bleu_p1 / n
    );
    let (plain, matched) = best_of(|| plain_pass(&pairs));
    println!(
        "plain pass, lower-case + split on non-alphanumerics + hashed word bigrams, 1 thread, best of {RUNS}: {} ({matched} bigram matches)",
        plain.rates(n, mb)
    );

    let python = python_baseline(&pairs);
    match &python {
        Ok(p) => {
            let sub = p.pairs as f64;
            let sub_mb = pairs[..p.pairs]
                .iter()
                .map(|p| p.candidate.len() + p.reference.len())
                .sum::<usize>() as f64
                / 1e6;
            println!(
                "rouge-score {} (rouge1, rouge2, rougeL, use_stemmer=True), Python {}, first {} pairs, best of {}: {}",
                p.rouge_version,
                p.python,
                p.pairs,
                p.runs,
                p.rouge.rates(sub, sub_mb)
            );
            println!(
                "sacrebleu {} sentence_bleu (defaults), first {} pairs, best of {}: {}",
                p.bleu_version,
                p.pairs,
                p.runs,
                p.bleu.rates(sub, sub_mb)
            );
        }
        Err(why) => println!("reference libraries: baseline skipped ({why})"),
    }

    // Ratios of rates: wall-clock to wall-clock, and time on CPU to time on CPU.
    let ratio = |a: Timing, na: f64, b: Timing, nb: f64| {
        let wall = (na / a.wall) / (nb / b.wall);
        match (a.cpu, b.cpu) {
            (Some(ac), Some(bc)) => {
                format!("{wall:.3} wall-clock, {:.3} on CPU", (na / ac) / (nb / bc))
            }
            _ => format!("{wall:.3} wall-clock"),
        }
    };
    println!("ratios:");
    if let Ok(p) = &python {
        let sub = p.pairs as f64;
        println!(
            "  plumbline pairs/s / rouge-score pairs/s = {} (target >= 200; rouge-score timed on the first {} pairs, rates compared)",
            ratio(ours, n, p.rouge, sub),
            p.pairs
        );
        println!("  plumbline pairs/s / sacrebleu pairs/s   = {}", ratio(ours, n, p.bleu, sub));
    }
    println!("  plumbline MB/s / plain pass MB/s       = {}", ratio(ours, n, plain, n));
    println!(
        "  plumbline MB/s through the whole metric set: {:.1} wall-clock{} (target >= 100)",
        mb / ours.wall,
        ours.cpu.map_or(String::new(), |c| format!(", {:.1} on CPU", mb / c))
    );
}
