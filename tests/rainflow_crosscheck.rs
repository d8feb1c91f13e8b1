//! glaze's rainflow counting (`glaze_post::rainflow`, ASTM E1049-85 §5.4.4)
//! against an independent implementation of the same standard: the PyPI
//! package `rainflow` (`tests/python/rainflow_check.py`).
//!
//! Several pseudo-random histories (a fixed LCG, so the same every run) are
//! written to a temporary file with round-trip float formatting; the script
//! counts them with `rainflow.extract_cycles` and `rainflow.count_cycles`.
//! The histogram (range → count) must agree to 1e-12 (relative to the range
//! scale) and the cycle lists (range, mean, count, start, end) one for one.
//! Histories with repeated levels exercise the plateaus and the ties X = Y.
//!
//! Two-point and constant histories are left out on purpose: for them the
//! package (3.2.0) reports no cycle and a zero-range half cycle, where glaze
//! reports one half cycle and none.
//!
//! Python 3 with `rainflow` is required (`scripts/setup.sh` installs it). A
//! missing Python or package is a failure, never a silent pass.

use glaze_post::rainflow::{histogram, rainflow, Cycle};
use std::io::Write;
use std::path::Path;
use std::process::Command;

/// Knuth's MMIX LCG, uniform in [0, 1).
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self.0.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
}

/// The histories: (name, samples).
fn histories() -> Vec<(&'static str, Vec<f64>)> {
    let mut g = Lcg(20240611);
    let uniform: Vec<f64> = (0..2000).map(|_| 2.0 * g.next() - 1.0).collect();
    let levels: Vec<f64> = (0..5000).map(|_| (g.next() * 7.0).floor()).collect();
    let mut walk = vec![0.0];
    for _ in 0..3000 {
        let last = *walk.last().unwrap();
        walk.push(last + g.next() - 0.5);
    }
    // A slow sine in MPa-like units with noise and a small plateau fraction.
    let sine: Vec<f64> = (0..1500)
        .map(|i| {
            let x = 40e6 * (0.05 * i as f64).sin() + 8e6 * (g.next() - 0.5);
            if g.next() < 0.1 {
                (x / 1e6).round() * 1e6
            } else {
                x
            }
        })
        .collect();
    let two_levels: Vec<f64> = (0..60).map(|_| if g.next() < 0.5 { -1.0 } else { 1.0 }).collect();
    let astm = vec![-2.0, 1.0, -3.0, 5.0, -1.0, 3.0, -4.0, 4.0, -2.0];
    vec![
        ("uniform", uniform),
        ("seven levels", levels),
        ("random walk", walk),
        ("noisy sine", sine),
        ("two levels", two_levels),
        ("ASTM E1049-85 example", astm),
        ("three points", vec![0.0, 2.5, -1.0]),
    ]
}

/// What the script prints for one history.
#[derive(Default)]
struct Reference {
    cycles: Vec<(f64, f64, f64, usize, usize)>,
    /// Ascending range, as `count_cycles` returns it.
    hist: Vec<(f64, f64)>,
}

fn python_reference(series: &[Vec<f64>]) -> Vec<Reference> {
    let mut file = tempfile::NamedTempFile::new().expect("temporary file");
    for s in series {
        let line: Vec<String> = s.iter().map(|x| format!("{x:?}")).collect();
        writeln!(file, "{}", line.join(" ")).unwrap();
    }
    file.flush().unwrap();
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/python/rainflow_check.py");
    let py = Command::new("python3").arg(&script).arg(file.path()).output().unwrap_or_else(|e| {
        panic!("python3 is needed for the rainflow cross-check ({e}); run scripts/setup.sh")
    });
    let stdout = String::from_utf8_lossy(&py.stdout);
    let stderr = String::from_utf8_lossy(&py.stderr);
    assert!(
        !stderr.contains("ModuleNotFoundError"),
        "the PyPI package `rainflow` is needed for the rainflow cross-check; run scripts/setup.sh:\n{stderr}"
    );
    assert!(py.status.success(), "the rainflow reference script failed:\n{stdout}\n{stderr}");
    println!("{}", stdout.lines().next().unwrap_or(""));

    let mut out: Vec<Reference> = Vec::new();
    for line in stdout.lines() {
        let f: Vec<&str> = line.split_whitespace().collect();
        let num = |i: usize| -> f64 { f[i].parse().unwrap_or_else(|_| panic!("bad number in {line:?}")) };
        let idx = |i: usize| -> usize { f[i].parse().unwrap_or_else(|_| panic!("bad index in {line:?}")) };
        match f.first() {
            Some(&"series") => out.push(Reference::default()),
            Some(&"cycle") => out.last_mut().expect("cycle before series").cycles.push((
                num(1),
                num(2),
                num(3),
                idx(4),
                idx(5),
            )),
            Some(&"hist") => out.last_mut().expect("hist before series").hist.push((num(1), num(2))),
            _ => {}
        }
    }
    assert_eq!(
        out.len(),
        series.len(),
        "the script reported {} of {} histories:\n{stdout}",
        out.len(),
        series.len()
    );
    out
}

#[test]
fn rainflow_matches_the_python_rainflow_package() {
    let cases = histories();
    let series: Vec<Vec<f64>> = cases.iter().map(|c| c.1.clone()).collect();
    let reference = python_reference(&series);
    for ((name, s), r) in cases.iter().zip(&reference) {
        let cycles: Vec<Cycle> = rainflow(s).unwrap();
        // Tolerance 1e-12 of the history's range scale (both sides compute
        // the same differences, so agreement is in fact exact).
        let scale = s.iter().fold(0.0f64, |a, x| a.max(x.abs())).max(1.0);
        let tol = 1e-12 * scale;

        let ours = histogram(&cycles);
        let theirs: Vec<(f64, f64)> = r.hist.iter().rev().cloned().collect();
        assert_eq!(ours.len(), theirs.len(), "{name}: {} vs {} distinct ranges", ours.len(), theirs.len());
        for (a, b) in ours.iter().zip(&theirs) {
            assert!(
                (a.0 - b.0).abs() <= tol && (a.1 - b.1).abs() <= 1e-12,
                "{name}: histogram (range, count) glaze {a:?} vs rainflow {b:?}"
            );
        }

        assert_eq!(cycles.len(), r.cycles.len(), "{name}: number of cycles");
        for (k, (c, p)) in cycles.iter().zip(&r.cycles).enumerate() {
            assert!(
                (c.range - p.0).abs() <= tol
                    && (c.mean - p.1).abs() <= tol
                    && c.count == p.2
                    && (c.start, c.end) == (p.3, p.4),
                "{name}: cycle {k}: glaze {c:?} vs rainflow {p:?}"
            );
        }
        let total: f64 = cycles.iter().map(|c| c.count).sum();
        println!(
            "{name}: {} samples, {} cycles (total count {total}), {} ranges",
            s.len(),
            cycles.len(),
            ours.len()
        );
    }
}
