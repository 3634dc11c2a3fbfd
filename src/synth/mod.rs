//! Synthetic trials: a deterministic model body that produces marker trials, with their ground
//! truth, for the demo data, the tests and the benchmarks. This module stands outside the
//! pipeline (nothing in it reads input); it is the only place in gravline where data is invented.
//!
//! Input: a [`Scenario`] and [`SynthOptions`] (rate, duration, the person's stature, mass and
//! sex, marker noise, gaps, seed). Output: a [`SynthTrial`]: marker tracks named by the landmark
//! vocabulary (identity mapping), metres, lab frame +x forward (walking direction), +y left, +z
//! up, floor at z = 0; and its [`Truth`]: the model's own events and its true whole-body CoM.
//! [`write_wide_csv`] writes a trial as a wide CSV in millimetres; [`demo`] builds the files of
//! `examples/data/`.
//!
//! The model body (stature proportions of Drillis & Contini 1966 via Winter, Fig. 4.1; hip joint
//! centers by the inverted Harrington et al. 2007 regression; shoulder joint centers 17 % of the
//! inter-acromion distance below the acromion, after Rab et al. 2002) is described in the doc of
//! `model.rs`; each motion in its own file (`walk.rs`, `stand.rs`, `squat.rs`, `jump.rs`). The
//! true CoM uses the default rows of de Leva (1996, J Biomech 29:1223-1230) for the person's sex,
//! computed from the exact landmarks and joint centers, with the model's true vertex for the
//! head. Noise: xorshift64* (Vigna 2016) and Box-Muller (1958), see `noise.rs`.
//!
//! Markers (42): four head markers (`l/r_head_front`, `l/r_head_back`; no `head_top`: the vertex
//! is left for the body model to estimate), `c7`, `t8`, `jugular`, `xiphoid`, and per side
//! `acromion`, `asis`, `psis`, `elbow_lat`, `elbow_med`, `wrist_rad`, `wrist_uln`, `hand`,
//! `knee_lat`, `knee_med`, `ankle_lat`, `ankle_med`, `heel`, `toe`, `mt1`, `mt2`, `mt5`. The squat
//! adds `bar_left`, `bar_right`.
//!
//! ```
//! use gravline::synth::{generate, Scenario, SynthOptions};
//! let trial = generate(Scenario::Walk, &SynthOptions::for_scenario(Scenario::Walk));
//! assert_eq!(trial.times_s.len(), 600); // 6 s at 100 Hz
//! assert_eq!(trial.labels.len(), 42);
//! assert_eq!(trial.truth.walk_speed_m_s, Some(1.30));
//! ```

mod csv_out;
pub mod demo;
pub mod floor;
mod geom;
mod jump;
mod model;
mod noise;
pub mod plates;
mod squat;
mod stand;
mod walk;

pub use csv_out::write_wide_csv;
pub use model::{proportions, BAR_COLLAR_SPAN_M, MARKER_RADIUS_M};

use crate::anthropometry::{SegmentTable, Sex};
use crate::body::vocabulary::Side;
use model::{Body, ComModel, Model, PointId, Single, Stem};
use noise::Rng;

/// Acceleration of free fall used for the jump's flight, m/s^2 (`docs/reference/methods.md`: 9.81).
pub const G_M_S2: f64 = 9.81;

/// What the model body does.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Scenario {
    /// Steady overground walking along +x.
    Walk,
    /// Quiet standing with a small sway.
    Stand,
    /// High-bar back squats with a barbell.
    Squat,
    /// A countermovement jump with a ballistic flight.
    Jump,
}

impl Scenario {
    /// All scenarios.
    pub const ALL: [Scenario; 4] = [
        Scenario::Walk,
        Scenario::Stand,
        Scenario::Squat,
        Scenario::Jump,
    ];

    /// `walk`, `stand`, `squat` or `jump`: the trial's name.
    pub fn name(self) -> &'static str {
        match self {
            Scenario::Walk => "walk",
            Scenario::Stand => "stand",
            Scenario::Squat => "squat",
            Scenario::Jump => "jump",
        }
    }
}

/// How to generate a trial. Values outside the ranges in the field docs are clamped into them
/// (non-finite ones replaced by the scenario default), so every set of options gives a trial.
#[derive(Clone, Debug, PartialEq)]
pub struct SynthOptions {
    /// Frame rate, 1-10 000 Hz.
    pub rate_hz: f64,
    /// Trial length, 0-3600 s; the trial has `round(duration_s * rate_hz)` frames from t = 0.
    pub duration_s: f64,
    /// Stature, 1.2-2.3 m.
    pub height_m: f64,
    /// Body mass, 20-250 kg (does not change the kinematics).
    pub mass_kg: f64,
    /// Chooses the population of the de Leva table for the true CoM.
    pub sex: Sex,
    /// Standard deviation of the Gaussian noise added to every marker coordinate, 0-0.05 m.
    /// Default 0.0005 (0.5 mm; common practice, no source).
    pub noise_m: f64,
    /// Cut a few short interior gaps (3-8 frames, none within 10 frames of either end) into
    /// randomly chosen markers: 4, plus one per 2000 frames.
    pub gaps: bool,
    /// Seed of the noise, the gaps and the standing sway.
    pub seed: u64,
    /// Walking speed of the walk, 0.4-2.2 m/s (default 1.30 m/s).
    pub walk_speed_m_s: f64,
    /// Cadence of the walk, 60-150 steps/min (default 110); raised where the step would exceed
    /// 0.45 of stature.
    pub cadence_steps_per_min: f64,
    /// Barbell mass of the squat, recorded in the truth, 0-500 kg (default 60 kg).
    pub bar_mass_kg: f64,
}

impl SynthOptions {
    /// Defaults per scenario: walk 6 s at 100 Hz, stand 5 s at 100 Hz, squat 12 s at 100 Hz (three
    /// repetitions), jump 3 s at 200 Hz; a 1.75 m, 70 kg male; 0.5 mm noise; gaps on; seed 1.
    pub fn for_scenario(scenario: Scenario) -> SynthOptions {
        let (rate_hz, duration_s) = match scenario {
            Scenario::Walk => (100.0, 6.0),
            Scenario::Stand => (100.0, 5.0),
            Scenario::Squat => (100.0, 12.0),
            Scenario::Jump => (200.0, 3.0),
        };
        SynthOptions {
            rate_hz,
            duration_s,
            height_m: 1.75,
            mass_kg: 70.0,
            sex: Sex::Male,
            noise_m: 0.0005,
            gaps: true,
            seed: 1,
            walk_speed_m_s: 1.30,
            cadence_steps_per_min: 110.0,
            bar_mass_kg: 60.0,
        }
    }
}

/// A generated trial.
#[derive(Clone, Debug, PartialEq)]
pub struct SynthTrial {
    /// `walk`, `stand`, `squat`, `jump` or `long_walk`.
    pub name: String,
    /// Marker labels (vocabulary names).
    pub labels: Vec<String>,
    /// Frame times, s, from 0 at 1 / rate.
    pub times_s: Vec<f64>,
    /// `positions[marker][frame]`, metres, lab frame; `None` in a gap.
    pub positions: Vec<Vec<Option<[f64; 3]>>>,
    /// What the model did, exactly.
    pub truth: Truth,
}

impl SynthTrial {
    /// The trial as a reader would give it (metres, +z up, `<name>.csv`, sampled at `rate_hz`),
    /// for running the pipeline on the model without a file.
    pub fn to_trial(&self, rate_hz: f64) -> crate::trial::Trial {
        crate::trial::Trial {
            name: self.name.clone(),
            file: format!("{}.csv", self.name),
            times_s: self.times_s.clone(),
            rate_hz,
            up_axis: crate::trial::UpAxis::Z,
            markers: crate::trial::RawMarkers::from_options(
                self.labels.clone(),
                self.positions.clone(),
            ),
            warnings: Vec::new(),
        }
    }

    /// Index of a marker label.
    pub fn index_of(&self, label: &str) -> Option<usize> {
        self.labels.iter().position(|l| l == label)
    }
}

/// The ground truth of a trial: what the model did, exactly.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Truth {
    /// `[left, right]` foot contacts as (on, off) times, s: for the walk (heel strike, toe off)
    /// of every contact that overlaps the trial (the first may begin before 0, the last end
    /// after the last frame); for the jump (first frame, take-off) and (landing, last frame);
    /// for stand and squat (first frame, last frame).
    pub contacts: [Vec<(f64, f64)>; 2],
    /// The walk's forward speed, m/s.
    pub walk_speed_m_s: Option<f64>,
    /// The jump's (take-off, landing) times, s.
    pub flight_s: Option<(f64, f64)>,
    /// Times of the squat's lowest points, s.
    pub rep_bottoms_s: Vec<f64>,
    /// Each squat repetition as (start, bottom, end), s.
    pub reps_s: Vec<(f64, f64, f64)>,
    /// Mass of the squat's barbell, kg.
    pub bar_mass_kg: Option<f64>,
    /// True whole-body CoM per frame (body only, no bar), metres: de Leva 1996 default rows for
    /// the person's sex, from the exact joint centers and landmarks, with the true vertex.
    pub com_m: Vec<[f64; 3]>,
    /// Exact positions per frame (no noise, no gaps) of the points the markers do not give:
    /// `l/r_hip_jc`, `mid_hip`, `l/r_knee_jc`, `l/r_ankle_jc`, `l/r_shoulder_jc`, `mid_shoulder`,
    /// `l/r_elbow_jc`, `l/r_wrist_jc` and the vertex `head_top`. Empty for [`long_trial`].
    pub points_m: Vec<(String, Vec<[f64; 3]>)>,
}

/// Leg length of the model body for a stature, metres: ASIS marker to medial malleolus marker
/// with the legs straight and vertical, the value the pelvis markers were placed with (give it
/// as the subject's `leg_length_m` and the Harrington regression returns the model's hip joint
/// centers exactly).
pub fn model_leg_length_m(height_m: f64) -> f64 {
    Model::new(clamp(height_m, 1.2, 2.3, 1.75)).leg_length_m
}

/// The 42 body markers, in output order.
fn body_marker_ids() -> Vec<PointId> {
    use Stem::*;
    let mut ids = Vec::with_capacity(48);
    for stem in [HeadFront, HeadBack] {
        for side in [Side::Left, Side::Right] {
            ids.push(PointId::Sided(side, stem));
        }
    }
    for s in [Single::C7, Single::T8, Single::Jugular, Single::Xiphoid] {
        ids.push(PointId::Single(s));
    }
    for stem in [Acromion, Asis, Psis] {
        for side in [Side::Left, Side::Right] {
            ids.push(PointId::Sided(side, stem));
        }
    }
    for side in [Side::Left, Side::Right] {
        for stem in [ElbowLat, ElbowMed, WristRad, WristUln, Hand] {
            ids.push(PointId::Sided(side, stem));
        }
    }
    for side in [Side::Left, Side::Right] {
        for stem in [
            KneeLat, KneeMed, AnkleLat, AnkleMed, Heel, Toe, Mt1, Mt2, Mt5,
        ] {
            ids.push(PointId::Sided(side, stem));
        }
    }
    ids
}

/// Cluster markers added by [`long_trial`] beyond the 42, in order.
fn cluster_marker_ids() -> Vec<PointId> {
    use Stem::*;
    let mut ids = Vec::new();
    for stem in [ThighFront, ShankFront, UpperArmLat] {
        for side in [Side::Left, Side::Right] {
            ids.push(PointId::Sided(side, stem));
        }
    }
    ids
}

/// The exact points recorded in [`Truth::points_m`].
fn truth_point_ids() -> Vec<PointId> {
    use Stem::*;
    let l = |s| PointId::Sided(Side::Left, s);
    let r = |s| PointId::Sided(Side::Right, s);
    vec![
        l(HipJc),
        r(HipJc),
        PointId::Single(Single::MidHip),
        l(KneeJc),
        r(KneeJc),
        l(AnkleJc),
        r(AnkleJc),
        l(ShoulderJc),
        r(ShoulderJc),
        PointId::Single(Single::MidShoulder),
        l(ElbowJc),
        r(ElbowJc),
        l(WristJc),
        r(WristJc),
        PointId::Single(Single::HeadTop),
    ]
}

fn clamp(v: f64, lo: f64, hi: f64, default: f64) -> f64 {
    if v.is_finite() {
        v.clamp(lo, hi)
    } else {
        default
    }
}

/// Options with every value in range.
fn sanitize(scenario: Scenario, o: &SynthOptions) -> SynthOptions {
    let d = SynthOptions::for_scenario(scenario);
    SynthOptions {
        rate_hz: clamp(o.rate_hz, 1.0, 10_000.0, d.rate_hz),
        duration_s: clamp(o.duration_s, 0.0, 3600.0, d.duration_s),
        height_m: clamp(o.height_m, 1.2, 2.3, d.height_m),
        mass_kg: clamp(o.mass_kg, 20.0, 250.0, d.mass_kg),
        sex: o.sex,
        noise_m: clamp(o.noise_m, 0.0, 0.05, d.noise_m),
        gaps: o.gaps,
        seed: o.seed,
        walk_speed_m_s: clamp(o.walk_speed_m_s, 0.4, 2.2, d.walk_speed_m_s),
        cadence_steps_per_min: clamp(
            o.cadence_steps_per_min,
            60.0,
            150.0,
            d.cadence_steps_per_min,
        ),
        bar_mass_kg: clamp(o.bar_mass_kg, 0.0, 500.0, d.bar_mass_kg),
    }
}

/// A planned motion.
enum Motion {
    Walk(walk::Walk),
    Stand(stand::Stand),
    Squat(squat::Squat),
    Jump(Box<jump::Jump>),
}

impl Motion {
    fn body_at(&self, model: &Model, com: &ComModel, t_s: f64) -> Body {
        match self {
            Motion::Walk(w) => model.build(&w.pose(t_s)),
            Motion::Stand(s) => model.build(&s.pose(t_s)),
            Motion::Squat(s) => model.build(&s.pose(t_s)),
            Motion::Jump(j) => j.body_at(model, com, t_s),
        }
    }
}

/// Marker tracks, `[marker][frame]`, metres.
type Tracks = Vec<Vec<Option<[f64; 3]>>>;

/// What sampling a motion gives.
struct Sampled {
    /// Exact marker tracks.
    tracks: Tracks,
    /// True CoM per frame.
    com_m: Vec<[f64; 3]>,
    /// Exact truth points, `[point][frame]`.
    points: Vec<Vec<[f64; 3]>>,
}

/// Samples a motion at `times`: exact marker tracks, true CoM, and the asked truth points.
fn sample(
    motion: &Motion,
    model: &Model,
    com: &ComModel,
    times: &[f64],
    markers: &[PointId],
    points: &[PointId],
) -> Sampled {
    let n = times.len();
    let mut tracks: Tracks = markers.iter().map(|_| Vec::with_capacity(n)).collect();
    let mut point_tracks: Vec<Vec<[f64; 3]>> =
        points.iter().map(|_| Vec::with_capacity(n)).collect();
    let mut com_m = Vec::with_capacity(n);
    for &t in times {
        let body = motion.body_at(model, com, t);
        for (track, id) in tracks.iter_mut().zip(markers) {
            let p = body.get(*id);
            track.push(Some([p.x, p.y, p.z]));
        }
        for (track, id) in point_tracks.iter_mut().zip(points) {
            let p = body.get(*id);
            track.push([p.x, p.y, p.z]);
        }
        let c = com.com(&body);
        com_m.push([c.x, c.y, c.z]);
    }
    Sampled {
        tracks,
        com_m,
        points: point_tracks,
    }
}

/// Number of gaps cut into a trial of `n_frames` frames.
fn gap_count(n_frames: usize) -> usize {
    4 + n_frames / 2000
}

fn com_model(sex: Sex) -> ComModel {
    // The built-in tables are embedded and validated by their own tests.
    SegmentTable::builtin("de-leva-1996", sex)
        .map(|table| ComModel::new(&table))
        .unwrap_or_else(|_| ComModel::empty())
}

/// Generates a synthetic trial of a scenario.
pub fn generate(scenario: Scenario, opts: &SynthOptions) -> SynthTrial {
    let o = sanitize(scenario, opts);
    let model = Model::new(o.height_m);
    let com = com_model(o.sex);
    let n = (o.duration_s * o.rate_hz).round() as usize;
    let times: Vec<f64> = (0..n).map(|i| i as f64 / o.rate_hz).collect();
    let (first, last) = (0.0, times.last().copied().unwrap_or(0.0));
    let mut markers = body_marker_ids();
    if scenario == Scenario::Squat {
        markers.extend(squat::BAR_POINTS);
    }
    let (motion, mut truth) = plan(scenario, &o, &model, &com, first, last);
    let points = truth_point_ids();
    let sampled = sample(&motion, &model, &com, &times, &markers, &points);
    let mut positions = sampled.tracks;
    truth.com_m = sampled.com_m;
    truth.points_m = points
        .iter()
        .map(|id| id.name())
        .zip(sampled.points)
        .collect();
    finish(&mut positions, &o);
    SynthTrial {
        name: scenario.name().to_string(),
        labels: markers.iter().map(|id| id.name()).collect(),
        times_s: times,
        positions,
        truth,
    }
}

/// The motion of a scenario (options already sanitized) and the truth it fixes in advance:
/// contacts, speed, flight, repetitions.
fn plan(
    scenario: Scenario,
    o: &SynthOptions,
    model: &Model,
    com: &ComModel,
    first: f64,
    last: f64,
) -> (Motion, Truth) {
    let mut truth = Truth::default();
    let motion = match scenario {
        Scenario::Walk => {
            let x0 = -o.walk_speed_m_s * o.duration_s / 2.0;
            let w = walk::Walk::new(model, o.walk_speed_m_s, o.cadence_steps_per_min, x0);
            truth.contacts = w.contacts(first, last);
            truth.walk_speed_m_s = Some(w.speed_m_s());
            Motion::Walk(w)
        }
        Scenario::Stand => {
            truth.contacts = [vec![(first, last)], vec![(first, last)]];
            Motion::Stand(stand::Stand::new(model, o.seed))
        }
        Scenario::Squat => {
            let s = squat::Squat::new(model, o.duration_s);
            truth.contacts = [vec![(first, last)], vec![(first, last)]];
            truth.reps_s = s.reps().to_vec();
            truth.rep_bottoms_s = s.reps().iter().map(|r| r.1).collect();
            truth.bar_mass_kg = Some(o.bar_mass_kg);
            Motion::Squat(s)
        }
        Scenario::Jump => {
            let j = jump::Jump::new(model, com);
            let (take_off, landing) = j.flight_s();
            truth.contacts = [
                vec![(first, take_off), (landing, last)],
                vec![(first, take_off), (landing, last)],
            ];
            truth.flight_s = Some((take_off, landing));
            Motion::Jump(Box::new(j))
        }
    };
    (motion, truth)
}

/// Adds noise and gaps (noise first, so the gap positions do not change the noise).
fn finish(positions: &mut Tracks, o: &SynthOptions) {
    let mut noise_rng = Rng::new(o.seed, noise::STREAM_NOISE);
    noise::add_noise(positions, o.noise_m, &mut noise_rng);
    if o.gaps {
        let mut gap_rng = Rng::new(o.seed, noise::STREAM_GAPS);
        let n_frames = positions.first().map_or(0, |t| t.len());
        noise::cut_gaps(positions, gap_count(n_frames), &mut gap_rng);
    }
}

/// Largest marker count of [`long_trial`]: the 42 body markers and 6 cluster markers
/// (`l/r_thigh_front`, `l/r_shank_front`, `l/r_upper_arm_lat`).
pub const LONG_TRIAL_MAX_MARKERS: usize = 48;

/// A long walk for benchmarks: `n_frames` frames at 100 Hz of the default walk (1.75 m male,
/// 1.30 m/s, 110 steps/min, centered on x = 0) with the first `n_markers` (at most
/// [`LONG_TRIAL_MAX_MARKERS`]) of the 42 body markers followed by the cluster markers; 0.5 mm
/// noise, gaps as in [`SynthOptions::gaps`]. Its truth has contacts, speed and CoM, but no
/// [`Truth::points_m`].
pub fn long_trial(n_frames: usize, n_markers: usize, seed: u64) -> SynthTrial {
    let mut o = SynthOptions::for_scenario(Scenario::Walk);
    o.seed = seed;
    o.duration_s = n_frames as f64 / o.rate_hz;
    let model = Model::new(o.height_m);
    let com = com_model(o.sex);
    let times: Vec<f64> = (0..n_frames).map(|i| i as f64 / o.rate_hz).collect();
    let x0 = -o.walk_speed_m_s * o.duration_s / 2.0;
    let w = walk::Walk::new(&model, o.walk_speed_m_s, o.cadence_steps_per_min, x0);
    let mut markers = body_marker_ids();
    markers.extend(cluster_marker_ids());
    markers.truncate(n_markers.min(LONG_TRIAL_MAX_MARKERS));
    let last = times.last().copied().unwrap_or(0.0);
    let truth_contacts = w.contacts(0.0, last);
    let speed = w.speed_m_s();
    let motion = Motion::Walk(w);
    let sampled = sample(&motion, &model, &com, &times, &markers, &[]);
    let mut positions = sampled.tracks;
    let com_m = sampled.com_m;
    finish(&mut positions, &o);
    SynthTrial {
        name: "long_walk".to_string(),
        labels: markers.iter().map(|id| id.name()).collect(),
        times_s: times,
        positions,
        truth: Truth {
            contacts: truth_contacts,
            walk_speed_m_s: Some(speed),
            com_m,
            ..Truth::default()
        },
    }
}
