//! Normalized cycles, after the support stage: each stride and each repetition of a trial
//! resampled to 0-100 % of its duration in [`POINTS`] points (every 1 %), so that cycles of
//! different durations, trials, subjects and conditions can be averaged percent by percent
//! (time normalization of the gait cycle: Winter 1991, *The Biomechanics and Motor Control of
//! Human Gait*, 2nd ed., University of Waterloo Press, ch. 1).
//!
//! Inputs: a [`TrialResult`] (times in s, CoM and XCoM in m, velocity in m/s, margins in m),
//! its heel strikes (frame indices, [`crate::support::events`]) and its repetitions (times in s,
//! [`crate::support::lift`]). Outputs: [`Cycle`]s, written as `cycles.csv` by [`write_cycles`].
//!
//! - A **stride** runs from a heel strike to the next heel strike of the same foot (`side` =
//!   `left` | `right`, numbered from 1 per side); a **repetition** from the start to the end of
//!   a lift repetition (`side` = `both`, its repetition number).
//! - **Interpolation**: the value at `p` % is taken at time `t0 + p / 100 (t1 - t0)` by linear
//!   interpolation between the two frames around it (exact at frames). A value is missing when
//!   either frame around it is missing.
//! - CoM and XCoM positions are relative to the CoM at the cycle's start (0 %), in the lab axes
//!   (`*_x_rel_m`, ...); `com_vertical_rel_m` is the CoM's rise above its height at the start
//!   along the trial's up axis. Velocities (m/s) and margins (m) are as in `frames.csv`.
//!
//! Pure functions: no I/O besides the writer given.

use crate::pipeline::TrialResult;
use crate::trial::UpAxis;
use std::io::{self, Write};

/// Points per cycle: 0, 1, ..., 100 %.
pub const POINTS: usize = 101;

/// Columns of `cycles.csv` (and of the cycles dataset), in order.
pub const COLUMNS: [&str; 21] = [
    "kind",
    "side",
    "cycle",
    "percent",
    "cycle_start_s",
    "cycle_duration_s",
    "time_s",
    "com_x_rel_m",
    "com_y_rel_m",
    "com_z_rel_m",
    "com_vertical_rel_m",
    "com_vx_m_s",
    "com_vy_m_s",
    "com_vz_m_s",
    "com_speed_m_s",
    "xcom_x_rel_m",
    "xcom_y_rel_m",
    "xcom_z_rel_m",
    "bos_margin_m",
    "mos_ap_m",
    "mos_ml_m",
];

/// The numeric curves of a cycle, in the order of [`COLUMNS`] from `com_x_rel_m` on.
pub const CURVES: [&str; 14] = [
    "com_x_rel_m",
    "com_y_rel_m",
    "com_z_rel_m",
    "com_vertical_rel_m",
    "com_vx_m_s",
    "com_vy_m_s",
    "com_vz_m_s",
    "com_speed_m_s",
    "xcom_x_rel_m",
    "xcom_y_rel_m",
    "xcom_z_rel_m",
    "bos_margin_m",
    "mos_ap_m",
    "mos_ml_m",
];

/// One normalized cycle.
#[derive(Clone, Debug, PartialEq)]
pub struct Cycle {
    /// `stride` or `repetition`.
    pub kind: &'static str,
    /// `left`, `right` (strides) or `both` (repetitions).
    pub side: &'static str,
    /// 1-based, per kind and side.
    pub cycle: usize,
    pub start_s: f64,
    pub duration_s: f64,
    /// `curves[c][p]`: curve `c` of [`CURVES`] at `p` %.
    pub curves: Vec<[Option<f64>; POINTS]>,
}

impl Cycle {
    /// The curve named `name` (one of [`CURVES`]).
    pub fn curve(&self, name: &str) -> Option<&[Option<f64>; POINTS]> {
        CURVES
            .iter()
            .position(|c| *c == name)
            .and_then(|i| self.curves.get(i))
    }
}

/// The per-frame series a cycle is cut from: slices of a [`TrialResult`] or of a model.
#[derive(Clone, Copy, Debug)]
pub struct Source<'a> {
    pub times_s: &'a [f64],
    pub up_axis: UpAxis,
    pub com: &'a [Option<[f64; 3]>],
    pub velocity: &'a [Option<[f64; 3]>],
    pub xcom: &'a [Option<[f64; 3]>],
    pub bos_margin_m: &'a [Option<f64>],
    pub mos_ap_m: &'a [Option<f64>],
    pub mos_ml_m: &'a [Option<f64>],
}

impl<'a> Source<'a> {
    pub fn of(r: &'a TrialResult) -> Source<'a> {
        Source {
            times_s: &r.times_s,
            up_axis: r.up_axis,
            com: &r.com,
            velocity: &r.velocity,
            xcom: &r.xcom,
            bos_margin_m: &r.support.bos_margin_m,
            mos_ap_m: &r.support.mos_ap_m,
            mos_ml_m: &r.support.mos_ml_m,
        }
    }
}

/// A span of a cycle, in (fractional) frame positions.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Span {
    pub kind: &'static str,
    pub side: &'static str,
    pub cycle: usize,
    pub start: f64,
    pub end: f64,
}

/// The strides of a trial: consecutive heel strikes of each foot (`heel_strikes[0]` left,
/// `[1]` right, frame indices).
pub fn strides(heel_strikes: [&[usize]; 2]) -> Vec<Span> {
    let mut spans = Vec::new();
    for (side, strikes) in ["left", "right"].into_iter().zip(heel_strikes) {
        for (k, w) in strikes.windows(2).enumerate() {
            if w[1] > w[0] {
                spans.push(Span {
                    kind: "stride",
                    side,
                    cycle: k + 1,
                    start: w[0] as f64,
                    end: w[1] as f64,
                });
            }
        }
    }
    spans
}

/// The fractional frame position of time `t_s` (linear between frames), `None` outside.
pub fn position_of(times_s: &[f64], t_s: f64) -> Option<f64> {
    let (first, last) = (*times_s.first()?, *times_s.last()?);
    if !(first..=last).contains(&t_s) {
        return None;
    }
    let i = times_s.partition_point(|&t| t <= t_s).saturating_sub(1);
    match times_s.get(i + 1) {
        Some(&next) if next > times_s[i] => {
            Some(i as f64 + (t_s - times_s[i]) / (next - times_s[i]))
        }
        _ => Some(i as f64),
    }
}

/// The repetitions of a lift trial as spans.
pub fn repetitions(times_s: &[f64], reps: &[crate::support::lift::Rep]) -> Vec<Span> {
    reps.iter()
        .filter_map(|r| {
            let (start, end) = (
                position_of(times_s, r.start_s)?,
                position_of(times_s, r.end_s)?,
            );
            (end > start).then_some(Span {
                kind: "repetition",
                side: "both",
                cycle: r.rep,
                start,
                end,
            })
        })
        .collect()
}

/// Every cycle of a trial: its strides, then its repetitions.
pub fn of_result(r: &TrialResult) -> Vec<Cycle> {
    let ev = &r.support.events;
    let mut spans = strides([&ev[0].heel_strikes, &ev[1].heel_strikes]);
    if let Some(lift) = &r.lift {
        spans.extend(repetitions(&r.times_s, &lift.reps));
    }
    let source = Source::of(r);
    spans.iter().map(|s| normalize(&source, s)).collect()
}

/// Linear interpolation of a series at a fractional frame position (exact at frames).
fn at<T: Copy>(series: &[Option<T>], pos: f64, lerp: impl Fn(T, T, f64) -> T) -> Option<T> {
    let i = pos.floor();
    let w = pos - i;
    let i = i as usize;
    let a = series.get(i).copied().flatten()?;
    if w == 0.0 {
        return Some(a);
    }
    let b = series.get(i + 1).copied().flatten()?;
    Some(lerp(a, b, w))
}

/// The time at a fractional frame position (NaN outside the trial).
fn time_at(times_s: &[f64], pos: f64) -> f64 {
    let i = pos.floor() as usize;
    let w = pos - pos.floor();
    match (times_s.get(i), times_s.get(i + 1)) {
        (Some(&a), _) if w == 0.0 => a,
        (Some(&a), Some(&b)) => lerp1(a, b, w),
        _ => f64::NAN,
    }
}

fn lerp1(a: f64, b: f64, w: f64) -> f64 {
    a + (b - a) * w
}

fn lerp3(a: [f64; 3], b: [f64; 3], w: f64) -> [f64; 3] {
    [
        lerp1(a[0], b[0], w),
        lerp1(a[1], b[1], w),
        lerp1(a[2], b[2], w),
    ]
}

/// Resamples one span of `source` to 0-100 %.
pub fn normalize(source: &Source, span: &Span) -> Cycle {
    let mut curves = vec![[None; POINTS]; CURVES.len()];
    let start_s = time_at(source.times_s, span.start);
    let end_s = time_at(source.times_s, span.end);
    let origin = at(source.com, span.start, lerp3);
    let up = source.up_axis;
    for p in 0..POINTS {
        let pos = span.start + (span.end - span.start) * p as f64 / 100.0;
        // Exactly the end frame at 100 % (no rounding past it).
        let pos = if p == POINTS - 1 { span.end } else { pos };
        let c = at(source.com, pos, lerp3);
        let v = at(source.velocity, pos, lerp3);
        let x = at(source.xcom, pos, lerp3);
        let rel = |q: Option<[f64; 3]>, k: usize| Some(q?[k] - origin?[k]);
        let values = [
            rel(c, 0),
            rel(c, 1),
            rel(c, 2),
            c.zip(origin).map(|(c, o)| up.height(&c) - up.height(&o)),
            v.map(|v| v[0]),
            v.map(|v| v[1]),
            v.map(|v| v[2]),
            v.map(|v| (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt()),
            rel(x, 0),
            rel(x, 1),
            rel(x, 2),
            at(source.bos_margin_m, pos, lerp1),
            at(source.mos_ap_m, pos, lerp1),
            at(source.mos_ml_m, pos, lerp1),
        ];
        for (curve, v) in curves.iter_mut().zip(values) {
            curve[p] = v;
        }
    }
    Cycle {
        kind: span.kind,
        side: span.side,
        cycle: span.cycle,
        start_s,
        duration_s: end_s - start_s,
        curves,
    }
}

/// Writes `cycles.csv`: one row per cycle and percent, columns [`COLUMNS`]; numbers with six
/// decimals, missing values empty.
pub fn write_cycles(cycles: &[Cycle], mut w: impl Write) -> io::Result<()> {
    writeln!(w, "{}", COLUMNS.join(","))?;
    for c in cycles {
        for p in 0..POINTS {
            let time_s = c.start_s + c.duration_s * p as f64 / 100.0;
            write!(
                w,
                "{},{},{},{},{:.6},{:.6},{:.6}",
                c.kind, c.side, c.cycle, p, c.start_s, c.duration_s, time_s
            )?;
            for curve in &c.curves {
                match curve[p] {
                    Some(v) if v.is_finite() => write!(w, ",{v:.6}")?,
                    _ => w.write_all(b",")?,
                }
            }
            w.write_all(b"\n")?;
        }
    }
    Ok(())
}
