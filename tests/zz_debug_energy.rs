use glaze_engine::analysis::dynamic_stage::run_dynamic;
use glaze_engine::results::ResultsWriter;
use glaze_engine::{input, ElementRegistry};
use std::path::Path;
use std::sync::atomic::AtomicBool;

#[test]
fn debug() {
    let amp: f64 = std::env::var("AMP").ok().and_then(|s| s.parse().ok()).unwrap_or(1.0);
    let scheme = std::env::var("SCHEME").unwrap_or("scheme = \"hht\"\nalpha = 0.0".into());
    let dt: f64 = std::env::var("DT").ok().and_then(|s| s.parse().ok()).unwrap_or(0.05117);
    let dur: f64 = std::env::var("DUR").ok().and_then(|s| s.parse().ok()).unwrap_or(20.0);
    let span: f64 = std::env::var("SPAN").ok().and_then(|s| s.parse().ok()).unwrap_or(100.0);
    let sag: f64 = std::env::var("SAG").ok().and_then(|s| s.parse().ok()).unwrap_or(2.0);
    let ne: usize = std::env::var("NE").ok().and_then(|s| s.parse().ok()).unwrap_or(16);
    let text = format!(
        r#"[glaze]
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
position = [{span}, 0.0, 30.0]
[[spans]]
from = "A"
to = "B"
conductor = "c"
sag = {sag}
[mesh]
type = "cable"
elements_per_span = {ne}
[stringing]
temperature = 15.0
[load_case]
temperature = 15.0
[dynamics]
duration = {dur}
time_step = {dt}
output_interval = {dt}
{scheme}
perturbation = {{ mode = 1, amplitude = {amp} }}
"#
    );
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(Path::new("swing.toml"), &text, &registry).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let target = dir.path().join("swing.h5");
    let writer = ResultsWriter::create(&target, &text).unwrap();
    let mut last = 0;
    let summary = run_dynamic(&spec, &registry, &writer, &AtomicBool::new(false), &mut |p| {
        if p.steps > last + 0 {}
        last = p.steps;
    });
    println!("{summary:?}");
    let path = writer.finish(0.0).unwrap();
    let f = hdf5::File::open(&path).unwrap();
    let e = f.dataset("dynamic/energy").unwrap().read_raw::<f64>().unwrap();
    let t = f.dataset("dynamic/time").unwrap().read_raw::<f64>().unwrap();
    let d = f.dataset("dynamic/displacement").unwrap();
    let nn = d.shape()[1];
    let d = d.read_raw::<f64>().unwrap();
    let ax = f.dataset("dynamic/element_axial_force").unwrap().read_raw::<f64>().unwrap();
    let mid = nn / 2;
    let every: usize = std::env::var("EVERY").ok().and_then(|s| s.parse().ok()).unwrap_or(5);
    for r in (0..t.len()).step_by(every) {
        let axm = ax[r * ne..(r + 1) * ne].iter().cloned().fold(f64::MIN, f64::max);
        let axn = ax[r * ne..(r + 1) * ne].iter().cloned().fold(f64::MAX, f64::min);
        println!("t {:8.3} KE {:10.3e} S {:10.3e} G {:10.3e} sum {:10.3e}  mid y {:8.4} z {:8.4}  N [{:9.1}, {:9.1}]", t[r], e[r*5], e[r*5+1], e[r*5+2], e[r*5]+e[r*5+1]+e[r*5+2], d[(r*nn+mid)*3+1], d[(r*nn+mid)*3+2], axn, axm);
    }
}
