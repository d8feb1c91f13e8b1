//! A sharded study run as a Slurm array job on a real controller: this test
//! starts its own MUNGE daemon and a one-node Slurm cluster on localhost
//! (slurmctld and slurmd from Debian's `slurm-wlm`, installed by
//! `scripts/setup.sh`), submits the scripts of `glaze sweep --emit-batch
//! slurm`, cancels one array task in the middle of a case, resubmits, and
//! checks that the gathered results equal an unsharded local sweep bit for
//! bit. The daemons are stopped by their process ids at the end. If the
//! cluster cannot start, the test fails and says why; it never passes
//! without having run the jobs.

mod common;

use common::*;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::{Duration, Instant};

/// Six cases of about three seconds each: three layouts, two wind speeds.
const STUDY: &str = r#"duration = 60.0
[cases]
wind_speeds = [6.0, 10.0]
layouts = ["none", "spacer", "masses"]
"#;

/// Longest wait for any one stage of the jobs.
const PATIENCE: Duration = Duration::from_secs(300);

struct Cluster {
    dir: tempfile::TempDir,
    conf: PathBuf,
}

fn need(program: &str) -> PathBuf {
    for dir in ["/usr/sbin", "/usr/bin", "/usr/local/sbin", "/usr/local/bin"] {
        let p = Path::new(dir).join(program);
        if p.exists() {
            return p;
        }
    }
    panic!("{program} is not installed: run scripts/setup.sh (it installs Debian's slurm-wlm and munge)");
}

fn run_ok(cmd: &mut Command, what: &str) -> String {
    let o = cmd.output().unwrap_or_else(|e| panic!("{what}: cannot start ({e})"));
    assert!(o.status.success(), "{what} failed:\n{}", text(&o));
    String::from_utf8_lossy(&o.stdout).to_string()
}

impl Cluster {
    fn start() -> Self {
        let dir = tempfile::Builder::new().prefix("glaze-slurm-").tempdir().expect("temp dir");
        let d = dir.path().to_path_buf();
        let d = d.as_path();
        for sub in ["state", "spool"] {
            std::fs::create_dir_all(d.join(sub)).expect("folders");
        }
        let host = run_ok(Command::new("hostname").arg("-s"), "hostname -s").trim().to_string();
        let cpus = std::thread::available_parallelism().map_or(1, |n| n.get());
        // Ports of our own, away from a system cluster's 6817/6818.
        let port = 20000 + 2 * (std::process::id() % 5000);
        let key = d.join("munge.key");
        let bytes: Vec<u8> = (0..1024u32).map(|i| (i.wrapping_mul(2_654_435_761) >> 13) as u8).collect();
        std::fs::write(&key, bytes).expect("munge key");
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            std::fs::set_permissions(&key, std::fs::Permissions::from_mode(0o600)).expect("key mode");
        }
        let sock = d.join("munge.sock");
        let p = |name: &str| d.join(name).display().to_string();
        let conf = d.join("slurm.conf");
        std::fs::write(
            &conf,
            format!(
                "ClusterName=glazetest\nSlurmctldHost={host}\nSlurmUser=root\nSlurmdUser=root\n\
                 AuthType=auth/munge\nAuthInfo=socket={sock}\nCredType=cred/munge\n\
                 ProctrackType=proctrack/linuxproc\nTaskPlugin=task/none\nSelectType=select/cons_tres\n\
                 StateSaveLocation={state}\nSlurmdSpoolDir={spool}\n\
                 SlurmctldPidFile={cpid}\nSlurmdPidFile={dpid}\nSlurmctldLogFile={clog}\nSlurmdLogFile={dlog}\n\
                 SlurmctldPort={port}\nSlurmdPort={dport}\nReturnToService=2\nKillWait=5\nMinJobAge=3600\n\
                 MpiDefault=none\nJobAcctGatherType=jobacct_gather/none\nAccountingStorageType=accounting_storage/none\n\
                 NodeName={host} NodeAddr=127.0.0.1 CPUs={cpus} State=UNKNOWN\n\
                 PartitionName=glaze Nodes={host} Default=YES MaxTime=INFINITE State=UP\n",
                sock = sock.display(),
                state = p("state"),
                spool = p("spool"),
                cpid = p("slurmctld.pid"),
                dpid = p("slurmd.pid"),
                clog = p("slurmctld.log"),
                dlog = p("slurmd.log"),
                dport = port + 1,
            ),
        )
        .expect("slurm.conf");
        let cluster = Cluster { dir, conf };
        run_ok(
            Command::new(need("munged")).args([
                "--force",
                &format!("--key-file={}", key.display()),
                &format!("--socket={}", sock.display()),
                &format!("--pid-file={}", p("munged.pid")),
                &format!("--log-file={}", p("munged.log")),
                &format!("--seed-file={}", p("munged.seed")),
            ]),
            "munged",
        );
        run_ok(Command::new(need("slurmctld")).arg("-f").arg(&cluster.conf), "slurmctld");
        run_ok(Command::new(need("slurmd")).arg("-f").arg(&cluster.conf), "slurmd");
        let start = Instant::now();
        loop {
            let o = cluster.cmd("sinfo").args(["-h", "-o", "%t"]).output().expect("sinfo");
            let state = String::from_utf8_lossy(&o.stdout).trim().to_string();
            if state == "idle" {
                break;
            }
            assert!(
                start.elapsed() < Duration::from_secs(60),
                "the test cluster did not come up (node state `{state}`):\n{}",
                cluster.logs()
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

    fn logs(&self) -> String {
        let mut s = String::new();
        for f in ["slurmctld.log", "slurmd.log", "munged.log"] {
            let t = std::fs::read_to_string(self.dir.path().join(f)).unwrap_or_default();
            let tail: Vec<&str> = t.lines().rev().take(15).collect();
            s += &format!("--- {f}\n{}\n", tail.into_iter().rev().collect::<Vec<_>>().join("\n"));
        }
        s
    }

    /// `JobState` of every task of job `id`.
    fn states(&self, id: &str) -> Vec<String> {
        let o = self.cmd("scontrol").args(["show", "job", id, "-o"]).output().expect("scontrol");
        String::from_utf8_lossy(&o.stdout)
            .lines()
            .filter_map(|l| {
                l.split_whitespace().find_map(|w| w.strip_prefix("JobState=")).map(str::to_string)
            })
            .collect()
    }

    fn wait_for(&self, what: &str, done: impl Fn() -> bool) {
        let start = Instant::now();
        while !done() {
            if start.elapsed() > PATIENCE {
                let q = self.cmd("squeue").output().map(|o| text(&o)).unwrap_or_default();
                panic!("timed out waiting for {what}\nsqueue:\n{q}\n{}", self.logs());
            }
            std::thread::sleep(Duration::from_millis(200));
        }
    }

    /// Submits the study's scripts; returns (array job, gather job).
    fn submit(&self, submit: &Path) -> (String, String) {
        let out = run_ok(self.cmd("bash").arg(submit), "submit.sh");
        // "array job N (3 tasks), gather job M"
        let words: Vec<&str> = out.split_whitespace().collect();
        let array = words.get(2).expect("array job id").to_string();
        let gather = words.last().expect("gather job id").to_string();
        (array, gather)
    }
}

impl Drop for Cluster {
    fn drop(&mut self) {
        for pid_file in ["slurmd.pid", "slurmctld.pid", "munged.pid"] {
            if let Ok(pid) = std::fs::read_to_string(self.dir.path().join(pid_file)) {
                let _ = Command::new("kill").arg(pid.trim()).status();
            }
        }
        std::thread::sleep(Duration::from_millis(500));
    }
}

fn finished(states: &[String]) -> bool {
    !states.is_empty()
        && states.iter().all(|s| !matches!(s.as_str(), "PENDING" | "RUNNING" | "CONFIGURING" | "COMPLETING"))
}

#[test]
fn array_job_with_a_cancelled_task_resubmitted_equals_a_local_sweep() {
    let cluster = Cluster::start();
    let work = tempfile::tempdir().expect("temp dir");
    let study = write_study(work.path(), "cluster", "cluster_out", STUDY);
    let out = work.path().join("cluster_out");
    let o = glaze(&[
        "sweep",
        study.to_str().unwrap(),
        "--emit-batch",
        "slurm",
        "--cases-per-task",
        "2",
        "--cpus-per-task",
        "1",
        "--minutes-per-case",
        "2",
    ]);
    assert!(o.status.success(), "{}", text(&o));
    let submit = out.join("slurm/submit.sh");
    let script = std::fs::read_to_string(out.join("slurm/sweep.sbatch")).expect("sweep.sbatch");
    assert!(script.contains("#SBATCH --array=1-3"), "{script}");

    // Task 2's cases, and the one it starts with.
    let o = glaze(&["sweep", study.to_str().unwrap(), "--list", "--shard", "2/3"]);
    let shard2: Vec<String> = String::from_utf8_lossy(&o.stdout).lines().map(str::to_string).collect();
    assert_eq!(shard2.len(), 2);

    let (array, gather) = cluster.submit(&submit);
    let first = out.join("cases").join(&shard2[0]);
    cluster.wait_for("task 2 to be in the middle of its first case", || {
        first.join("result.h5.partial").exists() && !first.join("case.json").exists()
    });
    run_ok(cluster.cmd("scancel").arg(format!("{array}_2")), "scancel of task 2");
    cluster.wait_for("the array to end", || finished(&cluster.states(&array)));
    let states = cluster.states(&array);
    assert_eq!(states.iter().filter(|s| *s == "COMPLETED").count(), 2, "{states:?}");
    // The gather job waits on a dependency that can no longer hold.
    run_ok(cluster.cmd("scancel").arg(&gather), "scancel of the gather job");

    let o = glaze(&["compare", out.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(6), "{}", text(&o));
    let md = std::fs::read_to_string(out.join("compare.md")).expect("compare.md");
    assert!(md.contains(&format!("`{}`: incomplete", shard2[0])), "{md}");
    assert!(md.contains(&format!("`{}`: missing", shard2[1])), "{md}");
    assert_eq!(complete_ids(&out).len(), 4);

    let (array, gather) = cluster.submit(&submit);
    cluster.wait_for("the resubmitted array and its gather job", || {
        finished(&cluster.states(&array)) && finished(&cluster.states(&gather))
    });
    assert!(
        cluster.states(&array).iter().all(|s| s == "COMPLETED"),
        "{:?}\n{}",
        cluster.states(&array),
        cluster.logs()
    );
    assert_eq!(cluster.states(&gather), ["COMPLETED"], "{}", cluster.logs());
    let log = |task: &str| {
        std::fs::read_to_string(out.join(format!("slurm/logs/sweep_{array}_{task}.err"))).unwrap_or_default()
            + &std::fs::read_to_string(out.join(format!("slurm/logs/sweep_{array}_{task}.out")))
                .unwrap_or_default()
    };
    for task in ["1", "3"] {
        assert!(log(task).contains("0 cases run, 2 already complete"), "task {task}:\n{}", log(task));
    }
    assert!(log("2").contains("2 cases run, 0 already complete"), "task 2:\n{}", log("2"));
    let gathered =
        std::fs::read_to_string(out.join(format!("slurm/logs/compare_{gather}.out"))).expect("gather log");
    assert!(gathered.contains("6 cases, 6 complete"), "{gathered}");

    let local = write_study(work.path(), "local", "local_out", STUDY);
    let o = glaze(&["sweep", local.to_str().unwrap(), "--jobs", "2"]);
    assert!(o.status.success(), "{}", text(&o));
    assert_same_cases(&out, &work.path().join("local_out"));
}
