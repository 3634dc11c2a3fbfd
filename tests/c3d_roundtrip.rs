//! Files written by gravline's own C3D writer with known content read back exactly: integer and
//! float storage, the three processor types, a repeated label, more than 255 points, more than
//! 65 535 frames, units, analog scaling, and a type-2 and a type-4 force plate under a known
//! load (statics: the reader must return the load that was put on the plate).

use gravline::c3d::write::{AnalogSpec, LongFrames, PlateSpec, Recording};
use gravline::c3d::{self, C3d, C3dOptions, OriginSign, PlateOptions, Processor};

const PROCESSORS: [Processor; 3] = [Processor::Intel, Processor::Dec, Processor::Mips];

fn round_trip(rec: &Recording, opts: &C3dOptions) -> C3d {
    let mut bytes = Vec::new();
    c3d::write(rec, &mut bytes).expect("write");
    assert_eq!(bytes.len() % 512, 0);
    c3d::parse(&bytes, "mem.c3d", opts).unwrap_or_else(|e| panic!("{e}"))
}

/// Coordinates the storage holds exactly: for integer storage multiples of the scale (as the
/// reader forms them, in 32-bit floats), for float storage 32-bit floats.
fn exact(v: f64, float: bool, scale: f32) -> f64 {
    if float {
        v as f32 as f64
    } else {
        ((v / scale as f64).round() as f32 * scale) as f64
    }
}

fn small(processor: Processor, float: bool) -> Recording {
    let scale = 0.1f32;
    let n = 40;
    let labels: Vec<String> = ["KNE", "KNE", "ANK ", "HEE"]
        .iter()
        .map(|s| s.to_string())
        .collect();
    let points = (0..labels.len())
        .map(|p| {
            (0..n)
                .map(|f| {
                    // Point 3 is never valid; point 1 has a gap.
                    if p == 3 || (p == 1 && (10..15).contains(&f)) {
                        None
                    } else {
                        let v = |k: f64| {
                            exact(100.0 * p as f64 + 3.3 * f as f64 - 512.7 * k, float, scale)
                        };
                        Some([v(1.0), v(-0.5), v(2.0)])
                    }
                })
                .collect()
        })
        .collect();
    let spf = 3;
    let (ascale, gen, offset) = (0.25f32, 2.0f32, [2048i16, 0]);
    let analog = AnalogSpec {
        labels: vec!["EMG1".into(), "LOAD".into()],
        units: vec!["V".into(), "N".into()],
        samples_per_frame: spf,
        scale: vec![ascale; 2],
        offset: offset.to_vec(),
        gen_scale: gen,
        unsigned: false,
        values: (0..2)
            .map(|ch| {
                (0..n * spf)
                    .map(|s| {
                        let raw = (s as f64 * 7.0 - 300.0).round() + offset[ch] as f64;
                        (raw - offset[ch] as f64) * (ascale as f64 * gen as f64)
                    })
                    .collect()
            })
            .collect(),
    };
    Recording {
        processor,
        float,
        scale,
        rate_hz: 120.0,
        units: "mm".into(),
        labels,
        descriptions: vec![
            "lateral knee".into(),
            "medial knee".into(),
            "ankle".into(),
            "heel".into(),
        ],
        points,
        analog,
        ..Recording::default()
    }
}

#[test]
fn every_processor_and_storage_round_trips_exactly() {
    for processor in PROCESSORS {
        for float in [false, true] {
            let rec = small(processor, float);
            let c = round_trip(&rec, &C3dOptions::default());
            let what = format!("{processor:?} float={float}");
            assert_eq!(c.processor, processor, "{what}");
            assert_eq!(c.float_storage, float, "{what}");
            assert_eq!(c.rate_hz, 120.0, "{what}");
            assert_eq!(c.labels, ["KNE", "KNE#2", "ANK", "HEE"], "{what}");
            assert_eq!(c.stored_labels[1], "KNE");
            assert_eq!(c.descriptions[1], "medial knee");
            for (p, track) in rec.points.iter().enumerate() {
                for (f, v) in track.iter().enumerate() {
                    assert_eq!(c.point(p, f), *v, "{what}: point {p} frame {f}");
                }
            }
            assert_eq!(c.analog.labels, ["EMG1", "LOAD"]);
            assert_eq!(c.analog.rate_hz, 360.0);
            assert_eq!(c.analog.values, rec.analog.values, "{what}");
            assert!(
                c.warnings.iter().any(|w| w.contains("KNE#2")),
                "{:?}",
                c.warnings
            );
            assert!(
                c.warnings.iter().any(|w| w.contains("never valid: HEE")),
                "{:?}",
                c.warnings
            );
            // The trial: metres, invalid samples empty, times from 0.
            let t = c3d::to_trial(&c, "mem", &Default::default()).unwrap();
            assert_eq!(t.times_s[1], 1.0 / 120.0);
            assert!((t.rate_hz - 120.0).abs() < 1e-9);
            assert_eq!(t.markers.point(1, 12), None);
            let p = rec.points[0][7].unwrap();
            assert_eq!(
                t.markers.point(0, 7),
                Some([p[0] * 1e-3, p[1] * 1e-3, p[2] * 1e-3])
            );
        }
    }
}

#[test]
fn unsigned_analog_samples() {
    let mut rec = small(Processor::Intel, false);
    rec.analog.unsigned = true;
    // Unsigned words 0..65535 around the offset 2048 (channel 0) and 0 (channel 1).
    let sc = 0.25 * 2.0;
    rec.analog.values[0] = (0..rec.analog.values[0].len())
        .map(|s| (s as f64 * 300.0 - 2048.0) * sc)
        .collect();
    rec.analog.values[1] = (0..rec.analog.values[1].len())
        .map(|s| (s as f64 * 500.0) * sc)
        .collect();
    let c = round_trip(&rec, &C3dOptions::default());
    assert_eq!(c.analog.values, rec.analog.values);
}

#[test]
fn units_m_and_cm_are_read_in_millimetres() {
    for (units, factor) in [("m", 1000.0), ("cm", 10.0), ("mm", 1.0)] {
        let mut rec = small(Processor::Intel, true);
        rec.units = units.into();
        let c = round_trip(&rec, &C3dOptions::default());
        let p = rec.points[0][3].unwrap();
        assert_eq!(
            c.point(0, 3),
            Some([p[0] * factor, p[1] * factor, p[2] * factor]),
            "{units}"
        );
    }
    let mut rec = small(Processor::Intel, true);
    rec.units = "in".into();
    let mut bytes = Vec::new();
    c3d::write(&rec, &mut bytes).unwrap();
    let e = c3d::parse(&bytes, "inch.c3d", &C3dOptions::default())
        .unwrap_err()
        .to_string();
    assert!(e.starts_with("inch.c3d: POINT:UNITS is `in`"), "{e}");
}

#[test]
fn more_than_255_points_continue_in_labels2() {
    let n_points = 300;
    for float in [false, true] {
        let rec = Recording {
            float,
            labels: (0..n_points).map(|i| format!("M{i:03}")).collect(),
            descriptions: (0..n_points).map(|i| format!("marker {i}")).collect(),
            points: (0..n_points)
                .map(|p| {
                    (0..5)
                        .map(|f| {
                            Some([
                                exact(p as f64, float, 0.1),
                                exact(f as f64, float, 0.1),
                                0.0,
                            ])
                        })
                        .collect()
                })
                .collect(),
            ..Recording::default()
        };
        let c = round_trip(&rec, &C3dOptions::default());
        assert!(c.parameters.get("POINT", "LABELS2").is_some());
        assert_eq!(c.parameters.get("POINT", "LABELS").unwrap().dims, [4, 255]);
        assert_eq!(c.labels, rec.labels);
        assert_eq!(c.descriptions[299], "marker 299");
        assert_eq!(c.point(299, 4), rec.points[299][4]);
        assert_eq!(c.point(256, 2), rec.points[256][2]);
    }
}

#[test]
fn more_than_65535_frames_by_float_count_and_by_trial_fields() {
    let n = 70_001;
    for (long_frames, processor) in [
        (LongFrames::Float, Processor::Intel),
        (LongFrames::TrialFields, Processor::Mips),
    ] {
        let rec = Recording {
            processor,
            labels: vec!["A".into()],
            points: vec![(0..n).map(|f| Some([f as f64, 1.0, 2.0])).collect()],
            first_frame: 5,
            long_frames,
            ..Recording::default()
        };
        let c = round_trip(&rec, &C3dOptions::default());
        assert_eq!(c.n_frames(), n, "{long_frames:?}");
        assert_eq!(c.point(0, n - 1), Some([(n - 1) as f64, 1.0, 2.0]));
        if long_frames == LongFrames::TrialFields {
            assert_eq!(c.first_frame, 5);
            assert_eq!(
                c.parameters
                    .get("POINT", "FRAMES")
                    .unwrap()
                    .first_unsigned(),
                Some(65535.0)
            );
        }
        assert!(c.warnings.is_empty(), "{:?}", c.warnings);
    }
}

// --- force plates under a known load -----------------------------------------------------------

/// A plate of 600 x 400 mm centered at `center` (mm, lab, z up), plate x along lab x and plate y
/// along lab -y, so the plate z points down; corners numbered by plate quadrant.
fn corners(center: [f32; 2]) -> [[f32; 3]; 4] {
    let [cx, cy] = center;
    [
        [cx + 300.0, cy - 200.0, 0.0],
        [cx - 300.0, cy - 200.0, 0.0],
        [cx - 300.0, cy + 200.0, 0.0],
        [cx + 300.0, cy + 200.0, 0.0],
    ]
}

fn cross(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

/// The six channel values (N, N mm, plate frame, the reaction on the body) a plate gives when
/// the ground reaction on the body is `grf` (N, lab) acting at `cop` (m, lab, on the surface z = 0) with a free moment
/// `tz` (N m, about lab +z), for a plate whose transducer lies `depth` m below its surface
/// center `center` (m).
fn channels(grf: [f64; 3], cop: [f64; 3], tz: f64, center: [f64; 3], depth: f64) -> [f64; 6] {
    // Plate frame = (x, -y, -z) of the lab.
    let to_plate = |v: [f64; 3]| [v[0], -v[1], -v[2]];
    // The channels hold the reaction on the body (module doc of `c3d::plates`, "Force sign").
    let load = to_plate(grf);
    let transducer = [center[0], center[1], center[2] - depth];
    let r = to_plate([
        cop[0] - transducer[0],
        cop[1] - transducer[1],
        cop[2] - transducer[2],
    ]);
    let m = cross(r, load);
    let free = to_plate([0.0, 0.0, tz]);
    [
        load[0],
        load[1],
        load[2],
        (m[0] + free[0]) * 1e3,
        (m[1] + free[1]) * 1e3,
        (m[2] + free[2]) * 1e3,
    ]
}

#[test]
fn type_2_and_type_4_plates_return_a_known_load() {
    let n = 20;
    let depth_m = 0.040;
    let centers = [[0.3, 0.2, 0.0], [0.9, 0.2, 0.0]];
    let grf = [20.0, -30.0, 700.0];
    let cops = [[0.35, 0.15, 0.0], [0.82, 0.26, 0.0]];
    let tz = 5.0;
    // Type 4: measured = CAL^-1 corrected, CAL = diag(2, 2, 2, 0.5, 0.5, 0.5) with CAL(0, 2) = 0.1
    // (row 0, column 2: index 0 + 6 x 2 in Fortran order).
    let mut cal = [0.0f32; 36];
    for (i, d) in [2.0, 2.0, 2.0, 0.5, 0.5, 0.5].into_iter().enumerate() {
        cal[i + 6 * i] = d;
    }
    cal[12] = 0.1;
    let c1 = channels(grf, cops[0], tz, centers[0], depth_m);
    let c2 = channels(grf, cops[1], tz, centers[1], depth_m);
    let mut m2 = [0.0; 6];
    for i in 0..6 {
        m2[i] = c2[i] / cal[i + 6 * i] as f64;
    }
    m2[0] = (c2[0] - 0.1f32 as f64 * m2[2]) / 2.0;
    let mut values: Vec<Vec<f64>> = Vec::new();
    for v in c1.iter().chain(&m2) {
        values.push(vec![*v; n * 2]);
    }
    let units = ["N", "N", "N", "Nmm", "Nmm", "Nmm"];
    for origin_z in [-40.0f32, 40.0] {
        let rec = Recording {
            labels: vec!["A".into()],
            points: vec![vec![Some([0.0, 0.0, 0.0]); n]],
            analog: AnalogSpec {
                labels: (1..=12).map(|i| format!("CH{i}")).collect(),
                units: units.iter().chain(&units).map(|s| s.to_string()).collect(),
                samples_per_frame: 2,
                scale: vec![1.0; 12],
                offset: vec![0; 12],
                gen_scale: 1.0,
                unsigned: false,
                values: values.clone(),
            },
            plates: vec![
                PlateSpec {
                    plate_type: 2,
                    channels: (1..=6).collect(),
                    corners: corners([300.0, 200.0]),
                    origin: [0.0, 0.0, origin_z],
                    cal_matrix: None,
                },
                PlateSpec {
                    plate_type: 4,
                    channels: (7..=12).collect(),
                    corners: corners([900.0, 200.0]),
                    origin: [0.0, 0.0, origin_z],
                    cal_matrix: Some(cal),
                },
            ],
            ..Recording::default()
        };
        let c = round_trip(&rec, &C3dOptions::default());
        assert_eq!(c.plates.plates.len(), 2);
        assert_eq!(c.plates.rate_hz, 200.0);
        for (k, plate) in c.plates.plates.iter().enumerate() {
            assert_eq!(plate.samples.len(), n * 2);
            assert!(
                (plate.transducer_m[2] + depth_m).abs() < 1e-6,
                "{:?}",
                plate.transducer_m
            );
            let s = plate.samples[7];
            let transducer = [centers[k][0], centers[k][1], -depth_m];
            let r = [
                cops[k][0] - transducer[0],
                cops[k][1] - transducer[1],
                cops[k][2] - transducer[2],
            ];
            let m = cross(r, grf);
            let moment = [m[0], m[1], m[2] + tz];
            // 32-bit float storage of the channels: 1e-4 relative.
            for a in 0..3 {
                assert!(
                    (s.force_n[a] - grf[a]).abs() < 1e-3,
                    "plate {k}: {:?}",
                    s.force_n
                );
                assert!(
                    (s.moment_nm[a] - moment[a]).abs() < 1e-3,
                    "plate {k}: {:?} vs {moment:?}",
                    s.moment_nm
                );
                let cop = s.cop_m.unwrap();
                assert!((cop[a] - cops[k][a]).abs() < 1e-6, "plate {k}: {cop:?}");
            }
        }
        let flipped = c.warnings.iter().any(|w| w.contains("positive z"));
        assert_eq!(flipped, origin_z > 0.0, "{:?}", c.warnings);
        if origin_z > 0.0 {
            // Applied as stored, the transducer lies above the surface and the CoP moves.
            let opts = C3dOptions {
                plates: PlateOptions {
                    origin: OriginSign::AsStored,
                    ..PlateOptions::default()
                },
            };
            let c = round_trip(&rec, &opts);
            let cop = c.plates.plates[0].samples[0].cop_m.unwrap();
            assert!((cop[0] - cops[0][0]).abs() > 1e-3, "{cop:?}");
        }
    }
}

#[test]
fn zero_frames_give_the_baseline() {
    // An unloaded plate whose Fz channel reads 15 N of drift throughout, then a 700 N reaction
    // (upward, -z in the plate frame) from frame 11: FORCE_PLATFORM:ZERO = 1..10 removes the
    // drift.
    let n = 20;
    let mut values = vec![vec![0.0; n]; 6];
    for (f, v) in values[2].iter_mut().enumerate() {
        *v = if f < 10 { 15.0 } else { -685.0 };
    }
    let rec = Recording {
        labels: vec!["A".into()],
        points: vec![vec![Some([0.0; 3]); n]],
        analog: AnalogSpec {
            labels: (1..=6).map(|i| format!("CH{i}")).collect(),
            units: ["N", "N", "N", "Nmm", "Nmm", "Nmm"]
                .iter()
                .map(|s| s.to_string())
                .collect(),
            samples_per_frame: 1,
            scale: vec![1.0; 6],
            offset: vec![0; 6],
            gen_scale: 1.0,
            unsigned: false,
            values,
        },
        plates: vec![PlateSpec {
            plate_type: 2,
            channels: (1..=6).collect(),
            corners: corners([300.0, 200.0]),
            origin: [0.0, 0.0, -40.0],
            cal_matrix: None,
        }],
        zero: [1, 10],
        ..Recording::default()
    };
    let c = round_trip(&rec, &C3dOptions::default());
    let p = &c.plates.plates[0];
    assert_eq!(p.baseline[2], 15.0);
    assert_eq!(p.samples[3].force_n[2], 0.0);
    assert_eq!(p.samples[3].cop_m, None);
    assert_eq!(p.samples[15].force_n[2], 700.0);
}

/// A type-1 plate (Fx, Fy, Fz, Px, Py, Tz) and a type-3 plate (eight sensor channels under the
/// corners) under a known load give it back (statics, as for types 2 and 4 above).
#[test]
fn type_1_and_type_3_plates_return_a_known_load() {
    let n = 10;
    let depth = 0.040;
    let (a, b) = (0.21, 0.16); // type 3: half sensor spacings, m
    let centers = [[0.3, 0.2, 0.0], [0.9, 0.2, 0.0]];
    let cops = [[0.27, 0.31, 0.0], [0.95, 0.12, 0.0]];
    let grf = [-15.0, 25.0, 650.0];
    let tz = -3.0;
    let to_plate = |v: [f64; 3]| [v[0], -v[1], -v[2]];
    let f = to_plate(grf);
    // Type 1: the CoP in plate coordinates about the transducer (mm), the free moment (N mm).
    let r1 = to_plate([
        cops[0][0] - centers[0][0],
        cops[0][1] - centers[0][1],
        depth,
    ]);
    let t1 = [f[0], f[1], f[2], r1[0] * 1e3, r1[1] * 1e3, -tz * 1e3];
    // Type 3: sensor forces whose resultant about the sensor-plane center is F, M.
    let r3 = to_plate([
        cops[1][0] - centers[1][0],
        cops[1][1] - centers[1][1],
        depth,
    ]);
    let m = cross(r3, f);
    let m = [m[0], m[1], m[2] - tz];
    let (s, p, q) = (f[2], m[0] / b, m[1] / a);
    let fz = [
        (s + p - q) / 4.0,
        (s + p + q) / 4.0,
        (s - p + q) / 4.0,
        (s - p - q) / 4.0,
    ];
    let d = m[2] / b; // Fx34 - Fx12, with Fy14 = Fy23
    let t3 = [
        (f[0] - d) / 2.0,
        (f[0] + d) / 2.0,
        f[1] / 2.0,
        f[1] / 2.0,
        fz[0],
        fz[1],
        fz[2],
        fz[3],
    ];
    let values: Vec<Vec<f64>> = t1.iter().chain(&t3).map(|v| vec![*v; n]).collect();
    let units = [
        "N", "N", "N", "mm", "mm", "Nmm", "N", "N", "N", "N", "N", "N", "N", "N",
    ];
    let rec = Recording {
        labels: vec!["A".into()],
        points: vec![vec![Some([0.0; 3]); n]],
        analog: AnalogSpec {
            labels: (1..=14).map(|i| format!("CH{i}")).collect(),
            units: units.iter().map(|s| s.to_string()).collect(),
            samples_per_frame: 1,
            scale: vec![1.0; 14],
            offset: vec![0; 14],
            gen_scale: 1.0,
            unsigned: false,
            values,
        },
        plates: vec![
            PlateSpec {
                plate_type: 1,
                channels: (1..=6).collect(),
                corners: corners([300.0, 200.0]),
                origin: [0.0, 0.0, -40.0],
                cal_matrix: None,
            },
            PlateSpec {
                plate_type: 3,
                channels: (7..=14).collect(),
                corners: corners([900.0, 200.0]),
                origin: [210.0, 160.0, -40.0],
                cal_matrix: None,
            },
        ],
        ..Recording::default()
    };
    let c = round_trip(&rec, &C3dOptions::default());
    assert_eq!(c.plates.plates.len(), 2, "{:?}", c.warnings);
    for (k, plate) in c.plates.plates.iter().enumerate() {
        let s = plate.samples[4];
        let transducer = [centers[k][0], centers[k][1], -depth];
        let r = [
            cops[k][0] - transducer[0],
            cops[k][1] - transducer[1],
            cops[k][2] - transducer[2],
        ];
        let mm = cross(r, grf);
        let moment = [mm[0], mm[1], mm[2] + tz];
        let cop = s.cop_m.unwrap();
        for i in 0..3 {
            assert!(
                (s.force_n[i] - grf[i]).abs() < 1e-3,
                "type {}: {:?}",
                plate.plate_type,
                s.force_n
            );
            assert!(
                (s.moment_nm[i] - moment[i]).abs() < 1e-3,
                "type {}: {:?} vs {moment:?}",
                plate.plate_type,
                s.moment_nm
            );
            assert!(
                (cop[i] - cops[k][i]).abs() < 1e-6,
                "type {}: {cop:?}",
                plate.plate_type
            );
        }
    }
}
