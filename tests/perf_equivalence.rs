//! The fast paths give the same bytes and values as the general code they stand in for:
//!
//! - the trial reader on several threads (`read_trial_bytes`, rows parsed by line ranges) against
//!   the same reader on one (`read_trial_from`): the same trial, or the same error message, on a
//!   long synthetic walk, on the fixtures and on randomly mutated fixtures (the parallel rows
//!   against the general row loop on small pieces: the unit tests of `trial`);
//! - the `frames.csv` writer (hand-made fixed-point numbers, one reused buffer) against the
//!   writer it replaced (`write!` with `{:.6}` for every cell, kept below as the reference),
//!   byte for byte, on synthetic walks, squats (loads, mid-foot) and jumps, with segment and
//!   group columns;
//! - `process_file` (the file mapped, read on several threads, gaps filled in place and each
//!   track low-passed while in cache, work shared among threads) against `run_trial` on one
//!   thread and the reference writer: the same `frames.csv`, and the same bytes from the writer
//!   on any number of threads;
//! - the support stage on several threads against one thread: the same series, outlines,
//!   footprints, events and steps.
//!
//! The reference for each is the project's own general code (the general reader is checked
//! against the fixtures in tests/trial_reader.rs); the synthetic trials are invented data.

use std::fmt::Write as _;
use std::io::Write;

use gravline::anthropometry::{SegmentTable, Sex};
use gravline::config::{Config, RawConfig, Subject};
use gravline::pipeline::{process_file, run_trial, OutputOptions, RunOptions, Setup, TrialResult};
use gravline::synth::{generate, long_trial, write_wide_csv, Scenario, SynthOptions};
use gravline::trial::{read_trial_bytes, read_trial_from, ReadOptions, Trial};

fn csv_of(trial: &gravline::synth::SynthTrial) -> Vec<u8> {
    let mut bytes = Vec::new();
    write_wide_csv(trial, "synthetic trial", &mut bytes).unwrap();
    bytes
}

fn general(bytes: &[u8], opts: &ReadOptions) -> Result<Trial, String> {
    read_trial_from(bytes, "t.csv", "t", opts).map_err(|e| e.to_string())
}

fn fast(bytes: &[u8], opts: &ReadOptions, threads: usize) -> Result<Trial, String> {
    read_trial_bytes(bytes, "t.csv", "t", opts, threads).map_err(|e| e.to_string())
}

#[test]
fn in_memory_reader_gives_the_streaming_readers_trial_on_a_long_walk() {
    // About 14 MB: cut into several pieces of at least 1 MiB.
    let bytes = csv_of(&long_trial(12_000, 45, 3));
    let opts = ReadOptions::default();
    let want = general(&bytes, &opts).unwrap();
    let m = &want.markers;
    assert!((0..m.n_markers()).any(|i| m.points(i).any(|p| p.is_none())));
    for threads in [1, 2, 3, 8] {
        assert_eq!(
            fast(&bytes, &opts, threads).unwrap(),
            want,
            "{threads} threads"
        );
    }
    // The same file with CRLF line ends and blank lines in places.
    let text = String::from_utf8(bytes).unwrap();
    let crlf = text.replace('\n', "\r\n").replace("\r\n10.", "\r\n\r\n10.");
    let want = general(crlf.as_bytes(), &opts).unwrap();
    assert_eq!(fast(crlf.as_bytes(), &opts, 2).unwrap(), want);
}

/// xorshift64 (Marsaglia 2003).
struct XorShift(u64);

impl XorShift {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        self.0
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n.max(1) as u64) as usize
    }
}

fn mutate(base: &[u8], rng: &mut XorShift) -> Vec<u8> {
    const BYTES: &[u8] = b",\n\r#\". -e_xX\x00\xff 1";
    const TOKENS: &[&[u8]] = &[
        b"NaN",
        b"inf",
        b"1e3",
        b",",
        b"\n",
        b"\r\n",
        b"-0",
        b"\"",
        b"",
        b"  ",
        b"0.01",
        b"+2",
        b"1.",
        b".5",
        b"99999999999999999999",
    ];
    let mut v = base.to_vec();
    for _ in 0..1 + rng.below(3) {
        let at = rng.below(v.len() + 1);
        match rng.below(5) {
            0 if at < v.len() => v[at] = BYTES[rng.below(BYTES.len())],
            1 if at < v.len() => {
                v.remove(at);
            }
            2 => {
                let token = TOKENS[rng.below(TOKENS.len())];
                v.splice(at..at, token.iter().copied());
            }
            3 => v.truncate(at),
            _ => {}
        }
    }
    v
}

#[test]
fn in_memory_reader_gives_the_same_trial_or_error_on_mutated_files() {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures");
    let mut bases: Vec<Vec<u8>> = ["trial_wide_mm.csv", "trial_frames.csv", "trial_tidy_mm.csv"]
        .iter()
        .map(|f| std::fs::read(dir.join(f)).unwrap())
        .collect();
    let mut short = SynthOptions::for_scenario(Scenario::Walk);
    short.duration_s = 0.3;
    bases.push(csv_of(&generate(Scenario::Walk, &short)));
    let mut rng = XorShift(0x2545_f491_4f6c_dd1d);
    let mut same_ok = 0;
    for case in 0..3000 {
        let bytes = mutate(&bases[case % bases.len()], &mut rng);
        let opts = ReadOptions {
            rate_hz: (case % 3 == 1).then_some(100.0),
            ..ReadOptions::default()
        };
        let want = general(&bytes, &opts);
        assert_eq!(fast(&bytes, &opts, 2), want, "case {case}");
        same_ok += usize::from(want.is_ok());
    }
    assert!(same_ok > 300, "{same_ok} mutated files read");
}

// --- frames.csv ------------------------------------------------------------------------------

/// The `frames.csv` writer as it was before the fixed-point formatter: `write!` per cell.
fn reference_frames(r: &TrialResult) -> Vec<u8> {
    fn opt(w: &mut String, v: Option<f64>) {
        match v {
            Some(v) if v.is_finite() => write!(w, ",{v:.6}").unwrap(),
            _ => w.push(','),
        }
    }
    fn opt3(w: &mut String, v: Option<&[f64; 3]>) {
        for k in 0..3 {
            opt(w, v.map(|p| p[k]));
        }
    }
    let mut w = String::new();
    writeln!(w, "{}", gravline::report::frames_header(r).join(",")).unwrap();
    let s = &r.support;
    let at = |v: &[Option<f64>], f: usize| v.get(f).copied().flatten();
    for f in 0..r.n_frames() {
        write!(w, "{:.6},{}", r.times_s[f], r.is_valid(f)).unwrap();
        opt3(&mut w, r.com[f].as_ref());
        let v = r.velocity[f].as_ref();
        opt3(&mut w, v);
        opt(
            &mut w,
            v.map(|v| (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt()),
        );
        opt3(&mut w, r.acceleration[f].as_ref());
        opt3(&mut w, r.xcom[f].as_ref());
        opt(&mut w, at(&s.bos_area_m2, f));
        opt(&mut w, at(&s.bos_margin_m, f));
        opt(&mut w, at(&s.mos_m, f));
        opt(&mut w, at(&s.mos_ap_m, f));
        opt(&mut w, at(&s.mos_ml_m, f));
        for side in 0..2 {
            write!(w, ",{}", s.contact[side].get(f).copied().unwrap_or(false)).unwrap();
        }
        if !r.load_names.is_empty() {
            opt3(&mut w, r.body_com[f].as_ref());
            for l in &r.loads {
                opt3(&mut w, l[f].as_ref());
            }
            let lift = r.lift.as_ref();
            opt3(
                &mut w,
                lift.and_then(|l| l.midfoot.get(f)).and_then(Option::as_ref),
            );
            opt(
                &mut w,
                lift.and_then(|l| l.com_midfoot_ap_m.get(f).copied().flatten()),
            );
            opt(
                &mut w,
                lift.and_then(|l| l.bar_midfoot_ap_m.get(f).copied().flatten()),
            );
        }
        for g in &r.groups {
            opt3(&mut w, g[f].as_ref());
        }
        for g in &r.segments {
            opt3(&mut w, g[f].as_ref());
        }
        w.push('\n');
    }
    w.into_bytes()
}

const SQUAT_CONFIG: &str = "[[load]]\nname = \"bar\"\nmass_kg = 60\n\
                            markers = [\"bar_left\", \"bar_right\"]\n\
                            [[group]]\nname = \"legs\"\nsegments = [\"thigh\", \"shank\", \"foot\"]\n";

fn config(toml: &str) -> Config {
    Config::from_raw(&RawConfig::from_toml(toml, "test").unwrap(), "test").unwrap()
}

fn result_of(scenario: Scenario, config: &Config, options: RunOptions) -> TrialResult {
    let bytes = csv_of(&generate(scenario, &SynthOptions::for_scenario(scenario)));
    let trial = read_trial_from(bytes.as_slice(), "t.csv", "t", &config.read_options()).unwrap();
    let subject = Subject::new(70.0, 1.75, Sex::Male);
    let table = SegmentTable::load(&config.table, subject.sex).unwrap();
    run_trial(trial, config, &subject, &table, options, 1).unwrap()
}

#[test]
fn frames_writer_gives_the_reference_bytes() {
    let segments = RunOptions { segments: true };
    for (scenario, toml, options) in [
        (Scenario::Walk, "", segments),
        (Scenario::Stand, "", RunOptions::default()),
        (Scenario::Squat, SQUAT_CONFIG, segments),
        (
            Scenario::Jump,
            "[filter]\ncutoff_hz = \"none\"\n",
            RunOptions::default(),
        ),
    ] {
        let r = result_of(scenario, &config(toml), options);
        let mut got = Vec::new();
        gravline::report::write_frames(&r, &mut got).unwrap();
        let want = reference_frames(&r);
        assert_eq!(
            String::from_utf8(got).unwrap(),
            String::from_utf8(want).unwrap(),
            "{scenario:?}"
        );
    }
}

#[test]
fn process_file_gives_the_general_paths_frames() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("walk.csv");
    let bytes = csv_of(&long_trial(6_000, 45, 11));
    std::fs::File::create(&path)
        .unwrap()
        .write_all(&bytes)
        .unwrap();
    let setup = Setup::new(Config::default(), Subject::new(70.0, 1.75, Sex::Male)).unwrap();
    let out = dir.path().join("out");
    process_file(&path, &setup, &out, &OutputOptions::default()).unwrap();
    let got = std::fs::read(out.join("frames.csv")).unwrap();

    let trial = read_trial_from(bytes.as_slice(), "t.csv", "t", &ReadOptions::default()).unwrap();
    let r = run_trial(
        trial,
        &setup.config,
        &setup.subject,
        &setup.table,
        RunOptions::default(),
        1,
    )
    .unwrap();
    assert!(r.valid_fraction() > 0.9);
    let want = reference_frames(&r);
    assert!(got == want, "frames.csv differs");
    // Chunks of rows formatted on several threads give the same bytes (6 000 rows: 3 chunks).
    for threads in [1, 2, 3, 5] {
        let mut text = Vec::new();
        gravline::report::write_frames_on(&r, &mut text, threads).unwrap();
        assert!(text == want, "frames.csv differs on {threads} threads");
    }
}

#[test]
fn support_stage_gives_the_same_series_on_any_number_of_threads() {
    use gravline::body::model::FOOT_POINTS;
    use gravline::body::BodyModel;
    use gravline::com::ComModel;
    use gravline::support::stage::{analyse_on, floor_m, FootFrames};

    // 20 000 frames: the per-frame work is cut into up to 4 ranges.
    let bytes = csv_of(&long_trial(20_000, 45, 5));
    let config = Config::default();
    let subject = Subject::new(70.0, 1.75, Sex::Male);
    let table = SegmentTable::load(&config.table, subject.sex).unwrap();
    let trial = read_trial_from(bytes.as_slice(), "t.csv", "t", &config.read_options()).unwrap();
    let labels = &trial.markers.labels;
    let mut body =
        BodyModel::build(labels, &trial.file, &config, &subject, &table, &FOOT_POINTS).unwrap();
    let com_model = ComModel::new(labels, &trial.file, &config, &body).unwrap();
    let (markers, _) =
        gravline::signal::fill_gaps(&trial.markers, &trial.times_s, config.max_gap_s);
    body.measure_leg_length(&markers);
    let n = trial.n_frames();
    let series: Vec<Vec<Option<[f64; 3]>>> =
        markers.tracks.iter().map(|t| t.to_series(n)).collect();
    let mut frame_markers = vec![None; labels.len()];
    let (mut points, mut seg) = (Vec::new(), Vec::new());
    let mut system = Vec::with_capacity(n);
    let mut foot = FootFrames::new(&body, n);
    for f in 0..n {
        for (slot, s) in frame_markers.iter_mut().zip(&series) {
            *slot = s[f];
        }
        body.evaluate(&frame_markers, &mut points);
        let c = com_model.frame(&body, &points, &frame_markers, &mut seg);
        system.push(c.system.map(|p| [p.x, p.y, p.z]));
        foot.push(&points);
    }
    let (velocity, _) = gravline::signal::derivative::of_series(&system, 1.0 / trial.rate_hz);
    let (floor, _) = floor_m(&foot, trial.up_axis, &config.support, trial.rate_hz);
    // The CoM stands in for the XCoM: any series of points serves the comparison.
    let run = |threads: usize| {
        let s = analyse_on(
            &foot,
            &system,
            &velocity,
            &system,
            &floor,
            trial.up_axis,
            &trial.times_s,
            trial.rate_hz,
            &config.support,
            threads,
        );
        // Debug prints every number exactly (shortest round-trip text).
        format!("{s:?}")
    };
    let want = run(1);
    assert!(want.contains("heel_strike_s"), "no steps found");
    for threads in [2, 3, 4, 7] {
        assert!(run(threads) == want, "{threads} threads");
    }
}
