//! Cells of a trial file: the one number parser of the reader, and what a time, a coordinate
//! or a marker label cell may hold, with the located error when it holds something else.
//!
//! [`number`]: a cell like `-1234.56` (at most 19 digits, no exponent) is the integer of its
//! digits divided by a power of ten. When that integer is at most 2^53 and the power at most
//! 10^22, both are exact `f64` values and one IEEE division rounds their quotient correctly:
//! the same value `str::parse::<f64>` returns (Clinger 1990, "How to read floating point
//! numbers accurately", PLDI '90, the fast path). Any other text goes to `str::parse`.

use csv::ByteRecord;

use super::error::{shown, Column, TrialError, TrialErrorKind as Kind};
use super::header::{column_of, Clock};

/// Powers of ten exact in `f64`.
const POW10: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

/// How cells are separated and how their decimal mark is written.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Format {
    /// `,`, `;` or a tab.
    pub sep: u8,
    /// `,` is a decimal mark too (files separated by `;`).
    pub comma_decimal: bool,
}

#[cfg(test)]
impl Format {
    /// Comma-separated, `.` as the decimal mark.
    pub const CSV: Format = Format {
        sep: b',',
        comma_decimal: false,
    };
}

/// A cell `[+-]digits[.digits]` starting at `at` and closed by the separator, a line end or
/// the end of the text, read exactly (module doc), and the offset of its end; `None` for any
/// other cell, which [`parse_cell`] then reads with `str::parse`.
#[inline]
pub(super) fn number(text: &[u8], at: usize, format: Format) -> Option<(f64, usize)> {
    let mut i = at;
    let negative = text.get(i) == Some(&b'-');
    if negative || text.get(i) == Some(&b'+') {
        i += 1;
    }
    let mut mantissa: u64 = 0;
    let int_start = i;
    while let Some(d) = text
        .get(i)
        .map(|b| b.wrapping_sub(b'0'))
        .filter(|d| *d <= 9)
    {
        mantissa = mantissa.wrapping_mul(10).wrapping_add(u64::from(d));
        i += 1;
    }
    let int_digits = i - int_start;
    let mut frac_digits = 0;
    if text
        .get(i)
        .is_some_and(|&b| b == b'.' || (b == b',' && format.comma_decimal))
    {
        i += 1;
        let frac_start = i;
        while let Some(d) = text
            .get(i)
            .map(|b| b.wrapping_sub(b'0'))
            .filter(|d| *d <= 9)
        {
            mantissa = mantissa.wrapping_mul(10).wrapping_add(u64::from(d));
            i += 1;
        }
        frac_digits = i - frac_start;
        if frac_digits == 0 {
            return None;
        }
    }
    let closed = match text.get(i) {
        None | Some(b'\n' | b'\r') => true,
        Some(&b) => b == format.sep,
    };
    // At most 19 digits: the mantissa did not wrap.
    if !closed || int_digits == 0 || int_digits + frac_digits > 19 || mantissa > 1 << 53 {
        return None;
    }
    let v = mantissa as f64 / POW10[frac_digits];
    // The sign bit set without a branch (signs of coordinates are hard to predict).
    Some((f64::from_bits(v.to_bits() | u64::from(negative) << 63), i))
}

pub(super) enum CellProblem {
    NotUtf8,
    NotANumber,
    Infinite,
}

/// Parses a coordinate-like cell: `Ok(None)` for empty and NaN, an error for text and infinity.
#[inline]
pub(super) fn parse_cell(bytes: &[u8], format: Format) -> Result<Option<f64>, CellProblem> {
    let b = bytes.trim_ascii();
    if b.is_empty() {
        return Ok(None);
    }
    if let Some((v, end)) = number(b, 0, format) {
        if end == b.len() {
            return Ok(Some(v));
        }
    }
    let s = std::str::from_utf8(b).map_err(|_| CellProblem::NotUtf8)?;
    let parsed = if format.comma_decimal && s.contains(',') {
        s.replacen(',', ".", 1).parse::<f64>()
    } else {
        s.parse::<f64>()
    };
    match parsed {
        Ok(v) if v.is_nan() => Ok(None),
        Ok(v) if v.is_infinite() => Err(CellProblem::Infinite),
        Ok(v) => Ok(Some(v)),
        Err(_) => Err(CellProblem::NotANumber),
    }
}

/// The hint of a coordinate that is not a number.
const COORDINATE_HINT: &str = "write a decimal number with `.` as the decimal mark, or leave \
                               the cell empty (or `NaN`) where the marker was not seen";

/// What a file is being read as, for errors with positions.
pub(super) struct Ctx<'a> {
    pub file: &'a str,
    pub names: &'a [String],
    pub format: Format,
}

impl Ctx<'_> {
    fn column(&self, col: usize) -> Column {
        column_of(self.names, col)
    }

    /// A column named by its index only (for cells that are not text).
    fn index_column(col: usize) -> Column {
        Column {
            index: col + 1,
            name: String::new(),
        }
    }

    /// `Ok(true)` for a row as wide as the header, `Ok(false)` for a blank one (to skip).
    pub fn check_width(&self, rec: &ByteRecord, line: u64) -> Result<bool, TrialError> {
        if rec.len() == self.names.len() {
            return Ok(true);
        }
        if rec.iter().all(|f| f.trim_ascii().is_empty()) && rec.len() <= 1 {
            return Ok(false);
        }
        Err(TrialError::at(
            self.file,
            line,
            Kind::Ragged {
                expected: self.names.len(),
                found: rec.len(),
            },
        ))
    }

    fn cell_text(rec: &ByteRecord, col: usize) -> String {
        shown(&String::from_utf8_lossy(
            rec.get(col).unwrap_or(b"").trim_ascii(),
        ))
    }

    fn coordinate_error(
        &self,
        problem: CellProblem,
        rec: &ByteRecord,
        line: u64,
        col: usize,
    ) -> TrialError {
        let text = Self::cell_text(rec, col);
        match problem {
            CellProblem::NotUtf8 => {
                TrialError::cell(self.file, line, Self::index_column(col), Kind::NotUtf8)
            }
            CellProblem::NotANumber => TrialError::cell(
                self.file,
                line,
                self.column(col),
                Kind::NotANumber {
                    text,
                    hint: COORDINATE_HINT,
                },
            ),
            CellProblem::Infinite => TrialError::cell(
                self.file,
                line,
                self.column(col),
                Kind::NonFiniteCoordinate { text },
            ),
        }
    }

    /// The clock value of a row: seconds, or a whole frame number.
    #[inline]
    pub fn clock(
        &self,
        rec: &ByteRecord,
        line: u64,
        col: usize,
        clock: Clock,
    ) -> Result<f64, TrialError> {
        let parsed = parse_cell(rec.get(col).unwrap_or(b""), self.format);
        let text = || Self::cell_text(rec, col);
        let kind = match parsed {
            Ok(Some(v)) => {
                if clock == Clock::Frames && !is_frame_number(v) {
                    Kind::NotAFrameNumber { text: text() }
                } else {
                    return Ok(v);
                }
            }
            Ok(None) | Err(CellProblem::Infinite) => Kind::NonFiniteTime { text: text() },
            Err(CellProblem::NotUtf8) => {
                return Err(TrialError::cell(
                    self.file,
                    line,
                    Self::index_column(col),
                    Kind::NotUtf8,
                ))
            }
            Err(CellProblem::NotANumber) => Kind::NotANumber {
                text: text(),
                hint: match clock {
                    Clock::Seconds => "every row needs its time in seconds as a decimal number",
                    Clock::Frames => "every row needs its frame number as a whole number",
                },
            },
        };
        Err(TrialError::cell(self.file, line, self.column(col), kind))
    }

    /// Three coordinates scaled to metres, NaN where missing: a point is missing when any of
    /// its coordinates is.
    #[inline]
    pub fn point(
        &self,
        rec: &ByteRecord,
        line: u64,
        cols: &[usize; 3],
        scale: f64,
    ) -> Result<[f64; 3], TrialError> {
        let mut p = [f64::NAN; 3];
        for (slot, &col) in p.iter_mut().zip(cols) {
            match parse_cell(rec.get(col).unwrap_or(b""), self.format) {
                Ok(Some(v)) => *slot = v * scale,
                Ok(None) => {}
                Err(problem) => return Err(self.coordinate_error(problem, rec, line, col)),
            }
        }
        Ok(p)
    }

    pub fn label(&self, bytes: &[u8], line: u64, col: usize) -> Result<String, TrialError> {
        if bytes.is_empty() {
            return Err(TrialError::cell(
                self.file,
                line,
                self.column(col),
                Kind::EmptyMarkerLabel,
            ));
        }
        std::str::from_utf8(bytes)
            .map(str::to_string)
            .map_err(|_| TrialError::cell(self.file, line, Self::index_column(col), Kind::NotUtf8))
    }
}

/// A whole number small enough to be exact in `f64` (below 2^53).
#[inline]
pub(super) fn is_frame_number(v: f64) -> bool {
    v.fract() == 0.0 && v.abs() <= 9.007_199_254_740_992e15
}

#[cfg(test)]
mod tests {
    use super::*;

    fn cell(text: &str) -> Option<f64> {
        match parse_cell(text.as_bytes(), Format::CSV) {
            Ok(v) => v,
            Err(_) => Some(f64::INFINITY),
        }
    }

    #[test]
    fn parse_cell_reads_numbers_and_missing() {
        assert_eq!(parse_cell(b" 1.5 ", Format::CSV).ok(), Some(Some(1.5)));
        assert_eq!(parse_cell(b"", Format::CSV).ok(), Some(None));
        assert_eq!(parse_cell(b"NaN", Format::CSV).ok(), Some(None));
        assert_eq!(parse_cell(b"nan", Format::CSV).ok(), Some(None));
        let problem = |b: &[u8]| parse_cell(b, Format::CSV).err();
        assert!(matches!(problem(b"inf"), Some(CellProblem::Infinite)));
        assert!(matches!(problem(b"1.2.3"), Some(CellProblem::NotANumber)));
        assert!(matches!(problem(b"1,5"), Some(CellProblem::NotANumber)));
        assert!(matches!(problem(&[0xff, b'1']), Some(CellProblem::NotUtf8)));
        let semicolon = Format {
            sep: b';',
            comma_decimal: true,
        };
        assert_eq!(parse_cell(b"-12,25", semicolon).ok(), Some(Some(-12.25)));
        assert_eq!(parse_cell(b"1,5e1", semicolon).ok(), Some(Some(15.0)));
        assert_eq!(parse_cell(b"12.25", semicolon).ok(), Some(Some(12.25)));
    }

    #[test]
    fn cells_agree_with_std_parse() {
        for text in [
            "0",
            "-0",
            "-0.00",
            "1234.56",
            "-1234.56",
            "+7.5",
            "0.010000",
            "9007199254740992",
            "9007199254740993",
            "0.1",
            "1.7976931348623157",
            "123456789012345678",
            "5.0e3",
            "0.00000000000000000000001",
            "0.0000000000000000000001",
        ] {
            let want: f64 = text.parse().unwrap();
            assert_eq!(cell(text).map(f64::to_bits), Some(want.to_bits()), "{text}");
        }
        assert_eq!(number(b"5.", 0, Format::CSV), None);
        assert_eq!(number(b"1e3", 0, Format::CSV), None);
        assert_eq!(number(b"9007199254740993", 0, Format::CSV), None);
        assert_eq!(number(b"-1234.56", 0, Format::CSV), Some((-1234.56, 8)));
    }

    #[test]
    fn cells_agree_with_std_on_random_digits() {
        // xorshift64 (Marsaglia 2003): cells of 0 to 25 digits with a point and a sign, closed
        // by a separator, a line end, the end of the text, or a byte that is not a closer.
        let mut s = 0x853c_49e6_748f_ea9bu64;
        let mut next = || {
            s ^= s << 13;
            s ^= s >> 7;
            s ^= s << 17;
            s
        };
        for _ in 0..200_000 {
            let mut cell = String::new();
            match next() % 4 {
                0 => cell.push('-'),
                1 => cell.push('+'),
                _ => {}
            }
            let n_int = (next() % 14) as usize;
            let n_frac = (next() % 12) as usize;
            for _ in 0..n_int {
                cell.push(char::from(b'0' + (next() % 10) as u8));
            }
            if next() % 4 != 0 {
                cell.push('.');
                for _ in 0..n_frac {
                    cell.push(char::from(b'0' + (next() % 10) as u8));
                }
            }
            let closer = [",", "\n", "\r\n", "", "x", "/", ":"][(next() % 7) as usize];
            let pad = (next() % 9) as usize;
            let text = format!("{}{cell}{closer}9", ",".repeat(pad));
            let text = if closer.is_empty() {
                format!("{}{cell}", ",".repeat(pad))
            } else {
                text
            };
            let closes = matches!(closer, "," | "\n" | "\r\n" | "");
            if let Some((v, end)) = number(text.as_bytes(), pad, Format::CSV) {
                assert!(closes, "{text:?}");
                assert_eq!(end, pad + cell.len(), "{text:?}");
                let want: f64 = cell.parse().unwrap();
                assert_eq!(v.to_bits(), want.to_bits(), "{text:?}");
            }
        }
    }
}
