//! Bad `[dynamics]` input is a clear, located error (issue 4, "Must show:
//! Bad input"): each case goes through `input::load_str` and must name the
//! offending key and the line on which that key is written.
//!
//! Ranges checked against their published definitions:
//! - HHT-α: α ∈ [−1/3, 0] (Hilber, Hughes & Taylor 1977, *Earthquake Eng.
//!   Struct. Dyn.* 5, 283–292);
//! - generalised-α: ρ∞ ∈ [0, 1] (Chung & Hulbert 1993, *J. Appl. Mech.* 60,
//!   371–375);
//! - a time step must be positive, and the output interval at least one step;
//! - a run of more than 1e9 steps is refused (engine limit `MAX_STEPS` in
//!   `engine/src/input/validate.rs`: histories are streamed, so the limit is
//!   a typing-error guard rather than memory, common practice).

use glaze_engine::{input, ElementRegistry, InputErrorKind};
use std::path::Path;

/// A valid single-span input; `dynamics` is the body of its `[dynamics]` table.
fn input_text(dynamics: &str) -> String {
    format!(
        r#"[glaze]
schema_version = 1
[conductors.c]
diameter = 0.03
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
position = [200.0, 0.0, 30.0]
[[spans]]
from = "A"
to = "B"
conductor = "c"
horizontal_tension = 60000.0
[mesh]
type = "cable"
elements_per_span = 20
[stringing]
temperature = 15.0
[load_case]
temperature = 15.0
[dynamics]
{dynamics}
"#
    )
}

/// 1-based line of the first line of `text` that starts with `key =`.
fn line_of_key(text: &str, key: &str) -> usize {
    text.lines()
        .position(|l| l.trim_start().starts_with(&format!("{key} =")))
        .map(|i| i + 1)
        .unwrap_or_else(|| panic!("`{key}` not in the test input"))
}

/// Loads `dynamics`, expects an error at `dynamics.<key>` of `kind`, on the
/// line where `<key>` is written, and returns the message.
fn expect_error(dynamics: &str, key: &str, kind: InputErrorKind) -> String {
    let registry = ElementRegistry::with_builtin();
    let text = input_text(dynamics);
    let err = match input::load_str(Path::new("bad_dynamics.toml"), &text, &registry) {
        Ok(_) => panic!("accepted bad [dynamics]:\n{dynamics}"),
        Err(e) => e,
    };
    assert_eq!(err.key, format!("dynamics.{key}"), "wrong key for\n{dynamics}\nerror: {err}");
    assert_eq!(err.kind, kind, "wrong kind for\n{dynamics}\nerror: {err}");
    assert_eq!(err.line, line_of_key(&text, key), "line does not point at `{key}`: {err}");
    assert!(err.file.ends_with("bad_dynamics.toml"), "{err}");
    let shown = err.to_string();
    assert!(shown.contains(&format!("bad_dynamics.toml:{}", err.line)), "{shown}");
    err.message
}

#[test]
fn a_valid_dynamics_table_loads() {
    // The base used below is valid: each failure comes from the one bad value.
    let registry = ElementRegistry::with_builtin();
    let text = input_text(
        "duration = 10.0\ntime_step = 0.01\noutput_interval = 0.05\nscheme = \"hht\"\nalpha = -0.1",
    );
    let spec = input::load_str(Path::new("ok.toml"), &text, &registry).unwrap();
    assert!(spec.dynamics.is_some());
    for scheme in [
        "scheme = \"hht\"\nalpha = 0.0",
        "scheme = \"hht\"\nalpha = -0.3333333333333333",
        "scheme = \"generalized_alpha\"\nrho_inf = 0.0",
        "scheme = \"generalized_alpha\"\nrho_inf = 1.0",
    ] {
        // The ends of the published ranges are accepted.
        let text = input_text(&format!("duration = 10.0\ntime_step = 0.01\n{scheme}"));
        assert!(input::load_str(Path::new("ok.toml"), &text, &registry).is_ok(), "{scheme}");
    }
}

#[test]
fn time_step_must_be_positive() {
    for dt in ["0.0", "-0.01", "nan", "inf"] {
        let m = expect_error(
            &format!("duration = 10.0\ntime_step = {dt}"),
            "time_step",
            InputErrorKind::InvalidValue,
        );
        assert!(m.contains("positive"), "{m}");
    }
}

#[test]
fn output_interval_shorter_than_the_step_is_refused() {
    let m = expect_error(
        "duration = 10.0\ntime_step = 0.01\noutput_interval = 0.005",
        "output_interval",
        InputErrorKind::InvalidValue,
    );
    assert!(m.contains("shorter than the time step"), "{m}");
    expect_error(
        "duration = 10.0\ntime_step = 0.01\noutput_interval = -1.0",
        "output_interval",
        InputErrorKind::InvalidValue,
    );
}

#[test]
fn hht_alpha_outside_its_range_is_refused() {
    // Hilber, Hughes & Taylor (1977): −1/3 ≤ α ≤ 0.
    for a in ["0.01", "-0.34", "-1.0", "0.5", "nan"] {
        let m = expect_error(
            &format!("duration = 10.0\ntime_step = 0.01\nscheme = \"hht\"\nalpha = {a}"),
            "alpha",
            InputErrorKind::InvalidValue,
        );
        assert!(m.contains("−1/3, 0"), "{m}");
    }
    // HHT is the default scheme: a bad α without `scheme` is refused too.
    expect_error("duration = 10.0\ntime_step = 0.01\nalpha = 0.2", "alpha", InputErrorKind::InvalidValue);
}

#[test]
fn rho_inf_outside_its_range_is_refused() {
    // Chung & Hulbert (1993): 0 ≤ ρ∞ ≤ 1.
    for r in ["-0.01", "1.01", "2.0", "nan"] {
        let m = expect_error(
            &format!("duration = 10.0\ntime_step = 0.01\nscheme = \"generalized_alpha\"\nrho_inf = {r}"),
            "rho_inf",
            InputErrorKind::InvalidValue,
        );
        assert!(m.contains("[0, 1]"), "{m}");
    }
}

#[test]
fn a_run_of_more_than_1e9_steps_is_refused() {
    // 1e8 s at 0.01 s is 1e10 steps (a run that would need its histories
    // streamed for months); the error names the duration.
    let m = expect_error("duration = 1.0e8\ntime_step = 0.01", "duration", InputErrorKind::InvalidValue);
    assert!(m.contains("steps"), "{m}");
    // Just below the limit it loads: 1e7 s at 0.01 s is 1e9 steps.
    let registry = ElementRegistry::with_builtin();
    let text = input_text("duration = 1.0e7\ntime_step = 0.01\noutput_interval = 100.0");
    assert!(input::load_str(Path::new("ok.toml"), &text, &registry).is_ok());
}

#[test]
fn unknown_scheme_is_refused_with_the_known_ones() {
    let m = expect_error(
        "duration = 10.0\ntime_step = 0.01\nscheme = \"newmark\"",
        "scheme",
        InputErrorKind::UnknownName,
    );
    assert!(m.contains("hht") && m.contains("generalized_alpha"), "{m}");
}

#[test]
fn unknown_linear_solver_is_refused_with_the_known_ones() {
    let m = expect_error(
        "duration = 10.0\ntime_step = 0.01\nlinear_solver = \"conjugate_gradient\"",
        "linear_solver",
        InputErrorKind::UnknownName,
    );
    assert!(m.contains("sparse_direct") && m.contains("banded_rcm"), "{m}");
}

#[test]
fn duration_must_be_positive_and_not_shorter_than_the_step() {
    expect_error("duration = 0.0\ntime_step = 0.01", "duration", InputErrorKind::InvalidValue);
    expect_error("duration = -5.0\ntime_step = 0.01", "duration", InputErrorKind::InvalidValue);
    expect_error("duration = 0.001\ntime_step = 0.01", "time_step", InputErrorKind::InvalidValue);
}

#[test]
fn a_parameter_of_the_other_scheme_is_refused() {
    // A silently ignored α or ρ∞ would run another scheme than the one meant.
    let m = expect_error(
        "duration = 10.0\ntime_step = 0.01\nscheme = \"generalized_alpha\"\nalpha = -0.1",
        "alpha",
        InputErrorKind::InvalidValue,
    );
    assert!(m.contains("rho_inf"), "{m}");
    let m = expect_error(
        "duration = 10.0\ntime_step = 0.01\nscheme = \"hht\"\nrho_inf = 0.5",
        "rho_inf",
        InputErrorKind::InvalidValue,
    );
    assert!(m.contains("alpha"), "{m}");
}

#[test]
fn a_perturbation_gives_either_a_translation_or_a_twist() {
    // `amplitude` sizes a mode by its largest translation (m), `twist` by its
    // largest rotation (rad); both, neither, or a twist beyond 0.5 rad (engine
    // limit `MAX_PERTURBATION_TWIST`, where a linear mode shape stops being a
    // sensible start: common practice) are refused on the perturbation's line.
    let registry = ElementRegistry::with_builtin();
    for (body, key, needle) in [
        ("{ mode = 1, amplitude = 0.1, twist = 0.1 }", "dynamics.perturbation", "not both"),
        ("{ mode = 1 }", "dynamics.perturbation", "`twist`"),
        ("{ mode = 1, twist = 0.9 }", "dynamics.perturbation.twist", "at most 0.5"),
        ("{ mode = 1, twist = nan }", "dynamics.perturbation.twist", "finite"),
        ("{ mode = 1, amplitude = 0.1, start = \"sideways\" }", "dynamics.perturbation.start", "`velocity`"),
    ] {
        let text = input_text(&format!("duration = 10.0\ntime_step = 0.01\nperturbation = {body}"));
        let err = input::load_str(Path::new("bad_dynamics.toml"), &text, &registry)
            .err()
            .unwrap_or_else(|| panic!("accepted perturbation = {body}"));
        assert_eq!(err.key, key, "{err}");
        assert_eq!(err.line, line_of_key(&text, "perturbation"), "{err}");
        assert!(err.message.contains(needle), "{err}");
    }
    let text = input_text("duration = 10.0\ntime_step = 0.01\nperturbation = { mode = 1, twist = 0.05 }");
    assert!(input::load_str(Path::new("ok.toml"), &text, &registry).is_ok());
    let text = input_text(
        "duration = 10.0\ntime_step = 0.01\nperturbation = { mode = 1, amplitude = 0.1, start = \"velocity\" }",
    );
    assert!(input::load_str(Path::new("ok.toml"), &text, &registry).is_ok());
}

#[test]
fn checkpoint_intervals_must_be_positive_times() {
    let registry = ElementRegistry::with_builtin();
    for (key, value) in
        [("every_simulated", "-1.0"), ("every_simulated", "0.0"), ("every_wall_minutes", "nan")]
    {
        let text =
            input_text(&format!("duration = 10.0\ntime_step = 0.01\n[dynamics.checkpoint]\n{key} = {value}"));
        let err = input::load_str(Path::new("bad_dynamics.toml"), &text, &registry).unwrap_err();
        assert_eq!(err.key, format!("dynamics.checkpoint.{key}"), "{err}");
        assert_eq!((err.kind, err.line), (InputErrorKind::InvalidValue, line_of_key(&text, key)), "{err}");
        assert!(err.message.contains("positive"), "{err}");
    }
    // Defaults: every 5 wall minutes; a simulated interval adds to it.
    let load = |body: &str| {
        let text = input_text(&format!("duration = 10.0\ntime_step = 0.01\n{body}"));
        input::load_str(Path::new("ok.toml"), &text, &registry).unwrap().dynamics.unwrap().checkpoint
    };
    let c = load("");
    assert!(c.enabled && c.every_simulated.is_none() && c.every_wall_minutes == Some(5.0), "{c:?}");
    let c = load("[dynamics.checkpoint]\nevery_simulated = 10.0");
    assert!(c.every_simulated == Some(10.0) && c.every_wall_minutes == Some(5.0), "{c:?}");
    assert!(!load("[dynamics.checkpoint]\nenabled = false").enabled);
}
