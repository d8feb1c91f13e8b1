//! `glaze`: the command line. It parses arguments, calls the engine and
//! reports; all the work is in `glaze-engine`.
//!
//! Exit codes: 0 success; 1 internal error; 2 bad input (file, key and line
//! are printed); 3 the analysis did not converge; 4 results could not be written;
//! 5 `glaze post` refused the results file (incomplete, other format version, unreadable);
//! 6 `glaze sweep`: some cases failed, `glaze compare`: some cases are not complete;
//! 7 `glaze bench --against`: a results fingerprint changed beyond the tolerance;
//! 8 `glaze run`: the time integration diverged (report printed, records kept as `OUT.partial`);
//! 130 stopped by a signal. `glaze run --resume` refusing (no checkpoint, another input) is 2.

mod commands;

use clap::{Parser, Subcommand};
use std::path::PathBuf;
use std::process::ExitCode;

/// Wind-induced dynamics of overhead line tension sections.
#[derive(Parser)]
#[command(name = "glaze", version, about, long_about = None)]
struct Cli {
    /// Print only errors.
    #[arg(long, short, global = true)]
    quiet: bool,
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Validate an input file and summarise the model it describes.
    Check {
        /// Input TOML file.
        file: PathBuf,
    },
    /// Solve the static load case and write the results file.
    Static {
        /// Input TOML file.
        file: PathBuf,
        /// Results file to write (HDF5).
        #[arg(long, short)]
        out: PathBuf,
    },
    /// Solve the static load case, then the lowest natural modes about it;
    /// print the mode table and write the results file.
    Modes {
        /// Input TOML file.
        file: PathBuf,
        /// Number of lowest modes.
        #[arg(long, short = 'k', default_value_t = 10)]
        count: usize,
        /// Results file to write (HDF5).
        #[arg(long, short)]
        out: PathBuf,
        /// Eigen solver: dense for small models, Lanczos for large ones.
        #[arg(long, value_enum, default_value = "auto")]
        method: commands::SolverChoice,
    },
    /// Static state, then the nonlinear time simulation of `[dynamics]`;
    /// histories are streamed to the results file.
    Run {
        /// Input TOML file (with `[dynamics]`).
        file: PathBuf,
        /// Results file to write (HDF5).
        #[arg(long, short)]
        out: PathBuf,
        /// Continue an interrupted run from `OUT.checkpoint`, appending to
        /// `OUT.partial`; the finished file is the one an uninterrupted run writes.
        #[arg(long)]
        resume: bool,
    },
    /// Galloping-onset screening: modes and their aerodynamic damping over
    /// the wind speeds of `[screening]`, with the onset speed of each mode.
    Screen {
        /// Input TOML file (with `[screening]` and `[load_case.wind]`).
        file: PathBuf,
        /// Output format.
        #[arg(long, value_enum, default_value = "table")]
        format: commands::ScreenFormat,
    },
    /// Clearances, galloping envelope, loads and fatigue from a results
    /// file of `glaze run`; settings from the `[post]` table of its input.
    Post {
        /// Results file (HDF5) written by `glaze run`.
        results: PathBuf,
        /// Output folder for report.json and the CSV tables (default:
        /// `<results stem>_post` beside the file).
        #[arg(long, short)]
        out: Option<PathBuf>,
        /// Report on a file that is not marked complete (an interrupted run).
        #[arg(long)]
        allow_incomplete: bool,
        /// Do not write RESULT.xdmf (the viewer description) beside the results file.
        #[arg(long)]
        no_xdmf: bool,
    },
    /// Run every case of a study (wind speeds, directions, ice cases and
    /// layouts over one base input) in parallel, each with its report;
    /// complete cases are skipped, so a rerun finishes a broken sweep.
    Sweep {
        /// Study file (TOML).
        study: PathBuf,
        /// Run one slice of the cases, I/N (1-based); default: the Slurm
        /// array task's slice when SLURM_ARRAY_TASK_ID is set, else all.
        #[arg(long)]
        shard: Option<String>,
        /// Cases run at once (default: one per core).
        #[arg(long, short, default_value_t = 0)]
        jobs: usize,
        /// Print the cases of the shard and stop.
        #[arg(long)]
        list: bool,
        /// Write batch scripts for a cluster scheduler into the study's
        /// output folder instead of running (`slurm`: array job, gather job
        /// and submit script).
        #[arg(long, value_enum)]
        emit_batch: Option<commands::BatchKind>,
        /// With --emit-batch: cases per array task.
        #[arg(long, default_value_t = 2)]
        cases_per_task: usize,
        /// With --emit-batch: CPUs per array task (cases run at once in a task).
        #[arg(long, default_value_t = 1)]
        cpus_per_task: usize,
        /// With --emit-batch: wall time of one case on one CPU, minutes, for
        /// the time limit (default: estimated from the model size and steps).
        #[arg(long)]
        minutes_per_case: Option<f64>,
        /// With --emit-batch: an extra scheduler line, e.g. `--partition=long`
        /// (repeatable).
        #[arg(long = "sbatch-option", allow_hyphen_values = true)]
        sbatch_options: Vec<String>,
    },
    /// Timed runs of generated scale cases (1 k to 200 k DOF), written as a
    /// JSON record; `--against OLD.json` compares speed and results.
    Bench {
        /// Case sets (`standard`, `scale`, `demo`) or case names such as
        /// `s5p3b2e` (spans, phases, subconductors, e = earth wire), comma-separated.
        #[arg(long, default_value = "standard")]
        cases: String,
        /// Linear solvers each case runs with, comma-separated:
        /// `sparse_direct` (faer; the default), and the banded LU baselines
        /// `banded_rcm` (reverse Cuthill–McKee) and `banded_natural`.
        #[arg(long, default_value = "sparse_direct")]
        solvers: String,
        /// With --one: the linear solver of that case.
        #[arg(long, hide = true, default_value = "sparse_direct")]
        solver: String,
        /// Simulated time per case, s.
        #[arg(long, default_value_t = 10.0)]
        duration: f64,
        /// Record to write.
        #[arg(long, short, default_value = "bench.json")]
        out: PathBuf,
        /// Earlier record to compare with: speed ratios, and results
        /// fingerprints flagged when they differ beyond --tolerance.
        #[arg(long)]
        against: Option<PathBuf>,
        /// Relative tolerance on the results fingerprint.
        #[arg(long, default_value_t = glaze_bench::against::DEFAULT_TOLERANCE)]
        tolerance: f64,
        /// Folder for the cases' inputs and results files.
        #[arg(long, default_value = "bench_cases")]
        work: PathBuf,
        /// Keep the cases' results files.
        #[arg(long)]
        keep: bool,
        /// Run one case in this process and write its record to --record-to
        /// (what each case's child process does).
        #[arg(long, hide = true)]
        one: Option<String>,
        #[arg(long, hide = true)]
        record_to: Option<PathBuf>,
    },
    /// Compare the layouts of a study folder written by `glaze sweep`:
    /// tables, a ranking and amplitude-against-wind plots as compare.md
    /// and one self-contained compare.html.
    Compare {
        /// Study output folder.
        dir: PathBuf,
    },
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let level = if cli.quiet { "error" } else { "warn" };
    let _ = tracing_subscriber::fmt()
        .with_env_filter(
            tracing_subscriber::EnvFilter::try_from_env("GLAZE_LOG").unwrap_or_else(|_| level.into()),
        )
        .with_writer(std::io::stderr)
        .try_init();
    let q = cli.quiet;
    match &cli.command {
        Command::Check { file } => engine_exit(commands::check(file, q)),
        Command::Static { file, out } => engine_exit(commands::run_static(file, out, q)),
        Command::Modes { file, count, out, method } => {
            engine_exit(commands::run_modes(file, *count, *method, out, q))
        }
        Command::Run { file, out, resume } => engine_exit(commands::run(file, out, *resume, q)),
        Command::Screen { file, format } => engine_exit(commands::run_screen(file, *format)),
        Command::Post { results, out, allow_incomplete, no_xdmf } => {
            match commands::post(results, out.as_ref(), *allow_incomplete, !*no_xdmf, q) {
                Ok(()) => ExitCode::SUCCESS,
                Err(e) => {
                    eprintln!("error: {e}");
                    ExitCode::from(match e {
                        glaze_report::ReportError::Settings(_) => 2,
                        glaze_report::ReportError::Output { .. } => 4,
                        glaze_report::ReportError::Analysis(_) => 3,
                        _ => 5,
                    })
                }
            }
        }
        Command::Sweep {
            study,
            emit_batch: Some(kind),
            cases_per_task,
            cpus_per_task,
            minutes_per_case,
            sbatch_options,
            ..
        } => {
            let batch = commands::BatchSettings {
                kind: *kind,
                cases_per_task: *cases_per_task,
                cpus_per_task: *cpus_per_task,
                minutes_per_case: *minutes_per_case,
                extra: sbatch_options.clone(),
            };
            match commands::emit_batch(study, &batch, q) {
                Ok(()) => ExitCode::SUCCESS,
                Err(e) => study_error(&e),
            }
        }
        Command::Sweep { study, shard, jobs, list, .. } => {
            match commands::sweep(study, shard.as_deref(), *jobs, *list, q) {
                Ok(commands::SweepEnd::Complete) => ExitCode::SUCCESS,
                Ok(commands::SweepEnd::Failed) => ExitCode::from(6),
                Ok(commands::SweepEnd::Stopped) => ExitCode::from(130),
                Err(e) => study_error(&e),
            }
        }
        Command::Bench {
            cases,
            solvers,
            solver,
            duration,
            out,
            against,
            tolerance,
            work,
            keep,
            one,
            record_to,
        } => {
            let result = match (one, record_to) {
                (Some(name), Some(to)) => {
                    commands::bench_one(name, solver, *duration, work, *keep, to).map(|()| true)
                }
                _ => commands::bench(
                    &commands::BenchOptions {
                        cases: cases.clone(),
                        solvers: solvers.clone(),
                        duration: *duration,
                        out: out.clone(),
                        against: against.clone(),
                        tolerance: *tolerance,
                        work: work.clone(),
                        keep: *keep,
                    },
                    q,
                ),
            };
            match result {
                Ok(true) => ExitCode::SUCCESS,
                Ok(false) => ExitCode::from(7),
                Err(e) => {
                    eprintln!("error: {e}");
                    ExitCode::from(match e {
                        glaze_bench::BenchError::Usage(_) => 2,
                        glaze_bench::BenchError::Io { .. } => 4,
                        glaze_bench::BenchError::Case(..) => 3,
                    })
                }
            }
        }
        Command::Compare { dir } => match commands::compare(dir, q) {
            Ok(true) => ExitCode::SUCCESS,
            Ok(false) => ExitCode::from(6),
            Err(e) => study_error(&e),
        },
    }
}

fn engine_exit(result: Result<(), glaze_engine::GlazeError>) -> ExitCode {
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::from(commands::exit_code(&e))
        }
    }
}

fn study_error(e: &glaze_study::StudyError) -> ExitCode {
    eprintln!("error: {e}");
    ExitCode::from(match e {
        glaze_study::StudyError::Input(_) | glaze_study::StudyError::Shard(_) => 2,
        glaze_study::StudyError::Output { .. } => 4,
        glaze_study::StudyError::Folder { .. } => 5,
        glaze_study::StudyError::Internal(_) => 1,
    })
}
