//! Plots, the last part of the reporting stage (docs/DESIGN.md 9): a
//! [`TrialResult`] becomes figures a reviewer can read, as PNG or SVG.
//!
//! - `path.png|svg`: top view of the floor plane (the two horizontal axes of the lab, named as in
//!   the input), equal scale in metres: CoM and XCoM paths, BoS outlines, footprints per side,
//!   start and end marks ([`path_view`] gives its pixel transform). A view much wider than tall
//!   (a walk) gets a shorter figure with the legend below; a small sway (quiet standing) gets a
//!   magnified inset with a scale bar.
//! - `series.png|svg`: three panels over one time axis in seconds: CoM speed with its
//!   horizontal and vertical components (m/s); BoS margin and MoS (m) with the zero line and the
//!   spans with the CoM outside the BoS shaded; CoM height above the floor (m). Heel strikes
//!   (solid) and toe-offs (dashed) of each side are vertical marks in every panel.
//! - `lift.png|svg`, only for trials with loads: side view, position along the progression
//!   direction against height above the floor, equal scale: the first load's path (the bar),
//!   the system CoM and the body CoM, beside a vertical mid-foot band ([`lift_view`]).
//!
//! Missing values break lines: no segment joins two frames across a gap. Tick labels carry two
//! decimals. The XCoM is Hof et al. (2005), J Biomech 38:1-8; the margins, contact and events
//! come from the support stage, which cites its sources.
//!
//! The mid-foot band of the lift figure: centred on the mean over frames of the lift stage's
//! mid-foot (per foot in contact the midpoint between heel and metatarsal heads,
//! [`crate::support::lift`]), projected on the progression direction, with the configured
//! half-width (`[support] midfoot_band_m`, default 0.05 m, common practice, no source). A result
//! without that series falls back to the mean of the footprint centroids and
//! [`MIDFOOT_HALF_WIDTH_M`].
//!
//! Text is drawn with DejaVu Sans, embedded in the binary by the `dejavu` crate and registered
//! once with plotters' `ab_glyph` text renderer, so a machine without system fonts renders
//! labels. DejaVu fonts are free software under the Bitstream Vera font licence (with the
//! Arev additions under a similar licence), which allows use, embedding and redistribution.
//!
//! Each file is written through a temporary name in the same folder and a rename (as
//! [`crate::report::write_atomic`]), so an interrupted run never leaves a truncated figure.

#![allow(clippy::result_large_err)] // `ComError` and `LandmarkError` (~150 bytes) pass through here

mod group;
mod lift;
mod path;
mod series;
mod style;

use crate::pipeline::{Error, TrialResult};
use crate::report::Summary;
use plotters::coord::Shift;
use plotters::prelude::*;
use std::ops::Range;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::OnceLock;

pub use group::{write_group_png, GroupCurve, GroupFigure};
pub use style::FIGURE_SIZE_PX;

/// Half-width of the mid-foot band when the result has no lift series, metres (common practice,
/// no source; the lift stage's default is the same).
pub const MIDFOOT_HALF_WIDTH_M: f64 = 0.05;

/// Image format of a figure.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PlotFormat {
    Png,
    Svg,
}

impl PlotFormat {
    /// File extension, without the dot: `png` or `svg`.
    pub fn extension(self) -> &'static str {
        match self {
            PlotFormat::Png => "png",
            PlotFormat::Svg => "svg",
        }
    }
}

/// The figures gravline draws.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Figure {
    /// Top view of the floor plane.
    Path,
    /// Stacked time series.
    Series,
    /// Side view of a lift (trials with loads).
    Lift,
}

impl Figure {
    /// File stem: `path`, `series` or `lift`.
    pub fn stem(self) -> &'static str {
        match self {
            Figure::Path => "path",
            Figure::Series => "series",
            Figure::Lift => "lift",
        }
    }

    /// The figures drawn for a result: path and series, and lift when the trial has loads.
    pub fn for_result(result: &TrialResult) -> Vec<Figure> {
        let mut figures = vec![Figure::Path, Figure::Series];
        if !result.load_names.is_empty() {
            figures.push(Figure::Lift);
        }
        figures
    }
}

/// The pixel transform of an equal-scale view (the path and lift figures): data ranges in
/// metres and the pixel span of the plotting area, first to last pixel inclusive, in figure
/// pixels (origin top left, y down).
#[derive(Clone, Debug, PartialEq)]
pub struct PlaneView {
    /// Horizontal data range, metres (left to right).
    pub x_m: Range<f64>,
    /// Vertical data range, metres (bottom to top).
    pub y_m: Range<f64>,
    /// Leftmost and rightmost pixel column of the plotting area.
    pub x_px: (i32, i32),
    /// Top and bottom pixel row of the plotting area.
    pub y_px: (i32, i32),
    /// Size of the figure, pixels (wide views get a shorter figure with the legend below).
    pub size_px: (u32, u32),
}

impl PlaneView {
    /// Pixel of a point in metres, as the plotting backend maps it.
    pub fn pixel(&self, p: [f64; 2]) -> (i32, i32) {
        (
            map_axis(p[0], &self.x_m, (self.x_px.0, self.x_px.1)),
            map_axis(p[1], &self.y_m, (self.y_px.1, self.y_px.0)),
        )
    }

    /// Pixels per metre along x and along y (equal by construction).
    pub fn px_per_m(&self) -> (f64, f64) {
        (
            f64::from(self.x_px.1 - self.x_px.0) / (self.x_m.end - self.x_m.start),
            f64::from(self.y_px.1 - self.y_px.0) / (self.y_m.end - self.y_m.start),
        )
    }
}

/// The linear map of plotters' float coordinates from `range` onto the pixels `limit.0` (range
/// start) to `limit.1` (range end).
fn map_axis(v: f64, range: &Range<f64>, limit: (i32, i32)) -> i32 {
    let logic = (v - range.start) / (range.end - range.start);
    let length = f64::from(limit.1 - limit.0);
    if length > 0.0 {
        limit.0 + (length * logic + 1e-3).floor() as i32
    } else {
        limit.0 + (length * logic - 1e-3).ceil() as i32
    }
}

/// The pixel layout of the `series` figure: its shared time axis and the rows of its three
/// panels (speed, margins, height; a fourth, the plate cross-check, with force plates), in
/// figure pixels, first to last inclusive.
#[derive(Clone, Debug, PartialEq)]
pub struct SeriesView {
    /// Time range, seconds (left to right).
    pub t_s: Range<f64>,
    /// Leftmost and rightmost pixel column of every panel's plotting area.
    pub x_px: (i32, i32),
    /// Top and bottom pixel row of each panel's plotting area, top panel first.
    pub panels_px: [(i32, i32); 3],
    /// The same for the plate cross-check panel below them, with force plates.
    pub plates_panel_px: Option<(i32, i32)>,
}

/// The layout of the `series` figure of a result.
pub fn series_view(result: &TrialResult) -> SeriesView {
    series::view(result)
}

/// The view of the `path` figure, or `None` when no frame has a CoM.
pub fn path_view(result: &TrialResult) -> Option<PlaneView> {
    path::view(result)
}

/// The view of the `lift` figure, or `None` when no frame has a CoM or the trial has no loads.
pub fn lift_view(result: &TrialResult) -> Option<PlaneView> {
    lift::view(result)
}

/// Writes the figures of one trial into `dir` (`path`, `series`, and `lift` for trials with
/// loads), each through a temporary file and a rename.
///
/// A trial with no valid frame (no CoM anywhere) is an error and writes no file.
pub fn write_plots(
    dir: &Path,
    result: &TrialResult,
    summary: &Summary,
    format: PlotFormat,
) -> Result<(), Error> {
    let figures = Figure::for_result(result);
    let file = |figure: Figure| dir.join(format!("{}.{}", figure.stem(), format.extension()));
    if !result
        .com
        .iter()
        .flatten()
        .any(|c| c.iter().all(|v| v.is_finite()))
    {
        return Err(Error::Write {
            path: file(Figure::Path).display().to_string(),
            source: std::io::Error::other(format!(
                "no valid frames in trial `{}`: nothing to plot; check the landmark map and the marker gaps (see frames.csv, column `valid`)",
                result.name
            )),
        });
    }
    register_font().map_err(|source| Error::Write {
        path: file(Figure::Path).display().to_string(),
        source,
    })?;
    let ctx = style::Context::new(result, summary);
    for figure in figures {
        let path = file(figure);
        render(&path, figure, format, &ctx).map_err(|source| Error::Write {
            path: path.display().to_string(),
            source,
        })?;
    }
    Ok(())
}

/// Draws one figure of a result as SVG text (the inline figures of `report.html`).
pub fn render_svg(
    result: &TrialResult,
    summary: &Summary,
    figure: Figure,
) -> std::io::Result<String> {
    register_font()?;
    let ctx = style::Context::new(result, summary);
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, figure_size(figure, &ctx)).into_drawing_area();
        draw(figure, &root, &ctx)?;
    }
    Ok(svg)
}

/// Registers the embedded DejaVu Sans as plotters' `sans-serif`, once per process.
fn register_font() -> std::io::Result<()> {
    static REGISTERED: OnceLock<bool> = OnceLock::new();
    let ok = *REGISTERED.get_or_init(|| {
        plotters::style::register_font("sans-serif", FontStyle::Normal, dejavu::sans::regular())
            .is_ok()
    });
    if ok {
        Ok(())
    } else {
        Err(std::io::Error::other(
            "the embedded font (DejaVu Sans) could not be loaded",
        ))
    }
}

/// A drawing failure, as text (plotters' errors are generic over the backend).
#[derive(Debug)]
pub(crate) struct RenderError(String);

impl<E: std::error::Error + Send + Sync> From<DrawingAreaErrorKind<E>> for RenderError {
    fn from(e: DrawingAreaErrorKind<E>) -> Self {
        RenderError(e.to_string())
    }
}

impl From<RenderError> for std::io::Error {
    fn from(e: RenderError) -> Self {
        std::io::Error::other(format!("drawing failed: {}", e.0))
    }
}

pub(crate) type Area<DB> = DrawingArea<DB, Shift>;

/// Size of a figure, pixels: the series and lift figures are [`FIGURE_SIZE_PX`]; the path
/// figure of a wide view is shorter, with its legend below.
fn figure_size(figure: Figure, ctx: &style::Context) -> (u32, u32) {
    match figure {
        Figure::Path => path::layout(ctx.result).size(),
        Figure::Series | Figure::Lift => FIGURE_SIZE_PX,
    }
}

fn draw<DB: DrawingBackend>(
    figure: Figure,
    root: &Area<DB>,
    ctx: &style::Context,
) -> Result<(), RenderError>
where
    DB::ErrorType: 'static,
{
    root.fill(&style::PAPER)?;
    match figure {
        Figure::Path => path::draw(root, ctx),
        Figure::Series => series::draw(root, ctx),
        Figure::Lift => lift::draw(root, ctx),
    }?;
    root.present()?;
    Ok(())
}

/// Draws one figure into `path` through a temporary file in the same folder.
fn render(
    path: &Path,
    figure: Figure,
    format: PlotFormat,
    ctx: &style::Context,
) -> std::io::Result<()> {
    let size = figure_size(figure, ctx);
    match format {
        PlotFormat::Svg => {
            let mut svg = String::new();
            {
                let root = SVGBackend::with_string(&mut svg, size).into_drawing_area();
                draw(figure, &root, ctx)?;
            }
            crate::report::write_atomic(path, |w| w.write_all(svg.as_bytes()))
        }
        PlotFormat::Png => {
            let dir = path
                .parent()
                .filter(|p| !p.as_os_str().is_empty())
                .unwrap_or(Path::new("."));
            std::fs::create_dir_all(dir)?;
            let tmp = temporary_name(path);
            let result = (|| {
                {
                    let root = BitMapBackend::new(&tmp, size).into_drawing_area();
                    draw(figure, &root, ctx)?;
                }
                std::fs::File::open(&tmp)?.sync_all()?;
                std::fs::rename(&tmp, path)
            })();
            if result.is_err() {
                let _ = std::fs::remove_file(&tmp);
            }
            result
        }
    }
}

/// `.path.<pid>-<n>.tmp.png` beside `path`: hidden, unique within the process, and ending in
/// the figure's extension (the PNG encoder chooses the format by extension).
fn temporary_name(path: &Path) -> PathBuf {
    static COUNTER: AtomicUsize = AtomicUsize::new(0);
    let n = COUNTER.fetch_add(1, Ordering::Relaxed);
    let stem = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    let ext = path
        .extension()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    path.with_file_name(format!(".{stem}.{}-{n}.tmp.{ext}", std::process::id()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_axis_map_sends_range_ends_to_pixel_ends() {
        let r = 0.0..2.0;
        assert_eq!(map_axis(0.0, &r, (100, 900)), 100);
        assert_eq!(map_axis(2.0, &r, (100, 900)), 900);
        assert_eq!(map_axis(1.0, &r, (100, 900)), 500);
        // Reversed pixel direction (the y axis: range start at the bottom row).
        assert_eq!(map_axis(0.0, &r, (800, 100)), 800);
        assert_eq!(map_axis(2.0, &r, (800, 100)), 100);
    }

    #[test]
    fn temporary_names_are_hidden_unique_and_keep_the_extension() {
        let a = temporary_name(Path::new("/tmp/out/path.png"));
        let b = temporary_name(Path::new("/tmp/out/path.png"));
        assert_ne!(a, b);
        assert_eq!(a.parent(), Some(Path::new("/tmp/out")));
        let name = a.file_name().unwrap().to_string_lossy().into_owned();
        assert!(
            name.starts_with(".path.") && name.ends_with(".tmp.png"),
            "{name}"
        );
    }

    #[test]
    fn the_embedded_font_registers() {
        assert!(register_font().is_ok());
        assert!(register_font().is_ok());
    }
}
