//! `glaze run FILE --out RESULT.h5 [--resume]`: static state, then the
//! nonlinear time simulation with histories streamed to the results file,
//! checkpointed in `RESULT.h5.checkpoint` for `--resume`.

use super::CAUTION;
use glaze_engine::analysis::dynamic_stage::{run_dynamic_with, Progress, RunControl};
use glaze_engine::results::{checkpoint_path, partial_path, preflight, Checkpoint, ResultsWriter};
use glaze_engine::{input, model, ElementRegistry, GlazeError};
use indicatif::{ProgressBar, ProgressStyle};
use std::io::IsTerminal;
use std::path::Path;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::Instant;

/// Runs `file` and writes `out`. Ctrl-C (or SIGTERM, SIGHUP) stops at the
/// next output interval, writes a checkpoint and keeps what was written,
/// marked incomplete, under `OUT.partial`; `resume` continues such a run
/// from `OUT.checkpoint`.
pub fn run(file: &Path, out: &Path, resume: bool, quiet: bool) -> Result<(), GlazeError> {
    let start = Instant::now();
    let registry = ElementRegistry::with_builtin();
    let spec = input::load(file, &registry)?;
    super::print_warnings(&spec, quiet);
    let stop = Arc::new(AtomicBool::new(false));
    {
        let stop = stop.clone();
        // A second Ctrl-C exits at once; the partial file stays marked incomplete.
        let _ = ctrlc::set_handler(move || {
            if stop.swap(true, Ordering::SeqCst) {
                std::process::exit(130);
            }
        });
    }
    let (writer, checkpoint) = if resume {
        let checkpoint = match Checkpoint::read(out, &spec.source) {
            // Without the partial file, say that first (or that `out` is complete).
            Err(e) if !partial_path(out).exists() => {
                return Err(ResultsWriter::reopen(out, &spec.source).err().unwrap_or(e))
            }
            r => r?,
        };
        (ResultsWriter::reopen(out, &spec.source)?, Some(checkpoint))
    } else {
        // A checkpoint of an earlier run would not fit the new file.
        Checkpoint::remove(out);
        // Before any work: the folder takes the file and the disk has room
        // for the histories (building the model is cheap next to the run).
        if let Some(dynamics) = &spec.dynamics {
            let model = model::build(&spec, &registry)?;
            preflight::check(out, preflight::run_bytes(&model, dynamics))?;
        }
        match ResultsWriter::create(out, &spec.source) {
            Ok(w) => (w, None),
            Err(e) => {
                super::remove_results(out);
                return Err(e);
            }
        }
    };
    let duration = spec.dynamics.as_ref().map_or(0.0, |d| d.duration);
    let bar = if quiet || !std::io::stderr().is_terminal() {
        None
    } else {
        let b = ProgressBar::new(1000);
        b.set_style(
            ProgressStyle::with_template("{bar:40} {msg} [{elapsed_precise}, {eta} left]")
                .unwrap_or_else(|_| ProgressStyle::default_bar()),
        );
        Some(b)
    };
    let mut last_log = Instant::now();
    let mut on_progress = |p: Progress| {
        let rate = p.steps as f64 / start.elapsed().as_secs_f64().max(1e-9);
        let msg = format!(
            "t = {:.2} / {:.2} s, {:.0} steps/s, {:.2} Newton it./step",
            p.time,
            p.duration,
            rate,
            p.iterations as f64 / p.steps.max(1) as f64
        );
        match &bar {
            Some(b) => {
                b.set_position((1000.0 * p.time / p.duration.max(1e-12)) as u64);
                b.set_message(msg);
            }
            None if !quiet && last_log.elapsed().as_secs_f64() > 10.0 => {
                eprintln!("glaze run: {msg}");
                last_log = Instant::now();
            }
            None => {}
        }
    };
    let prior_wall = checkpoint.as_ref().map_or(0.0, |c| c.wall_time_s);
    let mut control = RunControl { stop: &stop, checkpoints: true, resume: checkpoint };
    let summary = match run_dynamic_with(&spec, &registry, &writer, &mut control, &mut on_progress) {
        Ok(s) => s,
        Err(GlazeError::Diverged { report }) => {
            if let Some(b) = &bar {
                b.finish_and_clear();
            }
            // Resuming would diverge again: the checkpoint goes, the records stay.
            Checkpoint::remove(out);
            let kept = match writer.keep_incomplete(prior_wall + start.elapsed().as_secs_f64()) {
                Ok(p) => format!("results kept in {} (marked incomplete)", p.display()),
                Err(e) => format!("the results could not be kept: {e}"),
            };
            return Err(GlazeError::Diverged {
                report: format!(
                    "{report}
  {kept}"
                ),
            });
        }
        Err(e) if resume => {
            // The partial file and the checkpoint stay for another try.
            drop(writer);
            return Err(super::one_line(e));
        }
        Err(e) => {
            drop(writer);
            Checkpoint::remove(out);
            return Err(super::write_failed(e, out));
        }
    };
    if let Some(b) = &bar {
        b.finish_and_clear();
    }
    let wall = summary.prior_wall_time_s + start.elapsed().as_secs_f64();
    if summary.interrupted {
        let kept = writer.keep_incomplete(wall)?;
        let cp = checkpoint_path(out);
        let again = if cp.is_file() {
            format!(
                "; checkpoint {}: `glaze run {} --out {} --resume` continues",
                cp.display(),
                file.display(),
                out.display()
            )
        } else {
            String::new()
        };
        eprintln!(
            "glaze run: interrupted at t = {:.3} s of {duration} s; {} records kept in {} (marked incomplete){again}",
            summary.time,
            summary.records,
            kept.display()
        );
        std::process::exit(130);
    }
    let path = writer.finish(wall).map_err(|e| super::write_failed(e, out))?;
    Checkpoint::remove(out);
    if !quiet {
        out!(
            "{} s simulated in {wall:.1} s wall ({:.1}× real time): {} steps ({} cut back), {} Newton iterations ({:.2}/step), {} factorisations ({:.2}/step)",
            summary.time,
            summary.time / wall,
            summary.steps,
            summary.rejected_steps,
            summary.iterations,
            summary.iterations as f64 / summary.steps.max(1) as f64,
            summary.factorisations,
            summary.factorisations as f64 / summary.steps.max(1) as f64
        );
        out!(
            "Rayleigh damping a0 = {:.4e} 1/s, a1 = {:.4e} s; energy balance error {:.2e} of the largest term",
            summary.rayleigh.0, summary.rayleigh.1, summary.energy_balance_error
        );
        if !summary.modal_damping.is_empty() {
            let list: Vec<String> = summary
                .modal_damping
                .iter()
                .enumerate()
                .map(|(i, (f, xi))| format!("{}: {f:.3} Hz {:.2} %", i + 1, 100.0 * xi))
                .collect();
            out!("Rayleigh damping of the modes about the start state: {}", list.join(", "));
        }
        out!("{} records written to {}", summary.records, path.display());
        out!("{CAUTION}");
    }
    Ok(())
}
