//! The model body against its published sources: segment lengths and heights from Drillis &
//! Contini's stature proportions, hip joint centers that the Harrington 2007 regression recovers
//! from the pelvis markers, joint centers midway between their markers, and a standing CoM at the
//! height people have.

use approx::assert_abs_diff_eq;
use gravline::anthropometry::Sex;
use gravline::synth::{
    generate, model_leg_length_m, Scenario, SynthOptions, SynthTrial, MARKER_RADIUS_M,
};

type P = [f64; 3];

fn clean(scenario: Scenario, height_m: f64, sex: Sex) -> SynthTrial {
    let mut o = SynthOptions::for_scenario(scenario);
    o.noise_m = 0.0;
    o.gaps = false;
    o.height_m = height_m;
    o.sex = sex;
    generate(scenario, &o)
}

fn marker(t: &SynthTrial, label: &str) -> Vec<P> {
    let i = t
        .index_of(label)
        .unwrap_or_else(|| panic!("no marker {label}"));
    t.positions[i].iter().map(|p| p.unwrap()).collect()
}

fn point(t: &SynthTrial, name: &str) -> Vec<P> {
    t.truth
        .points_m
        .iter()
        .find(|(n, _)| n == name)
        .unwrap_or_else(|| panic!("no point {name}"))
        .1
        .clone()
}

fn sub(a: P, b: P) -> P {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}
fn dot(a: P, b: P) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}
fn norm(a: P) -> f64 {
    dot(a, a).sqrt()
}
fn dist(a: P, b: P) -> f64 {
    norm(sub(a, b))
}
fn mid(a: P, b: P) -> P {
    [
        (a[0] + b[0]) / 2.0,
        (a[1] + b[1]) / 2.0,
        (a[2] + b[2]) / 2.0,
    ]
}
fn unit(a: P) -> P {
    let n = norm(a);
    [a[0] / n, a[1] / n, a[2] / n]
}
fn cross(a: P, b: P) -> P {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

/// Segment lengths are the Drillis & Contini (1966) proportions as reproduced in Winter,
/// Biomechanics and Motor Control of Human Movement, Fig. 4.1 (from memory): thigh 0.245 H (hip
/// 0.530 - knee 0.285), shank 0.246 H (knee 0.285 - ankle 0.039), upper arm 0.186 H, forearm
/// 0.146 H, shoulder width 0.259 H, in every frame of every scenario (1e-9 m).
#[test]
fn segment_lengths_equal_the_stature_proportions() {
    for scenario in Scenario::ALL {
        let h = 1.63;
        let t = clean(scenario, h, Sex::Female);
        for side in ["l_", "r_"] {
            let p = |n: &str| point(&t, &format!("{side}{n}"));
            for (a, b, fraction) in [
                ("hip_jc", "knee_jc", 0.245),
                ("knee_jc", "ankle_jc", 0.246),
                ("shoulder_jc", "elbow_jc", 0.186),
                ("elbow_jc", "wrist_jc", 0.146),
            ] {
                for (x, y) in p(a).iter().zip(p(b)) {
                    assert_abs_diff_eq!(dist(*x, y), fraction * h, epsilon = 1e-9);
                }
            }
        }
        for (l, r) in marker(&t, "l_acromion")
            .iter()
            .zip(marker(&t, "r_acromion"))
        {
            assert_abs_diff_eq!(dist(*l, r), 0.259 * h, epsilon = 1e-9);
        }
    }
}

/// Standing heights and the foot: vertex H and acromion 0.818 H (within 0.5 mm of sway), hip
/// 0.530 H and knee 0.285 H (within 5 mm: the legs, of fixed length, stand with the knees flexed
/// 5 deg and the hip 6 cm ahead of the ankle), ankle 0.039 H (Drillis & Contini via Winter, from
/// memory); foot length heel to toe marker 0.152 H, and the markers across the metatarsal heads
/// 0.055 H plus two marker radii apart along the foot's transverse axis.
#[test]
fn standing_heights_follow_the_stature_proportions() {
    let h = 1.80;
    let t = clean(Scenario::Stand, h, Sex::Male);
    let z = |p: P| p[2];
    for side in ["l_", "r_"] {
        let m = |n: &str| marker(&t, &format!("{side}{n}"))[0];
        let p = |n: &str| point(&t, &format!("{side}{n}"))[0];
        assert_abs_diff_eq!(z(m("acromion")), 0.818 * h, epsilon = 0.0005);
        assert_abs_diff_eq!(z(p("hip_jc")), 0.530 * h, epsilon = 0.005);
        assert_abs_diff_eq!(z(p("knee_jc")), 0.285 * h, epsilon = 0.005);
        assert_abs_diff_eq!(z(p("ankle_jc")), 0.039 * h, epsilon = 1e-9);
        let (heel, toe) = (m("heel"), m("toe"));
        let along = unit([toe[0] - heel[0], toe[1] - heel[1], 0.0]);
        assert_abs_diff_eq!(dot(sub(toe, heel), along), 0.152 * h, epsilon = 1e-9);
        let across = [-along[1], along[0], 0.0];
        let width = dot(sub(m("mt1"), m("mt5")), across).abs();
        assert_abs_diff_eq!(width, 0.055 * h + 2.0 * MARKER_RADIUS_M, epsilon = 1e-9);
    }
    assert_abs_diff_eq!(point(&t, "head_top")[0][2], h, epsilon = 0.0005);
}

/// Harrington et al. 2007 full regression (`docs/reference/methods.md` 1.2), written here from the
/// published equations: right hip in the pelvis frame (origin mid-ASIS; x anterior, y superior,
/// z lateral), millimetres.
fn harrington_mm(pw: f64, pd: f64, ll: f64) -> P {
    [
        -0.24 * pd - 9.9,
        -0.16 * pw - 0.04 * ll - 7.1,
        0.28 * pd + 0.16 * pw + 7.9,
    ]
}

/// Hip joint centers from pelvis markers by Harrington 2007 in the ISB pelvis frame (Wu 2002:
/// z = unit(RASIS - LASIS), x = anterior in the plane of the ASIS and mid-PSIS, y = z x x).
fn harrington_hips(l_asis: P, r_asis: P, l_psis: P, r_psis: P, ll_m: f64) -> (P, P) {
    let mid_asis = mid(l_asis, r_asis);
    let mid_psis = mid(l_psis, r_psis);
    let z = unit(sub(r_asis, l_asis));
    let d = sub(mid_asis, mid_psis);
    let x = unit(sub(
        d,
        [z[0] * dot(d, z), z[1] * dot(d, z), z[2] * dot(d, z)],
    ));
    let y = cross(z, x);
    let pw = dist(r_asis, l_asis) * 1e3;
    let pd = norm(d) * 1e3;
    let [hx, hy, hz] = harrington_mm(pw, pd, ll_m * 1e3);
    let at = |lateral: f64| {
        let mut p = mid_asis;
        for k in 0..3 {
            p[k] += (hx * x[k] + hy * y[k] + lateral * z[k]) * 1e-3;
        }
        p
    };
    (at(-hz), at(hz))
}

/// The regression applied to the model's pelvis markers, with the model's leg length, returns
/// its hip joint centers (1e-9 m) in every frame of a walk and a squat (pelvis level and tilted
/// forward). The regression itself is first checked against the values derived in
/// `docs/reference/methods.md` 1.2 (PW 250, PD 160, LL 900 mm: -48.3, -83.1, 92.7 mm).
#[test]
fn harrington_recovers_the_hip_joint_centers() {
    let [x, y, z] = harrington_mm(250.0, 160.0, 900.0);
    assert_abs_diff_eq!(x, -48.3, epsilon = 0.05);
    assert_abs_diff_eq!(y, -83.1, epsilon = 0.05);
    assert_abs_diff_eq!(z, 92.7, epsilon = 0.05);
    for scenario in [Scenario::Walk, Scenario::Squat] {
        let h = 1.71;
        let t = clean(scenario, h, Sex::Female);
        let ll = model_leg_length_m(h);
        let (la, ra, lp, rp) = (
            marker(&t, "l_asis"),
            marker(&t, "r_asis"),
            marker(&t, "l_psis"),
            marker(&t, "r_psis"),
        );
        let (lh, rh) = (point(&t, "l_hip_jc"), point(&t, "r_hip_jc"));
        for i in (0..t.times_s.len()).step_by(7) {
            let (l, r) = harrington_hips(la[i], ra[i], lp[i], rp[i], ll);
            assert!(dist(l, lh[i]) < 1e-9 && dist(r, rh[i]) < 1e-9, "frame {i}");
        }
    }
}

/// Knee, ankle, elbow and wrist centers are the midpoints of their two markers, which sit half
/// the joint width plus the marker radius from the center (docs/DESIGN.md 5); knee width 0.057 H,
/// ankle 0.040 H, elbow 0.040 H, wrist 0.033 H are the model's own values.
#[test]
fn joint_centers_are_midway_between_their_markers() {
    let h = 1.75;
    let t = clean(Scenario::Squat, h, Sex::Male);
    for side in ["l_", "r_"] {
        for (jc, lat, med, width) in [
            ("knee_jc", "knee_lat", "knee_med", 0.057),
            ("ankle_jc", "ankle_lat", "ankle_med", 0.040),
            ("elbow_jc", "elbow_lat", "elbow_med", 0.040),
            ("wrist_jc", "wrist_rad", "wrist_uln", 0.033),
        ] {
            let c = point(&t, &format!("{side}{jc}"));
            let a = marker(&t, &format!("{side}{lat}"));
            let b = marker(&t, &format!("{side}{med}"));
            for i in 0..c.len() {
                assert!(dist(mid(a[i], b[i]), c[i]) < 1e-12);
                assert_abs_diff_eq!(
                    dist(a[i], c[i]),
                    width * h / 2.0 + MARKER_RADIUS_M,
                    epsilon = 1e-12
                );
            }
        }
    }
}

/// The shoulder joint center lies 17 % of the inter-acromion distance below the acromion marker
/// (the offset gravline's body model uses; from memory, after Rab et al. 2002), along the trunk
/// axis: vertical when standing upright (within 1 deg of sway), leaning in the squat.
#[test]
fn shoulder_centers_lie_below_the_acromions() {
    for scenario in [Scenario::Stand, Scenario::Squat] {
        let t = clean(scenario, 1.75, Sex::Male);
        let width: Vec<f64> = marker(&t, "l_acromion")
            .iter()
            .zip(marker(&t, "r_acromion"))
            .map(|(l, r)| dist(*l, r))
            .collect();
        for side in ["l_", "r_"] {
            let a = marker(&t, &format!("{side}acromion"));
            let s = point(&t, &format!("{side}shoulder_jc"));
            for i in 0..a.len() {
                let d = sub(a[i], s[i]);
                assert_abs_diff_eq!(norm(d), 0.17 * width[i], epsilon = 1e-12);
                if scenario == Scenario::Stand {
                    assert!(unit(d)[2] > 1f64.to_radians().cos());
                }
            }
        }
    }
}

/// Standing CoM height is 0.5527 of stature (Whiplash Injuries chapter; textbooks 55-57 %,
/// `docs/reference/methods.md` 6): the true CoM lies between 0.53 and 0.59 H for women and men of
/// several statures.
#[test]
fn standing_com_is_at_a_human_height() {
    for (h, sex) in [
        (1.55, Sex::Female),
        (1.68, Sex::Female),
        (1.75, Sex::Male),
        (1.95, Sex::Male),
    ] {
        let t = clean(Scenario::Stand, h, sex);
        for c in &t.truth.com_m {
            let share = c[2] / h;
            assert!((0.53..0.59).contains(&share), "{h} m {sex:?}: {share:.4}");
        }
    }
}

/// The head carries four markers at temple level and no vertex marker; the true vertex (in the
/// truth points) is above them.
#[test]
fn head_has_four_markers_and_no_vertex_marker() {
    let t = clean(Scenario::Walk, 1.75, Sex::Male);
    assert!(t.index_of("head_top").is_none());
    assert_eq!(t.labels.len(), 42);
    let vertex = point(&t, "head_top");
    for label in ["l_head_front", "r_head_front", "l_head_back", "r_head_back"] {
        let m = marker(&t, label);
        assert!(m.iter().zip(&vertex).all(|(m, v)| v[2] - m[2] > 0.08));
    }
}
