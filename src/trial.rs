//! Stage 1, reading: a trial CSV (wide or tidy layout, docs/DESIGN.md 3.1) becomes a [`Trial`]:
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
//! - Lab exports: cells separated by `;` (then `,` may be the decimal mark) or tabs, found on
//!   the header line, and a header of two rows (marker names over `X`, `Y`, `Z`): see
//!   [`header`]'s module doc.
//!
//! # Rate
//! Times must increase strictly from row to row (wide layout; tidy frames are put in time
//! order). The frame interval is checked against the median interval:
//! more than 1 % off is an error naming the first offending line (docs/DESIGN.md 3.1). When the
//! times are written rounded to a coarser step than the recording's clock (for example 150 Hz
//! stamped to the millisecond: intervals alternate 6 ms and 7 ms), each interval may also
//! differ by that rounding step, found as the coarsest power-of-ten grid that every time lies
//! on, provided it is at most half a frame; a dropped frame is still caught. The rate is the
//! reciprocal of the least-squares slope of time against frame index (common practice, no
//! source), which the rounding of single stamps barely moves. With a `frame` column it is the
//! given rate, divided by the frame step when only every k-th frame was exported (frames 0, 2,
//! 4 at 100 Hz are rows 50 Hz apart). A `rate_hz` given for a file with a time column must
//! agree with the times within 1 %. [`Trial::times_s`] keeps the times as written; stages that
//! need a uniform step use [`Trial::rate_hz`]. With [`MissingFrames::Gap`] a frame interval
//! that is a whole multiple of the median interval is read as dropped frames, put back as
//! frames where no marker was seen (module `rate`).
//!
//! # Errors
//! Every problem is a [`TrialError`] whose message is one lowercase line naming the file, the
//! line (1-based, comments included) and the column (1-based index and header text) and saying
//! how to fix it. No input makes the reader panic.
//!
//! # One reader
//! Every entry point reads the whole file into memory first (a file is mapped, a pipe read)
//! and goes through one header reader and one row reader ([`read_trial_bytes`]); the rows of a
//! plain wide file are parsed on several threads by line ranges, stepping aside to the general
//! row loop whenever a row is unusual, so that errors are reported with their positions.

use std::io::{self, Read};
use std::path::Path;

use crate::warning::Warning;

mod axes;
mod cells;
mod error;
mod fast;
pub mod header;
mod rate;
mod rows;

pub use axes::{LengthUnit, Seconds, UpAxis};
pub use error::{Column, Position, TrialError, TrialErrorKind};

use error::TrialErrorKind as Kind;
use header::Layout;

/// What a frame interval that is a whole multiple of the median interval means.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum MissingFrames {
    /// An uneven rate: an error naming the line (the default).
    #[default]
    Error,
    /// Dropped frames: put back, with every marker unseen in them.
    Gap,
}

impl MissingFrames {
    /// Whether this is the default, [`MissingFrames::Error`].
    pub fn is_error(&self) -> bool {
        *self == MissingFrames::Error
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
    /// Whether dropped frames are an error or gaps.
    pub missing_frames: MissingFrames,
}

impl Default for ReadOptions {
    fn default() -> Self {
        ReadOptions {
            units: LengthUnit::Millimetres,
            up_axis: UpAxis::Z,
            rate_hz: None,
            missing_frames: MissingFrames::Error,
        }
    }
}

/// Marker trajectories as read: one track per label, one sample per frame, in metres, lab
/// frame. A sample is `None` where the marker was not seen: the tracks are held flat with NaN
/// coordinates there, and read through [`RawMarkers::point`] and [`RawMarkers::points`], so
/// that "gappy until filled" stays in the type.
#[derive(Clone, Debug, Default)]
pub struct RawMarkers {
    /// Marker labels, in the order of the file (header order, or first appearance in tidy).
    pub labels: Vec<String>,
    /// `tracks[marker][frame]`, NaN coordinates where not seen.
    tracks: Vec<Vec<[f64; 3]>>,
}

/// A sample with a coordinate that is not finite is not seen.
#[inline]
fn seen(p: [f64; 3]) -> Option<[f64; 3]> {
    p.iter().all(|c| c.is_finite()).then_some(p)
}

impl RawMarkers {
    /// Markers from flat tracks (`tracks[marker][frame]`, a non-finite coordinate where the
    /// marker was not seen), one per label.
    pub fn new(labels: Vec<String>, tracks: Vec<Vec<[f64; 3]>>) -> RawMarkers {
        RawMarkers { labels, tracks }
    }

    /// Markers from tracks of optional samples (`None` where not seen).
    pub fn from_options(labels: Vec<String>, tracks: Vec<Vec<Option<[f64; 3]>>>) -> RawMarkers {
        let tracks = tracks
            .into_iter()
            .map(|t| t.into_iter().map(|p| p.unwrap_or([f64::NAN; 3])).collect())
            .collect();
        RawMarkers { labels, tracks }
    }

    /// Index of a label, if present (exact match).
    pub fn index_of(&self, label: &str) -> Option<usize> {
        self.labels.iter().position(|l| l == label)
    }

    /// Number of tracks.
    pub fn n_markers(&self) -> usize {
        self.tracks.len()
    }

    /// Samples in the track of `marker` (0 for no such marker).
    pub fn track_len(&self, marker: usize) -> usize {
        self.tracks.get(marker).map_or(0, Vec::len)
    }

    /// The sample of `marker` at `frame`: `None` where it was not seen (or out of range).
    #[inline]
    pub fn point(&self, marker: usize, frame: usize) -> Option<[f64; 3]> {
        seen(*self.tracks.get(marker)?.get(frame)?)
    }

    /// The samples of `marker`, frame by frame (empty for no such marker).
    pub fn points(&self, marker: usize) -> impl Iterator<Item = Option<[f64; 3]>> + '_ {
        self.tracks
            .get(marker)
            .map_or(&[][..], Vec::as_slice)
            .iter()
            .map(|&p| seen(p))
    }

    /// Applies `f` to every seen sample, in place (a rigid motion of the lab, a unit change).
    pub fn map_points(&mut self, mut f: impl FnMut([f64; 3]) -> [f64; 3]) {
        for p in self.tracks.iter_mut().flatten() {
            if let Some(q) = seen(*p) {
                *p = f(q);
            }
        }
    }

    /// The flat tracks, for gap filling to take over in place.
    pub(crate) fn into_tracks(self) -> Vec<Vec<[f64; 3]>> {
        self.tracks
    }

    /// Takes the flat tracks out, leaving the labels (and no tracks).
    pub(crate) fn take_tracks(&mut self) -> Vec<Vec<[f64; 3]>> {
        std::mem::take(&mut self.tracks)
    }
}

/// Equal labels and, frame by frame, the same samples seen and not seen.
impl PartialEq for RawMarkers {
    fn eq(&self, other: &Self) -> bool {
        self.labels == other.labels
            && self.tracks.len() == other.tracks.len()
            && self.tracks.iter().zip(&other.tracks).all(|(a, b)| {
                a.len() == b.len() && a.iter().zip(b).all(|(&p, &q)| seen(p) == seen(q))
            })
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
    pub warnings: Vec<Warning>,
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

/// Largest relative difference between a frame interval and the median interval (docs/DESIGN.md 3.1).
pub const RATE_TOLERANCE: f64 = 0.01;

/// A tidy file may describe at most this many (frame, marker) cells per row read, plus
/// [`TIDY_SPARSE_ALLOWANCE`]; beyond that the marker or clock column is not what it seems and
/// the dense tracks would not fit in memory.
const TIDY_CELLS_PER_ROW: usize = 8;
const TIDY_SPARSE_ALLOWANCE: usize = 1 << 20;

/// Reads a trial file on the calling thread; the trial is named after the file stem.
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
    let bytes =
        TrialBytes::open(path).map_err(|error| TrialError::new(&file_name, Kind::Io(error)))?;
    read_trial_bytes(&bytes, &file_name, &stem, opts, 1)
}

/// Reads a trial from any reader (memory, a pipe, stdin), read into memory first;
/// `name_for_errors` names it in messages and `stem` becomes [`Trial::name`].
///
/// ```
/// use gravline::trial::{read_trial_from, ReadOptions};
/// let csv = "# two frames\ntime,c7_x,c7_y,c7_z\n0.00,1,2,1400\n0.01,1,2,1401\n";
/// let trial = read_trial_from(csv.as_bytes(), "mem.csv", "mem", &ReadOptions::default())?;
/// assert_eq!(trial.n_frames(), 2);
/// assert!((trial.rate_hz - 100.0).abs() < 1e-9);
/// let c7 = trial.markers.point(0, 1).unwrap_or_default();
/// assert!((c7[2] - 1.401).abs() < 1e-12); // 1401 mm in metres
/// # Ok::<(), gravline::trial::TrialError>(())
/// ```
pub fn read_trial_from(
    mut reader: impl Read,
    name_for_errors: &str,
    stem: &str,
    opts: &ReadOptions,
) -> Result<Trial, TrialError> {
    let mut bytes = Vec::new();
    reader
        .read_to_end(&mut bytes)
        .map_err(|error| TrialError::new(name_for_errors, Kind::Io(error)))?;
    read_trial_bytes(&bytes, name_for_errors, stem, opts, 1)
}

/// Reads a trial held in memory (the whole file). The rows of a wide file without quotes are
/// parsed in up to `threads` pieces at once (line ranges; 1 = on the calling thread only);
/// anything else, and every file with a problem, goes through the general row reader, so the
/// result and the errors do not depend on `threads`.
///
/// ```
/// use gravline::trial::{read_trial_bytes, ReadOptions};
/// let csv = b"time,c7_x,c7_y,c7_z\n0.00,1,2,1400\n0.01,1,2,\n";
/// let trial = read_trial_bytes(csv, "mem.csv", "mem", &ReadOptions::default(), 2)?;
/// assert_eq!(trial.markers.point(0, 1), None); // a coordinate is missing
/// # Ok::<(), gravline::trial::TrialError>(())
/// ```
pub fn read_trial_bytes(
    bytes: &[u8],
    name_for_errors: &str,
    stem: &str,
    opts: &ReadOptions,
    threads: usize,
) -> Result<Trial, TrialError> {
    read_impl(
        bytes,
        name_for_errors,
        stem,
        opts,
        Some((threads, fast::MIN_PIECE_BYTES)),
    )
    .map(|(trial, _)| trial)
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
            // Mapping instead of reading saves zeroing fresh pages for the whole file
            // (measured on a 133 MB trial: `process_file` 0.81 s read, 0.72 s mapped).
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

/// The marker labels of a trial file, in file order, without reading its numbers (for the
/// `landmarks` mapping template). The header is checked as [`read_trial`] checks it; a tidy
/// file's `marker` column is scanned for its distinct labels.
pub fn read_labels(path: &Path) -> Result<Vec<String>, TrialError> {
    let file_name = path.display().to_string();
    let bytes =
        TrialBytes::open(path).map_err(|error| TrialError::new(&file_name, Kind::Io(error)))?;
    labels_of(&bytes, &file_name)
}

/// [`read_labels`] from any reader; `name_for_errors` names it in messages.
pub fn read_labels_from(
    mut reader: impl Read,
    name_for_errors: &str,
) -> Result<Vec<String>, TrialError> {
    let mut bytes = Vec::new();
    reader
        .read_to_end(&mut bytes)
        .map_err(|error| TrialError::new(name_for_errors, Kind::Io(error)))?;
    labels_of(&bytes, name_for_errors)
}

fn labels_of(bytes: &[u8], file: &str) -> Result<Vec<String>, TrialError> {
    let (mut src, header) = header::read_header(bytes, file)?;
    match header.layout {
        Layout::Wide { labels, .. } => Ok(labels),
        Layout::Tidy { marker, .. } => {
            let ctx = cells::Ctx {
                file,
                names: &header.names,
                format: header.format,
            };
            let mut seen = std::collections::HashSet::<Vec<u8>>::new();
            let mut labels = Vec::new();
            let mut rec = csv::ByteRecord::new();
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

/// The reader: the header, then the rows of a plain wide file on `parallel = (threads,
/// smallest piece in bytes)` when given and possible, else (and on any problem) by the
/// general row loop. The trial, and whether the parallel reader read its rows.
fn read_impl(
    bytes: &[u8],
    file: &str,
    stem: &str,
    opts: &ReadOptions,
    parallel: Option<(usize, usize)>,
) -> Result<(Trial, bool), TrialError> {
    if let Some(rate_hz) = opts.rate_hz {
        if !(rate_hz.is_finite() && rate_hz > 0.0) {
            return Err(TrialError::new(
                file,
                Kind::InvalidRate {
                    rate_hz,
                    hint: "give `rate_hz` in [input] or `--rate-hz` as the recording's frame \
                           rate, for example 100",
                },
            ));
        }
    }
    let (mut src, header) = header::read_header(bytes, file)?;
    if header.clock == header::Clock::Frames && opts.rate_hz.is_none() {
        let column = header.column(header.clock_col);
        return Err(TrialError::cell(
            file,
            header.line,
            column,
            Kind::MissingRate,
        ));
    }
    let scale = opts.units.to_metres();
    if let (Layout::Wide { labels, xyz }, Some((threads, min_piece_bytes))) =
        (&header.layout, parallel)
    {
        let (start, first_line) = src.next_start();
        let layout = fast::RowLayout::new(&header, xyz, scale);
        let data = src.data().get(start..).unwrap_or_default();
        if let Some((clock, lines, tracks)) =
            fast::parse_rows(data, first_line, &layout, threads, min_piece_bytes)
        {
            if !clock.is_empty() {
                let rows = rate::Rows {
                    clock,
                    lines,
                    labels: labels.clone(),
                    tracks,
                };
                return Ok((rate::finish(rows, header, file, stem, opts)?, true));
            }
        }
    }
    let ctx = cells::Ctx {
        file,
        names: &header.names,
        format: header.format,
    };
    let rows = match &header.layout {
        Layout::Wide { labels, xyz } => {
            rows::read_wide(&ctx, &mut src, &header, labels, xyz, scale)?
        }
        Layout::Tidy { marker, xyz } => {
            rows::read_tidy(&ctx, &mut src, &header, *marker, xyz, scale)?
        }
    };
    Ok((rate::finish(rows, header, file, stem, opts)?, false))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The general reader's result, for comparison: the trial, or the error's message.
    fn general(bytes: &[u8], opts: &ReadOptions) -> Result<Trial, String> {
        read_impl(bytes, "t.csv", "t", opts, None)
            .map(|(t, _)| t)
            .map_err(|e| e.to_string())
    }

    /// The reader with pieces of a byte or more, and whether the parallel reader read the rows.
    fn in_pieces(
        bytes: &[u8],
        opts: &ReadOptions,
        threads: usize,
    ) -> (Result<Trial, String>, bool) {
        match read_impl(bytes, "t.csv", "t", opts, Some((threads, 1))) {
            Ok((trial, fast)) => (Ok(trial), fast),
            Err(e) => (Err(e.to_string()), false),
        }
    }

    #[test]
    fn pieces_give_the_general_readers_trial_or_step_aside() {
        let base = "# comment\n\ntime,a_x,a_y,a_z,note,b_x,b_y,b_z\n\
                    0.00,1,2,3,x,4,5,6\n0.01,1.5,,3,y,4,5,6\n0.02,NaN,2,3,,4.25,5,6\n\
                    0.03,1,2,3,z,-4,5,6e1\n0.04, 7 ,2,3,,4,5,6\n";
        let crlf = base.replace('\n', "\r\n");
        let blank = base.replace("0.02", "\n\n0.02").replace("0.04", "  \n0.04");
        let no_end = base.trim_end().to_string();
        let frames = base.replace("time", "frame").replace("0.0", "");
        let bom = format!("\u{feff}{base}");
        let millis = "time,a_x,a_y,a_z\n0.000,1,2,3\n0.007,1,2,3\n0.013,1,2,3\n0.020,1,2,3\n";
        let opts = ReadOptions::default();
        let rated = ReadOptions {
            rate_hz: Some(100.0),
            ..ReadOptions::default()
        };
        for text in [base, &crlf, &blank, &no_end, &frames, &bom, millis] {
            for o in [&opts, &rated] {
                for threads in 1..=4 {
                    assert_eq!(
                        in_pieces(text.as_bytes(), o, threads).0,
                        general(text.as_bytes(), o),
                        "{text:?}, {threads} threads"
                    );
                }
            }
        }
        // These files go through the fast path (none steps aside).
        for text in [base, &crlf, &blank, &no_end, &bom] {
            let (read, fast) = in_pieces(text.as_bytes(), &opts, 3);
            assert!(read.is_ok() && fast, "{text:?}");
        }
        assert!(in_pieces(frames.as_bytes(), &rated, 2).1);
        // Problems step aside, for the general reader to report with their positions.
        for bad in [
            base.replace("1.5", "1.5.1"),
            base.replace("0.03", "0.01"),
            base.replace(",y,", ",\"y\","),
            base.replace("4.25,", ""),
            base.replace("0.01,", "0.01\r,"),
            base.replace("6e1", "inf"),
            base.replace("0.02", ""),
        ] {
            let (read, fast) = in_pieces(bad.as_bytes(), &opts, 2);
            assert_eq!(read, general(bad.as_bytes(), &opts), "{bad:?}");
            assert!(!fast, "{bad:?}");
        }
        assert!(!in_pieces(frames.as_bytes(), &opts, 2).1);
    }

    /// Random edits of small files (bytes and tokens of the format, carriage returns among
    /// them) read the same through the parallel rows, cut into pieces of a byte and more on 1
    /// to 4 threads, and through the general row loop.
    #[test]
    fn parallel_rows_agree_with_the_general_loop_on_mutated_files() {
        const BYTES: &[u8] = b",;\t\n\r#\". -e_xX\x00\xff 1";
        const TOKENS: &[&str] = &[
            "NaN", "inf", "1e3", ",", "\n", "\r\n", "\r", "-0", "\"", "  ", "0.01", "+2", "1.",
            "2,5", "\r\r\n", "# c\r",
        ];
        let bases = [
            "# c\ntime,a_x,a_y,a_z,n,b_x,b_y,b_z\n0,1,2,3,x,4,5,6\n0.01,1.5,,3,,4,5,6\n\
             0.02,1,2,3,y,4,5,6\n0.03,1,2,3,,4,5,6\n",
            "frame,a_x,a_y,a_z\n1,1,2,3\n2,1,2,3\n3,1,2,3\n4,1,2,3\n",
            "time;a_x;a_y;a_z\n0,00;1,5;2;3\n0,01;1;2;3\n0,02;1;2;3\n",
            "Time,a,,\n,X,Y,Z\n0,1,2,3\n0.01,1,2,3\n0.02,1,2,3\n",
        ];
        // xorshift64 (Marsaglia 2003).
        let mut state = 0x9e37_79b9_7f4a_7c15u64;
        let mut below = |n: usize| {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            (state % n.max(1) as u64) as usize
        };
        let opts = ReadOptions::default();
        let rated = ReadOptions {
            rate_hz: Some(100.0),
            ..ReadOptions::default()
        };
        let mut fast_reads = 0;
        for case in 0..4000 {
            let mut v = bases[case % bases.len()].as_bytes().to_vec();
            for _ in 0..1 + below(3) {
                let at = below(v.len() + 1);
                match below(4) {
                    0 if at < v.len() => v[at] = BYTES[below(BYTES.len())],
                    1 if at < v.len() => {
                        v.remove(at);
                    }
                    2 => {
                        let token = TOKENS[below(TOKENS.len())].as_bytes();
                        v.splice(at..at, token.iter().copied());
                    }
                    _ => v.truncate(at),
                }
            }
            let o = if case % 3 == 1 { &rated } else { &opts };
            let want = general(&v, o);
            for threads in 1..=4 {
                let (got, fast) = in_pieces(&v, o, threads);
                assert_eq!(got, want, "case {case}: {:?}", String::from_utf8_lossy(&v));
                fast_reads += usize::from(fast);
            }
        }
        assert!(fast_reads > 1000, "{fast_reads} parallel reads");
    }
}
