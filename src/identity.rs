//! How a sentence and a finding are recognised across runs, when answers are regenerated,
//! logs reordered and sentences renumbered.
//!
//! Two runs of a release check (the one in production and the candidate) share answer
//! ids but not line numbers or sentence positions: an answer that gained a sentence at the
//! front shifts every index after it. So `compare` matches sentences, and SARIF's
//! `partialFingerprints` identify results, by the sentence's *text* after a fixed
//! normalisation ([`match_text`]):
//!
//! 1. Unicode NFKC (UAX #15), so that full-width and compatibility forms fold;
//! 2. lower case (Unicode `to_lowercase`);
//! 3. every run of white space (Unicode `White_Space`) becomes one space, and the ends are
//!    trimmed.
//!
//! Nothing else is dropped, so a changed figure or word is a changed sentence. The rules
//! are fixed here, apart from the scorer's own normalisation, so that fingerprints stay the
//! same across plumbline versions.
//!
//! A finding's *subject* is what it is about: the normalised text of its sentence, the
//! document a citation names, or the answer as a whole ([`Subject`]).

use std::fmt::Write as _;

use sha2::{Digest, Sha256};
use unicode_normalization::UnicodeNormalization;

use crate::findings::{AnswerFindings, Finding};

/// The normalised form of a sentence used to match it across runs.
pub fn match_text(text: &str) -> String {
    let folded: String = text.nfkc().flat_map(char::to_lowercase).collect();
    let mut out = String::with_capacity(folded.len());
    for word in folded.split_whitespace() {
        if !out.is_empty() {
            out.push(' ');
        }
        out.push_str(word);
    }
    out
}

/// What a finding is about, in terms that survive a regenerated answer.
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Subject {
    /// A sentence, by its normalised text.
    Sentence(String),
    /// A citation, by the document it names.
    Citation(String),
    /// The answer as a whole (for example, approved-answer regression).
    Answer,
}

impl Subject {
    /// The subject of finding `f` of answer `a`. A sentence index out of range (which a
    /// hand-edited findings file could hold) falls back to the index itself.
    pub fn of(a: &AnswerFindings, f: &Finding) -> Subject {
        if let Some(i) = f.sentence {
            return match a.sentences.get(i) {
                Some(s) => Subject::Sentence(match_text(&s.text)),
                None => Subject::Sentence(format!("#{i}")),
            };
        }
        if let Some(r) = &f.r#ref {
            let doc = a.citations.iter().find(|c| &c.r#ref == r).map_or("", |c| c.doc.as_str());
            return Subject::Citation(doc.to_owned());
        }
        Subject::Answer
    }

    /// A stable text form: `s:` + text, `c:` + document, or `a:`.
    pub fn key(&self) -> String {
        match self {
            Subject::Sentence(t) => format!("s:{t}"),
            Subject::Citation(d) => format!("c:{d}"),
            Subject::Answer => "a:".into(),
        }
    }
}

/// The SARIF `partialFingerprints` value of a finding: lower-case hex SHA-256 of
/// `answer id NUL subject key NUL kind`, plus `NUL n` for the n-th finding (n ≥ 2) with
/// the same three within one answer (a sentence said twice, a document cited twice). It
/// stays the same across runs for the same answer id, normalised sentence text (or cited
/// document) and kind, whatever the answer's line, the sentence's position or the
/// citation's ref.
pub fn fingerprint(answer_id: &str, subject: &Subject, kind: &str, repeat: usize) -> String {
    let mut h = Sha256::new();
    h.update(answer_id.as_bytes());
    h.update([0]);
    h.update(subject.key().as_bytes());
    h.update([0]);
    h.update(kind.as_bytes());
    if repeat >= 2 {
        h.update([0]);
        h.update(repeat.to_string().as_bytes());
    }
    let mut hex = String::with_capacity(64);
    for b in h.finalize() {
        let _ = write!(hex, "{b:02x}");
    }
    hex
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn normalisation_folds_case_width_and_space_only() {
        assert_eq!(
            match_text("  Claims  stay\topen\u{00A0}for ４５ DAYS. "),
            "claims stay open for 45 days."
        );
        assert_eq!(match_text("ﬁle"), "file");
        // A different figure or word is a different sentence.
        assert_ne!(match_text("open for 45 days"), match_text("open for 46 days"));
        assert_ne!(match_text("open for 45 days."), match_text("open for 45 days"));
        assert_eq!(match_text(""), "");
    }

    #[test]
    fn fingerprint_is_stable_and_discriminating() {
        let s = Subject::Sentence(match_text("Claims stay open."));
        let a = fingerprint("a-1", &s, "unsupported", 1);
        // Pinned: SHA-256 of "a-1\0s:claims stay open.\0unsupported" (computed with
        // Python's hashlib when this test was written).
        assert_eq!(a, "6f60c0819e32b4bc0911e11ff31d4b9508520cd4c0d4eb0b7a054204aafe867d");
        assert_eq!(
            a,
            fingerprint(
                "a-1",
                &Subject::Sentence(match_text(" claims  STAY open. ")),
                "unsupported",
                1
            )
        );
        assert_ne!(a, fingerprint("a-2", &s, "unsupported", 1));
        assert_ne!(a, fingerprint("a-1", &s, "partial", 1));
        assert_ne!(a, fingerprint("a-1", &s, "unsupported", 2));
        let c = Subject::Citation("faq.md".into());
        assert_ne!(fingerprint("a-1", &c, "dead", 1), fingerprint("a-1", &c, "dead", 2));
        assert_ne!(
            fingerprint("a-1", &c, "dead", 1),
            fingerprint("a-1", &Subject::Answer, "dead", 1)
        );
    }
}
