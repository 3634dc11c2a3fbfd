//! Rows of a trial file as the general reader reads them: the CSV records of the file held
//! in memory, each with its line in the file, and the row loops of the wide and tidy layouts.
//! Every file goes through here but for the rows that the parallel reader (`fast`) reads; it
//! reads what this reads, or steps aside for this to report the problem.

use std::collections::HashMap;

use csv::ByteRecord;

use super::cells::{Ctx, Format};
use super::error::{shown, TrialError, TrialErrorKind as Kind};
use super::header::{Clock, Header};
use super::rate::Rows;
use super::{TIDY_CELLS_PER_ROW, TIDY_SPARSE_ALLOWANCE};

/// The CSV part of a file (from the header on) and the line of each record in the file. The
/// `csv` crate's own line counts go wrong on CRLF line ends and after blank lines, so lines
/// are counted here: a record's line is that of its last byte (its last line feed excluded),
/// less the line feeds inside its quoted cells. Lines are counted in line feeds (`\n`): a lone
/// `\r` ends a record but not a line.
pub(super) struct Source<'a> {
    file: &'a str,
    data: &'a [u8],
    rdr: csv::Reader<&'a [u8]>,
    /// Bytes of `data` whose line feeds are counted in `feeds`.
    counted: usize,
    feeds: u64,
    /// Comment and blank lines before the header.
    prelude_lines: u64,
    /// A record read ahead and handed back.
    pending: Option<(ByteRecord, u64)>,
}

impl<'a> Source<'a> {
    /// The CSV part `data`, after `prelude_lines` lines of comments, read with `format`.
    pub fn new(data: &'a [u8], file: &'a str, prelude_lines: u64, format: Format) -> Source<'a> {
        let rdr = csv::ReaderBuilder::new()
            .has_headers(false)
            .flexible(true)
            .delimiter(format.sep)
            .from_reader(data);
        Source {
            file,
            data,
            rdr,
            counted: 0,
            feeds: 0,
            prelude_lines,
            pending: None,
        }
    }

    /// The line of the byte at `offset` of the CSV part (1-based, in the file).
    fn line_at(&mut self, offset: usize) -> u64 {
        let offset = offset.min(self.data.len());
        if offset > self.counted {
            let newly = &self.data[self.counted..offset];
            self.feeds += newly.iter().filter(|&&b| b == b'\n').count() as u64;
            self.counted = offset;
        }
        self.prelude_lines + self.feeds + 1
    }

    /// Reads the next record; its first line in the file (1-based), or `None` at the end.
    pub fn next(&mut self, rec: &mut ByteRecord) -> Result<Option<u64>, TrialError> {
        if let Some((pending, line)) = self.pending.take() {
            *rec = pending;
            return Ok(Some(line));
        }
        match self.rdr.read_byte_record(rec) {
            Ok(true) => {}
            Ok(false) => return Ok(None),
            Err(error) => {
                let line = self.prelude_lines + self.feeds + 1;
                return Err(match error.into_kind() {
                    csv::ErrorKind::Io(error) => TrialError::new(self.file, Kind::Io(error)),
                    kind => TrialError::at(
                        self.file,
                        line,
                        Kind::Csv {
                            message: format!("{kind:?}").to_lowercase(),
                        },
                    ),
                });
            }
        }
        // The reader stops after the record's terminator (after `\r` of a CRLF), so its last
        // byte lies on the record's last line.
        let end = usize::try_from(self.rdr.position().byte()).unwrap_or(usize::MAX);
        let last_line = self.line_at(end.saturating_sub(1));
        // Line feeds inside quoted cells: the record began that many lines earlier.
        let inside = rec.as_slice().iter().filter(|&&b| b == b'\n').count() as u64;
        Ok(Some(last_line.saturating_sub(inside)))
    }

    /// Hands a record read by [`Source::next`] back, to be read again.
    pub fn unread(&mut self, rec: ByteRecord, line: u64) {
        self.pending = Some((rec, line));
    }

    /// Where the next record starts: its offset in the CSV part and its line.
    pub fn next_start(&mut self) -> (usize, u64) {
        let at = match &self.pending {
            Some((rec, _)) => rec.position().map_or(0, |p| p.byte()),
            None => self.rdr.position().byte(),
        };
        let at = usize::try_from(at)
            .unwrap_or(usize::MAX)
            .min(self.data.len());
        let feeds = self.data[..at].iter().filter(|&&b| b == b'\n').count() as u64;
        (at, self.prelude_lines + feeds + 1)
    }

    /// The CSV part.
    pub fn data(&self) -> &'a [u8] {
        self.data
    }

    /// Bytes of the CSV part read so far.
    fn bytes_read(&self) -> u64 {
        self.rdr.position().byte()
    }
}

/// Reads the rows of a wide file, one per frame.
pub(super) fn read_wide(
    ctx: &Ctx,
    src: &mut Source,
    header: &Header,
    labels: &[String],
    xyz: &[[usize; 3]],
    scale: f64,
) -> Result<Rows, TrialError> {
    let mut rec = ByteRecord::new();
    let rec = &mut rec;
    let remaining_bytes = src.data().len() as u64;
    let mut clock: Vec<f64> = Vec::new();
    let mut lines: Vec<u64> = Vec::new();
    let mut tracks: Vec<Vec<[f64; 3]>> = vec![Vec::new(); labels.len()];
    let n_fields = header.names.len() as u64;
    while let Some(line) = src.next(rec)? {
        if !ctx.check_width(rec, line)? {
            continue;
        }
        let value = ctx.clock(rec, line, header.clock_col, header.clock)?;
        if let (Some(&previous), Some(&previous_line)) = (clock.last(), lines.last()) {
            if value <= previous {
                return Err(TrialError::cell(
                    ctx.file,
                    line,
                    header.column(header.clock_col),
                    Kind::NotIncreasing {
                        value,
                        previous,
                        previous_line,
                    },
                ));
            }
        }
        for (track, cols) in tracks.iter_mut().zip(xyz) {
            track.push(ctx.point(rec, line, cols, scale)?);
        }
        clock.push(value);
        lines.push(line);
        if clock.len() == 1 {
            // Grow every Vec once, from the size of the first row and of the file.
            if let Some(start) = rec.position() {
                let total = remaining_bytes;
                let read = src.bytes_read();
                let row_bytes = read.saturating_sub(start.byte()).max(1);
                let left = total.saturating_sub(read);
                let estimate = (left / row_bytes + left / row_bytes / 50 + 16)
                    .min(left / n_fields.max(1) + 1)
                    .min(1 << 28) as usize;
                clock.reserve(estimate);
                lines.reserve(estimate);
                for track in &mut tracks {
                    track.reserve(estimate);
                }
            }
        }
    }
    let n = clock.len();
    for track in &mut tracks {
        if track.capacity() > n + n / 8 + 64 {
            track.shrink_to_fit();
        }
    }
    Ok(Rows {
        clock,
        lines,
        labels: labels.to_vec(),
        tracks,
    })
}

/// Reads the rows of a tidy file, one per marker and frame, in any order.
pub(super) fn read_tidy(
    ctx: &Ctx,
    src: &mut Source,
    header: &Header,
    marker_col: usize,
    xyz: &[usize; 3],
    scale: f64,
) -> Result<Rows, TrialError> {
    let mut rec = ByteRecord::new();
    let rec = &mut rec;
    let mut frame_of: HashMap<u64, usize> = HashMap::new();
    let mut clock: Vec<f64> = Vec::new();
    let mut lines: Vec<u64> = Vec::new();
    let mut marker_of: HashMap<Vec<u8>, usize> = HashMap::new();
    let mut labels: Vec<String> = Vec::new();
    let mut tracks: Vec<Vec<[f64; 3]>> = Vec::new();
    let mut seen: Vec<Vec<bool>> = Vec::new();
    let mut last: Option<(u64, usize)> = None;
    let mut rows = 0u64;
    let sparse = |line: u64, markers: usize, frames: usize, rows: u64| -> Result<(), TrialError> {
        let cells = markers.saturating_mul(frames);
        let allowed = (rows as usize)
            .saturating_mul(TIDY_CELLS_PER_ROW)
            .saturating_add(TIDY_SPARSE_ALLOWANCE);
        if cells > allowed {
            return Err(TrialError::at(
                ctx.file,
                line,
                Kind::TidySparse {
                    markers,
                    frames,
                    rows,
                },
            ));
        }
        Ok(())
    };
    // Invariant: every track and every `seen` row has one entry per frame (`clock.len()`).
    while let Some(line) = src.next(rec)? {
        if !ctx.check_width(rec, line)? {
            continue;
        }
        rows += 1;
        let value = ctx.clock(rec, line, header.clock_col, header.clock)?;
        // -0.0 and 0.0 are the same frame.
        let key = if value == 0.0 { 0.0f64 } else { value }.to_bits();
        let frame = match last {
            Some((k, f)) if k == key => f,
            _ => match frame_of.get(&key) {
                Some(&f) => f,
                None => {
                    let f = clock.len();
                    sparse(line, tracks.len(), f + 1, rows)?;
                    clock.push(value);
                    lines.push(line);
                    for t in &mut tracks {
                        t.push([f64::NAN; 3]);
                    }
                    for s in &mut seen {
                        s.push(false);
                    }
                    frame_of.insert(key, f);
                    f
                }
            },
        };
        last = Some((key, frame));
        let label_bytes = rec.get(marker_col).unwrap_or(b"").trim_ascii();
        let m = match marker_of.get(label_bytes) {
            Some(&m) => m,
            None => {
                let label = ctx.label(label_bytes, line, marker_col)?;
                sparse(line, tracks.len() + 1, clock.len(), rows)?;
                labels.push(label);
                tracks.push(vec![[f64::NAN; 3]; clock.len()]);
                seen.push(vec![false; clock.len()]);
                marker_of.insert(label_bytes.to_vec(), tracks.len() - 1);
                tracks.len() - 1
            }
        };
        let point = ctx.point(rec, line, xyz, scale)?;
        // `m < tracks.len() == seen.len()` and `frame < clock.len()`, the length of each track.
        if seen[m][frame] {
            let at = match header.clock {
                Clock::Seconds => format!("time {value} s"),
                Clock::Frames => format!("frame {value}"),
            };
            return Err(TrialError::at(
                ctx.file,
                line,
                Kind::TidyDuplicate {
                    marker: shown(&labels[m]),
                    at,
                },
            ));
        }
        seen[m][frame] = true;
        tracks[m][frame] = point;
    }
    if !clock.windows(2).all(|w| w[0] < w[1]) {
        // Rows came marker by marker or shuffled: put the frames in time order.
        let mut order: Vec<usize> = (0..clock.len()).collect();
        order.sort_by(|&a, &b| clock[a].total_cmp(&clock[b]));
        clock = order.iter().map(|&i| clock[i]).collect();
        lines = order.iter().map(|&i| lines[i]).collect();
        for track in &mut tracks {
            *track = order.iter().map(|&i| track[i]).collect();
        }
    }
    Ok(Rows {
        clock,
        lines,
        labels,
        tracks,
    })
}
