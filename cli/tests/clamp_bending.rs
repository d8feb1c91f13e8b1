//! Clamp bending-stress fatigue (`applies_to = "clamp_bending_stress"`)
//! through the real binary.
//!
//! - Figures: `tests/data/clamp_section.toml` (two spans, one suspension
//!   tower, a single and a twin phase, started in a vertical mode of the
//!   twin) goes through `glaze run` and `glaze post`; every clamp's
//!   largest stress range and Miner damage per hour, per subconductor and
//!   plane, are recomputed from the same HDF5 file by
//!   `tests/python/clamp_bending_check.py` (h5py and NumPy: angles from the
//!   node positions, the Poffenberger–Swart tensioned-beam stress; the PyPI
//!   `rainflow` package for ASTM E1049-85 counting). The issue asks for 1 %;
//!   they agree to round-off, checked at 1e-6.
//! - Bad input: a clamp fatigue curve with no conductor wire data, and a
//!   bad wire value, each a located error naming the key and its line.

mod common;

use common::{glaze, repo, text};
use std::path::Path;
use std::process::Command;

const TRANSIENT: &str = "1.0"; // s, `post.transient` of the test input
/// Drake-class wires of the test input (from memory): 26 Al 4.44 mm 69 GPa, 7 steel 3.45 mm 207 GPa.
const WIRES: &str = "[[26, 4.44e-3, 69.0e9], [7, 3.45e-3, 207.0e9]]";
/// The test input's S–N curve (invented), amplitude MPa against cycles.
const SN: &str = "[[1.0e5, 40.0], [1.0e7, 12.0], [1.0e9, 6.0]]";

fn input() -> String {
    std::fs::read_to_string(repo().join("tests/data/clamp_section.toml")).expect("test input")
}

fn python(h5: &Path) -> serde_json::Value {
    let script = repo().join("tests/python/clamp_bending_check.py");
    let out = Command::new("python3")
        .arg(&script)
        .arg(h5)
        .args([TRANSIENT, WIRES, SN])
        .output()
        .unwrap_or_else(|e| panic!("python3 is needed ({e}); run scripts/setup.sh"));
    assert!(
        out.status.success(),
        "clamp_bending_check.py failed (h5py, numpy and rainflow come from scripts/setup.sh):\n{}",
        text(&out)
    );
    serde_json::from_slice(&out.stdout).expect("JSON from the script")
}

#[test]
fn clamp_stress_ranges_match_an_independent_recomputation() {
    let dir = tempfile::tempdir().unwrap();
    let toml = dir.path().join("clamp.toml");
    std::fs::write(&toml, input()).unwrap();
    let h5 = dir.path().join("clamp.h5");
    let run = glaze(&["run", toml.to_str().unwrap(), "--out", h5.to_str().unwrap(), "--quiet"]);
    assert!(run.status.success(), "glaze run: {}", text(&run));
    let post_dir = dir.path().join("post");
    let post = glaze(&["post", h5.to_str().unwrap(), "--out", post_dir.to_str().unwrap(), "--no-xdmf"]);
    assert!(post.status.success(), "glaze post: {}", text(&post));
    let printed = text(&post);
    assert!(printed.contains("worst clamp T2 phase B"), "{printed}");
    assert!(post_dir.join("clamp_fatigue.csv").exists());

    let report: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(post_dir.join("report.json")).unwrap()).unwrap();
    let ours = report["clamp_fatigue"].as_array().expect("clamp_fatigue in report.json");
    let reference = python(&h5);
    let reference = reference.as_array().unwrap();
    // One clamp at T2: phase A (one conductor) and phase B (two), two planes each.
    assert_eq!(ours.len(), 6, "{ours:?}");
    assert_eq!(reference.len(), 6);
    let mut moving = 0;
    for r in reference {
        let key = |v: &serde_json::Value| {
            (v["tower"].clone(), v["phase"].clone(), v["subconductor"].clone(), v["plane"].clone())
        };
        let o = ours.iter().find(|o| key(o) == key(r)).unwrap_or_else(|| panic!("no {r} in {ours:?}"));
        let f = |v: &serde_json::Value, k: &str| v[k].as_f64().unwrap_or_else(|| panic!("{k} in {v}"));
        let (a, b) = (f(o, "max_range_mpa"), f(r, "max_range_mpa"));
        if b < 1e-3 {
            // Phase A does not move (a few 1e-12 MPa of round-off).
            assert!(a < 1e-3, "{o} against {r}");
            continue;
        }
        moving += 1;
        assert!((a - b).abs() <= 1e-6 * b, "stress range {a} MPa against {b} MPa: {o}");
        assert!(
            (f(o, "static_tension_n") - f(r, "static_tension_n")).abs() <= 1e-9 * f(r, "static_tension_n")
        );
        let (da, db) = (f(o, "damage_per_hour"), f(r, "damage_per_hour"));
        assert!((da - db).abs() <= 1e-6 * db, "damage per hour {da} against {db}: {o}");
    }
    // Both subconductors of phase B bend in both planes, by a few MPa.
    assert_eq!(moving, 4, "{reference:?}");
}

fn check_fails(input: &str, key: &str, pattern: &str, needle: &str) {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("bad.toml");
    std::fs::write(&file, input).unwrap();
    let o = glaze(&["check", file.to_str().unwrap()]);
    let stderr = text(&o);
    assert_eq!(o.status.code(), Some(2), "{stderr}");
    let line = input.lines().position(|l| l.contains(pattern)).expect("pattern") + 1;
    let expected = format!("{}:{line}: {key}:", file.display());
    assert!(stderr.contains(&expected), "expected `{expected}` in: {stderr}");
    assert!(stderr.contains(needle), "expected `{needle}` in: {stderr}");
}

#[test]
fn clamp_stress_without_wire_data_is_a_located_error() {
    let good = input();
    let start = good.find("[conductors.acsr_795.wires]").unwrap();
    let end = good[start..].find("[insulators").unwrap() + start;
    let bad = format!("{}{}", &good[..start], &good[end..]);
    check_fails(
        &bad,
        "post.fatigue[0].applies_to",
        "applies_to = \"clamp_bending_stress\"",
        "[conductors.acsr_795.wires]",
    );
}

#[test]
fn bad_wire_values_are_located_errors() {
    let good = input();
    let bad = good.replace("diameter = 4.44e-3", "diameter = -4.44e-3");
    check_fails(&bad, "conductors.acsr_795.wires.outer.diameter", "diameter = -4.44e-3", "positive diameter");
    let bad = good.replace("outer = { count = 26, ", "outer = { ");
    check_fails(&bad, "conductors.acsr_795.wires.outer", "outer = {", "`ei_min`");
    let bad = good.replace("applies_to = \"clamp_bending_stress\"", "applies_to = \"clamp_bending\"");
    check_fails(&bad, "post.fatigue[0].applies_to", "applies_to = ", "`clamp_bending_stress`");
}
