//! `plumbline check`: the main job. Reads the store, the answers log and the optional
//! principals, config and reviewer decisions; checks every answer; writes the findings
//! document, the HTML report, JUnit XML or SARIF; prints a summary on stderr; and exits
//! 0 when every answer passes the gate, 1 when something fails it.

use std::path::PathBuf;

use anyhow::Result;
use clap::Args;

use super::Outcome;
use crate::run::{self, Outputs, RunInputs, Shard, Verbosity};

/// Arguments of `plumbline check`.
#[derive(Debug, Args)]
pub struct CheckArgs {
    /// The document store: a directory of .txt, .md, .html and .pdf files (optional
    /// manifest.json), a chunk export (FILE.jsonl or chunks:FILE), a SQLite file
    /// (sqlite:FILE) or a PostgreSQL database (postgres://…).
    #[arg(long, value_name = "STORE")]
    pub store: PathBuf,
    /// The answers log (JSON Lines); `-` reads stdin.
    #[arg(long, value_name = "FILE")]
    pub answers: PathBuf,
    /// JSON object mapping each user id to its list of groups.
    #[arg(long, value_name = "FILE")]
    pub principals: Option<PathBuf>,
    /// TOML file with thresholds and gate rules (every key has a default).
    #[arg(long, value_name = "FILE")]
    pub config: Option<PathBuf>,
    /// Write the findings document (JSON); `-` for stdout.
    #[arg(long, value_name = "FILE")]
    pub json: Option<PathBuf>,
    /// Write the self-contained HTML report.
    #[arg(long, value_name = "FILE")]
    pub html: Option<PathBuf>,
    /// Write JUnit XML: one testcase per answer.
    #[arg(long, value_name = "FILE")]
    pub junit: Option<PathBuf>,
    /// Write SARIF 2.1.0: one rule per finding kind.
    #[arg(long, value_name = "FILE")]
    pub sarif: Option<PathBuf>,
    /// Check only the answers whose id hashes to shard K of N (64-bit FNV-1a of the id's
    /// UTF-8 bytes, mod N, plus 1); shard 1 also reports unreadable lines. Join the
    /// shards' --json files with `plumbline merge`.
    #[arg(long, value_name = "K/N")]
    pub shard: Option<Shard>,
    /// Reviewer decisions (JSON Lines) that waive named findings.
    #[arg(long, value_name = "FILE")]
    pub accept: Option<PathBuf>,
    /// Leave restricted documents' text out of every output.
    #[arg(long)]
    pub redact_restricted: bool,
    /// No terminal output but errors.
    #[arg(long, conflicts_with = "progress")]
    pub quiet: bool,
    /// Show a progress bar even when stderr is not a terminal.
    #[arg(long)]
    pub progress: bool,
    /// TOML file with an `[input]` table of JSON Pointers: where the answer fields lie in
    /// records of another shape (over the config's `[input]`, key by key).
    #[arg(long, value_name = "FILE")]
    pub input_map: Option<PathBuf>,
    /// A saved index (`plumbline index`) to use instead of reading and indexing the store;
    /// refused when the store changed since it was saved.
    #[arg(long, value_name = "FILE")]
    pub index: Option<PathBuf>,
    /// How to read a database store: auto (whole up to store.full_max_rows rows), full,
    /// or lazy (only the cited rows; no store-wide search).
    #[arg(long, value_name = "MODE")]
    pub store_mode: Option<crate::config::StoreMode>,
}

/// Runs `plumbline check`.
pub fn execute(args: &CheckArgs) -> Result<Outcome> {
    let inputs = RunInputs {
        store: args.store.clone(),
        answers: args.answers.clone(),
        principals: args.principals.clone(),
        config: args.config.clone(),
        accept: args.accept.clone(),
        shard: args.shard,
        redact_restricted: args.redact_restricted,
        command: std::env::args().collect(),
    };
    let outputs = Outputs {
        json: args.json.clone(),
        html: args.html.clone(),
        junit: args.junit.clone(),
        sarif: args.sarif.clone(),
    };
    let verbosity = if args.quiet {
        Verbosity::Quiet
    } else if args.progress {
        Verbosity::Progress
    } else {
        Verbosity::Normal
    };
    let extras = run::Extras {
        input_map: args.input_map.clone(),
        index: args.index.clone(),
        store_mode: args.store_mode,
    };
    if args.index.is_some() && args.store_mode == Some(crate::config::StoreMode::Lazy) {
        return Err(super::UsageError(
            "--index and --store-mode lazy do not go together: a saved index holds the whole store"
                .into(),
        )
        .into());
    }
    run::check_with(&inputs, &extras, &outputs, verbosity)
}
