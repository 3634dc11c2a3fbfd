//! The c3d.org conformance samples (read in place from ../shared/c3d-samples; see its README):
//! one recording stored with every processor type and storage must read the same.

mod common;

use gravline::c3d::{self, C3d, C3dOptions};

fn read(dir: &str, name: &str) -> C3d {
    let path = common::c3d_samples_dir().join(dir).join(name);
    c3d::read(&path, &C3dOptions::default()).unwrap_or_else(|e| panic!("{e}"))
}

/// Same points (bit for bit, invalid samples included) and same analog values.
fn assert_same_points(a: &C3d, b: &C3d) {
    assert_eq!(a.labels, b.labels);
    assert_eq!(a.n_frames(), b.n_frames());
    for (p, (ta, tb)) in a.points_mm.iter().zip(&b.points_mm).enumerate() {
        for (f, (pa, pb)) in ta.iter().zip(tb).enumerate() {
            let same = pa
                .iter()
                .zip(pb)
                .all(|(x, y)| x.to_bits() == y.to_bits() || (x.is_nan() && y.is_nan()));
            assert!(
                same,
                "{} vs {}: point {p} frame {f}: {pa:?} vs {pb:?}",
                a.file, b.file
            );
        }
    }
}

fn assert_same_analog(a: &C3d, b: &C3d) {
    assert_eq!(a.analog.labels, b.analog.labels);
    assert_eq!(a.analog.values.len(), b.analog.values.len());
    for (ch, (va, vb)) in a.analog.values.iter().zip(&b.analog.values).enumerate() {
        assert_eq!(va, vb, "{} vs {}: analog channel {ch}", a.file, b.file);
    }
}

#[test]
fn formats_six_read_the_same_from_every_processor_and_storage() {
    let names = [
        "Eb015pi.c3d",
        "Eb015pr.c3d",
        "Eb015si.c3d",
        "Eb015sr.c3d",
        "Eb015vi.c3d",
        "Eb015vr.c3d",
    ];
    let files: Vec<C3d> = names.iter().map(|n| read("formats-six", n)).collect();
    // From the samples' README: 26 points, 450 frames at 50 Hz, 16 analog channels at 200 Hz.
    for f in &files {
        assert_eq!(f.labels.len(), 26, "{}", f.file);
        assert_eq!(f.n_frames(), 450, "{}", f.file);
        assert_eq!(f.rate_hz, 50.0, "{}", f.file);
        assert_eq!(f.analog.values.len(), 16, "{}", f.file);
        assert_eq!(f.analog.rate_hz, 200.0, "{}", f.file);
        assert_eq!(f.analog.values[0].len(), 1800, "{}", f.file);
    }
    let processors: Vec<_> = files
        .iter()
        .map(|f| (f.processor, f.float_storage))
        .collect();
    use c3d::Processor::*;
    assert_eq!(
        processors,
        [
            (Intel, false),
            (Intel, true),
            (Mips, false),
            (Mips, true),
            (Dec, false),
            (Dec, true)
        ]
    );
    for f in &files[1..] {
        assert_same_points(&files[0], f);
        assert_same_analog(&files[0], f);
    }
    // Some samples are invalid (residual word negative) and the rest valid.
    let invalid = files[0]
        .points_mm
        .iter()
        .flatten()
        .filter(|p| p[0].is_nan())
        .count();
    assert!(invalid > 0 && invalid < 26 * 450, "{invalid}");
}

#[test]
fn formats_plates_agree_within_one_scale_step() {
    let names = [
        "pc_int.c3d",
        "pc_real.c3d",
        "sgi_int.c3d",
        "sgi_real.c3d",
        "dec_int.c3d",
        "dec_real.c3d",
    ];
    let files: Vec<C3d> = names.iter().map(|n| read("formats-plates", n)).collect();
    // From the samples' README: 36 points, 89 frames at 50 Hz, 16 channels at 200 Hz.
    for f in &files {
        assert_eq!((f.labels.len(), f.n_frames()), (36, 89), "{}", f.file);
        assert_eq!(f.analog.values.len(), 16, "{}", f.file);
        assert_eq!(f.plates.plates.len(), 2, "{}", f.file);
    }
    for f in &files[1..] {
        assert_same_analog(&files[0], f);
    }
    // Float files: identical points. Integer files (as stored, they differ from each other by
    // a step in a few coordinates): within one POINT:SCALE step of the float points.
    assert_same_points(&files[1], &files[3]);
    assert_same_points(&files[1], &files[5]);
    let real = &files[1];
    for int in [&files[0], &files[2], &files[4]] {
        let step = int.scale.abs();
        for (ti, tr) in int.points_mm.iter().zip(&real.points_mm) {
            for (pi, pr) in ti.iter().zip(tr) {
                assert_eq!(pi[0].is_nan(), pr[0].is_nan(), "{}", int.file);
                if !pi[0].is_nan() {
                    for k in 0..3 {
                        assert!(
                            (pi[k] - pr[k]).abs() <= step * (1.0 + 1e-6),
                            "{}: {pi:?} {pr:?} step {step}",
                            int.file
                        );
                    }
                }
            }
        }
    }
    // Every variant gives the same plate loads.
    for f in &files[1..] {
        assert_eq!(f.plates, files[0].plates, "{}", f.file);
    }
}
