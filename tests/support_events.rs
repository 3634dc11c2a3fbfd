//! Gait events of the `support` stage (Zeni, Richards & Higginson 2008, Gait Posture 27:710-714)
//! on synthetic heel/toe-minus-sacrum signals whose extrema are known in closed form.

use gravline::support::{zeni_events, zeni_events_with, ZeniOptions};
use std::f64::consts::TAU;

const RATE_HZ: f64 = 100.0;
/// Stride time of the synthetic walk, s (about 1.1 s at a comfortable speed, common practice,
/// no source; any value gives known extrema).
const STRIDE_S: f64 = 1.1;
const N: usize = 500;

/// Heel − sacrum along progression, m: a cosine of the stride with its maxima (heel strikes) at
/// t = hs_s + k·STRIDE_S, plus a small 7 Hz ripple and a bump in swing that is a local maximum
/// below the mean (a decoy the height condition must reject).
fn heel_signal(hs_s: f64) -> Vec<Option<f64>> {
    (0..N)
        .map(|i| {
            let t = i as f64 / RATE_HZ;
            let phase = TAU * (t - hs_s) / STRIDE_S;
            let decoy =
                0.03 * (-((phase.rem_euclid(TAU) - std::f64::consts::PI) / 0.25).powi(2)).exp();
            Some(0.05 + 0.30 * phase.cos() + 0.001 * (TAU * 7.0 * t).sin() + decoy)
        })
        .collect()
}

/// Toe − sacrum along progression, m: minima (toe-offs) at t = to_s + k·STRIDE_S.
fn toe_signal(to_s: f64) -> Vec<Option<f64>> {
    (0..N)
        .map(|i| {
            let t = i as f64 / RATE_HZ;
            Some(0.10 - 0.35 * (TAU * (t - to_s) / STRIDE_S).cos())
        })
        .collect()
}

/// Frames of t0 + k·STRIDE_S inside the series, leaving out extrema within 2 frames of its ends
/// (a peak needs a lower sample on both sides).
fn known_frames(t0_s: f64) -> Vec<f64> {
    (0..10)
        .map(|k| (t0_s + k as f64 * STRIDE_S) * RATE_HZ)
        .filter(|f| *f >= 2.0 && *f <= (N - 3) as f64)
        .collect()
}

fn assert_within_one_frame(found: &[usize], expected: &[f64]) {
    assert_eq!(
        found.len(),
        expected.len(),
        "found {found:?}, expected {expected:?}"
    );
    for (f, e) in found.iter().zip(expected) {
        assert!(
            (*f as f64 - e).abs() <= 1.0,
            "event at frame {f}, expected {e:.2} (+-1)"
        );
    }
}

#[test]
fn events_land_on_the_known_extrema_of_sinusoids() {
    // extrema between frames on purpose: 0.153 s + k 1.1 s and 0.817 s + k 1.1 s
    let (hs_s, to_s) = (0.153, 0.817);
    let events = zeni_events(&heel_signal(hs_s), &toe_signal(to_s), RATE_HZ);
    assert_within_one_frame(&events.heel_strikes, &known_frames(hs_s));
    assert_within_one_frame(&events.toe_offs, &known_frames(to_s));
    assert_eq!(events.heel_strikes.len(), 5);
    assert_eq!(events.toe_offs.len(), 4);
}

#[test]
fn missing_frames_at_an_extremum_drop_that_event_only() {
    let hs_s = 0.153;
    let mut heel = heel_signal(hs_s);
    // frames around the second heel strike (1.253 s -> frame 125.3) not seen
    for x in heel.iter_mut().take(128).skip(123) {
        *x = None;
    }
    // and a gap elsewhere, in mid-range, that must not disturb the others
    for x in heel.iter_mut().take(300).skip(290) {
        *x = None;
    }
    let events = zeni_events(&heel, &toe_signal(0.817), RATE_HZ);
    let mut expected = known_frames(hs_s);
    expected.remove(1);
    assert_within_one_frame(&events.heel_strikes, &expected);
}

#[test]
fn a_plateau_counts_once_at_its_middle() {
    // a clipped cosine: flat tops of equal samples around each maximum
    let heel: Vec<Option<f64>> = heel_signal(0.153)
        .into_iter()
        .map(|x| x.map(|v| v.min(0.30)))
        .collect();
    let events = zeni_events(&heel, &toe_signal(0.817), RATE_HZ);
    // the clipped tops are symmetric around the maxima up to the ripple: middle within +-1
    assert_within_one_frame(&events.heel_strikes, &known_frames(0.153));
}

#[test]
fn peaks_closer_than_the_minimum_distance_keep_the_higher() {
    // two bumps 0.1 s apart (frames 100 and 110), the second higher, then one at frame 300
    let bump = |i: usize, c: f64, a: f64| a * (-((i as f64 - c) / 3.0).powi(2)).exp();
    let y: Vec<Option<f64>> = (0..400)
        .map(|i| Some(bump(i, 100.0, 1.0) + bump(i, 110.0, 1.2) + bump(i, 300.0, 1.0)))
        .collect();
    let flat = vec![Some(0.0); 400];
    let events = zeni_events(&y, &flat, RATE_HZ);
    assert_eq!(events.heel_strikes, [110, 300]);
    assert!(
        events.toe_offs.is_empty(),
        "a constant toe signal has no extrema"
    );
    // with no distance condition both bumps count
    let loose = ZeniOptions {
        min_peak_distance_s: 0.0,
        ..ZeniOptions::default()
    };
    let events = zeni_events_with(&y, &flat, RATE_HZ, &loose);
    assert_eq!(events.heel_strikes, [100, 110, 300]);
}

#[test]
fn defaults_are_the_public_code_knobs_of_methods_md_3() {
    // docs/reference/methods.md 3 (S): minimum peak distance fs/4 samples (0.25 s), minimum height 10 % of range
    let o = ZeniOptions::default();
    assert_eq!((o.min_peak_distance_s, o.min_relative_height), (0.25, 0.10));
}
