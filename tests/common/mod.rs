//! Test bodies shared by the integration tests (invented for the tests).
#![allow(dead_code)]

use gravline::trial::{RawMarkers, Trial, UpAxis};
use std::path::PathBuf;

/// ../shared/realdata (the real recordings, read in place; `$GRAVLINE_SHARED/realdata` or
/// /work/shared/realdata where the repository sits elsewhere). A missing folder fails the test:
/// the shared data is part of every checkout the suite runs in.
pub fn realdata_dir() -> PathBuf {
    let candidates = [
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../shared/realdata"),
        std::env::var_os("GRAVLINE_SHARED")
            .map(|d| PathBuf::from(d).join("realdata"))
            .unwrap_or_default(),
        PathBuf::from("/work/shared/realdata"),
    ];
    candidates
        .into_iter()
        .find(|d| !d.as_os_str().is_empty() && d.is_dir())
        .expect("../shared/realdata (the real recordings) is missing: check out the shared data beside the repository or set GRAVLINE_SHARED")
}

/// A static trial: every marker at a fixed position for `frames` frames at 100 Hz.
/// The configuration of the real standing recording (realdata/standing-static): its marker set
/// has no arms and no toe-tip markers, so arms hang (docs/DESIGN.md 5) and the toe tips are virtual
/// landmarks along heel -> 2nd metatarsal head.
pub const STANDING_CONFIG: &str = r#"
[input]
units = "m"
up_axis = "y"
[model]
arms = "hanging"
[virtual]
l_toe = { along = ["l_heel", "l_mt2"], fraction = 1.3 }
r_toe = { along = ["r_heel", "r_mt2"], fraction = 1.3 }
"#;

pub fn static_trial(points: &[(&str, [f64; 3])], frames: usize) -> Trial {
    Trial {
        name: "static".into(),
        file: "static.csv".into(),
        times_s: (0..frames).map(|i| i as f64 / 100.0).collect(),
        rate_hz: 100.0,
        up_axis: UpAxis::Z,
        markers: RawMarkers::new(
            points.iter().map(|(n, _)| n.to_string()).collect(),
            points.iter().map(|(_, p)| vec![*p; frames]).collect(),
        ),
        warnings: Vec::new(),
    }
}

/// A standing body from anatomical markers (x forward, y left, z up), invented for the test.
pub fn marker_body_trial() -> Trial {
    static_trial(&marker_body_points(), 20)
}

/// The markers of [`marker_body_trial`].
pub fn marker_body_points() -> Vec<(&'static str, [f64; 3])> {
    let mut p: Vec<(&str, [f64; 3])> = vec![
        ("c7", [-0.06, 0.0, 1.50]),
        ("jugular", [0.06, 0.0, 1.44]),
        ("l_head_front", [0.08, 0.07, 1.64]),
        ("r_head_front", [0.08, -0.07, 1.64]),
        ("l_head_back", [-0.09, 0.07, 1.66]),
        ("r_head_back", [-0.09, -0.07, 1.66]),
        ("l_asis", [0.10, 0.125, 1.00]),
        ("r_asis", [0.10, -0.125, 1.00]),
        ("l_psis", [-0.06, 0.045, 1.03]),
        ("r_psis", [-0.06, -0.045, 1.03]),
    ];
    for (side, y) in [("l", 1.0), ("r", -1.0)] {
        let name =
            |stem: &str| -> &'static str { Box::leak(format!("{side}_{stem}").into_boxed_str()) };
        p.extend([
            (name("acromion"), [0.0, 0.19 * y, 1.45]),
            (name("elbow_lat"), [0.0, 0.24 * y, 1.12]),
            (name("elbow_med"), [0.0, 0.17 * y, 1.12]),
            (name("wrist_rad"), [0.02, 0.22 * y, 0.86]),
            (name("wrist_uln"), [-0.02, 0.22 * y, 0.86]),
            (name("hand"), [0.0, 0.22 * y, 0.78]),
            (name("knee_lat"), [0.01, 0.14 * y, 0.50]),
            (name("knee_med"), [0.01, 0.04 * y, 0.50]),
            (name("ankle_lat"), [-0.01, 0.12 * y, 0.07]),
            (name("ankle_med"), [-0.01, 0.05 * y, 0.07]),
            (name("heel"), [-0.06, 0.09 * y, 0.02]),
            (name("toe"), [0.20, 0.10 * y, 0.02]),
            (name("mt1"), [0.14, 0.06 * y, 0.02]),
            (name("mt2"), [0.15, 0.085 * y, 0.02]),
            (name("mt5"), [0.12, 0.13 * y, 0.02]),
        ]);
    }
    p
}

/// ../shared/c3d-samples (c3d.org's conformance files, read in place; `GRAVLINE_SHARED` names
/// another shared folder). Panics when absent: a test that needs them fails without them.
pub fn c3d_samples_dir() -> PathBuf {
    let candidates = [
        std::env::var_os("GRAVLINE_SHARED").map(|s| PathBuf::from(s).join("c3d-samples")),
        Some(PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../shared/c3d-samples")),
        Some(PathBuf::from("/work/shared/c3d-samples")),
    ];
    candidates
        .into_iter()
        .flatten()
        .find(|d| d.join("formats-six").is_dir())
        .expect("the c3d.org samples (../shared/c3d-samples) are missing: set GRAVLINE_SHARED to the shared folder")
}
