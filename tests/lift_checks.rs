//! Lifter plus barbell through the real pipeline: docs/reference/methods.md 6 check values and the
//! physics of the combined CoM.

use approx::assert_abs_diff_eq;
use gravline::anthropometry::{SegmentTable, Sex};
use gravline::config::{Config, RawConfig, Subject};
use gravline::pipeline::{run_trial, RunOptions, TrialResult};
use nalgebra::Vector3;

mod common;
use common::{marker_body_points, static_trial};

const FOOT_STEMS: [&str; 7] = ["heel", "toe", "mt1", "mt2", "mt5", "ankle_lat", "ankle_med"];

fn is_foot(name: &str) -> bool {
    FOOT_STEMS.iter().any(|s| name.ends_with(s))
}

/// The test body with its feet moved `foot_shift_m` forward and bar-end markers at
/// `bar_x_m` (1.31 m apart, at 1.45 m), with a bar of `bar_kg`.
fn run_with_bar(foot_shift_m: f64, bar_x_m: f64, bar_kg: f64) -> TrialResult {
    let mut points = marker_body_points();
    for (name, p) in points.iter_mut() {
        if is_foot(name) {
            p[0] += foot_shift_m;
        }
    }
    points.push(("bar_left", [bar_x_m, 0.655, 1.45]));
    points.push(("bar_right", [bar_x_m, -0.655, 1.45]));
    let trial = static_trial(&points, 10);
    let toml = format!(
        "[filter]\ncutoff_hz = \"none\"\n[[load]]\nname = \"bar\"\nmass_kg = {bar_kg}\nmarkers = [\"bar_left\", \"bar_right\"]\n"
    );
    let config = Config::from_raw(&RawConfig::from_toml(&toml, "t").unwrap(), "t").unwrap();
    // An 80 kg lifter (de Leva male fractions sum to 1.0000).
    let subject = Subject::new(80.0, 1.78, Sex::Male);
    let table = SegmentTable::load(&config.table, subject.sex).unwrap();
    run_trial(trial, &config, &subject, &table, RunOptions::default(), 2).unwrap()
}

/// Body CoM offset from the mid-foot (zero-mass bar), along the foot direction.
fn body_offset(foot_shift_m: f64) -> f64 {
    let r = run_with_bar(foot_shift_m, 0.0, 0.0);
    r.lift.unwrap().com_midfoot_ap_m[0].unwrap()
}

/// docs/reference/methods.md 6 (derived from x_sys = (m_body x_body + m_bar x_bar) / (m_body + m_bar)):
/// an 80 kg lifter whose body CoM is 5 cm behind mid-foot needs the bar 6.67, 4.00, 2.86 and
/// 2.00 cm ahead of mid-foot for 60, 100, 140 and 200 kg bars; found here through the pipeline
/// (body model, mid-foot from the foot markers, system CoM) to 1e-4 m.
#[test]
fn bar_offsets_that_put_the_system_com_over_mid_foot() {
    // Place the feet so that the body CoM is exactly 5 cm behind mid-foot (secant iterations:
    // the offset is nearly linear in the foot shift; the leg length of the hip regression
    // changes a little with it).
    let (mut x0, mut x1) = (0.0, 0.1);
    let (mut f0, mut f1) = (body_offset(x0) + 0.05, body_offset(x1) + 0.05);
    for _ in 0..6 {
        if f1.abs() < 1e-12 {
            break;
        }
        let x2 = x1 - f1 * (x1 - x0) / (f1 - f0);
        (x0, f0, x1) = (x1, f1, x2);
        f1 = body_offset(x1) + 0.05;
    }
    let shift = x1;
    assert_abs_diff_eq!(body_offset(shift), -0.05, epsilon = 1e-9);
    let midfoot_x = run_with_bar(shift, 0.0, 0.0).lift.unwrap().midfoot[0].unwrap()[0];
    for (bar_kg, expected_m) in [
        (60.0, 0.0667),
        (100.0, 0.0400),
        (140.0, 0.0286),
        (200.0, 0.0200),
    ] {
        // The system offset is linear in the bar position: solve for where it is zero.
        let s = |x: f64| {
            run_with_bar(shift, midfoot_x + x, bar_kg)
                .lift
                .unwrap()
                .com_midfoot_ap_m[0]
                .unwrap()
        };
        let (s0, s1) = (s(0.0), s(0.1));
        let offset = -s0 / ((s1 - s0) / 0.1);
        assert_abs_diff_eq!(offset, expected_m, epsilon = 1e-4);
        let check = run_with_bar(shift, midfoot_x + offset, bar_kg);
        let lift = check.lift.unwrap();
        assert_abs_diff_eq!(lift.com_midfoot_ap_m[0].unwrap(), 0.0, epsilon = 1e-9);
        assert_abs_diff_eq!(lift.bar_midfoot_ap_m[0].unwrap(), offset, epsilon = 1e-9);
    }
}

/// The system CoM is the mass-weighted average of the body CoM and the bar in every frame
/// (1e-9 m); a zero-mass bar gives the body CoM.
#[test]
fn system_com_is_the_weighted_average_of_body_and_bar() {
    let r = run_with_bar(0.0, 0.3, 100.0);
    for f in 0..r.n_frames() {
        let body = Vector3::from(r.body_com[f].unwrap());
        let bar = Vector3::from(r.loads[0][f].unwrap());
        let system = Vector3::from(r.com[f].unwrap());
        assert_abs_diff_eq!(system, (body * 80.0 + bar * 100.0) / 180.0, epsilon = 1e-9);
    }
    let zero = run_with_bar(0.0, 0.3, 0.0);
    for f in 0..zero.n_frames() {
        assert_abs_diff_eq!(
            Vector3::from(zero.com[f].unwrap()),
            Vector3::from(zero.body_com[f].unwrap()),
            epsilon = 1e-12
        );
    }
}
