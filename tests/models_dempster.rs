//! Dempster via Winter (Winter 2009, Table 4.1) with lateral malleolus markers only and a
//! measured `ankle_width_m`, as the other tables run: the medial malleolus the shank row ends at
//! lies the ankle width plus two marker radii medial to the lateral marker (common practice, no
//! source; the same offset that places the ankle JC at half the width plus one radius).

#![allow(clippy::result_large_err)]

use approx::assert_abs_diff_eq;
use gravline::anthropometry::{SegmentTable, Sex};
use gravline::config::{Config, RawConfig, Subject};
use gravline::pipeline::{run_trial, RunOptions};

mod common;
use common::{marker_body_points, static_trial};

fn config() -> Config {
    let toml = "[model]\ntable = \"dempster-winter\"\n[filter]\ncutoff_hz = \"none\"\n";
    Config::from_raw(&RawConfig::from_toml(toml, "test").unwrap(), "test").unwrap()
}

/// The marker body with each knee JC straight above the lateral malleolus (shank axis
/// vertical), the malleolus markers 0.07 m apart across the body.
fn points(with_medial: bool) -> Vec<(&'static str, [f64; 3])> {
    let mut p: Vec<(&str, [f64; 3])> = marker_body_points()
        .into_iter()
        .filter(|(n, _)| !n.contains("knee") && !n.contains("ankle_med"))
        .collect();
    for (side, y) in [("l", 1.0), ("r", -1.0)] {
        let name =
            |stem: &str| -> &'static str { Box::leak(format!("{side}_{stem}").into_boxed_str()) };
        p.push((name("knee_lat"), [-0.01, 0.17 * y, 0.50]));
        p.push((name("knee_med"), [-0.01, 0.07 * y, 0.50]));
        if with_medial {
            p.push((name("ankle_med"), [-0.01, 0.05 * y, 0.07]));
        }
    }
    p
}

#[test]
fn lateral_malleoli_and_the_ankle_width_give_the_marked_result() {
    let table = SegmentTable::load("dempster-winter", Sex::Male).unwrap();
    let mut subject = Subject::new(75.0, 1.77, Sex::Male);
    // A measured leg length, so the hip regression does not change with the malleolus marker
    // the leg length would otherwise be measured to.
    subject.leg_length_m = Some(0.9);
    let run = |points: &[(&str, [f64; 3])], subject: &Subject| {
        run_trial(
            static_trial(points, 5),
            &config(),
            subject,
            &table,
            RunOptions { segments: true },
            1,
        )
    };
    let marked = run(&points(true), &subject).unwrap();
    // Without the medial markers and without a width: an error naming the measurement.
    let e = run(&points(false), &subject).unwrap_err().to_string();
    assert!(e.contains("ankle_width_m"), "{e}");
    // 0.056 m between the malleoli' skin points plus two 7 mm marker radii = 0.07 m apart.
    subject.ankle_width_m = Some(0.056);
    subject.marker_radius_m = Some(0.007);
    let lateral = run(&points(false), &subject).unwrap();
    let (a, b) = (marked.com[0].unwrap(), lateral.com[0].unwrap());
    for k in 0..3 {
        assert_abs_diff_eq!(a[k], b[k], epsilon = 1e-12);
    }
    assert!(lateral.warnings.iter().any(|w| w
        .to_string()
        .contains("l_ankle_med placed 0.070 m medial to l_ankle_lat")));
}
