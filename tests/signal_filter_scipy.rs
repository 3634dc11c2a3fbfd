//! The zero-lag Butterworth low-pass against scipy.signal: `butter(2, f_d / (fs / 2))` at the
//! Winter-corrected design frequency and `filtfilt(b, a, x, padtype='odd', padlen=p)` with
//! gravline's pad length, on fixtures written by tests/reference/make_filter_fixture.py (the
//! versions of scipy and numpy are in each file's first line).

use approx::assert_abs_diff_eq;
use gravline::signal::{design, filtfilt};
use std::collections::HashMap;
use std::path::PathBuf;

struct Fixture {
    header: HashMap<String, String>,
    x: Vec<f64>,
    y: Vec<f64>,
}

fn fixture(name: &str) -> Fixture {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures")
        .join(name);
    let text = std::fs::read_to_string(&path)
        .unwrap_or_else(|e| panic!("cannot read {}: {e}", path.display()));
    let mut header = HashMap::new();
    let (mut x, mut y) = (Vec::new(), Vec::new());
    for line in text.lines() {
        if let Some(meta) = line.strip_prefix("# ") {
            if let Some((k, v)) = meta.split_once('=') {
                header.insert(k.to_string(), v.to_string());
            }
        } else if line != "x,y" {
            let (a, b) = line.split_once(',').expect("two columns");
            x.push(a.parse().expect("x is a number"));
            y.push(b.parse().expect("y is a number"));
        }
    }
    Fixture { header, x, y }
}

fn number(f: &Fixture, key: &str) -> f64 {
    f.header[key].parse().expect("a number")
}

fn numbers(f: &Fixture, key: &str) -> Vec<f64> {
    f.header[key]
        .split_whitespace()
        .map(|v| v.parse().expect("a number"))
        .collect()
}

/// Checks one fixture: coefficients equal scipy's `b`, `a` (to 1e-12), the pad length is the
/// fixture's, and the filtered signal equals scipy's `filtfilt` (to 1e-9).
fn check(name: &str) {
    let f = fixture(name);
    let rate_hz = number(&f, "rate_hz");
    let cutoff_hz = number(&f, "cutoff_hz");
    let corrected = f.header["corrected"] == "true";
    let padlen: usize = f.header["padlen"].parse().expect("padlen");
    let c = design(rate_hz, cutoff_hz, corrected).expect("valid design");

    let (b, a) = (numbers(&f, "b"), numbers(&f, "a"));
    assert_abs_diff_eq!(c.a0, b[0], epsilon = 1e-12);
    assert_abs_diff_eq!(c.a1, b[1], epsilon = 1e-12);
    assert_abs_diff_eq!(c.a2, b[2], epsilon = 1e-12);
    assert_abs_diff_eq!(a[0], 1.0, epsilon = 1e-15);
    assert_abs_diff_eq!(c.b1, -a[1], epsilon = 1e-12);
    assert_abs_diff_eq!(c.b2, -a[2], epsilon = 1e-12);

    assert_eq!(c.pad_len().min(f.x.len() - 1), padlen, "{name}: pad length");

    let y = filtfilt(&c, &f.x);
    assert_eq!(y.len(), f.y.len());
    for (i, (got, want)) in y.iter().zip(&f.y).enumerate() {
        assert!(
            (got - want).abs() <= 1e-9,
            "{name} sample {i}: gravline {got}, scipy {want}"
        );
    }
}

#[test]
fn matches_scipy_at_100_hz_6_hz() {
    check("filter_100hz_6hz.csv");
}

#[test]
fn matches_scipy_uncorrected() {
    check("filter_100hz_6hz_uncorrected.csv");
}

#[test]
fn matches_scipy_at_200_hz_10_hz() {
    check("filter_200hz_10hz.csv");
}

#[test]
fn matches_scipy_on_a_run_shorter_than_the_pad() {
    check("filter_short_run.csv");
}
