//! Whole-body CoM through the real pipeline, checked against outside values: the derived
//! standing example of docs/reference/segment-tables.md 5 (de Leva 1996 male main definitions) and the
//! physics the segmental method rests on.

use approx::assert_abs_diff_eq;
use gravline::anthropometry::{SegmentTable, Sex};
use gravline::config::{Config, RawConfig, Subject};
use gravline::pipeline::{run_trial, RunOptions, TrialResult};
use gravline::trial::Trial;
use nalgebra::{Rotation3, Vector3};

mod common;
use common::{marker_body_trial, static_trial};

fn config(toml: &str) -> Config {
    Config::from_raw(&RawConfig::from_toml(toml, "test").unwrap(), "test").unwrap()
}

fn run(trial: &Trial, config: &Config, subject: &Subject) -> TrialResult {
    let table = SegmentTable::load(&config.table, subject.sex).unwrap();
    run_trial(
        trial.clone(),
        config,
        subject,
        &table,
        RunOptions { segments: true },
        2,
    )
    .unwrap()
}

/// docs/reference/segment-tables.md 5, derived example 3: landmark coordinates (x forward, y left,
/// z up, metres) with the joint centers given, so the table alone decides the CoM.
fn de_leva_standing_points() -> Vec<(&'static str, [f64; 3])> {
    let mut p = vec![
        ("head_top", [0.0, 0.0, 1.741]),
        ("mid_gonion", [0.0, 0.0, 1.5377]),
        ("jugular", [0.0, 0.0, 1.4581]),
    ];
    for (side, y) in [("l", 1.0), ("r", -1.0)] {
        let name =
            |stem: &str| -> &'static str { Box::leak(format!("{side}_{stem}").into_boxed_str()) };
        p.push((name("shoulder_jc"), [0.0, 0.18 * y, 1.42]));
        p.push((name("elbow_jc"), [0.0, 0.18 * y, 1.1383]));
        p.push((name("wrist_jc"), [0.0, 0.18 * y, 0.8694]));
        p.push((name("hand"), [0.0, 0.18 * y, 0.7832]));
        p.push((name("hip_jc"), [0.0, 0.085 * y, 0.9262]));
        p.push((name("knee_jc"), [0.0, 0.085 * y, 0.504]));
        p.push((name("ankle_lat"), [0.0, 0.085 * y, 0.07]));
        p.push((name("heel"), [-0.05, 0.085 * y, 0.0]));
        p.push((name("toe"), [0.2081, 0.085 * y, 0.0]));
    }
    p
}

const DE_LEVA_HEAD_MAIN: &str =
    "[model]\nendpoints = { head = \"head_top-mid_gonion\" }\n[filter]\ncutoff_hz = \"none\"\n";

/// Whole-body CoM (0.001752, 0, 0.993432) m = 0.5706 of stature (docs/reference/segment-tables.md 5, derived
/// from de Leva 1996 Table 4), to 1e-5 m.
#[test]
fn de_leva_standing_example() {
    let trial = static_trial(&de_leva_standing_points(), 5);
    let r = run(
        &trial,
        &config(DE_LEVA_HEAD_MAIN),
        &Subject::new(73.0, 1.741, Sex::Male),
    );
    for c in &r.com {
        let c = c.unwrap();
        assert_abs_diff_eq!(c[0], 0.001752, epsilon = 1e-5);
        assert_abs_diff_eq!(c[1], 0.0, epsilon = 1e-9);
        assert_abs_diff_eq!(c[2], 0.993432, epsilon = 1e-5);
        assert_abs_diff_eq!(c[2] / 1.741, 0.5706, epsilon = 1e-4);
    }
    // Segment CoM heights of the same example.
    let seg = |name: &str| {
        let i = r.segment_names.iter().position(|n| n == name).unwrap();
        r.segments[i][0].unwrap()
    };
    assert_abs_diff_eq!(seg("head")[2], 1.61951, epsilon = 1e-5);
    assert_abs_diff_eq!(seg("trunk")[2], 1.21949, epsilon = 1e-5);
    assert_abs_diff_eq!(seg("l_thigh")[2], 0.75331, epsilon = 1e-5);
    assert_abs_diff_eq!(seg("r_shank")[2], 0.31048, epsilon = 1e-5);
    assert_abs_diff_eq!(seg("l_foot")[0], 0.06395, epsilon = 1e-5);
}

/// Physics: moving the whole lab frame (rotation and translation) moves the CoM by the same
/// transform (1e-9 m), here on a marker set that needs the hip regression, the knee and ankle
/// midpoints and the shoulder offset.
#[test]
fn a_rigid_motion_of_the_lab_moves_the_com_with_it() {
    let trial = marker_body_trial();
    let cfg = config("[filter]\ncutoff_hz = \"none\"\n");
    let subject = Subject::new(70.0, 1.75, Sex::Female);
    let base = run(&trial, &cfg, &subject);
    let rot = Rotation3::from_euler_angles(0.3, -0.7, 1.9);
    let shift = Vector3::new(1.5, -2.0, 0.4);
    let mut moved = trial.clone();
    moved.markers.map_points(|p| {
        let q = rot * Vector3::from(p) + shift;
        [q.x, q.y, q.z]
    });
    let r = run(&moved, &cfg, &subject);
    for (a, b) in base.com.iter().zip(&r.com) {
        let expected = rot * Vector3::from(a.unwrap()) + shift;
        assert_abs_diff_eq!(Vector3::from(b.unwrap()), expected, epsilon = 1e-9);
    }
}

/// Physics: a body folded double (trunk and arms folded down over straight, horizontal legs)
/// has its CoM in the air between the folds, outside every segment.
#[test]
fn a_body_folded_double_has_its_com_outside_every_segment() {
    let mut points = de_leva_standing_points();
    // A jackknife: legs rotated about the hips to point horizontally along +x (feet up), trunk,
    // head and arms rotated to point 45 degrees up-forward over them.
    for (name, p) in points.iter_mut() {
        let z = p[2];
        let upper = ["head_top", "mid_gonion", "jugular"].contains(name)
            || name.contains("shoulder")
            || name.contains("elbow")
            || name.contains("wrist")
            || name.ends_with("hand");
        if upper {
            let (h, x) = (z - 0.9262, p[0]);
            let c = std::f64::consts::FRAC_1_SQRT_2;
            *p = [h * c + x * c, p[1], 0.9262 + h * c - x * c];
        } else {
            *p = [0.9262 - z, p[1], 0.9262 + p[0]];
        }
    }
    let trial = static_trial(&points, 3);
    let r = run(
        &trial,
        &config(DE_LEVA_HEAD_MAIN),
        &Subject::new(73.0, 1.741, Sex::Male),
    );
    let com = Vector3::from(r.com[0].unwrap());
    let table = SegmentTable::builtin("de-leva-1996", Sex::Male).unwrap();
    assert!(table.mass_sum > 0.99);
    // Distance from the CoM to every segment (as the line piece between its endpoints).
    let lookup = |name: &str| Vector3::from(points.iter().find(|(n, _)| *n == name).unwrap().1);
    let mut pairs: Vec<(String, String)> = vec![
        ("head_top".into(), "mid_gonion".into()),
        ("jugular".into(), "mid_hip".into()),
    ];
    for s in ["l", "r"] {
        for (a, b) in [
            ("shoulder_jc", "elbow_jc"),
            ("elbow_jc", "wrist_jc"),
            ("wrist_jc", "hand"),
            ("hip_jc", "knee_jc"),
            ("knee_jc", "ankle_lat"),
            ("heel", "toe"),
        ] {
            pairs.push((format!("{s}_{a}"), format!("{s}_{b}")));
        }
    }
    for (a, b) in pairs {
        let pa = if a == "mid_hip" {
            (lookup("l_hip_jc") + lookup("r_hip_jc")) / 2.0
        } else {
            lookup(&a)
        };
        let pb = if b == "mid_hip" {
            (lookup("l_hip_jc") + lookup("r_hip_jc")) / 2.0
        } else {
            lookup(&b)
        };
        let d = pb - pa;
        let t = ((com - pa).dot(&d) / d.norm_squared()).clamp(0.0, 1.0);
        let dist = (com - (pa + d * t)).norm();
        assert!(dist > 0.05, "CoM {com:?} is {dist} m from segment {a}-{b}");
    }
}

/// Subsystem CoMs combined by their masses give the whole-body CoM; scaling every mass (the
/// body mass) leaves the CoM unchanged.
#[test]
fn groups_recombine_and_mass_scale_cancels() {
    let trial = marker_body_trial();
    let cfg = config(
        "[filter]\ncutoff_hz = \"none\"\n[[group]]\nname = \"upper\"\nsegments = [\"head\", \"trunk\", \"upper_arm\", \"forearm\", \"hand\"]\n[[group]]\nname = \"lower\"\nsegments = [\"thigh\", \"shank\", \"foot\"]\n",
    );
    let light = run(&trial, &cfg, &Subject::new(50.0, 1.75, Sex::Male));
    let heavy = run(&trial, &cfg, &Subject::new(100.0, 1.75, Sex::Male));
    let table = SegmentTable::builtin("de-leva-1996", Sex::Male).unwrap();
    let mass =
        |s: gravline::anthropometry::SegmentKind| table.default_row(s).unwrap().mass_fraction;
    use gravline::anthropometry::SegmentKind::*;
    let m_upper = mass(Head) + mass(Trunk) + 2.0 * (mass(UpperArm) + mass(Forearm) + mass(Hand));
    let m_lower = 2.0 * (mass(Thigh) + mass(Shank) + mass(Foot));
    for f in 0..trial.n_frames() {
        let u = Vector3::from(light.groups[0][f].unwrap());
        let l = Vector3::from(light.groups[1][f].unwrap());
        let whole = Vector3::from(light.com[f].unwrap());
        assert_abs_diff_eq!(
            (u * m_upper + l * m_lower) / (m_upper + m_lower),
            whole,
            epsilon = 1e-12
        );
        assert_abs_diff_eq!(Vector3::from(heavy.com[f].unwrap()), whole, epsilon = 1e-12);
    }
}
