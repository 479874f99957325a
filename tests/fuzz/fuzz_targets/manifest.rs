//! Fuzz target `manifest`: the invariants of `invariants::manifest_json`.
#![no_main]

#[path = "../../integration/invariants.rs"]
mod invariants;

libfuzzer_sys::fuzz_target!(|data: &[u8]| invariants::manifest_json(data));
