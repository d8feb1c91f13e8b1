//! Analysis stages.

pub mod modal;
pub mod mode_shape;
mod static_stage;
mod static_system;

pub use modal::{
    run_modal, EigenMethod, Linearisation, ModalError, ModalResult, ModalSettings, ModeSet,
};
pub use static_stage::{run_static, SpanSummary, StaticResult};
pub use static_system::{Configuration, StaticSystem};
