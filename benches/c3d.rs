//! C3D reading benchmark: the long synthetic walk of the pipeline benchmark (120 000 frames at
//! 100 Hz, 45 markers, 0.5 mm noise, gaps) written once as a float C3D (Intel, by gravline's
//! C3D writer) and once as a wide CSV in millimetres, then read into the flat tracks the
//! pipeline takes, several times, interleaved; the medians are printed with MB/s of file read
//! and the ratio of the times for the same markers.
//!
//! - C3D: the file mapped, [`gravline::c3d::read_trial_bytes`] (header, parameters, every frame's
//!   points into millimetres, then metres in place), on one thread.
//! - CSV: the file mapped, [`gravline::trial::read_trial_bytes`] (the in-memory CSV reader), on one
//!   thread and on every core.
//!
//! Run with `cargo bench --bench c3d`; options after `--`: `--frames N` (default 120000),
//! `--reps N` (default 5).

use std::error::Error;
use std::path::Path;
use std::time::Instant;

use gravline::c3d::write::Recording;
use gravline::trial::{ReadOptions, Trial, TrialBytes};

type Res<T> = Result<T, Box<dyn Error>>;

fn main() -> Res<()> {
    let mut frames = 120_000usize;
    let mut reps = 5usize;
    let mut it = std::env::args().skip(1);
    while let Some(a) = it.next() {
        match a.as_str() {
            "--frames" => frames = it.next().ok_or("--frames needs a number")?.parse()?,
            "--reps" => reps = it.next().ok_or("--reps needs a number")?.parse()?,
            _ => {}
        }
    }
    let reps = reps.max(1);
    let dir = tempfile::tempdir()?;
    let trial = gravline::synth::long_trial(frames, 45, 2024);
    let c3d_path = dir.path().join("long_walk.c3d");
    let csv_path = dir.path().join("long_walk.csv");
    let rec = Recording::from_tracks_m(&trial.labels, &trial.positions, 100.0);
    let mut w = std::io::BufWriter::new(std::fs::File::create(&c3d_path)?);
    gravline::c3d::write(&rec, &mut w)?;
    drop(w);
    drop(rec);
    let w = std::io::BufWriter::with_capacity(1 << 20, std::fs::File::create(&csv_path)?);
    gravline::synth::write_wide_csv(&trial, "long synthetic walk (c3d benchmark)", w)?;
    let n_markers = trial.labels.len();
    drop(trial);
    let c3d_mb = std::fs::metadata(&c3d_path)?.len() as f64 / 1e6;
    let csv_mb = std::fs::metadata(&csv_path)?.len() as f64 / 1e6;
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    println!(
        "trial: {frames} frames x {n_markers} markers: {c3d_mb:.1} MB of float c3d, {csv_mb:.1} MB of csv; {reps} repetitions, {cores} cores"
    );

    let (mut c3d, mut csv1, mut csvn) = (Vec::new(), Vec::new(), Vec::new());
    for _ in 0..reps {
        c3d.push(timed(|| read_c3d(&c3d_path))?);
        csv1.push(timed(|| read_csv(&csv_path, 1))?);
        csvn.push(timed(|| read_csv(&csv_path, cores))?);
    }
    // The two files give the same markers: the csv holds 2 decimals of mm, the c3d 32-bit floats
    // (7 significant digits: 0.06 mm at the 780 m the 20-minute walk reaches).
    let (a, b) = (read_c3d(&c3d_path)?, read_csv(&csv_path, cores)?);
    let (a, b) = (&a.markers, &b.markers);
    if a.n_markers() != b.n_markers() {
        return Err("the c3d and the csv give different marker counts".into());
    }
    for m in 0..a.n_markers() {
        for (f, (p, q)) in a.points(m).zip(b.points(m)).enumerate() {
            let same = match (p, q) {
                (None, None) => true,
                (Some(p), Some(q)) => p
                    .iter()
                    .zip(q)
                    .all(|(u, v)| (u - v).abs() <= 1e-5 + 1e-7 * v.abs()),
                _ => false,
            };
            if !same {
                return Err(format!("marker {m} frame {f}: c3d {p:?}, csv {q:?}").into());
            }
        }
    }
    let (t_c3d, t_csv1, t_csvn) = (median(&c3d), median(&csv1), median(&csvn));
    println!(
        "c3d, read, 1 thread        {t_c3d:8.3} s  {:8.0} MB/s",
        c3d_mb / t_c3d
    );
    println!(
        "csv, read, 1 thread        {t_csv1:8.3} s  {:8.0} MB/s",
        csv_mb / t_csv1
    );
    println!(
        "csv, read, {cores} threads       {t_csvn:8.3} s  {:8.0} MB/s",
        csv_mb / t_csvn
    );
    println!(
        "same markers: csv 1 thread / c3d = {:.1} x the time; csv {cores} threads / c3d = {:.1} x",
        t_csv1 / t_c3d,
        t_csvn / t_c3d
    );
    Ok(())
}

fn read_c3d(path: &Path) -> Res<Trial> {
    let bytes = TrialBytes::open(path)?;
    Ok(gravline::c3d::read_trial_bytes(
        &bytes,
        path,
        "long_walk",
        &ReadOptions::default(),
    )?)
}

fn read_csv(path: &Path, threads: usize) -> Res<Trial> {
    let bytes = TrialBytes::open(path)?;
    Ok(gravline::trial::read_trial_bytes(
        &bytes,
        "long_walk.csv",
        "long_walk",
        &ReadOptions::default(),
        threads,
    )?)
}

fn timed<T>(f: impl FnOnce() -> Res<T>) -> Res<f64> {
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
