//! The labelled accuracy benchmark: how often plumbline's verdicts and flags are right on
//! documents nobody here wrote. Run it with
//!
//! ```sh
//! tests/accuracy/run.sh full [--write-readme]   # both splits, the sweep, README's figures
//! tests/accuracy/run.sh ci                      # reduced test split, checked against README
//! ```
//!
//! `run.sh` installs the Debian packages the store is built from and calls this harness
//! (`cargo bench --bench accuracy -- --mode … --store …`). The steps: write the store's
//! manifest and load it with the plumbline library ([`corpus`]); generate labelled
//! answers ([`generate`], with the edits of [`edits`]); run the real `plumbline check`
//! binary on them with `--json`; score the findings against the labels ([`score`]); on a
//! full run, sweep the thresholds and scorer parameters on the tuning split ([`sweep`]);
//! print the table, write the results JSON and the failure examples, and write or check
//! README's block ([`readme`]). See DEVELOPERS.md, "Accuracy benchmark".

mod corpus;
mod edits;
mod generate;
mod readme;
mod rng;
mod score;
mod sweep;

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, ExitCode};
use std::time::Instant;

use plumbline::findings::Report;
use plumbline::store::extract::{Format, extract};
use plumbline::store::{Store, StoreLimits};
use serde_json::{Value, json};

use corpus::Split;
use generate::{Admissible, CitationLabel, Generated, Generator, Label};
use score::Found;

const USAGE: &str = "usage: accuracy --mode full|ci --store DIR [--work DIR] [--seed N] [--sentences N] \
[--ci-sentences N] [--packages TEXT] [--write-readme] [--readme FILE] [--no-sweep] [--config FILE]";

#[derive(Debug)]
struct Args {
    mode: String,
    store: PathBuf,
    work: PathBuf,
    seed: u64,
    /// Labelled sentences per split in a full run.
    sentences: usize,
    /// Labelled sentences of the CI subset (the first answers of the test split).
    ci_sentences: usize,
    packages: String,
    write_readme: bool,
    readme: PathBuf,
    sweep: bool,
    config: Option<PathBuf>,
}

fn parse_args() -> Result<Args, String> {
    let mut a = Args {
        mode: String::new(),
        store: PathBuf::from("target/accuracy/store"),
        work: PathBuf::from("target/accuracy"),
        seed: 1,
        sentences: 6_000,
        ci_sentences: 1_200,
        packages: "unknown".into(),
        write_readme: false,
        readme: PathBuf::from("README.md"),
        sweep: true,
        config: None,
    };
    let mut it = std::env::args().skip(1);
    while let Some(k) = it.next() {
        let mut val = |name: &str| it.next().ok_or(format!("{name} needs a value"));
        match k.as_str() {
            "--bench" => {}
            "--mode" => a.mode = val("--mode")?,
            "--store" => a.store = PathBuf::from(val("--store")?),
            "--work" => a.work = PathBuf::from(val("--work")?),
            "--seed" => a.seed = val("--seed")?.parse().map_err(|e| format!("--seed: {e}"))?,
            "--sentences" => {
                a.sentences =
                    val("--sentences")?.parse().map_err(|e| format!("--sentences: {e}"))?
            }
            "--ci-sentences" => {
                a.ci_sentences =
                    val("--ci-sentences")?.parse().map_err(|e| format!("--ci-sentences: {e}"))?
            }
            "--packages" => a.packages = val("--packages")?,
            "--write-readme" => a.write_readme = true,
            "--readme" => a.readme = PathBuf::from(val("--readme")?),
            "--no-sweep" => a.sweep = false,
            "--config" => a.config = Some(PathBuf::from(val("--config")?)),
            other => return Err(format!("unknown option {other}")),
        }
    }
    if a.mode != "full" && a.mode != "ci" {
        return Err(format!("--mode must be full or ci, found {}", a.mode));
    }
    if a.mode == "ci" && a.write_readme {
        return Err("--write-readme needs a full run".into());
    }
    Ok(a)
}

fn main() -> ExitCode {
    // `cargo test --benches` runs bench binaries without arguments (or with --list);
    // the benchmark only runs when asked for a mode, as run.sh does.
    if !std::env::args().any(|a| a == "--mode") {
        println!("accuracy: nothing to do without --mode; run tests/accuracy/run.sh full|ci");
        return ExitCode::SUCCESS;
    }
    let args = match parse_args() {
        Ok(a) => a,
        Err(e) => {
            eprintln!("accuracy: {e}\n{USAGE}");
            return ExitCode::from(2);
        }
    };
    match run(&args) {
        Ok(true) => ExitCode::SUCCESS,
        Ok(false) => ExitCode::from(1),
        Err(e) => {
            eprintln!("accuracy: {e}");
            ExitCode::from(2)
        }
    }
}

/// The whole benchmark; `Ok(false)` when the CI check fails.
fn run(args: &Args) -> Result<bool, String> {
    let started = Instant::now();
    let mut bad = edits::self_test();
    bad.extend(readme::self_test());
    if !bad.is_empty() {
        return Err(format!(
            "the generator's edit rules fail their self-test:\n  {}",
            bad.join("\n  ")
        ));
    }
    println!("machine: {} cores; mode {}; seed {}", cores(), args.mode, args.seed);
    std::fs::create_dir_all(&args.work).map_err(|e| format!("{}: {e}", args.work.display()))?;

    let extraction = extraction_speed(&args.store.join("pg"))?;
    let corpus = corpus::prepare(&args.store, args.seed)?;
    let (pg, py) = corpus.docs.iter().fold((0, 0), |(a, b), d| match d.collection {
        corpus::Collection::Pg => (a + 1, b),
        corpus::Collection::Py => (a, b + 1),
    });
    let cand: usize = corpus.docs.iter().map(|d| d.candidates.len()).sum();
    println!(
        "store: {} documents ({pg} PostgreSQL HTML pages, {py} Python reST sources), {:.1} MB, {} sentences, {cand} claim-like; load {:.2}s, index {:.2}s",
        corpus.docs.len(),
        corpus.store.documents.iter().map(|d| d.raw().len()).sum::<usize>() as f64 / 1e6,
        corpus.index.sentence_count(),
        corpus.load_seconds,
        corpus.index_seconds
    );
    println!("{}", extraction.line());

    let t = Instant::now();
    let splits: &[Split] =
        if args.mode == "full" { &[Split::Tuning, Split::Test] } else { &[Split::Test] };
    let admissible = Admissible::build(&corpus, splits);
    println!("admissible sentences per class found in {:.1}s:", t.elapsed().as_secs_f64());
    for class in generate::Class::ALL {
        let (a, b) = (admissible.count(Split::Tuning, class), admissible.count(Split::Test, class));
        if a + b > 0 {
            println!("  {:<18} tuning {a:>6}  test {b:>6}", class.name());
        }
    }
    let generator = Generator::new(&corpus, &admissible, args.seed);
    let mut sets: Vec<(Split, Generated)> = Vec::new();
    if args.mode == "full" {
        sets.push((Split::Tuning, generator.split(Split::Tuning, args.sentences, None)));
        sets.push((Split::Test, generator.split(Split::Test, args.sentences, None)));
    } else {
        sets.push((Split::Test, generator.split(Split::Test, args.ci_sentences, None)));
    }
    let gen_seconds = t.elapsed().as_secs_f64();
    for (split, g) in &sets {
        println!(
            "generated {}: {} answers, {} labelled sentences, {} citations ({gen_seconds:.1}s for all)",
            split.as_str(),
            g.answers.len(),
            g.labels.len(),
            g.citations.len()
        );
    }

    let principals = args.work.join("principals.json");
    write(&principals, &generate::principals().to_string())?;
    let mut answers_files = Vec::new();
    // A CI run writes its own files, so that it leaves a full run's outputs alone.
    let suffix = if args.mode == "ci" { "-ci" } else { "" };
    for (split, g) in &sets {
        let name = format!("{}{suffix}", split.as_str());
        let answers = args.work.join(format!("answers-{name}.jsonl"));
        write_lines(&answers, g.answers.iter())?;
        write_lines(&args.work.join(format!("labels-{name}.jsonl")), g.labels.iter().map(to_json))?;
        write_lines(
            &args.work.join(format!("citations-{name}.jsonl")),
            g.citations.iter().map(to_json),
        )?;
        answers_files.push((*split, answers));
    }

    let bin = Path::new(env!("CARGO_BIN_EXE_plumbline"));
    let mut reports: Vec<(Split, Report)> = Vec::new();
    let mut check_seconds = 0.0;
    for (split, answers) in &answers_files {
        let out = args.work.join(format!("findings-{}{suffix}.json", split.as_str()));
        let (report, secs) =
            check(bin, &args.store, answers, &principals, args.config.as_deref(), &out)?;
        println!("plumbline check on the {} split: {secs:.1}s", split.as_str());
        check_seconds += secs;
        reports.push((*split, report));
    }
    let all_reports: Vec<Report> = reports.iter().map(|(_, r)| r.clone()).collect();
    let found = Found::new(&all_reports);

    let labels_of = |split: Split, limit: Option<usize>| -> (Vec<&Label>, Vec<&CitationLabel>) {
        let g = &sets.iter().find(|(s, _)| *s == split).expect("split generated").1;
        let keep = |n: usize| limit.is_none_or(|k| n < k);
        (
            g.labels.iter().filter(|l| keep(l.number)).collect(),
            g.citations.iter().filter(|c| keep(c.number)).collect(),
        )
    };
    let test_set = &sets.iter().find(|(s, _)| *s == Split::Test).expect("test").1;
    let ci_answers = ci_prefix(test_set, args.ci_sentences);

    let (tl, tc) = labels_of(Split::Test, None);
    let (cl, cc) = labels_of(Split::Test, Some(ci_answers));
    let ci_scores = score::score("CI subset of the test split", &cl, &cc, &found);
    let mut results = json!({
        "date": plumbline::run::utc_now(),
        "commit": commit(),
        "mode": args.mode,
        "seed": args.seed,
        "packages": args.packages,
        "store": {"documents": corpus.docs.len(), "pg": pg, "py": py, "claim_like_sentences": cand},
        "extraction": extraction.json(),
        "config": args.config.as_ref().map(|p| p.display().to_string()),
    });
    let mut ok = true;
    if args.mode == "full" {
        let test_scores = score::score("test split", &tl, &tc, &found);
        let (ul, uc) = labels_of(Split::Tuning, None);
        let tuning_scores = score::score("tuning split", &ul, &uc, &found);
        print!("\n{}", score::table(&tuning_scores));
        print!("\n{}", score::table(&test_scores));
        print!("\n{}", score::table(&ci_scores));
        let mut failures = score::failures(&tl, &found, 300);
        failures.extend(score::failures(&ul, &found, 300));
        write_lines(&args.work.join("failures.jsonl"), failures.iter())?;
        println!(
            "\nfailure examples: {} written to {}",
            failures.len(),
            args.work.join("failures.jsonl").display()
        );
        results["tuning"] = to_json(&tuning_scores);
        results["test"] = to_json(&test_scores);
        results["ci"] = to_json(&ci_scores);

        if args.sweep {
            let tuning_answers =
                &answers_files.iter().find(|(s, _)| *s == Split::Tuning).expect("tuning").1;
            let test_answers =
                &answers_files.iter().find(|(s, _)| *s == Split::Test).expect("test").1;
            let sw = sweep::run(&sweep::Inputs {
                bin,
                store: &args.store,
                principals: &principals,
                work: &args.work,
                tuning_answers,
                test_answers,
                tuning: (&ul, &uc),
                test: (&tl, &tc),
                default_tuning: &found,
            })?;
            results["sweep"] = sw;
        }
        let seconds = started.elapsed().as_secs_f64();
        results["seconds"] = json!(seconds);
        results["timing"] =
            json!({"generate": gen_seconds, "check": check_seconds, "total": seconds});
        if args.write_readme {
            let info = readme::RunInfo {
                date: plumbline::run::utc_now()[..10].to_owned(),
                commit: commit(),
                command: "tests/accuracy/run.sh full --write-readme".into(),
                packages: args.packages.replace(',', ", "),
                seed: args.seed,
                documents: corpus.docs.len(),
                seconds,
            };
            let text = std::fs::read_to_string(&args.readme)
                .map_err(|e| format!("{}: {e}", args.readme.display()))?;
            let new = readme::replace_block(&text, &readme::block(&info, &test_scores, &ci_scores));
            write(&args.readme, &new)?;
            println!("README block rewritten in {}", args.readme.display());
        }
    } else {
        print!("\n{}", score::table(&ci_scores));
        results["ci"] = to_json(&ci_scores);
        let text = std::fs::read_to_string(&args.readme)
            .map_err(|e| format!("{}: {e}", args.readme.display()))?;
        let want = readme::ci_figures(&text)?;
        for p in args.packages.split(',') {
            if !text.contains(p) {
                println!(
                    "note: README's figures were measured with other package versions than {p}"
                );
            }
        }
        let bad = readme::regressions(&want, &ci_scores);
        if bad.is_empty() {
            println!(
                "\nCI check: all {} figures within {:.0} points of README",
                want.len(),
                readme::TOLERANCE
            );
        } else {
            ok = false;
            println!(
                "\nCI check FAILED: {} figure(s) fell more than {:.0} points below README:",
                bad.len(),
                readme::TOLERANCE
            );
            for b in &bad {
                println!("  {b}");
            }
        }
        results["ci_check"] = json!({"passed": ok, "regressions": bad});
        results["seconds"] = json!(started.elapsed().as_secs_f64());
    }
    let path = args.work.join(format!("results-{}.json", args.mode));
    write(&path, &serde_json::to_string_pretty(&results).map_err(|e| e.to_string())?)?;
    println!(
        "results written to {}; {:.1}s in all",
        path.display(),
        started.elapsed().as_secs_f64()
    );
    Ok(ok)
}

/// Number of test answers in the CI subset: the first answers whose labelled sentences
/// reach `sentences` (what `--mode ci` generates).
fn ci_prefix(g: &Generated, sentences: usize) -> usize {
    // Labels of one answer are consecutive: the answer whose label reaches the count is
    // the last one generated.
    let last = g.labels.iter().enumerate().find(|(i, _)| i + 1 >= sentences).map(|(_, l)| l);
    last.or(g.labels.last()).map_or(0, |l| l.number + 1)
}

/// Runs `plumbline check` and reads its findings back.
pub fn check(
    bin: &Path,
    store: &Path,
    answers: &Path,
    principals: &Path,
    config: Option<&Path>,
    out: &Path,
) -> Result<(Report, f64), String> {
    let mut cmd = Command::new(bin);
    cmd.arg("check").arg("--store").arg(store).arg("--answers").arg(answers);
    cmd.arg("--principals").arg(principals).arg("--json").arg(out).arg("--quiet");
    if let Some(c) = config {
        cmd.arg("--config").arg(c);
    }
    let t = Instant::now();
    let status = cmd.status().map_err(|e| format!("{}: {e}", bin.display()))?;
    let secs = t.elapsed().as_secs_f64();
    if !matches!(status.code(), Some(0 | 1)) {
        return Err(format!("plumbline check exited with {status} on {}", answers.display()));
    }
    let f = std::fs::File::open(out).map_err(|e| format!("{}: {e}", out.display()))?;
    let report: Report = serde_json::from_reader(std::io::BufReader::new(f))
        .map_err(|e| format!("{}: not a findings document: {e}", out.display()))?;
    if report.summary.lines_rejected > 0 {
        return Err(format!(
            "{}: {} answer lines were rejected: {:?}",
            answers.display(),
            report.summary.lines_rejected,
            report.rejected.first()
        ));
    }
    Ok((report, secs))
}

/// Extraction speed on the PostgreSQL manual's HTML pages.
struct Extraction {
    mb: f64,
    files: usize,
    load_seconds: f64,
    extract_seconds: f64,
}

impl Extraction {
    fn line(&self) -> String {
        format!(
            "HTML extraction on the PostgreSQL manual ({} pages, {:.1} MB): store load (read, SHA-256, extract; {} threads) {:.2}s = {:.1} MB/s; extraction alone, one thread, {:.2}s = {:.1} MB/s",
            self.files,
            self.mb,
            cores(),
            self.load_seconds,
            self.mb / self.load_seconds,
            self.extract_seconds,
            self.mb / self.extract_seconds
        )
    }

    fn json(&self) -> Value {
        json!({"html_pages": self.files, "mb": self.mb, "load_seconds": self.load_seconds,
               "load_mb_per_s": self.mb / self.load_seconds, "extract_seconds": self.extract_seconds,
               "extract_mb_per_s_one_thread": self.mb / self.extract_seconds})
    }
}

fn extraction_speed(pg: &Path) -> Result<Extraction, String> {
    let t = Instant::now();
    let store = Store::load(pg, &StoreLimits::default()).map_err(|e| e.to_string())?;
    let load_seconds = t.elapsed().as_secs_f64();
    let mb = store.documents.iter().map(|d| d.raw().len()).sum::<usize>() as f64 / 1e6;
    let t = Instant::now();
    let mut visible = 0;
    for d in &store.documents {
        let x = extract(Format::Html, d.raw());
        visible += std::hint::black_box(x.visible(d.raw()).len());
    }
    let extract_seconds = t.elapsed().as_secs_f64();
    if visible == 0 {
        return Err("the PostgreSQL pages have no visible text".into());
    }
    Ok(Extraction { mb, files: store.documents.len(), load_seconds, extract_seconds })
}

fn cores() -> usize {
    std::thread::available_parallelism().map_or(1, |n| n.get())
}

/// Short commit hash, with `-dirty` when the work tree has changes.
fn commit() -> String {
    let out = |args: &[&str]| {
        Command::new("git")
            .args(args)
            .output()
            .ok()
            .filter(|o| o.status.success())
            .map(|o| String::from_utf8_lossy(&o.stdout).trim().to_owned())
    };
    let hash = out(&["rev-parse", "--short", "HEAD"]).unwrap_or_else(|| "unknown".into());
    let dirty =
        out(&["status", "--porcelain", "--untracked-files=no"]).is_some_and(|s| !s.is_empty());
    if dirty { format!("{hash}-dirty") } else { hash }
}

fn to_json<T: serde::Serialize>(x: &T) -> Value {
    serde_json::to_value(x).unwrap_or(Value::Null)
}

fn write(path: &Path, text: &str) -> Result<(), String> {
    std::fs::write(path, text).map_err(|e| format!("{}: {e}", path.display()))
}

fn write_lines<'a, T: serde::Serialize + 'a>(
    path: &Path,
    items: impl Iterator<Item = T>,
) -> Result<(), String> {
    let f = std::fs::File::create(path).map_err(|e| format!("{}: {e}", path.display()))?;
    let mut w = std::io::BufWriter::new(f);
    for x in items {
        let line = serde_json::to_string(&x).map_err(|e| e.to_string())?;
        writeln!(w, "{line}").map_err(|e| format!("{}: {e}", path.display()))?;
    }
    w.flush().map_err(|e| format!("{}: {e}", path.display()))
}
