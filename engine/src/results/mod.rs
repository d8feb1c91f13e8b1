//! HDF5 results files.

mod hdf5_file;

pub use hdf5_file::{partial_path, ResultsWriter, FORMAT_NAME, FORMAT_VERSION};
