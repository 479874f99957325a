//! Fuzz target `confine`: the invariants of `invariants::confine_reference`.
#![no_main]

#[path = "../../integration/invariants.rs"]
mod invariants;

libfuzzer_sys::fuzz_target!(|data: &[u8]| invariants::confine_reference(data));
