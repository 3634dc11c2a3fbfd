//! `gravline batch` and `gravline merge` driven as a user would, on synthetic standing trials
//! (invented data): failures are rows, not fatal; the Parquet table equals the CSV table; shards
//! partition the manifest and merge back into the unsharded summary; group statistics match a
//! hand computation.

mod batch_common;

use batch_common::*;
use std::collections::BTreeMap;
use std::path::Path;

/// 40 rows: 37 good trials (two of them share a stem), a garbage file, a trial without the
/// `jugular` column, and a row whose mass is not a number.
fn forty(dir: &Path) -> std::path::PathBuf {
    let (manifest, mut rows) = standing_batch(dir, 37, 120);
    write(&dir.join("a/stand.csv"), &standing_csv(120, 101, None));
    write(&dir.join("b/stand.csv"), &standing_csv(120, 102, None));
    rows[5].trial = "a/stand.csv".into();
    rows[6].trial = "b/stand.csv".into();
    write(
        &dir.join("trials/garbage.csv"),
        "\u{1}\u{2} this is not a trial\nat all,,\n",
    );
    write(
        &dir.join("trials/no_jugular.csv"),
        &standing_csv(120, 7, Some("jugular")),
    );
    write(
        &dir.join("trials/bad_mass.csv"),
        &standing_csv(120, 8, None),
    );
    let extra = [
        ("garbage", "72.5"),
        ("no_jugular", "61"),
        ("bad_mass", "heavy"),
    ];
    for (k, (stem, mass)) in extra.iter().enumerate() {
        rows.insert(
            10 + 10 * k,
            ManifestRow {
                trial: format!("trials/{stem}.csv"),
                subject: "s1".into(),
                mass_kg: mass.to_string(),
                height_m: "1.78".into(),
                sex: "male".into(),
                condition: "eyes_open".into(),
            },
        );
    }
    write_manifest(&manifest, &rows);
    manifest
}

#[test]
fn forty_trials_three_failed_rows_and_the_outputs_of_the_rest() {
    let dir = tempfile::tempdir().unwrap();
    let manifest = forty(dir.path());
    let out = dir.path().join("out");
    let assert = gravline()
        .args([
            "batch",
            manifest.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "--jobs",
            "2",
            "--no-plots",
        ])
        .assert()
        .code(1);
    let stderr = String::from_utf8_lossy(&assert.get_output().stderr).into_owned();
    assert!(stderr.contains("40 trials, 37 ok"), "{stderr}");

    let rows = csv_maps(&out.join("summary.csv"));
    assert_eq!(rows.len(), 40);
    let numbers: Vec<String> = rows.iter().map(|r| r["row"].clone()).collect();
    let expected: Vec<String> = (1..=40).map(|i| i.to_string()).collect();
    assert_eq!(numbers, expected, "rows in manifest order");
    let failed: Vec<&BTreeMap<String, String>> =
        rows.iter().filter(|r| r["status"] == "error").collect();
    assert_eq!(failed.len(), 3);
    assert_eq!(rows.iter().filter(|r| r["status"] == "ok").count(), 37);
    let by_id = |id: &str| {
        rows.iter()
            .find(|r| r["id"] == id)
            .unwrap_or_else(|| panic!("no row {id}"))
    };
    assert!(
        by_id("garbage")["error"].contains("garbage.csv"),
        "{}",
        by_id("garbage")["error"]
    );
    let e = &by_id("no_jugular")["error"];
    assert!(
        e.contains("`jugular`") && e.contains("no_jugular.csv"),
        "{e}"
    );
    let e = &by_id("bad_mass")["error"];
    assert!(
        e.contains("manifest.csv line") && e.contains("mass_kg = `heavy`, not a number"),
        "{e}"
    );
    for r in &failed {
        assert!(!r["error"].contains('\n'));
        assert!(
            stderr.contains(&r["error"]),
            "each failure is printed: {}",
            r["error"]
        );
        assert!(r["com_mean_height_m"].is_empty());
    }
    // Two rows with the stem `stand` get the row number (manifest rows 6 and 7).
    assert_eq!(by_id("stand-row6")["trial"], "a/stand.csv");
    assert_eq!(by_id("stand-row7")["trial"], "b/stand.csv");
    for r in rows.iter().filter(|r| r["status"] == "ok") {
        let trial = out.join("trials").join(&r["id"]);
        for f in ["frames.csv", "summary.json"] {
            assert!(trial.join(f).is_file(), "{} has {f}", r["id"]);
        }
        assert_eq!(r["input_sha256"].len(), 64);
        assert_eq!(r["config_sha256"].len(), 64);
        assert_eq!(r["frames"], "120");
        // A standing CoM sits at about 0.55 of stature (docs/reference/methods.md 6; invented body,
        // so only a wide band).
        let share: f64 = r["com_mean_height_of_stature"].parse().unwrap();
        assert!((0.45..0.65).contains(&share), "{share}");
        let json: serde_json::Value =
            serde_json::from_str(&std::fs::read_to_string(trial.join("summary.json")).unwrap())
                .unwrap();
        let path_m = json["com"]["path_length_m"].as_f64().unwrap();
        approx::assert_relative_eq!(
            r["com_path_length_m"].parse::<f64>().unwrap(),
            path_m,
            max_relative = 0.0
        );
    }
    for r in &failed {
        assert!(!out
            .join("trials")
            .join(&r["id"])
            .join("summary.json")
            .exists());
    }

    // The Parquet table, read with polars, holds the same cells as the CSV table.
    parquet_equals_csv(&out.join("summary.parquet"), &out.join("summary.csv"));
    assert!(out.join("groups.csv").is_file());
}

/// Compares every cell of a Parquet summary with the CSV summary: numbers bit for bit.
fn parquet_equals_csv(parquet: &Path, csv_path: &Path) {
    use polars::prelude::*;
    let df = ParquetReader::new(std::fs::File::open(parquet).unwrap())
        .finish()
        .unwrap();
    let (header, rows) = read_csv(csv_path);
    let names: Vec<String> = df
        .get_column_names()
        .iter()
        .map(|n| n.to_string())
        .collect();
    assert_eq!(names, header);
    assert_eq!(df.height(), rows.len());
    for (k, name) in header.iter().enumerate() {
        let s = df.column(name).unwrap().as_materialized_series().clone();
        for (i, row) in rows.iter().enumerate() {
            let cell = &row[k];
            let v = s.get(i).unwrap();
            match v {
                AnyValue::Null => assert!(cell.is_empty(), "{name} row {i}: null vs `{cell}`"),
                AnyValue::Float64(x) => {
                    assert_eq!(
                        cell.parse::<f64>().unwrap().to_bits(),
                        x.to_bits(),
                        "{name} row {i}"
                    )
                }
                AnyValue::Int64(x) => assert_eq!(cell.parse::<i64>().unwrap(), x, "{name} row {i}"),
                AnyValue::String(x) => assert_eq!(cell, x, "{name} row {i}"),
                AnyValue::StringOwned(x) => assert_eq!(cell, x.as_str(), "{name} row {i}"),
                other => panic!("{name}: unexpected {other:?}"),
            }
        }
    }
}

#[test]
fn shards_partition_the_manifest_and_merge_into_the_unsharded_summary() {
    let dir = tempfile::tempdir().unwrap();
    let (manifest, _) = standing_batch(dir.path(), 11, 80);
    let m = manifest.to_str().unwrap();
    let whole = dir.path().join("whole");
    gravline()
        .args([
            "batch",
            m,
            "--out",
            whole.to_str().unwrap(),
            "--no-plots",
            "-q",
        ])
        .assert()
        .code(0);
    let shards = dir.path().join("shards");
    let mut seen = Vec::new();
    for k in 1..=3 {
        let shard = format!("{k}/3");
        gravline()
            .args([
                "batch",
                m,
                "--out",
                shards.to_str().unwrap(),
                "--shard",
                &shard,
                "--jobs",
                "1",
                "--no-plots",
                "-q",
            ])
            .assert()
            .code(0);
        let rows = csv_maps(&shards.join(format!("summary-{k}-of-3.csv")));
        let numbers: Vec<usize> = rows.iter().map(|r| r["row"].parse().unwrap()).collect();
        let expected: Vec<usize> = (1..=11).filter(|i| (i - 1) % 3 == k - 1).collect();
        assert_eq!(
            numbers,
            expected,
            "shard {k}/3 takes rows i with (i - 1) % 3 == {}",
            k - 1
        );
        seen.extend(numbers);
        assert!(!shards.join("summary.csv").exists() && !shards.join("groups.csv").exists());
    }
    seen.sort_unstable();
    assert_eq!(
        seen,
        (1..=11).collect::<Vec<_>>(),
        "the shards cover every row once"
    );

    // Merge Parquet shards given out of order, then CSV shards: both equal the unsharded run.
    for (ext, order) in [("parquet", [3, 1, 2]), ("csv", [2, 3, 1])] {
        let merged = dir.path().join(format!("merged-{ext}"));
        let inputs: Vec<String> = order
            .iter()
            .map(|k| {
                shards
                    .join(format!("summary-{k}-of-3.{ext}"))
                    .display()
                    .to_string()
            })
            .collect();
        let mut args = vec!["merge".to_string()];
        args.extend(inputs);
        args.extend(["--out".into(), merged.display().to_string()]);
        gravline().args(&args).assert().code(0);
        for f in ["summary.csv", "groups.csv"] {
            assert_eq!(
                std::fs::read_to_string(merged.join(f)).unwrap(),
                std::fs::read_to_string(whole.join(f)).unwrap(),
                "{ext}: merged {f} equals the unsharded one"
            );
        }
        parquet_equals_csv(&merged.join("summary.parquet"), &whole.join("summary.csv"));
    }

    // A shard given twice, or one left out, is refused.
    let one = shards.join("summary-1-of-3.parquet").display().to_string();
    let two = shards.join("summary-2-of-3.parquet").display().to_string();
    let bad = dir.path().join("bad").display().to_string();
    let out = gravline()
        .args(["merge", &one, &one, "--out", &bad])
        .assert()
        .code(2);
    assert!(String::from_utf8_lossy(&out.get_output().stderr).contains("row 1 is in both"));
    let out = gravline()
        .args(["merge", &one, &two, "--out", &bad])
        .assert()
        .code(2);
    assert!(String::from_utf8_lossy(&out.get_output().stderr).contains("rows 3, 6, 9 missing"));
}

/// A summary table written by hand: every column empty except the key, the status and
/// `com_path_length_m` / `min_bos_margin_m`.
/// Row number, subject, condition, `com_path_length_m`, `min_bos_margin_m`.
type HandRow<'a> = (usize, &'a str, &'a str, Option<f64>, Option<f64>);

fn hand_summary(path: &Path, rows: &[HandRow]) {
    let header: Vec<&str> = gravline::batch::table::columns()
        .iter()
        .map(|c| c.0)
        .collect();
    let mut w = csv::Writer::from_path(path).unwrap();
    w.write_record(&header).unwrap();
    for (row, subject, condition, path_m, margin_m) in rows {
        let cells: Vec<String> = header
            .iter()
            .map(|h| match *h {
                "row" => row.to_string(),
                "id" => format!("t{row}"),
                "trial" => format!("t{row}.csv"),
                "subject" => subject.to_string(),
                "condition" => condition.to_string(),
                "status" => "ok".into(),
                "com_path_length_m" => path_m.map_or(String::new(), |v| v.to_string()),
                "min_bos_margin_m" => margin_m.map_or(String::new(), |v| v.to_string()),
                _ => String::new(),
            })
            .collect();
        w.write_record(&cells).unwrap();
    }
    w.flush().unwrap();
}

#[test]
fn groups_equal_a_hand_computation() {
    let dir = tempfile::tempdir().unwrap();
    let table = dir.path().join("hand.csv");
    hand_summary(
        &table,
        &[
            (1, "a", "slow", Some(1.0), Some(0.05)),
            (2, "b", "fast", Some(10.0), Some(0.02)),
            (3, "a", "fast", Some(2.0), None),
            (4, "a", "slow", Some(6.0), Some(0.07)),
            (5, "b", "", Some(20.0), Some(0.04)),
        ],
    );
    let out = dir.path().join("out");
    gravline()
        .args([
            "merge",
            table.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ])
        .assert()
        .code(0);
    let groups = csv_maps(&out.join("groups.csv"));
    let get = |by: &str, group: &str, figure: &str| {
        groups
            .iter()
            .find(|g| g["by"] == by && g["group"] == group && g["figure"] == figure)
            .unwrap_or_else(|| panic!("no {by} {group} {figure}"))
    };
    let num = |s: &str| s.parse::<f64>().unwrap();
    // Hand computation. Subject a, path 1, 2, 6: mean 3, deviations -2, -1, 3, squares 4 + 1 + 9
    // = 14, sample SD sqrt(14 / 2) = sqrt(7).
    let a = get("subject", "a", "com_path_length_m");
    assert_eq!(a["n"], "3");
    approx::assert_abs_diff_eq!(num(&a["mean"]), 3.0, epsilon = 1e-12);
    approx::assert_abs_diff_eq!(num(&a["sd"]), 7.0f64.sqrt(), epsilon = 1e-12);
    // Subject b, path 10, 20: mean 15, SD sqrt((25 + 25) / 1) = sqrt(50).
    let b = get("subject", "b", "com_path_length_m");
    approx::assert_abs_diff_eq!(num(&b["mean"]), 15.0, epsilon = 1e-12);
    approx::assert_abs_diff_eq!(num(&b["sd"]), 50.0f64.sqrt(), epsilon = 1e-12);
    // Subject a, margin 0.05 and 0.07 (one missing): n 2, mean 0.06, SD sqrt(2 * 0.01^2) = 0.01 *
    // sqrt(2).
    let am = get("subject", "a", "min_bos_margin_m");
    assert_eq!(am["n"], "2");
    approx::assert_abs_diff_eq!(num(&am["mean"]), 0.06, epsilon = 1e-12);
    approx::assert_abs_diff_eq!(num(&am["sd"]), 0.01 * 2.0f64.sqrt(), epsilon = 1e-12);
    // Condition fast: path 10 and 2 -> mean 6, SD sqrt(32); slow: 1, 6 -> mean 3.5, SD
    // sqrt(12.5). Row 5 has no condition and is left out of that grouping.
    let fast = get("condition", "fast", "com_path_length_m");
    approx::assert_abs_diff_eq!(num(&fast["mean"]), 6.0, epsilon = 1e-12);
    approx::assert_abs_diff_eq!(num(&fast["sd"]), 32.0f64.sqrt(), epsilon = 1e-12);
    let slow = get("condition", "slow", "com_path_length_m");
    approx::assert_abs_diff_eq!(num(&slow["mean"]), 3.5, epsilon = 1e-12);
    approx::assert_abs_diff_eq!(num(&slow["sd"]), 12.5f64.sqrt(), epsilon = 1e-12);
    assert!(!groups
        .iter()
        .any(|g| g["by"] == "condition" && g["group"].is_empty()));
    // One value: mean, no SD.
    let single = get("condition", "fast", "min_bos_margin_m");
    assert_eq!(
        (
            single["n"].as_str(),
            single["mean"].as_str(),
            single["sd"].as_str()
        ),
        ("1", "0.02", "")
    );
    // Subject a in condition slow: path 1 and 6, mean 3.5, SD sqrt(12.5); a subject's trials in
    // another condition are not averaged in.
    let a_slow = get("subject_condition", "a / slow", "com_path_length_m");
    assert_eq!(a_slow["n"], "2");
    approx::assert_abs_diff_eq!(num(&a_slow["mean"]), 3.5, epsilon = 1e-12);
    approx::assert_abs_diff_eq!(num(&a_slow["sd"]), 12.5f64.sqrt(), epsilon = 1e-12);
    // Groups in order of first appearance: subject a, b; condition slow, fast; subject x
    // condition a / slow, b / fast, a / fast (row 5 has no condition).
    let order: Vec<(String, String)> = groups
        .iter()
        .filter(|g| g["figure"] == "com_path_length_m")
        .map(|g| (g["by"].clone(), g["group"].clone()))
        .collect();
    let expected: Vec<(String, String)> = [
        ("subject", "a"),
        ("subject", "b"),
        ("condition", "slow"),
        ("condition", "fast"),
        ("subject_condition", "a / slow"),
        ("subject_condition", "b / fast"),
        ("subject_condition", "a / fast"),
    ]
    .iter()
    .map(|(a, b)| (a.to_string(), b.to_string()))
    .collect();
    assert_eq!(order, expected);
}

#[test]
fn a_folder_with_subjects_csv_runs_every_trial_in_name_order() {
    let dir = tempfile::tempdir().unwrap();
    for (i, name) in ["b.csv", "a.csv", "c.csv"].iter().enumerate() {
        write(&dir.path().join(name), &standing_csv(60, i as u64, None));
    }
    write(
        &dir.path().join("subjects.csv"),
        "trial,subject,mass_kg,height_m,sex,condition\na.csv,s1,70,1.75,male,x\nb.csv,s2,0,1.6,female,y\n",
    );
    let out = dir.path().join("out");
    gravline()
        .args([
            "batch",
            dir.path().to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ])
        .args(["--mass-kg", "80", "--height-m", "1.8", "--sex", "male"])
        .assert()
        .code(1);
    for f in ["frames.csv", "summary.json", "path.png", "series.png"] {
        assert!(
            out.join("trials/a").join(f).is_file(),
            "plots by default: {f}"
        );
    }
    let rows = csv_maps(&out.join("summary.csv"));
    let ids: Vec<&str> = rows.iter().map(|r| r["id"].as_str()).collect();
    assert_eq!(ids, ["a", "b", "c"]);
    assert_eq!(
        (rows[0]["mass_kg"].as_str(), rows[0]["condition"].as_str()),
        ("70", "x")
    );
    assert!(
        rows[1]["error"].contains("subjects.csv line 3")
            && rows[1]["error"].contains("mass_kg = 0")
    );
    assert_eq!(
        (rows[2]["status"].as_str(), rows[2]["mass_kg"].as_str()),
        ("ok", "80")
    );
}

#[test]
fn a_manifest_without_a_required_column_stops_with_exit_2() {
    let dir = tempfile::tempdir().unwrap();
    let m = dir.path().join("m.csv");
    write(&m, "trial,subject,mass_kg,sex\nx.csv,s1,70,male\n");
    let out = dir.path().join("out");
    let a = gravline()
        .args(["batch", m.to_str().unwrap(), "--out", out.to_str().unwrap()])
        .assert()
        .code(2);
    let stderr = String::from_utf8_lossy(&a.get_output().stderr).into_owned();
    assert!(
        stderr.contains("`height_m`") && stderr.contains("m.csv"),
        "{stderr}"
    );
    assert_eq!(stderr.trim().lines().count(), 1, "{stderr}");
    assert!(!out.join("summary.csv").exists());
    let a = gravline()
        .args([
            "batch",
            dir.path().join("none.csv").to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ])
        .assert()
        .code(2);
    assert!(String::from_utf8_lossy(&a.get_output().stderr).contains("none.csv"));
}

#[test]
fn a_row_config_replaces_the_batch_config_and_a_bad_one_fails_its_row_only() {
    let dir = tempfile::tempdir().unwrap();
    for i in 0..3 {
        write(
            &dir.path().join(format!("t{i}.csv")),
            &standing_csv(60, i, None),
        );
    }
    write(&dir.path().join("base.toml"), "[filter]\ncutoff_hz = 4.0\n");
    write(
        &dir.path().join("cfg/raw.toml"),
        "[filter]\ncutoff_hz = \"none\"\n",
    );
    write(
        &dir.path().join("cfg/typo.toml"),
        "[filter]\ncutof_hz = 6.0\n",
    );
    let m = dir.path().join("m.csv");
    write(
        &m,
        "trial,subject,mass_kg,height_m,sex,config\n\
         t0.csv,s1,70,1.75,male,\n\
         t1.csv,s1,70,1.75,male,cfg/raw.toml\n\
         t2.csv,s1,70,1.75,male,cfg/typo.toml\n",
    );
    let out = dir.path().join("out");
    let base = dir.path().join("base.toml");
    gravline()
        .args([
            "batch",
            m.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "--no-plots",
            "-q",
        ])
        .args(["--config", base.to_str().unwrap()])
        .assert()
        .code(1);
    let rows = csv_maps(&out.join("summary.csv"));
    assert_eq!(
        rows[0]["cutoff_hz"], "4",
        "rows without a config cell use --config"
    );
    assert_eq!(
        (rows[1]["status"].as_str(), rows[1]["cutoff_hz"].as_str()),
        ("ok", "")
    );
    assert!(rows[2]["error"].contains("typo.toml") && rows[2]["error"].contains("cutof_hz"));
    assert_ne!(rows[0]["config_sha256"], rows[1]["config_sha256"]);

    // A --config that does not validate stops the batch before any trial.
    let a = gravline()
        .args([
            "batch",
            m.to_str().unwrap(),
            "--out",
            dir.path().join("o2").to_str().unwrap(),
        ])
        .args([
            "--config",
            dir.path().join("cfg/typo.toml").to_str().unwrap(),
        ])
        .assert()
        .code(2);
    assert!(String::from_utf8_lossy(&a.get_output().stderr).contains("cutof_hz"));
}
