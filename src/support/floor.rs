//! The floor: the support surface under the feet, estimated from the feet's own stance samples.
//!
//! Inputs: the per-frame foot points of a trial (metres; only the points that are markers of
//! the trial, never virtual or derived points), the up axis, the frame rate (Hz), the marker
//! radius and `[support] floor_m`. Output: a [`FloorModel`]: the floor surface height at any
//! horizontal position (metres), each foot marker's stance height above it, tilt (deg), plane
//! residual (mm) and rise over the trial (mm).
//!
//! Method:
//! 1. Stance samples: the samples of each foot marker slower than [`STANCE_SPEED_M_S`] (a foot
//!    marker in stance moves by a few cm/s; common practice, no source), at most
//!    [`MAX_SAMPLES_PER_MARKER`] per marker, evenly spaced.
//! 2. A plane `h = c_m + s . p` with one intercept `c_m` per marker (each marker sits at its own
//!    height above the floor) and one common slope `s`, by least squares (the slope from the
//!    per-marker centred samples; a ridge of [`RIDGE_M`]^2 per sample keeps the slope at 0 along
//!    directions the feet did not cover, as in quiet standing), made robust by three passes
//!    that drop samples farther than 3 scaled MADs (1.4826 MAD, at least 5 mm) from the plane
//!    (iteratively trimmed least squares; Rousseeuw & Leroy 1987, Robust Regression and Outlier
//!    Detection, Wiley, ch. 1, from memory). Slow samples that are high (a foot held still in
//!    the air, the top of a jump) are dropped there.
//! 3. Local rises and falls (a bump, a dome-shaped walkway): the median plane residual of the
//!    stance samples in each [`CELL_M`] square of the floor, where a cell holds at least
//!    [`CELL_MIN_SAMPLES`] samples within [`CELL_BAND_M`] of the plane, is added to the plane
//!    there.
//! 4. The floor surface lies [`SOLE_OFFSET_M`] plus the marker radius below the lowest marker's
//!    stance level (the heel marker's centre sits one radius off the skin, and the skin over the
//!    calcaneus about 15 mm above the floor with shoes or the heel pad: from memory).
//!
//! `[support] floor_m` forces a level floor surface at that height; the markers' stance heights
//! are then measured from it. Without stance samples the surface lies the same offset below
//! the 2nd percentile of all foot-marker heights (Hyndman & Fan 1996, definition 7).

use super::contact::percentile;
use super::foot::FootPoint;
use super::stage::FootFrames;
use crate::signal::derivative;
use crate::trial::UpAxis;
use serde::Serialize;
use std::collections::HashMap;

/// Speed below which a foot-marker sample counts as a stance sample (module doc), m/s.
pub const STANCE_SPEED_M_S: f64 = 0.2;
/// Stance samples kept per marker.
pub const MAX_SAMPLES_PER_MARKER: usize = 3000;
/// Ridge length of the slope fit, metres.
pub const RIDGE_M: f64 = 0.05;
/// Side of the residual cells, metres.
pub const CELL_M: f64 = 0.25;
/// Samples a cell needs before its residual is used.
pub const CELL_MIN_SAMPLES: usize = 10;
/// Residuals farther than this from the plane do not enter a cell, metres.
pub const CELL_BAND_M: f64 = 0.06;
/// Skin-to-floor distance under the heel marker, metres (module doc, from memory).
pub const SOLE_OFFSET_M: f64 = 0.015;
/// Marker radius used when the subject gives none, metres (14 mm markers, common practice, no
/// source).
pub const DEFAULT_MARKER_RADIUS_M: f64 = 0.007;
/// The floor counts as level when it rises less than this over the trial, mm.
pub const LEVEL_WITHIN_MM: f64 = 10.0;

/// The floor of one trial (module doc).
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct FloorModel {
    /// Floor surface height at the horizontal origin, metres.
    pub level_m: f64,
    /// Rise of the plane per metre along the two horizontal axes.
    pub slope: [f64; 2],
    /// Angle between the plane and the lab's horizontal, degrees.
    pub tilt_deg: f64,
    /// RMS distance of the kept stance samples from the plane, mm.
    pub residual_mm: f64,
    /// Range of the floor height (plane and cells) under the stance samples, mm.
    pub rise_mm: f64,
    /// Stance samples kept in the fit.
    pub samples: usize,
    /// `true` when `[support] floor_m` forced a level floor.
    pub forced: bool,
    /// `true` when the floor came from stance samples (else forced, or the percentile fallback).
    pub fitted: bool,
    /// Stance height of each foot marker's centre above the floor surface, metres,
    /// `[side][FootPoint::index]` (`None` for points that are not markers or never slow).
    #[serde(skip)]
    pub stance_height_m: [[Option<f64>; 6]; 2],
    #[serde(skip)]
    cells: HashMap<(i64, i64), f64>,
}

impl FloorModel {
    /// A level floor surface at `level_m`.
    pub fn level(level_m: f64) -> FloorModel {
        FloorModel {
            level_m,
            ..Default::default()
        }
    }

    /// Floor surface height under the horizontal point `p`, metres.
    pub fn at(&self, p: [f64; 2]) -> f64 {
        let cell = self.cells.get(&cell_of(p)).copied().unwrap_or(0.0);
        self.level_m + self.slope[0] * p[0] + self.slope[1] * p[1] + cell
    }

    /// Height of a lab point above the floor under it, metres.
    pub fn height_of(&self, p: &[f64; 3], up: UpAxis) -> f64 {
        up.height(p) - self.at(up.horizontal(p))
    }

    /// Whether the floor rises more than [`LEVEL_WITHIN_MM`] over the trial.
    pub fn is_level(&self) -> bool {
        self.rise_mm < LEVEL_WITHIN_MM
    }
}

fn cell_of(p: [f64; 2]) -> (i64, i64) {
    (
        (p[0] / CELL_M).floor() as i64,
        (p[1] / CELL_M).floor() as i64,
    )
}

/// One stance sample: the marker (`side * 6 + point`), its horizontal position and height.
#[derive(Clone, Copy, Debug)]
struct Sample {
    marker: usize,
    at: [f64; 2],
    height_m: f64,
}

/// Estimates the floor (module doc). `forced_m` is `[support] floor_m`; `None` without foot
/// markers.
pub fn estimate(
    foot: &FootFrames,
    up: UpAxis,
    rate_hz: f64,
    marker_radius_m: f64,
    forced_m: Option<f64>,
) -> Option<FloorModel> {
    let below = SOLE_OFFSET_M + marker_radius_m;
    let samples = stance_samples(foot, up, rate_hz);
    let mut model = match forced_m {
        Some(level) => FloorModel {
            forced: true,
            ..FloorModel::level(level)
        },
        None if samples.len() >= 3 => fit(&samples, below),
        None => {
            let heights = foot
                .points
                .iter()
                .enumerate()
                .flat_map(|(s, pts)| {
                    pts.iter()
                        .enumerate()
                        .filter(move |(k, _)| foot.is_marker(s, *k))
                        .flat_map(|(_, series)| series.iter().flatten())
                })
                .map(|p| up.height(p));
            let all: Vec<f64> = heights.collect();
            if all.is_empty() {
                return None;
            }
            FloorModel::level(percentile(all.into_iter(), 2.0)? - below)
        }
    };
    // Each marker's stance height above the floor: the median over its kept stance samples.
    let mut per_marker: Vec<Vec<f64>> = vec![Vec::new(); 12];
    for s in &samples {
        let h = s.height_m - model.at(s.at);
        if !model.fitted || h.abs() < 0.5 {
            per_marker[s.marker].push(h);
        }
    }
    for (m, v) in per_marker.into_iter().enumerate() {
        if !v.is_empty() {
            // The low quartile: stance samples include the start of heel rise and toe-off.
            model.stance_height_m[m / 6][m % 6] = percentile(v.into_iter(), 25.0);
        }
    }
    Some(model)
}

/// The stance samples of the foot markers (module doc, step 1).
fn stance_samples(foot: &FootFrames, up: UpAxis, rate_hz: f64) -> Vec<Sample> {
    let mut out = Vec::new();
    if !(rate_hz.is_finite() && rate_hz > 0.0) {
        return out;
    }
    let mut velocity = Vec::new();
    for side in 0..2 {
        for point in FootPoint::ALL {
            let k = point.index();
            if !foot.is_marker(side, k) {
                continue;
            }
            let series = &foot.points[side][k];
            derivative::velocity_into(series, 1.0 / rate_hz, &mut velocity);
            let slow: Vec<usize> = velocity
                .iter()
                .enumerate()
                .filter_map(|(f, v)| {
                    let v = (*v)?;
                    let s = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
                    (s < STANCE_SPEED_M_S).then_some(f)
                })
                .collect();
            let step = slow.len().div_ceil(MAX_SAMPLES_PER_MARKER).max(1);
            for &f in slow.iter().step_by(step) {
                if let Some(p) = series.get(f).copied().flatten() {
                    out.push(Sample {
                        marker: side * 6 + k,
                        at: up.horizontal(&p),
                        height_m: up.height(&p),
                    });
                }
            }
        }
    }
    out
}

/// Plane with per-marker intercepts, trimmed, then the residual cells (module doc, 2-4).
fn fit(samples: &[Sample], below_m: f64) -> FloorModel {
    let mut keep = vec![true; samples.len()];
    let mut slope = [0.0, 0.0];
    let mut intercept = [0.0f64; 12];
    for _pass in 0..3 {
        // Per-marker means of the kept samples.
        let mut sum = [[0.0f64; 4]; 12];
        for (s, _) in samples.iter().zip(&keep).filter(|(_, k)| **k) {
            let m = &mut sum[s.marker];
            m[0] += s.at[0];
            m[1] += s.at[1];
            m[2] += s.height_m;
            m[3] += 1.0;
        }
        let mean = |m: usize| {
            let c = sum[m][3].max(1.0);
            [sum[m][0] / c, sum[m][1] / c, sum[m][2] / c]
        };
        let (mut a, mut b, mut n) = ([[0.0f64; 2]; 2], [0.0f64; 2], 0.0);
        for (s, _) in samples.iter().zip(&keep).filter(|(_, k)| **k) {
            let c = mean(s.marker);
            let (dx, dy, dh) = (s.at[0] - c[0], s.at[1] - c[1], s.height_m - c[2]);
            a[0][0] += dx * dx;
            a[0][1] += dx * dy;
            a[1][1] += dy * dy;
            b[0] += dx * dh;
            b[1] += dy * dh;
            n += 1.0;
        }
        let ridge = n * RIDGE_M * RIDGE_M;
        a[0][0] += ridge;
        a[1][1] += ridge;
        let det = a[0][0] * a[1][1] - a[0][1] * a[0][1];
        if det.abs() > 1e-12 {
            slope = [
                (b[0] * a[1][1] - b[1] * a[0][1]) / det,
                (a[0][0] * b[1] - a[0][1] * b[0]) / det,
            ];
        }
        for (m, c) in intercept.iter_mut().enumerate() {
            let mm = mean(m);
            *c = mm[2] - slope[0] * mm[0] - slope[1] * mm[1];
        }
        let residual =
            |s: &Sample| s.height_m - intercept[s.marker] - slope[0] * s.at[0] - slope[1] * s.at[1];
        let abs: Vec<f64> = samples
            .iter()
            .zip(&keep)
            .filter(|(_, k)| **k)
            .map(|(s, _)| residual(s).abs())
            .collect();
        let mad = percentile(abs.into_iter(), 50.0).unwrap_or(0.0);
        let limit = (3.0 * 1.4826 * mad).max(0.005);
        for (s, k) in samples.iter().zip(keep.iter_mut()) {
            *k = residual(s).abs() <= limit;
        }
    }
    let residual =
        |s: &Sample| s.height_m - intercept[s.marker] - slope[0] * s.at[0] - slope[1] * s.at[1];
    let kept: Vec<&Sample> = samples
        .iter()
        .zip(&keep)
        .filter(|(_, k)| **k)
        .map(|(s, _)| s)
        .collect();
    let rms =
        (kept.iter().map(|s| residual(s).powi(2)).sum::<f64>() / kept.len().max(1) as f64).sqrt();
    // Lowest marker intercept (of markers with kept samples) -> the surface below it.
    let mut present = [false; 12];
    kept.iter().for_each(|s| present[s.marker] = true);
    let lowest = (0..12)
        .filter(|&m| present[m])
        .map(|m| intercept[m])
        .reduce(f64::min)
        .unwrap_or(0.0);
    let level_m = lowest - below_m;
    // Residual cells.
    let mut in_cell: HashMap<(i64, i64), Vec<f64>> = HashMap::new();
    for s in samples {
        let r = residual(s);
        if r.abs() <= CELL_BAND_M {
            in_cell.entry(cell_of(s.at)).or_default().push(r);
        }
    }
    let cells: HashMap<(i64, i64), f64> = in_cell
        .into_iter()
        .filter(|(_, v)| v.len() >= CELL_MIN_SAMPLES)
        .filter_map(|(c, v)| Some((c, percentile(v.into_iter(), 50.0)?)))
        .collect();
    let mut model = FloorModel {
        level_m,
        slope,
        tilt_deg: slope[0].hypot(slope[1]).atan().to_degrees(),
        residual_mm: rms * 1e3,
        rise_mm: 0.0,
        samples: kept.len(),
        forced: false,
        fitted: true,
        stance_height_m: [[None; 6]; 2],
        cells,
    };
    // Over every stance sample near the plane (those the cells follow), not only the plane's
    // kept ones: a bump's samples are trimmed from the plane fit but not from the floor.
    let near: Vec<&Sample> = samples
        .iter()
        .filter(|s| residual(s).abs() <= CELL_BAND_M)
        .collect();
    let heights = || near.iter().map(|s| model.at(s.at));
    if let (Some(hi), Some(lo)) = (heights().reduce(f64::max), heights().reduce(f64::min)) {
        model.rise_mm = (hi - lo) * 1e3;
    }
    model
}

#[cfg(test)]
mod tests {
    use super::*;

    fn samples_on(slope: [f64; 2], offsets: &[f64]) -> Vec<Sample> {
        let mut out = Vec::new();
        for (m, off) in offsets.iter().enumerate() {
            for i in 0..200 {
                let at = [i as f64 * 0.02, (i % 7) as f64 * 0.03];
                out.push(Sample {
                    marker: m,
                    at,
                    height_m: 0.1 + off + slope[0] * at[0] + slope[1] * at[1],
                });
            }
        }
        out
    }

    #[test]
    fn a_tilted_plane_is_recovered_with_its_tilt() {
        // 3 deg along the first axis: tan(3 deg) = 0.0524.
        let s = 3f64.to_radians().tan();
        let m = fit(&samples_on([s, 0.0], &[0.0, 0.02, 0.05]), 0.02);
        // The ridge shrinks the slope by 0.05^2 / var(x) = 0.2 % here (samples over 4 m).
        assert!((m.tilt_deg - 3.0).abs() < 0.02, "{}", m.tilt_deg);
        assert!((m.level_m - 0.08).abs() < 1e-3, "{}", m.level_m);
        assert!(m.residual_mm < 0.5, "{}", m.residual_mm);
        assert!(!m.is_level());
    }

    #[test]
    fn slow_high_samples_are_trimmed() {
        let mut s = samples_on([0.0, 0.0], &[0.0, 0.03]);
        for i in 0..20 {
            s.push(Sample {
                marker: 0,
                at: [i as f64 * 0.1, 0.0],
                height_m: 0.4,
            });
        }
        let m = fit(&s, 0.0);
        assert!((m.level_m - 0.1).abs() < 1e-3, "{}", m.level_m);
        assert!(m.tilt_deg < 0.1);
    }
}
