//! Post-processing of glaze results files (`glaze post`): reads a complete
//! results file, and from its histories answers what a line engineer asks
//! of a galloping run: clearances between phases and to the ground, the
//! galloping envelope of each span, the loads that reach the towers, and
//! the fatigue the hardware collects. Also writes an XDMF description so a
//! general-purpose viewer can animate the section.
//!
//! The numerics live in `glaze-post`; this crate is the file-reading and
//! reporting layer between it and the binary.

#![deny(missing_docs)]

pub mod clamp_bending;
pub mod output;
pub mod plots;
pub mod report;
pub mod results_file;
pub mod series;

pub use output::{post_process, PostOptions, PostOutcome};
pub use report::{build_report, Report, CAUTION};
pub use results_file::ResultsFile;

use std::path::PathBuf;

/// Why a results file could not be post-processed.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    /// The file cannot be opened or read.
    #[error("{}: {message}", path.display())]
    File {
        /// The file.
        path: PathBuf,
        /// What went wrong.
        message: String,
    },
    /// The file is not a glaze results file of this format version.
    #[error("{}: {message}", path.display())]
    Format {
        /// The file.
        path: PathBuf,
        /// What is wrong.
        message: String,
    },
    /// The file was not finished (`complete` is not 1).
    #[error(
        "{}: the results file is incomplete (the run was stopped or failed before it finished); \
         give --allow-incomplete to report on the records it holds",
        path.display()
    )]
    Incomplete {
        /// The file.
        path: PathBuf,
    },
    /// The `[post]` settings kept in the file are invalid.
    #[error("{0}")]
    Settings(#[from] glaze_engine::InputError),
    /// The histories do not allow the analysis asked for.
    #[error("{0}")]
    Analysis(String),
    /// An output file cannot be written.
    #[error("cannot write {}: {message}", path.display())]
    Output {
        /// The file.
        path: PathBuf,
        /// What went wrong.
        message: String,
    },
}
pub mod xdmf;
