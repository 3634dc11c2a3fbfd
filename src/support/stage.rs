//! The support stage of the pipeline: per-frame foot positions from the body model become the
//! floor level, foot contact, the BoS polygon and the signed margins of the CoM and XCoM, and,
//! for walking trials, gait events and per-step figures (DESIGN.md 7).
//!
//! - Floor: `[support] floor_m`, else the 2nd percentile of all foot-point heights.
//! - Contact per foot: the lowest foot point within `contact_height_m` of the floor and the
//!   slowest of heel and metatarsal heads below `contact_speed_m_s` ([`detect_contact`]).
//! - BoS: convex hull of heel, toe, metatarsal heads and lateral malleolus of every foot in
//!   contact, projected to the floor; no foot in contact = no BoS.
//! - `bos_margin_m`: signed distance from the CoM's floor projection to the BoS boundary,
//!   positive inside; `mos_m` the same from the XCoM (Hof et al. 2005, J Biomech 38:1-8).
//!   `mos_ap_m`: distance from the XCoM to the anterior BoS edge along the progression
//!   direction; `mos_ml_m`: in single stance the distance to the stance foot's lateral edge
//!   along its outward direction (positive while the XCoM is medial to that edge), in double
//!   stance the distance to the nearer lateral edge.
//! - Progression: the mean horizontal CoM velocity; for near-static trials (mean speed below
//!   [`STATIC_SPEED_M_S`]) the mean heel-to-toe direction of the feet.
//! - Events: Zeni et al. 2008 (Gait Posture 27:710) with the sacrum at the PSIS midpoint (or the
//!   sacral marker), refined by default by the speed thresholds of Bonci et al. 2022 (heel speed
//!   below 0.5 × and toe speed above 0.8 × the mean horizontal CoM speed; [`refine_events`]);
//!   `[support] gait_events = "zeni"` keeps the Zeni frames. Steps: one per heel strike, with step length and width between the two
//!   heels at heel strike, AP MoS at heel strike (the leading heel, the front of the BoS as the
//!   heel lands, minus the XCoM along progression; Hof et al. 2005), the minimum ML MoS in the
//!   single stance that
//!   follows (contralateral toe-off to contralateral heel strike) and the CoM vertical excursion
//!   over the stride that starts there.
//!
//! Units: metres, seconds, m/s.

use super::floor::FloorModel;
use super::foot::{FootPoint, Region};
use super::sole::{sole, FootMarks};
use super::{
    convex_hull, detect_contact, directional_margin, refine_events, signed_distance, transitions,
    zeni_events, ContactThresholds, GaitEvents, RefineOptions,
};
use crate::body::model::PointId;
use crate::body::BodyModel;
use crate::config::{GaitEventMethod, SupportConfig};
use crate::signal::derivative;
use crate::trial::UpAxis;
use crate::warning::Warning;
use nalgebra::Vector3;
use serde::Serialize;

/// Below this mean horizontal CoM speed a trial is near-static: progression comes from the
/// feet (common practice, no source).
pub const STATIC_SPEED_M_S: f64 = 0.2;
/// Percentile of foot-point heights taken as the floor (DESIGN.md 7).
pub const FLOOR_PERCENTILE: f64 = 2.0;

/// Foot points, in this order, per side.
pub const FOOT_STEMS: [&str; 6] = ["heel", "toe", "mt1", "mt2", "mt5", "ankle_lat"];
const HEEL: usize = 0;
const TOE: usize = 1;
const MT2: usize = 3;

/// Per-frame positions of the foot points and the sacrum, gathered while the body model is
/// evaluated.
#[derive(Clone, Debug, Default)]
pub struct FootFrames {
    ids: [[Option<PointId>; 6]; 2],
    /// Whether each found foot point is a marker of the trial (not virtual, not derived).
    real: [[bool; 6]; 2],
    sacrum_id: Option<PointId>,
    /// The subject's marker radius (default [`super::floor::DEFAULT_MARKER_RADIUS_M`]) and foot
    /// width, metres.
    pub marker_radius_m: f64,
    pub foot_width_m: Option<f64>,
    /// `points[side][k][frame]`, side 0 = left, k as [`FOOT_STEMS`].
    pub points: [[Vec<Option<[f64; 3]>>; 6]; 2],
    pub sacrum: Vec<Option<[f64; 3]>>,
}

impl FootFrames {
    /// Looks the foot points up in the model (absent points stay empty).
    pub fn new(body: &BodyModel, n_frames: usize) -> FootFrames {
        let mut f = FootFrames {
            sacrum_id: body.point("mid_psis"),
            marker_radius_m: body
                .marker_radius_m
                .unwrap_or(super::floor::DEFAULT_MARKER_RADIUS_M),
            foot_width_m: body.foot_width_m,
            ..Default::default()
        };
        for (s, prefix) in ["l_", "r_"].iter().enumerate() {
            for (k, stem) in FOOT_STEMS.iter().enumerate() {
                f.ids[s][k] = body.point(&format!("{prefix}{stem}"));
                f.real[s][k] = f.ids[s][k].is_some_and(|id| body.is_marker(id));
                if f.ids[s][k].is_some() {
                    f.points[s][k].reserve(n_frames);
                }
            }
        }
        f
    }

    /// Appends one frame of the body model's evaluation.
    pub fn push(&mut self, points: &[Option<Vector3<f64>>]) {
        let get = |id: Option<PointId>| {
            id.and_then(|i| points.get(i).copied().flatten())
                .map(|p| [p.x, p.y, p.z])
        };
        for s in 0..2 {
            for k in 0..6 {
                if self.ids[s][k].is_some() {
                    self.points[s][k].push(get(self.ids[s][k]));
                }
            }
        }
        if self.sacrum_id.is_some() {
            self.sacrum.push(get(self.sacrum_id));
        }
    }

    /// Foot series of `n_frames` frames, every sample missing until set through
    /// [`FootFrames::series_mut`] (in parallel over frames, where [`FootFrames::push`] goes
    /// frame after frame).
    pub fn with_frames(body: &BodyModel, n_frames: usize) -> FootFrames {
        let mut f = FootFrames::new(body, 0);
        for series in f.series_mut() {
            series.resize(n_frames, None);
        }
        f
    }

    /// The model points of the series this trial has (found foot points, then the sacrum), in
    /// the order of [`FootFrames::series_mut`].
    pub fn point_ids(&self) -> Vec<PointId> {
        self.ids
            .iter()
            .flatten()
            .chain(std::iter::once(&self.sacrum_id))
            .flatten()
            .copied()
            .collect()
    }

    /// The series of [`FootFrames::point_ids`], in that order.
    pub fn series_mut(&mut self) -> Vec<&mut Vec<Option<[f64; 3]>>> {
        let mut out: Vec<&mut Vec<Option<[f64; 3]>>> = self
            .ids
            .iter()
            .flatten()
            .zip(self.points.iter_mut().flatten())
            .filter(|(id, _)| id.is_some())
            .map(|(_, series)| series)
            .collect();
        if self.sacrum_id.is_some() {
            out.push(&mut self.sacrum);
        }
        out
    }

    /// Whether foot point `k` ([`FootPoint::index`]) of `side` is a marker of the trial: only
    /// these enter the floor estimate and the contact height test.
    pub fn is_marker(&self, side: usize, k: usize) -> bool {
        self.real[side][k] && !self.points[side][k].is_empty()
    }

    /// How many foot points of `side` are markers of the trial.
    pub fn n_markers(&self, side: usize) -> usize {
        (0..6).filter(|&k| self.is_marker(side, k)).count()
    }

    /// The foot's points in frame `f`, on the floor plane, for its sole.
    pub fn marks(&self, side: usize, f: usize, up: UpAxis) -> FootMarks {
        let at = |p: FootPoint| self.at(side, p.index(), f).map(|p| up.horizontal(&p));
        FootMarks {
            heel: at(FootPoint::Heel),
            toe: at(FootPoint::Toe),
            mt1: at(FootPoint::Mt1),
            mt2: at(FootPoint::Mt2),
            mt5: at(FootPoint::Mt5),
        }
    }

    /// Whether any foot point was found.
    pub fn has_feet(&self) -> bool {
        self.ids.iter().flatten().any(Option::is_some)
    }

    /// The foot point standing for the toe of `side`: the toe, or the 2nd metatarsal head when
    /// the trial has no toe.
    fn front(&self, side: usize) -> usize {
        if self.points[side][TOE].is_empty() {
            MT2
        } else {
            TOE
        }
    }

    fn at(&self, side: usize, k: usize, frame: usize) -> Option<[f64; 3]> {
        self.points[side][k].get(frame).copied().flatten()
    }
}

/// One step: from a heel strike of `side` (DESIGN.md 7).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Step {
    pub side: &'static str,
    pub heel_strike_s: f64,
    /// The same foot's next toe-off.
    pub toe_off_s: Option<f64>,
    /// Heel-to-heel distance along progression at heel strike.
    pub step_length_m: Option<f64>,
    /// Heel-to-heel distance across progression at heel strike.
    pub step_width_m: Option<f64>,
    /// Landing heel minus XCoM along progression: negative when the XCoM is ahead of the heel
    /// (the usual case in walking); the backward MoS of Hak et al. 2013 is its negative.
    pub mos_ap_heel_strike_m: Option<f64>,
    /// Lateral border of the landing foot minus the XCoM, outward from the body's midline, at
    /// heel strike (Hof et al. 2007 measure it at foot contact).
    pub mos_ml_heel_strike_m: Option<f64>,
    pub min_mos_ml_single_stance_m: Option<f64>,
    /// Vertical CoM range from this heel strike to the same foot's next one.
    pub com_vertical_excursion_m: Option<f64>,
}

/// BoS and margins of one trial.
#[derive(Clone, Debug, Default)]
pub struct SupportSeries {
    /// Floor surface height along the up axis, metres, under the mean horizontal CoM position.
    pub floor_m: f64,
    /// The floor (plane, cells, stance heights of the markers).
    pub floor: FloorModel,
    /// `contact[side][frame]`, side 0 = left: either region of the foot in contact.
    pub contact: [Vec<bool>; 2],
    /// `regions[side][region][frame]`, region as [`Region::index`].
    pub regions: [[Vec<bool>; 2]; 2],
    pub bos_area_m2: Vec<Option<f64>>,
    pub bos_margin_m: Vec<Option<f64>>,
    pub mos_m: Vec<Option<f64>>,
    pub mos_ap_m: Vec<Option<f64>>,
    pub mos_ml_m: Vec<Option<f64>>,
    /// Unit progression direction in the floor plane.
    pub progression: Option<[f64; 2]>,
    /// BoS outlines (frame, vertices) at contact changes, or every second for static trials.
    pub outlines: Vec<(usize, Vec<[f64; 2]>)>,
    /// Footprints: (side, frame, vertices of the foot's own hull) at each contact onset.
    pub footprints: Vec<(usize, usize, Vec<[f64; 2]>)>,
    pub events: [GaitEvents; 2],
    pub steps: Vec<Step>,
    pub warnings: Vec<Warning>,
}

/// The floor ([`super::floor::estimate`]): `[support] floor_m` forces a level one; a warning
/// when there are no foot markers, or when the floor is not level within
/// [`super::floor::LEVEL_WITHIN_MM`].
pub fn floor_m(
    foot: &FootFrames,
    up: UpAxis,
    config: &SupportConfig,
    rate_hz: f64,
) -> (FloorModel, Option<Warning>) {
    match super::floor::estimate(foot, up, rate_hz, foot.marker_radius_m, config.floor_m) {
        Some(model) => {
            let warning = (!model.forced && !model.is_level()).then(|| Warning::Approximation {
                what: format!(
                    "the floor is not level: it rises and falls {:.0} mm under the feet (tilt {:.2} deg, plane residual {:.1} mm); heights are taken from the local floor (set [support] floor_m to force a level floor)",
                    model.rise_mm, model.tilt_deg, model.residual_mm
                ),
            });
            (model, warning)
        }
        None => (
            FloorModel::level(config.floor_m.unwrap_or(0.0)),
            Some(Warning::Approximation {
                what: "no foot markers: floor taken at the lab origin, no base of support"
                    .to_string(),
            }),
        ),
    }
}

/// Contact thresholds from the configuration, defaults where unset.
pub fn thresholds(config: &SupportConfig) -> ContactThresholds {
    let d = ContactThresholds::default();
    ContactThresholds {
        height_m: config.contact_height_m.unwrap_or(d.height_m),
        speed_m_s: config.contact_speed_m_s.unwrap_or(d.speed_m_s),
        min_contact_s: config.min_contact_s.unwrap_or(d.min_contact_s),
        min_flight_s: config.min_flight_s.unwrap_or(d.min_flight_s),
    }
}

/// Runs the support stage (module doc). `com`, `velocity` and `xcom` are per frame, lab frame.
#[allow(clippy::too_many_arguments)]
pub fn analyse(
    foot: &FootFrames,
    com: &[Option<[f64; 3]>],
    velocity: &[Option<[f64; 3]>],
    xcom: &[Option<[f64; 3]>],
    floor: &FloorModel,
    up: UpAxis,
    times_s: &[f64],
    rate_hz: f64,
    config: &SupportConfig,
) -> SupportSeries {
    analyse_on(
        foot, com, velocity, xcom, floor, up, times_s, rate_hz, config, 1,
    )
}

/// Frames per range of the per-frame BoS work shared among threads.
const FRAMES_PER_RANGE_MIN: usize = 4096;

/// [`analyse`] with the two feet, then ranges of frames, shared among up to `threads` threads;
/// the result does not depend on how many.
#[allow(clippy::too_many_arguments)]
pub fn analyse_on(
    foot: &FootFrames,
    com: &[Option<[f64; 3]>],
    velocity: &[Option<[f64; 3]>],
    xcom: &[Option<[f64; 3]>],
    floor: &FloorModel,
    up: UpAxis,
    times_s: &[f64],
    rate_hz: f64,
    config: &SupportConfig,
    threads: usize,
) -> SupportSeries {
    let n = com.len();
    let mean_com = mean_horizontal(com, up);
    let mut out = SupportSeries {
        floor_m: mean_com.map_or(floor.level_m, |c| floor.at(c)),
        floor: floor.clone(),
        ..Default::default()
    };
    let t = thresholds(config);
    let velocity_sum = horizontal_velocity_sum(velocity, up);
    let walking_speed_m_s = mean_speed(velocity_sum);
    // Forefoot contact lasts until the forefoot is faster than the toe-off speed of Bonci et
    // al. 2022 (0.8 x the walking speed), never shorter than the onset threshold.
    let off_speed_m_s = t.speed_m_s.max(0.8 * walking_speed_m_s);
    let sides = crate::signal::in_groups(vec![0, 1], threads, |group| {
        group
            .into_iter()
            .map(|side| {
                Region::BOTH.map(|region| {
                    // Without a toe marker the metatarsal heads speed up before the toes
                    // leave: the forefoot stays in contact up to the toe-off speed.
                    let has_toe = foot.is_marker(side, FootPoint::Toe.index());
                    let off = match region {
                        Region::Forefoot if !has_toe => off_speed_m_s,
                        _ => t.speed_m_s,
                    };
                    let mut c = region_contact(foot, side, region, n, floor, up, rate_hz, &t, off);
                    c.resize(n, false);
                    c
                })
            })
            .collect::<Vec<_>>()
    });
    for (side, regions) in sides.into_iter().flatten().enumerate() {
        out.contact[side] = regions[0]
            .iter()
            .zip(&regions[1])
            .map(|(a, b)| *a || *b)
            .collect();
        out.regions[side] = regions;
        if foot.has_feet() && foot.n_markers(side) < 3 {
            out.warnings.push(Warning::Approximation {
                what: format!(
                    "{} foot: sole outline guessed from {} foot markers (fewer than 3): foot width from the length (give foot_width_m in the subject)",
                    ["left", "right"][side],
                    foot.n_markers(side)
                ),
            });
        }
    }
    out.progression = progression(foot, velocity_sum.0, walking_speed_m_s, up);
    let static_trial = walking_speed_m_s < STATIC_SPEED_M_S;

    // Frames are independent: ranges of them run at once, each into its part of the series.
    let n_ranges = threads.clamp(1, (n / FRAMES_PER_RANGE_MIN).max(1));
    let ranges: Vec<(usize, usize)> = (0..n_ranges)
        .map(|k| (n * k / n_ranges, n * (k + 1) / n_ranges))
        .collect();
    let parts = crate::signal::in_groups(ranges, n_ranges, |group| {
        group
            .into_iter()
            .map(|(from, to)| bos_frames(&out, foot, com, xcom, up, from, to))
            .collect::<Vec<_>>()
    });
    let mut nonempty = Vec::with_capacity(n);
    for part in parts.into_iter().flatten() {
        out.bos_area_m2.extend(part.bos_area_m2);
        out.bos_margin_m.extend(part.bos_margin_m);
        out.mos_m.extend(part.mos_m);
        out.mos_ap_m.extend(part.mos_ap_m);
        out.mos_ml_m.extend(part.mos_ml_m);
        nonempty.extend(part.nonempty);
    }

    // Footprints at each contact onset; outlines at contact changes (and every second of a
    // static trial), where the hull is not empty.
    let mut previous = [false, false];
    let mut last_outline: Option<usize> = None;
    let mut pts: Vec<[f64; 2]> = Vec::with_capacity(12);
    for (f, &has_hull) in nonempty.iter().enumerate() {
        let now = [out.contact[0][f], out.contact[1][f]];
        for side in 0..2 {
            if now[side] && !previous[side] {
                pts.clear();
                push_sole(&mut pts, foot, side, [true, true], f, up);
                out.footprints.push((side, f, convex_hull(&pts).vertices()));
            }
        }
        let changed = now != previous;
        let due = static_trial && last_outline.is_none_or(|l| f >= l + rate_hz.round() as usize);
        if has_hull && (changed || due) {
            out.outlines
                .push((f, bos_at(&mut pts, foot, &out, f, up).vertices()));
            last_outline = Some(f);
        }
        previous = now;
    }
    if !foot.has_feet() {
        out.warnings.push(Warning::Approximation {
            what: "no foot markers (heel, toe, mt1/2/5, ankle_lat): no base of support".to_string(),
        });
    }
    if let Some(prog) = out.progression {
        if !static_trial && !foot.sacrum.is_empty() {
            let events = Events {
                method: config.gait_events,
                walking_speed_m_s,
            };
            gait(
                &mut out, foot, com, xcom, up, times_s, rate_hz, prog, events, threads,
            );
        }
    }
    out
}

/// Contact of one region of one foot, frame by frame (module doc): slow first, then low.
///
/// Speed: the slowest of the region's markers; height: the lowest of the region's markers above
/// the local floor, each minus its own stance height ([`FloorModel::stance_height_m`]). Only
/// markers of the trial count (never virtual or derived points). A contact begins below
/// `t.speed_m_s` ([`detect_contact`]); when `off_speed_m_s` is higher, it lasts while the region
/// stays slower than that (hysteresis: without a toe marker, the metatarsal heads rise and
/// speed up while the toes are still down).
#[allow(clippy::too_many_arguments)]
fn region_contact(
    foot: &FootFrames,
    side: usize,
    region: Region,
    n: usize,
    floor: &FloorModel,
    up: UpAxis,
    rate_hz: f64,
    t: &ContactThresholds,
    off_speed_m_s: f64,
) -> Vec<bool> {
    let dt = 1.0 / rate_hz;
    let mut height = vec![None; n];
    let mut speed: Vec<Option<f64>> = vec![None; n];
    let mut velocity = Vec::new();
    let mut any = false;
    for point in FootPoint::ALL.into_iter().filter(|p| p.region() == region) {
        let k = point.index();
        if !foot.is_marker(side, k) {
            continue;
        }
        let Some(stance) = floor.stance_height_m[side][k] else {
            continue;
        };
        any = true;
        let series = &foot.points[side][k];
        for (f, p) in series.iter().enumerate() {
            if let (Some(p), Some(slot)) = (p, height.get_mut(f)) {
                let h = floor.height_of(p, up) - stance;
                *slot = Some(slot.map_or(h, |m: f64| m.min(h)));
            }
        }
        derivative::velocity_into(series, dt, &mut velocity);
        for (f, v) in velocity.iter().enumerate() {
            if let (Some(v), Some(slot)) = (v, speed.get_mut(f)) {
                let s = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
                *slot = Some(slot.map_or(s, |m: f64| m.min(s)));
            }
        }
    }
    if !any {
        return vec![false; n];
    }
    let mut contact = detect_contact(&height, &speed, rate_hz, t);
    if off_speed_m_s <= t.speed_m_s {
        return contact;
    }
    for (_, off) in transitions(&contact) {
        let mut f = off;
        while f < n && !contact[f] && speed[f].is_some_and(|v| v < off_speed_m_s) {
            contact[f] = true;
            f += 1;
        }
    }
    contact
}

/// The sole parts of `side` in contact (`parts`: rearfoot, forefoot) at frame `f`, on the
/// floor plane, appended to `pts`; the foot's points themselves when no sole can be built.
fn push_sole(
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
fn mean_horizontal(points: &[Option<[f64; 3]>], up: UpAxis) -> Option<[f64; 2]> {
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
struct BosFrames {
    bos_area_m2: Vec<Option<f64>>,
    bos_margin_m: Vec<Option<f64>>,
    mos_m: Vec<Option<f64>>,
    mos_ap_m: Vec<Option<f64>>,
    mos_ml_m: Vec<Option<f64>>,
    /// Whether the BoS is not empty.
    nonempty: Vec<bool>,
}

/// BoS area and margins over frames `from .. to` (contact and progression are in `out`).
fn bos_frames(
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
        // stance side, Hof 2005 / methods.md 2); in double stance the nearer lateral edge.
        let ml_margin = match now {
            [true, false] => along(ml).map(|m| m.ahead_m),
            [false, true] => along(ml).map(|m| m.behind_m),
            _ => along(ml).map(|m| m.nearer_m()),
        };
        b.mos_ml_m.push(ml_margin);
    }
    b
}

/// The sum of the horizontal CoM velocities of the frames that have one, and their count.
fn horizontal_velocity_sum(velocity: &[Option<[f64; 3]>], up: UpAxis) -> ([f64; 2], usize) {
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
fn mean_speed((sum, n): ([f64; 2], usize)) -> f64 {
    if n == 0 {
        return 0.0;
    }
    (sum[0] * sum[0] + sum[1] * sum[1]).sqrt() / n as f64
}

/// Progression direction (module doc): along the summed horizontal CoM velocity `velocity_sum`
/// when the mean speed is at least [`STATIC_SPEED_M_S`], else from the feet.
fn progression(
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

fn unit(v: [f64; 2]) -> Option<[f64; 2]> {
    let n = (v[0] * v[0] + v[1] * v[1]).sqrt();
    (n > 1e-9).then(|| [v[0] / n, v[1] / n])
}

fn dot(a: [f64; 2], b: [f64; 2]) -> f64 {
    a[0] * b[0] + a[1] * b[1]
}

/// How [`gait`] finds events.
#[derive(Clone, Copy, Debug)]
struct Events {
    method: GaitEventMethod,
    /// Mean horizontal CoM speed, the walking speed of the Bonci et al. 2022 thresholds.
    walking_speed_m_s: f64,
}

/// 3-D speed per frame of one foot point, m/s, `None` where unknown.
fn speed_of(series: &[Option<[f64; 3]>], rate_hz: f64) -> Vec<Option<f64>> {
    let mut velocity = Vec::new();
    derivative::velocity_into(series, 1.0 / rate_hz, &mut velocity);
    velocity
        .iter()
        .map(|v| v.map(|v| (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt()))
        .collect()
}

/// The first of the frames `sorted` (in increasing order, as events are) after `f`.
fn first_after(sorted: &[usize], f: usize) -> Option<usize> {
    sorted.get(sorted.partition_point(|&t| t <= f)).copied()
}

/// Gait events and steps (module doc).
#[allow(clippy::too_many_arguments)]
fn gait(
    out: &mut SupportSeries,
    foot: &FootFrames,
    com: &[Option<[f64; 3]>],
    xcom: &[Option<[f64; 3]>],
    up: UpAxis,
    times_s: &[f64],
    rate_hz: f64,
    prog: [f64; 2],
    events: Events,
    threads: usize,
) {
    let n = com.len();
    let along = |side: usize, k: usize| -> Vec<Option<f64>> {
        (0..n)
            .map(|f| {
                let p = foot.at(side, k, f)?;
                let s = foot.sacrum.get(f).copied().flatten()?;
                Some(dot(up.horizontal(&p), prog) - dot(up.horizontal(&s), prog))
            })
            .collect()
    };
    let toe = |side: usize| foot.front(side);
    // Events of the left foot when it has a heel and toe, then of the right when both have.
    let has = |side: usize| {
        !(foot.points[side][HEEL].is_empty() || foot.points[side][toe(side)].is_empty())
    };
    let sides: Vec<usize> = (0..2).take_while(|&side| has(side)).collect();
    let found = crate::signal::in_groups(sides.clone(), threads, |group| {
        group
            .into_iter()
            .map(|side| {
                let zeni = zeni_events(&along(side, HEEL), &along(side, toe(side)), rate_hz);
                match events.method {
                    GaitEventMethod::Zeni => zeni,
                    GaitEventMethod::ZeniBonci => refine_events(
                        &zeni,
                        &speed_of(&foot.points[side][HEEL], rate_hz),
                        &speed_of(&foot.points[side][toe(side)], rate_hz),
                        events.walking_speed_m_s,
                        &RefineOptions::default(),
                    ),
                }
            })
            .collect::<Vec<_>>()
    });
    for (&side, e) in sides.iter().zip(found.into_iter().flatten()) {
        out.events[side] = e;
    }
    if sides.len() < 2 {
        return;
    }
    let ml = [-prog[1], prog[0]];
    let xcom_h = |f: usize| xcom.get(f).copied().flatten().map(|x| up.horizontal(&x));
    let time = |f: usize| times_s.get(f).copied().unwrap_or(f as f64 / rate_hz);
    let mut steps = Vec::new();
    for side in 0..2 {
        let other = 1 - side;
        let hs = &out.events[side].heel_strikes;
        for (i, &f) in hs.iter().enumerate() {
            let heel = foot.at(side, HEEL, f).map(|p| up.horizontal(&p));
            let other_heel = foot.at(other, HEEL, f).map(|p| up.horizontal(&p));
            let d = heel
                .zip(other_heel)
                .map(|(a, b)| [a[0] - b[0], a[1] - b[1]]);
            let toe_off = first_after(&out.events[side].toe_offs, f);
            // Single stance on `side`: from the other foot's toe-off to its next heel strike.
            let other_to = first_after(&out.events[other].toe_offs, f);
            let other_hs = other_to.and_then(|t0| first_after(&out.events[other].heel_strikes, t0));
            let min_ml = match (other_to, other_hs) {
                (Some(a), Some(b)) => out.mos_ml_m[a..b.min(n)]
                    .iter()
                    .flatten()
                    .copied()
                    .reduce(f64::min),
                _ => None,
            };
            let excursion = hs.get(i + 1).and_then(|&next| {
                let heights: Vec<f64> = com[f..next.min(n)]
                    .iter()
                    .flatten()
                    .map(|c| up.height(c))
                    .collect();
                if heights.len() + 1 < next - f {
                    return None;
                }
                let max = heights.iter().copied().reduce(f64::max)?;
                let min = heights.iter().copied().reduce(f64::min)?;
                Some(max - min)
            });
            steps.push(Step {
                side: if side == 0 { "left" } else { "right" },
                heel_strike_s: time(f),
                toe_off_s: toe_off.map(time),
                step_length_m: d.map(|d| dot(d, prog).abs()),
                step_width_m: d.map(|d| dot(d, ml).abs()),
                mos_ap_heel_strike_m: xcom_h(f)
                    .zip(heel)
                    .map(|(xi, h)| dot(h, prog) - dot(xi, prog)),
                mos_ml_heel_strike_m: xcom_h(f).and_then(|xi| {
                    // Outward: +ml (left of progression) for the left foot, -ml for the right.
                    let out = if side == 0 { ml } else { [-ml[0], -ml[1]] };
                    let border = (0..FOOT_STEMS.len())
                        .filter_map(|k| foot.at(side, k, f))
                        .map(|p| dot(up.horizontal(&p), out))
                        .reduce(f64::max)?;
                    Some(border - dot(xi, out))
                }),
                min_mos_ml_single_stance_m: min_ml,
                com_vertical_excursion_m: excursion,
            });
        }
    }
    steps.sort_by(|a, b| a.heel_strike_s.total_cmp(&b.heel_strike_s));
    out.steps = steps;
}
