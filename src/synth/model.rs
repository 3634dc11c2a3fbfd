//! The model body: its dimensions from stature, the positions of its markers and exact joint
//! centers for a pose, and its true whole-body CoM.
//!
//! Frames. The lab frame is +x forward, +y left, +z up, floor at z = 0, metres. The torso frame
//! (pelvis and trunk, one rigid body) has the same axes when upright and its origin at `mid_hip`,
//! the midpoint of the two hip joint centers. A foot frame has its origin at the ankle joint
//! center, x along the foot (heel to toe), z up when the foot is flat.
//!
//! Dimensions are fractions of stature H ([`proportions`]), after Drillis & Contini (1966) as
//! reproduced in Winter, Biomechanics and Motor Control of Human Movement, Fig. 4.1 (from memory).
//! Segment lengths are taken from that figure. Trunk and head landmarks are placed at their
//! standing heights (acromion 0.818 H, vertex H, ...) in the upright reference posture (knees
//! flexed 5 deg, `mid_hip` 0.035 H in front of the ankles), where the hip joint centers, hanging
//! on the fixed leg lengths, stand about 0.002 H below Drillis & Contini's 0.530 H.
//!
//! The hip joint center is placed by the Harrington et al. (2007) full regression (doi
//! 10.1016/j.jbiomech.2006.02.003; `docs/reference/methods.md` 1.2), inverted: the pelvis markers are
//! put where that regression, applied to them with the model's leg length, returns the model's
//! own hip joint centers. The shoulder
//! joint center lies 17 % of the inter-acromion distance below the acromion marker along the
//! trunk axis (the offset gravline's body model uses; from memory, after Rab et al. 2002, Gait
//! Posture 15:113-119). Knee, ankle, elbow and wrist centers lie midway between their lateral and
//! medial markers, each marker half the joint width plus the marker radius from the center along
//! the segment's medio-lateral axis: the hinge axis of the knee and the elbow, the wrist's
//! continuation of the elbow axis, the ankle's flexion axis (the foot's transverse axis).
//!
//! The true CoM is the segmental CoM of the anthropometric table's default rows (de Leva 1996 by
//! default) computed from the exact points, with the true vertex for the head.

use super::geom::{chain_span, perpendicular, rot_axis, rot_x, rot_y, two_link, V3};
use crate::anthropometry::{SegmentKind, SegmentTable};
use crate::body::vocabulary::{split_side, Side};
use nalgebra::Rotation3;

/// Radius of every marker, metres (a 14 mm marker; common practice, no source).
pub const MARKER_RADIUS_M: f64 = 0.007;

/// Distance between the two barbell markers (the inner collars of a 20 kg bar), metres; from
/// memory.
pub const BAR_COLLAR_SPAN_M: f64 = 1.31;

/// Dimensions of the model body as fractions of stature H.
///
/// Drillis & Contini (1966) via Winter, Fig. 4.1, all from memory: heights of the acromion,
/// hip (greater trochanter), knee and ankle, the shoulder and hip widths, the upper arm, forearm,
/// hand and foot lengths, the foot width. The thigh and shank lengths are the differences of the
/// joint heights. The remaining values are ours, chosen to be self-consistent with these and with
/// common anthropometric surveys (from memory).
pub mod proportions {
    /// Acromion (shoulder) height, standing (Drillis & Contini).
    pub const ACROMION_HEIGHT: f64 = 0.818;
    /// Hip joint center height, standing (Drillis & Contini's greater trochanter level).
    pub const HIP_HEIGHT: f64 = 0.530;
    /// Knee joint center height, standing (Drillis & Contini).
    pub const KNEE_HEIGHT: f64 = 0.285;
    /// Ankle joint center height (Drillis & Contini).
    pub const ANKLE_HEIGHT: f64 = 0.039;
    /// Inter-acromion distance (Drillis & Contini's shoulder width).
    pub const SHOULDER_WIDTH: f64 = 0.259;
    /// Hip width (Drillis & Contini); the model's hip joint centers lie inside it.
    pub const HIP_WIDTH: f64 = 0.191;
    /// Shoulder joint center to elbow joint center (Drillis & Contini's upper arm).
    pub const UPPER_ARM: f64 = 0.186;
    /// Elbow joint center to wrist joint center (Drillis & Contini's forearm).
    pub const FOREARM: f64 = 0.146;
    /// Wrist joint center to the tip of the middle finger (Drillis & Contini's hand).
    pub const HAND: f64 = 0.108;
    /// Heel marker to toe marker, along the foot (Drillis & Contini's foot length).
    pub const FOOT_LENGTH: f64 = 0.152;
    /// Foot width across the metatarsal heads (Drillis & Contini).
    pub const FOOT_WIDTH: f64 = 0.055;
    /// Hip joint center to knee joint center: 0.530 - 0.285.
    pub const THIGH: f64 = HIP_HEIGHT - KNEE_HEIGHT;
    /// Knee joint center to ankle joint center: 0.285 - 0.039.
    pub const SHANK: f64 = KNEE_HEIGHT - ANKLE_HEIGHT;
    /// Wrist joint center to the head of the 3rd metacarpal: 0.46 of the hand length (ours).
    pub const WRIST_TO_MET3: f64 = 0.46 * HAND;
    /// Epicondyle breadth of the knee (ours, from memory of surveys: about 100 mm).
    pub const KNEE_WIDTH: f64 = 0.057;
    /// Bimalleolar breadth (ours: about 70 mm).
    pub const ANKLE_WIDTH: f64 = 0.040;
    /// Humeral epicondyle breadth (ours: about 70 mm).
    pub const ELBOW_WIDTH: f64 = 0.040;
    /// Bistyloid breadth of the wrist (ours: about 58 mm).
    pub const WRIST_WIDTH: f64 = 0.033;
    /// Distance between the ASIS marker centers (ours: about 245 mm).
    pub const ASIS_WIDTH: f64 = 0.140;
    /// Distance between mid-ASIS and mid-PSIS (ours: about 158 mm).
    pub const PELVIS_DEPTH: f64 = 0.090;
    /// Distance between the PSIS marker centers (ours).
    pub const PSIS_WIDTH: f64 = 0.050;
    /// Height of the jugular notch, standing (ours).
    pub const JUGULAR_HEIGHT: f64 = 0.815;
    /// Height of C7, standing (ours).
    pub const C7_HEIGHT: f64 = 0.865;
    /// Height of the xiphoid, standing (ours).
    pub const XIPHOID_HEIGHT: f64 = 0.705;
    /// Height of T8, standing (ours).
    pub const T8_HEIGHT: f64 = 0.715;
    /// Height of the four head markers (temple level, just above Drillis & Contini's eye level
    /// 0.936).
    pub const HEAD_MARKER_HEIGHT: f64 = 0.940;
}

/// Knee flexion of the upright reference posture, degrees (quiet standing; ours).
pub(crate) const STANDING_KNEE_FLEXION_DEG: f64 = 5.0;
/// `mid_hip` ahead of the ankle joint centers in the upright posture, fraction of stature (the
/// hip stands about 6 cm anterior to the ankle: Woodhull et al. 1985, Eur J Appl Physiol
/// 54:109-115, `docs/reference/methods.md` 6).
pub(crate) const STANDING_HIP_AHEAD: f64 = 0.035;
/// Ankle joint centers lateral of the hip joint centers in the upright posture, metres (ours).
pub(crate) const STANDING_FOOT_OUTSET_M: f64 = 0.005;

/// Anterior tilt of the pelvis: the ASIS lie below the PSIS by this angle (ours, from memory).
const PELVIS_TILT_DEG: f64 = 10.0;

/// Heights of the foot markers' centers above the floor with the foot flat, metres: marker radius
/// plus the skin and sole under it (ours).
const HEEL_MARKER_HEIGHT_M: f64 = MARKER_RADIUS_M + 0.008;
const TOE_MARKER_HEIGHT_M: f64 = MARKER_RADIUS_M + 0.005;
const MT1_MARKER_HEIGHT_M: f64 = MARKER_RADIUS_M + 0.013;
const MT5_MARKER_HEIGHT_M: f64 = MARKER_RADIUS_M + 0.011;
const MT2_MARKER_HEIGHT_M: f64 = MARKER_RADIUS_M + 0.025;

/// The two sides in index order (0 = left, 1 = right).
pub(crate) const SIDES: [Side; 2] = [Side::Left, Side::Right];

/// +1 on the left, -1 on the right: the sign of the lateral direction along +y.
pub(crate) fn lateral_sign(side: Side) -> f64 {
    match side {
        Side::Left => 1.0,
        Side::Right => -1.0,
    }
}

fn side_index(side: Side) -> usize {
    match side {
        Side::Left => 0,
        Side::Right => 1,
    }
}

/// Sided points of the model, named by their vocabulary stem.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Stem {
    Asis,
    Psis,
    HipJc,
    KneeJc,
    KneeLat,
    KneeMed,
    AnkleJc,
    AnkleLat,
    AnkleMed,
    Heel,
    Toe,
    Mt1,
    Mt2,
    Mt5,
    ShoulderJc,
    Acromion,
    ElbowJc,
    ElbowLat,
    ElbowMed,
    WristJc,
    WristRad,
    WristUln,
    Hand,
    HeadFront,
    HeadBack,
    ThighFront,
    ShankFront,
    UpperArmLat,
}

const N_STEMS: usize = 28;

impl Stem {
    const ALL: [Stem; N_STEMS] = [
        Stem::Asis,
        Stem::Psis,
        Stem::HipJc,
        Stem::KneeJc,
        Stem::KneeLat,
        Stem::KneeMed,
        Stem::AnkleJc,
        Stem::AnkleLat,
        Stem::AnkleMed,
        Stem::Heel,
        Stem::Toe,
        Stem::Mt1,
        Stem::Mt2,
        Stem::Mt5,
        Stem::ShoulderJc,
        Stem::Acromion,
        Stem::ElbowJc,
        Stem::ElbowLat,
        Stem::ElbowMed,
        Stem::WristJc,
        Stem::WristRad,
        Stem::WristUln,
        Stem::Hand,
        Stem::HeadFront,
        Stem::HeadBack,
        Stem::ThighFront,
        Stem::ShankFront,
        Stem::UpperArmLat,
    ];

    fn name(self) -> &'static str {
        match self {
            Stem::Asis => "asis",
            Stem::Psis => "psis",
            Stem::HipJc => "hip_jc",
            Stem::KneeJc => "knee_jc",
            Stem::KneeLat => "knee_lat",
            Stem::KneeMed => "knee_med",
            Stem::AnkleJc => "ankle_jc",
            Stem::AnkleLat => "ankle_lat",
            Stem::AnkleMed => "ankle_med",
            Stem::Heel => "heel",
            Stem::Toe => "toe",
            Stem::Mt1 => "mt1",
            Stem::Mt2 => "mt2",
            Stem::Mt5 => "mt5",
            Stem::ShoulderJc => "shoulder_jc",
            Stem::Acromion => "acromion",
            Stem::ElbowJc => "elbow_jc",
            Stem::ElbowLat => "elbow_lat",
            Stem::ElbowMed => "elbow_med",
            Stem::WristJc => "wrist_jc",
            Stem::WristRad => "wrist_rad",
            Stem::WristUln => "wrist_uln",
            Stem::Hand => "hand",
            Stem::HeadFront => "head_front",
            Stem::HeadBack => "head_back",
            Stem::ThighFront => "thigh_front",
            Stem::ShankFront => "shank_front",
            Stem::UpperArmLat => "upper_arm_lat",
        }
    }
}

/// Single (unsided) points of the model, and the two barbell markers.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Single {
    C7,
    T8,
    Jugular,
    Xiphoid,
    HeadTop,
    MidHip,
    MidShoulder,
    BarLeft,
    BarRight,
}

const N_SINGLES: usize = 9;

impl Single {
    const ALL: [Single; N_SINGLES] = [
        Single::C7,
        Single::T8,
        Single::Jugular,
        Single::Xiphoid,
        Single::HeadTop,
        Single::MidHip,
        Single::MidShoulder,
        Single::BarLeft,
        Single::BarRight,
    ];

    fn name(self) -> &'static str {
        match self {
            Single::C7 => "c7",
            Single::T8 => "t8",
            Single::Jugular => "jugular",
            Single::Xiphoid => "xiphoid",
            Single::HeadTop => "head_top",
            Single::MidHip => "mid_hip",
            Single::MidShoulder => "mid_shoulder",
            Single::BarLeft => "bar_left",
            Single::BarRight => "bar_right",
        }
    }
}

/// A point of the model body.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum PointId {
    Sided(Side, Stem),
    Single(Single),
}

impl PointId {
    /// The point of a full name (`l_knee_lat`, `c7`, `bar_left`), if the model has it.
    pub fn from_name(name: &str) -> Option<PointId> {
        if let Some(s) = Single::ALL.iter().find(|s| s.name() == name) {
            return Some(PointId::Single(*s));
        }
        let (side, stem) = split_side(name);
        let side = side?;
        Stem::ALL
            .iter()
            .find(|s| s.name() == stem)
            .map(|s| PointId::Sided(side, *s))
    }

    /// The point's full name.
    pub fn name(self) -> String {
        match self {
            PointId::Sided(side, stem) => side.name(stem.name()),
            PointId::Single(s) => s.name().to_string(),
        }
    }
}

/// Every point of the model in one pose, lab frame, metres.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Body {
    sided: [[V3; N_STEMS]; 2],
    single: [V3; N_SINGLES],
}

impl Body {
    fn zero() -> Body {
        Body {
            sided: [[V3::zeros(); N_STEMS]; 2],
            single: [V3::zeros(); N_SINGLES],
        }
    }

    /// Position of a point.
    pub fn get(&self, id: PointId) -> V3 {
        match id {
            PointId::Sided(side, stem) => self.sided[side_index(side)][stem as usize],
            PointId::Single(s) => self.single[s as usize],
        }
    }

    fn side(&self, i: usize, stem: Stem) -> V3 {
        self.sided[i][stem as usize]
    }

    fn set_side(&mut self, i: usize, stem: Stem, p: V3) {
        self.sided[i][stem as usize] = p;
    }

    fn set(&mut self, s: Single, p: V3) {
        self.single[s as usize] = p;
    }

    /// Moves every point by `d`.
    pub fn translate(&mut self, d: &V3) {
        for side in self.sided.iter_mut() {
            for p in side.iter_mut() {
                *p += d;
            }
        }
        for p in self.single.iter_mut() {
            *p += d;
        }
    }
}

/// Pose of one foot: its ankle joint center and orientation (foot frame to lab).
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct FootPose {
    pub ankle: V3,
    pub rot: Rotation3<f64>,
}

/// Pose of one arm.
#[derive(Clone, Debug, PartialEq)]
pub(crate) enum ArmPose {
    /// Joint angles in the torso frame, radians: shoulder flexion (forward swing) and abduction,
    /// elbow flexion. Forearm supinated: the radial styloid lateral.
    Angles {
        flexion: f64,
        abduction: f64,
        elbow: f64,
    },
    /// The head of the 3rd metacarpal at `hand` (lab), elbow bent towards `pole`, wrist straight.
    Reach { hand: V3, pole: V3 },
}

/// A whole-body pose.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Pose {
    /// `mid_hip`, lab frame.
    pub origin: V3,
    /// Torso frame to lab.
    pub torso: Rotation3<f64>,
    /// Head flexion relative to the trunk (nodding forward is positive), radians.
    pub head_pitch: f64,
    pub feet: [FootPose; 2],
    /// Direction the knee points to (lab), per side.
    pub knee_pole: [V3; 2],
    pub arms: [ArmPose; 2],
    /// Barbell axis center in the torso frame, when there is a bar.
    pub bar: Option<V3>,
}

/// Dimensions and local geometry of the model body, metres.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Model {
    pub height_m: f64,
    pub thigh_m: f64,
    pub shank_m: f64,
    pub upper_arm_m: f64,
    pub forearm_m: f64,
    pub wrist_to_met3_m: f64,
    pub foot_length_m: f64,
    pub knee_width_m: f64,
    pub ankle_width_m: f64,
    pub elbow_width_m: f64,
    pub wrist_width_m: f64,
    pub ankle_height_m: f64,
    /// Height of `mid_hip` in the upright reference posture.
    pub standing_hip_height_m: f64,
    /// ASIS to medial malleolus in the upright reference posture (legs straight and vertical).
    pub leg_length_m: f64,
    // Torso frame, per side (0 = left).
    pub hip_jc: [V3; 2],
    asis: [V3; 2],
    psis: [V3; 2],
    acromion: [V3; 2],
    pub shoulder_jc: [V3; 2],
    c7: V3,
    t8: V3,
    jugular: V3,
    xiphoid: V3,
    /// Pivot of head flexion.
    neck: V3,
    head_top: V3,
    head_front: [V3; 2],
    head_back: [V3; 2],
    // Foot frame, per side where the side matters.
    pub heel: V3,
    pub toe: V3,
    mt1: [V3; 2],
    mt2: [V3; 2],
    mt5: [V3; 2],
}

/// Harrington et al. (2007) full regression: the right hip joint center in the pelvis frame
/// (origin mid-ASIS; x anterior, y superior, z lateral), millimetres, from the pelvis width PW
/// (inter-ASIS), depth PD (mid-ASIS to mid-PSIS) and leg length LL (ASIS to medial malleolus), all
/// in millimetres (`docs/reference/methods.md` 1.2).
pub(crate) fn harrington_full_mm(pw_mm: f64, pd_mm: f64, ll_mm: f64) -> [f64; 3] {
    [
        -0.24 * pd_mm - 9.9,
        -0.16 * pw_mm - 0.04 * ll_mm - 7.1,
        0.28 * pd_mm + 0.16 * pw_mm + 7.9,
    ]
}

impl Model {
    /// The model body of a person of stature `height_m`.
    pub fn new(height_m: f64) -> Model {
        use proportions as p;
        let h = height_m;
        let r = MARKER_RADIUS_M;
        let thigh_m = p::THIGH * h;
        let shank_m = p::SHANK * h;
        let ankle_width_m = p::ANKLE_WIDTH * h;
        let ankle_height_m = p::ANKLE_HEIGHT * h;
        // Upright reference posture: trunk and head landmarks stand at their stature fractions.
        let span = chain_span(thigh_m, shank_m, STANDING_KNEE_FLEXION_DEG.to_radians());
        let ahead = STANDING_HIP_AHEAD * h;
        let outset = STANDING_FOOT_OUTSET_M;
        let standing_hip_height_m =
            ankle_height_m + (span * span - ahead * ahead - outset * outset).sqrt();
        let z = |height_fraction: f64| height_fraction * h - standing_hip_height_m;

        // Pelvis: axes of the pelvis frame in the torso frame, tilted anteriorly.
        let tilt = PELVIS_TILT_DEG.to_radians();
        let x_p = V3::new(tilt.cos(), 0.0, -tilt.sin());
        let y_p = V3::new(tilt.sin(), 0.0, tilt.cos());
        let pw = p::ASIS_WIDTH * h;
        let pd = p::PELVIS_DEPTH * h;
        // Leg length and hip position depend on each other through the regression's 0.04 LL
        // term; the fixed point converges by a factor 0.04 per step.
        let mut leg_length_m = 0.52 * h;
        let mut hjc = [0.0; 3];
        for _ in 0..60 {
            let mm = harrington_full_mm(pw * 1e3, pd * 1e3, leg_length_m * 1e3);
            hjc = [mm[0] * 1e-3, mm[1] * 1e-3, mm[2] * 1e-3];
            let mid_asis = -(x_p * hjc[0] + y_p * hjc[1]);
            let asis_l = mid_asis + V3::y() * (pw / 2.0);
            let ankle_med_l = V3::new(
                0.0,
                hjc[2] - (ankle_width_m / 2.0 + r),
                -(thigh_m + shank_m),
            );
            let next = (asis_l - ankle_med_l).norm();
            let done = (next - leg_length_m).abs() < 1e-14;
            leg_length_m = next;
            if done {
                break;
            }
        }
        let mid_asis = -(x_p * hjc[0] + y_p * hjc[1]);
        let mid_psis = mid_asis - x_p * pd;
        let sided = |v: V3| [v, V3::new(v.x, -v.y, v.z)];
        let hip_jc = sided(V3::new(0.0, hjc[2], 0.0));
        let asis = sided(mid_asis + V3::y() * (pw / 2.0));
        let psis = sided(mid_psis + V3::y() * (p::PSIS_WIDTH * h / 2.0));

        // Trunk.
        let shoulder_half = p::SHOULDER_WIDTH * h / 2.0;
        let acromion = sided(V3::new(-0.005 * h, shoulder_half, z(p::ACROMION_HEIGHT)));
        let offset = 0.17 * p::SHOULDER_WIDTH * h;
        let shoulder_jc = sided(V3::new(
            -0.005 * h,
            shoulder_half,
            z(p::ACROMION_HEIGHT) - offset,
        ));
        let jugular = V3::new(0.034 * h, 0.0, z(p::JUGULAR_HEIGHT));
        let xiphoid = V3::new(0.068 * h, 0.0, z(p::XIPHOID_HEIGHT));
        let c7 = V3::new(-0.046 * h, 0.0, z(p::C7_HEIGHT));
        let t8 = V3::new(-0.080 * h, 0.0, z(p::T8_HEIGHT));

        // Head.
        let neck = V3::new(-0.010 * h, 0.0, z(0.850));
        let head_top = V3::new(0.004 * h, 0.0, z(1.0));
        let head_front = sided(V3::new(0.040 * h, 0.042 * h, z(p::HEAD_MARKER_HEIGHT)));
        let head_back = sided(V3::new(-0.058 * h, 0.036 * h, z(p::HEAD_MARKER_HEIGHT)));

        // Foot: the ankle joint center lies 0.225 of the foot length in front of the heel marker.
        let foot_length_m = p::FOOT_LENGTH * h;
        let fl = foot_length_m;
        let half_width = p::FOOT_WIDTH * h / 2.0;
        let above = |height_m: f64| height_m - ankle_height_m;
        let heel = V3::new(-0.225 * fl, 0.0, above(HEEL_MARKER_HEIGHT_M));
        let toe = V3::new(0.775 * fl, 0.0, above(TOE_MARKER_HEIGHT_M));
        // Medial is -y on the left foot, +y on the right.
        let medial = |i: usize, v: V3| {
            let s = if i == 0 { -1.0 } else { 1.0 };
            V3::new(v.x, s * v.y, v.z)
        };
        let mt1_local = V3::new(0.495 * fl, half_width + r, above(MT1_MARKER_HEIGHT_M));
        let mt5_local = V3::new(0.415 * fl, -(half_width + r), above(MT5_MARKER_HEIGHT_M));
        let mt2_local = V3::new(
            0.505 * fl,
            0.1 * p::FOOT_WIDTH * h,
            above(MT2_MARKER_HEIGHT_M),
        );

        Model {
            height_m: h,
            thigh_m,
            shank_m,
            upper_arm_m: p::UPPER_ARM * h,
            forearm_m: p::FOREARM * h,
            wrist_to_met3_m: p::WRIST_TO_MET3 * h,
            foot_length_m,
            knee_width_m: p::KNEE_WIDTH * h,
            ankle_width_m,
            elbow_width_m: p::ELBOW_WIDTH * h,
            wrist_width_m: p::WRIST_WIDTH * h,
            ankle_height_m,
            standing_hip_height_m,
            leg_length_m,
            hip_jc,
            asis,
            psis,
            acromion,
            shoulder_jc,
            c7,
            t8,
            jugular,
            xiphoid,
            neck,
            head_top,
            head_front,
            head_back,
            heel,
            toe,
            mt1: [medial(0, mt1_local), medial(1, mt1_local)],
            mt2: [medial(0, mt2_local), medial(1, mt2_local)],
            mt5: [medial(0, mt5_local), medial(1, mt5_local)],
        }
    }

    /// Height of the heel and toe markers above the floor with the foot flat, metres.
    pub fn heel_toe_heights_m(&self) -> (f64, f64) {
        (
            self.heel.z + self.ankle_height_m,
            self.toe.z + self.ankle_height_m,
        )
    }

    /// Every point of the body in a pose.
    pub fn build(&self, pose: &Pose) -> Body {
        let mut b = Body::zero();
        let o = pose.origin;
        let r = &pose.torso;
        let lab = |p: &V3| o + r * p;
        b.set(Single::C7, lab(&self.c7));
        b.set(Single::T8, lab(&self.t8));
        b.set(Single::Jugular, lab(&self.jugular));
        b.set(Single::Xiphoid, lab(&self.xiphoid));
        let head_rot = rot_y(pose.head_pitch);
        let head = |p: &V3| lab(&(self.neck + head_rot * (p - self.neck)));
        b.set(Single::HeadTop, head(&self.head_top));
        let radius = MARKER_RADIUS_M;
        for (i, side) in SIDES.iter().enumerate() {
            let lat = lateral_sign(*side);
            b.set_side(i, Stem::HeadFront, head(&self.head_front[i]));
            b.set_side(i, Stem::HeadBack, head(&self.head_back[i]));
            b.set_side(i, Stem::Asis, lab(&self.asis[i]));
            b.set_side(i, Stem::Psis, lab(&self.psis[i]));

            // Leg: knee by inverse kinematics from the hip to the ankle.
            let hip = lab(&self.hip_jc[i]);
            let foot = &pose.feet[i];
            let ankle = foot.ankle;
            let pole = pose.knee_pole[i];
            let knee = two_link(&hip, &ankle, self.thigh_m, self.shank_m, &pole);
            let down = (ankle - hip)
                .try_normalize(1e-12)
                .unwrap_or_else(|| -V3::z());
            let forward = perpendicular(&pole, &down, &V3::x());
            let hinge = forward.cross(&down); // points left for a knee pointing forward
            let knee_off = self.knee_width_m / 2.0 + radius;
            let ankle_off = self.ankle_width_m / 2.0 + radius;
            b.set_side(i, Stem::HipJc, hip);
            b.set_side(i, Stem::KneeJc, knee);
            b.set_side(i, Stem::KneeLat, knee + hinge * (lat * knee_off));
            b.set_side(i, Stem::KneeMed, knee - hinge * (lat * knee_off));
            b.set_side(i, Stem::AnkleJc, ankle);
            // The malleoli lie on the ankle's flexion axis, the foot's transverse axis.
            let ankle_axis = foot.rot * V3::y();
            b.set_side(i, Stem::AnkleLat, ankle + ankle_axis * (lat * ankle_off));
            b.set_side(i, Stem::AnkleMed, ankle - ankle_axis * (lat * ankle_off));
            let in_foot = |p: &V3| ankle + foot.rot * p;
            b.set_side(i, Stem::Heel, in_foot(&self.heel));
            b.set_side(i, Stem::Toe, in_foot(&self.toe));
            b.set_side(i, Stem::Mt1, in_foot(&self.mt1[i]));
            b.set_side(i, Stem::Mt2, in_foot(&self.mt2[i]));
            b.set_side(i, Stem::Mt5, in_foot(&self.mt5[i]));
            let thigh_dir = (knee - hip) / self.thigh_m;
            let shank_dir = (ankle - knee) / self.shank_m;
            let thigh_front = thigh_dir.cross(&hinge);
            let shank_front = shank_dir.cross(&hinge);
            b.set_side(
                i,
                Stem::ThighFront,
                hip + (knee - hip) * 0.55 + thigh_front * (0.045 * self.height_m + radius),
            );
            b.set_side(
                i,
                Stem::ShankFront,
                knee + (ankle - knee) * 0.35 + shank_front * (0.025 * self.height_m + radius),
            );

            // Arm.
            let sjc = lab(&self.shoulder_jc[i]);
            b.set_side(i, Stem::ShoulderJc, sjc);
            b.set_side(i, Stem::Acromion, lab(&self.acromion[i]));
            let forearm_and_hand = self.forearm_m + self.wrist_to_met3_m;
            let (elbow, forearm_dir, axis) = match &pose.arms[i] {
                ArmPose::Angles {
                    flexion,
                    abduction,
                    elbow,
                } => {
                    let shoulder = rot_y(-flexion) * rot_x(lat * abduction);
                    let upper = r * (shoulder * -V3::z());
                    let axis = r * (shoulder * V3::y());
                    let fore = rot_axis(&axis, -elbow) * upper;
                    (sjc + upper * self.upper_arm_m, fore, axis)
                }
                ArmPose::Reach { hand, pole } => {
                    let e = two_link(&sjc, hand, self.upper_arm_m, forearm_and_hand, pole);
                    let fore = (hand - e).try_normalize(1e-12).unwrap_or_else(|| -V3::z());
                    let upper = (e - sjc) / self.upper_arm_m;
                    let axis = fore
                        .cross(&upper)
                        .try_normalize(1e-9)
                        .unwrap_or_else(|| r * V3::y());
                    (e, fore, axis)
                }
            };
            let wrist = elbow + forearm_dir * self.forearm_m;
            let elbow_off = self.elbow_width_m / 2.0 + radius;
            let wrist_off = self.wrist_width_m / 2.0 + radius;
            b.set_side(i, Stem::ElbowJc, elbow);
            b.set_side(i, Stem::ElbowLat, elbow + axis * (lat * elbow_off));
            b.set_side(i, Stem::ElbowMed, elbow - axis * (lat * elbow_off));
            b.set_side(i, Stem::WristJc, wrist);
            b.set_side(i, Stem::WristRad, wrist + axis * (lat * wrist_off));
            b.set_side(i, Stem::WristUln, wrist - axis * (lat * wrist_off));
            b.set_side(i, Stem::Hand, elbow + forearm_dir * forearm_and_hand);
            b.set_side(
                i,
                Stem::UpperArmLat,
                sjc + (elbow - sjc) * 0.5 + axis * (lat * (0.028 * self.height_m + radius)),
            );
        }
        let mid_hip = (b.side(0, Stem::HipJc) + b.side(1, Stem::HipJc)) / 2.0;
        let mid_shoulder = (b.side(0, Stem::ShoulderJc) + b.side(1, Stem::ShoulderJc)) / 2.0;
        b.set(Single::MidHip, mid_hip);
        b.set(Single::MidShoulder, mid_shoulder);
        if let Some(bar) = pose.bar {
            let half = V3::y() * (BAR_COLLAR_SPAN_M / 2.0);
            b.set(Single::BarLeft, lab(&(bar + half)));
            b.set(Single::BarRight, lab(&(bar - half)));
        }
        b
    }
}

/// One segment instance of the CoM sum: its endpoints, mass fraction and CoM fraction.
#[derive(Clone, Copy, Debug, PartialEq)]
struct SegmentRef {
    origin: PointId,
    other: PointId,
    mass_fraction: f64,
    com_fraction: f64,
}

/// The segments of a table's default rows (sided ones on both sides), resolved to model points.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct ComModel {
    segments: Vec<SegmentRef>,
    mass_sum: f64,
}

impl ComModel {
    /// Resolves the default rows of `table`; rows whose endpoints the model lacks are left out
    /// (the built-in tables have none such).
    pub fn new(table: &SegmentTable) -> ComModel {
        let mut segments = Vec::new();
        for kind in SegmentKind::WHOLE_BODY {
            let Some(row) = table.default_row(kind) else {
                continue;
            };
            let names: Vec<(String, String)> = if kind.is_sided() {
                SIDES
                    .iter()
                    .map(|s| (s.name(&row.origin), s.name(&row.other)))
                    .collect()
            } else {
                vec![(row.origin.clone(), row.other.clone())]
            };
            for (o, t) in names {
                if let (Some(origin), Some(other)) =
                    (PointId::from_name(&o), PointId::from_name(&t))
                {
                    segments.push(SegmentRef {
                        origin,
                        other,
                        mass_fraction: row.mass_fraction,
                        com_fraction: row.com_fraction,
                    });
                }
            }
        }
        let mass_sum = segments.iter().map(|s| s.mass_fraction).sum();
        ComModel { segments, mass_sum }
    }

    /// A model with no segments (its CoM is the origin).
    pub fn empty() -> ComModel {
        ComModel {
            segments: Vec::new(),
            mass_sum: 0.0,
        }
    }

    /// Number of segment instances in the sum (14 for a whole body).
    #[cfg(test)]
    pub fn len(&self) -> usize {
        self.segments.len()
    }

    /// Whole-body CoM: mass-weighted mean of the segment CoMs, divided by the actual mass sum.
    pub fn com(&self, body: &Body) -> V3 {
        let mut sum = V3::zeros();
        for s in &self.segments {
            let o = body.get(s.origin);
            let t = body.get(s.other);
            sum += (o + (t - o) * s.com_fraction) * s.mass_fraction;
        }
        if self.mass_sum > 0.0 {
            sum / self.mass_sum
        } else {
            sum
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::anthropometry::Sex;
    use approx::assert_abs_diff_eq;

    /// Check values of `docs/reference/methods.md` 1.2 (derived there from the published equations):
    /// PW 250, PD 160, LL 900 mm gives -48.3, -83.1, +92.7 mm.
    #[test]
    fn harrington_matches_the_reference_check_values() {
        let [x, y, z] = harrington_full_mm(250.0, 160.0, 900.0);
        assert_abs_diff_eq!(x, -48.3, epsilon = 0.05);
        assert_abs_diff_eq!(y, -83.1, epsilon = 0.05);
        assert_abs_diff_eq!(z, 92.7, epsilon = 0.05);
    }

    #[test]
    fn names_round_trip() {
        for stem in Stem::ALL {
            for side in SIDES {
                let id = PointId::Sided(side, stem);
                assert_eq!(PointId::from_name(&id.name()), Some(id));
            }
        }
        for s in Single::ALL {
            let id = PointId::Single(s);
            assert_eq!(PointId::from_name(&id.name()), Some(id));
        }
        assert_eq!(PointId::from_name("l_kneecap"), None);
    }

    /// Every default de Leva row resolves: head, trunk and six sided segments twice.
    #[test]
    fn de_leva_default_rows_resolve_to_model_points() {
        for sex in [Sex::Female, Sex::Male] {
            let table = SegmentTable::builtin("de-leva-1996", sex).unwrap();
            assert_eq!(ComModel::new(&table).len(), 14);
        }
    }

    /// The leg length fixed point is consistent: recomputing it from the placed markers gives
    /// the same value.
    #[test]
    fn leg_length_is_self_consistent() {
        let m = Model::new(1.75);
        let ankle_med_l = V3::new(
            0.0,
            m.hip_jc[0].y - (m.ankle_width_m / 2.0 + MARKER_RADIUS_M),
            -(m.thigh_m + m.shank_m),
        );
        assert_abs_diff_eq!(
            (m.asis[0] - ankle_med_l).norm(),
            m.leg_length_m,
            epsilon = 1e-12
        );
        assert!(m.leg_length_m > 0.48 * 1.75 && m.leg_length_m < 0.56 * 1.75);
    }
}
