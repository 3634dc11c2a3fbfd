//! The support stage of the pipeline: per-frame foot positions from the body model become the
//! floor level, foot contact, the BoS polygon and the signed margins of the CoM and XCoM, and,
//! for walking trials, gait events and per-step figures (docs/DESIGN.md 7).
//!
//! Concerns, one module each: floor ([`super::floor`]), contact per foot region
//! ([`super::contact`], regions in [`super::foot`]), sole outlines and the BoS ([`super::sole`],
//! [`super::bos`]), progression ([`super::progression`]), events and steps ([`super::steps`],
//! [`super::events`]); this module gathers the foot series and runs them in order.
//!
//! - Floor: fitted to the stance samples of the foot markers (never virtual points), a robust
//!   plane with local cells; `[support] floor_m` forces a level floor surface.
//! - Contact per foot region (rearfoot: heel, lateral malleolus; forefoot: toe, metatarsal
//!   heads): speed first, the slowest of the region's markers below `contact_speed_m_s`
//!   (Ghoussayni et al. 2004 threshold), then height, the lowest marker within
//!   `contact_height_m` of its own stance height above the local floor ([`detect_contact`]);
//!   without a toe marker the forefoot stays down until faster than 0.8 x the walking speed
//!   (the toe-off threshold of Bonci et al. 2022). A foot is in contact when either region is.
//! - BoS: convex hull of the sole parts (rearfoot, forefoot) in contact, each foot's sole
//!   outlined from its markers, the marker radius and the foot width ([`super::sole`]); no part
//!   in contact = no BoS.
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
//!   `[support] gait_events = "zeni"` keeps the Zeni frames. Steps: one per heel strike, with
//!   step length and width between the two heels at heel strike, AP MoS at heel strike (the
//!   leading heel, the front of the BoS as the heel lands, minus the XCoM along progression;
//!   Hof et al. 2005), the minimum ML MoS in the single stance that follows (contralateral toe-off to contralateral heel strike) and the CoM vertical excursion
//!   over the stride that starts there.
//!
//! Units: metres, seconds, m/s.
//!
//! [`detect_contact`]: super::detect_contact
//! [`refine_events`]: super::refine_events

pub use super::bos::bos_at;
use super::bos::{bos_frames, mean_horizontal, push_sole};
use super::contact::region_contact;
use super::floor::FloorModel;
use super::foot::{FootPoint, Region};
use super::progression::{horizontal_velocity_sum, mean_speed, progression};
use super::sole::FootMarks;
use super::steps::{gait, Events};
use super::{convex_hull, ContactThresholds, GaitEvents};
use crate::body::model::PointId;
use crate::body::BodyModel;
use crate::config::SupportConfig;
use crate::trial::UpAxis;
use crate::warning::Warning;
use nalgebra::Vector3;
use serde::Serialize;

/// Below this mean horizontal CoM speed a trial is near-static: progression comes from the
/// feet (common practice, no source).
pub const STATIC_SPEED_M_S: f64 = 0.2;
/// Percentile of foot-point heights taken as the floor (docs/DESIGN.md 7).
pub const FLOOR_PERCENTILE: f64 = 2.0;

/// Foot points, in this order, per side.
pub const FOOT_STEMS: [&str; 6] = ["heel", "toe", "mt1", "mt2", "mt5", "ankle_lat"];
pub(crate) const HEEL: usize = 0;
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
    pub(crate) fn front(&self, side: usize) -> usize {
        if self.points[side][TOE].is_empty() {
            MT2
        } else {
            TOE
        }
    }

    pub(crate) fn at(&self, side: usize, k: usize, frame: usize) -> Option<[f64; 3]> {
        self.points[side][k].get(frame).copied().flatten()
    }
}

/// One step: from a heel strike of `side` (docs/DESIGN.md 7).
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
