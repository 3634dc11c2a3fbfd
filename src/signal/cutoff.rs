//! `gravline cutoff`: Winter's residual analysis ([`super::residual`]) over every marker
//! coordinate of a trial.
//!
//! Each marker is gap-filled as in the pipeline (default 0.10 s limit); its longest complete run
//! is analysed coordinate by coordinate over [`default_cutoffs`]. Per marker, the suggestion is
//! the highest of its three coordinates' cut-offs (the most demanding coordinate decides, so no
//! coordinate is over-smoothed); overall, the median of the markers' suggestions (common
//! practice, no source: one cut-off for all markers keeps segment geometry consistent). The noise
//! estimate per marker is the RMS of its coordinates' intercepts, in millimetres.

use super::residual::{default_cutoffs, residuals, suggest};
use super::{fill_gaps, Run};
use crate::config::DEFAULT_MAX_GAP_S;
use crate::trial::Trial;
use std::io::{self, Write};

/// Residual analysis of one marker.
#[derive(Clone, Debug, PartialEq)]
pub struct MarkerResiduals {
    pub label: String,
    /// Frames in the analysed run.
    pub frames: usize,
    /// `residuals_m[axis][k]` at `cutoffs_hz[k]`.
    pub residuals_m: [Vec<f64>; 3],
    /// Suggested cut-off per axis, Hz.
    pub suggested_hz: [Option<f64>; 3],
    /// Noise RMS per axis, metres.
    pub noise_m: [Option<f64>; 3],
}

impl MarkerResiduals {
    /// The highest of the three axes' suggestions.
    pub fn suggested_hz(&self) -> Option<f64> {
        self.suggested_hz.iter().flatten().copied().reduce(f64::max)
    }

    /// RMS of the axes' noise estimates, metres.
    pub fn noise_rms_m(&self) -> Option<f64> {
        let n: Vec<f64> = self.noise_m.iter().flatten().copied().collect();
        (!n.is_empty()).then(|| (n.iter().map(|x| x * x).sum::<f64>() / n.len() as f64).sqrt())
    }
}

/// Residual analysis of a trial.
#[derive(Clone, Debug, PartialEq)]
pub struct CutoffReport {
    pub trial: String,
    pub rate_hz: f64,
    pub cutoffs_hz: Vec<f64>,
    pub markers: Vec<MarkerResiduals>,
}

/// Runs the analysis on every marker of a trial.
pub fn analyse_trial(trial: &Trial) -> CutoffReport {
    let cutoffs_hz = default_cutoffs(trial.rate_hz);
    let (markers, _) = fill_gaps(&trial.markers, &trial.times_s, DEFAULT_MAX_GAP_S);
    let mut out = Vec::new();
    for (label, track) in markers.labels.iter().zip(&markers.tracks) {
        let Some(run) = track.runs.iter().max_by_key(|r: &&Run| r.xyz.len()) else {
            continue;
        };
        let mut res: [Vec<f64>; 3] = Default::default();
        let mut suggested_hz = [None; 3];
        let mut noise_m = [None; 3];
        for axis in 0..3 {
            let x: Vec<f64> = run.xyz.iter().map(|p| p[axis]).collect();
            res[axis] = residuals(&x, trial.rate_hz, &cutoffs_hz);
            if let Some(s) = suggest(&cutoffs_hz, &res[axis]) {
                suggested_hz[axis] = Some(s.cutoff_hz);
                noise_m[axis] = Some(s.noise_rms);
            }
        }
        out.push(MarkerResiduals {
            label: label.clone(),
            frames: run.xyz.len(),
            residuals_m: res,
            suggested_hz,
            noise_m,
        });
    }
    CutoffReport {
        trial: trial.name.clone(),
        rate_hz: trial.rate_hz,
        cutoffs_hz,
        markers: out,
    }
}

impl CutoffReport {
    /// Median of the markers' suggestions, Hz.
    pub fn overall_hz(&self) -> Option<f64> {
        median(
            self.markers
                .iter()
                .filter_map(MarkerResiduals::suggested_hz)
                .collect(),
        )
    }

    /// Median of the markers' noise estimates, metres.
    pub fn overall_noise_m(&self) -> Option<f64> {
        median(
            self.markers
                .iter()
                .filter_map(MarkerResiduals::noise_rms_m)
                .collect(),
        )
    }

    /// The table `gravline cutoff` prints.
    pub fn describe(&self) -> String {
        let mut s = format!(
            "residual analysis (Winter) of {} at {:.1} Hz, cut-offs {:.1}-{:.1} Hz\n{:<24} {:>7} {:>8} {:>8} {:>8} {:>10} {:>10}\n",
            self.trial,
            self.rate_hz,
            self.cutoffs_hz.first().copied().unwrap_or(f64::NAN),
            self.cutoffs_hz.last().copied().unwrap_or(f64::NAN),
            "marker",
            "frames",
            "x_hz",
            "y_hz",
            "z_hz",
            "marker_hz",
            "noise_mm"
        );
        let f =
            |v: Option<f64>, scale: f64| v.map_or("-".to_string(), |v| format!("{:.1}", v * scale));
        for m in &self.markers {
            s.push_str(&format!(
                "{:<24} {:>7} {:>8} {:>8} {:>8} {:>10} {:>10}\n",
                m.label,
                m.frames,
                f(m.suggested_hz[0], 1.0),
                f(m.suggested_hz[1], 1.0),
                f(m.suggested_hz[2], 1.0),
                f(m.suggested_hz(), 1.0),
                f(m.noise_rms_m(), 1e3),
            ));
        }
        s.push_str(&format!(
            "suggested cut-off for all markers: {} Hz (median over markers); noise about {} mm\n",
            f(self.overall_hz(), 1.0),
            f(self.overall_noise_m(), 1e3)
        ));
        s.push_str("note: residual analysis tends to suggest cut-offs below the optimum (Yu et al. 1999)\n");
        s
    }

    /// The residual curves as CSV: `cutoff_hz`, then `<marker>_<axis>_residual_m` columns.
    pub fn write_curves(&self, w: &mut dyn Write) -> io::Result<()> {
        write!(w, "cutoff_hz")?;
        for m in &self.markers {
            for a in ["x", "y", "z"] {
                write!(w, ",{}_{a}_residual_m", m.label)?;
            }
        }
        writeln!(w)?;
        for (k, fc) in self.cutoffs_hz.iter().enumerate() {
            write!(w, "{fc}")?;
            for m in &self.markers {
                for axis in 0..3 {
                    match m.residuals_m[axis].get(k) {
                        Some(v) if v.is_finite() => write!(w, ",{v:.9}")?,
                        _ => write!(w, ",")?,
                    }
                }
            }
            writeln!(w)?;
        }
        Ok(())
    }
}

fn median(mut v: Vec<f64>) -> Option<f64> {
    if v.is_empty() {
        return None;
    }
    v.sort_by(f64::total_cmp);
    let n = v.len();
    Some(if n % 2 == 1 {
        v[n / 2]
    } else {
        (v[n / 2 - 1] + v[n / 2]) / 2.0
    })
}
