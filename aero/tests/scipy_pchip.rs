//! Cross-check of the coefficient-table interpolation against SciPy.
//!
//! Reference: `scipy.interpolate.PchipInterpolator` (values and first
//! derivatives) and `numpy.interp`, run through `tests/pchip_check.py`.
//! glaze's monotone cubic uses SciPy's exact node-derivative rules
//! (Fritsch–Butland weighted harmonic mean inside, the one-sided three-point
//! shape-preserving formula at the ends) and the same power-form cubic, so
//! the two agree to rounding. Tolerance: 1e-12 relative, i.e.
//! `|ours − scipy| ≤ 1e-12 · max(|scipy|, s)` with `s` the largest `|scipy|`
//! of that quantity over the sampled angles, so that values passing through
//! zero are compared relative to the curve's size.
//!
//! A periodic (360°) table differs from SciPy's non-periodic PCHIP in its
//! first and last interval only (glaze applies the interior rule across the
//! seam), so periodic tables are compared on `[α₁, α_{n−2}]`; non-periodic
//! tables, with uneven spacing and with data that trigger both end-point
//! limiters, are compared over their full range.
//!
//! The test needs `python3` with numpy and scipy (`scripts/setup.sh` installs
//! them); without them it fails with a message saying so. Set
//! `GLAZE_PYTHON` to use another interpreter.

use std::path::{Path, PathBuf};
use std::process::Command;

use glaze_aero::{CoefficientTable, Interpolation, TableOptions};

const POINTS: usize = 200;

fn examples() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../examples/aero")
}

/// Run the SciPy script; one `[α, cd, cl, cm, dcd, dcl, dcm]` per angle.
fn scipy(table: &Path, lo: f64, hi: f64, mode: &str) -> Vec<[f64; 7]> {
    let python = std::env::var("GLAZE_PYTHON").unwrap_or_else(|_| "python3".to_string());
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/pchip_check.py");
    let output = Command::new(&python)
        .arg(&script)
        .arg(table)
        .args([lo.to_string(), hi.to_string(), POINTS.to_string()])
        .arg(mode)
        .output()
        .unwrap_or_else(|e| {
            panic!(
                "cannot run `{python}` ({e}): this SciPy cross-check needs python3 with \
                 numpy and scipy on PATH (bash scripts/setup.sh installs them), or \
                 GLAZE_PYTHON naming an interpreter that has them"
            )
        });
    assert!(
        output.status.success(),
        "`{python} {}` failed ({}); does it have numpy and scipy? stderr:\n{}",
        script.display(),
        output.status,
        String::from_utf8_lossy(&output.stderr)
    );
    let text = String::from_utf8(output.stdout).expect("script output is UTF-8");
    let rows: Vec<[f64; 7]> = text
        .lines()
        .map(|line| {
            let v: Vec<f64> = line
                .split_whitespace()
                .map(|f| f.parse().unwrap_or_else(|_| panic!("bad number in {line:?}")))
                .collect();
            v.try_into().unwrap_or_else(|_| panic!("expected 7 numbers: {line:?}"))
        })
        .collect();
    assert_eq!(rows.len(), POINTS, "script printed {} rows", rows.len());
    rows
}

/// Compare our table with SciPy at POINTS angles in `[lo, hi]` (rad).
fn compare(table: &CoefficientTable, lo: f64, hi: f64, with_derivatives: bool) {
    let mode = match table.interpolation() {
        Interpolation::Linear => "linear",
        Interpolation::MonotoneCubic => "pchip",
    };
    let reference = scipy(table.path(), lo, hi, mode);
    let columns = if with_derivatives { 6 } else { 3 };
    let mut scale = [0.0f64; 6];
    for r in &reference {
        for q in 0..6 {
            scale[q] = scale[q].max(r[q + 1].abs());
        }
    }
    let names = ["cd", "cl", "cm", "dcd/dα", "dcl/dα", "dcm/dα"];
    let mut worst = 0.0f64;
    for r in &reference {
        let (c, d) = table.evaluate_with_derivative(r[0]).unwrap();
        let ours = [c.cd, c.cl, c.cm, d.cd, d.cl, d.cm];
        for q in 0..columns {
            let err = (ours[q] - r[q + 1]).abs() / r[q + 1].abs().max(scale[q]).max(1e-300);
            worst = worst.max(err);
            assert!(
                err <= 1e-12,
                "{}: {} at α = {} rad: glaze {} vs scipy {} (relative {err:e})",
                table.path().display(),
                names[q],
                r[0],
                ours[q],
                r[q + 1]
            );
        }
    }
    eprintln!("{}: {mode} worst relative difference {worst:e}", table.path().display());
}

/// Write `text` to a temporary CSV, returning its path.
fn temp_table(name: &str, text: &str) -> PathBuf {
    let path = std::env::temp_dir().join(format!("glaze-aero-scipy-{}-{name}.csv", std::process::id()));
    std::fs::write(&path, text).expect("write temporary table");
    path
}

#[test]
fn crescent_table_matches_scipy_pchip_away_from_the_seam() {
    let table =
        CoefficientTable::from_csv_path(examples().join("crescent_ice.csv"), &Default::default()).unwrap();
    assert!(table.is_periodic());
    let a = table.alpha_points();
    compare(&table, a[1], a[a.len() - 2], true);
}

#[test]
fn bare_table_matches_scipy_pchip() {
    let table =
        CoefficientTable::from_csv_path(examples().join("bare_round.csv"), &Default::default()).unwrap();
    let a = table.alpha_points();
    compare(&table, a[1], a[a.len() - 2], true);
}

#[test]
fn uneven_non_periodic_subset_matches_scipy_pchip_including_the_ends() {
    // Rows of the crescent table from −90° to 150°, thinned to uneven
    // spacing (5°, 10°, 15°, 20°, 25° steps in turn).
    let text = std::fs::read_to_string(examples().join("crescent_ice.csv")).unwrap();
    let mut kept = String::new();
    let (mut next, mut step) = (-90.0, 5.0);
    for line in text.lines() {
        let Some(first) = line.split(',').next() else {
            continue;
        };
        match first.trim().parse::<f64>() {
            Ok(a) if a == next && a <= 150.0 => {
                kept += line;
                kept.push('\n');
                next += step;
                step = if step >= 25.0 { 5.0 } else { step + 5.0 };
            }
            Ok(_) => {}
            Err(_) => {
                kept += line;
                kept.push('\n');
            }
        }
    }
    let path = temp_table("uneven", &kept);
    let table = CoefficientTable::from_csv_path(&path, &Default::default()).unwrap();
    assert!(!table.is_periodic());
    let (lo, hi) = table.alpha_range();
    compare(&table, lo, hi, true);
    let linear = TableOptions { interpolation: Interpolation::Linear, ..Default::default() };
    let table = CoefficientTable::from_csv_path(&path, &linear).unwrap();
    compare(&table, lo, hi, true);
    std::fs::remove_file(&path).ok();
}

#[test]
fn end_limiters_match_scipy_pchip() {
    // cd: left end estimate has the wrong sign (set to 0); cl: right end
    // estimate exceeds 3·m₀ across a sign change (limited to 3·m₀); cm: flat
    // stretches and sign changes inside (derivative 0 there).
    let text = "\
# reference_diameter = 0.03
alpha_deg,cd,cl,cm
0,0.0,0.0,0.00
4,1.0,11.0,0.00
9,6.0,1.0,0.10
15,7.0,3.0,0.10
20,6.5,1.6,-0.20
30,6.0,2.0,-0.20
";
    let path = temp_table("limiters", text);
    let table = CoefficientTable::from_csv_path(&path, &Default::default()).unwrap();
    let (lo, hi) = table.alpha_range();
    // The limiters are active: dC_D/dα = 0 at the left end, and
    // dC_L/dα = 3 × the last secant at the right end.
    assert_eq!(table.derivative(lo).unwrap().cd, 0.0);
    let a = table.alpha_points();
    let m_last = (2.0 - 1.6) / (a[a.len() - 1] - a[a.len() - 2]);
    assert!((table.derivative(hi).unwrap().cl - 3.0 * m_last).abs() < 1e-12 * m_last);
    compare(&table, lo, hi, true);
    std::fs::remove_file(&path).ok();
}
