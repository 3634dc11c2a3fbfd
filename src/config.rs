//! Configuration and subject: raw TOML (every key optional, unknown keys rejected) becomes one
//! validated [`Config`] and [`Subject`] before any work (docs/DESIGN.md 3.2, 3.3). Everything below
//! takes these types; nothing reads a file or a flag again.

use crate::anthropometry::{SegmentKind, Sex};
use crate::trial::{LengthUnit, MissingFrames, ReadOptions, UpAxis};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::path::Path;

/// A configuration or subject file that cannot be used.
#[derive(Debug, thiserror::Error)]
pub enum ConfigError {
    // `error`, not `source`: the message already holds it, and an error chain printed with
    // `{:#}` would repeat it.
    #[error("cannot read {path}: {error}")]
    Io { path: String, error: std::io::Error },
    #[error("{path}: {message}")]
    Toml { path: String, message: String },
    #[error("{path}: {message}")]
    Invalid { path: String, message: String },
}

/// `[input]`: how to read the trial file.
#[derive(Clone, Debug, Default, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct RawInput {
    pub units: Option<String>,
    pub up_axis: Option<String>,
    pub rate_hz: Option<f64>,
    /// `"error"` (default) or `"gap"`: dropped frames are an error or gaps.
    pub missing_frames: Option<String>,
}

/// `[model]`: table, hip method, arms, endpoint choices.
#[derive(Clone, Debug, Default, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct RawModel {
    pub table: Option<String>,
    pub hip: Option<String>,
    pub arms: Option<String>,
    #[serde(default)]
    pub endpoints: BTreeMap<String, String>,
    /// Also compute the CoM under every table and hip method, and their spread per frame.
    pub spread: Option<bool>,
}

/// A cut-off in Hz or the word `"none"`.
#[derive(Clone, Debug, Deserialize, Serialize, PartialEq)]
#[serde(untagged)]
pub enum RawCutoff {
    Hz(f64),
    Word(String),
}

/// `[filter]`.
#[derive(Clone, Debug, Default, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct RawFilter {
    pub cutoff_hz: Option<RawCutoff>,
    pub max_gap_s: Option<f64>,
}

/// A length in metres or the word `"leg"`.
#[derive(Clone, Debug, Deserialize, Serialize, PartialEq)]
#[serde(untagged)]
pub enum RawLength {
    Metres(f64),
    Word(String),
}

/// `[support]`.
#[derive(Clone, Debug, Default, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct RawSupport {
    pub floor_m: Option<f64>,
    pub contact_height_m: Option<f64>,
    pub contact_speed_m_s: Option<f64>,
    pub min_contact_s: Option<f64>,
    pub min_flight_s: Option<f64>,
    pub xcom_length: Option<RawLength>,
    pub midfoot_band_m: Option<f64>,
    pub gait_events: Option<String>,
    /// `"segmental"` (default) or `"fused"` (the plate-fused CoM for XCoM and margins).
    pub com: Option<String>,
}

/// `[[plate]]`: a force plate's corners in the lab (metres, in order around the plate).
#[derive(Clone, Debug, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct RawPlate {
    pub name: String,
    pub corners_m: Vec<[f64; 3]>,
}

/// `[[load]]`: an external mass.
#[derive(Clone, Debug, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct RawLoad {
    pub name: String,
    pub mass_kg: f64,
    pub markers: Option<Vec<String>>,
    pub position_of: Option<String>,
}

/// `[[group]]`: a named subsystem of segments.
#[derive(Clone, Debug, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct RawGroup {
    pub name: String,
    pub segments: Vec<String>,
}

/// One `[virtual]` entry: exactly one of `mean`, `along` (+ `fraction`), `frame` (+ `offset_m`).
#[derive(Clone, Debug, Default, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct RawVirtual {
    pub mean: Option<Vec<String>>,
    pub along: Option<Vec<String>>,
    pub fraction: Option<f64>,
    pub frame: Option<Vec<String>>,
    pub offset_m: Option<Vec<f64>>,
}

/// The configuration file as written.
#[derive(Clone, Debug, Default, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct RawConfig {
    #[serde(default)]
    pub input: RawInput,
    #[serde(default)]
    pub landmarks: BTreeMap<String, String>,
    #[serde(default)]
    pub model: RawModel,
    #[serde(default)]
    pub filter: RawFilter,
    #[serde(default)]
    pub support: RawSupport,
    #[serde(default)]
    pub load: Vec<RawLoad>,
    #[serde(default)]
    pub group: Vec<RawGroup>,
    #[serde(default, rename = "virtual")]
    pub virtual_landmarks: BTreeMap<String, RawVirtual>,
    #[serde(default, skip_serializing_if = "RawTrialSection::is_empty")]
    pub trial: RawTrialSection,
    #[serde(default)]
    pub plate: Vec<RawPlate>,
}

/// `[trial]`: what the trial is.
#[derive(Clone, Debug, Default, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct RawTrialSection {
    /// `walk`, `jump`, `squat`, `stand` or `auto` (recognised from the data, the default).
    pub movement: Option<String>,
}

impl RawTrialSection {
    fn is_empty(&self) -> bool {
        self.movement.is_none()
    }
}

impl RawConfig {
    /// Reads a configuration file.
    pub fn from_path(path: &Path) -> Result<RawConfig, ConfigError> {
        let text = read(path)?;
        RawConfig::from_toml(&text, &path.display().to_string())
    }

    /// Parses configuration text; `origin` names it in errors.
    pub fn from_toml(text: &str, origin: &str) -> Result<RawConfig, ConfigError> {
        toml::from_str(text).map_err(|e| ConfigError::Toml {
            path: origin.to_string(),
            message: one_line(&e.to_string()),
        })
    }
}

/// Reads a configuration or subject file: a regular file of at most
/// [`crate::textio::MAX_CONFIG_BYTES`] (a FIFO or a device such as `/dev/zero` is refused).
fn read(path: &Path) -> Result<String, ConfigError> {
    crate::textio::read_regular_text(path, crate::textio::MAX_CONFIG_BYTES).map_err(|source| {
        ConfigError::Io {
            path: path.display().to_string(),
            error: source,
        }
    })
}

/// Collapses a multi-line parser message (toml shows the offending line) into one short line.
fn one_line(message: &str) -> String {
    crate::textio::one_line(message, crate::textio::MESSAGE_CHARS)
}

/// Input quoted for a message: short, on one line ([`crate::textio::quote`]).
fn q(text: &str) -> String {
    crate::textio::quote(text)
}

/// Hip joint center method (docs/reference/methods.md 1.2).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum HipMethod {
    /// Harrington et al. 2007, full equations (default).
    Harrington2007,
    /// Bell, Pedersen & Brand 1990, from mid-ASIS.
    Bell1990,
    /// Hara et al. 2016, leg length only.
    Hara2016,
    /// Dumas, Cheze & Verriest 2007 (J Biomech 40:543, Table 1): shares of the ASIS width in the
    /// pelvis frame, by sex (`crate::body::frames`).
    Dumas2007,
    /// Hip JCs given as `l_hip_jc` / `r_hip_jc` columns.
    Given,
}

impl HipMethod {
    pub fn name(self) -> &'static str {
        match self {
            HipMethod::Harrington2007 => "harrington-2007",
            HipMethod::Bell1990 => "bell-1990",
            HipMethod::Hara2016 => "hara-2016",
            HipMethod::Dumas2007 => "dumas-2007",
            HipMethod::Given => "given",
        }
    }
}

/// What to do when a trial has no arm markers.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum ArmsMode {
    /// Arms must be marked; frames without them are invalid (default).
    Required,
    /// Unmarked arms hang below the shoulder JC along the trunk axis (docs/DESIGN.md 5).
    Hanging,
}

/// A `[virtual]` landmark definition.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum VirtualDef {
    /// Mean of the listed landmarks.
    Mean(Vec<String>),
    /// `from + fraction * (to - from)`.
    Along {
        from: String,
        to: String,
        fraction: f64,
    },
    /// A fixed offset in the frame of three landmarks: origin `o`, x toward `a`, z normal to the
    /// plane (o, a, b) (right-handed: z = x cross (b - o)), y = z cross x.
    Offset {
        frame: [String; 3],
        offset_m: [f64; 3],
    },
}

/// Where a load's position comes from.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum LoadPosition {
    /// Centroid of these marker labels (bar-end markers).
    Markers(Vec<String>),
    /// A landmark or joint center of the body model.
    Landmark(String),
}

/// An external mass added to the system CoM.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Load {
    pub name: String,
    pub mass_kg: f64,
    pub position: LoadPosition,
}

/// A named subsystem: a set of segments (`l_thigh`, `trunk`, or a kind for both sides: `thigh`).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Group {
    pub name: String,
    pub segments: Vec<String>,
}

/// Contact and margin settings (docs/DESIGN.md 7).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SupportConfig {
    /// Floor level in metres along the up axis; `None` = auto (2nd percentile of foot markers).
    pub floor_m: Option<f64>,
    pub contact_height_m: Option<f64>,
    pub contact_speed_m_s: Option<f64>,
    pub min_contact_s: Option<f64>,
    pub min_flight_s: Option<f64>,
    /// Mid-foot band half-width for lifts.
    pub midfoot_band_m: Option<f64>,
    /// How heel strikes and toe-offs are found in walking trials.
    pub gait_events: GaitEventMethod,
    /// Which CoM the XCoM and margins use.
    pub com: ComSource,
}

/// The CoM the XCoM and margins use (`[support] com`).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum ComSource {
    /// The segmental CoM (`"segmental"`, the default).
    #[default]
    Segmental,
    /// The plate-fused CoM where the ground reaction is complete, the segmental elsewhere
    /// (`"fused"`).
    Fused,
}

/// Gait-event method of walking trials (`[support] gait_events`).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum GaitEventMethod {
    /// Zeni et al. 2008 coordinate method alone (`"zeni"`).
    Zeni,
    /// Zeni et al. 2008 pre-detection refined by the speed thresholds of Bonci et al. 2022
    /// (`"zeni-bonci"`, the default).
    #[default]
    ZeniBonci,
}

/// Pendulum length for the XCoM (Hof 2005).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum XcomLength {
    /// The subject's leg length, or measured from the markers (ASIS to medial malleolus).
    Leg,
    /// A given length in metres.
    Metres(f64),
}

/// The validated configuration of a run.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Config {
    pub units: LengthUnit,
    pub up_axis: UpAxis,
    /// Whether `[input] units` and `[input] up_axis` were written in the configuration (`false`:
    /// the defaults, mm and +z, are assumed and the declaration check says what it detects).
    #[serde(skip)]
    pub declared: Declared,
    pub rate_hz: Option<f64>,
    /// Dropped frames: an error (default) or gaps.
    #[serde(skip_serializing_if = "MissingFrames::is_error")]
    pub missing_frames: MissingFrames,
    /// Landmark name -> label in the file; landmarks not listed map to themselves.
    pub landmarks: BTreeMap<String, String>,
    /// `de-leva-1996`, `dempster-winter` or a table path.
    pub table: String,
    pub hip: HipMethod,
    pub arms: ArmsMode,
    /// Segment -> chosen endpoint row key (`trunk` -> `c7-mid_hip`, or `parts`).
    pub endpoints: BTreeMap<SegmentKind, String>,
    /// Low-pass cut-off; `None` = no filtering.
    pub cutoff_hz: Option<f64>,
    pub max_gap_s: f64,
    pub support: SupportConfig,
    pub xcom_length: XcomLength,
    pub loads: Vec<Load>,
    pub groups: Vec<Group>,
    pub virtual_landmarks: BTreeMap<String, VirtualDef>,
    /// `[trial] movement`; left out of the configuration hash when `auto`.
    #[serde(skip_serializing_if = "crate::movement::MovementChoice::is_auto")]
    pub movement: crate::movement::MovementChoice,
    /// Compute the spread of the CoM between models (`[model] spread`, `--spread`).
    pub spread: bool,
    /// Declared force plates (`[[plate]]`).
    pub plates: Vec<crate::plates::PlateSetup>,
    /// The trial's plate recording (`--plates`, the manifest's `plates` column).
    pub plates_file: Option<std::path::PathBuf>,
}

/// Which reading declarations the configuration wrote (the others are defaults).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Declared {
    pub units: bool,
    pub up_axis: bool,
}

/// Default low-pass cut-off for markers (docs/reference/methods.md 4: about 6 Hz in walking).
pub const DEFAULT_CUTOFF_HZ: f64 = 6.0;
/// Lowest low-pass cut-off accepted. Common practice, no source: marker cut-offs for human
/// movement are a few hertz (Winter's residual analysis gives about 6 Hz in walking), and the
/// slowest whole-body movements analysed (quiet-standing sway) have their power below about
/// 1 Hz, so a cut-off under 0.5 Hz removes the movement itself. It also keeps the zero-lag
/// filter's end padding (three periods of the cut-off) within a few seconds: at 0.001 Hz the
/// filtered CoM of a 6 s walk lands metres outside the walkway.
pub const MIN_CUTOFF_HZ: f64 = 0.5;
/// Default longest gap the spline bridges (docs/reference/methods.md 4: about 0.1 s).
pub const DEFAULT_MAX_GAP_S: f64 = 0.10;

impl Default for Config {
    fn default() -> Self {
        // The empty raw configuration always validates.
        Config::from_raw(&RawConfig::default(), "defaults").unwrap_or_else(|_| unreachable!())
    }
}

impl Config {
    /// Validates a raw configuration; `origin` names the file in errors.
    pub fn from_raw(raw: &RawConfig, origin: &str) -> Result<Config, ConfigError> {
        let invalid = |message: String| ConfigError::Invalid {
            path: origin.to_string(),
            message,
        };
        let units = match raw.input.units.as_deref().map(str::trim) {
            None | Some("mm") => LengthUnit::Millimetres,
            Some("m") => LengthUnit::Metres,
            Some(other) => {
                return Err(invalid(format!(
                    "[input] units = {}; use \"mm\" or \"m\"",
                    q(other)
                )))
            }
        };
        let up_axis = match raw.input.up_axis.as_deref() {
            None => UpAxis::Z,
            Some(text) => UpAxis::parse(text).ok_or_else(|| {
                invalid(format!(
                    "[input] up_axis = {}; use one of z, y, x, -z, -y, -x",
                    q(text)
                ))
            })?,
        };
        if let Some(rate) = raw.input.rate_hz {
            positive(rate, "[input] rate_hz").map_err(invalid)?;
        }
        let missing_frames = match raw.input.missing_frames.as_deref().map(str::trim) {
            None | Some("error") => MissingFrames::Error,
            Some("gap") => MissingFrames::Gap,
            Some(other) => {
                return Err(invalid(format!(
                    "[input] missing_frames = `{other}`; use \"error\" or \"gap\""
                )))
            }
        };
        let hip = match raw.model.hip.as_deref() {
            None | Some("harrington-2007") => HipMethod::Harrington2007,
            Some("bell-1990") => HipMethod::Bell1990,
            Some("hara-2016") => HipMethod::Hara2016,
            Some("dumas-2007") => HipMethod::Dumas2007,
            Some("given") => HipMethod::Given,
            Some(other) => {
                return Err(invalid(format!(
                "[model] hip = {}; use harrington-2007, bell-1990, hara-2016, dumas-2007 or given",
                q(other)
            )))
            }
        };
        let arms = match raw.model.arms.as_deref() {
            None | Some("required") => ArmsMode::Required,
            Some("hanging") => ArmsMode::Hanging,
            Some(other) => {
                return Err(invalid(format!(
                    "[model] arms = {}; use \"required\" or \"hanging\"",
                    q(other)
                )))
            }
        };
        let mut endpoints = BTreeMap::new();
        for (segment, key) in &raw.model.endpoints {
            let kind = SegmentKind::from_name(segment).ok_or_else(|| {
                invalid(format!("[model] endpoints: unknown segment {}", q(segment)))
            })?;
            endpoints.insert(kind, key.clone());
        }
        let cutoff_hz = match &raw.filter.cutoff_hz {
            None => Some(DEFAULT_CUTOFF_HZ),
            Some(RawCutoff::Hz(hz)) => {
                positive(*hz, "[filter] cutoff_hz").map_err(invalid)?;
                if *hz < MIN_CUTOFF_HZ {
                    return Err(invalid(format!(
                        "[filter] cutoff_hz = {hz} is below {MIN_CUTOFF_HZ} Hz, which would smooth away movement itself; give a cut-off of a few Hz (6 for walking), or \"none\" to turn the filter off"
                    )));
                }
                Some(*hz)
            }
            Some(RawCutoff::Word(w)) if w == "none" => None,
            Some(RawCutoff::Word(w)) => {
                return Err(invalid(format!(
                    "[filter] cutoff_hz = {}; give Hz or \"none\"",
                    q(w)
                )))
            }
        };
        let max_gap_s = raw.filter.max_gap_s.unwrap_or(DEFAULT_MAX_GAP_S);
        if !(max_gap_s >= 0.0 && max_gap_s.is_finite()) {
            return Err(invalid(format!(
                "[filter] max_gap_s = {max_gap_s}; give seconds >= 0"
            )));
        }
        let s = &raw.support;
        for (value, key) in [
            (s.contact_height_m, "contact_height_m"),
            (s.contact_speed_m_s, "contact_speed_m_s"),
            (s.midfoot_band_m, "midfoot_band_m"),
        ] {
            if let Some(v) = value {
                positive(v, &format!("[support] {key}")).map_err(invalid)?;
            }
        }
        for (value, key) in [
            (s.min_contact_s, "min_contact_s"),
            (s.min_flight_s, "min_flight_s"),
        ] {
            if let Some(v) = value {
                if !(v >= 0.0 && v.is_finite()) {
                    return Err(invalid(format!("[support] {key} = {v}; give seconds >= 0")));
                }
            }
        }
        if let Some(f) = s.floor_m {
            if !f.is_finite() {
                return Err(invalid(
                    "[support] floor_m must be a number of metres".to_string(),
                ));
            }
        }
        let xcom_length = match &s.xcom_length {
            None => XcomLength::Leg,
            Some(RawLength::Word(w)) if w == "leg" => XcomLength::Leg,
            Some(RawLength::Metres(m)) => {
                positive(*m, "[support] xcom_length").map_err(invalid)?;
                XcomLength::Metres(*m)
            }
            Some(RawLength::Word(w)) => {
                return Err(invalid(format!(
                    "[support] xcom_length = {}; give \"leg\" or metres",
                    q(w)
                )))
            }
        };
        let gait_events = match s.gait_events.as_deref() {
            None | Some("zeni-bonci") => GaitEventMethod::ZeniBonci,
            Some("zeni") => GaitEventMethod::Zeni,
            Some(w) => {
                return Err(invalid(format!(
                    "[support] gait_events = {}; give \"zeni-bonci\" or \"zeni\"",
                    q(w)
                )))
            }
        };
        let mut loads = Vec::new();
        for l in &raw.load {
            if !(l.mass_kg >= 0.0 && l.mass_kg.is_finite()) {
                return Err(invalid(format!(
                    "[[load]] {}: mass_kg = {}; give kg >= 0",
                    q(&l.name),
                    l.mass_kg
                )));
            }
            let position = match (&l.markers, &l.position_of) {
                (Some(m), None) if !m.is_empty() => LoadPosition::Markers(m.clone()),
                (None, Some(p)) => LoadPosition::Landmark(p.clone()),
                _ => {
                    return Err(invalid(format!(
                        "[[load]] {}: give either markers = [..] or position_of = \"landmark\"",
                        q(&l.name)
                    )))
                }
            };
            loads.push(Load {
                name: l.name.clone(),
                mass_kg: l.mass_kg,
                position,
            });
        }
        let mut groups = Vec::new();
        for g in &raw.group {
            if g.segments.is_empty() || !is_identifier(&g.name) {
                return Err(invalid(format!(
                    "[[group]] {}: give a name of letters, digits and _ and at least one segment",
                    q(&g.name)
                )));
            }
            groups.push(Group {
                name: g.name.clone(),
                segments: g.segments.clone(),
            });
        }
        let mut virtual_landmarks = BTreeMap::new();
        for (name, v) in &raw.virtual_landmarks {
            let def = match (&v.mean, &v.along, &v.frame) {
                (Some(m), None, None) if !m.is_empty() && v.fraction.is_none() && v.offset_m.is_none() => {
                    VirtualDef::Mean(m.clone())
                }
                (None, Some(a), None) if a.len() == 2 && v.offset_m.is_none() => {
                    let fraction = v.fraction.ok_or_else(|| {
                        invalid(format!("[virtual] {}: `along` needs `fraction`", q(name)))
                    })?;
                    VirtualDef::Along { from: a[0].clone(), to: a[1].clone(), fraction }
                }
                (None, None, Some(f)) if f.len() == 3 && v.fraction.is_none() => {
                    let o = v.offset_m.as_deref().unwrap_or(&[]);
                    if o.len() != 3 {
                        return Err(invalid(format!("[virtual] {}: `frame` needs `offset_m = [x, y, z]`", q(name))));
                    }
                    VirtualDef::Offset {
                        frame: [f[0].clone(), f[1].clone(), f[2].clone()],
                        offset_m: [o[0], o[1], o[2]],
                    }
                }
                _ => {
                    return Err(invalid(format!(
                        "[virtual] {}: give one of mean = [..], along = [a, b] with fraction, or frame = [o, a, b] with offset_m = [x, y, z]",
                        q(name)
                    )))
                }
            };
            virtual_landmarks.insert(name.clone(), def);
        }
        let movement = match raw.trial.movement.as_deref() {
            None => crate::movement::MovementChoice::Auto,
            Some(m) => crate::movement::MovementChoice::parse(m).ok_or_else(|| {
                invalid(format!(
                    "[trial] movement = `{m}`; give \"walk\", \"jump\", \"squat\", \"stand\" or \"auto\""
                ))
            })?,
        };
        Ok(Config {
            units,
            up_axis,
            declared: Declared {
                units: raw.input.units.is_some(),
                up_axis: raw.input.up_axis.is_some(),
            },
            rate_hz: raw.input.rate_hz,
            missing_frames,
            landmarks: raw.landmarks.clone(),
            table: raw
                .model
                .table
                .clone()
                .unwrap_or_else(|| "de-leva-1996".to_string()),
            hip,
            arms,
            endpoints,
            cutoff_hz,
            max_gap_s,
            support: SupportConfig {
                floor_m: s.floor_m,
                contact_height_m: s.contact_height_m,
                contact_speed_m_s: s.contact_speed_m_s,
                min_contact_s: s.min_contact_s,
                min_flight_s: s.min_flight_s,
                midfoot_band_m: s.midfoot_band_m,
                gait_events,
                com: match s.com.as_deref() {
                    None | Some("segmental") => ComSource::Segmental,
                    Some("fused") => ComSource::Fused,
                    Some(other) => {
                        return Err(invalid(format!(
                            "[support] com = `{other}`; use \"segmental\" or \"fused\""
                        )))
                    }
                },
            },
            xcom_length,
            loads,
            groups,
            virtual_landmarks,
            movement,
            spread: raw.model.spread.unwrap_or(false),
            plates: crate::plates::read::plate_setups(&raw.plate).map_err(invalid)?,
            plates_file: None,
        })
    }

    /// How to read trial files under this configuration.
    pub fn read_options(&self) -> ReadOptions {
        ReadOptions {
            units: self.units,
            up_axis: self.up_axis,
            rate_hz: self.rate_hz,
            missing_frames: self.missing_frames,
        }
    }
}

fn positive(value: f64, key: &str) -> Result<(), String> {
    if value > 0.0 && value.is_finite() {
        Ok(())
    } else {
        Err(format!("{key} = {value}; give a positive number"))
    }
}

fn is_identifier(s: &str) -> bool {
    !s.is_empty() && s.chars().all(|c| c.is_ascii_alphanumeric() || c == '_')
}

/// The subject: body mass, stature, sex, and optional lab measurements (docs/DESIGN.md 3.2).
#[derive(Clone, Debug, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct Subject {
    /// Optional identifier (batch manifests fill it from the `subject` column).
    #[serde(default)]
    pub name: Option<String>,
    pub mass_kg: f64,
    pub height_m: f64,
    pub sex: Sex,
    /// ASIS to medial malleolus.
    pub leg_length_m: Option<f64>,
    pub asis_width_m: Option<f64>,
    pub marker_radius_m: Option<f64>,
    /// Foot width (breadth across the metatarsal heads), for the sole outline of the BoS.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub foot_width_m: Option<f64>,
    pub knee_width_m: Option<f64>,
    pub ankle_width_m: Option<f64>,
    pub elbow_width_m: Option<f64>,
    pub wrist_width_m: Option<f64>,
    /// `[geometry]`: measured segment shapes for `[model] table = "geometric"`, by segment name
    /// (`thigh` for both sides, or `l_thigh` / `r_thigh`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub geometry: Option<BTreeMap<String, SegmentGeometry>>,
}

/// One segment's measured shape: its length along the table's endpoints and the perimeter and
/// width at levels along it (see anthropometry/README.md, geometric model).
#[derive(Clone, Debug, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct SegmentGeometry {
    /// Origin-to-other endpoint length, metres.
    pub length_m: f64,
    /// Levels from the origin endpoint (`at` = 0) to the other (`at` = 1).
    pub levels: Vec<GeometryLevel>,
}

/// A cross-section of a segment: perimeter and width (metres) at a share `at` of its length.
#[derive(Clone, Debug, Deserialize, Serialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct GeometryLevel {
    pub at: f64,
    pub perimeter_m: f64,
    pub width_m: f64,
}

impl Subject {
    /// A subject from the three required figures.
    pub fn new(mass_kg: f64, height_m: f64, sex: Sex) -> Subject {
        Subject {
            name: None,
            mass_kg,
            height_m,
            sex,
            leg_length_m: None,
            asis_width_m: None,
            marker_radius_m: None,
            foot_width_m: None,
            knee_width_m: None,
            ankle_width_m: None,
            elbow_width_m: None,
            wrist_width_m: None,
            geometry: None,
        }
    }

    /// Reads and validates a subject TOML file.
    pub fn from_path(path: &Path) -> Result<Subject, ConfigError> {
        let text = read(path)?;
        Subject::from_toml(&text, &path.display().to_string())
    }

    /// Parses and validates subject TOML text; `origin` names it in errors.
    pub fn from_toml(text: &str, origin: &str) -> Result<Subject, ConfigError> {
        let subject: Subject = toml::from_str(text).map_err(|e| ConfigError::Toml {
            path: origin.to_string(),
            message: one_line(&e.to_string()),
        })?;
        subject.validate(origin)
    }

    /// Checks the figures are physical (mass 1-500 kg, stature 0.3-2.8 m, lengths positive).
    pub fn validate(self, origin: &str) -> Result<Subject, ConfigError> {
        let invalid = |message: String| ConfigError::Invalid {
            path: origin.to_string(),
            message,
        };
        if !(self.mass_kg > 1.0 && self.mass_kg < 500.0) {
            return Err(invalid(format!(
                "mass_kg = {}; give the body mass in kg (1-500)",
                self.mass_kg
            )));
        }
        if !(self.height_m > 0.3 && self.height_m < 2.8) {
            return Err(invalid(format!(
                "height_m = {}; give the stature in metres (0.3-2.8), e.g. 1.75",
                self.height_m
            )));
        }
        for (value, key) in [
            (self.leg_length_m, "leg_length_m"),
            (self.asis_width_m, "asis_width_m"),
            (self.marker_radius_m, "marker_radius_m"),
            (self.foot_width_m, "foot_width_m"),
            (self.knee_width_m, "knee_width_m"),
            (self.ankle_width_m, "ankle_width_m"),
            (self.elbow_width_m, "elbow_width_m"),
            (self.wrist_width_m, "wrist_width_m"),
        ] {
            if let Some(v) = value {
                if !(v > 0.0 && v < 3.0) {
                    return Err(invalid(format!(
                        "{key} = {v}; give metres (e.g. 0.10), not millimetres"
                    )));
                }
            }
        }
        Ok(self)
    }
}

/// The default configuration with comments, for `gravline config --print-default`.
pub const DEFAULT_CONFIG_TOML: &str = r#"# gravline configuration. Every key is optional; the values below are the defaults.
# Unknown keys are rejected, so a typo is an error, not a silent default.

[input]
units = "mm"          # "mm" or "m": unit of the coordinates in the trial file
up_axis = "z"         # vertical axis of the lab: "z", "y", "x", "-z", "-y" or "-x"
# rate_hz = 100.0     # required when the file has a `frame` column instead of `time`
# missing_frames = "error"  # "gap": frames dropped from the file are read as gaps

[landmarks]
# landmark = "label in the file"; landmarks not listed are looked up under their own name.
# l_asis = "LeftASIS"

[model]
table = "de-leva-1996"   # "de-leva-1996", "dempster-winter", "dumas-2007", "geometric" or a table CSV path
hip = "harrington-2007"  # "harrington-2007", "bell-1990", "hara-2016", "dumas-2007" or "given"
arms = "required"        # "required" or "hanging" (arms placed below the shoulders when unmarked)
# endpoints = { trunk = "c7-mid_hip", head = "head_top-mid_gonion" }  # alternative table rows
spread = false           # also the CoM under every table and hip method, and their spread per frame

[filter]
cutoff_hz = 6.0       # zero-lag Butterworth cut-off in Hz, or "none"
max_gap_s = 0.10      # longest interior gap bridged by the cubic spline

[support]
# floor_m = 0.0           # floor level along the up axis in metres (default: auto from the feet)
# contact_height_m = 0.03 # foot markers this close to the floor ...
# contact_speed_m_s = 0.5 # ... and this slow are in contact
# min_contact_s = 0.05    # shorter contacts are removed
# min_flight_s = 0.05     # shorter flights are removed
xcom_length = "leg"       # pendulum length for the XCoM: "leg" or metres
# midfoot_band_m = 0.05   # lifts: half-width of the mid-foot band
gait_events = "zeni-bonci" # walking: "zeni-bonci" (Zeni 2008 refined by Bonci 2022) or "zeni"
com = "segmental"         # CoM of the XCoM and margins: "segmental" or "fused" (with --plates)

[trial]
movement = "auto"         # "auto" (recognised from the data), "walk", "jump", "squat" or "stand"

# [[load]]                 # an external mass (barbell, dumbbell)
# name = "bar"
# mass_kg = 100.0
# markers = ["bar_left", "bar_right"]   # its CoM at the centroid of these markers
# position_of = "r_wrist_jc"            # ... or at a landmark / joint center

# [[group]]                # a subsystem with its own CoM columns
# name = "legs"
# segments = ["l_thigh", "l_shank", "l_foot", "r_thigh", "r_shank", "r_foot"]

# [[plate]]                # a force plate of --plates: its corners in the lab, metres, in order
# name = "plate1"
# corners_m = [[0.6, 0.2, 0.0], [0.0, 0.2, 0.0], [0.0, -0.2, 0.0], [0.6, -0.2, 0.0]]

[virtual]
# l_toe = { along = ["l_heel", "l_mt2"], fraction = 1.3 }
# r_knee_jc = { mean = ["r_knee_lat", "r_knee_med"] }
# l_heel_floor = { frame = ["l_heel", "l_mt2", "l_mt5"], offset_m = [0.0, 0.0, -0.02] }
"#;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_printed_default_parses_to_the_default() {
        let raw = RawConfig::from_toml(DEFAULT_CONFIG_TOML, "default").unwrap();
        // The printed file writes the reading declarations; the empty configuration does not.
        let default = Config {
            declared: Declared {
                units: true,
                up_axis: true,
            },
            ..Config::default()
        };
        assert_eq!(Config::from_raw(&raw, "default").unwrap(), default);
    }

    #[test]
    fn unknown_keys_are_rejected_with_the_key() {
        let e = RawConfig::from_toml("[filter]\ncutof_hz = 6\n", "c.toml")
            .unwrap_err()
            .to_string();
        assert!(e.starts_with("c.toml:") && e.contains("cutof_hz"), "{e}");
        assert!(!e.contains('\n'));
    }

    #[test]
    fn gait_events_take_one_of_two_methods() {
        let parse = |t: &str| Config::from_raw(&RawConfig::from_toml(t, "c").unwrap(), "c");
        let zeni = parse("[support]\ngait_events = \"zeni\"\n").unwrap();
        assert_eq!(zeni.support.gait_events, GaitEventMethod::Zeni);
        assert_eq!(
            parse("").unwrap().support.gait_events,
            GaitEventMethod::ZeniBonci
        );
        let e = parse("[support]\ngait_events = \"velocity\"\n")
            .unwrap_err()
            .to_string();
        assert!(e.contains("gait_events") && e.contains("\"zeni\""), "{e}");
    }

    #[test]
    fn virtual_landmarks_validate() {
        let raw = RawConfig::from_toml(
            "[virtual]\nl_toe = { along = [\"l_heel\", \"l_mt2\"], fraction = 1.3 }\nm = { mean = [\"a\", \"b\"] }\n",
            "c",
        )
        .unwrap();
        let c = Config::from_raw(&raw, "c").unwrap();
        assert_eq!(
            c.virtual_landmarks["l_toe"],
            VirtualDef::Along {
                from: "l_heel".into(),
                to: "l_mt2".into(),
                fraction: 1.3
            }
        );
        let raw = RawConfig::from_toml("[virtual]\nx = { along = [\"a\", \"b\"] }\n", "c").unwrap();
        assert!(Config::from_raw(&raw, "c")
            .unwrap_err()
            .to_string()
            .contains("fraction"));
    }

    #[test]
    fn cutoff_none_turns_filtering_off() {
        let raw = RawConfig::from_toml("[filter]\ncutoff_hz = \"none\"\n", "c").unwrap();
        assert_eq!(Config::from_raw(&raw, "c").unwrap().cutoff_hz, None);
    }

    #[test]
    fn a_subject_in_millimetres_is_caught() {
        let mut s = Subject::new(70.0, 1.75, Sex::Male);
        s.knee_width_m = Some(105.0);
        let e = s.validate("s.toml").unwrap_err().to_string();
        assert!(
            e.contains("knee_width_m") && e.contains("not millimetres"),
            "{e}"
        );
    }
}
