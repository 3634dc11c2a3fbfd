//! The synthetic back squat against coaching practice (`docs/reference/methods.md` 6: the bar path
//! stays over the mid-foot) and its own ground truth (repetitions, bottoms, bar mass).

use approx::assert_abs_diff_eq;
use gravline::synth::{generate, Scenario, SynthOptions, SynthTrial, BAR_COLLAR_SPAN_M};

fn clean() -> SynthTrial {
    let mut o = SynthOptions::for_scenario(Scenario::Squat);
    o.noise_m = 0.0;
    o.gaps = false;
    o.height_m = 1.81;
    generate(Scenario::Squat, &o)
}

fn marker(t: &SynthTrial, label: &str) -> Vec<[f64; 3]> {
    t.positions[t.index_of(label).unwrap()]
        .iter()
        .map(|p| p.unwrap())
        .collect()
}

fn bar_center(t: &SynthTrial) -> Vec<[f64; 3]> {
    marker(t, "bar_left")
        .iter()
        .zip(marker(t, "bar_right"))
        .map(|(l, r)| {
            [
                (l[0] + r[0]) / 2.0,
                (l[1] + r[1]) / 2.0,
                (l[2] + r[2]) / 2.0,
            ]
        })
        .collect()
}

/// The bar stays above the mid-foot (midway between the heel marker and the ball of the foot,
/// the mean of the 1st and 5th metatarsal markers): within 5 mm fore-aft in every frame, while it
/// travels more than 0.4 m vertically.
#[test]
fn bar_stays_above_the_mid_foot() {
    let t = clean();
    let mut midfoot = 0.0;
    for side in ["l_", "r_"] {
        let m = |s: &str| marker(&t, &format!("{side}{s}"))[0];
        midfoot += (m("heel")[0] + (m("mt1")[0] + m("mt5")[0]) / 2.0) / 4.0;
    }
    let bar = bar_center(&t);
    for b in &bar {
        assert!((b[0] - midfoot).abs() < 0.005, "bar at {}", b[0]);
        assert!(b[1].abs() < 1e-9);
    }
    let z: Vec<f64> = bar.iter().map(|b| b[2]).collect();
    let travel = z.iter().cloned().fold(f64::NEG_INFINITY, f64::max)
        - z.iter().cloned().fold(f64::INFINITY, f64::min);
    assert!(travel > 0.4, "bar travel {travel}");
    for (l, r) in marker(&t, "bar_left").iter().zip(marker(&t, "bar_right")) {
        let d = ((l[0] - r[0]).powi(2) + (l[1] - r[1]).powi(2) + (l[2] - r[2]).powi(2)).sqrt();
        assert_abs_diff_eq!(d, BAR_COLLAR_SPAN_M, epsilon = 1e-9);
    }
}

/// Three repetitions of about 2.5 s with standing pauses; each truth bottom is where the bar is
/// lowest in its repetition (within one frame), and the bar is back at its standing height at the
/// start and the end of each repetition.
#[test]
fn repetitions_bottom_where_the_bar_is_lowest() {
    let t = clean();
    assert_eq!(t.truth.reps_s.len(), 3);
    assert_eq!(t.truth.bar_mass_kg, Some(60.0));
    let z: Vec<f64> = bar_center(&t).iter().map(|b| b[2]).collect();
    let dt = t.times_s[1] - t.times_s[0];
    for (k, &(start, bottom, end)) in t.truth.reps_s.iter().enumerate() {
        assert_abs_diff_eq!(end - start, 2.5, epsilon = 0.3);
        assert_eq!(t.truth.rep_bottoms_s[k], bottom);
        let frames: Vec<usize> = (0..z.len())
            .filter(|&i| t.times_s[i] >= start && t.times_s[i] <= end)
            .collect();
        let lowest = frames
            .iter()
            .copied()
            .min_by(|&a, &b| z[a].total_cmp(&z[b]))
            .unwrap();
        assert!((t.times_s[lowest] - bottom).abs() <= dt + 1e-9);
        assert_abs_diff_eq!(z[frames[0]], z[0], epsilon = 1e-9);
        assert_abs_diff_eq!(z[*frames.last().unwrap()], z[0], epsilon = 1e-9);
    }
    for w in t.truth.reps_s.windows(2) {
        assert!(w[1].0 - w[0].2 >= 1.0, "pause between repetitions");
    }
}

/// The feet stay put (1e-12 m in every frame) and the hands hold the bar: the 3rd metacarpal
/// markers lie within 5 cm of the bar axis, inside the collars.
#[test]
fn feet_stay_put_and_hands_hold_the_bar() {
    let t = clean();
    for side in ["l_", "r_"] {
        for stem in ["heel", "toe", "mt1", "mt2", "mt5", "ankle_lat", "ankle_med"] {
            let m = marker(&t, &format!("{side}{stem}"));
            for p in &m {
                for k in 0..3 {
                    assert_abs_diff_eq!(p[k], m[0][k], epsilon = 1e-12);
                }
            }
        }
    }
    let (l, r) = (marker(&t, "bar_left"), marker(&t, "bar_right"));
    for hand in ["l_hand", "r_hand"] {
        let h = marker(&t, hand);
        for i in 0..h.len() {
            let axis: Vec<f64> = (0..3)
                .map(|k| (l[i][k] - r[i][k]) / BAR_COLLAR_SPAN_M)
                .collect();
            let rel: Vec<f64> = (0..3).map(|k| h[i][k] - r[i][k]).collect();
            let along: f64 = (0..3).map(|k| rel[k] * axis[k]).sum();
            let off: f64 = (0..3)
                .map(|k| (rel[k] - along * axis[k]).powi(2))
                .sum::<f64>()
                .sqrt();
            assert!(off < 0.05, "{hand} {off} m from the bar");
            assert!(along > 0.0 && along < BAR_COLLAR_SPAN_M);
        }
    }
}
