//! Walking figures from the gait events and steps of the support stage (heel strikes and
//! toe-offs by Zeni et al. 2008, Gait Posture 27:710-714, refined by the speed thresholds of
//! Bonci et al. 2022, Front Bioeng Biotechnol 10:868928). The spatio-temporal parameters are
//! the usual ones of clinical gait analysis (definitions as in Perry & Burnfield 2010, "Gait
//! Analysis: Normal and Pathological Function", 2nd ed., ch. 1-2):
//!
//! - `walking_speed_m_s`: CoM displacement along the progression direction from the first to
//!   the last heel strike (either foot) over the time between them; the whole trial's valid span
//!   when fewer than two heel strikes are [`MIN_SPAN_S`] apart.
//! - `cadence_steps_per_min`: heel strikes of both feet after the first, per minute, over the
//!   same span.
//! - `stride_time_s`: mean time between consecutive heel strikes of the same foot (both feet
//!   pooled); `step_time_s`: mean time between consecutive heel strikes of opposite feet; each
//!   with its sample standard deviation.
//! - `double_support_fraction`: share of the span in which both feet are in stance, a foot's
//!   stance lasting from its heel strike to its next toe-off.
//! - Step length and width (heel to heel at heel strike, along and across progression), AP MoS at
//!   heel strike and the minimum ML MoS of single stance (Hof et al. 2005, J Biomech 38:1-8):
//!   means and sample standard deviations of the steps of the support stage.
//!
//! Units: metres, seconds, m/s, steps per minute; fractions 0-1.

use super::{mean_sd, time_s};
use crate::pipeline::TrialResult;
use serde::Serialize;

/// Shortest span of heel strikes used for speed and cadence, s.
pub const MIN_SPAN_S: f64 = 0.5;

/// Walking figures of a trial.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct GaitFigures {
    pub heel_strikes: usize,
    pub toe_offs: usize,
    pub walking_speed_m_s: Option<f64>,
    pub cadence_steps_per_min: Option<f64>,
    pub stride_time_s: Option<f64>,
    pub stride_time_sd_s: Option<f64>,
    pub step_time_s: Option<f64>,
    pub step_time_sd_s: Option<f64>,
    pub double_support_fraction: Option<f64>,
    pub step_length_m: Option<f64>,
    pub step_length_sd_m: Option<f64>,
    pub step_width_m: Option<f64>,
    pub step_width_sd_m: Option<f64>,
    pub mos_ap_heel_strike_m: Option<f64>,
    pub mos_ap_heel_strike_sd_m: Option<f64>,
    pub min_mos_ml_single_stance_m: Option<f64>,
    pub min_mos_ml_single_stance_sd_m: Option<f64>,
}

/// Mean horizontal CoM speed over the frames with a velocity, m/s.
pub fn mean_horizontal_speed_m_s(r: &TrialResult) -> Option<f64> {
    let speeds: Vec<f64> = r
        .velocity
        .iter()
        .flatten()
        .map(|v| {
            let h = r.up_axis.horizontal(v);
            h[0].hypot(h[1])
        })
        .collect();
    (!speeds.is_empty()).then(|| speeds.iter().sum::<f64>() / speeds.len() as f64)
}

/// Heel strikes of both feet as (frame, side), in time order.
fn heel_strikes(r: &TrialResult) -> Vec<(usize, usize)> {
    let mut all: Vec<(usize, usize)> = (0..2)
        .flat_map(|side| {
            r.support.events[side]
                .heel_strikes
                .iter()
                .map(move |&f| (f, side))
        })
        .collect();
    all.sort_unstable();
    all
}

/// The walking figures (module doc).
pub fn figures(r: &TrialResult) -> GaitFigures {
    let hs = heel_strikes(r);
    let toe_offs: usize = r.support.events.iter().map(|e| e.toe_offs.len()).sum();
    let t = |f: usize| time_s(r, f);
    let span = match (hs.first(), hs.last()) {
        (Some(&(a, _)), Some(&(b, _))) if t(b) - t(a) >= MIN_SPAN_S => Some((a, b)),
        _ => None,
    };
    let along = |a: usize, b: usize| -> Option<f64> {
        let (ca, cb) = (
            r.com.get(a).copied().flatten()?,
            r.com.get(b).copied().flatten()?,
        );
        let (ha, hb) = (r.up_axis.horizontal(&ca), r.up_axis.horizontal(&cb));
        let p = r.support.progression.unwrap_or([1.0, 0.0]);
        Some(((hb[0] - ha[0]) * p[0] + (hb[1] - ha[1]) * p[1]) / (t(b) - t(a)))
    };
    let walking_speed_m_s = match span {
        Some((a, b)) => along(a, b),
        None => {
            let first = r.com.iter().position(Option::is_some);
            let last = r.com.iter().rposition(Option::is_some);
            first
                .zip(last)
                .filter(|(a, b)| b > a)
                .and_then(|(a, b)| along(a, b))
        }
    };
    let cadence_steps_per_min = span.map(|(a, b)| 60.0 * (hs.len() - 1) as f64 / (t(b) - t(a)));
    let mut strides = Vec::new();
    for side in 0..2 {
        strides.extend(
            r.support.events[side]
                .heel_strikes
                .windows(2)
                .map(|w| t(w[1]) - t(w[0])),
        );
    }
    let step_times: Vec<f64> = hs
        .windows(2)
        .filter(|w| w[0].1 != w[1].1)
        .map(|w| t(w[1].0) - t(w[0].0))
        .collect();
    let double_support_fraction = span.map(|(a, b)| {
        let stance = |side: usize, f: usize| {
            let e = &r.support.events[side];
            let Some(&on) = e.heel_strikes.iter().rev().find(|&&h| h <= f) else {
                return false;
            };
            // In stance until the first toe-off after that heel strike (none found: still).
            e.toe_offs.iter().find(|&&o| o > on).is_none_or(|&o| f < o)
        };
        let both = (a..b).filter(|&f| stance(0, f) && stance(1, f)).count();
        both as f64 / (b - a) as f64
    });
    let steps = &r.support.steps;
    let of = |get: &dyn Fn(&crate::support::Step) -> Option<f64>| {
        let v: Vec<f64> = steps
            .iter()
            .filter_map(get)
            .filter(|v| v.is_finite())
            .collect();
        mean_sd(&v)
    };
    let (stride_time_s, stride_time_sd_s) = mean_sd(&strides);
    let (step_time_s, step_time_sd_s) = mean_sd(&step_times);
    let (step_length_m, step_length_sd_m) = of(&|s| s.step_length_m);
    let (step_width_m, step_width_sd_m) = of(&|s| s.step_width_m);
    let (mos_ap_heel_strike_m, mos_ap_heel_strike_sd_m) = of(&|s| s.mos_ap_heel_strike_m);
    let (min_mos_ml_single_stance_m, min_mos_ml_single_stance_sd_m) =
        of(&|s| s.min_mos_ml_single_stance_m);
    GaitFigures {
        heel_strikes: hs.len(),
        toe_offs,
        walking_speed_m_s,
        cadence_steps_per_min,
        stride_time_s,
        stride_time_sd_s,
        step_time_s,
        step_time_sd_s,
        double_support_fraction,
        step_length_m,
        step_length_sd_m,
        step_width_m,
        step_width_sd_m,
        mos_ap_heel_strike_m,
        mos_ap_heel_strike_sd_m,
        min_mos_ml_single_stance_m,
        min_mos_ml_single_stance_sd_m,
    }
}
