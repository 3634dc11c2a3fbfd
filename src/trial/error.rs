//! Errors of the trial reader, in the shape of the `csv` crate's: one [`TrialError`] holding
//! the file, where in it (line, and column where there is one) and a boxed [`TrialErrorKind`].
//! Each message is one lowercase line naming the file, the line (1-based, comment lines
//! included) and the column, and saying how to fix the file.

use std::fmt;
use std::io;

/// A column of a trial file: its 1-based index and its header text.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Column {
    /// 1-based, as a spreadsheet counts.
    pub index: usize,
    /// Header text (trimmed; empty for an unnamed column or one named by index only).
    pub name: String,
}

impl fmt::Display for Column {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.name.is_empty() {
            write!(f, "column {}", self.index)
        } else {
            write!(f, "column {} (`{}`)", self.index, shown(&self.name))
        }
    }
}

/// Where in a trial file an error points: a 1-based line (comment lines included) and, where
/// one cell or header column is at fault, its column.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Position {
    pub line: u64,
    pub column: Option<Column>,
}

/// Why a trial file could not be read: the file, where, and what ([`TrialErrorKind`]).
#[derive(Debug)]
pub struct TrialError {
    /// The file as named in messages.
    pub file: String,
    /// Line and column, for errors that point into the file.
    pub position: Option<Position>,
    /// What is wrong.
    pub kind: Box<TrialErrorKind>,
}

impl TrialError {
    /// An error of `kind` in `file`, without a position.
    pub(crate) fn new(file: &str, kind: TrialErrorKind) -> TrialError {
        TrialError {
            file: file.to_string(),
            position: None,
            kind: Box::new(kind),
        }
    }

    /// An error of `kind` on `line` of `file`.
    pub(crate) fn at(file: &str, line: u64, kind: TrialErrorKind) -> TrialError {
        TrialError {
            file: file.to_string(),
            position: Some(Position { line, column: None }),
            kind: Box::new(kind),
        }
    }

    /// An error of `kind` in one column of `line` of `file`.
    pub(crate) fn cell(file: &str, line: u64, column: Column, kind: TrialErrorKind) -> TrialError {
        TrialError {
            file: file.to_string(),
            position: Some(Position {
                line,
                column: Some(column),
            }),
            kind: Box::new(kind),
        }
    }

    /// What is wrong.
    pub fn kind(&self) -> &TrialErrorKind {
        &self.kind
    }

    /// The 1-based line of the file the error points at, where there is one.
    pub fn line(&self) -> Option<u64> {
        self.position.as_ref().map(|p| p.line)
    }
}

impl fmt::Display for TrialError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.file)?;
        if let Some(p) = &self.position {
            write!(f, " line {}", p.line)?;
            if let Some(c) = &p.column {
                write!(f, ", {c}")?;
            }
        }
        write!(f, ": {}", self.kind)
    }
}

impl std::error::Error for TrialError {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        match self.kind.as_ref() {
            TrialErrorKind::Io(e) => Some(e),
            _ => None,
        }
    }
}

/// What is wrong with a trial file; the message follows the file and position of the
/// [`TrialError`] that holds it.
#[derive(Debug, thiserror::Error)]
pub enum TrialErrorKind {
    /// The file could not be opened or read.
    #[error(
        "cannot read the file ({}); check the path and that it is a readable file",
        .0.to_string().to_lowercase()
    )]
    Io(io::Error),

    /// Nothing but comments and blank lines.
    #[error(
        "no header line (the file is empty or holds only comments and blank lines); \
         a trial csv starts with a header such as `time,l_asis_x,l_asis_y,l_asis_z`"
    )]
    Empty,

    /// A comment or header line too long to be one.
    #[error(
        "the line is longer than {limit_bytes} bytes without a line break; \
         this is not a trial csv (check the file)"
    )]
    LineTooLong { limit_bytes: u64 },

    /// A header or data cell that is not UTF-8 text.
    #[error(
        "the cell holds bytes that are not utf-8 text; save the file as utf-8 (or plain ascii)"
    )]
    NotUtf8,

    /// A header and no data rows.
    #[error("header only, no data rows; export the trial with its frames")]
    NoData,

    /// Neither `time`/`time_s` nor `frame` in the header.
    #[error(
        "no time or frame column (found {found}); name the clock column \
         `time` or `time_s` (seconds), or `frame` (frame numbers, with a rate){hint}"
    )]
    NoTimeColumn { found: String, hint: String },

    /// Two clock columns of the same kind (`time` and `time_s`, or two `frame`s).
    #[error("two clock columns, {first} and {second}; keep one of them")]
    TwoClockColumns { first: Column, second: Column },

    /// The same header text twice (or a reserved tidy name twice, in any case).
    #[error(
        "column `{name}` appears twice (columns {first} and {second}); \
         rename or remove one of them"
    )]
    DuplicateColumn {
        name: String,
        first: usize,
        second: usize,
    },

    /// The same marker label with the same axis twice (`a_x` and `a.x`).
    #[error(
        "marker `{marker}` has two {axis} columns, {columns}; \
         each marker label may appear once"
    )]
    DuplicateMarkerAxis {
        marker: String,
        axis: char,
        /// Both columns with their header text, e.g. column 2 (`a_x`) and column 5 (`a.x`).
        columns: String,
    },

    /// A marker with some but not all of its x, y, z columns.
    #[error(
        "marker `{marker}` has columns for {present} but not for {missing}; \
         add the missing column (for example `{marker}_{first_missing}`) or remove the marker's \
         other columns"
    )]
    IncompleteMarker {
        marker: String,
        present: String,
        missing: String,
        first_missing: char,
    },

    /// A wide header without marker columns.
    #[error(
        "no marker columns (found {found}); name them `<label>_x`, \
         `<label>_y`, `<label>_z`, or use the tidy layout (`marker`, `x`, `y`, `z`)"
    )]
    NoMarkers { found: String },

    /// A tidy header (with a `marker` column) that lacks `x`, `y` or `z`.
    #[error(
        "tidy layout (a `marker` column) needs columns `x`, `y` and `z`; \
         missing {missing} (found {found})"
    )]
    TidyMissingColumn { missing: String, found: String },

    /// A `frame` column and no rate.
    #[error("frame numbers and no rate; give `rate_hz` in [input] or `--rate-hz`")]
    MissingRate,

    /// A given rate that is not a positive finite number, or times that imply none.
    #[error("a rate of {rate_hz} hz is not a positive finite number; {hint}")]
    InvalidRate { rate_hz: f64, hint: &'static str },

    /// A given rate that contradicts the file's time column.
    #[error(
        "the time column gives {file_rate_hz:.4} hz but `rate_hz` is {given_rate_hz} hz; \
         remove `rate_hz` (the times set the rate) or check the file"
    )]
    RateMismatch {
        file_rate_hz: f64,
        given_rate_hz: f64,
    },

    /// A data row with another number of fields than the header.
    #[error(
        "expected {expected} fields (as in the header), found {found}; \
         every row needs one cell per header column (leave a cell empty where a marker was not \
         seen; a decimal comma splits a cell in two)"
    )]
    Ragged { expected: usize, found: usize },

    /// A cell that does not parse as a number.
    #[error("`{text}` is not a number; {hint}")]
    NotANumber { text: String, hint: &'static str },

    /// An empty, `NaN` or infinite time (or frame number).
    #[error(
        "`{text}` is not a finite time; every row needs its time \
         (or frame number) as a finite number"
    )]
    NonFiniteTime { text: String },

    /// An infinite coordinate.
    #[error(
        "`{text}` is not a finite coordinate; write the value, \
         or leave the cell empty (or `NaN`) where the marker was not seen"
    )]
    NonFiniteCoordinate { text: String },

    /// A frame number that is not a whole number (or too large to be exact).
    #[error(
        "`{text}` is not a frame number; frame numbers are whole \
         numbers (use a `time` column for times in seconds)"
    )]
    NotAFrameNumber { text: String },

    /// A time (or frame number) not greater than the one before.
    #[error(
        "{value} is not greater than {previous} on line \
         {previous_line}; times must increase strictly: sort the rows by time and remove \
         repeated frames"
    )]
    NotIncreasing {
        value: f64,
        previous: f64,
        previous_line: u64,
    },

    /// A frame interval more than 1 % off the median interval.
    #[error(
        "the frame interval of {interval_s:.6} s differs by more \
         than 1 % from the median interval of {median_s:.6} s; resample the trial to a constant \
         rate or check for dropped frames"
    )]
    UnevenRate { interval_s: f64, median_s: f64 },

    /// One frame with a time column: no interval to take a rate from.
    #[error(
        "only one frame, so the times give no rate; export at least two \
         frames or give `rate_hz` in [input] or `--rate-hz`"
    )]
    SingleFrame,

    /// Tidy layout: an empty marker label.
    #[error("empty marker label; every tidy row names its marker")]
    EmptyMarkerLabel,

    /// Tidy layout: a second row for the same (frame, marker).
    #[error(
        "marker `{marker}` has a second row at {at}; each marker has at most \
         one row per frame (remove the repeated row)"
    )]
    TidyDuplicate {
        marker: String,
        /// `time 0.02 s` or `frame 7`.
        at: String,
    },

    /// Tidy layout: far more (frame, marker) cells than rows.
    #[error(
        "tidy layout with {markers} markers over {frames} frames but only \
         {rows} rows so far; check the `marker` and clock columns (one row per marker per frame)"
    )]
    TidySparse {
        markers: usize,
        frames: usize,
        rows: u64,
    },

    /// Any other CSV syntax problem.
    #[error("not readable as csv ({message}); check the file's quoting")]
    Csv { message: String },
}

/// Cell or header text for a message: control characters escaped, long text cut.
pub(super) fn shown(text: &str) -> String {
    const MAX_CHARS: usize = 40;
    let mut out = String::new();
    for (n, c) in text.chars().enumerate() {
        if n == MAX_CHARS {
            out.push('…');
            break;
        }
        if c.is_control() || c == '`' {
            out.extend(c.escape_debug());
        } else {
            out.push(c);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The struct keeps the messages the variants used to carry, position by position.
    #[test]
    fn messages_put_file_line_and_column_first() {
        let e = TrialError::new("a.csv", TrialErrorKind::Empty);
        assert!(e.to_string().starts_with("a.csv: no header line"));
        let e = TrialError::at("a.csv", 3, TrialErrorKind::NoData);
        assert_eq!(
            e.to_string(),
            "a.csv line 3: header only, no data rows; export the trial with its frames"
        );
        let column = Column {
            index: 2,
            name: "a_x".into(),
        };
        let e = TrialError::cell(
            "a.csv",
            4,
            column,
            TrialErrorKind::NonFiniteTime { text: "x".into() },
        );
        assert!(e
            .to_string()
            .starts_with("a.csv line 4, column 2 (`a_x`): `x` is not"));
        let by_index = Column {
            index: 7,
            name: String::new(),
        };
        let e = TrialError::cell("a.csv", 1, by_index, TrialErrorKind::NotUtf8);
        assert!(e
            .to_string()
            .starts_with("a.csv line 1, column 7: the cell holds"));
        assert_eq!(e.line(), Some(1));
        assert!(std::mem::size_of::<TrialError>() <= 96);
    }
}
