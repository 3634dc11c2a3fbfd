//! What `--resume` trusts: a trial's folder is reused only when its `summary.json` matches the
//! input and configuration hashes of this run (checked in the batch runner) **and** every other
//! output that summary implies is there and complete: `frames.csv` with a header and exactly
//! `frames` rows, `steps.csv` when steps were found, `reps.csv` when repetitions were found,
//! and the plots this run asks for. A killed batch also leaves hidden temporaries of the
//! batch-level files (`.summary.csv.<pid>.tmp`, ...), which [`clear_batch_temporaries`]
//! removes before the summary is written again. No units, no formulas.

use super::table::StoredSummary;
use crate::report::plots::PlotFormat;
use std::io::Read;
use std::path::Path;

/// Whether the outputs beside a trial's `summary.json` are complete for this run's request.
pub fn outputs_complete(dir: &Path, stored: &StoredSummary, plots: &[PlotFormat]) -> bool {
    let Some(frames) = stored.frames.and_then(|f| u64::try_from(f).ok()) else {
        return false;
    };
    // frames.csv: one header line, then one line per frame, ending with a line break.
    if line_count(&dir.join("frames.csv")) != Some(frames + 1) {
        return false;
    }
    let steps: i64 = stored.steps.iter().filter_map(|s| s.steps).sum();
    if steps > 0 && !non_empty(&dir.join("steps.csv")) {
        return false;
    }
    if let Some(lift) = &stored.lift {
        if !lift.reps.is_empty() && !non_empty(&dir.join("reps.csv")) {
            return false;
        }
    }
    let mut figures = vec!["path", "series"];
    if stored.lift.is_some() {
        figures.push("lift");
    }
    plots.iter().all(|format| {
        figures
            .iter()
            .all(|f| non_empty(&dir.join(format!("{f}.{}", format.extension()))))
    })
}

fn non_empty(path: &Path) -> bool {
    std::fs::symlink_metadata(path).is_ok_and(|m| m.is_file() && m.len() > 0)
}

/// Lines of a regular file that ends with a line break; `None` when it is missing, empty, not
/// a regular file or cut off in the middle of a line.
fn line_count(path: &Path) -> Option<u64> {
    let meta = std::fs::symlink_metadata(path).ok()?;
    if !meta.is_file() || meta.len() == 0 {
        return None;
    }
    let mut file = std::fs::File::open(path).ok()?;
    let mut buf = vec![0u8; 1 << 16];
    let (mut lines, mut last) = (0u64, 0u8);
    loop {
        let n = file.read(&mut buf).ok()?;
        if n == 0 {
            break;
        }
        lines += buf[..n].iter().filter(|&&b| b == b'\n').count() as u64;
        last = buf[n - 1];
    }
    (last == b'\n').then_some(lines)
}

/// Removes the temporaries a killed run left of the batch-level files `names` in `out_dir`
/// (`.<name>.<pid>.tmp`, the names of [`crate::report::write_atomic`]), except those of a
/// process that is still running (a shard job sharing the folder, seen through `/proc` where
/// there is one).
pub fn clear_batch_temporaries(out_dir: &Path, names: &[String]) {
    let Ok(entries) = std::fs::read_dir(out_dir) else {
        return;
    };
    let own = std::process::id().to_string();
    for entry in entries.flatten() {
        let file = entry.file_name().to_string_lossy().into_owned();
        let Some(pid) = names.iter().find_map(|n| {
            file.strip_prefix(&format!(".{n}."))
                .and_then(|rest| rest.strip_suffix(".tmp"))
        }) else {
            continue;
        };
        if pid.is_empty() || !pid.bytes().all(|b| b.is_ascii_digit()) {
            continue;
        }
        let running = pid != own && Path::new("/proc").join(pid).exists();
        if !running {
            let _ = std::fs::remove_file(entry.path());
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lines_are_counted_only_in_whole_files() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("frames.csv");
        std::fs::write(&p, "h\n1\n2\n").unwrap();
        assert_eq!(line_count(&p), Some(3));
        std::fs::write(&p, "h\n1\n2").unwrap();
        assert_eq!(line_count(&p), None, "cut off in a line");
        std::fs::write(&p, "").unwrap();
        assert_eq!(line_count(&p), None);
        assert_eq!(line_count(&dir.path().join("none.csv")), None);
    }

    #[test]
    fn stale_batch_temporaries_go_and_others_stay() {
        let dir = tempfile::tempdir().unwrap();
        // A pid that no process has (above the Linux pid limit).
        for name in [
            ".summary.csv.99999999.tmp",
            ".groups.csv.99999999.tmp",
            "summary.csv",
            ".summary.csv.x.tmp",
            ".other.csv.99999999.tmp",
        ] {
            std::fs::write(dir.path().join(name), "x").unwrap();
        }
        let names: Vec<String> = super::super::summary_names(None);
        clear_batch_temporaries(dir.path(), &names);
        let mut left: Vec<String> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        left.sort();
        assert_eq!(
            left,
            [
                ".other.csv.99999999.tmp",
                ".summary.csv.x.tmp",
                "summary.csv"
            ]
        );
    }
}
