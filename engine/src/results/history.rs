//! Streaming of `/dynamic` histories: extendible datasets chunked along
//! time and compressed (byte shuffle, then deflate level 1), appended a
//! block of records at a time so a run of any length needs memory for two
//! blocks only. A full block is compressed and written on a thread of its
//! own while the run steps on; the next block, a flush, a checkpoint or
//! the end of the run waits for it, so the file's contents and the order
//! of writes are those of a serial writer.

use super::hdf5_file::ResultsWriter;
use crate::error::GlazeError;
use hdf5::types::VarLenUnicode;
use ndarray::{s, Array1, Array2, Array3};
use std::path::PathBuf;

/// Records buffered before each write (and the chunk length along time).
/// Blocks are written whole, at multiples of `BLOCK` records, so a chunk
/// already on disk is never written again in a run (a checkpoint keeps the
/// records of the unfinished block itself).
pub const BLOCK: usize = 64;

/// Test hook: with this variable set to N, the first block write past N
/// records fails as a full disk would (for the tests of a write error in
/// the middle of a run; see DEVELOPERS.md).
pub const FAIL_AFTER_RECORDS_VAR: &str = "GLAZE_TEST_FAIL_WRITE_AFTER_RECORDS";

/// Names of the `/dynamic/energy` columns.
pub const ENERGY_COLUMNS: [&str; 5] =
    ["kinetic", "strain", "gravity_potential", "dissipated", "aerodynamic_work"];

/// One recorded state.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Record {
    /// Time, in s.
    pub time: f64,
    /// Displacement from `/static/position` per node, in m.
    pub displacement: Vec<[f64; 3]>,
    /// Rotation per node from the reference triad, quaternion (w, x, y, z).
    pub rotation: Vec<[f64; 4]>,
    /// Velocity per node, in m/s.
    pub velocity: Vec<[f64; 3]>,
    /// Axial force per element, in N.
    pub axial_force: Vec<f64>,
    /// Force of each support on its node, in N.
    pub support_force: Vec<[f64; 3]>,
    /// Energy terms in [`ENERGY_COLUMNS`] order, in J.
    pub energy: [f64; 5],
}

/// Appends records to `/dynamic`.
pub struct HistoryWriter {
    /// The datasets; `None` while a block is being written by `pending`.
    sink: Option<Sink>,
    /// The block being written, handing the datasets back when done.
    pending: Option<std::thread::JoinHandle<(Sink, Result<(), GlazeError>)>>,
    buffer: Vec<Record>,
    /// Records on the file or being written.
    written: usize,
    path: PathBuf,
    /// Records after which writes fail ([`FAIL_AFTER_RECORDS_VAR`]).
    fail_after: Option<usize>,
}

/// The `/dynamic` datasets and their inner sizes.
struct Sink {
    time: hdf5::Dataset,
    displacement: hdf5::Dataset,
    rotation: hdf5::Dataset,
    velocity: hdf5::Dataset,
    axial: hdf5::Dataset,
    support: hdf5::Dataset,
    energy: hdf5::Dataset,
    nodes: usize,
    elements: usize,
    supports: usize,
    path: PathBuf,
}

fn err(path: &std::path::Path, e: impl std::fmt::Display) -> GlazeError {
    GlazeError::Results { path: path.to_path_buf(), message: super::preflight::describe_write_error(e) }
}

fn extendible(
    g: &hdf5::Group,
    name: &str,
    inner: &[usize],
    unit: &str,
    path: &std::path::Path,
) -> Result<hdf5::Dataset, GlazeError> {
    let b = g.new_dataset::<f64>().shuffle().deflate(1);
    let ds = match inner {
        [] => b.chunk((BLOCK,)).shape((0..,)).create(name),
        [a] => b.chunk((BLOCK, (*a).max(1))).shape((0.., *a)).create(name),
        [a, c] => b.chunk((BLOCK, (*a).max(1), *c)).shape((0.., *a, *c)).create(name),
        _ => unreachable!("histories have at most two inner dimensions"),
    }
    .map_err(|e| err(path, e))?;
    let unit: VarLenUnicode = unit.parse().unwrap_or_default();
    ds.new_attr::<VarLenUnicode>()
        .create("unit")
        .and_then(|a| a.write_scalar(&unit))
        .map_err(|e| err(path, e))?;
    Ok(ds)
}

impl HistoryWriter {
    /// Creates `/dynamic` in `results` for `nodes` nodes, `elements`
    /// elements and `supports` supported nodes.
    pub fn create(
        results: &ResultsWriter,
        nodes: usize,
        elements: usize,
        supports: usize,
    ) -> Result<Self, GlazeError> {
        let path = results.target().to_path_buf();
        let g = results.file().create_group("dynamic").map_err(|e| err(&path, e))?;
        let energy = extendible(&g, "energy", &[ENERGY_COLUMNS.len()], "J", &path)?;
        let columns: Array1<VarLenUnicode> =
            ENERGY_COLUMNS.iter().map(|c| c.parse().unwrap_or_default()).collect();
        energy.new_attr_builder().with_data(columns.view()).create("columns").map_err(|e| err(&path, e))?;
        let sink = Sink {
            time: extendible(&g, "time", &[], "s", &path)?,
            displacement: extendible(&g, "displacement", &[nodes, 3], "m", &path)?,
            rotation: extendible(&g, "rotation", &[nodes, 4], "1", &path)?,
            velocity: extendible(&g, "velocity", &[nodes, 3], "m/s", &path)?,
            axial: extendible(&g, "element_axial_force", &[elements], "N", &path)?,
            support: extendible(&g, "support_force", &[supports, 3], "N", &path)?,
            energy,
            nodes,
            elements,
            supports,
            path: path.clone(),
        };
        Ok(Self {
            sink: Some(sink),
            pending: None,
            buffer: Vec::with_capacity(BLOCK),
            written: 0,
            path,
            fail_after: std::env::var(FAIL_AFTER_RECORDS_VAR).ok().and_then(|v| v.trim().parse().ok()),
        })
    }

    /// Reopens `/dynamic` of a reopened results file to continue after
    /// `written` records (a multiple of [`BLOCK`]), truncating its datasets
    /// there, with `buffered` records of the unfinished block to come.
    ///
    /// # Errors
    /// [`GlazeError::Resume`] when the datasets are missing, of another
    /// shape, or shorter than `written`.
    pub fn reopen(
        results: &ResultsWriter,
        (nodes, elements, supports): (usize, usize, usize),
        written: usize,
        buffered: Vec<Record>,
    ) -> Result<Self, GlazeError> {
        let path = results.target().to_path_buf();
        let refuse = |message: String| GlazeError::Resume { path: super::partial_path(&path), message };
        let g = results.file().group("dynamic").map_err(|e| refuse(format!("no /dynamic group ({e})")))?;
        let open = |name: &str, inner: &[usize]| -> Result<hdf5::Dataset, GlazeError> {
            let ds = g.dataset(name).map_err(|e| refuse(format!("no /dynamic/{name} ({e})")))?;
            let shape = ds.shape();
            if shape.len() != inner.len() + 1 || shape[1..] != *inner || shape[0] < written {
                return Err(refuse(format!(
                    "/dynamic/{name} has shape {shape:?}; the checkpoint needs {written} records of {inner:?}"
                )));
            }
            Ok(ds)
        };
        let sink = Sink {
            time: open("time", &[])?,
            displacement: open("displacement", &[nodes, 3])?,
            rotation: open("rotation", &[nodes, 4])?,
            velocity: open("velocity", &[nodes, 3])?,
            axial: open("element_axial_force", &[elements])?,
            support: open("support_force", &[supports, 3])?,
            energy: open("energy", &[ENERGY_COLUMNS.len()])?,
            nodes,
            elements,
            supports,
            path: path.clone(),
        };
        let resize = |ds: &hdf5::Dataset| {
            let mut shape = ds.shape();
            shape[0] = written;
            ds.resize(shape).map_err(|e| err(&path, e))
        };
        let all =
            [&sink.time, &sink.displacement, &sink.rotation, &sink.velocity, &sink.axial, &sink.support];
        for ds in all.into_iter().chain([&sink.energy]) {
            resize(ds)?;
        }
        Ok(Self {
            sink: Some(sink),
            pending: None,
            buffer: buffered,
            written,
            path: path.clone(),
            fail_after: std::env::var(FAIL_AFTER_RECORDS_VAR).ok().and_then(|v| v.trim().parse().ok()),
        })
    }

    /// Waits for the block being written, if any, and reports its outcome.
    pub fn settle(&mut self) -> Result<(), GlazeError> {
        if let Some(job) = self.pending.take() {
            let (sink, outcome) =
                job.join().map_err(|_| err(&self.path, "the thread writing the histories stopped"))?;
            self.sink = Some(sink);
            outcome?;
        }
        Ok(())
    }

    /// Time of written record `i`, s (read back from the file, after any
    /// block being written).
    pub fn written_time(&mut self, i: usize) -> Result<f64, GlazeError> {
        self.settle()?;
        let path = &self.path;
        let sink = self.sink.as_ref().ok_or_else(|| err(path, "an earlier write of the histories failed"))?;
        let v: Vec<f64> = sink.time.read_slice_1d::<f64, _>(s![i..i + 1]).map_err(|e| err(path, e))?.to_vec();
        v.first().copied().ok_or_else(|| err(path, format!("record {i} is not in the file")))
    }

    /// Records on the file or being written (whole blocks, until the final
    /// flush); after [`settle`](Self::settle), on the file.
    pub fn written(&self) -> usize {
        self.written
    }

    /// Records not yet written (those of the unfinished block).
    pub fn buffered(&self) -> &[Record] {
        &self.buffer
    }

    /// Buffers one record; when the block is full, waits for the block
    /// before it and starts writing this one on a thread of its own.
    pub fn push(&mut self, record: Record) -> Result<(), GlazeError> {
        self.buffer.push(record);
        if self.buffer.len() == BLOCK {
            self.settle()?;
            self.launch()?;
        }
        Ok(())
    }

    /// Records written or buffered so far.
    pub fn len(&self) -> usize {
        self.written + self.buffer.len()
    }

    /// Whether nothing was recorded.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Hands the buffered records to a writing thread (call settled).
    fn launch(&mut self) -> Result<(), GlazeError> {
        let k = self.buffer.len();
        let (a, b) = (self.written, self.written + k);
        if self.fail_after.is_some_and(|n| b > n) {
            return Err(err(
                &self.path,
                format!("No space left on device (os error 28), simulated by {FAIL_AFTER_RECORDS_VAR}"),
            ));
        }
        let path = &self.path;
        let sink = self.sink.take().ok_or_else(|| err(path, "an earlier write of the histories failed"))?;
        let block = std::mem::replace(&mut self.buffer, Vec::with_capacity(BLOCK));
        self.written = b;
        self.pending = Some(std::thread::spawn(move || {
            let outcome = sink.write(a, &block);
            (sink, outcome)
        }));
        Ok(())
    }

    /// Writes the buffered records and waits until all are on the file.
    pub fn flush(&mut self) -> Result<(), GlazeError> {
        self.settle()?;
        if !self.buffer.is_empty() {
            self.launch()?;
            self.settle()?;
        }
        Ok(())
    }
}

impl Drop for HistoryWriter {
    /// A block still being written is finished before the file can close.
    fn drop(&mut self) {
        if let Some(job) = self.pending.take() {
            let _ = job.join();
        }
    }
}

impl Sink {
    /// Writes `buf` as records `a..a + buf.len()`.
    fn write(&self, a: usize, buf: &[Record]) -> Result<(), GlazeError> {
        let (k, b) = (buf.len(), a + buf.len());
        let (n, e, sn) = (self.nodes, self.elements, self.supports);
        let p = &self.path;
        let time: Array1<f64> = buf.iter().map(|r| r.time).collect();
        let disp = Array3::from_shape_fn((k, n, 3), |(t, i, d)| buf[t].displacement[i][d]);
        let rot = Array3::from_shape_fn((k, n, 4), |(t, i, d)| buf[t].rotation[i][d]);
        let vel = Array3::from_shape_fn((k, n, 3), |(t, i, d)| buf[t].velocity[i][d]);
        let axial = Array2::from_shape_fn((k, e), |(t, i)| buf[t].axial_force[i]);
        let sup = Array3::from_shape_fn((k, sn, 3), |(t, i, d)| buf[t].support_force[i][d]);
        let energy = Array2::from_shape_fn((k, ENERGY_COLUMNS.len()), |(t, c)| buf[t].energy[c]);
        self.time.resize((b,)).and_then(|_| self.time.write_slice(&time, s![a..b])).map_err(|x| err(p, x))?;
        self.displacement
            .resize((b, n, 3))
            .and_then(|_| self.displacement.write_slice(&disp, s![a..b, .., ..]))
            .map_err(|x| err(p, x))?;
        self.rotation
            .resize((b, n, 4))
            .and_then(|_| self.rotation.write_slice(&rot, s![a..b, .., ..]))
            .map_err(|x| err(p, x))?;
        self.velocity
            .resize((b, n, 3))
            .and_then(|_| self.velocity.write_slice(&vel, s![a..b, .., ..]))
            .map_err(|x| err(p, x))?;
        self.axial
            .resize((b, e))
            .and_then(|_| self.axial.write_slice(&axial, s![a..b, ..]))
            .map_err(|x| err(p, x))?;
        self.support
            .resize((b, sn, 3))
            .and_then(|_| self.support.write_slice(&sup, s![a..b, .., ..]))
            .map_err(|x| err(p, x))?;
        self.energy
            .resize((b, ENERGY_COLUMNS.len()))
            .and_then(|_| self.energy.write_slice(&energy, s![a..b, ..]))
            .map_err(|x| err(p, x))?;
        Ok(())
    }
}
