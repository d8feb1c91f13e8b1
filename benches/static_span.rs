//! Static solve of one iced 400 m span meshed with 50, 500 and 5 000 beam
//! elements (≈ 300 to 30 000 DOF): model building, form-finding and the
//! Newton load path from the stringing state to the iced, cold load case.
//! Target (issue #2): 5 000 elements under 2 s on one core.

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use glaze_engine::{analysis::run_static, input, model, ElementRegistry};
use std::path::Path;

fn span_input(elements: usize) -> String {
    format!(
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
[[supports]]
name = "A"
position = [0.0, 0.0, 30.0]
[[supports]]
name = "B"
position = [400.0, 0.0, 30.0]
[[spans]]
from = "A"
to = "B"
conductor = "c"
horizontal_tension = 28000.0
[mesh]
type = "beam"
elements_per_span = {elements}
[stringing]
temperature = 15.0
[load_case]
temperature = -5.0
ice = {{ thickness = 0.0125 }}
"#
    )
}

fn static_span(c: &mut Criterion) {
    let registry = ElementRegistry::with_builtin();
    let mut group = c.benchmark_group("static_span");
    group.sample_size(10);
    for elements in [50usize, 500, 5000] {
        let text = span_input(elements);
        let spec = input::load_str(Path::new("bench.toml"), &text, &registry).expect("valid bench input");
        group.bench_with_input(BenchmarkId::new("beam_elements", elements), &elements, |b, _| {
            b.iter(|| {
                let m = model::build(&spec, &registry).expect("model");
                let r = run_static(&spec, &m).expect("static solve");
                assert_eq!(r.report.factor_stats.symbolic_cholesky + r.report.factor_stats.symbolic_lu, 1);
                r
            })
        });
    }
    group.finish();
}

criterion_group!(benches, static_span);
criterion_main!(benches);
