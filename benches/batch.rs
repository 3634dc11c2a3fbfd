//! Batch benchmark (DESIGN.md 12): `gravline batch` on synthetic trials (invented data: a
//! standing body of 31 landmarks plus 14 technical markers, 45 in all, swaying as an inverted
//! pendulum; 30 s at 100 Hz, millimetres).
//!
//! Measures, on the release binary, without plots:
//! - wall time of 200 trials with `--jobs 1` and with `--jobs 2`, and the speed-up (target at
//!   least 1.7 on 2 cores);
//! - peak memory of the batch process for 50 and for 200 trials (`--jobs 2`), to show that it
//!   does not grow with the trial count. Peak memory is the kernel's high-water mark of the
//!   resident set, `VmHWM` in `/proc/<pid>/status`, read every 2 ms while the child runs; the last
//!   value read before it exits is reported (the mark only grows, so this is the peak up to the
//!   last few milliseconds, which only write the summary table).
//!
//! Run: `cargo bench --bench batch` (Linux, for `/proc`). Trials are written to a temporary folder
//! under the target directory and removed afterwards.

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

const RATE_HZ: f64 = 100.0;
const DURATION_S: f64 = 30.0;
const MARKERS: usize = 45;

/// The standing body (mm, +z up): the landmarks the default model needs, then technical markers
/// (thigh and shank clusters, upper back) up to `MARKERS`. Invented.
fn markers() -> Vec<(String, [f64; 3])> {
    let mut m: Vec<(String, [f64; 3])> = vec![
        ("c7".into(), [-60.0, 0.0, 1500.0]),
        ("jugular".into(), [60.0, 0.0, 1440.0]),
        ("head_top".into(), [0.0, 0.0, 1760.0]),
        ("l_asis".into(), [100.0, 125.0, 1000.0]),
        ("r_asis".into(), [100.0, -125.0, 1000.0]),
        ("l_psis".into(), [-60.0, 45.0, 1030.0]),
        ("r_psis".into(), [-60.0, -45.0, 1030.0]),
    ];
    for (s, y) in [("l", 1.0), ("r", -1.0)] {
        for (stem, p) in [
            ("acromion", [0.0, 190.0, 1450.0]),
            ("elbow_lat", [0.0, 240.0, 1120.0]),
            ("elbow_med", [0.0, 170.0, 1120.0]),
            ("wrist_rad", [20.0, 220.0, 860.0]),
            ("wrist_uln", [-20.0, 220.0, 860.0]),
            ("hand", [0.0, 220.0, 780.0]),
            ("knee_lat", [10.0, 140.0, 500.0]),
            ("knee_med", [10.0, 40.0, 500.0]),
            ("ankle_lat", [-10.0, 120.0, 70.0]),
            ("ankle_med", [-10.0, 50.0, 70.0]),
            ("heel", [-60.0, 90.0, 20.0]),
            ("toe", [200.0, 100.0, 20.0]),
        ] {
            m.push((format!("{s}_{stem}"), [p[0], p[1] * y, p[2]]));
        }
    }
    let mut k = 0;
    while m.len() < MARKERS {
        let side = if k % 2 == 0 { 1.0 } else { -1.0 };
        let z = 300.0 + 90.0 * (k / 2) as f64;
        m.push((format!("tech{k:02}"), [70.0, 110.0 * side, z]));
        k += 1;
    }
    m
}

/// One trial as wide CSV text.
fn trial_csv(seed: u64) -> String {
    let markers = markers();
    let n_frames = (DURATION_S * RATE_HZ) as usize;
    let s = seed as f64;
    let (ap_rad, ml_rad) = (0.004 + 0.001 * (s % 7.0), 0.002 + 0.0007 * (s % 5.0));
    let f_hz = 0.3 + 0.05 * (s % 4.0);
    let mut csv = String::with_capacity(n_frames * MARKERS * 3 * 10);
    csv.push_str("time");
    for (name, _) in &markers {
        csv.push_str(&format!(",{name}_x,{name}_y,{name}_z"));
    }
    csv.push('\n');
    for f in 0..n_frames {
        let t = f as f64 / RATE_HZ;
        let phase = 2.0 * std::f64::consts::PI * f_hz * t;
        let (ap, ml) = (ap_rad * phase.sin(), ml_rad * (1.3 * phase).cos());
        csv.push_str(&format!("{t:.2}"));
        for (_, p) in &markers {
            let h = (p[2] - 70.0).max(0.0);
            csv.push_str(&format!(
                ",{:.3},{:.3},{:.3}",
                p[0] + h * ap,
                p[1] + h * ml,
                p[2]
            ));
        }
        csv.push('\n');
    }
    csv
}

/// Writes `n` trials and a manifest naming them; returns the manifest.
fn write_batch(dir: &Path, n: usize) -> PathBuf {
    std::fs::create_dir_all(dir).expect("bench folder");
    let mut manifest = String::from("trial,subject,mass_kg,height_m,sex,condition\n");
    for i in 0..n {
        let name = format!("t{i:03}.csv");
        std::fs::write(dir.join(&name), trial_csv(i as u64)).expect("trial file");
        let (subject, mass, height, sex) =
            [("s1", 72.0, 1.78, "male"), ("s2", 61.0, 1.65, "female")][i % 2];
        manifest.push_str(&format!(
            "{name},{subject},{mass},{height},{sex},c{}\n",
            i % 3
        ));
    }
    let path = dir.join("manifest.csv");
    std::fs::write(&path, manifest).expect("manifest");
    path
}

/// `VmHWM` of a process in kB.
fn vm_hwm_kb(pid: u32) -> Option<u64> {
    let status = std::fs::read_to_string(format!("/proc/{pid}/status")).ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

struct Run {
    wall_s: f64,
    peak_kb: u64,
}

/// Runs a batch on the release binary: wall time and peak resident memory.
fn run_batch(manifest: &Path, out: &Path, jobs: usize) -> Run {
    let _ = std::fs::remove_dir_all(out);
    let start = Instant::now();
    let mut child = Command::new(env!("CARGO_BIN_EXE_gravline"))
        .arg("batch")
        .arg(manifest)
        .arg("--out")
        .arg(out)
        .args(["--jobs", &jobs.to_string(), "--no-plots", "-q"])
        .stdout(Stdio::null())
        .stderr(Stdio::inherit())
        .spawn()
        .expect("start gravline");
    let mut peak_kb = 0;
    let status = loop {
        if let Some(kb) = vm_hwm_kb(child.id()) {
            peak_kb = peak_kb.max(kb);
        }
        if let Some(status) = child.try_wait().expect("wait for gravline") {
            break status;
        }
        std::thread::sleep(Duration::from_millis(2));
    };
    let wall_s = start.elapsed().as_secs_f64();
    assert!(status.success(), "batch failed: {status}");
    Run { wall_s, peak_kb }
}

fn main() {
    let root = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("batch-bench");
    let _ = std::fs::remove_dir_all(&root);
    let t0 = Instant::now();
    let big = write_batch(&root.join("200"), 200);
    let small = write_batch(&root.join("50"), 50);
    let bytes: u64 = std::fs::read_dir(root.join("200"))
        .expect("bench folder")
        .flatten()
        .filter_map(|e| e.metadata().ok().map(|m| m.len()))
        .sum();
    let mut out = std::io::stdout().lock();
    let frames = (DURATION_S * RATE_HZ) as usize;
    writeln!(
        out,
        "batch bench: 200 trials x {frames} frames x {MARKERS} markers ({:.0} MB of CSV), written in {:.1} s",
        bytes as f64 / 1e6,
        t0.elapsed().as_secs_f64()
    )
    .ok();
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    writeln!(out, "cores available: {cores}").ok();

    let one = run_batch(&big, &root.join("out-1"), 1);
    writeln!(
        out,
        "200 trials, --jobs 1: {:.2} s ({:.1} ms per trial), peak {:.1} MB",
        one.wall_s,
        1e3 * one.wall_s / 200.0,
        one.peak_kb as f64 / 1024.0
    )
    .ok();
    let two = run_batch(&big, &root.join("out-2"), 2);
    writeln!(
        out,
        "200 trials, --jobs 2: {:.2} s ({:.1} ms per trial), peak {:.1} MB",
        two.wall_s,
        1e3 * two.wall_s / 200.0,
        two.peak_kb as f64 / 1024.0
    )
    .ok();
    let speedup = one.wall_s / two.wall_s;
    let verdict = if speedup >= 1.7 { "meets" } else { "misses" };
    writeln!(
        out,
        "speed-up --jobs 2 over --jobs 1: {speedup:.2}x ({verdict} the 1.7x target)"
    )
    .ok();
    let same = std::fs::read(root.join("out-1/summary.csv")).ok()
        == std::fs::read(root.join("out-2/summary.csv")).ok();
    writeln!(
        out,
        "summary.csv identical for --jobs 1 and --jobs 2: {same}"
    )
    .ok();

    let fifty = run_batch(&small, &root.join("out-50"), 2);
    writeln!(
        out,
        "peak memory, --jobs 2: 50 trials {:.1} MB, 200 trials {:.1} MB (ratio {:.2})",
        fifty.peak_kb as f64 / 1024.0,
        two.peak_kb as f64 / 1024.0,
        two.peak_kb as f64 / fifty.peak_kb.max(1) as f64
    )
    .ok();
    let _ = std::fs::remove_dir_all(&root);
}
