//! Command-line conventions: folder batches, one spelling rule for sex, error messages, help
//! examples, version, completions, and the README's commands.

use assert_cmd::Command;
use std::path::{Path, PathBuf};

fn gravline() -> Command {
    Command::cargo_bin("gravline").unwrap()
}

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn data(name: &str) -> PathBuf {
    root().join("examples/data").join(name)
}

fn rows(path: &Path) -> Vec<std::collections::HashMap<String, String>> {
    let mut r = csv::Reader::from_path(path).unwrap();
    let headers = r.headers().unwrap().clone();
    r.records()
        .map(|rec| {
            let rec = rec.unwrap();
            headers
                .iter()
                .zip(rec.iter())
                .map(|(h, v)| (h.to_string(), v.to_string()))
                .collect()
        })
        .collect()
}

/// A folder with trials, a manifest and a subject file beside them: the manifest is not a trial,
/// and `subject` is filled from `--subject` (the file's stem).
#[test]
fn a_folder_batch_skips_its_manifest_and_names_the_given_subject() {
    let dir = tempfile::tempdir().unwrap();
    let trials = dir.path().join("trials");
    std::fs::create_dir(&trials).unwrap();
    for f in ["walk.csv", "stand.csv", "manifest.csv"] {
        std::fs::copy(data(f), trials.join(f)).unwrap();
    }
    let out = dir.path().join("out");
    gravline()
        .arg("batch")
        .arg(&trials)
        .arg("--subject")
        .arg(data("maren.toml"))
        .args(["-q", "--no-plots", "--out"])
        .arg(&out)
        .assert()
        .code(0);
    let table = rows(&out.join("summary.csv"));
    let trials: Vec<&str> = table.iter().map(|r| r["trial"].as_str()).collect();
    assert_eq!(trials, ["stand.csv", "walk.csv"]);
    assert!(table
        .iter()
        .all(|r| r["subject"] == "maren" && r["status"] == "ok"));
}

/// Sex: `female` / `male` or `f` / `m`, any case, in a subject file, a manifest and on the
/// command line alike; anything else is rejected with the rule.
#[test]
fn sex_is_spelt_one_way_everywhere() {
    let dir = tempfile::tempdir().unwrap();
    let subject = dir.path().join("s.toml");
    std::fs::write(&subject, "mass_kg = 63.0\nheight_m = 1.68\nsex = \"F\"\n").unwrap();
    gravline()
        .arg("trial")
        .arg(data("stand.csv"))
        .arg("--subject")
        .arg(&subject)
        .args(["-q", "--no-plots", "--out"])
        .arg(dir.path().join("a"))
        .assert()
        .code(0);
    gravline()
        .arg("trial")
        .arg(data("stand.csv"))
        .args(["--mass-kg", "63", "--height-m", "1.68", "--sex", "F"])
        .args(["-q", "--no-plots", "--out"])
        .arg(dir.path().join("b"))
        .assert()
        .code(0);
    let manifest = dir.path().join("m.csv");
    std::fs::copy(data("stand.csv"), dir.path().join("stand.csv")).unwrap();
    std::fs::write(
        &manifest,
        "trial,subject,mass_kg,height_m,sex\nstand.csv,maren,63,1.68,Female\nstand.csv,noa,64.5,1.72,m\n",
    )
    .unwrap();
    gravline()
        .arg("batch")
        .arg(&manifest)
        .args(["-q", "--no-plots", "--out"])
        .arg(dir.path().join("c"))
        .assert()
        .code(0);
    std::fs::write(&subject, "mass_kg = 63.0\nheight_m = 1.68\nsex = \"x\"\n").unwrap();
    let out = gravline()
        .arg("trial")
        .arg(data("stand.csv"))
        .arg("--subject")
        .arg(&subject)
        .args(["-q", "--no-plots", "--out"])
        .arg(dir.path().join("d"))
        .assert()
        .code(2);
    let err = String::from_utf8_lossy(&out.get_output().stderr).to_string();
    assert!(err.contains("female or male (or f / m, any case)"), "{err}");
}

/// A re-run into the same folder removes the outputs it no longer produces: the squat run with
/// its bar writes reps.csv and lift.png; run again without the load configuration, neither is
/// left beside the new summary.
#[test]
fn a_rerun_removes_outputs_it_no_longer_writes() {
    let out = tempfile::tempdir().unwrap();
    let run = |config: Option<PathBuf>| {
        let mut c = gravline();
        c.arg("trial")
            .arg(data("squat.csv"))
            .arg("--subject")
            .arg(data("tobin.toml"))
            .arg("-q")
            .arg("--out")
            .arg(out.path());
        if let Some(config) = config {
            c.arg("--config").arg(config);
        }
        c.assert().code(0);
    };
    run(Some(data("squat-config.toml")));
    let dir = out.path().join("squat");
    assert!(dir.join("reps.csv").is_file() && dir.join("lift.png").is_file());
    run(None);
    assert!(!dir.join("reps.csv").exists() && !dir.join("lift.png").exists());
    assert!(dir.join("summary.json").is_file() && dir.join("series.png").is_file());
    // Numbers with the precision they carry: 1200 frames of 0.01 s with a BoS are 12 s, not
    // the 11.999999999999998 of their floating-point sum.
    let summary = std::fs::read_to_string(dir.join("summary.json")).unwrap();
    assert!(summary.contains("\"time_with_bos_s\": 12.0"), "{summary}");
    assert!(!summary.contains("99999999999"), "{summary}");
}
