//! Fuzz target `answers_line`: the invariants of `invariants::answers_line`.
#![no_main]

#[path = "../../integration/invariants.rs"]
mod invariants;

libfuzzer_sys::fuzz_target!(|data: &[u8]| invariants::answers_line(data));
