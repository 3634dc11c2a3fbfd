//! The spread between models (stage 4, CoM): how far the whole-body CoM moves when only the
//! model changes.
//!
//! Input: the filled and low-passed markers of a trial, its configuration and subject.
//! Output: per frame, the CoM under every built-in table the markers allow (de Leva 1996,
//! J Biomech 29:1223, Table 4; Dempster 1955 via Winter 2009, Table 4.1; Dumas, Cheze &
//! Verriest 2007, J Biomech 40:543, Table 2; the subject's own segments when the subject file
//! has `[geometry]` ([`crate::body::geometric`]); and the configured table when it is a file) crossed
//! with every hip JC regression (Harrington et al. 2007, J Biomech 40:595; Bell, Pedersen &
//! Brand 1990, J Biomech 23:617; Hara et al. 2016, Sci Rep 6:37707; Dumas et al. 2007), and
//! from them:
//! - `spread_m`: the largest distance between any two model CoMs (metres);
//! - `axes_m`: per lab axis, the largest difference between any two models' coordinates;
//! - `low_m` / `high_m`: per axis the smallest and largest model coordinate (the plotted band);
//! - per pair of models, the mean and largest distance, so the pair that disagrees most is named.
//!
//! A frame where any model has no CoM has no spread. A model whose landmarks the trial lacks is
//! left out and listed with the reason. When fewer than two models resolve the whole body (a
//! marker set of the pelvis and legs only), the spread is that of the legs' CoM (thighs, shanks
//! and feet), which every table defines, and the result says so.
//!
//! The spread is not an error bound: models can share a bias. It shows how much of a figure
//! depends on the choice of model (common practice, no source).

use super::{body_com, P};
use crate::anthropometry::{SegmentKind, SegmentTable, BUILTIN};
use crate::body::BodyModel;
use crate::config::{Config, HipMethod, Subject};
use crate::signal::Markers;
use crate::trial::UpAxis;
use crate::warning::Warning;
use serde::Serialize;

/// The hip JC regressions compared.
pub const HIP_METHODS: [HipMethod; 4] = [
    HipMethod::Harrington2007,
    HipMethod::Bell1990,
    HipMethod::Hara2016,
    HipMethod::Dumas2007,
];

/// Mean and largest distance between the CoMs of two models over the frames with a spread.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PairDistance {
    pub model_a: String,
    pub model_b: String,
    pub mean_m: f64,
    pub max_m: f64,
}

/// The spread of one trial, frame by frame.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct SpreadSeries {
    /// `body` (whole-body CoM) or `legs` (thighs, shanks and feet).
    pub subsystem: String,
    /// The models compared, `<table> + <hip method>`.
    pub models: Vec<String>,
    /// Models left out, with the reason.
    pub skipped: Vec<String>,
    pub spread_m: Vec<Option<f64>>,
    pub axes_m: Vec<Option<[f64; 3]>>,
    pub low_m: Vec<Option<[f64; 3]>>,
    pub high_m: Vec<Option<[f64; 3]>>,
    /// Every pair of models, in model order.
    pub pairs: Vec<PairDistance>,
}

/// Summary figures of a [`SpreadSeries`].
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SpreadFigures {
    pub subsystem: String,
    pub models: Vec<String>,
    pub skipped: Vec<String>,
    pub frames_with_spread: usize,
    pub mean_m: Option<f64>,
    pub max_m: Option<f64>,
    /// Per lab axis (x, y, z).
    pub mean_axes_m: Option<[f64; 3]>,
    pub max_axes_m: Option<[f64; 3]>,
    /// The pair of models with the largest mean distance.
    pub most_disagreeing: Option<PairDistance>,
}

/// The (table, hip method) pairs to compare for this trial.
fn variants(config: &Config, subject: &Subject, labels: &[String]) -> Vec<(String, HipMethod)> {
    let mut tables: Vec<String> = BUILTIN.iter().map(|s| s.to_string()).collect();
    if subject.geometry.is_some() && config.table != "geometric" {
        tables.push("geometric".to_string());
    }
    if !tables.contains(&config.table) {
        tables.push(config.table.clone());
    }
    // Hip JCs given by the trial override every regression: one hip variant then.
    let given = ["l_hip_jc", "r_hip_jc"].iter().all(|n| {
        let label = config.landmarks.get(*n).map_or(*n, String::as_str);
        labels.iter().any(|l| l == label)
    });
    let hips: Vec<HipMethod> = if given || config.hip == HipMethod::Given {
        vec![config.hip]
    } else {
        HIP_METHODS.to_vec()
    };
    tables
        .iter()
        .flat_map(|t| hips.iter().map(move |h| (t.clone(), *h)))
        .collect()
}

/// Builds every model the trial's landmarks allow, for the listed segments (or the whole body
/// when `kinds` is `None`).
fn build_models(
    markers: &Markers,
    file: &str,
    config: &Config,
    subject: &Subject,
    kinds: Option<&[SegmentKind]>,
) -> (Vec<(String, BodyModel)>, Vec<String>) {
    let mut models = Vec::new();
    let mut skipped = Vec::new();
    for (table_name, hip) in variants(config, subject, &markers.labels) {
        let label = format!("{table_name} + {}", hip.name());
        let table = if table_name == "geometric" {
            crate::body::geometric::table(subject)
        } else {
            SegmentTable::load(&table_name, subject.sex)
        };
        let table = match table {
            Ok(t) => t,
            Err(e) => {
                skipped.push(format!("{label}: {e}"));
                continue;
            }
        };
        let mut cfg = config.clone();
        cfg.hip = hip;
        if table_name != config.table {
            cfg.table = table_name.clone();
            cfg.endpoints.clear();
        }
        let body_kinds = table.body_segments();
        let built = BodyModel::build_segments(
            &markers.labels,
            file,
            &cfg,
            subject,
            &table,
            &[],
            kinds.unwrap_or(&body_kinds),
        );
        match built {
            Ok(mut body) => {
                body.measure_leg_length(markers);
                models.push((label, body));
            }
            Err(e) => skipped.push(format!("{label}: {e}")),
        }
    }
    (models, skipped)
}

/// The CoM under every model the markers allow and the spread between them (module doc).
pub fn compute(markers: &Markers, file: &str, config: &Config, subject: &Subject) -> SpreadSeries {
    let (mut models, mut skipped) = build_models(markers, file, config, subject, None);
    let mut subsystem = "body";
    if models.len() < 2 {
        const LEGS: [SegmentKind; 3] = [SegmentKind::Thigh, SegmentKind::Shank, SegmentKind::Foot];
        let (legs, legs_skipped) = build_models(markers, file, config, subject, Some(&LEGS));
        if legs.len() >= 2 {
            models = legs;
            skipped = legs_skipped;
            subsystem = "legs";
        }
    }
    let n = markers.n_frames;
    let mut used: Vec<usize> = models
        .iter()
        .flat_map(|(_, b)| b.markers_used.iter().copied())
        .collect();
    used.sort_unstable();
    used.dedup();
    let mut tracks: Vec<(usize, crate::signal::Samples)> = used
        .iter()
        .filter_map(|&i| Some((i, markers.tracks.get(i)?.samples_from(0))))
        .collect();
    let mut frame_markers: Vec<Option<[f64; 3]>> = vec![None; markers.labels.len()];
    let mut points = Vec::new();
    let mut seg = Vec::new();
    let m = models.len();
    let n_pairs = m * m.saturating_sub(1) / 2;
    let mut pair_sum = vec![0.0; n_pairs];
    let mut pair_max = vec![0.0f64; n_pairs];
    let mut out = SpreadSeries {
        subsystem: subsystem.to_string(),
        models: models.iter().map(|(l, _)| l.clone()).collect(),
        skipped,
        ..SpreadSeries::default()
    };
    let mut coms: Vec<Option<P>> = Vec::with_capacity(m);
    let mut counted = 0usize;
    for _ in 0..n {
        for (i, samples) in &mut tracks {
            frame_markers[*i] = samples.next().flatten();
        }
        coms.clear();
        for (_, body) in &models {
            body.evaluate(&frame_markers, &mut points);
            coms.push(body_com(body, &points, &mut seg));
        }
        let all: Option<Vec<P>> = coms.iter().copied().collect();
        let Some(all) = all.filter(|a| a.len() >= 2) else {
            out.spread_m.push(None);
            out.axes_m.push(None);
            out.low_m.push(None);
            out.high_m.push(None);
            continue;
        };
        counted += 1;
        let mut largest = 0.0f64;
        let mut k = 0;
        for a in 0..m {
            for b in a + 1..m {
                let d = (all[a] - all[b]).norm();
                largest = largest.max(d);
                pair_sum[k] += d;
                pair_max[k] = pair_max[k].max(d);
                k += 1;
            }
        }
        let (mut lo, mut hi) = ([f64::INFINITY; 3], [f64::NEG_INFINITY; 3]);
        for c in &all {
            for axis in 0..3 {
                lo[axis] = lo[axis].min(c[axis]);
                hi[axis] = hi[axis].max(c[axis]);
            }
        }
        out.spread_m.push(Some(largest));
        out.axes_m
            .push(Some([hi[0] - lo[0], hi[1] - lo[1], hi[2] - lo[2]]));
        out.low_m.push(Some(lo));
        out.high_m.push(Some(hi));
    }
    let mut k = 0;
    for a in 0..m {
        for b in a + 1..m {
            if counted > 0 {
                out.pairs.push(PairDistance {
                    model_a: out.models[a].clone(),
                    model_b: out.models[b].clone(),
                    mean_m: pair_sum[k] / counted as f64,
                    max_m: pair_max[k],
                });
            }
            k += 1;
        }
    }
    out
}

impl SpreadSeries {
    /// Mean and largest values over the frames with a spread.
    pub fn figures(&self) -> SpreadFigures {
        let values: Vec<f64> = self.spread_m.iter().flatten().copied().collect();
        let axes: Vec<[f64; 3]> = self.axes_m.iter().flatten().copied().collect();
        let count = values.len();
        let mean = |v: &[f64]| (!v.is_empty()).then(|| v.iter().sum::<f64>() / v.len() as f64);
        let max = |v: &[f64]| v.iter().copied().reduce(f64::max);
        let per_axis = |f: &dyn Fn(&[f64]) -> Option<f64>| -> Option<[f64; 3]> {
            let col = |k: usize| axes.iter().map(|a| a[k]).collect::<Vec<f64>>();
            Some([f(&col(0))?, f(&col(1))?, f(&col(2))?])
        };
        SpreadFigures {
            subsystem: self.subsystem.clone(),
            models: self.models.clone(),
            skipped: self.skipped.clone(),
            frames_with_spread: count,
            mean_m: mean(&values),
            max_m: max(&values),
            mean_axes_m: per_axis(&mean),
            max_axes_m: per_axis(&max),
            most_disagreeing: self
                .pairs
                .iter()
                .max_by(|a, b| a.mean_m.total_cmp(&b.mean_m))
                .cloned(),
        }
    }

    /// Warnings where the spread along an axis is larger than the CoM's own range along it over
    /// the trial (`com`, the reported CoM): a sway or excursion smaller than the disagreement
    /// between models. Also a note when no spread could be computed.
    pub fn warnings(&self, com: &[Option<[f64; 3]>], up: UpAxis) -> Vec<Warning> {
        let mut out = Vec::new();
        let figures = self.figures();
        let Some(mean_axes) = figures.mean_axes_m else {
            out.push(Warning::Approximation {
                what: format!(
                    "spread between models not computed: {} model(s) resolved ({})",
                    self.models.len(),
                    self.skipped.join("; ")
                ),
            });
            return out;
        };
        if self.subsystem != "body" {
            out.push(Warning::Approximation {
                what: "spread between models computed on the legs' CoM (thighs, shanks, feet): the marker set lacks the rest of the body".to_string(),
            });
            return out;
        }
        let vertical = up.height(&[0.0, 1.0, 2.0]).abs().round() as usize;
        // (the index of the up axis)
        for (k, axis) in ["x", "y", "z"].iter().enumerate() {
            let values = com.iter().flatten().map(|c| c[k]);
            let lo = values.clone().reduce(f64::min);
            let hi = values.reduce(f64::max);
            let (Some(lo), Some(hi)) = (lo, hi) else {
                continue;
            };
            let range = hi - lo;
            if mean_axes[k] > range {
                let what = if k == vertical {
                    "vertical"
                } else {
                    "horizontal"
                };
                out.push(Warning::ModelSpread {
                    message: format!(
                        "the CoM's {what} {axis} range over the trial ({:.1} mm) is smaller than the mean spread between models along {axis} ({:.1} mm): differences of this size depend on the table and hip method",
                        range * 1e3,
                        mean_axes[k] * 1e3
                    ),
                });
            }
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn figures_of_a_series() {
        let s = SpreadSeries {
            subsystem: "body".into(),
            models: vec!["a".into(), "b".into()],
            spread_m: vec![Some(0.01), None, Some(0.03)],
            axes_m: vec![Some([0.01, 0.0, 0.002]), None, Some([0.03, 0.001, 0.0])],
            pairs: vec![PairDistance {
                model_a: "a".into(),
                model_b: "b".into(),
                mean_m: 0.02,
                max_m: 0.03,
            }],
            ..SpreadSeries::default()
        };
        let f = s.figures();
        assert_eq!(f.frames_with_spread, 2);
        assert!((f.mean_m.unwrap() - 0.02).abs() < 1e-15);
        assert_eq!(f.max_m, Some(0.03));
        assert_eq!(f.max_axes_m, Some([0.03, 0.001, 0.002]));
        assert_eq!(f.most_disagreeing.unwrap().model_b, "b");
        // A CoM that moves 5 mm along x with a 20 mm mean spread along x: a warning.
        let com = vec![Some([0.0, 0.0, 1.0]), Some([0.005, 0.1, 1.0])];
        let w = s.warnings(&com, UpAxis::Z);
        assert_eq!(w.len(), 2, "{w:?}");
        assert!(w[0].to_string().contains("x range"), "{}", w[0]);
    }
}
