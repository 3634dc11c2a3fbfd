//! The study dataset of `gravline batch` (hive-partitioned Parquet, read back with polars), the
//! group curves (against a hand computation from the per-trial `cycles.csv`), resuming over a
//! half-written dataset, and `merge` of shard datasets. Trials: synthetic walks
//! (`gravline::synth`, invented data).

mod batch_common;
use batch_common::{csv_maps, gravline, read_csv, write, write_manifest, ManifestRow};
use polars::prelude::*;
use std::path::{Path, PathBuf};

/// A synthetic walk (6 s, 100 Hz, 0.5 mm noise, short gaps) as wide CSV; `seed` changes it.
fn walk_csv(seed: u64) -> String {
    use gravline::synth::{self, Scenario, SynthOptions};
    let mut o = SynthOptions::for_scenario(Scenario::Walk);
    o.seed = seed;
    o.walk_speed_m_s = 1.1 + 0.1 * (seed % 3) as f64;
    let trial = synth::generate(Scenario::Walk, &o);
    let mut bytes = Vec::new();
    synth::write_wide_csv(&trial, "synthetic walk (gravline::synth)", &mut bytes).unwrap();
    String::from_utf8(bytes).unwrap()
}

/// Three walks: two of subject s1 (conditions `slow` and `fast`), one of s2 (`fast`).
fn walk_batch(dir: &Path) -> PathBuf {
    let mut rows = Vec::new();
    for (i, (subject, condition)) in [("s1", "slow"), ("s1", "fast"), ("s2", "fast")]
        .into_iter()
        .enumerate()
    {
        let trial = format!("trials/walk{i}.csv");
        write(&dir.join(&trial), &walk_csv(i as u64 + 1));
        rows.push(ManifestRow {
            trial,
            subject: subject.into(),
            mass_kg: "70".into(),
            height_m: "1.75".into(),
            sex: "male".into(),
            condition: condition.into(),
        });
    }
    let path = dir.join("manifest.csv");
    write_manifest(&path, &rows);
    path
}

fn parquet(path: &Path) -> DataFrame {
    let file = std::fs::File::open(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    ParquetReader::new(file).finish().unwrap()
}

/// Every `*.parquet` under a folder, sorted, relative to it.
fn files_under(root: &Path) -> Vec<PathBuf> {
    fn walk(dir: &Path, root: &Path, out: &mut Vec<PathBuf>) {
        for e in std::fs::read_dir(dir).unwrap().flatten() {
            let p = e.path();
            if p.is_dir() {
                walk(&p, root, out);
            } else {
                out.push(p.strip_prefix(root).unwrap().to_path_buf());
            }
        }
    }
    let mut out = Vec::new();
    if root.is_dir() {
        walk(root, root, &mut out);
    }
    out.sort();
    out
}

const IDS: [(&str, &str, &str); 3] = [
    ("walk0", "s1", "slow"),
    ("walk1", "s1", "fast"),
    ("walk2", "s2", "fast"),
];

fn run_batch(manifest: &Path, out: &Path, extra: &[&str]) -> String {
    let o = gravline()
        .arg("batch")
        .arg(manifest)
        .arg("--out")
        .arg(out)
        .args(["--jobs", "2", "--no-plots"])
        .args(extra)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    String::from_utf8_lossy(&o.stderr).into_owned() + &String::from_utf8_lossy(&o.stdout)
}

/// The dataset holds, per trial, exactly the rows and columns of its `frames.csv` and
/// `cycles.csv` (values to the 6 decimals of the CSV), under
/// `dataset/<table>/subject=<s>/condition=<c>/<id>.parquet`, with the trial id and provenance.
#[test]
fn the_dataset_has_the_rows_of_the_per_trial_files() {
    let dir = tempfile::tempdir().unwrap();
    let manifest = walk_batch(dir.path());
    let out = dir.path().join("out");
    run_batch(&manifest, &out, &[]);
    for table in ["frames", "cycles"] {
        let expect: Vec<PathBuf> = IDS
            .iter()
            .map(|(id, s, c)| PathBuf::from(format!("subject={s}/condition={c}/{id}.parquet")))
            .collect();
        let mut expect = expect;
        expect.sort();
        assert_eq!(
            files_under(&out.join("dataset").join(table)),
            expect,
            "{table}"
        );
    }
    let summary = csv_maps(&out.join("summary.csv"));
    for (id, s, c) in IDS {
        let stored = &summary.iter().find(|r| r["id"] == id).unwrap();
        for table in ["frames", "cycles"] {
            let df = parquet(&out.join(format!(
                "dataset/{table}/subject={s}/condition={c}/{id}.parquet"
            )));
            let (header, rows) = read_csv(&out.join(format!("trials/{id}/{table}.csv")));
            assert!(!rows.is_empty(), "{id} {table}.csv has rows");
            assert_eq!(df.height(), rows.len(), "{id} {table}");
            let names: Vec<String> = df
                .get_column_names()
                .iter()
                .map(|n| n.to_string())
                .collect();
            let mut want = vec!["trial_id".to_string()];
            if table == "frames" {
                want.push("frame".into());
            }
            want.extend(header.iter().cloned());
            want.extend(["gravline_version", "input_sha256", "config_sha256"].map(String::from));
            assert_eq!(names, want);
            for (k, name) in header.iter().enumerate() {
                let col = df.column(name).unwrap().as_materialized_series().clone();
                for (i, row) in rows.iter().enumerate() {
                    let cell = &row[k];
                    let got = col.get(i).unwrap();
                    match got {
                        AnyValue::Null => assert_eq!(cell, "", "{id} {table} {name} row {i}"),
                        AnyValue::Float64(v) => {
                            let want: f64 = cell
                                .parse()
                                .unwrap_or_else(|_| panic!("{name} {i}: `{cell}`"));
                            assert!(
                                (v - want).abs() <= 5.1e-7,
                                "{id} {table} {name} row {i}: {v} vs {want}"
                            );
                        }
                        AnyValue::Boolean(b) => assert_eq!(b.to_string(), *cell),
                        other => assert_eq!(other.str_value(), cell.as_str(), "{name}"),
                    }
                }
            }
            let ids = df.column("trial_id").unwrap().str().unwrap().clone();
            assert!(ids.iter().all(|v| v == Some(id)));
            let sha = df
                .column("input_sha256")
                .unwrap()
                .str()
                .unwrap()
                .get(0)
                .map(str::to_string);
            assert_eq!(sha.as_deref(), Some(stored["input_sha256"].as_str()));
        }
    }
}

/// The group curves against a hand computation from the three trials' `cycles.csv`: for every
/// curve, percent and group, the mean and the sample SD (n - 1) over all cycles of that kind and
/// side, per subject x condition and per condition.
#[test]
fn group_curves_equal_a_hand_computation_on_three_trials() {
    let dir = tempfile::tempdir().unwrap();
    let manifest = walk_batch(dir.path());
    let out = dir.path().join("out");
    run_batch(&manifest, &out, &[]);
    // (by, subject, condition, kind, side, curve, percent) -> values over cycles.
    let mut hand: std::collections::BTreeMap<Vec<String>, Vec<f64>> = Default::default();
    for (id, s, c) in IDS {
        for row in csv_maps(&out.join(format!("trials/{id}/cycles.csv"))) {
            for curve in gravline::cycles::CURVES {
                let Ok(v) = row[curve].parse::<f64>() else {
                    continue;
                };
                for (by, subject) in [("subject_condition", s), ("condition", "")] {
                    let key = [
                        by,
                        subject,
                        c,
                        &row["kind"],
                        &row["side"],
                        curve,
                        &row["percent"],
                    ]
                    .map(String::from)
                    .to_vec();
                    hand.entry(key).or_default().push(v);
                }
            }
        }
    }
    let table = csv_maps(&out.join("group_cycles.csv"));
    let with_values = table.iter().filter(|r| r["n"] != "0").count();
    assert_eq!(
        with_values,
        hand.len(),
        "one line per group, curve and percent"
    );
    assert!(table
        .iter()
        .any(|r| r["by"] == "condition" && r["condition"] == "fast" && r["n_trials"] == "2"));
    for row in &table {
        if row["n"] == "0" {
            continue;
        }
        let key = [
            "by",
            "subject",
            "condition",
            "kind",
            "side",
            "curve",
            "percent",
        ]
        .map(|c| row[c].clone())
        .to_vec();
        let values = &hand[&key];
        assert_eq!(row["n"], values.len().to_string(), "{key:?}");
        let n = values.len() as f64;
        let mean = values.iter().sum::<f64>() / n;
        let got: f64 = row["mean"].parse().unwrap();
        // The CSV values carry 6 decimals; the dataset the full value.
        assert!(
            (got - mean).abs() <= 5.1e-7,
            "{key:?}: mean {got} vs {mean}"
        );
        if values.len() >= 2 {
            let sd = (values.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
            let got: f64 = row["sd"].parse().unwrap();
            assert!((got - sd).abs() <= 1e-6, "{key:?}: sd {got} vs {sd}");
        } else {
            assert_eq!(row["sd"], "");
        }
    }
    // The Parquet table is the same table.
    let df = parquet(&out.join("group_cycles.parquet"));
    assert_eq!(df.height(), table.len());
}

/// A resumed run redoes a trial whose dataset file is missing or half-written (a temporary
/// file left beside it), even though its `summary.json` is complete, and skips the others.
#[test]
fn resume_does_not_trust_a_half_written_dataset() {
    let dir = tempfile::tempdir().unwrap();
    let manifest = walk_batch(dir.path());
    let out = dir.path().join("out");
    run_batch(&manifest, &out, &[]);
    let before = parquet(&out.join("dataset/frames/subject=s1/condition=fast/walk1.parquet"));
    let frames = out.join("dataset/frames/subject=s1/condition=fast/walk1.parquet");
    std::fs::remove_file(&frames).unwrap();
    let tmp = frames.with_file_name(".walk1.parquet.999.tmp");
    std::fs::write(&tmp, b"PAR1 half").unwrap();
    let text = run_batch(&manifest, &out, &["--resume"]);
    assert!(text.contains("1 run, 2 skipped"), "{text}");
    assert!(!tmp.exists(), "the temporary file is cleared");
    let after = parquet(&frames);
    assert!(before.equals_missing(&after));
}

/// Two shards written to their own folders, then merged into a third: the same summary,
/// dataset and group curves as one unsharded run.
#[test]
fn merged_shard_datasets_equal_an_unsharded_run() {
    let dir = tempfile::tempdir().unwrap();
    let manifest = walk_batch(dir.path());
    let whole = dir.path().join("whole");
    run_batch(&manifest, &whole, &[]);
    let (a, b, merged) = (
        dir.path().join("a"),
        dir.path().join("b"),
        dir.path().join("merged"),
    );
    run_batch(&manifest, &a, &["--shard", "1/2"]);
    run_batch(&manifest, &b, &["--shard", "2/2"]);
    let o = gravline()
        .arg("merge")
        .arg(a.join("summary-1-of-2.parquet"))
        .arg(b.join("summary-2-of-2.csv"))
        .arg("--out")
        .arg(&merged)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    for file in ["summary.csv", "group_cycles.csv", "groups.csv"] {
        assert_eq!(
            read_csv(&whole.join(file)),
            read_csv(&merged.join(file)),
            "{file}"
        );
    }
    // merge draws the group figures: mean, band and trials of each main curve.
    for curve in gravline::batch::curves::MAIN_CURVES {
        let png = merged.join(format!("group_figures/stride-left-{curve}.png"));
        let img = image::open(&png).unwrap_or_else(|e| panic!("{}: {e}", png.display()));
        assert_eq!(
            (img.width(), img.height()),
            gravline::report::plots::FIGURE_SIZE_PX
        );
    }
    let files = files_under(&whole.join("dataset"));
    assert_eq!(files.len(), 6);
    assert_eq!(files, files_under(&merged.join("dataset")));
    for f in files {
        assert!(
            parquet(&whole.join("dataset").join(&f))
                .equals_missing(&parquet(&merged.join("dataset").join(&f))),
            "{}",
            f.display()
        );
    }
}
