//! The walk: steady overground walking along +x at a set speed and cadence.
//!
//! Feet. Each foot follows its own gait cycle of one stride time. Heel strike: the foot touches
//! down heel first, toes up (pitch -20 deg), and rolls down about the heel marker to foot flat at
//! 10 % of the cycle (heel rocker). It stays flat and still until heel off at 34 %, then rolls
//! about the toe marker (heel rise, pitch growing as the square of time to +45 deg) until toe off
//! at 61 %. In swing (61-100 %) the ankle joint center and the foot pitch follow quintic Hermite
//! curves that match position and velocity of the rolling foot at toe off and at the next heel
//! strike (and its acceleration, except that the foot lifts off and sets down with an extra
//! vertical 6 m/s^2), plus a vertical bump sized so the toe clears the floor by at least 15 mm at
//! mid-swing. So the stance foot is planted (its pivot marker still, the rest of it still between
//! foot flat and heel off), heel strike and toe off are distinct events, and every marker moves
//! smoothly. Touchdown: the heel does not arrive at rest but at about 0.3 m/s (0.15 m/s forward,
//! 0.26 m/s down) and stops, decelerating uniformly, within 15 ms (one or two frames at 100 Hz),
//! as heels do in recorded walking; so speed-threshold event detectors are judged as on real
//! data. Footprints are one step length (speed / step frequency) apart, 5 deg toed out.
//!
//! Pelvis. `mid_hip` moves forward at exactly the set speed, with a vertical oscillation of
//! 2 x 16 mm (per 1.75 m of stature) twice per stride, highest at 25 % of each foot's cycle
//! (mid-stance), and a lateral one of 2 x 24 mm once per stride towards the stance foot; it
//! passes over each flat-foot ankle at 23 % of that foot's cycle. Its height is the highest
//! that keeps both knees flexed by at least 4 deg over the whole stride, so the legs, solved by
//! two-link inverse kinematics from the hip to the ankle joint center, always reach.
//!
//! Trunk and head upright; arms swing opposite to the legs (shoulder flexion 4 +/- 14 deg, elbow
//! 18 +/- 8 deg). Timing fractions and amplitudes are ours, in the range of textbook gait
//! descriptions (from memory).

use super::geom::{bump, chain_span, rot_z, Quintic, V3};
use super::model::{lateral_sign, ArmPose, FootPose, Model, Pose, SIDES};
use nalgebra::Rotation3;
use std::f64::consts::TAU;

const STANCE_FRACTION: f64 = 0.61;
const ROCKER_FRACTION: f64 = 0.10;
const HEEL_OFF_FRACTION: f64 = 0.34;
const PITCH_AT_HEEL_STRIKE_DEG: f64 = -20.0;
const PITCH_AT_TOE_OFF_DEG: f64 = 45.0;
/// Fraction of the cycle after heel strike at which `mid_hip` passes over the flat ankle.
const OVER_ANKLE_FRACTION: f64 = 0.23;
/// Fraction of the cycle after heel strike at which `mid_hip` is highest (mid-stance).
const HIGHEST_FRACTION: f64 = 0.25;
const TOE_OUT_DEG: f64 = 5.0;
const MIN_KNEE_FLEXION_DEG: f64 = 4.0;
const TOE_CLEARANCE_M: f64 = 0.015;
/// Upward acceleration of the foot at toe off and deceleration of its approach at heel strike,
/// m/s^2 (ours: the foot leaves and meets the floor briskly rather than creeping).
const LIFT_M_S2: f64 = 6.0;
/// Heel velocity at touchdown (forward, down), m/s: about 0.3 m/s, as the heel arrives in
/// recorded walking (ours, from memory), rather than the zero speed of a pure roll.
const TOUCHDOWN_VELOCITY_M_S: [f64; 2] = [0.15, -0.26];
/// Time in which the landing foot stops after heel strike, s (one or two frames at 100 Hz, as
/// in recordings: the heel pad compresses and the shoe slides a few millimetres).
const TOUCHDOWN_S: f64 = 0.015;
/// Longest step the model takes, as a fraction of stature; a faster cadence is used beyond.
pub(crate) const MAX_STEP_LENGTH: f64 = 0.45;
/// Time of the first left heel strike, s.
const FIRST_HEEL_STRIKE_S: f64 = 0.20;

/// Ankle position relative to the footprint's flat-foot ankle (x, y, z), and the foot pitch
/// (positive: heel up).
type State = [f64; 4];

/// A planned walk.
#[derive(Clone, Debug)]
pub(crate) struct Walk {
    speed_m_s: f64,
    stride_s: f64,
    x0_m: f64,
    z0_m: f64,
    amp_z_m: f64,
    amp_y_m: f64,
    foot_y_m: f64,
    ankle_height_m: f64,
    rocker_s: f64,
    heel_off_s: f64,
    stance_s: f64,
    swing_s: f64,
    pitch_hs: f64,
    pitch_to: f64,
    toe_out: f64,
    clearance_bump_m: f64,
    lift_m: f64,
    heel: V3,
    toe: V3,
    hip_jc: [V3; 2],
    swing: [[Quintic; 4]; 2],
}

impl Walk {
    /// Plans a walk of `model` at `speed_m_s` and `cadence_steps_per_min` (raised if the step
    /// would exceed [`MAX_STEP_LENGTH`] of stature), `mid_hip` passing `x = x0_m` at t = 0.
    pub fn new(model: &Model, speed_m_s: f64, cadence_steps_per_min: f64, x0_m: f64) -> Walk {
        let h = model.height_m;
        let max_step = MAX_STEP_LENGTH * h;
        let mut step_hz = cadence_steps_per_min / 60.0;
        if speed_m_s / step_hz > max_step {
            step_hz = speed_m_s / max_step;
        }
        let stride_s = 2.0 / step_hz;
        let scale = h / 1.75;
        let mut walk = Walk {
            speed_m_s,
            stride_s,
            x0_m,
            z0_m: 0.0,
            amp_z_m: 0.016 * scale,
            amp_y_m: 0.024 * scale,
            foot_y_m: 0.037 * h,
            ankle_height_m: model.ankle_height_m,
            rocker_s: ROCKER_FRACTION * stride_s,
            heel_off_s: HEEL_OFF_FRACTION * stride_s,
            stance_s: STANCE_FRACTION * stride_s,
            swing_s: (1.0 - STANCE_FRACTION) * stride_s,
            pitch_hs: PITCH_AT_HEEL_STRIKE_DEG.to_radians(),
            pitch_to: PITCH_AT_TOE_OFF_DEG.to_radians(),
            toe_out: TOE_OUT_DEG.to_radians(),
            clearance_bump_m: 0.0,
            lift_m: LIFT_M_S2 * ((1.0 - STANCE_FRACTION) * stride_s).powi(2) / 2.0,
            heel: model.heel,
            toe: model.toe,
            hip_jc: model.hip_jc,
            swing: [[Quintic {
                p0: 0.0,
                v0: 0.0,
                a0: 0.0,
                p1: 0.0,
                v1: 0.0,
                a1: 0.0,
            }; 4]; 2],
        };
        // Swing curves: from the toe-off state to the next heel strike, one stride ahead.
        let stride_m = speed_m_s * stride_s;
        for i in 0..2 {
            let start = derivatives(|t| walk.roll(i, t), walk.stance_s);
            let mut end = derivatives(|t| walk.rocker(i, t), 0.0);
            end[0][0] += stride_m;
            // The foot arrives moving (the touchdown offset at its start).
            let (x, z) = touchdown(0.0);
            end[0][0] += x[0];
            end[0][1] += x[1];
            end[2][0] += z[0];
            end[2][1] += z[1];
            for c in 0..4 {
                walk.swing[i][c] = Quintic::timed(
                    [start[c][0], start[c][1], start[c][2]],
                    [end[c][0], end[c][1], end[c][2]],
                    walk.swing_s,
                );
            }
        }
        // Bump so the toe clears the floor at mid-swing.
        let (_, toe_floor) = model.heel_toe_heights_m();
        let mut lift: f64 = 0.0;
        for i in 0..2 {
            for k in 0..=100 {
                let u = 0.2 + 0.6 * k as f64 / 100.0;
                let s = walk.swing_state(i, u);
                let toe_z = walk.foot_rot(i, s[3]) * walk.toe;
                let z = walk.ankle_height_m + s[2] + toe_z.z;
                lift = lift.max((toe_floor + TOE_CLEARANCE_M - z) / bump(u));
            }
        }
        walk.clearance_bump_m = lift.max(0.0);
        // Pelvis height: the highest that keeps both knees bent by the minimum over a stride.
        let reach = chain_span(
            model.thigh_m,
            model.shank_m,
            MIN_KNEE_FLEXION_DEG.to_radians(),
        );
        let mut z0 = f64::INFINITY;
        let n = 2000;
        for k in 0..n {
            let t = FIRST_HEEL_STRIKE_S + stride_s * k as f64 / n as f64;
            let origin = walk.origin(t);
            for i in 0..2 {
                let ankle = walk.foot(i, t).ankle;
                let hip = origin + walk.hip_jc[i];
                let horizontal = ((hip.x - ankle.x).powi(2) + (hip.y - ankle.y).powi(2)).sqrt();
                let vertical = (reach * reach - horizontal * horizontal).max(0.0).sqrt();
                z0 = z0.min(ankle.z + vertical - (hip.z - walk.z0_m));
            }
        }
        walk.z0_m = z0;
        walk
    }

    /// Forward speed of `mid_hip`, m/s.
    pub fn speed_m_s(&self) -> f64 {
        self.speed_m_s
    }

    fn yaw(&self, i: usize) -> Rotation3<f64> {
        rot_z(lateral_sign(SIDES[i]) * self.toe_out)
    }

    fn foot_rot(&self, i: usize, pitch: f64) -> Rotation3<f64> {
        self.yaw(i) * super::geom::rot_y(pitch)
    }

    /// Heel rocker: rolling about the heel marker, pitch from the heel-strike value to 0.
    fn rocker(&self, i: usize, tau: f64) -> State {
        let u = tau / self.rocker_s;
        let pitch = self.pitch_hs * (1.0 - u) * (1.0 - u);
        let pivot = self.yaw(i) * self.heel;
        let ankle = pivot - self.foot_rot(i, pitch) * self.heel;
        [ankle.x, ankle.y, ankle.z, pitch]
    }

    /// Heel rise: rolling about the toe marker, pitch from 0 to the toe-off value.
    fn roll(&self, i: usize, tau: f64) -> State {
        let u = (tau - self.heel_off_s) / (self.stance_s - self.heel_off_s);
        let pitch = self.pitch_to * u * u;
        let pivot = self.yaw(i) * self.toe;
        let ankle = pivot - self.foot_rot(i, pitch) * self.toe;
        [ankle.x, ankle.y, ankle.z, pitch]
    }

    fn swing_state(&self, i: usize, u: f64) -> State {
        let q = &self.swing[i];
        // Lift-off and touch-down term: zero height and slope at both ends, curvature 2 lift.
        let lift = self.lift_m * (u * (1.0 - u)).powi(2);
        [
            q[0].at(u),
            q[1].at(u),
            q[2].at(u) + lift + self.clearance_bump_m * bump(u),
            q[3].at(u),
        ]
    }

    /// Time of heel strike number `k` of side `i` (k may be negative).
    fn heel_strike_s(&self, i: usize, k: i64) -> f64 {
        FIRST_HEEL_STRIKE_S
            + if i == 1 { self.stride_s / 2.0 } else { 0.0 }
            + k as f64 * self.stride_s
    }

    /// Flat-foot ankle joint center of footprint `k` of side `i`.
    fn footprint(&self, i: usize, k: i64) -> V3 {
        let t = self.heel_strike_s(i, k) + OVER_ANKLE_FRACTION * self.stride_s;
        V3::new(
            self.x0_m + self.speed_m_s * t,
            lateral_sign(SIDES[i]) * self.foot_y_m,
            self.ankle_height_m,
        )
    }

    fn foot(&self, i: usize, t: f64) -> FootPose {
        let since_first = t - self.heel_strike_s(i, 0);
        let cycles = (since_first / self.stride_s).floor();
        let k = cycles as i64;
        let tau = since_first - cycles * self.stride_s;
        let state = if tau < self.rocker_s {
            let mut state = self.rocker(i, tau);
            if tau < TOUCHDOWN_S {
                let (x, z) = touchdown(tau);
                state[0] += x[0];
                state[2] += z[0];
            }
            state
        } else if tau < self.heel_off_s {
            [0.0; 4]
        } else if tau < self.stance_s {
            self.roll(i, tau)
        } else {
            self.swing_state(i, (tau - self.stance_s) / self.swing_s)
        };
        FootPose {
            ankle: self.footprint(i, k) + V3::new(state[0], state[1], state[2]),
            rot: self.foot_rot(i, state[3]),
        }
    }

    fn origin(&self, t: f64) -> V3 {
        let mid_stance = FIRST_HEEL_STRIKE_S + HIGHEST_FRACTION * self.stride_s;
        let phase = TAU * (t - mid_stance) / self.stride_s;
        V3::new(
            self.x0_m + self.speed_m_s * t,
            self.amp_y_m * phase.cos(),
            self.z0_m + self.amp_z_m * (2.0 * phase).cos(),
        )
    }

    /// The pose at time `t_s`.
    pub fn pose(&self, t_s: f64) -> Pose {
        let feet = [self.foot(0, t_s), self.foot(1, t_s)];
        let arm = |i: usize| {
            // Each arm swings forward most at the other leg's heel strike.
            let other_hs = self.heel_strike_s(1 - i, 0);
            let c = (TAU * (t_s - other_hs) / self.stride_s).cos();
            ArmPose::Angles {
                flexion: (4.0 + 14.0 * c).to_radians(),
                abduction: 5.0_f64.to_radians(),
                elbow: (18.0 + 8.0 * c).to_radians(),
            }
        };
        Pose {
            origin: self.origin(t_s),
            torso: Rotation3::identity(),
            head_pitch: 0.0,
            knee_pole: [self.yaw(0) * V3::x(), self.yaw(1) * V3::x()],
            feet,
            arms: [arm(0), arm(1)],
            bar: None,
        }
    }

    /// Contact intervals (heel strike, toe off) of each foot that overlap [t_first_s, t_last_s];
    /// the first may begin before and the last end after.
    pub fn contacts(&self, t_first_s: f64, t_last_s: f64) -> [Vec<(f64, f64)>; 2] {
        let mut out = [Vec::new(), Vec::new()];
        for (i, list) in out.iter_mut().enumerate() {
            let k0 = ((t_first_s - self.heel_strike_s(i, 0)) / self.stride_s).floor() as i64 - 1;
            let mut k = k0;
            loop {
                let on = self.heel_strike_s(i, k);
                if on > t_last_s {
                    break;
                }
                let off = on + self.stance_s;
                if off >= t_first_s {
                    list.push((on, off));
                }
                k += 1;
            }
        }
        out
    }
}

/// Value, first and second derivative (central differences) of each component of `f` at `t`.
fn derivatives(f: impl Fn(f64) -> State, t: f64) -> [[f64; 3]; 4] {
    let h = 1e-4;
    let (a, b, c) = (f(t - h), f(t), f(t + h));
    std::array::from_fn(|k| {
        [
            b[k],
            (c[k] - a[k]) / (2.0 * h),
            (c[k] - 2.0 * b[k] + a[k]) / (h * h),
        ]
    })
}

/// Offset of the landing foot from its rolling position `tau` s after heel strike, and its
/// rate: `(x, dx/dt)` forward and `(z, dz/dt)` up. It starts at -v T / 2 moving at v
/// ([`TOUCHDOWN_VELOCITY_M_S`]) and decelerates uniformly to zero offset and zero speed at T
/// ([`TOUCHDOWN_S`]); zero after.
fn touchdown(tau: f64) -> ([f64; 2], [f64; 2]) {
    if !(0.0..TOUCHDOWN_S).contains(&tau) {
        return ([0.0; 2], [0.0; 2]);
    }
    let left = TOUCHDOWN_S - tau;
    let of = |v: f64| {
        [
            -v * left * left / (2.0 * TOUCHDOWN_S),
            v * left / TOUCHDOWN_S,
        ]
    };
    (of(TOUCHDOWN_VELOCITY_M_S[0]), of(TOUCHDOWN_VELOCITY_M_S[1]))
}
