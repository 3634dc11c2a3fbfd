//! Any options give a trial: out-of-range values are clamped, non-finite ones replaced by the
//! defaults, and extreme people and speeds still give a body whose segments keep their lengths.

use approx::assert_abs_diff_eq;
use gravline::anthropometry::Sex;
use gravline::synth::{generate, Scenario, SynthOptions, SynthTrial};

fn point(t: &SynthTrial, name: &str) -> Vec<[f64; 3]> {
    t.truth
        .points_m
        .iter()
        .find(|(n, _)| n == name)
        .unwrap()
        .1
        .clone()
}

fn dist(a: [f64; 3], b: [f64; 3]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

/// Thigh and shank keep 0.245 H and 0.246 H (Drillis & Contini via Winter, from memory) and
/// every coordinate is finite.
fn assert_sound(t: &SynthTrial, h: f64) {
    for side in ["l_", "r_"] {
        let hip = point(t, &format!("{side}hip_jc"));
        let knee = point(t, &format!("{side}knee_jc"));
        let ankle = point(t, &format!("{side}ankle_jc"));
        for i in 0..hip.len() {
            assert_abs_diff_eq!(dist(hip[i], knee[i]), 0.245 * h, epsilon = 1e-9);
            assert_abs_diff_eq!(dist(knee[i], ankle[i]), 0.246 * h, epsilon = 1e-9);
        }
    }
    assert!(t
        .positions
        .iter()
        .flatten()
        .flatten()
        .all(|p| p.iter().all(|c| c.is_finite())));
    assert!(t
        .truth
        .com_m
        .iter()
        .all(|c| c.iter().all(|v| v.is_finite())));
}

#[test]
fn extreme_people_and_speeds_keep_segment_lengths() {
    for (h, speed, cadence) in [(1.2, 2.2, 60.0), (2.3, 0.4, 150.0), (1.5, 1.8, 90.0)] {
        let mut o = SynthOptions::for_scenario(Scenario::Walk);
        o.height_m = h;
        o.walk_speed_m_s = speed;
        o.cadence_steps_per_min = cadence;
        o.duration_s = 3.0;
        let t = generate(Scenario::Walk, &o);
        assert_sound(&t, h);
        // The walk still progresses at the set speed (the cadence gives way instead).
        let x = point(&t, "mid_hip");
        let mean = (x[x.len() - 1][0] - x[0][0]) / (t.times_s[t.times_s.len() - 1]);
        assert_abs_diff_eq!(mean, speed, epsilon = 1e-9);
    }
    for scenario in [Scenario::Stand, Scenario::Squat, Scenario::Jump] {
        for h in [1.2, 2.3] {
            let mut o = SynthOptions::for_scenario(scenario);
            o.height_m = h;
            o.sex = Sex::Female;
            assert_sound(&generate(scenario, &o), h);
        }
    }
}

#[test]
fn out_of_range_options_are_clamped() {
    let mut o = SynthOptions::for_scenario(Scenario::Stand);
    o.rate_hz = f64::NAN;
    o.duration_s = -4.0;
    o.height_m = 9.0;
    o.noise_m = f64::INFINITY;
    let t = generate(Scenario::Stand, &o);
    assert!(t.times_s.is_empty(), "negative duration gives no frames");
    o.duration_s = 1.0;
    let t = generate(Scenario::Stand, &o);
    assert_eq!(t.times_s.len(), 100, "NaN rate falls back to 100 Hz");
    assert_sound(&t, 2.3);
    let mut short = SynthOptions::for_scenario(Scenario::Squat);
    short.duration_s = 2.0;
    let t = generate(Scenario::Squat, &short);
    assert!(t.truth.reps_s.is_empty(), "no repetition fits in 2 s");
}
