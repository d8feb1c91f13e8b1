//! Form-finding: unstretched lengths and stringing geometry from a sag,
//! tension or catenary-parameter target.

pub mod discrete_chain;
pub mod elastic_catenary;

pub use discrete_chain::{ChainLayout, DiscreteChain};
pub use elastic_catenary::{Catenary, CatenaryError, CatenarySpan};
