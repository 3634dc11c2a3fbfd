//! The data section of a C3D file (C3D user guide, c3d.org, "3-D point data", "Analog data"):
//! frame after frame, each frame's points in POINT:LABELS order (X, Y, Z and the residual word),
//! then that frame's analog samples (sample 1 of every channel, then sample 2, ...).
//!
//! - Integer storage (POINT:SCALE > 0): 16-bit words, coordinates times POINT:SCALE, the product
//!   rounded to a 32-bit float (the precision of float storage, so that the two storages of one
//!   recording read the same to the bit).
//! - Float storage (POINT:SCALE < 0): 32-bit floats, coordinates as stored; the residual float
//!   is converted to an integer (toward zero) first, and a coordinate that is not a finite
//!   number makes the sample invalid.
//! - A negative residual word marks an invalid sample (stored here as NaN coordinates).
//! - Analog value = (stored - ANALOG:OFFSET) x ANALOG:SCALE x ANALOG:GEN_SCALE, for both
//!   storages; integer samples are signed unless ANALOG:FORMAT is `UNSIGNED`.
//!
//! The layout ([`Layout`]) is settled from the parameters first (the header where a parameter
//! is missing) and checked against the file's length before anything is allocated, so every
//! allocation is bounded by the size of the file.

use super::header::{Header, BLOCK};
use super::numbers::Processor;
use super::params::Parameters;

/// Highest frame rate accepted, Hz (common practice, no source: capture systems record 3-D
/// points at up to a few kHz; more is a corrupted value).
pub const MAX_RATE_HZ: f64 = 1.0e6;

/// Most analog samples per channel per frame accepted (more is a corrupted rate).
pub const MAX_SAMPLES_PER_FRAME: usize = 1 << 16;

/// How the data section is laid out.
#[derive(Clone, Debug, PartialEq)]
pub struct Layout {
    pub n_points: usize,
    /// POINT:SCALE as stored (negative for float storage).
    pub scale: f64,
    pub float: bool,
    pub rate_hz: f64,
    pub data_start_block: usize,
    pub n_frames: usize,
    /// Number of the first stored frame (1-based, as the file numbers it).
    pub first_frame: u64,
    pub n_analog: usize,
    pub analog_samples_per_frame: usize,
    pub analog_rate_hz: f64,
}

impl Layout {
    /// Values (words or floats) per frame.
    pub fn values_per_frame(&self) -> usize {
        4 * self.n_points + self.n_analog * self.analog_samples_per_frame
    }

    /// Bytes per frame.
    pub fn bytes_per_frame(&self) -> usize {
        self.values_per_frame() * if self.float { 4 } else { 2 }
    }
}

fn differ(warnings: &mut Vec<String>, what: &str, head: String, param: String) {
    warnings.push(format!(
        "the header gives {what} as {head}, the parameter section as {param}; the parameter section is used"
    ))
}

fn num(params: &Parameters, group: &str, name: &str, unsigned: bool) -> Option<f64> {
    let p = params.get(group, name)?;
    if unsigned {
        p.first_unsigned()
    } else {
        p.first()
    }
}

/// Settles the layout from the parameters and the header; `warnings` gets every disagreement
/// between them (the parameter wins). Errors are one line, without the file name.
pub fn layout(
    header: &Header,
    params: &Parameters,
    file_len: usize,
    warnings: &mut Vec<String>,
) -> Result<Layout, String> {
    let n_points = match num(params, "POINT", "USED", true) {
        Some(v) => {
            if v as u16 != header.n_points {
                differ(
                    warnings,
                    "the number of points",
                    header.n_points.to_string(),
                    format!("{v} (POINT:USED)"),
                );
            }
            v as usize
        }
        None => header.n_points as usize,
    };
    let scale = match num(params, "POINT", "SCALE", false) {
        Some(v) => {
            if v as f32 != header.scale && !(header.scale == 0.0 && n_points == 0) {
                differ(
                    warnings,
                    "the point scale",
                    header.scale.to_string(),
                    format!("{v} (POINT:SCALE)"),
                );
            }
            v
        }
        None => header.scale as f64,
    };
    if !scale.is_finite() || scale == 0.0 {
        return Err(format!(
            "POINT:SCALE is {scale}; it must be a finite number, positive for integer and negative for float storage"
        ));
    }
    let float = scale < 0.0;
    let rate_hz = match num(params, "POINT", "RATE", false) {
        Some(v) => {
            if v as f32 != header.rate_hz {
                differ(
                    warnings,
                    "the frame rate",
                    format!("{} Hz", header.rate_hz),
                    format!("{v} Hz (POINT:RATE)"),
                );
            }
            v
        }
        None => header.rate_hz as f64,
    };
    if !(rate_hz.is_finite() && rate_hz > 0.0 && rate_hz <= MAX_RATE_HZ) {
        return Err(format!(
            "the frame rate (POINT:RATE) is {rate_hz} Hz; it must be above 0 and at most {MAX_RATE_HZ} Hz (the file is corrupted)"
        ));
    }
    let data_start_block = match num(params, "POINT", "DATA_START", true) {
        Some(v) => {
            if v as u16 != header.data_start_block {
                differ(
                    warnings,
                    "the first data block",
                    header.data_start_block.to_string(),
                    format!("{v} (POINT:DATA_START)"),
                );
            }
            v as usize
        }
        None => header.data_start_block as usize,
    };
    if data_start_block < 2 {
        return Err(format!(
            "the data section starts at block {data_start_block}; it must follow the header and the parameter section (block 3 or later)"
        ));
    }

    // Frames (C3D user guide, "long trials"): POINT:FRAMES unless it is 65535, then
    // TRIAL:ACTUAL_START_FIELD / ACTUAL_END_FIELD, then POINT:LONG_FRAMES.
    let header_frames = header.n_frames();
    let trial_field = |name: &str| -> Option<u64> {
        let w = params.get("TRIAL", name)?.u16s()?;
        match w.as_slice() {
            [lo, hi, ..] => Some(*lo as u64 + ((*hi as u64) << 16)),
            [lo] => Some(*lo as u64),
            [] => None,
        }
    };
    let trial_range = match (
        trial_field("ACTUAL_START_FIELD"),
        trial_field("ACTUAL_END_FIELD"),
    ) {
        (Some(s), Some(e)) if e >= s => Some((s, e)),
        _ => None,
    };
    let long_frames = num(params, "POINT", "LONG_FRAMES", false);
    let n_frames = match num(params, "POINT", "FRAMES", true) {
        Some(v) if v != 65535.0 => v,
        Some(_) => match (trial_range, long_frames) {
            (Some((s, e)), long) => {
                let n = (e - s + 1) as f64;
                if long.is_some_and(|l| l != n) {
                    differ(
                        warnings,
                        "the long frame count",
                        format!("{n} (TRIAL:ACTUAL_START_FIELD to ACTUAL_END_FIELD)"),
                        format!("{} (POINT:LONG_FRAMES)", long.unwrap_or(0.0)),
                    );
                }
                n
            }
            (None, Some(l)) => l,
            (None, None) => 65535.0,
        },
        None => header_frames as f64,
    };
    if !(n_frames.is_finite() && n_frames >= 0.0 && n_frames.fract() == 0.0) {
        return Err(format!(
            "the frame count (POINT:FRAMES) is {n_frames}; it must be a whole number of frames"
        ));
    }
    let n_frames = n_frames as usize;
    if n_frames != header_frames && !(n_frames > 65535 && header_frames <= 65535) {
        warnings.push(format!(
            "the header gives {header_frames} frames (frames {} to {}), the parameter section {n_frames}; the parameter section is used",
            header.first_frame, header.last_frame
        ));
    }
    let first_frame = trial_range.map_or(header.first_frame as u64, |(s, _)| s);

    // Analog channels and samples per frame.
    let analog_used = num(params, "ANALOG", "USED", true);
    let analog_rate = num(params, "ANALOG", "RATE", false);
    let (n_analog, spf, analog_rate_hz) = match analog_used {
        Some(n) if n > 0.0 => {
            let n = n as usize;
            let spf = match analog_rate {
                Some(r) if r.is_finite() && r > 0.0 => {
                    let ratio = r / rate_hz;
                    let spf = ratio.round();
                    if spf > MAX_SAMPLES_PER_FRAME as f64 {
                        return Err(format!(
                            "{spf} analog samples per frame (ANALOG:RATE {r} Hz at {rate_hz} Hz) is beyond any recording; the file is corrupted"
                        ));
                    }
                    if spf < 1.0 || (ratio - spf).abs() > 1e-3 * spf {
                        return Err(format!(
                            "the analog rate (ANALOG:RATE {r} Hz) is not a whole multiple of the frame rate ({rate_hz} Hz)"
                        ));
                    }
                    spf as usize
                }
                _ => {
                    let h = header.analog_samples_per_frame as usize;
                    if h == 0 {
                        return Err(format!(
                            "{n} analog channels (ANALOG:USED) but no analog rate: ANALOG:RATE is missing and the header gives 0 samples per frame"
                        ));
                    }
                    warnings.push(format!(
                        "ANALOG:RATE is missing; the header's {h} samples per frame give {} Hz",
                        h as f64 * rate_hz
                    ));
                    h
                }
            };
            if n * spf != header.analog_per_frame as usize {
                differ(
                    warnings,
                    "the analog values per frame",
                    header.analog_per_frame.to_string(),
                    format!("{} ({n} channels (ANALOG:USED) x {spf} samples)", n * spf),
                );
            }
            (n, spf, spf as f64 * rate_hz)
        }
        Some(_) => (0, 1, rate_hz),
        None => {
            // No ANALOG group: the header alone.
            let spf = (header.analog_samples_per_frame as usize).max(1);
            let total = header.analog_per_frame as usize;
            if !total.is_multiple_of(spf) {
                return Err(format!(
                    "the header gives {total} analog values per frame, not a multiple of its {spf} samples per frame"
                ));
            }
            (total / spf, spf, spf as f64 * rate_hz)
        }
    };
    if spf > MAX_SAMPLES_PER_FRAME {
        return Err(format!(
            "{spf} analog samples per frame is beyond any recording; the file is corrupted"
        ));
    }

    let layout = Layout {
        n_points,
        scale,
        float,
        rate_hz,
        data_start_block,
        n_frames,
        first_frame,
        n_analog,
        analog_samples_per_frame: spf,
        analog_rate_hz,
    };
    let frame_bytes = layout.bytes_per_frame();
    let start = (data_start_block - 1) * BLOCK;
    if n_frames > 0 && frame_bytes == 0 {
        return Err(format!(
            "{n_frames} frames of nothing: the file declares no points and no analog channels"
        ));
    }
    let needed = (n_frames as u128) * (frame_bytes as u128);
    let available = file_len.saturating_sub(start) as u128;
    if start > file_len || needed > available {
        let complete = if frame_bytes == 0 {
            0
        } else {
            available / frame_bytes as u128
        };
        return Err(format!(
            "the data section (block {data_start_block}, byte {start}) holds {complete} complete frames of {frame_bytes} bytes, the parameters declare {n_frames}; the file is truncated or its parameters are wrong"
        ));
    }
    Ok(layout)
}

/// Points in millimetres, `[point][frame]`, NaN where the residual word marks the sample
/// invalid, and analog values `[channel][sample]`.
pub struct Samples {
    pub points_mm: Vec<Vec<[f64; 3]>>,
    pub analog: Vec<Vec<f64>>,
}

/// How analog samples become physical values.
pub struct AnalogScaling {
    pub unsigned: bool,
    pub offset: Vec<f64>,
    /// SCALE x GEN_SCALE per channel.
    pub scale: Vec<f64>,
}

/// Reads every frame; `data` is the data section (from the data start to the end of the
/// file, already checked long enough by [`layout`]); `to_mm` converts POINT:UNITS to mm.
pub fn read(
    data: &[u8],
    layout: &Layout,
    processor: Processor,
    to_mm: f64,
    analog: &AnalogScaling,
) -> Samples {
    let n = layout.n_frames;
    let mut points_mm: Vec<Vec<[f64; 3]>> = (0..layout.n_points)
        .map(|_| Vec::with_capacity(n))
        .collect();
    let spf = layout.analog_samples_per_frame;
    let mut values: Vec<Vec<f64>> = (0..layout.n_analog)
        .map(|_| Vec::with_capacity(n * spf))
        .collect();
    let frame_bytes = layout.bytes_per_frame();
    if frame_bytes == 0 {
        return Samples {
            points_mm,
            analog: values,
        };
    }
    let point_bytes = 4 * layout.n_points * if layout.float { 4 } else { 2 };
    let frames = data.chunks_exact(frame_bytes).take(n);
    if layout.float {
        match processor {
            Processor::Intel => read_float(
                frames,
                point_bytes,
                to_mm,
                &mut points_mm,
                &mut values,
                analog,
                f32::from_le_bytes,
            ),
            Processor::Mips => read_float(
                frames,
                point_bytes,
                to_mm,
                &mut points_mm,
                &mut values,
                analog,
                f32::from_be_bytes,
            ),
            Processor::Dec => read_float(
                frames,
                point_bytes,
                to_mm,
                &mut points_mm,
                &mut values,
                analog,
                super::numbers::dec_to_f32,
            ),
        }
    } else {
        let scale = layout.scale as f32;
        match processor {
            Processor::Mips => read_int(
                frames,
                point_bytes,
                scale,
                to_mm,
                &mut points_mm,
                &mut values,
                analog,
                i16::from_be_bytes,
            ),
            _ => read_int(
                frames,
                point_bytes,
                scale,
                to_mm,
                &mut points_mm,
                &mut values,
                analog,
                i16::from_le_bytes,
            ),
        }
    }
    Samples {
        points_mm,
        analog: values,
    }
}

#[allow(clippy::too_many_arguments)]
#[inline(always)]
fn read_float<'a>(
    frames: impl Iterator<Item = &'a [u8]>,
    point_bytes: usize,
    to_mm: f64,
    points: &mut [Vec<[f64; 3]>],
    analog: &mut [Vec<f64>],
    scaling: &AnalogScaling,
    f: impl Fn([u8; 4]) -> f32,
) {
    let get = |c: &[u8]| f([c[0], c[1], c[2], c[3]]);
    for frame in frames {
        let (p, a) = frame.split_at(point_bytes);
        for (track, v) in points.iter_mut().zip(p.chunks_exact(16)) {
            let residual = get(&v[12..16]);
            let xyz = [get(&v[0..4]), get(&v[4..8]), get(&v[8..12])];
            // The residual float is converted to an integer (toward zero); negative marks the
            // sample invalid, as do coordinates that are not finite numbers.
            let valid =
                residual.is_finite() && (residual as i32) >= 0 && xyz.iter().all(|c| c.is_finite());
            track.push(if valid {
                [
                    xyz[0] as f64 * to_mm,
                    xyz[1] as f64 * to_mm,
                    xyz[2] as f64 * to_mm,
                ]
            } else {
                [f64::NAN; 3]
            });
        }
        if !analog.is_empty() {
            let n = analog.len();
            for (k, v) in a.chunks_exact(4).enumerate() {
                let ch = k % n;
                let raw = get(v) as f64;
                analog[ch].push((raw - scaling.offset[ch]) * scaling.scale[ch]);
            }
        }
    }
}

#[allow(clippy::too_many_arguments)]
#[inline(always)]
fn read_int<'a>(
    frames: impl Iterator<Item = &'a [u8]>,
    point_bytes: usize,
    scale: f32,
    to_mm: f64,
    points: &mut [Vec<[f64; 3]>],
    analog: &mut [Vec<f64>],
    scaling: &AnalogScaling,
    f: impl Fn([u8; 2]) -> i16,
) {
    let get = |c: &[u8]| f([c[0], c[1]]);
    for frame in frames {
        let (p, a) = frame.split_at(point_bytes);
        for (track, v) in points.iter_mut().zip(p.chunks_exact(8)) {
            track.push(if get(&v[6..8]) < 0 {
                [f64::NAN; 3]
            } else {
                [
                    (get(&v[0..2]) as f32 * scale) as f64 * to_mm,
                    (get(&v[2..4]) as f32 * scale) as f64 * to_mm,
                    (get(&v[4..6]) as f32 * scale) as f64 * to_mm,
                ]
            });
        }
        if !analog.is_empty() {
            let n = analog.len();
            for (k, v) in a.chunks_exact(2).enumerate() {
                let ch = k % n;
                let w = get(v);
                let raw = if scaling.unsigned {
                    w as u16 as f64
                } else {
                    w as f64
                };
                analog[ch].push((raw - scaling.offset[ch]) * scaling.scale[ch]);
            }
        }
    }
}
