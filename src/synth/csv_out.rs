//! Writes a synthetic trial as a wide trial CSV (docs/DESIGN.md 3.1): `#` comment lines, a header
//! `time,<label>_x,<label>_y,<label>_z,...`, one row per frame, time in seconds with 6 decimals,
//! coordinates in millimetres with 2 decimals, empty cells where a marker is missing.
//!
//! Numbers are formatted by hand as fixed-point integers into one reused byte buffer, so writing
//! costs no allocation per row (a long benchmark trial has millions of cells).

use super::SynthTrial;
use std::io::{self, Write};

/// Bytes gathered before each write to the underlying writer.
const CHUNK_BYTES: usize = 1 << 16;

/// Writes `trial` as a wide CSV to `w`; each line of `comment` becomes a `# ` line before the
/// header.
///
/// Fails with `InvalidInput` when the trial's labels, tracks and times disagree in number, and
/// with the writer's error otherwise.
pub fn write_wide_csv(trial: &SynthTrial, comment: &str, mut w: impl Write) -> io::Result<()> {
    let n_frames = trial.times_s.len();
    if trial.labels.len() != trial.positions.len() {
        return Err(io::Error::new(
            io::ErrorKind::InvalidInput,
            format!(
                "trial `{}` has {} labels but {} marker tracks",
                trial.name,
                trial.labels.len(),
                trial.positions.len()
            ),
        ));
    }
    if let Some((label, track)) = trial
        .labels
        .iter()
        .zip(&trial.positions)
        .find(|(_, t)| t.len() != n_frames)
    {
        return Err(io::Error::new(
            io::ErrorKind::InvalidInput,
            format!(
                "trial `{}`: marker `{label}` has {} frames, the trial {n_frames}",
                trial.name,
                track.len()
            ),
        ));
    }
    let mut buf: Vec<u8> = Vec::with_capacity(CHUNK_BYTES + 4096);
    for line in comment.lines() {
        buf.extend_from_slice(b"#");
        if !line.is_empty() {
            buf.push(b' ');
            buf.extend_from_slice(line.as_bytes());
        }
        buf.push(b'\n');
    }
    buf.extend_from_slice(b"time");
    for label in &trial.labels {
        for axis in ["_x", "_y", "_z"] {
            buf.push(b',');
            buf.extend_from_slice(label.as_bytes());
            buf.extend_from_slice(axis.as_bytes());
        }
    }
    buf.push(b'\n');
    for (frame, t) in trial.times_s.iter().enumerate() {
        push_fixed(&mut buf, *t, 6);
        for track in &trial.positions {
            match track.get(frame).copied().flatten() {
                Some(p) => {
                    for c in p {
                        buf.push(b',');
                        push_fixed(&mut buf, c * 1000.0, 2);
                    }
                }
                None => buf.extend_from_slice(b",,,"),
            }
        }
        buf.push(b'\n');
        if buf.len() >= CHUNK_BYTES {
            w.write_all(&buf)?;
            buf.clear();
        }
    }
    w.write_all(&buf)?;
    w.flush()
}

const POW10: [u64; 10] = [
    1,
    10,
    100,
    1_000,
    10_000,
    100_000,
    1_000_000,
    10_000_000,
    100_000_000,
    1_000_000_000,
];

/// Appends `v` rounded to `decimals` (at most 9) decimals, without allocating. Non-finite values
/// are written as `NaN`; magnitudes beyond the fixed-point range fall back to `std` formatting.
pub(crate) fn push_fixed(buf: &mut Vec<u8>, v: f64, decimals: usize) {
    let decimals = decimals.min(9);
    if !v.is_finite() {
        buf.extend_from_slice(b"NaN");
        return;
    }
    let scale = POW10[decimals];
    let scaled = (v * scale as f64).round();
    if scaled.abs() >= 9.0e15 {
        // Writing to a Vec cannot fail.
        let _ = write!(buf, "{v:.decimals$}");
        return;
    }
    let n = scaled.abs() as u64;
    if scaled < 0.0 && n != 0 {
        buf.push(b'-');
    }
    push_u64(buf, n / scale);
    if decimals > 0 {
        buf.push(b'.');
        let frac = n % scale;
        let mut digits = [b'0'; 9];
        let mut f = frac;
        for d in digits[..decimals].iter_mut().rev() {
            *d = b'0' + (f % 10) as u8;
            f /= 10;
        }
        buf.extend_from_slice(&digits[..decimals]);
    }
}

fn push_u64(buf: &mut Vec<u8>, mut n: u64) {
    let mut digits = [0u8; 20];
    let mut i = digits.len();
    loop {
        i -= 1;
        digits[i] = b'0' + (n % 10) as u8;
        n /= 10;
        if n == 0 {
            break;
        }
    }
    buf.extend_from_slice(&digits[i..]);
}

#[cfg(test)]
mod tests {
    use super::*;

    fn fixed(v: f64, d: usize) -> String {
        let mut b = Vec::new();
        push_fixed(&mut b, v, d);
        String::from_utf8(b).unwrap()
    }

    #[test]
    fn fixed_point_matches_std_formatting_away_from_ties() {
        for (v, d, s) in [
            (0.0, 2, "0.00"),
            (-0.001, 2, "0.00"),
            (-0.006, 2, "-0.01"),
            (1234.5678, 2, "1234.57"),
            (-987.654, 2, "-987.65"),
            (0.005, 6, "0.005000"),
            (5.99, 6, "5.990000"),
            (42.0, 0, "42"),
            (1e17, 2, "100000000000000000.00"),
        ] {
            assert_eq!(fixed(v, d), s, "{v}");
        }
        assert_eq!(fixed(f64::NAN, 2), "NaN");
        // Every value, reparsed, lies within half a unit of the last decimal (plus rounding).
        let mut x = -2500.0;
        while x < 2500.0 {
            let back: f64 = fixed(x, 2).parse().unwrap();
            assert!((back - x).abs() <= 0.005 + 1e-9, "{x} -> {back}");
            x += 0.377_777;
        }
    }
}
