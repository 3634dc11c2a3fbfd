//! Direction of progression in the floor plane: along the mean horizontal CoM velocity, or for
//! near-static trials the mean heel-to-toe direction of the feet (common practice, no source).
//!
//! Inputs: CoM velocities (m/s), the foot series. Outputs: a unit vector in the floor plane,
//! the mean horizontal speed (m/s).

use super::stage::{FootFrames, HEEL, STATIC_SPEED_M_S};
use crate::trial::UpAxis;

/// The sum of the horizontal CoM velocities of the frames that have one, and their count.
pub(super) fn horizontal_velocity_sum(
    velocity: &[Option<[f64; 3]>],
    up: UpAxis,
) -> ([f64; 2], usize) {
    let (mut sum, mut n) = ([0.0, 0.0], 0usize);
    for v in velocity.iter().flatten() {
        let h = up.horizontal(v);
        sum[0] += h[0];
        sum[1] += h[1];
        n += 1;
    }
    (sum, n)
}

/// The speed of the mean horizontal CoM velocity, from [`horizontal_velocity_sum`] (0 without
/// velocities).
pub(super) fn mean_speed((sum, n): ([f64; 2], usize)) -> f64 {
    if n == 0 {
        return 0.0;
    }
    (sum[0] * sum[0] + sum[1] * sum[1]).sqrt() / n as f64
}

/// Progression direction (module doc): along the summed horizontal CoM velocity `velocity_sum`
/// when the mean speed is at least [`STATIC_SPEED_M_S`], else from the feet.
pub(super) fn progression(
    foot: &FootFrames,
    velocity_sum: [f64; 2],
    mean_speed_m_s: f64,
    up: UpAxis,
) -> Option<[f64; 2]> {
    if mean_speed_m_s >= STATIC_SPEED_M_S {
        return unit(velocity_sum);
    }
    let mut dir = [0.0, 0.0];
    for side in 0..2 {
        let front = foot.front(side);
        for f in 0..foot.points[side][HEEL].len() {
            if let (Some(h), Some(t)) = (foot.at(side, HEEL, f), foot.at(side, front, f)) {
                let (h, t) = (up.horizontal(&h), up.horizontal(&t));
                dir = [dir[0] + t[0] - h[0], dir[1] + t[1] - h[1]];
            }
        }
    }
    unit(dir)
}

pub(super) fn unit(v: [f64; 2]) -> Option<[f64; 2]> {
    let n = (v[0] * v[0] + v[1] * v[1]).sqrt();
    (n > 1e-9).then(|| [v[0] / n, v[1] / n])
}

pub(super) fn dot(a: [f64; 2], b: [f64; 2]) -> f64 {
    a[0] * b[0] + a[1] * b[1]
}
