//! Non-fatal findings, kept as values and reported in `summary.json` (never printed deep in the
//! code). Each stage adds the variants it can raise.

use serde::Serialize;
use std::fmt;

/// A non-fatal finding about a trial: kept in the summary and printed once by the binary.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Warning {
    /// Columns of the trial file that are neither time/frame nor marker coordinates.
    IgnoredColumns { columns: Vec<String> },
    /// An interior gap bridged by the natural cubic spline.
    FilledGap {
        marker: String,
        start_s: f64,
        length_s: f64,
    },
    /// A documented approximation was used in place of a measured landmark or segment.
    Approximation { what: String },
    /// A table's mass fractions do not sum to 1; the weighted average divides by the actual sum.
    MassFractionSum { table: String, sum: f64 },
    /// A figure outside the range that is usual for people (a hint to check the input).
    Plausibility { message: String },
    /// A figure smaller than the spread of the CoM between models (`--spread`).
    ModelSpread { message: String },
    /// A reading declaration left to its default, and what the data showed.
    Detected { what: String },
    /// A finding of the C3D reader (header and parameters disagreeing, repeated labels, points
    /// never valid, force plates skipped).
    C3d { message: String },
}

impl fmt::Display for Warning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Warning::IgnoredColumns { columns } => {
                write!(f, "ignored columns (not time, frame or marker coordinates): {}", columns.join(", "))
            }
            Warning::FilledGap { marker, start_s, length_s } => write!(
                f,
                "marker `{marker}`: gap of {length_s:.3} s from {start_s:.3} s filled by cubic spline"
            ),
            Warning::Approximation { what } => write!(f, "approximation: {what}"),
            Warning::MassFractionSum { table, sum } => write!(
                f,
                "table `{table}`: mass fractions sum to {sum:.4}, not 1; CoM divides by the actual sum"
            ),
            Warning::Plausibility { message } => write!(f, "plausibility: {message}"),
            Warning::ModelSpread { message } => write!(f, "spread between models: {message}"),
            Warning::Detected { what } => write!(f, "detected: {what}"),
            Warning::C3d { message } => write!(f, "c3d: {message}"),
        }
    }
}
