//! `report.html`, per trial and per batch, checked without a browser: the page parses as HTML5
//! without a parse error (html5ever, through the `scraper` crate: the HTML5 parsing algorithm of
//! the WHATWG specification), names no URL (nothing to fetch), gives every figure a title, holds
//! every figure the trial draws, and escapes a hostile trial name.
//!
//! The browser checks (console, requests, print to PDF, screenshots) are in
//! `tests/report_browser.rs`, run by `.ci/run` after it installs Chromium.

use assert_cmd::Command;
use scraper::{Html, Selector};
use std::path::{Path, PathBuf};

fn data(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("examples/data")
        .join(name)
}

fn gravline() -> Command {
    Command::cargo_bin("gravline").unwrap()
}

/// Parses a page and checks the rules every page keeps; returns the document.
fn checked_page(path: &Path) -> Html {
    let text = std::fs::read_to_string(path).unwrap();
    let doc = Html::parse_document(&text);
    assert!(
        doc.errors.is_empty(),
        "{}: HTML5 parse errors: {:?}",
        path.display(),
        doc.errors
    );
    // Self-contained: no URL of any scheme, no protocol-relative reference, no external file.
    for needle in [
        "http:",
        "https:",
        "src=\"//",
        "href=\"//",
        "<link",
        "<img",
        "@import",
    ] {
        assert!(
            !text.contains(needle),
            "{}: holds `{needle}`",
            path.display()
        );
    }
    // Every SVG opens with its title, and the title says something.
    let svgs = Selector::parse("svg").unwrap();
    for svg in doc.select(&svgs) {
        let first = svg
            .children()
            .filter_map(scraper::ElementRef::wrap)
            .next()
            .map(|e| e.value().name().to_string());
        assert_eq!(first.as_deref(), Some("title"), "{}", path.display());
        let title: String = svg
            .children()
            .filter_map(scraper::ElementRef::wrap)
            .next()
            .unwrap()
            .text()
            .collect();
        assert!(
            title.len() > 10,
            "{}: short svg title `{title}`",
            path.display()
        );
    }
    // Headings in order: one h1, and no level skipped.
    let headings = Selector::parse("h1, h2, h3, h4").unwrap();
    let levels: Vec<u8> = doc
        .select(&headings)
        .map(|h| h.value().name()[1..].parse().unwrap())
        .collect();
    assert_eq!(levels.iter().filter(|l| **l == 1).count(), 1);
    for pair in levels.windows(2) {
        assert!(
            pair[1] <= pair[0] + 1,
            "{}: heading levels {levels:?}",
            path.display()
        );
    }
    doc
}

#[test]
fn a_trial_page_holds_its_figures_and_names_no_url() {
    let out = tempfile::tempdir().unwrap();
    gravline()
        .args(["trial", data("walk.csv").to_str().unwrap()])
        .args(["--subject", data("maren.toml").to_str().unwrap()])
        .args(["--out", out.path().to_str().unwrap(), "-q"])
        .assert()
        .success();
    let page = out.path().join("walk/report.html");
    let doc = checked_page(&page);
    for figure in ["path", "series"] {
        let sel = Selector::parse(&format!("figure#figure-{figure} svg")).unwrap();
        assert_eq!(doc.select(&sel).count(), 1, "figure {figure}");
    }
    let text = std::fs::read_to_string(&page).unwrap();
    // The figures of the summary appear with their units (summary.json is the source).
    let summary: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(out.path().join("walk/summary.json")).unwrap(),
    )
    .unwrap();
    let speed = summary["com"]["mean_speed_m_s"].as_f64().unwrap();
    assert!(
        text.contains(&format!("{speed:.3}")),
        "mean speed {speed:.3} missing"
    );
    // The steps table has a row per step of steps.csv.
    let steps = std::fs::read_to_string(out.path().join("walk/steps.csv")).unwrap();
    let rows = Selector::parse("section[aria-labelledby=table-steps] tbody tr").unwrap();
    assert_eq!(doc.select(&rows).count(), steps.lines().count() - 1);
    // Every caution is on the page (as text, after the parser undoes the escaping).
    let page_text: String = doc.root_element().text().collect();
    for caution in gravline::report::CAUTIONS {
        assert!(page_text.contains(caution), "caution missing: {caution}");
    }
    // The page has no script at all: every number reads without one.
    assert!(!text.contains("<script"));
}

#[test]
fn a_lift_page_draws_the_lift_and_lists_the_repetitions() {
    let out = tempfile::tempdir().unwrap();
    gravline()
        .args(["trial", data("squat.csv").to_str().unwrap()])
        .args(["--subject", data("tobin.toml").to_str().unwrap()])
        .args(["--config", data("squat-config.toml").to_str().unwrap()])
        .args(["--out", out.path().to_str().unwrap(), "-q"])
        .assert()
        .success();
    let doc = checked_page(&out.path().join("squat/report.html"));
    let lift = Selector::parse("figure#figure-lift svg").unwrap();
    assert_eq!(doc.select(&lift).count(), 1);
    let text = std::fs::read_to_string(out.path().join("squat/report.html")).unwrap();
    assert!(text.contains("Repetitions"));
}

#[test]
fn a_hostile_trial_name_is_escaped() {
    let dir = tempfile::tempdir().unwrap();
    // No `/`: the name must stay one file name.
    let name = "<script>alert('x') & \"q\"";
    let trial = dir.path().join(format!("{name}.csv"));
    std::fs::copy(data("walk.csv"), &trial).unwrap();
    let out = dir.path().join("out");
    gravline()
        .args(["trial", trial.to_str().unwrap()])
        .args(["--subject", data("maren.toml").to_str().unwrap()])
        .args(["--out", out.to_str().unwrap(), "-q"])
        .assert()
        .success();
    // The output folder's name is made safe; the page is the one report.html under --out.
    let dirs: Vec<_> = std::fs::read_dir(&out).unwrap().flatten().collect();
    assert_eq!(dirs.len(), 1);
    let page = dirs[0].path().join("report.html");
    let text = std::fs::read_to_string(&page).unwrap();
    assert!(!text.contains("<script"), "unescaped script tag");
    assert!(text.contains("&lt;script&gt;") || text.contains("&#60;script&#62;"));
    let doc = checked_page(&page);
    let h1 = Selector::parse("h1").unwrap();
    let heading: String = doc.select(&h1).next().unwrap().text().collect();
    assert!(!heading.is_empty());
}

#[test]
fn no_report_writes_no_page_and_removes_an_old_one() {
    let out = tempfile::tempdir().unwrap();
    let run = |extra: &[&str]| {
        gravline()
            .args(["trial", data("stand.csv").to_str().unwrap()])
            .args(["--subject", data("maren.toml").to_str().unwrap()])
            .args(["--out", out.path().to_str().unwrap(), "-q", "--no-plots"])
            .args(extra)
            .assert()
            .success();
    };
    run(&[]);
    assert!(out.path().join("stand/report.html").is_file());
    run(&["--no-report"]);
    assert!(!out.path().join("stand/report.html").exists());
}

#[test]
fn a_batch_page_lists_every_trial_links_pages_and_shows_failures() {
    let dir = tempfile::tempdir().unwrap();
    for f in ["walk.csv", "stand.csv"] {
        std::fs::copy(data(f), dir.path().join(f)).unwrap();
    }
    std::fs::write(dir.path().join("broken.csv"), "time,a_x,a_y,a_z\n0,1,2\n").unwrap();
    std::fs::write(
        dir.path().join("manifest.csv"),
        "trial,subject,mass_kg,height_m,sex,condition\n\
         walk.csv,s<1>,63,1.68,female,walk\n\
         stand.csv,s<1>,63,1.68,female,stand\n\
         broken.csv,s2,70,1.75,male,walk\n",
    )
    .unwrap();
    let out = dir.path().join("out");
    gravline()
        .args(["batch", dir.path().join("manifest.csv").to_str().unwrap()])
        .args([
            "--out",
            out.to_str().unwrap(),
            "-q",
            "--no-plots",
            "--jobs",
            "1",
        ])
        .assert()
        .code(1);
    let page = out.join("report.html");
    let doc = checked_page(&page);
    let rows = Selector::parse("table#trials tbody tr").unwrap();
    assert_eq!(doc.select(&rows).count(), 3);
    let links: Vec<String> = doc
        .select(&Selector::parse("table#trials a").unwrap())
        .map(|a| a.value().attr("href").unwrap().to_string())
        .collect();
    assert_eq!(
        links,
        ["trials/walk/report.html", "trials/stand/report.html"]
    );
    for link in &links {
        assert!(out.join(link).is_file(), "{link}");
    }
    let text = std::fs::read_to_string(&page).unwrap();
    assert!(text.contains("broken"), "the failure is listed");
    assert!(text.contains("s&lt;1&gt;") || text.contains("s&#60;1&#62;"));
    let strips = Selector::parse("figure[id^=strip-] svg").unwrap();
    assert!(doc.select(&strips).count() >= 1);
}
