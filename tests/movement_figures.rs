//! The movement figures (src/movement) of the synthetic trials and of the bundled demo data,
//! checked against the model body's own ground truth (`gravline::synth::Truth`), and physics.

use gravline::anthropometry::SegmentTable;
use gravline::config::{Config, RawConfig, Subject};
use gravline::movement::{sway, Movement, MovementFigures};
use gravline::pipeline::{process_file, OutputOptions, Setup};
use gravline::pipeline::{run_trial, RunOptions, TrialResult};
use gravline::synth::demo::PEOPLE;
use gravline::synth::{generate, Scenario, SynthOptions, SynthTrial};

fn run_opts(scenario: Scenario, o: &SynthOptions, toml: &str) -> (SynthTrial, TrialResult) {
    let s = generate(scenario, o);
    let config = Config::from_raw(&RawConfig::from_toml(toml, "t").unwrap(), "t").unwrap();
    let subject = Subject::new(o.mass_kg, o.height_m, o.sex);
    let table = SegmentTable::load(&config.table, subject.sex).unwrap();
    let r = run_trial(
        s.to_trial(o.rate_hz),
        &config,
        &subject,
        &table,
        RunOptions::default(),
        1,
    )
    .unwrap();
    (s, r)
}

fn run(scenario: Scenario, toml: &str) -> (SynthTrial, TrialResult) {
    run_opts(scenario, &SynthOptions::for_scenario(scenario), toml)
}

const SQUAT_LOAD: &str =
    "[[load]]\nname = \"bar\"\nmass_kg = 60\nmarkers = [\"bar_left\", \"bar_right\"]\n";

/// The same trial without noise and gaps: its markers are the model's exact points.
fn exact(scenario: Scenario, o: &SynthOptions) -> SynthTrial {
    let mut o = o.clone();
    o.noise_m = 0.0;
    o.gaps = false;
    generate(scenario, &o)
}

fn frame_at(s: &SynthTrial, t: f64) -> usize {
    s.times_s
        .iter()
        .position(|&x| x >= t - 1e-9)
        .unwrap_or(s.times_s.len() - 1)
}

fn marker(s: &SynthTrial, label: &str) -> Vec<[f64; 3]> {
    s.positions[s.index_of(label).unwrap()]
        .iter()
        .map(|p| p.unwrap())
        .collect()
}

fn close(what: &str, got: f64, truth: f64, tol: f64) {
    eprintln!(
        "{what}: {got:.4} against {truth:.4} (error {:+.4}, tolerance {tol})",
        got - truth
    );
    assert!(
        (got - truth).abs() <= tol,
        "{what}: {got} against {truth}, tolerance {tol}"
    );
}

/// Jump against the model: take-off and landing are the model's own (it takes off where the
/// ground force vanishes, lands when its CoM parabola returns to take-off height); the take-off
/// velocity is g T / 2 for the flight T; the countermovement depth is the true CoM's (de Leva
/// 1996 rows on the exact points).
fn check_jump(s: &SynthTrial, f: &MovementFigures) {
    assert_eq!(f.movement, Movement::Jump, "{}", f.movement_rule);
    let j = f.jump.as_ref().expect("jump figures");
    let (t0, t1) = s.truth.flight_s.unwrap();
    let g = 9.81;
    // The toes leave and meet the floor at zero speed in the model, so 10 mm of clearance are
    // reached a few milliseconds after take-off and before landing: 1 frame at 200 Hz.
    close("take-off, s", j.takeoff_s, t0, 0.005);
    close("landing, s", j.landing_s, t1, 0.005);
    close("flight time, s", j.flight_time_s, t1 - t0, 0.010);
    let v0 = g * (t1 - t0) / 2.0;
    // Physics (ballistic flight): v0 = g T / 2. The 6 Hz low-pass lowers the velocity's
    // sharp peak at take-off by about 2 %: 4 % tolerance.
    let v = j.takeoff_velocity_m_s.unwrap();
    close("take-off velocity, m/s", v, v0, 0.04 * v0);
    let h0 = v0 * v0 / (2.0 * g);
    // Heights: squares of the above, so twice their relative tolerances.
    close(
        "height from take-off velocity, m",
        j.height_from_takeoff_velocity_m.unwrap(),
        h0,
        0.08 * h0,
    );
    close(
        "height from flight time, m",
        j.height_from_flight_time_m,
        h0,
        0.05 * h0,
    );
    // Countermovement depth of the true CoM: standing (first 0.25 s) minus the lowest point
    // before take-off. CoM from markers differs from the true one by millimetres here (same
    // table, estimated hip joint centers and vertex): 1 cm.
    let z: Vec<f64> = s.truth.com_m.iter().map(|c| c[2]).collect();
    let quiet = frame_at(s, 0.25);
    let standing = z[..quiet].iter().sum::<f64>() / quiet as f64;
    let lowest = z[..frame_at(s, t0)]
        .iter()
        .copied()
        .fold(f64::INFINITY, f64::min);
    close(
        "countermovement depth, m",
        j.countermovement_depth_m.unwrap(),
        standing - lowest,
        0.01,
    );
}

/// Walk against the model: its speed and cadence are set; stride time 2 / step frequency; the
/// step length and width are measured between the exact heel markers at the true heel strikes.
fn check_walk(s: &SynthTrial, o: &SynthOptions, f: &MovementFigures, exact: &SynthTrial) {
    assert_eq!(f.movement, Movement::Walk, "{}", f.movement_rule);
    let g = f.gait.as_ref().expect("gait figures");
    let speed = s.truth.walk_speed_m_s.unwrap();
    // The CoM oscillates about the pelvis's constant speed within a stride; a span of whole
    // steps averages that out to about 1 %: 2 %.
    close(
        "walking speed, m/s",
        g.walking_speed_m_s.unwrap(),
        speed,
        0.02 * speed,
    );
    let hs: Vec<(f64, usize)> = {
        let mut v: Vec<(f64, usize)> = (0..2)
            .flat_map(|side| s.truth.contacts[side].iter().map(move |c| (c.0, side)))
            .filter(|(t, _)| *t >= 0.0 && *t <= *s.times_s.last().unwrap())
            .collect();
        v.sort_by(|a, b| a.0.total_cmp(&b.0));
        v
    };
    let stride = s.truth.contacts[0][2].0 - s.truth.contacts[0][1].0;
    let cadence = 120.0 / stride;
    assert!((cadence - o.cadence_steps_per_min).abs() < 1e-6);
    // Events are whole frames (10 ms at 100 Hz) and the first and last may be missed: a
    // cadence over about 5 s of steps is good to about 1 %.
    close(
        "cadence, steps/min",
        g.cadence_steps_per_min.unwrap(),
        cadence,
        0.01 * cadence,
    );
    close("stride time, s", g.stride_time_s.unwrap(), stride, 0.01);
    close("step time, s", g.step_time_s.unwrap(), stride / 2.0, 0.01);
    let (l, r) = (marker(exact, "l_heel"), marker(exact, "r_heel"));
    let mut lengths = Vec::new();
    let mut widths = Vec::new();
    for &(t, side) in &hs {
        let k = frame_at(exact, t);
        let (lead, trail) = if side == 0 {
            (l[k], r[k])
        } else {
            (r[k], l[k])
        };
        lengths.push(lead[0] - trail[0]);
        widths.push((lead[1] - trail[1]).abs());
    }
    let mean = |v: &[f64]| v.iter().sum::<f64>() / v.len() as f64;
    // Heel positions at detected rather than true heel strikes (the heel rolls forward a few
    // millimetres in the frames around touchdown): 1 cm.
    close(
        "step length, m",
        g.step_length_m.unwrap(),
        mean(&lengths),
        0.01,
    );
    close(
        "step width, m",
        g.step_width_m.unwrap(),
        mean(&widths),
        0.01,
    );
    // Double support: the model's stance lasts 61 % of the stride, so two periods of 11 %.
    let truth_ds = {
        let c = &s.truth.contacts[0][1];
        2.0 * ((c.1 - c.0) / stride - 0.5)
    };
    close(
        "double support fraction",
        g.double_support_fraction.unwrap(),
        truth_ds,
        DOUBLE_SUPPORT_TOLERANCE,
    );
}

/// Double support is lengthened by every early heel strike and late toe-off, twice per stride.
/// The refined Zeni events of the synthetic walk come 15-25 ms early (heel strikes: the heel's
/// speed falls below the threshold just before it lands at 0.3 m/s) and 42-51 ms late (toe-offs:
/// the model's forefoot leaves the floor at zero speed, so the forefoot speed threshold is
/// crossed late): 2 x (20 + 46) ms / 1090 ms = 0.12 at most, 0.085 measured.
const DOUBLE_SUPPORT_TOLERANCE: f64 = 0.10;

/// Squat against the model's repetitions; depth and ascent speed of the exact bar (the
/// centroid of the exact bar markers) or of the true CoM.
fn check_squat(s: &SynthTrial, f: &MovementFigures, exact: &SynthTrial, with_bar: bool) {
    assert_eq!(f.movement, Movement::Squat, "{}", f.movement_rule);
    assert_eq!(f.reps.len(), s.truth.reps_s.len());
    let heights: Vec<f64> = if with_bar {
        let (a, b) = (marker(exact, "bar_left"), marker(exact, "bar_right"));
        a.iter().zip(&b).map(|(p, q)| (p[2] + q[2]) / 2.0).collect()
    } else {
        s.truth.com_m.iter().map(|c| c[2]).collect()
    };
    let dt = s.times_s[1] - s.times_s[0];
    for (rep, &(start, bottom, end)) in f.reps.iter().zip(&s.truth.reps_s) {
        assert_eq!(rep.source, if with_bar { "bar" } else { "com" });
        let (a, b, c) = (frame_at(s, start), frame_at(s, bottom), frame_at(s, end));
        let w = &heights[a..=c];
        let depth =
            w.iter().copied().fold(f64::MIN, f64::max) - w.iter().copied().fold(f64::MAX, f64::min);
        // Bar: noise-free geometry after a 6 Hz filter, 5 mm; CoM: the CoM from markers
        // differs from the true one by millimetres (estimated hip joint centers and vertex), 1 cm.
        close(
            "rep depth, m",
            rep.depth_m,
            depth,
            if with_bar { 0.005 } else { 0.01 },
        );
        close("rep bottom, s", rep.bottom_s, bottom, 0.05);
        // Start and end where the height moves slower than 0.02 m/s: the minimum-jerk profile's
        // slow tails before that are cut, about 0.05 s each: 0.15 s.
        close("rep duration, s", rep.duration_s, end - start, 0.15);
        let peak = (b..c)
            .map(|k| (heights[k + 1] - heights[k - 1]) / (2.0 * dt))
            .fold(0.0, f64::max);
        // Peak of a smooth minimum-jerk ascent, barely lowered by the 6 Hz filter: 3 %.
        close(
            "rep peak ascent speed, m/s",
            rep.peak_ascent_speed_m_s,
            peak,
            0.03 * peak,
        );
    }
}

/// Stand against the sway of the true CoM's floor projection (x forward = AP, y = ML).
fn check_stand(s: &SynthTrial, f: &MovementFigures) {
    assert_eq!(f.movement, Movement::Stand, "{}", f.movement_rule);
    let got = f.sway.as_ref().expect("sway figures");
    let xy: Vec<[f64; 2]> = s.truth.com_m.iter().map(|c| [c[0], c[1]]).collect();
    let frames: Vec<usize> = (0..xy.len()).collect();
    let truth = sway::of_points(&xy, &s.times_s, &frames).unwrap();
    eprintln!("sway {got:?}\ntruth {truth:?}");
    // Marker noise (0.5 mm) left after the 6 Hz filter and the CoM model's small errors add a
    // few tenths of a millimetre to sways of millimetres: RMS 15 %, area 30 %; the path length
    // sums every frame's wobble: 30 %.
    close(
        "sway RMS AP, m",
        got.rms_ap_m,
        truth.rms_ap_m,
        0.15 * truth.rms_ap_m,
    );
    close(
        "sway RMS ML, m",
        got.rms_ml_m,
        truth.rms_ml_m,
        0.15 * truth.rms_ml_m,
    );
    close(
        "sway ellipse area, m2",
        got.ellipse_area_95_m2,
        truth.ellipse_area_95_m2,
        0.3 * truth.ellipse_area_95_m2,
    );
    close(
        "sway path length, m",
        got.path_length_m,
        truth.path_length_m,
        0.3 * truth.path_length_m,
    );
    close(
        "sway mean speed, m/s",
        got.mean_speed_m_s,
        truth.mean_speed_m_s,
        0.3 * truth.mean_speed_m_s,
    );
}

#[test]
fn synthetic_jump_figures_match_the_model() {
    let (s, r) = run(Scenario::Jump, "");
    check_jump(&s, &r.movement);
}

#[test]
fn synthetic_walk_figures_match_the_model() {
    let o = SynthOptions::for_scenario(Scenario::Walk);
    let (s, r) = run_opts(Scenario::Walk, &o, "");
    check_walk(&s, &o, &r.movement, &exact(Scenario::Walk, &o));
}

#[test]
fn synthetic_squat_figures_match_the_model_with_and_without_its_bar() {
    let o = SynthOptions::for_scenario(Scenario::Squat);
    let ex = exact(Scenario::Squat, &o);
    let (s, r) = run_opts(Scenario::Squat, &o, SQUAT_LOAD);
    check_squat(&s, &r.movement, &ex, true);
    let (s, r) = run_opts(Scenario::Squat, &o, "");
    check_squat(&s, &r.movement, &ex, false);
}

#[test]
fn synthetic_stand_figures_match_the_model() {
    let (s, r) = run(Scenario::Stand, "");
    check_stand(&s, &r.movement);
}

/// `[trial] movement` replaces the recognition, and says so.
#[test]
fn the_configuration_sets_the_movement() {
    let (_, r) = run(Scenario::Stand, "[trial]\nmovement = \"squat\"\n");
    assert_eq!(r.movement.movement, Movement::Squat);
    assert!(r.movement.movement_rule.contains("configuration"));
    assert!(r.movement.reps.is_empty() && r.movement.sway.is_none());
    let bad = RawConfig::from_toml("[trial]\nmovement = \"run\"\n", "c.toml").unwrap();
    let e = Config::from_raw(&bad, "c.toml").unwrap_err().to_string();
    assert!(
        e.contains("[trial] movement") && e.contains("\"walk\""),
        "{e}"
    );
}

/// The bundled demo trials (examples/data), run from their files as `gravline demo` runs them,
/// against the truth of the model that wrote them (person and seed as in `synth::demo`).
#[test]
fn bundled_figures_match_the_model() {
    let data = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/data");
    let out = tempfile::tempdir().unwrap();
    for (scenario, person, seed, toml) in [
        (Scenario::Walk, 0, 11, ""),
        (Scenario::Stand, 0, 12, ""),
        (Scenario::Squat, 1, 13, SQUAT_LOAD),
        (Scenario::Jump, 2, 14, ""),
    ] {
        let p = &PEOPLE[person];
        let mut o = SynthOptions::for_scenario(scenario);
        (o.height_m, o.mass_kg, o.sex, o.seed) = (p.height_m, p.mass_kg, p.sex, seed);
        let s = generate(scenario, &o);
        let config = Config::from_raw(&RawConfig::from_toml(toml, "t").unwrap(), "t").unwrap();
        let subject = Subject::from_path(&data.join(format!("{}.toml", p.name))).unwrap();
        let setup = Setup::new(config, subject).unwrap();
        let file = data.join(format!("{}.csv", scenario.name()));
        let summary = process_file(&file, &setup, out.path(), &OutputOptions::default()).unwrap();
        eprintln!(
            "bundled {}: {}",
            scenario.name(),
            summary.figures.movement_rule
        );
        let f = &summary.figures;
        match scenario {
            Scenario::Walk => check_walk(&s, &o, f, &exact(scenario, &o)),
            Scenario::Stand => check_stand(&s, f),
            Scenario::Squat => check_squat(&s, f, &exact(scenario, &o), true),
            Scenario::Jump => check_jump(&s, f),
        }
    }
}

/// A batch of the bundled manifest: each trial's movement and its figures as columns of
/// `summary.csv` (the `summary.json` names joined with `_`).
#[test]
fn batch_columns_carry_the_movement_figures() {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
    let out = tempfile::tempdir().unwrap();
    assert_cmd::Command::cargo_bin("gravline")
        .unwrap()
        .args([
            "batch",
            "examples/data/manifest.csv",
            "-q",
            "--no-plots",
            "--out",
        ])
        .arg(out.path())
        .current_dir(root)
        .assert()
        .code(0);
    let mut rows = csv::Reader::from_path(out.path().join("summary.csv")).unwrap();
    let headers = rows.headers().unwrap().clone();
    let get = |row: &csv::StringRecord, name: &str| {
        let i = headers
            .iter()
            .position(|h| h == name)
            .unwrap_or_else(|| panic!("{name}"));
        row[i].to_string()
    };
    let mut seen = 0;
    for row in rows.records() {
        let row = row.unwrap();
        let trial = get(&row, "trial");
        let movement = trial.trim_end_matches(".csv").to_string();
        assert_eq!(get(&row, "movement"), movement);
        let filled: &[&str] = match movement.as_str() {
            "walk" => &[
                "gait_walking_speed_m_s",
                "gait_cadence_steps_per_min",
                "gait_stride_time_s",
                "gait_double_support_fraction",
            ],
            "jump" => &[
                "jump_flight_time_s",
                "jump_takeoff_velocity_m_s",
                "jump_height_from_takeoff_velocity_m",
                "jump_height_from_flight_time_m",
            ],
            "squat" => &[
                "reps",
                "reps_depth_m",
                "reps_duration_s",
                "reps_peak_ascent_speed_m_s",
            ],
            _ => &[
                "sway_path_length_m",
                "sway_rms_ap_m",
                "sway_rms_ml_m",
                "sway_ellipse_area_95_m2",
                "sway_mean_speed_m_s",
            ],
        };
        for c in filled {
            assert!(get(&row, c).parse::<f64>().is_ok(), "{trial}: {c}");
        }
        // Only the movement's own figures.
        assert_eq!(
            get(&row, "gait_walking_speed_m_s").is_empty(),
            movement != "walk"
        );
        assert_eq!(
            get(&row, "jump_flight_time_s").is_empty(),
            movement != "jump"
        );
        seen += 1;
    }
    assert_eq!(seen, 4);
}

/// The walking margin panel shows the AP and ML MoS with the heel strikes, and no "outside the
/// BoS" shading (in single stance the CoM is outside the one-foot BoS by design); a standing
/// trial keeps the omnidirectional margins.
#[test]
fn the_walking_margin_panel_shows_ap_and_ml_mos() {
    use gravline::report::plots::{write_plots, PlotFormat};
    let texts = |scenario: Scenario| {
        let o = SynthOptions::for_scenario(scenario);
        let (_, r) = run_opts(scenario, &o, "");
        let subject = Subject::new(o.mass_kg, o.height_m, o.sex);
        let summary = gravline::report::Summary::new(&r, &subject, None, "test".into());
        let dir = tempfile::tempdir().unwrap();
        write_plots(dir.path(), &r, &summary, PlotFormat::Svg).unwrap();
        std::fs::read_to_string(dir.path().join("series.svg")).unwrap()
    };
    let walk = texts(Scenario::Walk);
    for part in [
        "MoS AP",
        "MoS ML",
        "AP MoS at heel strike",
        "left heel strike",
    ] {
        assert!(walk.contains(part), "walk: no {part}");
    }
    assert!(!walk.contains("outside the BoS") && !walk.contains("MoS (XCoM, Hof 2005)"));
    let stand = texts(Scenario::Stand);
    assert!(stand.contains("MoS (XCoM, Hof 2005)") && !stand.contains("MoS AP"));
}
