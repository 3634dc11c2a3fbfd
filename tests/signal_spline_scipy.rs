//! The natural cubic spline and the gap filler against
//! `scipy.interpolate.CubicSpline(bc_type='natural')`, on fixtures written by
//! tests/reference/make_spline_fixture.py (the versions of scipy and numpy are in each file's
//! first line).

use gravline::signal::{fill_gaps, FilledGap, NaturalSpline};
use gravline::trial::RawMarkers;
use std::path::PathBuf;

/// Data rows of a fixture (comment lines and the column header skipped), split on commas.
fn rows(name: &str) -> (Vec<String>, Vec<Vec<String>>) {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures")
        .join(name);
    let text = std::fs::read_to_string(&path)
        .unwrap_or_else(|e| panic!("cannot read {}: {e}", path.display()));
    let comments = text
        .lines()
        .filter_map(|l| l.strip_prefix("# "))
        .map(str::to_string)
        .collect();
    let data = text
        .lines()
        .filter(|l| !l.starts_with('#'))
        .skip(1)
        .map(|l| l.split(',').map(str::to_string).collect())
        .collect();
    (comments, data)
}

fn num(cell: &str) -> f64 {
    cell.parse()
        .unwrap_or_else(|_| panic!("`{cell}` is not a number"))
}

/// An empty cell is a missing value.
fn opt_xyz(cells: &[String]) -> Option<[f64; 3]> {
    if cells.iter().all(|c| c.is_empty()) {
        None
    } else {
        Some([num(&cells[0]), num(&cells[1]), num(&cells[2])])
    }
}

#[test]
fn spline_matches_scipy_natural_cubic_spline() {
    let (_, data) = rows("spline_direct.csv");
    let knots: Vec<(f64, f64)> = data
        .iter()
        .filter(|r| r[0] == "knot")
        .map(|r| (num(&r[1]), num(&r[2])))
        .collect();
    let evals: Vec<(f64, f64)> = data
        .iter()
        .filter(|r| r[0] == "eval")
        .map(|r| (num(&r[1]), num(&r[2])))
        .collect();
    assert_eq!((knots.len(), evals.len()), (12, 101));
    let spline = NaturalSpline::new(
        knots.iter().map(|k| k.0).collect(),
        knots.iter().map(|k| [k.1]).collect(),
    )
    .expect("valid knots");
    for (t, want) in evals {
        let got = spline.eval(t)[0];
        assert!(
            (got - want).abs() <= 1e-9,
            "t = {t}: gravline {got}, scipy {want}"
        );
    }
}

#[test]
fn gap_filling_matches_scipy_stretch_by_stretch() {
    let (comments, data) = rows("spline_gapfill.csv");
    let max_gap_s = comments
        .iter()
        .find_map(|c| c.strip_prefix("max_gap_s="))
        .map(num)
        .expect("max_gap_s in the header");
    let times_s: Vec<f64> = data.iter().map(|r| num(&r[0])).collect();
    let raw_track: Vec<Option<[f64; 3]>> = data.iter().map(|r| opt_xyz(&r[1..4])).collect();
    let expected: Vec<Option<[f64; 3]>> = data.iter().map(|r| opt_xyz(&r[4..7])).collect();
    let raw = RawMarkers::from_options(vec!["wrist".to_string()], vec![raw_track]);

    let (markers, gaps) = fill_gaps(&raw, &times_s, max_gap_s);

    // The fixture's layout (make_spline_fixture.py): gaps at 0..2 (trial start), 8, 15..18,
    // 30..42 (too long), 47..51, 58..60 (trial end); only the three short interior ones fill.
    let filled = |start_frame, len_frames| FilledGap {
        marker: 0,
        start_frame,
        len_frames,
    };
    assert_eq!(gaps, vec![filled(8, 1), filled(15, 3), filled(47, 4)]);
    let track = &markers.tracks[0];
    assert_eq!(track.runs.len(), 2);
    for (frame, want) in expected.iter().enumerate() {
        match (track.at(frame), want) {
            (None, None) => {}
            (Some(got), Some(want)) => {
                for d in 0..3 {
                    assert!(
                        (got[d] - want[d]).abs() <= 1e-9,
                        "frame {frame} coordinate {d}: gravline {}, scipy {}",
                        got[d],
                        want[d]
                    );
                }
            }
            (got, want) => panic!("frame {frame}: gravline {got:?}, scipy {want:?}"),
        }
    }
}
