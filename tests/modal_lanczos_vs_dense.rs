//! The sparse Lanczos path against the dense reference on a real model: the
//! quick-start demo (`examples/row_of_spans.toml`, 3 spans × 40 beam
//! elements, 702 free DOF) about its iced static state. Issue #3: the lowest
//! 20 frequencies agree to 1e-8 relative. Also checks the conventions of the
//! modal result: mass-normalised shapes, zero at restrained DOF, energy
//! shares summing to 1, one label per mode.

use glaze_engine::analysis::modal::{describe, node_frames};
use glaze_engine::analysis::run_static;
use glaze_engine::analysis::{EigenMethod, Linearisation, ModalSettings};
use glaze_engine::{input, model, ElementRegistry};
use std::path::Path;

#[test]
fn lanczos_matches_dense_on_the_demo() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let registry = ElementRegistry::with_builtin();
    let spec = input::load(&root.join("examples/row_of_spans.toml"), &registry).unwrap();
    let mdl = model::build(&spec, &registry).unwrap();
    let stat = run_static(&spec, &mdl).unwrap();
    let lin = Linearisation::about(&mdl, &stat.config).unwrap();
    let count = 20;
    let solve = |method| lin.solve(&ModalSettings { method, ..ModalSettings::new(count) }).unwrap();
    let dense = solve(EigenMethod::Dense);
    let lanczos = solve(EigenMethod::Lanczos);
    assert_eq!(lanczos.method, EigenMethod::Lanczos);
    for k in 0..count {
        let (a, b) = (dense.omega_squared[k].sqrt(), lanczos.omega_squared[k].sqrt());
        let rel = (b / a - 1.0).abs();
        println!(
            "mode {:2}: dense {:.12} Hz, lanczos {:.12} Hz, rel {rel:.1e}",
            k + 1,
            a / std::f64::consts::TAU,
            b / std::f64::consts::TAU
        );
        assert!(rel < 1e-8, "mode {}: dense ω {a}, Lanczos ω {b}", k + 1);
        assert!(lanczos.residuals[k] < 1e-8, "residual {}", lanczos.residuals[k]);
    }

    let frames = node_frames(&mdl, &stat.config);
    let r = describe(&mdl, &lin, &lanczos, &frames);
    assert_eq!(r.labels.len(), count);
    for k in 0..count {
        // φᵀ M φ = 1.
        let v = &lanczos.vectors[k];
        let mut mv = vec![0.0; v.len()];
        lin.pattern.mul_vec(&lin.mass, v, &mut mv);
        let norm: f64 = v.iter().zip(&mv).map(|(a, b)| a * b).sum();
        assert!((norm - 1.0).abs() < 1e-10, "mode {}: φᵀMφ = {norm}", k + 1);
        let s: f64 = r.energy_share[k].iter().sum();
        assert!((s - 1.0).abs() < 1e-12);
        let spans: f64 = r.span_share[k].iter().sum();
        assert!((spans - 1.0).abs() < 1e-12);
        for &n in &mdl.support_nodes {
            for d in (0..6).filter(|&d| mdl.restrained[n][d]) {
                assert_eq!(r.shapes[k][n][d], 0.0, "restrained DOF {d} of node {n} moves in mode {}", k + 1);
            }
        }
        assert!(!r.labels[k].is_empty());
    }
    assert!(r.frequency_hz.windows(2).all(|w| w[0] <= w[1]));
}
