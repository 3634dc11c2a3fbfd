//! No C3D file makes the reader panic: truncated files, sections pointing past the end, zero or
//! huge counts, absurd rates, corrupted parameter sections. Each failure is one line that names
//! the file and what is wrong.

use gravline::c3d::write::{AnalogSpec, PlateSpec, Recording};
use gravline::c3d::{self, C3dOptions, Processor};

mod common;

fn sample_file(processor: Processor, float: bool) -> Vec<u8> {
    let n = 12;
    let rec = Recording {
        processor,
        float,
        labels: vec!["A".into(), "B".into()],
        points: vec![
            (0..n).map(|f| Some([f as f64, 2.0, 3.0])).collect(),
            (0..n)
                .map(|f| (f % 3 != 0).then_some([1.0, f as f64, 3.0]))
                .collect(),
        ],
        analog: AnalogSpec {
            labels: (1..=6).map(|i| format!("CH{i}")).collect(),
            units: ["N", "N", "N", "Nmm", "Nmm", "Nmm"]
                .iter()
                .map(|s| s.to_string())
                .collect(),
            samples_per_frame: 2,
            scale: vec![1.0; 6],
            offset: vec![0; 6],
            gen_scale: 1.0,
            unsigned: false,
            values: (0..6)
                .map(|c| (0..2 * n).map(|s| (c * s) as f64 - 300.0).collect())
                .collect(),
        },
        plates: vec![PlateSpec {
            plate_type: 2,
            channels: (1..=6).collect(),
            corners: [
                [600.0, 0.0, 0.0],
                [0.0, 0.0, 0.0],
                [0.0, 400.0, 0.0],
                [600.0, 400.0, 0.0],
            ],
            origin: [0.0, 0.0, -40.0],
            cal_matrix: None,
        }],
        zero: [1, 3],
        ..Recording::default()
    };
    let mut bytes = Vec::new();
    c3d::write(&rec, &mut bytes).unwrap();
    bytes
}

/// Reads `bytes`; an error must be one line starting with the file name.
fn read(bytes: &[u8]) -> Result<c3d::C3d, String> {
    c3d::parse(bytes, "bad.c3d", &C3dOptions::default()).map_err(|e| {
        let text = e.to_string();
        assert!(
            text.starts_with("bad.c3d: ") && !text.contains('\n'),
            "{text}"
        );
        text
    })
}

#[test]
fn every_truncation_and_byte_change_reads_or_fails_cleanly() {
    for (processor, float) in [
        (Processor::Intel, true),
        (Processor::Dec, false),
        (Processor::Mips, true),
    ] {
        {
            let good = sample_file(processor, float);
            assert!(read(&good).is_ok());
            for n in 0..good.len() {
                if let Ok(c) = read(&good[..n]) {
                    // Only the zero padding after the last frame can go.
                    assert_eq!(c.n_frames(), 12, "cut at {n}");
                }
            }
            // Every byte of the header and the parameter section, set to telling values.
            let data_start = 512 * (good[512 + 2] as usize + 1);
            for i in 0..data_start {
                for v in [0u8, 0x7f, 0x80, 0xff] {
                    let mut bad = good.clone();
                    bad[i] = v;
                    let _ = read(&bad);
                }
            }
        }
    }
}

#[test]
fn the_samples_survive_truncation_and_corruption() {
    let dir = common::c3d_samples_dir();
    for name in ["formats-six/Eb015vr.c3d", "formats-plates/sgi_int.c3d"] {
        let good = std::fs::read(dir.join(name)).unwrap();
        for n in (0..good.len()).step_by(4093) {
            let _ = read(&good[..n]);
        }
        for i in (0..good.len().min(6000)).step_by(29) {
            let mut bad = good.clone();
            bad[i] ^= 0xa5;
            let _ = read(&bad);
        }
    }
}

/// Sets a parameter's first value in place (2-byte integer or 4-byte float at its data).
fn patch(bytes: &mut [u8], group: &str, name: &str, value: f32) {
    let c = c3d::parse(bytes, "x.c3d", &C3dOptions::default()).unwrap();
    let p = c.parameters.get(group, name).unwrap().clone();
    let id = c.parameters.groups.iter().find(|g| g.1 == group).unwrap().0 as u8;
    // The record: name length, group id, name, then the offset, type and dimension count.
    let at = (512..bytes.len() - name.len())
        .find(|&i| {
            &bytes[i..i + name.len()] == name.as_bytes()
                && bytes[i - 1] == id
                && bytes[i - 2] == name.len() as u8
        })
        .unwrap();
    let data = at + name.len() + 2 + 2 + p.dims.len();
    match p.data {
        c3d::ParamData::Float(_) => bytes[data..data + 4].copy_from_slice(&value.to_le_bytes()),
        _ => bytes[data..data + 2].copy_from_slice(&(value as i32 as i16).to_le_bytes()),
    }
}

#[test]
fn each_kind_of_damage_has_its_message() {
    let good = sample_file(Processor::Intel, true);
    type Damage = Box<dyn Fn(&mut Vec<u8>)>;
    let cases: Vec<(Damage, &str)> = vec![
        (
            Box::new(|b| b.truncate(b.len() - 600)),
            "the file is truncated",
        ),
        (Box::new(|b| b[0] = 200), "past the end of the file"),
        (Box::new(|b| b[1] = 0x51), "not a c3d file"),
        (
            Box::new(|b| b.truncate(300)),
            "shorter than the 512-byte header",
        ),
        (Box::new(|b| b[512 + 3] = 90), "unknown processor type 90"),
        (Box::new(|b| patch(b, "POINT", "RATE", 1e9)), "frame rate"),
        (Box::new(|b| patch(b, "POINT", "RATE", 0.0)), "frame rate"),
        (
            Box::new(|b| patch(b, "POINT", "RATE", f32::NAN)),
            "frame rate",
        ),
        (
            Box::new(|b| patch(b, "POINT", "USED", -1.0)),
            "the file is truncated",
        ),
        (
            Box::new(|b| patch(b, "POINT", "FRAMES", 30000.0)),
            "the file is truncated",
        ),
        (
            Box::new(|b| patch(b, "POINT", "SCALE", 0.0)),
            "POINT:SCALE is 0",
        ),
        (
            Box::new(|b| patch(b, "POINT", "DATA_START", 60000.0)),
            "the file is truncated",
        ),
        (
            Box::new(|b| patch(b, "POINT", "DATA_START", 1.0)),
            "block 3 or later",
        ),
        (
            Box::new(|b| patch(b, "ANALOG", "RATE", 33.0)),
            "not a whole multiple",
        ),
        (
            Box::new(|b| patch(b, "ANALOG", "RATE", 1e9)),
            "beyond any recording",
        ),
    ];
    for (damage, expected) in cases {
        let mut bad = good.clone();
        damage(&mut bad);
        let e = read(&bad)
            .err()
            .unwrap_or_else(|| format!("no error, expected `{expected}`"));
        assert!(e.contains(expected), "expected `{expected}` in: {e}");
    }
    // No points and no analog channels: nothing to read.
    let mut empty = Vec::new();
    c3d::write(
        &Recording {
            labels: vec![],
            points: vec![],
            ..Recording::default()
        },
        &mut empty,
    )
    .unwrap();
    let c = read(&empty).unwrap();
    assert_eq!(c.n_frames(), 0);
    let e = c3d::to_trial(&c, "empty", &Default::default())
        .unwrap_err()
        .to_string();
    assert!(e.contains("no frames"), "{e}");
}

#[test]
fn a_plate_naming_a_missing_channel_is_skipped_with_a_warning() {
    let mut bytes = sample_file(Processor::Intel, true);
    patch(&mut bytes, "FORCE_PLATFORM", "CHANNEL", 40.0);
    let c = read(&bytes).unwrap();
    assert!(c.plates.plates.is_empty());
    assert!(
        c.warnings.iter().any(|w| w.contains("analog channel 40")),
        "{:?}",
        c.warnings
    );
    assert_eq!(c.n_frames(), 12);
}
