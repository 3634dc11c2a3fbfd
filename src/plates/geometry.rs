//! Plate and foot geometry in the floor plane: the CoP from a moment, plate outlines, sole
//! outlines and point-in-polygon tests.
//!
//! CoP from the moment M about the plate's surface center c (standard rigid-body statics, no
//! source needed): with n the unit up vector, r = CoP − c in the surface plane (r·n = 0) and a
//! free moment T about n, M = r × F + T n, so n × M = r (n·F), giving r = (n × M) / (n·F) and
//! T = (M − r × F)·n. Undefined below [`LOADED_N`] of vertical force.

use super::LOADED_N;
use crate::support::{convex_hull, signed_distance, FootFrames, Hull};
use crate::trial::UpAxis;

/// Mean of the four corners.
pub fn corner_center(c: &[[f64; 3]; 4]) -> [f64; 3] {
    let mut m = [0.0; 3];
    for p in c {
        for k in 0..3 {
            m[k] += p[k] / 4.0;
        }
    }
    m
}

fn cross(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

/// The CoP (lab, metres) and the free moment (N·m) from the force on the body `f` and the
/// moment `m` about `center`; `None` below [`LOADED_N`] of vertical force.
///
/// ```
/// use gravline::plates::geometry::cop_from_moment;
/// use gravline::trial::UpAxis;
/// // 700 N straight up, applied 0.1 m along +x of the center: M = r × F = (0, -70, 0)? no:
/// // r = (0.1, 0, 0), F = (0, 0, 700) -> M = (0·700 − 0·0, 0·0 − 0.1·700, 0) = (0, -70, 0).
/// let (cop, tz) = cop_from_moment([0.0, 0.0, 700.0], [0.0, -70.0, 0.0], [0.0; 3], UpAxis::Z).unwrap();
/// assert!((cop[0] - 0.1).abs() < 1e-12 && cop[1].abs() < 1e-12 && tz.abs() < 1e-12);
/// ```
pub fn cop_from_moment(
    f: [f64; 3],
    m: [f64; 3],
    center: [f64; 3],
    up: UpAxis,
) -> Option<([f64; 3], f64)> {
    let n = up.unit();
    let fn_ = dot(n, f);
    if fn_.abs() < LOADED_N {
        return None;
    }
    let nm = cross(n, m);
    let r = [nm[0] / fn_, nm[1] / fn_, nm[2] / fn_];
    let rf = cross(r, f);
    let tz = dot([m[0] - rf[0], m[1] - rf[1], m[2] - rf[2]], n);
    Some(([center[0] + r[0], center[1] + r[1], center[2] + r[2]], tz))
}

/// A plate's outline in the floor plane.
pub fn plate_hull(corners: &[[f64; 3]; 4], up: UpAxis) -> Hull {
    let pts: Vec<[f64; 2]> = corners.iter().map(|c| up.horizontal(c)).collect();
    convex_hull(&pts)
}

/// Whether `p` lies inside `hull` or within `tolerance_m` outside it.
pub fn inside(hull: &Hull, p: [f64; 2], tolerance_m: f64) -> bool {
    signed_distance(hull, p).is_some_and(|d| d >= -tolerance_m)
}

/// Forefoot beyond the metatarsal heads when a trial has no toe marker, as a fraction of the
/// heel-to-2nd-metatarsal-head distance (from memory: the toes are about a fifth of foot
/// length, the metatarsal heads about three quarters from the heel).
pub const TOE_EXTENSION: f64 = 0.3;

/// The sole outline of a foot in one frame: the convex hull of the floor projections of its
/// heel, toe, metatarsal heads and lateral malleolus, with a toe tip added along heel -> 2nd
/// metatarsal head ([`TOE_EXTENSION`]) when there is no toe marker. `None` without points.
pub fn sole_outline(foot: &FootFrames, side: usize, frame: usize, up: UpAxis) -> Option<Hull> {
    let at = |k: usize| foot.points[side][k].get(frame).copied().flatten();
    let mut pts: Vec<[f64; 2]> = (0..6)
        .filter_map(|k| at(k).map(|p| up.horizontal(&p)))
        .collect();
    if at(1).is_none() {
        if let (Some(h), Some(m)) = (at(0), at(3)) {
            let (h, m) = (up.horizontal(&h), up.horizontal(&m));
            pts.push([
                m[0] + TOE_EXTENSION * (m[0] - h[0]),
                m[1] + TOE_EXTENSION * (m[1] - h[1]),
            ]);
        }
    }
    match convex_hull(&pts) {
        Hull::Empty => None,
        h => Some(h),
    }
}

/// Whether every vertex of `inner` lies inside `outer` (within `tolerance_m`).
pub fn hull_inside(inner: &Hull, outer: &Hull, tolerance_m: f64) -> bool {
    let v = inner.vertices();
    !v.is_empty() && v.iter().all(|p| inside(outer, *p, tolerance_m))
}

/// Whether any vertex of `a` lies inside `b` or any vertex of `b` inside `a` (the outlines
/// touch; enough for convex feet and plates, whose overlaps always contain a vertex of one).
pub fn overlaps(a: &Hull, b: &Hull) -> bool {
    a.vertices().iter().any(|p| inside(b, *p, 0.0))
        || b.vertices().iter().any(|p| inside(a, *p, 0.0))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cop_from_moment_inverts_r_cross_f_with_free_moment() {
        // r = (0.05, -0.02, 0), F = (30, -10, 650), T = 2 about +z.
        let (r, f, t) = ([0.05, -0.02, 0.0], [30.0, -10.0, 650.0], 2.0);
        let rf = cross(r, f);
        let m = [rf[0], rf[1], rf[2] + t];
        let c = [1.0, 2.0, 0.0];
        let (cop, tz) = cop_from_moment(f, m, c, UpAxis::Z).unwrap();
        assert!((cop[0] - 1.05).abs() < 1e-12 && (cop[1] - 1.98).abs() < 1e-12);
        assert!((tz - t).abs() < 1e-12);
    }

    #[test]
    fn unit_square_contains_its_center_not_a_far_point() {
        let h = convex_hull(&[[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]]);
        assert!(inside(&h, [0.5, 0.5], 0.0));
        assert!(!inside(&h, [1.5, 0.5], 0.1));
        assert!(inside(&h, [1.05, 0.5], 0.1));
    }
}
