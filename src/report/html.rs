//! The HTML report: one self-contained page a reviewer reads, filters, annotates with
//! decisions and prints for sign-off.
//!
//! The page is `templates/report.html` rendered by minijinja from the view model in
//! `view`; its stylesheet and script (`templates/report.css`, `templates/report.js`) are
//! embedded in the binary with `include_str!` and inlined, so the file opens from disk
//! with no network. Every string of the report reaches the page through the template's
//! HTML auto-escaping (the template is named `.html`, undefined values are errors), and
//! none is ever placed inside the `<script>` element: the script reads what it needs from
//! the DOM.
//!
//! A `Content-Security-Policy` meta element allows nothing to load and nothing to run but
//! this page's own inline style and script, named by their SHA-256 hashes (CSP Level 3,
//! "hash-source"). So even text that got past the escaping could not run.

use std::sync::OnceLock;

use base64::Engine as _;
use minijinja::syntax::SyntaxConfig;
use minijinja::value::{Serde, Value};
use minijinja::{Environment, UndefinedBehavior, context};
use sha2::{Digest, Sha256};

use crate::findings::Report;

pub(crate) mod view;

const TEMPLATE: &str = include_str!("../../templates/report.html");
const STYLE: &str = include_str!("../../templates/report.css");
const SCRIPT: &str = include_str!("../../templates/report.js");

/// `'sha256-…'` of a text, as CSP's hash-source writes it.
fn hash_source(text: &str) -> String {
    let digest = Sha256::digest(text.as_bytes());
    format!("'sha256-{}'", base64::engine::general_purpose::STANDARD.encode(digest))
}

/// The page's Content-Security-Policy: nothing from anywhere, except the page's own
/// inline style and script by hash and `data:` images.
pub fn content_security_policy() -> &'static str {
    static CSP: OnceLock<String> = OnceLock::new();
    CSP.get_or_init(|| {
        format!(
            "default-src 'none'; script-src {}; style-src {}; img-src data:; \
             base-uri 'none'; form-action 'none'",
            hash_source(SCRIPT),
            hash_source(STYLE)
        )
    })
}

fn environment() -> Result<Environment<'static>, minijinja::Error> {
    let mut env = Environment::new();
    env.set_undefined_behavior(UndefinedBehavior::Strict);
    // Block tags on their own lines leave no blank lines behind: readable template,
    // lean page.
    env.set_syntax(SyntaxConfig::builder().trim_blocks(true).lstrip_blocks(true).build()?);
    env.add_template("report.html", TEMPLATE)?;
    Ok(env)
}

/// Renders the self-contained HTML report.
pub fn render(report: &Report) -> anyhow::Result<String> {
    let page = view::Page::build(report);
    let env = environment()?;
    let template = env.get_template("report.html")?;
    let html = template
        .render(context! {
            page => Value::from(Serde(&page)),
            csp => content_security_policy(),
            // Our own files, inserted byte for byte so that their hashes hold.
            style => Value::from_safe_string(STYLE.to_owned()),
            script => Value::from_safe_string(SCRIPT.to_owned()),
        })
        .map_err(|e| anyhow::anyhow!("rendering the HTML report: {e:#}"))?;
    Ok(html)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn policy_names_the_inlined_files() {
        let csp = content_security_policy();
        assert!(csp.starts_with("default-src 'none';"));
        assert!(csp.contains(&hash_source(SCRIPT)) && csp.contains(&hash_source(STYLE)));
        // The digest of the empty string, to pin the encoding.
        assert_eq!(hash_source(""), "'sha256-47DEQpj8HBSa+/TImW+5JCeuQeRkm5NMpJWZG3hSuFU='");
    }

    #[test]
    fn assets_hold_nothing_the_policy_would_block() {
        // The policy allows no style attributes, no event-handler attributes and no
        // `javascript:` URLs; the template must not need them.
        for bad in [" style=\"", " onclick=", " onload=", "javascript:"] {
            assert!(!TEMPLATE.contains(bad), "template contains {bad:?}");
        }
        assert!(!SCRIPT.contains("</script"), "the script would end its own element");
        assert!(!STYLE.contains("</style"), "the stylesheet would end its own element");
    }
}
