//! Geometry helpers of the model body: rotations about the lab axes, two-link inverse kinematics,
//! and the smooth interpolation polynomials the motions are built from (quintic Hermite, minimum
//! jerk, a flat-ended bump). Lengths in metres, angles in radians, normalized time `u` in [0, 1].

use nalgebra::{Rotation3, Unit, Vector3};

/// A point or direction, metres.
pub(crate) type V3 = Vector3<f64>;

/// Rotation about the lab x axis (forward) by `a` radians.
pub(crate) fn rot_x(a: f64) -> Rotation3<f64> {
    Rotation3::from_axis_angle(&Vector3::x_axis(), a)
}

/// Rotation about the lab y axis (left) by `a` radians: positive tips +z towards +x (forward).
pub(crate) fn rot_y(a: f64) -> Rotation3<f64> {
    Rotation3::from_axis_angle(&Vector3::y_axis(), a)
}

/// Rotation about the lab z axis (up) by `a` radians: positive turns +x towards +y (left).
pub(crate) fn rot_z(a: f64) -> Rotation3<f64> {
    Rotation3::from_axis_angle(&Vector3::z_axis(), a)
}

/// Rotation about an arbitrary axis; the identity when the axis has no length.
pub(crate) fn rot_axis(axis: &V3, a: f64) -> Rotation3<f64> {
    match Unit::try_new(*axis, 1e-12) {
        Some(u) => Rotation3::from_axis_angle(&u, a),
        None => Rotation3::identity(),
    }
}

/// The unit part of `v` perpendicular to the unit vector `u`; `fallback` (assumed perpendicular
/// and unit) when `v` is (nearly) parallel to `u`.
pub(crate) fn perpendicular(v: &V3, u: &V3, fallback: &V3) -> V3 {
    let w = v - u * v.dot(u);
    let n = w.norm();
    if n > 1e-9 {
        w / n
    } else {
        *fallback
    }
}

/// Distance from root to end of a two-link chain with link lengths `a`, `b` whose middle joint
/// is bent by `bend` radians from straight.
pub(crate) fn chain_span(a: f64, b: f64, bend: f64) -> f64 {
    (a * a + b * b + 2.0 * a * b * bend.cos()).sqrt()
}

/// Middle joint of a two-link chain from `root` to `target` with link lengths `a` (root side) and
/// `b`, bent towards `pole`. A target out of reach is clamped to the reachable shell, so the
/// result always lies at distance `a` from the root.
pub(crate) fn two_link(root: &V3, target: &V3, a: f64, b: f64, pole: &V3) -> V3 {
    let delta = target - root;
    let d_raw = delta.norm();
    let u = if d_raw > 1e-12 {
        delta / d_raw
    } else {
        -V3::z()
    };
    let d = d_raw.clamp((a - b).abs() + 1e-9, a + b);
    let along = (a * a - b * b + d * d) / (2.0 * d);
    let height = (a * a - along * along).max(0.0).sqrt();
    let fallback = perpendicular(&V3::x(), &u, &V3::y());
    let w = perpendicular(pole, &u, &fallback);
    root + u * along + w * height
}

/// Quintic Hermite segment on normalized time `u` in [0, 1]: position, first and second
/// derivative (per unit `u`) given at both ends.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Quintic {
    pub p0: f64,
    pub v0: f64,
    pub a0: f64,
    pub p1: f64,
    pub v1: f64,
    pub a1: f64,
}

impl Quintic {
    /// A segment of duration `duration_s` between (position, velocity per s, acceleration per
    /// s^2) at its two ends.
    pub fn timed(start: [f64; 3], end: [f64; 3], duration_s: f64) -> Quintic {
        let t = duration_s;
        Quintic {
            p0: start[0],
            v0: start[1] * t,
            a0: start[2] * t * t,
            p1: end[0],
            v1: end[1] * t,
            a1: end[2] * t * t,
        }
    }

    /// Value at normalized time `u` (extrapolates outside [0, 1]).
    pub fn at(&self, u: f64) -> f64 {
        let u2 = u * u;
        let u3 = u2 * u;
        let u4 = u3 * u;
        let u5 = u4 * u;
        let h0 = 1.0 - 10.0 * u3 + 15.0 * u4 - 6.0 * u5;
        let h1 = u - 6.0 * u3 + 8.0 * u4 - 3.0 * u5;
        let h2 = 0.5 * u2 - 1.5 * u3 + 1.5 * u4 - 0.5 * u5;
        let h3 = 0.5 * u3 - u4 + 0.5 * u5;
        let h4 = -4.0 * u3 + 7.0 * u4 - 3.0 * u5;
        let h5 = 10.0 * u3 - 15.0 * u4 + 6.0 * u5;
        self.p0 * h0 + self.v0 * h1 + self.a0 * h2 + self.a1 * h3 + self.v1 * h4 + self.p1 * h5
    }
}

/// Minimum-jerk step from 0 to 1 (Flash & Hogan 1985): zero velocity and acceleration at both
/// ends; clamped outside [0, 1].
pub(crate) fn min_jerk(u: f64) -> f64 {
    let u = u.clamp(0.0, 1.0);
    u * u * u * (10.0 - 15.0 * u + 6.0 * u * u)
}

/// Bump `64 u^3 (1-u)^3`: 0 at both ends with zero first and second derivatives, 1 at `u = 0.5`,
/// 0 outside [0, 1].
pub(crate) fn bump(u: f64) -> f64 {
    if (0.0..=1.0).contains(&u) {
        let v = u * (1.0 - u);
        64.0 * v * v * v
    } else {
        0.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;

    fn derivatives(f: impl Fn(f64) -> f64, u: f64) -> (f64, f64, f64) {
        let h = 1e-4;
        let (a, b, c) = (f(u - h), f(u), f(u + h));
        (b, (c - a) / (2.0 * h), (c - 2.0 * b + a) / (h * h))
    }

    /// The quintic meets its six end conditions (derivatives checked by central differences,
    /// tolerance set by the step 1e-4).
    #[test]
    fn quintic_meets_its_end_conditions() {
        let q = Quintic {
            p0: 1.0,
            v0: -2.0,
            a0: 3.0,
            p1: -0.5,
            v1: 0.7,
            a1: -4.0,
        };
        let (p, v, a) = derivatives(|u| q.at(u), 0.0);
        assert_abs_diff_eq!(p, 1.0, epsilon = 1e-12);
        assert_abs_diff_eq!(v, -2.0, epsilon = 1e-6);
        assert_abs_diff_eq!(a, 3.0, epsilon = 1e-4);
        let (p, v, a) = derivatives(|u| q.at(u), 1.0);
        assert_abs_diff_eq!(p, -0.5, epsilon = 1e-12);
        assert_abs_diff_eq!(v, 0.7, epsilon = 1e-6);
        assert_abs_diff_eq!(a, -4.0, epsilon = 1e-4);
    }

    #[test]
    fn min_jerk_and_bump_are_flat_at_their_ends() {
        assert_abs_diff_eq!(min_jerk(0.5), 0.5, epsilon = 1e-15);
        assert_abs_diff_eq!(bump(0.5), 1.0, epsilon = 1e-15);
        // Both are cubic at their ends: slope below 200 u^2 at distance u = 1e-3 from an end.
        for f in [min_jerk as fn(f64) -> f64, bump] {
            for u in [1e-3, 1.0 - 1e-3] {
                let (_, v, _) = derivatives(f, u);
                assert!(v.abs() < 2e-4, "slope {v} at {u}");
            }
        }
    }

    /// Two-link inverse kinematics keeps both link lengths and bends towards the pole.
    #[test]
    fn two_link_keeps_lengths_and_bends_towards_the_pole() {
        let root = V3::new(0.1, 0.2, 0.9);
        let target = V3::new(0.3, 0.15, 0.1);
        let (a, b) = (0.42, 0.43);
        let pole = V3::x();
        let knee = two_link(&root, &target, a, b, &pole);
        assert_abs_diff_eq!((knee - root).norm(), a, epsilon = 1e-12);
        assert_abs_diff_eq!((target - knee).norm(), b, epsilon = 1e-12);
        let mid = (root + target) / 2.0;
        assert!((knee - mid).dot(&pole) > 0.0);
        // The span of a chain bent by the angle the joint makes equals the root-target distance.
        let bend = std::f64::consts::PI - (root - knee).angle(&(target - knee));
        assert_abs_diff_eq!(
            chain_span(a, b, bend),
            (target - root).norm(),
            epsilon = 1e-12
        );
    }
}
