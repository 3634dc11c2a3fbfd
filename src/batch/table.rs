//! The batch summary table: one row per trial, in manifest order, with the figures of each
//! trial's `summary.json` flattened into columns whose names carry their units ([`columns`]),
//! written as CSV (csv crate) and Parquet (polars), read back from either for `merge`; and the
//! group statistics of `groups.csv` ([`groups`]): mean and sample standard deviation (n - 1 in
//! the denominator) of [`GROUP_FIGURES`] per subject, per condition and per subject in each
//! condition.
//!
//! A row is always built from the text of the trial's `summary.json` (also for a trial just
//! run), so a row taken over by `--resume` is identical to the row of a fresh run.
//!
//! CSV numbers are written in Rust's shortest round-trip notation, so parsing them gives back the
//! same `f64` bits and the CSV and Parquet tables hold the same values. Missing values are empty
//! cells (CSV) or nulls (Parquet).

use serde::Deserialize;
use std::collections::HashMap;
use std::io::Write;
use std::path::Path;

/// Type of a column.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Kind {
    Int,
    Float,
    Text,
}

/// One cell; `None` is a missing value.
#[derive(Clone, Debug, PartialEq)]
pub enum Cell {
    Int(Option<i64>),
    Float(Option<f64>),
    Text(Option<String>),
}

impl Cell {
    pub fn kind(&self) -> Kind {
        match self {
            Cell::Int(_) => Kind::Int,
            Cell::Float(_) => Kind::Float,
            Cell::Text(_) => Kind::Text,
        }
    }

    fn text(s: Option<&str>) -> Cell {
        Cell::Text(s.filter(|s| !s.is_empty()).map(str::to_string))
    }

    /// The CSV cell: empty when missing.
    pub fn to_csv(&self) -> String {
        match self {
            Cell::Int(v) => v.map_or(String::new(), |v| v.to_string()),
            Cell::Float(v) => v.map_or(String::new(), |v| v.to_string()),
            Cell::Text(v) => v.clone().unwrap_or_default(),
        }
    }

    fn parse(kind: Kind, text: &str) -> Result<Cell, String> {
        let t = text.trim();
        if t.is_empty() {
            return Ok(match kind {
                Kind::Int => Cell::Int(None),
                Kind::Float => Cell::Float(None),
                Kind::Text => Cell::Text(None),
            });
        }
        match kind {
            Kind::Int => t
                .parse()
                .map(|v| Cell::Int(Some(v)))
                .map_err(|_| format!("{} is not an integer", crate::textio::quote(t))),
            Kind::Float => t
                .parse()
                .map(|v| Cell::Float(Some(v)))
                .map_err(|_| format!("{} is not a number", crate::textio::quote(t))),
            Kind::Text => Ok(Cell::Text(Some(text.to_string()))),
        }
    }

    /// The value of a float column.
    pub fn as_f64(&self) -> Option<f64> {
        match self {
            Cell::Float(v) => *v,
            Cell::Int(v) => v.map(|v| v as f64),
            Cell::Text(_) => None,
        }
    }

    /// The value of an integer column.
    pub fn as_i64(&self) -> Option<i64> {
        match self {
            Cell::Int(v) => *v,
            _ => None,
        }
    }

    /// The value of a text column.
    pub fn as_str(&self) -> Option<&str> {
        match self {
            Cell::Text(v) => v.as_deref(),
            _ => None,
        }
    }
}

/// What `summary.json` holds, as far as the table needs it (unknown fields are skipped).
/// Every number is optional: JSON has no NaN, so a NaN figure is stored as `null`.
#[derive(Clone, Debug, Deserialize)]
pub struct StoredSummary {
    pub frames: Option<i64>,
    pub duration_s: Option<f64>,
    pub rate_hz: Option<f64>,
    pub valid_fraction: Option<f64>,
    pub subject: StoredSubject,
    pub com: StoredCom,
    pub support: StoredSupport,
    #[serde(default)]
    pub steps: Vec<StoredSteps>,
    #[serde(default)]
    pub warnings: Vec<String>,
    pub provenance: StoredProvenance,
    /// Lift figures (trials with loads).
    #[serde(default)]
    pub lift: Option<StoredLift>,
    /// The movement (`walk`, `jump`, `squat`, `stand`) and its figures.
    #[serde(default)]
    pub movement: Option<String>,
    #[serde(default)]
    pub gait: Option<StoredGait>,
    #[serde(default)]
    pub jump: Option<StoredJump>,
    #[serde(default)]
    pub reps: Vec<StoredRep>,
    #[serde(default)]
    pub sway: Option<StoredSway>,
}

/// `summary.json` → `gait`.
#[derive(Clone, Debug, Deserialize)]
pub struct StoredGait {
    pub walking_speed_m_s: Option<f64>,
    pub cadence_steps_per_min: Option<f64>,
    pub stride_time_s: Option<f64>,
    pub step_time_s: Option<f64>,
    pub double_support_fraction: Option<f64>,
    pub step_length_m: Option<f64>,
    pub step_length_sd_m: Option<f64>,
    pub step_width_m: Option<f64>,
    pub step_width_sd_m: Option<f64>,
    pub mos_ap_heel_strike_m: Option<f64>,
    pub min_mos_ml_single_stance_m: Option<f64>,
}

/// `summary.json` → `jump`.
#[derive(Clone, Debug, Deserialize)]
pub struct StoredJump {
    pub flight_time_s: Option<f64>,
    pub takeoff_velocity_m_s: Option<f64>,
    pub height_from_takeoff_velocity_m: Option<f64>,
    pub height_from_flight_time_m: Option<f64>,
    pub countermovement_depth_m: Option<f64>,
}

/// `summary.json` → `reps[]`.
#[derive(Clone, Debug, Deserialize)]
pub struct StoredRep {
    pub depth_m: Option<f64>,
    pub duration_s: Option<f64>,
    pub peak_ascent_speed_m_s: Option<f64>,
}

/// `summary.json` → `sway`.
#[derive(Clone, Debug, Deserialize)]
pub struct StoredSway {
    pub path_length_m: Option<f64>,
    pub rms_ap_m: Option<f64>,
    pub rms_ml_m: Option<f64>,
    pub ellipse_area_95_m2: Option<f64>,
    pub mean_speed_m_s: Option<f64>,
}

/// `summary.json` → `lift`.
#[derive(Clone, Debug, Deserialize)]
pub struct StoredLift {
    pub max_abs_com_midfoot_ap_m: Option<f64>,
    pub mean_abs_com_midfoot_ap_m: Option<f64>,
    pub time_outside_band_s: Option<f64>,
    #[serde(default)]
    pub reps: Vec<serde_json::Value>,
}

/// `summary.json` → `subject`.
#[derive(Clone, Debug, Deserialize)]
pub struct StoredSubject {
    pub mass_kg: Option<f64>,
    pub height_m: Option<f64>,
    pub sex: Option<String>,
}

/// `summary.json` → `com`.
#[derive(Clone, Debug, Deserialize)]
pub struct StoredCom {
    pub mean_height_m: Option<f64>,
    pub mean_height_of_stature: Option<f64>,
    pub min_m: Option<[Option<f64>; 3]>,
    pub max_m: Option<[Option<f64>; 3]>,
    pub path_length_m: Option<f64>,
    pub vertical_excursion_m: Option<f64>,
    pub ml_excursion_m: Option<f64>,
    pub mean_speed_m_s: Option<f64>,
    pub max_speed_m_s: Option<f64>,
}

/// `summary.json` → `support`.
#[derive(Clone, Debug, Deserialize)]
pub struct StoredSupport {
    pub floor_m: Option<f64>,
    pub progression: Option<[Option<f64>; 2]>,
    pub min_bos_margin_m: Option<f64>,
    pub mean_bos_margin_m: Option<f64>,
    pub min_mos_m: Option<f64>,
    pub mean_mos_m: Option<f64>,
    pub time_with_bos_s: Option<f64>,
    pub time_outside_bos_s: Option<f64>,
}

/// `summary.json` → `steps[]`: the per-side means.
#[derive(Clone, Debug, Deserialize)]
pub struct StoredSteps {
    pub side: String,
    pub steps: Option<i64>,
    pub step_length_m: Option<f64>,
    pub step_width_m: Option<f64>,
    pub mos_ap_heel_strike_m: Option<f64>,
    #[serde(default)]
    pub mos_ml_heel_strike_m: Option<f64>,
    pub min_mos_ml_single_stance_m: Option<f64>,
    pub com_vertical_excursion_m: Option<f64>,
}

/// `summary.json` → `provenance`.
#[derive(Clone, Debug, Deserialize)]
pub struct StoredProvenance {
    pub gravline_version: Option<String>,
    pub input_sha256: Option<String>,
    pub config_sha256: Option<String>,
    pub model: StoredModel,
}

/// `summary.json` → `provenance.model`.
#[derive(Clone, Debug, Deserialize)]
pub struct StoredModel {
    pub table: Option<String>,
    pub body_mass_kg: Option<f64>,
    pub system_mass_kg: Option<f64>,
    pub cutoff_hz: Option<f64>,
    pub max_gap_s: Option<f64>,
    pub leg_length_m: Option<f64>,
    pub xcom_length_m: Option<f64>,
    pub omega0_rad_s: Option<f64>,
}

impl StoredSummary {
    /// Parses the text of a `summary.json`.
    pub fn from_json(text: &str) -> Result<StoredSummary, serde_json::Error> {
        serde_json::from_str(text)
    }

    fn side(&self, side: &str) -> Option<&StoredSteps> {
        self.steps.iter().find(|s| s.side == side)
    }

    /// Mean of a figure over the repetitions.
    fn reps_mean(&self, get: impl Fn(&StoredRep) -> Option<f64>) -> Option<f64> {
        let v: Vec<f64> = self.reps.iter().filter_map(get).collect();
        mean_sd(&v).0
    }
}

/// The manifest fields of a row.
#[derive(Clone, Debug, PartialEq)]
pub struct RowKey<'a> {
    pub row: usize,
    pub id: &'a str,
    pub trial: &'a str,
    pub subject: Option<&'a str>,
    pub condition: Option<&'a str>,
}

/// `status` of a trial that ran.
pub const STATUS_OK: &str = "ok";
/// `status` of a trial that failed.
pub const STATUS_ERROR: &str = "error";

/// The cells of one row with their column names; `s` is `None` for a failed trial (then every
/// figure is missing). This function is the schema: [`columns`] is its names and kinds.
fn named_cells(
    key: &RowKey,
    error: Option<&str>,
    s: Option<&StoredSummary>,
) -> Vec<(&'static str, Cell)> {
    let f = |get: &dyn Fn(&StoredSummary) -> Option<f64>| Cell::Float(s.and_then(get));
    let i = |get: &dyn Fn(&StoredSummary) -> Option<i64>| Cell::Int(s.and_then(get));
    let t = |get: &dyn Fn(&StoredSummary) -> Option<&str>| Cell::text(s.and_then(get));
    let status = if error.is_some() {
        STATUS_ERROR
    } else {
        STATUS_OK
    };
    let mut cells = vec![
        ("row", Cell::Int(Some(key.row as i64))),
        ("id", Cell::text(Some(key.id))),
        ("trial", Cell::text(Some(key.trial))),
        ("subject", Cell::text(key.subject)),
        ("condition", Cell::text(key.condition)),
        ("status", Cell::text(Some(status))),
        ("error", Cell::text(error)),
        (
            "suspect",
            i(&|s| {
                let implausible = s.warnings.iter().any(|w| w.starts_with("plausibility: "));
                Some(i64::from(implausible))
            }),
        ),
        ("frames", i(&|s| s.frames)),
        ("duration_s", f(&|s| s.duration_s)),
        ("rate_hz", f(&|s| s.rate_hz)),
        ("valid_fraction", f(&|s| s.valid_fraction)),
        ("sex", t(&|s| s.subject.sex.as_deref())),
        ("mass_kg", f(&|s| s.subject.mass_kg)),
        ("height_m", f(&|s| s.subject.height_m)),
        ("com_mean_height_m", f(&|s| s.com.mean_height_m)),
        (
            "com_mean_height_of_stature",
            f(&|s| s.com.mean_height_of_stature),
        ),
        ("com_min_x_m", f(&|s| s.com.min_m?[0])),
        ("com_min_y_m", f(&|s| s.com.min_m?[1])),
        ("com_min_z_m", f(&|s| s.com.min_m?[2])),
        ("com_max_x_m", f(&|s| s.com.max_m?[0])),
        ("com_max_y_m", f(&|s| s.com.max_m?[1])),
        ("com_max_z_m", f(&|s| s.com.max_m?[2])),
        ("com_path_length_m", f(&|s| s.com.path_length_m)),
        (
            "com_vertical_excursion_m",
            f(&|s| s.com.vertical_excursion_m),
        ),
        ("com_ml_excursion_m", f(&|s| s.com.ml_excursion_m)),
        ("com_mean_speed_m_s", f(&|s| s.com.mean_speed_m_s)),
        ("com_max_speed_m_s", f(&|s| s.com.max_speed_m_s)),
        ("floor_m", f(&|s| s.support.floor_m)),
        ("progression_x", f(&|s| s.support.progression?[0])),
        ("progression_y", f(&|s| s.support.progression?[1])),
        ("min_bos_margin_m", f(&|s| s.support.min_bos_margin_m)),
        ("mean_bos_margin_m", f(&|s| s.support.mean_bos_margin_m)),
        ("min_mos_m", f(&|s| s.support.min_mos_m)),
        ("mean_mos_m", f(&|s| s.support.mean_mos_m)),
        ("time_with_bos_s", f(&|s| s.support.time_with_bos_s)),
        ("time_outside_bos_s", f(&|s| s.support.time_outside_bos_s)),
    ];
    for (side, names) in [("left", LEFT_STEP_COLUMNS), ("right", RIGHT_STEP_COLUMNS)] {
        let [steps, length, width, ap, ml_hs, ml, vertical] = names;
        cells.extend([
            (steps, i(&|s| s.side(side)?.steps)),
            (length, f(&|s| s.side(side)?.step_length_m)),
            (width, f(&|s| s.side(side)?.step_width_m)),
            (ap, f(&|s| s.side(side)?.mos_ap_heel_strike_m)),
            (ml_hs, f(&|s| s.side(side)?.mos_ml_heel_strike_m)),
            (ml, f(&|s| s.side(side)?.min_mos_ml_single_stance_m)),
            (vertical, f(&|s| s.side(side)?.com_vertical_excursion_m)),
        ]);
    }
    cells.extend([
        (
            "lift_reps",
            i(&|s| Some(s.lift.as_ref()?.reps.len() as i64)),
        ),
        (
            "lift_max_abs_com_midfoot_ap_m",
            f(&|s| s.lift.as_ref()?.max_abs_com_midfoot_ap_m),
        ),
        (
            "lift_mean_abs_com_midfoot_ap_m",
            f(&|s| s.lift.as_ref()?.mean_abs_com_midfoot_ap_m),
        ),
        (
            "lift_time_outside_band_s",
            f(&|s| s.lift.as_ref()?.time_outside_band_s),
        ),
        ("movement", t(&|s| s.movement.as_deref())),
        (
            "gait_walking_speed_m_s",
            f(&|s| s.gait.as_ref()?.walking_speed_m_s),
        ),
        (
            "gait_cadence_steps_per_min",
            f(&|s| s.gait.as_ref()?.cadence_steps_per_min),
        ),
        ("gait_stride_time_s", f(&|s| s.gait.as_ref()?.stride_time_s)),
        ("gait_step_time_s", f(&|s| s.gait.as_ref()?.step_time_s)),
        (
            "gait_double_support_fraction",
            f(&|s| s.gait.as_ref()?.double_support_fraction),
        ),
        ("gait_step_length_m", f(&|s| s.gait.as_ref()?.step_length_m)),
        (
            "gait_step_length_sd_m",
            f(&|s| s.gait.as_ref()?.step_length_sd_m),
        ),
        ("gait_step_width_m", f(&|s| s.gait.as_ref()?.step_width_m)),
        (
            "gait_step_width_sd_m",
            f(&|s| s.gait.as_ref()?.step_width_sd_m),
        ),
        (
            "gait_mos_ap_heel_strike_m",
            f(&|s| s.gait.as_ref()?.mos_ap_heel_strike_m),
        ),
        (
            "gait_min_mos_ml_single_stance_m",
            f(&|s| s.gait.as_ref()?.min_mos_ml_single_stance_m),
        ),
        ("jump_flight_time_s", f(&|s| s.jump.as_ref()?.flight_time_s)),
        (
            "jump_takeoff_velocity_m_s",
            f(&|s| s.jump.as_ref()?.takeoff_velocity_m_s),
        ),
        (
            "jump_height_from_takeoff_velocity_m",
            f(&|s| s.jump.as_ref()?.height_from_takeoff_velocity_m),
        ),
        (
            "jump_height_from_flight_time_m",
            f(&|s| s.jump.as_ref()?.height_from_flight_time_m),
        ),
        (
            "jump_countermovement_depth_m",
            f(&|s| s.jump.as_ref()?.countermovement_depth_m),
        ),
        (
            "reps",
            i(&|s| (s.movement.as_deref() == Some("squat")).then_some(s.reps.len() as i64)),
        ),
        ("reps_depth_m", f(&|s| s.reps_mean(|r| r.depth_m))),
        ("reps_duration_s", f(&|s| s.reps_mean(|r| r.duration_s))),
        (
            "reps_peak_ascent_speed_m_s",
            f(&|s| s.reps_mean(|r| r.peak_ascent_speed_m_s)),
        ),
        ("sway_path_length_m", f(&|s| s.sway.as_ref()?.path_length_m)),
        ("sway_rms_ap_m", f(&|s| s.sway.as_ref()?.rms_ap_m)),
        ("sway_rms_ml_m", f(&|s| s.sway.as_ref()?.rms_ml_m)),
        (
            "sway_ellipse_area_95_m2",
            f(&|s| s.sway.as_ref()?.ellipse_area_95_m2),
        ),
        (
            "sway_mean_speed_m_s",
            f(&|s| s.sway.as_ref()?.mean_speed_m_s),
        ),
        ("table", t(&|s| s.provenance.model.table.as_deref())),
        ("body_mass_kg", f(&|s| s.provenance.model.body_mass_kg)),
        ("system_mass_kg", f(&|s| s.provenance.model.system_mass_kg)),
        ("cutoff_hz", f(&|s| s.provenance.model.cutoff_hz)),
        ("max_gap_s", f(&|s| s.provenance.model.max_gap_s)),
        ("leg_length_m", f(&|s| s.provenance.model.leg_length_m)),
        ("xcom_length_m", f(&|s| s.provenance.model.xcom_length_m)),
        ("omega0_rad_s", f(&|s| s.provenance.model.omega0_rad_s)),
        ("warnings", i(&|s| Some(s.warnings.len() as i64))),
        (
            "gravline_version",
            t(&|s| s.provenance.gravline_version.as_deref()),
        ),
        ("input_sha256", t(&|s| s.provenance.input_sha256.as_deref())),
        (
            "config_sha256",
            t(&|s| s.provenance.config_sha256.as_deref()),
        ),
    ]);
    cells
}

const LEFT_STEP_COLUMNS: [&str; 7] = [
    "left_steps",
    "left_step_length_m",
    "left_step_width_m",
    "left_mos_ap_heel_strike_m",
    "left_mos_ml_heel_strike_m",
    "left_min_mos_ml_single_stance_m",
    "left_com_vertical_excursion_m",
];
const RIGHT_STEP_COLUMNS: [&str; 7] = [
    "right_steps",
    "right_step_length_m",
    "right_step_width_m",
    "right_mos_ap_heel_strike_m",
    "right_mos_ml_heel_strike_m",
    "right_min_mos_ml_single_stance_m",
    "right_com_vertical_excursion_m",
];

/// The columns of `summary.csv` / `summary.parquet`, in order, with their kinds.
pub fn columns() -> &'static [(&'static str, Kind)] {
    static COLUMNS: std::sync::OnceLock<Vec<(&'static str, Kind)>> = std::sync::OnceLock::new();
    COLUMNS.get_or_init(|| {
        let key = RowKey {
            row: 0,
            id: "",
            trial: "",
            subject: None,
            condition: None,
        };
        named_cells(&key, None, None)
            .into_iter()
            .map(|(n, c)| (n, c.kind()))
            .collect()
    })
}

/// One row of the summary table, cells in [`columns`] order.
#[derive(Clone, Debug, PartialEq)]
pub struct Row(pub Vec<Cell>);

impl Row {
    /// The row of a trial that ran, from its `summary.json`.
    pub fn ok(key: &RowKey, summary: &StoredSummary) -> Row {
        Row(named_cells(key, None, Some(summary))
            .into_iter()
            .map(|(_, c)| c)
            .collect())
    }

    /// The row of a trial that failed, with its one-line error.
    pub fn error(key: &RowKey, message: &str) -> Row {
        let message = crate::textio::one_line(message, crate::textio::MESSAGE_CHARS);
        Row(named_cells(key, Some(&message), None)
            .into_iter()
            .map(|(_, c)| c)
            .collect())
    }

    /// The cell of a column, by name.
    pub fn get(&self, column: &str) -> Option<&Cell> {
        let i = columns().iter().position(|(n, _)| *n == column)?;
        self.0.get(i)
    }

    /// Manifest row number.
    pub fn row(&self) -> Option<i64> {
        self.0.first().and_then(Cell::as_i64)
    }

    pub fn is_ok(&self) -> bool {
        self.get("status").and_then(Cell::as_str) == Some(STATUS_OK)
    }

    /// Whether the trial showed a figure no person produces (`suspect` = 1): left out of the
    /// group statistics.
    pub fn is_suspect(&self) -> bool {
        self.get("suspect").and_then(Cell::as_i64) == Some(1)
    }
}

/// A summary table that cannot be read or written.
#[derive(Debug, thiserror::Error)]
pub enum TableError {
    // `error`, not `source`: the message already holds it, and an error chain printed with
    // `{:#}` would repeat it.
    #[error("cannot write {path}: {error}")]
    Write { path: String, error: std::io::Error },
    #[error("cannot read {path}: {error}")]
    Read { path: String, error: std::io::Error },
    #[error("{path}: {message}")]
    Format { path: String, message: String },
}

fn format_error(path: &Path, message: impl Into<String>) -> TableError {
    TableError::Format {
        path: path.display().to_string(),
        message: message.into(),
    }
}

/// Writes the table as CSV (header, then one line per row).
pub fn write_csv(rows: &[Row], w: &mut dyn Write) -> std::io::Result<()> {
    let mut out = csv::Writer::from_writer(w);
    out.write_record(columns().iter().map(|(n, _)| *n))?;
    for row in rows {
        out.write_record(row.0.iter().map(Cell::to_csv))?;
    }
    out.flush()
}

/// Reads a summary table written by [`write_csv`]; columns are matched by name.
pub fn read_csv(path: &Path) -> Result<Vec<Row>, TableError> {
    let bytes =
        crate::textio::read_regular(path, crate::textio::MAX_SUMMARY_BYTES).map_err(|error| {
            TableError::Read {
                path: path.display().to_string(),
                error,
            }
        })?;
    let mut reader = csv::Reader::from_reader(bytes.as_slice());
    let short = |e: csv::Error| {
        format_error(
            path,
            crate::textio::one_line(&e.to_string(), crate::textio::MESSAGE_CHARS),
        )
    };
    let headers: Vec<String> = reader
        .headers()
        .map_err(short)?
        .iter()
        .map(str::to_string)
        .collect();
    let index = column_index(path, &headers)?;
    let cols = columns();
    let mut rows = Vec::new();
    for record in reader.records() {
        let record = record.map_err(short)?;
        let line = record.position().map_or(0, |p| p.line());
        let mut cells = Vec::with_capacity(cols.len());
        for ((name, kind), &i) in cols.iter().zip(&index) {
            let text = record.get(i).unwrap_or_default();
            let cell = Cell::parse(*kind, text)
                .map_err(|m| format_error(path, format!("line {line}: column `{name}`: {m}")))?;
            cells.push(cell);
        }
        rows.push(Row(cells));
    }
    Ok(rows)
}

/// Position of every schema column among a file's columns; an error names the first missing one.
fn column_index(path: &Path, headers: &[String]) -> Result<Vec<usize>, TableError> {
    let by_name: HashMap<&str, usize> = headers
        .iter()
        .enumerate()
        .map(|(i, h)| (h.as_str(), i))
        .collect();
    columns()
        .iter()
        .map(|(name, _)| {
            by_name.get(name).copied().ok_or_else(|| {
                format_error(
                    path,
                    format!(
                        "no column `{name}`: not a gravline batch summary (or of another version)"
                    ),
                )
            })
        })
        .collect()
}

/// Parquet key-value metadata key: the number of rows written.
pub const ROWS_KEY: &str = "gravline.rows";
/// Parquet key-value metadata key: [`rows_sha256`] of the rows written.
pub const ROWS_SHA256_KEY: &str = "gravline.rows_sha256";

/// Parquet key-value metadata key: SHA-256 of the file's bytes before its footer (the magic
/// number, then every page with its header), checked before any page is decoded.
pub const DATA_SHA256_KEY: &str = "gravline.data_sha256";

/// The bytes of a Parquet file before its footer: `PAR1`, the pages, up to the footer whose
/// length the last 8 bytes give (`<length u32 LE>PAR1`). `None` when the file is not framed
/// that way.
pub fn parquet_data_region(bytes: &[u8]) -> Option<&[u8]> {
    let n = bytes.len();
    if n < 12 || &bytes[..4] != b"PAR1" || &bytes[n - 4..] != b"PAR1" {
        return None;
    }
    let footer = u32::from_le_bytes(bytes[n - 8..n - 4].try_into().ok()?) as usize;
    let end = n.checked_sub(8)?.checked_sub(footer)?;
    (end >= 4).then(|| &bytes[..end])
}

/// SHA-256 (lowercase hex) of a table's rows as [`write_csv`] writes them (header included):
/// recorded in a Parquet summary when it is written and checked when it is read, so a
/// corrupted file that still decodes is caught. CSV numbers round-trip exactly, so the digest
/// of the rows read back equals the one written.
pub fn rows_sha256(rows: &[Row]) -> String {
    let mut text = Vec::new();
    // Writing into memory cannot fail.
    let _ = write_csv(rows, &mut text);
    crate::report::sha256_hex(&text)
}

/// Writes the table as Parquet with polars (Int64, Float64 and String columns, nulls where
/// missing), with the row count, [`rows_sha256`] and the SHA-256 of the pages
/// ([`DATA_SHA256_KEY`]) in the file's key-value metadata. The pages do not depend on that
/// metadata, so the file is encoded once to learn their digest and once more with it.
pub fn write_parquet(rows: &[Row], w: &mut dyn Write) -> std::io::Result<()> {
    use polars::prelude::*;
    let io = |e: PolarsError| std::io::Error::other(e.to_string());
    let series: Vec<Column> = columns()
        .iter()
        .enumerate()
        .map(|(k, (name, kind))| {
            let name = PlSmallStr::from_static(name);
            let cell = |r: &Row| r.0.get(k).cloned();
            match kind {
                Kind::Int => {
                    let v: Vec<Option<i64>> = rows
                        .iter()
                        .map(|r| cell(r).and_then(|c| c.as_i64()))
                        .collect();
                    Column::new(name, v)
                }
                Kind::Float => {
                    let v: Vec<Option<f64>> = rows
                        .iter()
                        .map(|r| cell(r).and_then(|c| c.as_f64()))
                        .collect();
                    Column::new(name, v)
                }
                Kind::Text => {
                    let v: Vec<Option<String>> = rows
                        .iter()
                        .map(|r| cell(r).and_then(|c| c.as_str().map(str::to_string)))
                        .collect();
                    Column::new(name, v)
                }
            }
        })
        .collect();
    let mut df = DataFrame::new(rows.len(), series).map_err(io)?;
    let rows_digest = rows_sha256(rows);
    let mut encode = |data_digest: String| -> std::io::Result<Vec<u8>> {
        let metadata = KeyValueMetadata::from_static(vec![
            (ROWS_KEY.to_string(), rows.len().to_string()),
            (ROWS_SHA256_KEY.to_string(), rows_digest.clone()),
            (DATA_SHA256_KEY.to_string(), data_digest),
        ]);
        let mut bytes = Vec::new();
        ParquetWriter::new(&mut bytes)
            .with_key_value_metadata(Some(metadata))
            .finish(&mut df)
            .map_err(io)?;
        Ok(bytes)
    };
    let data_digest = |bytes: &[u8]| {
        parquet_data_region(bytes)
            .map(crate::report::sha256_hex)
            .ok_or_else(|| std::io::Error::other("the Parquet writer gave an unframed file"))
    };
    let first = encode(String::new())?;
    let digest = data_digest(&first)?;
    let bytes = encode(digest.clone())?;
    if data_digest(&bytes)? != digest {
        return Err(std::io::Error::other(
            "the Parquet writer encoded the same pages differently twice",
        ));
    }
    w.write_all(&bytes)
}

/// Reads a summary table written by [`write_parquet`], checking it on the way: a regular file
/// of at most [`crate::textio::MAX_SUMMARY_BYTES`], the row count and [`rows_sha256`] recorded
/// in its metadata, the schema. A corrupted file is an error naming it; a panic of the Parquet
/// library on malformed bytes is caught and becomes such an error too.
pub fn read_parquet(path: &Path) -> Result<Vec<Row>, TableError> {
    let bytes =
        crate::textio::read_regular(path, crate::textio::MAX_SUMMARY_BYTES).map_err(|error| {
            TableError::Read {
                path: path.display().to_string(),
                error,
            }
        })?;
    match quietly(|| decode_parquet(path, &bytes)) {
        Ok(result) => result,
        Err(_) => Err(format_error(
            path,
            "corrupted Parquet file (the reader failed on its bytes); write the shard again",
        )),
    }
}

/// Runs `f`, turning a panic into `Err` without printing it (the panic hook is silenced for
/// the call; calls are serialized, as the hook is global).
fn quietly<T>(f: impl FnOnce() -> T) -> std::thread::Result<T> {
    static LOCK: std::sync::Mutex<()> = std::sync::Mutex::new(());
    let _guard = LOCK.lock().unwrap_or_else(|e| e.into_inner());
    let hook = std::panic::take_hook();
    std::panic::set_hook(Box::new(|_| {}));
    let result = std::panic::catch_unwind(std::panic::AssertUnwindSafe(f));
    std::panic::set_hook(hook);
    result
}

fn decode_parquet(path: &Path, bytes: &[u8]) -> Result<Vec<Row>, TableError> {
    use polars::prelude::*;
    let corrupt = |what: String| {
        format_error(
            path,
            format!("corrupted or not a gravline summary ({what}); write the shard again"),
        )
    };
    let mut reader = ParquetReader::new(std::io::Cursor::new(bytes));
    let metadata = reader
        .get_metadata()
        .map_err(|e| corrupt(crate::textio::one_line(&e.to_string(), 200)))?
        .clone();
    let value = |key: &str| {
        metadata
            .key_value_metadata()
            .as_ref()
            .and_then(|kv| kv.iter().find(|k| k.key == key))
            .and_then(|k| k.value.clone())
    };
    let (Some(count), Some(digest), Some(data_digest)) = (
        value(ROWS_KEY),
        value(ROWS_SHA256_KEY),
        value(DATA_SHA256_KEY),
    ) else {
        return Err(corrupt(format!(
            "no `{ROWS_KEY}`, `{ROWS_SHA256_KEY}` and `{DATA_SHA256_KEY}` in its metadata"
        )));
    };
    // The pages are checked before they are decoded: a corrupted count in a page header would
    // otherwise size an allocation.
    let data = parquet_data_region(bytes).ok_or_else(|| corrupt("no Parquet framing".into()))?;
    if crate::report::sha256_hex(data) != data_digest {
        return Err(corrupt(
            "its pages do not match the checksum recorded when it was written".into(),
        ));
    }
    let count: usize = count
        .parse()
        .map_err(|_| corrupt(format!("`{ROWS_KEY}` is {}", crate::textio::quote(&count))))?;
    // Each row holds at least its 8-byte row number: more rows than bytes cannot be true, and
    // would size allocations by a count the file does not back.
    if metadata.num_rows != count || count > bytes.len() {
        return Err(corrupt(format!(
            "{} rows in its footer, {count} recorded",
            metadata.num_rows
        )));
    }
    let df = reader
        .finish()
        .map_err(|e| corrupt(crate::textio::one_line(&e.to_string(), 200)))?;
    if df.height() != count {
        return Err(corrupt(format!(
            "{} rows read, {count} recorded",
            df.height()
        )));
    }
    let n = df.height();
    let cols = columns();
    let mut table: Vec<Vec<Cell>> = (0..n).map(|_| Vec::with_capacity(cols.len())).collect();
    for (name, kind) in cols {
        let column = df.column(name).map_err(|_| {
            format_error(
                path,
                format!("no column `{name}`: not a gravline batch summary (or of another version)"),
            )
        })?;
        let wrong = |e: PolarsError| format_error(path, format!("column `{name}`: {e}"));
        let series = column.as_materialized_series();
        match kind {
            Kind::Int => {
                for (row, v) in table.iter_mut().zip(series.i64().map_err(wrong)?.iter()) {
                    row.push(Cell::Int(v));
                }
            }
            Kind::Float => {
                for (row, v) in table.iter_mut().zip(series.f64().map_err(wrong)?.iter()) {
                    row.push(Cell::Float(v));
                }
            }
            Kind::Text => {
                for (row, v) in table.iter_mut().zip(series.str().map_err(wrong)?.iter()) {
                    row.push(Cell::text(v));
                }
            }
        }
    }
    let rows: Vec<Row> = table.into_iter().map(Row).collect();
    if rows.iter().any(|r| r.0.len() != cols.len()) {
        return Err(corrupt("columns of different lengths".into()));
    }
    if rows_sha256(&rows) != digest {
        return Err(corrupt(
            "its rows do not match the checksum recorded when it was written".into(),
        ));
    }
    Ok(rows)
}

/// Reads a summary table, Parquet or CSV by the file's extension.
pub fn read_table(path: &Path) -> Result<Vec<Row>, TableError> {
    let ext = path
        .extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase());
    match ext.as_deref() {
        Some("parquet") => read_parquet(path),
        Some("csv") => read_csv(path),
        _ => Err(format_error(path, "give a .parquet or .csv batch summary")),
    }
}

/// The figures `groups.csv` summarises, in its order.
pub const GROUP_FIGURES: [&str; 43] = [
    "valid_fraction",
    "com_mean_height_m",
    "com_mean_height_of_stature",
    "com_path_length_m",
    "com_mean_speed_m_s",
    "com_max_speed_m_s",
    "com_vertical_excursion_m",
    "com_ml_excursion_m",
    "min_bos_margin_m",
    "mean_bos_margin_m",
    "min_mos_m",
    "mean_mos_m",
    "time_outside_bos_s",
    "left_step_length_m",
    "right_step_length_m",
    "left_step_width_m",
    "right_step_width_m",
    "left_mos_ap_heel_strike_m",
    "right_mos_ap_heel_strike_m",
    "left_min_mos_ml_single_stance_m",
    "right_min_mos_ml_single_stance_m",
    "gait_walking_speed_m_s",
    "gait_cadence_steps_per_min",
    "gait_stride_time_s",
    "gait_step_time_s",
    "gait_double_support_fraction",
    "gait_step_length_m",
    "gait_step_width_m",
    "gait_mos_ap_heel_strike_m",
    "gait_min_mos_ml_single_stance_m",
    "jump_flight_time_s",
    "jump_takeoff_velocity_m_s",
    "jump_height_from_takeoff_velocity_m",
    "jump_height_from_flight_time_m",
    "jump_countermovement_depth_m",
    "reps_depth_m",
    "reps_duration_s",
    "reps_peak_ascent_speed_m_s",
    "sway_path_length_m",
    "sway_rms_ap_m",
    "sway_rms_ml_m",
    "sway_ellipse_area_95_m2",
    "sway_mean_speed_m_s",
];

/// One line of `groups.csv`.
#[derive(Clone, Debug, PartialEq)]
pub struct GroupStat {
    /// `subject`, `condition` or `subject_condition`.
    pub by: &'static str,
    pub group: String,
    pub figure: &'static str,
    /// Trials of the group with a value of this figure.
    pub n: usize,
    pub mean: Option<f64>,
    /// Sample standard deviation (n - 1); missing for n < 2.
    pub sd: Option<f64>,
}

/// `by` of the groups of one subject in one condition (`group` = `subject / condition`).
pub const SUBJECT_X_CONDITION: &str = "subject_condition";

/// Mean and sample SD of [`GROUP_FIGURES`] over the ok rows (not suspect) of each subject, then of each
/// condition, then of each subject in each condition; groups in order of first appearance in
/// the table, rows without a subject (or condition) left out of that grouping.
pub fn groups(rows: &[Row]) -> Vec<GroupStat> {
    let mut out = Vec::new();
    let text = |row: &Row, column: &str| row.get(column).and_then(Cell::as_str).map(str::to_string);
    for by in ["subject", "condition", SUBJECT_X_CONDITION] {
        let mut order: Vec<String> = Vec::new();
        let mut members: HashMap<String, Vec<&Row>> = HashMap::new();
        for row in rows.iter().filter(|r| r.is_ok() && !r.is_suspect()) {
            let key = if by == SUBJECT_X_CONDITION {
                text(row, "subject")
                    .zip(text(row, "condition"))
                    .map(|(s, c)| format!("{s} / {c}"))
            } else {
                text(row, by)
            };
            let Some(g) = key.as_deref() else {
                continue;
            };
            if !members.contains_key(g) {
                order.push(g.to_string());
            }
            members.entry(g.to_string()).or_default().push(row);
        }
        for g in order {
            let group_rows = members.get(&g).map_or(&[][..], Vec::as_slice);
            for figure in GROUP_FIGURES {
                let values: Vec<f64> = group_rows
                    .iter()
                    .filter_map(|r| r.get(figure).and_then(Cell::as_f64))
                    .filter(|v| v.is_finite())
                    .collect();
                let (mean, sd) = mean_sd(&values);
                out.push(GroupStat {
                    by,
                    group: g.clone(),
                    figure,
                    n: values.len(),
                    mean,
                    sd,
                });
            }
        }
    }
    out
}

/// Mean and sample standard deviation (two passes; n - 1 in the denominator).
pub fn mean_sd(values: &[f64]) -> (Option<f64>, Option<f64>) {
    let n = values.len();
    if n == 0 {
        return (None, None);
    }
    let mean = values.iter().sum::<f64>() / n as f64;
    let sd = (n >= 2)
        .then(|| (values.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1) as f64).sqrt());
    (Some(mean), sd)
}

/// Writes `groups.csv`: `by, group, figure, n, mean, sd`.
pub fn write_groups(stats: &[GroupStat], w: &mut dyn Write) -> std::io::Result<()> {
    let mut out = csv::Writer::from_writer(w);
    out.write_record(["by", "group", "figure", "n", "mean", "sd"])?;
    for s in stats {
        let num = |v: Option<f64>| v.map_or(String::new(), |v| v.to_string());
        out.write_record([
            s.by,
            &s.group,
            s.figure,
            &s.n.to_string(),
            &num(s.mean),
            &num(s.sd),
        ])?;
    }
    out.flush()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sample_sd_of_a_known_set() {
        // 2, 4, 4, 4, 5, 5, 7, 9: mean 5, sum of squared deviations 32, sample SD sqrt(32 / 7)
        // (hand computation).
        let (m, s) = mean_sd(&[2.0, 4.0, 4.0, 4.0, 5.0, 5.0, 7.0, 9.0]);
        approx::assert_abs_diff_eq!(m.unwrap(), 5.0, epsilon = 1e-12);
        approx::assert_abs_diff_eq!(s.unwrap(), (32.0f64 / 7.0).sqrt(), epsilon = 1e-12);
        assert_eq!(mean_sd(&[3.0]), (Some(3.0), None));
        assert_eq!(mean_sd(&[]), (None, None));
    }

    #[test]
    fn column_names_are_unique_and_start_with_the_row() {
        let cols = columns();
        let mut names: Vec<&str> = cols.iter().map(|c| c.0).collect();
        for c in [
            "id",
            "trial",
            "subject",
            "condition",
            "status",
            "error",
            "frames",
            "valid_fraction",
            "duration_s",
            "com_mean_height_m",
            "com_path_length_m",
            "com_mean_speed_m_s",
            "com_vertical_excursion_m",
            "com_ml_excursion_m",
            "min_bos_margin_m",
            "time_outside_bos_s",
            "left_step_length_m",
            "input_sha256",
            "config_sha256",
        ] {
            assert!(names.contains(&c), "{c}");
        }
        assert_eq!(names[0], "row");
        names.sort_unstable();
        names.dedup();
        assert_eq!(names.len(), cols.len());
        for f in GROUP_FIGURES {
            assert_eq!(
                cols.iter().find(|c| c.0 == f).map(|c| c.1),
                Some(Kind::Float),
                "{f}"
            );
        }
    }

    #[test]
    fn an_error_row_has_only_its_key_and_message() {
        let key = RowKey {
            row: 3,
            id: "w",
            trial: "w.csv",
            subject: Some("s1"),
            condition: None,
        };
        let r = Row::error(&key, "bad\nthing");
        assert_eq!(r.get("status").and_then(Cell::as_str), Some("error"));
        assert_eq!(r.get("error").and_then(Cell::as_str), Some("bad thing"));
        assert_eq!(r.get("com_mean_height_m"), Some(&Cell::Float(None)));
        assert!(!r.is_ok());
    }

    #[test]
    fn csv_cells_round_trip_exactly() {
        for v in [0.1, 1.0 / 3.0, 1e-300, 12345.678901234567, -0.0] {
            let c = Cell::Float(Some(v));
            let back = Cell::parse(Kind::Float, &c.to_csv()).unwrap();
            assert_eq!(back.as_f64().map(f64::to_bits), Some(v.to_bits()));
        }
    }
}
