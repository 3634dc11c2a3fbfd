//! Fixed-point text of numbers for the CSV outputs: an `f64` with six decimals, byte for byte
//! the text of `format!("{v:.6}")`, appended to a reused buffer without allocation (the
//! formatting machinery of `write!` costs more than the rest of a `frames.csv` row).
//!
//! Method (exact, no floating-point rounding): a finite `v` is `m 2^e` exactly, with `m` its
//! 53-bit significand. For `|v| < 10^12` the exponent is negative, so the count of millionths
//! `|v| 10^6 = m 10^6 / 2^-e`, and `m 10^6 < 2^73` fits in 128-bit integers: the quotient and the
//! remainder of that division give the count rounded to the nearest integer, ties to even,
//! which is how the standard library rounds a decimal precision. A negative value keeps its
//! `-` even when it rounds to zero (`-0.000000`), as `std` does. Larger magnitudes and non-finite
//! values are handed to `std` formatting. The module's tests compare it with `format!` on ties,
//! boundaries and random values.

use std::io::Write;

/// Millionths per unit.
const SCALE: u64 = 1_000_000;
/// Magnitudes from here on go through `std` formatting.
const LIMIT: f64 = 1e12;

/// The digit pairs `00` to `99`.
const PAIRS: &[u8; 200] = b"0001020304050607080910111213141516171819\
2021222324252627282930313233343536373839\
4041424344454647484950515253545556575859\
6061626364656667686970717273747576777879\
8081828384858687888990919293949596979899";

/// Appends `v` with six decimals, exactly as `format!("{v:.6}")` writes it.
///
/// ```
/// let mut buf = Vec::new();
/// gravline::report::fixed::push_fixed6(&mut buf, -0.0078125);
/// assert_eq!(buf, b"-0.007812"); // a tie, rounded to even
/// ```
pub fn push_fixed6(buf: &mut Vec<u8>, v: f64) {
    if !v.is_finite() || v.abs() >= LIMIT {
        // Writing into a Vec cannot fail.
        let _ = write!(buf, "{v:.6}");
        return;
    }
    let bits = v.to_bits();
    let negative = bits >> 63 == 1;
    let biased = ((bits >> 52) & 0x7ff) as i32;
    let fraction = bits & ((1u64 << 52) - 1);
    // |v| = m 2^-shift; below 10^12 the shift is at least 13.
    let (m, shift) = if biased == 0 {
        (fraction, 1074)
    } else {
        (fraction | (1u64 << 52), (1075 - biased) as u32)
    };
    let millionths = round_shifted(u128::from(m) * u128::from(SCALE), shift);
    // The text is built from its end in `text` (sign, at most 12 integer digits, point, six
    // decimals) and appended at once.
    let mut text = [0u8; 24];
    let mut i = text.len() - 7;
    text[i] = b'.';
    let frac = (millionths % SCALE) as usize;
    for (k, pair) in [frac / 10_000, frac / 100 % 100, frac % 100]
        .into_iter()
        .enumerate()
    {
        text[i + 1 + 2 * k..i + 3 + 2 * k].copy_from_slice(&PAIRS[2 * pair..2 * pair + 2]);
    }
    let mut n = millionths / SCALE;
    while n >= 100 {
        let pair = (n % 100) as usize;
        n /= 100;
        i -= 2;
        text[i..i + 2].copy_from_slice(&PAIRS[2 * pair..2 * pair + 2]);
    }
    if n >= 10 {
        let pair = n as usize;
        i -= 2;
        text[i..i + 2].copy_from_slice(&PAIRS[2 * pair..2 * pair + 2]);
    } else {
        i -= 1;
        text[i] = b'0' + n as u8;
    }
    if negative {
        i -= 1;
        text[i] = b'-';
    }
    buf.extend_from_slice(&text[i..]);
}

/// `n / 2^shift` rounded to the nearest integer, ties to even. `n < 2^73` and the result is
/// below `10^18` (the caller's magnitude limit).
fn round_shifted(n: u128, shift: u32) -> u64 {
    if shift >= 100 {
        // n < 2^73 is less than half of 2^shift: rounds to zero.
        return 0;
    }
    let q = (n >> shift) as u64;
    let r = n & ((1u128 << shift) - 1);
    let half = 1u128 << (shift - 1);
    if r > half || (r == half && q % 2 == 1) {
        q + 1
    } else {
        q
    }
}

/// Significant digits kept in `summary.json` (and so in the batch tables built from it): the
/// figures carry far fewer (marker noise of a tenth of a millimetre, frames of milliseconds), and
/// 12 digits drop the last-bit noise of sums and differences (`11.999999999999998` is `12`).
pub const SUMMARY_DIGITS: usize = 12;

/// `v` rounded to `digits` significant decimal digits (through its decimal text, so the
/// shortest text of the result has at most that many digits); non-finite values unchanged.
///
/// ```
/// use gravline::report::fixed::round_significant;
/// assert_eq!(round_significant(11.999999999999998, 12), 12.0);
/// assert_eq!(round_significant(0.06999999999999999, 12), 0.07);
/// assert_eq!(round_significant(4.546468955593633e-5, 12), 4.54646895559e-5);
/// ```
pub fn round_significant(v: f64, digits: usize) -> f64 {
    if !v.is_finite() || v == 0.0 || digits == 0 {
        return v;
    }
    format!("{v:.prec$e}", prec = digits - 1)
        .parse()
        .unwrap_or(v)
}

/// Every float of a JSON value rounded by [`round_significant`] (integers stay as they are).
pub fn round_json(value: &mut serde_json::Value, digits: usize) {
    match value {
        serde_json::Value::Number(n) if n.is_f64() => {
            if let Some(r) = n
                .as_f64()
                .and_then(|v| serde_json::Number::from_f64(round_significant(v, digits)))
            {
                *n = r;
            }
        }
        serde_json::Value::Array(items) => items.iter_mut().for_each(|v| round_json(v, digits)),
        serde_json::Value::Object(map) => map.values_mut().for_each(|v| round_json(v, digits)),
        _ => {}
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ours(v: f64) -> String {
        let mut buf = Vec::new();
        push_fixed6(&mut buf, v);
        String::from_utf8(buf).unwrap()
    }

    fn check(v: f64) {
        assert_eq!(
            ours(v),
            format!("{v:.6}"),
            "{v:e} (bits {:#x})",
            v.to_bits()
        );
    }

    #[test]
    fn ties_round_to_even_as_std_does() {
        // k / 128 with k odd has 7 decimals ending in 5: exact ties at six decimals.
        for k in [1.0, 3.0, 5.0, 7.0, 101.0, 12_345.0] {
            check(k / 128.0);
            check(-k / 128.0);
        }
        assert_eq!(ours(1.0 / 128.0), "0.007812");
        assert_eq!(ours(3.0 / 128.0), "0.023438");
    }

    #[test]
    fn zeros_signs_and_tiny_values_match_std() {
        for v in [
            0.0,
            -0.0,
            5e-7,
            -5e-7,
            4.9999999e-7,
            5.0000001e-7,
            -1e-9,
            1e-300,
            f64::MIN_POSITIVE,
            -f64::from_bits(1),
            f64::from_bits(1),
        ] {
            check(v);
        }
        assert_eq!(ours(-1e-9), "-0.000000");
    }

    #[test]
    fn boundaries_and_large_values_match_std() {
        for v in [
            0.9999995,
            0.99999949999,
            9.9999995,
            999_999.999_999_5,
            1e12 - 0.001,
            1e12,
            -1e12,
            1e15 + 0.3,
            1e300,
            f64::MAX,
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            123.456,
            -9.81,
            1.0 / 3.0,
        ] {
            check(v);
        }
    }

    #[test]
    fn random_values_match_std() {
        // xorshift64* (Vigna 2016): random bit patterns over every magnitude below 10^12, and
        // random millimetre-scale values near six-decimal midpoints.
        let mut s = 0x9e37_79b9_7f4a_7c15u64;
        let mut next = || {
            s ^= s >> 12;
            s ^= s << 25;
            s ^= s >> 27;
            s.wrapping_mul(0x2545_f491_4f6c_dd1d)
        };
        for _ in 0..200_000 {
            let v = f64::from_bits(next());
            if v.is_finite() && v.abs() < 1e13 {
                check(v);
            }
            let u = (next() >> 11) as f64 / (1u64 << 53) as f64;
            let near_tie = ((u * 2e9).round() + 0.5) / 1e6 - 1000.0;
            check(near_tie);
            check(f64::from_bits(near_tie.to_bits() + 1));
            check(f64::from_bits(near_tie.to_bits() - 1));
            check(u * 20.0 - 10.0);
        }
    }
}
