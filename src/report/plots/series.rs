//! `series`: three panels over one time axis (seconds): CoM speed and its components; the
//! margins (walking: the AP and ML MoS of Hof et al. 2005, J Biomech 38:1-8; otherwise the BoS
//! margin and the omnidirectional MoS with the outside-BoS spans shaded); CoM height above the
//! floor; with force plates a fourth, the cross-check residual m (a + g) − GRF per axis in % of
//! body weight over the complete frames; gait events (heel strikes solid, toe-offs dashed) as
//! vertical marks in every panel.

use super::style::{self, Chart, Context, Entry, Swatch};
use super::{map_axis, Area, RenderError, SeriesView};
use crate::pipeline::TrialResult;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use std::ops::Range;

/// Vertical margin of each panel, above and below its plotting area.
const PANEL_MARGIN: u32 = 9;

/// Number of panels: three, and the plate cross-check when the result has plates.
fn panel_count(r: &TrialResult) -> usize {
    if r.plates.is_some() {
        4
    } else {
        3
    }
}

/// Top pixel row of each panel area (below the title strip); every plotting area is equally
/// tall, the last panel also holds the time axis.
fn panel_rows(panels: usize) -> Vec<u32> {
    let (_, h) = style::FIGURE_SIZE_PX;
    let body = h - style::TITLE_H;
    let plot_h = (body - panels as u32 * 2 * PANEL_MARGIN - style::X_LABEL_H) / panels as u32;
    let step = plot_h + 2 * PANEL_MARGIN;
    (0..panels as u32).map(|k| k * step).collect()
}

/// The pixel layout of the `series` figure (see [`super::series_view`]).
pub(super) fn view(r: &TrialResult) -> SeriesView {
    let (w, h) = style::FIGURE_SIZE_PX;
    let panels = panel_count(r);
    let tops = panel_rows(panels);
    let x_px = (
        (style::MARGIN + style::Y_LABEL_W) as i32,
        (w - style::LEGEND_W - style::MARGIN) as i32 - 1,
    );
    let mut panels_px = vec![(0, 0); panels];
    for (k, rows) in panels_px.iter_mut().enumerate() {
        let area_top = style::TITLE_H + tops[k];
        let area_bottom = tops.get(k + 1).map_or(h, |t| style::TITLE_H + t);
        let labels = if k + 1 == panels { style::X_LABEL_H } else { 0 };
        *rows = (
            (area_top + PANEL_MARGIN) as i32,
            (area_bottom - PANEL_MARGIN - labels) as i32 - 1,
        );
    }
    SeriesView {
        t_s: time_range(r),
        x_px,
        panels_px: [panels_px[0], panels_px[1], panels_px[2]],
        plates_panel_px: panels_px.get(3).copied(),
    }
}

fn time_range(r: &TrialResult) -> Range<f64> {
    let t0 = r.times_s.first().copied().unwrap_or(0.0);
    let t1 = r.times_s.last().copied().unwrap_or(t0);
    if t1 - t0 > 1e-9 {
        t0..t1
    } else {
        t0 - 0.5..t0 + 0.5
    }
}

fn series_of(r: &TrialResult, f: impl Fn(usize) -> Option<f64>) -> Vec<Option<(f64, f64)>> {
    r.times_s
        .iter()
        .enumerate()
        .map(|(i, &t)| f(i).map(|v| (t, v)))
        .collect()
}

/// Spans (start, end) in seconds where the CoM's floor projection is outside the BoS, each
/// frame covering half a sample period on either side.
/// Runs of (time, lowest, highest) CoM height above the floor among the models of the spread.
fn spread_band(r: &TrialResult) -> Vec<Vec<(f64, f64, f64)>> {
    let Some(s) = &r.spread else {
        return Vec::new();
    };
    let floor = r.support.floor_m;
    let mut runs: Vec<Vec<(f64, f64, f64)>> = Vec::new();
    let mut current = Vec::new();
    for (i, t) in r.times_s.iter().enumerate() {
        let lo = s.low_m.get(i).copied().flatten();
        let hi = s.high_m.get(i).copied().flatten();
        match lo.zip(hi) {
            Some((lo, hi)) => {
                let (a, b) = (r.up_axis.height(&lo) - floor, r.up_axis.height(&hi) - floor);
                current.push((*t, a.min(b), a.max(b)));
            }
            None if !current.is_empty() => runs.push(std::mem::take(&mut current)),
            None => {}
        }
    }
    if !current.is_empty() {
        runs.push(current);
    }
    runs
}

fn outside_spans(r: &TrialResult) -> Vec<(f64, f64)> {
    let half = 0.5 / r.rate_hz;
    let mut spans = Vec::new();
    let mut start: Option<usize> = None;
    let margins = &r.support.bos_margin_m;
    for i in 0..=margins.len() {
        let outside = margins.get(i).copied().flatten().is_some_and(|m| m < 0.0);
        match (outside, start) {
            (true, None) => start = Some(i),
            (false, Some(a)) => {
                if let (Some(&ta), Some(&tb)) = (r.times_s.get(a), r.times_s.get(i - 1)) {
                    spans.push((ta - half, tb + half));
                }
                start = None;
            }
            _ => {}
        }
    }
    spans
}

/// One panel: its lines, axis title, values its range must hold, smallest span, and the note
/// shown when it has no data.
struct Panel<'a> {
    lines: &'a [Line],
    y_desc: &'static str,
    include: &'static [f64],
    min_span: f64,
    empty: &'static str,
}

struct Line {
    runs: Vec<Vec<(f64, f64)>>,
    swatch: Swatch,
    label: &'static str,
}

impl Line {
    fn new(points: Vec<Option<(f64, f64)>>, swatch: Swatch, label: &'static str) -> Line {
        Line {
            runs: style::runs(points.into_iter()),
            swatch,
            label,
        }
    }

    fn values(&self) -> impl Iterator<Item = f64> + '_ {
        self.runs.iter().flatten().map(|p| p.1)
    }
}

pub(super) fn draw<DB: DrawingBackend>(root: &Area<DB>, ctx: &Context) -> Result<(), RenderError> {
    let r = ctx.result;
    let up = r.up_axis;
    let (w, _) = style::FIGURE_SIZE_PX;
    let (title_area, body) = root.split_vertically(style::TITLE_H);
    style::draw_title(
        &title_area,
        &format!("{}: CoM speed, margins and height over time", r.name),
        &ctx.subtitle,
    )?;
    let n_panels = panel_count(r);
    let tops = panel_rows(n_panels);
    let panels = body.split_by_breakpoints([w - style::LEGEND_W], &tops[1..]);
    let t = time_range(r);
    let layout = view(r);
    let columns = (w - style::LEGEND_W - 2 * style::MARGIN - style::Y_LABEL_W) as usize;

    let norm = |v: &[f64; 3]| (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
    let velocity = |i: usize| r.velocity.get(i).copied().flatten();
    let speed = vec![
        Line::new(
            series_of(r, |i| velocity(i).map(|v| norm(&v))),
            Swatch::Line(style::COM, 3),
            "CoM speed",
        ),
        Line::new(
            series_of(r, |i| {
                velocity(i)
                    .map(|v| up.horizontal(&v))
                    .map(|h| h[0].hypot(h[1]))
            }),
            Swatch::Dashed(style::HORIZONTAL, 2),
            "horizontal speed",
        ),
        Line::new(
            series_of(r, |i| velocity(i).map(|v| up.height(&v))),
            Swatch::Line(style::VERTICAL, 2),
            "vertical velocity (up +)",
        ),
    ];
    let s = &r.support;
    // Walking: the AP and ML margins gait labs read; the omnidirectional margin and its
    // "outside" shading only where they mean something (standing, lifts): in single stance
    // the CoM is outside the one-foot BoS by design.
    let walking = r.movement.movement == crate::movement::Movement::Walk;
    let walking_margins = || {
        vec![
            Line::new(
                series_of(r, |i| s.mos_ap_m.get(i).copied().flatten()),
                Swatch::Line(style::XCOM, 2),
                "MoS AP (XCoM to the front BoS edge)",
            ),
            Line::new(
                series_of(r, |i| s.mos_ml_m.get(i).copied().flatten()),
                Swatch::Dashed(style::COM, 2),
                "MoS ML (XCoM to the lateral BoS edge)",
            ),
        ]
    };
    let margins = if walking {
        walking_margins()
    } else {
        vec![
            Line::new(
                series_of(r, |i| s.bos_margin_m.get(i).copied().flatten()),
                Swatch::Line(style::COM, 2),
                "BoS margin of the CoM",
            ),
            Line::new(
                series_of(r, |i| s.mos_m.get(i).copied().flatten()),
                Swatch::Line(style::XCOM, 2),
                "MoS (XCoM, Hof 2005)",
            ),
        ]
    };
    let height = vec![Line::new(
        series_of(r, |i| {
            r.com
                .get(i)
                .copied()
                .flatten()
                .map(|c| up.height(&c) - s.floor_m)
        }),
        Swatch::Line(style::COM, 2),
        "CoM height above the floor",
    )];

    let band = spread_band(r);
    let residual_of = |axis: usize| {
        series_of(r, |i| {
            let p = r.plates.as_ref()?;
            let g = p.grf_n.get(i).copied().flatten()?;
            let a = r.acceleration.get(i).copied().flatten()?;
            let m = r.model.system_mass_kg;
            let weight = m * crate::synth::G_M_S2;
            let gu = up.unit()[axis] * crate::synth::G_M_S2;
            Some(100.0 * (m * (a[axis] + gu) - g[axis]) / weight)
        })
    };
    let residual = vec![
        Line::new(
            residual_of(0),
            Swatch::Line(style::HORIZONTAL, 2),
            "m(a+g) - GRF, lab x",
        ),
        Line::new(
            residual_of(1),
            Swatch::Dashed(style::XCOM, 2),
            "m(a+g) - GRF, lab y",
        ),
        Line::new(
            residual_of(2),
            Swatch::Line(style::VERTICAL, 2),
            "m(a+g) - GRF, lab z",
        ),
    ];
    let mut panels_spec = vec![
        Panel {
            lines: &speed,
            y_desc: "speed (m/s)",
            include: &[0.0],
            min_span: 0.1,
            empty: "no CoM velocity",
        },
        Panel {
            lines: &margins,
            y_desc: "margin (m)",
            include: &[0.0],
            min_span: 0.05,
            empty: "no base of support in this trial",
        },
        Panel {
            lines: &height,
            y_desc: "height (m)",
            include: &[],
            min_span: 0.05,
            empty: "no CoM",
        },
    ];
    if n_panels > 3 {
        panels_spec.push(Panel {
            lines: &residual,
            y_desc: "residual (% BW)",
            include: &[0.0],
            min_span: 2.0,
            empty: "no frame with a complete ground reaction",
        });
    }
    for (k, p) in panels_spec.iter().enumerate() {
        let Panel {
            lines,
            y_desc,
            include,
            min_span,
            empty: empty_note,
        } = p;
        let (Some(chart_area), Some(legend_area)) = (panels.get(2 * k), panels.get(2 * k + 1))
        else {
            continue;
        };
        let last = k + 1 == n_panels;
        let band_values = band
            .iter()
            .flatten()
            .filter(|_| k == 2)
            .flat_map(|&(_, lo, hi)| [lo, hi]);
        let range = style::value_range(
            lines.iter().flat_map(|l| l.values()).chain(band_values),
            include,
            *min_span,
        );
        let y = range.clone().unwrap_or(-1.0..1.0);
        let mut chart = ChartBuilder::on(chart_area)
            .margin_top(PANEL_MARGIN)
            .margin_bottom(PANEL_MARGIN)
            .margin_left(style::MARGIN)
            .margin_right(style::MARGIN)
            .x_label_area_size(if last { style::X_LABEL_H } else { 0 })
            .y_label_area_size(style::Y_LABEL_W)
            .build_cartesian_2d(t.clone(), y.clone())?;
        let rows = layout
            .panels_px
            .get(k)
            .copied()
            .or(layout.plates_panel_px)
            .unwrap_or_default();
        debug_assert_eq!(chart.plotting_area().get_pixel_range().1.start, rows.0);
        debug_assert_eq!(chart.plotting_area().get_pixel_range().1.end - 1, rows.1);
        style::draw_axes(&mut chart, last.then_some("time (s)"), y_desc)?;
        let mut legend: Vec<Entry> = Vec::new();
        let mut notes: Vec<Entry> = Vec::new();
        if k == 1 && !walking {
            let spans = outside_spans(r);
            chart.draw_series(spans.iter().map(|&(a, b)| {
                Rectangle::new(
                    [(a.max(t.start), y.end), (b.min(t.end), y.start)],
                    style::OUTSIDE.mix(0.13).filled(),
                )
            }))?;
            if !spans.is_empty() {
                notes.push(Entry::new(
                    Swatch::Patch(style::OUTSIDE, 0.13),
                    "CoM outside the BoS",
                ));
            }
        }
        if y.start < 0.0 && y.end > 0.0 {
            chart.draw_series([PathElement::new(
                vec![(t.start, 0.0), (t.end, 0.0)],
                style::INK.mix(0.7).stroke_width(1),
            )])?;
        }
        draw_events(&mut chart, r, &y)?;
        if k == 1 && walking {
            // The AP MoS at each heel strike (the figure of steps.csv), as rings.
            let rings: Vec<(f64, f64)> = s
                .steps
                .iter()
                .filter_map(|st| Some((st.heel_strike_s, st.mos_ap_heel_strike_m?)))
                .filter(|p| y.contains(&p.1))
                .collect();
            chart.draw_series(
                rings
                    .iter()
                    .map(|&p| Circle::new(p, 5, style::XCOM.stroke_width(2))),
            )?;
            if !rings.is_empty() {
                notes.push(Entry::new(
                    Swatch::Ring(style::XCOM),
                    "AP MoS at heel strike",
                ));
            }
        }
        if k == 2 && !band.is_empty() {
            chart.draw_series(band.iter().map(|run| {
                // At most about two points per pixel column.
                let step = (run.len() / (2 * columns).max(1)).max(1);
                let kept: Vec<&(f64, f64, f64)> = run
                    .iter()
                    .enumerate()
                    .filter(|(i, _)| i % step == 0 || *i + 1 == run.len())
                    .map(|(_, p)| p)
                    .collect();
                let upper = kept.iter().map(|&&(t, _, hi)| (t, hi));
                let lower = kept.iter().rev().map(|&&(t, lo, _)| (t, lo));
                Polygon::new(
                    upper.chain(lower).collect::<Vec<_>>(),
                    style::COM.mix(0.2).filled(),
                )
            }))?;
            legend.push(Entry::new(
                Swatch::Patch(style::COM, 0.2),
                "CoM height under every table and hip method (--spread)",
            ));
        }
        for line in lines.iter() {
            for run in &line.runs {
                let run = style::thin_series(run.clone(), columns);
                match line.swatch {
                    Swatch::Dashed(c, w) => style::draw_dashed(&chart, &run, c, w)?,
                    Swatch::Line(c, w) => style::draw_line(&chart, &run, c, w)?,
                    _ => style::draw_line(&chart, &run, style::INK, 2)?,
                }
            }
            if line.runs.is_empty() {
                notes.push(Entry::new(
                    Swatch::Note,
                    format!("{}: not available", line.label),
                ));
            } else {
                legend.push(Entry::new(line.swatch, line.label));
            }
        }
        if range.is_none() {
            style::draw_note(&chart, empty_note)?;
        }
        if k == 1 && range.is_some() && walking {
            legend.push(Entry::new(
                Swatch::Line(style::INK, 1),
                "zero: XCoM on the BoS edge (Hof 2005)",
            ));
            legend.push(Entry::new(
                Swatch::Note,
                "all-round margin: standing and lifts only",
            ));
        } else if k == 1 && range.is_some() {
            legend.push(Entry::new(
                Swatch::Line(style::INK, 1),
                "zero: on the BoS edge, below it outside",
            ));
        }
        legend.extend(notes);
        if last {
            legend.extend(event_legend(r));
        }
        style::draw_legend(legend_area, (PANEL_MARGIN + 2) as i32, None, &legend)?;
    }
    Ok(())
}

fn draw_events<DB: DrawingBackend>(
    chart: &mut Chart<'_, DB>,
    r: &TrialResult,
    y: &Range<f64>,
) -> Result<(), RenderError> {
    for (side, events) in r.support.events.iter().enumerate() {
        let colour = style::side_colour(side).mix(0.55);
        let at = |f: &usize| r.times_s.get(*f).copied();
        chart.draw_series(
            events
                .heel_strikes
                .iter()
                .filter_map(at)
                .map(|t| PathElement::new(vec![(t, y.start), (t, y.end)], colour.stroke_width(2))),
        )?;
        chart.draw_series(events.toe_offs.iter().filter_map(at).map(|t| {
            DashedPathElement::new(vec![(t, y.start), (t, y.end)], 6, 5, colour.stroke_width(2))
        }))?;
    }
    Ok(())
}

impl SeriesView {
    /// Pixel column of a time, as the plotting backend maps it.
    pub fn column(&self, t_s: f64) -> i32 {
        map_axis(t_s, &self.t_s, self.x_px)
    }
}

fn event_legend(r: &TrialResult) -> Vec<Entry> {
    let e = &r.support.events;
    if e.iter()
        .all(|s| s.heel_strikes.is_empty() && s.toe_offs.is_empty())
    {
        return vec![Entry::new(
            Swatch::Note,
            "no gait events (not a walking trial, or no sacrum or foot markers)",
        )];
    }
    let mut out = Vec::new();
    for (side, word) in [(0, "left"), (1, "right")] {
        let c = style::side_colour(side);
        out.push(Entry::new(
            Swatch::Line(c, 2),
            format!("{word} heel strike"),
        ));
        out.push(Entry::new(Swatch::Dashed(c, 2), format!("{word} toe-off")));
    }
    out
}
