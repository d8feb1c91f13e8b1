//! HDF5 results files.

mod hdf5_file;
mod history;
pub mod preflight;

pub use hdf5_file::{partial_path, ResultsWriter, FORMAT_NAME, FORMAT_VERSION};
pub use history::{HistoryWriter, Record, ENERGY_COLUMNS};
