//! What got better or worse between two runs (`plumbline compare BASE.json NEW.json`).
//!
//! The release loop checks a candidate assistant's answers and compares its findings with
//! those of the version in production. [`compare`] matches the two runs and lists every
//! change:
//!
//! * **Answers** are matched by id. An id only in NEW is *new*; one only in BASE is
//!   *gone*.
//! * **Sentences** of a matched answer are matched by their normalised text
//!   ([`crate::identity::match_text`]); repeated sentences pair up in order. A sentence's
//!   support is *lower* when its verdict drops (supported → partial → unsupported) or its
//!   score falls by `score_drop` or more, and *higher* the other way; a sentence only in
//!   one run is *added* or *removed* (a reworded sentence is both).
//! * **Findings** are matched by kind and subject — the normalised sentence text, the
//!   cited document, or the answer ([`crate::identity::Subject`]) — so renumbered
//!   sentences and refs do not count as changes. A finding only in NEW is *added*, one only
//!   in BASE *resolved*. Every finding of a new answer is added; a gone answer's findings
//!   are not counted as resolved.
//! * **Lines the reader rejected** carry no id: the increase in their number counts as
//!   that many added `rejected_line` findings.
//!
//! A matched answer is *regressed* when it only got worse (added findings, lower support,
//! passed → failed, lower agreement with its approved answer), *improved* when it only got
//! better, *mixed* when both; unchanged answers are not listed.
//!
//! **The decision.** The new run is *worse* when the count of added error-severity
//! findings that no reviewer accepted — on matched and on new answers, plus added
//! rejected lines — exceeds `tolerance` (default 0: any new error). With `strict`, every
//! worse change counts: added warnings, lower support, an answer that now fails, lower
//! agreement with an approved answer. `compare` exits 1 when the new run is worse.
//!
//! A comparison says what changed in the findings, not why: a new store, new settings or
//! a new plumbline change findings as much as a new assistant does. The result records
//! whether the store, the settings, the answers file and the tool are the same, and the
//! report says so first.

use std::collections::{BTreeMap, HashMap};

use serde::{Deserialize, Serialize};

use crate::findings::{
    AnswerFindings, ApprovedComparison, Finding, InputFile, SentenceFindings, Severity, Summary,
    Tool, Verdict,
};
use crate::identity::{Subject, match_text};
use crate::runfile::RunFile;

/// Settings of a comparison.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Settings {
    /// Most counted regressions the new run may have and still not be worse.
    pub tolerance: usize,
    /// Fall in a sentence's support score (0..1) that counts as lower support.
    pub score_drop: f64,
    /// Fall in ROUGE-L F (0..1) against the approved answer that counts as lower agreement.
    pub approved_drop: f64,
    /// Count every worse change, not only added errors.
    pub strict: bool,
}

impl Default for Settings {
    fn default() -> Self {
        // Score and agreement steps: 0.05 on a 0..1 scale, a judgement call (one bin of
        // the report's histogram), not a calibrated value.
        Settings { tolerance: 0, score_drop: 0.05, approved_drop: 0.05, strict: false }
    }
}

/// One side of the comparison: the findings file and what it was a run of.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Side {
    /// The findings file.
    pub file: InputFile,
    /// When that run was made.
    pub generated_at: String,
    /// The plumbline that made it.
    pub tool: Tool,
    /// Its answers file.
    pub answers: InputFile,
    /// Its store's digest.
    pub store_digest: String,
    /// Documents in its store.
    pub store_documents: usize,
    /// Its summary, as recorded.
    pub summary: Summary,
}

/// Which inputs the two runs share.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct Same {
    /// Same plumbline version.
    pub tool: bool,
    /// Same store digest.
    pub store: bool,
    /// Same effective settings.
    pub config: bool,
    /// Same answers file (SHA-256).
    pub answers: bool,
}

/// The two runs and how they were compared.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Header {
    /// The base run (usually the version in production).
    pub base: Side,
    /// The new run (the candidate).
    pub new: Side,
    /// What they share.
    pub same: Same,
    /// The comparison's settings.
    pub settings: Settings,
}

/// Counts of what changed.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct ChangeSummary {
    /// Answers in both runs.
    pub answers_matched: usize,
    /// Answers only in NEW.
    pub answers_new: usize,
    /// Answers only in BASE.
    pub answers_gone: usize,
    /// Matched answers that only got worse.
    pub answers_regressed: usize,
    /// Matched answers that only got better.
    pub answers_improved: usize,
    /// Matched answers that got worse in some ways and better in others.
    pub answers_mixed: usize,
    /// Matched answers with no change.
    pub answers_unchanged: usize,
    /// Matched answers that passed the gate in BASE and fail it in NEW.
    pub passed_to_failed: usize,
    /// Matched answers that failed in BASE and pass in NEW.
    pub failed_to_passed: usize,
    /// Added findings that are errors (new answers and rejected lines included).
    pub added_errors: usize,
    /// Added findings that are warnings.
    pub added_warnings: usize,
    /// Resolved findings that were errors.
    pub resolved_errors: usize,
    /// Resolved findings that were warnings.
    pub resolved_warnings: usize,
    /// Added findings by kind.
    pub added_by_kind: BTreeMap<String, usize>,
    /// Resolved findings by kind.
    pub resolved_by_kind: BTreeMap<String, usize>,
    /// Matched sentences whose support is lower.
    pub sentences_lower: usize,
    /// Matched sentences whose support is higher.
    pub sentences_higher: usize,
    /// Claim sentences only in NEW, of matched answers (a new answer's sentences are
    /// listed with it but not counted here).
    pub sentences_added: usize,
    /// Claim sentences only in BASE (of matched answers).
    pub sentences_removed: usize,
    /// Matched answers whose agreement with the approved answer dropped.
    pub approved_lower: usize,
    /// Matched answers whose agreement with the approved answer rose.
    pub approved_higher: usize,
    /// Lines rejected in BASE.
    pub rejected_base: usize,
    /// Lines rejected in NEW.
    pub rejected_new: usize,
}

/// Whether the new run is worse beyond the tolerance.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Decision {
    /// True when the count of counted regressions exceeds the tolerance (exit code 1).
    pub worse: bool,
    /// Regressions counted against the tolerance.
    pub counted: usize,
    /// Readable reasons.
    pub reasons: Vec<String>,
}

/// How an answer changed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum AnswerState {
    /// Only worse.
    Regressed,
    /// Worse and better.
    Mixed,
    /// Only in NEW.
    New,
    /// Only better.
    Improved,
    /// Only in BASE.
    Gone,
}

impl AnswerState {
    /// The name used in JSON.
    pub fn as_str(self) -> &'static str {
        match self {
            AnswerState::Regressed => "regressed",
            AnswerState::Mixed => "mixed",
            AnswerState::New => "new",
            AnswerState::Improved => "improved",
            AnswerState::Gone => "gone",
        }
    }
}

/// Which way something moved.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Direction {
    /// Worse in NEW.
    Lower,
    /// Better in NEW.
    Higher,
    /// Only in NEW.
    Added,
    /// Only in BASE.
    Removed,
}

/// An answer as it stood in one run.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct AnswerSide {
    /// Line of its answers file.
    pub line: usize,
    /// Whether it passed the gate.
    pub passed: bool,
    /// Its findings that fail the gate.
    pub gate_findings: usize,
}

/// A sentence as it stood in one run.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SentenceSide {
    /// 0-based index in that run's answer.
    pub index: usize,
    /// The sentence as written there.
    pub text: String,
    /// Verdict.
    pub verdict: Verdict,
    /// Support score.
    pub score: f64,
    /// Flags, as names.
    pub flags: Vec<String>,
    /// The document of its evidence, if any.
    pub evidence_doc: Option<String>,
}

/// A sentence whose support changed, or that is only in one run.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SentenceChange {
    /// Which way.
    pub change: Direction,
    /// In BASE.
    pub base: Option<SentenceSide>,
    /// In NEW.
    pub new: Option<SentenceSide>,
}

/// A finding only in one run.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FindingChange {
    /// Finding kind.
    pub kind: String,
    /// Error or warning.
    pub severity: Severity,
    /// What it is about: sentence text, cited document, or empty for the answer.
    pub subject: String,
    /// Its message in the run that has it.
    pub message: String,
    /// Sentence index in that run.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub sentence: Option<usize>,
    /// Citation ref in that run.
    #[serde(rename = "ref", skip_serializing_if = "Option::is_none", default)]
    pub r#ref: Option<String>,
    /// Whether it fails the gate in that run.
    pub gate: bool,
    /// Whether a reviewer accepted it in that run.
    pub accepted: bool,
    /// Whether it counts against the tolerance (added findings only).
    pub counted: bool,
}

/// Agreement with the approved answer in both runs.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ApprovedChange {
    /// Which way ROUGE-L moved.
    pub change: Direction,
    /// In BASE.
    pub base: Option<ApprovedComparison>,
    /// In NEW.
    pub new: Option<ApprovedComparison>,
}

/// Everything that changed in one answer.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AnswerChange {
    /// Answer id.
    pub id: String,
    /// How it changed.
    pub state: AnswerState,
    /// The question, from NEW (else BASE).
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub question: Option<String>,
    /// In BASE.
    pub base: Option<AnswerSide>,
    /// In NEW.
    pub new: Option<AnswerSide>,
    /// Sentences with changed support, added or removed.
    pub sentences: Vec<SentenceChange>,
    /// Findings only in NEW.
    pub findings_added: Vec<FindingChange>,
    /// Findings only in BASE.
    pub findings_resolved: Vec<FindingChange>,
    /// Changed agreement with the approved answer.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub approved: Option<ApprovedChange>,
    /// Regressions of this answer counted against the tolerance.
    pub counted: usize,
}

/// The whole comparison (`compare --json`).
///
/// ```text
/// {"tool", "generated_at", "command",
///  "comparison": {"base": Side, "new": Side, "same": {tool, store, config, answers},
///                 "settings": {tolerance, score_drop, approved_drop, strict}},
///  "decision": {"worse", "counted", "reasons"},
///  "summary": ChangeSummary,
///  "answers": [AnswerChange]}      (regressed, mixed, new, improved, gone; then by id)
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Comparison {
    /// The tool that compared.
    pub tool: Tool,
    /// When.
    pub generated_at: String,
    /// The command line.
    pub command: Vec<String>,
    /// The two runs and the settings.
    pub comparison: Header,
    /// Worse or not.
    pub decision: Decision,
    /// Counts.
    pub summary: ChangeSummary,
    /// Answers that changed.
    pub answers: Vec<AnswerChange>,
}

fn side(r: &RunFile) -> Side {
    let rep = &r.report;
    Side {
        file: r.file.clone(),
        generated_at: rep.generated_at.clone(),
        tool: rep.tool.clone(),
        answers: rep.inputs.answers.clone(),
        store_digest: rep.inputs.store.digest.clone(),
        store_documents: rep.inputs.store.documents,
        summary: rep.summary.clone(),
    }
}

fn rank(v: Verdict) -> Option<u8> {
    match v {
        Verdict::Supported => Some(3),
        Verdict::Partial => Some(2),
        Verdict::Unsupported => Some(1),
        Verdict::NoClaim => None,
    }
}

fn sentence_side(s: &SentenceFindings) -> SentenceSide {
    SentenceSide {
        index: s.index,
        text: s.text.clone(),
        verdict: s.verdict,
        score: s.score,
        flags: s.flags.iter().map(|f| f.as_str().to_owned()).collect(),
        evidence_doc: s.evidence.as_ref().map(|e| e.doc.clone()),
    }
}

fn finding_change(
    a: &AnswerFindings,
    f: &Finding,
    subject: &Subject,
    counted: bool,
) -> FindingChange {
    FindingChange {
        kind: f.kind.clone(),
        severity: f.severity,
        subject: match subject {
            Subject::Sentence(_) => f
                .sentence
                .and_then(|i| a.sentences.get(i))
                .map_or_else(String::new, |s| s.text.clone()),
            Subject::Citation(doc) => doc.clone(),
            Subject::Answer => String::new(),
        },
        message: f.message.clone(),
        sentence: f.sentence,
        r#ref: f.r#ref.clone(),
        gate: f.gate,
        accepted: f.accepted.is_some(),
        counted,
    }
}

/// Pairs up items of two lists by key, in order within each key: returns the pairs and
/// the unpaired items of each side (by index).
fn pair_by<K: Eq + std::hash::Hash>(
    base: &[K],
    new: &[K],
) -> (Vec<(usize, usize)>, Vec<usize>, Vec<usize>) {
    let mut waiting: HashMap<&K, std::collections::VecDeque<usize>> = HashMap::new();
    for (i, k) in base.iter().enumerate() {
        waiting.entry(k).or_default().push_back(i);
    }
    let mut pairs = Vec::new();
    let mut only_new = Vec::new();
    for (j, k) in new.iter().enumerate() {
        match waiting.get_mut(k).and_then(|q| q.pop_front()) {
            Some(i) => pairs.push((i, j)),
            None => only_new.push(j),
        }
    }
    let paired: std::collections::HashSet<usize> = pairs.iter().map(|p| p.0).collect();
    let only_base = (0..base.len()).filter(|i| !paired.contains(i)).collect();
    (pairs, only_base, only_new)
}

/// The claim sentences of an answer only in one run, as added or removed.
fn claims(a: &AnswerFindings, change: Direction) -> Vec<SentenceChange> {
    a.sentences
        .iter()
        .filter(|s| s.verdict != Verdict::NoClaim)
        .map(|s| {
            let side = Some(sentence_side(s));
            match change {
                Direction::Removed => SentenceChange { change, base: side, new: None },
                _ => SentenceChange { change, base: None, new: side },
            }
        })
        .collect()
}

/// Whether an added finding counts against the tolerance.
fn counts(f: &Finding, strict: bool) -> bool {
    f.accepted.is_none() && (strict || f.severity == Severity::Error)
}

fn answer_side(a: &AnswerFindings) -> AnswerSide {
    AnswerSide {
        line: a.line,
        passed: a.passed,
        gate_findings: a.findings.iter().filter(|f| f.gate).count(),
    }
}

/// Whether a change `d` reaches the step `step` (`d == step` counts, within the rounding of
/// six-decimal scores); a step of 0 counts any change.
fn at_least(d: f64, step: f64) -> bool {
    if step > 0.0 { d >= step - 1e-9 } else { d > 1e-9 }
}

/// Compares one matched answer; `None` when nothing changed.
fn compare_answer(
    b: &AnswerFindings,
    n: &AnswerFindings,
    st: &Settings,
    sum: &mut ChangeSummary,
) -> Option<AnswerChange> {
    let (mut worse, mut better) = (false, false);
    let mut counted = 0usize;

    // Sentences.
    let keys =
        |a: &AnswerFindings| a.sentences.iter().map(|s| match_text(&s.text)).collect::<Vec<_>>();
    let (pairs, only_base, only_new) = pair_by(&keys(b), &keys(n));
    let mut sentences = Vec::new();
    for (i, j) in pairs {
        let (x, y) = (&b.sentences[i], &n.sentences[j]);
        let change = match (rank(x.verdict), rank(y.verdict)) {
            (Some(rx), Some(ry)) if ry < rx => Some(Direction::Lower),
            (Some(rx), Some(ry)) if ry > rx => Some(Direction::Higher),
            (Some(_), Some(_)) if at_least(x.score - y.score, st.score_drop) => {
                Some(Direction::Lower)
            }
            (Some(_), Some(_)) if at_least(y.score - x.score, st.score_drop) => {
                Some(Direction::Higher)
            }
            _ => None,
        };
        match change {
            Some(Direction::Lower) => {
                worse = true;
                sum.sentences_lower += 1;
                if st.strict {
                    counted += 1;
                }
            }
            Some(Direction::Higher) => {
                better = true;
                sum.sentences_higher += 1;
            }
            _ => {}
        }
        if let Some(change) = change {
            sentences.push(SentenceChange {
                change,
                base: Some(sentence_side(x)),
                new: Some(sentence_side(y)),
            });
        }
    }
    for i in only_base {
        let s = &b.sentences[i];
        if s.verdict != Verdict::NoClaim {
            sum.sentences_removed += 1;
            sentences.push(SentenceChange {
                change: Direction::Removed,
                base: Some(sentence_side(s)),
                new: None,
            });
        }
    }
    for j in only_new {
        let s = &n.sentences[j];
        if s.verdict != Verdict::NoClaim {
            sum.sentences_added += 1;
            sentences.push(SentenceChange {
                change: Direction::Added,
                base: None,
                new: Some(sentence_side(s)),
            });
        }
    }

    // Findings.
    let fkeys = |a: &AnswerFindings| {
        a.findings.iter().map(|f| (f.kind.clone(), Subject::of(a, f))).collect::<Vec<_>>()
    };
    let (bk, nk) = (fkeys(b), fkeys(n));
    let (_, resolved, added) = pair_by(&bk, &nk);
    let findings_added: Vec<FindingChange> = added
        .iter()
        .map(|&j| {
            let f = &n.findings[j];
            let c = counts(f, st.strict);
            counted += usize::from(c);
            count_finding(sum, f, true);
            finding_change(n, f, &nk[j].1, c)
        })
        .collect();
    let findings_resolved: Vec<FindingChange> = resolved
        .iter()
        .map(|&i| {
            let f = &b.findings[i];
            count_finding(sum, f, false);
            finding_change(b, f, &bk[i].1, false)
        })
        .collect();
    worse |= !findings_added.is_empty();
    better |= !findings_resolved.is_empty();

    // Gate.
    if b.passed && !n.passed {
        worse = true;
        sum.passed_to_failed += 1;
        if st.strict {
            counted += 1;
        }
    } else if !b.passed && n.passed {
        better = true;
        sum.failed_to_passed += 1;
    }

    // Approved answer.
    let approved = match (&b.approved, &n.approved) {
        (Some(x), Some(y)) if at_least(x.rouge_l - y.rouge_l, st.approved_drop) => {
            worse = true;
            sum.approved_lower += 1;
            if st.strict {
                counted += 1;
            }
            Some(ApprovedChange {
                change: Direction::Lower,
                base: Some(x.clone()),
                new: Some(y.clone()),
            })
        }
        (Some(x), Some(y)) if at_least(y.rouge_l - x.rouge_l, st.approved_drop) => {
            better = true;
            sum.approved_higher += 1;
            Some(ApprovedChange {
                change: Direction::Higher,
                base: Some(x.clone()),
                new: Some(y.clone()),
            })
        }
        _ => None,
    };

    let state = match (worse, better) {
        (true, true) => AnswerState::Mixed,
        (true, false) => AnswerState::Regressed,
        (false, true) => AnswerState::Improved,
        (false, false) => {
            sum.answers_unchanged += 1;
            return None;
        }
    };
    match state {
        AnswerState::Mixed => sum.answers_mixed += 1,
        AnswerState::Regressed => sum.answers_regressed += 1,
        _ => sum.answers_improved += 1,
    }
    Some(AnswerChange {
        id: n.id.clone(),
        state,
        question: n.question.clone().or_else(|| b.question.clone()),
        base: Some(answer_side(b)),
        new: Some(answer_side(n)),
        sentences,
        findings_added,
        findings_resolved,
        approved,
        counted,
    })
}

fn count_finding(sum: &mut ChangeSummary, f: &Finding, added: bool) {
    let (errors, warnings, by_kind) = if added {
        (&mut sum.added_errors, &mut sum.added_warnings, &mut sum.added_by_kind)
    } else {
        (&mut sum.resolved_errors, &mut sum.resolved_warnings, &mut sum.resolved_by_kind)
    };
    match f.severity {
        Severity::Error => *errors += 1,
        Severity::Warning => *warnings += 1,
    }
    *by_kind.entry(f.kind.clone()).or_default() += 1;
}

/// Compares two runs. `command` and `generated_at` make the result's run record.
pub fn compare(
    base: &RunFile,
    new: &RunFile,
    settings: Settings,
    command: Vec<String>,
    generated_at: String,
) -> Comparison {
    let (b, n) = (&base.report, &new.report);
    let mut sum = ChangeSummary {
        rejected_base: b.rejected.len(),
        rejected_new: n.rejected.len(),
        ..ChangeSummary::default()
    };
    let base_by_id: HashMap<&str, &AnswerFindings> =
        b.answers.iter().map(|a| (a.id.as_str(), a)).collect();
    let new_ids: std::collections::HashSet<&str> =
        n.answers.iter().map(|a| a.id.as_str()).collect();
    let mut answers = Vec::new();
    for a in &n.answers {
        match base_by_id.get(a.id.as_str()) {
            Some(old) => {
                sum.answers_matched += 1;
                if let Some(c) = compare_answer(old, a, &settings, &mut sum) {
                    answers.push(c);
                }
            }
            None => {
                sum.answers_new += 1;
                let mut counted = 0;
                let findings_added = a
                    .findings
                    .iter()
                    .map(|f| {
                        let c = counts(f, settings.strict);
                        counted += usize::from(c);
                        count_finding(&mut sum, f, true);
                        finding_change(a, f, &Subject::of(a, f), c)
                    })
                    .collect();
                answers.push(AnswerChange {
                    id: a.id.clone(),
                    state: AnswerState::New,
                    question: a.question.clone(),
                    base: None,
                    new: Some(answer_side(a)),
                    sentences: claims(a, Direction::Added),
                    findings_added,
                    findings_resolved: Vec::new(),
                    approved: None,
                    counted,
                });
            }
        }
    }
    for a in b.answers.iter().filter(|a| !new_ids.contains(a.id.as_str())) {
        sum.answers_gone += 1;
        answers.push(AnswerChange {
            id: a.id.clone(),
            state: AnswerState::Gone,
            question: a.question.clone(),
            base: Some(answer_side(a)),
            new: None,
            sentences: claims(a, Direction::Removed),
            findings_added: Vec::new(),
            findings_resolved: Vec::new(),
            approved: None,
            counted: 0,
        });
    }
    answers.sort_by(|x, y| {
        x.state.cmp(&y.state).then(y.counted.cmp(&x.counted)).then_with(|| x.id.cmp(&y.id))
    });

    // Rejected lines have no id: the increase counts as added rejected_line errors.
    let more_rejected = n.rejected.len().saturating_sub(b.rejected.len());
    if more_rejected > 0 {
        sum.added_errors += more_rejected;
        *sum.added_by_kind.entry("rejected_line".into()).or_default() += more_rejected;
    }
    let fewer_rejected = b.rejected.len().saturating_sub(n.rejected.len());
    if fewer_rejected > 0 {
        sum.resolved_errors += fewer_rejected;
        *sum.resolved_by_kind.entry("rejected_line".into()).or_default() += fewer_rejected;
    }

    let counted = answers.iter().map(|a| a.counted).sum::<usize>() + more_rejected;
    let decision = decide(&sum, &answers, counted, more_rejected, &settings);
    Comparison {
        tool: Tool::default(),
        generated_at,
        command,
        comparison: Header {
            same: Same {
                tool: b.tool == n.tool,
                store: b.inputs.store.digest == n.inputs.store.digest,
                config: b.config == n.config,
                answers: b.inputs.answers.sha256 == n.inputs.answers.sha256,
            },
            base: side(base),
            new: side(new),
            settings,
        },
        decision,
        summary: sum,
        answers,
    }
}

fn decide(
    sum: &ChangeSummary,
    answers: &[AnswerChange],
    counted: usize,
    more_rejected: usize,
    st: &Settings,
) -> Decision {
    let worse = counted > st.tolerance;
    let mut kinds: BTreeMap<&str, usize> = BTreeMap::new();
    for f in answers.iter().flat_map(|a| &a.findings_added).filter(|f| f.counted) {
        *kinds.entry(f.kind.as_str()).or_default() += 1;
    }
    if more_rejected > 0 {
        *kinds.entry("rejected_line").or_default() += more_rejected;
    }
    let what = if st.strict {
        "regressions (strict: added findings of either severity, lower support, answers that now fail, lower agreement with approved answers)"
    } else {
        "added error findings that no reviewer accepted"
    };
    let mut reasons = Vec::new();
    let list: Vec<String> = kinds.iter().map(|(k, n)| format!("{k} ×{n}")).collect();
    let on = answers.iter().filter(|a| a.counted > 0).count();
    if counted == 0 {
        reasons.push(format!("no {what}"));
    } else {
        reasons.push(format!(
            "{counted} {what}{}{}, {} --tolerance {}",
            if list.is_empty() { String::new() } else { format!(" ({})", list.join(", ")) },
            if on > 0 { format!(" on {on} answer(s)") } else { String::new() },
            if worse { "more than" } else { "within" },
            st.tolerance
        ));
    }
    if sum.answers_new > 0 {
        reasons.push(format!(
            "{} answer(s) only in NEW: their error findings count as added",
            sum.answers_new
        ));
    }
    if sum.answers_gone > 0 {
        reasons.push(format!(
            "{} answer(s) only in BASE (gone): their findings are not counted as resolved",
            sum.answers_gone
        ));
    }
    Decision { worse, counted, reasons }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::findings::{Flag, Span};

    fn sentence(index: usize, text: &str, verdict: Verdict, score: f64) -> SentenceFindings {
        SentenceFindings {
            index,
            text: text.into(),
            span: Span { start: 0, end: text.len() },
            refs: vec!["1".into()],
            verdict,
            score,
            flags: Vec::<Flag>::new(),
            evidence: None,
            also_evidence: Vec::new(),
            cited_evidence: None,
            figures: Vec::new(),
            changed_terms: Vec::new(),
        }
    }

    fn answer(sentences: Vec<SentenceFindings>, approved: Option<f64>) -> AnswerFindings {
        AnswerFindings {
            id: "a".into(),
            line: 1,
            user: None,
            groups: None,
            question: None,
            answer: String::new(),
            passed: true,
            sentences,
            citations: Vec::new(),
            findings: Vec::new(),
            approved: approved.map(|r| ApprovedComparison {
                rouge1: r,
                rouge2: r,
                rouge_l: r,
                bleu: r * 100.0,
            }),
        }
    }

    #[test]
    fn score_steps_and_approved_drop() {
        let st = Settings::default();
        let base =
            answer(vec![sentence(0, "Claims stay open.", Verdict::Supported, 0.95)], Some(0.8));
        // Within the step: no change at all.
        let near =
            answer(vec![sentence(0, "claims  stay OPEN.", Verdict::Supported, 0.92)], Some(0.78));
        let mut sum = ChangeSummary::default();
        assert!(compare_answer(&base, &near, &st, &mut sum).is_none());
        assert_eq!(sum.answers_unchanged, 1);
        // A drop of the step or more, same verdict: lower support; and lower agreement.
        let lower =
            answer(vec![sentence(0, "Claims stay open.", Verdict::Supported, 0.90)], Some(0.70));
        let mut sum = ChangeSummary::default();
        let c = compare_answer(&base, &lower, &st, &mut sum).expect("a change");
        assert_eq!(c.state, AnswerState::Regressed);
        assert_eq!(c.sentences[0].change, Direction::Lower);
        assert_eq!(c.approved.as_ref().map(|a| a.change), Some(Direction::Lower));
        assert_eq!((sum.sentences_lower, sum.approved_lower), (1, 1));
        assert_eq!(c.counted, 0, "not counted unless strict");
        let strict = Settings { strict: true, ..st };
        let c = compare_answer(&base, &lower, &strict, &mut ChangeSummary::default()).unwrap();
        assert_eq!(c.counted, 2);
        // A higher score with the same verdict the other way.
        let c = compare_answer(&lower, &base, &st, &mut ChangeSummary::default()).unwrap();
        assert_eq!((c.state, c.sentences[0].change), (AnswerState::Improved, Direction::Higher));
        // A step of 0 counts any change, and only a change.
        let zero = Settings { score_drop: 0.0, approved_drop: 0.0, ..st };
        assert!(compare_answer(&base, &base, &zero, &mut ChangeSummary::default()).is_none());
        let c = compare_answer(&base, &near, &zero, &mut ChangeSummary::default()).unwrap();
        assert_eq!(c.sentences[0].change, Direction::Lower);
        // A no-claim sentence is never lower or higher.
        let a = answer(vec![sentence(0, "Hello!", Verdict::NoClaim, 0.0)], None);
        let b = answer(vec![sentence(0, "Hello!", Verdict::Supported, 1.0)], None);
        assert!(compare_answer(&a, &b, &st, &mut ChangeSummary::default()).is_none());
    }

    #[test]
    fn pairing_is_in_order_within_a_key() {
        let base = ["a", "b", "a", "c"];
        let new = ["a", "a", "a", "d", "b"];
        let (pairs, only_base, only_new) = pair_by(&base, &new);
        assert_eq!(pairs, [(0, 0), (2, 1), (1, 4)]);
        assert_eq!(only_base, [3]);
        assert_eq!(only_new, [2, 3]);
    }
}
