//! Segment coordinate systems and the joint centers of tables that place the CoM in 3-D
//! (stage 3, body model).
//!
//! Inputs: points of the body model in the lab frame (metres). Outputs: per segment an
//! orthonormal frame and the CoM `O + L (cx x + cy y + cz z)`, with the table's offsets
//! `(cx, cy, cz)` as shares of the segment length L (metres).
//!
//! - Segment frames after the ISB recommendations (Wu et al. 2002, J Biomech 35:543, lower
//!   limb and pelvis; Wu et al. 2005, J Biomech 38:981, upper limb), as used by Dumas, Cheze &
//!   Verriest 2007 (J Biomech 40:543): origin at the proximal JC (the cervical JC for head and
//!   torso, the lumbar JC for the pelvis), y along the segment from the distal to the proximal JC
//!   (head: from the cervical JC toward the vertex), z toward the subject's right in the plane of
//!   y and the segment's own medio-lateral markers (epicondyles, malleoli, styloids, metatarsal
//!   heads), x = y x z (anterior). The pelvis uses the ISB pelvis frame of the ASIS and PSIS.
//!   The foot's x runs from the heel toward the metatarsal heads, levelled against the
//!   medio-lateral axis, y = z x x (up).
//! - Left segments: the frame keeps z toward the subject's right (right-handed) and the table's
//!   z offset is negated, the mirror image of the right side (Dumas et al. 2007; Dumas &
//!   Wojtusch 2018, Handbook of Human Motion, Springer, "transformation from right to left").
//! - Cervical JC (C7/T1) and shoulder JC from C7, the jugular notch and the acromion: a point at
//!   `s w` from C7 (or the acromion) at angle theta above the C7-to-jugular line in the sagittal
//!   plane, w = |jugular - C7|; men theta 8 deg, s 0.55 (CJC), theta -11 deg, s 0.33 (SJC);
//!   women 14 deg / 0.53 and -5 deg / 0.36 (Dumas et al. 2007, Table 1, after Reed, Manary &
//!   Schneider 1999, SAE 1999-01-0959; the attribution to Reed is from memory).
//! - Lumbar JC (L5/S1) in the ISB pelvis frame, as shares of the inter-ASIS width PW: men
//!   (-0.335, -0.032, 0), women (-0.340, 0.049, 0); right hip JC (`hip = "dumas-2007"`): men
//!   (-0.095, -0.370, 0.361), women (-0.139, -0.336, 0.372), the left negating z (Dumas et al.
//!   2007, Table 1, as transcribed in Dumas & Wojtusch 2018).
//!
//! Each estimate or stand-in for a landmark the table is defined on is a warning of the body
//! model.

use super::joints::{PelvisFrame, P};
use super::model::{LandmarkError, PointId, Resolver};
use super::vocabulary::Side;
use crate::anthropometry::{SegmentKind, Sex};
use crate::warning::Warning;

/// An orthonormal segment frame in the lab: origin and unit axes x (anterior), y (long axis),
/// z (right).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SegmentFrame {
    pub origin: P,
    pub x: P,
    pub y: P,
    pub z: P,
}

impl SegmentFrame {
    /// y along `long_axis`; z toward `right`, made orthogonal to y; x = y x z. `None` when the
    /// axes are degenerate (zero or parallel).
    ///
    /// A right thigh flexed 14 degrees (x forward, y up, z right in the lab):
    /// ```
    /// use gravline::body::frames::SegmentFrame;
    /// use nalgebra::Vector3;
    /// let f = SegmentFrame::from_long_axis(
    ///     Vector3::new(0.0, 0.9, 0.1),
    ///     Vector3::new(-0.1, 0.4, 0.0),
    ///     Vector3::new(0.0, 0.0, 1.0),
    /// )
    /// .unwrap();
    /// assert!((f.x - Vector3::new(0.970143, 0.242536, 0.0)).norm() < 1e-6);
    /// ```
    pub fn from_long_axis(origin: P, long_axis: P, right: P) -> Option<SegmentFrame> {
        let y = long_axis.try_normalize(1e-9)?;
        let x = y.cross(&right).try_normalize(1e-9)?;
        let z = x.cross(&y);
        Some(SegmentFrame { origin, x, y, z })
    }

    /// x toward `forward`, made orthogonal to `right`; y = z x x; z = x x y.
    pub fn from_forward(origin: P, forward: P, right: P) -> Option<SegmentFrame> {
        let z0 = right.try_normalize(1e-9)?;
        let x = (forward - forward.dot(&z0) * z0).try_normalize(1e-9)?;
        let y = z0.cross(&x);
        let z = x.cross(&y);
        Some(SegmentFrame { origin, x, y, z })
    }

    /// A point given in frame coordinates (metres).
    pub fn to_lab(&self, local: [f64; 3]) -> P {
        self.origin + self.x * local[0] + self.y * local[1] + self.z * local[2]
    }
}

/// The table's right-side CoM offset for a segment of `side` (left: z negated).
pub fn mirrored(offset: [f64; 3], side: Option<Side>) -> [f64; 3] {
    match side {
        Some(Side::Left) => [offset[0], offset[1], -offset[2]],
        _ => offset,
    }
}

/// (theta in degrees, s) of the cervical JC and of the shoulder JC (module doc).
fn thorax_coefficients(sex: Sex) -> ((f64, f64), (f64, f64)) {
    match sex {
        Sex::Male => ((8.0, 0.55), (-11.0, 0.33)),
        Sex::Female => ((14.0, 0.53), (-5.0, 0.36)),
    }
}

/// Lumbar JC in the ISB pelvis frame as shares of the inter-ASIS width (module doc).
fn lumbar_coefficients(sex: Sex) -> [f64; 3] {
    match sex {
        Sex::Male => [-0.335, -0.032, 0.0],
        Sex::Female => [-0.340, 0.049, 0.0],
    }
}

/// `base + s w (cos theta x_c + sin theta y_c)`: x_c from C7 to the jugular notch, y_c in the
/// sagittal plane (normal to `right`), upward.
fn thorax_point(base: P, c7: P, jugular: P, right: P, theta_deg: f64, s: f64) -> Option<P> {
    let d = jugular - c7;
    let w = d.norm();
    let xc = d.try_normalize(1e-9)?;
    let yc = right.cross(&xc).try_normalize(1e-9)?;
    let t = theta_deg.to_radians();
    Some(base + (xc * t.cos() + yc * t.sin()) * (s * w))
}

/// Cervical JC (C7/T1) from C7, the jugular notch and a vector toward the subject's right.
pub fn cervical_jc(c7: P, jugular: P, right: P, sex: Sex) -> Option<P> {
    let ((theta, s), _) = thorax_coefficients(sex);
    thorax_point(c7, c7, jugular, right, theta, s)
}

/// Shoulder JC from the acromion, C7, the jugular notch and a vector toward the right.
pub fn shoulder_jc(acromion: P, c7: P, jugular: P, right: P, sex: Sex) -> Option<P> {
    let (_, (theta, s)) = thorax_coefficients(sex);
    thorax_point(acromion, c7, jugular, right, theta, s)
}

/// Lumbar JC (L5/S1) in the lab from the pelvis frame.
pub fn lumbar_jc(pelvis: &PelvisFrame, sex: Sex) -> P {
    let c = lumbar_coefficients(sex);
    pelvis.to_lab(c.map(|k| k * pelvis.width_m))
}

/// Right hip JC in the ISB pelvis frame as shares of the inter-ASIS width (module doc); the
/// left hip negates z.
fn hip_coefficients(sex: Sex) -> [f64; 3] {
    match sex {
        Sex::Male => [-0.095, -0.370, 0.361],
        Sex::Female => [-0.139, -0.336, 0.372],
    }
}

/// Hip JC of Dumas 2007 in the lab from the pelvis frame (`right` for the right hip).
pub fn dumas_hip_jc(pelvis: &PelvisFrame, right: bool, sex: Sex) -> P {
    let [x, y, z] = hip_coefficients(sex).map(|k| k * pelvis.width_m);
    pelvis.to_lab([x, y, if right { z } else { -z }])
}

/// A joint center of this module, as a point definition of the body model.
#[derive(Clone, Debug, PartialEq)]
pub enum JointDef {
    Cervical {
        c7: PointId,
        jugular: PointId,
        right: [PointId; 2],
        sex: Sex,
    },
    Shoulder {
        acromion: PointId,
        c7: PointId,
        jugular: PointId,
        right: [PointId; 2],
        sex: Sex,
    },
    Lumbar {
        l_asis: PointId,
        r_asis: PointId,
        mid_psis: PointId,
        sex: Sex,
    },
    Hip {
        l_asis: PointId,
        r_asis: PointId,
        mid_psis: PointId,
        right: bool,
        sex: Sex,
    },
}

impl JointDef {
    /// The point in one frame, from the points evaluated before it.
    pub fn evaluate(&self, get: impl Fn(PointId) -> Option<P>) -> Option<P> {
        let right = |pair: &[PointId; 2]| Some(get(pair[0])? - get(pair[1])?);
        match self {
            JointDef::Cervical {
                c7,
                jugular,
                right: pair,
                sex,
            } => cervical_jc(get(*c7)?, get(*jugular)?, right(pair)?, *sex),
            JointDef::Shoulder {
                acromion,
                c7,
                jugular,
                right: pair,
                sex,
            } => shoulder_jc(
                get(*acromion)?,
                get(*c7)?,
                get(*jugular)?,
                right(pair)?,
                *sex,
            ),
            JointDef::Lumbar {
                l_asis,
                r_asis,
                mid_psis,
                sex,
            } => PelvisFrame::new(get(*l_asis)?, get(*r_asis)?, get(*mid_psis)?)
                .map(|f| lumbar_jc(&f, *sex)),
            JointDef::Hip {
                l_asis,
                r_asis,
                mid_psis,
                right,
                sex,
            } => PelvisFrame::new(get(*l_asis)?, get(*r_asis)?, get(*mid_psis)?)
                .map(|f| dumas_hip_jc(&f, *right, *sex)),
        }
    }
}

/// How a segment's axes are found in a frame.
#[derive(Clone, Debug, PartialEq)]
enum Axes {
    /// y = unit(to - from); z toward `right[0] - right[1]`.
    Long {
        from: PointId,
        to: PointId,
        right: [PointId; 2],
    },
    /// The ISB pelvis frame.
    Pelvis {
        l_asis: PointId,
        r_asis: PointId,
        mid_psis: PointId,
    },
    /// x from the heel toward the segment's distal endpoint; z toward `right[0] - right[1]`.
    Foot { heel: PointId, right: [PointId; 2] },
}

/// The CoM of one segment from a 3-D offset in its frame.
#[derive(Clone, Debug, PartialEq)]
pub struct FrameCom {
    axes: Axes,
    origin: PointId,
    other: PointId,
    /// Offset as shares of the segment length, already mirrored for a left segment.
    offset: [f64; 3],
}

impl FrameCom {
    /// The segment's frame and length (metres) in one frame of the trial.
    pub fn frame(&self, get: impl Fn(PointId) -> Option<P>) -> Option<(SegmentFrame, f64)> {
        let o = get(self.origin)?;
        let t = get(self.other)?;
        match &self.axes {
            Axes::Long { from, to, right } => {
                let f = SegmentFrame::from_long_axis(
                    o,
                    get(*to)? - get(*from)?,
                    get(right[0])? - get(right[1])?,
                )?;
                Some((f, (t - o).norm()))
            }
            Axes::Pelvis {
                l_asis,
                r_asis,
                mid_psis,
            } => {
                let p = PelvisFrame::new(get(*l_asis)?, get(*r_asis)?, get(*mid_psis)?)?;
                // Length: lumbar JC to the hip JCs' midpoint projected on the sagittal plane.
                let d = t - o;
                let length = (d - d.dot(&p.z) * p.z).norm();
                let f = SegmentFrame {
                    origin: o,
                    x: p.x,
                    y: p.y,
                    z: p.z,
                };
                Some((f, length))
            }
            Axes::Foot { heel, right } => {
                let f = SegmentFrame::from_forward(
                    o,
                    t - get(*heel)?,
                    get(right[0])? - get(right[1])?,
                )?;
                Some((f, (t - o).norm()))
            }
        }
    }

    /// The segment CoM in the lab, metres.
    pub fn com(&self, get: impl Fn(PointId) -> Option<P>) -> Option<P> {
        let (f, length) = self.frame(get)?;
        Some(f.to_lab(self.offset.map(|c| c * length)))
    }
}

/// The lateral and medial markers whose line is a segment's medio-lateral axis, in order of
/// preference, and the whole-body pair used when neither is marked.
fn axis_markers(kind: SegmentKind) -> (&'static [(&'static str, &'static str)], &'static str) {
    match kind {
        SegmentKind::UpperArm => (&[("elbow_lat", "elbow_med")], "acromion"),
        SegmentKind::Forearm | SegmentKind::Hand => (
            &[("wrist_rad", "wrist_uln"), ("elbow_lat", "elbow_med")],
            "acromion",
        ),
        SegmentKind::Thigh => (&[("knee_lat", "knee_med")], "asis"),
        SegmentKind::Shank => (
            &[("ankle_lat", "ankle_med"), ("knee_lat", "knee_med")],
            "asis",
        ),
        SegmentKind::Foot => (&[("mt5", "mt1"), ("ankle_lat", "ankle_med")], "asis"),
        _ => (&[], "acromion"),
    }
}

impl Resolver<'_> {
    /// The pair (point toward the right, point toward the left) of a segment's medio-lateral
    /// axis: its own lateral and medial markers when both exist, else the pair of the whole
    /// body (acromions or ASIS), with a warning.
    fn right_pair(
        &mut self,
        segment: &str,
        kind: SegmentKind,
        side: Option<Side>,
    ) -> Result<[PointId; 2], LandmarkError> {
        let (pairs, body) = axis_markers(kind);
        if let Some(side) = side {
            for (lat, med) in pairs {
                let (lat, med) = (side.name(lat), side.name(med));
                if self.is_available(&lat) && self.is_available(&med) {
                    let (l, m) = (self.resolve(&lat)?, self.resolve(&med)?);
                    // The lateral marker is to the right on the right side.
                    return Ok(if side == Side::Right { [l, m] } else { [m, l] });
                }
            }
        }
        let body = if kind == SegmentKind::Head
            && ["l_head_front", "r_head_front"]
                .iter()
                .all(|n| self.is_available(n))
        {
            "head_front"
        } else if self.is_available("r_acromion") && self.is_available("l_acromion") {
            body
        } else {
            "asis"
        };
        let pair = [
            self.resolve(&Side::Right.name(body))?,
            self.resolve(&Side::Left.name(body))?,
        ];
        if !pairs.is_empty() {
            self.warnings.push(Warning::Approximation {
                what: format!(
                    "{segment} frame: medio-lateral axis from the two `{body}` markers (the segment's own lateral and medial markers are missing)"
                ),
            });
        }
        Ok(pair)
    }

    /// The 3-D CoM definition of a segment with a table offset (`offset` for the right side).
    pub(super) fn frame_com(
        &mut self,
        segment: &str,
        kind: SegmentKind,
        side: Option<Side>,
        origin: PointId,
        other: PointId,
        offset: [f64; 3],
    ) -> Result<FrameCom, LandmarkError> {
        let axes = match kind {
            SegmentKind::Head => Axes::Long {
                from: origin,
                to: other,
                right: self.right_pair(segment, kind, side)?,
            },
            SegmentKind::Pelvis => Axes::Pelvis {
                l_asis: self.resolve("l_asis")?,
                r_asis: self.resolve("r_asis")?,
                mid_psis: self.resolve("mid_psis")?,
            },
            SegmentKind::Foot => {
                let heel = side.map_or("heel".to_string(), |s| s.name("heel"));
                Axes::Foot {
                    heel: self.resolve(&heel)?,
                    right: self.right_pair(segment, kind, side)?,
                }
            }
            SegmentKind::Trunk
            | SegmentKind::UpperArm
            | SegmentKind::Forearm
            | SegmentKind::Hand
            | SegmentKind::Thigh
            | SegmentKind::Shank => Axes::Long {
                from: other,
                to: origin,
                right: self.right_pair(segment, kind, side)?,
            },
            SegmentKind::UpperTrunk | SegmentKind::MiddleTrunk | SegmentKind::LowerTrunk => {
                return Err(LandmarkError::NeedsMeasurement {
                    landmark: segment.to_string(),
                    what: "a segment frame".to_string(),
                    hint: "3-D CoM offsets are defined for head, trunk, pelvis and limb segments"
                        .to_string(),
                })
            }
        };
        if kind == SegmentKind::Hand {
            self.warnings.push(Warning::Approximation {
                what: format!("{segment}: length to the 3rd metacarpal head (`hand`) in place of the midpoint of the 2nd and 5th metacarpal heads"),
            });
        }
        Ok(FrameCom {
            axes,
            origin,
            other,
            offset: mirrored(offset, side),
        })
    }

    /// The cervical JC (C7/T1) of Dumas 2007 from C7 and the jugular notch.
    pub(super) fn cervical_jc(&mut self, name: &str) -> Result<PointId, LandmarkError> {
        let c7 = self.resolve("c7")?;
        let jugular = self.resolve("jugular")?;
        let right = self.right_pair(name, SegmentKind::Trunk, None)?;
        self.warnings.push(Warning::Approximation {
            what: format!("{name} estimated from C7 and the jugular notch (Dumas 2007 regression)"),
        });
        let sex = self.subject.sex;
        Ok(self.push_joint(
            name,
            JointDef::Cervical {
                c7,
                jugular,
                right,
                sex,
            },
        ))
    }

    /// The lumbar JC (L5/S1) of Dumas 2007 in the pelvis frame.
    pub(super) fn lumbar_jc(&mut self, name: &str) -> Result<PointId, LandmarkError> {
        let l_asis = self.resolve("l_asis")?;
        let r_asis = self.resolve("r_asis")?;
        let mid_psis = self.resolve("mid_psis")?;
        self.warnings.push(Warning::Approximation {
            what: format!(
                "{name} estimated in the pelvis frame from the ASIS width (Dumas 2007 regression)"
            ),
        });
        let sex = self.subject.sex;
        Ok(self.push_joint(
            name,
            JointDef::Lumbar {
                l_asis,
                r_asis,
                mid_psis,
                sex,
            },
        ))
    }

    /// The hip JC of Dumas 2007 in the pelvis frame (`[model] hip = "dumas-2007"`).
    pub(super) fn dumas_hip_jc(
        &mut self,
        name: &str,
        side: Side,
    ) -> Result<PointId, LandmarkError> {
        let l_asis = self.resolve("l_asis")?;
        let r_asis = self.resolve("r_asis")?;
        let mid_psis = self.resolve("mid_psis")?;
        let sex = self.subject.sex;
        Ok(self.push_joint(
            name,
            JointDef::Hip {
                l_asis,
                r_asis,
                mid_psis,
                right: side == Side::Right,
                sex,
            },
        ))
    }

    /// The shoulder JC of Dumas 2007 from the acromion, C7 and the jugular notch; `None` when
    /// C7 or the jugular notch is not marked (the caller then uses its own method).
    pub(super) fn thorax_shoulder_jc(
        &mut self,
        name: &str,
        side: Side,
    ) -> Result<Option<PointId>, LandmarkError> {
        if !(self.is_available("c7") && self.is_available("jugular")) {
            return Ok(None);
        }
        let acromion = self.resolve(&side.name("acromion"))?;
        let c7 = self.resolve("c7")?;
        let jugular = self.resolve("jugular")?;
        let right = self.right_pair(name, SegmentKind::Trunk, None)?;
        self.warnings.push(Warning::Approximation {
            what: format!(
                "{name} estimated from the acromion, C7 and the jugular notch (Dumas 2007 regression)"
            ),
        });
        let sex = self.subject.sex;
        Ok(Some(self.push_joint(
            name,
            JointDef::Shoulder {
                acromion,
                c7,
                jugular,
                right,
                sex,
            },
        )))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;

    /// Dumas 2007 male right thigh, flexed hip: the worked check value (derived from the
    /// published Table 2 offsets -4.1, -42.9, 3.3 %): CoM (0.026500, 0.724300, 0.113606) m;
    /// the mirrored left thigh has z -0.113606.
    #[test]
    fn flexed_thigh_check_value() {
        let hjc = P::new(0.0, 0.900, 0.100);
        let kjc = P::new(0.100, 0.500, 0.100);
        let f = SegmentFrame::from_long_axis(hjc, hjc - kjc, P::new(0.0, 0.0, 1.0)).unwrap();
        let length = (kjc - hjc).norm();
        assert_abs_diff_eq!(length, 0.412311, epsilon = 1e-6);
        let c = [-0.041, -0.429, 0.033];
        let right = f.to_lab(mirrored(c, Some(Side::Right)).map(|k| k * length));
        assert_abs_diff_eq!(right, P::new(0.026500, 0.724300, 0.113606), epsilon = 1e-6);
        // Left thigh: the mirror image across the plane z = 0, frame z still to the right.
        let (hl, kl) = (P::new(0.0, 0.9, -0.1), P::new(0.1, 0.5, -0.1));
        let f = SegmentFrame::from_long_axis(hl, hl - kl, P::new(0.0, 0.0, 1.0)).unwrap();
        let left = f.to_lab(mirrored(c, Some(Side::Left)).map(|k| k * length));
        assert_abs_diff_eq!(left, P::new(0.026500, 0.724300, -0.113606), epsilon = 1e-6);
    }

    /// A frame is right-handed and orthonormal whatever the hint's tilt.
    #[test]
    fn frames_are_orthonormal() {
        let f =
            SegmentFrame::from_long_axis(P::zeros(), P::new(0.1, 1.0, -0.2), P::new(0.3, 0.2, 1.0))
                .unwrap();
        assert_abs_diff_eq!(f.x.cross(&f.y), f.z, epsilon = 1e-12);
        assert_abs_diff_eq!(f.x.dot(&f.y), 0.0, epsilon = 1e-12);
        let g =
            SegmentFrame::from_forward(P::zeros(), P::new(1.0, 0.0, 0.1), P::new(0.0, 0.0, 1.0))
                .unwrap();
        assert_abs_diff_eq!(g.y, P::new(0.0, 1.0, 0.0), epsilon = 1e-12);
        assert_abs_diff_eq!(g.x.cross(&g.y), g.z, epsilon = 1e-12);
        assert!(SegmentFrame::from_long_axis(P::zeros(), P::y(), P::y()).is_none());
    }

    /// The cervical and shoulder JCs lie s w from their base at theta above the C7-jugular
    /// line (Dumas 2007, Table 1 coefficients): a level thorax 0.15 m deep, x forward, y up.
    #[test]
    fn thorax_points_follow_the_regression() {
        let c7 = P::new(0.0, 1.5, 0.0);
        let jugular = P::new(0.15, 1.5, 0.0);
        let right = P::new(0.0, 0.0, 1.0);
        let c = cervical_jc(c7, jugular, right, Sex::Male).unwrap();
        let t = 8f64.to_radians();
        assert_abs_diff_eq!(
            c,
            P::new(0.55 * 0.15 * t.cos(), 1.5 + 0.55 * 0.15 * t.sin(), 0.0),
            epsilon = 1e-12
        );
        let acromion = P::new(0.0, 1.45, 0.18);
        let s = shoulder_jc(acromion, c7, jugular, right, Sex::Female).unwrap();
        let t = (-5f64).to_radians();
        assert_abs_diff_eq!(
            s,
            acromion + P::new(t.cos(), t.sin(), 0.0) * (0.36 * 0.15),
            epsilon = 1e-12
        );
    }

    /// The hip JC of `hip = "dumas-2007"`: (-0.139, -0.336, +/-0.372) PW for women.
    #[test]
    fn dumas_hip_jc_in_the_pelvis_frame() {
        let l = P::new(0.1, 1.0, -0.125);
        let r = P::new(0.1, 1.0, 0.125);
        let f = PelvisFrame::new(l, r, P::new(-0.06, 1.0, 0.0)).unwrap();
        let right = dumas_hip_jc(&f, true, Sex::Female);
        let left = dumas_hip_jc(&f, false, Sex::Female);
        let expected = P::new(0.1 - 0.139 * 0.25, 1.0 - 0.336 * 0.25, 0.372 * 0.25);
        assert_abs_diff_eq!(right, expected, epsilon = 1e-12);
        assert_abs_diff_eq!(
            left,
            P::new(expected.x, expected.y, -expected.z),
            epsilon = 1e-12
        );
    }

    /// The lumbar JC: (-0.335, -0.032, 0) PW in the pelvis frame for men.
    #[test]
    fn lumbar_jc_in_the_pelvis_frame() {
        let l = P::new(0.1, 1.0, -0.125);
        let r = P::new(0.1, 1.0, 0.125);
        let psis = P::new(-0.06, 1.0, 0.0);
        let f = PelvisFrame::new(l, r, psis).unwrap();
        let j = lumbar_jc(&f, Sex::Male);
        assert_abs_diff_eq!(
            j,
            P::new(0.1 - 0.335 * 0.25, 1.0 - 0.032 * 0.25, 0.0),
            epsilon = 1e-12
        );
    }
}
