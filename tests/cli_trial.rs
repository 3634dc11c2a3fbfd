//! `gravline trial` driven as a user would: the exact frames.csv header, and every bad-input
//! case of the trial reader exits 2 with a one-line message and leaves no output behind.

use assert_cmd::Command;
use std::path::Path;

const HEADER: &str = "time_s,valid,com_x_m,com_y_m,com_z_m,com_vx_m_s,com_vy_m_s,com_vz_m_s,com_speed_m_s,com_ax_m_s2,com_ay_m_s2,com_az_m_s2,xcom_x_m,xcom_y_m,xcom_z_m,bos_area_m2,bos_margin_m,mos_m,mos_ap_m,mos_ml_m,contact_left,contact_right";

/// A standing body in millimetres, +z up, every landmark the default model needs (invented).
fn body_csv(frames: usize) -> String {
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
            ("mt2", [150.0, 85.0, 20.0]),
            ("mt5", [120.0, 130.0, 20.0]),
        ] {
            markers.push((format!("{s}_{stem}"), [p[0], p[1] * y, p[2]]));
        }
    }
    let mut csv = String::from("# standing, invented for the test\ntime");
    for (m, _) in &markers {
        csv.push_str(&format!(",{m}_x,{m}_y,{m}_z"));
    }
    csv.push('\n');
    for f in 0..frames {
        csv.push_str(&format!("{:.3}", f as f64 / 100.0));
        for (_, p) in &markers {
            csv.push_str(&format!(",{},{},{}", p[0], p[1], p[2]));
        }
        csv.push('\n');
    }
    csv
}

fn gravline() -> Command {
    Command::cargo_bin("gravline").unwrap()
}

fn run_trial(dir: &Path, name: &str, content: &str, extra: &[&str]) -> assert_cmd::assert::Assert {
    let path = dir.join(name);
    std::fs::write(&path, content).unwrap();
    gravline()
        .arg("trial")
        .arg(&path)
        .args([
            "--mass-kg",
            "70",
            "--height-m",
            "1.75",
            "--sex",
            "female",
            "--no-plots",
            "--out",
        ])
        .arg(dir.join("out"))
        .args(extra)
        .assert()
}

#[test]
fn trial_writes_the_exact_header_and_a_summary() {
    let dir = tempfile::tempdir().unwrap();
    run_trial(dir.path(), "stand.csv", &body_csv(50), &[]).success();
    let frames = std::fs::read_to_string(dir.path().join("out/stand/frames.csv")).unwrap();
    assert_eq!(frames.lines().next().unwrap(), HEADER);
    assert_eq!(frames.lines().count(), 51);
    let summary: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(dir.path().join("out/stand/summary.json")).unwrap(),
    )
    .unwrap();
    assert_eq!(summary["frames"], 50);
    assert_eq!(summary["valid_fraction"], 1.0);
    assert!(summary["cautions"][1]
        .as_str()
        .unwrap()
        .contains("not a medical device"));
}

#[test]
fn segments_flag_adds_segment_columns() {
    let dir = tempfile::tempdir().unwrap();
    run_trial(dir.path(), "stand.csv", &body_csv(10), &["--segments"]).success();
    let frames = std::fs::read_to_string(dir.path().join("out/stand/frames.csv")).unwrap();
    let header = frames.lines().next().unwrap();
    assert!(header.starts_with(HEADER));
    assert!(
        header.ends_with(",seg_r_foot_x_m,seg_r_foot_y_m,seg_r_foot_z_m"),
        "{header}"
    );
}

/// Each bad input: exit code 2, one line on stderr naming the file (and line/column or marker
/// where it applies) with a hint, and no output folder.
#[test]
fn bad_inputs_exit_2_with_one_line_and_no_output() {
    let good = body_csv(5);
    let lines: Vec<&str> = good.lines().collect();
    let header = lines[1];
    let row = |i: usize| lines[2 + i].to_string();
    let swap_cell = |r: &str, col: usize, text: &str| {
        let mut cells: Vec<&str> = r.split(',').collect();
        cells[col] = text;
        cells.join(",")
    };
    let cases: Vec<(&str, String, Vec<&str>)> = vec![
        ("empty", String::new(), vec!["empty"]),
        ("header only", format!("{header}\n"), vec!["no data"]),
        (
            "no time column",
            format!("{}\n{}\n", header.replacen("time", "stamp", 1), row(0)),
            vec!["time", "frame"],
        ),
        (
            "frame without rate",
            format!(
                "{}\n{}\n",
                header.replacen("time", "frame", 1),
                row(0).replacen("0.000", "1", 1)
            ),
            vec!["rate"],
        ),
        (
            "non-numeric cell",
            format!("{header}\n{}\n{}\n", row(0), swap_cell(&row(1), 7, "1.2.3")),
            vec!["line 3", "1.2.3", "not a number"],
        ),
        (
            "ragged row",
            format!(
                "{header}\n{}\n{}\n",
                row(0),
                row(1).rsplit_once(',').unwrap().0
            ),
            vec!["line 3"],
        ),
        (
            "time not increasing",
            format!("{header}\n{}\n{}\n{}\n", row(0), row(1), row(1)),
            vec!["line 4", "increas"],
        ),
        (
            "uneven rate",
            format!(
                "{header}\n{}\n{}\n{}\n{}\n{}\n",
                row(0),
                row(1),
                row(2),
                swap_cell(&row(3), 0, "0.035"),
                row(4)
            ),
            vec!["line 5", "rate"],
        ),
        (
            "partial marker",
            format!("{}\n{}\n", header.replacen(",c7_z", ",c7_q", 1), row(0)),
            vec!["c7"],
        ),
        (
            "duplicated label",
            format!("{}\n{}\n", header.replacen("jugular", "c7", 3), row(0)),
            vec!["c7"],
        ),
    ];
    for (what, content, needles) in cases {
        let dir = tempfile::tempdir().unwrap();
        let out = run_trial(dir.path(), "bad.csv", &content, &[]).code(2);
        let stderr = String::from_utf8_lossy(&out.get_output().stderr).to_string();
        assert_eq!(stderr.trim_end().lines().count(), 1, "{what}: {stderr}");
        assert!(stderr.contains("bad.csv"), "{what}: {stderr}");
        for n in needles {
            assert!(stderr.contains(n), "{what}: `{n}` not in {stderr}");
        }
        assert!(!dir.path().join("out").exists(), "{what}: output written");
    }
}

#[test]
fn a_missing_landmark_names_the_label_and_the_closest_ones() {
    let content = body_csv(5).replace("l_knee_lat_", "l_knee_lateral_");
    let dir = tempfile::tempdir().unwrap();
    let out = run_trial(dir.path(), "stand.csv", &content, &[]).code(2);
    let stderr = String::from_utf8_lossy(&out.get_output().stderr).to_string();
    assert!(
        stderr.contains("`l_knee_lat`")
            && stderr.contains("l_knee_lateral")
            && stderr.contains("[landmarks]"),
        "{stderr}"
    );
    assert!(!dir.path().join("out").exists());
}

/// The second built-in table runs on the same marker set; a standing CoM lies at 0.53-0.59 of
/// stature (docs/reference/methods.md 6: 0.5527, Whiplash Injuries chapter; textbooks 55-57 %).
#[test]
fn dempster_winter_table_runs_end_to_end() {
    let dir = tempfile::tempdir().unwrap();
    run_trial(
        dir.path(),
        "stand.csv",
        &body_csv(20),
        &["--table", "dempster-winter"],
    )
    .success();
    let summary: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(dir.path().join("out/stand/summary.json")).unwrap(),
    )
    .unwrap();
    assert_eq!(summary["provenance"]["model"]["table"], "dempster-winter");
    let share = summary["com"]["mean_height_of_stature"].as_f64().unwrap();
    assert!((0.53..=0.59).contains(&share), "{share}");
}
