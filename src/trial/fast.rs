//! The parallel reader of wide files held in memory. A wide file without quote characters,
//! whose lines end in `\n` or `\r\n`, has one record per line and one cell between
//! separators, so its data lines can be cut into ranges and parsed on several threads into
//! flat tracks allocated once (`[f64; 3]` per frame, NaN where a coordinate is missing: zeroed
//! memory that each thread touches first in its own range, and the layout gap filling takes
//! over in place). Each row is read as the general reader reads it (clock, then coordinates in
//! metres, with the one number parser of [`super::cells`]). Anything unusual (a quote, a lone
//! `\r`, a ragged row, a bad cell, times not increasing) makes it step aside, and the general
//! reader reads the rows and reports the problem with its position. It starts where the
//! general reader's header ends, so both read the same records.

use super::cells::{is_frame_number, number, parse_cell, Format};
use super::header::{Clock, Header};

/// Below this many bytes per piece a file is parsed on one thread.
pub(super) const MIN_PIECE_BYTES: usize = 1 << 20;

/// What a cell of a data row is for.
#[derive(Clone, Copy)]
enum Role {
    Ignored,
    Clock,
    /// Coordinate `3 * marker + axis`.
    Coordinate(usize),
}

/// How to read one data row.
pub(super) struct RowLayout {
    roles: Vec<Role>,
    n_markers: usize,
    clock: Clock,
    scale: f64,
    format: Format,
}

impl RowLayout {
    pub(super) fn new(header: &Header, xyz: &[[usize; 3]], scale: f64) -> RowLayout {
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
            format: header.format,
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

/// Clock values, line numbers and tracks of the data lines `data` (the first on line
/// `first_line`), or `None` when the general reader must read them (module doc).
pub(super) fn parse_rows(
    data: &[u8],
    first_line: u64,
    layout: &RowLayout,
    threads: usize,
    min_piece_bytes: usize,
) -> Option<(Vec<f64>, Vec<u64>, Vec<Track>)> {
    let texts = split_lines(data, threads, min_piece_bytes);
    // Each range ends in `\n` (but the last), so a lone `\r` is lone within its range.
    let newlines: Vec<usize> = std::thread::scope(|s| {
        let handles: Vec<_> = texts
            .iter()
            .skip(1)
            .map(|&t| s.spawn(move || scan(t)))
            .collect();
        let first = texts.first().map(|t| scan(t));
        std::iter::once(first.flatten())
            .chain(handles.into_iter().map(|h| h.join().ok().flatten()))
            .collect::<Option<Vec<usize>>>()
    })?;
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
        if layout.clock == Clock::Frames && !is_frame_number(time) {
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
    let format = layout.format;
    let mut time = None;
    for (k, role) in layout.roles.iter().enumerate() {
        if k > 0 {
            if text.get(at) != Some(&format.sep) {
                return None;
            }
            at += 1;
        }
        let (value, end) = match role {
            Role::Ignored => (None, cell_end(text, at, format.sep)),
            _ => match number(text, at, format) {
                Some((v, end)) => (Some(v), end),
                None => {
                    let end = cell_end(text, at, format.sep);
                    (parse_cell(&text[at..end], format).ok()?, end)
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

/// The offset of the separator or line end that closes the cell starting at `at`.
#[inline]
fn cell_end(text: &[u8], at: usize, sep: u8) -> usize {
    text[at..]
        .iter()
        .position(|&b| b == sep || b == b'\n' || b == b'\r')
        .map_or(text.len(), |p| at + p)
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

    #[test]
    fn lone_carriage_returns_are_found() {
        assert!(!has_lone_cr(b"a\r\nb\r\n"));
        assert!(has_lone_cr(b"a\rb\n"));
        assert!(has_lone_cr(b"a\r"));
    }
}
