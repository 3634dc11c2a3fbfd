//! gravline: the whole-body center of mass (CoM) from 3D marker trajectories, its velocity, and
//! its margin to the base of support (BoS).
//!
//! The pipeline (docs/DESIGN.md 2), one module per stage, dependencies running one way:
//!
//! ```text
//! trial CSV --trial--> Trial (RawMarkers: gappy, metres, up axis known)
//!   --signal--> Markers (gaps <= max_gap_s filled, low-passed)
//!   --body + anthropometry--> landmarks, joint centers, segments with mass and CoM fractions
//!   --com--> system / body / group CoM per frame, XCoM
//!   --support--> contact, BoS polygon, signed margins, gait events
//!   --report--> frames.csv, steps.csv, summary.json, plots      --batch--> summary tables
//! ```
//!
//! [`pipeline::run_trial`] runs one trial through every stage; [`pipeline::process_file`] adds
//! reading and writing. The command line and [`batch`] call these and nothing else.
//!
//! Glossary (the only abbreviations used in code and output):
//! - **CoM**: center of mass.
//! - **XCoM**: extrapolated center of mass, CoM + velocity / omega0 (Hof et al. 2005).
//! - **BoS**: base of support, the convex hull of the feet in contact.
//! - **MoS**: margin of stability, distance from the XCoM to the BoS edge.
//! - **JC**: joint center.

// Errors carry the file, label, position and a hint as text by design (one line a user can act
// on); they are built at most once per trial, so their size does not matter.

/// Segment tables: de Leva 1996, Dempster via Winter, user tables.
pub mod anthropometry;
/// Many trials: manifest, parallel runs, summary tables, shards.
pub mod batch;
/// Landmarks, joint centers and segments.
pub mod body;
/// Reading C3D files: points, analog channels, force plates; the C3D writer and converter.
pub mod c3d;
/// Declarations (units, up axis) checked against the data; implausible figures.
pub mod checks;
/// Segment CoMs, the weighted whole-body CoM, loads, groups, XCoM.
pub mod com;
/// Configuration and subject, validated once.
pub mod config;
/// Strides and repetitions resampled to 0-100 % (cycles.csv).
pub mod cycles;
/// Movement recognition and per-movement figures (walk, jump, squat, stand).
pub mod movement;
/// One trial through every stage.
pub mod pipeline;
/// Force plates: GRF, CoP, clean strikes, the m(a+g) cross-check, the fused CoM, sway, jumps.
pub mod plates;
/// frames.csv, steps.csv, summary.json and plots.
pub mod report;
/// Gap filling, zero-lag low-pass, residual analysis, derivatives.
pub mod signal;
/// Order statistics shared by the stages (percentile).
pub mod stats;
/// Foot contact, BoS polygon, margins, gait events.
pub mod support;
/// Synthetic trials for the demo, the tests and the benchmarks.
pub mod synth;
/// Bounded reading of small text inputs; short one-line quotes of input in messages.
pub mod textio;
/// Reading trial files.
pub mod trial;
/// The landmark vocabulary: our names for landmarks and joint centers, sides.
pub mod vocabulary;
/// Non-fatal findings kept in the summary.
pub mod warning;
