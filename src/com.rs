//! Stage 4, center of mass: segment CoMs, the mass-weighted whole-body average, subsystem
//! (group) CoMs, external loads, and the extrapolated CoM.
//!
//! - Segment CoM: `r = origin + f (other - origin)`, f the table's CoM fraction (docs/DESIGN.md 5);
//!   for a table in segment frames (Dumas, Cheze & Verriest 2007, J Biomech 40:543), the 3-D
//!   offset in the segment's ISB frame ([`crate::body::frames`]).
//! - Whole body: `R = sum(m_i r_i) / sum(m_i)` over all segments (and loads for the system CoM),
//!   dividing by the actual sum of the masses (docs/reference/segment-tables.md 5). A frame where any
//!   needed segment or load is missing has no CoM; it is never re-weighted.
//! - XCoM (Hof, Gazendam & Sinke 2005, J Biomech 38:1-8): `xi = x + v / omega0`,
//!   `omega0 = sqrt(g / l)`, horizontal components only, l the pendulum (leg) length.
//!
//! Units: metres, kilograms, seconds.

#![allow(clippy::result_large_err)] // `ComError` and `LandmarkError` (~150 bytes) pass through here
pub mod spread;

use crate::body::model::PointId;
use crate::body::{BodyModel, LandmarkError};
use crate::config::{Config, Group, LoadPosition};
use nalgebra::Vector3;

pub type P = Vector3<f64>;

/// Standard gravity used throughout, m/s^2 (docs/reference/methods.md: g = 9.81).
pub const G_M_S2: f64 = 9.81;

/// CoM of a segment from its endpoints.
///
/// docs/reference/segment-tables.md 5, derived example 1 (Winter thigh, f = 0.433):
/// ```
/// use gravline::com::{segment_com, P};
/// let c = segment_com(P::new(0.10, 0.20, 0.95), P::new(0.12, 0.25, 0.52), 0.433);
/// assert!((c - P::new(0.108660, 0.221650, 0.763810)).norm() < 1e-6);
/// ```
pub fn segment_com(origin: P, other: P, com_fraction: f64) -> P {
    origin + (other - origin) * com_fraction
}

/// Mass-weighted average of points; `None` if any point is missing or the total mass is zero.
pub fn weighted_average(items: impl IntoIterator<Item = (f64, Option<P>)>) -> Option<P> {
    let mut sum = P::zeros();
    let mut mass = 0.0;
    for (m, p) in items {
        sum += p? * m;
        mass += m;
    }
    (mass > 0.0).then(|| sum / mass)
}

/// Angular eigenfrequency of the inverted pendulum, `sqrt(g / l)`, 1/s.
pub fn omega0(length_m: f64) -> f64 {
    (G_M_S2 / length_m).sqrt()
}

/// Extrapolated CoM in the floor plane: `x + v / omega0` (Hof et al. 2005).
///
/// docs/reference/methods.md 2: l = 0.95 m, v = 1.30 m/s puts the XCoM 0.4045 m ahead of the CoM.
/// ```
/// use gravline::com::{xcom_horizontal, omega0};
/// let xi = xcom_horizontal([0.0, 0.0], [1.30, 0.0], omega0(0.95));
/// assert!((xi[0] - 0.4045).abs() < 5e-5);
/// ```
pub fn xcom_horizontal(com: [f64; 2], velocity: [f64; 2], omega0: f64) -> [f64; 2] {
    [com[0] + velocity[0] / omega0, com[1] + velocity[1] / omega0]
}

/// Where an external load is in a frame.
#[derive(Clone, Debug, PartialEq)]
enum LoadSource {
    /// Centroid of these trial markers.
    Markers(Vec<usize>),
    /// A point of the body model.
    Point(PointId),
}

/// A load resolved against a trial.
#[derive(Clone, Debug, PartialEq)]
pub struct ResolvedLoad {
    pub name: String,
    pub mass_kg: f64,
    source: LoadSource,
}

impl ResolvedLoad {
    /// Trial marker indices the load reads (empty for a load placed at a model point).
    pub fn marker_indices(&self) -> Vec<usize> {
        match &self.source {
            LoadSource::Markers(idx) => idx.clone(),
            LoadSource::Point(_) => Vec::new(),
        }
    }
}

/// A group resolved to segment indices.
#[derive(Clone, Debug, PartialEq)]
pub struct ResolvedGroup {
    pub name: String,
    pub segments: Vec<usize>,
    pub mass_kg: f64,
}

/// A load or group that does not match the trial or the model.
#[derive(Debug, thiserror::Error)]
pub enum ComError {
    #[error("[[load]] `{load}`: marker `{marker}` not in {file}; list labels of the file (see `gravline landmarks {file}`)")]
    LoadMarker {
        load: String,
        marker: String,
        file: String,
    },
    #[error("[[load]] `{load}`: {source}")]
    LoadPoint { load: String, source: LandmarkError },
    #[error("[[group]] `{group}`: no segment `{segment}`; segments are {known}")]
    GroupSegment {
        group: String,
        segment: String,
        known: String,
    },
}

/// Per-frame CoM of one trial.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ComSeries {
    /// System CoM (body + loads), per frame.
    pub system: Vec<Option<[f64; 3]>>,
    /// Body CoM (loads excluded), per frame.
    pub body: Vec<Option<[f64; 3]>>,
    /// Position of each load, per frame.
    pub loads: Vec<Vec<Option<[f64; 3]>>>,
    /// `groups[g][frame]`.
    pub groups: Vec<Vec<Option<[f64; 3]>>>,
    /// `segments[s][frame]`, filled only when asked for.
    pub segments: Vec<Vec<Option<[f64; 3]>>>,
}

/// Segments, loads and groups of a trial, ready to combine frame by frame.
#[derive(Clone, Debug)]
pub struct ComModel {
    pub loads: Vec<ResolvedLoad>,
    pub groups: Vec<ResolvedGroup>,
    pub body_mass_kg: f64,
    pub system_mass_kg: f64,
}

impl ComModel {
    /// Resolves the configuration's loads and groups against the trial labels and the model.
    pub fn new(
        labels: &[String],
        file: &str,
        config: &Config,
        body: &BodyModel,
    ) -> Result<ComModel, ComError> {
        let mut loads = Vec::new();
        for load in &config.loads {
            let source = match &load.position {
                LoadPosition::Markers(names) => {
                    let mut idx = Vec::new();
                    for n in names {
                        let i = labels.iter().position(|l| l == n).ok_or_else(|| {
                            ComError::LoadMarker {
                                load: load.name.clone(),
                                marker: n.clone(),
                                file: file.to_string(),
                            }
                        })?;
                        idx.push(i);
                    }
                    LoadSource::Markers(idx)
                }
                LoadPosition::Landmark(name) => match body.point(name) {
                    Some(id) => LoadSource::Point(id),
                    None => {
                        return Err(ComError::LoadPoint {
                            load: load.name.clone(),
                            source: LandmarkError::NeedsMeasurement {
                                landmark: name.clone(),
                                what: "a point of the body model".to_string(),
                                hint: "name a segment endpoint or joint center such as r_wrist_jc"
                                    .to_string(),
                            },
                        })
                    }
                },
            };
            loads.push(ResolvedLoad {
                name: load.name.clone(),
                mass_kg: load.mass_kg,
                source,
            });
        }
        let groups = config
            .groups
            .iter()
            .map(|g| resolve_group(g, body))
            .collect::<Result<Vec<_>, _>>()?;
        let body_mass_kg: f64 = body.segments.iter().map(|s| s.mass_kg).sum();
        let system_mass_kg = body_mass_kg + loads.iter().map(|l| l.mass_kg).sum::<f64>();
        Ok(ComModel {
            loads,
            groups,
            body_mass_kg,
            system_mass_kg,
        })
    }

    /// Whether the system differs from the body (any load).
    pub fn has_loads(&self) -> bool {
        !self.loads.is_empty()
    }

    /// Combines one frame: segment CoMs into `seg` (reused buffer), then body, system, loads and
    /// groups. `points` is the body model's evaluation of this frame, `markers` the raw frame.
    pub fn frame(
        &self,
        body: &BodyModel,
        points: &[Option<P>],
        markers: &[Option<[f64; 3]>],
        seg: &mut Vec<Option<P>>,
    ) -> FrameCom {
        let body_com = body_com(body, points, seg);
        let mut loads = Vec::with_capacity(self.loads.len());
        for l in &self.loads {
            let p = match &l.source {
                LoadSource::Markers(idx) => weighted_average(
                    idx.iter()
                        .map(|&i| (1.0, markers.get(i).copied().flatten().map(P::from))),
                ),
                LoadSource::Point(id) => points.get(*id).copied().flatten(),
            };
            loads.push(p);
        }
        let system = if self.loads.is_empty() {
            body_com
        } else {
            weighted_average(
                std::iter::once((self.body_mass_kg, body_com))
                    .chain(self.loads.iter().zip(&loads).map(|(l, p)| (l.mass_kg, *p))),
            )
        };
        let groups = self
            .groups
            .iter()
            .map(|g| {
                weighted_average(
                    g.segments
                        .iter()
                        .map(|&i| (body.segments[i].mass_kg, seg[i])),
                )
            })
            .collect();
        FrameCom {
            body: body_com,
            system,
            loads,
            groups,
        }
    }
}

/// The CoM of each segment of `body` in one frame into `seg` (a reused buffer), and the body
/// CoM: their mass-weighted average. `points` is the body model's evaluation of the frame.
pub fn body_com(body: &BodyModel, points: &[Option<P>], seg: &mut Vec<Option<P>>) -> Option<P> {
    seg.clear();
    for s in &body.segments {
        let origin = points.get(s.origin.id).copied().flatten();
        let other = points.get(s.other.id).copied().flatten();
        seg.push(match &s.frame {
            Some(f) => f.com(|id| points.get(id).copied().flatten()),
            None => origin
                .zip(other)
                .map(|(a, b)| segment_com(a, b, s.com_fraction)),
        });
    }
    weighted_average(
        body.segments
            .iter()
            .zip(seg.iter())
            .map(|(s, c)| (s.mass_kg, *c)),
    )
}

/// The combination of one frame.
#[derive(Clone, Debug, PartialEq)]
pub struct FrameCom {
    pub body: Option<P>,
    pub system: Option<P>,
    pub loads: Vec<Option<P>>,
    pub groups: Vec<Option<P>>,
}

/// A group entry is a segment name (`l_thigh`, `trunk`) or a kind for both sides (`thigh`).
fn resolve_group(group: &Group, body: &BodyModel) -> Result<ResolvedGroup, ComError> {
    let mut segments = Vec::new();
    for entry in &group.segments {
        let matches: Vec<usize> = body
            .segments
            .iter()
            .enumerate()
            .filter(|(_, s)| s.name == *entry || s.kind.name() == entry)
            .map(|(i, _)| i)
            .collect();
        if matches.is_empty() {
            return Err(ComError::GroupSegment {
                group: group.name.clone(),
                segment: entry.clone(),
                known: body
                    .segments
                    .iter()
                    .map(|s| s.name.as_str())
                    .collect::<Vec<_>>()
                    .join(", "),
            });
        }
        for i in matches {
            if !segments.contains(&i) {
                segments.push(i);
            }
        }
    }
    let mass_kg = segments.iter().map(|&i| body.segments[i].mass_kg).sum();
    Ok(ResolvedGroup {
        name: group.name.clone(),
        segments,
        mass_kg,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;

    #[test]
    fn two_equal_masses_give_the_midpoint() {
        let c = weighted_average([
            (2.0, Some(P::new(0.0, 0.0, 0.0))),
            (2.0, Some(P::new(1.0, 2.0, 3.0))),
        ])
        .unwrap();
        assert_abs_diff_eq!(c, P::new(0.5, 1.0, 1.5), epsilon = 1e-15);
    }

    #[test]
    fn a_missing_segment_leaves_no_com() {
        assert_eq!(
            weighted_average([(1.0, Some(P::zeros())), (1.0, None)]),
            None
        );
    }

    /// docs/reference/segment-tables.md 5, derived example 1: the thigh CoM by Winter (f = 0.433),
    /// de Leva male (0.4095) and female (0.3612), to 1e-6 m.
    #[test]
    fn single_thigh_check_values() {
        let hip = P::new(0.10, 0.20, 0.95);
        let knee = P::new(0.12, 0.25, 0.52);
        for (f, expected) in [
            (0.433, P::new(0.108660, 0.221650, 0.763810)),
            (0.4095, P::new(0.108190, 0.220475, 0.773915)),
            (0.3612, P::new(0.107224, 0.218060, 0.794684)),
        ] {
            assert_abs_diff_eq!(segment_com(hip, knee, f), expected, epsilon = 1e-6);
        }
    }

    /// XCoM equals CoM at rest; docs/reference/methods.md 2 (Hof 2005 formula): l = 0.95 m,
    /// v = 1.30 m/s -> 0.4045 m ahead.
    #[test]
    fn xcom_check_values() {
        assert_eq!(
            xcom_horizontal([0.3, 0.1], [0.0, 0.0], omega0(1.0)),
            [0.3, 0.1]
        );
        let xi = xcom_horizontal([0.0, 0.0], [1.30, 0.0], omega0(0.95));
        assert_abs_diff_eq!(xi[0], 0.4045, epsilon = 5e-5);
        assert_abs_diff_eq!(omega0(0.95), (9.81f64 / 0.95).sqrt(), epsilon = 1e-15);
    }
}
