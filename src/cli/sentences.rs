//! `plumbline sentences`: prints the sentences plumbline sees in a text, as a JSON array
//! of `{start, end, text}` (byte offsets). Useful to see why an answer was split where it
//! was, and to compare the splitter with others.

use std::io::{self, Read, Write};

use anyhow::{Context, Result};
use clap::Args;
use serde::Serialize;

use super::Outcome;
use crate::text::sentences;

/// Arguments of `plumbline sentences`.
#[derive(Debug, Args)]
pub struct SentencesArgs {
    /// The text to split; reads stdin when absent.
    #[arg(long)]
    text: Option<String>,
    /// Show the pure UAX #29 segments instead of the chat-answer sentences.
    #[arg(long)]
    uax29: bool,
}

#[derive(Serialize)]
struct Span<'a> {
    start: usize,
    end: usize,
    text: &'a str,
}

/// Runs `plumbline sentences`.
pub fn execute(args: &SentencesArgs) -> Result<Outcome> {
    let text = match &args.text {
        Some(t) => t.clone(),
        None => {
            let mut s = String::new();
            io::stdin().read_to_string(&mut s).context("reading stdin")?;
            s
        }
    };
    let ranges = if args.uax29 { sentences::uax29(&text) } else { sentences::split(&text) };
    let spans: Vec<Span<'_>> =
        ranges.into_iter().map(|r| Span { start: r.start, end: r.end, text: &text[r] }).collect();
    let mut out = io::stdout().lock();
    serde_json::to_writer(&mut out, &spans)?;
    writeln!(out)?;
    Ok(Outcome::Pass)
}
