//! The fuzz targets' invariants (`invariants.rs`) on the committed inputs: the seed
//! corpora (`tests/fuzz/seeds/TARGET/`) and every input a fuzzing run once failed on
//! (`tests/fuzz/regressions/TARGET/`, each the regression test of the defect it found).
//! Fuzzing itself runs in `tests/fuzz/run.sh`; this keeps what it found checked by plain
//! `cargo test`.

use std::path::PathBuf;

use crate::invariants::TARGETS;

fn inputs(kind: &str, target: &str) -> Vec<(PathBuf, Vec<u8>)> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/fuzz").join(kind).join(target);
    let Ok(entries) = std::fs::read_dir(&dir) else { return Vec::new() };
    let mut out: Vec<(PathBuf, Vec<u8>)> = entries
        .filter_map(Result::ok)
        .map(|e| e.path())
        .filter(|p| p.is_file())
        .map(|p| {
            let bytes = std::fs::read(&p).unwrap_or_else(|e| panic!("{}: {e}", p.display()));
            (p, bytes)
        })
        .collect();
    out.sort();
    out
}

#[test]
fn every_target_has_seeds_and_they_keep_the_invariants() {
    for (name, check) in TARGETS {
        let seeds = inputs("seeds", name);
        assert!(seeds.len() >= 3, "{name}: only {} seed inputs", seeds.len());
        for (path, bytes) in seeds {
            let r = std::panic::catch_unwind(|| check(&bytes));
            assert!(r.is_ok(), "{name}: invariant broken on {}", path.display());
        }
    }
}

#[test]
fn inputs_that_once_failed_keep_the_invariants() {
    let mut n = 0;
    for (name, check) in TARGETS {
        for (path, bytes) in inputs("regressions", name) {
            n += 1;
            let r = std::panic::catch_unwind(|| check(&bytes));
            assert!(r.is_ok(), "{name}: regression {} fails again", path.display());
        }
    }
    eprintln!("{n} regression inputs replayed");
}

#[test]
fn the_shared_checks_can_fail() {
    // Controls: the helpers every target leans on must reject what they exist to reject.
    use crate::invariants::{ordered_spans, plainly_escapes};
    let text = "a é b";
    // Overlapping, past the end, inside "é", empty, out of order.
    let one = |r: std::ops::Range<usize>| vec![r];
    for bad in [vec![0..2, 1..3], one(0..9), one(2..3), one(1..1), vec![3..4, 0..1]] {
        let r = std::panic::catch_unwind(|| ordered_spans(text, &bad, "control"));
        assert!(r.is_err(), "{bad:?} passed the span check");
    }
    ordered_spans(text, &[0..1, 2..4, 5..6], "control");
    for escape in ["../x", "a/../../x", "/etc/passwd", "\\\\srv\\x", "C:x", "a\0b"] {
        assert!(plainly_escapes(escape), "{escape:?}");
    }
    assert!(!plainly_escapes("hr/leave.md"));
}
