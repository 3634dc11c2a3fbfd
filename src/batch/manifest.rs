//! Batch planning: a manifest CSV (docs/DESIGN.md 10) or a directory of trial files becomes a
//! [`Plan`]: one [`Job`] per trial, in manifest order, each with its row number, its output id,
//! its file and either a validated [`Subject`] and [`Config`] or the one-line reason it cannot
//! run.
//!
//! Manifest columns: `trial` (path relative to the manifest), `subject`, `mass_kg`, `height_m`,
//! `sex`; optional `condition`, `config` (path relative to the manifest, replacing the batch
//! configuration for that row) and the optional subject fields of docs/DESIGN.md 3.2
//! ([`SUBJECT_FIELDS`]). Other columns are ignored and listed once in [`Plan::warnings`]. Lines
//! starting with `#` are comments.
//!
//! Problems of the whole manifest (unreadable, a required column missing) are a
//! [`ManifestError`]; a problem of one row (mass not a number, an unknown sex, a per-row config
//! that does not validate) makes that row's job fail with a message naming the manifest line,
//! and the batch goes on.

use crate::anthropometry::Sex;
use crate::config::{Config, RawConfig, Subject};
use std::collections::{BTreeMap, HashMap, HashSet};
use std::path::{Path, PathBuf};
use std::sync::Arc;

/// Columns a manifest must have.
pub const REQUIRED_COLUMNS: [&str; 5] = ["trial", "subject", "mass_kg", "height_m", "sex"];

/// Optional subject measurements a manifest (or `subjects.csv`) may carry, in metres, in the
/// order of the [`Subject`] fields they fill.
pub const SUBJECT_FIELDS: [&str; 7] = [
    "leg_length_m",
    "asis_width_m",
    "marker_radius_m",
    "knee_width_m",
    "ankle_width_m",
    "elbow_width_m",
    "wrist_width_m",
];

/// The file a directory batch reads its subjects from, when present.
pub const SUBJECTS_FILE: &str = "subjects.csv";
/// A manifest in a trial folder: never taken for a trial in folder mode.
pub const MANIFEST_FILE: &str = "manifest.csv";

/// A problem that stops the whole batch before any trial runs.
#[derive(Debug, thiserror::Error)]
pub enum ManifestError {
    // `error`, not `source`: the message already holds it, and an error chain printed with
    // `{:#}` would repeat it.
    #[error("cannot read {path}: {error}")]
    Io { path: String, error: std::io::Error },
    #[error("{path}: {message}")]
    Csv { path: String, message: String },
    #[error("{path}: missing column(s) {missing}; a manifest needs {needed}")]
    MissingColumns {
        path: String,
        missing: String,
        needed: String,
    },
    #[error("{path}: no trials (no rows, or no *.csv or *.c3d files)")]
    Empty { path: String },
    #[error("{path}: {message}")]
    Invalid { path: String, message: String },
}

/// The subject of a directory batch, when `subjects.csv` does not name one.
#[derive(Clone, Debug, Default)]
pub struct DirectoryDefaults {
    /// Subject for every trial without a row in `subjects.csv`.
    pub subject: Option<Subject>,
}

/// What one trial needs to run: a validated subject and configuration.
#[derive(Clone, Debug)]
pub struct JobSetup {
    pub subject: Subject,
    pub config: Arc<Config>,
}

/// One trial of a batch.
#[derive(Clone, Debug)]
pub struct Job {
    /// 1-based position in the manifest (data rows, comments not counted); the `row` column.
    pub row: usize,
    /// Output folder name under `<out>/trials/`: the file stem, made unique (see [`assign_ids`]).
    pub id: String,
    /// The trial as written in the manifest (or the file name in a directory batch).
    pub trial: String,
    /// The file to read.
    pub path: PathBuf,
    pub subject: Option<String>,
    pub condition: Option<String>,
    /// The trial's force-plate CSV (`plates` column, relative to the manifest).
    pub plates: Option<PathBuf>,
    /// `Err` holds the one-line reason this row cannot run.
    pub setup: Result<JobSetup, String>,
}

/// Every trial of a batch, in manifest order.
#[derive(Clone, Debug)]
pub struct Plan {
    /// The manifest or directory, for messages.
    pub source: String,
    pub jobs: Vec<Job>,
    /// Non-fatal findings about the manifest (ignored columns, unused subjects.csv rows).
    pub warnings: Vec<String>,
}

impl Plan {
    /// Keeps only the jobs of one shard (rows i, 0-based, with i % N == K - 1).
    pub fn shard(mut self, shard: super::Shard) -> Plan {
        self.jobs.retain(|j| shard.takes(j.row - 1));
        self
    }
}

/// Per-row configuration files, each read and validated once.
struct Configs {
    base: Arc<Config>,
    files: HashMap<PathBuf, Result<Arc<Config>, String>>,
}

impl Configs {
    fn get(&mut self, path: Option<PathBuf>) -> Result<Arc<Config>, String> {
        let Some(path) = path else {
            return Ok(self.base.clone());
        };
        self.files
            .entry(path.clone())
            .or_insert_with(|| {
                // The path comes from a manifest cell: its messages are kept short and on one
                // line.
                let short = |e: crate::config::ConfigError| {
                    crate::textio::one_line(&e.to_string(), crate::textio::MESSAGE_CHARS)
                };
                let raw = RawConfig::from_path(&path).map_err(short)?;
                let config = Config::from_raw(&raw, &path.display().to_string()).map_err(short)?;
                Ok(Arc::new(config))
            })
            .clone()
    }
}

/// One data row of a CSV file, with its header names.
struct Record<'a> {
    headers: &'a HashMap<String, usize>,
    record: &'a csv::StringRecord,
    /// `manifest.csv line 7`, for messages.
    origin: String,
}

impl Record<'_> {
    /// The trimmed cell of a column; `None` when absent or empty.
    fn get(&self, column: &str) -> Option<&str> {
        let i = *self.headers.get(column)?;
        self.record.get(i).map(str::trim).filter(|s| !s.is_empty())
    }

    fn required(&self, column: &str) -> Result<&str, String> {
        self.get(column)
            .ok_or_else(|| format!("{}: `{column}` is empty; fill it in", self.origin))
    }

    fn number(&self, column: &str, text: &str) -> Result<f64, String> {
        text.parse::<f64>()
            .map_err(|_| format!("{}: {column} = {}, not a number", self.origin, q(text)))
    }

    /// The subject of this row, validated.
    fn subject(&self) -> Result<Subject, String> {
        let mass_kg = self.number("mass_kg", self.required("mass_kg")?)?;
        let height_m = self.number("height_m", self.required("height_m")?)?;
        let sex_text = self.required("sex")?;
        let sex = Sex::parse(sex_text).ok_or_else(|| {
            format!(
                "{}: sex = {}; use female or male (or f / m, any case)",
                self.origin,
                q(sex_text)
            )
        })?;
        let mut subject = Subject::new(mass_kg, height_m, sex);
        subject.name = self.get("subject").map(str::to_string);
        let fields: [&mut Option<f64>; 7] = [
            &mut subject.leg_length_m,
            &mut subject.asis_width_m,
            &mut subject.marker_radius_m,
            &mut subject.knee_width_m,
            &mut subject.ankle_width_m,
            &mut subject.elbow_width_m,
            &mut subject.wrist_width_m,
        ];
        for (name, field) in SUBJECT_FIELDS.iter().zip(fields) {
            if let Some(text) = self.get(name) {
                *field = Some(self.number(name, text)?);
            }
        }
        subject.validate(&self.origin).map_err(|e| e.to_string())
    }
}

/// A CSV table (manifest or subjects file) read whole: header map and records with their lines.
struct Table {
    path: String,
    headers: HashMap<String, usize>,
    header_names: Vec<String>,
    records: Vec<(u64, csv::StringRecord)>,
}

/// Reads a manifest or `subjects.csv`: a regular file of at most
/// [`crate::textio::MAX_MANIFEST_BYTES`] (a FIFO or a device such as `/dev/zero` is refused).
fn read_table(path: &Path) -> Result<Table, ManifestError> {
    let shown = path.display().to_string();
    let bytes =
        crate::textio::read_regular(path, crate::textio::MAX_MANIFEST_BYTES).map_err(|error| {
            ManifestError::Io {
                path: shown.clone(),
                error,
            }
        })?;
    parse_table(&bytes, shown)
}

/// Parses the bytes of a manifest or `subjects.csv`; `shown` names it in messages.
fn parse_table(bytes: &[u8], shown: String) -> Result<Table, ManifestError> {
    let mut reader = csv::ReaderBuilder::new()
        .flexible(true)
        .comment(Some(b'#'))
        .from_reader(bytes);
    let csv_error = |e: csv::Error| {
        let at = e
            .position()
            .map_or(String::new(), |p| format!("line {}: ", p.line()));
        ManifestError::Csv {
            path: shown.clone(),
            message: format!(
                "{at}{}",
                crate::textio::one_line(&e.to_string(), crate::textio::MESSAGE_CHARS)
            ),
        }
    };
    let header_names: Vec<String> = reader
        .headers()
        .map_err(csv_error)?
        .iter()
        .map(|h| h.trim().to_string())
        .collect();
    let headers = header_names
        .iter()
        .enumerate()
        .map(|(i, h)| (h.clone(), i))
        .collect();
    let mut records = Vec::new();
    for record in reader.records() {
        let record = record.map_err(csv_error)?;
        if record.iter().all(|c| c.trim().is_empty()) {
            continue;
        }
        let line = record.position().map_or(0, |p| p.line());
        records.push((line, record));
    }
    Ok(Table {
        path: shown,
        headers,
        header_names,
        records,
    })
}

impl Table {
    fn check_columns(&self, required: &[&str]) -> Result<(), ManifestError> {
        let missing: Vec<&str> = required
            .iter()
            .copied()
            .filter(|c| !self.headers.contains_key(*c))
            .collect();
        if missing.is_empty() {
            return Ok(());
        }
        Err(ManifestError::MissingColumns {
            path: self.path.clone(),
            missing: missing
                .iter()
                .map(|c| format!("`{c}`"))
                .collect::<Vec<_>>()
                .join(", "),
            needed: required.join(", "),
        })
    }

    /// Columns that no reader of this table uses, as one warning.
    fn ignored_columns(&self, known: &[&str]) -> Option<String> {
        let ignored: Vec<&str> = self
            .header_names
            .iter()
            .map(String::as_str)
            .filter(|h| !known.contains(h))
            .collect();
        (!ignored.is_empty())
            .then(|| format!("{}: columns ignored: {}", self.path, quote_list(&ignored)))
    }

    fn record(&self, i: usize) -> Option<Record<'_>> {
        let (line, record) = self.records.get(i)?;
        Some(Record {
            headers: &self.headers,
            record,
            origin: format!("{} line {line}", self.path),
        })
    }
}

fn known_columns() -> Vec<&'static str> {
    let mut known: Vec<&str> = REQUIRED_COLUMNS.to_vec();
    known.extend(["condition", "config", "plates"]);
    known.extend(SUBJECT_FIELDS);
    known
}

/// Reads a manifest; trial and config paths are relative to its folder.
///
/// `base` is the batch configuration (`--config`, or the defaults), used by rows without a
/// `config` cell.
pub fn read_manifest(path: &Path, base: Config) -> Result<Plan, ManifestError> {
    let table = read_table(path)?;
    let folder = path.parent().map(Path::to_path_buf).unwrap_or_default();
    plan_manifest(table, &folder, base)
}

/// [`read_manifest`] on the bytes of a manifest; `shown` names it in messages, and trial and
/// config paths are relative to `folder`.
///
/// ```
/// use gravline::batch::read_manifest_bytes;
/// use gravline::config::Config;
/// let text = "trial,subject,mass_kg,height_m,sex\nwalk.csv,s1,70,1.75,f\nrun.csv,s1,70,1.75,\"x\ny\"\n";
/// let plan = read_manifest_bytes(text.as_bytes(), "m.csv", "data".as_ref(), Config::default())?;
/// assert_eq!(plan.jobs[0].path, std::path::Path::new("data/walk.csv"));
/// let e = plan.jobs[1].setup.as_ref().unwrap_err();
/// assert!(e.contains("sex = `x\\ny`") && !e.contains('\n'), "{e}");
/// # Ok::<(), gravline::batch::ManifestError>(())
/// ```
pub fn read_manifest_bytes(
    bytes: &[u8],
    shown: &str,
    folder: &Path,
    base: Config,
) -> Result<Plan, ManifestError> {
    plan_manifest(parse_table(bytes, shown.to_string())?, folder, base)
}

fn plan_manifest(table: Table, folder: &Path, base: Config) -> Result<Plan, ManifestError> {
    table.check_columns(&REQUIRED_COLUMNS)?;
    if table.records.is_empty() {
        return Err(ManifestError::Empty {
            path: table.path.clone(),
        });
    }
    let mut configs = Configs {
        base: Arc::new(base),
        files: HashMap::new(),
    };
    let mut jobs = Vec::with_capacity(table.records.len());
    for i in 0..table.records.len() {
        let Some(r) = table.record(i) else { continue };
        let trial = r.get("trial").unwrap_or_default().to_string();
        let setup = (|| {
            if trial.is_empty() {
                return Err(format!(
                    "{}: `trial` is empty; give the trial file",
                    r.origin
                ));
            }
            let subject = r.subject()?;
            let config = configs.get(r.get("config").map(|c| folder.join(c)))?;
            Ok(JobSetup { subject, config })
        })();
        jobs.push(Job {
            row: i + 1,
            id: String::new(),
            path: folder.join(&trial),
            trial,
            subject: r.get("subject").map(str::to_string),
            condition: r.get("condition").map(str::to_string),
            plates: r.get("plates").map(|p| folder.join(p)),
            setup,
        });
    }
    assign_ids(&mut jobs);
    let warnings = table
        .ignored_columns(&known_columns())
        .into_iter()
        .collect();
    Ok(Plan {
        source: table.path,
        jobs,
        warnings,
    })
}

/// Every `*.csv` and `*.c3d` trial of a folder, sorted by file name, with its subject from `subjects.csv`
/// in the folder (columns `trial` = file name, then as a manifest) or else `defaults.subject`.
///
/// When `out_dir` is the folder itself, the batch's own summary files in it are not trials.
pub fn read_directory(
    dir: &Path,
    base: Config,
    defaults: &DirectoryDefaults,
    out_dir: &Path,
) -> Result<Plan, ManifestError> {
    let shown = dir.display().to_string();
    let same = |a: &Path, b: &Path| {
        a.canonicalize()
            .ok()
            .zip(b.canonicalize().ok())
            .is_some_and(|(a, b)| a == b)
    };
    let is_output = |name: &str| {
        same(dir, out_dir)
            && (name == "summary.csv" || name == "groups.csv" || is_shard_summary(name))
    };
    let entries = std::fs::read_dir(dir).map_err(|error| ManifestError::Io {
        path: shown.clone(),
        error,
    })?;
    let mut names = Vec::new();
    for entry in entries {
        let entry = entry.map_err(|error| ManifestError::Io {
            path: shown.clone(),
            error,
        })?;
        let name = entry.file_name().to_string_lossy().into_owned();
        let is_csv = Path::new(&name)
            .extension()
            .is_some_and(|e| e.eq_ignore_ascii_case("csv") || e.eq_ignore_ascii_case("c3d"));
        // A folder's subject file and a manifest beside the trials are not trials.
        let not_trial = name == SUBJECTS_FILE || name == MANIFEST_FILE;
        if is_csv && !not_trial && !is_output(&name) && entry.path().is_file() {
            names.push(name);
        }
    }
    names.sort();
    if names.is_empty() {
        return Err(ManifestError::Empty { path: shown });
    }
    let subjects_path = dir.join(SUBJECTS_FILE);
    let subjects = if subjects_path.is_file() {
        let table = read_table(&subjects_path)?;
        table.check_columns(&REQUIRED_COLUMNS)?;
        Some(table)
    } else if defaults.subject.is_none() {
        return Err(ManifestError::Invalid {
            path: shown,
            message: format!(
                "no {SUBJECTS_FILE} in the folder and no subject given: add {SUBJECTS_FILE}, or give --subject S.toml or --mass-kg, --height-m and --sex"
            ),
        });
    } else {
        None
    };
    // trial file name -> record index in subjects.csv (the first row naming it).
    let mut by_name: BTreeMap<String, usize> = BTreeMap::new();
    if let Some(t) = &subjects {
        let trial_column = t.headers.get("trial").copied().unwrap_or(0);
        for (i, (_, record)) in t.records.iter().enumerate() {
            if let Some(name) = record.get(trial_column).map(str::trim) {
                by_name.entry(name.to_string()).or_insert(i);
            }
        }
    }
    let mut configs = Configs {
        base: Arc::new(base),
        files: HashMap::new(),
    };
    let mut jobs = Vec::with_capacity(names.len());
    for (i, name) in names.iter().enumerate() {
        let record = subjects
            .as_ref()
            .zip(by_name.get(name))
            .and_then(|(t, &k)| t.record(k));
        let (subject, condition, setup) = match &record {
            Some(r) => {
                let setup = r.subject().and_then(|subject| {
                    let config = configs.get(r.get("config").map(|c| dir.join(c)))?;
                    Ok(JobSetup { subject, config })
                });
                (
                    r.get("subject").map(str::to_string),
                    r.get("condition").map(str::to_string),
                    setup,
                )
            }
            None => match &defaults.subject {
                Some(s) => (
                    s.name.clone(),
                    None,
                    Ok(JobSetup {
                        subject: s.clone(),
                        config: configs.base.clone(),
                    }),
                ),
                None => (
                    None,
                    None,
                    Err(format!(
                        "{}: no row for {}; add one, or give a subject for the whole folder",
                        subjects_path.display(),
                        q(name)
                    )),
                ),
            },
        };
        jobs.push(Job {
            row: i + 1,
            id: String::new(),
            trial: name.clone(),
            path: dir.join(name),
            subject,
            condition,
            plates: record
                .as_ref()
                .and_then(|r| r.get("plates"))
                .map(|p| dir.join(p)),
            setup,
        });
    }
    assign_ids(&mut jobs);
    let mut warnings = Vec::new();
    if let Some(t) = &subjects {
        warnings.extend(t.ignored_columns(&known_columns()));
        let unused: Vec<&str> = by_name
            .keys()
            .map(String::as_str)
            .filter(|n| !names.iter().any(|m| m == n))
            .collect();
        if !unused.is_empty() {
            warnings.push(format!(
                "{}: rows for files not in the folder: {}",
                t.path,
                quote_list(&unused)
            ));
        }
    }
    Ok(Plan {
        source: shown,
        jobs,
        warnings,
    })
}

/// Input quoted for a message: short, on one line ([`crate::textio::quote`]).
fn q(text: &str) -> String {
    crate::textio::quote(text)
}

/// The first few names of a list, each quoted, and how many more there are.
fn quote_list(names: &[&str]) -> String {
    const SHOWN: usize = 10;
    let mut text: Vec<String> = names.iter().take(SHOWN).map(|n| q(n)).collect();
    if names.len() > SHOWN {
        text.push(format!("and {} more", names.len() - SHOWN));
    }
    text.join(", ")
}

/// `summary-K-of-N.csv`, a shard's summary.
fn is_shard_summary(name: &str) -> bool {
    let Some(middle) = name
        .strip_prefix("summary-")
        .and_then(|n| n.strip_suffix(".csv"))
    else {
        return false;
    };
    let Some((k, n)) = middle.split_once("-of-") else {
        return false;
    };
    k.parse::<usize>().is_ok() && n.parse::<usize>().is_ok()
}

/// Output ids: the trial file's stem made a plain folder name ([`super::sanitize_id`]: `..csv`
/// gives `__`, separators and control characters become `_`); when several rows share an id
/// (letter case ignored, as on case-insensitive file systems), each of them gets
/// `<stem>-row<row>` (e.g. `walk-row3`, `walk-row7`), and the suffix is repeated in the rare
/// case that this still meets another id. Ids depend on the whole manifest only, so every
/// shard of a manifest gives a trial the same id.
pub fn assign_ids(jobs: &mut [Job]) {
    let stem = |j: &Job| {
        let stem = Path::new(&j.trial)
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_default();
        super::sanitize_id(&stem)
    };
    let stems: Vec<String> = jobs.iter().map(stem).collect();
    let mut count: HashMap<String, usize> = HashMap::new();
    for s in &stems {
        *count.entry(s.to_lowercase()).or_default() += 1;
    }
    let unique = |s: &str| count.get(&s.to_lowercase()) == Some(&1);
    let mut taken: HashSet<String> = stems
        .iter()
        .filter(|s| unique(s))
        .map(|s| s.to_lowercase())
        .collect();
    for (job, s) in jobs.iter_mut().zip(&stems) {
        if unique(s) {
            job.id = s.clone();
            continue;
        }
        let mut id = format!("{s}-row{}", job.row);
        while taken.contains(&id.to_lowercase()) {
            id = format!("{id}-row{}", job.row);
        }
        taken.insert(id.to_lowercase());
        job.id = id;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn job(row: usize, trial: &str) -> Job {
        Job {
            row,
            id: String::new(),
            trial: trial.to_string(),
            path: PathBuf::from(trial),
            subject: None,
            condition: None,
            plates: None,
            setup: Err(String::new()),
        }
    }

    #[test]
    fn shared_stems_get_the_row_number() {
        let mut jobs = vec![
            job(1, "a/walk.csv"),
            job(2, "stand.csv"),
            job(3, "b/walk.csv"),
            job(4, "walk-row3.csv"),
        ];
        assign_ids(&mut jobs);
        let ids: Vec<&str> = jobs.iter().map(|j| j.id.as_str()).collect();
        assert_eq!(ids, ["walk-row1", "stand", "walk-row3-row3", "walk-row3"]);
    }

    #[test]
    fn hostile_names_get_plain_unique_ids() {
        let mut jobs = vec![
            job(1, "..csv"),
            job(2, "...csv"),
            job(3, "a/\nb.csv"),
            job(4, "<script>.csv"),
            job(5, "Walk.csv"),
            job(6, "walk.csv"),
            job(7, "sub/.."),
            job(8, "_.csv"),
        ];
        jobs[2].trial = "a/x\ny.csv".into();
        assign_ids(&mut jobs);
        let ids: Vec<&str> = jobs.iter().map(|j| j.id.as_str()).collect();
        assert_eq!(
            ids,
            [
                "_-row1",
                "__",
                "x_y",
                "_script_",
                "Walk-row5",
                "walk-row6",
                "trial",
                "_-row8"
            ]
        );
        for id in ids {
            assert!(super::super::confined_id(id).is_ok(), "{id:?}");
        }
    }

    fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
        let p = dir.join(name);
        std::fs::write(&p, text).unwrap();
        p
    }

    #[test]
    fn a_missing_column_is_fatal_and_named() {
        let dir = tempfile::tempdir().unwrap();
        let p = write(
            dir.path(),
            "m.csv",
            "trial,subject,mass_kg,sex\na.csv,s1,70,male\n",
        );
        let e = read_manifest(&p, Config::default())
            .unwrap_err()
            .to_string();
        assert!(e.contains("`height_m`") && e.contains("m.csv"), "{e}");
    }

    #[test]
    fn a_bad_row_fails_alone_with_its_line() {
        let dir = tempfile::tempdir().unwrap();
        let p = write(
            dir.path(),
            "m.csv",
            "# comment\ntrial,subject,mass_kg,height_m,sex,notes\na.csv,s1,70,1.75,male,x\nb.csv,s2,heavy,1.7,female,y\nc.csv,s3,0,1.7,female,\n",
        );
        let plan = read_manifest(&p, Config::default()).unwrap();
        assert_eq!(plan.jobs.len(), 3);
        assert!(plan.jobs[0].setup.is_ok());
        let e1 = plan.jobs[1].setup.as_ref().unwrap_err();
        assert!(
            e1.contains("line 4") && e1.contains("mass_kg = `heavy`, not a number"),
            "{e1}"
        );
        let e2 = plan.jobs[2].setup.as_ref().unwrap_err();
        assert!(e2.contains("line 5") && e2.contains("mass_kg = 0"), "{e2}");
        assert_eq!(plan.warnings.len(), 1);
        assert!(plan.warnings[0].contains("notes"));
        assert_eq!(plan.jobs[1].path, dir.path().join("b.csv"));
    }

    #[test]
    fn subject_measurements_come_from_their_columns() {
        let dir = tempfile::tempdir().unwrap();
        let p = write(
            dir.path(),
            "m.csv",
            "trial,subject,mass_kg,height_m,sex,leg_length_m,knee_width_m,wrist_width_m\na.csv,s1,70,1.75,f,0.91,0.105,\n",
        );
        let plan = read_manifest(&p, Config::default()).unwrap();
        let s = &plan.jobs[0].setup.as_ref().unwrap().subject;
        assert_eq!(
            (s.sex, s.leg_length_m, s.knee_width_m),
            (Sex::Female, Some(0.91), Some(0.105))
        );
        assert_eq!((s.wrist_width_m, s.name.as_deref()), (None, Some("s1")));
        assert!(plan.warnings.is_empty());
    }

    #[test]
    fn a_directory_is_sorted_and_uses_subjects_csv() {
        let dir = tempfile::tempdir().unwrap();
        for n in [
            "b.csv",
            "a.csv",
            "c.CSV",
            "notes.txt",
            "summary-1-of-2.csv",
            "manifest.csv",
        ] {
            write(dir.path(), n, "");
        }
        write(
            dir.path(),
            SUBJECTS_FILE,
            "trial,subject,mass_kg,height_m,sex,condition\nb.csv,s2,60,1.6,female,slow\n",
        );
        let defaults = DirectoryDefaults {
            subject: Some(Subject::new(70.0, 1.75, Sex::Male)),
        };
        let plan = read_directory(
            dir.path(),
            Config::default(),
            &defaults,
            Path::new("elsewhere"),
        )
        .unwrap();
        let names: Vec<&str> = plan.jobs.iter().map(|j| j.trial.as_str()).collect();
        assert_eq!(names, ["a.csv", "b.csv", "c.CSV", "summary-1-of-2.csv"]);
        let own = read_directory(dir.path(), Config::default(), &defaults, dir.path()).unwrap();
        assert_eq!(
            own.jobs.len(),
            3,
            "the batch's own outputs in the folder are not trials"
        );
        let b = plan.jobs[1].setup.as_ref().unwrap();
        assert_eq!((b.subject.mass_kg, b.subject.sex), (60.0, Sex::Female));
        assert_eq!(plan.jobs[1].condition.as_deref(), Some("slow"));
        assert_eq!(plan.jobs[0].setup.as_ref().unwrap().subject.mass_kg, 70.0);
    }

    #[test]
    fn a_directory_without_any_subject_is_fatal() {
        let dir = tempfile::tempdir().unwrap();
        write(dir.path(), "a.csv", "");
        let e = read_directory(
            dir.path(),
            Config::default(),
            &DirectoryDefaults::default(),
            dir.path(),
        )
        .unwrap_err();
        assert!(e.to_string().contains("--subject"), "{e}");
    }
}
