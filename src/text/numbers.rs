//! Figures: numbers, amounts, percentages, times and dates with a canonical value.
//!
//! A claim that changes a figure is the failure a lexical overlap score hides best ("45
//! days" and "54 days" share every word but one), so figures are found and compared apart
//! from words. Each [`Figure`] has a kind and a canonical value, so that written variants
//! of one quantity compare equal:
//!
//! * numbers: `1,200`, `1200`, `1 200` and `one thousand two hundred` are all `1200`;
//!   `12.40` is `12.4`; `1.5 million` is `1500000`; `21st` is `21`;
//! * amounts keep their currency (`£12.40` is `GBP 12.4`; `$`, `€`, `¥`, `₹` and ISO 4217
//!   codes such as `EUR` are recognised);
//! * percentages: `30%`, `30 %`, `30 percent`, `30 per cent`;
//! * times (24-hour `HH:MM`): `10:30`, `10.30 a.m.`, `10:30pm`, `9 am`;
//! * dates in ISO 8601 calendar form: `2026-03-04`, `4 March 2026`, `March 4, 2026` and
//!   `4th of March 2026` are `2026-03-04`; `March 2026` is the reduced form `2026-03`; a day
//!   and month without a year is ISO 8601's truncated `--03-04`. Impossible dates (31 April,
//!   29 February of a common year) are not dates;
//! * a unit word that follows a number (`5 minutes`, `20 GB`) is kept, singular, so that
//!   "5 minutes" and "5 hours" differ.
//!
//! Figures are found on normalised text (see [`super::normalize`]); ranges are byte
//! ranges of the text passed in.

use std::fmt;
use std::sync::LazyLock;

use regex::Regex;
use serde::{Deserialize, Serialize};

/// What a figure measures.
#[derive(Debug, Clone, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", tag = "kind", content = "currency")]
pub enum FigureKind {
    /// A plain number (possibly with a unit).
    Number,
    /// An amount of money in the given ISO 4217 currency.
    Money(String),
    /// A percentage.
    Percent,
    /// A time of day, canonical `HH:MM`.
    Time,
    /// A calendar date, canonical ISO 8601 (`YYYY-MM-DD`, `YYYY-MM` or `--MM-DD`).
    Date,
    /// A dotted version or section number with three or more parts (`15.4.2`).
    Version,
}

/// One figure found in a text.
#[derive(Debug, Clone, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub struct Figure {
    /// What it measures.
    #[serde(flatten)]
    pub kind: FigureKind,
    /// Canonical value (see the module documentation).
    pub value: String,
    /// Unit word that followed it, singular (`minute`, `gb`), if any.
    pub unit: Option<String>,
    /// Byte range in the text searched.
    pub start: usize,
    /// End of the byte range (exclusive).
    pub end: usize,
}

impl fmt::Display for Figure {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match &self.kind {
            FigureKind::Money(cur) => write!(f, "{cur} {}", self.value)?,
            FigureKind::Percent => write!(f, "{}%", self.value)?,
            _ => f.write_str(&self.value)?,
        }
        if let Some(u) = &self.unit {
            write!(f, " {u}")?;
        }
        Ok(())
    }
}

impl Figure {
    /// Whether `self` (from a claim) is carried by `other` (from evidence): the same
    /// canonical value, compatible kinds and, where both name a unit, the same unit.
    ///
    /// A plain number in the evidence carries an amount or a quantity of the same value
    /// (the currency or unit is often written once, elsewhere); a date without a year
    /// matches a full date with the same month and day; every other kind must agree.
    pub fn is_carried_by(&self, other: &Figure) -> bool {
        let kinds_ok = match (&self.kind, &other.kind) {
            (a, b) if a == b => true,
            (FigureKind::Money(_), FigureKind::Number)
            | (FigureKind::Number, FigureKind::Money(_)) => true,
            _ => false,
        };
        if !kinds_ok {
            return false;
        }
        let value_ok = if self.kind == FigureKind::Date {
            self.value == other.value
                || (self.value.starts_with("--") && other.value.ends_with(&self.value[1..]))
        } else {
            self.value == other.value
        };
        let unit_ok = match (&self.unit, &other.unit) {
            (Some(a), Some(b)) => a == b,
            _ => true,
        };
        value_ok && unit_ok
    }
}

const MONTHS: [&str; 12] = [
    "january",
    "february",
    "march",
    "april",
    "may",
    "june",
    "july",
    "august",
    "september",
    "october",
    "november",
    "december",
];

fn month_number(word: &str) -> Option<u32> {
    let w = word.trim_end_matches('.');
    if w.len() < 3 {
        return None;
    }
    MONTHS
        .iter()
        .position(|m| m.starts_with(w) && (w.len() == m.len() || w.len() <= 4))
        .map(|i| i as u32 + 1)
}

/// Days in `month` of `year` in the proleptic Gregorian calendar (ISO 8601 §4.3.2).
fn days_in_month(year: Option<u32>, month: u32) -> u32 {
    match month {
        1 | 3 | 5 | 7 | 8 | 10 | 12 => 31,
        4 | 6 | 9 | 11 => 30,
        2 => match year {
            Some(y) if (y % 4 == 0 && y % 100 != 0) || y % 400 == 0 => 29,
            Some(_) => 28,
            None => 29,
        },
        _ => 0,
    }
}

fn date_value(year: Option<u32>, month: u32, day: Option<u32>) -> Option<String> {
    if !(1..=12).contains(&month) {
        return None;
    }
    match (year, day) {
        (Some(y), Some(d)) if d >= 1 && d <= days_in_month(Some(y), month) => {
            Some(format!("{y:04}-{month:02}-{d:02}"))
        }
        (None, Some(d)) if d >= 1 && d <= days_in_month(None, month) => {
            Some(format!("--{month:02}-{d:02}"))
        }
        (Some(y), None) => Some(format!("{y:04}-{month:02}")),
        _ => None,
    }
}

/// Canonical decimal: separators removed, leading zeros and trailing fractional zeros
/// dropped (`007` → `7`, `12.40` → `12.4`, `3.0` → `3`).
pub fn canonical_decimal(digits: &str) -> String {
    let cleaned: String = digits.chars().filter(|c| c.is_ascii_digit() || *c == '.').collect();
    let (int, frac) = match cleaned.split_once('.') {
        Some((i, f)) => (i, f.trim_end_matches('0')),
        None => (cleaned.as_str(), ""),
    };
    let int = int.trim_start_matches('0');
    let int = if int.is_empty() { "0" } else { int };
    if frac.is_empty() { int.to_owned() } else { format!("{int}.{frac}") }
}

/// Multiplies a canonical decimal by 10^k without floating point.
fn shift_decimal(value: &str, k: usize) -> String {
    let (int, frac) = value.split_once('.').unwrap_or((value, ""));
    let mut digits = format!("{int}{frac}");
    let point = int.len() + k;
    while digits.len() < point {
        digits.push('0');
    }
    let (i, f) = digits.split_at(point);
    canonical_decimal(&format!("{i}.{f}"))
}

fn multiplier(word: &str) -> Option<usize> {
    match word {
        "thousand" | "k" => Some(3),
        "million" | "m" | "mn" => Some(6),
        "billion" | "bn" | "b" => Some(9),
        _ => None,
    }
}

fn currency_code(sym: &str) -> Option<&'static str> {
    Some(match sym {
        "$" | "usd" | "dollar" | "dollars" | "us$" => "USD",
        "£" | "gbp" | "pound" | "pounds" => "GBP",
        "€" | "eur" | "euro" | "euros" => "EUR",
        "¥" | "jpy" | "yen" => "JPY",
        "₹" | "inr" | "rupee" | "rupees" => "INR",
        "chf" | "franc" | "francs" => "CHF",
        "cad" => "CAD",
        "aud" => "AUD",
        _ => return None,
    })
}

/// Unit words kept with a number, mapped to their singular form.
fn unit_singular(word: &str) -> Option<&'static str> {
    Some(match word {
        "ms" | "millisecond" | "milliseconds" => "millisecond",
        "s" | "sec" | "secs" | "second" | "seconds" => "second",
        "min" | "mins" | "minute" | "minutes" => "minute",
        "h" | "hr" | "hrs" | "hour" | "hours" => "hour",
        "day" | "days" => "day",
        "week" | "weeks" => "week",
        "month" | "months" => "month",
        "year" | "years" => "year",
        "b" | "byte" | "bytes" | "octet" | "octets" => "byte",
        "bit" | "bits" => "bit",
        "kbit" | "kbits" | "kilobit" | "kilobits" => "kbit",
        "mbit" | "mbits" | "megabit" | "megabits" => "mbit",
        "gbit" | "gbits" | "gigabit" | "gigabits" => "gbit",
        "pb" | "pib" | "petabyte" | "petabytes" => "pb",
        "us" | "µs" | "microsecond" | "microseconds" => "microsecond",
        "ns" | "nanosecond" | "nanoseconds" => "nanosecond",
        "decade" | "decades" => "decade",
        "century" | "centuries" => "century",
        "row" | "rows" => "row",
        "page" | "pages" => "page",
        "character" | "characters" | "chars" => "character",
        "digit" | "digits" => "digit",
        "line" | "lines" => "line",
        "column" | "columns" => "column",
        "thread" | "threads" => "thread",
        "connection" | "connections" => "connection",
        "core" | "cores" => "core",
        "hz" | "hertz" => "hz",
        "khz" => "khz",
        "kb" | "kib" | "kilobyte" | "kilobytes" => "kb",
        "mb" | "mib" | "megabyte" | "megabytes" => "mb",
        "gb" | "gib" | "gigabyte" | "gigabytes" => "gb",
        "tb" | "tib" | "terabyte" | "terabytes" => "tb",
        "mm" | "millimetre" | "millimetres" | "millimeter" | "millimeters" => "mm",
        "cm" | "centimetre" | "centimetres" | "centimeter" | "centimeters" => "cm",
        "m" | "metre" | "metres" | "meter" | "meters" => "m",
        "km" | "kilometre" | "kilometres" | "kilometer" | "kilometers" => "km",
        "mile" | "miles" => "mile",
        "g" | "gram" | "grams" => "g",
        "kg" | "kilogram" | "kilograms" => "kg",
        "lb" | "lbs" | "pound-weight" => "lb",
        "l" | "litre" | "litres" | "liter" | "liters" => "l",
        "ghz" => "ghz",
        "mhz" => "mhz",
        "v" | "volt" | "volts" => "v",
        "w" | "watt" | "watts" => "w",
        "kw" => "kw",
        "kwh" => "kwh",
        "°c" | "celsius" => "°c",
        "°f" | "fahrenheit" => "°f",
        _ => return None,
    })
}

const SMALL: [&str; 20] = [
    "zero",
    "one",
    "two",
    "three",
    "four",
    "five",
    "six",
    "seven",
    "eight",
    "nine",
    "ten",
    "eleven",
    "twelve",
    "thirteen",
    "fourteen",
    "fifteen",
    "sixteen",
    "seventeen",
    "eighteen",
    "nineteen",
];
const TENS: [&str; 10] =
    ["", "", "twenty", "thirty", "forty", "fifty", "sixty", "seventy", "eighty", "ninety"];

fn small_value(w: &str) -> Option<u64> {
    SMALL
        .iter()
        .position(|s| *s == w)
        .map(|v| v as u64)
        .or_else(|| TENS.iter().position(|s| !s.is_empty() && *s == w).map(|v| v as u64 * 10))
}

/// Value of a spelled number such as "one hundred and forty-five" or "two thousand".
fn spelled_value(words: &[&str]) -> Option<u64> {
    let mut total = 0u64;
    let mut current = 0u64;
    let mut any = false;
    for w in words {
        if *w == "and" {
            continue;
        }
        if let Some(v) = small_value(w) {
            current += v;
        } else if *w == "hundred" {
            current = current.max(1) * 100;
        } else if let Some(k) = multiplier(w).filter(|_| *w != "k" && *w != "m" && *w != "b") {
            total += current.max(1) * 10u64.pow(k as u32);
            current = 0;
        } else {
            return None;
        }
        any = true;
    }
    any.then_some(total + current)
}

/// One raw match before overlap resolution.
struct Candidate {
    fig: Figure,
    priority: u8,
}

const NUM: &str =
    r"(?:\d{1,3}(?:,\d{3})+(?:\.\d+)?|\d{1,3}(?: \d{3})+(?:\.\d+)?|\d+(?:\.\d+)?|\.\d+)";
const MONTH_RE: &str = r"(?:jan(?:uary)?|feb(?:ruary)?|mar(?:ch)?|apr(?:il)?|may|june?|july?|aug(?:ust)?|sep(?:t(?:ember)?)?|oct(?:ober)?|nov(?:ember)?|dec(?:ember)?)\.?";

macro_rules! re {
    ($name:ident, $pat:expr) => {
        static $name: LazyLock<Regex> = LazyLock::new(|| {
            Regex::new(&$pat)
                .unwrap_or_else(|e| panic!("figure pattern {}: {e}", stringify!($name)))
        });
    };
}

re!(ISO_DATE, r"\b(\d{4})-(\d{2})-(\d{2})\b");
re!(
    DAY_MONTH_YEAR,
    format!(r"\b(\d{{1,2}})(?:st|nd|rd|th)?(?: of)? ({MONTH_RE})(?:,? (\d{{4}}))?\b")
);
re!(MONTH_DAY_YEAR, format!(r"\b({MONTH_RE}) (\d{{1,2}})(?:st|nd|rd|th)?(?:,? (\d{{4}}))?\b"));
re!(MONTH_YEAR, format!(r"\b({MONTH_RE}),? (\d{{4}})\b"));
re!(TIME_COLON, r"\b(\d{1,2}):(\d{2})(?: ?([ap])\.?m\b\.?)?");
re!(TIME_DOT_MERIDIEM, r"\b(\d{1,2})\.(\d{2}) ?([ap])\.?m\b\.?");
re!(TIME_HOUR_MERIDIEM, r"\b(\d{1,2}) ?([ap])\.?m\b\.?");
re!(MONEY_SYMBOL, format!(r"(us\$|[$£€¥₹]) ?({NUM})(?: ?(thousand|million|billion|k|m|mn|bn)\b)?"));
re!(
    MONEY_CODE_BEFORE,
    format!(r"\b(usd|gbp|eur|jpy|inr|chf|cad|aud) ?({NUM})(?: (thousand|million|billion)\b)?")
);
re!(
    MONEY_CODE_AFTER,
    format!(
        r"\b({NUM})(?: (thousand|million|billion))? ?(usd|gbp|eur|jpy|inr|chf|cad|aud|dollars?|euros?|pounds|yen|rupees?)\b"
    )
);
re!(PERCENT, format!(r"\b({NUM})(?: ?%| ?percent\b| per cent\b| ?pct\b)"));
re!(VERSION, r"\b\d+(?:\.\d+){2,}\b");
re!(ORDINAL, r"\b(\d+)(?:st|nd|rd|th)\b");
re!(PLAIN, format!(r"(?:^|[^\w.,])({NUM})(?: (thousand|million|billion)\b)?"));
re!(UNIT_AFTER, r"^[ -]?(°[cf]|[a-zµ]+)\b");
re!(
    SPELLED,
    r"\b(?:zero|one|two|three|four|five|six|seven|eight|nine|ten|eleven|twelve|thirteen|fourteen|fifteen|sixteen|seventeen|eighteen|nineteen|twenty|thirty|forty|fifty|sixty|seventy|eighty|ninety|hundred|thousand|million|billion)\b(?:(?:-| | and )(?:zero|one|two|three|four|five|six|seven|eight|nine|ten|eleven|twelve|thirteen|fourteen|fifteen|sixteen|seventeen|eighteen|nineteen|twenty|thirty|forty|fifty|sixty|seventy|eighty|ninety|hundred|thousand|million|billion)\b)*"
);

/// The patterns that need a digit, as one set: a single scan says which of them can
/// match at all, and only those are run for their captures.
static DIGIT_PATTERNS: LazyLock<regex::RegexSet> = LazyLock::new(|| {
    regex::RegexSet::new([
        ISO_DATE.as_str(),
        DAY_MONTH_YEAR.as_str(),
        MONTH_DAY_YEAR.as_str(),
        MONTH_YEAR.as_str(),
        TIME_COLON.as_str(),
        TIME_DOT_MERIDIEM.as_str(),
        TIME_HOUR_MERIDIEM.as_str(),
        MONEY_SYMBOL.as_str(),
        MONEY_CODE_BEFORE.as_str(),
        MONEY_CODE_AFTER.as_str(),
        PERCENT.as_str(),
        VERSION.as_str(),
        ORDINAL.as_str(),
        PLAIN.as_str(),
    ])
    .unwrap_or_else(|e| panic!("figure pattern set: {e}"))
});

/// Finds every figure in `text` (expected to be normalised: lower-case, ASCII quotes and
/// dashes). Overlapping readings are resolved leftmost, then longest, then by kind
/// (dates, times, amounts, percentages, versions, numbers).
pub fn find_figures(text: &str) -> Vec<Figure> {
    let mut cands: Vec<Candidate> = Vec::new();
    let mut push = |kind: FigureKind, value: String, start: usize, end: usize, priority: u8| {
        cands.push(Candidate { fig: Figure { kind, value, unit: None, start, end }, priority });
    };
    let num = |m: Option<regex::Match<'_>>| {
        m.and_then(|m| m.as_str().replace([',', ' '], "").parse::<u32>().ok())
    };

    // Every pattern but the spelled numbers needs a digit; most sentences have none.
    if text.bytes().any(|b| b.is_ascii_digit()) {
        let hits = DIGIT_PATTERNS.matches(text);
        for c in hits.matched(0).then(|| ISO_DATE.captures_iter(text)).into_iter().flatten() {
            if let (Some(y), Some(mo), Some(d)) = (num(c.get(1)), num(c.get(2)), num(c.get(3))) {
                if let Some(v) = date_value(Some(y), mo, Some(d)) {
                    let m = c.get(0).map_or(0..0, |m| m.range());
                    push(FigureKind::Date, v, m.start, m.end, 0);
                }
            }
        }
        for c in hits.matched(1).then(|| DAY_MONTH_YEAR.captures_iter(text)).into_iter().flatten() {
            let month = c.get(2).and_then(|m| month_number(m.as_str()));
            if let (Some(d), Some(mo)) = (num(c.get(1)), month) {
                if let Some(v) = date_value(num(c.get(3)), mo, Some(d)) {
                    let m = c.get(0).map_or(0..0, |m| m.range());
                    push(FigureKind::Date, v, m.start, m.end, 0);
                }
            }
        }
        for c in hits.matched(2).then(|| MONTH_DAY_YEAR.captures_iter(text)).into_iter().flatten() {
            let month = c.get(1).and_then(|m| month_number(m.as_str()));
            // "may 5" without a year is too often the verb; require the year for "may".
            let is_may = c.get(1).is_some_and(|m| m.as_str() == "may");
            if let (Some(mo), Some(d)) = (month, num(c.get(2))) {
                if is_may && c.get(3).is_none() {
                    continue;
                }
                if let Some(v) = date_value(num(c.get(3)), mo, Some(d)) {
                    let m = c.get(0).map_or(0..0, |m| m.range());
                    push(FigureKind::Date, v, m.start, m.end, 0);
                }
            }
        }
        for c in hits.matched(3).then(|| MONTH_YEAR.captures_iter(text)).into_iter().flatten() {
            let month = c.get(1).and_then(|m| month_number(m.as_str()));
            if let (Some(mo), Some(y)) = (month, num(c.get(2))) {
                if let Some(v) = date_value(Some(y), mo, None) {
                    let m = c.get(0).map_or(0..0, |m| m.range());
                    push(FigureKind::Date, v, m.start, m.end, 1);
                }
            }
        }
        let clock = |h: u32, mi: u32, mer: Option<&str>| -> Option<String> {
            let h = match mer {
                Some(_) if !(1..=12).contains(&h) => return None,
                Some("a") => h % 12,
                Some(_) => h % 12 + 12,
                None => h,
            };
            (h < 24 && mi < 60).then(|| format!("{h:02}:{mi:02}"))
        };
        for c in hits.matched(4).then(|| TIME_COLON.captures_iter(text)).into_iter().flatten() {
            if let (Some(h), Some(mi)) = (num(c.get(1)), num(c.get(2))) {
                if let Some(v) = clock(h, mi, c.get(3).map(|m| m.as_str())) {
                    let m = c.get(0).map_or(0..0, |m| m.range());
                    push(FigureKind::Time, v, m.start, m.end, 1);
                }
            }
        }
        for c in
            hits.matched(5).then(|| TIME_DOT_MERIDIEM.captures_iter(text)).into_iter().flatten()
        {
            if let (Some(h), Some(mi)) = (num(c.get(1)), num(c.get(2))) {
                if let Some(v) = clock(h, mi, c.get(3).map(|m| m.as_str())) {
                    let m = c.get(0).map_or(0..0, |m| m.range());
                    push(FigureKind::Time, v, m.start, m.end, 1);
                }
            }
        }
        for c in
            hits.matched(6).then(|| TIME_HOUR_MERIDIEM.captures_iter(text)).into_iter().flatten()
        {
            if let Some(h) = num(c.get(1)) {
                if let Some(v) = clock(h, 0, c.get(2).map(|m| m.as_str())) {
                    let m = c.get(0).map_or(0..0, |m| m.range());
                    push(FigureKind::Time, v, m.start, m.end, 1);
                }
            }
        }
        let scaled = |n: &str, mult: Option<regex::Match<'_>>| {
            let v = canonical_decimal(n);
            match mult.and_then(|m| multiplier(m.as_str())) {
                Some(k) => shift_decimal(&v, k),
                None => v,
            }
        };
        for c in hits.matched(7).then(|| MONEY_SYMBOL.captures_iter(text)).into_iter().flatten() {
            if let (Some(sym), Some(n)) = (c.get(1), c.get(2)) {
                let code = currency_code(sym.as_str()).unwrap_or("USD");
                let m = c.get(0).map_or(0..0, |m| m.range());
                push(
                    FigureKind::Money(code.into()),
                    scaled(n.as_str(), c.get(3)),
                    m.start,
                    m.end,
                    2,
                );
            }
        }
        for c in
            hits.matched(8).then(|| MONEY_CODE_BEFORE.captures_iter(text)).into_iter().flatten()
        {
            if let (Some(code), Some(n)) =
                (c.get(1).and_then(|m| currency_code(m.as_str())), c.get(2))
            {
                let m = c.get(0).map_or(0..0, |m| m.range());
                push(
                    FigureKind::Money(code.into()),
                    scaled(n.as_str(), c.get(3)),
                    m.start,
                    m.end,
                    2,
                );
            }
        }
        for c in hits.matched(9).then(|| MONEY_CODE_AFTER.captures_iter(text)).into_iter().flatten()
        {
            if let (Some(n), Some(code)) =
                (c.get(1), c.get(3).and_then(|m| currency_code(m.as_str())))
            {
                let m = c.get(0).map_or(0..0, |m| m.range());
                push(
                    FigureKind::Money(code.into()),
                    scaled(n.as_str(), c.get(2)),
                    m.start,
                    m.end,
                    2,
                );
            }
        }
        for c in hits.matched(10).then(|| PERCENT.captures_iter(text)).into_iter().flatten() {
            if let Some(n) = c.get(1) {
                let m = c.get(0).map_or(0..0, |m| m.range());
                push(FigureKind::Percent, canonical_decimal(n.as_str()), m.start, m.end, 3);
            }
        }
        for m in hits.matched(11).then(|| VERSION.find_iter(text)).into_iter().flatten() {
            push(FigureKind::Version, m.as_str().to_owned(), m.start(), m.end(), 4);
        }
        for c in hits.matched(12).then(|| ORDINAL.captures_iter(text)).into_iter().flatten() {
            if let Some(n) = c.get(1) {
                let m = c.get(0).map_or(0..0, |m| m.range());
                push(FigureKind::Number, canonical_decimal(n.as_str()), m.start, m.end, 5);
            }
        }
        for c in hits.matched(13).then(|| PLAIN.captures_iter(text)).into_iter().flatten() {
            if let Some(n) = c.get(1) {
                let end = c.get(2).map_or(n.end(), |m| m.end());
                push(FigureKind::Number, scaled(n.as_str(), c.get(2)), n.start(), end, 6);
            }
        }
    }
    for m in SPELLED.find_iter(text) {
        let words: Vec<&str> = m.as_str().split([' ', '-']).filter(|w| !w.is_empty()).collect();
        // A lone "one" is far more often a pronoun ("the one that…") than a figure.
        if words == ["one"] || words.iter().all(|w| multiplier(w).is_some() || *w == "hundred") {
            continue;
        }
        if let Some(v) = spelled_value(&words) {
            push(FigureKind::Number, v.to_string(), m.start(), m.end(), 6);
        }
    }

    // Resolve overlaps: leftmost, then longest, then by priority.
    cands.sort_by(|a, b| {
        a.fig
            .start
            .cmp(&b.fig.start)
            .then(b.fig.end.cmp(&a.fig.end))
            .then(a.priority.cmp(&b.priority))
    });
    let mut out: Vec<Figure> = Vec::new();
    let mut covered = 0usize;
    for c in cands {
        if c.fig.start < covered {
            continue;
        }
        covered = c.fig.end;
        out.push(c.fig);
    }
    // Attach a unit word that directly follows a number.
    for fig in &mut out {
        if fig.kind != FigureKind::Number {
            continue;
        }
        if let Some(c) = UNIT_AFTER.captures(&text[fig.end..]) {
            if let Some(u) = c.get(1).and_then(|m| unit_singular(m.as_str())) {
                fig.unit = Some(u.to_owned());
                fig.end += c.get(0).map_or(0, |m| m.end());
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn values(text: &str) -> Vec<String> {
        find_figures(text).iter().map(ToString::to_string).collect()
    }

    #[test]
    fn grouping_separators_compare_equal() {
        assert_eq!(values("1,200 and 1200 and 1 200"), ["1200", "1200", "1200"]);
        assert_eq!(values("12.40 or 12.4 or 007"), ["12.4", "12.4", "7"]);
    }

    #[test]
    fn money_keeps_currency() {
        assert_eq!(
            values("£12.40 or $1,200 or 30 eur or usd 5 or €1.5 million"),
            ["GBP 12.4", "USD 1200", "EUR 30", "USD 5", "EUR 1500000"]
        );
    }

    #[test]
    fn percentages() {
        assert_eq!(
            values("30% and 30 % and 30 percent and 12.5 per cent"),
            ["30%", "30%", "30%", "12.5%"]
        );
    }

    #[test]
    fn times() {
        assert_eq!(
            values("10:30, 10.30 a.m., 10:30pm, 9 am, 12 am, 12 pm"),
            ["10:30", "10:30", "22:30", "09:00", "00:00", "12:00"]
        );
        // A decimal without a meridiem is a number, not a time.
        assert_eq!(values("10.30"), ["10.3"]);
    }

    #[test]
    fn dates_iso_8601_worked_cases() {
        // Worked cases written from ISO 8601-1:2019 §5.2 (calendar dates, complete
        // representation YYYY-MM-DD; reduced precision YYYY-MM; and the truncated --MM-DD
        // of the 2000 edition for a day of a month without a year).
        assert_eq!(values("2026-03-04"), ["2026-03-04"]);
        assert_eq!(values("4 march 2026"), ["2026-03-04"]);
        assert_eq!(values("march 4, 2026"), ["2026-03-04"]);
        assert_eq!(values("4th of march 2026"), ["2026-03-04"]);
        assert_eq!(values("sept 30 2025"), ["2025-09-30"]);
        assert_eq!(values("march 2026"), ["2026-03"]);
        assert_eq!(values("4 march"), ["--03-04"]);
        // Leap years: 2024 is one, 1900 is not (divisible by 100), 2000 is (by 400).
        assert_eq!(values("2024-02-29"), ["2024-02-29"]);
        assert!(!values("1900-02-29").contains(&"1900-02-29".to_owned()));
        assert_eq!(values("2000-02-29"), ["2000-02-29"]);
        // 31 April does not exist.
        assert!(!values("31 april 2026").iter().any(|v| v.contains("04-31")));
    }

    #[test]
    fn spelled_numbers() {
        assert_eq!(values("forty-five days"), ["45 day"]);
        assert_eq!(values("one hundred and twenty"), ["120"]);
        assert_eq!(values("two thousand five hundred"), ["2500"]);
        assert_eq!(values("twelve"), ["12"]);
        assert!(values("the one that works").is_empty());
    }

    #[test]
    fn units_distinguish_quantities() {
        let a = &find_figures("5 minutes")[0];
        let b = &find_figures("5 hours")[0];
        assert_eq!((a.unit.as_deref(), b.unit.as_deref()), (Some("minute"), Some("hour")));
        assert!(!a.is_carried_by(b));
        assert!(a.is_carried_by(&find_figures("5")[0]));
    }

    #[test]
    fn carried_by_rules() {
        let money = &find_figures("£45")[0];
        assert!(money.is_carried_by(&find_figures("45")[0]));
        assert!(!money.is_carried_by(&find_figures("€45")[0]));
        let day = &find_figures("4 march")[0];
        assert!(day.is_carried_by(&find_figures("2026-03-04")[0]));
        assert!(!find_figures("30%")[0].is_carried_by(&find_figures("30")[0]));
    }

    #[test]
    fn versions_and_identifiers() {
        assert_eq!(values("release 15.4.2"), ["15.4.2"]);
        assert!(values("sha256 h2o").is_empty());
        assert_eq!(values("21st"), ["21"]);
    }
}
