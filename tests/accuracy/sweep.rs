//! Calibration: the thresholds and the scorer's parameters chosen on the tuning split,
//! then reported on the test split.
//!
//! `support.fuzzy_threshold` and `support.window_sentences` change the scores, so each
//! pair of them is a real run of `plumbline check` on the tuning answers. The thresholds
//! only cut the scores, so for each such run every pair (`thresholds.supported`,
//! `thresholds.partial`) is evaluated from the recorded scores and flags without running
//! again: the run is made with `partial = 0`, so that the polarity and changed-term
//! checks, which speak only at or above `partial`, are all recorded, and the verdict is
//! re-derived by the rule README and `src/support.rs` state (score ≥ supported:
//! supported; ≥ partial: partial; else unsupported; a number mismatch, or a polarity
//! mismatch at or above partial, makes it unsupported; a changed term at or above
//! partial makes a supported sentence partial). The checker has rules of its own on top
//! (the number check where half the words match, the joined-clause rules), which use
//! window statistics the findings do not record, so the re-derivation is a *screen*: how
//! often it disagrees with the checker is measured, at the default values, against the
//! default run and reported, and the best few screened points, with the defaults, are
//! then run for real on the tuning split; the choice is made on those real runs. Only
//! `misattributed`, which depends on `supported` through the store search, is taken as
//! recorded in the screen.
//!
//! The objective: the largest F1 of "needs review" on the tuning split, among the points
//! whose false alarms (verbatim and light edits not supported) stay at or under the
//! issue's 3 %; ties go to more targets met, then to the point nearest the defaults. Where
//! no point of the grid reaches 3 % (the false alarms of paraphrases come mostly from the
//! changed-term and polarity checks, which no threshold moves), the limit becomes the
//! lowest false-alarm rate of the screen plus half a point, and the run says so:
//! minimising false alarms alone would pick the lowest thresholds and let every joined
//! clause pass.

use std::path::Path;

use plumbline::findings::{Flag, Report, SentenceFindings, Verdict};
use serde_json::{Value, json};

use crate::generate::{CitationLabel, Label};
use crate::score::{self, Found, Scores, Seen};

pub struct Inputs<'a> {
    pub bin: &'a Path,
    pub store: &'a Path,
    pub principals: &'a Path,
    pub work: &'a Path,
    pub tuning_answers: &'a Path,
    pub test_answers: &'a Path,
    pub tuning: (&'a [&'a Label], &'a [&'a CitationLabel]),
    pub test: (&'a [&'a Label], &'a [&'a CitationLabel]),
    /// Findings of the run with the default settings (both splits).
    pub default_tuning: &'a Found<'a>,
}

pub const FUZZY: [f64; 3] = [0.80, 0.85, 0.90];
pub const WINDOW: [usize; 4] = [1, 2, 3, 4];
const DEFAULTS: (f64, f64, f64, usize) = (0.75, 0.45, 0.85, 3);
const FALSE_ALARM_LIMIT: f64 = 3.0;
/// How many scorer runs' best screened points are run for real before the choice.
const CONFIRM: usize = 3;
/// Slack over the grid's lowest false-alarm rate when no point reaches the limit.
const FALSE_ALARM_SLACK: f64 = 0.5;

#[derive(Debug, Clone)]
struct Point {
    supported: f64,
    partial: f64,
    fuzzy: f64,
    window: usize,
    scores: Scores,
    met: usize,
}

impl Point {
    fn json(&self) -> Value {
        json!({
            "supported": self.supported, "partial": self.partial,
            "fuzzy_threshold": self.fuzzy, "window_sentences": self.window,
            "review_f1": self.scores.review.f1, "precision": self.scores.review.precision,
            "recall": self.scores.review.recall, "false_alarm_percent": self.scores.false_alarm_percent,
            "targets_met": self.met,
            "rows": self.scores.rows.iter().map(|r| json!({"key": r.key, "percent": r.percent})).collect::<Vec<_>>(),
        })
    }

    fn distance(&self) -> f64 {
        (self.supported - DEFAULTS.0).abs()
            + (self.partial - DEFAULTS.1).abs()
            + (self.fuzzy - DEFAULTS.2).abs()
            + (self.window as f64 - DEFAULTS.3 as f64).abs() * 0.1
    }

    /// Whether `self` is better than `other` under the objective, with false alarms
    /// allowed up to `limit` percent.
    fn better(&self, other: &Point, limit: f64) -> bool {
        let ok = |p: &Point| p.scores.false_alarm_percent <= limit + 1e-9;
        match (ok(self), ok(other)) {
            (true, false) => return true,
            (false, true) => return false,
            (false, false) => {
                return self.scores.false_alarm_percent < other.scores.false_alarm_percent - 1e-9;
            }
            _ => {}
        }
        let (a, b) = (self.scores.review.f1, other.scores.review.f1);
        if (a - b).abs() > 1e-9 {
            return a > b;
        }
        if self.met != other.met {
            return self.met > other.met;
        }
        self.distance() < other.distance()
    }
}

/// The verdict and flags a sentence would get at thresholds `sup` / `par`, from a run
/// made with `partial = 0` (see the module documentation).
pub fn rederive(f: &SentenceFindings, sup: f64, par: f64) -> Seen<'_> {
    if f.verdict == Verdict::NoClaim {
        return Seen::of(f);
    }
    let relevant = f.score >= par;
    let number = f.flags.contains(&Flag::NumberMismatch);
    let negation = relevant && f.flags.contains(&Flag::NegationMismatch);
    let changed = relevant && f.flags.contains(&Flag::ChangedTerm);
    let mut verdict = if f.score >= sup {
        Verdict::Supported
    } else if f.score >= par {
        Verdict::Partial
    } else {
        Verdict::Unsupported
    };
    if number || negation {
        verdict = Verdict::Unsupported;
    } else if changed && verdict == Verdict::Supported {
        verdict = Verdict::Partial;
    }
    let flags = f
        .flags
        .iter()
        .copied()
        .filter(|x| match x {
            Flag::NegationMismatch => negation,
            Flag::ChangedTerm => changed,
            Flag::Misattributed | Flag::RestrictedMatch => verdict != Verdict::Supported,
            _ => true,
        })
        .collect();
    Seen { verdict, flags, f }
}

fn config_text(sup: f64, par: f64, fuzzy: f64, window: usize) -> String {
    format!(
        "# written by the accuracy benchmark's sweep\n[thresholds]\nsupported = {sup}\npartial = {par}\n\n[support]\nfuzzy_threshold = {fuzzy}\nwindow_sentences = {window}\n"
    )
}

fn grid() -> Vec<(f64, f64)> {
    let mut v = Vec::new();
    for s in 10..=18 {
        for p in 6..=14 {
            if p <= s {
                v.push((f64::from(s) * 0.05, f64::from(p) * 0.05));
            }
        }
    }
    v.into_iter().map(|(s, p)| ((s * 100.0).round() / 100.0, (p * 100.0).round() / 100.0)).collect()
}

/// Runs the sweep; returns its record (printed as it goes).
pub fn run(i: &Inputs<'_>) -> Result<Value, String> {
    let (labels, _) = i.tuning;
    let mut points: Vec<Point> = Vec::new();
    let mut consistency = json!(null);
    let mut runs = Vec::new();
    println!(
        "\nsweep on the tuning split ({} sentences): {} × {} scorer runs, {} threshold pairs each",
        labels.len(),
        FUZZY.len(),
        WINDOW.len(),
        grid().len()
    );
    for &fuzzy in &FUZZY {
        for &window in &WINDOW {
            let cfg = i.work.join(format!("sweep-f{fuzzy:.2}-w{window}.toml"));
            std::fs::write(&cfg, config_text(DEFAULTS.0, 0.0, fuzzy, window))
                .map_err(|e| format!("{}: {e}", cfg.display()))?;
            let out = i.work.join("sweep-findings.json");
            let (report, secs) =
                crate::check(i.bin, i.store, i.tuning_answers, i.principals, Some(&cfg), &out)?;
            let reports: Vec<Report> = vec![report];
            let found = Found::new(&reports);
            for (sup, par) in grid() {
                let scores = score::score_with(
                    "tuning",
                    labels,
                    &[],
                    &|l| found.sentence(l).map(|f| rederive(f, sup, par)),
                    &|_| None,
                );
                let met = scores
                    .rows
                    .iter()
                    .filter(|r| r.met == Some(true) && r.key != score::CITATIONS_KEY)
                    .count();
                points.push(Point { supported: sup, partial: par, fuzzy, window, scores, met });
            }
            if (fuzzy - DEFAULTS.2).abs() < 1e-9 && window == DEFAULTS.3 {
                let mut n = 0;
                let mut differ = Vec::new();
                for l in labels {
                    let (Some(base), Some(real)) =
                        (found.sentence(l), i.default_tuning.sentence(l))
                    else {
                        continue;
                    };
                    n += 1;
                    let d = rederive(base, DEFAULTS.0, DEFAULTS.1);
                    let mut a: Vec<Flag> =
                        d.flags.iter().copied().filter(|x| *x != Flag::Misattributed).collect();
                    let mut b: Vec<Flag> =
                        real.flags.iter().copied().filter(|x| *x != Flag::Misattributed).collect();
                    a.sort();
                    b.sort();
                    if d.verdict != real.verdict || a != b || (base.score - real.score).abs() > 1e-9
                    {
                        differ.push(json!({"answer": l.answer, "position": l.position, "rederived": d.verdict.as_str(), "checker": real.verdict.as_str()}));
                    }
                }
                println!(
                    "  re-derivation check at the defaults: {} of {n} sentences differ from the default run",
                    differ.len()
                );
                consistency = json!({"sentences": n, "differ": differ.len(), "examples": differ.iter().take(20).collect::<Vec<_>>()});
            }
            println!("  fuzzy {fuzzy:.2} window {window}: run {secs:.1}s");
        }
    }
    let lowest = points.iter().map(|p| p.scores.false_alarm_percent).fold(f64::INFINITY, f64::min);
    let limit =
        if lowest <= FALSE_ALARM_LIMIT { FALSE_ALARM_LIMIT } else { lowest + FALSE_ALARM_SLACK };
    if limit > FALSE_ALARM_LIMIT {
        println!(
            "  no point reaches false alarms of {FALSE_ALARM_LIMIT}% (lowest {lowest:.2}%); the limit becomes {limit:.2}%"
        );
    }
    let mut md = String::from(
        "| fuzzy_threshold | window_sentences | best supported | best partial | review F1 | false alarms | targets met |\n|--:|--:|--:|--:|--:|--:|--:|\n",
    );
    for &fuzzy in &FUZZY {
        for &window in &WINDOW {
            let mut best: Option<&Point> = None;
            for p in points.iter().filter(|p| (p.fuzzy - fuzzy).abs() < 1e-9 && p.window == window)
            {
                if best.is_none_or(|b| p.better(b, limit)) {
                    best = Some(p);
                }
            }
            let b = best.expect("a grid point");
            println!(
                "  fuzzy {fuzzy:.2} window {window}: best supported {:.2} partial {:.2}: F1 {:.3}, false alarms {:.1}%, {} targets met",
                b.supported, b.partial, b.scores.review.f1, b.scores.false_alarm_percent, b.met
            );
            md.push_str(&format!(
                "| {fuzzy:.2} | {window} | {:.2} | {:.2} | {:.3} | {:.1}% | {} |\n",
                b.supported, b.partial, b.scores.review.f1, b.scores.false_alarm_percent, b.met
            ));
            runs.push(b.json());
        }
    }
    let md_path = i.work.join("sweep.md");
    std::fs::write(&md_path, &md).map_err(|e| format!("{}: {e}", md_path.display()))?;
    println!("  sweep table (Markdown) written to {}", md_path.display());
    let default_point = points
        .iter()
        .find(|p| {
            (p.supported - DEFAULTS.0).abs() < 1e-9
                && (p.partial - DEFAULTS.1).abs() < 1e-9
                && (p.fuzzy - DEFAULTS.2).abs() < 1e-9
                && p.window == DEFAULTS.3
        })
        .cloned();
    // Screened by re-derivation; the best few (and the defaults) are then run for real,
    // and the choice is made on those runs.
    // The best point of each scorer run, best first; the first few go to real runs.
    let mut per_run: Vec<Point> = Vec::new();
    for &fuzzy in &FUZZY {
        for &window in &WINDOW {
            let mut best: Option<&Point> = None;
            for p in points.iter().filter(|p| (p.fuzzy - fuzzy).abs() < 1e-9 && p.window == window)
            {
                if best.is_none_or(|b| p.better(b, limit)) {
                    best = Some(p);
                }
            }
            per_run.extend(best.cloned());
        }
    }
    let mut shortlist: Vec<Point> = Vec::new();
    while shortlist.len() < CONFIRM && !per_run.is_empty() {
        let mut k = 0;
        for j in 1..per_run.len() {
            if per_run[j].better(&per_run[k], limit) {
                k = j;
            }
        }
        shortlist.push(per_run.remove(k));
    }
    if let Some(d) = &default_point {
        if !shortlist.iter().any(|p| p.distance() < 1e-9) {
            shortlist.push(d.clone());
        }
    }
    println!("  confirmed by real runs on the tuning split (screened → real):");
    let mut confirmed: Vec<(Point, Point)> = Vec::new();
    for p in shortlist {
        let cfg = i.work.join("sweep-confirm.toml");
        std::fs::write(&cfg, config_text(p.supported, p.partial, p.fuzzy, p.window))
            .map_err(|e| format!("{}: {e}", cfg.display()))?;
        let out = i.work.join("sweep-findings.json");
        let (report, _) =
            crate::check(i.bin, i.store, i.tuning_answers, i.principals, Some(&cfg), &out)?;
        let reports = vec![report];
        let found = Found::new(&reports);
        let scores = score::score("tuning", labels, i.tuning.1, &found);
        let met = scores
            .rows
            .iter()
            .filter(|r| r.met == Some(true) && r.key != score::CITATIONS_KEY)
            .count();
        let real = Point { scores, met, ..p.clone() };
        println!(
            "    supported {:.2} partial {:.2} fuzzy {:.2} window {}: F1 {:.3} → {:.3}, false alarms {:.1}% → {:.1}%, targets met {} → {}",
            p.supported,
            p.partial,
            p.fuzzy,
            p.window,
            p.scores.review.f1,
            real.scores.review.f1,
            p.scores.false_alarm_percent,
            real.scores.false_alarm_percent,
            p.met,
            real.met
        );
        confirmed.push((p, real));
    }
    let mut chosen = confirmed[0].1.clone();
    for (_, real) in &confirmed {
        if real.better(&chosen, limit) {
            chosen = real.clone();
        }
    }
    let default_real = confirmed.iter().find(|(p, _)| p.distance() < 1e-9).map(|(_, r)| r.clone());
    println!(
        "  chosen: supported {:.2}, partial {:.2}, fuzzy_threshold {:.2}, window_sentences {} (tuning F1 {:.3}, false alarms {:.1}%, {} targets met){}",
        chosen.supported,
        chosen.partial,
        chosen.fuzzy,
        chosen.window,
        chosen.scores.review.f1,
        chosen.scores.false_alarm_percent,
        chosen.met,
        default_real.as_ref().map_or(String::new(), |d| format!(
            "; defaults on tuning: F1 {:.3}, false alarms {:.1}%, {} targets met",
            d.scores.review.f1, d.scores.false_alarm_percent, d.met
        ))
    );

    // The chosen values on the test split, by a real run.
    let cfg = i.work.join("recommended.toml");
    std::fs::write(
        &cfg,
        config_text(chosen.supported, chosen.partial, chosen.fuzzy, chosen.window),
    )
    .map_err(|e| format!("{}: {e}", cfg.display()))?;
    let out = i.work.join("findings-test-recommended.json");
    let (report, _) = crate::check(i.bin, i.store, i.test_answers, i.principals, Some(&cfg), &out)?;
    let reports = vec![report];
    let found = Found::new(&reports);
    let test = score::score("test split with the sweep's values", i.test.0, i.test.1, &found);
    print!("\n{}", score::table(&test));

    Ok(json!({
        "objective": format!("largest needs-review F1 on the tuning split with false alarms (verbatim + light edits not supported) at most {FALSE_ALARM_LIMIT}% (or, where no point reaches it, the grid's lowest rate + {FALSE_ALARM_SLACK}); ties: more targets met, then nearest the defaults"),
        "false_alarm_limit_used": limit,
        "lowest_false_alarm": lowest,
        "fuzzy_threshold": FUZZY,
        "window_sentences": WINDOW,
        "threshold_pairs": grid().len(),
        "consistency_at_defaults": consistency,
        "best_per_run": runs,
        "default_point": default_point.map(|p| p.json()),
        "confirmed": confirmed.iter().map(|(p, r)| json!({"screened": p.json(), "real": r.json()})).collect::<Vec<_>>(),
        "chosen": chosen.json(),
        "test_with_chosen": serde_json::to_value(&test).unwrap_or(Value::Null),
        "points": points.iter().map(Point::json).collect::<Vec<_>>(),
    }))
}
