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

/// Physics on the samples' force plates: the ground reaction on a walker points up (about body
/// weight in stance), brakes in the first part of stance and propels in the last, along the
/// direction the pelvis markers travel (facts of the trade, common practice, no source); the CoP
/// lies on the plate.
#[test]
fn plate_loads_of_the_samples_obey_walking_physics() {
    for (dir, name) in [
        ("formats-six", "Eb015pr.c3d"),
        ("formats-plates", "pc_real.c3d"),
    ] {
        let c = read(dir, name);
        // Direction of walking: the first and last valid positions of a pelvis marker.
        let pelvis = c
            .labels
            .iter()
            .position(|l| l.starts_with("PV") || l.starts_with("RPV"))
            .unwrap();
        let valid: Vec<[f64; 3]> = (0..c.n_frames())
            .filter_map(|f| c.point(pelvis, f))
            .collect();
        let (a, b) = (valid[0], valid[valid.len() - 1]);
        let walk = {
            let d = [b[0] - a[0], b[1] - a[1]];
            let n = (d[0] * d[0] + d[1] * d[1]).sqrt();
            [d[0] / n, d[1] / n]
        };
        let mut loaded_plates = 0;
        for plate in &c.plates.plates {
            let stance: Vec<_> = plate
                .samples
                .iter()
                .filter(|s| s.force_n[2].abs() > 200.0)
                .collect();
            if stance.len() < 40 {
                continue;
            }
            loaded_plates += 1;
            assert!(
                stance.iter().all(|s| s.force_n[2] > 0.0),
                "{name}: plate {} pulls down",
                plate.number
            );
            let peak = stance.iter().map(|s| s.force_n[2]).fold(0.0, f64::max);
            assert!((600.0..1500.0).contains(&peak), "{name}: peak {peak} N");
            let ap =
                |s: &&gravline::c3d::PlateSample| s.force_n[0] * walk[0] + s.force_n[1] * walk[1];
            let third = stance.len() / 3;
            let early: f64 = stance[..third].iter().map(ap).sum::<f64>() / third as f64;
            let late: f64 =
                stance[stance.len() - third..].iter().map(ap).sum::<f64>() / third as f64;
            assert!(
                early < 0.0 && late > 0.0,
                "{name}: plate {}: early {early} N, late {late} N",
                plate.number
            );
            let (lo, hi) =
                plate
                    .corners_m
                    .iter()
                    .fold(([f64::MAX; 2], [f64::MIN; 2]), |(lo, hi), c| {
                        (
                            [lo[0].min(c[0]), lo[1].min(c[1])],
                            [hi[0].max(c[0]), hi[1].max(c[1])],
                        )
                    });
            for s in &stance {
                let p = s.cop_m.unwrap();
                assert!(
                    p[0] > lo[0] && p[0] < hi[0] && p[1] > lo[1] && p[1] < hi[1],
                    "{name}: CoP {p:?}"
                );
            }
        }
        assert!(loaded_plates >= 1, "{name}: no plate was stepped on");
    }
}
