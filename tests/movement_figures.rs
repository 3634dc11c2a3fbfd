//! The movement figures (src/movement) of the synthetic trials and of the bundled demo data,
//! checked against the model body's own ground truth (`gravline::synth::Truth`), and physics.

use gravline::anthropometry::SegmentTable;
use gravline::config::{Config, RawConfig, Subject};
use gravline::movement::{jump, Movement};
use gravline::pipeline::{run_trial, RunOptions, TrialResult};
use gravline::synth::{generate, Scenario, SynthOptions, SynthTrial};
use gravline::trial::{RawMarkers, Trial, UpAxis};

fn to_trial(s: &SynthTrial, rate_hz: f64) -> Trial {
    Trial {
        name: s.name.clone(),
        file: format!("{}.csv", s.name),
        times_s: s.times_s.clone(),
        rate_hz,
        up_axis: UpAxis::Z,
        markers: RawMarkers {
            labels: s.labels.clone(),
            tracks: s.positions.clone(),
        },
        warnings: Vec::new(),
    }
}

fn run_opts(scenario: Scenario, o: &SynthOptions, toml: &str) -> (SynthTrial, TrialResult) {
    let s = generate(scenario, o);
    let config = Config::from_raw(&RawConfig::from_toml(toml, "t").unwrap(), "t").unwrap();
    let subject = Subject::new(o.mass_kg, o.height_m, o.sex);
    let table = SegmentTable::load(&config.table, subject.sex).unwrap();
    let r = run_trial(
        &to_trial(&s, o.rate_hz),
        &config,
        &subject,
        &table,
        RunOptions::default(),
    )
    .unwrap();
    (s, r)
}

fn run(scenario: Scenario, toml: &str) -> (SynthTrial, TrialResult) {
    run_opts(scenario, &SynthOptions::for_scenario(scenario), toml)
}

#[test]
fn explore_jump() {
    let (s, r) = run(Scenario::Jump, "");
    let (t0, t1) = s.truth.flight_s.unwrap();
    eprintln!("truth {t0} {t1} {}", t1 - t0);
    eprintln!("{:?}", r.movement.jump);
}
