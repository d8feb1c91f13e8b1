//! Batch scripts for running a study on a cluster (`glaze sweep STUDY.toml
//! --emit-batch slurm`): an array job whose every task runs one shard of
//! the cases with `glaze sweep` (the shard comes from the Slurm array
//! variables), a gather job that runs `glaze compare` after the whole
//! array succeeded (`--dependency=afterok`), and a submit script that
//! queues both. Nothing here talks to the scheduler; the scripts are plain
//! text for `sbatch`.

use crate::{write_atomic, Study, StudyError};
use glaze_engine::{model, ElementRegistry};
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

/// Wall time per degree of freedom and time step on one core, s: measured
/// on the demo section (about 15 k DOF, 1 500 steps in about 30 s, see
/// docs/benchmarks.md), rounded up.
const SECONDS_PER_DOF_STEP: f64 = 1.5e-6;
/// Safety factor on the estimate (common practice for batch time limits).
const TIME_FACTOR: f64 = 3.0;
/// Time added to every task for start-up, static state and the report, s.
const TASK_OVERHEAD_S: f64 = 300.0;

/// Settings of the emitted scripts.
#[derive(Debug, Clone)]
pub struct BatchOptions {
    /// Cases per array task (at least 1).
    pub cases_per_task: usize,
    /// CPUs per task, passed to `glaze sweep --jobs`.
    pub cpus_per_task: usize,
    /// Wall time per case on one CPU, minutes (`None`: estimated from the model).
    pub minutes_per_case: Option<f64>,
    /// The glaze binary the tasks run.
    pub glaze: PathBuf,
    /// Extra `#SBATCH` lines (partition, account), as given.
    pub extra: Vec<String>,
}

/// What was written.
#[derive(Debug, Clone)]
pub struct BatchScripts {
    /// Array tasks.
    pub tasks: usize,
    /// Time limit per task, s.
    pub time_limit_s: f64,
    /// Estimated wall time per case on one CPU, s.
    pub per_case_s: f64,
    /// The array-job script.
    pub sweep: PathBuf,
    /// The gather-job script.
    pub gather: PathBuf,
    /// The script that submits both.
    pub submit: PathBuf,
}

/// Estimated wall time of the slowest case on one CPU, s: DOF × steps ×
/// [`SECONDS_PER_DOF_STEP`], the DOF from building the model of each case.
pub fn estimate_case_seconds(study: &Study) -> Result<f64, StudyError> {
    let registry = ElementRegistry::with_builtin();
    let mut worst: f64 = 0.0;
    let mut seen = Vec::new();
    for c in &study.cases {
        // Cases of one layout and ice share a model; wind changes no DOF.
        if seen.contains(&(c.layout.as_str(), c.ice.as_str())) {
            continue;
        }
        seen.push((c.layout.as_str(), c.ice.as_str()));
        let spec = glaze_engine::input::load_str(&study.base, &c.input, &registry)?;
        let m = model::build(&spec, &registry)?;
        let steps = spec.dynamics.as_ref().map_or(0.0, |d| (d.duration / d.time_step).ceil());
        worst = worst.max(6.0 * m.nodes.len() as f64 * steps * SECONDS_PER_DOF_STEP);
    }
    Ok(worst)
}

/// `HH:MM:SS` for Slurm's `--time`.
fn hms(seconds: f64) -> String {
    let s = seconds.ceil().max(60.0) as u64;
    format!("{:02}:{:02}:{:02}", s / 3600, (s / 60) % 60, s % 60)
}

fn quote(p: &Path) -> String {
    format!("'{}'", p.display().to_string().replace('\'', r"'\''"))
}

/// Writes `slurm/sweep.sbatch`, `slurm/gather.sbatch` and `slurm/submit.sh`
/// into the study's output folder.
///
/// # Errors
/// [`StudyError`] when a case's model cannot be built for the estimate or
/// a script cannot be written.
pub fn emit_slurm(study: &Study, o: &BatchOptions) -> Result<BatchScripts, StudyError> {
    if o.cases_per_task == 0 || o.cpus_per_task == 0 {
        return Err(StudyError::Shard("--cases-per-task and --cpus-per-task must be at least 1".into()));
    }
    let n = study.cases.len();
    let tasks = n.div_ceil(o.cases_per_task).max(1);
    let per_case_s = match o.minutes_per_case {
        Some(m) if m.is_finite() && m > 0.0 => 60.0 * m,
        Some(m) => return Err(StudyError::Shard(format!("--minutes-per-case {m}: give a positive time"))),
        None => estimate_case_seconds(study)?,
    };
    // Case k goes to task k mod tasks: a task holds at most ceil(n / tasks) cases.
    let rounds = n.div_ceil(tasks).div_ceil(o.cpus_per_task);
    let time_limit_s = TIME_FACTOR * per_case_s * rounds as f64 + TASK_OVERHEAD_S;
    let dir = study.out_dir.join("slurm");
    let logs = dir.join("logs");
    std::fs::create_dir_all(&logs)
        .map_err(|e| StudyError::Output { path: logs.clone(), message: e.to_string() })?;
    let name: String =
        study.name.chars().map(|c| if c.is_ascii_alphanumeric() { c } else { '_' }).take(24).collect();
    let study_file = study.file.canonicalize().unwrap_or_else(|_| study.file.clone());
    let mut sweep = String::new();
    let _ = writeln!(sweep, "#!/bin/bash");
    let _ = writeln!(
        sweep,
        "# Array job of study \"{}\": {n} cases over {tasks} tasks.",
        study.name.replace('\n', " ")
    );
    let _ = writeln!(sweep, "# Written by `glaze sweep --emit-batch slurm`; each task runs the shard");
    let _ = writeln!(sweep, "# of its array index (case k goes to task k mod {tasks}).");
    let _ = writeln!(sweep, "#SBATCH --job-name=glaze_{name}");
    let _ = writeln!(sweep, "#SBATCH --array=1-{tasks}");
    let _ = writeln!(sweep, "#SBATCH --ntasks=1");
    let _ = writeln!(sweep, "#SBATCH --cpus-per-task={}", o.cpus_per_task);
    let _ = writeln!(
        sweep,
        "#SBATCH --time={}   # {:.0} s per case (estimate ×{TIME_FACTOR}) + {TASK_OVERHEAD_S:.0} s",
        hms(time_limit_s),
        per_case_s
    );
    let _ = writeln!(sweep, "#SBATCH --output={}/sweep_%A_%a.out", logs.display());
    let _ = writeln!(sweep, "#SBATCH --error={}/sweep_%A_%a.err", logs.display());
    for e in &o.extra {
        let _ = writeln!(sweep, "#SBATCH {e}");
    }
    let _ = writeln!(sweep, "set -euo pipefail");
    let _ = writeln!(sweep, "export RAYON_NUM_THREADS=\"${{SLURM_CPUS_PER_TASK:-{}}}\"", o.cpus_per_task);
    let _ = writeln!(
        sweep,
        "exec {} sweep {} --jobs \"$RAYON_NUM_THREADS\"",
        quote(&o.glaze),
        quote(&study_file)
    );

    let mut gather = String::new();
    let _ = writeln!(gather, "#!/bin/bash");
    let _ = writeln!(
        gather,
        "# Gather job of study \"{}\": runs after every array task succeeded.",
        study.name.replace('\n', " ")
    );
    let _ = writeln!(gather, "# `glaze compare` names missing or failed cases and exits 6 if there are any.");
    let _ = writeln!(gather, "#SBATCH --job-name=glaze_{name}_compare");
    let _ = writeln!(gather, "#SBATCH --ntasks=1");
    let _ = writeln!(gather, "#SBATCH --cpus-per-task=1");
    let _ = writeln!(gather, "#SBATCH --time=00:30:00");
    let _ = writeln!(gather, "#SBATCH --output={}/compare_%j.out", logs.display());
    let _ = writeln!(gather, "#SBATCH --error={}/compare_%j.err", logs.display());
    for e in &o.extra {
        let _ = writeln!(gather, "#SBATCH {e}");
    }
    let _ = writeln!(gather, "set -euo pipefail");
    let _ = writeln!(gather, "exec {} compare {}", quote(&o.glaze), quote(&study.out_dir));

    let sweep_path = dir.join("sweep.sbatch");
    let gather_path = dir.join("gather.sbatch");
    let mut submit = String::new();
    let _ = writeln!(submit, "#!/bin/bash");
    let _ = writeln!(submit, "# Queues the array job, then the gather job after it (afterok).");
    let _ = writeln!(submit, "set -euo pipefail");
    let _ = writeln!(submit, "array=$(sbatch --parsable {})", quote(&sweep_path));
    let _ = writeln!(submit, "array=${{array%%;*}}");
    let _ = writeln!(
        submit,
        "gather=$(sbatch --parsable --dependency=afterok:\"$array\" {})",
        quote(&gather_path)
    );
    let _ = writeln!(submit, "gather=${{gather%%;*}}");
    let _ = writeln!(submit, "echo \"array job $array ({tasks} tasks), gather job $gather\"");
    let submit_path = dir.join("submit.sh");
    for (path, text) in [(&sweep_path, &sweep), (&gather_path, &gather), (&submit_path, &submit)] {
        write_atomic(path, text.as_bytes())?;
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            let _ = std::fs::set_permissions(path, std::fs::Permissions::from_mode(0o755));
        }
    }
    Ok(BatchScripts {
        tasks,
        time_limit_s,
        per_case_s,
        sweep: sweep_path,
        gather: gather_path,
        submit: submit_path,
    })
}

#[cfg(test)]
mod tests {
    use super::hms;

    #[test]
    fn time_limits_are_slurm_clock_times() {
        assert_eq!(hms(3725.2), "01:02:06");
        assert_eq!(hms(5.0), "00:01:00");
        assert_eq!(hms(90000.0), "25:00:00");
    }
}
