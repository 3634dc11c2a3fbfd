//! The whole pipeline on the real overground walk of ../shared/realdata/walk-lower-body/
//! (Duarte 2021, doi 10.5281/zenodo.4599319, trial "walk2", CC BY 4.0; 150 Hz markers in mm,
//! +y up; 7 force plates at 450 Hz, synchronous), checked against its force plates, an
//! instrument outside the project:
//! - each foot's contact (floor from the feet's stance samples, contact per foot region)
//!   starts and ends within 3 frames of the loading of the plate under it;
//! - the plate's center of pressure lies inside the BoS (the hull of the sole parts in contact)
//!   in at least 95 % of the loaded frames.
//!
//! The recording has markers on the pelvis and legs only: the trunk, head and shoulders are
//! placed by fixed offsets in the pelvis frame (they move the CoM, not the feet), the arms hang,
//! and the toe tips are virtual points along heel -> 2nd metatarsal head.
//! The test fails when the recording is missing.

use gravline::anthropometry::{SegmentTable, Sex};
use gravline::config::{Config, RawConfig, Subject};
use gravline::pipeline::{run_trial, RunOptions};
use gravline::support::stage::bos_at;
use gravline::support::{signed_distance, transitions};
use gravline::trial::read_trial;
use std::path::PathBuf;

const WALK_CONFIG: &str = r#"
[input]
units = "mm"
up_axis = "y"
[model]
arms = "hanging"
[virtual]
head_top = { frame = ["l_psis", "l_asis", "r_asis"], offset_m = [0.05, 0.045, -0.80] }
c7 = { frame = ["l_psis", "l_asis", "r_asis"], offset_m = [-0.02, 0.045, -0.50] }
jugular = { frame = ["l_psis", "l_asis", "r_asis"], offset_m = [0.14, 0.045, -0.45] }
l_acromion = { frame = ["l_psis", "l_asis", "r_asis"], offset_m = [0.05, -0.14, -0.47] }
r_acromion = { frame = ["l_psis", "l_asis", "r_asis"], offset_m = [0.05, 0.23, -0.47] }
l_toe = { along = ["l_heel", "l_mt2"], fraction = 1.3 }
r_toe = { along = ["r_heel", "r_mt2"], fraction = 1.3 }
"#;

/// A plate is loaded above this vertical force (common practice, no source).
const LOAD_N: f64 = 20.0;

fn walk_dir() -> PathBuf {
    let local = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../shared/realdata");
    let dir = if local.exists() {
        local
    } else {
        PathBuf::from("/work/shared/realdata")
    };
    let dir = dir.join("walk-lower-body");
    assert!(
        dir.exists(),
        "{} missing: the real walk is needed",
        dir.display()
    );
    dir
}

/// Plate columns: per marker frame (every 3rd plate sample, 450 / 150 Hz), vertical force and
/// CoP (x, z) in metres.
/// One plate: loaded per marker frame, and the CoP on the floor plane (m) where loaded.
type Plate = (Vec<bool>, Vec<Option<[f64; 2]>>);

fn plates(dir: &std::path::Path, n: usize) -> Vec<Plate> {
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_path(dir.join("plates.csv"))
        .unwrap();
    let header: Vec<String> = reader.headers().unwrap().iter().map(String::from).collect();
    let rows: Vec<Vec<Option<f64>>> = reader
        .records()
        .map(|r| r.unwrap().iter().map(|c| c.trim().parse().ok()).collect())
        .collect();
    let col = |name: &str| header.iter().position(|h| h == name).unwrap();
    (1..=7)
        .map(|k| {
            let (fy, cx, cz) = (
                col(&format!("plate{k}_fy_n")),
                col(&format!("plate{k}_cop_x_mm")),
                col(&format!("plate{k}_cop_z_mm")),
            );
            let loaded: Vec<bool> = (0..n)
                .map(|i| {
                    rows.get(3 * i)
                        .and_then(|r| r[fy])
                        .is_some_and(|f| f > LOAD_N)
                })
                .collect();
            // Horizontal axes of +y up: (z, x).
            let cop = (0..n)
                .map(|i| {
                    let r = rows.get(3 * i)?;
                    Some([r[cz]? * 1e-3, r[cx]? * 1e-3]).filter(|_| loaded[i])
                })
                .collect();
            (loaded, cop)
        })
        .collect()
}

#[test]
fn pipeline_contact_and_bos_agree_with_the_force_plates() {
    let dir = walk_dir();
    let config =
        Config::from_raw(&RawConfig::from_toml(WALK_CONFIG, "walk").unwrap(), "walk").unwrap();
    // Body mass from the plates: about 68-77 kg (README of the recording); stature assumed.
    let subject = Subject::new(72.0, 1.75, Sex::Male);
    let table = SegmentTable::load(&config.table, subject.sex).unwrap();
    let trial = read_trial(&dir.join("trial.csv"), &config.read_options()).unwrap();
    let r = run_trial(
        trial.clone(),
        &config,
        &subject,
        &table,
        RunOptions::default(),
        1,
    )
    .unwrap();
    let n = r.n_frames();
    let up = trial.up_axis;
    let (mut inside, mut loaded_frames) = (0usize, 0usize);
    let mut pts = Vec::new();
    let mut footfalls = 0;
    for (k, (loaded, cop)) in plates(&dir, n).iter().enumerate() {
        for (on, off) in transitions(loaded) {
            footfalls += 1;
            // The foot on the plate: the heel nearer the CoP on average over the loading.
            let near = |side: usize| {
                (on..off)
                    .filter_map(|f| {
                        let h = up.horizontal(&r.feet.points[side][0][f]?);
                        let c = cop[f]?;
                        Some((h[0] - c[0]).hypot(h[1] - c[1]))
                    })
                    .sum::<f64>()
            };
            let side = if near(0) < near(1) { 0 } else { 1 };
            let runs = transitions(&r.support.contact[side]);
            let run = runs
                .iter()
                .find(|(a, b)| *a < off && on < *b)
                .unwrap_or_else(|| panic!("plate {}: no contact of foot {side}", k + 1));
            println!(
                "plate {}: foot {side} contact {run:?} vs load ({on}, {off})",
                k + 1
            );
            assert!((run.0 as i64 - on as i64).abs() <= 3, "plate {} on", k + 1);
            if off < n {
                assert!(
                    (run.1 as i64 - off as i64).abs() <= 3,
                    "plate {} off",
                    k + 1
                );
            }
            for (f, c) in cop.iter().enumerate().take(off).skip(on) {
                let Some(c) = *c else { continue };
                loaded_frames += 1;
                let hull = bos_at(&mut pts, &r.feet, &r.support, f, up);
                if signed_distance(&hull, c).is_some_and(|d| d >= 0.0) {
                    inside += 1;
                }
            }
        }
    }
    assert_eq!(
        footfalls, 4,
        "README: four footfalls on plates 6, 5, 3 and 4"
    );
    let share = inside as f64 / loaded_frames as f64;
    println!("CoP inside the BoS in {inside} of {loaded_frames} loaded frames ({share:.3})");
    assert!(
        share >= 0.95,
        "CoP inside the BoS in {share:.3} of loaded frames"
    );
}
