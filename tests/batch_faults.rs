//! Faults a batch must survive, kept in the suite: killed (SIGKILL) at random moments again and
//! again, each time followed by `--resume`, it ends byte-equal to an uninterrupted run with no
//! temporary file left; `--resume` redoes a trial whose outputs were emptied or lack the plots
//! asked for now; on a full file system the affected trials fail with "No space left on
//! device" and leave nothing that `--resume` would trust. Synthetic standing trials (invented
//! data).

mod batch_common;

use batch_common::*;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// Every file under a folder, recursively, relative to it.
fn files(dir: &Path) -> Vec<PathBuf> {
    fn walk(root: &Path, dir: &Path, out: &mut Vec<PathBuf>) {
        let Ok(entries) = std::fs::read_dir(dir) else {
            return;
        };
        for e in entries.flatten() {
            let p = e.path();
            if p.is_dir() {
                walk(root, &p, out);
            } else {
                out.push(p.strip_prefix(root).unwrap().to_path_buf());
            }
        }
    }
    let mut out = Vec::new();
    walk(dir, dir, &mut out);
    out.sort();
    out
}

fn is_temporary(p: &Path) -> bool {
    p.file_name()
        .is_some_and(|n| gravline::batch::is_temporary(&n.to_string_lossy()))
}

/// A small deterministic generator (xorshift64), for the kill moments.
fn xorshift(state: &mut u64) -> u64 {
    *state ^= *state << 13;
    *state ^= *state >> 7;
    *state ^= *state << 17;
    *state
}

fn batch_args(manifest: &Path, out: &Path) -> Vec<String> {
    vec![
        "batch".into(),
        manifest.display().to_string(),
        "--out".into(),
        out.display().to_string(),
        "--jobs".into(),
        "2".into(),
        "--no-plots".into(),
        "-q".into(),
    ]
}

#[test]
fn fifteen_kills_at_random_moments_then_resume_equals_an_uninterrupted_run() {
    let dir = tempfile::tempdir().unwrap();
    let (manifest, _) = standing_batch(dir.path(), 12, 400);
    let exe = env!("CARGO_BIN_EXE_gravline");

    let whole = dir.path().join("whole");
    let start = Instant::now();
    gravline()
        .args(batch_args(&manifest, &whole))
        .assert()
        .code(0);
    let full_ms = start.elapsed().as_millis().max(50) as u64;

    let out = dir.path().join("killed");
    let mut state = 0x2545_f491_4f6c_dd1du64;
    let mut killed = 0;
    for _ in 0..15 {
        let mut child = Command::new(exe)
            .args(batch_args(&manifest, &out))
            .arg("--resume")
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .unwrap();
        // A moment in the first third of a whole run's time: a resumed run is shorter (it
        // skips the trials already done), so later moments would mostly land after it ended
        // (harmless too, and some still do).
        let wait = Duration::from_millis(xorshift(&mut state) % (full_ms / 3).max(20));
        std::thread::sleep(wait);
        if child.try_wait().unwrap().is_none() {
            child.kill().unwrap(); // SIGKILL on Unix: no clean-up runs.
            killed += 1;
        }
        child.wait().unwrap();
    }
    eprintln!("{killed} of 15 runs killed (a whole run takes {full_ms} ms)");
    assert!(killed >= 4, "only {killed} of 15 runs were killed");
    // A batch-level temporary left by a kill during the summary write (a process that no
    // longer runs: a pid above the Linux limit).
    std::fs::create_dir_all(&out).unwrap();
    std::fs::write(out.join(".summary.parquet.99999999.tmp"), "partial").unwrap();
    gravline()
        .args(batch_args(&manifest, &out))
        .arg("--resume")
        .assert()
        .code(0);

    let left = files(&out);
    assert!(
        !left.iter().any(|p| is_temporary(p)),
        "temporaries left: {left:?}"
    );
    assert_eq!(left, files(&whole), "the same files");
    for f in &left {
        assert!(
            std::fs::read(out.join(f)).unwrap() == std::fs::read(whole.join(f)).unwrap(),
            "{} differs from the uninterrupted run",
            f.display()
        );
    }
}

#[test]
fn resume_redoes_trials_with_emptied_or_missing_outputs() {
    let dir = tempfile::tempdir().unwrap();
    let (manifest, _) = standing_batch(dir.path(), 3, 200);
    let out = dir.path().join("out");
    gravline()
        .args(batch_args(&manifest, &out))
        .assert()
        .code(0);
    let trials = out.join("trials");
    let frames = trials.join("stand00/frames.csv");
    let whole = std::fs::read(&frames).unwrap();
    std::fs::write(&frames, "").unwrap();
    // Cut off after the header and a few rows.
    let cut = trials.join("stand01/frames.csv");
    let text = std::fs::read_to_string(&cut).unwrap();
    let short: String = text.lines().take(5).map(|l| format!("{l}\n")).collect();
    std::fs::write(&cut, short).unwrap();
    // Plots asked for now, skipped by the earlier --no-plots: every trial runs again.
    let output = gravline()
        .args(["batch", "--out"])
        .arg(&out)
        .arg(&manifest)
        .args(["--jobs", "2", "--resume"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(0), "{output:?}");
    let err = String::from_utf8_lossy(&output.stderr);
    assert!(err.contains("3 run, 0 skipped"), "{err}");
    assert_eq!(std::fs::read(&frames).unwrap(), whole);
    for t in ["stand00", "stand01", "stand02"] {
        for f in ["path.png", "series.png"] {
            assert!(trials.join(t).join(f).is_file(), "{t}/{f}");
        }
    }
    // Nothing missing now: the next resume skips all three.
    let output = gravline()
        .args(["batch", "--out"])
        .arg(&out)
        .arg(&manifest)
        .args(["--jobs", "2", "--resume"])
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&output.stderr);
    assert!(err.contains("0 run, 3 skipped"), "{err}");
}

/// A tmpfs mounted for the test, unmounted when dropped.
struct Mount(PathBuf);

impl Drop for Mount {
    fn drop(&mut self) {
        let _ = Command::new("umount").arg(&self.0).status();
    }
}

#[test]
#[ignore = "mounts a 600 kB tmpfs: needs root (CAP_SYS_ADMIN); run with `cargo test --test batch_faults -- --ignored` as root"]
fn a_full_file_system_fails_the_affected_trials_and_leaves_nothing_to_trust() {
    let dir = tempfile::tempdir().unwrap();
    let (manifest, _) = standing_batch(dir.path(), 6, 600);
    let mnt = dir.path().join("small");
    std::fs::create_dir_all(&mnt).unwrap();
    let status = Command::new("mount")
        .args(["-t", "tmpfs", "-o", "size=600k", "tmpfs"])
        .arg(&mnt)
        .status()
        .expect("mount(8) is needed by this test");
    assert!(status.success(), "cannot mount a tmpfs: run as root");
    let _mount = Mount(mnt.clone());
    let out = mnt.join("out");
    let output = gravline()
        .args(batch_args(&manifest, &out))
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&output.stderr);
    eprintln!("{err}");
    assert_ne!(output.status.code(), Some(0), "the disk filled: {err}");
    assert_ne!(output.status.code(), Some(101), "no panic: {err}");
    assert!(err.contains("No space left on device"), "{err}");
    for line in err.lines() {
        assert!(line.len() < 700, "{line}");
    }
    // Every trial folder is either complete (summary.json and a whole frames.csv) or has no
    // summary.json: --resume trusts only the first kind.
    let mut complete = 0;
    for entry in std::fs::read_dir(out.join("trials")).unwrap() {
        let t = entry.unwrap().path();
        let json = t.join("summary.json");
        if !json.exists() {
            continue;
        }
        let summary: serde_json::Value =
            serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
        let frames = summary["frames"].as_u64().unwrap();
        let text = std::fs::read_to_string(t.join("frames.csv")).unwrap();
        assert!(text.ends_with('\n'));
        assert_eq!(text.lines().count() as u64, frames + 1, "{}", t.display());
        complete += 1;
    }
    assert!(complete < 6, "some trials did not fit");
    assert!(
        !files(&out).iter().any(|p| is_temporary(p)),
        "no temporary file left"
    );
}
