//! One whole run of `plumbline check`: inputs read and validated once, every answer
//! checked in parallel behind a panic boundary, the summary and gate decided, outputs
//! written.
//!
//! Data flows one way: [`check`] loads the config, the store (and builds its index), the
//! principals and the reviewer decisions; streams the answers log in batches (so memory
//! for reading does not grow with the log); hands each batch to [`crate::check`] on the
//! rayon pool; and collects results in input order. The writers in [`crate::report`]
//! only read the finished [`Report`].
//!
//! Sharding (`--shard K/N`, [`crate::shard`]): an answer belongs to shard K (1-based) of
//! N when the FNV-1a 64-bit hash of its id's UTF-8 bytes, modulo N, equals K − 1. Lines
//! that cannot be read as answers have no trustworthy id; they are reported by shard 1
//! only, so that merged shards ([`crate::merge`]) count each once. A shard's findings
//! document records which shard it covers (`shard`).

use std::collections::BTreeMap;
use std::fs::File;
use std::io::{self, BufRead, BufReader, IsTerminal, Read, Write};
use std::panic::{AssertUnwindSafe, catch_unwind};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant, SystemTime, UNIX_EPOCH};

use anyhow::{Context as _, Result};
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use rayon::prelude::*;
use sha2::{Digest, Sha256};

use std::sync::{Arc, Mutex};

use crate::access::{self, Principals};
use crate::answers::mapping::FieldMap;
use crate::answers::{AnswerReader, ReaderLimits, json_quote};
use crate::check::{Checked, Context, check_answer};
use crate::cli::{Outcome, UsageError};
use crate::config::{Config, StoreMode};
use crate::decisions::{self, Decision};
use crate::findings::{
    AnswerFindings, DecisionRecord, Decisions, Flag, GateResult, InputFile, Inputs, RejectedLine,
    Report, SavedIndexRecord, ShardRecord, StoreProblemRecord, StoreRecord, Summary, Tool, Verdict,
    round6,
};
use crate::report;
use crate::report::spool::Spool;
pub use crate::shard::Shard;
use crate::store::cache::CacheInfo;
use crate::store::index::Index;
use crate::store::source::{self, LazyStore, Opened, StoreSpec};
use crate::store::{Store, StoreForm, StoreLimits};

/// The input paths and switches of a run.
#[derive(Debug, Clone)]
pub struct RunInputs {
    /// Store directory.
    pub store: PathBuf,
    /// Answers log (`-` for stdin).
    pub answers: PathBuf,
    /// Principals file.
    pub principals: Option<PathBuf>,
    /// Config file.
    pub config: Option<PathBuf>,
    /// Reviewer decisions.
    pub accept: Option<PathBuf>,
    /// Shard to check.
    pub shard: Option<Shard>,
    /// Withhold restricted text.
    pub redact_restricted: bool,
    /// The command line, for the run record.
    pub command: Vec<String>,
}

/// Inputs beyond SPEC.md's (README, "Beyond the contract: other inputs").
#[derive(Debug, Clone, Default)]
pub struct Extras {
    /// A field map file (`--input-map`): an `[input]` table over the config's.
    pub input_map: Option<PathBuf>,
    /// A saved index to use instead of reading the store (`--index`).
    pub index: Option<PathBuf>,
    /// How to read a database store (`--store-mode`), over `store.mode`.
    pub store_mode: Option<StoreMode>,
}

/// Where outputs go.
#[derive(Debug, Clone, Default)]
pub struct Outputs {
    /// Findings JSON.
    pub json: Option<PathBuf>,
    /// HTML report.
    pub html: Option<PathBuf>,
    /// JUnit XML.
    pub junit: Option<PathBuf>,
    /// SARIF.
    pub sarif: Option<PathBuf>,
}

/// How much to print on stderr.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Verbosity {
    /// Errors only.
    Quiet,
    /// Summary; a progress bar when stderr is a terminal.
    Normal,
    /// Summary and a progress bar even when stderr is not a terminal.
    Progress,
}

/// A reader that hashes and counts what passes through it.
struct Hashing<R> {
    inner: R,
    hasher: Sha256,
    bytes: u64,
}

impl<R: Read> Read for Hashing<R> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        let n = self.inner.read(buf)?;
        self.hasher.update(&buf[..n]);
        self.bytes += n as u64;
        Ok(n)
    }
}

/// Size and SHA-256 of a file, for the run record.
pub fn file_record(path: &Path) -> Result<InputFile> {
    let mut f =
        File::open(path).map_err(|e| UsageError(format!("cannot read {}: {e}", path.display())))?;
    let mut h = Hashing { inner: &mut f, hasher: Sha256::new(), bytes: 0 };
    io::copy(&mut h, &mut io::sink()).with_context(|| format!("reading {}", path.display()))?;
    Ok(InputFile {
        path: path.display().to_string(),
        size: h.bytes,
        sha256: hex(&h.hasher.finalize()),
    })
}

/// Lower-case hex.
pub fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// The current UTC time as RFC 3339 (seconds), from the system clock.
pub fn utc_now() -> String {
    let secs = SystemTime::now().duration_since(UNIX_EPOCH).map_or(0, |d| d.as_secs());
    rfc3339(secs)
}

/// Formats seconds since the Unix epoch as `YYYY-MM-DDTHH:MM:SSZ` (civil-from-days,
/// proleptic Gregorian calendar).
pub fn rfc3339(secs: u64) -> String {
    let days = (secs / 86_400) as i64;
    let rem = secs % 86_400;
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1_460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + i64::from(m <= 2);
    format!("{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z", rem / 3600, rem % 3600 / 60, rem % 60)
}

fn panic_message(payload: &(dyn std::any::Any + Send)) -> String {
    payload
        .downcast_ref::<&str>()
        .map(|s| (*s).to_owned())
        .or_else(|| payload.downcast_ref::<String>().cloned())
        .unwrap_or_else(|| "unknown cause".into())
}

/// Everything loaded before the answers are read.
pub struct Loaded {
    /// Settings.
    pub config: Config,
    /// The store.
    pub store: Store,
    /// Its index.
    pub index: Index,
    /// Principals.
    pub principals: Option<Principals>,
    /// Decisions and the lines that could not be read.
    pub decisions: (Vec<Decision>, Vec<crate::answers::Rejected>),
    /// Seconds spent loading the store and building the index.
    pub store_seconds: f64,
    /// A database read batch by batch (then `store` and `index` are empty).
    pub lazy: Option<Mutex<LazyStore>>,
    /// The store as the run record shows it (a connection string without password).
    pub store_label: String,
    /// The saved index used, if any.
    pub cache: Option<CacheInfo>,
    /// The effective field map (empty: records in the answers format).
    pub map: Arc<FieldMap>,
    /// The `--input-map` file.
    pub input_map: Option<InputFile>,
}

impl Loaded {
    /// The context answers are checked in.
    pub fn context(&self, redact_restricted: bool) -> Context<'_> {
        Context {
            store: &self.store,
            index: &self.index,
            config: &self.config,
            principals: self.principals.as_ref(),
            decisions: &self.decisions.0,
            redact_restricted,
        }
    }
}

/// Loads config, store, index, principals and decisions; any failure is a usage error.
pub fn load(inputs: &RunInputs) -> Result<Loaded> {
    load_with(inputs, &Extras::default())
}

/// Reads an `--input-map` file: TOML holding an `[input]` table, as in the config.
pub fn load_input_map(path: &Path) -> Result<FieldMap> {
    #[derive(serde::Deserialize)]
    #[serde(deny_unknown_fields)]
    struct File {
        #[serde(default)]
        input: FieldMap,
    }
    let text = std::fs::read_to_string(path)
        .map_err(|e| UsageError(format!("{}: cannot read the input map: {e}", path.display())))?;
    let file: File = toml::from_str(&text)
        .map_err(|e| UsageError(format!("{}: {}", path.display(), e.message().trim_end())))?;
    file.input
        .validate()
        .map_err(|b| UsageError(format!("{}: {}: {}", path.display(), b.key, b.message)))?;
    if file.input.is_empty() {
        return Err(UsageError(format!(
            "{}: maps no field; it needs an [input] table",
            path.display()
        ))
        .into());
    }
    Ok(file.input)
}

/// [`load`] with the inputs beyond SPEC.md's.
pub fn load_with(inputs: &RunInputs, extras: &Extras) -> Result<Loaded> {
    let mut config = match &inputs.config {
        Some(path) => Config::load(path).map_err(|e| UsageError(e.to_string()))?,
        None => Config::default(),
    };
    let input_map = match &extras.input_map {
        Some(path) => {
            let file_map = load_input_map(path)?;
            config.input = file_map.over(std::mem::take(&mut config.input));
            Some(file_record(path)?)
        }
        None => None,
    };
    let t0 = Instant::now();
    let limits = StoreLimits::from(&config.limits);
    let spec = StoreSpec::parse(&inputs.store);
    let store_label = spec.label();
    let opened =
        source::open(&spec, &config.store, extras.store_mode, &limits, extras.index.as_deref())
            .map_err(|e| UsageError(e.to_string()))?;
    let (store, index, cache, lazy) = match opened {
        Opened::Whole { store, index, cache } => (store, index, cache, None),
        Opened::Lazy(l) => {
            let empty = Store::assemble(crate::store::Parts {
                form: l.form(),
                root: PathBuf::from(l.label()),
                documents: Vec::new(),
                default_access: None,
                problems: Vec::new(),
                unreadable: Vec::new(),
                max_id_bytes: limits.max_id_bytes,
            });
            (empty, Index::default(), None, Some(Mutex::new(l)))
        }
    };
    let store_seconds = t0.elapsed().as_secs_f64();
    let principals = match &inputs.principals {
        Some(p) => Some(access::load_principals(p).map_err(|e| UsageError(e.to_string()))?),
        None => None,
    };
    let decisions = match &inputs.accept {
        Some(p) => decisions::load_decisions(p).map_err(|e| UsageError(e.to_string()))?,
        None => (Vec::new(), Vec::new()),
    };
    let map = Arc::new(config.input.clone());
    Ok(Loaded {
        config,
        store,
        index,
        principals,
        decisions,
        store_seconds,
        lazy,
        store_label,
        cache,
        map,
        input_map,
    })
}

/// The summary's counts, gathered one answer and one rejected line at a time, so that a
/// run need not hold every answer's findings to summarise them.
#[derive(Debug, Clone)]
pub struct Tally {
    s: Summary,
    rouge_l: f64,
    bleu: f64,
    approved: usize,
    gate_kinds: BTreeMap<String, usize>,
    /// The approved-answer comparisons, summed as they come (`regression::Totals`).
    regression: crate::regression::Totals,
}

impl Default for Tally {
    fn default() -> Self {
        Tally::new()
    }
}

impl Tally {
    /// Every verdict, flag and citation status at zero.
    pub fn new() -> Tally {
        let mut s = Summary::default();
        for v in Verdict::ALL {
            s.verdicts.insert(v.as_str().into(), 0);
        }
        for f in Flag::ALL {
            s.flags.insert(f.as_str().into(), 0);
        }
        for st in crate::findings::CitationStatus::ALL {
            s.citations.insert(st.as_str().into(), 0);
        }
        Tally {
            s,
            rouge_l: 0.0,
            bleu: 0.0,
            approved: 0,
            gate_kinds: BTreeMap::new(),
            regression: crate::regression::Totals::default(),
        }
    }

    /// Counts one checked answer.
    pub fn answer(&mut self, a: &AnswerFindings) {
        let s = &mut self.s;
        s.answers_checked += 1;
        if a.passed {
            s.answers_passed += 1;
        } else {
            s.answers_failed += 1;
        }
        for sent in &a.sentences {
            *s.verdicts.entry(sent.verdict.as_str().into()).or_default() += 1;
            for f in &sent.flags {
                *s.flags.entry(f.as_str().into()).or_default() += 1;
            }
        }
        for c in &a.citations {
            *s.citations.entry(c.status.as_str().into()).or_default() += 1;
        }
        for f in &a.findings {
            match f.severity {
                crate::findings::Severity::Error => s.errors += 1,
                crate::findings::Severity::Warning => s.warnings += 1,
            }
            if f.accepted.is_some() {
                s.accepted += 1;
            }
            if f.gate {
                s.gate_failures += 1;
                *self.gate_kinds.entry(f.kind.clone()).or_default() += 1;
            }
            if f.kind == "forbidden" || f.kind == "restricted_match" {
                s.entitlement_breaches += 1;
            }
        }
        if let Some(ap) = &a.approved {
            self.regression.add(ap);
            self.rouge_l += ap.rouge_l;
            self.bleu += ap.bleu;
            self.approved += 1;
        }
    }

    /// Counts one rejected line.
    pub fn rejected(&mut self, r: &RejectedLine) {
        self.s.lines_rejected += 1;
        if r.internal_error_in.is_some() {
            self.s.internal_errors += 1;
        }
    }

    /// The summary, with the gate decided under `config`.
    ///
    /// An answer whose check failed internally always fails the gate: its line was read
    /// but not checked, so a pass would vouch for an answer nobody looked at, and
    /// `allow_rejected_lines` only forgives lines the log itself got wrong.
    pub fn finish(self, config: &Config, lines_read: usize) -> Summary {
        let mut s = self.s;
        s.lines_read = lines_read;
        if self.approved > 0 {
            s.approved_mean_rouge_l = Some(round6(self.rouge_l / self.approved as f64));
            s.approved_mean_bleu = Some(round6(self.bleu / self.approved as f64));
        }
        s.approved = self.regression.summary(config);
        let mut reasons = Vec::new();
        if s.answers_failed > 0 {
            let list: Vec<String> =
                self.gate_kinds.iter().map(|(k, n)| format!("{k} ×{n}")).collect();
            reasons.push(format!(
                "{} of {} answers fail the gate (fail_on = [{}], max_unsupported = {}): {}",
                s.answers_failed,
                s.answers_checked,
                config.gate.fail_on.join(", "),
                config.gate.max_unsupported,
                list.join(", ")
            ));
        }
        let unreadable = s.lines_rejected - s.internal_errors;
        if unreadable > 0 && !config.gate.allow_rejected_lines {
            reasons.push(format!(
                "{unreadable} line(s) of the answers file could not be read (allow_rejected_lines = false)"
            ));
        }
        if s.internal_errors > 0 {
            reasons.push(format!(
                "{} answer(s) could not be checked because of an internal error (a defect of \
                 plumbline; see `rejected`), which fails the gate whatever allow_rejected_lines says",
                s.internal_errors
            ));
        }
        s.gate = GateResult { passed: reasons.is_empty(), reasons };
        s
    }
}

/// Counts, gate and the rest of the summary from the checked answers.
pub fn summarise(
    config: &Config,
    answers: &[AnswerFindings],
    rejected: &[RejectedLine],
    lines_read: usize,
) -> Summary {
    let mut tally = Tally::new();
    answers.iter().for_each(|a| tally.answer(a));
    rejected.iter().for_each(|r| tally.rejected(r));
    tally.finish(config, lines_read)
}

/// Set by [`interrupt`]: the run stops checking and writes nothing.
static INTERRUPTED: AtomicBool = AtomicBool::new(false);

/// Asks a run in progress to stop: no further answer is checked and no output is written
/// (the Ctrl-C handler of `plumbline check` calls this).
pub fn interrupt() {
    INTERRUPTED.store(true, Ordering::SeqCst);
}

/// Whether [`interrupt`] was called.
pub fn is_interrupted() -> bool {
    INTERRUPTED.load(Ordering::SeqCst)
}

/// Where the findings go as answers are checked, in input order.
pub trait FindingsSink {
    /// One checked answer.
    fn answer(&mut self, a: AnswerFindings) -> io::Result<()>;
    /// One rejected line (in line order).
    fn rejected(&mut self, r: RejectedLine) -> io::Result<()>;
}

/// Findings held in memory.
#[derive(Debug, Default)]
pub struct InMemory {
    /// Checked answers.
    pub answers: Vec<AnswerFindings>,
    /// Rejected lines.
    pub rejected: Vec<RejectedLine>,
}

impl FindingsSink for InMemory {
    fn answer(&mut self, a: AnswerFindings) -> io::Result<()> {
        self.answers.push(a);
        Ok(())
    }
    fn rejected(&mut self, r: RejectedLine) -> io::Result<()> {
        self.rejected.push(r);
        Ok(())
    }
}

/// Findings spooled to unnamed temporary files ([`report::spool`]).
pub struct Spooled {
    answers: Spool<AnswerFindings>,
    rejected: Spool<RejectedLine>,
}

impl Spooled {
    /// Two empty spools.
    pub fn new() -> io::Result<Spooled> {
        Ok(Spooled { answers: Spool::new()?, rejected: Spool::new()? })
    }

    /// Reads everything back into memory.
    pub fn into_memory(self) -> io::Result<InMemory> {
        Ok(InMemory {
            answers: self.answers.replay()?.collect::<io::Result<_>>()?,
            rejected: self.rejected.replay()?.collect::<io::Result<_>>()?,
        })
    }
}

impl FindingsSink for Spooled {
    fn answer(&mut self, a: AnswerFindings) -> io::Result<()> {
        self.answers.push(&a)
    }
    fn rejected(&mut self, r: RejectedLine) -> io::Result<()> {
        self.rejected.push(&r)
    }
}

/// What reading the log produced besides the findings that went to the sink.
#[derive(Debug, Clone)]
pub struct LogRecord {
    /// The summary, gate decided.
    pub summary: Summary,
    /// Size and digest of what was read.
    pub answers_file: InputFile,
    /// Which reviewer decisions waived something.
    pub used: Vec<bool>,
}

/// How one answer's check ended.
enum Checking {
    Done(Box<Checked>),
    Failed(RejectedLine),
    Skipped,
}

/// Reads the answers log and checks every answer, sending findings to `sink` in input
/// order. Returns `None` when the run was interrupted ([`interrupt`]).
///
/// Each answer is checked behind a panic boundary: a panic becomes a [`RejectedLine`]
/// naming the answer's id and the panic's message, and the run goes on.
pub fn read_and_check(
    inputs: &RunInputs,
    ctx: &Context<'_>,
    loaded: &Loaded,
    verbosity: Verbosity,
    sink: &mut dyn FindingsSink,
) -> Result<Option<LogRecord>> {
    let from_stdin = inputs.answers.as_os_str() == "-";
    let source: Box<dyn Read> =
        if from_stdin {
            Box::new(io::stdin().lock())
        } else {
            Box::new(File::open(&inputs.answers).map_err(|e| {
                UsageError(format!("cannot read {}: {e}", inputs.answers.display()))
            })?)
        };
    // The total is only worth a second pass over the file when a bar will show it.
    let total_lines = if from_stdin || !shows_progress(verbosity) {
        None
    } else {
        count_lines(&inputs.answers).ok()
    };
    let mut hashing = Hashing { inner: source, hasher: Sha256::new(), bytes: 0 };
    let limits = ReaderLimits::from(&loaded.config.limits);
    let progress = progress_bar(verbosity, total_lines);
    // A deliberate failure for the tests of the panic boundary; compiled into debug
    // builds only, so a release binary has no such switch.
    #[cfg(debug_assertions)]
    let fail_on = std::env::var("PLUMBLINE_DEBUG_PANIC_ON_ID").ok();

    let mut tally = Tally::new();
    let mut used = vec![false; ctx.decisions.len()];
    let mut other_shards = 0usize;
    let reports_rejected = inputs.shard.is_none_or(|s| s.reports_rejected());
    let lines_read;
    {
        let mut reader =
            AnswerReader::with_limits(BufReader::with_capacity(1 << 16, &mut hashing), limits)
                .with_map(Arc::clone(&loaded.map));
        loop {
            if is_interrupted() {
                progress.abandon();
                return Ok(None);
            }
            let batch = next_batch(&mut reader);
            if batch.is_empty() {
                break;
            }
            let mut todo = Vec::with_capacity(batch.len());
            let mut rejected = Vec::new();
            for item in batch {
                match item {
                    Ok(a) if inputs.shard.is_none_or(|s| s.owns(&a.id)) => todo.push(a),
                    Ok(_) => other_shards += 1,
                    Err(r) if reports_rejected => {
                        rejected.push(RejectedLine::unreadable(r.line, r.error))
                    }
                    Err(_) => other_shards += 1,
                }
            }
            // A database read lazily: a store of the rows this batch cites.
            let batch_store: Option<(Store, Index)> = match &loaded.lazy {
                Some(lazy) if !todo.is_empty() => {
                    let mut lazy =
                        lazy.lock().map_err(|_| anyhow::anyhow!("store reader failed"))?;
                    Some(lazy.for_answers(&todo).map_err(|e| UsageError(e.to_string()))?)
                }
                _ => None,
            };
            let batch_ctx =
                batch_store.as_ref().map(|(store, index)| Context { store, index, ..*ctx });
            let ctx = batch_ctx.as_ref().unwrap_or(ctx);
            let results: Vec<Checking> = todo
                .par_iter()
                .map(|a| {
                    if is_interrupted() {
                        return Checking::Skipped;
                    }
                    let checked = catch_unwind(AssertUnwindSafe(|| {
                        #[cfg(debug_assertions)]
                        if fail_on.as_deref() == Some(a.id.as_str()) {
                            panic!("deliberate failure (PLUMBLINE_DEBUG_PANIC_ON_ID)");
                        }
                        let mut c = check_answer(ctx, a);
                        add_pages(ctx.store, &mut c);
                        c
                    }));
                    match checked {
                        Ok(c) => Checking::Done(Box::new(c)),
                        Err(p) => Checking::Failed(RejectedLine {
                            line: a.line,
                            error: format!(
                                "answer {}: internal error while checking: {}",
                                json_quote(&a.id),
                                panic_message(p.as_ref())
                            ),
                            internal_error_in: Some(a.id.clone()),
                        }),
                    }
                })
                .collect();
            if is_interrupted() {
                progress.abandon();
                return Ok(None);
            }
            let n = results.len() as u64;
            for r in results {
                match r {
                    Checking::Done(c) => {
                        let c = *c;
                        for i in c.used_decisions {
                            used[i] = true;
                        }
                        tally.answer(&c.findings);
                        sink.answer(c.findings).context("spooling findings")?;
                    }
                    Checking::Failed(rej) => rejected.push(rej),
                    Checking::Skipped => {}
                }
            }
            // Every rejected line of this batch lies after those of earlier batches.
            rejected.sort_by_key(|r| r.line);
            for r in rejected {
                tally.rejected(&r);
                sink.rejected(r).context("spooling rejected lines")?;
            }
            progress.inc(n);
        }
        if let Some(e) = reader.take_io_error() {
            return Err(UsageError(format!("cannot read {}: {e}", inputs.answers.display())).into());
        }
        lines_read = reader.non_blank_lines() - other_shards;
    }
    progress.finish_and_clear();
    Ok(Some(LogRecord {
        summary: tally.finish(&loaded.config, lines_read),
        answers_file: InputFile {
            path: inputs.answers.display().to_string(),
            size: hashing.bytes,
            sha256: hex(&hashing.hasher.finalize()),
        },
        used,
    }))
}

/// Most answers checked together, in parallel, before their findings are spooled.
const BATCH: usize = 1024;

/// Most text (answers, questions, quotes, in bytes) in one batch: with lines of up to
/// `limits.max_line_bytes` (8 MiB by default), 1,024 of them at once would hold gigabytes,
/// while a batch that stops here holds a few lines' worth. A single line over it still
/// forms a batch of its own.
const BATCH_TEXT_BYTES: usize = 16 << 20;

/// The next batch of read items: up to [`BATCH`] of them, or fewer once their text
/// reaches [`BATCH_TEXT_BYTES`].
fn next_batch<R: BufRead>(
    reader: &mut AnswerReader<R>,
) -> Vec<Result<crate::answers::Answer, crate::answers::Rejected>> {
    let mut batch = Vec::new();
    let mut bytes = 0usize;
    while batch.len() < BATCH && bytes < BATCH_TEXT_BYTES {
        let Some(item) = reader.next() else { break };
        if let Ok(a) = &item {
            bytes += a.answer.len()
                + a.question.as_ref().map_or(0, String::len)
                + a.approved_answer.as_ref().map_or(0, String::len)
                + a.citations
                    .iter()
                    .map(|c| c.quote.as_ref().map_or(0, String::len))
                    .sum::<usize>();
        }
        batch.push(item);
    }
    batch
}

/// The findings document around the given answers and rejected lines (which may be left
/// empty, for [`report::json::write_streamed`]).
pub fn assemble(
    inputs: &RunInputs,
    loaded: &Loaded,
    record: LogRecord,
    answers: Vec<AnswerFindings>,
    rejected: Vec<RejectedLine>,
) -> Result<Report> {
    let opt_record = |p: &Option<PathBuf>| p.as_deref().map(file_record).transpose();
    let stale: Vec<DecisionRecord> = loaded
        .decisions
        .0
        .iter()
        .zip(&record.used)
        .filter(|(_, u)| !**u)
        .map(|(d, _)| DecisionRecord {
            answer: d.answer.clone(),
            sentence: d.sentence,
            r#ref: d.r#ref.clone(),
            finding: d.finding.clone(),
            by: d.by.clone(),
            note: d.note.clone(),
        })
        .collect();
    Ok(Report {
        tool: Tool::default(),
        generated_at: utc_now(),
        command: source::redact_args(&inputs.command),
        shard: inputs.shard.map(|s| ShardRecord {
            k: s.k,
            n: s.n,
            hash: crate::shard::HASH_NAME.to_owned(),
        }),
        merged_from: Vec::new(),
        redact_restricted: inputs.redact_restricted,
        inputs: Inputs {
            answers: record.answers_file,
            principals: opt_record(&inputs.principals)?,
            config: opt_record(&inputs.config)?,
            accept: opt_record(&inputs.accept)?,
            store: store_record(loaded)?,
            input_map: loaded.input_map.clone(),
        },
        config: serde_json::to_value(&loaded.config)?,
        summary: record.summary,
        answers,
        rejected,
        decisions: Decisions {
            applied: record.used.iter().filter(|u| **u).count(),
            stale,
            rejected: loaded
                .decisions
                .1
                .iter()
                .map(|r| RejectedLine::unreadable(r.line, r.error.clone()))
                .collect(),
        },
    })
}

/// Runs `plumbline check` end to end.
///
/// Findings are spooled as answers are checked, so memory does not grow with the log
/// while checking. With `--json` alone (or no output) they are streamed from the spool
/// into the findings file; `--html`, `--junit` and `--sarif` read them back into memory
/// first. Every output is staged and committed only once all of them are complete; an
/// interrupted run ([`interrupt`]) writes none and returns [`Outcome::Interrupted`].
pub fn check(inputs: &RunInputs, outputs: &Outputs, verbosity: Verbosity) -> Result<Outcome> {
    check_with(inputs, &Extras::default(), outputs, verbosity)
}

/// [`check`] with the inputs beyond SPEC.md's.
pub fn check_with(
    inputs: &RunInputs,
    extras: &Extras,
    outputs: &Outputs,
    verbosity: Verbosity,
) -> Result<Outcome> {
    let started = Instant::now();
    let loaded = load_with(inputs, extras)?;
    let ctx = loaded.context(inputs.redact_restricted);
    let mut spooled = Spooled::new().context("creating a temporary file for findings")?;
    let Some(record) = read_and_check(inputs, &ctx, &loaded, verbosity, &mut spooled)? else {
        return Ok(interrupted());
    };
    let needs_memory = outputs.html.is_some() || outputs.junit.is_some() || outputs.sarif.is_some();
    let report = if needs_memory {
        let all = spooled.into_memory().context("reading spooled findings")?;
        let report = assemble(inputs, &loaded, record, all.answers, all.rejected)?;
        if !write_outputs(&report, outputs)? {
            return Ok(interrupted());
        }
        report
    } else {
        let head = assemble(inputs, &loaded, record, Vec::new(), Vec::new())?;
        if !write_json_streamed(&head, spooled, outputs.json.as_deref())? {
            return Ok(interrupted());
        }
        head
    };
    if verbosity != Verbosity::Quiet {
        print_summary(&report, outputs, Some(loaded.store_seconds), started.elapsed());
    }
    Ok(if report.summary.gate.passed { Outcome::Pass } else { Outcome::GateFailed })
}

/// The one line an interrupted run prints.
fn interrupted() -> Outcome {
    let _ = writeln!(io::stderr(), "plumbline: interrupted; no output written");
    Outcome::Interrupted
}

/// Reads the answers log and checks every answer; builds the findings document in memory.
pub fn check_answers(
    inputs: &RunInputs,
    ctx: &Context<'_>,
    loaded: &Loaded,
    verbosity: Verbosity,
) -> Result<(Report, Vec<bool>)> {
    let mut sink = InMemory::default();
    let record = read_and_check(inputs, ctx, loaded, verbosity, &mut sink)?
        .ok_or_else(|| anyhow::anyhow!("interrupted"))?;
    let used = record.used.clone();
    Ok((assemble(inputs, loaded, record, sink.answers, sink.rejected)?, used))
}

/// The store as the run record shows it.
fn store_record(loaded: &Loaded) -> Result<StoreRecord> {
    let problem = |p: &crate::store::StoreProblem| StoreProblemRecord {
        path: p.path.clone(),
        field: p.field.clone(),
        message: p.message.clone(),
    };
    let store = &loaded.store;
    let mut record = StoreRecord {
        path: loaded.store_label.clone(),
        documents: store.documents.len(),
        digest: store.digest.clone(),
        problems: store.problems.iter().map(problem).collect(),
        form: (store.form != StoreForm::Folder).then(|| store.form.as_str().to_owned()),
        ..StoreRecord::default()
    };
    if let Some(cache) = &loaded.cache {
        record.index = Some(SavedIndexRecord {
            path: cache.path.clone(),
            size: cache.size,
            saved_at: cache.header.saved_at.clone(),
            fingerprint: cache.header.fingerprint.clone(),
        });
        record.notes.push(format!(
            "read from the saved index {}, checked against the store (fingerprint {})",
            cache.path, cache.header.fingerprint
        ));
    }
    if let Some(lazy) = &loaded.lazy {
        let lazy = lazy.lock().map_err(|_| anyhow::anyhow!("store reader failed"))?;
        let (n, digest) = lazy.fetched_digest();
        record.documents = n;
        record.digest = digest;
        record.problems = lazy.problems().iter().map(problem).collect();
        record.read = Some("lazy".into());
        record.searched = Some(false);
        let why = match lazy.mode {
            StoreMode::Lazy => "store.mode = \"lazy\"".to_owned(),
            _ => format!(
                "the query returns more than store.full_max_rows = {} rows",
                loaded.config.store.full_max_rows
            ),
        };
        record.notes.push(format!(
            "read lazily ({why}): only the {n} cited documents were fetched, and the digest covers only them"
        ));
        record.notes.push(
            "the store-wide search did not run: no sentence could be found misattributed or a restricted_match; check with the whole store (store.mode = \"full\") to look for them".into(),
        );
    }
    Ok(record)
}

/// Adds the page to every piece of evidence from a PDF.
fn add_pages(store: &Store, checked: &mut Checked) {
    if !store.documents.iter().any(|d| !d.pages.is_empty()) {
        return;
    }
    for s in &mut checked.findings.sentences {
        let all = s
            .evidence
            .iter_mut()
            .chain(s.also_evidence.iter_mut())
            .chain(s.cited_evidence.iter_mut());
        for e in all {
            let Ok(d) = store.resolve(&e.doc) else { continue };
            if d.pages.is_empty() {
                continue;
            }
            e.page = d.page_of(e.start);
            let last = d.page_of(e.end.saturating_sub(1).max(e.start));
            e.page_end = last.filter(|l| Some(*l) != e.page);
        }
    }
}

fn count_lines(path: &Path) -> io::Result<u64> {
    let mut r = BufReader::with_capacity(1 << 16, File::open(path)?);
    let mut n = 0u64;
    loop {
        let buf = r.fill_buf()?;
        if buf.is_empty() {
            break;
        }
        n += buf.iter().filter(|&&b| b == b'\n').count() as u64;
        let len = buf.len();
        r.consume(len);
    }
    Ok(n.max(1))
}

/// Whether a progress bar will be drawn.
fn shows_progress(verbosity: Verbosity) -> bool {
    match verbosity {
        Verbosity::Quiet => false,
        Verbosity::Progress => true,
        Verbosity::Normal => io::stderr().is_terminal(),
    }
}

fn progress_bar(verbosity: Verbosity, total: Option<u64>) -> ProgressBar {
    let target = match verbosity {
        Verbosity::Quiet => return ProgressBar::hidden(),
        // `term` would hide the bar when stderr is not a terminal, which is exactly when
        // `--progress` asks for it; a `TermLike` target draws regardless.
        Verbosity::Progress => {
            ProgressDrawTarget::term_like_with_hz(Box::new(console::Term::stderr()), 10)
        }
        Verbosity::Normal if io::stderr().is_terminal() => ProgressDrawTarget::stderr(),
        Verbosity::Normal => return ProgressBar::hidden(),
    };
    let bar = ProgressBar::with_draw_target(total, target);
    let style = ProgressStyle::with_template(
        "checking {bar:30} {pos}/{len} answers ({per_sec}, {eta} left)",
    )
    .unwrap_or_else(|_| ProgressStyle::default_bar());
    bar.set_style(style);
    // Shown only on runs long enough to need it.
    bar.enable_steady_tick(Duration::from_millis(250));
    bar
}

/// A writer for one output.
type WriteOutput<'a> = Box<dyn FnOnce(&mut dyn Write) -> io::Result<()> + 'a>;

/// Outputs staged to temporary files, and those for stdout, written together by
/// [`Staging::commit`] unless the run was interrupted.
#[derive(Default)]
struct Staging<'a> {
    files: Vec<report::Staged>,
    stdout: Vec<WriteOutput<'a>>,
}

impl<'a> Staging<'a> {
    /// Stages an output for `path`, or keeps its writer for stdout.
    fn add(
        &mut self,
        path: &Path,
        write: impl FnOnce(&mut dyn Write) -> io::Result<()> + 'a,
    ) -> Result<()> {
        if report::is_stdout(path) {
            self.stdout.push(Box::new(write));
        } else {
            let staged = report::stage(path, write)
                .with_context(|| format!("writing {}", path.display()))?;
            self.files.push(staged);
        }
        Ok(())
    }

    /// Moves every staged output into place and writes the stdout ones; nothing at all
    /// when the run was interrupted (the staged files are removed). Returns whether the
    /// outputs were written.
    fn commit(self) -> Result<bool> {
        if is_interrupted() {
            return Ok(false);
        }
        for staged in self.files {
            let path = staged.path().to_path_buf();
            staged.commit().with_context(|| format!("writing {}", path.display()))?;
        }
        for write in self.stdout {
            let mut out = io::stdout().lock();
            write(&mut out).context("writing to stdout")?;
            out.flush().context("writing to stdout")?;
        }
        Ok(true)
    }
}

/// Writes every requested output of a report held in memory: all are staged first and
/// committed together. Returns `false`, having written nothing, when the run was
/// interrupted.
pub fn write_outputs(report: &Report, outputs: &Outputs) -> Result<bool> {
    let mut staging = Staging::default();
    if let Some(path) = &outputs.json {
        let bytes = report::json::to_bytes(report)?;
        staging.add(path, move |w| w.write_all(&bytes))?;
    }
    if let Some(path) = &outputs.html {
        let text = report::html::render(report)?;
        staging.add(path, move |w| w.write_all(text.as_bytes()))?;
    }
    if let Some(path) = &outputs.junit {
        let text = report::junit::render(report);
        staging.add(path, move |w| w.write_all(text.as_bytes()))?;
    }
    if let Some(path) = &outputs.sarif {
        let columns = report::locate::locate(report);
        let bytes = report::sarif::render_located(report, columns.as_ref())?;
        staging.add(path, move |w| w.write_all(&bytes))?;
    }
    staging.commit()
}

/// Writes the findings JSON (if asked for) with the answers and rejected lines streamed
/// from their spools. Returns `false`, having written nothing, when interrupted.
fn write_json_streamed(head: &Report, spooled: Spooled, json: Option<&Path>) -> Result<bool> {
    let Some(path) = json else { return Ok(!is_interrupted()) };
    let Spooled { answers, rejected } = spooled;
    // Writing a large findings file takes a while: an interruption stops it between
    // answers (the staged file is then removed).
    let stop = |item| if is_interrupted() { Err(io::Error::other("interrupted")) } else { item };
    let mut staging = Staging::default();
    let staged = staging.add(path, move |w| {
        let answers = answers.replay()?.map(stop);
        report::json::write_streamed(w, head, answers, rejected.replay()?)
    });
    match staged {
        Err(_) if is_interrupted() => Ok(false),
        Err(e) => Err(e),
        Ok(()) => staging.commit(),
    }
}

/// The terminal summary on stderr.
///
/// `store_seconds` is the time spent loading the store, where this process loaded it.
pub fn print_summary(
    report: &Report,
    outputs: &Outputs,
    store_seconds: Option<f64>,
    elapsed: Duration,
) {
    let loaded = store_seconds.map_or_else(String::new, |t| format!(" ({t:.2}s)"));
    let s = &report.summary;
    let mut err = io::stderr().lock();
    let nonzero = |m: &BTreeMap<String, usize>| -> String {
        let v: Vec<String> =
            m.iter().filter(|(_, n)| **n > 0).map(|(k, n)| format!("{k} {n}")).collect();
        if v.is_empty() { "none".into() } else { v.join(", ") }
    };
    let _ = writeln!(
        err,
        "plumbline: {} answers checked, {} lines rejected ({} non-blank lines read); store {} documents{loaded}",
        s.answers_checked, s.lines_rejected, s.lines_read, report.inputs.store.documents
    );
    let _ = writeln!(err, "  sentences: {}", nonzero(&s.verdicts));
    let _ = writeln!(err, "  flags:     {}", nonzero(&s.flags));
    let _ = writeln!(err, "  citations: {}", nonzero(&s.citations));
    let _ = writeln!(
        err,
        "  findings:  {} errors, {} warnings, {} accepted by a reviewer; {} entitlement breaches",
        s.errors, s.warnings, s.accepted, s.entitlement_breaches
    );
    if !report.decisions.stale.is_empty() {
        let _ = writeln!(
            err,
            "  reviewer decisions: {} applied, {} stale (match nothing)",
            report.decisions.applied,
            report.decisions.stale.len()
        );
    }
    for note in &report.inputs.store.notes {
        let _ = writeln!(err, "  store: {note}");
    }
    if !report.inputs.store.problems.is_empty() {
        let _ = writeln!(
            err,
            "  store: {} entries skipped (see inputs.store.problems)",
            report.inputs.store.problems.len()
        );
    }
    if let Some(ap) = &s.approved {
        let mut line = format!(
            "  approved answers: {}, mean ROUGE-L F {:.3}, mean BLEU {:.1}",
            ap.answers, ap.mean_rouge_l, ap.mean_bleu
        );
        if let (Some(min), Some(n)) = (ap.min_rouge_l, ap.below_rouge_l) {
            line.push_str(&format!("; {n} below min_rouge_l {min}"));
        }
        if let (Some(min), Some(n)) = (ap.min_bleu, ap.below_bleu) {
            line.push_str(&format!("; {n} below min_bleu {min}"));
        }
        let _ = writeln!(err, "{line}");
    }
    let _ = writeln!(err, "  answers:   {} pass, {} fail", s.answers_passed, s.answers_failed);
    if let Some(sh) = &report.shard {
        let _ = writeln!(
            err,
            "  shard {} of {}: only the answers whose id hashes here; `plumbline merge` joins the shards",
            sh.k, sh.n
        );
    }
    if s.gate.passed {
        let _ = writeln!(err, "gate: PASS");
    } else {
        let _ = writeln!(err, "gate: FAIL");
        for r in &s.gate.reasons {
            let _ = writeln!(err, "  - {r}");
        }
    }
    for (label, path) in [
        ("findings", &outputs.json),
        ("report", &outputs.html),
        ("junit", &outputs.junit),
        ("sarif", &outputs.sarif),
    ] {
        if let Some(p) = path.as_ref().filter(|p| p.as_os_str() != "-") {
            let _ = writeln!(err, "  {label}: {}", p.display());
        }
    }
    let _ = writeln!(err, "  took {:.2}s", elapsed.as_secs_f64());
    let _ = writeln!(
        err,
        "A lexical check is evidence for a reviewer, not proof: the reviewer decides."
    );
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rfc3339_known_instants() {
        assert_eq!(rfc3339(0), "1970-01-01T00:00:00Z");
        // 2000-02-29 (a leap day of a year divisible by 400) at 12:34:56.
        assert_eq!(rfc3339(951_827_696), "2000-02-29T12:34:56Z");
        assert_eq!(rfc3339(1_780_000_000), "2026-05-28T20:26:40Z");
    }
}
