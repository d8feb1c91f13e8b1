//! Reading a glaze results file (layout: `docs/results-format.md`): the
//! checks that it is a finished file of the format this build reads, the
//! model tables a report needs, and the histories of `/dynamic` a block of
//! records at a time (a long run does not fit in memory at once).

use crate::ReportError;
use glaze_engine::results::{FORMAT_NAME, FORMAT_VERSION};
use glaze_post::clearance::Route;
use hdf5::types::VarLenUnicode;
use ndarray::s;
use std::path::{Path, PathBuf};

/// One meshed span of one wire (a subconductor, a row's conductor or an earth wire).
#[derive(Debug, Clone)]
pub struct SpanInfo {
    /// Nodes from the span's first end.
    pub nodes: Vec<usize>,
    /// Conductor elements, first and one past the last.
    pub elements: (usize, usize),
    /// Route span, 0-based.
    pub route_span: usize,
    /// Phase index (`None` in a row).
    pub phase: Option<usize>,
    /// Subconductor, 0-based.
    pub subconductor: usize,
    /// Rated strength of the conductor, N.
    pub rated_strength: f64,
}

/// An insulator string of a section.
#[derive(Debug, Clone)]
pub struct StringInfo {
    /// Tower index.
    pub tower: usize,
    /// Phase index.
    pub phase: usize,
    /// Link elements (legs) whose axial force is the string tension.
    pub elements: Vec<usize>,
}

/// The model tables of `/model` and `/static` a report uses.
#[derive(Debug, Clone)]
pub struct ModelInfo {
    /// Static equilibrium position of every node, m.
    pub static_position: Vec<[f64; 3]>,
    /// Element kinds.
    pub element_kind: Vec<String>,
    /// Static axial force per element, N.
    pub static_axial_force: Vec<f64>,
    /// Restrained nodes, in the order of the support-force rows.
    pub support_nodes: Vec<usize>,
    /// Label of each restrained node.
    pub support_labels: Vec<String>,
    /// Static force of each support, N.
    pub static_support_force: Vec<[f64; 3]>,
    /// Phase and earth-wire names (empty for a row).
    pub phase_names: Vec<String>,
    /// Tower names and chainages, m (empty for a row).
    pub towers: Vec<(String, f64)>,
    /// Plan point `(x, y)` of each tower, m: the route is the polyline
    /// through them (empty for a row; files without `towers/plan` were
    /// written for straight routes along X, and get `(chainage, 0)`).
    pub route: Vec<[f64; 2]>,
    /// Ground profile (chainage along the route, elevation), m.
    pub ground_profile: Vec<(f64, f64)>,
    /// Meshed spans.
    pub spans: Vec<SpanInfo>,
    /// Insulator strings.
    pub strings: Vec<StringInfo>,
}

/// The linear modes about the start state (`/modes`) with what projecting
/// the motion on them needs.
#[derive(Debug, Clone)]
pub struct ModesInfo {
    /// Natural frequencies, Hz.
    pub frequency_hz: Vec<f64>,
    /// One-line descriptions.
    pub labels: Vec<String>,
    /// Mass-normalised shapes, `[mode][node][6]` flattened (kg^-1/2, kg^-1/2 m^-1).
    pub shapes: Vec<f64>,
    /// Lumped mass of every node, `[node][6][6]` flattened, row-major (kg, kg·m, kg·m²).
    pub node_mass: Vec<f64>,
    /// Static rotation of every node, unit quaternion (w, x, y, z).
    pub static_rotation: Vec<[f64; 4]>,
}

impl ModelInfo {
    /// Number of nodes.
    pub fn node_count(&self) -> usize {
        self.static_position.len()
    }

    /// Chainage along the route of the plan position of `p`, m (global X
    /// in a row).
    pub fn chainage_of(&self, p: [f64; 3]) -> f64 {
        match Route::through(&self.route) {
            Ok(route) => route.chainage_of(p),
            Err(_) => p[0],
        }
    }

    /// Name of phase `p` (`"conductor"` in a row).
    pub fn phase_name(&self, p: Option<usize>) -> String {
        match p {
            Some(p) => self.phase_names.get(p).cloned().unwrap_or_else(|| format!("phase {p}")),
            None => "conductor".into(),
        }
    }
}

/// A results file opened for reading, with its model and the shape of its histories.
pub struct ResultsFile {
    path: PathBuf,
    file: hdf5::File,
    /// The input text the run was made from.
    pub input_toml: String,
    /// Model tables.
    pub model: ModelInfo,
    /// Output times, s (empty without `/dynamic`).
    pub time: Vec<f64>,
    /// Whether the root attribute `complete` is 1.
    pub complete: bool,
}

fn h5err(path: &Path, what: &str, e: impl std::fmt::Display) -> ReportError {
    ReportError::File { path: path.to_path_buf(), message: format!("{what}: {e}") }
}

fn strings(path: &Path, file: &hdf5::File, name: &str) -> Result<Vec<String>, ReportError> {
    let v =
        file.dataset(name).and_then(|d| d.read_raw::<VarLenUnicode>()).map_err(|e| h5err(path, name, e))?;
    Ok(v.iter().map(|s| s.as_str().to_string()).collect())
}

fn f64s(path: &Path, file: &hdf5::File, name: &str) -> Result<Vec<f64>, ReportError> {
    file.dataset(name).and_then(|d| d.read_raw::<f64>()).map_err(|e| h5err(path, name, e))
}

fn i64s(path: &Path, file: &hdf5::File, name: &str) -> Result<Vec<i64>, ReportError> {
    file.dataset(name).and_then(|d| d.read_raw::<i64>()).map_err(|e| h5err(path, name, e))
}

fn triples(v: &[f64]) -> Vec<[f64; 3]> {
    v.chunks_exact(3).map(|c| [c[0], c[1], c[2]]).collect()
}

fn index(path: &Path, name: &str, v: i64) -> Result<usize, ReportError> {
    usize::try_from(v).map_err(|_| h5err(path, name, format!("negative index {v}")))
}

impl ResultsFile {
    /// Opens `path` and reads its model. A file that is not a glaze results
    /// file, is of another format version, has no `complete = 1` (unless
    /// `allow_incomplete`) or lacks `/static` is refused with a message that
    /// says which.
    ///
    /// # Errors
    /// [`ReportError::File`], [`ReportError::Incomplete`] or [`ReportError::Format`].
    pub fn open(path: &Path, allow_incomplete: bool) -> Result<Self, ReportError> {
        if !path.exists() {
            return Err(ReportError::File { path: path.into(), message: "no such file".into() });
        }
        let file = hdf5::File::open(path).map_err(|e| h5err(path, "not an HDF5 file", e))?;
        let attr_str = |name: &str| -> Option<String> {
            file.attr(name)
                .and_then(|a| a.read_scalar::<VarLenUnicode>())
                .ok()
                .map(|s| s.as_str().to_string())
        };
        let format = attr_str("format");
        if format.as_deref() != Some(FORMAT_NAME) {
            return Err(ReportError::Format {
                path: path.into(),
                message: format!(
                    "not a glaze results file (root attribute `format` is {}, expected `{FORMAT_NAME}`)",
                    format.map_or("absent".into(), |f| format!("`{f}`"))
                ),
            });
        }
        let version = file.attr("format_version").and_then(|a| a.read_scalar::<u32>()).ok();
        if version != Some(FORMAT_VERSION) {
            return Err(ReportError::Format {
                path: path.into(),
                message: format!(
                    "results format version {} but this glaze reads version {FORMAT_VERSION}; rerun the case with this glaze",
                    version.map_or("absent".into(), |v| v.to_string())
                ),
            });
        }
        let complete = file.attr("complete").and_then(|a| a.read_scalar::<u32>()).ok() == Some(1);
        if !complete && !allow_incomplete {
            return Err(ReportError::Incomplete { path: path.into() });
        }
        let input_toml = attr_str("input_toml").unwrap_or_default();
        if file.group("static").is_err() {
            return Err(ReportError::Format {
                path: path.into(),
                message: "the file has no /static group (was the run stopped before its static state?)"
                    .into(),
            });
        }
        let model = Self::read_model(path, &file)?;
        let time =
            if file.group("dynamic").is_ok() { f64s(path, &file, "dynamic/time")? } else { Vec::new() };
        Ok(Self { path: path.into(), file, input_toml, model, time, complete })
    }

    fn read_model(path: &Path, file: &hdf5::File) -> Result<ModelInfo, ReportError> {
        let static_position = triples(&f64s(path, file, "static/position")?);
        let element_kind = strings(path, file, "model/element_kind")?;
        let static_axial_force = f64s(path, file, "static/element_axial_force")?;
        let support_nodes = i64s(path, file, "model/groups/support")?
            .into_iter()
            .map(|v| index(path, "model/groups/support", v))
            .collect::<Result<Vec<_>, _>>()?;
        let support_labels = strings(path, file, "model/support_label")?;
        let static_support_force = triples(&f64s(path, file, "static/support_force")?);
        let phase_names = strings(path, file, "model/phase_names")?;
        let names = strings(path, file, "model/towers/name")?;
        let chainage = f64s(path, file, "model/towers/chainage")?;
        let route = if file.link_exists("model/towers/plan") {
            let plan = f64s(path, file, "model/towers/plan")?;
            if plan.len() != 2 * chainage.len() {
                return Err(h5err(path, "model/towers/plan", "not one (x, y) point per tower"));
            }
            plan.chunks_exact(2).map(|c| [c[0], c[1]]).collect()
        } else {
            chainage.iter().map(|&c| [c, 0.0]).collect()
        };
        let towers = names.into_iter().zip(chainage).collect();
        let ground = f64s(path, file, "model/ground_profile")?;
        let ground_profile = ground.chunks_exact(2).map(|c| (c[0], c[1])).collect();

        let nodes = i64s(path, file, "model/spans/nodes")?;
        let offset = i64s(path, file, "model/spans/node_offset")?;
        let elements = i64s(path, file, "model/spans/elements")?;
        let route_span = i64s(path, file, "model/spans/route_span")?;
        let phase = i64s(path, file, "model/spans/phase")?;
        let sub = i64s(path, file, "model/spans/subconductor")?;
        let rated = f64s(path, file, "model/spans/rated_strength")?;
        let p = route_span.len();
        if offset.len() != p + 1
            || elements.len() != 2 * p
            || phase.len() != p
            || sub.len() != p
            || rated.len() != p
        {
            return Err(h5err(path, "model/spans", "tables of different lengths"));
        }
        let mut spans = Vec::with_capacity(p);
        for k in 0..p {
            let (a, b) = (index(path, "node_offset", offset[k])?, index(path, "node_offset", offset[k + 1])?);
            if a > b || b > nodes.len() {
                return Err(h5err(path, "model/spans/node_offset", "offsets out of range"));
            }
            spans.push(SpanInfo {
                nodes: nodes[a..b]
                    .iter()
                    .map(|&v| index(path, "spans/nodes", v))
                    .collect::<Result<_, _>>()?,
                elements: (
                    index(path, "spans/elements", elements[2 * k])?,
                    index(path, "spans/elements", elements[2 * k + 1])?,
                ),
                route_span: index(path, "spans/route_span", route_span[k])?,
                phase: usize::try_from(phase[k]).ok(),
                subconductor: index(path, "spans/subconductor", sub[k])?,
                rated_strength: rated[k],
            });
        }
        let tower = i64s(path, file, "model/strings/tower")?;
        let sphase = i64s(path, file, "model/strings/phase")?;
        let legs = i64s(path, file, "model/strings/elements")?;
        if sphase.len() != tower.len() || legs.len() != 2 * tower.len() {
            return Err(h5err(path, "model/strings", "tables of different lengths"));
        }
        let strings = (0..tower.len())
            .map(|k| {
                Ok(StringInfo {
                    tower: index(path, "strings/tower", tower[k])?,
                    phase: index(path, "strings/phase", sphase[k])?,
                    elements: legs[2 * k..2 * k + 2]
                        .iter()
                        .filter_map(|&e| usize::try_from(e).ok())
                        .collect(),
                })
            })
            .collect::<Result<Vec<_>, ReportError>>()?;
        let (n, e) = (static_position.len(), element_kind.len());
        if spans.iter().any(|s| s.nodes.len() < 2 || s.nodes.iter().any(|&a| a >= n))
            || support_nodes.iter().any(|&a| a >= n)
        {
            return Err(h5err(
                path,
                "model",
                "a span with fewer than two nodes, or a node index beyond the node count",
            ));
        }
        if spans.iter().any(|s| s.elements.0 >= s.elements.1 || s.elements.1 > e)
            || strings.iter().any(|s| s.elements.iter().any(|&k| k >= e))
            || static_axial_force.len() != e
        {
            return Err(h5err(path, "model", "an element range or index beyond the element count"));
        }
        if support_labels.len() != support_nodes.len() || static_support_force.len() != support_nodes.len() {
            return Err(h5err(path, "model", "support tables of different lengths"));
        }
        Ok(ModelInfo {
            static_position,
            element_kind,
            static_axial_force,
            support_nodes,
            support_labels,
            static_support_force,
            phase_names,
            towers,
            route,
            ground_profile,
            spans,
            strings,
        })
    }

    /// The file's path.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Number of output records in `/dynamic`.
    pub fn records(&self) -> usize {
        self.time.len()
    }

    fn block(
        &self,
        name: &str,
        range: std::ops::Range<usize>,
        width: usize,
    ) -> Result<Vec<f64>, ReportError> {
        let ds = self.file.dataset(name).map_err(|e| h5err(&self.path, name, e))?;
        let shape = ds.shape();
        if shape.first() != Some(&self.time.len()) || shape.iter().skip(1).product::<usize>() != width {
            return Err(h5err(&self.path, name, format!("shape {shape:?} does not match the model")));
        }
        let data = match shape.len() {
            2 => ds.read_slice_2d::<f64, _>(s![range, ..]).map(|a| a.into_raw_vec_and_offset().0),
            3 => ds
                .read_slice::<f64, _, ndarray::Ix3>(s![range, .., ..])
                .map(|a| a.into_raw_vec_and_offset().0),
            _ => return Err(h5err(&self.path, name, "unexpected rank")),
        };
        data.map_err(|e| h5err(&self.path, name, e))
    }

    /// `/dynamic/displacement` for records `range`: record-major, `[r][node][3]` flattened, m.
    pub fn displacement(&self, range: std::ops::Range<usize>) -> Result<Vec<f64>, ReportError> {
        self.block("dynamic/displacement", range, self.model.node_count() * 3)
    }

    /// `/dynamic/rotation` for records `range`: `[r][node][4]` unit quaternions (w, x, y, z).
    pub fn rotation(&self, range: std::ops::Range<usize>) -> Result<Vec<f64>, ReportError> {
        self.block("dynamic/rotation", range, self.model.node_count() * 4)
    }

    /// The modes of `/modes` with their node masses, if the file has both
    /// (run files from this version on; files of `glaze modes`).
    ///
    /// # Errors
    /// [`ReportError::Format`] for a `/modes` group whose shapes do not match the model.
    pub fn modes(&self) -> Result<Option<ModesInfo>, ReportError> {
        if self.file.dataset("modes/node_mass").is_err() {
            return Ok(None);
        }
        let (path, file) = (&self.path, &self.file);
        let n = self.model.node_count();
        let frequency_hz = f64s(path, file, "modes/frequency_hz")?;
        let labels = strings(path, file, "modes/label")?;
        let shapes = f64s(path, file, "modes/shape")?;
        let node_mass = f64s(path, file, "modes/node_mass")?;
        let rot = f64s(path, file, "static/rotation")?;
        let k = frequency_hz.len();
        if labels.len() != k || shapes.len() != k * n * 6 || node_mass.len() != n * 36 || rot.len() != n * 4 {
            return Err(ReportError::Format {
                path: path.clone(),
                message: "/modes does not match the model (shape, node_mass or label sizes)".into(),
            });
        }
        let static_rotation = rot.chunks_exact(4).map(|q| [q[0], q[1], q[2], q[3]]).collect();
        Ok(Some(ModesInfo { frequency_hz, labels, shapes, node_mass, static_rotation }))
    }

    /// `/dynamic/element_axial_force` for records `range`, `[r][element]`, N.
    pub fn axial_force(&self, range: std::ops::Range<usize>) -> Result<Vec<f64>, ReportError> {
        self.block("dynamic/element_axial_force", range, self.model.element_kind.len())
    }

    /// `/dynamic/support_force` for records `range`, `[r][support][3]`, N.
    pub fn support_force(&self, range: std::ops::Range<usize>) -> Result<Vec<f64>, ReportError> {
        self.block("dynamic/support_force", range, self.model.support_nodes.len() * 3)
    }
}
