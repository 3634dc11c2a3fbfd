//! `gravline convert`: a C3D file's points as a wide trial CSV (docs/DESIGN.md 3.1) and its force
//! plates as a plates CSV.
//!
//! - `<stem>.csv`: `#` comment lines (source file, rate, units, first frame number), then
//!   `time,<label>_x,<label>_y,<label>_z,...` for every point in file order; time in seconds,
//!   coordinates in millimetres, empty cells for invalid samples. Numbers are written in the
//!   shortest decimal form that reads back to the same `f64` (so float storage round-trips to
//!   the bit and the trial read from the CSV equals the trial read from the C3D).
//! - `<stem>.plates.csv` (files with force plates): `time` at the analog rate (s), then per
//!   plate `plate<k>_force_{x,y,z}_n` (ground reaction force on the body, N),
//!   `plate<k>_moment_{x,y,z}_nm` (its moment about the plate's transducer origin, N m) and
//!   `plate<k>_cop_{x,y,z}_mm` (center of pressure, mm; empty below the force threshold), all
//!   in the lab frame.

use super::C3d;
use std::fmt::Write as _;
use std::io::{self, Write};

/// A CSV cell holding `text`, quoted when it needs to be.
fn cell(text: &str) -> String {
    if text.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", text.replace('"', "\"\""))
    } else {
        text.to_string()
    }
}

fn comments(c3d: &C3d, what: &str, w: &mut impl Write) -> io::Result<()> {
    writeln!(
        w,
        "# {what} of {}, converted by gravline {}",
        c3d.file,
        env!("CARGO_PKG_VERSION")
    )?;
    writeln!(
        w,
        "# c3d: processor {}, {} storage, POINT:RATE {} Hz, POINT:UNITS `{}` (written in mm), analog rate {} Hz",
        c3d.processor.name(),
        if c3d.float_storage { "float" } else { "integer" },
        c3d.rate_hz,
        c3d.units,
        c3d.analog.rate_hz
    )?;
    writeln!(
        w,
        "# frames {} (first frame number {}; time 0 s at the first stored frame)",
        c3d.n_frames(),
        c3d.first_frame
    )
}

/// Writes the points as a wide trial CSV (module doc).
pub fn write_points_csv(c3d: &C3d, mut w: impl Write) -> io::Result<()> {
    comments(c3d, "points", &mut w)?;
    let mut line = String::from("time");
    for l in &c3d.labels {
        for axis in ["x", "y", "z"] {
            line.push(',');
            line.push_str(&cell(&format!("{l}_{axis}")));
        }
    }
    line.push('\n');
    w.write_all(line.as_bytes())?;
    for (f, t) in c3d.times_s().iter().enumerate() {
        line.clear();
        let _ = write!(line, "{t}");
        for track in &c3d.points_mm {
            let p = track[f];
            if p[0].is_nan() {
                line.push_str(",,,");
            } else {
                let _ = write!(line, ",{},{},{}", p[0], p[1], p[2]);
            }
        }
        line.push('\n');
        w.write_all(line.as_bytes())?;
    }
    Ok(())
}

/// Writes the force plates as a plates CSV (module doc).
pub fn write_plates_csv(c3d: &C3d, mut w: impl Write) -> io::Result<()> {
    comments(c3d, "force plates", &mut w)?;
    writeln!(
        w,
        "# lab frame; force: ground reaction on the body (N); moment: about the plate's transducer origin (N m); cop in mm"
    )?;
    let mut line = String::from("time");
    for p in &c3d.plates.plates {
        for q in ["force", "moment", "cop"] {
            let unit = match q {
                "force" => "n",
                "moment" => "nm",
                _ => "mm",
            };
            for axis in ["x", "y", "z"] {
                let _ = write!(line, ",plate{}_{q}_{axis}_{unit}", p.number);
            }
        }
    }
    line.push('\n');
    w.write_all(line.as_bytes())?;
    let n = c3d.plates.plates.first().map_or(0, |p| p.samples.len());
    for s in 0..n {
        line.clear();
        let _ = write!(
            line,
            "{}",
            c3d.plates.first_sample_s + s as f64 / c3d.plates.rate_hz
        );
        for p in &c3d.plates.plates {
            let x = &p.samples[s];
            let _ = write!(
                line,
                ",{},{},{},{},{},{}",
                x.force_n[0],
                x.force_n[1],
                x.force_n[2],
                x.moment_nm[0],
                x.moment_nm[1],
                x.moment_nm[2]
            );
            match x.cop_m {
                Some(c) => {
                    let _ = write!(line, ",{},{},{}", c[0] * 1e3, c[1] * 1e3, c[2] * 1e3);
                }
                None => line.push_str(",,,"),
            }
        }
        line.push('\n');
        w.write_all(line.as_bytes())?;
    }
    Ok(())
}
