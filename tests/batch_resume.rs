//! A batch killed halfway (SIGKILL) leaves no truncated file, and `--resume` finishes it without
//! redoing the trials that were done: its summary equals an uninterrupted run's byte for byte.
//! Synthetic standing trials (invented data).

mod batch_common;

use batch_common::*;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant, SystemTime};

/// Every file under a folder, recursively.
fn files(dir: &Path) -> Vec<PathBuf> {
    let mut out = Vec::new();
    let Ok(entries) = std::fs::read_dir(dir) else {
        return out;
    };
    for e in entries.flatten() {
        let p = e.path();
        if p.is_dir() {
            out.extend(files(&p));
        } else {
            out.push(p);
        }
    }
    out.sort();
    out
}

fn is_temporary(p: &Path) -> bool {
    p.file_name()
        .is_some_and(|n| gravline::batch::is_temporary(&n.to_string_lossy()))
}

/// Finished trials: folders with a `summary.json`, and its modification time.
fn finished(out: &Path) -> Vec<(PathBuf, SystemTime)> {
    files(&out.join("trials"))
        .into_iter()
        .filter(|p| p.file_name().is_some_and(|n| n == "summary.json"))
        .map(|p| {
            let t = std::fs::metadata(&p).unwrap().modified().unwrap();
            (p, t)
        })
        .collect()
}

/// Every non-temporary file parses completely: CSV to the end with equal-length records, JSON as
/// a whole document, Parquet with polars.
fn assert_complete(out: &Path) {
    for p in files(out) {
        if is_temporary(&p) {
            continue;
        }
        let ext = p
            .extension()
            .map(|e| e.to_string_lossy().into_owned())
            .unwrap_or_default();
        match ext.as_str() {
            "csv" => {
                let mut r = csv::Reader::from_path(&p).unwrap();
                let width = r.headers().unwrap().len();
                let mut n = 0;
                for rec in r.records() {
                    let rec = rec.unwrap_or_else(|e| panic!("{}: {e}", p.display()));
                    assert_eq!(rec.len(), width, "{}", p.display());
                    n += 1;
                }
                assert!(n > 0, "{} has rows", p.display());
            }
            "json" => {
                let text = std::fs::read_to_string(&p).unwrap();
                serde_json::from_str::<serde_json::Value>(&text)
                    .unwrap_or_else(|e| panic!("{}: {e}", p.display()));
            }
            "parquet" => {
                let f = std::fs::File::open(&p).unwrap();
                use polars::prelude::SerReader;
                polars::prelude::ParquetReader::new(f)
                    .finish()
                    .unwrap_or_else(|e| panic!("{}: {e}", p.display()));
            }
            "html" => {
                // A page is whole: it ends with its closing tag.
                let text = std::fs::read_to_string(&p).unwrap();
                assert!(
                    text.trim_end().ends_with("</html>"),
                    "{} is cut short",
                    p.display()
                );
            }
            other => panic!("unexpected file {} ({other})", p.display()),
        }
    }
}

#[test]
fn a_killed_batch_resumes_without_redoing_or_losing_trials() {
    let dir = tempfile::tempdir().unwrap();
    let n_trials = 24;
    let (manifest, _) = standing_batch(dir.path(), n_trials, 1000);
    let m = manifest.to_str().unwrap();
    let exe = env!("CARGO_BIN_EXE_gravline");

    let out = dir.path().join("killed");
    let mut child = Command::new(exe)
        .args([
            "batch",
            m,
            "--out",
            out.to_str().unwrap(),
            "--jobs",
            "1",
            "--no-plots",
            "-q",
        ])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let start = Instant::now();
    while finished(&out).len() < 4 {
        assert!(
            child.try_wait().unwrap().is_none(),
            "the batch ended before it could be killed"
        );
        assert!(
            start.elapsed() < Duration::from_secs(300),
            "no trial finished in time"
        );
        std::thread::sleep(Duration::from_millis(10));
    }
    child.kill().unwrap(); // SIGKILL on Unix: no clean-up runs.
    child.wait().unwrap();
    let done = finished(&out);
    assert!(
        done.len() < n_trials,
        "killed halfway: {} of {n_trials} done",
        done.len()
    );
    assert!(
        !out.join("summary.csv").exists(),
        "the summary is written at the end only"
    );
    assert_complete(&out);

    std::thread::sleep(Duration::from_millis(20)); // modification times are then distinguishable
    let resumed = Command::new(exe)
        .args([
            "batch",
            m,
            "--out",
            out.to_str().unwrap(),
            "--jobs",
            "2",
            "--no-plots",
            "--resume",
        ])
        .output()
        .unwrap();
    assert_eq!(resumed.status.code(), Some(0));
    let stderr = String::from_utf8_lossy(&resumed.stderr);
    let skipped = format!("{} skipped", done.len());
    assert!(
        stderr.contains(&skipped),
        "expected `{skipped}` in: {stderr}"
    );
    let run = format!("{} run", n_trials - done.len());
    assert!(stderr.contains(&run), "expected `{run}` in: {stderr}");
    for (p, t) in &done {
        let now = std::fs::metadata(p).unwrap().modified().unwrap();
        assert_eq!(&now, t, "{} was not rewritten", p.display());
    }
    assert_eq!(finished(&out).len(), n_trials);
    assert_complete(&out);
    assert!(
        !files(&out).iter().any(|p| is_temporary(p)),
        "no temporary file left after the resumed run"
    );

    let whole = dir.path().join("whole");
    gravline()
        .args([
            "batch",
            m,
            "--out",
            whole.to_str().unwrap(),
            "--jobs",
            "2",
            "--no-plots",
            "-q",
        ])
        .assert()
        .code(0);
    for f in ["summary.csv", "groups.csv"] {
        assert_eq!(
            std::fs::read_to_string(out.join(f)).unwrap(),
            std::fs::read_to_string(whole.join(f)).unwrap(),
            "resumed {f} equals the uninterrupted one"
        );
    }
    assert_eq!(
        std::fs::read(out.join("summary.parquet")).unwrap(),
        std::fs::read(whole.join("summary.parquet")).unwrap()
    );
}

#[test]
fn resume_reruns_a_trial_whose_input_or_configuration_changed() {
    let dir = tempfile::tempdir().unwrap();
    let (manifest, rows) = standing_batch(dir.path(), 3, 100);
    let m = manifest.to_str().unwrap();
    let out = dir.path().join("out");
    let o = out.to_str().unwrap();
    gravline()
        .args(["batch", m, "--out", o, "--no-plots", "-q"])
        .assert()
        .code(0);
    // Trial 1's file changes; trial 2's subject changes (so its configuration hash does).
    write(
        &dir.path().join(&rows[0].trial),
        &standing_csv(100, 50, None),
    );
    let text = std::fs::read_to_string(&manifest)
        .unwrap()
        .replacen(",61,", ",62,", 1);
    write(&manifest, &text);
    let a = gravline()
        .args(["batch", m, "--out", o, "--no-plots", "--resume"])
        .assert()
        .code(0);
    let stderr = String::from_utf8_lossy(&a.get_output().stderr).into_owned();
    assert!(stderr.contains("2 run, 1 skipped"), "{stderr}");
    let summary = csv_maps(&out.join("summary.csv"));
    assert_eq!(summary[1]["mass_kg"], "62");
    let sha =
        gravline::report::sha256_hex(&std::fs::read(dir.path().join(&rows[0].trial)).unwrap());
    assert_eq!(summary[0]["input_sha256"], sha);
}
