//! Group curves of a study: from the cycles of the dataset ([`super::dataset`]), the mean and
//! sample standard deviation (n - 1 in the denominator) of every normalized curve
//! ([`crate::cycles::CURVES`]) at every percent, per subject x condition and per condition,
//! over all cycles of the group's trials (each cycle counts once), separately for each cycle
//! kind and side (`stride` `left`/`right`, `repetition` `both`).
//!
//! Outputs in the batch folder: `group_cycles.csv` and `group_cycles.parquet` (the same long
//! table: `by` = `subject_condition` | `condition`, `subject`, `condition`, `kind`, `side`,
//! `curve`, `percent`, `n_trials`, `n` (cycles with a value), `mean`, `sd` (empty for n < 2),
//! in the unit of the curve's name; written when some trial has a stride or a repetition), and,
//! unless plots are off, a figure per main curve
//! ([`MAIN_CURVES`]) and cycle kind and side, conditions as groups:
//! `group_figures/<kind>-<side>-<curve>.png`.

use super::dataset::{self, TrialKey};
use super::table::{mean_sd, Cell, Row};
use crate::cycles::{CURVES, POINTS};
use crate::report::plots::{GroupCurve, GroupFigure};
use polars::prelude::*;
use std::io::Write;
use std::path::{Path, PathBuf};

/// The curves drawn in the group figures.
pub const MAIN_CURVES: [&str; 4] = [
    "com_vertical_rel_m",
    "com_speed_m_s",
    "mos_ap_m",
    "mos_ml_m",
];

/// One cycle as read back from the dataset.
#[derive(Clone, Debug, PartialEq)]
pub struct StoredCycle {
    pub kind: String,
    pub side: String,
    pub cycle: i64,
    /// `curves[c][p]`, `c` as [`CURVES`].
    pub curves: Vec<[Option<f64>; POINTS]>,
}

/// The cycles of one trial with its place in the study.
#[derive(Clone, Debug, PartialEq)]
pub struct TrialCycles {
    pub id: String,
    pub subject: Option<String>,
    pub condition: Option<String>,
    pub cycles: Vec<StoredCycle>,
}

/// Reads a trial's cycles file of the dataset.
pub fn read_cycles(path: &Path) -> Result<Vec<StoredCycle>, String> {
    let df = dataset::read_frame(path)?;
    let bad = |e: PolarsError| format!("{}: {e}", path.display());
    let column = |name: &str| {
        df.column(name)
            .map(|c| c.as_materialized_series().clone())
            .map_err(bad)
    };
    let kinds = column("kind")?;
    let sides = column("side")?;
    let numbers = column("cycle")?;
    let percents = column("percent")?;
    let (kinds, sides) = (kinds.str().map_err(bad)?, sides.str().map_err(bad)?);
    let (numbers, percents) = (numbers.i64().map_err(bad)?, percents.i64().map_err(bad)?);
    let curves: Vec<Series> = CURVES.iter().map(|c| column(c)).collect::<Result<_, _>>()?;
    let curves: Vec<&Float64Chunked> = curves
        .iter()
        .map(|s| s.f64())
        .collect::<Result<_, _>>()
        .map_err(bad)?;
    let mut out: Vec<StoredCycle> = Vec::new();
    for i in 0..df.height() {
        let (Some(kind), Some(side), Some(cycle), Some(p)) =
            (kinds.get(i), sides.get(i), numbers.get(i), percents.get(i))
        else {
            return Err(format!(
                "{}: row {i} without kind, side, cycle or percent",
                path.display()
            ));
        };
        let p = usize::try_from(p)
            .ok()
            .filter(|&p| p < POINTS)
            .ok_or_else(|| format!("{}: row {i}: percent {p} outside 0-100", path.display()))?;
        let same = out
            .last()
            .is_some_and(|c| c.kind == kind && c.side == side && c.cycle == cycle);
        if !same {
            out.push(StoredCycle {
                kind: kind.to_string(),
                side: side.to_string(),
                cycle,
                curves: vec![[None; POINTS]; CURVES.len()],
            });
        }
        if let Some(c) = out.last_mut() {
            for (k, curve) in curves.iter().enumerate() {
                c.curves[k][p] = curve.get(i);
            }
        }
    }
    Ok(out)
}

/// Reads the cycles of the ok trials of a summary table from the dataset in `out_dir`.
pub fn read_study(out_dir: &Path, rows: &[Row]) -> Result<Vec<TrialCycles>, String> {
    let text = |r: &Row, c: &str| r.get(c).and_then(Cell::as_str).map(str::to_string);
    rows.iter()
        .filter(|r| r.is_ok())
        .map(|r| {
            let id = text(r, "id").unwrap_or_default();
            let (subject, condition) = (text(r, "subject"), text(r, "condition"));
            let key = TrialKey {
                id: &id,
                subject: subject.as_deref(),
                condition: condition.as_deref(),
            };
            let cycles = read_cycles(&dataset::trial_file(out_dir, "cycles", &key))?;
            Ok(TrialCycles {
                id: id.clone(),
                subject: subject.clone(),
                condition: condition.clone(),
                cycles,
            })
        })
        .collect()
}

/// One line of `group_cycles`.
#[derive(Clone, Debug, PartialEq)]
pub struct GroupPoint {
    /// `subject_condition` or `condition`.
    pub by: &'static str,
    pub subject: Option<String>,
    pub condition: Option<String>,
    pub kind: String,
    pub side: String,
    pub curve: &'static str,
    pub percent: usize,
    pub n_trials: usize,
    pub n: usize,
    pub mean: Option<f64>,
    pub sd: Option<f64>,
}

type GroupKey = (Option<String>, Option<String>);

/// The groups of a study in order of first appearance: (subject, condition) keys with their
/// trials, for `by`.
fn groups<'a>(trials: &'a [TrialCycles], by: &str) -> Vec<(GroupKey, Vec<&'a TrialCycles>)> {
    let mut out: Vec<(GroupKey, Vec<&TrialCycles>)> = Vec::new();
    for t in trials {
        let key = match by {
            "condition" => (None, t.condition.clone()),
            _ => (t.subject.clone(), t.condition.clone()),
        };
        match out.iter_mut().find(|g| g.0 == key) {
            Some(g) => g.1.push(t),
            None => out.push((key, vec![t])),
        }
    }
    out
}

/// Cycle kinds and sides of some trials, sorted.
fn kinds(trials: &[&TrialCycles]) -> Vec<(String, String)> {
    let mut k: Vec<(String, String)> = trials
        .iter()
        .flat_map(|t| t.cycles.iter().map(|c| (c.kind.clone(), c.side.clone())))
        .collect();
    k.sort();
    k.dedup();
    k
}

/// The mean and SD of every curve at every percent, per subject x condition, then per
/// condition.
pub fn group_curves(trials: &[TrialCycles]) -> Vec<GroupPoint> {
    let mut out = Vec::new();
    for by in ["subject_condition", "condition"] {
        for ((subject, condition), members) in groups(trials, by) {
            for (kind, side) in kinds(&members) {
                let of_kind = |t: &&&TrialCycles| {
                    t.cycles
                        .iter()
                        .filter(|c| c.kind == kind && c.side == side)
                        .count()
                        > 0
                };
                let n_trials = members.iter().filter(of_kind).count();
                let cycles: Vec<&StoredCycle> = members
                    .iter()
                    .flat_map(|t| &t.cycles)
                    .filter(|c| c.kind == kind && c.side == side)
                    .collect();
                for (k, curve) in CURVES.iter().enumerate() {
                    for p in 0..POINTS {
                        let values: Vec<f64> = cycles
                            .iter()
                            .filter_map(|c| c.curves[k][p])
                            .filter(|v| v.is_finite())
                            .collect();
                        let (mean, sd) = mean_sd(&values);
                        out.push(GroupPoint {
                            by,
                            subject: subject.clone(),
                            condition: condition.clone(),
                            kind: kind.clone(),
                            side: side.clone(),
                            curve,
                            percent: p,
                            n_trials,
                            n: values.len(),
                            mean,
                            sd,
                        });
                    }
                }
            }
        }
    }
    out
}

/// Column names of `group_cycles.*`.
pub const GROUP_COLUMNS: [&str; 11] = [
    "by",
    "subject",
    "condition",
    "kind",
    "side",
    "curve",
    "percent",
    "n_trials",
    "n",
    "mean",
    "sd",
];

/// Writes `group_cycles.csv` (full-precision numbers, empty cells for missing values).
pub fn write_csv(points: &[GroupPoint], w: &mut dyn Write) -> std::io::Result<()> {
    let mut out = csv::Writer::from_writer(w);
    out.write_record(GROUP_COLUMNS)?;
    let num = |v: Option<f64>| v.map_or(String::new(), |v| v.to_string());
    for g in points {
        out.write_record([
            g.by.to_string(),
            g.subject.clone().unwrap_or_default(),
            g.condition.clone().unwrap_or_default(),
            g.kind.clone(),
            g.side.clone(),
            g.curve.to_string(),
            g.percent.to_string(),
            g.n_trials.to_string(),
            g.n.to_string(),
            num(g.mean),
            num(g.sd),
        ])?;
    }
    out.flush()
}

/// The same table as a polars data frame (String, Int64 and Float64 columns, nulls where
/// missing).
pub fn to_frame(points: &[GroupPoint]) -> PolarsResult<DataFrame> {
    let text = |f: &dyn Fn(&GroupPoint) -> Option<String>| -> Vec<Option<String>> {
        points.iter().map(f).collect()
    };
    let int = |f: &dyn Fn(&GroupPoint) -> usize| -> Vec<i64> {
        points.iter().map(|g| f(g) as i64).collect()
    };
    let columns = vec![
        Column::new("by".into(), text(&|g| Some(g.by.to_string()))),
        Column::new("subject".into(), text(&|g| g.subject.clone())),
        Column::new("condition".into(), text(&|g| g.condition.clone())),
        Column::new("kind".into(), text(&|g| Some(g.kind.clone()))),
        Column::new("side".into(), text(&|g| Some(g.side.clone()))),
        Column::new("curve".into(), text(&|g| Some(g.curve.to_string()))),
        Column::new("percent".into(), int(&|g| g.percent)),
        Column::new("n_trials".into(), int(&|g| g.n_trials)),
        Column::new("n".into(), int(&|g| g.n)),
        Column::new(
            "mean".into(),
            points.iter().map(|g| g.mean).collect::<Vec<_>>(),
        ),
        Column::new("sd".into(), points.iter().map(|g| g.sd).collect::<Vec<_>>()),
    ];
    DataFrame::new(points.len(), columns)
}

/// The mean curve of one trial's cycles of a kind and side (`None` where no cycle has a value).
fn trial_mean(t: &TrialCycles, kind: &str, side: &str, k: usize) -> Option<Vec<Option<f64>>> {
    let cycles: Vec<&StoredCycle> = t
        .cycles
        .iter()
        .filter(|c| c.kind == kind && c.side == side)
        .collect();
    if cycles.is_empty() {
        return None;
    }
    Some(
        (0..POINTS)
            .map(|p| {
                let v: Vec<f64> = cycles.iter().filter_map(|c| c.curves[k][p]).collect();
                mean_sd(&v).0
            })
            .collect(),
    )
}

/// Writes the group figures (conditions as groups) into `<out>/group_figures/`.
pub fn write_figures(
    out_dir: &Path,
    trials: &[TrialCycles],
    points: &[GroupPoint],
) -> Result<Vec<PathBuf>, String> {
    let mut written = Vec::new();
    let all: Vec<&TrialCycles> = trials.iter().collect();
    for (kind, side) in kinds(&all) {
        for curve in MAIN_CURVES {
            let Some(k) = CURVES.iter().position(|c| *c == curve) else {
                continue;
            };
            let mut fig = GroupFigure {
                title: format!("{curve} over the {kind} ({side}), per condition"),
                subtitle: "mean +- 1 SD over all cycles; faint: each trial. CoM from generic tables: cm-level error; not a diagnostic device".into(),
                y_desc: curve.to_string(),
                groups: Vec::new(),
            };
            for ((_, condition), members) in groups(trials, "condition") {
                let line: Vec<&GroupPoint> = points
                    .iter()
                    .filter(|g| {
                        g.by == "condition"
                            && g.condition == condition
                            && g.kind == kind
                            && g.side == side
                            && g.curve == curve
                    })
                    .collect();
                if line.is_empty() {
                    continue;
                }
                fig.groups.push(GroupCurve {
                    label: format!(
                        "{} (n = {} trials)",
                        condition.as_deref().unwrap_or("no condition"),
                        line[0].n_trials
                    ),
                    mean: line.iter().map(|g| g.mean).collect(),
                    sd: line.iter().map(|g| g.sd).collect(),
                    trials: members
                        .iter()
                        .filter_map(|t| trial_mean(t, &kind, &side, k))
                        .collect(),
                });
            }
            if fig.groups.is_empty() {
                continue;
            }
            let path = out_dir
                .join("group_figures")
                .join(format!("{kind}-{side}-{curve}.png"));
            crate::report::plots::write_group_png(&path, &fig)
                .map_err(|e| format!("cannot write {}: {e}", path.display()))?;
            written.push(path);
        }
    }
    Ok(written)
}

/// Reads the study's cycles for the ok rows and writes `group_cycles.csv`,
/// `group_cycles.parquet` and (with `figures`) the group figures; returns the files written
/// (none when no trial has a stride or a repetition).
pub fn write_all(out_dir: &Path, rows: &[Row], figures: bool) -> Result<Vec<PathBuf>, String> {
    let trials = read_study(out_dir, rows)?;
    let points = group_curves(&trials);
    if points.is_empty() {
        // No trial has a stride or a repetition: nothing to average.
        return Ok(Vec::new());
    }
    let csv_path = out_dir.join("group_cycles.csv");
    let parquet_path = out_dir.join("group_cycles.parquet");
    let err = |p: &Path| {
        let p = p.display().to_string();
        move |e: std::io::Error| format!("cannot write {p}: {e}")
    };
    crate::report::write_atomic(&csv_path, |w| write_csv(&points, w)).map_err(err(&csv_path))?;
    let mut df = to_frame(&points).map_err(|e| e.to_string())?;
    dataset::write_frame(&parquet_path, &mut df).map_err(err(&parquet_path))?;
    let mut files = vec![csv_path, parquet_path];
    if figures {
        files.extend(write_figures(out_dir, &trials, &points)?);
    }
    Ok(files)
}
