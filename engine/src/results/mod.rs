//! HDF5 results files.

mod checkpoint;
mod hdf5_file;
mod history;
pub mod preflight;

pub use checkpoint::{checkpoint_path, fnv1a64, Checkpoint, EnergyState, CHECKPOINT_VERSION};
pub use hdf5_file::{partial_path, ResultsWriter, FORMAT_NAME, FORMAT_VERSION};
pub use history::{HistoryWriter, Record, BLOCK, ENERGY_COLUMNS};
