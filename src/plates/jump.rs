//! Jumps from the plates: take-off velocity by the impulse-momentum method, jump height from it
//! and from the flight time, and their difference.
//!
//! - Body weight: the mean vertical force over the first [`WEIGHING_S`] of the trial, which
//!   must be quiet standing (the body at rest there: velocity 0 at the start of integration).
//! - Take-off velocity: v = (1/m) ∫ (F_up − m g) dt from the start to take-off (impulse-momentum;
//!   Linthorne 2001, Am J Phys 69:1198-1204), trapezoidal over frames.
//! - Flight: the first run of frames with vertical force below [`LOADED_N`] lasting at least
//!   [`MIN_FLIGHT_S`]; take-off and landing at the threshold crossings, interpolated.
//! - Heights: h_v = v² / (2g) (rise of the CoM after take-off) and h_t = g t² / 8 from the flight
//!   time t (Bosco et al. 1983, Eur J Appl Physiol 50:273-282). h_t − h_v is positive when
//!   the CoM lands lower than it took off (legs more flexed at landing).

use super::LOADED_N;
use crate::synth::G_M_S2;

/// Quiet standing at the start of a jump trial used to weigh the body, s.
pub const WEIGHING_S: f64 = 0.3;
/// Shortest flight, s (common practice, no source).
pub const MIN_FLIGHT_S: f64 = 0.1;

/// Jump figures from the plates.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct JumpFigures {
    pub take_off_s: f64,
    pub landing_s: f64,
    pub flight_s: f64,
    /// Mass from the weighing phase, kg.
    pub weighed_mass_kg: f64,
    pub take_off_velocity_m_s: f64,
    pub height_from_velocity_m: f64,
    pub height_from_flight_time_m: f64,
    /// Flight-time height minus velocity height, m.
    pub height_difference_m: f64,
}

/// Jump figures from the vertical force on the body per frame (`None` where unknown).
/// `None` without a flight, without a loaded weighing phase, or with unknown forces before
/// take-off.
pub fn jump_figures(
    vertical_n: &[Option<f64>],
    times_s: &[f64],
    rate_hz: f64,
) -> Option<JumpFigures> {
    let n = vertical_n.len().min(times_s.len());
    let dt = 1.0 / rate_hz;
    let weigh = ((WEIGHING_S * rate_hz).round() as usize).max(2).min(n);
    let first: Vec<f64> = vertical_n[..weigh]
        .iter()
        .map(|v| v.unwrap_or(f64::NAN))
        .collect();
    if first.iter().any(|v| !v.is_finite() || *v < LOADED_N) {
        return None;
    }
    let mass = first.iter().sum::<f64>() / weigh as f64 / G_M_S2;
    let min_flight = (MIN_FLIGHT_S * rate_hz).ceil() as usize;
    let mut k = weigh;
    let (start, end) = loop {
        if k >= n {
            return None;
        }
        if vertical_n[k]? < LOADED_N {
            let s = k;
            while k < n && vertical_n[k].is_some_and(|v| v < LOADED_N) {
                k += 1;
            }
            if k - s >= min_flight && k < n {
                break (s, k);
            }
        }
        k += 1;
    };
    let cross = |i: usize| -> f64 {
        // Threshold crossing between frames i − 1 and i.
        let (a, b) = (
            vertical_n[i - 1].unwrap_or(0.0),
            vertical_n[i].unwrap_or(0.0),
        );
        let s = if a != b {
            (LOADED_N - a) / (b - a)
        } else {
            0.0
        };
        times_s[i - 1] + s.clamp(0.0, 1.0) * (times_s[i] - times_s[i - 1])
    };
    let take_off = cross(start);
    let landing = cross(end);
    // Impulse from the first frame to take-off; the last part to the crossing is linear.
    let mut impulse = 0.0;
    for i in 1..start {
        let (a, b) = (vertical_n[i - 1]?, vertical_n[i]?);
        impulse += 0.5 * (a + b - 2.0 * mass * G_M_S2) * dt;
    }
    let last = vertical_n[start - 1]?;
    let h = take_off - times_s[start - 1];
    impulse += 0.5 * (last + LOADED_N - 2.0 * mass * G_M_S2) * h;
    let v = impulse / mass;
    let flight = landing - take_off;
    let hv = v * v / (2.0 * G_M_S2);
    let ht = G_M_S2 * flight * flight / 8.0;
    Some(JumpFigures {
        take_off_s: take_off,
        landing_s: landing,
        flight_s: flight,
        weighed_mass_kg: mass,
        take_off_velocity_m_s: v,
        height_from_velocity_m: hv,
        height_from_flight_time_m: ht,
        height_difference_m: ht - hv,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A body at rest, a constant push of 1.5 g for 0.3 s, then flight: v = 0.5 g · 0.3 s.
    #[test]
    fn constant_push_gives_its_velocity_and_symmetric_flight_heights_agree() {
        let rate = 1000.0;
        let m = 70.0;
        let v0 = 0.5 * G_M_S2 * 0.3;
        let flight = 2.0 * v0 / G_M_S2;
        let times: Vec<f64> = (0..3000).map(|i| i as f64 / rate).collect();
        let f: Vec<Option<f64>> = times
            .iter()
            .map(|&t| {
                Some(if t < 1.0 {
                    m * G_M_S2
                } else if t < 1.3 {
                    1.5 * m * G_M_S2
                } else if t < 1.3 + flight {
                    0.0
                } else {
                    m * G_M_S2
                })
            })
            .collect();
        let j = jump_figures(&f, &times, rate).unwrap();
        assert!((j.take_off_velocity_m_s - v0).abs() < 0.02 * v0, "{j:?}");
        assert!((j.flight_s - flight).abs() < 0.003, "{j:?}");
        assert!((j.weighed_mass_kg - m).abs() < 1e-9);
    }
}
