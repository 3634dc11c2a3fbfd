//! Repetitions of squats and sit-to-stand, with or without a load: of the bar (the first load)
//! when the trial has one, else of the whole-body CoM.
//!
//! The height's vertical velocity (central differences of the filtered series) splits the trial
//! into descent and ascent phases: maximal runs faster than [`PHASE_SPEED_M_S`] down or up,
//! lasting at least [`MIN_PHASE_S`]. A repetition is a descent followed by an ascent (squat) or,
//! when the trial starts low, an ascent followed by a descent (sit-to-stand, then sitting back),
//! covering at least [`MIN_DEPTH_M`] of height. It starts where the height last moved slower than
//! [`STILL_SPEED_M_S`] before its first phase and ends where it first does after its second.
//! Thresholds: common practice, no source.
//!
//! Per repetition: `depth_m` (range of the height), `duration_s` (end − start),
//! `peak_ascent_speed_m_s` (highest upward velocity in the ascent) and the times.
//!
//! Units: metres, seconds, m/s.

use super::time_s;
use crate::pipeline::TrialResult;
use crate::signal::derivative;
use serde::Serialize;

/// Vertical speed above which the height is descending or ascending, m/s.
pub const PHASE_SPEED_M_S: f64 = 0.05;
/// Vertical speed below which the height is still (start and end of a repetition), m/s.
pub const STILL_SPEED_M_S: f64 = 0.02;
/// Shortest descent or ascent, s.
pub const MIN_PHASE_S: f64 = 0.2;
/// Smallest height range of a repetition, m.
pub const MIN_DEPTH_M: f64 = 0.10;

/// One repetition.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct RepFigures {
    pub rep: usize,
    /// `bar` or `com`: whose height the repetition was found in.
    pub source: &'static str,
    pub start_s: f64,
    pub bottom_s: f64,
    pub end_s: f64,
    pub depth_m: f64,
    pub duration_s: f64,
    pub peak_ascent_speed_m_s: f64,
}

/// The repetitions of the trial and whose height they were found in (`bar` or `com`).
pub fn repetitions_of(r: &TrialResult) -> (Vec<RepFigures>, &'static str) {
    match r.loads.first() {
        Some(bar) => (repetitions(r, bar, "bar"), "bar"),
        None => (repetitions(r, &r.com, "com"), "com"),
    }
}

/// The repetition figures (module doc).
pub fn figures(r: &TrialResult) -> Vec<RepFigures> {
    repetitions_of(r).0
}

/// Repetitions of the height of `points` (module doc).
pub fn repetitions(
    r: &TrialResult,
    points: &[Option<[f64; 3]>],
    source: &'static str,
) -> Vec<RepFigures> {
    let n = points.len();
    let up = r.up_axis;
    let (velocity, _) = derivative::of_series(points, 1.0 / r.rate_hz);
    let vz: Vec<Option<f64>> = velocity.iter().map(|v| v.map(|v| up.height(&v))).collect();
    let height: Vec<Option<f64>> = points.iter().map(|p| p.map(|p| up.height(&p))).collect();
    let min_frames = (MIN_PHASE_S * r.rate_hz).ceil() as usize;
    let phases = crate::support::lift::vertical_phases(&vz, PHASE_SPEED_M_S, min_frames);
    // Squat (down, up) unless the trial starts with an ascent (sit-to-stand: up, down).
    let pattern = match phases.first() {
        Some((1, _, _)) => (1, -1),
        _ => (-1, 1),
    };
    let still = |f: usize| vz[f].is_some_and(|v| v.abs() < STILL_SPEED_M_S);
    let mut out = Vec::new();
    let mut i = 0;
    while i + 1 < phases.len() {
        let ((s0, p0, _), (s1, q0, q1)) = (phases[i], phases[i + 1]);
        if (s0, s1) != pattern {
            i += 1;
            continue;
        }
        let mut start = p0;
        while start > 0 && !still(start) && vz[start - 1].is_some() {
            start -= 1;
        }
        let mut end = q1.min(n - 1);
        while end + 1 < n && !still(end) && vz[end + 1].is_some() {
            end += 1;
        }
        let hs: Vec<(usize, f64)> = (start..=end)
            .filter_map(|f| Some((f, height[f]?)))
            .collect();
        let (Some(&(bottom, low)), Some(high)) = (
            hs.iter().min_by(|a, b| a.1.total_cmp(&b.1)),
            hs.iter().map(|h| h.1).reduce(f64::max),
        ) else {
            i += 2;
            continue;
        };
        if high - low < MIN_DEPTH_M {
            i += 2;
            continue;
        }
        let ascent = if s1 == 1 { q0..q1 } else { p0..phases[i].2 };
        out.push(RepFigures {
            rep: out.len() + 1,
            source,
            start_s: time_s(r, start),
            bottom_s: time_s(r, bottom),
            end_s: time_s(r, end),
            depth_m: high - low,
            duration_s: time_s(r, end) - time_s(r, start),
            peak_ascent_speed_m_s: ascent.filter_map(|f| vz[f]).fold(0.0, f64::max),
        });
        i += 2;
    }
    out
}
