//! `report.html`: one self-contained page per trial, to hand to a colleague, a patient, an
//! athlete or a reviewer.
//!
//! The page is built from the same [`Summary`] that `summary.json` holds, so every number on it
//! is also in the files beside it: the movement's key figures first (every figure section the
//! summary has, read generically, so a section appears exactly when its data exist), the figures
//! as inline SVG, the steps and repetitions tables, the warnings (those that question the result
//! first), the cautions, and the provenance with the publications of the methods used.
//!
//! Durable by construction: one file, no network request, no external font, style or script
//! (the style sheet is inlined), text that can be selected and searched, a print style that fits
//! A4 and US Letter, headings in order, a title and a description in every figure. The page is
//! written through an askama template (compiled and checked with the crate; every value is
//! HTML-escaped unless it is the SVG that gravline itself drew, whose text plotters escapes).

use crate::pipeline::TrialResult;
use crate::report::plots::{self, Figure};
use crate::report::{Summary, CAUTIONS};
use askama::Template;
use std::path::Path;

/// The page's style sheet, inlined into every page (no external request).
pub const STYLE_CSS: &str = include_str!("../../templates/style.css");

/// One key figure: its name in words, its value as text and its unit.
#[derive(Clone, Debug, PartialEq)]
pub struct KeyFigure {
    pub name: String,
    pub value: String,
    pub unit: String,
}

/// A titled group of key figures (one object of the summary).
#[derive(Clone, Debug, PartialEq)]
pub struct Section {
    pub title: String,
    pub rows: Vec<KeyFigure>,
}

/// A table cell: its text and whether it is a number (right-aligned).
#[derive(Clone, Debug, PartialEq)]
pub struct TableCell {
    pub text: String,
    pub numeric: bool,
}

/// A table of the page (steps, repetitions, per-side means).
#[derive(Clone, Debug, PartialEq)]
pub struct Table {
    pub id: String,
    pub title: String,
    pub header: Vec<String>,
    pub rows: Vec<Vec<TableCell>>,
}

/// A figure drawn inline, with its title and caption.
#[derive(Clone, Debug, PartialEq)]
pub struct InlineFigure {
    pub id: &'static str,
    pub title: String,
    pub caption: String,
    /// The SVG element, with a `<title>` and `<desc>` inserted.
    pub svg: String,
}

#[derive(Template)]
#[template(path = "trial.html")]
struct TrialPage<'a> {
    version: &'static str,
    css: &'static str,
    trial: &'a str,
    who: String,
    lead: String,
    sections: Vec<Section>,
    questions: Vec<String>,
    figures: Vec<InlineFigure>,
    tables: Vec<Table>,
    others: Vec<String>,
    cautions: &'static [&'static str],
    provenance: Vec<(String, String)>,
    citations: Vec<String>,
}

/// Writes `report.html` into `dir` through a temporary name.
pub fn write_trial_report(
    dir: &Path,
    result: &TrialResult,
    summary: &Summary,
) -> std::io::Result<()> {
    let page = trial_page(result, summary)?;
    crate::report::write_atomic(&dir.join("report.html"), |w| w.write_all(page.as_bytes()))
}

/// The trial page as HTML text.
pub fn trial_page(result: &TrialResult, summary: &Summary) -> std::io::Result<String> {
    let json = Node::of(summary)?;
    let has_frames = result.com.iter().flatten().next().is_some();
    let figures = if has_frames {
        Figure::for_result(result)
            .into_iter()
            .map(|f| inline_figure(result, summary, f))
            .collect::<std::io::Result<Vec<_>>>()?
    } else {
        Vec::new()
    };
    let (questions, others) = split_warnings(&summary.warnings);
    let page = TrialPage {
        version: env!("CARGO_PKG_VERSION"),
        css: STYLE_CSS,
        trial: &summary.trial,
        who: who_line(&json),
        lead: lead_line(&json),
        sections: if has_frames {
            key_sections(&json)
        } else {
            Vec::new()
        },
        questions,
        figures,
        tables: tables(result, &json),
        others,
        cautions: &CAUTIONS,
        provenance: provenance_rows(&json),
        citations: citations(&json),
    };
    page.render().map_err(std::io::Error::other)
}

// ---------------------------------------------------------------------------------------------
// The summary as an ordered tree (serde_json's `Value` sorts object keys; the page keeps the
// order in which the summary declares its figures)
// ---------------------------------------------------------------------------------------------

/// A JSON value whose objects keep their keys in document order.
#[derive(Clone, Debug, PartialEq)]
pub enum Node {
    Null,
    Bool(bool),
    Number(f64, bool),
    Text(String),
    List(Vec<Node>),
    Object(Vec<(String, Node)>),
}

impl Node {
    /// The summary as an ordered tree.
    pub fn of<T: serde::Serialize>(value: &T) -> std::io::Result<Node> {
        let text = serde_json::to_string(value).map_err(std::io::Error::other)?;
        serde_json::from_str(&text).map_err(std::io::Error::other)
    }

    fn get(&self, key: &str) -> &Node {
        match self {
            Node::Object(items) => items
                .iter()
                .find(|(k, _)| k == key)
                .map_or(&Node::Null, |(_, v)| v),
            _ => &Node::Null,
        }
    }

    fn as_str(&self) -> Option<&str> {
        match self {
            Node::Text(s) => Some(s),
            _ => None,
        }
    }

    fn as_f64(&self) -> Option<f64> {
        match self {
            Node::Number(v, _) => Some(*v),
            _ => None,
        }
    }
}

impl std::ops::Index<&str> for Node {
    type Output = Node;
    fn index(&self, key: &str) -> &Node {
        self.get(key)
    }
}

impl<'de> serde::Deserialize<'de> for Node {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Node, D::Error> {
        struct Visitor;
        impl<'de> serde::de::Visitor<'de> for Visitor {
            type Value = Node;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("a JSON value")
            }
            fn visit_unit<E>(self) -> Result<Node, E> {
                Ok(Node::Null)
            }
            fn visit_none<E>(self) -> Result<Node, E> {
                Ok(Node::Null)
            }
            fn visit_bool<E>(self, v: bool) -> Result<Node, E> {
                Ok(Node::Bool(v))
            }
            fn visit_i64<E>(self, v: i64) -> Result<Node, E> {
                Ok(Node::Number(v as f64, true))
            }
            fn visit_u64<E>(self, v: u64) -> Result<Node, E> {
                Ok(Node::Number(v as f64, true))
            }
            fn visit_f64<E>(self, v: f64) -> Result<Node, E> {
                Ok(Node::Number(v, false))
            }
            fn visit_str<E>(self, v: &str) -> Result<Node, E> {
                Ok(Node::Text(v.to_string()))
            }
            fn visit_seq<A: serde::de::SeqAccess<'de>>(self, mut a: A) -> Result<Node, A::Error> {
                let mut items = Vec::new();
                while let Some(item) = a.next_element()? {
                    items.push(item);
                }
                Ok(Node::List(items))
            }
            fn visit_map<A: serde::de::MapAccess<'de>>(self, mut a: A) -> Result<Node, A::Error> {
                let mut items = Vec::new();
                while let Some((k, v)) = a.next_entry::<String, Node>()? {
                    items.push((k, v));
                }
                Ok(Node::Object(items))
            }
        }
        d.deserialize_any(Visitor)
    }
}

// ---------------------------------------------------------------------------------------------
// Figures
// ---------------------------------------------------------------------------------------------

fn inline_figure(
    result: &TrialResult,
    summary: &Summary,
    figure: Figure,
) -> std::io::Result<InlineFigure> {
    let (title, caption) = match figure {
        Figure::Path => (
            "Top view of the CoM path over the base of support",
            "The floor projection of the CoM and of the extrapolated CoM (XCoM) over the feet's support areas, seen from above; progression from left to right as recorded.",
        ),
        Figure::Series => (
            "CoM height, speed and margins over time",
            "Time series of the CoM height and speed and of the margins to the base of support, with the gait events where the trial has them.",
        ),
        Figure::Lift => (
            "Side view of the lift",
            "The system CoM (body and loads) and the loads' path against the mid-foot band, seen from the side.",
        ),
    };
    let svg = plots::render_svg(result, summary, figure)?;
    Ok(InlineFigure {
        id: figure.stem(),
        title: title.to_string(),
        caption: caption.to_string(),
        svg: titled_svg(&svg, figure.stem(), title, caption),
    })
}

/// Inserts a `<title>` and `<desc>` as the first children of the SVG element and names them as
/// its accessible label (the text is escaped here; the rest of the SVG is plotters' output).
fn titled_svg(svg: &str, id: &str, title: &str, desc: &str) -> String {
    let svg = svg.trim_start_matches(|c| c != '<');
    let svg = match svg.strip_prefix("<?xml") {
        Some(rest) => rest.split_once("?>").map_or(svg, |(_, r)| r.trim_start()),
        None => svg,
    };
    let Some(open_end) = svg.find('>') else {
        return String::new();
    };
    let (open, rest) = svg.split_at(open_end);
    // Inline SVG in HTML needs no namespace; without it the page names no URL at all.
    let open = open.replace(" xmlns=\"http://www.w3.org/2000/svg\"", "");
    format!(
        "{open} role=\"img\" aria-labelledby=\"svg-title-{id} svg-desc-{id}\"><title id=\"svg-title-{id}\">{}</title><desc id=\"svg-desc-{id}\">{}</desc>{}",
        escape(title),
        escape(desc),
        &rest[1..]
    )
}

/// Minimal HTML/XML text escaping (for the SVG title and description only).
fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '&' => out.push_str("&amp;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

// ---------------------------------------------------------------------------------------------
// Key figures, read generically from the summary
// ---------------------------------------------------------------------------------------------

/// Summary keys shown elsewhere on the page, never as a figure section.
const NOT_FIGURES: [&str; 13] = [
    "trial",
    "frames",
    "duration_s",
    "rate_hz",
    "valid_fraction",
    "subject",
    "steps",
    "warnings",
    "warning_details",
    "provenance",
    "cautions",
    "movement",
    "movement_rule",
];

/// Sections in the order a reader asks for them: the movement's own figures first.
const SECTION_ORDER: [(&str, &str); 11] = [
    ("gait", "Walking"),
    ("jump", "Jump"),
    ("sway", "Standing sway"),
    ("lift", "Lift"),
    ("reps", "Repetitions"),
    ("plates", "Force plates"),
    ("spread", "Spread between CoM models"),
    ("com", "Center of mass (CoM)"),
    ("support", "Base of support (BoS) and margins"),
    ("floor", "Floor"),
    ("plausibility", "Plausibility"),
];

/// The figure sections of a summary: every object-valued key that is not shown elsewhere, in
/// [`SECTION_ORDER`] first, then in the summary's order.
pub fn key_sections(summary: &Node) -> Vec<Section> {
    let Node::Object(map) = summary else {
        return Vec::new();
    };
    let mut keys: Vec<&(String, Node)> = map
        .iter()
        .filter(|(k, _)| !NOT_FIGURES.contains(&k.as_str()))
        .collect();
    let rank = |k: &str| {
        SECTION_ORDER
            .iter()
            .position(|(name, _)| *name == k)
            .unwrap_or(SECTION_ORDER.len())
    };
    keys.sort_by_key(|(k, _)| rank(k));
    let mut sections = Vec::new();
    for (key, value) in keys {
        let mut rows = Vec::new();
        match value {
            Node::Object(_) => flatten("", value, &mut rows),
            Node::Number(..) | Node::Bool(_) | Node::Text(_) => flatten(key, value, &mut rows),
            _ => {}
        }
        if rows.is_empty() {
            continue;
        }
        let title = SECTION_ORDER
            .iter()
            .find(|(name, _)| name == key)
            .map_or_else(|| capitalize(&words(key)), |(_, t)| t.to_string());
        sections.push(Section { title, rows });
    }
    sections
}

/// Flattens an object's scalar leaves into rows (nested names joined by spaces); lists of up to
/// three numbers are one row (a point); lists of objects are tables, not figures.
fn flatten(prefix: &str, value: &Node, rows: &mut Vec<KeyFigure>) {
    let join = |k: &str| {
        if prefix.is_empty() {
            k.to_string()
        } else {
            format!("{prefix}_{k}")
        }
    };
    let (name, unit) = name_and_unit(prefix);
    let (value, unit) = match value {
        Node::Object(map) => {
            for (k, v) in map {
                flatten(&join(k), v, rows);
            }
            return;
        }
        Node::List(items) => {
            let numbers: Vec<f64> = items.iter().filter_map(Node::as_f64).collect();
            if items.is_empty() || items.len() > 3 || numbers.len() != items.len() {
                return;
            }
            let shown: Vec<String> = numbers.iter().map(|v| format_number(*v, &unit)).collect();
            (format!("({})", shown.join(", ")), unit)
        }
        Node::Null => ("not available".to_string(), unit),
        Node::Bool(b) => (if *b { "yes" } else { "no" }.to_string(), String::new()),
        Node::Text(s) => (s.clone(), String::new()),
        Node::Number(v, true) if unit.is_empty() => (format!("{v}"), unit),
        Node::Number(v, _) if unit == "%" => (format_number(v * 100.0, &unit), unit),
        Node::Number(v, _) => (format_number(*v, &unit), unit),
    };
    rows.push(KeyFigure { name, value, unit });
}

/// Unit suffixes of gravline's names, longest first, with the unit shown.
const UNITS: [(&str, &str); 17] = [
    ("_steps_per_min", "steps/min"),
    ("_of_stature", "x stature"),
    ("_rad_s", "rad/s"),
    ("_m_s2", "m/s\u{b2}"),
    ("_m_s", "m/s"),
    ("_m2", "m\u{b2}"),
    ("_fraction", "%"),
    ("_share", "%"),
    ("_pct_bw", "% body weight"),
    ("_percent", "%"),
    ("_deg", "deg"),
    ("_kg", "kg"),
    ("_hz", "Hz"),
    ("_mm", "mm"),
    ("_nm", "N m"),
    ("_n", "N"),
    ("_s", "s"),
];

/// A name in words and its unit, from a gravline name with its unit suffix
/// (`mean_speed_m_s` -> ("mean speed", "m/s")).
pub fn name_and_unit(name: &str) -> (String, String) {
    for (suffix, unit) in UNITS {
        if let Some(stem) = name.strip_suffix(suffix) {
            return (words(stem), unit.to_string());
        }
    }
    if let Some(stem) = name.strip_suffix("_m") {
        return (words(stem), "m".to_string());
    }
    (words(name), String::new())
}

/// Underscores to spaces, the glossary's abbreviations in their spelling.
fn words(name: &str) -> String {
    name.split('_')
        .filter(|w| !w.is_empty())
        .map(|w| match w {
            "com" => "CoM",
            "xcom" => "XCoM",
            "bos" => "BoS",
            "mos" => "MoS",
            "jc" => "JC",
            "ap" => "AP",
            "ml" => "ML",
            "grf" => "ground reaction",
            "cop" => "CoP",
            "rms" => "RMS",
            "sd" => "SD",
            "x" => "x",
            w => w,
        })
        .collect::<Vec<_>>()
        .join(" ")
}

fn capitalize(text: &str) -> String {
    let mut chars = text.chars();
    match chars.next() {
        Some(c) => c.to_uppercase().chain(chars).collect(),
        None => String::new(),
    }
}

/// A number with the decimals its unit carries: millimetres for metres, milliseconds for
/// seconds, four significant digits otherwise.
pub fn format_number(value: f64, unit: &str) -> String {
    if !value.is_finite() {
        return "not available".to_string();
    }
    let decimals = match unit {
        "m" | "s" | "m/s" | "x stature" => 3,
        "kg" | "Hz" | "N" | "%" | "steps/min" | "% body weight" => 1,
        "deg" | "mm" | "m/s\u{b2}" | "rad/s" | "N m" => 2,
        _ => {
            let magnitude = if value == 0.0 {
                0
            } else {
                value.abs().log10().floor() as i32
            };
            (3 - magnitude).clamp(0, 6) as usize
        }
    };
    let text = format!("{value:.decimals$}");
    // "-0.000" reads as a sign that is not there.
    if text
        .trim_start_matches('-')
        .chars()
        .all(|c| c == '0' || c == '.')
    {
        text.trim_start_matches('-').to_string()
    } else {
        text
    }
}

// ---------------------------------------------------------------------------------------------
// The subject line, the lead, warnings, provenance
// ---------------------------------------------------------------------------------------------

fn who_line(summary: &Node) -> String {
    let subject = &summary["subject"];
    let mut parts = Vec::new();
    if let Some(name) = subject["name"].as_str() {
        parts.push(format!("Subject {name}"));
    }
    if let Some(m) = subject["mass_kg"].as_f64() {
        parts.push(format!("{} kg", format_number(m, "kg")));
    }
    if let Some(h) = subject["height_m"].as_f64() {
        parts.push(format!("{} m tall", format_number(h, "m")));
    }
    if let Some(s) = subject["sex"].as_str() {
        parts.push(s.to_string());
    }
    if let Some(table) = summary["provenance"]["model"]["table"].as_str() {
        parts.push(format!("segment table {table}"));
    }
    parts.join(" \u{b7} ")
}

fn lead_line(summary: &Node) -> String {
    let movement = summary["movement"]
        .as_str()
        .map(|m| format!("{} trial: ", capitalize(m)))
        .unwrap_or_default();
    let frames = summary["frames"].as_f64().unwrap_or(0.0);
    let duration = summary["duration_s"].as_f64().unwrap_or(0.0);
    let rate = summary["rate_hz"].as_f64().unwrap_or(0.0);
    let valid = summary["valid_fraction"].as_f64().unwrap_or(0.0);
    format!(
        "{movement}{} s at {} Hz ({frames} frames), CoM valid in {} % of frames.",
        format_number(duration, "s"),
        format_number(rate, "Hz"),
        format_number(valid * 100.0, "%"),
    )
}

/// Words that mark a warning as questioning the result itself (a declaration that looks wrong,
/// an outline that had to be guessed, models that disagree, a result outside what people do).
const QUESTIONING: [&str; 10] = [
    "suspect",
    "implausib",
    "contradict",
    "declar",
    "guess",
    "spread",
    "units",
    "up axis",
    "not level",
    "no person",
];

/// The warnings that question the result, then the others, each in their order.
pub fn split_warnings(warnings: &[String]) -> (Vec<String>, Vec<String>) {
    warnings.iter().cloned().partition(|w| {
        let lower = w.to_lowercase();
        QUESTIONING.iter().any(|k| lower.contains(k))
    })
}

fn provenance_rows(summary: &Node) -> Vec<(String, String)> {
    fn walk(prefix: &str, v: &Node, rows: &mut Vec<(String, String)>) {
        let text = |n: &Node| match n {
            Node::Text(s) => s.clone(),
            Node::Number(v, _) => format!("{v}"),
            Node::Bool(b) => b.to_string(),
            Node::Null => "none".to_string(),
            _ => String::new(),
        };
        match v {
            Node::Object(map) => {
                for (k, v) in map {
                    let name = if prefix.is_empty() || prefix == "model" {
                        k.clone()
                    } else {
                        format!("{prefix} {k}")
                    };
                    walk(&name, v, rows);
                }
            }
            Node::List(items) => {
                let items: Vec<String> = items.iter().map(text).collect();
                rows.push((words(prefix), items.join(", ")));
            }
            other => rows.push((words(prefix), text(other))),
        }
    }
    let mut rows = Vec::new();
    walk("", &summary["provenance"], &mut rows);
    rows
}

/// The publications of the methods a trial used, from its provenance.
pub fn citations(summary: &Node) -> Vec<String> {
    let model = &summary["provenance"]["model"];
    let mut out = Vec::new();
    if let Some(source) = model["table_source"].as_str().filter(|s| !s.is_empty()) {
        out.push(format!("Segment table: {source}."));
    }
    match model["hip"].as_str() {
        Some("harrington-2007") => out.push(
            "Hip joint centers: Harrington ME, Zavatsky AB, Lawson SEM, Yuan Z, Theologis TN (2007), J Biomech 40:595-602.".into(),
        ),
        Some("bell-1990") => out.push(
            "Hip joint centers: Bell AL, Pedersen DR, Brand RA (1990), J Biomech 23:617-621.".into(),
        ),
        Some("hara-2016") => out.push(
            "Hip joint centers: Hara R, McGinley J, Briggs C, Baker R, Sangeux M (2016), Sci Rep 6:37707.".into(),
        ),
        _ => {}
    }
    if model["cutoff_hz"].as_f64().is_some() {
        out.push(
            "Low-pass: zero-lag Butterworth filter with the cut-off correction for two passes, Winter DA (2009), Biomechanics and Motor Control of Human Movement, 4th ed., Wiley, section 3.4.".into(),
        );
    }
    out.push(
        "Extrapolated CoM and margin of stability: Hof AL, Gazendam MGJ, Sinke WE (2005), The condition for dynamic stability, J Biomech 38:1-8.".into(),
    );
    if let Some(events) = model["gait_events"].as_str() {
        out.push(
            "Gait events: Zeni JA, Richards JG, Higginson JS (2008), Gait Posture 27:710-714."
                .into(),
        );
        if events.contains("bonci") {
            out.push(
                "Gait event refinement: Bonci T et al. (2022), Front Bioeng Biotechnol 10:868928."
                    .into(),
            );
        }
    }
    out
}

// ---------------------------------------------------------------------------------------------
// Tables
// ---------------------------------------------------------------------------------------------

fn tables(result: &TrialResult, summary: &Node) -> Vec<Table> {
    let mut out = Vec::new();
    if !result.support.steps.is_empty() {
        let mut bytes = Vec::new();
        if crate::report::write_steps(result, &mut bytes).is_ok() {
            if let Some(t) = csv_table("steps", "Steps", &bytes) {
                out.push(t);
            }
        }
    }
    if let Node::Object(map) = summary {
        for (key, value) in map.iter().filter(|(k, _)| k != "warning_details") {
            collect_object_lists(key, value, &mut out);
        }
    }
    out
}

/// Lists of objects in the summary (per-side means, repetitions) as tables, one level deep.
fn collect_object_lists(key: &str, value: &Node, out: &mut Vec<Table>) {
    match value {
        Node::List(items) => {
            let Some(Node::Object(first)) = items.first() else {
                return;
            };
            let header: Vec<String> = first.iter().map(|(k, _)| k.clone()).collect();
            let rows = items
                .iter()
                .map(|item| {
                    header
                        .iter()
                        .map(|h| value_cell(&item[h.as_str()], &name_and_unit(h).1))
                        .collect()
                })
                .collect();
            let title = match key {
                "steps" => "Means per side".to_string(),
                "reps" => "Repetitions".to_string(),
                other => capitalize(&words(other)),
            };
            out.push(Table {
                id: format!("summary-{key}"),
                title,
                header: header.iter().map(|h| header_text(h)).collect(),
                rows,
            });
        }
        Node::Object(map) => {
            for (k, v) in map {
                if let Node::List(_) = v {
                    collect_object_lists(k, v, out);
                }
            }
        }
        _ => {}
    }
}

fn value_cell(value: &Node, unit: &str) -> TableCell {
    let (text, numeric) = match value {
        Node::Number(v, true) if unit.is_empty() => (format!("{v}"), true),
        Node::Number(v, _) => (format_number(*v, unit), true),
        Node::Null => (String::new(), false),
        Node::Text(s) => (s.clone(), false),
        Node::Bool(b) => (b.to_string(), false),
        _ => (String::new(), false),
    };
    TableCell { text, numeric }
}

/// A column name in words with its unit in brackets.
fn header_text(name: &str) -> String {
    let (words, unit) = name_and_unit(name);
    if unit.is_empty() {
        words
    } else {
        format!("{words} ({unit})")
    }
}

/// A CSV written by gravline (header, then rows) as a table; numbers shown with their unit's
/// decimals.
fn csv_table(id: &str, title: &str, bytes: &[u8]) -> Option<Table> {
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_reader(bytes);
    let names: Vec<String> = reader.headers().ok()?.iter().map(str::to_string).collect();
    let units: Vec<String> = names.iter().map(|n| name_and_unit(n).1).collect();
    let mut rows = Vec::new();
    for record in reader.records() {
        let record = record.ok()?;
        rows.push(
            record
                .iter()
                .zip(&units)
                .map(|(cell, unit)| match cell.parse::<f64>() {
                    Ok(v) if !unit.is_empty() => TableCell {
                        text: format_number(v, unit),
                        numeric: true,
                    },
                    Ok(_) => TableCell {
                        text: cell.to_string(),
                        numeric: true,
                    },
                    Err(_) => TableCell {
                        text: cell.to_string(),
                        numeric: false,
                    },
                })
                .collect(),
        );
    }
    Some(Table {
        id: id.to_string(),
        title: title.to_string(),
        header: names.iter().map(|n| header_text(n)).collect(),
        rows,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_carry_their_units() {
        assert_eq!(
            name_and_unit("mean_speed_m_s"),
            ("mean speed".to_string(), "m/s".to_string())
        );
        assert_eq!(
            name_and_unit("min_mos_ml_single_stance_m"),
            ("min MoS ML single stance".to_string(), "m".to_string())
        );
        assert_eq!(
            name_and_unit("cadence_steps_per_min"),
            ("cadence".to_string(), "steps/min".to_string())
        );
        assert_eq!(name_and_unit("reps"), ("reps".to_string(), String::new()));
    }

    #[test]
    fn numbers_keep_the_precision_of_their_unit() {
        assert_eq!(format_number(1.23456, "m"), "1.235");
        assert_eq!(format_number(-0.0001, "m"), "0.000");
        assert_eq!(format_number(72.04, "kg"), "72.0");
        assert_eq!(format_number(f64::NAN, "m"), "not available");
        assert_eq!(format_number(12345.6, ""), "12346");
    }

    #[test]
    fn sections_follow_the_movement_first() {
        // From text: the tree keeps the document's order of keys.
        let summary: Node = serde_json::from_str(
            r#"{"trial": "t",
                "com": {"mean_height_m": 0.95, "min_m": [0.0, 0.1, 0.9]},
                "gait": {"walking_speed_m_s": 1.2, "cadence_steps_per_min": 110.0},
                "lift": null}"#,
        )
        .unwrap();
        let sections = key_sections(&summary);
        let titles: Vec<&str> = sections.iter().map(|s| s.title.as_str()).collect();
        assert_eq!(titles, ["Walking", "Center of mass (CoM)"]);
        assert_eq!(sections[1].rows[1].value, "(0.000, 0.100, 0.900)");
        assert_eq!(sections[0].rows[0].unit, "m/s");
    }

    #[test]
    fn warnings_that_question_the_result_come_first() {
        let (first, rest) = split_warnings(&[
            "gap of 0.2 s filled".to_string(),
            "units look like metres: suspect declaration".to_string(),
        ]);
        assert_eq!(first.len(), 1);
        assert!(first[0].contains("suspect"));
        assert_eq!(rest.len(), 1);
    }

    #[test]
    fn svg_titles_are_escaped_and_first() {
        let svg = "<svg width=\"10\" height=\"10\" viewBox=\"0 0 10 10\"><rect/></svg>";
        let titled = titled_svg(svg, "path", "a <b> & c", "d");
        assert!(titled.starts_with("<svg width=\"10\""));
        assert!(titled.contains("<title id=\"svg-title-path\">a &lt;b&gt; &amp; c</title>"));
        assert!(titled.ends_with("<rect/></svg>"));
    }
}
