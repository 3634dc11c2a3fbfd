//! The figures of the real standing recording of ../shared/realdata/standing-static/ (dos Santos,
//! Fukuchi, Fukuchi & Duarte 2017, PeerJ 5:e3626, subject 13, CC BY 4.0), read in place: the
//! file's axes are +y up, +x anterior, +z right (its README), so the top view is z across and x
//! up; the quiet-standing sway is small, so the figure magnifies it in an inset.

use gravline::config::{Config, RawConfig, Subject};
use gravline::pipeline::{process_file, OutputOptions, Setup};
use gravline::report::plots::{PlotFormat, FIGURE_SIZE_PX};

mod common;
use common::{realdata_dir, STANDING_CONFIG};

#[test]
fn real_standing_figures_name_the_lab_axes_and_magnify_the_sway() {
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
    let options = OutputOptions {
        plots: vec![PlotFormat::Png, PlotFormat::Svg],
        ..Default::default()
    };
    process_file(&dir.join("trial.csv"), &setup, out.path(), &options).unwrap();
    let svg = std::fs::read_to_string(out.path().join("path.svg")).unwrap();
    let texts: Vec<&str> = svg
        .split("<text")
        .skip(1)
        .filter_map(|t| {
            let body = &t[t.find('>')? + 1..];
            Some(body[..body.find("</text>")?].trim())
        })
        .collect();
    assert!(
        texts.contains(&"z (m)") && texts.contains(&"x (m)"),
        "{texts:?}"
    );
    assert!(texts.iter().any(|t| t.contains("magnified")), "{texts:?}");
    let img = image::open(out.path().join("path.png")).unwrap().to_rgb8();
    assert_eq!((img.width(), img.height()), FIGURE_SIZE_PX);
    // The inset sits in the legend column (x >= 920) below the legend entries (y > 400): the
    // CoM line's colour (24, 72, 150) is drawn there.
    let inset = (920..1200)
        .flat_map(|x| (400..900).map(move |y| (x, y)))
        .filter(|&(x, y)| {
            let p = img.get_pixel(x, y).0;
            p.iter()
                .zip([24u8, 72, 150])
                .all(|(&a, b)| (i32::from(a) - i32::from(b)).abs() <= 30)
        })
        .count();
    assert!(inset > 100, "only {inset} CoM-coloured pixels in the inset");
    for name in ["series.png", "series.svg", "summary.json", "frames.csv"] {
        assert!(out.path().join(name).exists(), "{name}");
    }
}
