//! Force plates: the kinetic stage after support (docs/DESIGN.md 2, "plates"). Inputs: a
//! [`PlateRecording`] (analog samples per plate: force on the body in N, lab axes; CoP in
//! metres; free moment in N·m; from our CSV layout, [`read`], or from a C3D reader), the marker
//! frames, the segmental CoM and its acceleration, foot contact and foot points. Outputs, per
//! frame ([`PlateSeries`]): the total ground reaction on the body `grf_*_n`, the net CoP
//! `cop_*_m`, `grf_complete`, the fused CoM and its velocity; per foot contact the plate it
//! stands on ([`Strike`]); and the figures of [`PlateFigures`]: the cross-check
//! m (a + g) − GRF, the implied body mass, the CoP inside the BoS, the fused-vs-segmental
//! difference, quiet-standing sway by the gravity-line method, jump heights.
//!
//! Units: SI throughout (N, m, s, kg).
//!
//! - Zero offset and resampling to the marker frames: [`resample`] (box mean over the frame
//!   period centred on the frame time; zero delay).
//! - A foot stands on a plate when its sole outline ([`geometry::sole_outline`]) lies inside
//!   the plate's declared corners (within [`ON_PLATE_TOLERANCE_M`]) in every frame of its
//!   contact and the plate is loaded; for plates without declared corners, when the plate is
//!   loaded in at least [`MIN_LOADED_SHARE`] of the contact's frames (the load covers the
//!   contact). The plate of a contact is the one whose loading begins within
//!   [`ONSET_TOLERANCE_S`] of the contact's onset (the nearest; and among plates with corners
//!   only one the sole outline touches); without corners a plate's load goes to the contact
//!   that began nearest its onset (two contacts share it when they begin within a frame of
//!   each other). A strike is **clean** when its foot stands on the plate and no other foot
//!   touches that plate during the contact. `grf_complete`: every foot in contact stands on a
//!   plate, or no foot is in contact, and no contact off the plates begins or ends within
//!   [`OFF_PLATE_PAD_S`] (common practice, no source). Incomplete frames have no kinetic
//!   figures.
//! - A plate's CoP is checked against the foot on it: in a clean strike the CoP must lie
//!   within the sole outline (within [`COP_ON_FOOT_TOLERANCE_M`]) in at least half the loaded
//!   frames. A plate that fails has its CoP ignored (no net CoP while it is loaded) and a
//!   warning giving the median distance of its CoP from the foot; its force is kept.
//! - Cross-check over complete frames with a kinematic acceleration, more than [`EDGE_S`]
//!   from either end of the trial: residual
//!   m (a + g) − GRF per lab axis (Newton's second law for the whole body), RMS in % of body
//!   weight m g, Pearson correlation of m (a + g) and GRF per axis.
//! - Implied mass: mean F_up / g over complete frames for a static trial (mean horizontal
//!   CoM speed below [`crate::support::stage::STATIC_SPEED_M_S`]), else the least-squares
//!   fit of F = m (a + g) over complete frames and all three axes:
//!   m = Σ F·(a + g) / Σ |a + g|²; a warning above [`MASS_WARNING_PERCENT`] % from the
//!   declared mass.
//! - Fused CoM: [`fusion`] (Kalman filter and Rauch-Tung-Striebel smoother; Le Mouel 2025,
//!   Peer Community Journal 5:e10; Maus et al. 2011, J Exp Biol 214:3511).
//! - Quiet standing: [`sway`] (gravity-line method, Zatsiorsky & King 1998, J Biomech
//!   31:161). Jumps: [`jump`] (impulse-momentum and flight time), from the analog samples of
//!   complete frames.
//!
//! The CoM these figures check comes from generic segment tables: it carries centimetre-level
//! error, the figures are not diagnostic, and decisions belong to licensed practitioners.

pub mod fusion;
pub mod geometry;
pub mod jump;
pub mod read;
pub mod resample;
pub mod sway;

pub use read::{read_plates_csv, read_plates_file, PlateSetup};

use crate::support::{transitions, FootFrames, Hull};
use crate::synth::G_M_S2;
use crate::trial::UpAxis;
use crate::warning::Warning;
use serde::Serialize;

/// A per-frame series of points or vectors (`None` where absent).
pub type Series = Vec<Option<[f64; 3]>>;

/// Vertical force above which a plate counts as loaded, N (10-20 N is usual; common practice,
/// no source).
pub const LOADED_N: f64 = 20.0;
/// Largest gap between a foot's contact onset and its plate's loading onset, s (kinematic
/// contact is found within a few frames of the force onset; common practice, no source).
pub const ONSET_TOLERANCE_S: f64 = 0.05;
/// Share of a contact's frames its plate must be loaded in (plates without corners).
pub const MIN_LOADED_SHARE: f64 = 0.7;
/// How far a sole outline may reach beyond a plate's edge, m (marker and sole; from memory).
pub const ON_PLATE_TOLERANCE_M: f64 = 0.01;
/// How far a plate's CoP may lie outside the sole outline of the foot on it, m.
pub const COP_ON_FOOT_TOLERANCE_M: f64 = 0.03;
/// Implied-mass difference that warns, % of the declared mass.
pub const MASS_WARNING_PERCENT: f64 = 5.0;
/// Frames this close to a foot contact off the plates are not complete, s (kinematic contact
/// starts a frame or two after the first load; common practice, no source).
pub const OFF_PLATE_PAD_S: f64 = 0.03;
/// Frames this close to either end of the trial are left out of the cross-check and the
/// mass fit: the derivatives of the low-passed CoM are least reliable there (common practice,
/// no source), s.
pub const EDGE_S: f64 = 0.1;
/// Shortest stretch of complete frames that is fused, frames.
pub const MIN_FUSED_FRAMES: usize = 10;

/// A plate recording or its setup that cannot be used.
#[derive(Debug, thiserror::Error)]
pub enum PlateError {
    #[error("{file} line {line}: {message}")]
    Input {
        file: String,
        line: usize,
        message: String,
    },
}

/// Where the zero offset of the forces comes from.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum ZeroSource {
    /// The unloaded samples of each plate.
    #[default]
    Unloaded,
    /// Analog samples `first..=last` named by the recording (C3D `FORCE_PLATFORM:ZERO`).
    Samples { first: usize, last: usize },
}

/// One plate's analog samples.
#[derive(Clone, Debug, PartialEq)]
pub struct PlateSamples {
    pub name: String,
    /// Corners in the lab, metres, in order around the plate; `None` when not declared.
    pub corners_m: Option<[[f64; 3]; 4]>,
    /// Force on the body, N, lab axes, per sample.
    pub force_n: Vec<[f64; 3]>,
    /// CoP, lab, metres; `None` where the plate is unloaded.
    pub cop_m: Vec<Option<[f64; 3]>>,
    /// Free moment about the up axis, N·m.
    pub free_moment_nm: Vec<f64>,
    /// The zero offset removed, N (set by [`resample::remove_zero_offset`]).
    pub offset_n: [f64; 3],
}

/// Plates sampled together, synchronous with the markers.
#[derive(Clone, Debug, PartialEq)]
pub struct PlateRecording {
    pub rate_hz: f64,
    /// Time of the first sample on the markers' clock, s.
    pub first_time_s: f64,
    pub plates: Vec<PlateSamples>,
    pub zero: ZeroSource,
}

/// What the plate stage needs from the kinematic stages.
#[derive(Clone, Copy, Debug)]
pub struct Kinematics<'a> {
    pub times_s: &'a [f64],
    pub rate_hz: f64,
    pub up: UpAxis,
    /// System mass (body and loads), kg.
    pub mass_kg: f64,
    pub com: &'a [Option<[f64; 3]>],
    pub velocity: &'a [Option<[f64; 3]>],
    pub acceleration: &'a [Option<[f64; 3]>],
    /// `contact[side][frame]`, side 0 = left.
    pub contact: &'a [Vec<bool>; 2],
    pub foot: &'a FootFrames,
}

/// One foot contact and the plate it stands on.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Strike {
    pub side: &'static str,
    pub on_s: f64,
    pub off_s: f64,
    /// The plate the foot stands on (or touches most), if any.
    pub plate: Option<String>,
    /// The whole foot stands on that plate for the whole contact.
    pub on_plate: bool,
    /// On the plate, and no other foot on it meanwhile.
    pub clean: bool,
    /// Share of the clean strike's loaded frames with the plate's CoP under the foot.
    pub cop_on_foot_share: Option<f64>,
    /// Median distance of the plate's CoP outside the sole outline, m (0 inside).
    pub cop_off_foot_median_m: Option<f64>,
    #[serde(skip)]
    frames: (usize, usize),
    #[serde(skip)]
    side_index: usize,
}

/// Per-plate facts for the summary.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PlateInfo {
    pub name: String,
    pub corners_declared: bool,
    pub zero_offset_n: [f64; 3],
    /// `false` when its CoP fails the check against the foot on it (then ignored).
    pub cop_trusted: bool,
}

/// The cross-check m (a + g) − GRF over complete frames, per lab axis.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CrossCheck {
    pub frames: usize,
    pub residual_rms_percent_bw: [f64; 3],
    pub residual_mean_n: [f64; 3],
    pub correlation: [Option<f64>; 3],
}

/// The mass the plates imply.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ImpliedMass {
    /// `quiet-stance` or `least-squares`.
    pub method: &'static str,
    pub frames: usize,
    pub mass_kg: f64,
    pub declared_kg: f64,
    pub difference_percent: f64,
}

/// The CoP inside the BoS (feet in contact).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CopInBos {
    pub frames: usize,
    pub inside_share: f64,
    /// Largest distance of the CoP outside the BoS, m (0 when always inside).
    pub max_outside_m: f64,
}

/// Fused against segmental CoM.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FusedFigures {
    pub frames: usize,
    pub difference_rms_mm: [f64; 3],
    pub difference_max_mm: f64,
}

/// Quiet standing: sway of the gravity-line CoM, the segmental CoM and the CoP.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct QuietStanding {
    pub gravity_line: Option<sway::SwayFigures>,
    pub segmental: Option<sway::SwayFigures>,
    pub cop: Option<sway::SwayFigures>,
    /// RMS horizontal distance of the gravity-line CoM from the segmental CoM after removing
    /// each one's mean, mm.
    pub gravity_line_vs_segmental_rms_mm: Option<f64>,
}

/// Everything the plates give, for the summary.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PlateFigures {
    pub rate_hz: f64,
    pub zero_offset_from: &'static str,
    pub resampling: &'static str,
    pub plates: Vec<PlateInfo>,
    pub complete_fraction: f64,
    pub strikes: Vec<Strike>,
    pub cross_check: Option<CrossCheck>,
    pub implied_mass: Option<ImpliedMass>,
    pub cop_inside_bos: Option<CopInBos>,
    pub fused: Option<FusedFigures>,
    pub quiet_standing: Option<QuietStanding>,
    pub jump: Option<jump::JumpFigures>,
}

/// The plate stage's per-frame series and figures.
#[derive(Clone, Debug, PartialEq)]
pub struct PlateSeries {
    /// Ground reaction on the body, N, lab axes; `None` where incomplete.
    pub grf_n: Vec<Option<[f64; 3]>>,
    pub cop_m: Vec<Option<[f64; 3]>>,
    pub grf_complete: Vec<bool>,
    pub com_fused: Vec<Option<[f64; 3]>>,
    pub velocity_fused: Vec<Option<[f64; 3]>>,
    /// The quiet-standing gravity-line CoM, horizontal (lab) coordinates only.
    pub gravity_line: Vec<Option<[f64; 2]>>,
    pub figures: PlateFigures,
    pub warnings: Vec<Warning>,
}

impl PlateSeries {
    /// The plate and whether the strike is clean for the contact of `side` (0 = left) that
    /// holds frame `frame`.
    pub fn strike_at(&self, side: usize, frame: usize) -> Option<&Strike> {
        self.figures
            .strikes
            .iter()
            .find(|s| s.side_index == side && s.frames.0 <= frame && frame < s.frames.1)
    }
}

const SIDES: [&str; 2] = ["left", "right"];

fn sub(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

/// Pearson correlation; `None` when either series is constant.
pub fn correlation(a: &[f64], b: &[f64]) -> Option<f64> {
    let n = a.len().min(b.len());
    if n < 3 {
        return None;
    }
    let ma = a[..n].iter().sum::<f64>() / n as f64;
    let mb = b[..n].iter().sum::<f64>() / n as f64;
    let (mut sab, mut saa, mut sbb) = (0.0, 0.0, 0.0);
    for i in 0..n {
        let (x, y) = (a[i] - ma, b[i] - mb);
        sab += x * y;
        saa += x * x;
        sbb += y * y;
    }
    (saa > 0.0 && sbb > 0.0).then(|| sab / (saa * sbb).sqrt())
}

/// Runs the plate stage (module doc).
pub fn analyse(recording: &PlateRecording, k: &Kinematics) -> PlateSeries {
    let n = k.times_s.len();
    let up = k.up;
    let g_up = up.unit();
    let mut warnings = Vec::new();
    let mut rec = recording.clone();
    resample::remove_zero_offset(&mut rec, up);
    let frames = resample::to_frames(&rec, k.times_s, k.rate_hz, up);
    let hulls: Vec<Option<Hull>> = rec
        .plates
        .iter()
        .map(|p| p.corners_m.map(|c| geometry::plate_hull(&c, up)))
        .collect();
    let outline = |side: usize, f: usize| geometry::sole_outline(k.foot, side, f, up);

    // Strikes: each foot contact and its plate. Candidates: the loaded runs of each plate that
    // begin within ONSET_TOLERANCE_S of the contact (a run already loaded at the first frame
    // counts as beginning there) and, for plates with corners, whose outline the foot touches.
    // Each run goes to the contacts with the smallest onset gap (several when they land within
    // a frame of each other: both feet on one plate).
    let contacts: Vec<(usize, (usize, usize))> = (0..2)
        .flat_map(|side| {
            transitions(&k.contact[side])
                .into_iter()
                .map(move |c| (side, c))
        })
        .collect();
    let tolerance = (ONSET_TOLERANCE_S * k.rate_hz).ceil() as usize;
    let runs: Vec<Vec<(usize, usize)>> = frames.iter().map(|pf| transitions(&pf.loaded)).collect();
    // (gap, contact, plate, run)
    let mut candidates: Vec<(usize, usize, usize, usize)> = Vec::new();
    for (c, &(side, (on, off))) in contacts.iter().enumerate() {
        for (p, plate_runs) in runs.iter().enumerate() {
            for (r, &(start, end)) in plate_runs.iter().enumerate() {
                let gap = start.abs_diff(on);
                if gap > tolerance || start >= off || end <= on {
                    continue;
                }
                let touches = match &hulls[p] {
                    Some(h) => (on..off)
                        .any(|f| outline(side, f).is_some_and(|o| geometry::overlaps(&o, h))),
                    None => true,
                };
                if touches {
                    candidates.push((gap, c, p, r));
                }
            }
        }
    }
    candidates.sort();
    let mut assigned: Vec<Option<(usize, usize)>> = vec![None; contacts.len()];
    let mut best_gap: std::collections::HashMap<(usize, usize), usize> = Default::default();
    for &(gap, c, p, r) in &candidates {
        if assigned[c].is_some() {
            continue;
        }
        let shared = hulls[p].is_some();
        match best_gap.get(&(p, r)) {
            Some(&g) if !shared && gap > g + 1 => continue,
            _ => {}
        }
        best_gap.entry((p, r)).or_insert(gap);
        assigned[c] = Some((p, r));
    }
    let mut strikes: Vec<Strike> = Vec::new();
    for (c, &(side, (on, off))) in contacts.iter().enumerate() {
        let len = (off - on).max(1);
        let on_plate = assigned[c].is_some_and(|(p, r)| match &hulls[p] {
            Some(h) => (on..off).all(|f| {
                outline(side, f).is_none_or(|o| geometry::hull_inside(&o, h, ON_PLATE_TOLERANCE_M))
            }),
            None => {
                let (start, end) = runs[p][r];
                (on.max(start)..off.min(end)).len() as f64 >= MIN_LOADED_SHARE * len as f64
            }
        });
        strikes.push(Strike {
            side: SIDES[side],
            on_s: k.times_s[on],
            off_s: k.times_s[off.min(n) - 1],
            plate: assigned[c].map(|(p, _)| rec.plates[p].name.clone()),
            on_plate,
            clean: on_plate,
            cop_on_foot_share: None,
            cop_off_foot_median_m: None,
            frames: (on, off),
            side_index: side,
        });
    }
    strikes.sort_by(|a, b| a.on_s.total_cmp(&b.on_s));
    // Two feet on one plate at once: neither strike is clean.
    for i in 0..strikes.len() {
        for j in 0..strikes.len() {
            let (a, b) = (&strikes[i], &strikes[j]);
            if i != j
                && a.plate.is_some()
                && a.plate == b.plate
                && a.frames.0 < b.frames.1
                && b.frames.0 < a.frames.1
            {
                strikes[i].clean = false;
            }
        }
    }
    // The CoP of each clean strike's plate against its foot.
    let mut cop_trusted = vec![true; rec.plates.len()];
    for s in &mut strikes {
        let Some(p) = s
            .plate
            .as_ref()
            .and_then(|name| rec.plates.iter().position(|q| &q.name == name))
        else {
            continue;
        };
        if !s.clean {
            continue;
        }
        let mut distances: Vec<f64> = Vec::new();
        for f in s.frames.0..s.frames.1 {
            if let (Some(c), Some(o)) = (frames[p].cop_m[f], outline(s.side_index, f)) {
                if let Some(d) = crate::support::signed_distance(&o, up.horizontal(&c)) {
                    distances.push((-d).max(0.0));
                }
            }
        }
        if distances.is_empty() {
            continue;
        }
        let share = distances
            .iter()
            .filter(|d| **d <= COP_ON_FOOT_TOLERANCE_M)
            .count() as f64
            / distances.len() as f64;
        distances.sort_by(f64::total_cmp);
        let median = distances[distances.len() / 2];
        s.cop_on_foot_share = Some(share);
        s.cop_off_foot_median_m = Some(median);
        if share < 0.5 {
            cop_trusted[p] = false;
            warnings.push(Warning::Plausibility {
                message: format!(
                    "plate `{}`: its CoP lies outside the {} foot standing on it in {:.0} % of the loaded frames (median {:.0} mm off the sole outline); its CoP is ignored, its force kept",
                    rec.plates[p].name,
                    s.side,
                    100.0 * (1.0 - share),
                    1000.0 * median
                ),
            });
        }
    }

    // Per frame: completeness, GRF, CoP.
    let mut grf_n = vec![None; n];
    let mut cop_m = vec![None; n];
    let mut grf_complete = vec![false; n];
    // Frames near a contact off the plates: the markers see a foot land a frame or two after
    // it bears its first load.
    let pad = (OFF_PLATE_PAD_S * k.rate_hz).ceil() as usize;
    let mut near_off_plate = vec![false; n];
    for s in strikes.iter().filter(|s| !s.on_plate) {
        for slot in &mut near_off_plate[s.frames.0.saturating_sub(pad)..(s.frames.1 + pad).min(n)] {
            *slot = true;
        }
    }
    for f in 0..n {
        let feet_ok = !near_off_plate[f]
            && (0..2).all(|side| {
                !k.contact[side].get(f).copied().unwrap_or(false)
                    || strikes.iter().any(|s| {
                        s.side_index == side && s.frames.0 <= f && f < s.frames.1 && s.on_plate
                    })
            });
        let mut total = [0.0; 3];
        let mut known = true;
        let (mut fu_sum, mut q) = (0.0, [0.0; 3]);
        let mut cop_known = true;
        for (p, pf) in frames.iter().enumerate() {
            match pf.force_n[f] {
                Some(force) => {
                    for a in 0..3 {
                        total[a] += force[a];
                    }
                    if pf.loaded[f] {
                        match (pf.cop_m[f], cop_trusted[p]) {
                            (Some(c), true) => {
                                let u = up.height(&force);
                                fu_sum += u;
                                for a in 0..3 {
                                    q[a] += u * c[a];
                                }
                            }
                            _ => cop_known = false,
                        }
                    }
                }
                None => known = false,
            }
        }
        if feet_ok && known {
            grf_complete[f] = true;
            grf_n[f] = Some(total);
            if cop_known && fu_sum >= LOADED_N {
                cop_m[f] = Some([q[0] / fu_sum, q[1] / fu_sum, q[2] / fu_sum]);
            }
        }
    }
    let complete_fraction = if n > 0 {
        grf_complete.iter().filter(|c| **c).count() as f64 / n as f64
    } else {
        0.0
    };

    let m = k.mass_kg;
    let weight = m * G_M_S2;
    // m (a + g) over complete frames with an acceleration.
    let (t_first, t_last) = (
        k.times_s.first().copied().unwrap_or(0.0),
        k.times_s.last().copied().unwrap_or(0.0),
    );
    let pairs: Vec<([f64; 3], [f64; 3])> = (0..n)
        .filter(|&f| k.times_s[f] - t_first >= EDGE_S && t_last - k.times_s[f] >= EDGE_S)
        .filter_map(|f| {
            let a = k.acceleration.get(f).copied().flatten()?;
            let force = grf_n[f]?;
            let ag = [
                a[0] + G_M_S2 * g_up[0],
                a[1] + G_M_S2 * g_up[1],
                a[2] + G_M_S2 * g_up[2],
            ];
            Some((ag, force))
        })
        .collect();
    let cross_check = (pairs.len() >= 3).then(|| {
        let mut rms = [0.0; 3];
        let mut mean = [0.0; 3];
        let mut correlation_axes = [None; 3];
        for a in 0..3 {
            let model: Vec<f64> = pairs.iter().map(|(ag, _)| m * ag[a]).collect();
            let measured: Vec<f64> = pairs.iter().map(|(_, f)| f[a]).collect();
            let res: Vec<f64> = model.iter().zip(&measured).map(|(x, y)| x - y).collect();
            rms[a] =
                100.0 * (res.iter().map(|r| r * r).sum::<f64>() / res.len() as f64).sqrt() / weight;
            mean[a] = res.iter().sum::<f64>() / res.len() as f64;
            correlation_axes[a] = correlation(&model, &measured);
        }
        CrossCheck {
            frames: pairs.len(),
            residual_rms_percent_bw: rms,
            residual_mean_n: mean,
            correlation: correlation_axes,
        }
    });

    // Static trial: mean horizontal CoM speed below the support stage's threshold.
    let speeds: Vec<f64> = k
        .velocity
        .iter()
        .flatten()
        .map(|v| {
            let h = up.horizontal(v);
            (h[0] * h[0] + h[1] * h[1]).sqrt()
        })
        .collect();
    let is_static = !speeds.is_empty()
        && speeds.iter().sum::<f64>() / (speeds.len() as f64)
            < crate::support::stage::STATIC_SPEED_M_S;
    let implied_mass = if is_static {
        let fu: Vec<f64> = grf_n.iter().flatten().map(|f| up.height(f)).collect();
        (!fu.is_empty()).then(|| {
            (
                fu.iter().sum::<f64>() / fu.len() as f64 / G_M_S2,
                fu.len(),
                "quiet-stance",
            )
        })
    } else {
        let num: f64 = pairs
            .iter()
            .map(|(ag, f)| ag[0] * f[0] + ag[1] * f[1] + ag[2] * f[2])
            .sum();
        let den: f64 = pairs
            .iter()
            .map(|(ag, _)| ag[0] * ag[0] + ag[1] * ag[1] + ag[2] * ag[2])
            .sum();
        (pairs.len() >= 3 && den > 0.0).then(|| (num / den, pairs.len(), "least-squares"))
    }
    .map(|(mass, frames, method)| ImpliedMass {
        method,
        frames,
        mass_kg: mass,
        declared_kg: m,
        difference_percent: 100.0 * (mass - m) / m,
    });
    if let Some(im) = &implied_mass {
        if im.difference_percent.abs() > MASS_WARNING_PERCENT {
            warnings.push(Warning::Plausibility {
                message: format!(
                    "the plates imply a mass of {:.1} kg ({}, {} frames), {:+.1} % from the declared {:.1} kg; check the subject's mass, the plate calibration and the zero offset",
                    im.mass_kg, im.method, im.frames, im.difference_percent, im.declared_kg
                ),
            });
        }
    }

    // CoP inside the BoS of the feet in contact.
    let mut inside = 0usize;
    let mut counted = 0usize;
    let mut max_out: f64 = 0.0;
    for (f, c) in cop_m.iter().enumerate() {
        let Some(c) = *c else { continue };
        let mut pts: Vec<[f64; 2]> = Vec::new();
        for side in 0..2 {
            if k.contact[side].get(f).copied().unwrap_or(false) {
                if let Some(o) = outline(side, f) {
                    pts.extend(o.vertices());
                }
            }
        }
        if pts.is_empty() {
            continue;
        }
        let bos = crate::support::convex_hull(&pts);
        if let Some(d) = crate::support::signed_distance(&bos, up.horizontal(&c)) {
            counted += 1;
            if d >= 0.0 {
                inside += 1;
            } else {
                max_out = max_out.max(-d);
            }
        }
    }
    let cop_inside_bos = (counted > 0).then(|| CopInBos {
        frames: counted,
        inside_share: inside as f64 / counted as f64,
        max_outside_m: max_out,
    });

    // Fused CoM over stretches of complete frames.
    let mut com_fused = vec![None; n];
    let mut velocity_fused = vec![None; n];
    // Supported: a plate loaded (in complete frames every foot in contact is on a plate).
    let supported: Vec<bool> = (0..n).map(|f| frames.iter().any(|p| p.loaded[f])).collect();
    let dt = 1.0 / k.rate_hz;
    let mut f = 0;
    while f < n {
        if grf_n[f].is_none() {
            f += 1;
            continue;
        }
        let start = f;
        while f < n && grf_n[f].is_some() {
            f += 1;
        }
        if f - start < MIN_FUSED_FRAMES {
            continue;
        }
        let mut axes = Vec::with_capacity(3);
        for a in 0..3 {
            let acc: Vec<f64> = (start..f)
                .map(|j| grf_n[j].map_or(0.0, |g| g[a]) / m - G_M_S2 * g_up[a])
                .collect();
            let kin: Vec<Option<f64>> = (start..f)
                .map(|j| k.com.get(j).copied().flatten().map(|c| c[a]))
                .collect();
            axes.push(fusion::fuse_axis(&acc, &supported[start..f], &kin, dt));
        }
        if let [Some(x), Some(y), Some(z)] = axes.as_slice() {
            for j in start..f {
                let i = j - start;
                com_fused[j] = Some([x.position_m[i], y.position_m[i], z.position_m[i]]);
                velocity_fused[j] = Some([x.velocity_m_s[i], y.velocity_m_s[i], z.velocity_m_s[i]]);
            }
        }
    }
    let diffs: Vec<[f64; 3]> = (0..n)
        .filter_map(|j| Some(sub(com_fused[j]?, k.com.get(j).copied().flatten()?)))
        .collect();
    let fused = (!diffs.is_empty()).then(|| {
        let mut rms = [0.0; 3];
        for a in 0..3 {
            rms[a] = 1000.0
                * (diffs.iter().map(|d| d[a] * d[a]).sum::<f64>() / diffs.len() as f64).sqrt();
        }
        FusedFigures {
            frames: diffs.len(),
            difference_rms_mm: rms,
            difference_max_mm: 1000.0
                * diffs
                    .iter()
                    .map(|d| (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]).sqrt())
                    .fold(0.0, f64::max),
        }
    });

    // Quiet standing: the gravity line over the longest complete stretch with a CoP.
    let mut gravity_line = vec![None; n];
    let quiet_standing = if is_static {
        let mut best = (0, 0);
        let mut j = 0;
        while j < n {
            if grf_n[j].is_some() && cop_m[j].is_some() {
                let s = j;
                while j < n && grf_n[j].is_some() && cop_m[j].is_some() {
                    j += 1;
                }
                if j - s > best.1 - best.0 {
                    best = (s, j);
                }
            } else {
                j += 1;
            }
        }
        let (s, e) = best;
        if e - s >= 3 {
            let axes = up.horizontal_axes();
            let fu: Vec<f64> = (s..e)
                .filter_map(|j| grf_n[j].map(|g| up.height(&g)))
                .collect();
            let mass = fu.iter().sum::<f64>() / fu.len() as f64 / G_M_S2;
            let mut lines = Vec::new();
            for a in axes {
                let force: Vec<f64> = (s..e).map(|j| grf_n[j].map_or(0.0, |g| g[a])).collect();
                let cop: Vec<f64> = (s..e).map(|j| cop_m[j].map_or(0.0, |c| c[a])).collect();
                lines.push(sway::gravity_line(&force, &cop, mass, dt));
            }
            for j in s..e {
                if let (Some(x), Some(y)) = (lines[0][j - s], lines[1][j - s]) {
                    gravity_line[j] = Some([x, y]);
                }
            }
        }
        let seg: Vec<Option<[f64; 2]>> = (0..n)
            .map(|j| {
                gravity_line[j].and(k.com.get(j).copied().flatten().map(|c| up.horizontal(&c)))
            })
            .collect();
        let cop_path: Vec<Option<[f64; 2]>> = (0..n)
            .map(|j| gravity_line[j].and(cop_m[j].map(|c| up.horizontal(&c))))
            .collect();
        let both: Vec<([f64; 2], [f64; 2])> = (0..n)
            .filter_map(|j| Some((gravity_line[j]?, seg[j]?)))
            .collect();
        let versus = (both.len() >= 3).then(|| {
            let nb = both.len() as f64;
            let mean = |i: usize, a: usize| {
                both.iter()
                    .map(|b| if i == 0 { b.0[a] } else { b.1[a] })
                    .sum::<f64>()
                    / nb
            };
            let (g0, g1, s0, s1) = (mean(0, 0), mean(0, 1), mean(1, 0), mean(1, 1));
            1000.0
                * (both
                    .iter()
                    .map(|(g, c)| {
                        ((g[0] - g0) - (c[0] - s0)).powi(2) + ((g[1] - g1) - (c[1] - s1)).powi(2)
                    })
                    .sum::<f64>()
                    / nb)
                    .sqrt()
        });
        Some(QuietStanding {
            gravity_line: sway::sway_figures(&gravity_line, dt),
            segmental: sway::sway_figures(&seg, dt),
            cop: sway::sway_figures(&cop_path, dt),
            gravity_line_vs_segmental_rms_mm: versus,
        })
    } else {
        None
    };

    // Jumps at the analog rate: the sum of the plates' vertical forces, where the frame
    // holding the sample is complete.
    let analog_n = rec.plates.first().map_or(0, |p| p.force_n.len());
    let analog_times: Vec<f64> = (0..analog_n)
        .map(|i| rec.first_time_s + i as f64 / rec.rate_hz)
        .collect();
    let t_first = k.times_s.first().copied().unwrap_or(0.0);
    let analog_vertical: Vec<Option<f64>> = (0..analog_n)
        .map(|i| {
            let f = ((analog_times[i] - t_first) * k.rate_hz).round();
            if f < 0.0 || f as usize >= n || !grf_complete[f as usize] {
                return None;
            }
            Some(rec.plates.iter().map(|p| up.height(&p.force_n[i])).sum())
        })
        .collect();
    let jump = jump::jump_figures(&analog_vertical, &analog_times, rec.rate_hz);

    let plates = rec
        .plates
        .iter()
        .zip(&cop_trusted)
        .map(|(p, &trusted)| PlateInfo {
            name: p.name.clone(),
            corners_declared: p.corners_m.is_some(),
            zero_offset_n: p.offset_n,
            cop_trusted: trusted,
        })
        .collect();
    PlateSeries {
        grf_n,
        cop_m,
        grf_complete,
        com_fused,
        velocity_fused,
        gravity_line,
        figures: PlateFigures {
            rate_hz: rec.rate_hz,
            zero_offset_from: match rec.zero {
                ZeroSource::Unloaded => "unloaded samples",
                ZeroSource::Samples { .. } => "samples named by the recording",
            },
            resampling: "mean over the frame period centred on each frame (zero delay)",
            plates,
            complete_fraction,
            strikes,
            cross_check,
            implied_mass,
            cop_inside_bos,
            fused,
            quiet_standing,
            jump,
        },
        warnings,
    }
}

/// The fused CoM and velocity where they exist, the segmental ones elsewhere (for
/// `[support] com = "fused"`).
pub fn fused_or_segmental(
    com: &[Option<[f64; 3]>],
    velocity: &[Option<[f64; 3]>],
    plates: &PlateSeries,
) -> (Series, Series) {
    let pick = |seg: &[Option<[f64; 3]>], fused: &[Option<[f64; 3]>]| {
        seg.iter()
            .enumerate()
            .map(|(i, s)| fused.get(i).copied().flatten().or(*s))
            .collect()
    };
    (
        pick(com, &plates.com_fused),
        pick(velocity, &plates.velocity_fused),
    )
}

/// The `frames.csv` columns of the plate stage, in order.
pub const FRAME_COLUMNS: [&str; 13] = [
    "grf_x_n",
    "grf_y_n",
    "grf_z_n",
    "cop_x_m",
    "cop_y_m",
    "cop_z_m",
    "grf_complete",
    "com_fused_x_m",
    "com_fused_y_m",
    "com_fused_z_m",
    "com_fused_vx_m_s",
    "com_fused_vy_m_s",
    "com_fused_vz_m_s",
];

/// The `steps.csv` cells `plate` (empty when none) and `clean_strike` (`true` / `false`) of
/// the step of `side` (`left` / `right`) starting at `heel_strike_s`.
pub fn step_plate(
    plates: &PlateSeries,
    times_s: &[f64],
    rate_hz: f64,
    side: &str,
    heel_strike_s: f64,
) -> (String, bool) {
    let side = usize::from(side == "right");
    let t0 = times_s.first().copied().unwrap_or(0.0);
    let frame = ((heel_strike_s - t0) * rate_hz).round().max(0.0) as usize;
    // The contact holding the heel strike, or the first one beginning within 3 frames after it
    // (the kinematic contact may start a little later than the event).
    let strike = (0..=3).find_map(|d| plates.strike_at(side, frame + d));
    match strike {
        Some(s) => (s.plate.clone().unwrap_or_default(), s.clean),
        None => (String::new(), false),
    }
}

/// The plates of a C3D file as a [`PlateRecording`]: per plate its corners, the force on the
/// body and the CoP (both already in the lab frame, from [`crate::c3d::plates`]), and the free
/// moment: the moment about the CoP, M_P = M_O - (P - O) x F (M_O about the transducer origin
/// O), along the up axis. Where the CoP is unknown (an unloaded plate) the free moment is 0.
/// The reader already subtracted the FORCE_PLATFORM:ZERO baseline; the stage's own zero offset
/// (median of the unloaded samples) then finds what is left of it.
pub fn from_c3d(fp: &crate::c3d::plates::ForcePlates, up: UpAxis) -> Option<PlateRecording> {
    if fp.plates.is_empty() {
        return None;
    }
    let u = up.unit();
    let plates = fp
        .plates
        .iter()
        .map(|p| {
            let free_moment_nm = p
                .samples
                .iter()
                .map(|s| {
                    let Some(cop) = s.cop_m else {
                        return 0.0;
                    };
                    let r = [
                        cop[0] - p.transducer_m[0],
                        cop[1] - p.transducer_m[1],
                        cop[2] - p.transducer_m[2],
                    ];
                    let f = s.force_n;
                    let r_x_f = [
                        r[1] * f[2] - r[2] * f[1],
                        r[2] * f[0] - r[0] * f[2],
                        r[0] * f[1] - r[1] * f[0],
                    ];
                    (0..3).map(|k| (s.moment_nm[k] - r_x_f[k]) * u[k]).sum()
                })
                .collect();
            PlateSamples {
                name: format!("plate{}", p.number),
                corners_m: Some(p.corners_m),
                force_n: p.samples.iter().map(|s| s.force_n).collect(),
                cop_m: p.samples.iter().map(|s| s.cop_m).collect(),
                free_moment_nm,
                offset_n: [0.0; 3],
            }
        })
        .collect();
    Some(PlateRecording {
        rate_hz: fp.rate_hz,
        first_time_s: fp.first_sample_s,
        plates,
        zero: ZeroSource::Unloaded,
    })
}
