//! Pipeline benchmark (docs/DESIGN.md 12): a long synthetic walk (120 000 frames at 100 Hz, 45
//! markers, about 120 MB of wide CSV in millimetres) is timed three ways in the same run, each
//! several times, and the medians are printed:
//!
//! - (a) parsing only: every number of the file read into `f64`, by the `csv` crate's
//!   `ByteRecord` reader with `str::parse::<f64>` and with `fast-float2`, by polars'
//!   multi-threaded CSV reader, and by gravline's own reader of files held in memory (the file
//!   mapped, its lines parsed on every core with an exact fast path for decimal cells, into
//!   the flat tracks that (b) fills); the fastest is the (a) figure;
//! - (b) [`gravline::pipeline::process_file`] end to end without plots (read, fill, filter,
//!   joint centers, segments, CoM, derivatives, support, `frames.csv`, `summary.json`);
//! - (c) the stages after filtering on data in memory ([`gravline::pipeline::run_filled`]:
//!   body model, segments, CoM, derivatives, support) on one thread, in microseconds per
//!   frame and per segment.
//!
//! The peak memory of (b) is the `VmHWM` of a child process (this binary run again with
//! `--child`) that does only (b); it is compared with 3x the `f64` size of the marker data.
//!
//! Run with `cargo bench --bench pipeline`; options after `--`: `--frames N` (default 120000),
//! `--reps N` (default 5).

use std::error::Error;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::Instant;

use gravline::anthropometry::Sex;
use gravline::config::{Config, Subject};
use gravline::pipeline::{process_file, run_filled, OutputOptions, RunOptions, Setup};

type Res<T> = Result<T, Box<dyn Error>>;

const DEFAULT_FRAMES: usize = 120_000;
const MARKERS: usize = 45;
const SEED: u64 = 2024;
const DEFAULT_REPS: usize = 5;

struct Args {
    frames: usize,
    reps: usize,
    /// `--child <csv> <out dir>`: run (b) once and print the peak memory.
    child: Option<(PathBuf, PathBuf)>,
    /// `--write-csv <path>`: only write the trial there (for profiling (b) with `--child`).
    write_csv: Option<PathBuf>,
}

fn parse_args() -> Res<Args> {
    let mut args = Args {
        frames: DEFAULT_FRAMES,
        reps: DEFAULT_REPS,
        child: None,
        write_csv: None,
    };
    let mut it = std::env::args().skip(1);
    while let Some(a) = it.next() {
        match a.as_str() {
            "--frames" => args.frames = it.next().ok_or("--frames needs a number")?.parse()?,
            "--reps" => args.reps = it.next().ok_or("--reps needs a number")?.parse()?,
            "--child" => {
                let csv = it.next().ok_or("--child needs a csv path")?;
                let out = it.next().ok_or("--child needs an output folder")?;
                args.child = Some((csv.into(), out.into()));
            }
            "--write-csv" => {
                args.write_csv = Some(it.next().ok_or("--write-csv needs a path")?.into())
            }
            // `cargo bench` passes `--bench`; other harness flags are ignored too.
            _ => {}
        }
    }
    args.reps = args.reps.max(1);
    Ok(args)
}

fn setup() -> Res<Setup> {
    Ok(Setup::new(
        Config::default(),
        Subject::new(70.0, 1.75, Sex::Male),
    )?)
}

fn main() -> Res<()> {
    let args = parse_args()?;
    if let Some((csv, out)) = &args.child {
        return child(csv, out);
    }
    if let Some(path) = &args.write_csv {
        write_trial(path, args.frames)?;
        return Ok(());
    }
    let dir = tempfile::tempdir()?;
    let csv_path = dir.path().join("long_walk.csv");
    let t0 = Instant::now();
    let labels = write_trial(&csv_path, args.frames)?;
    let csv_bytes = std::fs::metadata(&csv_path)?.len();
    let n_markers = labels.len();
    println!(
        "trial: {} frames x {} markers, {:.1} MB of csv (made in {:.1} s); {} repetitions",
        args.frames,
        n_markers,
        csv_bytes as f64 / 1e6,
        t0.elapsed().as_secs_f64(),
        args.reps
    );

    let setup = setup()?;
    let out = dir.path().join("out");
    let n_numbers = args.frames * (1 + 3 * n_markers);
    let mut csv_std = Vec::new();
    let mut csv_fast = Vec::new();
    let mut polars = Vec::new();
    let mut own = Vec::new();
    let mut pipeline = Vec::new();
    // Interleaved, so a change in the machine's load touches every figure alike.
    for _ in 0..args.reps {
        csv_std.push(timed(|| parse_csv(&csv_path, parse_std, n_numbers))?);
        csv_fast.push(timed(|| parse_csv(&csv_path, parse_fast, n_numbers))?);
        polars.push(timed(|| parse_polars(&csv_path, &labels))?);
        own.push(timed(|| parse_own(&csv_path, n_numbers))?);
        pipeline.push(timed(|| {
            process_file(&csv_path, &setup, &out, &OutputOptions::default())?;
            Ok(())
        })?);
    }
    let (a_std, a_fast, a_polars) = (median(&csv_std), median(&csv_fast), median(&polars));
    let a_own = median(&own);
    let a = a_std.min(a_fast).min(a_polars).min(a_own);
    let b = median(&pipeline);
    println!("(a) parse only, csv ByteRecord + str::parse   {a_std:8.3} s");
    println!("(a) parse only, csv ByteRecord + fast-float2  {a_fast:8.3} s");
    println!("(a) parse only, polars multi-threaded reader  {a_polars:8.3} s");
    println!("(a) parse only, gravline in-memory reader     {a_own:8.3} s");
    println!("(a) fastest                                   {a:8.3} s");
    println!("(b) process_file end to end, no plots         {b:8.3} s");
    println!(
        "(b)/(a)                                       {:8.2}   (target <= 1.5)",
        b / a
    );

    let (us_frame, n_segments) = core_per_frame(&csv_path, &setup, args.reps)?;
    println!(
        "(c) per-frame core (body, CoM, support)       {us_frame:8.3} us/frame, {:.3} us/segment ({n_segments} segments)",
        us_frame / n_segments as f64
    );

    let hwm_kb = peak_memory_kb(&csv_path, &dir.path().join("child_out"), args.frames)?;
    let marker_bytes = args.frames * n_markers * 3 * 8;
    println!(
        "(b) peak memory (VmHWM of a child doing (b))  {:8.1} MB; limit 3 x {:.1} MB = {:.1} MB ({:.2} x the marker data)",
        hwm_kb as f64 * 1024.0 / 1e6,
        marker_bytes as f64 / 1e6,
        3.0 * marker_bytes as f64 / 1e6,
        hwm_kb as f64 * 1024.0 / marker_bytes as f64
    );
    std::io::stdout().flush()?;
    Ok(())
}

/// Writes the long trial as a wide CSV; its marker labels.
fn write_trial(path: &Path, frames: usize) -> Res<Vec<String>> {
    let trial = gravline::synth::long_trial(frames, MARKERS, SEED);
    let file = std::fs::File::create(path)?;
    let w = std::io::BufWriter::with_capacity(1 << 20, file);
    gravline::synth::write_wide_csv(&trial, "long synthetic walk (pipeline benchmark)", w)?;
    Ok(trial.labels)
}

/// Seconds taken by `f`.
fn timed<T>(f: impl FnOnce() -> Result<T, Box<dyn Error>>) -> Res<f64> {
    let t = Instant::now();
    let out = f()?;
    let s = t.elapsed().as_secs_f64();
    drop(out);
    Ok(s)
}

fn median(v: &[f64]) -> f64 {
    let mut v = v.to_vec();
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        (v[n / 2 - 1] + v[n / 2]) / 2.0
    }
}

// --- (a) parsing only ------------------------------------------------------------------------

fn parse_std(b: &[u8]) -> f64 {
    std::str::from_utf8(b)
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(f64::NAN)
}

fn parse_fast(b: &[u8]) -> f64 {
    fast_float2::parse(b).unwrap_or(f64::NAN)
}

/// Every number of the file into one `f64` buffer, row by row (empty cells as NaN).
fn parse_csv(path: &Path, parse: fn(&[u8]) -> f64, n_numbers: usize) -> Res<Vec<f64>> {
    let file = std::fs::File::open(path)?;
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(true)
        .comment(Some(b'#'))
        .buffer_capacity(1 << 16)
        .from_reader(file);
    let mut rec = csv::ByteRecord::new();
    let mut values = Vec::with_capacity(n_numbers);
    while rdr.read_byte_record(&mut rec)? {
        values.extend(
            rec.iter()
                .map(|f| if f.is_empty() { f64::NAN } else { parse(f) }),
        );
    }
    if values.len() != n_numbers {
        return Err(format!("read {} numbers, expected {n_numbers}", values.len()).into());
    }
    Ok(values)
}

fn parse_polars(path: &Path, labels: &[String]) -> Res<polars::prelude::DataFrame> {
    use polars::prelude::*;
    let mut schema = Schema::default();
    schema.with_column("time".into(), DataType::Float64);
    for l in labels {
        for a in ["x", "y", "z"] {
            schema.with_column(format!("{l}_{a}").into(), DataType::Float64);
        }
    }
    let df = CsvReadOptions::default()
        .with_has_header(true)
        .with_schema(Some(Arc::new(schema)))
        .map_parse_options(|p| p.with_comment_prefix(Some("#")))
        .try_into_reader_with_file_path(Some(path.to_path_buf()))?
        .finish()?;
    if df.width() != 1 + 3 * labels.len() {
        return Err(format!("polars read {} columns", df.width()).into());
    }
    Ok(df)
}

/// Every number of the file by gravline's reader, as (b) reads it: the file mapped, its lines
/// parsed on every core into flat tracks (clock, then three coordinates per marker).
fn parse_own(path: &Path, n_numbers: usize) -> Res<gravline::trial::Trial> {
    let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
    let bytes = gravline::trial::TrialBytes::open(path)?;
    let trial = gravline::trial::read_trial_bytes(
        &bytes,
        "long_walk.csv",
        "long_walk",
        &gravline::trial::ReadOptions::default(),
        threads,
    )?;
    let m = &trial.markers;
    let read = trial.times_s.len()
        + (0..m.n_markers())
            .map(|i| 3 * m.track_len(i))
            .sum::<usize>();
    if read != n_numbers {
        return Err(format!("read {read} numbers, expected {n_numbers}").into());
    }
    Ok(trial)
}

// --- (c) the per-frame core ------------------------------------------------------------------

/// Median microseconds per frame of the stages after filtering ([`run_filled`]: body model,
/// segments, CoM, derivatives, XCoM, support) on one thread, on the filtered markers of the
/// trial, and the number of segments.
fn core_per_frame(path: &Path, setup: &Setup, reps: usize) -> Res<(f64, usize)> {
    let config = &setup.config;
    let trial = gravline::trial::read_trial(path, &config.read_options())?;
    let (mut markers, gaps) =
        gravline::signal::fill_gaps(&trial.markers, &trial.times_s, config.max_gap_s);
    if let Some(cutoff_hz) = config.cutoff_hz {
        gravline::signal::low_pass(&mut markers, trial.rate_hz, cutoff_hz)?;
    }
    let n = trial.n_frames();
    let mut times = Vec::new();
    let mut n_segments = 0;
    for _ in 0..reps {
        let t = Instant::now();
        let result = run_filled(
            &trial,
            &markers,
            &gaps,
            config,
            &setup.subject,
            &setup.table,
            RunOptions::default(),
            1,
        )?;
        times.push(t.elapsed().as_secs_f64());
        n_segments = result.model.segments.len();
        std::hint::black_box(result);
    }
    Ok((median(&times) * 1e6 / n as f64, n_segments))
}

// --- peak memory of (b) ----------------------------------------------------------------------

/// Runs (b) once in a child process and returns its `VmHWM` in kB.
fn peak_memory_kb(csv: &Path, out: &Path, frames: usize) -> Res<u64> {
    let output = Command::new(std::env::current_exe()?)
        .arg("--frames")
        .arg(frames.to_string())
        .arg("--child")
        .arg(csv)
        .arg(out)
        .output()?;
    if !output.status.success() {
        return Err(format!(
            "child failed: {}",
            String::from_utf8_lossy(&output.stderr).trim()
        )
        .into());
    }
    let text = String::from_utf8(output.stdout)?;
    let kb = text
        .lines()
        .find_map(|l| l.strip_prefix("vmhwm_kb="))
        .ok_or("child printed no vmhwm_kb")?
        .trim()
        .parse()?;
    Ok(kb)
}

fn child(csv: &Path, out: &Path) -> Res<()> {
    let setup = setup()?;
    process_file(csv, &setup, out, &OutputOptions::default())?;
    let status = std::fs::read_to_string("/proc/self/status")?;
    let kb = status
        .lines()
        .find_map(|l| l.strip_prefix("VmHWM:"))
        .ok_or("no VmHWM in /proc/self/status")?
        .trim()
        .trim_end_matches("kB")
        .trim()
        .to_string();
    println!("vmhwm_kb={kb}");
    Ok(())
}
