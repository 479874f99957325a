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
mod cli;
mod common;
mod harness;
mod oracle_metrics;
mod paper_examples;
mod report;
mod stemmer;
mod stores;
mod uax29;
