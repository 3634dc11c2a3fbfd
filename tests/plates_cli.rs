//! `--plates` and `[support] com = "fused"` through the binary, on the synthetic walk with
//! plates computed from the model (src/synth/plates.rs), written in our plate CSV layout.

use assert_cmd::Command;
use gravline::synth::plates::{synth_plates, write_plates_csv};
use gravline::synth::{generate, write_wide_csv, Scenario, SynthOptions};

#[test]
fn plates_flag_and_fused_margins() {
    let o = SynthOptions::for_scenario(Scenario::Walk);
    let dir = tempfile::tempdir().unwrap();
    let trial = dir.path().join("walk.csv");
    let plates = dir.path().join("walk_plates.csv");
    let s = generate(Scenario::Walk, &o);
    write_wide_csv(&s, "synthetic walk", std::fs::File::create(&trial).unwrap()).unwrap();
    let sp = synth_plates(Scenario::Walk, &o, 500.0);
    write_plates_csv(&sp.recording, std::fs::File::create(&plates).unwrap()).unwrap();
    let mut toml = String::from("[support]\ncom = \"fused\"\n");
    for p in &sp.setups {
        toml.push_str(&format!(
            "[[plate]]\nname = \"{}\"\ncorners_m = {:?}\n",
            p.name, p.corners_m
        ));
    }
    let config = dir.path().join("c.toml");
    std::fs::write(&config, toml).unwrap();
    let run = |extra: &[&str]| {
        Command::cargo_bin("gravline")
            .unwrap()
            .arg("trial")
            .arg(&trial)
            .args([
                "--mass-kg",
                "70",
                "--height-m",
                "1.75",
                "--sex",
                "male",
                "--no-plots",
            ])
            .args(extra)
            .arg("--out")
            .arg(dir.path())
            .assert()
    };
    run(&[
        "--config",
        config.to_str().unwrap(),
        "--plates",
        plates.to_str().unwrap(),
    ])
    .success();
    let summary: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(dir.path().join("walk/summary.json")).unwrap(),
    )
    .unwrap();
    let p = &summary["plates"];
    let clean = p["strikes"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|s| s["clean"].as_bool().unwrap())
        .count();
    assert_eq!(clean, 4);
    assert!(
        p["implied_mass"]["difference_percent"]
            .as_f64()
            .unwrap()
            .abs()
            < 1.0
    );
    // `[support] com = "fused"`: the XCoM uses the fused CoM where it exists (frames with a
    // fused CoM differ from the segmental run, all others are the same).
    let fused_frames = std::fs::read_to_string(dir.path().join("walk/frames.csv")).unwrap();
    let segmental = dir.path().join("segmental.toml");
    let toml = std::fs::read_to_string(&config)
        .unwrap()
        .replace("com = \"fused\"", "com = \"segmental\"");
    std::fs::write(&segmental, toml).unwrap();
    run(&[
        "--config",
        segmental.to_str().unwrap(),
        "--plates",
        plates.to_str().unwrap(),
    ])
    .success();
    let segmental_frames = std::fs::read_to_string(dir.path().join("walk/frames.csv")).unwrap();
    let column = |text: &str, name: &str| -> Vec<String> {
        let mut lines = text.lines();
        let header: Vec<&str> = lines.next().unwrap().split(',').collect();
        let i = header.iter().position(|h| *h == name).unwrap();
        lines
            .map(|l| l.split(',').nth(i).unwrap().to_string())
            .collect()
    };
    let (xf, xs) = (
        column(&fused_frames, "xcom_x_m"),
        column(&segmental_frames, "xcom_x_m"),
    );
    let has_fused = column(&fused_frames, "com_fused_x_m");
    let mut differing = 0;
    for ((a, b), fused) in xf.iter().zip(&xs).zip(&has_fused) {
        if fused.is_empty() {
            assert_eq!(a, b);
        } else if a != b {
            differing += 1;
        }
    }
    assert!(differing > 50, "{differing}");
    // A plate file whose cell is not a number: a one-line error naming file, line and column.
    std::fs::write(
        &plates,
        "time_s,a_fx_n,a_fy_n,a_fz_n,a_cop_x_m,a_cop_y_m,a_cop_z_m\n0,0,0,zero,,,\n",
    )
    .unwrap();
    let out = run(&["--plates", plates.to_str().unwrap()])
        .failure()
        .get_output()
        .stderr
        .clone();
    let text = String::from_utf8_lossy(&out);
    assert!(
        text.contains("walk_plates.csv line 2") && text.contains("a_fz_n"),
        "{text}"
    );
}
