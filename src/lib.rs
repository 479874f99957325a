//! plumbline checks a log of answers from a document-answering assistant against a local
//! document store.
//!
//! For every answer it resolves each citation, splits the answer into sentences, scores
//! each sentence's lexical support against the cited passage, and records the findings
//! (unsupported claims, dead or broken citations, entitlement breaches) that a release gate
//! and a human reviewer act on. It is offline and deterministic.
//!
//! The crate is layered bottom-up; every module only uses the ones listed before it:
//!
//! * [`text`] — normalisation, tokens with byte offsets, figures, sentences;
//! * [`metrics`] — ROUGE, BLEU, Levenshtein, Jaro-Winkler, fuzzy token matching;
//! * [`config`], [`findings`] — plain data: settings and results;
//! * [`store`], [`answers`], [`decisions`] — the inputs, read and validated once;
//! * [`access`], [`citations`], [`support`] — the per-answer checks;
//! * [`shard`], [`identity`], [`regression`] — the shard hash, how a finding is
//!   recognised across runs, approved-answer regression;
//! * [`check`] — runs them over one answer; [`run`] over a whole log;
//! * [`merge`], [`compare`] — join shards' findings into one run; what changed between
//!   two runs;
//! * [`report`] — writers that only read findings;
//! * [`cli`] — one module per subcommand.
//!
//! ```
//! use plumbline::metrics::rouge;
//! let cand = ["police", "killed", "the", "gunman"];
//! let refr = ["police", "kill", "the", "gunman"];
//! let l = rouge::rouge_l(&cand, &refr);
//! assert!((l.f - 0.75).abs() < 1e-12);
//! ```

pub mod text;
pub mod metrics;
pub mod config;
pub mod findings;
pub mod store;
pub mod answers;
pub mod decisions;
pub mod access;
pub mod citations;
pub mod support;
pub mod shard;
pub mod identity;
pub mod regression;
pub mod check;
pub mod run;
pub mod runfile;
pub mod merge;
pub mod compare;
pub mod report;
pub mod cli;
