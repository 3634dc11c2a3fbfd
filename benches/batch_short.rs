//! Throughput benchmark of a study of many short trials: `gravline batch` over 2 000 synthetic
//! walks of 10 s (`gravline::synth::long_trial`, 1 000 frames at 100 Hz, 45 markers, invented
//! data), with every per-trial output, the frame-level Parquet dataset and the group curves
//! (plots off).
//!
//! Measures, on the release binary, each run repeated [`REPEATS`] times (medians reported;
//! `cargo bench --bench batch_short -- --repeats N` for another count):
//! - trials per second with `--jobs 1` and `--jobs 2` (2 000 trials);
//! - per-trial wall time for 500 and for 2 000 trials (`--jobs 2`): their ratio shows whether
//!   the per-trial cost grows with the number of trials (it should stay near 1);
//! - peak memory of the batch process (`VmHWM` of `/proc/<pid>/status`, read every 2 ms);
//! - the share of a trial's time spent writing its outputs, measured in this process on 200
//!   trials, one thread: reading and computing (`read_trial`, `run_trial`, the summary)
//!   against writing (`write_outputs`: frames.csv, steps.csv, cycles.csv, summary.json; and
//!   the trial's two dataset files).
//!
//! The 2 000 trial files are hard links to 50 distinct generated walks (the input hash, and so
//! the provenance, differs only between those 50; the work per trial is the same), which keeps
//! the input at about 60 MB. Run: `cargo bench --bench batch_short` (Linux, for `/proc`; about
//! 3 GB of outputs are written under the target directory, one run at a time, and removed).

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

const RATE_HZ: f64 = 100.0;
const DURATION_S: f64 = 10.0;
const MARKERS: usize = 45;
const DISTINCT: usize = 50;
/// Runs of each measurement (default; `-- --repeats N` to change).
const REPEATS: usize = 3;

/// `--repeats N` from the bench's arguments, else [`REPEATS`].
fn repeats() -> usize {
    let args: Vec<String> = std::env::args().collect();
    args.iter()
        .position(|a| a == "--repeats")
        .and_then(|i| args.get(i + 1)?.parse().ok())
        .filter(|&n: &usize| n > 0)
        .unwrap_or(REPEATS)
}

/// Writes `n` trials (hard links to `DISTINCT` generated ones) and a manifest; the manifest.
fn write_batch(dir: &Path, sources: &[PathBuf], n: usize) -> PathBuf {
    std::fs::create_dir_all(dir).expect("bench folder");
    let mut manifest = String::from("trial,subject,mass_kg,height_m,sex,condition\n");
    for i in 0..n {
        let name = format!("t{i:04}.csv");
        let target = dir.join(&name);
        let source = &sources[i % sources.len()];
        if std::fs::hard_link(source, &target).is_err() {
            std::fs::copy(source, &target).expect("trial file");
        }
        manifest.push_str(&format!(
            "{name},s{},{},1.75,male,c{}\n",
            i % 10,
            70 + i % 10,
            i % 3
        ));
    }
    let path = dir.join("manifest.csv");
    std::fs::write(&path, manifest).expect("manifest");
    path
}

fn vm_hwm_kb(pid: u32) -> Option<u64> {
    let status = std::fs::read_to_string(format!("/proc/{pid}/status")).ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

struct Run {
    wall_s: f64,
    peak_kb: u64,
}

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
    let _ = std::fs::remove_dir_all(out);
    Run { wall_s, peak_kb }
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * (v[n / 2 - 1] + v[n / 2])
    }
}

/// Median wall time and median peak memory over `REPEATS` runs.
fn measure(manifest: &Path, out: &Path, jobs: usize) -> (f64, f64) {
    let runs: Vec<Run> = (0..REPEATS)
        .map(|_| run_batch(manifest, out, jobs))
        .collect();
    (
        median(runs.iter().map(|r| r.wall_s).collect()),
        median(runs.iter().map(|r| r.peak_kb as f64 / 1024.0).collect()),
    )
}

/// Seconds reading and computing, and seconds writing, over the trials of a folder, in this
/// process on one thread.
fn split_times(sources: &[PathBuf], out: &Path, trials: usize) -> (f64, f64) {
    use gravline::anthropometry::Sex;
    use gravline::batch::dataset;
    use gravline::config::{Config, Subject};
    use gravline::pipeline::{run_trial, RunOptions, Setup};
    let setup = Setup::new(Config::default(), Subject::new(70.0, 1.75, Sex::Male)).expect("setup");
    let (mut compute, mut write) = (0.0, 0.0);
    for i in 0..trials {
        let path = &sources[i % sources.len()];
        let t0 = Instant::now();
        let bytes = std::fs::read(path).expect("trial");
        let sha = gravline::report::sha256_hex(&bytes);
        let trial = gravline::trial::read_trial(path, &setup.config.read_options()).expect("read");
        let result = run_trial(
            trial,
            &setup.config,
            &setup.subject,
            &setup.table,
            RunOptions::default(),
            1,
        )
        .expect("run");
        let summary =
            gravline::report::Summary::new(&result, &setup.subject, Some(sha), setup.hash());
        let t1 = Instant::now();
        let id = format!("t{i:04}");
        let dir = out.join("trials").join(&id);
        gravline::report::write_outputs(&dir, &result, &summary, &[], true).expect("write");
        let key = dataset::TrialKey {
            id: &id,
            subject: Some("s1"),
            condition: Some("c1"),
        };
        dataset::write_trial(out, &key, &result, &summary).expect("dataset");
        let t2 = Instant::now();
        compute += (t1 - t0).as_secs_f64();
        write += (t2 - t1).as_secs_f64();
    }
    let _ = std::fs::remove_dir_all(out);
    (compute, write)
}

fn main() {
    let root = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("batch-short-bench");
    let _ = std::fs::remove_dir_all(&root);
    let src = root.join("sources");
    std::fs::create_dir_all(&src).expect("bench folder");
    let n_frames = (DURATION_S * RATE_HZ) as usize;
    let sources: Vec<PathBuf> = (0..DISTINCT)
        .map(|seed| {
            let trial = gravline::synth::long_trial(n_frames, MARKERS, seed as u64);
            let mut bytes = Vec::new();
            gravline::synth::write_wide_csv(
                &trial,
                "synthetic walk for the throughput benchmark",
                &mut bytes,
            )
            .expect("write to memory");
            let path = src.join(format!("w{seed:02}.csv"));
            std::fs::write(&path, bytes).expect("trial file");
            path
        })
        .collect();
    let big = write_batch(&root.join("2000"), &sources, 2000);
    let small = write_batch(&root.join("500"), &sources, 500);
    let mut out = std::io::stdout().lock();
    let load = || {
        std::fs::read_to_string("/proc/loadavg")
            .ok()
            .and_then(|l| l.split_whitespace().next().map(str::to_string))
            .unwrap_or_else(|| "?".into())
    };
    writeln!(
        out,
        "batch_short bench: trials of {n_frames} frames x {MARKERS} markers ({DURATION_S} s at {RATE_HZ} Hz), {DISTINCT} distinct; medians of {} runs; load average {}",
        repeats(),
        load()
    )
    .ok();
    let (one_s, one_mb) = measure(&big, &root.join("out"), 1);
    writeln!(
        out,
        "2000 trials, --jobs 1: {one_s:.2} s, {:.1} trials/s, {:.2} ms per trial, peak {one_mb:.1} MB",
        2000.0 / one_s,
        1e3 * one_s / 2000.0
    )
    .ok();
    let (two_s, two_mb) = measure(&big, &root.join("out"), 2);
    writeln!(
        out,
        "2000 trials, --jobs 2: {two_s:.2} s, {:.1} trials/s, {:.2} ms per trial, peak {two_mb:.1} MB",
        2000.0 / two_s,
        1e3 * two_s / 2000.0
    )
    .ok();
    let (small_s, small_mb) = measure(&small, &root.join("out"), 2);
    writeln!(
        out,
        "500 trials, --jobs 2: {small_s:.2} s, {:.1} trials/s, {:.2} ms per trial, peak {small_mb:.1} MB",
        500.0 / small_s,
        1e3 * small_s / 500.0
    )
    .ok();
    writeln!(
        out,
        "per-trial time 2000 / 500 trials (--jobs 2): {:.3}; peak memory ratio {:.2}; speed-up --jobs 2 over 1: {:.2}x",
        (two_s / 2000.0) / (small_s / 500.0),
        two_mb / small_mb.max(1e-9),
        one_s / two_s
    )
    .ok();
    let shares: Vec<(f64, f64)> = (0..repeats())
        .map(|_| split_times(&sources, &root.join("split"), 200))
        .collect();
    let share = median(shares.iter().map(|(c, w)| w / (c + w)).collect());
    let (c, w) = (
        median(shares.iter().map(|s| s.0).collect()),
        median(shares.iter().map(|s| s.1).collect()),
    );
    writeln!(
        out,
        "200 trials in-process, one thread: {:.2} ms reading and computing, {:.2} ms writing outputs per trial; writing share {:.1} %; load average {}",
        1e3 * c / 200.0,
        1e3 * w / 200.0,
        100.0 * share,
        load()
    )
    .ok();
    let _ = std::fs::remove_dir_all(&root);
}
