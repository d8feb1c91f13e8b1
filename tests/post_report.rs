//! `glaze post` against an independent recomputation, and its refusals.
//!
//! - Figures: the galloping example (one iced 350 m span in a cross wind
//!   above onset) is run for 40 s; the report's steady-part envelope,
//!   support forces, conductor tension and Miner damage per hour are
//!   recomputed from the same HDF5 file by `tests/python/post_check.py`
//!   with h5py, NumPy and the PyPI `rainflow` package (ASTM E1049-85), an
//!   implementation outside glaze; they agree to round-off (1e-9).
//! - Refusals (issue 6, "Bad input"): a file without `complete = 1`, a file
//!   of another format version, an HDF5 file that is not a glaze results
//!   file, and an S–N curve that does not decrease, each with a clear message.
//!
//! Python 3 with h5py, numpy and rainflow is required (`scripts/setup.sh`
//! installs them); a missing one is a failure, never a silent pass.

use glaze_engine::analysis::dynamic_stage::run_dynamic;
use glaze_engine::results::ResultsWriter;
use glaze_engine::{input, ElementRegistry, InputErrorKind};
use glaze_report::{post_process, PostOptions, ReportError};
use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::atomic::AtomicBool;

const TRANSIENT: f64 = 20.0; // s
/// S–N curve of an attachment, force range N against cycles (invented for the test).
const SN: &str = "[[1.0e4, 20000.0], [1.0e6, 4000.0], [1.0e8, 1500.0]]";

fn example() -> (PathBuf, String) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/iced_span_galloping.toml");
    let text = std::fs::read_to_string(&path).unwrap();
    let text = text.replace("duration = 60.0", "duration = 40.0");
    assert!(text.contains("duration = 40.0"), "the example's duration line changed");
    let post = format!(
        "\n[post]\ntransient = {TRANSIENT}\nclearance = {{ phase_to_ground = 8.0 }}\n\
         [[post.fatigue]]\nname = \"clamp\"\napplies_to = \"attachment_tension\"\npoints = {SN}\n"
    );
    (path, text + &post)
}

fn run_example(dir: &Path) -> PathBuf {
    let (path, text) = example();
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(&path, &text, &registry).unwrap();
    let writer = ResultsWriter::create(&dir.join("gallop.h5"), &text).unwrap();
    run_dynamic(&spec, &registry, &writer, &AtomicBool::new(false), &mut |_| {}).unwrap();
    writer.finish(0.0).unwrap()
}

fn python(args: &[&str]) -> serde_json::Value {
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/python/post_check.py");
    let out = Command::new("python3")
        .arg(&script)
        .args(args)
        .output()
        .unwrap_or_else(|e| panic!("python3 could not be started ({e}): run scripts/setup.sh"));
    assert!(
        out.status.success(),
        "post_check.py failed (h5py, numpy and rainflow are needed: run scripts/setup.sh):\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).expect("JSON from post_check.py")
}

fn close(a: f64, b: f64, what: &str) {
    assert!((a - b).abs() <= 1e-9 * b.abs().max(1e-12), "{what}: glaze {a} vs reference {b}");
}

#[test]
fn report_figures_match_an_independent_recomputation() {
    let dir = tempfile::tempdir().unwrap();
    let h5 = run_example(dir.path());
    let out = post_process(
        &h5,
        &PostOptions { out_dir: Some(dir.path().join("post")), allow_incomplete: false, xdmf: true },
    )
    .unwrap();
    let r = &out.report;
    assert_eq!(r.steady_from, "given");
    assert!(r.caution.contains("licensed engineer"));
    let py = python(&[h5.to_str().unwrap(), &TRANSIENT.to_string(), SN]);

    let e = &r.spans[0];
    println!(
        "span 1: vertical p-p {:.4} m at {:.1} m, horizontal {:.4} m; orbit {:?}",
        e.vertical_peak_to_peak_m, e.worst_station_m, e.horizontal_peak_to_peak_m, e.orbit
    );
    assert!(e.vertical_peak_to_peak_m > 0.01, "the example gallops: {} m", e.vertical_peak_to_peak_m);
    close(e.vertical_peak_to_peak_m, py["vertical_pp"].as_f64().unwrap(), "vertical peak-to-peak");
    close(e.horizontal_peak_to_peak_m, py["horizontal_pp"].as_f64().unwrap(), "horizontal peak-to-peak");
    close(e.worst_station_m, py["worst_station"].as_f64().unwrap(), "worst station");
    for (k, s) in r.supports.iter().enumerate() {
        close(s.peak_magnitude_n, py["support_peak"][k].as_f64().unwrap(), "support peak");
        close(s.dynamic_ratio, py["support_ratio"][k].as_f64().unwrap(), "support ratio");
    }
    close(r.conductors[0].peak_n, py["conductor_peak"].as_f64().unwrap(), "conductor peak tension");
    assert_eq!(r.fatigue.len(), r.supports.len());
    for (k, f) in r.fatigue.iter().enumerate() {
        close(f.damage_per_hour, py["damage_per_hour"][k].as_f64().unwrap(), "damage per hour");
    }
    // Written files: report.json last, each complete.
    let names: Vec<String> =
        out.written.iter().map(|p| p.file_name().unwrap().to_string_lossy().into_owned()).collect();
    assert_eq!(names.last().map(String::as_str), Some("report.json"));
    // The viewer description beside the results file (read back by meshio in xdmf_meshio.rs).
    assert!(h5.with_extension("xdmf").exists() && names.contains(&"gallop.xdmf".to_string()));
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.path().join("post/report.json")).unwrap()).unwrap();
    assert_eq!(json["spans"][0]["span"], 1);
    assert!(std::fs::read_dir(dir.path().join("post"))
        .unwrap()
        .all(|e| { !e.unwrap().file_name().to_string_lossy().ends_with(".partial") }));
}

#[test]
fn an_incomplete_file_is_refused_unless_allowed() {
    let dir = tempfile::tempdir().unwrap();
    let (path, text) = example();
    let text = text.replace("duration = 40.0", "duration = 1.0").replace("transient = 20", "transient = 0.5");
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(&path, &text, &registry).unwrap();
    let writer = ResultsWriter::create(&dir.path().join("cut.h5"), &text).unwrap();
    run_dynamic(&spec, &registry, &writer, &AtomicBool::new(false), &mut |_| {}).unwrap();
    let partial = writer.keep_incomplete(0.0).unwrap();
    let opts = PostOptions { out_dir: Some(dir.path().join("post")), allow_incomplete: false, xdmf: true };
    match post_process(&partial, &opts) {
        Err(e @ ReportError::Incomplete { .. }) => {
            let m = e.to_string();
            assert!(m.contains("incomplete") && m.contains("--allow-incomplete"), "{m}");
        }
        other => panic!("an incomplete file was not refused: {other:?}"),
    }
    assert!(!dir.path().join("post/report.json").exists());
    let allowed = post_process(&partial, &PostOptions { allow_incomplete: true, ..opts }).unwrap();
    assert!(!allowed.report.complete);
}

#[test]
fn another_format_or_another_file_kind_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let old = dir.path().join("old.h5");
    {
        let f = hdf5::File::create(&old).unwrap();
        let s: hdf5::types::VarLenUnicode = "glaze-results".parse().unwrap();
        f.new_attr::<hdf5::types::VarLenUnicode>().create("format").unwrap().write_scalar(&s).unwrap();
        f.new_attr::<u32>().create("format_version").unwrap().write_scalar(&1u32).unwrap();
        f.new_attr::<u32>().create("complete").unwrap().write_scalar(&1u32).unwrap();
    }
    let opts = PostOptions { out_dir: Some(dir.path().join("post")), allow_incomplete: false, xdmf: true };
    let m = post_process(&old, &opts).unwrap_err().to_string();
    assert!(m.contains("format version 1") && m.contains("rerun"), "{m}");
    let other = dir.path().join("other.h5");
    hdf5::File::create(&other).unwrap();
    let m = post_process(&other, &opts).unwrap_err().to_string();
    assert!(m.contains("not a glaze results file"), "{m}");
    let text = dir.path().join("text.h5");
    std::fs::write(&text, "not hdf5").unwrap();
    assert!(matches!(post_process(&text, &opts), Err(ReportError::File { .. })));
}

#[test]
fn an_sn_curve_that_does_not_decrease_is_a_located_input_error() {
    let (path, text) = example();
    let text = text.replace(SN, "[[1.0e4, 20000.0], [1.0e6, 25000.0]]");
    let registry = ElementRegistry::with_builtin();
    let err = input::load_str(&path, &text, &registry).unwrap_err();
    assert_eq!(err.kind, InputErrorKind::InvalidValue);
    assert_eq!(err.key, "post.fatigue[0].points");
    let line = text.lines().position(|l| l.starts_with("points =")).unwrap() + 1;
    assert_eq!(err.line, line, "{err}");
    assert!(err.message.contains("must decrease"), "{err}");
}
