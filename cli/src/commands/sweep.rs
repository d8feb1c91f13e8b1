//! `glaze sweep STUDY.toml`: every case of a study (wind speeds, directions,
//! ice cases, layouts), run and post-processed in parallel, skipping the
//! complete ones; `--shard I/N` or a Slurm array task runs one slice.

use super::CAUTION;
use glaze_study::{
    emit_slurm, load_study, run_sweep, BatchOptions, CaseEvent, Shard, StudyError, SweepOptions,
};
use indicatif::{ProgressBar, ProgressStyle};
use std::io::IsTerminal;
use std::path::Path;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex};

/// How a sweep ended, for the exit code.
pub enum SweepEnd {
    /// Every case of the shard is complete.
    Complete,
    /// Some cases failed (their `failed.json` says why).
    Failed,
    /// Stopped by a signal; rerun to finish.
    Stopped,
}

/// Runs `glaze sweep`.
pub fn sweep(
    file: &Path,
    shard: Option<&str>,
    jobs: usize,
    list: bool,
    quiet: bool,
) -> Result<SweepEnd, StudyError> {
    let study = load_study(file)?;
    let shard = match shard {
        Some(s) => Shard::parse(s)?,
        None => Shard::from_scheduler(|k| std::env::var(k).ok())?.unwrap_or(Shard::ALL),
    };
    if list {
        for (k, c) in study.cases.iter().enumerate() {
            if shard.holds(k) {
                out!("{}", c.id);
            }
        }
        return Ok(SweepEnd::Complete);
    }
    let stop = Arc::new(AtomicBool::new(false));
    {
        let stop = stop.clone();
        // The first signal stops every case at its next output interval (the
        // rerun redoes them); a second one exits at once.
        let _ = ctrlc::set_handler(move || {
            if stop.swap(true, Ordering::SeqCst) {
                std::process::exit(130);
            }
        });
    }
    let in_shard = (0..study.cases.len()).filter(|k| shard.holds(*k)).count();
    if !quiet {
        out!(
            "study \"{}\": {} cases, {} in shard {shard}; output {}",
            study.name,
            study.cases.len(),
            in_shard,
            study.out_dir.display()
        );
    }
    let bar = if quiet || !std::io::stderr().is_terminal() {
        None
    } else {
        let b = ProgressBar::new(in_shard as u64);
        b.set_style(
            ProgressStyle::with_template("{bar:40} {pos}/{len} cases {msg} [{elapsed_precise}, {eta} left]")
                .unwrap_or_else(|_| ProgressStyle::default_bar()),
        );
        Some(b)
    };
    let running = Mutex::new(Vec::<String>::new());
    let on_event = |e: CaseEvent| {
        let mut r = running.lock().unwrap_or_else(|p| p.into_inner());
        let line = match &e {
            CaseEvent::Started(id) => {
                r.push(id.clone());
                None
            }
            CaseEvent::Skipped(id) => Some(format!("{id}: complete, skipped")),
            CaseEvent::Finished(id, t) => {
                r.retain(|x| x != id);
                Some(format!("{id}: done in {t:.1} s"))
            }
            CaseEvent::Failed(id, why) => {
                r.retain(|x| x != id);
                Some(format!("{id}: FAILED: {why}"))
            }
        };
        match &bar {
            Some(b) => {
                if !matches!(e, CaseEvent::Started(_)) {
                    b.inc(1);
                }
                if let Some(l) = line {
                    b.println(l);
                }
                b.set_message(format!("running: {}", r.join(", ")));
            }
            None if !quiet => {
                if let Some(l) = line {
                    eprintln!("glaze sweep: {l}");
                }
            }
            None => {}
        }
    };
    let outcome = run_sweep(&study, &SweepOptions { shard, jobs }, &stop, &on_event)?;
    if let Some(b) = &bar {
        b.finish_and_clear();
    }
    if !quiet {
        out!(
            "{} cases run, {} already complete, {} failed, {} stopped (shard {shard} of study \"{}\")",
            outcome.ran.len(),
            outcome.skipped.len(),
            outcome.failed.len(),
            outcome.stopped.len(),
            study.name
        );
        for (id, why) in &outcome.failed {
            out!("  failed: {id}: {why}");
        }
        out!("compare the layouts with: glaze compare {}", study.out_dir.display());
        out!("{CAUTION}");
    }
    Ok(if !outcome.stopped.is_empty() {
        SweepEnd::Stopped
    } else if !outcome.failed.is_empty() {
        SweepEnd::Failed
    } else {
        SweepEnd::Complete
    })
}

/// Cluster schedulers `--emit-batch` writes scripts for.
#[derive(Clone, Copy, Debug, clap::ValueEnum)]
pub enum BatchKind {
    /// Slurm: an array job, a gather job after it, and a submit script.
    Slurm,
}

/// Settings of `--emit-batch`.
pub struct BatchSettings {
    /// Scheduler.
    pub kind: BatchKind,
    /// Cases per array task.
    pub cases_per_task: usize,
    /// CPUs per task.
    pub cpus_per_task: usize,
    /// Wall time per case on one CPU, minutes.
    pub minutes_per_case: Option<f64>,
    /// Extra `#SBATCH` lines.
    pub extra: Vec<String>,
}

/// Runs `glaze sweep --emit-batch`.
pub fn emit_batch(file: &Path, s: &BatchSettings, quiet: bool) -> Result<(), StudyError> {
    let study = load_study(file)?;
    let glaze = std::env::current_exe()
        .map_err(|e| StudyError::Internal(format!("cannot find the glaze binary: {e}")))?;
    let BatchKind::Slurm = s.kind;
    let options = BatchOptions {
        cases_per_task: s.cases_per_task,
        cpus_per_task: s.cpus_per_task,
        minutes_per_case: s.minutes_per_case,
        glaze,
        extra: s.extra.clone(),
    };
    let b = emit_slurm(&study, &options)?;
    if !quiet {
        out!(
            "study \"{}\": {} cases in {} array tasks of at most {} cases, {} CPU(s) each; {:.0} s per case on one CPU ({}), time limit {:.0} min per task",
            study.name,
            study.cases.len(),
            b.tasks,
            s.cases_per_task,
            s.cpus_per_task,
            b.per_case_s,
            if s.minutes_per_case.is_some() { "given" } else { "estimated from the model size" },
            b.time_limit_s / 60.0
        );
        out!("wrote {}", b.sweep.display());
        out!("wrote {}", b.gather.display());
        out!("wrote {}", b.submit.display());
        out!("submit both with: bash {}", b.submit.display());
    }
    Ok(())
}
