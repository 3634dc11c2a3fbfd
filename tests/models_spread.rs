//! The spread of the CoM between models on the real recordings of ../shared/realdata (read in
//! place; a missing directory fails these tests) and on synthetic bodies with known answers.
//!
//! - standing-static: dos Santos, Fukuchi, Fukuchi & Duarte 2017, PeerJ 5:e3626, subject 13,
//!   CC BY 4.0 (no arm markers: arms hang, docs/DESIGN.md 5);
//! - walk-lower-body: Duarte 2021, doi 10.5281/zenodo.4599319, trial "walk2", CC BY 4.0 (pelvis
//!   and legs only: the spread is that of the legs' CoM).

use approx::assert_abs_diff_eq;
use gravline::anthropometry::{SegmentTable, Sex};
use gravline::com::spread;
use gravline::config::{Config, RawConfig, Subject};
use gravline::pipeline::{process_file, run_trial, OutputOptions, RunOptions, Setup};
use std::path::PathBuf;

mod common;
use common::{marker_body_points, static_trial, STANDING_CONFIG};

fn config(toml: &str) -> Config {
    Config::from_raw(&RawConfig::from_toml(toml, "test").unwrap(), "test").unwrap()
}

/// The real recordings; these tests fail when they are missing.
fn realdata() -> PathBuf {
    let dir = common::realdata_dir();
    assert!(dir.join("standing-static/trial.csv").exists());
    dir
}

/// Quiet standing under each table: the mean CoM height lies in the published band of
/// standing CoM height, 0.5527 of stature (a chapter in Whiplash Injuries, 2nd ed., Springer
/// 2014) and 55-57 % in textbooks; the band checked is 0.53-0.59 (arms approximated). The
/// spread between the twelve models (3 tables x 4 hip methods) is a few centimetres.
#[test]
fn standing_com_height_under_each_table_and_the_spread() {
    let dir = realdata().join("standing-static");
    let subject = Subject::from_path(&dir.join("subject.toml")).unwrap();
    let mut heights = Vec::new();
    for table in ["de-leva-1996", "dempster-winter", "dumas-2007"] {
        let text = format!("{STANDING_CONFIG}\n");
        let mut cfg = config(&text.replace(
            "[model]",
            &format!("[model]\ntable = \"{table}\"\nspread = true"),
        ));
        cfg.table = table.to_string();
        let setup = Setup::new(cfg, subject.clone()).unwrap();
        let out = tempfile::tempdir().unwrap();
        // The series plot (with the band of CoM heights) for one of the tables.
        let options = OutputOptions {
            plots: if table == "dumas-2007" {
                vec![gravline::report::plots::PlotFormat::Png]
            } else {
                Vec::new()
            },
            ..OutputOptions::default()
        };
        let summary = process_file(&dir.join("trial.csv"), &setup, out.path(), &options).unwrap();
        if table == "dumas-2007" {
            let trial =
                gravline::trial::read_trial(&dir.join("trial.csv"), &setup.config.read_options())
                    .unwrap();
            let r = run_trial(
                trial.clone(),
                &setup.config,
                &setup.subject,
                &setup.table,
                RunOptions::default(),
                1,
            )
            .unwrap();
            for p in &r.spread.unwrap().pairs {
                eprintln!(
                    "standing pair {} vs {}: mean {:.1} mm, max {:.1} mm",
                    p.model_a,
                    p.model_b,
                    p.mean_m * 1e3,
                    p.max_m * 1e3
                );
            }
            let png = out.path().join("series.png");
            assert!(std::fs::metadata(&png).unwrap().len() > 10_000);
            std::fs::copy(
                &png,
                std::env::temp_dir().join("gravline-spread-series.png"),
            )
            .ok();
        }
        let share = summary.com.mean_height_of_stature.unwrap();
        assert!((0.53..=0.59).contains(&share), "{table}: {share}");
        heights.push((table, share * subject.height_m, share));
        let s = summary.spread.unwrap();
        assert_eq!(s.models.len(), 12, "{:?}", s.skipped);
        assert_eq!(s.frames_with_spread, summary.frames);
        let (mean, max) = (s.mean_m.unwrap(), s.max_m.unwrap());
        assert!(mean <= max && max < 0.10, "{mean} {max}");
        // frames.csv carries the per-frame spread.
        let frames = std::fs::read_to_string(out.path().join("frames.csv")).unwrap();
        let header = frames.lines().next().unwrap();
        assert!(header.ends_with("com_spread_m,com_spread_x_m,com_spread_y_m,com_spread_z_m"));
        let pair = s.most_disagreeing.unwrap();
        eprintln!(
            "standing, table {table}: CoM height {:.4} m = {share:.4} of stature; spread mean {:.1} mm, max {:.1} mm, per axis mean {:?} mm; most disagreeing {} vs {} ({:.1} mm)",
            share * subject.height_m,
            mean * 1e3,
            max * 1e3,
            s.mean_axes_m.unwrap().map(|v| (v * 1e4).round() / 10.0),
            pair.model_a,
            pair.model_b,
            pair.mean_m * 1e3
        );
    }
    let lo = heights.iter().map(|h| h.1).fold(f64::INFINITY, f64::min);
    let hi = heights
        .iter()
        .map(|h| h.1)
        .fold(f64::NEG_INFINITY, f64::max);
    eprintln!(
        "standing: CoM heights {heights:?}; spread of the three heights {:.1} mm",
        (hi - lo) * 1e3
    );
}

/// The walk has markers on the pelvis and legs only: no table resolves the whole body, and the
/// spread is that of the legs' CoM (every table defines thighs, shanks and feet).
#[test]
fn walk_lower_body_spread_of_the_legs() {
    let dir = realdata().join("walk-lower-body");
    // No toe-tip markers: the toe tips are virtual, as in the standing configuration.
    let cfg = config(&format!(
        "[input]\nunits = \"mm\"\nup_axis = \"y\"\n[model]\nspread = true\n{}",
        &STANDING_CONFIG[STANDING_CONFIG.find("[virtual]").unwrap()..]
    ));
    // Body mass is not published with the walk; 72 kg (the middle of the 68-77 kg the plates
    // suggest) only scales the masses, not the CoMs.
    let subject = Subject::new(72.0, 1.75, Sex::Male);
    let trial = gravline::trial::read_trial(&dir.join("trial.csv"), &cfg.read_options()).unwrap();
    let (mut markers, _) =
        gravline::signal::fill_gaps(&trial.markers, &trial.times_s, cfg.max_gap_s);
    gravline::signal::low_pass(&mut markers, trial.rate_hz, cfg.cutoff_hz.unwrap()).unwrap();
    let s = spread::compute(&markers, &trial.file, &cfg, &subject);
    for p in &s.pairs {
        eprintln!(
            "walk pair {} vs {}: mean {:.1} mm, max {:.1} mm",
            p.model_a,
            p.model_b,
            p.mean_m * 1e3,
            p.max_m * 1e3
        );
    }
    assert_eq!(s.subsystem, "legs");
    assert_eq!(s.models.len(), 12, "{:?}", s.skipped);
    let f = s.figures();
    assert!(f.frames_with_spread > trial.n_frames() / 2);
    let (mean, max) = (f.mean_m.unwrap(), f.max_m.unwrap());
    assert!(mean > 0.0 && mean <= max && max < 0.10, "{mean} {max}");
    let pair = f.most_disagreeing.unwrap();
    eprintln!(
        "walk (legs' CoM): spread mean {:.1} mm, max {:.1} mm, per axis mean {:?} max {:?} mm; most disagreeing {} vs {} (mean {:.1} mm)",
        mean * 1e3,
        max * 1e3,
        f.mean_axes_m.unwrap().map(|v| (v * 1e4).round() / 10.0),
        f.max_axes_m.unwrap().map(|v| (v * 1e4).round() / 10.0),
        pair.model_a,
        pair.model_b,
        pair.mean_m * 1e3
    );
    // The whole pipeline on this marker set stops with the landmark error, as every table does.
    let table = SegmentTable::load("dumas-2007", Sex::Male).unwrap();
    let e = run_trial(
        trial.clone(),
        &cfg,
        &subject,
        &table,
        RunOptions::default(),
        1,
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("not found"), "{e}");
}

/// On a synthetic body with the hip JCs given, only the table varies (one hip variant): the
/// spread per frame is the largest distance between the three tables' CoMs, each computed
/// alone, and the per-axis spread their coordinate range.
#[test]
fn spread_is_the_largest_distance_between_the_tables() {
    let mut points = marker_body_points();
    points.push(("l_hip_jc", [0.03, 0.085, 0.92]));
    points.push(("r_hip_jc", [0.03, -0.085, 0.92]));
    let subject = Subject::new(75.0, 1.77, Sex::Male);
    let trial = static_trial(&points, 10);
    let base = "[filter]\ncutoff_hz = \"none\"\n[model]\n";
    let mut coms = Vec::new();
    for table in ["de-leva-1996", "dempster-winter", "dumas-2007"] {
        let cfg = config(&format!("{base}table = \"{table}\"\n"));
        let t = SegmentTable::load(table, Sex::Male).unwrap();
        coms.push(
            run_trial(trial.clone(), &cfg, &subject, &t, RunOptions::default(), 1)
                .unwrap()
                .com[0]
                .unwrap(),
        );
    }
    let cfg = config(&format!("{base}spread = true\n"));
    let t = SegmentTable::load("de-leva-1996", Sex::Male).unwrap();
    let r = run_trial(trial.clone(), &cfg, &subject, &t, RunOptions::default(), 1).unwrap();
    let s = r.spread.unwrap();
    assert_eq!(s.models.len(), 3, "{:?}", s.models);
    let d = |a: [f64; 3], b: [f64; 3]| {
        ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
    };
    let expected = d(coms[0], coms[1])
        .max(d(coms[0], coms[2]))
        .max(d(coms[1], coms[2]));
    assert_abs_diff_eq!(s.spread_m[0].unwrap(), expected, epsilon = 1e-12);
    for k in 0..3 {
        let v: Vec<f64> = coms.iter().map(|c| c[k]).collect();
        let range = v.iter().cloned().fold(f64::NEG_INFINITY, f64::max)
            - v.iter().cloned().fold(f64::INFINITY, f64::min);
        assert_abs_diff_eq!(s.axes_m[0].unwrap()[k], range, epsilon = 1e-12);
    }
    // A static body does not move: every axis range is zero, smaller than the spread.
    assert!(r
        .warnings
        .iter()
        .any(|w| w.to_string().starts_with("spread between models")));
}

/// `--spread` on the command line: frames.csv gains the spread columns and summary.json the
/// spread block.
#[test]
fn the_spread_flag_of_the_command_line() {
    let dir = realdata().join("standing-static");
    let out = tempfile::tempdir().unwrap();
    let config = out.path().join("stand.toml");
    std::fs::write(&config, STANDING_CONFIG).unwrap();
    assert_cmd::Command::cargo_bin("gravline")
        .unwrap()
        .arg("trial")
        .arg(dir.join("trial.csv"))
        .arg("--subject")
        .arg(dir.join("subject.toml"))
        .arg("--config")
        .arg(&config)
        .args(["--table", "dumas-2007", "--spread", "--no-plots", "--out"])
        .arg(out.path())
        .assert()
        .success();
    let trial_dir = out.path().join("trial");
    let frames = std::fs::read_to_string(trial_dir.join("frames.csv")).unwrap();
    assert!(frames.lines().next().unwrap().contains(",com_spread_m,"));
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(trial_dir.join("summary.json")).unwrap())
            .unwrap();
    assert_eq!(summary["spread"]["models"].as_array().unwrap().len(), 12);
    assert!(summary["spread"]["mean_m"].as_f64().unwrap() > 0.0);
    assert_eq!(summary["provenance"]["model"]["table"], "dumas-2007");
}
