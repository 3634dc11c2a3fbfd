//! Command line (clap only): flags become a validated [`Setup`] before any work; the library
//! never sees a flag. Exit codes: 0 done, 1 batch finished with failed trials, 2 could not start.

use anyhow::{bail, Context, Result};
use clap::{Args, Parser, Subcommand, ValueEnum};
use gravline::anthropometry::{self, SegmentTable, Sex};
use gravline::body::vocabulary;
use gravline::config::{Config, RawConfig, RawCutoff, Subject, DEFAULT_CONFIG_TOML};
use gravline::pipeline::{self, OutputOptions, RunOptions, Setup};
use gravline::report::plots::PlotFormat;
use gravline::report::CAUTIONS;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

/// `--version`: the package version, the commit and the build date (from build.rs).
const VERSION: &str = concat!(
    env!("CARGO_PKG_VERSION"),
    " (commit ",
    env!("GRAVLINE_COMMIT"),
    ", built ",
    env!("GRAVLINE_BUILD_DATE"),
    ")"
);

/// The cautions shown under every help text.
macro_rules! cautions {
    () => {
        "Cautions: CoM estimated from generic anthropometric tables and skin markers typically \
differs from the true CoM by a centimetre or more. gravline is an analysis aid, not a medical device: \
fall-risk, rehabilitation and training decisions belong to qualified, licensed practitioners under \
local regulations. Lifting analysis does not make a lift safe."
    };
}

const EPILOGUE: &str = concat!(
    "Examples:\n  gravline demo --out demo\n  gravline trial examples/data/walk.csv --subject examples/data/maren.toml --out out\n  gravline batch examples/data/manifest.csv --out results\n\n",
    cautions!()
);
const TRIAL_HELP: &str = concat!(
    "Examples:\n  gravline trial examples/data/walk.csv --subject examples/data/maren.toml --out out\n  gravline trial examples/data/squat.csv --subject examples/data/tobin.toml --config examples/data/squat-config.toml --out out\n  gravline trial examples/data/jump.csv --mass-kg 64.5 --height-m 1.72 --sex female --out out --plot-format svg\n\n",
    cautions!()
);
const CUTOFF_HELP: &str = "Examples:\n  gravline cutoff examples/data/walk.csv\n  gravline cutoff examples/data/walk.csv --csv residuals.csv";
const TABLES_HELP: &str =
    "Examples:\n  gravline tables\n  gravline tables de-leva-1996 --sex female";
const LANDMARKS_HELP: &str =
    "Examples:\n  gravline landmarks\n  gravline landmarks examples/data/walk.csv";
const CONFIG_HELP: &str = "Examples:\n  gravline config --print-default > gravline.toml";
const DEMO_HELP: &str = concat!(
    "Examples:\n  gravline demo\n  gravline demo --out demo --no-plots\n\n",
    cautions!()
);
const BATCH_HELP: &str = concat!(
    "Examples:\n  gravline batch examples/data/manifest.csv --out results\n  gravline batch trials/ --subject examples/data/maren.toml --out results --jobs 4\n  gravline batch examples/data/manifest.csv --out shards --shard 1/2\n\n",
    cautions!()
);
const MERGE_HELP: &str =
    "Examples:\n  gravline merge shards/summary-1-of-2.parquet shards/summary-2-of-2.parquet --out results";
const COMPLETIONS_HELP: &str = "Examples:\n  gravline completions bash > ~/.local/share/bash-completion/completions/gravline\n  gravline completions zsh > ~/.zfunc/_gravline\n  gravline completions fish > ~/.config/fish/completions/gravline.fish";
const MAN_HELP: &str = "Examples:\n  gravline man > gravline.1 && man ./gravline.1";

#[derive(Parser, Debug)]
#[command(name = "gravline", version = VERSION, about = "Whole-body center of mass, its velocity and its margin to the base of support, from 3D marker trajectories", after_help = EPILOGUE)]
struct Cli {
    /// Print only errors.
    #[arg(short, long, global = true, help_heading = "Global options")]
    quiet: bool,
    /// Print every warning in full.
    #[arg(short, long, global = true, help_heading = "Global options")]
    verbose: bool,
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Process one trial: frames.csv, summary.json, steps.csv and plots in <out>/<trial-stem>/.
    #[command(after_help = TRIAL_HELP)]
    Trial(TrialArgs),
    /// Winter's residual analysis: suggested low-pass cut-off per marker and overall.
    #[command(after_help = CUTOFF_HELP)]
    Cutoff(CutoffArgs),
    /// List the built-in anthropometric tables, or show one.
    #[command(after_help = TABLES_HELP)]
    Tables(TablesArgs),
    /// Print the landmark vocabulary, and a mapping template for a trial file.
    #[command(after_help = LANDMARKS_HELP)]
    Landmarks(LandmarksArgs),
    /// Configuration helpers.
    #[command(after_help = CONFIG_HELP)]
    Config(ConfigArgs),
    /// Run the bundled example trials end to end.
    #[command(after_help = DEMO_HELP)]
    Demo(DemoArgs),
    /// Process many trials in parallel (a manifest CSV or a folder): per-trial outputs in
    /// <out>/trials/<id>/, summary.csv, summary.parquet and groups.csv in <out>.
    #[command(after_help = BATCH_HELP)]
    Batch(BatchArgs),
    /// Join shard summaries (summary-K-of-N.parquet or .csv) into the summary.csv, summary.parquet
    /// and groups.csv of an unsharded run.
    #[command(after_help = MERGE_HELP)]
    Merge(MergeArgs),
    /// Print a shell completion script (generated from this command line's definition).
    #[command(after_help = COMPLETIONS_HELP)]
    Completions {
        /// bash, zsh, fish, elvish or powershell.
        #[arg(value_enum)]
        shell: clap_complete::Shell,
    },
    /// Print the man page (roff, generated from this command line's definition).
    #[command(after_help = MAN_HELP)]
    Man,
    /// Write a C3D file's points as a wide trial CSV (<out>/<stem>.csv, mm) and its force plates
    /// as <out>/<stem>.plates.csv.
    Convert(ConvertArgs),
}

#[derive(Args, Debug)]
struct ConvertArgs {
    /// C3D file.
    trial: PathBuf,
    /// Output folder.
    #[arg(long)]
    out: PathBuf,
    /// How FORCE_PLATFORM:ORIGIN is applied: auto (negated when its z is positive), as-stored,
    /// negated.
    #[arg(long, default_value = "auto", value_parser = ["auto", "as-stored", "negated"])]
    plate_origin: String,
    /// What the scaled plate channels hold: reaction (the load on the body, as in c3d.org's
    /// samples) or action (the load on the plate).
    #[arg(long, default_value = "reaction", value_parser = ["reaction", "action"])]
    plate_force: String,
}

#[derive(Args, Debug, Clone, Default)]
struct SubjectArgs {
    /// Subject file (TOML: mass_kg, height_m, sex, optional lab measurements).
    #[arg(long, conflicts_with_all = ["mass_kg", "height_m", "sex"])]
    subject: Option<PathBuf>,
    /// Body mass in kg (instead of --subject).
    #[arg(long)]
    mass_kg: Option<f64>,
    /// Stature in metres (instead of --subject).
    #[arg(long)]
    height_m: Option<f64>,
    /// Sex, chooses the table's population (instead of --subject): female or male (f / m, any
    /// case).
    #[arg(long, value_enum, ignore_case = true)]
    sex: Option<SexArg>,
}

/// Sex on the command line: `female` / `male` or `f` / `m`, any case (as in manifests and
/// subject files).
#[derive(ValueEnum, Clone, Copy, Debug)]
enum SexArg {
    #[value(alias = "f")]
    Female,
    #[value(alias = "m")]
    Male,
}

#[derive(Args, Debug, Clone, Default)]
struct SetupArgs {
    /// Configuration file (TOML; see `gravline config --print-default`).
    #[arg(long)]
    config: Option<PathBuf>,
    /// Anthropometric table: de-leva-1996, dempster-winter, dumas-2007 or a table file.
    #[arg(long)]
    table: Option<String>,
    /// Sampling rate in Hz, for files with a frame column.
    #[arg(long)]
    rate_hz: Option<f64>,
    /// Low-pass cut-off in Hz (0 turns the filter off).
    #[arg(long)]
    cutoff_hz: Option<f64>,
    /// Longest interior marker gap bridged by the spline, in seconds.
    #[arg(long)]
    max_gap_s: Option<f64>,
    /// Also compute the CoM under every table and hip method, and their spread per frame.
    #[arg(long)]
    spread: bool,
}

#[derive(ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
enum PlotFormatArg {
    Png,
    Svg,
    Both,
}

#[derive(Args, Debug, Clone)]
struct PlotArgs {
    /// Do not write plots.
    #[arg(long)]
    no_plots: bool,
    /// Plot image format.
    #[arg(long, value_enum, default_value = "png")]
    plot_format: PlotFormatArg,
    /// Do not write report.html (the self-contained page of the trial or batch).
    #[arg(long)]
    no_report: bool,
}

impl PlotArgs {
    fn formats(&self) -> Vec<PlotFormat> {
        if self.no_plots {
            return Vec::new();
        }
        match self.plot_format {
            PlotFormatArg::Png => vec![PlotFormat::Png],
            PlotFormatArg::Svg => vec![PlotFormat::Svg],
            PlotFormatArg::Both => vec![PlotFormat::Png, PlotFormat::Svg],
        }
    }
}

#[derive(Args, Debug)]
struct TrialArgs {
    /// Trial file: CSV (wide or tidy layout) or C3D.
    trial: PathBuf,
    #[command(flatten)]
    subject: SubjectArgs,
    #[command(flatten)]
    setup: SetupArgs,
    /// Output folder; the trial's outputs go to <out>/<trial-stem>/.
    #[arg(long, default_value = "gravline-out")]
    out: PathBuf,
    /// Add per-segment CoM columns (seg_<segment>_x_m ...) to frames.csv.
    #[arg(long)]
    segments: bool,
    /// Force plates of the trial: CSV (time_s, then per plate <p>_fx_n, <p>_fy_n, <p>_fz_n and
    /// CoP <p>_cop_x_mm.. or moments <p>_mx_nm..; corners from [[plate]] in the configuration).
    #[arg(long, value_name = "FILE.csv")]
    plates: Option<PathBuf>,
    #[command(flatten)]
    plots: PlotArgs,
}

#[derive(Args, Debug)]
struct CutoffArgs {
    /// Trial file (CSV or C3D).
    trial: PathBuf,
    #[command(flatten)]
    setup: SetupArgs,
    /// Write the residual curves (cutoff_hz and one column per marker coordinate) to this CSV.
    #[arg(long)]
    csv: Option<PathBuf>,
}

#[derive(Args, Debug)]
struct TablesArgs {
    /// Table to show (de-leva-1996, dempster-winter, or a table file).
    name: Option<String>,
    /// Population of tables that have one per sex.
    #[arg(long, value_enum, default_value = "male")]
    sex: SexArg,
}

#[derive(Args, Debug)]
struct LandmarksArgs {
    /// Trial file (CSV or C3D): print a [landmarks] template matching its labels (and, for a
    /// C3D, its point descriptions).
    trial: Option<PathBuf>,
}

#[derive(Args, Debug)]
struct ConfigArgs {
    /// Write the default configuration, with comments, to stdout.
    #[arg(long)]
    print_default: bool,
}

#[derive(Args, Debug)]
struct DemoArgs {
    /// Output folder.
    #[arg(long, default_value = "gravline-demo")]
    out: PathBuf,
    #[command(flatten)]
    plots: PlotArgs,
}

/// Runs the command line; `Err` is a could-not-start error (exit code 2).
pub fn run() -> Result<ExitCode> {
    let cli = Cli::parse();
    let ui = Ui {
        quiet: cli.quiet,
        verbose: cli.verbose,
    };
    match cli.command {
        Command::Trial(a) => trial(&a, &ui),
        Command::Cutoff(a) => cutoff(&a),
        Command::Tables(a) => tables(&a),
        Command::Landmarks(a) => landmarks(&a),
        Command::Config(a) => {
            if !a.print_default {
                bail!("nothing to do: use `gravline config --print-default`");
            }
            print!("{DEFAULT_CONFIG_TOML}");
            Ok(ExitCode::SUCCESS)
        }
        Command::Demo(a) => demo(&a, &ui),
        Command::Batch(a) => batch(&a, &ui),
        Command::Merge(a) => merge(&a, &ui),
        Command::Completions { shell } => {
            let mut command = <Cli as clap::CommandFactory>::command();
            clap_complete::generate(shell, &mut command, "gravline", &mut std::io::stdout());
            Ok(ExitCode::SUCCESS)
        }
        Command::Man => {
            let command = <Cli as clap::CommandFactory>::command();
            clap_mangen::Man::new(command)
                .render(&mut std::io::stdout())
                .context("cannot write the man page to standard output")?;
            Ok(ExitCode::SUCCESS)
        }
        Command::Convert(a) => convert(&a, &ui),
    }
}

/// Where messages go: stderr, filtered by -q / -v.
struct Ui {
    quiet: bool,
    verbose: bool,
}

impl Ui {
    fn info(&self, message: &str) {
        if !self.quiet {
            eprintln!("{message}");
        }
    }

    fn warnings(&self, trial: &str, warnings: &[String]) {
        if self.quiet {
            // Implausible figures survive -q, on one line.
            let implausible: Vec<&str> = warnings
                .iter()
                .filter_map(|w| w.strip_prefix("plausibility: "))
                .collect();
            if !implausible.is_empty() {
                eprintln!("{trial}: suspect: {}", implausible.join("; "));
            }
            return;
        }
        if warnings.is_empty() {
            return;
        }
        let shown = if self.verbose {
            warnings.len()
        } else {
            warnings.len().min(5)
        };
        for w in &warnings[..shown] {
            eprintln!("{trial}: warning: {w}");
        }
        if shown < warnings.len() {
            eprintln!(
                "{trial}: {} more warnings in summary.json (-v shows all)",
                warnings.len() - shown
            );
        }
    }
}

/// The raw configuration of a file (or defaults) with the flags applied.
fn raw_config(args: &SetupArgs) -> Result<(RawConfig, String)> {
    let (mut raw, origin) = match &args.config {
        Some(path) => (RawConfig::from_path(path)?, path.display().to_string()),
        None => (RawConfig::default(), "command line".to_string()),
    };
    if let Some(t) = &args.table {
        raw.model.table = Some(t.clone());
    }
    if let Some(r) = args.rate_hz {
        raw.input.rate_hz = Some(r);
    }
    if let Some(c) = args.cutoff_hz {
        raw.filter.cutoff_hz = Some(if c == 0.0 {
            RawCutoff::Word("none".into())
        } else {
            RawCutoff::Hz(c)
        });
    }
    if let Some(g) = args.max_gap_s {
        raw.filter.max_gap_s = Some(g);
    }
    if args.spread {
        raw.model.spread = Some(true);
    }
    Ok((raw, origin))
}

fn config(args: &SetupArgs) -> Result<Config> {
    let (raw, origin) = raw_config(args)?;
    Ok(Config::from_raw(&raw, &origin)?)
}

fn subject(args: &SubjectArgs) -> Result<Subject> {
    if let Some(path) = &args.subject {
        let mut subject = Subject::from_path(path)?;
        // The subject's id: its `name`, else the file's stem (`maren.toml` -> `maren`).
        if subject.name.is_none() {
            subject.name = path.file_stem().map(|s| s.to_string_lossy().into_owned());
        }
        return Ok(subject);
    }
    match (args.mass_kg, args.height_m, args.sex) {
        (Some(m), Some(h), Some(s)) => {
            let sex = match s {
                SexArg::Female => Sex::Female,
                SexArg::Male => Sex::Male,
            };
            Ok(Subject::new(m, h, sex).validate("command line")?)
        }
        _ => bail!("give the subject: --subject S.toml, or all of --mass-kg, --height-m and --sex"),
    }
}

fn trial(a: &TrialArgs, ui: &Ui) -> Result<ExitCode> {
    if a.trial.is_dir() {
        bail!(
            "{0} is a folder, `trial` takes one file: to process every trial in it use `gravline batch {0} --out DIR`",
            a.trial.display()
        );
    }
    let mut trial_config = config(&a.setup)?;
    trial_config.plates_file = a.plates.clone();
    let setup = Setup::new(trial_config, subject(&a.subject)?)?;
    // The output folder is a plain name under --out, whatever the file is called (`..csv`).
    let stem = gravline::batch::sanitize_id(
        &a.trial
            .file_stem()
            .map_or(String::new(), |s| s.to_string_lossy().into_owned()),
    );
    let dir = a.out.join(&stem);
    let options = OutputOptions {
        run: RunOptions {
            segments: a.segments,
        },
        plots: a.plots.formats(),
        no_report: a.plots.no_report,
    };
    let summary = pipeline::process_file(&a.trial, &setup, &dir, &options)?;
    ui.warnings(&stem, &summary.warnings);
    ui.info(&trial_line(&summary));
    ui.info(&format!("outputs in {}", dir.display()));
    Ok(ExitCode::SUCCESS)
}

/// One line per trial: frames, valid share, mean CoM height as a share of stature, path length.
fn trial_line(s: &gravline::report::Summary) -> String {
    let share = s
        .com
        .mean_height_of_stature
        .map_or("-".to_string(), |f| format!("{f:.3}"));
    let speed = s
        .com
        .mean_speed_m_s
        .map_or("-".to_string(), |v| format!("{v:.2}"));
    format!(
        "{}: {} frames, {:.1} % valid, mean CoM height {} of stature, CoM path {:.2} m, mean speed {} m/s",
        s.trial,
        s.frames,
        100.0 * s.valid_fraction,
        share,
        s.com.path_length_m,
        speed
    ) + "; "
        + &s.figures.line()
}

fn cutoff(a: &CutoffArgs) -> Result<ExitCode> {
    let config = config(&a.setup)?;
    let trial = if gravline::c3d::is_c3d_file(&a.trial) {
        gravline::c3d::read_trial(&a.trial, &config.read_options())?
    } else {
        gravline::trial::read_trial(&a.trial, &config.read_options())?
    };
    let report = gravline::signal::cutoff::analyse_trial(&trial);
    print!("{}", report.describe());
    match report.overall_hz() {
        Some(hz) => println!(
            "to apply it, put in the configuration (--config C.toml):\n[filter]\ncutoff_hz = {hz:.1}"
        ),
        None => println!("no cut-off could be suggested: keep the configuration's cutoff_hz"),
    }
    if let Some(path) = &a.csv {
        gravline::report::write_atomic(path, |w| report.write_curves(w))
            .with_context(|| format!("cannot write {}", path.display()))?;
    }
    Ok(ExitCode::SUCCESS)
}

fn tables(a: &TablesArgs) -> Result<ExitCode> {
    let sex = match a.sex {
        SexArg::Female => Sex::Female,
        SexArg::Male => Sex::Male,
    };
    match &a.name {
        Some(name) => print!(
            "{}",
            anthropometry::describe(&SegmentTable::load(name, sex)?)
        ),
        None => {
            for name in anthropometry::BUILTIN {
                let t = SegmentTable::builtin(name, sex)?;
                println!(
                    "{:<16} {} ({} rows; mass fractions sum to {:.4})",
                    t.name,
                    t.source,
                    t.rows.len(),
                    t.mass_sum
                );
            }
            println!("\n`gravline tables NAME [--sex female]` shows the rows; anthropometry/README.md cites the sources.");
        }
    }
    Ok(ExitCode::SUCCESS)
}

fn landmarks(a: &LandmarksArgs) -> Result<ExitCode> {
    println!("# gravline landmark vocabulary (l_/r_ prefix for sided landmarks)");
    for l in vocabulary::VOCABULARY {
        let name = match l.sidedness {
            vocabulary::Sidedness::Sided => format!("l_{0} / r_{0}", l.stem),
            vocabulary::Sidedness::Single => l.stem.to_string(),
        };
        let derived = if l.origin == vocabulary::Origin::Derived {
            " (computed unless given)"
        } else {
            ""
        };
        println!("#   {name:<28} {}{derived}", l.description);
    }
    let Some(path) = &a.trial else {
        return Ok(ExitCode::SUCCESS);
    };
    let labels = if gravline::c3d::is_c3d_file(path) {
        let c3d = gravline::c3d::read(path, &Default::default())?;
        print!("\n{}", gravline::c3d::describe_points(&c3d));
        c3d.labels
    } else {
        gravline::trial::read_labels(path)?
    };
    println!(
        "\n# [landmarks] template for {}: live lines only where a label matches a landmark",
        path.display()
    );
    println!(
        "# exactly or up to case and separators; every other line is a guess to check (commented)."
    );
    println!("[landmarks]");
    let names = vocabulary::all_names();
    let fold = gravline::body::model::fold_label;
    for name in &names {
        let same: Vec<&String> = labels.iter().filter(|l| fold(l) == fold(name)).collect();
        match same.as_slice() {
            [label] => println!("{name} = \"{label}\""),
            [_, _, ..] => println!(
                "# {name} = \"{}\"   # several labels match ({}); pick one",
                same[0],
                same.iter()
                    .map(|s| s.as_str())
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
            [] => {
                let guess = gravline::body::model::closest_labels(name, &labels, 1);
                match guess.first() {
                    Some(g) => {
                        println!("# {name} = \"{g}\"   # guess (closest label), not checked")
                    }
                    None => println!("# {name} = \"\"   # not found"),
                }
            }
        }
    }
    let unused: Vec<&String> = labels
        .iter()
        .filter(|l| !names.iter().any(|n| fold(n) == fold(l)))
        .collect();
    if !unused.is_empty() {
        println!(
            "# labels of the file not in the vocabulary: {}",
            unused
                .iter()
                .map(|s| s.as_str())
                .collect::<Vec<_>>()
                .join(", ")
        );
    }
    Ok(ExitCode::SUCCESS)
}

/// Bundled example trials (examples/data/, made by `cargo run --example make_demo_data`).
const DEMO_FILES: &[(&str, &str)] = &[
    (
        "manifest.csv",
        include_str!("../examples/data/manifest.csv"),
    ),
    ("walk.csv", include_str!("../examples/data/walk.csv")),
    ("stand.csv", include_str!("../examples/data/stand.csv")),
    ("squat.csv", include_str!("../examples/data/squat.csv")),
    ("jump.csv", include_str!("../examples/data/jump.csv")),
    (
        "squat-config.toml",
        include_str!("../examples/data/squat-config.toml"),
    ),
    ("maren.toml", include_str!("../examples/data/maren.toml")),
    ("tobin.toml", include_str!("../examples/data/tobin.toml")),
    ("noa.toml", include_str!("../examples/data/noa.toml")),
    ("README.md", include_str!("../examples/data/README.md")),
];

fn demo(a: &DemoArgs, ui: &Ui) -> Result<ExitCode> {
    let inputs = a.out.join("inputs");
    for (name, text) in DEMO_FILES {
        let path = inputs.join(name);
        gravline::report::write_atomic(&path, |w| std::io::Write::write_all(w, text.as_bytes()))
            .with_context(|| format!("cannot write {}", path.display()))?;
    }
    let manifest = inputs.join("manifest.csv");
    let mut reader = csv::Reader::from_path(&manifest)?;
    let headers = reader.headers()?.clone();
    let col = |name: &str| headers.iter().position(|h| h == name);
    let (Some(t), Some(m), Some(h), Some(s)) =
        (col("trial"), col("mass_kg"), col("height_m"), col("sex"))
    else {
        bail!(
            "{}: bundled manifest lacks trial/mass_kg/height_m/sex columns",
            manifest.display()
        );
    };
    let c = col("config");
    let cond = col("condition");
    let sub = col("subject");
    let mut pages = Vec::new();
    let leg = col("leg_length_m");
    for record in reader.records() {
        let r = record?;
        let trial_path = inputs.join(&r[t]);
        let mut setup_args = SetupArgs::default();
        if let Some(c) = c.filter(|&c| !r[c].is_empty()) {
            setup_args.config = Some(inputs.join(&r[c]));
        }
        let sex =
            Sex::parse(&r[s]).with_context(|| format!("bundled manifest: sex `{}`", &r[s]))?;
        let mut subject =
            Subject::new(r[m].parse()?, r[h].parse()?, sex).validate("bundled manifest")?;
        subject.name = sub.map(|i| r[i].to_string());
        let condition = cond.map(|i| r[i].to_string());
        if let Some(l) = leg.filter(|&l| !r[l].is_empty()) {
            subject.leg_length_m = Some(r[l].parse()?);
        }
        let setup = Setup::new(config(&setup_args)?, subject)?;
        let stem = Path::new(&r[t])
            .file_stem()
            .map_or("trial".into(), |s| s.to_string_lossy().into_owned());
        let dir = a.out.join(&stem);
        let options = OutputOptions {
            run: RunOptions::default(),
            plots: a.plots.formats(),
            no_report: a.plots.no_report,
        };
        let summary = pipeline::process_file(&trial_path, &setup, &dir, &options)?;
        ui.warnings(&stem, &summary.warnings);
        println!("{}", trial_line(&summary));
        if let Some(line) = gravline::synth::demo::event_error_line(
            &stem,
            &summary.figures,
            &demo_steps(&dir.join("steps.csv")),
        ) {
            println!("{line}");
        }
        pages.push(demo_row(
            pages.len() + 1,
            &stem,
            &summary,
            condition.as_deref(),
        )?);
    }
    if !a.plots.no_report {
        let page = a.out.join("report.html");
        gravline::batch::html::write_batch_report(&a.out, "", &pages)
            .with_context(|| format!("cannot write {}", page.display()))?;
    }
    ui.info(&format!(
        "outputs in {}/<trial>/ (frames.csv, summary.json, steps.csv, plots)",
        a.out.display()
    ));
    ui.info(&format!("caution: {}", CAUTIONS[0]));
    Ok(ExitCode::SUCCESS)
}

/// The (side, heel strike, toe-off) times of a `steps.csv` (none when it is absent).
fn demo_steps(path: &Path) -> Vec<(usize, f64, Option<f64>)> {
    let Ok(mut reader) = csv::Reader::from_path(path) else {
        return Vec::new();
    };
    reader
        .records()
        .flatten()
        .filter_map(|r| {
            let side = match r.get(0)? {
                "left" => 0,
                "right" => 1,
                _ => return None,
            };
            Some((side, r.get(1)?.parse().ok()?, r.get(2)?.parse().ok()))
        })
        .collect()
}

/// The demo trial's row of the summary table, for the demo's overview page.
fn demo_row(
    row: usize,
    id: &str,
    summary: &gravline::report::Summary,
    condition: Option<&str>,
) -> Result<gravline::batch::table::Row> {
    use gravline::batch::table::{Row, RowKey, StoredSummary};
    let stored = StoredSummary::from_json(&serde_json::to_string(summary)?)?;
    Ok(Row::ok(
        &RowKey {
            row,
            id,
            trial: id,
            subject: summary.subject.name.as_deref(),
            condition,
        },
        &stored,
    ))
}

#[derive(Args, Debug)]
struct BatchArgs {
    /// Manifest CSV (trial, subject, mass_kg, height_m, sex, [condition, config, ...]), or a
    /// folder whose *.csv and *.c3d files are the trials.
    input: PathBuf,
    /// Output folder.
    #[arg(long)]
    out: PathBuf,
    /// Configuration for every row without a `config` cell.
    #[arg(long)]
    config: Option<PathBuf>,
    /// Worker threads (default: one per core).
    #[arg(long)]
    jobs: Option<usize>,
    /// Run only part K of N: the trials at positions i (from 0) with i % N == K - 1.
    #[arg(long, value_name = "K/N", value_parser = gravline::batch::Shard::parse)]
    shard: Option<gravline::batch::Shard>,
    /// Skip trials whose outputs exist with the same input file and configuration hashes.
    #[arg(long)]
    resume: bool,
    /// For a folder: the subject of the trials that subjects.csv does not list.
    #[command(flatten)]
    subject: SubjectArgs,
    #[command(flatten)]
    plots: PlotArgs,
}

#[derive(Args, Debug)]
struct MergeArgs {
    /// Shard summaries written by `batch --shard` (Parquet or CSV).
    #[arg(required = true)]
    inputs: Vec<PathBuf>,
    /// Output folder.
    #[arg(long)]
    out: PathBuf,
}

fn batch(a: &BatchArgs, ui: &Ui) -> Result<ExitCode> {
    use gravline::batch::{self, ProgressMode};
    use std::io::IsTerminal;
    let base = config(&SetupArgs {
        config: a.config.clone(),
        ..SetupArgs::default()
    })?;
    let s = &a.subject;
    let given =
        s.subject.is_some() || s.mass_kg.is_some() || s.height_m.is_some() || s.sex.is_some();
    let plan = if a.input.is_dir() {
        let defaults = batch::DirectoryDefaults {
            subject: if given { Some(subject(s)?) } else { None },
        };
        batch::read_directory(&a.input, base, &defaults, &a.out)?
    } else {
        if given {
            bail!("--subject, --mass-kg, --height-m and --sex are for a folder; a manifest gives the subject per row");
        }
        batch::read_manifest(&a.input, base)?
    };
    let total = plan.jobs.len();
    let plan = match a.shard {
        Some(shard) => plan.shard(shard),
        None => plan,
    };
    let mode = if ui.quiet {
        ProgressMode::Quiet
    } else if std::io::stderr().is_terminal() {
        ProgressMode::Bar
    } else {
        ProgressMode::Lines
    };
    let progress = batch::Progress::new(plan.jobs.len(), mode);
    for w in &plan.warnings {
        progress.info(&format!("batch: warning: {w}"));
    }
    let part = a.shard.map_or(String::new(), |s| {
        format!(" (shard {}/{} of {total})", s.index, s.count)
    });
    progress.info(&format!(
        "batch: {} trials from {}{part}",
        plan.jobs.len(),
        plan.source
    ));
    let options = batch::BatchOptions {
        out_dir: a.out.clone(),
        jobs: a.jobs,
        shard: a.shard,
        resume: a.resume,
        output: OutputOptions {
            run: RunOptions::default(),
            plots: a.plots.formats(),
            no_report: a.plots.no_report,
        },
    };
    let outcome = batch::run(&plan, &options, &progress)?;
    ui.info(&outcome.describe());
    Ok(if outcome.failed > 0 {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    })
}

fn merge(a: &MergeArgs, ui: &Ui) -> Result<ExitCode> {
    let outcome = gravline::batch::merge(&a.inputs, &a.out)?;
    ui.info(&outcome.describe_merge());
    Ok(if outcome.failed > 0 {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    })
}

fn convert(a: &ConvertArgs, ui: &Ui) -> Result<ExitCode> {
    let origin = gravline::c3d::OriginSign::parse(&a.plate_origin).with_context(|| {
        format!(
            "--plate-origin `{}`: give auto, as-stored or negated",
            a.plate_origin
        )
    })?;
    let options = gravline::c3d::C3dOptions {
        plates: gravline::c3d::PlateOptions {
            origin,
            force_sign: gravline::c3d::ForceSign::parse(&a.plate_force).with_context(|| {
                format!("--plate-force `{}`: give reaction or action", a.plate_force)
            })?,
            ..Default::default()
        },
    };
    let c3d = gravline::c3d::read(&a.trial, &options)?;
    let stem = gravline::c3d::stem_of(&a.trial);
    ui.warnings(&stem, &c3d.warnings);
    let points = a.out.join(format!("{stem}.csv"));
    gravline::report::write_atomic(&points, |w| {
        gravline::c3d::convert::write_points_csv(&c3d, w)
    })
    .with_context(|| format!("cannot write {}", points.display()))?;
    ui.info(&format!(
        "{}: {} points, {} frames at {} Hz -> {}",
        a.trial.display(),
        c3d.labels.len(),
        c3d.n_frames(),
        c3d.rate_hz,
        points.display()
    ));
    if !c3d.plates.plates.is_empty() {
        let plates = a.out.join(format!("{stem}.plates.csv"));
        gravline::report::write_atomic(&plates, |w| {
            gravline::c3d::convert::write_plates_csv(&c3d, w)
        })
        .with_context(|| format!("cannot write {}", plates.display()))?;
        ui.info(&format!(
            "{} force plates at {} Hz -> {}",
            c3d.plates.plates.len(),
            c3d.plates.rate_hz,
            plates.display()
        ));
    }
    Ok(ExitCode::SUCCESS)
}
