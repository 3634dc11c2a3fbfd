//! Joint-center methods (docs/reference/methods.md 1). Inputs and outputs in metres, lab frame.
//!
//! - Hip: regressions in the ISB pelvis frame (Wu et al. 2002, J Biomech 35:543): origin at
//!   mid-ASIS, z = unit(RASIS - LASIS) (right), x anterior in the plane of the ASIS and mid-PSIS,
//!   y = z x x (up). Harrington et al. 2007 (J Biomech 40:595, full equations; default), Bell,
//!   Pedersen & Brand 1990 (from mid-ASIS) and Hara et al. 2016 (Sci Rep 6:37707, leg length
//!   only). The regressions are in millimetres: PW = inter-ASIS width, PD = mid-ASIS to mid-PSIS
//!   depth, LL = leg length (ASIS to medial malleolus). Markers are used as measured (no
//!   correction for skin or marker radius).
//! - Knee, ankle, elbow, wrist: midpoint of the two epicondyles / malleoli / styloids (ISB,
//!   Wu et al. 2002, 2005). With only the lateral marker, the JC lies medially from it by half the
//!   joint width plus the marker radius along the segment's medio-lateral axis (common practice).
//! - Shoulder: 17 % of the inter-acromion distance below the acromion along the trunk axis
//!   (after Rab, McDowell & Davids 2002, Gait Posture 15:113; from memory).
//! - Vertex (when only four head markers exist): the centroid of the head markers moved along
//!   the normal of their plane, away from C7, by [`VERTEX_ABOVE_HEAD_MARKERS`] of stature
//!   (common practice, no source: a head band sits about 11 cm below the vertex of an adult).

use crate::config::HipMethod;
use nalgebra::Vector3;

pub type P = Vector3<f64>;

/// Shoulder JC below the acromion, as a share of the inter-acromion distance (from memory).
pub const SHOULDER_DROP_OF_ACROMION_WIDTH: f64 = 0.17;
/// Vertex above the head-marker centroid, as a share of stature (common practice, no source).
pub const VERTEX_ABOVE_HEAD_MARKERS: f64 = 0.065;

/// The ISB pelvis frame: origin mid-ASIS and unit axes x (anterior), y (up), z (right).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PelvisFrame {
    pub origin: P,
    pub x: P,
    pub y: P,
    pub z: P,
    /// Inter-ASIS width PW, metres.
    pub width_m: f64,
    /// Mid-ASIS to mid-PSIS depth PD, metres.
    pub depth_m: f64,
}

impl PelvisFrame {
    /// Builds the frame from the two ASIS and the mid-PSIS point (or the sacral marker);
    /// `None` when the points are degenerate (coincident or collinear).
    pub fn new(l_asis: P, r_asis: P, mid_psis: P) -> Option<PelvisFrame> {
        let origin = (l_asis + r_asis) / 2.0;
        let z = (r_asis - l_asis).try_normalize(1e-9)?;
        let d = origin - mid_psis;
        let x = (d - d.dot(&z) * z).try_normalize(1e-9)?;
        let y = z.cross(&x);
        Some(PelvisFrame {
            origin,
            x,
            y,
            z,
            width_m: (r_asis - l_asis).norm(),
            depth_m: d.norm(),
        })
    }

    /// A point from pelvis coordinates (metres).
    pub fn to_lab(&self, local: [f64; 3]) -> P {
        self.origin + self.x * local[0] + self.y * local[1] + self.z * local[2]
    }
}

/// Right-hip JC in pelvis coordinates (x anterior, y up, z lateral +), in millimetres, from
/// PW, PD and LL in millimetres. The left hip mirrors z.
///
/// Check values of docs/reference/methods.md 1.2 (PW 250, PD 160, LL 900): Harrington full
/// (-48.3, -83.1, +92.7).
/// ```
/// use gravline::body::joints::hip_regression_mm;
/// use gravline::config::HipMethod;
/// let [x, y, z] = hip_regression_mm(HipMethod::Harrington2007, 250.0, 160.0, 900.0).unwrap();
/// assert!((x + 48.3).abs() < 0.05 && (y + 83.1).abs() < 0.05 && (z - 92.7).abs() < 0.05);
/// ```
pub fn hip_regression_mm(method: HipMethod, pw: f64, pd: f64, ll: f64) -> Option<[f64; 3]> {
    match method {
        HipMethod::Harrington2007 => Some([
            -0.24 * pd - 9.9,
            -0.16 * pw - 0.04 * ll - 7.1,
            0.28 * pd + 0.16 * pw + 7.9,
        ]),
        HipMethod::Bell1990 => Some([-0.19 * pw, -0.30 * pw, 0.36 * pw]),
        HipMethod::Hara2016 => Some([11.0 - 0.063 * ll, -9.0 - 0.078 * ll, 8.0 + 0.086 * ll]),
        // Sex-specific shares of the ASIS width: `crate::body::frames::dumas_hip_jc`.
        HipMethod::Dumas2007 | HipMethod::Given => None,
    }
}

/// Harrington 2007 single-variable equations (PW only for SI and ML), for comparison.
pub fn harrington_single_variable_mm(pw: f64, pd: f64) -> [f64; 3] {
    [-0.24 * pd - 9.9, -0.30 * pw - 10.9, 0.33 * pw + 7.3]
}

/// Hip JC in the lab for one side (`right = true` for the right hip).
pub fn hip_jc(
    method: HipMethod,
    pelvis: &PelvisFrame,
    leg_length_m: f64,
    right: bool,
) -> Option<P> {
    let [x, y, z] = hip_regression_mm(
        method,
        pelvis.width_m * 1e3,
        pelvis.depth_m * 1e3,
        leg_length_m * 1e3,
    )?;
    let z = if right { z } else { -z };
    Some(pelvis.to_lab([x * 1e-3, y * 1e-3, z * 1e-3]))
}

/// A JC medial to a lateral marker: `lateral + offset_m * medial`, where `medial` is `toward`
/// made orthogonal to the segment's long axis (`axis_from` -> `axis_to`) and normalised.
pub fn medial_offset(lateral: P, axis_from: P, axis_to: P, toward: P, offset_m: f64) -> Option<P> {
    let axis = (axis_to - axis_from).try_normalize(1e-9)?;
    let medial = (toward - toward.dot(&axis) * axis).try_normalize(1e-9)?;
    Some(lateral + medial * offset_m)
}

/// Shoulder JC below an acromion: `acromion + drop * |r_acr - l_acr| * down`, `down` the unit
/// trunk axis pointing caudally.
pub fn shoulder_jc(acromion: P, other_acromion: P, down: P) -> P {
    acromion + down * (SHOULDER_DROP_OF_ACROMION_WIDTH * (other_acromion - acromion).norm())
}

/// Vertex from four head markers and C7 (see the module doc).
pub fn vertex(head: [P; 4], c7: P, height_m: f64) -> Option<P> {
    let centroid = (head[0] + head[1] + head[2] + head[3]) / 4.0;
    // Diagonals: left-front to right-back and right-front to left-back.
    let n = (head[3] - head[0])
        .cross(&(head[2] - head[1]))
        .try_normalize(1e-9)?;
    let n = if n.dot(&(centroid - c7)) < 0.0 { -n } else { n };
    Some(centroid + n * (VERTEX_ABOVE_HEAD_MARKERS * height_m))
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;

    /// docs/reference/methods.md 1.2 check values (derived from the published equations; PW 250,
    /// PD 160, LL 900 mm, right hip) to 0.1 mm.
    #[test]
    fn hip_regressions_equal_the_check_values() {
        let cases = [
            (HipMethod::Harrington2007, [-48.3, -83.1, 92.7]),
            (HipMethod::Bell1990, [-47.5, -75.0, 90.0]),
            (HipMethod::Hara2016, [-45.7, -79.2, 85.4]),
        ];
        for (method, expected) in cases {
            let got = hip_regression_mm(method, 250.0, 160.0, 900.0).unwrap();
            for k in 0..3 {
                assert_abs_diff_eq!(got[k], expected[k], epsilon = 0.1);
            }
        }
        let single = harrington_single_variable_mm(250.0, 160.0);
        for (g, e) in single.iter().zip([-48.3, -85.9, 89.8]) {
            assert_abs_diff_eq!(*g, e, epsilon = 0.1);
        }
    }

    /// The same check through the pelvis frame, with the pelvis rotated in the lab: the two hip
    /// JCs are 185.4 mm apart (docs/reference/methods.md 1.2, Harrington full).
    #[test]
    fn hip_jc_in_a_rotated_pelvis() {
        // Pelvis facing +y in the lab, up +z: x_pelvis = +y_lab, z_pelvis (right) = +x_lab.
        let l = P::new(-0.125, 0.0, 1.0);
        let r = P::new(0.125, 0.0, 1.0);
        let psis = P::new(0.0, -0.160, 1.0);
        let f = PelvisFrame::new(l, r, psis).unwrap();
        let rh = hip_jc(HipMethod::Harrington2007, &f, 0.9, true).unwrap();
        let lh = hip_jc(HipMethod::Harrington2007, &f, 0.9, false).unwrap();
        assert_abs_diff_eq!((rh - lh).norm(), 0.1854, epsilon = 1e-4);
        assert_abs_diff_eq!(rh.y, -0.0483, epsilon = 1e-4); // posterior
        assert_abs_diff_eq!(rh.z, 1.0 - 0.0831, epsilon = 1e-4); // below the ASIS
        assert_abs_diff_eq!(rh.x, 0.0927, epsilon = 1e-4); // lateral, right
    }

    #[test]
    fn medial_offset_is_orthogonal_to_the_segment() {
        let jc = medial_offset(
            P::new(0.0, 0.05, 0.5),
            P::new(0.0, 0.0, 1.0),
            P::new(0.0, 0.05, 0.5),
            P::new(0.0, -1.0, 0.0),
            0.06,
        )
        .unwrap();
        let axis = (P::new(0.0, 0.05, 0.5) - P::new(0.0, 0.0, 1.0)).normalize();
        assert_abs_diff_eq!(
            (jc - P::new(0.0, 0.05, 0.5)).dot(&axis),
            0.0,
            epsilon = 1e-12
        );
        assert_abs_diff_eq!((jc - P::new(0.0, 0.05, 0.5)).norm(), 0.06, epsilon = 1e-12);
    }
}
