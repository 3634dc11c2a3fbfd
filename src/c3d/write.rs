//! A C3D writer, for the tests and the benchmarks: a [`Recording`] (points, analog channels,
//! force plates) becomes a C3D file of any processor type and storage, laid out as the C3D user
//! guide (c3d.org) describes: header block, parameter section from block 2, data from the block
//! after it. Counts past 255 points or channels continue in `LABELS2`, `LABELS3`, ...; frame
//! counts past 65 535 are written as [`LongFrames`] says.

use super::header::{Header, BLOCK};
use super::numbers::Processor;
use super::params::{encode, Param, ParamData};
use std::io::{self, Write};

/// How a frame count past 65 535 is written.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum LongFrames {
    /// POINT:FRAMES as a float (the user guide's default).
    #[default]
    Float,
    /// POINT:FRAMES = 65535 and TRIAL:ACTUAL_START_FIELD / ACTUAL_END_FIELD.
    TrialFields,
}

/// A force plate to declare (its channels carry the data, in [`Recording::analog`]).
#[derive(Clone, Debug, PartialEq)]
pub struct PlateSpec {
    pub plate_type: i16,
    /// Analog channels, 1-based (6, or 8 for type 3).
    pub channels: Vec<i16>,
    /// Corners in POINT:UNITS, lab frame.
    pub corners: [[f32; 3]; 4],
    /// ORIGIN in POINT:UNITS, plate frame.
    pub origin: [f32; 3],
    /// CAL_MATRIX (type 4), Fortran order (first index the row).
    pub cal_matrix: Option<[f32; 36]>,
}

/// Analog channels to write, in physical units.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct AnalogSpec {
    pub labels: Vec<String>,
    pub units: Vec<String>,
    pub samples_per_frame: usize,
    /// ANALOG:SCALE per channel.
    pub scale: Vec<f32>,
    /// ANALOG:OFFSET per channel.
    pub offset: Vec<i16>,
    pub gen_scale: f32,
    /// ANALOG:FORMAT `UNSIGNED` (integer storage).
    pub unsigned: bool,
    /// `values[channel][sample]`, physical units.
    pub values: Vec<Vec<f64>>,
}

/// Everything a written file holds.
#[derive(Clone, Debug, PartialEq)]
pub struct Recording {
    pub processor: Processor,
    /// Float storage (else integer, coordinates / `scale`).
    pub float: bool,
    /// |POINT:SCALE| (the integer step; written negative for float storage).
    pub scale: f32,
    pub rate_hz: f32,
    /// POINT:UNITS.
    pub units: String,
    pub labels: Vec<String>,
    pub descriptions: Vec<String>,
    /// `points[point][frame]` in `units`; `None` is written invalid (residual -1).
    pub points: Vec<Vec<Option<[f64; 3]>>>,
    pub analog: AnalogSpec,
    pub plates: Vec<PlateSpec>,
    /// FORCE_PLATFORM:ZERO.
    pub zero: [i16; 2],
    /// First frame number (header word 4, and TRIAL:ACTUAL_START_FIELD when written).
    pub first_frame: u32,
    pub long_frames: LongFrames,
}

impl Default for Recording {
    fn default() -> Self {
        Recording {
            processor: Processor::Intel,
            float: true,
            scale: 0.1,
            rate_hz: 100.0,
            units: "mm".into(),
            labels: Vec::new(),
            descriptions: Vec::new(),
            points: Vec::new(),
            analog: AnalogSpec::default(),
            plates: Vec::new(),
            zero: [0, 0],
            first_frame: 1,
            long_frames: LongFrames::Float,
        }
    }
}

impl Recording {
    /// A recording of marker tracks given in metres (`tracks[marker][frame]`, `None` where
    /// missing), written in millimetres at `rate_hz` with float storage and |POINT:SCALE|
    /// 0.1 mm, no analog channels.
    pub fn from_tracks_m(
        labels: &[String],
        tracks_m: &[Vec<Option<[f64; 3]>>],
        rate_hz: f32,
    ) -> Recording {
        Recording {
            rate_hz,
            labels: labels.to_vec(),
            points: tracks_m
                .iter()
                .map(|t| {
                    t.iter()
                        .map(|p| p.map(|p| [p[0] * 1e3, p[1] * 1e3, p[2] * 1e3]))
                        .collect()
                })
                .collect(),
            ..Recording::default()
        }
    }
}

fn bad(message: String) -> io::Error {
    io::Error::new(io::ErrorKind::InvalidInput, message)
}

fn param(group: &str, name: &str, dims: Vec<usize>, data: ParamData) -> Param {
    Param {
        group: group.into(),
        name: name.into(),
        locked: false,
        dims,
        data,
        description: String::new(),
    }
}

fn strings(group: &str, name: &str, items: &[String]) -> Param {
    let width = items.iter().map(|s| s.len()).max().unwrap_or(0).max(1);
    let mut bytes = Vec::with_capacity(width * items.len());
    for s in items {
        bytes.extend_from_slice(s.as_bytes());
        bytes.resize(bytes.len() + width - s.len(), b' ');
    }
    param(
        group,
        name,
        vec![width, items.len()],
        ParamData::Char(bytes),
    )
}

/// An array split into `NAME`, `NAME2`, ... of at most 255 entries each.
fn continued<T: Clone>(
    items: &[T],
    make: impl Fn(String, &[T]) -> Param,
    name: &str,
) -> Vec<Param> {
    if items.is_empty() {
        return vec![make(name.to_string(), items)];
    }
    items
        .chunks(255)
        .enumerate()
        .map(|(k, c)| {
            let n = if k == 0 {
                name.to_string()
            } else {
                format!("{name}{}", k + 1)
            };
            make(n, c)
        })
        .collect()
}

/// Writes `rec` as a C3D file.
pub fn write(rec: &Recording, mut w: impl Write) -> io::Result<()> {
    let p = rec.processor;
    let n_points = rec.points.len();
    let n_frames = rec.points.first().map_or_else(
        || {
            rec.analog
                .values
                .first()
                .map_or(0, |v| v.len() / rec.analog.samples_per_frame.max(1))
        },
        |t| t.len(),
    );
    if rec.points.iter().any(|t| t.len() != n_frames) {
        return Err(bad("every point needs the same number of frames".into()));
    }
    if rec.labels.len() != n_points {
        return Err(bad(format!(
            "{} labels for {n_points} points",
            rec.labels.len()
        )));
    }
    let n_analog = rec.analog.values.len();
    let spf = if n_analog > 0 {
        rec.analog.samples_per_frame.max(1)
    } else {
        1
    };
    if rec.analog.values.iter().any(|v| v.len() != n_frames * spf) {
        return Err(bad(format!(
            "every analog channel needs {} samples",
            n_frames * spf
        )));
    }
    if n_points > 65535 || n_analog > 65535 {
        return Err(bad("at most 65 535 points and channels".into()));
    }
    let scale = if rec.float {
        -rec.scale.abs()
    } else {
        rec.scale.abs()
    };
    if scale == 0.0 || !scale.is_finite() {
        return Err(bad("the scale must be finite and not 0".into()));
    }
    let analog_rate = rec.rate_hz * spf as f32;

    let int = |v: i64| ParamData::Int(vec![v as u16 as i16]);
    let float = |v: f32| ParamData::Float(vec![v]);
    let mut params = vec![
        param("POINT", "USED", vec![], int(n_points as i64)),
        param("POINT", "SCALE", vec![], float(scale)),
        param("POINT", "RATE", vec![], float(rec.rate_hz)),
        strings("POINT", "UNITS", std::slice::from_ref(&rec.units)),
    ];
    let long = n_frames > 65535;
    match (long, rec.long_frames) {
        (false, _) => params.push(param("POINT", "FRAMES", vec![], int(n_frames as i64))),
        (true, LongFrames::Float) => {
            params.push(param("POINT", "FRAMES", vec![], float(n_frames as f32)))
        }
        (true, LongFrames::TrialFields) => {
            params.push(param("POINT", "FRAMES", vec![], int(65535)));
            let first = rec.first_frame as u64;
            let last = first + n_frames as u64 - 1;
            let words =
                |v: u64| ParamData::Int(vec![(v & 0xffff) as u16 as i16, (v >> 16) as u16 as i16]);
            params.push(param("TRIAL", "ACTUAL_START_FIELD", vec![2], words(first)));
            params.push(param("TRIAL", "ACTUAL_END_FIELD", vec![2], words(last)));
        }
    }
    params.extend(continued(
        &rec.labels,
        |n, c| strings("POINT", &n, c),
        "LABELS",
    ));
    if !rec.descriptions.is_empty() {
        params.extend(continued(
            &rec.descriptions,
            |n, c| strings("POINT", &n, c),
            "DESCRIPTIONS",
        ));
    }
    let a = &rec.analog;
    params.push(param("ANALOG", "USED", vec![], int(n_analog as i64)));
    params.push(param("ANALOG", "RATE", vec![], float(analog_rate)));
    params.push(param(
        "ANALOG",
        "GEN_SCALE",
        vec![],
        float(if a.gen_scale == 0.0 { 1.0 } else { a.gen_scale }),
    ));
    let gen = if a.gen_scale == 0.0 {
        1.0
    } else {
        a.gen_scale as f64
    };
    if n_analog > 0 {
        let mut labels = a.labels.clone();
        labels.resize(n_analog, String::new());
        let mut units = a.units.clone();
        units.resize(n_analog, String::new());
        let mut sc = a.scale.clone();
        sc.resize(n_analog, 1.0);
        let mut off = a.offset.clone();
        off.resize(n_analog, 0);
        params.extend(continued(
            &labels,
            |n, c| strings("ANALOG", &n, c),
            "LABELS",
        ));
        params.extend(continued(&units, |n, c| strings("ANALOG", &n, c), "UNITS"));
        params.extend(continued(
            &sc,
            |n, c| param("ANALOG", &n, vec![c.len()], ParamData::Float(c.to_vec())),
            "SCALE",
        ));
        params.extend(continued(
            &off,
            |n, c| param("ANALOG", &n, vec![c.len()], ParamData::Int(c.to_vec())),
            "OFFSET",
        ));
        let format = if a.unsigned { "UNSIGNED" } else { "SIGNED" };
        params.push(strings("ANALOG", "FORMAT", &[format.to_string()]));
    }
    let np = rec.plates.len();
    params.push(param("FORCE_PLATFORM", "USED", vec![], int(np as i64)));
    if np > 0 {
        let n_ch = rec
            .plates
            .iter()
            .map(|pl| pl.channels.len())
            .max()
            .unwrap_or(6);
        let mut types = Vec::new();
        let mut channels = Vec::new();
        let mut corners = Vec::new();
        let mut origins = Vec::new();
        let mut cal = Vec::new();
        for pl in &rec.plates {
            types.push(pl.plate_type);
            let mut ch = pl.channels.clone();
            ch.resize(n_ch, 0);
            channels.extend(ch);
            corners.extend(pl.corners.iter().flatten());
            origins.extend(pl.origin);
            cal.extend(pl.cal_matrix.unwrap_or([0.0; 36]));
        }
        params.push(param(
            "FORCE_PLATFORM",
            "TYPE",
            vec![np],
            ParamData::Int(types),
        ));
        params.push(param(
            "FORCE_PLATFORM",
            "CHANNEL",
            vec![n_ch, np],
            ParamData::Int(channels),
        ));
        params.push(param(
            "FORCE_PLATFORM",
            "CORNERS",
            vec![3, 4, np],
            ParamData::Float(corners),
        ));
        params.push(param(
            "FORCE_PLATFORM",
            "ORIGIN",
            vec![3, np],
            ParamData::Float(origins),
        ));
        params.push(param(
            "FORCE_PLATFORM",
            "ZERO",
            vec![2],
            ParamData::Int(rec.zero.to_vec()),
        ));
        if rec.plates.iter().any(|pl| pl.cal_matrix.is_some()) {
            params.push(param(
                "FORCE_PLATFORM",
                "CAL_MATRIX",
                vec![6, 6, np],
                ParamData::Float(cal),
            ));
        }
    }
    let groups = [
        (1i8, "POINT", "3-d point parameters"),
        (2, "ANALOG", "analog channels"),
        (3, "FORCE_PLATFORM", "force plates"),
        (4, "TRIAL", "trial range"),
    ];
    let groups: Vec<(i8, &str, &str)> = groups
        .into_iter()
        .filter(|(_, g, _)| params.iter().any(|q| q.group == *g))
        .collect();
    // DATA_START depends on the section's length, which does not depend on its value.
    params.push(param("POINT", "DATA_START", vec![], int(0)));
    let body = encode(p, &groups, &params).map_err(bad)?;
    let n_blocks = (4 + body.len()).div_ceil(BLOCK);
    if n_blocks > 255 {
        return Err(bad(format!(
            "the parameter section needs {n_blocks} blocks, at most 255"
        )));
    }
    let data_start = 2 + n_blocks;
    if data_start > 65535 {
        return Err(bad("the data section would start past block 65535".into()));
    }
    if let Some(last) = params.last_mut() {
        last.data = int(data_start as i64);
    }
    let body = encode(p, &groups, &params).map_err(bad)?;
    let mut section = vec![0x01, 0x50, n_blocks as u8, p.byte()];
    section.extend_from_slice(&body);
    section.resize(n_blocks * BLOCK, 0);

    let first = rec.first_frame.min(65535) as u16;
    let header = Header {
        parameter_block: 2,
        n_points: n_points as u16,
        analog_per_frame: (n_analog * spf).min(65535) as u16,
        first_frame: first,
        last_frame: (rec.first_frame as u64 + n_frames as u64)
            .saturating_sub(1)
            .min(65535) as u16,
        max_gap_frames: 0,
        scale,
        data_start_block: data_start as u16,
        analog_samples_per_frame: spf as u16,
        rate_hz: rec.rate_hz,
    };
    let header = header
        .encode(p)
        .ok_or_else(|| bad("the scale or rate cannot be stored".into()))?;
    w.write_all(&header)?;
    w.write_all(&section)?;

    // Data.
    let frame_bytes = (4 * n_points + n_analog * spf) * if rec.float { 4 } else { 2 };
    let mut buf = Vec::with_capacity(frame_bytes * 64);
    let mut written = 0usize;
    let f32b = |v: f32| {
        p.f32_bytes(v)
            .ok_or_else(|| bad(format!("{v} cannot be stored")))
    };
    for f in 0..n_frames {
        for t in &rec.points {
            match t[f] {
                Some(xyz) if rec.float => {
                    for c in xyz {
                        buf.extend_from_slice(&f32b(c as f32)?);
                    }
                    buf.extend_from_slice(&f32b(1.0)?);
                }
                Some(xyz) => {
                    for c in xyz {
                        let q = (c / scale as f64).round();
                        if !(-32768.0..=32767.0).contains(&q) {
                            return Err(bad(format!(
                                "{c} does not fit a 16-bit integer at scale {scale}"
                            )));
                        }
                        buf.extend_from_slice(&p.i16_bytes(q as i16));
                    }
                    buf.extend_from_slice(&p.i16_bytes(1));
                }
                None if rec.float => {
                    for v in [0.0, 0.0, 0.0, -1.0] {
                        buf.extend_from_slice(&f32b(v)?);
                    }
                }
                None => {
                    for v in [0, 0, 0, -1] {
                        buf.extend_from_slice(&p.i16_bytes(v));
                    }
                }
            }
        }
        for s in 0..spf {
            for ch in 0..n_analog {
                let v = a.values[ch][f * spf + s];
                let sc = a.scale.get(ch).copied().unwrap_or(1.0) as f64 * gen;
                let off = a.offset.get(ch).copied().unwrap_or(0) as f64;
                let raw = v / sc + off;
                if rec.float {
                    buf.extend_from_slice(&f32b(raw as f32)?);
                } else {
                    let q = raw.round();
                    let (lo, hi) = if a.unsigned {
                        (0.0, 65535.0)
                    } else {
                        (-32768.0, 32767.0)
                    };
                    if !(lo..=hi).contains(&q) {
                        return Err(bad(format!(
                            "analog value {v} does not fit 16 bits at its scale"
                        )));
                    }
                    let word = if a.unsigned {
                        q as u16
                    } else {
                        q as i16 as u16
                    };
                    buf.extend_from_slice(&p.u16_bytes(word));
                }
            }
        }
        if buf.len() >= 1 << 20 {
            written += buf.len();
            w.write_all(&buf)?;
            buf.clear();
        }
    }
    written += buf.len();
    w.write_all(&buf)?;
    // The file ends on a block boundary.
    let pad = (BLOCK - written % BLOCK) % BLOCK;
    w.write_all(&vec![0u8; pad])?;
    Ok(())
}
