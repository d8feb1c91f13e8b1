use glaze_engine::analysis::dynamic_system::DynamicSystem;
use glaze_engine::analysis::{run_static, Linearisation, ModalSettings};
use glaze_engine::model::{self, DOF_PER_NODE};
use glaze_engine::{input, ElementRegistry};
use glaze_solvers::{Integrator, IntegratorSettings, NewtonSettings, Predictor, Scheme, SecondOrderSystem};
use std::path::Path;

#[test]
fn debug() {
    let amp: f64 = std::env::var("AMP").ok().and_then(|s| s.parse().ok()).unwrap_or(1.0);
    let dt: f64 = std::env::var("DT").ok().and_then(|s| s.parse().ok()).unwrap_or(0.05117);
    let dur: f64 = std::env::var("DUR").ok().and_then(|s| s.parse().ok()).unwrap_or(20.0);
    let tol: f64 = std::env::var("TOL").ok().and_then(|s| s.parse().ok()).unwrap_or(1e-8);
    let pred = match std::env::var("PRED").as_deref() {
        Ok("acc") => Predictor::ConstantAcceleration,
        Ok("vel") => Predictor::ConstantVelocity,
        _ => Predictor::ConstantDisplacement,
    };
    let modified = std::env::var("MOD").is_ok();
    let text = r#"[glaze]
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
position = [100.0, 0.0, 30.0]
[[spans]]
from = "A"
to = "B"
conductor = "c"
sag = 2.0
[mesh]
type = "cable"
elements_per_span = 16
[stringing]
temperature = 15.0
[load_case]
temperature = 15.0
"#;
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(Path::new("swing.toml"), text, &registry).unwrap();
    let m = model::build(&spec, &registry).unwrap();
    let st = run_static(&spec, &m).unwrap();
    let lin = Linearisation::about(&m, &st.config).unwrap();
    let set = lin.solve(&ModalSettings::new(2)).unwrap();
    let phi = &set.vectors[0];
    let peak = lin
        .equations
        .iter()
        .enumerate()
        .filter(|(i, _)| i % DOF_PER_NODE < 3)
        .filter_map(|(_, eq)| eq.map(|q| phi[q].abs()))
        .fold(0.0, f64::max);
    let dq: Vec<f64> = phi.iter().map(|x| x * amp / peak).collect();
    let mut sys = DynamicSystem::new(&m, &st.config, 0.0, 0.0, 0.0).unwrap();
    sys.set_increment(&dq);
    sys.commit();
    let n = m.dofs.len();
    let mut s = IntegratorSettings::new(Scheme::Hht { alpha: 0.0 }, dt);
    s.newton = NewtonSettings { max_iterations: 20, residual_tolerance: tol, ..NewtonSettings::default() };
    s.predictor = pred;
    s.modified_newton = modified;
    let mut integ = Integrator::new(sys, vec![0.0; n], 0.0, s).unwrap();
    let mid = m.spans[0].nodes[8];
    let mut next = 0.0;
    while integ.time() < dur {
        if let Err(e) = integ.step() {
            println!("fail {e}");
            break;
        }
        if integ.time() >= next {
            let v = integ.velocity();
            let mut mv = vec![0.0; n];
            integ.system().pattern().mul_vec(integ.system().mass(), v, &mut mv);
            let ke = 0.5 * v.iter().zip(&mv).map(|(a, b)| a * b).sum::<f64>();
            let p = integ.system().committed.positions[mid] - st.config.positions[mid];
            println!("t {:7.3} KE {:10.3e} mid y {:8.4} z {:8.4}", integ.time(), ke, p.y, p.z);
            next += 1.0;
        }
    }
    println!("{:?}", integ.stats().steps);
    println!("{:?}", integ.stats());
}
