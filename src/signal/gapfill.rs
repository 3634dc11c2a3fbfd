//! Gap filling (docs/DESIGN.md 6.1): [`RawMarkers`] (metres, `None` where a marker was not seen)
//! become [`Markers`] (runs of known samples) by a natural cubic spline over short interior
//! gaps.
//!
//! Inputs: the raw tracks, the frame times `times_s` (seconds, strictly increasing) and the
//! longest gap to bridge, `max_gap_s`. Outputs: the markers and the list of filled gaps.
//!
//! Rules, per marker:
//! - A *gap* is a maximal stretch of missing frames. A gap touching the first or last frame of
//!   the trial is a *trial-end gap*: it is never filled (no extrapolation).
//! - An interior gap of `k` missing frames lasts `k * dt` seconds, where `dt` is the mean frame
//!   interval across it, `dt = (t[last + 1] - t[first - 1]) / (k + 1)`: at a constant rate `fs`
//!   a gap of `k` frames lasts `k / fs` seconds (one missing frame at 100 Hz lasts 0.01 s). It is
//!   *fillable* when `k * dt <= max_gap_s` (compared in frames, `k <= max_gap_s / dt`, with a
//!   tolerance of 1e-6 frame for rounding in the times). Longer gaps stay missing.
//! - Runs of present samples joined by fillable gaps form a *stretch*. One natural cubic spline
//!   ([`NaturalSpline`]; knots at the frame times of every present sample of the stretch, each
//!   coordinate on its own) is evaluated at the missing frames of the stretch. The stretch ends
//!   at unfillable gaps and trial-end gaps, so the spline never reaches across them.
//! - A stretch with fewer than 2 present samples cannot be splined; it is left as measured.
//!   (A fillable gap always has a present sample on each side, so this only guards bad times.)
//! - A sample with a non-finite coordinate counts as missing.
//!
//! Method: cubic spline interpolation of short marker gaps. Howarth & Callaghan (2010) compared
//! linear, cubic spline and rigid-body (local coordinate system) fills of marker gaps and found
//! the spline best for short gaps (docs/reference/methods.md 4); about 0.1 s is the usual
//! limit (common practice, no source), hence the default `max_gap_s` of 0.10 s (docs/DESIGN.md 6).

use super::butterworth::{filtfilt_xyz_with_pad, Coefficients};
use super::spline::NaturalSpline;
use super::{Markers, Run, Track};
use crate::trial::RawMarkers;
use crate::warning::Warning;

/// One interior gap bridged by the spline.
#[derive(Clone, Debug, PartialEq)]
pub struct FilledGap {
    /// Index into the marker labels.
    pub marker: usize,
    /// First filled frame.
    pub start_frame: usize,
    /// Number of filled frames.
    pub len_frames: usize,
}

/// Tolerance, in frames, on the gap length limit (rounding in the frame times).
const GAP_TOLERANCE_FRAMES: f64 = 1e-6;

/// Fills every interior gap of at most `max_gap_s` seconds (module doc), marker by marker, on
/// a copy of the raw tracks ([`fill_and_low_pass`] without a filter, on one thread).
///
/// The frames are those of `times_s`: samples of a raw track beyond `times_s.len()` are ignored
/// and a track shorter than `times_s` is missing at the frames it lacks. A `max_gap_s` that is
/// negative or not a number fills nothing. Filled gaps come sorted by marker, then frame.
pub fn fill_gaps(raw: &RawMarkers, times_s: &[f64], max_gap_s: f64) -> (Markers, Vec<FilledGap>) {
    fill_and_low_pass(raw.clone(), times_s, max_gap_s, None, 1)
}

/// Fills the gaps of the raw tracks as [`fill_gaps`] does, taking them over: each track's
/// buffer is filled in place and becomes its longest run (no new memory for the samples but
/// for the other runs of a track), then low-passed by `low_pass` (a section and its end pad,
/// as [`low_pass`](super::low_pass) does it) while it is still in cache. The markers are
/// shared out among up to `threads` threads; the result does not depend on their number.
pub fn fill_and_low_pass(
    raw: RawMarkers,
    times_s: &[f64],
    max_gap_s: f64,
    low_pass: Option<(&Coefficients, usize)>,
    threads: usize,
) -> (Markers, Vec<FilledGap>) {
    let labels = raw.labels.clone();
    let items: Vec<(usize, Vec<[f64; 3]>)> = raw.into_tracks().into_iter().enumerate().collect();
    let groups = super::in_groups(items, threads, |group| {
        let mut filled = Vec::new();
        let mut spline = NaturalSpline::default();
        let mut ext = Vec::new();
        let tracks: Vec<Track> = group
            .into_iter()
            .map(|(marker, samples)| {
                let mut track = fill_flat_track(
                    marker,
                    samples,
                    times_s,
                    max_gap_s,
                    &mut filled,
                    &mut spline,
                );
                if let Some((c, pad)) = low_pass {
                    for run in track.runs_mut() {
                        filtfilt_xyz_with_pad(c, &mut run.xyz, pad, &mut ext);
                    }
                }
                track
            })
            .collect();
        (tracks, filled)
    });
    let mut tracks = Vec::with_capacity(labels.len());
    let mut filled = Vec::new();
    for (t, f) in groups {
        tracks.extend(t);
        filled.extend(f);
    }
    let markers = Markers {
        labels,
        tracks,
        n_frames: times_s.len(),
    };
    (markers, filled)
}

/// Fills one flat track in place (see [`fill_and_low_pass`]).
fn fill_flat_track(
    marker: usize,
    mut samples: Vec<[f64; 3]>,
    times_s: &[f64],
    max_gap_s: f64,
    filled: &mut Vec<FilledGap>,
    spline: &mut NaturalSpline<3>,
) -> Track {
    let n = times_s.len();
    let present = present_runs_flat(&samples, n);
    // The frames of each run to be, `start .. end`, in order.
    let mut spans = Vec::with_capacity(present.len());
    for stretch in stretches(&present, times_s, max_gap_s) {
        let points = stretch
            .iter()
            .flat_map(|p| p.start..p.end)
            .map(|f| (times_s[f], samples[f]));
        if stretch.len() > 1 && spline.refit(points) {
            for gap in gaps_of(marker, stretch) {
                let frames = gap.start_frame..gap.start_frame + gap.len_frames;
                for f in frames {
                    samples[f] = spline.eval(times_s[f]);
                }
                filled.push(gap);
            }
            spans.push((stretch[0].start, stretch[stretch.len() - 1].end));
        } else {
            spans.extend(stretch.iter().map(|p| (p.start, p.end)));
        }
    }
    let Some(longest) = (0..spans.len()).max_by_key(|&k| spans[k].1 - spans[k].0) else {
        return Track::default();
    };
    let mut runs: Vec<Run> = spans
        .iter()
        .enumerate()
        .map(|(k, &(start, end))| Run {
            start,
            xyz: if k == longest {
                Vec::new()
            } else {
                samples[start..end].to_vec()
            },
        })
        .collect();
    let (start, end) = spans[longest];
    samples.copy_within(start..end, 0);
    samples.truncate(end - start);
    runs[longest].xyz = samples;
    Track { runs }
}

fn present_runs_flat(samples: &[[f64; 3]], n_frames: usize) -> Vec<Present> {
    runs_where(n_frames, |f| {
        samples
            .get(f)
            .is_some_and(|p| p.iter().all(|c| c.is_finite()))
    })
}

/// One [`Warning::FilledGap`] per filled gap: the marker label, the time of the first filled
/// frame and the gap length `len_frames / rate_hz`, in seconds.
///
/// A marker index without a label is named `#<index>`; a frame beyond `times_s` starts at
/// `start_frame / rate_hz`.
pub fn filled_warnings(
    gaps: &[FilledGap],
    labels: &[String],
    times_s: &[f64],
    rate_hz: f64,
) -> Vec<Warning> {
    gaps.iter()
        .map(|g| Warning::FilledGap {
            marker: labels
                .get(g.marker)
                .cloned()
                .unwrap_or_else(|| format!("#{}", g.marker)),
            start_s: times_s
                .get(g.start_frame)
                .copied()
                .unwrap_or(g.start_frame as f64 / rate_hz),
            length_s: g.len_frames as f64 / rate_hz,
        })
        .collect()
}

/// A maximal run of present samples, `start .. end` (end exclusive).
#[derive(Clone, Copy, Debug)]
struct Present {
    start: usize,
    end: usize,
}

/// The maximal runs of frames `0 .. n_frames` where `known` holds.
fn runs_where(n_frames: usize, known: impl Fn(usize) -> bool) -> Vec<Present> {
    let mut runs = Vec::new();
    let mut start = None;
    for frame in 0..n_frames {
        match (known(frame), start) {
            (true, None) => start = Some(frame),
            (false, Some(s)) => {
                runs.push(Present {
                    start: s,
                    end: frame,
                });
                start = None;
            }
            _ => {}
        }
    }
    if let Some(s) = start {
        runs.push(Present {
            start: s,
            end: n_frames,
        });
    }
    runs
}

/// The stretches of `present`, in order: maximal groups of consecutive runs joined by gaps
/// that may be filled ([`is_fillable`]).
fn stretches<'a>(
    present: &'a [Present],
    times_s: &'a [f64],
    max_gap_s: f64,
) -> impl Iterator<Item = &'a [Present]> + 'a {
    let mut i = 0;
    std::iter::from_fn(move || {
        if i >= present.len() {
            return None;
        }
        let mut j = i;
        while j + 1 < present.len() && is_fillable(present[j], present[j + 1], times_s, max_gap_s) {
            j += 1;
        }
        let stretch = &present[i..=j];
        i = j + 1;
        Some(stretch)
    })
}

/// The gaps between the runs of a filled stretch of `marker`.
fn gaps_of(marker: usize, stretch: &[Present]) -> impl Iterator<Item = FilledGap> + '_ {
    stretch.windows(2).map(move |w| FilledGap {
        marker,
        start_frame: w[0].end,
        len_frames: w[1].start - w[0].end,
    })
}

/// Whether the interior gap between two present runs may be filled (module doc).
fn is_fillable(before: Present, after: Present, times_s: &[f64], max_gap_s: f64) -> bool {
    // Frames before.end ..= after.start - 1 are missing; before.end >= 1 since `before` is
    // non-empty, and after.start < times_s.len() since `after` is non-empty.
    let k = after.start - before.end;
    let span_s = times_s[after.start] - times_s[before.end - 1];
    let dt_s = span_s / (k + 1) as f64;
    if !(dt_s > 0.0 && dt_s.is_finite()) {
        return false;
    }
    k as f64 <= max_gap_s / dt_s + GAP_TOLERANCE_FRAMES
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;

    const RATE_HZ: f64 = 100.0;

    fn times(n: usize) -> Vec<f64> {
        (0..n).map(|i| i as f64 / RATE_HZ).collect()
    }

    /// A cubic in time, one coefficient set per coordinate (synthetic, metres).
    fn cubic(t: f64) -> [f64; 3] {
        [
            0.1 + 0.5 * t - 0.3 * t * t + 0.2 * t * t * t,
            1.0 - 0.2 * t + 0.05 * t * t * t,
            0.9 + 0.1 * t * t - 0.04 * t * t * t,
        ]
    }

    fn raw_with_gap(n: usize, missing: std::ops::Range<usize>) -> (RawMarkers, Vec<f64>) {
        let t = times(n);
        let track = t
            .iter()
            .enumerate()
            .map(|(f, &ti)| (!missing.contains(&f)).then(|| cubic(ti)))
            .collect();
        let raw = RawMarkers::from_options(vec!["heel".to_string()], vec![track]);
        (raw, t)
    }

    #[test]
    fn filling_and_low_passing_at_once_equals_one_after_the_other() {
        // Trial-end gaps, short and long interior gaps, a lone sample, a NaN coordinate, an
        // empty track, a short track, repeated times (no spline): filled and low-passed track by
        // track on any number of threads, as filled and then low-passed.
        let n = 60;
        let mut times = times(n);
        let pattern = |k: usize| -> Vec<Option<[f64; 3]>> {
            (0..n)
                .map(|f| {
                    let t = f as f64 / RATE_HZ;
                    let missing = match k {
                        0 => f < 3 || (10..14).contains(&f) || (30..50).contains(&f) || f == 55,
                        1 => f % 7 == 3 || f > 57,
                        2 => f != 20,
                        3 => true,
                        _ => (5..8).contains(&f),
                    };
                    let mut p = cubic(t + k as f64);
                    if k == 1 && f == 12 {
                        p[1] = f64::NAN;
                    }
                    (!missing).then_some(p)
                })
                .collect()
        };
        let mut tracks: Vec<Vec<Option<[f64; 3]>>> = (0..5).map(pattern).collect();
        tracks[4].truncate(40);
        let labels: Vec<String> = (0..5).map(|k| format!("m{k}")).collect();
        for repeated_time in [false, true] {
            if repeated_time {
                times[25] = times[24];
            }
            let raw = RawMarkers::from_options(labels.clone(), tracks.clone());
            let c = crate::signal::design(RATE_HZ, 6.0, true).unwrap();
            for threads in [1, 2, 3] {
                let (mut want, want_gaps) = fill_gaps(&raw, &times, 0.1);
                crate::signal::low_pass_on(&mut want, RATE_HZ, 6.0, threads).unwrap();
                let (got, gaps) =
                    fill_and_low_pass(raw.clone(), &times, 0.1, Some((&c, c.pad_len())), threads);
                assert_eq!(
                    got, want,
                    "{threads} threads, repeated time {repeated_time}"
                );
                assert_eq!(gaps, want_gaps);
            }
        }
    }

    #[test]
    fn fills_a_cubic_across_an_interior_gap() {
        // 8 missing frames in the middle of 400: far from the ends, where the natural end
        // condition (S'' = 0, wrong for this cubic) has decayed away.
        let (raw, t) = raw_with_gap(400, 196..204);
        let (markers, gaps) = fill_gaps(&raw, &t, 0.10);
        assert_eq!(
            gaps,
            vec![FilledGap {
                marker: 0,
                start_frame: 196,
                len_frames: 8
            }]
        );
        assert_eq!(markers.tracks[0].runs.len(), 1);
        for (f, &tf) in t.iter().enumerate().take(204).skip(196) {
            let got = markers.tracks[0].at(f).unwrap();
            let want = cubic(tf);
            for d in 0..3 {
                assert_abs_diff_eq!(got[d], want[d], epsilon = 1e-6);
            }
        }
        // Measured samples are kept as they are.
        assert_eq!(markers.tracks[0].at(10), Some(cubic(t[10])));
    }

    #[test]
    fn fills_a_gap_exactly_at_the_limit() {
        // 10 frames at 100 Hz last 0.10 s (k / fs).
        let (raw, t) = raw_with_gap(100, 40..50);
        let (markers, gaps) = fill_gaps(&raw, &t, 0.10);
        assert_eq!(gaps.len(), 1);
        assert_eq!(gaps[0].len_frames, 10);
        assert!((40..50).all(|f| markers.tracks[0].at(f).is_some()));
    }

    #[test]
    fn refuses_a_gap_one_frame_longer_than_the_limit() {
        let (raw, t) = raw_with_gap(100, 40..51);
        let (markers, gaps) = fill_gaps(&raw, &t, 0.10);
        assert!(gaps.is_empty());
        let track = &markers.tracks[0];
        assert!((40..51).all(|f| track.at(f).is_none()));
        assert_eq!(track.runs.len(), 2);
        assert_eq!((track.runs[0].start, track.runs[0].end()), (0, 40));
        assert_eq!((track.runs[1].start, track.runs[1].end()), (51, 100));
    }

    #[test]
    fn never_fills_trial_ends() {
        let t = times(50);
        let track = (0..50)
            .map(|f| (3..47).contains(&f).then(|| cubic(t[f])))
            .collect();
        let raw = RawMarkers::from_options(vec!["toe".to_string()], vec![track]);
        let (markers, gaps) = fill_gaps(&raw, &t, 1.0);
        assert!(gaps.is_empty());
        let tr = &markers.tracks[0];
        assert!([0, 1, 2, 47, 48, 49].iter().all(|&f| tr.at(f).is_none()));
        assert_eq!(tr.runs.len(), 1);
        assert_eq!((tr.runs[0].start, tr.runs[0].end()), (3, 47));
    }

    #[test]
    fn a_long_gap_bounds_the_spline() {
        // Short gap at 10..12 is filled from the first stretch only; the long gap 30..60 stays
        // missing, and the samples after it (a different level) do not move the fill.
        let t = times(100);
        let mut track: Vec<Option<[f64; 3]>> = (0..100).map(|f| Some(cubic(t[f]))).collect();
        for s in track.iter_mut().take(12).skip(10) {
            *s = None;
        }
        for s in track.iter_mut().take(60).skip(30) {
            *s = None;
        }
        let mut far = track.clone();
        for s in far.iter_mut().skip(60) {
            *s = Some([5.0, 5.0, 5.0]);
        }
        let labels = vec!["knee".to_string()];
        let (a, gaps_a) = fill_gaps(
            &RawMarkers::from_options(labels.clone(), vec![track]),
            &t,
            0.1,
        );
        let (b, _) = fill_gaps(&RawMarkers::from_options(labels, vec![far]), &t, 0.1);
        assert_eq!(gaps_a.len(), 1);
        assert_eq!((gaps_a[0].start_frame, gaps_a[0].len_frames), (10, 2));
        assert_eq!(a.tracks[0].at(10), b.tracks[0].at(10));
        assert_eq!(a.tracks[0].at(11), b.tracks[0].at(11));
        assert!((30..60).all(|f| a.tracks[0].at(f).is_none()));
    }

    #[test]
    fn two_knots_give_a_straight_line() {
        // One sample each side of a one-frame gap, trial ends missing beyond them.
        let t = times(5);
        let track = vec![
            None,
            Some([0.0, 1.0, 2.0]),
            None,
            Some([1.0, 3.0, 2.0]),
            None,
        ];
        let raw = RawMarkers::from_options(vec!["a".to_string()], vec![track]);
        let (m, gaps) = fill_gaps(&raw, &t, 0.01);
        assert_eq!(gaps.len(), 1);
        let p = m.tracks[0].at(2).unwrap();
        assert_abs_diff_eq!(p[0], 0.5, epsilon = 1e-12);
        assert_abs_diff_eq!(p[1], 2.0, epsilon = 1e-12);
        assert_abs_diff_eq!(p[2], 2.0, epsilon = 1e-12);
    }

    #[test]
    fn odd_inputs_do_not_panic() {
        let t = times(6);
        let raw = RawMarkers::from_options(
            vec!["a".into(), "b".into(), "c".into()],
            vec![
                vec![],
                vec![Some([1.0; 3]), None, Some([f64::NAN, 0.0, 0.0]), None],
                vec![Some([1.0; 3]); 9],
            ],
        );
        let (m, gaps) = fill_gaps(&raw, &t, f64::NAN);
        assert!(gaps.is_empty());
        assert_eq!(m.n_frames, 6);
        assert!(m.tracks[0].runs.is_empty());
        assert_eq!(m.tracks[1].n_known(), 1);
        assert_eq!(m.tracks[2].n_known(), 6);
        let (_, none) = fill_gaps(&raw, &[], 0.1);
        assert!(none.is_empty());
    }

    #[test]
    fn warnings_name_marker_start_and_length() {
        let gaps = vec![FilledGap {
            marker: 0,
            start_frame: 40,
            len_frames: 10,
        }];
        let w = filled_warnings(&gaps, &["heel".to_string()], &times(100), RATE_HZ);
        match &w[..] {
            [Warning::FilledGap {
                marker,
                start_s,
                length_s,
            }] => {
                assert_eq!(marker, "heel");
                assert_abs_diff_eq!(*start_s, 0.40, epsilon = 1e-12);
                assert_abs_diff_eq!(*length_s, 0.10, epsilon = 1e-12);
            }
            other => panic!("unexpected warnings {other:?}"),
        }
    }
}
