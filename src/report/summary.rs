//! `summary.json`: the figures of one trial (docs/DESIGN.md 8), its warnings, its provenance and the
//! cautions of docs/DESIGN.md 16. The same [`Summary`] feeds the batch summary table.

use crate::config::Subject;
use crate::pipeline::{ModelInfo, TrialResult};
use crate::warning::Warning;
use serde::Serialize;

/// docs/DESIGN.md 16, shown in the README, the `--help` epilogue and every summary.
pub const CAUTIONS: [&str; 3] = [
    "CoM estimated from generic anthropometric tables and skin markers typically differs from the true CoM by a centimetre or more, more so for bodies unlike the table's population.",
    "gravline is an analysis aid, not a medical device: fall-risk, rehabilitation and training decisions belong to qualified, licensed practitioners under local regulations.",
    "Lifting analysis does not make a lift safe; follow qualified coaching and spotting practice.",
];

/// Where the numbers came from.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Provenance {
    pub gravline_version: String,
    /// SHA-256 of the trial file's bytes.
    pub input_sha256: Option<String>,
    /// SHA-256 of the validated configuration and subject (as JSON).
    pub config_sha256: String,
    pub model: ModelInfo,
}

/// CoM figures of a trial.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ComFigures {
    pub mean_height_m: Option<f64>,
    pub mean_height_of_stature: Option<f64>,
    pub min_m: Option<[f64; 3]>,
    pub max_m: Option<[f64; 3]>,
    /// Length of the 3D CoM path over valid frames (consecutive valid frames only).
    pub path_length_m: f64,
    /// Range of the CoM height.
    pub vertical_excursion_m: Option<f64>,
    /// Range of the CoM across the progression direction.
    pub ml_excursion_m: Option<f64>,
    pub mean_speed_m_s: Option<f64>,
    pub max_speed_m_s: Option<f64>,
}

/// BoS figures of a trial.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SupportFigures {
    /// Floor surface height under the mean CoM position, metres.
    pub floor_m: f64,
    /// The floor model: level, slope, tilt (deg), plane residual (mm), rise under the feet (mm).
    pub floor: crate::support::floor::FloorModel,
    pub progression: Option<[f64; 2]>,
    pub min_bos_margin_m: Option<f64>,
    pub mean_bos_margin_m: Option<f64>,
    pub min_mos_m: Option<f64>,
    pub mean_mos_m: Option<f64>,
    /// Time with a BoS (at least one foot in contact) and a CoM.
    pub time_with_bos_s: f64,
    /// Time with the CoM's floor projection outside the BoS.
    pub time_outside_bos_s: f64,
}

/// Per-side means of the steps.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct StepMeans {
    pub side: &'static str,
    pub steps: usize,
    pub step_length_m: Option<f64>,
    pub step_width_m: Option<f64>,
    pub mos_ap_heel_strike_m: Option<f64>,
    pub mos_ml_heel_strike_m: Option<f64>,
    pub min_mos_ml_single_stance_m: Option<f64>,
    pub com_vertical_excursion_m: Option<f64>,
}

/// Lift figures (trials with loads).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct LiftFigures {
    pub midfoot_band_m: f64,
    pub max_abs_com_midfoot_ap_m: Option<f64>,
    pub mean_abs_com_midfoot_ap_m: Option<f64>,
    /// Time with the system CoM outside the mid-foot band.
    pub time_outside_band_s: f64,
    pub reps: Vec<crate::support::lift::Rep>,
}

/// Everything `summary.json` holds.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Summary {
    pub trial: String,
    pub frames: usize,
    pub duration_s: f64,
    pub rate_hz: f64,
    pub valid_fraction: f64,
    pub subject: Subject,
    pub com: ComFigures,
    pub support: SupportFigures,
    pub steps: Vec<StepMeans>,
    pub lift: Option<LiftFigures>,
    /// `movement`, `movement_rule`, `gait`, `jump`, `reps`, `sway`.
    #[serde(flatten)]
    pub figures: crate::movement::MovementFigures,
    /// The CoM's spread between models (`--spread`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub spread: Option<crate::com::spread::SpreadFigures>,
    /// Force plates: cross-check, implied mass, strikes, fused CoM, sway, jump.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub plates: Option<crate::plates::PlateFigures>,
    pub warnings: Vec<String>,
    pub warning_details: Vec<Warning>,
    pub provenance: Provenance,
    pub cautions: Vec<&'static str>,
}

fn mean(values: impl Iterator<Item = f64>) -> Option<f64> {
    let (mut s, mut n) = (0.0, 0usize);
    for v in values {
        s += v;
        n += 1;
    }
    (n > 0).then(|| s / n as f64)
}

fn min(values: impl Iterator<Item = f64>) -> Option<f64> {
    values.reduce(f64::min)
}

fn norm(v: &[f64; 3]) -> f64 {
    (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt()
}

impl Summary {
    /// Computes the figures of a result.
    pub fn new(
        r: &TrialResult,
        subject: &Subject,
        input_sha256: Option<String>,
        config_sha256: String,
    ) -> Summary {
        let up = r.up_axis;
        let valid: Vec<&[f64; 3]> = r.com.iter().flatten().collect();
        let heights = || valid.iter().map(|c| up.height(c));
        let mean_height_m = mean(heights());
        let (mut lo, mut hi) = ([f64::INFINITY; 3], [f64::NEG_INFINITY; 3]);
        for c in &valid {
            for k in 0..3 {
                lo[k] = lo[k].min(c[k]);
                hi[k] = hi[k].max(c[k]);
            }
        }
        let path_length_m = r
            .com
            .windows(2)
            .filter_map(|w| {
                Some(norm(&[
                    w[1]?[0] - w[0]?[0],
                    w[1]?[1] - w[0]?[1],
                    w[1]?[2] - w[0]?[2],
                ]))
            })
            .sum();
        let s = &r.support;
        let ml_excursion_m = s.progression.and_then(|p| {
            let across = |c: &&[f64; 3]| {
                let h = up.horizontal(c);
                -p[1] * h[0] + p[0] * h[1]
            };
            let lo = valid.iter().map(across).reduce(f64::min)?;
            let hi = valid.iter().map(across).reduce(f64::max)?;
            Some(hi - lo)
        });
        let speeds = || r.velocity.iter().flatten().map(norm);
        let com = ComFigures {
            mean_height_m,
            mean_height_of_stature: mean_height_m.map(|h| (h - s.floor_m) / subject.height_m),
            min_m: (!valid.is_empty()).then_some(lo),
            max_m: (!valid.is_empty()).then_some(hi),
            path_length_m,
            vertical_excursion_m: heights()
                .reduce(f64::max)
                .zip(heights().reduce(f64::min))
                .map(|(a, b)| a - b),
            ml_excursion_m,
            mean_speed_m_s: mean(speeds()),
            max_speed_m_s: speeds().reduce(f64::max),
        };
        let dt = 1.0 / r.rate_hz;
        let margins = || s.bos_margin_m.iter().flatten().copied();
        let mos = || s.mos_m.iter().flatten().copied();
        let support = SupportFigures {
            floor_m: s.floor_m,
            floor: s.floor.clone(),
            progression: s.progression,
            min_bos_margin_m: min(margins()),
            mean_bos_margin_m: mean(margins()),
            min_mos_m: min(mos()),
            mean_mos_m: mean(mos()),
            time_with_bos_s: margins().count() as f64 * dt,
            time_outside_bos_s: margins().filter(|m| *m < 0.0).count() as f64 * dt,
        };
        let steps = ["left", "right"]
            .iter()
            .map(|&side| {
                let of = || s.steps.iter().filter(move |st| st.side == side);
                StepMeans {
                    side,
                    steps: of().count(),
                    step_length_m: mean(of().filter_map(|st| st.step_length_m)),
                    step_width_m: mean(of().filter_map(|st| st.step_width_m)),
                    mos_ap_heel_strike_m: mean(of().filter_map(|st| st.mos_ap_heel_strike_m)),
                    mos_ml_heel_strike_m: mean(of().filter_map(|st| st.mos_ml_heel_strike_m)),
                    min_mos_ml_single_stance_m: mean(
                        of().filter_map(|st| st.min_mos_ml_single_stance_m),
                    ),
                    com_vertical_excursion_m: mean(
                        of().filter_map(|st| st.com_vertical_excursion_m),
                    ),
                }
            })
            .collect();
        let lift = r.lift.as_ref().map(|l| {
            let abs = || l.com_midfoot_ap_m.iter().flatten().map(|d| d.abs());
            LiftFigures {
                midfoot_band_m: l.band_m,
                max_abs_com_midfoot_ap_m: abs().reduce(f64::max),
                mean_abs_com_midfoot_ap_m: mean(abs()),
                time_outside_band_s: l.time_outside_band_s(r.rate_hz),
                reps: l.reps.clone(),
            }
        });
        // Implausible figures first, so that a short listing (and `-q`) still shows them.
        let mut warnings = crate::checks::implausible(
            com.mean_height_of_stature,
            com.max_speed_m_s,
            &r.segment_lengths_m,
            subject.height_m,
        );
        warnings.extend(r.warnings.iter().cloned());
        Summary {
            trial: r.name.clone(),
            frames: r.n_frames(),
            duration_s: r
                .times_s
                .last()
                .zip(r.times_s.first())
                .map_or(0.0, |(b, a)| b - a)
                + dt,
            rate_hz: r.rate_hz,
            valid_fraction: r.valid_fraction(),
            subject: subject.clone(),
            com,
            support,
            steps,
            lift,
            figures: r.movement.clone(),
            spread: r.spread.as_ref().map(|s| s.figures()),
            plates: r.plates.as_ref().map(|p| p.figures.clone()),
            warnings: warnings.iter().map(|w| w.to_string()).collect(),
            warning_details: warnings,
            provenance: Provenance {
                gravline_version: env!("CARGO_PKG_VERSION").to_string(),
                input_sha256,
                config_sha256,
                model: r.model.clone(),
            },
            cautions: CAUTIONS.to_vec(),
        }
    }
}
