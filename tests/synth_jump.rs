//! The synthetic countermovement jump against physics: a body in flight accelerates at -g
//! whatever its limbs do, its CoM moves continuously, and the floor can only push.

use approx::assert_abs_diff_eq;
use gravline::synth::{generate, Scenario, SynthOptions, SynthTrial, G_M_S2};

fn clean() -> SynthTrial {
    let mut o = SynthOptions::for_scenario(Scenario::Jump);
    o.noise_m = 0.0;
    o.gaps = false;
    o.height_m = 1.72;
    generate(Scenario::Jump, &o)
}

fn point(t: &SynthTrial, name: &str) -> Vec<[f64; 3]> {
    t.truth
        .points_m
        .iter()
        .find(|(n, _)| n == name)
        .unwrap()
        .1
        .clone()
}

fn marker(t: &SynthTrial, label: &str) -> Vec<[f64; 3]> {
    t.positions[t.index_of(label).unwrap()]
        .iter()
        .map(|p| p.unwrap())
        .collect()
}

/// Frames from take-off to landing.
fn flight_frames(t: &SynthTrial) -> Vec<usize> {
    let (on, off) = t.truth.flight_s.expect("a jump has a flight");
    (0..t.times_s.len())
        .filter(|&i| t.times_s[i] >= on && t.times_s[i] <= off)
        .collect()
}

fn knee_flexion_deg(t: &SynthTrial, side: &str, i: usize) -> f64 {
    let h = point(t, &format!("{side}hip_jc"))[i];
    let k = point(t, &format!("{side}knee_jc"))[i];
    let a = point(t, &format!("{side}ankle_jc"))[i];
    let u = [h[0] - k[0], h[1] - k[1], h[2] - k[2]];
    let v = [a[0] - k[0], a[1] - k[1], a[2] - k[2]];
    let dot = u[0] * v[0] + u[1] * v[1] + u[2] * v[2];
    let n = (u[0] * u[0] + u[1] * u[1] + u[2] * u[2]).sqrt()
        * (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
    180.0 - (dot / n).acos().to_degrees()
}

/// A body in flight accelerates at -g (g = 9.81 m/s^2, `docs/reference/methods.md`): the second
/// differences of the true CoM from take-off to landing are -9.81 m/s^2 vertically and 0
/// horizontally (1e-6), while the knees flex and extend by more than 20 deg.
#[test]
fn flight_com_falls_at_g_while_the_limbs_move() {
    let t = clean();
    let dt = t.times_s[1] - t.times_s[0];
    let frames = flight_frames(&t);
    assert!(frames.len() > 80, "{} flight frames", frames.len());
    for w in frames.windows(3) {
        let (a, b, c) = (
            t.truth.com_m[w[0]],
            t.truth.com_m[w[1]],
            t.truth.com_m[w[2]],
        );
        let second = |k: usize| (c[k] - 2.0 * b[k] + a[k]) / (dt * dt);
        assert_abs_diff_eq!(second(2), -G_M_S2, epsilon = 1e-6);
        assert_abs_diff_eq!(second(0), 0.0, epsilon = 1e-6);
        assert_abs_diff_eq!(second(1), 0.0, epsilon = 1e-6);
    }
    assert_abs_diff_eq!(G_M_S2, 9.81, epsilon = 0.0);
    for side in ["l_", "r_"] {
        let knee: Vec<f64> = frames
            .iter()
            .map(|&i| knee_flexion_deg(&t, side, i))
            .collect();
        let range = knee.iter().cloned().fold(f64::NEG_INFINITY, f64::max)
            - knee.iter().cloned().fold(f64::INFINITY, f64::min);
        assert!(
            range > 20.0,
            "{side} knee changes by {range:.1} deg in flight"
        );
    }
}

/// The flight lasts about 0.45 s, and its duration matches the take-off velocity: T = 2 v0 / g
/// (ballistics), with v0 from the CoM itself.
#[test]
fn flight_time_matches_take_off_velocity() {
    let t = clean();
    let (on, off) = t.truth.flight_s.unwrap();
    assert_abs_diff_eq!(off - on, 0.45, epsilon = 0.005);
    let frames = flight_frames(&t);
    let dt = t.times_s[1] - t.times_s[0];
    let (i, j) = (frames[0], frames[1]);
    // Velocity at the first flight frame from its forward difference, corrected for gravity.
    let v = (t.truth.com_m[j][2] - t.truth.com_m[i][2]) / dt + 0.5 * G_M_S2 * dt;
    let v0 = v + G_M_S2 * (t.times_s[i] - on);
    assert_abs_diff_eq!(2.0 * v0 / G_M_S2, off - on, epsilon = 1e-6);
    // The apex rises v0^2 / 2g above take-off height.
    let apex = t
        .truth
        .com_m
        .iter()
        .map(|c| c[2])
        .fold(f64::NEG_INFINITY, f64::max);
    let start = t.truth.com_m[i][2]
        - (v0 * (t.times_s[i] - on) - 0.5 * G_M_S2 * (t.times_s[i] - on).powi(2));
    assert_abs_diff_eq!(apex - start, v0 * v0 / (2.0 * G_M_S2), epsilon = 0.002);
}

/// The feet leave the floor: every foot marker is above its standing height throughout the
/// flight (strictly inside it) and the toes clear the floor by more than 0.1 m at mid-flight.
#[test]
fn feet_leave_the_floor_in_flight() {
    let t = clean();
    let frames = flight_frames(&t);
    let inner = &frames[1..frames.len() - 1];
    for side in ["l_", "r_"] {
        for stem in ["heel", "toe", "mt1", "mt2", "mt5", "ankle_lat", "ankle_med"] {
            let m = marker(&t, &format!("{side}{stem}"));
            let standing = m[0][2];
            for &i in inner {
                assert!(m[i][2] > standing, "{side}{stem} at {}", t.times_s[i]);
            }
        }
        let toe = marker(&t, &format!("{side}toe"));
        let mid = frames[frames.len() / 2];
        assert!(toe[mid][2] - toe[0][2] > 0.1);
    }
}

/// The floor can only push (the ground reaction force m (a_z + g) is never negative): in every
/// contact frame the CoM's vertical acceleration is at least -g; and the CoM moves smoothly
/// across take-off and landing: no second difference anywhere exceeds 40 m/s^2 (a velocity step
/// of 0.2 m/s would show as 40 m/s^2 at 200 Hz).
#[test]
fn com_is_smooth_and_the_floor_only_pushes() {
    let t = clean();
    let dt = t.times_s[1] - t.times_s[0];
    let (on, off) = t.truth.flight_s.unwrap();
    for i in 1..t.times_s.len() - 1 {
        let c = |k: usize| t.truth.com_m[k][2];
        let a = (c(i + 1) - 2.0 * c(i) + c(i - 1)) / (dt * dt);
        let time = t.times_s[i];
        assert!(a.abs() < 40.0, "{a} m/s^2 at {time}");
        if time < on - dt || time > off + dt {
            assert!(a > -G_M_S2 - 1e-3, "pulling floor: {a} m/s^2 at {time}");
        }
    }
}

/// Quiet stance before and after: the CoM is still at the start and at the end, at the same
/// point, and the feet land where they took off.
#[test]
fn jump_starts_and_ends_in_quiet_stance() {
    let t = clean();
    let n = t.times_s.len();
    let (first, last) = (t.truth.com_m[0], t.truth.com_m[n - 1]);
    for k in 0..3 {
        assert_abs_diff_eq!(first[k], last[k], epsilon = 1e-9);
        assert_abs_diff_eq!(t.truth.com_m[1][k], first[k], epsilon = 1e-12);
    }
    for label in ["l_toe", "r_toe", "l_heel", "r_heel"] {
        let m = marker(&t, label);
        for (a, b) in m[0].iter().zip(&m[n - 1]) {
            assert_abs_diff_eq!(a, b, epsilon = 1e-9);
        }
    }
}
