//! The check of one answer: citations resolved, sentences scored, findings decided.
//!
//! [`check_answer`] is a pure function from the run's validated inputs (a [`Context`])
//! and one [`Answer`] to that answer's [`AnswerFindings`]. It never touches the
//! filesystem and never panics on input: every lookup is in memory, every range is
//! checked. [`crate::run`] calls it for every answer, in parallel, behind a panic boundary.
//!
//! The steps, in order:
//!
//! 1. the user's groups are decided (record, else principals, else unknown);
//! 2. markers are found and the answer is split into sentences, each tied to the refs of
//!    the markers it holds (every citation, when the answer has no markers at all);
//! 3. every citation is resolved to a passage and given exactly one status, in the order
//!    `dead`, `bad_locator`, `forbidden`, `principal_unknown`, `access_unknown`, `stale`,
//!    `quote_mismatch`, then — after scoring — `unused` or `ok`;
//! 4. every sentence is scored against the windows of its cited passages
//!    ([`crate::support`]);
//! 5. sentences that are not supported are looked up in the whole store: a clearly better
//!    window elsewhere is `misattributed` (the user may read it) or a `restricted_match`
//!    (the user may not);
//! 6. findings are listed, reviewer decisions applied, and the gate decided.

use std::borrow::Cow;
use std::ops::Range;

use crate::access::{self, Entitlement, Principals};
use crate::answers::Answer;
use crate::answers::markers::{Marker, find_markers, merge_adjacent, strip_markers};
use crate::citations::{Resolved, resolve};
use crate::config::Config;
use crate::decisions::Decision;
use crate::findings::{
    Acceptance, AnswerFindings, ApprovedComparison, CitationFindings, CitationStatus, Evidence,
    Finding, Flag, SentenceFindings, Severity, Span, Verdict, round6,
};
use crate::metrics::{bleu, rouge};
use crate::store::Store;
use crate::store::index::{DocSentences, Hit, Index, content_terms};
use crate::support::{self, Claim, Params, Scorer, Shortlist, TokenCache, Unit, WindowMatch};
use crate::text::sentences;
use crate::text::tokens::{IdMap, unicode_words};

/// Everything an answer is checked against, validated once per run.
#[derive(Debug, Clone, Copy)]
pub struct Context<'a> {
    /// The document store.
    pub store: &'a Store,
    /// Its search index (documents in the same order as `store.documents`).
    pub index: &'a Index,
    /// Effective settings.
    pub config: &'a Config,
    /// The `--principals` file, if given.
    pub principals: Option<&'a Principals>,
    /// Reviewer decisions.
    pub decisions: &'a [Decision],
    /// Replace restricted documents' text in evidence.
    pub redact_restricted: bool,
}

impl Context<'_> {
    fn params(&self) -> Params {
        Params {
            supported: self.config.thresholds.supported,
            partial: self.config.thresholds.partial,
            fuzzy_threshold: self.config.support.fuzzy_threshold,
            window_sentences: self.config.support.window_sentences,
        }
    }
}

/// The result of checking one answer.
#[derive(Debug, Clone)]
pub struct Checked {
    /// Its findings.
    pub findings: AnswerFindings,
    /// Indices (into [`Context::decisions`]) of the decisions that waived something.
    pub used_decisions: Vec<usize>,
}

/// Severity of a finding kind: errors say the answer or citation is wrong, warnings ask
/// a reviewer to look.
pub fn severity_of(kind: &str) -> Severity {
    match kind {
        "stale"
        | "access_unknown"
        | "principal_unknown"
        | "unused"
        | "unknown_ref"
        | "uncited"
        | "partial"
        | "below_approved_rouge_l"
        | "below_approved_bleu" => Severity::Warning,
        _ => Severity::Error,
    }
}

/// The sentences of `doc` (visible text) that overlap `passage`, clipped to it. Whole
/// sentences reuse the index's token ids; a sentence cut by the passage edge is tokenised
/// again for the part inside.
fn passage_units<'a>(ctx: &Context<'a>, doc: usize, passage: &Range<usize>) -> Vec<Unit<'a>> {
    let text = ctx.store.documents[doc].visible_text();
    let Some(ds) = ctx.index.docs.get(doc) else { return Vec::new() };
    let mut out = Vec::new();
    for (i, s) in ds.ranges.iter().enumerate() {
        if s.end <= passage.start || s.start >= passage.end {
            continue;
        }
        if s.start >= passage.start && s.end <= passage.end {
            out.push(sentence_unit(ds, i));
        } else {
            let r = s.start.max(passage.start)..s.end.min(passage.end);
            if !r.is_empty() && text.is_char_boundary(r.start) && text.is_char_boundary(r.end) {
                out.extend(support::units(text, &[r]));
            }
        }
    }
    out
}

/// Sentence `i` of an indexed document as a unit, borrowing the index's ids.
fn sentence_unit(ds: &DocSentences, i: usize) -> Unit<'_> {
    Unit {
        range: ds.ranges[i].clone(),
        ids: Cow::Borrowed(ds.ids(i)),
        figures: Cow::Borrowed(ds.figures(i)),
    }
}

/// Units `range` (sentence indices) of `doc`.
fn doc_units<'a>(ctx: &Context<'a>, doc: usize, range: Range<usize>) -> Vec<Unit<'a>> {
    let ds = &ctx.index.docs[doc];
    range.map(|i| sentence_unit(ds, i)).collect()
}

/// The store passages worth scoring for a claim: around each hit of the index, up to
/// `w - 1` sentences on either side, with overlapping runs of one document merged, in
/// document and sentence order.
fn hit_passages(
    ctx: &Context<'_>,
    hits: &[Hit],
    skip: &[usize],
    w: usize,
) -> Vec<(usize, Range<usize>)> {
    let mut runs: Vec<(usize, Range<usize>)> = hits
        .iter()
        .filter(|h| !skip.contains(&h.doc))
        .map(|h| {
            let n = ctx.index.docs[h.doc].len();
            let lo = h.sentence.saturating_sub(w.saturating_sub(1));
            (h.doc, lo..(h.sentence + w).min(n))
        })
        .collect();
    runs.sort_by_key(|(d, r)| (*d, r.start));
    let mut merged: Vec<(usize, Range<usize>)> = Vec::new();
    for (d, r) in runs {
        match merged.last_mut() {
            Some((ld, lr)) if *ld == d && r.start <= lr.end => lr.end = lr.end.max(r.end),
            _ => merged.push((d, r)),
        }
    }
    merged
}

/// A window match located in a document.
struct Located {
    doc: usize,
    m: WindowMatch,
    visible: Range<usize>,
}

fn locate(doc: usize, units: &[Unit], m: WindowMatch) -> Located {
    let visible = units[m.first].range.start..units[m.last].range.end;
    Located { doc, m, visible }
}

fn evidence(ctx: &Context<'_>, loc: &Located, redact: bool) -> Evidence {
    let d = &ctx.store.documents[loc.doc];
    let file = d.file_range(loc.visible.clone());
    let access = d.effective_access(ctx.store.default_access.as_deref()).map(<[String]>::to_vec);
    if redact {
        return Evidence {
            doc: d.id.clone(),
            start: file.start,
            end: file.end,
            text: format!("[restricted text withheld: {} bytes {}–{}]", d.id, file.start, file.end),
            score: round6(loc.m.score),
            matched: Vec::new(),
            access,
            page: None,
            page_end: None,
        };
    }
    let text = d.visible_text()[loc.visible.clone()].to_owned();
    let matched = loc
        .m
        .matched
        .iter()
        .filter(|r| r.start >= loc.visible.start && r.end <= loc.visible.end)
        .map(|r| Span { start: r.start - loc.visible.start, end: r.end - loc.visible.start })
        .collect();
    Evidence {
        doc: d.id.clone(),
        start: file.start,
        end: file.end,
        text,
        score: round6(loc.m.score),
        matched,
        access,
        page: None,
        page_end: None,
    }
}

/// How much better than the best single window a joint window must score.
const JOINT_GAIN: f64 = 0.05;

/// The best window of each of a sentence's cited passages, joined two at a time: when a
/// sentence cites several passages and takes a part from each, no single window carries
/// it. Returns the two parts (citation index and window, the first holding the joint
/// match and score) of the best joint window that spans both passages.
fn joint_support<'a>(
    ctx: &Context<'a>,
    scorer: &Scorer<'_>,
    candidates: &[usize],
    unit_cache: &IdMap<usize, Vec<Unit<'a>>>,
    resolved: &[Resolved<'_>],
    p: &Params,
    cache: &mut TokenCache,
) -> Option<((usize, Located), (usize, Located))> {
    let parts: Vec<(usize, Located)> = candidates
        .iter()
        .filter_map(|&ci| {
            let doc = resolved[ci].doc?;
            let units = unit_cache.get(&ci)?;
            let mut list = Shortlist::default();
            scorer.windows(ci, units, p, &mut list);
            let text = ctx.store.documents[doc].visible_text();
            let (_, m) = scorer.best(list, |_| (units.as_slice(), text), &mut *cache)?;
            (m.coverage > 0.0).then(|| (ci, locate(doc, units, m)))
        })
        .collect();
    type Joint = (f64, usize, usize, WindowMatch, usize);
    let mut best: Option<Joint> = None;
    for (x, (_, lx)) in parts.iter().enumerate() {
        for (y, (_, ly)) in parts.iter().enumerate() {
            if x == y || (parts[x].1.doc == parts[y].1.doc && lx.visible == ly.visible) {
                continue;
            }
            let tx = &ctx.store.documents[lx.doc].visible_text()[lx.visible.clone()];
            let ty = &ctx.store.documents[ly.doc].visible_text()[ly.visible.clone()];
            let joint = format!("{tx}\n\n{ty}");
            let mut ranges = sentences::split(tx);
            ranges.extend(
                sentences::split(ty)
                    .into_iter()
                    .map(|r| r.start + tx.len() + 2..r.end + tx.len() + 2),
            );
            let units = support::units(&joint, &ranges);
            let mut list = Shortlist::default();
            scorer.whole(0, &units, &mut list);
            // A fresh cache: the joint text is temporary, and its address may be reused.
            let mut own = TokenCache::default();
            let best_joint = scorer.best(list, |_| (units.as_slice(), joint.as_str()), &mut own);
            let Some((_, m)) = best_joint else {
                continue;
            };
            // Both parts must add words of the claim that the other lacks.
            let score_alone = lx.m.score.max(ly.m.score);
            if m.score > score_alone && best.as_ref().is_none_or(|b| m.score > b.0 + 1e-9) {
                best = Some((m.score, x, y, m, tx.len()));
            }
        }
    }
    let (_, x, y, m, split_at) = best?;
    let (cx, lx) = &parts[x];
    let (cy, ly) = &parts[y];
    // Joint match ranges back onto each document's visible text.
    let in_x: Vec<Range<usize>> = m
        .matched
        .iter()
        .filter(|r| r.end <= split_at)
        .map(|r| r.start + lx.visible.start..r.end + lx.visible.start)
        .collect();
    let in_y: Vec<Range<usize>> = m
        .matched
        .iter()
        .filter(|r| r.start >= split_at + 2)
        .map(|r| r.start - split_at - 2 + ly.visible.start..r.end - split_at - 2 + ly.visible.start)
        .collect();
    let first = Located {
        doc: lx.doc,
        m: WindowMatch { matched: in_x, ..m.clone() },
        visible: lx.visible.clone(),
    };
    let second = Located {
        doc: ly.doc,
        m: WindowMatch { matched: in_y, score: m.score, ..ly.m.clone() },
        visible: ly.visible.clone(),
    };
    Some(((*cx, first), (*cy, second)))
}

/// One sentence of the answer before scoring.
struct Piece {
    span: Range<usize>,
    text: String,
    refs: Vec<String>,
    unknown: Vec<String>,
}

fn pieces(answer: &str, markers: &[Marker], known: &[&str]) -> Vec<Piece> {
    sentences::split(answer)
        .into_iter()
        .map(|span| {
            // Markers are in order: only those from the first at or after the sentence's
            // start can lie inside it (a scan of all of them per sentence is quadratic).
            let first = markers.partition_point(|m| m.start < span.start);
            let inside: Vec<Marker> = markers[first..]
                .iter()
                .take_while(|m| m.start < span.end)
                .filter(|m| m.end <= span.end)
                .map(|m| Marker {
                    start: m.start - span.start,
                    end: m.end - span.start,
                    refs: m.refs.clone(),
                })
                .collect();
            let mut refs: Vec<String> = Vec::new();
            let mut unknown: Vec<String> = Vec::new();
            for r in inside.iter().flat_map(|m| m.refs.iter()) {
                if known.contains(&r.as_str()) {
                    if !refs.contains(r) {
                        refs.push(r.clone());
                    }
                } else if !unknown.contains(r) {
                    unknown.push(r.clone());
                }
            }
            let (stripped, _) = strip_markers(&answer[span.clone()], &inside);
            Piece { span, text: stripped.trim().to_owned(), refs, unknown }
        })
        .collect()
}

/// Checks one answer. See the module documentation.
pub fn check_answer(ctx: &Context<'_>, answer: &Answer) -> Checked {
    let p = ctx.params();
    let groups =
        access::user_groups(answer.groups.as_deref(), answer.user.as_deref(), ctx.principals);
    let known: Vec<&str> = answer.citations.iter().map(|c| c.r#ref.as_str()).collect();
    let markers = merge_adjacent(&answer.answer, &find_markers(&answer.answer, &known));
    let uses_markers = !markers.is_empty();
    let pieces = pieces(&answer.answer, &markers, &known);

    let resolved: Vec<Resolved<'_>> =
        answer.citations.iter().map(|c| resolve(ctx.store, c, groups)).collect();
    let mut unit_cache: IdMap<usize, Vec<Unit>> = IdMap::default();
    // Tokens of passage sentences, shared by the answer's claims (texts outlive it).
    let mut tok_cache = TokenCache::default();
    let mut used_by: Vec<Vec<usize>> = vec![Vec::new(); resolved.len()];
    let mut sentences_out = Vec::with_capacity(pieces.len());

    for (index, piece) in pieces.iter().enumerate() {
        let claim: Claim = support::claim(&piece.text);
        // A sentence is checked against the citations its markers name; one with no
        // marker at all (flagged `uncited` when others have markers) against every
        // citation of the answer, since it may well restate one of them.
        let candidates: Vec<usize> = if uses_markers && !piece.refs.is_empty() {
            piece.refs.iter().filter_map(|r| known.iter().position(|k| k == r)).collect()
        } else if uses_markers && !piece.unknown.is_empty() {
            Vec::new()
        } else {
            (0..resolved.len()).collect()
        };
        let scorer = Scorer::new(&claim, &p);
        // Best window over the cited passages.
        for &ci in &candidates {
            if let (Some(doc), Some(passage)) = (resolved[ci].doc, resolved[ci].passage.as_ref()) {
                unit_cache.entry(ci).or_insert_with(|| passage_units(ctx, doc, passage));
            }
        }
        let mut list = Shortlist::default();
        for &ci in &candidates {
            if let Some(units) = unit_cache.get(&ci) {
                scorer.windows(ci, units, &p, &mut list);
            }
        }
        let text_of =
            |doc: Option<usize>| doc.map_or("", |d| ctx.store.documents[d].visible_text());
        let best: Option<(usize, Located)> = scorer
            .best(
                list,
                |ci| (unit_cache[&ci].as_slice(), text_of(resolved[ci].doc)),
                &mut tok_cache,
            )
            .and_then(|(ci, m)| {
                let doc = resolved[ci].doc?;
                Some((ci, locate(doc, &unit_cache[&ci], m)))
            });
        let mut best = best;
        let mut assessment = support::assess(&claim, best.as_ref().map(|(_, l)| &l.m), &p);
        // A sentence that cites several passages may take a part from each ("[1, 2]").
        let mut joined: Option<(usize, Located)> = None;
        let incomplete = best.as_ref().is_none_or(|(_, l)| l.m.unmatched_run > 0);
        if !claim.no_claim
            && candidates.len() > 1
            && (assessment.verdict != Verdict::Supported || incomplete)
        {
            let single = best.as_ref().map_or(0.0, |(_, l)| l.m.score);
            if let Some((first, second)) =
                joint_support(ctx, &scorer, &candidates, &unit_cache, &resolved, &p, &mut tok_cache)
                    .filter(|(f, _)| f.1.m.score >= single + JOINT_GAIN)
            {
                assessment = support::assess(&claim, Some(&first.1.m), &p);
                best = Some(first);
                joined = Some(second);
            }
        }
        if !claim.no_claim {
            for (ci, loc) in best.iter().chain(joined.iter()) {
                if loc.m.score >= p.partial && !used_by[*ci].contains(&index) {
                    used_by[*ci].push(index);
                }
            }
        }
        let mut flags = Vec::new();
        if !piece.unknown.is_empty() {
            flags.push(Flag::UnknownRef);
        }
        if assessment.number_mismatch {
            flags.push(Flag::NumberMismatch);
        }
        if assessment.negation_mismatch {
            flags.push(Flag::NegationMismatch);
        }
        if assessment.changed_term {
            flags.push(Flag::ChangedTerm);
        }
        if uses_markers && piece.refs.is_empty() && piece.unknown.is_empty() && !claim.no_claim {
            flags.push(Flag::Uncited);
        }
        let redact_cited =
            |ci: usize| ctx.redact_restricted && resolved[ci].entitlement != Entitlement::Allowed;
        let mut ev = best.as_ref().map(|(ci, loc)| evidence(ctx, loc, redact_cited(*ci)));
        let also_ev: Vec<Evidence> =
            joined.iter().map(|(ci, loc)| evidence(ctx, loc, redact_cited(*ci))).collect();
        let mut cited_ev = None;

        // Search the whole store for sentences the citations do not carry (not possible
        // when only the cited documents were read: `Store::searchable`). A window
        // elsewhere must beat the cited one by the margin, and no score exceeds 1: when
        // the cited window scores above 1 − margin, nothing can, and the search is skipped.
        let cited_score = best.as_ref().map_or(0.0, |(_, l)| l.m.score);
        let margin = ctx.config.support.misattribution_margin;
        if ctx.store.searchable
            && !claim.no_claim
            && assessment.verdict != Verdict::Supported
            && cited_score + margin <= 1.0
        {
            let cited_docs: Vec<usize> =
                candidates.iter().filter_map(|&ci| resolved[ci].doc).collect();
            let hits = ctx.index.query(&content_terms(&piece.text), 8);
            let passages: Vec<(usize, Vec<Unit<'_>>)> =
                hit_passages(ctx, &hits, &cited_docs, p.window_sentences)
                    .into_iter()
                    .map(|(doc, r)| (doc, doc_units(ctx, doc, r)))
                    .collect();
            let mut open = Shortlist::default();
            let mut closed = Shortlist::default();
            for (k, (doc, units)) in passages.iter().enumerate() {
                let d = &ctx.store.documents[*doc];
                let ent =
                    access::decide(groups, d.effective_access(ctx.store.default_access.as_deref()));
                let list = if ent == Entitlement::Forbidden { &mut closed } else { &mut open };
                scorer.windows(k, units, &p, list);
            }
            let mut pick = |list: Shortlist| {
                scorer
                    .best(
                        list,
                        |k| {
                            let (doc, units) = &passages[k];
                            (units.as_slice(), ctx.store.documents[*doc].visible_text())
                        },
                        &mut tok_cache,
                    )
                    .map(|(k, m)| locate(passages[k].0, &passages[k].1, m))
            };
            let best_open = pick(open);
            let best_closed = pick(closed);
            if let Some(open) = best_open.filter(|o| {
                o.m.score >= p.supported
                    && o.m.score >= cited_score + margin
                    && o.m.missing_figures.is_empty()
            }) {
                flags.push(Flag::Misattributed);
                cited_ev = ev.take();
                ev = Some(evidence(ctx, &open, false));
            }
            if let Some(closed) = best_closed.filter(|c| {
                c.m.score >= ctx.config.support.restricted_match
                    && c.m.score >= cited_score + margin
            }) {
                flags.push(Flag::RestrictedMatch);
                if cited_ev.is_none() {
                    cited_ev = ev.take();
                }
                ev = Some(evidence(ctx, &closed, ctx.redact_restricted));
            }
        }
        flags.sort();
        sentences_out.push(SentenceFindings {
            index,
            text: piece.text.clone(),
            span: Span { start: piece.span.start, end: piece.span.end },
            refs: piece.refs.clone(),
            verdict: assessment.verdict,
            score: round6(assessment.score),
            flags,
            evidence: ev,
            also_evidence: also_ev,
            cited_evidence: cited_ev,
            figures: best
                .as_ref()
                .filter(|_| assessment.number_mismatch)
                .map(|(_, l)| l.m.missing_figures.clone())
                .unwrap_or_default(),
            changed_terms: best
                .as_ref()
                .filter(|_| assessment.changed_term)
                .map(|(_, l)| l.m.changed.clone())
                .unwrap_or_default(),
        });
    }

    // Citation statuses: unused for resolved citations that support nothing.
    let citations_out: Vec<CitationFindings> = answer
        .citations
        .iter()
        .zip(&resolved)
        .zip(&used_by)
        .map(|((c, r), used)| {
            let mut status = r.status;
            let mut detail = r.detail.clone();
            // A citation that a marker names is `ok` even when its sentence is not
            // supported: the sentence's verdict carries that problem. `unused` is for a
            // citation nothing ties to the answer: no marker names it (or the answer has
            // no markers) and no sentence is supported by it.
            let named = uses_markers && pieces.iter().any(|p| p.refs.contains(&c.r#ref));
            if status == CitationStatus::Ok && used.is_empty() && !named {
                status = CitationStatus::Unused;
                detail = Some(if uses_markers {
                    "no marker in the answer names it, and no sentence is supported by it".into()
                } else {
                    "no sentence of the answer is supported by it".into()
                });
            }
            CitationFindings {
                r#ref: c.r#ref.clone(),
                doc: r.document.map_or_else(|| c.doc.clone(), |d| d.id.clone()),
                status,
                detail,
                passage: r.file.clone().map(|f| Span { start: f.start, end: f.end }),
                used_by: used.clone(),
                access: r
                    .document
                    .and_then(|d| d.effective_access(ctx.store.default_access.as_deref()))
                    .map(<[String]>::to_vec),
            }
        })
        .collect();

    let mut findings = Vec::new();
    for c in &citations_out {
        if c.status != CitationStatus::Ok {
            let kind = c.status.as_str();
            let detail = c.detail.clone().unwrap_or_default();
            findings.push(finding(
                kind,
                None,
                Some(c.r#ref.clone()),
                format!("citation [{}] to {}: {}", c.r#ref, c.doc, detail),
            ));
        }
    }
    for s in &sentences_out {
        let short = shorten(&s.text, 80);
        match s.verdict {
            Verdict::Unsupported => findings.push(finding(
                "unsupported",
                Some(s.index),
                None,
                format!(
                    "sentence {} is not supported by its citations (score {:.2}): \"{short}\"",
                    s.index + 1,
                    s.score
                ),
            )),
            Verdict::Partial => findings.push(finding(
                "partial",
                Some(s.index),
                None,
                format!(
                    "sentence {} is only partly supported (score {:.2}): \"{short}\"",
                    s.index + 1,
                    s.score
                ),
            )),
            _ => {}
        }
        for f in &s.flags {
            let msg = match f {
                Flag::UnknownRef => {
                    let piece = &pieces[s.index];
                    format!(
                        "sentence {} cites [{}], which no citation of the answer carries",
                        s.index + 1,
                        piece.unknown.join("], [")
                    )
                }
                Flag::NumberMismatch => format!(
                    "sentence {} states {} that the evidence does not give",
                    s.index + 1,
                    s.figures.join(", ")
                ),
                Flag::NegationMismatch => format!(
                    "sentence {} and its evidence disagree in polarity (one is negated)",
                    s.index + 1
                ),
                Flag::ChangedTerm => format!(
                    "sentence {} says {} where the evidence says {}",
                    s.index + 1,
                    s.changed_terms
                        .iter()
                        .map(|t| format!("\"{}\"", t.claim))
                        .collect::<Vec<_>>()
                        .join(", "),
                    s.changed_terms
                        .iter()
                        .map(|t| format!("\"{}\"", t.evidence))
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
                Flag::Uncited => {
                    format!("sentence {} makes a claim with no citation marker", s.index + 1)
                }
                Flag::Misattributed => format!(
                    "sentence {} is carried better by {} than by what it cites",
                    s.index + 1,
                    s.evidence.as_ref().map_or("another document", |e| e.doc.as_str())
                ),
                Flag::RestrictedMatch => format!(
                    "sentence {} closely matches {}, which the user may not read",
                    s.index + 1,
                    s.evidence.as_ref().map_or("a restricted document", |e| e.doc.as_str())
                ),
            };
            findings.push(finding(f.as_str(), Some(s.index), None, msg));
        }
    }

    // Reviewer decisions, then the gate.
    let mut used_decisions = Vec::new();
    for f in &mut findings {
        if let Some((i, d)) = ctx
            .decisions
            .iter()
            .enumerate()
            .find(|(_, d)| d.matches(&answer.id, &f.kind, f.sentence, f.r#ref.as_deref()))
        {
            f.accepted = Some(Acceptance { by: d.by.clone(), note: d.note.clone() });
            if !used_decisions.contains(&i) {
                used_decisions.push(i);
            }
        }
    }
    // An `unsupported` verdict that only a figure or polarity check caused (the words
    // score at least partial support) follows that finding: a reviewer who accepts the
    // cause accepts its consequence too.
    for s in &sentences_out {
        if s.verdict != Verdict::Unsupported || s.score < p.partial {
            continue;
        }
        let cause = findings.iter().find(|f| {
            f.sentence == Some(s.index)
                && matches!(f.kind.as_str(), "number_mismatch" | "negation_mismatch")
                && f.accepted.is_some()
        });
        let open_cause = findings.iter().any(|f| {
            f.sentence == Some(s.index)
                && matches!(f.kind.as_str(), "number_mismatch" | "negation_mismatch")
                && f.accepted.is_none()
        });
        let Some(cause) = cause.filter(|_| !open_cause) else { continue };
        let waiver = cause.accepted.clone().map(|a| Acceptance {
            by: a.by,
            note: format!("follows from the accepted {}: {}", cause.kind, a.note),
        });
        if let Some(f) = findings.iter_mut().find(|f| {
            f.sentence == Some(s.index) && f.kind == "unsupported" && f.accepted.is_none()
        }) {
            f.accepted = waiver;
        }
    }
    let gate = &ctx.config.gate;
    let open_unsupported =
        findings.iter().filter(|f| f.kind == "unsupported" && f.accepted.is_none()).count();
    for f in &mut findings {
        f.gate = f.accepted.is_none()
            && (gate.fails_on(&f.kind)
                || (f.kind == "unsupported" && open_unsupported > gate.max_unsupported));
    }
    let passed = !findings.iter().any(|f| f.gate);

    let approved = answer.approved_answer.as_ref().map(|approved| {
        let text: String = pieces.iter().map(|p| p.text.as_str()).collect::<Vec<_>>().join(" ");
        let (c, r) = (unicode_words(&text), unicode_words(approved));
        ApprovedComparison {
            rouge1: round6(rouge::rouge_n(&c, &r, 1).f),
            rouge2: round6(rouge::rouge_n(&c, &r, 2).f),
            rouge_l: round6(rouge::rouge_l(&c, &r).f),
            bleu: round6(bleu::sentence_bleu(&text, &[approved]).score),
        }
    });
    // Approved-answer regression: its findings, their waivers and their gate.
    let passed = crate::regression::apply(
        ctx.config,
        ctx.decisions,
        &answer.id,
        approved.as_ref(),
        &mut findings,
        &mut used_decisions,
    ) && passed;

    Checked {
        findings: AnswerFindings {
            id: answer.id.clone(),
            line: answer.line,
            user: answer.user.clone(),
            groups: groups.map(<[String]>::to_vec),
            question: answer.question.clone(),
            answer: answer.answer.clone(),
            passed,
            sentences: sentences_out,
            citations: citations_out,
            findings,
            approved,
        },
        used_decisions,
    }
}

fn finding(kind: &str, sentence: Option<usize>, r#ref: Option<String>, message: String) -> Finding {
    Finding {
        kind: kind.to_owned(),
        sentence,
        r#ref,
        severity: severity_of(kind),
        message,
        gate: false,
        accepted: None,
    }
}

/// The first `max` characters of `s`, with an ellipsis when cut.
fn shorten(s: &str, max: usize) -> String {
    match s.char_indices().nth(max) {
        Some((i, _)) => format!("{}…", &s[..i]),
        None => s.to_owned(),
    }
}
