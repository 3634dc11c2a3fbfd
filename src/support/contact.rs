//! Stage 5, foot contact: which frames each foot is on the floor, from how high and how fast
//! its markers are (docs/DESIGN.md 7: "foot markers near the floor and slow").
//!
//! Inputs, per foot and per frame: the foot's height above the floor in metres (the lowest of
//! its markers minus [`floor_level`]) and its speed in m/s (for example the speed of the slowest
//! of its contact markers, heel and metatarsal heads, as the real-data test does: then the heel
//! governs contact and the forefoot toe-off, as in Ghoussayni 2004), both `None` where unknown;
//! the frame rate in Hz. Outputs: one `bool` per frame, and the contact runs as (on, off) frame
//! ranges.
//!
//! Sources of the thresholds ([`ContactThresholds::default`]):
//! - speed 0.5 m/s: the velocity-threshold family of docs/reference/methods.md 3, Ghoussayni et al. 2004
//!   (contact when the heel speed drops below 0.5 m/s, off when the toe speed rises above
//!   0.5 m/s), as tabulated by Bonci et al. 2022 (doi 10.3389/fbioe.2022.868928).
//! - height 30 mm: common practice, no source. docs/reference/methods.md 2 quotes a marker "within roughly
//!   10-20 mm of its static-trial height" (from memory); our reference is the floor level, taken
//!   at the lowest markers (the heel's), and the lowest marker of a forefoot-loaded foot sits up
//!   to about 15 mm above it (5th/2nd metatarsal heads in the walking recording of the tests),
//!   hence 20 mm + 10 mm.
//! - minimum contact 50 ms and minimum flight 50 ms: common practice, no source. Ground contacts
//!   last at least about 80 ms even in sprinting and a foot's flight at least about 100 ms
//!   (from memory), so shorter runs are noise: impact transients at heel strike and threshold
//!   crossings during toe-off.
//!
//! The floor level is a sample percentile by linear interpolation between order statistics
//! (Hyndman & Fan 1996, "Sample quantiles in statistical packages", Am Stat 50:361-365,
//! definition 7, the default of numpy's `percentile`); docs/DESIGN.md 7 takes the 2nd percentile of
//! the foot-marker heights.

use super::floor::FloorModel;
use super::foot::{FootPoint, Region};
use super::stage::FootFrames;
use crate::signal::derivative;
pub use crate::stats::percentile;
use crate::trial::UpAxis;

/// Thresholds of [`detect_contact`]; see the module doc for the sources of the defaults.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ContactThresholds {
    /// A foot is near the floor when its height is below this, in metres (default 0.03).
    pub height_m: f64,
    /// A foot is slow when its speed is below this, in m/s (default 0.5, Ghoussayni 2004).
    pub speed_m_s: f64,
    /// Contact runs shorter than this are removed, in seconds (default 0.05).
    pub min_contact_s: f64,
    /// Flight gaps shorter than this between two contacts are filled, in seconds (default 0.05).
    pub min_flight_s: f64,
}

impl Default for ContactThresholds {
    fn default() -> Self {
        ContactThresholds {
            height_m: 0.03,
            speed_m_s: 0.5,
            min_contact_s: 0.05,
            min_flight_s: 0.05,
        }
    }
}

/// Per-frame contact of one foot.
///
/// A frame is in contact when both its height is below `t.height_m` and its speed is below
/// `t.speed_m_s`; a frame with a missing (`None`) or non-finite height or speed is not in
/// contact, and frames past the end of the shorter slice count as missing (the result has the
/// length of the longer one). Then two passes remove flickers, in this order:
/// 1. flight gaps shorter than `t.min_flight_s` between two contact runs are filled, unless the
///    gap holds a missing frame (contact is never invented where data are missing);
/// 2. contact runs shorter than `t.min_contact_s` are removed, except runs that touch the first
///    or last frame (they are cut by the recording, their length is unknown).
///
/// Gaps are filled first so that an impact transient just after heel strike (speed briefly above
/// the threshold) cannot split the start of a real contact into a short run that pass 2 would
/// delete; isolated slow frames in swing stay short after pass 1 and are removed by pass 2.
/// A duration of n frames is n / `rate_hz` seconds; a non-finite or non-positive `rate_hz`
/// (rejected upstream when the trial is read) disables both passes.
///
/// ```
/// use gravline::support::{detect_contact, ContactThresholds};
/// let h = [Some(0.1), Some(0.0), Some(0.0), Some(0.0), Some(0.1)];
/// let v = [Some(0.0); 5];
/// let t = ContactThresholds { min_contact_s: 0.0, min_flight_s: 0.0, ..Default::default() };
/// assert_eq!(detect_contact(&h, &v, 100.0, &t), [false, true, true, true, false]);
/// ```
pub fn detect_contact(
    height_m: &[Option<f64>],
    speed_m_s: &[Option<f64>],
    rate_hz: f64,
    t: &ContactThresholds,
) -> Vec<bool> {
    let n = height_m.len().max(speed_m_s.len());
    let sample =
        |s: &[Option<f64>], i: usize| s.get(i).copied().flatten().filter(|x| x.is_finite());
    let known: Vec<bool> = (0..n)
        .map(|i| sample(height_m, i).is_some() && sample(speed_m_s, i).is_some())
        .collect();
    let mut contact: Vec<bool> = (0..n)
        .map(|i| match (sample(height_m, i), sample(speed_m_s, i)) {
            (Some(h), Some(v)) => h < t.height_m && v < t.speed_m_s,
            _ => false,
        })
        .collect();
    if !(rate_hz.is_finite() && rate_hz > 0.0) {
        return contact;
    }
    let shorter_than = |frames: usize, min_s: f64| (frames as f64) < min_s * rate_hz;

    // Pass 1: fill short interior flight gaps without missing frames.
    let gaps = transitions(&contact.iter().map(|c| !c).collect::<Vec<_>>());
    for (on, off) in gaps {
        let interior = on > 0 && off < n;
        if interior && shorter_than(off - on, t.min_flight_s) && known[on..off].iter().all(|k| *k) {
            contact[on..off].iter_mut().for_each(|c| *c = true);
        }
    }
    // Pass 2: remove short contact runs that the recording does not cut.
    for (on, off) in transitions(&contact) {
        let interior = on > 0 && off < n;
        if interior && shorter_than(off - on, t.min_contact_s) {
            contact[on..off].iter_mut().for_each(|c| *c = false);
        }
    }
    contact
}

/// Runs of `true` as (on frame, off frame exclusive): `contact[on..off]` is all `true`, and the
/// frames just outside (where they exist) are `false`.
///
/// ```
/// use gravline::support::transitions;
/// assert_eq!(transitions(&[true, false, true, true, false]), [(0, 1), (2, 4)]);
/// ```
pub fn transitions(contact: &[bool]) -> Vec<(usize, usize)> {
    let mut runs = Vec::new();
    let mut start = None;
    for (i, &c) in contact.iter().enumerate() {
        match (c, start) {
            (true, None) => start = Some(i),
            (false, Some(s)) => {
                runs.push((s, i));
                start = None;
            }
            _ => {}
        }
    }
    if let Some(s) = start {
        runs.push((s, contact.len()));
    }
    runs
}

/// Floor level in metres: the `percentile` (0-100) of the foot-marker heights
/// ([`crate::stats::percentile`]).
/// docs/DESIGN.md 7 uses `percentile = 2.0`.
///
/// ```
/// use gravline::support::floor_level;
/// assert_eq!(floor_level([4.0, 1.0, 3.0, 2.0].into_iter(), 50.0), Some(2.5));
/// ```
pub fn floor_level(heights_m: impl Iterator<Item = f64>, percentile_0_100: f64) -> Option<f64> {
    percentile(heights_m, percentile_0_100)
}

/// Contact of one region of one foot, frame by frame (module doc): slow first, then low.
///
/// Speed: the slowest of the region's markers; height: the lowest of the region's markers above
/// the local floor, each minus its own stance height ([`FloorModel::stance_height_m`]). Only
/// markers of the trial count (never virtual or derived points). A contact begins below
/// `t.speed_m_s` ([`detect_contact`]); when `off_speed_m_s` is higher, it lasts while the region
/// stays slower than that (hysteresis: without a toe marker, the metatarsal heads rise and
/// speed up while the toes are still down).
#[allow(clippy::too_many_arguments)]
pub(super) fn region_contact(
    foot: &FootFrames,
    side: usize,
    region: Region,
    n: usize,
    floor: &FloorModel,
    up: UpAxis,
    rate_hz: f64,
    t: &ContactThresholds,
    off_speed_m_s: f64,
) -> Vec<bool> {
    let dt = 1.0 / rate_hz;
    let mut height = vec![None; n];
    let mut speed: Vec<Option<f64>> = vec![None; n];
    let mut velocity = Vec::new();
    let mut any = false;
    for point in FootPoint::ALL.into_iter().filter(|p| p.region() == region) {
        let k = point.index();
        if !foot.is_marker(side, k) {
            continue;
        }
        let Some(stance) = floor.stance_height_m[side][k] else {
            continue;
        };
        any = true;
        let series = &foot.points[side][k];
        for (f, p) in series.iter().enumerate() {
            if let (Some(p), Some(slot)) = (p, height.get_mut(f)) {
                let h = floor.height_of(p, up) - stance;
                *slot = Some(slot.map_or(h, |m: f64| m.min(h)));
            }
        }
        derivative::velocity_into(series, dt, &mut velocity);
        for (f, v) in velocity.iter().enumerate() {
            if let (Some(v), Some(slot)) = (v, speed.get_mut(f)) {
                let s = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
                *slot = Some(slot.map_or(s, |m: f64| m.min(s)));
            }
        }
    }
    if !any {
        return vec![false; n];
    }
    let mut contact = detect_contact(&height, &speed, rate_hz, t);
    if off_speed_m_s <= t.speed_m_s {
        return contact;
    }
    for (_, off) in transitions(&contact) {
        let mut f = off;
        while f < n && !contact[f] && speed[f].is_some_and(|v| v < off_speed_m_s) {
            contact[f] = true;
            f += 1;
        }
    }
    contact
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn floor_from_the_lowest_values_equals_floor_from_all() {
        // xorshift64 (Marsaglia 2003): heights with ties and a heavy low tail (synthetic).
        let mut s = 0x9e37_79b9_7f4a_7c15u64;
        let mut next = || {
            s ^= s << 13;
            s ^= s >> 7;
            s ^= s << 17;
            s
        };
        for n in [10, 4095, 5000, 70_000, 300_000] {
            let x: Vec<f64> = (0..n)
                .map(|_| {
                    let u = (next() % 10_000) as f64 / 10_000.0;
                    if next() % 50 == 0 {
                        -1.0 - u
                    } else {
                        (u * 100.0).round() / 100.0
                    }
                })
                .collect();
            for percentile in [0.0, 0.1, 2.0, 2.5, 20.0, 50.0, 100.0] {
                let r = percentile / 100.0 * (n - 1) as f64;
                let lo = r.floor() as usize;
                let mut sorted = x.clone();
                sorted.sort_by(f64::total_cmp);
                let want = match sorted.get(lo + 1) {
                    Some(&above) if r > r.floor() => {
                        sorted[lo] + (r - r.floor()) * (above - sorted[lo])
                    }
                    _ => sorted[lo],
                };
                let got = floor_level(x.iter().copied(), percentile).unwrap();
                assert_eq!(
                    got.to_bits(),
                    want.to_bits(),
                    "n {n}, percentile {percentile}"
                );
            }
        }
    }

    #[test]
    fn a_short_gap_holding_a_missing_frame_is_not_filled() {
        let h = [Some(0.0), Some(0.0), None, Some(0.0), Some(0.0)];
        let v = [Some(0.0); 5];
        let t = ContactThresholds {
            min_contact_s: 0.0,
            min_flight_s: 1.0,
            ..Default::default()
        };
        assert_eq!(
            detect_contact(&h, &v, 100.0, &t),
            [true, true, false, true, true]
        );
    }

    #[test]
    fn floor_level_rejects_a_percentile_outside_0_to_100() {
        assert_eq!(floor_level([1.0].into_iter(), 100.5), None);
        assert_eq!(floor_level([1.0].into_iter(), f64::NAN), None);
        assert_eq!(floor_level([f64::NAN].into_iter(), 2.0), None);
    }
}
