//! The BoS of a frame: the convex hull of the sole parts in contact (rearfoot, forefoot of
//! each foot, [`super::sole`]), and per frame its area and the signed margins of the CoM and
//! XCoM (Hof et al. 2005, J Biomech 38:1-8; directional margins as in the stage's module doc).
//!
//! Inputs: the foot series, contact per region, CoM and XCoM per frame (metres). Outputs: hulls,
//! areas in m^2, margins in metres.

use super::sole::sole;
use super::stage::{FootFrames, SupportSeries, FOOT_STEMS};
use super::{convex_hull, directional_margin, signed_distance};
use crate::trial::UpAxis;

/// The sole parts of `side` in contact (`parts`: rearfoot, forefoot) at frame `f`, on the
/// floor plane, appended to `pts`; the foot's points themselves when no sole can be built.
pub(super) fn push_sole(
    pts: &mut Vec<[f64; 2]>,
    foot: &FootFrames,
    side: usize,
    parts: [bool; 2],
    f: usize,
    up: UpAxis,
) {
    match sole(
        &foot.marks(side, f, up),
        foot.marker_radius_m,
        foot.foot_width_m,
    ) {
        Some(s) => {
            if parts[0] {
                pts.extend_from_slice(&s.rearfoot);
            }
            if parts[1] {
                pts.extend_from_slice(&s.forefoot);
            }
        }
        None => pts.extend(
            (0..FOOT_STEMS.len())
                .filter_map(|k| foot.at(side, k, f))
                .map(|p| up.horizontal(&p)),
        ),
    }
}

/// The BoS at frame `f` (module doc): the hull of the sole parts in contact; `pts` is scratch
/// space.
pub fn bos_at(
    pts: &mut Vec<[f64; 2]>,
    foot: &FootFrames,
    series: &SupportSeries,
    f: usize,
    up: UpAxis,
) -> super::Hull {
    pts.clear();
    for side in 0..2 {
        let part = |r: usize| series.regions[side][r].get(f).copied().unwrap_or(false);
        let parts = [part(0), part(1)];
        if parts[0] || parts[1] {
            push_sole(pts, foot, side, parts, f, up);
        }
    }
    convex_hull(pts)
}

/// Mean horizontal position of the frames that have one.
pub(super) fn mean_horizontal(points: &[Option<[f64; 3]>], up: UpAxis) -> Option<[f64; 2]> {
    let (mut sum, mut n) = ([0.0, 0.0], 0usize);
    for p in points.iter().flatten() {
        let h = up.horizontal(p);
        sum = [sum[0] + h[0], sum[1] + h[1]];
        n += 1;
    }
    (n > 0).then(|| [sum[0] / n as f64, sum[1] / n as f64])
}

/// The per-frame series of the BoS over frames `from .. to`.
#[derive(Default)]
pub(super) struct BosFrames {
    pub(super) bos_area_m2: Vec<Option<f64>>,
    pub(super) bos_margin_m: Vec<Option<f64>>,
    pub(super) mos_m: Vec<Option<f64>>,
    pub(super) mos_ap_m: Vec<Option<f64>>,
    pub(super) mos_ml_m: Vec<Option<f64>>,
    /// Whether the BoS is not empty.
    pub(super) nonempty: Vec<bool>,
}

/// BoS area and margins over frames `from .. to` (contact and progression are in `out`).
pub(super) fn bos_frames(
    out: &SupportSeries,
    foot: &FootFrames,
    com: &[Option<[f64; 3]>],
    xcom: &[Option<[f64; 3]>],
    up: UpAxis,
    from: usize,
    to: usize,
) -> BosFrames {
    let len = to - from;
    let mut b = BosFrames {
        bos_area_m2: Vec::with_capacity(len),
        bos_margin_m: Vec::with_capacity(len),
        mos_m: Vec::with_capacity(len),
        mos_ap_m: Vec::with_capacity(len),
        mos_ml_m: Vec::with_capacity(len),
        nonempty: Vec::with_capacity(len),
    };
    let ml = out.progression.map(|[x, y]| [-y, x]);
    let mut pts: Vec<[f64; 2]> = Vec::with_capacity(12);
    for f in from..to {
        let now = [out.contact[0][f], out.contact[1][f]];
        let hull = bos_at(&mut pts, foot, out, f, up);
        b.nonempty.push(!hull.is_empty());
        b.bos_area_m2.push(hull.area_m2());
        let c = com.get(f).copied().flatten().map(|c| up.horizontal(&c));
        b.bos_margin_m
            .push(c.and_then(|c| signed_distance(&hull, c)));
        let xi = xcom.get(f).copied().flatten().map(|x| up.horizontal(&x));
        b.mos_m.push(xi.and_then(|x| signed_distance(&hull, x)));
        let along =
            |d: Option<[f64; 2]>| xi.zip(d).and_then(|(x, d)| directional_margin(&hull, x, d));
        b.mos_ap_m.push(along(out.progression).map(|m| m.ahead_m));
        // ML: in single stance the margin to the stance foot's lateral edge (outward along the
        // stance side, Hof 2005 / docs/reference/methods.md 2); in double stance the nearer lateral edge.
        let ml_margin = match now {
            [true, false] => along(ml).map(|m| m.ahead_m),
            [false, true] => along(ml).map(|m| m.behind_m),
            _ => along(ml).map(|m| m.nearer_m()),
        };
        b.mos_ml_m.push(ml_margin);
    }
    b
}
