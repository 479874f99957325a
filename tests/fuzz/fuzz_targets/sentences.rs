//! Fuzz target `sentences`: the invariants of `invariants::sentences`.
#![no_main]

#[path = "../../integration/invariants.rs"]
mod invariants;

libfuzzer_sys::fuzz_target!(|data: &[u8]| invariants::sentences(data));
