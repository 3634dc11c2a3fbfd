//! One way through the house: [`run_trial`] takes a read [`Trial`] through every stage
//! (docs/DESIGN.md 2) and returns a [`TrialResult`]. The CLI (`trial`, `demo`) and `batch` call this
//! and nothing else of the stages, so batch results cannot drift from single-trial results.
//!
//! Order (docs/reference/methods.md 4, "order of operations"): fill gaps, filter markers, then joint
//! centers, segments and CoM, then derivatives, XCoM, and the base of support.

#![allow(clippy::result_large_err)] // `ComError` and `LandmarkError` (~150 bytes) pass through here

use crate::anthropometry::SegmentTable;
use crate::body::model::{PointId, FOOT_POINTS};
use crate::body::{BodyModel, LandmarkError};
use crate::com::{self, ComError, ComModel, P};
use crate::config::{Config, Subject, XcomLength};
use crate::signal::{self, SignalError};
use crate::support::{self, SupportSeries};
use crate::trial::{RawMarkers, Trial, UpAxis};
use crate::warning::Warning;

/// Anything that stops a trial.
#[derive(Debug, thiserror::Error)]
pub enum PipelineError {
    #[error(transparent)]
    Landmark(#[from] LandmarkError),
    #[error(transparent)]
    Com(#[from] ComError),
    #[error("{file}: {source}")]
    Signal { file: String, source: SignalError },
    #[error(transparent)]
    Declaration(#[from] crate::checks::DeclarationError),
}

/// Options of one run that are not part of the configuration.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct RunOptions {
    /// Keep per-segment CoM series (`seg_<segment>_*` columns).
    pub segments: bool,
}

/// Figures that say how the CoM was obtained (summary provenance).
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct ModelInfo {
    pub table: String,
    pub population: String,
    pub table_source: String,
    pub hip: String,
    pub segments: Vec<String>,
    pub body_mass_kg: f64,
    pub system_mass_kg: f64,
    pub cutoff_hz: Option<f64>,
    pub max_gap_s: f64,
    pub leg_length_m: Option<f64>,
    /// Pendulum length of the XCoM and its eigenfrequency sqrt(g / l).
    pub xcom_length_m: Option<f64>,
    pub omega0_rad_s: Option<f64>,
    /// How the gait events of walking trials are found.
    pub gait_events: crate::config::GaitEventMethod,
}

/// Everything computed for one trial, frame by frame.
#[derive(Clone, Debug)]
pub struct TrialResult {
    pub name: String,
    pub times_s: Vec<f64>,
    pub rate_hz: f64,
    pub up_axis: UpAxis,
    /// System CoM (body + loads) and everything derived from it.
    pub com: Vec<Option<[f64; 3]>>,
    pub velocity: Vec<Option<[f64; 3]>>,
    pub acceleration: Vec<Option<[f64; 3]>>,
    /// XCoM with its vertical coordinate at floor level.
    pub xcom: Vec<Option<[f64; 3]>>,
    /// Body CoM (loads excluded); equal to `com` without loads.
    pub body_com: Vec<Option<[f64; 3]>>,
    pub load_names: Vec<String>,
    /// `loads[l][frame]`: each load's position.
    pub loads: Vec<Vec<Option<[f64; 3]>>>,
    pub group_names: Vec<String>,
    pub groups: Vec<Vec<Option<[f64; 3]>>>,
    /// Empty unless [`RunOptions::segments`].
    pub segment_names: Vec<String>,
    pub segments: Vec<Vec<Option<[f64; 3]>>>,
    pub support: SupportSeries,
    /// Mid-foot and repetitions, for trials with loads.
    pub lift: Option<support::lift::LiftSeries>,
    /// The CoM's spread between models, when the configuration asks for it.
    pub spread: Option<com::spread::SpreadSeries>,
    /// Ground reaction, CoP, clean strikes, cross-check and fused CoM, with a plate recording.
    pub plates: Option<crate::plates::PlateSeries>,
    pub model: ModelInfo,
    pub warnings: Vec<Warning>,
    /// The movement and its figures (gait, jump, repetitions, sway).
    pub movement: crate::movement::MovementFigures,
    /// Median thigh and shank lengths (m), for the plausibility check.
    pub segment_lengths_m: Vec<(String, f64)>,
    /// The foot points per frame, for the BoS at any frame ([`support::stage::bos_at`]).
    pub feet: support::FootFrames,
}

impl TrialResult {
    pub fn n_frames(&self) -> usize {
        self.times_s.len()
    }

    /// A frame is valid when its system CoM exists.
    pub fn is_valid(&self, frame: usize) -> bool {
        self.com.get(frame).is_some_and(Option::is_some)
    }

    /// Share of valid frames, 0..1.
    pub fn valid_fraction(&self) -> f64 {
        if self.com.is_empty() {
            return 0.0;
        }
        self.com.iter().filter(|c| c.is_some()).count() as f64 / self.com.len() as f64
    }
}

/// Runs one trial through every stage, on up to `threads` threads (the caller's share of the
/// machine; the result does not depend on it). The raw tracks are taken over: each is filled
/// in place and low-passed on the same thread while it is in cache.
pub fn run_trial(
    trial: Trial,
    config: &Config,
    subject: &Subject,
    table: &SegmentTable,
    options: RunOptions,
    threads: usize,
) -> Result<TrialResult, PipelineError> {
    run_trial_with_plates(trial, config, subject, table, options, threads, None)
}

/// [`run_trial`] with a plate recording for the plate stage (module [`crate::plates`]).
pub fn run_trial_with_plates(
    mut trial: Trial,
    config: &Config,
    subject: &Subject,
    table: &SegmentTable,
    options: RunOptions,
    threads: usize,
    plates: Option<&crate::plates::PlateRecording>,
) -> Result<TrialResult, PipelineError> {
    let threads = threads.max(1);
    let models = Models::resolve(&trial, config, subject, table)?;
    let found = declarations(&models, &trial, config, subject, |i, f| {
        trial.markers.point(i, f)
    })?;
    let filter = low_pass_design(&trial, config)?;
    let raw = RawMarkers::new(trial.markers.labels.clone(), trial.markers.take_tracks());
    let (markers, gaps) = signal::fill_and_low_pass(
        raw,
        &trial.times_s,
        config.max_gap_s,
        filter.as_ref().map(|(c, pad)| (c, *pad)),
        threads,
    );
    let result = run_resolved(
        &trial, models, &markers, &gaps, config, subject, table, options, threads, plates,
    );
    // Freeing that much memory holds up the page faults of work running beside it: the
    // markers are freed on a thread of their own while the caller goes on (writing outputs).
    if threads > 1 {
        std::thread::spawn(move || drop(markers));
    }
    let mut result = result?;
    result.warnings.splice(0..0, found);
    Ok(result)
}

/// The declaration check (units, up axis) before any computation: an error naming the fix, or
/// what was detected where nothing was declared.
fn declarations(
    models: &Models,
    trial: &Trial,
    config: &Config,
    subject: &Subject,
    marker: impl Fn(usize, usize) -> Option<[f64; 3]>,
) -> Result<Vec<Warning>, PipelineError> {
    let detected = crate::checks::detect(
        &models.body,
        trial.n_frames(),
        marker,
        config.up_axis,
        subject.height_m,
    );
    Ok(match detected {
        Some(d) => crate::checks::check(&d, config, subject.height_m, &trial.file)?,
        None => Vec::new(),
    })
}

/// The stages after gap filling and filtering (module doc, order of operations): the
/// per-frame core (body model, segments, CoM, on ranges of frames at once), derivatives, XCoM
/// and the base of support, for `markers` filled from `trial` (whose raw tracks are not read).
#[allow(clippy::too_many_arguments)]
pub fn run_filled(
    trial: &Trial,
    markers: &signal::Markers,
    gaps: &[signal::FilledGap],
    config: &Config,
    subject: &Subject,
    table: &SegmentTable,
    options: RunOptions,
    threads: usize,
) -> Result<TrialResult, PipelineError> {
    let models = Models::resolve(trial, config, subject, table)?;
    run_resolved(
        trial,
        models,
        markers,
        gaps,
        config,
        subject,
        table,
        options,
        threads.max(1),
        None,
    )
}

/// The low-pass section and its end pad, when the configuration asks for one.
fn low_pass_design(
    trial: &Trial,
    config: &Config,
) -> Result<Option<(signal::Coefficients, usize)>, PipelineError> {
    let Some(cutoff_hz) = config.cutoff_hz else {
        return Ok(None);
    };
    let c =
        signal::design(trial.rate_hz, cutoff_hz, true).map_err(|source| PipelineError::Signal {
            file: trial.file.clone(),
            source,
        })?;
    Ok(Some((c, c.pad_len())))
}

/// The body and CoM models of a trial: everything that can be missing, found out before any
/// computation.
struct Models {
    body: BodyModel,
    com: ComModel,
}

impl Models {
    fn resolve(
        trial: &Trial,
        config: &Config,
        subject: &Subject,
        table: &SegmentTable,
    ) -> Result<Models, PipelineError> {
        let labels = &trial.markers.labels;
        let body = BodyModel::build(labels, &trial.file, config, subject, table, &FOOT_POINTS)?;
        let com = ComModel::new(labels, &trial.file, config, &body)?;
        Ok(Models { body, com })
    }
}

/// Frames per range of the per-frame work shared among threads (fewer frames run on one).
const FRAMES_PER_RANGE_MIN: usize = 4096;

type Series = Vec<Option<[f64; 3]>>;
/// The part of every series that one range of frames fills.
type SeriesParts<'a> = Vec<&'a mut [Option<[f64; 3]>]>;

/// The per-frame work over the frames from `start` on, one per element of the `out` slices:
/// each frame's markers (those in `used`) into the body model, its points into the segments
/// and the CoM. `out` holds, in this order, the system CoM, the body CoM, each load, each
/// group, each segment (when `segments`) and the foot points `foot_ids`.
fn frame_series(
    models: &Models,
    markers: &signal::Markers,
    used: &[usize],
    start: usize,
    out: &mut [&mut [Option<[f64; 3]>]],
    foot_ids: &[PointId],
    segments: bool,
) {
    let (body, com_model) = (&models.body, &models.com);
    let n = out.first().map_or(0, |s| s.len());
    let mut frame_markers: Vec<Option<[f64; 3]>> = vec![None; markers.labels.len()];
    let mut samples: Vec<(usize, signal::Samples)> = used
        .iter()
        .filter_map(|&i| Some((i, markers.tracks.get(i)?.samples_from(start))))
        .collect();
    let mut points = Vec::with_capacity(body.n_points());
    let mut seg = Vec::with_capacity(body.segments.len());
    for j in 0..n {
        for (i, s) in &mut samples {
            if let Some(slot) = frame_markers.get_mut(*i) {
                *slot = s.next().flatten();
            }
        }
        body.evaluate(&frame_markers, &mut points);
        let c = com_model.frame(body, &points, &frame_markers, &mut seg);
        let segment_coms: &[Option<P>] = if segments { &seg } else { &[] };
        let values = [c.system, c.body]
            .into_iter()
            .chain(c.loads.iter().copied())
            .chain(c.groups.iter().copied())
            .chain(segment_coms.iter().copied())
            .map(|p| p.map(to_array))
            .chain(
                foot_ids
                    .iter()
                    .map(|&id| points.get(id).copied().flatten().map(to_array)),
            );
        for (series, v) in out.iter_mut().zip(values) {
            if let Some(slot) = series.get_mut(j) {
                *slot = v;
            }
        }
    }
}

/// [`run_filled`] with the models resolved.
#[allow(clippy::too_many_arguments)]
fn run_resolved(
    trial: &Trial,
    models: Models,
    markers: &signal::Markers,
    gaps: &[signal::FilledGap],
    config: &Config,
    subject: &Subject,
    table: &SegmentTable,
    options: RunOptions,
    threads: usize,
    plates: Option<&crate::plates::PlateRecording>,
) -> Result<TrialResult, PipelineError> {
    let labels = &trial.markers.labels;
    let Models {
        body: mut body_model,
        com: com_model,
    } = models;
    let mut warnings = trial.warnings.clone();
    warnings.extend(signal::filled_warnings(
        gaps,
        labels,
        &trial.times_s,
        trial.rate_hz,
    ));

    let n = trial.n_frames();
    let mut used = body_model.markers_used.clone();
    for load in &com_model.loads {
        used.extend(load.marker_indices());
    }
    used.sort_unstable();
    used.dedup();
    body_model.measure_leg_length(markers);
    warnings.extend(body_model.warnings.iter().cloned());

    let models = Models {
        body: body_model,
        com: com_model,
    };
    let (n_loads, n_groups) = (models.com.loads.len(), models.com.groups.len());
    let n_segments = if options.segments {
        models.body.segments.len()
    } else {
        0
    };
    let n_series = 2 + n_loads + n_groups + n_segments;
    let mut foot = support::FootFrames::new(&models.body, 0);
    let n_foot = foot.series_mut().len();
    // The series are allocated, and their memory first touched, on every thread at once.
    let mut fresh = signal::in_groups(vec![(); n_series + n_foot], threads, |group| {
        group
            .into_iter()
            .map(|()| vec![None; n])
            .collect::<Vec<Series>>()
    })
    .into_iter()
    .flatten();
    let mut series: Vec<Series> = fresh.by_ref().take(n_series).collect();
    for (slot, whole) in foot.series_mut().into_iter().zip(fresh) {
        *slot = whole;
    }
    let foot_ids = foot.point_ids();
    // Frames are independent: ranges of them run at once, each into its part of every series.
    let n_ranges = threads.clamp(1, (n / FRAMES_PER_RANGE_MIN).max(1));
    let bounds: Vec<usize> = (0..=n_ranges).map(|k| n * k / n_ranges).collect();
    let mut ranges: Vec<(usize, SeriesParts)> = bounds
        .iter()
        .take(n_ranges)
        .map(|&b| (b, Vec::new()))
        .collect();
    for whole in series.iter_mut().chain(foot.series_mut()) {
        let mut rest = whole.as_mut_slice();
        for (range, w) in ranges.iter_mut().zip(bounds.windows(2)) {
            let (part, tail) = std::mem::take(&mut rest).split_at_mut(w[1] - w[0]);
            range.1.push(part);
            rest = tail;
        }
    }
    signal::in_groups(ranges, n_ranges, |group| {
        for (start, mut out) in group {
            frame_series(
                &models,
                markers,
                &used,
                start,
                &mut out,
                &foot_ids,
                options.segments,
            );
        }
    });
    let segment_lengths_m = crate::checks::segment_lengths_m(&models.body, n, |f| {
        markers.tracks.iter().map(|t| t.at(f)).collect()
    });
    let Models {
        body,
        com: com_model,
    } = models;
    let mut series = series.into_iter();
    let mut take = |k: usize| -> Vec<Series> { series.by_ref().take(k).collect() };
    let (system, body_com) = {
        let mut two = take(2).into_iter();
        (
            two.next().unwrap_or_default(),
            two.next().unwrap_or_default(),
        )
    };
    let loads = take(n_loads);
    let groups = take(n_groups);
    let segments = take(n_segments);

    let dt = 1.0 / trial.rate_hz;
    // The floor found on another thread, the derivatives on this one.
    let (floor, (velocity, acceleration)) = signal::both(
        threads,
        || support::floor_m(&foot, trial.up_axis, &config.support, trial.rate_hz),
        || signal::derivative::of_series(&system, dt),
    );

    let xcom_length_m = match config.xcom_length {
        XcomLength::Metres(m) => Some(m),
        XcomLength::Leg => body.leg_length_m,
    };
    if xcom_length_m.is_none() {
        warnings.push(Warning::Approximation {
            what: "no leg length (subject leg_length_m or ASIS and malleolus markers): no XCoM"
                .to_string(),
        });
    }
    let omega0 = xcom_length_m.map(com::omega0);
    let (floor, floor_warning) = floor;
    warnings.extend(floor_warning);
    let floor_m = floor.level_m;
    let spread = config.spread.then(|| {
        let s = com::spread::compute(markers, &trial.file, config, subject);
        warnings.extend(s.warnings(&system, trial.up_axis));
        s
    });
    let up = trial.up_axis;
    let xcom_of = |com: &[Option<[f64; 3]>], velocity: &[Option<[f64; 3]>]| -> Series {
        com.iter()
            .zip(velocity)
            .map(|(c, v)| {
                let (c, v, w) = (c.as_ref()?, v.as_ref()?, omega0?);
                let xi = com::xcom_horizontal(up.horizontal(c), up.horizontal(v), w);
                Some(up.point(xi, floor_m))
            })
            .collect()
    };
    let support_of =
        |com: &[Option<[f64; 3]>], velocity: &[Option<[f64; 3]>], xcom: &[Option<[f64; 3]>]| {
            support::stage::analyse_on(
                &foot,
                com,
                velocity,
                xcom,
                &floor,
                up,
                &trial.times_s,
                trial.rate_hz,
                &config.support,
                threads,
            )
        };
    let xcom = xcom_of(&system, &velocity);
    let support = support_of(&system, &velocity, &xcom);
    warnings.extend(support.warnings.iter().cloned());
    let plates = plates.map(|rec| {
        crate::plates::analyse(
            rec,
            &crate::plates::Kinematics {
                times_s: &trial.times_s,
                rate_hz: trial.rate_hz,
                up,
                mass_kg: com_model.system_mass_kg,
                com: &system,
                velocity: &velocity,
                acceleration: &acceleration,
                contact: &support.contact,
                foot: &foot,
            },
        )
    });
    warnings.extend(plates.iter().flat_map(|p| p.warnings.iter().cloned()));
    // `[support] com = "fused"`: the XCoM and margins from the fused CoM where it exists.
    let (xcom, support) = match (&plates, config.support.com) {
        (Some(p), crate::config::ComSource::Fused) => {
            let (c, v) = crate::plates::fused_or_segmental(&system, &velocity, p);
            let x = xcom_of(&c, &v);
            let s = support_of(&c, &v, &x);
            (x, s)
        }
        _ => (xcom, support),
    };
    let lift = loads.first().map(|bar| {
        support::lift::analyse(
            &foot,
            &support,
            &system,
            bar,
            up,
            &trial.times_s,
            trial.rate_hz,
            config.support.midfoot_band_m,
        )
    });

    let model = ModelInfo {
        table: table.name.clone(),
        population: table.population.clone(),
        table_source: table.source.clone(),
        hip: config.hip.name().to_string(),
        segments: body
            .segments
            .iter()
            .map(|s| format!("{} ({})", s.name, s.row_key))
            .collect(),
        body_mass_kg: com_model.body_mass_kg,
        system_mass_kg: com_model.system_mass_kg,
        cutoff_hz: config.cutoff_hz,
        max_gap_s: config.max_gap_s,
        leg_length_m: body.leg_length_m,
        xcom_length_m,
        omega0_rad_s: omega0,
        gait_events: config.support.gait_events,
    };
    let mut result = TrialResult {
        name: trial.name.clone(),
        times_s: trial.times_s.clone(),
        rate_hz: trial.rate_hz,
        up_axis: trial.up_axis,
        com: system,
        velocity,
        acceleration,
        xcom,
        body_com,
        load_names: com_model.loads.iter().map(|l| l.name.clone()).collect(),
        loads,
        group_names: com_model.groups.iter().map(|g| g.name.clone()).collect(),
        groups,
        segment_names: if options.segments {
            body.segments.iter().map(|s| s.name.clone()).collect()
        } else {
            Vec::new()
        },
        segments,
        support,
        lift,
        spread,
        plates,
        model,
        warnings,
        movement: Default::default(),
        segment_lengths_m,
        feet: foot,
    };
    result.movement = crate::movement::analyse(&result, config.movement, &result.feet);
    result.warnings.extend(crate::movement::unused_load_warning(
        labels,
        !result.load_names.is_empty(),
    ));
    Ok(result)
}

fn to_array(p: P) -> [f64; 3] {
    [p.x, p.y, p.z]
}

/// A fatal problem with one trial or its setup: one line, with file and position.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    #[error(transparent)]
    Trial(#[from] crate::trial::TrialError),
    #[error(transparent)]
    C3d(#[from] crate::c3d::C3dError),
    #[error(transparent)]
    Config(#[from] crate::config::ConfigError),
    #[error(transparent)]
    Table(#[from] crate::anthropometry::TableError),
    #[error(transparent)]
    Pipeline(#[from] PipelineError),
    #[error("cannot write {path}: {source}")]
    Write {
        path: String,
        source: std::io::Error,
    },
    #[error("cannot read {path}: {source}")]
    Read {
        path: String,
        source: std::io::Error,
    },
    #[error(transparent)]
    Plates(#[from] crate::plates::PlateError),
}

/// Threads one trial may use: every core, except on a worker of a thread pool (a batch, which
/// already runs one trial per core), where a trial keeps to its own thread.
pub fn trial_threads() -> usize {
    if rayon::current_thread_index().is_some() {
        1
    } else {
        std::thread::available_parallelism().map_or(1, |n| n.get())
    }
}

/// A validated configuration, subject and table: everything a trial needs besides its file.
#[derive(Clone, Debug)]
pub struct Setup {
    pub config: Config,
    pub subject: Subject,
    pub table: SegmentTable,
}

impl Setup {
    /// Loads the table the configuration names for the subject's sex.
    pub fn new(config: Config, subject: Subject) -> Result<Setup, Error> {
        let table = if config.table == "geometric" {
            crate::body::geometric::table(&subject)?
        } else {
            SegmentTable::load(&config.table, subject.sex)?
        };
        Ok(Setup {
            config,
            subject,
            table,
        })
    }

    /// SHA-256 of the configuration, subject and table, as JSON (for provenance and resume).
    pub fn hash(&self) -> String {
        let json = serde_json::json!({
            "config": self.config,
            "subject": self.subject,
            "table": self.table,
        });
        crate::report::sha256_hex(json.to_string().as_bytes())
    }
}

/// How to write a trial's outputs.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct OutputOptions {
    pub run: RunOptions,
    /// Plot formats to write; empty = no plots.
    pub plots: Vec<crate::report::plots::PlotFormat>,
    /// Skip `report.html` (`--no-report`).
    pub no_report: bool,
}

/// Reads a trial file, runs it, and writes its outputs into `dir` (`frames.csv`,
/// `summary.json`, `steps.csv` when steps were found, plots): the one path that `trial`, `demo`
/// and `batch` share.
pub fn process_file(
    path: &std::path::Path,
    setup: &Setup,
    dir: &std::path::Path,
    options: &OutputOptions,
) -> Result<crate::report::Summary, Error> {
    process_file_then(path, setup, dir, options, |_, _| Ok(()))
}

/// [`process_file`], running `before_summary` on the result after the other outputs are written
/// and before `summary.json` (the batch writes its dataset files there).
pub fn process_file_then(
    path: &std::path::Path,
    setup: &Setup,
    dir: &std::path::Path,
    options: &OutputOptions,
    before_summary: impl FnOnce(&TrialResult, &crate::report::Summary) -> Result<(), Error>,
) -> Result<crate::report::Summary, Error> {
    let bytes = crate::trial::TrialBytes::open(path).map_err(|source| Error::Read {
        path: path.display().to_string(),
        source,
    })?;
    let stem = path
        .file_stem()
        .map_or("trial".to_string(), |s| s.to_string_lossy().into_owned());
    let threads = trial_threads();
    // The digest is taken on its own thread while the numbers are parsed.
    let (input_sha256, trial) = std::thread::scope(|s| {
        let digest = (threads > 1).then(|| s.spawn(|| crate::report::sha256_hex(&bytes)));
        let trial = if crate::c3d::is_c3d(path, &bytes) {
            // A C3D's force plates go to the plate stage unless a plate file is given.
            let opts = crate::c3d::C3dOptions::default();
            crate::c3d::parse(&bytes, &path.display().to_string(), &opts)
                .and_then(|c3d| {
                    let plates =
                        crate::plates::from_c3d(&c3d.plates, setup.config.read_options().up_axis);
                    crate::c3d::into_trial(c3d, &stem, &setup.config.read_options())
                        .map(|t| (t, plates))
                })
                .map_err(Error::from)
        } else {
            crate::trial::read_trial_bytes(
                &bytes,
                &path.display().to_string(),
                &stem,
                &setup.config.read_options(),
                threads,
            )
            .map(|t| (t, None))
            .map_err(Error::from)
        };
        let sha = match digest.map(|d| d.join()) {
            Some(Ok(sha)) => sha,
            _ => crate::report::sha256_hex(&bytes),
        };
        (sha, trial)
    });
    let (trial, c3d_plates) = trial?;
    drop(bytes);
    let plates = match &setup.config.plates_file {
        Some(p) => Some(crate::plates::read_plates_file(
            p,
            &setup.config.plates,
            setup.config.up_axis,
        )?),
        None => c3d_plates,
    };
    let result = run_trial_with_plates(
        trial,
        &setup.config,
        &setup.subject,
        &setup.table,
        options.run,
        threads,
        plates.as_ref(),
    )?;
    let summary =
        crate::report::Summary::new(&result, &setup.subject, Some(input_sha256), setup.hash());
    let written = crate::report::write_outputs_then(
        dir,
        &result,
        &summary,
        &options.plots,
        !options.no_report,
        before_summary,
    );
    written?;
    Ok(summary)
}
