//! Analysis stages.

mod static_stage;
mod static_system;

pub use static_stage::{run_static, SpanSummary, StaticResult};
pub use static_system::{Configuration, StaticSystem};
