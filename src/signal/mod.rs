//! Stage 2, signal conditioning (docs/DESIGN.md 6): gappy marker tracks become complete, smoothed
//! runs, and series become their time derivatives.
//!
//! - [`gapfill`]: [`RawMarkers`](crate::trial::RawMarkers) (metres, `None` where unseen) ->
//!   [`Markers`] (runs of known samples) by a natural cubic spline ([`spline`]) over short interior
//!   gaps; longer gaps and trial ends stay missing.
//! - [`butterworth`]: zero-lag low-pass of every run (Winter's corrected dual-pass 2nd-order
//!   Butterworth; Winter, *Biomechanics and Motor Control of Human Movement*, 4th ed., p. 69).
//! - [`residual`]: Winter's residual analysis to choose the cut-off (ibid., section 3.4.4.3).
//! - [`derivative`]: central differences for velocity (m/s) and acceleration (m/s^2).
//!
//! Everything here is a pure function over slices and owned values: no I/O, no printing.
//! Units: seconds, hertz, metres.

pub mod butterworth;
pub mod cutoff;
pub mod derivative;
pub mod gapfill;
pub mod residual;
pub mod spline;

pub use butterworth::{design, filtfilt, low_pass, low_pass_on, Coefficients};
pub use gapfill::{fill_and_low_pass, fill_gaps, filled_warnings, FilledGap};
pub use residual::{default_cutoffs, residuals, suggest, ResidualSuggestion};
pub use spline::NaturalSpline;

/// Runs `f` on `items` cut into up to `threads` runs of consecutive items, each run on a thread
/// of its own (the first on the calling thread); the results in the order of the items.
pub(crate) fn in_groups<T: Send, U: Send>(
    mut items: Vec<T>,
    threads: usize,
    f: impl Fn(Vec<T>) -> U + Sync,
) -> Vec<U> {
    let size = items.len().div_ceil(threads.max(1)).max(1);
    let mut groups = Vec::new();
    while items.len() > size {
        let rest = items.split_off(size);
        groups.push(std::mem::replace(&mut items, rest));
    }
    groups.push(items);
    if groups.len() == 1 {
        return groups.into_iter().map(&f).collect();
    }
    std::thread::scope(|s| {
        let mut groups = groups.into_iter();
        let first = groups.next();
        let f = &f;
        let handles: Vec<_> = groups.map(|g| s.spawn(move || f(g))).collect();
        let mut out: Vec<U> = first.into_iter().map(f).collect();
        for h in handles {
            match h.join() {
                Ok(u) => out.push(u),
                // A panic in `f` is a bug: pass it on.
                Err(panic) => std::panic::resume_unwind(panic),
            }
        }
        out
    })
}

/// `(a(), b())`, with `a` on a thread of its own when `threads > 1`.
pub(crate) fn both<A: Send, B>(
    threads: usize,
    a: impl FnOnce() -> A + Send,
    b: impl FnOnce() -> B,
) -> (A, B) {
    if threads <= 1 {
        let a = a();
        return (a, b());
    }
    std::thread::scope(|s| {
        let a = s.spawn(a);
        let b = b();
        match a.join() {
            Ok(a) => (a, b),
            // A panic in `a` is a bug: pass it on.
            Err(panic) => std::panic::resume_unwind(panic),
        }
    })
}

/// Errors of the signal stage.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SignalError {
    /// The sampling rate is not a positive number.
    #[error("sampling rate {rate_hz} Hz is not valid: give a positive rate in Hz")]
    InvalidRate { rate_hz: f64 },
    /// The cut-off is not strictly between 0 and the Nyquist frequency.
    #[error(
        "low-pass cut-off {cutoff_hz} Hz is outside the valid range: at a sampling rate of \
         {rate_hz} Hz choose a cut-off above 0 Hz and below {nyquist_hz} Hz (half the rate)"
    )]
    CutoffOutOfRange {
        cutoff_hz: f64,
        rate_hz: f64,
        nyquist_hz: f64,
    },
}

/// A stretch of consecutive frames where a marker is known (measured or filled).
#[derive(Clone, Debug, PartialEq)]
pub struct Run {
    /// Frame index of `xyz[0]`.
    pub start: usize,
    /// Positions in metres, lab frame, one per frame from `start` on.
    pub xyz: Vec<[f64; 3]>,
}

impl Run {
    /// One past the last frame of the run.
    pub fn end(&self) -> usize {
        self.start + self.xyz.len()
    }
}

/// One marker after gap filling: complete runs, sorted, non-overlapping and never empty; frames
/// outside runs are missing.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Track {
    pub runs: Vec<Run>,
}

impl Track {
    /// The position at a frame, `None` if the frame lies outside every run.
    ///
    /// ```
    /// use gravline::signal::{Run, Track};
    /// let track = Track { runs: vec![Run { start: 2, xyz: vec![[1.0, 2.0, 3.0]] }] };
    /// assert_eq!(track.at(2), Some([1.0, 2.0, 3.0]));
    /// assert_eq!(track.at(1), None);
    /// assert_eq!(track.at(3), None);
    /// ```
    pub fn at(&self, frame: usize) -> Option<[f64; 3]> {
        // Runs are sorted by start: the candidate is the last run starting at or before `frame`.
        let after = self.runs.partition_point(|r| r.start <= frame);
        let run = self.runs.get(after.checked_sub(1)?)?;
        run.xyz.get(frame - run.start).copied()
    }

    /// The samples from frame `start` on, one per frame (`None` outside every run), as
    /// [`Track::at`] gives them but without a search per frame. The iterator never ends: take
    /// as many frames as needed.
    ///
    /// ```
    /// use gravline::signal::{Run, Track};
    /// let track = Track { runs: vec![Run { start: 2, xyz: vec![[1.0, 2.0, 3.0]] }] };
    /// let got: Vec<_> = track.samples_from(1).take(3).collect();
    /// assert_eq!(got, vec![None, Some([1.0, 2.0, 3.0]), None]);
    /// ```
    pub fn samples_from(&self, start: usize) -> Samples<'_> {
        let first = self.runs.partition_point(|r| r.end() <= start);
        Samples {
            runs: self.runs.get(first..).unwrap_or_default(),
            frame: start,
        }
    }

    /// The runs, mutable in value but not in layout (a filter changes samples, not frames).
    pub fn runs_mut(&mut self) -> &mut [Run] {
        &mut self.runs
    }

    /// The track as one optional sample per frame, for `n_frames` frames.
    pub fn to_series(&self, n_frames: usize) -> Vec<Option<[f64; 3]>> {
        let mut series = vec![None; n_frames];
        for run in &self.runs {
            for (slot, p) in series.iter_mut().skip(run.start).zip(&run.xyz) {
                *slot = Some(*p);
            }
        }
        series
    }

    /// Number of frames covered by runs.
    pub fn n_known(&self) -> usize {
        self.runs.iter().map(|r| r.xyz.len()).sum()
    }
}

/// The samples of a [`Track`] frame after frame (see [`Track::samples_from`]).
#[derive(Clone, Debug)]
pub struct Samples<'a> {
    /// The runs that do not end before `frame`.
    runs: &'a [Run],
    frame: usize,
}

impl Iterator for Samples<'_> {
    type Item = Option<[f64; 3]>;

    fn next(&mut self) -> Option<Option<[f64; 3]>> {
        while let Some((run, rest)) = self.runs.split_first() {
            if run.end() > self.frame {
                break;
            }
            self.runs = rest;
        }
        let sample = self.runs.first().and_then(|run| {
            let k = self.frame.checked_sub(run.start)?;
            run.xyz.get(k).copied()
        });
        self.frame += 1;
        Some(sample)
    }
}

/// Markers after gap filling: same labels and frame count as the
/// [`RawMarkers`](crate::trial::RawMarkers) they came from.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Markers {
    pub labels: Vec<String>,
    /// `tracks[marker]`, in the order of `labels`.
    pub tracks: Vec<Track>,
    pub n_frames: usize,
}

impl Markers {
    /// Index of a label, if present (exact match).
    pub fn index_of(&self, label: &str) -> Option<usize> {
        self.labels.iter().position(|l| l == label)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn track() -> Track {
        Track {
            runs: vec![
                Run {
                    start: 1,
                    xyz: vec![[1.0; 3], [2.0; 3]],
                },
                Run {
                    start: 5,
                    xyz: vec![[5.0; 3]],
                },
            ],
        }
    }

    #[test]
    fn at_finds_frames_inside_runs_only() {
        let t = track();
        let got: Vec<Option<f64>> = (0..7).map(|f| t.at(f).map(|p| p[0])).collect();
        assert_eq!(
            got,
            vec![None, Some(1.0), Some(2.0), None, None, Some(5.0), None]
        );
    }

    #[test]
    fn to_series_matches_at() {
        let t = track();
        let series = t.to_series(7);
        for (f, s) in series.iter().enumerate() {
            assert_eq!(*s, t.at(f));
        }
        assert_eq!(t.n_known(), 3);
    }

    #[test]
    fn samples_from_match_at() {
        let t = track();
        for start in 0..8 {
            let got: Vec<_> = t.samples_from(start).take(8).collect();
            let want: Vec<_> = (start..start + 8).map(|f| t.at(f)).collect();
            assert_eq!(got, want, "from {start}");
        }
    }

    #[test]
    fn groups_keep_the_order_of_the_items() {
        for threads in 1..5 {
            let sums = in_groups((0..10).collect(), threads, |g: Vec<i32>| g);
            assert_eq!(sums.concat(), (0..10).collect::<Vec<_>>(), "{threads}");
            assert!(sums.len() <= threads);
        }
        assert_eq!(in_groups(Vec::<i32>::new(), 2, |g| g.len()), vec![0]);
    }

    #[test]
    fn empty_track_has_no_samples() {
        assert_eq!(Track::default().at(0), None);
    }
}
