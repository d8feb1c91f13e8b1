//! Fill-reducing orderings of the step matrix of generated tension
//! sections (`glaze bench` scale cases s5p3b2e, ≈ 11 k DOF, and s10p3b4e,
//! ≈ 39 k DOF): the effective stiffness S = K + (4/Δt²) M of Newmark's
//! average-acceleration rule at Δt = 0.01 s (K the symmetrised tangent about
//! the iced, wind-loaded static state, M the lumped mass), factorised and
//! solved by
//!
//! - faer LLᵀ with AMD, with the natural (chainage) order and with reverse
//!   Cuthill–McKee;
//! - faer LU with COLAMD (its only ordering), as the dynamic step uses it
//!   (the aerodynamic tangent makes the step matrix unsymmetric);
//! - the banded LU baseline in natural order and after reverse Cuthill–McKee.
//!
//! The fill (values in L, or band storage) is printed once per case; the
//! times are criterion's. Results and the choice: docs/benchmarks.md,
//! "Orderings".

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use glaze_bench::ScaleCase;
use glaze_engine::analysis::{run_static, Linearisation};
use glaze_engine::{input, model, ElementRegistry};
use glaze_solvers::{BandOrdering, BandedLu, CholeskyOrdering, LinearSolver, SolverBackend, SparseDirect};

/// The step matrix of `case` with its pattern.
fn step_matrix(case: ScaleCase) -> (glaze_solvers::SparsityPattern, Vec<f64>) {
    let dir = std::env::temp_dir().join(format!("glaze-orderings-{}-{}", case.name(), std::process::id()));
    let text = case.input(&dir, 1.0, SolverBackend::default()).expect("case input");
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(&dir.join("input.toml"), &text, &registry).expect("valid case");
    let m = model::build(&spec, &registry).expect("model");
    let state = run_static(&spec, &m).expect("static state");
    let lin = Linearisation::about(&m, &state.config).expect("linearisation");
    let _ = std::fs::remove_dir_all(&dir);
    let c0 = 4.0 / (0.01 * 0.01);
    let values = lin.stiffness.iter().zip(&lin.mass).map(|(k, m)| k + c0 * m).collect();
    (lin.pattern, values)
}

fn orderings(c: &mut Criterion) {
    let mut group = c.benchmark_group("orderings");
    group.sample_size(10);
    let cases = [
        ScaleCase { spans: 5, phases: 3, bundle: 2, earth_wire: true },
        ScaleCase { spans: 10, phases: 3, bundle: 4, earth_wire: true },
    ];
    for case in cases {
        let (pattern, values) = step_matrix(case);
        let n = pattern.dim();
        let rhs: Vec<f64> = (0..n).map(|i| ((i * 7919) % 1000) as f64 / 1000.0 - 0.5).collect();
        let mut variants: Vec<(String, Box<dyn LinearSolver>)> = Vec::new();
        for (name, ordering) in [
            ("llt_amd", CholeskyOrdering::Amd),
            ("llt_natural", CholeskyOrdering::Natural),
            ("llt_rcm", CholeskyOrdering::ReverseCuthillMcKee),
        ] {
            let mut s = SparseDirect::new(&pattern).with_cholesky_ordering(&pattern, ordering);
            s.factor(&values).expect("LLᵀ");
            eprintln!(
                "{} ({n} DOF) {name}: {} values in L ({:.1} per equation)",
                case.name(),
                s.cholesky_factor_len().unwrap_or(0),
                s.cholesky_factor_len().unwrap_or(0) as f64 / n as f64
            );
            variants.push((name.into(), Box::new(s)));
        }
        let mut lu = SparseDirect::new(&pattern).with_symmetry_tolerance(-1.0);
        lu.factor(&values).expect("LU");
        variants.push(("lu_colamd".into(), Box::new(lu)));
        for (name, ordering) in
            [("banded_natural", BandOrdering::Natural), ("banded_rcm", BandOrdering::ReverseCuthillMcKee)]
        {
            let b = BandedLu::new(&pattern, ordering);
            let (kl, ku) = b.bandwidths();
            eprintln!(
                "{} ({n} DOF) {name}: bandwidths {kl}/{ku}, band storage {:.1} MiB",
                case.name(),
                b.band_storage_bytes() as f64 / (1 << 20) as f64
            );
            // The natural order's band of the larger case would take minutes
            // per factorisation; it is measured on the smaller one only.
            if b.band_storage_bytes() > 1 << 30 {
                continue;
            }
            let mut b = b;
            b.factor(&values).expect("banded LU");
            variants.push((name.into(), Box::new(b)));
        }
        for (name, solver) in &mut variants {
            let id = format!("{}_{n}_dof", case.name());
            group.bench_with_input(BenchmarkId::new(format!("{name}/factor"), &id), &(), |b, _| {
                b.iter(|| solver.factor(&values).expect("factor"))
            });
            let mut x = rhs.clone();
            group.bench_with_input(BenchmarkId::new(format!("{name}/solve"), &id), &(), |b, _| {
                b.iter(|| {
                    x.copy_from_slice(&rhs);
                    solver.solve_in_place(&mut x).expect("solve")
                })
            });
        }
    }
    group.finish();
}

criterion_group!(benches, orderings);
criterion_main!(benches);
