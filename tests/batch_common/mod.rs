//! Shared helpers of the batch tests: small synthetic standing trials (`gravline::synth`,
//! invented data), manifests, and readers of the batch outputs.

#![allow(dead_code)]

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// A quiet-standing trial from [`gravline::synth`] (wide CSV, mm, 100 Hz, 0.5 mm noise, a few
/// short gaps), `frames` long; `seed` changes the sway and the noise, so each trial's figures
/// differ. `skip` leaves a marker out of the file.
pub fn standing_csv(frames: usize, seed: u64, skip: Option<&str>) -> String {
    use gravline::synth::{self, Scenario, SynthOptions};
    let mut o = SynthOptions::for_scenario(Scenario::Stand);
    o.duration_s = frames as f64 / o.rate_hz;
    o.seed = seed;
    let mut trial = synth::generate(Scenario::Stand, &o);
    if let Some(label) = skip {
        let i = trial
            .index_of(label)
            .unwrap_or_else(|| panic!("no marker {label}"));
        trial.labels.remove(i);
        trial.positions.remove(i);
    }
    let mut bytes = Vec::new();
    synth::write_wide_csv(
        &trial,
        "quiet standing, synthetic (gravline::synth)",
        &mut bytes,
    )
    .unwrap();
    String::from_utf8(bytes).unwrap()
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
