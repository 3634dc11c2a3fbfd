//! Stage 1, reading: a trial CSV (wide or tidy layout, DESIGN.md 3.1) becomes a [`Trial`]:
//! frame times in seconds and gappy marker tracks ([`RawMarkers`]) in metres, in the lab frame of
//! the file, with its vertical axis known ([`UpAxis`]).
//!
//! Units are converted once here; everything downstream is SI.

use serde::{Deserialize, Serialize};

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
    pub units: LengthUnit,
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
    /// Frame times, strictly increasing, in seconds.
    pub times_s: Vec<Seconds>,
    /// Sampling rate, from the times or given, in Hz.
    pub rate_hz: f64,
    pub up_axis: UpAxis,
    pub markers: RawMarkers,
    /// Non-fatal findings of the reader (ignored columns).
    pub warnings: Vec<crate::warning::Warning>,
}

impl Trial {
    pub fn n_frames(&self) -> usize {
        self.times_s.len()
    }
}
