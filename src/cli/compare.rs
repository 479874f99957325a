//! `plumbline compare BASE.json NEW.json`: what got better or worse between two runs'
//! findings (see [`crate::compare`]). Prints a summary on stderr; exits 1 when NEW is
//! worse beyond `--tolerance`, 0 otherwise, 2 when a file cannot be read or is not a
//! findings document.

use std::io::{self, Write};
use std::path::PathBuf;

use anyhow::{Context as _, Result};
use clap::Args;

use super::{Outcome, UsageError};
use crate::compare::{self, Comparison, Settings};
use crate::report;
use crate::runfile;

/// Arguments of `plumbline compare`.
#[derive(Debug, Args)]
pub struct CompareArgs {
    /// Findings of the base run (for example, the version in production).
    #[arg(value_name = "BASE.json")]
    pub base: PathBuf,
    /// Findings of the new run (the candidate).
    #[arg(value_name = "NEW.json")]
    pub new: PathBuf,
    /// Most counted regressions NEW may have and still pass (default 0: any added error
    /// finding that no reviewer accepted makes NEW worse).
    #[arg(long, value_name = "N", default_value_t = 0)]
    pub tolerance: usize,
    /// Count every regression, not only added errors: added warnings, lower support,
    /// answers that now fail, lower agreement with approved answers.
    #[arg(long)]
    pub strict: bool,
    /// Fall in a sentence's support score that counts as lower support (0: any fall).
    #[arg(long, value_name = "X", default_value_t = Settings::default().score_drop)]
    pub score_drop: f64,
    /// Fall in ROUGE-L F against the approved answer that counts as lower agreement (0: any).
    #[arg(long, value_name = "X", default_value_t = Settings::default().approved_drop)]
    pub approved_drop: f64,
    /// Write the comparison as JSON; `-` for stdout.
    #[arg(long, value_name = "FILE")]
    pub json: Option<PathBuf>,
    /// Write the comparison as a self-contained HTML page, the two runs side by side.
    #[arg(long, value_name = "FILE")]
    pub html: Option<PathBuf>,
    /// No terminal output but errors.
    #[arg(long)]
    pub quiet: bool,
}

/// Runs `plumbline compare`.
pub fn execute(args: &CompareArgs) -> Result<Outcome> {
    for (name, x) in [("--score-drop", args.score_drop), ("--approved-drop", args.approved_drop)] {
        if !(0.0..=1.0).contains(&x) {
            return Err(UsageError(format!("{name} must be between 0 and 1, found {x}")).into());
        }
    }
    let base = runfile::read(&args.base).map_err(UsageError)?;
    let new = runfile::read(&args.new).map_err(UsageError)?;
    for f in [&base, &new] {
        // A shard holds part of a log: compared with a whole run, everything else would
        // look gone or new.
        if let Some(s) = f.report.shard.as_ref().filter(|s| s.n > 1) {
            return Err(UsageError(format!(
                "{}: shard: the findings of shard {} of {} only; join the shards with `plumbline merge` and compare the merged findings",
                f.file.path, s.k, s.n
            ))
            .into());
        }
    }
    let settings = Settings {
        tolerance: args.tolerance,
        score_drop: args.score_drop,
        approved_drop: args.approved_drop,
        strict: args.strict,
    };
    let c =
        compare::compare(&base, &new, settings, std::env::args().collect(), crate::run::utc_now());
    if let Some(path) = &args.json {
        let mut bytes = serde_json::to_vec_pretty(&c)?;
        bytes.push(b'\n');
        report::write_atomic(path, &bytes)
            .with_context(|| format!("writing {}", path.display()))?;
    }
    if let Some(path) = &args.html {
        let html = report::compare_html::render(&c)?;
        report::write_atomic(path, html.as_bytes())
            .with_context(|| format!("writing {}", path.display()))?;
    }
    if !args.quiet {
        print_summary(&c, args);
    }
    Ok(if c.decision.worse { Outcome::GateFailed } else { Outcome::Pass })
}

fn print_summary(c: &Comparison, args: &CompareArgs) {
    let s = &c.summary;
    let h = &c.comparison;
    let mut err = io::stderr().lock();
    let _ = writeln!(
        err,
        "plumbline compare: {} (base, {} answers) → {} (new, {} answers)",
        h.base.file.path,
        h.base.summary.answers_checked,
        h.new.file.path,
        h.new.summary.answers_checked
    );
    let differ: Vec<&str> = [
        ("store", h.same.store),
        ("settings", h.same.config),
        ("answers file", h.same.answers),
        ("plumbline version", h.same.tool),
    ]
    .iter()
    .filter(|(_, same)| !same)
    .map(|(what, _)| *what)
    .collect();
    if !differ.is_empty() && differ != ["answers file"] {
        let _ = writeln!(
            err,
            "  note: the runs differ in {}: not every change is the assistant's",
            differ.join(", ")
        );
    }
    let _ = writeln!(
        err,
        "  answers: {} matched ({} regressed, {} mixed, {} improved, {} unchanged), {} new, {} gone",
        s.answers_matched,
        s.answers_regressed,
        s.answers_mixed,
        s.answers_improved,
        s.answers_unchanged,
        s.answers_new,
        s.answers_gone
    );
    let _ = writeln!(
        err,
        "  findings: +{} errors, +{} warnings added; -{} errors, -{} warnings resolved",
        s.added_errors, s.added_warnings, s.resolved_errors, s.resolved_warnings
    );
    let _ = writeln!(
        err,
        "  sentences: {} lower support, {} higher, {} added, {} removed; gate: {} passed → failed, {} failed → passed",
        s.sentences_lower,
        s.sentences_higher,
        s.sentences_added,
        s.sentences_removed,
        s.passed_to_failed,
        s.failed_to_passed
    );
    let _ =
        writeln!(err, "{}", if c.decision.worse { "new run: WORSE" } else { "new run: not worse" });
    for r in &c.decision.reasons {
        let _ = writeln!(err, "  - {r}");
    }
    for (label, path) in [("comparison", &args.json), ("report", &args.html)] {
        if let Some(p) = path.as_ref().filter(|p| p.as_os_str() != "-") {
            let _ = writeln!(err, "  {label}: {}", p.display());
        }
    }
}
