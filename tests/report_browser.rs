//! The demo's pages in a real browser: headless Chromium (Debian's `chromium` package) loads the
//! trial and batch pages from `file://` URLs, logs no console error and makes no network
//! request, prints each to PDF, and saves screenshots for a person to look at.
//!
//! Needs Chromium, so it is ignored in the plain `cargo test`; `.ci/run` installs Chromium and
//! runs it with `cargo test --test report_browser -- --ignored`. The PDFs and screenshots are
//! left in `target/report-browser/` (page counts are printed).

use assert_cmd::Command;
use std::path::{Path, PathBuf};
use std::process::Output;

/// Chromium's binary: `$CHROMIUM` or Debian's `/usr/bin/chromium`.
fn chromium() -> PathBuf {
    std::env::var_os("CHROMIUM")
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from("/usr/bin/chromium"))
}

/// Runs headless Chromium on a page with the flags that keep it off the network, logging the
/// console and every request it makes.
fn run_chromium(page: &Path, profile: &Path, netlog: &Path, extra: &[String]) -> Output {
    let url = format!("file://{}", page.display());
    std::process::Command::new(chromium())
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--enable-logging=stderr",
            "--v=0",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .arg(format!("--log-net-log={}", netlog.display()))
        .args(extra)
        .arg(url)
        .output()
        .expect("Chromium did not start: install Debian's chromium or set CHROMIUM")
}

/// Pages of a PDF: its `/Type /Page` objects (not `/Pages`).
fn pdf_pages(pdf: &[u8]) -> usize {
    let text = String::from_utf8_lossy(pdf);
    text.matches("/Type /Page").count() - text.matches("/Type /Pages").count()
        + text.matches("/Type/Page").count()
        - text.matches("/Type/Pages").count()
}

#[test]
#[ignore = "needs headless Chromium (Debian's chromium); .ci/run installs it and runs this test"]
fn the_demo_pages_load_print_and_stay_offline_in_chromium() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("target/report-browser");
    let _ = std::fs::remove_dir_all(&root);
    std::fs::create_dir_all(&root).unwrap();
    let demo = root.join("demo");
    Command::cargo_bin("gravline")
        .unwrap()
        .args(["demo", "--out", demo.to_str().unwrap(), "-q"])
        .assert()
        .success();
    for (name, page) in [
        ("batch", demo.join("report.html")),
        ("walk", demo.join("walk/report.html")),
        ("squat", demo.join("squat/report.html")),
        ("jump", demo.join("jump/report.html")),
        ("stand", demo.join("stand/report.html")),
    ] {
        assert!(page.is_file(), "{} missing", page.display());
        let netlog = root.join(format!("{name}.netlog.json"));
        let pdf = root.join(format!("{name}.pdf"));
        let shot = root.join(format!("{name}.png"));
        let out = run_chromium(
            &page,
            &root.join(format!("profile-{name}-pdf")),
            &netlog,
            &[
                format!("--print-to-pdf={}", pdf.display()),
                "--no-pdf-header-footer".to_string(),
            ],
        );
        let log = String::from_utf8_lossy(&out.stderr);
        for line in log.lines() {
            let lower = line.to_lowercase();
            assert!(
                !(line.contains("CONSOLE")
                    && (lower.contains("error") || lower.contains("uncaught"))),
                "{name}: console error: {line}"
            );
        }
        let pdf_bytes = std::fs::read(&pdf).unwrap_or_else(|_| panic!("{name}: no PDF; {log}"));
        let pages = pdf_pages(&pdf_bytes);
        assert!(pages >= 1, "{name}: empty PDF");
        println!(
            "{name}: {} kB page, PDF {pages} pages (US Letter)",
            std::fs::metadata(&page).unwrap().len() / 1024
        );
        // No request left the file: every http(s)/ws URL in the network log belongs to
        // Chromium's own services (time, update and account checks that the browser makes by
        // itself even with background networking off), never to the page.
        let net = std::fs::read_to_string(&netlog).unwrap_or_default();
        for url in net.split("\"url\":\"").skip(1) {
            let url = url.split('"').next().unwrap_or_default();
            let host = url
                .split("://")
                .nth(1)
                .and_then(|rest| rest.split(['/', '?', ':']).next())
                .unwrap_or_default();
            let browser_service = ["google.com", "googleapis.com", "gvt1.com", "gstatic.com"]
                .iter()
                .any(|d| host == *d || host.ends_with(&format!(".{d}")));
            assert!(
                url.starts_with("file://") || url.starts_with("data:") || browser_service,
                "{name}: the page made a request: {url}"
            );
        }
        let out = run_chromium(
            &page,
            &root.join(format!("profile-{name}-png")),
            &root.join(format!("{name}.png.netlog.json")),
            &[
                format!("--screenshot={}", shot.display()),
                "--window-size=1100,2400".to_string(),
            ],
        );
        assert!(
            shot.is_file(),
            "{name}: no screenshot; {}",
            String::from_utf8_lossy(&out.stderr)
        );
    }
}
