//! Declarations checked against the data and the honest landmark template, through the
//! binary, on the bundled walk (examples/data/walk.csv: synthetic, mm, +z up).
//!
//! A fact of the trade decides every case: a person's foot markers are the lowest and the
//! pelvis and head markers the highest, about half to all of the stature apart (common
//! practice, no source). Metres read as millimetres, millimetres declared metres and a +y-up
//! file read as +z up must stop with exit 2 and the fix; a relabelled copy (upper case, dots)
//! must give the same CoM or exit 2 with every missing landmark.

use assert_cmd::Command;
use std::path::{Path, PathBuf};

fn gravline() -> Command {
    Command::cargo_bin("gravline").unwrap()
}

fn walk() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("examples/data/walk.csv")
}

/// The bundled walk with each marker coordinate triple mapped by `f` and each marker label by
/// `label`.
fn transformed(
    dir: &Path,
    name: &str,
    f: impl Fn([f64; 3]) -> [f64; 3],
    label: impl Fn(&str) -> String,
) -> PathBuf {
    let text = std::fs::read_to_string(walk()).unwrap();
    let mut out = String::new();
    let mut header: Option<Vec<String>> = None;
    for line in text.lines() {
        if line.starts_with('#') {
            continue;
        }
        let cells: Vec<&str> = line.split(',').collect();
        match &header {
            None => {
                let h: Vec<String> = cells
                    .iter()
                    .map(|c| match c.rsplit_once('_') {
                        Some((stem, axis)) if ["x", "y", "z"].contains(&axis) => {
                            format!("{}_{axis}", label(stem))
                        }
                        _ => c.to_string(),
                    })
                    .collect();
                out += &h.join(",");
                out.push('\n');
                header = Some(h);
            }
            Some(_) => {
                let mut row = vec![cells[0].to_string()];
                for triple in cells[1..].chunks(3) {
                    let v: Option<Vec<f64>> = triple.iter().map(|c| c.parse().ok()).collect();
                    match v {
                        Some(v) if v.len() == 3 => {
                            row.extend(f([v[0], v[1], v[2]]).iter().map(|x| format!("{x:.6}")))
                        }
                        _ => row.extend(triple.iter().map(|c| c.to_string())),
                    }
                }
                out += &row.join(",");
                out.push('\n');
            }
        }
    }
    let path = dir.join(name);
    std::fs::write(&path, out).unwrap();
    path
}

const SUBJECT: [&str; 6] = ["--mass-kg", "63", "--height-m", "1.68", "--sex", "female"];

fn run(trial: &Path, config: Option<&str>, out: &Path) -> (i32, String) {
    let mut cmd = gravline();
    cmd.arg("trial").arg(trial).args(SUBJECT);
    cmd.arg("--no-plots").arg("--out").arg(out);
    if let Some(c) = config {
        let path = out.join("config.toml");
        std::fs::create_dir_all(out).unwrap();
        std::fs::write(&path, c).unwrap();
        cmd.arg("--config").arg(path);
    }
    let o = cmd.output().unwrap();
    (
        o.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&o.stderr).to_string(),
    )
}

#[test]
fn metres_read_as_millimetres_stop_with_the_unit_fix() {
    let dir = tempfile::tempdir().unwrap();
    let m = transformed(
        dir.path(),
        "walk_m.csv",
        |p| p.map(|v| v / 1000.0),
        str::to_string,
    );
    let (code, err) = run(&m, Some("[input]\nunits = \"mm\"\n"), &dir.path().join("a"));
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("units = \"m\""), "{err}");
    // Undeclared: the default mm contradicts the data as well, and the detection is named.
    let (code, err) = run(&m, None, &dir.path().join("b"));
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("no [input] units") && err.contains("units = \"m\""),
        "{err}"
    );
}

#[test]
fn millimetres_declared_metres_stop_with_the_unit_fix() {
    let dir = tempfile::tempdir().unwrap();
    let (code, err) = run(&walk(), Some("[input]\nunits = \"m\"\n"), dir.path());
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("units = \"mm\""), "{err}");
}

#[test]
fn a_y_up_file_read_as_z_up_stops_with_the_axis_fix() {
    let dir = tempfile::tempdir().unwrap();
    // (x, y, z) -> (x, z, -y): the old +z (up) becomes +y.
    let y_up = transformed(
        dir.path(),
        "walk_y.csv",
        |p| [p[0], p[2], -p[1]],
        str::to_string,
    );
    let (code, err) = run(
        &y_up,
        Some("[input]\nup_axis = \"z\"\n"),
        &dir.path().join("a"),
    );
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("up_axis = \"y\""), "{err}");
    let (code, err) = run(
        &y_up,
        Some("[input]\nup_axis = \"y\"\n"),
        &dir.path().join("b"),
    );
    assert_eq!(code, 0, "{err}");
}

fn com_columns(frames: &Path) -> Vec<String> {
    std::fs::read_to_string(frames)
        .unwrap()
        .lines()
        .map(|l| l.split(',').take(5).collect::<Vec<_>>().join(","))
        .collect()
}

#[test]
fn the_template_used_as_configuration_gives_the_com_of_no_configuration() {
    let dir = tempfile::tempdir().unwrap();
    let o = gravline().arg("landmarks").arg(walk()).output().unwrap();
    assert!(o.status.success());
    let text = String::from_utf8_lossy(&o.stdout).to_string();
    let template = &text[text.find("\n[landmarks]\n").expect("template") + 1..];
    // Guesses are comments: every live line maps a landmark to a label that folds to it.
    for line in template
        .lines()
        .skip(1)
        .filter(|l| !l.starts_with('#') && !l.is_empty())
    {
        let (k, v) = line.split_once(" = ").unwrap();
        assert_eq!(k, v.trim_matches('"'), "{line}");
    }
    let (code, err) = run(&walk(), None, &dir.path().join("plain"));
    assert_eq!(code, 0, "{err}");
    let (code, err) = run(&walk(), Some(template), &dir.path().join("mapped"));
    assert_eq!(code, 0, "{err}");
    assert_eq!(
        com_columns(&dir.path().join("plain/walk/frames.csv")),
        com_columns(&dir.path().join("mapped/walk/frames.csv"))
    );
}

#[test]
fn relabelled_upper_case_dotted_labels_give_the_same_com() {
    let dir = tempfile::tempdir().unwrap();
    let up = transformed(
        dir.path(),
        "walk.csv",
        |p| p,
        |l| l.to_uppercase().replace('_', "."),
    );
    let (code, err) = run(&walk(), None, &dir.path().join("plain"));
    assert_eq!(code, 0, "{err}");
    let (code, err) = run(&up, None, &dir.path().join("upper"));
    assert_eq!(code, 0, "{err}");
    let a = com_columns(&dir.path().join("plain/walk/frames.csv"));
    let b = com_columns(&dir.path().join("upper/walk/frames.csv"));
    assert_eq!(a, b);
}

#[test]
fn missing_landmarks_are_listed_at_once_and_unknown_keys_are_errors() {
    let dir = tempfile::tempdir().unwrap();
    let renamed = transformed(
        dir.path(),
        "walk_r.csv",
        |p| p,
        |l| match l {
            "c7" | "l_acromion" | "l_heel" => format!("lab_{l}_marker"),
            other => other.to_string(),
        },
    );
    let (code, err) = run(&renamed, None, &dir.path().join("a"));
    assert_eq!(code, 2, "{err}");
    for name in ["c7", "l_acromion", "l_heel"] {
        assert!(err.contains(name), "{name} not listed: {err}");
    }
    assert!(err.contains("gravline landmarks"), "{err}");
    let (code, err) = run(
        &walk(),
        Some("[landmarks]\nl_kne_lat = \"l_knee_lat\"\n"),
        &dir.path().join("b"),
    );
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("`l_kne_lat`") && err.contains("`l_knee_lat`"),
        "{err}"
    );
}

/// A stature far from the body's (1.00 m given for the 1.68 m walker): the implausible
/// figures (CoM at 0.93 of stature, thighs 1.7 times their usual share; Drillis & Contini 1966
/// proportions) survive `-q` as one line, and the run still exits 0.
#[test]
fn implausible_figures_survive_quiet_as_one_line() {
    let dir = tempfile::tempdir().unwrap();
    let o = gravline()
        .arg("trial")
        .arg(walk())
        .args([
            "--mass-kg",
            "63",
            "--height-m",
            "1.0",
            "--sex",
            "female",
            "-q",
        ])
        .arg("--no-plots")
        .arg("--out")
        .arg(dir.path())
        .output()
        .unwrap();
    assert!(o.status.success());
    let err = String::from_utf8_lossy(&o.stderr).to_string();
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(err.starts_with("walk: suspect: mean CoM height"), "{err}");
}
