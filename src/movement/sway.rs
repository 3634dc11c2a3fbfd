//! Quiet-standing sway of the CoM's floor projection, by the time-domain measures of Prieto et
//! al. 1996 ("Measures of postural steadiness: differences between healthy young and elderly
//! adults", IEEE Trans Biomed Eng 43:956-966), applied to the CoM rather than the CoP:
//!
//! - axes: antero-posterior (AP) along the trial's progression direction (for a standing trial
//!   the mean heel-to-toe direction of the feet), medio-lateral (ML) across it;
//! - `path_length_m`: the summed distance between consecutive valid frames;
//! - `rms_ap_m`, `rms_ml_m`: root mean square distance from the mean position along each axis;
//! - `ellipse_area_95_m2`: the 95 % prediction ellipse, π χ²₂(0.95) √(λ₁ λ₂) with χ²₂(0.95) =
//!   5.991 and λ the eigenvalues of the AP/ML covariance (n − 1), as recommended by Schubert &
//!   Kirchner 2014 ("Ellipse area calculations and their applicability in posturography", Gait
//!   Posture 39:518-522);
//! - `mean_speed_m_s`: path length over the time from the first to the last valid frame.
//!
//! Units: metres, m², m/s.

use crate::pipeline::TrialResult;
use serde::Serialize;

/// 95 % quantile of the χ² distribution with two degrees of freedom (−2 ln 0.05).
pub const CHI2_2_95: f64 = 5.991_464_547_107_979;

/// Sway figures of a trial.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SwayFigures {
    pub path_length_m: f64,
    pub rms_ap_m: f64,
    pub rms_ml_m: f64,
    pub ellipse_area_95_m2: f64,
    pub mean_speed_m_s: f64,
}

/// The sway figures of the CoM (module doc); `None` with fewer than two valid frames.
pub fn figures(r: &TrialResult) -> Option<SwayFigures> {
    let p = r.support.progression.unwrap_or([1.0, 0.0]);
    let points: Vec<(usize, [f64; 2])> = r
        .com
        .iter()
        .enumerate()
        .filter_map(|(f, c)| {
            let h = r.up_axis.horizontal(c.as_ref()?);
            Some((f, [h[0] * p[0] + h[1] * p[1], -h[0] * p[1] + h[1] * p[0]]))
        })
        .collect();
    let xy: Vec<[f64; 2]> = points.iter().map(|(_, q)| *q).collect();
    let times: Vec<f64> = points.iter().map(|(f, _)| super::time_s(r, *f)).collect();
    of_points(
        &xy,
        &times,
        &points.iter().map(|(f, _)| *f).collect::<Vec<_>>(),
    )
}

/// The sway figures of AP/ML points (metres) at `times_s`; `frames` are the points' frame
/// numbers (the path joins consecutive frames only).
pub fn of_points(xy: &[[f64; 2]], times_s: &[f64], frames: &[usize]) -> Option<SwayFigures> {
    let n = xy.len();
    if n < 2 {
        return None;
    }
    let path_length_m: f64 = (1..n)
        .filter(|&k| frames[k] == frames[k - 1] + 1)
        .map(|k| (xy[k][0] - xy[k - 1][0]).hypot(xy[k][1] - xy[k - 1][1]))
        .sum();
    let m = [
        xy.iter().map(|q| q[0]).sum::<f64>() / n as f64,
        xy.iter().map(|q| q[1]).sum::<f64>() / n as f64,
    ];
    let (mut sxx, mut syy, mut sxy) = (0.0, 0.0, 0.0);
    for q in xy {
        let (dx, dy) = (q[0] - m[0], q[1] - m[1]);
        sxx += dx * dx;
        syy += dy * dy;
        sxy += dx * dy;
    }
    let nf = n as f64;
    let det = (sxx * syy - sxy * sxy) / ((nf - 1.0) * (nf - 1.0));
    let span_s = times_s[n - 1] - times_s[0];
    Some(SwayFigures {
        path_length_m,
        rms_ap_m: (sxx / nf).sqrt(),
        rms_ml_m: (syy / nf).sqrt(),
        ellipse_area_95_m2: std::f64::consts::PI * CHI2_2_95 * det.max(0.0).sqrt(),
        mean_speed_m_s: if span_s > 0.0 {
            path_length_m / span_s
        } else {
            0.0
        },
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A point on a circle of radius a (x) and b (y) at uniform angles: RMS a/√2 and b/√2, the
    /// covariance diag(a²/2, b²/2) · n/(n−1), path the n − 1 chords of the open polygon.
    /// Geometry, no source.
    #[test]
    fn a_circle_has_known_figures() {
        let n = 10_000;
        let a = 0.01;
        let xy: Vec<[f64; 2]> = (0..n)
            .map(|k| {
                let t = std::f64::consts::TAU * k as f64 / n as f64;
                [a * t.cos(), a * t.sin()]
            })
            .collect();
        let times: Vec<f64> = (0..n).map(|k| k as f64 / 100.0).collect();
        let frames: Vec<usize> = (0..n).collect();
        let s = of_points(&xy, &times, &frames).unwrap();
        assert!((s.rms_ap_m - a / 2f64.sqrt()).abs() < 1e-9);
        assert!((s.rms_ml_m - a / 2f64.sqrt()).abs() < 1e-9);
        // n - 1 chords of 2 a sin(pi / n) (the circle is not closed).
        let chord = 2.0 * a * (std::f64::consts::PI / n as f64).sin();
        assert!((s.path_length_m - (n - 1) as f64 * chord).abs() < 1e-12);
        let var = a * a / 2.0 * n as f64 / (n as f64 - 1.0);
        assert!((s.ellipse_area_95_m2 - std::f64::consts::PI * CHI2_2_95 * var).abs() < 1e-12);
        assert!((s.mean_speed_m_s - s.path_length_m / times[n - 1]).abs() < 1e-12);
        // χ²₂(0.95) = −2 ln(0.05): the χ² distribution with 2 degrees of freedom is exponential.
        assert!((CHI2_2_95 + 2.0 * 0.05f64.ln()).abs() < 1e-12);
    }
}
