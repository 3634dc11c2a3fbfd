//! Trial reader: layouts, units, missing samples, warnings, every error message, the two real
//! recordings in /work/shared/realdata, and random byte mutations that must never panic.
//!
//! Check values come from the fixture texts themselves (a coordinate in millimetres is the same
//! number times 1e-3 in metres: SI definition of the millimetre), from the real recordings' own
//! first rows and header comments, and from the design rules (docs/DESIGN.md 3.1).

use std::path::{Path, PathBuf};

use approx::assert_abs_diff_eq;
use gravline::trial::{
    read_labels, read_labels_from, read_trial, read_trial_from, LengthUnit, ReadOptions, Trial,
    TrialError, TrialErrorKind, UpAxis,
};
use gravline::warning::Warning;

fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests")
        .join("fixtures")
        .join(name)
}

/// The shared real recordings (`GRAVLINE_SHARED/realdata`, `../shared/realdata` from the
/// repository, or `/work/shared/realdata`); a test that needs them fails where they are absent.
fn realdata_dir() -> PathBuf {
    let candidates = [
        std::env::var_os("GRAVLINE_SHARED").map(|s| PathBuf::from(s).join("realdata")),
        Some(PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../shared/realdata")),
        Some(PathBuf::from("/work/shared/realdata")),
    ];
    candidates
        .into_iter()
        .flatten()
        .find(|d| d.is_dir())
        .expect("the shared real recordings (shared/realdata) are missing")
}

fn mm() -> ReadOptions {
    ReadOptions::default()
}

fn with_rate(rate_hz: f64) -> ReadOptions {
    ReadOptions {
        rate_hz: Some(rate_hz),
        ..ReadOptions::default()
    }
}

fn read_str(text: &str, opts: &ReadOptions) -> Result<Trial, TrialError> {
    read_trial_from(text.as_bytes(), "bad.csv", "bad", opts)
}

/// The error of reading `text` as `bad.csv`; fails the test if it reads.
fn error_of(text: &[u8], opts: &ReadOptions) -> TrialError {
    match read_trial_from(text, "bad.csv", "bad", opts) {
        Ok(t) => panic!("expected an error, read {} frames", t.n_frames()),
        Err(e) => e,
    }
}

/// Asserts that the message is one line and holds every part.
fn assert_message(e: &TrialError, parts: &[&str]) {
    let msg = e.to_string();
    assert!(!msg.contains('\n'), "message is not one line: {msg}");
    for part in parts {
        assert!(msg.contains(part), "message lacks `{part}`: {msg}");
    }
}

fn point(trial: &Trial, label: &str, frame: usize) -> Option<[f64; 3]> {
    let m = trial.markers.index_of(label)?;
    trial.markers.point(m, frame)
}

fn assert_point(trial: &Trial, label: &str, frame: usize, expected_m: [f64; 3]) {
    let p =
        point(trial, label, frame).unwrap_or_else(|| panic!("`{label}` not seen in frame {frame}"));
    for k in 0..3 {
        // Tolerance: parsing and one multiplication by 1e-3, far below a micrometre.
        assert_abs_diff_eq!(p[k], expected_m[k], epsilon = 1e-12);
    }
}

// --- layouts ---------------------------------------------------------------------------------

#[test]
fn wide_mm_z_up_with_comments_and_time_column() {
    let trial = read_trial(&fixture("trial_wide_mm.csv"), &mm()).expect("fixture reads");
    assert_eq!(trial.name, "trial_wide_mm");
    assert_eq!(trial.n_frames(), 5);
    for (i, t) in trial.times_s.iter().enumerate() {
        assert_abs_diff_eq!(*t, i as f64 * 0.01, epsilon = 1e-12);
    }
    // Fixture times step by 0.01 s: 100 Hz.
    assert_abs_diff_eq!(trial.rate_hz, 100.0, epsilon = 1e-6);
    assert_eq!(trial.up_axis, UpAxis::Z);
    assert_eq!(trial.markers.labels, ["l_asis", "r_asis", "r_heel"]);
    assert_eq!(trial.markers.n_markers(), 3);
    assert!((0..3).all(|m| trial.markers.track_len(m) == 5));
    // Row `0.00,100.0,120.0,950.0,...` in millimetres.
    assert_point(&trial, "l_asis", 0, [0.100, 0.120, 0.950]);
    assert_point(&trial, "r_asis", 4, [0.104, -0.122, 0.953]);
    assert_point(&trial, "r_heel", 4, [-0.046, -0.090, 0.062]);
}

#[test]
fn empty_and_nan_cells_are_not_seen() {
    let trial = read_trial(&fixture("trial_wide_mm.csv"), &mm()).expect("fixture reads");
    // Line 6: r_heel_z empty; line 7: r_heel_x `NaN`; line 8: all of r_asis empty.
    assert_eq!(point(&trial, "r_heel", 1), None);
    assert_eq!(point(&trial, "r_heel", 2), None);
    assert_eq!(point(&trial, "r_asis", 3), None);
    assert_point(&trial, "r_heel", 3, [-0.047, -0.090, 0.0615]);
    assert_point(&trial, "l_asis", 3, [0.103, 0.1215, 0.9515]);
    let m = &trial.markers;
    let seen: usize = (0..m.n_markers())
        .map(|i| m.points(i).filter(|p| p.is_some()).count())
        .sum();
    assert_eq!(seen, 15 - 3);
}

#[test]
fn ignored_columns_are_warned_once() {
    let trial = read_trial(&fixture("trial_wide_mm.csv"), &mm()).expect("fixture reads");
    assert_eq!(
        trial.warnings,
        [Warning::IgnoredColumns {
            columns: vec!["event".into()]
        }]
    );
    let text = "time,a_x,a_y,a_z,note,x,\n0,1,2,3,n,5,\n0.01,1,2,3,n,5,\n";
    let trial = read_str(text, &mm()).expect("reads");
    assert_eq!(
        trial.warnings,
        [Warning::IgnoredColumns {
            columns: vec!["note".into(), "x".into(), "(unnamed column 7)".into()]
        }]
    );
    let clean = read_str("time,a_x,a_y,a_z\n0,1,2,3\n0.01,1,2,3\n", &mm()).expect("reads");
    assert!(clean.warnings.is_empty());
}

#[test]
fn frame_column_with_given_rate() {
    let trial = read_trial(&fixture("trial_frames.csv"), &with_rate(200.0)).expect("reads");
    assert_eq!(trial.n_frames(), 4);
    assert_eq!(trial.rate_hz, 200.0);
    // Time of frame n is n / rate_hz: frames 10..13 at 200 Hz.
    for (i, t) in trial.times_s.iter().enumerate() {
        assert_abs_diff_eq!(*t, (10 + i) as f64 / 200.0, epsilon = 1e-12);
    }
    assert_point(&trial, "c7", 3, [0.0115, 0.020, 1.4015]);
    // Every other frame exported: frames 0, 2, 4 at 100 Hz are rows 0.02 s apart, 50 Hz.
    let text = "frame,c7_x,c7_y,c7_z\n0,1,2,3\n2,1,2,3\n4,1,2,3\n";
    let trial = read_str(text, &with_rate(100.0)).expect("reads");
    assert_eq!(trial.rate_hz, 50.0);
    assert_abs_diff_eq!(trial.times_s[2], 0.04, epsilon = 1e-12);
}

#[test]
fn dot_and_colon_separators_any_case() {
    let trial = read_trial(&fixture("trial_separators.csv"), &mm()).expect("reads");
    assert_eq!(trial.markers.labels, ["l_heel", "r_heel"]);
    // 0.004 s steps: 250 Hz.
    assert_abs_diff_eq!(trial.rate_hz, 250.0, epsilon = 1e-6);
    assert_point(&trial, "l_heel", 1, [0.0015, 0.0025, 0.0035]);
    assert_point(&trial, "r_heel", 2, [0.005, 0.006, 0.007]);
    assert!(trial.warnings.is_empty());
}

fn assert_same_data(a: &Trial, b: &Trial) {
    assert_eq!(a.times_s, b.times_s);
    assert_abs_diff_eq!(a.rate_hz, b.rate_hz, epsilon = 1e-9);
    let mut la = a.markers.labels.clone();
    let mut lb = b.markers.labels.clone();
    la.sort();
    lb.sort();
    assert_eq!(la, lb);
    for label in &a.markers.labels {
        for f in 0..a.n_frames() {
            assert_eq!(point(a, label, f), point(b, label, f), "{label} frame {f}");
        }
    }
}

#[test]
fn tidy_layout_equals_the_same_data_in_wide() {
    let wide = read_trial(&fixture("trial_wide_mm.csv"), &mm()).expect("wide reads");
    let tidy = read_trial(&fixture("trial_tidy_mm.csv"), &mm()).expect("tidy reads");
    assert_same_data(&wide, &tidy);
    // First appearance order in the tidy file.
    assert_eq!(tidy.markers.labels, ["l_asis", "r_heel", "r_asis"]);
    assert_eq!(
        tidy.warnings,
        [Warning::IgnoredColumns {
            columns: vec!["quality".into()]
        }]
    );
}

#[test]
fn tidy_rows_marker_by_marker_give_the_same_trial() {
    let text = std::fs::read_to_string(fixture("trial_tidy_mm.csv")).expect("fixture");
    let mut lines: Vec<&str> = text.lines().filter(|l| !l.starts_with('#')).collect();
    let header = lines.remove(0);
    // Sort by marker, then by time (as a table "melt" writes them).
    lines.sort_by_key(|l| {
        let mut f = l.split(',');
        let t = f.next().unwrap_or("").to_string();
        (f.next().unwrap_or("").to_string(), t)
    });
    let melted = format!("{header}\n{}\n", lines.join("\n"));
    let by_marker = read_trial_from(melted.as_bytes(), "melt.csv", "melt", &mm()).expect("reads");
    let tidy = read_trial(&fixture("trial_tidy_mm.csv"), &mm()).expect("tidy reads");
    assert_same_data(&tidy, &by_marker);
    assert_eq!(by_marker.markers.labels, ["l_asis", "r_asis", "r_heel"]);
}

#[test]
fn metres_and_y_up() {
    let opts = ReadOptions {
        units: LengthUnit::Metres,
        up_axis: UpAxis::parse("+y").expect("axis"),
        rate_hz: None,
        ..ReadOptions::default()
    };
    let trial = read_trial(&fixture("trial_m_yup.csv"), &opts).expect("reads");
    assert_eq!(
        trial.up_axis,
        UpAxis {
            index: 1,
            positive: true
        }
    );
    assert_point(&trial, "c7", 3, [0.13, 1.43, 0.02]);
    // Stamps of 120 Hz to six decimals; the fitted rate is within 0.01 Hz.
    assert_abs_diff_eq!(trial.rate_hz, 120.0, epsilon = 0.01);
}

/// `n` frames at `rate_hz`, time stamps rounded to whole milliseconds.
fn millisecond_stamps(rate_hz: f64, n: usize, drop_frame: Option<usize>) -> String {
    let mut text = String::from("time,a_x,a_y,a_z\n");
    for i in (0..n).filter(|i| Some(*i) != drop_frame) {
        let t = (i as f64 / rate_hz * 1000.0).round() / 1000.0;
        text.push_str(&format!("{t:.6},1,2,3\n"));
    }
    text
}

#[test]
fn times_rounded_to_milliseconds_are_even_within_their_rounding() {
    // 150 Hz stamped to 1 ms: intervals of 6 and 7 ms, 14 % apart, as in the real walk file.
    let trial = read_str(&millisecond_stamps(150.0, 251, None), &mm()).expect("reads");
    // The fitted slope recovers the clock: within 0.01 Hz (rounding of 0.5 ms over 1.667 s).
    assert_abs_diff_eq!(trial.rate_hz, 150.0, epsilon = 0.01);
    // A dropped frame is still an error: frame 100 is missing, so line 102 holds frame 101.
    let e = error_of(millisecond_stamps(150.0, 251, Some(100)).as_bytes(), &mm());
    assert!(
        (matches!(e.kind(), TrialErrorKind::UnevenRate { .. }) && e.line() == Some(102)),
        "{e}"
    );
}

#[test]
fn blank_lines_and_crlf_keep_line_numbers() {
    let text = "# c\r\n\r\ntime,a_x,a_y,a_z\r\n0,1,2,3\r\n\r\n0.01,1,2,3\r\n0.02,1,x,3\r\n";
    let e = error_of(text.as_bytes(), &mm());
    assert_message(
        &e,
        &["bad.csv line 7, column 3 (`a_y`): `x` is not a number"],
    );
    let ok = read_str(&text.replace(",x,", ",2,"), &mm()).expect("reads");
    assert_eq!(ok.n_frames(), 3);
}

#[test]
fn byte_order_mark_is_skipped() {
    let text = b"\xEF\xBB\xBFtime,a_x,a_y,a_z\n0,1,2,3\n0.01,1,2,3\n";
    let trial = read_trial_from(&text[..], "bom.csv", "bom", &mm()).expect("reads");
    assert_eq!(trial.markers.labels, ["a"]);
}

#[test]
fn labels_from_header_or_tidy_marker_column() {
    let wide = read_labels(&fixture("trial_wide_mm.csv")).expect("wide labels");
    assert_eq!(wide, ["l_asis", "r_asis", "r_heel"]);
    let tidy = read_labels(&fixture("trial_tidy_mm.csv")).expect("tidy labels");
    assert_eq!(tidy, ["l_asis", "r_heel", "r_asis"]);
    // Header only: no data needed for the labels of a wide file.
    let header_only = read_labels_from(&b"frame,c7_x,c7_y,c7_z\n"[..], "h.csv").expect("labels");
    assert_eq!(header_only, ["c7"]);
    let e = read_labels_from(&b"time,a_x,a_y\n"[..], "h.csv").expect_err("incomplete marker");
    assert_message(&e, &["h.csv line 1", "marker `a`"]);
}

// --- errors ----------------------------------------------------------------------------------

#[test]
fn error_empty_file() {
    for text in ["", "\n\n", "# only a comment\n\n# and another\n"] {
        let e = error_of(text.as_bytes(), &mm());
        assert!(matches!(e.kind(), TrialErrorKind::Empty), "{e}");
        assert_message(&e, &["bad.csv", "no header line", "`time,l_asis_x"]);
    }
}

#[test]
fn error_header_only() {
    let e = error_of(b"# c\n# c\ntime,a_x,a_y,a_z\n", &mm());
    assert!(
        (matches!(e.kind(), TrialErrorKind::NoData) && e.line() == Some(3)),
        "{e}"
    );
    assert_message(
        &e,
        &[
            "bad.csv line 3",
            "header only, no data rows",
            "export the trial with its frames",
        ],
    );
}

#[test]
fn error_no_time_column() {
    let e = error_of(b"t,a_x,a_y,a_z\n0,1,2,3\n", &mm());
    assert!(
        matches!(e.kind(), TrialErrorKind::NoTimeColumn { .. }),
        "{e}"
    );
    assert_message(
        &e,
        &[
            "bad.csv line 1",
            "no time or frame column",
            "found `t`, `a_x`",
            "`time`",
            "`time_s`",
            "`frame`",
        ],
    );
    // A header without a clock column and separated by `;` is read as `;`-separated.
    let e = error_of(b"t;a_x;a_y;a_z\n0;1;2;3\n", &mm());
    assert_message(&e, &["found `t`, `a_x`"]);
}

#[test]
fn error_frame_column_without_rate() {
    let e = match read_trial(&fixture("trial_frames.csv"), &mm()) {
        Err(e) => e,
        Ok(_) => panic!("a frame column needs a rate"),
    };
    assert!(
        (matches!(e.kind(), TrialErrorKind::MissingRate) && e.line() == Some(2)),
        "{e}"
    );
    assert_message(
        &e,
        &[
            "trial_frames.csv line 2",
            "column 1 (`Frame`)",
            "`rate_hz` in [input]",
            "`--rate-hz`",
        ],
    );
}

#[test]
fn error_not_a_number_names_file_line_column() {
    let path = fixture("trial_bad_number.csv");
    let e = read_trial(&path, &mm()).expect_err("`1.2.3` is not a number");
    assert!(
        (matches!(e.kind(), TrialErrorKind::NotANumber { .. }) && e.line() == Some(5)),
        "{e}"
    );
    assert_message(
        &e,
        &[
            &format!(
                "{} line 5, column 7 (`r_heel_z`): `1.2.3` is not a number",
                path.display()
            ),
            "leave the cell empty (or `NaN`)",
        ],
    );
    let e = error_of(b"time,a_x,a_y,a_z\n0,1,2,3\nabc,1,2,3\n", &mm());
    assert_message(
        &e,
        &[
            "line 3, column 1 (`time`): `abc` is not a number",
            "seconds",
        ],
    );
}

#[test]
fn error_ragged_row() {
    let e = error_of(b"time,a_x,a_y,a_z\n0,1,2,3\n0.01,1,2,3,4\n", &mm());
    assert!(
        (matches!(
            e.kind(),
            TrialErrorKind::Ragged {
                expected: 4,
                found: 5,
                ..
            }
        ) && e.line() == Some(3)),
        "{e}"
    );
    assert_message(
        &e,
        &[
            "bad.csv line 3",
            "expected 4 fields",
            "found 5",
            "one cell per header column",
        ],
    );
    let e = error_of(b"time,a_x,a_y,a_z\n0,1,2\n", &mm());
    assert_message(&e, &["line 2", "found 3"]);
}

#[test]
fn error_time_not_strictly_increasing() {
    let e = error_of(
        b"time,a_x,a_y,a_z\n0,1,2,3\n0.02,1,2,3\n0.01,1,2,3\n",
        &mm(),
    );
    assert!(
        (matches!(
            e.kind(),
            TrialErrorKind::NotIncreasing {
                previous_line: 3,
                ..
            }
        ) && e.line() == Some(4)),
        "{e}"
    );
    assert_message(
        &e,
        &[
            "bad.csv line 4, column 1 (`time`)",
            "0.01 is not greater than 0.02 on line 3",
            "sort the rows",
        ],
    );
    let e = error_of(b"time,a_x,a_y,a_z\n0,1,2,3\n0,1,2,3\n", &mm());
    assert_message(&e, &["line 3", "remove repeated frames"]);
}

#[test]
fn error_uneven_rate_names_first_offending_line() {
    let text =
        "time,a_x,a_y,a_z\n0,1,2,3\n0.01,1,2,3\n0.02,1,2,3\n0.03,1,2,3\n0.05,1,2,3\n0.06,1,2,3\n";
    let e = error_of(text.as_bytes(), &mm());
    assert!(
        (matches!(e.kind(), TrialErrorKind::UnevenRate { .. }) && e.line() == Some(6)),
        "{e}"
    );
    assert_message(
        &e,
        &[
            "bad.csv line 6, column 1 (`time`)",
            "0.020000 s",
            "0.010000 s",
            "more than 1 %",
            "resample",
            "dropped frames",
        ],
    );
    // 5 % jitter on exact stamps is uneven too.
    let text = "time,a_x,a_y,a_z\n0,1,2,3\n0.01,1,2,3\n0.0205,1,2,3\n0.0305,1,2,3\n0.0405,1,2,3\n";
    let e = error_of(text.as_bytes(), &mm());
    assert!(
        (matches!(e.kind(), TrialErrorKind::UnevenRate { .. }) && e.line() == Some(4)),
        "{e}"
    );
    // Frame numbers with a gap at the given rate.
    let e = error_of(
        b"frame,a_x,a_y,a_z\n1,1,2,3\n2,1,2,3\n4,1,2,3\n5,1,2,3\n",
        &with_rate(100.0),
    );
    assert!(
        (matches!(e.kind(), TrialErrorKind::UnevenRate { .. }) && e.line() == Some(4)),
        "{e}"
    );
}

#[test]
fn error_marker_with_some_axes_only() {
    let e = error_of(
        b"time,l_heel_x,l_heel_y,r_heel_x,r_heel_y,r_heel_z\n0,1,2,3,4,5\n",
        &mm(),
    );
    assert!(
        matches!(e.kind(), TrialErrorKind::IncompleteMarker { .. }),
        "{e}"
    );
    assert_message(
        &e,
        &[
            "bad.csv line 1",
            "marker `l_heel`",
            "columns for x, y but not for z",
            "add the missing column (for example `l_heel_z`)",
        ],
    );
}

#[test]
fn error_duplicated_column_or_label() {
    let e = error_of(b"time,a_x,a_y,a_z,a_x\n0,1,2,3,1\n", &mm());
    assert!(
        matches!(
            e.kind(),
            TrialErrorKind::DuplicateColumn {
                first: 2,
                second: 5,
                ..
            }
        ),
        "{e}"
    );
    assert_message(
        &e,
        &[
            "bad.csv line 1",
            "column `a_x` appears twice (columns 2 and 5)",
            "rename or remove one",
        ],
    );
    let e = error_of(b"# c\ntime,a_x,a_y,a_z,a.X\n0,1,2,3,1\n", &mm());
    assert!(
        matches!(
            e.kind(),
            TrialErrorKind::DuplicateMarkerAxis { axis: 'x', .. }
        ),
        "{e}"
    );
    assert_message(
        &e,
        &[
            "bad.csv line 2",
            "marker `a` has two x columns",
            "column 2 (`a_x`)",
            "column 5 (`a.X`)",
            "each marker label may appear once",
        ],
    );
    let e = error_of(b"time,TIME_S,a_x,a_y,a_z\n0,0,1,2,3\n", &mm());
    assert!(
        matches!(e.kind(), TrialErrorKind::TwoClockColumns { .. }),
        "{e}"
    );
    assert_message(
        &e,
        &[
            "bad.csv line 1",
            "two clock columns",
            "column 1 (`time`)",
            "column 2 (`TIME_S`)",
            "keep one",
        ],
    );
}

#[test]
fn error_non_finite_time() {
    for (cell, shown) in [("inf", "`inf`"), ("NaN", "`NaN`"), ("", "``")] {
        let text = format!("time,a_x,a_y,a_z\n0,1,2,3\n{cell},1,2,3\n");
        let e = error_of(text.as_bytes(), &mm());
        assert!(
            (matches!(e.kind(), TrialErrorKind::NonFiniteTime { .. }) && e.line() == Some(3)),
            "{e}"
        );
        assert_message(
            &e,
            &[
                "bad.csv line 3, column 1 (`time`)",
                shown,
                "not a finite time",
                "every row needs its time",
            ],
        );
    }
}

#[test]
fn error_infinite_coordinate_and_fractional_frame() {
    let e = error_of(b"time,a_x,a_y,a_z\n0,1,-inf,3\n0.01,1,2,3\n", &mm());
    assert!(
        (matches!(e.kind(), TrialErrorKind::NonFiniteCoordinate { .. }) && e.line() == Some(2)),
        "{e}"
    );
    assert_message(
        &e,
        &["line 2, column 3 (`a_y`): `-inf` is not a finite coordinate"],
    );
    let e = error_of(
        b"frame,a_x,a_y,a_z\n1,1,2,3\n2.5,1,2,3\n",
        &with_rate(100.0),
    );
    assert!(
        (matches!(e.kind(), TrialErrorKind::NotAFrameNumber { .. }) && e.line() == Some(3)),
        "{e}"
    );
    assert_message(&e, &["`2.5` is not a frame number", "whole numbers"]);
}

#[test]
fn error_tidy_duplicate_frame_and_marker() {
    let text = "time,marker,x,y,z\n0,a,1,2,3\n0,b,1,2,3\n0.01,a,1,2,3\n0.01,b,1,2,3\n0.01,a,,,\n";
    let e = error_of(text.as_bytes(), &mm());
    assert!(
        (matches!(e.kind(), TrialErrorKind::TidyDuplicate { .. }) && e.line() == Some(6)),
        "{e}"
    );
    assert_message(
        &e,
        &[
            "bad.csv line 6",
            "marker `a` has a second row at time 0.01 s",
            "one row per frame",
        ],
    );
    let e = error_of(b"time,marker,x,y\n0,a,1,2\n", &mm());
    assert!(
        matches!(e.kind(), TrialErrorKind::TidyMissingColumn { .. }),
        "{e}"
    );
    assert_message(&e, &["line 1", "missing `z`"]);
    let e = error_of(b"time,marker,x,y,z\n0,a,1,2,3\n0, ,1,2,3\n", &mm());
    assert!(
        (matches!(e.kind(), TrialErrorKind::EmptyMarkerLabel) && e.line() == Some(3)),
        "{e}"
    );
    assert_message(&e, &["column 2 (`marker`)", "empty marker label"]);
}

#[test]
fn error_non_utf8_bytes_name_the_line() {
    let e = error_of(b"time,a_x,a_y,a_z\n0,1,2,3\n0.01,1,\xff\xfe,3\n", &mm());
    assert!(
        ((matches!(e.kind(), TrialErrorKind::NotUtf8)
            && e.position
                .as_ref()
                .and_then(|p| p.column.as_ref())
                .map(|c| c.index)
                == Some(3))
            && e.line() == Some(3)),
        "{e}"
    );
    assert_message(
        &e,
        &[
            "bad.csv line 3, column 3",
            "not utf-8",
            "save the file as utf-8",
        ],
    );
    let e = error_of(b"# \xe9t\xe9\ntime,a_x,a_\xe9_y\n", &mm());
    assert!(
        ((matches!(e.kind(), TrialErrorKind::NotUtf8)
            && e.position
                .as_ref()
                .and_then(|p| p.column.as_ref())
                .map(|c| c.index)
                == Some(3))
            && e.line() == Some(2)),
        "{e}"
    );
    let e = error_of(b"time,marker,x,y,z\n0,\xff,1,2,3\n", &mm());
    assert!(
        ((matches!(e.kind(), TrialErrorKind::NotUtf8)
            && e.position
                .as_ref()
                .and_then(|p| p.column.as_ref())
                .map(|c| c.index)
                == Some(2))
            && e.line() == Some(2)),
        "{e}"
    );
}

#[test]
fn error_rate_problems() {
    let e = error_of(b"time,a_x,a_y,a_z\n0,1,2,3\n", &mm());
    assert!(
        (matches!(e.kind(), TrialErrorKind::SingleFrame) && e.line() == Some(2)),
        "{e}"
    );
    assert_message(&e, &["only one frame", "`rate_hz`"]);
    let e = error_of(
        b"time,a_x,a_y,a_z\n0,1,2,3\n0.01,1,2,3\n",
        &with_rate(120.0),
    );
    assert!(
        matches!(e.kind(), TrialErrorKind::RateMismatch { .. }),
        "{e}"
    );
    assert_message(
        &e,
        &["bad.csv", "100.0000 hz", "120 hz", "remove `rate_hz`"],
    );
    let e = error_of(b"frame,a_x,a_y,a_z\n0,1,2,3\n", &with_rate(0.0));
    assert!(
        matches!(e.kind(), TrialErrorKind::InvalidRate { .. }),
        "{e}"
    );
    assert_message(
        &e,
        &["bad.csv", "not a positive finite number", "`rate_hz`"],
    );
}

#[test]
fn error_missing_file() {
    let path = fixture("trial_absent.csv");
    let e = read_trial(&path, &mm()).expect_err("no such file");
    assert!(matches!(e.kind(), TrialErrorKind::Io { .. }), "{e}");
    assert_message(
        &e,
        &[
            &path.display().to_string(),
            "no such file",
            "check the path",
        ],
    );
}

#[test]
fn error_no_marker_columns() {
    let e = error_of(b"time,force_n\n0,1\n0.01,1\n", &mm());
    assert!(matches!(e.kind(), TrialErrorKind::NoMarkers { .. }), "{e}");
    assert_message(
        &e,
        &["line 1", "no marker columns", "`force_n`", "`<label>_x`"],
    );
}

#[test]
fn error_overlong_header_line() {
    let mut text = vec![b'a'; 17 << 20];
    text.push(b'\n');
    let e = error_of(&text, &mm());
    assert!(
        (matches!(e.kind(), TrialErrorKind::LineTooLong { .. }) && e.line() == Some(1)),
        "{e}"
    );
}

#[test]
fn error_messages_escape_control_characters() {
    let e = error_of(b"time,a_x,a_y,a_z\n0,1,2,3\n0.01,1,\"2\n\x07\",3\n", &mm());
    assert_message(
        &e,
        &["line 3, column 3 (`a_y`)", "\\n\\u{7}", "is not a number"],
    );
}

// --- real recordings -------------------------------------------------------------------------

#[test]
fn real_standing_recording() {
    let dir = realdata_dir();
    let path = dir.join("standing-static").join("trial.csv");
    // Header comment: 100 Hz; metres; +y up.
    let opts = ReadOptions {
        units: LengthUnit::Metres,
        up_axis: UpAxis::parse("y").expect("axis"),
        rate_hz: None,
        ..ReadOptions::default()
    };
    let trial = read_trial(&path, &opts).expect("standing trial reads");
    assert_eq!(trial.n_frames(), 300);
    assert_abs_diff_eq!(trial.rate_hz, 100.0, epsilon = 1e-6);
    assert_eq!(trial.markers.labels.len(), 42);
    for label in ["l_asis", "r_asis", "c7", "l_heel", "r_mt5"] {
        assert!(trial.markers.index_of(label).is_some(), "no `{label}`");
    }
    assert!(trial.warnings.is_empty());
    // First data row: `0.000000,-0.23672,1.64678,-1.16087,...` (r_head_front).
    assert_point(&trial, "r_head_front", 0, [-0.23672, 1.64678, -1.16087]);
    let labels = read_labels(&path).expect("labels");
    assert_eq!(labels, trial.markers.labels);
}

#[test]
fn real_walk_recording() {
    let dir = realdata_dir();
    let path = dir.join("walk-lower-body").join("trial.csv");
    // Header comment: 150 Hz; millimetres; +y up.
    let opts = ReadOptions {
        units: LengthUnit::Millimetres,
        up_axis: UpAxis::parse("y").expect("axis"),
        rate_hz: None,
        ..ReadOptions::default()
    };
    let trial = read_trial(&path, &opts).expect("walk trial reads");
    assert_eq!(trial.n_frames(), 251);
    // The file stamps 150 Hz frames to the millisecond (intervals of 6 and 7 ms), so the fitted
    // rate is within 0.01 Hz of the stated 150 Hz.
    assert_abs_diff_eq!(trial.rate_hz, 150.0, epsilon = 0.01);
    assert_eq!(trial.markers.labels.len(), 28);
    for label in ["l_asis", "r_psis", "r_heel", "l_mt5", "r_knee_lat"] {
        assert!(trial.markers.index_of(label).is_some(), "no `{label}`");
    }
    // First data row: `0.000000,-8.19860,949.37903,-175.04913,...` (r_asis, mm).
    assert_point(&trial, "r_asis", 0, [-0.0081986, 0.94937903, -0.17504913]);
    assert_abs_diff_eq!(trial.times_s[250], 1.667, epsilon = 1e-12);
}

// --- random mutations ------------------------------------------------------------------------

/// xorshift64 (Marsaglia 2003): a small deterministic generator.
struct XorShift(u64);

impl XorShift {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        self.0
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n.max(1) as u64) as usize
    }
}

fn mutate(base: &[u8], rng: &mut XorShift) -> Vec<u8> {
    const BYTES: &[u8] = b",\n\r#\". -e_xX\x00\xff\xc3 ";
    const TOKENS: &[&[u8]] = &[
        b"NaN",
        b"inf",
        b"-inf",
        b"1e308",
        b"1e999",
        b",",
        b"\n",
        b"-0",
        b"_x",
        b"time",
        b"frame",
        b"marker",
        b"\"",
        b"\xef\xbb\xbf",
        b"0.01",
        b"#",
        b"",
        b"9007199254740993",
    ];
    let mut v = base.to_vec();
    for _ in 0..1 + rng.below(4) {
        let at = rng.below(v.len() + 1);
        match rng.below(7) {
            0 if at < v.len() => v[at] = rng.next() as u8,
            1 if at < v.len() => v[at] = BYTES[rng.below(BYTES.len())],
            2 if at < v.len() => {
                v.remove(at);
            }
            3 => {
                let token = TOKENS[rng.below(TOKENS.len())];
                v.splice(at..at, token.iter().copied());
            }
            4 => {
                // Repeat the line that holds `at`.
                let start = v[..at]
                    .iter()
                    .rposition(|&b| b == b'\n')
                    .map_or(0, |i| i + 1);
                let end = v[at..]
                    .iter()
                    .position(|&b| b == b'\n')
                    .map_or(v.len(), |i| at + i + 1);
                let line = v[start..end].to_vec();
                v.splice(end..end, line);
            }
            5 => v.truncate(at),
            _ => {}
        }
    }
    v
}

fn assert_valid(trial: &Trial) {
    let n = trial.n_frames();
    assert!(n >= 1);
    assert!(trial.times_s.iter().all(|t| t.is_finite()));
    assert!(trial.times_s.windows(2).all(|w| w[0] < w[1]));
    assert!(trial.rate_hz.is_finite() && trial.rate_hz > 0.0);
    let m = &trial.markers;
    assert_eq!(m.labels.len(), m.n_markers());
    assert!(!m.labels.is_empty());
    for i in 0..m.n_markers() {
        assert_eq!(m.track_len(i), n);
        assert!(m.points(i).flatten().flatten().all(|c| c.is_finite()));
    }
}

#[test]
fn random_mutations_never_panic() {
    let bases = [
        std::fs::read(fixture("trial_wide_mm.csv")).expect("fixture"),
        std::fs::read(fixture("trial_tidy_mm.csv")).expect("fixture"),
        std::fs::read(fixture("trial_frames.csv")).expect("fixture"),
    ];
    let mut rng = XorShift(0x9E37_79B9_7F4A_7C15);
    let (mut ok, mut err) = (0, 0);
    for case in 0..4000 {
        let base = &bases[case % bases.len()];
        let bytes = mutate(base, &mut rng);
        let opts = if case % 2 == 0 {
            mm()
        } else {
            with_rate(200.0)
        };
        match read_trial_from(&bytes[..], "fuzz.csv", "fuzz", &opts) {
            Ok(trial) => {
                assert_valid(&trial);
                ok += 1;
            }
            Err(e) => {
                let msg = e.to_string();
                assert!(msg.starts_with("fuzz.csv"), "case {case}: {msg}");
                assert!(!msg.contains('\n'), "case {case}: {msg}");
                assert_eq!(e.file, "fuzz.csv");
                err += 1;
            }
        }
        let _ = read_labels_from(&bytes[..], "fuzz.csv");
    }
    eprintln!("{ok} mutated files read, {err} rejected");
    // Both outcomes occur, so the mutations reach past the header.
    assert!(ok > 100 && err > 100, "ok {ok}, err {err}");
}

// --- lab exports -----------------------------------------------------------------------------

/// Labels, times, rate, warnings and every sample equal (`f64` to the bit: a decimal comma
/// reads as the same number as a decimal point).
fn assert_same_trial(got: &Trial, want: &Trial) {
    assert_eq!(got.markers, want.markers);
    assert_eq!(got.times_s, want.times_s);
    assert_eq!(got.rate_hz, want.rate_hz);
    assert_eq!(got.warnings, want.warnings);
    for m in 0..want.markers.n_markers() {
        let bits = |t: &Trial| -> Vec<Option<[u64; 3]>> {
            t.markers
                .points(m)
                .map(|p| p.map(|p| p.map(f64::to_bits)))
                .collect()
        };
        assert_eq!(bits(got), bits(want), "marker {m}");
    }
}

#[test]
fn semicolon_separated_with_decimal_commas() {
    let want = read_trial(&fixture("trial_wide_mm.csv"), &mm()).expect("wide reads");
    let got = read_trial(&fixture("lab_semicolon_decimal_comma.csv"), &mm()).expect("reads");
    assert_same_trial(&got, &want);
    // A bad cell still names its line and column.
    let text = "time;a_x;a_y;a_z\n0,00;1,5;2;3\n0,01;1,5;x;3\n";
    let e = error_of(text.as_bytes(), &mm());
    assert_message(
        &e,
        &["bad.csv line 3, column 3 (`a_y`)", "`x` is not a number"],
    );
}

#[test]
fn tab_separated() {
    let want = read_trial(&fixture("trial_wide_mm.csv"), &mm()).expect("wide reads");
    let got = read_trial(&fixture("lab_tab.csv"), &mm()).expect("reads");
    assert_same_trial(&got, &want);
}

#[test]
fn marker_names_over_a_row_of_axes() {
    let want = read_trial(&fixture("trial_wide_mm.csv"), &mm()).expect("wide reads");
    let path = fixture("lab_two_row_header.csv");
    let got = read_trial(&path, &mm()).expect("reads");
    assert_same_trial(&got, &want);
    assert_eq!(read_labels(&path).unwrap(), ["l_asis", "r_asis", "r_heel"]);
    // Data lines keep their numbers in messages: line 7 is the third data row.
    let text = std::fs::read_to_string(&path)
        .unwrap()
        .replace("NaN", "bad");
    let e = error_of(text.as_bytes(), &mm());
    assert_message(&e, &["bad.csv line 7, column 9 (`r_heel_x`)", "`bad`"]);
}

#[test]
fn dropped_frames_are_gaps_when_the_configuration_says_so() {
    let path = fixture("lab_dropped_frames.csv");
    let rated = with_rate(100.0);
    // By default a dropped frame is an uneven rate, named at the row after the drop.
    let e = read_trial(&path, &rated).expect_err("frame 3 is missing");
    assert!(
        matches!(e.kind(), TrialErrorKind::UnevenRate { .. }) && e.line() == Some(6),
        "{e}"
    );
    let toml = "[input]\nrate_hz = 100.0\nmissing_frames = \"gap\"\n";
    let raw = gravline::config::RawConfig::from_toml(toml, "gap.toml").unwrap();
    let config = gravline::config::Config::from_raw(&raw, "gap.toml").unwrap();
    let trial = read_trial(&path, &config.read_options()).expect("reads with gaps");
    assert_eq!(trial.n_frames(), 9);
    let expected_times: Vec<f64> = (1..=9).map(|f| f as f64 / 100.0).collect();
    assert_eq!(trial.times_s, expected_times);
    assert_abs_diff_eq!(trial.rate_hz, 100.0, epsilon = 1e-9);
    let seen: Vec<bool> = trial.markers.points(0).map(|p| p.is_some()).collect();
    assert_eq!(
        seen,
        [true, true, false, true, true, false, false, true, true]
    );
    assert_point(&trial, "a", 3, [0.013, 0.020, 0.030]);
    assert!(trial
        .warnings
        .iter()
        .any(|w| w.to_string().contains("3 dropped frame(s)")));
    // An unknown word is refused with the allowed ones.
    let raw = gravline::config::RawConfig::from_toml("[input]\nmissing_frames = \"skip\"\n", "x")
        .unwrap();
    let e = gravline::config::Config::from_raw(&raw, "x.toml").unwrap_err();
    assert!(e.to_string().contains("use \"error\" or \"gap\""), "{e}");
}

// --- one reader: stray carriage returns, every entry point ----------------------------------

/// The trial or the error message read from `bytes` through every entry point: a file
/// (`read_trial`), a reader (`read_trial_from`) and bytes in memory on 1 and 4 threads; all
/// must agree. Named `t.csv` everywhere.
fn read_everywhere(bytes: &[u8]) -> Result<Trial, String> {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("t.csv");
    std::fs::write(&path, bytes).unwrap();
    let shown_path = path.display().to_string();
    let from_file = read_trial(&path, &mm())
        .map(|mut t| {
            t.file = "t.csv".into();
            t
        })
        .map_err(|e| e.to_string().replace(&shown_path, "t.csv"));
    let name = |r: Result<Trial, TrialError>| r.map_err(|e| e.to_string());
    let from_reader = name(read_trial_from(bytes, "t.csv", "t", &mm()));
    for (what, got) in [
        ("file", from_file),
        (
            "bytes, 1 thread",
            name(gravline::trial::read_trial_bytes(
                bytes,
                "t.csv",
                "t",
                &mm(),
                1,
            )),
        ),
        (
            "bytes, 4 threads",
            name(gravline::trial::read_trial_bytes(
                bytes,
                "t.csv",
                "t",
                &mm(),
                4,
            )),
        ),
    ] {
        assert_eq!(
            got,
            from_reader,
            "{what}: {:?}",
            String::from_utf8_lossy(bytes)
        );
    }
    from_reader
}

#[test]
fn a_stray_carriage_return_after_the_header_loses_no_row() {
    // The header ends in `\r` and `t` follows on the same line: a located one-line error.
    let e = read_everywhere(b"time,a_x,a_y,a_z\rt\n0,,,").unwrap_err();
    assert!(e.starts_with("t.csv line 1: expected 4 fields"), "{e}");
    // The bundled walk with its header line ended by `\r` instead of `\n`: all 600 frames.
    let walk = std::fs::read(Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/data/walk.csv"))
        .unwrap();
    let want = read_everywhere(&walk).unwrap();
    assert_eq!(want.n_frames(), 600);
    let header_end = walk
        .windows(6)
        .position(|w| w == b"\ntime,")
        .map(|p| p + 1 + walk[p + 1..].iter().position(|&b| b == b'\n').unwrap())
        .unwrap();
    let mut edited = walk.clone();
    edited[header_end] = b'\r';
    let got = read_everywhere(&edited).unwrap();
    assert_eq!(got.n_frames(), 600);
    assert_eq!(got.markers, want.markers);
    assert_eq!(got.times_s, want.times_s);
}

#[test]
fn every_entry_point_reads_the_same_with_mixed_carriage_returns() {
    let base = "# comment\ntime,a_x,a_y,a_z,b_x,b_y,b_z\n0,1,2,3,4,5,6\n0.01,1,2,,4,5,6\n\
                0.02,1,2,3,4,5,6\n0.03,1,2,3,4,5,6\n";
    let cases = [
        base.to_string(),
        base.replace("# comment\n", "# comment\r"),
        base.replace("# comment\n", "# com\rment\r\n"),
        base.replace("b_z\n", "b_z\r"),
        base.replace("b_z\n", "b_z\r\r\n"),
        base.replace("b_z\n", "b_z\r\n\r"),
        base.replace("b_x,", "b_x\r,"),
        base.replace("0.02,", "\r0.02,"),
        base.replace("6\n0.03", "6\r0.03"),
        base.replace('\n', "\r"),
        base.replace('\n', "\r\n"),
        format!("\r\n{base}"),
        format!("\r{base}"),
        base.replace("time", "\"time\r\""),
    ];
    let mut read = 0;
    for case in &cases {
        read += usize::from(read_everywhere(case.as_bytes()).is_ok());
    }
    assert!(read >= 8, "{read} of {} cases read", cases.len());
    // A long file cut into pieces on 4 threads, its header line ended by `\r`.
    let mut long = Vec::new();
    gravline::synth::write_wide_csv(
        &gravline::synth::long_trial(3_000, 45, 7),
        "long walk",
        &mut long,
    )
    .unwrap();
    let at = long
        .windows(6)
        .position(|w| w == b"\ntime,")
        .map(|p| p + 1 + long[p + 1..].iter().position(|&b| b == b'\n').unwrap())
        .unwrap();
    long[at] = b'\r';
    assert_eq!(read_everywhere(&long).unwrap().n_frames(), 3_000);
}
