//! Resolution of the body model: every point the chosen table rows need, found in the trial (by
//! the `[landmarks]` map or under its own name), defined in `[virtual]`, or derived by a
//! joint-center method ([`super::joints`]). The result is a [`BodyModel`]: a list of point
//! definitions in dependency order, evaluated frame by frame without allocation, and the
//! segments with their endpoints, mass and CoM fractions.
//!
//! A point that cannot be found is a [`LandmarkError`] at build time, before any computation,
//! naming the landmark, the label looked for and the closest labels in the file.
//!
//! Missing arms (`arms = "hanging"`, docs/DESIGN.md 5): when an arm has none of its markers, its
//! elbow JC, wrist JC, hand and finger tip hang straight below the shoulder JC along the trunk
//! axis (mid-shoulder to mid-hip), at de Leva's (1996, Table 4) mean segment lengths scaled by
//! stature; the table's own CoM fractions then place the arm segments. Reported as a warning.

use super::frames::{FrameCom, JointDef};
use super::joints::{self, PelvisFrame, P};
use super::vocabulary::{self, Side};
use crate::anthropometry::{SegmentKind, SegmentTable, Sex};
use crate::config::{ArmsMode, Config, HipMethod, Subject, VirtualDef};
use crate::signal::Markers;
use crate::warning::Warning;
use std::collections::HashMap;

/// Index of a point in a [`BodyModel`].
pub type PointId = usize;

/// How one point is computed in a frame.
#[derive(Clone, Debug, PartialEq)]
enum Def {
    /// A marker of the trial (index into the frame's marker slice).
    Marker(usize),
    Mean(Vec<PointId>),
    Along {
        from: PointId,
        to: PointId,
        fraction: f64,
    },
    Offset {
        frame: [PointId; 3],
        offset_m: [f64; 3],
    },
    Midpoint(PointId, PointId),
    /// A JC medial to a lateral marker (see [`joints::medial_offset`]).
    Medial {
        lateral: PointId,
        axis_from: PointId,
        axis_to: PointId,
        toward_from: PointId,
        toward_to: PointId,
        offset_m: f64,
    },
    Hip {
        l_asis: PointId,
        r_asis: PointId,
        mid_psis: PointId,
        right: bool,
    },
    Shoulder {
        acromion: PointId,
        other: PointId,
        mid_hip: PointId,
    },
    Vertex {
        head: [PointId; 4],
        c7: PointId,
    },
    /// `base + distance * unit(bottom - top)`.
    Hanging {
        base: PointId,
        top: PointId,
        bottom: PointId,
        distance_m: f64,
    },
    /// A joint center of a table in segment frames ([`super::frames`]).
    Joint(JointDef),
}

/// One segment of the model.
#[derive(Clone, Debug, PartialEq)]
pub struct Segment {
    /// `l_thigh`, `trunk`, ...
    pub name: String,
    pub kind: SegmentKind,
    pub side: Option<Side>,
    /// Endpoint the CoM is measured from.
    pub origin: SegmentPoint,
    pub other: SegmentPoint,
    pub mass_kg: f64,
    pub com_fraction: f64,
    /// The table row's endpoint key (`hip_jc-knee_jc`).
    pub row_key: String,
    /// The CoM as a 3-D offset in the segment's frame (tables in segment frames); when set, it
    /// places the CoM instead of `com_fraction`.
    pub frame: Option<FrameCom>,
}

/// A segment endpoint: its name and its point in the model.
#[derive(Clone, Debug, PartialEq)]
pub struct SegmentPoint {
    pub name: String,
    pub id: PointId,
}

/// A point the model needs and cannot find or compute.
#[derive(Debug, thiserror::Error)]
pub enum LandmarkError {
    #[error(
        "landmark `{landmark}` not found: no column for label `{label}` in {file}{closest}; {hint}"
    )]
    Missing {
        landmark: String,
        label: String,
        file: String,
        closest: String,
        hint: String,
    },
    #[error("landmark `{landmark}` needs {what}; {hint}")]
    NeedsMeasurement {
        landmark: String,
        what: String,
        hint: String,
    },
    #[error("[landmarks] `{key}` is not a landmark of the vocabulary (closest: `{closest}`); `gravline landmarks` lists them")]
    UnknownKey { key: String, closest: String },
    #[error("{file}: landmarks not found: {landmarks}; `gravline landmarks {file}` prints a [landmarks] template for its labels (first: {first})")]
    ManyMissing {
        file: String,
        landmarks: String,
        first: String,
    },
    #[error("[virtual] `{landmark}` refers to itself through {chain}; break the cycle")]
    Cycle { landmark: String, chain: String },
    #[error("[model] endpoints: segment `{segment}` has no row `{key}` in table {table}; rows are {rows}")]
    UnknownRow {
        segment: String,
        key: String,
        table: String,
        rows: String,
    },
}

/// The resolved body model of one trial.
#[derive(Clone, Debug)]
pub struct BodyModel {
    defs: Vec<Def>,
    /// Name of each point (same index as `defs`).
    pub point_names: Vec<String>,
    pub segments: Vec<Segment>,
    /// Body mass (subject).
    pub body_mass_kg: f64,
    /// Leg length used by the hip regressions and (by default) the XCoM, metres.
    pub leg_length_m: Option<f64>,
    /// The subject's marker radius and foot width, metres, for the floor and the sole outline.
    pub marker_radius_m: Option<f64>,
    pub foot_width_m: Option<f64>,
    /// Optional points found for other stages (foot markers, load landmarks).
    optional: HashMap<String, PointId>,
    /// Marker indices (into the trial's labels) the model reads.
    pub markers_used: Vec<usize>,
    pub warnings: Vec<Warning>,
    hip: HipMethod,
    height_m: f64,
    /// (ASIS marker, malleolus marker) indices per side, for measuring the leg length.
    leg_markers: Vec<(usize, usize)>,
}

impl BodyModel {
    /// Resolves the model for a trial with these marker `labels` (as in the file).
    ///
    /// `optional` names points other stages would like (foot markers): resolved when possible,
    /// silently absent otherwise. `file` names the trial in errors.
    pub fn build(
        labels: &[String],
        file: &str,
        config: &Config,
        subject: &Subject,
        table: &SegmentTable,
        optional: &[&str],
    ) -> Result<BodyModel, LandmarkError> {
        let names = vocabulary::all_names();
        for key in config.landmarks.keys() {
            if !names.iter().any(|n| fold_label(n) == fold_label(key)) {
                let closest = closest_labels(key, &names, 1);
                return Err(LandmarkError::UnknownKey {
                    key: key.clone(),
                    closest: closest.first().cloned().unwrap_or_default(),
                });
            }
        }
        let kinds = table.body_segments();
        BodyModel::build_segments(labels, file, config, subject, table, optional, &kinds)
    }

    /// [`BodyModel::build`] for the listed segments only (a subsystem such as the legs, for
    /// comparing models on a marker set that lacks the rest).
    pub fn build_segments(
        labels: &[String],
        file: &str,
        config: &Config,
        subject: &Subject,
        table: &SegmentTable,
        optional: &[&str],
        body_segments: &[SegmentKind],
    ) -> Result<BodyModel, LandmarkError> {
        let mut r = Resolver::new(labels, file, config, subject);
        r.thorax_shoulder = table.has_frames();
        let mut segments = Vec::new();
        let mut missing: Vec<LandmarkError> = Vec::new();
        let trunk_parts = config
            .endpoints
            .get(&SegmentKind::Trunk)
            .is_some_and(|k| k == "parts");
        let kinds: Vec<SegmentKind> = body_segments
            .iter()
            .flat_map(|&k| {
                if k == SegmentKind::Trunk && trunk_parts {
                    vec![
                        SegmentKind::UpperTrunk,
                        SegmentKind::MiddleTrunk,
                        SegmentKind::LowerTrunk,
                    ]
                } else {
                    vec![k]
                }
            })
            .collect();
        for kind in kinds {
            let row = match config.endpoints.get(&kind).filter(|k| *k != "parts") {
                Some(key) => {
                    table
                        .row_by_key(kind, key)
                        .ok_or_else(|| LandmarkError::UnknownRow {
                            segment: kind.name().to_string(),
                            key: key.clone(),
                            table: table.name.clone(),
                            rows: table
                                .rows_of(kind)
                                .map(|r| r.key())
                                .collect::<Vec<_>>()
                                .join(", "),
                        })?
                }
                None => match table
                    .default_row(kind)
                    .or_else(|| table.rows_of(kind).next())
                {
                    Some(row) => row,
                    None => {
                        return Err(LandmarkError::UnknownRow {
                            segment: kind.name().to_string(),
                            key: "(default)".to_string(),
                            table: table.name.clone(),
                            rows: String::new(),
                        })
                    }
                },
            };
            let sides: Vec<Option<Side>> = if kind.is_sided() {
                vec![Some(Side::Left), Some(Side::Right)]
            } else {
                vec![None]
            };
            for side in sides {
                let full = |stem: &str| side.map_or(stem.to_string(), |s| s.name(stem));
                let origin_name = full(&row.origin);
                let other_name = full(&row.other);
                let (origin, other) = match (r.resolve(&origin_name), r.resolve(&other_name)) {
                    (Ok(a), Ok(b)) => (a, b),
                    (a, b) => {
                        for e in [a.err(), b.err()].into_iter().flatten() {
                            missing.push(e);
                        }
                        continue;
                    }
                };
                let frame = match row.com_frame {
                    Some(offset) => {
                        Some(r.frame_com(&full(kind.name()), kind, side, origin, other, offset)?)
                    }
                    None => None,
                };
                segments.push(Segment {
                    name: full(kind.name()),
                    kind,
                    side,
                    origin: SegmentPoint {
                        name: origin_name,
                        id: origin,
                    },
                    other: SegmentPoint {
                        name: other_name,
                        id: other,
                    },
                    mass_kg: row.mass_fraction * subject.mass_kg,
                    com_fraction: row.com_fraction,
                    row_key: row.key(),
                    frame,
                });
            }
        }
        match missing.len() {
            0 => {}
            1 => return Err(missing.remove(0)),
            _ => {
                let mut names: Vec<String> = Vec::new();
                for e in &missing {
                    let n = match e {
                        LandmarkError::Missing { landmark, .. }
                        | LandmarkError::NeedsMeasurement { landmark, .. } => landmark.clone(),
                        other => other.to_string(),
                    };
                    if !names.contains(&n) {
                        names.push(n);
                    }
                }
                return Err(LandmarkError::ManyMissing {
                    file: file.to_string(),
                    landmarks: names.join(", "),
                    first: missing.remove(0).to_string(),
                });
            }
        }
        let mut found = HashMap::new();
        for name in optional {
            if let Ok(id) = r.resolve(name) {
                found.insert(name.to_string(), id);
            }
        }
        let leg_markers = Side::BOTH
            .iter()
            .filter_map(|s| {
                let asis = r.label_index(&s.name("asis"))?;
                let ankle = r
                    .label_index(&s.name("ankle_med"))
                    .or_else(|| r.label_index(&s.name("ankle_lat")))?;
                Some((asis, ankle))
            })
            .collect();
        let mut warnings = r.warnings;
        warnings.extend(table.warnings.iter().cloned());
        let mut markers_used: Vec<usize> = r
            .defs
            .iter()
            .filter_map(|d| {
                if let Def::Marker(i) = d {
                    Some(*i)
                } else {
                    None
                }
            })
            .collect();
        markers_used.sort_unstable();
        markers_used.dedup();
        Ok(BodyModel {
            hip: config.hip,
            height_m: subject.height_m,
            leg_markers,
            defs: r.defs,
            point_names: r.names,
            segments,
            body_mass_kg: subject.mass_kg,
            leg_length_m: subject.leg_length_m,
            marker_radius_m: subject.marker_radius_m,
            foot_width_m: subject.foot_width_m,
            optional: found,
            markers_used,
            warnings,
        })
    }

    /// A point resolved at build time (a segment endpoint or one of the `optional` names).
    pub fn point(&self, name: &str) -> Option<PointId> {
        self.optional
            .get(name)
            .copied()
            .or_else(|| self.point_names.iter().position(|n| n == name))
    }

    /// The trial marker index of a point that is a marker of the trial (not virtual, not
    /// derived): the points the floor, the contact height test and the declaration check trust.
    pub fn marker_index(&self, name: &str) -> Option<usize> {
        match self.defs.get(self.point(name)?) {
            Some(Def::Marker(i)) => Some(*i),
            _ => None,
        }
    }

    /// Whether a point of the model is a marker of the trial (see [`BodyModel::marker_index`]).
    pub fn is_marker(&self, id: PointId) -> bool {
        matches!(self.defs.get(id), Some(Def::Marker(_)))
    }

    /// Whether the hip regressions need a measured leg length (none was given).
    pub fn needs_leg_length(&self) -> bool {
        self.leg_length_m.is_none()
    }

    /// Number of points evaluated per frame.
    pub fn n_points(&self) -> usize {
        self.defs.len()
    }

    /// Evaluates every point in one frame. `markers[i]` is marker `i` of the trial in this frame
    /// (metres); `out` is resized to [`BodyModel::n_points`] and reused between frames.
    pub fn evaluate(&self, markers: &[Option<[f64; 3]>], out: &mut Vec<Option<P>>) {
        out.clear();
        let leg_length = self.leg_length_m.unwrap_or(f64::NAN);
        for def in &self.defs {
            let get = |id: PointId| out.get(id).copied().flatten();
            let value = match def {
                Def::Marker(i) => markers.get(*i).copied().flatten().map(P::from),
                Def::Mean(ids) => {
                    let mut sum = P::zeros();
                    let mut ok = true;
                    for &id in ids {
                        match get(id) {
                            Some(p) => sum += p,
                            None => ok = false,
                        }
                    }
                    if ok && !ids.is_empty() {
                        Some(sum / ids.len() as f64)
                    } else {
                        None
                    }
                }
                Def::Along { from, to, fraction } => get(*from)
                    .zip(get(*to))
                    .map(|(a, b)| a + (b - a) * *fraction),
                Def::Offset { frame, offset_m } => {
                    match (get(frame[0]), get(frame[1]), get(frame[2])) {
                        (Some(o), Some(a), Some(b)) => offset_in_frame(o, a, b, *offset_m),
                        _ => None,
                    }
                }
                Def::Midpoint(a, b) => get(*a).zip(get(*b)).map(|(a, b)| (a + b) / 2.0),
                Def::Medial {
                    lateral,
                    axis_from,
                    axis_to,
                    toward_from,
                    toward_to,
                    offset_m,
                } => {
                    match (
                        get(*lateral),
                        get(*axis_from),
                        get(*axis_to),
                        get(*toward_from),
                        get(*toward_to),
                    ) {
                        (Some(l), Some(f), Some(t), Some(tf), Some(tt)) => {
                            joints::medial_offset(l, f, t, tt - tf, *offset_m)
                        }
                        _ => None,
                    }
                }
                Def::Hip {
                    l_asis,
                    r_asis,
                    mid_psis,
                    right,
                } => match (get(*l_asis), get(*r_asis), get(*mid_psis)) {
                    (Some(l), Some(r), Some(p)) => PelvisFrame::new(l, r, p)
                        .and_then(|f| joints::hip_jc(self.hip_method(), &f, leg_length, *right)),
                    _ => None,
                }
                .filter(|p| p.iter().all(|c| c.is_finite())),
                Def::Shoulder {
                    acromion,
                    other,
                    mid_hip,
                } => match (get(*acromion), get(*other), get(*mid_hip)) {
                    (Some(a), Some(o), Some(h)) => (h - (a + o) / 2.0)
                        .try_normalize(1e-9)
                        .map(|down| joints::shoulder_jc(a, o, down)),
                    _ => None,
                },
                Def::Vertex { head, c7 } => match (
                    get(head[0]),
                    get(head[1]),
                    get(head[2]),
                    get(head[3]),
                    get(*c7),
                ) {
                    (Some(a), Some(b), Some(c), Some(d), Some(c7)) => {
                        joints::vertex([a, b, c, d], c7, self.vertex_height_m())
                    }
                    _ => None,
                },
                Def::Hanging {
                    base,
                    top,
                    bottom,
                    distance_m,
                } => match (get(*base), get(*top), get(*bottom)) {
                    (Some(b), Some(t), Some(m)) => (m - t)
                        .try_normalize(1e-9)
                        .map(|down| b + down * *distance_m),
                    _ => None,
                },
                Def::Joint(joint) => joint.evaluate(get),
            };
            out.push(value);
        }
    }

    fn hip_method(&self) -> HipMethod {
        self.hip
    }

    fn vertex_height_m(&self) -> f64 {
        self.height_m
    }

    /// Measures the leg length (ASIS to medial malleolus, or to the lateral malleolus when no
    /// medial marker exists) and keeps it when none was given. Returns the length in use.
    ///
    /// Per side, the [`LEG_LENGTH_PERCENTILE`]th percentile of the distance over the frames where
    /// both markers are seen, then the mean of the sides: the length of the extended leg, as
    /// it is measured standing, whatever the knees do in the trial (a squat's mean would be
    /// centimetres short), robust to a few bad frames.
    pub fn measure_leg_length(&mut self, markers: &Markers) -> Option<f64> {
        if self.leg_length_m.is_some() {
            return self.leg_length_m;
        }
        let sides: Vec<f64> = self
            .leg_markers
            .iter()
            .filter_map(|&(asis, ankle)| {
                let (a, b) = (markers.tracks.get(asis)?, markers.tracks.get(ankle)?);
                let distances = (0..markers.n_frames).filter_map(|frame| {
                    Some((P::from(a.at(frame)?) - P::from(b.at(frame)?)).norm())
                });
                crate::stats::percentile(distances, LEG_LENGTH_PERCENTILE)
            })
            .collect();
        if !sides.is_empty() {
            self.leg_length_m = Some(sides.iter().sum::<f64>() / sides.len() as f64);
        }
        self.leg_length_m
    }
}

/// Percentile of the per-frame ASIS-malleolus distance taken as the leg length: the extended
/// leg with a margin for marker noise (common practice, no source).
pub const LEG_LENGTH_PERCENTILE: f64 = 95.0;

/// A point at `offset_m` in the frame (origin `o`, x toward `a`, z normal to (o, a, b)).
fn offset_in_frame(o: P, a: P, b: P, offset_m: [f64; 3]) -> Option<P> {
    let x = (a - o).try_normalize(1e-9)?;
    let z = x.cross(&(b - o)).try_normalize(1e-9)?;
    let y = z.cross(&x);
    Some(o + x * offset_m[0] + y * offset_m[1] + z * offset_m[2])
}

/// De Leva (1996, Table 4) mean lengths in metres for hanging arms, with the mean stature of
/// the sample: (upper arm SJC-EJC, forearm EJC-WJC, hand WJC-MET3, hand WJC-DAC3, stature).
fn de_leva_arm_lengths_m(sex: Sex) -> [f64; 5] {
    match sex {
        Sex::Male => [0.2817, 0.2689, 0.0862, 0.1879, 1.741],
        Sex::Female => [0.2751, 0.2643, 0.0780, 0.1701, 1.735],
    }
}

/// Builds point definitions on demand, in dependency order.
pub(super) struct Resolver<'a> {
    labels: HashMap<&'a str, usize>,
    /// Labels folded by [`fold_label`] (a fold shared by two labels is left out: ambiguous).
    folded: HashMap<String, Option<usize>>,
    /// The `[landmarks]` map with folded keys.
    map: HashMap<String, &'a str>,
    all_labels: &'a [String],
    file: &'a str,
    config: &'a Config,
    pub(super) subject: &'a Subject,
    defs: Vec<Def>,
    names: Vec<String>,
    ids: HashMap<String, PointId>,
    visiting: Vec<String>,
    pub(super) warnings: Vec<Warning>,
    /// Shoulder JCs by the thorax regression of [`super::frames`] (tables in segment frames).
    thorax_shoulder: bool,
}

impl<'a> Resolver<'a> {
    fn new(labels: &'a [String], file: &'a str, config: &'a Config, subject: &'a Subject) -> Self {
        Resolver {
            labels: labels
                .iter()
                .enumerate()
                .map(|(i, l)| (l.as_str(), i))
                .collect(),
            folded: {
                let mut m: HashMap<String, Option<usize>> = HashMap::new();
                for (i, l) in labels.iter().enumerate() {
                    m.entry(fold_label(l))
                        .and_modify(|v| *v = None)
                        .or_insert(Some(i));
                }
                m
            },
            map: config
                .landmarks
                .iter()
                .map(|(k, v)| (fold_label(k), v.as_str()))
                .collect(),
            all_labels: labels,
            file,
            config,
            subject,
            defs: Vec::new(),
            names: Vec::new(),
            ids: HashMap::new(),
            visiting: Vec::new(),
            warnings: Vec::new(),
            thorax_shoulder: false,
        }
    }

    /// Whether a landmark is a marker of the trial or a `[virtual]` definition.
    pub(super) fn is_available(&self, name: &str) -> bool {
        self.label_index(name).is_some() || self.config.virtual_landmarks.contains_key(name)
    }

    pub(super) fn push_joint(&mut self, name: &str, joint: JointDef) -> PointId {
        self.push(name, Def::Joint(joint))
    }

    /// The label a landmark is looked up under: the `[landmarks]` map, else its own name.
    fn label_of<'b>(&'b self, name: &'b str) -> &'b str {
        match self.config.landmarks.get(name) {
            Some(label) => label,
            None => self.map.get(&fold_label(name)).copied().unwrap_or(name),
        }
    }

    /// The column of a landmark: its label exactly, else up to case and separators.
    fn label_index(&self, name: &str) -> Option<usize> {
        let label = self.label_of(name);
        self.labels
            .get(label)
            .copied()
            .or_else(|| self.folded.get(&fold_label(label)).copied().flatten())
    }

    fn push(&mut self, name: &str, def: Def) -> PointId {
        let id = self.defs.len();
        self.defs.push(def);
        self.names.push(name.to_string());
        self.ids.insert(name.to_string(), id);
        id
    }

    fn missing(&self, name: &str, hint: &str) -> LandmarkError {
        let label = self.label_of(name).to_string();
        let closest = closest_labels(&label, self.all_labels, 3);
        LandmarkError::Missing {
            landmark: name.to_string(),
            label,
            file: self.file.to_string(),
            closest: if closest.is_empty() {
                String::new()
            } else {
                format!(" (closest labels: {})", closest.join(", "))
            },
            hint: hint.to_string(),
        }
    }

    fn map_hint(name: &str) -> String {
        format!("map it in [landmarks] (`{name} = \"<label>\"`) or define it in [virtual]")
    }

    /// Resolves a point by name (see the module doc for the order of the rules).
    pub(super) fn resolve(&mut self, name: &str) -> Result<PointId, LandmarkError> {
        if let Some(&id) = self.ids.get(name) {
            return Ok(id);
        }
        if self.visiting.iter().any(|v| v == name) {
            let mut chain = self.visiting.clone();
            chain.push(name.to_string());
            return Err(LandmarkError::Cycle {
                landmark: name.to_string(),
                chain: chain.join(" -> "),
            });
        }
        self.visiting.push(name.to_string());
        let result = self.resolve_new(name);
        self.visiting.pop();
        result
    }

    fn resolve_new(&mut self, name: &str) -> Result<PointId, LandmarkError> {
        // 1. A [virtual] definition overrides everything.
        if let Some(def) = self.config.virtual_landmarks.get(name).cloned() {
            let def = match def {
                VirtualDef::Mean(names) => {
                    let ids = names
                        .iter()
                        .map(|n| self.resolve(n))
                        .collect::<Result<Vec<_>, _>>()?;
                    Def::Mean(ids)
                }
                VirtualDef::Along { from, to, fraction } => Def::Along {
                    from: self.resolve(&from)?,
                    to: self.resolve(&to)?,
                    fraction,
                },
                VirtualDef::Offset { frame, offset_m } => Def::Offset {
                    frame: [
                        self.resolve(&frame[0])?,
                        self.resolve(&frame[1])?,
                        self.resolve(&frame[2])?,
                    ],
                    offset_m,
                },
            };
            return Ok(self.push(name, def));
        }
        // 2. A marker of the trial (a given JC overrides its estimate).
        if let Some(i) = self.label_index(name) {
            return Ok(self.push(name, Def::Marker(i)));
        }
        if let Some(label) = self.config.landmarks.get(name) {
            // The user mapped it explicitly: a missing label is an error, not a fallback.
            let hint = format!("check the label `{label}` in [landmarks]");
            return Err(self.missing(name, &hint));
        }
        // 3. Derived points.
        let (side, stem) = vocabulary::split_side(name);
        match (side, stem) {
            (Some(side), "hip_jc") => self.hip_jc(name, side),
            (Some(side), "knee_jc") => self.epicondyle_jc(name, side, Joint::Knee),
            (Some(side), "ankle_jc") => self.epicondyle_jc(name, side, Joint::Ankle),
            (Some(side), "elbow_jc") => self.epicondyle_jc(name, side, Joint::Elbow),
            (Some(side), "wrist_jc") => self.wrist_jc(name, side),
            (Some(side), "shoulder_jc") => {
                if self.thorax_shoulder {
                    if let Some(id) = self.thorax_shoulder_jc(name, side)? {
                        return Ok(id);
                    }
                }
                let acromion = self.resolve(&side.name("acromion"))?;
                let other = self.resolve(&other(side).name("acromion"))?;
                let mid_hip = self.resolve("mid_hip")?;
                Ok(self.push(
                    name,
                    Def::Shoulder {
                        acromion,
                        other,
                        mid_hip,
                    },
                ))
            }
            (Some(side), "hand" | "finger_tip") => match self.hanging(name, side, stem)? {
                Some(id) => Ok(id),
                None => Err(self.missing(name, &Self::map_hint(name))),
            },
            (None, "mid_hip") => {
                let l = self.resolve("l_hip_jc")?;
                let r = self.resolve("r_hip_jc")?;
                Ok(self.push(name, Def::Midpoint(l, r)))
            }
            (Some(side), "ankle_med") => self.medial_malleolus(name, side),
            (None, "cervical_jc") => self.cervical_jc(name),
            (None, "lumbar_jc") => self.lumbar_jc(name),
            (Some(side), "mid_metatarsal") => {
                let (mt1, mt5, mt2) = (side.name("mt1"), side.name("mt5"), side.name("mt2"));
                if self.is_available(&mt1) && self.is_available(&mt5) {
                    let a = self.resolve(&mt1)?;
                    let b = self.resolve(&mt5)?;
                    Ok(self.push(name, Def::Midpoint(a, b)))
                } else if self.is_available(&mt2) {
                    let a = self.resolve(&mt2)?;
                    self.warnings.push(Warning::Approximation {
                        what: format!("{name} taken at `{mt2}` (no {mt1} and {mt5})"),
                    });
                    Ok(self.push(name, Def::Mean(vec![a])))
                } else {
                    Err(self.missing(&mt1, &format!("the {name} needs {mt1} and {mt5}, or {mt2}")))
                }
            }
            (None, "mid_shoulder") => {
                let l = self.resolve("l_shoulder_jc")?;
                let r = self.resolve("r_shoulder_jc")?;
                Ok(self.push(name, Def::Midpoint(l, r)))
            }
            (None, "mid_psis") => {
                if self.label_index("l_psis").is_some() && self.label_index("r_psis").is_some() {
                    let l = self.resolve("l_psis")?;
                    let r = self.resolve("r_psis")?;
                    Ok(self.push(name, Def::Midpoint(l, r)))
                } else if self.label_index("sacrum").is_some() {
                    let s = self.resolve("sacrum")?;
                    Ok(self.push(name, Def::Mean(vec![s])))
                } else {
                    let which = if self.label_index("l_psis").is_none() {
                        "l_psis"
                    } else {
                        "r_psis"
                    };
                    Err(self.missing(
                        which,
                        "the pelvis needs both PSIS markers or one `sacrum` marker",
                    ))
                }
            }
            (None, "head_top") => {
                let names = ["l_head_front", "r_head_front", "l_head_back", "r_head_back"];
                if names.iter().all(|n| self.label_index(n).is_some()) {
                    let mut head = [0; 4];
                    for (k, n) in names.iter().enumerate() {
                        head[k] = self.resolve(n)?;
                    }
                    let c7 = self.resolve("c7")?;
                    self.warnings.push(Warning::Approximation {
                        what: "head_top (vertex) estimated from the four head markers".to_string(),
                    });
                    Ok(self.push(name, Def::Vertex { head, c7 }))
                } else {
                    Err(self.missing(
                        name,
                        "give a head_top marker, the four head markers (l/r_head_front, l/r_head_back), or pick another head row in [model] endpoints",
                    ))
                }
            }
            _ => Err(self.missing(name, &Self::map_hint(name))),
        }
    }

    fn hip_jc(&mut self, name: &str, side: Side) -> Result<PointId, LandmarkError> {
        if self.config.hip == HipMethod::Given {
            return Err(self.missing(
                name,
                "[model] hip = \"given\" needs hip JC columns; or choose a regression",
            ));
        }
        if self.config.hip == HipMethod::Dumas2007 {
            return self.dumas_hip_jc(name, side);
        }
        let l_asis = self.resolve("l_asis")?;
        let r_asis = self.resolve("r_asis")?;
        let mid_psis = self.resolve("mid_psis")?;
        if self.config.hip != HipMethod::Bell1990
            && self.subject.leg_length_m.is_none()
            && self.label_index(&side.name("ankle_med")).is_none()
            && self.label_index(&side.name("ankle_lat")).is_none()
        {
            return Err(LandmarkError::NeedsMeasurement {
                landmark: name.to_string(),
                what: "the leg length (ASIS to medial malleolus)".to_string(),
                hint: "give leg_length_m in the subject, or use hip = \"bell-1990\"".to_string(),
            });
        }
        Ok(self.push(
            name,
            Def::Hip {
                l_asis,
                r_asis,
                mid_psis,
                right: side == Side::Right,
            },
        ))
    }

    fn epicondyle_jc(
        &mut self,
        name: &str,
        side: Side,
        joint: Joint,
    ) -> Result<PointId, LandmarkError> {
        let (lat, med, width, width_key) = match joint {
            Joint::Knee => (
                "knee_lat",
                "knee_med",
                self.subject.knee_width_m,
                "knee_width_m",
            ),
            Joint::Ankle => (
                "ankle_lat",
                "ankle_med",
                self.subject.ankle_width_m,
                "ankle_width_m",
            ),
            Joint::Elbow => (
                "elbow_lat",
                "elbow_med",
                self.subject.elbow_width_m,
                "elbow_width_m",
            ),
        };
        let lat_name = side.name(lat);
        let med_name = side.name(med);
        let has = |r: &Self, n: &str| {
            r.label_index(n).is_some() || r.config.virtual_landmarks.contains_key(n)
        };
        if has(self, &lat_name) && has(self, &med_name) {
            let a = self.resolve(&lat_name)?;
            let b = self.resolve(&med_name)?;
            return Ok(self.push(name, Def::Midpoint(a, b)));
        }
        if joint == Joint::Elbow && !self.arm_has_markers(side) {
            if let Some(id) = self.hanging(name, side, "elbow_jc")? {
                return Ok(id);
            }
        }
        if !has(self, &lat_name) {
            return Err(self.missing(&lat_name, &format!("map it in [landmarks] or define it in [virtual]; the {name} needs it (with {med_name}, or with {width_key} in the subject)")));
        }
        let Some(width) = width else {
            return Err(LandmarkError::NeedsMeasurement {
                landmark: name.to_string(),
                what: format!("`{med_name}` or the joint width"),
                hint: format!(
                    "map {med_name}, or give {width_key} (and marker_radius_m) in the subject"
                ),
            });
        };
        let offset_m = width / 2.0 + self.subject.marker_radius_m.unwrap_or(0.0);
        let lateral = self.resolve(&lat_name)?;
        let (axis_from, toward_stem) = match joint {
            Joint::Knee => (self.resolve(&side.name("hip_jc"))?, "asis"),
            Joint::Ankle => (self.resolve(&side.name("knee_jc"))?, "asis"),
            Joint::Elbow => (self.resolve(&side.name("shoulder_jc"))?, "acromion"),
        };
        let toward_from = self.resolve(&side.name(toward_stem))?;
        let toward_to = self.resolve(&other(side).name(toward_stem))?;
        self.warnings.push(Warning::Approximation {
            what: format!("{name} placed {offset_m:.3} m medial to {lat_name} ({width_key}/2 + marker radius)"),
        });
        Ok(self.push(
            name,
            Def::Medial {
                lateral,
                axis_from,
                axis_to: lateral,
                toward_from,
                toward_to,
                offset_m,
            },
        ))
    }

    /// The medial malleolus when only the lateral one is marked: the ankle width plus two
    /// marker radii medial to the lateral marker, so that the malleolus midpoint is the ankle JC
    /// of [`Resolver::epicondyle_jc`] (docs/DESIGN.md 5; common practice, no source).
    fn medial_malleolus(&mut self, name: &str, side: Side) -> Result<PointId, LandmarkError> {
        let lat_name = side.name("ankle_lat");
        if !self.is_available(&lat_name) {
            return Err(self.missing(name, &Self::map_hint(name)));
        }
        let Some(width) = self.subject.ankle_width_m else {
            return Err(LandmarkError::NeedsMeasurement {
                landmark: name.to_string(),
                what: format!("a marker, or `{lat_name}` and the ankle width"),
                hint: format!(
                    "map {name}, or give ankle_width_m (and marker_radius_m) in the subject"
                ),
            });
        };
        let offset_m = width + 2.0 * self.subject.marker_radius_m.unwrap_or(0.0);
        let lateral = self.resolve(&lat_name)?;
        let axis_from = self.resolve(&side.name("knee_jc"))?;
        let toward_from = self.resolve(&side.name("asis"))?;
        let toward_to = self.resolve(&other(side).name("asis"))?;
        self.warnings.push(Warning::Approximation {
            what: format!("{name} placed {offset_m:.3} m medial to {lat_name} (ankle_width_m + 2 marker radii)"),
        });
        Ok(self.push(
            name,
            Def::Medial {
                lateral,
                axis_from,
                axis_to: lateral,
                toward_from,
                toward_to,
                offset_m,
            },
        ))
    }

    fn wrist_jc(&mut self, name: &str, side: Side) -> Result<PointId, LandmarkError> {
        let rad = side.name("wrist_rad");
        let uln = side.name("wrist_uln");
        if self.label_index(&rad).is_some() && self.label_index(&uln).is_some() {
            let a = self.resolve(&rad)?;
            let b = self.resolve(&uln)?;
            return Ok(self.push(name, Def::Midpoint(a, b)));
        }
        let single = side.name("wrist");
        if self.label_index(&single).is_some() {
            let w = self.resolve(&single)?;
            self.warnings.push(Warning::Approximation {
                what: format!("{name} taken at the single wrist marker `{single}`"),
            });
            return Ok(self.push(name, Def::Mean(vec![w])));
        }
        if let Some(id) = self.hanging(name, side, "wrist_jc")? {
            return Ok(id);
        }
        Err(self.missing(&rad, &format!("the {name} needs {rad} and {uln}, or one `{single}` marker; or set [model] arms = \"hanging\" for a marker set without arms")))
    }

    fn arm_has_markers(&self, side: Side) -> bool {
        [
            "elbow_lat",
            "elbow_med",
            "wrist_rad",
            "wrist_uln",
            "wrist",
            "hand",
            "finger_tip",
        ]
        .iter()
        .any(|s| self.label_index(&side.name(s)).is_some())
    }

    /// Hanging-arm point `stem` of one side, when `arms = "hanging"` and the arm is unmarked.
    fn hanging(
        &mut self,
        name: &str,
        side: Side,
        stem: &str,
    ) -> Result<Option<PointId>, LandmarkError> {
        if self.config.arms != ArmsMode::Hanging || self.arm_has_markers(side) {
            return Ok(None);
        }
        let [upper, fore, hand_met3, hand_tip, stature] = de_leva_arm_lengths_m(self.subject.sex);
        let scale = self.subject.height_m / stature;
        let distance = match stem {
            "elbow_jc" => upper,
            "wrist_jc" => upper + fore,
            "hand" => upper + fore + hand_met3,
            "finger_tip" => upper + fore + hand_tip,
            _ => return Ok(None),
        } * scale;
        let base = self.resolve(&side.name("shoulder_jc"))?;
        let top = self.resolve("mid_shoulder")?;
        let bottom = self.resolve("mid_hip")?;
        if stem == "elbow_jc" {
            self.warnings.push(Warning::Approximation {
                what: format!("{} arm not marked: hanging below the shoulder along the trunk axis (arms = \"hanging\")", side.word()),
            });
        }
        Ok(Some(self.push(
            name,
            Def::Hanging {
                base,
                top,
                bottom,
                distance_m: distance,
            },
        )))
    }
}

#[derive(Clone, Copy, PartialEq, Eq)]
enum Joint {
    Knee,
    Ankle,
    Elbow,
}

fn other(side: Side) -> Side {
    match side {
        Side::Left => Side::Right,
        Side::Right => Side::Left,
    }
}

/// A label folded for matching: lower case, letters and digits only (`L.KNEE.LAT`, `l-knee-lat`
/// and `l_knee_lat` all fold to `lkneelat`).
pub fn fold_label(label: &str) -> String {
    label
        .chars()
        .filter(|c| c.is_alphanumeric())
        .flat_map(char::to_lowercase)
        .collect()
}

/// Up to `n` labels closest to `target` by edit distance (ties in file order).
pub fn closest_labels(target: &str, labels: &[String], n: usize) -> Vec<String> {
    let mut scored: Vec<(usize, usize, &String)> = labels
        .iter()
        .enumerate()
        .map(|(i, l)| {
            let (t, c) = (target.to_ascii_lowercase(), l.to_ascii_lowercase());
            // A label that contains the name (or is contained in it) is the best guess.
            let d = if c.contains(&t) || t.contains(&c) {
                0
            } else {
                edit_distance(&t, &c)
            };
            (d, i, l)
        })
        .collect();
    scored.sort();
    let limit = target.len().max(3);
    scored
        .into_iter()
        .filter(|(d, _, _)| *d < limit)
        .take(n)
        .map(|(_, _, l)| l.clone())
        .collect()
}

/// Levenshtein distance.
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut cur = vec![i + 1; b.len() + 1];
        for (j, cb) in b.iter().enumerate() {
            cur[j + 1] = (prev[j] + usize::from(ca != *cb))
                .min(prev[j + 1] + 1)
                .min(cur[j] + 1);
        }
        prev = cur;
    }
    prev[b.len()]
}

/// Points the support stage asks for when present (docs/DESIGN.md 7): foot points of both sides and
/// the sacrum reference (PSIS midpoint or sacral marker) for gait events.
pub const FOOT_POINTS: [&str; 13] = [
    "l_heel",
    "l_toe",
    "l_mt1",
    "l_mt2",
    "l_mt5",
    "l_ankle_lat",
    "r_heel",
    "r_toe",
    "r_mt1",
    "r_mt2",
    "r_mt5",
    "r_ankle_lat",
    "mid_psis",
];

#[cfg(test)]
mod tests {
    use super::*;
    use crate::config::RawConfig;
    use approx::assert_abs_diff_eq;

    fn config(toml: &str) -> Config {
        Config::from_raw(&RawConfig::from_toml(toml, "t").unwrap(), "t").unwrap()
    }

    /// A resolver over the labels `a`, `b`, `c` (in this order) to test point definitions alone.
    fn eval(toml: &str, name: &str, markers: &[[f64; 3]]) -> Option<P> {
        let labels: Vec<String> = ["a", "b", "c"].iter().map(|s| s.to_string()).collect();
        let cfg = config(toml);
        let subject = Subject::new(70.0, 1.7, Sex::Male);
        let mut r = Resolver::new(&labels, "t.csv", &cfg, &subject);
        let id = r.resolve(name).unwrap();
        let model = points_only(r, None);
        let frame: Vec<Option<[f64; 3]>> = markers.iter().map(|p| Some(*p)).collect();
        let mut out = Vec::new();
        model.evaluate(&frame, &mut out);
        out[id]
    }

    /// A model of the resolver's points alone (no segments).
    fn points_only(r: Resolver, leg_length_m: Option<f64>) -> BodyModel {
        BodyModel {
            defs: r.defs,
            point_names: r.names,
            segments: Vec::new(),
            body_mass_kg: 70.0,
            leg_length_m,
            marker_radius_m: None,
            foot_width_m: None,
            optional: HashMap::new(),
            markers_used: Vec::new(),
            warnings: Vec::new(),
            hip: HipMethod::Harrington2007,
            height_m: 1.7,
            leg_markers: Vec::new(),
        }
    }

    const ABC: [[f64; 3]; 3] = [[0.0, 0.0, 0.0], [2.0, 0.0, 0.0], [0.0, 1.0, 0.0]];

    #[test]
    fn virtual_mean_along_and_offset() {
        let m = eval(
            "[virtual]\nm = { mean = [\"a\", \"b\", \"c\"] }\n",
            "m",
            &ABC,
        )
        .unwrap();
        assert_abs_diff_eq!(m, P::new(2.0 / 3.0, 1.0 / 3.0, 0.0), epsilon = 1e-12);
        let t = eval(
            "[virtual]\nt = { along = [\"a\", \"b\"], fraction = 1.3 }\n",
            "t",
            &ABC,
        )
        .unwrap();
        assert_abs_diff_eq!(t, P::new(2.6, 0.0, 0.0), epsilon = 1e-12);
        // Frame of (a, b, c): x toward b, z = x cross (c - a) = +z, y = z cross x = +y.
        let o = eval(
            "[virtual]\no = { frame = [\"a\", \"b\", \"c\"], offset_m = [0.1, 0.2, 0.3] }\n",
            "o",
            &ABC,
        )
        .unwrap();
        assert_abs_diff_eq!(o, P::new(0.1, 0.2, 0.3), epsilon = 1e-12);
    }

    #[test]
    fn a_virtual_cycle_is_an_error() {
        let labels: Vec<String> = vec!["a".into()];
        let cfg = config("[virtual]\nx = { mean = [\"y\"] }\ny = { mean = [\"x\"] }\n");
        let subject = Subject::new(70.0, 1.7, Sex::Male);
        let mut r = Resolver::new(&labels, "t.csv", &cfg, &subject);
        let e = r.resolve("x").unwrap_err().to_string();
        assert!(e.contains("x -> y -> x"), "{e}");
    }

    #[test]
    fn a_mapped_label_that_is_absent_is_reported_with_closest_labels() {
        let labels: Vec<String> = vec!["KneeOutL".into(), "KneeOutR".into()];
        let cfg = config("[landmarks]\nl_knee_lat = \"KneeOutLeft\"\n");
        let subject = Subject::new(70.0, 1.7, Sex::Male);
        let mut r = Resolver::new(&labels, "t.csv", &cfg, &subject);
        let e = r.resolve("l_knee_lat").unwrap_err().to_string();
        assert!(
            e.contains("`KneeOutLeft`") && e.contains("closest labels: KneeOutL"),
            "{e}"
        );
    }

    /// Lateral-marker-only knee: the JC lies knee_width/2 + marker radius medially, orthogonal
    /// to the thigh (common practice; docs/reference/methods.md 1.3).
    #[test]
    fn lateral_only_knee_uses_the_joint_width() {
        let labels: Vec<String> = [
            "l_asis",
            "r_asis",
            "l_psis",
            "r_psis",
            "l_knee_lat",
            "l_ankle_med",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect();
        let cfg = config("");
        let mut subject = Subject::new(70.0, 1.7, Sex::Male);
        let mut r = Resolver::new(&labels, "t.csv", &cfg, &subject);
        let e = r.resolve("l_knee_jc").unwrap_err().to_string();
        assert!(e.contains("knee_width_m"), "{e}");
        subject.knee_width_m = Some(0.10);
        subject.marker_radius_m = Some(0.007);
        let mut r = Resolver::new(&labels, "t.csv", &cfg, &subject);
        let id = r.resolve("l_knee_jc").unwrap();
        assert!(r
            .warnings
            .iter()
            .any(|w| w.to_string().contains("medial to l_knee_lat")));
        let model = points_only(r, Some(0.9));
        // Pelvis facing +x, left +y; lateral knee marker below the left hip.
        let frame = [
            Some([0.1, 0.125, 1.0]),
            Some([0.1, -0.125, 1.0]),
            Some([-0.06, 0.045, 1.0]),
            Some([-0.06, -0.045, 1.0]),
            Some([0.0, 0.15, 0.5]),
            Some([0.0, 0.05, 0.07]),
        ];
        let mut out = Vec::new();
        model.evaluate(&frame, &mut out);
        let jc = out[id].unwrap();
        let lateral = P::new(0.0, 0.15, 0.5);
        assert_abs_diff_eq!((jc - lateral).norm(), 0.057, epsilon = 1e-12);
        assert!(jc.y < lateral.y, "medial is toward the body's midline");
    }
}
