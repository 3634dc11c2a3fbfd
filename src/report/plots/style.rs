//! The look shared by every figure: size, layout, colours, text, legend, axes, and the helpers
//! that cut series at missing values and thin dense lines to what the pixels can show.

use super::{Area, RenderError};
use crate::pipeline::TrialResult;
use crate::report::Summary;
use plotters::coord::types::RangedCoordf64;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use std::ops::Range;

/// Size of every figure, pixels (PNG) or user units (SVG): width, height.
pub const FIGURE_SIZE_PX: (u32, u32) = (1200, 900);
/// Height of the title strip.
pub const TITLE_H: u32 = 78;
/// Width of the legend column on the right.
pub const LEGEND_W: u32 = 280;
/// Margin around each chart.
pub const MARGIN: u32 = 16;
/// Height of the x tick labels and axis title under a chart.
pub const X_LABEL_H: u32 = 62;
/// Width of the y tick labels and axis title left of a chart.
pub const Y_LABEL_W: u32 = 96;

pub const FONT: &str = "sans-serif";
pub const TITLE_PX: u32 = 27;
pub const SUBTITLE_PX: u32 = 18;
pub const AXIS_TITLE_PX: u32 = 19;
pub const TICK_PX: u32 = 16;
pub const LEGEND_PX: u32 = 16;

pub const PAPER: RGBColor = RGBColor(255, 255, 255);
pub const INK: RGBColor = RGBColor(38, 38, 42);
pub const MUTED: RGBColor = RGBColor(105, 105, 112);
/// CoM-based quantities.
pub const COM: RGBColor = RGBColor(24, 72, 150);
/// XCoM-based quantities.
pub const XCOM: RGBColor = RGBColor(222, 120, 18);
pub const LEFT: RGBColor = RGBColor(132, 62, 170);
pub const RIGHT: RGBColor = RGBColor(18, 140, 108);
pub const BOS: RGBColor = RGBColor(110, 110, 118);
pub const OUTSIDE: RGBColor = RGBColor(214, 44, 44);
pub const HORIZONTAL: RGBColor = RGBColor(86, 160, 214);
pub const VERTICAL: RGBColor = RGBColor(150, 96, 52);
pub const BAR: RGBColor = RGBColor(196, 28, 72);
pub const BODY: RGBColor = RGBColor(92, 92, 100);

/// Colour of a side (0 = left, 1 = right).
pub fn side_colour(side: usize) -> RGBColor {
    if side == 0 {
        LEFT
    } else {
        RIGHT
    }
}

/// What every figure of a trial shares: the result and its title lines.
pub struct Context<'a> {
    pub result: &'a TrialResult,
    /// `subject S01 (male, 72.0 kg, 1.78 m); table de-leva-1996`.
    pub subtitle: String,
}

impl<'a> Context<'a> {
    pub fn new(result: &'a TrialResult, summary: &Summary) -> Context<'a> {
        let s = &summary.subject;
        let who = match s.name.as_deref().filter(|n| !n.trim().is_empty()) {
            Some(name) => format!(
                "subject {name} ({}, {:.1} kg, {:.2} m)",
                s.sex.word(),
                s.mass_kg,
                s.height_m
            ),
            None => format!(
                "subject {}, {:.1} kg, {:.2} m",
                s.sex.word(),
                s.mass_kg,
                s.height_m
            ),
        };
        Context {
            result,
            subtitle: format!("{who}  ·  table {}", result.model.table),
        }
    }

    /// Name of lab axis `index` (0, 1, 2).
    pub fn axis_name(index: usize) -> &'static str {
        ["x", "y", "z"].get(index).copied().unwrap_or("?")
    }
}

pub fn text(size_px: u32, colour: &'static RGBColor) -> TextStyle<'static> {
    TextStyle::from((FONT, size_px).into_font()).color(colour)
}

fn bold(size_px: u32, colour: &'static RGBColor) -> TextStyle<'static> {
    TextStyle::from((FONT, size_px, FontStyle::Bold).into_font()).color(colour)
}

/// Two decimals, without a negative zero.
pub fn tick(v: &f64) -> String {
    if v.abs() < 0.005 {
        "0.00".to_string()
    } else {
        format!("{v:.2}")
    }
}

/// The title strip: a bold title and a subtitle line.
pub fn draw_title<DB: DrawingBackend>(
    area: &Area<DB>,
    title: &str,
    subtitle: &str,
) -> Result<(), RenderError> {
    let x = (MARGIN + 8) as i32;
    area.draw(&Text::new(title.to_string(), (x, 14), bold(TITLE_PX, &INK)))?;
    area.draw(&Text::new(
        subtitle.to_string(),
        (x, 14 + TITLE_PX as i32 + 10),
        text(SUBTITLE_PX, &MUTED),
    ))?;
    let (w, h) = area.dim_in_pixel();
    area.draw(&PathElement::new(
        vec![
            (MARGIN as i32, h as i32 - 2),
            (w as i32 - MARGIN as i32, h as i32 - 2),
        ],
        ShapeStyle::from(&RGBColor(215, 215, 220)).stroke_width(1),
    ))?;
    Ok(())
}

/// How a legend entry shows its series.
#[derive(Clone, Copy, Debug)]
pub enum Swatch {
    Line(RGBColor, u32),
    Dashed(RGBColor, u32),
    /// A filled shape with a stroke of the same colour.
    Patch(RGBColor, f64),
    /// An unfilled outline.
    Outline(RGBColor, f64),
    /// A hollow circle (a start mark).
    Ring(RGBColor),
    /// A hollow square (an end mark).
    Box(RGBColor),
    /// No swatch: a note in the legend's muted colour.
    Note,
}

/// One legend entry.
pub struct Entry {
    pub swatch: Swatch,
    pub label: String,
}

impl Entry {
    pub fn new(swatch: Swatch, label: impl Into<String>) -> Entry {
        Entry {
            swatch,
            label: label.into(),
        }
    }
}

const SWATCH_W: i32 = 34;
const LINE_GAP: i32 = 6;

/// Draws a legend in its own area (never over data): an optional heading, then one row per
/// entry, labels wrapped to the area's width. Returns the height used.
pub fn draw_legend<DB: DrawingBackend>(
    area: &Area<DB>,
    top: i32,
    heading: Option<&str>,
    entries: &[Entry],
) -> Result<i32, RenderError> {
    let (w, _) = area.dim_in_pixel();
    let x0 = 10;
    let text_x = x0 + SWATCH_W + 10;
    let style = text(LEGEND_PX, &INK);
    let line_h = LEGEND_PX as i32 + LINE_GAP;
    let mut y = top;
    if let Some(h) = heading {
        area.draw(&Text::new(h.to_string(), (x0, y), bold(LEGEND_PX, &INK)))?;
        y += line_h + 4;
    }
    for entry in entries {
        let (style, text_x) = match entry.swatch {
            Swatch::Note => (text(LEGEND_PX - 1, &MUTED), x0),
            _ => (style.clone(), text_x),
        };
        let lines = wrap(area, &entry.label, &style, w as i32 - text_x - 10);
        let mid = y + LEGEND_PX as i32 / 2;
        draw_swatch(area, entry.swatch, (x0, mid))?;
        for line in &lines {
            area.draw(&Text::new(line.clone(), (text_x, y), style.clone()))?;
            y += line_h;
        }
        y += 4;
    }
    Ok(y - top)
}

fn wrap<DB: DrawingBackend>(
    area: &Area<DB>,
    label: &str,
    style: &TextStyle,
    max_w: i32,
) -> Vec<String> {
    // The layout estimate runs a little short of the drawn width: keep a tenth in hand.
    let fits = |s: &str| {
        area.estimate_text_size(s, style)
            .map_or(true, |(w, _)| w as i32 * 11 / 10 <= max_w)
    };
    let mut lines: Vec<String> = Vec::new();
    let mut current = String::new();
    for word in label.split_whitespace() {
        let candidate = if current.is_empty() {
            word.to_string()
        } else {
            format!("{current} {word}")
        };
        if current.is_empty() || fits(&candidate) {
            current = candidate;
        } else {
            lines.push(std::mem::take(&mut current));
            current = word.to_string();
        }
    }
    if !current.is_empty() {
        lines.push(current);
    }
    lines
}

fn draw_swatch<DB: DrawingBackend>(
    area: &Area<DB>,
    swatch: Swatch,
    (x, y): (i32, i32),
) -> Result<(), RenderError> {
    let (a, b) = ((x, y), (x + SWATCH_W, y));
    match swatch {
        Swatch::Line(c, w) => area.draw(&PathElement::new(vec![a, b], c.stroke_width(w)))?,
        Swatch::Dashed(c, w) => {
            area.draw(&DashedPathElement::new(vec![a, b], 7, 5, c.stroke_width(w)))?
        }
        Swatch::Patch(c, alpha) => {
            area.draw(&Rectangle::new(
                [(x, y - 8), (x + SWATCH_W, y + 8)],
                c.mix(alpha).filled(),
            ))?;
            area.draw(&Rectangle::new(
                [(x, y - 8), (x + SWATCH_W, y + 8)],
                c.stroke_width(1),
            ))?;
        }
        Swatch::Outline(c, alpha) => area.draw(&Rectangle::new(
            [(x, y - 8), (x + SWATCH_W, y + 8)],
            c.mix(alpha).stroke_width(1),
        ))?,
        Swatch::Ring(c) => area.draw(&Circle::new((x + SWATCH_W / 2, y), 6, c.stroke_width(2)))?,
        Swatch::Box(c) => area.draw(&Rectangle::new(
            [(x + SWATCH_W / 2 - 6, y - 6), (x + SWATCH_W / 2 + 6, y + 6)],
            c.stroke_width(2),
        ))?,
        Swatch::Note => {}
    }
    Ok(())
}

/// Where a one-chart figure (path, lift) puts its legend.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Layout {
    /// Legend in a column right of the chart; figure [`FIGURE_SIZE_PX`].
    Side,
    /// Legend in two columns under a chart `chart_h` pixels tall, for wide views (a walk);
    /// the figure is as tall as it needs.
    Below { chart_h: u32 },
}

/// Height of the legend strip of [`Layout::Below`].
pub const LEGEND_BELOW_H: u32 = 132;

impl Layout {
    /// Figure size, pixels.
    pub fn size(self) -> (u32, u32) {
        match self {
            Layout::Side => FIGURE_SIZE_PX,
            Layout::Below { chart_h } => (FIGURE_SIZE_PX.0, TITLE_H + chart_h + LEGEND_BELOW_H),
        }
    }

    /// First and last pixel (x, then y) of the plotting area.
    pub fn plot_px(self) -> ((i32, i32), (i32, i32)) {
        let (w, h) = self.size();
        let (right, bottom) = match self {
            Layout::Side => (w - LEGEND_W, h),
            Layout::Below { chart_h } => (w, TITLE_H + chart_h),
        };
        let x = ((MARGIN + Y_LABEL_W) as i32, (right - MARGIN) as i32 - 1);
        let y = (
            (TITLE_H + MARGIN) as i32,
            (bottom - MARGIN - X_LABEL_H) as i32 - 1,
        );
        (x, y)
    }

    /// Splits the figure into its title strip, chart area and legend area.
    pub fn split<DB: DrawingBackend>(self, root: &Area<DB>) -> (Area<DB>, Area<DB>, Area<DB>) {
        let (title, body) = root.split_vertically(TITLE_H);
        let (chart, legend) = match self {
            Layout::Side => body.split_horizontally(self.size().0 - LEGEND_W),
            Layout::Below { chart_h } => body.split_vertically(chart_h),
        };
        (title, chart, legend)
    }

    /// Draws the legend in its area: one column, or two side by side.
    pub fn draw_legend<DB: DrawingBackend>(
        self,
        area: &Area<DB>,
        entries: &[Entry],
    ) -> Result<i32, RenderError> {
        match self {
            Layout::Side => draw_legend(area, (MARGIN + 4) as i32, None, entries),
            Layout::Below { .. } => {
                let (w, _) = area.dim_in_pixel();
                let inner = area.margin(0, 0, (MARGIN + Y_LABEL_W - 10) as i32, MARGIN as i32);
                let (left, right) = inner.split_horizontally((w - MARGIN - Y_LABEL_W) / 2);
                let half = entries.len().div_ceil(2);
                let (a, b) = entries.split_at(half);
                let used = draw_legend(&left, 6, None, a)?;
                Ok(used.max(draw_legend(&right, 6, None, b)?))
            }
        }
    }

    /// The one-chart layout for data spanning `span_x` by `span_y` metres: legend below when
    /// the view is much wider than tall, so the equal scale does not squash it.
    pub fn for_spans(span_x: f64, span_y: f64) -> Layout {
        let ((x0, x1), _) = Layout::Below { chart_h: 0 }.plot_px();
        if !(span_x > 2.2 * span_y && span_y > 0.0) {
            return Layout::Side;
        }
        let plot_h = (f64::from(x1 - x0) * span_y / span_x).clamp(260.0, 560.0) as u32;
        Layout::Below {
            chart_h: plot_h + 2 * MARGIN + X_LABEL_H,
        }
    }
}

/// The chart of a one-chart figure over the given ranges; its plotting area is exactly
/// [`Layout::plot_px`].
pub fn single_chart<'a, DB: DrawingBackend>(
    area: &'a Area<DB>,
    x: Range<f64>,
    y: Range<f64>,
) -> Result<Chart<'a, DB>, RenderError> {
    let chart = ChartBuilder::on(area)
        .margin(MARGIN)
        .x_label_area_size(X_LABEL_H)
        .y_label_area_size(Y_LABEL_W)
        .build_cartesian_2d(x, y)?;
    Ok(chart)
}

pub type Chart<'a, DB> = ChartContext<'a, DB, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// Grid, axes, tick labels (two decimals) and axis titles of a chart.
pub fn draw_axes<DB: DrawingBackend>(
    chart: &mut Chart<'_, DB>,
    x_desc: Option<&str>,
    y_desc: &str,
) -> Result<(), RenderError> {
    let mut mesh = chart.configure_mesh();
    mesh.x_label_formatter(&tick)
        .y_label_formatter(&tick)
        .x_labels(14)
        .y_labels(10)
        .label_style(text(TICK_PX, &INK))
        .axis_desc_style(text(AXIS_TITLE_PX, &INK))
        .axis_style(INK.stroke_width(1))
        .bold_line_style(RGBColor(200, 200, 206).stroke_width(1))
        .light_line_style(RGBColor(238, 238, 242).stroke_width(1))
        .max_light_lines(1)
        .y_desc(y_desc);
    match x_desc {
        Some(d) => {
            mesh.x_desc(d);
        }
        None => {
            mesh.x_label_formatter(&|_| String::new());
        }
    }
    mesh.draw()?;
    // A light frame, so stacked panels without their own time axis still read as boxes.
    let area = chart.plotting_area().strip_coord_spec();
    let (w, h) = area.dim_in_pixel();
    area.draw(&Rectangle::new(
        [(0, 0), (w as i32 - 1, h as i32 - 1)],
        RGBColor(170, 170, 178).stroke_width(1),
    ))?;
    Ok(())
}

/// Points per piece of a thick line (see [`draw_line`]).
const PIECE: usize = 24;

/// Draws one run of a line in a chart: points are mapped to pixels, repeated pixels dropped,
/// and a thick line is drawn in short overlapping pieces, each filled on its own, so a path
/// that doubles back on itself (a bar going up and down) stays solid in the bitmap. A run of
/// one point is a dot.
pub fn draw_line<DB: DrawingBackend>(
    chart: &Chart<'_, DB>,
    run: &[(f64, f64)],
    colour: RGBColor,
    width: u32,
) -> Result<(), RenderError> {
    let px = pixels(chart, run);
    draw_pixels(
        &chart.plotting_area().strip_coord_spec(),
        &px,
        colour,
        width,
    )
}

/// Draws a line through pixels of `area` (no repeated neighbours), as [`draw_line`] does.
pub fn draw_pixels<DB: DrawingBackend>(
    area: &Area<DB>,
    px: &[(i32, i32)],
    colour: RGBColor,
    width: u32,
) -> Result<(), RenderError> {
    let style = colour.stroke_width(width);
    if let [only] = px {
        area.draw(&Circle::new(*only, width.max(2), colour.filled()))?;
        return Ok(());
    }
    if width <= 1 {
        area.draw(&PathElement::new(px.to_vec(), style))?;
        return Ok(());
    }
    let mut start = 0;
    while start + 1 < px.len() {
        let end = (start + PIECE).min(px.len() - 1);
        area.draw(&PathElement::new(px[start..=end].to_vec(), style))?;
        start = end;
    }
    Ok(())
}

/// A run as pixels of the chart's plotting area, repeated pixels dropped.
fn pixels<DB: DrawingBackend>(chart: &Chart<'_, DB>, run: &[(f64, f64)]) -> Vec<(i32, i32)> {
    let (bx, by) = chart.plotting_area().get_base_pixel();
    let mut px: Vec<(i32, i32)> = Vec::with_capacity(run.len());
    for p in run {
        let (x, y) = chart.backend_coord(p);
        let q = (x - bx, y - by);
        if px.last() != Some(&q) {
            px.push(q);
        }
    }
    px
}

/// Draws one run as a dashed line (dashes of 9 px, gaps of 6 px along the path).
pub fn draw_dashed<DB: DrawingBackend>(
    chart: &Chart<'_, DB>,
    run: &[(f64, f64)],
    colour: RGBColor,
    width: u32,
) -> Result<(), RenderError> {
    let px = pixels(chart, run);
    let plain = chart.plotting_area().strip_coord_spec();
    if let [only] = px.as_slice() {
        plain.draw(&Circle::new(*only, width.max(2), colour.filled()))?;
        return Ok(());
    }
    plain.draw(&DashedPathElement::new(
        px,
        9,
        6,
        colour.stroke_width(width),
    ))?;
    Ok(())
}

/// Start and end marks of a path, in figure pixels: a hollow circle and a hollow square, so the
/// path stays visible through them.
pub fn draw_ends<DB: DrawingBackend>(
    root: &Area<DB>,
    start: (i32, i32),
    end: (i32, i32),
    colour: RGBColor,
) -> Result<(), RenderError> {
    root.draw(&Rectangle::new(
        [(end.0 - 7, end.1 - 7), (end.0 + 7, end.1 + 7)],
        colour.stroke_width(2),
    ))?;
    root.draw(&Circle::new(start, 8, colour.stroke_width(2)))?;
    Ok(())
}

/// A note centred in a chart's plotting area (e.g. "no base of support in this trial").
pub fn draw_note<DB: DrawingBackend>(chart: &Chart<'_, DB>, note: &str) -> Result<(), RenderError> {
    let area = chart.plotting_area();
    let (w, h) = area.dim_in_pixel();
    let style = text(LEGEND_PX + 2, &MUTED).pos(Pos::new(HPos::Center, VPos::Center));
    area.strip_coord_spec().draw(&Text::new(
        note.to_string(),
        (w as i32 / 2, h as i32 / 2),
        style,
    ))?;
    Ok(())
}

/// Bounds of points in metres (non-finite values ignored).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Bounds {
    pub x: (f64, f64),
    pub y: (f64, f64),
}

impl Bounds {
    pub fn empty() -> Bounds {
        Bounds {
            x: (f64::INFINITY, f64::NEG_INFINITY),
            y: (f64::INFINITY, f64::NEG_INFINITY),
        }
    }

    pub fn add(&mut self, p: (f64, f64)) {
        if p.0.is_finite() && p.1.is_finite() {
            self.x = (self.x.0.min(p.0), self.x.1.max(p.0));
            self.y = (self.y.0.min(p.1), self.y.1.max(p.1));
        }
    }

    pub fn is_empty(&self) -> bool {
        self.x.0 > self.x.1
    }
}

/// Data ranges with one metre the same number of pixels along both axes: the bounds padded by
/// `pad_m` (and to at least `min_span_m`), then the shorter side widened about its centre to
/// the plotting area's aspect. `x_px`, `y_px`: first and last pixel of each axis.
pub fn equal_ranges(
    b: Bounds,
    x_px: (i32, i32),
    y_px: (i32, i32),
    pad_m: f64,
    min_span_m: f64,
) -> (Range<f64>, Range<f64>) {
    let w = f64::from((x_px.1 - x_px.0).max(1));
    let h = f64::from((y_px.1 - y_px.0).max(1));
    let span_x = (b.x.1 - b.x.0 + 2.0 * pad_m).max(min_span_m);
    let span_y = (b.y.1 - b.y.0 + 2.0 * pad_m).max(min_span_m);
    let m_per_px = (span_x / w).max(span_y / h);
    let (cx, cy) = ((b.x.0 + b.x.1) / 2.0, (b.y.0 + b.y.1) / 2.0);
    let (hx, hy) = (m_per_px * w / 2.0, m_per_px * h / 2.0);
    (cx - hx..cx + hx, cy - hy..cy + hy)
}

/// A padded range for a time-series panel; `None` without data. Spans under `min_span` grow
/// about their centre; `include` values (e.g. 0) are kept in range.
pub fn value_range(
    values: impl Iterator<Item = f64>,
    include: &[f64],
    min_span: f64,
) -> Option<Range<f64>> {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    let mut any = false;
    for v in values.filter(|v| v.is_finite()) {
        lo = lo.min(v);
        hi = hi.max(v);
        any = true;
    }
    if !any {
        return None;
    }
    for &v in include {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if hi - lo < min_span {
        let c = (hi + lo) / 2.0;
        lo = c - min_span / 2.0;
        hi = c + min_span / 2.0;
    }
    let pad = 0.07 * (hi - lo);
    Some(lo - pad..hi + pad)
}

/// Splits a series at missing (or non-finite) values into runs of consecutive points.
pub fn runs(points: impl Iterator<Item = Option<(f64, f64)>>) -> Vec<Vec<(f64, f64)>> {
    let mut out: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut current = Vec::new();
    for p in points {
        match p.filter(|p| p.0.is_finite() && p.1.is_finite()) {
            Some(p) => current.push(p),
            None => {
                if !current.is_empty() {
                    out.push(std::mem::take(&mut current));
                }
            }
        }
    }
    if !current.is_empty() {
        out.push(current);
    }
    out
}

/// Thins a time series to what `columns` pixel columns can show: per column its first, lowest,
/// highest and last point, in order. Short runs pass unchanged.
pub fn thin_series(run: Vec<(f64, f64)>, columns: usize) -> Vec<(f64, f64)> {
    let columns = columns.max(1);
    if run.len() <= 4 * columns {
        return run;
    }
    let per = run.len().div_ceil(columns);
    let mut out = Vec::with_capacity(4 * columns);
    for chunk in run.chunks(per) {
        let (Some(&first), Some(&last)) = (chunk.first(), chunk.last()) else {
            continue;
        };
        let (mut lo, mut hi) = (0, 0);
        for (i, p) in chunk.iter().enumerate() {
            if p.1 < chunk[lo].1 {
                lo = i;
            }
            if p.1 > chunk[hi].1 {
                hi = i;
            }
        }
        let (a, b) = if lo <= hi { (lo, hi) } else { (hi, lo) };
        out.push(first);
        for i in [a, b] {
            if i != 0 && i != chunk.len() - 1 {
                out.push(chunk[i]);
            }
        }
        if chunk.len() > 1 {
            out.push(last);
        }
    }
    out
}

/// Thins a path in the plane: a point is kept when it lies at least `min_step` (metres, about
/// half a pixel) from the last kept one; the last point is always kept.
pub fn thin_path(run: Vec<(f64, f64)>, min_step: f64) -> Vec<(f64, f64)> {
    if run.len() < 3 {
        return run;
    }
    let mut out = Vec::with_capacity(run.len().min(8192));
    let mut last = run[0];
    out.push(last);
    for &p in &run[1..run.len() - 1] {
        if (p.0 - last.0).hypot(p.1 - last.1) >= min_step {
            out.push(p);
            last = p;
        }
    }
    out.push(run[run.len() - 1]);
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn runs_break_at_missing_values() {
        let pts = vec![
            Some((0.0, 1.0)),
            Some((1.0, 2.0)),
            None,
            Some((3.0, f64::NAN)),
            Some((4.0, 5.0)),
        ];
        let r = runs(pts.into_iter());
        assert_eq!(r, vec![vec![(0.0, 1.0), (1.0, 2.0)], vec![(4.0, 5.0)]]);
    }

    #[test]
    fn equal_ranges_give_the_same_pixels_per_metre_on_both_axes() {
        let mut b = Bounds::empty();
        b.add((0.0, 0.0));
        b.add((4.0, 0.5));
        let (x, y) = equal_ranges(b, (100, 900), (80, 700), 0.1, 0.5);
        let px_x = 800.0 / (x.end - x.start);
        let px_y = 620.0 / (y.end - y.start);
        assert_relative_eq!(px_x, px_y, max_relative = 1e-12);
        // The data fit inside, with the pad on the long axis.
        assert_relative_eq!(x.start, -0.1, epsilon = 1e-12);
        assert!(y.start < 0.0 && y.end > 0.5);
    }

    #[test]
    fn thinning_keeps_extremes_and_ends() {
        let run: Vec<(f64, f64)> = (0..10_000)
            .map(|i| (i as f64, ((i * 37) % 101) as f64))
            .collect();
        let thin = thin_series(run.clone(), 100);
        assert!(thin.len() <= 400);
        assert_eq!(thin.first(), run.first());
        assert_eq!(thin.last(), run.last());
        let max = |v: &[(f64, f64)]| v.iter().map(|p| p.1).fold(f64::MIN, f64::max);
        assert_eq!(max(&thin), max(&run));
        assert!(thin.windows(2).all(|w| w[0].0 < w[1].0));
        let path: Vec<(f64, f64)> = (0..1000).map(|i| (i as f64 * 1e-4, 0.0)).collect();
        let p = thin_path(path, 0.00995);
        assert_eq!(p.len(), 11);
    }

    #[test]
    fn the_one_chart_layouts_have_the_plotting_areas_the_views_assume() {
        for layout in [Layout::Side, Layout::for_spans(6.0, 0.6)] {
            let (w, h) = layout.size();
            let mut buf = vec![0u8; (w * h * 3) as usize];
            let root = BitMapBackend::with_buffer(&mut buf, (w, h)).into_drawing_area();
            let (_, chart_area, _) = layout.split(&root);
            let chart = single_chart(&chart_area, 0.0..1.0, 0.0..1.0).unwrap();
            let (xr, yr) = chart.plotting_area().get_pixel_range();
            let (x, y) = layout.plot_px();
            assert_eq!((xr.start, xr.end - 1), x);
            assert_eq!((yr.start, yr.end - 1), y);
            // And plotters maps the range ends onto those pixels, as PlaneView::pixel does.
            assert_eq!(chart.backend_coord(&(0.0, 0.0)), (x.0, y.1));
            assert_eq!(chart.backend_coord(&(1.0, 1.0)), (x.1, y.0));
        }
        assert_eq!(Layout::for_spans(1.0, 0.8), Layout::Side);
        assert!(matches!(Layout::for_spans(6.0, 0.6), Layout::Below { .. }));
    }

    #[test]
    fn ticks_have_two_decimals_and_no_negative_zero() {
        assert_eq!(tick(&-0.001), "0.00");
        assert_eq!(tick(&1.23456), "1.23");
        assert_eq!(tick(&-0.5), "-0.50");
    }
}
