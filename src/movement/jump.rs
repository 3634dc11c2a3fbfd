//! Jump figures from the markers: take-off and landing from foot contact, flight time, take-off
//! velocity, the two usual estimates of jump height and the countermovement depth.
//!
//! - Flight: the longest run of frames in which neither foot is in contact, by the support
//!   stage's contact rule (a foot is in contact while its lowest point is within
//!   `[support] contact_height_m` of the floor, default 0.03 m, and its slowest contact marker
//!   moves slower than `contact_speed_m_s`, default 0.5 m/s). Take-off lies half a frame before
//!   the first frame of that run, landing half a frame before the first contact frame after it.
//! - `takeoff_velocity_m_s`: the vertical CoM velocity (from the filtered markers) at take-off,
//!   interpolated between frames.
//! - `height_from_takeoff_velocity_m` = v² / (2 g) and `height_from_flight_time_m` = g T² / 8:
//!   the rise of the CoM of a ballistic body (Bosco, Luhtanen & Komi 1983, Eur J Appl Physiol
//!   50:273-282, flight-time method; Linthorne 2001, Am J Phys 69:1198-1204, both methods and
//!   their biases: the flight-time estimate is too high when the body lands lower than it took
//!   off, e.g. with flexed knees or heels down sooner).
//! - `countermovement_depth_m`: the mean CoM height over the first [`QUIET_S`] of the trial
//!   (quiet stance before the countermovement) minus the lowest CoM height before take-off.
//!
//! g = 9.81 m/s². Units: metres, seconds, m/s.

use super::time_s;
use crate::pipeline::TrialResult;
use crate::support::FootFrames;
use serde::Serialize;

/// Acceleration of free fall, m/s².
pub const G_M_S2: f64 = 9.81;
/// A foot is airborne while all its points are higher than this above their resting heights, m.
pub const AIRBORNE_CLEARANCE_M: f64 = 0.01;
/// Percentile of a foot point's heights taken as its resting height.
pub const REST_PERCENTILE: f64 = 5.0;
/// Quiet stance at the start of a jump trial over which the standing CoM height is taken, s.
pub const QUIET_S: f64 = 0.25;

/// Jump figures of a trial.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct JumpFigures {
    /// How take-off and landing were found (the contact thresholds).
    pub contact_rule: String,
    pub takeoff_s: f64,
    pub landing_s: f64,
    pub flight_time_s: f64,
    pub takeoff_velocity_m_s: Option<f64>,
    pub height_from_takeoff_velocity_m: Option<f64>,
    pub height_from_flight_time_m: f64,
    pub countermovement_depth_m: Option<f64>,
}

/// A flight: frames `first..end` without contact.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Flight {
    pub first: usize,
    pub end: usize,
}

impl Flight {
    pub fn duration_s(&self, r: &TrialResult) -> f64 {
        (self.end - self.first) as f64 / r.rate_hz
    }
}

/// The longest run of frames with neither foot in contact that starts and ends in contact.
pub fn flight(r: &TrialResult) -> Option<Flight> {
    let [left, right] = &r.support.contact;
    let n = left.len().min(right.len());
    let on = |f: usize| left[f] || right[f];
    let mut best: Option<Flight> = None;
    let mut f = 0;
    while f < n {
        if on(f) {
            f += 1;
            continue;
        }
        let first = f;
        while f < n && !on(f) {
            f += 1;
        }
        // A run cut by either end of the recording is no flight (or its length is unknown).
        if first > 0 && f < n && best.is_none_or(|b| f - first > b.end - b.first) {
            best = Some(Flight { first, end: f });
        }
    }
    best
}

/// Highest CoM in the flight above the median CoM height of the trial.
pub fn rise_above_median_m(r: &TrialResult, flight: &Flight) -> Option<f64> {
    let up = r.up_axis;
    let mut heights: Vec<f64> = r.com.iter().flatten().map(|c| up.height(c)).collect();
    if heights.is_empty() {
        return None;
    }
    heights.sort_by(f64::total_cmp);
    let median = heights[heights.len() / 2];
    let top = r.com[flight.first..flight.end]
        .iter()
        .flatten()
        .map(|c| up.height(c))
        .reduce(f64::max)?;
    Some(top - median)
}

/// Per frame, the lowest clearance of the two feet: for each foot the smallest height of its
/// points above their own resting heights (each point's [`REST_PERCENTILE`]th percentile of
/// height over the trial); `None` where a foot has no point.
pub fn clearance_m(r: &TrialResult, foot: &FootFrames) -> Vec<Option<f64>> {
    let n = r.com.len();
    let up = r.up_axis;
    let mut out: Vec<Option<f64>> = vec![None; n];
    let mut per_foot = [vec![None::<f64>; n], vec![None::<f64>; n]];
    for (side, clear) in per_foot.iter_mut().enumerate() {
        for series in &foot.points[side] {
            let heights: Vec<f64> = series.iter().flatten().map(|p| up.height(p)).collect();
            let Some(rest) = crate::support::percentile(heights.iter().copied(), REST_PERCENTILE)
            else {
                continue;
            };
            for (f, p) in series.iter().enumerate().take(n) {
                if let Some(p) = p {
                    let c = up.height(p) - rest;
                    clear[f] = Some(clear[f].map_or(c, |m: f64| m.min(c)));
                }
            }
        }
    }
    for (f, slot) in out.iter_mut().enumerate() {
        *slot = match (per_foot[0][f], per_foot[1][f]) {
            (Some(a), Some(b)) => Some(a.min(b)),
            _ => None,
        };
    }
    out
}

/// The jump figures (module doc) with airborne clearance `clearance_m`; `None` without a
/// flight.
pub fn figures_with(r: &TrialResult, foot: &FootFrames, threshold_m: f64) -> Option<JumpFigures> {
    let clear = clearance_m(r, foot);
    let n = clear.len();
    let airborne = |f: usize| clear[f].is_some_and(|c| c > threshold_m);
    // The longest airborne run that starts and ends with a known clearance at or below the
    // threshold.
    let mut best: Option<(usize, usize)> = None;
    let mut f = 0;
    while f < n {
        if !airborne(f) {
            f += 1;
            continue;
        }
        let first = f;
        while f < n && airborne(f) {
            f += 1;
        }
        let bounded = first > 0 && f < n && clear[first - 1].is_some() && clear[f].is_some();
        if bounded && best.is_none_or(|(a, b)| f - first > b - a) {
            best = Some((first, f));
        }
    }
    let (first, end) = best?;
    // Sub-frame crossing of the threshold between frames `a` and `a + 1`.
    let crossing = |a: usize| {
        let (ca, cb) = (clear[a].unwrap_or(0.0), clear[a + 1].unwrap_or(0.0));
        let u = if cb != ca {
            ((threshold_m - ca) / (cb - ca)).clamp(0.0, 1.0)
        } else {
            0.5
        };
        time_s(r, a) + u * (time_s(r, a + 1) - time_s(r, a))
    };
    let takeoff_s = crossing(first - 1);
    let landing_s = crossing(end - 1);
    let flight_time_s = landing_s - takeoff_s;
    let up = r.up_axis;
    let vz = |f: usize| r.velocity.get(f).copied().flatten().map(|v| up.height(&v));
    let takeoff_velocity_m_s = {
        let (a, b) = (first - 1, first);
        let u = (takeoff_s - time_s(r, a)) * r.rate_hz;
        match (vz(a), vz(b)) {
            (Some(va), Some(vb)) => Some(va + u * (vb - va)),
            (x, y) => x.or(y),
        }
    };
    let h = |f: usize| r.com.get(f).copied().flatten().map(|c| up.height(&c));
    let t0 = r.times_s.first().copied().unwrap_or(0.0);
    let quiet: Vec<f64> = (0..first)
        .take_while(|&f| time_s(r, f) - t0 < QUIET_S)
        .filter_map(h)
        .collect();
    let standing = (!quiet.is_empty()).then(|| quiet.iter().sum::<f64>() / quiet.len() as f64);
    let lowest = (0..first).filter_map(h).reduce(f64::min);
    let countermovement_depth_m = standing.zip(lowest).map(|(s, l)| (s - l).max(0.0));
    Some(JumpFigures {
        contact_rule: format!(
            "airborne while every point of both feet is more than {threshold_m} m above its resting height (its {REST_PERCENTILE}th percentile of height); take-off and landing at the crossings, interpolated between frames"
        ),
        takeoff_s,
        landing_s,
        flight_time_s,
        takeoff_velocity_m_s,
        height_from_takeoff_velocity_m: takeoff_velocity_m_s.map(|v| v * v / (2.0 * G_M_S2)),
        height_from_flight_time_m: G_M_S2 * flight_time_s * flight_time_s / 8.0,
        countermovement_depth_m,
    })
}

/// The jump figures with the default [`AIRBORNE_CLEARANCE_M`].
pub fn figures(r: &TrialResult, foot: &FootFrames) -> Option<JumpFigures> {
    figures_with(r, foot, AIRBORNE_CLEARANCE_M)
}
