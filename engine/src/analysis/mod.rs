//! Analysis stages.

pub mod dynamic_stage;
pub mod dynamic_system;
pub mod modal;
pub mod mode_shape;
pub mod rayleigh;
pub mod screening;
mod static_stage;
mod static_system;

pub use modal::{run_modal, EigenMethod, Linearisation, ModalError, ModalResult, ModalSettings, ModeSet};
pub use screening::{run_screening, ModeAtSpeed, ModeScreening, ScreeningResult};
pub use static_stage::{run_static, SpanSummary, StaticResult};
pub use static_system::{Configuration, StaticSystem};
