//! Errors of the engine. Every input problem carries the file, the key
//! path and the line, so the user can go straight to it.

use std::path::PathBuf;

/// What kind of input problem it is (for tests and exit codes).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum InputErrorKind {
    /// The file could not be read.
    Unreadable,
    /// Not valid TOML.
    Syntax,
    /// A key the schema does not know.
    UnknownKey,
    /// A required key is absent.
    MissingKey,
    /// A value of the wrong type or outside its valid range.
    InvalidValue,
    /// A name that refers to nothing (support, conductor, element type).
    UnknownName,
    /// A target no real conductor can meet.
    Impossible,
    /// The static solve did not converge for this input.
    NotConverged,
}

/// A located input error: `file:line: key: message`.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[error("{}:{line}: {key}: {message}", file.display())]
pub struct InputError {
    /// The input file.
    pub file: PathBuf,
    /// 1-based line of the key (0 when the file could not be read).
    pub line: usize,
    /// The key path, e.g. `spans[2].sag`.
    pub key: String,
    /// What is wrong and what was expected.
    pub message: String,
    /// The kind of problem.
    pub kind: InputErrorKind,
}

/// A located input warning: the value is legal but physically implausible.
/// Shown as `file:line: key: message`, like [`InputError`].
#[derive(Clone, Debug, PartialEq)]
pub struct InputWarning {
    /// The input file.
    pub file: PathBuf,
    /// 1-based line of the key.
    pub line: usize,
    /// The key path, e.g. `phases[0].horizontal_tension`.
    pub key: String,
    /// What is implausible, the threshold and its source.
    pub message: String,
}

impl std::fmt::Display for InputWarning {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}:{}: {}: {}", self.file.display(), self.line, self.key, self.message)
    }
}

/// Every error the engine can return.
#[derive(Debug, thiserror::Error)]
pub enum GlazeError {
    /// Bad input.
    #[error(transparent)]
    Input(#[from] InputError),
    /// Results could not be written.
    #[error("cannot write results file {}: {message}", path.display())]
    Results {
        /// Target path.
        path: PathBuf,
        /// What went wrong.
        message: String,
    },
    /// An analysis stage failed on a valid model (an eigen solve that did
    /// not converge, an unstable static state).
    #[error("{message}")]
    Analysis {
        /// What went wrong and what to try.
        message: String,
    },
    /// The time integration diverged (non-finite values, or a step that
    /// failed even at the smallest step size): the report names the time,
    /// the worst DOF and where it is, and what to try.
    #[error("{report}")]
    Diverged {
        /// The divergence report, several lines.
        report: String,
    },
    /// `glaze run --resume` cannot continue: no checkpoint, one of another
    /// input, or no partial results file to go on with.
    #[error("cannot resume from {}: {message}", path.display())]
    Resume {
        /// The checkpoint or partial results file.
        path: PathBuf,
        /// What is missing or different.
        message: String,
    },
}
