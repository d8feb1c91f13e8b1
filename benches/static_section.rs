//! Build and static solve of tension sections of 5, 10 and 20 spans with
//! three phases of quad bundles (spacers every 60 m or less, 10 m beam
//! elements, 12.5 mm of radial ice at −5 °C): issue #5 asks for the
//! 20-span section (≈ 50 k DOF or more) under 20 s on one core and for the
//! growth of the cost with the span count (`docs/benchmarks.md`).

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use glaze_engine::analysis::run_static;
use glaze_engine::{input, model, ElementRegistry};
use std::fmt::Write;
use std::path::Path;

/// A section of our own invention: `spans` spans of 320–440 m on rolling
/// ground, I-strings of 3.6 m, dead-end strings of 4 m.
fn section_input(spans: usize) -> String {
    let mut t = String::from(
        r#"
[glaze]
schema_version = 1
[conductors.acsr]
diameter = 0.02814
mass_per_length = 1.628
axial_stiffness = 3.28e7
bending_stiffness = 44.0
torsional_stiffness = 35.0
thermal_expansion = 18.9e-6
rated_strength = 140100.0
[insulators.i_string]
kind = "suspension"
length = 3.6
mass = 140.0
[insulators.dead_end]
kind = "dead_end"
length = 4.0
mass = 180.0
"#,
    );
    let mut chainage = 0.0;
    for i in 0..=spans {
        let dead_end = i == 0 || i == spans;
        let (kind, ins) = if dead_end { ("dead_end", "dead_end") } else { ("suspension", "i_string") };
        let ground = 200.0 + 8.0 * (1.3 * i as f64).sin();
        let _ = write!(
            t,
            "[[towers]]\nname = \"T{}\"\nchainage = {chainage}\nground = {ground}\nkind = \"{kind}\"\ninsulator = \"{ins}\"\nattachments = {{ A = [-8.0, 34.0], B = [0.0, 34.0], C = [8.0, 34.0] }}\n",
            i + 1
        );
        chainage += 380.0 + 60.0 * (0.7 * i as f64).sin();
    }
    for p in ["A", "B", "C"] {
        let _ = write!(
            t,
            "[[phases]]\nname = \"{p}\"\nconductor = \"acsr\"\nbundle = {{ count = 4, spacing = 0.457, orientation = 45.0 }}\nhorizontal_tension = 25000.0\n"
        );
    }
    t.push_str(
        "[spacers]\nkind = \"rigid\"\nmax_subspan = 60.0\nmass = 4.0\n[mesh]\ntype = \"beam\"\nelement_length = 10.0\n\
         [stringing]\ntemperature = 15.0\n[load_case]\ntemperature = -5.0\nice = { thickness = 0.0125 }\n",
    );
    t
}

fn static_section(c: &mut Criterion) {
    let registry = ElementRegistry::with_builtin();
    let mut group = c.benchmark_group("static_section");
    group.sample_size(10);
    for spans in [5usize, 10, 20] {
        let text = section_input(spans);
        let spec = input::load_str(Path::new("bench.toml"), &text, &registry).expect("valid bench input");
        let dofs = model::build(&spec, &registry).expect("model").dofs.len();
        group.bench_with_input(
            BenchmarkId::new("build_and_solve", format!("{spans}_spans_quad_{dofs}_dof")),
            &(),
            |b, _| {
                b.iter(|| {
                    let m = model::build(&spec, &registry).expect("model");
                    run_static(&spec, &m).expect("static")
                })
            },
        );
    }
    group.finish();
}

criterion_group!(benches, static_section);
criterion_main!(benches);
