//! The synthetic walk against facts of walking: a stance foot is planted, the pelvis progresses
//! at the walking speed, heel strike precedes toe off, the feet alternate, and a foot in contact
//! has a marker on the floor.

use approx::assert_abs_diff_eq;
use gravline::synth::{generate, Scenario, SynthOptions, SynthTrial};

fn clean(speed_m_s: f64) -> SynthTrial {
    let mut o = SynthOptions::for_scenario(Scenario::Walk);
    o.noise_m = 0.0;
    o.gaps = false;
    o.walk_speed_m_s = speed_m_s;
    generate(Scenario::Walk, &o)
}

fn track(t: &SynthTrial, label: &str) -> Vec<[f64; 3]> {
    let i = t
        .index_of(label)
        .unwrap_or_else(|| panic!("no marker {label}"));
    t.positions[i]
        .iter()
        .map(|p| p.expect("no gaps in a clean trial"))
        .collect()
}

fn speed(p: &[[f64; 3]], i: usize, dt: f64) -> f64 {
    let (a, b) = (p[i - 1], p[i + 1]);
    ((b[0] - a[0]).powi(2) + (b[1] - a[1]).powi(2) + (b[2] - a[2]).powi(2)).sqrt() / (2.0 * dt)
}

/// Contacts that lie wholly inside the trial.
fn inner_contacts(t: &SynthTrial, side: usize) -> Vec<(f64, f64)> {
    let last = *t.times_s.last().unwrap();
    t.truth.contacts[side]
        .iter()
        .copied()
        .filter(|&(on, off)| on >= 0.0 && off <= last)
        .collect()
}

/// A planted foot does not move: at mid-stance the heel and toe markers of the stance foot are
/// slower than 0.05 m/s (the speed thresholds of kinematic contact detection are 0.5 m/s and
/// more: Ghoussayni 2004 via `docs/reference/methods.md` 3, so 0.05 m/s is "still").
#[test]
fn stance_foot_is_still_at_mid_stance() {
    let t = clean(1.30);
    let dt = t.times_s[1] - t.times_s[0];
    let mut checked = 0;
    for (side, prefix) in [(0, "l_"), (1, "r_")] {
        let heel = track(&t, &format!("{prefix}heel"));
        let toe = track(&t, &format!("{prefix}toe"));
        for (on, off) in inner_contacts(&t, side) {
            let i = ((on + off) / 2.0 / dt).round() as usize;
            assert!(
                speed(&heel, i, dt) < 0.05,
                "{prefix}heel at {}",
                t.times_s[i]
            );
            assert!(speed(&toe, i, dt) < 0.05, "{prefix}toe at {}", t.times_s[i]);
            checked += 1;
        }
    }
    assert!(checked >= 8, "only {checked} whole contacts");
}

/// Over whole strides the pelvis moves forward at the walking speed (`docs/reference/methods.md` 6:
/// mean forward CoM velocity equals walking speed); checked within 1 % on the mean of the four
/// pelvis markers, with the default noise and gaps, at two speeds.
#[test]
fn pelvis_progresses_at_the_set_speed() {
    for speed_m_s in [1.30, 1.05] {
        let mut o = SynthOptions::for_scenario(Scenario::Walk);
        o.walk_speed_m_s = speed_m_s;
        let t = generate(Scenario::Walk, &o);
        let pelvis_x = |frame: usize| {
            let labels = ["l_asis", "r_asis", "l_psis", "r_psis"];
            labels
                .iter()
                .map(|l| t.positions[t.index_of(l).unwrap()][frame].unwrap()[0])
                .sum::<f64>()
                / 4.0
        };
        let n = t.times_s.len();
        let mean = (pelvis_x(n - 1) - pelvis_x(0)) / (t.times_s[n - 1] - t.times_s[0]);
        assert_abs_diff_eq!(mean, speed_m_s, epsilon = 0.01 * speed_m_s);
        assert_eq!(t.truth.walk_speed_m_s, Some(speed_m_s));
    }
}

/// Each contact starts with heel strike and ends with toe off; contacts of one foot are a stride
/// apart, the two feet half a stride apart, and single stance is shorter than stance (stance of
/// about 60 % of the cycle: common practice, no source).
#[test]
fn contacts_alternate_between_the_feet() {
    let t = clean(1.30);
    let left = &t.truth.contacts[0];
    let right = &t.truth.contacts[1];
    assert!(left.len() >= 5 && right.len() >= 5);
    let stride = left[1].0 - left[0].0;
    // 110 steps/min: a stride of 120/110 s.
    assert_abs_diff_eq!(stride, 120.0 / 110.0, epsilon = 1e-9);
    for list in [left, right] {
        for w in list.windows(2) {
            assert_abs_diff_eq!(w[1].0 - w[0].0, stride, epsilon = 1e-9);
        }
        for (on, off) in list {
            let stance = (off - on) / stride;
            assert!((0.55..0.65).contains(&stance), "stance {stance}");
        }
    }
    let offset = (right[1].0 - left[0].0).rem_euclid(stride);
    assert_abs_diff_eq!(offset, stride / 2.0, epsilon = 1e-9);
}

/// During contact a marker of the foot lies on the floor at its flat-foot height (within 2 mm in
/// the 15 ms of touchdown, while the heel pad compresses; then, heel strike to foot flat: the heel; foot flat: both; heel rise: the toe); 40 ms or more outside contact
/// both heel and toe are off the floor by more than 2 mm; no foot marker ever goes below its
/// flat-foot height (0.1 mm).
#[test]
fn a_foot_in_contact_touches_the_floor() {
    let t = clean(1.30);
    let stand = {
        let mut o = SynthOptions::for_scenario(Scenario::Stand);
        o.noise_m = 0.0;
        o.gaps = false;
        generate(Scenario::Stand, &o)
    };
    for (side, prefix) in [(0, "l_"), (1, "r_")] {
        let floor = |stem: &str| track(&stand, &format!("{prefix}{stem}"))[0][2];
        let heel_floor = floor("heel");
        let toe_floor = floor("toe");
        let heel = track(&t, &format!("{prefix}heel"));
        let toe = track(&t, &format!("{prefix}toe"));
        for stem in ["heel", "toe", "mt1", "mt2", "mt5"] {
            let f = floor(stem);
            let low = track(&t, &format!("{prefix}{stem}"))
                .iter()
                .map(|p| p[2])
                .fold(f64::INFINITY, f64::min);
            assert!(low > f - 1e-4, "{prefix}{stem} at {low}, floor {f}");
        }
        let contacts = &t.truth.contacts[side];
        for (i, &time) in t.times_s.iter().enumerate() {
            let touching = (heel[i][2] - heel_floor).min(toe[i][2] - toe_floor);
            let inside = contacts.iter().any(|&(on, off)| time >= on && time <= off);
            let far = contacts
                .iter()
                .all(|&(on, off)| time < on - 0.04 || time > off + 0.04);
            // In the first 15 ms of contact the heel pad is still compressing: the heel lands
            // 0.26 m/s x 15 ms / 2 = 1.95 mm above its loaded height.
            let landing = contacts
                .iter()
                .any(|&(on, _)| time >= on && time < on + 0.015);
            if inside && landing {
                assert!(touching < 0.002, "{prefix} foot off the floor at {time}");
            } else if inside {
                assert!(touching < 1e-6, "{prefix} foot off the floor at {time}");
            } else if far {
                assert!(touching > 0.002, "{prefix} foot on the floor at {time}");
            }
        }
    }
}

/// The pelvis oscillates by a few centimetres: vertically twice and laterally once per stride
/// (`docs/reference/methods.md` 6: vertical 3-5 cm and ML 3-6 cm CoM excursion at 1.2-1.4 m/s, from
/// memory there; checked on the true CoM with wider bands of 2-6 cm).
#[test]
fn com_oscillates_by_a_few_centimetres() {
    let t = clean(1.30);
    let range = |k: usize| {
        let v: Vec<f64> = t.truth.com_m.iter().map(|c| c[k]).collect();
        v.iter().cloned().fold(f64::NEG_INFINITY, f64::max)
            - v.iter().cloned().fold(f64::INFINITY, f64::min)
    };
    assert!((0.02..0.06).contains(&range(2)), "vertical {}", range(2));
    assert!((0.02..0.06).contains(&range(1)), "lateral {}", range(1));
}

/// Touchdown as in recordings: the heel arrives at about 0.3 m/s and is still (below 0.05 m/s)
/// within two frames at 100 Hz. Checked at 1000 Hz on the exact heel marker: its speed just
/// before heel strike is 0.25-0.35 m/s, and from 20 ms after it is below 0.05 m/s.
#[test]
fn the_heel_lands_moving_and_stops_within_two_frames() {
    let mut o = SynthOptions::for_scenario(Scenario::Walk);
    (o.noise_m, o.gaps, o.rate_hz) = (0.0, false, 1000.0);
    let t = generate(Scenario::Walk, &o);
    let dt = 1.0 / o.rate_hz;
    for (side, prefix) in [(0, "l_"), (1, "r_")] {
        let heel = track(&t, &format!("{prefix}heel"));
        for (on, _) in inner_contacts(&t, side) {
            let at = |s: f64| ((on + s) * o.rate_hz).round() as usize;
            let arriving = speed(&heel, at(-0.001), dt);
            assert!(
                (0.25..=0.35).contains(&arriving),
                "{prefix}heel arrives at {arriving} m/s at {on}"
            );
            let settled = speed(&heel, at(0.020), dt);
            assert!(
                settled < 0.05,
                "{prefix}heel at {settled} m/s 20 ms after {on}"
            );
        }
    }
}
