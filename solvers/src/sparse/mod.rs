//! Sparse structure: the sparsity pattern of a global matrix and the
//! precomputed scatter of element matrices into it.

mod assembly;
mod pattern;

pub use assembly::Assembler;
pub use pattern::{CompressedMatrix, SparsityPattern};
