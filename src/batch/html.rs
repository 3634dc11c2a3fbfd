//! The batch's `report.html`: one row per trial (status, key figures, a link to the trial's own
//! page), the failures with their messages, and the figures grouped by subject x condition as
//! strip plots with every trial's point, the group mean and one standard deviation, and the
//! group table.
//!
//! Built from the summary table's rows ([`Row`]), so the page shows exactly what `summary.csv`
//! holds; figure columns appear when some trial has a value in them. Self-contained like the
//! trial page (`crate::report::html`): inline style, inline SVG drawn through the template
//! (every text escaped), and a few hundred bytes of optional script that sorts the table.

use super::table::{columns, mean_sd, Cell, Row};
use crate::report::html::{format_number, name_and_unit, STYLE_CSS};
use crate::report::CAUTIONS;
use askama::Template;
use std::path::Path;

/// The table's optional sorting script (the page reads the same without it).
const SORT_JS: &str = include_str!("../../templates/sort.js");

/// Figure columns shown per trial, in this order, when the table has them and some trial has a
/// value.
const TRIAL_FIGURES: [&str; 16] = [
    "duration_s",
    "valid_fraction",
    "com_mean_height_m",
    "com_mean_speed_m_s",
    "gait_walking_speed_m_s",
    "gait_cadence_steps_per_min",
    "gait_double_support_fraction",
    "jump_height_from_takeoff_velocity_m",
    "jump_flight_time_s",
    "sway_path_length_m",
    "sway_rms_ml_m",
    "lift_reps",
    "min_mos_m",
    "left_min_mos_ml_single_stance_m",
    "right_min_mos_ml_single_stance_m",
    "warnings",
];

/// Figures compared between groups, when present.
const GROUP_FIGURES: [&str; 8] = [
    "gait_walking_speed_m_s",
    "com_mean_speed_m_s",
    "com_mean_height_of_stature",
    "com_vertical_excursion_m",
    "jump_height_from_takeoff_velocity_m",
    "sway_path_length_m",
    "left_min_mos_ml_single_stance_m",
    "right_min_mos_ml_single_stance_m",
];

/// At most this many strip plots (the most telling figures come first in [`GROUP_FIGURES`]).
const MAX_STRIPS: usize = 4;

struct TrialRow {
    row: String,
    id: String,
    link: Option<String>,
    subject: String,
    condition: String,
    status: String,
    figures: Vec<String>,
}

struct Tick {
    x: f64,
    label: String,
}

struct GroupStrip {
    label: String,
    y: f64,
    /// x, vertical jitter and the point's tooltip (trial id and value).
    points: Vec<(f64, f64, String)>,
    mean_x: Option<f64>,
    sd_lo: f64,
    sd_hi: f64,
}

struct Strip {
    id: String,
    title: String,
    axis: String,
    width: f64,
    height: f64,
    left: f64,
    right: f64,
    top: f64,
    bottom: f64,
    plot_mid: f64,
    ticks: Vec<Tick>,
    groups: Vec<GroupStrip>,
}

struct GroupRow {
    subject: String,
    condition: String,
    n: usize,
    cells: Vec<String>,
}

#[derive(Template)]
#[template(path = "batch.html")]
struct BatchPage {
    version: &'static str,
    css: &'static str,
    script: &'static str,
    trials: usize,
    ok: usize,
    failed: usize,
    header: Vec<String>,
    rows: Vec<TrialRow>,
    failures: Vec<(String, String, String)>,
    strips: Vec<Strip>,
    group_header: Vec<String>,
    group_rows: Vec<GroupRow>,
    cautions: &'static [&'static str],
}

/// Writes `<out_dir>/report.html` for the rows of a batch, through a temporary name; each
/// trial's page is looked for in `<out_dir>/<trials_subdir><id>/report.html` (`trials/` for a
/// batch) and linked when it exists.
pub fn write_batch_report(
    out_dir: &Path,
    trials_subdir: &str,
    rows: &[Row],
) -> std::io::Result<()> {
    let page = batch_page(out_dir, trials_subdir, rows)?;
    crate::report::write_atomic(&out_dir.join("report.html"), |w| {
        w.write_all(page.as_bytes())
    })
}

fn text(row: &Row, column: &str) -> String {
    row.get(column)
        .and_then(Cell::as_str)
        .unwrap_or_default()
        .to_string()
}

fn value(row: &Row, column: &str) -> Option<f64> {
    match row.get(column)? {
        Cell::Float(v) => v.filter(|v| v.is_finite()),
        Cell::Int(v) => v.map(|v| v as f64),
        Cell::Text(_) => None,
    }
}

fn shown(column: &str, v: Option<f64>, integer: bool) -> String {
    match v {
        None => String::new(),
        Some(v) if integer => format!("{v:.0}"),
        Some(v) => {
            let (_, unit) = name_and_unit(column);
            if unit == "%" {
                format_number(v * 100.0, &unit)
            } else {
                format_number(v, &unit)
            }
        }
    }
}

fn header_text(column: &str) -> String {
    let (words, unit) = name_and_unit(column);
    if unit.is_empty() {
        words
    } else {
        format!("{words} ({unit})")
    }
}

/// The batch page as HTML text; the trial pages are looked for as [`write_batch_report`] says.
pub fn batch_page(out_dir: &Path, trials_subdir: &str, rows: &[Row]) -> std::io::Result<String> {
    let is_int = |c: &str| {
        columns()
            .iter()
            .any(|(n, k)| *n == c && *k == super::table::Kind::Int)
    };
    let figure_columns: Vec<&str> = TRIAL_FIGURES
        .iter()
        .copied()
        .filter(|c| columns().iter().any(|(n, _)| n == c))
        .filter(|c| rows.iter().any(|r| value(r, c).is_some()))
        .collect();
    let mut header: Vec<String> = ["row", "trial", "subject", "condition", "status"]
        .iter()
        .map(|s| s.to_string())
        .collect();
    header.extend(figure_columns.iter().map(|c| header_text(c)));
    let trials_dir = out_dir.join(trials_subdir);
    let table_rows: Vec<TrialRow> = rows
        .iter()
        .map(|r| {
            let id = text(r, "id");
            let page = trials_dir.join(&id).join("report.html");
            let link = (!id.is_empty() && r.is_ok() && page.is_file())
                .then(|| format!("{trials_subdir}{}/report.html", percent_path(&id)));
            TrialRow {
                row: r.row().map_or(String::new(), |v| v.to_string()),
                id,
                link,
                subject: text(r, "subject"),
                condition: text(r, "condition"),
                status: if r.is_ok() { "ok" } else { "error" }.to_string(),
                figures: figure_columns
                    .iter()
                    .map(|c| shown(c, value(r, c), is_int(c)))
                    .collect(),
            }
        })
        .collect();
    let failures: Vec<(String, String, String)> = rows
        .iter()
        .filter(|r| !r.is_ok())
        .map(|r| {
            (
                r.row().map_or(String::new(), |v| v.to_string()),
                text(r, "id"),
                text(r, "error"),
            )
        })
        .collect();
    let groups = group_members(rows);
    let group_figures: Vec<&str> = GROUP_FIGURES
        .iter()
        .copied()
        .filter(|c| columns().iter().any(|(n, _)| n == c))
        .filter(|c| rows.iter().any(|r| r.is_ok() && value(r, c).is_some()))
        .take(MAX_STRIPS)
        .collect();
    let strips = if groups.is_empty() {
        Vec::new()
    } else {
        group_figures
            .iter()
            .filter_map(|c| strip(c, &groups))
            .collect()
    };
    let group_rows = groups
        .iter()
        .map(|(subject, condition, members)| GroupRow {
            subject: subject.clone(),
            condition: condition.clone(),
            n: members.len(),
            cells: group_figures
                .iter()
                .map(|c| {
                    let values: Vec<f64> = members.iter().filter_map(|r| value(r, c)).collect();
                    let (_, unit) = name_and_unit(c);
                    match mean_sd(&values) {
                        (Some(m), Some(sd)) => {
                            format!(
                                "{} \u{b1} {}",
                                format_number(m, &unit),
                                format_number(sd, &unit)
                            )
                        }
                        (Some(m), None) => format_number(m, &unit),
                        _ => String::new(),
                    }
                })
                .collect(),
        })
        .collect();
    let ok = rows.iter().filter(|r| r.is_ok()).count();
    let page = BatchPage {
        version: env!("CARGO_PKG_VERSION"),
        css: STYLE_CSS,
        script: SORT_JS,
        trials: rows.len(),
        ok,
        failed: rows.len() - ok,
        header,
        rows: table_rows,
        failures,
        strips,
        group_header: group_figures.iter().map(|c| header_text(c)).collect(),
        group_rows,
        cautions: &CAUTIONS,
    };
    page.render().map_err(std::io::Error::other)
}

/// A trial id as a relative URL path segment (ids are file stems: anything but unreserved
/// characters is percent-encoded).
fn percent_path(id: &str) -> String {
    let mut out = String::new();
    for b in id.bytes() {
        if b.is_ascii_alphanumeric() || b"-._~".contains(&b) {
            out.push(b as char);
        } else {
            out.push_str(&format!("%{b:02X}"));
        }
    }
    out
}

/// The ok rows of each subject x condition pair with at least one of the two, in order of
/// first appearance.
fn group_members(rows: &[Row]) -> Vec<(String, String, Vec<&Row>)> {
    let mut out: Vec<(String, String, Vec<&Row>)> = Vec::new();
    for r in rows.iter().filter(|r| r.is_ok()) {
        let (s, c) = (text(r, "subject"), text(r, "condition"));
        if s.is_empty() && c.is_empty() {
            continue;
        }
        match out.iter_mut().find(|g| g.0 == s && g.1 == c) {
            Some(g) => g.2.push(r),
            None => out.push((s, c, vec![r])),
        }
    }
    out
}

/// Round tick positions covering `lo..hi` (1, 2 or 5 times a power of ten apart).
fn ticks(lo: f64, hi: f64) -> Vec<f64> {
    let span = (hi - lo).max(f64::EPSILON);
    let raw = span / 5.0;
    let power = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * power)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * power);
    let first = (lo / step).ceil() as i64;
    let last = (hi / step).floor() as i64;
    (first..=last).map(|i| i as f64 * step).collect()
}

fn strip(column: &str, groups: &[(String, String, Vec<&Row>)]) -> Option<Strip> {
    let all: Vec<f64> = groups
        .iter()
        .flat_map(|g| g.2.iter().filter_map(|r| value(r, column)))
        .collect();
    let lo = all.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = all.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if !lo.is_finite() || !hi.is_finite() {
        return None;
    }
    let pad = if hi > lo {
        (hi - lo) * 0.08
    } else {
        lo.abs().max(1e-3) * 0.1
    };
    let (lo, hi) = (lo - pad, hi + pad);
    let (width, left, right, top, row_h) = (720.0, 200.0, 700.0, 12.0, 30.0);
    let bottom = top + row_h * groups.len() as f64;
    let height = bottom + 44.0;
    let x = |v: f64| (10.0 * (left + (v - lo) / (hi - lo) * (right - left))).round() / 10.0;
    let (_, unit) = name_and_unit(column);
    let group_strips = groups
        .iter()
        .enumerate()
        .map(|(i, (subject, condition, members))| {
            let y = top + row_h * (i as f64 + 0.5);
            let values: Vec<(f64, String)> = members
                .iter()
                .filter_map(|r| value(r, column).map(|v| (v, text(r, "id"))))
                .collect();
            let numbers: Vec<f64> = values.iter().map(|v| v.0).collect();
            let (mean, sd) = mean_sd(&numbers);
            let sd = sd.unwrap_or(0.0);
            let label = match (subject.is_empty(), condition.is_empty()) {
                (false, false) => format!("{subject} \u{d7} {condition}"),
                (false, true) => subject.clone(),
                _ => condition.clone(),
            };
            GroupStrip {
                label,
                y,
                points: values
                    .iter()
                    .enumerate()
                    .map(|(k, (v, id))| {
                        // Alternating small offsets keep equal values visible.
                        let jitter = [0.0, -5.0, 5.0][k % 3];
                        (
                            x(*v),
                            jitter,
                            format!("{id}: {} {unit}", format_number(*v, &unit)),
                        )
                    })
                    .collect(),
                mean_x: mean.map(x),
                sd_lo: mean.map_or(0.0, |m| x(m - sd)),
                sd_hi: mean.map_or(0.0, |m| x(m + sd)),
            }
        })
        .collect();
    Some(Strip {
        id: column.replace('_', "-"),
        title: capitalize_first(&header_text(column)),
        axis: header_text(column),
        width,
        height,
        left,
        right,
        top,
        bottom,
        plot_mid: (left + right) / 2.0,
        ticks: ticks(lo, hi)
            .into_iter()
            .map(|t| Tick {
                x: x(t),
                label: format_number(t, &unit),
            })
            .collect(),
        groups: group_strips,
    })
}

fn capitalize_first(text: &str) -> String {
    let mut chars = text.chars();
    match chars.next() {
        Some(c) => c.to_uppercase().chain(chars).collect(),
        None => String::new(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_are_round_and_inside() {
        assert_eq!(
            ticks(0.0, 1.0),
            vec![0.0, 0.2, 0.4, 0.6000000000000001, 0.8, 1.0]
        );
        let t = ticks(1.13, 1.47);
        assert!(t.iter().all(|v| (1.13..=1.47).contains(v)));
        assert!(t.len() >= 3);
    }

    #[test]
    fn ids_become_safe_links() {
        assert_eq!(percent_path("walk 1"), "walk%201");
        assert_eq!(percent_path("a<b>&\""), "a%3Cb%3E%26%22");
    }
}
