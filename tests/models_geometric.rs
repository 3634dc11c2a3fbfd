//! The geometric model (`[model] table = "geometric"`): a synthetic body made of solids with
//! textbook volumes and centroids (cylinder V = pi r^2 h, centroid h/2; circular frustum
//! V = pi h (R^2 + R r + r^2) / 3, centroid h (R^2 + 2 R r + 3 r^2) / (4 (R^2 + R r + r^2)) from
//! the larger base; common practice, no source) gives the exact whole-body CoM, with densities of
//! Dempster 1955 as tabulated by Winter 2009, Table 4.1. The body is invented for the test.

use approx::assert_abs_diff_eq;
use gravline::config::{Config, RawConfig, Subject};
use gravline::pipeline::{run_trial, RunOptions, Setup};
use std::f64::consts::PI;

mod common;
use common::static_trial;

type P = [f64; 3];

/// Landmarks of a standing body (x forward, y left, z up), joint centers given.
fn points() -> Vec<(&'static str, P)> {
    let mut p: Vec<(&str, P)> = vec![
        ("head_top", [0.0, 0.0, 1.75]),
        ("c7", [-0.05, 0.0, 1.50]),
        ("jugular", [0.05, 0.0, 1.46]),
    ];
    for (side, y) in [("l", 1.0), ("r", -1.0)] {
        let name =
            |stem: &str| -> &'static str { Box::leak(format!("{side}_{stem}").into_boxed_str()) };
        p.push((name("shoulder_jc"), [0.0, 0.18 * y, 1.42]));
        p.push((name("elbow_jc"), [0.0, 0.19 * y, 1.14]));
        p.push((name("wrist_jc"), [0.02, 0.19 * y, 0.87]));
        p.push((name("hand"), [0.02, 0.19 * y, 0.78]));
        p.push((name("hip_jc"), [0.0, 0.085 * y, 0.93]));
        p.push((name("knee_jc"), [0.02, 0.085 * y, 0.50]));
        p.push((name("ankle_lat"), [0.0, 0.12 * y, 0.07]));
        p.push((name("heel"), [-0.05, 0.09 * y, 0.0]));
        p.push((name("toe"), [0.21, 0.09 * y, 0.0]));
    }
    p
}

fn at(points: &[(&str, P)], name: &str) -> P {
    points.iter().find(|(n, _)| *n == name).unwrap().1
}

fn dist(a: P, b: P) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

/// Each segment: (name, origin stem, other stem, density g/cm^3, radius at origin, at other).
/// Equal radii make a cylinder, unequal a circular frustum; circles are given as perimeter
/// 2 pi r and width 2 r.
const SEGMENTS: [(&str, &str, &str, f64, f64, f64); 8] = [
    ("head", "head_top", "c7", 1.11, 0.09, 0.09),
    ("trunk", "jugular", "mid_hip", 1.03, 0.15, 0.13),
    ("upper_arm", "shoulder_jc", "elbow_jc", 1.07, 0.045, 0.035),
    ("forearm", "elbow_jc", "wrist_jc", 1.13, 0.035, 0.025),
    ("hand", "wrist_jc", "hand", 1.16, 0.03, 0.03),
    ("thigh", "hip_jc", "knee_jc", 1.05, 0.085, 0.05),
    ("shank", "knee_jc", "ankle_lat", 1.09, 0.05, 0.03),
    ("foot", "heel", "toe", 1.10, 0.035, 0.035),
];

#[test]
fn a_body_of_known_solids_gives_the_exact_com() {
    let pts = points();
    let mid_hip = {
        let (l, r) = (at(&pts, "l_hip_jc"), at(&pts, "r_hip_jc"));
        [
            (l[0] + r[0]) / 2.0,
            (l[1] + r[1]) / 2.0,
            (l[2] + r[2]) / 2.0,
        ]
    };
    let point = |name: &str| {
        if name == "mid_hip" {
            mid_hip
        } else {
            at(&pts, name)
        }
    };
    // The subject file, with each segment's measured length equal to its landmark distance.
    let mut toml = String::from("mass_kg = 70.0\nheight_m = 1.75\nsex = \"male\"\n");
    let (mut sum, mut mass) = ([0.0; 3], 0.0);
    for (seg, o, t, rho, r0, r1) in SEGMENTS {
        let sides: Vec<String> = if seg == "head" || seg == "trunk" {
            vec![String::new()]
        } else {
            vec!["l_".into(), "r_".into()]
        };
        let first = format!("{}{o}", sides[0]);
        let second = format!("{}{t}", sides[0]);
        let length = dist(point(&first), point(&second));
        toml.push_str(&format!(
            "[geometry.{seg}]\nlength_m = {length}\nlevels = [{{ at = 0.0, perimeter_m = {}, width_m = {} }}, {{ at = 1.0, perimeter_m = {}, width_m = {} }}]\n",
            2.0 * PI * r0,
            2.0 * r0,
            2.0 * PI * r1,
            2.0 * r1
        ));
        // Textbook frustum (a cylinder when r0 = r1), centroid from the origin's face.
        let s = r0 * r0 + r0 * r1 + r1 * r1;
        let volume = PI * length * s / 3.0;
        let centroid = length * (r0 * r0 + 2.0 * r0 * r1 + 3.0 * r1 * r1) / (4.0 * s);
        let m = rho * 1000.0 * volume;
        for side in &sides {
            let (a, b) = (point(&format!("{side}{o}")), point(&format!("{side}{t}")));
            let l = dist(a, b);
            for k in 0..3 {
                sum[k] += m * (a[k] + (b[k] - a[k]) * centroid / l);
            }
            mass += m;
        }
    }
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("subject.toml");
    std::fs::write(&path, &toml).unwrap();
    let subject = Subject::from_path(&path).unwrap();
    let raw = RawConfig::from_toml(
        "[model]\ntable = \"geometric\"\n[filter]\ncutoff_hz = \"none\"\n",
        "test",
    )
    .unwrap();
    let setup = Setup::new(Config::from_raw(&raw, "test").unwrap(), subject).unwrap();
    assert_abs_diff_eq!(setup.table.mass_sum * 70.0, mass, epsilon = 1e-9);
    assert!(
        setup.table.population.contains("predicted body mass"),
        "{}",
        setup.table.population
    );
    let result = run_trial(
        static_trial(&pts, 5),
        &setup.config,
        &setup.subject,
        &setup.table,
        RunOptions::default(),
        1,
    )
    .unwrap();
    let com = result.com[0].unwrap();
    for k in 0..3 {
        assert_abs_diff_eq!(com[k], sum[k] / mass, epsilon = 1e-9);
    }
    assert_abs_diff_eq!(result.model.body_mass_kg, mass, epsilon = 1e-9);
    eprintln!(
        "synthetic body of solids: predicted mass {mass:.3} kg against 70 kg weighed; CoM {com:?}"
    );
}

#[test]
fn a_missing_segment_or_centimetres_are_errors_naming_the_fix() {
    let base = "mass_kg = 70.0\nheight_m = 1.75\nsex = \"male\"\n[geometry.head]\nlength_m = 0.24\nlevels = [{ at = 0.0, perimeter_m = 0.5, width_m = 0.15 }, { at = 1.0, perimeter_m = 0.4, width_m = 0.12 }]\n";
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("s.toml");
    std::fs::write(&path, base).unwrap();
    let subject = Subject::from_path(&path).unwrap();
    let e = gravline::body::geometric::table(&subject)
        .unwrap_err()
        .to_string();
    assert!(e.contains("[geometry] has no `trunk`"), "{e}");
    std::fs::write(&path, base.replace("perimeter_m = 0.5", "perimeter_m = 50")).unwrap();
    let subject = Subject::from_path(&path).unwrap();
    let e = gravline::body::geometric::table(&subject)
        .unwrap_err()
        .to_string();
    assert!(e.contains("not centimetres"), "{e}");
}
