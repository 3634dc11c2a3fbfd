//! `frames.csv` and `steps.csv` writers. Columns in the order of docs/DESIGN.md 8; metres, m/s,
//! m/s^2, m^2; missing values are empty cells; booleans are `true` / `false`. Numbers have six
//! decimals (the text of `{:.6}`); no row allocates, and chunks of rows are formatted on several
//! threads at once.

use super::fixed::push_fixed6;
use crate::pipeline::TrialResult;
use std::io::{self, Write};

const BASE: [&str; 22] = [
    "time_s",
    "valid",
    "com_x_m",
    "com_y_m",
    "com_z_m",
    "com_vx_m_s",
    "com_vy_m_s",
    "com_vz_m_s",
    "com_speed_m_s",
    "com_ax_m_s2",
    "com_ay_m_s2",
    "com_az_m_s2",
    "xcom_x_m",
    "xcom_y_m",
    "xcom_z_m",
    "bos_area_m2",
    "bos_margin_m",
    "mos_m",
    "mos_ap_m",
    "mos_ml_m",
    "contact_left",
    "contact_right",
];

/// The column names of a result's `frames.csv`.
pub fn frames_header(r: &TrialResult) -> Vec<String> {
    let mut h: Vec<String> = BASE.iter().map(|s| s.to_string()).collect();
    let xyz = |h: &mut Vec<String>, prefix: &str| {
        for a in ["x", "y", "z"] {
            h.push(format!("{prefix}_{a}_m"));
        }
    };
    if !r.load_names.is_empty() {
        xyz(&mut h, "body_com");
        for name in &r.load_names {
            xyz(&mut h, &format!("load_{name}"));
        }
        xyz(&mut h, "midfoot");
        h.push("com_midfoot_ap_m".to_string());
        h.push("bar_midfoot_ap_m".to_string());
    }
    for name in &r.group_names {
        xyz(&mut h, &format!("group_{name}"));
    }
    for name in &r.segment_names {
        xyz(&mut h, &format!("seg_{name}"));
    }
    if r.spread.is_some() {
        h.push("com_spread_m".to_string());
        xyz(&mut h, "com_spread");
    }
    if r.plates.is_some() {
        h.extend(crate::plates::FRAME_COLUMNS.iter().map(|c| c.to_string()));
    }
    h
}

fn opt(w: &mut impl Write, v: Option<f64>) -> io::Result<()> {
    match v {
        Some(v) if v.is_finite() => write!(w, ",{v:.6}"),
        _ => w.write_all(b","),
    }
}

/// One `frames.csv` row at a time, appended to a reused buffer.
struct Row<'a> {
    buf: &'a mut Vec<u8>,
}

impl Row<'_> {
    /// `,<v>` with six decimals, or `,` for a missing or non-finite value.
    fn opt(&mut self, v: Option<f64>) {
        self.buf.push(b',');
        if let Some(v) = v.filter(|v| v.is_finite()) {
            push_fixed6(self.buf, v);
        }
    }

    fn opt3(&mut self, v: Option<&[f64; 3]>) {
        for k in 0..3 {
            self.opt(v.map(|p| p[k]));
        }
    }

    fn flag(&mut self, b: bool) {
        self.buf
            .extend_from_slice(if b { b",true" } else { b",false" });
    }
}

fn get3(v: &[Option<[f64; 3]>], f: usize) -> Option<&[f64; 3]> {
    v.get(f).and_then(Option::as_ref)
}

/// Writes `frames.csv`: rows are formatted into a reused buffer (numbers by [`push_fixed6`],
/// the same text as `{:.6}`) and handed to `w` in chunks of [`CHUNK_ROWS`] rows.
pub fn write_frames(r: &TrialResult, w: impl Write) -> io::Result<()> {
    write_frames_on(r, w, 1)
}

/// Rows per chunk of `frames.csv` (about 0.5 MB for a walk).
const CHUNK_ROWS: usize = 2048;

/// [`write_frames`] with the chunks formatted on up to `threads` threads of their own (chunk
/// `i` on thread `i % threads`, two buffers each) while this thread writes them in order: the
/// same bytes for any number of threads.
pub fn write_frames_on(r: &TrialResult, mut w: impl Write, threads: usize) -> io::Result<()> {
    use std::sync::mpsc;

    writeln!(w, "{}", frames_header(r).join(","))?;
    let n = r.times_s.len();
    let n_chunks = n.div_ceil(CHUNK_ROWS);
    let format = |chunk: usize, buf: &mut Vec<u8>| {
        buf.clear();
        for f in chunk * CHUNK_ROWS..((chunk + 1) * CHUNK_ROWS).min(n) {
            push_row(r, f, buf);
        }
    };
    let workers = threads.min(n_chunks);
    if workers <= 1 {
        let mut buf = Vec::new();
        for chunk in 0..n_chunks {
            format(chunk, &mut buf);
            w.write_all(&buf)?;
        }
        return Ok(());
    }
    std::thread::scope(|s| {
        let mut links = Vec::with_capacity(workers);
        for k in 0..workers {
            let (full_tx, full_rx) = mpsc::sync_channel::<Vec<u8>>(1);
            let (empty_tx, empty_rx) = mpsc::channel::<Vec<u8>>();
            for _ in 0..2 {
                // The receiver is alive: this cannot fail.
                let _ = empty_tx.send(Vec::new());
            }
            s.spawn(move || {
                for chunk in (k..n_chunks).step_by(workers) {
                    // Either channel closes when the writer stops early (a write error).
                    let Ok(mut buf) = empty_rx.recv() else { return };
                    format(chunk, &mut buf);
                    if full_tx.send(buf).is_err() {
                        return;
                    }
                }
            });
            links.push((full_rx, empty_tx));
        }
        for chunk in 0..n_chunks {
            let (full_rx, empty_tx) = &links[chunk % workers];
            // A closed channel means a formatting thread panicked; the scope passes that on.
            let buf = full_rx
                .recv()
                .map_err(|_| io::Error::other("frames.csv rows were not formatted"))?;
            w.write_all(&buf)?;
            let _ = empty_tx.send(buf);
        }
        Ok(())
    })
}

/// Appends row `f` of `frames.csv`, line end included.
fn push_row(r: &TrialResult, f: usize, buf: &mut Vec<u8>) {
    let s = &r.support;
    let at = |v: &[Option<f64>], f: usize| v.get(f).copied().flatten();
    let lift = r.lift.as_ref();
    push_fixed6(buf, r.times_s[f]);
    let mut row = Row { buf };
    row.flag(r.is_valid(f));
    row.opt3(get3(&r.com, f));
    let v = get3(&r.velocity, f);
    row.opt3(v);
    row.opt(v.map(|v| (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt()));
    row.opt3(get3(&r.acceleration, f));
    row.opt3(get3(&r.xcom, f));
    row.opt(at(&s.bos_area_m2, f));
    row.opt(at(&s.bos_margin_m, f));
    row.opt(at(&s.mos_m, f));
    row.opt(at(&s.mos_ap_m, f));
    row.opt(at(&s.mos_ml_m, f));
    for side in 0..2 {
        row.flag(s.contact[side].get(f).copied().unwrap_or(false));
    }
    if !r.load_names.is_empty() {
        row.opt3(get3(&r.body_com, f));
        for l in &r.loads {
            row.opt3(get3(l, f));
        }
        row.opt3(lift.and_then(|l| get3(&l.midfoot, f)));
        row.opt(lift.and_then(|l| at(&l.com_midfoot_ap_m, f)));
        row.opt(lift.and_then(|l| at(&l.bar_midfoot_ap_m, f)));
    }
    for g in &r.groups {
        row.opt3(get3(g, f));
    }
    for g in &r.segments {
        row.opt3(get3(g, f));
    }
    if let Some(s) = &r.spread {
        row.opt(at(&s.spread_m, f));
        row.opt3(get3(&s.axes_m, f));
    }
    if let Some(p) = &r.plates {
        row.opt3(get3(&p.grf_n, f));
        row.opt3(get3(&p.cop_m, f));
        row.flag(p.grf_complete.get(f).copied().unwrap_or(false));
        row.opt3(get3(&p.com_fused, f));
        row.opt3(get3(&p.velocity_fused, f));
    }
    row.buf.push(b'\n');
}

/// Writes `reps.csv`: one row per repetition of the bar (lifts).
pub fn write_reps(r: &TrialResult, mut w: impl Write) -> io::Result<()> {
    writeln!(
        w,
        "rep,start_s,bottom_s,end_s,depth_m,bar_horizontal_excursion_m,peak_bar_ascent_speed_m_s,max_abs_com_midfoot_ap_m,mean_abs_com_midfoot_ap_m,time_outside_band_s"
    )?;
    for rep in r.lift.iter().flat_map(|l| &l.reps) {
        write!(
            w,
            "{},{:.6},{:.6},{:.6},{:.6}",
            rep.rep, rep.start_s, rep.bottom_s, rep.end_s, rep.depth_m
        )?;
        opt(&mut w, rep.bar_horizontal_excursion_m)?;
        opt(&mut w, Some(rep.peak_bar_ascent_speed_m_s))?;
        opt(&mut w, rep.max_abs_com_midfoot_ap_m)?;
        opt(&mut w, rep.mean_abs_com_midfoot_ap_m)?;
        opt(&mut w, Some(rep.time_outside_band_s))?;
        w.write_all(b"\n")?;
    }
    Ok(())
}

/// Writes `steps.csv`: one row per heel strike (docs/DESIGN.md 7).
pub fn write_steps(r: &TrialResult, mut w: impl Write) -> io::Result<()> {
    write!(
        w,
        "side,heel_strike_s,toe_off_s,step_length_m,step_width_m,mos_ap_heel_strike_m,mos_ml_heel_strike_m,min_mos_ml_single_stance_m,com_vertical_excursion_m"
    )?;
    if r.plates.is_some() {
        w.write_all(b",plate,clean_strike")?;
    }
    w.write_all(b"\n")?;
    for s in &r.support.steps {
        write!(w, "{},{:.6}", s.side, s.heel_strike_s)?;
        for v in [
            s.toe_off_s,
            s.step_length_m,
            s.step_width_m,
            s.mos_ap_heel_strike_m,
            s.mos_ml_heel_strike_m,
            s.min_mos_ml_single_stance_m,
            s.com_vertical_excursion_m,
        ] {
            opt(&mut w, v)?;
        }
        if let Some(p) = &r.plates {
            let (plate, clean) =
                crate::plates::step_plate(p, &r.times_s, r.rate_hz, s.side, s.heel_strike_s);
            write!(w, ",{plate},{clean}")?;
        }
        w.write_all(b"\n")?;
    }
    Ok(())
}
