//! Fuzz target `extract_markdown`: the invariants of `invariants::extract_markdown`.
#![no_main]

#[path = "../../integration/invariants.rs"]
mod invariants;

libfuzzer_sys::fuzz_target!(|data: &[u8]| invariants::extract_markdown(data));
