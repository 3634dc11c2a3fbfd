//! The helper commands: `cutoff`, `tables`, `landmarks`, `config --print-default`.

use assert_cmd::Command;

fn gravline() -> Command {
    Command::cargo_bin("gravline").unwrap()
}

mod common;
use common::realdata_dir;

/// Residual analysis of the real walk (150 Hz, mm): marker cut-offs of walking lie around
/// 6 Hz (docs/reference/methods.md 4: "markers about 6 Hz in walking"); the band checked is 3-12 Hz,
/// and the curves file has one column per marker coordinate.
#[test]
fn cutoff_on_the_real_walk_suggests_a_walking_cutoff() {
    let dir = realdata_dir();
    let out = tempfile::tempdir().unwrap();
    let curves = out.path().join("curves.csv");
    let config = out.path().join("walk.toml");
    std::fs::write(&config, "[input]\nunits = \"mm\"\nup_axis = \"y\"\n").unwrap();
    let assert = gravline()
        .arg("cutoff")
        .arg(dir.join("walk-lower-body/trial.csv"))
        .arg("--config")
        .arg(&config)
        .arg("--csv")
        .arg(&curves)
        .assert()
        .success();
    let stdout = String::from_utf8_lossy(&assert.get_output().stdout).to_string();
    let line = stdout
        .lines()
        .find(|l| l.starts_with("suggested cut-off for all markers"))
        .unwrap();
    let hz: f64 = line
        .split(':')
        .nth(1)
        .unwrap()
        .split_whitespace()
        .next()
        .unwrap()
        .parse()
        .unwrap();
    assert!((3.0..=12.0).contains(&hz), "{line}");
    let text = std::fs::read_to_string(&curves).unwrap();
    let header = text.lines().next().unwrap();
    assert_eq!(header.split(',').count(), 1 + 28 * 3);
    assert!(header.contains("l_heel_y_residual_m"));
}

#[test]
fn tables_lists_the_builtin_tables_with_their_sums() {
    let out = gravline()
        .arg("tables")
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let text = String::from_utf8_lossy(&out);
    assert!(
        text.contains("de-leva-1996")
            && text.contains("dempster-winter")
            && text.contains("1.0000")
    );
    let out = gravline()
        .args(["tables", "de-leva-1996", "--sex", "female"])
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let text = String::from_utf8_lossy(&out);
    // de Leva 1996 female thigh: 14.78 % of mass, CoM 36.12 % from the hip JC.
    assert!(
        text.lines()
            .any(|l| l.starts_with("thigh") && l.contains("0.1478") && l.contains("0.3612")),
        "{text}"
    );
}

#[test]
fn landmarks_prints_a_template_for_a_file() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("lab.csv");
    std::fs::write(&path, "time,LASIS_x,LASIS_y,LASIS_z,l_heel_x,l_heel_y,l_heel_z\n0,1,2,3,4,5,6\n0.01,1,2,3,4,5,6\n").unwrap();
    let out = gravline()
        .arg("landmarks")
        .arg(&path)
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let text = String::from_utf8_lossy(&out);
    assert!(text.contains("[landmarks]"));
    assert!(text.contains("l_asis = \"LASIS\""), "{text}");
    // Own names and case/separator matches are live lines; other guesses are comments.
    assert!(text.contains("\nl_heel = \"l_heel\"\n"), "{text}");
    assert!(text.contains("# r_heel = \"l_heel\"   # guess"), "{text}");
}

#[test]
fn the_printed_default_config_is_accepted() {
    let out = gravline()
        .args(["config", "--print-default"])
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("default.toml");
    std::fs::write(&path, &out).unwrap();
    let bad = dir.path().join("bad.toml");
    std::fs::write(&bad, "[filter]\ncutof_hz = 6\n").unwrap();
    let csv = dir.path().join("t.csv");
    std::fs::write(&csv, "time,a_x,a_y,a_z\n0,1,2,3\n0.01,1,2,3\n").unwrap();
    let assert = gravline()
        .args(["trial"])
        .arg(&csv)
        .args([
            "--mass-kg",
            "70",
            "--height-m",
            "1.7",
            "--sex",
            "male",
            "--config",
        ])
        .arg(&bad)
        .assert()
        .code(2);
    let stderr = String::from_utf8_lossy(&assert.get_output().stderr).to_string();
    assert!(
        stderr.contains("bad.toml") && stderr.contains("cutof_hz"),
        "{stderr}"
    );
    // The default file itself passes validation (the trial then fails on its missing landmarks).
    let assert = gravline()
        .args(["trial"])
        .arg(&csv)
        .args([
            "--mass-kg",
            "70",
            "--height-m",
            "1.7",
            "--sex",
            "male",
            "--config",
        ])
        .arg(&path)
        .assert()
        .code(2);
    let stderr = String::from_utf8_lossy(&assert.get_output().stderr).to_string();
    assert!(stderr.contains("landmark"), "{stderr}");
}
