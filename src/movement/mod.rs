//! Movement recognition and the figures each movement's users ask for first (after the support
//! stage): a walk's spatio-temporal figures, a jump's flight and height, the repetitions of a
//! squat or sit-to-stand, the sway of quiet standing.
//!
//! Input: a [`TrialResult`] (CoM, its velocity, foot contact, gait events, steps, loads; metres,
//! seconds, m/s) and the configured [`MovementChoice`] (`[trial] movement`). Output:
//! [`MovementFigures`], written into `summary.json` as `movement`, `movement_rule`, `gait`,
//! `jump`, `reps` and `sway`, and as the batch columns of the same names joined with `_`.
//!
//! Recognition ([`recognise`]), the first rule that holds, in this order (thresholds: common
//! practice, no source):
//! 1. `jump`: a flight, neither foot in contact (the support stage's contact) for at least
//!    [`MIN_FLIGHT_S`], in which the CoM rises at least [`MIN_RISE_M`] above its median height;
//! 2. `walk`: the mean horizontal CoM speed is at least [`WALK_SPEED_M_S`] (the support stage's
//!    threshold between static and moving trials) and heel strikes were found;
//! 3. `squat`: at least one repetition (a descent and an ascent of at least
//!    [`reps::MIN_DEPTH_M`]) of the bar when the trial has a load, else of the CoM;
//! 4. `stand`: otherwise.
//!
//! `[trial] movement = "walk" | "jump" | "squat" | "stand"` replaces the recognition; the rule
//! then reads "set in the configuration". Each movement's figures are computed for that
//! movement only; the others stay empty (`null`, `[]`).
//!
//! Per movement, with their methods and publications: [`gait`] (walking), [`jump`]
//! (countermovement and squat jumps), [`reps`] (squats, sit-to-stand), [`sway`] (quiet standing).

pub mod gait;
pub mod jump;
pub mod reps;
pub mod sway;

use crate::pipeline::TrialResult;
use serde::Serialize;

/// Shortest flight that makes a trial a jump, s.
pub const MIN_FLIGHT_S: f64 = 0.10;
/// Smallest rise of the CoM above its median height in that flight, m.
pub const MIN_RISE_M: f64 = 0.03;
/// Mean horizontal CoM speed from which a trial with heel strikes is a walk, m/s.
pub const WALK_SPEED_M_S: f64 = crate::support::stage::STATIC_SPEED_M_S;

/// What the body does in a trial.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Movement {
    Walk,
    Jump,
    Squat,
    #[default]
    Stand,
}

impl Movement {
    /// `walk`, `jump`, `squat` or `stand`.
    pub fn name(self) -> &'static str {
        match self {
            Movement::Walk => "walk",
            Movement::Jump => "jump",
            Movement::Squat => "squat",
            Movement::Stand => "stand",
        }
    }

    /// The movement of a name of [`Movement::name`].
    pub fn from_name(name: &str) -> Option<Movement> {
        [
            Movement::Walk,
            Movement::Jump,
            Movement::Squat,
            Movement::Stand,
        ]
        .into_iter()
        .find(|m| m.name() == name)
    }
}

/// `[trial] movement`: recognised from the data (`auto`, the default) or set.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum MovementChoice {
    #[default]
    Auto,
    Set(Movement),
}

impl MovementChoice {
    /// Parses `walk`, `jump`, `squat`, `stand` or `auto`.
    pub fn parse(text: &str) -> Option<MovementChoice> {
        match text.trim() {
            "auto" => Some(MovementChoice::Auto),
            other => Movement::from_name(other).map(MovementChoice::Set),
        }
    }

    pub fn is_auto(&self) -> bool {
        *self == MovementChoice::Auto
    }
}

/// The figures of a trial's movement (`summary.json`).
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct MovementFigures {
    pub movement: Movement,
    /// Why: the recognition rule that held, or "set in the configuration".
    pub movement_rule: String,
    pub gait: Option<gait::GaitFigures>,
    pub jump: Option<jump::JumpFigures>,
    pub reps: Vec<reps::RepFigures>,
    pub sway: Option<sway::SwayFigures>,
}

/// The movement of a trial and the rule that decided it (module doc).
pub fn recognise(r: &TrialResult, choice: MovementChoice) -> (Movement, String) {
    if let MovementChoice::Set(m) = choice {
        return (m, "set in the configuration ([trial] movement)".to_string());
    }
    if let Some(f) = jump::flight(r) {
        let rise = jump::rise_above_median_m(r, &f);
        if f.duration_s(r) >= MIN_FLIGHT_S && rise.is_some_and(|h| h >= MIN_RISE_M) {
            return (
                Movement::Jump,
                format!(
                    "recognised: neither foot in contact for {:.3} s (at least {MIN_FLIGHT_S} s) while the CoM rose {:.3} m (at least {MIN_RISE_M} m) above its median height",
                    f.duration_s(r),
                    rise.unwrap_or(0.0)
                ),
            );
        }
    }
    let speed = gait::mean_horizontal_speed_m_s(r);
    let heel_strikes: usize = r.support.events.iter().map(|e| e.heel_strikes.len()).sum();
    if speed.is_some_and(|v| v >= WALK_SPEED_M_S) && heel_strikes > 0 {
        return (
            Movement::Walk,
            format!(
                "recognised: mean horizontal CoM speed {:.2} m/s (at least {WALK_SPEED_M_S} m/s) with {heel_strikes} heel strikes",
                speed.unwrap_or(0.0)
            ),
        );
    }
    let (found, source) = reps::repetitions_of(r);
    if !found.is_empty() {
        return (
            Movement::Squat,
            format!(
                "recognised: {} repetitions of the {} (descent and ascent of at least {} m), no flight, mean horizontal CoM speed below {WALK_SPEED_M_S} m/s or no heel strikes",
                found.len(),
                source,
                reps::MIN_DEPTH_M
            ),
        );
    }
    (
        Movement::Stand,
        format!("recognised: no flight, no walking (mean horizontal CoM speed below {WALK_SPEED_M_S} m/s or no heel strikes), no repetition of at least {} m", reps::MIN_DEPTH_M),
    )
}

/// Recognises the movement (or takes the configured one) and computes its figures.
pub fn analyse(
    r: &TrialResult,
    choice: MovementChoice,
    foot: &crate::support::FootFrames,
) -> MovementFigures {
    let (movement, movement_rule) = recognise(r, choice);
    let mut out = MovementFigures {
        movement,
        movement_rule,
        ..Default::default()
    };
    match movement {
        Movement::Walk => out.gait = Some(gait::figures(r)),
        Movement::Jump => out.jump = jump::figures(r, foot),
        Movement::Squat => out.reps = reps::figures(r),
        Movement::Stand => out.sway = sway::figures(r),
    }
    out
}

impl MovementFigures {
    /// The movement's part of the one terminal line of a trial.
    pub fn line(&self) -> String {
        let n =
            |v: Option<f64>, digits: usize| v.map_or("-".to_string(), |v| format!("{v:.digits$}"));
        let head = self.movement.name();
        match self.movement {
            Movement::Walk => self.gait.as_ref().map_or(head.to_string(), |g| {
                format!(
                    "{head}: {} m/s, {} steps/min, stride {} s, double support {} %",
                    n(g.walking_speed_m_s, 2),
                    n(g.cadence_steps_per_min, 1),
                    n(g.stride_time_s, 3),
                    n(g.double_support_fraction.map(|f| 100.0 * f), 1),
                )
            }),
            Movement::Jump => self.jump.as_ref().map_or(format!("{head}: no flight found"), |j| {
                format!(
                    "{head}: flight {} s, take-off {} m/s, height {} m (take-off velocity) / {} m (flight time)",
                    n(Some(j.flight_time_s), 3),
                    n(j.takeoff_velocity_m_s, 2),
                    n(j.height_from_takeoff_velocity_m, 3),
                    n(Some(j.height_from_flight_time_m), 3),
                )
            }),
            Movement::Squat => {
                let mean = |f: &dyn Fn(&reps::RepFigures) -> f64| {
                    (!self.reps.is_empty())
                        .then(|| self.reps.iter().map(f).sum::<f64>() / self.reps.len() as f64)
                };
                format!(
                    "{head}: {} reps, mean depth {} m, mean duration {} s, mean peak ascent {} m/s",
                    self.reps.len(),
                    n(mean(&|r| r.depth_m), 3),
                    n(mean(&|r| r.duration_s), 2),
                    n(mean(&|r| r.peak_ascent_speed_m_s), 2),
                )
            }
            Movement::Stand => self.sway.as_ref().map_or(head.to_string(), |s| {
                format!(
                    "{head}: sway path {} m, RMS AP {} mm / ML {} mm, 95 % ellipse {} cm^2",
                    n(Some(s.path_length_m), 3),
                    n(Some(1e3 * s.rms_ap_m), 1),
                    n(Some(1e3 * s.rms_ml_m), 1),
                    n(Some(1e4 * s.ellipse_area_95_m2), 2),
                )
            }),
        }
    }
}

/// A warning when the trial has markers that look like a barbell's (labels starting with `bar`)
/// but no load is configured: their mass is then left out of the CoM, and repetitions come from
/// the body's CoM.
pub fn unused_load_warning(labels: &[String], has_loads: bool) -> Option<crate::warning::Warning> {
    if has_loads {
        return None;
    }
    let bars: Vec<&str> = labels
        .iter()
        .map(String::as_str)
        .filter(|l| l.to_ascii_lowercase().starts_with("bar"))
        .collect();
    (!bars.is_empty()).then(|| crate::warning::Warning::Approximation {
        what: format!(
            "markers {} look like a load, but no [[load]] is configured: the load's mass is not in the CoM and repetitions come from the body's CoM; add a [[load]] with its mass_kg and markers",
            bars.join(", ")
        ),
    })
}

/// Time of frame `f` (from the trial's times, else `f / rate`).
pub(crate) fn time_s(r: &TrialResult, f: usize) -> f64 {
    r.times_s.get(f).copied().unwrap_or(f as f64 / r.rate_hz)
}

/// Mean and sample standard deviation (n - 1).
pub(crate) fn mean_sd(values: &[f64]) -> (Option<f64>, Option<f64>) {
    crate::batch::table::mean_sd(values)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bar_markers_without_a_load_are_named() {
        let labels = vec!["c7".to_string(), "bar_left".into(), "Bar_right".into()];
        let w = unused_load_warning(&labels, false).unwrap().to_string();
        assert!(
            w.contains("bar_left, Bar_right") && w.contains("[[load]]"),
            "{w}"
        );
        assert!(unused_load_warning(&labels, true).is_none());
        assert!(unused_load_warning(&labels[..1], false).is_none());
    }

    #[test]
    fn choices_parse_and_names_round_trip() {
        for m in ["walk", "jump", "squat", "stand"] {
            assert_eq!(
                MovementChoice::parse(m),
                Some(MovementChoice::Set(Movement::from_name(m).unwrap()))
            );
            assert_eq!(Movement::from_name(m).unwrap().name(), m);
        }
        assert_eq!(MovementChoice::parse(" auto "), Some(MovementChoice::Auto));
        assert_eq!(MovementChoice::parse("run"), None);
    }
}
