//! What every fuzz target checks, shared by the targets (`fuzz_targets/*.rs`) and by the plain
//! `cargo test` replay of the kept inputs (`tests/fuzz_regressions.rs`): each reader takes
//! arbitrary bytes without a panic, a hang or an allocation out of proportion to the input,
//! and every error it returns is one line of bounded length.

#![allow(dead_code)]

use gravline::config::{Config, RawConfig, Subject};
use std::path::Path;

/// Longest message accepted: the origin, a hint and a few quoted excerpts of input.
const MAX_MESSAGE_CHARS: usize = 1200;

/// Panics when a message spans several lines or is longer than [`MAX_MESSAGE_CHARS`].
pub fn one_line(what: &str, message: &str) {
    assert!(
        !message.contains(['\n', '\r']),
        "{what}: message on several lines: {message:?}"
    );
    assert!(
        message.chars().count() <= MAX_MESSAGE_CHARS,
        "{what}: message of {} characters",
        message.chars().count()
    );
}

/// Configuration TOML, parsed and validated.
pub fn config(data: &[u8]) {
    // Files are read as UTF-8 text (other bytes are refused before parsing).
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    match RawConfig::from_toml(text, "c.toml") {
        Ok(raw) => match Config::from_raw(&raw, "c.toml") {
            // The table name is checked where the setup loads it; names with a separator
            // would read files, which is not the configuration reader's job.
            Ok(config) if !config.table.contains(['/', '\\']) => {
                let sex = gravline::anthropometry::Sex::Male;
                if let Err(e) = gravline::anthropometry::SegmentTable::load(&config.table, sex) {
                    one_line("config table", &e.to_string());
                }
            }
            Ok(_) => {}
            Err(e) => one_line("config", &e.to_string()),
        },
        Err(e) => one_line("config", &e.to_string()),
    }
}

/// Subject TOML, parsed and validated.
pub fn subject(data: &[u8]) {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    if let Err(e) = Subject::from_toml(text, "s.toml") {
        one_line("subject", &e.to_string());
    }
}

/// A batch manifest: the plan, every row's message and the output ids.
pub fn manifest(data: &[u8]) {
    // Config cells resolve under a folder that does not exist (absolute ones as given).
    let folder = Path::new("/nonexistent-gravline-fuzz");
    match gravline::batch::read_manifest_bytes(data, "m.csv", folder, Config::default()) {
        Ok(plan) => {
            let mut ids = std::collections::HashSet::new();
            for job in &plan.jobs {
                if let Err(e) = &job.setup {
                    one_line("manifest row", e);
                }
                gravline::batch::confined_id(&job.id)
                    .unwrap_or_else(|e| panic!("manifest: id {:?} escapes: {e}", job.id));
                assert!(
                    ids.insert(job.id.to_lowercase()),
                    "manifest: id {:?} twice",
                    job.id
                );
            }
            for w in &plan.warnings {
                one_line("manifest warning", w);
            }
        }
        Err(e) => one_line("manifest", &e.to_string()),
    }
}

/// A segment table CSV.
pub fn table(data: &[u8]) {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    if let Err(e) = gravline::anthropometry::SegmentTable::parse(text, "t.csv", "p", "s") {
        one_line("table", &e.to_string());
    }
}

/// A trial CSV through the public byte-level reader, on one thread and on two.
pub fn trial(data: &[u8]) {
    let opts = gravline::trial::ReadOptions::default();
    for threads in [1, 2] {
        let _ = gravline::trial::read_trial_bytes(data, "t.csv", "t", &opts, threads);
    }
}
