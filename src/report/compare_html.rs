//! The comparison as a self-contained HTML page (`compare --html`): the two runs side by
//! side, in the check report's design.
//!
//! `templates/compare.html` is rendered by minijinja with HTML auto-escaping and strict
//! undefined values from the view model built here; the check report's stylesheet
//! (`templates/report.css`) and the comparison's own (`templates/compare.css`) are inlined
//! as one `<style>` named by its SHA-256 in the page's Content-Security-Policy. The page
//! has no script at all (the policy allows none), so it reads the same with scripts off
//! and in print, and nothing from the findings files — answer text included — can run.

use std::collections::BTreeMap;

use base64::Engine as _;
use minijinja::syntax::SyntaxConfig;
use minijinja::value::{Serde, Value};
use minijinja::{Environment, UndefinedBehavior, context};
use serde::Serialize;
use sha2::{Digest, Sha256};

use crate::compare::{
    AnswerChange, AnswerState, Comparison, Direction, FindingChange, SentenceSide, Side,
};
use crate::findings::{CitationStatus, KIND_DESCRIPTIONS, Severity, Summary, Verdict};
use crate::report::html::view::{shell_line, thousands, verdict_info};

const TEMPLATE: &str = include_str!("../../templates/compare.html");
const REPORT_STYLE: &str = include_str!("../../templates/report.css");
const COMPARE_STYLE: &str = include_str!("../../templates/compare.css");

/// The inlined stylesheet: the check report's, then the comparison's additions.
fn style() -> String {
    format!("{REPORT_STYLE}\n{COMPARE_STYLE}")
}

/// The page's Content-Security-Policy: nothing loads and no script runs; only the page's
/// own style, by hash.
pub fn content_security_policy() -> String {
    let digest = Sha256::digest(style().as_bytes());
    format!(
        "default-src 'none'; style-src 'sha256-{}'; img-src data:; base-uri 'none'; form-action 'none'",
        base64::engine::general_purpose::STANDARD.encode(digest)
    )
}

#[derive(Debug, Serialize)]
struct Page<'a> {
    tool: String,
    generated_at: &'a str,
    command: String,
    worse: bool,
    counted: usize,
    tolerance: usize,
    strict: bool,
    score_drop: String,
    approved_drop: String,
    reasons: &'a [String],
    base: SideView<'a>,
    new: SideView<'a>,
    differ: Vec<&'static str>,
    figures: Vec<FigureRow>,
    changes: Vec<ChangeRow>,
    kinds: Vec<KindRow>,
    answers: Vec<AnswerView<'a>>,
    states: Vec<StateCount>,
}

#[derive(Debug, Serialize)]
struct SideView<'a> {
    path: &'a str,
    sha256: &'a str,
    size: String,
    generated_at: &'a str,
    version: &'a str,
    answers_path: &'a str,
    answers_sha256: &'a str,
    store_digest: &'a str,
    store_documents: usize,
    gate_passed: bool,
}

#[derive(Debug, Serialize)]
struct FigureRow {
    label: String,
    base: String,
    new: String,
    delta: String,
    /// `worse`, `better` or empty: how the change reads, for the mark beside it.
    tone: &'static str,
}

#[derive(Debug, Serialize)]
struct ChangeRow {
    label: &'static str,
    count: usize,
    tone: &'static str,
}

#[derive(Debug, Serialize)]
struct KindRow {
    kind: String,
    description: &'static str,
    added: usize,
    resolved: usize,
}

#[derive(Debug, Serialize)]
struct StateCount {
    state: &'static str,
    label: &'static str,
    count: usize,
}

#[derive(Debug, Serialize)]
struct AnswerView<'a> {
    anchor: String,
    id: &'a str,
    state: &'static str,
    label: &'static str,
    question: Option<&'a str>,
    base: Option<String>,
    new: Option<String>,
    counted: usize,
    sentences: Vec<SentenceRow<'a>>,
    added: Vec<FindingView<'a>>,
    resolved: Vec<FindingView<'a>>,
    approved: Option<ApprovedRow>,
}

#[derive(Debug, Serialize)]
struct SentenceRow<'a> {
    change: &'static str,
    label: &'static str,
    base: Option<SentenceCell<'a>>,
    new: Option<SentenceCell<'a>>,
}

#[derive(Debug, Serialize)]
struct SentenceCell<'a> {
    n: usize,
    verdict: &'static str,
    label: &'static str,
    score: String,
    text: &'a str,
    flags: &'a [String],
    evidence_doc: Option<&'a str>,
}

#[derive(Debug, Serialize)]
struct FindingView<'a> {
    kind: &'a str,
    error: bool,
    message: &'a str,
    gate: bool,
    accepted: bool,
    counted: bool,
}

#[derive(Debug, Serialize)]
struct ApprovedRow {
    change: &'static str,
    base_rouge_l: String,
    new_rouge_l: String,
    base_bleu: String,
    new_bleu: String,
}

fn state_label(s: AnswerState) -> &'static str {
    match s {
        AnswerState::Regressed => "regressed",
        AnswerState::Mixed => "mixed: worse and better",
        AnswerState::New => "new: only in the new run",
        AnswerState::Improved => "improved",
        AnswerState::Gone => "gone: only in the base run",
    }
}

fn direction(d: Direction) -> (&'static str, &'static str) {
    match d {
        Direction::Lower => ("lower", "lower support"),
        Direction::Higher => ("higher", "higher support"),
        Direction::Added => ("added", "only in the new run"),
        Direction::Removed => ("removed", "only in the base run"),
    }
}

fn side_view(s: &Side) -> SideView<'_> {
    SideView {
        path: &s.file.path,
        sha256: &s.file.sha256,
        size: thousands(s.file.size),
        generated_at: &s.generated_at,
        version: &s.tool.version,
        answers_path: &s.answers.path,
        answers_sha256: &s.answers.sha256,
        store_digest: &s.store_digest,
        store_documents: s.store_documents,
        gate_passed: s.summary.gate.passed,
    }
}

/// One row of the side-by-side figures. `higher_is_worse` says how a rise reads.
fn figure(
    label: impl Into<String>,
    base: usize,
    new: usize,
    higher_is_worse: Option<bool>,
) -> FigureRow {
    let d = new as i64 - base as i64;
    let tone = match (d.signum(), higher_is_worse) {
        (0, _) | (_, None) => "",
        (1, Some(true)) | (-1, Some(false)) => "worse",
        _ => "better",
    };
    FigureRow {
        label: label.into(),
        base: thousands(base as u64),
        new: thousands(new as u64),
        delta: if d == 0 { "=".into() } else { format!("{d:+}") },
        tone,
    }
}

fn mean_row(label: &str, base: Option<f64>, new: Option<f64>, digits: usize) -> Option<FigureRow> {
    if base.is_none() && new.is_none() {
        return None;
    }
    let show = |x: Option<f64>| x.map_or_else(|| "–".to_owned(), |x| format!("{x:.digits$}"));
    let (delta, tone) = match (base, new) {
        (Some(b), Some(n)) => {
            let d = n - b;
            let tone = if d.abs() < 0.5 * 10f64.powi(-(digits as i32)) {
                ""
            } else if d < 0.0 {
                "worse"
            } else {
                "better"
            };
            (format!("{d:+.digits$}"), tone)
        }
        _ => ("–".to_owned(), ""),
    };
    Some(FigureRow { label: label.into(), base: show(base), new: show(new), delta, tone })
}

fn figures(b: &Summary, n: &Summary) -> Vec<FigureRow> {
    let get = |m: &BTreeMap<String, usize>, k: &str| m.get(k).copied().unwrap_or(0);
    let mut rows = vec![
        figure("answers checked", b.answers_checked, n.answers_checked, None),
        figure("answers that pass the gate", b.answers_passed, n.answers_passed, Some(false)),
        figure("answers that fail the gate", b.answers_failed, n.answers_failed, Some(true)),
        figure("lines rejected", b.lines_rejected, n.lines_rejected, Some(true)),
        figure("findings: errors", b.errors, n.errors, Some(true)),
        figure("findings: warnings", b.warnings, n.warnings, Some(true)),
        figure("findings that fail the gate", b.gate_failures, n.gate_failures, Some(true)),
        figure("entitlement breaches", b.entitlement_breaches, n.entitlement_breaches, Some(true)),
        figure("findings accepted by a reviewer", b.accepted, n.accepted, None),
    ];
    for v in Verdict::ALL {
        let worse = match v {
            Verdict::Supported => Some(false),
            Verdict::Partial | Verdict::Unsupported => Some(true),
            Verdict::NoClaim => None,
        };
        rows.push(figure(
            format!("sentences {}", verdict_info(v).label),
            get(&b.verdicts, v.as_str()),
            get(&n.verdicts, v.as_str()),
            worse,
        ));
    }
    for st in CitationStatus::ALL {
        let (x, y) = (get(&b.citations, st.as_str()), get(&n.citations, st.as_str()));
        if st == CitationStatus::Ok || x + y > 0 {
            let worse = Some(st != CitationStatus::Ok);
            rows.push(figure(format!("citations {}", st.as_str().replace('_', " ")), x, y, worse));
        }
    }
    let ap = |s: &Summary| s.approved.as_ref().map(|a| (a.mean_rouge_l, a.mean_bleu));
    rows.extend(mean_row(
        "mean ROUGE-L F against approved answers",
        ap(b).map(|x| x.0),
        ap(n).map(|x| x.0),
        3,
    ));
    rows.extend(mean_row(
        "mean BLEU against approved answers",
        ap(b).map(|x| x.1),
        ap(n).map(|x| x.1),
        1,
    ));
    rows
}

fn cell(s: &SentenceSide) -> SentenceCell<'_> {
    let info = verdict_info(s.verdict);
    SentenceCell {
        n: s.index + 1,
        verdict: s.verdict.as_str(),
        label: info.label,
        score: if s.verdict == Verdict::NoClaim { "–".into() } else { format!("{:.2}", s.score) },
        text: &s.text,
        flags: &s.flags,
        evidence_doc: s.evidence_doc.as_deref(),
    }
}

fn finding_view(f: &FindingChange) -> FindingView<'_> {
    FindingView {
        kind: &f.kind,
        error: f.severity == Severity::Error,
        message: &f.message,
        gate: f.gate,
        accepted: f.accepted,
        counted: f.counted,
    }
}

fn answer_view(i: usize, a: &AnswerChange) -> AnswerView<'_> {
    let side = |s: &Option<crate::compare::AnswerSide>| {
        s.as_ref().map(|s| {
            format!(
                "line {} · {} · {} gate finding{}",
                s.line,
                if s.passed { "passes" } else { "fails" },
                s.gate_findings,
                if s.gate_findings == 1 { "" } else { "s" }
            )
        })
    };
    AnswerView {
        anchor: format!("c{i}"),
        id: &a.id,
        state: a.state.as_str(),
        label: state_label(a.state),
        question: a.question.as_deref(),
        base: side(&a.base),
        new: side(&a.new),
        counted: a.counted,
        sentences: a
            .sentences
            .iter()
            .map(|s| {
                let (change, label) = direction(s.change);
                SentenceRow {
                    change,
                    label,
                    base: s.base.as_ref().map(cell),
                    new: s.new.as_ref().map(cell),
                }
            })
            .collect(),
        added: a.findings_added.iter().map(finding_view).collect(),
        resolved: a.findings_resolved.iter().map(finding_view).collect(),
        approved: a.approved.as_ref().map(|ap| {
            let rl = |x: &Option<crate::findings::ApprovedComparison>| {
                x.as_ref().map_or_else(|| "–".to_owned(), |x| format!("{:.3}", x.rouge_l))
            };
            let bl = |x: &Option<crate::findings::ApprovedComparison>| {
                x.as_ref().map_or_else(|| "–".to_owned(), |x| format!("{:.1}", x.bleu))
            };
            ApprovedRow {
                change: direction(ap.change).0,
                base_rouge_l: rl(&ap.base),
                new_rouge_l: rl(&ap.new),
                base_bleu: bl(&ap.base),
                new_bleu: bl(&ap.new),
            }
        }),
    }
}

fn page(c: &Comparison) -> Page<'_> {
    let h = &c.comparison;
    let s = &c.summary;
    let mut differ = Vec::new();
    if !h.same.store {
        differ.push("the document store (digest)");
    }
    if !h.same.config {
        differ.push("the settings");
    }
    if !h.same.tool {
        differ.push("the plumbline version");
    }
    let mut kinds: BTreeMap<&str, (usize, usize)> = BTreeMap::new();
    for (k, n) in &s.added_by_kind {
        kinds.entry(k).or_default().0 += n;
    }
    for (k, n) in &s.resolved_by_kind {
        kinds.entry(k).or_default().1 += n;
    }
    let order = |k: &str| KIND_DESCRIPTIONS.iter().position(|(x, _)| *x == k).unwrap_or(usize::MAX);
    let mut kinds: Vec<KindRow> = kinds
        .into_iter()
        .map(|(k, (added, resolved))| KindRow {
            kind: k.to_owned(),
            description: crate::findings::describe(k),
            added,
            resolved,
        })
        .collect();
    kinds.sort_by_key(|k| order(&k.kind));
    let states = [
        (AnswerState::Regressed, s.answers_regressed),
        (AnswerState::Mixed, s.answers_mixed),
        (AnswerState::New, s.answers_new),
        (AnswerState::Improved, s.answers_improved),
        (AnswerState::Gone, s.answers_gone),
    ]
    .into_iter()
    .map(|(st, count)| StateCount { state: st.as_str(), label: state_label(st), count })
    .collect();
    Page {
        tool: format!("{} {}", c.tool.name, c.tool.version),
        generated_at: &c.generated_at,
        command: shell_line(&c.command),
        worse: c.decision.worse,
        counted: c.decision.counted,
        tolerance: h.settings.tolerance,
        strict: h.settings.strict,
        score_drop: format!("{:.2}", h.settings.score_drop),
        approved_drop: format!("{:.2}", h.settings.approved_drop),
        reasons: &c.decision.reasons,
        base: side_view(&h.base),
        new: side_view(&h.new),
        differ,
        figures: figures(&h.base.summary, &h.new.summary),
        changes: vec![
            ChangeRow { label: "matched answers", count: s.answers_matched, tone: "" },
            ChangeRow { label: "matched answers unchanged", count: s.answers_unchanged, tone: "" },
            ChangeRow {
                label: "answers that passed and now fail",
                count: s.passed_to_failed,
                tone: "worse",
            },
            ChangeRow {
                label: "answers that failed and now pass",
                count: s.failed_to_passed,
                tone: "better",
            },
            ChangeRow { label: "added error findings", count: s.added_errors, tone: "worse" },
            ChangeRow { label: "added warnings", count: s.added_warnings, tone: "worse" },
            ChangeRow {
                label: "resolved error findings",
                count: s.resolved_errors,
                tone: "better",
            },
            ChangeRow { label: "resolved warnings", count: s.resolved_warnings, tone: "better" },
            ChangeRow {
                label: "sentences with lower support",
                count: s.sentences_lower,
                tone: "worse",
            },
            ChangeRow {
                label: "sentences with higher support",
                count: s.sentences_higher,
                tone: "better",
            },
            ChangeRow {
                label: "claim sentences only in the new run",
                count: s.sentences_added,
                tone: "",
            },
            ChangeRow {
                label: "claim sentences only in the base run",
                count: s.sentences_removed,
                tone: "",
            },
            ChangeRow {
                label: "lower agreement with the approved answer",
                count: s.approved_lower,
                tone: "worse",
            },
            ChangeRow {
                label: "higher agreement with the approved answer",
                count: s.approved_higher,
                tone: "better",
            },
        ],
        kinds,
        answers: c.answers.iter().enumerate().map(|(i, a)| answer_view(i, a)).collect(),
        states,
    }
}

/// Renders the comparison page.
pub fn render(c: &Comparison) -> anyhow::Result<String> {
    let mut env = Environment::new();
    env.set_undefined_behavior(UndefinedBehavior::Strict);
    env.set_syntax(SyntaxConfig::builder().trim_blocks(true).lstrip_blocks(true).build()?);
    env.add_template("compare.html", TEMPLATE)?;
    let template = env.get_template("compare.html")?;
    let html = template
        .render(context! {
            page => Value::from(Serde(&page(c))),
            csp => content_security_policy(),
            style => Value::from_safe_string(style()),
        })
        .map_err(|e| anyhow::anyhow!("rendering the comparison page: {e:#}"))?;
    Ok(html)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn template_needs_nothing_the_policy_blocks() {
        for bad in [" style=\"", " onclick=", " onload=", "javascript:", "<script"] {
            assert!(!TEMPLATE.contains(bad), "template contains {bad:?}");
        }
        assert!(!COMPARE_STYLE.contains("</style"));
        let csp = content_security_policy();
        assert!(csp.starts_with("default-src 'none';") && !csp.contains("script-src"));
    }

    #[test]
    fn figures_read_the_right_way() {
        let r = figure("x", 3, 5, Some(true));
        assert_eq!((r.delta.as_str(), r.tone), ("+2", "worse"));
        let r = figure("x", 5, 3, Some(true));
        assert_eq!((r.delta.as_str(), r.tone), ("-2", "better"));
        let r = figure("x", 4, 4, Some(true));
        assert_eq!((r.delta.as_str(), r.tone), ("=", ""));
        let r = mean_row("m", Some(0.5), Some(0.25), 3).unwrap();
        assert_eq!((r.delta.as_str(), r.tone), ("-0.250", "worse"));
        assert!(mean_row("m", None, None, 3).is_none());
    }
}
