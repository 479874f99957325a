//! Benchmark of the HTML report: the demo scenario's findings, repeated to 10,000 answers
//! (each copy with its own id), rendered to one page. Prints the time and the size; the
//! budget is under 5 s and under 40 MB. Run with
//!
//! ```sh
//! cargo bench --bench report
//! ```

use std::path::PathBuf;
use std::time::Instant;

use plumbline::run::{self, RunInputs, Verbosity};

fn main() {
    if std::env::args().any(|a| a == "--test" || a == "--list") {
        return; // `cargo test --benches` builds and lists benches; nothing to time there.
    }
    let demo = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo");
    let inputs = RunInputs {
        store: demo.join("store"),
        answers: demo.join("answers.jsonl"),
        principals: Some(demo.join("principals.json")),
        config: None,
        accept: Some(demo.join("decisions.jsonl")),
        shard: None,
        redact_restricted: false,
        command: vec!["plumbline".into(), "check".into()],
    };
    let loaded = run::load(&inputs).expect("load the demo");
    let ctx = loaded.context(false);
    let (mut report, _) =
        run::check_answers(&inputs, &ctx, &loaded, Verbosity::Quiet).expect("check the demo");
    let one = std::mem::take(&mut report.answers);
    let target = 10_000;
    report.answers = (0..target)
        .map(|i| {
            let mut a = one[i % one.len()].clone();
            a.id = format!("{}-{:05}", a.id, i);
            a.line = i + 1;
            a
        })
        .collect();
    report.summary = run::summarise(&loaded.config, &report.answers, &report.rejected, target);

    let mut best = f64::INFINITY;
    let mut bytes = 0;
    for _ in 0..3 {
        let t = Instant::now();
        let html = plumbline::report::html::render(&report).expect("render");
        best = best.min(t.elapsed().as_secs_f64());
        bytes = html.len();
    }
    println!(
        "report of {target} answers (the demo's {} repeated): {:.1} MB ({:.0} bytes per answer), best of 3 renders {best:.2}s",
        one.len(),
        bytes as f64 / 1e6,
        bytes as f64 / target as f64
    );
}
