//! Build details for `gravline --version`: the commit (`git rev-parse`, or `unknown` when git
//! or the repository is absent, as in a source tarball) and the build date (UTC, from
//! `SOURCE_DATE_EPOCH` when set, for reproducible builds, else the clock).

use std::path::PathBuf;
use std::process::Command;

fn git(args: &[&str]) -> Option<String> {
    let out = Command::new("git").args(args).output().ok()?;
    if !out.status.success() {
        return None;
    }
    let text = String::from_utf8(out.stdout).ok()?.trim().to_string();
    (!text.is_empty()).then_some(text)
}

/// Civil date (year, month, day) of a count of days since 1970-01-01 (H. Hinnant's
/// `civil_from_days` algorithm).
fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    (yoe + era * 400 + i64::from(m <= 2), m, d)
}

fn main() {
    let commit = git(&["rev-parse", "--short=12", "HEAD"]).unwrap_or_else(|| "unknown".into());
    let seconds = std::env::var("SOURCE_DATE_EPOCH")
        .ok()
        .and_then(|s| s.trim().parse::<i64>().ok())
        .unwrap_or_else(|| {
            std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .map_or(0, |d| d.as_secs() as i64)
        });
    let (y, m, d) = civil_from_days(seconds.div_euclid(86_400));
    println!("cargo:rustc-env=GRAVLINE_COMMIT={commit}");
    println!("cargo:rustc-env=GRAVLINE_BUILD_DATE={y:04}-{m:02}-{d:02}");
    // Run again when the commit changes (HEAD, the branch's ref, packed refs), not on every
    // edit of the sources.
    println!("cargo:rerun-if-changed=build.rs");
    println!("cargo:rerun-if-env-changed=SOURCE_DATE_EPOCH");
    if let Some(dir) = git(&["rev-parse", "--git-dir"]).map(PathBuf::from) {
        println!("cargo:rerun-if-changed={}", dir.join("HEAD").display());
    }
    if let Some(common) = git(&["rev-parse", "--git-common-dir"]).map(PathBuf::from) {
        if let Some(branch) = git(&["symbolic-ref", "-q", "HEAD"]) {
            let r = common.join(&branch);
            if r.exists() {
                println!("cargo:rerun-if-changed={}", r.display());
            }
        }
        let packed = common.join("packed-refs");
        if packed.exists() {
            println!("cargo:rerun-if-changed={}", packed.display());
        }
    }
}
