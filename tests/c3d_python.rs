//! gravline's C3D reader against the general-purpose `c3d` reader from the Python package index
//! on c3d.org's conformance samples: the fixtures (tests/fixtures/c3d_python_*.csv) are what
//! that reader returns, written by tests/reference/make_c3d_fixture.py; the samples are read in
//! place from ../shared/c3d-samples.

mod common;

use gravline::c3d::{self, C3dOptions};
use std::collections::HashMap;

fn rows(name: &str) -> Vec<Vec<String>> {
    let path = format!("{}/tests/fixtures/{name}", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path).unwrap();
    text.lines()
        .filter(|l| !l.starts_with('#'))
        .skip(1)
        .map(|l| l.split(',').map(str::to_string).collect())
        .collect()
}

fn num(s: &str) -> f64 {
    s.parse().unwrap_or_else(|_| panic!("not a number: {s}"))
}

#[test]
fn points_invalid_samples_rates_and_analog_equal_the_python_reader() {
    let dir = common::c3d_samples_dir();
    let meta = rows("c3d_python_meta.csv");
    assert_eq!(meta.len(), 12);
    let mut files = HashMap::new();
    for m in &meta {
        let c = c3d::read(&dir.join(&m[0]), &C3dOptions::default()).unwrap();
        assert_eq!(c.labels.len(), num(&m[1]) as usize, "{}", m[0]);
        assert_eq!(c.n_frames(), num(&m[2]) as usize, "{}", m[0]);
        assert_eq!(c.first_frame, num(&m[3]) as u64, "{}", m[0]);
        assert_eq!(c.rate_hz, num(&m[4]), "{}", m[0]);
        assert_eq!(c.analog.values.len(), num(&m[5]) as usize, "{}", m[0]);
        assert_eq!(c.analog.rate_hz, num(&m[6]), "{}", m[0]);
        assert_eq!(c.scale, num(&m[7]), "{}", m[0]);
        files.insert(m[0].clone(), c);
    }
    let points = rows("c3d_python_points.csv");
    let mut invalid = 0;
    for r in &points {
        let c = &files[&r[0]];
        let (f, p) = (num(&r[1]) as usize, num(&r[2]) as usize);
        let ours = c.point(p, f);
        if r[6] == "0" {
            invalid += 1;
            assert_eq!(ours, None, "{} frame {f} point {p}", r[0]);
        } else {
            // Bit for bit (units are mm in every sample).
            assert_eq!(
                ours,
                Some([num(&r[3]), num(&r[4]), num(&r[5])]),
                "{} frame {f} point {p}",
                r[0]
            );
        }
    }
    assert!(
        invalid > 0 && points.len() > 1000,
        "{invalid} of {}",
        points.len()
    );
    let analog = rows("c3d_python_analog.csv");
    assert!(analog.len() > 100);
    for r in &analog {
        let c = &files[&r[0]];
        let s = num(&r[1]) as usize;
        let theirs: Vec<f64> = r[2..].iter().map(|v| num(v)).collect();
        let ours: Vec<f64> = c.analog.values.iter().map(|ch| ch[s]).collect();
        assert_eq!(ours, theirs, "{} sample {s}", r[0]);
    }
}
