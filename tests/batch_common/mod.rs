//! Shared helpers of the batch tests: small synthetic standing trials (invented data, synthetic
//! tests only), manifests, and readers of the batch outputs.

#![allow(dead_code)]

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// The markers of a standing body in millimetres, +z up: every landmark the default model
/// needs (invented).
pub fn standing_markers() -> Vec<(String, [f64; 3])> {
    let mut markers: Vec<(String, [f64; 3])> = vec![
        ("c7".into(), [-60.0, 0.0, 1500.0]),
        ("jugular".into(), [60.0, 0.0, 1440.0]),
        ("l_head_front".into(), [80.0, 70.0, 1640.0]),
        ("r_head_front".into(), [80.0, -70.0, 1640.0]),
        ("l_head_back".into(), [-90.0, 70.0, 1660.0]),
        ("r_head_back".into(), [-90.0, -70.0, 1660.0]),
        ("l_asis".into(), [100.0, 125.0, 1000.0]),
        ("r_asis".into(), [100.0, -125.0, 1000.0]),
        ("l_psis".into(), [-60.0, 45.0, 1030.0]),
        ("r_psis".into(), [-60.0, -45.0, 1030.0]),
    ];
    for (s, y) in [("l", 1.0), ("r", -1.0)] {
        for (stem, p) in [
            ("acromion", [0.0, 190.0, 1450.0]),
            ("elbow_lat", [0.0, 240.0, 1120.0]),
            ("elbow_med", [0.0, 170.0, 1120.0]),
            ("wrist_rad", [20.0, 220.0, 860.0]),
            ("wrist_uln", [-20.0, 220.0, 860.0]),
            ("hand", [0.0, 220.0, 780.0]),
            ("knee_lat", [10.0, 140.0, 500.0]),
            ("knee_med", [10.0, 40.0, 500.0]),
            ("ankle_lat", [-10.0, 120.0, 70.0]),
            ("ankle_med", [-10.0, 50.0, 70.0]),
            ("heel", [-60.0, 90.0, 20.0]),
            ("toe", [200.0, 100.0, 20.0]),
            ("mt1", [140.0, 60.0, 20.0]),
            ("mt5", [120.0, 130.0, 20.0]),
        ] {
            markers.push((format!("{s}_{stem}"), [p[0], p[1] * y, p[2]]));
        }
    }
    markers
}

/// A standing trial (wide CSV, mm, 100 Hz) swaying as an inverted pendulum about the ankles:
/// every marker above the ankles moves by its height above them times a small angle, the AP and
/// ML angles sine waves whose amplitude and frequency follow `seed`, so that each trial's
/// figures differ. `skip` leaves a marker out of the file.
pub fn standing_csv(frames: usize, seed: u64, skip: Option<&str>) -> String {
    let markers: Vec<(String, [f64; 3])> = standing_markers()
        .into_iter()
        .filter(|(m, _)| Some(m.as_str()) != skip)
        .collect();
    let s = seed as f64;
    let ap_rad = 0.004 + 0.001 * (s % 7.0);
    let ml_rad = 0.002 + 0.0007 * (s % 5.0);
    let f_hz = 0.3 + 0.05 * (s % 4.0);
    let mut csv = String::from("# standing sway, invented for the batch tests\ntime");
    for (m, _) in &markers {
        csv.push_str(&format!(",{m}_x,{m}_y,{m}_z"));
    }
    csv.push('\n');
    for f in 0..frames {
        let t = f as f64 / 100.0;
        let phase = 2.0 * std::f64::consts::PI * f_hz * t;
        let (ap, ml) = (ap_rad * phase.sin(), ml_rad * (1.3 * phase).cos());
        csv.push_str(&format!("{t:.2}"));
        for (_, p) in &markers {
            let h = (p[2] - 70.0).max(0.0);
            csv.push_str(&format!(
                ",{:.3},{:.3},{:.3}",
                p[0] + h * ap,
                p[1] + h * ml,
                p[2]
            ));
        }
        csv.push('\n');
    }
    csv
}

/// Writes a file, creating its folder.
pub fn write(path: &Path, text: &str) {
    if let Some(dir) = path.parent() {
        std::fs::create_dir_all(dir).unwrap();
    }
    std::fs::write(path, text).unwrap();
}

/// A manifest row.
pub struct ManifestRow {
    pub trial: String,
    pub subject: String,
    pub mass_kg: String,
    pub height_m: String,
    pub sex: String,
    pub condition: String,
}

/// `n` standing trials of `frames` frames in `dir`, with a manifest `manifest.csv` listing them
/// over three subjects and two conditions; returns the manifest's path and rows.
pub fn standing_batch(dir: &Path, n: usize, frames: usize) -> (PathBuf, Vec<ManifestRow>) {
    let mut rows = Vec::new();
    for i in 0..n {
        let trial = format!("trials/stand{i:02}.csv");
        write(&dir.join(&trial), &standing_csv(frames, i as u64, None));
        let subject = ["s1", "s2", "s3"][i % 3];
        rows.push(ManifestRow {
            trial,
            subject: subject.into(),
            mass_kg: ["72.5", "61", "85"][i % 3].into(),
            height_m: ["1.78", "1.65", "1.83"][i % 3].into(),
            sex: ["male", "female", "male"][i % 3].into(),
            condition: ["eyes_open", "eyes_closed"][(i / 3) % 2].into(),
        });
    }
    let path = dir.join("manifest.csv");
    write_manifest(&path, &rows);
    (path, rows)
}

pub fn write_manifest(path: &Path, rows: &[ManifestRow]) {
    let mut text = String::from("trial,subject,mass_kg,height_m,sex,condition\n");
    for r in rows {
        text.push_str(&format!(
            "{},{},{},{},{},{}\n",
            r.trial, r.subject, r.mass_kg, r.height_m, r.sex, r.condition
        ));
    }
    write(path, &text);
}

/// A CSV file as a header and rows of strings.
pub fn read_csv(path: &Path) -> (Vec<String>, Vec<Vec<String>>) {
    let mut r = csv::Reader::from_path(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    let header = r.headers().unwrap().iter().map(str::to_string).collect();
    let rows = r
        .records()
        .map(|rec| rec.unwrap().iter().map(str::to_string).collect())
        .collect();
    (header, rows)
}

/// The rows of a CSV file as column name -> cell maps.
pub fn csv_maps(path: &Path) -> Vec<BTreeMap<String, String>> {
    let (header, rows) = read_csv(path);
    rows.into_iter()
        .map(|r| header.iter().cloned().zip(r).collect())
        .collect()
}

/// The gravline binary.
pub fn gravline() -> assert_cmd::Command {
    assert_cmd::Command::cargo_bin("gravline").unwrap()
}
