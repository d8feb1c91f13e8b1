//! Studies of one section over many cases: `glaze sweep STUDY.toml` runs
//! every combination of wind speed, wind direction, ice case and device
//! layout in parallel (each case its own input, results file and report),
//! skipping cases already complete and splitting the list into shards for
//! a batch scheduler; `glaze compare STUDY_DIR` gathers the case summaries
//! into tables, a ranking of the layouts and amplitude-versus-wind curves.
//!
//! Folder of a study (`[study] output`):
//!
//! ```text
//! study.json              the case list (written by every sweep)
//! cases/ID/input.toml     the generated input of case ID
//! cases/ID/result.h5      its results file (glaze run)
//! cases/ID/post/          its report (glaze post): report.json, CSV, plots
//! cases/ID/case.json      its summary, written last: the case is complete
//! cases/ID/failed.json    why it failed, if it did
//! compare.md, compare.html, compare.json, compare_*.svg   glaze compare
//! slurm/                  sweep.sbatch, gather.sbatch, submit.sh, logs/ (--emit-batch slurm)
//! ```

#![deny(missing_docs)]

pub mod batch;
pub mod cases;
pub mod compare;
mod compare_html;
mod compare_plots;
pub mod shard;
pub mod spec;
pub mod summary;
pub mod sweep;

pub use batch::{emit_slurm, BatchOptions, BatchScripts};
pub use compare::{compare_study, Comparison};
pub use shard::Shard;
pub use spec::{load_study, Case, Study};
pub use summary::CaseSummary;
pub use sweep::{run_sweep, CaseEvent, SweepOptions, SweepOutcome};

use std::path::{Path, PathBuf};

/// Why a study could not be run or compared.
#[derive(Debug, thiserror::Error)]
pub enum StudyError {
    /// A bad study file, or a base input that cannot take a case's changes.
    #[error("{0}")]
    Input(#[from] glaze_engine::InputError),
    /// A bad `--shard` or scheduler variable.
    #[error("{0}")]
    Shard(String),
    /// A study folder that is not one, or a file in it that cannot be read.
    #[error("{}: {message}", path.display())]
    Folder {
        /// The folder or file.
        path: PathBuf,
        /// What is wrong.
        message: String,
    },
    /// An output file cannot be written.
    #[error("cannot write {}: {message}", path.display())]
    Output {
        /// The file.
        path: PathBuf,
        /// What went wrong.
        message: String,
    },
    /// A fault of glaze itself.
    #[error("internal error: {0}")]
    Internal(String),
}

/// Writes `bytes` to `path` under a unique `.partial` name, then renames it.
pub(crate) fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), StudyError> {
    let partial = PathBuf::from(format!("{}.{}.partial", path.display(), std::process::id()));
    let fail = |e: std::io::Error| {
        let _ = std::fs::remove_file(&partial);
        StudyError::Output { path: path.to_path_buf(), message: e.to_string() }
    };
    std::fs::write(&partial, bytes).map_err(fail)?;
    std::fs::rename(&partial, path).map_err(fail)
}
