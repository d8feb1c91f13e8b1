//! glaze's modes against SciPy: the stiffness and mass matrices of a small
//! model (the quick-start demo `examples/row_of_spans.toml` meshed with 30
//! beam elements per span, about its iced static state; coarser meshes of
//! curved conductor elements lose the single conductor's small torsional
//! stiffness, see `CorotationalBeam::with_end_tangents`) are
//! exported as Matrix Market files and solved independently with
//! `scipy.sparse.linalg.eigsh(K, k, M, sigma=σ)` (ARPACK shift-invert) by
//! `tests/python/eigsh_check.py`; the lowest 10 frequencies must agree to
//! 1e-8 relative (issue #3).
//!
//! Python 3 with numpy and scipy is required (`scripts/setup.sh` installs
//! them). A missing Python or SciPy is a failure, never a silent pass.

use glaze_engine::analysis::{run_static, Linearisation, ModalSettings};
use glaze_engine::{input, model, ElementRegistry};
use std::path::Path;
use std::process::Command;

const COUNT: usize = 10;

#[test]
fn demo_modes_agree_with_scipy_eigsh() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let demo = std::fs::read_to_string(root.join("examples/row_of_spans.toml")).unwrap();
    let text = demo.replace("elements_per_span = 40", "elements_per_span = 30");
    assert_ne!(text, demo, "the demo's mesh line changed; update this test");
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(Path::new("row_of_spans_coarse.toml"), &text, &registry).unwrap();
    let mdl = model::build(&spec, &registry).unwrap();
    let stat = run_static(&spec, &mdl).unwrap();
    let lin = Linearisation::about(&mdl, &stat.config).unwrap();
    // At equilibrium the tangent is symmetric up to the load stiffness of
    // the constant consistent end moments of the weight on the curved
    // conductor elements (`model::curvature_loads`, ∓ q h²/12), a small
    // share of the bending terms; the modal analysis takes the symmetric part.
    assert!(lin.asymmetry < 1e-3, "tangent asymmetry {} at equilibrium", lin.asymmetry);
    let modes = lin.solve(&ModalSettings::new(COUNT)).unwrap();
    let freqs: Vec<String> = modes
        .omega_squared
        .iter()
        .map(|w2| format!("{:e}", w2.sqrt() / (2.0 * std::f64::consts::PI)))
        .collect();

    let dir = tempfile::tempdir().unwrap();
    let (k_path, m_path, f_path) =
        (dir.path().join("K.mtx"), dir.path().join("M.mtx"), dir.path().join("glaze_hz.txt"));
    lin.write_matrix_market(&k_path, &m_path).unwrap();
    std::fs::write(&f_path, freqs.join("\n") + "\n").unwrap();

    let script = root.join("tests/python/eigsh_check.py");
    let py = Command::new("python3")
        .arg(&script)
        .args([&k_path, &m_path])
        .arg(COUNT.to_string())
        .arg(format!("{:e}", modes.shift))
        .arg(&f_path)
        .arg("1e-8")
        .output()
        .unwrap_or_else(|e| {
            panic!("python3 is needed for the SciPy cross-check ({e}); run scripts/setup.sh")
        });
    let report = String::from_utf8_lossy(&py.stdout);
    let stderr = String::from_utf8_lossy(&py.stderr);
    println!("{report}");
    assert!(
        !stderr.contains("ModuleNotFoundError"),
        "numpy and scipy are needed for the SciPy cross-check; run scripts/setup.sh:\n{stderr}"
    );
    assert!(py.status.success(), "SciPy eigsh cross-check failed:\n{report}\n{stderr}");
    assert!(report.contains("worst relative difference"), "unexpected report: {report}");
}
