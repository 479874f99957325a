//! `plumbline export`: writes the documents of a store, in any form, as a chunk export
//! (JSON Lines) or a SQLite file that `check --store` reads back with the same findings.
//!
//! Every document becomes one row: `id`, `text` (the document's text as stored), `doc`
//! (its chunk group, for rows that came from one), `access` (its own, else the store's
//! `default_access`, so that entitlements stay as they were), `title`, `format` and the
//! manifest's named `chunks`. Path aliases (a folder document cited by its path when the
//! manifest gives it another id) and the pages of PDF documents (their text is kept, as
//! `text`) are not carried over; the command says when a store had either.

use std::io::Write;
use std::path::{Path, PathBuf};

use anyhow::Result;
use clap::Args;
use serde_json::{Value, json};

use super::{Outcome, UsageError};
use crate::config::{Config, StoreMode};
use crate::store::extract::Format;
use crate::store::source::{self, Opened, StoreSpec};
use crate::store::{Document, Store, StoreLimits};

/// Arguments of `plumbline export`.
#[derive(Debug, Args)]
pub struct ExportArgs {
    /// The store to read, in any form `check --store` takes.
    #[arg(long, value_name = "STORE")]
    pub store: PathBuf,
    /// Where to write: FILE.jsonl for a chunk export, sqlite:FILE (or FILE.db, .sqlite,
    /// .sqlite3) for a SQLite file with a table `chunks`. An existing SQLite file is
    /// refused.
    #[arg(long, value_name = "TARGET")]
    pub out: String,
    /// The config whose `[limits]` and `[store]` apply.
    #[arg(long, value_name = "FILE")]
    pub config: Option<PathBuf>,
    /// No terminal output but errors.
    #[arg(long)]
    pub quiet: bool,
}

/// The row of a document.
fn row(store: &Store, d: &Document) -> Value {
    let format = match d.format {
        Format::Pdf => Format::Text,
        f => f,
    };
    let access = d.effective_access(store.default_access.as_deref());
    let mut v = json!({"id": d.id, "text": d.raw(), "format": format.as_str()});
    let o = v.as_object_mut().expect("an object");
    if let Some(g) = &d.group {
        o.insert("doc".into(), json!(g));
    }
    if let Some(a) = access {
        o.insert("access".into(), json!(a));
    }
    if let Some(t) = &d.title {
        o.insert("title".into(), json!(t));
    }
    if !d.chunks.is_empty() {
        let c: Vec<Value> =
            d.chunks.iter().map(|c| json!({"id": c.id, "start": c.start, "end": c.end})).collect();
        o.insert("chunks".into(), Value::Array(c));
    }
    v
}

fn sqlite_target(out: &str) -> Option<PathBuf> {
    if let Some(p) = out.strip_prefix("sqlite:") {
        return Some(PathBuf::from(p));
    }
    let p = Path::new(out);
    let ext = p.extension().and_then(|e| e.to_str()).unwrap_or("").to_ascii_lowercase();
    matches!(ext.as_str(), "db" | "sqlite" | "sqlite3").then(|| p.to_path_buf())
}

/// Runs `plumbline export`.
pub fn execute(args: &ExportArgs) -> Result<Outcome> {
    let config = match &args.config {
        Some(path) => Config::load(path).map_err(|e| UsageError(e.to_string()))?,
        None => Config::default(),
    };
    let limits = StoreLimits::from(&config.limits);
    let spec = StoreSpec::parse(&args.store);
    let Opened::Whole { store, .. } =
        source::open(&spec, &config.store, Some(StoreMode::Full), &limits, None)
            .map_err(|e| UsageError(e.to_string()))?
    else {
        return Err(UsageError("the store could not be read whole".into()).into());
    };
    let rows: Vec<Value> = store.documents.iter().map(|d| row(&store, d)).collect();
    let target = match sqlite_target(&args.out) {
        Some(path) => {
            write_sqlite(&path, &rows)?;
            format!("sqlite:{}", path.display())
        }
        None => {
            let path = PathBuf::from(&args.out);
            let mut text = String::new();
            for r in &rows {
                text.push_str(&r.to_string());
                text.push('\n');
            }
            crate::report::write_atomic(&path, text.as_bytes())
                .map_err(|e| UsageError(format!("cannot write {}: {e}", path.display())))?;
            path.display().to_string()
        }
    };
    if !args.quiet {
        let mut err = std::io::stderr().lock();
        let _ = writeln!(
            err,
            "plumbline: wrote {} documents of {} to {target}",
            rows.len(),
            spec.label()
        );
        let aliased = store.documents.iter().filter(|d| d.path != d.id).count();
        if aliased > 0 {
            let _ = writeln!(
                err,
                "  {aliased} documents had a path besides their id; rows keep only the id"
            );
        }
        let pdfs = store.documents.iter().filter(|d| d.format == Format::Pdf).count();
        if pdfs > 0 {
            let _ = writeln!(
                err,
                "  {pdfs} PDF documents were written as their extracted text, without pages"
            );
        }
    }
    Ok(Outcome::Pass)
}

fn write_sqlite(path: &Path, rows: &[Value]) -> Result<()> {
    if path.exists() {
        return Err(UsageError(format!(
            "{} exists; remove it or choose another file",
            path.display()
        ))
        .into());
    }
    let fail = |e: rusqlite::Error| UsageError(format!("cannot write {}: {e}", path.display()));
    let mut conn = rusqlite::Connection::open(path).map_err(fail)?;
    conn.execute_batch(
        "CREATE TABLE chunks (id TEXT PRIMARY KEY, text TEXT NOT NULL, doc TEXT, access TEXT, title TEXT, format TEXT, chunks TEXT);
         CREATE INDEX chunks_doc ON chunks (doc);",
    )
    .map_err(fail)?;
    let tx = conn.transaction().map_err(fail)?;
    {
        let mut insert = tx
            .prepare("INSERT INTO chunks (id, text, doc, access, title, format, chunks) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7)")
            .map_err(fail)?;
        for r in rows {
            let s = |k: &str| r.get(k).and_then(Value::as_str).map(str::to_owned);
            let j = |k: &str| r.get(k).map(Value::to_string);
            insert
                .execute(rusqlite::params![
                    s("id"),
                    s("text"),
                    s("doc"),
                    j("access"),
                    s("title"),
                    s("format"),
                    j("chunks")
                ])
                .map_err(fail)?;
        }
    }
    tx.commit().map_err(fail)?;
    Ok(())
}
