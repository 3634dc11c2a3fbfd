//! Natural cubic interpolating spline, used by gap filling ([`super::gapfill`]).
//!
//! Input: knots `t_0 < t_1 < ... < t_{m-1}` (seconds) and values `y_i` (any unit, `D`
//! coordinates sharing the knots). Output: the piecewise cubic `S` with `S(t_i) = y_i`,
//! continuous first and second derivatives, and the *natural* end conditions
//! `S''(t_0) = S''(t_{m-1}) = 0` (de Boor, *A Practical Guide to Splines*, 1978, ch. IV, from
//! memory; the same spline as `scipy.interpolate.CubicSpline(bc_type='natural')`, against which
//! tests/signal_spline_scipy.rs checks it).
//!
//! With `h_i = t_{i+1} - t_i` and the second derivatives `M_i = S''(t_i)`, `M_0 = M_{m-1} = 0`,
//! continuity of `S'` gives for `i = 1 .. m-2` the tridiagonal system
//!
//! ```text
//! h_{i-1} M_{i-1} + 2 (h_{i-1} + h_i) M_i + h_i M_{i+1}
//!     = 6 [ (y_{i+1} - y_i) / h_i - (y_i - y_{i-1}) / h_{i-1} ],
//! ```
//!
//! solved by the Thomas algorithm in O(m) (the matrix is strictly diagonally dominant, so no
//! pivoting is needed). On `[t_i, t_{i+1}]`, with `A = t_{i+1} - t` and `B = t - t_i`:
//!
//! ```text
//! S(t) = (M_i A^3 + M_{i+1} B^3) / (6 h_i)
//!      + (y_i / h_i - M_i h_i / 6) A + (y_{i+1} / h_i - M_{i+1} h_i / 6) B.
//! ```
//!
//! With two knots the system is empty and the spline is the straight line through them.

/// A natural cubic spline through `D`-dimensional values at shared knots.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct NaturalSpline<const D: usize> {
    knots: Vec<f64>,
    values: Vec<[f64; D]>,
    /// `S''` at each knot; zero at both ends.
    second: Vec<[f64; D]>,
    /// The modified super-diagonal of the last solve (kept for its memory).
    work: Vec<f64>,
}

impl<const D: usize> NaturalSpline<D> {
    /// The spline through `(knots[i], values[i])`.
    ///
    /// `None` if there are fewer than 2 knots, the lengths differ, or the knots are not finite
    /// and strictly increasing.
    ///
    /// ```
    /// use gravline::signal::NaturalSpline;
    /// // Through three points of a line, the natural spline is that line.
    /// let s = NaturalSpline::new(vec![0.0, 1.0, 3.0], vec![[1.0], [3.0], [7.0]]).unwrap();
    /// assert!((s.eval(2.0)[0] - 5.0).abs() < 1e-12);
    /// ```
    pub fn new(knots: Vec<f64>, values: Vec<[f64; D]>) -> Option<Self> {
        let mut s = NaturalSpline {
            knots,
            values,
            ..Default::default()
        };
        s.fit().then_some(s)
    }

    /// Fits the spline anew through `points` (knot, value), reusing its memory: gap filling fits
    /// one spline per stretch, each through up to a whole trial. `false`, and an empty spline,
    /// where [`NaturalSpline::new`] gives `None`.
    ///
    /// ```
    /// use gravline::signal::NaturalSpline;
    /// let mut s = NaturalSpline::default();
    /// assert!(s.refit([(0.0, [1.0]), (2.0, [5.0])]));
    /// assert!((s.eval(1.0)[0] - 3.0).abs() < 1e-12);
    /// assert!(!s.refit([(0.0, [1.0])]));
    /// ```
    pub fn refit(&mut self, points: impl IntoIterator<Item = (f64, [f64; D])>) -> bool {
        self.knots.clear();
        self.values.clear();
        for (t, v) in points {
            self.knots.push(t);
            self.values.push(v);
        }
        self.fit()
    }

    /// Checks the knots and solves for the second derivatives; empties the spline when the knots
    /// do not make one.
    fn fit(&mut self) -> bool {
        let m = self.knots.len();
        let valid = m >= 2
            && self.values.len() == m
            && self.knots.iter().all(|t| t.is_finite())
            && self.knots.windows(2).all(|w| w[1] > w[0]);
        if !valid {
            self.knots.clear();
            self.values.clear();
            self.second.clear();
            return false;
        }
        solve_second_derivatives(&self.knots, &self.values, &mut self.second, &mut self.work);
        true
    }

    /// The knots, in seconds.
    pub fn knots(&self) -> &[f64] {
        &self.knots
    }

    /// `S(t)`. Outside the knots the end pieces are continued (callers should not extrapolate:
    /// gap filling only evaluates between knots). NaN for an empty spline.
    pub fn eval(&self, t: f64) -> [f64; D] {
        let m = self.knots.len();
        if m < 2 {
            // An empty spline (a failed refit) has no value anywhere.
            return [f64::NAN; D];
        }
        // Piece i covers [t_i, t_{i+1}]; i in 0 ..= m-2 (m >= 2 by construction).
        let i = self
            .knots
            .partition_point(|&k| k <= t)
            .saturating_sub(1)
            .min(m - 2);
        let (t0, t1) = (self.knots[i], self.knots[i + 1]);
        let h = t1 - t0;
        let a = t1 - t;
        let b = t - t0;
        let (y0, y1) = (&self.values[i], &self.values[i + 1]);
        let (m0, m1) = (&self.second[i], &self.second[i + 1]);
        let mut out = [0.0; D];
        for d in 0..D {
            out[d] = (m0[d] * a * a * a + m1[d] * b * b * b) / (6.0 * h)
                + (y0[d] / h - m0[d] * h / 6.0) * a
                + (y1[d] / h - m1[d] * h / 6.0) * b;
        }
        out
    }
}

/// Second derivatives `M_i` of the natural spline (module doc), by the Thomas algorithm, into
/// `second`; `work` holds the modified super-diagonal. Requires
/// `knots.len() == values.len() >= 2` and strictly increasing knots.
fn solve_second_derivatives<const D: usize>(
    knots: &[f64],
    values: &[[f64; D]],
    second: &mut Vec<[f64; D]>,
    work: &mut Vec<f64>,
) {
    let m = knots.len();
    second.clear();
    second.resize(m, [0.0; D]);
    if m < 3 {
        return;
    }
    let h = |i: usize| knots[i + 1] - knots[i];
    // The slope of interval i, (y_{i+1} - y_i) / h_i, serves rows i and i + 1.
    let slope = |i: usize| -> [f64; D] {
        let mut s = [0.0; D];
        for (d, slot) in s.iter_mut().enumerate() {
            *slot = (values[i + 1][d] - values[i][d]) / h(i);
        }
        s
    };
    // Unknowns M_1 .. M_{m-2}, rows 1 ..= m-2. Forward sweep: eliminate the sub-diagonal,
    // keeping the modified super-diagonal `c` (in `work`) and right-hand side `r` (in `second`,
    // which back substitution then turns into M in place).
    work.clear();
    work.resize(m, 0.0);
    let mut slope_before = slope(0);
    for i in 1..m - 1 {
        let sub = h(i - 1);
        let diag = 2.0 * (h(i - 1) + h(i));
        let sup = h(i);
        let slope_after = slope(i);
        let mut rhs = [0.0; D];
        for (d, slot) in rhs.iter_mut().enumerate() {
            *slot = 6.0 * (slope_after[d] - slope_before[d]);
        }
        slope_before = slope_after;
        // Row i-1 of the reduced system is absent for i = 1 (M_0 = 0 is known).
        let (c_prev, r_prev) = if i == 1 {
            (0.0, [0.0; D])
        } else {
            (work[i - 1], second[i - 1])
        };
        let denom = diag - sub * c_prev;
        work[i] = sup / denom;
        for d in 0..D {
            second[i][d] = (rhs[d] - sub * r_prev[d]) / denom;
        }
    }
    // Back substitution; M_{m-1} = 0.
    for i in (1..m - 1).rev() {
        let next = second[i + 1];
        for (v, n) in second[i].iter_mut().zip(next) {
            *v -= work[i] * n;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;

    #[test]
    fn interpolates_the_knots() {
        let t = vec![0.0, 0.3, 0.5, 1.2, 1.3, 2.0];
        let y: Vec<[f64; 2]> = t.iter().map(|&x: &f64| [x.sin(), x * x]).collect();
        let s = NaturalSpline::new(t.clone(), y.clone()).unwrap();
        for (ti, yi) in t.iter().zip(&y) {
            let v = s.eval(*ti);
            assert_abs_diff_eq!(v[0], yi[0], epsilon = 1e-14);
            assert_abs_diff_eq!(v[1], yi[1], epsilon = 1e-14);
        }
    }

    #[test]
    fn reproduces_a_straight_line() {
        // A line has S'' = 0 everywhere, so it satisfies the natural end conditions exactly.
        let t = vec![0.0, 0.1, 0.35, 0.4, 1.0];
        let y: Vec<[f64; 1]> = t.iter().map(|&x| [2.0 - 3.0 * x]).collect();
        let s = NaturalSpline::new(t, y).unwrap();
        for k in 0..=100 {
            let x = k as f64 / 100.0;
            assert_abs_diff_eq!(s.eval(x)[0], 2.0 - 3.0 * x, epsilon = 1e-13);
        }
    }

    #[test]
    fn second_derivative_is_zero_at_the_ends() {
        let t = vec![0.0, 1.0, 2.0, 3.0];
        let y = vec![[0.0], [1.0], [0.0], [1.0]];
        let s = NaturalSpline::new(t, y).unwrap();
        assert_eq!(s.second[0][0], 0.0);
        assert_eq!(s.second[3][0], 0.0);
        // Worked by hand: 4 M1 + M2 = -12, M1 + 4 M2 = 12  =>  M1 = -4, M2 = 4.
        assert_abs_diff_eq!(s.second[1][0], -4.0, epsilon = 1e-12);
        assert_abs_diff_eq!(s.second[2][0], 4.0, epsilon = 1e-12);
    }

    /// The solver as first written (separate `h`, `c` and `r`, slopes computed per row).
    fn reference_second(knots: &[f64], values: &[[f64; 3]]) -> Vec<[f64; 3]> {
        let m = knots.len();
        let mut second = vec![[0.0; 3]; m];
        let h: Vec<f64> = knots.windows(2).map(|w| w[1] - w[0]).collect();
        let mut c = vec![0.0; m];
        let mut r = vec![[0.0; 3]; m];
        for i in 1..m - 1 {
            let (sub, diag, sup) = (h[i - 1], 2.0 * (h[i - 1] + h[i]), h[i]);
            let mut rhs = [0.0; 3];
            for d in 0..3 {
                rhs[d] = 6.0
                    * ((values[i + 1][d] - values[i][d]) / h[i]
                        - (values[i][d] - values[i - 1][d]) / h[i - 1]);
            }
            let (c_prev, r_prev) = if i == 1 {
                (0.0, [0.0; 3])
            } else {
                (c[i - 1], r[i - 1])
            };
            let denom = diag - sub * c_prev;
            c[i] = sup / denom;
            for d in 0..3 {
                r[i][d] = (rhs[d] - sub * r_prev[d]) / denom;
            }
        }
        for i in (1..m - 1).rev() {
            for d in 0..3 {
                second[i][d] = r[i][d] - c[i] * second[i + 1][d];
            }
        }
        second
    }

    #[test]
    fn refits_give_the_bits_of_the_first_solver() {
        let mut s = NaturalSpline::default();
        for m in [2, 3, 4, 17, 400] {
            let t: Vec<f64> = (0..m)
                .map(|i| i as f64 * 0.01 + (i % 3) as f64 * 1e-4)
                .collect();
            let y: Vec<[f64; 3]> = t
                .iter()
                .map(|&x| [(9.0 * x).sin(), x * x - 0.3, (4.0 * x).cos() * 1.7])
                .collect();
            assert!(s.refit(t.iter().copied().zip(y.iter().copied())));
            let want = reference_second(&t, &y);
            let bits = |v: &[[f64; 3]]| v.iter().flatten().map(|x| x.to_bits()).collect::<Vec<_>>();
            assert_eq!(bits(&s.second), bits(&want), "{m} knots");
            assert_eq!(NaturalSpline::new(t, y).unwrap().second, s.second);
        }
        assert!(!s.refit([(0.0, [0.0; 3]), (0.0, [1.0; 3])]));
        assert!(s.eval(0.0)[0].is_nan());
    }

    #[test]
    fn rejects_bad_knots() {
        assert!(NaturalSpline::new(vec![0.0], vec![[1.0]]).is_none());
        assert!(NaturalSpline::new(vec![0.0, 0.0], vec![[1.0], [2.0]]).is_none());
        assert!(NaturalSpline::new(vec![1.0, 0.0], vec![[1.0], [2.0]]).is_none());
        assert!(NaturalSpline::new(vec![0.0, f64::NAN], vec![[1.0], [2.0]]).is_none());
        assert!(NaturalSpline::new(vec![0.0, 1.0], vec![[1.0]]).is_none());
    }
}
