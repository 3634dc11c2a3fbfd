//! Hostile and unlucky inputs, driven through the binary as a user would: trial files with
//! names that try to leave their folder, devices and pipes where files belong, configurations
//! too large to read, input echoed in errors, a cut-off too low to mean anything. Every case
//! ends with a one-line error (or a failed row) and nothing written outside `--out`. Trials
//! are synthetic standing trials (`gravline::synth`, invented data).

mod batch_common;

use batch_common::*;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

/// Every file under `dir`, relative to it.
fn tree(dir: &Path) -> Vec<PathBuf> {
    let mut out = Vec::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                stack.push(p.clone());
            }
            out.push(p.strip_prefix(dir).unwrap().to_path_buf());
        }
    }
    out.sort();
    out
}

/// The stderr of a finished command, checked to be at most `lines` lines, none long.
fn short_stderr(output: &std::process::Output, lines: usize) -> String {
    let err = String::from_utf8_lossy(&output.stderr).into_owned();
    assert!(err.lines().count() <= lines, "{err}");
    for l in err.lines() {
        assert!(l.chars().count() < 700, "a line of {} chars", l.len());
    }
    err
}

fn manifest_line(trial: &str, sex: &str, config: &str) -> String {
    format!("{trial},s1,70,1.75,{sex},{config}\n")
}

const HEADER: &str = "trial,subject,mass_kg,height_m,sex,config\n";

#[test]
fn hostile_trial_names_stay_in_their_own_folders() {
    let dir = tempfile::tempdir().unwrap();
    let data = dir.path().join("data");
    let names = [
        "..csv",
        "...csv",
        "line\nbreak.csv",
        "<script>alert(1)<\\script>.csv",
        ".hidden.csv",
        "Walk.csv",
        "walk.csv",
    ];
    let mut manifest = String::from(HEADER);
    for (k, name) in names.iter().enumerate() {
        write(&data.join(name), &standing_csv(60, k as u64, None));
        // The CSV writer quotes the cell holding a line break.
        let mut w = csv::Writer::from_writer(Vec::new());
        w.write_record([*name, "s1", "70", "1.75", "male", ""])
            .unwrap();
        manifest.push_str(std::str::from_utf8(&w.into_inner().unwrap()).unwrap());
    }
    // A trial in a sub-folder reached through `..`: its id is still its plain stem.
    write(&data.join("sub/deep.csv"), &standing_csv(60, 9, None));
    manifest.push_str(&manifest_line("sub/../sub/deep.csv", "male", ""));
    write(&data.join("manifest.csv"), &manifest);
    let out = dir.path().join("out");
    let output = gravline()
        .args(["batch", "--no-plots", "-q", "--jobs", "2", "--out"])
        .arg(&out)
        .arg(data.join("manifest.csv"))
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(0), "{output:?}");
    // The batch's own files, and one folder per trial under trials/, nothing else.
    let mut top: Vec<String> = std::fs::read_dir(&out)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    top.sort();
    assert_eq!(
        top,
        [
            "dataset",
            "groups.csv",
            "report.html",
            "summary.csv",
            "summary.parquet",
            "trials"
        ]
    );
    let mut ids: Vec<String> = std::fs::read_dir(out.join("trials"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    ids.sort();
    assert_eq!(
        ids,
        [
            "Walk-row6",
            "_",
            "__",
            "_hidden",
            "_script_alert_1___script_",
            "deep",
            "line_break",
            "walk-row7"
        ]
    );
    for id in &ids {
        let files: Vec<PathBuf> = tree(&out.join("trials").join(id));
        assert!(
            files.contains(&PathBuf::from("summary.json"))
                && files.contains(&PathBuf::from("frames.csv")),
            "{id}: {files:?}"
        );
        assert!(
            files.iter().all(|f| f.components().count() == 1),
            "{files:?}"
        );
    }
    let rows = csv_maps(&out.join("summary.csv"));
    assert_eq!(rows.len(), names.len() + 1);
    assert!(rows.iter().all(|r| r["status"] == "ok"), "{rows:?}");
}

#[test]
fn a_trial_named_dot_dot_on_the_command_line_gets_its_own_folder() {
    let dir = tempfile::tempdir().unwrap();
    let trial = dir.path().join("..csv");
    write(&trial, &standing_csv(60, 1, None));
    let out = dir.path().join("out");
    gravline()
        .args([
            "trial",
            "--no-plots",
            "-q",
            "--mass-kg",
            "70",
            "--height-m",
            "1.75",
            "--sex",
            "male",
            "--out",
        ])
        .arg(&out)
        .arg(&trial)
        .assert()
        .success();
    assert_eq!(
        tree(&out),
        [
            PathBuf::from("_"),
            PathBuf::from("_/frames.csv"),
            PathBuf::from("_/report.html"),
            PathBuf::from("_/summary.json")
        ]
    );
}

#[cfg(unix)]
#[test]
fn a_device_as_the_manifest_fails_at_once() {
    let dir = tempfile::tempdir().unwrap();
    let start = Instant::now();
    let output = gravline()
        .args(["batch", "/dev/zero", "--out"])
        .arg(dir.path().join("out"))
        .timeout(Duration::from_secs(60))
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(2), "{output:?}");
    let err = short_stderr(&output, 1);
    assert!(
        err.contains("/dev/zero") && err.contains("a device, not a regular file"),
        "{err}"
    );
    assert!(start.elapsed() < Duration::from_secs(30));
    assert!(!dir.path().join("out").exists());
}

/// A FIFO made with mkfifo (coreutils).
#[cfg(unix)]
fn fifo(path: &Path) {
    let made = std::process::Command::new("mkfifo")
        .arg(path)
        .status()
        .expect("mkfifo (coreutils) is needed by this test");
    assert!(made.success());
}

#[cfg(unix)]
#[test]
fn pipes_as_manifest_configuration_subject_or_table_are_refused_without_blocking() {
    let dir = tempfile::tempdir().unwrap();
    let pipe = dir.path().join("pipe.csv");
    fifo(&pipe);
    let trial = dir.path().join("t.csv");
    write(&trial, &standing_csv(60, 1, None));
    let subject = ["--mass-kg", "70", "--height-m", "1.75", "--sex", "male"];
    let runs: Vec<Vec<std::ffi::OsString>> = vec![
        vec!["batch".into(), pipe.clone().into()],
        vec![
            "trial".into(),
            trial.clone().into(),
            "--config".into(),
            pipe.clone().into(),
        ],
        vec![
            "trial".into(),
            trial.clone().into(),
            "--subject".into(),
            pipe.clone().into(),
        ],
        vec![
            "trial".into(),
            trial.clone().into(),
            "--table".into(),
            pipe.clone().into(),
        ],
    ];
    for (k, args) in runs.into_iter().enumerate() {
        let mut cmd = gravline();
        cmd.args(&args).arg("--out").arg(dir.path().join("out"));
        if k == 1 || k == 3 {
            cmd.args(subject);
        }
        let output = cmd.timeout(Duration::from_secs(60)).output().unwrap();
        assert_eq!(output.status.code(), Some(2), "{args:?}: {output:?}");
        let err = short_stderr(&output, 1);
        assert!(err.contains("a pipe (FIFO)"), "{args:?}: {err}");
    }
}

#[cfg(unix)]
#[test]
fn a_device_named_in_a_manifest_fails_its_row_only() {
    let dir = tempfile::tempdir().unwrap();
    write(&dir.path().join("a.csv"), &standing_csv(60, 1, None));
    write(&dir.path().join("b.csv"), &standing_csv(60, 2, None));
    let manifest = dir.path().join("m.csv");
    write(
        &manifest,
        &format!(
            "{HEADER}{}{}{}",
            manifest_line("a.csv", "male", "/dev/zero"),
            manifest_line("b.csv", "male", ""),
            manifest_line("/dev/zero", "male", "")
        ),
    );
    let out = dir.path().join("out");
    let output = gravline()
        .args(["batch", "--no-plots", "--out"])
        .arg(&out)
        .arg(&manifest)
        .timeout(Duration::from_secs(120))
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1), "{output:?}");
    let rows = csv_maps(&out.join("summary.csv"));
    assert_eq!(
        rows.iter()
            .map(|r| r["status"].as_str())
            .collect::<Vec<_>>(),
        ["error", "ok", "error"]
    );
    for r in [&rows[0], &rows[2]] {
        assert!(
            r["error"].contains("/dev/zero") && r["error"].contains("a device"),
            "{}",
            r["error"]
        );
    }
}

#[test]
fn a_configuration_too_large_to_be_one_is_refused_by_its_size() {
    let dir = tempfile::tempdir().unwrap();
    let config = dir.path().join("big.toml");
    // 200 MB, sparse: the size alone refuses it, nothing is read.
    std::fs::File::create(&config)
        .unwrap()
        .set_len(200_000_000)
        .unwrap();
    let trial = dir.path().join("t.csv");
    write(&trial, &standing_csv(60, 1, None));
    let output = gravline()
        .args([
            "trial",
            "--mass-kg",
            "70",
            "--height-m",
            "1.75",
            "--sex",
            "male",
        ])
        .arg(&trial)
        .arg("--config")
        .arg(&config)
        .arg("--out")
        .arg(dir.path().join("out"))
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(2));
    let err = short_stderr(&output, 1);
    assert!(
        err.contains("big.toml") && err.contains("larger than 4 MiB"),
        "{err}"
    );
}

#[test]
fn input_echoed_in_row_errors_is_short_and_on_one_line() {
    let dir = tempfile::tempdir().unwrap();
    write(&dir.path().join("a.csv"), &standing_csv(60, 1, None));
    write(&dir.path().join("b.csv"), &standing_csv(60, 2, None));
    write(&dir.path().join("c.csv"), &standing_csv(60, 3, None));
    // An unknown table name of 3 MB (under the size limit, so the file is parsed).
    let long_name = "x".repeat(3_000_000);
    write(
        &dir.path().join("long.toml"),
        &format!("[model]\ntable = \"{long_name}\"\n"),
    );
    let manifest = dir.path().join("m.csv");
    write(
        &manifest,
        &format!(
            "{HEADER}{}{}{}",
            manifest_line("a.csv", "male", "long.toml"),
            // A quoted sex cell holding line breaks and the next rows of a file.
            manifest_line("b.csv", "\"ma\nc.csv,s2,61,1.6,female,\nle\"", ""),
            manifest_line("c.csv", "female", "")
        ),
    );
    let out = dir.path().join("out");
    let started = Instant::now();
    let output = gravline()
        .args(["batch", "--no-plots", "--out"])
        .arg(&out)
        .arg(&manifest)
        .timeout(Duration::from_secs(120))
        .output()
        .unwrap();
    assert!(started.elapsed() < Duration::from_secs(60));
    assert_eq!(output.status.code(), Some(1), "{output:?}");
    // Two rows fail: each message is one line on stderr and one row in the summary.
    let err = short_stderr(&output, 10);
    assert!(
        err.lines().any(|l| l.contains("unknown table `xxx")),
        "{err}"
    );
    let text = std::fs::read_to_string(out.join("summary.csv")).unwrap();
    assert_eq!(text.lines().count(), 4, "one line per row:\n{text}");
    let rows = csv_maps(&out.join("summary.csv"));
    let e0 = &rows[0]["error"];
    assert!(e0.contains("unknown table `xxx") && e0.len() < 300, "{e0}");
    let e1 = &rows[1]["error"];
    assert!(
        e1.contains("sex = `ma\\nc.csv,s2,61,1.6,female,\\nle`; use female or male")
            && !e1.contains('\n'),
        "{e1}"
    );
    assert_eq!(rows[2]["status"], "ok");
}

#[test]
fn a_cutoff_below_the_floor_is_refused_with_the_key() {
    let dir = tempfile::tempdir().unwrap();
    let trial = dir.path().join("t.csv");
    write(&trial, &standing_csv(60, 1, None));
    let config = dir.path().join("c.toml");
    write(&config, "[filter]\ncutoff_hz = 0.001\n");
    let base = |cmd: &mut assert_cmd::Command| {
        cmd.args([
            "trial",
            "--mass-kg",
            "70",
            "--height-m",
            "1.75",
            "--sex",
            "male",
        ])
        .arg(&trial)
        .arg("--out")
        .arg(dir.path().join("out"));
    };
    let mut by_file = gravline();
    base(&mut by_file);
    let output = by_file.arg("--config").arg(&config).output().unwrap();
    assert_eq!(output.status.code(), Some(2));
    let err = short_stderr(&output, 1);
    assert!(
        err.contains("c.toml") && err.contains("[filter] cutoff_hz = 0.001 is below 0.5 Hz"),
        "{err}"
    );
    let mut by_flag = gravline();
    base(&mut by_flag);
    let output = by_flag.args(["--cutoff-hz", "0.2"]).output().unwrap();
    assert_eq!(output.status.code(), Some(2));
    assert!(short_stderr(&output, 1).contains("cutoff_hz = 0.2 is below"));
    assert!(!dir.path().join("out").exists());
}
