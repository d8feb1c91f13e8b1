//! The results file (layout in `docs/results-format.md`).
//!
//! **Invariant:** a results file at its final path is complete. It is
//! written under `<name>.partial` and renamed only after `complete = 1`
//! has been written; a dropped, unfinished writer deletes its partial file.

use crate::analysis::mode_shape::ENERGY_CLASSES;
use crate::analysis::{ModalResult, StaticResult};
use crate::error::GlazeError;
use crate::model::Model;
use hdf5::types::VarLenUnicode;
use ndarray::{Array1, Array2, Array3};
use std::path::{Path, PathBuf};

/// Value of the root attribute `format`.
pub const FORMAT_NAME: &str = "glaze-results";
/// Value of the root attribute `format_version`.
pub const FORMAT_VERSION: u32 = 2;

/// A results file being written.
pub struct ResultsWriter {
    file: Option<hdf5::File>,
    partial: PathBuf,
    target: PathBuf,
    /// Reopened by [`ResultsWriter::reopen`]: `/model`, `/static`, `/modes`
    /// are already in the file, and a dropped writer keeps its file.
    resumed: bool,
}

fn err(path: &Path, e: impl std::fmt::Display) -> GlazeError {
    GlazeError::Results { path: path.to_path_buf(), message: e.to_string() }
}

fn text(s: &str) -> VarLenUnicode {
    // A string with an interior NUL cannot be stored; replace it.
    s.replace('\0', " ").parse().unwrap_or_default()
}

/// The partial-file name used while `target` is being written.
pub fn partial_path(target: &Path) -> PathBuf {
    let mut name = target.file_name().map(|n| n.to_os_string()).unwrap_or_default();
    name.push(".partial");
    target.with_file_name(name)
}

impl ResultsWriter {
    /// Starts a results file for `target`, recording the input text.
    pub fn create(target: &Path, input_toml: &str) -> Result<Self, GlazeError> {
        super::preflight::check(target, super::preflight::BASE_BYTES + input_toml.len() as u64)?;
        let partial = partial_path(target);
        let file = hdf5::File::create(&partial).map_err(|e| err(target, e))?;
        let w = Self { file: Some(file), partial, target: target.to_path_buf(), resumed: false };
        w.attr_str("format", FORMAT_NAME)?;
        w.attr_u32("format_version", FORMAT_VERSION)?;
        w.attr_str("program_version", env!("CARGO_PKG_VERSION"))?;
        w.attr_str("input_toml", input_toml)?;
        w.attr_u32("complete", 0)?;
        Ok(w)
    }

    /// Reopens the partial file of `target` left by an interrupted run of
    /// `input_toml`, for `glaze run --resume`: it must be a glaze results
    /// file of this format version and program version, not complete, of
    /// the same input text. A dropped reopened writer keeps the file.
    ///
    /// # Errors
    /// [`GlazeError::Resume`] naming what is missing or different.
    pub fn reopen(target: &Path, input_toml: &str) -> Result<Self, GlazeError> {
        let partial = partial_path(target);
        let refuse = |message: String| GlazeError::Resume { path: partial.clone(), message };
        if !partial.is_file() {
            let why = if target.is_file() {
                format!("{} is complete already; there is nothing to resume", target.display())
            } else {
                "the file is missing: no interrupted run of this output to resume; run without --resume"
                    .into()
            };
            return Err(refuse(why));
        }
        let file = hdf5::File::open_rw(&partial).map_err(|e| refuse(format!("cannot be opened: {e}")))?;
        let read_str = |name: &str| -> Option<String> {
            file.attr(name).ok()?.read_scalar::<VarLenUnicode>().ok().map(|v| v.as_str().to_string())
        };
        let read_u32 = |name: &str| file.attr(name).ok().and_then(|a| a.read_scalar::<u32>().ok());
        if read_str("format").as_deref() != Some(FORMAT_NAME)
            || read_u32("format_version") != Some(FORMAT_VERSION)
        {
            return Err(refuse(format!("not a glaze results file of format version {FORMAT_VERSION}")));
        }
        if read_str("program_version").as_deref() != Some(env!("CARGO_PKG_VERSION")) {
            return Err(refuse(format!(
                "written by glaze {}, not this glaze {}; run again without --resume",
                read_str("program_version").unwrap_or_default(),
                env!("CARGO_PKG_VERSION")
            )));
        }
        if read_u32("complete") != Some(0) {
            return Err(refuse("the file is marked complete; there is nothing to resume".into()));
        }
        if read_str("input_toml").as_deref() != Some(text(input_toml).as_str()) {
            return Err(refuse("the file was written for another input; run again without --resume".into()));
        }
        Ok(Self { file: Some(file), partial, target: target.to_path_buf(), resumed: true })
    }

    /// Whether the writer was reopened to resume a run.
    pub fn is_resumed(&self) -> bool {
        self.resumed
    }

    /// Writes everything buffered by the library to the partial file and
    /// asks the operating system to put it on disk (fsync).
    pub fn sync(&self) -> Result<(), GlazeError> {
        self.file().flush().map_err(|e| err(&self.target, e))?;
        std::fs::File::open(&self.partial).and_then(|f| f.sync_all()).map_err(|e| err(&self.target, e))
    }

    /// The open file (for the history writer).
    pub(crate) fn file(&self) -> &hdf5::File {
        // Present until `finish` consumes the writer.
        self.file.as_ref().expect("results file open until finish")
    }

    fn attr_str(&self, name: &str, value: &str) -> Result<(), GlazeError> {
        self.file()
            .new_attr::<VarLenUnicode>()
            .create(name)
            .and_then(|a| a.write_scalar(&text(value)))
            .map_err(|e| err(&self.target, e))
    }

    fn attr_u32(&self, name: &str, value: u32) -> Result<(), GlazeError> {
        let f = self.file();
        let attr = match f.attr(name) {
            Ok(a) => a,
            Err(_) => f.new_attr::<u32>().create(name).map_err(|e| err(&self.target, e))?,
        };
        attr.write_scalar(&value).map_err(|e| err(&self.target, e))
    }

    fn attr_f64(&self, name: &str, value: f64) -> Result<(), GlazeError> {
        let f = self.file();
        let attr = match f.attr(name) {
            Ok(a) => a,
            Err(_) => f.new_attr::<f64>().create(name).map_err(|e| err(&self.target, e))?,
        };
        attr.write_scalar(&value).map_err(|e| err(&self.target, e))
    }

    /// Writes `/model` (a reopened writer keeps the file's own).
    pub fn write_model(&self, model: &Model) -> Result<(), GlazeError> {
        if self.resumed {
            return Ok(());
        }
        let t = &self.target;
        let g = self.file().create_group("model").map_err(|e| err(t, e))?;
        let n = model.node_count();
        let pos = Array2::from_shape_fn((n, 3), |(i, d)| model.nodes[i][d]);
        write_f64(&g, "node_position", pos.view().into_dyn(), "m", t)?;
        let e = model.elements.len();
        let conn = Array2::from_shape_fn((e, 2), |(i, k)| {
            model.elements[i].nodes().get(k).map_or(-1, |&v| v as i64)
        });
        dataset(&g, "element_nodes", conn.view(), "1", t)?;
        let kinds: Array1<VarLenUnicode> = model.elements.iter().map(|el| text(el.kind())).collect();
        dataset(&g, "element_kind", kinds.view(), "1", t)?;
        let l0: Array1<f64> = model.elements.iter().map(|el| el.unstretched_length()).collect();
        write_f64(&g, "element_unstretched_length", l0.view().into_dyn(), "m", t)?;
        let groups = g.create_group("groups").map_err(|e| err(t, e))?;
        for (name, nodes) in &model.groups {
            let idx: Array1<i64> = nodes.iter().map(|&v| v as i64).collect();
            dataset(&groups, name, idx.view(), "1", t)?;
        }
        let strings = |v: &mut dyn Iterator<Item = &str>| -> Array1<VarLenUnicode> { v.map(text).collect() };
        let labels = strings(&mut model.support_labels.iter().map(String::as_str));
        dataset(&g, "support_label", labels.view(), "1", t)?;
        let phases = strings(&mut model.phase_names.iter().map(String::as_str));
        dataset(&g, "phase_names", phases.view(), "1", t)?;
        let towers = g.create_group("towers").map_err(|e| err(t, e))?;
        let names = strings(&mut model.towers.iter().map(|(n, _)| n.as_str()));
        dataset(&towers, "name", names.view(), "1", t)?;
        let chainage: Array1<f64> = model.towers.iter().map(|(_, c)| *c).collect();
        write_f64(&towers, "chainage", chainage.view().into_dyn(), "m", t)?;
        let plan = Array2::from_shape_fn((model.route.len(), 2), |(i, k)| model.route[i][k]);
        write_f64(&towers, "plan", plan.view().into_dyn(), "m", t)?;
        let ground = Array2::from_shape_fn((model.ground_profile.len(), 2), |(i, k)| {
            [model.ground_profile[i].0, model.ground_profile[i].1][k]
        });
        write_f64(&g, "ground_profile", ground.view().into_dyn(), "m", t)?;

        let spans = g.create_group("spans").map_err(|e| err(t, e))?;
        let mut offset = vec![0i64];
        let mut flat = Vec::new();
        for s in &model.spans {
            flat.extend(s.nodes.iter().map(|&a| a as i64));
            offset.push(flat.len() as i64);
        }
        dataset(&spans, "nodes", Array1::from(flat).view(), "1", t)?;
        dataset(&spans, "node_offset", Array1::from(offset).view(), "1", t)?;
        let p = model.spans.len();
        let elements = Array2::from_shape_fn((p, 2), |(i, k)| {
            let r = &model.spans[i].elements;
            [r.start, r.end][k] as i64
        });
        dataset(&spans, "elements", elements.view(), "1", t)?;
        let column = |f: &dyn Fn(&crate::model::SpanMesh) -> i64| -> Array1<i64> {
            model.spans.iter().map(f).collect()
        };
        dataset(&spans, "route_span", column(&|s| s.route_span as i64).view(), "1", t)?;
        dataset(&spans, "phase", column(&|s| s.phase.map_or(-1, |p| p as i64)).view(), "1", t)?;
        dataset(&spans, "subconductor", column(&|s| s.subconductor as i64).view(), "1", t)?;
        let rated: Array1<f64> = model
            .spans
            .iter()
            .map(|s| model.conductor_rated_strength.get(s.conductor).copied().unwrap_or(0.0))
            .collect();
        write_f64(&spans, "rated_strength", rated.view().into_dyn(), "N", t)?;

        let st = g.create_group("strings").map_err(|e| err(t, e))?;
        let k = model.strings.len();
        let col = |f: &dyn Fn(&crate::model::StringMesh) -> i64| -> Array1<i64> {
            model.strings.iter().map(f).collect()
        };
        dataset(&st, "tower", col(&|s| s.tower as i64).view(), "1", t)?;
        dataset(&st, "phase", col(&|s| s.phase as i64).view(), "1", t)?;
        dataset(&st, "yoke", col(&|s| s.yoke as i64).view(), "1", t)?;
        let legs = Array2::from_shape_fn((k, 2), |(i, j)| {
            model.strings[i].elements.get(j).map_or(-1, |&e| e as i64)
        });
        dataset(&st, "elements", legs.view(), "1", t)?;
        Ok(())
    }

    /// Writes `/static`.
    pub fn write_static(
        &self,
        model: &Model,
        result: &StaticResult,
        load_case: &str,
    ) -> Result<(), GlazeError> {
        if self.resumed {
            return Ok(());
        }
        let t = &self.target;
        let g = self.file().create_group("static").map_err(|e| err(t, e))?;
        g.new_attr::<VarLenUnicode>()
            .create("load_case")
            .and_then(|a| a.write_scalar(&text(load_case)))
            .map_err(|e| err(t, e))?;
        let n = model.node_count();
        let pos = Array2::from_shape_fn((n, 3), |(i, d)| result.config.positions[i][d]);
        write_f64(&g, "position", pos.view().into_dyn(), "m", t)?;
        let quats: Vec<[f64; 4]> =
            result.config.rotations.iter().map(glaze_elements::so3::to_quaternion).collect();
        let rot = Array2::from_shape_fn((n, 4), |(i, k)| quats[i][k]);
        write_f64(&g, "rotation", rot.view().into_dyn(), "1", t)?;
        let axial: Array1<f64> = result.element_output.iter().map(|o| o.axial_force).collect();
        write_f64(&g, "element_axial_force", axial.view().into_dyn(), "N", t)?;
        let s = result.support_force.len();
        let sf = Array2::from_shape_fn((s, 3), |(i, d)| result.support_force[i][d]);
        write_f64(&g, "support_force", sf.view().into_dyn(), "N", t)?;
        let column = |f: &dyn Fn(&crate::analysis::SpanSummary) -> f64| -> Array1<f64> {
            result.spans.iter().map(f).collect()
        };
        let spans = g.create_group("spans").map_err(|e| err(t, e))?;
        write_f64(&spans, "sag", column(&|s| s.sag).view().into_dyn(), "m", t)?;
        write_f64(&spans, "sag_position", column(&|s| s.sag_position).view().into_dyn(), "m", t)?;
        write_f64(&spans, "horizontal_tension", column(&|s| s.horizontal_tension).view().into_dyn(), "N", t)?;
        let st = Array2::from_shape_fn((result.spans.len(), 2), |(i, k)| result.spans[i].support_tension[k]);
        write_f64(&spans, "support_tension", st.view().into_dyn(), "N", t)?;
        write_f64(&spans, "horizontal_length", column(&|s| s.horizontal_length).view().into_dyn(), "m", t)?;
        write_f64(&spans, "conductor_length", column(&|s| s.conductor_length).view().into_dyn(), "m", t)?;
        write_f64(&spans, "unstretched_length", column(&|s| s.unstretched_length).view().into_dyn(), "m", t)?;
        Ok(())
    }

    /// Writes `/modes` (layout in `docs/results-format.md`; a reopened
    /// writer keeps the file's own).
    pub fn write_modes(&self, model: &Model, modes: &ModalResult) -> Result<(), GlazeError> {
        if self.resumed {
            return Ok(());
        }
        let t = &self.target;
        let g = self.file().create_group("modes").map_err(|e| err(t, e))?;
        let group_str = |name: &str, value: &str| {
            g.new_attr::<VarLenUnicode>()
                .create(name)
                .and_then(|a| a.write_scalar(&text(value)))
                .map_err(|e| err(t, e))
        };
        group_str("eigen_solver", modes.method.name())?;
        group_str(
            "normalisation",
            "mass: shape^T M shape = 1 over the free DOF (M lumped, at the static state)",
        )?;
        let group_f64 = |name: &str, value: f64| {
            g.new_attr::<f64>().create(name).and_then(|a| a.write_scalar(&value)).map_err(|e| err(t, e))
        };
        group_f64("shift", modes.shift)?;
        group_f64("stiffness_asymmetry", modes.stiffness_asymmetry)?;
        let k = modes.frequency_hz.len();
        let n = model.node_count();
        let column = |v: &[f64]| -> Array1<f64> { v.iter().copied().collect() };
        write_f64(&g, "frequency_hz", column(&modes.frequency_hz).view().into_dyn(), "Hz", t)?;
        write_f64(&g, "period", column(&modes.period_s).view().into_dyn(), "s", t)?;
        let shape = Array3::from_shape_fn((k, n, 6), |(m, i, d)| modes.shapes[m][i][d]);
        write_f64(
            &g,
            "shape",
            shape.view().into_dyn(),
            "kg^-1/2 (translations), kg^-1/2 m^-1 (rotations)",
            t,
        )?;
        let share = Array2::from_shape_fn((k, 4), |(m, c)| modes.energy_share[m][c]);
        write_f64(&g, "energy_share", share.view().into_dyn(), "1", t)?;
        let columns: Array1<VarLenUnicode> = ENERGY_CLASSES.iter().map(|c| text(c)).collect();
        g.dataset("energy_share")
            .and_then(|ds| {
                ds.new_attr::<VarLenUnicode>()
                    .shape(columns.len())
                    .create("columns")
                    .and_then(|a| a.write(columns.view()))
            })
            .map_err(|e| err(t, e))?;
        let p = model.spans.len();
        let spans = Array2::from_shape_fn((k, p), |(m, s)| modes.span_share[m][s]);
        write_f64(&g, "span_energy_share", spans.view().into_dyn(), "1", t)?;
        let labels: Array1<VarLenUnicode> = modes.labels.iter().map(|l| text(l)).collect();
        dataset(&g, "label", labels.view(), "1", t)?;
        let mass = Array3::from_shape_fn((n, 6, 6), |(i, r, c)| modes.node_mass[i][(r, c)]);
        write_f64(&g, "node_mass", mass.view().into_dyn(), "kg (translations), kg·m, kg·m² (rotations)", t)?;
        write_f64(&g, "residual", column(&modes.residuals).view().into_dyn(), "1", t)?;
        Ok(())
    }

    /// Records the wall time, writes `complete = 1`, closes and renames
    /// the file to its final name.
    pub fn finish(mut self, wall_time_s: f64) -> Result<PathBuf, GlazeError> {
        self.attr_f64("wall_time_s", wall_time_s)?;
        self.attr_u32("complete", 1)?;
        if let Some(file) = self.file.take() {
            file.flush().map_err(|e| err(&self.target, e))?;
            file.close().map_err(|e| err(&self.target, e))?;
        }
        std::fs::rename(&self.partial, &self.target).map_err(|e| err(&self.target, e))?;
        Ok(self.target.clone())
    }
}

impl ResultsWriter {
    /// Writes `/divergence` into a run that diverged: the last converged
    /// state (`time` s, `position` [n,3] m, `rotation` [n,4] quaternion,
    /// `velocity` [n,3] m/s) and the report as the group's `report`.
    pub fn write_divergence(
        &self,
        report: &str,
        time: f64,
        position: &[[f64; 3]],
        rotation: &[[f64; 4]],
        velocity: &[[f64; 3]],
    ) -> Result<(), GlazeError> {
        let t = &self.target;
        let g = self.file().create_group("divergence").map_err(|e| err(t, e))?;
        g.new_attr::<VarLenUnicode>()
            .create("report")
            .and_then(|a| a.write_scalar(&text(report)))
            .map_err(|e| err(t, e))?;
        write_f64(&g, "time", Array1::from(vec![time]).view().into_dyn(), "s", t)?;
        let n = position.len();
        let p = Array2::from_shape_fn((n, 3), |(i, d)| position[i][d]);
        write_f64(&g, "position", p.view().into_dyn(), "m", t)?;
        let r = Array2::from_shape_fn((rotation.len(), 4), |(i, d)| rotation[i][d]);
        write_f64(&g, "rotation", r.view().into_dyn(), "1", t)?;
        let v = Array2::from_shape_fn((velocity.len(), 3), |(i, d)| velocity[i][d]);
        write_f64(&g, "velocity", v.view().into_dyn(), "m/s", t)
    }

    /// Closes the file *incomplete* (`complete = 0`) and keeps it under its
    /// partial name, e.g. after an interruption; returns that path.
    pub fn keep_incomplete(mut self, wall_time_s: f64) -> Result<PathBuf, GlazeError> {
        self.attr_f64("wall_time_s", wall_time_s)?;
        if let Some(file) = self.file.take() {
            file.flush().map_err(|e| err(&self.target, e))?;
            file.close().map_err(|e| err(&self.target, e))?;
        }
        Ok(self.partial.clone())
    }

    /// The target path.
    pub fn target(&self) -> &Path {
        &self.target
    }
}

impl Drop for ResultsWriter {
    fn drop(&mut self) {
        if let Some(file) = self.file.take() {
            drop(file);
            if !self.resumed {
                let _ = std::fs::remove_file(&self.partial);
            }
        }
    }
}

fn dataset<T: hdf5::H5Type, D: ndarray::Dimension>(
    g: &hdf5::Group,
    name: &str,
    data: ndarray::ArrayView<'_, T, D>,
    unit: &str,
    path: &Path,
) -> Result<(), GlazeError> {
    let ds = g.new_dataset_builder().with_data(data).create(name).map_err(|e| err(path, e))?;
    ds.new_attr::<VarLenUnicode>()
        .create("unit")
        .and_then(|a| a.write_scalar(&text(unit)))
        .map_err(|e| err(path, e))
}

fn write_f64(
    g: &hdf5::Group,
    name: &str,
    data: ndarray::ArrayViewD<'_, f64>,
    unit: &str,
    path: &Path,
) -> Result<(), GlazeError> {
    dataset(g, name, data, unit, path)
}
