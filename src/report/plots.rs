//! Plots (DESIGN.md 9).

use crate::pipeline::{Error, TrialResult};
use crate::report::Summary;
use std::path::Path;

/// Image format of a figure.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PlotFormat {
    Png,
    Svg,
}

/// Writes the figures of one trial into `dir`.
pub fn write_plots(
    _dir: &Path,
    _result: &TrialResult,
    _summary: &Summary,
    _format: PlotFormat,
) -> Result<(), Error> {
    Ok(())
}
