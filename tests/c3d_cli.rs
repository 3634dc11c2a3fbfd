//! C3D files through the command line: `trial`, `convert` (and `trial` on the converted CSV,
//! which must give exactly the C3D's result), `landmarks`, `cutoff`, `batch` on a folder, and a
//! broken file. The trials are the synthetic walk (invented data), written by gravline's C3D
//! writer.

use assert_cmd::Command;
use gravline::c3d::write::Recording;
use gravline::c3d::Processor;
use gravline::synth::{generate, Scenario, SynthOptions};
use std::path::Path;

fn gravline() -> Command {
    Command::cargo_bin("gravline").unwrap()
}

/// The synthetic walk (3 s at 100 Hz, with gaps) as a C3D file.
fn walk_c3d(path: &Path, processor: Processor, float: bool) {
    let mut o = SynthOptions::for_scenario(Scenario::Walk);
    o.duration_s = 3.0;
    let t = generate(Scenario::Walk, &o);
    let mut rec = Recording::from_tracks_m(&t.labels, &t.positions, 100.0);
    rec.processor = processor;
    rec.float = float;
    let mut bytes = Vec::new();
    gravline::c3d::write(&rec, &mut bytes).unwrap();
    std::fs::write(path, bytes).unwrap();
}

const SUBJECT: [&str; 6] = ["--mass-kg", "70", "--height-m", "1.75", "--sex", "male"];

fn run_trial(file: &Path, out: &Path) {
    gravline()
        .arg("trial")
        .arg(file)
        .args(SUBJECT)
        .arg("--out")
        .arg(out)
        .arg("--no-plots")
        .assert()
        .success();
}

/// summary.json without the parts that name the input (file, digest, reader warnings).
fn figures(path: &Path) -> serde_json::Value {
    let mut v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap();
    fn strip(v: &mut serde_json::Value) {
        if let Some(o) = v.as_object_mut() {
            for key in ["input_sha256", "file", "input", "warnings"] {
                o.remove(key);
            }
            for (_, x) in o.iter_mut() {
                strip(x);
            }
        }
    }
    strip(&mut v);
    v
}

#[test]
fn trial_on_the_converted_csv_equals_the_c3d_result() {
    for (processor, float) in [(Processor::Intel, true), (Processor::Dec, false)] {
        let dir = tempfile::tempdir().unwrap();
        let c3d = dir.path().join("walk.c3d");
        walk_c3d(&c3d, processor, float);
        run_trial(&c3d, &dir.path().join("from_c3d"));
        gravline()
            .arg("convert")
            .arg(&c3d)
            .arg("--out")
            .arg(dir.path().join("csv"))
            .assert()
            .success();
        let csv = dir.path().join("csv/walk.csv");
        let text = std::fs::read_to_string(&csv).unwrap();
        assert!(text.starts_with("# points of "), "{}", &text[..200]);
        assert!(!dir.path().join("csv/walk.plates.csv").exists());
        run_trial(&csv, &dir.path().join("from_csv"));
        let a = std::fs::read(dir.path().join("from_c3d/walk/frames.csv")).unwrap();
        let b = std::fs::read(dir.path().join("from_csv/walk/frames.csv")).unwrap();
        assert!(a == b, "{processor:?}: frames.csv differ");
        assert_eq!(
            figures(&dir.path().join("from_c3d/walk/summary.json")),
            figures(&dir.path().join("from_csv/walk/summary.json"))
        );
        // The provenance keeps the C3D file's digest.
        let summary =
            std::fs::read_to_string(dir.path().join("from_c3d/walk/summary.json")).unwrap();
        let digest = gravline::report::sha256_hex(&std::fs::read(&c3d).unwrap());
        assert!(summary.contains(&digest));
    }
}

#[test]
fn a_c3d_without_its_extension_is_recognised_by_its_bytes() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("walk.dat");
    walk_c3d(&file, Processor::Mips, true);
    run_trial(&file, &dir.path().join("out"));
    assert!(dir.path().join("out/walk/frames.csv").exists());
}

#[test]
fn landmarks_show_descriptions_and_repeated_labels() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("knee.c3d");
    let rec = Recording {
        labels: vec!["KNE".into(), "KNE".into()],
        descriptions: vec!["lateral epicondyle".into(), "medial epicondyle".into()],
        points: vec![vec![Some([1.0, 2.0, 3.0]); 3], vec![None; 3]],
        ..Recording::default()
    };
    let mut bytes = Vec::new();
    gravline::c3d::write(&rec, &mut bytes).unwrap();
    std::fs::write(&file, bytes).unwrap();
    let out = gravline().arg("landmarks").arg(&file).assert().success();
    let text = String::from_utf8(out.get_output().stdout.clone()).unwrap();
    assert!(text.contains("#   KNE: lateral epicondyle"), "{text}");
    assert!(
        text.contains("#   KNE#2 (stored as `KNE`): medial epicondyle"),
        "{text}"
    );
    assert!(text.contains("never valid: KNE#2"), "{text}");
}

#[test]
fn cutoff_and_batch_folders_take_c3d_files() {
    let dir = tempfile::tempdir().unwrap();
    let trials = dir.path().join("trials");
    std::fs::create_dir(&trials).unwrap();
    walk_c3d(&trials.join("a.c3d"), Processor::Intel, true);
    walk_c3d(&dir.path().join("b.c3d"), Processor::Intel, false);
    gravline()
        .arg("convert")
        .arg(dir.path().join("b.c3d"))
        .arg("--out")
        .arg(&trials)
        .assert()
        .success();
    gravline()
        .arg("cutoff")
        .arg(trials.join("a.c3d"))
        .assert()
        .success();
    let out = dir.path().join("out");
    gravline()
        .arg("batch")
        .arg(&trials)
        .arg("--out")
        .arg(&out)
        .args(SUBJECT)
        .arg("--no-plots")
        .arg("-q")
        .assert()
        .success();
    let summary = std::fs::read_to_string(out.join("summary.csv")).unwrap();
    assert_eq!(summary.lines().count(), 3, "{summary}");
    assert!(out.join("trials/a/frames.csv").exists() && out.join("trials/b/frames.csv").exists());
}

#[test]
fn a_broken_c3d_is_a_one_line_error_naming_the_file() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("cut.c3d");
    walk_c3d(&file, Processor::Intel, true);
    let bytes = std::fs::read(&file).unwrap();
    std::fs::write(&file, &bytes[..bytes.len() / 2]).unwrap();
    let out = gravline()
        .arg("trial")
        .arg(&file)
        .args(SUBJECT)
        .arg("--out")
        .arg(dir.path().join("out"))
        .assert()
        .code(2);
    let err = String::from_utf8(out.get_output().stderr.clone()).unwrap();
    assert_eq!(err.trim().lines().count(), 1, "{err}");
    assert!(
        err.contains("cut.c3d") && err.contains("truncated"),
        "{err}"
    );
    assert!(!dir.path().join("out/cut").exists());
}
