//! Stage 5, gait events of walking trials: heel strikes and toe-offs of one foot from marker
//! coordinates and speeds alone.
//!
//! Inputs, per frame: the heel's and the toe's position relative to the sacrum (the mean of the
//! two PSIS markers), projected on the unit direction of progression, in metres, `None` where
//! unknown; for the refinement, the heel's and the forefoot's 3-D speeds in m/s and the walking
//! speed; the frame rate in Hz. Output: [`GaitEvents`], frame indices.
//!
//! Pre-detection, [`zeni_events`]: the coordinate algorithm of Zeni, Richards & Higginson
//! (2008), "Two simple methods for determining gait events during treadmill and overground
//! walking using kinematic data", Gait Posture 27:710-714, doi 10.1016/j.gaitpost.2007.07.007
//! (docs/reference/methods.md 3): heel strike at a local maximum of heel − sacrum, toe-off at a local minimum of
//! toe − sacrum. The peak conditions are the knobs of public implementations (docs/reference/methods.md 3,
//! secondary source): the mean is subtracted first, a peak must stand at least 10 % of the
//! signal's range above the mean and be at least as prominent, and peaks closer than 0.25 s keep
//! only the higher one ([`ZeniOptions::default`]). Events are whole frames.
//!
//! Refinement, [`refine_events`]: the velocity thresholds that Bonci et al. (2022), Front
//! Bioeng Biotechnol 10:868928, doi 10.3389/fbioe.2022.868928, apply after a Zeni
//! pre-detection (docs/reference/methods.md 3): contact when the heel's 3-D speed falls below 0.5 × the walking
//! speed (rearfoot strikes), toe-off when the forefoot's speed rises above 0.8 × the walking
//! speed ([`RefineOptions::default`]). Each Zeni event is moved to the start of the threshold run
//! nearest to it: forward to the first frame past the crossing, or back to the first frame of the
//! run it already lies in, within the stance or swing it belongs to. An event whose neighbourhood
//! holds no crossing keeps its Zeni frame. Forefoot strikes (toe first) are not told apart:
//! walking is taken as rearfoot striking (common practice, no source).
//!
//! Peak rules, after scipy's `find_peaks`: a flat top (a plateau of equal samples) counts once,
//! at its middle frame (rounded down); a peak needs a known, strictly lower sample on both sides,
//! so a maximum at either end of the series or next to a missing frame is not an event (it may
//! lie in the gap). Prominence is the peak's height above the higher of the two lowest points
//! reached on each side before a higher sample, missing frames skipped. Unlike scipy, a side
//! that reaches the end of the series without a higher sample sets no base, so a heel strike in
//! the first or last step of a short recording keeps its prominence.
//!
//! Accuracy: Zeni et al. report 98 % of overground events within 2 frames at 60 Hz (33 ms). On
//! the real walk of the tests (150 Hz, force plates) pure Zeni heel strikes come 4-7 frames
//! (27-47 ms) before plate contact, since the heel is farthest ahead of the pelvis in terminal
//! swing, just before it lands, and toe-offs 1-4 frames after the plates unload; refined, the heel
//! strikes come 0-3 frames early and the toe-offs within 2 frames of the plates, on raw and on
//! 6 Hz-filtered tracks (`tests/support_realdata.rs`).

/// Heel strikes and toe-offs of one foot, as frame indices in increasing order.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct GaitEvents {
    /// Frames of the maxima of heel − sacrum.
    pub heel_strikes: Vec<usize>,
    /// Frames of the minima of toe − sacrum.
    pub toe_offs: Vec<usize>,
}

/// Peak conditions of [`zeni_events_with`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ZeniOptions {
    /// Of two peaks closer than this, in seconds, only the higher is kept (default 0.25 s).
    pub min_peak_distance_s: f64,
    /// Minimum height above the mean and minimum prominence of a peak, as a fraction of the
    /// signal's range (default 0.10).
    pub min_relative_height: f64,
}

impl Default for ZeniOptions {
    fn default() -> Self {
        ZeniOptions {
            min_peak_distance_s: 0.25,
            min_relative_height: 0.10,
        }
    }
}

/// Zeni et al. 2008 events with the default [`ZeniOptions`]: heel strikes at the maxima of
/// `heel_rel_m`, toe-offs at the minima of `toe_rel_m` (both heel/toe − sacrum along the
/// direction of progression, metres), frames at `rate_hz`.
pub fn zeni_events(
    heel_rel_m: &[Option<f64>],
    toe_rel_m: &[Option<f64>],
    rate_hz: f64,
) -> GaitEvents {
    zeni_events_with(heel_rel_m, toe_rel_m, rate_hz, &ZeniOptions::default())
}

/// [`zeni_events`] with explicit peak conditions. A non-finite or non-positive `rate_hz`
/// (rejected upstream when the trial is read) disables the distance condition.
///
/// ```
/// use gravline::support::zeni_events;
/// // one stride at 100 Hz: the heel is farthest ahead at frame 25, the toe farthest back at 75
/// let heel: Vec<_> = (0..100).map(|i| Some((std::f64::consts::TAU * (i as f64 - 25.0) / 100.0).cos())).collect();
/// let toe: Vec<_> = heel.iter().map(|h| h.map(|x| 0.1 + x)).collect();
/// let events = zeni_events(&heel, &toe, 100.0);
/// assert_eq!((events.heel_strikes, events.toe_offs), (vec![25], vec![75]));
/// ```
pub fn zeni_events_with(
    heel_rel_m: &[Option<f64>],
    toe_rel_m: &[Option<f64>],
    rate_hz: f64,
    options: &ZeniOptions,
) -> GaitEvents {
    let negated: Vec<Option<f64>> = toe_rel_m.iter().map(|x| x.map(|v| -v)).collect();
    GaitEvents {
        heel_strikes: find_peaks(heel_rel_m, rate_hz, options),
        toe_offs: find_peaks(&negated, rate_hz, options),
    }
}

/// Local maxima of `y` (non-finite samples count as missing) meeting the Zeni conditions.
fn find_peaks(y: &[Option<f64>], rate_hz: f64, options: &ZeniOptions) -> Vec<usize> {
    let y: Vec<Option<f64>> = y.iter().map(|x| x.filter(|v| v.is_finite())).collect();
    let known: Vec<f64> = y.iter().flatten().copied().collect();
    if known.len() < 3 {
        return Vec::new();
    }
    let mean = known.iter().sum::<f64>() / known.len() as f64;
    let (lo, hi) = known
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
            (lo.min(*v), hi.max(*v))
        });
    let range = hi - lo;
    if range <= 0.0 || !range.is_finite() {
        return Vec::new();
    }
    let min_height = options.min_relative_height * range;

    // Candidates: strict local maxima and the middles of flat tops.
    let mut peaks = Vec::new();
    let mut i = 1;
    while i + 1 < y.len() {
        let (Some(prev), Some(here)) = (y[i - 1], y[i]) else {
            i += 1;
            continue;
        };
        if here <= prev {
            i += 1;
            continue;
        }
        let mut end = i;
        while end + 1 < y.len() && y[end + 1] == Some(here) {
            end += 1;
        }
        if let Some(Some(next)) = y.get(end + 1) {
            if *next < here {
                peaks.push((i + end) / 2);
            }
        }
        i = end + 1;
    }

    peaks.retain(|&p| {
        let v = y[p].unwrap_or(f64::NEG_INFINITY);
        v - mean >= min_height && prominence(&y, p, v) >= min_height
    });

    // Distance: the highest peaks first; each removes the lower ones closer than the minimum.
    if rate_hz.is_finite() && rate_hz > 0.0 && options.min_peak_distance_s > 0.0 {
        let mut order: Vec<usize> = (0..peaks.len()).collect();
        let height = |k: usize| y[peaks[k]].unwrap_or(f64::NEG_INFINITY);
        order.sort_by(|&a, &b| height(b).total_cmp(&height(a)).then(a.cmp(&b)));
        let mut keep = vec![true; peaks.len()];
        // Peaks are in frame order and the distance grows with the frame difference: the peaks
        // too close to peak k are the neighbours on each side up to the first far enough.
        let close = |j: usize, k: usize| {
            (peaks[j].abs_diff(peaks[k]) as f64 / rate_hz) < options.min_peak_distance_s
        };
        for &k in &order {
            if !keep[k] {
                continue;
            }
            for j in (0..k).rev().take_while(|&j| close(j, k)) {
                keep[j] = false;
            }
            for j in (k + 1..peaks.len()).take_while(|&j| close(j, k)) {
                keep[j] = false;
            }
        }
        let mut k = 0;
        peaks.retain(|_| {
            k += 1;
            keep[k - 1]
        });
    }
    peaks
}

/// Prominence of the peak at `p` with value `v`, missing samples skipped: on each side, the
/// lowest point before a higher sample; a side that reaches the end of the series first sets no
/// base (the signal may fall lower beyond the recording), unless both do.
fn prominence(y: &[Option<f64>], p: usize, v: f64) -> f64 {
    // (lowest point, whether the end of the series was reached before a higher sample)
    let side = |iter: &mut dyn Iterator<Item = &Option<f64>>| {
        let mut lowest = v;
        for x in iter.flatten() {
            if *x > v {
                return (lowest, false);
            }
            lowest = lowest.min(*x);
        }
        (lowest, true)
    };
    let (left, left_open) = side(&mut y[..p].iter().rev());
    let (right, right_open) = side(&mut y[p + 1..].iter());
    let base = match (left_open, right_open) {
        (true, true) => left.min(right),
        (true, false) => right,
        (false, true) => left,
        (false, false) => left.max(right),
    };
    v - base
}

/// Thresholds of [`refine_events`], as fractions of the walking speed (Bonci et al. 2022).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RefineOptions {
    /// Contact when the heel is slower than this × walking speed (default 0.5).
    pub heel_fraction: f64,
    /// Toe-off when the forefoot is faster than this × walking speed (default 0.8).
    pub forefoot_fraction: f64,
}

impl Default for RefineOptions {
    fn default() -> Self {
        RefineOptions {
            heel_fraction: 0.5,
            forefoot_fraction: 0.8,
        }
    }
}

/// Moves Zeni events to the heel and forefoot speed thresholds of Bonci et al. 2022 (module doc).
///
/// `heel_speed_m_s` and `forefoot_speed_m_s` are per frame, `None` where unknown;
/// `walking_speed_m_s` is the mean speed of progression. A heel strike is searched between the
/// previous toe-off of the same foot and its next toe-off, a toe-off between the previous and the
/// next heel strike; the Zeni events themselves bound these windows (where there is none, the
/// series' ends do). A non-finite or non-positive walking speed returns the events unchanged.
///
/// ```
/// use gravline::support::{refine_events, GaitEvents, RefineOptions};
/// // the heel slows through 0.5 m/s (0.5 x 1 m/s) at frame 4, the forefoot speeds up past
/// // 0.8 m/s at frame 8
/// let heel: Vec<_> = [1.2, 1.1, 0.9, 0.7, 0.4, 0.1, 0.0, 0.0, 0.3, 1.0].map(Some).to_vec();
/// let fore: Vec<_> = [1.5, 1.4, 1.2, 1.0, 0.6, 0.2, 0.1, 0.5, 0.9, 1.6].map(Some).to_vec();
/// let zeni = GaitEvents { heel_strikes: vec![1], toe_offs: vec![9] };
/// let refined = refine_events(&zeni, &heel, &fore, 1.0, &RefineOptions::default());
/// assert_eq!((refined.heel_strikes, refined.toe_offs), (vec![4], vec![8]));
/// ```
pub fn refine_events(
    zeni: &GaitEvents,
    heel_speed_m_s: &[Option<f64>],
    forefoot_speed_m_s: &[Option<f64>],
    walking_speed_m_s: f64,
    options: &RefineOptions,
) -> GaitEvents {
    if !(walking_speed_m_s.is_finite() && walking_speed_m_s > 0.0) {
        return zeni.clone();
    }
    let heel_limit = options.heel_fraction * walking_speed_m_s;
    let fore_limit = options.forefoot_fraction * walking_speed_m_s;
    let slow_heel = |f: usize| {
        heel_speed_m_s
            .get(f)
            .copied()
            .flatten()
            .map(|v| v < heel_limit)
    };
    let fast_fore = |f: usize| {
        forefoot_speed_m_s
            .get(f)
            .copied()
            .flatten()
            .map(|v| v > fore_limit)
    };
    let n = heel_speed_m_s.len().max(forefoot_speed_m_s.len());
    let last = n.saturating_sub(1);
    // The window of an event: strictly between the neighbouring events of the other kind.
    let window = |at: usize, others: &[usize]| {
        let lo = others.iter().rev().find(|&&o| o < at).map_or(0, |&o| o + 1);
        let hi = others
            .iter()
            .find(|&&o| o > at)
            .map_or(last, |&o| o.saturating_sub(1));
        (lo, hi.min(last))
    };
    let heel_strikes = zeni
        .heel_strikes
        .iter()
        .map(|&h| {
            let (lo, hi) = window(h, &zeni.toe_offs);
            run_start_near(&slow_heel, h, lo, hi).unwrap_or(h)
        })
        .collect();
    let toe_offs = zeni
        .toe_offs
        .iter()
        .map(|&t| {
            let (lo, hi) = window(t, &zeni.heel_strikes);
            run_start_near(&fast_fore, t, lo, hi).unwrap_or(t)
        })
        .collect();
    GaitEvents {
        heel_strikes,
        toe_offs,
    }
}

/// The first frame of the run where `holds` is true that contains `at`, or of the next such run
/// after `at`, within `lo..=hi`; a missing sample (`None`) ends a run. `None` when there is no
/// such frame in the window.
fn run_start_near(
    holds: &dyn Fn(usize) -> Option<bool>,
    at: usize,
    lo: usize,
    hi: usize,
) -> Option<usize> {
    if at < lo || at > hi {
        return None;
    }
    if holds(at) == Some(true) {
        let mut f = at;
        while f > lo && holds(f - 1) == Some(true) {
            f -= 1;
        }
        // A run reaching back to the window's start may have begun before it: its start is
        // known only when the frame before it is known not to hold.
        let starts_inside = f > lo || (f > 0 && holds(f - 1) == Some(false));
        return starts_inside.then_some(f);
    }
    (at + 1..=hi).find(|&f| holds(f) == Some(true) && holds(f - 1) == Some(false))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_flat_top_counts_once_at_its_middle() {
        let y: Vec<Option<f64>> = [0.0, 1.0, 3.0, 3.0, 3.0, 3.0, 1.0, 0.0]
            .iter()
            .map(|v| Some(*v))
            .collect();
        assert_eq!(find_peaks(&y, 1.0, &ZeniOptions::default()), [3]);
    }

    #[test]
    fn a_peak_near_the_start_keeps_its_prominence() {
        let y: Vec<Option<f64>> = [0.9, 1.0, 0.5, 0.0, -1.0, 0.0, 0.5, 1.1, 0.5, 0.0]
            .iter()
            .map(|v| Some(*v))
            .collect();
        // scipy's prominence of frame 1 would be 1.0 - 0.9 = 0.1, below 10 % of the range (0.21)
        assert_eq!(find_peaks(&y, 1.0, &ZeniOptions::default()), [1, 7]);
    }

    #[test]
    fn a_maximum_next_to_a_missing_frame_is_not_a_peak() {
        let y = [Some(0.0), Some(1.0), Some(2.0), None, Some(1.0), Some(0.0)];
        assert!(find_peaks(&y, 1.0, &ZeniOptions::default()).is_empty());
    }

    fn some(v: &[f64]) -> Vec<Option<f64>> {
        v.iter().map(|x| Some(*x)).collect()
    }

    #[test]
    fn a_late_zeni_heel_strike_moves_back_to_the_start_of_the_slow_run() {
        // slow (< 0.5) from frame 3; Zeni said 5
        let heel = some(&[1.0, 0.8, 0.6, 0.4, 0.2, 0.1, 0.1, 0.1]);
        let zeni = GaitEvents {
            heel_strikes: vec![5],
            toe_offs: vec![],
        };
        let r = refine_events(&zeni, &heel, &heel, 1.0, &RefineOptions::default());
        assert_eq!(r.heel_strikes, [3]);
    }

    #[test]
    fn no_crossing_in_the_window_keeps_the_zeni_frame() {
        // the heel never slows below 0.5 m/s before the next toe-off at frame 4
        let heel = some(&[1.0, 0.9, 0.8, 0.7, 0.6, 0.2, 0.1]);
        let fore = some(&[2.0; 7]);
        let zeni = GaitEvents {
            heel_strikes: vec![1],
            toe_offs: vec![4],
        };
        let r = refine_events(&zeni, &heel, &fore, 1.0, &RefineOptions::default());
        assert_eq!(r.heel_strikes, [1]);
    }

    #[test]
    fn a_missing_frame_hides_a_crossing() {
        let heel = vec![Some(1.0), Some(0.9), None, Some(0.3), Some(0.2)];
        let zeni = GaitEvents {
            heel_strikes: vec![1],
            toe_offs: vec![],
        };
        let r = refine_events(&zeni, &heel, &heel, 1.0, &RefineOptions::default());
        // the slow run starts after the gap: when the heel slowed is unknown
        assert_eq!(r.heel_strikes, [1]);
    }

    #[test]
    fn an_unknown_walking_speed_leaves_the_events_alone() {
        let heel = some(&[1.0, 0.1, 0.1]);
        let zeni = GaitEvents {
            heel_strikes: vec![0],
            toe_offs: vec![2],
        };
        for v in [0.0, f64::NAN, -1.0] {
            assert_eq!(
                refine_events(&zeni, &heel, &heel, v, &RefineOptions::default()),
                zeni
            );
        }
    }
}
