//! Stage 1, reading, for C3D files: the open binary standard of the trade for 3-D point and
//! analog data (C3D user guide, c3d.org). A C3D file becomes a [`C3d`] (points, analog channels,
//! force plates, parameters) and, through [`to_trial`], the same [`Trial`] the CSV reader gives
//! (gappy marker tracks in metres, frame times in seconds).
//!
//! # Supported
//! - The header block and the parameter section: groups and parameters in any order, locked
//!   parameters (negative name length), character, byte, integer and float parameters with up to
//!   7 dimensions, strings trimmed ([`params`]).
//! - The three processor types: Intel, DEC (VAX F_floating floats) and MIPS/SGI big-endian
//!   ([`numbers`]).
//! - Integer storage (coordinates times POINT:SCALE) and float storage (POINT:SCALE < 0); the
//!   residual word, negative = invalid sample, an empty sample in gravline ([`data`]).
//! - POINT:RATE, POINT:UNITS (`mm`, `cm`, `m`; coordinates are held in millimetres),
//!   POINT:LABELS with LABELS2, LABELS3, ... past 255 points, POINT:DESCRIPTIONS (and
//!   DESCRIPTIONS2, ...), frame counts past 65 535 (POINT:FRAMES, else
//!   TRIAL:ACTUAL_START_FIELD / ACTUAL_END_FIELD as two 16-bit words, low word first, else
//!   POINT:LONG_FRAMES).
//! - Analog channels: ANALOG:USED, RATE (a whole number of samples per frame), LABELS, UNITS,
//!   DESCRIPTIONS, SCALE, GEN_SCALE, OFFSET (each continued by `2`, `3`, ... past 255 channels),
//!   FORMAT (`SIGNED` / `UNSIGNED` integer samples).
//! - Force plates of TYPE 1 to 4 ([`plates`]): per plate and analog sample the ground reaction
//!   force (N) and its moment about the transducer origin (N m) in the lab frame, and the CoP.
//!   FORCE_PLATFORM:ORIGIN is applied as the specification defines it (transducer origin to
//!   surface center, z negative) and negated when its z is positive ([`OriginSign::Auto`];
//!   [`PlateOptions::origin`] changes it); the scaled channels are read as the reaction on the
//!   body, as c3d.org's samples store them ([`PlateOptions::force_sign`]).
//! - Where the header and the parameter section disagree, the parameter section wins and a
//!   warning says so.
//!
//! # Not supported
//! Events (header and EVENT group), the residual's value and camera mask (only its sign is
//! read), plate TYPE 5 and higher (skipped with a warning), ANALOG:GAIN and BITS, writing files
//! other than with [`write()`](write::write) for tests and benchmarks.
//!
//! # Labels
//! Labels are trimmed. A repeated label is addressed as `LABEL`, `LABEL#2`, `LABEL#3` in file
//! order (with a warning); an empty one becomes `point<N>` (1-based). Points that are never
//! valid are listed once in a warning.
//!
//! # Time
//! The time of the first stored frame is 0 s and frame `i` (0-based) is at `i / POINT:RATE`;
//! the first frame's number (TRIAL:ACTUAL_START_FIELD, else header word 4) is kept in
//! [`C3d::first_frame`] and written in the comments of `gravline convert`, but does not shift
//! times. Analog sample `k` (0-based) is at `k / analog rate`, the first at 0 s too. The rate
//! of the [`Trial`] is computed from those times by the rule of the CSV reader (the
//! least-squares slope of time against frame index), so that a converted file reads back to
//! the same trial.
//!
//! # Errors
//! No input makes the reader panic: a truncated file, a section pointing past the end, counts
//! of zero or beyond the file, absurd rates or a corrupted parameter section are each a
//! [`C3dError`], one line naming the file and what is wrong. Every allocation is bounded by the
//! file's size, checked before the data are read.

pub mod convert;
pub mod data;
pub mod header;
pub mod numbers;
pub mod params;
pub mod plates;
pub mod write;

pub use numbers::Processor;
pub use params::{Param, ParamData, Parameters};
pub use plates::{ForcePlates, ForceSign, OriginSign, Plate, PlateOptions, PlateSample};
pub use write::write;

use crate::trial::{RawMarkers, ReadOptions, Trial};
use crate::warning::Warning;
use header::{Header, BLOCK, MAGIC};
use std::path::Path;

/// Why a C3D file could not be read: one line naming the file and what is wrong.
#[derive(Debug, thiserror::Error)]
pub enum C3dError {
    /// The file could not be opened or read.
    #[error(
        "{file}: cannot read the file ({error}); check the path and that it is a readable file"
    )]
    Io { file: String, error: String },
    /// The file is not a C3D file, or is one that cannot be read safely.
    #[error("{file}: {message}")]
    Invalid { file: String, message: String },
}

/// How to read a C3D file (the trial-level options come from [`ReadOptions`]).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct C3dOptions {
    pub plates: PlateOptions,
}

/// Analog channels, physical values.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Analog {
    pub labels: Vec<String>,
    pub units: Vec<String>,
    pub descriptions: Vec<String>,
    /// Samples per channel per second, Hz.
    pub rate_hz: f64,
    pub samples_per_frame: usize,
    /// `values[channel][sample]`: (stored - OFFSET) x SCALE x GEN_SCALE.
    pub values: Vec<Vec<f64>>,
}

/// A C3D file as read.
#[derive(Clone, Debug, PartialEq)]
pub struct C3d {
    /// The file as named in messages.
    pub file: String,
    pub processor: Processor,
    /// Float storage (POINT:SCALE < 0).
    pub float_storage: bool,
    pub header: Header,
    pub parameters: Parameters,
    /// POINT:RATE, Hz.
    pub rate_hz: f64,
    /// POINT:SCALE as stored.
    pub scale: f64,
    /// POINT:UNITS as stored (trimmed).
    pub units: String,
    /// Number of the first stored frame, as the file numbers it (1-based).
    pub first_frame: u64,
    /// Point labels, trimmed and made unique (`LABEL#2` ...), in file order.
    pub labels: Vec<String>,
    /// Point labels as stored (trimmed).
    pub stored_labels: Vec<String>,
    /// POINT:DESCRIPTIONS, one per point (empty where missing).
    pub descriptions: Vec<String>,
    /// `points_mm[point][frame]` in millimetres, lab frame; NaN where invalid.
    pub points_mm: Vec<Vec<[f64; 3]>>,
    pub analog: Analog,
    /// Force plates (empty when FORCE_PLATFORM:USED is 0 or missing).
    pub plates: ForcePlates,
    /// Non-fatal findings, one line each.
    pub warnings: Vec<String>,
}

impl C3d {
    /// Number of frames.
    pub fn n_frames(&self) -> usize {
        self.points_mm.first().map_or(
            self.analog
                .values
                .first()
                .map_or(0, |v| v.len() / self.analog.samples_per_frame.max(1)),
            |t| t.len(),
        )
    }

    /// A point's sample in millimetres, `None` where invalid.
    pub fn point(&self, point: usize, frame: usize) -> Option<[f64; 3]> {
        let p = *self.points_mm.get(point)?.get(frame)?;
        (!p[0].is_nan()).then_some(p)
    }

    /// Frame times, s (module doc, "Time").
    pub fn times_s(&self) -> Vec<f64> {
        (0..self.n_frames())
            .map(|i| i as f64 / self.rate_hz)
            .collect()
    }
}

/// Whether a path names a C3D file by its extension (`.c3d`, any case).
pub fn has_c3d_extension(path: &Path) -> bool {
    path.extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("c3d"))
}

/// Whether the bytes start like a C3D file: byte 2 is 0x50, byte 1 (the parameter block) is
/// a control byte, 1 to 31 (a text file never starts so), and the parameter section it points
/// to names a processor type (84, 85 or 86).
pub fn looks_like_c3d(bytes: &[u8]) -> bool {
    match bytes {
        [block, MAGIC, ..] if (1..32).contains(block) => {
            let at = (*block as usize - 1) * BLOCK + 3;
            bytes
                .get(at)
                .is_some_and(|&b| Processor::from_byte(b).is_some())
        }
        _ => false,
    }
}

/// Whether a trial file is to be read as C3D: its extension, or its first bytes.
pub fn is_c3d(path: &Path, bytes: &[u8]) -> bool {
    has_c3d_extension(path) || looks_like_c3d(bytes)
}

/// Whether the file at `path` is to be read as C3D: its extension, or its first bytes (as
/// [`looks_like_c3d`] checks them). Unreadable files are not.
pub fn is_c3d_file(path: &Path) -> bool {
    use std::io::{Read, Seek, SeekFrom};
    if has_c3d_extension(path) {
        return true;
    }
    let Ok(mut f) = std::fs::File::open(path) else {
        return false;
    };
    let mut head = [0u8; 2];
    if f.read_exact(&mut head).is_err() || head[1] != MAGIC || !(1..32).contains(&head[0]) {
        return false;
    }
    let mut b = [0u8; 1];
    f.seek(SeekFrom::Start(((head[0] as u64 - 1) * BLOCK as u64) + 3))
        .and_then(|_| f.read_exact(&mut b))
        .is_ok_and(|_| Processor::from_byte(b[0]).is_some())
}

/// The points of a file, one `#` comment line each: label, the label as stored when it was
/// repeated, and POINT:DESCRIPTIONS (for `gravline landmarks FILE.c3d`).
pub fn describe_points(c3d: &C3d) -> String {
    let mut out = format!("# points of {} (label: description)\n", c3d.file);
    for ((label, stored), desc) in c3d
        .labels
        .iter()
        .zip(&c3d.stored_labels)
        .zip(&c3d.descriptions)
    {
        let also = if label != stored && !stored.is_empty() {
            format!(" (stored as `{stored}`)")
        } else {
            String::new()
        };
        out.push_str(&format!("#   {label}{also}: {desc}\n"));
    }
    for w in &c3d.warnings {
        out.push_str(&format!("# warning: {w}\n"));
    }
    out
}

/// Reads a C3D file.
pub fn read(path: &Path, opts: &C3dOptions) -> Result<C3d, C3dError> {
    let file = path.display().to_string();
    let bytes = std::fs::read(path).map_err(|e| C3dError::Io {
        file: file.clone(),
        error: e.to_string().to_lowercase(),
    })?;
    parse(&bytes, &file, opts)
}

/// Reads a C3D file held in memory; `file` names it in messages.
pub fn parse(bytes: &[u8], file: &str, opts: &C3dOptions) -> Result<C3d, C3dError> {
    parse_inner(bytes, opts)
        .map_err(|message| C3dError::Invalid {
            file: file.to_string(),
            message,
        })
        .map(|mut c| {
            c.file = file.to_string();
            c
        })
}

fn parse_inner(bytes: &[u8], opts: &C3dOptions) -> Result<C3d, String> {
    if bytes.len() < 2 || bytes[1] != MAGIC {
        return Err(match bytes.get(1) {
            Some(b) => format!(
                "not a c3d file: its second byte is 0x{b:02x}, a c3d file has 0x50; check the file (a csv trial needs the .csv extension)"
            ),
            None => "not a c3d file: it is shorter than 2 bytes".into(),
        });
    }
    if bytes.len() < BLOCK {
        return Err(format!(
            "the file is {} bytes long, shorter than the 512-byte header block; the file is truncated",
            bytes.len()
        ));
    }
    let block = bytes[0] as usize;
    if block < 2 {
        return Err(format!(
            "the header points to the parameter section at block {block}; it must be block 2 or later (the file is corrupted)"
        ));
    }
    let start = (block - 1) * BLOCK;
    if start + 4 > bytes.len() {
        return Err(format!(
            "the header points to the parameter section at block {block} (byte {start}), past the end of the file ({} bytes); the file is truncated",
            bytes.len()
        ));
    }
    let n_blocks = bytes[start + 2] as usize;
    let declared_end = start + n_blocks.max(1) * BLOCK;
    let mut warnings = Vec::new();
    if declared_end > bytes.len() {
        warnings.push(format!(
            "the parameter section declares {n_blocks} blocks, past the end of the file; it is read up to the end"
        ));
    }
    let section = &bytes[start..declared_end.min(bytes.len())];
    let parameters = params::parse(section, start)?;
    let processor = parameters.processor.unwrap_or(Processor::Intel);
    let header = Header::parse(bytes, processor).ok_or("the header block is cut short")?;
    let layout = data::layout(&header, &parameters, bytes.len(), &mut warnings)?;

    // Units.
    let units = parameters
        .get("POINT", "UNITS")
        .and_then(Param::strings)
        .and_then(|v| v.into_iter().next())
        .unwrap_or_default();
    let to_mm = match units.to_ascii_lowercase().as_str() {
        "mm" => 1.0,
        "cm" => 10.0,
        "m" => 1000.0,
        "" => {
            if layout.n_points > 0 {
                warnings.push("POINT:UNITS is missing; millimetres are assumed".into());
            }
            1.0
        }
        other => {
            return Err(format!(
                "POINT:UNITS is `{other}`; gravline reads coordinates in mm, cm or m (fix the parameter)"
            ))
        }
    };

    // Analog scaling.
    let n_analog = layout.n_analog;
    let unsigned = parameters
        .get("ANALOG", "FORMAT")
        .and_then(Param::strings)
        .and_then(|v| v.into_iter().next())
        .is_some_and(|f| f.eq_ignore_ascii_case("unsigned"));
    let gen_scale = parameters
        .get("ANALOG", "GEN_SCALE")
        .and_then(Param::first)
        .unwrap_or(1.0);
    let mut fill = |mut v: Vec<f64>, what: &str, default: f64| -> Vec<f64> {
        if n_analog > 0 && v.len() < n_analog {
            warnings.push(format!(
                "ANALOG:{what} has {} entries for {n_analog} channels; the others are taken as {default}",
                v.len()
            ));
        }
        v.resize(n_analog, default);
        v
    };
    let offset = fill(
        parameters.continued_numbers("ANALOG", "OFFSET", unsigned),
        "OFFSET",
        0.0,
    );
    let scale = fill(
        parameters.continued_numbers("ANALOG", "SCALE", false),
        "SCALE",
        1.0,
    );
    let scaling = data::AnalogScaling {
        unsigned,
        offset,
        scale: scale.iter().map(|s| s * gen_scale).collect(),
    };

    let data_start = (layout.data_start_block - 1) * BLOCK;
    let samples = data::read(&bytes[data_start..], &layout, processor, to_mm, &scaling);

    // Labels.
    let mut stored_labels = parameters.continued_strings("POINT", "LABELS");
    if stored_labels.len() < layout.n_points {
        warnings.push(format!(
            "POINT:LABELS names {} of {} points; the others are named point<N>",
            stored_labels.len(),
            layout.n_points
        ));
    }
    stored_labels.resize(layout.n_points, String::new());
    let mut descriptions = parameters.continued_strings("POINT", "DESCRIPTIONS");
    descriptions.resize(layout.n_points, String::new());
    let labels = unique_labels(&stored_labels, &mut warnings);
    let never: Vec<&str> = labels
        .iter()
        .zip(&samples.points_mm)
        .filter(|(_, t)| !t.is_empty() && t.iter().all(|p| p[0].is_nan()))
        .map(|(l, _)| l.as_str())
        .collect();
    if !never.is_empty() {
        warnings.push(format!(
            "{} points are never valid: {}",
            never.len(),
            never.join(", ")
        ));
    }

    let mut analog = Analog {
        labels: parameters.continued_strings("ANALOG", "LABELS"),
        units: parameters.continued_strings("ANALOG", "UNITS"),
        descriptions: parameters.continued_strings("ANALOG", "DESCRIPTIONS"),
        rate_hz: layout.analog_rate_hz,
        samples_per_frame: layout.analog_samples_per_frame,
        values: samples.analog,
    };
    for (i, l) in analog.labels.iter_mut().enumerate().take(n_analog) {
        if l.is_empty() {
            *l = format!("analog{}", i + 1);
        }
    }
    for i in analog.labels.len()..n_analog {
        analog.labels.push(format!("analog{}", i + 1));
    }
    analog.labels.truncate(n_analog);
    analog.units.resize(n_analog, String::new());
    analog.descriptions.resize(n_analog, String::new());

    let plates = plates::compute(
        &parameters,
        &analog,
        layout.n_frames,
        to_mm,
        &opts.plates,
        &mut warnings,
    )?;

    Ok(C3d {
        file: String::new(),
        processor,
        float_storage: layout.float,
        header,
        parameters,
        rate_hz: layout.rate_hz,
        scale: layout.scale,
        units,
        first_frame: layout.first_frame,
        labels,
        stored_labels,
        descriptions,
        points_mm: samples.points_mm,
        analog,
        plates,
        warnings,
    })
}

/// Labels made unique: `LABEL`, `LABEL#2`, `LABEL#3` in file order; empty ones `point<N>`.
fn unique_labels(stored: &[String], warnings: &mut Vec<String>) -> Vec<String> {
    use std::collections::{HashMap, HashSet};
    let mut taken: HashSet<String> = stored.iter().cloned().collect();
    let mut count: HashMap<&str, usize> = HashMap::new();
    let mut repeated = Vec::new();
    let mut out = Vec::with_capacity(stored.len());
    for (i, s) in stored.iter().enumerate() {
        if s.is_empty() {
            let mut name = format!("point{}", i + 1);
            while taken.contains(&name) {
                name.push('_');
            }
            taken.insert(name.clone());
            out.push(name);
            continue;
        }
        let c = count.entry(s.as_str()).or_insert(0);
        *c += 1;
        if *c == 1 {
            out.push(s.clone());
            continue;
        }
        let mut k = *c;
        let mut name = format!("{s}#{k}");
        while taken.contains(&name) {
            k += 1;
            name = format!("{s}#{k}");
        }
        *c = k;
        taken.insert(name.clone());
        repeated.push(name.clone());
        out.push(name);
    }
    if !repeated.is_empty() {
        warnings.push(format!(
            "repeated point labels are addressed by their order in the file: {}",
            repeated.join(", ")
        ));
    }
    out
}

/// The trial of a C3D file: marker tracks in metres, missing (NaN) where invalid, times from
/// 0 s (module doc, "Time"), the vertical axis from `opts` (the file's own units are used, not
/// `opts.units`). A rate in `opts` must agree with POINT:RATE within 1 %.
pub fn to_trial(c3d: &C3d, stem: &str, opts: &ReadOptions) -> Result<Trial, C3dError> {
    let mut trial = bare_trial(c3d, stem, opts)?;
    let to_m = crate::trial::LengthUnit::Millimetres.to_metres();
    let tracks = c3d
        .points_mm
        .iter()
        .map(|t| t.iter().map(|p| p.map(|v| v * to_m)).collect())
        .collect();
    trial.markers = RawMarkers::new(c3d.labels.clone(), tracks);
    Ok(trial)
}

/// [`to_trial`] taking the file's points over (converted in place, no copy).
pub fn into_trial(mut c3d: C3d, stem: &str, opts: &ReadOptions) -> Result<Trial, C3dError> {
    let mut trial = bare_trial(&c3d, stem, opts)?;
    // Millimetres to metres as the CSV reader converts them, so a converted file reads back
    // to the same numbers.
    let to_m = crate::trial::LengthUnit::Millimetres.to_metres();
    let mut tracks = std::mem::take(&mut c3d.points_mm);
    for p in tracks.iter_mut().flatten() {
        for v in p.iter_mut() {
            *v *= to_m;
        }
    }
    trial.markers = RawMarkers::new(std::mem::take(&mut c3d.labels), tracks);
    Ok(trial)
}

/// The trial of [`to_trial`] without its tracks.
fn bare_trial(c3d: &C3d, stem: &str, opts: &ReadOptions) -> Result<Trial, C3dError> {
    let invalid = |message: String| C3dError::Invalid {
        file: c3d.file.clone(),
        message,
    };
    if let Some(given) = opts.rate_hz {
        if (c3d.rate_hz / given - 1.0).abs() > crate::trial::RATE_TOLERANCE {
            return Err(invalid(format!(
                "the file's frame rate (POINT:RATE) is {} Hz, the given rate {given} Hz; drop the given rate or fix it",
                c3d.rate_hz
            )));
        }
    }
    let times_s = c3d.times_s();
    if times_s.is_empty() {
        return Err(invalid("the file holds no frames".into()));
    }
    if c3d.points_mm.is_empty() {
        return Err(invalid(
            "the file holds no 3-d points (POINT:USED is 0); gravline needs marker trajectories"
                .into(),
        ));
    }
    let rate_hz = if times_s.len() < 2 {
        c3d.rate_hz
    } else {
        1.0 / fitted_interval_s(&times_s)
    };
    let warnings = c3d
        .warnings
        .iter()
        .map(|m| Warning::C3d { message: m.clone() })
        .collect();
    Ok(Trial {
        name: stem.to_string(),
        file: c3d.file.clone(),
        times_s,
        rate_hz,
        up_axis: opts.up_axis,
        markers: RawMarkers::new(Vec::new(), Vec::new()),
        warnings,
    })
}

/// A C3D file held in memory as the [`Trial`] the pipeline takes (the default [`C3dOptions`];
/// the stem names the trial).
pub fn read_trial_bytes(
    bytes: &[u8],
    path: &Path,
    stem: &str,
    opts: &ReadOptions,
) -> Result<Trial, C3dError> {
    let c3d = parse(bytes, &path.display().to_string(), &C3dOptions::default())?;
    into_trial(c3d, stem, opts)
}

/// Reads a C3D file as a [`Trial`] (the stem of its name becomes the trial's name).
pub fn read_trial(path: &Path, opts: &ReadOptions) -> Result<Trial, C3dError> {
    let c3d = read(path, &C3dOptions::default())?;
    to_trial(&c3d, &stem_of(path), opts)
}

/// The file stem of a path (its name without extension).
pub fn stem_of(path: &Path) -> String {
    path.file_stem()
        .map_or("trial".to_string(), |s| s.to_string_lossy().into_owned())
}

/// Least-squares slope of time against frame index, s per frame: the rule by which the CSV
/// reader gets a rate from a time column (kept identical so a converted file reads back to the
/// same rate, to the last bit).
fn fitted_interval_s(times_s: &[f64]) -> f64 {
    let n = times_s.len() as f64;
    let mean_i = (n - 1.0) / 2.0;
    let mean_t = times_s.iter().sum::<f64>() / n;
    let (mut num, mut den) = (0.0, 0.0);
    for (i, &t) in times_s.iter().enumerate() {
        let di = i as f64 - mean_i;
        num += di * (t - mean_t);
        den += di * di;
    }
    num / den
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn repeated_and_empty_labels_become_unique() {
        let stored: Vec<String> = ["KNE", "KNE", "", "KNE#2", "KNE", "ANK"]
            .iter()
            .map(|s| s.to_string())
            .collect();
        let mut w = Vec::new();
        let labels = unique_labels(&stored, &mut w);
        assert_eq!(labels, ["KNE", "KNE#3", "point3", "KNE#2", "KNE#4", "ANK"]);
        assert_eq!(w.len(), 1);
    }

    #[test]
    fn magic_and_extension() {
        assert!(has_c3d_extension(Path::new("a/walk.C3D")));
        assert!(!has_c3d_extension(Path::new("walk.csv")));
        let mut b = vec![0u8; 1024];
        b[0] = 2;
        b[1] = 0x50;
        b[512 + 3] = 84;
        assert!(looks_like_c3d(&b));
        assert!(!looks_like_c3d(b"time,x_x\n"));
    }
}
