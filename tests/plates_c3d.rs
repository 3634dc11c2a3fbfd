//! Force plates read from C3D reach the plate stage: c3d.org's plate recording
//! (`../shared/c3d-samples/formats-plates`, six processor/storage variants of one walk) gives
//! the same ground reaction from every variant, and it is a walker's (physics: the vertical
//! reaction on the body is upward and about body weight in mid-stance, never pulling down).

mod common;

use gravline::c3d::{self, C3dOptions};
use gravline::plates::{self, PlateRecording};
use gravline::trial::UpAxis;

fn recording(name: &str) -> PlateRecording {
    let path = common::c3d_samples_dir().join("formats-plates").join(name);
    let file = c3d::read(&path, &C3dOptions::default()).unwrap_or_else(|e| panic!("{e}"));
    plates::from_c3d(&file.plates, UpAxis::Z).expect("the sample has force plates")
}

#[test]
fn every_variant_gives_the_same_ground_reaction_and_it_pushes_up() {
    let names = [
        "pc_real.c3d",
        "pc_int.c3d",
        "dec_real.c3d",
        "dec_int.c3d",
        "sgi_real.c3d",
        "sgi_int.c3d",
    ];
    let recordings: Vec<PlateRecording> = names.iter().map(|n| recording(n)).collect();
    let first = &recordings[0];
    assert!(!first.plates.is_empty());
    assert_eq!(
        first.rate_hz, 200.0,
        "analog rate of the sample (its README)"
    );
    for (r, name) in recordings.iter().zip(names).skip(1) {
        assert_eq!(r.plates.len(), first.plates.len(), "{name}");
        for (a, b) in r.plates.iter().zip(&first.plates) {
            assert_eq!(a.force_n.len(), b.force_n.len(), "{name}");
            for (fa, fb) in a.force_n.iter().zip(&b.force_n) {
                for k in 0..3 {
                    // Same analog values in every variant (the samples' README), so the same
                    // force to rounding.
                    assert!((fa[k] - fb[k]).abs() < 1e-6, "{name}: {fa:?} vs {fb:?}");
                }
            }
        }
    }
    // The loaded samples push up (a reaction on the body never pulls it down by more than
    // noise), and the largest vertical force is that of a walking adult (common practice, no
    // source: peaks of 1 to 1.5 body weights, 500 to 1500 N).
    let peak = first
        .plates
        .iter()
        .flat_map(|p| p.force_n.iter().map(|f| f[2]))
        .fold(f64::NEG_INFINITY, f64::max);
    let trough = first
        .plates
        .iter()
        .flat_map(|p| p.force_n.iter().map(|f| f[2]))
        .fold(f64::INFINITY, f64::min);
    assert!(
        (500.0..1500.0).contains(&peak),
        "peak vertical force {peak} N"
    );
    assert!(trough > -50.0, "vertical force pulls down: {trough} N");
    // A loaded plate has a CoP, and it lies inside its corners' box.
    for p in &first.plates {
        let corners = p.corners_m.expect("C3D plates have corners");
        let (lo, hi) = corners.iter().fold(
            ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]),
            |(lo, hi), c| {
                (
                    [lo[0].min(c[0]), lo[1].min(c[1])],
                    [hi[0].max(c[0]), hi[1].max(c[1])],
                )
            },
        );
        for (f, cop) in p.force_n.iter().zip(&p.cop_m) {
            if f[2] > 200.0 {
                let cop = cop.expect("a loaded plate has a CoP");
                for k in 0..2 {
                    assert!(
                        cop[k] > lo[k] - 0.02 && cop[k] < hi[k] + 0.02,
                        "{}: CoP {cop:?} outside the plate",
                        p.name
                    );
                }
            }
        }
    }
}
