//! `plumbline demo`: runs `check` on the invented scenario shipped in `demo/` and writes
//! `report.html` and `findings.json` to `--out` (default `demo/out`).
//!
//! The scenario's answers are built to show every verdict, flag and citation status, so
//! its gate fails by design; `demo` still exits 0 when the run completed, because its job
//! is to show the tool, not to gate anything.

use std::path::{Path, PathBuf};

use anyhow::Result;
use clap::Args;

use super::{Outcome, UsageError};
use crate::run::{self, Outputs, RunInputs, Verbosity};

/// Arguments of `plumbline demo`.
#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Where to write report.html and findings.json.
    #[arg(long, value_name = "DIR")]
    out: Option<PathBuf>,
    /// The scenario folder (default: `demo/` of the current directory, else of the source tree).
    #[arg(long, value_name = "DIR")]
    scenario: Option<PathBuf>,
}

fn scenario_dir(given: Option<&Path>) -> Result<PathBuf> {
    if let Some(d) = given {
        return Ok(d.to_path_buf());
    }
    let here = PathBuf::from("demo");
    if here.join("answers.jsonl").is_file() {
        return Ok(here);
    }
    let built = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo");
    if built.join("answers.jsonl").is_file() {
        return Ok(built);
    }
    Err(UsageError(
        "cannot find the demo scenario: run from the project folder or give --scenario DIR".into(),
    )
    .into())
}

/// Runs `plumbline demo`.
pub fn execute(args: &DemoArgs) -> Result<Outcome> {
    let dir = scenario_dir(args.scenario.as_deref())?;
    let out = args.out.clone().unwrap_or_else(|| dir.join("out"));
    std::fs::create_dir_all(&out)
        .map_err(|e| UsageError(format!("cannot create {}: {e}", out.display())))?;
    let optional = |name: &str| Some(dir.join(name)).filter(|p| p.is_file());
    let inputs = RunInputs {
        store: dir.join("store"),
        answers: dir.join("answers.jsonl"),
        principals: optional("principals.json"),
        config: optional("plumbline.toml"),
        accept: optional("decisions.jsonl"),
        shard: None,
        redact_restricted: false,
        command: std::env::args().collect(),
    };
    let outputs = Outputs {
        json: Some(out.join("findings.json")),
        html: Some(out.join("report.html")),
        junit: None,
        sarif: None,
    };
    match run::check(&inputs, &outputs, Verbosity::Normal)? {
        Outcome::Interrupted => Ok(Outcome::Interrupted),
        Outcome::Pass | Outcome::GateFailed => Ok(Outcome::Pass),
    }
}
