//! `glaze bench`: timed runs of generated scale cases, each in its own
//! process (so its peak memory is its own), written as one JSON record;
//! `--against OLD.json` compares speed and results fingerprints.

use glaze_bench::against::{compare, table};
use glaze_bench::scaling;
use glaze_bench::SolverBackend;
use glaze_bench::{build_info, named_set, run_case, BenchError, BenchRecord, CaseRecord, BENCH_FORMAT};
use std::path::{Path, PathBuf};
use std::process::Command;

/// Options of `glaze bench`.
pub struct BenchOptions {
    /// Case sets or names, comma-separated.
    pub cases: String,
    /// Linear solvers each case runs with, comma-separated names of
    /// [`SolverBackend`]; the first is the one the growth is fitted on.
    pub solvers: String,
    /// Simulated time per case, s.
    pub duration: f64,
    /// Record to write.
    pub out: PathBuf,
    /// Record to compare with.
    pub against: Option<PathBuf>,
    /// Relative fingerprint tolerance.
    pub tolerance: f64,
    /// Work folder (case inputs and results files).
    pub work: PathBuf,
    /// Keep the results files.
    pub keep: bool,
}

fn write_atomic(path: &Path, text: &str) -> Result<(), BenchError> {
    let partial = PathBuf::from(format!("{}.partial", path.display()));
    let fail = |e: std::io::Error| BenchError::Io { path: path.to_path_buf(), message: e.to_string() };
    std::fs::write(&partial, text).map_err(fail)?;
    std::fs::rename(&partial, path).map_err(fail)
}

fn read_record(path: &Path) -> Result<BenchRecord, BenchError> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| BenchError::Io { path: path.into(), message: e.to_string() })?;
    let r: BenchRecord = serde_json::from_str(&text)
        .map_err(|e| BenchError::Io { path: path.into(), message: format!("not a bench record: {e}") })?;
    if r.format != BENCH_FORMAT {
        return Err(BenchError::Io {
            path: path.into(),
            message: format!("format `{}`, expected `{BENCH_FORMAT}`", r.format),
        });
    }
    Ok(r)
}

/// Runs one case in this process and writes its record (the child side).
pub fn bench_one(
    name: &str,
    solver: &str,
    duration: f64,
    work: &Path,
    keep: bool,
    record_to: &Path,
) -> Result<(), BenchError> {
    let cases = named_set(name)
        .filter(|c| c.len() == 1)
        .ok_or_else(|| BenchError::Usage(format!("no case {name}")))?;
    let solver = parse_solver(solver)?;
    let rec = run_case(cases[0], duration, solver, work, keep)?;
    let json = serde_json::to_string_pretty(&rec).map_err(|e| BenchError::Usage(e.to_string()))?;
    write_atomic(record_to, &json)
}

fn parse_solver(name: &str) -> Result<SolverBackend, BenchError> {
    SolverBackend::from_name(name).ok_or_else(|| {
        BenchError::Usage(format!(
            "--solvers {name}: give sparse_direct, banded_rcm or banded_natural (comma-separated)"
        ))
    })
}

/// Runs `glaze bench`; returns whether every fingerprint matched `--against`.
pub fn bench(o: &BenchOptions, quiet: bool) -> Result<bool, BenchError> {
    if !o.duration.is_finite() || o.duration <= 0.0 {
        return Err(BenchError::Usage(format!("--duration {}: give a positive simulated time", o.duration)));
    }
    let old = o.against.as_deref().map(read_record).transpose()?;
    let mut cases = Vec::new();
    for part in o.cases.split(',').map(str::trim).filter(|p| !p.is_empty()) {
        let set = named_set(part).ok_or_else(|| {
            BenchError::Usage(format!(
                "--cases {part}: give standard, scale, demo or a case name like s5p3b2e (spans, phases, subconductors, e = earth wire)"
            ))
        })?;
        cases.extend(set);
    }
    let solvers: Vec<SolverBackend> = o
        .solvers
        .split(',')
        .map(str::trim)
        .filter(|p| !p.is_empty())
        .map(parse_solver)
        .collect::<Result<_, _>>()?;
    if solvers.is_empty() {
        return Err(BenchError::Usage("--solvers: give at least one linear solver".into()));
    }
    let runs: Vec<_> = cases.iter().flat_map(|&c| solvers.iter().map(move |&s| (c, s))).collect();
    std::fs::create_dir_all(&o.work)
        .map_err(|e| BenchError::Io { path: o.work.clone(), message: e.to_string() })?;
    let exe = std::env::current_exe()
        .map_err(|e| BenchError::Usage(format!("cannot find the glaze binary: {e}")))?;
    let started_unix_s =
        std::time::SystemTime::now().duration_since(std::time::UNIX_EPOCH).map_or(0, |d| d.as_secs());
    let mut records: Vec<CaseRecord> = Vec::new();
    if !quiet {
        out!(
            "{:<22} {:>8} {:>7} {:>8} {:>8} {:>9} {:>9} {:>9} {:>10} {:>9}",
            "case",
            "DOF",
            "steps",
            "it/step",
            "factors",
            "setup s",
            "step s",
            "steps/s",
            "× real",
            "peak MiB"
        );
    }
    for (c, solver) in runs {
        let name = c.name();
        let record_to = o.work.join(format!("{name}-{}.record.json", solver.name()));
        let _ = std::fs::remove_file(&record_to);
        let mut cmd = Command::new(&exe);
        cmd.args(["--quiet", "bench", "--one", &name, "--solver", solver.name()])
            .args(["--duration", &o.duration.to_string()])
            .arg("--work")
            .arg(&o.work)
            .arg("--record-to")
            .arg(&record_to);
        if o.keep {
            cmd.arg("--keep");
        }
        let status =
            cmd.status().map_err(|e| BenchError::Case(name.clone(), format!("cannot start: {e}")))?;
        if !status.success() {
            return Err(BenchError::Case(name, format!("the case's process ended with {status}")));
        }
        let text = std::fs::read_to_string(&record_to)
            .map_err(|e| BenchError::Io { path: record_to.clone(), message: e.to_string() })?;
        let r: CaseRecord = serde_json::from_str(&text)
            .map_err(|e| BenchError::Io { path: record_to.clone(), message: e.to_string() })?;
        if !quiet {
            out!(
                "{:<22} {:>8} {:>7} {:>8.2} {:>8} {:>9.2} {:>9.2} {:>9.0} {:>10.2} {:>9.0}",
                r.label(),
                r.dof,
                r.steps,
                r.newton_iterations as f64 / r.steps.max(1) as f64,
                r.factorisations,
                r.setup_s,
                r.dynamic_s,
                r.steps_per_s,
                r.real_time_factor,
                r.peak_memory_bytes as f64 / (1 << 20) as f64
            );
            let p = &r.phases;
            out!(
                "{:<22} elements {:.2} s, aerodynamics {:.2} s, factorisation {:.2} s, solves {:.2} s, output {:.2} s, other {:.2} s; step {:.2}× the factor-and-solve floor of {:.2} ms",
                "",
                p.elements_s,
                p.aerodynamics_s,
                p.factorisation_s,
                p.solve_s,
                p.output_s,
                p.other_s,
                p.step_over_floor,
                1e3 * p.floor_per_step_s
            );
        }
        records.push(r);
    }
    let record = BenchRecord {
        format: BENCH_FORMAT.into(),
        glaze_version: env!("CARGO_PKG_VERSION").into(),
        started_unix_s,
        build: build_info(),
        simulated_s: o.duration,
        cases: records,
    };
    let json = serde_json::to_string_pretty(&record).map_err(|e| BenchError::Usage(e.to_string()))?;
    write_atomic(&o.out, &json)?;
    if !quiet {
        out!("wrote {}", o.out.display());
    }
    // With cases of two sizes or more: the growth of the time per step,
    // fitted and charted for the first solver, fitted for the others.
    let of = |solver: SolverBackend| -> Vec<CaseRecord> {
        record.cases.iter().filter(|c| c.linear_solver == solver.name()).cloned().collect()
    };
    let primary = of(solvers[0]);
    if let Some((slope, _)) = scaling::fit(&scaling::points(&primary)) {
        let chart = o.out.with_extension("svg");
        let svg = scaling::chart_svg(&primary).map_err(BenchError::Usage)?;
        write_atomic(&chart, &svg)?;
        if !quiet {
            out!(
                "time per step grows as DOF^{slope:.2} with {} (least squares over {} cases, log–log); chart {}",
                solvers[0].name(),
                primary.len(),
                chart.display()
            );
        }
    }
    for &s in &solvers[1..] {
        let cases = of(s);
        if let (Some((slope, _)), false) = (scaling::fit(&scaling::points(&cases)), quiet) {
            out!("time per step grows as DOF^{slope:.2} with {} ({} cases)", s.name(), cases.len());
        }
    }
    let Some(old) = old else { return Ok(true) };
    let (rows, unmatched) = compare(&record, &old, o.tolerance);
    if !quiet {
        out!("against {}:", o.against.as_deref().map_or(String::new(), |p| p.display().to_string()));
        out_part!("{}", table(&rows, &unmatched, o.tolerance));
    }
    Ok(rows.iter().all(|r| !r.changed))
}
