//! The cluster recipe under a real scheduler: a one-node Slurm cluster started on this machine
//! (munged, slurmctld and slurmd with a minimal `slurm.conf` written into a temporary folder),
//! `examples/slurm/array.sh` submitted as an array job of N tasks over a folder of synthetic
//! walks (`gravline::synth`, invented data), one task cancelled midway and submitted again,
//! then `gravline merge`; the merged summary, dataset and group curves must equal those of an
//! unsharded run.
//!
//! Needs Debian's `slurm-wlm` and `munge` and root (the daemons run as root here), so it is
//! ignored in the plain `cargo test`; `.ci/run` installs them and runs it with
//! `cargo test --test slurm_cluster -- --ignored`.

mod batch_common;
use batch_common::{read_csv, write};
use polars::prelude::*;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::{Duration, Instant};

/// Array tasks.
const TASKS: usize = 3;
/// Trials: five per task.
const TRIALS: usize = 15;

fn walk_csv(seed: u64) -> String {
    use gravline::synth::{self, Scenario, SynthOptions};
    let mut o = SynthOptions::for_scenario(Scenario::Walk);
    o.seed = seed;
    o.walk_speed_m_s = 1.0 + 0.1 * (seed % 4) as f64;
    let trial = synth::generate(Scenario::Walk, &o);
    let mut bytes = Vec::new();
    synth::write_wide_csv(&trial, "synthetic walk (gravline::synth)", &mut bytes).unwrap();
    String::from_utf8(bytes).unwrap()
}

/// A folder of walks with a `subjects.csv` spreading them over 3 subjects and 2 conditions.
fn trial_folder(dir: &Path) {
    let mut subjects = String::from("trial,subject,mass_kg,height_m,sex,condition\n");
    for i in 0..TRIALS {
        let name = format!("walk{i:02}.csv");
        write(&dir.join(&name), &walk_csv(i as u64 + 1));
        subjects.push_str(&format!(
            "{name},s{},70,1.75,male,{}\n",
            i % 3 + 1,
            ["normal", "dual_task"][i % 2]
        ));
    }
    write(&dir.join("subjects.csv"), &subjects);
}

/// Runs a command to its end; its stdout, or a panic with its stderr.
fn run(cmd: &mut Command) -> String {
    let out = cmd
        .output()
        .unwrap_or_else(|e| panic!("cannot run {cmd:?}: {e} (are slurm-wlm and munge installed?)"));
    assert!(
        out.status.success(),
        "{cmd:?}: {}\n{}",
        out.status,
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout).into_owned()
}

fn free_port() -> u16 {
    std::net::TcpListener::bind("127.0.0.1:0")
        .unwrap()
        .local_addr()
        .unwrap()
        .port()
}

/// A one-node cluster; stopped (daemons shut down) when dropped.
struct Cluster {
    dir: PathBuf,
    conf: PathBuf,
    socket: PathBuf,
}

impl Cluster {
    fn start(dir: &Path) -> Cluster {
        let host = run(Command::new("hostname").arg("-s")).trim().to_string();
        let munge = dir.join("munge");
        std::fs::create_dir_all(&munge).unwrap();
        let mut key = vec![0u8; 1024];
        use std::io::Read;
        std::fs::File::open("/dev/urandom")
            .and_then(|mut f| f.read_exact(&mut key))
            .unwrap();
        let key_file = munge.join("munge.key");
        std::fs::write(&key_file, key).unwrap();
        use std::os::unix::fs::PermissionsExt;
        std::fs::set_permissions(&key_file, std::fs::Permissions::from_mode(0o600)).unwrap();
        let socket = munge.join("socket");
        // --force: the temporary folder is not a folder munged would choose (world-writable
        // parents).
        run(Command::new("munged")
            .arg("--force")
            .arg(format!("--socket={}", socket.display()))
            .arg(format!("--key-file={}", key_file.display()))
            .arg(format!("--log-file={}", munge.join("log").display()))
            .arg(format!("--pid-file={}", munge.join("pid").display()))
            .arg(format!("--seed-file={}", munge.join("seed").display())));
        for sub in ["state", "spool"] {
            std::fs::create_dir_all(dir.join(sub)).unwrap();
        }
        let cpus = std::thread::available_parallelism().map_or(1, |n| n.get());
        let d = dir.display();
        let conf = dir.join("slurm.conf");
        let text = format!(
            "ClusterName=gravline-test\n\
             SlurmctldHost={host}(127.0.0.1)\n\
             SlurmUser=root\nSlurmdUser=root\n\
             SlurmctldPort={}\nSlurmdPort={}\n\
             AuthType=auth/munge\nAuthInfo=socket={}\nCredType=cred/munge\n\
             StateSaveLocation={d}/state\nSlurmdSpoolDir={d}/spool\n\
             SlurmctldPidFile={d}/slurmctld.pid\nSlurmdPidFile={d}/slurmd.pid\n\
             SlurmctldLogFile={d}/slurmctld.log\nSlurmdLogFile={d}/slurmd.log\n\
             ProctrackType=proctrack/linuxproc\nTaskPlugin=task/none\n\
             SchedulerType=sched/builtin\nSelectType=select/cons_tres\nSelectTypeParameters=CR_CPU\n\
             ReturnToService=2\nMpiDefault=none\nSwitchType=switch/none\n\
             JobAcctGatherType=jobacct_gather/none\nAccountingStorageType=accounting_storage/none\n\
             JobCompType=jobcomp/none\nMinJobAge=600\n\
             NodeName={host} NodeAddr=127.0.0.1 CPUs={cpus} State=UNKNOWN\n\
             PartitionName=main Nodes={host} Default=YES MaxTime=INFINITE State=UP\n",
            free_port(),
            free_port(),
            socket.display(),
        );
        std::fs::write(&conf, text).unwrap();
        let cluster = Cluster {
            dir: dir.to_path_buf(),
            conf,
            socket,
        };
        run(cluster.cmd("slurmctld").arg("-f").arg(&cluster.conf));
        run(cluster.cmd("slurmd").arg("-f").arg(&cluster.conf));
        // The node comes up idle within a few seconds.
        let start = Instant::now();
        loop {
            let state = cluster.out(cluster.cmd("sinfo").args(["-h", "-o", "%T"]));
            if state.trim() == "idle" {
                break;
            }
            assert!(
                start.elapsed() < Duration::from_secs(60),
                "the node did not come up (state `{}`); see {}",
                state.trim(),
                cluster.dir.display()
            );
            std::thread::sleep(Duration::from_millis(250));
        }
        cluster
    }

    fn cmd(&self, program: &str) -> Command {
        let mut c = Command::new(program);
        c.env("SLURM_CONF", &self.conf);
        c
    }

    /// Output of a command that may fail (empty then).
    fn out(&self, cmd: &mut Command) -> String {
        cmd.output()
            .map(|o| String::from_utf8_lossy(&o.stdout).into_owned())
            .unwrap_or_default()
    }

    /// Submits `examples/slurm/array.sh` as an array job; its job id.
    fn submit(&self, array: &str, input: &Path, out: &Path) -> String {
        let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/slurm/array.sh");
        let id = run(self
            .cmd("sbatch")
            .arg("--parsable")
            .arg(format!("--array={array}"))
            .arg(format!("--output={}/slurm-%A_%a.out", self.dir.display()))
            .arg(format!("--chdir={}", self.dir.display()))
            .env("GRAVLINE", env!("CARGO_BIN_EXE_gravline"))
            .arg(script)
            .arg(TASKS.to_string())
            .arg(input)
            .arg(out)
            .args(["--jobs", "1", "--no-plots"]));
        id.trim().split(';').next().unwrap_or_default().to_string()
    }

    /// The state of each task of a job: (task id, state), from `scontrol show job`.
    fn task_states(&self, job: &str) -> Vec<(String, String)> {
        let text = self.out(self.cmd("scontrol").args(["show", "job", "-o", job]));
        text.lines()
            .filter_map(|line| {
                let field = |name: &str| {
                    line.split_whitespace()
                        .find_map(|f| f.strip_prefix(name))
                        .map(str::to_string)
                };
                Some((field("ArrayTaskId=")?, field("JobState=")?))
            })
            .collect()
    }

    /// Waits until no task of a job is pending or running; the final states.
    fn wait(&self, job: &str) -> Vec<(String, String)> {
        let start = Instant::now();
        loop {
            let states = self.task_states(job);
            if !states.is_empty()
                && states.iter().all(|(_, s)| {
                    !matches!(
                        s.as_str(),
                        "PENDING" | "RUNNING" | "CONFIGURING" | "COMPLETING"
                    )
                })
            {
                return states;
            }
            assert!(
                start.elapsed() < Duration::from_secs(600),
                "job {job} did not finish: {states:?}"
            );
            std::thread::sleep(Duration::from_millis(200));
        }
    }
}

impl Drop for Cluster {
    fn drop(&mut self) {
        let _ = self.cmd("scontrol").arg("shutdown").output();
        let _ = Command::new("munged")
            .arg("--stop")
            .arg(format!("--socket={}", self.socket.display()))
            .output();
        // scontrol shutdown returns before the daemons have gone; wait for their pid files.
        let start = Instant::now();
        while start.elapsed() < Duration::from_secs(20)
            && ["slurmctld.pid", "slurmd.pid"]
                .iter()
                .any(|p| pid_alive(&self.dir.join(p)))
        {
            std::thread::sleep(Duration::from_millis(100));
        }
    }
}

fn pid_alive(pid_file: &Path) -> bool {
    std::fs::read_to_string(pid_file)
        .ok()
        .and_then(|p| p.trim().parse::<u32>().ok())
        .is_some_and(|pid| Path::new(&format!("/proc/{pid}")).exists())
}

/// The ids of the trials shard `k` of `TASKS` takes (folder order = file-name order).
fn shard_ids(k: usize) -> Vec<String> {
    (0..TRIALS)
        .filter(|i| i % TASKS == k - 1)
        .map(|i| format!("walk{i:02}"))
        .collect()
}

fn parquet_files(root: &Path) -> Vec<PathBuf> {
    fn walk(dir: &Path, root: &Path, out: &mut Vec<PathBuf>) {
        for e in std::fs::read_dir(dir).into_iter().flatten().flatten() {
            let p = e.path();
            if p.is_dir() {
                walk(&p, root, out);
            } else if p.extension().is_some_and(|e| e == "parquet") {
                out.push(p.strip_prefix(root).unwrap().to_path_buf());
            }
        }
    }
    let mut out = Vec::new();
    walk(root, root, &mut out);
    out.sort();
    out
}

fn frame(path: &Path) -> DataFrame {
    ParquetReader::new(std::fs::File::open(path).unwrap())
        .finish()
        .unwrap()
}

#[test]
#[ignore = "needs slurm-wlm, munge and root: starts a one-node Slurm cluster; run by .ci/run"]
fn an_array_job_with_a_cancelled_task_merges_to_the_unsharded_run() {
    let started = Instant::now();
    let tmp = tempfile::tempdir().unwrap();
    let input = tmp.path().join("trials");
    trial_folder(&input);
    // The reference: one unsharded run.
    let whole = tmp.path().join("whole");
    run(Command::new(env!("CARGO_BIN_EXE_gravline"))
        .arg("batch")
        .arg(&input)
        .arg("--out")
        .arg(&whole)
        .args(["--jobs", "2", "--no-plots", "-q"]));

    let cluster = Cluster::start(&tmp.path().join("cluster"));
    let out = tmp.path().join("out");
    let job = cluster.submit(&format!("1-{TASKS}"), &input, &out);
    // Task 2 is cancelled once it has finished its first trial, before its last. A trial is
    // finished when its `summary.json` is written (the last file a trial writes).
    let trials = out.join("trials");
    let finished_file = |id: &str| trials.join(id).join("summary.json");
    let done = |ids: &[String]| ids.iter().filter(|id| finished_file(id).is_file()).count();
    let ids2 = shard_ids(2);
    let wait_start = Instant::now();
    while done(&ids2) == 0 {
        assert!(
            wait_start.elapsed() < Duration::from_secs(300),
            "task 2 never finished a trial: {:?}",
            cluster.task_states(&job)
        );
        std::thread::sleep(Duration::from_millis(20));
    }
    run(cluster.cmd("scancel").arg(format!("{job}_2")));
    let states = cluster.wait(&job);
    let state_of = |k: &str| {
        states
            .iter()
            .find(|(t, _)| t == k)
            .map(|(_, s)| s.clone())
            .unwrap_or_default()
    };
    assert_eq!(state_of("2"), "CANCELLED", "{states:?}");
    assert_eq!(state_of("1"), "COMPLETED", "{states:?}");
    assert_eq!(state_of("3"), "COMPLETED", "{states:?}");
    let finished_before = done(&ids2);
    assert!(
        finished_before < ids2.len() && !out.join(format!("summary-2-of-{TASKS}.parquet")).exists(),
        "task 2 was cancelled midway ({finished_before} of {} trials done)",
        ids2.len()
    );
    let kept: Vec<(String, std::time::SystemTime)> = ids2
        .iter()
        .filter_map(|id| {
            let m = std::fs::metadata(finished_file(id)).ok()?;
            Some((id.clone(), m.modified().ok()?))
        })
        .collect();

    // Task 2 again: --resume keeps the trials it finished and runs the others.
    let again = cluster.submit("2", &input, &out);
    let states = cluster.wait(&again);
    assert!(states.iter().all(|(_, s)| s == "COMPLETED"), "{states:?}");
    for (id, modified) in &kept {
        let now = std::fs::metadata(finished_file(id))
            .and_then(|m| m.modified())
            .unwrap();
        assert_eq!(
            &now, modified,
            "{id} was finished before the cancel and kept"
        );
    }
    let shards: Vec<PathBuf> = (1..=TASKS)
        .map(|k| out.join(format!("summary-{k}-of-{TASKS}.parquet")))
        .collect();
    run(Command::new(env!("CARGO_BIN_EXE_gravline"))
        .arg("merge")
        .args(&shards)
        .arg("--out")
        .arg(&out));
    drop(cluster);

    for file in ["summary.csv", "groups.csv", "group_cycles.csv"] {
        assert_eq!(
            read_csv(&whole.join(file)),
            read_csv(&out.join(file)),
            "{file}"
        );
    }
    let files = parquet_files(&whole.join("dataset"));
    assert_eq!(files.len(), 2 * TRIALS);
    assert_eq!(files, parquet_files(&out.join("dataset")));
    for f in &files {
        let (a, b) = (
            frame(&whole.join("dataset").join(f)),
            frame(&out.join("dataset").join(f)),
        );
        assert!(a.equals_missing(&b), "{}", f.display());
    }
    eprintln!(
        "slurm test: {} trials, {TASKS} tasks, task 2 cancelled after {finished_before} of {} trials; wall time {:.1} s",
        TRIALS,
        ids2.len(),
        started.elapsed().as_secs_f64()
    );
}
