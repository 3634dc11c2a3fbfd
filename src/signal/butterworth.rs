//! Low-pass (docs/DESIGN.md 6.2): the zero-lag Butterworth filter of biomechanics.
//!
//! **Which filter.** One 2nd-order low-pass Butterworth section (bilinear transform, frequency
//! pre-warped), run forward and then backward over the signal: zero phase, 4th order overall
//! (amplitude response `|H|^2` of the single section). Because two passes attenuate twice, the
//! cut-off is corrected so that the *dual-pass* response is -3 dB (gain `1/sqrt 2`) at the
//! requested cut-off `f_c` (Winter, *Biomechanics and Motor Control of Human Movement*, 4th ed.,
//! p. 69; Robertson et al., *Research Methods in Biomechanics*, 2nd ed., p. 288; the correction
//! applied to the pre-warped frequency as in docs/reference/methods.md 4):
//!
//! ```text
//! C     = (2^(1/2) - 1)^(1/4) = 0.80224        (2 passes of a 2nd-order section)
//! Om_c  = tan(pi f_c / f_s)                    (pre-warped cut-off)
//! Om_n  = Om_c / C                             (corrected; Om_n = Om_c when uncorrected)
//! f_d   = (f_s / pi) atan(Om_n)                (design frequency, always below f_s / 2)
//! K1 = sqrt(2) Om_n,  K2 = Om_n^2
//! a0 = K2 / (1 + K1 + K2),  a1 = 2 a0,  a2 = a0
//! b1 = 2 a0 (1 / K2 - 1),   b2 = 1 - (a0 + a1 + a2 + b1)
//! y_n = a0 x_n + a1 x_{n-1} + a2 x_{n-2} + b1 y_{n-1} + b2 y_{n-2}
//! ```
//!
//! This is scipy's `butter(2, f_d / (f_s / 2))` with `b = [a0, a1, a2]`, `a = [1, -b1, -b2]`.
//!
//! **Ends.** As `scipy.signal.filtfilt(b, a, x, padtype='odd', padlen=p)`: the signal is
//! extended at each end by `p` samples of odd reflection about the end sample
//! (`x_{-i} = 2 x_0 - x_i`), the forward pass starts from the steady state of a step of the
//! first padded sample (scipy's `lfilter_zi` scaled by that sample), the backward pass from the
//! steady state of the last forward output, and the pad is cut off again. The pad is **three
//! periods of the dual-pass -3 dB frequency**, `p = round(3 f_s / f_c)` for a corrected design
//! (50 samples at 100 Hz and 6 Hz; 62 for the uncorrected 6 Hz design, -3 dB at 4.834 Hz),
//! instead of scipy's default of 9 samples, which is much shorter than the filter's memory at
//! motion-capture rates; a run of `n` samples shorter than that is padded by `n - 1`. A run of 1
//! or 2 samples is returned unchanged: it has no frequency content to smooth and cannot be
//! reflected usefully.
//!
//! Inputs: samples of one coordinate at `rate_hz` (any unit, usually metres). Output: the
//! filtered samples, same length and unit. [`low_pass`] filters every run of every marker of a
//! [`Markers`] on its own, never across a gap.

use super::{Markers, SignalError};
use std::f64::consts::{PI, SQRT_2};

/// Winter's correction for two passes of a 2nd-order section, `C = (2^(1/2) - 1)^(1/4)`
/// (docs/reference/methods.md 4: 0.80224).
pub fn winter_correction() -> f64 {
    (SQRT_2 - 1.0).powf(0.25)
}

/// Coefficients of one 2nd-order section in Winter's form (module doc):
/// `y_n = a0 x_n + a1 x_{n-1} + a2 x_{n-2} + b1 y_{n-1} + b2 y_{n-2}`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Coefficients {
    pub a0: f64,
    pub a1: f64,
    pub a2: f64,
    pub b1: f64,
    pub b2: f64,
}

/// Designs the section for a sampling rate and cut-off, both in Hz.
///
/// With `corrected`, the dual-pass filter is -3 dB at `cutoff_hz` (Winter's correction);
/// without, the single pass is -3 dB there (and the dual pass -6 dB). Errors if the rate is not
/// positive, or the cut-off is not strictly between 0 and `rate_hz / 2`, or the corrected design
/// frequency rounds to the Nyquist frequency.
///
/// ```
/// // docs/reference/methods.md 4: corrected coefficients at 100 Hz, 6 Hz.
/// let c = gravline::signal::design(100.0, 6.0, true).unwrap();
/// assert!((c.a0 - 0.040595).abs() < 1e-6 && (c.b1 - 1.354749).abs() < 1e-6);
/// ```
pub fn design(rate_hz: f64, cutoff_hz: f64, corrected: bool) -> Result<Coefficients, SignalError> {
    if !(rate_hz > 0.0 && rate_hz.is_finite()) {
        return Err(SignalError::InvalidRate { rate_hz });
    }
    let nyquist_hz = rate_hz / 2.0;
    let out_of_range = SignalError::CutoffOutOfRange {
        cutoff_hz,
        rate_hz,
        nyquist_hz,
    };
    if !(cutoff_hz > 0.0 && cutoff_hz < nyquist_hz) {
        return Err(out_of_range);
    }
    let omega_c = (PI * cutoff_hz / rate_hz).tan();
    let omega_n = if corrected {
        omega_c / winter_correction()
    } else {
        omega_c
    };
    let design_hz = rate_hz / PI * omega_n.atan();
    if !(design_hz < nyquist_hz && omega_n.is_finite()) {
        return Err(out_of_range);
    }
    let k1 = SQRT_2 * omega_n;
    let k2 = omega_n * omega_n;
    let a0 = k2 / (1.0 + k1 + k2);
    let a1 = 2.0 * a0;
    let a2 = a0;
    let b1 = 2.0 * a0 * (1.0 / k2 - 1.0);
    let b2 = 1.0 - (a0 + a1 + a2 + b1);
    Ok(Coefficients { a0, a1, a2, b1, b2 })
}

impl Coefficients {
    /// The pre-warped design frequency `Om_n = tan(pi f_d / f_s)` recovered from the
    /// coefficients (`K2 = 2 a0 / (2 a0 + b1)`, module doc). `None` if they are not a
    /// Butterworth design.
    fn omega_n(&self) -> Option<f64> {
        let k2 = 2.0 * self.a0 / (2.0 * self.a0 + self.b1);
        (k2 > 0.0 && k2.is_finite()).then(|| k2.sqrt())
    }

    /// The dual-pass -3 dB frequency as a fraction of the sampling rate: `atan(C Om_n) / pi`,
    /// since the dual-pass gain `1 / (1 + (Om / Om_n)^4)` is `1/sqrt 2` at `Om = C Om_n`. Equals
    /// `f_c / f_s` for a corrected design.
    pub fn dual_pass_cutoff_fraction(&self) -> Option<f64> {
        self.omega_n()
            .map(|om| (winter_correction() * om).atan() / PI)
    }

    /// The end pad of [`filtfilt`]: three periods of the dual-pass cut-off,
    /// `round(3 f_s / f_c)` samples (module doc). `usize::MAX` (pad as far as the signal allows)
    /// if the coefficients are not a Butterworth design.
    pub fn pad_len(&self) -> usize {
        match self.dual_pass_cutoff_fraction() {
            Some(frac) if frac > 0.0 => {
                let pad = (3.0 / frac).round();
                if pad < usize::MAX as f64 {
                    pad as usize
                } else {
                    usize::MAX
                }
            }
            _ => usize::MAX,
        }
    }

    /// The dual-pass amplitude gain `|H(e^{j 2 pi f / f_s})|^2` of the section at `freq_hz`.
    pub fn dual_pass_gain(&self, freq_hz: f64, rate_hz: f64) -> f64 {
        let w = 2.0 * PI * freq_hz / rate_hz;
        // H(z) = (a0 + a1 z^-1 + a2 z^-2) / (1 - b1 z^-1 - b2 z^-2), z^-k = cos kw - j sin kw.
        let (c1, s1, c2, s2) = (w.cos(), w.sin(), (2.0 * w).cos(), (2.0 * w).sin());
        let num_re = self.a0 + self.a1 * c1 + self.a2 * c2;
        let num_im = -(self.a1 * s1 + self.a2 * s2);
        let den_re = 1.0 - self.b1 * c1 - self.b2 * c2;
        let den_im = self.b1 * s1 + self.b2 * s2;
        (num_re * num_re + num_im * num_im) / (den_re * den_re + den_im * den_im)
    }

    /// The state of the direct-form-II-transposed section after a long unit step (scipy's
    /// `lfilter_zi`): output `y = (a0 + a1 + a2) / (1 - b1 - b2)`, `z1 = a2 + b2 y`,
    /// `z0 = a1 + b1 y + z1`.
    fn step_state(&self) -> [f64; 2] {
        let y = (self.a0 + self.a1 + self.a2) / (1.0 - self.b1 - self.b2);
        let z1 = self.a2 + self.b2 * y;
        let z0 = self.a1 + self.b1 * y + z1;
        [z0, z1]
    }

    /// One causal pass in place (direct form II transposed, as scipy's `lfilter`), starting
    /// from state `z`.
    fn pass(&self, x: &mut [f64], mut z: [f64; 2]) {
        for v in x.iter_mut() {
            let input = *v;
            let y = self.a0 * input + z[0];
            z[0] = self.a1 * input + self.b1 * y + z[1];
            z[1] = self.a2 * input + self.b2 * y;
            *v = y;
        }
    }
}

/// Zero-lag filtering of one run: forward and backward passes with odd-reflection end pads of
/// [`Coefficients::pad_len`] samples (module doc). Runs of 1 or 2 samples come back unchanged.
///
/// ```
/// use gravline::signal::{design, filtfilt};
/// let c = design(100.0, 6.0, true).unwrap();
/// let y = filtfilt(&c, &[2.5; 40]);
/// assert!(y.iter().all(|v| (v - 2.5).abs() < 1e-12)); // DC passes
/// ```
pub fn filtfilt(c: &Coefficients, x: &[f64]) -> Vec<f64> {
    filtfilt_with_pad(c, x, c.pad_len())
}

/// As [`filtfilt`] with an explicit pad, clamped to `x.len() - 1`.
pub fn filtfilt_with_pad(c: &Coefficients, x: &[f64], pad_len: usize) -> Vec<f64> {
    let n = x.len();
    if n < 3 {
        return x.to_vec();
    }
    let p = pad_len.min(n - 1);
    let (first, last) = (x[0], x[n - 1]);
    // Odd reflection: x_{-i} = 2 x_0 - x_i, x_{n-1+i} = 2 x_{n-1} - x_{n-1-i}, i = 1 ..= p.
    let mut ext = Vec::with_capacity(n + 2 * p);
    ext.extend((1..=p).rev().map(|i| 2.0 * first - x[i]));
    ext.extend_from_slice(x);
    ext.extend((1..=p).map(|i| 2.0 * last - x[n - 1 - i]));

    let zi = c.step_state();
    let x0 = ext[0];
    c.pass(&mut ext, [zi[0] * x0, zi[1] * x0]);
    ext.reverse();
    let y0 = ext[0];
    c.pass(&mut ext, [zi[0] * y0, zi[1] * y0]);
    ext.reverse();
    ext.truncate(p + n);
    ext.split_off(p)
}

/// [`filtfilt_with_pad`] of the three coordinates of `xyz` at once, in place: the same
/// arithmetic per coordinate in the same order, so the same bits, with the three recurrences
/// interleaved (each pass is bound by the latency of its recurrence), the samples filtered
/// where they are and only the two end pads held apart, in `pads` (scratch space, reused
/// between calls). The backward pass stops at the first sample: what it would give over the
/// front pad is cut off anyway.
pub fn filtfilt_xyz_with_pad(
    c: &Coefficients,
    xyz: &mut [[f64; 3]],
    pad_len: usize,
    pads: &mut Vec<[f64; 3]>,
) {
    let n = xyz.len();
    if n < 3 {
        return;
    }
    let p = pad_len.min(n - 1);
    let (first, last) = (xyz[0], xyz[n - 1]);
    let reflect = |base: [f64; 3], x: [f64; 3]| {
        [
            2.0 * base[0] - x[0],
            2.0 * base[1] - x[1],
            2.0 * base[2] - x[2],
        ]
    };
    // The front pad x_{-p} .. x_{-1}, then the back pad x_{n} .. x_{n-1+p}, both taken before
    // the samples change.
    pads.clear();
    pads.extend((1..=p).rev().map(|i| reflect(first, xyz[i])));
    pads.extend((1..=p).map(|i| reflect(last, xyz[n - 1 - i])));
    let (front, back) = pads.split_at_mut(p);

    let zi = c.step_state();
    let step = |z: &mut [[f64; 2]; 3], v: &mut [f64; 3]| {
        for d in 0..3 {
            let input = v[d];
            let y = c.a0 * input + z[d][0];
            z[d][0] = c.a1 * input + c.b1 * y + z[d][1];
            z[d][1] = c.a2 * input + c.b2 * y;
            v[d] = y;
        }
    };
    let start = |x: [f64; 3]| [0, 1, 2].map(|d| [zi[0] * x[d], zi[1] * x[d]]);
    let mut z = start(front.first().copied().unwrap_or(first));
    for v in front
        .iter_mut()
        .chain(xyz.iter_mut())
        .chain(back.iter_mut())
    {
        step(&mut z, v);
    }
    let end = back.last().copied().unwrap_or(xyz[n - 1]);
    let mut z = start(end);
    for v in back.iter_mut().rev().chain(xyz.iter_mut().rev()) {
        step(&mut z, v);
    }
}

/// Low-pass filters every coordinate of every run of every marker in place (Winter-corrected,
/// cut-off `cutoff_hz` at `rate_hz`); each run on its own, never across a gap.
pub fn low_pass(markers: &mut Markers, rate_hz: f64, cutoff_hz: f64) -> Result<(), SignalError> {
    low_pass_on(markers, rate_hz, cutoff_hz, 1)
}

/// [`low_pass`] with the markers shared out among up to `threads` threads; the result does not
/// depend on how many.
pub fn low_pass_on(
    markers: &mut Markers,
    rate_hz: f64,
    cutoff_hz: f64,
    threads: usize,
) -> Result<(), SignalError> {
    let c = design(rate_hz, cutoff_hz, true)?;
    low_pass_with(markers, &c, c.pad_len(), threads);
    Ok(())
}

/// [`low_pass_on`] with a designed section and end pad.
pub(crate) fn low_pass_with(markers: &mut Markers, c: &Coefficients, pad: usize, threads: usize) {
    let tracks: Vec<&mut super::Track> = markers.tracks.iter_mut().collect();
    super::in_groups(tracks, threads, |group| {
        let mut ext = Vec::new();
        for track in group {
            for run in track.runs_mut() {
                filtfilt_xyz_with_pad(c, &mut run.xyz, pad, &mut ext);
            }
        }
    });
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::signal::{Run, Track};
    use approx::assert_abs_diff_eq;

    const FS: f64 = 100.0;

    fn sine(freq_hz: f64, n: usize, phase: f64) -> Vec<f64> {
        (0..n)
            .map(|i| (2.0 * PI * freq_hz * i as f64 / FS + phase).cos())
            .collect()
    }

    /// Amplitude of a sinusoid from its RMS over a window of whole periods.
    fn amplitude(x: &[f64]) -> f64 {
        (2.0 * x.iter().map(|v| v * v).sum::<f64>() / x.len() as f64).sqrt()
    }

    /// Gain measured on the middle 1000 samples of a 3000-sample cosine (whole periods at 2, 6
    /// and 15 Hz), far from the ends.
    fn measured_gain(freq_hz: f64) -> f64 {
        let c = design(FS, 6.0, true).unwrap();
        let x = sine(freq_hz, 3000, 0.0);
        let y = filtfilt(&c, &x);
        amplitude(&y[1000..2000]) / amplitude(&x[1000..2000])
    }

    #[test]
    fn correction_factor_matches_methods() {
        // docs/reference/methods.md 4: C = 0.80224.
        assert_abs_diff_eq!(winter_correction(), 0.80224, epsilon = 5e-6);
    }

    #[test]
    fn coefficients_match_methods_table() {
        // docs/reference/methods.md 4, 2nd order dual pass at f_s = 100 Hz, f_c = 6 Hz.
        let c = design(FS, 6.0, true).unwrap();
        let want = [0.040595, 0.081189, 0.040595, 1.354749, -0.517128];
        for (got, want) in [c.a0, c.a1, c.a2, c.b1, c.b2].iter().zip(want) {
            assert_abs_diff_eq!(*got, want, epsilon = 1e-6);
        }
        let u = design(FS, 6.0, false).unwrap();
        let want = [0.027860, 0.055720, 0.027860, 1.475480, -0.586920];
        for (got, want) in [u.a0, u.a1, u.a2, u.b1, u.b2].iter().zip(want) {
            assert_abs_diff_eq!(*got, want, epsilon = 1e-6);
        }
    }

    #[test]
    fn design_frequency_matches_methods() {
        // docs/reference/methods.md 4: design f_d = 7.4309 Hz (corrected), uncorrected dual pass -3 dB at
        // 4.834 Hz.
        let c = design(FS, 6.0, true).unwrap();
        let f_d = FS / PI * c.omega_n().unwrap().atan();
        assert_abs_diff_eq!(f_d, 7.4309, epsilon = 5e-5);
        let u = design(FS, 6.0, false).unwrap();
        assert_abs_diff_eq!(
            u.dual_pass_cutoff_fraction().unwrap() * FS,
            4.834,
            epsilon = 5e-4
        );
        assert_eq!(c.pad_len(), 50);
    }

    #[test]
    fn gain_at_cutoff_is_minus_3_db() {
        // docs/reference/methods.md 4: with the correction the dual-pass gain at 6 Hz is 0.7071 (1/sqrt 2).
        let published = std::f64::consts::FRAC_1_SQRT_2;
        assert_abs_diff_eq!(measured_gain(6.0), published, epsilon = 0.002);
        let c = design(FS, 6.0, true).unwrap();
        assert_abs_diff_eq!(
            c.dual_pass_gain(6.0, FS),
            std::f64::consts::FRAC_1_SQRT_2,
            epsilon = 1e-12
        );
        // Uncorrected: 0.5 (-6.02 dB) at 6 Hz, docs/reference/methods.md 4.
        let u = design(FS, 6.0, false).unwrap();
        assert_abs_diff_eq!(u.dual_pass_gain(6.0, FS), 0.5, epsilon = 1e-12);
    }

    #[test]
    fn gain_at_2_and_15_hz_matches_methods() {
        // docs/reference/methods.md 4: corrected dual-pass |H|^2 = 0.99512 at 2 Hz and 0.04528 at 15 Hz.
        let c = design(FS, 6.0, true).unwrap();
        assert_abs_diff_eq!(c.dual_pass_gain(2.0, FS), 0.99512, epsilon = 5e-6);
        assert_abs_diff_eq!(c.dual_pass_gain(15.0, FS), 0.04528, epsilon = 5e-6);
        assert_abs_diff_eq!(measured_gain(2.0), 0.99512, epsilon = 1e-5);
        assert_abs_diff_eq!(measured_gain(15.0), 0.04528, epsilon = 1e-5);
    }

    #[test]
    fn no_phase_lag() {
        // A 2 Hz cosine at 100 Hz peaks every 50 samples; the filtered one peaks at the same
        // samples and is the input scaled by the gain (zero phase).
        let c = design(FS, 6.0, true).unwrap();
        let x = sine(2.0, 1000, 0.0);
        let y = filtfilt(&c, &x);
        let peaks: Vec<usize> = (1..999)
            .filter(|&i| y[i] > y[i - 1] && y[i] >= y[i + 1])
            .collect();
        assert_eq!(peaks, (1..20).map(|k| 50 * k).collect::<Vec<_>>());
        let g = c.dual_pass_gain(2.0, FS);
        for i in 200..800 {
            assert_abs_diff_eq!(y[i], g * x[i], epsilon = 1e-6);
        }
    }

    #[test]
    fn dc_passes_exactly() {
        let c = design(FS, 6.0, true).unwrap();
        for n in [3, 7, 51, 500] {
            let y = filtfilt(&c, &vec![-1.234; n]);
            assert_eq!(y.len(), n);
            for v in y {
                assert_abs_diff_eq!(v, -1.234, epsilon = 1e-12);
            }
        }
    }

    #[test]
    fn three_coordinates_at_once_give_the_same_bits_as_one_at_a_time() {
        let c = design(FS, 6.0, true).unwrap();
        let mut ext = Vec::new();
        for n in [1, 2, 3, 7, 49, 50, 51, 120, 1000] {
            let xyz: Vec<[f64; 3]> = (0..n)
                .map(|i| {
                    let t = i as f64 / FS;
                    [
                        (7.0 * t).sin(),
                        1.0 + 0.3 * t * t,
                        (i % 7) as f64 * 0.01 - (3.0 * t).cos(),
                    ]
                })
                .collect();
            let mut together = xyz.clone();
            filtfilt_xyz_with_pad(&c, &mut together, c.pad_len(), &mut ext);
            for d in 0..3 {
                let one: Vec<f64> = xyz.iter().map(|p| p[d]).collect();
                let want = filtfilt_with_pad(&c, &one, c.pad_len());
                let got: Vec<u64> = together.iter().map(|p| p[d].to_bits()).collect();
                let want: Vec<u64> = want.iter().map(|v| v.to_bits()).collect();
                assert_eq!(got, want, "n = {n}, coordinate {d}");
            }
        }
    }

    #[test]
    fn tiny_runs_come_back_unchanged() {
        let c = design(FS, 6.0, true).unwrap();
        assert!(filtfilt(&c, &[]).is_empty());
        assert_eq!(filtfilt(&c, &[1.0]), vec![1.0]);
        assert_eq!(filtfilt(&c, &[1.0, 3.0]), vec![1.0, 3.0]);
    }

    #[test]
    fn rejects_cutoffs_outside_the_valid_range() {
        for bad in [0.0, -1.0, 50.0, 60.0, f64::NAN] {
            let err = design(FS, bad, true).unwrap_err();
            assert!(matches!(err, SignalError::CutoffOutOfRange { .. }));
            let msg = err.to_string();
            assert!(msg.contains("above 0 Hz and below 50 Hz"), "{msg}");
        }
        assert!(matches!(
            design(0.0, 6.0, true),
            Err(SignalError::InvalidRate { .. })
        ));
        assert!(design(FS, 49.9, true).is_ok());
    }

    #[test]
    fn low_pass_never_crosses_a_gap() {
        // Two constant runs at different levels: filtered across the gap, the levels would
        // bleed into each other; run by run, each stays exactly constant.
        let mut m = Markers {
            labels: vec!["a".into()],
            tracks: vec![Track {
                runs: vec![
                    Run {
                        start: 0,
                        xyz: vec![[0.0, 1.0, 2.0]; 80],
                    },
                    Run {
                        start: 85,
                        xyz: vec![[1.0, -1.0, 0.5]; 60],
                    },
                ],
            }],
            n_frames: 145,
        };
        low_pass(&mut m, FS, 6.0).unwrap();
        let runs = &m.tracks[0].runs;
        assert_eq!((runs[0].start, runs[0].xyz.len()), (0, 80));
        assert_eq!((runs[1].start, runs[1].xyz.len()), (85, 60));
        for p in &runs[0].xyz {
            for (v, want) in p.iter().zip([0.0, 1.0, 2.0]) {
                assert_abs_diff_eq!(*v, want, epsilon = 1e-12);
            }
        }
        for p in &runs[1].xyz {
            for (v, want) in p.iter().zip([1.0, -1.0, 0.5]) {
                assert_abs_diff_eq!(*v, want, epsilon = 1e-12);
            }
        }
        assert!(low_pass(&mut m, FS, 70.0).is_err());
    }
}
