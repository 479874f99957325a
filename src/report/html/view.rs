//! The report's view model: plain, serialisable values built from a finished
//! [`Report`], so that the template only lays them out.
//!
//! Everything the page shows is decided here (order of answers, evidence split into
//! matched and unmatched pieces, chart geometry, the entitlement-breach table), and
//! nothing here writes markup: the template escapes every string it prints.

use std::cmp::Ordering;
use std::collections::{BTreeMap, BTreeSet};

use serde::Serialize;

use crate::config::Config;
use crate::findings::{
    Acceptance, AnswerFindings, ApprovedComparison, CitationStatus, Evidence, Flag,
    KIND_DESCRIPTIONS, RejectedLine, Report, SentenceFindings, Span, StoreRecord, Tool, Verdict,
};

/// Evidence longer than this many bytes is folded into a `<details>` element.
const LONG_EVIDENCE: usize = 600;

/// Bins of the support-score histogram (each 0.05 wide).
const BINS: usize = 20;

/// The whole page.
#[derive(Debug, Serialize)]
pub struct Page<'a> {
    pub tool: &'a Tool,
    pub generated_at: &'a str,
    pub command: String,
    /// The recorded command when it is not itself a `check` (for example `demo`):
    /// the `check` it ran, rebuilt from the inputs.
    pub check_command: Option<String>,
    pub inputs: Vec<InputRow<'a>>,
    pub store: &'a StoreRecord,
    /// The effective settings as a `--config` file.
    pub settings: Vec<SettingsTable>,
    pub settings_default: bool,
    pub supported: String,
    pub partial: String,
    pub gate: GateView<'a>,
    pub summary: SummaryView,
    pub answers: Vec<AnswerView<'a>>,
    pub breaches: Vec<Breach<'a>>,
    pub rejected: &'a [RejectedLine],
    pub decisions_applied: usize,
    pub stale: Vec<StaleView<'a>>,
    pub decision_rejected: &'a [RejectedLine],
    pub accept_path: Option<&'a str>,
    pub verdicts: Vec<VerdictInfo>,
    pub kinds: Vec<KindRow>,
    pub filter: FilterOptions,
    /// `check --shard K/N`: the shard this report covers.
    pub shard: Option<(u64, u64)>,
    /// `merge`: the shard files it was joined from.
    pub parts: Vec<PartView<'a>>,
    /// `[regression]` thresholds, as set.
    pub min_rouge_l: Option<String>,
    pub min_bleu: Option<String>,
}

/// One shard file of a merged run.
#[derive(Debug, Serialize)]
pub struct PartView<'a> {
    pub path: &'a str,
    pub sha256: &'a str,
    pub generated_at: &'a str,
    pub shard: String,
}

/// Agreement with the approved answers over the run.
#[derive(Debug, Serialize)]
pub struct ApprovedSummaryView {
    pub answers: usize,
    pub mean_rouge1: String,
    pub mean_rouge2: String,
    pub mean_rouge_l: String,
    pub mean_bleu: String,
    pub below_rouge_l: Option<usize>,
    pub share_below_rouge_l: Option<String>,
    pub below_bleu: Option<usize>,
    pub share_below_bleu: Option<String>,
}

/// One input file of the run record.
#[derive(Debug, Serialize)]
pub struct InputRow<'a> {
    pub role: &'static str,
    pub option: &'static str,
    pub path: Option<&'a str>,
    pub size: String,
    pub sha256: Option<&'a str>,
}

/// One `[table]` of the settings.
#[derive(Debug, Serialize)]
pub struct SettingsTable {
    pub name: String,
    pub keys: Vec<Setting>,
}

/// One `key = value` line, with the default where the value differs from it.
#[derive(Debug, Serialize)]
pub struct Setting {
    pub key: String,
    pub value: String,
    pub default: Option<String>,
}

/// The gate's decision and the rules it applied.
#[derive(Debug, Serialize)]
pub struct GateView<'a> {
    pub passed: bool,
    pub reasons: &'a [String],
    pub fail_on: Vec<String>,
    pub max_unsupported: usize,
    pub allow_rejected_lines: bool,
}

/// A labelled count with its share of a total.
#[derive(Debug, Serialize)]
pub struct CountRow {
    pub key: String,
    pub label: String,
    pub count: usize,
    pub share: String,
}

/// A horizontal bar of a chart.
#[derive(Debug, Serialize)]
pub struct Bar {
    pub key: String,
    pub label: String,
    pub count: usize,
    pub y: usize,
    pub width: f64,
}

/// A column of the histogram.
#[derive(Debug, Serialize)]
pub struct Bin {
    pub range: String,
    pub count: usize,
    pub x: f64,
    pub y: f64,
    pub height: f64,
}

/// The histogram of support scores with the two thresholds marked.
#[derive(Debug, Serialize)]
pub struct Histogram {
    pub bins: Vec<Bin>,
    pub max: usize,
    pub scored: usize,
    pub supported_x: f64,
    pub partial_x: f64,
    pub axis: Vec<Tick>,
}

/// A tick of the histogram's score axis.
#[derive(Debug, Serialize)]
pub struct Tick {
    pub x: f64,
    pub label: String,
}

/// The summary section.
#[derive(Debug, Serialize)]
pub struct SummaryView {
    pub lines_read: usize,
    pub answers_checked: usize,
    pub lines_rejected: usize,
    pub answers_passed: usize,
    pub answers_failed: usize,
    pub passed_share: String,
    pub failed_share: String,
    pub entitlement_breaches: usize,
    pub accepted: usize,
    pub errors: usize,
    pub warnings: usize,
    pub gate_failures: usize,
    pub sentences: usize,
    pub citations_total: usize,
    pub approved_mean_rouge_l: Option<String>,
    pub approved_mean_bleu: Option<String>,
    pub approved: Option<ApprovedSummaryView>,
    pub verdicts: Vec<CountRow>,
    pub verdict_bars: Vec<Bar>,
    pub citations: Vec<CountRow>,
    pub citation_bars: Vec<Bar>,
    pub flags: Vec<CountRow>,
    pub histogram: Histogram,
}

/// What a verdict means and how the page marks it.
#[derive(Debug, Serialize)]
pub struct VerdictInfo {
    pub key: &'static str,
    pub label: &'static str,
    pub glyph: &'static str,
    pub pattern: &'static str,
    pub meaning: &'static str,
}

/// A finding kind of the legend.
#[derive(Debug, Serialize)]
pub struct KindRow {
    pub kind: &'static str,
    pub description: &'static str,
    pub gate: bool,
}

/// The choices of the page's filters (only values that occur in this run).
#[derive(Debug, Serialize)]
pub struct FilterOptions {
    pub verdicts: Vec<&'static str>,
    pub flags: Vec<&'static str>,
    pub statuses: Vec<&'static str>,
    pub users: Vec<String>,
}

/// One answer.
#[derive(Debug, Serialize)]
pub struct AnswerView<'a> {
    pub anchor: String,
    pub id: &'a str,
    pub line: usize,
    pub user: Option<&'a str>,
    pub groups: Option<String>,
    pub question: Option<&'a str>,
    pub passed: bool,
    pub gate_findings: usize,
    pub accepted_findings: usize,
    pub lowest: Option<String>,
    pub verdict_counts: String,
    pub data_verdicts: String,
    pub data_flags: String,
    pub data_statuses: String,
    pub sentences: Vec<SentenceView<'a>>,
    pub citations: Vec<CitationView<'a>>,
    pub findings: Vec<FindingView<'a>>,
    pub approved: Option<ApprovedView>,
}

/// Agreement with the approved answer.
#[derive(Debug, Serialize)]
pub struct ApprovedView {
    pub rouge1: String,
    pub rouge2: String,
    pub rouge_l: String,
    pub bleu: String,
    /// Below `regression.min_rouge_l` / `min_bleu`, where set.
    pub below_rouge_l: bool,
    pub below_bleu: bool,
}

/// One sentence of an answer.
#[derive(Debug, Serialize)]
pub struct SentenceView<'a> {
    pub anchor: String,
    pub n: usize,
    pub verdict: &'static str,
    pub label: &'static str,
    pub score: String,
    pub text: &'a str,
    pub refs: &'a [String],
    pub flags: Vec<&'static str>,
    pub figures: &'a [String],
    pub changed: Vec<(&'a str, &'a str)>,
    /// Why the evidence needs a warning: it names a document the sentence does not cite
    /// (`misattributed`, `restricted_match`), or one the user may not read (`forbidden`).
    pub elsewhere: Option<&'static str>,
    /// Why the verdict is lower than the score alone would give.
    pub lowered: Option<String>,
    pub evidence: Option<EvidenceView<'a>>,
    /// Windows of further cited passages that carry the rest of the sentence.
    pub also_evidence: Vec<EvidenceView<'a>>,
    pub cited_evidence: Option<EvidenceView<'a>>,
}

/// A piece of evidence text, matched or not.
#[derive(Debug, Serialize, PartialEq, Eq)]
pub struct Piece<'a> {
    pub t: &'a str,
    pub m: bool,
}

/// An evidence window.
#[derive(Debug, Serialize)]
pub struct EvidenceView<'a> {
    pub doc: &'a str,
    pub start: usize,
    pub end: usize,
    pub score: String,
    pub access: Option<String>,
    pub long: bool,
    pub chars: usize,
    pub matched_words: usize,
    pub pieces: Vec<Piece<'a>>,
    /// `p. 3` or `pp. 3–4` for evidence from a PDF; empty otherwise.
    pub pages: String,
}

/// One citation of an answer.
#[derive(Debug, Serialize)]
pub struct CitationView<'a> {
    pub r#ref: &'a str,
    pub doc: &'a str,
    pub status: &'static str,
    pub problem: bool,
    pub detail: Option<&'a str>,
    pub passage: Option<String>,
    pub used_by: String,
    pub access: Option<String>,
}

/// One finding of an answer.
#[derive(Debug, Serialize)]
pub struct FindingView<'a> {
    pub anchor: String,
    pub kind: &'a str,
    pub error: bool,
    pub message: &'a str,
    pub gate: bool,
    pub accepted: Option<&'a Acceptance>,
    /// 0-based, as decisions files count.
    pub sentence: Option<usize>,
    /// 1-based, as the page labels sentences.
    pub sentence_n: Option<usize>,
    pub sentence_anchor: Option<String>,
    pub r#ref: Option<&'a str>,
}

/// A row of the entitlement-breach table.
#[derive(Debug, Serialize)]
pub struct Breach<'a> {
    pub answer: &'a str,
    pub answer_anchor: String,
    pub finding_anchor: String,
    pub user: Option<&'a str>,
    pub groups: Option<String>,
    pub doc: &'a str,
    pub access: Option<String>,
    pub how: String,
    pub gate: bool,
    pub accepted: Option<&'a Acceptance>,
}

/// A stale reviewer decision.
#[derive(Debug, Serialize)]
pub struct StaleView<'a> {
    pub answer: &'a str,
    pub sentence_n: Option<usize>,
    pub r#ref: Option<&'a str>,
    pub finding: &'a str,
    pub by: &'a str,
    pub note: &'a str,
}

/// How the page names and marks a verdict: label, symbol (drawn by the stylesheet
/// before every verdict tag), and the greyscale pattern.
pub fn verdict_info(v: Verdict) -> VerdictInfo {
    match v {
        Verdict::Supported => VerdictInfo {
            key: "supported",
            label: "supported",
            glyph: "✓",
            pattern: "solid bar, thin solid rule",
            meaning: "The cited text carries the sentence: enough of its words and word pairs occur there, in order, and no figure, polarity or term check objects.",
        },
        Verdict::Partial => VerdictInfo {
            key: "partial",
            label: "partial",
            glyph: "◑",
            pattern: "dotted bar, dashed rule",
            meaning: "Some of the sentence is carried and some is not, or a content word was swapped for another.",
        },
        Verdict::Unsupported => VerdictInfo {
            key: "unsupported",
            label: "unsupported",
            glyph: "✗",
            pattern: "hatched bar, double rule",
            meaning: "The cited text does not carry the sentence, or a figure in it differs from the evidence, or the polarity is flipped.",
        },
        Verdict::NoClaim => VerdictInfo {
            key: "no_claim",
            label: "no claim",
            glyph: "○",
            pattern: "outlined bar, dotted rule",
            meaning: "Nothing to check: a greeting, an offer of help, a question back, a heading.",
        },
    }
}

impl<'a> Page<'a> {
    /// Builds the view of a report.
    pub fn build(report: &'a Report) -> Page<'a> {
        let config: Config = serde_json::from_value(report.config.clone()).unwrap_or_default();
        let (settings, settings_default) = settings_tables(&report.config);
        let mut answers: Vec<AnswerView<'a>> =
            report.answers.iter().enumerate().map(|(i, a)| answer_view(i, a, &config)).collect();
        answers.sort_by(worst_first);
        let breaches = breaches(report);
        Page {
            tool: &report.tool,
            generated_at: &report.generated_at,
            command: shell_line(&report.command),
            check_command: check_command(report),
            inputs: input_rows(report),
            store: &report.inputs.store,
            settings,
            settings_default,
            supported: num(config.thresholds.supported),
            partial: num(config.thresholds.partial),
            gate: GateView {
                passed: report.summary.gate.passed,
                reasons: &report.summary.gate.reasons,
                fail_on: config.gate.fail_on.clone(),
                max_unsupported: config.gate.max_unsupported,
                allow_rejected_lines: config.gate.allow_rejected_lines,
            },
            summary: summary_view(report, &config),
            answers,
            breaches,
            rejected: &report.rejected,
            decisions_applied: report.decisions.applied,
            stale: report
                .decisions
                .stale
                .iter()
                .map(|d| StaleView {
                    answer: &d.answer,
                    sentence_n: d.sentence.map(|s| s + 1),
                    r#ref: d.r#ref.as_deref(),
                    finding: &d.finding,
                    by: &d.by,
                    note: &d.note,
                })
                .collect(),
            decision_rejected: &report.decisions.rejected,
            accept_path: report.inputs.accept.as_ref().map(|f| f.path.as_str()),
            verdicts: Verdict::ALL.into_iter().map(verdict_info).collect(),
            kinds: KIND_DESCRIPTIONS
                .iter()
                .map(|(kind, description)| KindRow {
                    kind,
                    description,
                    gate: config.gate.fails_on(kind),
                })
                .collect(),
            filter: filter_options(report),
            shard: report.shard.as_ref().map(|s| (s.k, s.n)),
            parts: report
                .merged_from
                .iter()
                .map(|p| PartView {
                    path: &p.path,
                    sha256: &p.sha256,
                    generated_at: &p.generated_at,
                    shard: p
                        .shard
                        .as_ref()
                        .map_or_else(|| "whole run".into(), |s| format!("{} of {}", s.k, s.n)),
                })
                .collect(),
            min_rouge_l: config.regression.min_rouge_l.map(|x| x.to_string()),
            min_bleu: config.regression.min_bleu.map(|x| x.to_string()),
        }
    }
}

/// A score or threshold with two decimals, as the page shows them.
fn num(x: f64) -> String {
    format!("{x:.2}")
}

fn percent(n: usize, of: usize) -> String {
    if of == 0 { "–".into() } else { format!("{:.1} %", n as f64 * 100.0 / of as f64) }
}

/// `12345` as `12,345`.
pub fn thousands(n: u64) -> String {
    let digits = n.to_string();
    let mut out = String::with_capacity(digits.len() + digits.len() / 3);
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// Joins arguments into one POSIX shell line, quoting where needed, so that it can be
/// pasted back into a shell.
pub fn shell_line(args: &[String]) -> String {
    args.iter().map(|a| shell_quote(a)).collect::<Vec<_>>().join(" ")
}

fn shell_quote(arg: &str) -> String {
    let plain = !arg.is_empty()
        && arg.bytes().all(|b| b.is_ascii_alphanumeric() || b"_./=:,@%+-".contains(&b));
    if plain { arg.to_owned() } else { format!("'{}'", arg.replace('\'', "'\\''")) }
}

fn check_command(report: &Report) -> Option<String> {
    if report.command.get(1).is_some_and(|c| c == "check") {
        return None;
    }
    let i = &report.inputs;
    let mut args = vec![
        "plumbline".to_owned(),
        "check".into(),
        "--store".into(),
        i.store.path.clone(),
        "--answers".into(),
        i.answers.path.clone(),
    ];
    for (opt, file) in
        [("--principals", &i.principals), ("--config", &i.config), ("--accept", &i.accept)]
    {
        if let Some(f) = file {
            args.push(opt.into());
            args.push(f.path.clone());
        }
    }
    Some(shell_line(&args))
}

fn input_rows(report: &Report) -> Vec<InputRow<'_>> {
    let i = &report.inputs;
    let mut rows = vec![InputRow {
        role: "answers log",
        option: "--answers",
        path: Some(&i.answers.path),
        size: thousands(i.answers.size),
        sha256: Some(&i.answers.sha256),
    }];
    let input_map = i.input_map.as_ref().map(|_| ("field map", "--input-map", &i.input_map));
    for (role, option, file) in [
        ("principals", "--principals", &i.principals),
        ("settings", "--config", &i.config),
        ("reviewer decisions", "--accept", &i.accept),
    ]
    .into_iter()
    .chain(input_map)
    {
        rows.push(match file {
            Some(f) => InputRow {
                role,
                option,
                path: Some(&f.path),
                size: thousands(f.size),
                sha256: Some(&f.sha256),
            },
            None => InputRow { role, option, path: None, size: String::new(), sha256: None },
        });
    }
    rows
}

/// The settings as TOML tables, in the order SPEC.md gives them, each value marked with
/// the default where it differs. Also says whether every value is the default.
fn settings_tables(config: &serde_json::Value) -> (Vec<SettingsTable>, bool) {
    let defaults = serde_json::to_value(Config::default()).unwrap_or_default();
    let Some(tables) = config.as_object() else { return (Vec::new(), true) };
    let order = ["thresholds", "gate", "regression", "support", "limits"];
    let mut names: Vec<&String> = tables.keys().collect();
    names.sort_by_key(|n| (order.iter().position(|o| o == n).unwrap_or(order.len()), *n));
    let mut all_default = true;
    let out = names
        .into_iter()
        .map(|name| {
            let keys = match &tables[name] {
                serde_json::Value::Object(m) => m
                    .iter()
                    .map(|(k, v)| {
                        let d = &defaults[name][k];
                        let default = (d != v).then(|| toml_value(d));
                        all_default &= default.is_none();
                        Setting { key: k.clone(), value: toml_value(v), default }
                    })
                    .collect(),
                other => {
                    vec![Setting { key: String::new(), value: toml_value(other), default: None }]
                }
            };
            SettingsTable { name: name.clone(), keys }
        })
        .collect();
    (out, all_default)
}

/// A JSON value written as TOML (the settings hold numbers, booleans, strings and lists
/// of strings; JSON's string escapes are valid in TOML basic strings).
fn toml_value(v: &serde_json::Value) -> String {
    match v {
        serde_json::Value::Null => "(none)".into(),
        serde_json::Value::Array(items) => {
            format!("[{}]", items.iter().map(toml_value).collect::<Vec<_>>().join(", "))
        }
        // A nested table (`[input.citation]`) as a TOML inline table.
        serde_json::Value::Object(m) => format!(
            "{{ {} }}",
            m.iter()
                .map(|(k, v)| format!("{k} = {}", toml_value(v)))
                .collect::<Vec<_>>()
                .join(", ")
        ),
        other => other.to_string(),
    }
}

fn summary_view(report: &Report, config: &Config) -> SummaryView {
    let s = &report.summary;
    let sentences: usize = s.verdicts.values().sum();
    let citations_total: usize = s.citations.values().sum();
    let count = |m: &std::collections::BTreeMap<String, usize>, k: &str| -> usize {
        m.get(k).copied().unwrap_or(0)
    };
    let row = |counts: &BTreeMap<String, usize>, key: &str, label: String, total: usize| {
        let n = count(counts, key);
        CountRow { key: key.into(), label, count: n, share: percent(n, total) }
    };
    let verdicts: Vec<CountRow> = Verdict::ALL
        .into_iter()
        .map(|v| row(&s.verdicts, v.as_str(), verdict_info(v).label.into(), sentences))
        .collect();
    let citations: Vec<CountRow> = CitationStatus::ALL
        .into_iter()
        .map(|st| row(&s.citations, st.as_str(), st.as_str().replace('_', " "), citations_total))
        .collect();
    let flags: Vec<CountRow> = Flag::ALL
        .into_iter()
        .map(|f| row(&s.flags, f.as_str(), f.as_str().replace('_', " "), sentences))
        .collect();
    SummaryView {
        lines_read: s.lines_read,
        answers_checked: s.answers_checked,
        lines_rejected: s.lines_rejected,
        answers_passed: s.answers_passed,
        answers_failed: s.answers_failed,
        passed_share: percent(s.answers_passed, s.answers_checked),
        failed_share: percent(s.answers_failed, s.answers_checked),
        entitlement_breaches: s.entitlement_breaches,
        accepted: s.accepted,
        errors: s.errors,
        warnings: s.warnings,
        gate_failures: s.gate_failures,
        sentences,
        citations_total,
        approved_mean_rouge_l: s.approved_mean_rouge_l.map(|x| format!("{x:.3}")),
        approved_mean_bleu: s.approved_mean_bleu.map(|x| format!("{x:.1}")),
        approved: s.approved.as_ref().map(|a| ApprovedSummaryView {
            answers: a.answers,
            mean_rouge1: format!("{:.3}", a.mean_rouge1),
            mean_rouge2: format!("{:.3}", a.mean_rouge2),
            mean_rouge_l: format!("{:.3}", a.mean_rouge_l),
            mean_bleu: format!("{:.1}", a.mean_bleu),
            below_rouge_l: a.below_rouge_l,
            share_below_rouge_l: a.below_rouge_l.map(|n| percent(n, a.answers)),
            below_bleu: a.below_bleu,
            share_below_bleu: a.below_bleu.map(|n| percent(n, a.answers)),
        }),
        verdict_bars: bars(&verdicts),
        verdicts,
        citation_bars: bars(&citations),
        citations,
        flags,
        histogram: histogram(report, config),
    }
}

/// Width of the bar area of the horizontal bar charts, in SVG units.
const BAR_AREA: f64 = 300.0;

fn bars(rows: &[CountRow]) -> Vec<Bar> {
    let max = rows.iter().map(|r| r.count).max().unwrap_or(0).max(1);
    rows.iter()
        .enumerate()
        .map(|(i, r)| Bar {
            key: r.key.clone(),
            label: r.label.clone(),
            count: r.count,
            y: i * 22,
            width: round1(r.count as f64 / max as f64 * BAR_AREA),
        })
        .collect()
}

fn round1(x: f64) -> f64 {
    (x * 10.0).round() / 10.0
}

/// Width and height of the histogram's plot area, in SVG units.
const HIST_W: f64 = 400.0;
const HIST_H: f64 = 120.0;

fn histogram(report: &Report, config: &Config) -> Histogram {
    let mut counts = [0usize; BINS];
    for s in report.answers.iter().flat_map(|a| &a.sentences) {
        if s.verdict == Verdict::NoClaim || !s.score.is_finite() {
            continue;
        }
        let b = ((s.score.clamp(0.0, 1.0) * BINS as f64) as usize).min(BINS - 1);
        counts[b] += 1;
    }
    let max = counts.iter().copied().max().unwrap_or(0);
    let w = HIST_W / BINS as f64;
    let bins = counts
        .iter()
        .enumerate()
        .map(|(i, &n)| {
            let height = if max == 0 { 0.0 } else { round1(n as f64 / max as f64 * HIST_H) };
            let lo = i as f64 / BINS as f64;
            let hi = (i + 1) as f64 / BINS as f64;
            let close = if i + 1 == BINS { "]" } else { ")" };
            Bin {
                range: format!("[{lo:.2}, {hi:.2}{close}"),
                count: n,
                x: round1(i as f64 * w),
                y: round1(HIST_H - height),
                height,
            }
        })
        .collect();
    let at = |t: f64| round1(t.clamp(0.0, 1.0) * HIST_W);
    Histogram {
        bins,
        max,
        scored: counts.iter().sum(),
        supported_x: at(config.thresholds.supported),
        partial_x: at(config.thresholds.partial),
        axis: (0..=4).map(|i| Tick { x: at(i as f64 / 4.0), label: num(i as f64 / 4.0) }).collect(),
    }
}

fn filter_options(report: &Report) -> FilterOptions {
    let mut verdicts = BTreeSet::new();
    let mut flags = BTreeSet::new();
    let mut statuses = BTreeSet::new();
    let mut users = BTreeSet::new();
    for a in &report.answers {
        for s in &a.sentences {
            verdicts.insert(s.verdict);
            flags.extend(s.flags.iter().copied());
        }
        statuses.extend(a.citations.iter().map(|c| c.status));
        if let Some(u) = &a.user {
            users.insert(u.clone());
        }
    }
    FilterOptions {
        verdicts: Verdict::ALL
            .into_iter()
            .filter(|v| verdicts.contains(v))
            .map(Verdict::as_str)
            .collect(),
        flags: Flag::ALL.into_iter().filter(|f| flags.contains(f)).map(Flag::as_str).collect(),
        statuses: CitationStatus::ALL
            .into_iter()
            .filter(|s| statuses.contains(s))
            .map(CitationStatus::as_str)
            .collect(),
        users: users.into_iter().collect(),
    }
}

/// Failed answers before passed ones; then more gate findings first; then the lowest
/// sentence score first. Used with a stable sort, so ties keep input order.
fn worst_first(a: &AnswerView<'_>, b: &AnswerView<'_>) -> Ordering {
    a.passed.cmp(&b.passed).then(b.gate_findings.cmp(&a.gate_findings)).then_with(|| {
        match (&a.lowest, &b.lowest) {
            (Some(x), Some(y)) => x.cmp(y),
            (Some(_), None) => Ordering::Less,
            (None, Some(_)) => Ordering::Greater,
            (None, None) => Ordering::Equal,
        }
    })
}

/// Space-separated distinct names, for the `data-` attributes the filters read.
fn tokens<'x>(names: impl Iterator<Item = &'x str>) -> String {
    let set: BTreeSet<&str> = names.collect();
    set.into_iter().collect::<Vec<_>>().join(" ")
}

fn answer_view<'a>(i: usize, a: &'a AnswerFindings, config: &Config) -> AnswerView<'a> {
    let anchor = format!("a{i}");
    let sentences: Vec<SentenceView<'_>> =
        a.sentences.iter().map(|s| sentence_view(&anchor, a, s, config)).collect();
    let lowest = a
        .sentences
        .iter()
        .filter(|s| s.verdict != Verdict::NoClaim && s.score.is_finite())
        .map(|s| s.score)
        .min_by(f64::total_cmp)
        // Scores lie in 0..1, so their fixed-width text sorts as the numbers do.
        .map(|x| format!("{:.6}", x.clamp(0.0, 1.0)));
    let mut per_verdict = Vec::new();
    for v in Verdict::ALL {
        let n = a.sentences.iter().filter(|s| s.verdict == v).count();
        if n > 0 {
            per_verdict.push(format!("{n} {}", verdict_info(v).label));
        }
    }
    let findings = a
        .findings
        .iter()
        .enumerate()
        .map(|(k, f)| FindingView {
            anchor: format!("{anchor}-f{k}"),
            kind: &f.kind,
            error: f.severity == crate::findings::Severity::Error,
            message: &f.message,
            gate: f.gate,
            accepted: f.accepted.as_ref(),
            sentence: f.sentence,
            sentence_n: f.sentence.map(|s| s + 1),
            sentence_anchor: f
                .sentence
                .filter(|&s| s < a.sentences.len())
                .map(|s| format!("{anchor}-s{s}")),
            r#ref: f.r#ref.as_deref(),
        })
        .collect();
    AnswerView {
        id: &a.id,
        line: a.line,
        user: a.user.as_deref(),
        groups: a.groups.as_ref().map(|g| g.join(", ")),
        question: a.question.as_deref(),
        passed: a.passed,
        gate_findings: a.findings.iter().filter(|f| f.gate).count(),
        accepted_findings: a.findings.iter().filter(|f| f.accepted.is_some()).count(),
        lowest,
        verdict_counts: per_verdict.join(", "),
        data_verdicts: tokens(a.sentences.iter().map(|s| s.verdict.as_str())),
        data_flags: tokens(a.sentences.iter().flat_map(|s| s.flags.iter().map(|f| f.as_str()))),
        data_statuses: tokens(a.citations.iter().map(|c| c.status.as_str())),
        citations: a
            .citations
            .iter()
            .map(|c| CitationView {
                r#ref: &c.r#ref,
                doc: &c.doc,
                status: c.status.as_str(),
                problem: c.status != CitationStatus::Ok,
                detail: c.detail.as_deref(),
                passage: c.passage.map(|p| {
                    format!("bytes {}–{}", thousands(p.start as u64), thousands(p.end as u64))
                }),
                used_by: c
                    .used_by
                    .iter()
                    .map(|s| format!("S{}", s + 1))
                    .collect::<Vec<_>>()
                    .join(", "),
                access: c.access.as_ref().map(|g| g.join(", ")),
            })
            .collect(),
        sentences,
        findings,
        approved: a.approved.as_ref().map(|ap| approved_view(ap, config)),
        anchor,
    }
}

fn approved_view(a: &ApprovedComparison, config: &Config) -> ApprovedView {
    let r = &config.regression;
    ApprovedView {
        rouge1: format!("{:.3}", a.rouge1),
        rouge2: format!("{:.3}", a.rouge2),
        rouge_l: format!("{:.3}", a.rouge_l),
        bleu: format!("{:.1}", a.bleu),
        below_rouge_l: r.min_rouge_l.is_some_and(|m| a.rouge_l < m),
        below_bleu: r.min_bleu.is_some_and(|m| a.bleu < m),
    }
}

/// The note that explains a verdict below the score's band (a figure, polarity or term
/// check lowered it), or none.
fn lowered(s: &SentenceFindings, config: &Config) -> Option<String> {
    let t = &config.thresholds;
    let band = if s.score >= t.supported {
        Verdict::Supported
    } else if s.score >= t.partial {
        Verdict::Partial
    } else {
        Verdict::Unsupported
    };
    if s.verdict == Verdict::NoClaim || s.verdict <= band {
        return None;
    }
    let by: Vec<&str> = s
        .flags
        .iter()
        .filter(|f| matches!(f, Flag::NumberMismatch | Flag::NegationMismatch | Flag::ChangedTerm))
        .map(|f| f.as_str())
        .collect();
    let floor = if band == Verdict::Supported { t.supported } else { t.partial };
    Some(format!(
        "The score alone ({}, at or above {}) would make it {}; {}.",
        num(s.score),
        num(floor),
        verdict_info(band).label,
        if by.is_empty() {
            "a check on the sentence lowered the verdict".to_owned()
        } else {
            format!("lowered by {}", by.join(", "))
        }
    ))
}

fn sentence_view<'a>(
    anchor: &str,
    a: &'a AnswerFindings,
    s: &'a SentenceFindings,
    config: &Config,
) -> SentenceView<'a> {
    let info = verdict_info(s.verdict);
    // The sentence as logged (markers included), where its span is a valid range of the
    // answer; else the marker-free text.
    let text = a
        .answer
        .get(s.span.start..s.span.end)
        .map(str::trim)
        .filter(|t| !t.is_empty())
        .unwrap_or(&s.text);
    let forbidden_doc = |doc: &str| {
        a.citations.iter().any(|c| c.status == CitationStatus::Forbidden && c.doc == doc)
    };
    let elsewhere = if s.flags.contains(&Flag::RestrictedMatch) {
        Some("restricted_match")
    } else if s.flags.contains(&Flag::Misattributed) {
        Some("misattributed")
    } else if s.evidence.as_ref().is_some_and(|e| forbidden_doc(&e.doc)) {
        Some("forbidden")
    } else {
        None
    };
    SentenceView {
        anchor: format!("{anchor}-s{}", s.index),
        n: s.index + 1,
        verdict: s.verdict.as_str(),
        label: info.label,
        score: if s.verdict == Verdict::NoClaim { "–".into() } else { num(s.score) },
        text,
        refs: &s.refs,
        flags: s.flags.iter().map(|f| f.as_str()).collect(),
        figures: &s.figures,
        changed: s.changed_terms.iter().map(|t| (t.claim.as_str(), t.evidence.as_str())).collect(),
        elsewhere,
        lowered: lowered(s, config),
        evidence: s.evidence.as_ref().map(evidence_view),
        also_evidence: s.also_evidence.iter().map(evidence_view).collect(),
        cited_evidence: s.cited_evidence.as_ref().map(evidence_view),
    }
}

fn evidence_view(e: &Evidence) -> EvidenceView<'_> {
    let pieces = pieces(&e.text, &e.matched);
    EvidenceView {
        doc: &e.doc,
        start: e.start,
        end: e.end,
        score: num(e.score),
        access: e.access.as_ref().map(|g| g.join(", ")),
        long: e.text.len() > LONG_EVIDENCE,
        chars: e.text.chars().count(),
        matched_words: e.matched.len(),
        pieces,
        pages: match (e.page, e.page_end) {
            (Some(a), Some(b)) => format!("pp. {a}–{b}"),
            (Some(a), None) => format!("p. {a}"),
            _ => String::new(),
        },
    }
}

fn floor_boundary(s: &str, i: usize) -> usize {
    let mut i = i.min(s.len());
    while !s.is_char_boundary(i) {
        i -= 1;
    }
    i
}

fn ceil_boundary(s: &str, i: usize) -> usize {
    let mut i = i.min(s.len());
    while !s.is_char_boundary(i) {
        i += 1;
    }
    i
}

/// Splits `text` into unmatched and matched pieces from byte spans that may be unsorted,
/// overlapping, out of range or off character boundaries (each is clamped and widened to
/// whole characters). Matches separated only by white space are joined, so that a
/// matched phrase reads as one mark.
pub fn pieces<'t>(text: &'t str, spans: &[Span]) -> Vec<Piece<'t>> {
    let mut ranges: Vec<(usize, usize)> = spans
        .iter()
        .map(|s| (floor_boundary(text, s.start), ceil_boundary(text, s.end)))
        .filter(|(a, b)| a < b)
        .collect();
    ranges.sort_unstable();
    let mut merged: Vec<(usize, usize)> = Vec::with_capacity(ranges.len());
    for (a, b) in ranges {
        match merged.last_mut() {
            Some(last) if a <= last.1 || text[last.1..a].chars().all(char::is_whitespace) => {
                last.1 = last.1.max(b);
            }
            _ => merged.push((a, b)),
        }
    }
    let mut out = Vec::with_capacity(merged.len() * 2 + 1);
    let mut pos = 0;
    for (a, b) in merged {
        if pos < a {
            out.push(Piece { t: &text[pos..a], m: false });
        }
        out.push(Piece { t: &text[a..b], m: true });
        pos = b;
    }
    if pos < text.len() {
        out.push(Piece { t: &text[pos..], m: false });
    }
    out
}

/// Forbidden citations and restricted matches, one row per finding (the summary's
/// `entitlement_breaches` counts the same findings).
fn breaches(report: &Report) -> Vec<Breach<'_>> {
    let mut out = Vec::new();
    for (i, a) in report.answers.iter().enumerate() {
        for (k, f) in a.findings.iter().enumerate() {
            let (doc, access, how) = match f.kind.as_str() {
                "forbidden" => {
                    let c = a.citations.iter().find(|c| Some(&c.r#ref) == f.r#ref.as_ref());
                    (
                        c.map_or("?", |c| c.doc.as_str()),
                        c.and_then(|c| c.access.as_ref()),
                        format!("cited as [{}]", f.r#ref.as_deref().unwrap_or("?")),
                    )
                }
                "restricted_match" => {
                    let e = f
                        .sentence
                        .and_then(|s| a.sentences.get(s))
                        .and_then(|s| s.evidence.as_ref());
                    (
                        e.map_or("?", |e| e.doc.as_str()),
                        e.and_then(|e| e.access.as_ref()),
                        format!(
                            "S{} closely matches it (not cited)",
                            f.sentence.map_or(0, |s| s + 1)
                        ),
                    )
                }
                _ => continue,
            };
            out.push(Breach {
                answer: &a.id,
                answer_anchor: format!("a{i}"),
                finding_anchor: format!("a{i}-f{k}"),
                user: a.user.as_deref(),
                groups: a.groups.as_ref().map(|g| g.join(", ")),
                doc,
                access: access.map(|g| g.join(", ")),
                how,
                gate: f.gate,
                accepted: f.accepted.as_ref(),
            });
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sp(start: usize, end: usize) -> Span {
        Span { start, end }
    }

    fn joined(p: &[Piece<'_>]) -> String {
        p.iter().map(|x| if x.m { format!("<{}>", x.t) } else { x.t.to_owned() }).collect()
    }

    #[test]
    fn pieces_cover_the_text_and_join_phrases() {
        let t = "Claims stay open for 45 days.";
        let p = pieces(t, &[sp(0, 6), sp(7, 11), sp(21, 23)]);
        assert_eq!(joined(&p), "<Claims stay> open for <45> days.");
        assert_eq!(p.iter().map(|x| x.t).collect::<String>(), t);
    }

    #[test]
    fn pieces_survive_bad_spans() {
        let t = "£12.40 é";
        // Off character boundaries (inside £ and é), reversed, out of range, overlapping.
        let p = pieces(t, &[sp(1, 3), sp(5, 2), sp(8, 100), sp(2, 4), sp(40, 50)]);
        assert_eq!(p.iter().map(|x| x.t).collect::<String>(), t);
        assert!(p.iter().any(|x| x.m));
        assert_eq!(pieces("", &[sp(0, 3)]), Vec::new());
    }

    #[test]
    fn shell_quoting() {
        let args: Vec<String> =
            ["plumbline", "check", "--store", "my docs", "it's"].map(String::from).to_vec();
        assert_eq!(shell_line(&args), "plumbline check --store 'my docs' 'it'\\''s'");
    }

    #[test]
    fn thousands_separators() {
        assert_eq!(thousands(0), "0");
        assert_eq!(thousands(999), "999");
        assert_eq!(thousands(17_896), "17,896");
        assert_eq!(thousands(1_234_567), "1,234,567");
    }
}
