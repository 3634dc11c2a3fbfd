//! Normalized cycles (`gravline::cycles`) against a model whose curves are known in closed form
//! (invented data), and on the bundled synthetic squat.

use gravline::cycles::{self, Source, Span, CURVES, POINTS};
use gravline::trial::UpAxis;

const RATE_HZ: f64 = 100.0;

/// A model walk: the CoM moves forward at 1.2 m/s with a vertical oscillation of 2.5 cm and a
/// lateral sway of 3 cm, periodic over one stride of `stride_frames` frames (heel strikes of
/// the left foot at 0, T, 2T, ..., the right foot half a stride later). Velocity, XCoM and
/// margins are closed-form functions of time too.
struct Model {
    period_s: f64,
}

impl Model {
    fn com(&self, t: f64) -> [f64; 3] {
        let w = std::f64::consts::TAU / self.period_s;
        [
            1.2 * t,
            0.03 * (w * t).sin(),
            0.95 + 0.025 * (2.0 * w * t).cos(),
        ]
    }
    fn velocity(&self, t: f64) -> [f64; 3] {
        let w = std::f64::consts::TAU / self.period_s;
        [
            1.2,
            0.03 * w * (w * t).cos(),
            -0.05 * w * (2.0 * w * t).sin(),
        ]
    }
    fn xcom(&self, t: f64) -> [f64; 3] {
        // omega0 = sqrt(9.81 / 0.9)
        let w0 = (9.81f64 / 0.9).sqrt();
        let (c, v) = (self.com(t), self.velocity(t));
        [c[0] + v[0] / w0, c[1] + v[1] / w0, 0.0]
    }
    fn mos_ap(&self, t: f64) -> f64 {
        0.1 * (std::f64::consts::TAU * t / self.period_s).cos()
    }
}

struct Series {
    times_s: Vec<f64>,
    com: Vec<Option<[f64; 3]>>,
    velocity: Vec<Option<[f64; 3]>>,
    xcom: Vec<Option<[f64; 3]>>,
    margin: Vec<Option<f64>>,
    mos_ap: Vec<Option<f64>>,
    mos_ml: Vec<Option<f64>>,
}

fn sample(m: &Model, n: usize) -> Series {
    let times_s: Vec<f64> = (0..n).map(|i| i as f64 / RATE_HZ).collect();
    Series {
        com: times_s.iter().map(|&t| Some(m.com(t))).collect(),
        velocity: times_s.iter().map(|&t| Some(m.velocity(t))).collect(),
        xcom: times_s.iter().map(|&t| Some(m.xcom(t))).collect(),
        margin: times_s.iter().map(|&t| Some(0.05 + 0.01 * t)).collect(),
        mos_ap: times_s.iter().map(|&t| Some(m.mos_ap(t))).collect(),
        mos_ml: times_s.iter().map(|&t| Some(0.04 - m.com(t)[1])).collect(),
        times_s,
    }
}

fn source(s: &Series) -> Source<'_> {
    Source {
        times_s: &s.times_s,
        up_axis: UpAxis::Z,
        com: &s.com,
        velocity: &s.velocity,
        xcom: &s.xcom,
        bos_margin_m: &s.margin,
        mos_ap_m: &s.mos_ap,
        mos_ml_m: &s.mos_ml,
    }
}

/// The model's value of curve `name` at percent `p` of a cycle starting at `t0`.
fn model_curve(m: &Model, name: &str, t0: f64, duration: f64, p: usize) -> f64 {
    let t = t0 + duration * p as f64 / 100.0;
    let (c, c0, v, x) = (m.com(t), m.com(t0), m.velocity(t), m.xcom(t));
    match name {
        "com_x_rel_m" => c[0] - c0[0],
        "com_y_rel_m" => c[1] - c0[1],
        "com_z_rel_m" | "com_vertical_rel_m" => c[2] - c0[2],
        "com_vx_m_s" => v[0],
        "com_vy_m_s" => v[1],
        "com_vz_m_s" => v[2],
        "com_speed_m_s" => (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt(),
        "xcom_x_rel_m" => x[0] - c0[0],
        "xcom_y_rel_m" => x[1] - c0[1],
        "xcom_z_rel_m" => x[2] - c0[2],
        "bos_margin_m" => 0.05 + 0.01 * t,
        "mos_ap_m" => m.mos_ap(t),
        "mos_ml_m" => 0.04 - c[1],
        other => panic!("no model for {other}"),
    }
}

/// Strides of exactly 100 frames (1 s at 100 Hz): every percent falls on a frame, so each
/// cycle's curves equal the model's at the same phase to 1e-6. Heel strikes: left at 0, 100, 200, 300 and
/// right at 50, 150, 250 frames: 3 left and 2 right strides.
#[test]
fn every_stride_equals_the_model_after_normalization() {
    let m = Model { period_s: 1.0 };
    let s = sample(&m, 320);
    let left = [0usize, 100, 200, 300];
    let right = [50usize, 150, 250];
    let spans = cycles::strides([&left, &right]);
    assert_eq!(spans.len(), 5);
    let src = source(&s);
    for span in &spans {
        let c = cycles::normalize(&src, span);
        let t0 = span.start / RATE_HZ;
        assert!((c.start_s - t0).abs() < 1e-12 && (c.duration_s - 1.0).abs() < 1e-12);
        for (k, name) in CURVES.iter().enumerate() {
            for p in 0..POINTS {
                let got = c.curves[k][p].unwrap();
                let want = model_curve(&m, name, t0, 1.0, p);
                assert!(
                    (got - want).abs() < 1e-6,
                    "{} {} cycle {} {name} at {p} %: {got} vs {want}",
                    c.kind,
                    c.side,
                    c.cycle
                );
            }
        }
    }
}

/// Strides of 137 frames (1.37 s): the percents fall between frames, where the resampling is
/// linear. Against the model, the error is within the bound of linear interpolation,
/// h^2 / 8 max |f''| (h = 0.01 s; e.g. Burden & Faires, *Numerical Analysis*, theorem 3.3),
/// and a curve that is linear in time (`bos_margin_m` here) is reproduced to 1e-9.
#[test]
fn strides_between_frames_are_linearly_interpolated() {
    let period = 1.37;
    let m = Model { period_s: period };
    let s = sample(&m, 600);
    let left = [10usize, 147, 284, 421];
    let spans = cycles::strides([&left, &[]]);
    let src = source(&s);
    let w = std::f64::consts::TAU / period;
    let h = 1.0 / RATE_HZ;
    // Largest second derivative among the model curves: the vertical velocity,
    // 0.05 (2w)^2 w / 2 ... bounded here by 0.05 * 8 w^3.
    let bound = h * h / 8.0 * 0.05 * 8.0 * w.powi(3);
    for span in &spans {
        let c = cycles::normalize(&src, span);
        let t0 = span.start / RATE_HZ;
        for (k, name) in CURVES.iter().enumerate() {
            for p in 0..POINTS {
                let got = c.curves[k][p].unwrap();
                let want = model_curve(&m, name, t0, period, p);
                let tol = if *name == "bos_margin_m" { 1e-9 } else { bound };
                assert!(
                    (got - want).abs() <= tol,
                    "{name} {p}: {got} vs {want} (tol {tol})"
                );
            }
        }
    }
}

/// A missing frame inside a cycle leaves the points around it missing, nothing else.
#[test]
fn a_missing_frame_leaves_only_its_neighbourhood_missing() {
    let m = Model { period_s: 1.37 };
    let mut s = sample(&m, 200);
    s.com[60] = None;
    let span = Span {
        kind: "stride",
        side: "left",
        cycle: 1,
        start: 10.0,
        end: 147.0,
    };
    let c = cycles::normalize(&source(&s), &span);
    let rel = c.curve("com_x_rel_m").unwrap();
    let missing: Vec<usize> = (0..POINTS).filter(|&p| rel[p].is_none()).collect();
    // frame 60 lies at (60 - 10) / 137 = 36.5 %: the points at 36 % (59.3) and 37 % (60.7).
    assert_eq!(missing, vec![36, 37]);
    assert!(c.curve("com_vx_m_s").unwrap().iter().all(Option::is_some));
}

/// The bundled synthetic squat (examples/data, 3 repetitions with a 60 kg bar, manifest row of
/// subject `tobin`) through `gravline trial`: `cycles.csv` holds 3 repetitions of 101 points,
/// each starting at 0 relative CoM height and going down and back up.
#[test]
fn the_bundled_squat_gives_three_repetitions() {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
    let data = root.join("examples/data");
    let out = tempfile::tempdir().unwrap();
    let status = std::process::Command::new(env!("CARGO_BIN_EXE_gravline"))
        .args(["trial"])
        .arg(data.join("squat.csv"))
        .arg("--config")
        .arg(data.join("squat-config.toml"))
        .args([
            "--mass-kg",
            "86",
            "--height-m",
            "1.81",
            "--sex",
            "male",
            "--no-plots",
            "-q",
            "--out",
        ])
        .arg(out.path())
        .status()
        .unwrap();
    assert!(status.success());
    let path = std::fs::read_dir(out.path())
        .unwrap()
        .flatten()
        .map(|e| e.path().join("cycles.csv"))
        .find(|p| p.is_file())
        .or_else(|| Some(out.path().join("cycles.csv")).filter(|p| p.is_file()))
        .expect("cycles.csv written");
    let mut reader = csv::Reader::from_path(&path).unwrap();
    let headers = reader.headers().unwrap().clone();
    assert_eq!(headers.iter().collect::<Vec<_>>(), cycles::COLUMNS.to_vec());
    let col = |name: &str| headers.iter().position(|h| h == name).unwrap();
    let (kind, cycle, percent, rise) = (
        col("kind"),
        col("cycle"),
        col("percent"),
        col("com_vertical_rel_m"),
    );
    let rows: Vec<csv::StringRecord> = reader.records().map(Result::unwrap).collect();
    let reps: Vec<&csv::StringRecord> = rows.iter().filter(|r| &r[kind] == "repetition").collect();
    assert_eq!(reps.len(), 3 * POINTS);
    let mut numbers: Vec<&str> = reps.iter().map(|r| &r[cycle]).collect();
    numbers.dedup();
    assert_eq!(numbers, vec!["1", "2", "3"]);
    for rep in reps.chunks(POINTS) {
        assert_eq!(&rep[0][percent], "0");
        assert_eq!(&rep[100][percent], "100");
        let h: Vec<f64> = rep.iter().map(|r| r[rise].parse().unwrap()).collect();
        assert!(h[0].abs() < 1e-9);
        let lowest = h.iter().copied().fold(f64::INFINITY, f64::min);
        assert!(lowest < -0.15, "the CoM goes down in a squat: {lowest}");
        assert!(h[100].abs() < 0.05, "and back up: {}", h[100]);
    }
}
