//! Gait events and steps of walking trials: Zeni et al. 2008 (Gait Posture 27:710) refined by
//! the speed thresholds of Bonci et al. 2022 (doi 10.3389/fbioe.2022.868928), then per step the
//! step length and width, AP and ML MoS (Hof et al. 2005) and the CoM vertical excursion.
//!
//! Inputs: the foot series, CoM and XCoM per frame (metres), the progression direction, the
//! frame times (s). Outputs: events (frame indices) and [`Step`]s, into the support series.

use super::progression::dot;
use super::stage::{FootFrames, Step, SupportSeries, FOOT_STEMS, HEEL};
use super::{refine_events, zeni_events, RefineOptions};
use crate::config::GaitEventMethod;
use crate::signal::derivative;
use crate::trial::UpAxis;

/// How [`gait`] finds events.
#[derive(Clone, Copy, Debug)]
pub(super) struct Events {
    pub(super) method: GaitEventMethod,
    /// Mean horizontal CoM speed, the walking speed of the Bonci et al. 2022 thresholds.
    pub(super) walking_speed_m_s: f64,
}

/// 3-D speed per frame of one foot point, m/s, `None` where unknown.
pub(super) fn speed_of(series: &[Option<[f64; 3]>], rate_hz: f64) -> Vec<Option<f64>> {
    let mut velocity = Vec::new();
    derivative::velocity_into(series, 1.0 / rate_hz, &mut velocity);
    velocity
        .iter()
        .map(|v| v.map(|v| (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt()))
        .collect()
}

/// The first of the frames `sorted` (in increasing order, as events are) after `f`.
pub(super) fn first_after(sorted: &[usize], f: usize) -> Option<usize> {
    sorted.get(sorted.partition_point(|&t| t <= f)).copied()
}

/// Gait events and steps (module doc).
#[allow(clippy::too_many_arguments)]
pub(super) fn gait(
    out: &mut SupportSeries,
    foot: &FootFrames,
    com: &[Option<[f64; 3]>],
    xcom: &[Option<[f64; 3]>],
    up: UpAxis,
    times_s: &[f64],
    rate_hz: f64,
    prog: [f64; 2],
    events: Events,
    threads: usize,
) {
    let n = com.len();
    let along = |side: usize, k: usize| -> Vec<Option<f64>> {
        (0..n)
            .map(|f| {
                let p = foot.at(side, k, f)?;
                let s = foot.sacrum.get(f).copied().flatten()?;
                Some(dot(up.horizontal(&p), prog) - dot(up.horizontal(&s), prog))
            })
            .collect()
    };
    let toe = |side: usize| foot.front(side);
    // Events of the left foot when it has a heel and toe, then of the right when both have.
    let has = |side: usize| {
        !(foot.points[side][HEEL].is_empty() || foot.points[side][toe(side)].is_empty())
    };
    let sides: Vec<usize> = (0..2).take_while(|&side| has(side)).collect();
    let found = crate::signal::in_groups(sides.clone(), threads, |group| {
        group
            .into_iter()
            .map(|side| {
                let zeni = zeni_events(&along(side, HEEL), &along(side, toe(side)), rate_hz);
                match events.method {
                    GaitEventMethod::Zeni => zeni,
                    GaitEventMethod::ZeniBonci => refine_events(
                        &zeni,
                        &speed_of(&foot.points[side][HEEL], rate_hz),
                        &speed_of(&foot.points[side][toe(side)], rate_hz),
                        events.walking_speed_m_s,
                        &RefineOptions::default(),
                    ),
                }
            })
            .collect::<Vec<_>>()
    });
    for (&side, e) in sides.iter().zip(found.into_iter().flatten()) {
        out.events[side] = e;
    }
    if sides.len() < 2 {
        return;
    }
    let ml = [-prog[1], prog[0]];
    let xcom_h = |f: usize| xcom.get(f).copied().flatten().map(|x| up.horizontal(&x));
    let time = |f: usize| times_s.get(f).copied().unwrap_or(f as f64 / rate_hz);
    let mut steps = Vec::new();
    for side in 0..2 {
        let other = 1 - side;
        let hs = &out.events[side].heel_strikes;
        for (i, &f) in hs.iter().enumerate() {
            let heel = foot.at(side, HEEL, f).map(|p| up.horizontal(&p));
            let other_heel = foot.at(other, HEEL, f).map(|p| up.horizontal(&p));
            let d = heel
                .zip(other_heel)
                .map(|(a, b)| [a[0] - b[0], a[1] - b[1]]);
            let toe_off = first_after(&out.events[side].toe_offs, f);
            // Single stance on `side`: from the other foot's toe-off to its next heel strike.
            let other_to = first_after(&out.events[other].toe_offs, f);
            let other_hs = other_to.and_then(|t0| first_after(&out.events[other].heel_strikes, t0));
            let min_ml = match (other_to, other_hs) {
                (Some(a), Some(b)) => out.mos_ml_m[a..b.min(n)]
                    .iter()
                    .flatten()
                    .copied()
                    .reduce(f64::min),
                _ => None,
            };
            let excursion = hs.get(i + 1).and_then(|&next| {
                let heights: Vec<f64> = com[f..next.min(n)]
                    .iter()
                    .flatten()
                    .map(|c| up.height(c))
                    .collect();
                if heights.len() + 1 < next - f {
                    return None;
                }
                let max = heights.iter().copied().reduce(f64::max)?;
                let min = heights.iter().copied().reduce(f64::min)?;
                Some(max - min)
            });
            steps.push(Step {
                side: if side == 0 { "left" } else { "right" },
                heel_strike_s: time(f),
                toe_off_s: toe_off.map(time),
                step_length_m: d.map(|d| dot(d, prog).abs()),
                step_width_m: d.map(|d| dot(d, ml).abs()),
                mos_ap_heel_strike_m: xcom_h(f)
                    .zip(heel)
                    .map(|(xi, h)| dot(h, prog) - dot(xi, prog)),
                mos_ml_heel_strike_m: xcom_h(f).and_then(|xi| {
                    // Outward: +ml (left of progression) for the left foot, -ml for the right.
                    let out = if side == 0 { ml } else { [-ml[0], -ml[1]] };
                    let border = (0..FOOT_STEMS.len())
                        .filter_map(|k| foot.at(side, k, f))
                        .map(|p| dot(up.horizontal(&p), out))
                        .reduce(f64::max)?;
                    Some(border - dot(xi, out))
                }),
                min_mos_ml_single_stance_m: min_ml,
                com_vertical_excursion_m: excursion,
            });
        }
    }
    steps.sort_by(|a, b| a.heel_strike_s.total_cmp(&b.heel_strike_s));
    out.steps = steps;
}
