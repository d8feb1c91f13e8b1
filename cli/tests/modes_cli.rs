//! `glaze modes` through the real binary: the quick-start demo gives a
//! complete results file with `/modes` (read back with the `hdf5` crate),
//! and a `--count` larger than the model's DOF is a clear input error
//! (exit code 2, message naming `--count`, no results file left).

use hdf5::types::VarLenUnicode;
use std::path::Path;
use std::process::Command;

fn demo() -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../examples/row_of_spans.toml")
}

#[test]
fn demo_modes_are_written_and_ascending() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("modes.h5");
    let o = Command::new(env!("CARGO_BIN_EXE_glaze"))
        .args(["modes", demo().to_str().unwrap(), "--count", "12", "--out", out.to_str().unwrap()])
        .output()
        .unwrap();
    let stdout = String::from_utf8_lossy(&o.stdout);
    assert!(o.status.success(), "glaze modes failed: {}", String::from_utf8_lossy(&o.stderr));
    println!("{stdout}");
    assert!(stdout.contains("Caution:"), "the caution line is missing");
    assert!(stdout.contains("loop"), "no labels in the table");

    let f = hdf5::File::open(&out).unwrap();
    assert_eq!(f.attr("complete").unwrap().read_scalar::<u32>().unwrap(), 1);
    let freq: Vec<f64> = f.dataset("modes/frequency_hz").unwrap().read_raw().unwrap();
    assert_eq!(freq.len(), 12);
    assert!(freq.windows(2).all(|w| w[0] <= w[1]), "not ascending: {freq:?}");
    assert!(freq[0] > 0.05 && freq[0] < 1.0, "first frequency {} Hz", freq[0]);
    let unit = |name: &str| -> String {
        f.dataset(name).unwrap().attr("unit").unwrap().read_scalar::<VarLenUnicode>().unwrap().to_string()
    };
    assert_eq!(unit("modes/frequency_hz"), "Hz");

    let nodes = f.dataset("model/node_position").unwrap().shape()[0];
    let shape = f.dataset("modes/shape").unwrap();
    assert_eq!(shape.shape(), vec![12, nodes, 6]);
    let share = f.dataset("modes/energy_share").unwrap();
    assert_eq!(share.shape(), vec![12, 4]);
    let rows: Vec<f64> = share.read_raw().unwrap();
    for r in rows.chunks(4) {
        assert!((r.iter().sum::<f64>() - 1.0).abs() < 1e-12);
    }
    let columns: Vec<String> = share
        .attr("columns")
        .unwrap()
        .read_raw::<VarLenUnicode>()
        .unwrap()
        .iter()
        .map(|s| s.to_string())
        .collect();
    assert_eq!(columns, ["vertical", "transverse", "longitudinal", "torsional"]);
    let labels: Vec<VarLenUnicode> = f.dataset("modes/label").unwrap().read_raw().unwrap();
    assert_eq!(labels.len(), 12);
    assert!(labels[0].as_str().contains("span"), "label {}", labels[0]);
    for name in ["modes/shape", "modes/energy_share", "modes/label", "modes/period", "modes/residual"] {
        assert!(!unit(name).is_empty());
    }
    // Supports do not translate (their bending rotations are free; twist is
    // held by a stiff restraint, not removed).
    let support: Vec<i64> = f.dataset("model/groups/support").unwrap().read_raw().unwrap();
    let values: Vec<f64> = shape.read_raw().unwrap();
    for &s in &support {
        for m in 0..12 {
            let o = (m * nodes + s as usize) * 6;
            assert!(values[o..o + 3].iter().all(|&v| v == 0.0));
        }
    }
}

#[test]
fn too_many_modes_is_an_input_error_naming_count() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("modes.h5");
    let o = Command::new(env!("CARGO_BIN_EXE_glaze"))
        .args(["modes", demo().to_str().unwrap(), "--count", "100000", "--out", out.to_str().unwrap()])
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "exit code; stderr: {stderr}");
    assert!(stderr.contains("--count"), "message does not name --count: {stderr}");
    assert!(!stderr.contains("panicked"), "panic: {stderr}");
    assert!(!out.exists(), "a results file was left behind");
    assert!(!dir.path().join("modes.h5.partial").exists(), "a partial file was left behind");
}
