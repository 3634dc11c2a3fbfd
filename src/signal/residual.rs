//! Winter's residual analysis (docs/DESIGN.md 6.2, `gravline cutoff`): choose a low-pass cut-off from
//! the data (Winter, *Biomechanics and Motor Control of Human Movement*, 4th ed., section
//! 3.4.4.3; formulas as quoted in docs/reference/methods.md 4).
//!
//! Input: one coordinate sampled at `rate_hz` (any unit, usually metres) and a list of trial
//! cut-offs in Hz. For each cut-off `f_c` the signal is filtered with the same filter as
//! [`low_pass`](super::low_pass) (Winter-corrected dual-pass Butterworth, [`super::butterworth`])
//! and the residual is
//!
//! ```text
//! R(f_c) = sqrt( (1/N) sum_i (x_i - xhat_i(f_c))^2 )        (same unit as x)
//! ```
//!
//! At high cut-offs the signal passes and the residual is noise only, falling about linearly to
//! zero at the Nyquist frequency. [`suggest`] fits a straight line `R = a + b f_c` to that part of
//! the curve; its intercept `a` at 0 Hz estimates the RMS of the noise, and the suggested cut-off
//! is where the residual curve comes down to `a`.
//!
//! Caveat (docs/reference/methods.md 4): residual-analysis cut-offs tend to lie below the true optimum,
//! especially at high sampling rates (Yu, Gabriel, Noble & An 1999).

use super::butterworth::{design, filtfilt};

/// The outcome of [`suggest`].
#[derive(Clone, Debug, PartialEq)]
pub struct ResidualSuggestion {
    /// Where the residual curve falls to the noise level, in Hz.
    pub cutoff_hz: f64,
    /// Intercept at 0 Hz of the line fitted to the noise-only part: the RMS noise (unit of x).
    pub noise_rms: f64,
    /// Slope of that line, unit of x per Hz.
    pub slope_per_hz: f64,
    /// Lowest and highest cut-off used in the fit, in Hz.
    pub fit_range_hz: (f64, f64),
}

/// Trial cut-offs for residual analysis: 1 Hz to `min(0.4 rate_hz, 25 Hz)` in steps of 0.5 Hz
/// (the 0.4 keeps clear of the Nyquist frequency, where the filter degenerates). Empty below
/// 2.5 Hz sampling.
///
/// ```
/// let f = gravline::signal::default_cutoffs(100.0);
/// assert_eq!((f[0], f[1], *f.last().unwrap(), f.len()), (1.0, 1.5, 25.0, 49));
/// ```
pub fn default_cutoffs(rate_hz: f64) -> Vec<f64> {
    if !(0.4 * rate_hz >= 1.0 && rate_hz.is_finite()) {
        return Vec::new();
    }
    let top_hz = (0.4 * rate_hz).min(25.0);
    let steps = ((top_hz - 1.0) / 0.5 + 1e-9).floor() as usize;
    (0..=steps).map(|k| 1.0 + 0.5 * k as f64).collect()
}

/// The residual `R(f_c)` for each cut-off (module doc), in the unit of `x`.
///
/// A cut-off the filter cannot use (not strictly between 0 and `rate_hz / 2`, or a bad rate)
/// gives NaN; an empty `x` gives NaN for every cut-off; 1 or 2 samples pass the filter unchanged
/// and give 0.
pub fn residuals(x: &[f64], rate_hz: f64, cutoffs_hz: &[f64]) -> Vec<f64> {
    cutoffs_hz
        .iter()
        .map(|&fc| match design(rate_hz, fc, true) {
            Ok(c) => {
                let smooth = filtfilt(&c, x);
                let sum_sq: f64 = x.iter().zip(&smooth).map(|(a, b)| (a - b) * (a - b)).sum();
                (sum_sq / x.len() as f64).sqrt()
            }
            Err(_) => f64::NAN,
        })
        .collect()
}

/// Winter's choice of cut-off from a residual curve (module doc).
///
/// The noise-only part is taken as the **upper half of the cut-off range**: the points with
/// `f_c >= (f_min + f_max) / 2`, where `f_min`, `f_max` are the lowest and highest finite
/// points given (with [`default_cutoffs`] at 100 Hz: 13 to 25 Hz). A least-squares line through
/// them gives the noise RMS `a` (its intercept at 0 Hz). Scanning up from the lowest cut-off, the
/// suggested cut-off is where the curve first reaches `a`, interpolated linearly between the two
/// points around the crossing (the lowest cut-off itself if the curve starts at or below `a`).
///
/// Pairs with a non-finite value are skipped; the points are sorted by cut-off. `None` if fewer
/// than 2 points fall in the fit range, the lengths differ, the intercept is not positive, or
/// the curve never comes down to it.
pub fn suggest(cutoffs_hz: &[f64], residuals: &[f64]) -> Option<ResidualSuggestion> {
    if cutoffs_hz.len() != residuals.len() {
        return None;
    }
    let mut pts: Vec<(f64, f64)> = cutoffs_hz
        .iter()
        .zip(residuals)
        .map(|(&f, &r)| (f, r))
        .filter(|(f, r)| f.is_finite() && r.is_finite())
        .collect();
    pts.sort_by(|p, q| p.0.total_cmp(&q.0));
    let (f_min, f_max) = (pts.first()?.0, pts.last()?.0);
    let f_mid = 0.5 * (f_min + f_max);
    let fit: Vec<(f64, f64)> = pts.iter().copied().filter(|p| p.0 >= f_mid).collect();
    let (intercept, slope) = line_fit(&fit)?;
    if intercept.is_nan() || intercept <= 0.0 {
        return None;
    }
    let cutoff_hz = crossing(&pts, intercept)?;
    Some(ResidualSuggestion {
        cutoff_hz,
        noise_rms: intercept,
        slope_per_hz: slope,
        fit_range_hz: (fit.first()?.0, fit.last()?.0),
    })
}

/// Least-squares line `r = a + b f` through the points: `Some((a, b))`, `None` for fewer than 2
/// distinct abscissae.
fn line_fit(pts: &[(f64, f64)]) -> Option<(f64, f64)> {
    let n = pts.len() as f64;
    if pts.len() < 2 {
        return None;
    }
    let mean_f = pts.iter().map(|p| p.0).sum::<f64>() / n;
    let mean_r = pts.iter().map(|p| p.1).sum::<f64>() / n;
    let sxx: f64 = pts.iter().map(|p| (p.0 - mean_f).powi(2)).sum();
    let sxy: f64 = pts.iter().map(|p| (p.0 - mean_f) * (p.1 - mean_r)).sum();
    if sxx.is_nan() || sxx <= 0.0 {
        return None;
    }
    let b = sxy / sxx;
    Some((mean_r - b * mean_f, b))
}

/// The first cut-off (points sorted by cut-off) at which the residual reaches `level`.
fn crossing(pts: &[(f64, f64)], level: f64) -> Option<f64> {
    let first = pts.first()?;
    if first.1 <= level {
        return Some(first.0);
    }
    pts.windows(2).find_map(|w| {
        let ((f0, r0), (f1, r1)) = (w[0], w[1]);
        // r0 > level here (otherwise an earlier window would have matched).
        (r1 <= level).then(|| f0 + (r0 - level) / (r0 - r1) * (f1 - f0))
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;
    use std::f64::consts::PI;

    /// xorshift64* (Marsaglia 2003; Vigna 2016, from memory) and the Box-Muller transform:
    /// standard normal deviates, deterministic from the seed.
    struct Gaussian {
        state: u64,
    }

    impl Gaussian {
        fn new(seed: u64) -> Self {
            Gaussian { state: seed | 1 }
        }

        /// Uniform in (0, 1].
        fn uniform(&mut self) -> f64 {
            self.state ^= self.state >> 12;
            self.state ^= self.state << 25;
            self.state ^= self.state >> 27;
            let bits = self.state.wrapping_mul(0x2545_F491_4F6C_DD1D) >> 11;
            (bits as f64 + 1.0) / (1u64 << 53) as f64
        }

        fn normal(&mut self) -> f64 {
            let (u1, u2) = (self.uniform(), self.uniform());
            (-2.0 * u1.ln()).sqrt() * (2.0 * PI * u2).cos()
        }
    }

    #[test]
    fn recovers_noise_and_a_cutoff_above_the_signal_band() {
        // Synthetic: 10 s at 100 Hz of four sines below 4 Hz (metres) plus white Gaussian
        // noise of sigma = 2 mm.
        let fs = 100.0;
        let sigma = 0.002;
        let mut noise = Gaussian::new(20240611);
        let x: Vec<f64> = (0..1000)
            .map(|i| {
                let t = i as f64 / fs;
                0.05 * (2.0 * PI * 0.5 * t).sin()
                    + 0.03 * (2.0 * PI * 1.3 * t + 0.4).sin()
                    + 0.01 * (2.0 * PI * 2.7 * t + 1.1).sin()
                    + 0.006 * (2.0 * PI * 3.6 * t + 2.0).sin()
                    + sigma * noise.normal()
            })
            .collect();
        let cutoffs = default_cutoffs(fs);
        let r = residuals(&x, fs, &cutoffs);
        let s = suggest(&cutoffs, &r).unwrap();
        assert_eq!(s.fit_range_hz, (13.0, 25.0));
        assert!(
            (4.0..=10.0).contains(&s.cutoff_hz),
            "suggested {} Hz",
            s.cutoff_hz
        );
        assert!(
            (s.noise_rms - sigma).abs() <= 0.2 * sigma,
            "noise {} m",
            s.noise_rms
        );
        assert!(s.slope_per_hz < 0.0);
    }

    #[test]
    fn residual_is_zero_for_dc_and_nan_for_bad_cutoffs() {
        let r = residuals(&[0.7; 200], 100.0, &[2.0, 6.0, 0.0, 60.0]);
        assert_abs_diff_eq!(r[0], 0.0, epsilon = 1e-12);
        assert_abs_diff_eq!(r[1], 0.0, epsilon = 1e-12);
        assert!(r[2].is_nan() && r[3].is_nan());
        assert!(residuals(&[], 100.0, &[6.0])[0].is_nan());
    }

    #[test]
    fn suggest_on_a_hand_made_curve() {
        // Residual 3 - 0.1 f from 12 Hz up (intercept 3), steeper below. Worked by hand: the
        // curve is 3.5 at 7.5 Hz and 2.5 at 10 Hz, so it reaches 3 at 7.5 + 0.5 / 1 * 2.5 =
        // 8.75 Hz.
        let f = [1.0, 5.0, 7.5, 10.0, 12.0, 14.0, 16.0, 18.0, 20.0];
        let r: Vec<f64> = [6.0, 4.0, 3.5, 2.5]
            .into_iter()
            .chain(f[4..].iter().map(|x| 3.0 - 0.1 * x))
            .collect();
        let s = suggest(&f, &r).unwrap();
        assert_eq!(s.fit_range_hz, (12.0, 20.0));
        assert_abs_diff_eq!(s.noise_rms, 3.0, epsilon = 1e-12);
        assert_abs_diff_eq!(s.slope_per_hz, -0.1, epsilon = 1e-12);
        assert_abs_diff_eq!(s.cutoff_hz, 8.75, epsilon = 1e-12);
    }

    #[test]
    fn suggest_refuses_degenerate_curves() {
        assert!(suggest(&[], &[]).is_none());
        assert!(suggest(&[1.0, 2.0], &[1.0]).is_none());
        assert!(suggest(&[5.0], &[1.0]).is_none());
        // Rising curve: the line through its upper half has a negative intercept, refused.
        assert!(suggest(&[1.0, 2.0, 3.0, 4.0], &[0.0, 1.0, 2.0, 3.0]).is_none());
    }

    #[test]
    fn default_cutoffs_stay_below_nyquist() {
        let f = default_cutoffs(20.0);
        assert_eq!((f[0], *f.last().unwrap()), (1.0, 8.0));
        assert!(default_cutoffs(2.0).is_empty());
        assert!(default_cutoffs(f64::NAN).is_empty());
    }
}
