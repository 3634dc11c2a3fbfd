//! `lift`: side view of a lift, equal scale in metres: position along the progression direction
//! against height above the floor, for the bar (the first load), the system CoM and the body
//! CoM, beside the mid-foot band.

use super::style::{self, Context, Entry, Swatch};
use super::{Area, PlaneView, RenderError, MIDFOOT_HALF_WIDTH_M};
use crate::pipeline::TrialResult;
use plotters::element::DashedPathElement;
use plotters::prelude::*;

const PAD_M: f64 = 0.12;
const MIN_SPAN_M: f64 = 0.6;
const BAND: RGBColor = RGBColor(70, 150, 90);

/// Unit direction in the floor plane along which the side view measures: the progression, or
/// the first horizontal axis when the trial has none.
fn direction(r: &TrialResult) -> [f64; 2] {
    r.support
        .progression
        .filter(|d| d[0].is_finite() && d[1].is_finite())
        .unwrap_or([1.0, 0.0])
}

fn side_points(r: &TrialResult, series: &[Option<[f64; 3]>]) -> Vec<Option<(f64, f64)>> {
    let d = direction(r);
    let floor = r.support.floor_m;
    series
        .iter()
        .map(|p| {
            p.map(|p| {
                let h = r.up_axis.horizontal(&p);
                (h[0] * d[0] + h[1] * d[1], r.up_axis.height(&p) - floor)
            })
        })
        .collect()
}

/// Area centroid of a polygon (vertex mean when it has no area).
fn centroid(v: &[[f64; 2]]) -> Option<[f64; 2]> {
    if v.is_empty() {
        return None;
    }
    let (mut a, mut cx, mut cy) = (0.0, 0.0, 0.0);
    for (i, p) in v.iter().enumerate() {
        let q = v[(i + 1) % v.len()];
        let cross = p[0] * q[1] - q[0] * p[1];
        a += cross;
        cx += (p[0] + q[0]) * cross;
        cy += (p[1] + q[1]) * cross;
    }
    if a.abs() > 1e-12 {
        Some([cx / (3.0 * a), cy / (3.0 * a)])
    } else {
        let n = v.len() as f64;
        Some([
            v.iter().map(|p| p[0]).sum::<f64>() / n,
            v.iter().map(|p| p[1]).sum::<f64>() / n,
        ])
    }
}

/// Where the mid-foot band comes from.
#[derive(Clone, Copy, Debug, PartialEq)]
enum BandSource {
    /// The lift stage's per-frame mid-foot (heel to metatarsal heads of the feet in contact).
    Midfoot,
    /// The footprint centroids (no per-frame mid-foot).
    Footprints,
}

/// The mid-foot band along the view direction: centre, half-width (metres) and source. The
/// centre is the mean over frames of the lift stage's mid-foot; without one, the mean of the
/// footprint centroids with [`MIDFOOT_HALF_WIDTH_M`].
fn band(r: &TrialResult) -> Option<(f64, f64, BandSource)> {
    let d = direction(r);
    let along = |h: [f64; 2]| h[0] * d[0] + h[1] * d[1];
    let mean = |v: Vec<f64>| (!v.is_empty()).then(|| v.iter().sum::<f64>() / v.len() as f64);
    let finite = |w: f64| w.is_finite() && w > 0.0;
    if let Some(lift) = &r.lift {
        let per_frame: Vec<f64> = lift
            .midfoot
            .iter()
            .flatten()
            .map(|m| along(r.up_axis.horizontal(m)))
            .filter(|v| v.is_finite())
            .collect();
        if let Some(c) = mean(per_frame) {
            let half = if finite(lift.band_m) {
                lift.band_m
            } else {
                MIDFOOT_HALF_WIDTH_M
            };
            return Some((c, half, BandSource::Midfoot));
        }
    }
    let prints: Vec<f64> = r
        .support
        .footprints
        .iter()
        .filter_map(|(_, _, v)| centroid(v))
        .map(along)
        .collect();
    mean(prints).map(|c| (c, MIDFOOT_HALF_WIDTH_M, BandSource::Footprints))
}

/// The figure's pixel transform (see [`super::lift_view`]).
pub(super) fn view(r: &TrialResult) -> Option<PlaneView> {
    if r.load_names.is_empty() {
        return None;
    }
    let mut b = style::Bounds::empty();
    for p in side_points(r, &r.com).into_iter().flatten() {
        b.add(p);
    }
    if b.is_empty() {
        return None;
    }
    for series in r.loads.first().into_iter().chain([&r.body_com]) {
        for p in side_points(r, series).into_iter().flatten() {
            b.add(p);
        }
    }
    if let Some((m, half, _)) = band(r) {
        b.add((m - half, 0.0));
        b.add((m + half, 0.0));
    }
    b.add((b.x.0, 0.0));
    let (x_px, y_px) = style::Layout::Side.plot_px();
    let (x_m, y_m) = style::equal_ranges(b, x_px, y_px, PAD_M, MIN_SPAN_M);
    let size_px = style::Layout::Side.size();
    Some(PlaneView {
        x_m,
        y_m,
        x_px,
        y_px,
        size_px,
    })
}

/// `+x`, `-y`, or `0.97 x + 0.24 y` for a direction in the floor plane.
fn describe(r: &TrialResult, d: [f64; 2]) -> String {
    let [a, b] = r.up_axis.horizontal_axes();
    let (na, nb) = (Context::axis_name(a), Context::axis_name(b));
    if d[0].abs() > 0.995 {
        format!("{}{na}", if d[0] > 0.0 { "+" } else { "-" })
    } else if d[1].abs() > 0.995 {
        format!("{}{nb}", if d[1] > 0.0 { "+" } else { "-" })
    } else {
        format!(
            "{:.2} {na} {} {:.2} {nb}",
            d[0],
            if d[1] < 0.0 { "-" } else { "+" },
            d[1].abs()
        )
    }
}

pub(super) fn draw<DB: DrawingBackend>(root: &Area<DB>, ctx: &Context) -> Result<(), RenderError> {
    let r = ctx.result;
    let Some(view) = view(r) else {
        return Err(RenderError(
            "no valid frames or no load: nothing to plot".to_string(),
        ));
    };
    let (title_area, chart_area, legend_area) = style::Layout::Side.split(root);
    style::draw_title(
        &title_area,
        &format!("{}: bar and CoM paths, side view", r.name),
        &ctx.subtitle,
    )?;
    let d = direction(r);
    let x_desc = match r.support.progression {
        Some(_) => format!("along the progression, {} (m)", describe(r, d)),
        None => format!("{} (m), no progression found", describe(r, d)),
    };
    let mut chart = style::single_chart(&chart_area, view.x_m.clone(), view.y_m.clone())?;
    style::draw_axes(&mut chart, Some(&x_desc), "height above the floor (m)")?;
    let m_per_px = 1.0 / view.px_per_m().0;
    let (x, y) = (view.x_m.clone(), view.y_m.clone());
    let mut legend = Vec::new();

    let band = band(r);
    if let Some((m, half, _)) = band {
        let (a, b) = ((m - half).max(x.start), (m + half).min(x.end));
        chart.draw_series([Rectangle::new(
            [(a, y.end), (b, y.start)],
            BAND.mix(0.16).filled(),
        )])?;
        chart.draw_series([DashedPathElement::new(
            vec![(m, y.start), (m, y.end)],
            8,
            6,
            BAND.mix(0.8).stroke_width(1),
        )])?;
    }
    if y.start < 0.0 {
        chart.draw_series([PathElement::new(
            vec![(x.start, 0.0), (x.end, 0.0)],
            style::INK.mix(0.7).stroke_width(2),
        )])?;
    }
    let body = style::runs(side_points(r, &r.body_com).into_iter());
    for run in &body {
        style::draw_dashed(
            &chart,
            &style::thin_path(run.clone(), m_per_px),
            style::BODY,
            2,
        )?;
    }
    let com = style::runs(side_points(r, &r.com).into_iter());
    for run in &com {
        style::draw_line(
            &chart,
            &style::thin_path(run.clone(), m_per_px),
            style::COM,
            2,
        )?;
    }
    let bar = style::runs(
        r.loads
            .first()
            .map(|l| side_points(r, l))
            .unwrap_or_default()
            .into_iter(),
    );
    for run in &bar {
        style::draw_line(
            &chart,
            &style::thin_path(run.clone(), m_per_px),
            style::BAR,
            3,
        )?;
    }
    let load = r.load_names.first().map_or("bar", String::as_str);
    if let (Some(start), Some(end)) = (
        bar.first().and_then(|b| b.first()),
        bar.last().and_then(|b| b.last()),
    ) {
        style::draw_ends(
            root,
            chart.backend_coord(start),
            chart.backend_coord(end),
            style::INK,
        )?;
    }

    if bar.is_empty() {
        legend.push(Entry::new(
            Swatch::Note,
            format!("load `{load}`: no valid positions"),
        ));
    } else {
        legend.push(Entry::new(
            Swatch::Line(style::BAR, 3),
            format!("bar path (load `{load}`)"),
        ));
        legend.push(Entry::new(Swatch::Ring(style::INK), "bar at the start"));
        legend.push(Entry::new(Swatch::Box(style::INK), "bar at the end"));
    }
    legend.push(Entry::new(
        Swatch::Line(style::COM, 2),
        "system CoM (body and loads)",
    ));
    if body.is_empty() {
        legend.push(Entry::new(Swatch::Note, "body CoM: not available"));
    } else {
        legend.push(Entry::new(
            Swatch::Dashed(style::BODY, 2),
            "body CoM (loads excluded)",
        ));
    }
    match band {
        Some((_, half, BandSource::Midfoot)) => legend.push(Entry::new(
            Swatch::Patch(BAND, 0.16),
            format!("mid-foot band: mean mid-foot ± {half:.2} m"),
        )),
        Some((_, half, BandSource::Footprints)) => legend.push(Entry::new(
            Swatch::Patch(BAND, 0.16),
            format!("mid-foot band: mean footprint centre ± {half:.2} m"),
        )),
        None => legend.push(Entry::new(
            Swatch::Note,
            "no foot in contact: no mid-foot band",
        )),
    }
    if y.start < 0.0 {
        legend.push(Entry::new(Swatch::Line(style::INK, 2), "floor"));
    }
    legend.push(Entry::new(Swatch::Note, "equal scale on both axes"));
    style::draw_legend(&legend_area, (style::MARGIN + 4) as i32, None, &legend)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn the_centroid_of_a_rectangle_is_its_centre() {
        // A 0.1 m x 0.25 m foot-sized rectangle, counter-clockwise and clockwise.
        let ccw = [[0.0, 0.0], [0.25, 0.0], [0.25, 0.1], [0.0, 0.1]];
        let c = centroid(&ccw).unwrap();
        assert_relative_eq!(c[0], 0.125, epsilon = 1e-12);
        assert_relative_eq!(c[1], 0.05, epsilon = 1e-12);
        let mut cw = ccw;
        cw.reverse();
        let c = centroid(&cw).unwrap();
        assert_relative_eq!(c[0], 0.125, epsilon = 1e-12);
        // Degenerate (collinear) polygons fall back to the vertex mean.
        let line = centroid(&[[0.0, 0.0], [1.0, 0.0]]).unwrap();
        assert_relative_eq!(line[0], 0.5, epsilon = 1e-12);
        assert!(centroid(&[]).is_none());
    }
}
