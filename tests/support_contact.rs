//! Foot contact of the `support` stage on synthetic height and speed series whose true contact
//! frames are known by construction, the floor level against numpy's percentile, and contact runs.

use approx::assert_relative_eq;
use gravline::support::{detect_contact, floor_level, transitions, ContactThresholds};

const RATE_HZ: f64 = 100.0;

/// A foot on the floor (5 mm, 0.05 m/s) over `contact` frame ranges, in swing (80 mm, 2 m/s)
/// elsewhere: the ground truth of the synthetic tests.
fn gait(n: usize, contact: &[(usize, usize)]) -> (Vec<Option<f64>>, Vec<Option<f64>>) {
    let on = |i: usize| contact.iter().any(|&(a, b)| (a..b).contains(&i));
    let height = (0..n)
        .map(|i| Some(if on(i) { 0.005 } else { 0.08 }))
        .collect();
    let speed = (0..n)
        .map(|i| Some(if on(i) { 0.05 } else { 2.0 }))
        .collect();
    (height, speed)
}

#[test]
fn flickers_are_removed_and_true_transitions_kept_to_the_frame() {
    let truth = [(20, 80), (150, 200)];
    let (mut h, mut v) = gait(200, &truth);
    // impact transient after heel strike: speed above threshold for 2 frames (20 ms)
    v[24] = Some(0.8);
    v[25] = Some(0.7);
    // toe-off flicker: one fast frame 4 frames before the true off
    v[76] = Some(0.9);
    // swing flickers: one slow low frame, and a 4-frame (40 ms) slow low run
    h[110] = Some(0.01);
    v[110] = Some(0.3);
    for i in 120..124 {
        h[i] = Some(0.01);
        v[i] = Some(0.2);
    }
    let c = detect_contact(&h, &v, RATE_HZ, &ContactThresholds::default());
    assert_eq!(c.len(), 200);
    assert_eq!(transitions(&c), truth);
}

#[test]
fn both_criteria_are_needed_near_floor_and_slow() {
    let (mut h, mut v) = gait(100, &[(10, 90)]);
    // low but fast (a foot skimming the floor) and slow but high (a foot held up), 20 frames each
    v[20..40].fill(Some(1.5));
    h[50..70].fill(Some(0.2));
    let c = detect_contact(&h, &v, RATE_HZ, &ContactThresholds::default());
    assert_eq!(transitions(&c), [(10, 20), (40, 50), (70, 90)]);
}

#[test]
fn gaps_are_filled_before_short_runs_are_removed() {
    // 3 contact frames, a 2-frame gap, then a long contact: filling first keeps the start at 30.
    let (h, mut v) = gait(120, &[(30, 100)]);
    v[33] = Some(0.9);
    v[34] = Some(0.9);
    let c = detect_contact(&h, &v, RATE_HZ, &ContactThresholds::default());
    assert_eq!(transitions(&c), [(30, 100)]);
}

#[test]
fn minimum_durations_hold_at_their_bounds() {
    // at 100 Hz, 50 ms = 5 frames: a 5-frame contact stays, a 4-frame one goes;
    // a 4-frame flight is filled, a 5-frame flight stays
    let (h, v) = gait(
        100,
        &[(10, 15), (30, 34), (50, 60), (64, 70), (80, 85), (90, 95)],
    );
    let c = detect_contact(&h, &v, RATE_HZ, &ContactThresholds::default());
    assert_eq!(transitions(&c), [(10, 15), (50, 70), (80, 85), (90, 95)]);
}

#[test]
fn missing_frames_are_not_in_contact_and_runs_at_the_ends_are_kept() {
    let (mut h, mut v) = gait(60, &[(0, 3), (10, 50), (57, 60)]);
    h[30] = None; // marker not seen: not in contact, and the 1-frame gap is not filled
    v[31] = Some(f64::NAN); // non-finite counts as missing too
    let c = detect_contact(&h, &v, RATE_HZ, &ContactThresholds::default());
    // (0, 3) and (57, 60) are short but cut by the recording: kept
    assert_eq!(transitions(&c), [(0, 3), (10, 30), (32, 50), (57, 60)]);
    // a speed series shorter than the heights: the missing tail is not in contact
    let c = detect_contact(&h, &v[..40], RATE_HZ, &ContactThresholds::default());
    assert_eq!(c.len(), 60);
    assert_eq!(transitions(&c), [(0, 3), (10, 30), (32, 40)]);
}

#[test]
fn default_thresholds_are_the_documented_ones() {
    // Ghoussayni et al. 2004 via Bonci et al. 2022 (docs/reference/methods.md 3): 0.5 m/s; the others are
    // gravline's documented common-practice values.
    let t = ContactThresholds::default();
    assert_eq!(
        (t.height_m, t.speed_m_s, t.min_contact_s, t.min_flight_s),
        (0.03, 0.5, 0.05, 0.05)
    );
}

#[test]
fn floor_level_matches_numpy_percentile() {
    // numpy.percentile(..., method="linear") (numpy 2.4): [0.1, 0.4, 0.2, 0.3, 0.5] at 2 -> 0.108,
    // [3, -1, 2] at 37.5 -> 1.25, [5] at 2 -> 5; 0 and 100 are the extremes.
    let heights = [0.1, 0.4, 0.2, 0.3, 0.5];
    assert_relative_eq!(
        floor_level(heights.into_iter(), 2.0).unwrap(),
        0.108,
        max_relative = 1e-15
    );
    assert_relative_eq!(
        floor_level([3.0, -1.0, 2.0].into_iter(), 37.5).unwrap(),
        1.25,
        max_relative = 1e-15
    );
    assert_eq!(floor_level([5.0].into_iter(), 2.0), Some(5.0));
    assert_eq!(floor_level(heights.into_iter(), 0.0), Some(0.1));
    assert_eq!(floor_level(heights.into_iter(), 100.0), Some(0.5));
    // non-finite heights are skipped
    assert_eq!(
        floor_level([f64::NAN, 0.2, f64::INFINITY, 0.4].into_iter(), 50.0),
        Some(0.30000000000000004)
    );
    assert_eq!(floor_level(std::iter::empty(), 2.0), None);
}

#[test]
fn transitions_lists_runs_with_exclusive_ends() {
    assert_eq!(transitions(&[]), Vec::<(usize, usize)>::new());
    assert_eq!(transitions(&[false, false]), Vec::<(usize, usize)>::new());
    assert_eq!(transitions(&[true, true]), [(0, 2)]);
    assert_eq!(
        transitions(&[false, true, true, false, true]),
        [(1, 3), (4, 5)]
    );
}
