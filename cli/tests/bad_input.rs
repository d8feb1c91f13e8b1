//! Bad input through the real binary: each case must give a message naming
//! the file, the key path and the line, a non-zero exit code, no panic, and
//! no results file that looks complete.

use std::path::{Path, PathBuf};
use std::process::Command;

const GOOD: &str = include_str!("../../examples/row_of_spans.toml");

struct Outcome {
    code: i32,
    stderr: String,
}

fn run_static(dir: &Path, input: &str) -> (Outcome, PathBuf, PathBuf) {
    let file = dir.join("case.toml");
    std::fs::write(&file, input).unwrap();
    let out = dir.join("case.h5");
    let o = Command::new(env!("CARGO_BIN_EXE_glaze"))
        .args(["static", file.to_str().unwrap(), "--out", out.to_str().unwrap()])
        .output()
        .unwrap();
    let outcome = Outcome {
        code: o.status.code().unwrap_or(-1),
        stderr: String::from_utf8_lossy(&o.stderr).into_owned(),
    };
    (outcome, file, out)
}

/// Runs `input` and checks the located message: `FILE:LINE: KEY: ...`.
fn check(input: &str, key: &str, line: usize, needle: &str, code: i32) {
    let dir = tempfile::tempdir().unwrap();
    let (o, file, out) = run_static(dir.path(), input);
    assert_eq!(o.code, code, "exit code; stderr: {}", o.stderr);
    assert!(!o.stderr.contains("panicked"), "panic: {}", o.stderr);
    let expected = format!("{}:{line}: {key}:", file.display());
    assert!(o.stderr.contains(&expected), "expected `{expected}` in: {}", o.stderr);
    assert!(o.stderr.contains(needle), "expected `{needle}` in: {}", o.stderr);
    assert!(!out.exists(), "a results file was left behind");
    let partial = dir.path().join("case.h5.partial");
    assert!(!partial.exists(), "a partial file was left behind");
}

fn line_of(text: &str, pattern: &str) -> usize {
    text.lines().position(|l| l.contains(pattern)).map(|i| i + 1).expect("pattern in demo")
}

#[test]
fn the_demo_itself_is_good() {
    let dir = tempfile::tempdir().unwrap();
    let (o, _, out) = run_static(dir.path(), GOOD);
    assert_eq!(o.code, 0, "{}", o.stderr);
    assert!(out.exists());
}

#[test]
fn malformed_toml() {
    let bad = GOOD.replace("elements_per_span = 40", "elements_per_span = = 40");
    let line = line_of(&bad, "elements_per_span");
    check(&bad, "(syntax)", line, "not valid TOML", 2);
}

#[test]
fn unknown_key() {
    let bad = GOOD.replace("elements_per_span = 40", "elements_per_span = 40\nelement_size = 5.0");
    let line = line_of(&bad, "element_size");
    check(&bad, "mesh.element_size", line, "unknown field", 2);
}

#[test]
fn missing_key() {
    let bad = GOOD.replace("rated_strength = 140100.0     # N\n", "");
    let line = line_of(&bad, "[conductors.acsr_795]");
    check(&bad, "conductors.acsr_795.rated_strength", line, "missing field", 2);
}

#[test]
fn zero_length_span() {
    let bad = GOOD.replace("position = [380.0, 0.0, 41.5]", "position = [0.0, 0.0, 41.5]");
    // The first span's `to` key names the support that makes it zero length.
    let line = GOOD.lines().position(|l| l.contains("to = \"T2\"")).unwrap() + 1;
    check(&bad, "spans[0].to", line, "horizontal length", 2);
}

#[test]
fn negative_stiffness() {
    let bad = GOOD.replace("axial_stiffness = 3.28e7", "axial_stiffness = -3.28e7");
    let line = line_of(&bad, "axial_stiffness");
    check(&bad, "conductors.acsr_795.axial_stiffness", line, "positive", 2);
}

#[test]
fn negative_sag() {
    let bad = GOOD.replace("sag = 13.5", "sag = -13.5");
    let line = line_of(&bad, "sag = -13.5");
    check(&bad, "spans[1].sag", line, "positive", 2);
}

#[test]
fn unknown_element_type() {
    let bad = GOOD.replace("type = \"beam\"", "type = \"rope\"");
    let line = line_of(&bad, "type = \"rope\"");
    check(&bad, "mesh.type", line, "known types: beam, cable, link", 2);
}

#[test]
fn sag_longer_than_physically_possible() {
    let bad = GOOD.replace("sag = 13.5", "sag = 450.0");
    let line = line_of(&bad, "sag = 450.0");
    check(&bad, "spans[1].sag", line, "not less than the span length", 2);
}

#[test]
fn sag_too_short_breaks_the_conductor() {
    let bad = GOOD.replace("sag = 13.5", "sag = 0.05");
    let line = line_of(&bad, "sag = 0.05");
    check(&bad, "spans[1].sag", line, "rated strength", 2);
}

#[test]
fn non_convergence() {
    // One Newton iteration per step and a smallest step equal to the whole
    // load case: the iced state cannot be reached.
    let bad = GOOD.replace(
        "[load_case]",
        "[solver]\nmax_iterations = 1\nresidual_tolerance = 1e-14\ninitial_load_step = 1.0\nmin_load_step = 1.0\n\n[load_case]",
    );
    let line = line_of(&bad, "[load_case]");
    check(&bad, "load_case", line, "did not converge", 3);
}

#[test]
fn unreadable_file_is_reported() {
    let o =
        Command::new(env!("CARGO_BIN_EXE_glaze")).args(["check", "/nonexistent/x.toml"]).output().unwrap();
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("/nonexistent/x.toml") && err.contains("cannot read"), "{err}");
}

#[test]
fn failed_run_removes_a_stale_results_file() {
    let dir = tempfile::tempdir().unwrap();
    let (o, _, out) = run_static(dir.path(), GOOD);
    assert_eq!(o.code, 0);
    assert!(out.exists());
    let bad = GOOD.replace("sag = 13.5", "sag = -1.0");
    let (o, _, out) = run_static(dir.path(), &bad);
    assert_eq!(o.code, 2);
    assert!(!out.exists(), "the stale results file of the earlier run was kept");
}

/// A coefficient table whose angles go backwards: the error names the input
/// key that points at the table, and the table file and line.
#[test]
fn non_monotone_coefficient_table() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("bad.csv"),
        "# reference_diameter = 0.03\nalpha_deg, cd, cl\n-10, 1, 0\n0, 1, 0\n-5, 1, 0\n10, 1, 0\n20, 1, 0\n",
    )
    .unwrap();
    let input = GOOD
        .replace("rated_strength = 140100.0     # N", "rated_strength = 140100.0\naero_table = \"bad.csv\"");
    let file = dir.path().join("case.toml");
    std::fs::write(&file, &input).unwrap();
    let o =
        Command::new(env!("CARGO_BIN_EXE_glaze")).args(["check", file.to_str().unwrap()]).output().unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    let line = line_of(&input, "aero_table");
    assert!(err.contains(&format!("case.toml:{line}: conductors.acsr_795.aero_table:")), "{err}");
    assert!(err.contains("bad.csv:5"), "the table's own line is named: {err}");
}
