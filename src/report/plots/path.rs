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

/// Bounds of everything the figure draws, or `None` without a valid CoM.
fn bounds(r: &TrialResult) -> Option<style::Bounds> {
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
    Some(b)
}

/// The figure's layout: legend below for a view much wider than tall (a walk along the first
/// horizontal axis), else beside.
pub(super) fn layout(r: &TrialResult) -> style::Layout {
    match bounds(r) {
        Some(b) => style::Layout::for_spans(
            (b.x.1 - b.x.0 + 2.0 * PAD_M).max(MIN_SPAN_M),
            (b.y.1 - b.y.0 + 2.0 * PAD_M).max(MIN_SPAN_M),
        ),
        None => style::Layout::Side,
    }
}

/// The figure's pixel transform (see [`super::path_view`]).
pub(super) fn view(r: &TrialResult) -> Option<PlaneView> {
    let b = bounds(r)?;
    let layout = layout(r);
    let (x_px, y_px) = layout.plot_px();
    let (x_m, y_m) = style::equal_ranges(b, x_px, y_px, PAD_M, MIN_SPAN_M);
    Some(PlaneView {
        x_m,
        y_m,
        x_px,
        y_px,
        size_px: layout.size(),
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
    let layout = layout(r);
    let (title_area, chart_area, legend_area) = layout.split(root);
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
        style::draw_ends(
            root,
            chart.backend_coord(&start),
            chart.backend_coord(&end),
            style::INK,
        )?;
        legend.push(Entry::new(
            Swatch::Ring(style::INK),
            "start of the CoM path",
        ));
        legend.push(Entry::new(Swatch::Box(style::INK), "end of the CoM path"));
    }
    legend.push(Entry::new(
        Swatch::Note,
        "view from above; equal scale on both axes",
    ));
    let used = layout.draw_legend(&legend_area, &legend)?;
    if layout == style::Layout::Side {
        let top = (style::MARGIN + 4) as i32 + used + 16;
        draw_inset(&legend_area, top, &view, &com_runs, &xcom)?;
    }
    Ok(())
}

/// Side of the magnified inset, pixels.
const INSET_PX: i32 = 240;
/// The inset is drawn when the CoM and XCoM paths span less than this share of the view.
const INSET_BELOW: f64 = 0.12;

/// A magnified view of a small CoM sway (quiet standing) in the legend column: equal scale,
/// no ticks, a scale bar. Drawn only when the paths are small in the main view and the column
/// has room below the legend.
fn draw_inset<DB: DrawingBackend>(
    area: &Area<DB>,
    top: i32,
    view: &PlaneView,
    com: &[Vec<(f64, f64)>],
    xcom: &[Vec<(f64, f64)>],
) -> Result<(), RenderError> {
    let mut b = style::Bounds::empty();
    for p in com.iter().chain(xcom).flatten() {
        b.add(*p);
    }
    let (w, h) = area.dim_in_pixel();
    let span = (b.x.1 - b.x.0).max(b.y.1 - b.y.0);
    let view_span = (view.x_m.end - view.x_m.start).min(view.y_m.end - view.y_m.start);
    let heading_h = 2 * (style::LEGEND_PX as i32 + 6);
    if b.is_empty() || span >= INSET_BELOW * view_span || top + heading_h + INSET_PX + 30 > h as i32
    {
        return Ok(());
    }
    let x0 = ((w as i32 - INSET_PX) / 2).max(0);
    let y0 = top + heading_h;
    let px = ((x0, x0 + INSET_PX - 1), (y0, y0 + INSET_PX - 1));
    let (xr, yr) = style::equal_ranges(b, px.0, px.1, 0.08 * span.max(1e-4), 0.004);
    let inset = PlaneView {
        x_m: xr,
        y_m: yr,
        x_px: px.0,
        y_px: px.1,
        size_px: (w, h),
    };
    let zoom = inset.px_per_m().0 / view.px_per_m().0;
    let note = [Entry::new(
        Swatch::Note,
        format!("CoM and XCoM magnified {zoom:.0} times"),
    )];
    style::draw_legend(area, top, None, &note)?;
    area.draw(&Rectangle::new(
        [(px.0 .0 - 1, px.1 .0 - 1), (px.0 .1 + 1, px.1 .1 + 1)],
        RGBColor(170, 170, 178).stroke_width(1),
    ))?;
    for (runs, colour) in [(xcom, style::XCOM), (com, style::COM)] {
        for run in runs {
            let mut px: Vec<(i32, i32)> = Vec::with_capacity(run.len());
            for q in run.iter().map(|p| inset.pixel([p.0, p.1])) {
                if px.last() != Some(&q) {
                    px.push(q);
                }
            }
            style::draw_pixels(area, &px, colour, 2)?;
        }
    }
    let first = com.first().and_then(|r| r.first());
    let last = com.last().and_then(|r| r.last());
    if let (Some(s), Some(e)) = (first, last) {
        let (s, e) = (inset.pixel([s.0, s.1]), inset.pixel([e.0, e.1]));
        area.draw(&Rectangle::new(
            [(e.0 - 6, e.1 - 6), (e.0 + 6, e.1 + 6)],
            style::INK.stroke_width(2),
        ))?;
        area.draw(&Circle::new(s, 7, style::INK.stroke_width(2)))?;
    }
    // Scale bar: the round length nearest a quarter of the inset's width.
    let width_m = inset.x_m.end - inset.x_m.start;
    let bar_m = [0.001, 0.002, 0.005, 0.01, 0.02, 0.05, 0.1]
        .into_iter()
        .min_by(|a, b| {
            ((a / width_m) - 0.25)
                .abs()
                .total_cmp(&((b / width_m) - 0.25).abs())
        })
        .unwrap_or(0.01);
    let bar_px = (bar_m * inset.px_per_m().0).round() as i32;
    let (bx, by) = (px.0 .0 + 10, px.1 .1 + 18);
    area.draw(&PathElement::new(
        vec![(bx, by), (bx + bar_px, by)],
        style::INK.stroke_width(3),
    ))?;
    let label = if bar_m < 0.01 {
        format!("{:.0} mm", bar_m * 1000.0)
    } else {
        format!("{:.0} cm", bar_m * 100.0)
    };
    area.draw(&Text::new(
        label,
        (bx + bar_px + 8, by - 8),
        style::text(style::LEGEND_PX, &style::INK),
    ))?;
    Ok(())
}
