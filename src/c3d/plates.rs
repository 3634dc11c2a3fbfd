//! Force plates of a C3D file (C3D user guide, c3d.org, "FORCE_PLATFORM"): per plate and analog
//! sample, the ground reaction force (N), its moment about the plate's transducer origin (N m),
//! both in the lab frame, and the center of pressure (CoP, m, lab frame).
//!
//! # Parameters read
//! FORCE_PLATFORM:USED, TYPE (at least USED entries), CHANNEL (analog channel numbers, 1-based,
//! dimensions (channels, plates)), CORNERS (3, 4, plates, POINT:UNITS, lab frame), ORIGIN
//! (3, plates, POINT:UNITS, plate frame), CAL_MATRIX (type 4), ZERO (first and last frame of
//! the baseline, 1-based; 0 = none).
//!
//! # Plate frame
//! The corners are numbered by quadrant of the plate frame: (+x, +y), (-x, +y), (-x, -y),
//! (+x, -y). The plate axes in the lab follow from that definition: x = unit((c1 + c4) -
//! (c2 + c3)), y = unit((c1 + c2) - (c3 + c4)), z = x cross y (y re-orthogonalised as z cross
//! x). The surface center is the mean of the corners. The plate z axis points into the plate.
//!
//! # ORIGIN sign
//! The specification defines ORIGIN as the vector from the transducer origin to the center of
//! the working surface in the plate frame, so its z is negative (the surface lies above the
//! transducer, against the plate's downward z). Some writers store the opposite vector
//! (z > 0). [`OriginSign::Auto`], the default, reads a positive z as that opposite vector and
//! negates all three components (with a warning); [`OriginSign::AsStored`] applies ORIGIN as
//! stored and [`OriginSign::Negated`] always negates it (`gravline convert --plate-origin`).
//!
//! # Types
//! - TYPE 1: channels Fx, Fy, Fz, Px, Py, Tz (the CoP in plate coordinates about the
//!   transducer origin, and the free moment); moments follow as r x F + Tz z.
//! - TYPE 2: Fx, Fy, Fz, Mx, My, Mz about the transducer origin, plate frame.
//! - TYPE 3: Fx12, Fx34, Fy14, Fy23, Fz1, Fz2, Fz3, Fz4 from four sensors under the corners
//!   (sensor k under corner k, at (+-a, +-b) with a, b = |ORIGIN(1)|, |ORIGIN(2)|, the
//!   sensors' half spacings; ORIGIN(3) is the depth of the surface). The resultant follows by
//!   statics: Fx = Fx12 + Fx34, Fy = Fy14 + Fy23, Fz = sum Fzk, Mx = b (Fz1 + Fz2 - Fz3 - Fz4),
//!   My = a (-Fz1 + Fz2 + Fz3 - Fz4), Mz = b (Fx34 - Fx12) + a (Fy14 - Fy23).
//! - TYPE 4: as TYPE 2 after the 6 x 6 CAL_MATRIX: corrected = CAL x measured, the matrix read
//!   in the specification's column order (first index = row, varying fastest). With a third
//!   dimension of at least USED the matrix of plate k is the k-th; otherwise the k-th of the
//!   type-4 plates. Not checked against a file of another writer (the c3d.org type-2/type-4
//!   pair is not among the samples at hand).
//! - Other types are skipped with a warning.
//!
//! # Force sign
//! The specification does not say whether the scaled channels are the load on the plate or the
//! load on the body. In both c3d.org sample recordings with plates (`formats-six`,
//! `formats-plates`) the scaled channels are the ground reaction on the body in the plate frame
//! (whose z points down by their corners): read so, the vertical force on the walker is upward
//! (about +820 N in stance) and the horizontal force first brakes, then propels, along the
//! direction of walking (tested). [`ForceSign::Reaction`], the default, reads them so;
//! [`ForceSign::Action`] reads them as the load on the plate and negates them
//! (`gravline convert --plate-force action`).
//!
//! # Mechanics (standard statics)
//! F and M are the channel loads about the transducer origin, plate frame (their sign does not
//! change the CoP). With the surface at plate z = oz (ORIGIN(3)): CoP px = (oz Fx - My) / Fz,
//! py = (Mx + oz Fy) / Fz; in the lab, CoP = center + R (px - ox, py - oy, 0). The ground
//! reaction on the body is R F (or -R F for [`ForceSign::Action`]) and its moment about the
//! transducer origin R M (or -R M), with R = [x y z]. The CoP is `None` where |Fz| is below
//! [`PlateOptions::min_force_n`].
//!
//! Units: forces are taken as N; moment channels by their ANALOG:UNITS (`Nmm`, `ntmm`, `N.mm`
//! are N mm; `Nm`, `N.m` are N m; anything else, such as the `V` of raw type-4 channels, is
//! taken as N x POINT:UNITS, every distance of a C3D file being in POINT:UNITS, with a warning);
//! type-1 CoP channels by their unit (mm, cm, m; else POINT:UNITS).
//!
//! TYPE 4: the specification stores CAL_MATRIX in column order (CAL_MATRIX(1,1,1) the first
//! element, CAL_MATRIX(6,1,1) the last of the first column) and applies it as
//! `[CAL] F_measured = F_corrected`; it is applied here to the channel values as scaled by
//! ANALOG:SCALE and GEN_SCALE, so the file's SCALE of those channels must be their unscaled
//! (volts per bit) value, as the specification requires of writers.

use super::params::Parameters;
use super::Analog;

/// How a stored FORCE_PLATFORM:ORIGIN is applied (module doc).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum OriginSign {
    /// As stored when its z is 0 or negative (the specification), negated when positive.
    #[default]
    Auto,
    /// As stored.
    AsStored,
    /// Always negated.
    Negated,
}

impl OriginSign {
    /// `auto`, `as-stored` or `negated`.
    pub fn parse(text: &str) -> Option<OriginSign> {
        match text {
            "auto" => Some(OriginSign::Auto),
            "as-stored" => Some(OriginSign::AsStored),
            "negated" => Some(OriginSign::Negated),
            _ => None,
        }
    }
}

/// What the plate channels hold once scaled (module doc, "Force sign").
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum ForceSign {
    /// The load the plate exerts on the body (the ground reaction), plate frame: the c3d.org
    /// samples.
    #[default]
    Reaction,
    /// The load the body exerts on the plate, plate frame.
    Action,
}

impl ForceSign {
    /// `reaction` or `action`.
    pub fn parse(text: &str) -> Option<ForceSign> {
        match text {
            "reaction" => Some(ForceSign::Reaction),
            "action" => Some(ForceSign::Action),
            _ => None,
        }
    }
}

/// How force plates are computed.
#[derive(Clone, Debug, PartialEq)]
pub struct PlateOptions {
    pub origin: OriginSign,
    pub force_sign: ForceSign,
    /// Subtract the mean over the FORCE_PLATFORM:ZERO frames from the force and moment channels.
    pub apply_zero: bool,
    /// Smallest |vertical force| with a CoP, N (common practice, no source: 10-20 N).
    pub min_force_n: f64,
}

impl Default for PlateOptions {
    fn default() -> Self {
        PlateOptions {
            origin: OriginSign::Auto,
            force_sign: ForceSign::Reaction,
            apply_zero: true,
            min_force_n: 10.0,
        }
    }
}

/// One analog sample of one plate.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PlateSample {
    /// Ground reaction force on the body, N, lab frame.
    pub force_n: [f64; 3],
    /// Moment of the ground reaction about the transducer origin, N m, lab frame.
    pub moment_nm: [f64; 3],
    /// Center of pressure, m, lab frame; `None` below the force threshold.
    pub cop_m: Option<[f64; 3]>,
}

/// One force plate.
#[derive(Clone, Debug, PartialEq)]
pub struct Plate {
    /// 1-based, as in the file.
    pub number: usize,
    pub plate_type: i32,
    /// Analog channels (1-based).
    pub channels: Vec<usize>,
    /// The four corners, m, lab frame.
    pub corners_m: [[f64; 3]; 4],
    /// Surface center (mean of the corners), m, lab frame.
    pub center_m: [f64; 3],
    /// ORIGIN as applied (after [`OriginSign`]), m, plate frame.
    pub origin_m: [f64; 3],
    /// Transducer origin, m, lab frame (the point the moments are taken about).
    pub transducer_m: [f64; 3],
    /// Plate axes x, y, z in the lab frame.
    pub axes: [[f64; 3]; 3],
    /// Baseline subtracted from each channel (in its units; 0 where none).
    pub baseline: Vec<f64>,
    /// One per analog sample.
    pub samples: Vec<PlateSample>,
}

/// The force plates of a file.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ForcePlates {
    /// Analog rate, Hz.
    pub rate_hz: f64,
    /// Time of the first analog sample, s (0: the time of the first stored frame).
    pub first_sample_s: f64,
    pub plates: Vec<Plate>,
}

type V3 = [f64; 3];

fn sub(a: V3, b: V3) -> V3 {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}
fn add(a: V3, b: V3) -> V3 {
    [a[0] + b[0], a[1] + b[1], a[2] + b[2]]
}
fn cross(a: V3, b: V3) -> V3 {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}
fn unit(a: V3) -> Option<V3> {
    let n = (a[0] * a[0] + a[1] * a[1] + a[2] * a[2]).sqrt();
    (n > 0.0 && n.is_finite()).then(|| [a[0] / n, a[1] / n, a[2] / n])
}
/// R v with R's columns `axes`.
fn rotate(axes: &[V3; 3], v: V3) -> V3 {
    let mut out = [0.0; 3];
    for (k, o) in out.iter_mut().enumerate() {
        *o = axes[0][k] * v[0] + axes[1][k] * v[1] + axes[2][k] * v[2];
    }
    out
}

/// Metres per unit of a length (`mm`, `cm`, `m`), or `None`.
fn metres_per(unit: &str) -> Option<f64> {
    match unit {
        "mm" => Some(1e-3),
        "cm" => Some(1e-2),
        "m" => Some(1.0),
        _ => None,
    }
}

/// Metres per length unit of a moment channel's unit (`Nmm`, `ntmm`, `N.m` ...).
fn moment_metres(unit: &str) -> Option<f64> {
    let u: String = unit
        .to_ascii_lowercase()
        .chars()
        .filter(|c| !matches!(c, ' ' | '.' | '*' | '-' | '_' | '\u{b7}'))
        .collect();
    let rest = u
        .strip_prefix("newton")
        .or_else(|| u.strip_prefix("nt"))
        .or_else(|| u.strip_prefix('n'))?;
    metres_per(rest)
}

fn skip(warnings: &mut Vec<String>, k: usize, why: String) {
    warnings.push(format!("force plate {k} is skipped: {why}"));
}

/// The plates of a file; `to_mm` converts POINT:UNITS to mm.
pub fn compute(
    params: &Parameters,
    analog: &Analog,
    n_frames: usize,
    to_mm: f64,
    opts: &PlateOptions,
    warnings: &mut Vec<String>,
) -> Result<ForcePlates, String> {
    let mut out = ForcePlates {
        rate_hz: analog.rate_hz,
        first_sample_s: 0.0,
        plates: Vec::new(),
    };
    let used = params
        .get("FORCE_PLATFORM", "USED")
        .and_then(|p| p.first_unsigned())
        .unwrap_or(0.0) as usize;
    if used == 0 {
        return Ok(out);
    }
    let n_analog = analog.values.len();
    let types = params
        .get("FORCE_PLATFORM", "TYPE")
        .and_then(|p| p.numbers())
        .unwrap_or_default();
    let used = if used > types.len() {
        warnings.push(format!(
            "FORCE_PLATFORM:USED is {used} but TYPE has {} entries; only those plates are read",
            types.len()
        ));
        types.len()
    } else {
        used
    };
    let channel_param = params.get("FORCE_PLATFORM", "CHANNEL");
    let channels = channel_param.and_then(|p| p.numbers()).unwrap_or_default();
    let ch_stride = channel_param
        .and_then(|p| p.dims.first().copied())
        .unwrap_or(6)
        .max(1);
    let corners = params
        .get("FORCE_PLATFORM", "CORNERS")
        .and_then(|p| p.numbers())
        .unwrap_or_default();
    let origins = params
        .get("FORCE_PLATFORM", "ORIGIN")
        .and_then(|p| p.numbers())
        .unwrap_or_default();
    let cal_param = params.get("FORCE_PLATFORM", "CAL_MATRIX");
    let cal = cal_param.and_then(|p| p.numbers()).unwrap_or_default();
    let cal_by_plate = cal_param
        .and_then(|p| p.dims.get(2).copied())
        .is_some_and(|d| d >= used);
    let zero = params
        .get("FORCE_PLATFORM", "ZERO")
        .and_then(|p| p.numbers())
        .unwrap_or_default();
    let spf = analog.samples_per_frame.max(1);
    let n_samples = analog.values.first().map_or(0, |v| v.len());
    // Baseline samples.
    let baseline_range = match (opts.apply_zero, zero.as_slice()) {
        (true, [first, last, ..]) if *first >= 1.0 && *last >= *first => {
            let (f, l) = (*first as usize, (*last as usize).min(n_frames));
            if f > n_frames {
                warnings.push(format!(
                    "FORCE_PLATFORM:ZERO frames {f} to {} lie past the last frame ({n_frames}); no baseline is subtracted",
                    *last as usize
                ));
                None
            } else {
                Some(((f - 1) * spf, l * spf))
            }
        }
        _ => None,
    };
    let mut type4_seen = 0usize;
    let sign = match opts.force_sign {
        ForceSign::Reaction => 1.0,
        ForceSign::Action => -1.0,
    };
    let to_m = to_mm * 1e-3;
    for k in 0..used {
        let number = k + 1;
        let Some(&t) = types.get(k) else {
            skip(
                warnings,
                number,
                "FORCE_PLATFORM:TYPE has no entry for it".into(),
            );
            continue;
        };
        let t = t as i32;
        let n_ch = match t {
            1 | 2 | 4 => 6,
            3 => 8,
            other => {
                skip(
                    warnings,
                    number,
                    format!("its TYPE {other} is not one gravline reads (1 to 4)"),
                );
                continue;
            }
        };
        let cal_index = if t == 4 {
            type4_seen += 1;
            Some(if cal_by_plate { k } else { type4_seen - 1 })
        } else {
            None
        };
        let Some(ch) = channels.get(k * ch_stride..k * ch_stride + n_ch) else {
            skip(
                warnings,
                number,
                format!("FORCE_PLATFORM:CHANNEL has no {n_ch} channels for it"),
            );
            continue;
        };
        let ch: Vec<usize> = ch.iter().map(|&c| c as usize).collect();
        if let Some(bad) = ch.iter().find(|&&c| c < 1 || c > n_analog) {
            skip(warnings, number, format!("FORCE_PLATFORM:CHANNEL names analog channel {bad}, and the file has {n_analog}"));
            continue;
        }
        let Some(c) = corners.get(k * 12..k * 12 + 12) else {
            skip(
                warnings,
                number,
                "FORCE_PLATFORM:CORNERS has no corners for it".into(),
            );
            continue;
        };
        let corner = |i: usize| [c[3 * i] * to_m, c[3 * i + 1] * to_m, c[3 * i + 2] * to_m];
        let cs = [corner(0), corner(1), corner(2), corner(3)];
        let x = unit(sub(add(cs[0], cs[3]), add(cs[1], cs[2])));
        let y = unit(sub(add(cs[0], cs[1]), add(cs[2], cs[3])));
        let axes = match (x, y) {
            (Some(x), Some(y)) => match unit(cross(x, y)) {
                Some(z) => [x, cross(z, x), z],
                None => {
                    skip(warnings, number, "its corners do not span a plane".into());
                    continue;
                }
            },
            _ => {
                skip(warnings, number, "its corners do not span a plane".into());
                continue;
            }
        };
        let center = [
            (cs[0][0] + cs[1][0] + cs[2][0] + cs[3][0]) / 4.0,
            (cs[0][1] + cs[1][1] + cs[2][1] + cs[3][1]) / 4.0,
            (cs[0][2] + cs[1][2] + cs[2][2] + cs[3][2]) / 4.0,
        ];
        let stored = match origins.get(k * 3..k * 3 + 3) {
            Some(o) => [o[0] * to_m, o[1] * to_m, o[2] * to_m],
            None => {
                warnings.push(format!(
                    "force plate {number}: FORCE_PLATFORM:ORIGIN is missing; the transducer is taken at the surface center"
                ));
                [0.0; 3]
            }
        };
        let negate = match opts.origin {
            OriginSign::AsStored => false,
            OriginSign::Negated => true,
            OriginSign::Auto => {
                if stored[2] > 0.0 {
                    warnings.push(format!(
                        "force plate {number}: FORCE_PLATFORM:ORIGIN has a positive z ({} m); it is read as the vector from the surface center to the transducer and negated (choose with --plate-origin)",
                        stored[2]
                    ));
                }
                stored[2] > 0.0
            }
        };
        let origin = if negate {
            [-stored[0], -stored[1], -stored[2]]
        } else {
            stored
        };
        // The offset of the surface center from the transducer origin, plate frame; type 3's
        // ORIGIN(1, 2) are sensor spacings instead.
        let surface = if t == 3 {
            [0.0, 0.0, origin[2]]
        } else {
            origin
        };
        let transducer = sub(center, rotate(&axes, surface));

        let matrix: Option<Vec<f64>> = match cal_index {
            Some(i) => match cal.get(i * 36..i * 36 + 36) {
                Some(m) => Some(m.to_vec()),
                None => {
                    skip(
                        warnings,
                        number,
                        "it is TYPE 4 and FORCE_PLATFORM:CAL_MATRIX has no 6 x 6 matrix for it"
                            .into(),
                    );
                    continue;
                }
            },
            None => None,
        };

        // Units of the channels.
        let unit_of = |c: usize| analog.units.get(c - 1).map_or("", |s| s.as_str());
        let moment_to_m = |c: usize, warnings: &mut Vec<String>| match moment_metres(unit_of(c)) {
            Some(f) => f,
            None => {
                warnings.push(format!(
                    "force plate {number}: analog channel {c} (`{}`) has unit `{}`; its moments are read in N x POINT:UNITS",
                    analog.labels.get(c - 1).map_or("", |s| s.as_str()),
                    unit_of(c)
                ));
                to_m
            }
        };
        let (m_scale, p_scale) = match t {
            1 => {
                let p = |c: usize| metres_per(&unit_of(c).to_ascii_lowercase()).unwrap_or(to_m);
                let tz = moment_to_m(ch[5], warnings);
                ([1.0, 1.0, tz], [p(ch[3]), p(ch[4])])
            }
            2 | 4 => (
                [
                    moment_to_m(ch[3], warnings),
                    moment_to_m(ch[4], warnings),
                    moment_to_m(ch[5], warnings),
                ],
                [1.0, 1.0],
            ),
            _ => ([1.0; 3], [1.0, 1.0]),
        };

        // Baselines (force and moment channels only: not type 1's CoP channels).
        let mut baseline = vec![0.0; n_ch];
        if let Some((s0, s1)) = baseline_range {
            let s1 = s1.min(n_samples);
            if s1 > s0 {
                for (j, b) in baseline.iter_mut().enumerate() {
                    if t == 1 && (j == 3 || j == 4) {
                        continue;
                    }
                    let v = &analog.values[ch[j] - 1][s0..s1];
                    *b = v.iter().sum::<f64>() / v.len() as f64;
                }
            }
        }

        let (a, b) = (origin[0].abs(), origin[1].abs());
        let oz = origin[2];
        let mut samples = Vec::with_capacity(n_samples);
        let mut v = vec![0.0; n_ch];
        for s in 0..n_samples {
            for j in 0..n_ch {
                v[j] = analog.values[ch[j] - 1][s] - baseline[j];
            }
            let (f, m, cop): (V3, V3, Option<[f64; 2]>) = match t {
                1 => {
                    let f = [v[0], v[1], v[2]];
                    let (px, py) = (v[3] * p_scale[0], v[4] * p_scale[1]);
                    let r = [px, py, oz];
                    let rf = cross(r, f);
                    let m = [rf[0], rf[1], rf[2] + v[5] * m_scale[2]];
                    (f, m, Some([px, py]))
                }
                3 => {
                    let f = [v[0] + v[1], v[2] + v[3], v[4] + v[5] + v[6] + v[7]];
                    let m = [
                        b * (v[4] + v[5] - v[6] - v[7]),
                        a * (-v[4] + v[5] + v[6] - v[7]),
                        b * (v[1] - v[0]) + a * (v[2] - v[3]),
                    ];
                    (f, m, None)
                }
                _ => {
                    let w: [f64; 6] = match &matrix {
                        Some(c) => {
                            let mut w = [0.0; 6];
                            for (row, o) in w.iter_mut().enumerate() {
                                *o = (0..6).map(|col| c[row + 6 * col] * v[col]).sum();
                            }
                            w
                        }
                        None => [v[0], v[1], v[2], v[3], v[4], v[5]],
                    };
                    (
                        [w[0], w[1], w[2]],
                        [w[3] * m_scale[0], w[4] * m_scale[1], w[5] * m_scale[2]],
                        None,
                    )
                }
            };
            let cop_plate = if f[2].abs() < opts.min_force_n {
                None
            } else {
                Some(cop.unwrap_or([(oz * f[0] - m[1]) / f[2], (m[0] + oz * f[1]) / f[2]]))
            };
            let cop_m = cop_plate.map(|[px, py]| {
                let (ox, oy) = if t == 3 {
                    (0.0, 0.0)
                } else {
                    (origin[0], origin[1])
                };
                add(center, rotate(&axes, [px - ox, py - oy, 0.0]))
            });
            let fl = rotate(&axes, f);
            let ml = rotate(&axes, m);
            samples.push(PlateSample {
                force_n: [sign * fl[0], sign * fl[1], sign * fl[2]],
                moment_nm: [sign * ml[0], sign * ml[1], sign * ml[2]],
                cop_m,
            });
        }
        out.plates.push(Plate {
            number,
            plate_type: t,
            channels: ch,
            corners_m: cs,
            center_m: center,
            origin_m: origin,
            transducer_m: transducer,
            axes,
            baseline,
            samples,
        });
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn moment_units() {
        assert_eq!(moment_metres("Nmm"), Some(1e-3));
        assert_eq!(moment_metres("ntmm"), Some(1e-3));
        assert_eq!(moment_metres("N.m"), Some(1.0));
        assert_eq!(moment_metres("N m"), Some(1.0));
        assert_eq!(moment_metres("V"), None);
    }

    #[test]
    fn axes_of_a_plate_with_z_down() {
        // Corners of a 0.4 x 0.6 m plate whose x is lab x and y lab -y (so z is lab -z).
        let cs = [
            [0.2, -0.3, 0.0],
            [-0.2, -0.3, 0.0],
            [-0.2, 0.3, 0.0],
            [0.2, 0.3, 0.0],
        ];
        let x = unit(sub(add(cs[0], cs[3]), add(cs[1], cs[2]))).unwrap();
        let y = unit(sub(add(cs[0], cs[1]), add(cs[2], cs[3]))).unwrap();
        assert_eq!(x, [1.0, 0.0, 0.0]);
        assert_eq!(y, [0.0, -1.0, 0.0]);
        assert_eq!(cross(x, y), [0.0, 0.0, -1.0]);
    }
}
