//! The XDMF description of a run (`glaze_report::xdmf::write_xdmf`), read
//! back by an independent reader: the `meshio` Python package's
//! `meshio.xdmf.TimeSeriesReader` (`tests/python/xdmf_check.py`).
//!
//! A single beam span (16 elements, so 17 nodes, plus the two single-node
//! torsion restraints at the supports, which the description leaves out)
//! swings for 0.5 s from its first mode (Δt = 0.01 s, a record every
//! 0.05 s: 11 records). meshio must find the model's nodes, its 2-node
//! elements with their node pairs, every record at its time, and at the
//! last record node coordinates equal to `/static/position` +
//! `/dynamic/displacement` of the results file (1e-9 m), with the
//! displacement, velocity and axial force of that record.
//!
//! The description is moved to another folder before meshio reads it: it
//! names its companion file relatively and does not need the results file.
//!
//! Python 3 with meshio and h5py is required (`scripts/setup.sh` installs
//! them). A missing Python or meshio is a failure, never a silent pass.

use glaze_engine::analysis::dynamic_stage::run_dynamic;
use glaze_engine::results::ResultsWriter;
use glaze_engine::{input, model, ElementRegistry};
use glaze_report::xdmf::{write_xdmf, XdmfSummary};
use std::path::Path;
use std::process::Command;
use std::sync::atomic::AtomicBool;

const ELEMENTS: usize = 16;
const DURATION: f64 = 0.5; // s
const OUTPUT_INTERVAL: f64 = 0.05; // s

fn input_text() -> String {
    format!(
        r#"[glaze]
schema_version = 1
title = "XDMF read back by meshio"
[conductors.c]
diameter = 0.02814
mass_per_length = 1.628
axial_stiffness = 3.28e7
bending_stiffness = 44.0
torsional_stiffness = 35.0
thermal_expansion = 18.9e-6
rated_strength = 140100.0
[[supports]]
name = "A"
position = [0.0, 0.0, 30.0]
[[supports]]
name = "B"
position = [200.0, 0.0, 30.0]
[[spans]]
from = "A"
to = "B"
conductor = "c"
sag = 6.0
[mesh]
type = "beam"
elements_per_span = {ELEMENTS}
[stringing]
temperature = 15.0
[load_case]
temperature = 15.0
[dynamics]
duration = {DURATION}
time_step = 0.01
output_interval = {OUTPUT_INTERVAL}
perturbation = {{ mode = 1, amplitude = 0.5 }}
"#
    )
}

/// Runs `tests/python/xdmf_check.py` on `xdmf` and returns its JSON.
fn meshio_read(xdmf: &Path) -> serde_json::Value {
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/python/xdmf_check.py");
    let py = Command::new("python3").arg(&script).arg(xdmf).output().unwrap_or_else(|e| {
        panic!(
            "python3 is needed for the meshio read-back of the XDMF description ({e}); run scripts/setup.sh"
        )
    });
    let stdout = String::from_utf8_lossy(&py.stdout);
    let stderr = String::from_utf8_lossy(&py.stderr);
    assert!(
        !stderr.contains("ModuleNotFoundError"),
        "meshio and h5py are needed for the XDMF read-back; run scripts/setup.sh:\n{stderr}"
    );
    assert!(py.status.success(), "the meshio read-back failed:\n{stdout}\n{stderr}");
    serde_json::from_str(&stdout).unwrap_or_else(|e| panic!("meshio output is not JSON ({e}):\n{stdout}"))
}

fn rows(v: &serde_json::Value) -> Vec<Vec<f64>> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|r| r.as_array().unwrap().iter().map(|x| x.as_f64().unwrap()).collect())
        .collect()
}

fn read(file: &hdf5::File, name: &str) -> Vec<f64> {
    file.dataset(name).and_then(|d| d.read_raw::<f64>()).unwrap_or_else(|e| panic!("{name}: {e}"))
}

#[test]
fn meshio_reads_the_nodes_cells_records_and_positions_of_a_run() {
    let text = input_text();
    let registry = ElementRegistry::with_builtin();
    let dir = tempfile::tempdir().unwrap();
    let run_dir = dir.path().join("run");
    std::fs::create_dir(&run_dir).unwrap();
    let spec = input::load_str(&run_dir.join("run.toml"), &text, &registry).unwrap();
    let writer = ResultsWriter::create(&run_dir.join("run.h5"), &text).unwrap();
    run_dynamic(&spec, &registry, &writer, &AtomicBool::new(false), &mut |_| {}).unwrap();
    let results = writer.finish(0.0).unwrap();

    // The model as the engine builds it: nodes and 2-node elements.
    let mdl = model::build(&spec, &registry).unwrap();
    let two_node: Vec<usize> =
        (0..mdl.elements.len()).filter(|&k| mdl.elements[k].nodes().len() == 2).collect();
    assert_eq!(two_node.len(), ELEMENTS);
    assert!(mdl.elements.len() > ELEMENTS, "the beam mesh has single-node torsion restraints");

    let file = hdf5::File::open(&results).unwrap();
    let time = read(&file, "dynamic/time");
    let records = time.len();
    assert_eq!(records, (DURATION / OUTPUT_INTERVAL).round() as usize + 1);

    let summary = write_xdmf(&results, &run_dir.join("run.xdmf")).unwrap();
    assert_eq!(summary, XdmfSummary { nodes: mdl.node_count(), cells: ELEMENTS, time_steps: records });
    let mut names: Vec<String> =
        std::fs::read_dir(&run_dir).unwrap().map(|e| e.unwrap().file_name().into_string().unwrap()).collect();
    names.sort();
    assert_eq!(names, ["run.h5", "run.xdmf", "run.xdmf.h5"], "no partial file is left");

    // Moved away from the results file, with its companion.
    let moved = dir.path().join("moved");
    std::fs::create_dir(&moved).unwrap();
    for name in ["run.xdmf", "run.xdmf.h5"] {
        std::fs::rename(run_dir.join(name), moved.join(name)).unwrap();
    }

    // The independent check: meshio reads the description.
    let py = meshio_read(&moved.join("run.xdmf"));
    println!(
        "meshio {}: {} points, {} {} cells, {} time steps",
        py["meshio_version"], py["points"], py["cells"], py["cell_types"][0], py["time_steps"]
    );
    assert_eq!(py["points"].as_u64(), Some(mdl.node_count() as u64));
    assert_eq!(py["cells"].as_u64(), Some(ELEMENTS as u64));
    assert_eq!(py["cell_types"], serde_json::json!(["line"]));
    assert_eq!(py["time_steps"].as_u64(), Some(records as u64));
    let connectivity = rows(&py["connectivity"]);
    for (cell, &k) in connectivity.iter().zip(&two_node) {
        let want: Vec<f64> = mdl.elements[k].nodes().iter().map(|&a| a as f64).collect();
        assert_eq!(cell, &want, "element {k}");
    }
    let times: Vec<f64> = py["times"].as_array().unwrap().iter().map(|t| t.as_f64().unwrap()).collect();
    assert_eq!(times, time, "record times");

    // Coordinates at the first and last records: static position + displacement.
    let n = mdl.node_count();
    let stat = read(&file, "static/position");
    let disp = read(&file, "dynamic/displacement");
    let vel = read(&file, "dynamic/velocity");
    let force = read(&file, "dynamic/element_axial_force");
    let at = |r: usize, i: usize, d: usize| stat[3 * i + d] + disp[(r * n + i) * 3 + d];
    let last = records - 1;
    let mut largest_move = 0.0f64;
    for (what, got, r) in [
        ("first geometry", rows(&py["first_points"]), 0),
        ("last geometry", rows(&py["last_geometry"]), last),
        ("last position attribute", rows(&py["last_position"]), last),
    ] {
        assert_eq!(got.len(), n, "{what}");
        for (i, p) in got.iter().enumerate() {
            for d in 0..3 {
                assert!(
                    (p[d] - at(r, i, d)).abs() <= 1e-9,
                    "{what}, node {i}, axis {d}: {} vs {}",
                    p[d],
                    at(r, i, d)
                );
                if r == last {
                    largest_move = largest_move.max((p[d] - stat[3 * i + d]).abs());
                }
            }
        }
    }
    assert!(largest_move > 1e-3, "the span has moved at the last record ({largest_move} m)");
    for (what, got, hist) in [
        ("displacement", rows(&py["last_displacement"]), &disp),
        ("velocity", rows(&py["last_velocity"]), &vel),
    ] {
        for (i, v) in got.iter().enumerate() {
            for d in 0..3 {
                let want = hist[(last * n + i) * 3 + d];
                assert!((v[d] - want).abs() <= 1e-9, "{what}, node {i}, axis {d}: {} vs {want}", v[d]);
            }
        }
    }
    let e = mdl.elements.len();
    let axial: Vec<f64> =
        py["last_axial_force"].as_array().unwrap().iter().map(|v| v.as_f64().unwrap()).collect();
    assert_eq!(axial.len(), ELEMENTS);
    for (got, &k) in axial.iter().zip(&two_node) {
        let want = force[last * e + k];
        assert!(
            (got - want).abs() <= 1e-9 * want.abs().max(1.0),
            "axial force of element {k}: {got} vs {want} N"
        );
    }
    println!("coordinates within 1e-9 m of static + displacement; largest motion at the last record {largest_move:.4} m");
}
