//! The command line: one module per subcommand, each with its own argument struct and an
//! `execute` that returns an [`Outcome`]. [`main`] maps outcomes and errors onto the exit
//! codes fixed by SPEC.md in one place.

use std::io::{self, Write};
use std::panic;
use std::process::ExitCode;

use clap::{Parser, Subcommand};

pub mod check;
pub mod compare;
pub mod demo;
pub mod export;
pub mod index;
pub mod merge;
pub mod score;
pub mod sentences;

/// How a subcommand ended, mapped onto exit codes by [`main`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Outcome {
    /// Everything passed the gate (exit 0).
    Pass,
    /// The run completed and something fails the gate (exit 1).
    GateFailed,
    /// Interrupted (Ctrl-C) before its outputs were written; nothing was written (exit
    /// 130, the shell's code for a command ended by SIGINT).
    Interrupted,
}

/// An error of use or of unreadable input (exit 2).
#[derive(Debug, thiserror::Error)]
#[error("{0}")]
pub struct UsageError(pub String);

#[derive(Debug, Parser)]
#[command(
    name = "plumbline",
    version,
    about = "Checks a log of document-grounded answers against a local document store: citations, entitlements and the lexical support of every sentence."
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Check every answer in a log against a document store (the main job).
    Check(check::CheckArgs),
    /// Run the check on the scenario shipped in demo/ and write its report.
    Demo(demo::DemoArgs),
    /// ROUGE-1/2/L, BLEU and fuzzy similarity between two texts or a file of pairs.
    Score(score::ScoreArgs),
    /// Print the sentences plumbline sees in a text (JSON), for inspecting the splitter.
    Sentences(sentences::SentencesArgs),
    /// What got better or worse between two runs' findings; exit 1 when NEW is worse.
    Compare(compare::CompareArgs),
    /// Join the findings of shards (check --shard K/N) into one run.
    Merge(merge::MergeArgs),
    /// Read a store whole and save it with its search index, for `check --index`.
    Index(index::IndexArgs),
    /// Write a store's documents as a chunk export or a SQLite file.
    Export(export::ExportArgs),
}

/// Runs the command line and returns the process exit code.
pub fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            let code = if e.use_stderr() { 2 } else { 0 };
            let _ = e.print();
            return ExitCode::from(code);
        }
    };
    // A panic that escapes a command (the check of each answer has its own boundary, in
    // `run`) ends in the exit code of SPEC.md for a run that could not be completed,
    // never in a pass and never in Rust's own exit code 101.
    let result = panic::catch_unwind(|| match cli.command {
        Command::Check(args) => {
            on_ctrl_c();
            check::execute(&args)
        }
        Command::Demo(args) => {
            on_ctrl_c();
            demo::execute(&args)
        }
        Command::Score(args) => score::execute(&args),
        Command::Sentences(args) => sentences::execute(&args),
        Command::Compare(args) => compare::execute(&args),
        Command::Merge(args) => merge::execute(&args),
        Command::Index(args) => index::execute(&args),
        Command::Export(args) => export::execute(&args),
    });
    match result {
        Ok(Ok(Outcome::Pass)) => ExitCode::SUCCESS,
        Ok(Ok(Outcome::GateFailed)) => ExitCode::from(1),
        Ok(Ok(Outcome::Interrupted)) => ExitCode::from(INTERRUPTED),
        Ok(Err(e)) if is_broken_pipe(&e) => ExitCode::SUCCESS,
        Ok(Err(e)) => {
            let _ = writeln!(io::stderr(), "plumbline: error: {e:#}");
            ExitCode::from(2)
        }
        Err(_) => {
            let _ = writeln!(
                io::stderr(),
                "plumbline: internal error (a defect of plumbline; the message above says where); \
                 the run did not complete"
            );
            ExitCode::from(2)
        }
    }
}

/// Exit code of a run stopped by Ctrl-C: 128 + SIGINT, as shells report it.
const INTERRUPTED: u8 = 130;

/// Ctrl-C asks the run to stop ([`crate::run::interrupt`]): it stops checking, removes
/// its temporary files, writes no output and exits 130. A second Ctrl-C ends the process
/// at once, for a run that does not stop soon enough.
fn on_ctrl_c() {
    let handler = || {
        if crate::run::is_interrupted() {
            std::process::exit(i32::from(INTERRUPTED));
        }
        crate::run::interrupt();
    };
    if let Err(e) = ctrlc::set_handler(handler) {
        let _ = writeln!(io::stderr(), "plumbline: warning: Ctrl-C will not stop cleanly: {e}");
    }
}

/// A closed stdout (e.g. piped into `head`) is a normal end, not an error.
fn is_broken_pipe(e: &anyhow::Error) -> bool {
    e.chain().any(|c| {
        c.downcast_ref::<io::Error>().is_some_and(|io| io.kind() == io::ErrorKind::BrokenPipe)
    })
}
