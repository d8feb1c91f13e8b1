//! Errors of reading and evaluating a coefficient table.

use std::path::{Path, PathBuf};

/// What went wrong reading or evaluating a [`CoefficientTable`].
///
/// Every variant carries the file path (or, for a table built from text,
/// the origin name the caller gave). Every variant about the table's content
/// also carries the 1-based line number and, where one is involved, the
/// column name; the message starts `path:line:` so editors can jump to it.
/// The exceptions are [`TableError::Unreadable`] (no line exists),
/// [`TableError::InvalidReferenceDiameter`] for a diameter given by the
/// caller rather than by the file, and the two evaluation errors, which name
/// the table's file and the offending angle.
///
/// [`CoefficientTable`]: crate::CoefficientTable
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum TableError {
    /// The file could not be opened or read (missing, permissions, not UTF-8).
    #[error("{}: cannot read the coefficient table: {source}", .path.display())]
    Unreadable {
        /// File that could not be read.
        path: PathBuf,
        /// The operating system's reason.
        source: std::io::Error,
    },

    /// No header row: the file is empty or holds only comments.
    #[error(
        "{}:{line}: no header row found; expected a row naming the columns \
         `alpha_deg, cd, cl[, cm]`",
        .path.display()
    )]
    NoHeader {
        /// Table file.
        path: PathBuf,
        /// Last line of the file (1-based; 0 for an empty file).
        line: usize,
    },

    /// A required column (`alpha_deg`, `cd` or `cl`) is not in the header.
    #[error(
        "{}:{line}: the header has no column `{column}`; expected \
         `alpha_deg, cd, cl[, cm]`",
        .path.display()
    )]
    MissingColumn {
        /// Table file.
        path: PathBuf,
        /// Line of the header row (1-based).
        line: usize,
        /// Name of the missing column.
        column: String,
    },

    /// A column name appears twice in the header.
    #[error("{}:{line}: column `{column}` appears twice in the header", .path.display())]
    DuplicateColumn {
        /// Table file.
        path: PathBuf,
        /// Line of the header row (1-based).
        line: usize,
        /// The repeated column name.
        column: String,
    },

    /// A data row has a different number of fields from the header.
    #[error(
        "{}:{line}: {found} comma-separated fields, but the header (line \
         {header_line}) has {expected}",
        .path.display()
    )]
    FieldCount {
        /// Table file.
        path: PathBuf,
        /// Line of the data row (1-based).
        line: usize,
        /// Line of the header row (1-based).
        header_line: usize,
        /// Number of fields in the header.
        expected: usize,
        /// Number of fields in this row.
        found: usize,
    },

    /// A field (or the `reference_diameter` comment) is not a number.
    #[error("{}:{line}: column `{column}`: `{text}` is not a number", .path.display())]
    NotANumber {
        /// Table file.
        path: PathBuf,
        /// Line of the row (1-based).
        line: usize,
        /// Column name (`reference_diameter` for the metadata comment).
        column: String,
        /// The offending text.
        text: String,
    },

    /// A field is NaN or infinite.
    #[error(
        "{}:{line}: column `{column}`: value {value} is not finite (NaN or infinite)",
        .path.display()
    )]
    NonFinite {
        /// Table file.
        path: PathBuf,
        /// Line of the row (1-based).
        line: usize,
        /// Column name.
        column: String,
        /// The parsed value.
        value: f64,
    },

    /// Fewer data rows than the interpolation needs (2 linear, 4 cubic).
    #[error(
        "{}:{line}: {found} data rows after the header, but {interpolation} \
         interpolation needs at least {required}",
        .path.display()
    )]
    TooFewPoints {
        /// Table file.
        path: PathBuf,
        /// Line of the header row (1-based).
        line: usize,
        /// Number of data rows found.
        found: usize,
        /// Minimum number of rows.
        required: usize,
        /// Name of the interpolation asked for.
        interpolation: &'static str,
    },

    /// Two consecutive rows have the same `alpha_deg`.
    #[error(
        "{}:{line}: column `alpha_deg`: {alpha_deg} repeats the value of line \
         {previous_line}; each angle may appear once",
        .path.display()
    )]
    DuplicateAlpha {
        /// Table file.
        path: PathBuf,
        /// Line of the repeated row (1-based).
        line: usize,
        /// Line of the earlier row with the same angle.
        previous_line: usize,
        /// The repeated angle, in degrees (as in the file).
        alpha_deg: f64,
    },

    /// `alpha_deg` decreases from one row to the next.
    #[error(
        "{}:{line}: column `alpha_deg`: {alpha_deg} is below {previous_deg} \
         on line {previous_line}; angles must be strictly increasing",
        .path.display()
    )]
    NotIncreasing {
        /// Table file.
        path: PathBuf,
        /// Line of the out-of-order row (1-based).
        line: usize,
        /// Line of the previous row.
        previous_line: usize,
        /// Angle of this row, in degrees.
        alpha_deg: f64,
        /// Angle of the previous row, in degrees.
        previous_deg: f64,
    },

    /// Consecutive angles are further apart than the allowed spacing.
    #[error(
        "{}:{line}: column `alpha_deg`: gap of {}° from line {previous_line} \
         exceeds the maximum spacing of {}°",
        .path.display(),
        round_deg(*.gap_deg),
        round_deg(*.max_deg)
    )]
    Gap {
        /// Table file.
        path: PathBuf,
        /// Line of the row after the gap (1-based).
        line: usize,
        /// Line of the row before the gap.
        previous_line: usize,
        /// The gap, in degrees.
        gap_deg: f64,
        /// The allowed maximum, in degrees.
        max_deg: f64,
    },

    /// The angles cover more than one 360° period.
    #[error(
        "{}:{line}: column `alpha_deg`: the table spans {}° from line \
         {first_line}, more than one 360° period",
        .path.display(),
        round_deg(*.span_deg)
    )]
    SpanExceedsPeriod {
        /// Table file.
        path: PathBuf,
        /// Line of the last row (1-based).
        line: usize,
        /// Line of the first data row.
        first_line: usize,
        /// Span of the table, in degrees.
        span_deg: f64,
    },

    /// The table spans exactly 360° but its last row differs from its first.
    #[error(
        "{}:{line}: column `{column}`: the table spans 360°, so this last row \
         must repeat the first (line {first_line}), but {last} ≠ {first}",
        .path.display()
    )]
    PeriodMismatch {
        /// Table file.
        path: PathBuf,
        /// Line of the last row (1-based).
        line: usize,
        /// Line of the first data row.
        first_line: usize,
        /// Column whose values differ.
        column: String,
        /// Value on the first row.
        first: f64,
        /// Value on the last row.
        last: f64,
    },

    /// The reference diameter is neither in the file nor given by the caller.
    #[error(
        "{}:{line}: reference diameter missing: add a comment line \
         `# reference_diameter = <metres>` before the data, or pass one to the \
         constructor",
        .path.display()
    )]
    MissingReferenceDiameter {
        /// Table file.
        path: PathBuf,
        /// Line of the header row (1-based).
        line: usize,
    },

    /// The reference diameter is zero, negative or not finite.
    #[error(
        "{}: reference diameter {value} m must be positive and finite",
        location(.path, *.line)
    )]
    InvalidReferenceDiameter {
        /// Table file.
        path: PathBuf,
        /// Line of the `reference_diameter` comment, or `None` when the
        /// value came from the caller.
        line: Option<usize>,
        /// The offending value, in m.
        value: f64,
    },

    /// A repeated or conflicting `reference_diameter`.
    #[error(
        "{}:{line}: reference diameter {value} m conflicts with {other} m {other_origin}",
        .path.display()
    )]
    ConflictingReferenceDiameter {
        /// Table file.
        path: PathBuf,
        /// Line of the (second) `reference_diameter` comment (1-based).
        line: usize,
        /// Value on this line, in m.
        value: f64,
        /// The other value, in m.
        other: f64,
        /// Where the other value came from (an earlier line, or the caller).
        other_origin: String,
    },

    /// `evaluate` or `derivative` was asked for an angle outside the range a
    /// non-periodic table covers.
    #[error(
        "{}: angle of attack {}° is outside the table's range [{}°, {}°] (the \
         table does not span 360°, so it is not periodic)",
        .path.display(),
        round_deg(*.alpha_deg),
        round_deg(*.min_deg),
        round_deg(*.max_deg)
    )]
    OutOfRange {
        /// Table file.
        path: PathBuf,
        /// The requested angle, in degrees.
        alpha_deg: f64,
        /// First tabulated angle, in degrees.
        min_deg: f64,
        /// Last tabulated angle, in degrees.
        max_deg: f64,
    },

    /// `evaluate` or `derivative` was asked for a NaN or infinite angle.
    #[error("{}: angle of attack {alpha} rad is not finite", .path.display())]
    NonFiniteAngle {
        /// Table file.
        path: PathBuf,
        /// The requested angle, in rad.
        alpha: f64,
    },
}

impl TableError {
    /// The table file (or origin name) the error is about.
    pub fn path(&self) -> &Path {
        match self {
            Self::Unreadable { path, .. }
            | Self::NoHeader { path, .. }
            | Self::MissingColumn { path, .. }
            | Self::DuplicateColumn { path, .. }
            | Self::FieldCount { path, .. }
            | Self::NotANumber { path, .. }
            | Self::NonFinite { path, .. }
            | Self::TooFewPoints { path, .. }
            | Self::DuplicateAlpha { path, .. }
            | Self::NotIncreasing { path, .. }
            | Self::Gap { path, .. }
            | Self::SpanExceedsPeriod { path, .. }
            | Self::PeriodMismatch { path, .. }
            | Self::MissingReferenceDiameter { path, .. }
            | Self::InvalidReferenceDiameter { path, .. }
            | Self::ConflictingReferenceDiameter { path, .. }
            | Self::OutOfRange { path, .. }
            | Self::NonFiniteAngle { path, .. } => path,
        }
    }

    /// The 1-based line of the file the error is about, when there is one.
    pub fn line(&self) -> Option<usize> {
        match self {
            Self::NoHeader { line, .. }
            | Self::MissingColumn { line, .. }
            | Self::DuplicateColumn { line, .. }
            | Self::FieldCount { line, .. }
            | Self::NotANumber { line, .. }
            | Self::NonFinite { line, .. }
            | Self::TooFewPoints { line, .. }
            | Self::DuplicateAlpha { line, .. }
            | Self::NotIncreasing { line, .. }
            | Self::Gap { line, .. }
            | Self::SpanExceedsPeriod { line, .. }
            | Self::PeriodMismatch { line, .. }
            | Self::MissingReferenceDiameter { line, .. }
            | Self::ConflictingReferenceDiameter { line, .. } => Some(*line),
            Self::InvalidReferenceDiameter { line, .. } => *line,
            Self::Unreadable { .. } | Self::OutOfRange { .. } | Self::NonFiniteAngle { .. } => None,
        }
    }
}

/// An angle in degrees rounded to 1e-9° for messages (so 30° converted to
/// rad and back prints as 30, not 29.999999999999996).
fn round_deg(deg: f64) -> f64 {
    (deg * 1e9).round() / 1e9
}

/// `path:line`, or `path (given by the caller)` when there is no line.
fn location(path: &Path, line: Option<usize>) -> String {
    match line {
        Some(line) => format!("{}:{line}", path.display()),
        None => format!("{} (value given by the caller)", path.display()),
    }
}
