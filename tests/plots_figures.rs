//! The figures of a trial, drawn from results of the real pipeline on small synthetic trials
//! (invented data): each file is written, the PNG decodes at the figure size, the CoM (and bar)
//! paths land on the pixels the figure's own transform gives, the top and side views have equal
//! scale, the SVG carries its axis titles and units as text, and a trial without a valid frame is
//! a clear error that writes no file.

use approx::assert_relative_eq;
use gravline::anthropometry::{SegmentTable, Sex};
use gravline::config::{Config, RawConfig, Subject};
use gravline::pipeline::{run_trial, RunOptions, TrialResult};
use gravline::report::plots::{
    lift_view, path_view, series_view, write_plots, PlaneView, PlotFormat, FIGURE_SIZE_PX,
};
use gravline::report::Summary;
use gravline::trial::{RawMarkers, Trial, UpAxis};
use std::f64::consts::TAU;
use std::path::Path;

const RATE_HZ: f64 = 100.0;

/// A marker position as a function of time (s -> m).
type Track = fn(f64) -> [f64; 3];

/// Standing marker positions, x forward, y left, z up, metres (invented, adult proportions).
fn standing_points() -> Vec<(String, [f64; 3])> {
    let mut p: Vec<(String, [f64; 3])> = vec![
        ("c7".into(), [-0.06, 0.0, 1.50]),
        ("jugular".into(), [0.06, 0.0, 1.44]),
    ];
    for (name, y, x, z) in [
        ("head_front", 0.07, 0.08, 1.64),
        ("head_back", 0.07, -0.09, 1.66),
    ] {
        p.push((format!("l_{name}"), [x, y, z]));
        p.push((format!("r_{name}"), [x, -y, z]));
    }
    for (side, y) in [("l", 1.0), ("r", -1.0)] {
        let points: [(&str, [f64; 3]); 17] = [
            ("asis", [0.10, 0.125, 1.00]),
            ("psis", [-0.06, 0.045, 1.03]),
            ("acromion", [0.0, 0.19, 1.45]),
            ("elbow_lat", [0.0, 0.24, 1.12]),
            ("elbow_med", [0.0, 0.17, 1.12]),
            ("wrist_rad", [0.02, 0.22, 0.86]),
            ("wrist_uln", [-0.02, 0.22, 0.86]),
            ("hand", [0.0, 0.22, 0.78]),
            ("knee_lat", [0.01, 0.14, 0.50]),
            ("knee_med", [0.01, 0.04, 0.50]),
            ("ankle_lat", [-0.01, 0.12, 0.07]),
            ("ankle_med", [-0.01, 0.05, 0.07]),
            ("heel", [-0.06, 0.09, 0.02]),
            ("toe", [0.20, 0.10, 0.02]),
            ("mt1", [0.14, 0.06, 0.02]),
            ("mt2", [0.15, 0.09, 0.02]),
            ("mt5", [0.12, 0.13, 0.02]),
        ];
        for (stem, q) in points {
            p.push((format!("{side}_{stem}"), [q[0], q[1] * y, q[2]]));
        }
    }
    p
}

fn is_foot(name: &str) -> bool {
    ["ankle", "heel", "toe", "mt1", "mt2", "mt5"]
        .iter()
        .any(|s| name.contains(s))
}

/// A body swaying over still feet for `seconds`: everything above the ankles moves by
/// (0.06 sin(2 pi 0.3 t), 0.05 sin(2 pi 0.45 t)) m, the knees by half of it, and in the last
/// second it leans forward 0.3 m, out of its base of support. `c7` is unseen from 1.5 s to
/// 1.8 s, longer than the gap filler bridges, so the CoM has a gap there.
fn sway_trial(seconds: f64, extra: &[(&str, Track)]) -> Trial {
    let n = (seconds * RATE_HZ) as usize;
    let times_s: Vec<f64> = (0..n).map(|i| i as f64 / RATE_HZ).collect();
    let shift = |t: f64| {
        let lean = (t - (seconds - 1.0)).max(0.0) * 0.3;
        [
            0.06 * (TAU * 0.3 * t).sin() + lean,
            0.05 * (TAU * 0.45 * t).sin(),
        ]
    };
    let mut labels = Vec::new();
    let mut tracks = Vec::new();
    for (name, p) in standing_points() {
        let k = if is_foot(&name) {
            0.0
        } else if name.contains("knee") {
            0.5
        } else {
            1.0
        };
        let track = times_s
            .iter()
            .map(|&t| {
                let s = shift(t);
                let seen = !(name == "c7" && (1.5..1.8).contains(&t));
                seen.then_some([p[0] + k * s[0], p[1] + k * s[1], p[2]])
            })
            .collect();
        labels.push(name);
        tracks.push(track);
    }
    for (name, f) in extra {
        labels.push(name.to_string());
        tracks.push(times_s.iter().map(|&t| Some(f(t))).collect());
    }
    Trial {
        name: "sway".into(),
        file: "sway.csv".into(),
        times_s,
        rate_hz: RATE_HZ,
        up_axis: UpAxis::Z,
        markers: RawMarkers::from_options(labels, tracks),
        warnings: Vec::new(),
    }
}

/// A crude walk (invented kinematics): the body moves forward at 1.18 m/s with a 2 cm bob and
/// sway; each foot stands still for 60 % of a 1.1 s stride and swings 1.3 m forward, 8 cm up,
/// in the rest, the right foot half a stride after the left. Knees sit midway between hip
/// height and ankle.
fn walk_trial(seconds: f64) -> Trial {
    const STRIDE_S: f64 = 1.1;
    const STRIDE_M: f64 = 1.3;
    let n = (seconds * RATE_HZ) as usize;
    let times_s: Vec<f64> = (0..n).map(|i| i as f64 / RATE_HZ).collect();
    let foot = |t: f64, offset: f64| -> [f64; 2] {
        let cycle = t / STRIDE_S + offset;
        let (k, phase) = (cycle.floor(), cycle - cycle.floor());
        let swing = ((phase - 0.6) / 0.4).clamp(0.0, 1.0);
        let along = 0.5 - 0.5 * (std::f64::consts::PI * swing).cos();
        let lift = if phase > 0.6 {
            0.08 * (std::f64::consts::PI * swing).sin()
        } else {
            0.0
        };
        [STRIDE_M * (k + along - offset) + 0.3, lift]
    };
    let mut labels = Vec::new();
    let mut tracks = Vec::new();
    for (name, p) in standing_points() {
        let left = name.starts_with("l_");
        let track = times_s
            .iter()
            .map(|&t| {
                let body_x = STRIDE_M * t / STRIDE_S;
                let bob = 0.02 * (TAU * 2.0 * t / STRIDE_S).cos();
                let sway = 0.02 * (TAU * t / STRIDE_S).cos();
                let f = foot(t, if left { 0.0 } else { 0.5 });
                if is_foot(&name) {
                    Some([p[0] + f[0], p[1], p[2] + f[1]])
                } else if name.contains("knee") {
                    Some([
                        p[0] + (body_x + f[0]) / 2.0,
                        p[1] + sway / 2.0,
                        p[2] + bob / 2.0 + f[1],
                    ])
                } else {
                    Some([p[0] + body_x, p[1] + sway, p[2] + bob])
                }
            })
            .collect();
        labels.push(name);
        tracks.push(track);
    }
    Trial {
        name: "walk".into(),
        file: "walk.csv".into(),
        times_s,
        rate_hz: RATE_HZ,
        up_axis: UpAxis::Z,
        markers: RawMarkers::from_options(labels, tracks),
        warnings: Vec::new(),
    }
}

/// Bar height of a press: from 0.9 m up to 1.9 m and back over 4 s, drifting 3 cm forward.
fn bar_at(t: f64, y: f64) -> [f64; 3] {
    let u = 0.5 - 0.5 * (TAU * t / 4.0).cos();
    [0.05 + 0.03 * u, y, 0.9 + 1.0 * u]
}

fn bar_left(t: f64) -> [f64; 3] {
    bar_at(t, 0.25)
}

fn bar_right(t: f64) -> [f64; 3] {
    bar_at(t, -0.25)
}

fn run(trial: &Trial, toml: &str) -> (TrialResult, Summary) {
    let config = Config::from_raw(&RawConfig::from_toml(toml, "test").unwrap(), "test").unwrap();
    let subject = Subject::new(70.0, 1.75, Sex::Female);
    let table = SegmentTable::load(&config.table, subject.sex).unwrap();
    let result = run_trial(
        trial.clone(),
        &config,
        &subject,
        &table,
        RunOptions::default(),
        2,
    )
    .unwrap();
    let summary = Summary::new(&result, &subject, None, "test".into());
    (result, summary)
}

fn files_in(dir: &Path) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    names
}

fn near(pixel: [u8; 3], rgb: [u8; 3], tolerance: i32) -> bool {
    pixel
        .iter()
        .zip(rgb)
        .all(|(&a, b)| (i32::from(a) - i32::from(b)).abs() <= tolerance)
}

/// Whether a pixel within `radius` of (x, y) has colour `rgb` (within `tolerance` per channel).
fn has_colour_near(
    img: &image::RgbImage,
    (x, y): (i32, i32),
    radius: i32,
    rgb: [u8; 3],
    tolerance: i32,
) -> bool {
    (-radius..=radius).any(|dx| {
        (-radius..=radius).any(|dy| {
            let (px, py) = (x + dx, y + dy);
            px >= 0
                && py >= 0
                && (px as u32) < img.width()
                && (py as u32) < img.height()
                && near(img.get_pixel(px as u32, py as u32).0, rgb, tolerance)
        })
    })
}

/// The text content of every `<text>` element of an SVG, trimmed.
fn svg_texts(svg: &str) -> Vec<String> {
    svg.split("<text")
        .skip(1)
        .filter_map(|t| {
            let body = &t[t.find('>')? + 1..];
            Some(body[..body.find("</text>")?].trim().to_string())
        })
        .collect()
}

fn inside(view: &PlaneView, (x, y): (i32, i32)) -> bool {
    (view.x_px.0..=view.x_px.1).contains(&x) && (view.y_px.0..=view.y_px.1).contains(&y)
}

/// The colours of the CoM line and the bar path (plots::style).
const COM_RGB: [u8; 3] = [24, 72, 150];
const BAR_RGB: [u8; 3] = [196, 28, 72];
/// The side colours (132, 62, 170) and (18, 140, 108) at 55 % over white.
const LEFT_RGB: [u8; 3] = [187, 149, 208];
const RIGHT_RGB: [u8; 3] = [125, 192, 174];
/// The band's (70, 150, 90) at 16 % over white.
const BAND_RGB: [u8; 3] = [225, 238, 229];

#[test]
fn a_standing_trial_gets_a_path_and_a_series_figure_in_both_formats() {
    let (result, summary) = run(&sway_trial(5.0, &[]), "");
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("sway");
    write_plots(&out, &result, &summary, PlotFormat::Png).unwrap();
    write_plots(&out, &result, &summary, PlotFormat::Svg).unwrap();
    // No lift figure without loads, and no temporary file left behind.
    assert_eq!(
        files_in(&out),
        ["path.png", "path.svg", "series.png", "series.svg"]
    );
    for name in ["path.png", "series.png"] {
        let img = image::open(out.join(name)).unwrap().to_rgb8();
        assert_eq!((img.width(), img.height()), FIGURE_SIZE_PX, "{name}");
    }
}

#[test]
fn the_com_path_is_drawn_where_the_top_view_maps_it() {
    com_path_on_its_pixels(&sway_trial(5.0, &[]), |size| size == FIGURE_SIZE_PX);
    // A walk is a wide view: a shorter figure with the legend below, same equal scale.
    com_path_on_its_pixels(&walk_trial(4.5), |(w, h)| w == FIGURE_SIZE_PX.0 && h < 700);
}

fn com_path_on_its_pixels(trial: &Trial, size_ok: fn((u32, u32)) -> bool) {
    let (result, summary) = run(trial, "");
    let dir = tempfile::tempdir().unwrap();
    write_plots(dir.path(), &result, &summary, PlotFormat::Png).unwrap();
    let img = image::open(dir.path().join("path.png")).unwrap().to_rgb8();
    let view = path_view(&result).unwrap();
    assert!(size_ok(view.size_px), "{:?}", view.size_px);
    assert_eq!((img.width(), img.height()), view.size_px);
    // One metre is the same number of pixels on both axes (1e-9 relative).
    let (px_x, px_y) = view.px_per_m();
    assert_relative_eq!(px_x, px_y, max_relative = 1e-9);
    let up = result.up_axis;
    let mapped: Vec<(i32, i32)> = result
        .com
        .iter()
        .flatten()
        .map(|c| view.pixel(up.horizontal(c)))
        .collect();
    assert!(mapped.len() > 400);
    // Every 25th valid frame: the CoM line's colour within 2 px of where the view maps it
    // (the start and end marks cover the two ends).
    for &p in mapped.iter().step_by(25).skip(1) {
        assert!(inside(&view, p), "{p:?} outside the plotting area");
        assert!(
            has_colour_near(&img, p, 2, COM_RGB, 40),
            "no CoM line at pixel {p:?}"
        );
    }
    // And the CoM colour appears nowhere in the plotting area far (> 6 px) from the path.
    for y in (view.y_px.0..=view.y_px.1).step_by(3) {
        for x in (view.x_px.0..=view.x_px.1).step_by(3) {
            if near(img.get_pixel(x as u32, y as u32).0, COM_RGB, 10) {
                let close = mapped
                    .iter()
                    .any(|m| (m.0 - x).abs() <= 6 && (m.1 - y).abs() <= 6);
                assert!(
                    close,
                    "CoM-coloured pixel at ({x}, {y}) away from the CoM path"
                );
            }
        }
    }
}

#[test]
fn the_series_figure_has_drawn_pixels_in_each_panel_and_a_break_at_the_gap() {
    let (result, summary) = run(&sway_trial(5.0, &[]), "");
    // The synthetic trial does have a CoM gap (1.5 s to 1.8 s) and frames outside the BoS.
    assert!(result.com.iter().any(Option::is_none));
    assert!(result
        .support
        .bos_margin_m
        .iter()
        .flatten()
        .any(|m| *m < 0.0));
    let dir = tempfile::tempdir().unwrap();
    write_plots(dir.path(), &result, &summary, PlotFormat::Png).unwrap();
    let img = image::open(dir.path().join("series.png"))
        .unwrap()
        .to_rgb8();
    // The three panels share the time axis; count CoM-coloured pixels in each third of the
    // chart column (the legend column starts at x = 920).
    let (w, h) = FIGURE_SIZE_PX;
    let title_h = 78;
    let third = (h - title_h) / 3;
    for k in 0..3 {
        let rows = title_h + k * third..title_h + (k + 1) * third;
        let count = rows
            .flat_map(|y| (0..w - 280).map(move |x| (x, y)))
            .filter(|&(x, y)| near(img.get_pixel(x, y).0, COM_RGB, 30))
            .count();
        assert!(count > 300, "panel {k}: only {count} CoM-coloured pixels");
    }
}

#[test]
fn gait_events_are_vertical_marks_at_their_times_in_every_panel() {
    let (result, summary) = run(&walk_trial(4.5), "");
    let events = &result.support.events;
    assert!(
        events.iter().all(|e| e.heel_strikes.len() >= 2),
        "{events:?}"
    );
    let dir = tempfile::tempdir().unwrap();
    write_plots(dir.path(), &result, &summary, PlotFormat::Png).unwrap();
    let img = image::open(dir.path().join("series.png"))
        .unwrap()
        .to_rgb8();
    let view = series_view(&result);
    // Each heel strike: a column in the side's colour (drawn at 55 % over the white) crossing
    // most of every panel's rows that no curve covers (the margins jump where the BoS changes,
    // at the heel strike itself, and are drawn over the marks).
    let covered = |x: i32, y: i32| {
        (x - 1..=x + 1).all(|x| {
            let p = img.get_pixel(x as u32, y as u32).0;
            p.iter().any(|&c| c < 160) && !near(p, LEFT_RGB, 12) && !near(p, RIGHT_RGB, 12)
        })
    };
    for (side, rgb) in [(0, LEFT_RGB), (1, RIGHT_RGB)] {
        for &f in &events[side].heel_strikes {
            let x = view.column(result.times_s[f]);
            for (top, bottom) in view.panels_px {
                let open: Vec<i32> = (top..=bottom).filter(|&y| !covered(x, y)).collect();
                let hits = open
                    .iter()
                    .filter(|&&y| has_colour_near(&img, (x, y), 1, rgb, 12))
                    .count();
                assert!(
                    open.len() >= 10 && hits * 2 > open.len(),
                    "side {side} frame {f}: {hits} of {} open rows at x = {x}",
                    open.len()
                );
            }
        }
    }
    // The SVG names the events in its legend.
    write_plots(dir.path(), &result, &summary, PlotFormat::Svg).unwrap();
    let texts = svg_texts(&std::fs::read_to_string(dir.path().join("series.svg")).unwrap());
    for label in ["left heel strike", "right toe-off"] {
        assert!(texts.iter().any(|t| t == label), "{label}: {texts:?}");
    }
}

#[test]
fn the_svg_figures_carry_axis_titles_and_units_as_text() {
    let trial = sway_trial(4.0, &[("bar_l", bar_left as Track), ("bar_r", bar_right)]);
    let (result, summary) = run(
        &trial,
        "[[load]]\nname = \"bar\"\nmass_kg = 40.0\nmarkers = [\"bar_l\", \"bar_r\"]\n",
    );
    let dir = tempfile::tempdir().unwrap();
    write_plots(dir.path(), &result, &summary, PlotFormat::Svg).unwrap();
    let read = |name: &str| std::fs::read_to_string(dir.path().join(name)).unwrap();
    let path = read("path.svg");
    assert!(path.starts_with("<svg"), "{}", &path[..40]);
    let texts = svg_texts(&path);
    for text in ["x (m)", "y (m)"] {
        assert!(
            texts.iter().any(|t| t == text),
            "path.svg lacks the text {text}: {texts:?}"
        );
    }
    for part in ["sway", "CoM, floor projection", "XCoM", "footprint"] {
        assert!(
            texts.iter().any(|t| t.contains(part)),
            "path.svg lacks {part}"
        );
    }
    // Tick labels carry two decimals.
    assert!(
        texts.iter().any(|t| t == "0.00" || t == "0.10"),
        "{texts:?}"
    );
    let texts = svg_texts(&read("series.svg"));
    for text in ["time (s)", "speed (m/s)", "margin (m)", "height (m)"] {
        assert!(
            texts.iter().any(|t| t == text),
            "series.svg lacks the text {text}: {texts:?}"
        );
    }
    for part in [
        "MoS",
        "outside the BoS",
        "subject female, 70.0 kg, 1.75 m",
        "de-leva-1996",
    ] {
        assert!(
            texts.iter().any(|t| t.contains(part)),
            "series.svg lacks {part}: {texts:?}"
        );
    }
    let texts = svg_texts(&read("lift.svg"));
    for text in [
        "height above the floor (m)",
        "along the progression, +x (m)",
    ] {
        assert!(
            texts.iter().any(|t| t == text),
            "lift.svg lacks the text {text}: {texts:?}"
        );
    }
    for part in ["mid-foot band", "bar path"] {
        assert!(
            texts.iter().any(|t| t.contains(part)),
            "lift.svg lacks {part}: {texts:?}"
        );
    }
}

#[test]
fn a_trial_with_a_load_gets_a_side_view_with_the_bar_path_on_its_pixels() {
    let trial = sway_trial(4.0, &[("bar_l", bar_left as Track), ("bar_r", bar_right)]);
    let (result, summary) = run(
        &trial,
        "[[load]]\nname = \"bar\"\nmass_kg = 40.0\nmarkers = [\"bar_l\", \"bar_r\"]\n",
    );
    let dir = tempfile::tempdir().unwrap();
    write_plots(dir.path(), &result, &summary, PlotFormat::Png).unwrap();
    assert_eq!(files_in(dir.path()), ["lift.png", "path.png", "series.png"]);
    let img = image::open(dir.path().join("lift.png")).unwrap().to_rgb8();
    assert_eq!((img.width(), img.height()), FIGURE_SIZE_PX);
    let view = lift_view(&result).unwrap();
    let (px_x, px_y) = view.px_per_m();
    assert_relative_eq!(px_x, px_y, max_relative = 1e-9);
    // Still feet: progression from heel to toe, +x; side coordinate = x, height = z - floor.
    let d = result.support.progression.unwrap();
    assert_relative_eq!(d[0], 1.0, epsilon = 1e-6);
    let floor = result.support.floor_m;
    let bar = &result.loads[0];
    for p in bar.iter().flatten().step_by(20).skip(1) {
        let px = view.pixel([p[0], p[2] - floor]);
        assert!(inside(&view, px));
        assert!(
            has_colour_near(&img, px, 2, BAR_RGB, 40),
            "no bar path at {px:?}"
        );
    }
    // The mid-foot band (light green) is centred on the lift stage's mean mid-foot: filled 2 cm
    // beside its centre at 0.3 m height, and not 10 cm beyond its edge.
    let lift = result.lift.as_ref().unwrap();
    let along: Vec<f64> = lift.midfoot.iter().flatten().map(|m| m[0]).collect();
    let centre = along.iter().sum::<f64>() / along.len() as f64;
    let band = view.pixel([centre + 0.02, 0.3]);
    assert!(
        has_colour_near(&img, band, 0, BAND_RGB, 4),
        "no band at {band:?}"
    );
    let beyond = view.pixel([centre + lift.band_m + 0.1, 0.3]);
    assert!(
        !has_colour_near(&img, beyond, 0, BAND_RGB, 4),
        "band reaches {beyond:?}"
    );
    // Without loads there is no side view.
    let (plain, _) = run(&sway_trial(2.0, &[]), "");
    assert!(lift_view(&plain).is_none());
}

#[test]
fn a_trial_without_valid_frames_is_a_clear_error_and_writes_nothing() {
    let (mut result, summary) = run(&sway_trial(2.0, &[]), "");
    result.com = vec![None; result.n_frames()];
    let dir = tempfile::tempdir().unwrap();
    for format in [PlotFormat::Png, PlotFormat::Svg] {
        let e = write_plots(dir.path(), &result, &summary, format)
            .unwrap_err()
            .to_string();
        assert!(e.contains("no valid frames") && e.contains("sway"), "{e}");
        assert!(e.contains("path."), "{e}");
        assert!(!e.contains('\n'));
    }
    assert!(files_in(dir.path()).is_empty());
    assert!(path_view(&result).is_none());
}
