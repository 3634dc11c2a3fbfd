//! Lifts (docs/DESIGN.md 3.3, 5, 9; docs/reference/methods.md 6): the mid-foot reference, how far the
//! system CoM (lifter + loads) and the bar sit ahead of it, and the repetitions of the bar.
//!
//! - Mid-foot per frame: per foot in contact, the midpoint between the heel and the mean of the
//!   metatarsal heads present (mt1, mt2, mt5), averaged over the feet in contact; projected to
//!   the floor. Coaching practice puts the combined CoM of lifter and bar "over mid-foot, roughly
//!   midway between heel and ball of foot" (docs/reference/methods.md 6, coaching practice, not peer-reviewed).
//! - `com_midfoot_ap_m`, `bar_midfoot_ap_m`: horizontal offset of the system CoM and of the bar
//!   (the first load) from the mid-foot, along the foot direction (the trial's progression
//!   direction, which for a lift is the mean heel-to-toe direction); positive = toward the toes.
//! - Band: `[support] midfoot_band_m` on each side of the mid-foot, default
//!   [`DEFAULT_MIDFOOT_BAND_M`] (common practice, no source: about a quarter of an adult foot's
//!   heel-to-ball length on each side).
//! - Repetitions from the bar's vertical velocity: a descent (velocity below
//!   `-REP_SPEED_M_S` for at least [`MIN_PHASE_S`]) followed by an ascent (above
//!   `+REP_SPEED_M_S`), bar travel at least [`MIN_DEPTH_M`]; a rep starts where the descent
//!   begins (speed last under [`STILL_SPEED_M_S`]), its bottom is the lowest bar position, and it
//!   ends where the ascent stops. Thresholds: common practice, no source. Lifts that rise first
//!   (pulls) are not split into repetitions.
//!
//! Units: metres, seconds, m/s.

use super::stage::{FootFrames, SupportSeries};
use crate::signal::derivative;
use crate::trial::UpAxis;
use serde::Serialize;

/// Half-width of the mid-foot band (common practice, no source).
pub const DEFAULT_MIDFOOT_BAND_M: f64 = 0.05;
/// A bar moving faster than this (vertically) is in a descent or ascent phase.
pub const REP_SPEED_M_S: f64 = 0.05;
/// A bar slower than this is still (where a repetition starts and ends).
pub const STILL_SPEED_M_S: f64 = 0.02;
/// Shortest descent or ascent phase.
pub const MIN_PHASE_S: f64 = 0.2;
/// Smallest bar travel that counts as a repetition.
pub const MIN_DEPTH_M: f64 = 0.10;

const HEEL: usize = 0;
const HEADS: [usize; 3] = [2, 3, 4];

/// One repetition.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Rep {
    pub rep: usize,
    pub start_s: f64,
    pub bottom_s: f64,
    pub end_s: f64,
    /// Vertical range of the bar over the repetition.
    pub depth_m: f64,
    /// Range of the bar's offset along the foot direction over the repetition.
    pub bar_horizontal_excursion_m: Option<f64>,
    pub peak_bar_ascent_speed_m_s: f64,
    pub max_abs_com_midfoot_ap_m: Option<f64>,
    pub mean_abs_com_midfoot_ap_m: Option<f64>,
    pub time_outside_band_s: f64,
}

/// Lift figures of a trial.
#[derive(Clone, Debug, Default)]
pub struct LiftSeries {
    /// Mid-foot per frame (vertical coordinate at floor level).
    pub midfoot: Vec<Option<[f64; 3]>>,
    pub com_midfoot_ap_m: Vec<Option<f64>>,
    pub bar_midfoot_ap_m: Vec<Option<f64>>,
    pub band_m: f64,
    pub reps: Vec<Rep>,
}

impl LiftSeries {
    /// Time with the system CoM outside the band.
    pub fn time_outside_band_s(&self, rate_hz: f64) -> f64 {
        self.com_midfoot_ap_m
            .iter()
            .flatten()
            .filter(|d| d.abs() > self.band_m)
            .count() as f64
            / rate_hz
    }
}

/// Runs the lift analysis. `bar` is the first load's position per frame.
#[allow(clippy::too_many_arguments)]
pub fn analyse(
    foot: &FootFrames,
    support: &SupportSeries,
    com: &[Option<[f64; 3]>],
    bar: &[Option<[f64; 3]>],
    up: UpAxis,
    times_s: &[f64],
    rate_hz: f64,
    band_m: Option<f64>,
) -> LiftSeries {
    let n = com.len();
    let band_m = band_m.unwrap_or(DEFAULT_MIDFOOT_BAND_M);
    let dir = support.progression;
    let mut midfoot = Vec::with_capacity(n);
    for f in 0..n {
        let mut sum = [0.0, 0.0];
        let mut feet = 0;
        for side in 0..2 {
            if !support.contact[side].get(f).copied().unwrap_or(false) {
                continue;
            }
            let point = |k: usize| {
                foot.points[side][k]
                    .get(f)
                    .copied()
                    .flatten()
                    .map(|p| up.horizontal(&p))
            };
            let heads: Vec<[f64; 2]> = HEADS.iter().filter_map(|&k| point(k)).collect();
            if let (Some(heel), false) = (point(HEEL), heads.is_empty()) {
                let m = heads.len() as f64;
                let ball = [
                    heads.iter().map(|h| h[0]).sum::<f64>() / m,
                    heads.iter().map(|h| h[1]).sum::<f64>() / m,
                ];
                sum = [
                    sum[0] + (heel[0] + ball[0]) / 2.0,
                    sum[1] + (heel[1] + ball[1]) / 2.0,
                ];
                feet += 1;
            }
        }
        midfoot.push((feet > 0).then(|| {
            up.point(
                [sum[0] / feet as f64, sum[1] / feet as f64],
                support.floor_m,
            )
        }));
    }
    let ahead = |p: &[Option<[f64; 3]>]| -> Vec<Option<f64>> {
        (0..n)
            .map(|f| {
                let (p, m, d) = (p.get(f).copied().flatten()?, midfoot[f]?, dir?);
                let (p, m) = (up.horizontal(&p), up.horizontal(&m));
                Some((p[0] - m[0]) * d[0] + (p[1] - m[1]) * d[1])
            })
            .collect()
    };
    let com_midfoot_ap_m = ahead(com);
    let bar_midfoot_ap_m = ahead(bar);
    let reps = repetitions(
        bar,
        &com_midfoot_ap_m,
        &bar_midfoot_ap_m,
        up,
        times_s,
        rate_hz,
        band_m,
    );
    LiftSeries {
        midfoot,
        com_midfoot_ap_m,
        bar_midfoot_ap_m,
        band_m,
        reps,
    }
}

/// Repetitions of the bar (module doc).
fn repetitions(
    bar: &[Option<[f64; 3]>],
    com_ap: &[Option<f64>],
    bar_ap: &[Option<f64>],
    up: UpAxis,
    times_s: &[f64],
    rate_hz: f64,
    band_m: f64,
) -> Vec<Rep> {
    let n = bar.len();
    let (velocity, _) = derivative::of_series(bar, 1.0 / rate_hz);
    let vz: Vec<Option<f64>> = velocity.iter().map(|v| v.map(|v| up.height(&v))).collect();
    let height: Vec<Option<f64>> = bar.iter().map(|p| p.map(|p| up.height(&p))).collect();
    let min_frames = (MIN_PHASE_S * rate_hz).ceil() as usize;
    let phases = vertical_phases(&vz, REP_SPEED_M_S, min_frames);
    let time = |f: usize| times_s.get(f).copied().unwrap_or(f as f64 / rate_hz);
    let still = |f: usize| vz[f].is_some_and(|v| v.abs() < STILL_SPEED_M_S);
    let mut reps = Vec::new();
    let mut i = 0;
    while i + 1 < phases.len() {
        let (s0, d0, d1) = phases[i];
        let (s1, a0, a1) = phases[i + 1];
        if !(s0 == -1 && s1 == 1) {
            i += 1;
            continue;
        }
        let mut start = d0;
        while start > 0 && !still(start) && vz[start - 1].is_some() {
            start -= 1;
        }
        let mut end = a1.min(n - 1);
        while end + 1 < n && !still(end) && vz[end + 1].is_some() {
            end += 1;
        }
        let window = start..=end;
        let hs: Vec<(usize, f64)> = window
            .clone()
            .filter_map(|f| Some((f, height[f]?)))
            .collect();
        let (Some(&(bottom, low)), Some(high)) = (
            hs.iter().min_by(|a, b| a.1.total_cmp(&b.1)),
            hs.iter().map(|h| h.1).reduce(f64::max),
        ) else {
            i += 2;
            continue;
        };
        let depth_m = high - low;
        if depth_m < MIN_DEPTH_M || bottom < d1.saturating_sub(1) || bottom > a0 + 1 {
            i += 2;
            continue;
        }
        let range = |v: &[Option<f64>]| {
            let x: Vec<f64> = window.clone().filter_map(|f| v[f]).collect();
            Some(x.iter().copied().reduce(f64::max)? - x.iter().copied().reduce(f64::min)?)
        };
        let com_abs: Vec<f64> = window
            .clone()
            .filter_map(|f| com_ap[f].map(f64::abs))
            .collect();
        reps.push(Rep {
            rep: reps.len() + 1,
            start_s: time(start),
            bottom_s: time(bottom),
            end_s: time(end),
            depth_m,
            bar_horizontal_excursion_m: range(bar_ap),
            peak_bar_ascent_speed_m_s: (a0..a1).filter_map(|f| vz[f]).fold(0.0, f64::max),
            max_abs_com_midfoot_ap_m: com_abs.iter().copied().reduce(f64::max),
            mean_abs_com_midfoot_ap_m: (!com_abs.is_empty())
                .then(|| com_abs.iter().sum::<f64>() / com_abs.len() as f64),
            time_outside_band_s: com_abs.iter().filter(|d| **d > band_m).count() as f64 / rate_hz,
        });
        i += 2;
    }
    reps
}
/// Phases of a vertical velocity series: maximal runs of frames moving down (-1) or up (+1)
/// faster than `speed_m_s`, at least `min_frames` long, as (direction, first frame, end frame).
///
/// ```
/// use gravline::support::lift::vertical_phases;
/// let vz = [0.0, -0.3, -0.3, -0.3, 0.0, 0.3, 0.3, 0.3].map(Some);
/// assert_eq!(vertical_phases(&vz, 0.1, 2), [(-1, 1, 4), (1, 5, 8)]);
/// ```
pub fn vertical_phases(
    vz: &[Option<f64>],
    speed_m_s: f64,
    min_frames: usize,
) -> Vec<(i32, usize, usize)> {
    let n = vz.len();
    let sign = |f: usize| match vz[f] {
        Some(v) if v < -speed_m_s => -1,
        Some(v) if v > speed_m_s => 1,
        _ => 0,
    };
    let mut phases = Vec::new();
    let mut f = 0;
    while f < n {
        let s = sign(f);
        let start = f;
        while f < n && sign(f) == s {
            f += 1;
        }
        if s != 0 && f - start >= min_frames {
            phases.push((s, start, f));
        }
    }
    phases
}
