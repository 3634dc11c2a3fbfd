//! Floors and marker sets for synthetic trials: a floor tilted about the lab's y axis, a smooth
//! bump across the walkway, and the reduced foot marker sets of the landmark vocabulary.
//!
//! Inputs: a generated [`SynthTrial`] (metres, +z up, floor at z = 0). Outputs: the same trial
//! with every marker, true point and true CoM moved (tilt, bump) or with foot markers removed.
//! A tilt turns the whole recording, so the walk is the same walk on an inclined floor seen in
//! a lab whose vertical is not the floor's normal (the case of a tilted lab vertical). A bump
//! raises each point by the floor height under it, `h(x)` a raised cosine of the given height
//! and half width: over a foot length (0.25 m) the body is distorted by at most
//! `height * pi / 2 * 0.25 / half_width` (under 1 cm for 50 mm over 1 m), which leaves contact
//! and the BoS to the floor's shape.

use super::SynthTrial;

/// The foot marker sets a trial may carry (all: heel, toe, 1st/2nd/5th metatarsal heads,
/// lateral malleolus).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FootMarkerSet {
    /// Heel and toe (with the lateral malleolus of the leg).
    HeelToe,
    /// Heel and metatarsal heads, no toe marker.
    HeelMetatarsals,
    /// Heel, lateral malleolus and toe.
    HeelMalleolusToe,
}

impl FootMarkerSet {
    /// Foot stems removed from the full set.
    fn removed(self) -> &'static [&'static str] {
        match self {
            FootMarkerSet::HeelToe => &["mt1", "mt2", "mt5"],
            FootMarkerSet::HeelMetatarsals => &["toe"],
            FootMarkerSet::HeelMalleolusToe => &["mt1", "mt2", "mt5"],
        }
    }
}

fn each_point(trial: &mut SynthTrial, f: impl Fn([f64; 3]) -> [f64; 3]) {
    for track in &mut trial.positions {
        for p in track.iter_mut().flatten() {
            *p = f(*p);
        }
    }
    for c in &mut trial.truth.com_m {
        *c = f(*c);
    }
    for (_, track) in &mut trial.truth.points_m {
        for p in track.iter_mut() {
            *p = f(*p);
        }
    }
}

/// Tilts the floor by `deg` about the y axis: the floor rises along +x (module doc).
pub fn tilt(trial: &mut SynthTrial, deg: f64) {
    let (s, c) = deg.to_radians().sin_cos();
    each_point(trial, |p| [c * p[0] - s * p[2], p[1], s * p[0] + c * p[2]]);
}

/// Floor height of [`bump`] at `x`.
pub fn bump_height_m(x: f64, height_m: f64, centre_x_m: f64, half_width_m: f64) -> f64 {
    let u = (x - centre_x_m) / half_width_m;
    if u.abs() >= 1.0 {
        0.0
    } else {
        height_m * 0.5 * (1.0 + (std::f64::consts::PI * u).cos())
    }
}

/// Raises every point by a raised-cosine bump of the floor across the walkway (module doc).
pub fn bump(trial: &mut SynthTrial, height_m: f64, centre_x_m: f64, half_width_m: f64) {
    each_point(trial, |p| {
        [
            p[0],
            p[1],
            p[2] + bump_height_m(p[0], height_m, centre_x_m, half_width_m),
        ]
    });
}

/// Removes the foot markers that `set` does not carry.
pub fn keep_foot_markers(trial: &mut SynthTrial, set: FootMarkerSet) {
    let drop: Vec<String> = set
        .removed()
        .iter()
        .flat_map(|s| [format!("l_{s}"), format!("r_{s}")])
        .collect();
    let keep: Vec<bool> = trial.labels.iter().map(|l| !drop.contains(l)).collect();
    let mut k = keep.iter();
    trial.labels.retain(|_| *k.next().unwrap_or(&true));
    let mut k = keep.iter();
    trial.positions.retain(|_| *k.next().unwrap_or(&true));
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::synth::{generate, Scenario, SynthOptions};

    #[test]
    fn a_tilt_raises_the_floor_along_x() {
        let mut t = generate(
            Scenario::Stand,
            &SynthOptions::for_scenario(Scenario::Stand),
        );
        let before = t.truth.com_m[0];
        tilt(&mut t, 3.0);
        let after = t.truth.com_m[0];
        let s = 3f64.to_radians().sin();
        assert!((after[2] - (before[0] * s + before[2] * 3f64.to_radians().cos())).abs() < 1e-12);
        assert!((bump_height_m(2.0, 0.05, 2.0, 1.0) - 0.05).abs() < 1e-12);
        assert_eq!(bump_height_m(3.0, 0.05, 2.0, 1.0), 0.0);
    }
}
