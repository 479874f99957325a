//! Fuzz target `tokens`: the invariants of `invariants::tokens`.
#![no_main]

#[path = "../../integration/invariants.rs"]
mod invariants;

libfuzzer_sys::fuzz_target!(|data: &[u8]| invariants::tokens(data));
