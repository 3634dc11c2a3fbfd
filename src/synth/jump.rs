//! The countermovement jump, with a ballistic flight.
//!
//! Stance: feet at hip width, parallel (each leg moves in its own sagittal plane). The body's
//! shape is six angles: knee flexion, shank lean (forward from vertical), heel rise (foot pitch
//! about the toe marker), hip flexion (trunk relative to thigh), shoulder flexion and elbow
//! flexion; the pose follows from the toe markers up by forward kinematics.
//!
//! Contact phases. Quiet stance; a countermovement of 0.55 s (knees 5 -> 95 deg, arms swinging
//! back to -45 deg); a push-off in normalized time u (knees towards 15 deg and arms towards
//! 120 deg as u^2, heels rising towards 35 deg as the cube of time over the last 65 % of u);
//! take-off at 1.35 s; after landing the push-off mirrored in time (absorption), then 0.6 s back
//! to quiet stance. Hip flexion is 1.15 x knee flexion. In every contact frame the shank lean is
//! solved so that the true CoM stays above the same point of the feet (where it is in quiet
//! stance): the horizontal CoM velocity is zero and the vertical one is what the shape changes
//! make it. Phase junctions match position, velocity and acceleration (quintic Hermite segments).
//!
//! Take-off is the first moment of the push-off at which the CoM's downward acceleration reaches
//! g, i.e. the ground force has fallen to zero (so the floor never pulls: the vertical CoM
//! acceleration in contact stays above -g, and the CoM acceleration is continuous at take-off and
//! landing); the push-off's duration is chosen so that the vertical CoM velocity there is
//! `g T / 2` for a flight of T = 0.45 s.
//!
//! Flight. From take-off to landing the shape moves on: its rates at take-off fade out within
//! 30 ms (and fade in, mirrored, within 30 ms of landing), and a tuck (knees +32 deg, hips
//! +25 deg, heels -20 deg, shanks -10 deg, arms -60 deg, elbows +20 deg) rises and falls as a
//! flat-ended bump. Each frame the whole body is translated so that its true CoM (de Leva 1996
//! rows, exact points) lies on the parabola `p0 + v0 t - g t^2 / 2` (g = 9.81 m/s^2) from its
//! take-off position and velocity. The shape at landing equals the shape at take-off, so the toes
//! touch down where they left, exactly when the parabola returns to take-off height; the CoM is
//! continuous in position and velocity at both events, and so are the markers, since the shape's
//! rates carry over (the toes leave and meet the floor at zero velocity).

use super::geom::{bump, rot_y, Quintic, V3};
use super::model::{ArmPose, Body, ComModel, FootPose, Model, Pose};
use super::G_M_S2;

const KNEE: usize = 0;
const SHANK: usize = 1;
const HEEL: usize = 2;
const HIP: usize = 3;
const ARM: usize = 4;
const ELBOW: usize = 5;

/// The six shape angles, radians, in the order knee, shank, heel, hip, arm, elbow.
type Shape = [f64; 6];

const TAKE_OFF_S: f64 = 1.35;
const FLIGHT_S: f64 = 0.45;
const COUNTERMOVEMENT_S: f64 = 0.55;
const RECOVERY_S: f64 = 0.6;
const FADE_S: f64 = 0.03;
const HEEL_RISE_START: f64 = 0.35;
const HIP_PER_KNEE: f64 = 1.15;
const ARM_ABDUCTION_DEG: f64 = 6.0;
/// The push-off grid: normalized times from GRID_FROM in steps of 0.001, to just past 1.
const GRID_FROM: f64 = 0.5;
const GRID_STEPS: usize = 502;
const TUCK_DEG: Shape = [32.0, -10.0, -20.0, 25.0, -60.0, 20.0];

/// A prescribed angle: values standing, at the bottom of the countermovement and at take-off.
#[derive(Clone, Copy, Debug)]
struct Channel {
    stand: f64,
    bottom: f64,
    take_off: f64,
    /// Rises only over the last part of the push-off (the heels).
    late: bool,
}

impl Channel {
    fn deg(stand: f64, bottom: f64, take_off: f64, late: bool) -> Channel {
        Channel {
            stand: stand.to_radians(),
            bottom: bottom.to_radians(),
            take_off: take_off.to_radians(),
            late,
        }
    }

    /// Push-off value at normalized time `u` (0 = bottom, 1 = take-off; extrapolates).
    fn push(&self, u: f64) -> f64 {
        let profile = if self.late {
            let w = ((u - HEEL_RISE_START) / (1.0 - HEEL_RISE_START)).max(0.0);
            w * w * w
        } else {
            u * u
        };
        self.bottom + (self.take_off - self.bottom) * profile
    }

    /// Second derivative of the push-off at the bottom, per unit `u` squared.
    fn push_acceleration_at_bottom(&self) -> f64 {
        if self.late {
            0.0
        } else {
            2.0 * (self.take_off - self.bottom)
        }
    }
}

/// A planned countermovement jump.
#[derive(Clone, Debug)]
pub(crate) struct Jump {
    toe_pivots: [V3; 2],
    x_target_m: f64,
    channels: [Channel; 4],
    countermovement: [Quintic; 4],
    recovery: [Quintic; 4],
    push_s: f64,
    /// Normalized push-off time of take-off (at most 1).
    take_off_u: f64,
    start_s: f64,
    bottom_s: f64,
    take_off_s: f64,
    landing_s: f64,
    absorbed_s: f64,
    recovered_s: f64,
    shape_to: Shape,
    rate_to: Shape,
    /// The prescribed angles of quiet stance and its balanced shape.
    standing: Option<([f64; 4], Shape)>,
    com_to: V3,
    vz_to_m_s: f64,
}

impl Jump {
    pub fn new(model: &Model, com: &ComModel) -> Jump {
        let (_, toe_height) = model.heel_toe_heights_m();
        let pivot = |i: usize| V3::new(model.toe.x, model.hip_jc[i].y, toe_height);
        // knee, heel, arm, elbow
        let channels = [
            Channel::deg(5.0, 95.0, 15.0, false),
            Channel::deg(0.0, 0.0, 35.0, true),
            Channel::deg(0.0, -45.0, 120.0, false),
            Channel::deg(20.0, 20.0, 20.0, false),
        ];
        let flat = [Quintic {
            p0: 0.0,
            v0: 0.0,
            a0: 0.0,
            p1: 0.0,
            v1: 0.0,
            a1: 0.0,
        }; 4];
        let mut jump = Jump {
            toe_pivots: [pivot(0), pivot(1)],
            x_target_m: 0.0,
            channels,
            countermovement: flat,
            recovery: flat,
            push_s: 0.25,
            take_off_u: 1.0,
            start_s: 0.0,
            bottom_s: 0.0,
            take_off_s: TAKE_OFF_S,
            landing_s: TAKE_OFF_S + FLIGHT_S,
            absorbed_s: 0.0,
            recovered_s: 0.0,
            shape_to: [0.0; 6],
            rate_to: [0.0; 6],
            standing: None,
            com_to: V3::zeros(),
            vz_to_m_s: 0.0,
        };
        // Quiet stance: mid_hip 0.035 H in front of the ankles; its CoM x is the balance target.
        let stand = jump.channel_values(|c| c.stand);
        let knee = stand[0];
        let ahead = 0.035 * model.height_m;
        let mut shank: f64 = 0.0;
        for _ in 0..50 {
            let f = model.shank_m * shank.sin() + model.thigh_m * (shank - knee).sin() - ahead;
            let df = model.shank_m * shank.cos() + model.thigh_m * (shank - knee).cos();
            shank -= f / df;
        }
        let standing = jump.shape_with(stand, shank);
        jump.x_target_m = com.com(&model.build(&jump.pose(model, &standing))).x;
        jump.standing = Some((stand, jump.balanced(model, com, stand)));

        // Push-off: take-off where the CoM's downward acceleration first reaches g (the ground
        // force falls to zero), after the push-off duration that makes the vertical CoM velocity
        // there what a flight of FLIGHT_S needs.
        // The CoM height along the push-off, tabulated once on a fine grid of normalized time.
        let step = 1e-3;
        let grid: Vec<f64> = (0..=GRID_STEPS)
            .map(|k| {
                let u = GRID_FROM + step * k as f64;
                let s = jump.balanced(model, com, jump.channel_values(|c| c.push(u)));
                com.com(&model.build(&jump.pose(model, &s))).z
            })
            .collect();
        let rate_u = |k: usize| (grid[k + 1] - grid[k - 1]) / (2.0 * step);
        let accel_u = |k: usize| (grid[k + 1] - 2.0 * grid[k] + grid[k - 1]) / (step * step);
        let vz = G_M_S2 * FLIGHT_S / 2.0;
        let mut push_s: f64 = 0.25;
        let mut end_u = 1.0;
        for _ in 0..100 {
            // First grid point where the acceleration falls below -g (linear interpolation).
            let margin = |k: usize| accel_u(k) / (push_s * push_s) + G_M_S2;
            let mut end = (GRID_STEPS - 1, 1.0);
            for k in 2..GRID_STEPS {
                if margin(k) < 0.0 {
                    let (a, b) = (margin(k - 1), margin(k));
                    end = (k, (k as f64 - 1.0 + a / (a - b)).min(k as f64));
                    break;
                }
            }
            let (k, at) = end;
            end_u = (GRID_FROM + step * at).min(1.0);
            let frac = at - (k as f64 - 1.0);
            let rate = rate_u(k - 1) * (1.0 - frac) + rate_u(k) * frac;
            let next = if rate > 0.0 { rate / vz } else { 0.25 };
            let done = (next - push_s).abs() < 1e-12;
            push_s = next.clamp(0.05, 2.0);
            if done {
                break;
            }
        }
        jump.push_s = push_s;
        jump.take_off_u = end_u;
        let du = 1e-4;
        let at_u = |j: &Jump, u: f64| {
            let s = j.balanced(model, com, j.channel_values(|c| c.push(u)));
            (s, com.com(&model.build(&j.pose(model, &s))))
        };
        let (s_minus, c_minus) = at_u(&jump, end_u - du);
        let (s_to, c_to) = at_u(&jump, end_u);
        let (s_plus, c_plus) = at_u(&jump, end_u + du);
        jump.vz_to_m_s = (c_plus.z - c_minus.z) / (2.0 * du * push_s);
        for k in 0..6 {
            jump.rate_to[k] = (s_plus[k] - s_minus[k]) / (2.0 * du * push_s);
        }
        jump.shape_to = s_to;
        jump.com_to = c_to;

        // Timeline.
        jump.bottom_s = jump.take_off_s - jump.take_off_u * jump.push_s;
        jump.start_s = jump.bottom_s - COUNTERMOVEMENT_S;
        jump.landing_s = jump.take_off_s + 2.0 * jump.vz_to_m_s / G_M_S2;
        jump.absorbed_s = jump.landing_s + jump.take_off_u * jump.push_s;
        jump.recovered_s = jump.absorbed_s + RECOVERY_S;
        for (k, c) in jump.channels.iter().enumerate() {
            let acc = c.push_acceleration_at_bottom() / (jump.push_s * jump.push_s);
            jump.countermovement[k] =
                Quintic::timed([c.stand, 0.0, 0.0], [c.bottom, 0.0, acc], COUNTERMOVEMENT_S);
            jump.recovery[k] =
                Quintic::timed([c.bottom, 0.0, acc], [c.stand, 0.0, 0.0], RECOVERY_S);
        }
        jump
    }

    /// Take-off and landing times, s.
    pub fn flight_s(&self) -> (f64, f64) {
        (self.take_off_s, self.landing_s)
    }

    fn channel_values(&self, f: impl Fn(&Channel) -> f64) -> [f64; 4] {
        [
            f(&self.channels[0]),
            f(&self.channels[1]),
            f(&self.channels[2]),
            f(&self.channels[3]),
        ]
    }

    /// A shape from the prescribed (knee, heel, arm, elbow) angles and a shank lean.
    fn shape_with(&self, prescribed: [f64; 4], shank: f64) -> Shape {
        let [knee, heel, arm, elbow] = prescribed;
        let mut s = [0.0; 6];
        s[KNEE] = knee;
        s[SHANK] = shank;
        s[HEEL] = heel;
        s[HIP] = HIP_PER_KNEE * knee;
        s[ARM] = arm;
        s[ELBOW] = elbow;
        s
    }

    /// The shape with its shank lean solved (secant iteration from a numeric first slope) so the
    /// CoM lies above the balance target.
    fn balanced(&self, model: &Model, com: &ComModel, prescribed: [f64; 4]) -> Shape {
        if let Some(standing) = &self.standing {
            if prescribed == standing.0 {
                return standing.1;
            }
        }
        let x = |shank: f64| {
            let s = self.shape_with(prescribed, shank);
            com.com(&model.build(&self.pose(model, &s))).x - self.x_target_m
        };
        let mut a = 0.1;
        let mut fa = x(a);
        let mut b = a + 1e-4;
        let mut fb = x(b);
        for _ in 0..40 {
            if fb == fa {
                break;
            }
            let next = b - fb * (b - a) / (fb - fa);
            a = b;
            fa = fb;
            b = next;
            if (b - a).abs() < 1e-13 {
                break;
            }
            fb = x(b);
        }
        self.shape_with(prescribed, b)
    }

    /// The pose of a shape with the toe markers at their floor positions.
    fn pose(&self, model: &Model, s: &Shape) -> Pose {
        let foot_rot = rot_y(s[HEEL]);
        let feet = [0, 1].map(|i| FootPose {
            ankle: self.toe_pivots[i] - foot_rot * model.toe,
            rot: foot_rot,
        });
        let ankle = feet[0].ankle;
        let knee = ankle + V3::new(s[SHANK].sin(), 0.0, s[SHANK].cos()) * model.shank_m;
        let thigh = s[SHANK] - s[KNEE];
        let hip = knee + V3::new(thigh.sin(), 0.0, thigh.cos()) * model.thigh_m;
        let lean = thigh + s[HIP];
        let arm = ArmPose::Angles {
            flexion: s[ARM],
            abduction: ARM_ABDUCTION_DEG.to_radians(),
            elbow: s[ELBOW],
        };
        Pose {
            origin: V3::new(hip.x, 0.0, hip.z),
            torso: rot_y(lean),
            head_pitch: -0.4 * lean,
            feet,
            knee_pole: [V3::x(), V3::x()],
            arms: [arm.clone(), arm],
            bar: None,
        }
    }

    /// Prescribed angles in a contact phase.
    fn prescribed(&self, t: f64) -> [f64; 4] {
        let quintic = |q: &[Quintic; 4], u: f64| [q[0].at(u), q[1].at(u), q[2].at(u), q[3].at(u)];
        if t < self.start_s {
            self.channel_values(|c| c.stand)
        } else if t < self.bottom_s {
            quintic(
                &self.countermovement,
                (t - self.start_s) / COUNTERMOVEMENT_S,
            )
        } else if t < self.landing_s {
            let u = ((t - self.bottom_s) / self.push_s).min(self.take_off_u);
            self.channel_values(|c| c.push(u))
        } else if t < self.absorbed_s {
            let u = self.take_off_u - (t - self.landing_s) / self.push_s;
            self.channel_values(|c| c.push(u))
        } else if t < self.recovered_s {
            quintic(&self.recovery, (t - self.absorbed_s) / RECOVERY_S)
        } else {
            self.channel_values(|c| c.stand)
        }
    }

    /// The body at time `t_s`.
    pub fn body_at(&self, model: &Model, com: &ComModel, t_s: f64) -> Body {
        if t_s >= self.take_off_s && t_s < self.landing_s {
            let tau = t_s - self.take_off_s;
            let total = self.landing_s - self.take_off_s;
            let g = fade_integral(tau, total);
            let b = bump(tau / total);
            let mut s = self.shape_to;
            for k in 0..6 {
                s[k] += self.rate_to[k] * g + TUCK_DEG[k].to_radians() * b;
            }
            let mut body = model.build(&self.pose(model, &s));
            let target =
                self.com_to + V3::new(0.0, 0.0, self.vz_to_m_s * tau - 0.5 * G_M_S2 * tau * tau);
            let shift = target - com.com(&body);
            body.translate(&shift);
            body
        } else {
            let s = self.balanced(model, com, self.prescribed(t_s));
            model.build(&self.pose(model, &s))
        }
    }
}

/// How far a rate present at take-off carries the shape, `tau` s into a flight of `total` s:
/// the rate fades out over [`FADE_S`] after take-off and, mirrored, fades in (with opposite
/// sign) over the last [`FADE_S`]; 0 at both ends, slope 1 at take-off and -1 at landing.
fn fade_integral(tau: f64, total: f64) -> f64 {
    let ramp = |x: f64| {
        let v = 1.0 - (x / FADE_S).clamp(0.0, 1.0);
        FADE_S / 3.0 * (1.0 - v * v * v)
    };
    ramp(tau) + ramp(total - tau) - FADE_S / 3.0
}
