//! Zero offset and resampling of the analog plate samples to the marker frames.
//!
//! **Zero offset.** From the samples the recording names (C3D `FORCE_PLATFORM:ZERO`,
//! [`ZeroSource::Samples`]), else from the plate's unloaded samples (vertical force below
//! [`LOADED_N`], [`ZeroSource::Unloaded`]; at least [`MIN_UNLOADED`] of them, otherwise none is
//! removed): the median of each force component over those samples is subtracted from every
//! sample (the median, so the few samples of a foot landing or leaving under the threshold do
//! not bias it). The CoP
//! given by the recording is kept as given.
//!
//! **Resampling rule.** Each marker frame at time t gets the mean of the analog signal over
//! the frame period centred on t, [t − T/2, t + T/2] with T = 1 / frame rate, the signal taken
//! as the straight lines between analog samples (the integral is exact for those lines). The
//! window is symmetric, so the timing is unchanged (zero delay, for any ratio of the rates,
//! integer or not); the price is the box filter's gain sin(π f T) / (π f T): 0.996 at 5 Hz and
//! 0.985 at 10 Hz for 150 Hz frames (standard signal processing). Forces integrated over a run
//! of whole frames keep their impulse. A frame whose window reaches outside the recording by
//! more than half its width has no kinetic value. The net CoP of a frame is the ratio of the
//! resampled moments F_up·CoP to the resampled F_up, so the CoP is weighted by the load, as the
//! statics of the samples within the frame require.

use super::{PlateRecording, ZeroSource, LOADED_N};
use crate::trial::UpAxis;

/// Fewest unloaded samples from which an offset is taken.
pub const MIN_UNLOADED: usize = 10;

/// Removes each plate's zero offset (module doc) and records it in the plate.
pub fn remove_zero_offset(rec: &mut PlateRecording, up: UpAxis) {
    let zero = rec.zero;
    for p in &mut rec.plates {
        let chosen: Vec<usize> = match zero {
            ZeroSource::Samples { first, last } => {
                (first..=last.min(p.force_n.len().saturating_sub(1))).collect()
            }
            ZeroSource::Unloaded => (0..p.force_n.len())
                .filter(|&i| up.height(&p.force_n[i]).abs() < LOADED_N)
                .collect(),
        };
        if chosen.len() < MIN_UNLOADED {
            continue;
        }
        let mut mean = [0.0; 3];
        for (k, m) in mean.iter_mut().enumerate() {
            let mut v: Vec<f64> = chosen.iter().map(|&i| p.force_n[i][k]).collect();
            v.sort_by(f64::total_cmp);
            *m = v[v.len() / 2];
        }
        for f in &mut p.force_n {
            for k in 0..3 {
                f[k] -= mean[k];
            }
        }
        p.offset_n = mean;
    }
}

/// Means of a uniformly sampled signal (first sample at `first_time_s`, `rate_hz`) over the
/// windows [t − period/2, t + period/2] of `frame_times_s`, the signal linear between samples
/// (module doc); `None` where less than half a window lies inside the recording.
///
/// ```
/// use gravline::plates::resample::box_means;
/// // A ramp v = t sampled at 10 Hz: a centred window returns the value at its center.
/// let v: Vec<f64> = (0..11).map(|i| i as f64 / 10.0).collect();
/// let m = box_means(&v, 0.0, 10.0, &[0.5], 0.2);
/// assert!((m[0].unwrap() - 0.5).abs() < 1e-12);
/// ```
pub fn box_means(
    values: &[f64],
    first_time_s: f64,
    rate_hz: f64,
    frame_times_s: &[f64],
    period_s: f64,
) -> Vec<Option<f64>> {
    let n = values.len();
    if n < 2 || rate_hz <= 0.0 || period_s <= 0.0 {
        return vec![None; frame_times_s.len()];
    }
    let dt = 1.0 / rate_hz;
    let mut cumulative = Vec::with_capacity(n);
    let mut c = 0.0;
    cumulative.push(0.0);
    for w in values.windows(2) {
        c += 0.5 * (w[0] + w[1]) * dt;
        cumulative.push(c);
    }
    let last_time = first_time_s + (n - 1) as f64 * dt;
    let integral_to = |t: f64| -> f64 {
        let u = ((t - first_time_s) * rate_hz).clamp(0.0, (n - 1) as f64);
        let i = (u.floor() as usize).min(n - 2);
        let tau = (u - i as f64) * dt;
        let (a, b) = (values[i], values[i + 1]);
        cumulative[i] + a * tau + (b - a) * tau * tau * rate_hz / 2.0
    };
    frame_times_s
        .iter()
        .map(|&t| {
            let lo = (t - period_s / 2.0).max(first_time_s);
            let hi = (t + period_s / 2.0).min(last_time);
            if hi - lo < period_s / 2.0 {
                return None;
            }
            Some((integral_to(hi) - integral_to(lo)) / (hi - lo))
        })
        .collect()
}

/// One plate's loads per marker frame.
#[derive(Clone, Debug, Default)]
pub struct PlateFrames {
    /// Force on the body, N, lab axes.
    pub force_n: Vec<Option<[f64; 3]>>,
    /// CoP, lab, metres, where the plate is loaded and its CoP known.
    pub cop_m: Vec<Option<[f64; 3]>>,
    /// Vertical force above [`LOADED_N`].
    pub loaded: Vec<bool>,
    /// Free moment about the up axis, N·m.
    pub free_moment_nm: Vec<Option<f64>>,
}

/// Resamples every plate of `rec` to the marker frames (module doc).
pub fn to_frames(
    rec: &PlateRecording,
    frame_times_s: &[f64],
    frame_rate_hz: f64,
    up: UpAxis,
) -> Vec<PlateFrames> {
    let period = 1.0 / frame_rate_hz;
    let mean = |v: &[f64]| box_means(v, rec.first_time_s, rec.rate_hz, frame_times_s, period);
    rec.plates
        .iter()
        .map(|p| {
            let comp = |k: usize| mean(&p.force_n.iter().map(|f| f[k]).collect::<Vec<_>>());
            let f = [comp(0), comp(1), comp(2)];
            let fu: Vec<f64> = p.force_n.iter().map(|f| up.height(f)).collect();
            // F_up·CoP where the CoP is known; 0 where unloaded; a loaded sample without CoP
            // counts in `missing`.
            let mut q = [Vec::new(), Vec::new(), Vec::new()];
            let mut missing = Vec::with_capacity(fu.len());
            for (i, &u) in fu.iter().enumerate() {
                match p.cop_m.get(i).copied().flatten() {
                    Some(c) => {
                        for k in 0..3 {
                            q[k].push(u * c[k]);
                        }
                        missing.push(0.0);
                    }
                    None => {
                        for qk in &mut q {
                            qk.push(0.0);
                        }
                        missing.push(if u.abs() >= LOADED_N { 1.0 } else { 0.0 });
                    }
                }
            }
            let qm = [mean(&q[0]), mean(&q[1]), mean(&q[2])];
            let miss = mean(&missing);
            let tz = mean(&p.free_moment_nm);
            let n = frame_times_s.len();
            let mut out = PlateFrames {
                force_n: Vec::with_capacity(n),
                cop_m: Vec::with_capacity(n),
                loaded: Vec::with_capacity(n),
                free_moment_nm: tz,
            };
            for j in 0..n {
                let force = match (f[0][j], f[1][j], f[2][j]) {
                    (Some(x), Some(y), Some(z)) => Some([x, y, z]),
                    _ => None,
                };
                let u = force.map(|f| up.height(&f));
                let loaded = u.is_some_and(|u| u >= LOADED_N);
                let cop = match (loaded, qm[0][j], qm[1][j], qm[2][j], miss[j]) {
                    (true, Some(a), Some(b), Some(c), Some(0.0)) => {
                        let u = u.unwrap_or(1.0);
                        Some([a / u, b / u, c / u])
                    }
                    _ => None,
                };
                out.force_n.push(force);
                out.cop_m.push(cop);
                out.loaded.push(loaded);
            }
            out
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn box_mean_of_a_constant_is_the_constant_and_keeps_an_impulse() {
        let v = vec![3.0; 1001];
        let times: Vec<f64> = (1..99).map(|i| i as f64 / 100.0).collect();
        let m = box_means(&v, 0.0, 1000.0, &times, 0.01);
        assert!(m.iter().all(|x| (x.unwrap() - 3.0).abs() < 1e-12));
        // A half-sine pulse: the frame means times the period sum to its integral 2/π·0.2.
        let v: Vec<f64> = (0..1001)
            .map(|i| {
                let t = i as f64 / 1000.0;
                if (0.3..=0.5).contains(&t) {
                    (std::f64::consts::PI * (t - 0.3) / 0.2).sin()
                } else {
                    0.0
                }
            })
            .collect();
        let m = box_means(&v, 0.0, 1000.0, &times, 0.01);
        let impulse: f64 = m.iter().map(|x| x.unwrap() * 0.01).sum();
        assert!(
            (impulse - 0.4 / std::f64::consts::PI).abs() < 1e-5,
            "{impulse}"
        );
    }

    #[test]
    fn a_sine_keeps_its_phase_for_a_non_integer_rate_ratio() {
        // 3 Hz sine at 1000 Hz analog, frames at 150 Hz (6.67 samples per frame).
        let f = 3.0;
        let w = 2.0 * std::f64::consts::PI * f;
        let v: Vec<f64> = (0..2001).map(|i| (w * i as f64 / 1000.0).sin()).collect();
        let times: Vec<f64> = (10..290).map(|i| i as f64 / 150.0).collect();
        let m = box_means(&v, 0.0, 1000.0, &times, 1.0 / 150.0);
        let x = std::f64::consts::PI * f / 150.0;
        let gain = x.sin() / x;
        // The straight lines between analog samples add at most (ω Δt)²/8 = 4.4e-5.
        for (t, v) in times.iter().zip(&m) {
            let e = (v.unwrap() - gain * (w * t).sin()).abs();
            assert!(e < 5e-5, "{e} at {t}");
        }
    }
}
