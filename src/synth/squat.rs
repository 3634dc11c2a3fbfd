//! The squat: a high-bar back squat with a barbell on the upper back.
//!
//! Feet fixed and flat, ankle joint centers 0.075 H either side of the midline, 15 deg toed out.
//! The bar axis sits on the upper trapezius, 0.060 H behind and 0.305 H above `mid_hip` in the
//! torso frame; its two markers `bar_left` / `bar_right` are at the inner collars,
//! [`BAR_COLLAR_SPAN_M`](super::BAR_COLLAR_SPAN_M) apart. The hands hold the bar 0.24 H either
//! side of its center (a grip just outside the shoulders), elbows pointing down and back.
//!
//! Each repetition: descent 1.2 s and ascent 1.3 s, each a minimum-jerk profile of a depth
//! variable from 0 (standing) to 1 (bottom); standing pauses of 1.25 s between repetitions, the
//! first starting 1.0 s into the trial; as many repetitions as end at least 0.5 s before the
//! trial does. With depth, `mid_hip` descends linearly from standing (knees flexed 5 deg) to
//! 0.16 H above the ankle joint centers and the trunk leans from 10 to 35 deg; the hip moves
//! fore and aft so that the bar stays exactly above the mid-foot (the midpoint between the heel
//! marker and the mean of the 1st and 5th metatarsal markers; coaching practice,
//! `docs/reference/methods.md` 6). Knees by inverse kinematics, pointing over the toes. Head flexion
//! -0.5 x trunk lean (eyes forward).

use super::geom::{chain_span, min_jerk, rot_y, rot_z, V3};
use super::model::{
    lateral_sign, ArmPose, FootPose, Model, PointId, Pose, Single, Stem, SIDES,
    STANDING_KNEE_FLEXION_DEG,
};
use crate::body::vocabulary::Side;

const LEAD_S: f64 = 1.0;
const DESCENT_S: f64 = 1.2;
const ASCENT_S: f64 = 1.3;
const PAUSE_S: f64 = 1.25;
const TAIL_S: f64 = 0.5;
const LEAN_STANDING_DEG: f64 = 10.0;
const LEAN_BOTTOM_DEG: f64 = 35.0;
const BOTTOM_HIP_HEIGHT: f64 = 0.16;
const STANCE_HALF_WIDTH: f64 = 0.075;
const TOE_OUT_DEG: f64 = 15.0;
const GRIP_HALF_WIDTH: f64 = 0.24;

/// A planned set of squats.
#[derive(Clone, Debug)]
pub(crate) struct Squat {
    feet: [FootPose; 2],
    poles: [V3; 2],
    midfoot_x_m: f64,
    bar: V3,
    hands: [V3; 2],
    hip_z0_m: f64,
    hip_z1_m: f64,
    /// (start, bottom, end) of each repetition, s.
    reps: Vec<(f64, f64, f64)>,
}

impl Squat {
    /// Plans the repetitions that fit in `duration_s`.
    pub fn new(model: &Model, duration_s: f64) -> Squat {
        let h = model.height_m;
        let foot = |i: usize| {
            let lat = lateral_sign(SIDES[i]);
            let yaw = rot_z(lat * TOE_OUT_DEG.to_radians());
            (
                FootPose {
                    ankle: V3::new(0.0, lat * STANCE_HALF_WIDTH * h, model.ankle_height_m),
                    rot: yaw,
                },
                yaw * V3::x(),
            )
        };
        let (left, left_pole) = foot(0);
        let (right, right_pole) = foot(1);
        let bar = V3::new(-0.060 * h, 0.0, 0.305 * h);
        let hand =
            |i: usize| bar + V3::new(-0.015, lateral_sign(SIDES[i]) * GRIP_HALF_WIDTH * h, 0.035);
        let mut squat = Squat {
            feet: [left, right],
            poles: [left_pole, right_pole],
            midfoot_x_m: 0.0,
            bar,
            hands: [hand(0), hand(1)],
            hip_z0_m: 0.0,
            hip_z1_m: model.ankle_height_m + BOTTOM_HIP_HEIGHT * h,
            reps: Vec::new(),
        };
        // Mid-foot from the markers of the (fixed) feet.
        let body = model.build(&squat.pose_at_depth(0.0));
        let mut midfoot = 0.0;
        for side in [Side::Left, Side::Right] {
            let get = |stem| body.get(PointId::Sided(side, stem));
            let mt = (get(Stem::Mt1) + get(Stem::Mt5)) / 2.0;
            midfoot += (get(Stem::Heel).x + mt.x) / 4.0;
        }
        squat.midfoot_x_m = midfoot;
        // Standing hip height: knees flexed by the standing angle.
        let span = chain_span(
            model.thigh_m,
            model.shank_m,
            STANDING_KNEE_FLEXION_DEG.to_radians(),
        );
        let dx = squat.hip_x(LEAN_STANDING_DEG.to_radians()) - squat.feet[0].ankle.x;
        let dy = squat.feet[0].ankle.y - model.hip_jc[0].y;
        squat.hip_z0_m = model.ankle_height_m + (span * span - dx * dx - dy * dy).max(0.0).sqrt();
        // Repetitions.
        let rep_s = DESCENT_S + ASCENT_S;
        let mut start = LEAD_S;
        while start + rep_s + TAIL_S <= duration_s {
            squat.reps.push((start, start + DESCENT_S, start + rep_s));
            start += rep_s + PAUSE_S;
        }
        squat
    }

    /// (start, bottom, end) of each repetition, s.
    pub fn reps(&self) -> &[(f64, f64, f64)] {
        &self.reps
    }

    /// `mid_hip` x that puts the bar above the mid-foot at trunk lean `lean`.
    fn hip_x(&self, lean: f64) -> f64 {
        self.midfoot_x_m - (rot_y(lean) * self.bar).x
    }

    fn depth(&self, t_s: f64) -> f64 {
        for &(start, bottom, end) in &self.reps {
            if t_s >= start && t_s < bottom {
                return min_jerk((t_s - start) / DESCENT_S);
            }
            if t_s >= bottom && t_s < end {
                return 1.0 - min_jerk((t_s - bottom) / ASCENT_S);
            }
        }
        0.0
    }

    fn pose_at_depth(&self, s: f64) -> Pose {
        let lean = (LEAN_STANDING_DEG + (LEAN_BOTTOM_DEG - LEAN_STANDING_DEG) * s).to_radians();
        let torso = rot_y(lean);
        let origin = V3::new(
            self.hip_x(lean),
            0.0,
            self.hip_z0_m + (self.hip_z1_m - self.hip_z0_m) * s,
        );
        let arm = |i: usize| ArmPose::Reach {
            hand: origin + torso * self.hands[i],
            pole: torso * V3::new(-0.5, lateral_sign(SIDES[i]) * 0.4, -1.0),
        };
        Pose {
            origin,
            torso,
            head_pitch: -0.5 * lean,
            feet: self.feet.clone(),
            knee_pole: self.poles,
            arms: [arm(0), arm(1)],
            bar: Some(self.bar),
        }
    }

    /// The pose at time `t_s`.
    pub fn pose(&self, t_s: f64) -> Pose {
        self.pose_at_depth(self.depth(t_s))
    }
}

/// The two barbell marker points.
pub(crate) const BAR_POINTS: [PointId; 2] = [
    PointId::Single(Single::BarLeft),
    PointId::Single(Single::BarRight),
];
