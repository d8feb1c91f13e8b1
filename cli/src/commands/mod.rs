//! One file per command; this module holds what they share.

mod check;
mod modes;
mod run;
mod screen;
mod static_cmd;

pub use check::check;
pub use modes::{run_modes, SolverChoice};
pub use run::run;
pub use screen::{run_screen, ScreenFormat};
pub use static_cmd::run_static;

use glaze_engine::{GlazeError, InputErrorKind};

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
    }
}
