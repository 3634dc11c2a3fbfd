//! The real standing recording of ../shared/realdata/standing-static/ (dos Santos, Fukuchi,
//! Fukuchi & Duarte 2017, PeerJ 5:e3626, subject 13, CC BY 4.0), read in place.

use gravline::config::{Config, RawConfig, Subject};
use gravline::pipeline::{process_file, OutputOptions, Setup};

mod common;
use common::{realdata_dir, STANDING_CONFIG};

#[test]
fn standing_com_height_and_projection_are_those_of_a_person() {
    let dir = realdata_dir();
    let dir = dir.join("standing-static");
    let config = Config::from_raw(
        &RawConfig::from_toml(STANDING_CONFIG, "test").unwrap(),
        "test",
    )
    .unwrap();
    let subject = Subject::from_path(&dir.join("subject.toml")).unwrap();
    let setup = Setup::new(config, subject).unwrap();
    let out = tempfile::tempdir().unwrap();
    let summary = process_file(
        &dir.join("trial.csv"),
        &setup,
        out.path(),
        &OutputOptions::default(),
    )
    .unwrap();
    assert_eq!(summary.valid_fraction, 1.0);
    // CoM height in quiet standing: 0.5527 of stature (docs/reference/methods.md 6, a published
    // chapter in Whiplash Injuries, 2nd ed., Springer 2014); textbooks give 55-57 %. The check
    // band is 0.53-0.59.
    let share = summary.com.mean_height_of_stature.unwrap();
    assert!(
        (0.53..=0.59).contains(&share),
        "CoM height {share} of stature"
    );

    // Its floor projection lies between the heels and the metatarsal heads (+x anterior).
    let trial =
        gravline::trial::read_trial(&dir.join("trial.csv"), &setup.config.read_options()).unwrap();
    let mean_x = |label: &str| {
        let i = trial.markers.index_of(label).unwrap();
        let xs: Vec<f64> = trial.markers.points(i).flatten().map(|p| p[0]).collect();
        xs.iter().sum::<f64>() / xs.len() as f64
    };
    let heels = (mean_x("l_heel") + mean_x("r_heel")) / 2.0;
    let heads = ["l_mt1", "l_mt2", "l_mt5", "r_mt1", "r_mt2", "r_mt5"]
        .iter()
        .map(|m| mean_x(m))
        .sum::<f64>()
        / 6.0;
    let com_x = (summary.com.min_m.unwrap()[0] + summary.com.max_m.unwrap()[0]) / 2.0;
    assert!(
        heels < com_x && com_x < heads,
        "CoM x {com_x} not between heels {heels} and heads {heads}"
    );
    // And inside the polygon of the feet, with a margin of centimetres.
    let margin = summary.support.min_bos_margin_m.unwrap();
    assert!(margin > 0.02, "min BoS margin {margin}");
    eprintln!("standing: CoM {share:.4} of stature, x {com_x:.4} between {heels:.4} and {heads:.4}, min margin {margin:.4} m");
}
