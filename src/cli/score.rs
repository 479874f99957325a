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
use crate::answers::lines::{LineKind, LineSource};
use crate::answers::{Fields, decode_line, parse_strict, syntax_message};
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
    /// Longest line of --pairs, in bytes; a longer line is reported and skipped. Levenshtein
    /// and Jaro-Winkler take time proportional to the product of the two texts' lengths
    /// (about 4 s for two texts of 32,000 characters).
    #[arg(long, value_name = "BYTES", default_value_t = DEFAULT_MAX_LINE_BYTES)]
    max_line_bytes: usize,
}

/// Default of `--max-line-bytes`: 64 KiB.
pub const DEFAULT_MAX_LINE_BYTES: usize = 64 * 1024;

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

/// Reads one pair line, `{"id", "candidate", "reference"}`, into its id (any JSON value,
/// echoed back) and its two texts; the error names the field. Read with the strict parser
/// every JSON input goes through (a repeated key is an error, not a silent choice).
fn parse_pair(text: &str) -> (Option<Value>, Result<(String, String), String>) {
    let value = match parse_strict(text) {
        Ok(v) => v,
        Err(e) => {
            let (message, column) = syntax_message(&e);
            return (None, Err(format!("invalid JSON at column {column}: {message}")));
        }
    };
    let fields = match Fields::of(&value, "") {
        Ok(f) => f,
        Err(e) => return (None, Err(e.to_string())),
    };
    let id = fields.present("id").cloned();
    let pair = fields
        .string("candidate")
        .and_then(|c| fields.string("reference").map(|r| (c, r)))
        .map_err(|e| e.to_string());
    (id, pair)
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
            let stdin = path.as_os_str() == "-";
            let origin = if stdin { "<stdin>".to_owned() } else { path.display().to_string() };
            let reader: Box<dyn BufRead> = if stdin {
                Box::new(io::stdin().lock())
            } else {
                let f = File::open(path)
                    .map_err(|e| UsageError(format!("cannot read {origin}: {e}")))?;
                Box::new(BufReader::new(f))
            };
            // Lines are read with a bounded buffer: a runaway line is reported and skipped
            // without being held in memory (and without the quadratic character-level
            // metrics running on it).
            let mut source = LineSource::new(reader, args.max_line_bytes);
            let mut buf = Vec::new();
            let mut scorer = PairScorer::new(args.tokenizer.into(), args.stem);
            let (mut scored, mut bad) = (0usize, 0usize);
            loop {
                let next = source.next_line(&mut buf).with_context(|| {
                    format!("reading {origin} at line {}", source.lines_read() + 1)
                })?;
                let Some((line, kind)) = next else { break };
                let (id, pair) = match kind {
                    LineKind::TooLong { bytes } => (
                        None,
                        Err(format!(
                            "line is {bytes} bytes long, more than the limit of {} \
                             (--max-line-bytes); not read",
                            args.max_line_bytes
                        )),
                    ),
                    LineKind::Text => match decode_line(&buf) {
                        Ok(text) => parse_pair(text),
                        Err(e) => (None, Err(e)),
                    },
                };
                match pair {
                    Ok((c, r)) => {
                        scored += 1;
                        let mut s = score_with(&mut scorer, &c, &r);
                        s.id = id;
                        serde_json::to_writer(&mut out, &s)?;
                    }
                    Err(error) => {
                        bad += 1;
                        let error = format!("{origin}:{line}: {error}");
                        serde_json::to_writer(
                            &mut out,
                            &PairError { id: id.as_ref(), line, error },
                        )?;
                    }
                }
                writeln!(out)?;
            }
            if scored + bad == 0 {
                let _ = writeln!(io::stderr(), "plumbline score: {origin} holds no pairs");
            } else if bad > 0 {
                let _ = writeln!(
                    io::stderr(),
                    "plumbline score: {bad} of {} line(s) of {origin} could not be scored",
                    scored + bad
                );
            }
            Ok(Outcome::Pass)
        }
        _ => bail!(UsageError("give either --candidate and --reference, or --pairs FILE".into())),
    }
}
