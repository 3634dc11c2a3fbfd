//! Stage 1, reading: a trial CSV (wide or tidy layout, DESIGN.md 3.1) becomes a [`Trial`]:
//! frame times in seconds and gappy marker tracks ([`RawMarkers`]) in metres, in the lab frame of
//! the file, with its vertical axis known ([`UpAxis`]).
//!
//! Units are converted once here; everything downstream is SI.
//!
//! # Input
//! - Lines starting with `#` and blank lines before the header are comments (a UTF-8 byte order
//!   mark is skipped). Line numbers in errors count them, as a text editor shows the file.
//! - The clock column is `time` or `time_s` (seconds) or `frame` (whole frame numbers, then
//!   [`ReadOptions::rate_hz`] is required), matched case-insensitively. If both exist, `time` is
//!   used. The time of frame `n` is `n / rate_hz`, so frame numbers keep their meaning against
//!   other recordings of the same session (a file numbered from 1 starts at `1 / rate_hz` s).
//! - **wide** layout: one row per frame, marker columns `<label>_x`, `<label>_y`, `<label>_z`
//!   (axis letter in any case; `.` and `:` accepted as separators). Every other column is
//!   ignored and listed once in [`Warning::IgnoredColumns`].
//! - **tidy** layout (chosen when a `marker` column exists): one row per marker per frame with
//!   columns `marker`, `x`, `y`, `z`. Rows may come in any order (by frame, or marker by marker
//!   as a table "melt" writes them); each (frame, marker) pair at most once. A marker without a
//!   row in a frame is not seen in that frame.
//! - Empty cells and `NaN` (any case) mean "not seen this frame"; a marker is missing in a frame
//!   when any of its three coordinates is.
//!
//! # Rate
//! Times must increase strictly from row to row (wide layout; tidy frames are put in time
//! order). The frame interval is checked against the median interval:
//! more than 1 % off is an error naming the first offending line (DESIGN.md 3.1). When the
//! times are written rounded to a coarser step than the recording's clock (for example 150 Hz
//! stamped to the millisecond: intervals alternate 6 ms and 7 ms), each interval may also
//! differ by that rounding step, found as the coarsest power-of-ten grid that every time lies
//! on, provided it is at most half a frame; a dropped frame is still caught. The rate is the
//! reciprocal of the least-squares slope of time against frame index (common practice, no
//! source), which the rounding of single stamps barely moves. With a `frame` column it is the
//! given rate, divided by the frame step when only every k-th frame was exported (frames 0, 2,
//! 4 at 100 Hz are rows 50 Hz apart). A `rate_hz` given for a file with a time column must
//! agree with the times within 1 %. [`Trial::times_s`] keeps the times as written; stages that
//! need a uniform step use [`Trial::rate_hz`].
//!
//! # Errors
//! Every problem is a [`TrialError`] whose message is one lowercase line naming the file, the
//! line (1-based, comments included) and the column (1-based index and header text) and saying
//! how to fix it. No input makes the reader panic.

use std::cell::RefCell;
use std::collections::{HashMap, HashSet, VecDeque};
use std::fmt;
use std::io::{self, BufRead, BufReader, Read};
use std::path::Path;
use std::rc::Rc;

use csv::ByteRecord;
use serde::{Deserialize, Serialize};

use crate::warning::Warning;

mod fast;

/// Seconds, the time unit of every stage.
pub type Seconds = f64;

/// The vertical axis of the lab frame: which coordinate points up, and with which sign.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct UpAxis {
    /// 0 = x, 1 = y, 2 = z.
    pub index: usize,
    /// `true` for `+x`/`+y`/`+z`, `false` for `-x`/`-y`/`-z`.
    pub positive: bool,
}

impl UpAxis {
    /// `+z`, the default.
    pub const Z: UpAxis = UpAxis {
        index: 2,
        positive: true,
    };

    /// Parses `z`, `+z`, `-y`, ... (case-insensitive).
    pub fn parse(text: &str) -> Option<UpAxis> {
        let t = text.trim().to_ascii_lowercase();
        let (positive, axis) = match t.strip_prefix('-') {
            Some(rest) => (false, rest),
            None => (true, t.strip_prefix('+').unwrap_or(&t)),
        };
        let index = match axis {
            "x" => 0,
            "y" => 1,
            "z" => 2,
            _ => return None,
        };
        Some(UpAxis { index, positive })
    }

    /// Height of a point above the lab origin, in the point's unit.
    pub fn height(&self, p: &[f64; 3]) -> f64 {
        if self.positive {
            p[self.index]
        } else {
            -p[self.index]
        }
    }

    /// Indices of the two horizontal axes, in the order (first, second) that makes
    /// (first, second, up) a right-handed frame when `up` is positive.
    pub fn horizontal_axes(&self) -> [usize; 2] {
        let a = (self.index + 1) % 3;
        let b = (self.index + 2) % 3;
        if self.positive {
            [a, b]
        } else {
            [b, a]
        }
    }

    /// Projection of a point onto the floor plane: its two horizontal coordinates.
    pub fn horizontal(&self, p: &[f64; 3]) -> [f64; 2] {
        let [a, b] = self.horizontal_axes();
        [p[a], p[b]]
    }

    /// A lab point from floor-plane coordinates and a height.
    pub fn point(&self, horizontal: [f64; 2], height: f64) -> [f64; 3] {
        let [a, b] = self.horizontal_axes();
        let mut p = [0.0; 3];
        p[a] = horizontal[0];
        p[b] = horizontal[1];
        p[self.index] = if self.positive { height } else { -height };
        p
    }

    /// The unit vector pointing up.
    pub fn unit(&self) -> [f64; 3] {
        let mut u = [0.0; 3];
        u[self.index] = if self.positive { 1.0 } else { -1.0 };
        u
    }
}

impl std::fmt::Display for UpAxis {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let sign = if self.positive { "+" } else { "-" };
        write!(f, "{sign}{}", ["x", "y", "z"][self.index])
    }
}

/// Length unit of the coordinates in a trial file.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum LengthUnit {
    /// `mm`, the default.
    #[serde(rename = "mm")]
    Millimetres,
    /// `m`.
    #[serde(rename = "m")]
    Metres,
}

impl LengthUnit {
    /// Factor that converts a coordinate in this unit to metres.
    pub fn to_metres(&self) -> f64 {
        match self {
            LengthUnit::Millimetres => 1e-3,
            LengthUnit::Metres => 1.0,
        }
    }
}

/// How to read a trial file: units, vertical axis, and the rate for files with a frame column.
#[derive(Clone, Debug, PartialEq)]
pub struct ReadOptions {
    /// Length unit of the coordinates in the file.
    pub units: LengthUnit,
    /// Vertical axis of the file's lab frame (copied into the [`Trial`]).
    pub up_axis: UpAxis,
    /// Required when the file has a `frame` column instead of `time`.
    pub rate_hz: Option<f64>,
}

impl Default for ReadOptions {
    fn default() -> Self {
        ReadOptions {
            units: LengthUnit::Millimetres,
            up_axis: UpAxis::Z,
            rate_hz: None,
        }
    }
}

/// Marker trajectories as read: one track per label, one sample per frame, `None` where the
/// marker was not seen. Coordinates in metres, lab frame.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct RawMarkers {
    /// Marker labels, in the order of the file (header order, or first appearance in tidy).
    pub labels: Vec<String>,
    /// `tracks[marker][frame]`.
    pub tracks: Vec<Vec<Option<[f64; 3]>>>,
}

impl RawMarkers {
    /// Index of a label, if present (exact match).
    pub fn index_of(&self, label: &str) -> Option<usize> {
        self.labels.iter().position(|l| l == label)
    }
}

/// One trial as read from its file.
#[derive(Clone, Debug, PartialEq)]
pub struct Trial {
    /// File stem, used to name the output folder.
    pub name: String,
    /// The file as named in messages (its path as given).
    pub file: String,
    /// Frame times, strictly increasing, in seconds: as written in the file (rounding
    /// included), or frame number / rate.
    pub times_s: Vec<Seconds>,
    /// Sampling rate, from the times or given, in Hz.
    pub rate_hz: f64,
    /// Vertical axis of the lab frame of the file.
    pub up_axis: UpAxis,
    /// Marker tracks, in metres.
    pub markers: RawMarkers,
    /// Non-fatal findings of the reader (ignored columns).
    pub warnings: Vec<crate::warning::Warning>,
}

impl Trial {
    /// Number of frames.
    pub fn n_frames(&self) -> usize {
        self.times_s.len()
    }
}

// ---------------------------------------------------------------------------------------------
// Reading
// ---------------------------------------------------------------------------------------------

/// Longest comment or header line accepted, in bytes (a guard against files that are not CSV).
pub const MAX_HEADER_LINE_BYTES: u64 = 16 << 20;

/// Largest relative difference between a frame interval and the median interval (DESIGN.md 3.1).
pub const RATE_TOLERANCE: f64 = 0.01;

/// A tidy file may describe at most this many (frame, marker) cells per row read, plus
/// [`TIDY_SPARSE_ALLOWANCE`]; beyond that the marker or clock column is not what it seems and
/// the dense tracks would not fit in memory.
const TIDY_CELLS_PER_ROW: usize = 8;
const TIDY_SPARSE_ALLOWANCE: usize = 1 << 20;

/// A column of a trial file: its 1-based index and its header text.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Column {
    /// 1-based, as a spreadsheet counts.
    pub index: usize,
    /// Header text (trimmed; empty for an unnamed column).
    pub name: String,
}

impl fmt::Display for Column {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.name.is_empty() {
            write!(f, "column {}", self.index)
        } else {
            write!(f, "column {} (`{}`)", self.index, shown(&self.name))
        }
    }
}

/// Why a trial file could not be read. Each message is one lowercase line naming the file, the
/// line (1-based, comment lines included) and the column, and saying how to fix the file.
#[derive(Debug, thiserror::Error)]
pub enum TrialError {
    /// The file could not be opened or read.
    #[error(
        "{file}: cannot read the file ({}); check the path and that it is a readable file",
        error.to_string().to_lowercase()
    )]
    Io { file: String, error: io::Error },

    /// Nothing but comments and blank lines.
    #[error(
        "{file}: no header line (the file is empty or holds only comments and blank lines); \
         a trial csv starts with a header such as `time,l_asis_x,l_asis_y,l_asis_z`"
    )]
    Empty { file: String },

    /// A comment or header line too long to be one.
    #[error(
        "{file} line {line}: the line is longer than {limit_bytes} bytes without a line break; \
         this is not a trial csv (check the file)"
    )]
    LineTooLong {
        file: String,
        line: u64,
        limit_bytes: u64,
    },

    /// A header or data cell that is not UTF-8 text.
    #[error(
        "{file} line {line}, column {column}: the cell holds bytes that are not utf-8 text; \
         save the file as utf-8 (or plain ascii)"
    )]
    NotUtf8 {
        file: String,
        line: u64,
        /// 1-based column index.
        column: usize,
    },

    /// A header and no data rows.
    #[error("{file} line {line}: header only, no data rows; export the trial with its frames")]
    NoData { file: String, line: u64 },

    /// Neither `time`/`time_s` nor `frame` in the header.
    #[error(
        "{file} line {line}: no time or frame column (found {found}); name the clock column \
         `time` or `time_s` (seconds), or `frame` (frame numbers, with a rate){hint}"
    )]
    NoTimeColumn {
        file: String,
        line: u64,
        found: String,
        hint: String,
    },

    /// Two clock columns of the same kind (`time` and `time_s`, or two `frame`s).
    #[error("{file} line {line}: two clock columns, {first} and {second}; keep one of them")]
    TwoClockColumns {
        file: String,
        line: u64,
        first: Column,
        second: Column,
    },

    /// The same header text twice (or a reserved tidy name twice, in any case).
    #[error(
        "{file} line {line}: column `{name}` appears twice (columns {first} and {second}); \
         rename or remove one of them"
    )]
    DuplicateColumn {
        file: String,
        line: u64,
        name: String,
        first: usize,
        second: usize,
    },

    /// The same marker label with the same axis twice (`a_x` and `a.x`).
    #[error(
        "{file} line {line}: marker `{marker}` has two {axis} columns, {columns}; \
         each marker label may appear once"
    )]
    DuplicateMarkerAxis {
        file: String,
        line: u64,
        marker: String,
        axis: char,
        /// Both columns with their header text, e.g. column 2 (`a_x`) and column 5 (`a.x`).
        columns: String,
    },

    /// A marker with some but not all of its x, y, z columns.
    #[error(
        "{file} line {line}: marker `{marker}` has columns for {present} but not for {missing}; \
         add the missing column (for example `{marker}_{first_missing}`) or remove the marker's \
         other columns"
    )]
    IncompleteMarker {
        file: String,
        line: u64,
        marker: String,
        present: String,
        missing: String,
        first_missing: char,
    },

    /// A wide header without marker columns.
    #[error(
        "{file} line {line}: no marker columns (found {found}); name them `<label>_x`, \
         `<label>_y`, `<label>_z`, or use the tidy layout (`marker`, `x`, `y`, `z`)"
    )]
    NoMarkers {
        file: String,
        line: u64,
        found: String,
    },

    /// A tidy header (with a `marker` column) that lacks `x`, `y` or `z`.
    #[error(
        "{file} line {line}: tidy layout (a `marker` column) needs columns `x`, `y` and `z`; \
         missing {missing} (found {found})"
    )]
    TidyMissingColumn {
        file: String,
        line: u64,
        missing: String,
        found: String,
    },

    /// A `frame` column and no rate.
    #[error(
        "{file} line {line}, {column}: frame numbers and no rate; give `rate_hz` in [input] \
         or `--rate-hz`"
    )]
    MissingRate {
        file: String,
        line: u64,
        column: Column,
    },

    /// A given rate that is not a positive finite number, or times that imply none.
    #[error("{file}: a rate of {rate_hz} hz is not a positive finite number; {hint}")]
    InvalidRate {
        file: String,
        rate_hz: f64,
        hint: &'static str,
    },

    /// A given rate that contradicts the file's time column.
    #[error(
        "{file}: the time column gives {file_rate_hz:.4} hz but `rate_hz` is {given_rate_hz} hz; \
         remove `rate_hz` (the times set the rate) or check the file"
    )]
    RateMismatch {
        file: String,
        file_rate_hz: f64,
        given_rate_hz: f64,
    },

    /// A data row with another number of fields than the header.
    #[error(
        "{file} line {line}: expected {expected} fields (as in the header), found {found}; \
         every row needs one cell per header column (leave a cell empty where a marker was not \
         seen; a decimal comma splits a cell in two)"
    )]
    Ragged {
        file: String,
        line: u64,
        expected: usize,
        found: usize,
    },

    /// A cell that does not parse as a number.
    #[error("{file} line {line}, {column}: `{text}` is not a number; {hint}")]
    NotANumber {
        file: String,
        line: u64,
        column: Column,
        text: String,
        hint: &'static str,
    },

    /// An empty, `NaN` or infinite time (or frame number).
    #[error(
        "{file} line {line}, {column}: `{text}` is not a finite time; every row needs its time \
         (or frame number) as a finite number"
    )]
    NonFiniteTime {
        file: String,
        line: u64,
        column: Column,
        text: String,
    },

    /// An infinite coordinate.
    #[error(
        "{file} line {line}, {column}: `{text}` is not a finite coordinate; write the value, \
         or leave the cell empty (or `NaN`) where the marker was not seen"
    )]
    NonFiniteCoordinate {
        file: String,
        line: u64,
        column: Column,
        text: String,
    },

    /// A frame number that is not a whole number (or too large to be exact).
    #[error(
        "{file} line {line}, {column}: `{text}` is not a frame number; frame numbers are whole \
         numbers (use a `time` column for times in seconds)"
    )]
    NotAFrameNumber {
        file: String,
        line: u64,
        column: Column,
        text: String,
    },

    /// A time (or frame number) not greater than the one before.
    #[error(
        "{file} line {line}, {column}: {value} is not greater than {previous} on line \
         {previous_line}; times must increase strictly: sort the rows by time and remove \
         repeated frames"
    )]
    NotIncreasing {
        file: String,
        line: u64,
        column: Column,
        value: f64,
        previous: f64,
        previous_line: u64,
    },

    /// A frame interval more than 1 % off the median interval.
    #[error(
        "{file} line {line}, {column}: the frame interval of {interval_s:.6} s differs by more \
         than 1 % from the median interval of {median_s:.6} s; resample the trial to a constant \
         rate or check for dropped frames"
    )]
    UnevenRate {
        file: String,
        line: u64,
        column: Column,
        interval_s: f64,
        median_s: f64,
    },

    /// One frame with a time column: no interval to take a rate from.
    #[error(
        "{file} line {line}: only one frame, so the times give no rate; export at least two \
         frames or give `rate_hz` in [input] or `--rate-hz`"
    )]
    SingleFrame { file: String, line: u64 },

    /// Tidy layout: an empty marker label.
    #[error("{file} line {line}, {column}: empty marker label; every tidy row names its marker")]
    EmptyMarkerLabel {
        file: String,
        line: u64,
        column: Column,
    },

    /// Tidy layout: a second row for the same (frame, marker).
    #[error(
        "{file} line {line}: marker `{marker}` has a second row at {at}; each marker has at most \
         one row per frame (remove the repeated row)"
    )]
    TidyDuplicate {
        file: String,
        line: u64,
        marker: String,
        /// `time 0.02 s` or `frame 7`.
        at: String,
    },

    /// Tidy layout: far more (frame, marker) cells than rows.
    #[error(
        "{file} line {line}: tidy layout with {markers} markers over {frames} frames but only \
         {rows} rows so far; check the `marker` and clock columns (one row per marker per frame)"
    )]
    TidySparse {
        file: String,
        line: u64,
        markers: usize,
        frames: usize,
        rows: u64,
    },

    /// Any other CSV syntax problem.
    #[error("{file} line {line}: not readable as csv ({message}); check the file's quoting")]
    Csv {
        file: String,
        line: u64,
        message: String,
    },
}

impl TrialError {
    /// The file named in the error.
    pub fn file(&self) -> &str {
        use TrialError::*;
        match self {
            Io { file, .. }
            | Empty { file }
            | LineTooLong { file, .. }
            | NotUtf8 { file, .. }
            | NoData { file, .. }
            | NoTimeColumn { file, .. }
            | TwoClockColumns { file, .. }
            | DuplicateColumn { file, .. }
            | DuplicateMarkerAxis { file, .. }
            | IncompleteMarker { file, .. }
            | NoMarkers { file, .. }
            | TidyMissingColumn { file, .. }
            | MissingRate { file, .. }
            | InvalidRate { file, .. }
            | RateMismatch { file, .. }
            | Ragged { file, .. }
            | NotANumber { file, .. }
            | NonFiniteTime { file, .. }
            | NonFiniteCoordinate { file, .. }
            | NotAFrameNumber { file, .. }
            | NotIncreasing { file, .. }
            | UnevenRate { file, .. }
            | SingleFrame { file, .. }
            | EmptyMarkerLabel { file, .. }
            | TidyDuplicate { file, .. }
            | TidySparse { file, .. }
            | Csv { file, .. } => file,
        }
    }

    /// The 1-based line of the file the error points at, where there is one.
    pub fn line(&self) -> Option<u64> {
        use TrialError::*;
        match self {
            Io { .. } | Empty { .. } | InvalidRate { .. } | RateMismatch { .. } => None,
            LineTooLong { line, .. }
            | NotUtf8 { line, .. }
            | NoData { line, .. }
            | NoTimeColumn { line, .. }
            | TwoClockColumns { line, .. }
            | DuplicateColumn { line, .. }
            | DuplicateMarkerAxis { line, .. }
            | IncompleteMarker { line, .. }
            | NoMarkers { line, .. }
            | TidyMissingColumn { line, .. }
            | MissingRate { line, .. }
            | Ragged { line, .. }
            | NotANumber { line, .. }
            | NonFiniteTime { line, .. }
            | NonFiniteCoordinate { line, .. }
            | NotAFrameNumber { line, .. }
            | NotIncreasing { line, .. }
            | UnevenRate { line, .. }
            | SingleFrame { line, .. }
            | EmptyMarkerLabel { line, .. }
            | TidyDuplicate { line, .. }
            | TidySparse { line, .. }
            | Csv { line, .. } => Some(*line),
        }
    }
}

/// Reads a trial file; the trial is named after the file stem.
///
/// ```no_run
/// use gravline::trial::{read_trial, ReadOptions};
/// let trial = read_trial(std::path::Path::new("trial.csv"), &ReadOptions::default())?;
/// println!("{} frames at {} Hz", trial.n_frames(), trial.rate_hz);
/// # Ok::<(), gravline::trial::TrialError>(())
/// ```
pub fn read_trial(path: &Path, opts: &ReadOptions) -> Result<Trial, TrialError> {
    let file_name = path.display().to_string();
    let stem = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| file_name.clone());
    let f = std::fs::File::open(path).map_err(|error| TrialError::Io {
        file: file_name.clone(),
        error,
    })?;
    let size_hint = f.metadata().ok().map(|m| m.len());
    read_impl(f, &file_name, &stem, opts, size_hint)
}

/// Reads a trial from any reader (memory, a pipe); `name_for_errors` names it in messages and
/// `stem` becomes [`Trial::name`].
///
/// ```
/// use gravline::trial::{read_trial_from, ReadOptions};
/// let csv = "# two frames\ntime,c7_x,c7_y,c7_z\n0.00,1,2,1400\n0.01,1,2,1401\n";
/// let trial = read_trial_from(csv.as_bytes(), "mem.csv", "mem", &ReadOptions::default())?;
/// assert_eq!(trial.n_frames(), 2);
/// assert!((trial.rate_hz - 100.0).abs() < 1e-9);
/// let c7 = trial.markers.tracks[0][1].unwrap_or_default();
/// assert!((c7[2] - 1.401).abs() < 1e-12); // 1401 mm in metres
/// # Ok::<(), gravline::trial::TrialError>(())
/// ```
pub fn read_trial_from(
    reader: impl Read,
    name_for_errors: &str,
    stem: &str,
    opts: &ReadOptions,
) -> Result<Trial, TrialError> {
    read_impl(reader, name_for_errors, stem, opts, None)
}

/// Reads a trial held in memory (the whole file); the same result as [`read_trial_from`] on
/// the same bytes, faster. A wide file without quotes is parsed in up to `threads` pieces at
/// once (line ranges; 1 = on the calling thread only); anything else, and every file with a
/// problem, goes through the general reader, so errors are the same too.
///
/// ```
/// use gravline::trial::{read_trial_bytes, ReadOptions};
/// let csv = b"time,c7_x,c7_y,c7_z\n0.00,1,2,1400\n0.01,1,2,\n";
/// let trial = read_trial_bytes(csv, "mem.csv", "mem", &ReadOptions::default(), 2)?;
/// assert_eq!(trial.markers.tracks[0][1], None); // a coordinate is missing
/// # Ok::<(), gravline::trial::TrialError>(())
/// ```
pub fn read_trial_bytes(
    bytes: &[u8],
    name_for_errors: &str,
    stem: &str,
    opts: &ReadOptions,
    threads: usize,
) -> Result<Trial, TrialError> {
    read_flat(bytes, name_for_errors, stem, opts, threads).map(FlatTrial::into_trial)
}

/// The bytes of a trial file, mapped into memory or, where that is not possible (an empty file,
/// a pipe), read.
pub struct TrialBytes(Bytes);

enum Bytes {
    Mapped(memmap2::Mmap),
    Read(Vec<u8>),
}

impl TrialBytes {
    /// Maps or reads the file at `path`.
    pub fn open(path: &Path) -> io::Result<TrialBytes> {
        let file = std::fs::File::open(path)?;
        let meta = file.metadata()?;
        if meta.is_file() && meta.len() > 0 {
            // SAFETY: the map is read-only and lives as long as this value. Reading a file
            // that another process truncates while it is mapped ends this one with SIGBUS, and
            // one that it rewrites gives mixed contents, as a copy read at that moment would.
            // Measured reason: reading a 133 MB trial into fresh memory takes about 90 ms
            // (mostly the kernel zeroing new pages); mapping it instead took the median of
            // `process_file` on it from 0.81 s to 0.72 s (page faults from 97 k to 66 k).
            if let Ok(map) = unsafe { memmap2::Mmap::map(&file) } {
                return Ok(TrialBytes(Bytes::Mapped(map)));
            }
        }
        let mut bytes = Vec::with_capacity(meta.len().try_into().unwrap_or(0));
        io::Read::read_to_end(&mut &file, &mut bytes)?;
        Ok(TrialBytes(Bytes::Read(bytes)))
    }
}

impl std::ops::Deref for TrialBytes {
    type Target = [u8];

    fn deref(&self) -> &[u8] {
        match &self.0 {
            Bytes::Mapped(map) => map,
            Bytes::Read(bytes) => bytes,
        }
    }
}

/// A trial whose marker samples are held flat: `tracks[marker][frame]` in metres, with NaN
/// coordinates where the marker was not seen (a point is missing when any coordinate is NaN).
/// The in-memory reader's layout, which gap filling takes over in place; `trial.markers`
/// holds the labels and no tracks.
#[derive(Clone, Debug, PartialEq)]
pub struct FlatTrial {
    pub trial: Trial,
    pub tracks: Vec<Vec<[f64; 3]>>,
}

impl FlatTrial {
    /// The trial with its tracks as [`RawMarkers`] (`None` where a coordinate is NaN).
    pub fn into_trial(self) -> Trial {
        let FlatTrial { mut trial, tracks } = self;
        trial.markers.tracks = tracks
            .into_iter()
            .map(|t| {
                t.into_iter()
                    .map(|p| (!p.iter().any(|v| v.is_nan())).then_some(p))
                    .collect()
            })
            .collect();
        trial
    }

    /// The flat layout of a trial read by the general reader.
    fn from_trial(mut trial: Trial) -> FlatTrial {
        let tracks = std::mem::take(&mut trial.markers.tracks)
            .into_iter()
            .map(|t| t.into_iter().map(|p| p.unwrap_or([f64::NAN; 3])).collect())
            .collect();
        FlatTrial { trial, tracks }
    }
}

/// [`read_trial_bytes`] in the flat layout of [`FlatTrial`].
pub fn read_flat(
    bytes: &[u8],
    name_for_errors: &str,
    stem: &str,
    opts: &ReadOptions,
    threads: usize,
) -> Result<FlatTrial, TrialError> {
    if let Some(read) = fast::read_wide(bytes, name_for_errors, stem, opts, threads) {
        return read;
    }
    read_impl(bytes, name_for_errors, stem, opts, Some(bytes.len() as u64))
        .map(FlatTrial::from_trial)
}

/// The marker labels of a trial file, in file order, without reading its numbers (for the
/// `landmarks` mapping template). The header is checked as [`read_trial`] checks it; a tidy
/// file's `marker` column is scanned for its distinct labels.
pub fn read_labels(path: &Path) -> Result<Vec<String>, TrialError> {
    let file_name = path.display().to_string();
    let f = std::fs::File::open(path).map_err(|error| TrialError::Io {
        file: file_name.clone(),
        error,
    })?;
    read_labels_from(f, &file_name)
}

/// [`read_labels`] from any reader; `name_for_errors` names it in messages.
pub fn read_labels_from(
    reader: impl Read,
    name_for_errors: &str,
) -> Result<Vec<String>, TrialError> {
    let file = name_for_errors;
    let mut src = Source::open(reader, file)?;
    let mut rec = ByteRecord::new();
    let Some(header_line) = src.next(&mut rec)? else {
        return Err(TrialError::Empty { file: file.into() });
    };
    let header = parse_header(&rec, file, header_line)?;
    match header.layout {
        Layout::Wide { labels, .. } => Ok(labels),
        Layout::Tidy { marker, .. } => {
            let ctx = Ctx {
                file,
                names: &header.names,
            };
            let mut seen: HashSet<Vec<u8>> = HashSet::new();
            let mut labels = Vec::new();
            while let Some(line) = src.next(&mut rec)? {
                if !ctx.check_width(&rec, line)? {
                    continue;
                }
                let bytes = rec.get(marker).unwrap_or(b"").trim_ascii();
                if !seen.contains(bytes) {
                    labels.push(ctx.label(bytes, line, marker)?);
                    seen.insert(bytes.to_vec());
                }
            }
            Ok(labels)
        }
    }
}

// --- header ----------------------------------------------------------------------------------

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Clock {
    Seconds,
    Frames,
}

enum Layout {
    Wide {
        labels: Vec<String>,
        /// 0-based column of x, y, z for each marker.
        xyz: Vec<[usize; 3]>,
    },
    Tidy {
        marker: usize,
        xyz: [usize; 3],
    },
}

struct Header {
    line: u64,
    names: Vec<String>,
    clock: Clock,
    clock_col: usize,
    layout: Layout,
    ignored: Vec<String>,
}

/// Splits `<label>_x` (or `.x`, `:x`, any case) into label and axis index.
fn marker_column(name: &str) -> Option<(&str, usize)> {
    let bytes = name.as_bytes();
    let n = bytes.len();
    if n < 3 {
        return None;
    }
    let axis = match bytes[n - 1] {
        b'x' | b'X' => 0,
        b'y' | b'Y' => 1,
        b'z' | b'Z' => 2,
        _ => return None,
    };
    if !matches!(bytes[n - 2], b'_' | b'.' | b':') {
        return None;
    }
    // Both last bytes are ASCII, so `n - 2` is a character boundary.
    let label = name.get(..n - 2)?.trim_end();
    if label.is_empty() {
        None
    } else {
        Some((label, axis))
    }
}

fn column(names: &[String], index0: usize) -> Column {
    Column {
        index: index0 + 1,
        name: names.get(index0).cloned().unwrap_or_default(),
    }
}

/// Up to 12 header names for a message.
fn found_list(names: &[String]) -> String {
    let mut shown_names: Vec<String> = names
        .iter()
        .take(12)
        .map(|n| {
            if n.is_empty() {
                "(unnamed)".to_string()
            } else {
                format!("`{}`", shown(n))
            }
        })
        .collect();
    if names.len() > 12 {
        shown_names.push(format!("and {} more", names.len() - 12));
    }
    if shown_names.is_empty() {
        "no columns".into()
    } else {
        shown_names.join(", ")
    }
}

fn parse_header(rec: &ByteRecord, file: &str, line: u64) -> Result<Header, TrialError> {
    let mut names = Vec::with_capacity(rec.len());
    for (i, field) in rec.iter().enumerate() {
        let text = std::str::from_utf8(field).map_err(|_| TrialError::NotUtf8 {
            file: file.into(),
            line,
            column: i + 1,
        })?;
        names.push(text.trim().to_string());
    }

    // The same header text twice.
    let mut first_of: HashMap<&str, usize> = HashMap::new();
    for (i, name) in names.iter().enumerate() {
        if name.is_empty() {
            continue;
        }
        if let Some(&first) = first_of.get(name.as_str()) {
            return Err(TrialError::DuplicateColumn {
                file: file.into(),
                line,
                name: shown(name),
                first: first + 1,
                second: i + 1,
            });
        }
        first_of.insert(name, i);
    }

    let lower: Vec<String> = names.iter().map(|n| n.to_ascii_lowercase()).collect();
    let find_all = |wanted: &[&str]| -> Vec<usize> {
        (0..lower.len())
            .filter(|&i| wanted.contains(&lower[i].as_str()))
            .collect()
    };
    let two = |cols: &[usize]| -> Result<(), TrialError> {
        if let [a, b, ..] = cols {
            return Err(TrialError::TwoClockColumns {
                file: file.into(),
                line,
                first: column(&names, *a),
                second: column(&names, *b),
            });
        }
        Ok(())
    };
    let time_cols = find_all(&["time", "time_s"]);
    let frame_cols = find_all(&["frame"]);
    two(&time_cols)?;
    let (clock, clock_col) = if let Some(&c) = time_cols.first() {
        (Clock::Seconds, c)
    } else if let Some(&c) = frame_cols.first() {
        two(&frame_cols)?;
        (Clock::Frames, c)
    } else {
        let hint = match names.as_slice() {
            [only] if only.contains(';') => "; the header looks separated by `;`: gravline reads \
                                             comma-separated files"
                .to_string(),
            [only] if only.contains('\t') => "; the header looks separated by tabs: gravline \
                                              reads comma-separated files"
                .to_string(),
            _ => String::new(),
        };
        return Err(TrialError::NoTimeColumn {
            file: file.into(),
            line,
            found: found_list(&names),
            hint,
        });
    };
    let is_clock = |i: usize| time_cols.contains(&i) || frame_cols.contains(&i);
    let ignored_name = |i: usize| -> String {
        match names.get(i) {
            Some(n) if !n.is_empty() => n.clone(),
            _ => format!("(unnamed column {})", i + 1),
        }
    };

    let marker_cols = find_all(&["marker"]);
    let layout;
    let mut ignored = Vec::new();
    if let Some(&marker) = marker_cols.first() {
        let mut xyz = [usize::MAX; 3];
        for (k, axis) in ["x", "y", "z", "marker"].iter().enumerate() {
            let cols = find_all(&[axis]);
            if let [a, b, ..] = cols.as_slice() {
                return Err(TrialError::DuplicateColumn {
                    file: file.into(),
                    line,
                    name: (*axis).into(),
                    first: a + 1,
                    second: b + 1,
                });
            }
            if let (Some(slot), Some(&c)) = (xyz.get_mut(k), cols.first()) {
                *slot = c;
            }
        }
        let missing: Vec<String> = ["x", "y", "z"]
            .iter()
            .zip(xyz)
            .filter(|(_, c)| *c == usize::MAX)
            .map(|(a, _)| format!("`{a}`"))
            .collect();
        if !missing.is_empty() {
            return Err(TrialError::TidyMissingColumn {
                file: file.into(),
                line,
                missing: missing.join(", "),
                found: found_list(&names),
            });
        }
        for i in 0..names.len() {
            if !is_clock(i) && i != marker && !xyz.contains(&i) {
                ignored.push(ignored_name(i));
            }
        }
        layout = Layout::Tidy { marker, xyz };
    } else {
        let mut labels: Vec<String> = Vec::new();
        let mut cols: Vec<[Option<usize>; 3]> = Vec::new();
        let mut index_of: HashMap<String, usize> = HashMap::new();
        for (i, name) in names.iter().enumerate() {
            if is_clock(i) {
                continue;
            }
            let Some((label, axis)) = marker_column(name) else {
                ignored.push(ignored_name(i));
                continue;
            };
            let m = match index_of.get(label) {
                Some(&m) => m,
                None => {
                    labels.push(label.to_string());
                    cols.push([None; 3]);
                    index_of.insert(label.to_string(), labels.len() - 1);
                    labels.len() - 1
                }
            };
            // `m` indexes `cols` by construction and `axis` is 0..3.
            let slot = &mut cols[m][axis];
            if let Some(first) = *slot {
                return Err(TrialError::DuplicateMarkerAxis {
                    file: file.into(),
                    line,
                    marker: shown(label),
                    axis: ['x', 'y', 'z'][axis],
                    columns: format!("{} and {}", column(&names, first), column(&names, i)),
                });
            }
            *slot = Some(i);
        }
        let mut xyz = Vec::with_capacity(cols.len());
        for (label, c) in labels.iter().zip(&cols) {
            match c {
                [Some(x), Some(y), Some(z)] => xyz.push([*x, *y, *z]),
                _ => {
                    let axes = ['x', 'y', 'z'];
                    let list = |present: bool| -> Vec<char> {
                        axes.iter()
                            .zip(c)
                            .filter(|(_, col)| col.is_some() == present)
                            .map(|(a, _)| *a)
                            .collect()
                    };
                    let join = |v: &[char]| {
                        v.iter()
                            .map(|a| a.to_string())
                            .collect::<Vec<_>>()
                            .join(", ")
                    };
                    let missing = list(false);
                    return Err(TrialError::IncompleteMarker {
                        file: file.into(),
                        line,
                        marker: shown(label),
                        present: join(&list(true)),
                        missing: join(&missing),
                        first_missing: missing.first().copied().unwrap_or('x'),
                    });
                }
            }
        }
        if labels.is_empty() {
            return Err(TrialError::NoMarkers {
                file: file.into(),
                line,
                found: found_list(&names),
            });
        }
        layout = Layout::Wide { labels, xyz };
    }
    Ok(Header {
        line,
        names,
        clock,
        clock_col,
        layout,
        ignored,
    })
}

// --- cells -----------------------------------------------------------------------------------

enum CellProblem {
    NotUtf8,
    NotANumber,
    Infinite,
}

/// Parses a coordinate-like cell: `Ok(None)` for empty and NaN, an error for text and infinity.
#[inline]
fn parse_cell(bytes: &[u8]) -> Result<Option<f64>, CellProblem> {
    let b = bytes.trim_ascii();
    if b.is_empty() {
        return Ok(None);
    }
    if let Some(v) = fast::decimal(b) {
        return Ok(Some(v));
    }
    let s = std::str::from_utf8(b).map_err(|_| CellProblem::NotUtf8)?;
    match s.parse::<f64>() {
        Ok(v) if v.is_nan() => Ok(None),
        Ok(v) if v.is_infinite() => Err(CellProblem::Infinite),
        Ok(v) => Ok(Some(v)),
        Err(_) => Err(CellProblem::NotANumber),
    }
}

/// Cell text for a message: control characters escaped, long text cut.
fn shown(text: &str) -> String {
    const MAX_CHARS: usize = 40;
    let mut out = String::new();
    for (n, c) in text.chars().enumerate() {
        if n == MAX_CHARS {
            out.push('…');
            break;
        }
        if c.is_control() || c == '`' {
            out.extend(c.escape_debug());
        } else {
            out.push(c);
        }
    }
    out
}

/// What a file is being read as, for errors with positions.
struct Ctx<'a> {
    file: &'a str,
    names: &'a [String],
}

impl Ctx<'_> {
    /// `Ok(true)` for a row as wide as the header, `Ok(false)` for a blank one (to skip).
    fn check_width(&self, rec: &ByteRecord, line: u64) -> Result<bool, TrialError> {
        if rec.len() == self.names.len() {
            return Ok(true);
        }
        if rec.iter().all(|f| f.trim_ascii().is_empty()) && rec.len() <= 1 {
            return Ok(false);
        }
        Err(TrialError::Ragged {
            file: self.file.into(),
            line,
            expected: self.names.len(),
            found: rec.len(),
        })
    }

    fn cell_text(rec: &ByteRecord, col: usize) -> String {
        shown(&String::from_utf8_lossy(
            rec.get(col).unwrap_or(b"").trim_ascii(),
        ))
    }

    fn coordinate_error(
        &self,
        problem: CellProblem,
        rec: &ByteRecord,
        line: u64,
        col: usize,
    ) -> TrialError {
        let file = self.file.into();
        let column = column(self.names, col);
        let text = Self::cell_text(rec, col);
        match problem {
            CellProblem::NotUtf8 => TrialError::NotUtf8 {
                file,
                line,
                column: col + 1,
            },
            CellProblem::NotANumber => TrialError::NotANumber {
                file,
                line,
                column,
                text,
                hint: "write a decimal number with `.` as the decimal mark, or leave the cell \
                       empty (or `NaN`) where the marker was not seen",
            },
            CellProblem::Infinite => TrialError::NonFiniteCoordinate {
                file,
                line,
                column,
                text,
            },
        }
    }

    /// The clock value of a row: seconds, or a whole frame number.
    #[inline]
    fn clock(
        &self,
        rec: &ByteRecord,
        line: u64,
        col: usize,
        clock: Clock,
    ) -> Result<f64, TrialError> {
        let parsed = parse_cell(rec.get(col).unwrap_or(b""));
        let err_column = || column(self.names, col);
        match parsed {
            Ok(Some(v)) => {
                // 2^53: beyond it not every whole number is exact in f64.
                if clock == Clock::Frames
                    && (v.fract() != 0.0 || v.abs() > 9.007_199_254_740_992e15)
                {
                    return Err(TrialError::NotAFrameNumber {
                        file: self.file.into(),
                        line,
                        column: err_column(),
                        text: Self::cell_text(rec, col),
                    });
                }
                Ok(v)
            }
            Ok(None) | Err(CellProblem::Infinite) => Err(TrialError::NonFiniteTime {
                file: self.file.into(),
                line,
                column: err_column(),
                text: Self::cell_text(rec, col),
            }),
            Err(CellProblem::NotUtf8) => Err(TrialError::NotUtf8 {
                file: self.file.into(),
                line,
                column: col + 1,
            }),
            Err(CellProblem::NotANumber) => Err(TrialError::NotANumber {
                file: self.file.into(),
                line,
                column: err_column(),
                text: Self::cell_text(rec, col),
                hint: match clock {
                    Clock::Seconds => "every row needs its time in seconds as a decimal number",
                    Clock::Frames => "every row needs its frame number as a whole number",
                },
            }),
        }
    }

    /// Three coordinates in metres, `None` if any is missing.
    #[inline]
    fn point(
        &self,
        rec: &ByteRecord,
        line: u64,
        cols: &[usize; 3],
        scale: f64,
    ) -> Result<Option<[f64; 3]>, TrialError> {
        let mut p = [0.0; 3];
        let mut seen = true;
        for (slot, &col) in p.iter_mut().zip(cols) {
            match parse_cell(rec.get(col).unwrap_or(b"")) {
                Ok(Some(v)) => *slot = v * scale,
                Ok(None) => seen = false,
                Err(problem) => return Err(self.coordinate_error(problem, rec, line, col)),
            }
        }
        Ok(if seen { Some(p) } else { None })
    }

    fn label(&self, bytes: &[u8], line: u64, col: usize) -> Result<String, TrialError> {
        if bytes.is_empty() {
            return Err(TrialError::EmptyMarkerLabel {
                file: self.file.into(),
                line,
                column: column(self.names, col),
            });
        }
        std::str::from_utf8(bytes)
            .map(str::to_string)
            .map_err(|_| TrialError::NotUtf8 {
                file: self.file.into(),
                line,
                column: col + 1,
            })
    }
}

// --- file and prelude ------------------------------------------------------------------------

/// The CSV part of a file (from the header on) and the bookkeeping that gives each record its
/// line in the file. The `csv` crate's own line counts go wrong on CRLF line ends and after
/// blank lines, so the bytes are watched on their way in: the offsets of the line feeds not yet
/// passed are kept, and each record's last line is the one holding its last byte.
struct Source<R: Read> {
    file: String,
    rdr: csv::Reader<NewlineLog<HeaderThenRest<R>>>,
    /// Offsets (in the CSV part) of line feeds read ahead but not yet passed.
    newlines: Rc<RefCell<VecDeque<u64>>>,
    /// Line feeds passed so far in the CSV part.
    passed: u64,
    /// Comment and blank lines before the header.
    prelude_lines: u64,
    /// Bytes before the header.
    prelude_bytes: u64,
}

impl<R: Read> Source<R> {
    /// Skips the comment and blank lines before the header and hands the rest to a CSV reader.
    fn open(reader: R, file: &str) -> Result<Self, TrialError> {
        let (header_line, rest, prelude_lines, prelude_bytes) = skip_prelude(reader, file)?;
        let newlines = Rc::new(RefCell::new(VecDeque::new()));
        let log = NewlineLog {
            inner: io::Cursor::new(header_line).chain(rest),
            read: 0,
            newlines: Rc::clone(&newlines),
        };
        let rdr = csv::ReaderBuilder::new()
            .has_headers(false)
            .flexible(true)
            .from_reader(log);
        Ok(Source {
            file: file.into(),
            rdr,
            newlines,
            passed: 0,
            prelude_lines,
            prelude_bytes,
        })
    }

    /// Reads the next record; its first line in the file (1-based), or `None` at the end.
    fn next(&mut self, rec: &mut ByteRecord) -> Result<Option<u64>, TrialError> {
        match self.rdr.read_byte_record(rec) {
            Ok(true) => {}
            Ok(false) => return Ok(None),
            Err(error) => {
                let line = self.prelude_lines + self.passed + 1;
                return Err(match error.into_kind() {
                    csv::ErrorKind::Io(error) => TrialError::Io {
                        file: self.file.clone(),
                        error,
                    },
                    kind => TrialError::Csv {
                        file: self.file.clone(),
                        line,
                        message: format!("{kind:?}").to_lowercase(),
                    },
                });
            }
        }
        // The reader stops after the record's terminator (after `\r` of a CRLF), so its last
        // byte lies on the record's last line.
        let last_byte = self.rdr.position().byte().saturating_sub(1);
        let mut pending = self.newlines.borrow_mut();
        while pending.front().is_some_and(|&at| at < last_byte) {
            pending.pop_front();
            self.passed += 1;
        }
        // Line feeds inside quoted cells: the record began that many lines earlier.
        let inside = rec.as_slice().iter().filter(|&&b| b == b'\n').count() as u64;
        Ok(Some(
            (self.prelude_lines + self.passed + 1).saturating_sub(inside),
        ))
    }

    /// Bytes of the CSV part read so far.
    fn bytes_read(&self) -> u64 {
        self.rdr.position().byte()
    }
}

/// The header line, read ahead while skipping comments, then the rest of the input.
type HeaderThenRest<R> = io::Chain<io::Cursor<Vec<u8>>, BufReader<R>>;

/// A reader that notes the offset of every line feed that passes through it.
struct NewlineLog<R> {
    inner: R,
    read: u64,
    newlines: Rc<RefCell<VecDeque<u64>>>,
}

impl<R: Read> Read for NewlineLog<R> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        let n = self.inner.read(buf)?;
        let chunk = buf.get(..n).unwrap_or_default();
        let mut pending = self.newlines.borrow_mut();
        for (i, _) in chunk.iter().enumerate().filter(|(_, &b)| b == b'\n') {
            pending.push_back(self.read + i as u64);
        }
        self.read += n as u64;
        Ok(n)
    }
}

/// Reads lines until the first that is neither blank nor a `#` comment. Returns that line
/// (the header), the rest of the input, the count of lines and bytes skipped.
fn skip_prelude<R: Read>(
    reader: R,
    file: &str,
) -> Result<(Vec<u8>, BufReader<R>, u64, u64), TrialError> {
    let mut buf = BufReader::with_capacity(1 << 16, reader);
    let mut line = Vec::new();
    let mut skipped = 0u64;
    let mut skipped_bytes = 0u64;
    loop {
        line.clear();
        let n = (&mut buf)
            .take(MAX_HEADER_LINE_BYTES + 1)
            .read_until(b'\n', &mut line)
            .map_err(|error| TrialError::Io {
                file: file.into(),
                error,
            })?;
        if n == 0 {
            return Err(TrialError::Empty { file: file.into() });
        }
        if line.len() as u64 > MAX_HEADER_LINE_BYTES {
            return Err(TrialError::LineTooLong {
                file: file.into(),
                line: skipped + 1,
                limit_bytes: MAX_HEADER_LINE_BYTES,
            });
        }
        if skipped == 0 && line.starts_with(&[0xEF, 0xBB, 0xBF]) {
            line.drain(..3);
            skipped_bytes += 3;
        }
        let content = line.trim_ascii();
        if content.is_empty() || content.starts_with(b"#") {
            skipped += 1;
            skipped_bytes += line.len() as u64;
            continue;
        }
        return Ok((line, buf, skipped, skipped_bytes));
    }
}

// --- the two layouts -------------------------------------------------------------------------

/// Rows as read: clock values (seconds or frame numbers), their lines, and the tracks.
struct Rows {
    clock: Vec<f64>,
    lines: Vec<u64>,
    labels: Vec<String>,
    tracks: Vec<Vec<Option<[f64; 3]>>>,
}

fn read_impl<R: Read>(
    reader: R,
    file: &str,
    stem: &str,
    opts: &ReadOptions,
    size_hint: Option<u64>,
) -> Result<Trial, TrialError> {
    if let Some(rate_hz) = opts.rate_hz {
        if !(rate_hz.is_finite() && rate_hz > 0.0) {
            return Err(TrialError::InvalidRate {
                file: file.into(),
                rate_hz,
                hint: "give `rate_hz` in [input] or `--rate-hz` as the recording's frame rate, \
                       for example 100",
            });
        }
    }
    let mut src = Source::open(reader, file)?;
    let mut rec = ByteRecord::new();
    let Some(header_line) = src.next(&mut rec)? else {
        return Err(TrialError::Empty { file: file.into() });
    };
    let header = parse_header(&rec, file, header_line)?;
    let clock_column = column(&header.names, header.clock_col);
    if header.clock == Clock::Frames && opts.rate_hz.is_none() {
        return Err(TrialError::MissingRate {
            file: file.into(),
            line: header.line,
            column: clock_column,
        });
    }
    let ctx = Ctx {
        file,
        names: &header.names,
    };
    let scale = opts.units.to_metres();
    let remaining = size_hint.map(|s| s.saturating_sub(src.prelude_bytes));
    let rows = match &header.layout {
        Layout::Wide { labels, xyz } => read_wide(
            &ctx, &mut src, &mut rec, &header, labels, xyz, scale, remaining,
        )?,
        Layout::Tidy { marker, xyz } => {
            read_tidy(&ctx, &mut src, &mut rec, &header, *marker, xyz, scale)?
        }
    };
    finish(rows, header, file, stem, opts)
}

/// The trial from its rows: times and rate (checked), warnings for ignored columns.
fn finish(
    rows: Rows,
    header: Header,
    file: &str,
    stem: &str,
    opts: &ReadOptions,
) -> Result<Trial, TrialError> {
    let clock_column = column(&header.names, header.clock_col);
    let Rows {
        clock,
        lines,
        labels,
        tracks,
    } = rows;
    if clock.is_empty() {
        return Err(TrialError::NoData {
            file: file.into(),
            line: header.line,
        });
    }

    let (times_s, rate_hz) = match (header.clock, opts.rate_hz) {
        (Clock::Frames, Some(given_hz)) => {
            let times_s: Vec<f64> = clock.iter().map(|f| f / given_hz).collect();
            check_intervals(&times_s, &lines, false, file, &clock_column)?;
            // Every k-th frame exported: the rows are sampled at the given rate / k.
            let steps: Vec<f64> = clock.windows(2).map(|w| w[1] - w[0]).collect();
            let step = if steps.is_empty() {
                1.0
            } else {
                median(&steps)
            };
            (times_s, given_hz / step)
        }
        (Clock::Frames, None) => {
            return Err(TrialError::MissingRate {
                file: file.into(),
                line: header.line,
                column: clock_column,
            })
        }
        (Clock::Seconds, given) => {
            let times_s = clock;
            let rate_hz = if times_s.len() < 2 {
                match given {
                    Some(r) => r,
                    None => {
                        return Err(TrialError::SingleFrame {
                            file: file.into(),
                            line: lines.first().copied().unwrap_or(header.line),
                        })
                    }
                }
            } else {
                check_intervals(&times_s, &lines, true, file, &clock_column)?;
                let rate_hz = 1.0 / fitted_interval_s(&times_s);
                if !(rate_hz.is_finite() && rate_hz > 0.0) {
                    return Err(TrialError::InvalidRate {
                        file: file.into(),
                        rate_hz,
                        hint: "the times are too close together to give a rate; check the time \
                               column's unit (seconds)",
                    });
                }
                if let Some(given_rate_hz) = given {
                    if (rate_hz / given_rate_hz - 1.0).abs() > RATE_TOLERANCE {
                        return Err(TrialError::RateMismatch {
                            file: file.into(),
                            file_rate_hz: rate_hz,
                            given_rate_hz,
                        });
                    }
                }
                rate_hz
            };
            (times_s, rate_hz)
        }
    };

    let warnings = if header.ignored.is_empty() {
        Vec::new()
    } else {
        vec![Warning::IgnoredColumns {
            columns: header.ignored,
        }]
    };
    Ok(Trial {
        name: stem.to_string(),
        file: file.to_string(),
        times_s,
        rate_hz,
        up_axis: opts.up_axis,
        markers: RawMarkers { labels, tracks },
        warnings,
    })
}

#[allow(clippy::too_many_arguments)]
fn read_wide<R: Read>(
    ctx: &Ctx,
    src: &mut Source<R>,
    rec: &mut ByteRecord,
    header: &Header,
    labels: &[String],
    xyz: &[[usize; 3]],
    scale: f64,
    remaining_bytes: Option<u64>,
) -> Result<Rows, TrialError> {
    let mut clock: Vec<f64> = Vec::new();
    let mut lines: Vec<u64> = Vec::new();
    let mut tracks: Vec<Vec<Option<[f64; 3]>>> = vec![Vec::new(); labels.len()];
    let n_fields = header.names.len() as u64;
    while let Some(line) = src.next(rec)? {
        if !ctx.check_width(rec, line)? {
            continue;
        }
        let value = ctx.clock(rec, line, header.clock_col, header.clock)?;
        if let (Some(&previous), Some(&previous_line)) = (clock.last(), lines.last()) {
            if value <= previous {
                return Err(TrialError::NotIncreasing {
                    file: ctx.file.into(),
                    line,
                    column: column(ctx.names, header.clock_col),
                    value,
                    previous,
                    previous_line,
                });
            }
        }
        for (track, cols) in tracks.iter_mut().zip(xyz) {
            track.push(ctx.point(rec, line, cols, scale)?);
        }
        clock.push(value);
        lines.push(line);
        if clock.len() == 1 {
            // Grow every Vec once, from the size of the first row and of the file.
            if let (Some(total), Some(start)) = (remaining_bytes, rec.position()) {
                let read = src.bytes_read();
                let row_bytes = read.saturating_sub(start.byte()).max(1);
                let left = total.saturating_sub(read);
                let estimate = (left / row_bytes + left / row_bytes / 50 + 16)
                    .min(left / n_fields.max(1) + 1)
                    .min(1 << 28) as usize;
                clock.reserve(estimate);
                lines.reserve(estimate);
                for track in &mut tracks {
                    track.reserve(estimate);
                }
            }
        }
    }
    let n = clock.len();
    for track in &mut tracks {
        if track.capacity() > n + n / 8 + 64 {
            track.shrink_to_fit();
        }
    }
    Ok(Rows {
        clock,
        lines,
        labels: labels.to_vec(),
        tracks,
    })
}

fn read_tidy<R: Read>(
    ctx: &Ctx,
    src: &mut Source<R>,
    rec: &mut ByteRecord,
    header: &Header,
    marker_col: usize,
    xyz: &[usize; 3],
    scale: f64,
) -> Result<Rows, TrialError> {
    let mut frame_of: HashMap<u64, usize> = HashMap::new();
    let mut clock: Vec<f64> = Vec::new();
    let mut lines: Vec<u64> = Vec::new();
    let mut marker_of: HashMap<Vec<u8>, usize> = HashMap::new();
    let mut labels: Vec<String> = Vec::new();
    let mut tracks: Vec<Vec<Option<[f64; 3]>>> = Vec::new();
    let mut seen: Vec<Vec<bool>> = Vec::new();
    let mut last: Option<(u64, usize)> = None;
    let mut rows = 0u64;
    let sparse = |line: u64, markers: usize, frames: usize, rows: u64| -> Result<(), TrialError> {
        let cells = markers.saturating_mul(frames);
        let allowed = (rows as usize)
            .saturating_mul(TIDY_CELLS_PER_ROW)
            .saturating_add(TIDY_SPARSE_ALLOWANCE);
        if cells > allowed {
            return Err(TrialError::TidySparse {
                file: ctx.file.into(),
                line,
                markers,
                frames,
                rows,
            });
        }
        Ok(())
    };
    // Invariant: every track and every `seen` row has one entry per frame (`clock.len()`).
    while let Some(line) = src.next(rec)? {
        if !ctx.check_width(rec, line)? {
            continue;
        }
        rows += 1;
        let value = ctx.clock(rec, line, header.clock_col, header.clock)?;
        // -0.0 and 0.0 are the same frame.
        let key = if value == 0.0 { 0.0f64 } else { value }.to_bits();
        let frame = match last {
            Some((k, f)) if k == key => f,
            _ => match frame_of.get(&key) {
                Some(&f) => f,
                None => {
                    let f = clock.len();
                    sparse(line, tracks.len(), f + 1, rows)?;
                    clock.push(value);
                    lines.push(line);
                    for t in &mut tracks {
                        t.push(None);
                    }
                    for s in &mut seen {
                        s.push(false);
                    }
                    frame_of.insert(key, f);
                    f
                }
            },
        };
        last = Some((key, frame));
        let label_bytes = rec.get(marker_col).unwrap_or(b"").trim_ascii();
        let m = match marker_of.get(label_bytes) {
            Some(&m) => m,
            None => {
                let label = ctx.label(label_bytes, line, marker_col)?;
                sparse(line, tracks.len() + 1, clock.len(), rows)?;
                labels.push(label);
                tracks.push(vec![None; clock.len()]);
                seen.push(vec![false; clock.len()]);
                marker_of.insert(label_bytes.to_vec(), tracks.len() - 1);
                tracks.len() - 1
            }
        };
        let point = ctx.point(rec, line, xyz, scale)?;
        // `m < tracks.len() == seen.len()` and `frame < clock.len()`, the length of each track.
        if seen[m][frame] {
            let at = match header.clock {
                Clock::Seconds => format!("time {value} s"),
                Clock::Frames => format!("frame {value}"),
            };
            return Err(TrialError::TidyDuplicate {
                file: ctx.file.into(),
                line,
                marker: shown(&labels[m]),
                at,
            });
        }
        seen[m][frame] = true;
        tracks[m][frame] = point;
    }
    if !clock.windows(2).all(|w| w[0] < w[1]) {
        // Rows came marker by marker or shuffled: put the frames in time order.
        let mut order: Vec<usize> = (0..clock.len()).collect();
        order.sort_by(|&a, &b| clock[a].total_cmp(&clock[b]));
        clock = order.iter().map(|&i| clock[i]).collect();
        lines = order.iter().map(|&i| lines[i]).collect();
        for track in &mut tracks {
            *track = order.iter().map(|&i| track[i]).collect();
        }
    }
    Ok(Rows {
        clock,
        lines,
        labels,
        tracks,
    })
}

// --- rate ------------------------------------------------------------------------------------

/// Checks every frame interval against the median interval (strictly increasing times).
/// With `allow_rounding`, times written on a coarse decimal grid may also be off by that grid.
fn check_intervals(
    times_s: &[f64],
    lines: &[u64],
    allow_rounding: bool,
    file: &str,
    clock_column: &Column,
) -> Result<(), TrialError> {
    if times_s.len() < 2 {
        return Ok(());
    }
    let intervals: Vec<f64> = times_s.windows(2).map(|w| w[1] - w[0]).collect();
    let median_s = median(&intervals);
    let strict = RATE_TOLERANCE * median_s;
    let first_bad = |tol: f64| intervals.iter().position(|d| (d - median_s).abs() > tol);
    let Some(mut bad) = first_bad(strict) else {
        return Ok(());
    };
    if allow_rounding {
        if let Some(step_s) = time_grid_step_s(times_s, 0.5 * median_s) {
            match first_bad(strict + step_s) {
                None => return Ok(()),
                Some(b) => bad = b,
            }
        }
    }
    // Interval `bad` ends at frame `bad + 1`.
    Err(TrialError::UnevenRate {
        file: file.into(),
        line: lines.get(bad + 1).copied().unwrap_or(0),
        column: clock_column.clone(),
        interval_s: intervals.get(bad).copied().unwrap_or(f64::NAN),
        median_s,
    })
}

/// The middle value (the upper one for an even count); `values` non-empty and finite.
fn median(values: &[f64]) -> f64 {
    let mut v = values.to_vec();
    let mid = v.len() / 2;
    if v.is_empty() {
        return f64::NAN;
    }
    let (_, m, _) = v.select_nth_unstable_by(mid, |a, b| a.total_cmp(b));
    *m
}

/// The coarsest power of ten, at most `max_step_s`, on whose grid every time lies (the step the
/// times were rounded to when written), or `None`.
fn time_grid_step_s(times_s: &[f64], max_step_s: f64) -> Option<f64> {
    if !(max_step_s.is_finite() && max_step_s > 0.0) {
        return None;
    }
    let top = max_step_s.log10().floor() as i32;
    if top < -12 {
        return None;
    }
    let top = top.min(6);
    (-12..=top).rev().find_map(|k| {
        let step = if k >= 0 {
            10f64.powi(k)
        } else {
            1.0 / 10f64.powi(-k)
        };
        let on_grid = times_s.iter().all(|&t| {
            let r = (t / step).round();
            (t - r * step).abs() <= 1e-6 * step + 8.0 * f64::EPSILON * t.abs()
        });
        on_grid.then_some(step)
    })
}

/// Least-squares slope of time against frame index, in seconds per frame (at least 2 times).
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
    fn marker_column_accepts_three_separators_and_any_case() {
        assert_eq!(marker_column("r_heel_x"), Some(("r_heel", 0)));
        assert_eq!(marker_column("r_heel.Y"), Some(("r_heel", 1)));
        assert_eq!(marker_column("r_heel:z"), Some(("r_heel", 2)));
        assert_eq!(marker_column("_x"), None);
        assert_eq!(marker_column("r_heel_w"), None);
        assert_eq!(marker_column("é_x"), Some(("é", 0)));
    }

    #[test]
    fn parse_cell_reads_numbers_and_missing() {
        assert_eq!(parse_cell(b" 1.5 ").ok(), Some(Some(1.5)));
        assert_eq!(parse_cell(b"").ok(), Some(None));
        assert_eq!(parse_cell(b"NaN").ok(), Some(None));
        assert_eq!(parse_cell(b"nan").ok(), Some(None));
        assert!(matches!(parse_cell(b"inf"), Err(CellProblem::Infinite)));
        assert!(matches!(parse_cell(b"1.2.3"), Err(CellProblem::NotANumber)));
        assert!(matches!(
            parse_cell(&[0xff, b'1']),
            Err(CellProblem::NotUtf8)
        ));
    }

    #[test]
    fn grid_step_of_millisecond_stamps() {
        // 150 Hz stamped to the millisecond: 0, 7, 13, 20 ms ...
        let times: Vec<f64> = (0..20)
            .map(|i| (i as f64 / 150.0 * 1000.0).round() / 1000.0)
            .collect();
        assert_eq!(time_grid_step_s(&times, 0.5 / 150.0), Some(0.001));
        // Exact 100 Hz times lie on the 1 ms grid too (the coarsest at most half a frame).
        let exact: Vec<f64> = (0..20).map(|i| i as f64 / 100.0).collect();
        assert_eq!(time_grid_step_s(&exact, 0.005), Some(0.001));
    }

    #[test]
    fn fitted_interval_of_exact_times() {
        let times: Vec<f64> = (0..11).map(|i| 0.5 + i as f64 * 0.004).collect();
        approx::assert_relative_eq!(fitted_interval_s(&times), 0.004, max_relative = 1e-12);
    }

    #[test]
    fn median_is_the_middle_value() {
        assert_eq!(median(&[3.0, 1.0, 2.0]), 2.0);
        assert_eq!(median(&[4.0, 1.0, 2.0, 3.0]), 3.0);
    }
}
