//! The demo data set of `examples/data/`, built in memory: four synthetic trials (walk, stand,
//! squat, jump) of three invented people at a fictional small sports clinic, their subject
//! files, the squat's load configuration, a batch manifest and a README.
//!
//! `cargo run --example make_demo_data` writes these files; a test checks that the committed
//! files equal what this module builds, so they cannot drift from the code.

use super::{generate, model_leg_length_m, write_wide_csv, Scenario, SynthOptions, SynthTrial};
use super::{BAR_COLLAR_SPAN_M, MARKER_RADIUS_M};
use crate::anthropometry::Sex;
use std::fmt::Write as _;

/// The fictional place of the demo scenario.
pub const PLACE: &str = "Larkhaven Sports Clinic";

/// One file of the demo data set.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct DemoFile {
    /// File name inside `examples/data/`.
    pub name: String,
    /// File contents.
    pub bytes: Vec<u8>,
}

/// An invented person of the demo.
#[derive(Clone, Debug, PartialEq)]
pub struct DemoPerson {
    /// First name, also the subject id and the stem of the subject file.
    pub name: &'static str,
    /// Sex, as in the subject file.
    pub sex: Sex,
    /// Stature, m.
    pub height_m: f64,
    /// Body mass, kg.
    pub mass_kg: f64,
}

/// The three invented people.
pub const PEOPLE: [DemoPerson; 3] = [
    DemoPerson {
        name: "maren",
        sex: Sex::Female,
        height_m: 1.68,
        mass_kg: 63.0,
    },
    DemoPerson {
        name: "tobin",
        sex: Sex::Male,
        height_m: 1.81,
        mass_kg: 86.0,
    },
    DemoPerson {
        name: "noa",
        sex: Sex::Female,
        height_m: 1.72,
        mass_kg: 64.5,
    },
];

/// One demo trial: its scenario, who does it, the seed, and the manifest's condition.
struct DemoTrial {
    scenario: Scenario,
    person: usize,
    seed: u64,
    condition: &'static str,
    config: &'static str,
}

const TRIALS: [DemoTrial; 4] = [
    DemoTrial {
        scenario: Scenario::Walk,
        person: 0,
        seed: 11,
        condition: "walk",
        config: "",
    },
    DemoTrial {
        scenario: Scenario::Stand,
        person: 0,
        seed: 12,
        condition: "stand",
        config: "",
    },
    DemoTrial {
        scenario: Scenario::Squat,
        person: 1,
        seed: 13,
        condition: "squat",
        config: "squat-config.toml",
    },
    DemoTrial {
        scenario: Scenario::Jump,
        person: 2,
        seed: 14,
        condition: "jump",
        config: "",
    },
];

fn capitalized(name: &str) -> String {
    let mut c = name.chars();
    match c.next() {
        Some(first) => first.to_uppercase().chain(c).collect(),
        None => String::new(),
    }
}

fn options(t: &DemoTrial) -> SynthOptions {
    let p = &PEOPLE[t.person];
    let mut o = SynthOptions::for_scenario(t.scenario);
    o.height_m = p.height_m;
    o.mass_kg = p.mass_kg;
    o.sex = p.sex;
    o.seed = t.seed;
    o
}

fn what(t: &DemoTrial, o: &SynthOptions) -> String {
    match t.scenario {
        Scenario::Walk => format!(
            "overground walk at {:.2} m/s, {:.0} steps/min",
            o.walk_speed_m_s, o.cadence_steps_per_min
        ),
        Scenario::Stand => "quiet standing, feet at hip width".to_string(),
        Scenario::Squat => format!(
            "high-bar back squats with a {:.0} kg barbell (markers bar_left, bar_right)",
            o.bar_mass_kg
        ),
        Scenario::Jump => "countermovement jump with arm swing".to_string(),
    }
}

fn times(list: &[(f64, f64)]) -> String {
    list.iter()
        .map(|(on, off)| format!("{on:.3}-{off:.3}"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// One-line ground truth of a trial.
fn truth_line(trial: &SynthTrial) -> String {
    let t = &trial.truth;
    if let Some(v) = t.walk_speed_m_s {
        format!(
            "walking speed {v:.2} m/s; contacts (heel strike-toe off, s): left {}; right {}",
            times(&t.contacts[0]),
            times(&t.contacts[1])
        )
    } else if let Some((on, off)) = t.flight_s {
        format!(
            "take-off {on:.4} s, landing {off:.4} s, flight {:.4} s",
            off - on
        )
    } else if !t.reps_s.is_empty() {
        let reps: Vec<String> = t
            .reps_s
            .iter()
            .map(|(a, b, c)| format!("{a:.2}/{b:.2}/{c:.2}"))
            .collect();
        format!(
            "{} repetitions (start/bottom/end, s): {}; bar {:.0} kg",
            t.reps_s.len(),
            reps.join(", "),
            t.bar_mass_kg.unwrap_or(0.0)
        )
    } else {
        "both feet in contact throughout; sway of a few millimetres".to_string()
    }
}

fn trial_comment(t: &DemoTrial, o: &SynthOptions, trial: &SynthTrial) -> String {
    let p = &PEOPLE[t.person];
    let gaps = if o.gaps {
        "and a few short gaps"
    } else {
        "and no gaps"
    };
    format!(
        "gravline demo trial {file}: SYNTHETIC data, made by `cargo run --example make_demo_data`\n\
         {PLACE} (a fictional small sports clinic); {name} (an invented person), {sex}, {h:.2} m, {m:.1} kg\n\
         {what}; {d:.1} s at {r:.0} Hz\n\
         units mm; lab frame +x forward, +y left, +z up; floor at z = 0\n\
         model body of gravline's synth module; {n:.1} mm Gaussian marker noise {gaps}\n\
         ground truth: {truth}",
        file = format_args!("{}.csv", trial.name),
        name = capitalized(p.name),
        sex = p.sex.word(),
        h = p.height_m,
        m = p.mass_kg,
        what = what(t, o),
        d = o.duration_s,
        r = o.rate_hz,
        n = o.noise_m * 1e3,
        truth = truth_line(trial),
    )
}

fn subject_file(p: &DemoPerson) -> String {
    format!(
        "# {name}: an invented person at the fictional {PLACE} (synthetic demo data).\n\
         # leg_length_m is the model body's ASIS to medial malleolus distance.\n\
         mass_kg = {m:.1}\n\
         height_m = {h:.2}\n\
         sex = \"{sex}\"\n\
         leg_length_m = {ll:.4}\n\
         marker_radius_m = {r:.3}\n",
        name = capitalized(p.name),
        m = p.mass_kg,
        h = p.height_m,
        sex = p.sex.word(),
        ll = model_leg_length_m(p.height_m),
        r = MARKER_RADIUS_M,
    )
}

fn squat_config(bar_mass_kg: f64) -> String {
    format!(
        "# Load of the demo squat (synthetic): the barbell, its CoM at the centroid of its two\n\
         # markers at the inner collars.\n\
         [[load]]\n\
         name = \"bar\"\n\
         mass_kg = {bar_mass_kg:.0}\n\
         markers = [\"bar_left\", \"bar_right\"]\n"
    )
}

fn readme(rows: &[(String, String, String)]) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "# Demo data (synthetic)\n");
    let _ = writeln!(
        s,
        "Every file in this folder is **synthetic**: no person was recorded. The trials come from \
         the model body of gravline's `synth` module and are rebuilt, byte for byte, by\n\n    \
         cargo run --example make_demo_data\n\n\
         (a test checks that the committed files equal what that command writes; change the code \
         in `src/synth/`, not these files).\n"
    );
    let _ = writeln!(s, "## Scenario\n");
    let _ = writeln!(
        s,
        "{PLACE} is a fictional small sports clinic; its three visitors are invented. Maren \
         (female, 1.68 m, 63 kg) walks across the room and then stands still; Tobin (male, \
         1.81 m, 86 kg) does three high-bar back squats with a 60 kg barbell; Noa (female, \
         1.72 m, 64.5 kg) does a countermovement jump.\n"
    );
    let _ = writeln!(s, "| file | subject | what | ground truth |");
    let _ = writeln!(s, "| --- | --- | --- | --- |");
    for (file, subject, truth) in rows {
        let _ = writeln!(s, "| `{file}` | {subject} | {truth} |");
    }
    let _ = writeln!(
        s,
        "\nThe ground truth is the model's own: its event times, and its true whole-body CoM \
         (de Leva 1996 rows from the exact joint centers, in `gravline::synth::Truth`).\n"
    );
    let _ = writeln!(s, "## Files\n");
    let _ = writeln!(
        s,
        "- `walk.csv`, `stand.csv`, `squat.csv`, `jump.csv`: wide trial files; `#` comment lines \
         name the person and the place and give the ground truth; header \
         `time,<label>_x,<label>_y,<label>_z,...`; time in s, coordinates in **mm** (2 decimals); \
         lab frame +x forward (the walking direction), +y left, +z up, floor at z = 0; empty \
         cells are gaps. Marker labels are gravline's landmark names (`gravline landmarks`), so \
         no mapping is needed. 0.5 mm Gaussian noise on every coordinate; a few gaps of 3-8 \
         frames inside each trial."
    );
    let _ = writeln!(
        s,
        "- `maren.toml`, `tobin.toml`, `noa.toml`: subjects (`mass_kg`, `height_m`, `sex`, \
         `leg_length_m`, `marker_radius_m`). `leg_length_m` is the model's ASIS to medial \
         malleolus distance, the one its pelvis markers were placed with."
    );
    let _ = writeln!(
        s,
        "- `squat-config.toml`: the barbell as a load (`[[load]]`, {:.0} kg, at the centroid of \
         `bar_left` and `bar_right`, which sit at the inner collars {BAR_COLLAR_SPAN_M:.2} m \
         apart).",
        60.0
    );
    let _ = writeln!(
        s,
        "- `manifest.csv`: the four trials for `gravline batch` (columns trial, subject, \
         mass_kg, height_m, sex, condition, leg_length_m, config; paths relative to the \
         manifest).\n"
    );
    let _ = writeln!(s, "## The model body\n");
    let _ = writeln!(
        s,
        "Segment lengths are fractions of stature after Drillis & Contini (1966) as reproduced \
         in Winter's Biomechanics and Motor Control of Human Movement, Fig. 4.1 (from memory). \
         The hip joint centers sit where the Harrington et al. (2007) regression puts them from \
         the pelvis markers; knee, ankle, elbow and wrist centers midway between their two \
         markers; shoulder centers 17 % of the inter-acromion distance below the acromion \
         markers. The four head markers ring the head at temple level; there is no `head_top` \
         marker, so the vertex must be estimated. The walk plants each stance foot (heel rocker, \
         foot flat, heel rise about the toe), the jump's flight is ballistic (the true CoM \
         falls at 9.81 m/s^2 from take-off to landing), and the squat keeps the bar above the \
         mid-foot."
    );
    s
}

/// Builds every file of the demo data set.
pub fn demo_files() -> Vec<DemoFile> {
    let mut files = Vec::new();
    let mut manifest =
        String::from("trial,subject,mass_kg,height_m,sex,condition,leg_length_m,config\n");
    let mut rows = Vec::new();
    let mut bar_mass_kg = 60.0;
    for t in &TRIALS {
        let o = options(t);
        let trial = generate(t.scenario, &o);
        let p = &PEOPLE[t.person];
        let mut bytes = Vec::new();
        // Writing into a Vec cannot fail.
        let _ = write_wide_csv(&trial, &trial_comment(t, &o, &trial), &mut bytes);
        let file = format!("{}.csv", trial.name);
        let _ = writeln!(
            manifest,
            "{file},{},{:.1},{:.2},{},{},{:.4},{}",
            p.name,
            p.mass_kg,
            p.height_m,
            p.sex.word(),
            t.condition,
            model_leg_length_m(p.height_m),
            t.config
        );
        rows.push((
            file.clone(),
            format!("{} | {}", capitalized(p.name), what(t, &o)),
            truth_line(&trial),
        ));
        if t.scenario == Scenario::Squat {
            bar_mass_kg = o.bar_mass_kg;
        }
        files.push(DemoFile { name: file, bytes });
    }
    for p in &PEOPLE {
        files.push(DemoFile {
            name: format!("{}.toml", p.name),
            bytes: subject_file(p).into_bytes(),
        });
    }
    files.push(DemoFile {
        name: "squat-config.toml".to_string(),
        bytes: squat_config(bar_mass_kg).into_bytes(),
    });
    files.push(DemoFile {
        name: "manifest.csv".to_string(),
        bytes: manifest.into_bytes(),
    });
    files.push(DemoFile {
        name: "README.md".to_string(),
        bytes: readme(&rows).into_bytes(),
    });
    files
}

/// The ground truth of the demo trial named `stem` (`walk`, `stand`, `squat`, `jump`).
pub fn truth(stem: &str) -> Option<super::Truth> {
    let t = TRIALS.iter().find(|t| t.scenario.name() == stem)?;
    Some(generate(t.scenario, &options(t)).truth)
}

/// Signed errors in ms of detected event times against true ones (`(side, time)`, side 0 =
/// left): each detected event against the nearest true event of the same side.
fn errors_ms(detected: &[(usize, f64)], truth: &[(usize, f64)]) -> Vec<f64> {
    detected
        .iter()
        .filter_map(|&(side, t)| {
            truth
                .iter()
                .filter(|e| e.0 == side)
                .map(|e| t - e.1)
                .min_by(|a, b| a.abs().total_cmp(&b.abs()))
                .map(|e| 1e3 * e)
        })
        .collect()
}

fn error_summary(what: &str, e: &[f64]) -> String {
    if e.is_empty() {
        return format!("{what}: none found");
    }
    let mean = e.iter().sum::<f64>() / e.len() as f64;
    let lo = e.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = e.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    format!(
        "{what} {mean:+.0} ms (from {lo:+.0} to {hi:+.0} ms, {} events)",
        e.len()
    )
}

/// One line: the events a run of the demo trial `stem` found against the model's truth.
/// `steps` are the detected (side, heel strike, toe-off) times of a walk (side 0 = left); the
/// jump and the squat are read from their figures. Negative errors are early.
pub fn event_error_line(
    stem: &str,
    figures: &crate::movement::MovementFigures,
    steps: &[(usize, f64, Option<f64>)],
) -> Option<String> {
    let truth = truth(stem)?;
    if truth.walk_speed_m_s.is_some() {
        let hs: Vec<(usize, f64)> = steps.iter().map(|s| (s.0, s.1)).collect();
        let to: Vec<(usize, f64)> = steps.iter().filter_map(|s| Some((s.0, s.2?))).collect();
        let true_hs: Vec<(usize, f64)> = (0..2)
            .flat_map(|side| truth.contacts[side].iter().map(move |c| (side, c.0)))
            .collect();
        let true_to: Vec<(usize, f64)> = (0..2)
            .flat_map(|side| truth.contacts[side].iter().map(move |c| (side, c.1)))
            .collect();
        return Some(format!(
            "{stem}: events against the model's truth: {}; {}",
            error_summary("heel strikes", &errors_ms(&hs, &true_hs)),
            error_summary("toe-offs", &errors_ms(&to, &true_to))
        ));
    }
    if let Some((on, off)) = truth.flight_s {
        let j = figures.jump.as_ref()?;
        return Some(format!(
            "{stem}: events against the model's truth: take-off {:+.1} ms, landing {:+.1} ms, flight time {:+.1} ms",
            1e3 * (j.takeoff_s - on),
            1e3 * (j.landing_s - off),
            1e3 * (j.flight_time_s - (off - on))
        ));
    }
    if !truth.reps_s.is_empty() {
        let bottoms: Vec<(usize, f64)> = figures.reps.iter().map(|r| (0, r.bottom_s)).collect();
        let true_bottoms: Vec<(usize, f64)> = truth.reps_s.iter().map(|r| (0, r.1)).collect();
        return Some(format!(
            "{stem}: events against the model's truth: {} of {} repetitions, {}",
            figures.reps.len(),
            truth.reps_s.len(),
            error_summary("bottoms", &errors_ms(&bottoms, &true_bottoms))
        ));
    }
    None
}
