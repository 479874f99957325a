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
//!   claim `unsupported` whatever its word overlap.
//! * `negation_mismatch`: the claim is aligned with the window by LCS; a negation (`not`,
//!   `never`, `no`, `n't` …) inside the aligned region of one side without one on the other
//!   makes the claim `unsupported`.
//! * `changed_term`: where the alignment has a gap of exactly one content word on each
//!   side, or any gap pairs a known opposite (minimum/maximum, before/after, all/some,
//!   enable/disable), and the two words are neither the same stem, nor fuzzy variants,
//!   nor on the synonym list, the claim is at best `partial`.
//! * `no_claim`: a sentence with no content words, a greeting or offer of help, a
//!   question, or a Markdown heading has nothing to check.

use std::borrow::Cow;
use std::cell::RefCell;
use std::collections::{HashMap, HashSet};
use std::ops::Range;
use std::sync::LazyLock;

use regex::Regex;

use crate::findings::{ChangedTerm, Verdict};
use crate::metrics::fuzzy::similarity_at_least;
use crate::metrics::rouge::LcsTable;
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

/// What lies between one token and the next: nothing but spaces and joiners, a clause
/// mark (comma, semicolon, colon, bracket, dash, line break), or the end of a sentence.
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
            } else if between.contains([',', ';', ':', '(', ')', '[', ']', '\n', '—', '–'])
                || between.contains(" - ")
            {
                Break::Clause
            } else {
                Break::None
            }
        })
        .collect()
}

/// The run of non-space characters around `range` of `text`, without the punctuation
/// that opens or closes a phrase: the compound a word is part of ("Tier2-Billing",
/// "max_connections").
fn compound_around(text: &str, range: Range<usize>) -> &str {
    let (Some(before), Some(after)) = (text.get(..range.start), text.get(range.end..)) else {
        return "";
    };
    let lo = before
        .char_indices()
        .rev()
        .find(|(_, c)| c.is_whitespace())
        .map_or(0, |(i, c)| i + c.len_utf8());
    let hi = range.end + after.find(char::is_whitespace).unwrap_or(after.len());
    let edge = |c: char| !(c.is_alphanumeric() || c == '_');
    text[lo..hi].trim_matches(edge)
}

/// Whether a compound reads as an identifier rather than a word: it mixes letters and
/// digits ("Tier2", "S2", "INC-2026-003"), holds an underscore ("work_mem"), or has a
/// capital inside a lower-case word ("getValue"). Such names are compared whole: one
/// for another is a changed term, never a paraphrase.
pub fn is_identifier(compound: &str) -> bool {
    let letters = compound.chars().any(char::is_alphabetic);
    let digits = compound.chars().any(|c| c.is_ascii_digit());
    let camel = compound
        .chars()
        .zip(compound.chars().skip(1))
        .any(|(a, b)| a.is_lowercase() && b.is_uppercase());
    letters && (digits || compound.contains('_') || camel)
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
        r"|(?:just )?(?:tell|let|show|send) me\b|if you (?:like|want|wish|prefer)\b|would you like\b",
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
    let no_claim =
        no_content || heading || question || CHATTER.is_match(trimmed) || LEAD_IN.is_match(trimmed);
    let refs: Vec<&Token> = tokens.iter().collect();
    let breaks = breaks_of(text, &refs, |_| false);
    let ident =
        tokens.iter().map(|t| t.figure.is_none() && identifier_at(text, t.start..t.end)).collect();
    Claim { tokens, breaks, ident, text: text.to_owned(), no_claim }
}

/// Negation cues (after normalisation, apostrophes are ASCII).
fn is_negation(word: &str) -> bool {
    matches!(
        word,
        "not"
            | "no"
            | "never"
            | "none"
            | "nothing"
            | "nobody"
            | "neither"
            | "nor"
            | "without"
            | "cannot"
            | "nowhere"
    ) || word.ends_with("n't")
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

/// Pairs of stems that are opposites: a swap is a changed term whatever the gap.
static OPPOSITES: LazyLock<HashSet<(String, String)>> = LazyLock::new(|| {
    let pairs = [
        ("minimum", "maximum"),
        ("min", "max"),
        ("before", "after"),
        ("above", "below"),
        ("over", "under"),
        ("more", "less"),
        ("more", "fewer"),
        ("most", "least"),
        ("increase", "decrease"),
        ("enable", "disable"),
        ("enabled", "disabled"),
        ("allow", "deny"),
        ("allow", "forbid"),
        ("permit", "prohibit"),
        ("include", "exclude"),
        ("always", "never"),
        ("all", "some"),
        ("all", "none"),
        ("every", "some"),
        ("any", "none"),
        ("each", "some"),
        ("first", "last"),
        ("earliest", "latest"),
        ("early", "late"),
        ("open", "close"),
        ("start", "end"),
        ("accept", "reject"),
        ("required", "optional"),
        ("mandatory", "optional"),
        ("higher", "lower"),
        ("highest", "lowest"),
        ("inside", "outside"),
        ("internal", "external"),
        ("public", "private"),
        ("upper", "lower"),
        ("add", "remove"),
        ("grant", "revoke"),
        ("pass", "fail"),
        ("true", "false"),
        ("import", "export"),
        ("input", "output"),
        ("encrypt", "decrypt"),
        ("lock", "unlock"),
        ("buy", "sell"),
        ("credit", "debit"),
        ("daily", "weekly"),
        ("weekly", "monthly"),
        ("monthly", "annually"),
        ("monthly", "yearly"),
        ("start", "stop"),
        ("increase", "reduce"),
        ("approve", "reject"),
        ("approved", "rejected"),
        ("valid", "invalid"),
        ("read", "write"),
        ("online", "offline"),
        ("automatic", "manual"),
        ("automatically", "manually"),
    ];
    let mut set = HashSet::new();
    for (a, b) in pairs {
        let (a, b) = (crate::text::stem::stem(a), crate::text::stem::stem(b));
        set.insert((a.clone(), b.clone()));
        set.insert((b, a));
    }
    set
});

/// Synonyms that may stand for each other without a changed-term flag (stems). A short
/// list of common paraphrases in policy and support text; extend it as reviews find more.
static SYNONYMS: LazyLock<HashSet<(String, String)>> = LazyLock::new(|| {
    let groups: &[&[&str]] = &[
        &["stay", "remain"],
        &["begin", "start", "commence"],
        &["end", "finish", "conclude"],
        &["buy", "purchase"],
        &["get", "receive", "obtain"],
        &["help", "assist", "support"],
        &["need", "require"],
        &["must", "shall"],
        &["allow", "permit", "let"],
        &["show", "display"],
        &["use", "utilise", "utilize"],
        &["big", "large"],
        &["small", "little"],
        &["quick", "fast", "rapid"],
        &["employee", "staff", "worker"],
        &["customer", "client"],
        &["choose", "select", "pick"],
        &["cancel", "terminate"],
        &["ask", "request"],
        &["give", "provide"],
        &["send", "submit"],
        &["check", "verify"],
        &["fix", "repair", "resolve"],
        &["mistake", "error"],
        &["often", "frequently"],
        &["maybe", "perhaps"],
        &["about", "approximately", "around", "roughly", "approx"],
        &["automatically", "automatic"],
        &["close", "shut"],
        &["call", "phone"],
        &["job", "role", "position"],
        &["pay", "payment"],
        &["refund", "reimburse"],
        &["within", "inside"],
        &["till", "until"],
        &["per", "each", "every"],
    ];
    let mut set = HashSet::new();
    for g in groups {
        for a in *g {
            for b in *g {
                if a != b {
                    set.insert((crate::text::stem::stem(a), crate::text::stem::stem(b)));
                }
            }
        }
    }
    set
});

/// Credit for a word whose listed synonym stands in the window.
const SYNONYM_CREDIT: f64 = 0.9;

fn is_synonym(a: &str, b: &str) -> bool {
    synonyms_of(a).contains(&term_id(b))
}

/// Whether two stems are listed opposites.
fn is_opposite(a: &Token, b: &Token) -> bool {
    static IDS: LazyLock<HashSet<(u32, u32)>> =
        LazyLock::new(|| OPPOSITES.iter().map(|(a, b)| (term_id(a), term_id(b))).collect());
    IDS.contains(&(a.id, b.id)) && OPPOSITES.contains(&(a.stem.clone(), b.stem.clone()))
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
        Scorer { claim, content, entries, claim_bigrams, has_figures, lcs, content_chars, memo }
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
        type Best = (usize, usize, usize, f64, f64, Vec<Token>, Vec<bool>);
        let mut best: Option<Best> = None;
        for c in list.items {
            let (units, text) = passage(c.tag);
            let (tokens, ends) = window_tokens(units, text, c.first, c.last, cache);
            let mut credit = c.credit;
            // Fuzzy credit for words the window lacks (spelling variants, typos).
            for (k, w) in self.content.iter().enumerate() {
                if credit[k] >= 1.0 || w.figure.is_some() {
                    continue;
                }
                let fuzzy = tokens
                    .iter()
                    .filter(|t| {
                        t.figure.is_none()
                            && !t.stop
                            && fuzzy_length_ok(self.content_chars[k], &w.text, &t.text)
                    })
                    .map(|t| self.memo.get(&w.text, &t.text))
                    .fold(0.0, f64::max);
                credit[k] = credit[k].max(fuzzy);
            }
            let coverage = mean(&credit);
            let score = score_of(coverage, c.bigram, c.order);
            let better = match &best {
                None => true,
                Some((_, bf, bl, bs, _, _, _)) => {
                    let margin = if c.last - c.first > bl - bf { 0.01 } else { 1e-12 };
                    score > bs + margin || (score > *bs - 1e-12 && c.last - c.first < bl - bf)
                }
            };
            if better {
                best = Some((c.tag, c.first, c.last, score, coverage, tokens, ends));
            }
        }
        let (tag, mut first, mut last, score, coverage, mut tokens, mut ends) = best?;
        let (units, text) = passage(tag);
        // A figure stated once near the window (a date in the line above, a version in
        // the section's first sentence) widens the window to take it in, if every
        // missing figure is within `WIDEN` sentences.
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
                (tokens, ends) = window_tokens(units, text, first, last, cache);
            }
        }
        let window: Vec<&Token> = tokens.iter().collect();
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

    /// [`similarity_at_least`] of the two words at this memo's threshold (0 below it).
    fn get(&self, a: &str, b: &str) -> f64 {
        let mut h: u64 = 0xcbf2_9ce4_8422_2325;
        for byte in a.bytes().chain([0xff]).chain(b.bytes()) {
            h ^= u64::from(byte);
            h = h.wrapping_mul(0x0100_0000_01b3);
        }
        if let Some(&v) = self.map.borrow().get(&h) {
            return v;
        }
        let v = similarity_at_least(a, b, self.threshold);
        self.map.borrow_mut().insert(h, v);
        v
    }

    /// Whether the words are similar at `threshold` (at least this memo's).
    fn at(&self, a: &str, b: &str, threshold: f64) -> bool {
        let v = self.get(a, b);
        v > 0.0 && v >= threshold
    }
}

/// Most sentences a window is widened by to take in a figure of the claim.
const WIDEN: usize = 4;

/// Sentence tokens by the address of the text they are in and their byte range: a cache
/// that may live as long as the texts (one answer's check), shared by its claims.
pub type TokenCache = HashMap<(usize, usize, usize), Vec<Token>>;

/// The tokens of units `first..=last` of a passage (ranges in its text), and for each
/// whether it ends a sentence. Each unit is tokenised once per cache.
fn window_tokens(
    units: &[Unit<'_>],
    text: &str,
    first: usize,
    last: usize,
    cache: &mut TokenCache,
) -> (Vec<Token>, Vec<bool>) {
    let mut tokens: Vec<Token> = Vec::new();
    let mut ends: Vec<bool> = Vec::new();
    for unit in units.iter().take(last + 1).skip(first) {
        let key = (text.as_ptr() as usize, unit.range.start, unit.range.end);
        let toks = cache.entry(key).or_insert_with(|| {
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
        tokens.extend(toks.iter().cloned());
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
    scorer.best(list, |_| (units, text), &mut TokenCache::new()).map(|(_, m)| m)
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
    let missing_figures: Vec<String> = claim
        .tokens
        .iter()
        .filter_map(|t| t.figure.as_ref())
        .filter(|f| !window.iter().any(|w| w.figure.as_ref().is_some_and(|g| f.is_carried_by(g))))
        .map(ToString::to_string)
        .collect();

    // Which claim tokens the window carries: the same stem, a listed synonym, the same
    // figure, or (for words the window lacks exactly) a fuzzy variant.
    let window_stems: HashSet<&str> = window.iter().map(|w| w.stem.as_str()).collect();
    let window_ids: HashSet<u32> = window.iter().map(|w| w.id).collect();
    let carried: Vec<bool> = claim
        .tokens
        .iter()
        .map(|c| match &c.figure {
            Some(f) => window.iter().any(|w| w.figure.as_ref().is_some_and(|g| f.is_carried_by(g))),
            None => {
                window_stems.contains(c.stem.as_str())
                    || synonyms_of(&c.stem).iter().any(|id| window_ids.contains(id))
                    || (!c.stop && {
                        let chars = c.text.chars().count();
                        window.iter().any(|w| {
                            w.figure.is_none()
                                && !w.stop
                                && fuzzy_length_ok(chars, &c.text, &w.text)
                                && memo.get(&c.text, &w.text) > 0.0
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
        .filter(|w| {
            w.is_content()
                && (claim_stems.contains(w.stem.as_str())
                    || w.figure.as_ref().is_some_and(|g| {
                        claim
                            .tokens
                            .iter()
                            .any(|c| c.figure.as_ref().is_some_and(|f| f.is_carried_by(g)))
                    })
                    || (w.figure.is_none()
                        && fuzzy_claim.iter().any(|c| {
                            fuzzy_length_ok(c.text.chars().count(), &c.text, &w.text)
                                && memo.get(&c.text, &w.text) > 0.0
                        })))
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
    let (negation_mismatch, changed) = align_checks(&a, &b, memo);
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
    }
}

/// LCS alignment of claim and window stems: the matched index pairs.
fn align(a: &[&Token], b: &[&Token], memo: &FuzzyMemo) -> Vec<(usize, usize)> {
    let (n, m) = (a.len(), b.len());
    let fuzzy = memo.threshold.max(0.9);
    // Which pairs match, decided once (the table and the walk back both ask). Fuzzy
    // matches are only sought between words that have no exact partner on the other
    // side: a word present in both is aligned by its exact occurrence.
    let ids_a: HashSet<u32> = a.iter().map(|t| t.id).collect();
    let ids_b: HashSet<u32> = b.iter().map(|t| t.id).collect();
    let mut eq = vec![false; n * m];
    let b_fuzzy: Vec<bool> =
        b.iter().map(|y| y.figure.is_none() && !y.stop && !ids_a.contains(&y.id)).collect();
    for (i, x) in a.iter().enumerate() {
        let x_fuzzy = x.figure.is_none() && !x.stop && !ids_b.contains(&x.id);
        let chars = if x_fuzzy { x.text.chars().count() } else { 0 };
        for (j, y) in b.iter().enumerate() {
            eq[i * m + j] = (x.id == y.id && x.stem == y.stem)
                || (x.figure.is_some() && y.figure.is_some() && x.text == y.text)
                || (x_fuzzy
                    && b_fuzzy[j]
                    && fuzzy_length_ok(chars, &x.text, &y.text)
                    && memo.at(&x.text, &y.text, fuzzy));
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
fn is_cue(toks: &[&Token], k: usize) -> bool {
    let w = toks[k].text.as_str();
    if !is_negation(w) {
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
    if w == "not" && next == Some("only") {
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
    if side.brk[k] != Break::None {
        return end..end;
    }
    while end < side.toks.len() && end - k <= 6 {
        end += 1;
        if side.brk[end - 1] != Break::None {
            break;
        }
    }
    k + 1..end
}

/// Negation cues of a side with their scopes.
fn cues(side: &Side<'_>) -> Vec<(usize, Range<usize>)> {
    (0..side.toks.len()).filter(|&k| is_cue(&side.toks, k)).map(|k| (k, scope(side, k))).collect()
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

/// Longest gap looked at before the first or after the last aligned word.
const EDGE: usize = 2;

fn align_checks(a: &Side<'_>, b: &Side<'_>, memo: &FuzzyMemo) -> (bool, Vec<ChangedTerm>) {
    let pairs = align(&a.toks, &b.toks, memo);
    let mut changed = Vec::new();
    if pairs.is_empty() {
        return (false, changed);
    }
    let negation_mismatch = polarity_differs(a, b, &pairs);

    // Substitutions are sought only where the alignment is tight: between two aligned
    // words of one window sentence with a short gap on each side, or just before (after)
    // a run of two aligned words. Scattered single matches across sentences would
    // otherwise pair words that merely happen to stand near each other.
    let (n, m) = (a.toks.len(), b.toks.len());
    let mut gaps: Vec<(Range<usize>, Range<usize>, usize)> = Vec::new();
    let (a0, b0) = pairs[0];
    if pairs.len() >= 2 && pairs[1] == (a0 + 1, b0 + 1) {
        let gb = b0.saturating_sub(2)..b0;
        if !crosses_sentence(b, gb.start, b0) {
            gaps.push((a0.saturating_sub(2)..a0, gb, EDGE));
        }
    }
    for w in pairs.windows(2) {
        let ((i1, j1), (i2, j2)) = (w[0], w[1]);
        if !crosses_sentence(b, j1, j2) {
            gaps.push((i1 + 1..i2, j1 + 1..j2, 6));
        }
    }
    let (a1, b1) = pairs[pairs.len() - 1];
    if pairs.len() >= 2 && pairs[pairs.len() - 2] == (a1 - 1, b1 - 1) {
        let gb = b1 + 1..(b1 + 3).min(m);
        if !crosses_sentence(b, b1, gb.end.saturating_sub(1)) {
            gaps.push((a1 + 1..(a1 + 3).min(n), gb, EDGE));
        }
    }
    for (ga, gb, most) in gaps {
        let (ga_len, gb_len) = (ga.len(), gb.len());
        if ga_len == 0 || gb_len == 0 || ga_len > most || gb_len > most {
            continue;
        }
        let ca: Vec<usize> = ga.filter(|&k| is_alignable_content(a.toks[k])).collect();
        let cb: Vec<usize> = gb.filter(|&k| is_alignable_content(b.toks[k])).collect();
        if ca.is_empty() || cb.is_empty() {
            continue;
        }
        let mut found = false;
        for &x in &ca {
            for &y in &cb {
                if is_opposite(a.toks[x], b.toks[y]) {
                    changed.push(ChangedTerm { claim: a.shown(x), evidence: b.shown(y) });
                    found = true;
                }
            }
        }
        if found {
            continue;
        }
        // One identifier for another ("Tier2-Billing" where the source has
        // "Tier2-Dispatch"), whatever else the gap holds.
        let ia: Vec<usize> = ca.iter().copied().filter(|&k| a.ident[k]).collect();
        let ib: Vec<usize> = cb.iter().copied().filter(|&k| b.ident[k]).collect();
        if ia.len() == 1 && ib.len() == 1 && a.toks[ia[0]].stem != b.toks[ib[0]].stem {
            changed.push(ChangedTerm { claim: a.shown(ia[0]), evidence: b.shown(ib[0]) });
            continue;
        }
        // A one-for-one swap in a short gap counts only between words of one class:
        // two content words, or two quantifier/relation words ("after" for "date" is
        // rephrasing, not a swap).
        // Not at the edges, where sentences often open or close differently ("In that
        // case, request" for "then the agent requests").
        if most != EDGE && ca.len() == 1 && cb.len() == 1 && ga_len <= 3 && gb_len <= 3 {
            let (x, y) = (a.toks[ca[0]], b.toks[cb[0]]);
            let related = x.stem == y.stem
                || is_synonym(&x.stem, &y.stem)
                || memo.get(&x.text, &y.text) > 0.0;
            if x.stop == y.stop && !related {
                changed.push(ChangedTerm { claim: a.shown(ca[0]), evidence: b.shown(cb[0]) });
            }
        }
    }
    changed.dedup();
    (negation_mismatch, changed)
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
/// Matched consecutive content words that make an unsupported-scoring claim partial.
const CARRIED_RUN: usize = 4;
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
        && m.unmatched_run >= JOINED_RUN
        && m.unmatched_run * 4 >= content
    {
        // A clause of its own that the window does not carry, joined to one it does.
        verdict = Verdict::Partial;
    } else if verdict == Verdict::Unsupported
        && m.matched_run >= CARRIED_RUN
        && m.matched_run * 3 >= content
    {
        // A clause the window carries word for word, joined to one it does not.
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
        assert_eq!(m.missing_figures, ["54 day"]);
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
}
