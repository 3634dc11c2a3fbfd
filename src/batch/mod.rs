//! Stage 7, batch (docs/DESIGN.md 8, 10, 13): many trials through [`pipeline::process_file`] in
//! parallel, one summary table over them, shards for clusters, and resuming an interrupted run.
//! Inputs: a manifest CSV or a folder of trial CSVs ([`manifest`]); outputs: each trial's folder,
//! `summary.csv`, `summary.parquet` and `groups.csv` ([`table`]). Units as in the trial outputs
//! (SI, the unit in every column name). No formulas of its own beyond the group mean and sample
//! standard deviation.
//!
//! # Batch processing (README section)
//!
//! ```text
//! gravline batch <MANIFEST.csv | DIR> --out DIR [--config C.toml] [--jobs N] [--shard K/N]
//!                [--resume] [--no-plots] [-q]
//! gravline merge <SUMMARY.parquet|csv>... --out DIR
//! ```
//!
//! **Input.** A manifest is a CSV with a row per trial: `trial` (path relative to the manifest),
//! `subject`, `mass_kg`, `height_m`, `sex` (`female` | `male`), and optionally `condition`,
//! `config` (a configuration file relative to the manifest, used for that row instead of
//! `--config`) and the subject measurements `leg_length_m`, `asis_width_m`, `marker_radius_m`,
//! `knee_width_m`, `ankle_width_m`, `elbow_width_m`, `wrist_width_m`. Other columns are ignored
//! (listed once at the start). Lines starting with `#` are comments. Instead of a manifest, give
//! a folder: every `*.csv` in it is a trial, in file-name order, with the subject from a
//! `subjects.csv` in the folder (columns `trial` = file name, `subject`, `mass_kg`, `height_m`,
//! `sex`, and the optional ones above) or, for files it does not list, from `--subject S.toml`
//! or `--mass-kg`, `--height-m` and `--sex`.
//!
//! **Running.** Trials run in parallel on `--jobs N` threads (default: every core). Each trial's
//! outputs are written to `<out>/trials/<id>/` as soon as it finishes (`frames.csv`,
//! `summary.json`, `steps.csv`, plots unless `--no-plots`), each file through a temporary name
//! and a rename, `summary.json` last: a folder with a `summary.json` is complete. The id is the
//! trial file's stem made a plain folder name ([`sanitize_id`]: `..csv` gives `__`); when two
//! rows share an id (letter case ignored), each of them becomes `<id>-row<row>` (e.g.
//! `walk-row3`). Nothing is written outside `<out>/trials/<id>/` ([`trial_dir`]). A trial that fails (file unreadable, a landmark missing, a bad subject row,
//! a bad per-row configuration) becomes a row with `status = error` and its one-line message,
//! printed as it happens; the batch goes on. A progress bar is shown on a terminal, a line every
//! few seconds otherwise, neither with `-q`.
//!
//! **Outputs** in `<out>/`: `summary.csv` and `summary.parquet` hold the same table, one row per
//! trial in manifest order, whatever the scheduling: `row` (1-based manifest row), `id`, `trial`,
//! `subject`, `condition`, `status` (`ok` | `error`), `error`, `frames`, `duration_s`, `rate_hz`,
//! `valid_fraction`, `sex`, `mass_kg`, `height_m`, `com_mean_height_m`,
//! `com_mean_height_of_stature`, `com_min_{x,y,z}_m`, `com_max_{x,y,z}_m`, `com_path_length_m`,
//! `com_vertical_excursion_m`, `com_ml_excursion_m`, `com_mean_speed_m_s`, `com_max_speed_m_s`,
//! `floor_m`, `progression_x`, `progression_y` (unit vector of the direction of progression in
//! the floor plane), `min_bos_margin_m`, `mean_bos_margin_m`, `min_mos_m`, `mean_mos_m`,
//! `time_with_bos_s`, `time_outside_bos_s`, then per side (`left_`, `right_`): `steps`,
//! `step_length_m`, `step_width_m`, `mos_ap_heel_strike_m`, `min_mos_ml_single_stance_m`,
//! `com_vertical_excursion_m` (means over that side's steps), then `table`, `body_mass_kg`,
//! `system_mass_kg`, `cutoff_hz`, `max_gap_s`, `leg_length_m`, `xcom_length_m`, `omega0_rad_s`,
//! `warnings` (their count; the text is in `summary.json`), `gravline_version`, `input_sha256`,
//! `config_sha256`. Missing values are empty cells (CSV) or nulls (Parquet). `groups.csv` has a
//! line per group and figure: `by` (`subject` or `condition`), `group`, `figure`, `n` (ok trials
//! with a value), `mean`, `sd` (sample standard deviation, n - 1; empty for n < 2), over the
//! figures `valid_fraction`, `com_mean_height_m`, `com_mean_height_of_stature`,
//! `com_path_length_m`, `com_mean_speed_m_s`, `com_max_speed_m_s`, `com_vertical_excursion_m`,
//! `com_ml_excursion_m`, `min_bos_margin_m`, `mean_bos_margin_m`, `min_mos_m`, `mean_mos_m`,
//! `time_outside_bos_s` and the per-side step length, step width, AP MoS at heel strike and ML
//! MoS in single stance. Failed trials and rows without a subject (condition) are left out of
//! that grouping. Exit code 0 when every trial ran, 1 when some failed, 2 when the batch could
//! not start (manifest unreadable or missing a column, bad `--config`, no subject).
//!
//! **Resuming.** `--resume` skips every trial whose `trials/<id>/summary.json` exists and records
//! the same input-file SHA-256 and configuration hash (configuration, subject and table) as the
//! trial would get now, and whose other outputs are complete ([`resume::outputs_complete`]:
//! `frames.csv` with one row per frame, steps, repetitions, the plots asked for now); its row is
//! read back from that `summary.json`. Rows are always built from
//! the `summary.json` text, so a resumed table is identical to an uninterrupted one. A run that
//! was killed (even with `kill -9`) leaves only complete files and hidden temporary files
//! (`.<name>.<pid>.tmp`, `.<stem>.<pid>-<n>.tmp.png`), which are removed when that trial runs
//! again; `gravline batch ... --resume` then redoes only the unfinished trials and says how many
//! it skipped.
//!
//! **Clusters.** `--shard K/N` runs only the trials at 0-based manifest positions i with
//! i % N == K - 1 (K from 1 to N), so N jobs with the same manifest take disjoint sets that
//! together cover it. Ids and the `row` column are those of the whole manifest. A shard writes
//! `summary-K-of-N.csv` and `summary-K-of-N.parquet` (no `groups.csv`) into `--out`, which the N
//! jobs may share; `gravline merge` then joins the shard tables (Parquet or CSV, any order) into
//! exactly the `summary.csv`, `summary.parquet` and `groups.csv` of an unsharded run, checking
//! that no row is given twice and none is missing below the highest row (its exit code is 1 when
//! the merged table has failed trials, as for the unsharded run). Run it as an array job of N
//! tasks, where the scheduler gives each task its index in an environment variable (here
//! `TASK_ID`, counted from 1; for an index counted from 0 pass `$((TASK_ID + 1))/$N`):
//!
//! ```text
//! # each of the N array tasks:
//! gravline batch manifest.csv --out results --shard "$TASK_ID/$N" --resume -q
//! # once all tasks have finished:
//! gravline merge results/summary-*-of-$N.parquet --out results
//! ```
//!
//! With `--resume`, a task that was pre-empted and restarted continues where it stopped. The
//! Parquet summary reads straight into dataframe and SQL engines.
//!
//! **Study dataset and group curves.** Every trial's frames and cycles also go into a
//! hive-partitioned Parquet dataset under `<out>/dataset/` ([`dataset`]), and a whole run (or a
//! merge, which joins the shards' datasets) writes `group_cycles.csv`/`.parquet` and the group
//! figures ([`curves`]). `--resume` trusts a trial only when its `summary.json` matches and both
//! of its dataset files exist. `examples/slurm/array.sh` runs the recipe as a Slurm array job.

#![allow(clippy::result_large_err)] // `ComError` and `LandmarkError` (~150 bytes) pass through here

pub mod confine;
pub mod curves;
pub mod dataset;
pub mod html;
pub mod manifest;
pub mod progress;
pub mod resume;
pub mod table;

pub use confine::{confined_id, sanitize_id, trial_dir};
pub use manifest::{
    read_directory, read_manifest, read_manifest_bytes, DirectoryDefaults, Job, ManifestError, Plan,
};
pub use progress::{Progress, ProgressMode, TrialOutcome};
pub use table::{Row, RowKey, StoredSummary, TableError};

use crate::pipeline::{self, OutputOptions, Setup};
use rayon::prelude::*;
use std::path::{Path, PathBuf};

/// One of N deterministic parts of a manifest.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Shard {
    /// K, from 1 to `count`.
    pub index: usize,
    /// N.
    pub count: usize,
}

impl Shard {
    /// Parses `K/N` with 1 <= K <= N.
    ///
    /// ```
    /// use gravline::batch::Shard;
    /// assert_eq!(Shard::parse("2/3"), Ok(Shard { index: 2, count: 3 }));
    /// assert!(Shard::parse("4/3").is_err());
    /// ```
    pub fn parse(text: &str) -> Result<Shard, String> {
        let bad = || format!("shard `{text}`: give K/N with 1 <= K <= N, e.g. 2/8");
        let (k, n) = text.trim().split_once('/').ok_or_else(bad)?;
        let index: usize = k.trim().parse().map_err(|_| bad())?;
        let count: usize = n.trim().parse().map_err(|_| bad())?;
        if index == 0 || index > count {
            return Err(bad());
        }
        Ok(Shard { index, count })
    }

    /// Whether this shard takes the trial at 0-based manifest position `i`.
    pub fn takes(&self, i: usize) -> bool {
        i % self.count == self.index - 1
    }

    /// `K-of-N`, the suffix of a shard's summary files.
    pub fn suffix(&self) -> String {
        format!("{}-of-{}", self.index, self.count)
    }
}

/// How to run a batch.
#[derive(Clone, Debug)]
pub struct BatchOptions {
    pub out_dir: PathBuf,
    /// Worker threads; `None` = one per core.
    pub jobs: Option<usize>,
    pub shard: Option<Shard>,
    pub resume: bool,
    /// Per-trial outputs (plots, segment columns).
    pub output: OutputOptions,
}

/// A batch that could not run or whose summary could not be written.
#[derive(Debug, thiserror::Error)]
pub enum BatchError {
    // Transparent: the message is the inner one, printed once by an error chain.
    #[error(transparent)]
    Manifest(#[from] ManifestError),
    #[error(transparent)]
    Table(#[from] TableError),
    #[error("cannot start {jobs} worker threads: {message}")]
    Threads { jobs: usize, message: String },
    #[error("0 worker threads: give at least one job")]
    NoJobs,
    #[error("{0}")]
    Merge(String),
    /// The frame-level dataset or the group curves could not be written or read.
    #[error("{0}")]
    Dataset(String),
}

/// What a batch (or a merge) did.
#[derive(Clone, Debug)]
pub struct Outcome {
    /// The summary rows, in manifest order.
    pub rows: Vec<Row>,
    pub ran: usize,
    pub skipped: usize,
    pub failed: usize,
    /// The files written into the output folder.
    pub files: Vec<PathBuf>,
}

impl Outcome {
    /// One line: counts and where the summary is.
    pub fn describe(&self) -> String {
        let files: Vec<String> = self.files.iter().map(|f| f.display().to_string()).collect();
        format!(
            "batch: {} trials, {} ok ({} run, {} skipped as unchanged since an earlier run), {} failed; summary in {}",
            self.rows.len(),
            self.rows.len() - self.failed,
            self.ran,
            self.skipped,
            self.failed,
            files.join(", ")
        )
    }

    /// One line after a merge: counts and where the summary is.
    pub fn describe_merge(&self) -> String {
        let files: Vec<String> = self.files.iter().map(|f| f.display().to_string()).collect();
        format!(
            "merge: {} trials, {} ok, {} failed; summary in {}",
            self.rows.len(),
            self.rows.len() - self.failed,
            self.failed,
            files.join(", ")
        )
    }
}

/// Folder of the per-trial outputs under the batch output folder.
pub fn trials_dir(out_dir: &Path) -> PathBuf {
    out_dir.join("trials")
}

/// Names of the summary files in the output folder, for a shard or a whole run.
pub fn summary_names(shard: Option<Shard>) -> Vec<String> {
    match shard {
        Some(s) => vec![
            format!("summary-{}.csv", s.suffix()),
            format!("summary-{}.parquet", s.suffix()),
        ],
        None => vec![
            "summary.csv".into(),
            "summary.parquet".into(),
            "groups.csv".into(),
        ],
    }
}

/// Runs the jobs of a plan (already sharded, see [`Plan::shard`]) and writes the summary files.
pub fn run(
    plan: &Plan,
    options: &BatchOptions,
    progress: &Progress,
) -> Result<Outcome, BatchError> {
    let jobs = options
        .jobs
        .unwrap_or_else(|| std::thread::available_parallelism().map_or(1, |n| n.get()));
    if jobs == 0 {
        return Err(BatchError::NoJobs);
    }
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(jobs)
        .thread_name(|i| format!("gravline-batch-{i}"))
        .build()
        .map_err(|e| BatchError::Threads {
            jobs,
            message: e.to_string(),
        })?;
    let trials = trials_dir(&options.out_dir);
    let results: Vec<(Row, TrialOutcome)> = pool.install(|| {
        plan.jobs
            .par_iter()
            .with_max_len(1)
            .map(|job| {
                let (row, outcome, error) = run_job(job, options, &trials);
                progress.trial_done(outcome, error.as_deref());
                (row, outcome)
            })
            .collect()
    });
    progress.finish();
    let count = |o: TrialOutcome| results.iter().filter(|r| r.1 == o).count();
    let (ran, skipped, failed) = (
        count(TrialOutcome::Ran),
        count(TrialOutcome::Skipped),
        count(TrialOutcome::Failed),
    );
    let rows: Vec<Row> = results.into_iter().map(|r| r.0).collect();
    let mut files = write_summary(&options.out_dir, options.shard, &rows)?;
    if options.shard.is_none() {
        let figures = !options.output.plots.is_empty();
        files.extend(
            curves::write_all(&options.out_dir, &rows, figures).map_err(BatchError::Dataset)?,
        );
    }
    if options.shard.is_none() && !options.output.no_report {
        files.push(write_report(&options.out_dir, &rows)?);
    }
    Ok(Outcome {
        rows,
        ran,
        skipped,
        failed,
        files,
    })
}

/// Runs one job: its row, how it ended, and the message of a failure (`row N (id): ...`).
fn run_job(
    job: &Job,
    options: &BatchOptions,
    trials: &Path,
) -> (Row, TrialOutcome, Option<String>) {
    let key = RowKey {
        row: job.row,
        id: &job.id,
        trial: &job.trial,
        subject: job.subject.as_deref(),
        condition: job.condition.as_deref(),
    };
    let fail = |message: String| {
        // One short line, whatever the input put into the message.
        let message = crate::textio::one_line(&message, crate::textio::MESSAGE_CHARS);
        let row = Row::error(&key, &message);
        (
            row,
            TrialOutcome::Failed,
            Some(format!("row {} ({}): {message}", job.row, job.id)),
        )
    };
    let js = match &job.setup {
        Ok(s) => s,
        Err(message) => return fail(message.clone()),
    };
    let mut config = (*js.config).clone();
    config.plates_file = job.plates.clone();
    let setup = match Setup::new(config, js.subject.clone()) {
        Ok(s) => s,
        Err(e) => return fail(e.to_string()),
    };
    // Nothing is written outside `<out>/trials/<id>/`.
    let dir = match trial_dir(trials, &job.id) {
        Ok(dir) => dir,
        Err(message) => return fail(message),
    };
    let json = dir.join("summary.json");
    // A FIFO or a device (`/dev/zero`) named as a trial would block or never end.
    if let Err(e) = crate::textio::require_regular(&job.path) {
        return fail(format!("cannot read {}: {e}", job.path.display()));
    }
    let part = dataset::TrialKey {
        id: &job.id,
        subject: job.subject.as_deref(),
        condition: job.condition.as_deref(),
    };
    if options.resume && dataset::has_trial(&options.out_dir, &part) {
        if let Some(stored) = reusable(&job.path, &setup, &json) {
            if resume::outputs_complete(&dir, &stored, &options.output.plots) {
                return (Row::ok(&key, &stored), TrialOutcome::Skipped, None);
            }
        }
    }
    clear_stale(&dir);
    dataset::remove_trial(&options.out_dir, &part);
    // A panic in a stage is a bug; it fails this trial only, and the batch goes on.
    let result = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        // The dataset files come before summary.json, which stays the mark of a finished trial.
        pipeline::process_file_then(
            &job.path,
            &setup,
            &dir,
            &options.output,
            |result, summary| {
                dataset::write_trial(&options.out_dir, &part, result, summary).map_err(|e| {
                    pipeline::Error::Write {
                        path: "dataset".into(),
                        source: std::io::Error::other(e),
                    }
                })
            },
        )
        .map(|_| ())
    }));
    match result {
        Ok(Ok(())) => match read_stored(&json) {
            Ok(stored) => (Row::ok(&key, &stored), TrialOutcome::Ran, None),
            Err(message) => fail(message),
        },
        Ok(Err(e)) => fail(e.to_string()),
        Err(_) => fail(format!(
            "{}: internal error (a panic); please report it with this file",
            job.path.display()
        )),
    }
}

/// Reads a trial's `summary.json` back.
fn read_stored(json: &Path) -> Result<StoredSummary, String> {
    let text = std::fs::read_to_string(json)
        .map_err(|e| format!("cannot read {}: {e}", json.display()))?;
    StoredSummary::from_json(&text).map_err(|e| format!("{}: {e}", json.display()))
}

/// The stored summary of an earlier run, when its input file and configuration hashes are the
/// ones this run would record.
fn reusable(trial: &Path, setup: &Setup, json: &Path) -> Option<StoredSummary> {
    if !json.is_file() {
        return None;
    }
    let stored = read_stored(json).ok()?;
    if stored.provenance.config_sha256.as_deref() != Some(setup.hash().as_str()) {
        return None;
    }
    let bytes = std::fs::read(trial).ok()?;
    let input = crate::report::sha256_hex(&bytes);
    (stored.provenance.input_sha256.as_deref() == Some(input.as_str())).then_some(stored)
}

/// Before a trial runs again: its old `summary.json` goes (so a folder with one is always from
/// the latest run of that trial), and so do temporary files a killed run left.
fn clear_stale(dir: &Path) {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    for entry in entries.flatten() {
        let name = entry.file_name().to_string_lossy().into_owned();
        if name == "summary.json" || is_temporary(&name) {
            let _ = std::fs::remove_file(entry.path());
        }
    }
}

/// Whether a file name is a temporary name of the atomic writers: hidden and ending in `.tmp`
/// ([`crate::report::write_atomic`]: `.<name>.<pid>.tmp`) or in `.tmp.<ext>` (the plots:
/// `.<stem>.<pid>-<n>.tmp.png`).
pub fn is_temporary(name: &str) -> bool {
    let Some(rest) = name.strip_prefix('.') else {
        return false;
    };
    rest.ends_with(".tmp")
        || rest
            .rsplit_once('.')
            .is_some_and(|(front, _ext)| front.ends_with(".tmp"))
}

/// Writes the summary table (and, for a whole run, `groups.csv`) into `out_dir`; returns the
/// files written.
pub fn write_summary(
    out_dir: &Path,
    shard: Option<Shard>,
    rows: &[Row],
) -> Result<Vec<PathBuf>, TableError> {
    let names = summary_names(shard);
    resume::clear_batch_temporaries(out_dir, &names);
    let paths: Vec<PathBuf> = names.iter().map(|n| out_dir.join(n)).collect();
    let err = |p: &Path| {
        let path = p.display().to_string();
        move |error| TableError::Write { path, error }
    };
    crate::report::write_atomic(&paths[0], |w| table::write_csv(rows, w))
        .map_err(err(&paths[0]))?;
    crate::report::write_atomic(&paths[1], |w| table::write_parquet(rows, w))
        .map_err(err(&paths[1]))?;
    if let Some(groups) = paths.get(2) {
        let stats = table::groups(rows);
        crate::report::write_atomic(groups, |w| table::write_groups(&stats, w))
            .map_err(err(groups))?;
    }
    Ok(paths)
}

/// Writes the batch's `report.html` ([`html`]); returns its path.
fn write_report(out_dir: &Path, rows: &[Row]) -> Result<PathBuf, TableError> {
    let page = out_dir.join("report.html");
    html::write_batch_report(out_dir, "trials/", rows).map_err(|error| TableError::Write {
        path: page.display().to_string(),
        error,
    })?;
    Ok(page)
}

/// Joins shard summary tables (Parquet or CSV) into the summary files of an unsharded run:
/// rows sorted by `row`; a row given twice, or missing between the first and the last, is an
/// error.
pub fn merge(inputs: &[PathBuf], out_dir: &Path) -> Result<Outcome, BatchError> {
    if inputs.is_empty() {
        return Err(BatchError::Merge(
            "nothing to merge: give the shard summaries".into(),
        ));
    }
    let mut rows: Vec<(i64, usize, Row)> = Vec::new();
    for (k, path) in inputs.iter().enumerate() {
        for row in table::read_table(path)? {
            let n = row.row().ok_or_else(|| {
                BatchError::Merge(format!("{}: a row without a `row` number", path.display()))
            })?;
            check_merged_row(path, n, &row)?;
            rows.push((n, k, row));
        }
    }
    rows.sort_by_key(|r| r.0);
    for w in rows.windows(2) {
        if w[0].0 == w[1].0 {
            return Err(BatchError::Merge(format!(
                "row {} is in both {} and {}: give each shard's summary once",
                w[0].0,
                inputs[w[0].1].display(),
                inputs[w[1].1].display()
            )));
        }
    }
    let numbers: Vec<i64> = rows.iter().map(|r| r.0).collect();
    let missing: Vec<String> = match (numbers.first(), numbers.last()) {
        (Some(&first), Some(&last)) => (1.min(first)..=last)
            .filter(|n| numbers.binary_search(n).is_err())
            .take(10)
            .map(|n| n.to_string())
            .collect(),
        _ => Vec::new(),
    };
    if !missing.is_empty() {
        return Err(BatchError::Merge(format!(
            "rows {} missing: give every shard's summary",
            missing.join(", ")
        )));
    }
    // Each shard's dataset sits beside its summary; its trials join the dataset in `out_dir`.
    // Summaries without any dataset beside them (written by hand, or by a version before the
    // dataset) merge as tables only.
    let folder = |k: usize| {
        inputs[k]
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or(Path::new("."))
    };
    let with_dataset = (0..inputs.len()).any(|k| folder(k).join("dataset").is_dir());
    for (_, k, row) in rows.iter().filter(|_| with_dataset) {
        if !row.is_ok() {
            continue;
        }
        let from = folder(*k);
        let text = |c: &str| row.get(c).and_then(table::Cell::as_str);
        let part = dataset::TrialKey {
            id: text("id").unwrap_or_default(),
            subject: text("subject"),
            condition: text("condition"),
        };
        dataset::import_trial(from, out_dir, &part).map_err(BatchError::Dataset)?;
    }
    let rows: Vec<Row> = rows.into_iter().map(|r| r.2).collect();
    let failed = rows.iter().filter(|r| !r.is_ok()).count();
    let mut files = write_summary(out_dir, None, &rows)?;
    if with_dataset {
        files.extend(curves::write_all(out_dir, &rows, true).map_err(BatchError::Dataset)?);
    }
    files.push(write_report(out_dir, &rows)?);
    Ok(Outcome {
        ran: 0,
        skipped: 0,
        failed,
        rows,
        files,
    })
}

/// A shard row that no batch writes: a row number below 1, a status other than `ok` and
/// `error`, an id that is not a plain folder name.
fn check_merged_row(path: &Path, n: i64, row: &Row) -> Result<(), BatchError> {
    let bad = |what: String| {
        BatchError::Merge(format!(
            "{}: row {n}: {what}; not a gravline batch summary, or corrupted: write the shard again",
            path.display()
        ))
    };
    if n < 1 {
        return Err(bad("a row number below 1".into()));
    }
    let status = row.get("status").and_then(table::Cell::as_str);
    if !matches!(status, Some(table::STATUS_OK | table::STATUS_ERROR)) {
        return Err(bad(format!(
            "status {}",
            crate::textio::quote(status.unwrap_or_default())
        )));
    }
    let id = row
        .get("id")
        .and_then(table::Cell::as_str)
        .unwrap_or_default();
    confined_id(id).map_err(bad)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shards_partition_the_positions() {
        let shards: Vec<Shard> = (1..=3).map(|k| Shard { index: k, count: 3 }).collect();
        for i in 0..20 {
            assert_eq!(
                shards.iter().filter(|s| s.takes(i)).count(),
                1,
                "position {i}"
            );
        }
        assert!(shards[0].takes(0) && shards[1].takes(4) && shards[2].takes(5));
        assert!(
            Shard::parse("0/3").is_err()
                && Shard::parse("x").is_err()
                && Shard::parse("1/0").is_err()
        );
    }

    #[test]
    fn temporary_names_are_recognised() {
        assert!(is_temporary(".frames.csv.123.tmp"));
        assert!(is_temporary(".path.123-4.tmp.png"));
        assert!(!is_temporary("frames.csv"));
        assert!(!is_temporary("path.png"));
        assert!(!is_temporary(".hidden.png"));
    }
}
