//! `plumbline score`: ROUGE-1/2/L, BLEU, Levenshtein and Jaro-Winkler between a candidate
//! and a reference, for approved-answer regression and for cross-checking the metrics
//! against reference implementations. Output format: SPEC.md, "`score` output".

use std::fs::File;
use std::io::{self, BufRead, BufReader, Write};
use std::path::PathBuf;

use anyhow::{Context, Result, bail};
use clap::{Args, ValueEnum};
use serde::Serialize;
use serde_json::Value;

use super::{Outcome, UsageError};
use crate::metrics::bleu::Bleu;
use crate::metrics::fuzzy;
use crate::metrics::pair::{PairMetrics, PairScorer, RougeTokens};
use crate::metrics::rouge::Prf;

/// Which tokens ROUGE compares.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum, Default)]
pub enum Tokenizer {
    /// Unicode words, NFKC, case-folded ("café" stays one token).
    #[default]
    Unicode,
    /// Lower-case; every run of characters outside a-z0-9 separates (as rouge-score).
    AsciiAlnum,
}

/// Arguments of `plumbline score`.
#[derive(Debug, Args)]
pub struct ScoreArgs {
    /// The text being judged (with --reference).
    #[arg(long, requires = "reference", conflicts_with = "pairs")]
    candidate: Option<String>,
    /// The text it is judged against (with --candidate).
    #[arg(long, requires = "candidate")]
    reference: Option<String>,
    /// A JSON Lines file of {"id", "candidate", "reference"}; `-` reads stdin.
    #[arg(long, value_name = "FILE.jsonl")]
    pairs: Option<PathBuf>,
    /// Tokens for ROUGE (BLEU always uses the 13a tokenisation).
    #[arg(long, value_enum, default_value_t)]
    tokenizer: Tokenizer,
    /// Stem ROUGE tokens with Snowball English (tokens of 3 characters or fewer unstemmed).
    #[arg(long)]
    stem: bool,
}

/// Levenshtein distance and normalised similarity.
#[derive(Debug, Serialize)]
pub struct Levenshtein {
    /// Edit distance in Unicode scalar values.
    pub distance: usize,
    /// `1 − distance / max(len)`.
    pub similarity: f64,
}

/// One line of `score` output.
#[derive(Debug, Serialize)]
pub struct Scores {
    /// The pair's id (pairs mode).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub id: Option<Value>,
    /// ROUGE-1.
    pub rouge1: Prf,
    /// ROUGE-2.
    pub rouge2: Prf,
    /// ROUGE-L.
    #[serde(rename = "rougeL")]
    pub rouge_l: Prf,
    /// Sentence BLEU.
    pub bleu: Bleu,
    /// Levenshtein over the whole strings.
    pub levenshtein: Levenshtein,
    /// Jaro-Winkler over the whole strings.
    pub jaro_winkler: f64,
}

impl From<Tokenizer> for RougeTokens {
    fn from(t: Tokenizer) -> RougeTokens {
        match t {
            Tokenizer::Unicode => RougeTokens::Unicode,
            Tokenizer::AsciiAlnum => RougeTokens::AsciiAlnum,
        }
    }
}

/// Computes every metric of `score` for one pair.
pub fn score_pair(candidate: &str, reference: &str, tokenizer: Tokenizer, stem: bool) -> Scores {
    score_with(&mut PairScorer::new(tokenizer.into(), stem), candidate, reference)
}

/// [`score_pair`] with a scorer kept across pairs.
fn score_with(scorer: &mut PairScorer, candidate: &str, reference: &str) -> Scores {
    let PairMetrics { rouge1, rouge2, rouge_l, bleu } = scorer.score(candidate, reference);
    Scores {
        id: None,
        rouge1,
        rouge2,
        rouge_l,
        bleu,
        levenshtein: Levenshtein {
            distance: fuzzy::levenshtein(candidate, reference),
            similarity: fuzzy::levenshtein_similarity(candidate, reference),
        },
        jaro_winkler: fuzzy::jaro_winkler(candidate, reference),
    }
}

#[derive(Serialize)]
struct PairError<'a> {
    #[serde(skip_serializing_if = "Option::is_none")]
    id: Option<&'a Value>,
    line: usize,
    error: String,
}

/// Reads one pair line: `{"id", "candidate", "reference"}`.
fn parse_pair(line: &str) -> (Option<Value>, Result<(String, String), String>) {
    let v: Value = match serde_json::from_str(line) {
        Ok(v) => v,
        Err(e) => return (None, Err(format!("invalid JSON: {e}"))),
    };
    let Some(obj) = v.as_object() else {
        return (None, Err("expected a JSON object".into()));
    };
    let id = obj.get("id").cloned();
    let field = |name: &str| match obj.get(name) {
        Some(Value::String(s)) => Ok(s.clone()),
        Some(other) => Err(format!("{name}: expected a string, found {}", type_name(other))),
        None => Err(format!("{name}: missing")),
    };
    let pair = field("candidate").and_then(|c| field("reference").map(|r| (c, r)));
    (id, pair)
}

fn type_name(v: &Value) -> &'static str {
    match v {
        Value::Null => "null",
        Value::Bool(_) => "a boolean",
        Value::Number(_) => "a number",
        Value::String(_) => "a string",
        Value::Array(_) => "an array",
        Value::Object(_) => "an object",
    }
}

/// Runs `plumbline score`.
pub fn execute(args: &ScoreArgs) -> Result<Outcome> {
    let mut out = io::stdout().lock();
    match (&args.candidate, &args.reference, &args.pairs) {
        (Some(c), Some(r), None) => {
            serde_json::to_writer(&mut out, &score_pair(c, r, args.tokenizer, args.stem))?;
            writeln!(out)?;
            Ok(Outcome::Pass)
        }
        (None, None, Some(path)) => {
            let reader: Box<dyn BufRead> = if path.as_os_str() == "-" {
                Box::new(io::stdin().lock())
            } else {
                let f = File::open(path)
                    .map_err(|e| UsageError(format!("cannot read {}: {e}", path.display())))?;
                Box::new(BufReader::new(f))
            };
            let mut scorer = PairScorer::new(args.tokenizer.into(), args.stem);
            let mut bad = 0usize;
            for (i, line) in reader.split(b'\n').enumerate() {
                let line_no = i + 1;
                let bytes = line.with_context(|| format!("reading {}", path.display()))?;
                let text = match std::str::from_utf8(&bytes) {
                    Ok(t) => t.trim_end_matches('\r').trim_start_matches('\u{feff}'),
                    Err(e) => {
                        bad += 1;
                        serde_json::to_writer(
                            &mut out,
                            &PairError {
                                id: None,
                                line: line_no,
                                error: format!("invalid UTF-8: {e}"),
                            },
                        )?;
                        writeln!(out)?;
                        continue;
                    }
                };
                if text.trim().is_empty() {
                    continue;
                }
                match parse_pair(text) {
                    (id, Ok((c, r))) => {
                        let mut s = score_with(&mut scorer, &c, &r);
                        s.id = id;
                        serde_json::to_writer(&mut out, &s)?;
                    }
                    (id, Err(error)) => {
                        bad += 1;
                        let error = format!("{}:{line_no}: {error}", path.display());
                        serde_json::to_writer(
                            &mut out,
                            &PairError { id: id.as_ref(), line: line_no, error },
                        )?;
                    }
                }
                writeln!(out)?;
            }
            if bad > 0 {
                let _ = writeln!(
                    io::stderr(),
                    "plumbline score: {bad} line(s) of {} could not be scored",
                    path.display()
                );
            }
            Ok(Outcome::Pass)
        }
        _ => bail!(UsageError("give either --candidate and --reference, or --pairs FILE".into())),
    }
}
