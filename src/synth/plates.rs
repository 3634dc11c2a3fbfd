//! Synthetic force plates computed from the model body: the ground reaction is Newton's
//! second law for the whole body, F = m (a + g), with a the second derivative of the model's
//! true CoM (central difference, step [`DIFF_STEP_S`]; truncation error below 1e-4 m/s² for
//! these smooth motions), zero when no foot is in contact.
//!
//! - Split between the feet (walk): each foot in contact carries a share that ramps up over
//!   the first [`RAMP_S`] of its contact and down over the last, so double support hands the
//!   load from one foot to the other. Each foot's CoP moves along its heel -> toe line at floor
//!   level (z = 0) as the contact proceeds (rollover; invented, for tests).
//! - Both feet on one plate (stand, squat, jump): the CoP is the point where the ground
//!   reaction's line of action passes through the CoM (no change of angular momentum about the
//!   CoM): p = c − F_h c_z / F_z at floor level. Then the horizontal force is zero exactly when
//!   the CoP is under the CoM, the premise of the gravity-line method (Zatsiorsky & King 1998,
//!   J Biomech 31:161).
//! - Layout: the walk gets one 0.6 m × 0.4 m plate centred on each of up to four footfalls in
//!   the middle of the trial (the others land beside the plates); stand, squat and jump one
//!   0.6 m × 0.5 m plate under both feet.
//!
//! Lab frame as the markers: +x forward, +y left, +z up, floor at z = 0, metres.

use super::geom::V3;
use super::model::{PointId, Stem};
use super::{com_model, plan, sanitize, Scenario, SynthOptions, G_M_S2};
use crate::body::vocabulary::Side;
use crate::plates::{PlateRecording, PlateSamples, PlateSetup, ZeroSource};
use std::io::{self, Write};

/// Step of the central difference for the CoM acceleration, s.
pub const DIFF_STEP_S: f64 = 1e-3;
/// Load ramp at each end of a foot contact, s.
pub const RAMP_S: f64 = 0.1;

/// Plates for a synthetic trial, and the model's own figures to check them against.
#[derive(Clone, Debug, PartialEq)]
pub struct SynthPlates {
    pub recording: PlateRecording,
    /// The plates as `[[plate]]` tables would declare them.
    pub setups: Vec<PlateSetup>,
    pub mass_kg: f64,
    /// Analog sample times, s.
    pub times_s: Vec<f64>,
    /// m (a + g) of the model at each analog sample, N (also when feet are off the plates).
    pub newton_n: Vec<[f64; 3]>,
    /// The model's CoM velocity at take-off (jump), m/s, vertical.
    pub take_off_velocity_m_s: Option<f64>,
}

/// Computes plate recordings for `scenario` with `opts` (the same motion as
/// [`super::generate`]) at `analog_rate_hz`, synchronous with the markers from t = 0.
pub fn synth_plates(scenario: Scenario, opts: &SynthOptions, analog_rate_hz: f64) -> SynthPlates {
    let o = sanitize(scenario, opts);
    let model = super::model::Model::new(o.height_m);
    let com = com_model(o.sex);
    let n_frames = (o.duration_s * o.rate_hz).round() as usize;
    let last = n_frames.saturating_sub(1) as f64 / o.rate_hz;
    let (motion, truth) = plan(scenario, &o, &model, &com, 0.0, last);
    let n = (last * analog_rate_hz).round() as usize + 1;
    let times: Vec<f64> = (0..n).map(|i| i as f64 / analog_rate_hz).collect();
    let com_at = |t: f64| -> V3 { com.com(&motion.body_at(&model, &com, t)) };
    let m = o.mass_kg;
    let in_contact = |side: usize, t: f64| {
        truth.contacts[side]
            .iter()
            .find(|(on, off)| *on <= t && t <= *off)
            .copied()
    };

    // Plate outlines.
    let mut setups: Vec<PlateSetup> = Vec::new();
    let rect = |c: [f64; 2], half: [f64; 2]| -> [[f64; 3]; 4] {
        [
            [c[0] + half[0], c[1] + half[1], 0.0],
            [c[0] - half[0], c[1] + half[1], 0.0],
            [c[0] - half[0], c[1] - half[1], 0.0],
            [c[0] + half[0], c[1] - half[1], 0.0],
        ]
    };
    let foot_mid = |side: usize, t: f64| -> [f64; 2] {
        let body = motion.body_at(&model, &com, t);
        let s = [Side::Left, Side::Right][side];
        let (h, toe) = (
            body.get(PointId::Sided(s, Stem::Heel)),
            body.get(PointId::Sided(s, Stem::Toe)),
        );
        [(h.x + toe.x) / 2.0, (h.y + toe.y) / 2.0]
    };
    // (plate index per side and contact) for the walk.
    let mut on_plate: Vec<(usize, (f64, f64), usize)> = Vec::new();
    if scenario == Scenario::Walk {
        let mut inside: Vec<(usize, (f64, f64))> = (0..2)
            .flat_map(|side| truth.contacts[side].iter().map(move |c| (side, *c)))
            .filter(|(_, (on, off))| *on >= 0.5 && *off <= last - 0.5)
            .collect();
        inside.sort_by(|a, b| a.1 .0.total_cmp(&b.1 .0));
        let skip = inside.len().saturating_sub(4) / 2;
        for (side, c) in inside.into_iter().skip(skip).take(4) {
            let mid = foot_mid(side, (c.0 + c.1) / 2.0);
            on_plate.push((side, c, setups.len()));
            setups.push(PlateSetup {
                name: format!("plate{}", setups.len() + 1),
                corners_m: rect(mid, [0.3, 0.2]),
            });
        }
    } else {
        let a = foot_mid(0, 0.0);
        let b = foot_mid(1, 0.0);
        setups.push(PlateSetup {
            name: "plate1".to_string(),
            corners_m: rect([(a[0] + b[0]) / 2.0, (a[1] + b[1]) / 2.0], [0.3, 0.25]),
        });
    }

    let mut plates: Vec<PlateSamples> = setups
        .iter()
        .map(|s| PlateSamples {
            name: s.name.clone(),
            corners_m: Some(s.corners_m),
            force_n: Vec::with_capacity(n),
            cop_m: Vec::with_capacity(n),
            free_moment_nm: vec![0.0; n],
            offset_n: [0.0; 3],
        })
        .collect();
    let mut newton = Vec::with_capacity(n);
    for &t in &times {
        let h = DIFF_STEP_S;
        let (c0, c, c1) = (com_at(t - h), com_at(t), com_at(t + h));
        let a = (c1 - 2.0 * c + c0) / (h * h);
        let f_model = [m * a.x, m * a.y, m * (a.z + G_M_S2)];
        newton.push(f_model);
        let contacts = [in_contact(0, t), in_contact(1, t)];
        let f = if contacts.iter().any(Option::is_some) {
            f_model
        } else {
            [0.0; 3]
        };
        let mut per_plate: Vec<([f64; 3], Option<[f64; 3]>)> = vec![([0.0; 3], None); plates.len()];
        if scenario == Scenario::Walk {
            let weight = |side: usize| -> f64 {
                contacts[side].map_or(0.0, |(on, off)| {
                    ((t - on) / RAMP_S).min((off - t) / RAMP_S).clamp(1e-6, 1.0)
                })
            };
            let (wl, wr) = (weight(0), weight(1));
            for side in 0..2 {
                let Some((on, off)) = contacts[side] else {
                    continue;
                };
                let share = [wl, wr][side] / (wl + wr);
                let Some(&(_, _, p)) = on_plate.iter().find(|(s, c, _)| *s == side && c.0 == on)
                else {
                    continue;
                };
                let body = motion.body_at(&model, &com, t);
                let sd = [Side::Left, Side::Right][side];
                let (heel, toe) = (
                    body.get(PointId::Sided(sd, Stem::Heel)),
                    body.get(PointId::Sided(sd, Stem::Toe)),
                );
                let u = ((t - on) / (off - on)).clamp(0.0, 1.0);
                let cop = [
                    heel.x + u * (toe.x - heel.x),
                    heel.y + u * (toe.y - heel.y),
                    0.0,
                ];
                per_plate[p] = ([f[0] * share, f[1] * share, f[2] * share], Some(cop));
            }
        } else if f[2] > 0.0 {
            let cop = [c.x - f[0] * c.z / f[2], c.y - f[1] * c.z / f[2], 0.0];
            per_plate[0] = (f, Some(cop));
        }
        for (plate, (force, cop)) in plates.iter_mut().zip(per_plate) {
            plate.force_n.push(force);
            plate.cop_m.push(if force[2] >= crate::plates::LOADED_N {
                cop
            } else {
                None
            });
        }
    }
    let take_off_velocity_m_s = truth.flight_s.map(|(take_off, _)| {
        let h = 1e-5;
        (com_at(take_off).z - com_at(take_off - h).z) / h
    });
    SynthPlates {
        recording: PlateRecording {
            rate_hz: analog_rate_hz,
            first_time_s: 0.0,
            plates,
            zero: ZeroSource::Unloaded,
        },
        setups,
        mass_kg: m,
        times_s: times,
        newton_n: newton,
        take_off_velocity_m_s,
    }
}

/// Writes a recording in the plate CSV layout of [`crate::plates::read`] (force in N, CoP in
/// metres, empty CoP cells where unloaded).
pub fn write_plates_csv(rec: &PlateRecording, mut w: impl Write) -> io::Result<()> {
    write!(w, "time_s")?;
    for p in &rec.plates {
        let s = &p.name;
        write!(
            w,
            ",{s}_fx_n,{s}_fy_n,{s}_fz_n,{s}_cop_x_m,{s}_cop_y_m,{s}_cop_z_m"
        )?;
    }
    writeln!(w)?;
    let n = rec.plates.first().map_or(0, |p| p.force_n.len());
    for i in 0..n {
        write!(w, "{:.6}", rec.first_time_s + i as f64 / rec.rate_hz)?;
        for p in &rec.plates {
            let f = p.force_n[i];
            write!(w, ",{:.6},{:.6},{:.6}", f[0], f[1], f[2])?;
            match p.cop_m[i] {
                Some(c) => write!(w, ",{:.6},{:.6},{:.6}", c[0], c[1], c[2])?,
                None => write!(w, ",,,")?,
            }
        }
        writeln!(w)?;
    }
    Ok(())
}
