//! Time simulation of a 3-span single-conductor row, 40 beam elements per
//! span, crescent-iced, in a cross wind above galloping onset, at
//! Δt = 0.01 s (issue #4 target: 60 s simulated at least 20× faster than
//! real time on one core). The bench times 5 s of simulated time per
//! iteration; `docs/benchmarks.md` records the full 60 s run as well.

use criterion::{criterion_group, criterion_main, Criterion};
use glaze_engine::analysis::dynamic_stage::run_dynamic;
use glaze_engine::results::ResultsWriter;
use glaze_engine::{input, ElementRegistry};
use std::sync::atomic::AtomicBool;

fn row_input(duration: f64) -> String {
    let root = env!("CARGO_MANIFEST_DIR");
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
aero_table = "{root}/examples/aero/bare_round.csv"
[[supports]]
name = "A"
position = [0.0, 0.0, 30.0]
[[supports]]
name = "B"
position = [350.0, 0.0, 33.0]
[[supports]]
name = "C"
position = [720.0, 0.0, 31.0]
[[supports]]
name = "D"
position = [1050.0, 0.0, 30.0]
[[spans]]
from = "A"
to = "B"
conductor = "c"
horizontal_tension = 26000.0
[[spans]]
from = "B"
to = "C"
conductor = "c"
horizontal_tension = 26000.0
[[spans]]
from = "C"
to = "D"
conductor = "c"
horizontal_tension = 26000.0
[mesh]
type = "beam"
elements_per_span = 40
[stringing]
temperature = 15.0
[load_case]
temperature = -5.0
ice = {{ thickness = 0.0125, aero_table = "{root}/examples/aero/crescent_ice.csv", orientation = -30.0 }}
wind = {{ speed = 8.0, direction = 90.0 }}
[dynamics]
duration = {duration}
time_step = 0.01
output_interval = 0.05
damping = {{ modes = [1, 10], ratios = [0.005, 0.005] }}
perturbation = {{ mode = 7, amplitude = 0.1 }}
"#
    )
}

fn dynamic_row(c: &mut Criterion) {
    let registry = ElementRegistry::with_builtin();
    let dir = std::env::temp_dir().join("glaze-bench");
    std::fs::create_dir_all(&dir).expect("temp dir");
    let spec = input::load_str(&dir.join("row.toml"), &row_input(5.0), &registry).expect("valid bench input");
    let mut group = c.benchmark_group("dynamic_row");
    group.sample_size(10);
    group.bench_function("three_spans_40_elements_5s", |b| {
        b.iter(|| {
            let writer = ResultsWriter::create(&dir.join("row.h5"), &spec.source).expect("results file");
            let summary =
                run_dynamic(&spec, &registry, &writer, &AtomicBool::new(false), &mut |_| {}).expect("run");
            writer.finish(0.0).expect("finish");
            summary
        })
    });
    group.finish();
}

criterion_group!(benches, dynamic_row);
criterion_main!(benches);
