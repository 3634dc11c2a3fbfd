//! The sole of a foot, for the BoS: an outline on the floor built from the foot's markers and
//! the subject, in two parts (rearfoot, forefoot) that are in contact on their own.
//!
//! Inputs, per frame: the foot's points projected to the floor (metres), the marker radius (m)
//! and the foot width (m, the subject's `foot_width_m` when given). Output: the two parts as
//! polygons in floor coordinates (metres).
//!
//! Geometry (foot frame: `u` from the heel toward the toes, `v` across):
//! - the long axis runs from the heel marker to the toe marker, else to the 2nd metatarsal
//!   head, else to the middle of the 1st and 5th metatarsal heads;
//! - the rear edge lies one marker radius in front of the heel marker's centre (the marker sits
//!   on the skin of the posterior heel);
//! - the tip lies one marker radius beyond the toe marker; without a toe marker, the metatarsal
//!   heads lie at [`MTP_FRACTION`] of foot length from the heel (from memory: the
//!   metatarsophalangeal joints at about 0.7-0.75 of foot length), so the tip lies at the
//!   heel-to-metatarsal distance divided by that fraction;
//! - the width is `foot_width_m`, else the distance across the 1st and 5th metatarsal heads
//!   plus two marker radii when both are markers, else [`WIDTH_PER_LENGTH`] of the foot length
//!   (foot breadth about 0.39 of foot length in adults: Hawes & Sovak 1994, Ergonomics
//!   37:1213-1226, from memory);
//! - the rearfoot part spans `u` in [0, [`REAR_FRACTION`]] of the length, [`HEEL_WIDTH_FRACTION`]
//!   of the width wide at the rear edge widening to the full width; the forefoot part spans the
//!   rest, full width to [`BALL_FRACTION`] and narrowing to half the width at the tip (a
//!   simplified plantar outline, common practice, no source);
//! - the outline is centred on the long axis, or on the middle of the 1st and 5th metatarsal
//!   heads in the forefoot when both are present.

/// Share of the foot length at the metatarsal heads (module doc, from memory).
pub const MTP_FRACTION: f64 = 0.73;
/// Foot width per foot length (module doc, Hawes & Sovak 1994, from memory).
pub const WIDTH_PER_LENGTH: f64 = 0.39;
/// Share of the foot length taken by the rearfoot part.
pub const REAR_FRACTION: f64 = 0.5;
/// Heel width as a share of the foot width.
pub const HEEL_WIDTH_FRACTION: f64 = 0.65;
/// Share of the foot length where the forefoot starts to narrow toward the tip.
pub const BALL_FRACTION: f64 = 0.8;

/// The points of one foot in one frame, in floor coordinates (metres).
#[derive(Clone, Copy, Debug, Default)]
pub struct FootMarks {
    pub heel: Option<[f64; 2]>,
    pub toe: Option<[f64; 2]>,
    pub mt1: Option<[f64; 2]>,
    pub mt2: Option<[f64; 2]>,
    pub mt5: Option<[f64; 2]>,
}

/// A sole outline in two parts (module doc).
#[derive(Clone, Debug, PartialEq)]
pub struct Sole {
    pub rearfoot: Vec<[f64; 2]>,
    pub forefoot: Vec<[f64; 2]>,
}

fn sub(a: [f64; 2], b: [f64; 2]) -> [f64; 2] {
    [a[0] - b[0], a[1] - b[1]]
}

fn len(a: [f64; 2]) -> f64 {
    a[0].hypot(a[1])
}

fn mid(a: [f64; 2], b: [f64; 2]) -> [f64; 2] {
    [(a[0] + b[0]) / 2.0, (a[1] + b[1]) / 2.0]
}

/// The sole of a foot (module doc); `None` without a heel and a front point 5 cm or more
/// apart.
pub fn sole(marks: &FootMarks, radius_m: f64, foot_width_m: Option<f64>) -> Option<Sole> {
    let heel = marks.heel?;
    let mt_mid = marks.mt1.zip(marks.mt5).map(|(a, b)| mid(a, b));
    let (front, is_toe) = match (marks.toe, marks.mt2.or(mt_mid)) {
        (Some(t), _) => (t, true),
        (None, Some(m)) => (m, false),
        (None, None) => return None,
    };
    let d = sub(front, heel);
    let reach = len(d);
    if reach < 0.05 {
        return None;
    }
    let u = [d[0] / reach, d[1] / reach];
    let v = [-u[1], u[0]];
    let rear = [heel[0] + radius_m * u[0], heel[1] + radius_m * u[1]];
    let length = if is_toe { reach } else { reach / MTP_FRACTION };
    let width = foot_width_m
        .or_else(|| {
            marks.mt1.zip(marks.mt5).map(|(a, b)| {
                let across = sub(a, b);
                (across[0] * v[0] + across[1] * v[1]).abs() + 2.0 * radius_m
            })
        })
        .filter(|w| *w > 0.03)
        .unwrap_or(WIDTH_PER_LENGTH * length);
    // Lateral shift of the forefoot centre from the axis (middle of the metatarsal heads).
    let shift = mt_mid.map_or(0.0, |m| {
        let r = sub(m, rear);
        r[0] * v[0] + r[1] * v[1]
    });
    let at = |along: f64, across: f64, centre: f64| {
        let a = along * length;
        let c = across + centre;
        [rear[0] + a * u[0] + c * v[0], rear[1] + a * u[1] + c * v[1]]
    };
    let (hw, w) = (HEEL_WIDTH_FRACTION * width / 2.0, width / 2.0);
    let rearfoot = vec![
        at(0.0, -hw, 0.0),
        at(REAR_FRACTION, -w, shift / 2.0),
        at(REAR_FRACTION, w, shift / 2.0),
        at(0.0, hw, 0.0),
    ];
    let forefoot = vec![
        at(REAR_FRACTION, -w, shift / 2.0),
        at(BALL_FRACTION, -w, shift),
        at(1.0, -w / 2.0, shift),
        at(1.0, w / 2.0, shift),
        at(BALL_FRACTION, w, shift),
        at(REAR_FRACTION, w, shift / 2.0),
    ];
    Some(Sole { rearfoot, forefoot })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::support::convex_hull;

    #[test]
    fn heel_and_toe_give_a_sole_of_the_foot_length_and_ratio_width() {
        let marks = FootMarks {
            heel: Some([0.0, 0.0]),
            toe: Some([0.25, 0.0]),
            ..Default::default()
        };
        let s = sole(&marks, 0.0, None).unwrap();
        let mut all = s.rearfoot.clone();
        all.extend(s.forefoot.iter().copied());
        let hull = convex_hull(&all);
        let xs = hull
            .vertices()
            .iter()
            .map(|p| p[0])
            .fold(f64::MIN, f64::max);
        let ys = hull
            .vertices()
            .iter()
            .map(|p| p[1])
            .fold(f64::MIN, f64::max);
        assert!((xs - 0.25).abs() < 1e-12);
        assert!((ys - 0.39 * 0.25 / 2.0).abs() < 1e-12);
        // Area of the simplified outline: between the width x length box (0.0244 m^2) and
        // three quarters of it.
        let a = hull.area_m2().unwrap();
        assert!(a > 0.75 * 0.0244 && a < 0.0244, "{a}");
    }

    #[test]
    fn metatarsal_heads_alone_extend_the_foot_to_the_toes() {
        let marks = FootMarks {
            heel: Some([0.0, 0.0]),
            mt2: Some([0.73 * 0.26, 0.0]),
            ..Default::default()
        };
        let s = sole(&marks, 0.0, Some(0.1)).unwrap();
        let tip = s.forefoot.iter().map(|p| p[0]).fold(f64::MIN, f64::max);
        assert!((tip - 0.26).abs() < 1e-12);
    }
}
