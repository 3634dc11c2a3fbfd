//! Quiet standing from the plates alone: the CoM's horizontal path by the gravity-line method,
//! and the sway figures balance labs report.
//!
//! **Gravity line** (Zatsiorsky & King 1998, J Biomech 31:161-164): when the horizontal ground
//! reaction is zero, the gravity line passes through the CoP. Per horizontal axis: find the
//! instants where the horizontal force on the body F crosses zero (linear interpolation
//! between frames; there the CoM equals the CoP, also interpolated); between two such instants
//! t_a, t_b integrate a = F / m twice and fix the two constants by the end points:
//! x(t) = CoP(t_a) + v_a (t − t_a) + ∬ a, v_a = [CoP(t_b) − CoP(t_a) − ∬_(t_a)^(t_b) a] /
//! (t_b − t_a). The double integral is exact for an acceleration linear between samples. The
//! mean horizontal force is removed first (quiet standing has none), the mass is the mean
//! vertical force / g. Frames before the first and after the last crossing have no value.
//! Check (derived here, inverted pendulum x = A sin ωt, ẍ = ω0²(x − p)): the CoP is
//! p = x (1 + ω²/ω0²), F = m ẍ crosses zero where x = p, and the method returns x exactly.
//!
//! **Sway figures** of a horizontal path over time: path length (sum of the distances between
//! consecutive frames), mean velocity (path length / duration), RMS distance from the mean
//! point, and the area of the 95 % confidence ellipse π χ²₂(0.95) √(λ1 λ2), with λ the
//! eigenvalues of the 2 × 2 covariance and χ²₂(0.95) = 5.991 (Schubert & Kirchner 2014, Gait
//! Posture 39:518-522, the chi-square form of the prediction ellipse of Prieto et al. 1996,
//! IEEE Trans Biomed Eng 43:956-966).

/// χ² quantile, 2 degrees of freedom, 0.95: −2 ln 0.05.
pub const CHI2_2_95: f64 = 5.991_464_547_107_979;

/// The gravity-line CoM along one horizontal axis. `force_n` is the horizontal force on the
/// body, `cop_m` the CoP along the same axis, `mass_kg` the mass, `dt_s` the frame interval.
pub fn gravity_line(force_n: &[f64], cop_m: &[f64], mass_kg: f64, dt_s: f64) -> Vec<Option<f64>> {
    let n = force_n.len().min(cop_m.len());
    let mut out = vec![None; n];
    if n < 3 || mass_kg <= 0.0 {
        return out;
    }
    let mean = force_n[..n].iter().sum::<f64>() / n as f64;
    let a: Vec<f64> = force_n[..n].iter().map(|f| (f - mean) / mass_kg).collect();
    // Zero crossings as (fractional frame index, CoP there).
    let mut crossings: Vec<(f64, f64)> = Vec::new();
    for k in 0..n - 1 {
        let (a0, a1) = (a[k], a[k + 1]);
        if a0 == 0.0 {
            crossings.push((k as f64, cop_m[k]));
        } else if a0 * a1 < 0.0 {
            let s = a0 / (a0 - a1);
            crossings.push((k as f64 + s, cop_m[k] + s * (cop_m[k + 1] - cop_m[k])));
        }
    }
    let accel_at = |u: f64| -> f64 {
        let i = (u.floor() as usize).min(n - 2);
        let s = u - i as f64;
        a[i] + s * (a[i + 1] - a[i])
    };
    for w in crossings.windows(2) {
        let ((ua, pa), (ub, pb)) = (w[0], w[1]);
        if ub - ua <= 0.0 {
            continue;
        }
        // Knots: t_a, every frame strictly inside, t_b.
        let mut knots = vec![ua];
        let mut k = ua.floor() as usize + 1;
        while (k as f64) < ub {
            knots.push(k as f64);
            k += 1;
        }
        knots.push(ub);
        let mut v = 0.0;
        let mut x = 0.0;
        let mut xs = vec![0.0];
        for kw in knots.windows(2) {
            let h = (kw[1] - kw[0]) * dt_s;
            let (a0, a1) = (accel_at(kw[0]), accel_at(kw[1]));
            x += v * h + h * h * (2.0 * a0 + a1) / 6.0;
            v += h * (a0 + a1) / 2.0;
            xs.push(x);
        }
        let span = (ub - ua) * dt_s;
        let va = (pb - pa - x) / span;
        for (i, &u) in knots.iter().enumerate() {
            if u.fract() == 0.0 && (u as usize) < n {
                let value = pa + va * (u - ua) * dt_s + xs[i];
                out[u as usize] = Some(value);
            }
        }
    }
    out
}

/// Sway figures of one horizontal path (metres, seconds).
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct SwayFigures {
    pub frames: usize,
    pub path_length_m: f64,
    pub mean_velocity_m_s: f64,
    pub rms_m: f64,
    pub ellipse_95_area_m2: f64,
}

/// Sway figures of the points present in `path` (frames without a point are skipped; the
/// duration is that of the frames present). `None` for fewer than 3 points.
pub fn sway_figures(path: &[Option<[f64; 2]>], dt_s: f64) -> Option<SwayFigures> {
    let pts: Vec<(usize, [f64; 2])> = path
        .iter()
        .enumerate()
        .filter_map(|(i, p)| Some((i, (*p)?)))
        .collect();
    if pts.len() < 3 {
        return None;
    }
    let n = pts.len() as f64;
    let mut length = 0.0;
    for w in pts.windows(2) {
        if w[1].0 == w[0].0 + 1 {
            length += ((w[1].1[0] - w[0].1[0]).powi(2) + (w[1].1[1] - w[0].1[1]).powi(2)).sqrt();
        }
    }
    let mx = pts.iter().map(|p| p.1[0]).sum::<f64>() / n;
    let my = pts.iter().map(|p| p.1[1]).sum::<f64>() / n;
    let (mut sxx, mut syy, mut sxy) = (0.0, 0.0, 0.0);
    for (_, p) in &pts {
        let (dx, dy) = (p[0] - mx, p[1] - my);
        sxx += dx * dx;
        syy += dy * dy;
        sxy += dx * dy;
    }
    let rms = ((sxx + syy) / n).sqrt();
    // Sample covariance (n − 1); det = λ1 λ2.
    let (cxx, cyy, cxy) = (sxx / (n - 1.0), syy / (n - 1.0), sxy / (n - 1.0));
    let det = (cxx * cyy - cxy * cxy).max(0.0);
    let duration = (pts.len() - 1) as f64 * dt_s;
    Some(SwayFigures {
        frames: pts.len(),
        path_length_m: length,
        mean_velocity_m_s: if duration > 0.0 {
            length / duration
        } else {
            0.0
        },
        rms_m: rms,
        ellipse_95_area_m2: std::f64::consts::PI * CHI2_2_95 * det.sqrt(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The inverted-pendulum oracle of the module doc: the method returns x exactly.
    #[test]
    fn gravity_line_returns_the_pendulum_com() {
        let (m, dt) = (70.0, 0.01);
        let omega0 = 3.0;
        let w = 2.0 * std::f64::consts::PI * 0.3;
        let n = 1000;
        let x: Vec<f64> = (0..n).map(|k| 0.01 * (w * k as f64 * dt).sin()).collect();
        let p: Vec<f64> = x
            .iter()
            .map(|x| x * (1.0 + w * w / (omega0 * omega0)))
            .collect();
        let f: Vec<f64> = x.iter().map(|x| -m * w * w * x).collect();
        let g = gravity_line(&f, &p, m, dt);
        let mut checked = 0;
        for (gv, xv) in g.iter().zip(&x) {
            if let Some(gv) = gv {
                assert!((gv - xv).abs() < 2e-6, "{gv} vs {xv}");
                checked += 1;
            }
        }
        assert!(checked > 600, "{checked}");
    }

    /// A circle of radius r traversed once: path 2πr, RMS r, covariance r²/2·I (population),
    /// so the ellipse area is π·5.991·r²/2 (up to the n − 1 factor).
    #[test]
    fn sway_figures_of_a_circle() {
        let n = 10_000;
        let r = 0.01;
        let path: Vec<Option<[f64; 2]>> = (0..=n)
            .map(|k| {
                let a = 2.0 * std::f64::consts::PI * k as f64 / n as f64;
                Some([r * a.cos(), r * a.sin()])
            })
            .collect();
        let s = sway_figures(&path, 0.001).unwrap();
        assert!((s.path_length_m - 2.0 * std::f64::consts::PI * r).abs() < 1e-6);
        assert!((s.rms_m - r).abs() < 1e-5);
        let area = std::f64::consts::PI * CHI2_2_95 * r * r / 2.0;
        assert!((s.ellipse_95_area_m2 - area).abs() / area < 1e-3);
        assert!((s.mean_velocity_m_s - s.path_length_m / 10.0).abs() < 1e-12);
    }
}
