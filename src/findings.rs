//! The findings document: what a run found, as plain data that every writer reads.
//!
//! This is the machine-readable output of `plumbline check --json` (SPEC.md, "The
//! findings document"). Field names here are the stable contract; new fields may be added
//! but none renamed. Serialisation is deterministic: maps are ordered, floats are rounded
//! to six decimals where they are scores, and the only field that changes between two
//! runs over the same inputs is `generated_at`.
//!
//! # Format
//!
//! ```text
//! {
//!   "tool":   {"name": "plumbline", "version": "0.1.0"},
//!   "generated_at": "2026-12-01T10:00:00Z",
//!   "command": ["plumbline", "check", ...],
//!   "shard"?: {"k", "n", "hash"},                 (check --shard K/N only)
//!   "merged_from"?: [{"path", "sha256", "generated_at", "shard"?}],   (merge only)
//!   "redact_restricted"?: true,                   (--redact-restricted only)
//!   "inputs": {"answers": {"path", "size", "sha256"}, "principals"?, "config"?, "accept"?,
//!              "store": {"path", "documents", "digest", "problems": [{"path","field"?,"message"}],
//!                        "form"?, "read"?, "searched"?, "notes"?, "index"?: {"path", "size",
//!                        "saved_at", "fingerprint"}},
//!              "input_map"?},
//!   "config": { effective settings, see config.rs },
//!   "summary": Summary,
//!   "answers": [AnswerFindings],
//!   "rejected": [{"line", "error", "internal_error_in"?}],
//!   "decisions": {"applied", "stale": [Decision]}
//! }
//! ```
//!
//! `AnswerFindings`: `id`, `line`, `user`, `groups`, `question`, `passed`, `sentences`,
//! `citations`, `findings`, and `approved` (ROUGE/BLEU against `approved_answer`).
//!
//! `SentenceFindings`: `index` (0-based), `text` (markers removed), `span` (`{start, end}`
//! bytes of the answer), `refs`, `verdict` (`supported` | `partial` | `unsupported` |
//! `no_claim`), `score` (0..1), `flags`, `evidence` (`{doc, start, end, text}` — file byte
//! offsets — or null), plus `matched` (byte ranges of the evidence that match words of the
//! sentence), `figures` (figures of the sentence absent from the evidence),
//! `changed_terms`, and `cited_evidence` where `evidence` names another document
//! (`misattributed`, `restricted_match`). Evidence carries the `access` of its document
//! where known, and for a PDF the `page` it starts on (and `page_end` where it ends on
//! another).
//!
//! `CitationFindings`: `ref`, `doc`, `status`, `detail`, the resolved passage, and the
//! cited document's `access` where known.
//!
//! `Finding`: `{kind, sentence?, ref?, severity, message, gate, accepted?}` where `gate`
//! says whether it fails the gate under the effective config.
//!
//! `Summary`: counts (`lines_read`, `answers_checked`, `lines_rejected`, `answers_passed`,
//! `answers_failed`, `verdicts`, `flags`, `citations`, `errors`, `warnings`, `accepted`,
//! `gate_failures`, `entitlement_breaches`), `gate` (`{passed, reasons}`), and where any
//! answer has an approved answer `approved_mean_rouge_l`, `approved_mean_bleu` and `approved`
//! (`{answers, mean_rouge1, mean_rouge2, mean_rougeL, mean_bleu}` and, for each of
//! `regression.min_rouge_l` / `min_bleu` that is set, the threshold, the count below it
//! and its share: `min_rouge_l`, `below_rouge_l`, `share_below_rouge_l`, `min_bleu`,
//! `below_bleu`, `share_below_bleu`).
//!
//! A document made by `check --shard K/N` covers only that shard's answers (and, for
//! shard 1, every rejected line); `plumbline merge` joins such documents into one whose
//! every field but the run record (`generated_at`, `command`, `shard`, `merged_from`)
//! equals that of the unsharded run.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

/// Whether a sentence's claim is carried by its cited text.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    /// The cited text carries the sentence.
    Supported,
    /// Some of the sentence is carried, some is not.
    Partial,
    /// The cited text does not carry it.
    Unsupported,
    /// Nothing to check (greeting, offer of help, a question back).
    NoClaim,
}

impl Verdict {
    /// Every verdict, in report order.
    pub const ALL: [Verdict; 4] =
        [Verdict::Supported, Verdict::Partial, Verdict::Unsupported, Verdict::NoClaim];

    /// The name used in JSON.
    pub fn as_str(self) -> &'static str {
        match self {
            Verdict::Supported => "supported",
            Verdict::Partial => "partial",
            Verdict::Unsupported => "unsupported",
            Verdict::NoClaim => "no_claim",
        }
    }
}

/// A sentence flag (SPEC.md, "Sentence flags").
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Flag {
    /// A marker names a ref no citation of the answer carries.
    UnknownRef,
    /// A figure of the sentence is absent from or different in the evidence.
    NumberMismatch,
    /// The sentence and its evidence disagree in polarity.
    NegationMismatch,
    /// A content word stands where the evidence has a different one.
    ChangedTerm,
    /// The answer uses markers but this sentence has none.
    Uncited,
    /// Another document supports the sentence clearly better than what it cites.
    Misattributed,
    /// The sentence closely matches a document the user may not read.
    RestrictedMatch,
}

impl Flag {
    /// Every flag, in report order.
    pub const ALL: [Flag; 7] = [
        Flag::NumberMismatch,
        Flag::ChangedTerm,
        Flag::NegationMismatch,
        Flag::RestrictedMatch,
        Flag::Misattributed,
        Flag::UnknownRef,
        Flag::Uncited,
    ];

    /// The name used in JSON and in `fail_on`.
    pub fn as_str(self) -> &'static str {
        match self {
            Flag::UnknownRef => "unknown_ref",
            Flag::NumberMismatch => "number_mismatch",
            Flag::NegationMismatch => "negation_mismatch",
            Flag::ChangedTerm => "changed_term",
            Flag::Uncited => "uncited",
            Flag::Misattributed => "misattributed",
            Flag::RestrictedMatch => "restricted_match",
        }
    }
}

/// The status of one citation (SPEC.md, "Per citation").
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum CitationStatus {
    /// Resolved, readable by the user, and used by some sentence.
    Ok,
    /// No such document, or a path outside the store.
    Dead,
    /// Offsets out of range or off a character boundary, or an unknown chunk.
    BadLocator,
    /// The quote is not found in the cited passage.
    QuoteMismatch,
    /// The sha256 differs from the document file in the store.
    Stale,
    /// The user's groups do not include the document's access.
    Forbidden,
    /// The document's access is unknown.
    AccessUnknown,
    /// The user's groups are unknown.
    PrincipalUnknown,
    /// Resolved, but supports no sentence of the answer.
    Unused,
}

impl CitationStatus {
    /// Every status, in report order.
    pub const ALL: [CitationStatus; 9] = [
        CitationStatus::Ok,
        CitationStatus::Dead,
        CitationStatus::BadLocator,
        CitationStatus::QuoteMismatch,
        CitationStatus::Stale,
        CitationStatus::Forbidden,
        CitationStatus::AccessUnknown,
        CitationStatus::PrincipalUnknown,
        CitationStatus::Unused,
    ];

    /// The name used in JSON and in `fail_on`.
    pub fn as_str(self) -> &'static str {
        match self {
            CitationStatus::Ok => "ok",
            CitationStatus::Dead => "dead",
            CitationStatus::BadLocator => "bad_locator",
            CitationStatus::QuoteMismatch => "quote_mismatch",
            CitationStatus::Stale => "stale",
            CitationStatus::Forbidden => "forbidden",
            CitationStatus::AccessUnknown => "access_unknown",
            CitationStatus::PrincipalUnknown => "principal_unknown",
            CitationStatus::Unused => "unused",
        }
    }
}

/// How serious a finding is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Severity {
    /// The answer or citation is wrong.
    Error,
    /// Something a reviewer should look at.
    Warning,
}

/// A byte range.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct Span {
    /// Start byte (inclusive).
    pub start: usize,
    /// End byte (exclusive).
    pub end: usize,
}

/// The passage that best supports a sentence.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Evidence {
    /// Document id.
    pub doc: String,
    /// Start byte in the document file.
    pub start: usize,
    /// End byte in the document file (exclusive).
    pub end: usize,
    /// Visible text of the window (or a redaction notice under `--redact-restricted`).
    pub text: String,
    /// Support score of this window for the sentence.
    pub score: f64,
    /// Ranges of `text` (bytes, relative to `text`) that match words of the sentence.
    pub matched: Vec<Span>,
    /// The groups that may read the document (its own access list, else the store's
    /// default; absent when unknown), so that a reader can see whom it was meant for.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub access: Option<Vec<String>>,
    /// For a PDF, the 1-based page the evidence starts on.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub page: Option<u32>,
    /// For a PDF, the page it ends on, where that is another page.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub page_end: Option<u32>,
}

/// A content word that stands where the evidence has another.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct ChangedTerm {
    /// The word in the sentence.
    pub claim: String,
    /// The word in the evidence.
    pub evidence: String,
}

/// The findings of one sentence.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SentenceFindings {
    /// 0-based position in the answer.
    pub index: usize,
    /// Text with citation markers removed.
    pub text: String,
    /// Byte range in the answer text (markers included).
    pub span: Span,
    /// Citation refs tied to this sentence.
    pub refs: Vec<String>,
    /// The verdict.
    pub verdict: Verdict,
    /// Support score in 0..1.
    pub score: f64,
    /// Flags raised.
    pub flags: Vec<Flag>,
    /// Best supporting window, or null.
    pub evidence: Option<Evidence>,
    /// When the sentence cites several passages and takes a part from each, the windows
    /// of the other passages that carry the rest (`evidence` holds the first part and
    /// the score of the parts together).
    #[serde(skip_serializing_if = "Vec::is_empty", default)]
    pub also_evidence: Vec<Evidence>,
    /// The best window among the cited passages, when `evidence` names another document.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub cited_evidence: Option<Evidence>,
    /// Figures of the sentence absent from or different in the evidence, as the sentence
    /// writes them.
    #[serde(skip_serializing_if = "Vec::is_empty", default)]
    pub figures: Vec<String>,
    /// Changed content words.
    #[serde(skip_serializing_if = "Vec::is_empty", default)]
    pub changed_terms: Vec<ChangedTerm>,
}

/// The findings of one citation.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CitationFindings {
    /// The citation's ref.
    #[serde(rename = "ref")]
    pub r#ref: String,
    /// The document it names.
    pub doc: String,
    /// The status.
    pub status: CitationStatus,
    /// A readable reason, where useful.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub detail: Option<String>,
    /// The resolved passage in file bytes, when resolved.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub passage: Option<Span>,
    /// Indices of the sentences it supports best.
    #[serde(default)]
    pub used_by: Vec<usize>,
    /// The groups that may read the cited document, when it resolved and its access is
    /// known.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub access: Option<Vec<String>>,
}

/// A reviewer's waiver of a finding.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Acceptance {
    /// Reviewer id.
    pub by: String,
    /// Why.
    pub note: String,
}

/// One problem, as a list item.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Finding {
    /// Finding kind: a flag, a citation status, `unsupported` or `partial`.
    pub kind: String,
    /// The sentence it concerns.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub sentence: Option<usize>,
    /// The citation it concerns.
    #[serde(rename = "ref", skip_serializing_if = "Option::is_none", default)]
    pub r#ref: Option<String>,
    /// Error or warning.
    pub severity: Severity,
    /// A readable message.
    pub message: String,
    /// Whether it fails the gate under the effective config.
    pub gate: bool,
    /// A reviewer decision that waived it.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub accepted: Option<Acceptance>,
}

/// ROUGE and BLEU of an answer against its approved answer.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ApprovedComparison {
    /// ROUGE-1 F.
    pub rouge1: f64,
    /// ROUGE-2 F.
    pub rouge2: f64,
    /// ROUGE-L F.
    #[serde(rename = "rougeL")]
    pub rouge_l: f64,
    /// Sentence BLEU, 0–100.
    pub bleu: f64,
}

/// All findings of one answer.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AnswerFindings {
    /// Answer id.
    pub id: String,
    /// Line of the answers file.
    pub line: usize,
    /// User who asked.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub user: Option<String>,
    /// The groups the entitlement check used (null when unknown).
    pub groups: Option<Vec<String>>,
    /// The question.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub question: Option<String>,
    /// The answer text as logged.
    pub answer: String,
    /// Whether the answer passes the gate.
    pub passed: bool,
    /// Per sentence.
    pub sentences: Vec<SentenceFindings>,
    /// Per citation.
    pub citations: Vec<CitationFindings>,
    /// Every problem.
    pub findings: Vec<Finding>,
    /// Comparison with `approved_answer`, when given.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub approved: Option<ApprovedComparison>,
}

/// An input file as recorded in the run record.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct InputFile {
    /// Path as given.
    pub path: String,
    /// Size in bytes.
    pub size: u64,
    /// SHA-256 of its bytes, lower-case hex.
    pub sha256: String,
}

/// A problem found while loading the store.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StoreProblemRecord {
    /// File or manifest entry concerned.
    pub path: String,
    /// Field of the manifest entry, if any.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub field: Option<String>,
    /// What is wrong.
    pub message: String,
}

/// The store as recorded in the run record.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct StoreRecord {
    /// Path as given.
    pub path: String,
    /// Number of documents read.
    pub documents: usize,
    /// SHA-256 over the sorted `id \0 sha256 \n` lines of its documents.
    pub digest: String,
    /// Entries that were skipped, and why.
    pub problems: Vec<StoreProblemRecord>,
    /// Where the store is not a folder: `chunks`, `sqlite` or `postgres`.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub form: Option<String>,
    /// `lazy` where only the cited rows of a database were read; absent when the whole
    /// store was.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub read: Option<String>,
    /// False where the store-wide search (`misattributed`, `restricted_match`) could not
    /// run; absent when it ran.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub searched: Option<bool>,
    /// What a reader of the findings must know about how the store was read.
    #[serde(skip_serializing_if = "Vec::is_empty", default)]
    pub notes: Vec<String>,
    /// The saved index the run used instead of reading the store (`check --index`).
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub index: Option<SavedIndexRecord>,
}

/// A saved index as recorded in the run record.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct SavedIndexRecord {
    /// Path as given.
    pub path: String,
    /// Size in bytes.
    pub size: u64,
    /// When it was saved.
    pub saved_at: String,
    /// The store fingerprint it was saved with, which the run checked against the store.
    pub fingerprint: String,
}

/// Every input of the run.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Inputs {
    /// The answers file (`-` for stdin: size and digest of what was read).
    pub answers: InputFile,
    /// The principals file.
    pub principals: Option<InputFile>,
    /// The config file.
    pub config: Option<InputFile>,
    /// The reviewer decisions file.
    pub accept: Option<InputFile>,
    /// The store.
    pub store: StoreRecord,
    /// The field map file (`--input-map`), where one was given.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub input_map: Option<InputFile>,
}

/// A line of the answers file that could not be read as an answer, or an answer whose
/// check failed internally.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct RejectedLine {
    /// 1-based line number.
    pub line: usize,
    /// Why, naming the field.
    pub error: String,
    /// Set only for an answer that was read but could not be checked because of an
    /// internal error (a defect of plumbline): the answer's id. Such an entry fails the
    /// gate whatever `gate.allow_rejected_lines` says.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub internal_error_in: Option<String>,
}

impl RejectedLine {
    /// A line that could not be read as an answer.
    pub fn unreadable(line: usize, error: impl Into<String>) -> RejectedLine {
        RejectedLine { line, error: error.into(), internal_error_in: None }
    }
}

/// Counts of one run.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct Summary {
    /// Non-blank lines of the answers file.
    pub lines_read: usize,
    /// Answers checked.
    pub answers_checked: usize,
    /// Lines rejected (`answers_checked + lines_rejected = lines_read`).
    pub lines_rejected: usize,
    /// Of the lines rejected, answers whose check failed internally (a defect of
    /// plumbline, never the input's fault); any fails the gate.
    #[serde(default)]
    pub internal_errors: usize,
    /// Answers that pass the gate.
    pub answers_passed: usize,
    /// Answers that fail it.
    pub answers_failed: usize,
    /// Sentences by verdict.
    pub verdicts: BTreeMap<String, usize>,
    /// Sentences by flag.
    pub flags: BTreeMap<String, usize>,
    /// Citations by status.
    pub citations: BTreeMap<String, usize>,
    /// Findings that are errors.
    pub errors: usize,
    /// Findings that are warnings.
    pub warnings: usize,
    /// Findings waived by a reviewer.
    pub accepted: usize,
    /// Findings that fail the gate.
    pub gate_failures: usize,
    /// Forbidden citations plus restricted matches.
    pub entitlement_breaches: usize,
    /// Mean ROUGE-L F against approved answers, where given.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub approved_mean_rouge_l: Option<f64>,
    /// Mean BLEU against approved answers, where given.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub approved_mean_bleu: Option<f64>,
    /// Agreement with the approved answers, where any answer has one
    /// ([`crate::regression`]).
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub approved: Option<ApprovedSummary>,
    /// The gate's decision.
    pub gate: GateResult,
}

/// Agreement of the answers with their approved answers, over the answers that have one.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct ApprovedSummary {
    /// Answers with an `approved_answer`.
    pub answers: usize,
    /// Mean ROUGE-1 F.
    pub mean_rouge1: f64,
    /// Mean ROUGE-2 F.
    pub mean_rouge2: f64,
    /// Mean ROUGE-L F.
    #[serde(rename = "mean_rougeL")]
    pub mean_rouge_l: f64,
    /// Mean sentence BLEU, 0–100.
    pub mean_bleu: f64,
    /// `regression.min_rouge_l`, when set.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub min_rouge_l: Option<f64>,
    /// Answers whose ROUGE-L F is below `min_rouge_l` (when set).
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub below_rouge_l: Option<usize>,
    /// `below_rouge_l / answers`, rounded to six decimals (when set).
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub share_below_rouge_l: Option<f64>,
    /// `regression.min_bleu`, when set.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub min_bleu: Option<f64>,
    /// Answers whose BLEU is below `min_bleu` (when set).
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub below_bleu: Option<usize>,
    /// `below_bleu / answers`, rounded to six decimals (when set).
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub share_below_bleu: Option<f64>,
}

/// The part of a sharded run a findings document covers (`check --shard K/N`).
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct ShardRecord {
    /// This shard, 1-based.
    pub k: u64,
    /// Number of shards.
    pub n: u64,
    /// How ids are assigned to shards (see [`crate::shard`]).
    pub hash: String,
}

/// One findings file a merged run was joined from (`plumbline merge`).
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct PartRecord {
    /// Path as given to `merge`.
    pub path: String,
    /// SHA-256 of the file's bytes.
    pub sha256: String,
    /// When that part was made.
    pub generated_at: String,
    /// The shard it covers.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub shard: Option<ShardRecord>,
}

/// The gate's decision and the rules that decided it.
#[derive(Debug, Clone, PartialEq, Eq, Default, Serialize, Deserialize)]
pub struct GateResult {
    /// True when every answer passes and no rejected line fails the run.
    pub passed: bool,
    /// Readable reasons, one per rule that failed (empty when passed).
    pub reasons: Vec<String>,
}

/// A reviewer decision as recorded in the output.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct DecisionRecord {
    /// Answer id.
    pub answer: String,
    /// Sentence index, if the decision names one.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub sentence: Option<usize>,
    /// Citation ref, if the decision names one.
    #[serde(rename = "ref", skip_serializing_if = "Option::is_none", default)]
    pub r#ref: Option<String>,
    /// Finding kind.
    pub finding: String,
    /// Reviewer.
    pub by: String,
    /// Why.
    pub note: String,
}

/// What happened to the reviewer decisions.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct Decisions {
    /// Findings waived.
    pub applied: usize,
    /// Decisions that matched no finding.
    pub stale: Vec<DecisionRecord>,
    /// Lines of the decisions file that could not be read.
    pub rejected: Vec<RejectedLine>,
}

/// Name and version of the tool.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Tool {
    /// Always `plumbline`.
    pub name: String,
    /// Crate version.
    pub version: String,
}

impl Default for Tool {
    fn default() -> Self {
        Tool { name: "plumbline".into(), version: env!("CARGO_PKG_VERSION").into() }
    }
}

/// The whole findings document.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Report {
    /// The tool.
    pub tool: Tool,
    /// UTC time of the run, RFC 3339.
    pub generated_at: String,
    /// The command line, as arguments.
    pub command: Vec<String>,
    /// The shard this document covers, for `check --shard K/N`.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub shard: Option<ShardRecord>,
    /// The shard files a merged run was joined from (`plumbline merge`).
    #[serde(skip_serializing_if = "Vec::is_empty", default)]
    pub merged_from: Vec<PartRecord>,
    /// Whether restricted documents' text was withheld (`--redact-restricted`).
    #[serde(skip_serializing_if = "is_false", default)]
    pub redact_restricted: bool,
    /// Every input with its digest.
    pub inputs: Inputs,
    /// The effective settings.
    pub config: serde_json::Value,
    /// Counts and the gate.
    pub summary: Summary,
    /// Per answer, in input order.
    pub answers: Vec<AnswerFindings>,
    /// Lines that could not be read.
    pub rejected: Vec<RejectedLine>,
    /// Reviewer decisions.
    pub decisions: Decisions,
}

fn is_false(b: &bool) -> bool {
    !*b
}

/// Rounds a score to six decimals so that output is stable across platforms.
pub fn round6(x: f64) -> f64 {
    (x * 1e6).round() / 1e6
}

/// Every finding kind with a one-line description, in report order: the vocabulary of
/// the gate (`fail_on`), of SARIF rules and of the report's legend.
pub const KIND_DESCRIPTIONS: &[(&str, &str)] = &[
    ("unsupported", "A sentence that its cited passages do not carry."),
    ("partial", "A sentence that its cited passages carry only in part."),
    (
        "number_mismatch",
        "A figure, amount, date, time or percentage of the sentence is absent from or different in the evidence.",
    ),
    (
        "changed_term",
        "Aligned with its evidence, the sentence puts a different content word where the evidence has another (an opposite, another quantifier, another identifier).",
    ),
    ("negation_mismatch", "The sentence and its evidence disagree in polarity."),
    ("restricted_match", "The sentence closely matches a document the user may not read."),
    (
        "misattributed",
        "Another document in the store supports the sentence clearly better than what it cites.",
    ),
    ("unknown_ref", "A marker names a ref that no citation of the answer carries."),
    ("uncited", "The answer uses markers but this sentence makes a claim without one."),
    ("dead", "The citation names no document of the store, or a path outside it."),
    (
        "bad_locator",
        "The citation's offsets are out of range or off a character boundary, or its chunk is unknown.",
    ),
    ("quote_mismatch", "The quote the assistant gave is not found in the cited passage."),
    ("stale", "The document changed since the assistant saw it (sha256 differs)."),
    ("forbidden", "The user's groups do not include the cited document's access."),
    (
        "access_unknown",
        "The cited document has no access list, so the entitlement cannot be decided.",
    ),
    ("principal_unknown", "The user's groups are unknown, so the entitlement cannot be decided."),
    ("unused", "The citation resolves but supports no sentence of the answer."),
    (
        "below_approved_rouge_l",
        "The answer's ROUGE-L F against its approved answer is below regression.min_rouge_l: it leaves out or reorders much of the approved wording.",
    ),
    (
        "below_approved_bleu",
        "The answer's BLEU against its approved answer is below regression.min_bleu: much of its wording does not occur in the approved answer.",
    ),
    ("rejected_line", "A line of the answers file could not be read as an answer."),
];

/// The description of a finding kind (empty for an unknown kind).
pub fn describe(kind: &str) -> &'static str {
    KIND_DESCRIPTIONS.iter().find(|(k, _)| *k == kind).map_or("", |(_, d)| d)
}
