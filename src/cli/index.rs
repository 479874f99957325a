//! `plumbline index`: reads a store whole, builds its search index and saves both to a
//! file, so that `plumbline check --index FILE` can skip extraction and indexing (see
//! [`crate::store::cache`]).

use std::path::PathBuf;
use std::time::Instant;

use anyhow::Result;
use clap::Args;

use super::{Outcome, UsageError};
use crate::config::{Config, StoreMode};
use crate::store::source::{self, Opened, StoreSpec};
use crate::store::{StoreLimits, cache};

/// Arguments of `plumbline index`.
#[derive(Debug, Args)]
pub struct IndexArgs {
    /// The store, in any form `check --store` takes.
    #[arg(long, value_name = "STORE")]
    pub store: PathBuf,
    /// Where to write the saved index.
    #[arg(long, value_name = "FILE")]
    pub out: PathBuf,
    /// The config whose `[limits]` and `[store]` apply (use the same one with `check`).
    #[arg(long, value_name = "FILE")]
    pub config: Option<PathBuf>,
    /// No terminal output but errors.
    #[arg(long)]
    pub quiet: bool,
}

/// Runs `plumbline index`.
pub fn execute(args: &IndexArgs) -> Result<Outcome> {
    let started = Instant::now();
    let config = match &args.config {
        Some(path) => Config::load(path).map_err(|e| UsageError(e.to_string()))?,
        None => Config::default(),
    };
    let limits = StoreLimits::from(&config.limits);
    let spec = StoreSpec::parse(&args.store);
    let usage = |e: crate::store::StoreError| UsageError(e.to_string());
    // The time before anything is read: files written from then on are read again when
    // the index is checked against the store (see `source::folder_changes`).
    let saved_at = (
        crate::run::utc_now(),
        std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .map_or(0, |d| d.as_secs() as i64),
    );
    let (fingerprint, stamps) = match &spec {
        StoreSpec::Folder(root) => {
            let stamps = source::folder_stamps(root).map_err(usage)?;
            (source::stamps_fingerprint(&stamps), stamps)
        }
        _ => (source::fingerprint(&spec, &config.store, &limits).map_err(usage)?, Vec::new()),
    };
    let Opened::Whole { store, index, .. } =
        source::open(&spec, &config.store, Some(StoreMode::Full), &limits, None).map_err(usage)?
    else {
        return Err(UsageError("the store could not be read whole".into()).into());
    };
    let (header, size) = cache::save(
        &args.out,
        &store,
        &index,
        &spec.label(),
        &fingerprint,
        &stamps,
        &limits,
        (&saved_at.0, saved_at.1),
    )
    .map_err(usage)?;
    if !args.quiet {
        eprintln!(
            "plumbline: saved the index of {} ({} documents, {} sentences, digest {}) to {} ({:.1} MB) in {:.2}s",
            header.label,
            header.documents,
            index.sentence_count(),
            header.digest,
            args.out.display(),
            size as f64 / 1e6,
            started.elapsed().as_secs_f64()
        );
        if !store.problems.is_empty() {
            eprintln!(
                "  store: {} entries skipped (they are listed in the findings of every run that uses this index)",
                store.problems.len()
            );
        }
    }
    Ok(Outcome::Pass)
}
