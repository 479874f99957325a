//! Sentence BLEU (Papineni, Roukos, Ward & Zhu 2002, "BLEU: a Method for Automatic
//! Evaluation of Machine Translation").
//!
//! BLEU is the geometric mean of the modified (clipped) n-gram precisions for n = 1..4,
//! times a brevity penalty. For a single sentence several precisions are often zero, so
//! the score needs smoothing; plumbline follows the defaults of the `sacrebleu` package's
//! `sentence_bleu` exactly, so that its numbers can be compared with published ones:
//!
//! * tokenisation `13a` (the mteval-v13a rules, [`tokenize_13a`]), case-sensitive;
//! * `exp` smoothing: the k-th n-gram order with no match gets precision `1 / (2^k · total)`;
//! * effective order: orders for which the hypothesis has no n-grams at all are left out of
//!   the mean instead of forcing the score to zero;
//! * the reference length is the one closest to the hypothesis length (ties: shorter).
//!
//! Scores are on sacrebleu's 0–100 scale.

use std::collections::HashMap;
use std::sync::LazyLock;

use regex::Regex;
use serde::Serialize;

/// Highest n-gram order.
pub const MAX_ORDER: usize = 4;

/// The result of [`sentence_bleu`], with the statistics a reader needs to check it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Bleu {
    /// BLEU on a 0–100 scale.
    pub score: f64,
    /// Modified n-gram precisions for n = 1..4, in percent, after smoothing.
    pub precisions: [f64; MAX_ORDER],
    /// Brevity penalty.
    pub bp: f64,
    /// Hypothesis length in tokens.
    pub sys_len: usize,
    /// Effective reference length in tokens.
    pub ref_len: usize,
}

struct Rule {
    re: Regex,
    replacement: &'static str,
}

/// The regular expressions of mteval-v13a's language-dependent part, in order, as
/// sacrebleu's `TokenizerRegexp` writes them.
static RULES: LazyLock<[Rule; 4]> = LazyLock::new(|| {
    let rule = |pattern: &str, replacement| Rule {
        // The patterns are constants; a failure here is a programming error caught by tests.
        re: Regex::new(pattern).unwrap_or_else(|e| panic!("bad 13a pattern {pattern}: {e}")),
        replacement,
    };
    [
        // Punctuation and symbols of the ASCII range become their own tokens.
        rule(r"([\{-~\[-` -&\(-\+:-@/])", " $1 "),
        // Period and comma unless preceded by a digit.
        rule(r"([^0-9])([\.,])", "$1 $2 "),
        // Period and comma unless followed by a digit.
        rule(r"([\.,])([^0-9])", " $1 $2"),
        // Dash when preceded by a digit.
        rule(r"([0-9])(-)", "$1 $2 "),
    ]
});

/// Python's `str.split()` whitespace: Unicode White_Space plus the four information
/// separators U+001C..U+001F, which Python also treats as spaces.
fn is_python_space(c: char) -> bool {
    c.is_whitespace() || ('\u{1c}'..='\u{1f}').contains(&c)
}

/// Tokenises a line with the `13a` rules (mteval-v13a, as sacrebleu implements them),
/// after removing trailing white space as sacrebleu does to every segment first (so a
/// final `-\n` is kept as a hyphen, not joined away).
pub fn tokenize_13a(line: &str) -> Vec<String> {
    let line = line.trim_end_matches(is_python_space);
    let mut s = line.replace("<skipped>", "").replace("-\n", "").replace('\n', " ");
    if s.contains('&') {
        s = s
            .replace("&quot;", "\"")
            .replace("&amp;", "&")
            .replace("&lt;", "<")
            .replace("&gt;", ">");
    }
    let mut s = format!(" {s} ");
    for rule in RULES.iter() {
        if let std::borrow::Cow::Owned(replaced) = rule.re.replace_all(&s, rule.replacement) {
            s = replaced;
        }
    }
    s.split(is_python_space).filter(|t| !t.is_empty()).map(str::to_owned).collect()
}

/// Modified n-gram precision of Papineni et al. 2002 §2.1: each candidate n-gram counts at
/// most as often as it occurs in any single reference. Returns `(clipped matches, total
/// candidate n-grams)`.
pub fn modified_precision<S: AsRef<str>>(
    candidate: &[S],
    references: &[Vec<S>],
    n: usize,
) -> (usize, usize) {
    let cand: Vec<&str> = candidate.iter().map(AsRef::as_ref).collect();
    let mut max_ref: HashMap<&[&str], usize> = HashMap::new();
    let refs: Vec<Vec<&str>> =
        references.iter().map(|r| r.iter().map(AsRef::as_ref).collect()).collect();
    for r in &refs {
        for (gram, c) in counts(r, n) {
            let e = max_ref.entry(gram).or_insert(0);
            *e = (*e).max(c);
        }
    }
    let mut matched = 0;
    let mut total = 0;
    for (gram, c) in counts(&cand, n) {
        total += c;
        matched += c.min(max_ref.get(gram).copied().unwrap_or(0));
    }
    (matched, total)
}

fn counts<'a, 'b>(tokens: &'a [&'b str], n: usize) -> HashMap<&'a [&'b str], usize> {
    let mut m = HashMap::new();
    if n > 0 && tokens.len() >= n {
        for g in tokens.windows(n) {
            *m.entry(g).or_insert(0) += 1;
        }
    }
    m
}

/// Sentence BLEU of `hypothesis` against one or more `references`, as sacrebleu 2.x's
/// `sentence_bleu(hypothesis, references)` computes it with its defaults.
pub fn sentence_bleu(hypothesis: &str, references: &[&str]) -> Bleu {
    let hyp = tokenize_13a(hypothesis);
    let refs: Vec<Vec<String>> = references.iter().map(|r| tokenize_13a(r)).collect();
    bleu_from_tokens(&hyp, &refs)
}

/// [`sentence_bleu`] on already tokenised text.
pub fn bleu_from_tokens<S: AsRef<str>>(hyp: &[S], refs: &[Vec<S>]) -> Bleu {
    let mut correct = [0usize; MAX_ORDER];
    let mut total = [0usize; MAX_ORDER];
    for n in 1..=MAX_ORDER {
        let (c, t) = modified_precision(hyp, refs, n);
        correct[n - 1] = c;
        total[n - 1] = t;
    }
    let sys_len = hyp.len();
    // Closest reference length; on a tie the shorter (sacrebleu `_get_closest_ref_len`).
    let mut ref_len = 0usize;
    let mut best_diff = usize::MAX;
    for r in refs {
        let diff = r.len().abs_diff(sys_len);
        if diff < best_diff || (diff == best_diff && r.len() < ref_len) {
            best_diff = diff;
            ref_len = r.len();
        }
    }
    compute(correct, total, sys_len, ref_len)
}

/// sacrebleu's `BLEU.compute_bleu` with `smooth_method = "exp"` and `effective_order`.
fn compute(
    correct: [usize; MAX_ORDER],
    total: [usize; MAX_ORDER],
    sys_len: usize,
    ref_len: usize,
) -> Bleu {
    let bp = if sys_len < ref_len {
        if sys_len > 0 { (1.0 - ref_len as f64 / sys_len as f64).exp() } else { 0.0 }
    } else {
        1.0
    };
    let mut precisions = [0.0; MAX_ORDER];
    if correct.iter().all(|&c| c == 0) {
        return Bleu { score: 0.0, precisions, bp, sys_len, ref_len };
    }
    let mut smooth_mteval = 1.0f64;
    let mut eff_order = MAX_ORDER;
    for n in 1..=MAX_ORDER {
        if total[n - 1] == 0 {
            break;
        }
        eff_order = n;
        precisions[n - 1] = if correct[n - 1] == 0 {
            smooth_mteval *= 2.0;
            100.0 / (smooth_mteval * total[n - 1] as f64)
        } else {
            100.0 * correct[n - 1] as f64 / total[n - 1] as f64
        };
    }
    // sacrebleu's `my_log` maps 0 to -9999999999 rather than -inf.
    let log_sum: f64 = precisions[..eff_order]
        .iter()
        .map(|&p| if p == 0.0 { -9_999_999_999.0 } else { p.ln() })
        .sum();
    let score = bp * (log_sum / eff_order as f64).exp();
    Bleu { score, precisions, bp, sys_len, ref_len }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn papineni_2002_modified_unigram_precision() {
        // Source: Papineni et al. 2002, §2.1, Example 2: candidate "the the the the the
        // the the" against "The cat is on the mat" / "There is a cat on the mat" has
        // modified unigram precision 2/7 (compared case-insensitively in the paper).
        let cand = vec!["the"; 7];
        let r1: Vec<&str> = "the cat is on the mat".split(' ').collect();
        let r2: Vec<&str> = "there is a cat on the mat".split(' ').collect();
        assert_eq!(modified_precision(&cand, &[r1, r2], 1), (2, 7));
    }

    #[test]
    fn tokenize_13a_splits_punctuation_but_not_decimals() {
        assert_eq!(
            tokenize_13a("It costs $3.50, ok?"),
            ["It", "costs", "$", "3.50", ",", "ok", "?"]
        );
        assert_eq!(tokenize_13a("a-b 1-2"), ["a-b", "1", "-", "2"]);
        assert_eq!(tokenize_13a("&amp;&lt;"), ["&", "<"]);
    }

    #[test]
    fn identical_sentences_score_100() {
        let b = sentence_bleu("the cat sat on the mat", &["the cat sat on the mat"]);
        assert!((b.score - 100.0).abs() < 1e-9);
        assert_eq!(b.bp, 1.0);
    }

    #[test]
    fn no_match_scores_zero_and_empty_hypothesis_has_zero_bp() {
        assert_eq!(sentence_bleu("x y z", &["a b c"]).score, 0.0);
        let e = sentence_bleu("", &["a b"]);
        assert_eq!((e.score, e.bp, e.sys_len, e.ref_len), (0.0, 0.0, 0, 2));
    }
}
