//! Derivatives (docs/DESIGN.md 6.3): velocity and acceleration of a uniformly sampled series by
//! finite differences.
//!
//! Inputs: samples `x_i` (usually metres) at a frame interval `dt_s` (seconds). Outputs: first
//! derivative (unit/s, e.g. m/s) and second derivative (unit/s^2, e.g. m/s^2), one per sample.
//!
//! Interior samples, central differences (standard; docs/reference/methods.md 4):
//!
//! ```text
//! v_i = (x_{i+1} - x_{i-1}) / (2 dt)
//! a_i = (x_{i+1} - 2 x_i + x_{i-1}) / dt^2
//! ```
//!
//! For a sinusoid of angular frequency `w` their gains are `sin(w dt) / (w dt)` and
//! `(2 - 2 cos(w dt)) / (w dt)^2` (docs/reference/methods.md 4): 0.97648 and 0.98821 at 6 Hz, 100 Hz.
//!
//! End samples, one-sided formulas of the same (second) order of accuracy (the standard
//! finite-difference weights, e.g. Fornberg 1988, Math. Comp. 51, from memory):
//!
//! ```text
//! v_0     = (-3 x_0 + 4 x_1 - x_2) / (2 dt)
//! v_{n-1} = ( 3 x_{n-1} - 4 x_{n-2} + x_{n-3}) / (2 dt)
//! a_0     = ( 2 x_0 - 5 x_1 + 4 x_2 - x_3) / dt^2                 (4 points)
//! a_{n-1} = ( 2 x_{n-1} - 5 x_{n-2} + 4 x_{n-3} - x_{n-4}) / dt^2
//! ```
//!
//! All of these are exact on quadratics (and the 4-point end formula on cubics).
//!
//! Short inputs, never a panic: an empty input gives an empty output. First derivative: 1
//! sample gives `[NaN]`; 2 samples give the forward difference `(x_1 - x_0) / dt` twice.
//! Second derivative: 1 or 2 samples give NaN each; 3 samples give the central value
//! `(x_0 - 2 x_1 + x_2) / dt^2` three times. [`of_series`] turns these cases into `None`.

/// One optional 3D sample per frame (`None` where unknown).
pub type PointSeries = Vec<Option<[f64; 3]>>;

/// First derivative of `x` sampled every `dt_s` seconds (module doc).
///
/// ```
/// let v = gravline::signal::derivative::first(&[0.0, 1.0, 4.0, 9.0], 1.0); // x = t^2
/// assert_eq!(v, vec![0.0, 2.0, 4.0, 6.0]);
/// ```
pub fn first(x: &[f64], dt_s: f64) -> Vec<f64> {
    let n = x.len();
    match n {
        0 => Vec::new(),
        1 => vec![f64::NAN],
        2 => vec![(x[1] - x[0]) / dt_s; 2],
        _ => {
            let mut v = Vec::with_capacity(n);
            v.push((-3.0 * x[0] + 4.0 * x[1] - x[2]) / (2.0 * dt_s));
            v.extend(x.windows(3).map(|w| (w[2] - w[0]) / (2.0 * dt_s)));
            v.push((3.0 * x[n - 1] - 4.0 * x[n - 2] + x[n - 3]) / (2.0 * dt_s));
            v
        }
    }
}

/// Second derivative of `x` sampled every `dt_s` seconds (module doc).
///
/// ```
/// let a = gravline::signal::derivative::second(&[0.0, 1.0, 4.0, 9.0], 1.0); // x = t^2
/// assert_eq!(a, vec![2.0; 4]);
/// ```
pub fn second(x: &[f64], dt_s: f64) -> Vec<f64> {
    let n = x.len();
    let dt2 = dt_s * dt_s;
    match n {
        0 => Vec::new(),
        1 | 2 => vec![f64::NAN; n],
        3 => vec![(x[0] - 2.0 * x[1] + x[2]) / dt2; 3],
        _ => {
            let mut a = Vec::with_capacity(n);
            a.push((2.0 * x[0] - 5.0 * x[1] + 4.0 * x[2] - x[3]) / dt2);
            a.extend(x.windows(3).map(|w| (w[2] - 2.0 * w[1] + w[0]) / dt2));
            a.push((2.0 * x[n - 1] - 5.0 * x[n - 2] + 4.0 * x[n - 3] - x[n - 4]) / dt2);
            a
        }
    }
}

/// A 3D position series as velocity and acceleration series: each run of consecutive `Some`
/// samples is differentiated on its own, never across a gap. A run of 1 frame gives `None` for
/// both; a run of 2 frames gives a velocity (forward difference) and no acceleration. The
/// values are those of [`first`] and [`second`] on each coordinate of each run, computed in
/// place.
pub fn of_series(series: &[Option<[f64; 3]>], dt_s: f64) -> (PointSeries, PointSeries) {
    let mut vel = Vec::new();
    velocity_into(series, dt_s, &mut vel);
    let n = series.len();
    let mut acc = vec![None; n];
    let dt2 = dt_s * dt_s;
    for (start, len) in runs(series) {
        if len < 3 {
            continue;
        }
        // Every sample of the run is `Some`; the NaN is never used.
        let x = |i: usize| series[start + i].unwrap_or([f64::NAN; 3]);
        let out = &mut acc[start..start + len];
        if len == 3 {
            let (a, b, c) = (x(0), x(1), x(2));
            let v = each(|d| (a[d] - 2.0 * b[d] + c[d]) / dt2);
            out.fill(Some(v));
            continue;
        }
        let (a, b, c, e) = (x(0), x(1), x(2), x(3));
        out[0] = Some(each(|d| {
            (2.0 * a[d] - 5.0 * b[d] + 4.0 * c[d] - e[d]) / dt2
        }));
        for (f, slot) in out.iter_mut().enumerate().take(len - 1).skip(1) {
            let (p, h, q) = (x(f - 1), x(f), x(f + 1));
            *slot = Some(each(|d| (q[d] - 2.0 * h[d] + p[d]) / dt2));
        }
        let l = len - 1;
        let (a, b, c, e) = (x(l), x(l - 1), x(l - 2), x(l - 3));
        out[l] = Some(each(|d| {
            (2.0 * a[d] - 5.0 * b[d] + 4.0 * c[d] - e[d]) / dt2
        }));
    }
    (vel, acc)
}

/// `[f(0), f(1), f(2)]`: one formula on the three coordinates.
#[inline]
fn each(f: impl Fn(usize) -> f64) -> [f64; 3] {
    [f(0), f(1), f(2)]
}

/// The runs of consecutive `Some` samples, as (first frame, length).
fn runs(series: &[Option<[f64; 3]>]) -> impl Iterator<Item = (usize, usize)> + '_ {
    let mut start = 0;
    std::iter::from_fn(move || {
        while series.get(start)?.is_none() {
            start += 1;
        }
        let len = series[start..].iter().take_while(|s| s.is_some()).count();
        let run = (start, len);
        start += len;
        Some(run)
    })
}

/// The velocity series of [`of_series`] into `out` (resized to the series), without the
/// acceleration and without allocating beyond `out`.
pub fn velocity_into(series: &[Option<[f64; 3]>], dt_s: f64, out: &mut PointSeries) {
    out.clear();
    out.resize(series.len(), None);
    for (start, len) in runs(series) {
        if len < 2 {
            continue;
        }
        // Every sample of the run is `Some`; the NaN is never used.
        let x = |i: usize| series[start + i].unwrap_or([f64::NAN; 3]);
        let out = &mut out[start..start + len];
        let (a, b) = (x(0), x(1));
        if len == 2 {
            out.fill(Some(each(|d| (b[d] - a[d]) / dt_s)));
            continue;
        }
        let c = x(2);
        out[0] = Some(each(|d| (-3.0 * a[d] + 4.0 * b[d] - c[d]) / (2.0 * dt_s)));
        for (f, slot) in out.iter_mut().enumerate().take(len - 1).skip(1) {
            let (p, q) = (x(f - 1), x(f + 1));
            *slot = Some(each(|d| (q[d] - p[d]) / (2.0 * dt_s)));
        }
        let l = len - 1;
        let (a, b, c) = (x(l), x(l - 1), x(l - 2));
        out[l] = Some(each(|d| (3.0 * a[d] - 4.0 * b[d] + c[d]) / (2.0 * dt_s)));
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;
    use std::f64::consts::PI;

    #[test]
    fn series_derivatives_are_first_and_second_on_each_run() {
        // Runs of 1, 2, 3 and 40 frames of a curved path (synthetic).
        let p = |f: usize| {
            let t = f as f64 * 0.01;
            Some([t.sin(), t * t - 0.3, (2.0 * t).cos() * 1.7])
        };
        let mut series: Vec<Option<[f64; 3]>> = (0..60).map(p).collect();
        for gap in [1, 3, 6, 10, 11, 12, 16, 17, 58] {
            series[gap] = None;
        }
        // The reference: `first` and `second` on each coordinate of each run.
        let (mut want_v, mut want_a) = (vec![None; 60], vec![None; 60]);
        let mut f = 0;
        while f < 60 {
            let len = series[f..].iter().take_while(|p| p.is_some()).count();
            if len == 0 {
                f += 1;
                continue;
            }
            let coord = |d: usize| -> Vec<f64> {
                series[f..f + len].iter().flatten().map(|p| p[d]).collect()
            };
            let (v, a): (Vec<Vec<f64>>, Vec<Vec<f64>>) = (0..3)
                .map(|d| (first(&coord(d), 0.01), second(&coord(d), 0.01)))
                .unzip();
            for k in 0..len {
                if len >= 2 {
                    want_v[f + k] = Some([v[0][k], v[1][k], v[2][k]]);
                }
                if len >= 3 {
                    want_a[f + k] = Some([a[0][k], a[1][k], a[2][k]]);
                }
            }
            f += len;
        }
        let mut v = vec![Some([9.0; 3])];
        velocity_into(&series, 0.01, &mut v);
        let (vel, acc) = of_series(&series, 0.01);
        let bits = |s: &PointSeries| -> Vec<Option<[u64; 3]>> {
            s.iter().map(|p| p.map(|p| p.map(f64::to_bits))).collect()
        };
        assert_eq!(bits(&v), bits(&want_v));
        assert_eq!(bits(&vel), bits(&want_v));
        assert_eq!(bits(&acc), bits(&want_a));
        assert!(v[2].is_none() && v[4].is_some() && v[13].is_some());
        assert!(acc[4].is_none() && acc[13].is_some() && acc[20].is_some());
    }

    /// Interior gains measured on a sampled sine: the central differences of `sin(w t)` are
    /// exactly `G1 w cos(w t)` and `-G2 w^2 sin(w t)`.
    fn measured_gains(f_hz: f64, fs_hz: f64) -> (f64, f64) {
        let w = 2.0 * PI * f_hz;
        let dt = 1.0 / fs_hz;
        let t: Vec<f64> = (0..400).map(|i| i as f64 * dt).collect();
        let x: Vec<f64> = t.iter().map(|&ti| (w * ti).sin()).collect();
        let v = first(&x, dt);
        let a = second(&x, dt);
        // Least-squares gain over the interior: sum(d * ref) / sum(ref^2).
        let gain = |d: &[f64], reference: &dyn Fn(f64) -> f64| {
            let (mut num, mut den) = (0.0, 0.0);
            for i in 1..t.len() - 1 {
                let r = reference(t[i]);
                num += d[i] * r;
                den += r * r;
            }
            num / den
        };
        let g1 = gain(&v, &|ti| w * (w * ti).cos());
        let g2 = gain(&a, &|ti| -w * w * (w * ti).sin());
        // The gain is exact at every interior sample, not only on average.
        for i in 1..t.len() - 1 {
            assert_abs_diff_eq!(v[i], g1 * w * (w * t[i]).cos(), epsilon = 1e-9 * w);
            assert_abs_diff_eq!(a[i], -g2 * w * w * (w * t[i]).sin(), epsilon = 1e-9 * w * w);
        }
        (g1, g2)
    }

    #[test]
    fn central_difference_gains_match_methods_table() {
        // docs/reference/methods.md 4, check table (D): (f_s, f, 1st-derivative gain, 2nd-derivative gain).
        let table = [
            (100.0, 2.0, 0.99737, 0.99868),
            (100.0, 6.0, 0.97648, 0.98821),
            (100.0, 10.0, 0.93549, 0.96753),
            (200.0, 2.0, 0.99934, 0.99967),
            (200.0, 6.0, 0.99409, 0.99704),
            (200.0, 10.0, 0.98363, 0.99180),
        ];
        for (fs, f, g1_table, g2_table) in table {
            let wdt = 2.0 * PI * f / fs;
            let g1_formula = wdt.sin() / wdt;
            let g2_formula = (2.0 - 2.0 * wdt.cos()) / (wdt * wdt);
            let (g1, g2) = measured_gains(f, fs);
            assert_abs_diff_eq!(g1, g1_formula, epsilon = 1e-9);
            assert_abs_diff_eq!(g2, g2_formula, epsilon = 1e-9);
            assert_abs_diff_eq!(g1, g1_table, epsilon = 1e-5);
            assert_abs_diff_eq!(g2, g2_table, epsilon = 1e-5);
        }
    }

    #[test]
    fn exact_on_a_quadratic() {
        // x = 1.5 - 0.8 t + 4.9 t^2: v = -0.8 + 9.8 t, a = 9.8 everywhere, ends included.
        let dt = 0.01;
        let x: Vec<f64> = (0..50)
            .map(|i| {
                let t = i as f64 * dt;
                1.5 - 0.8 * t + 4.9 * t * t
            })
            .collect();
        for (i, v) in first(&x, dt).iter().enumerate() {
            assert_abs_diff_eq!(*v, -0.8 + 9.8 * i as f64 * dt, epsilon = 1e-9);
        }
        for a in second(&x, dt) {
            assert_abs_diff_eq!(a, 9.8, epsilon = 1e-7);
        }
        // Three samples: central value, still exact.
        for a in second(&x[..3], dt) {
            assert_abs_diff_eq!(a, 9.8, epsilon = 1e-7);
        }
    }

    #[test]
    fn end_formula_is_exact_on_a_cubic() {
        let x: Vec<f64> = (0..6).map(|i| (i as f64).powi(3)).collect();
        let a = second(&x, 1.0);
        assert_abs_diff_eq!(a[0], 0.0, epsilon = 1e-12);
        assert_abs_diff_eq!(a[5], 30.0, epsilon = 1e-12);
    }

    #[test]
    fn short_inputs_do_not_panic() {
        assert!(first(&[], 0.01).is_empty());
        assert!(second(&[], 0.01).is_empty());
        assert!(first(&[1.0], 0.01)[0].is_nan());
        assert_eq!(first(&[1.0, 2.0], 0.5), vec![2.0, 2.0]);
        assert!(second(&[1.0, 2.0], 0.5).iter().all(|a| a.is_nan()));
    }

    #[test]
    fn of_series_differentiates_each_run_alone() {
        // Runs: frames 0..5 (x = t^2 per coordinate scale), frame 6 alone, frames 8..10 (two).
        let dt = 0.1;
        let mut series: Vec<Option<[f64; 3]>> = vec![None; 10];
        for (i, s) in series.iter_mut().enumerate().take(5) {
            let t = i as f64 * dt;
            *s = Some([t * t, 2.0 * t * t, -t * t]);
        }
        series[6] = Some([100.0; 3]);
        series[8] = Some([0.0, 0.0, 0.0]);
        series[9] = Some([1.0, 2.0, 3.0]);
        let (v, a) = of_series(&series, dt);
        for i in 0..5 {
            let t = i as f64 * dt;
            let vi = v[i].unwrap();
            let ai = a[i].unwrap();
            assert_abs_diff_eq!(vi[0], 2.0 * t, epsilon = 1e-12);
            assert_abs_diff_eq!(vi[1], 4.0 * t, epsilon = 1e-12);
            assert_abs_diff_eq!(vi[2], -2.0 * t, epsilon = 1e-12);
            assert_abs_diff_eq!(ai[0], 2.0, epsilon = 1e-9);
            assert_abs_diff_eq!(ai[1], 4.0, epsilon = 1e-9);
            assert_abs_diff_eq!(ai[2], -2.0, epsilon = 1e-9);
        }
        assert_eq!((v[5], a[5]), (None, None));
        assert_eq!((v[6], a[6]), (None, None));
        assert_eq!((v[7], a[7]), (None, None));
        for p in [v[8].unwrap(), v[9].unwrap()] {
            for (got, want) in p.iter().zip([10.0, 20.0, 30.0]) {
                assert_abs_diff_eq!(*got, want, epsilon = 1e-12);
            }
        }
        assert_eq!((a[8], a[9]), (None, None));
    }
}
