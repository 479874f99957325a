//! Fuzz target `extract_html`: the invariants of `invariants::extract_html`.
#![no_main]

#[path = "../../integration/invariants.rs"]
mod invariants;

libfuzzer_sys::fuzz_target!(|data: &[u8]| invariants::extract_html(data));
