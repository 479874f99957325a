//! The scorer: the checker's findings JSON read back and held against the labels.
//!
//! Per class, the share of sentences that meet the class's rule (the targets);
//! for the binary question "should a reviewer look at this sentence?" precision, recall
//! and F1; the confusion of class × verdict; and citation statuses expected × found,
//! which must agree exactly.

use std::collections::{BTreeMap, HashMap};
use std::fmt::Write as _;

use plumbline::findings::{AnswerFindings, Flag, Report, SentenceFindings, Verdict};
use serde::Serialize;
use serde_json::{Value, json};

use crate::corpus::normalise;
use crate::generate::{CitationLabel, Class, Label, cut};

/// What a sentence of a class must get.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Rule {
    /// Verdict `supported`.
    Supported,
    /// Verdict `partial` or `unsupported`.
    NotSupported,
    /// Verdict `no_claim`.
    NoClaim,
    /// Flag `number_mismatch` and not supported.
    NumberMismatchNotSupported,
    /// Flag `number_mismatch`.
    NumberMismatch,
    /// Flag `changed_term`.
    ChangedTerm,
    /// Flag `misattributed` with the evidence in the document that holds the sentence.
    RightDocument,
}

impl Rule {
    pub fn text(self) -> &'static str {
        match self {
            Rule::Supported => "supported",
            Rule::NotSupported => "not supported",
            Rule::NoClaim => "no_claim",
            Rule::NumberMismatchNotSupported => "number_mismatch and not supported",
            Rule::NumberMismatch => "number_mismatch",
            Rule::ChangedTerm => "changed_term",
            Rule::RightDocument => "misattributed, names the right document",
        }
    }

    /// Whether the sentence meets the rule (`None`: the checker has no such sentence).
    pub fn holds(self, label: &Label, s: Option<&Seen<'_>>) -> bool {
        let Some(s) = s else { return false };
        let not_supported = matches!(s.verdict, Verdict::Partial | Verdict::Unsupported);
        match self {
            Rule::Supported => s.verdict == Verdict::Supported,
            Rule::NotSupported => not_supported,
            Rule::NoClaim => s.verdict == Verdict::NoClaim,
            Rule::NumberMismatchNotSupported => {
                not_supported && s.flags.contains(&Flag::NumberMismatch)
            }
            Rule::NumberMismatch => s.flags.contains(&Flag::NumberMismatch),
            Rule::ChangedTerm => s.flags.contains(&Flag::ChangedTerm),
            Rule::RightDocument => {
                s.flags.contains(&Flag::Misattributed)
                    && s.evidence_doc() == label.expect_doc.as_deref()
            }
        }
    }
}

/// A target of the issue: a class, its rule and the share it must reach (percent).
#[derive(Debug, Clone, Copy)]
pub struct Target {
    pub key: &'static str,
    pub class: Class,
    pub rule: Rule,
    pub target: Option<f64>,
}

/// The targets, in report order (`broken_citation` has none: it is reported).
pub const TARGETS: &[Target] = &[
    Target { key: "verbatim", class: Class::Verbatim, rule: Rule::Supported, target: Some(97.0) },
    Target {
        key: "light_edit",
        class: Class::LightEdit,
        rule: Rule::Supported,
        target: Some(97.0),
    },
    Target {
        key: "figure_changed",
        class: Class::FigureChanged,
        rule: Rule::NumberMismatchNotSupported,
        target: Some(99.0),
    },
    Target {
        key: "polarity_flipped",
        class: Class::PolarityFlipped,
        rule: Rule::NotSupported,
        target: Some(95.0),
    },
    Target {
        key: "other_document",
        class: Class::OtherDocument,
        rule: Rule::NotSupported,
        target: Some(98.0),
    },
    Target {
        key: "other_document.right_doc",
        class: Class::OtherDocument,
        rule: Rule::RightDocument,
        target: Some(90.0),
    },
    Target {
        key: "fabricated",
        class: Class::Fabricated,
        rule: Rule::NotSupported,
        target: Some(90.0),
    },
    Target { key: "no_claim", class: Class::NoClaim, rule: Rule::NoClaim, target: Some(95.0) },
    Target {
        key: "heavy_paraphrase",
        class: Class::HeavyParaphrase,
        rule: Rule::Supported,
        target: Some(85.0),
    },
    Target {
        key: "opposite_swap",
        class: Class::OppositeSwap,
        rule: Rule::NotSupported,
        target: Some(90.0),
    },
    Target {
        key: "opposite_swap.changed_term",
        class: Class::OppositeSwap,
        rule: Rule::ChangedTerm,
        target: Some(80.0),
    },
    Target {
        key: "quantifier_swap",
        class: Class::QuantifierSwap,
        rule: Rule::NotSupported,
        target: Some(90.0),
    },
    Target {
        key: "quantifier_swap.changed_term",
        class: Class::QuantifierSwap,
        rule: Rule::ChangedTerm,
        target: Some(80.0),
    },
    Target {
        key: "identifier_swap",
        class: Class::IdentifierSwap,
        rule: Rule::NotSupported,
        target: Some(90.0),
    },
    Target {
        key: "identifier_swap.changed_term",
        class: Class::IdentifierSwap,
        rule: Rule::ChangedTerm,
        target: Some(80.0),
    },
    Target {
        key: "unit_changed",
        class: Class::UnitChanged,
        rule: Rule::NumberMismatch,
        target: Some(95.0),
    },
    Target {
        key: "joined_clause",
        class: Class::JoinedClause,
        rule: Rule::NotSupported,
        target: Some(95.0),
    },
    Target {
        key: "broken_citation",
        class: Class::BrokenCitation,
        rule: Rule::NotSupported,
        target: None,
    },
];

/// The key of the citation-status row.
pub const CITATIONS_KEY: &str = "citations";

/// One row of the table.
#[derive(Debug, Clone, Serialize)]
pub struct Row {
    pub key: String,
    pub rule: String,
    pub n: usize,
    pub correct: usize,
    pub percent: f64,
    pub target: Option<f64>,
    pub met: Option<bool>,
}

/// Precision, recall and F1 of a binary decision.
#[derive(Debug, Clone, Copy, Default, Serialize)]
pub struct Binary {
    pub tp: usize,
    pub fp: usize,
    pub fn_: usize,
    pub tn: usize,
    pub precision: f64,
    pub recall: f64,
    pub f1: f64,
}

impl Binary {
    pub fn add(&mut self, truth: bool, said: bool) {
        match (truth, said) {
            (true, true) => self.tp += 1,
            (false, true) => self.fp += 1,
            (true, false) => self.fn_ += 1,
            (false, false) => self.tn += 1,
        }
    }

    pub fn finish(mut self) -> Binary {
        let ratio = |a: usize, b: usize| if b == 0 { 0.0 } else { a as f64 / b as f64 };
        self.precision = ratio(self.tp, self.tp + self.fp);
        self.recall = ratio(self.tp, self.tp + self.fn_);
        self.f1 = if self.precision + self.recall == 0.0 {
            0.0
        } else {
            2.0 * self.precision * self.recall / (self.precision + self.recall)
        };
        self
    }
}

/// Everything measured on one set of labels.
#[derive(Debug, Clone, Serialize)]
pub struct Scores {
    pub name: String,
    pub answers: usize,
    pub sentences: usize,
    /// Labelled sentences the findings have no sentence for (split differently).
    pub unmatched: usize,
    pub rows: Vec<Row>,
    pub review: Binary,
    /// Share of verbatim and light-edit sentences not supported.
    pub false_alarm_percent: f64,
    pub confusion: BTreeMap<String, BTreeMap<String, usize>>,
    pub flags: BTreeMap<String, BTreeMap<String, usize>>,
    pub citations: BTreeMap<String, BTreeMap<String, usize>>,
    /// Per class and edit kind: sentences, and how many meet the class's first rule.
    pub by_kind: BTreeMap<String, BTreeMap<String, (usize, usize)>>,
}

impl Scores {
    pub fn row(&self, key: &str) -> Option<&Row> {
        self.rows.iter().find(|r| r.key == key)
    }
}

/// What the checker said of a sentence: its verdict and flags (as found, or as they
/// would be under other thresholds) and the findings themselves.
#[derive(Debug, Clone)]
pub struct Seen<'a> {
    pub verdict: Verdict,
    pub flags: Vec<Flag>,
    pub f: &'a SentenceFindings,
}

impl<'a> Seen<'a> {
    pub fn of(f: &'a SentenceFindings) -> Seen<'a> {
        Seen { verdict: f.verdict, flags: f.flags.clone(), f }
    }

    pub fn evidence_doc(&self) -> Option<&'a str> {
        self.f.evidence.as_ref().map(|e| e.doc.as_str())
    }
}

/// The checker's findings, by answer id.
pub struct Found<'a> {
    by_id: HashMap<&'a str, &'a AnswerFindings>,
}

impl<'a> Found<'a> {
    pub fn new(reports: &'a [Report]) -> Found<'a> {
        let by_id =
            reports.iter().flat_map(|r| r.answers.iter()).map(|a| (a.id.as_str(), a)).collect();
        Found { by_id }
    }

    /// The checker's sentence for a label: same position and words, else same words.
    pub fn seen(&self, l: &Label) -> Option<Seen<'a>> {
        self.sentence(l).map(Seen::of)
    }

    pub fn sentence(&self, l: &Label) -> Option<&'a SentenceFindings> {
        let a = self.by_id.get(l.answer.as_str())?;
        let want = normalise(&l.text);
        a.sentences
            .iter()
            .find(|s| s.index == l.position && normalise(&s.text) == want)
            .or_else(|| a.sentences.iter().find(|s| normalise(&s.text) == want))
    }

    pub fn status(&self, c: &CitationLabel) -> Option<&'static str> {
        let a = self.by_id.get(c.answer.as_str())?;
        a.citations.iter().find(|x| x.r#ref == c.r#ref).map(|x| x.status.as_str())
    }
}

/// Whether the checker asks a reviewer to look at the sentence.
pub fn flagged(s: Option<&Seen<'_>>) -> bool {
    s.is_none_or(|s| {
        matches!(s.verdict, Verdict::Partial | Verdict::Unsupported) || !s.flags.is_empty()
    })
}

fn verdict_name(s: Option<&Seen<'_>>) -> &'static str {
    s.map_or("missing", |s| s.verdict.as_str())
}

/// Scores `labels` and `cites` (already selected) against the findings.
pub fn score(name: &str, labels: &[&Label], cites: &[&CitationLabel], found: &Found<'_>) -> Scores {
    score_with(name, labels, cites, &|l| found.seen(l), &|c| found.status(c))
}

/// [`score`] with the sentence and status lookups given (the sweep re-derives verdicts).
pub fn score_with<'a>(
    name: &str,
    labels: &[&Label],
    cites: &[&CitationLabel],
    seen: &dyn Fn(&Label) -> Option<Seen<'a>>,
    status: &dyn Fn(&CitationLabel) -> Option<&'static str>,
) -> Scores {
    let seen_all: Vec<Option<Seen<'a>>> = labels.iter().map(|l| seen(l)).collect();
    let mut rows = Vec::new();
    for t in TARGETS {
        let of: Vec<usize> = (0..labels.len()).filter(|&i| labels[i].class == t.class).collect();
        let correct = of.iter().filter(|&&i| t.rule.holds(labels[i], seen_all[i].as_ref())).count();
        let percent = pct(correct, of.len());
        rows.push(Row {
            key: t.key.into(),
            rule: t.rule.text().into(),
            n: of.len(),
            correct,
            percent,
            target: t.target,
            met: t.target.map(|x| percent + 1e-9 >= x),
        });
    }
    let mut citations: BTreeMap<String, BTreeMap<String, usize>> = BTreeMap::new();
    let mut exact = 0;
    for c in cites {
        let got = status(c).unwrap_or("missing");
        if got == c.expected {
            exact += 1;
        }
        *citations.entry(c.expected.into()).or_default().entry(got.into()).or_default() += 1;
    }
    let percent = pct(exact, cites.len());
    rows.push(Row {
        key: CITATIONS_KEY.into(),
        rule: "status as expected".into(),
        n: cites.len(),
        correct: exact,
        percent,
        target: Some(100.0),
        met: Some(exact == cites.len()),
    });

    let mut review = Binary::default();
    let mut confusion: BTreeMap<String, BTreeMap<String, usize>> = BTreeMap::new();
    let mut flags: BTreeMap<String, BTreeMap<String, usize>> = BTreeMap::new();
    let mut unmatched = 0;
    let (mut fa, mut fa_n) = (0, 0);
    let mut by_kind: BTreeMap<String, BTreeMap<String, (usize, usize)>> = BTreeMap::new();
    for (l, s) in labels.iter().zip(&seen_all) {
        let s = s.as_ref();
        if s.is_none() {
            unmatched += 1;
        }
        review.add(l.class.needs_review(), flagged(s));
        *confusion
            .entry(l.class.name().into())
            .or_default()
            .entry(verdict_name(s).into())
            .or_default() += 1;
        let f = flags.entry(l.class.name().into()).or_default();
        for x in s.map(|s| s.flags.as_slice()).unwrap_or_default() {
            *f.entry(x.as_str().into()).or_default() += 1;
        }
        if let Some(t) = TARGETS.iter().find(|t| t.class == l.class) {
            let kind = if l.detail.contains("also occurs in the cited passage") {
                format!("{} (value in passage)", l.kind)
            } else {
                l.kind.clone()
            };
            let e = by_kind.entry(l.class.name().into()).or_default().entry(kind).or_default();
            e.0 += 1;
            if t.rule.holds(l, s) {
                e.1 += 1;
            }
        }
        if matches!(l.class, Class::Verbatim | Class::LightEdit) {
            fa_n += 1;
            if s.is_none_or(|s| s.verdict != Verdict::Supported) {
                fa += 1;
            }
        }
    }
    let mut answers: Vec<&str> = labels.iter().map(|l| l.answer.as_str()).collect();
    answers.sort_unstable();
    answers.dedup();
    Scores {
        name: name.into(),
        answers: answers.len(),
        sentences: labels.len(),
        unmatched,
        rows,
        review: review.finish(),
        false_alarm_percent: pct(fa, fa_n),
        confusion,
        flags,
        citations,
        by_kind,
    }
}

pub fn pct(a: usize, b: usize) -> f64 {
    if b == 0 { 0.0 } else { 100.0 * a as f64 / b as f64 }
}

/// The scores as a plain-text table.
pub fn table(s: &Scores) -> String {
    let mut o = String::new();
    let _ = writeln!(o, "{}: {} sentences in {} answers", s.name, s.sentences, s.answers);
    let _ = writeln!(
        o,
        "  {:<30} {:<40} {:>6} {:>8} {:>7}  met",
        "target", "rule", "n", "share", "target"
    );
    for r in &s.rows {
        let _ = writeln!(
            o,
            "  {:<30} {:<40} {:>6} {:>7.1}% {:>7}  {}",
            r.key,
            r.rule,
            r.n,
            r.percent,
            r.target.map_or("-".into(), |t| format!("≥{t:.0}%")),
            match r.met {
                Some(true) => "yes",
                Some(false) => "MISS",
                None => "",
            }
        );
    }
    let b = &s.review;
    let _ = writeln!(
        o,
        "  needs review (binary): precision {:.3}, recall {:.3}, F1 {:.3} (tp {}, fp {}, fn {}, tn {}); false alarms on verbatim + light edits {:.1}%",
        b.precision, b.recall, b.f1, b.tp, b.fp, b.fn_, b.tn, s.false_alarm_percent
    );
    if s.unmatched > 0 {
        let _ = writeln!(
            o,
            "  {} labelled sentences were not found as sentences of the findings",
            s.unmatched
        );
    }
    let verdicts = ["supported", "partial", "unsupported", "no_claim", "missing"];
    let _ = writeln!(o, "  confusion (class × verdict):");
    let _ = writeln!(o, "    {:<18} {}", "class", verdicts.map(|v| format!("{v:>11}")).join(""));
    for c in Class::ALL {
        if let Some(m) = s.confusion.get(c.name()) {
            let cells: String = verdicts
                .iter()
                .map(|v| format!("{:>11}", m.get(*v).copied().unwrap_or(0)))
                .collect();
            let _ = writeln!(o, "    {:<18} {cells}", c.name());
        }
    }
    let _ = writeln!(o, "  by edit kind (meeting the class's first rule / sentences):");
    for c in Class::ALL {
        if let Some(m) = s.by_kind.get(c.name()).filter(|m| m.len() > 1) {
            let cells: Vec<String> = m.iter().map(|(k, (n, ok))| format!("{k} {ok}/{n}")).collect();
            let _ = writeln!(o, "    {:<18} {}", c.name(), cells.join(", "));
        }
    }
    let _ = writeln!(o, "  citation statuses (expected → found):");
    for (e, m) in &s.citations {
        let cells: Vec<String> = m.iter().map(|(k, n)| format!("{k} {n}")).collect();
        let _ = writeln!(o, "    {:<18} {}", e, cells.join(", "));
    }
    o
}

/// Failure examples: per label that misses a rule of its class, the sentence, its
/// source, the cited passage, and what the checker said.
pub fn failures(labels: &[&Label], found: &Found<'_>, per_class: usize) -> Vec<Value> {
    let mut out = Vec::new();
    let mut count: HashMap<(String, String), usize> = HashMap::new();
    for l in labels {
        let seen = found.seen(l);
        let s = seen.as_ref();
        for t in TARGETS.iter().filter(|t| t.class == l.class) {
            if t.rule.holds(l, s) {
                continue;
            }
            let k = count.entry((l.split.to_owned(), t.key.to_owned())).or_default();
            *k += 1;
            if *k > per_class {
                continue;
            }
            out.push(json!({
                "split": l.split,
                "target": t.key,
                "rule": t.rule.text(),
                "class": l.class.name(),
                "kind": l.kind,
                "answer": l.answer,
                "position": l.position,
                "sentence": l.text,
                "source": l.source,
                "source_doc": l.source_doc,
                "detail": l.detail,
                "expect_doc": l.expect_doc,
                "cited_doc": l.cited_doc,
                "passage": l.passage,
                "verdict": verdict_name(s),
                "score": s.map(|s| s.f.score),
                "flags": s.map(|s| s.flags.iter().map(|f| f.as_str()).collect::<Vec<_>>()),
                "evidence_doc": s.and_then(|s| s.evidence_doc()),
                "evidence": s.and_then(|s| s.f.evidence.as_ref()).map(|e| cut(&e.text, 1500)),
                "changed_terms": s.map(|s| s.f.changed_terms.iter().map(|c| format!("{} / {}", c.claim, c.evidence)).collect::<Vec<_>>()),
                "figures": s.map(|s| s.f.figures.clone()),
            }));
        }
    }
    out
}
