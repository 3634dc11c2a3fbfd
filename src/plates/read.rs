//! Reading a plate recording from CSV (our layout), and the plate table of the configuration.
//!
//! Layout: `#` comment lines, then a header, then one row per analog sample.
//! - A time column `time_s` (or `time`), seconds, strictly increasing at a constant rate
//!   (within 1 %, as for trial files).
//! - Per plate `<name>`: `<name>_fx_n, <name>_fy_n, <name>_fz_n`, the ground reaction force on
//!   the body in the lab axes of the trial (the up axis of the configuration's `[input]`);
//!   then either the center of pressure `<name>_cop_x_<u>, <name>_cop_y_<u>, <name>_cop_z_<u>`
//!   with `<u>` = `m` or `mm` (empty cells where the plate is unloaded), or the moment on the
//!   body about the plate's surface center (mean of its corners, needs a `[[plate]]` table)
//!   `<name>_mx_nm, <name>_my_nm, <name>_mz_nm`. An optional `<name>_tz_nm` gives the free
//!   moment about the up axis with a CoP.
//!
//! The shared walking recording of Duarte (2021, doi:10.5281/zenodo.4599319) is in this
//! layout (`plate1_fx_n ... plate7_cop_z_mm`), read in place by the tests.

use super::{PlateError, PlateRecording, PlateSamples, ZeroSource};
use crate::trial::UpAxis;

/// A declared plate: `[[plate]] name = "...", corners_m = [[x, y, z], ...]` (lab frame,
/// metres, four corners in order around the plate).
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct PlateSetup {
    pub name: String,
    pub corners_m: [[f64; 3]; 4],
}

/// Reads a plate CSV from text; `file` names it in errors; `declared` gives the corners.
pub fn read_plates_csv(
    text: &str,
    file: &str,
    declared: &[PlateSetup],
    up: UpAxis,
) -> Result<PlateRecording, PlateError> {
    let at = |line: usize, message: String| PlateError::Input {
        file: file.to_string(),
        line,
        message,
    };
    let mut lines = text
        .lines()
        .enumerate()
        .map(|(i, l)| (i + 1, l.trim_end_matches('\r')))
        .filter(|(_, l)| !l.trim_start().starts_with('#') && !l.trim().is_empty());
    let Some((header_line, header)) = lines.next() else {
        return Err(at(
            1,
            "no header line; the first line must name the columns (time_s, <plate>_fx_n, ...)"
                .into(),
        ));
    };
    let names: Vec<String> = header
        .split(',')
        .map(|s| s.trim().to_ascii_lowercase())
        .collect();
    let time_col = names
        .iter()
        .position(|n| n == "time_s" || n == "time")
        .ok_or_else(|| {
            at(
                header_line,
                "no `time_s` column; add the sample time in seconds".into(),
            )
        })?;
    // Plates in the order of their `_fx_n` columns.
    let mut plates: Vec<Columns> = Vec::new();
    for (i, n) in names.iter().enumerate() {
        if let Some(stem) = n.strip_suffix("_fx_n") {
            let find = |suffix: &str| names.iter().position(|m| *m == format!("{stem}{suffix}"));
            let need = |suffix: &str| {
                find(suffix).ok_or_else(|| {
                    at(
                        header_line,
                        format!("plate `{stem}`: no column `{stem}{suffix}`"),
                    )
                })
            };
            let force = [i, need("_fy_n")?, need("_fz_n")?];
            let cop = if let (Some(x), Some(y), Some(z)) =
                (find("_cop_x_m"), find("_cop_y_m"), find("_cop_z_m"))
            {
                Some(([x, y, z], 1.0))
            } else if let (Some(x), Some(y), Some(z)) =
                (find("_cop_x_mm"), find("_cop_y_mm"), find("_cop_z_mm"))
            {
                Some(([x, y, z], 0.001))
            } else {
                None
            };
            let moment = match (find("_mx_nm"), find("_my_nm"), find("_mz_nm")) {
                (Some(x), Some(y), Some(z)) => Some([x, y, z]),
                _ => None,
            };
            let setup = declared.iter().find(|p| p.name.eq_ignore_ascii_case(stem));
            if cop.is_none() && moment.is_none() {
                return Err(at(header_line, format!(
                    "plate `{stem}`: neither CoP columns (`{stem}_cop_x_mm` ...) nor moment columns (`{stem}_mx_nm` ...)"
                )));
            }
            if cop.is_none() && setup.is_none() {
                return Err(at(header_line, format!(
                    "plate `{stem}` gives moments but no `[[plate]]` table with name = \"{stem}\" declares its corners; add one"
                )));
            }
            plates.push(Columns {
                name: stem.to_string(),
                force,
                cop,
                moment,
                free: find("_tz_nm"),
                corners: setup.map(|s| s.corners_m),
            });
        }
    }
    if plates.is_empty() {
        return Err(at(
            header_line,
            "no plate columns; name them `<plate>_fx_n, <plate>_fy_n, <plate>_fz_n, ...`".into(),
        ));
    }
    for d in declared {
        if !plates.iter().any(|p| p.name.eq_ignore_ascii_case(&d.name)) {
            return Err(at(
                header_line,
                format!(
                    "`[[plate]]` name = \"{}\" has no columns in this file; plates here: {}",
                    d.name,
                    plates
                        .iter()
                        .map(|p| p.name.as_str())
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
            ));
        }
    }
    let mut times: Vec<f64> = Vec::new();
    let mut out: Vec<PlateSamples> = plates
        .iter()
        .map(|c| PlateSamples {
            name: c.name.clone(),
            corners_m: c.corners,
            force_n: Vec::new(),
            cop_m: Vec::new(),
            free_moment_nm: Vec::new(),
            offset_n: [0.0; 3],
        })
        .collect();
    let mut cells: Vec<&str> = Vec::with_capacity(names.len());
    for (line, text) in lines {
        cells.clear();
        cells.extend(text.split(',').map(str::trim));
        if cells.len() != names.len() {
            return Err(at(
                line,
                format!("{} cells, the header has {}", cells.len(), names.len()),
            ));
        }
        let num = |col: usize| -> Result<Option<f64>, PlateError> {
            let c = cells[col];
            if c.is_empty() || c.eq_ignore_ascii_case("nan") {
                return Ok(None);
            }
            c.parse::<f64>().map(Some).map_err(|_| {
                at(
                    line,
                    format!("column `{}` is `{c}`, not a number", names[col]),
                )
            })
        };
        let t = num(time_col)?.ok_or_else(|| at(line, "empty time cell".into()))?;
        if let Some(&last) = times.last() {
            if t <= last {
                return Err(at(
                    line,
                    format!("time {t} s does not increase (previous {last} s)"),
                ));
            }
        }
        times.push(t);
        for (c, p) in plates.iter().zip(out.iter_mut()) {
            let mut f = [0.0; 3];
            for k in 0..3 {
                f[k] = num(c.force[k])?.ok_or_else(|| {
                    at(
                        line,
                        format!(
                            "column `{}` is empty; a force needs a value (0 when unloaded)",
                            names[c.force[k]]
                        ),
                    )
                })?;
            }
            let free = match c.free {
                Some(col) => num(col)?.unwrap_or(0.0),
                None => 0.0,
            };
            let (cop, free) = if let Some((cols, scale)) = c.cop {
                let v = [num(cols[0])?, num(cols[1])?, num(cols[2])?];
                match v {
                    [Some(x), Some(y), Some(z)] => (Some([x * scale, y * scale, z * scale]), free),
                    _ => (None, free),
                }
            } else {
                let cols = c.moment.unwrap_or_default();
                let m = [
                    num(cols[0])?.unwrap_or(0.0),
                    num(cols[1])?.unwrap_or(0.0),
                    num(cols[2])?.unwrap_or(0.0),
                ];
                let center = super::geometry::corner_center(&c.corners.unwrap_or_default());
                match super::geometry::cop_from_moment(f, m, center, up) {
                    Some((cop, tz)) => (Some(cop), tz),
                    None => (None, 0.0),
                }
            };
            p.force_n.push(f);
            p.cop_m.push(cop);
            p.free_moment_nm.push(free);
        }
    }
    if times.len() < 2 {
        return Err(at(header_line, "fewer than two samples".into()));
    }
    let dt0 = times[1] - times[0];
    for (i, w) in times.windows(2).enumerate() {
        let dt = w[1] - w[0];
        if (dt - dt0).abs() > 0.01 * dt0 {
            return Err(at(header_line + 2 + i, format!(
                "sample interval {dt:.6} s differs from the first ({dt0:.6} s) by more than 1 %; plates must be sampled at a constant rate"
            )));
        }
    }
    let rate_hz = (times.len() - 1) as f64 / (times[times.len() - 1] - times[0]);
    Ok(PlateRecording {
        rate_hz,
        first_time_s: times[0],
        plates: out,
        zero: ZeroSource::Unloaded,
    })
}

/// Reads a plate CSV file.
pub fn read_plates_file(
    path: &std::path::Path,
    declared: &[PlateSetup],
    up: UpAxis,
) -> Result<PlateRecording, PlateError> {
    let text = std::fs::read_to_string(path).map_err(|e| PlateError::Input {
        file: path.display().to_string(),
        line: 0,
        message: format!("cannot read: {e}"),
    })?;
    read_plates_csv(&text, &path.display().to_string(), declared, up)
}

struct Columns {
    name: String,
    force: [usize; 3],
    cop: Option<([usize; 3], f64)>,
    moment: Option<[usize; 3]>,
    free: Option<usize>,
    corners: Option<[[f64; 3]; 4]>,
}

/// Validates `[[plate]]` tables: four finite corners, a name of letters, digits and `_`, no
/// name twice. The error text is the message (the caller adds the file).
pub fn plate_setups(raw: &[crate::config::RawPlate]) -> Result<Vec<PlateSetup>, String> {
    let mut out: Vec<PlateSetup> = Vec::new();
    for p in raw {
        if p.name.is_empty()
            || !p
                .name
                .chars()
                .all(|c| c.is_ascii_alphanumeric() || c == '_')
        {
            return Err(format!(
                "[[plate]] name = `{}`; use letters, digits and _",
                p.name
            ));
        }
        if out.iter().any(|q| q.name.eq_ignore_ascii_case(&p.name)) {
            return Err(format!("[[plate]] `{}` is declared twice", p.name));
        }
        let corners: [[f64; 3]; 4] = p.corners_m.as_slice().try_into().map_err(|_| {
            format!(
                "[[plate]] `{}`: corners_m has {} points; give four [x, y, z] in metres, in order around the plate",
                p.name,
                p.corners_m.len()
            )
        })?;
        if corners.iter().flatten().any(|v| !v.is_finite()) {
            return Err(format!(
                "[[plate]] `{}`: a corner is not a finite number",
                p.name
            ));
        }
        out.push(PlateSetup {
            name: p.name.clone(),
            corners_m: corners,
        });
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    const Y_UP: UpAxis = UpAxis {
        index: 1,
        positive: true,
    };

    #[test]
    fn reads_cop_in_millimetres_and_empty_unloaded_cells() {
        let text = "# c\ntime_s,p1_fx_n,p1_fy_n,p1_fz_n,p1_cop_x_mm,p1_cop_y_mm,p1_cop_z_mm\n0.0,0,0,0,,,\n0.01,1,700,2,100,0,-200\n";
        let r = read_plates_csv(text, "p.csv", &[], Y_UP).unwrap();
        assert_eq!(r.plates.len(), 1);
        assert!((r.rate_hz - 100.0).abs() < 1e-9);
        assert_eq!(r.plates[0].cop_m[0], None);
        let c = r.plates[0].cop_m[1].unwrap();
        assert!((c[0] - 0.1).abs() < 1e-12 && (c[2] + 0.2).abs() < 1e-12);
    }

    #[test]
    fn bad_cell_names_line_and_column() {
        let text =
            "time_s,p1_fx_n,p1_fy_n,p1_fz_n,p1_cop_x_m,p1_cop_y_m,p1_cop_z_m\n0.0,0,x1,0,,,\n";
        let e = read_plates_csv(text, "p.csv", &[], Y_UP)
            .unwrap_err()
            .to_string();
        assert!(e.contains("p.csv line 2") && e.contains("p1_fy_n"), "{e}");
    }

    #[test]
    fn plate_tables_need_four_corners_and_com_one_of_two_words() {
        let parse = |t: &str| {
            crate::config::Config::from_raw(
                &crate::config::RawConfig::from_toml(t, "c.toml").unwrap(),
                "c.toml",
            )
        };
        let ok = parse("[support]\ncom = \"fused\"\n[[plate]]\nname = \"p1\"\ncorners_m = [[0.6, 0.2, 0.0], [0.0, 0.2, 0.0], [0.0, -0.2, 0.0], [0.6, -0.2, 0.0]]\n").unwrap();
        assert_eq!(ok.plates.len(), 1);
        assert_eq!(ok.support.com, crate::config::ComSource::Fused);
        let e = parse("[[plate]]\nname = \"p1\"\ncorners_m = [[0.0, 0.0, 0.0]]\n")
            .unwrap_err()
            .to_string();
        assert!(e.contains("c.toml") && e.contains("four"), "{e}");
        let e = parse("[support]\ncom = \"plates\"\n")
            .unwrap_err()
            .to_string();
        assert!(e.contains("segmental"), "{e}");
    }

    #[test]
    fn moments_without_corners_are_an_error() {
        let text = "time_s,a_fx_n,a_fy_n,a_fz_n,a_mx_nm,a_my_nm,a_mz_nm\n0,0,0,0,0,0,0\n";
        let e = read_plates_csv(text, "p.csv", &[], Y_UP)
            .unwrap_err()
            .to_string();
        assert!(e.contains("[[plate]]"), "{e}");
    }
}
