//! One file per command; this module holds what they share.

/// `println!` that ends the program quietly when stdout is closed (e.g.
/// `glaze screen FILE | head`) instead of panicking.
macro_rules! out {
    () => { $crate::commands::write_stdout(format_args!("\n")) };
    ($($arg:tt)*) => { $crate::commands::write_stdout(format_args!("{}\n", format_args!($($arg)*))) };
}

/// `print!` with the same behaviour as [`out!`].
macro_rules! out_part {
    ($($arg:tt)*) => { $crate::commands::write_stdout(format_args!($($arg)*)) };
}

mod bench;
mod check;
mod compare;
mod modes;
mod post;
mod run;
mod screen;
mod static_cmd;
mod sweep;

pub use bench::{bench, bench_one, BenchOptions};
pub use check::check;
pub use compare::compare;
pub use modes::{run_modes, SolverChoice};
pub use post::post;
pub use run::run;
pub use screen::{run_screen, ScreenFormat};
pub use static_cmd::run_static;
pub use sweep::{emit_batch, sweep, BatchKind, BatchSettings, SweepEnd};

use glaze_engine::{GlazeError, InputErrorKind, SectionSpec};
use std::path::Path;

/// Prints the input's warnings on stderr, one a line:
/// `warning: FILE:LINE: KEY: message` (nothing with `--quiet`).
pub fn print_warnings(spec: &SectionSpec, quiet: bool) {
    if quiet {
        return;
    }
    for w in &spec.warnings {
        eprintln!("warning: {w}");
    }
}

/// After a failed command: no results file at `out`, and no partial file
/// either (one left by a failed `finish` may already say `complete = 1`).
pub fn remove_results(out: &Path) {
    let _ = std::fs::remove_file(out);
    let _ = std::fs::remove_file(glaze_engine::results::partial_path(out));
}

/// A results error on one line, a full disk said plainly.
pub fn one_line(e: GlazeError) -> GlazeError {
    match e {
        GlazeError::Results { path, message } => GlazeError::Results {
            message: glaze_engine::results::preflight::describe_write_error(message),
            path,
        },
        e => e,
    }
}

/// A write error that stopped a run once its file was open: the file is
/// removed and the message says so.
pub fn write_failed(e: GlazeError, out: &Path) -> GlazeError {
    remove_results(out);
    match one_line(e) {
        GlazeError::Results { path, message } => {
            GlazeError::Results { message: format!("{message}; the unfinished file was removed"), path }
        }
        e => e,
    }
}

/// Writes to stdout; a closed pipe ends the program with exit code 0.
pub fn write_stdout(args: std::fmt::Arguments<'_>) {
    use std::io::Write;
    if let Err(e) = std::io::stdout().write_fmt(args) {
        if e.kind() == std::io::ErrorKind::BrokenPipe {
            std::process::exit(0);
        }
    }
}

/// The caution every report carries.
pub const CAUTION: &str =
    "Caution: glaze results support, and never replace, the judgement of a licensed engineer \
and the clearances and load cases of the local code.";

/// Exit code for an error (see the crate docs).
pub fn exit_code(e: &GlazeError) -> u8 {
    match e {
        GlazeError::Input(i) if i.kind == InputErrorKind::NotConverged => 3,
        GlazeError::Input(_) => 2,
        GlazeError::Results { .. } => 4,
        GlazeError::Analysis { .. } => 3,
        GlazeError::Diverged { .. } => 8,
        GlazeError::Resume { .. } => 2,
    }
}
