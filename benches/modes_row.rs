//! Lowest 40 modes of a single-conductor row of 10 spans with 50 beam
//! elements per span (≈ 3 000 DOF; issue #3 target under 1 s on one core)
//! and of 10 spans with 500 elements per span (≈ 30 000 DOF; target under
//! 10 s): static state, linearisation and shift-invert Lanczos.

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use glaze_engine::analysis::{run_modal, run_static, EigenMethod, ModalSettings};
use glaze_engine::{input, model, ElementRegistry};
use std::fmt::Write;
use std::path::Path;

fn row_input(spans: usize, elements: usize) -> String {
    let mut t = String::from(
        r#"
[glaze]
schema_version = 1
[conductors.c]
diameter = 0.02814
mass_per_length = 1.628
axial_stiffness = 3.28e7
bending_stiffness = 44.0
torsional_stiffness = 35.0
thermal_expansion = 18.9e-6
rated_strength = 140100.0
"#,
    );
    for i in 0..=spans {
        let z = 30.0 + 4.0 * ((i as f64) * 1.3).sin();
        let _ = write!(t, "[[supports]]\nname = \"S{i}\"\nposition = [{}, 0.0, {z}]\n", 340.0 * i as f64);
    }
    for i in 0..spans {
        let _ = write!(
            t,
            "[[spans]]\nfrom = \"S{i}\"\nto = \"S{}\"\nconductor = \"c\"\nhorizontal_tension = 26000.0\n",
            i + 1
        );
    }
    let _ = write!(
        t,
        "[mesh]\ntype = \"beam\"\nelements_per_span = {elements}\n[stringing]\ntemperature = 15.0\n[load_case]\ntemperature = -5.0\nice = {{ thickness = 0.0125 }}\n"
    );
    t
}

fn modes_row(c: &mut Criterion) {
    let registry = ElementRegistry::with_builtin();
    let mut group = c.benchmark_group("modes_row");
    group.sample_size(10);
    for (spans, elements) in [(10usize, 50usize), (10, 500)] {
        let spec = input::load_str(Path::new("bench.toml"), &row_input(spans, elements), &registry)
            .expect("valid bench input");
        let m = model::build(&spec, &registry).expect("model");
        let state = run_static(&spec, &m).expect("static");
        let settings = ModalSettings { method: EigenMethod::Lanczos, ..ModalSettings::new(40) };
        group.bench_with_input(
            BenchmarkId::new("lowest_40", format!("{spans}_spans_{elements}_elements_{}_dof", m.dofs.len())),
            &(),
            |b, _| b.iter(|| run_modal(&m, &state, &settings).expect("modes")),
        );
    }
    group.finish();
}

criterion_group!(benches, modes_row);
criterion_main!(benches);
