//! JUnit XML (`--junit`): one `testcase` per answer with one `failure` per finding that
//! fails the gate (its message the finding's, its text the sentence, the citation and the
//! line), the answer's other findings in `system-out`, and one testcase with an `error`
//! per rejected input line, in the widely read `testsuites → testsuite → testcase` form.
//! Validated against the Jenkins `junit-4.xsd` schema and read back with a JUnit parser in
//! `tests/integration/formats.rs`.

use std::fmt::Write;

use crate::findings::Report;

/// Escapes text for XML 1.0 content and attribute values, dropping the control
/// characters XML 1.0 cannot carry at all (§2.2).
pub fn xml_escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            '\t' | '\n' | '\r' => out.push(c),
            c if (c as u32) < 0x20 || c == '\u{FFFE}' || c == '\u{FFFF}' => {}
            c => out.push(c),
        }
    }
    out
}

/// `s` as an XML CDATA section (a `]]>` inside is split across two sections), with the
/// characters XML 1.0 cannot carry dropped. Element text goes in CDATA so that readers
/// that mishandle entity references in text (some JUnit parsers drop them) still get it
/// whole.
pub fn cdata(s: &str) -> String {
    let clean: String = s
        .chars()
        .filter(|&c| {
            matches!(c, '\t' | '\n' | '\r')
                || !((c as u32) < 0x20 || c == '\u{FFFE}' || c == '\u{FFFF}')
        })
        .collect();
    format!("<![CDATA[{}]]>", clean.replace("]]>", "]]]]><![CDATA[>"))
}

/// Renders the JUnit XML document.
pub fn render(report: &Report) -> String {
    let failing: usize = report.answers.iter().filter(|a| !a.passed).count();
    let tests = report.answers.len() + report.rejected.len();
    let errors = report.rejected.len();
    let mut x = String::new();
    x.push_str("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    let _ = writeln!(
        x,
        "<testsuites name=\"plumbline\" tests=\"{tests}\" failures=\"{failing}\" errors=\"{errors}\">"
    );
    let _ = writeln!(
        x,
        "  <testsuite name=\"plumbline check {}\" tests=\"{tests}\" failures=\"{failing}\" errors=\"{errors}\" skipped=\"0\" timestamp=\"{}\">",
        xml_escape(&report.inputs.answers.path),
        xml_escape(report.generated_at.trim_end_matches('Z'))
    );
    for a in &report.answers {
        let _ = write!(x, "    <testcase classname=\"answers\" name=\"{}\"", xml_escape(&a.id));
        let failures: Vec<_> = a.findings.iter().filter(|f| f.gate).collect();
        let others: Vec<_> = a.findings.iter().filter(|f| !f.gate).collect();
        if failures.is_empty() && others.is_empty() {
            x.push_str("/>\n");
            continue;
        }
        x.push_str(">\n");
        for f in failures {
            let mut body = String::new();
            if let Some(s) = f.sentence.and_then(|i| a.sentences.get(i)) {
                let _ = writeln!(body, "sentence {}: {}", s.index + 1, s.text);
            }
            if let Some(r) = &f.r#ref {
                let _ = writeln!(body, "citation [{r}]");
            }
            let _ = write!(body, "line {} of the answers file", a.line);
            let _ = writeln!(
                x,
                "      <failure type=\"{}\" message=\"{}\">{}</failure>",
                xml_escape(&f.kind),
                xml_escape(&f.message),
                cdata(&body)
            );
        }
        if !others.is_empty() {
            // Findings that do not fail the gate (warnings, waived ones) as the testcase's
            // output, where CI pages show them beside a passing test.
            let mut out = String::from("findings that do not fail the gate:\n");
            for f in others {
                let state = match &f.accepted {
                    Some(acc) => format!(" (accepted by {}: {})", acc.by, acc.note),
                    None => String::new(),
                };
                let _ = writeln!(out, "- {}: {}{state}", f.kind, f.message);
            }
            let _ = writeln!(x, "      <system-out>{}</system-out>", cdata(&out));
        }
        x.push_str("    </testcase>\n");
    }
    for r in &report.rejected {
        let _ = writeln!(
            x,
            "    <testcase classname=\"rejected\" name=\"line {}\">\n      <error type=\"rejected_line\" message=\"{}\"/>\n    </testcase>",
            r.line,
            xml_escape(&r.error)
        );
    }
    x.push_str("  </testsuite>\n</testsuites>\n");
    x
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cdata_cannot_be_closed_early() {
        assert_eq!(cdata("a]]>b\u{1}<c>"), "<![CDATA[a]]]]><![CDATA[>b<c>]]>");
    }

    #[test]
    fn escapes_markup_and_drops_forbidden_controls() {
        assert_eq!(xml_escape("<a href=\"x\">&'\u{1}"), "&lt;a href=&quot;x&quot;&gt;&amp;&apos;");
    }
}
