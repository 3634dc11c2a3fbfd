//! Fast paths of the trial reader, for the numbers and for wide files held in memory. Both give
//! exactly what the general reader gives; they only take less time.
//!
//! - [`decimal`]: a cell like `-1234.56` (at most 19 digits, no exponent) is the integer of its
//!   digits divided by a power of ten. When that integer is at most 2^53 and the power at most
//!   10^22, both are exact `f64` values and one IEEE division rounds their quotient correctly:
//!   the same value `str::parse::<f64>` returns (Clinger 1990, "How to read floating point
//!   numbers accurately", the fast path). Any other text goes to `str::parse`.
//! - [`read_wide`]: a wide file without quote characters, whose lines end in `\n` or `\r\n`, has
//!   one record per line and one cell between commas, so its data lines can be cut into ranges
//!   and parsed on several threads into flat tracks allocated once (`[f64; 3]` per frame, NaN
//!   where a coordinate is missing: zeroed memory that each thread touches first in its own
//!   range, and the layout gap filling takes over in place). Each row is read as the general
//!   reader reads it (clock, then coordinates in metres; a point with a missing coordinate is
//!   what the general reader reads as `None`). Anything unusual (a quote, a lone `\r`, a ragged row, a bad cell, times not
//!   increasing, a tidy or frame-numbered file without rate) makes it step aside, and the
//!   general reader reads the file and reports the problem with its position.

use super::{
    finish, parse_cell, parse_header, skip_prelude, Clock, FlatTrial, Header, Layout, ReadOptions,
    Rows, TrialError,
};
use csv::ByteRecord;

/// Powers of ten exact in `f64`.
const POW10: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

/// Below this many bytes per piece a file is parsed on one thread.
const MIN_PIECE_BYTES: usize = 1 << 20;

/// `[+-]digits[.digits]` as an `f64`, when the fast path is exact (module doc); `None` for any
/// other text, which `str::parse` then reads.
#[inline]
pub(super) fn decimal(text: &[u8]) -> Option<f64> {
    let (negative, digits) = match text.first()? {
        b'-' => (true, text.get(1..)?),
        b'+' => (false, text.get(1..)?),
        _ => (false, text),
    };
    let mut mantissa: u64 = 0;
    let mut n_digits = 0usize;
    let mut int_digits = 0usize;
    let mut dot = false;
    for &c in digits {
        if c.is_ascii_digit() {
            if n_digits == 19 {
                return None;
            }
            mantissa = mantissa * 10 + u64::from(c - b'0');
            n_digits += 1;
        } else if c == b'.' && !dot {
            dot = true;
            int_digits = n_digits;
        } else {
            return None;
        }
    }
    if !dot {
        int_digits = n_digits;
    }
    let frac_digits = n_digits - int_digits;
    if int_digits == 0 || (dot && frac_digits == 0) || mantissa > 1 << 53 {
        return None;
    }
    let v = mantissa as f64 / POW10[frac_digits];
    Some(if negative { -v } else { v })
}

/// Reads a wide file held in memory on up to `threads` threads, or `None` when the general
/// reader must read it (module doc).
pub(super) fn read_wide(
    bytes: &[u8],
    file: &str,
    stem: &str,
    opts: &ReadOptions,
    threads: usize,
) -> Option<Result<FlatTrial, TrialError>> {
    read_wide_in_pieces(bytes, file, stem, opts, threads, MIN_PIECE_BYTES)
}

/// [`read_wide`] with pieces of at least `min_piece_bytes` (small in tests, to cut small files).
fn read_wide_in_pieces(
    bytes: &[u8],
    file: &str,
    stem: &str,
    opts: &ReadOptions,
    threads: usize,
    min_piece_bytes: usize,
) -> Option<Result<FlatTrial, TrialError>> {
    if opts.rate_hz.is_some_and(|r| !(r.is_finite() && r > 0.0)) {
        return None;
    }
    let (header_line, _, prelude_lines, prelude_bytes) = skip_prelude(bytes, file).ok()?;
    if header_line.contains(&b'"') || !header_line.ends_with(b"\n") {
        return None;
    }
    let mut rec = ByteRecord::new();
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .from_reader(header_line.as_slice());
    if !rdr.read_byte_record(&mut rec).ok()? {
        return None;
    }
    let line = prelude_lines + 1;
    let header = parse_header(&rec, file, line).ok()?;
    if header.clock == Clock::Frames && opts.rate_hz.is_none() {
        return None;
    }
    let Layout::Wide { labels, xyz } = &header.layout else {
        return None;
    };
    let data = bytes.get(usize::try_from(prelude_bytes).ok()? + header_line.len()..)?;
    let layout = RowLayout::new(&header, xyz, opts.units.to_metres());
    let (clock, lines, tracks) = parse_rows(data, line + 1, &layout, threads, min_piece_bytes)?;
    if clock.is_empty() {
        return None;
    }
    let rows = Rows {
        clock,
        lines,
        labels: labels.clone(),
        tracks: Vec::new(),
    };
    Some(finish(rows, header, file, stem, opts).map(|trial| FlatTrial { trial, tracks }))
}

/// What a cell of a data row is for.
#[derive(Clone, Copy)]
enum Role {
    Ignored,
    Clock,
    /// Coordinate `3 * marker + axis`.
    Coordinate(usize),
}

/// How to read one data row.
struct RowLayout {
    roles: Vec<Role>,
    n_markers: usize,
    clock: Clock,
    scale: f64,
}

impl RowLayout {
    fn new(header: &Header, xyz: &[[usize; 3]], scale: f64) -> RowLayout {
        let mut roles = vec![Role::Ignored; header.names.len()];
        if let Some(r) = roles.get_mut(header.clock_col) {
            *r = Role::Clock;
        }
        for (m, cols) in xyz.iter().enumerate() {
            for (axis, &c) in cols.iter().enumerate() {
                if let Some(r) = roles.get_mut(c) {
                    *r = Role::Coordinate(3 * m + axis);
                }
            }
        }
        RowLayout {
            roles,
            n_markers: xyz.len(),
            clock: header.clock,
            scale,
        }
    }
}

type Track = Vec<[f64; 3]>;

/// One line range of the data and where its results go.
struct Piece<'a> {
    text: &'a [u8],
    first_line: u64,
    clock: &'a mut [f64],
    lines: &'a mut [u64],
    tracks: Vec<&'a mut [[f64; 3]]>,
}

/// What a first look at one line range finds: its line feeds, and whether it holds anything
/// that makes the fast path step aside (a quote, a lone `\r`). One pass counts the three bytes
/// (the loop vectorises); only a range with a `\r` is looked at again.
fn scan(text: &[u8]) -> Option<usize> {
    let (mut feeds, mut quotes, mut returns) = (0usize, 0usize, 0usize);
    // Byte counters over blocks of 255 bytes cannot overflow.
    for block in text.chunks(255) {
        let (mut f, mut q, mut r) = (0u8, 0u8, 0u8);
        for &b in block {
            f += u8::from(b == b'\n');
            q += u8::from(b == b'"');
            r += u8::from(b == b'\r');
        }
        feeds += f as usize;
        quotes += q as usize;
        returns += r as usize;
    }
    if quotes > 0 || (returns > 0 && has_lone_cr(text)) {
        return None;
    }
    Some(feeds)
}

/// Clock values, line numbers and tracks of the data lines, or `None` (module doc).
fn parse_rows(
    data: &[u8],
    first_line: u64,
    layout: &RowLayout,
    threads: usize,
    min_piece_bytes: usize,
) -> Option<(Vec<f64>, Vec<u64>, Vec<Track>)> {
    let texts = split_lines(data, threads, min_piece_bytes);
    // Each range ends in `\n` (but the last), so a lone `\r` is lone within its range.
    let newlines: Vec<usize> = crate::signal::in_groups(texts.clone(), texts.len(), |group| {
        group.into_iter().map(scan).collect::<Option<Vec<usize>>>()
    })
    .into_iter()
    .collect::<Option<Vec<Vec<usize>>>>()?
    .concat();
    // Lines per piece: its line feeds, and a last line without one.
    let counts: Vec<usize> = texts
        .iter()
        .zip(&newlines)
        .map(|(t, n)| n + usize::from(t.last().is_some_and(|&b| b != b'\n')))
        .collect();
    let total: usize = counts.iter().sum();
    let mut clock = vec![0.0; total];
    let mut lines = vec![0u64; total];
    // Zeroed allocations: no page is touched here, each is first written by the thread that
    // parses its range.
    let mut tracks: Vec<Track> = (0..layout.n_markers)
        .map(|_| vec![[0.0; 3]; total])
        .collect();

    let mut pieces = Vec::with_capacity(texts.len());
    {
        let (mut clock_rest, mut lines_rest) = (clock.as_mut_slice(), lines.as_mut_slice());
        let mut track_rests: Vec<&mut [[f64; 3]]> =
            tracks.iter_mut().map(Vec::as_mut_slice).collect();
        let mut line = first_line;
        for ((text, &n), &feeds) in texts.iter().zip(&counts).zip(&newlines) {
            let (c, cr) = std::mem::take(&mut clock_rest).split_at_mut(n);
            let (l, lr) = std::mem::take(&mut lines_rest).split_at_mut(n);
            clock_rest = cr;
            lines_rest = lr;
            let mut piece_tracks = Vec::with_capacity(track_rests.len());
            for rest in &mut track_rests {
                let (t, tr) = std::mem::take(rest).split_at_mut(n);
                *rest = tr;
                piece_tracks.push(t);
            }
            pieces.push(Piece {
                text,
                first_line: line,
                clock: c,
                lines: l,
                tracks: piece_tracks,
            });
            line += feeds as u64;
        }
    }
    let rows: Vec<Option<usize>> = std::thread::scope(|s| {
        let mut pieces = pieces.into_iter();
        let first = pieces.next();
        let handles: Vec<_> = pieces
            .map(|p| s.spawn(move || parse_piece(p, layout)))
            .collect();
        let mut rows = vec![first.and_then(|p| parse_piece(p, layout))];
        rows.extend(handles.into_iter().map(|h| h.join().ok().flatten()));
        rows
    });
    let rows: Vec<usize> = rows.into_iter().collect::<Option<_>>()?;

    // Blank lines leave room at the end of a piece: close it up, and check that times increase
    // across piece boundaries.
    let mut kept = 0;
    let mut start = 0;
    for (&n, &capacity) in rows.iter().zip(&counts) {
        if n > 0 {
            if kept > 0 && clock[start] <= clock[kept - 1] {
                return None;
            }
            if start != kept {
                clock.copy_within(start..start + n, kept);
                lines.copy_within(start..start + n, kept);
                for t in &mut tracks {
                    t.copy_within(start..start + n, kept);
                }
            }
        }
        kept += n;
        start += capacity;
    }
    clock.truncate(kept);
    lines.truncate(kept);
    for t in &mut tracks {
        t.truncate(kept);
        if t.capacity() > kept + kept / 8 + 64 {
            t.shrink_to_fit();
        }
    }
    Some((clock, lines, tracks))
}

/// Parses the lines of one piece; the number of rows, or `None` at the first thing the general
/// reader must look at.
fn parse_piece(piece: Piece, layout: &RowLayout) -> Option<usize> {
    let Piece {
        text,
        first_line,
        clock,
        lines,
        mut tracks,
    } = piece;
    let mut values = vec![f64::NAN; 3 * layout.n_markers];
    let mut row = 0usize;
    let mut previous: Option<f64> = None;
    let mut line = first_line;
    let mut at = 0;
    while at < text.len() {
        let this_line = line;
        line += 1;
        let Some((time, next)) = parse_row(text, at, layout, &mut values) else {
            // A blank line is skipped, as the general reader does; any other needs it.
            let end = text[at..]
                .iter()
                .position(|&b| b == b'\n')
                .map_or(text.len(), |p| at + p);
            let content = &text[at..end];
            if content.contains(&b',') || !content.trim_ascii().is_empty() {
                return None;
            }
            at = end + 1;
            continue;
        };
        at = next;
        if layout.clock == Clock::Frames
            && (time.fract() != 0.0 || time.abs() > 9.007_199_254_740_992e15)
        {
            return None;
        }
        if previous.is_some_and(|p| time <= p) {
            return None;
        }
        previous = Some(time);
        *clock.get_mut(row)? = time;
        *lines.get_mut(row)? = this_line;
        for (track, p) in tracks.iter_mut().zip(values.chunks_exact(3)) {
            // A missing coordinate stays NaN (NaN times the scale).
            *track.get_mut(row)? = [
                p[0] * layout.scale,
                p[1] * layout.scale,
                p[2] * layout.scale,
            ];
        }
        row += 1;
    }
    Some(row)
}

/// Reads the row starting at `at` into `values` (NaN where missing): its time and the offset
/// after its line end, or `None` when the row is not as wide as the header or a cell is not a
/// coordinate or time.
#[inline]
fn parse_row(
    text: &[u8],
    mut at: usize,
    layout: &RowLayout,
    values: &mut [f64],
) -> Option<(f64, usize)> {
    let mut time = None;
    for (k, role) in layout.roles.iter().enumerate() {
        if k > 0 {
            if text.get(at) != Some(&b',') {
                return None;
            }
            at += 1;
        }
        let (value, end) = match role {
            Role::Ignored => (None, cell_end(text, at)),
            _ => match number(text, at) {
                Some((v, end)) => (Some(v), end),
                None => {
                    let end = cell_end(text, at);
                    (parse_cell(&text[at..end]).ok()?, end)
                }
            },
        };
        match role {
            Role::Ignored => {}
            Role::Clock => time = Some(value?),
            // A coordinate is finite when present (infinity is an error): NaN marks missing.
            Role::Coordinate(i) => *values.get_mut(*i)? = value.unwrap_or(f64::NAN),
        }
        at = end;
    }
    let next = match text.get(at) {
        None => at,
        Some(b'\n') => at + 1,
        Some(b'\r') if text.get(at + 1) == Some(&b'\n') => at + 2,
        Some(_) => return None,
    };
    Some((time?, next))
}

/// The offset of the comma or line end that closes the cell starting at `at`.
#[inline]
fn cell_end(text: &[u8], at: usize) -> usize {
    text[at..]
        .iter()
        .position(|&b| matches!(b, b',' | b'\n' | b'\r'))
        .map_or(text.len(), |p| at + p)
}

/// A cell `-?digits[.digits]` starting at `at` and closed by a comma, a line end or the end of
/// the text, read as [`decimal`] reads it (exact), and the offset of its end; `None` for any
/// other cell.
#[inline]
fn number(text: &[u8], at: usize) -> Option<(f64, usize)> {
    let mut i = at;
    let negative = text.get(i) == Some(&b'-');
    if negative {
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
    if text.get(i) == Some(&b'.') {
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
    let closed = matches!(text.get(i), None | Some(b',' | b'\n' | b'\r'));
    // At most 19 digits: the mantissa did not wrap.
    if !closed || int_digits == 0 || int_digits + frac_digits > 19 || mantissa > 1 << 53 {
        return None;
    }
    let v = mantissa as f64 / POW10[frac_digits];
    // The sign bit set without a branch (signs of coordinates are hard to predict).
    Some((f64::from_bits(v.to_bits() | u64::from(negative) << 63), i))
}

/// Cuts the data into up to `threads` ranges of whole lines (each but the last ends with `\n`),
/// none shorter than `min_piece_bytes` unless it is the only one.
fn split_lines(data: &[u8], threads: usize, min_piece_bytes: usize) -> Vec<&[u8]> {
    let n = threads.clamp(1, (data.len() / min_piece_bytes.max(1)).max(1));
    let mut pieces = Vec::with_capacity(n);
    let mut start = 0;
    for i in 1..n {
        let target = (data.len() / n * i).max(start);
        let Some(end) = data
            .get(target..)
            .and_then(|rest| rest.iter().position(|&b| b == b'\n'))
            .map(|p| target + p + 1)
        else {
            break;
        };
        pieces.push(&data[start..end]);
        start = end;
    }
    pieces.push(&data[start..]);
    pieces
}

/// Whether a `\r` stands anywhere but just before a `\n` (the csv reader ends records there,
/// but the line count does not move).
fn has_lone_cr(data: &[u8]) -> bool {
    if !data.contains(&b'\r') {
        return false;
    }
    data.iter()
        .enumerate()
        .any(|(i, &b)| b == b'\r' && data.get(i + 1) != Some(&b'\n'))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::trial::Trial;

    fn std_parse(text: &str) -> Option<f64> {
        text.parse().ok()
    }

    #[test]
    fn decimal_agrees_with_std_parse() {
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
            "5.",
            ".5",
            "-",
            "+",
            "",
            "1.2.3",
            "1,5",
            "nan",
            "inf",
            "12345678901234567890",
            "0.00000000000000000000001",
            "0.0000000000000000000001",
        ] {
            if let Some(v) = decimal(text.as_bytes()) {
                let want = std_parse(text).unwrap_or(f64::NAN);
                assert_eq!(v.to_bits(), want.to_bits(), "{text}");
            }
        }
        assert_eq!(decimal(b"5."), None);
        assert_eq!(decimal(b"1e3"), None);
        assert_eq!(decimal(b"9007199254740993"), None); // above 2^53: std reads it
        assert_eq!(decimal(b"-1234.56"), Some(-1234.56));
    }

    #[test]
    fn decimal_agrees_with_std_on_random_cells() {
        // xorshift64* (Vigna 2016): random digit strings with up to 19 digits and a point.
        let mut s = 0x2545_f491_4f6c_dd1du64;
        let mut next = || {
            s ^= s >> 12;
            s ^= s << 25;
            s ^= s >> 27;
            s.wrapping_mul(0x2545_f491_4f6c_dd1d)
        };
        for _ in 0..200_000 {
            let n_digits = 1 + (next() % 19) as usize;
            let point = (next() % (n_digits as u64 + 1)) as usize;
            let mut text = String::new();
            if next() % 2 == 0 {
                text.push('-');
            }
            for i in 0..n_digits {
                if i == point && i > 0 {
                    text.push('.');
                }
                text.push(char::from(b'0' + (next() % 10) as u8));
            }
            let want = std_parse(&text).unwrap_or(f64::NAN);
            if let Some(v) = decimal(text.as_bytes()) {
                assert_eq!(v.to_bits(), want.to_bits(), "{text}");
            }
        }
    }

    #[test]
    fn cells_are_read_as_decimal_reads_them() {
        // xorshift64 (Marsaglia 2003): cells of 0 to 25 digits with a point and a sign, closed
        // by a comma, a line end, the end of the text, or a byte that is not a closer.
        let mut s = 0x853c_49e6_748f_ea9bu64;
        let mut next = || {
            s ^= s << 13;
            s ^= s >> 7;
            s ^= s << 17;
            s
        };
        for _ in 0..200_000 {
            let mut cell = String::new();
            if next() % 3 == 0 {
                cell.push('-');
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
            // Digits after the closer, but for a cell that ends the text.
            let after = if closer.is_empty() {
                0
            } else {
                (next() % 3) as usize
            };
            let text = format!("{}{cell}{closer}{}", ",".repeat(pad), "9".repeat(after));
            let got = number(text.as_bytes(), pad);
            let closes = matches!(closer, "," | "\n" | "\r\n") || text.len() == pad + cell.len();
            let want = if closes {
                decimal(cell.as_bytes())
            } else {
                None
            };
            // `decimal` also takes a leading `+`, which a cell here never has.
            assert_eq!(
                got.map(|(v, end)| (v.to_bits(), end)),
                want.map(|v| (v.to_bits(), pad + cell.len())),
                "{text:?}"
            );
        }
    }

    #[test]
    fn lines_are_split_after_line_feeds() {
        let data = vec![b'a'; 3 * MIN_PIECE_BYTES]
            .into_iter()
            .enumerate()
            .map(|(i, b)| if i % 100 == 99 { b'\n' } else { b })
            .collect::<Vec<u8>>();
        let pieces = split_lines(&data, 2, MIN_PIECE_BYTES);
        assert_eq!(pieces.len(), 2);
        assert!(pieces[0].ends_with(b"\n"));
        assert_eq!(pieces.iter().map(|p| p.len()).sum::<usize>(), data.len());
        assert_eq!(split_lines(b"a\nb\n", 4, MIN_PIECE_BYTES).len(), 1);
        assert_eq!(
            split_lines(b"a\nb\nc\nd", 4, 1),
            [&b"a\n"[..], b"b\n", b"c\n", b"d"]
        );
    }

    /// The general reader's result, for comparison: the trial, or the error's message.
    fn general(bytes: &[u8], opts: &ReadOptions) -> Result<Trial, String> {
        super::super::read_impl(bytes, "t.csv", "t", opts, None).map_err(|e| e.to_string())
    }

    fn in_pieces(
        bytes: &[u8],
        opts: &ReadOptions,
        threads: usize,
    ) -> Option<Result<Trial, String>> {
        read_wide_in_pieces(bytes, "t.csv", "t", opts, threads, 1)
            .map(|r| r.map(FlatTrial::into_trial).map_err(|e| e.to_string()))
    }

    #[test]
    fn pieces_give_the_general_readers_trial_or_step_aside() {
        let base = "# comment\n\ntime,a_x,a_y,a_z,note,b_x,b_y,b_z\n\
                    0.00,1,2,3,x,4,5,6\n0.01,1.5,,3,y,4,5,6\n0.02,NaN,2,3,,4.25,5,6\n\
                    0.03,1,2,3,z,-4,5,6e1\n0.04, 7 ,2,3,,4,5,6\n";
        let crlf = base.replace('\n', "\r\n");
        let blank = base.replace("0.02", "\n\n0.02").replace("0.04", "  \n0.04");
        let no_end = base.trim_end().to_string();
        let frames = base.replace("time", "frame").replace("0.0", "");
        let bom = format!("\u{feff}{base}");
        let millis = "time,a_x,a_y,a_z\n0.000,1,2,3\n0.007,1,2,3\n0.013,1,2,3\n0.020,1,2,3\n";
        let opts = ReadOptions::default();
        let rated = ReadOptions {
            rate_hz: Some(100.0),
            ..ReadOptions::default()
        };
        for text in [base, &crlf, &blank, &no_end, &frames, &bom, millis] {
            for o in [&opts, &rated] {
                for threads in 1..=4 {
                    if let Some(fast) = in_pieces(text.as_bytes(), o, threads) {
                        assert_eq!(
                            fast,
                            general(text.as_bytes(), o),
                            "{text:?}, {threads} threads"
                        );
                    }
                }
            }
        }
        // These files go through the fast path (none steps aside).
        for text in [base, &crlf, &blank, &no_end, &bom] {
            assert!(
                in_pieces(text.as_bytes(), &opts, 3).is_some_and(|r| r.is_ok()),
                "{text:?}"
            );
        }
        assert!(in_pieces(frames.as_bytes(), &rated, 2).is_some());
        // Problems step aside, for the general reader to report with their positions.
        for bad in [
            base.replace("1.5", "1.5.1"),
            base.replace("0.03", "0.01"),
            base.replace(",y,", ",\"y\","),
            base.replace("4.25,", ""),
            base.replace("0.01,", "0.01\r,"),
            base.replace("6e1", "inf"),
            base.replace("0.02", ""),
        ] {
            assert!(in_pieces(bad.as_bytes(), &opts, 2).is_none(), "{bad:?}");
        }
        assert!(in_pieces(frames.as_bytes(), &opts, 2).is_none());
    }

    #[test]
    fn lone_carriage_returns_are_found() {
        assert!(!has_lone_cr(b"a\r\nb\r\n"));
        assert!(has_lone_cr(b"a\rb\n"));
        assert!(has_lone_cr(b"a\r"));
    }
}
