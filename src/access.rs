//! Entitlements: which groups a user is in, and whether those groups may read a document.
//!
//! An answer that draws on a document its user may not read is a data leak even when every
//! sentence is supported, so each citation is checked against the user's groups. Both sides
//! can be unknown (a log without groups and no `--principals` entry; a store without access
//! lists), and an unknown is reported as its own outcome, never guessed into a pass or a
//! failure. The rules, in the order [`decide`] applies them:
//!
//! 1. A document whose access includes [`EVERYONE`] (`*`) may be read by anyone, known
//!    user or not.
//! 2. A document whose access is unknown gives [`Entitlement::AccessUnknown`], whether or
//!    not the user is known: knowing the user would not settle it.
//! 3. A document with an empty access list may be read by no one: [`Entitlement::Forbidden`],
//!    again whatever the user.
//! 4. An unknown user gives [`Entitlement::PrincipalUnknown`].
//! 5. Otherwise the document may be read when the user shares a group with its access
//!    list. Group names compare exactly (case-sensitive). `*` among the *user's* groups has
//!    no special meaning: it would let a log grant itself every document.

use std::collections::BTreeMap;
use std::path::Path;

use serde::Serialize;
use serde_json::Value;

use crate::answers::{InputError, found, parse_strict, syntax_message};

/// The group that, in a document's access list, means every user.
pub const EVERYONE: &str = "*";

/// Users and their groups, as read from `--principals`.
pub type Principals = BTreeMap<String, Vec<String>>;

/// The outcome of checking one user against one document.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Entitlement {
    /// The user may read the document.
    Allowed,
    /// The user's groups do not include the document's access.
    Forbidden,
    /// The document's access is not known.
    AccessUnknown,
    /// The user's groups are not known.
    PrincipalUnknown,
}

impl Entitlement {
    /// The name used in findings: the citation status or finding kind for the outcomes
    /// that are findings (`forbidden`, `access_unknown`, `principal_unknown`), and
    /// `allowed` for the one that is not.
    pub fn as_str(self) -> &'static str {
        match self {
            Entitlement::Allowed => "allowed",
            Entitlement::Forbidden => "forbidden",
            Entitlement::AccessUnknown => "access_unknown",
            Entitlement::PrincipalUnknown => "principal_unknown",
        }
    }
}

/// Decides whether a user in `user_groups` may read a document open to `doc_access`;
/// `None` means unknown. See the module documentation for the order of the rules.
pub fn decide(user_groups: Option<&[String]>, doc_access: Option<&[String]>) -> Entitlement {
    let Some(access) = doc_access else { return Entitlement::AccessUnknown };
    if access.iter().any(|g| g == EVERYONE) {
        return Entitlement::Allowed;
    }
    if access.is_empty() {
        return Entitlement::Forbidden;
    }
    let Some(groups) = user_groups else { return Entitlement::PrincipalUnknown };
    // `access` holds no `*` here (rule 1), so a `*` among the user's groups matches nothing.
    if groups.iter().any(|g| access.contains(g)) {
        Entitlement::Allowed
    } else {
        Entitlement::Forbidden
    }
}

/// The groups of the user who asked: the answer record's own `groups` when it has them
/// (the log knows best what the assistant was told), else the `--principals` entry for
/// `user`, else unknown.
pub fn user_groups<'a>(
    answer_groups: Option<&'a [String]>,
    user: Option<&str>,
    principals: Option<&'a Principals>,
) -> Option<&'a [String]> {
    if answer_groups.is_some() {
        return answer_groups;
    }
    let (user, principals) = (user?, principals?);
    principals.get(user).map(Vec::as_slice)
}

/// Reads a principals file: a JSON object mapping each user id to its list of groups.
pub fn load_principals(path: impl AsRef<Path>) -> Result<Principals, InputError> {
    let path = path.as_ref();
    let bytes = std::fs::read(path).map_err(|e| InputError::io(path, &e))?;
    let text = std::str::from_utf8(&bytes)
        .map_err(|e| InputError::new(path, format!("not UTF-8 (at byte {})", e.valid_up_to())))?;
    parse_principals(text, path)
}

/// Parses principals text; `origin` names it in errors.
///
/// A user listed twice is an error rather than "last one wins": the two entries would
/// grant different documents, and which one the assistant used cannot be known.
pub fn parse_principals(text: &str, origin: &Path) -> Result<Principals, InputError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let value = parse_strict(text).map_err(|e| {
        let (message, column) = syntax_message(&e);
        let error = InputError::new(origin, format!("invalid JSON at column {column}: {message}"));
        if e.line() == 0 { error } else { error.at_line(e.line()) }
    })?;
    let Value::Object(entries) = value else {
        return Err(InputError::new(
            origin,
            format!("expected an object mapping users to groups, found {}", found(&value)),
        ));
    };
    let mut principals = Principals::new();
    for (user, groups) in entries {
        let Value::Array(items) = groups else {
            return Err(InputError::new(
                origin,
                format!("expected an array of group names, found {}", found(&groups)),
            )
            .in_field(user));
        };
        let mut list = Vec::with_capacity(items.len());
        for (i, item) in items.into_iter().enumerate() {
            match item {
                Value::String(g) => list.push(g),
                other => {
                    return Err(InputError::new(
                        origin,
                        format!("expected a string, found {}", found(&other)),
                    )
                    .in_field(format!("{user}[{i}]")));
                }
            }
        }
        principals.insert(user, list);
    }
    Ok(principals)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn v(groups: &[&str]) -> Vec<String> {
        groups.iter().map(|g| g.to_string()).collect()
    }

    /// User groups, document access, expected outcome.
    type Row<'a> = (Option<&'a [String]>, Option<&'a [String]>, Entitlement);

    #[test]
    fn decide_table() {
        use Entitlement::*;
        let hr = v(&["hr"]);
        let hr_ops = v(&["hr", "ops"]);
        let ops = v(&["ops"]);
        let all = v(&["*"]);
        let none: Vec<String> = vec![];
        let star_user = v(&["*"]);
        #[rustfmt::skip]
        let table: &[Row<'_>] = &[
            // user groups        doc access        outcome
            (Some(&hr),           Some(&hr_ops),    Allowed),
            (Some(&hr_ops),       Some(&ops),       Allowed),
            (Some(&ops),          Some(&hr),        Forbidden),
            (Some(&none),         Some(&hr),        Forbidden),
            (Some(&none),         Some(&all),       Allowed),
            (Some(&hr),           Some(&all),       Allowed),
            (None,                Some(&all),       Allowed),
            (None,                Some(&hr),        PrincipalUnknown),
            (Some(&hr),           None,             AccessUnknown),
            (None,                None,             AccessUnknown),
            (Some(&hr),           Some(&none),      Forbidden),
            (None,                Some(&none),      Forbidden),
            (Some(&star_user),    Some(&hr),        Forbidden),
        ];
        for (i, (user, doc, want)) in table.iter().enumerate() {
            assert_eq!(decide(*user, *doc), *want, "row {i}: {user:?} / {doc:?}");
        }
    }

    #[test]
    fn group_names_are_case_sensitive() {
        assert_eq!(decide(Some(&v(&["HR"])), Some(&v(&["hr"]))), Entitlement::Forbidden);
    }

    #[test]
    fn entitlement_names() {
        assert_eq!(Entitlement::AccessUnknown.as_str(), "access_unknown");
        assert_eq!(
            serde_json::to_value(Entitlement::PrincipalUnknown).unwrap(),
            "principal_unknown"
        );
    }

    #[test]
    fn user_groups_prefers_the_record() {
        let mut p = Principals::new();
        p.insert("u-1".into(), v(&["ops"]));
        let record = v(&["hr"]);
        assert_eq!(user_groups(Some(&record), Some("u-1"), Some(&p)), Some(&record[..]));
        assert_eq!(user_groups(None, Some("u-1"), Some(&p)), Some(&p["u-1"][..]));
        assert_eq!(user_groups(None, Some("u-2"), Some(&p)), None);
        assert_eq!(user_groups(None, None, Some(&p)), None);
        assert_eq!(user_groups(None, Some("u-1"), None), None);
        // An empty list in the record is known: the user is in no group.
        let empty: Vec<String> = vec![];
        assert_eq!(user_groups(Some(&empty), Some("u-1"), Some(&p)), Some(&empty[..]));
    }

    fn parse(text: &str) -> Result<Principals, InputError> {
        parse_principals(text, Path::new("principals.json"))
    }

    #[test]
    fn parses_principals() {
        let p = parse(r#"{"u-1": ["hr", "ops"], "u-2": []}"#).unwrap();
        assert_eq!(p["u-1"], v(&["hr", "ops"]));
        assert!(p["u-2"].is_empty());
        assert!(parse("\u{feff}{}").unwrap().is_empty());
    }

    #[test]
    fn principals_errors_name_file_and_user() {
        assert_eq!(
            parse(r#"{"u-1": "hr"}"#).unwrap_err().to_string(),
            r#"principals.json: u-1: expected an array of group names, found "hr""#
        );
        assert_eq!(
            parse(r#"{"u-1": ["hr", 2]}"#).unwrap_err().to_string(),
            "principals.json: u-1[1]: expected a string, found 2"
        );
        assert_eq!(
            parse(r#"["u-1"]"#).unwrap_err().to_string(),
            "principals.json: expected an object mapping users to groups, found an array"
        );
        let e = parse("{\n  \"u-1\": [\"hr\"],\n  \"u-1\": [\"ops\"]\n}").unwrap_err();
        assert_eq!(e.line, Some(3));
        assert!(e.message.contains(r#"duplicate key "u-1""#), "{e}");
        let e = parse("{\n  \"u-1\": [\"hr\"\n}").unwrap_err();
        assert_eq!(e.line, Some(3));
        assert!(e.to_string().starts_with("principals.json:3: invalid JSON at column 1"), "{e}");
    }

    #[test]
    fn load_principals_reads_a_file() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("principals.json");
        std::fs::write(&path, r#"{"u-1": ["hr"]}"#).unwrap();
        assert_eq!(load_principals(&path).unwrap()["u-1"], v(&["hr"]));
        let e = load_principals(dir.path().join("none.json")).unwrap_err();
        assert!(e.to_string().contains("none.json: cannot read"), "{e}");
        std::fs::write(&path, b"{\"\xFF\": []}").unwrap();
        assert!(load_principals(&path).unwrap_err().to_string().contains("not UTF-8"));
    }
}
