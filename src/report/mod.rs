//! Stage 6, reporting (docs/DESIGN.md 8, 9): a [`TrialResult`](crate::pipeline::TrialResult) becomes
//! `frames.csv` (one row per frame, SI units in every column name), `summary.json` (figures,
//! warnings, provenance, cautions), `steps.csv`, the plots, and `report.html` ([`html`]).
//!
//! Writers take `impl Write`; [`write_atomic`] owns the files: it writes to a temporary name
//! in the same folder and renames, so an interrupted run never leaves a truncated file.

#![allow(clippy::result_large_err)] // `ComError` and `LandmarkError` (~150 bytes) pass through here

pub mod fixed;
pub mod frames;
pub mod html;
pub mod plots;
pub mod summary;

pub use frames::{frames_header, write_frames, write_frames_on, write_reps, write_steps};
pub use summary::{Summary, CAUTIONS};

use std::io::Write;
use std::path::Path;

/// Writes a file through a temporary name and a rename (same folder, so the rename is atomic on
/// one file system). On error the temporary file is removed and the target left untouched.
pub fn write_atomic(
    path: &Path,
    write: impl FnOnce(&mut dyn Write) -> std::io::Result<()>,
) -> std::io::Result<()> {
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    std::fs::create_dir_all(dir)?;
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let tmp = dir.join(format!(".{name}.{}.tmp", std::process::id()));
    let result = (|| {
        let file = std::fs::File::create(&tmp)?;
        let mut w = std::io::BufWriter::with_capacity(1 << 16, file);
        write(&mut w)?;
        let file = w.into_inner().map_err(|e| e.into_error())?;
        file.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result
}

/// Lowercase hex SHA-256 of bytes (input-file and configuration hashes in the provenance).
pub fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::Digest;
    let digest = sha2::Sha256::digest(bytes);
    let mut s = String::with_capacity(64);
    for b in digest.iter() {
        s.push_str(&format!("{b:02x}"));
    }
    s
}

/// Writes every output of a trial into `dir`, each file atomically; `summary.json` last, so its
/// presence means the trial's outputs are complete.
pub fn write_outputs(
    dir: &Path,
    result: &crate::pipeline::TrialResult,
    summary: &Summary,
    plots: &[plots::PlotFormat],
    report: bool,
) -> Result<(), crate::pipeline::Error> {
    write_outputs_then(dir, result, summary, plots, report, |_, _| Ok(()))
}

/// [`write_outputs`], running `before_summary` (more outputs of the trial, e.g. the batch's
/// dataset files) after every other file and before `summary.json`, which stays the last.
pub fn write_outputs_then(
    dir: &Path,
    result: &crate::pipeline::TrialResult,
    summary: &Summary,
    plots: &[plots::PlotFormat],
    report: bool,
    before_summary: impl FnOnce(
        &crate::pipeline::TrialResult,
        &Summary,
    ) -> Result<(), crate::pipeline::Error>,
) -> Result<(), crate::pipeline::Error> {
    let err = |path: &Path| {
        let path = path.display().to_string();
        move |source| crate::pipeline::Error::Write { path, source }
    };
    let frames = dir.join("frames.csv");
    let threads = crate::pipeline::trial_threads();
    write_atomic(&frames, |w| write_frames_on(result, w, threads)).map_err(err(&frames))?;
    if !result.support.steps.is_empty() {
        let steps = dir.join("steps.csv");
        write_atomic(&steps, |w| write_steps(result, w)).map_err(err(&steps))?;
    }
    if result.lift.as_ref().is_some_and(|l| !l.reps.is_empty()) {
        let reps = dir.join("reps.csv");
        write_atomic(&reps, |w| write_reps(result, w)).map_err(err(&reps))?;
    }
    let cycles = crate::cycles::of_result(result);
    if !cycles.is_empty() {
        let path = dir.join("cycles.csv");
        write_atomic(&path, |w| crate::cycles::write_cycles(&cycles, w)).map_err(err(&path))?;
    }
    for format in plots {
        plots::write_plots(dir, result, summary, *format)?;
    }
    remove_stale(dir, result, plots).map_err(|(path, source)| crate::pipeline::Error::Write {
        path: path.display().to_string(),
        source,
    })?;
    let page = dir.join("report.html");
    if report {
        html::write_trial_report(dir, result, summary).map_err(err(&page))?;
    } else if page.exists() {
        // A page of an earlier run would describe other numbers than this run's.
        std::fs::remove_file(&page).map_err(err(&page))?;
    }
    before_summary(result, summary)?;
    let json = dir.join("summary.json");
    // Numbers with the precision they carry (`fixed::SUMMARY_DIGITS` significant digits).
    let mut value = serde_json::to_value(summary).map_err(|e| crate::pipeline::Error::Write {
        path: json.display().to_string(),
        source: std::io::Error::other(e),
    })?;
    fixed::round_json(&mut value, fixed::SUMMARY_DIGITS);
    write_atomic(&json, |w| {
        serde_json::to_writer_pretty(&mut *w, &value).map_err(std::io::Error::other)?;
        w.write_all(b"\n")
    })
    .map_err(err(&json))?;
    Ok(())
}

/// Removes the outputs of an earlier run into `dir` that this run does not write (a `reps.csv`
/// or `lift.png` of a trial now without a lift, `steps.csv` of a trial now without steps, plots
/// of a format no longer asked for), so the folder holds only what belongs to its summary.
fn remove_stale(
    dir: &Path,
    result: &crate::pipeline::TrialResult,
    formats: &[plots::PlotFormat],
) -> Result<(), (std::path::PathBuf, std::io::Error)> {
    use plots::{Figure, PlotFormat};
    let mut written = vec!["frames.csv".to_string()];
    if !result.support.steps.is_empty() {
        written.push("steps.csv".into());
    }
    if result.lift.as_ref().is_some_and(|l| !l.reps.is_empty()) {
        written.push("reps.csv".into());
    }
    for format in formats {
        for figure in Figure::for_result(result) {
            written.push(format!("{}.{}", figure.stem(), format.extension()));
        }
    }
    let mut ours = vec!["steps.csv".to_string(), "reps.csv".to_string()];
    for format in [PlotFormat::Png, PlotFormat::Svg] {
        for figure in [Figure::Path, Figure::Series, Figure::Lift] {
            ours.push(format!("{}.{}", figure.stem(), format.extension()));
        }
    }
    for name in ours.iter().filter(|n| !written.contains(n)) {
        let path = dir.join(name);
        match std::fs::remove_file(&path) {
            Err(e) if e.kind() != std::io::ErrorKind::NotFound => return Err((path, e)),
            _ => {}
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// FIPS 180-2 test vector: SHA-256("abc").
    #[test]
    fn sha256_of_abc() {
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }

    #[test]
    fn a_failed_write_leaves_no_file() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("out.csv");
        let r = write_atomic(&path, |w| {
            w.write_all(b"partial")?;
            Err(std::io::Error::other("stop"))
        });
        assert!(r.is_err());
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
    }
}
