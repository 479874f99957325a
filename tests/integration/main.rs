//! External checks of plumbline's text engine and metrics against published
//! references: committed reference vectors (tests/data/oracle, made by
//! tests/oracle/make_vectors.py with pinned Python packages), Unicode's
//! sentence-break conformance file, and worked examples from the papers
//! that define the metrics.

mod check;
mod formats;
mod gating;
mod confinement;
mod demo;
mod entitlement;
mod cli;
mod common;
mod harness;
mod invariants;
mod fuzz_corpus;
mod oracle_metrics;
mod paper_examples;
mod properties;
mod reliability;
mod report;
mod report_formats;
mod score_input;
mod stemmer;
mod stores;
mod uax29;
