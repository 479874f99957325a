//! The figures block of README.md: written from a full run, read back by the CI run.
//!
//! The block sits between `<!-- accuracy:begin -->` and `<!-- accuracy:end -->`. Each
//! target is one table row whose first cell is the target's key in backticks and whose
//! last cell is the figure of the CI subset (the first answers of the test split, which
//! `run.sh ci` regenerates exactly); `run.sh ci` fails when its figure for a key falls
//! more than [`TOLERANCE`] points below that cell.

use std::collections::BTreeMap;

use crate::score::Scores;

pub const BEGIN: &str = "<!-- accuracy:begin -->";
pub const END: &str = "<!-- accuracy:end -->";

/// Points a CI figure may fall below README's before CI fails.
pub const TOLERANCE: f64 = 2.0;

/// What the block says about the run that made it.
pub struct RunInfo {
    pub date: String,
    pub commit: String,
    pub command: String,
    pub packages: String,
    pub seed: u64,
    pub documents: usize,
    pub seconds: f64,
}

/// The block (markers included) for a full run's test-split and CI-subset scores.
pub fn block(info: &RunInfo, test: &Scores, ci: &Scores) -> String {
    let mut o = String::new();
    o.push_str(BEGIN);
    o.push('\n');
    o.push_str(&format!(
        "Measured {} on commit `{}` (2-core machine, {:.0} s) with `{}`; seed {}; \
         store of {} documents from the Debian packages {}. Test split: {} sentences in {} \
         answers; CI subset (what `tests/accuracy/run.sh ci` regenerates and checks, failing \
         when a figure falls more than {:.0} points below this column): {} sentences in {} answers.\n\n",
        info.date,
        info.commit,
        info.seconds,
        info.command,
        info.seed,
        info.documents,
        info.packages,
        test.sentences,
        test.answers,
        TOLERANCE,
        ci.sentences,
        ci.answers,
    ));
    o.push_str("| target | rule | n | correct | target | met | CI n | CI correct |\n");
    o.push_str("|---|---|--:|--:|--:|:-:|--:|--:|\n");
    for r in &test.rows {
        let c = ci.row(&r.key);
        o.push_str(&format!(
            "| `{}` | {} | {} | {:.1}% | {} | {} | {} | {} |\n",
            r.key,
            r.rule,
            r.n,
            r.percent,
            r.target.map_or("–".into(), |t| format!("≥ {t:.0}%")),
            match r.met {
                Some(true) => "yes",
                Some(false) => "**no**",
                None => "",
            },
            c.map_or(0, |c| c.n),
            c.map_or("–".into(), |c| format!("{:.1}%", c.percent)),
        ));
    }
    let b = &test.review;
    o.push_str(&format!(
        "\nShould a reviewer look at this sentence (verdict partial or unsupported, or any flag)? \
         Precision {:.3}, recall {:.3}, F1 {:.3}; false alarms on verbatim and light edits {:.1}%.\n",
        b.precision, b.recall, b.f1, test.false_alarm_percent
    ));
    o.push_str(END);
    o
}

/// `text` with its block replaced by `new` (appended under a heading when absent).
pub fn replace_block(text: &str, new: &str) -> String {
    match (text.find(BEGIN), text.find(END)) {
        (Some(a), Some(b)) if b > a => format!("{}{}{}", &text[..a], new, &text[b + END.len()..]),
        _ => format!("{}\n## How often it is right\n\n{}\n", text.trim_end(), new),
    }
}

/// The CI column of the block, by key.
pub fn ci_figures(text: &str) -> Result<BTreeMap<String, f64>, String> {
    let (Some(a), Some(b)) = (text.find(BEGIN), text.find(END)) else {
        return Err(format!(
            "README has no {BEGIN} … {END} block; run `tests/accuracy/run.sh full --write-readme`"
        ));
    };
    let mut out = BTreeMap::new();
    for (k, line) in text[a..b].lines().enumerate() {
        let Some(rest) = line.strip_prefix("| `") else { continue };
        let key = rest.split('`').next().unwrap_or("").to_owned();
        let cells: Vec<&str> = line.trim().trim_matches('|').split('|').map(str::trim).collect();
        let last = cells.last().copied().unwrap_or("");
        let v: f64 = last.trim_end_matches('%').parse().map_err(|_| {
            format!(
                "README accuracy block, row {} ({key}): last cell {last:?} is not a percentage",
                k + 1
            )
        })?;
        out.insert(key, v);
    }
    if out.is_empty() {
        return Err("README accuracy block has no rows".into());
    }
    Ok(out)
}

/// The keys whose CI figure fell more than the tolerance below README's.
pub fn regressions(readme: &BTreeMap<String, f64>, ci: &Scores) -> Vec<String> {
    let mut bad = Vec::new();
    for (key, want) in readme {
        match ci.row(key) {
            Some(r) if r.percent + TOLERANCE + 1e-9 >= *want => {}
            Some(r) => {
                bad.push(format!("{key}: {:.1}% < README {:.1}% − {TOLERANCE:.0}", r.percent, want))
            }
            None => bad.push(format!("{key}: no such row in this run")),
        }
    }
    bad
}

/// Checks the block's round trip and the regression rule on a made-up table; returns
/// the failures (a CI check that could not fail would be worth nothing).
pub fn self_test() -> Vec<String> {
    use crate::score::Row;
    let mut bad = Vec::new();
    let row = |key: &str, percent: f64| Row {
        key: key.into(),
        rule: "r".into(),
        n: 100,
        correct: percent as usize,
        percent,
        target: Some(90.0),
        met: Some(percent >= 90.0),
    };
    let scores = |a: f64, b: f64| Scores {
        name: "t".into(),
        answers: 1,
        sentences: 200,
        unmatched: 0,
        rows: vec![row("alpha", a), row("beta.flag", b)],
        review: Default::default(),
        false_alarm_percent: 0.0,
        confusion: BTreeMap::new(),
        flags: BTreeMap::new(),
        citations: BTreeMap::new(),
        by_kind: BTreeMap::new(),
    };
    let info = RunInfo {
        date: "2000-01-01".into(),
        commit: "c".into(),
        command: "x".into(),
        packages: "p".into(),
        seed: 1,
        documents: 2,
        seconds: 3.0,
    };
    let text = replace_block("# T\n", &block(&info, &scores(95.0, 80.0), &scores(96.0, 81.5)));
    match ci_figures(&text) {
        Ok(f) => {
            if f.get("alpha") != Some(&96.0) || f.get("beta.flag") != Some(&81.5) {
                bad.push(format!("README block read back wrong: {f:?}"));
            }
            if !regressions(&f, &scores(94.0, 79.5)).is_empty() {
                bad.push("a fall of 2 points or less must pass".into());
            }
            if regressions(&f, &scores(93.9, 81.5)).len() != 1 {
                bad.push("a fall of more than 2 points must fail".into());
            }
        }
        Err(e) => bad.push(e),
    }
    if ci_figures("no block here").is_ok() {
        bad.push("a README without the block must be an error".into());
    }
    bad
}
