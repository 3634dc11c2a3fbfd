//! The `support` stage on a real overground walk (realdata/walk-lower-body: Duarte 2021,
//! doi 10.5281/zenodo.4599319, trial "walk2", CC BY 4.0; 150 Hz markers in mm, +y up, +x the
//! walking direction; 7 force plates at 450 Hz, synchronous).
//!
//! Checks, against the force plates (an instrument outside the project):
//! - per-foot contact from [`detect_contact`] with the default thresholds starts and ends with
//!   the loading of the plate under that foot;
//! - Zeni heel strikes precede plate onsets, Zeni toe-offs match plate offs, and the Bonci et
//!   al. 2022 refinement brings both within 3 frames of the plates;
//! - the plate's center of pressure (CoP) lies in the BoS hull of the foot on it.
//!
//! The recording is read in place (never copied into the repository) with a small local
//! parser, and the test returns early with a note when the directory is absent.

use std::collections::HashMap;
use std::path::Path;

mod common;
use common::realdata_dir;

use approx::assert_relative_eq;
use gravline::signal::{design, filtfilt};
use gravline::support::{
    convex_hull, detect_contact, floor_level, refine_events, signed_distance, transitions,
    zeni_events, ContactThresholds, RefineOptions,
};
use gravline::trial::UpAxis;

/// A CSV table with `#` comment lines: column names and rows, empty cells as `None`.
struct Table {
    columns: HashMap<String, usize>,
    rows: Vec<Vec<Option<f64>>>,
}

impl Table {
    fn read(path: &Path) -> Table {
        let mut reader = csv::ReaderBuilder::new()
            .comment(Some(b'#'))
            .from_path(path)
            .unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        let columns = reader
            .headers()
            .expect("header row")
            .iter()
            .enumerate()
            .map(|(i, name)| (name.to_string(), i))
            .collect();
        let rows = reader
            .records()
            .map(|r| {
                r.expect("row")
                    .iter()
                    .map(|cell| {
                        let cell = cell.trim();
                        (!cell.is_empty()).then(|| cell.parse().expect("number"))
                    })
                    .collect()
            })
            .collect();
        Table { columns, rows }
    }

    fn column(&self, name: &str) -> Vec<Option<f64>> {
        let c = *self
            .columns
            .get(name)
            .unwrap_or_else(|| panic!("column `{name}` missing"));
        self.rows
            .iter()
            .map(|r| r.get(c).copied().flatten())
            .collect()
    }

    /// A marker's track in metres (the file is in mm).
    fn marker_m(&self, label: &str) -> Vec<Option<[f64; 3]>> {
        let [x, y, z] = ["x", "y", "z"].map(|a| self.column(&format!("{label}_{a}")));
        (0..self.rows.len())
            .map(|i| Some([x[i]? * 1e-3, y[i]? * 1e-3, z[i]? * 1e-3]))
            .collect()
    }
}

const SIDES: [&str; 2] = ["l", "r"];
/// Foot points that touch the floor: heel and metatarsal heads (no toe marker in this trial).
const CONTACT_MARKERS: [&str; 4] = ["heel", "mt1", "mt2", "mt5"];
/// BoS points of a foot in contact (docs/DESIGN.md 7: lateral malleolus as the lateral proxy).
const BOS_MARKERS: [&str; 5] = ["heel", "mt1", "mt2", "mt5", "ankle_lat"];
/// All foot markers, for the floor level.
const FOOT_MARKERS: [&str; 6] = ["heel", "mt1", "mt2", "mt5", "ankle_lat", "ankle_med"];
/// A plate is loaded above this vertical force (common practice, no source).
const LOAD_N: f64 = 20.0;

/// Speeds in m/s by central differences (one-sided at the ends), `None` next to a missing sample.
fn speeds_m_s(track: &[Option<[f64; 3]>], rate_hz: f64) -> Vec<Option<f64>> {
    let n = track.len();
    (0..n)
        .map(|i| {
            let (a, b) = (i.saturating_sub(1), (i + 1).min(n - 1));
            let (pa, pb) = (track[a]?, track[b]?);
            let dt = (b - a) as f64 / rate_hz;
            let d = [pb[0] - pa[0], pb[1] - pa[1], pb[2] - pa[2]];
            Some((d[0] * d[0] + d[1] * d[1] + d[2] * d[2]).sqrt() / dt)
        })
        .collect()
}

/// A complete track low-passed at 6 Hz by gravline's Winter-corrected dual-pass Butterworth
/// (itself checked against scipy in `tests/signal_filter_scipy.rs`).
fn low_pass_6_hz(track: &[Option<[f64; 3]>], rate_hz: f64) -> Vec<Option<[f64; 3]>> {
    let c = design(rate_hz, 6.0, true).expect("filter");
    let axes: Vec<Vec<f64>> = (0..3)
        .map(|k| {
            let x: Vec<f64> = track
                .iter()
                .map(|p| p.expect("complete track")[k])
                .collect();
            filtfilt(&c, &x)
        })
        .collect();
    (0..track.len())
        .map(|i| Some([axes[0][i], axes[1][i], axes[2][i]]))
        .collect()
}

/// One loaded interval of a plate in marker frames, and the foot on it.
#[derive(Debug)]
struct Footfall {
    plate: usize,
    on: usize,
    /// exclusive
    off: usize,
    side: &'static str,
}

#[test]
fn contact_events_and_cop_agree_with_the_force_plates() {
    let dir = realdata_dir();
    let dir = dir.join("walk-lower-body");
    let trial = Table::read(&dir.join("trial.csv"));
    let plates = Table::read(&dir.join("plates.csv"));
    let up = UpAxis::parse("+y").expect("axis");
    let times = trial.column("time");
    let n = times.len();
    let (t0, t1) = (times[0].expect("time"), times[n - 1].expect("time"));
    let rate_hz = (n - 1) as f64 / (t1 - t0);
    assert!(
        (rate_hz - 150.0).abs() < 0.5,
        "marker rate {rate_hz} Hz (README: 150 Hz)"
    );

    let track = |side: &str, m: &str| trial.marker_m(&format!("{side}_{m}"));
    let height = |p: &Option<[f64; 3]>| p.map(|p| up.height(&p));

    // Floor: the 2nd percentile of all foot-marker heights (docs/DESIGN.md 7).
    let all_heights: Vec<f64> = SIDES
        .iter()
        .flat_map(|s| FOOT_MARKERS.iter().map(move |m| (s, m)))
        .flat_map(|(s, m)| track(s, m).iter().filter_map(height).collect::<Vec<_>>())
        .collect();
    let floor_m = floor_level(all_heights.into_iter(), 2.0).expect("floor");
    // numpy.percentile(heights, 2) of the same 3012 heights (numpy 2.4, default linear)
    assert_relative_eq!(floor_m, 0.0264063938, max_relative = 1e-12);

    // Per-foot contact: the lowest contact marker's height above the floor, the slowest one's speed.
    let mut contact: HashMap<&str, Vec<bool>> = HashMap::new();
    for side in SIDES {
        let tracks: Vec<_> = CONTACT_MARKERS.iter().map(|m| track(side, m)).collect();
        let speeds: Vec<_> = tracks.iter().map(|t| speeds_m_s(t, rate_hz)).collect();
        let foot_height: Vec<Option<f64>> = (0..n)
            .map(|i| {
                let h = tracks
                    .iter()
                    .filter_map(|t| height(&t[i]))
                    .fold(f64::INFINITY, f64::min);
                h.is_finite().then_some(h - floor_m)
            })
            .collect();
        let foot_speed: Vec<Option<f64>> = (0..n)
            .map(|i| {
                let v = speeds
                    .iter()
                    .filter_map(|s| s[i])
                    .fold(f64::INFINITY, f64::min);
                v.is_finite().then_some(v)
            })
            .collect();
        let c = detect_contact(
            &foot_height,
            &foot_speed,
            rate_hz,
            &ContactThresholds::default(),
        );
        contact.insert(side, c);
    }

    // Plate loading at each marker frame (nearest plate sample in time).
    let plate_times: Vec<f64> = plates
        .column("time_s")
        .into_iter()
        .map(|t| t.expect("plate time"))
        .collect();
    let sample_of: Vec<usize> = times
        .iter()
        .map(|t| {
            let t = t.expect("time");
            let k = plate_times.partition_point(|pt| *pt < t);
            match (k.checked_sub(1), plate_times.get(k)) {
                (Some(j), Some(after)) if t - plate_times[j] <= after - t => j,
                (Some(j), None) => j,
                _ => k,
            }
        })
        .collect();
    let heels: HashMap<&str, Vec<Option<[f64; 3]>>> =
        SIDES.iter().map(|s| (*s, track(s, "heel"))).collect();
    let horizontal = |p: [f64; 3]| up.horizontal(&p);
    let mut footfalls: Vec<Footfall> = Vec::new();
    let mut cop_of: HashMap<usize, Vec<Option<[f64; 2]>>> = HashMap::new();
    for plate in 1..=7 {
        let fy = plates.column(&format!("plate{plate}_fy_n"));
        let cx = plates.column(&format!("plate{plate}_cop_x_mm"));
        let cz = plates.column(&format!("plate{plate}_cop_z_mm"));
        let loaded: Vec<bool> = sample_of
            .iter()
            .map(|&j| fy[j].is_some_and(|f| f > LOAD_N))
            .collect();
        // CoP on the plate surface (y = 0), in metres, lab frame
        let cop: Vec<Option<[f64; 2]>> = sample_of
            .iter()
            .zip(&loaded)
            .map(|(&j, &l)| Some(horizontal([cx[j]? * 1e-3, 0.0, cz[j]? * 1e-3])).filter(|_| l))
            .collect();
        for (on, off) in transitions(&loaded) {
            // the foot on the plate: the heel nearer the CoP on average (horizontal distance)
            let mean_distance = |side: &str| {
                let d: Vec<f64> = (on..off)
                    .filter_map(|i| {
                        let (c, h) = (cop[i]?, horizontal(heels[side][i]?));
                        Some((c[0] - h[0]).hypot(c[1] - h[1]))
                    })
                    .collect();
                d.iter().sum::<f64>() / d.len() as f64
            };
            let side = if mean_distance("l") < mean_distance("r") {
                "l"
            } else {
                "r"
            };
            footfalls.push(Footfall {
                plate,
                on,
                off,
                side,
            });
        }
        cop_of.insert(plate, cop);
    }
    footfalls.sort_by_key(|f| f.on);
    println!("plate footfalls (marker frames, off exclusive): {footfalls:?}");
    // README: four successive footfalls on plates 6, 5, 3 and 4.
    assert_eq!(
        footfalls.iter().map(|f| f.plate).collect::<Vec<_>>(),
        [6, 5, 3, 4]
    );
    // Walking alternates feet (fact of the trade).
    for pair in footfalls.windows(2) {
        assert_ne!(pair[0].side, pair[1].side, "successive footfalls {pair:?}");
    }

    // 1. Contact on/off against plate loading, within 3 marker frames (20 ms).
    let mut matched: HashMap<&str, Vec<(usize, usize)>> = HashMap::new();
    for f in &footfalls {
        let runs = transitions(&contact[f.side]);
        let run = runs
            .iter()
            .find(|(a, b)| *a < f.off && f.on < *b)
            .unwrap_or_else(|| panic!("no detected contact of foot {} during {f:?}", f.side));
        matched.entry(f.side).or_default().push(*run);
        let d_on = run.0 as i64 - f.on as i64;
        println!(
            "plate {} ({}): contact on {} vs plate {} ({d_on:+} frames)",
            f.plate, f.side, run.0, f.on
        );
        assert!(
            d_on.abs() <= 3,
            "contact onset {d_on:+} frames from plate {}",
            f.plate
        );
        if f.off < n {
            let d_off = run.1 as i64 - f.off as i64;
            println!(
                "plate {} ({}): contact off {} vs plate {} ({d_off:+} frames)",
                f.plate, f.side, run.1, f.off
            );
            assert!(
                d_off.abs() <= 3,
                "contact off {d_off:+} frames from plate {}",
                f.plate
            );
        }
    }
    // Every other detected contact is a footfall off the plates cut by the recording's ends.
    for side in SIDES {
        for run in transitions(&contact[side]) {
            let on_plate = matched.get(side).is_some_and(|m| m.contains(&run));
            assert!(
                on_plate || run.0 == 0 || run.1 == n,
                "unexpected contact {run:?} of foot {side}"
            );
        }
    }

    // 2. Zeni et al. 2008: heel and toe (2nd metatarsal head, no toe marker) minus the sacrum
    // (mean of the PSIS), along the direction of progression (the sacrum's mean horizontal velocity).
    let sacrum: Vec<Option<[f64; 2]>> = {
        let (l, r) = (trial.marker_m("l_psis"), trial.marker_m("r_psis"));
        (0..n)
            .map(|i| {
                let (a, b) = (horizontal(l[i]?), horizontal(r[i]?));
                Some([(a[0] + b[0]) / 2.0, (a[1] + b[1]) / 2.0])
            })
            .collect()
    };
    let (s0, s1) = (sacrum[0].expect("sacrum"), sacrum[n - 1].expect("sacrum"));
    let travel = [s1[0] - s0[0], s1[1] - s0[1]];
    let e_prog = [
        travel[0] / travel[0].hypot(travel[1]),
        travel[1] / travel[0].hypot(travel[1]),
    ];
    // Walking speed: the sacrum's mean horizontal speed over the trial.
    let walking_speed_m_s = travel[0].hypot(travel[1]) / (t1 - t0);
    println!("walking speed {walking_speed_m_s:.3} m/s");
    for side in SIDES {
        let relative = |m: &str| -> Vec<Option<f64>> {
            track(side, m)
                .iter()
                .zip(&sacrum)
                .map(|(p, s)| {
                    let (p, s) = (horizontal((*p)?), (*s)?);
                    Some((p[0] - s[0]) * e_prog[0] + (p[1] - s[1]) * e_prog[1])
                })
                .collect()
        };
        let zeni = zeni_events(&relative("heel"), &relative("mt2"), rate_hz);
        // Bonci et al. 2022 refinement: heel speed below 0.5 x and 2nd-metatarsal speed above
        // 0.8 x the walking speed (docs/reference/methods.md 3).
        let refined = refine_events(
            &zeni,
            &speeds_m_s(&track(side, "heel"), rate_hz),
            &speeds_m_s(&track(side, "mt2"), rate_hz),
            walking_speed_m_s,
            &RefineOptions::default(),
        );
        // The same on tracks low-passed as the pipeline does (6 Hz, Winter-corrected dual pass).
        let filtered = refine_events(
            &zeni,
            &speeds_m_s(&low_pass_6_hz(&track(side, "heel"), rate_hz), rate_hz),
            &speeds_m_s(&low_pass_6_hz(&track(side, "mt2"), rate_hz), rate_hz),
            walking_speed_m_s,
            &RefineOptions::default(),
        );
        let own: Vec<&Footfall> = footfalls.iter().filter(|f| f.side == side).collect();
        for (events, method) in [
            (&zeni, "Zeni"),
            (&refined, "Zeni + Bonci"),
            (&filtered, "Zeni + Bonci, filtered"),
        ] {
            assert_eq!(
                events.heel_strikes.len(),
                own.len(),
                "foot {side}: {method} heel strikes {events:?}"
            );
        }
        for (k, f) in own.iter().enumerate() {
            let d = zeni.heel_strikes[k] as i64 - f.on as i64;
            let d_refined = refined.heel_strikes[k] as i64 - f.on as i64;
            let d_filtered = filtered.heel_strikes[k] as i64 - f.on as i64;
            println!(
                "plate {} ({side}) on {}: heel strike Zeni {d:+}, Zeni + Bonci {d_refined:+}, \
                 filtered {d_filtered:+} frames",
                f.plate, f.on
            );
            assert!(
                d_filtered.abs() <= 3,
                "refined heel strike on filtered tracks {d_filtered:+} frames from plate {}",
                f.plate
            );
            // Pure Zeni: the heel is farthest ahead of the pelvis in terminal swing, before it
            // lands: measured 4-7 frames (27-47 ms) early here. Bound: 8 frames (53 ms), one-sided
            // lateness of at most 3 frames.
            assert!(
                (-8..=3).contains(&d),
                "Zeni heel strike {d:+} frames from plate {} onset",
                f.plate
            );
            // Refined: within 3 marker frames (20 ms) of the plate onset, as the plates' own
            // contact is checked above.
            assert!(
                d_refined.abs() <= 3,
                "refined heel strike {d_refined:+} frames from plate {} onset",
                f.plate
            );
        }
        for f in own.iter().filter(|f| f.off < n) {
            let nearest = |events: &[usize]| {
                let to = events
                    .iter()
                    .min_by_key(|to| to.abs_diff(f.off))
                    .unwrap_or_else(|| panic!("no toe-off of foot {side}"));
                *to as i64 - f.off as i64
            };
            let (d, d_refined) = (nearest(&zeni.toe_offs), nearest(&refined.toe_offs));
            let d_filtered = nearest(&filtered.toe_offs);
            println!(
                "plate {} ({side}) off {}: toe-off Zeni {d:+}, Zeni + Bonci {d_refined:+}, \
                 filtered {d_filtered:+} frames",
                f.plate, f.off
            );
            assert!(
                d_filtered.abs() <= 3,
                "refined toe-off on filtered tracks {d_filtered:+} frames from plate {} off",
                f.plate
            );
            // Zeni 2008: 98 % of overground events within 2 frames at 60 Hz (33 ms, docs/reference/methods.md 3, P)
            // = 5 frames at 150 Hz; the refined toe-off within 3 frames, like the contact offs.
            assert!(
                d.abs() <= 5,
                "Zeni toe-off {d:+} frames from plate {} off",
                f.plate
            );
            assert!(
                d_refined.abs() <= 3,
                "refined toe-off {d_refined:+} frames from plate {} off",
                f.plate
            );
        }
    }

    // 3. CoP inside, or within 1 cm of, the BoS hull of the foot on the plate.
    let mut inside = 0;
    let mut total = 0;
    let mut worst_m = f64::INFINITY;
    for f in &footfalls {
        let cop = &cop_of[&f.plate];
        let bos: Vec<Vec<Option<[f64; 3]>>> =
            BOS_MARKERS.iter().map(|m| track(f.side, m)).collect();
        if f.plate == 4 {
            // Plate 4 (the footfall cut by the end of the recording) reports a CoP more than
            // 10 cm behind the heel marker on every loaded frame: not physical, since the heel
            // marker sits on the back of the calcaneus. Asserted here, and left out below.
            for i in f.on..f.off {
                let (c, h) = (
                    cop[i].expect("cop"),
                    horizontal(heels[f.side][i].expect("heel")),
                );
                let ahead_m = (c[0] - h[0]) * e_prog[0] + (c[1] - h[1]) * e_prog[1];
                assert!(
                    ahead_m < -0.10,
                    "plate 4 frame {i}: CoP {ahead_m:.3} m ahead of the heel"
                );
            }
            continue;
        }
        for i in f.on..f.off {
            let points: Vec<[f64; 2]> = bos.iter().filter_map(|t| t[i].map(horizontal)).collect();
            let hull = convex_hull(&points);
            let d =
                signed_distance(&hull, cop[i].expect("cop on a loaded frame")).expect("distance");
            total += 1;
            worst_m = worst_m.min(d);
            if d >= -0.01 {
                inside += 1;
            }
        }
    }
    let share = inside as f64 / total as f64;
    println!(
        "CoP inside or within 1 cm of the BoS: {inside}/{total} loaded frames ({:.1} %), worst {worst_m:.4} m",
        100.0 * share
    );
    assert!(
        share >= 0.95,
        "CoP within the BoS on {:.1} % of loaded frames",
        100.0 * share
    );
}
