//! `plumbline merge PART.json… --json FILE [--html FILE]`: joins the findings documents
//! of the shards of one `check --shard K/N` run into the findings of the whole run, and
//! decides the gate on the whole (exit 0 pass, 1 fail, 2 when the parts cannot be read or
//! do not belong together). See [`crate::merge`].

use std::path::PathBuf;

use anyhow::Result;
use clap::Args;

use super::{Outcome, UsageError};
use crate::run::{self, Outputs};
use crate::runfile;

/// Arguments of `plumbline merge`.
#[derive(Debug, Args)]
pub struct MergeArgs {
    /// The shards' findings files (`check --shard K/N --json`), one per shard, any order.
    #[arg(value_name = "PART.json", required = true)]
    pub parts: Vec<PathBuf>,
    /// Write the merged findings document (JSON); `-` for stdout.
    #[arg(long, value_name = "FILE")]
    pub json: Option<PathBuf>,
    /// Write the self-contained HTML report of the merged run.
    #[arg(long, value_name = "FILE")]
    pub html: Option<PathBuf>,
    /// Write JUnit XML of the merged run.
    #[arg(long, value_name = "FILE")]
    pub junit: Option<PathBuf>,
    /// Write SARIF 2.1.0 of the merged run.
    #[arg(long, value_name = "FILE")]
    pub sarif: Option<PathBuf>,
    /// No terminal output but errors.
    #[arg(long)]
    pub quiet: bool,
}

/// Runs `plumbline merge`.
pub fn execute(args: &MergeArgs) -> Result<Outcome> {
    let started = std::time::Instant::now();
    let mut parts = Vec::with_capacity(args.parts.len());
    for p in &args.parts {
        parts.push(runfile::read(p).map_err(UsageError)?);
    }
    let report = crate::merge::merge(&parts, std::env::args().collect(), run::utc_now())
        .map_err(UsageError)?;
    let outputs = Outputs {
        json: args.json.clone(),
        html: args.html.clone(),
        junit: args.junit.clone(),
        sarif: args.sarif.clone(),
    };
    run::write_outputs(&report, &outputs)?;
    if !args.quiet {
        eprintln!("plumbline merge: {} shards joined", parts.len());
        run::print_summary(&report, &outputs, None, started.elapsed());
    }
    Ok(if report.summary.gate.passed { Outcome::Pass } else { Outcome::GateFailed })
}
