//! Replays the inputs kept under `tests/fixtures/fuzz/<target>/` through the same checks the
//! fuzz targets run (`fuzz/checks.rs`): each reader takes the bytes without a panic, and every
//! error it gives is one short line. The inputs are the minimized failures the fuzzer found
//! (named after what failed) and the hostile inputs reported against the readers. Plain stable
//! `cargo test`; no fuzzer needed.

#[path = "../fuzz/checks.rs"]
mod checks;

use std::path::Path;

fn replay(target: &str, check: fn(&[u8])) {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/fuzz")
        .join(target);
    let mut inputs: Vec<_> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
        .map(|e| e.unwrap().path())
        .collect();
    inputs.sort();
    assert!(!inputs.is_empty(), "no inputs in {}", dir.display());
    for path in inputs {
        let bytes = std::fs::read(&path).unwrap();
        let outcome = std::panic::catch_unwind(|| check(&bytes));
        assert!(outcome.is_ok(), "{}: the check failed", path.display());
    }
}

#[test]
fn configuration_inputs() {
    replay("config", checks::config);
}

#[test]
fn subject_inputs() {
    replay("subject", checks::subject);
}

#[test]
fn manifest_inputs() {
    replay("manifest", checks::manifest);
}

#[test]
fn table_inputs() {
    replay("table", checks::table);
}

#[test]
fn trial_inputs() {
    replay("trial", checks::trial);
}
