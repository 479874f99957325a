//! The labelled answer set: answers of one to a few sentences, each sentence of a known
//! class, with citations of every status, and the labels the generator kept.
//!
//! Each answer is drawn from its own seeded generator (seed, split, number), so a run's
//! first N answers are the same whatever its size. An answer cites one or two passages
//! (byte offsets, a manifest chunk, or a whole document); for each citation a *driving*
//! sentence of a class drawn by weight is made from a sentence of the cited document (or,
//! for the "other document" class, of a document on a similar topic), sometimes a second
//! sentence of another class from the same passage, and, where the citation should come
//! out `ok`, a verbatim sentence of the same passage (an *anchor*) so that its status does
//! not depend on how any edited sentence scores. Chatter without markers opens or closes
//! some answers. The generator never runs the checker: labels come from how each sentence
//! was made.

use std::collections::HashMap;
use std::ops::Range;

use rayon::prelude::*;
use serde::Serialize;
use serde_json::{Value, json};
use sha2::{Digest, Sha256};

use crate::corpus::{Access, Corpus, Split, render};
use crate::edits::{self, Edit};
use crate::rng::{Rng, mix};

/// The class of a labelled sentence.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Class {
    Verbatim,
    LightEdit,
    HeavyParaphrase,
    FigureChanged,
    UnitChanged,
    PolarityFlipped,
    OtherDocument,
    Fabricated,
    OppositeSwap,
    QuantifierSwap,
    IdentifierSwap,
    JoinedClause,
    NoClaim,
    BrokenCitation,
}

impl Class {
    pub const ALL: [Class; 14] = [
        Class::Verbatim,
        Class::LightEdit,
        Class::HeavyParaphrase,
        Class::FigureChanged,
        Class::UnitChanged,
        Class::PolarityFlipped,
        Class::OtherDocument,
        Class::Fabricated,
        Class::OppositeSwap,
        Class::QuantifierSwap,
        Class::IdentifierSwap,
        Class::JoinedClause,
        Class::NoClaim,
        Class::BrokenCitation,
    ];

    pub fn name(self) -> &'static str {
        match self {
            Class::Verbatim => "verbatim",
            Class::LightEdit => "light_edit",
            Class::HeavyParaphrase => "heavy_paraphrase",
            Class::FigureChanged => "figure_changed",
            Class::UnitChanged => "unit_changed",
            Class::PolarityFlipped => "polarity_flipped",
            Class::OtherDocument => "other_document",
            Class::Fabricated => "fabricated",
            Class::OppositeSwap => "opposite_swap",
            Class::QuantifierSwap => "quantifier_swap",
            Class::IdentifierSwap => "identifier_swap",
            Class::JoinedClause => "joined_clause",
            Class::NoClaim => "no_claim",
            Class::BrokenCitation => "broken_citation",
        }
    }

    /// Whether a reviewer should look at a sentence of this class.
    pub fn needs_review(self) -> bool {
        !matches!(
            self,
            Class::Verbatim | Class::LightEdit | Class::HeavyParaphrase | Class::NoClaim
        )
    }

    /// Weight of the class as the driving sentence of a citation.
    fn weight(self) -> u32 {
        match self {
            Class::Verbatim => 5,
            Class::LightEdit => 12,
            Class::HeavyParaphrase => 10,
            Class::FigureChanged => 11,
            Class::UnitChanged => 9,
            Class::PolarityFlipped => 9,
            Class::OtherDocument => 10,
            Class::Fabricated => 9,
            Class::OppositeSwap => 8,
            Class::QuantifierSwap => 8,
            Class::IdentifierSwap => 8,
            Class::JoinedClause => 8,
            Class::NoClaim | Class::BrokenCitation => 0,
        }
    }
}

/// The classes that can be made from one sentence of a passage, in one place.
const SENTENCE_CLASSES: [Class; 11] = [
    Class::Verbatim,
    Class::LightEdit,
    Class::HeavyParaphrase,
    Class::FigureChanged,
    Class::UnitChanged,
    Class::PolarityFlipped,
    Class::Fabricated,
    Class::OppositeSwap,
    Class::QuantifierSwap,
    Class::IdentifierSwap,
    Class::JoinedClause,
];

/// One labelled sentence.
#[derive(Debug, Clone, Serialize)]
pub struct Label {
    pub answer: String,
    /// Answer number within its split (the CI subset is a prefix).
    pub number: usize,
    pub split: &'static str,
    /// Position of the sentence in the answer (0-based).
    pub position: usize,
    pub class: Class,
    /// Sub-kind of the edit.
    pub kind: String,
    /// The sentence as written, markers removed.
    pub text: String,
    /// The store sentence it was made from (rendered), where there is one.
    pub source: Option<String>,
    pub source_doc: Option<String>,
    /// Refs its marker names.
    pub refs: Vec<String>,
    /// The cited document and passage text (visible, cut to 1,500 bytes), for examples.
    pub cited_doc: Option<String>,
    pub passage: Option<String>,
    pub detail: String,
    /// For `other_document`: the document that holds the sentence.
    pub expect_doc: Option<String>,
    /// A verbatim sentence added so that its citation's status is `ok` by construction.
    pub anchor: bool,
}

/// The status a citation must get.
#[derive(Debug, Clone, Serialize)]
pub struct CitationLabel {
    pub answer: String,
    pub number: usize,
    pub split: &'static str,
    #[serde(rename = "ref")]
    pub r#ref: String,
    pub doc: String,
    pub expected: &'static str,
    /// How it is located (`range`, `chunk`, `whole`) and what was done to it.
    pub how: String,
}

/// A generated split.
#[derive(Debug, Default)]
pub struct Generated {
    pub answers: Vec<Value>,
    pub labels: Vec<Label>,
    pub citations: Vec<CitationLabel>,
}

/// Who asks: groups in the record, a user looked up in the principals file, or nobody
/// known.
#[derive(Debug, Clone)]
enum Profile {
    Groups(Vec<String>),
    Principal(&'static str),
    Unknown(Option<&'static str>),
}

/// The principals file of the benchmark.
pub fn principals() -> Value {
    json!({"u-dba": ["staff", "dba"], "u-staff": ["staff"]})
}

impl Profile {
    fn groups(&self) -> Option<Vec<String>> {
        match self {
            Profile::Groups(g) => Some(g.clone()),
            Profile::Principal("u-dba") => Some(vec!["staff".into(), "dba".into()]),
            Profile::Principal(_) => Some(vec!["staff".into()]),
            Profile::Unknown(_) => None,
        }
    }
}

/// Entitlement as SPEC.md's rules give it (written here from the contract, not taken
/// from plumbline): `*` lets everyone read; an unlisted document's access is unknown; a
/// user whose groups are unknown cannot be decided; otherwise a shared group allows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Ent {
    Allowed,
    Forbidden,
    AccessUnknown,
    PrincipalUnknown,
}

fn entitlement(groups: Option<&[String]>, access: &Access) -> Ent {
    match access {
        Access::Unlisted => Ent::AccessUnknown,
        Access::Groups(g) if g.iter().any(|x| x == "*") => Ent::Allowed,
        Access::Groups(g) if g.is_empty() => Ent::Forbidden,
        Access::Groups(g) => match groups {
            None => Ent::PrincipalUnknown,
            Some(u) if u.iter().any(|x| g.contains(x)) => Ent::Allowed,
            Some(_) => Ent::Forbidden,
        },
    }
}

/// What is wrong with a citation on purpose.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Defect {
    Dead,
    BadLocator,
    Stale,
    QuoteMismatch,
}

/// How a citation locates its passage.
#[derive(Debug, Clone)]
enum Locator {
    Range(usize, usize),
    Chunk(String),
    Whole,
}

/// A cited passage: its document, the sentences answers may draw from, the locator.
#[derive(Debug, Clone)]
struct Passage {
    doc: usize,
    sentences: Range<usize>,
    locator: Locator,
    /// Visible range the checker will score against.
    visible: Range<usize>,
}

/// A sentence made for an answer, before it is placed.
#[derive(Debug, Clone)]
struct Draft {
    class: Class,
    edit: Edit,
    source: Option<(usize, usize)>,
    expect_doc: Option<usize>,
}

/// Candidate sentences per split and class: `(document, sentence)` where the class's
/// edit applies (checked with a fixed generator; the answer's own draw may still refuse).
pub struct Admissible {
    lists: HashMap<(Split, Class), Vec<(u32, u32)>>,
    /// Per document, its admissible sentences by class.
    by_doc: HashMap<(usize, Class), Vec<usize>>,
    /// Identifiers of each pool document's page.
    idents: HashMap<usize, Vec<(&'static str, Vec<String>)>>,
}

impl Admissible {
    /// The lists for the documents of `splits`.
    pub fn build(c: &Corpus, splits: &[Split]) -> Admissible {
        let per_doc: Vec<DocAdmissible> = (0..c.docs.len())
            .into_par_iter()
            .filter(|&d| {
                c.docs[d].pool
                    && !c.docs[d].candidates.is_empty()
                    && splits.contains(&c.docs[d].split)
            })
            .map(|d| {
                let idents = edits::page_identifiers(&render(c.store.documents[d].visible_text()));
                let mut out = Vec::new();
                for &i in &c.docs[d].candidates {
                    let s = render(c.sentence(d, i));
                    let mut rng = Rng::new(mix(d as u64, i as u64));
                    for class in SENTENCE_CLASSES {
                        let ok = match class {
                            Class::Fabricated => subject_split(&s),
                            _ => make_edit(class, &s, &idents, &mut rng).is_some(),
                        };
                        if ok {
                            out.push((class, i as u32));
                        }
                    }
                }
                (d, out, idents)
            })
            .collect();
        let mut lists: HashMap<(Split, Class), Vec<(u32, u32)>> = HashMap::new();
        let mut by_doc: HashMap<(usize, Class), Vec<usize>> = HashMap::new();
        let mut idents = HashMap::new();
        for (d, out, id) in per_doc {
            for (class, i) in out {
                lists.entry((c.docs[d].split, class)).or_default().push((d as u32, i));
                by_doc.entry((d, class)).or_default().push(i as usize);
            }
            idents.insert(d, id);
        }
        Admissible { lists, by_doc, idents }
    }

    fn list(&self, split: Split, class: Class) -> &[(u32, u32)] {
        self.lists.get(&(split, class)).map_or(&[], Vec::as_slice)
    }

    fn of_doc(&self, d: usize, class: Class) -> &[usize] {
        self.by_doc.get(&(d, class)).map_or(&[], Vec::as_slice)
    }

    /// Number of admissible sentences of a class in a split.
    pub fn count(&self, split: Split, class: Class) -> usize {
        self.list(split, class).len()
    }
}

fn subject_split(s: &str) -> bool {
    edits::recombine(s, "The planner may use the index for ordered scans of a table.", |t| {
        t.split(' ').map(|w| w.to_lowercase()).filter(|w| w.len() > 3).collect()
    })
    .is_some()
}

/// The edit that makes a sentence of `class` (not for classes that need a second
/// sentence).
fn make_edit(
    class: Class,
    s: &str,
    idents: &[(&'static str, Vec<String>)],
    rng: &mut Rng,
) -> Option<Edit> {
    match class {
        Class::Verbatim | Class::OtherDocument | Class::BrokenCitation => {
            Some(Edit { text: s.to_owned(), detail: String::new(), kind: "verbatim".into() })
        }
        Class::LightEdit => edits::light_edit(s, rng),
        Class::HeavyParaphrase => edits::heavy_paraphrase(s, rng),
        Class::FigureChanged => edits::change_figure(s, rng),
        Class::UnitChanged => edits::change_unit(s, rng),
        Class::PolarityFlipped => edits::flip_polarity(s, rng),
        Class::OppositeSwap => edits::swap_opposite(s, rng),
        Class::QuantifierSwap => edits::swap_quantifier(s, rng),
        Class::IdentifierSwap => edits::swap_identifier(s, idents, rng),
        Class::JoinedClause => edits::join_clause(s, "The planner may use the index for scans."),
        Class::Fabricated | Class::NoClaim => None,
    }
}

/// Identifiers of a page by shape (see [`edits::page_identifiers`]).
type PageIdentifiers = Vec<(&'static str, Vec<String>)>;

/// One document's admissible sentences by class, and its identifiers.
type DocAdmissible = (usize, Vec<(Class, u32)>, PageIdentifiers);

/// Everything answers are made from.
pub struct Generator<'a> {
    pub corpus: &'a Corpus,
    pub admissible: &'a Admissible,
    pub seed: u64,
    pools: HashMap<Split, Vec<usize>>,
    /// Chatter sentences of each split: each sentence the patterns give belongs to one
    /// split (by a hash), so that a checker tuned on the tuning split's chatter meets
    /// other wordings on the test split.
    chatter: HashMap<Split, Vec<String>>,
}

/// One citation of an answer under construction.
struct Cite {
    passage: Passage,
    drafts: Vec<Draft>,
    defect: Option<Defect>,
    expected: &'static str,
    how: String,
}

impl<'a> Generator<'a> {
    pub fn new(corpus: &'a Corpus, admissible: &'a Admissible, seed: u64) -> Generator<'a> {
        let pools =
            [Split::Tuning, Split::Test].into_iter().map(|s| (s, corpus.pool(s, 2))).collect();
        let mut chatter: HashMap<Split, Vec<String>> = HashMap::new();
        for line in edits::chatter() {
            let split =
                if crate::rng::hash_str(&line) % 2 == 0 { Split::Tuning } else { Split::Test };
            chatter.entry(split).or_default().push(line);
        }
        Generator { corpus, admissible, seed, pools, chatter }
    }

    /// Answers of `split` until at least `sentences` labelled sentences (or `answers`
    /// answers, when given) are made.
    pub fn split(&self, split: Split, sentences: usize, answers: Option<usize>) -> Generated {
        let mut out = Generated::default();
        let mut n = 0;
        loop {
            let done = match answers {
                Some(a) => n >= a,
                None => out.labels.len() >= sentences,
            };
            if done {
                break;
            }
            self.answer(split, n, &mut out);
            n += 1;
        }
        out
    }

    fn answer(&self, split: Split, n: usize, out: &mut Generated) {
        let tag = if split == Split::Tuning { "tune" } else { "test" };
        let id = format!("{tag}-{n:05}");
        let mut rng = Rng::new(mix(self.seed, (split as u64) << 40 | n as u64));
        let profile = match rng.weighted(&[78, 6, 6, 5, 5]) {
            0 => Profile::Groups(vec!["staff".into()]),
            1 => Profile::Groups(vec!["staff".into(), "core-devs".into()]),
            2 => Profile::Principal(if rng.chance(0.5) { "u-dba" } else { "u-staff" }),
            3 => Profile::Unknown(Some("u-visitor")),
            _ => Profile::Unknown(None),
        };
        let groups = profile.groups();
        let markers = rng.chance(0.93);
        let ncit = if markers && rng.chance(0.3) { 2 } else { 1 };
        let defect = if rng.chance(0.14) {
            Some(
                [Defect::Dead, Defect::BadLocator, Defect::Stale, Defect::QuoteMismatch]
                    [rng.below(4)],
            )
        } else {
            None
        };
        let mut cites: Vec<Cite> = Vec::new();
        for k in 0..ncit {
            let defect = if k == 0 { defect } else { None };
            // A class is drawn by weight and tried until a sentence takes it, so that
            // classes whose edits apply rarely are not under-represented.
            let mut made = None;
            'draw: for _ in 0..4 {
                let class = if matches!(defect, Some(Defect::Dead | Defect::BadLocator)) {
                    Class::BrokenCitation
                } else {
                    let weights: Vec<u32> = Class::ALL.iter().map(|c| c.weight()).collect();
                    Class::ALL[rng.weighted(&weights)]
                };
                for _ in 0..40 {
                    if let Some(c) =
                        self.citation(split, class, &mut rng, groups.as_deref(), defect, &cites)
                    {
                        made = Some(c);
                        break 'draw;
                    }
                }
            }
            match made {
                Some(c) => cites.push(c),
                None => break,
            }
        }
        if cites.is_empty() {
            return;
        }

        // Sentences: per citation, its drafts in random order; chatter around.
        let mut sentences: Vec<(Draft, Option<usize>)> = Vec::new();
        for (ci, c) in cites.iter().enumerate() {
            let mut ds = c.drafts.clone();
            rng.shuffle(&mut ds);
            sentences.extend(ds.into_iter().map(|d| (d, Some(ci))));
        }
        let chatter = |rng: &mut Rng| Draft {
            class: Class::NoClaim,
            edit: Edit {
                text: self.chatter[&split][rng.below(self.chatter[&split].len())].clone(),
                detail: String::new(),
                kind: "chatter".into(),
            },
            source: None,
            expect_doc: None,
        };
        // An answer with a citation no marker names gets no chatter: an unmarked sentence
        // is checked against every citation, and the status must not hang on its score.
        let unused_extra = markers && rng.chance(0.06);
        if !unused_extra {
            if rng.chance(0.15) {
                sentences.insert(0, (chatter(&mut rng), None));
            }
            if rng.chance(0.12) {
                sentences.push((chatter(&mut rng), None));
            }
        }

        let mut parts = Vec::new();
        for (pos, (d, ci)) in sentences.iter().enumerate() {
            let refs: Vec<String> = match ci {
                Some(ci) if markers => vec![(ci + 1).to_string()],
                _ => Vec::new(),
            };
            let t = &d.edit.text;
            let written = if refs.is_empty() {
                t.clone()
            } else if let Some(body) = t.strip_suffix('.').filter(|_| rng.chance(0.8)) {
                format!("{body} [{}].", refs.join("]["))
            } else {
                format!("{t} [{}]", refs.join("]["))
            };
            parts.push(written);
            let c = ci.map(|i| &cites[i]);
            let passage_text = c.map(|c| {
                let text = &self.corpus.store.documents[c.passage.doc].visible_text()
                    [c.passage.visible.clone()];
                cut(text, 1500)
            });
            out.labels.push(Label {
                answer: id.clone(),
                number: n,
                split: split.as_str(),
                position: pos,
                class: d.class,
                kind: d.edit.kind.clone(),
                text: t.clone(),
                source: d.source.map(|(dd, i)| render(self.corpus.sentence(dd, i))),
                source_doc: d.source.map(|(dd, _)| self.corpus.docs[dd].id.clone()),
                refs,
                cited_doc: c.map(|c| self.corpus.docs[c.passage.doc].id.clone()),
                passage: passage_text,
                detail: d.edit.detail.clone(),
                expect_doc: d.expect_doc.map(|x| self.corpus.docs[x].id.clone()),
                anchor: d.edit.kind == "anchor",
            });
        }

        // Citations, and perhaps one that no marker names.
        let mut citations = Vec::new();
        for (ci, c) in cites.iter().enumerate() {
            let r = (ci + 1).to_string();
            let (v, doc_id) = self.citation_json(&r, c, &mut rng);
            citations.push(v);
            out.citations.push(CitationLabel {
                answer: id.clone(),
                number: n,
                split: split.as_str(),
                r#ref: r,
                doc: doc_id,
                expected: c.expected,
                how: c.how.clone(),
            });
        }
        if unused_extra {
            let pool = &self.pools[&split];
            for _ in 0..20 {
                let d = pool[rng.below(pool.len())];
                if entitlement(groups.as_deref(), &self.corpus.docs[d].access) != Ent::Allowed {
                    continue;
                }
                let r = (cites.len() + 1).to_string();
                citations.push(json!({"ref": r, "doc": self.corpus.docs[d].id}));
                out.citations.push(CitationLabel {
                    answer: id.clone(),
                    number: n,
                    split: split.as_str(),
                    r#ref: r,
                    doc: self.corpus.docs[d].id.clone(),
                    expected: "unused",
                    how: "whole, named by no marker".into(),
                });
                break;
            }
        }

        let mut record = serde_json::Map::new();
        record.insert("id".into(), json!(id));
        match &profile {
            Profile::Groups(g) => {
                record.insert("user".into(), json!(format!("u-{}", n % 97)));
                record.insert("groups".into(), json!(g));
            }
            Profile::Principal(u) => {
                record.insert("user".into(), json!(u));
            }
            Profile::Unknown(Some(u)) => {
                record.insert("user".into(), json!(u));
            }
            Profile::Unknown(None) => {}
        }
        record.insert("answer".into(), json!(parts.join(" ")));
        record.insert("citations".into(), Value::Array(citations));
        out.answers.push(Value::Object(record));
    }

    /// One citation with its drafts, or `None` to try again.
    fn citation(
        &self,
        split: Split,
        class: Class,
        rng: &mut Rng,
        groups: Option<&[String]>,
        defect: Option<Defect>,
        earlier: &[Cite],
    ) -> Option<Cite> {
        let c = self.corpus;
        let broken = matches!(defect, Some(Defect::Dead | Defect::BadLocator));
        let usable = |d: usize| {
            let ent = entitlement(groups, &c.docs[d].access);
            // Both sides unknown has no status of its own in SPEC.md; leave it out.
            let both_unknown = groups.is_none() && c.docs[d].access == Access::Unlisted;
            let needs_allowed = matches!(defect, Some(Defect::Stale | Defect::QuoteMismatch));
            let cited_before = earlier.iter().any(|e| e.passage.doc == d);
            !both_unknown && (!needs_allowed || ent == Ent::Allowed) && !cited_before
        };

        let (passage, first) = if class == Class::OtherDocument {
            self.other_document(split, rng, groups, &usable)?
        } else {
            let list_class = if broken { Class::Verbatim } else { class };
            let list = self.admissible.list(split, list_class);
            if list.is_empty() {
                return None;
            }
            let (d, i) = list[rng.below(list.len())];
            let (d, i) = (d as usize, i as usize);
            if !usable(d) {
                return None;
            }
            let s = render(c.sentence(d, i));
            let passage = self.passage(d, i, rng)?;
            let edit = if class == Class::Fabricated {
                self.fabricate(&passage, i, &s, rng)?
            } else if class == Class::JoinedClause {
                let clause = self.unrelated_clause(split, d, rng)?;
                edits::join_clause(&s, &clause)?
            } else {
                make_edit(class, &s, &self.admissible.idents[&d], rng)?
            };
            let edit = self.note_coincidence(class, edit, &passage);
            (passage, Draft { class, edit, source: Some((d, i)), expect_doc: None })
        };
        let d = passage.doc;
        let ent = entitlement(groups, &c.docs[d].access);
        let mut drafts = vec![first];
        let mut used: Vec<usize> =
            drafts.iter().filter_map(|x| x.source.filter(|s| s.0 == d).map(|s| s.1)).collect();

        // A second sentence of another class from the same passage.
        if !broken && rng.chance(0.35) {
            for _ in 0..8 {
                let class = SENTENCE_CLASSES[rng.below(SENTENCE_CLASSES.len())];
                if let Some(x) = self.second(&passage, class, &used, split, rng) {
                    used.push(x.source.map_or(usize::MAX, |s| s.1));
                    drafts.push(x);
                    break;
                }
            }
        }

        let expected = match defect {
            Some(Defect::Dead) => "dead",
            Some(Defect::BadLocator) => "bad_locator",
            _ => match ent {
                Ent::Forbidden => "forbidden",
                Ent::PrincipalUnknown => "principal_unknown",
                Ent::AccessUnknown => "access_unknown",
                Ent::Allowed => match defect {
                    Some(Defect::Stale) => "stale",
                    Some(Defect::QuoteMismatch) => "quote_mismatch",
                    _ => "ok",
                },
            },
        };
        // An `ok` citation needs a verbatim sentence of its own passage.
        if expected == "ok" && !drafts.iter().any(|x| x.class == Class::Verbatim) {
            let free: Vec<usize> = c.docs[d]
                .candidates
                .iter()
                .copied()
                .filter(|i| passage.sentences.contains(i) && !used.contains(i))
                .collect();
            if free.is_empty() {
                return None;
            }
            let i = free[rng.below(free.len())];
            drafts.push(Draft {
                class: Class::Verbatim,
                edit: Edit {
                    text: render(c.sentence(d, i)),
                    detail: String::new(),
                    kind: "anchor".into(),
                },
                source: Some((d, i)),
                expect_doc: None,
            });
        }
        let how = match &passage.locator {
            Locator::Range(..) => "range",
            Locator::Chunk(_) => "chunk",
            Locator::Whole => "whole",
        };
        Some(Cite { passage, drafts, defect, expected, how: how.to_owned() })
    }

    /// A sentence of another document on a similar topic, cited to this one.
    fn other_document(
        &self,
        split: Split,
        rng: &mut Rng,
        groups: Option<&[String]>,
        usable: &dyn Fn(usize) -> bool,
    ) -> Option<(Passage, Draft)> {
        let c = self.corpus;
        let list = self.admissible.list(split, Class::Verbatim);
        let (b, i) = list[rng.below(list.len())];
        let (b, i) = (b as usize, i as usize);
        if entitlement(groups, &c.docs[b].access) != Ent::Allowed {
            return None;
        }
        let raw = c.sentence(b, i);
        if c.sentence_docs.get(&crate::rng::hash_str(&crate::corpus::normalise(raw))) != Some(&1) {
            return None;
        }
        let s = render(raw);
        // Only one document may carry the sentence, so that "the right document" is one.
        if c.carriers(&s, 0.8) != [b] {
            return None;
        }
        let stems = Corpus::content_stems(&s);
        let similar = c.similar_docs(&s, split, b, 6);
        let mut options: Vec<(usize, usize)> = Vec::new();
        for a in similar {
            if !usable(a) || !c.docs[a].pool || c.docs[a].candidates.len() < 2 {
                continue;
            }
            let (cover, at) = c.best_window_cover(a, &stems);
            if cover < 0.6 {
                options.push((a, at));
            }
        }
        if options.is_empty() {
            return None;
        }
        let (a, at) = options[rng.below(options.len().min(3))];
        let passage = self.passage(a, at, rng)?;
        let draft = Draft {
            class: Class::OtherDocument,
            edit: Edit {
                text: s,
                detail: format!("from {}", c.docs[b].id),
                kind: "similar topic".into(),
            },
            source: Some((b, i)),
            expect_doc: Some(b),
        };
        Some((passage, draft))
    }

    /// The passage around sentence `i` of `d`, with its locator.
    fn passage(&self, d: usize, i: usize, rng: &mut Rng) -> Option<Passage> {
        let c = self.corpus;
        let doc = &c.store.documents[d];
        let n = c.len(d);
        let cands = &c.docs[d].candidates;
        let count = |r: &Range<usize>| cands.iter().filter(|x| r.contains(x)).count();
        let form = rng.weighted(&[55, 25, 20]);
        if form == 1 && !doc.chunks.is_empty() {
            let k = i / crate::corpus::CHUNK_SENTENCES;
            let r = c.docs[d].chunks.get(k)?.clone();
            let chunk = doc.chunks.get(k)?;
            let vis = doc.visible_range(chunk.start, chunk.end);
            let want = c.span(d, i..i + 1);
            if count(&r) >= 2 && vis.start <= want.start && vis.end >= want.end {
                return Some(Passage {
                    doc: d,
                    sentences: r,
                    locator: Locator::Chunk(chunk.id.clone()),
                    visible: vis,
                });
            }
        }
        if form == 2 || form == 1 {
            let r = i.saturating_sub(3)..(i + 4).min(n);
            if count(&r) >= 2 {
                let vis = 0..doc.visible_text().len();
                return Some(Passage {
                    doc: d,
                    sentences: r,
                    locator: Locator::Whole,
                    visible: vis,
                });
            }
        }
        let mut lo = i.saturating_sub(rng.below(4));
        let mut hi = (i + 1 + rng.below(4)).min(n);
        while count(&(lo..hi)) < 2 && (lo > 0 || hi < n) && hi - lo < 14 {
            lo = lo.saturating_sub(1);
            hi = (hi + 1).min(n);
        }
        if count(&(lo..hi)) < 2 {
            return None;
        }
        let vis = c.span(d, lo..hi);
        let file = doc.file_range(vis.clone());
        let back = doc.visible_range(file.start, file.end);
        if back.start > vis.start || back.end < vis.end {
            return None;
        }
        Some(Passage {
            doc: d,
            sentences: lo..hi,
            locator: Locator::Range(file.start, file.end),
            visible: back,
        })
    }

    /// For a changed figure: notes in the detail when the new value also stands in the
    /// cited passage (a presence check cannot tell such a change; the item is kept, as an
    /// assistant that confuses two figures of a passage makes exactly this error).
    fn note_coincidence(&self, class: Class, mut edit: Edit, p: &Passage) -> Edit {
        if class != Class::FigureChanged {
            return edit;
        }
        let new = edit.detail.rsplit("→ ").next().unwrap_or("").replace(',', "");
        let text = &self.corpus.store.documents[p.doc].visible_text()[p.visible.clone()];
        let region = if matches!(p.locator, Locator::Whole) {
            &self.corpus.store.documents[p.doc].visible_text()
                [self.corpus.span(p.doc, p.sentences.clone())]
        } else {
            text
        };
        let present = region
            .split(|ch: char| !(ch.is_ascii_alphanumeric() || ch == '.' || ch == ','))
            .map(|w| w.trim_end_matches(['.', ',']).replace(',', ""))
            .any(|w| w.eq_ignore_ascii_case(&new));
        if present {
            edit.detail.push_str(" (the new value also occurs in the cited passage)");
        }
        edit
    }

    /// A recombined sentence: this sentence's subject with the predicate of another
    /// sentence of the passage.
    fn fabricate(&self, p: &Passage, i: usize, s: &str, rng: &mut Rng) -> Option<Edit> {
        let c = self.corpus;
        let mut others: Vec<usize> = c.docs[p.doc]
            .candidates
            .iter()
            .copied()
            .filter(|j| *j != i && p.sentences.contains(j))
            .collect();
        rng.shuffle(&mut others);
        for j in others {
            let b = render(c.sentence(p.doc, j));
            if let Some(e) = edits::recombine(s, &b, Corpus::content_stems) {
                return Some(e);
            }
        }
        None
    }

    /// A clause from a document unrelated to `d` (another pool document of the split).
    fn unrelated_clause(&self, split: Split, d: usize, rng: &mut Rng) -> Option<String> {
        let pool = &self.pools[&split];
        for _ in 0..10 {
            let o = pool[rng.below(pool.len())];
            if o == d {
                continue;
            }
            let cands = &self.corpus.docs[o].candidates;
            let j = cands[rng.below(cands.len())];
            let s = render(self.corpus.sentence(o, j));
            if (5..=20).contains(&s.split(' ').count()) {
                return Some(s);
            }
        }
        None
    }

    /// A sentence of `class` made from another sentence of the passage.
    fn second(
        &self,
        p: &Passage,
        class: Class,
        used: &[usize],
        split: Split,
        rng: &mut Rng,
    ) -> Option<Draft> {
        let c = self.corpus;
        let _ = split;
        let mut js: Vec<usize> = self
            .admissible
            .of_doc(p.doc, class)
            .iter()
            .copied()
            .filter(|j| p.sentences.contains(j) && !used.contains(j))
            .collect();
        if js.is_empty() {
            return None;
        }
        rng.shuffle(&mut js);
        let j = js[0];
        let s = render(c.sentence(p.doc, j));
        let edit = match class {
            Class::Fabricated => self.fabricate(p, j, &s, rng)?,
            Class::JoinedClause => {
                edits::join_clause(&s, &self.unrelated_clause(split, p.doc, rng)?)?
            }
            _ => make_edit(class, &s, &self.admissible.idents[&p.doc], rng)?,
        };
        let edit = self.note_coincidence(class, edit, p);
        Some(Draft { class, edit, source: Some((p.doc, j)), expect_doc: None })
    }

    /// The citation's JSON, with the defect applied; and the document id written.
    fn citation_json(&self, r: &str, cite: &Cite, rng: &mut Rng) -> (Value, String) {
        let c = self.corpus;
        let p = &cite.passage;
        let doc = &c.store.documents[p.doc];
        let mut v = serde_json::Map::new();
        v.insert("ref".into(), json!(r));
        let mut id = doc.id.clone();
        match cite.defect {
            Some(Defect::Dead) => {
                id = match rng.below(4) {
                    0 => format!("../{}", doc.id),
                    1 => format!("/srv/manuals/{}", doc.id),
                    2 => format!("archive/{}", doc.id),
                    _ => match doc.id.rsplit_once('.') {
                        Some((stem, _)) => format!("{stem}.pdf"),
                        None => format!("{}.old", doc.id),
                    },
                };
            }
            Some(Defect::BadLocator) => {
                let size = doc.raw().len();
                match rng.below(4) {
                    0 => {
                        v.insert("start".into(), json!(size.saturating_sub(100)));
                        v.insert("end".into(), json!(size + 1 + rng.below(5000)));
                    }
                    1 => {
                        let vis = c.span(p.doc, p.sentences.clone());
                        let f = doc.file_range(vis);
                        v.insert("start".into(), json!(f.end));
                        v.insert("end".into(), json!(f.start));
                    }
                    2 => match doc.raw().char_indices().find(|(_, ch)| ch.len_utf8() > 1) {
                        Some((at, _)) => {
                            v.insert("start".into(), json!(at + 1));
                            v.insert("end".into(), json!((at + 400).min(size)));
                        }
                        None => {
                            v.insert("chunk".into(), json!("c9999"));
                        }
                    },
                    _ => {
                        v.insert("chunk".into(), json!("c9999"));
                    }
                }
            }
            _ => {}
        }
        if cite.defect != Some(Defect::BadLocator) {
            match &p.locator {
                Locator::Range(s, e) => {
                    v.insert("start".into(), json!(s));
                    v.insert("end".into(), json!(e));
                }
                Locator::Chunk(k) => {
                    v.insert("chunk".into(), json!(k));
                }
                Locator::Whole => {}
            }
        }
        let sha = hex(&Sha256::digest(doc.raw().as_bytes()));
        match cite.defect {
            Some(Defect::Stale) => {
                let mut bytes = doc.raw().as_bytes().to_vec();
                bytes.extend_from_slice(b"\n<!-- edited -->\n");
                v.insert("sha256".into(), json!(hex(&Sha256::digest(&bytes))));
            }
            Some(Defect::QuoteMismatch) => {
                v.insert("quote".into(), json!(self.altered_quote(p, rng)));
            }
            None if cite.expected == "ok" => {
                if rng.chance(0.1) {
                    v.insert("sha256".into(), json!(sha));
                }
                if rng.chance(0.15) {
                    let cands: Vec<usize> = c.docs[p.doc]
                        .candidates
                        .iter()
                        .copied()
                        .filter(|i| p.sentences.contains(i))
                        .collect();
                    if let Some(&i) = cands.first() {
                        v.insert("quote".into(), json!(c.sentence(p.doc, i)));
                    }
                }
            }
            _ => {}
        }
        v.insert("doc".into(), json!(id));
        (Value::Object(v), id)
    }

    /// A quote that is not in the passage: one of its sentences with one word changed.
    fn altered_quote(&self, p: &Passage, rng: &mut Rng) -> String {
        let c = self.corpus;
        let text = &c.store.documents[p.doc].visible_text()[p.visible.clone()];
        let passage_words = plain_words(text);
        let cands: Vec<usize> =
            c.docs[p.doc].candidates.iter().copied().filter(|i| p.sentences.contains(i)).collect();
        for _ in 0..20 {
            let i = cands[rng.below(cands.len())];
            let s = c.sentence(p.doc, i);
            let ws: Vec<&str> = s.split(' ').collect();
            let k = rng.below(ws.len());
            let mut out: Vec<String> = ws.iter().map(|w| (*w).to_owned()).collect();
            out[k] = "zephyrine".into();
            let q = out.join(" ");
            let qw = plain_words(&q);
            if !passage_words.windows(qw.len()).any(|w| w == qw.as_slice()) {
                return q;
            }
        }
        "This sentence appears nowhere in the cited passage, zephyrine.".into()
    }
}

/// Lower-case alphanumeric words: this benchmark's own reading of "the same words".
fn plain_words(s: &str) -> Vec<String> {
    s.split(|ch: char| !ch.is_alphanumeric())
        .filter(|w| !w.is_empty())
        .map(str::to_lowercase)
        .collect()
}

fn hex(b: &[u8]) -> String {
    b.iter().map(|x| format!("{x:02x}")).collect()
}

/// The first `n` bytes of `s` on a character boundary.
pub fn cut(s: &str, n: usize) -> String {
    if s.len() <= n {
        return s.to_owned();
    }
    let mut k = n;
    while !s.is_char_boundary(k) {
        k -= 1;
    }
    format!("{}…", &s[..k])
}
