//! The demo's static results, read back with h5py and compared by an
//! independent SciPy solution of every span's elastic catenary
//! (`tests/python/catenary_crosscheck.py`). Python with numpy, scipy and
//! h5py is required: `scripts/setup.sh` installs them. A missing Python is
//! a failure, never a silent pass.

use std::path::Path;
use std::process::Command;

fn run_crosscheck(input: &Path, tolerance: &str) {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("result.h5");
    let o = Command::new(env!("CARGO_BIN_EXE_glaze"))
        .args(["static", input.to_str().unwrap(), "--out", out.to_str().unwrap()])
        .output()
        .unwrap();
    assert!(o.status.success(), "glaze static failed: {}", String::from_utf8_lossy(&o.stderr));
    let script = root.join("tests/python/catenary_crosscheck.py");
    let py = Command::new("python3")
        .arg(&script)
        .arg(&out)
        .arg(tolerance)
        .output()
        .expect("python3 is needed for the SciPy cross-check; run scripts/setup.sh");
    let report = String::from_utf8_lossy(&py.stdout);
    println!("{report}");
    assert!(
        py.status.success(),
        "SciPy cross-check failed:\n{report}\n{}",
        String::from_utf8_lossy(&py.stderr)
    );
    assert!(report.contains("worst relative difference"), "unexpected report: {report}");
}

#[test]
fn demo_row_of_spans_agrees_with_scipy() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    // Issue #2: sag and tensions within 0.1 %.
    run_crosscheck(&root.join("examples/row_of_spans.toml"), "1e-3");
}
