//! The benchmark trial: the full model walking for as many frames and markers as asked.

use gravline::synth::{long_trial, LONG_TRIAL_MAX_MARKERS};
use std::collections::HashSet;

/// 45 distinct markers (the 42 body markers and three cluster markers), the frames asked at
/// 100 Hz, gaps inside, contacts of both feet and a CoM per frame.
#[test]
fn long_trial_has_the_markers_and_frames_asked() {
    let t = long_trial(6000, 45, 9);
    assert_eq!(t.labels.len(), 45);
    assert_eq!(t.labels.iter().collect::<HashSet<_>>().len(), 45);
    assert_eq!(
        &t.labels[42..],
        ["l_thigh_front", "r_thigh_front", "l_shank_front"]
    );
    assert_eq!(t.times_s.len(), 6000);
    assert!((t.times_s[1] - 0.01).abs() < 1e-12);
    assert!(t.positions.iter().all(|p| p.len() == 6000));
    let gaps = t.positions.iter().flatten().filter(|p| p.is_none()).count();
    assert!(gaps >= 4 * 3);
    assert!(t.truth.contacts.iter().all(|c| c.len() >= 50));
    assert_eq!(t.truth.com_m.len(), 6000);
    assert!(t.truth.points_m.is_empty());
    // Centered walk: the pelvis passes x = 0 mid-trial.
    let asis = &t.positions[t.labels.iter().position(|l| l == "l_asis").unwrap()];
    let first = asis.iter().flatten().next().unwrap()[0];
    let last = asis.iter().flatten().last().unwrap()[0];
    assert!((first + last).abs() < 0.2);
}

/// Marker counts beyond the model's are capped; zero frames give an empty trial, not a panic.
#[test]
fn long_trial_caps_and_empty_requests() {
    assert_eq!(long_trial(50, 100, 1).labels.len(), LONG_TRIAL_MAX_MARKERS);
    let empty = long_trial(0, 45, 1);
    assert!(empty.times_s.is_empty() && empty.positions.iter().all(|p| p.is_empty()));
    assert_eq!(
        long_trial(10, 3, 1).labels,
        ["l_head_front", "r_head_front", "l_head_back"]
    );
}
