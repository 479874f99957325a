//! Fuzz target `markers`: the invariants of `invariants::markers`.
#![no_main]

#[path = "../../integration/invariants.rs"]
mod invariants;

libfuzzer_sys::fuzz_target!(|data: &[u8]| invariants::markers(data));
