//! The wide CSV writer against an independent reader (the `csv` crate): comment lines, header,
//! millimetres with 2 decimals, empty cells for gaps; and determinism (same seed, same bytes).

use gravline::synth::{generate, long_trial, write_wide_csv, Scenario, SynthOptions, SynthTrial};

fn csv_bytes(t: &SynthTrial, comment: &str) -> Vec<u8> {
    let mut out = Vec::new();
    write_wide_csv(t, comment, &mut out).unwrap();
    out
}

/// Writing and reading back with the csv crate gives the labels, the times (within 5e-7 s),
/// every coordinate (within 0.005 mm, half the last printed digit) and every gap.
#[test]
fn csv_round_trips_through_the_csv_crate() {
    for scenario in Scenario::ALL {
        let t = generate(scenario, &SynthOptions::for_scenario(scenario));
        let gaps: usize = t.positions.iter().flatten().filter(|p| p.is_none()).count();
        assert!(gaps > 0, "{scenario:?} has gaps by default");
        let bytes = csv_bytes(&t, "synthetic test trial\nunits mm");
        let text = String::from_utf8(bytes.clone()).unwrap();
        assert!(text.starts_with("# synthetic test trial\n# units mm\ntime,"));
        let mut reader = csv::ReaderBuilder::new()
            .comment(Some(b'#'))
            .from_reader(bytes.as_slice());
        let header: Vec<String> = reader.headers().unwrap().iter().map(String::from).collect();
        assert_eq!(header.len(), 1 + 3 * t.labels.len());
        assert_eq!(header[0], "time");
        for (m, label) in t.labels.iter().enumerate() {
            for (k, axis) in ["x", "y", "z"].iter().enumerate() {
                assert_eq!(header[1 + 3 * m + k], format!("{label}_{axis}"));
            }
        }
        let mut frames = 0;
        for (i, record) in reader.records().enumerate() {
            let record = record.unwrap();
            let time: f64 = record[0].parse().unwrap();
            assert!((time - t.times_s[i]).abs() < 5e-7);
            for (m, track) in t.positions.iter().enumerate() {
                for k in 0..3 {
                    let cell = &record[1 + 3 * m + k];
                    match track[i] {
                        Some(p) => {
                            let mm: f64 = cell.parse().unwrap();
                            assert!(
                                (mm - p[k] * 1e3).abs() <= 0.005 + 1e-9,
                                "{cell} vs {}",
                                p[k]
                            );
                        }
                        None => assert!(cell.is_empty()),
                    }
                }
            }
            frames += 1;
        }
        assert_eq!(frames, t.times_s.len());
    }
}

/// Same options, same bytes; another seed changes the noise, hence the bytes.
#[test]
fn same_seed_gives_the_same_bytes() {
    for scenario in Scenario::ALL {
        let o = SynthOptions::for_scenario(scenario);
        let a = csv_bytes(&generate(scenario, &o), "");
        let b = csv_bytes(&generate(scenario, &o), "");
        assert_eq!(a, b, "{scenario:?}");
        let mut other = o.clone();
        other.seed += 1;
        assert_ne!(
            a,
            csv_bytes(&generate(scenario, &other), ""),
            "{scenario:?}"
        );
    }
    assert_eq!(
        csv_bytes(&long_trial(500, 45, 3), ""),
        csv_bytes(&long_trial(500, 45, 3), "")
    );
}

/// A trial whose tracks disagree with its times is refused with an error, not a panic.
#[test]
fn inconsistent_trial_is_an_error() {
    let mut t = generate(
        Scenario::Stand,
        &SynthOptions::for_scenario(Scenario::Stand),
    );
    t.positions[3].pop();
    let err = write_wide_csv(&t, "", Vec::new()).unwrap_err();
    assert_eq!(err.kind(), std::io::ErrorKind::InvalidInput);
    assert!(err.to_string().contains(&t.labels[3]), "{err}");
    t.labels.pop();
    assert!(write_wide_csv(&t, "", Vec::new()).is_err());
}
