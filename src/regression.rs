//! Approved-answer regression: how far each answer has drifted from the answer a reviewer
//! approved for the same question, and whether that fails the gate.
//!
//! Where an answer record carries `approved_answer` (SPEC.md), the check records ROUGE-1,
//! ROUGE-2 and ROUGE-L F (Lin 2004) and sentence BLEU (Papineni et al. 2002) of the
//! answer (markers removed) against it, in `approved`. This module turns those figures
//! into findings and summary counts:
//!
//! * `[regression] min_rouge_l` (0..1) and `min_bleu` (0..100) are off until set;
//! * an answer below a set threshold gets a `below_approved_rouge_l` or
//!   `below_approved_bleu` finding, a warning (the answer may have been reworded
//!   faithfully: a reviewer should look). It can be waived by a reviewer decision like any
//!   finding, and fails the gate when its kind is listed in `gate.fail_on`;
//! * the summary gives the means and, per set threshold, the count and share of answers
//!   below it ([`summarise`]).
//!
//! What the two measures tell a reviewer: ROUGE was built around recall — how much of the
//! approved answer's wording the answer reproduces, in order for ROUGE-L (its longest
//! common subsequence) — so a low ROUGE-L says the answer leaves out or reorders much of
//! what was approved. BLEU is built on precision — how many of the answer's 1- to 4-word
//! sequences occur in the approved answer, with a penalty for answers shorter than it — so
//! a low BLEU says the answer says much that the approved answer does not. plumbline
//! reports ROUGE's F-measure, which weighs both. Neither measures meaning: a faithful
//! paraphrase scores low on both.

use crate::config::Config;
use crate::decisions::Decision;
use crate::findings::{
    Acceptance, AnswerFindings, ApprovedComparison, ApprovedSummary, Finding, Severity, round6,
};

/// The finding kind for an answer below `regression.min_rouge_l`.
pub const BELOW_ROUGE_L: &str = "below_approved_rouge_l";
/// The finding kind for an answer below `regression.min_bleu`.
pub const BELOW_BLEU: &str = "below_approved_bleu";

/// Whether `kind` is one of this module's finding kinds.
pub fn is_regression_kind(kind: &str) -> bool {
    kind == BELOW_ROUGE_L || kind == BELOW_BLEU
}

/// The findings an answer's agreement with its approved answer raises under `config`
/// (none without an approved answer or without thresholds), before decisions and gate.
pub fn findings(config: &Config, approved: Option<&ApprovedComparison>) -> Vec<Finding> {
    let Some(a) = approved else { return Vec::new() };
    let r = &config.regression;
    let mut out = Vec::new();
    if let Some(min) = r.min_rouge_l.filter(|&min| a.rouge_l < min) {
        out.push(finding(
            BELOW_ROUGE_L,
            format!(
                "ROUGE-L F against the approved answer is {:.3}, below regression.min_rouge_l = {min}: \
                 the answer leaves out or reorders much of the approved wording",
                a.rouge_l
            ),
        ));
    }
    if let Some(min) = r.min_bleu.filter(|&min| a.bleu < min) {
        out.push(finding(
            BELOW_BLEU,
            format!(
                "BLEU against the approved answer is {:.1}, below regression.min_bleu = {min}: \
                 much of the answer's wording does not occur in the approved answer",
                a.bleu
            ),
        ));
    }
    out
}

fn finding(kind: &str, message: String) -> Finding {
    Finding {
        kind: kind.to_owned(),
        sentence: None,
        r#ref: None,
        severity: Severity::Warning,
        message,
        gate: false,
        accepted: None,
    }
}

/// Adds the regression findings of one answer to `findings`, applies the reviewer
/// `decisions` that waive them (recording their indices in `used_decisions`), and decides
/// their gate. Returns `true` when none of them fails the gate.
///
/// Called once per answer by [`crate::check::check_answer`], after its other findings.
pub fn apply(
    config: &Config,
    decisions: &[Decision],
    answer_id: &str,
    approved: Option<&ApprovedComparison>,
    findings: &mut Vec<Finding>,
    used_decisions: &mut Vec<usize>,
) -> bool {
    let mut passed = true;
    for mut f in self::findings(config, approved) {
        if let Some((i, d)) =
            decisions.iter().enumerate().find(|(_, d)| d.matches(answer_id, &f.kind, None, None))
        {
            f.accepted = Some(Acceptance { by: d.by.clone(), note: d.note.clone() });
            if !used_decisions.contains(&i) {
                used_decisions.push(i);
            }
        }
        f.gate = f.accepted.is_none() && config.gate.fails_on(&f.kind);
        passed &= !f.gate;
        findings.push(f);
    }
    passed
}

/// The summary of agreement with approved answers, over the answers that have one; `None`
/// when none has.
pub fn summarise(config: &Config, answers: &[AnswerFindings]) -> Option<ApprovedSummary> {
    let mut totals = Totals::default();
    answers.iter().filter_map(|a| a.approved.as_ref()).for_each(|a| totals.add(a));
    totals.summary(config)
}

/// The approved-answer comparisons of a run, summed one answer at a time (a streamed run
/// does not hold every answer): counts and sums, and how many fall below each of a few
/// thresholds as they come, so that the summary needs no second pass.
#[derive(Debug, Clone, Default)]
pub struct Totals {
    n: usize,
    rouge1: f64,
    rouge2: f64,
    rouge_l: f64,
    bleu: f64,
    /// Every ROUGE-L F and BLEU seen, kept only to count those below a threshold. Two
    /// numbers an approved answer: small next to the answer itself.
    values: Vec<(f64, f64)>,
}

impl Totals {
    /// Adds one answer's comparison.
    pub fn add(&mut self, a: &ApprovedComparison) {
        self.n += 1;
        self.rouge1 += a.rouge1;
        self.rouge2 += a.rouge2;
        self.rouge_l += a.rouge_l;
        self.bleu += a.bleu;
        self.values.push((a.rouge_l, a.bleu));
    }

    /// The summary under `config`'s `[regression]` thresholds; `None` with no approved
    /// answer.
    pub fn summary(&self, config: &Config) -> Option<ApprovedSummary> {
        let n = self.n;
        if n == 0 {
            return None;
        }
        let mean = |sum: f64| round6(sum / n as f64);
        let r = &config.regression;
        let below_rouge_l =
            r.min_rouge_l.map(|min| self.values.iter().filter(|(rl, _)| *rl < min).count());
        let below_bleu = r.min_bleu.map(|min| self.values.iter().filter(|(_, b)| *b < min).count());
        let share = |count: Option<usize>| count.map(|c| round6(c as f64 / n as f64));
        Some(ApprovedSummary {
            answers: n,
            mean_rouge1: mean(self.rouge1),
            mean_rouge2: mean(self.rouge2),
            mean_rouge_l: mean(self.rouge_l),
            mean_bleu: mean(self.bleu),
            min_rouge_l: r.min_rouge_l,
            below_rouge_l,
            share_below_rouge_l: share(below_rouge_l),
            min_bleu: r.min_bleu,
            below_bleu,
            share_below_bleu: share(below_bleu),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::config::RegressionSettings;

    fn comparison(rouge_l: f64, bleu: f64) -> ApprovedComparison {
        ApprovedComparison { rouge1: rouge_l, rouge2: rouge_l / 2.0, rouge_l, bleu }
    }

    fn config(min_rouge_l: Option<f64>, min_bleu: Option<f64>, fail_on: &[&str]) -> Config {
        let mut c = Config {
            regression: RegressionSettings { min_rouge_l, min_bleu },
            ..Config::default()
        };
        c.gate.fail_on.extend(fail_on.iter().map(|s| s.to_string()));
        c
    }

    #[test]
    fn thresholds_off_raise_nothing() {
        let c = Config::default();
        assert!(findings(&c, Some(&comparison(0.0, 0.0))).is_empty());
        assert!(findings(&config(Some(0.5), Some(30.0), &[]), None).is_empty());
    }

    #[test]
    fn below_is_strict_and_each_threshold_has_its_kind() {
        let c = config(Some(0.5), Some(30.0), &[]);
        // At the threshold: not below.
        assert!(findings(&c, Some(&comparison(0.5, 30.0))).is_empty());
        let f = findings(&c, Some(&comparison(0.499, 29.9)));
        let kinds: Vec<&str> = f.iter().map(|f| f.kind.as_str()).collect();
        assert_eq!(kinds, [BELOW_ROUGE_L, BELOW_BLEU]);
        assert!(f.iter().all(|f| f.severity == Severity::Warning && !f.gate));
        assert!(f[0].message.contains("0.499") && f[0].message.contains("min_rouge_l = 0.5"));
    }

    #[test]
    fn gate_follows_fail_on_and_decisions_waive() {
        let c = config(Some(0.5), Some(30.0), &[BELOW_BLEU]);
        let mut all = Vec::new();
        let mut used = Vec::new();
        let passed = apply(&c, &[], "a-1", Some(&comparison(0.1, 5.0)), &mut all, &mut used);
        assert!(!passed);
        assert_eq!(all.iter().map(|f| f.gate).collect::<Vec<_>>(), [false, true]);

        let waiver = Decision {
            line: 1,
            answer: "a-1".into(),
            sentence: None,
            r#ref: None,
            finding: BELOW_BLEU.into(),
            by: "rev-1".into(),
            note: "reworded on purpose".into(),
        };
        let mut all = Vec::new();
        let passed = apply(&c, &[waiver], "a-1", Some(&comparison(0.1, 5.0)), &mut all, &mut used);
        assert!(passed);
        assert_eq!(used, [0]);
        assert!(all[1].accepted.is_some() && !all[1].gate);
    }

    #[test]
    fn summary_means_and_shares() {
        let c = config(Some(0.5), None, &[]);
        let answer = |approved: Option<ApprovedComparison>| AnswerFindings {
            id: "x".into(),
            line: 1,
            user: None,
            groups: None,
            question: None,
            answer: String::new(),
            passed: true,
            sentences: Vec::new(),
            citations: Vec::new(),
            findings: Vec::new(),
            approved,
        };
        assert_eq!(summarise(&c, &[answer(None)]), None);
        let answers = [
            answer(Some(comparison(0.2, 10.0))),
            answer(None),
            answer(Some(comparison(0.6, 30.0))),
            answer(Some(comparison(0.7, 50.0))),
            answer(Some(comparison(0.5, 20.0))),
        ];
        let s = summarise(&c, &answers).unwrap();
        assert_eq!(s.answers, 4);
        assert_eq!(s.mean_rouge_l, 0.5);
        assert_eq!(s.mean_bleu, 27.5);
        assert_eq!(s.mean_rouge2, 0.25);
        assert_eq!((s.below_rouge_l, s.share_below_rouge_l), (Some(1), Some(0.25)));
        assert_eq!((s.min_bleu, s.below_bleu, s.share_below_bleu), (None, None, None));
    }
}
