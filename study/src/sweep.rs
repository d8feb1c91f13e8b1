//! `glaze sweep`: runs the cases of a study shard in parallel (rayon), each
//! as `glaze run` then `glaze post` into its own folder. A case whose
//! `case.json` matches its current input and whose results file is
//! complete is skipped; any other case is cleared and run again. A case
//! that fails is recorded in `failed.json` and the others go on.

use crate::summary::{fnv1a, CaseSummary};
use crate::{write_atomic, Case, Shard, Study, StudyError};
use glaze_engine::analysis::dynamic_stage::run_dynamic;
use glaze_engine::results::ResultsWriter;
use glaze_engine::{input, ElementRegistry, GlazeError};
use glaze_report::{post_process, PostOptions, ResultsFile};
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::Instant;

/// Format name of `study.json`.
pub const STUDY_FORMAT: &str = "glaze-study";

/// Options of a sweep.
#[derive(Debug, Clone)]
pub struct SweepOptions {
    /// The slice of cases to run.
    pub shard: Shard,
    /// Cases run at once (0: one per core).
    pub jobs: usize,
}

/// What happened to one case.
#[derive(Debug, Clone)]
pub enum CaseEvent {
    /// A case starts.
    Started(String),
    /// A case was already complete.
    Skipped(String),
    /// A case finished, with its wall time in s.
    Finished(String, f64),
    /// A case failed, with the reason.
    Failed(String, String),
}

/// The outcome of a sweep.
#[derive(Debug, Clone, Default)]
pub struct SweepOutcome {
    /// Cases in the shard.
    pub in_shard: usize,
    /// Cases run now.
    pub ran: Vec<String>,
    /// Cases already complete.
    pub skipped: Vec<String>,
    /// Cases that failed, with the reason.
    pub failed: Vec<(String, String)>,
    /// Cases not run because the sweep was stopped.
    pub stopped: Vec<String>,
}

/// One case in `study.json`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ManifestCase {
    /// Case identifier (its folder under `cases/`).
    pub id: String,
    /// Layout.
    pub layout: String,
    /// Ice case.
    pub ice: String,
    /// Wind speed, m/s.
    pub wind_speed_m_s: f64,
    /// Wind direction, degrees.
    pub wind_direction_deg: f64,
    /// FNV-1a hash of the case input.
    pub input_hash: String,
}

/// `study.json`: the study's case list, so the comparison knows what is missing.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Manifest {
    /// Always [`STUDY_FORMAT`].
    pub format: String,
    /// Study name.
    pub name: String,
    /// Study file.
    pub study_file: String,
    /// Base input file.
    pub base: String,
    /// Every case of the study, in study order.
    pub cases: Vec<ManifestCase>,
}

impl Manifest {
    /// The manifest of `study`.
    pub fn of(study: &Study) -> Self {
        Self {
            format: STUDY_FORMAT.into(),
            name: study.name.clone(),
            study_file: study.file.display().to_string(),
            base: study.base.display().to_string(),
            cases: study
                .cases
                .iter()
                .map(|c| ManifestCase {
                    id: c.id.clone(),
                    layout: c.layout.clone(),
                    ice: c.ice.clone(),
                    wind_speed_m_s: c.wind_speed,
                    wind_direction_deg: c.wind_direction,
                    input_hash: fnv1a(&c.input),
                })
                .collect(),
        }
    }
}

/// Folder of case `id` in the study folder `out`.
pub fn case_dir(out: &Path, id: &str) -> PathBuf {
    out.join("cases").join(id)
}

/// Why a case failed, as `failed.json` keeps it.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct CaseFailure {
    /// Case identifier.
    pub id: String,
    /// `input`, `analysis`, `diverged` (the time integration; the report
    /// says where and why), `results`, `report` or `internal`.
    pub stage: String,
    /// The error message.
    pub message: String,
}

/// Whether the case in `dir` is complete for this input.
fn is_complete(dir: &Path, case: &Case) -> bool {
    let Ok(text) = std::fs::read_to_string(dir.join("case.json")) else { return false };
    let Ok(summary) = serde_json::from_str::<CaseSummary>(&text) else { return false };
    if summary.input_hash != fnv1a(&case.input) || summary.id != case.id {
        return false;
    }
    match ResultsFile::open(&dir.join("result.h5"), false) {
        Ok(f) => f.input_toml == case.input,
        Err(_) => false,
    }
}

fn clear(dir: &Path) {
    for f in ["case.json", "failed.json", "result.h5", "result.h5.partial"] {
        let _ = std::fs::remove_file(dir.join(f));
    }
    let _ = std::fs::remove_dir_all(dir.join("post"));
}

fn stage_of(e: &GlazeError) -> &'static str {
    match e {
        GlazeError::Input(_) => "input",
        GlazeError::Results { .. } => "results",
        GlazeError::Analysis { .. } => "analysis",
        GlazeError::Diverged { .. } => "diverged",
        GlazeError::Resume { .. } => "input",
    }
}

enum CaseResult {
    Done(f64),
    Failed(CaseFailure),
    Stopped,
}

fn run_case(case: &Case, out: &Path, stop: &AtomicBool) -> Result<CaseResult, StudyError> {
    let start = Instant::now();
    let registry = &ElementRegistry::with_builtin();
    let dir = case_dir(out, &case.id);
    std::fs::create_dir_all(&dir)
        .map_err(|e| StudyError::Output { path: dir.clone(), message: e.to_string() })?;
    clear(&dir);
    let input_path = dir.join("input.toml");
    write_atomic(&input_path, case.input.as_bytes())?;
    let fail = |stage: &str, message: String| {
        let f = CaseFailure { id: case.id.clone(), stage: stage.into(), message };
        let json = serde_json::to_string_pretty(&f).map_err(|e| StudyError::Internal(e.to_string()))?;
        write_atomic(&dir.join("failed.json"), json.as_bytes())?;
        Ok(CaseResult::Failed(f))
    };
    let spec = match input::load_str(&input_path, &case.input, registry) {
        Ok(s) => s,
        Err(e) => return fail("input", e.to_string()),
    };
    let results = dir.join("result.h5");
    let writer = match ResultsWriter::create(&results, &spec.source) {
        Ok(w) => w,
        Err(e) => return fail(stage_of(&e), e.to_string()),
    };
    let summary = match run_dynamic(&spec, registry, &writer, stop, &mut |_| {}) {
        Ok(s) => s,
        Err(GlazeError::Diverged { report }) => {
            // The records up to the divergence stay for inspection, marked incomplete.
            let kept = match writer.keep_incomplete(start.elapsed().as_secs_f64()) {
                Ok(_) => "records kept in result.h5.partial (marked incomplete)".to_string(),
                Err(e) => format!("the results could not be kept: {e}"),
            };
            return fail("diverged", format!("{report}\n  {kept}"));
        }
        Err(e) => {
            drop(writer);
            clear(&dir);
            return fail(stage_of(&e), e.to_string());
        }
    };
    if summary.interrupted {
        // Kept as `result.h5.partial`, marked incomplete: the comparison
        // names the case, and the next sweep runs it again.
        let _ = writer.keep_incomplete(start.elapsed().as_secs_f64());
        return Ok(CaseResult::Stopped);
    }
    if let Err(e) = writer.finish(start.elapsed().as_secs_f64()) {
        clear(&dir);
        return fail("results", e.to_string());
    }
    let options = PostOptions { out_dir: Some(dir.join("post")), allow_incomplete: false, xdmf: false };
    let outcome = match post_process(&results, &options) {
        Ok(o) => o,
        Err(e) => return fail("report", e.to_string()),
    };
    let s = CaseSummary::from_report(case, &outcome.report, summary.energy_balance_error, summary.steps);
    let json = serde_json::to_string_pretty(&s).map_err(|e| StudyError::Internal(e.to_string()))?;
    write_atomic(&dir.join("case.json"), json.as_bytes())?;
    Ok(CaseResult::Done(start.elapsed().as_secs_f64()))
}

/// Runs the cases of `options.shard` that are not complete. `stop` ends the
/// sweep at the next output interval of every running case (those cases
/// keep their records in `result.h5.partial`, marked incomplete, and count
/// as stopped); `on_event` hears of every case.
///
/// # Errors
/// [`StudyError`] when the study folder or a case folder cannot be written;
/// a failing case is not an error (see [`SweepOutcome::failed`]).
pub fn run_sweep(
    study: &Study,
    options: &SweepOptions,
    stop: &AtomicBool,
    on_event: &(dyn Fn(CaseEvent) + Sync),
) -> Result<SweepOutcome, StudyError> {
    let out = &study.out_dir;
    std::fs::create_dir_all(out.join("cases"))
        .map_err(|e| StudyError::Output { path: out.clone(), message: e.to_string() })?;
    let manifest = serde_json::to_string_pretty(&Manifest::of(study))
        .map_err(|e| StudyError::Internal(e.to_string()))?;
    write_atomic(&out.join("study.json"), manifest.as_bytes())?;

    let mine: Vec<&Case> =
        study.cases.iter().enumerate().filter(|(k, _)| options.shard.holds(*k)).map(|(_, c)| c).collect();
    let mut outcome = SweepOutcome { in_shard: mine.len(), ..Default::default() };
    let mut todo = Vec::new();
    for c in mine {
        if is_complete(&case_dir(out, &c.id), c) {
            on_event(CaseEvent::Skipped(c.id.clone()));
            outcome.skipped.push(c.id.clone());
        } else {
            todo.push(c);
        }
    }
    let jobs = if options.jobs == 0 {
        std::thread::available_parallelism().map_or(1, |n| n.get())
    } else {
        options.jobs
    };
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(jobs)
        .build()
        .map_err(|e| StudyError::Internal(format!("cannot start {jobs} worker threads: {e}")))?;
    let results: Vec<(String, Result<CaseResult, StudyError>)> = pool.install(|| {
        todo.par_iter()
            .with_max_len(1)
            .map(|c| {
                if stop.load(Ordering::SeqCst) {
                    return (c.id.clone(), Ok(CaseResult::Stopped));
                }
                on_event(CaseEvent::Started(c.id.clone()));
                // A fault of glaze in one case must not end the other cases of an overnight sweep.
                let r = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| run_case(c, out, stop)))
                    .unwrap_or_else(|p| {
                        let what = p
                            .downcast_ref::<String>()
                            .cloned()
                            .or_else(|| p.downcast_ref::<&str>().map(|s| s.to_string()))
                            .unwrap_or_else(|| "unknown".into());
                        let f = CaseFailure {
                            id: c.id.clone(),
                            stage: "internal".into(),
                            message: format!("glaze stopped on an internal fault ({what}); please report it"),
                        };
                        let dir = case_dir(out, &c.id);
                        clear(&dir);
                        if let Ok(json) = serde_json::to_string_pretty(&f) {
                            let _ = write_atomic(&dir.join("failed.json"), json.as_bytes());
                        }
                        Ok(CaseResult::Failed(f))
                    });
                match &r {
                    Ok(CaseResult::Done(t)) => on_event(CaseEvent::Finished(c.id.clone(), *t)),
                    Ok(CaseResult::Failed(f)) => on_event(CaseEvent::Failed(c.id.clone(), f.message.clone())),
                    Err(e) => on_event(CaseEvent::Failed(c.id.clone(), e.to_string())),
                    Ok(CaseResult::Stopped) => {}
                }
                (c.id.clone(), r)
            })
            .collect()
    });
    for (id, r) in results {
        match r? {
            CaseResult::Done(_) => outcome.ran.push(id),
            CaseResult::Failed(f) => outcome.failed.push((id, format!("{}: {}", f.stage, f.message))),
            CaseResult::Stopped => outcome.stopped.push(id),
        }
    }
    Ok(outcome)
}
