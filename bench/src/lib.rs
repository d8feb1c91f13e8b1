//! `glaze bench`: runs named sets of generated scale cases (1 k to 200 k
//! DOF) for a fixed simulated time and writes a JSON record of size,
//! solver work, wall times, speed, peak memory and a results fingerprint;
//! `--against OLD.json` compares two records on speed and on the answer.
//! Each case runs in its own process so its peak memory is its own.

#![deny(missing_docs)]

pub mod against;
pub mod cases;
pub mod record;
pub mod run;
pub mod scaling;

pub use cases::{named_set, ScaleCase};
pub use glaze_solvers::SolverBackend;
pub use record::{BenchRecord, BuildInfo, CaseRecord, BENCH_FORMAT};
pub use run::run_case;

use std::path::PathBuf;

/// Why a bench could not run.
#[derive(Debug, thiserror::Error)]
pub enum BenchError {
    /// A file could not be read or written.
    #[error("{}: {message}", path.display())]
    Io {
        /// The file.
        path: PathBuf,
        /// What went wrong.
        message: String,
    },
    /// A case failed.
    #[error("case {0}: {1}")]
    Case(String, String),
    /// Bad arguments or records.
    #[error("{0}")]
    Usage(String),
}

/// Build and machine of this binary.
pub fn build_info() -> BuildInfo {
    BuildInfo {
        profile: if cfg!(debug_assertions) { "debug".into() } else { "release".into() },
        target: format!("{}-{}", std::env::consts::ARCH, std::env::consts::OS),
        cpus: std::thread::available_parallelism().map_or(1, |n| n.get()),
        threads: rayon::current_num_threads(),
    }
}
