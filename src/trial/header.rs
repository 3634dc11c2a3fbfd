//! Header of a trial file: the comment lines before it, its separator, its column names (one
//! row, or two as lab exports write them) and what they mean (clock, wide or tidy layout,
//! ignored columns).
//!
//! - The separator is found on the header line: `,` when it holds one, else `;`, else a tab,
//!   else `,`. With `;` a cell may write its decimal mark as `,` (`1234,5`), as spreadsheets
//!   set to a decimal-comma locale export.
//! - Two-row header: when the row after the header holds only axis letters (`x`, `y`, `z`, any
//!   case) and empty cells, at least three letters, each axis cell is named after the nearest
//!   non-empty header cell at or to its left (the marker name written once above its three
//!   columns) and its letter: `LASI` over `X`, `Y`, `Z` gives `LASI_x`, `LASI_y`, `LASI_z`.
//!   Cells under an empty axis cell keep their header name (`Frame`, `Time`).

use std::collections::HashMap;

use csv::ByteRecord;

use super::cells::Format;
use super::error::{shown, Column, TrialError, TrialErrorKind as Kind};
use super::rows::Source;
use super::MAX_HEADER_LINE_BYTES;

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum Clock {
    Seconds,
    Frames,
}

pub(super) enum Layout {
    Wide {
        labels: Vec<String>,
        /// 0-based column of x, y, z for each marker.
        xyz: Vec<[usize; 3]>,
    },
    Tidy {
        marker: usize,
        xyz: [usize; 3],
    },
}

pub(super) struct Header {
    /// Line of the (first) header row.
    pub line: u64,
    pub names: Vec<String>,
    pub clock: Clock,
    pub clock_col: usize,
    pub layout: Layout,
    pub ignored: Vec<String>,
    pub format: Format,
}

impl Header {
    /// A column by its 0-based index, for messages.
    pub fn column(&self, index0: usize) -> Column {
        column_of(&self.names, index0)
    }
}

/// Skips the comment and blank lines before the header (a UTF-8 byte order mark first): the
/// number of lines and bytes skipped.
pub(super) fn skip_prelude(bytes: &[u8], file: &str) -> Result<(u64, usize), TrialError> {
    let mut skipped = 0u64;
    let mut at = 0usize;
    loop {
        let rest = bytes.get(at..).unwrap_or_default();
        if rest.is_empty() {
            return Err(TrialError::new(file, Kind::Empty));
        }
        let len = rest
            .iter()
            .position(|&b| b == b'\n')
            .map_or(rest.len(), |p| p + 1);
        if len as u64 > MAX_HEADER_LINE_BYTES {
            return Err(TrialError::at(
                file,
                skipped + 1,
                Kind::LineTooLong {
                    limit_bytes: MAX_HEADER_LINE_BYTES,
                },
            ));
        }
        let mut line = &rest[..len];
        if skipped == 0 && line.starts_with(&[0xEF, 0xBB, 0xBF]) {
            line = &line[3..];
            at += 3;
        }
        let content = line.trim_ascii();
        if content.is_empty() || content.starts_with(b"#") {
            skipped += 1;
            at += line.len();
            continue;
        }
        return Ok((skipped, at));
    }
}

/// The separator and decimal mark of a file, from its header line (module doc).
pub(super) fn detect_format(header_line: &[u8]) -> Format {
    let sep = if header_line.contains(&b',') {
        b','
    } else if header_line.contains(&b';') {
        b';'
    } else if header_line.contains(&b'\t') {
        b'\t'
    } else {
        b','
    };
    Format {
        sep,
        comma_decimal: sep == b';',
    }
}

/// Reads the header of `bytes` (the whole file): the source positioned on the first data
/// record, and the header.
pub(super) fn read_header<'a>(
    bytes: &'a [u8],
    file: &'a str,
) -> Result<(Source<'a>, Header), TrialError> {
    let (prelude_lines, prelude_bytes) = skip_prelude(bytes, file)?;
    let data = bytes.get(prelude_bytes..).unwrap_or_default();
    let first_line = data
        .iter()
        .position(|&b| b == b'\n')
        .map_or(data, |p| &data[..p]);
    let format = detect_format(first_line);
    let mut src = Source::new(data, file, prelude_lines, format);
    let mut rec = ByteRecord::new();
    let Some(line) = src.next(&mut rec)? else {
        return Err(TrialError::new(file, Kind::Empty));
    };
    let mut names = cell_names(&rec, file, line)?;
    // A second header row of axis letters (module doc).
    let mut second = ByteRecord::new();
    if let Some(line2) = src.next(&mut second)? {
        match axis_row(&second) {
            Some(axes) if !names.iter().any(|n| marker_column(n).is_some()) => {
                names = merged_names(&names, &axes);
            }
            _ => src.unread(second, line2),
        }
    }
    let header = parse_header(names, file, line, format)?;
    Ok((src, header))
}

/// The trimmed text of each cell of a header row.
fn cell_names(rec: &ByteRecord, file: &str, line: u64) -> Result<Vec<String>, TrialError> {
    let mut names = Vec::with_capacity(rec.len());
    for (i, field) in rec.iter().enumerate() {
        let text = std::str::from_utf8(field).map_err(|_| {
            let column = Column {
                index: i + 1,
                name: String::new(),
            };
            TrialError::cell(file, line, column, Kind::NotUtf8)
        })?;
        names.push(text.trim().to_string());
    }
    Ok(names)
}

/// The axis of each cell of a row of axis letters (`None` for an empty cell), or `None` when
/// the row is something else.
fn axis_row(rec: &ByteRecord) -> Option<Vec<Option<char>>> {
    let mut axes = Vec::with_capacity(rec.len());
    for field in rec.iter() {
        axes.push(match field.trim_ascii() {
            b"" => None,
            [b'x' | b'X'] => Some('x'),
            [b'y' | b'Y'] => Some('y'),
            [b'z' | b'Z'] => Some('z'),
            _ => return None,
        });
    }
    (axes.iter().flatten().count() >= 3).then_some(axes)
}

/// Column names from a row of marker names over a row of axis letters (module doc).
fn merged_names(names: &[String], axes: &[Option<char>]) -> Vec<String> {
    let mut label = "";
    (0..names.len().max(axes.len()))
        .map(|i| {
            let name = names.get(i).map_or("", String::as_str);
            if !name.is_empty() {
                label = name;
            }
            match axes.get(i).copied().flatten() {
                Some(axis) if !label.is_empty() => format!("{label}_{axis}"),
                _ => name.to_string(),
            }
        })
        .collect()
}

/// Splits `<label>_x` (or `.x`, `:x`, any case) into label and axis index.
pub(super) fn marker_column(name: &str) -> Option<(&str, usize)> {
    let bytes = name.as_bytes();
    let n = bytes.len();
    if n < 3 {
        return None;
    }
    let axis = match bytes[n - 1] {
        b'x' | b'X' => 0,
        b'y' | b'Y' => 1,
        b'z' | b'Z' => 2,
        _ => return None,
    };
    if !matches!(bytes[n - 2], b'_' | b'.' | b':') {
        return None;
    }
    // Both last bytes are ASCII, so `n - 2` is a character boundary.
    let label = name.get(..n - 2)?.trim_end();
    if label.is_empty() {
        None
    } else {
        Some((label, axis))
    }
}

pub(super) fn column_of(names: &[String], index0: usize) -> Column {
    Column {
        index: index0 + 1,
        name: names.get(index0).cloned().unwrap_or_default(),
    }
}

/// Up to 12 header names for a message.
fn found_list(names: &[String]) -> String {
    let mut shown_names: Vec<String> = names
        .iter()
        .take(12)
        .map(|n| {
            if n.is_empty() {
                "(unnamed)".to_string()
            } else {
                format!("`{}`", shown(n))
            }
        })
        .collect();
    if names.len() > 12 {
        shown_names.push(format!("and {} more", names.len() - 12));
    }
    if shown_names.is_empty() {
        "no columns".into()
    } else {
        shown_names.join(", ")
    }
}

/// The header from its column names (trimmed): clock, layout and ignored columns, checked.
pub(super) fn parse_header(
    names: Vec<String>,
    file: &str,
    line: u64,
    format: Format,
) -> Result<Header, TrialError> {
    // The same header text twice.
    let mut first_of: HashMap<&str, usize> = HashMap::new();
    for (i, name) in names.iter().enumerate() {
        if name.is_empty() {
            continue;
        }
        if let Some(&first) = first_of.get(name.as_str()) {
            return Err(TrialError::at(
                file,
                line,
                Kind::DuplicateColumn {
                    name: shown(name),
                    first: first + 1,
                    second: i + 1,
                },
            ));
        }
        first_of.insert(name, i);
    }

    let lower: Vec<String> = names.iter().map(|n| n.to_ascii_lowercase()).collect();
    let find_all = |wanted: &[&str]| -> Vec<usize> {
        (0..lower.len())
            .filter(|&i| wanted.contains(&lower[i].as_str()))
            .collect()
    };
    let two = |cols: &[usize]| -> Result<(), TrialError> {
        if let [a, b, ..] = cols {
            return Err(TrialError::at(
                file,
                line,
                Kind::TwoClockColumns {
                    first: column_of(&names, *a),
                    second: column_of(&names, *b),
                },
            ));
        }
        Ok(())
    };
    let time_cols = find_all(&["time", "time_s"]);
    let frame_cols = find_all(&["frame"]);
    two(&time_cols)?;
    let (clock, clock_col) = if let Some(&c) = time_cols.first() {
        (Clock::Seconds, c)
    } else if let Some(&c) = frame_cols.first() {
        two(&frame_cols)?;
        (Clock::Frames, c)
    } else {
        let hint = match names.as_slice() {
            [only] if only.contains(';') => "; the header looks separated by `;`: gravline reads \
                                             comma-separated files"
                .to_string(),
            [only] if only.contains('\t') => "; the header looks separated by tabs: gravline \
                                              reads comma-separated files"
                .to_string(),
            _ => String::new(),
        };
        return Err(TrialError::at(
            file,
            line,
            Kind::NoTimeColumn {
                found: found_list(&names),
                hint,
            },
        ));
    };
    let is_clock = |i: usize| time_cols.contains(&i) || frame_cols.contains(&i);
    let ignored_name = |i: usize| -> String {
        match names.get(i) {
            Some(n) if !n.is_empty() => n.clone(),
            _ => format!("(unnamed column {})", i + 1),
        }
    };

    let marker_cols = find_all(&["marker"]);
    let layout;
    let mut ignored = Vec::new();
    if let Some(&marker) = marker_cols.first() {
        let mut xyz = [usize::MAX; 3];
        for (k, axis) in ["x", "y", "z", "marker"].iter().enumerate() {
            let cols = find_all(&[axis]);
            if let [a, b, ..] = cols.as_slice() {
                return Err(TrialError::at(
                    file,
                    line,
                    Kind::DuplicateColumn {
                        name: (*axis).into(),
                        first: a + 1,
                        second: b + 1,
                    },
                ));
            }
            if let (Some(slot), Some(&c)) = (xyz.get_mut(k), cols.first()) {
                *slot = c;
            }
        }
        let missing: Vec<String> = ["x", "y", "z"]
            .iter()
            .zip(xyz)
            .filter(|(_, c)| *c == usize::MAX)
            .map(|(a, _)| format!("`{a}`"))
            .collect();
        if !missing.is_empty() {
            return Err(TrialError::at(
                file,
                line,
                Kind::TidyMissingColumn {
                    missing: missing.join(", "),
                    found: found_list(&names),
                },
            ));
        }
        for i in 0..names.len() {
            if !is_clock(i) && i != marker && !xyz.contains(&i) {
                ignored.push(ignored_name(i));
            }
        }
        layout = Layout::Tidy { marker, xyz };
    } else {
        let mut labels: Vec<String> = Vec::new();
        let mut cols: Vec<[Option<usize>; 3]> = Vec::new();
        let mut index_of: HashMap<String, usize> = HashMap::new();
        for (i, name) in names.iter().enumerate() {
            if is_clock(i) {
                continue;
            }
            let Some((label, axis)) = marker_column(name) else {
                ignored.push(ignored_name(i));
                continue;
            };
            let m = match index_of.get(label) {
                Some(&m) => m,
                None => {
                    labels.push(label.to_string());
                    cols.push([None; 3]);
                    index_of.insert(label.to_string(), labels.len() - 1);
                    labels.len() - 1
                }
            };
            // `m` indexes `cols` by construction and `axis` is 0..3.
            let slot = &mut cols[m][axis];
            if let Some(first) = *slot {
                return Err(TrialError::at(
                    file,
                    line,
                    Kind::DuplicateMarkerAxis {
                        marker: shown(label),
                        axis: ['x', 'y', 'z'][axis],
                        columns: format!(
                            "{} and {}",
                            column_of(&names, first),
                            column_of(&names, i)
                        ),
                    },
                ));
            }
            *slot = Some(i);
        }
        let mut xyz = Vec::with_capacity(cols.len());
        for (label, c) in labels.iter().zip(&cols) {
            match c {
                [Some(x), Some(y), Some(z)] => xyz.push([*x, *y, *z]),
                _ => {
                    let axes = ['x', 'y', 'z'];
                    let list = |present: bool| -> Vec<char> {
                        axes.iter()
                            .zip(c)
                            .filter(|(_, col)| col.is_some() == present)
                            .map(|(a, _)| *a)
                            .collect()
                    };
                    let join = |v: &[char]| {
                        v.iter()
                            .map(|a| a.to_string())
                            .collect::<Vec<_>>()
                            .join(", ")
                    };
                    let missing = list(false);
                    return Err(TrialError::at(
                        file,
                        line,
                        Kind::IncompleteMarker {
                            marker: shown(label),
                            present: join(&list(true)),
                            missing: join(&missing),
                            first_missing: missing.first().copied().unwrap_or('x'),
                        },
                    ));
                }
            }
        }
        if labels.is_empty() {
            return Err(TrialError::at(
                file,
                line,
                Kind::NoMarkers {
                    found: found_list(&names),
                },
            ));
        }
        layout = Layout::Wide { labels, xyz };
    }
    Ok(Header {
        line,
        names,
        clock,
        clock_col,
        layout,
        ignored,
        format,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn marker_column_accepts_three_separators_and_any_case() {
        assert_eq!(marker_column("r_heel_x"), Some(("r_heel", 0)));
        assert_eq!(marker_column("r_heel.Y"), Some(("r_heel", 1)));
        assert_eq!(marker_column("r_heel:z"), Some(("r_heel", 2)));
        assert_eq!(marker_column("_x"), None);
        assert_eq!(marker_column("r_heel_w"), None);
        assert_eq!(marker_column("é_x"), Some(("é", 0)));
    }

    #[test]
    fn separators_are_found_on_the_header_line() {
        assert_eq!(detect_format(b"time,a_x").sep, b',');
        assert_eq!(
            detect_format(b"time;a_x;a_y"),
            Format {
                sep: b';',
                comma_decimal: true
            }
        );
        assert_eq!(detect_format(b"time\ta_x").sep, b'\t');
        assert_eq!(detect_format(b"time;a,x").sep, b',');
        assert_eq!(detect_format(b"time").sep, b',');
    }

    #[test]
    fn two_header_rows_name_the_axis_columns() {
        let names: Vec<String> = ["Frame", "Time", "LASI", "", "", "RASI", "", ""]
            .map(String::from)
            .to_vec();
        let axes = [
            None,
            None,
            Some('x'),
            Some('y'),
            Some('z'),
            Some('x'),
            Some('y'),
            Some('z'),
        ];
        assert_eq!(
            merged_names(&names, &axes),
            ["Frame", "Time", "LASI_x", "LASI_y", "LASI_z", "RASI_x", "RASI_y", "RASI_z"]
        );
    }
}
