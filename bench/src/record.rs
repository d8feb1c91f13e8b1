//! The JSON record `glaze bench` writes: per case its size, the solver's
//! work, wall times, speed, peak memory and a fingerprint of the results,
//! with the build and solver settings, so that two records can be compared
//! on speed and on the answer together.

use serde::{Deserialize, Serialize};

/// Format name of a bench record.
pub const BENCH_FORMAT: &str = "glaze-bench";

/// One bench run.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct BenchRecord {
    /// Always [`BENCH_FORMAT`].
    pub format: String,
    /// glaze version.
    pub glaze_version: String,
    /// Seconds since the Unix epoch when the run started.
    pub started_unix_s: u64,
    /// Build and machine.
    pub build: BuildInfo,
    /// Simulated time per case, s.
    pub simulated_s: f64,
    /// The cases, in run order.
    pub cases: Vec<CaseRecord>,
}

/// How the binary was built and where it ran.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct BuildInfo {
    /// `release` or `debug` (debug assertions on).
    pub profile: String,
    /// Target architecture and OS.
    pub target: String,
    /// Logical CPUs of the machine.
    pub cpus: usize,
    /// Threads of each case's element loops (one case at a time; `RAYON_NUM_THREADS` sets it).
    pub threads: usize,
}

/// One case.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CaseRecord {
    /// Case name (`s5p3b2e`).
    pub name: String,
    /// Linear solver of the step (`sparse_direct`, `banded_rcm`, …; older
    /// records: `sparse_direct`).
    #[serde(default = "sparse_direct")]
    pub linear_solver: String,
    /// Nodes × 6.
    pub dof: usize,
    /// Elements.
    pub elements: usize,
    /// Integration scheme and step, e.g. `hht α=-0.05, Δt=0.01 s`.
    pub solver: String,
    /// Time steps taken.
    pub steps: usize,
    /// Steps cut back.
    pub rejected_steps: usize,
    /// Newton iterations.
    pub newton_iterations: usize,
    /// Numeric factorisations.
    pub factorisations: usize,
    /// Records written to the results file.
    pub records: usize,
    /// Wall time of input, model, static state, modes and closing the results file, s.
    pub setup_s: f64,
    /// Wall time of the time stepping with its output, s.
    pub dynamic_s: f64,
    /// Steps per second of the time stepping.
    pub steps_per_s: f64,
    /// Simulated time over wall time of the stepping.
    pub real_time_factor: f64,
    /// Peak resident memory of the process running the case, bytes (0 where unknown).
    pub peak_memory_bytes: u64,
    /// Energy-balance error of the run.
    pub energy_balance_error: f64,
    /// Fingerprint of the results at the last record: Σ|u| (m), max |u| (m),
    /// Σ axial force (N).
    pub fingerprint: Vec<f64>,
    /// Where the stepping's wall time went (absent in older records).
    #[serde(default)]
    pub phases: PhaseTimes,
}

impl CaseRecord {
    /// The case name, with `/solver` unless the solver is `sparse_direct`.
    pub fn label(&self) -> String {
        if self.linear_solver == "sparse_direct" {
            self.name.clone()
        } else {
            format!("{}/{}", self.name, self.linear_solver)
        }
    }
}

fn sparse_direct() -> String {
    "sparse_direct".into()
}

/// Wall time of the stepping by part, s, and the factor-and-solve floor.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct PhaseTimes {
    /// Element forces and tangents with their assembly.
    pub elements_s: f64,
    /// Aerodynamic loads and Jacobians with their assembly.
    pub aerodynamics_s: f64,
    /// Numeric factorisations of the step matrix.
    pub factorisation_s: f64,
    /// Solves with the factor.
    pub solve_s: f64,
    /// Records, HDF5 output and checkpoints.
    pub output_s: f64,
    /// The rest: the integrator's vector work (M·a, C·v, residuals, predictors).
    pub other_s: f64,
    /// Factor-and-solve floor: one numeric factorisation plus one solve, at
    /// their mean measured times in this run, s per step.
    pub floor_per_step_s: f64,
    /// Whole step over the floor.
    pub step_over_floor: f64,
}

/// Largest relative difference between two fingerprints (∞ when their lengths differ).
pub fn fingerprint_difference(a: &[f64], b: &[f64]) -> f64 {
    if a.len() != b.len() {
        return f64::INFINITY;
    }
    a.iter()
        .zip(b)
        .map(|(x, y)| {
            let scale = x.abs().max(y.abs());
            if scale == 0.0 {
                0.0
            } else {
                (x - y).abs() / scale
            }
        })
        .fold(0.0, f64::max)
}

/// Peak resident memory of this process, bytes, from `/proc/self/status`
/// (`VmHWM`); 0 where the file does not exist.
pub fn peak_memory_bytes() -> u64 {
    let Ok(status) = std::fs::read_to_string("/proc/self/status") else { return 0 };
    status
        .lines()
        .find_map(|l| l.strip_prefix("VmHWM:"))
        .and_then(|v| v.trim().trim_end_matches("kB").trim().parse::<u64>().ok())
        .map_or(0, |kb| kb * 1024)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fingerprints_compare_relatively() {
        assert_eq!(fingerprint_difference(&[1.0, 0.0], &[1.0, 0.0]), 0.0);
        assert!((fingerprint_difference(&[100.0, 2.0], &[100.0, 2.002]) - 1e-3 / 1.001).abs() < 1e-12);
        assert!(fingerprint_difference(&[1.0], &[1.0, 2.0]).is_infinite());
    }

    #[test]
    fn peak_memory_is_read_on_linux() {
        if std::path::Path::new("/proc/self/status").exists() {
            assert!(peak_memory_bytes() > 1 << 20);
        }
    }
}
