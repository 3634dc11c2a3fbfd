//! The synthetic quiet stance against facts of standing (`docs/reference/methods.md` 6): the CoM
//! projects a few centimetres in front of the ankles, inside the feet, and sways by millimetres.

use gravline::synth::{generate, Scenario, SynthOptions, SynthTrial};

fn clean(seed: u64) -> SynthTrial {
    let mut o = SynthOptions::for_scenario(Scenario::Stand);
    o.noise_m = 0.0;
    o.gaps = false;
    o.seed = seed;
    generate(Scenario::Stand, &o)
}

fn marker(t: &SynthTrial, label: &str) -> Vec<[f64; 3]> {
    t.positions[t.index_of(label).unwrap()]
        .iter()
        .map(|p| p.unwrap())
        .collect()
}

fn range(v: impl Iterator<Item = f64> + Clone) -> f64 {
    v.clone().fold(f64::NEG_INFINITY, f64::max) - v.fold(f64::INFINITY, f64::min)
}

/// The CoM sways by a few millimetres (between 1 and 15 mm fore-aft, 0.5 and 10 mm sideways:
/// common practice, no source), more fore-aft than sideways, while the feet do not move; another
/// seed gives another sway.
#[test]
fn com_sways_by_millimetres_with_still_feet() {
    let t = clean(5);
    let com = &t.truth.com_m;
    let ap = range(com.iter().map(|c| c[0]));
    let ml = range(com.iter().map(|c| c[1]));
    assert!((0.001..0.015).contains(&ap), "fore-aft sway {ap}");
    assert!((0.0005..0.010).contains(&ml), "sideways sway {ml}");
    assert!(ap > ml);
    for label in ["l_heel", "r_heel", "l_toe", "r_toe", "l_mt1", "r_mt5"] {
        let m = marker(&t, label);
        assert!(range(m.iter().map(|p| p[0])) < 1e-12 && range(m.iter().map(|p| p[2])) < 1e-12);
    }
    assert_ne!(clean(6).truth.com_m, t.truth.com_m);
}

/// The CoM's floor projection lies a few centimetres in front of the ankle joints (Woodhull et
/// al. 1985 via `docs/reference/methods.md` 6: hip 6.2 cm and knee 3.8 cm in front of the ankle; the
/// CoM a few cm in front, inside the base of support): between 1 and 10 cm in front of the lateral
/// malleoli and behind the metatarsal heads.
#[test]
fn com_projects_in_front_of_the_ankles() {
    let t = clean(1);
    let ankle = (marker(&t, "l_ankle_lat")[0][0] + marker(&t, "r_ankle_lat")[0][0]) / 2.0;
    let ball = (marker(&t, "l_mt5")[0][0] + marker(&t, "r_mt5")[0][0]) / 2.0;
    for c in &t.truth.com_m {
        let ahead = c[0] - ankle;
        assert!(
            (0.01..0.10).contains(&ahead),
            "CoM {ahead} m in front of the ankles"
        );
        assert!(c[0] < ball);
        assert!(c[1].abs() < 0.01);
    }
}
