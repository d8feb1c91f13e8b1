//! Legal but implausible input gives located warnings (issue 8, input
//! hardening): each case changes one value of a shipped example and checks
//! the warning's key, its line and the reason in its text. The thresholds
//! and their sources are in `engine/src/input/plausibility.rs`.

use glaze_engine::{input, ElementRegistry, InputWarning};
use std::path::PathBuf;

fn example(name: &str) -> (PathBuf, String) {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("examples").join(name);
    let text = std::fs::read_to_string(&path).expect("shipped example");
    (path, text)
}

/// Loads `name` with `from` replaced by `to` (once, and it must be there).
fn warnings_of(name: &str, from: &str, to: &str) -> (String, Vec<InputWarning>) {
    let (path, text) = example(name);
    assert_eq!(text.matches(from).count(), 1, "`{from}` must occur once in {name}");
    let text = text.replacen(from, to, 1);
    let spec = input::load_str(&path, &text, &ElementRegistry::with_builtin())
        .unwrap_or_else(|e| panic!("the changed input must stay valid: {e}"));
    (text, spec.warnings)
}

/// 1-based line of the first line containing `pattern`.
fn line_of(text: &str, pattern: &str) -> usize {
    text.lines().position(|l| l.contains(pattern)).map(|i| i + 1).expect("pattern in the input")
}

/// The warning at `key`; checks its line (where `pattern` is written),
/// file and shown form, and that its message holds every `needles`.
fn expect(name: &str, from: &str, to: &str, key: &str, pattern: &str, needles: &[&str]) -> InputWarning {
    let (text, warnings) = warnings_of(name, from, to);
    let w = warnings
        .iter()
        .find(|w| w.key == key)
        .unwrap_or_else(|| panic!("no warning at `{key}`; got {warnings:#?}"))
        .clone();
    assert_eq!(w.line, line_of(&text, pattern), "line of {w}");
    assert!(w.file.ends_with(name), "{w}");
    assert!(w.to_string().contains(&format!("{name}:{}: {key}: ", w.line)), "{w}");
    for n in needles {
        assert!(w.message.contains(n), "`{n}` not in: {w}");
    }
    w
}

#[test]
fn shipped_examples_draw_no_warning() {
    for name in [
        "row_of_spans.toml",
        "section_five_spans.toml",
        "iced_span_screening.toml",
        "iced_span_galloping.toml",
    ] {
        let (path, text) = example(name);
        let spec = input::load_str(&path, &text, &ElementRegistry::with_builtin()).expect("valid example");
        assert!(spec.warnings.is_empty(), "{name}: {:#?}", spec.warnings);
    }
}

#[test]
fn stringing_tension_above_a_quarter_of_the_rated_strength() {
    // 50 kN on a 140.1 kN conductor: 35.7 %.
    expect(
        "row_of_spans.toml",
        "horizontal_tension = 28000.0",
        "horizontal_tension = 50000.0",
        "spans[0].horizontal_tension",
        "horizontal_tension = 50000.0",
        &["36 % of the rated strength", "`acsr_795`", "25 %", "common practice"],
    );
    // A 3 m sag in the 420 m span: H ≈ w L²/(8 d) ≈ 117 kN, 84 %.
    expect(
        "row_of_spans.toml",
        "sag = 13.5",
        "sag = 3.0",
        "spans[1].sag",
        "sag = 3.0",
        &["about 11", "84 %"],
    );
    // A section phase: 40 kN per subconductor is 28.6 %.
    let (_, text) = example("section_five_spans.toml");
    let line = line_of(&text, "horizontal_tension = 24000.0  # N per subconductor");
    let w = expect(
        "section_five_spans.toml",
        "horizontal_tension = 24000.0  # N per subconductor",
        "horizontal_tension = 40000.0  # N per subconductor",
        "phases[0].horizontal_tension",
        "horizontal_tension = 40000.0",
        &["29 %"],
    );
    assert_eq!(w.line, line);
}

#[test]
fn element_longer_than_a_span_and_coarse_elements() {
    let from = "element_length = 10.0";
    let to = "element_length = 500.0";
    let (_, warnings) = warnings_of("section_five_spans.toml", from, to);
    let at_mesh: Vec<&InputWarning> = warnings.iter().filter(|w| w.key == "mesh.element_length").collect();
    assert_eq!(at_mesh.len(), 2, "{warnings:#?}");
    expect(
        "section_five_spans.toml",
        from,
        to,
        "mesh.element_length",
        "element_length = 500.0",
        &["is longer than span"],
    );
    assert!(at_mesh.iter().any(|w| w.message.contains("above 20 m the twist")), "{at_mesh:#?}");
    // 350 m in 10 elements: 35 m each.
    expect(
        "iced_span_galloping.toml",
        "elements_per_span = 40",
        "elements_per_span = 10",
        "mesh.elements_per_span",
        "elements_per_span = 10",
        &["about 35.0 m long", "above 20 m"],
    );
}

#[test]
fn ice_thicker_than_ten_radii_denser_than_ice_or_warm() {
    // 200 mm on a 28.14 mm conductor: more than 10 × 14.07 mm.
    expect(
        "row_of_spans.toml",
        "thickness = 0.0125, density = 900.0",
        "thickness = 0.2, density = 900.0",
        "load_case.ice.thickness",
        "thickness = 0.2",
        &["200.0 mm", "10 times the radius", "14.1 mm", "common practice"],
    );
    expect(
        "row_of_spans.toml",
        "thickness = 0.0125, density = 900.0",
        "thickness = 0.0125, density = 990.0",
        "load_case.ice.density",
        "density = 990.0",
        &["denser than pure ice", "917"],
    );
    expect(
        "row_of_spans.toml",
        "temperature = -5.0",
        "temperature = 20.0",
        "load_case.temperature",
        "temperature = 20.0",
        &["ice at 20 °C"],
    );
}

#[test]
fn wind_above_sixty_metres_per_second() {
    expect(
        "iced_span_galloping.toml",
        "speed = 8.0",
        "speed = 70.0",
        "load_case.wind.speed",
        "speed = 70.0",
        &["70 m/s is above 60 m/s", "common practice"],
    );
    expect(
        "iced_span_galloping.toml",
        "18.0, 20.0]",
        "18.0, 20.0, 80.0]",
        "screening.wind_speeds",
        "wind_speeds =",
        &["80 m/s"],
    );
}

#[test]
fn conductor_temperature_outside_minus_fifty_to_one_hundred() {
    expect(
        "row_of_spans.toml",
        "temperature = 15.0",
        "temperature = -60.0",
        "stringing.temperature",
        "temperature = -60.0",
        &["-60 °C is outside -50…+100 °C", "common practice"],
    );
}

#[test]
fn implausible_string_length() {
    expect(
        "section_five_spans.toml",
        "length = 2.6 ",
        "length = 26.0 ",
        "insulators.i_string.length",
        "length = 26.0",
        &["26 m is outside 0.2…15 m", "common practice"],
    );
}

#[test]
fn time_step_and_output_interval_against_the_fundamental_period() {
    // 350 m at H/m = 26000/1.628: T = 2L/√(H/m) = 5.54 s.
    let from = "time_step = 0.01         # s\noutput_interval = 0.05";
    let to = "time_step = 1.0         # s\noutput_interval = 3.0";
    expect(
        "iced_span_galloping.toml",
        from,
        to,
        "dynamics.time_step",
        "time_step = 1.0",
        &["5.54 s fundamental period of span 1", "common practice"],
    );
    expect(
        "iced_span_galloping.toml",
        from,
        to,
        "dynamics.output_interval",
        "output_interval = 3.0",
        &["more than half the 5.54 s", "sampling theorem"],
    );
}
