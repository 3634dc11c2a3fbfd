//! The plate stage on the real overground walk of ../shared/realdata/walk-lower-body/ (Duarte
//! 2021, Notes on Scientific Computing for Biomechanics and Motor Control,
//! doi:10.5281/zenodo.4599319, trial "walk2", CC BY 4.0): 150 Hz markers in mm, +y up; seven
//! plates at 450 Hz in `plates.csv` (force in N, CoP in mm), read in place through `--plates`.
//!
//! Checks against the recording's own description (its README): the four footfalls land on
//! plates 6, 5, 3 and 4, in that order; plate 4's CoP is known to be wrong (detected here as
//! a CoP outside the sole of the foot standing on that plate); the CoP lies inside the BoS; the
//! body mass the plates imply over the complete stride lies in 68-77 kg (the README: "mean
//! vertical force over a stride suggests roughly 68-77 kg").
//!
//! The marker set has pelvis and legs only, so the head, trunk and arms are placed as a rigid
//! upper body on the pelvis (virtual landmarks with fixed offsets, invented for this test; the
//! arms hang): the segmental CoM is an approximation and the cross-check numbers reflect it.

use assert_cmd::Command;
use std::path::PathBuf;

mod common;

const CONFIG: &str = r#"
[input]
up_axis = "y"
[model]
arms = "hanging"
[virtual]
l_toe = { along = ["l_heel", "l_mt2"], fraction = 1.3 }
r_toe = { along = ["r_heel", "r_mt2"], fraction = 1.3 }
head_top = { frame = ["l_asis", "r_asis", "l_psis"], offset_m = [0.12, 0.06, -0.80] }
c7 = { frame = ["l_asis", "r_asis", "l_psis"], offset_m = [0.12, 0.14, -0.55] }
jugular = { frame = ["l_asis", "r_asis", "l_psis"], offset_m = [0.12, -0.02, -0.50] }
l_acromion = { frame = ["l_asis", "r_asis", "l_psis"], offset_m = [-0.06, 0.08, -0.52] }
r_acromion = { frame = ["l_asis", "r_asis", "l_psis"], offset_m = [0.30, 0.08, -0.52] }
"#;

fn walk_dir() -> PathBuf {
    common::realdata_dir().join("walk-lower-body")
}

#[test]
fn real_walk_plates() {
    let dir = walk_dir();
    let out = tempfile::tempdir().unwrap();
    let config = out.path().join("walk.toml");
    std::fs::write(&config, CONFIG).unwrap();
    // The declared mass is a guess inside the README's range; the implied mass is checked.
    Command::cargo_bin("gravline")
        .unwrap()
        .args(["trial"])
        .arg(dir.join("trial.csv"))
        .args(["--mass-kg", "72", "--height-m", "1.75", "--sex", "male"])
        .arg("--config")
        .arg(&config)
        .arg("--plates")
        .arg(dir.join("plates.csv"))
        .arg("--out")
        .arg(out.path())
        .assert()
        .success();
    let trial = out.path().join("trial");
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(trial.join("summary.json")).unwrap())
            .unwrap();
    let p = &summary["plates"];
    eprintln!("{}", serde_json::to_string_pretty(p).unwrap());

    // Plate assignment: the footfalls on plates, in time order, are 6, 5, 3, 4, each clean.
    let strikes = p["strikes"].as_array().unwrap();
    let on: Vec<&str> = strikes
        .iter()
        .filter(|s| s["on_plate"].as_bool().unwrap())
        .map(|s| s["plate"].as_str().unwrap())
        .collect();
    assert_eq!(on, ["plate6", "plate5", "plate3", "plate4"]);
    assert!(strikes
        .iter()
        .filter(|s| s["on_plate"].as_bool().unwrap())
        .all(|s| s["clean"].as_bool().unwrap()));
    // Plate 4's CoP lies off the foot on it (over 10 cm, all loaded frames) and is not
    // trusted; the other plates' CoP lies under the foot.
    let plate4 = strikes.iter().find(|s| s["plate"] == "plate4").unwrap();
    assert!(plate4["cop_on_foot_share"].as_f64().unwrap() < 0.1);
    assert!(plate4["cop_off_foot_median_m"].as_f64().unwrap() > 0.1);
    for name in ["plate6", "plate5", "plate3"] {
        let s = strikes.iter().find(|s| s["plate"] == name).unwrap();
        assert!(s["cop_on_foot_share"].as_f64().unwrap() > 0.9, "{name}");
    }
    let untrusted: Vec<&str> = p["plates"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|q| !q["cop_trusted"].as_bool().unwrap())
        .map(|q| q["name"].as_str().unwrap())
        .collect();
    assert_eq!(untrusted, ["plate4"]);
    assert!(summary["warnings"].as_array().unwrap().iter().any(|w| w
        .as_str()
        .unwrap()
        .contains("plate `plate4`: its CoP lies outside")));
    // The CoP inside the BoS in at least 95 % of the frames with a CoP.
    assert!(p["cop_inside_bos"]["inside_share"].as_f64().unwrap() >= 0.95);
    // The implied mass over the complete stride: 68-77 kg (README).
    let mass = p["implied_mass"]["mass_kg"].as_f64().unwrap();
    assert!((68.0..=77.0).contains(&mass), "{mass}");
    assert_eq!(p["implied_mass"]["method"], "least-squares");
    // steps.csv names the plate of each step.
    let steps = std::fs::read_to_string(trial.join("steps.csv")).unwrap();
    assert!(steps
        .lines()
        .next()
        .unwrap()
        .ends_with(",plate,clean_strike"));
    assert!(steps.contains(",plate5,true") && steps.contains(",plate4,true"));
    // series.png is written (its fourth panel is the cross-check).
    assert!(trial.join("series.png").exists());
    // frames.csv carries the plate columns.
    let frames = std::fs::read_to_string(trial.join("frames.csv")).unwrap();
    let header = frames.lines().next().unwrap();
    assert!(header.ends_with(
        "grf_x_n,grf_y_n,grf_z_n,cop_x_m,cop_y_m,cop_z_m,grf_complete,com_fused_x_m,com_fused_y_m,com_fused_z_m,com_fused_vx_m_s,com_fused_vy_m_s,com_fused_vz_m_s"
    ));
}
