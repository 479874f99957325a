//! Every committed reference vector against the library.
//!
//! Oracle for tests/data/oracle/pairs.jsonl (versions recorded in
//! tests/data/oracle/versions.json, made by tests/oracle/make_vectors.py):
//! - ROUGE: rouge-score 0.1.2 (PyPI),
//!   `RougeScorer(['rouge1','rouge2','rougeL'], use_stemmer=False).score(target=reference, prediction=candidate)`;
//!   tokens: `rouge_score.tokenize.tokenize(text, None)`.
//! - BLEU: sacrebleu 2.6.0 (PyPI), `sentence_bleu(candidate, [reference])` with its
//!   defaults (tokenizer 13a, case-sensitive, smooth_method='exp', effective order).
//! - Fuzzy: rapidfuzz 3.14.6 (PyPI), `rapidfuzz.distance.{Levenshtein.distance,
//!   Levenshtein.normalized_similarity, Jaro.similarity, JaroWinkler.similarity}`.

use plumbline::metrics::bleu::{sentence_bleu, tokenize_13a};
use plumbline::metrics::fuzzy::{jaro, jaro_winkler, levenshtein, levenshtein_similarity};
use plumbline::metrics::rouge::{Prf, rouge_l, rouge_n};
use plumbline::text::tokens::ascii_alnum_words;
use serde_json::Value;

use crate::common::{Mismatches, close, f, read_jsonl, s, strings, u};

fn pairs() -> Vec<Value> {
    let v = read_jsonl("oracle/pairs.jsonl");
    assert!(v.len() >= 400, "expected a few hundred pairs, found {}", v.len());
    v
}

fn prf_diff(name: &str, ours: &Prf, theirs: &Value) -> Option<String> {
    let (p, r, fm) = (f(&theirs["precision"]), f(&theirs["recall"]), f(&theirs["f"]));
    if close(ours.precision, p) && close(ours.recall, r) && close(ours.f, fm) {
        None
    } else {
        Some(format!(
            "{name}: ours (p {:?}, r {:?}, f {:?}) theirs (p {p:?}, r {r:?}, f {fm:?})",
            ours.precision, ours.recall, ours.f
        ))
    }
}

fn label(pair: &Value) -> String {
    format!("{} cand={:?} ref={:?}", s(&pair["id"]), s(&pair["candidate"]), s(&pair["reference"]))
}

/// Source: rouge-score 0.1.2 `tokenize.tokenize` — lower-case, every run of
/// characters outside [a-z0-9] becomes a separator, empty tokens dropped.
#[test]
fn ascii_alnum_words_equal_rouge_score_tokens() {
    let mut m = Mismatches::default();
    for pair in pairs() {
        for (text, key) in [("candidate", "candidate_tokens"), ("reference", "reference_tokens")] {
            let ours = ascii_alnum_words(s(&pair[text]));
            let theirs = strings(&pair["expected"][key]);
            m.check(ours == theirs, || {
                format!("{} [{text}]: ours {ours:?} theirs {theirs:?}", label(&pair))
            });
        }
    }
    m.finish("ascii_alnum_words vs rouge-score tokenize");
}

/// The ROUGE arithmetic alone, fed the reference's own tokens.
/// Oracle: rouge-score 0.1.2 (PyPI).
#[test]
fn rouge_on_reference_tokens_equals_rouge_score() {
    let mut m = Mismatches::default();
    for pair in pairs() {
        let e = &pair["expected"];
        let c = strings(&e["candidate_tokens"]);
        let r = strings(&e["reference_tokens"]);
        let diffs: Vec<String> = [
            prf_diff("rouge1", &rouge_n(&c, &r, 1), &e["rouge1"]),
            prf_diff("rouge2", &rouge_n(&c, &r, 2), &e["rouge2"]),
            prf_diff("rougeL", &rouge_l(&c, &r), &e["rougeL"]),
        ]
        .into_iter()
        .flatten()
        .collect();
        m.check(diffs.is_empty(), || format!("{}: {}", label(&pair), diffs.join("; ")));
    }
    m.finish("rouge_n/rouge_l on rouge-score tokens");
}

/// End to end: our tokenizer, then our ROUGE. Oracle: rouge-score 0.1.2 (PyPI).
#[test]
fn rouge_end_to_end_equals_rouge_score() {
    let mut m = Mismatches::default();
    for pair in pairs() {
        let e = &pair["expected"];
        let c = ascii_alnum_words(s(&pair["candidate"]));
        let r = ascii_alnum_words(s(&pair["reference"]));
        let diffs: Vec<String> = [
            prf_diff("rouge1", &rouge_n(&c, &r, 1), &e["rouge1"]),
            prf_diff("rouge2", &rouge_n(&c, &r, 2), &e["rouge2"]),
            prf_diff("rougeL", &rouge_l(&c, &r), &e["rougeL"]),
        ]
        .into_iter()
        .flatten()
        .collect();
        m.check(diffs.is_empty(), || format!("{}: {}", label(&pair), diffs.join("; ")));
    }
    m.finish("ROUGE-1/2/L end to end");
}

/// Oracle: sacrebleu 2.6.0 (PyPI), `Tokenizer13a()(text.rstrip()).split()`,
/// which is what `sentence_bleu` counts n-grams over.
#[test]
fn tokenize_13a_equals_sacrebleu() {
    let mut m = Mismatches::default();
    for pair in pairs() {
        for (text, key) in [("candidate", "candidate_13a"), ("reference", "reference_13a")] {
            let ours = tokenize_13a(s(&pair[text]));
            let theirs = strings(&pair["expected"][key]);
            m.check(ours == theirs, || {
                format!("{} [{text}]: ours {ours:?} theirs {theirs:?}", label(&pair))
            });
        }
    }
    m.finish("tokenize_13a vs sacrebleu 13a");
}

/// Oracle: sacrebleu 2.6.0 (PyPI), `sentence_bleu(candidate, [reference])`:
/// score (0-100), the four n-gram precisions (0-100), brevity penalty and lengths.
#[test]
fn sentence_bleu_equals_sacrebleu() {
    let mut m = Mismatches::default();
    for pair in pairs() {
        let e = &pair["expected"]["bleu"];
        let ours = sentence_bleu(s(&pair["candidate"]), &[s(&pair["reference"])]);
        let theirs_p: Vec<f64> = e["precisions"].as_array().unwrap().iter().map(f).collect();
        let mut diffs = Vec::new();
        if !close(ours.score, f(&e["score"])) {
            diffs.push(format!("score ours {:?} theirs {:?}", ours.score, f(&e["score"])));
        }
        for (i, tp) in theirs_p.iter().enumerate() {
            if !close(ours.precisions[i], *tp) {
                diffs.push(format!("precisions[{i}] ours {:?} theirs {tp:?}", ours.precisions[i]));
            }
        }
        if !close(ours.bp, f(&e["bp"])) {
            diffs.push(format!("bp ours {:?} theirs {:?}", ours.bp, f(&e["bp"])));
        }
        if ours.sys_len != u(&e["sys_len"]) || ours.ref_len != u(&e["ref_len"]) {
            diffs.push(format!(
                "lengths ours ({}, {}) theirs ({}, {})",
                ours.sys_len,
                ours.ref_len,
                u(&e["sys_len"]),
                u(&e["ref_len"])
            ));
        }
        m.check(diffs.is_empty(), || format!("{}: {}", label(&pair), diffs.join("; ")));
    }
    m.finish("sentence_bleu vs sacrebleu");
}

fn fuzzy_diffs(a: &str, b: &str, e: &Value) -> Vec<String> {
    let mut d = Vec::new();
    let lev = levenshtein(a, b);
    if lev != u(&e["levenshtein"]) {
        d.push(format!("levenshtein ours {lev} theirs {}", u(&e["levenshtein"])));
    }
    for (name, ours, key) in [
        ("levenshtein_similarity", levenshtein_similarity(a, b), "levenshtein_similarity"),
        ("jaro", jaro(a, b), "jaro"),
        ("jaro_winkler", jaro_winkler(a, b), "jaro_winkler"),
    ] {
        let theirs = f(&e[key]);
        if !close(ours, theirs) {
            d.push(format!("{name} ours {ours:?} theirs {theirs:?}"));
        }
    }
    d
}

/// Whole candidate and reference strings, by Unicode scalar values.
/// Oracle: rapidfuzz 3.14.6 (PyPI).
#[test]
fn fuzzy_on_pair_strings_equals_rapidfuzz() {
    let mut m = Mismatches::default();
    for pair in pairs() {
        let d = fuzzy_diffs(s(&pair["candidate"]), s(&pair["reference"]), &pair["expected"]);
        m.check(d.is_empty(), || format!("{}: {}", label(&pair), d.join("; ")));
    }
    m.finish("fuzzy metrics on pair strings vs rapidfuzz");
}

/// Short random strings and edited dictionary words (tests/data/oracle/fuzzy.jsonl).
/// Oracle: rapidfuzz 3.14.6 (PyPI).
#[test]
fn fuzzy_word_pairs_equal_rapidfuzz() {
    let rows = read_jsonl("oracle/fuzzy.jsonl");
    assert!(rows.len() >= 300, "expected a few hundred fuzzy pairs, found {}", rows.len());
    let mut m = Mismatches::default();
    for row in rows {
        let (a, b) = (s(&row["a"]), s(&row["b"]));
        let d = fuzzy_diffs(a, b, &row);
        m.check(d.is_empty(), || format!("{} a={a:?} b={b:?}: {}", s(&row["id"]), d.join("; ")));
    }
    m.finish("fuzzy metrics on word pairs vs rapidfuzz");
}
