//! Sentence support: how well a passage carries a claim, and the checks a lexical score
//! misses.
//!
//! A claim (one sentence of an answer, markers removed) is compared with *windows* of
//! its cited passages: runs of one to `window_sentences` consecutive sentences of the
//! passage, never the whole document, so that scattered words cannot add up to support.
//!
//! # The score
//!
//! For a claim with content tokens `C` (figures and non-stop words, stemmed with Snowball
//! English) and a window `W`:
//!
//! * **coverage** — `Σ credit(c) / |C|`, where `credit(c)` is 1 when `c`'s stem occurs in
//!   `W` (a figure must be carried with the same canonical value), else the best fuzzy
//!   similarity to a word of `W` when it reaches `fuzzy_threshold` (spelling variants,
//!   typos), else 0;
//! * **bigrams** — the share of the claim's adjacent stem pairs (all tokens) that occur
//!   adjacently in `W`, which rewards kept phrasing and penalises recombined words;
//! * **order** — ROUGE-L recall of the claim's stems against `W` (LCS / claim length,
//!   Lin 2004), which rewards words in the same order.
//!
//! `score = 0.55·coverage + 0.25·bigrams + 0.20·order`, in 0..1. The best window is the
//! one with the highest score (a larger window only wins by a margin of 0.01). The
//! weights are defaults pending calibration on a labelled set; see DEVELOPERS.md.
//!
//! # The checks on top
//!
//! * `number_mismatch`: every figure of the claim must be carried by a figure of the
//!   window ([`crate::text::numbers::Figure::is_carried_by`]); one that is not makes the
//!   claim `unsupported` whatever its word overlap, where the window is relevant (scores
//!   partial support or carries half the claim's words). A figure stated in a sentence
//!   near the window (within four) widens the window to take it in.
//! * `negation_mismatch`: claim and window are aligned by LCS; each negation cue (`not`,
//!   `never`, `no`, `n't` …, but not bounds like "no later than") covers up to six
//!   following words of its clause. When most content words a cue covers are aligned
//!   with the other side and no cue there covers them, the claim is `unsupported`.
//! * `changed_term`: where the alignment is tight (a short gap between aligned words of
//!   one window sentence, or the two words beside a run of aligned words), a listed
//!   opposite (minimum/maximum, before/after, all/some, enable/disable), one identifier
//!   for another, or a one-for-one swap of content words that are neither the same stem,
//!   nor fuzzy variants, nor listed synonyms, makes the claim at best `partial`.
//! * Clauses: a run of three or more consecutive content words the window lacks (a
//!   quarter of the claim) makes a `supported` score `partial`. No rule moves a verdict
//!   up: a `partial` sentence always scores at least `thresholds.partial`.
//! * `no_claim`: a sentence with no content words, a greeting, thanks or offer of help, a
//!   bare answer word, a question, a short lead-in to a list, or a Markdown heading has
//!   nothing to check.
//!
//! Every sentence of a window of two or more must carry content words of the claim that
//! the others lack, so that a neighbour lending stop words or a stray word cannot join.

use std::borrow::Cow;
use std::cell::RefCell;
use std::collections::{HashMap, HashSet};
use std::ops::Range;
use std::sync::LazyLock;

use regex::Regex;

use crate::findings::{ChangedTerm, Verdict};
use crate::metrics::fuzzy::similarity_at_least;
use crate::metrics::rouge::LcsTable;
use crate::text::lexicon::{self, is_negation, prefix_opposites, quantifier_class};
use crate::text::numbers::Figure;
use crate::text::tokens::{IdMap, Token, term_id, token_ids, tokenize};

/// Scoring parameters (the `[thresholds]` and `[support]` config tables).
#[derive(Debug, Clone, PartialEq)]
pub struct Params {
    /// Score at or above which a claim is supported.
    pub supported: f64,
    /// Score at or above which (and below `supported`) a claim is partial.
    pub partial: f64,
    /// Fuzzy similarity at which a word gets credit for a near match.
    pub fuzzy_threshold: f64,
    /// Most consecutive passage sentences in one window.
    pub window_sentences: usize,
}

impl Default for Params {
    fn default() -> Self {
        Params { supported: 0.75, partial: 0.45, fuzzy_threshold: 0.85, window_sentences: 3 }
    }
}

/// Weights of the score (see the module documentation).
const W_COVERAGE: f64 = 0.55;
const W_BIGRAM: f64 = 0.25;
const W_ORDER: f64 = 0.20;

/// One sentence of a passage: its byte range in the passage's text, its token ids and
/// its figures (see [`crate::text::tokens::token_ids`]).
#[derive(Debug, Clone, PartialEq)]
pub struct Unit<'a> {
    /// Byte range of the sentence in the text it came from.
    pub range: Range<usize>,
    /// Token ids, in order.
    pub ids: Cow<'a, [u32]>,
    /// Figures of the sentence.
    pub figures: Cow<'a, [Figure]>,
}

/// Builds [`Unit`]s for `ranges` of `text` by tokenising them.
pub fn units(text: &str, ranges: &[Range<usize>]) -> Vec<Unit<'static>> {
    ranges
        .iter()
        .map(|r| {
            let t = token_ids(&text[r.clone()]);
            Unit { range: r.clone(), ids: Cow::Owned(t.ids), figures: Cow::Owned(t.figures) }
        })
        .collect()
}

/// A claim prepared for scoring.
#[derive(Debug, Clone)]
pub struct Claim {
    /// Tokens of the claim text.
    pub tokens: Vec<Token>,
    /// What separates each token from the next ([`Break::Sentence`] after the last).
    pub breaks: Vec<Break>,
    /// Whether each token is part of an identifier (see [`is_identifier`]).
    pub ident: Vec<bool>,
    /// The claim text the token ranges point into.
    pub text: String,
    /// Whether there is nothing to check.
    pub no_claim: bool,
}

/// What lies between one token and the next: nothing but spaces, joiners and single line
/// breaks (hard-wrapped text), a clause mark (comma, semicolon, colon, bracket, dash,
/// blank line), or the end of a sentence.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum Break {
    /// Same clause.
    None,
    /// A clause mark.
    Clause,
    /// A sentence ends.
    Sentence,
}

/// The breaks after each of `tokens` (byte ranges into `text`); `ends(k)` says token `k`
/// ends a sentence.
fn breaks_of(text: &str, tokens: &[&Token], ends: impl Fn(usize) -> bool) -> Vec<Break> {
    (0..tokens.len())
        .map(|k| {
            if k + 1 == tokens.len() || ends(k) {
                return Break::Sentence;
            }
            let between = text.get(tokens[k].end..tokens[k + 1].start).unwrap_or("");
            let t = between.trim();
            if t.ends_with(['.', '!', '?']) && between.ends_with(char::is_whitespace) {
                Break::Sentence
            } else if between.contains([',', ';', ':', '(', ')', '[', ']', '—', '–'])
                || between.contains(" - ")
                || between.contains("\n\n")
            {
                Break::Clause
            } else {
                Break::None
            }
        })
        .collect()
}

/// The compound a word is part of ("Tier2-Billing", "max_connections", "foo.bar",
/// "lib/bar"): the run of letters, digits and joiners (`_ - . / :`) around `range` of
/// `text`, without joiners at its ends.
fn compound_around(text: &str, range: Range<usize>) -> &str {
    let (Some(before), Some(after)) = (text.get(..range.start), text.get(range.end..)) else {
        return "";
    };
    let part = |c: char| c.is_alphanumeric() || matches!(c, '_' | '-' | '.' | '/' | ':');
    let lo =
        before.char_indices().rev().find(|(_, c)| !part(*c)).map_or(0, |(i, c)| i + c.len_utf8());
    let hi = range.end + after.find(|c: char| !part(c)).unwrap_or(after.len());
    let edge = |c: char| !(c.is_alphanumeric() || c == '_');
    text[lo..hi].trim_matches(edge)
}

/// Whether a compound reads as an identifier rather than a word: it mixes letters and
/// digits ("Tier2", "S2", "INC-2026-003"), holds an underscore ("work_mem"), has a
/// capital inside a lower-case word ("getValue"), or joins names with a dot, slash or
/// double colon ("os.path", "lib/bar", "std::fs"; not "e.g"). Such names are compared
/// whole: one for another is a changed term, never a paraphrase.
pub fn is_identifier(compound: &str) -> bool {
    let letters = compound.chars().any(char::is_alphabetic);
    let digits = compound.chars().any(|c| c.is_ascii_digit());
    let camel = compound
        .chars()
        .zip(compound.chars().skip(1))
        .any(|(a, b)| a.is_lowercase() && b.is_uppercase());
    // Dotted or slashed names ("config.c", "t.start", "lib/bar"), not abbreviations
    // ("e.g", "U.S") whose parts are single letters.
    let joined = ['.', '/'].iter().any(|&sep| {
        let parts: Vec<&str> = compound.split(sep).collect();
        parts.len() > 1
            && parts.iter().all(|p| !p.is_empty())
            && parts.iter().any(|p| p.chars().count() >= 2)
    }) || compound.contains("::");
    // A keyword or constant in capitals ("SELECT", "PATH"): two letters or more.
    let caps = compound.chars().filter(|c| c.is_alphabetic()).count() >= 2
        && compound.chars().all(|c| !c.is_alphabetic() || c.is_uppercase());
    letters && (digits || compound.contains('_') || camel || joined || caps)
}

/// Whether the token at `range` of `text` is part of an identifier.
fn identifier_at(text: &str, range: Range<usize>) -> bool {
    is_identifier(compound_around(text, range))
}

static CHATTER: LazyLock<Regex> = LazyLock::new(|| {
    Regex::new(concat!(
        r"(?i)^\W*(?:(?:hi|hello|hey|greetings|good (?:morning|afternoon|evening))\b",
        r"|(?:many )?thanks\b|thank you\b|you're welcome\b|sure[.!]?$|of course[.!]?$|certainly[.!]?$",
        r"|(?:i )?hope (?:this|that) helps|let me know\b|feel free\b|(?:i'm |i am )?(?:happy|glad) to help",
        r"|is there anything else|if you have (?:any )?(?:other |more |further )?questions",
        r"|please (?:let me know|reach out|ask)\b|great question",
        // A bare answer word ("Yes." "No!") says nothing a source could carry.
        r"|(?:yes|no|yep|nope|yeah|correct|right|indeed|exactly|absolutely|okay|ok|not quite|not exactly)\W*$",
        // Offers to the user and requests of them.
        r"|(?:just )?(?:tell|let|show|send) me\b|would you like\b",
        r"|if you (?:like|want|wish|prefer),? (?:i|we)(?:'ll| will| can| could)\b",
        // An offer that ends on the user's wish ("I can show you an example if you like").
        r"|(?:i|we)(?:'ll| will| can| could| would|'d be happy to| am happy to)\b[^.]*\bif you\b",
        r"|(?:happy|glad|pleased|delighted) to\b",
        r"|(?:i|we)(?:'ll| will| can| could| would be happy to| am happy to)\b[^.]*\b(?:for you|help you)\b",
        r")"
    ))
    .unwrap_or_else(|e| panic!("chatter pattern: {e}"))
});

/// A short lead-in to a list ("Here is what the policy says:"), which claims nothing.
static LEAD_IN: LazyLock<Regex> = LazyLock::new(|| {
    Regex::new(concat!(
        r"(?i)^\W*(?:here(?:'s| is| are)\b[^.]*|in (?:short|summary|brief)|to summari[sz]e",
        r"|the (?:main )?(?:steps|options|rules) are)\s*:$"
    ))
    .unwrap_or_else(|e| panic!("lead-in pattern: {e}"))
});

/// Prepares `text` (markers already removed) as a claim.
pub fn claim(text: &str) -> Claim {
    let tokens = tokenize(text);
    let trimmed = text.trim();
    let heading = trimmed.starts_with('#');
    let question = trimmed.trim_end_matches(['"', '\'', ')', '*']).ends_with('?');
    let no_content = !tokens.iter().any(Token::is_content);
    let refs: Vec<&Token> = tokens.iter().collect();
    let breaks = breaks_of(text, &refs, |_| false);
    let ident: Vec<bool> =
        tokens.iter().map(|t| t.figure.is_none() && identifier_at(text, t.start..t.end)).collect();
    // Filler made of conversational words only ("Sure, here is the answer.", "No
    // problem."): short, no figure, no name, every content word from the filler list.
    let filler = tokens.len() <= 14
        && !ident.iter().any(|&i| i)
        && tokens
            .iter()
            .filter(|t| t.is_content())
            .all(|t| t.figure.is_none() && lexicon::is_chatter_stem(&t.stem));
    // "Here is what I found.", "Here's the short version.": a lead-in, short and naming
    // nothing; "Fair question!", "Take care!": a short exclamation.
    let words = tokens.iter().filter(|t| t.figure.is_none()).count();
    let plain = !ident.iter().any(|&i| i)
        && tokens.iter().all(|t| t.figure.is_none() && !lexicon::is_negation(&t.text));
    let lead_in = plain && words <= 8 && {
        let lower = trimmed.to_lowercase();
        ["here is ", "here's ", "here’s ", "here are ", "here goes", "alright, here"]
            .iter()
            .any(|p| lower.starts_with(p))
    };
    let exclamation = plain && words <= 3 && trimmed.ends_with('!');
    let no_claim = no_content
        || heading
        || question
        || filler
        || lead_in
        || exclamation
        || CHATTER.is_match(trimmed)
        || LEAD_IN.is_match(trimmed);
    Claim { tokens, breaks, ident, text: text.to_owned(), no_claim }
}

/// Stop words that still matter for a changed term (quantifiers and relations).
fn is_term_word(word: &str) -> bool {
    matches!(
        word,
        "all"
            | "some"
            | "any"
            | "none"
            | "each"
            | "every"
            | "few"
            | "more"
            | "most"
            | "less"
            | "least"
            | "fewer"
            | "before"
            | "after"
            | "above"
            | "below"
            | "over"
            | "under"
            | "only"
            | "both"
            | "either"
            | "first"
            | "last"
    )
}

fn is_alignable_content(t: &Token) -> bool {
    t.figure.is_none() && !is_negation(&t.text) && (!t.stop || is_term_word(&t.text))
}

/// A hash set keyed by ids, with [`crate::text::tokens::IdHasher`].
type IdSet<K> = HashSet<K, std::hash::BuildHasherDefault<crate::text::tokens::IdHasher>>;

/// Listed opposites (stems, both orders): see [`crate::text::lexicon`].
static OPPOSITES: &LazyLock<HashSet<(String, String)>> = &lexicon::OPPOSITE_STEMS;

/// Listed synonyms (stems, both orders): see [`crate::text::lexicon`].
static SYNONYMS: &LazyLock<HashSet<(String, String)>> = &lexicon::SYNONYM_STEMS;

/// Credit for a word whose listed synonym stands in the window.
const SYNONYM_CREDIT: f64 = 0.9;

fn is_synonym(a: &str, b: &str) -> bool {
    synonyms_of(a).contains(&term_id(b))
}

/// Whether two stems are listed opposites.
fn is_opposite(a: &Token, b: &Token) -> bool {
    static IDS: LazyLock<HashSet<(u32, u32)>> =
        LazyLock::new(|| OPPOSITES.iter().map(|(a, b)| (term_id(a), term_id(b))).collect());
    (IDS.contains(&(a.id, b.id)) && OPPOSITES.contains(&(a.stem.clone(), b.stem.clone())))
        || prefix_opposites(&a.text, &b.text)
}

/// Ids of the listed synonyms of a stem.
fn synonyms_of(stem: &str) -> &'static [u32] {
    static BY_STEM: LazyLock<HashMap<String, Vec<u32>>> = LazyLock::new(|| {
        let mut m: HashMap<String, Vec<u32>> = HashMap::new();
        for (a, b) in SYNONYMS.iter() {
            m.entry(a.clone()).or_default().push(term_id(b));
        }
        m
    });
    BY_STEM.get(stem).map_or(&[], Vec::as_slice)
}

/// The best window of a passage for a claim, with everything the checks found in it.
#[derive(Debug, Clone, PartialEq)]
pub struct WindowMatch {
    /// First unit (sentence) of the window.
    pub first: usize,
    /// Last unit of the window (inclusive).
    pub last: usize,
    /// Support score in 0..1.
    pub score: f64,
    /// Coverage component.
    pub coverage: f64,
    /// Byte ranges (in the passage text) of window tokens that match claim tokens.
    pub matched: Vec<Range<usize>>,
    /// Claim figures not carried by the window (as written canonically).
    pub missing_figures: Vec<String>,
    /// Polarity disagreement in the aligned region.
    pub negation_mismatch: bool,
    /// Changed content words.
    pub changed: Vec<ChangedTerm>,
    /// Longest run of consecutive content words of the claim the window does not carry.
    pub unmatched_run: usize,
    /// Longest run of consecutive content words of the claim the window carries.
    pub matched_run: usize,
    /// Share of the claim's content words (figures aside) that the window carries.
    pub word_coverage: f64,
    /// Some clause of the claim is mostly not carried (see `weakest_clause`).
    pub weak_clause: bool,
    /// Some clause of the claim joins words of two window sentences (see
    /// `recombined_clause`).
    pub recombined: bool,
}

/// Per-unit statistics of the claim's tokens (empty vectors: the unit shares nothing
/// with the claim).
struct UnitStats {
    /// Credit (0..1) of each claim content token in this unit.
    credit: Vec<f64>,
    /// Which claim bigrams occur in this unit.
    bigrams: Vec<bool>,
    /// Claim-local ids of this unit's tokens that occur in the claim (for LCS).
    ids: Vec<u32>,
    /// Whether the unit carries some content token of the claim.
    content: bool,
}

impl UnitStats {
    fn is_empty(&self) -> bool {
        self.credit.is_empty()
    }
}

/// How many of the best windows by exact credit get fuzzy credit computed as well.
const REFINE: usize = 3;

/// A window scored on exact credit (ids only), not yet refined.
#[derive(Debug, Clone)]
pub struct Candidate {
    /// The caller's tag for the passage the window is in.
    pub tag: usize,
    /// First unit of the window.
    pub first: usize,
    /// Last unit (inclusive).
    pub last: usize,
    credit: Vec<f64>,
    bigram: f64,
    order: f64,
    /// Score on exact credit.
    pub score: f64,
}

/// The best few candidates, best first: higher score, then the smaller window, then
/// the earlier passage and position (a total order, so results are deterministic).
#[derive(Debug, Clone, Default)]
pub struct Shortlist {
    items: Vec<Candidate>,
}

impl Shortlist {
    fn before(a: &Candidate, b: &Candidate) -> bool {
        let key = |c: &Candidate| (c.last - c.first, c.tag, c.first);
        match a.score.total_cmp(&b.score) {
            std::cmp::Ordering::Greater => true,
            std::cmp::Ordering::Less => false,
            std::cmp::Ordering::Equal => key(a) < key(b),
        }
    }

    /// The score a new candidate must beat to enter (−∞ while there is room).
    fn bar(&self) -> f64 {
        if self.items.len() < REFINE { f64::NEG_INFINITY } else { self.items[REFINE - 1].score }
    }

    fn offer(&mut self, c: Candidate) {
        if self.items.len() == REFINE && !Self::before(&c, &self.items[REFINE - 1]) {
            return;
        }
        let at = self.items.iter().position(|x| Self::before(&c, x)).unwrap_or(self.items.len());
        self.items.insert(at, c);
        self.items.truncate(REFINE);
    }

    /// Whether nothing was offered.
    pub fn is_empty(&self) -> bool {
        self.items.is_empty()
    }
}

/// What one id means to a claim.
#[derive(Debug, Default)]
struct Entry {
    /// Dense local id ([`NOT_IN_CLAIM`] for a synonym that the claim does not contain).
    local: u32,
    /// Which content tokens it credits, and how much (exact stems 1, synonyms less).
    credits: Vec<(usize, f64)>,
}

const NOT_IN_CLAIM: u32 = u32::MAX;

/// A claim prepared for scoring against many windows: its dense local ids, bigrams,
/// credit table and LCS masks are built once.
pub struct Scorer<'c> {
    claim: &'c Claim,
    content: Vec<&'c Token>,
    /// Per id of the claim or of a listed synonym: its local id and what it credits.
    entries: IdMap<u32, Entry>,
    claim_bigrams: Vec<(u32, u32)>,
    has_figures: bool,
    lcs: LcsTable,
    /// Character counts of the content tokens (for the fuzzy length filter).
    content_chars: Vec<usize>,
    /// Fuzzy similarities asked so far.
    memo: FuzzyMemo,
    /// Whether each content token is part of an identifier (never given fuzzy credit).
    content_ident: Vec<bool>,
}

fn score_of(coverage: f64, bigram: f64, order: f64) -> f64 {
    (W_COVERAGE * coverage + W_BIGRAM * bigram + W_ORDER * order).clamp(0.0, 1.0)
}

/// Whether two words are close enough in length for fuzzy credit to be possible.
fn fuzzy_length_ok(a_chars: usize, a: &str, b: &str) -> bool {
    a.len().abs_diff(b.len()) <= 1 + a_chars / 4
}

impl<'c> Scorer<'c> {
    /// Prepares `claim`.
    pub fn new(claim: &'c Claim, p: &Params) -> Scorer<'c> {
        let content: Vec<&Token> = claim.tokens.iter().filter(|t| t.is_content()).collect();
        let mut local: IdMap<u32, u32> = IdMap::default();
        for t in &claim.tokens {
            let n = local.len() as u32;
            local.entry(t.id).or_insert(n);
        }
        let claim_local: Vec<u32> = claim.tokens.iter().map(|t| local[&t.id]).collect();
        let claim_bigrams: Vec<(u32, u32)> = claim_local.windows(2).map(|w| (w[0], w[1])).collect();
        let mut credits: IdMap<u32, Vec<(usize, f64)>> = IdMap::default();
        for (k, c) in content.iter().enumerate() {
            if c.figure.is_some() {
                continue;
            }
            credits.entry(c.id).or_default().push((k, 1.0));
            for syn in synonyms_of(&c.stem) {
                credits.entry(*syn).or_default().push((k, SYNONYM_CREDIT));
            }
        }
        let lcs = LcsTable::new(&claim_local, local.len());
        let content_chars = content.iter().map(|c| c.text.chars().count()).collect();
        let mut entries: IdMap<u32, Entry> = IdMap::default();
        for (&id, &l) in &local {
            entries.entry(id).or_default().local = l;
        }
        for (id, list) in credits {
            let e = entries.entry(id).or_insert(Entry { local: NOT_IN_CLAIM, credits: Vec::new() });
            e.credits = list;
        }
        let has_figures = content.iter().any(|c| c.figure.is_some());
        let memo = FuzzyMemo::new(p.fuzzy_threshold);
        let content_ident = claim
            .tokens
            .iter()
            .zip(&claim.ident)
            .filter(|(t, _)| t.is_content())
            .map(|(_, &i)| i)
            .collect();
        Scorer {
            claim,
            content,
            entries,
            claim_bigrams,
            has_figures,
            lcs,
            content_chars,
            memo,
            content_ident,
        }
    }

    fn stats(&self, u: &Unit<'_>) -> UnitStats {
        let (nc, nb) = (self.content.len(), self.claim_bigrams.len());
        let mut st =
            UnitStats { credit: Vec::new(), bigrams: Vec::new(), ids: Vec::new(), content: false };
        let mut prev: Option<u32> = None;
        for id in u.ids.iter() {
            let Some(e) = self.entries.get(id) else {
                prev = None;
                continue;
            };
            if st.credit.is_empty() {
                st.credit = vec![0.0; nc];
                st.bigrams = vec![false; nb];
            }
            for &(k, c) in &e.credits {
                st.credit[k] = st.credit[k].max(c);
            }
            if e.local == NOT_IN_CLAIM {
                prev = None;
                continue;
            }
            st.ids.push(e.local);
            if let Some(a) = prev {
                for (k, bg) in self.claim_bigrams.iter().enumerate() {
                    if *bg == (a, e.local) {
                        st.bigrams[k] = true;
                    }
                }
            }
            prev = Some(e.local);
        }
        if self.has_figures && !u.figures.is_empty() {
            for (k, c) in self.content.iter().enumerate() {
                if let Some(f) = &c.figure {
                    if u.figures.iter().any(|g| f.is_carried_by(g)) {
                        if st.credit.is_empty() {
                            st.credit = vec![0.0; nc];
                            st.bigrams = vec![false; nb];
                        }
                        st.credit[k] = 1.0;
                    }
                }
            }
        }
        st.content = st.credit.iter().any(|&c| c > 0.0);
        st
    }

    /// Whether every unit of a window carries content words of the claim that no other
    /// unit of it carries: two of them, or one for a claim of under six content words.
    fn each_contributes(&self, win: &[UnitStats]) -> bool {
        let need = if self.content.len() < 6 { 1 } else { 2 };
        win.iter().enumerate().all(|(i, s)| {
            s.content
                && (0..s.credit.len())
                    .filter(|&k| {
                        s.credit[k] > 0.0
                            && win.iter().enumerate().all(|(j, o)| {
                                j == i || o.credit.get(k).is_none_or(|&c| c < s.credit[k])
                            })
                    })
                    .count()
                    >= need
        })
    }

    /// Scores every window of `units` (sentences of one passage, tagged `tag`) on exact
    /// credit and offers them to `list`. Windows that share nothing with the claim are
    /// skipped, but the first window of the first passage is always offered, so that a
    /// claim with no support still gets a (zero) window to be shown against.
    ///
    /// The order component (an LCS) is only computed for windows whose upper bound
    /// could still enter the shortlist.
    pub fn windows(&self, tag: usize, units: &[Unit<'_>], p: &Params, list: &mut Shortlist) {
        if units.is_empty() || self.claim.tokens.is_empty() {
            return;
        }
        let stats: Vec<UnitStats> = units.iter().map(|u| self.stats(u)).collect();
        let n_claim = self.claim.tokens.len() as f64;
        let nb = self.claim_bigrams.len();
        let wmax = p.window_sentences.max(1).min(units.len());
        let mut credit = vec![0.0f64; self.content.len()];
        for size in 1..=wmax {
            for first in 0..=units.len() - size {
                let win = &stats[first..first + size];
                if win.iter().all(UnitStats::is_empty) && !list.is_empty() {
                    continue;
                }
                // Every sentence of a longer window must carry content words of the claim
                // that the others lack: a sentence that only lends stop words, order or
                // one stray word is not support.
                if size > 1 && !self.each_contributes(win) {
                    continue;
                }
                credit.iter_mut().for_each(|c| *c = 0.0);
                for s in win.iter().filter(|s| !s.is_empty()) {
                    for (c, &x) in credit.iter_mut().zip(&s.credit) {
                        *c = c.max(x);
                    }
                }
                let coverage = mean(&credit);
                let bigram = if nb == 0 {
                    coverage
                } else {
                    (0..nb).filter(|&k| win.iter().any(|s| !s.is_empty() && s.bigrams[k])).count()
                        as f64
                        / nb as f64
                };
                let shared: usize = win.iter().map(|s| s.ids.len()).sum();
                let bound = score_of(coverage, bigram, (shared as f64 / n_claim).min(1.0));
                if bound < list.bar() {
                    continue;
                }
                let order = self.lcs.len_with(win.iter().flat_map(|s| s.ids.iter().copied()))
                    as f64
                    / n_claim;
                list.offer(Candidate {
                    tag,
                    first,
                    last: first + size - 1,
                    credit: credit.clone(),
                    bigram,
                    order,
                    score: score_of(coverage, bigram, order),
                });
            }
        }
    }

    /// Offers `units` whole, as one window, whatever the window size and however little
    /// each unit adds: for passages joined on purpose (parts of one claim taken from two
    /// cited passages).
    pub fn whole(&self, tag: usize, units: &[Unit<'_>], list: &mut Shortlist) {
        if units.is_empty() || self.claim.tokens.is_empty() {
            return;
        }
        let stats: Vec<UnitStats> = units.iter().map(|u| self.stats(u)).collect();
        let mut credit = vec![0.0f64; self.content.len()];
        for s in stats.iter().filter(|s| !s.is_empty()) {
            for (c, &x) in credit.iter_mut().zip(&s.credit) {
                *c = c.max(x);
            }
        }
        let coverage = mean(&credit);
        let nb = self.claim_bigrams.len();
        let bigram = if nb == 0 {
            coverage
        } else {
            (0..nb).filter(|&k| stats.iter().any(|s| !s.is_empty() && s.bigrams[k])).count() as f64
                / nb as f64
        };
        let order = self.lcs.len_with(stats.iter().flat_map(|s| s.ids.iter().copied())) as f64
            / self.claim.tokens.len() as f64;
        list.offer(Candidate {
            tag,
            first: 0,
            last: units.len() - 1,
            credit,
            bigram,
            order,
            score: score_of(coverage, bigram, order),
        });
    }

    /// Refines the shortlisted windows with fuzzy credit and inspects the best: its tag
    /// and match. `passage(tag)` gives the units and the text a tag stands for.
    pub fn best<'u>(
        &self,
        list: Shortlist,
        passage: impl Fn(usize) -> (&'u [Unit<'u>], &'u str),
        cache: &mut TokenCache,
    ) -> Option<(usize, WindowMatch)> {
        let mut best: Option<(usize, usize, usize, f64, f64)> = None;
        let beats = |best: &Option<(usize, usize, usize, f64, f64)>, c: &Candidate, score: f64| {
            match best {
                None => true,
                Some((_, bf, bl, bs, _)) => {
                    let margin = if c.last - c.first > bl - bf { 0.01 } else { 1e-12 };
                    score > bs + margin || (score > *bs - 1e-12 && c.last - c.first < bl - bf)
                }
            }
        };
        for c in list.items {
            // Fuzzy credit can only raise a word's credit to 1: a window that could not
            // win with full credit for every word it lacks is not refined (nor
            // tokenised).
            let ceiling: Vec<f64> = c
                .credit
                .iter()
                .zip(&self.content)
                .zip(&self.content_ident)
                .map(|((&x, w), &ident)| if w.figure.is_none() && !ident { 1.0 } else { x })
                .collect();
            if !beats(&best, &c, score_of(mean(&ceiling), c.bigram, c.order)) {
                continue;
            }
            let (units, text) = passage(c.tag);
            // The cache may already hold these sentences from another claim of the answer.
            fill_tokens(units, text, c.first, c.last, cache);
            let (tokens, _) = gather_tokens(units, text, c.first, c.last, cache);
            let mut credit = c.credit.clone();
            // Fuzzy credit for words the window lacks (spelling variants, typos).
            for (k, w) in self.content.iter().enumerate() {
                if credit[k] >= 1.0 || w.figure.is_some() || self.content_ident[k] {
                    continue;
                }
                let fuzzy = tokens
                    .iter()
                    .filter(|t| {
                        t.figure.is_none()
                            && !t.stop
                            && fuzzy_length_ok(self.content_chars[k], &w.text, &t.text)
                    })
                    .map(|t| self.memo.get(w, t))
                    .fold(0.0, f64::max);
                credit[k] = credit[k].max(fuzzy);
            }
            let coverage = mean(&credit);
            let score = score_of(coverage, c.bigram, c.order);
            if beats(&best, &c, score) {
                best = Some((c.tag, c.first, c.last, score, coverage));
            }
        }
        let (tag, mut first, mut last, score, coverage) = best?;
        let (units, text) = passage(tag);
        fill_tokens(units, text, first, last, cache);
        // A figure stated once near the window (a date in the line above, a version in
        // the section's first sentence) widens the window to take it in, if every
        // missing figure is within `WIDEN` sentences.
        let (tokens, _) = gather_tokens(units, text, first, last, cache);
        let missing: Vec<&Figure> = self
            .content
            .iter()
            .filter_map(|c| c.figure.as_ref())
            .filter(|f| {
                !tokens.iter().any(|t| t.figure.as_ref().is_some_and(|g| f.is_carried_by(g)))
            })
            .collect();
        if !missing.is_empty() {
            let near = |f: &Figure| {
                let lo = first.saturating_sub(WIDEN);
                let hi = (last + WIDEN).min(units.len() - 1);
                (lo..=hi)
                    .filter(|&k| units[k].figures.iter().any(|g| f.is_carried_by(g)))
                    .min_by_key(|&k| if k < first { first - k } else { k.saturating_sub(last) })
            };
            let found: Vec<Option<usize>> = missing.iter().map(|f| near(f)).collect();
            if found.iter().all(Option::is_some) {
                for k in found.into_iter().flatten() {
                    first = first.min(k);
                    last = last.max(k);
                }
                fill_tokens(units, text, first, last, cache);
            }
        }
        let (window, ends) = gather_tokens(units, text, first, last, cache);
        let found = Found { first, last, score, coverage };
        Some((tag, inspect(self.claim, &window, &ends, text, found, &self.memo)))
    }
}

/// Fuzzy similarities of word pairs, each computed once per claim: refining windows,
/// inspecting the best one and aligning it all ask about the same pairs.
#[derive(Debug)]
struct FuzzyMemo {
    threshold: f64,
    map: RefCell<IdMap<u64, f64>>,
}

impl FuzzyMemo {
    fn new(threshold: f64) -> FuzzyMemo {
        FuzzyMemo { threshold, map: RefCell::new(IdMap::default()) }
    }

    /// [`similarity_at_least`] of the two words at this memo's threshold (0 below it),
    /// keyed by the ids of their written forms.
    fn get(&self, a: &Token, b: &Token) -> f64 {
        let key = (u64::from(a.text_id) << 32) | u64::from(b.text_id);
        if let Some(&v) = self.map.borrow().get(&key) {
            return v;
        }
        let (x, y) = (a.text.as_str(), b.text.as_str());
        // "valid"/"invalid" are close in spelling and opposite in sense.
        let v = match similarity_at_least(x, y, self.threshold) {
            v if v > 0.0 && prefix_opposites(x, y) => 0.0,
            v => v,
        };
        self.map.borrow_mut().insert(key, v);
        v
    }

    /// Whether the words are similar at `threshold` (at least this memo's).
    fn at(&self, a: &Token, b: &Token, threshold: f64) -> bool {
        let v = self.get(a, b);
        v > 0.0 && v >= threshold
    }
}

/// Most sentences a window is widened by to take in a figure of the claim.
const WIDEN: usize = 4;

/// Sentence tokens by the address of the text they are in and their byte range: a cache
/// that may live as long as the texts (one answer's check), shared by its claims.
pub type TokenCache = IdMap<(usize, usize, usize), Vec<Token>>;

/// The cache key of a unit of `text`.
fn token_key(text: &str, unit: &Unit<'_>) -> (usize, usize, usize) {
    (text.as_ptr() as usize, unit.range.start, unit.range.end)
}

/// Tokenises units `first..=last` of a passage (ranges in its text) into the cache,
/// each once.
fn fill_tokens(units: &[Unit<'_>], text: &str, first: usize, last: usize, cache: &mut TokenCache) {
    for unit in units.iter().take(last + 1).skip(first) {
        cache.entry(token_key(text, unit)).or_insert_with(|| {
            let r = unit.range.clone();
            let mut t = text.get(r.clone()).map(tokenize).unwrap_or_default();
            for x in &mut t {
                x.start += r.start;
                x.end += r.start;
                if let Some(f) = &mut x.figure {
                    f.start += r.start;
                    f.end += r.start;
                }
            }
            t
        });
    }
}

/// The cached tokens of units `first..=last` (see [`fill_tokens`]), and for each whether
/// it ends a sentence.
fn gather_tokens<'c>(
    units: &[Unit<'_>],
    text: &str,
    first: usize,
    last: usize,
    cache: &'c TokenCache,
) -> (Vec<&'c Token>, Vec<bool>) {
    let mut tokens: Vec<&Token> = Vec::new();
    let mut ends: Vec<bool> = Vec::new();
    for unit in units.iter().take(last + 1).skip(first) {
        let Some(toks) = cache.get(&token_key(text, unit)) else { continue };
        tokens.extend(toks.iter());
        ends.resize(tokens.len(), false);
        if let Some(e) = ends.last_mut() {
            *e = true;
        }
    }
    (tokens, ends)
}

/// Finds the best window of `units` (sentences of `text`) for `claim`. `None` when
/// `units` is empty or the claim has no tokens.
///
/// Windows are first scored on exact credit (ids), which needs no strings; the best
/// `REFINE` of them are then tokenised again and given fuzzy credit for claim words
/// they lack, and the best of those wins. [`Scorer`] does the same over several
/// passages at once.
pub fn best_window(
    claim: &Claim,
    units: &[Unit<'_>],
    text: &str,
    p: &Params,
) -> Option<WindowMatch> {
    let scorer = Scorer::new(claim, p);
    let mut list = Shortlist::default();
    scorer.windows(0, units, p, &mut list);
    scorer.best(list, |_| (units, text), &mut TokenCache::default()).map(|(_, m)| m)
}

fn mean(xs: &[f64]) -> f64 {
    if xs.is_empty() { 0.0 } else { xs.iter().sum::<f64>() / xs.len() as f64 }
}

/// The tokens of a window or a claim, with what separates them and which are parts of
/// identifiers.
struct Side<'a> {
    toks: Vec<&'a Token>,
    brk: Vec<Break>,
    ident: Vec<bool>,
    text: &'a str,
}

impl Side<'_> {
    /// The text to show for token `k`: its whole compound for identifiers.
    fn shown(&self, k: usize) -> String {
        let t = self.toks[k];
        if self.ident[k] {
            let c = compound_around(self.text, t.start..t.end);
            if !c.is_empty() {
                return c.to_owned();
            }
        }
        self.text.get(t.start..t.end).map_or_else(|| t.text.clone(), str::to_owned)
    }
}

/// Longest run of consecutive content tokens of `tokens` for which `hit` holds
/// (stop words between them neither break nor extend a run).
fn longest_run(tokens: &[Token], hit: impl Fn(usize) -> bool) -> usize {
    let (mut best, mut run) = (0, 0);
    for (k, t) in tokens.iter().enumerate() {
        if !t.is_content() {
            continue;
        }
        if hit(k) {
            run += 1;
            best = best.max(run);
        } else {
            run = 0;
        }
    }
    best
}

/// Runs the figure, polarity and changed-term checks of a claim against a window
/// (`ends[k]`: window token `k` ends a sentence of the passage `text`).
/// Where the best window is and what it scored.
struct Found {
    first: usize,
    last: usize,
    score: f64,
    coverage: f64,
}

fn inspect(
    claim: &Claim,
    window: &[&Token],
    ends: &[bool],
    text: &str,
    found: Found,
    memo: &FuzzyMemo,
) -> WindowMatch {
    let Found { first, last, score, coverage } = found;
    // Missing figures as the claim writes them ("£8.95", "5 hours"), which a reader
    // finds in the sentence; the canonical value when the range cannot be cut.
    let missing_figures: Vec<String> = claim
        .tokens
        .iter()
        .filter_map(|t| t.figure.as_ref())
        .filter(|f| !window.iter().any(|w| w.figure.as_ref().is_some_and(|g| f.is_carried_by(g))))
        .map(|f| {
            claim
                .text
                .get(f.start..f.end)
                .map(str::trim)
                .filter(|t| !t.is_empty())
                .map_or_else(|| f.to_string(), str::to_owned)
        })
        .collect();

    // Which claim tokens the window carries: the same stem, a listed synonym, the same
    // figure, or (for words the window lacks exactly) a fuzzy variant.
    let window_stems: HashSet<&str> = window.iter().map(|w| w.stem.as_str()).collect();
    let window_ids: IdSet<u32> = window.iter().map(|w| w.id).collect();
    let carried: Vec<bool> = claim
        .tokens
        .iter()
        .enumerate()
        .map(|(ci, c)| match &c.figure {
            Some(f) => window.iter().any(|w| w.figure.as_ref().is_some_and(|g| f.is_carried_by(g))),
            None => {
                window_stems.contains(c.stem.as_str())
                    || synonyms_of(&c.stem).iter().any(|id| window_ids.contains(id))
                    || (!c.stop && !claim.ident[ci] && {
                        let chars = c.text.chars().count();
                        window.iter().any(|w| {
                            w.figure.is_none()
                                && !w.stop
                                && fuzzy_length_ok(chars, &c.text, &w.text)
                                && memo.get(c, w) > 0.0
                        })
                    })
            }
        })
        .collect();
    let words: Vec<usize> = (0..claim.tokens.len())
        .filter(|&k| claim.tokens[k].is_content() && claim.tokens[k].figure.is_none())
        .collect();
    let word_coverage = if words.is_empty() {
        0.0
    } else {
        words.iter().filter(|&&k| carried[k]).count() as f64 / words.len() as f64
    };
    let unmatched_run = longest_run(&claim.tokens, |k| !carried[k]);
    let weak_clause = weakest_clause(claim, &carried);
    let recombined = recombined_clause(claim, window, ends);
    let matched_run = longest_run(&claim.tokens, |k| carried[k]);

    // Matched ranges for highlighting: exact stems or fuzzy credit.
    let claim_stems: HashSet<&str> =
        claim.tokens.iter().filter(|t| t.is_content()).map(|t| t.stem.as_str()).collect();
    // Fuzzy credit only went to claim words the window lacks exactly.
    let fuzzy_claim: Vec<&Token> = claim
        .tokens
        .iter()
        .filter(|c| c.is_content() && c.figure.is_none() && !window_stems.contains(c.stem.as_str()))
        .collect();
    let matched: Vec<Range<usize>> = window
        .iter()
        .filter(|w| match &w.figure {
            // A figure is marked only where it carries one of the claim (same value and
            // a compatible unit: "5 minutes" is not marked for "5 hours").
            Some(g) => {
                claim.tokens.iter().any(|c| c.figure.as_ref().is_some_and(|f| f.is_carried_by(g)))
            }
            None => {
                !w.stop
                    && (claim_stems.contains(w.stem.as_str())
                        || fuzzy_claim.iter().any(|c| {
                            fuzzy_length_ok(c.text.chars().count(), &c.text, &w.text)
                                && memo.get(c, w) > 0.0
                        }))
            }
        })
        .map(|w| w.start..w.end)
        .collect();

    let a = Side {
        toks: claim.tokens.iter().collect(),
        brk: claim.breaks.clone(),
        ident: claim.ident.clone(),
        text: &claim.text,
    };
    // Alignment is quadratic; a window of a few sentences is small, but guard the size.
    let wtoks: Vec<&Token> = window.iter().copied().take(2_000).collect();
    let b = Side {
        brk: breaks_of(text, &wtoks, |k| ends.get(k).copied().unwrap_or(false)),
        ident: wtoks
            .iter()
            .map(|t| t.figure.is_none() && identifier_at(text, t.start..t.end))
            .collect(),
        toks: wtoks,
        text,
    };
    let Aligned { negation_mismatch, changed, swapped_figures } = align_checks(&a, &b, memo);
    // A figure standing where the window has another is missing even if the window gives
    // its value elsewhere.
    let mut missing_figures = missing_figures;
    for k in swapped_figures {
        let t = &claim.tokens[k];
        let shown = claim.text.get(t.start..t.end).map_or_else(|| t.text.clone(), str::to_owned);
        if !missing_figures.contains(&shown) {
            missing_figures.push(shown);
        }
    }
    WindowMatch {
        first,
        last,
        score,
        coverage,
        matched,
        missing_figures,
        negation_mismatch,
        changed,
        unmatched_run,
        matched_run,
        word_coverage,
        weak_clause,
        recombined,
    }
}

/// Whether one clause of the claim (between clause marks) takes its words from two
/// sentences of the window — the subject of one and the predicate of another — rather
/// than from one: four or more of its words are carried, no single window sentence
/// carries three quarters of them, and a second sentence carries two or more of the
/// rest. A claim whose clauses each come from their own sentence is not recombined.
fn recombined_clause(claim: &Claim, window: &[&Token], ends: &[bool]) -> bool {
    let mut unit = Vec::with_capacity(window.len());
    let mut u = 0usize;
    for k in 0..window.len() {
        unit.push(u);
        if ends.get(k).copied().unwrap_or(false) {
            u += 1;
        }
    }
    let units = unit.last().map_or(0, |&x| x + 1);
    if units < 2 {
        return false;
    }
    // Window sentences holding each stem id.
    let mut held: IdMap<u32, Vec<usize>> = IdMap::default();
    for (k, w) in window.iter().enumerate() {
        if w.is_content() && w.figure.is_none() {
            let e = held.entry(w.id).or_default();
            if !e.contains(&unit[k]) {
                e.push(unit[k]);
            }
        }
    }
    let toks = &claim.tokens;
    let mut start = 0;
    for k in 0..=toks.len() {
        if k < toks.len() && (k == start || claim.breaks[k - 1] == Break::None) {
            continue;
        }
        let words: Vec<&Vec<usize>> = (start..k)
            .filter(|&i| toks[i].is_content() && toks[i].figure.is_none())
            .filter_map(|i| held.get(&toks[i].id))
            .collect();
        start = k;
        if words.len() < 3 {
            continue;
        }
        let count = |u: usize| words.iter().filter(|us| us.contains(&u)).count();
        let best = (0..units).max_by_key(|&u| count(u)).unwrap_or(0);
        // The clause's subject (its first words) only in another sentence than the one
        // that carries the rest of it.
        let lead: Vec<&&Vec<usize>> = words.iter().take(2).collect();
        if count(best) >= 3 && lead.iter().all(|us| !us.contains(&best)) {
            return true;
        }
        if count(best) * 4 >= words.len() * 3 {
            continue;
        }
        if words.len() < 4 {
            continue;
        }
        let rest = (0..units)
            .filter(|&u| u != best)
            .map(|u| words.iter().filter(|us| !us.contains(&best) && us.contains(&u)).count())
            .max()
            .unwrap_or(0);
        if rest >= 2 {
            return true;
        }
    }
    false
}

/// Words that open a clause of their own after a comma or semicolon.
fn opens_clause(word: &str) -> bool {
    matches!(
        word,
        "and"
            | "but"
            | "or"
            | "so"
            | "while"
            | "whereas"
            | "although"
            | "though"
            | "yet"
            | "because"
            | "which"
            | "where"
            | "whereby"
            | "unless"
            | "since"
            | "nor"
    )
}

/// Whether some clause of the claim (split at a clause mark before a word that opens a
/// clause) with three or more content words has fewer than half of them carried: a
/// clause joined to ones the window does carry.
fn weakest_clause(claim: &Claim, carried: &[bool]) -> bool {
    let toks = &claim.tokens;
    let mut start = 0;
    let mut weak = false;
    let mut clauses = 0;
    for k in 0..=toks.len() {
        let ends = k == toks.len()
            || (k > start && claim.breaks[k - 1] == Break::Clause && opens_clause(&toks[k].text));
        if !ends {
            continue;
        }
        let content: Vec<usize> = (start..k).filter(|&i| toks[i].is_content()).collect();
        let hit = content.iter().filter(|&&i| carried[i]).count();
        if content.len() >= 3 && hit * 2 < content.len() {
            weak = true;
        }
        clauses += 1;
        start = k;
    }
    // One clause only: nothing is joined.
    weak && clauses > 1
}

/// LCS alignment of claim and window stems: the matched index pairs.
fn align(sa: &Side<'_>, sb: &Side<'_>, memo: &FuzzyMemo) -> Vec<(usize, usize)> {
    let (a, b) = (&sa.toks, &sb.toks);
    let (n, m) = (a.len(), b.len());
    let fuzzy = memo.threshold.max(0.9);
    // Which pairs match, decided once (the table and the walk back both ask). Fuzzy
    // matches are only sought between words that have no exact partner on the other
    // side: a word present in both is aligned by its exact occurrence.
    let ids_a: IdSet<u32> = a.iter().map(|t| t.id).collect();
    let ids_b: IdSet<u32> = b.iter().map(|t| t.id).collect();
    let mut eq = vec![false; n * m];
    // Names are never spelling variants of each other ("ArgumentError" is not
    // "ArgumentParser"), and figures align only with figures they carry both ways
    // ("0 bytes" with "0", not with "0 terabytes").
    let b_fuzzy: Vec<bool> = b
        .iter()
        .enumerate()
        .map(|(j, y)| y.figure.is_none() && !y.stop && !sb.ident[j] && !ids_a.contains(&y.id))
        .collect();
    for (i, x) in a.iter().enumerate() {
        let x_fuzzy = x.figure.is_none() && !x.stop && !sa.ident[i] && !ids_b.contains(&x.id);
        let chars = if x_fuzzy { x.text.chars().count() } else { 0 };
        for (j, y) in b.iter().enumerate() {
            let same_figure = match (&x.figure, &y.figure) {
                (Some(f), Some(g)) => f.is_carried_by(g) && g.is_carried_by(f),
                _ => false,
            };
            eq[i * m + j] = (x.id == y.id && x.stem == y.stem && x.figure.is_none())
                || same_figure
                || (x_fuzzy
                    && b_fuzzy[j]
                    && fuzzy_length_ok(chars, &x.text, &y.text)
                    && memo.at(x, y, fuzzy));
        }
    }
    let same = |i: usize, j: usize| eq[i * m + j];
    let mut t = vec![0u32; (n + 1) * (m + 1)];
    let idx = |i: usize, j: usize| i * (m + 1) + j;
    for i in (0..n).rev() {
        for j in (0..m).rev() {
            t[idx(i, j)] = if same(i, j) {
                t[idx(i + 1, j + 1)] + 1
            } else {
                t[idx(i + 1, j)].max(t[idx(i, j + 1)])
            };
        }
    }
    let mut pairs = Vec::new();
    let (mut i, mut j) = (0, 0);
    while i < n && j < m {
        if same(i, j) && t[idx(i, j)] == t[idx(i + 1, j + 1)] + 1 {
            pairs.push((i, j));
            i += 1;
            j += 1;
        } else if t[idx(i + 1, j)] >= t[idx(i, j + 1)] {
            i += 1;
        } else {
            j += 1;
        }
    }
    pairs
}

/// Whether token `k` is a negation cue. Bounds written with a negation ("no later
/// than", "not more than") and "not only" are not: they restate a limit or add to a
/// claim rather than deny it.
fn is_cue(side: &Side<'_>, k: usize) -> bool {
    let toks = &side.toks;
    let w = toks[k].text.as_str();
    if !is_negation(w) {
        return false;
    }
    // A capital inside a sentence is a literal of code or a keyword ("was None",
    // "the NONE attribute"), not a negation.
    let capital = side
        .text
        .get(toks[k].start..)
        .and_then(|t| t.chars().next())
        .is_some_and(char::is_uppercase);
    if capital && k > 0 && side.brk[k - 1] != Break::Sentence {
        return false;
    }
    let next = toks.get(k + 1).map(|t| t.text.as_str());
    let after = toks.get(k + 2).map(|t| t.text.as_str());
    let comparative = |n: &str| {
        matches!(
            n,
            "later"
                | "earlier"
                | "more"
                | "less"
                | "fewer"
                | "longer"
                | "shorter"
                | "greater"
                | "sooner"
                | "higher"
                | "lower"
                | "older"
        )
    };
    if matches!(w, "no" | "not") && after == Some("than") && next.is_some_and(comparative) {
        return false;
    }
    // "not only X but also Y" adds to a claim; "is not only displayed if" denies one.
    if w == "not"
        && next == Some("only")
        && toks[k + 1..].iter().any(|t| t.text == "but" || t.text == "also")
    {
        return false;
    }
    if w == "not" && k >= 2 && toks[k - 1].text == "or" && toks[k - 2].text == "whether" {
        return false;
    }
    true
}

/// Tokens a negation cue at `k` applies to: up to six that follow it in its clause.
fn scope(side: &Side<'_>, k: usize) -> Range<usize> {
    let mut end = k + 1;
    if side.brk[k] == Break::Sentence {
        return end..end;
    }
    if side.brk[k] == Break::Clause {
        // "cannot, however, subclass", "that is not (the number …)": the words after the
        // mark are what is denied.
        while end < side.toks.len() && end - k <= 4 {
            end += 1;
            if side.brk[end - 1] == Break::Sentence {
                break;
            }
        }
        return k + 1..end;
    }
    // Six words, or on to the first content word ("will not be updated") up to ten.
    while end < side.toks.len()
        && (end - k <= 6
            || (end - k <= 10 && !side.toks[k + 1..end].iter().any(|t| t.is_content())))
    {
        end += 1;
        if side.brk[end - 1] != Break::None {
            break;
        }
    }
    k + 1..end
}

/// Negation cues of a side with their scopes.
fn cues(side: &Side<'_>) -> Vec<(usize, Range<usize>)> {
    (0..side.toks.len()).filter(|&k| is_cue(side, k)).map(|k| (k, scope(side, k))).collect()
}

/// Whether some cue of `side` covers position `j`: its scope holds `j`, or it stands at
/// most three tokens before `j` ("never, under any circumstances, closes").
fn negated_at(cues: &[(usize, Range<usize>)], j: usize) -> bool {
    cues.iter().any(|(q, r)| r.contains(&j) || (*q < j && j - q <= 3))
}

/// Polarity: a negation on one side whose scope is mostly aligned with the other side
/// (the other side states the same thing) must find a negation there too.
fn polarity_differs(a: &Side<'_>, b: &Side<'_>, pairs: &[(usize, usize)]) -> bool {
    let mut partner_a = vec![None; a.toks.len()];
    let mut partner_b = vec![None; b.toks.len()];
    for &(i, j) in pairs {
        partner_a[i] = Some(j);
        partner_b[j] = Some(i);
    }
    let (cues_a, cues_b) = (cues(a), cues(b));
    let one_way = |x: &Side<'_>,
                   cx: &[(usize, Range<usize>)],
                   partner: &[Option<usize>],
                   cy: &[(usize, Range<usize>)]| {
        cx.iter().any(|(_, r)| {
            let content: Vec<usize> = r.clone().filter(|&k| x.toks[k].is_content()).collect();
            let aligned: Vec<usize> = content.iter().filter_map(|&k| partner[k]).collect();
            !aligned.is_empty()
                && aligned.len() * 2 >= content.len()
                && !aligned.iter().any(|&j| negated_at(cy, j))
        })
    };
    one_way(a, &cues_a, &partner_a, &cues_b) || one_way(b, &cues_b, &partner_b, &cues_a)
}

/// Whether a sentence of the window ends between window tokens `from` and `to`.
fn crosses_sentence(b: &Side<'_>, from: usize, to: usize) -> bool {
    (from..to).any(|k| b.brk.get(k) == Some(&Break::Sentence))
}

/// Longest gap, on either side, looked at before the first or after the last tight run
/// of aligned words.
const EDGE: usize = 8;

/// Content words that frame a sentence rather than say what it claims ("In that case,
/// request …", "For example, …", "However, …"): they do not count as a different
/// subject. The nouns only in their set phrases, after "in", "for", "as", "on", "by" or
/// "of" ("The instance may change" names an instance).
fn is_discourse(side: &Side<'_>, k: usize) -> bool {
    static ADVERBS: LazyLock<HashSet<String>> = LazyLock::new(|| {
        [
            "therefore",
            "thus",
            "hence",
            "however",
            "instead",
            "otherwise",
            "also",
            "additionally",
            "furthermore",
            "moreover",
            "generally",
            "typically",
            "usually",
            "normally",
            "often",
            "finally",
            "first",
            "second",
            "then",
            "now",
            "here",
            "simply",
            "basically",
            "essentially",
            "actually",
            "really",
            "indeed",
        ]
        .iter()
        .map(|w| crate::text::stem::stem(w))
        .collect()
    });
    static NOUNS: LazyLock<HashSet<String>> = LazyLock::new(|| {
        [
            "case",
            "example",
            "instance",
            "addition",
            "general",
            "fact",
            "practice",
            "short",
            "particular",
            "summary",
            "result",
            "turn",
            "contrast",
            "comparison",
            "course",
        ]
        .iter()
        .map(|w| crate::text::stem::stem(w))
        .collect()
    });
    let stem = side.toks[k].stem.as_str();
    if ADVERBS.contains(stem) {
        return true;
    }
    NOUNS.contains(stem)
        && (k.saturating_sub(3)..k)
            .any(|i| matches!(side.toks[i].text.as_str(), "in" | "for" | "as" | "on" | "by" | "of"))
}

/// Modal verbs and adverbs that shade a claim without naming anything ("will
/// contain", "actually occurs"): a one-for-one swap of these is rephrasing.
fn is_light(t: &Token) -> bool {
    matches!(
        t.text.as_str(),
        "will"
            | "would"
            | "shall"
            | "should"
            | "can"
            | "could"
            | "might"
            | "actually"
            | "really"
            | "just"
            | "also"
            | "simply"
            | "still"
            | "already"
            | "even"
            | "very"
            | "quite"
            | "rather"
            | "then"
            | "now"
            | "indeed"
            | "generally"
            | "usually"
            | "typically"
            | "normally"
    )
}

/// What aligning a claim with its window found.
#[derive(Debug, Default)]
struct Aligned {
    negation_mismatch: bool,
    changed: Vec<ChangedTerm>,
    /// Claim tokens (indices) that are figures standing where the window has another
    /// figure: changed even when the window gives the same value elsewhere.
    swapped_figures: Vec<usize>,
}

/// Where a gap of the alignment lies.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum GapAt {
    /// Before the first tight run of aligned words.
    Lead,
    /// Between two aligned words.
    Inner,
    /// After the last tight run.
    Trail,
}

/// Whether aligned pair `r` and the next are adjacent on both sides.
fn tight(pairs: &[(usize, usize)], r: usize) -> bool {
    r + 1 < pairs.len() && pairs[r + 1] == (pairs[r].0 + 1, pairs[r].1 + 1)
}

fn align_checks(a: &Side<'_>, b: &Side<'_>, memo: &FuzzyMemo) -> Aligned {
    let pairs = align(a, b, memo);
    let mut out = Aligned::default();
    if pairs.is_empty() {
        return out;
    }
    out.negation_mismatch = polarity_differs(a, b, &pairs);

    // Substitutions are sought only where the alignment is tight: between two aligned
    // words of one window sentence, or before (after) the first (last) run of two
    // adjacent aligned words, within that window sentence. Scattered single matches
    // across sentences would otherwise pair words that merely happen to stand near
    // each other.
    let (n, m) = (a.toks.len(), b.toks.len());
    let sentence_start =
        |j: usize| (0..j).rev().find(|&k| b.brk[k] == Break::Sentence).map_or(0, |k| k + 1);
    let sentence_end =
        |j: usize| (j..m).find(|&k| b.brk[k] == Break::Sentence).map_or(m, |k| k + 1);
    let mut gaps: Vec<(Range<usize>, Range<usize>, GapAt)> = Vec::new();
    if let Some(r) = (0..pairs.len()).find(|&r| tight(&pairs, r)) {
        let (ar, br) = pairs[r];
        let gb = sentence_start(br).max(br.saturating_sub(EDGE))..br;
        gaps.push((ar.saturating_sub(EDGE)..ar, gb, GapAt::Lead));
    }
    for w in pairs.windows(2) {
        let ((i1, j1), (i2, j2)) = (w[0], w[1]);
        if !crosses_sentence(b, j1, j2) {
            gaps.push((i1 + 1..i2, j1 + 1..j2, GapAt::Inner));
        }
    }
    if let Some(r) = (1..pairs.len()).rev().find(|&r| tight(&pairs, r - 1)) {
        let (ar, br) = pairs[r];
        let gb = br + 1..sentence_end(br).min(br + 1 + EDGE);
        gaps.push((ar + 1..(ar + 1 + EDGE).min(n), gb, GapAt::Trail));
    }
    // Names as written (case matters: "WHERE" the keyword is not "where").
    let names = |side: &Side<'_>| -> HashSet<String> {
        (0..side.toks.len()).filter(|&k| side.ident[k]).map(|k| side.shown(k)).collect()
    };
    let (names_a, names_b) = (names(a), names(b));
    // Window words the alignment left aside: a claim word among them, in the same window
    // sentence, was moved (a clause put in another order), not replaced.
    let aligned_b: IdSet<usize> = pairs.iter().map(|&(_, j)| j).collect();
    let loose_in = |r: Range<usize>| -> IdSet<u32> {
        r.filter(|j| !aligned_b.contains(j)).map(|j| b.toks[j].id).collect()
    };
    // "non-blocking" against "blocking": the prefix written as a word of its own.
    let aligned_a: IdSet<usize> = pairs.iter().map(|&(i, _)| i).collect();
    for &(i, j) in &pairs {
        let non_a = i > 0 && a.toks[i - 1].text == "non" && !aligned_a.contains(&(i - 1));
        let non_b = j > 0 && b.toks[j - 1].text == "non" && !aligned_b.contains(&(j - 1));
        if non_a != non_b {
            let with = |side: &Side<'_>, k: usize, non: bool| {
                if non { format!("non-{}", side.shown(k)) } else { side.shown(k) }
            };
            out.changed.push(ChangedTerm { claim: with(a, i, non_a), evidence: with(b, j, non_b) });
        }
    }
    for (ga, gb, at) in gaps {
        let (ga_len, gb_len) = (ga.len(), gb.len());
        let ga_start = ga.start;
        let most = if at == GapAt::Inner { 6 } else { EDGE };
        if ga_len == 0 || gb_len == 0 || ga_len > most || gb_len > most {
            continue;
        }
        // A figure standing where the window has a different one.
        let fb: Vec<&Figure> = gb.clone().filter_map(|k| b.toks[k].figure.as_ref()).collect();
        if !fb.is_empty() {
            for k in ga.clone() {
                if let Some(f) = &a.toks[k].figure {
                    if !fb.iter().any(|g| f.is_carried_by(g)) {
                        out.swapped_figures.push(k);
                    }
                }
            }
        }
        let window_sentence = sentence_start(gb.start)..sentence_end(gb.end.saturating_sub(1));
        let ca: Vec<usize> =
            ga.filter(|&k| is_alignable_content(a.toks[k]) || a.ident[k]).collect();
        let cb: Vec<usize> =
            gb.filter(|&k| is_alignable_content(b.toks[k]) || b.ident[k]).collect();
        if ca.is_empty() || cb.is_empty() {
            continue;
        }
        let before = out.changed.len();
        for &x in &ca {
            for &y in &cb {
                if is_opposite(a.toks[x], b.toks[y]) {
                    out.changed.push(ChangedTerm { claim: a.shown(x), evidence: b.shown(y) });
                }
            }
        }
        if out.changed.len() > before {
            continue;
        }
        // One quantifier for another of a different class ("only one" for "each").
        let qa: Vec<(usize, &str)> =
            ca.iter().filter_map(|&k| quantifier_class(&a.toks[k].text).map(|c| (k, c))).collect();
        let qb: Vec<(usize, &str)> =
            cb.iter().filter_map(|&k| quantifier_class(&b.toks[k].text).map(|c| (k, c))).collect();
        if !qa.is_empty()
            && !qb.is_empty()
            && !qa.iter().any(|(_, c)| qb.iter().any(|(_, d)| c == d))
        {
            out.changed.push(ChangedTerm { claim: a.shown(qa[0].0), evidence: b.shown(qb[0].0) });
            continue;
        }
        // One identifier for another ("Tier2-Billing" where the source has
        // "Tier2-Dispatch"): names the other side does not hold at all.
        let ia: Vec<usize> =
            ca.iter().copied().filter(|&k| a.ident[k] && !names_b.contains(&a.shown(k))).collect();
        let ib: Vec<usize> =
            cb.iter().copied().filter(|&k| b.ident[k] && !names_a.contains(&b.shown(k))).collect();
        if !ia.is_empty() && !ib.is_empty() {
            out.changed.push(ChangedTerm { claim: a.shown(ia[0]), evidence: b.shown(ib[0]) });
            continue;
        }
        let related = |x: &Token, y: &Token| {
            x.stem == y.stem || is_synonym(&x.stem, &y.stem) || memo.get(x, y) > 0.0
        };
        match at {
            // A one-for-one swap in a short gap counts only between words of one class:
            // two content words, or two quantifier/relation words ("after" for "date" is
            // rephrasing, not a swap).
            GapAt::Inner => {
                if ca.len() == 1 && cb.len() == 1 && ga_len <= 3 && gb_len <= 3 {
                    let (x, y) = (a.toks[ca[0]], b.toks[cb[0]]);
                    if x.stop == y.stop && !related(x, y) && !is_light(x) && !is_light(y) {
                        out.changed
                            .push(ChangedTerm { claim: a.shown(ca[0]), evidence: b.shown(cb[0]) });
                    }
                }
            }
            // Another subject before the same predicate, or another ending after the
            // same opening: no word of one side's content related to the other's.
            GapAt::Lead | GapAt::Trail => {
                let wa: Vec<usize> = ca
                    .iter()
                    .copied()
                    .filter(|&k| !a.toks[k].stop && !is_discourse(a, k))
                    .collect();
                let wb: Vec<usize> = cb
                    .iter()
                    .copied()
                    .filter(|&k| !b.toks[k].stop && !is_discourse(b, k))
                    .collect();
                let loose_b = loose_in(window_sentence.clone());
                let moved = wa.iter().any(|&x| loose_b.contains(&a.toks[x].id));
                // A clause of its own joined to the claim is judged by the clause rule
                // (`weakest_clause`), and "that queue" refers back rather than names.
                let span = ga_start..ga_start + ga_len;
                let own_clause = (ga_start.saturating_sub(2)..span.end).any(|k| {
                    k > 0 && a.brk[k - 1] == Break::Clause && opens_clause(&a.toks[k].text)
                }) || (at == GapAt::Lead
                    && span.end > 0
                    && a.brk[span.end - 1] == Break::Clause);
                let refers_back = wa.first().is_some_and(|&k| {
                    k > 0
                        && matches!(
                            a.toks[k - 1].text.as_str(),
                            "this" | "that" | "these" | "those" | "such" | "its" | "their"
                        )
                });
                if !wa.is_empty()
                    && !wb.is_empty()
                    && !moved
                    && !own_clause
                    && !refers_back
                    && !wa.iter().any(|&x| wb.iter().any(|&y| related(a.toks[x], b.toks[y])))
                {
                    let words = |side: &Side<'_>, ks: &[usize]| {
                        ks.iter().map(|&k| side.shown(k)).collect::<Vec<_>>().join(" ")
                    };
                    out.changed.push(ChangedTerm { claim: words(a, &wa), evidence: words(b, &wb) });
                }
            }
        }
    }
    out.changed.dedup();
    out.swapped_figures.sort_unstable();
    out.swapped_figures.dedup();
    out
}

/// The verdict and flags for a claim given its best window (`None`: nothing cited).
#[derive(Debug, Clone, PartialEq)]
pub struct Assessment {
    /// The verdict.
    pub verdict: Verdict,
    /// The score (0 with no window).
    pub score: f64,
    /// A figure was not carried.
    pub number_mismatch: bool,
    /// Polarity disagreed.
    pub negation_mismatch: bool,
    /// A term was changed.
    pub changed_term: bool,
}

/// Unmatched consecutive content words that make a supported-scoring claim partial.
const JOINED_RUN: usize = 3;
/// Share of the claim's words a window must carry for its figures to be compared.
const RELEVANT_WORDS: f64 = 0.5;

/// Decides the verdict of a claim from its best window.
pub fn assess(claim: &Claim, best: Option<&WindowMatch>, p: &Params) -> Assessment {
    if claim.no_claim {
        return Assessment {
            verdict: Verdict::NoClaim,
            score: best.map_or(0.0, |m| m.score),
            number_mismatch: false,
            negation_mismatch: false,
            changed_term: false,
        };
    }
    let Some(m) = best else {
        return Assessment {
            verdict: Verdict::Unsupported,
            score: 0.0,
            number_mismatch: false,
            negation_mismatch: false,
            changed_term: false,
        };
    };
    let mut verdict = if m.score >= p.supported {
        Verdict::Supported
    } else if m.score >= p.partial {
        Verdict::Partial
    } else {
        Verdict::Unsupported
    };
    // The checks only speak where the window is about the same thing as the claim.
    let relevant = m.score >= p.partial;
    // A figure is checked where the window is about the same thing: it scores as
    // partial support, or carries half the claim's words (a changed price in an
    // otherwise copied sentence lowers the score, not the words).
    let number_mismatch =
        !m.missing_figures.is_empty() && (relevant || m.word_coverage >= RELEVANT_WORDS);
    let negation_mismatch = relevant && m.negation_mismatch;
    let changed_term = relevant && !m.changed.is_empty();
    let content = claim.tokens.iter().filter(|t| t.is_content()).count();
    if number_mismatch || negation_mismatch {
        verdict = Verdict::Unsupported;
    } else if changed_term && verdict == Verdict::Supported {
        verdict = Verdict::Partial;
    } else if verdict == Verdict::Supported
        && (m.weak_clause
            || m.recombined
            || (m.unmatched_run >= JOINED_RUN && m.unmatched_run * 4 >= content))
    {
        // A clause of its own that the window does not carry, joined to one it does.
        verdict = Verdict::Partial;
    }
    Assessment { verdict, score: m.score, number_mismatch, negation_mismatch, changed_term }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::text::sentences::split;

    fn check(claim_text: &str, passage: &str) -> (Assessment, WindowMatch) {
        let p = Params::default();
        let c = claim(claim_text);
        let us = units(passage, &split(passage));
        let m = best_window(&c, &us, passage, &p).expect("a window");
        (assess(&c, Some(&m), &p), m)
    }

    const PASSAGE: &str = "Warranty claims stay open for 45 days from the date of purchase. \
        After that they close automatically. The minimum refund is £12.40. \
        Claims must not be reopened by agents.";

    #[test]
    fn verbatim_is_supported_with_full_score() {
        let (a, m) = check("After that they close automatically.", PASSAGE);
        assert_eq!(a.verdict, Verdict::Supported);
        assert!((m.score - 1.0).abs() < 1e-9, "{}", m.score);
        assert_eq!((m.first, m.last), (1, 1));
    }

    #[test]
    fn paraphrase_is_supported() {
        let (a, m) = check("Warranty claims remain open for 45 days after purchase.", PASSAGE);
        assert_eq!(a.verdict, Verdict::Supported, "{m:?}");
    }

    #[test]
    fn changed_figure_is_unsupported() {
        let (a, m) =
            check("Warranty claims stay open for 54 days from the date of purchase.", PASSAGE);
        assert!(a.number_mismatch);
        assert_eq!(a.verdict, Verdict::Unsupported);
        assert_eq!(m.missing_figures, ["54 days"]);
        let (a, _) = check("The minimum refund is £12.50.", PASSAGE);
        assert_eq!(a.verdict, Verdict::Unsupported);
    }

    #[test]
    fn flipped_polarity_is_caught() {
        let (a, _) = check("Claims must be reopened by agents.", PASSAGE);
        assert!(a.negation_mismatch);
        assert_eq!(a.verdict, Verdict::Unsupported);
    }

    #[test]
    fn opposite_term_is_caught() {
        let (a, m) = check("The maximum refund is £12.40.", PASSAGE);
        assert!(a.changed_term, "{m:?}");
        assert_eq!(
            m.changed[0],
            ChangedTerm { claim: "maximum".into(), evidence: "minimum".into() }
        );
        assert_ne!(a.verdict, Verdict::Supported);
    }

    #[test]
    fn unrelated_claim_is_unsupported() {
        let (a, _) = check("Employees receive a free parking space at headquarters.", PASSAGE);
        assert_eq!(a.verdict, Verdict::Unsupported);
    }

    #[test]
    fn chatter_and_questions_are_no_claim() {
        for s in [
            "Hi there!",
            "Let me know if you need anything else.",
            "Would you like the form?",
            "## Summary",
            "I hope this helps.",
        ] {
            assert!(claim(s).no_claim, "{s}");
        }
        assert!(!claim("Claims close after 45 days.").no_claim);
    }

    #[test]
    fn matched_ranges_point_at_evidence_words() {
        let (_, m) = check("Claims close automatically.", PASSAGE);
        let words: Vec<&str> = m.matched.iter().map(|r| &PASSAGE[r.clone()]).collect();
        assert!(words.contains(&"close") && words.contains(&"automatically"), "{words:?}");
    }

    #[test]
    fn bare_answers_offers_and_lead_ins_are_no_claim() {
        for s in [
            "Yes.",
            "No!",
            "Tell me and I can check the rules for you.",
            "If you like, I can send the form.",
            "I can look that up for you.",
            "Here is what the policy says:",
        ] {
            assert!(claim(s).no_claim, "{s}");
        }
        for s in ["Yes, the refund is paid within 5 days.", "No refunds are given after 30 days."] {
            assert!(!claim(s).no_claim, "{s}");
        }
    }

    #[test]
    fn identifiers_are_told_from_words() {
        for s in ["Tier2-Billing", "max_connections", "S2", "getValue", "INC-2026-003"] {
            assert!(is_identifier(s), "{s}");
        }
        for s in ["look-alike", "multi-factor", "Billing", "2026", "e-mail"] {
            assert!(!is_identifier(s), "{s}");
        }
    }

    #[test]
    fn negation_outside_the_claim_does_not_count() {
        // The window negates something the claim does not say (multi-factor set-up).
        let passage = "Two support agents entered their passwords on the look-alike page; \
            neither account had multi-factor authentication set up. The accounts were locked \
            at 09:55 and the passwords reset.";
        let (a, m) = check(
            "Two support agents entered their passwords on a look-alike page, and the accounts were locked at 09:55.",
            passage,
        );
        assert!(!a.negation_mismatch, "{m:?}");
        assert_eq!(a.verdict, Verdict::Supported);
        // A bound written with "no" is not a denial.
        let (a, _) = check(
            "Reply within 5 working days.",
            "Reply no later than 5 working days after the request.",
        );
        assert!(!a.negation_mismatch);
    }

    #[test]
    fn negation_inside_the_claim_counts_both_ways() {
        let passage = "Unused leave does not carry over automatically. Managers must approve overtime before the shift starts.";
        let (a, _) = check("Unused leave carries over automatically.", passage);
        assert!(a.negation_mismatch);
        assert_eq!(a.verdict, Verdict::Unsupported);
        let (a, _) = check("Managers must not approve overtime before the shift starts.", passage);
        assert!(a.negation_mismatch);
        let (a, _) = check("Unused leave does not carry over automatically.", passage);
        assert!(!a.negation_mismatch);
    }

    #[test]
    fn a_stray_match_in_another_sentence_is_no_changed_term() {
        // "work" of "work phone" also stands in the next sentence ("work on the floor"):
        // pairing "phone" with "warehouse" there would be a false alarm.
        let passage = "The new starter must change their temporary password at first login. \
            Book the Safe Lifting course for anyone who will work on the warehouse floor.";
        let (a, m) = check(
            "The new starter must change their temporary password at first login, using the app on their work phone.",
            passage,
        );
        assert!(!a.changed_term, "{m:?}");
        // Sentences that open differently are not swaps either.
        let (a, m) = check(
            "In that case, request a bank transfer through the finance queue.",
            "The card has expired; then the agent requests a bank transfer through the finance queue.",
        );
        assert!(!a.changed_term, "{m:?}");
    }

    #[test]
    fn one_identifier_for_another_is_a_changed_term() {
        let (a, m) = check(
            "Escalate it to the Tier2-Billing queue, which handles lost parcels after the courier has confirmed the loss.",
            "Tier2-Dispatch: lost parcels after the courier has confirmed the loss, damaged deliveries and wrong items sent.",
        );
        assert!(a.changed_term, "{m:?}");
        assert_eq!(
            m.changed[0],
            ChangedTerm { claim: "Tier2-Billing".into(), evidence: "Tier2-Dispatch".into() }
        );
        assert_ne!(a.verdict, Verdict::Supported);
    }

    #[test]
    fn a_sentence_that_lends_only_stop_words_is_not_in_the_window() {
        let passage = "A customer name such as <script>alert(1)</script> must appear on the screen as those exact characters and must never run.\n\n\
            Use the template engine's automatic escaping and keep it switched on. A placeholder such as {{ customer_name }} is escaped automatically; marking a value as safe needs a second reviewer.";
        let (a, m) = check(
            "A placeholder such as {{ customer_name }} is escaped automatically, so keep the template engine's automatic escaping switched on.",
            passage,
        );
        assert_eq!((m.first, m.last), (1, 2), "{m:?}");
        assert_eq!(a.verdict, Verdict::Supported, "{m:?}");
    }

    #[test]
    fn an_unsupported_clause_joined_to_a_supported_one_is_partial() {
        let passage = "You have the right to return to the same job after 26 weeks of leave, \
            and to a job of the same grade and pay after longer leave.";
        let (a, m) = check(
            "You have the right to return to the same job after 26 weeks of leave, and you will also receive a welcome-back bonus paid with your next salary.",
            passage,
        );
        assert_eq!(a.verdict, Verdict::Partial, "{m:?}");
        let (a, m) = check(
            "Warranty claims stay open for 45 days from the date of purchase and customers get a free mug.",
            PASSAGE,
        );
        assert_eq!(a.verdict, Verdict::Partial, "{m:?}");
    }

    #[test]
    fn a_figure_in_a_nearby_sentence_widens_the_window() {
        let passage = "Found 3 February 2026 at 08:40. Severity S2. A message asked agents to confirm \
            their login. Two support agents entered their passwords on the look-alike page. \
            The accounts were locked at 09:55 and the passwords reset.";
        let (a, m) = check(
            "On 3 February 2026 two support agents entered their passwords on a look-alike page, and the accounts were locked at 09:55.",
            passage,
        );
        assert!(!a.number_mismatch, "{m:?}");
        assert_eq!(m.first, 0);
        // Too far away, it does not.
        let far = format!(
            "Found 3 February 2026. {} {}",
            "Nothing else happened that day. ".repeat(6),
            "The accounts were locked at 09:55."
        );
        let (a, _) = check("On 3 February 2026 the accounts were locked at 09:55.", &far);
        assert!(a.number_mismatch);
    }

    #[test]
    fn filler_is_no_claim_and_instructions_are_not() {
        for s in ["Sure, here is the answer.", "Good luck!", "No problem.", "Good question!"] {
            assert!(claim(s).no_claim, "{s}");
        }
        for s in [
            "If you want slimmer logs, pass the name of your own library.",
            "If you want a hexadecimal representation, use the built-in function hex.",
        ] {
            assert!(!claim(s).no_claim, "{s}");
        }
    }

    #[test]
    fn a_quantifier_of_another_class_is_a_changed_term() {
        let (a, m) = check(
            "The increment operation then builds up the count for only one letter.",
            "The increment operation then builds up the count for each letter.",
        );
        assert!(a.changed_term, "{m:?}");
        // The same class is a paraphrase.
        let (a, m) = check(
            "The increment operation then builds up the count for every letter.",
            "The increment operation then builds up the count for each letter.",
        );
        assert!(!a.changed_term, "{m:?}");
    }

    #[test]
    fn a_negating_prefix_makes_an_opposite() {
        for (c, p) in [
            (
                "Concurrent builds of partial indexes are unsupported.",
                "Concurrent builds of partial indexes are supported.",
            ),
            (
                "If the cache file is found to be valid, it is written again.",
                "If the cache file is found to be invalid, it is written again.",
            ),
        ] {
            let (a, m) = check(c, p);
            assert!(a.changed_term, "{c}: {m:?}");
            assert_ne!(a.verdict, Verdict::Supported);
        }
    }

    #[test]
    fn a_figure_in_the_place_of_another_is_a_mismatch_even_if_given_elsewhere() {
        let (a, m) = check(
            "Return 0 or 0 depending on whether ch is an alphabetic character.",
            "Return 1 or 0 depending on whether ch is an alphabetic character.",
        );
        assert!(a.number_mismatch, "{m:?}");
        let (a, m) = check(
            "Use mypy to check your typing under both Python 3 and Python 3.",
            "Use mypy to check your typing under both Python 2 and Python 3.",
        );
        assert!(a.number_mismatch, "{m:?}");
        // A unit changed with the number kept.
        let (a, m) = check(
            "The internal transaction ID type is 32 kilobytes wide.",
            "The internal transaction ID type is 32 bits wide.",
        );
        assert!(a.number_mismatch, "{m:?}");
    }

    #[test]
    fn another_subject_before_the_same_predicate_is_a_changed_term() {
        let (a, m) = check(
            "The source string provides substitution of new text for substrings that match patterns.",
            "The regexp_replace function provides substitution of new text for substrings that match patterns.",
        );
        assert!(a.changed_term, "{m:?}");
        assert_ne!(a.verdict, Verdict::Supported);
        // A dropped subject or a framing phrase is not another subject.
        let (a, m) = check(
            "In that case, request a bank transfer through the finance queue.",
            "The card has expired; then the agent requests a bank transfer through the finance queue.",
        );
        assert!(!a.changed_term, "{m:?}");
    }

    #[test]
    fn dotted_names_and_paths_are_identifiers() {
        for s in ["os.path", "lib/bar", "std::fs", "foo.bar"] {
            assert!(is_identifier(s), "{s}");
        }
        assert!(!is_identifier("e.g"));
        let (a, m) = check(
            "On Windows, executing stdin.seek from your build directory will run all regression tests.",
            "On Windows, executing :program:`rt.bat` from your build directory will run all regression tests.",
        );
        assert!(a.changed_term, "{m:?}");
    }

    #[test]
    fn negation_across_a_wrapped_line_counts() {
        let (a, m) = check(
            "Existing class instances will be updated to use the new class definition.",
            "If the\nmodule contains class definitions, existing class instances will *not* be\nupdated to use the new class definition.",
        );
        assert!(a.negation_mismatch, "{m:?}");
        let (a, m) = check(
            "The traceback is not only displayed if tracemalloc is tracing allocations.",
            "The traceback is only displayed if tracemalloc is tracing allocations.",
        );
        assert!(a.negation_mismatch, "{m:?}");
    }

    #[test]
    fn a_clause_mostly_not_carried_makes_the_sentence_partial() {
        let passage = "To start the database server as a standalone process, the command prompt must be run as an administrator.";
        let (a, m) = check(
            "To start the database server as a standalone process, the command prompt must be run as an administrator, and alternatively it can be given as a full path name.",
            passage,
        );
        assert_eq!(a.verdict, Verdict::Partial, "{m:?}");
    }
}
