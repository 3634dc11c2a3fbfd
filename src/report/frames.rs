//! `frames.csv` and `steps.csv` writers. Columns in the order of DESIGN.md 8; metres, m/s,
//! m/s^2, m^2; missing values are empty cells; booleans are `true` / `false`. Rows are written
//! straight into the writer, with no allocation per row.

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
    h
}

fn opt(w: &mut impl Write, v: Option<f64>) -> io::Result<()> {
    match v {
        Some(v) if v.is_finite() => write!(w, ",{v:.6}"),
        _ => w.write_all(b","),
    }
}

fn opt3(w: &mut impl Write, v: Option<&[f64; 3]>) -> io::Result<()> {
    for k in 0..3 {
        opt(w, v.map(|p| p[k]))?;
    }
    Ok(())
}

/// Writes `frames.csv`.
pub fn write_frames(r: &TrialResult, mut w: impl Write) -> io::Result<()> {
    writeln!(w, "{}", frames_header(r).join(","))?;
    let s = &r.support;
    let at = |v: &[Option<f64>], f: usize| v.get(f).copied().flatten();
    for f in 0..r.n_frames() {
        write!(w, "{:.6},{}", r.times_s[f], r.is_valid(f))?;
        opt3(&mut w, r.com[f].as_ref())?;
        let v = r.velocity[f].as_ref();
        opt3(&mut w, v)?;
        opt(
            &mut w,
            v.map(|v| (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt()),
        )?;
        opt3(&mut w, r.acceleration[f].as_ref())?;
        opt3(&mut w, r.xcom[f].as_ref())?;
        opt(&mut w, at(&s.bos_area_m2, f))?;
        opt(&mut w, at(&s.bos_margin_m, f))?;
        opt(&mut w, at(&s.mos_m, f))?;
        opt(&mut w, at(&s.mos_ap_m, f))?;
        opt(&mut w, at(&s.mos_ml_m, f))?;
        for side in 0..2 {
            write!(w, ",{}", s.contact[side].get(f).copied().unwrap_or(false))?;
        }
        if !r.load_names.is_empty() {
            opt3(&mut w, r.body_com[f].as_ref())?;
            for l in &r.loads {
                opt3(&mut w, l[f].as_ref())?;
            }
            let lift = r.lift.as_ref();
            opt3(
                &mut w,
                lift.and_then(|l| l.midfoot.get(f)).and_then(Option::as_ref),
            )?;
            opt(
                &mut w,
                lift.and_then(|l| l.com_midfoot_ap_m.get(f).copied().flatten()),
            )?;
            opt(
                &mut w,
                lift.and_then(|l| l.bar_midfoot_ap_m.get(f).copied().flatten()),
            )?;
        }
        for g in &r.groups {
            opt3(&mut w, g[f].as_ref())?;
        }
        for g in &r.segments {
            opt3(&mut w, g[f].as_ref())?;
        }
        w.write_all(b"\n")?;
    }
    Ok(())
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

/// Writes `steps.csv`: one row per heel strike (DESIGN.md 7).
pub fn write_steps(r: &TrialResult, mut w: impl Write) -> io::Result<()> {
    writeln!(
        w,
        "side,heel_strike_s,toe_off_s,step_length_m,step_width_m,mos_ap_heel_strike_m,mos_ml_heel_strike_m,min_mos_ml_single_stance_m,com_vertical_excursion_m"
    )?;
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
        w.write_all(b"\n")?;
    }
    Ok(())
}
