//! `group`: one normalized curve (0-100 % of a cycle) over the trials of a study: per group a
//! mean line with a band of +- 1 sample standard deviation, and each trial's mean curve drawn
//! faint behind it.

use super::style::{self, Entry, Swatch};
use super::{Area, RenderError};
use plotters::prelude::*;
use std::path::Path;

/// One group's curve: its label, mean and SD per percent, and each trial's mean curve.
#[derive(Clone, Debug, Default)]
pub struct GroupCurve {
    pub label: String,
    pub mean: Vec<Option<f64>>,
    pub sd: Vec<Option<f64>>,
    pub trials: Vec<Vec<Option<f64>>>,
}

/// A figure of groups' curves.
#[derive(Clone, Debug, Default)]
pub struct GroupFigure {
    pub title: String,
    pub subtitle: String,
    /// Axis title with its unit.
    pub y_desc: String,
    pub groups: Vec<GroupCurve>,
}

const PALETTE: [RGBColor; 6] = [
    style::COM,
    style::XCOM,
    style::LEFT,
    style::RIGHT,
    style::BAR,
    style::VERTICAL,
];

fn faint(c: RGBColor, share: f64) -> RGBColor {
    let mix = |v: u8| (f64::from(v) * share + 255.0 * (1.0 - share)).round() as u8;
    RGBColor(mix(c.0), mix(c.1), mix(c.2))
}

fn points(curve: &[Option<f64>]) -> impl Iterator<Item = Option<(f64, f64)>> + '_ {
    curve
        .iter()
        .enumerate()
        .map(|(p, v)| v.filter(|v| v.is_finite()).map(|v| (p as f64, v)))
}

fn draw(root: &Area<BitMapBackend>, fig: &GroupFigure) -> Result<(), RenderError> {
    root.fill(&style::PAPER)?;
    let layout = style::Layout::Side;
    let (title, chart_area, legend) = layout.split(root);
    style::draw_title(&title, &fig.title, &fig.subtitle)?;
    let mut bounds = style::Bounds::empty();
    for g in &fig.groups {
        for curve in g.trials.iter().chain(std::iter::once(&g.mean)) {
            points(curve).flatten().for_each(|p| bounds.add(p));
        }
        for (m, s) in g.mean.iter().zip(&g.sd) {
            if let (Some(m), Some(s)) = (m, s) {
                bounds.add((0.0, m - s));
                bounds.add((0.0, m + s));
            }
        }
    }
    let (mut y0, mut y1) = if bounds.is_empty() {
        (-1.0, 1.0)
    } else {
        (bounds.y.0, bounds.y.1)
    };
    if y1 - y0 < 1e-6 {
        y0 -= 0.5e-3;
        y1 += 0.5e-3;
    }
    let pad = (y1 - y0) * 0.05;
    let mut chart = style::single_chart(&chart_area, 0.0..100.0, y0 - pad..y1 + pad)?;
    // Curves span millimetres to metres: ticks with as many decimals as the range needs.
    let decimals = (-(y1 - y0).log10().floor() as i32 + 1).clamp(1, 5) as usize;
    let y_tick = move |v: &f64| {
        let v = if v.abs() < 0.5 * 10f64.powi(-(decimals as i32)) {
            0.0
        } else {
            *v
        };
        format!("{v:.decimals$}")
    };
    chart
        .configure_mesh()
        .x_label_formatter(&|v: &f64| format!("{v:.0}"))
        .y_label_formatter(&y_tick)
        .x_labels(11)
        .y_labels(10)
        .label_style(style::text(style::TICK_PX, &style::INK))
        .axis_desc_style(style::text(style::AXIS_TITLE_PX, &style::INK))
        .axis_style(style::INK.stroke_width(1))
        .bold_line_style(RGBColor(200, 200, 206).stroke_width(1))
        .light_line_style(RGBColor(238, 238, 242).stroke_width(1))
        .max_light_lines(1)
        .x_desc("cycle, %")
        .y_desc(fig.y_desc.as_str())
        .draw()?;
    let mut entries = Vec::new();
    for (k, g) in fig.groups.iter().enumerate() {
        let colour = PALETTE[k % PALETTE.len()];
        for t in &g.trials {
            for run in style::runs(points(t)) {
                style::draw_line(&chart, &run, faint(colour, 0.25), 1)?;
            }
        }
        // The band: runs of percents where both mean and SD exist.
        let band: Vec<Option<(f64, f64, f64)>> = g
            .mean
            .iter()
            .zip(&g.sd)
            .enumerate()
            .map(|(p, (m, s))| Some((p as f64, (*m)?, (*s)?)))
            .collect();
        for run in band.split(Option::is_none) {
            let run: Vec<(f64, f64, f64)> = run.iter().flatten().copied().collect();
            if run.len() < 2 {
                continue;
            }
            let mut polygon: Vec<(f64, f64)> = run.iter().map(|&(p, m, s)| (p, m + s)).collect();
            polygon.extend(run.iter().rev().map(|&(p, m, s)| (p, m - s)));
            chart.draw_series(std::iter::once(Polygon::new(
                polygon,
                faint(colour, 0.3).filled(),
            )))?;
        }
        for run in style::runs(points(&g.mean)) {
            style::draw_line(&chart, &run, colour, 3)?;
        }
        entries.push(Entry::new(
            Swatch::Line(colour, 3),
            format!("{} (mean)", g.label),
        ));
    }
    entries.push(Entry::new(
        Swatch::Patch(faint(style::INK, 0.3), 1.0),
        "+- 1 SD",
    ));
    entries.push(Entry::new(
        Swatch::Line(faint(style::INK, 0.25), 1),
        "each trial (mean of its cycles)",
    ));
    layout.draw_legend(&legend, &entries)?;
    root.present()?;
    Ok(())
}

/// Draws a figure as PNG into `path` through a temporary file in the same folder.
pub fn write_group_png(path: &Path, fig: &GroupFigure) -> std::io::Result<()> {
    super::register_font()?;
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    std::fs::create_dir_all(dir)?;
    let tmp = super::temporary_name(path);
    let result = (|| {
        {
            let root = BitMapBackend::new(&tmp, style::FIGURE_SIZE_PX).into_drawing_area();
            draw(&root, fig)?;
        }
        std::fs::File::open(&tmp)?.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result
}
