//! Joining the findings of shards into one run (`plumbline merge`).
//!
//! A very large answers log is spread over machines with `check --shard K/N --json`
//! (see [`crate::shard`]); each document holds the answers whose id hashes to its shard,
//! and shard 1 also holds every line that could not be read. [`merge`] checks that the
//! parts belong together and joins them:
//!
//! * **Same run.** Every part must come from the same plumbline version, with the same
//!   effective settings, the same answers file (size and SHA-256), store (digest and
//!   document count), principals, config and decisions files (SHA-256), and the same
//!   `--redact-restricted`; paths may differ, as machines mount files in different places.
//! * **Whole.** The parts must be shards 1..N of one N, each exactly once, and every answer
//!   must hash to the shard that holds it. A missing or repeated shard is refused by
//!   number.
//! * **Joined.** Answers and rejected lines are put back in line order; lines read are
//!   summed; a reviewer decision is applied if any shard applied it and stale if every
//!   shard found it stale; and the summary and the gate are computed again over the whole
//!   ([`crate::run::summarise`]), exactly as `check` computes them.
//!
//! So the merged document equals the unsharded run's, byte for byte, except for the run
//! record: `generated_at`, `command`, and `merged_from` in place of `shard` (tested in
//! `tests/integration/gating.rs`).

use std::collections::{BTreeMap, HashMap};

use crate::config::Config;
use crate::findings::{
    DecisionRecord, Decisions, PartRecord, RejectedLine, Report, ShardRecord, StoreRecord,
};
use crate::runfile::RunFile;
use crate::shard::Shard;

/// Joins the shard documents `parts` into one run. `command` is recorded as the merged
/// run's command. Errors name the part and field at fault.
pub fn merge(
    parts: &[RunFile],
    command: Vec<String>,
    generated_at: String,
) -> Result<Report, String> {
    let Some(first) = parts.first() else {
        return Err("merge needs at least one findings file".into());
    };
    let f = &first.report;
    let name0 = &first.file.path;
    for p in &parts[1..] {
        same_run(first, p)?;
    }

    // Shards: 1..N of one N, each once.
    let shard_of = |p: &RunFile| p.report.shard.as_ref().map_or((1, 1), |s| (s.k, s.n));
    let n = shard_of(first).1;
    let mut by_k: BTreeMap<u64, &str> = BTreeMap::new();
    for p in parts {
        let (k, pn) = shard_of(p);
        if pn != n {
            return Err(format!(
                "{}: shard: part of {pn} shards, but {name0} is part of {n}; merge the shards of one --shard K/N run",
                p.file.path
            ));
        }
        if let Some(other) = by_k.insert(k, &p.file.path) {
            return Err(format!("{other} and {} both hold shard {k} of {n}", p.file.path));
        }
    }
    let missing: Vec<String> =
        (1..=n).filter(|k| !by_k.contains_key(k)).map(|k| k.to_string()).collect();
    if !missing.is_empty() {
        return Err(format!(
            "shard{} {} of {n} missing: give all {n} shards' findings files",
            if missing.len() == 1 { "" } else { "s" },
            missing.join(", ")
        ));
    }

    // Answers: each must belong to its shard; lines and ids once.
    let mut answers = Vec::new();
    let mut rejected: Vec<RejectedLine> = Vec::new();
    let mut lines_read = 0usize;
    for p in parts {
        let (k, _) = shard_of(p);
        for (i, a) in p.report.answers.iter().enumerate() {
            if Shard::of(&a.id, n) != k {
                return Err(format!(
                    "{}: answers[{i}].id: answer {:?} hashes to shard {} of {n}, not {k}: the part was not made by `check --shard {k}/{n}`",
                    p.file.path,
                    a.id,
                    Shard::of(&a.id, n)
                ));
            }
        }
        answers.extend(p.report.answers.iter().cloned());
        rejected.extend(p.report.rejected.iter().cloned());
        lines_read += p.report.summary.lines_read;
    }
    answers.sort_by_key(|a| a.line);
    rejected.sort_by_key(|r| r.line);
    let mut seen_lines: HashMap<usize, &str> = HashMap::new();
    for (line, id) in answers
        .iter()
        .map(|a| (a.line, a.id.as_str()))
        .chain(rejected.iter().map(|r| (r.line, "a rejected line")))
    {
        if let Some(prev) = seen_lines.insert(line, id) {
            return Err(format!(
                "line {line} of the answers file is reported twice ({prev}; {id}): the parts overlap"
            ));
        }
    }
    if answers.len() + rejected.len() != lines_read {
        return Err(format!(
            "the parts' counts do not add up: {} answers + {} rejected lines, but {lines_read} lines read",
            answers.len(),
            rejected.len()
        ));
    }

    let config: Config =
        serde_json::from_value(f.config.clone()).map_err(|e| format!("{name0}: config: {e}"))?;
    let summary = crate::run::summarise(&config, &answers, &rejected, lines_read);

    Ok(Report {
        tool: f.tool.clone(),
        generated_at,
        command,
        shard: None,
        merged_from: parts
            .iter()
            .map(|p| PartRecord {
                path: p.file.path.clone(),
                sha256: p.file.sha256.clone(),
                generated_at: p.report.generated_at.clone(),
                shard: p.report.shard.clone().or(Some(ShardRecord {
                    k: 1,
                    n: 1,
                    hash: crate::shard::HASH_NAME.into(),
                })),
            })
            .collect(),
        redact_restricted: f.redact_restricted,
        inputs: f.inputs.clone(),
        config: f.config.clone(),
        summary,
        answers,
        rejected,
        decisions: merge_decisions(parts),
    })
}

/// Refuses `p` unless it comes from the same tool, settings and inputs as `first`.
fn same_run(first: &RunFile, p: &RunFile) -> Result<(), String> {
    let (a, b) = (&first.report, &p.report);
    let (na, nb) = (&first.file.path, &p.file.path);
    let differ = |field: &str, x: &dyn std::fmt::Display, y: &dyn std::fmt::Display| {
        Err(format!(
            "{nb}: {field}: {y} differs from {na} ({x}): all shards must come from one check of the same inputs"
        ))
    };
    if a.tool != b.tool {
        return differ("tool.version", &a.tool.version, &b.tool.version);
    }
    if a.config != b.config {
        let at = first_difference(&a.config, &b.config, "config");
        return Err(format!(
            "{nb}: {at}: the settings differ from {na}'s: all shards must run with the same --config"
        ));
    }
    if a.redact_restricted != b.redact_restricted {
        return differ("redact_restricted", &a.redact_restricted, &b.redact_restricted);
    }
    let (ia, ib) = (&a.inputs, &b.inputs);
    if ia.answers.sha256 != ib.answers.sha256 || ia.answers.size != ib.answers.size {
        return differ("inputs.answers.sha256", &ia.answers.sha256, &ib.answers.sha256);
    }
    let store = |s: &StoreRecord| format!("{} ({} documents)", s.digest, s.documents);
    if store(&ia.store) != store(&ib.store) {
        return differ("inputs.store.digest", &store(&ia.store), &store(&ib.store));
    }
    for (field, x, y) in [
        ("inputs.principals", &ia.principals, &ib.principals),
        ("inputs.config", &ia.config, &ib.config),
        ("inputs.accept", &ia.accept, &ib.accept),
    ] {
        let digest = |f: &Option<crate::findings::InputFile>| {
            f.as_ref().map_or_else(|| "not given".to_owned(), |f| f.sha256.clone())
        };
        if digest(x) != digest(y) {
            return differ(&format!("{field}.sha256"), &digest(x), &digest(y));
        }
    }
    if a.decisions.rejected != b.decisions.rejected
        || a.decisions.applied + a.decisions.stale.len()
            != b.decisions.applied + b.decisions.stale.len()
    {
        return Err(format!(
            "{nb}: decisions: the reviewer decisions differ from {na}'s: all shards must use the same --accept file"
        ));
    }
    Ok(())
}

/// The dotted path of the first place where two JSON values differ.
fn first_difference(a: &serde_json::Value, b: &serde_json::Value, at: &str) -> String {
    use serde_json::Value;
    match (a, b) {
        (Value::Object(x), Value::Object(y)) => {
            let keys: std::collections::BTreeSet<&String> = x.keys().chain(y.keys()).collect();
            for k in keys {
                match (x.get(k), y.get(k)) {
                    (Some(u), Some(v)) if u == v => {}
                    (Some(u), Some(v)) => return first_difference(u, v, &format!("{at}.{k}")),
                    _ => return format!("{at}.{k}"),
                }
            }
            at.to_owned()
        }
        _ => at.to_owned(),
    }
}

/// Decisions: applied where any shard applied them, stale where every shard found them
/// stale. Each shard lists its stale decisions in file order; identical decisions are
/// counted, not merged.
fn merge_decisions(parts: &[RunFile]) -> Decisions {
    let key = |d: &DecisionRecord| serde_json::to_string(d).unwrap_or_default();
    let mut least: HashMap<String, usize> = HashMap::new();
    for (i, p) in parts.iter().enumerate() {
        let mut counts: HashMap<String, usize> = HashMap::new();
        for d in &p.report.decisions.stale {
            *counts.entry(key(d)).or_default() += 1;
        }
        if i == 0 {
            least = counts;
        } else {
            for (k, n) in least.iter_mut() {
                *n = (*n).min(counts.get(k).copied().unwrap_or(0));
            }
        }
    }
    let first = &parts[0].report.decisions;
    let total = first.applied + first.stale.len();
    let mut stale = Vec::new();
    for d in &first.stale {
        if let Some(n) = least.get_mut(&key(d)).filter(|n| **n > 0) {
            *n -= 1;
            stale.push(d.clone());
        }
    }
    Decisions { applied: total - stale.len(), stale, rejected: first.rejected.clone() }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn first_difference_names_the_key() {
        let a = serde_json::json!({"gate": {"fail_on": ["dead"], "max_unsupported": 0}, "x": 1});
        let b = serde_json::json!({"gate": {"fail_on": ["dead"], "max_unsupported": 2}, "x": 1});
        assert_eq!(first_difference(&a, &b, "config"), "config.gate.max_unsupported");
        let c = serde_json::json!({"gate": {"fail_on": ["dead"], "max_unsupported": 0}});
        assert_eq!(first_difference(&a, &c, "config"), "config.x");
    }
}
