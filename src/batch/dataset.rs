//! The study's frame-level dataset: every trial's frames (the columns of `frames.csv`) and
//! normalized cycles (the columns of `cycles.csv`, [`crate::cycles`]) as Parquet files (polars)
//! partitioned hive-style by subject and condition, the layout dataframe and SQL engines scan
//! as one table:
//!
//! ```text
//! <out>/dataset/frames/subject=<s>/condition=<c>/<id>.parquet
//! <out>/dataset/cycles/subject=<s>/condition=<c>/<id>.parquet
//! ```
//!
//! Partition values are percent-encoded (bytes outside `A-Z a-z 0-9 - _ .` become `%XX`, as
//! hive does); a missing subject or condition is `__HIVE_DEFAULT_PARTITION__` (hive's name for
//! null). The partition columns live in the folder names only, as the layout wants. Every file
//! also holds `trial_id` and the provenance columns `gravline_version`, `input_sha256` and
//! `config_sha256` of the trial's `summary.json`. Files are written through a temporary name
//! and a rename ([`crate::report::write_atomic`]); the temporary names are hidden and end in
//! `.tmp`, so scanners skip them. Units: as in `frames.csv` and `cycles.csv` (SI, the unit in
//! every column name).

use crate::cycles::{Cycle, COLUMNS as CYCLE_COLUMNS, POINTS};
use crate::pipeline::TrialResult;
use crate::report::Summary;
use polars::prelude::*;
use std::path::{Path, PathBuf};

/// Hive's folder value of a null partition key.
pub const NULL_PARTITION: &str = "__HIVE_DEFAULT_PARTITION__";

/// The two tables of the dataset.
pub const TABLES: [&str; 2] = ["frames", "cycles"];

/// Where a trial sits in the dataset.
#[derive(Clone, Copy, Debug)]
pub struct TrialKey<'a> {
    pub id: &'a str,
    pub subject: Option<&'a str>,
    pub condition: Option<&'a str>,
}

/// Percent-encodes a partition value (hive-style).
///
/// ```
/// use gravline::batch::dataset::encode_value;
/// assert_eq!(encode_value("s 1/a"), "s%201%2Fa");
/// assert_eq!(encode_value("ok-1_2.3"), "ok-1_2.3");
/// ```
pub fn encode_value(value: &str) -> String {
    let mut s = String::with_capacity(value.len());
    for b in value.bytes() {
        if b.is_ascii_alphanumeric() || matches!(b, b'-' | b'_' | b'.') {
            s.push(b as char);
        } else {
            s.push_str(&format!("%{b:02X}"));
        }
    }
    s
}

/// Decodes a value written by [`encode_value`]; [`NULL_PARTITION`] is `None`.
pub fn decode_value(text: &str) -> Option<String> {
    if text == NULL_PARTITION {
        return None;
    }
    let bytes = text.as_bytes();
    let mut out = Vec::with_capacity(bytes.len());
    let mut i = 0;
    while i < bytes.len() {
        let hex = bytes
            .get(i + 1..i + 3)
            .and_then(|h| std::str::from_utf8(h).ok())
            .and_then(|h| u8::from_str_radix(h, 16).ok());
        match (bytes[i], hex) {
            (b'%', Some(b)) => {
                out.push(b);
                i += 3;
            }
            (b, _) => {
                out.push(b);
                i += 1;
            }
        }
    }
    Some(String::from_utf8_lossy(&out).into_owned())
}

/// The partition folder of a subject and condition, relative to a table's folder.
pub fn partition(subject: Option<&str>, condition: Option<&str>) -> PathBuf {
    let part = |v: Option<&str>| v.map_or(NULL_PARTITION.to_string(), encode_value);
    PathBuf::from(format!("subject={}", part(subject)))
        .join(format!("condition={}", part(condition)))
}

/// The file of a trial in `table` (`frames` or `cycles`).
pub fn trial_file(out_dir: &Path, table: &str, key: &TrialKey) -> PathBuf {
    out_dir
        .join("dataset")
        .join(table)
        .join(partition(key.subject, key.condition))
        .join(format!("{}.parquet", key.id))
}

/// Whether both files of a trial are in the dataset.
pub fn has_trial(out_dir: &Path, key: &TrialKey) -> bool {
    TABLES.iter().all(|t| trial_file(out_dir, t, key).is_file())
}

/// Removes a trial's files and any temporary file a killed run left beside them.
pub fn remove_trial(out_dir: &Path, key: &TrialKey) {
    for table in TABLES {
        let file = trial_file(out_dir, table, key);
        let _ = std::fs::remove_file(&file);
        let Some(dir) = file.parent() else { continue };
        let prefix = format!(".{}.parquet.", key.id);
        for entry in std::fs::read_dir(dir).into_iter().flatten().flatten() {
            let name = entry.file_name().to_string_lossy().into_owned();
            if name.starts_with(&prefix) && name.ends_with(".tmp") {
                let _ = std::fs::remove_file(entry.path());
            }
        }
    }
}

fn polars_io(e: PolarsError) -> std::io::Error {
    std::io::Error::other(e.to_string())
}

/// The provenance columns, `n` rows each.
fn provenance_columns(n: usize, summary: &Summary) -> Vec<Column> {
    let p = &summary.provenance;
    let text = |name: &str, v: Option<&str>| {
        Column::new(PlSmallStr::from(name), vec![v.map(str::to_string); n])
    };
    vec![
        text("gravline_version", Some(&p.gravline_version)),
        text("input_sha256", p.input_sha256.as_deref()),
        text("config_sha256", Some(&p.config_sha256)),
    ]
}

/// The frames table of a trial: `trial_id`, `frame` (0-based), the columns of `frames.csv` in
/// its order (`valid` and `contact_*` Boolean, the others Float64 with nulls), then the
/// provenance columns.
pub fn frames_frame(r: &TrialResult, id: &str, summary: &Summary) -> PolarsResult<DataFrame> {
    let n = r.n_frames();
    let names = crate::report::frames_header(r);
    let mut floats: Vec<Vec<Option<f64>>> = Vec::new();
    let at = |v: &[Option<f64>], f: usize| v.get(f).copied().flatten();
    let get3 = |v: &[Option<[f64; 3]>], f: usize| v.get(f).copied().flatten();
    let push3 = |floats: &mut Vec<Vec<Option<f64>>>, v: &dyn Fn(usize) -> Option<[f64; 3]>| {
        for k in 0..3 {
            floats.push((0..n).map(|f| v(f).map(|p| p[k])).collect());
        }
    };
    let s = &r.support;
    floats.push(r.times_s.iter().map(|&t| Some(t)).collect());
    push3(&mut floats, &|f| get3(&r.com, f));
    push3(&mut floats, &|f| get3(&r.velocity, f));
    floats.push(
        (0..n)
            .map(|f| get3(&r.velocity, f).map(|v| (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt()))
            .collect(),
    );
    push3(&mut floats, &|f| get3(&r.acceleration, f));
    push3(&mut floats, &|f| get3(&r.xcom, f));
    for v in [
        &s.bos_area_m2,
        &s.bos_margin_m,
        &s.mos_m,
        &s.mos_ap_m,
        &s.mos_ml_m,
    ] {
        floats.push((0..n).map(|f| at(v, f)).collect());
    }
    let mut tail: Vec<Vec<Option<f64>>> = Vec::new();
    if !r.load_names.is_empty() {
        let lift = r.lift.as_ref();
        push3(&mut tail, &|f| get3(&r.body_com, f));
        for l in &r.loads {
            push3(&mut tail, &|f| get3(l, f));
        }
        push3(&mut tail, &|f| lift.and_then(|l| get3(&l.midfoot, f)));
        tail.push(
            (0..n)
                .map(|f| lift.and_then(|l| at(&l.com_midfoot_ap_m, f)))
                .collect(),
        );
        tail.push(
            (0..n)
                .map(|f| lift.and_then(|l| at(&l.bar_midfoot_ap_m, f)))
                .collect(),
        );
    }
    for g in r.groups.iter().chain(&r.segments) {
        push3(&mut tail, &|f| get3(g, f));
    }
    // Keep finite numbers only, as frames.csv does (a non-finite value is an empty cell).
    let finite = |v: Vec<Option<f64>>| -> Vec<Option<f64>> {
        v.into_iter().map(|x| x.filter(|x| x.is_finite())).collect()
    };
    let mut floats = floats.into_iter().map(finite);
    let mut tail = tail.into_iter().map(finite);
    let mut columns: Vec<Column> = vec![
        Column::new("trial_id".into(), vec![id.to_string(); n]),
        Column::new("frame".into(), (0..n as i64).collect::<Vec<i64>>()),
    ];
    for name in &names {
        let name_s = PlSmallStr::from(name.as_str());
        let column = match name.as_str() {
            "valid" => Column::new(name_s, (0..n).map(|f| r.is_valid(f)).collect::<Vec<bool>>()),
            "contact_left" | "contact_right" => {
                let side = usize::from(name == "contact_right");
                Column::new(
                    name_s,
                    (0..n)
                        .map(|f| s.contact[side].get(f).copied().unwrap_or(false))
                        .collect::<Vec<bool>>(),
                )
            }
            _ => {
                let is_tail = names.iter().position(|h| h == name).unwrap_or(0) >= 22;
                let values = if is_tail { tail.next() } else { floats.next() };
                Column::new(name_s, values.unwrap_or_else(|| vec![None; n]))
            }
        };
        columns.push(column);
    }
    columns.extend(provenance_columns(n, summary));
    DataFrame::new(n, columns)
}

/// The cycles table of a trial: `trial_id`, the columns of `cycles.csv` ([`CYCLE_COLUMNS`];
/// `kind` and `side` String, `cycle` and `percent` Int64, the others Float64 with nulls), then
/// the provenance columns.
pub fn cycles_frame(cycles: &[Cycle], id: &str, summary: &Summary) -> PolarsResult<DataFrame> {
    let n = cycles.len() * POINTS;
    let each = |f: &dyn Fn(&Cycle, usize) -> Option<f64>| -> Vec<Option<f64>> {
        cycles
            .iter()
            .flat_map(|c| (0..POINTS).map(move |p| f(c, p)))
            .map(|v| v.filter(|v| v.is_finite()))
            .collect()
    };
    let mut columns: Vec<Column> = vec![
        Column::new("trial_id".into(), vec![id.to_string(); n]),
        Column::new(
            "kind".into(),
            cycles
                .iter()
                .flat_map(|c| std::iter::repeat_n(c.kind, POINTS))
                .collect::<Vec<&str>>(),
        ),
        Column::new(
            "side".into(),
            cycles
                .iter()
                .flat_map(|c| std::iter::repeat_n(c.side, POINTS))
                .collect::<Vec<&str>>(),
        ),
        Column::new(
            "cycle".into(),
            cycles
                .iter()
                .flat_map(|c| std::iter::repeat_n(c.cycle as i64, POINTS))
                .collect::<Vec<i64>>(),
        ),
        Column::new(
            "percent".into(),
            cycles
                .iter()
                .flat_map(|_| 0..POINTS as i64)
                .collect::<Vec<i64>>(),
        ),
        Column::new("cycle_start_s".into(), each(&|c, _| Some(c.start_s))),
        Column::new("cycle_duration_s".into(), each(&|c, _| Some(c.duration_s))),
        Column::new(
            "time_s".into(),
            each(&|c, p| Some(c.start_s + c.duration_s * p as f64 / 100.0)),
        ),
    ];
    for (k, name) in CYCLE_COLUMNS.iter().enumerate().skip(7) {
        let i = k - 7;
        columns.push(Column::new(
            PlSmallStr::from(*name),
            each(&|c, p| c.curves.get(i).and_then(|curve| curve[p])),
        ));
    }
    columns.extend(provenance_columns(n, summary));
    DataFrame::new(n, columns)
}

/// Writes a data frame as one Parquet file, atomically, on the calling thread: a batch worker
/// that waited on polars' own thread pool would run other trials meanwhile (rayon lets a
/// blocked worker steal work), nesting one trial in another until the stack overflows.
pub fn write_frame(path: &Path, df: &mut DataFrame) -> std::io::Result<()> {
    crate::report::write_atomic(path, |w| {
        ParquetWriter::new(w)
            .set_parallel(false)
            .finish(df)
            .map_err(polars_io)?;
        Ok(())
    })
}

/// Writes a trial's two files (cycles first, then frames). On error, neither is left.
pub fn write_trial(
    out_dir: &Path,
    key: &TrialKey,
    result: &TrialResult,
    summary: &Summary,
) -> Result<(), String> {
    let cycles = crate::cycles::of_result(result);
    let frames_path = trial_file(out_dir, "frames", key);
    let cycles_path = trial_file(out_dir, "cycles", key);
    let fail = |path: &Path, e: String| {
        remove_trial(out_dir, key);
        format!("cannot write {}: {e}", path.display())
    };
    let mut df =
        cycles_frame(&cycles, key.id, summary).map_err(|e| fail(&cycles_path, e.to_string()))?;
    write_frame(&cycles_path, &mut df).map_err(|e| fail(&cycles_path, e.to_string()))?;
    let mut df =
        frames_frame(result, key.id, summary).map_err(|e| fail(&frames_path, e.to_string()))?;
    write_frame(&frames_path, &mut df).map_err(|e| fail(&frames_path, e.to_string()))?;
    Ok(())
}

/// Reads one Parquet file of the dataset.
pub fn read_frame(path: &Path) -> Result<DataFrame, String> {
    let file =
        std::fs::File::open(path).map_err(|e| format!("cannot read {}: {e}", path.display()))?;
    ParquetReader::new(file).finish().map_err(|e| {
        format!(
            "{}: not a Parquet file of the dataset ({e})",
            path.display()
        )
    })
}

/// Copies (hard-links where possible) a trial's files from another output folder's dataset
/// (a shard's) into this one, atomically; nothing to do when the folders are the same.
pub fn import_trial(from_dir: &Path, out_dir: &Path, key: &TrialKey) -> Result<(), String> {
    for table in TABLES {
        let from = trial_file(from_dir, table, key);
        let to = trial_file(out_dir, table, key);
        if same_file(&from, &to) {
            continue;
        }
        if !from.is_file() {
            return Err(format!(
                "{}: missing; run that shard again with --resume",
                from.display()
            ));
        }
        let dir = to.parent().unwrap_or(out_dir);
        std::fs::create_dir_all(dir)
            .map_err(|e| format!("cannot create {}: {e}", dir.display()))?;
        let tmp = dir.join(format!(".{}.parquet.{}.tmp", key.id, std::process::id()));
        let _ = std::fs::remove_file(&tmp);
        std::fs::hard_link(&from, &tmp)
            .or_else(|_| std::fs::copy(&from, &tmp).map(|_| ()))
            .and_then(|()| std::fs::rename(&tmp, &to))
            .map_err(|e| {
                let _ = std::fs::remove_file(&tmp);
                format!("cannot copy {} to {}: {e}", from.display(), to.display())
            })?;
    }
    Ok(())
}

fn same_file(a: &Path, b: &Path) -> bool {
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(a), Ok(b)) => a == b,
        _ => false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn partition_values_round_trip() {
        for v in ["s1", "a b/c", "é%x", "=", ""] {
            assert_eq!(decode_value(&encode_value(v)).as_deref(), Some(v));
        }
        assert_eq!(decode_value(NULL_PARTITION), None);
        assert_eq!(
            partition(Some("s 1"), None),
            PathBuf::from("subject=s%201/condition=__HIVE_DEFAULT_PARTITION__")
        );
    }
}
