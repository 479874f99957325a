//! The edits that turn a sentence of the store into an answer sentence of known class.
//!
//! Every function takes the sentence as an answer would restate it ([`crate::corpus::render`]:
//! one line, reST markup rendered) and returns the edited sentence with a short note of
//! what changed, or `None` where the edit does not apply or cannot be made safely. The
//! word lists are this benchmark's own, written for the vocabulary of technical manuals;
//! they do not come from plumbline (the checker has its own synonym and opposite lists,
//! and the benchmark must not be built from the answer key it is testing).
//!
//! Two rules keep the labels honest:
//!
//! * an edit that is meant to keep the meaning (light edits, heavy paraphrase) must leave
//!   every figure, every negation and every identifier of the sentence as it was
//!   ([`keeps_meaning`]); otherwise it is refused;
//! * an edit that is meant to change the meaning must change exactly the thing its class
//!   names: a figure's value (never only its spelling), the polarity (a sentence with
//!   no negation gets one; one with exactly one loses it), one word for its opposite in
//!   the sense the list gives, one identifier for another of the same shape from the same
//!   page, one unit for another of the same dimension with the number kept.

use std::sync::LazyLock;

use regex::Regex;

use crate::rng::Rng;

/// An edited sentence.
#[derive(Debug, Clone, PartialEq)]
pub struct Edit {
    pub text: String,
    /// What was changed, for the reader of the failure examples (`"45 → 54"`).
    pub detail: String,
    /// Sub-kind of the edit (`synonym`, `reorder`, `integer`, …).
    pub kind: String,
}

fn re(p: &str) -> Regex {
    Regex::new(p).unwrap_or_else(|e| panic!("pattern {p}: {e}"))
}

/// `\bphrase\b` (ASCII word boundaries), compiled once per thread and kept: a cloned
/// `Regex` would start with an empty cache on every call.
fn word_pattern(phrase: &str) -> &'static Regex {
    thread_local! {
        static CACHE: std::cell::RefCell<std::collections::HashMap<String, &'static Regex>> =
            std::cell::RefCell::new(std::collections::HashMap::new());
    }
    CACHE.with(|c| {
        if let Some(r) = c.borrow().get(phrase) {
            return *r;
        }
        let r: &'static Regex =
            Box::leak(Box::new(re(&format!(r"(?-u:\b){}(?-u:\b)", regex::escape(phrase)))));
        c.borrow_mut().insert(phrase.to_owned(), r);
        r
    })
}

// ---------------------------------------------------------------------------------------
// Words

/// Byte spans of the words of `s` (letters, digits, `'`, `_`, `-`, `.` inside a word).
fn words(s: &str) -> Vec<(usize, usize)> {
    static W: LazyLock<Regex> = LazyLock::new(|| re(r"[A-Za-z0-9_]+(?:['’.\-/][A-Za-z0-9_]+)*"));
    W.find_iter(s).map(|m| (m.start(), m.end())).collect()
}

/// Whether the word at `a..b` is plain prose: letters only, lower-case (or capitalised
/// as the first word), and not glued to code-like neighbours.
fn is_prose_word(s: &str, a: usize, b: usize) -> bool {
    let w = &s[a..b];
    let lower = w.chars().all(|c| c.is_ascii_lowercase());
    let cap = a == 0
        && w.chars().next().is_some_and(|c| c.is_ascii_uppercase())
        && w.chars().skip(1).all(|c| c.is_ascii_lowercase());
    if !(lower || cap) {
        return false;
    }
    let before = s[..a].chars().next_back();
    let after = s[b..].chars().next();
    let ok_before = before.is_none_or(|c| c == ' ' || c == '(' || c == '“' || c == '‘');
    let ok_after = after.is_none_or(|c| " ,;:)”’".contains(c) || c == '.');
    let dot_ok = !(after == Some('.') && s[b + 1..].chars().next().is_some_and(|c| c != ' '));
    ok_before && ok_after && dot_ok
}

/// Replaces `a..b` of `s` with `with`, keeping a capital first letter.
fn replace_at(s: &str, a: usize, b: usize, with: &str) -> String {
    let orig = &s[a..b];
    let with = if orig.chars().next().is_some_and(|c| c.is_ascii_uppercase()) {
        capitalise(with)
    } else {
        with.to_owned()
    };
    format!("{}{}{}", &s[..a], with, &s[b..])
}

pub fn capitalise(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().collect::<String>() + c.as_str(),
        None => String::new(),
    }
}

/// Capitalised words that are names and keep their capital anywhere.
const NAMES: &[&str] = &[
    "Python", "Unix", "Windows", "Linux", "Mac", "Perl", "Tcl", "Java", "Postgres", "English",
    "Unicode", "Boolean", "I",
];

/// `s` with its first letter lower-cased where the first word is a plain capitalised
/// word (not a name, an acronym or an identifier).
fn decapitalise(s: &str) -> String {
    let first = s.split([' ', ',']).next().unwrap_or("");
    let plain = first.chars().next().is_some_and(|c| c.is_ascii_uppercase())
        && first.chars().skip(1).all(|c| c.is_ascii_lowercase())
        && first.len() > 1;
    if plain && !NAMES.contains(&first) {
        let mut c = s.chars();
        match c.next() {
            Some(f) => f.to_lowercase().collect::<String>() + c.as_str(),
            None => String::new(),
        }
    } else {
        s.to_owned()
    }
}

/// Negation cues, counted on words (`n't` contractions, `cannot`, `not`, `no`, `never`, …).
pub fn negations(s: &str) -> usize {
    words(s)
        .iter()
        .map(|&(a, b)| s[a..b].to_lowercase().replace('’', "'"))
        .filter(|w| {
            matches!(
                w.as_str(),
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
            ) || w.ends_with("n't")
        })
        .count()
}

/// Digit runs of `s`, in order.
fn digit_runs(s: &str) -> Vec<String> {
    static D: LazyLock<Regex> = LazyLock::new(|| re(r"[0-9]+"));
    D.find_iter(s).map(|m| m.as_str().to_owned()).collect()
}

/// Identifier-shaped tokens (snake_case, dotted names, CamelCase, ALL CAPS), sorted.
fn identifier_tokens(s: &str) -> Vec<String> {
    let mut v: Vec<String> = IDENT_KINDS
        .iter()
        .flat_map(|(_, r)| r.find_iter(s).map(|m| m.as_str().to_owned()).collect::<Vec<_>>())
        .collect();
    v.sort();
    v
}

/// Whether an edit left every figure, negation and identifier as it was.
pub fn keeps_meaning(before: &str, after: &str) -> bool {
    before != after
        && digit_runs(before) == digit_runs(after)
        && negations(before) == negations(after)
        && identifier_tokens(before) == identifier_tokens(after)
}

// ---------------------------------------------------------------------------------------
// Light edits: synonyms, dropped modifiers, clause reordering, inflection, contractions

/// Single-word synonyms that keep the meaning in technical prose, by exact form. Pairs
/// listed once apply in both directions; `>` marks one direction only (the other form
/// is also a noun or a term of art).
const SYNONYMS: &[(&str, &str, bool)] = &[
    ("allows", "permits", true),
    ("allow", "permit", true),
    ("allowed", "permitted", true),
    ("allowing", "permitting", true),
    ("requires", "needs", true),
    ("require", "need", false),
    ("required", "needed", true),
    ("shows", "displays", true),
    ("shown", "displayed", true),
    ("usually", "typically", true),
    ("normally", "usually", false),
    ("often", "frequently", true),
    ("quickly", "rapidly", true),
    ("therefore", "thus", true),
    ("several", "multiple", false),
    ("entire", "whole", true),
    ("currently", "presently", true),
    ("approximately", "roughly", true),
    ("additional", "extra", false),
    ("modify", "change", false),
    ("modifies", "changes", false),
    ("modified", "changed", false),
    ("modifying", "changing", false),
    ("determines", "decides", false),
    ("ensures", "guarantees", false),
    ("ensure", "guarantee", false),
    ("large", "big", true),
    ("larger", "bigger", true),
    ("choose", "pick", true),
    ("chooses", "picks", true),
    ("useful", "helpful", true),
    ("necessary", "required", false),
    ("provides", "supplies", false),
    ("describes", "explains", true),
    ("described", "explained", true),
    ("mostly", "largely", true),
    ("mainly", "chiefly", true),
    ("commonly", "frequently", false),
    ("immediately", "instantly", true),
    ("begins", "starts", true),
    ("begin", "start", false),
    ("receives", "gets", false),
    ("obtain", "get", false),
    ("perhaps", "maybe", true),
    ("simple", "straightforward", false),
    ("because", "since", false),
    ("prevents", "stops", false),
    ("suitable", "appropriate", true),
    ("various", "different", false),
    ("whole", "complete", false),
    ("illustrates", "demonstrates", true),
];

/// Phrases with a plain equivalent (one direction).
const PHRASES: &[(&str, &str)] = &[
    ("in order to", "to"),
    ("is able to", "can"),
    ("are able to", "can"),
    ("a number of", "several"),
    ("prior to", "before"),
    ("as well as", "and"),
    ("makes use of", "uses"),
    ("make use of", "use"),
    ("in addition to", "besides"),
    ("at the same time", "simultaneously"),
    ("for instance", "for example"),
    ("due to", "because of"),
    ("is used to", "serves to"),
    ("in the case of", "for"),
    ("with respect to", "regarding"),
    ("it is possible to", "one can"),
    ("is responsible for", "handles"),
];

/// Sentence openers whose removal leaves the claim as it was.
const OPENERS: &[&str] = &[
    "However, ",
    "Therefore, ",
    "Thus, ",
    "Also, ",
    "In addition, ",
    "Furthermore, ",
    "Moreover, ",
    "Note that ",
    "Of course, ",
    "In fact, ",
    "Similarly, ",
    "Likewise, ",
    "Consequently, ",
    "Hence, ",
    "Again, ",
    "Finally, ",
    "Additionally, ",
    "Note, however, that ",
    "Of course ",
    "Accordingly, ",
];

/// Intensifiers and fillers whose removal leaves the claim as it was.
/// ("very" and "quite" are not here: "very short rows" are not all short rows.)
const FILLERS: &[&str] = &["really", "simply", "also", "actually", "indeed", "certainly"];

fn synonym(s: &str, avoid: &[String], rng: &mut Rng) -> Option<Edit> {
    let lower = s.to_lowercase();
    let mut options: Vec<(usize, usize, String)> = Vec::new();
    for &(a, b) in PHRASES {
        let pat = word_pattern(a);
        for m in pat.find_iter(&lower) {
            if !avoid.iter().any(|w| a.split(' ').any(|x| x == w)) {
                options.push((m.start(), m.end(), b.to_owned()));
            }
        }
    }
    for (a, b) in words(s) {
        if !is_prose_word(s, a, b) {
            continue;
        }
        let w = s[a..b].to_lowercase();
        if avoid.contains(&w) {
            continue;
        }
        let prev = s[..a].trim_end().rsplit(' ').next().unwrap_or("").to_lowercase();
        let next = s[b..].trim_start().split(' ').next().unwrap_or("").to_lowercase();
        if w == "because" && next == "of" {
            continue; // "because of" is a preposition; "since of" is not English
        }
        for &(x, y, both) in SYNONYMS {
            if w == x && !(x == "whole" && prev == "the") {
                options.push((a, b, y.to_owned()));
            } else if both && w == y {
                options.push((a, b, x.to_owned()));
            }
        }
    }
    if options.is_empty() {
        return None;
    }
    let (a, b, with) = options[rng.below(options.len())].clone();
    let text = replace_at(s, a, b, &with);
    Some(Edit { detail: format!("{} → {}", &s[a..b], with), text, kind: "synonym".into() })
}

fn drop_modifier(s: &str, rng: &mut Rng) -> Option<Edit> {
    let mut options: Vec<(String, String)> = Vec::new();
    for o in OPENERS {
        if let Some(rest) = s.strip_prefix(o) {
            options.push((capitalise(rest), o.trim().to_owned()));
        }
    }
    for (a, b) in words(s) {
        let w = &s[a..b];
        if a > 0 && FILLERS.contains(&w) && is_prose_word(s, a, b) && s[b..].starts_with(' ') {
            options.push((format!("{}{}", &s[..a], &s[b + 1..]), w.to_owned()));
        }
    }
    // A short parenthetical aside without figures or negation.
    static PAREN: LazyLock<Regex> = LazyLock::new(|| re(r" \(([^()]{3,60})\)"));
    for c in PAREN.captures_iter(s) {
        let inner = &c[1];
        let m = c.get(0).expect("whole match");
        // "a tuple of (data, address)": the parenthesis is the object, not an aside.
        let prev = s[..m.start()].rsplit(' ').next().unwrap_or("").to_lowercase();
        const GOVERNING: &[&str] = &[
            "of", "a", "an", "the", "to", "for", "with", "by", "in", "on", "from", "as", "is",
            "are", "be", "and", "or", "returns", "return", "contains", "named", "called",
        ];
        if GOVERNING.contains(&prev.as_str()) {
            continue;
        }
        if !inner.chars().any(|x| x.is_ascii_digit())
            && negations(inner) == 0
            && inner.split(' ').count() <= 8
            && identifier_tokens(inner).is_empty()
        {
            options.push((format!("{}{}", &s[..m.start()], &s[m.end()..]), format!("({inner})")));
        }
    }
    if options.is_empty() {
        return None;
    }
    let (text, what) = options[rng.below(options.len())].clone();
    Some(Edit { text, detail: format!("dropped {what}"), kind: "drop".into() })
}

const SUBORDINATORS: &[&str] = &[
    "If", "When", "Although", "Because", "Since", "Unless", "While", "Once", "Whenever", "After",
    "Before", "Where",
];

/// Words that open a clause of their own: a clause moved past one of them could attach
/// to it instead of the main clause, and the meaning would change.
const CLAUSE_WORDS: &[&str] = &[
    "that", "which", "who", "whom", "whose", "where", "when", "while", "if", "unless", "because",
    "since", "so", "whether", "although", "though", "until", "after", "before", "once", "as",
    "than", "and", "or", "but",
];

fn has_clause_word(s: &str) -> bool {
    s.split(' ').any(|w| {
        CLAUSE_WORDS
            .contains(&w.trim_matches(|c: char| !c.is_alphanumeric()).to_lowercase().as_str())
    })
}

fn reorder(s: &str, _rng: &mut Rng) -> Option<Edit> {
    let body = s.strip_suffix('.')?;
    // "only" scopes over the clause it stands in; moving a clause past it moves the scope.
    if body.contains(';') || body.contains(':') || body.contains('(') || body.contains(" only ") {
        return None;
    }
    let first = body.split(' ').next()?;
    if SUBORDINATORS.contains(&first) && body.matches(", ").count() == 1 {
        let (sub, main) = body.split_once(", ")?;
        let main = main.strip_prefix("then ").unwrap_or(main);
        let clause = sub[first.len()..].trim();
        if main.split(' ').count() < 3
            || clause.split(' ').count() < 2
            || has_clause_word(main)
            || has_clause_word(clause)
        {
            return None;
        }
        let text = format!("{} {} {}.", capitalise(main), first.to_lowercase(), clause);
        return Some(Edit {
            text,
            detail: format!("moved the \"{}\" clause to the end", first.to_lowercase()),
            kind: "reorder".into(),
        });
    }
    // "Y if X." → "If X, y."
    if !body.contains(',') && body.matches(" if ").count() == 1 {
        let (main, cond) = body.split_once(" if ")?;
        let last = main.rsplit(' ').next().unwrap_or("");
        if ["even", "as", "only", "and", "or", "whether", "not"].contains(&last)
            || main.split(' ').count() < 3
            || cond.split(' ').count() < 3
            || has_clause_word(main)
            || has_clause_word(cond)
        {
            return None;
        }
        let text = format!("If {}, {}.", cond, decapitalise(main));
        return Some(Edit {
            text,
            detail: "moved the \"if\" clause to the front".into(),
            kind: "reorder".into(),
        });
    }
    None
}

/// Third-person verbs and their base forms, for "returns" → "will return" and
/// "returns" → "does not return".
const VERBS: &[(&str, &str)] = &[
    ("returns", "return"),
    ("creates", "create"),
    ("removes", "remove"),
    ("contains", "contain"),
    ("causes", "cause"),
    ("produces", "produce"),
    ("raises", "raise"),
    ("prints", "print"),
    ("accepts", "accept"),
    ("ignores", "ignore"),
    ("stores", "store"),
    ("writes", "write"),
    ("reads", "read"),
    ("generates", "generate"),
    ("converts", "convert"),
    ("deletes", "delete"),
    ("allocates", "allocate"),
    ("affects", "affect"),
    ("applies", "apply"),
    ("occurs", "occur"),
    ("fails", "fail"),
    ("succeeds", "succeed"),
    ("waits", "wait"),
    ("acquires", "acquire"),
    ("replaces", "replace"),
    ("executes", "execute"),
    ("evaluates", "evaluate"),
    ("compares", "compare"),
    ("sends", "send"),
    ("receives", "receive"),
    ("becomes", "become"),
    ("remains", "remain"),
    ("treats", "treat"),
    ("interprets", "interpret"),
    ("uses", "use"),
    ("supports", "support"),
    ("allows", "allow"),
    ("requires", "require"),
    ("includes", "include"),
    ("provides", "provide"),
    ("prevents", "prevent"),
    ("controls", "control"),
    ("specifies", "specify"),
    ("determines", "determine"),
    ("defines", "define"),
    ("means", "mean"),
    ("takes", "take"),
    ("makes", "make"),
    ("reports", "report"),
    ("displays", "display"),
    ("matches", "match"),
    ("needs", "need"),
    ("has", "have"),
];

/// Third-person verbs that are as often plural nouns ("writes", "reads", "means"): left
/// alone by the tense change, which cannot tell the two apart.
const HOMOGRAPHS: &[&str] = &[
    "writes", "reads", "reports", "stores", "means", "needs", "matches", "displays", "controls",
    "uses", "changes", "releases", "returns", "takes", "makes", "waits", "sends", "causes",
];

fn inflect(s: &str, _rng: &mut Rng) -> Option<Edit> {
    let ws = words(s);
    for (k, &(a, b)) in ws.iter().enumerate() {
        if k == 0 || !is_prose_word(s, a, b) {
            continue;
        }
        let w = &s[a..b];
        if w == "has" {
            continue; // "has" is often an auxiliary ("has been")
        }
        let prev = &s[ws[k - 1].0..ws[k - 1].1];
        if ["to", "and", "or", "the", "a", "an", "which", "not"]
            .contains(&prev.to_lowercase().as_str())
        {
            continue;
        }
        let next = ws.get(k + 1).map(|&(x, y)| s[x..y].to_lowercase()).unwrap_or_default();
        if HOMOGRAPHS.contains(&w) || next == "of" || next == "and" || next == "or" {
            continue; // "to issue writes of …": a noun
        }
        if let Some(&(_, base)) = VERBS.iter().find(|(v, _)| *v == w) {
            let text = replace_at(s, a, b, &format!("will {base}"));
            return Some(Edit {
                detail: format!("{w} → will {base}"),
                text,
                kind: "inflect".into(),
            });
        }
    }
    None
}

const CONTRACTIONS: &[(&str, &str)] = &[
    ("does not", "doesn't"),
    ("do not", "don't"),
    ("is not", "isn't"),
    ("are not", "aren't"),
    ("cannot", "can't"),
    ("will not", "won't"),
    ("was not", "wasn't"),
    ("should not", "shouldn't"),
    ("would not", "wouldn't"),
    ("has not", "hasn't"),
    ("have not", "haven't"),
    ("could not", "couldn't"),
    ("it is", "it's"),
    ("It is", "It's"),
    ("there is", "there's"),
    ("There is", "There's"),
];

fn contract(s: &str, avoid: &[String], rng: &mut Rng) -> Option<Edit> {
    let mut options = Vec::new();
    for &(long, short) in CONTRACTIONS {
        let pat = word_pattern(long);
        for m in pat.find_iter(s) {
            if !avoid.iter().any(|w| long.split(' ').any(|x| x == w)) {
                options.push((m.start(), m.end(), short, long));
            }
        }
        let pat = word_pattern(short);
        for m in pat.find_iter(s) {
            if !avoid.iter().any(|w| w == short) {
                options.push((m.start(), m.end(), long, short));
            }
        }
    }
    if options.is_empty() {
        return None;
    }
    let (a, b, with, was) = options[rng.below(options.len())];
    let text = format!("{}{}{}", &s[..a], with, &s[b..]);
    Some(Edit { text, detail: format!("{was} → {with}"), kind: "contraction".into() })
}

/// The light edits, by name.
pub const LIGHT_KINDS: &[&str] = &["synonym", "drop", "reorder", "inflect", "contraction"];

fn light_by_kind(kind: &str, s: &str, avoid: &[String], rng: &mut Rng) -> Option<Edit> {
    match kind {
        "synonym" => synonym(s, avoid, rng),
        "drop" => drop_modifier(s, rng),
        "reorder" => reorder(s, rng),
        "inflect" => inflect(s, rng),
        "contraction" => contract(s, avoid, rng),
        _ => None,
    }
}

/// The words an edit brought in (lower-case), so that a later edit leaves them alone.
fn introduced(before: &str, after: &str) -> Vec<String> {
    let lw = |t: &str| {
        t.split(|c: char| !c.is_alphanumeric() && c != '\'')
            .filter(|w| !w.is_empty())
            .map(str::to_lowercase)
            .collect::<Vec<_>>()
    };
    let old = lw(before);
    lw(after).into_iter().filter(|w| !old.contains(w)).collect()
}

/// One light edit of a kind that applies, chosen at random; refused unless it keeps the
/// meaning.
pub fn light_edit(s: &str, rng: &mut Rng) -> Option<Edit> {
    let mut kinds = LIGHT_KINDS.to_vec();
    rng.shuffle(&mut kinds);
    for k in kinds {
        if let Some(e) = light_by_kind(k, s, &[], rng) {
            if keeps_meaning(s, &e.text) {
                return Some(e);
            }
        }
    }
    None
}

/// Several edits at once (at least three, of at least two kinds), meaning kept.
pub fn heavy_paraphrase(s: &str, rng: &mut Rng) -> Option<Edit> {
    let mut text = s.to_owned();
    let mut done: Vec<Edit> = Vec::new();
    let mut plan: Vec<&str> =
        vec!["reorder", "synonym", "synonym", "synonym", "drop", "drop", "inflect", "contraction"];
    rng.shuffle(&mut plan);
    // Reordering first keeps the other edits' positions meaningful.
    plan.sort_by_key(|k| *k != "reorder");
    let mut avoid: Vec<String> = Vec::new();
    for k in plan {
        if let Some(e) = light_by_kind(k, &text, &avoid, rng) {
            if keeps_meaning(&text, &e.text) {
                avoid.extend(introduced(&text, &e.text));
                text = e.text.clone();
                done.push(e);
            }
        }
    }
    let mut kinds: Vec<&str> = done.iter().map(|e| e.kind.as_str()).collect();
    kinds.sort();
    kinds.dedup();
    if done.len() < 3 || kinds.len() < 2 || !keeps_meaning(s, &text) {
        return None;
    }
    let detail = done.iter().map(|e| e.detail.clone()).collect::<Vec<_>>().join("; ");
    Some(Edit { text, detail, kind: format!("{} edits", done.len()) })
}

// ---------------------------------------------------------------------------------------
// Figures and units

/// Units by dimension; a unit changes only to another of its dimension and number.
const UNIT_GROUPS: &[&[&str]] = &[
    &[
        "microseconds",
        "milliseconds",
        "seconds",
        "minutes",
        "hours",
        "days",
        "weeks",
        "months",
        "years",
    ],
    &["microsecond", "millisecond", "second", "minute", "hour", "day", "week", "month", "year"],
    &["bytes", "kilobytes", "megabytes", "gigabytes", "terabytes", "bits"],
    &["byte", "kilobyte", "megabyte", "gigabyte", "terabyte", "bit"],
    &["kB", "MB", "GB", "TB"],
    &["KiB", "MiB", "GiB", "TiB"],
    &["ms", "s", "min", "h"],
];

fn unit_group(u: &str) -> Option<&'static [&'static str]> {
    let u = if u == "KB" { "kB" } else { u };
    UNIT_GROUPS.iter().copied().find(|g| g.contains(&u))
}

/// A number standing alone in prose (not part of a name like `UTF-8`, `int4`, `x86_64`),
/// with what follows it.
struct NumberAt {
    start: usize,
    end: usize,
    /// `%` or a unit glued to the number (`32MB`).
    suffix: String,
}

fn numbers(s: &str) -> Vec<NumberAt> {
    static N: LazyLock<Regex> =
        LazyLock::new(|| re(r"[0-9]{1,3}(?:,[0-9]{3})+(?:\.[0-9]+)?|[0-9]+(?:\.[0-9]+)*"));
    let mut out = Vec::new();
    for m in N.find_iter(s) {
        let before = s[..m.start()].chars().next_back();
        if before.is_some_and(|c| c.is_alphanumeric() || "_-./:'’#".contains(c)) {
            continue;
        }
        let rest = &s[m.end()..];
        let suffix: String = if rest.starts_with('%') {
            "%".into()
        } else {
            rest.chars().take_while(|c| c.is_ascii_alphabetic()).collect()
        };
        if !suffix.is_empty() && suffix != "%" && !GLUED_UNITS.contains(&suffix.as_str()) {
            continue;
        }
        let after = rest[suffix.len()..].chars().next();
        let after2 = rest[suffix.len()..].chars().nth(1);
        let ok_after = match after {
            None => true,
            Some('.') => after2.is_none_or(|c| c == ' '),
            Some(c) => " ,;)”’".contains(c),
        };
        if ok_after {
            out.push(NumberAt { start: m.start(), end: m.end(), suffix });
        }
    }
    out
}

/// Units written glued to their number (`32MB`, `200ms`).
const GLUED_UNITS: &[&str] = &["kB", "KB", "MB", "GB", "TB", "KiB", "MiB", "GiB", "TiB", "ms"];

/// Words before a number that make it a name (a standard, a section, a release) rather
/// than a quantity.
const LABELS: &[&str] = &[
    "ISO",
    "RFC",
    "PEP",
    "Section",
    "section",
    "Chapter",
    "chapter",
    "Table",
    "Figure",
    "Example",
    "Appendix",
    "version",
    "Version",
    "versions",
    "Python",
    "PostgreSQL",
    "release",
    "Release",
    "Step",
    "step",
    "level",
    "Level",
    "ECMA",
    "IEEE",
    "UTF",
    "Unicode",
    "POSIX",
    "C",
    "C99",
    "SQL",
    "X",
    "Windows",
    "Tk",
    "Tcl",
    "OpenSSL",
    "Perl",
    "Protocol",
    "protocol",
    "PL",
];

/// Whether the number at `start` follows a label word.
fn after_label(s: &str, start: usize) -> bool {
    let prev = s[..start].trim_end().rsplit([' ', '(']).next().unwrap_or("");
    LABELS.contains(&prev)
}

fn group_thousands(n: u64) -> String {
    let s = n.to_string();
    let mut out = String::new();
    for (i, c) in s.chars().enumerate() {
        if i > 0 && (s.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    out
}

const NUMBER_WORDS: &[&str] = &[
    "zero", "one", "two", "three", "four", "five", "six", "seven", "eight", "nine", "ten",
    "eleven", "twelve",
];

/// One figure of the sentence given a different value: integers, decimals, versions,
/// years, percentages, amounts with units, grouped thousands, and number words from two
/// to twelve. The new value always differs in value, not only in spelling.
pub fn change_figure(s: &str, rng: &mut Rng) -> Option<Edit> {
    let nums = numbers(s);
    let ws: Vec<(usize, usize)> = words(s)
        .into_iter()
        .filter(|&(a, b)| {
            let w = &s[a..b];
            NUMBER_WORDS[2..].contains(&w.to_lowercase().as_str()) && is_prose_word(s, a, b)
        })
        .collect();
    let total = nums.len() + ws.len();
    if total == 0 {
        return None;
    }
    let k = rng.below(total);
    if k >= nums.len() {
        let (a, b) = ws[k - nums.len()];
        let w = &s[a..b];
        let i = NUMBER_WORDS.iter().position(|x| *x == w.to_lowercase())?;
        let mut j = i;
        while j == i {
            j = 2 + rng.below(NUMBER_WORDS.len() - 2);
        }
        let text = replace_at(s, a, b, NUMBER_WORDS[j]);
        return Some(Edit {
            detail: format!("{w} → {}", NUMBER_WORDS[j]),
            text,
            kind: "word".into(),
        });
    }
    let n = &nums[k];
    let digits = &s[n.start..n.end];
    let (kind, new) = if digits.contains(',') {
        let v: u64 = digits.split('.').next()?.replace(',', "").parse().ok()?;
        let w = if rng.chance(0.5) { v * 2 } else { v + 1000 };
        ("thousands", group_thousands(w))
    } else if digits.matches('.').count() >= 2 || (digits.contains('.') && rng.chance(0.5)) {
        // A version or section number: bump one part.
        let mut parts: Vec<u64> =
            digits.split('.').map(|p| p.parse().ok()).collect::<Option<_>>()?;
        let widths: Vec<usize> = digits.split('.').map(str::len).collect();
        let i = rng.below(parts.len());
        parts[i] = if parts[i] > 0 && rng.chance(0.5) { parts[i] - 1 } else { parts[i] + 1 };
        let new = parts
            .iter()
            .zip(&widths)
            .zip(digits.split('.'))
            .map(|((p, w), orig)| {
                format!("{p:0w$}", w = if orig.starts_with('0') { *w } else { 1 })
            })
            .collect::<Vec<_>>()
            .join(".");
        (if digits.matches('.').count() >= 2 { "version" } else { "decimal" }, new)
    } else if digits.contains('.') {
        let (int, frac) = digits.split_once('.')?;
        let f: u64 = frac.parse().ok()?;
        let nf = if f > 0 && rng.chance(0.5) { f - 1 } else { f + 1 };
        let nf = format!("{nf:0w$}", w = frac.len());
        if nf.len() != frac.len() {
            return None;
        }
        ("decimal", format!("{int}.{nf}"))
    } else {
        let v: u64 = digits.parse().ok()?;
        if digits.len() > 1 && digits.starts_with('0') {
            return None; // "007": a code, not a quantity
        }
        let year = (1900..=2099).contains(&v) && digits.len() == 4;
        let w = if year {
            v + 1 + rng.below(3) as u64
        } else if n.suffix == "%" && v <= 100 {
            if v >= 10 && rng.chance(0.5) { v - 5 } else { v + 5 }
        } else {
            let choices = [v + 1, v + 2, v * 2, v + 10, v.saturating_sub(1)];
            let mut w = v;
            while w == v {
                w = choices[rng.below(choices.len())];
            }
            w
        };
        let kind = if year {
            "year"
        } else if n.suffix == "%" {
            "percent"
        } else if !n.suffix.is_empty() || unit_after(s, n.end).is_some() {
            "quantity"
        } else {
            "integer"
        };
        (kind, w.to_string())
    };
    if new == digits {
        return None;
    }
    let text = format!("{}{}{}", &s[..n.start], new, &s[n.end..]);
    Some(Edit { detail: format!("{digits} → {new}"), text, kind: kind.into() })
}

/// The unit word after a number at `end` (`5 minutes`, `32MB`), with its byte range.
fn unit_after(s: &str, end: usize) -> Option<(usize, usize)> {
    let rest = &s[end..];
    let skip = if rest.starts_with(' ') || rest.starts_with('\u{a0}') {
        rest.chars().next().map_or(0, char::len_utf8)
    } else {
        0
    };
    let a = end + skip;
    let w: String = s[a..].chars().take_while(|c| c.is_ascii_alphabetic()).collect();
    if w.is_empty() || unit_group(&w).is_none() {
        return None;
    }
    let b = a + w.len();
    let after = s[b..].chars().next();
    if after.is_some_and(|c| c.is_alphanumeric() || c == '_' || c == '-') {
        return None;
    }
    Some((a, b))
}

/// A unit changed for another of the same dimension, the number kept (`5 minutes` →
/// `5 hours`).
pub fn change_unit(s: &str, rng: &mut Rng) -> Option<Edit> {
    let options: Vec<(usize, usize)> = numbers(s)
        .iter()
        .filter(|n| !after_label(s, n.start) && !s[n.start..n.end].contains('.'))
        .filter_map(|n| unit_after(s, n.end))
        .collect();
    if options.is_empty() {
        return None;
    }
    let (a, b) = options[rng.below(options.len())];
    let unit = &s[a..b];
    let group = unit_group(unit)?;
    let norm = if unit == "KB" { "kB" } else { unit };
    let others: Vec<&str> = group.iter().copied().filter(|u| *u != norm).collect();
    let with = others[rng.below(others.len())];
    let text = format!("{}{}{}", &s[..a], with, &s[b..]);
    Some(Edit { detail: format!("{unit} → {with}"), text, kind: "unit".into() })
}

// ---------------------------------------------------------------------------------------
// Polarity

const AUXILIARIES: &[&str] = &[
    "is", "are", "was", "were", "can", "will", "should", "must", "would", "could", "may", "might",
    "does", "do", "did",
];

/// The polarity of the sentence flipped: one negation added to a sentence with none, or
/// the only negation of a sentence removed.
pub fn flip_polarity(s: &str, _rng: &mut Rng) -> Option<Edit> {
    let n = negations(s);
    if n > 1 {
        return None;
    }
    let ws = words(s);
    if n == 1 {
        for (k, &(a, b)) in ws.iter().enumerate() {
            let w = s[a..b].replace('’', "'");
            let lw = w.to_lowercase();
            let (text, detail) = if lw == "cannot" || lw == "can't" {
                (replace_at(s, a, b, "can"), format!("{w} → can"))
            } else if lw == "won't" {
                (replace_at(s, a, b, "will"), format!("{w} → will"))
            } else if let Some(stem) = lw.strip_suffix("n't") {
                if !AUXILIARIES.contains(&stem) && !["has", "have", "had", "need"].contains(&stem) {
                    return None;
                }
                (replace_at(s, a, b, stem), format!("{w} → {stem}"))
            } else if lw == "not" && k > 0 {
                let prev = s[ws[k - 1].0..ws[k - 1].1].to_lowercase();
                if !AUXILIARIES.contains(&prev.as_str())
                    && !["has", "have", "had"].contains(&prev.as_str())
                {
                    return None;
                }
                let next = ws.get(k + 1).map(|&(x, y)| s[x..y].to_lowercase()).unwrap_or_default();
                if ["only", "all", "necessarily", "just", "always", "yet"].contains(&next.as_str())
                {
                    return None;
                }
                (
                    format!("{}{}", &s[..a], s[b..].trim_start()),
                    format!("removed \"not\" after \"{prev}\""),
                )
            } else if lw == "never" {
                (replace_at(s, a, b, "always"), "never → always".to_owned())
            } else {
                continue;
            };
            return Some(Edit { text, detail, kind: "negation removed".into() });
        }
        return None;
    }
    for (k, &(a, b)) in ws.iter().enumerate() {
        if !is_prose_word(s, a, b) {
            continue;
        }
        let w = &s[a..b];
        let lw = w.to_lowercase();
        if AUXILIARIES.contains(&lw.as_str()) {
            if k == 0 {
                return None; // a question-like or imperative opening
            }
            let with = if lw == "can" { "cannot".to_owned() } else { format!("{lw} not") };
            let text = replace_at(s, a, b, &with);
            return Some(Edit {
                detail: format!("{w} → {with}"),
                text,
                kind: "negation added".into(),
            });
        }
        if k > 0 {
            if let Some(&(_, base)) = VERBS.iter().find(|(v, _)| *v == lw) {
                let prev = s[ws[k - 1].0..ws[k - 1].1].to_lowercase();
                let next = ws.get(k + 1).map(|&(x, y)| s[x..y].to_lowercase()).unwrap_or_default();
                if [
                    "to", "and", "or", "the", "a", "an", "of", "its", "their", "issue", "many",
                    "all",
                ]
                .contains(&prev.as_str())
                    || ["of", "and", "or"].contains(&next.as_str())
                    || lw == "has"
                {
                    continue;
                }
                let with = format!("does not {base}");
                let text = replace_at(s, a, b, &with);
                return Some(Edit {
                    detail: format!("{w} → {with}"),
                    text,
                    kind: "negation added".into(),
                });
            }
        }
    }
    None
}

// ---------------------------------------------------------------------------------------
// Opposites, quantifiers, identifiers

/// Words and their opposites, in the sense a manual uses them.
const OPPOSITES: &[(&str, &str)] = &[
    ("minimum", "maximum"),
    ("before", "after"),
    ("enable", "disable"),
    ("enables", "disables"),
    ("enabled", "disabled"),
    ("enabling", "disabling"),
    ("increase", "decrease"),
    ("increases", "decreases"),
    ("increased", "decreased"),
    ("larger", "smaller"),
    ("largest", "smallest"),
    ("higher", "lower"),
    ("highest", "lowest"),
    ("upper", "lower"),
    ("earlier", "later"),
    ("earliest", "latest"),
    ("older", "newer"),
    ("oldest", "newest"),
    ("ascending", "descending"),
    ("inner", "outer"),
    ("explicit", "implicit"),
    ("explicitly", "implicitly"),
    ("input", "output"),
    ("success", "failure"),
    ("succeeds", "fails"),
    ("true", "false"),
    ("True", "False"),
    ("valid", "invalid"),
    ("visible", "invisible"),
    ("local", "remote"),
    ("synchronous", "asynchronous"),
    ("synchronously", "asynchronously"),
    ("internal", "external"),
    ("static", "dynamic"),
    ("include", "exclude"),
    ("includes", "excludes"),
    ("included", "excluded"),
    ("inclusive", "exclusive"),
    ("added", "removed"),
    ("accept", "reject"),
    ("accepts", "rejects"),
    ("accepted", "rejected"),
    ("faster", "slower"),
    ("positive", "negative"),
    ("signed", "unsigned"),
    ("mutable", "immutable"),
    ("required", "optional"),
    ("mandatory", "optional"),
    ("automatically", "manually"),
    ("global", "local"),
    ("public", "private"),
    ("physical", "logical"),
    ("temporary", "permanent"),
    ("forward", "backward"),
    ("encode", "decode"),
    ("encodes", "decodes"),
    ("compress", "decompress"),
    ("lock", "unlock"),
    ("first", "last"),
    ("start", "end"),
    ("beginning", "end"),
    ("more than", "less than"),
    ("greater than", "less than"),
    ("above", "below"),
    ("long", "short"),
    ("allowed", "forbidden"),
    ("safe", "unsafe"),
    ("supported", "unsupported"),
];

/// Quantifiers and frequency words, one for another that says more or less.
const QUANTIFIERS: &[(&str, &str)] = &[
    ("all", "some"),
    ("some", "all"),
    ("always", "sometimes"),
    ("sometimes", "always"),
    ("often", "rarely"),
    ("usually", "rarely"),
    ("rarely", "often"),
    ("many", "few"),
    ("a few", "many"),
    ("at least", "at most"),
    ("at most", "at least"),
    ("most of", "few of"),
    ("every", "some"),
    ("none of", "all of"),
    ("both", "only one of"),
    ("each", "only one"),
];

/// Occurrences of the listed words or phrases in prose, with their replacements.
fn list_options(s: &str, list: &[(&str, &str)], both: bool) -> Vec<(usize, usize, String)> {
    let mut out = Vec::new();
    for &(x, y) in list {
        let pairs: Vec<(&str, &str)> = if both { vec![(x, y), (y, x)] } else { vec![(x, y)] };
        for (from, to) in pairs {
            let pat = word_pattern(from);
            for m in pat.find_iter(s) {
                let (a, b) = (m.start(), m.end());
                let phrase = from.contains(' ');
                let cap_ok = from.chars().next().is_some_and(|c| c.is_ascii_uppercase());
                if !phrase && !cap_ok && !is_prose_word(s, a, b) {
                    continue;
                }
                let before = s[..a].chars().next_back();
                let after = s[b..].chars().next();
                if before.is_some_and(|c| c == '-' || c == '_' || c == '.')
                    || after.is_some_and(|c| c == '-' || c == '_')
                {
                    continue;
                }
                out.push((a, b, to.to_owned()));
            }
            // The capitalised first word.
            let cap = capitalise(from);
            if cap != from && s.starts_with(&cap) && s[cap.len()..].starts_with(' ') {
                out.push((0, cap.len(), capitalise(to)));
            }
        }
    }
    out
}

fn exclusions(s: &str, a: usize, b: usize) -> bool {
    let w = s[a..b].to_lowercase();
    let next = s[b..].trim_start();
    let prev = s[..a].trim_end().rsplit(' ').next().unwrap_or("").to_lowercase();
    // Discourse "First," "At first", "at all", "how many", "more than one … or more".
    (w == "first" && (next.starts_with(',') || prev == "at"))
        || (w == "last" && next.starts_with(','))
        || (w == "all" && (prev == "at" || next.starts_with("of the above")))
        || (w == "many" && (prev == "how" || prev == "as"))
        || (w == "long" && (prev == "as" || next.starts_with("as")))
        || (w == "end" && prev != "the")
        || (w == "start" && prev != "the")
        || (w == "beginning" && prev != "the")
        || (w == "any" && prev == "in")
        || (w == "some" && (next.starts_with("of") || prev == "in"))
        || (w == "each" && (next.starts_with("other") || next.starts_with("of")))
        || (w == "every" && next.starts_with("time"))
        || (w == "lock" && prev != "a" && prev != "the")
        || (w == "safe" && next.starts_with("to"))
        || (w == "input" || w == "output") && next.starts_with("and")
}

fn swap_from(
    s: &str,
    rng: &mut Rng,
    list: &[(&str, &str)],
    both: bool,
    kind: &str,
) -> Option<Edit> {
    let options: Vec<(usize, usize, String)> = list_options(s, list, both)
        .into_iter()
        .filter(|(a, b, _)| !exclusions(s, *a, *b))
        .collect();
    if options.is_empty() {
        return None;
    }
    let (a, b, mut with) = options[rng.below(options.len())].clone();
    let next = s[b..].trim_start();
    if s[a..b].eq_ignore_ascii_case("all")
        && (next.starts_with("the ")
            || next.starts_with("these ")
            || next.starts_with("its ")
            || next.starts_with("their "))
    {
        with.push_str(" of"); // "all the rows" → "some of the rows"
    }
    let text = format!("{}{}{}", &s[..a], with, &s[b..]);
    let text = text.replace("a earlier", "an earlier").replace("an later", "a later");
    Some(Edit { detail: format!("{} → {}", &s[a..b], with), text, kind: kind.into() })
}

/// One word swapped for its opposite.
pub fn swap_opposite(s: &str, rng: &mut Rng) -> Option<Edit> {
    swap_from(s, rng, OPPOSITES, true, "opposite")
}

/// One quantifier swapped for another.
pub fn swap_quantifier(s: &str, rng: &mut Rng) -> Option<Edit> {
    swap_from(s, rng, QUANTIFIERS, false, "quantifier")
}

/// Shapes of identifiers, by name.
static IDENT_KINDS: LazyLock<Vec<(&'static str, Regex)>> = LazyLock::new(|| {
    vec![
        ("snake", re(r"(?-u:\b)[a-z][a-z0-9]*(?:_[a-z0-9]+)+(?-u:\b)")),
        ("dotted", re(r"(?-u:\b)[A-Za-z_][A-Za-z0-9_]*(?:\.[A-Za-z_][A-Za-z0-9_]*)+(?-u:\b)")),
        ("camel", re(r"(?-u:\b)[A-Z][a-z0-9]+(?:[A-Z][a-z0-9]+)+(?-u:\b)")),
        ("keyword", re(r"(?-u:\b)[A-Z]{3,}(?:_[A-Z]+)*(?-u:\b)")),
    ]
});

/// Acronyms and names that are not identifiers of the manual's interface.
const NOT_IDENTIFIERS: &[&str] = &[
    "SQL",
    "API",
    "CPU",
    "CPUS",
    "ACL",
    "ACLS",
    "POSIX",
    "UTF",
    "ASCII",
    "JSON",
    "XML",
    "HTML",
    "HTTP",
    "HTTPS",
    "URL",
    "URI",
    "TCP",
    "UDP",
    "SSL",
    "TLS",
    "LDAP",
    "GSSAPI",
    "SSPI",
    "RADIUS",
    "PAM",
    "BSD",
    "GNU",
    "ISO",
    "ANSI",
    "IEEE",
    "RFC",
    "MVCC",
    "WAL",
    "OID",
    "OIDS",
    "GUC",
    "DDL",
    "DML",
    "ECPG",
    "JIT",
    "LLVM",
    "ICU",
    "CSV",
    "NFS",
    "RAM",
    "SSD",
    "RAID",
    "UNIX",
    "LINUX",
    "MSVC",
    "IPC",
    "PID",
    "UID",
    "GID",
    "TID",
    "XID",
    "LSN",
    "SPI",
    "ABI",
    "FAQ",
    "NOT",
    "AND",
    "ALL",
    "ANY",
    "SOME",
    "NULL",
    "PostgreSQL",
    "JavaScript",
    "MySQL",
    "CPython",
    "PyPI",
    "OpenSSL",
    "MacOS",
    "FreeBSD",
    "NetBSD",
    "OpenBSD",
    "IPv",
    "GiST",
    "ZeroDivisionError",
    "TCL",
    "PHP",
    "PGXS",
    "GCC",
    "GDB",
    "CRC",
    "UTC",
    "GMT",
    "DST",
    "EST",
    "PST",
    "CET",
    "IDE",
    "GUI",
    "CLI",
    "OSX",
    "IBM",
    "AIX",
    "HPUX",
    "SYSV",
    "PDF",
    "PNG",
    "USB",
    "DNS",
    "SSH",
    "FTP",
    "NFC",
    "NFD",
    "NFKC",
    "NFKD",
    "MIT",
    "PSF",
    "BOM",
    "EOF",
    "CRLF",
    "PEP",
    "PEPS",
    "IDLE",
    "TODO",
    "DOS",
    "WINDOWS",
];

fn ident_ok(w: &str) -> bool {
    !NOT_IDENTIFIERS.contains(&w)
        && !w.eq_ignore_ascii_case("e.g")
        && !w.eq_ignore_ascii_case("i.e")
        && !w.chars().all(|c| c.is_ascii_digit() || c == '.')
}

/// Identifiers of each shape in a text (a whole page), for [`swap_identifier`].
pub fn page_identifiers(text: &str) -> Vec<(&'static str, Vec<String>)> {
    IDENT_KINDS
        .iter()
        .map(|(k, r)| {
            let mut v: Vec<String> =
                r.find_iter(text).map(|m| m.as_str().to_owned()).filter(|w| ident_ok(w)).collect();
            v.sort();
            v.dedup();
            (*k, v)
        })
        .collect()
}

/// One identifier of the sentence replaced by another of the same shape from the same
/// page (that the sentence does not already name).
pub fn swap_identifier(
    s: &str,
    page: &[(&'static str, Vec<String>)],
    rng: &mut Rng,
) -> Option<Edit> {
    let mut options = Vec::new();
    let lower = s.to_lowercase();
    for (kind, r) in IDENT_KINDS.iter() {
        let Some((_, pool)) = page.iter().find(|(k, _)| k == kind) else { continue };
        for m in r.find_iter(s) {
            let w = m.as_str();
            let glued =
                |c: Option<char>| c.is_some_and(|c| c == '.' || c == '_' || c.is_alphanumeric());
            if !ident_ok(w)
                || glued(s[..m.start()].chars().next_back())
                || (glued(s[m.end()..].chars().next())
                    && s[m.end()..].chars().nth(1).is_some_and(|c| c.is_alphanumeric()))
            {
                continue;
            }
            let others: Vec<&String> = pool
                .iter()
                .filter(|o| {
                    let lo = o.to_lowercase();
                    !lower.contains(&lo)
                        && (*kind != "dotted"
                            || !(lo.contains(&w.to_lowercase()) || w.to_lowercase().contains(&lo)))
                })
                .collect();
            if !others.is_empty() {
                options.push((m.start(), m.end(), *kind, others));
            }
        }
    }
    if options.is_empty() {
        return None;
    }
    let (a, b, kind, others) = &options[rng.below(options.len())];
    let with = others[rng.below(others.len())].clone();
    if *a == 0 && !with.starts_with(|c: char| c.is_ascii_uppercase()) {
        return None; // a sentence must still open with a capital, or it joins the one before
    }
    let text = format!("{}{}{}", &s[..*a], with, &s[*b..]);
    Some(Edit { detail: format!("{} → {}", &s[*a..*b], with), text, kind: (*kind).into() })
}

// ---------------------------------------------------------------------------------------
// Recombination, joined clauses, chatter

/// Words at which a sentence's subject ends and its predicate begins.
const PIVOTS: &[&str] = &[
    "is",
    "are",
    "was",
    "were",
    "can",
    "cannot",
    "will",
    "must",
    "should",
    "may",
    "might",
    "would",
    "could",
    "does",
    "do",
    "returns",
    "contains",
    "uses",
    "provides",
    "allows",
    "requires",
    "supports",
    "accepts",
    "creates",
    "causes",
    "prevents",
    "includes",
    "controls",
    "specifies",
    "determines",
    "defines",
    "means",
    "gives",
    "takes",
    "makes",
    "becomes",
    "reports",
    "shows",
    "displays",
    "stores",
    "has",
    "have",
];

/// First words that do not open a noun-phrase subject.
const NOT_SUBJECT: &[&str] = &[
    "if",
    "when",
    "although",
    "because",
    "since",
    "unless",
    "while",
    "once",
    "after",
    "before",
    "for",
    "in",
    "on",
    "to",
    "with",
    "by",
    "as",
    "at",
    "from",
    "note",
    "however",
    "also",
    "thus",
    "therefore",
    "otherwise",
    "instead",
    "here",
    "there",
    "it",
    "they",
    "this",
    "that",
    "these",
    "those",
    "we",
    "you",
    "he",
    "she",
    "one",
    "such",
    "so",
    "but",
    "and",
    "or",
    "then",
    "now",
    "only",
    "even",
    "what",
    "which",
    "who",
    "how",
    "where",
    "whether",
    "without",
    "during",
    "under",
    "over",
    "within",
    "between",
    "like",
    "unlike",
    "other",
    "another",
    "both",
    "either",
    "neither",
    "no",
    "not",
    "all",
    "some",
    "any",
    "each",
    "every",
    "most",
    "many",
    "several",
    "usually",
    "typically",
    "generally",
    "normally",
];

/// Whether a word names a thing on its own: an identifier, an acronym or a name.
fn is_name(w: &str) -> bool {
    let inner_upper = w.chars().skip(1).any(|c| c.is_ascii_uppercase());
    let code = w.contains('_') || w.contains('.') || w.chars().any(|c| c.is_ascii_digit());
    (inner_upper || code) && w.chars().next().is_some_and(char::is_alphanumeric)
}

fn subject_and_predicate(s: &str) -> Option<(String, String)> {
    let ws: Vec<&str> = s.split(' ').collect();
    let first = *ws.first()?;
    if NOT_SUBJECT.contains(&first.to_lowercase().as_str()) {
        return None;
    }
    // A subject opens with an article or a name, never with a verb ("Reads and …").
    if !["The", "A", "An", "Its", "Their", "Your"].contains(&first) && !is_name(first) {
        return None;
    }
    let k = ws.iter().position(|w| PIVOTS.contains(w))?;
    if !(2..=6).contains(&k) || ws[..k].iter().any(|w| w.contains(',') || w.contains('(')) {
        return None;
    }
    let subject = &ws[..k];
    let last = subject[k - 1].to_lowercase();
    if subject.iter().any(|w| {
        let w = w.to_lowercase();
        CLAUSE_WORDS.contains(&w.as_str()) || VERBS.iter().any(|(v, _)| *v == w) || w == "indicates"
    }) || ["of", "to", "the", "a", "an", "for", "in", "on", "with", "by"]
        .contains(&last.as_str())
    {
        return None;
    }
    Some((subject.join(" "), ws[k..].join(" ")))
}

/// The subject of `a` with the predicate of `b`: a claim made of the passage's own words
/// that the passage does not make. `stems` gives a text's content stems (to make sure
/// the two subjects are about different things).
pub fn recombine(a: &str, b: &str, stems: impl Fn(&str) -> Vec<String>) -> Option<Edit> {
    let (sa, pa) = subject_and_predicate(a)?;
    let (sb, pb) = subject_and_predicate(b)?;
    let (xa, xb) = (stems(&sa), stems(&sb));
    if xa.is_empty() || xa.iter().any(|x| xb.contains(x)) || pa == pb {
        return None;
    }
    if pb.split(' ').count() < 4 {
        return None;
    }
    let text = format!("{sa} {pb}");
    Some(Edit {
        detail: format!(
            "subject \"{sa}\" of one sentence with the predicate \"{}…\" of another",
            shorten(&pb, 40)
        ),
        text,
        kind: "recombined".into(),
    })
}

fn shorten(s: &str, n: usize) -> String {
    s.chars().take(n).collect()
}

/// A supported sentence joined to a clause taken from elsewhere.
pub fn join_clause(a: &str, c: &str) -> Option<Edit> {
    let body = a.strip_suffix('.')?;
    let clause = c.strip_suffix('.')?;
    if body.contains(';') || clause.split(' ').count() < 5 {
        return None;
    }
    let text = format!("{body}, and {}.", decapitalise(clause));
    Some(Edit {
        detail: format!("joined \"{}…\"", shorten(clause, 50)), text, kind: "and".into()
    })
}

/// Things an assistant says that make no claim about the documents, by family, as
/// patterns: `{a|b}` stands for either. [`chatter`] expands them.
const CHATTER_PATTERNS: &[&str] = &[
    // greetings
    "{Hi|Hello|Hey}{!|.}",
    "{Hi|Hello} there{!|.}",
    "Good {morning|afternoon|evening}{!|.}",
    // thanks and praise
    "Thanks for {asking|the question|reaching out|your patience}{!|.}",
    "Thank you for {asking|the question|your patience}.",
    "{Good|Great|Excellent|Interesting|Fair} question{!|.}",
    "Thanks, that is a common point of confusion.",
    // offers of help
    "Let me know if {you need anything else|anything is unclear|you have more questions|I can help further}.",
    "Please let me know if you need more help.",
    "Feel free to {ask|get back to me} if {something is unclear|you need more}.",
    "Happy to {help|dig deeper} if {you need more|anything is unclear}.",
    "I can {walk you through it|go into more detail|show you an example} if you {like|want}.",
    // questions back
    "Does that {help|answer your question|make sense}?",
    "Would you like {an example|more detail|a summary of the related pages}?",
    "Shall I {look up|check} {the related settings|the other pages|more examples} too?",
    "{Anything|Is there anything} else I can help with?",
    "Do you want me to {check|look up} {more|the details}?",
    "Any other questions?",
    // sign-offs
    "Hope {this|that} helps{!|.}",
    "I hope that answers your question.",
    "Good luck{!|.}",
    "Have a {nice|good|great} day{!|.}",
    "{Cheers|Take care}!",
    "All the best.",
    // transitions
    "{Sure|Of course|Certainly|Absolutely}{!|.}",
    "Sure thing.",
    "Let me explain.",
    "Let's take a look.",
    "Here is {a short summary|what I found|the short version}.",
    "Here's what the {documentation|manual} says.",
    "I looked this up for you.",
    "Sure, here is {what I found|the answer}.",
    "{Okay|OK|Alright}, here goes.",
    // acknowledgements
    "{You're welcome|No problem|My pleasure}{!|.}",
    "{Glad|Happy} I could help.",
    "Happy to help.",
];

/// Every chatter sentence the patterns give, sorted.
pub fn chatter() -> Vec<String> {
    fn expand(p: &str) -> Vec<String> {
        let Some(a) = p.find('{') else { return vec![p.to_owned()] };
        let b = a + p[a..].find('}').expect("closed brace");
        let rest = expand(&p[b + 1..]);
        p[a + 1..b]
            .split('|')
            .flat_map(|alt| rest.iter().map(move |r| format!("{}{alt}{r}", &p[..a])))
            .collect()
    }
    let mut v: Vec<String> = CHATTER_PATTERNS.iter().flat_map(|p| expand(p)).collect();
    v.sort();
    v.dedup();
    v
}

// ---------------------------------------------------------------------------------------
// Self-test: fixed cases, run by `--self-test` before every benchmark run.

/// Checks the edit rules on fixed sentences; returns the failures.
pub fn self_test() -> Vec<String> {
    let mut bad: Vec<String> = Vec::new();
    fn check(bad: &mut Vec<String>, ok: bool, what: String) {
        if !ok {
            bad.push(what);
        }
    }
    fn text(bad: &mut Vec<String>, e: Option<Edit>, what: &str) -> String {
        match e {
            Some(e) => e.text,
            None => {
                bad.push(format!("no edit made: {what}"));
                String::new()
            }
        }
    }
    let mut rng = Rng::new(7);
    // Figures change in value, never only in spelling.
    for s in [
        "The server keeps 45 connections open for each database.",
        "Up to 1,200 rows are kept in memory by the sort step.",
        "The default is 0.5 of the total budget for the step.",
        "This behaviour was introduced in version 9.6.2 of the server.",
        "A share of 32MB is reserved for the leader process.",
        "At least 10% of the table is scanned before a plan is chosen.",
        "The option was added in 2019 and kept ever since.",
        "Two phases are needed before the table is committed.",
    ] {
        for _ in 0..20 {
            let t = text(&mut bad, change_figure(s, &mut rng), s);
            check(&mut bad, t != s, format!("figure unchanged: {s}"));
            check(
                &mut bad,
                digit_runs(&t) != digit_runs(s) || s.starts_with("Two"),
                format!("digits unchanged: {t}"),
            );
            check(&mut bad, !t.contains("1200 rows"), format!("spelling-only change: {t}"));
        }
    }
    check(
        &mut bad,
        change_figure("Use UTF-8 and int4 for this column type.", &mut rng).is_none(),
        "a figure inside a name was changed".into(),
    );
    // Units: number kept, unit changed within its dimension.
    let t =
        text(&mut bad, change_unit("The check runs every 5 minutes by default.", &mut rng), "unit");
    check(&mut bad, t.contains("every 5 ") && !t.contains("5 minutes"), format!("unit: {t}"));
    check(
        &mut bad,
        change_unit("It holds 5 rows per page.", &mut rng).is_none(),
        "rows is not a unit".into(),
    );
    // Polarity: added where there is none, removed where there is exactly one.
    let t = text(
        &mut bad,
        flip_polarity("The index is marked invalid by the command.", &mut rng),
        "flip",
    );
    check(
        &mut bad,
        t == "The index is not marked invalid by the command.",
        format!("flip add: {t}"),
    );
    let t = text(
        &mut bad,
        flip_polarity("Special files cannot be copied with this function.", &mut rng),
        "flip",
    );
    check(
        &mut bad,
        t == "Special files can be copied with this function.",
        format!("flip cannot: {t}"),
    );
    let t = text(
        &mut bad,
        flip_polarity("The server returns an error for such input.", &mut rng),
        "flip",
    );
    check(
        &mut bad,
        t == "The server does not return an error for such input.",
        format!("flip verb: {t}"),
    );
    check(
        &mut bad,
        flip_polarity("It is not used and never read.", &mut rng).is_none(),
        "two negations".into(),
    );
    // Light edits keep figures, negations and identifiers.
    for s in [
        "However, the server does not allow 3 retries of maintenance_work_mem changes.",
        "If the value is null, the function returns None in most cases.",
        "The list is usually large, so it is kept on disk.",
    ] {
        for _ in 0..20 {
            if let Some(e) = light_edit(s, &mut rng) {
                check(
                    &mut bad,
                    keeps_meaning(s, &e.text),
                    format!("light edit changed meaning: {}", e.text),
                );
            }
        }
    }
    let t = text(
        &mut bad,
        reorder("If the value is null, the function returns nothing.", &mut rng),
        "reorder",
    );
    check(
        &mut bad,
        t == "The function returns nothing if the value is null.",
        format!("reorder: {t}"),
    );
    let t = text(
        &mut bad,
        reorder("The function returns nothing if the value is null.", &mut rng),
        "reorder",
    );
    check(
        &mut bad,
        t == "If the value is null, the function returns nothing.",
        format!("reorder back: {t}"),
    );
    let t = text(
        &mut bad,
        reorder("If the list is empty, then the call returns nothing.", &mut rng),
        "then",
    );
    check(
        &mut bad,
        t == "The call returns nothing if the list is empty.",
        format!("reorder then: {t}"),
    );
    check(
        &mut bad,
        reorder("The file need only be read if the cache is cold.", &mut rng).is_none(),
        "a clause moved past \"only\"".into(),
    );
    for _ in 0..10 {
        let e = synonym("It is slower because of the extra calls.", &[], &mut rng);
        check(&mut bad, e.is_none(), "\"because of\" must stay".into());
    }
    check(
        &mut bad,
        drop_modifier("Return a tuple of (data, address).", &mut rng).is_none(),
        "a parenthesised object was dropped".into(),
    );
    check(
        &mut bad,
        !keeps_meaning("It is 5.", "It is 6."),
        "keeps_meaning must see figures".into(),
    );
    check(
        &mut bad,
        !keeps_meaning("It is set.", "It is not set."),
        "keeps_meaning must see negation".into(),
    );
    // Opposites: only prose words, not parts of names.
    check(
        &mut bad,
        swap_opposite("Set enable_seqscan to on for the whole session.", &mut rng).is_none(),
        "opposite inside a name".into(),
    );
    let t = text(
        &mut bad,
        swap_opposite("The minimum value is used for the first pass.", &mut rng),
        "opposite",
    );
    check(&mut bad, t.contains("maximum") || t.contains("last pass"), format!("opposite: {t}"));
    // Identifiers: same shape, from the page.
    let page = page_identifiers(
        "Use work_mem and maintenance_work_mem; see os.path.join and shutil.copy.",
    );
    let t = text(
        &mut bad,
        swap_identifier("The setting work_mem limits the memory of a sort.", &page, &mut rng),
        "identifier",
    );
    check(&mut bad, t.contains("maintenance_work_mem"), format!("identifier: {t}"));
    // Recombination needs two different noun-phrase subjects.
    let words_of =
        |t: &str| t.split(' ').map(str::to_lowercase).filter(|w| w != "the").collect::<Vec<_>>();
    check(
        &mut bad,
        recombine(
            "The planner is able to use the index for ordered scans of the table.",
            "Each partition is first checked to determine whether an equivalent index exists.",
            words_of,
        )
        .is_none(),
        "recombine must refuse a subject that opens with a quantifier".into(),
    );
    let t = text(
        &mut bad,
        recombine(
            "The planner is able to use the index for ordered scans of the table.",
            "The parallel workers must have at least a share of the memory budget.",
            words_of,
        ),
        "recombine",
    );
    check(
        &mut bad,
        t == "The planner must have at least a share of the memory budget.",
        format!("recombine: {t}"),
    );
    bad
}
