//! Settings: score thresholds, gate rules, input limits and the support scorer's
//! parameters, read from the `--config` TOML file.
//!
//! Every key has a default (SPEC.md, "Gate rules"), so an empty file, or none, is a valid
//! configuration. Each table denies unknown keys: a misspelt `max_unsuported = 3` would
//! otherwise be ignored and the gate would quietly run on the default, which is the one
//! failure a release gate must not have. Errors name the file, the line and the key.
//! [`Config`] serialises, so the findings document records the settings a run used.
//!
//! ```toml
//! [thresholds]
//! supported = 0.75
//! partial   = 0.45
//!
//! [gate]
//! max_unsupported = 0
//! fail_on = ["dead", "forbidden", "bad_locator", "quote_mismatch", "number_mismatch", "changed_term", "restricted_match"]
//! allow_rejected_lines = false
//!
//! [limits]
//! max_line_bytes     = 8388608    # 8 MiB
//! max_citations      = 256
//! max_document_bytes = 67108864   # 64 MiB
//! max_html_depth     = 512
//! max_id_bytes       = 1024
//!
//! [support]
//! fuzzy_threshold       = 0.85
//! window_sentences      = 3
//! misattribution_margin = 0.15
//! restricted_match      = 0.75
//!
//! [regression]            # approved-answer regression: each check is off until set
//! # min_rouge_l = 0.40    # ROUGE-L F against approved_answer, 0..1
//! # min_bleu    = 20      # sentence BLEU against approved_answer, 0..100
//! ```
//!
//! Where `[regression] min_rouge_l` or `min_bleu` is set, an answer whose agreement with
//! its `approved_answer` falls below it gets a `below_approved_rouge_l` or
//! `below_approved_bleu` finding (a warning); list the kind in `gate.fail_on` to fail the
//! gate on it (see [`crate::regression`]).

use std::fmt;
use std::ops::Range;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};
use toml::Spanned;
use toml::de::{DeTable, DeValue};

/// Every finding kind a run can report, as spelt in the findings document and accepted in
/// `gate.fail_on` and reviewer decisions.
///
/// Citation statuses other than `ok`, then sentence flags, then the verdict-level and
/// file-level kinds.
pub const FINDING_KINDS: &[&str] = &[
    // Citation statuses.
    "dead",
    "bad_locator",
    "quote_mismatch",
    "stale",
    "forbidden",
    "access_unknown",
    "principal_unknown",
    "unused",
    // Approved-answer regression (only with [regression] thresholds set).
    "below_approved_rouge_l",
    "below_approved_bleu",
    // Sentence flags.
    "unknown_ref",
    "number_mismatch",
    "negation_mismatch",
    "changed_term",
    "uncited",
    "misattributed",
    "restricted_match",
    // Sentence verdicts below `supported`, and lines of the answers file not read.
    "unsupported",
    "partial",
    "rejected_line",
];

/// Whether `kind` is one of [`FINDING_KINDS`].
pub fn is_finding_kind(kind: &str) -> bool {
    FINDING_KINDS.contains(&kind)
}

/// The effective settings of a run.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct Config {
    /// Score cut-offs between verdicts.
    pub thresholds: Thresholds,
    /// What fails the gate.
    pub gate: Gate,
    /// Bounds on input sizes.
    pub limits: Limits,
    /// Parameters of the support scorer.
    pub support: SupportSettings,
    /// Approved-answer regression thresholds.
    pub regression: RegressionSettings,
    /// How a database store is read (`[store]`; absent from the findings when default).
    #[serde(skip_serializing_if = "StoreSettings::is_default")]
    pub store: StoreSettings,
    /// Where the answer fields lie in records of another shape (`[input]`; absent from
    /// the findings when empty). See [`crate::answers::mapping`].
    #[serde(skip_serializing_if = "crate::answers::mapping::FieldMap::is_empty")]
    pub input: crate::answers::mapping::FieldMap,
}

/// `[store]`: how a SQLite or PostgreSQL store is read (see [`crate::store::sql`]).
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct StoreSettings {
    /// The SQL query whose rows are the documents (default
    /// [`crate::store::sql::DEFAULT_QUERY`]).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub query: Option<String>,
    /// `auto`, `full` or `lazy`.
    pub mode: StoreMode,
    /// In `auto` mode, the most rows read whole; above it the store is read lazily.
    pub full_max_rows: u64,
    /// Most ids one lookup of a lazy run asks for.
    pub batch: usize,
}

impl Default for StoreSettings {
    fn default() -> Self {
        StoreSettings { query: None, mode: StoreMode::Auto, full_max_rows: 200_000, batch: 500 }
    }
}

impl StoreSettings {
    /// Whether every key has its default.
    pub fn is_default(&self) -> bool {
        *self == StoreSettings::default()
    }
}

/// Whether a database store is read whole or only where the answers cite it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum StoreMode {
    /// Whole up to `full_max_rows` rows, lazily above.
    Auto,
    /// Always the whole result.
    Full,
    /// Only the cited rows; no store-wide search.
    Lazy,
}

impl std::str::FromStr for StoreMode {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        match s {
            "auto" => Ok(StoreMode::Auto),
            "full" => Ok(StoreMode::Full),
            "lazy" => Ok(StoreMode::Lazy),
            _ => Err(format!("{s:?} is not a store mode; use auto, full or lazy")),
        }
    }
}

/// `[regression]`: the least agreement an answer must keep with its `approved_answer`.
/// Each check is off until its threshold is set (there is no default a reviewer could
/// rely on: what agreement is enough depends on how the approved answers were written).
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct RegressionSettings {
    /// Lowest ROUGE-L F (0..1) against the approved answer.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub min_rouge_l: Option<f64>,
    /// Lowest sentence BLEU (0..100) against the approved answer.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub min_bleu: Option<f64>,
}

/// `[thresholds]`: a sentence scoring at or above `supported` is supported; at or above
/// `partial` (and below `supported`) partial; below `partial` unsupported.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct Thresholds {
    /// Lowest score of a supported sentence.
    pub supported: f64,
    /// Lowest score of a partially supported sentence.
    pub partial: f64,
}

impl Default for Thresholds {
    fn default() -> Self {
        Thresholds { supported: 0.75, partial: 0.45 }
    }
}

/// `[gate]`: when a run fails (exit code 1).
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct Gate {
    /// Most unsupported sentences an answer may have and still pass.
    pub max_unsupported: usize,
    /// Finding kinds that fail the gate wherever they occur.
    pub fail_on: Vec<String>,
    /// Whether lines of the answers file that could not be read are tolerated.
    pub allow_rejected_lines: bool,
}

impl Default for Gate {
    fn default() -> Self {
        Gate {
            max_unsupported: 0,
            fail_on: [
                "dead",
                "forbidden",
                "bad_locator",
                "quote_mismatch",
                "number_mismatch",
                "changed_term",
                "restricted_match",
            ]
            .map(str::to_owned)
            .to_vec(),
            allow_rejected_lines: false,
        }
    }
}

impl Gate {
    /// Whether one finding of `kind` fails the gate by itself: it is listed in `fail_on`,
    /// or it is a `rejected_line` and rejected lines are not allowed. (`unsupported`
    /// sentences are also counted against `max_unsupported` by the caller.)
    pub fn fails_on(&self, kind: &str) -> bool {
        self.fail_on.iter().any(|k| k == kind)
            || (kind == "rejected_line" && !self.allow_rejected_lines)
    }
}

/// `[limits]`: bounds that keep a hostile or broken input from exhausting memory or
/// stack. Inputs beyond them are reported, never read.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct Limits {
    /// Longest answers-file line, in bytes.
    pub max_line_bytes: usize,
    /// Most citations per answer.
    pub max_citations: usize,
    /// Largest document file the store reads, in bytes.
    pub max_document_bytes: u64,
    /// Deepest element nesting the HTML extractor follows.
    pub max_html_depth: usize,
    /// Longest identifier (answer id, user, group, ref, document id, chunk id), in bytes.
    pub max_id_bytes: usize,
}

impl Default for Limits {
    fn default() -> Self {
        Limits {
            max_line_bytes: 8 * 1024 * 1024,
            max_citations: 256,
            max_document_bytes: 64 * 1024 * 1024,
            max_html_depth: 512,
            max_id_bytes: 1024,
        }
    }
}

/// `[support]`: parameters of the lexical support scorer.
///
/// The defaults are placeholders chosen by judgement, to be replaced by values
/// calibrated on labelled answers; until then treat them as tunable, not as measured.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct SupportSettings {
    /// Similarity (0..1) at or above which two tokens count as the same word despite
    /// spelling differences.
    pub fuzzy_threshold: f64,
    /// Most consecutive sentences of a passage joined into one evidence window.
    pub window_sentences: usize,
    /// How much better (in score, 0..1) another document must support a sentence than the
    /// cited one before the sentence is flagged `misattributed`.
    pub misattribution_margin: f64,
    /// Score (0..1) at or above which a match in a document the user may not read is
    /// flagged `restricted_match`.
    pub restricted_match: f64,
}

impl Default for SupportSettings {
    fn default() -> Self {
        SupportSettings {
            fuzzy_threshold: 0.85,
            window_sentences: 3,
            misattribution_margin: 0.15,
            restricted_match: 0.75,
        }
    }
}

/// A setting that is well-formed TOML but not a usable value.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct InvalidSetting {
    /// Dotted key path, e.g. `thresholds.partial` or `gate.fail_on[2]`.
    pub key: String,
    /// What is wrong with it.
    pub message: String,
}

impl fmt::Display for InvalidSetting {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}: {}", self.key, self.message)
    }
}

/// Why a config file could not be used.
#[derive(Debug, thiserror::Error)]
pub enum ConfigError {
    /// The file could not be read.
    #[error("{}: cannot read the config: {source}", path.display())]
    Read {
        /// The config file.
        path: PathBuf,
        /// The underlying error.
        #[source]
        source: std::io::Error,
    },
    /// The file is not valid TOML, has a key of the wrong type or an unknown key, or
    /// holds a value out of range. Displayed as `path:line:column: key: message`.
    #[error("{}", located(path, *line, *column, key.as_deref(), message))]
    Invalid {
        /// The config file.
        path: PathBuf,
        /// 1-based line, where known.
        line: Option<usize>,
        /// 1-based column in characters, where known.
        column: Option<usize>,
        /// Dotted key path, where one is at fault.
        key: Option<String>,
        /// What is wrong.
        message: String,
    },
}

fn located(
    path: &Path,
    line: Option<usize>,
    column: Option<usize>,
    key: Option<&str>,
    message: &str,
) -> String {
    let mut s = path.display().to_string();
    if let Some(line) = line {
        s.push_str(&format!(":{line}"));
        if let Some(column) = column {
            s.push_str(&format!(":{column}"));
        }
    }
    if let Some(key) = key {
        s.push_str(&format!(": {key}"));
    }
    s.push_str(&format!(": {message}"));
    s
}

impl Config {
    /// Reads, parses and validates a config file.
    pub fn load(path: impl AsRef<Path>) -> Result<Config, ConfigError> {
        let path = path.as_ref();
        let bytes = std::fs::read(path)
            .map_err(|source| ConfigError::Read { path: path.to_owned(), source })?;
        let text = std::str::from_utf8(&bytes).map_err(|e| ConfigError::Invalid {
            path: path.to_owned(),
            line: None,
            column: None,
            key: None,
            message: format!("not UTF-8 (at byte {})", e.valid_up_to()),
        })?;
        Config::from_toml(text, path)
    }

    /// Parses and validates config text; `origin` names it in errors.
    pub fn from_toml(text: &str, origin: &Path) -> Result<Config, ConfigError> {
        // Editors on some systems write a byte order mark, which TOML does not allow;
        // it carries no meaning, so it is dropped (offsets below refer to the rest).
        let text = text.strip_prefix('\u{feff}').unwrap_or(text);
        let invalid = |span: Option<Range<usize>>, key: Option<String>, message: String| {
            let (line, column) = match span {
                Some(span) => {
                    let (l, c) = line_column(text, span.start);
                    (Some(l), Some(c))
                }
                None => (None, None),
            };
            ConfigError::Invalid { path: origin.to_owned(), line, column, key, message }
        };
        let config: Config = toml::from_str(text).map_err(|e| {
            let span = e.span();
            // The key is found in a spanned parse of the same text; when the text is not
            // even TOML there is no key to name, only a position.
            let key = span
                .as_ref()
                .and_then(|s| DeTable::parse(text).ok().and_then(|t| key_at(t.get_ref(), s.start)));
            invalid(span, key, e.message().trim_end().to_owned())
        })?;
        config.validate().map_err(|bad| {
            let span = DeTable::parse(text).ok().and_then(|t| span_of(t.get_ref(), &bad.key));
            invalid(span, Some(bad.key), bad.message)
        })?;
        Ok(config)
    }

    /// Checks the values' ranges and relations.
    pub fn validate(&self) -> Result<(), InvalidSetting> {
        let bad = |key: &str, message: String| Err(InvalidSetting { key: key.to_owned(), message });
        let fraction = |key: &str, v: f64| {
            if (0.0..=1.0).contains(&v) {
                Ok(())
            } else {
                bad(key, format!("must be between 0 and 1, found {v}"))
            }
        };
        let t = &self.thresholds;
        fraction("thresholds.supported", t.supported)?;
        fraction("thresholds.partial", t.partial)?;
        if t.partial > t.supported {
            return bad(
                "thresholds.partial",
                format!(
                    "must not exceed thresholds.supported ({}), found {}",
                    t.supported, t.partial
                ),
            );
        }
        for (i, kind) in self.gate.fail_on.iter().enumerate() {
            if !is_finding_kind(kind) {
                return bad(
                    &format!("gate.fail_on[{i}]"),
                    format!(
                        "unknown finding kind {kind:?}; known kinds: {}",
                        FINDING_KINDS.join(", ")
                    ),
                );
            }
            if kind == "rejected_line" && self.gate.allow_rejected_lines {
                return bad(
                    &format!("gate.fail_on[{i}]"),
                    "lists rejected_line, but gate.allow_rejected_lines = true allows them".into(),
                );
            }
        }
        let l = &self.limits;
        for (key, value) in [
            ("limits.max_line_bytes", l.max_line_bytes as u64),
            ("limits.max_citations", l.max_citations as u64),
            ("limits.max_document_bytes", l.max_document_bytes),
            ("limits.max_html_depth", l.max_html_depth as u64),
            ("limits.max_id_bytes", l.max_id_bytes as u64),
        ] {
            if value == 0 {
                return bad(key, "must be at least 1".into());
            }
        }
        let s = &self.support;
        fraction("support.fuzzy_threshold", s.fuzzy_threshold)?;
        fraction("support.misattribution_margin", s.misattribution_margin)?;
        fraction("support.restricted_match", s.restricted_match)?;
        if s.window_sentences == 0 {
            return bad("support.window_sentences", "must be at least 1".into());
        }
        if self.store.batch == 0 {
            return bad("store.batch", "must be at least 1".into());
        }
        if self.store.query.as_deref().is_some_and(|q| q.trim().is_empty()) {
            return bad("store.query", "is empty".into());
        }
        if let Err(e) = self.input.validate() {
            return bad(&e.key, e.message);
        }
        let r = &self.regression;
        if let Some(v) = r.min_rouge_l {
            fraction("regression.min_rouge_l", v)?;
        }
        if let Some(v) = r.min_bleu {
            if !(0.0..=100.0).contains(&v) {
                return bad("regression.min_bleu", format!("must be between 0 and 100, found {v}"));
            }
        }
        // A gate rule on a check that is off could never fire: say so rather than let the
        // gate quietly pass.
        for (i, kind) in self.gate.fail_on.iter().enumerate() {
            let (needs, set) = match kind.as_str() {
                "below_approved_rouge_l" => ("regression.min_rouge_l", r.min_rouge_l.is_some()),
                "below_approved_bleu" => ("regression.min_bleu", r.min_bleu.is_some()),
                _ => continue,
            };
            if !set {
                return bad(
                    &format!("gate.fail_on[{i}]"),
                    format!("lists {kind}, but {needs} is not set, so it can never fire"),
                );
            }
        }
        Ok(())
    }
}

/// 1-based line and column (in characters) of byte `offset` in `text`.
fn line_column(text: &str, offset: usize) -> (usize, usize) {
    let mut offset = offset.min(text.len());
    while !text.is_char_boundary(offset) {
        offset -= 1;
    }
    let before = &text[..offset];
    let line = before.matches('\n').count() + 1;
    let line_start = before.rfind('\n').map_or(0, |p| p + 1);
    (line, text[line_start..offset].chars().count() + 1)
}

/// The dotted path of the deepest key whose name or value spans `offset`.
fn key_at(table: &DeTable<'_>, offset: usize) -> Option<String> {
    let mut best: Option<(usize, String)> = None;
    walk_table(table, "", &mut |path, depth, key_span, value_span| {
        let hit = covers(key_span, offset) || covers(value_span, offset);
        if hit && best.as_ref().is_none_or(|(d, _)| depth >= *d) {
            best = Some((depth, path.to_owned()));
        }
    });
    best.map(|(_, path)| path)
}

/// The span of the key (or array element) at the dotted path `key`, if the file has it.
fn span_of(table: &DeTable<'_>, key: &str) -> Option<Range<usize>> {
    let mut found = None;
    walk_table(table, "", &mut |path, _, key_span, _| {
        if path == key && found.is_none() {
            found = Some(key_span);
        }
    });
    found
}

fn covers(span: Range<usize>, offset: usize) -> bool {
    span.contains(&offset) || (span.is_empty() && span.start == offset)
}

type Visit<'v> = dyn FnMut(&str, usize, Range<usize>, Range<usize>) + 'v;

/// Calls `visit(path, depth, key_span, value_span)` for every key and array element.
fn walk_table(table: &DeTable<'_>, prefix: &str, visit: &mut Visit<'_>) {
    for (key, value) in table.iter() {
        let path = if prefix.is_empty() {
            key.get_ref().to_string()
        } else {
            format!("{prefix}.{}", key.get_ref())
        };
        visit(&path, path.matches('.').count(), key.span(), value.span());
        walk_value(value, &path, visit);
    }
}

fn walk_value(value: &Spanned<DeValue<'_>>, path: &str, visit: &mut Visit<'_>) {
    match value.get_ref() {
        DeValue::Table(t) => walk_table(t, path, visit),
        DeValue::Array(items) => {
            for (i, item) in items.iter().enumerate() {
                let item_path = format!("{path}[{i}]");
                visit(&item_path, path.matches('.').count() + 1, item.span(), item.span());
                walk_value(item, &item_path, visit);
            }
        }
        _ => {}
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse(text: &str) -> Result<Config, ConfigError> {
        Config::from_toml(text, Path::new("plumbline.toml"))
    }

    fn error(text: &str) -> String {
        parse(text).unwrap_err().to_string()
    }

    /// The "Gate rules" block of SPEC.md, verbatim.
    const SPEC_DEFAULTS: &str = r#"
[thresholds]
supported = 0.75        # score at or above: supported
partial   = 0.45        # at or above (and below supported): partial

[gate]
max_unsupported = 0     # per answer
fail_on = ["dead", "forbidden", "bad_locator", "quote_mismatch", "number_mismatch", "changed_term", "restricted_match"]
allow_rejected_lines = false
"#;

    #[test]
    fn defaults_equal_the_spec() {
        assert_eq!(parse(SPEC_DEFAULTS).unwrap(), Config::default());
        assert_eq!(parse("").unwrap(), Config::default());
    }

    #[test]
    fn documented_example_equals_the_defaults() {
        // The block in this module's documentation, which also lists [limits] and [support].
        let doc = include_str!("config.rs");
        let start = doc.find("//! ```toml\n").unwrap() + "//! ```toml\n".len();
        let end = start + doc[start..].find("//! ```\n").unwrap();
        let example: String = doc[start..end]
            .lines()
            .map(|l| l.trim_start_matches("//!").trim_start())
            .collect::<Vec<_>>()
            .join("\n");
        assert_eq!(parse(&example).unwrap(), Config::default());
    }

    #[test]
    fn default_limits_and_support() {
        let c = Config::default();
        assert_eq!(c.limits.max_line_bytes, 8 * 1024 * 1024);
        assert_eq!(c.limits.max_citations, 256);
        assert_eq!(c.limits.max_document_bytes, 64 * 1024 * 1024);
        assert_eq!(c.limits.max_html_depth, 512);
        assert_eq!(c.limits.max_id_bytes, 1024);
        assert_eq!(c.support.fuzzy_threshold, 0.85);
        assert_eq!(c.support.window_sentences, 3);
        assert_eq!(c.support.misattribution_margin, 0.15);
        assert_eq!(c.support.restricted_match, 0.75);
    }

    #[test]
    fn partial_tables_keep_other_defaults() {
        let c = parse("[gate]\nmax_unsupported = 2\n").unwrap();
        assert_eq!(c.gate.max_unsupported, 2);
        assert_eq!(c.gate.fail_on, Gate::default().fail_on);
        assert_eq!(c.thresholds, Thresholds::default());
    }

    #[test]
    fn default_fail_on_kinds_are_known() {
        for k in &Gate::default().fail_on {
            assert!(is_finding_kind(k), "{k}");
        }
    }

    #[test]
    fn finding_kinds_are_unique() {
        let mut kinds = FINDING_KINDS.to_vec();
        kinds.sort_unstable();
        kinds.dedup();
        assert_eq!(kinds.len(), FINDING_KINDS.len());
        assert!(!is_finding_kind("ok"));
    }

    #[test]
    fn regression_thresholds_are_off_by_default_and_checked() {
        assert_eq!(Config::default().regression, RegressionSettings::default());
        assert_eq!(Config::default().regression.min_rouge_l, None);
        let c = parse(
            "[regression]\nmin_rouge_l = 0.4\nmin_bleu = 20\n[gate]\nfail_on = [\"below_approved_bleu\"]\n",
        )
        .unwrap();
        assert_eq!(c.regression.min_rouge_l, Some(0.4));
        assert_eq!(c.regression.min_bleu, Some(20.0));
        let e = error("[regression]\nmin_rouge_l = 1.5\n");
        assert!(
            e.starts_with("plumbline.toml:2:1: regression.min_rouge_l: must be between 0 and 1"),
            "{e}"
        );
        let e = error("[regression]\nmin_bleu = 101\n");
        assert!(e.contains("regression.min_bleu: must be between 0 and 100"), "{e}");
        let e = error("[gate]\nfail_on = [\"dead\", \"below_approved_rouge_l\"]\n");
        assert!(
            e.contains("gate.fail_on[1]: lists below_approved_rouge_l, but regression.min_rouge_l is not set"),
            "{e}"
        );
        // Unset thresholds leave no trace in the recorded settings.
        let v = serde_json::to_value(Config::default()).unwrap();
        assert_eq!(v["regression"], serde_json::json!({}));
    }

    #[test]
    fn unknown_key_names_the_key_and_line() {
        assert_eq!(
            error("[gate]\nmax_unsuported = 3\n"),
            "plumbline.toml:2:1: gate.max_unsuported: unknown field `max_unsuported`, expected one of `max_unsupported`, `fail_on`, `allow_rejected_lines`"
        );
    }

    #[test]
    fn unknown_table_names_the_table() {
        let e = error("[thresholds]\nsupported = 0.8\n\n[gates]\nmax_unsupported = 1\n");
        assert!(e.starts_with("plumbline.toml:4:"), "{e}");
        assert!(e.contains("gates: unknown field `gates`"), "{e}");
    }

    #[test]
    fn wrong_type_names_the_key() {
        let e = error("[thresholds]\nsupported = \"high\"\n");
        assert!(
            e.starts_with("plumbline.toml:2:13: thresholds.supported: invalid type: string"),
            "{e}"
        );
        let e = error("[limits]\nmax_citations = -1\n");
        assert!(e.starts_with("plumbline.toml:2:17: limits.max_citations: "), "{e}");
        let e = error("[gate]\nfail_on = [\"dead\", 3]\n");
        assert!(e.starts_with("plumbline.toml:2:20: gate.fail_on[1]: "), "{e}");
    }

    #[test]
    fn dotted_and_inline_keys_are_named() {
        let e = error("gate.max_unsupported = \"x\"\n");
        assert!(e.contains("gate.max_unsupported: invalid type"), "{e}");
        let e = error("thresholds = { supported = 0.8, parital = 0.2 }\n");
        assert!(e.contains("thresholds.parital: unknown field"), "{e}");
    }

    #[test]
    fn syntax_error_gives_a_position() {
        let e = error("[gate]\nmax_unsupported = \n");
        assert!(e.starts_with("plumbline.toml:2:"), "{e}");
    }

    #[test]
    fn thresholds_must_be_ordered_fractions() {
        assert_eq!(
            error("[thresholds]\nsupported = 0.5\npartial = 0.6\n"),
            "plumbline.toml:3:1: thresholds.partial: must not exceed thresholds.supported (0.5), found 0.6"
        );
        assert_eq!(
            error("[thresholds]\nsupported = 1.5\n"),
            "plumbline.toml:2:1: thresholds.supported: must be between 0 and 1, found 1.5"
        );
        assert!(
            error("[thresholds]\npartial = nan\n")
                .contains("thresholds.partial: must be between 0 and 1")
        );
        assert!(error("[thresholds]\npartial = -0.1\n").contains("thresholds.partial"));
        // Equal thresholds leave no partial band, which is allowed.
        assert!(parse("[thresholds]\nsupported = 0.6\npartial = 0.6\n").is_ok());
        // A default in effect is compared too, and the error still names the line.
        assert!(
            error("[thresholds]\npartial = 0.9\n")
                .starts_with("plumbline.toml:2:1: thresholds.partial")
        );
    }

    #[test]
    fn fail_on_kinds_must_be_known() {
        let e = error("[gate]\nfail_on = [\"dead\", \"deadd\"]\n");
        assert!(
            e.starts_with("plumbline.toml:2:20: gate.fail_on[1]: unknown finding kind \"deadd\""),
            "{e}"
        );
        assert!(parse("[gate]\nfail_on = [\"unsupported\", \"stale\", \"uncited\"]\n").is_ok());
        assert!(parse("[gate]\nfail_on = []\n").unwrap().gate.fail_on.is_empty());
    }

    #[test]
    fn rejected_line_in_fail_on_contradicting_allow() {
        let e = error("[gate]\nfail_on = [\"rejected_line\"]\nallow_rejected_lines = true\n");
        assert!(e.contains("gate.fail_on[0]: lists rejected_line"), "{e}");
    }

    #[test]
    fn limits_and_support_are_checked() {
        assert_eq!(
            error("[limits]\nmax_line_bytes = 0\n"),
            "plumbline.toml:2:1: limits.max_line_bytes: must be at least 1"
        );
        assert!(error("[support]\nwindow_sentences = 0\n").contains("support.window_sentences"));
        assert!(error("[support]\nfuzzy_threshold = 2.0\n").contains("support.fuzzy_threshold"));
        assert!(
            error("[support]\nwindo_sentences = 2\n")
                .contains("support.windo_sentences: unknown field")
        );
    }

    #[test]
    fn gate_fails_on() {
        let g = Gate::default();
        assert!(g.fails_on("dead"));
        assert!(!g.fails_on("unused"));
        assert!(g.fails_on("rejected_line"));
        let g = Gate { allow_rejected_lines: true, ..Gate::default() };
        assert!(!g.fails_on("rejected_line"));
    }

    #[test]
    fn serialises_for_the_findings_document() {
        let v = serde_json::to_value(Config::default()).unwrap();
        assert_eq!(v["thresholds"]["supported"], 0.75);
        assert_eq!(v["gate"]["fail_on"][0], "dead");
        assert_eq!(v["limits"]["max_id_bytes"], 1024);
        // And round-trips through TOML.
        let text = toml::to_string(&Config::default()).unwrap();
        assert_eq!(parse(&text).unwrap(), Config::default());
    }

    #[test]
    fn bom_is_tolerated() {
        assert_eq!(parse("\u{feff}[gate]\nmax_unsupported = 1\n").unwrap().gate.max_unsupported, 1);
    }

    #[test]
    fn load_reads_files_and_names_them() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("gate.toml");
        std::fs::write(&path, "[gate]\nmax_unsupported = 4\n").unwrap();
        assert_eq!(Config::load(&path).unwrap().gate.max_unsupported, 4);

        std::fs::write(&path, b"[gate]\nfail_on = [\"\xFF\"]\n").unwrap();
        let e = Config::load(&path).unwrap_err().to_string();
        assert!(e.contains("gate.toml") && e.contains("not UTF-8"), "{e}");

        let missing = dir.path().join("missing.toml");
        let e = Config::load(&missing).unwrap_err();
        assert!(matches!(e, ConfigError::Read { .. }));
        assert!(e.to_string().contains("missing.toml: cannot read the config"));
    }
}
