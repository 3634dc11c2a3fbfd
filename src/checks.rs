//! Declarations checked against the data, before any computation, and figures no person
//! produces, after it.
//!
//! Stage: between reading (trial, in metres under the declared `[input] units`, with the
//! declared `up_axis`) and the first computation. Inputs: the resolved body model (which
//! markers are feet, which are pelvis or head), the markers of a sample of frames (metres), the
//! subject's stature (m) and the configuration's declarations (declared or defaulted). Output:
//! an error naming the fix when a declaration contradicts the data, else the findings as
//! warnings.
//!
//! The layout of a standing or walking body is a fact of the trade (common practice, no
//! source): the foot markers are the lowest, the pelvis and head markers the highest, and the
//! distance between them along the vertical is a large part of the stature (the pelvis markers
//! lie at about 0.5-0.55 of stature, the head top at 1.0; de Leva 1996, J Biomech 29:1223,
//! Table 4 segment lengths). So:
//! - the up axis is the axis along which the pelvis/head markers lie farthest from the foot
//!   markers, with the sign that puts them above; it must dominate the two horizontal axes
//!   (twice either of them) to count as detected;
//! - the median vertical distance from the foot markers to the pelvis/head markers, divided by
//!   the stature, must lie in [`EXTENT_BAND`]; when it lies there only after a factor of 1000,
//!   the unit is the other one.
//!
//! A declared `units` or `up_axis` that contradicts the detection is an error; an undeclared
//! (default) one that contradicts it is an error too (the data cannot be read right under the
//! default), naming what was detected; an undeclared one that agrees is reported as detected.
//! An extent that no unit brings into the band (a folded or lying body, a wrong stature) is a
//! plausibility warning, not an error.
//!
//! After the computation, [`implausible`] lists the figures no person produces: a mean CoM
//! height outside 0.35-0.75 of stature (upright about 0.55-0.57; Winter 2009, Biomechanics and
//! Motor Control of Human Movement, 4th ed., ch. 4, from memory), a CoM speed above 12.5 m/s
//! (faster than the fastest human sprint, about 12.4 m/s peak, common practice, no source) and
//! thigh or shank lengths outside 0.6-1.6 times their usual proportion of stature (0.245 and
//! 0.246 of stature; Drillis & Contini 1966, as tabulated by Winter 2009, Fig. 4.1).

use crate::body::BodyModel;
use crate::config::{Config, Declared};
use crate::trial::{LengthUnit, UpAxis};
use crate::warning::Warning;

/// Accepted median vertical distance from the foot markers to the pelvis/head markers, as a
/// share of stature (module doc).
pub const EXTENT_BAND: (f64, f64) = (0.25, 1.15);
/// Frames sampled for the check (evenly over the trial).
const SAMPLE_FRAMES: usize = 64;

/// Foot landmarks: the lowest points of a standing body.
const LOW: [&str; 7] = ["heel", "toe", "mt1", "mt2", "mt5", "ankle_lat", "ankle_med"];
/// Pelvis, trunk and head landmarks: the highest.
const HIGH_SIDED: [&str; 5] = ["asis", "psis", "iliac_crest", "acromion", "head_front"];
const HIGH_CENTRAL: [&str; 3] = ["head_top", "c7", "jugular"];

/// A declaration that contradicts the data.
#[derive(Debug, thiserror::Error)]
#[error("{file}: {message}")]
pub struct DeclarationError {
    pub file: String,
    pub message: String,
}

/// What the data say about units and the up axis.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Detected {
    /// The up axis the body's layout shows, when one axis dominates.
    pub up_axis: Option<UpAxis>,
    /// Median foot-to-top distance along the detected (else declared) up axis, metres as read.
    pub extent_m: f64,
    /// The factor that brings the extent into [`EXTENT_BAND`]: 1 (units right), 1000 (metres read
    /// as millimetres) or 0.001 (millimetres read as metres); `None` when none does.
    pub unit_factor: Option<f64>,
}

/// Detects units and up axis from the body's layout. `marker(i, frame)` is marker `i` in metres
/// as read; `None` when the trial has no foot markers or no pelvis/head markers in the model.
pub fn detect(
    body: &BodyModel,
    n_frames: usize,
    marker: impl Fn(usize, usize) -> Option<[f64; 3]>,
    declared_up: UpAxis,
    stature_m: f64,
) -> Option<Detected> {
    let sided = |stems: &[&str]| -> Vec<usize> {
        stems
            .iter()
            .flat_map(|s| [format!("l_{s}"), format!("r_{s}")])
            .filter_map(|n| body.marker_index(&n))
            .collect()
    };
    let low = sided(&LOW);
    let mut high = sided(&HIGH_SIDED);
    high.extend(HIGH_CENTRAL.iter().filter_map(|n| body.marker_index(n)));
    if low.is_empty() || high.is_empty() || n_frames == 0 {
        return None;
    }
    let mean = |ids: &[usize], f: usize| -> Option<[f64; 3]> {
        let mut sum = [0.0; 3];
        let mut k = 0usize;
        for p in ids.iter().filter_map(|&i| marker(i, f)) {
            (0..3).for_each(|a| sum[a] += p[a]);
            k += 1;
        }
        (k > 0).then(|| sum.map(|s| s / k as f64))
    };
    let step = (n_frames / SAMPLE_FRAMES).max(1);
    let mut d: [Vec<f64>; 3] = Default::default();
    for f in (0..n_frames).step_by(step) {
        if let (Some(h), Some(l)) = (mean(&high, f), mean(&low, f)) {
            (0..3).for_each(|a| d[a].push(h[a] - l[a]));
        }
    }
    if d[0].is_empty() {
        return None;
    }
    let m = d.map(|mut v| median(&mut v));
    let k = (0..3).max_by(|&a, &b| m[a].abs().total_cmp(&m[b].abs()))?;
    let dominant = (0..3)
        .filter(|&a| a != k)
        .all(|a| m[k].abs() >= 2.0 * m[a].abs());
    let up_axis = dominant.then_some(UpAxis {
        index: k,
        positive: m[k] > 0.0,
    });
    let along = up_axis.unwrap_or(declared_up).height(&m);
    let share = along / stature_m;
    let fits = |f: f64| (EXTENT_BAND.0..=EXTENT_BAND.1).contains(&(share * f));
    let unit_factor = [1.0, 1000.0, 0.001].into_iter().find(|&f| fits(f));
    Some(Detected {
        up_axis,
        extent_m: along,
        unit_factor,
    })
}

fn median(v: &mut [f64]) -> f64 {
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * (v[n / 2 - 1] + v[n / 2])
    }
}

fn axis_word(up: UpAxis) -> String {
    let axis = ["x", "y", "z"][up.index];
    if up.positive {
        axis.to_string()
    } else {
        format!("-{axis}")
    }
}

fn unit_word(u: LengthUnit) -> &'static str {
    match u {
        LengthUnit::Millimetres => "mm",
        LengthUnit::Metres => "m",
    }
}

/// Checks the declarations of `config` against `detected` (module doc): an error naming the
/// fix, or the warnings saying what was detected where nothing was declared.
pub fn check(
    detected: &Detected,
    config: &Config,
    stature_m: f64,
    file: &str,
) -> Result<Vec<Warning>, DeclarationError> {
    let Declared {
        units: units_declared,
        up_axis: up_declared,
    } = config.declared;
    let err = |message: String| DeclarationError {
        file: file.to_string(),
        message,
    };
    let mut found = Vec::new();
    if let Some(up) = detected.up_axis {
        if up != config.up_axis {
            let how = if up_declared {
                format!("[input] up_axis = \"{}\"", axis_word(config.up_axis))
            } else {
                format!(
                    "no [input] up_axis, so the default {},",
                    axis_word(config.up_axis)
                )
            };
            return Err(err(format!(
                "{how} contradicts the data: the pelvis/head markers lie above the foot markers along {up} ({:.3} of stature); set [input] up_axis = \"{}\"",
                detected.extent_m.abs() / stature_m,
                axis_word(up)
            )));
        } else if !up_declared {
            found.push(Warning::Detected {
                what: format!(
                    "no [input] up_axis: the body's layout shows {up} up, as the default"
                ),
            });
        }
    }
    let share = detected.extent_m / stature_m;
    let declared_word = unit_word(config.units);
    let how = if units_declared {
        format!("[input] units = \"{declared_word}\"")
    } else {
        format!("no [input] units, so the default \"{declared_word}\",")
    };
    match detected.unit_factor {
        Some(1.0) => {
            if !units_declared {
                found.push(Warning::Detected {
                    what: format!(
                        "no [input] units: the body's extent ({share:.2} of stature) agrees with \"{declared_word}\", the default"
                    ),
                });
            }
        }
        Some(f) => {
            let (real, fix) = if f > 1.0 {
                ("metres", "m")
            } else {
                ("millimetres", "mm")
            };
            return Err(err(format!(
                "{how} contradicts the data: the pelvis/head markers lie {:.4} m above the foot markers for a stature of {stature_m:.2} m ({share:.4} of stature, expected {:.2}-{:.2}); the coordinates are {real}: set [input] units = \"{fix}\"",
                detected.extent_m, EXTENT_BAND.0, EXTENT_BAND.1
            )));
        }
        None => {
            // No unit makes a standing body of it: an unusual posture, or a wrong stature or
            // map; not a contradiction of a declaration, so a warning, listed first.
            found.insert(
                0,
                Warning::Plausibility {
                    message: format!(
                        "the pelvis/head markers lie {:.3} m above the foot markers along {}, {share:.2} of the stature of {stature_m:.2} m (expected {:.2}-{:.2} upright): check [input] units and up_axis, the subject's height_m and the [landmarks] map",
                        detected.extent_m,
                        detected.up_axis.unwrap_or(config.up_axis),
                        EXTENT_BAND.0,
                        EXTENT_BAND.1
                    ),
                },
            );
        }
    }
    Ok(found)
}

/// Usual thigh and shank lengths as shares of stature (Drillis & Contini 1966, as tabulated by
/// Winter 2009, Fig. 4.1) and the accepted factor band around them (module doc).
const SEGMENT_SHARES: [(&str, f64); 2] = [("thigh", 0.245), ("shank", 0.246)];
const SEGMENT_BAND: (f64, f64) = (0.6, 1.6);
/// CoM height band as a share of stature, and the fastest CoM speed of a person (module doc).
pub const COM_HEIGHT_BAND: (f64, f64) = (0.35, 0.75);
pub const MAX_COM_SPEED_M_S: f64 = 12.5;

/// Findings no person produces (module doc), as plausibility warnings: the mean CoM height
/// above the floor as a share of stature, the maximum CoM speed, and the median thigh and shank
/// lengths (`segment_lengths_m`: segment name and median length, metres).
pub fn implausible(
    com_height_of_stature: Option<f64>,
    max_speed_m_s: Option<f64>,
    segment_lengths_m: &[(String, f64)],
    stature_m: f64,
) -> Vec<Warning> {
    let mut out = Vec::new();
    if let Some(f) = com_height_of_stature {
        if !(COM_HEIGHT_BAND.0..=COM_HEIGHT_BAND.1).contains(&f) {
            out.push(Warning::Plausibility {
                message: format!(
                    "mean CoM height is {f:.2} of stature above the floor (expected about 0.55 when upright): check units, up_axis and the landmark map"
                ),
            });
        }
    }
    if let Some(v) = max_speed_m_s {
        if v > MAX_COM_SPEED_M_S {
            out.push(Warning::Plausibility {
                message: format!(
                    "CoM speed reaches {v:.1} m/s, faster than any person ({MAX_COM_SPEED_M_S} m/s): check units, rate and the landmark map"
                ),
            });
        }
    }
    for (name, length) in segment_lengths_m {
        let Some((_, share)) = SEGMENT_SHARES.iter().find(|(kind, _)| name.ends_with(kind)) else {
            continue;
        };
        let ratio = length / (share * stature_m);
        if !(SEGMENT_BAND.0..=SEGMENT_BAND.1).contains(&ratio) {
            out.push(Warning::Plausibility {
                message: format!(
                    "{name} is {length:.3} m long, {ratio:.2} times the usual {share} of stature: check the landmark map and the subject's height_m"
                ),
            });
        }
    }
    out
}

/// Median length (m) of each thigh and shank of the model over a sample of frames, for
/// [`implausible`]. `frame(f)` gives every marker of frame `f` (metres).
pub fn segment_lengths_m(
    body: &BodyModel,
    n_frames: usize,
    frame: impl Fn(usize) -> Vec<Option<[f64; 3]>>,
) -> Vec<(String, f64)> {
    let wanted: Vec<usize> = body
        .segments
        .iter()
        .enumerate()
        .filter(|(_, s)| SEGMENT_SHARES.iter().any(|(k, _)| s.name.ends_with(k)))
        .map(|(i, _)| i)
        .collect();
    if wanted.is_empty() || n_frames == 0 {
        return Vec::new();
    }
    let mut lengths: Vec<Vec<f64>> = vec![Vec::new(); wanted.len()];
    let mut points = Vec::new();
    for f in (0..n_frames).step_by((n_frames / SAMPLE_FRAMES).max(1)) {
        body.evaluate(&frame(f), &mut points);
        for (k, &i) in wanted.iter().enumerate() {
            let s = &body.segments[i];
            let at = |id: usize| points.get(id).copied().flatten();
            if let (Some(a), Some(b)) = (at(s.origin.id), at(s.other.id)) {
                let d = (a - b).norm();
                if d.is_finite() {
                    lengths[k].push(d);
                }
            }
        }
    }
    wanted
        .iter()
        .zip(lengths)
        .filter(|(_, l)| !l.is_empty())
        .map(|(&i, mut l)| (body.segments[i].name.clone(), median(&mut l)))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn detected(up: UpAxis, extent_m: f64, factor: Option<f64>) -> Detected {
        Detected {
            up_axis: Some(up),
            extent_m,
            unit_factor: factor,
        }
    }

    #[test]
    fn a_declared_axis_that_contradicts_the_layout_names_the_fix() {
        let mut config = Config::default();
        config.declared.up_axis = true;
        let y = UpAxis::parse("y").unwrap();
        let e = check(&detected(y, 0.9, Some(1.0)), &config, 1.75, "t.csv")
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("up_axis = \"z\" contradicts") && e.contains("up_axis = \"y\""),
            "{e}"
        );
    }

    #[test]
    fn metres_read_as_millimetres_name_the_unit_fix() {
        let config = Config::default();
        let e = check(
            &detected(UpAxis::Z, 0.0009, Some(1000.0)),
            &config,
            1.75,
            "t.csv",
        )
        .unwrap_err()
        .to_string();
        assert!(
            e.contains("no [input] units") && e.contains("units = \"m\""),
            "{e}"
        );
    }

    #[test]
    fn an_undeclared_agreeing_default_is_reported_as_detected() {
        let w = check(
            &detected(UpAxis::Z, 0.9, Some(1.0)),
            &Config::default(),
            1.75,
            "t",
        )
        .unwrap();
        assert_eq!(w.len(), 2);
    }

    #[test]
    fn a_thigh_of_half_the_stature_is_implausible() {
        let w = implausible(Some(0.55), Some(1.3), &[("l_thigh".into(), 0.85)], 1.75);
        assert_eq!(w.len(), 1);
        assert!(w[0].to_string().contains("l_thigh"));
        assert!(implausible(Some(0.55), Some(1.3), &[("l_thigh".into(), 0.43)], 1.75).is_empty());
    }
}
