//! Word lists the support checks use: synonyms that may stand for each other, opposites
//! that may not, quantifier classes, negation cues and the words of conversational
//! filler.
//!
//! The lists are written by hand for the register plumbline reads — policies, manuals,
//! support answers and technical documentation — from common English usage; no outside
//! list was copied. They are deliberately conservative: a pair goes in [`SYNONYM_GROUPS`]
//! only where the words are interchangeable in nearly every sentence of that register
//! ("usually"/"normally"), since a listed pair is never flagged as a changed term. Words
//! are compared by Snowball stem, so one form of each is enough. Extend them as reviews
//! find more; the accuracy benchmark (DEVELOPERS.md) measures the effect.

use std::collections::{HashMap, HashSet};
use std::sync::LazyLock;

use super::stem::stem;

/// Groups of words that may stand for each other without a changed-term flag.
pub const SYNONYM_GROUPS: &[&[&str]] = &[
    // verbs
    &["stay", "remain"],
    &["begin", "start", "commence", "initiate"],
    &["end", "finish", "conclude", "complete"],
    &["buy", "purchase"],
    &["get", "receive", "obtain", "acquire"],
    &["help", "assist", "aid"],
    &["need", "require"],
    &["must", "shall"],
    &["allow", "permit", "let", "enable"],
    &["show", "display"],
    &["use", "utilise", "utilize", "employ"],
    &["choose", "select", "pick"],
    &["cancel", "terminate", "abort"],
    &["ask", "request"],
    &["give", "provide", "supply", "offer"],
    &["send", "submit", "transmit"],
    &["check", "verify", "confirm", "validate"],
    &["fix", "repair", "correct"],
    &["change", "modify", "alter", "amend"],
    &["make", "create", "generate", "produce"],
    &["build", "construct"],
    &["delete", "remove", "erase"],
    &["keep", "retain", "preserve", "maintain"],
    &["ensure", "guarantee", "make sure"],
    &["try", "attempt"],
    &["find", "locate"],
    &["look", "search", "seek"],
    &["see", "view"],
    &["tell", "inform", "notify"],
    &["say", "state"],
    &["explain", "describe"],
    &["show", "demonstrate", "illustrate"],
    &["call", "invoke"],
    &["run", "execute"],
    &["stop", "halt", "cease"],
    &["put", "place"],
    &["set", "configure"],
    &["add", "append", "insert"],
    &["join", "combine", "merge"],
    &["split", "divide", "separate"],
    &["return", "yield"],
    &["contain", "include", "hold"],
    &["indicate", "signify", "denote", "mean"],
    &["represent", "stand for"],
    &["handle", "process", "deal with"],
    &["happen", "occur"],
    &["fail", "break down"],
    &["cause", "trigger"],
    &["prevent", "avoid", "stop"],
    &["reduce", "lower", "decrease", "cut"],
    &["raise", "increase"],
    &["improve", "enhance"],
    &["speed", "accelerate"],
    &["expect", "anticipate"],
    &["suggest", "recommend", "advise"],
    &["consider", "regard"],
    &["decide", "determine"],
    &["depend", "rely"],
    &["support", "back"],
    &["store", "save"],
    &["load", "read in"],
    &["write", "output"],
    &["print", "output"],
    &["copy", "duplicate"],
    &["move", "relocate", "transfer"],
    &["replace", "substitute"],
    &["specify", "define", "give"],
    &["describe", "document"],
    &["wait", "block"],
    &["arrive", "reach"],
    &["leave", "exit", "quit"],
    &["reply", "respond", "answer"],
    &["inspect", "examine", "review"],
    &["own", "possess"],
    &["work", "function", "operate"],
    &["refund", "reimburse"],
    &["pay", "payment"],
    &["close", "shut"],
    &["call", "phone", "ring"],
    &["book", "reserve"],
    &["apply", "pertain"],
    &["show", "shown", "display", "displayed"],
    &["give", "given", "provide", "provided"],
    &["write", "written"],
    &["choose", "chosen", "select", "selected"],
    &["take", "taken"],
    &["can", "able", "capable"],
    &["regarding", "concerning", "respecting", "respect"],
    // nouns
    &["employee", "staff", "worker", "personnel"],
    &["customer", "client"],
    &["manager", "supervisor"],
    &["mistake", "error", "fault"],
    &["problem", "issue"],
    &["job", "role", "position", "post"],
    &["task", "job"],
    &["goal", "aim", "objective", "purpose"],
    &["way", "method", "means", "manner"],
    &["kind", "type", "sort"],
    &["part", "portion", "section"],
    &["piece", "part"],
    &["rule", "regulation"],
    &["option", "choice", "alternative"],
    &["setting", "parameter", "option"],
    &["amount", "quantity"],
    &["number", "count"],
    &["size", "length"],
    &["speed", "rate", "pace"],
    &["price", "cost", "charge", "fee"],
    &["trip", "journey"],
    &["house", "home"],
    &["shop", "store"],
    &["car", "vehicle"],
    &["permission", "authorization", "authorisation", "right"],
    &["answer", "reply", "response"],
    &["question", "query"],
    &["information", "details", "data"],
    &["example", "instance"],
    &["result", "outcome"],
    &["reason", "cause"],
    &["effect", "impact"],
    &["benefit", "advantage"],
    &["drawback", "disadvantage", "downside"],
    &["feature", "capability"],
    &["tool", "utility"],
    &["program", "programme", "application", "app"],
    &["document", "file"],
    &["folder", "directory"],
    &["picture", "image"],
    &["chart", "graph"],
    &["table", "relation"],
    &["field", "column", "attribute"],
    &["record", "row", "entry"],
    &["list", "sequence"],
    &["key", "identifier"],
    &["message", "notice", "notification"],
    &["warning", "alert"],
    &["deadline", "due date"],
    &["beginning", "start", "outset"],
    &["end", "close", "finish"],
    &["area", "region", "zone"],
    &["limit", "cap", "ceiling"],
    &["level", "tier"],
    &["step", "stage", "phase"],
    &["procedure", "process"],
    &["policy", "guideline"],
    &["agreement", "contract"],
    &["holiday", "vacation", "leave"],
    &["salary", "pay", "wage", "wages"],
    &["meeting", "session"],
    &["team", "group"],
    &["company", "firm", "business", "organisation", "organization"],
    &["department", "division", "unit"],
    &["building", "premises"],
    &["warehouse", "depot"],
    // adjectives
    &["big", "large", "huge"],
    &["bigger", "larger"],
    &["biggest", "largest"],
    &["smaller", "littler"],
    &["small", "little", "tiny"],
    &["quick", "fast", "rapid", "speedy"],
    &["slow", "sluggish"],
    &["simple", "easy", "straightforward"],
    &["hard", "difficult"],
    &["useful", "helpful", "handy"],
    &["extra", "additional", "further"],
    &["main", "primary", "principal", "chief"],
    &["important", "significant", "crucial"],
    &["necessary", "required", "needed", "essential"],
    &["possible", "feasible"],
    &["correct", "right", "accurate"],
    &["wrong", "incorrect"],
    &["exact", "precise"],
    &["whole", "entire", "complete", "full"],
    &["same", "identical"],
    &["different", "distinct", "dissimilar"],
    &["similar", "alike"],
    &["common", "frequent"],
    &["usual", "normal", "typical", "regular"],
    &["specific", "particular"],
    &["suitable", "appropriate", "proper", "fitting"],
    &["current", "present"],
    &["previous", "prior", "former", "preceding"],
    &["next", "following", "subsequent"],
    &["old", "former"],
    &["new", "fresh"],
    &["modern", "recent", "current"],
    &["ready", "prepared"],
    &["safe", "secure"],
    &["clear", "obvious", "evident"],
    &["strange", "odd", "unusual"],
    &["whole", "total"],
    &["enough", "sufficient", "adequate"],
    &["various", "several", "multiple", "many", "different", "diverse", "number"],
    &["certain", "sure"],
    &["able", "capable"],
    &["free", "complimentary"],
    &["quiet", "silent"],
    &["empty", "blank"],
    &["costly", "expensive"],
    &["cheap", "inexpensive"],
    &["entire", "complete"],
    &["unique", "sole"],
    &["ideal", "optimal"],
    // adverbs and connectives
    &["usually", "normally", "typically", "generally", "ordinarily"],
    &["often", "frequently"],
    &["sometimes", "occasionally"],
    &["maybe", "perhaps", "possibly"],
    &["about", "approximately", "around", "roughly", "approx", "circa"],
    &["automatically", "automatic"],
    &["quickly", "rapidly", "fast"],
    &["immediately", "instantly", "at once", "right away"],
    &["soon", "shortly"],
    &["also", "too", "as well"],
    &["only", "just", "solely", "merely"],
    &["mainly", "mostly", "chiefly", "primarily", "largely"],
    &["especially", "particularly", "notably"],
    &["finally", "lastly", "eventually"],
    &["therefore", "thus", "hence", "consequently", "so"],
    &["however", "nevertheless", "nonetheless", "but", "yet"],
    &["because", "since", "as"],
    &["although", "though", "even though", "while", "whereas"],
    &["if", "when", "whenever"],
    &["until", "till", "up to"],
    &["within", "inside", "in"],
    &["per", "each", "every", "a"],
    &["before", "prior to", "ahead of"],
    &["after", "following"],
    &["during", "throughout"],
    &["currently", "presently", "now"],
    &["again", "once more"],
    &["completely", "fully", "entirely", "totally"],
    &["nearly", "almost"],
    &["directly", "straight"],
    &["correctly", "properly"],
    &["exactly", "precisely"],
    &["explicitly", "expressly"],
    &["instead", "rather"],
    &["similarly", "likewise"],
    &["additionally", "furthermore", "moreover", "also"],
];

/// Pairs of words of opposite sense: one for the other is a changed term wherever it
/// stands.
pub const OPPOSITE_PAIRS: &[(&str, &str)] = &[
    ("minimum", "maximum"),
    ("min", "max"),
    ("minimal", "maximal"),
    ("minimise", "maximise"),
    ("minimize", "maximize"),
    ("before", "after"),
    ("earlier", "later"),
    ("earliest", "latest"),
    ("early", "late"),
    ("previous", "next"),
    ("past", "future"),
    ("old", "new"),
    ("oldest", "newest"),
    ("older", "newer"),
    ("above", "below"),
    ("over", "under"),
    ("upper", "lower"),
    ("top", "bottom"),
    ("up", "down"),
    ("upward", "downward"),
    ("ascending", "descending"),
    ("high", "low"),
    ("higher", "lower"),
    ("highest", "lowest"),
    ("more", "less"),
    ("more", "fewer"),
    ("most", "least"),
    ("many", "few"),
    ("large", "small"),
    ("larger", "smaller"),
    ("largest", "smallest"),
    ("big", "small"),
    ("long", "short"),
    ("longer", "shorter"),
    ("longest", "shortest"),
    ("wide", "narrow"),
    ("heavy", "light"),
    ("fast", "slow"),
    ("faster", "slower"),
    ("increase", "decrease"),
    ("increase", "reduce"),
    ("raise", "lower"),
    ("grow", "shrink"),
    ("expand", "collapse"),
    ("enable", "disable"),
    ("enabled", "disabled"),
    ("activate", "deactivate"),
    ("on", "off"),
    ("allow", "deny"),
    ("allow", "forbid"),
    ("allow", "prohibit"),
    ("allow", "block"),
    ("permit", "prohibit"),
    ("permit", "forbid"),
    ("permitted", "prohibited"),
    ("accept", "reject"),
    ("accept", "refuse"),
    ("approve", "reject"),
    ("approve", "deny"),
    ("approved", "rejected"),
    ("grant", "revoke"),
    ("grant", "deny"),
    ("include", "exclude"),
    ("inclusive", "exclusive"),
    ("add", "remove"),
    ("add", "subtract"),
    ("add", "delete"),
    ("insert", "delete"),
    ("create", "destroy"),
    ("create", "delete"),
    ("create", "drop"),
    ("attach", "detach"),
    ("connect", "disconnect"),
    ("mount", "unmount"),
    ("install", "uninstall"),
    ("lock", "unlock"),
    ("encrypt", "decrypt"),
    ("encode", "decode"),
    ("compress", "decompress"),
    ("serialize", "deserialize"),
    ("serialise", "deserialise"),
    ("import", "export"),
    ("input", "output"),
    ("read", "write"),
    ("send", "receive"),
    ("push", "pull"),
    ("upload", "download"),
    ("open", "close"),
    ("opened", "closed"),
    ("start", "end"),
    ("start", "stop"),
    ("begin", "end"),
    ("first", "last"),
    ("head", "tail"),
    ("leading", "trailing"),
    ("prefix", "suffix"),
    ("left", "right"),
    ("inside", "outside"),
    ("internal", "external"),
    ("inner", "outer"),
    ("inbound", "outbound"),
    ("incoming", "outgoing"),
    ("public", "private"),
    ("global", "local"),
    ("remote", "local"),
    ("client", "server"),
    ("parent", "child"),
    ("master", "replica"),
    ("primary", "secondary"),
    ("primary", "standby"),
    ("source", "target"),
    ("source", "destination"),
    ("always", "never"),
    ("always", "sometimes"),
    ("all", "some"),
    ("all", "none"),
    ("every", "some"),
    ("any", "none"),
    ("each", "some"),
    ("required", "optional"),
    ("mandatory", "optional"),
    ("compulsory", "optional"),
    ("must", "may"),
    ("pass", "fail"),
    ("success", "failure"),
    ("succeed", "fail"),
    ("true", "false"),
    ("yes", "no"),
    ("valid", "invalid"),
    ("correct", "incorrect"),
    ("safe", "unsafe"),
    ("secure", "insecure"),
    ("stable", "unstable"),
    ("known", "unknown"),
    ("visible", "invisible"),
    ("visible", "hidden"),
    ("show", "hide"),
    ("online", "offline"),
    ("automatic", "manual"),
    ("automatically", "manually"),
    ("implicit", "explicit"),
    ("implicitly", "explicitly"),
    ("synchronous", "asynchronous"),
    ("synchronously", "asynchronously"),
    ("temporary", "permanent"),
    ("temporarily", "permanently"),
    ("static", "dynamic"),
    ("mutable", "immutable"),
    ("empty", "full"),
    ("present", "absent"),
    ("possible", "impossible"),
    ("supported", "unsupported"),
    ("signed", "unsigned"),
    ("strict", "lenient"),
    ("strong", "weak"),
    ("hard", "soft"),
    ("physical", "logical"),
    ("positive", "negative"),
    ("plus", "minus"),
    ("even", "odd"),
    ("single", "multiple"),
    ("same", "different"),
    ("equal", "unequal"),
    ("include", "omit"),
    ("buy", "sell"),
    ("credit", "debit"),
    ("income", "expense"),
    ("profit", "loss"),
    ("win", "lose"),
    ("gain", "lose"),
    ("daily", "weekly"),
    ("weekly", "monthly"),
    ("monthly", "annually"),
    ("monthly", "yearly"),
    ("hourly", "daily"),
    ("weekday", "weekend"),
    ("morning", "evening"),
    ("day", "night"),
    ("north", "south"),
    ("east", "west"),
    ("paid", "unpaid"),
    ("full-time", "part-time"),
    ("valid", "expired"),
    ("active", "inactive"),
    ("available", "unavailable"),
    ("able", "unable"),
    ("likely", "unlikely"),
    ("necessary", "unnecessary"),
    ("ignore", "respect"),
    ("ignore", "obey"),
    ("allowed", "forbidden"),
    ("legal", "illegal"),
    ("blocking", "nonblocking"),
    ("ascending", "descending"),
    ("increment", "decrement"),
    ("upgrade", "downgrade"),
    ("overestimate", "underestimate"),
    ("overflow", "underflow"),
    ("commit", "rollback"),
    ("commit", "abort"),
    ("including", "excluding"),
    ("with", "without"),
];

/// Prefixes that negate the word they stand before ("valid"/"invalid",
/// "synchronous"/"asynchronous"), with the shortest base they apply to: shorter bases
/// are too often other words ("inform"/"form").
const NEGATING_PREFIXES: &[(&str, usize)] = &[
    ("un", 4),
    ("in", 5),
    ("im", 5),
    ("il", 5),
    ("ir", 5),
    ("non", 4),
    ("dis", 4),
    ("de", 5),
    ("a", 6),
    ("anti", 4),
    ("mis", 4),
];

/// Quantifier classes: a word of one class standing where the source has a word of
/// another is a changed term ("each" for "only one", "some" for "all").
pub const QUANTIFIER_CLASSES: &[(&str, &[&str])] = &[
    ("universal", &["all", "every", "each", "always", "whole", "entire", "everything", "everyone"]),
    ("existential", &["some", "certain", "sometimes", "something", "someone"]),
    ("any", &["any", "anything", "anyone", "whichever", "whatever"]),
    ("none", &["none", "no", "never", "nothing", "nobody", "neither"]),
    ("single", &["only", "single", "sole", "solely", "just", "one"]),
    ("several", &["several", "multiple", "various", "many", "numerous"]),
    ("few", &["few", "fewer", "fewest", "little", "less", "least", "rarely", "seldom"]),
    ("most", &["most", "more", "majority", "mostly", "often", "usually"]),
    ("both", &["both"]),
    ("either", &["either"]),
];

/// Negation cues (after normalisation, apostrophes are ASCII).
pub fn is_negation(word: &str) -> bool {
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

/// Words of conversational filler ("Sure, here is the answer.", "Good luck!", "No
/// problem."): a sentence whose every content word is one of these claims nothing.
pub const CHATTER_WORDS: &str = "\
    sure certainly course absolutely definitely happy glad pleased delighted help helps \
    helped helpful hope hopefully thanks thank welcome great good nice excellent perfect \
    wonderful awesome question questions answer answers luck problem worries worry anytime \
    ask asking let know feel free reach anything else assist assistance clarify \
    clarification okay ok fine cheers hello hi hey greetings morning afternoon evening \
    appreciate appreciated sorry apologies apologize apologise confusion understand \
    understood noted see hear forward looking explanation summary overview brief quick \
    short info information details detail find below above following steps step options \
    note request requests assistant chat talk day enjoy follow followup best regards wish \
    wishes exactly indeed right correct yes yeah yep nope alright thing things point points \
    case topic further more additional specific particular please matter certain pleasure \
    care fair interesting curious thankful lovely explain elaborate expand rundown recap \
    gist basics highlights takeaway walk through dig deeper deep dive unclear confusing \
    clear sense mind touch contact up back later soon again whenever query concern concerns \
    doubt doubts idea thought thoughts think believe guess suppose say put simply basically \
    anyway goodbye bye weekend week inconvenience trouble patience feedback ready go goes \
    going start shall version found says said documentation docs manual guide answered \
    covered cover covers everything something";

/// The stems of a word and of its regular inflections: Snowball stems some inflected
/// forms apart from the base ("added" → "ad", "add" → "add"), and a pair must hold
/// whichever form a sentence uses.
fn stems_of(word: &str) -> Vec<String> {
    let mut out: Vec<String> = [
        word.to_owned(),
        format!("{word}s"),
        format!("{word}es"),
        format!("{word}ed"),
        format!("{word}d"),
        format!("{word}ing"),
    ]
    .iter()
    .map(|w| stem(w))
    .collect();
    out.sort();
    out.dedup();
    out
}

/// The stem pairs of the synonym groups (both orders).
pub static SYNONYM_STEMS: LazyLock<HashSet<(String, String)>> = LazyLock::new(|| {
    let mut set = HashSet::new();
    for g in SYNONYM_GROUPS {
        // Multi-word entries ("make sure") are kept for documentation; words compare
        // one token at a time.
        let stems: Vec<String> = g.iter().filter(|w| !w.contains(' ')).map(|w| stem(w)).collect();
        for a in &stems {
            for b in &stems {
                if a != b {
                    set.insert((a.clone(), b.clone()));
                }
            }
        }
    }
    set
});

/// The stem pairs of the opposites (both orders).
pub static OPPOSITE_STEMS: LazyLock<HashSet<(String, String)>> = LazyLock::new(|| {
    let mut set = HashSet::new();
    for (a, b) in OPPOSITE_PAIRS {
        for x in stems_of(a) {
            for y in stems_of(b) {
                if x != y {
                    set.insert((x.clone(), y.clone()));
                    set.insert((y, x.clone()));
                }
            }
        }
    }
    set
});

/// Whether one word is the other with a negating prefix ("valid"/"invalid",
/// "supported"/"unsupported", "synchronous"/"asynchronous").
pub fn prefix_opposites(a: &str, b: &str) -> bool {
    let one_way = |long: &str, short: &str| {
        NEGATING_PREFIXES.iter().any(|(p, min)| {
            long.strip_prefix(p).is_some_and(|rest| rest == short && short.chars().count() >= *min)
        })
    };
    a != b && (one_way(a, b) || one_way(b, a))
}

/// Quantifier class of a (normalised) word, if it is a quantifier.
pub fn quantifier_class(word: &str) -> Option<&'static str> {
    static BY_WORD: LazyLock<HashMap<&'static str, &'static str>> = LazyLock::new(|| {
        QUANTIFIER_CLASSES.iter().flat_map(|(c, ws)| ws.iter().map(move |w| (*w, *c))).collect()
    });
    BY_WORD.get(word).copied()
}

/// Whether a stem is one of the conversational filler words.
pub fn is_chatter_stem(s: &str) -> bool {
    static STEMS: LazyLock<HashSet<String>> =
        LazyLock::new(|| CHATTER_WORDS.split_whitespace().map(stem).collect());
    STEMS.contains(s)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn prefixes_negate_long_enough_bases() {
        assert!(prefix_opposites("invalid", "valid"));
        assert!(prefix_opposites("supported", "unsupported"));
        assert!(prefix_opposites("asynchronous", "synchronous"));
        assert!(prefix_opposites("nonblocking", "blocking"));
        assert!(!prefix_opposites("inform", "form"));
        assert!(!prefix_opposites("apart", "part"));
        assert!(!prefix_opposites("valid", "valid"));
    }

    #[test]
    fn quantifiers_fall_into_classes() {
        assert_eq!(quantifier_class("each"), quantifier_class("every"));
        assert_ne!(quantifier_class("each"), quantifier_class("only"));
        assert_ne!(quantifier_class("all"), quantifier_class("some"));
        assert_eq!(quantifier_class("table"), None);
    }

    #[test]
    fn no_word_is_both_synonym_and_opposite_of_another() {
        let clash: Vec<&(String, String)> =
            SYNONYM_STEMS.iter().filter(|p| OPPOSITE_STEMS.contains(*p)).collect();
        assert!(clash.is_empty(), "{clash:?}");
    }

    #[test]
    fn chatter_words_are_found_by_stem() {
        assert!(is_chatter_stem(&stem("questions")));
        assert!(is_chatter_stem(&stem("luck")));
        assert!(!is_chatter_stem(&stem("refund")));
    }
}
