//! Anthropometric tables: segment mass fractions and CoM locations (docs/DESIGN.md 5).
//!
//! Input: a table name (`de-leva-1996`, `dempster-winter`, `dumas-2007`) and the subject's sex, or the path of
//! a user table in the same CSV format. Output: a validated [`SegmentTable`], one row per segment
//! and endpoint definition. Fractions are dimensionless: `mass_fraction` is the segment's share of
//! body mass, `com_fraction` the CoM's distance from the row's `origin` endpoint as a share of the
//! origin-to-other length, so that `CoM = origin + com_fraction * (other - origin)`.
//!
//! Built-in tables (CSV files in `anthropometry/`, embedded with `include_str!`; their README
//! cites each publication and explains the endpoint mapping):
//! - de Leva P (1996), Adjustments to Zatsiorsky-Seluyanov's segment inertia parameters,
//!   J Biomech 29(9):1223-1230, Table 4 (male and female; main and alternative endpoints).
//! - Dempster WT (1955) via Winter DA, Biomechanics and Motor Control of Human Movement,
//!   4th ed. (2009), Table 4.1.
//! - Dumas R, Cheze L, Verriest J-P (2007), Adjustments to McConville et al. and Young et al.
//!   body segment inertial parameters, J Biomech 40(3):543-553, Table 2 (male and female). Its
//!   rows give the CoM as a 3-D offset `(com_x, com_y, com_z)` in the segment's ISB coordinate
//!   system (Wu et al. 2002, J Biomech 35:543; Wu et al. 2005, J Biomech 38:981), as shares of
//!   the segment length, for right-side segments; [`crate::body::frames`] builds the frames and
//!   mirrors the left side.
//!
//! Validation on load: known segment names, endpoints in the landmark vocabulary, fractions in
//! (0, 1], exactly one default row per segment, and whole-body mass fractions summing to 1 within
//! 0.5 % (otherwise a [`Warning::MassFractionSum`]; the CoM always divides by the actual sum).

use crate::vocabulary::{self, Sidedness};
use crate::warning::Warning;
use serde::Serialize;
use std::collections::BTreeMap;
use std::fmt;
use std::path::Path;

/// Sex of the subject; chooses the table's population where a table has one per sex.
/// One spelling rule everywhere (subject files, manifests, `subjects.csv`, the command line):
/// `female` / `male` or `f` / `m`, any case ([`Sex::parse`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Sex {
    Female,
    Male,
}

impl Sex {
    pub fn parse(text: &str) -> Option<Sex> {
        match text.trim().to_ascii_lowercase().as_str() {
            "female" | "f" => Some(Sex::Female),
            "male" | "m" => Some(Sex::Male),
            _ => None,
        }
    }

    pub fn word(self) -> &'static str {
        match self {
            Sex::Female => "female",
            Sex::Male => "male",
        }
    }
}

impl<'de> serde::Deserialize<'de> for Sex {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Sex, D::Error> {
        let text = String::deserialize(d)?;
        Sex::parse(&text).ok_or_else(|| {
            serde::de::Error::custom(format!(
                "sex = `{text}`; use female or male (or f / m, any case)"
            ))
        })
    }
}

/// The body segments a table may describe. The set is fixed: the trunk is either one segment or
/// its three de Leva parts.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum SegmentKind {
    Head,
    Trunk,
    UpperTrunk,
    MiddleTrunk,
    LowerTrunk,
    /// Dumas 2007's pelvis (lumbar JC to the hip JCs); tables with a whole trunk have none.
    Pelvis,
    UpperArm,
    Forearm,
    Hand,
    Thigh,
    Shank,
    Foot,
}

impl SegmentKind {
    pub const ALL: [SegmentKind; 12] = [
        SegmentKind::Head,
        SegmentKind::Trunk,
        SegmentKind::UpperTrunk,
        SegmentKind::MiddleTrunk,
        SegmentKind::LowerTrunk,
        SegmentKind::Pelvis,
        SegmentKind::UpperArm,
        SegmentKind::Forearm,
        SegmentKind::Hand,
        SegmentKind::Thigh,
        SegmentKind::Shank,
        SegmentKind::Foot,
    ];

    /// The segments of a whole body, trunk as one piece (sided ones count twice).
    pub const WHOLE_BODY: [SegmentKind; 8] = [
        SegmentKind::Head,
        SegmentKind::Trunk,
        SegmentKind::UpperArm,
        SegmentKind::Forearm,
        SegmentKind::Hand,
        SegmentKind::Thigh,
        SegmentKind::Shank,
        SegmentKind::Foot,
    ];

    pub fn name(self) -> &'static str {
        match self {
            SegmentKind::Head => "head",
            SegmentKind::Trunk => "trunk",
            SegmentKind::UpperTrunk => "upper_trunk",
            SegmentKind::MiddleTrunk => "middle_trunk",
            SegmentKind::LowerTrunk => "lower_trunk",
            SegmentKind::Pelvis => "pelvis",
            SegmentKind::UpperArm => "upper_arm",
            SegmentKind::Forearm => "forearm",
            SegmentKind::Hand => "hand",
            SegmentKind::Thigh => "thigh",
            SegmentKind::Shank => "shank",
            SegmentKind::Foot => "foot",
        }
    }

    pub fn from_name(name: &str) -> Option<SegmentKind> {
        SegmentKind::ALL.into_iter().find(|s| s.name() == name)
    }

    /// Limbs exist once per side; head and trunk once.
    pub fn is_sided(self) -> bool {
        matches!(
            self,
            SegmentKind::UpperArm
                | SegmentKind::Forearm
                | SegmentKind::Hand
                | SegmentKind::Thigh
                | SegmentKind::Shank
                | SegmentKind::Foot
        )
    }

    /// Arm segments (placed by the `arms = "hanging"` approximation when unmarked).
    pub fn is_arm(self) -> bool {
        matches!(
            self,
            SegmentKind::UpperArm | SegmentKind::Forearm | SegmentKind::Hand
        )
    }

    /// The segment a trunk part belongs to.
    pub fn part_of(self) -> Option<SegmentKind> {
        match self {
            SegmentKind::UpperTrunk | SegmentKind::MiddleTrunk | SegmentKind::LowerTrunk => {
                Some(SegmentKind::Trunk)
            }
            _ => None,
        }
    }
}

impl fmt::Display for SegmentKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// One row of a table: a segment with one endpoint definition.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SegmentRow {
    pub segment: SegmentKind,
    /// Endpoint the CoM is measured from (a landmark stem for sided segments: `hip_jc`).
    pub origin: String,
    /// The other endpoint.
    pub other: String,
    /// Share of body mass, in (0, 1].
    pub mass_fraction: f64,
    /// CoM distance from `origin`, as a share of the origin-to-other length, in (0, 1]. For a
    /// row with [`SegmentRow::com_frame`], the share along the segment's long axis, |com_y|
    /// (shown by `gravline tables`; the CoM itself comes from the 3-D offset).
    pub com_fraction: f64,
    /// CoM as a 3-D offset `(x, y, z)` in the segment's ISB coordinate system (x anterior,
    /// y along the long axis, z right; origin at `origin`), as shares of the origin-to-other
    /// length, for a right-side segment (Dumas et al. 2007). `None` for rows on the line.
    pub com_frame: Option<[f64; 3]>,
    /// Used unless the configuration picks another row for this segment.
    pub is_default: bool,
    /// The publication's own endpoint codes (`SUPR-MIDH`).
    pub endpoints_code: String,
}

impl SegmentRow {
    /// `origin-other`, the key `[model] endpoints` uses to pick a row.
    pub fn key(&self) -> String {
        format!("{}-{}", self.origin, self.other)
    }
}

/// A validated anthropometric table.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SegmentTable {
    /// `de-leva-1996`, `dempster-winter`, or the file name of a user table.
    pub name: String,
    /// Population the rows describe (`male`, `female`, or what the file says).
    pub population: String,
    /// Short citation.
    pub source: String,
    pub rows: Vec<SegmentRow>,
    /// Sum of the default whole-body mass fractions (sided segments twice).
    pub mass_sum: f64,
    /// Non-fatal findings of validation.
    pub warnings: Vec<Warning>,
}

/// A table that cannot be used.
#[derive(Debug, thiserror::Error)]
pub enum TableError {
    /// `name` is quoted for the message ([`crate::textio::quote`]).
    #[error("unknown table {name}: built-in tables are de-leva-1996, dempster-winter and dumas-2007, or give the path of a table file")]
    Unknown { name: String },
    // `error`, not `source`: the message already holds it, and an error chain printed with
    // `{:#}` would repeat it.
    #[error("cannot read table file {path}: {error}")]
    Io { path: String, error: std::io::Error },
    #[error("table {table} line {line}: {message}")]
    Row {
        table: String,
        line: u64,
        message: String,
    },
    #[error("table {table}: {message}")]
    Table { table: String, message: String },
}

/// The built-in table names.
pub const BUILTIN: [&str; 3] = ["de-leva-1996", "dempster-winter", "dumas-2007"];

const DE_LEVA_MALE: &str = include_str!("../../anthropometry/de-leva-1996-male.csv");
const DE_LEVA_FEMALE: &str = include_str!("../../anthropometry/de-leva-1996-female.csv");
const DEMPSTER_WINTER: &str = include_str!("../../anthropometry/dempster-winter.csv");
const DUMAS_MALE: &str = include_str!("../../anthropometry/dumas-2007-male.csv");
const DUMAS_FEMALE: &str = include_str!("../../anthropometry/dumas-2007-female.csv");

/// Whole-body mass fractions may differ from 1 by this much before a warning (docs/DESIGN.md 5).
pub const MASS_SUM_TOLERANCE: f64 = 0.005;

impl SegmentTable {
    /// A built-in table for a population.
    ///
    /// ```
    /// use gravline::anthropometry::{SegmentTable, SegmentKind, Sex};
    /// let t = SegmentTable::builtin("de-leva-1996", Sex::Male).unwrap();
    /// let thigh = t.default_row(SegmentKind::Thigh).unwrap();
    /// assert_eq!((thigh.mass_fraction, thigh.com_fraction), (0.1416, 0.4095));
    /// ```
    pub fn builtin(name: &str, sex: Sex) -> Result<SegmentTable, TableError> {
        let (text, source) = match (name, sex) {
            ("de-leva-1996", Sex::Male) => {
                (DE_LEVA_MALE, "de Leva 1996, J Biomech 29:1223, Table 4")
            }
            ("de-leva-1996", Sex::Female) => {
                (DE_LEVA_FEMALE, "de Leva 1996, J Biomech 29:1223, Table 4")
            }
            ("dempster-winter", _) => (DEMPSTER_WINTER, "Dempster 1955 via Winter 2009, Table 4.1"),
            ("dumas-2007", Sex::Male) => (
                DUMAS_MALE,
                "Dumas, Cheze & Verriest 2007, J Biomech 40:543, Table 2",
            ),
            ("dumas-2007", Sex::Female) => (
                DUMAS_FEMALE,
                "Dumas, Cheze & Verriest 2007, J Biomech 40:543, Table 2",
            ),
            _ => {
                return Err(TableError::Unknown {
                    name: crate::textio::quote(name),
                })
            }
        };
        let population = if name == "dempster-winter" {
            "male cadavers (both sexes)"
        } else {
            sex.word()
        };
        SegmentTable::parse(text, name, population, source)
    }

    /// A built-in table by name, or a user table file when `name_or_path` is not a built-in name.
    pub fn load(name_or_path: &str, sex: Sex) -> Result<SegmentTable, TableError> {
        if name_or_path == "geometric" {
            return Err(TableError::Table {
                table: name_or_path.to_string(),
                message: "built from the subject's [geometry] measurements; run a trial with --subject S.toml and [model] table = \"geometric\"".to_string(),
            });
        }
        if BUILTIN.contains(&name_or_path) {
            return SegmentTable::builtin(name_or_path, sex);
        }
        let path = Path::new(name_or_path);
        if name_or_path.is_empty() || name_or_path.contains('\0') || !path.exists() {
            return Err(TableError::Unknown {
                name: crate::textio::quote(name_or_path),
            });
        }
        // A regular file of bounded size: a FIFO or a device such as /dev/zero is refused.
        let text = crate::textio::read_regular_text(path, crate::textio::MAX_TABLE_BYTES).map_err(
            |error| TableError::Io {
                path: path.display().to_string(),
                error,
            },
        )?;
        let label = path.display().to_string();
        SegmentTable::parse(&text, &label, "as given in the file", &label)
    }

    /// Parses and validates a table in the CSV format of `anthropometry/README.md`.
    pub fn parse(
        text: &str,
        name: &str,
        population: &str,
        source: &str,
    ) -> Result<SegmentTable, TableError> {
        let row_err = |line: u64, message: String| TableError::Row {
            table: name.to_string(),
            line,
            message,
        };
        let skipped = text
            .lines()
            .take_while(|l| l.trim_start().starts_with('#'))
            .count() as u64;
        let body: String = text
            .lines()
            .skip(skipped as usize)
            .collect::<Vec<_>>()
            .join("\n");
        let mut reader = csv::ReaderBuilder::new()
            .flexible(true)
            .from_reader(body.as_bytes());
        let headers = reader
            .headers()
            .map_err(|e| row_err(skipped + 1, format!("unreadable header: {}", one_line(&e))))?
            .clone();
        const COLUMNS: [&str; 8] = [
            "segment",
            "part_of",
            "origin",
            "other",
            "mass_fraction",
            "com_fraction",
            "default",
            "endpoints",
        ];
        let mut index = [0usize; 8];
        for (k, col) in COLUMNS.iter().enumerate() {
            index[k] = headers
                .iter()
                .position(|h| h.trim() == *col)
                .ok_or_else(|| {
                    row_err(
                        skipped + 1,
                        format!("missing column `{col}`; columns are {}", COLUMNS.join(", ")),
                    )
                })?;
        }
        // Optional 3-D CoM columns (tables in segment frames).
        let frame_index: Option<[usize; 3]> = {
            let find = |c: &str| headers.iter().position(|h| h.trim() == c);
            match (find("com_x"), find("com_y"), find("com_z")) {
                (Some(x), Some(y), Some(z)) => Some([x, y, z]),
                (None, None, None) => None,
                _ => {
                    return Err(row_err(
                        skipped + 1,
                        "give all three of com_x, com_y, com_z, or none".to_string(),
                    ))
                }
            }
        };
        let mut rows = Vec::new();
        for record in reader.records() {
            let record = record.map_err(|e| {
                let line = e.position().map_or(0, |p| p.line()) + skipped;
                row_err(line, format!("unreadable row: {}", one_line(&e)))
            })?;
            let line = record.position().map_or(0, |p| p.line()) + skipped;
            let field = |k: usize| record.get(index[k]).unwrap_or("").trim();
            if record.iter().all(|f| f.trim().is_empty()) {
                continue;
            }
            let segment = SegmentKind::from_name(field(0)).ok_or_else(|| {
                let names: Vec<_> = SegmentKind::ALL.iter().map(|s| s.name()).collect();
                row_err(
                    line,
                    format!(
                        "unknown segment {}; segments are {}",
                        q(field(0)),
                        names.join(", ")
                    ),
                )
            })?;
            let part_of = field(1);
            let expected_part = segment.part_of().map_or("", |p| p.name());
            if part_of != expected_part {
                return Err(row_err(
                    line,
                    format!(
                        "segment `{segment}` has part_of {}, expected `{expected_part}`",
                        q(part_of)
                    ),
                ));
            }
            let fraction = |k: usize| -> Result<f64, TableError> {
                let text = field(k);
                let value: f64 = text.parse().map_err(|_| {
                    row_err(
                        line,
                        format!("column `{}` is {}, not a number", COLUMNS[k], q(text)),
                    )
                })?;
                if !(value > 0.0 && value <= 1.0) {
                    return Err(row_err(
                        line,
                        format!(
                            "column `{}` is {value}; fractions must lie in (0, 1]",
                            COLUMNS[k]
                        ),
                    ));
                }
                Ok(value)
            };
            let mass_fraction = fraction(4)?;
            let com_frame = match frame_index {
                Some(idx)
                    if idx
                        .iter()
                        .any(|&k| !record.get(k).unwrap_or("").trim().is_empty()) =>
                {
                    let mut c = [0.0; 3];
                    for (axis, &k) in idx.iter().enumerate() {
                        let text = record.get(k).unwrap_or("").trim();
                        let name = ["com_x", "com_y", "com_z"][axis];
                        let value: f64 = text.parse().map_err(|_| {
                            row_err(line, format!("column `{name}` is `{text}`, not a number"))
                        })?;
                        if value.is_nan() || value.abs() > 1.5 {
                            return Err(row_err(
                                line,
                                format!("column `{name}` is {value}; give a share of the segment length (|value| <= 1.5)"),
                            ));
                        }
                        c[axis] = value;
                    }
                    Some(c)
                }
                _ => None,
            };
            let com_fraction = match com_frame {
                Some(c) if field(5).is_empty() => c[1].abs(),
                _ => fraction(5)?,
            };
            let is_default = match field(6).to_ascii_lowercase().as_str() {
                "yes" | "true" => true,
                "no" | "false" | "" => false,
                other => {
                    return Err(row_err(
                        line,
                        format!("column `default` is {}; use yes or no", q(other)),
                    ))
                }
            };
            for k in [2, 3] {
                check_endpoint(segment, field(k)).map_err(|m| row_err(line, m))?;
            }
            rows.push(SegmentRow {
                segment,
                origin: field(2).to_string(),
                other: field(3).to_string(),
                mass_fraction,
                com_fraction,
                com_frame,
                is_default,
                endpoints_code: field(7).to_string(),
            });
        }
        let table_err = |message: String| TableError::Table {
            table: name.to_string(),
            message,
        };
        if rows.is_empty() {
            return Err(table_err("no rows".to_string()));
        }
        // A segment with a single row uses it; otherwise exactly one row is the default.
        let mut by_segment: BTreeMap<SegmentKind, Vec<usize>> = BTreeMap::new();
        for (i, r) in rows.iter().enumerate() {
            by_segment.entry(r.segment).or_default().push(i);
        }
        for (segment, idx) in &by_segment {
            let defaults = idx.iter().filter(|&&i| rows[i].is_default).count();
            if idx.len() == 1 {
                rows[idx[0]].is_default = true;
            } else if defaults != 1 && segment.part_of().is_none() {
                return Err(table_err(format!(
                    "segment `{segment}` has {defaults} default rows; mark exactly one with default = yes"
                )));
            }
            let masses: Vec<f64> = idx.iter().map(|&i| rows[i].mass_fraction).collect();
            if masses.iter().any(|m| (m - masses[0]).abs() > 1e-12) {
                return Err(table_err(format!(
                    "segment `{segment}` rows disagree on mass_fraction; alternative endpoint rows share one mass"
                )));
            }
        }
        let mut mass_sum = 0.0;
        for segment in body_segments(by_segment.contains_key(&SegmentKind::Pelvis)) {
            let Some(idx) = by_segment.get(&segment) else {
                return Err(table_err(format!(
                    "no row for segment `{segment}`; a table covers the whole body"
                )));
            };
            let m = rows[idx[0]].mass_fraction;
            mass_sum += if segment.is_sided() { 2.0 * m } else { m };
        }
        let mut warnings = Vec::new();
        if (mass_sum - 1.0).abs() > MASS_SUM_TOLERANCE {
            warnings.push(Warning::MassFractionSum {
                table: name.to_string(),
                sum: mass_sum,
            });
        }
        Ok(SegmentTable {
            name: name.to_string(),
            population: population.to_string(),
            source: source.to_string(),
            rows,
            mass_sum,
            warnings,
        })
    }

    /// The segments of a whole body under this table: [`SegmentKind::WHOLE_BODY`], with a
    /// separate pelvis when the table has one (Dumas 2007).
    pub fn body_segments(&self) -> Vec<SegmentKind> {
        body_segments(self.rows.iter().any(|r| r.segment == SegmentKind::Pelvis))
    }

    /// Whether the table places CoMs in segment frames (3-D offsets).
    pub fn has_frames(&self) -> bool {
        self.rows.iter().any(|r| r.com_frame.is_some())
    }

    /// The default row of a segment.
    pub fn default_row(&self, segment: SegmentKind) -> Option<&SegmentRow> {
        self.rows
            .iter()
            .find(|r| r.segment == segment && r.is_default)
    }

    /// All rows of a segment (its alternative endpoint definitions).
    pub fn rows_of(&self, segment: SegmentKind) -> impl Iterator<Item = &SegmentRow> {
        self.rows.iter().filter(move |r| r.segment == segment)
    }

    /// The row of a segment with endpoints `origin-other` (as written by [`SegmentRow::key`]).
    pub fn row_by_key(&self, segment: SegmentKind, key: &str) -> Option<&SegmentRow> {
        self.rows_of(segment).find(|r| r.key() == key)
    }
}

/// Whole-body segments, with the pelvis after the trunk when the table has one.
fn body_segments(with_pelvis: bool) -> Vec<SegmentKind> {
    let mut kinds = SegmentKind::WHOLE_BODY.to_vec();
    if with_pelvis {
        kinds.insert(2, SegmentKind::Pelvis);
    }
    kinds
}

/// Checks that an endpoint names a point of the vocabulary in the form the segment needs
/// (a stem for sided segments, a single point for head and trunk).
fn check_endpoint(segment: SegmentKind, name: &str) -> Result<(), String> {
    let Some(info) = vocabulary::info(name) else {
        return Err(format!(
            "endpoint {} of segment `{segment}` is not in the landmark vocabulary (see `gravline landmarks`)",
            q(name)
        ));
    };
    match (segment.is_sided(), info.sidedness) {
        (true, Sidedness::Sided) | (false, Sidedness::Single) => Ok(()),
        (true, Sidedness::Single) => Err(format!(
            "endpoint `{name}` of sided segment `{segment}` must be a sided landmark stem such as `hip_jc`"
        )),
        (false, Sidedness::Sided) => Err(format!(
            "endpoint `{name}` of segment `{segment}` is sided; head and trunk use single points such as `mid_hip`"
        )),
    }
}

/// Input quoted for a message: short, on one line ([`crate::textio::quote`]).
fn q(text: &str) -> String {
    crate::textio::quote(text)
}

/// A parser's message on one short line.
fn one_line(e: &dyn fmt::Display) -> String {
    crate::textio::one_line(&e.to_string(), crate::textio::MESSAGE_CHARS)
}

/// Human-readable listing of a table for `gravline tables NAME`.
pub fn describe(table: &SegmentTable) -> String {
    let mut out = format!(
        "{} ({}): {}\nwhole-body mass fractions sum to {:.4}\n\n{:<13} {:<28} {:>8} {:>8} {:>8}  {}\n",
        table.name, table.population, table.source, table.mass_sum, "segment", "origin -> other", "mass", "com", "default", "endpoints"
    );
    for r in &table.rows {
        out.push_str(&format!(
            "{:<13} {:<28} {:>8.4} {:>8.4} {:>8}  {}\n",
            r.segment.name(),
            format!("{} -> {}", r.origin, r.other),
            r.mass_fraction,
            r.com_fraction,
            if r.is_default { "yes" } else { "" },
            r.endpoints_code
        ));
    }
    if table.has_frames() {
        out.push_str("\nCoM in the segment's ISB frame (x anterior, y long axis, z right), share of length, right side (left: z negated)\n");
        for r in table.rows.iter().filter(|r| r.com_frame.is_some()) {
            let c = r.com_frame.unwrap_or_default();
            out.push_str(&format!(
                "{:<13} x {:>7.3}  y {:>7.3}  z {:>7.3}\n",
                r.segment.name(),
                c[0],
                c[1],
                c[2]
            ));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;

    fn row<'a>(t: &'a SegmentTable, s: SegmentKind, key: &str) -> &'a SegmentRow {
        t.row_by_key(s, key)
            .unwrap_or_else(|| panic!("row {s} {key} missing"))
    }

    /// Mass-fraction sums of docs/reference/segment-tables.md 5 (derived from the published tables):
    /// de Leva male 100.00 %, female 99.99 %, Winter 1.000.
    #[test]
    fn mass_sums_match_the_published_tables() {
        let m = SegmentTable::builtin("de-leva-1996", Sex::Male).unwrap();
        let f = SegmentTable::builtin("de-leva-1996", Sex::Female).unwrap();
        let w = SegmentTable::builtin("dempster-winter", Sex::Male).unwrap();
        assert_abs_diff_eq!(m.mass_sum, 1.0000, epsilon = 1e-9);
        assert_abs_diff_eq!(f.mass_sum, 0.9999, epsilon = 1e-9);
        assert_abs_diff_eq!(w.mass_sum, 1.000, epsilon = 1e-9);
        assert!(m.warnings.is_empty() && f.warnings.is_empty() && w.warnings.is_empty());
    }

    /// de Leva 1996 Table 4 (docs/reference/segment-tables.md 2a, 2b): main and alternative rows.
    #[test]
    fn de_leva_rows_equal_table_4() {
        let m = SegmentTable::builtin("de-leva-1996", Sex::Male).unwrap();
        let f = SegmentTable::builtin("de-leva-1996", Sex::Female).unwrap();
        use SegmentKind::*;
        // (segment, key, male mass, male com, female mass, female com), all in percent.
        let expected = [
            (Head, "head_top-mid_gonion", 6.94, 59.76, 6.68, 58.94),
            (Head, "head_top-c7", 6.94, 50.02, 6.68, 48.41),
            (Trunk, "jugular-mid_hip", 43.46, 44.86, 42.57, 41.51),
            (Trunk, "c7-mid_hip", 43.46, 51.38, 42.57, 49.64),
            (Trunk, "mid_shoulder-mid_hip", 43.46, 43.10, 42.57, 37.82),
            (UpperTrunk, "jugular-xiphoid", 15.96, 29.99, 15.45, 20.77),
            (UpperTrunk, "c7-xiphoid", 15.96, 50.66, 15.45, 50.50),
            (MiddleTrunk, "xiphoid-omphalion", 16.33, 45.02, 14.65, 45.12),
            (LowerTrunk, "omphalion-mid_hip", 11.17, 61.15, 12.47, 49.20),
            (UpperArm, "shoulder_jc-elbow_jc", 2.71, 57.72, 2.55, 57.54),
            (Forearm, "elbow_jc-wrist_jc", 1.62, 45.74, 1.38, 45.59),
            (Forearm, "elbow_jc-wrist_rad", 1.62, 46.08, 1.38, 45.92),
            (Hand, "wrist_jc-hand", 0.61, 79.00, 0.56, 74.74),
            (Hand, "wrist_jc-finger_tip", 0.61, 36.24, 0.56, 34.27),
            (Hand, "wrist_rad-finger_tip", 0.61, 36.91, 0.56, 35.02),
            (Hand, "wrist_rad-hand", 0.61, 79.48, 0.56, 75.34),
            (Thigh, "hip_jc-knee_jc", 14.16, 40.95, 14.78, 36.12),
            (Shank, "knee_jc-ankle_lat", 4.33, 44.59, 4.81, 44.16),
            (Shank, "knee_jc-ankle_jc", 4.33, 43.95, 4.81, 43.52),
            (Shank, "knee_jc-ankle_med", 4.33, 45.24, 4.81, 44.81),
            (Foot, "heel-toe", 1.37, 44.15, 1.29, 40.14),
        ];
        for (s, key, mm, mc, fm, fc) in expected {
            assert_abs_diff_eq!(row(&m, s, key).mass_fraction, mm / 100.0, epsilon = 1e-12);
            assert_abs_diff_eq!(row(&m, s, key).com_fraction, mc / 100.0, epsilon = 1e-12);
            assert_abs_diff_eq!(row(&f, s, key).mass_fraction, fm / 100.0, epsilon = 1e-12);
            assert_abs_diff_eq!(row(&f, s, key).com_fraction, fc / 100.0, epsilon = 1e-12);
        }
        assert_eq!(m.rows.len(), expected.len());
    }

    /// The defaults docs/DESIGN.md 5 fixes for comparability across labs.
    #[test]
    fn de_leva_defaults_are_the_design_rows() {
        let m = SegmentTable::builtin("de-leva-1996", Sex::Male).unwrap();
        let keys: Vec<String> = SegmentKind::WHOLE_BODY
            .iter()
            .map(|&s| m.default_row(s).unwrap().key())
            .collect();
        assert_eq!(
            keys,
            [
                "head_top-c7",
                "jugular-mid_hip",
                "shoulder_jc-elbow_jc",
                "elbow_jc-wrist_jc",
                "wrist_jc-hand",
                "hip_jc-knee_jc",
                "knee_jc-ankle_lat",
                "heel-toe"
            ]
        );
    }

    /// Winter Table 4.1 (docs/reference/segment-tables.md 1) and its additive identities (section 5).
    #[test]
    fn dempster_winter_rows_equal_table_4_1() {
        let w = SegmentTable::builtin("dempster-winter", Sex::Female).unwrap();
        use SegmentKind::*;
        let expected = [
            (Hand, 0.006, 0.506),
            (Forearm, 0.016, 0.430),
            (UpperArm, 0.028, 0.436),
            (Foot, 0.0145, 0.50),
            (Shank, 0.0465, 0.433),
            (Thigh, 0.100, 0.433),
            (Trunk, 0.497, 0.50),
        ];
        for (s, mass, com) in expected {
            let r = w.default_row(s).unwrap();
            assert_abs_diff_eq!(r.mass_fraction, mass, epsilon = 1e-12);
            assert_abs_diff_eq!(r.com_fraction, com, epsilon = 1e-12);
        }
        assert_abs_diff_eq!(
            w.default_row(Head).unwrap().mass_fraction,
            0.081,
            epsilon = 1e-12
        );
        let m = |s| w.default_row(s).unwrap().mass_fraction;
        // total arm 0.050, total leg 0.161, HAT 0.678 (docs/reference/segment-tables.md 5).
        assert_abs_diff_eq!(m(UpperArm) + m(Forearm) + m(Hand), 0.050, epsilon = 1e-12);
        assert_abs_diff_eq!(m(Thigh) + m(Shank) + m(Foot), 0.161, epsilon = 1e-12);
        assert_abs_diff_eq!(m(Trunk) + m(Head) + 2.0 * 0.050, 0.678, epsilon = 1e-12);
    }

    /// de Leva's trunk mass equals the sum of its three parts (docs/reference/segment-tables.md 5).
    #[test]
    fn de_leva_trunk_parts_sum_to_the_trunk() {
        for sex in [Sex::Male, Sex::Female] {
            let t = SegmentTable::builtin("de-leva-1996", sex).unwrap();
            let m = |s| t.rows_of(s).next().unwrap().mass_fraction;
            use SegmentKind::*;
            assert_abs_diff_eq!(
                m(UpperTrunk) + m(MiddleTrunk) + m(LowerTrunk),
                m(Trunk),
                epsilon = 1e-12
            );
        }
    }

    #[test]
    fn bad_tables_are_rejected_with_the_line() {
        let header = "segment,part_of,origin,other,mass_fraction,com_fraction,default,endpoints\n";
        let bad_fraction = format!("# c\n{header}head,,head_top,c7,1.5,0.5,yes,X\n");
        let e = SegmentTable::parse(&bad_fraction, "t.csv", "p", "s")
            .unwrap_err()
            .to_string();
        assert!(e.contains("t.csv line 3") && e.contains("(0, 1]"), "{e}");
        let bad_endpoint = format!("{header}thigh,,hip_jc,kneecap,0.1,0.4,yes,X\n");
        let e = SegmentTable::parse(&bad_endpoint, "t.csv", "p", "s")
            .unwrap_err()
            .to_string();
        assert!(e.contains("kneecap") && e.contains("vocabulary"), "{e}");
        let missing = format!("{header}thigh,,hip_jc,knee_jc,0.1,0.4,yes,X\n");
        let e = SegmentTable::parse(&missing, "t.csv", "p", "s")
            .unwrap_err()
            .to_string();
        assert!(e.contains("no row for segment `head`"), "{e}");
    }

    #[test]
    fn an_unbalanced_user_table_warns() {
        let text = DEMPSTER_WINTER.replace(
            "trunk,,mid_hip,mid_shoulder,0.497",
            "trunk,,mid_hip,mid_shoulder,0.400",
        );
        let t = SegmentTable::parse(&text, "mine.csv", "p", "s").unwrap();
        assert_abs_diff_eq!(t.mass_sum, 0.903, epsilon = 1e-9);
        assert!(matches!(t.warnings[0], Warning::MassFractionSum { .. }));
    }
}
