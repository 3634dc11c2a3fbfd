//! The committed demo data (`examples/data/`) is exactly what `cargo run --example
//! make_demo_data` writes, is small, and its manifest and subject files agree with the trials.

use gravline::synth::demo::{demo_files, PEOPLE};
use gravline::synth::model_leg_length_m;
use std::path::Path;

fn data_dir() -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/data")
}

/// Every generated file equals its committed copy, byte for byte (rerun the example when the
/// model changes).
#[test]
fn committed_demo_data_is_up_to_date() {
    for file in demo_files() {
        let path = data_dir().join(&file.name);
        let committed = std::fs::read(&path).unwrap_or_else(|e| {
            panic!(
                "{}: {e}; run `cargo run --example make_demo_data`",
                path.display()
            )
        });
        assert!(
            committed == file.bytes,
            "{} is stale; run `cargo run --example make_demo_data`",
            file.name
        );
    }
}

/// Each file stays small enough to keep in the repository (under 1.2 MB; the squat, 12 s of 44
/// markers at 100 Hz, is the largest).
#[test]
fn demo_files_are_small() {
    let files = demo_files();
    assert_eq!(files.len(), 10);
    for f in &files {
        assert!(
            f.bytes.len() < 1_200_000,
            "{} is {} bytes",
            f.name,
            f.bytes.len()
        );
    }
}

/// The manifest lists the four trials with their subjects' figures, and each subject file
/// parses as TOML with the fields of docs/DESIGN.md 3.2.
#[test]
fn manifest_and_subjects_agree() {
    let files = demo_files();
    let get = |name: &str| {
        let f = files.iter().find(|f| f.name == name).unwrap();
        String::from_utf8(f.bytes.clone()).unwrap()
    };
    let manifest = get("manifest.csv");
    let mut reader = csv::Reader::from_reader(manifest.as_bytes());
    let header: Vec<String> = reader.headers().unwrap().iter().map(String::from).collect();
    assert_eq!(
        header,
        [
            "trial",
            "subject",
            "mass_kg",
            "height_m",
            "sex",
            "condition",
            "leg_length_m",
            "config"
        ]
    );
    let mut trials = Vec::new();
    for record in reader.records() {
        let r = record.unwrap();
        let person = PEOPLE.iter().find(|p| p.name == &r[1]).unwrap();
        assert_eq!(r[2].parse::<f64>().unwrap(), person.mass_kg);
        assert_eq!(r[3].parse::<f64>().unwrap(), person.height_m);
        assert_eq!(&r[4], person.sex.word());
        assert!(files.iter().any(|f| f.name == r[0]));
        if !r[7].is_empty() {
            assert!(files.iter().any(|f| f.name == r[7]));
        }
        trials.push(r[0].to_string());
    }
    assert_eq!(trials, ["walk.csv", "stand.csv", "squat.csv", "jump.csv"]);
    for p in &PEOPLE {
        let subject: toml::Table = get(&format!("{}.toml", p.name)).parse().unwrap();
        assert_eq!(subject["mass_kg"].as_float(), Some(p.mass_kg));
        assert_eq!(subject["height_m"].as_float(), Some(p.height_m));
        assert_eq!(subject["sex"].as_str(), Some(p.sex.word()));
        let ll = subject["leg_length_m"].as_float().unwrap();
        assert!((ll - model_leg_length_m(p.height_m)).abs() < 5e-5);
        assert_eq!(subject["marker_radius_m"].as_float(), Some(0.007));
    }
    let config: toml::Table = get("squat-config.toml").parse().unwrap();
    let load = &config["load"].as_array().unwrap()[0];
    assert_eq!(load["name"].as_str(), Some("bar"));
    assert_eq!(load["mass_kg"].as_integer(), Some(60));
    let markers: Vec<&str> = load["markers"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| m.as_str().unwrap())
        .collect();
    assert_eq!(markers, ["bar_left", "bar_right"]);
    let readme = get("README.md");
    assert!(readme.contains("synthetic") && readme.contains("cargo run --example make_demo_data"));
}

/// Every trial's comment header says it is synthetic and names the place and the person.
#[test]
fn trial_headers_say_synthetic() {
    for f in demo_files()
        .iter()
        .filter(|f| f.name.ends_with(".csv") && f.name != "manifest.csv")
    {
        let text = String::from_utf8(f.bytes.clone()).unwrap();
        let header: Vec<&str> = text.lines().take_while(|l| l.starts_with('#')).collect();
        let joined = header.join("\n");
        assert!(joined.contains("SYNTHETIC"), "{}", f.name);
        assert!(joined.contains("Larkhaven Sports Clinic"), "{}", f.name);
        assert!(
            joined.contains("units mm") && joined.contains("+z up"),
            "{}",
            f.name
        );
        assert!(
            PEOPLE
                .iter()
                .any(|p| joined.to_lowercase().contains(p.name)),
            "{}",
            f.name
        );
    }
}
