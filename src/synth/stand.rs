//! Quiet standing: feet flat at hip width (ankle joint centers 5 mm lateral of the hip joint
//! centers), 7 deg toed out; knees flexed 5 deg; `mid_hip` 0.035 H in front of the ankles (the
//! hip stands about 6 cm anterior to the ankle: Woodhull et al. 1985, Eur J Appl Physiol
//! 54:109-115, `docs/reference/methods.md` 6); trunk and head upright; arms hanging.
//!
//! Sway: the body above the ankles tilts about the mid-ankle point as an inverted pendulum, by
//! sums of three sines (0.18, 0.41, 0.77 Hz; 3.0, 1.5, 0.8 mm at the height of the CoM)
//! antero-posteriorly and two (0.23, 0.53 Hz; 1.5, 0.8 mm) medio-laterally, phases drawn from the
//! seed. Amplitudes and frequencies are ours, of the order of quiet-stance sway (from memory).

use super::geom::{rot_x, rot_y, rot_z, V3};
use super::model::{
    lateral_sign, ArmPose, FootPose, Model, Pose, SIDES, STANDING_FOOT_OUTSET_M, STANDING_HIP_AHEAD,
};
use super::noise::{Rng, STREAM_SWAY};
use nalgebra::Rotation3;
use std::f64::consts::TAU;

const TOE_OUT_DEG: f64 = 7.0;
const AP_SWAY: [(f64, f64); 3] = [(0.18, 0.0030), (0.41, 0.0015), (0.77, 0.0008)];
const ML_SWAY: [(f64, f64); 2] = [(0.23, 0.0015), (0.53, 0.0008)];

/// A planned quiet stance.
#[derive(Clone, Debug)]
pub(crate) struct Stand {
    upright: Pose,
    pivot: V3,
    pendulum_m: f64,
    ap_phases: [f64; 3],
    ml_phases: [f64; 2],
}

/// Arms hanging beside the trunk.
pub(crate) fn hanging_arms() -> [ArmPose; 2] {
    let arm = ArmPose::Angles {
        flexion: 3.0_f64.to_radians(),
        abduction: 4.0_f64.to_radians(),
        elbow: 12.0_f64.to_radians(),
    };
    [arm.clone(), arm]
}

/// The upright standing pose of `model`: ankle joint centers at (0, +/- y), feet flat.
pub(crate) fn upright(model: &Model) -> Pose {
    let h = model.height_m;
    let foot = |i: usize| {
        let lat = lateral_sign(SIDES[i]);
        let yaw = rot_z(lat * TOE_OUT_DEG.to_radians());
        let pose = FootPose {
            ankle: V3::new(
                0.0,
                model.hip_jc[i].y + lat * STANDING_FOOT_OUTSET_M,
                model.ankle_height_m,
            ),
            rot: yaw,
        };
        (pose, yaw * V3::x())
    };
    let (left, left_pole) = foot(0);
    let (right, right_pole) = foot(1);
    Pose {
        origin: V3::new(STANDING_HIP_AHEAD * h, 0.0, model.standing_hip_height_m),
        torso: Rotation3::identity(),
        head_pitch: 0.0,
        feet: [left, right],
        knee_pole: [left_pole, right_pole],
        arms: hanging_arms(),
        bar: None,
    }
}

impl Stand {
    pub fn new(model: &Model, seed: u64) -> Stand {
        let upright = upright(model);
        let pivot = V3::new(0.0, 0.0, model.ankle_height_m);
        let mut rng = Rng::new(seed, STREAM_SWAY);
        let mut phase = || TAU * rng.uniform();
        let ap_phases = [phase(), phase(), phase()];
        let ml_phases = [phase(), phase()];
        Stand {
            upright,
            pivot,
            pendulum_m: 0.55 * model.height_m - model.ankle_height_m,
            ap_phases,
            ml_phases,
        }
    }

    /// The pose at time `t_s`.
    pub fn pose(&self, t_s: f64) -> Pose {
        let sway = |terms: &[(f64, f64)], phases: &[f64]| -> f64 {
            terms
                .iter()
                .zip(phases)
                .map(|((f, a), p)| a * (TAU * f * t_s + p).sin())
                .sum()
        };
        let forward_m = sway(&AP_SWAY, &self.ap_phases);
        let left_m = sway(&ML_SWAY, &self.ml_phases);
        // Forward lean is a positive rotation about +y; lean to the left a negative one about +x.
        let tilt = rot_y(forward_m / self.pendulum_m) * rot_x(-left_m / self.pendulum_m);
        let mut pose = self.upright.clone();
        pose.origin = self.pivot + tilt * (self.upright.origin - self.pivot);
        pose.torso = tilt * self.upright.torso;
        pose
    }
}
