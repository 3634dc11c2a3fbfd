//! Command-line conventions: folder batches, one spelling rule for sex, error messages, help
//! examples, version, completions, and the README's commands.

use assert_cmd::Command;
use std::path::{Path, PathBuf};

fn gravline() -> Command {
    Command::cargo_bin("gravline").unwrap()
}

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn data(name: &str) -> PathBuf {
    root().join("examples/data").join(name)
}

fn rows(path: &Path) -> Vec<std::collections::HashMap<String, String>> {
    let mut r = csv::Reader::from_path(path).unwrap();
    let headers = r.headers().unwrap().clone();
    r.records()
        .map(|rec| {
            let rec = rec.unwrap();
            headers
                .iter()
                .zip(rec.iter())
                .map(|(h, v)| (h.to_string(), v.to_string()))
                .collect()
        })
        .collect()
}

/// A folder with trials, a manifest and a subject file beside them: the manifest is not a trial,
/// and `subject` is filled from `--subject` (the file's stem).
#[test]
fn a_folder_batch_skips_its_manifest_and_names_the_given_subject() {
    let dir = tempfile::tempdir().unwrap();
    let trials = dir.path().join("trials");
    std::fs::create_dir(&trials).unwrap();
    for f in ["walk.csv", "stand.csv", "manifest.csv"] {
        std::fs::copy(data(f), trials.join(f)).unwrap();
    }
    let out = dir.path().join("out");
    gravline()
        .arg("batch")
        .arg(&trials)
        .arg("--subject")
        .arg(data("maren.toml"))
        .args(["-q", "--no-plots", "--out"])
        .arg(&out)
        .assert()
        .code(0);
    let table = rows(&out.join("summary.csv"));
    let trials: Vec<&str> = table.iter().map(|r| r["trial"].as_str()).collect();
    assert_eq!(trials, ["stand.csv", "walk.csv"]);
    assert!(table
        .iter()
        .all(|r| r["subject"] == "maren" && r["status"] == "ok"));
}

/// Sex: `female` / `male` or `f` / `m`, any case, in a subject file, a manifest and on the
/// command line alike; anything else is rejected with the rule.
#[test]
fn sex_is_spelt_one_way_everywhere() {
    let dir = tempfile::tempdir().unwrap();
    let subject = dir.path().join("s.toml");
    std::fs::write(&subject, "mass_kg = 63.0\nheight_m = 1.68\nsex = \"F\"\n").unwrap();
    gravline()
        .arg("trial")
        .arg(data("stand.csv"))
        .arg("--subject")
        .arg(&subject)
        .args(["-q", "--no-plots", "--out"])
        .arg(dir.path().join("a"))
        .assert()
        .code(0);
    gravline()
        .arg("trial")
        .arg(data("stand.csv"))
        .args(["--mass-kg", "63", "--height-m", "1.68", "--sex", "F"])
        .args(["-q", "--no-plots", "--out"])
        .arg(dir.path().join("b"))
        .assert()
        .code(0);
    let manifest = dir.path().join("m.csv");
    std::fs::copy(data("stand.csv"), dir.path().join("stand.csv")).unwrap();
    std::fs::write(
        &manifest,
        "trial,subject,mass_kg,height_m,sex\nstand.csv,maren,63,1.68,Female\nstand.csv,noa,64.5,1.72,m\n",
    )
    .unwrap();
    gravline()
        .arg("batch")
        .arg(&manifest)
        .args(["-q", "--no-plots", "--out"])
        .arg(dir.path().join("c"))
        .assert()
        .code(0);
    std::fs::write(&subject, "mass_kg = 63.0\nheight_m = 1.68\nsex = \"x\"\n").unwrap();
    let out = gravline()
        .arg("trial")
        .arg(data("stand.csv"))
        .arg("--subject")
        .arg(&subject)
        .args(["-q", "--no-plots", "--out"])
        .arg(dir.path().join("d"))
        .assert()
        .code(2);
    let err = String::from_utf8_lossy(&out.get_output().stderr).to_string();
    assert!(err.contains("female or male (or f / m, any case)"), "{err}");
}

/// A re-run into the same folder removes the outputs it no longer produces: the squat run with
/// its bar writes reps.csv and lift.png; run again without the load configuration, neither is
/// left beside the new summary.
#[test]
fn a_rerun_removes_outputs_it_no_longer_writes() {
    let out = tempfile::tempdir().unwrap();
    let run = |config: Option<PathBuf>| {
        let mut c = gravline();
        c.arg("trial")
            .arg(data("squat.csv"))
            .arg("--subject")
            .arg(data("tobin.toml"))
            .arg("-q")
            .arg("--out")
            .arg(out.path());
        if let Some(config) = config {
            c.arg("--config").arg(config);
        }
        c.assert().code(0);
    };
    run(Some(data("squat-config.toml")));
    let dir = out.path().join("squat");
    assert!(dir.join("reps.csv").is_file() && dir.join("lift.png").is_file());
    run(None);
    assert!(!dir.join("reps.csv").exists() && !dir.join("lift.png").exists());
    assert!(dir.join("summary.json").is_file() && dir.join("series.png").is_file());
    // Numbers with the precision they carry: 1200 frames of 0.01 s with a BoS are 12 s, not
    // the 11.999999999999998 of their floating-point sum.
    let summary = std::fs::read_to_string(dir.join("summary.json")).unwrap();
    assert!(summary.contains("\"time_with_bos_s\": 12.0"), "{summary}");
    assert!(!summary.contains("99999999999"), "{summary}");
}

/// Errors: one prefix (`error:`, as the argument parser's own), the OS error once, and the fix.
#[test]
fn errors_have_one_prefix_the_os_error_once_and_the_fix() {
    let run = |args: &[&str]| {
        let out = gravline().args(args).current_dir(root()).assert().code(2);
        String::from_utf8_lossy(&out.get_output().stderr).to_string()
    };
    let subject = ["--mass-kg", "70", "--height-m", "1.75", "--sex", "male"];
    let missing = run(&[&["trial", "nothere.csv"][..], &subject].concat());
    assert!(missing.starts_with("error: "), "{missing}");
    assert_eq!(missing.matches("os error 2").count(), 1, "{missing}");
    assert!(missing.contains("check the path"), "{missing}");
    let folder = run(&[&["trial", "examples/data"][..], &subject].concat());
    assert!(folder.starts_with("error: "), "{folder}");
    assert!(
        folder.contains("use `gravline batch examples/data --out DIR`"),
        "{folder}"
    );
    let usage = run(&["trial"]);
    assert!(usage.starts_with("error: "), "{usage}");
}

/// Every command's help has examples; -q and -v are apart, as global options.
#[test]
fn every_help_has_examples_and_the_global_options_apart() {
    for command in [
        "trial",
        "cutoff",
        "tables",
        "landmarks",
        "config",
        "demo",
        "batch",
        "merge",
        "completions",
        "man",
    ] {
        let out = gravline().args([command, "--help"]).assert().code(0);
        let help = String::from_utf8_lossy(&out.get_output().stdout).to_string();
        assert!(help.contains("Examples:\n  gravline "), "{command}: {help}");
        let global = help.find("Global options:").expect(command);
        assert!(help[global..].contains("--quiet") && help[global..].contains("--verbose"));
        assert!(!help[..global].contains("--quiet"), "{command}: {help}");
    }
}

/// `--version` names the commit and the build date; completions and the man page come from the
/// command line's definition.
#[test]
fn version_completions_and_man_page() {
    let out = gravline().arg("--version").assert().code(0);
    let version = String::from_utf8_lossy(&out.get_output().stdout).to_string();
    assert!(version.starts_with(&format!("gravline {} (commit ", env!("CARGO_PKG_VERSION"))));
    let date = version
        .split("built ")
        .nth(1)
        .unwrap()
        .trim()
        .trim_end_matches(')');
    assert_eq!(date.len(), 10, "{version}");
    assert!(
        date.as_bytes()[4] == b'-' && date.as_bytes()[7] == b'-',
        "{version}"
    );
    for shell in ["bash", "zsh", "fish"] {
        let out = gravline().args(["completions", shell]).assert().code(0);
        let script = String::from_utf8_lossy(&out.get_output().stdout).to_string();
        assert!(
            script.contains("gravline") && script.contains("batch"),
            "{shell}"
        );
    }
    let out = gravline().arg("man").assert().code(0);
    let man = String::from_utf8_lossy(&out.get_output().stdout).to_string();
    assert!(
        man.contains(".TH gravline 1") && man.contains("trial"),
        "{man}"
    );
}

/// `cutoff` ends with the lines to put in the configuration, and they parse as one.
#[test]
fn cutoff_ends_with_the_configuration_line() {
    let out = gravline()
        .args(["cutoff", "examples/data/walk.csv"])
        .current_dir(root())
        .assert()
        .code(0);
    let text = String::from_utf8_lossy(&out.get_output().stdout).to_string();
    let tail: Vec<&str> = text.lines().rev().take(2).collect();
    assert!(
        tail[0].starts_with("cutoff_hz = ") && tail[1] == "[filter]",
        "{text}"
    );
    let toml = format!("{}\n{}\n", tail[1], tail[0]);
    let raw = gravline::config::RawConfig::from_toml(&toml, "cutoff").unwrap();
    let config = gravline::config::Config::from_raw(&raw, "cutoff").unwrap();
    assert!(config.cutoff_hz.unwrap() > 0.0);
}

/// Every command line of the README's `sh` blocks (quick start and examples) runs and exits 0,
/// in a folder holding a copy of `examples/data/`: `cargo run --release --` and `gravline` are
/// the binary under test, a `> FILE` redirection takes its standard output, `# ...` is a
/// comment. `cargo test` and `cargo bench` are the project's own commands, not gravline's, and
/// are left out (this test runs inside the first).
#[test]
fn every_readme_command_line_runs() {
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let mut lines = Vec::new();
    let mut in_sh = false;
    for line in readme.lines() {
        if line.starts_with("```") {
            in_sh = line == "```sh";
            continue;
        }
        if in_sh {
            lines.push(line.split(" #").next().unwrap().trim().to_string());
        }
    }
    let work = tempfile::tempdir().unwrap();
    let data_copy = work.path().join("examples/data");
    std::fs::create_dir_all(&data_copy).unwrap();
    for entry in std::fs::read_dir(data("")).unwrap() {
        let entry = entry.unwrap();
        std::fs::copy(entry.path(), data_copy.join(entry.file_name())).unwrap();
    }
    let mut ran = 0;
    for line in lines.iter().filter(|l| !l.is_empty()) {
        let (command, redirect) = match line.split_once(" > ") {
            Some((c, file)) => (c.trim(), Some(file.trim())),
            None => (line.as_str(), None),
        };
        let args: Vec<&str> = if let Some(rest) = command.strip_prefix("cargo run --release --") {
            rest.split_whitespace().collect()
        } else if let Some(rest) = command.strip_prefix("gravline") {
            rest.split_whitespace().collect()
        } else {
            // `sbatch` is the scheduler's; the recipe it submits runs in tests/slurm_cluster.rs.
            assert!(
                command.starts_with("cargo test")
                    || command.starts_with("cargo bench")
                    || command.starts_with("sbatch"),
                "README line neither gravline nor cargo's: {line}"
            );
            continue;
        };
        let out = gravline()
            .args(&args)
            .current_dir(work.path())
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "`{line}` failed: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        if let Some(file) = redirect {
            assert!(!out.stdout.is_empty(), "`{line}` printed nothing");
            std::fs::write(work.path().join(file), &out.stdout).unwrap();
        }
        ran += 1;
    }
    assert!(ran >= 10, "only {ran} README command lines found");
    // What the quick start promises is there.
    for path in [
        "gravline-demo/walk/summary.json",
        "out/walk/summary.json",
        "results/summary.csv",
        "merged/groups.csv",
    ] {
        assert!(work.path().join(path).is_file(), "{path}");
    }
}
