//! `path`: top view of the floor plane, equal scale in metres: CoM and XCoM paths, BoS
//! outlines, footprints per side, start and end of the CoM path.

use super::style::{self, Context, Entry, Swatch};
use super::{Area, PlaneView, RenderError};
use crate::pipeline::TrialResult;
use plotters::prelude::*;

/// Padding around the drawn data, metres.
const PAD_M: f64 = 0.12;
/// Smallest span shown along either axis, metres (a standing trial still shows its feet).
const MIN_SPAN_M: f64 = 0.6;

fn floor_points(r: &TrialResult, series: &[Option<[f64; 3]>]) -> Vec<Option<(f64, f64)>> {
    series
        .iter()
        .map(|p| p.map(|p| r.up_axis.horizontal(&p)).map(|h| (h[0], h[1])))
        .collect()
}

/// The figure's pixel transform (see [`super::path_view`]).
pub(super) fn view(r: &TrialResult) -> Option<PlaneView> {
    let mut b = style::Bounds::empty();
    for p in floor_points(r, &r.com).into_iter().flatten() {
        b.add(p);
    }
    if b.is_empty() {
        return None;
    }
    for p in floor_points(r, &r.xcom).into_iter().flatten() {
        b.add(p);
    }
    let polygons = r
        .support
        .outlines
        .iter()
        .map(|(_, v)| v)
        .chain(r.support.footprints.iter().map(|(_, _, v)| v));
    for v in polygons.flatten() {
        b.add((v[0], v[1]));
    }
    let (x_px, y_px) = style::single_plot_px();
    let (x_m, y_m) = style::equal_ranges(b, x_px, y_px, PAD_M, MIN_SPAN_M);
    Some(PlaneView {
        x_m,
        y_m,
        x_px,
        y_px,
    })
}

fn closed(vertices: &[[f64; 2]]) -> Vec<(f64, f64)> {
    let mut v: Vec<(f64, f64)> = vertices.iter().map(|p| (p[0], p[1])).collect();
    if let Some(&first) = v.first() {
        v.push(first);
    }
    v
}

pub(super) fn draw<DB: DrawingBackend>(root: &Area<DB>, ctx: &Context) -> Result<(), RenderError> {
    let r = ctx.result;
    let Some(view) = view(r) else {
        return Err(RenderError("no valid frames: nothing to plot".to_string()));
    };
    let (title_area, chart_area, legend_area) = style::single_layout(root);
    style::draw_title(
        &title_area,
        &format!("{}: CoM path over the floor, top view", r.name),
        &ctx.subtitle,
    )?;
    let [a, b] = r.up_axis.horizontal_axes();
    let mut chart = style::single_chart(&chart_area, view.x_m.clone(), view.y_m.clone())?;
    style::draw_axes(
        &mut chart,
        Some(&format!("{} (m)", Context::axis_name(a))),
        &format!("{} (m)", Context::axis_name(b)),
    )?;
    let m_per_px = 1.0 / view.px_per_m().0;
    let s = &r.support;
    let mut legend = Vec::new();

    chart.draw_series(
        s.outlines
            .iter()
            .map(|(_, v)| PathElement::new(closed(v), style::BOS.mix(0.42).stroke_width(1))),
    )?;
    if s.outlines.is_empty() {
        legend.push(Entry::new(
            Swatch::Note,
            "no base of support (no foot in contact or no foot markers)",
        ));
    } else {
        legend.push(Entry::new(
            Swatch::Outline(style::BOS, 0.8),
            "BoS outlines (hull of the feet in contact)",
        ));
    }
    for side in 0..2 {
        let colour = style::side_colour(side);
        let prints: Vec<&Vec<[f64; 2]>> = s
            .footprints
            .iter()
            .filter(|f| f.0 == side)
            .map(|f| &f.2)
            .collect();
        chart.draw_series(
            prints
                .iter()
                .map(|v| Polygon::new(closed(v), colour.mix(0.16).filled())),
        )?;
        chart.draw_series(
            prints
                .iter()
                .map(|v| PathElement::new(closed(v), colour.mix(0.9).stroke_width(2))),
        )?;
        if !prints.is_empty() {
            let word = if side == 0 { "left" } else { "right" };
            legend.push(Entry::new(
                Swatch::Patch(colour, 0.16),
                format!("{word} footprint at contact onset"),
            ));
        }
    }

    let xcom = style::runs(floor_points(r, &r.xcom).into_iter());
    for run in xcom.iter() {
        style::draw_line(
            &chart,
            &style::thin_path(run.clone(), m_per_px),
            style::XCOM,
            2,
        )?;
    }
    let com_runs = style::runs(floor_points(r, &r.com).into_iter());
    for run in com_runs.iter() {
        style::draw_line(
            &chart,
            &style::thin_path(run.clone(), m_per_px),
            style::COM,
            3,
        )?;
    }
    legend.insert(
        0,
        Entry::new(Swatch::Line(style::COM, 3), "CoM, floor projection"),
    );
    if xcom.is_empty() {
        legend.insert(
            1,
            Entry::new(Swatch::Note, "XCoM not available (no leg length)"),
        );
    } else {
        legend.insert(
            1,
            Entry::new(Swatch::Line(style::XCOM, 2), "XCoM (Hof 2005)"),
        );
    }
    let first = com_runs.first().and_then(|run| run.first()).copied();
    let last = com_runs.last().and_then(|run| run.last()).copied();
    if let (Some(start), Some(end)) = (first, last) {
        // The end square first: when the path ends where it began, the start dot shows on it.
        let (ex, ey) = chart.backend_coord(&end);
        let square = root_square(ex, ey, 8);
        root.draw(&Rectangle::new(square, style::INK.filled()))?;
        root.draw(&Rectangle::new(square, style::PAPER.stroke_width(2)))?;
        chart.draw_series([
            Circle::new(start, 6, style::INK.filled()),
            Circle::new(start, 6, style::PAPER.stroke_width(2)),
        ])?;
        legend.push(Entry::new(Swatch::Dot(style::INK), "start of the CoM path"));
        legend.push(Entry::new(
            Swatch::Square(style::INK),
            "end of the CoM path",
        ));
    }
    legend.push(Entry::new(
        Swatch::Note,
        "view from above; equal scale on both axes",
    ));
    style::draw_legend(&legend_area, (style::MARGIN + 4) as i32, None, &legend)?;
    Ok(())
}

fn root_square(x: i32, y: i32, half: i32) -> [(i32, i32); 2] {
    [(x - half, y - half), (x + half, y + half)]
}
