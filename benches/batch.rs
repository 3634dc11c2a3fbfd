//! Batch benchmark (docs/DESIGN.md 12): `gravline batch` on synthetic trials (invented data:
//! `gravline::synth::long_trial`, a walk of 30 s at 100 Hz with 45 markers, millimetres).
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
//! The machine is shared, so each run also prints the CPU time of the batch process (user +
//! system, fields 14 and 15 of `/proc/<pid>/stat`, at the usual 100 ticks per second), the time
//! its threads were ready but waited for a CPU (run-queue delay, second field of
//! `/proc/<pid>/task/<tid>/schedstat`, summed over threads) and the 1-minute load average: a
//! speed-up below target with a large run-queue wait means other work took the cores.
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

/// One trial as wide CSV bytes: [`gravline::synth::long_trial`], a walk of 30 s at 100 Hz
/// with `MARKERS` markers, 0.5 mm noise and a few short gaps.
fn trial_csv(seed: u64) -> Vec<u8> {
    let n_frames = (DURATION_S * RATE_HZ) as usize;
    let trial = gravline::synth::long_trial(n_frames, MARKERS, seed);
    let mut bytes = Vec::new();
    gravline::synth::write_wide_csv(&trial, "synthetic walk for the batch benchmark", &mut bytes)
        .expect("write to memory");
    bytes
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

/// User + system CPU time of a process so far, in clock ticks (fields 14 and 15 of
/// `/proc/<pid>/stat`, after the parenthesised command name).
fn cpu_ticks(pid: u32) -> Option<u64> {
    let stat = std::fs::read_to_string(format!("/proc/{pid}/stat")).ok()?;
    let rest = &stat[stat.rfind(')')? + 2..];
    let fields: Vec<&str> = rest.split_whitespace().collect();
    let utime: u64 = fields.get(11)?.parse().ok()?;
    let stime: u64 = fields.get(12)?.parse().ok()?;
    Some(utime + stime)
}

/// Per thread of a process: nanoseconds spent waiting on a run queue for a CPU (second field
/// of `/proc/<pid>/task/<tid>/schedstat`), so far.
fn run_queue_wait_ns(pid: u32, by_thread: &mut std::collections::HashMap<String, u64>) {
    let Ok(tasks) = std::fs::read_dir(format!("/proc/{pid}/task")) else {
        return;
    };
    for task in tasks.flatten() {
        let tid = task.file_name().to_string_lossy().into_owned();
        let Ok(text) = std::fs::read_to_string(task.path().join("schedstat")) else {
            continue;
        };
        if let Some(wait) = text
            .split_whitespace()
            .nth(1)
            .and_then(|w| w.parse::<u64>().ok())
        {
            let slot = by_thread.entry(tid).or_default();
            *slot = (*slot).max(wait);
        }
    }
}

/// The 1-minute load average: how busy the shared machine was.
fn load_average() -> String {
    std::fs::read_to_string("/proc/loadavg")
        .ok()
        .and_then(|l| l.split_whitespace().next().map(str::to_string))
        .unwrap_or_else(|| "?".into())
}

struct Run {
    wall_s: f64,
    peak_kb: u64,
    /// CPU time of the batch process (all its threads), s, at 100 ticks per second.
    cpu_s: f64,
    /// Time its threads were ready to run but waited for a CPU, s (summed over threads).
    wait_s: f64,
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
    let mut ticks = 0;
    let mut waits = std::collections::HashMap::new();
    let status = loop {
        if let Some(kb) = vm_hwm_kb(child.id()) {
            peak_kb = peak_kb.max(kb);
        }
        if let Some(t) = cpu_ticks(child.id()) {
            ticks = ticks.max(t);
        }
        run_queue_wait_ns(child.id(), &mut waits);
        if let Some(status) = child.try_wait().expect("wait for gravline") {
            break status;
        }
        std::thread::sleep(Duration::from_millis(2));
    };
    let wall_s = start.elapsed().as_secs_f64();
    assert!(status.success(), "batch failed: {status}");
    Run {
        wall_s,
        peak_kb,
        cpu_s: ticks as f64 / 100.0,
        wait_s: waits.values().sum::<u64>() as f64 * 1e-9,
    }
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

    let line = |label: &str, r: &Run, n: usize| {
        format!(
            "{label}: {:.2} s wall ({:.1} ms per trial), {:.2} s CPU, {:.2} s waiting for a CPU, peak {:.1} MB, load average {}",
            r.wall_s,
            1e3 * r.wall_s / n as f64,
            r.cpu_s,
            r.wait_s,
            r.peak_kb as f64 / 1024.0,
            load_average()
        )
    };
    writeln!(out, "load average before: {}", load_average()).ok();
    let one = run_batch(&big, &root.join("out-1"), 1);
    writeln!(out, "{}", line("200 trials, --jobs 1", &one, 200)).ok();
    let two = run_batch(&big, &root.join("out-2"), 2);
    writeln!(out, "{}", line("200 trials, --jobs 2", &two, 200)).ok();
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
    writeln!(out, "{}", line("50 trials, --jobs 2", &fifty, 50)).ok();
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
