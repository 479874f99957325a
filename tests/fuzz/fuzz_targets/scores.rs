//! Fuzz target `scores`: the invariants of `invariants::scores`.
#![no_main]

#[path = "../../integration/invariants.rs"]
mod invariants;

libfuzzer_sys::fuzz_target!(|data: &[u8]| invariants::scores(data));
