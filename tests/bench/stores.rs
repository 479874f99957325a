//! Benchmark of the store forms: one synthetic store of 20,000 documents written as a
//! folder, a chunk export, a SQLite file and (where `PLUMBLINE_PG_URL` names a server, as
//! `tests/stores/pg.sh` starts one) a PostgreSQL table; for each, the time to load it and
//! build its index, and answers checked per second on two threads. Then the saved index:
//! the time to check it against the folder and load it, against reading and indexing the
//! folder again (the target: at least 10 times faster). Run with
//!
//! ```sh
//! cargo bench --bench stores                              # 20,000 documents, 2,000 answers
//! PLUMBLINE_BENCH_DOCS=2000 cargo bench --bench stores    # a smaller store
//! eval "$(bash tests/stores/pg.sh start)"; cargo bench --bench stores   # with PostgreSQL
//! ```
//!
//! The documents are chunk-sized (100–400 words, about 1.6 KB), as the rows of a chunk
//! table are, drawn from an invented Zipf-distributed vocabulary with figures; the answers
//! cite one to three documents with byte offsets, and a third of their sentences are not
//! carried by what they cite, so that the store search runs. The lazy reads of the
//! databases (only the cited rows) are timed too.

use std::io::Write;
use std::path::Path;
use std::time::Instant;

use plumbline::answers::Answer;
use plumbline::answers::AnswerReader;
use plumbline::check::{Context, check_answer};
use plumbline::config::{Config, StoreMode, StoreSettings};
use plumbline::store::index::Index;
use plumbline::store::source::{self, Opened, StoreSpec};
use plumbline::store::{Store, StoreLimits, cache};

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
    let syll =
        ["ka", "lo", "mer", "tin", "sa", "vo", "rel", "dun", "pe", "ar", "ist", "on", "ble", "gra"];
    (0..n).map(|_| (0..1 + rng.below(3)).map(|_| syll[rng.below(syll.len())]).collect()).collect()
}

fn sentence(rng: &mut Rng, vocab: &[String]) -> String {
    let len = 8 + rng.below(14);
    let mut words: Vec<String> = (0..len)
        .map(|_| {
            let u = (rng.next() >> 11) as f64 / (1u64 << 53) as f64;
            let i = ((vocab.len() as f64).powf(u) as usize).saturating_sub(1).min(vocab.len() - 1);
            vocab[i].clone()
        })
        .collect();
    if rng.below(3) == 0 {
        let i = rng.below(words.len());
        words[i] = (1 + rng.below(500)).to_string();
    }
    let mut s = words.join(" ");
    if let Some(f) = s.get_mut(0..1) {
        f.make_ascii_uppercase();
    }
    s.push('.');
    s
}

struct Corpus {
    /// (id, sentences) per document.
    docs: Vec<(String, Vec<String>)>,
}

fn corpus(n: usize, rng: &mut Rng, vocab: &[String]) -> Corpus {
    let docs = (0..n)
        .map(|d| {
            let target = 100 + rng.below(300);
            let (mut words, mut sents) = (0, Vec::new());
            while words < target {
                let s = sentence(rng, vocab);
                words += s.split(' ').count();
                sents.push(s);
            }
            (format!("d{:03}/doc{d}.txt", d % 100), sents)
        })
        .collect();
    Corpus { docs }
}

fn text(sents: &[String]) -> String {
    sents.join(" ") + "\n"
}

fn write_answers(path: &Path, n: usize, rng: &mut Rng, c: &Corpus, vocab: &[String]) {
    let mut f = std::io::BufWriter::new(std::fs::File::create(path).expect("answers"));
    for a in 0..n {
        let ncit = 1 + rng.below(3);
        let cited: Vec<usize> = (0..ncit).map(|_| rng.below(c.docs.len())).collect();
        let mut parts = Vec::new();
        for _ in 0..3 + rng.below(3) {
            let k = rng.below(ncit);
            let sents = &c.docs[cited[k]].1;
            let mut s = sents[rng.below(sents.len())].clone();
            if rng.below(3) == 0 {
                s = sentence(rng, vocab);
            }
            parts.push(format!("{} [{}].", s.trim_end_matches('.'), k + 1));
        }
        let citations: Vec<serde_json::Value> = cited
            .iter()
            .enumerate()
            .map(|(i, &d)| {
                let t = text(&c.docs[d].1);
                serde_json::json!({"ref": (i + 1).to_string(), "doc": c.docs[d].0, "start": 0, "end": t.len() - 1})
            })
            .collect();
        let line = serde_json::json!({"id": format!("a-{a}"), "groups": ["all"], "answer": parts.join(" "), "citations": citations});
        writeln!(f, "{line}").expect("write");
    }
}

fn answers(path: &Path) -> Vec<Answer> {
    AnswerReader::new(std::io::BufReader::new(std::fs::File::open(path).expect("open")))
        .filter_map(Result::ok)
        .collect()
}

/// Answers per second, checking on the current rayon pool.
fn rate(store: &Store, index: &Index, list: &[Answer], config: &Config) -> f64 {
    use rayon::prelude::*;
    let ctx = Context {
        store,
        index,
        config,
        principals: None,
        decisions: &[],
        redact_restricted: false,
    };
    let t = Instant::now();
    let broken: usize = list
        .par_iter()
        .map(|a| {
            check_answer(&ctx, a)
                .findings
                .citations
                .iter()
                .filter(|c| c.status.as_str() == "dead" || c.status.as_str() == "bad_locator")
                .count()
        })
        .sum();
    assert_eq!(broken, 0, "synthetic citations must resolve");
    list.len() as f64 / t.elapsed().as_secs_f64()
}

/// Answers per second of a lazy read: fetch the batch's rows, build their index, check.
fn lazy_rate(
    spec: &StoreSpec,
    list: &[Answer],
    config: &Config,
    limits: &StoreLimits,
) -> (f64, usize) {
    use rayon::prelude::*;
    let t = Instant::now();
    let Opened::Lazy(mut lazy) =
        source::open(spec, &config.store, Some(StoreMode::Lazy), limits, None)
            .expect("open lazily")
    else {
        panic!("not lazy")
    };
    for batch in list.chunks(1024) {
        let (store, index) = lazy.for_answers(batch).expect("fetch");
        let ctx = Context {
            store: &store,
            index: &index,
            config,
            principals: None,
            decisions: &[],
            redact_restricted: false,
        };
        let _: Vec<_> = batch.par_iter().map(|a| check_answer(&ctx, a)).collect();
    }
    (list.len() as f64 / t.elapsed().as_secs_f64(), lazy.fetched_digest().0)
}

fn load(spec: &StoreSpec, settings: &StoreSettings, limits: &StoreLimits) -> (Store, Index, f64) {
    let t = Instant::now();
    let Opened::Whole { store, index, .. } =
        source::open(spec, settings, Some(StoreMode::Full), limits, None).expect("load")
    else {
        panic!("not whole")
    };
    (store, index, t.elapsed().as_secs_f64())
}

fn main() {
    if std::env::args().any(|a| a == "--test" || a == "--list") {
        return; // `cargo test --benches` builds and lists benches; nothing to time there.
    }
    let n: usize =
        std::env::var("PLUMBLINE_BENCH_DOCS").ok().and_then(|v| v.parse().ok()).unwrap_or(20_000);
    let n_answers: usize =
        std::env::var("PLUMBLINE_BENCH_ANSWERS").ok().and_then(|v| v.parse().ok()).unwrap_or(2_000);
    println!("machine: {} cores", std::thread::available_parallelism().map_or(1, |n| n.get()));
    let dir = tempfile::tempdir().expect("temp");
    let mut rng = Rng(0x0057_07E5);
    let vocab = vocabulary(&mut rng, 20_000);
    let c = corpus(n, &mut rng, &vocab);
    let answers_path = dir.path().join("answers.jsonl");
    write_answers(&answers_path, n_answers, &mut rng, &c, &vocab);
    let list = answers(&answers_path);
    let bytes: usize = c.docs.iter().map(|(_, s)| text(s).len()).sum();
    println!("store: {n} documents, {:.1} MB; {} answers", bytes as f64 / 1e6, list.len());

    // The four forms.
    let folder = dir.path().join("store");
    for (id, sents) in &c.docs {
        let p = folder.join(id);
        std::fs::create_dir_all(p.parent().expect("parent")).expect("dir");
        std::fs::write(p, text(sents)).expect("write");
    }
    let chunks = dir.path().join("store.jsonl");
    {
        let mut f = std::io::BufWriter::new(std::fs::File::create(&chunks).expect("chunks"));
        for (id, sents) in &c.docs {
            writeln!(
                f,
                "{}",
                serde_json::json!({"id": id, "text": text(sents), "access": ["all"]})
            )
            .expect("write");
        }
    }
    let db = dir.path().join("store.db");
    {
        let mut conn = rusqlite::Connection::open(&db).expect("sqlite");
        conn.execute_batch(
            "CREATE TABLE chunks (id TEXT PRIMARY KEY, text TEXT NOT NULL, access TEXT)",
        )
        .expect("table");
        let tx = conn.transaction().expect("tx");
        {
            let mut ins = tx.prepare("INSERT INTO chunks VALUES (?1, ?2, 'all')").expect("prepare");
            for (id, sents) in &c.docs {
                ins.execute([id, &text(sents)]).expect("insert");
            }
        }
        tx.commit().expect("commit");
    }
    let mut specs = vec![
        ("folder", StoreSpec::Folder(folder.clone())),
        ("chunk export", StoreSpec::Chunks(chunks)),
        ("SQLite", StoreSpec::Sqlite(db)),
    ];
    match std::env::var("PLUMBLINE_PG_URL") {
        Ok(url) => {
            let cfg = plumbline::store::sql::pg_config(&url).expect("PLUMBLINE_PG_URL");
            let mut client = cfg.connect(postgres::NoTls).expect("connect");
            client
                .batch_execute("DROP TABLE IF EXISTS bench_chunks; CREATE TABLE bench_chunks (id text PRIMARY KEY, text text NOT NULL, access text)")
                .expect("table");
            let mut tx = client.transaction().expect("tx");
            let ins =
                tx.prepare("INSERT INTO bench_chunks VALUES ($1, $2, 'all')").expect("prepare");
            for (id, sents) in &c.docs {
                tx.execute(&ins, &[id, &text(sents)]).expect("insert");
            }
            tx.commit().expect("commit");
            specs.push(("PostgreSQL", StoreSpec::Postgres(url)));
        }
        Err(_) => println!(
            "PostgreSQL: skipped (set PLUMBLINE_PG_URL; tests/stores/pg.sh starts a server)"
        ),
    }
    let limits = StoreLimits::default();
    let mut config = Config::default();
    let pool = rayon::ThreadPoolBuilder::new().num_threads(2).build().expect("pool");
    let mut rebuild = 0.0;
    println!("| form | load + index | answers/s (2 threads) | documents |");
    println!("|---|--:|--:|--:|");
    for (name, spec) in &specs {
        if matches!(spec, StoreSpec::Postgres(_)) {
            config.store.query = Some("SELECT * FROM bench_chunks".into());
        }
        let (store, index, secs) = pool.install(|| load(spec, &config.store, &limits));
        let r = pool.install(|| rate(&store, &index, &list, &config));
        println!("| {name} | {secs:.2} s | {r:.0} | {} |", store.documents.len());
        if *name == "folder" {
            rebuild = secs;
        }
        if matches!(spec, StoreSpec::Sqlite(_) | StoreSpec::Postgres(_)) {
            let (r, fetched) = pool.install(|| lazy_rate(spec, &list, &config, &limits));
            println!(
                "| {name}, lazy (cited rows only, no store search) | – | {r:.0} | {fetched} fetched |"
            );
        }
    }

    // The saved index of the folder, saved as `plumbline index` does. The files are left
    // alone for three seconds first, so that none counts as written around the save
    // (those are read again at every check).
    let spec = StoreSpec::Folder(folder);
    let StoreSpec::Folder(root) = &spec else { unreachable!() };
    let idx = dir.path().join("store.idx");
    let settings = StoreSettings::default();
    std::thread::sleep(std::time::Duration::from_secs(3));
    let saved_at = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map_or(0, |d| d.as_secs() as i64);
    let t = Instant::now();
    let stamps = source::folder_stamps(root).expect("stamps");
    let (store, index, _) = pool.install(|| load(&spec, &settings, &limits));
    let fp = source::stamps_fingerprint(&stamps);
    let (_, size) =
        cache::save(&idx, &store, &index, "store", &fp, &stamps, &limits, ("now", saved_at))
            .expect("save");
    let save_secs = t.elapsed().as_secs_f64();
    drop((store, index));
    let (mut best, mut best_check) = (f64::MAX, f64::MAX);
    for _ in 0..3 {
        let t = Instant::now();
        let changes = source::folder_changes(root, &stamps, saved_at).expect("changes");
        assert!(changes.is_empty(), "{changes:?}");
        best_check = best_check.min(t.elapsed().as_secs_f64());
        let t = Instant::now();
        let Opened::Whole { store, .. } = pool
            .install(|| source::open(&spec, &settings, None, &limits, Some(&idx)))
            .expect("cached")
        else {
            panic!("not whole")
        };
        best = best.min(t.elapsed().as_secs_f64());
        assert_eq!(store.documents.len(), n);
    }
    let ratio = rebuild / best;
    println!(
        "saved index: {:.1} MB, written in {save_secs:.2} s (stamp, read, index, save); `check --index` opens it in {best:.3} s (best of 3; the stamp check of the {n} files alone {best_check:.3} s) against {rebuild:.2} s to read and index the folder: {ratio:.1}x faster ({})",
        size as f64 / 1e6,
        if ratio >= 10.0 { "meets the 10x target" } else { "BELOW the 10x target" }
    );
}
