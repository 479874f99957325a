//! Lexical confinement: whether a document reference or a manifest path could lead outside
//! the store.
//!
//! Every check here is on the string alone; nothing touches the filesystem. A reference that
//! passes is only ever looked up among the documents the store already read.

use std::fmt;

/// Why a reference or path leads outside the store.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Escape {
    /// A `..` component (with `/` or `\` as separators).
    ParentDir,
    /// An absolute path (`/etc/passwd`, `\x`).
    Absolute,
    /// A Windows drive path (`C:\x`, `c:x`).
    DrivePath,
    /// A UNC or device path (`\\server\share`, `//server/share`, `\\?\C:\x`).
    UncPath,
    /// A NUL byte, which no file name may hold and which truncates paths in C APIs.
    NulByte,
    /// Percent-encoding (possibly repeated) that decodes to one of the forms above
    /// (`%2e%2e/x`, `..%2fx`, `%252e%252e`).
    PercentEncoded,
    /// A URL (`file:///etc/passwd`, `https://host/x`).
    Url,
    /// A home-directory path (`~/x`).
    HomeDir,
}

impl Escape {
    /// A short code: `parent_dir`, `absolute`, `drive_path`, `unc_path`, `nul_byte`,
    /// `percent_encoded`, `url` or `home_dir`.
    pub fn code(self) -> &'static str {
        match self {
            Escape::ParentDir => "parent_dir",
            Escape::Absolute => "absolute",
            Escape::DrivePath => "drive_path",
            Escape::UncPath => "unc_path",
            Escape::NulByte => "nul_byte",
            Escape::PercentEncoded => "percent_encoded",
            Escape::Url => "url",
            Escape::HomeDir => "home_dir",
        }
    }
}

impl fmt::Display for Escape {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Escape::ParentDir => "has a `..` component",
            Escape::Absolute => "is an absolute path",
            Escape::DrivePath => "is a Windows drive path",
            Escape::UncPath => "is a UNC or device path",
            Escape::NulByte => "contains a NUL byte",
            Escape::PercentEncoded => "percent-encodes a `..` component or a path that is absolute",
            Escape::Url => "is a URL, not a path inside the store",
            Escape::HomeDir => "starts at a home directory",
        })
    }
}

/// Checks that `reference` stays inside the store, lexically.
pub fn check(reference: &str) -> Result<(), Escape> {
    if reference.contains('\0') {
        return Err(Escape::NulByte);
    }
    check_plain(reference)?;
    // Decode up to three times, to catch double and triple encoding.
    let mut current = std::borrow::Cow::Borrowed(reference);
    for _ in 0..3 {
        if !current.contains('%') {
            break;
        }
        let decoded = percent_decode(&current);
        if decoded == current {
            break;
        }
        if decoded.contains('\0') || check_plain(&decoded).is_err() {
            return Err(Escape::PercentEncoded);
        }
        current = std::borrow::Cow::Owned(decoded);
    }
    Ok(())
}

fn check_plain(s: &str) -> Result<(), Escape> {
    let b = s.as_bytes();
    if s.starts_with("\\\\") || s.starts_with("//") || s.starts_with("\\/") || s.starts_with("/\\")
    {
        return Err(Escape::UncPath);
    }
    if s.starts_with('/') || s.starts_with('\\') {
        return Err(Escape::Absolute);
    }
    if b.len() >= 2 && b[0].is_ascii_alphabetic() && b[1] == b':' {
        return Err(Escape::DrivePath);
    }
    if let Some(colon) = s.find("://") {
        let scheme = &s[..colon];
        if !scheme.is_empty()
            && scheme.starts_with(|c: char| c.is_ascii_alphabetic())
            && scheme.chars().all(|c| c.is_ascii_alphanumeric() || matches!(c, '+' | '-' | '.'))
        {
            return Err(Escape::Url);
        }
    }
    let mut components = s.split(['/', '\\']);
    if components.clone().next() == Some("~") {
        return Err(Escape::HomeDir);
    }
    if components.any(|c| c == "..") {
        return Err(Escape::ParentDir);
    }
    Ok(())
}

/// Decodes `%XX` escapes; anything malformed is kept as it is.
fn percent_decode(s: &str) -> String {
    let b = s.as_bytes();
    let mut out = Vec::with_capacity(b.len());
    let mut i = 0;
    while i < b.len() {
        if b[i] == b'%' && i + 2 < b.len() {
            if let (Some(h), Some(l)) = (hex(b[i + 1]), hex(b[i + 2])) {
                out.push(h * 16 + l);
                i += 3;
                continue;
            }
        }
        out.push(b[i]);
        i += 1;
    }
    String::from_utf8_lossy(&out).into_owned()
}

fn hex(c: u8) -> Option<u8> {
    match c {
        b'0'..=b'9' => Some(c - b'0'),
        b'a'..=b'f' => Some(c - b'a' + 10),
        b'A'..=b'F' => Some(c - b'A' + 10),
        _ => None,
    }
}

/// A manifest path made canonical: `.` and empty components dropped (`./hr//a.md` is
/// `hr/a.md`). `None` when nothing is left.
pub fn normalize(path: &str) -> Option<String> {
    let parts: Vec<&str> = path.split('/').filter(|c| !c.is_empty() && *c != ".").collect();
    if parts.is_empty() { None } else { Some(parts.join("/")) }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_are_classified() {
        let cases = [
            ("../x.md", Escape::ParentDir),
            ("hr/../../x.md", Escape::ParentDir),
            ("hr\\..\\x.md", Escape::ParentDir),
            ("..", Escape::ParentDir),
            ("/etc/passwd", Escape::Absolute),
            ("\\x", Escape::Absolute),
            ("C:\\x", Escape::DrivePath),
            ("c:x.md", Escape::DrivePath),
            ("\\\\srv\\x", Escape::UncPath),
            ("//srv/x", Escape::UncPath),
            ("\\\\?\\C:\\x", Escape::UncPath),
            ("a\0b.md", Escape::NulByte),
            ("%2e%2e/x", Escape::PercentEncoded),
            ("%2E%2E%2Fx", Escape::PercentEncoded),
            ("..%2fx", Escape::PercentEncoded),
            ("hr/%2e%2e%2f%2e%2e%2fx", Escape::PercentEncoded),
            ("%252e%252e/x", Escape::PercentEncoded),
            ("%2fetc%2fpasswd", Escape::PercentEncoded),
            ("a%00b", Escape::PercentEncoded),
            ("file:///etc/passwd", Escape::Url),
            ("https://example.com/x.md", Escape::Url),
            ("~/x.md", Escape::HomeDir),
        ];
        for (r, want) in cases {
            assert_eq!(check(r), Err(want), "{r:?}");
        }
    }

    #[test]
    fn ordinary_references_pass() {
        for r in [
            "hr/leave-policy.md",
            "a.b..c.md",
            "x/.../y.txt",
            "100%.md",
            "%zz.md",
            "~notes.md",
            "a%2fb.md",
        ] {
            assert_eq!(check(r), Ok(()), "{r:?}");
        }
    }

    #[test]
    fn normalize_drops_dot_and_empty_components() {
        assert_eq!(normalize("./hr//a.md").as_deref(), Some("hr/a.md"));
        assert_eq!(normalize("a.md").as_deref(), Some("a.md"));
        assert_eq!(normalize("./"), None);
    }
}
