//! Rate of a trial: the frame times from the clock column, checked against the median frame
//! interval, and the rate they give (module doc of [`crate::trial`], "Rate"). With
//! [`MissingFrames::Gap`], a frame interval that is a whole multiple of the median interval
//! (within the same tolerance) is taken as dropped frames: the missing frames are put back,
//! every marker unseen in them, for gap filling to bridge or leave as it does any gap.

use super::error::{Column, TrialError, TrialErrorKind as Kind};
use super::header::{Clock, Header};
use super::{MissingFrames, RawMarkers, ReadOptions, Trial, RATE_TOLERANCE};
use crate::warning::Warning;

/// Rows as read: clock values (seconds or frame numbers), their lines, and the marker tracks
/// (`tracks[marker][frame]`, NaN where not seen).
pub(super) struct Rows {
    pub clock: Vec<f64>,
    pub lines: Vec<u64>,
    pub labels: Vec<String>,
    pub tracks: Vec<Vec<[f64; 3]>>,
}

/// The trial from its rows: times and rate (checked), warnings for ignored columns.
pub(super) fn finish(
    rows: Rows,
    header: Header,
    file: &str,
    stem: &str,
    opts: &ReadOptions,
) -> Result<Trial, TrialError> {
    let clock_column = header.column(header.clock_col);
    let Rows {
        mut clock,
        mut lines,
        labels,
        mut tracks,
    } = rows;
    if clock.is_empty() {
        return Err(TrialError::at(file, header.line, Kind::NoData));
    }
    let mut warnings = Vec::new();
    if !header.ignored.is_empty() {
        warnings.push(Warning::IgnoredColumns {
            columns: header.ignored.clone(),
        });
    }
    if opts.missing_frames == MissingFrames::Gap {
        let dropped = put_back_dropped_frames(&mut clock, &mut lines, &mut tracks);
        if dropped > 0 {
            warnings.push(Warning::Approximation {
                what: format!(
                    "{dropped} dropped frame(s) put back as gaps (`missing_frames = \"gap\"`)"
                ),
            });
        }
    }

    let (times_s, rate_hz) = match (header.clock, opts.rate_hz) {
        (Clock::Frames, Some(given_hz)) => {
            let times_s: Vec<f64> = clock.iter().map(|f| f / given_hz).collect();
            check_intervals(&times_s, &lines, false, file, &clock_column)?;
            // Every k-th frame exported: the rows are sampled at the given rate / k.
            let steps: Vec<f64> = clock.windows(2).map(|w| w[1] - w[0]).collect();
            let step = if steps.is_empty() {
                1.0
            } else {
                median(&steps)
            };
            (times_s, given_hz / step)
        }
        (Clock::Frames, None) => {
            return Err(TrialError::cell(
                file,
                header.line,
                clock_column,
                Kind::MissingRate,
            ))
        }
        (Clock::Seconds, given) => {
            let times_s = clock;
            let rate_hz = if times_s.len() < 2 {
                match given {
                    Some(r) => r,
                    None => {
                        let line = lines.first().copied().unwrap_or(header.line);
                        return Err(TrialError::at(file, line, Kind::SingleFrame));
                    }
                }
            } else {
                check_intervals(&times_s, &lines, true, file, &clock_column)?;
                let rate_hz = 1.0 / fitted_interval_s(&times_s);
                if !(rate_hz.is_finite() && rate_hz > 0.0) {
                    return Err(TrialError::new(
                        file,
                        Kind::InvalidRate {
                            rate_hz,
                            hint: "the times are too close together to give a rate; check the \
                                   time column's unit (seconds)",
                        },
                    ));
                }
                if let Some(given_rate_hz) = given {
                    if (rate_hz / given_rate_hz - 1.0).abs() > RATE_TOLERANCE {
                        return Err(TrialError::new(
                            file,
                            Kind::RateMismatch {
                                file_rate_hz: rate_hz,
                                given_rate_hz,
                            },
                        ));
                    }
                }
                rate_hz
            };
            (times_s, rate_hz)
        }
    };

    Ok(Trial {
        name: stem.to_string(),
        file: file.to_string(),
        times_s,
        rate_hz,
        up_axis: opts.up_axis,
        markers: RawMarkers::new(labels, tracks),
        warnings,
    })
}

/// Puts back the frames dropped between two rows: where a clock step is `k >= 2` times the
/// median step, within [`RATE_TOLERANCE`] of it, `k - 1` frames are inserted at even steps,
/// every marker unseen in them; their line is that of the row after the drop. Returns the
/// number of frames put back. Other steps are left for the interval check to report.
fn put_back_dropped_frames(
    clock: &mut Vec<f64>,
    lines: &mut Vec<u64>,
    tracks: &mut [Vec<[f64; 3]>],
) -> usize {
    if clock.len() < 3 {
        return 0;
    }
    let steps: Vec<f64> = clock.windows(2).map(|w| w[1] - w[0]).collect();
    let median_step = median(&steps);
    if !(median_step.is_finite() && median_step > 0.0) {
        return 0;
    }
    // Frames missing after each row (0 almost everywhere).
    let missing: Vec<usize> = steps
        .iter()
        .map(|&d| {
            let k = (d / median_step).round();
            let whole = k >= 2.0 && (d - k * median_step).abs() <= RATE_TOLERANCE * median_step;
            // A drop longer than the rows read is not a dropped frame but a wrong clock.
            if whole && k <= clock.len() as f64 {
                k as usize - 1
            } else {
                0
            }
        })
        .collect();
    let added: usize = missing.iter().sum();
    if added == 0 {
        return 0;
    }
    let n = clock.len() + added;
    let mut new_clock = Vec::with_capacity(n);
    let mut new_lines = Vec::with_capacity(n);
    for (i, (&t, &line)) in clock.iter().zip(lines.iter()).enumerate() {
        new_clock.push(t);
        new_lines.push(line);
        if let (Some(&k), Some(&next), Some(&next_line)) =
            (missing.get(i), clock.get(i + 1), lines.get(i + 1))
        {
            let step = (next - t) / (k + 1) as f64;
            for j in 1..=k {
                new_clock.push(t + j as f64 * step);
                new_lines.push(next_line);
            }
        }
    }
    for track in tracks.iter_mut() {
        let mut new_track = Vec::with_capacity(n);
        for (i, &p) in track.iter().enumerate() {
            new_track.push(p);
            let k = missing.get(i).copied().unwrap_or(0);
            new_track.extend(std::iter::repeat_n([f64::NAN; 3], k));
        }
        *track = new_track;
    }
    *clock = new_clock;
    *lines = new_lines;
    added
}

/// Checks every frame interval against the median interval (strictly increasing times).
/// With `allow_rounding`, times written on a coarse decimal grid may also be off by that grid.
fn check_intervals(
    times_s: &[f64],
    lines: &[u64],
    allow_rounding: bool,
    file: &str,
    clock_column: &Column,
) -> Result<(), TrialError> {
    if times_s.len() < 2 {
        return Ok(());
    }
    let intervals: Vec<f64> = times_s.windows(2).map(|w| w[1] - w[0]).collect();
    let median_s = median(&intervals);
    let strict = RATE_TOLERANCE * median_s;
    let first_bad = |tol: f64| intervals.iter().position(|d| (d - median_s).abs() > tol);
    let Some(mut bad) = first_bad(strict) else {
        return Ok(());
    };
    if allow_rounding {
        if let Some(step_s) = time_grid_step_s(times_s, 0.5 * median_s) {
            match first_bad(strict + step_s) {
                None => return Ok(()),
                Some(b) => bad = b,
            }
        }
    }
    // Interval `bad` ends at frame `bad + 1`.
    Err(TrialError::cell(
        file,
        lines.get(bad + 1).copied().unwrap_or(0),
        clock_column.clone(),
        Kind::UnevenRate {
            interval_s: intervals.get(bad).copied().unwrap_or(f64::NAN),
            median_s,
        },
    ))
}

/// The middle value (the upper one for an even count); `values` non-empty and finite.
fn median(values: &[f64]) -> f64 {
    let mut v = values.to_vec();
    let mid = v.len() / 2;
    if v.is_empty() {
        return f64::NAN;
    }
    let (_, m, _) = v.select_nth_unstable_by(mid, |a, b| a.total_cmp(b));
    *m
}

/// The coarsest power of ten, at most `max_step_s`, on whose grid every time lies (the step the
/// times were rounded to when written), or `None`.
fn time_grid_step_s(times_s: &[f64], max_step_s: f64) -> Option<f64> {
    if !(max_step_s.is_finite() && max_step_s > 0.0) {
        return None;
    }
    let top = max_step_s.log10().floor() as i32;
    if top < -12 {
        return None;
    }
    let top = top.min(6);
    (-12..=top).rev().find_map(|k| {
        let step = if k >= 0 {
            10f64.powi(k)
        } else {
            1.0 / 10f64.powi(-k)
        };
        let on_grid = times_s.iter().all(|&t| {
            let r = (t / step).round();
            (t - r * step).abs() <= 1e-6 * step + 8.0 * f64::EPSILON * t.abs()
        });
        on_grid.then_some(step)
    })
}

/// Least-squares slope of time against frame index, in seconds per frame (at least 2 times).
fn fitted_interval_s(times_s: &[f64]) -> f64 {
    let n = times_s.len() as f64;
    let mean_i = (n - 1.0) / 2.0;
    let mean_t = times_s.iter().sum::<f64>() / n;
    let (mut num, mut den) = (0.0, 0.0);
    for (i, &t) in times_s.iter().enumerate() {
        let di = i as f64 - mean_i;
        num += di * (t - mean_t);
        den += di * di;
    }
    num / den
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn grid_step_of_millisecond_stamps() {
        // 150 Hz stamped to the millisecond: 0, 7, 13, 20 ms ...
        let times: Vec<f64> = (0..20)
            .map(|i| (i as f64 / 150.0 * 1000.0).round() / 1000.0)
            .collect();
        assert_eq!(time_grid_step_s(&times, 0.5 / 150.0), Some(0.001));
        // Exact 100 Hz times lie on the 1 ms grid too (the coarsest at most half a frame).
        let exact: Vec<f64> = (0..20).map(|i| i as f64 / 100.0).collect();
        assert_eq!(time_grid_step_s(&exact, 0.005), Some(0.001));
    }

    #[test]
    fn fitted_interval_of_exact_times() {
        let times: Vec<f64> = (0..11).map(|i| 0.5 + i as f64 * 0.004).collect();
        approx::assert_relative_eq!(fitted_interval_s(&times), 0.004, max_relative = 1e-12);
    }

    #[test]
    fn median_is_the_middle_value() {
        assert_eq!(median(&[3.0, 1.0, 2.0]), 2.0);
        assert_eq!(median(&[4.0, 1.0, 2.0, 3.0]), 3.0);
    }

    #[test]
    fn dropped_frames_come_back_as_unseen_frames() {
        let mut clock = vec![1.0, 2.0, 3.0, 5.0, 6.0, 9.0, 9.5];
        let mut lines = vec![2, 3, 4, 5, 6, 7, 8];
        let mut tracks = vec![clock.iter().map(|&t| [t, 0.0, 0.0]).collect::<Vec<_>>()];
        assert_eq!(
            put_back_dropped_frames(&mut clock, &mut lines, &mut tracks),
            3
        );
        assert_eq!(clock, [1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 9.5]);
        assert_eq!(lines, [2, 3, 4, 5, 5, 6, 7, 7, 7, 8]);
        let seen: Vec<bool> = tracks[0].iter().map(|p| !p[0].is_nan()).collect();
        assert_eq!(
            seen,
            [true, true, true, false, true, true, false, false, true, true]
        );
    }
}
