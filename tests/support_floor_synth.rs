//! Contact, double support and the BoS on synthetic walks (src/synth) over floors that are not
//! the lab's level floor and with each foot marker set, against the model's own truth: the
//! times each foot touched and left the floor.
//!
//! Checks per case: every contact wholly inside the trial starts within [`HEEL_STRIKE_FRAMES`]
//! of the model's heel strike and ends within [`TOE_OFF_FRAMES`] of its toe off; double support is found; the CoM's floor projection lies
//! inside the BoS in the double-support frames (fact of walking: the CoM passes between the feet
//! while both are down; common practice, no source).

use gravline::anthropometry::SegmentTable;
use gravline::config::{Config, RawConfig, Subject};
use gravline::pipeline::{run_trial, RunOptions, TrialResult};
use gravline::support::transitions;
use gravline::synth::floor::{bump, keep_foot_markers, tilt, FootMarkerSet};
use gravline::synth::{generate, Scenario, SynthOptions, SynthTrial};

fn walk() -> (SynthTrial, SynthOptions) {
    let o = SynthOptions::for_scenario(Scenario::Walk);
    (generate(Scenario::Walk, &o), o)
}

fn run(s: &SynthTrial, o: &SynthOptions, toml: &str) -> TrialResult {
    let trial = s.to_trial(o.rate_hz);
    let config = Config::from_raw(&RawConfig::from_toml(toml, "t").unwrap(), "t").unwrap();
    let subject = Subject::new(o.mass_kg, o.height_m, o.sex);
    let table = SegmentTable::load(&config.table, subject.sex).unwrap();
    run_trial(
        trial.clone(),
        &config,
        &subject,
        &table,
        RunOptions::default(),
        1,
    )
    .unwrap()
}

/// Tolerance of the contact start, frames at 100 Hz. The model's heel comes down at 6 m/s^2
/// (src/synth/walk.rs): 20-30 ms before its heel strike the heel marker is within 5 mm of its
/// stance height and slower than 0.5 m/s, and the 6 Hz low-pass spreads the approach further,
/// so contact starts up to 3 frames early.
const HEEL_STRIKE_FRAMES: i64 = 3;
/// Tolerance of the contact end, frames at 100 Hz. The model's toe leaves the floor at
/// 6 m/s^2 (src/synth/walk.rs): 20 ms after its toe-off the toe marker is still under 3 mm above
/// the floor and slower than 0.5 m/s, so speed and height thresholds end contact 3 frames late,
/// and 4 when only the metatarsal heads are marked.
const TOE_OFF_FRAMES: i64 = 4;

const DECLARED: &str = "[input]\nunits = \"m\"\nup_axis = \"z\"\n";

fn check(s: &SynthTrial, o: &SynthOptions, r: &TrialResult, case: &str) {
    let n = r.n_frames();
    let frame = |t: f64| (t * o.rate_hz).round() as i64;
    let last = *s.times_s.last().unwrap();
    let mut checked = 0;
    for side in 0..2 {
        let runs = transitions(&r.support.contact[side]);
        for &(on, off) in &s.truth.contacts[side] {
            if on < 0.05 || off > last - 0.05 {
                continue;
            }
            let (on_f, off_f) = (frame(on), frame(off));
            let run = runs
                .iter()
                .find(|(a, b)| (*a as i64) < off_f && on_f < *b as i64)
                .unwrap_or_else(|| {
                    panic!("{case}: contact {on:.3}-{off:.3} s of foot {side} not found")
                });
            assert!(
                (run.0 as i64 - on_f).abs() <= HEEL_STRIKE_FRAMES
                    && (run.1 as i64 - off_f).abs() <= TOE_OFF_FRAMES,
                "{case}: foot {side} contact frames {run:?}, model ({on_f}, {off_f})"
            );
            checked += 1;
        }
    }
    assert!(checked >= 4, "{case}: {checked} contacts checked");
    let double: Vec<usize> = (0..n)
        .filter(|&f| r.support.contact[0][f] && r.support.contact[1][f])
        .collect();
    assert!(!double.is_empty(), "{case}: no double support");
    let inside = double
        .iter()
        .filter(|&&f| r.support.bos_margin_m[f].is_some_and(|m| m > 0.0))
        .count();
    assert_eq!(
        inside,
        double.len(),
        "{case}: CoM outside the BoS in double support"
    );
}

#[test]
fn a_floor_tilted_by_1_deg_is_followed() {
    let (mut s, o) = walk();
    tilt(&mut s, 1.0);
    let r = run(&s, &o, DECLARED);
    assert!(
        (r.support.floor.tilt_deg - 1.0).abs() < 0.1,
        "{:?}",
        r.support.floor
    );
    check(&s, &o, &r, "tilt 1 deg");
}

#[test]
fn a_floor_tilted_by_3_deg_is_followed() {
    let (mut s, o) = walk();
    tilt(&mut s, 3.0);
    let r = run(&s, &o, DECLARED);
    assert!(
        (r.support.floor.tilt_deg - 3.0).abs() < 0.1,
        "{:?}",
        r.support.floor
    );
    assert!(r
        .warnings
        .iter()
        .any(|w| w.to_string().contains("not level")));
    check(&s, &o, &r, "tilt 3 deg");
}

#[test]
fn a_50_mm_bump_across_the_walkway_is_followed() {
    let (mut s, o) = walk();
    let xs: Vec<f64> = s.truth.com_m.iter().map(|c| c[0]).collect();
    let mid = (xs[0] + xs[xs.len() - 1]) / 2.0;
    bump(&mut s, 0.05, mid, 1.0);
    let r = run(&s, &o, DECLARED);
    assert!(r.support.floor.rise_mm > 30.0, "{:?}", r.support.floor);
    check(&s, &o, &r, "50 mm bump");
}

#[test]
fn heel_and_toe_markers_suffice() {
    let (mut s, o) = walk();
    keep_foot_markers(&mut s, FootMarkerSet::HeelToe);
    let r = run(&s, &o, DECLARED);
    check(&s, &o, &r, "heel + toe");
}

#[test]
fn heel_and_metatarsal_heads_suffice() {
    let (mut s, o) = walk();
    keep_foot_markers(&mut s, FootMarkerSet::HeelMetatarsals);
    let toml = format!(
        "{DECLARED}[virtual]\nl_toe = {{ along = [\"l_heel\", \"l_mt2\"], fraction = 1.3 }}\nr_toe = {{ along = [\"r_heel\", \"r_mt2\"], fraction = 1.3 }}\n"
    );
    let r = run(&s, &o, &toml);
    check(&s, &o, &r, "heel + metatarsal heads");
}

#[test]
fn heel_malleolus_and_toe_suffice() {
    let (mut s, o) = walk();
    keep_foot_markers(&mut s, FootMarkerSet::HeelMalleolusToe);
    let r = run(&s, &o, DECLARED);
    check(&s, &o, &r, "heel + malleolus + toe");
}
