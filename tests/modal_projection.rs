//! Projection of the motion on the linear modes (`glaze post`): a
//! twin-bundle span started with the velocity of its first mode,
//! undamped, HHT α = 0.
//!
//! References: an undamped linear mode is a single-degree-of-freedom
//! oscillator (closed form of free vibration), so the motion stays in that
//! mode (its share of the mean ΔᵀMΔ near 1; the nonlinear coupling of a
//! 5 cm swing is small) and the mode's largest displacement is the start
//! size A (v₀ = ωAφ̂ gives q(t) = (A/φ̂_max) sin ωt, φ̂ the shape scaled to a
//! largest translation of 1). The coordinates of every mode are recomputed
//! independently from the same file by tests/python/modal_projection.py
//! (h5py, NumPy, SciPy's Rotation for the nodal rotations).

mod common;

use glaze_engine::analysis::dynamic_stage::run_dynamic;
use glaze_engine::analysis::{run_modal, run_static, ModalSettings};
use glaze_engine::results::ResultsWriter;
use glaze_engine::{input, model, ElementRegistry};
use glaze_report::{post_process, PostOptions};
use std::path::Path;
use std::sync::atomic::AtomicBool;

const A: f64 = 0.05; // m, size of the start

fn input_text(dynamics: &str) -> String {
    common::level_span_input(
        300.0,
        10.0,
        "bundle = { count = 2, spacing = 0.457 }",
        "[spacers]\nkind = \"rigid\"\nmax_subspan = 60.0\nmass = 2.5\n",
        dynamics,
    )
}

#[test]
fn a_run_started_in_mode_one_stays_in_mode_one_at_its_start_size() {
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(Path::new("twin.toml"), &input_text(""), &registry).unwrap();
    let mdl = model::build(&spec, &registry).unwrap();
    let stat = run_static(&spec, &mdl).unwrap();
    let f1 = run_modal(&mdl, &stat, &ModalSettings::new(1)).unwrap().frequency_hz[0];

    let dynamics = format!(
        "[dynamics]\nduration = {}\ntime_step = 0.01\noutput_interval = 0.02\nscheme = \"hht\"\nalpha = 0.0\n\
         damping = {{ modes = [1, 8], ratios = [0.0, 0.0] }}\n\
         perturbation = {{ mode = 1, amplitude = {A}, start = \"velocity\" }}\n",
        3.0 / f1
    );
    let text = input_text(&dynamics);
    let spec = input::load_str(Path::new("twin.toml"), &text, &registry).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let writer = ResultsWriter::create(&dir.path().join("run.h5"), &text).unwrap();
    run_dynamic(&spec, &registry, &writer, &AtomicBool::new(false), &mut |_| {}).unwrap();
    let path = writer.finish(0.0).unwrap();

    let out = dir.path().join("post");
    let options = PostOptions { out_dir: Some(out.clone()), allow_incomplete: false, xdmf: false };
    post_process(&path, &options).unwrap();
    let report: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("report.json")).unwrap()).unwrap();
    let modes = report["modes"].as_array().expect("modes in the report");
    assert_eq!(modes.len(), 8, "the eight modes of the damping fit");
    let first = &modes[0];
    let share = first["share"].as_f64().unwrap();
    let peak = first["peak_displacement_m"].as_f64().unwrap();
    println!("mode 1 share {share:.5}, peak {peak:.5} m, captured {}", report["modes_captured_share"]);
    assert!(share > 0.95, "mode 1 holds {share} of the motion");
    assert!((peak / A - 1.0).abs() < 0.02, "mode 1 peak displacement {peak} m against the start size {A} m");
    assert!(std::fs::read_to_string(out.join("modes.csv")).unwrap().lines().count() == 9);

    // The same coordinates, worked out independently from the file.
    let from = report["steady_from_s"].as_f64().unwrap();
    let reference = common::python_json(
        "modal_projection.py",
        &format!("{{\"file\": \"{}\", \"from_time\": {}}}", path.display(), common::json_num(from)),
    );
    let reference: serde_json::Value = serde_json::from_str(&reference).unwrap();
    for (k, m) in modes.iter().enumerate() {
        for (ours, theirs) in [("rms_coordinate", "rms"), ("peak_coordinate", "peak"), ("share", "share")] {
            let (a, b) = (m[ours].as_f64().unwrap(), reference[theirs][k].as_f64().unwrap());
            let scale = reference[theirs]
                .as_array()
                .unwrap()
                .iter()
                .map(|x| x.as_f64().unwrap().abs())
                .fold(0.0, f64::max);
            assert!((a - b).abs() <= 1e-6 * scale, "mode {}: {ours} {a} against NumPy {b}", k + 1);
        }
    }
}
