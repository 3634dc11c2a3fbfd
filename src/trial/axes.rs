//! Axes and units of a trial file: which lab axis points up ([`UpAxis`]) and the length unit
//! of its coordinates ([`LengthUnit`]), converted to metres once, by the reader.

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
