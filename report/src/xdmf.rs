//! An XDMF 3 description of a results file's `/dynamic` histories, so a
//! general-purpose viewer (ParaView) or reader (the `meshio` Python
//! package) can animate the whole line.
//!
//! [`write_xdmf`] writes two files side by side:
//!
//! - `NAME.xdmf`: a Temporal collection of Uniform grids, one per output
//!   record. Topology `Polyline` (2 nodes per element) over the 2-node
//!   elements (single-node elements such as torsion restraints and point
//!   masses are left out), inline as XML text in the first grid and taken
//!   into the others by `xi:include`. Geometry: the node positions at that
//!   time. Node attributes `position` (m, the same values as the geometry,
//!   for readers that take the mesh of the first time step only, as meshio's
//!   `TimeSeriesReader` does), `displacement` (m, from `/static/position`)
//!   and `velocity` (m/s), vectors; cell attribute `axial_force` (N, tension
//!   positive), scalar.
//! - `NAME.xdmf.h5` (the file stem of `NAME.xdmf` plus `.xdmf.h5`): one
//!   dataset per record and quantity, `/position/000000`, `/displacement/…`,
//!   `/velocity/…` ([n,3] f64) and `/axial_force/…` ([c] f64, the 2-node
//!   elements in results-file order), shuffled and deflate-compressed, in
//!   the HDF5 1.10 file format.
//!
//! The XDMF refers to the companion file by its bare name, so the pair can
//! be moved together; it does not refer to the results file. One dataset
//! per record rather than hyperslabs of one `[T,n,3]` dataset: meshio's
//! `TimeSeriesReader` (5.3) cannot read `ItemType="HyperSlab"` items.
//!
//! Both files are written as `….partial` and renamed when whole, the
//! companion first; after an error neither file is at its target path.

use glaze_engine::results::{partial_path, FORMAT_NAME, FORMAT_VERSION};
use hdf5::types::VarLenUnicode;
use ndarray::s;
use std::fmt::Write as _;
use std::fs;
use std::io::Write as _;
use std::path::{Path, PathBuf};

/// Name of the Temporal collection grid (the `xi:include` pointers name it).
const COLLECTION: &str = "glaze";
/// Largest block of records read from the results file at once, bytes.
const BLOCK_BYTES: usize = 64 << 20;

/// What [`write_xdmf`] wrote.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct XdmfSummary {
    /// Number of nodes (points).
    pub nodes: usize,
    /// Number of 2-node elements (polyline cells).
    pub cells: usize,
    /// Number of time steps (output records).
    pub time_steps: usize,
}

/// Why an XDMF description could not be written.
#[derive(Debug, thiserror::Error)]
pub enum XdmfError {
    /// The results file cannot be read or is not a glaze results file.
    #[error("{}: {message}", path.display())]
    Results {
        /// The results file.
        path: PathBuf,
        /// What is wrong.
        message: String,
    },
    /// The results file was not finished (`complete` is not 1).
    #[error(
        "{}: the results file is incomplete (root attribute `complete` is not 1: the run was stopped \
         or failed before it finished); an XDMF description is written only for a finished file",
        path.display()
    )]
    Incomplete {
        /// The results file.
        path: PathBuf,
    },
    /// The results file has no `/dynamic` histories.
    #[error(
        "{}: the results file has no /dynamic histories (they are written by `glaze run`); \
         there is nothing to animate",
        path.display()
    )]
    NoDynamics {
        /// The results file.
        path: PathBuf,
    },
    /// An output file cannot be written.
    #[error("cannot write {}: {message}", path.display())]
    Output {
        /// The file.
        path: PathBuf,
        /// What went wrong.
        message: String,
    },
}

/// Writes `xdmf` and its companion `<stem>.xdmf.h5` (in the same folder)
/// describing the `/dynamic` histories of the complete results file
/// `results` (format version 1 up to this build's). Refuses an incomplete
/// file or one without `/dynamic`.
///
/// # Errors
/// [`XdmfError::Results`], [`XdmfError::Incomplete`],
/// [`XdmfError::NoDynamics`] or [`XdmfError::Output`]; no output file is
/// left at either target path.
pub fn write_xdmf(results: &Path, xdmf: &Path) -> Result<XdmfSummary, XdmfError> {
    let targets = Targets::new(results, xdmf)?;
    let out = Source::open(results).and_then(|src| write_pair(&src, &targets));
    if out.is_err() {
        targets.remove_all();
    }
    out
}

/// The output paths.
struct Targets {
    xdmf: PathBuf,
    xdmf_partial: PathBuf,
    data: PathBuf,
    data_partial: PathBuf,
    /// The companion's file name, as the XDMF refers to it.
    data_name: String,
}

fn same_file(a: &Path, b: &Path) -> bool {
    matches!((fs::canonicalize(a), fs::canonicalize(b)), (Ok(x), Ok(y)) if x == y)
}

impl Targets {
    fn new(results: &Path, xdmf: &Path) -> Result<Self, XdmfError> {
        let bad = |message: &str| XdmfError::Output { path: xdmf.into(), message: message.into() };
        let stem = xdmf
            .file_stem()
            .filter(|_| xdmf.file_name().is_some())
            .ok_or_else(|| bad("the path has no file name"))?
            .to_str()
            .ok_or_else(|| bad("the file name is not UTF-8"))?;
        let data_name = format!("{stem}.xdmf.h5");
        if data_name.contains(':') {
            return Err(bad(
                "a ':' in the file name cannot be referenced from XDMF (it separates file and dataset)",
            ));
        }
        let data = xdmf.with_file_name(&data_name);
        let t = Self {
            xdmf: xdmf.into(),
            xdmf_partial: partial_path(xdmf),
            data_partial: partial_path(&data),
            data,
            data_name,
        };
        for p in [&t.xdmf, &t.xdmf_partial, &t.data, &t.data_partial] {
            if same_file(results, p) {
                return Err(XdmfError::Output {
                    path: p.clone(),
                    message: "that is the results file itself".into(),
                });
            }
        }
        Ok(t)
    }

    fn remove_all(&self) {
        for p in [&self.xdmf_partial, &self.data_partial, &self.xdmf, &self.data] {
            // Absent is fine; a path that cannot be removed is left as it is.
            let _ = fs::remove_file(p);
        }
    }
}

/// A complete results file with `/dynamic`, opened for reading.
struct Source {
    path: PathBuf,
    file: hdf5::File,
    /// `/static/position`, `[node][3]` flattened, m.
    static_position: Vec<f64>,
    /// Elements in `/model/element_nodes`.
    elements: usize,
    /// Node pairs of the 2-node elements.
    cells: Vec<[usize; 2]>,
    /// Index of each cell's element.
    cell_elements: Vec<usize>,
    /// `/dynamic/time`, s.
    time: Vec<f64>,
}

impl Source {
    fn err(&self, what: &str, e: impl std::fmt::Display) -> XdmfError {
        XdmfError::Results { path: self.path.clone(), message: format!("{what}: {e}") }
    }

    fn open(path: &Path) -> Result<Self, XdmfError> {
        let fail = |message: String| XdmfError::Results { path: path.into(), message };
        if !path.is_file() {
            return Err(fail("no such file".into()));
        }
        let file = hdf5::File::open(path).map_err(|e| fail(format!("not an HDF5 file: {e}")))?;
        let format = file
            .attr("format")
            .and_then(|a| a.read_scalar::<VarLenUnicode>())
            .ok()
            .map(|s| s.as_str().to_string());
        if format.as_deref() != Some(FORMAT_NAME) {
            return Err(fail(format!(
                "not a glaze results file (root attribute `format` is {}, expected `{FORMAT_NAME}`)",
                format.map_or("absent".into(), |f| format!("`{f}`"))
            )));
        }
        // Version 1 differs from 2 only in tables this module does not read.
        let version = file.attr("format_version").and_then(|a| a.read_scalar::<u32>()).ok();
        if !matches!(version, Some(v) if (1..=FORMAT_VERSION).contains(&v)) {
            return Err(fail(format!(
                "results format version {} but this glaze reads versions 1 to {FORMAT_VERSION}",
                version.map_or("absent".into(), |v| v.to_string())
            )));
        }
        if file.attr("complete").and_then(|a| a.read_scalar::<u32>()).ok() != Some(1) {
            return Err(XdmfError::Incomplete { path: path.into() });
        }
        if file.group("dynamic").is_err() {
            return Err(XdmfError::NoDynamics { path: path.into() });
        }
        let mut src = Self {
            path: path.into(),
            file,
            static_position: Vec::new(),
            elements: 0,
            cells: Vec::new(),
            cell_elements: Vec::new(),
            time: Vec::new(),
        };
        let (shape, pos) = src.read::<f64>("static/position")?;
        let n = match shape[..] {
            [n, 3] => n,
            _ => return Err(src.err("static/position", format!("shape {shape:?}, expected [n, 3]"))),
        };
        let (shape, conn) = src.read::<i64>("model/element_nodes")?;
        let e = match shape[..] {
            [e, 2] => e,
            _ => return Err(src.err("model/element_nodes", format!("shape {shape:?}, expected [e, 2]"))),
        };
        for (k, pair) in conn.chunks_exact(2).enumerate() {
            if pair.iter().any(|&a| a >= n as i64) {
                return Err(
                    src.err("model/element_nodes", format!("element {k}: node index beyond {n} nodes"))
                );
            }
            if let (Ok(a), Ok(b)) = (usize::try_from(pair[0]), usize::try_from(pair[1])) {
                src.cells.push([a, b]);
                src.cell_elements.push(k);
            }
        }
        if src.cells.is_empty() {
            return Err(src.err("model/element_nodes", "no 2-node elements to draw"));
        }
        let (shape, time) = src.read::<f64>("dynamic/time")?;
        let t = time.len();
        if shape.len() != 1 || t == 0 {
            return Err(src.err("dynamic/time", format!("shape {shape:?}, expected at least one record")));
        }
        if let Some(k) = time.iter().position(|v| !v.is_finite()) {
            return Err(src.err("dynamic/time", format!("record {k}: time is not a finite number")));
        }
        for (name, want) in [
            ("dynamic/displacement", vec![t, n, 3]),
            ("dynamic/velocity", vec![t, n, 3]),
            ("dynamic/element_axial_force", vec![t, e]),
        ] {
            let got = src.file.dataset(name).map_err(|err| src.err(name, err))?.shape();
            if got != want {
                return Err(src.err(name, format!("shape {got:?}, expected {want:?} from the model")));
            }
        }
        src.static_position = pos;
        src.elements = e;
        src.time = time;
        Ok(src)
    }

    fn read<T: hdf5::H5Type>(&self, name: &str) -> Result<(Vec<usize>, Vec<T>), XdmfError> {
        let ds = self.file.dataset(name).map_err(|e| self.err(name, e))?;
        let data = ds.read_raw::<T>().map_err(|e| self.err(name, e))?;
        Ok((ds.shape(), data))
    }

    fn nodes(&self) -> usize {
        self.static_position.len() / 3
    }

    /// Records `range` of a `/dynamic` dataset, record-major and flattened.
    fn block(&self, name: &str, range: std::ops::Range<usize>, width: usize) -> Result<Vec<f64>, XdmfError> {
        let want = range.len() * width;
        let ds = self.file.dataset(name).map_err(|e| self.err(name, e))?;
        let data = match ds.ndim() {
            2 => ds.read_slice_2d::<f64, _>(s![range, ..]).map(|a| a.into_raw_vec_and_offset().0),
            _ => ds
                .read_slice::<f64, _, ndarray::Ix3>(s![range, .., ..])
                .map(|a| a.into_raw_vec_and_offset().0),
        };
        match data {
            Ok(v) if v.len() == want => Ok(v),
            Ok(v) => Err(self.err(name, format!("read {} values, expected {want}", v.len()))),
            Err(e) => Err(self.err(name, e)),
        }
    }

    /// Records read at once: the time chunk of the histories, within [`BLOCK_BYTES`].
    fn block_len(&self) -> usize {
        let chunk = self
            .file
            .dataset("dynamic/displacement")
            .ok()
            .and_then(|d| d.chunk())
            .and_then(|c| c.first().copied())
            .unwrap_or(64);
        let per_record = 8 * (6 * self.nodes() + self.elements);
        chunk.min(BLOCK_BYTES / per_record.max(1)).max(1)
    }
}

/// Text safe in an XML attribute or element.
fn escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
        .replace('\'', "&apos;")
}

/// The companion file being written.
struct Data {
    file: hdf5::File,
    path: PathBuf,
}

impl Data {
    fn err(&self, e: impl std::fmt::Display) -> XdmfError {
        XdmfError::Output { path: self.path.clone(), message: e.to_string() }
    }

    fn create(path: &Path, source: &str) -> Result<Self, XdmfError> {
        let fail = |e: hdf5::Error| XdmfError::Output { path: path.into(), message: e.to_string() };
        // The 1.10 object headers and single-chunk index keep the many small
        // datasets small (half the size of the earliest format).
        let file = hdf5::File::with_options().with_fapl(|p| p.libver_v110()).create(path).map_err(fail)?;
        let d = Self { file, path: path.into() };
        d.text_attr(&d.file, "source", source)?;
        for (group, unit) in
            [("position", "m"), ("displacement", "m"), ("velocity", "m/s"), ("axial_force", "N")]
        {
            let g = d.file.create_group(group).map_err(|e| d.err(e))?;
            d.text_attr(&g, "unit", unit)?;
        }
        Ok(d)
    }

    fn text_attr(&self, at: &hdf5::Location, name: &str, value: &str) -> Result<(), XdmfError> {
        let v: VarLenUnicode = value.replace('\0', " ").parse().map_err(|e| self.err(e))?;
        at.new_attr::<VarLenUnicode>().create(name).and_then(|a| a.write_scalar(&v)).map_err(|e| self.err(e))
    }

    /// Writes `values` as `/group/name` of shape `[rows]` or `[rows, 3]`.
    fn put(&self, group: &str, name: &str, values: &[f64], vector: bool) -> Result<(), XdmfError> {
        let b = self.file.new_dataset::<f64>().shuffle().deflate(4);
        let path = format!("{group}/{name}");
        let ds = if vector {
            let rows = values.len() / 3;
            b.shape((rows, 3)).chunk((rows.max(1), 3)).create(path.as_str())
        } else {
            b.shape(values.len()).chunk(values.len().max(1)).create(path.as_str())
        };
        ds.and_then(|ds| ds.write_raw(values)).map_err(|e| self.err(format!("{path}: {e}")))
    }
}

fn data_item(dims: &str, file: &str, dataset: &str) -> String {
    format!(
        "<DataItem Dimensions=\"{dims}\" DataType=\"Float\" Precision=\"8\" Format=\"HDF\">{file}:{dataset}</DataItem>"
    )
}

fn write_pair(src: &Source, t: &Targets) -> Result<XdmfSummary, XdmfError> {
    let (n, c, records) = (src.nodes(), src.cells.len(), src.time.len());
    let source_name = src.path.file_name().map(|f| f.to_string_lossy().into_owned()).unwrap_or_default();
    let data = Data::create(&t.data_partial, &source_name)?;
    let xml_err =
        |e: std::io::Error| XdmfError::Output { path: t.xdmf_partial.clone(), message: e.to_string() };
    let mut xml = std::io::BufWriter::new(fs::File::create(&t.xdmf_partial).map_err(xml_err)?);
    let file = escape(&t.data_name);

    let head = format!(
        "<?xml version=\"1.0\" encoding=\"utf-8\"?>\n\
         <Xdmf Version=\"3.0\" xmlns:xi=\"http://www.w3.org/2001/XInclude\">\n<Domain>\n\
         <Information Name=\"glaze_results\" Value=\"{}\"/>\n\
         <Grid Name=\"{COLLECTION}\" GridType=\"Collection\" CollectionType=\"Temporal\">\n",
        escape(&source_name)
    );
    let mut topology = format!(
        "<Topology TopologyType=\"Polyline\" NodesPerElement=\"2\" NumberOfElements=\"{c}\">\n\
         <DataItem Dimensions=\"{c} 2\" DataType=\"Int\" Precision=\"8\" Format=\"XML\">\n"
    );
    for [a, b] in &src.cells {
        let _ = writeln!(topology, "{a} {b}");
    }
    topology.push_str("</DataItem>\n</Topology>\n");
    let include =
        format!("<xi:include xpointer=\"xpointer(//Grid[@Name='{COLLECTION}']/Grid[1]/Topology)\"/>\n");
    xml.write_all(head.as_bytes()).map_err(xml_err)?;

    let block = src.block_len();
    let mut position = vec![0.0; 3 * n];
    let mut axial = vec![0.0; c];
    let mut start = 0;
    while start < records {
        let end = (start + block).min(records);
        let disp = src.block("dynamic/displacement", start..end, 3 * n)?;
        let vel = src.block("dynamic/velocity", start..end, 3 * n)?;
        let force = src.block("dynamic/element_axial_force", start..end, src.elements)?;
        for r in start..end {
            let k = r - start;
            let d = &disp[3 * n * k..3 * n * (k + 1)];
            for (p, (x, u)) in position.iter_mut().zip(src.static_position.iter().zip(d)) {
                *p = x + u;
            }
            let f = &force[src.elements * k..src.elements * (k + 1)];
            for (a, &el) in axial.iter_mut().zip(&src.cell_elements) {
                *a = f[el];
            }
            let name = format!("{r:06}");
            data.put("position", &name, &position, true)?;
            data.put("displacement", &name, d, true)?;
            data.put("velocity", &name, &vel[3 * n * k..3 * n * (k + 1)], true)?;
            data.put("axial_force", &name, &axial, false)?;

            let vector = |q: &str| data_item(&format!("{n} 3"), &file, &format!("/{q}/{name}"));
            let mut grid = format!(
                "<Grid Name=\"t{name}\" GridType=\"Uniform\">\n<Time Value=\"{:?}\"/>\n{}",
                src.time[r],
                if r == 0 { &topology } else { &include }
            );
            let _ = write!(
                grid,
                "<Geometry GeometryType=\"XYZ\">\n{p}\n</Geometry>\n\
                 <Attribute Name=\"position\" AttributeType=\"Vector\" Center=\"Node\">\n{p}\n</Attribute>\n\
                 <Attribute Name=\"displacement\" AttributeType=\"Vector\" Center=\"Node\">\n{}\n</Attribute>\n\
                 <Attribute Name=\"velocity\" AttributeType=\"Vector\" Center=\"Node\">\n{}\n</Attribute>\n\
                 <Attribute Name=\"axial_force\" AttributeType=\"Scalar\" Center=\"Cell\">\n{}\n</Attribute>\n\
                 </Grid>\n",
                vector("displacement"),
                vector("velocity"),
                data_item(&c.to_string(), &file, &format!("/axial_force/{name}")),
                p = vector("position"),
            );
            xml.write_all(grid.as_bytes()).map_err(xml_err)?;
        }
        start = end;
    }
    xml.write_all(b"</Grid>\n</Domain>\n</Xdmf>\n").map_err(xml_err)?;
    let xml = xml.into_inner().map_err(|e| xml_err(e.into_error()))?;
    xml.sync_all().map_err(xml_err)?;
    drop(xml);

    data.file
        .close()
        .map_err(|e| XdmfError::Output { path: t.data_partial.clone(), message: e.to_string() })?;
    let data_err = |e: std::io::Error| XdmfError::Output { path: t.data.clone(), message: e.to_string() };
    fs::File::open(&t.data_partial).and_then(|f| f.sync_all()).map_err(data_err)?;
    fs::rename(&t.data_partial, &t.data).map_err(data_err)?;
    fs::rename(&t.xdmf_partial, &t.xdmf).map_err(xml_err)?;
    Ok(XdmfSummary { nodes: n, cells: c, time_steps: records })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A hand-made results file: 3 nodes, elements [0,1], [1,2] and a
    /// single-node one on node 2, two records.
    fn results_file(path: &Path, complete: u32, dynamic: bool) {
        let f = hdf5::File::create(path).unwrap();
        let text = |name: &str, v: &str| {
            let v: VarLenUnicode = v.parse().unwrap();
            f.new_attr::<VarLenUnicode>().create(name).unwrap().write_scalar(&v).unwrap();
        };
        text("format", FORMAT_NAME);
        f.new_attr::<u32>().create("format_version").unwrap().write_scalar(&FORMAT_VERSION).unwrap();
        f.new_attr::<u32>().create("complete").unwrap().write_scalar(&complete).unwrap();
        let pos = ndarray::array![[0.0, 0.0, 10.0], [50.0, 0.0, 9.0], [100.0, 0.0, 10.0]];
        f.new_dataset_builder().with_data(pos.view()).create("static/position").unwrap();
        f.new_dataset_builder().with_data(pos.view()).create("model/node_position").unwrap();
        let conn = ndarray::array![[0i64, 1], [1, 2], [2, -1]];
        f.new_dataset_builder().with_data(conn.view()).create("model/element_nodes").unwrap();
        if dynamic {
            let g = f.create_group("dynamic").unwrap();
            let time = ndarray::array![0.0, 0.05];
            g.new_dataset_builder().with_data(time.view()).create("time").unwrap();
            let disp =
                ndarray::Array3::from_shape_fn((2, 3, 3), |(r, i, d)| (r * 100 + i * 10 + d) as f64 * 1e-3);
            g.new_dataset_builder().with_data(disp.view()).create("displacement").unwrap();
            let vel = disp.mapv(|v| -v);
            g.new_dataset_builder().with_data(vel.view()).create("velocity").unwrap();
            let force = ndarray::array![[1000.0, 1100.0, 5.0], [1200.0, 1300.0, 6.0]];
            g.new_dataset_builder().with_data(force.view()).create("element_axial_force").unwrap();
        }
    }

    fn leftovers(dir: &Path) -> Vec<String> {
        let mut v: Vec<String> = fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .filter(|n| n != "run.h5")
            .collect();
        v.sort();
        v
    }

    #[test]
    fn an_incomplete_file_is_refused_and_leaves_no_output_file() {
        let dir = tempfile::tempdir().unwrap();
        let results = dir.path().join("run.h5");
        results_file(&results, 0, true);
        // A stale description from an earlier run is not left beside it either.
        fs::write(dir.path().join("run.xdmf"), "stale").unwrap();
        let err = write_xdmf(&results, &dir.path().join("run.xdmf")).unwrap_err();
        assert!(matches!(err, XdmfError::Incomplete { .. }), "{err}");
        let msg = err.to_string();
        assert!(msg.contains("run.h5") && msg.contains("incomplete"), "{msg}");
        assert_eq!(leftovers(dir.path()), Vec::<String>::new());
    }

    #[test]
    fn a_file_without_dynamics_or_not_hdf5_is_refused() {
        let dir = tempfile::tempdir().unwrap();
        let results = dir.path().join("run.h5");
        results_file(&results, 1, false);
        let err = write_xdmf(&results, &dir.path().join("run.xdmf")).unwrap_err();
        assert!(matches!(err, XdmfError::NoDynamics { .. }) && err.to_string().contains("run.h5"), "{err}");
        fs::write(&results, "not hdf5").unwrap();
        let err = write_xdmf(&results, &dir.path().join("run.xdmf")).unwrap_err();
        assert!(matches!(err, XdmfError::Results { .. }) && err.to_string().contains("run.h5"), "{err}");
        let err = write_xdmf(&dir.path().join("absent.h5"), &dir.path().join("run.xdmf")).unwrap_err();
        assert!(err.to_string().contains("absent.h5: no such file"), "{err}");
        assert_eq!(leftovers(dir.path()), Vec::<String>::new());
    }

    #[test]
    fn an_unwritable_target_is_an_error_not_a_panic() {
        let dir = tempfile::tempdir().unwrap();
        let results = dir.path().join("run.h5");
        results_file(&results, 1, true);
        let err = write_xdmf(&results, &dir.path().join("absent/run.xdmf")).unwrap_err();
        assert!(matches!(err, XdmfError::Output { .. }) && err.to_string().contains("run.xdmf.h5"), "{err}");
        assert_eq!(leftovers(dir.path()), Vec::<String>::new());
    }

    #[test]
    fn the_results_file_is_never_an_output() {
        let dir = tempfile::tempdir().unwrap();
        let results = dir.path().join("run.h5");
        results_file(&results, 1, true);
        let err = write_xdmf(&results, &results).unwrap_err();
        assert!(err.to_string().contains("results file itself"), "{err}");
        assert!(results.exists());
        // `run.xdmf.h5` as the results file: the companion of `run.xdmf`.
        let other = dir.path().join("run.xdmf.h5");
        fs::rename(&results, &other).unwrap();
        let err = write_xdmf(&other, &dir.path().join("run.xdmf")).unwrap_err();
        assert!(err.to_string().contains("results file itself"), "{err}");
        assert!(other.exists());
    }

    #[test]
    fn positions_cells_and_forces_of_every_record() {
        let dir = tempfile::tempdir().unwrap();
        let results = dir.path().join("run.h5");
        results_file(&results, 1, true);
        let xdmf = dir.path().join("run.xdmf");
        let summary = write_xdmf(&results, &xdmf).unwrap();
        assert_eq!(summary, XdmfSummary { nodes: 3, cells: 2, time_steps: 2 });
        assert_eq!(leftovers(dir.path()), vec!["run.xdmf".to_string(), "run.xdmf.h5".to_string()]);

        let text = fs::read_to_string(&xdmf).unwrap();
        assert_eq!(text.matches("<Grid Name=\"t").count(), 2);
        assert!(text.contains("<DataItem Dimensions=\"2 2\" DataType=\"Int\" Precision=\"8\" Format=\"XML\">\n0 1\n1 2\n</DataItem>"));
        assert!(text.contains("<Time Value=\"0.05\"/>"));
        assert!(text.contains(">run.xdmf.h5:/position/000001</DataItem>"));
        assert!(text.contains("<xi:include xpointer="));

        let data = hdf5::File::open(dir.path().join("run.xdmf.h5")).unwrap();
        let p = data.dataset("position/000001").unwrap();
        assert_eq!(p.shape(), vec![3, 3]);
        let p = p.read_raw::<f64>().unwrap();
        // Node 1 at record 1: static (50, 0, 9) + displacement (0.110, 0.111, 0.112).
        assert!(
            (p[3] - 50.110).abs() < 1e-12 && (p[4] - 0.111).abs() < 1e-12 && (p[5] - 9.112).abs() < 1e-12
        );
        let f = data.dataset("axial_force/000001").unwrap().read_raw::<f64>().unwrap();
        assert_eq!(f, vec![1200.0, 1300.0], "the single-node element is left out");
        let v = data.dataset("velocity/000000").unwrap().read_raw::<f64>().unwrap();
        assert_eq!(v[8], -0.022);
    }
}
