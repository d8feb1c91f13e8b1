//! A small static-problem harness for the validation tests: elements,
//! fixed DOF and nodal loads scaled by the load factor λ, as a
//! [`glaze_solvers::NonlinearSystem`] solved with `solve_load_path`.
//!
//! DOF: six per node `[u_x, u_y, u_z, θ_x, θ_y, θ_z]` (m, rad), rotations
//! as spatial increments, `R ← exp(δθ̂) R` (see `glaze_elements::so3`).
//! Nodal loads are dead loads: forces (N) and moments (N·m) of fixed
//! global direction, work conjugate to those increments.

#![allow(dead_code)]

use glaze_elements::{so3, Element, ElementContext, NodeState};
use glaze_solvers::{
    solve_load_path, Assembler, EvalError, LinearSolver, LoadPathReport, LoadStepSettings, NewtonSettings,
    NonlinearSystem, SparseDirect, SparsityPattern,
};
use nalgebra::Vector3;

/// A static problem: mesh, supports and loads.
pub struct StaticProblem {
    elements: Vec<Box<dyn Element>>,
    nodes: Vec<NodeState>,
    saved: Vec<NodeState>,
    /// Equation number of each global DOF (`None` = fixed).
    eq: Vec<Option<usize>>,
    /// Element DOF groups (global equation numbers of the local DOF).
    groups: Vec<Vec<Option<usize>>>,
    pattern: SparsityPattern,
    assembler: Assembler,
    /// Nodal loads at λ = 1, per global DOF (N, N·m).
    loads: Vec<f64>,
    ctx: ElementContext,
    /// Norm of the reactions at the last evaluation, N.
    reaction_norm: f64,
    /// Root-sum-square of the element force vectors at the last
    /// evaluation (the internal force level, N and N·m).
    internal_norm: f64,
}

impl StaticProblem {
    /// Builds the problem from reference positions `x0` (m), elements,
    /// fixed global DOF (`6·node + local`), and nodal loads
    /// `(node, [Fx, Fy, Fz, Mx, My, Mz])` at λ = 1. Rotations of nodes that
    /// no rotation-using element touches are fixed automatically.
    pub fn new(
        x0: &[Vector3<f64>],
        elements: Vec<Box<dyn Element>>,
        fixed: &[usize],
        loads: &[(usize, [f64; 6])],
    ) -> Self {
        let n = x0.len();
        let mut is_fixed = vec![false; 6 * n];
        for &d in fixed {
            is_fixed[d] = true;
        }
        let mut has_rotation = vec![false; n];
        for e in &elements {
            if e.uses_rotations() {
                for &node in e.nodes() {
                    has_rotation[node] = true;
                }
            }
        }
        for (node, &h) in has_rotation.iter().enumerate() {
            if !h {
                for r in 3..6 {
                    is_fixed[6 * node + r] = true;
                }
            }
        }
        let mut eq = vec![None; 6 * n];
        let mut count = 0;
        for (d, slot) in eq.iter_mut().enumerate() {
            if !is_fixed[d] {
                *slot = Some(count);
                count += 1;
            }
        }
        let groups: Vec<Vec<Option<usize>>> = elements
            .iter()
            .map(|e| {
                e.nodes().iter().flat_map(|&node| (0..6).map(move |k| 6 * node + k)).map(|d| eq[d]).collect()
            })
            .collect();
        let pattern = SparsityPattern::from_dof_groups(count, groups.iter().map(|g| g.as_slice()));
        let assembler = Assembler::new(&pattern, groups.iter().map(|g| g.as_slice()));
        let mut load_vec = vec![0.0; 6 * n];
        for &(node, l) in loads {
            for k in 0..6 {
                load_vec[6 * node + k] += l[k];
            }
        }
        let nodes: Vec<NodeState> = x0.iter().map(|&x| NodeState::at_rest(x)).collect();
        Self {
            elements,
            saved: nodes.clone(),
            nodes,
            eq,
            groups,
            pattern,
            assembler,
            loads: load_vec,
            ctx: ElementContext::default(),
            reaction_norm: 0.0,
            internal_norm: 0.0,
        }
    }

    /// Current state of every node.
    pub fn nodes(&self) -> &[NodeState] {
        &self.nodes
    }

    /// Current position of `node`, m.
    pub fn position(&self, node: usize) -> Vector3<f64> {
        self.nodes[node].x
    }

    /// Solves λ: 0 → 1 with the direct sparse solver and the given
    /// initial load step; panics with the solver's message on failure.
    pub fn solve(&mut self, initial_step: f64) -> LoadPathReport {
        let newton = NewtonSettings {
            max_iterations: 30,
            residual_tolerance: 1e-9,
            increment_tolerance: 1e-12,
            ..NewtonSettings::default()
        };
        let steps = LoadStepSettings { initial_step, ..LoadStepSettings::default() };
        let mut solver = SparseDirect::new(&self.pattern);
        let report = solve_load_path(self, &mut solver as &mut dyn LinearSolver, &newton, &steps);
        match report {
            Ok(r) => r,
            Err(e) => panic!("load path failed: {e}"),
        }
    }
}

impl NonlinearSystem for StaticProblem {
    fn dim(&self) -> usize {
        self.pattern.dim()
    }

    fn pattern(&self) -> &SparsityPattern {
        &self.pattern
    }

    fn evaluate(
        &mut self,
        lambda: f64,
        residual: &mut [f64],
        mut tangent: Option<&mut [f64]>,
    ) -> Result<(), EvalError> {
        residual.fill(0.0);
        if let Some(t) = tangent.as_deref_mut() {
            t.fill(0.0);
        }
        let mut reactions = vec![0.0; self.loads.len()];
        let mut internal = 0.0;
        for (g, e) in self.elements.iter().enumerate() {
            let states: Vec<NodeState> = e.nodes().iter().map(|&i| self.nodes[i]).collect();
            let m = 6 * states.len();
            let mut f = vec![0.0; m];
            match tangent.as_deref_mut() {
                Some(t) => {
                    let mut k = vec![0.0; m * m];
                    e.tangent(&self.ctx, &states, &mut f, &mut k);
                    self.assembler.add_matrix(g, &k, t);
                }
                None => e.internal_force(&self.ctx, &states, &mut f),
            }
            if f.iter().any(|x| !x.is_finite()) {
                return Err(EvalError::new(format!("element {g} returned a non-finite force")));
            }
            self.assembler.add_vector(g, &f, residual);
            internal += f.iter().map(|x| x * x).sum::<f64>();
            for (a, &node) in e.nodes().iter().enumerate() {
                for k in 0..6 {
                    if self.groups[g][6 * a + k].is_none() {
                        reactions[6 * node + k] += f[6 * a + k];
                    }
                }
            }
        }
        for (d, &eq) in self.eq.iter().enumerate() {
            if let Some(i) = eq {
                residual[i] -= lambda * self.loads[d];
            }
        }
        self.reaction_norm = reactions.iter().map(|r| r * r).sum::<f64>().sqrt();
        self.internal_norm = internal.sqrt();
        Ok(())
    }

    fn apply_increment(&mut self, dx: &[f64]) {
        for (node, state) in self.nodes.iter_mut().enumerate() {
            let mut spin = Vector3::zeros();
            for k in 0..6 {
                if let Some(i) = self.eq[6 * node + k] {
                    if k < 3 {
                        state.x[k] += dx[i];
                    } else {
                        spin[k - 3] = dx[i];
                    }
                }
            }
            if spin != Vector3::zeros() {
                state.rotation = so3::exp(&spin) * state.rotation;
            }
        }
    }

    fn save_state(&mut self) {
        self.saved.clone_from(&self.nodes);
    }

    fn restore_state(&mut self) {
        self.nodes.clone_from(&self.saved);
    }

    fn force_scale(&self, lambda: f64) -> f64 {
        let load = self.loads.iter().map(|l| l * l).sum::<f64>().sqrt();
        (lambda.abs() * load + self.reaction_norm + self.internal_norm).max(1e-12)
    }
}

/// Nodes and beam elements along a polyline: consecutive points become
/// elements of unstretched length equal to their chord.
pub fn beam_chain(
    points: &[Vector3<f64>],
    reference_y: Vector3<f64>,
    section: glaze_elements::BeamSection,
) -> Vec<Box<dyn Element>> {
    points
        .windows(2)
        .enumerate()
        .map(|(i, w)| {
            let l = (w[1] - w[0]).norm();
            let beam =
                glaze_elements::CorotationalBeam::new([i, i + 1], [w[0], w[1]], l, reference_y, section)
                    .expect("valid beam");
            Box::new(beam) as Box<dyn Element>
        })
        .collect()
}

/// The six DOF of `node` (to fix a clamped end).
pub fn clamp(node: usize) -> Vec<usize> {
    (0..6).map(|k| 6 * node + k).collect()
}

/// Runs the reference script `tests/python/<script>` with `python3`, the
/// JSON text `input` on its standard input, and returns its standard output
/// (one JSON object). A missing Python, NumPy or SciPy, or a failing script,
/// is a panic with the script's message, never a silent pass.
pub fn python_json(script: &str, input: &str) -> String {
    use std::io::Write;
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/python").join(script);
    let mut child = std::process::Command::new("python3")
        .arg(&path)
        .stdin(std::process::Stdio::piped())
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap_or_else(|e| {
            panic!("python3 is needed for the {script} reference ({e}); run scripts/setup.sh")
        });
    child.stdin.take().expect("stdin").write_all(input.as_bytes()).expect("write the JSON input");
    let out = child.wait_with_output().expect("run python3");
    let stdout = String::from_utf8_lossy(&out.stdout).into_owned();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        !stderr.contains("ModuleNotFoundError"),
        "numpy and scipy are needed for the {script} reference; run scripts/setup.sh:\n{stderr}"
    );
    assert!(out.status.success(), "the {script} reference failed:\n{stdout}\n{stderr}\ninput: {input}");
    stdout
}

/// A finite number as JSON text (full precision).
pub fn json_num(x: f64) -> String {
    assert!(x.is_finite(), "JSON has no {x}");
    format!("{x:e}")
}

/// A list of finite numbers as a JSON array.
pub fn json_array(xs: &[f64]) -> String {
    format!("[{}]", xs.iter().map(|&x| json_num(x)).collect::<Vec<_>>().join(", "))
}

/// The text of the value at `"key":` in the JSON output of a reference
/// script (the first occurrence; the scripts' output keys are unique and
/// their values are numbers, booleans or arrays of numbers).
fn json_value<'a>(json: &'a str, key: &str) -> &'a str {
    let pattern = format!("\"{key}\"");
    let mut from = 0;
    while let Some(i) = json[from..].find(&pattern) {
        let after = &json[from + i + pattern.len()..];
        let trimmed = after.trim_start();
        if let Some(rest) = trimmed.strip_prefix(':') {
            let rest = rest.trim_start();
            let end = if rest.starts_with('[') {
                let mut depth = 0usize;
                let mut end = rest.len();
                for (k, ch) in rest.char_indices() {
                    match ch {
                        '[' => depth += 1,
                        ']' => {
                            depth -= 1;
                            if depth == 0 {
                                end = k + 1;
                                break;
                            }
                        }
                        _ => {}
                    }
                }
                end
            } else {
                rest.find([',', '}']).unwrap_or(rest.len())
            };
            return rest[..end].trim();
        }
        from += i + pattern.len();
    }
    panic!("no key {key:?} in the reference output:\n{json}")
}

/// The number at `key` in a reference script's JSON output.
pub fn json_f64(json: &str, key: &str) -> f64 {
    let v = json_value(json, key);
    v.parse().unwrap_or_else(|_| panic!("{key}: {v:?} is not a number"))
}

/// The numbers of the array at `key` (nested arrays flattened in order,
/// e.g. `[[x, z], ...]` gives `x0, z0, x1, z1, ...`).
pub fn json_f64s(json: &str, key: &str) -> Vec<f64> {
    let v = json_value(json, key);
    assert!(v.starts_with('['), "{key}: {v:?} is not an array");
    v.split(|c: char| c == '[' || c == ']' || c == ',' || c.is_whitespace())
        .filter(|t| !t.is_empty())
        .map(|t| t.parse().unwrap_or_else(|_| panic!("{key}: {t:?} is not a number")))
        .collect()
}

/// Input of one level span between two dead-ends of a single phase `A`
/// strung at 24 kN: a 795 kcmil ACSR 26/7 class conductor (ASTM B232
/// values, from memory), beam elements of `element_length` m, 15 °C.
/// `phase_extra` goes into the phase's table (e.g. a `bundle = …` line),
/// `tables` after the load case (spacers, layouts), `dynamics` last.
pub fn level_span_input(
    span: f64,
    element_length: f64,
    phase_extra: &str,
    tables: &str,
    dynamics: &str,
) -> String {
    format!(
        r#"[glaze]
schema_version = 1
[conductors.acsr_795]
diameter = 0.02814
mass_per_length = 1.628
axial_stiffness = 3.28e7
bending_stiffness = 44.0
torsional_stiffness = 35.0
thermal_expansion = 18.9e-6
rated_strength = 140100.0
[insulators.dead_end]
kind = "dead_end"
length = 2.0
mass = 60.0
[[towers]]
name = "T1"
chainage = 0.0
ground = 100.0
kind = "dead_end"
insulator = "dead_end"
attachments = {{ A = [3.0, 24.0] }}
[[towers]]
name = "T2"
chainage = {span}
ground = 100.0
kind = "dead_end"
insulator = "dead_end"
attachments = {{ A = [3.0, 24.0] }}
[[phases]]
name = "A"
conductor = "acsr_795"
horizontal_tension = 24000.0
{phase_extra}
[mesh]
type = "beam"
element_length = {element_length}
[stringing]
temperature = 15.0
[load_case]
temperature = 15.0
{tables}
{dynamics}
"#
    )
}
